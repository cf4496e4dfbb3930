"""Areas, grids and polygons shared by the zone maps and the error-budget maps.

One place for what :mod:`headingref.weak_field` and :mod:`headingref.detector` both need, so neither
imports the other:

- :data:`CAPS`: the two polar caps (hemisphere sign, edge latitude of every cap grid and map,
  polar stereographic projection). The edges hold the whole WMM caution zone (H < 6000 nT) of
  every IGRF-14 epoch 1900-2030 with a few degrees to spare: it reaches about 58.5 N (1900) and
  56.3 S (2026) at its furthest from the poles (computed with :func:`headingref.elements.field_grid`,
  checked in ``tests/test_zones.py``), so the north cap runs to 55 N and the south cap to 50 S.
- :func:`parse_area`, :func:`check_resolution_deg`, :func:`area_grid`: a cap or a
  latitude-longitude region as a field grid.
- :func:`cap_stereo_grid`: a square polar stereographic grid over a cap with each cell's ground
  area (cell area divided by the projection's areal scale factor, :meth:`pyproj.Proj.get_factors`).
- :func:`threshold_polygons`, :func:`polygons_area_km2`: filled contours as GeoJSON-ready
  polygons (RFC 7946 ring order, cut at the antimeridian) and their geodesic area on WGS84
  (:meth:`pyproj.Geod.polygon_area_perimeter`, Karney 2013, doi:10.1007/s00190-012-0578-z).
- :func:`date_label`: a decimal year as ``YYYY-MM-DD`` for table rows.

References
----------
.. [1] C. F. F. Karney, "Algorithms for geodesics", *Journal of Geodesy* 87(1), 43-55
   (2013), doi:10.1007/s00190-012-0578-z. (``pyproj.Geod`` implements it.)

>>> from headingref.geogrid import CAPS, parse_area
>>> CAPS["south"].edge_lat_deg
50.0
>>> parse_area("north")
('north', (55.0, 90.0, -180.0, 180.0))
"""

from __future__ import annotations

import functools
import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from pyproj import Geod, Proj

from .elements import field_grid
from .errors import InputError, UndefinedDeclinationWarning
from .units import timestamp_from_decimal_year

__all__ = [
    "CAPS",
    "Cap",
    "area_grid",
    "cap_stereo_grid",
    "check_resolution_deg",
    "date_label",
    "parse_area",
    "polygons_area_km2",
    "threshold_polygons",
]

METRES_PER_DEG = 111_320.0  # one degree of latitude, m (mean; spacing of the stereographic cap grids)
MAX_GRID_POINTS = 20_000_000


@dataclass(frozen=True)
class Cap:
    """A polar cap: ``sign`` +1 north, -1 south; ``edge_lat_deg`` the absolute latitude of its edge."""

    name: str
    sign: float
    edge_lat_deg: float

    def bounds(self, edge_lat_deg: float | None = None) -> tuple[float, float, float, float]:
        """``(lat_min, lat_max, lon_min, lon_max)`` of the cap, degrees (edge overridable)."""
        edge = self.edge_lat_deg if edge_lat_deg is None else float(edge_lat_deg)
        return (edge, 90.0, -180.0, 180.0) if self.sign > 0 else (-90.0, -edge, -180.0, 180.0)

    @property
    def proj(self) -> str:
        """PROJ string of the cap's polar stereographic projection (WGS84, true scale at the pole)."""
        lat0 = 90 if self.sign > 0 else -90
        return f"+proj=stere +lat_0={lat0} +lat_ts={lat0} +lon_0=0 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs"


CAPS: dict[str, Cap] = {"north": Cap("north", 1.0, 55.0), "south": Cap("south", -1.0, 50.0)}
"""The polar caps of every cap grid and map (edges: module docstring)."""


def date_label(year: float) -> str:
    """A decimal year as ``YYYY-MM-DD`` (UTC)."""
    return timestamp_from_decimal_year(float(year)).strftime("%Y-%m-%d")


# --------------------------------------------------------------------------- areas and grids
def parse_area(area: Any) -> tuple[str, tuple[float, float, float, float]]:
    """``'north'``/``'south'`` or ``(lat_min, lat_max, lon_min, lon_max)`` (or that as a string).

    Returns ``(kind, (lat_min, lat_max, lon_min, lon_max_unwrapped))`` where ``kind`` is
    ``north``, ``south`` or ``region``; a cap runs from its :data:`CAPS` edge to the pole. A
    region across the antimeridian is given with ``lon_max < lon_min`` and comes back with
    ``lon_max + 360``.
    """
    accepted = "'north' or 'south' (polar cap) or LAT_MIN,LAT_MAX,LON_MIN,LON_MAX in degrees"
    if isinstance(area, str):
        text = area.strip().lower()
        if text in CAPS:
            return text, CAPS[text].bounds()
        parts = text.split(",")
    else:
        parts = list(area) if isinstance(area, Sequence | np.ndarray) else []
    if len(parts) != 4:
        raise InputError(f"area {area!r} is not understood; give {accepted}")
    try:
        lat_min, lat_max, lon_min, lon_max = (float(p) for p in parts)
    except (TypeError, ValueError):
        raise InputError(f"area {area!r} has a value that is not a number; give {accepted}") from None
    if not all(math.isfinite(v) for v in (lat_min, lat_max, lon_min, lon_max)):
        raise InputError(f"area {area!r} has a value that is not finite; give {accepted}")
    if not -90.0 <= lat_min < lat_max <= 90.0:
        raise InputError(f"area {area!r}: latitudes must satisfy -90 <= LAT_MIN < LAT_MAX <= 90")
    if not (-180.0 <= lon_min <= 180.0 and -180.0 <= lon_max <= 180.0) or lon_min == lon_max:
        raise InputError(
            f"area {area!r}: longitudes must lie in -180..180 and differ "
            "(LON_MAX < LON_MIN crosses the antimeridian)"
        )
    if lon_max < lon_min:
        lon_max += 360.0
    return "region", (lat_min, lat_max, lon_min, lon_max)


def _nodes(start: float, stop: float, step: float, extra: Sequence[float] = ()) -> np.ndarray:
    count = int(math.floor((stop - start) / step + 1e-9))
    values = np.concatenate([start + step * np.arange(count + 1), [stop], list(extra)])
    return np.unique(np.round(values, 9))


def check_resolution_deg(resolution_deg: Any) -> float:
    """Grid spacing in degrees as a float, 0.01 to 10, or :class:`InputError`."""
    try:
        step = float(resolution_deg)
    except (TypeError, ValueError):
        raise InputError(f"resolution {resolution_deg!r} is not a number; give degrees, 0.01 to 10") from None
    if not (math.isfinite(step) and 0.01 <= step <= 10.0):
        raise InputError(f"resolution {resolution_deg!r} is outside 0.01 to 10 degrees")
    return step


def area_grid(
    area: Any, date: Any, *, resolution_deg: float = 0.5, alt_km: float = 0.0, model=None, allow_extrapolation: bool = False
):
    """The field grid (:func:`headingref.elements.field_grid`) over a cap or region.

    Longitudes are unwrapped (a region across the antimeridian runs past 180), always include
    the antimeridian as a node when the area reaches it, and a cap runs -180..180 inclusive.
    ``attrs``: ``area_kind``, ``area_bounds``, ``resolution_deg``.
    """
    step = check_resolution_deg(resolution_deg)
    kind, (lat_min, lat_max, lon_min, lon_max) = parse_area(area)
    lats = _nodes(lat_min, lat_max, step)
    crossing = [180.0] if lon_min < 180.0 < lon_max else []
    lons = _nodes(lon_min, lon_max, step, crossing)
    if lats.size * lons.size > MAX_GRID_POINTS:
        raise InputError(f"area {area!r} at {step:g} degrees needs {lats.size * lons.size:,} points; use a coarser resolution")
    wrapped = (lons + 180.0) % 360.0 - 180.0
    wrapped[(lons == 180.0)] = 180.0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # pole row: D undefined, H and I fine
        ds = field_grid(lats, wrapped, date, alt_km=alt_km, model=model, allow_extrapolation=allow_extrapolation)
    ds = ds.assign_coords(lon=("lon", lons, {"units": "degrees_east", "long_name": "longitude (unwrapped)"}))
    ds.attrs.update(area_kind=kind, area_bounds=[lat_min, lat_max, lon_min, lon_max], resolution_deg=step)
    return ds


def cap_stereo_grid(kind: str, resolution_deg: Any):
    """Square polar stereographic grid over a :data:`CAPS` cap.

    Returns ``(x, y, lat, lon, inside, cell_km2, lat_in, lon_in, cell_in_km2)``: axes in metres
    (spacing ``resolution_deg`` degrees of latitude, 111.32 km per degree), 2-D geodetic
    latitude and longitude, the mask of nodes within the cap's edge, each cell's ground area in
    km^2 (cell area / areal scale factor), and the same for the nodes inside. Cached by cap and
    resolution (read-only arrays): the geometry never changes between calls.
    """
    return _cap_stereo_grid(kind, check_resolution_deg(resolution_deg))


@functools.lru_cache(maxsize=4)
def _cap_stereo_grid(kind: str, step_deg: float):
    cap = CAPS[kind]
    proj = Proj(cap.proj)
    edge_x, edge_y = proj(0.0, cap.sign * cap.edge_lat_deg)
    radius = float(np.hypot(edge_x, edge_y))
    step = step_deg * METRES_PER_DEG
    half = int(np.ceil(radius / step))
    if (2 * half + 1) ** 2 > MAX_GRID_POINTS:
        raise InputError(f"resolution {step_deg!r} is too fine for a polar cap map; use 0.05 degrees or more")
    axis = step * np.arange(-half, half + 1)
    xx, yy = np.meshgrid(axis, axis)
    inside = np.hypot(xx, yy) <= radius
    lon, lat = proj(xx, yy, inverse=True)
    # areal scale depends on latitude only: take it on a fine profile and interpolate
    profile_lat = cap.sign * np.linspace(cap.edge_lat_deg - 1.0, 90.0, 2000)
    factors = proj.get_factors(np.zeros_like(profile_lat), profile_lat)
    order = np.argsort(profile_lat)
    areal = np.interp(lat, profile_lat[order], np.asarray(factors.areal_scale)[order])
    cell_km2 = step * step / areal / 1e6
    grid = (axis, axis.copy(), lat, lon, inside, cell_km2, lat[inside], lon[inside], cell_km2[inside])
    for array in grid:
        array.setflags(write=False)
    return grid


# --------------------------------------------------------------------------- polygons
def _signed_area(ring: np.ndarray) -> float:
    x, y = ring[:, 0], ring[:, 1]
    return 0.5 * float(np.sum(x[:-1] * y[1:] - x[1:] * y[:-1]))


def _column_pieces(lons: np.ndarray) -> list[tuple[slice, float]]:
    """Split unwrapped longitudes at the antimeridian nodes: ``(columns, shift)`` per piece."""
    cuts = [i for i, v in enumerate(lons) if (v - 180.0) % 360.0 == 0.0 and 0 < i < len(lons) - 1]
    bounds = [0, *cuts, len(lons) - 1]
    pieces = []
    for a, b in zip(bounds, bounds[1:], strict=False):
        middle = 0.5 * (lons[a] + lons[b])
        shift = -360.0 * math.floor((middle + 180.0) / 360.0)
        pieces.append((slice(a, b + 1), shift))
    return pieces


def threshold_polygons(ds, variable: str, lower: float, upper: float) -> list[list[np.ndarray]]:
    """Polygons where ``lower <= ds[variable] < upper`` on a single-date (lat, lon) grid.

    Returns a list of polygons, each a list of closed rings (``(n, 2)`` arrays of lon, lat in
    degrees): the exterior counter-clockwise first, then holes clockwise (RFC 7946 right-hand
    rule). Longitudes lie in -180..180; polygons are cut at the antimeridian. Traced with
    ``contourpy`` (matplotlib's contouring engine).
    """
    import contourpy

    values = np.asarray(ds[variable].values, dtype=np.float64)
    if values.ndim != 2:
        raise InputError(f"{variable} must be a single-date (lat, lon) grid for contouring")
    lats = np.asarray(ds["lat"].values, dtype=np.float64)
    lons = np.asarray(ds["lon"].values, dtype=np.float64)
    polygons: list[list[np.ndarray]] = []
    for columns, shift in _column_pieces(lons):
        z = values[:, columns]
        if z.shape[1] < 2 or z.shape[0] < 2:
            continue
        generator = contourpy.contour_generator(lons[columns] + shift, lats, z, fill_type="OuterOffset", name="serial")
        points_list, offsets_list = generator.filled(lower, upper)
        for points, offsets in zip(points_list, offsets_list, strict=False):
            rings = []
            for k, (a, b) in enumerate(zip(offsets[:-1], offsets[1:], strict=False)):
                ring = np.array(points[a:b], dtype=np.float64)
                ring[:, 0] = np.clip(ring[:, 0], -180.0, 180.0)
                ring[:, 1] = np.clip(ring[:, 1], -90.0, 90.0)
                if not np.array_equal(ring[0], ring[-1]):
                    ring = np.vstack([ring, ring[:1]])
                if len(ring) < 4:
                    continue
                exterior = k == 0
                if (_signed_area(ring) > 0) != exterior:
                    ring = ring[::-1]
                rings.append(ring)
            if rings and len(rings[0]) >= 4:
                polygons.append(rings)
    return polygons


_GEOD = Geod(ellps="WGS84")


def polygons_area_km2(polygons: list[list[np.ndarray]]) -> float:
    """Total geodesic area (km^2, WGS84) of polygons from :func:`threshold_polygons`."""
    total = 0.0
    for rings in polygons:
        for k, ring in enumerate(rings):
            area_m2, _ = _GEOD.polygon_area_perimeter(ring[:-1, 0], ring[:-1, 1])
            total += abs(area_m2) if k == 0 else -abs(area_m2)
    return total / 1e6
