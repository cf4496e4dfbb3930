"""Heading references: true, magnetic, compass and grid, and the trade's text forms.

Sign conventions (used everywhere in headingref)
------------------------------------------------
- Headings and courses are clockwise from their north, in degrees, ``0 <= h < 360``.
- **Variation** (magnetic declination) ``V`` is the angle from true north to magnetic
  north, east positive. ``magnetic = true - V`` ("east is least, west is best").
- **Deviation** ``d`` is the angle from magnetic north to compass north, east
  positive. ``compass = magnetic - d``. A deviation may be a number, an array, or a
  curve: any callable of the *magnetic* heading in degrees, or an object with a
  method ``deviation_deg(magnetic_heading_deg)`` (the swing module's fitted curve).
- **Convergence** ``C`` (meridian convergence of a grid) is the angle from true north
  to grid north, clockwise (east) positive, as PROJ reports it in
  ``pyproj.Proj.get_factors(...).meridian_convergence``. ``grid = true - C``.
  Polar stereographic north referenced to meridian ``L0``: ``C = lon - L0`` (so
  ``grid = true + west longitude`` on a Greenwich grid); south: ``C = -(lon - L0)``;
  Lambert conformal conic: ``C = n (lon - L0)`` with ``n`` the cone constant;
  transverse Mercator: ``C ~ (lon - L0) sin(lat)`` near the central meridian.
- **Grivation** ``G`` (grid variation) is the angle from grid north to magnetic north,
  east positive: ``G = V - C`` and ``magnetic = grid - G``.

Grids are written as text: ``polar`` / ``polar:LON`` (north polar stereographic,
reference meridian LON, default 0 = Greenwich), ``polar-south[:LON]``,
``lcc:LAT1,LAT2,LON0`` (Lambert conformal conic), ``utm:ZONE[N|S]``, ``tm:LON0``
(transverse Mercator), ``EPSG:NNNN`` or any projected CRS pyproj understands
(a ``+proj=`` string, WKT, a ``pyproj.CRS``). All on WGS84. ``auto`` (where places are known:
routes, bases, scenarios) is the polar grid on Greenwich of the nearest pole; a polar grid used more
than 60° of latitude from its pole draws a warning (:data:`POLAR_GRID_MAX_POLE_DISTANCE_DEG`).

Public API
----------
Conversions (vectorised, results in ``[0, 360)``): :func:`normalize_heading`,
:func:`wrap_angle`, :func:`true_to_magnetic`, :func:`magnetic_to_true`,
:func:`magnetic_to_compass`, :func:`compass_to_magnetic`, :func:`true_to_compass`,
:func:`compass_to_true`, :func:`true_to_grid`, :func:`grid_to_true`,
:func:`grid_to_magnetic`, :func:`magnetic_to_grid`, :func:`grivation_deg`,
:func:`model_variation_deg`.
Grids: :class:`Grid`, :func:`parse_grid`, :func:`convergence_deg`, :func:`resolve_grid`
(``auto``: the polar grid of the nearest pole, :func:`polar_grid_for`), :func:`warn_if_far_from_pole`.
Text: :func:`parse_heading`, :func:`parse_variation`, :func:`format_heading`,
:func:`format_variation`.

References
----------
.. [1] J. P. Snyder, *Map Projections: A Working Manual*, U.S. Geological Survey
   Professional Paper 1395 (1987), doi:10.3133/pp1395.
.. [2] C. F. F. Karney, "Transverse Mercator with an accuracy of a few nanometers",
   *Journal of Geodesy* 85(8), 475-485 (2011), doi:10.1007/s00190-011-0445-3. (PROJ's ``tmerc``/``utm``.)
.. [3] C. F. F. Karney, "Algorithms for geodesics", *Journal of Geodesy* 87(1), 43-55
   (2013), doi:10.1007/s00190-012-0578-z. (``pyproj.Geod`` implements it.)

>>> float(true_to_magnetic(45.0, variation_deg=-12.5))  # west variation is added
57.5
>>> format_heading(359.7), format_variation(-12.5)
('000', '12°30′ W')
>>> g = parse_grid("polar")
>>> round(float(g.convergence_deg(75.0, 30.0)), 6)  # 30° E on a Greenwich polar grid
30.0
>>> round(float(true_to_grid(100.0, g.convergence_deg(75.0, 30.0))), 6)
70.0
"""

from __future__ import annotations

import math
import re
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pyproj

from ._types import AngleArray, DateLike, HeightArray, ModelLike
from .errors import DataQualityWarning, InputError
from .units import decimal_year, format_dm, parse_coordinate, parse_number

__all__ = [
    "AUTO_GRID",
    "POLAR_GRID_MAX_POLE_DISTANCE_DEG",
    "Grid",
    "compass_to_magnetic",
    "compass_to_true",
    "convergence_deg",
    "format_heading",
    "format_variation",
    "grid_to_magnetic",
    "grid_to_true",
    "grivation_deg",
    "magnetic_to_compass",
    "magnetic_to_grid",
    "magnetic_to_true",
    "normalize_heading",
    "parse_grid",
    "polar_grid_for",
    "resolve_grid",
    "warn_if_far_from_pole",
    "parse_heading",
    "parse_variation",
    "true_to_compass",
    "true_to_grid",
    "true_to_magnetic",
    "model_variation_deg",
    "wrap_angle",
]


# --------------------------------------------------------------------------- angles


def _scalar_or_array(values: np.ndarray, like: Any) -> Any:
    return float(values) if np.ndim(like) == 0 and np.ndim(values) == 0 else values


def _finite_or_nan(values: Any, what: str) -> np.ndarray:
    """Angles as float64; NaN passes (an undefined angle, e.g. variation at a pole), +-inf is refused."""
    a = np.asarray(values, dtype=np.float64)
    infinite = np.isinf(a)
    if infinite.any():
        raise InputError(f"{what} {float(a[infinite].flat[0])!r} is infinite; give degrees as finite numbers")
    return a


def normalize_heading(heading_deg: Any) -> Any:
    """Reduce headings to ``0 <= h < 360`` degrees (a tiny negative gives 0, never 360).

    NaN stays NaN (an undefined heading); an infinite value raises :class:`InputError`.
    """
    h = np.mod(_finite_or_nan(heading_deg, "heading"), 360.0)
    h = np.where(h >= 360.0, 0.0, h)
    return _scalar_or_array(h, heading_deg)


def wrap_angle(angle_deg: Any) -> Any:
    """Reduce signed angles (variation, convergence, differences) to ``-180 < a <= 180``.

    NaN stays NaN (an undefined angle); an infinite value raises :class:`InputError`.
    """
    a = _finite_or_nan(angle_deg, "angle")
    out = 180.0 - np.mod(180.0 - a, 360.0)
    out = np.where(out <= -180.0, out + 360.0, out)
    return _scalar_or_array(out, angle_deg)


# --------------------------------------------------------------------------- true / magnetic


def model_variation_deg(lat: AngleArray, lon: AngleArray, date: DateLike, alt_km: HeightArray = 0.0, model: ModelLike = None) -> Any:
    """Variation (declination, east positive, degrees) from the field model at places and a date.

    Thin wrapper over :func:`headingref.elements.field_arrays`. Raises :class:`InputError`
    where the declination is undefined (geographic pole, H = 0), naming the place.
    """
    from .elements import field_arrays

    lat_a, lon_a, alt_a = np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (lat, lon, alt_km)))
    year = decimal_year(date)
    result = field_arrays(lat_a.ravel(), lon_a.ravel(), year, alt_a.ravel(), model=model)
    dec = np.asarray(result["declination_deg"], dtype=np.float64).reshape(lat_a.shape)
    bad = ~np.isfinite(dec)
    if bad.any():
        i = int(np.flatnonzero(bad.ravel())[0])
        raise InputError(
            f"variation is undefined at lat {lat_a.ravel()[i]:g}, lon {lon_a.ravel()[i]:g} "
            "(geographic or dip pole); give the variation explicitly"
        )
    return _scalar_or_array(dec, lat if np.ndim(lat) else lon)


def _variation(variation: Any, lat: Any, lon: Any, date: Any, alt_km: Any, model: Any) -> np.ndarray:
    if variation is not None:
        return np.asarray(variation, dtype=np.float64)
    if lat is None or lon is None or date is None:
        raise InputError("give either variation_deg, or lat, lon and date to take the variation from the field model")
    return np.asarray(model_variation_deg(lat, lon, date, alt_km, model), dtype=np.float64)


def true_to_magnetic(
    true_deg: AngleArray,
    variation_deg: AngleArray | None = None,
    *,
    lat: AngleArray | None = None,
    lon: AngleArray | None = None,
    date: DateLike | None = None,
    alt_km: HeightArray = 0.0,
    model: ModelLike = None,
) -> Any:
    """Magnetic heading = true heading - variation (east positive), in ``[0, 360)``.

    The variation is ``variation_deg`` if given, else taken from the field model at
    ``lat``, ``lon``, ``date`` (and ``alt_km``, ``model``).
    """
    v = _variation(variation_deg, lat, lon, date, alt_km, model)
    return _scalar_or_array(normalize_heading(np.asarray(true_deg, dtype=np.float64) - v), true_deg)


def magnetic_to_true(magnetic_deg: AngleArray, variation_deg: AngleArray | None = None, **place: Any) -> Any:
    """True heading = magnetic heading + variation (east positive), in ``[0, 360)``.

    ``place`` takes ``lat, lon, date, alt_km, model`` as in :func:`true_to_magnetic`.
    """
    unknown = set(place) - {"lat", "lon", "date", "alt_km", "model"}
    if unknown:
        raise TypeError(f"magnetic_to_true() got unexpected keyword(s) {', '.join(sorted(unknown))}")
    v = _variation(variation_deg, place.get("lat"), place.get("lon"), place.get("date"), place.get("alt_km", 0.0), place.get("model"))
    return _scalar_or_array(normalize_heading(np.asarray(magnetic_deg, dtype=np.float64) + v), magnetic_deg)


# --------------------------------------------------------------------------- magnetic / compass

Deviation = float | np.ndarray | Callable[[Any], Any]


def _deviation_function(deviation: Any) -> Callable[[np.ndarray], np.ndarray] | None:
    """The deviation as a function of magnetic heading, or None for plain numbers."""
    method = getattr(deviation, "deviation_deg", None)
    if callable(method):
        return lambda m: np.asarray(method(m), dtype=np.float64)
    if callable(deviation):
        return lambda m: np.asarray(deviation(m), dtype=np.float64)
    return None


def _deviation_at(deviation: Any, magnetic: np.ndarray) -> np.ndarray:
    func = _deviation_function(deviation)
    d = func(magnetic) if func is not None else np.asarray(deviation, dtype=np.float64)
    if not np.all(np.isfinite(d)):
        raise InputError(f"deviation {deviation!r} gives a non-finite value; give finite degrees, east positive")
    return d


def magnetic_to_compass(magnetic_deg: Any, deviation_deg: Deviation) -> Any:
    """Compass heading = magnetic heading - deviation (east positive), in ``[0, 360)``.

    ``deviation_deg`` is a number/array, or a curve of the magnetic heading (a callable,
    or an object with ``deviation_deg(magnetic_heading_deg)``).
    """
    m = np.asarray(magnetic_deg, dtype=np.float64)
    d = _deviation_at(deviation_deg, normalize_heading(m))
    return _scalar_or_array(normalize_heading(m - d), magnetic_deg)


def compass_to_magnetic(compass_deg: Any, deviation_deg: Deviation, tol_deg: float = 1e-12) -> Any:
    """Magnetic heading = compass heading + deviation, in ``[0, 360)``.

    With a deviation curve of the magnetic heading, ``m = c + d(m)`` is solved by
    fixed-point iteration (it converges while the curve's slope stays below 1 per
    degree, true of any real deviation card); :class:`InputError` if it does not.
    """
    c = np.asarray(compass_deg, dtype=np.float64)
    func = _deviation_function(deviation_deg)
    if func is None:
        d = _deviation_at(deviation_deg, c)
        return _scalar_or_array(normalize_heading(c + d), compass_deg)
    m = normalize_heading(c + func(normalize_heading(c)))
    for _ in range(200):
        m_new = normalize_heading(c + _deviation_at(deviation_deg, np.asarray(m)))
        step = np.abs(wrap_angle(np.asarray(m_new) - m))
        m = m_new
        if np.all(step <= tol_deg):
            return _scalar_or_array(np.asarray(m), compass_deg)
    raise InputError(
        "deviation curve: compass heading could not be converted to magnetic (the curve changes by "
        "1 degree or more per degree of heading); check the deviation curve"
    )


def true_to_compass(true_deg: Any, variation_deg: Any, deviation_deg: Deviation) -> Any:
    """Compass heading from true: subtract the variation, then the deviation (both east positive)."""
    return magnetic_to_compass(true_to_magnetic(true_deg, variation_deg), deviation_deg)


def compass_to_true(compass_deg: Any, deviation_deg: Deviation, variation_deg: Any) -> Any:
    """True heading from compass: add the deviation, then the variation (both east positive)."""
    return magnetic_to_true(compass_to_magnetic(compass_deg, deviation_deg), variation_deg)


# --------------------------------------------------------------------------- grids


def true_to_grid(true_deg: Any, convergence_deg: Any) -> Any:
    """Grid heading = true heading - convergence (true north to grid north, east positive)."""
    return _scalar_or_array(
        normalize_heading(np.asarray(true_deg, dtype=np.float64) - np.asarray(convergence_deg, dtype=np.float64)),
        true_deg,
    )


def grid_to_true(grid_deg: Any, convergence_deg: Any) -> Any:
    """True heading = grid heading + convergence."""
    return _scalar_or_array(
        normalize_heading(np.asarray(grid_deg, dtype=np.float64) + np.asarray(convergence_deg, dtype=np.float64)),
        grid_deg,
    )


def grivation_deg(variation_deg: Any, convergence_deg: Any) -> Any:
    """Grivation = variation - convergence: grid north to magnetic north, east positive, in (-180, 180]."""
    return wrap_angle(np.asarray(variation_deg, dtype=np.float64) - np.asarray(convergence_deg, dtype=np.float64))


def grid_to_magnetic(grid_deg: Any, grivation: Any) -> Any:
    """Magnetic heading = grid heading - grivation."""
    return _scalar_or_array(
        normalize_heading(np.asarray(grid_deg, dtype=np.float64) - np.asarray(grivation, dtype=np.float64)), grid_deg
    )


def magnetic_to_grid(magnetic_deg: Any, grivation: Any) -> Any:
    """Grid heading = magnetic heading + grivation."""
    return _scalar_or_array(
        normalize_heading(np.asarray(magnetic_deg, dtype=np.float64) + np.asarray(grivation, dtype=np.float64)),
        magnetic_deg,
    )


_GRID_HELP = (
    "auto (polar grid of the nearest pole), polar, polar:LON, polar-south, polar-south:LON, lcc:LAT1,LAT2,LON0, utm:ZONE[N|S], tm:LON0, "
    "EPSG:NNNN (a projected CRS) or a +proj= string"
)


@dataclass(frozen=True)
class Grid:
    """A map grid on WGS84 and its meridian convergence.

    Attributes
    ----------
    name : str
        The canonical spec (``polar:0``, ``lcc:60,70,10``, ``EPSG:3413`` ...).
    crs : pyproj.CRS
        The projected CRS whose +y (northing) axis defines grid north.
    """

    name: str
    crs: pyproj.CRS
    _proj: pyproj.Proj = field(repr=False, compare=False, hash=False)
    pole: int = 0
    """+1 (north) or -1 (south) for a polar stereographic grid, 0 for any other grid."""

    def convergence_deg(self, lat: Any, lon: Any) -> Any:
        """Meridian convergence in degrees, in (-180, 180]: true north to grid north, east positive.

        From ``pyproj.Proj.get_factors(lon, lat).meridian_convergence`` (PROJ). Points
        outside the grid's domain give NaN.
        """
        lat_a, lon_a = np.broadcast_arrays(np.asarray(lat, dtype=np.float64), np.asarray(lon, dtype=np.float64))
        flat_lat, flat_lon = lat_a.ravel(), lon_a.ravel()
        if flat_lat.size == 0:
            return np.empty(lat_a.shape)
        factors = self._proj.get_factors(flat_lon, flat_lat, errcheck=False)
        conv = np.asarray(factors.meridian_convergence, dtype=np.float64)
        conv = np.where(np.isfinite(conv), conv, np.nan).reshape(lat_a.shape)
        return _scalar_or_array(wrap_angle(conv), lat if np.ndim(lat) else lon)


def _number(text: str, what: str, spec: str) -> float:
    try:
        return parse_number(text, what)  # plain ASCII decimal, finite (not 4_5, nan, other scripts' digits)
    except InputError:
        raise InputError(f"grid {spec!r}: {what} {text!r} is not a finite plain number; give {_GRID_HELP}") from None


def _check_range(value: float, low: float, high: float, what: str, spec: str) -> float:
    if not low <= value <= high:
        raise InputError(f"grid {spec!r}: {what} {value:g} is outside {low:g} to {high:g} degrees")
    return value


def _make_grid(name: str, crs_input: Any, spec: Any) -> Grid:
    try:
        crs = pyproj.CRS.from_user_input(crs_input)
    except pyproj.exceptions.CRSError:
        raise InputError(f"grid {spec!r} is not a coordinate reference system pyproj knows; give {_GRID_HELP}") from None
    if not crs.is_projected:
        raise InputError(f"grid {spec!r} is not a projected CRS (it has no grid north); give {_GRID_HELP}")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # to_dict warns that a PROJ string loses metadata; only two keys are read
        params = crs.to_dict()
    pole = 0
    if params.get("proj") == "stere" and abs(abs(float(params.get("lat_0", 0.0))) - 90.0) < 1e-9:
        pole = 1 if float(params["lat_0"]) > 0 else -1
    elif params.get("proj") == "ups":
        pole = -1 if params.get("south") else 1
    return Grid(name, crs, pyproj.Proj(crs), pole)


AUTO_GRID = "auto"
"""Grid spec for the polar stereographic grid on Greenwich of the pole nearest the points."""

POLAR_GRID_MAX_POLE_DISTANCE_DEG = 60.0
"""A polar grid used more than this many degrees of latitude from its pole (equatorward of 30° in its
own hemisphere, or in the other hemisphere) draws a :class:`~headingref.errors.DataQualityWarning`.
There the grid's scale exceeds 4/3 (polar stereographic on the sphere ``k = 2 / (1 + sin|lat|)``,
Snyder 1987, USGS PP 1395, eq. 21-4 with phi1 = 90°) and grid courses are no longer what a crew on a
polar grid expects; the convergence itself stays exact. The limit lets a route leave a mid-latitude
airfield (Hobart, 43° S) on the southern grid without a warning, and catches the wrong cap."""


def polar_grid_for(lat_deg: Any) -> Grid:
    """The polar stereographic grid on Greenwich of the pole nearest the points (``polar`` or ``polar-south``).

    The pole is that of the point farthest from the equator (ties go north): a route from Hobart
    to the Antarctic coast gets ``polar-south:0``, one from Tromsø to Svalbard ``polar:0``.
    """
    lat = np.asarray(lat_deg, dtype=np.float64).ravel()
    lat = lat[np.isfinite(lat)]
    if lat.size == 0:
        raise InputError("no finite latitude to choose a polar grid from")
    return parse_grid("polar" if lat.max() >= -lat.min() else "polar-south")


def resolve_grid(spec: Any, lat_deg: Any) -> Grid:
    """:func:`parse_grid`, with None or ``"auto"`` giving :func:`polar_grid_for` the points."""
    if spec is None or (isinstance(spec, str) and spec.strip().lower() == AUTO_GRID):
        return polar_grid_for(lat_deg)
    return parse_grid(spec)


def warn_if_far_from_pole(grid: Grid, lat_deg: Any, what: str = "the points") -> bool:
    """Warn (:class:`DataQualityWarning`) when a polar grid is used far from its pole; True if it warned.

    The limit is :data:`POLAR_GRID_MAX_POLE_DISTANCE_DEG`. Non-polar grids never warn here.
    """
    if not grid.pole:
        return False
    lat = np.asarray(lat_deg, dtype=np.float64).ravel()
    lat = lat[np.isfinite(lat)]
    if lat.size == 0:
        return False
    distance = 90.0 - grid.pole * lat
    worst = int(np.argmax(distance))
    if distance[worst] <= POLAR_GRID_MAX_POLE_DISTANCE_DEG:
        return False
    other = "polar-south" if grid.pole > 0 else "polar"
    warnings.warn(
        f"grid {grid.name} is used {distance[worst]:.0f}° of latitude from its pole (latitude {lat[worst]:.1f} in "
        f"{what}; limit {POLAR_GRID_MAX_POLE_DISTANCE_DEG:g}°): check the cap (grid {other} or auto?)",
        DataQualityWarning,
        stacklevel=3,
    )
    return True


# One builder per text grid kind, (kind, rest after the colon, the spec's text, the spec) -> Grid.
def _polar_grid(kind: str, rest: str, text: str, spec: Any) -> Grid:
    lon0 = _check_range(_number(rest, "reference meridian", text), -180, 180, "reference meridian", text) if rest else 0.0
    south = kind == "polar-south"
    lat0 = -90 if south else 90
    proj = f"+proj=stere +lat_0={lat0} +lat_ts={lat0} +lon_0={lon0!r} +datum=WGS84 +units=m +no_defs"
    return _make_grid(f"{'polar-south' if south else 'polar'}:{lon0:g}", proj, spec)


def _lcc_grid(kind: str, rest: str, text: str, spec: Any) -> Grid:
    parts = [p.strip() for p in rest.split(",")]
    if len(parts) != 3:
        raise InputError(f"grid {spec!r}: lcc needs three numbers LAT1,LAT2,LON0; give {_GRID_HELP}")
    lat1, lat2, lon0 = (_number(p, w, text) for p, w in zip(parts, ("LAT1", "LAT2", "LON0"), strict=True))
    for value, what in ((lat1, "LAT1"), (lat2, "LAT2")):
        _check_range(value, -89.0, 89.0, what, text)
    _check_range(lon0, -180, 180, "LON0", text)
    if abs(lat1 + lat2) < 1e-9:
        raise InputError(f"grid {spec!r}: standard parallels symmetric about the equator make no cone; use tm or utm")
    proj = f"+proj=lcc +lat_1={lat1!r} +lat_2={lat2!r} +lat_0={(lat1 + lat2) / 2!r} +lon_0={lon0!r} +datum=WGS84 +units=m +no_defs"
    return _make_grid(f"lcc:{lat1:g},{lat2:g},{lon0:g}", proj, spec)


def _utm_grid(kind: str, rest: str, text: str, spec: Any) -> Grid:
    match = re.fullmatch(r"\s*([0-9]{1,2})\s*([ns]?)\s*", rest)  # ASCII digits only
    if not match or not 1 <= int(match[1]) <= 60:
        raise InputError(f"grid {spec!r}: utm needs a zone 1 to 60 with optional N or S (utm:33N); give {_GRID_HELP}")
    zone, south = int(match[1]), match[2] == "s"
    proj = f"+proj=utm +zone={zone}{' +south' if south else ''} +datum=WGS84 +units=m +no_defs"
    return _make_grid(f"utm:{zone}{'S' if south else 'N'}", proj, spec)


def _tm_grid(kind: str, rest: str, text: str, spec: Any) -> Grid:
    lon0 = _check_range(_number(rest, "central meridian", text), -180, 180, "central meridian", text)
    proj = f"+proj=tmerc +lat_0=0 +lon_0={lon0!r} +k=1 +datum=WGS84 +units=m +no_defs"
    return _make_grid(f"tm:{lon0:g}", proj, spec)


_GRID_BUILDERS = {"polar": _polar_grid, "polar-north": _polar_grid, "polar-south": _polar_grid,
                  "lcc": _lcc_grid, "utm": _utm_grid, "tm": _tm_grid}


def parse_grid(spec: Any) -> Grid:
    """Build a :class:`Grid` from its text spec (see the module docstring) or a pyproj CRS.

    Raises :class:`InputError` naming the spec for anything else.
    """
    if isinstance(spec, Grid):
        return spec
    if isinstance(spec, pyproj.CRS):
        return _make_grid(spec.to_string(), spec, spec)
    if not isinstance(spec, str) or not spec.strip():
        raise InputError(f"grid {spec!r} is not understood; give {_GRID_HELP}")
    text = spec.strip()
    lower = text.lower()
    kind, _, rest = lower.partition(":")
    if lower == AUTO_GRID:
        raise InputError("grid 'auto' depends on the places; resolve it with headingref.headings.resolve_grid(spec, lat_deg)")
    if kind in _GRID_BUILDERS:
        return _GRID_BUILDERS[kind](kind, rest, text, spec)
    if kind in ("epsg", "esri") or lower.startswith("+proj") or text.startswith(("PROJCRS", "PROJCS", "{")):
        name = text.upper() if kind in ("epsg", "esri") else text
        return _make_grid(name, text, spec)
    raise InputError(f"grid {spec!r} is not understood; give {_GRID_HELP}")


def convergence_deg(lat: AngleArray, lon: AngleArray, grid: Any = "polar") -> Any:
    """Meridian convergence (true north to grid north, east positive, degrees) of ``grid`` at lat, lon.

    ``grid`` as :func:`parse_grid`, or ``auto`` (:func:`resolve_grid`: the polar grid of the pole
    nearest the points).
    """
    return resolve_grid(grid, lat).convergence_deg(lat, lon)


# --------------------------------------------------------------------------- text forms

_HEADING_RE = re.compile(
    r"^\s*(?P<num>\d{1,3}(?:\.\d*)?|\.\d+)\s*(?:°|º|deg)?\s*(?P<ref>[TMGC]|true|mag|grid|compass)?\s*$",
    re.IGNORECASE | re.ASCII,  # \d: ASCII digits only (not Arabic-Indic or full-width ones)
)
_REFERENCE_NAMES = {"t": "T", "true": "T", "m": "M", "mag": "M", "g": "G", "grid": "G", "c": "C", "compass": "C"}
_HEADING_HELP = "0 to 360 degrees, e.g. 045, 045°T, 270.5 M (360 is read as 000)"


def parse_heading(text: Any, reference: str | None = None) -> float:
    """Parse a heading or course such as ``045``, ``45``, ``045°T``, ``270.5 M``, ``360``.

    The optional letter names the reference (T true, M magnetic, G grid, C compass).
    If ``reference`` is given and the text carries a different letter, that is an
    error. Returns degrees in ``[0, 360)``; ``360`` is read as ``000``.
    """
    if isinstance(text, (bool, np.bool_)):
        raise InputError(f"heading {text!r} is not understood; give {_HEADING_HELP}")
    if isinstance(text, (int, float, np.integer, np.floating)):
        value, letter = float(text), None
        if not math.isfinite(value):
            raise InputError(f"heading {text!r} is not a finite number; give {_HEADING_HELP}")
    else:
        match = _HEADING_RE.match(str(text).replace("−", "-"))
        if not match:
            raise InputError(f"heading {text!r} is not understood; give {_HEADING_HELP}")
        value = float(match["num"])
        letter = _REFERENCE_NAMES[match["ref"].lower()] if match["ref"] else None
    if not 0.0 <= value <= 360.0:
        raise InputError(f"heading {text!r} is outside 0 to 360 degrees; give {_HEADING_HELP}")
    if reference is not None and letter is not None and letter != reference.upper()[:1]:
        raise InputError(f"heading {text!r} is marked {letter} but a {reference.upper()[:1]} heading is wanted")
    return 0.0 if value == 360.0 else value


_VARIATION_HELP = "degrees east positive, e.g. -12.5, 12.5W, E3.2, 12°30′W"


def parse_variation(text: Any) -> float:
    """Parse a variation (or deviation, declination): ``-12.5``, ``12.5W``, ``E3.2``, ``12°30′W``.

    East positive, degrees, within -180 to 180. The letter may come before or after;
    a sign and a letter together are an error.
    """
    try:
        return parse_coordinate(text, "lon")
    except InputError:
        raise InputError(f"variation {text!r} is not understood; give {_VARIATION_HELP}") from None


def format_heading(heading_deg: float, decimals: int = 0, reference: str = "") -> str:
    """Format a heading as three digits (``045``, ``000`` not ``360``), optional decimals and letter.

    ``format_heading(44.96, reference='T')`` gives ``'045°T'``; NaN gives ``'---'``.
    """
    if heading_deg is None or not math.isfinite(heading_deg):
        return "---"
    value = round(float(normalize_heading(heading_deg)), decimals)
    if value >= 360.0:
        value = 0.0
    width = 3 + (decimals + 1 if decimals else 0)
    body = f"{value:0{width}.{decimals}f}"
    return f"{body}°{reference}" if reference else body


def format_variation(variation: float, style: str = "dm", decimals: int = 0) -> str:
    """Format a variation with its E/W letter: ``12°30′ W`` (``style='dm'``) or ``12.5° W`` (``'decimal'``).

    ``decimals`` applies to the minutes (dm) or the degrees (decimal). NaN gives ``undefined``.
    """
    if style == "dm":
        return format_dm(variation, "E", "W", decimals)
    if style != "decimal":
        raise ValueError("style must be 'dm' or 'decimal'")
    if variation is None or not math.isfinite(variation):
        return "undefined"
    value = round(abs(float(variation)), decimals)
    letter = "E" if variation >= 0 or value == 0 else "W"
    return f"{value:.{decimals}f}° {letter}"
