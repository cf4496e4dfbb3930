"""Weak-horizontal-field zones, their GeoJSON boundaries and areas, and the magnetic poles.

Zones
-----
:func:`zones` evaluates the field on a latitude-longitude grid (a polar cap or a region, through
the fast grid synthesis :func:`headingref.field.field_grid`) and adds ``zone_code`` for any
horizontal-intensity thresholds. The defaults are the WMM2020/WMM2025 technical reports' zones:
``blackout`` where H < 2000 nT, ``caution`` where 2000 <= H < 6000 nT. With thresholds
``t1 < t2 < ... < tn`` the code is ``n`` where ``H < t1`` down to ``0`` where ``H >= tn``.

Boundaries (:func:`zone_geojson`) are filled contours of H traced with ``contourpy`` (matplotlib's
contouring engine) directly in longitude/latitude, the plane in which GeoJSON (RFC 7946) draws
straight edges. The grid spans exactly -180..180 degrees for a cap (and is split at the
antimeridian for a region across it), so every polygon is already cut at the antimeridian as
RFC 7946 section 3.1.9 asks, and a zone that surrounds a geographic pole is closed along the
pole's row (``lat = +-90``), the standard lon/lat form of a pole-enclosing polygon. Exterior rings
run counter-clockwise and holes clockwise (RFC 7946 section 3.1.6, right-hand rule); rings are
closed. Each feature has properties ``zone`` (``blackout``/``caution``, or the user's label),
``lower_nT``, ``upper_nT``, ``date``, ``decimal_year`` and ``area_km2``. Areas are geodesic on
WGS84 (:meth:`pyproj.Geod.polygon_area_perimeter`, Karney's algorithm). :func:`zone_change`
compares two dates (areas at both and both sets of boundaries in one collection).

Poles
-----
- :func:`dip_poles`: where H = 0 (the field is along the ellipsoid normal). Start from the
  minimum of H on a 1-degree grid, then Newton's method on the horizontal field vector expressed
  in polar stereographic map axes (smooth through the geographic pole), with a finite-difference
  Jacobian, until H < 1e-3 nT.
- :func:`geomagnetic_poles`: where the axis of the centred dipole (g10, g11, h11) meets the
  surface: north geomagnetic pole at geocentric colatitude ``acos(-g10/B0)`` and longitude
  ``atan2(-h11, -g11)``, ``B0 = sqrt(g10^2 + g11^2 + h11^2)``; the south pole is its antipode.
  Latitudes are given geodetic (WGS84) like every latitude in headingref, converted from the
  geocentric one with ``tan(lat) = tan(lat_c) / (1 - e^2)``; ``lat_geocentric`` is kept too.
- :func:`pole_tracks`: both kinds over a range of years.

Public API
----------
:func:`zones`, :func:`zone_geojson`, :func:`zone_areas`, :func:`zone_change`,
:func:`write_geojson`, :func:`threshold_polygons`, :func:`polygons_area_km2`, :func:`area_grid`,
:func:`parse_area`, :func:`check_resolution_deg`, :func:`dip_poles`, :func:`geomagnetic_poles`,
:func:`pole_tracks`, :func:`geodetic_from_geocentric_lat`. The package exports ``zones``,
``dip_poles``, ``geomagnetic_poles`` and ``pole_tracks`` at top level, so ``headingref.zones`` is
the function: reach the rest with ``from headingref.zones import ...``.

>>> import headingref
>>> from headingref.zones import zone_areas
>>> ds = headingref.zones("north", "2026-12-02", resolution_deg=1.0)
>>> sorted(zone_areas(ds).zone)
['blackout', 'caution']
>>> poles = headingref.dip_poles("2025-01-01")
>>> bool((poles.horizontal_nT < 1.0).all())
True
"""

from __future__ import annotations

import json
import math
import os
import warnings
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from .detector import heading_error  # noqa: F401  (re-exported by the package)
from .errors import ExtrapolationWarning, InputError, UndefinedDeclinationWarning
from .units import decimal_year, timestamp_from_decimal_year

DEFAULT_THRESHOLDS_NT = (2000.0, 6000.0)  # WMM2020/WMM2025 technical reports: blackout, caution
DEFAULT_LABELS = ("blackout", "caution")
CAP_EDGE_LAT_DEG = 50.0
WGS84_E2 = 0.00669437999014  # first eccentricity squared of WGS84 (NIMA TR8350.2)
_CAPS = ("north", "south")


# --------------------------------------------------------------------------- areas and grids
def parse_area(area: Any) -> tuple[str, tuple[float, float, float, float]]:
    """``'north'``/``'south'`` or ``(lat_min, lat_max, lon_min, lon_max)`` (or that as a string).

    Returns ``(kind, (lat_min, lat_max, lon_min, lon_max_unwrapped))`` where ``kind`` is
    ``north``, ``south`` or ``region``; a region across the antimeridian is given with
    ``lon_max < lon_min`` and comes back with ``lon_max + 360``.
    """
    accepted = "'north' or 'south' (polar cap) or LAT_MIN,LAT_MAX,LON_MIN,LON_MAX in degrees"
    if isinstance(area, str):
        text = area.strip().lower()
        if text in _CAPS:
            edge = CAP_EDGE_LAT_DEG
            return text, ((edge, 90.0, -180.0, 180.0) if text == "north" else (-90.0, -edge, -180.0, 180.0))
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
    """The field grid (:func:`headingref.field.field_grid`) over a cap or region.

    Longitudes are unwrapped (a region across the antimeridian runs past 180), always include
    the antimeridian as a node when the area reaches it, and a cap runs -180..180 inclusive.
    ``attrs``: ``area_kind``, ``area_bounds``, ``resolution_deg``.
    """
    from .field import field_grid

    step = check_resolution_deg(resolution_deg)
    kind, (lat_min, lat_max, lon_min, lon_max) = parse_area(area)
    lats = _nodes(lat_min, lat_max, step)
    crossing = [180.0] if lon_min < 180.0 < lon_max else []
    lons = _nodes(lon_min, lon_max, step, crossing)
    if lats.size * lons.size > 20_000_000:
        raise InputError(f"area {area!r} at {step:g} degrees needs {lats.size * lons.size:,} points; use a coarser resolution")
    wrapped = (lons + 180.0) % 360.0 - 180.0
    wrapped[(lons == 180.0)] = 180.0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # pole row: D undefined, H and I fine
        ds = field_grid(lats, wrapped, date, alt_km=alt_km, model=model, allow_extrapolation=allow_extrapolation)
    ds = ds.assign_coords(lon=("lon", lons, {"units": "degrees_east", "long_name": "longitude (unwrapped)"}))
    ds.attrs.update(area_kind=kind, area_bounds=[lat_min, lat_max, lon_min, lon_max], resolution_deg=step)
    return ds


def _check_thresholds(thresholds: Any, labels: Any) -> tuple[tuple[float, ...], tuple[str, ...]]:
    try:
        values = tuple(float(t) for t in np.atleast_1d(np.asarray(thresholds, dtype=object)))
    except (TypeError, ValueError):
        raise InputError(f"thresholds {thresholds!r} are not numbers; give nT values such as 2000,6000") from None
    if not values or not all(math.isfinite(v) and 0.0 < v < 1e5 for v in values):
        raise InputError(f"thresholds {thresholds!r} must be one or more numbers between 0 and 100000 nT")
    if any(b <= a for a, b in zip(values, values[1:], strict=False)):
        raise InputError(f"thresholds {thresholds!r} must increase (e.g. 2000,6000)")
    if labels is None:
        if values == DEFAULT_THRESHOLDS_NT:
            labels = DEFAULT_LABELS
        else:
            edges = (0.0, *values)
            labels = tuple(
                f"H<{hi:g}nT" if lo == 0.0 else f"{lo:g}<=H<{hi:g}nT" for lo, hi in zip(edges, edges[1:], strict=False)
            )
    labels = tuple(str(v) for v in labels)
    if len(labels) != len(values):
        raise InputError(f"labels {labels!r}: give one label per threshold ({len(values)})")
    return values, labels


def zones(
    area: Any,
    date: Any,
    *,
    resolution_deg: float = 0.5,
    thresholds: Any = DEFAULT_THRESHOLDS_NT,
    labels: Sequence[str] | None = None,
    alt_km: float = 0.0,
    model=None,
    allow_extrapolation: bool = False,
):
    """Horizontal intensity, declination uncertainty, inclination and threshold zones on a grid.

    Parameters
    ----------
    area : ``'north'`` / ``'south'`` (cap from 50 degrees to the pole) or
        ``(lat_min, lat_max, lon_min, lon_max)`` degrees (``lon_max < lon_min`` crosses the
        antimeridian)
    date : one date, or a sequence (then a ``time`` dimension)
    resolution_deg : grid spacing in latitude and longitude, degrees
    thresholds : increasing H thresholds, nT (default WMM 2000, 6000)
    labels : one name per band below each threshold (default ``blackout``, ``caution`` for the
        WMM thresholds, else ``H<t1nT``, ``t1<=H<t2nT``, ...)

    Returns
    -------
    xarray.Dataset
        The field grid plus ``zone_code`` (int8; 0 = above every threshold, ``n`` = below the
        lowest). ``attrs``: ``thresholds_nT``, ``zone_labels``, area description.
    """
    values, names = _check_thresholds(thresholds, labels)
    ds = area_grid(area, date, resolution_deg=resolution_deg, alt_km=alt_km, model=model,
                   allow_extrapolation=allow_extrapolation)
    h = ds["horizontal_nT"].values
    code = (len(values) - np.searchsorted(np.asarray(values), h, side="right")).astype(np.int8)
    ds["zone_code"] = (ds["horizontal_nT"].dims, code, {
        "flag_values": np.arange(len(values) + 1, dtype=np.int8),
        "flag_meanings": " ".join(["normal", *reversed(names)]),
        "long_name": "zone by horizontal intensity thresholds",
    })
    ds.attrs.update(thresholds_nT=list(values), zone_labels=list(names))
    return ds


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
    """Polygons where ``lower <= ds[variable] < upper`` on a single-date grid.

    Returns a list of polygons, each a list of closed rings (``(n, 2)`` arrays of lon, lat in
    degrees): the exterior counter-clockwise first, then holes clockwise (RFC 7946 right-hand
    rule). Longitudes lie in -180..180; polygons are cut at the antimeridian.
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


def polygons_area_km2(polygons: list[list[np.ndarray]]) -> float:
    """Total geodesic area (km^2, WGS84) of polygons from :func:`threshold_polygons`."""
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    total = 0.0
    for rings in polygons:
        for k, ring in enumerate(rings):
            area_m2, _ = geod.polygon_area_perimeter(ring[:-1, 0], ring[:-1, 1])
            total += abs(area_m2) if k == 0 else -abs(area_m2)
    return total / 1e6


def _bands(ds) -> list[tuple[str, float, float]]:
    values = tuple(ds.attrs.get("thresholds_nT", DEFAULT_THRESHOLDS_NT))
    names = tuple(ds.attrs.get("zone_labels", DEFAULT_LABELS))
    edges = (-1.0, *values)
    return [(name, lo, hi) for name, lo, hi in zip(names, edges, edges[1:], strict=False)]


def _by_date(ds):
    if "time" in ds.dims:
        for i in range(ds.sizes["time"]):
            yield ds.isel(time=i)
    else:
        yield ds


def _date_label(year: float) -> str:
    return timestamp_from_decimal_year(float(year)).strftime("%Y-%m-%d")


def _round_ring(ring: np.ndarray, decimals: int = 6) -> list[list[float]]:
    return np.round(ring, decimals).tolist()


def zone_geojson(ds) -> dict:
    """GeoJSON FeatureCollection (RFC 7946) of the zones of a :func:`zones` Dataset.

    One MultiPolygon feature per date and zone, properties ``zone``, ``lower_nT``, ``upper_nT``
    (``lower_nT`` is 0 for the lowest band), ``date``, ``decimal_year``, ``area_km2``.
    """
    features = []
    for one in _by_date(ds):
        year = float(one["time"].values) if "time" in one.coords else float("nan")
        for name, lo, hi in _bands(one):
            polygons = threshold_polygons(one, "horizontal_nT", lo, hi)
            if not polygons:
                continue
            features.append({
                "type": "Feature",
                "properties": {
                    "zone": name,
                    "lower_nT": max(lo, 0.0),
                    "upper_nT": hi,
                    "date": _date_label(year),
                    "decimal_year": round(year, 6),
                    "area_km2": round(polygons_area_km2(polygons), 1),
                },
                "geometry": {
                    "type": "MultiPolygon",
                    "coordinates": [[_round_ring(r) for r in rings] for rings in polygons],
                },
            })
    return {"type": "FeatureCollection", "features": features}


def zone_areas(ds) -> pd.DataFrame:
    """Area of each zone at each date: ``date, decimal_year, zone, lower_nT, upper_nT, area_km2``."""
    rows = []
    for one in _by_date(ds):
        year = float(one["time"].values)
        for name, lo, hi in _bands(one):
            area = polygons_area_km2(threshold_polygons(one, "horizontal_nT", lo, hi))
            rows.append({"date": _date_label(year), "decimal_year": year, "zone": name,
                         "lower_nT": max(lo, 0.0), "upper_nT": hi, "area_km2": area})
    return pd.DataFrame(rows)


def zone_change(area: Any, date1: Any, date2: Any, **options) -> tuple[Any, pd.DataFrame, dict]:
    """How the zones move between two dates.

    Returns ``(ds, table, geojson)``: the :func:`zones` Dataset with a two-step ``time``
    dimension, a table ``zone, area_km2_<date1>, area_km2_<date2>, change_km2, change_percent``
    and one GeoJSON FeatureCollection holding the boundaries at both dates (property ``date``).
    """
    y1, y2 = decimal_year(date1), decimal_year(date2)
    if y1 == y2:
        raise InputError(f"the two dates {date1!r} and {date2!r} are the same; give two different dates")
    ds = zones(area, [y1, y2], **options)
    areas = zone_areas(ds)
    d1, d2 = _date_label(y1), _date_label(y2)
    table = areas.pivot(index="zone", columns="date", values="area_km2")
    table = table.reindex([name for name, _, _ in _bands(ds)])
    table = table.rename(columns={d1: f"area_km2_{d1}", d2: f"area_km2_{d2}"}).reset_index()
    first, second = table[f"area_km2_{d1}"], table[f"area_km2_{d2}"]
    table["change_km2"] = second - first
    with np.errstate(divide="ignore", invalid="ignore"):
        table["change_percent"] = np.where(first > 0, 100.0 * (second - first) / first, np.nan)
    table.columns.name = None
    return ds, table, zone_geojson(ds)


def write_geojson(path: str | os.PathLike, collection: dict) -> None:
    """Write a FeatureCollection atomically (UTF-8 JSON)."""
    from .io import write_text

    write_text(path, json.dumps(collection, separators=(",", ":")))


# --------------------------------------------------------------------------- poles
def _model(model):
    from .model import Model, load_model

    return model if isinstance(model, Model) else load_model(model)


def _years(date: Any) -> np.ndarray:
    if isinstance(date, str) or np.ndim(date) == 0:
        return np.atleast_1d(np.float64(decimal_year(date)))
    return np.atleast_1d(np.asarray(decimal_year(date), dtype=np.float64))


def geodetic_from_geocentric_lat(lat_geocentric_deg: Any) -> np.ndarray:
    """Geodetic latitude of the WGS84 surface point at a geocentric latitude, degrees."""
    lat_c = np.radians(np.asarray(lat_geocentric_deg, dtype=np.float64))
    return np.degrees(np.arctan2(np.sin(lat_c), (1.0 - WGS84_E2) * np.cos(lat_c)))


def geomagnetic_poles(date: Any, model=None, allow_extrapolation: bool = False) -> pd.DataFrame:
    """North and south geomagnetic (centred-dipole) poles from g10, g11, h11.

    Returns a DataFrame ``date, pole, kind, lat, lon, decimal_year, lat_geocentric, dipole_nT``
    (``kind`` = ``geomagnetic``; ``lat`` geodetic WGS84, degrees; east positive longitude in
    -180..180; ``dipole_nT`` = B0). ``date`` may be one date or a sequence.
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
                "date": _date_label(year), "pole": pole, "kind": "geomagnetic",
                "lat": float(geodetic_from_geocentric_lat(lat_pole)), "lon": (lon_pole + 180.0) % 360.0 - 180.0,
                "decimal_year": float(year), "lat_geocentric": lat_pole, "dipole_nT": b0,
            })
    return pd.DataFrame(rows)


def _stereo(hemisphere: str):
    from pyproj import Transformer

    lat0 = 90 if hemisphere == "north" else -90
    return Transformer.from_crs("EPSG:4326", f"+proj=stere +lat_0={lat0} +lat_ts={lat0} +lon_0=0 +datum=WGS84 +units=m",
                                always_xy=True)


def _map_horizontal(hemisphere: str, lon_deg: np.ndarray, north: np.ndarray, east: np.ndarray) -> np.ndarray:
    """Horizontal field in polar stereographic map axes (smooth through the geographic pole)."""
    lam = np.radians(lon_deg)
    s, c = np.sin(lam), np.cos(lam)
    if hemisphere == "north":  # x = rho sin(lon), y = -rho cos(lon)
        return np.stack([-north * s + east * c, north * c + east * s])
    return np.stack([north * s + east * c, north * c - east * s])  # x = rho sin(lon), y = rho cos(lon)


def _dip_pole(year: float, hemisphere: str, model, alt_km: float, tol_nT: float = 1e-3,
              extrapolate: bool = False) -> tuple[float, float, float]:
    from .field import field_arrays, field_grid

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


def dip_poles(date: Any, model=None, alt_km: float = 0.0, allow_extrapolation: bool = False) -> pd.DataFrame:
    """North and south dip poles (H = 0 on the ellipsoid at ``alt_km``).

    Returns a DataFrame ``date, pole, kind, lat, lon, decimal_year, horizontal_nT`` (``kind`` =
    ``dip``; geodetic WGS84 degrees; ``horizontal_nT`` is H at the point found, below 1e-3 nT
    when the search converged). ``date`` may be one date or a sequence.
    """
    m = _model(model)
    years = _years(date)
    m.check_dates(years, allow_extrapolation)  # warns once if extrapolating
    rows = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # D is undefined at the pole found
        warnings.simplefilter("ignore", ExtrapolationWarning)  # already warned above
        for year in years:
            for pole in _CAPS:
                lat, lon, h = _dip_pole(float(year), pole, m, alt_km, extrapolate=allow_extrapolation)
                rows.append({"date": _date_label(year), "pole": pole, "kind": "dip", "lat": lat, "lon": lon,
                             "decimal_year": float(year), "horizontal_nT": h})
    return pd.DataFrame(rows)


def pole_tracks(start: Any, end: Any, step_years: float = 1.0, model=None, allow_extrapolation: bool = False) -> pd.DataFrame:
    """Dip and geomagnetic poles from ``start`` every ``step_years``, and at ``end`` (always included,
    also when the step does not divide the span).

    Columns ``date, pole, kind, lat, lon, decimal_year`` (plus ``horizontal_nT`` for dip poles).
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
    geo = geomagnetic_poles(years, model=model, allow_extrapolation=allow_extrapolation)[["date", "pole", "kind", "lat", "lon", "decimal_year"]]
    table = pd.concat([dip, geo], ignore_index=True)
    return table.sort_values(["kind", "pole", "decimal_year"], kind="stable").reset_index(drop=True)
