"""What every report job reads: the scenario, the loaded field model and results shared between jobs."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..scenario import SCHEMA, Scenario

SUMMARY_LIMIT = 15  # summary lines per topic before "... and N more"
TABLE_LIMIT = 200  # longer runway tables show only the rows needing attention


@dataclass
class Context:
    """One report run's inputs. ``routes`` is filled by the routes job (name, RouteResult) for
    the jobs after it (the zone map draws the routes)."""

    scenario: Scenario
    model: Any = None
    routes: list[tuple[str, Any]] = field(default_factory=list)

    @property
    def date(self) -> str:
        return self.scenario.analysis_date

    @property
    def common(self) -> dict:
        """Model keywords shared by every library call."""
        return {"model": self.model, "allow_extrapolation": self.scenario.allow_extrapolation}

    @property
    def thresholds(self) -> tuple[float, float]:
        """(blackout, caution) thresholds of H in nT: the scenario's [zones] or the WMM defaults."""
        z = self.scenario.zones
        if z:
            return z["blackout_nT"], z["caution_nT"]
        return SCHEMA["zones"]["blackout_nT"].default, SCHEMA["zones"]["caution_nT"].default

    @property
    def budget(self) -> dict:
        """The [error_budget] section, defaults filled in when it is absent."""
        b = self.scenario.error_budget
        return b if b is not None else {k: spec.default for k, spec in SCHEMA["error_budget"].items()}

    @property
    def manoeuvre(self) -> str:
        """The error budget's manoeuvre in words."""
        b = self.budget
        text = f"{b['bank_angle_deg']:g}° bank turn"
        if b["acceleration_mps2"]:
            text += f" with {b['acceleration_mps2']:g} m/s² along-track acceleration"
        return text

    @property
    def slaving(self) -> str:
        """Whether the gyro is slaved during the manoeuvre, in words."""
        b = self.budget
        cutout = b["slaving_cutout_bank_deg"]
        if abs(b["bank_angle_deg"]) > cutout:
            return (f"slaving cut out above {cutout:g}° of bank, so the gyro holds its heading and the detector's tilt "
                    "error does not reach it")
        return f"slaving on at {b['slaving_rate_deg_per_min']:g}°/min, dragging the gyro toward the tilted detector"
