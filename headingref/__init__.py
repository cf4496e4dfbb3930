"""headingref: geomagnetic variation and heading reference for high-latitude operations.

The Earth's main field from IGRF-14 (or any IGRF-format or WMM coefficient file) on the WGS84
ellipsoid, and the jobs built on it: heading conversions and routes, weak-field zones and the
heading-reference error budget, compass base upkeep and swing analysis, runway designators.

>>> import headingref
>>> row = headingref.field(65.35, -146.40, "2026-12-02").iloc[0]  # an invented demo airfield
>>> round(float(row.declination_deg), 1)  # east positive
15.2
"""

from .detector import heading_error
from .elements import declination_uncertainty_deg, field, field_arrays, field_grid
from .errors import (
    DataQualityWarning,
    DateRangeError,
    ExtrapolationWarning,
    HeadingrefError,
    HeadingrefWarning,
    InputError,
    ModelFileError,
    UndefinedDeclinationWarning,
)
from .model import Model, load_model
from .notices import CAUTION
from .poles import dip_poles, geomagnetic_poles, pole_tracks
from .routes import RouteResult, route
from .runways import RunwayCheck, check_runways
from .swing import DeviationCurve, analyse_swing
from .weak_field import zones

__all__ = [
    "RouteResult",
    "route",
    "CAUTION",
    "DataQualityWarning",
    "DateRangeError",
    "ExtrapolationWarning",
    "HeadingrefError",
    "HeadingrefWarning",
    "InputError",
    "Model",
    "ModelFileError",
    "UndefinedDeclinationWarning",
    "declination_uncertainty_deg",
    "field",
    "field_arrays",
    "field_grid",
    "load_model",
    "dip_poles",
    "geomagnetic_poles",
    "heading_error",
    "pole_tracks",
    "zones",
    "DeviationCurve",
    "analyse_swing",
    "RunwayCheck",
    "check_runways",
]
__version__ = "0.1.0"
