"""Fixed texts shared by the README, the CLI help and the report, and where data lives."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

CAUTION = (
    "CAUTION: headingref is a planning and engineering aid only. It is not approved for "
    "navigation, dispatch, airworthiness or survey use. Official aeronautical publications and "
    "charts, the aircraft's approved flight manual and data, the compass base's own survey, local "
    "regulations and codes, and licensed engineering and survey practice govern. The field model "
    "omits local crustal anomalies and magnetic disturbances, which can exceed several degrees."
)

DATA_DIR = Path(str(resources.files("headingref") / "data"))
"""The package's data folder (coastline, invented demo scenario), read with importlib.resources so a
plain or wheel install finds it as well as a checkout (where the top-level ``data`` links to it)."""
