"""Dip poles and geomagnetic (centred-dipole) poles, at dates and as tracks.

- :func:`dip_poles`: where H = 0 (the field is along the ellipsoid normal). Start from the
  minimum of H on a 1-degree grid, then Newton's method on the horizontal field vector expressed
  in polar stereographic map axes (smooth through the geographic pole), with a finite-difference
  Jacobian, until H < 1e-3 nT. Latitudes geodetic (WGS84): the dip pole is a point on the
  ellipsoid, and published dip-pole tables give it so (Alken et al. 2021, Table 4; NOAA NCEI's
  pole tables - from memory for NCEI).
- :func:`geomagnetic_poles`: where the axis of the centred dipole (g10, g11, h11) meets the
  surface: north geomagnetic pole at geocentric colatitude ``acos(-g10/B0)`` and longitude
  ``atan2(-h11, -g11)``, ``B0 = sqrt(g10^2 + g11^2 + h11^2)`` (Fraser-Smith 1987, Rev. Geophys.
  25(1), 1-16, doi:10.1029/RG025i001p00001); the south pole is its antipode. The dipole axis is
  a direction from the Earth's centre, so its natural latitude is GEOCENTRIC: column
  ``lat_geocentric``. Published tables differ: the WHOI centred-dipole table
  (deeptow.whoi.edu/cdpole.html), the Kyoto WDC's geomagnetic (dipole) coordinates and NOAA
  NCEI's geomagnetic-pole lists give the geocentric latitude (from memory for NCEI; the WHOI
  values are checked in ``tests/test_poles.py``),
  while Alken et al. (2021, Earth Planets Space 73:49), Table 4, lists the geodetic one. The
  column ``lat`` is geodetic WGS84 like every latitude in the package: the WGS84 surface point
  on the dipole axis, ``tan(lat) = tan(lat_c) / (1 - e^2)``. The two differ by at most
  0.19 deg (at 45 deg), about 0.06 deg near 80 N. Dip poles carry both too (their
  ``lat_geocentric`` is that of the point found, at ``alt_km``).
- :func:`pole_tracks`: both kinds over a range of years.

Public API: :func:`dip_poles`, :func:`geomagnetic_poles`, :func:`pole_tracks`,
:func:`geodetic_from_geocentric_lat`. The package exports the first three at top level.

References
----------
.. [1] A. C. Fraser-Smith, "Centered and eccentric geomagnetic dipoles and their poles,
   1600-1985", *Reviews of Geophysics* 25(1), 1-16 (1987), doi:10.1029/RG025i001p00001.
.. [2] P. Alken, E. Thebault, C. D. Beggan et al., "International Geomagnetic Reference
   Field: the thirteenth generation", *Earth, Planets and Space* 73, 49 (2021),
   doi:10.1186/s40623-020-01288-x.

>>> import headingref
>>> poles = headingref.dip_poles("2025-01-01")
>>> bool((poles.horizontal_nT < 1.0).all())
True
"""

from __future__ import annotations

import math
import warnings
from typing import Any

import numpy as np
import pandas as pd
from pyproj import Transformer

from ._types import DatesLike, ModelLike
from .elements import field_arrays, field_grid
from .errors import ExtrapolationWarning, InputError, UndefinedDeclinationWarning
from .geogrid import CAPS, date_label
from .model import Model, load_model
from .units import decimal_year

__all__ = ["TRACK_COLUMNS", "dip_poles", "geocentric_from_geodetic_lat", "geodetic_from_geocentric_lat", "geomagnetic_poles", "pole_tracks"]

WGS84_E2 = 0.00669437999014  # first eccentricity squared of WGS84 (NIMA TR8350.2)
TRACK_COLUMNS = ("date", "pole", "kind", "lat", "lon", "decimal_year", "lat_geocentric", "horizontal_nT")
"""Columns of :func:`pole_tracks` and of the ``headingref poles`` table."""


def _model(model):
    return model if isinstance(model, Model) else load_model(model)


def _years(date: Any) -> np.ndarray:
    if isinstance(date, str) or np.ndim(date) == 0:
        return np.atleast_1d(np.float64(decimal_year(date)))
    return np.atleast_1d(np.asarray(decimal_year(date), dtype=np.float64))


def geodetic_from_geocentric_lat(lat_geocentric_deg: Any) -> np.ndarray:
    """Geodetic latitude of the WGS84 surface point at a geocentric latitude, degrees.

    ``tan(lat) = tan(lat_c) / (1 - e^2)`` (on the ellipsoid; e.g. Torge & Mueller, Geodesy, 4th
    ed., section 4.1).
    """
    lat_c = np.radians(np.asarray(lat_geocentric_deg, dtype=np.float64))
    return np.degrees(np.arctan2(np.sin(lat_c), (1.0 - WGS84_E2) * np.cos(lat_c)))


WGS84_A_M = 6378137.0  # WGS84 semi-major axis, m (NIMA TR8350.2)


def geocentric_from_geodetic_lat(lat_deg: Any, alt_km: Any = 0.0) -> np.ndarray:
    """Geocentric latitude of the point at geodetic latitude ``lat_deg``, height ``alt_km`` (WGS84).

    ``tan(lat_c) = (N (1 - e^2) + h) sin(lat) / ((N + h) cos(lat))``, ``N = a / sqrt(1 - e^2
    sin^2 lat)`` (geodetic to Earth-centred Cartesian; NIMA TR8350.2 eq. 4-14).
    """
    lat = np.radians(np.asarray(lat_deg, dtype=np.float64))
    h = 1000.0 * np.asarray(alt_km, dtype=np.float64)
    n = WGS84_A_M / np.sqrt(1.0 - WGS84_E2 * np.sin(lat) ** 2)
    return np.degrees(np.arctan2((n * (1.0 - WGS84_E2) + h) * np.sin(lat), (n + h) * np.cos(lat)))


def geomagnetic_poles(date: DatesLike, model: ModelLike = None, allow_extrapolation: bool = False) -> pd.DataFrame:
    """North and south geomagnetic (centred-dipole) poles from g10, g11, h11.

    Returns a DataFrame ``date, pole, kind, lat, lon, decimal_year, lat_geocentric, dipole_nT``
    (``kind`` = ``geomagnetic``; ``lat`` geodetic WGS84 latitude of the surface point on the
    dipole axis, ``lat_geocentric`` the axis's own geocentric latitude (the one the WHOI and NOAA
    NCEI centred-dipole tables list; see the module docstring), degrees; east positive longitude
    in -180..180; ``dipole_nT`` = B0). ``date`` may be one date or a sequence.
    """
    m = _model(model)
    years = _years(date)
    m.check_dates(years, allow_extrapolation)
    rows = []
    for year in years:
        g, h, _, _ = m.coefficients(float(year))
        g10, g11, h11 = g[1, 0], g[1, 1], h[1, 1]
        b0 = math.sqrt(g10**2 + g11**2 + h11**2)
        lat_c = 90.0 - math.degrees(math.acos(-g10 / b0))
        lon = math.degrees(math.atan2(-h11, -g11))
        for pole, lat_pole, lon_pole in (("north", lat_c, lon), ("south", -lat_c, lon + 180.0)):
            rows.append({
                "date": date_label(year), "pole": pole, "kind": "geomagnetic",
                "lat": float(geodetic_from_geocentric_lat(lat_pole)), "lon": (lon_pole + 180.0) % 360.0 - 180.0,
                "decimal_year": float(year), "lat_geocentric": lat_pole, "dipole_nT": b0,
            })
    return pd.DataFrame(rows)


def _stereo(hemisphere: str):
    return Transformer.from_crs("EPSG:4326", CAPS[hemisphere].proj, always_xy=True)


def _map_horizontal(hemisphere: str, lon_deg: np.ndarray, north: np.ndarray, east: np.ndarray) -> np.ndarray:
    """Horizontal field in polar stereographic map axes (smooth through the geographic pole)."""
    lam = np.radians(lon_deg)
    s, c = np.sin(lam), np.cos(lam)
    if hemisphere == "north":  # x = rho sin(lon), y = -rho cos(lon)
        return np.stack([-north * s + east * c, north * c + east * s])
    return np.stack([north * s + east * c, north * c - east * s])  # x = rho sin(lon), y = rho cos(lon)


def _dip_pole(year: float, hemisphere: str, model, alt_km: float, tol_nT: float = 1e-3,
              extrapolate: bool = False) -> tuple[float, float, float]:
    sign = 1.0 if hemisphere == "north" else -1.0
    lats = sign * np.arange(45.0, 90.0, 1.0)
    lons = np.arange(-180.0, 180.0, 1.0)
    grid = field_grid(lats, lons, year, alt_km=alt_km, model=model, allow_extrapolation=extrapolate)["horizontal_nT"].values
    i, j = np.unravel_index(np.argmin(grid), grid.shape)
    to_map = _stereo(hemisphere)
    x, y = to_map.transform(lons[j], lats[i])
    step_m = 20.0

    def residual(px: np.ndarray, py: np.ndarray) -> np.ndarray:
        lon, lat = to_map.transform(px, py, direction="INVERSE")
        f = field_arrays(lat, lon, np.full(np.shape(px), year), alt_km=alt_km, model=model, allow_extrapolation=extrapolate)
        return _map_horizontal(hemisphere, np.asarray(lon), f["north_nT"], f["east_nT"])

    for _ in range(60):
        v = residual(np.array([x, x + step_m, x]), np.array([y, y, y + step_m]))
        f0 = v[:, 0]
        if math.hypot(*f0) < tol_nT:
            break
        jac = np.column_stack([(v[:, 1] - f0) / step_m, (v[:, 2] - f0) / step_m])
        try:
            dx, dy = np.linalg.solve(jac, -f0)
        except np.linalg.LinAlgError:
            break
        length = math.hypot(dx, dy)
        if length > 200_000.0:  # keep steps inside the basin
            dx, dy = dx * 200_000.0 / length, dy * 200_000.0 / length
        x, y = x + dx, y + dy
        if length < 1e-4:
            break
    lon, lat = to_map.transform(x, y, direction="INVERSE")
    f = field_arrays(lat, lon, year, alt_km=alt_km, model=model, allow_extrapolation=extrapolate)
    return float(lat), float((lon + 180.0) % 360.0 - 180.0), float(f["horizontal_nT"][0])


def dip_poles(date: DatesLike, model: ModelLike = None, alt_km: float = 0.0, allow_extrapolation: bool = False) -> pd.DataFrame:
    """North and south dip poles (H = 0 on the ellipsoid at ``alt_km``).

    Returns a DataFrame ``date, pole, kind, lat, lon, decimal_year, lat_geocentric,
    horizontal_nT`` (``kind`` = ``dip``; ``lat`` geodetic WGS84 degrees, as published dip-pole
    tables give it; ``lat_geocentric`` of the same point; ``horizontal_nT`` is H at the point
    found, below 1e-3 nT when the search converged). ``date`` may be one date or a sequence.
    """
    m = _model(model)
    years = _years(date)
    m.check_dates(years, allow_extrapolation)  # warns once if extrapolating
    rows = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # D is undefined at the pole found
        warnings.simplefilter("ignore", ExtrapolationWarning)  # already warned above
        for year in years:
            for pole in CAPS:
                lat, lon, h = _dip_pole(float(year), pole, m, alt_km, extrapolate=allow_extrapolation)
                rows.append({"date": date_label(year), "pole": pole, "kind": "dip", "lat": lat, "lon": lon,
                             "decimal_year": float(year), "lat_geocentric": float(geocentric_from_geodetic_lat(lat, alt_km)),
                             "horizontal_nT": h})
    return pd.DataFrame(rows)


def pole_tracks(start: Any, end: Any, step_years: float = 1.0, model=None, allow_extrapolation: bool = False) -> pd.DataFrame:
    """Dip and geomagnetic poles from ``start`` every ``step_years``, and at ``end`` (always included,
    also when the step does not divide the span).

    Columns :data:`TRACK_COLUMNS`: ``date, pole, kind, lat, lon, decimal_year, lat_geocentric,
    horizontal_nT`` (``lat`` geodetic, ``lat_geocentric`` geocentric; ``horizontal_nT`` for dip
    poles only, NaN for geomagnetic poles).
    """
    y0, y1 = decimal_year(start), decimal_year(end)
    try:
        step = float(step_years)
    except (TypeError, ValueError):
        raise InputError(f"step {step_years!r} is not a number of years") from None
    if not (math.isfinite(step) and step > 0):
        raise InputError(f"step {step_years!r} must be a positive number of years")
    if y1 < y0:
        raise InputError(f"end {end!r} is before start {start!r}")
    count = int(math.floor((y1 - y0) / step + 1e-9)) + 1
    if count > 2000:
        raise InputError(f"{count} dates from {start!r} to {end!r}; use a larger step (at most 2000 dates)")
    years = y0 + step * np.arange(count)
    if y1 - years[-1] > 1e-6:
        years = np.append(years, y1)
    dip = dip_poles(years, model=model, allow_extrapolation=allow_extrapolation)
    geo = geomagnetic_poles(years, model=model, allow_extrapolation=allow_extrapolation)
    table = pd.concat([dip, geo], ignore_index=True)[list(TRACK_COLUMNS)]
    return table.sort_values(["kind", "pole", "decimal_year"], kind="stable").reset_index(drop=True)
