"""Routes leg by leg: distance and course in every heading reference, and the field along the way.

A route is an ordered list of waypoints (name, lat, lon, optional altitude). Each leg
is followed along the WGS84 geodesic (default; ``pyproj.Geod``, Karney's algorithms)
or along the rhumb line (Mercator sailing on the ellipsoid, see :func:`rhumb_inverse`).
Every leg is densified at ``spacing_nm``; the field is evaluated once for all
samples (:func:`headingref.elements.field_arrays`). Sign conventions are those of
:mod:`headingref.headings`: variation and grivation east positive,
``magnetic = true - variation``, ``grid = true - convergence``,
``magnetic = grid - grivation``.

Public API
----------
:func:`route` -> :class:`RouteResult` ``(legs, samples)``; :func:`read_waypoints` (CSV, and GPX,
KML or GeoJSON through :mod:`headingref.route_files`);
:func:`route_geojson` (legs as GeoJSON lines cut at the antimeridian, RFC 7946 3.1.9, and the
weak-field stretches); :func:`route_kml` (the same as KML 2.2 with styled stretches; user text
escaped by ElementTree); :func:`weak_field_stretches`;
:func:`rhumb_inverse`, :func:`meridian_distance_m` (the rhumb-line pieces).

>>> import headingref
>>> wps = [dict(name="ALFA", lat=69.0, lon=18.0), dict(name="BRAVO", lat=78.2, lon=15.6)]
>>> legs, samples = headingref.route(wps, "2026-12-02", grid="polar")
>>> round(float(legs.distance_nm.iloc[0]), 1)  # WGS84 geodesic
555.8
>>> list(legs.columns[:2]), "magnetic_course_deg_mid" in legs
(['from', 'to'], True)

Notes
-----
- A waypoint or sample exactly at a geographic pole has no variation (nor course):
  such samples are moved 1 m along the leg, giving the limit approached along it.
- Caution / blackout stretches are where the horizontal field H is below
  :data:`headingref.elements.CAUTION_NT` / :data:`headingref.elements.BLACKOUT_NT`; their ends
  are found by linear interpolation of H between samples. They are listed as
  ``"from-to"`` distances along the leg in NM, ``"; "`` between stretches.

References
----------
.. [1] C. F. F. Karney, "Algorithms for geodesics", *Journal of Geodesy* 87(1), 43-55
   (2013), doi:10.1007/s00190-012-0578-z. (``pyproj.Geod`` implements it.)
.. [2] J. P. Snyder, *Map Projections: A Working Manual*, U.S. Geological Survey
   Professional Paper 1395 (1987), doi:10.3133/pp1395. (Rhumb lines: the meridian-distance series
   in the third flattening, :func:`meridian_distance_m`.)
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np
import pandas as pd
import pyproj

from . import kml
from ._types import DateLike, ModelLike
from .errors import InputError
from .headings import grivation_deg, normalize_heading, resolve_grid, warn_if_far_from_pole, wrap_angle
from .io import coordinate_column, read_table
from .route_files import ROUTE_FILE_SUFFIXES, read_route_file
from .units import NAUTICAL_MILE_M, ROUTE_HEIGHT_MAX_KM, decimal_year, height_column, parse_coordinate, parse_height_km

__all__ = ["LEG_COLUMNS", "SAMPLE_COLUMNS", "WEAK_FIELD_KINDS", "RouteResult", "weak_field_stretches", "meridian_distance_m", "read_waypoints", "rhumb_inverse", "route", "route_geojson", "route_kml"]

GEOD = pyproj.Geod(ellps="WGS84")
_A = GEOD.a  # WGS84 semi-major axis, m
_F = GEOD.f  # WGS84 flattening
_E2 = _F * (2.0 - _F)
_E = math.sqrt(_E2)
_N = _F / (2.0 - _F)  # third flattening
POLE_NUDGE_M = 1.0
MIN_LEG_M = 1.0
MAX_SAMPLES = 2_000_000  # ~ a round-the-world route every 0.01 NM; more would exhaust memory, not add accuracy


class RouteResult(NamedTuple):
    """The legs table (one row per leg) and the samples table (one row per sample point).

    ``legs.attrs`` holds ``grid``, ``path``, ``decimal_year`` and ``spacing_nm``.
    """

    legs: pd.DataFrame
    samples: pd.DataFrame


# --------------------------------------------------------------------------- waypoints


WAYPOINT_COLUMNS = ("name", "lat", "lon", "alt", "alt_ft", "alt_m", "alt_km")
"""Columns of a waypoint CSV (name, lat, lon required; one height column); what a column mapping may map onto."""


def _waypoint_records(waypoints: Any) -> list:
    if isinstance(waypoints, pd.DataFrame):
        return waypoints.to_dict("records")
    try:
        return list(waypoints)
    except TypeError:
        raise InputError(
            f"waypoints of type {type(waypoints).__name__} are not understood; give a CSV path, "
            "a DataFrame or a list of dicts with name, lat, lon and optional alt (with a unit), alt_ft, alt_m or alt_km"
        ) from None


def _blank(value: Any) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value)) or (isinstance(value, str) and not value.strip())


def _waypoints_from_records(waypoints: Any) -> tuple[list, np.ndarray, np.ndarray, list, list, list]:
    """Names, lat, lon, (height cell, unit) pairs and row labels from a DataFrame or a list."""
    names, lat_list, lon_list, heights, units, where = [], [], [], [], [], []
    for i, rec in enumerate(_waypoint_records(waypoints)):
        label = f"waypoint {i + 1}"
        unit: str | None = "km"
        if isinstance(rec, dict):
            rec = {str(k).strip().lower(): v for k, v in rec.items()}
            if "lat" not in rec or "lon" not in rec:
                raise InputError(f"{label}: needs lat and lon (found {', '.join(rec) or 'nothing'})")
            try:
                column, unit = height_column(rec, "alt")
            except InputError as exc:
                raise InputError(f"{label}: {exc}") from None
            name, la, lo, al = rec.get("name"), rec["lat"], rec["lon"], rec.get(column) if column else None
        elif isinstance(rec, (tuple, list)) and len(rec) in (3, 4):
            name, la, lo, al = (*rec, None) if len(rec) == 3 else rec  # a 4th item: km, or text with a unit
        else:
            raise InputError(f"{label}: {rec!r} is not understood; give a dict with name, lat, lon[, alt]")
        name = f"WP{i + 1}" if _blank(name) else str(name)
        label = str(rec["where"]) if isinstance(rec, dict) and rec.get("where") else f"waypoint {i + 1} ({name})"
        try:
            lat_list.append(parse_coordinate(la, "lat"))
            lon_list.append(parse_coordinate(lo, "lon"))
        except InputError as exc:
            raise InputError(f"{label}: {exc}") from None
        names.append(name)
        heights.append("" if _blank(al) else al)
        units.append(unit)
        where.append(label)
    return names, np.array(lat_list, dtype=np.float64), np.array(lon_list, dtype=np.float64), heights, units, where


def read_waypoints(waypoints: Any, alt_km: float = 0.0, route_name: str | None = None,
                   columns: str | Mapping[str, str] | None = None) -> pd.DataFrame:
    """Waypoints as a DataFrame ``name, lat_deg, lon_deg, alt_km, where``.

    ``waypoints`` is a CSV path (columns ``name, lat, lon`` and an optional height column),
    a DataFrame, or a list of dicts/tuples ``(name, lat, lon[, alt_km])``. Coordinates take
    any form :func:`headingref.units.parse_coordinate` accepts. A height carries its unit:
    in the column name (``alt_ft``, ``alt_m``, ``alt_km``: plain numbers in that unit) or in
    every value of a plain ``alt`` column (``35000 ft``, ``FL350``, ``120 m``, ``3.2 km``;
    a bare number there is refused). ``columns`` maps headingref's names to a CSV's own
    (``"name=ident,lat=wp_lat"``, :func:`headingref.tables.parse_column_mapping`). Heights above 30 km
    (:data:`headingref.units.ROUTE_HEIGHT_MAX_KM`) are refused as unit slips. A missing
    height takes ``alt_km``. ``where`` names the row for error messages.

    A path ending in ``.gpx``, ``.kml``, ``.geojson`` or ``.json`` is read by
    :func:`headingref.route_files.read_route_file` (heights in metres as those formats define
    them); ``route_name`` picks one of several routes, tracks or lines there.
    """
    if isinstance(waypoints, (str, os.PathLike)) and Path(waypoints).suffix.lower() in ROUTE_FILE_SUFFIXES:
        if columns:
            raise InputError(f"a column mapping (--columns) applies to CSV waypoint files, not to {Path(waypoints).name}")
        waypoints = read_route_file(waypoints, route_name)
    elif route_name is not None:
        raise InputError(f"route name {route_name!r} applies to GPX, KML or GeoJSON files, not to {waypoints!r}")
    if isinstance(waypoints, (str, os.PathLike)):
        table = read_table(Path(waypoints), required=WAYPOINT_COLUMNS[:3], optional=WAYPOINT_COLUMNS[3:],
                           what="route", columns=columns)
        source = table.attrs["source"]
        lat = coordinate_column(table, "lat", "lat")
        lon = coordinate_column(table, "lon", "lon")
        where = [f"{source} line {line}" for line in table.index]
        names = [n or f"WP{i + 1}" for i, n in enumerate(table["name"])]
        try:
            column, unit = height_column(table.columns, "alt")
        except InputError as exc:
            raise InputError(f"{source}: {exc}") from None
        heights = table[column].tolist() if column else [""] * len(table)
        units = [unit] * len(table)
    else:
        names, lat, lon, heights, units, where = _waypoints_from_records(waypoints)
    alts = np.empty(len(names), dtype=np.float64)
    for i, (cell, unit) in enumerate(zip(heights, units, strict=True)):
        try:
            alts[i] = alt_km if _blank(cell) else parse_height_km(cell, default_unit=unit, max_km=ROUTE_HEIGHT_MAX_KM)
        except InputError as exc:
            raise InputError(f"{where[i]}: {exc}") from None
    if len(names) < 2:
        raise InputError(f"a route needs at least two waypoints; {len(names)} given")
    return pd.DataFrame({"name": names, "lat_deg": lat, "lon_deg": lon, "alt_km": alts, "where": where})


# --------------------------------------------------------------------------- rhumb lines

# Meridian distance M(phi) = A (phi + sum c_k sin 2k phi) and its inverse, series in the
# third flattening n to n^4: Snyder, Map Projections - A Working Manual (USGS PP 1395,
# 1987), eqs. 3-22 and 3-26 (rectifying latitude), written with A = a/(1+n)(1+n^2/4+n^4/64).
_M_SCALE = _A / (1.0 + _N) * (1.0 + _N**2 / 4.0 + _N**4 / 64.0)
_M_COEF = (-1.5 * _N + 9.0 / 16.0 * _N**3, 15.0 / 16.0 * _N**2 - 15.0 / 32.0 * _N**4, -35.0 / 48.0 * _N**3, 315.0 / 512.0 * _N**4)
_MU_COEF = (1.5 * _N - 27.0 / 32.0 * _N**3, 21.0 / 16.0 * _N**2 - 55.0 / 32.0 * _N**4, 151.0 / 96.0 * _N**3, 1097.0 / 512.0 * _N**4)


def meridian_distance_m(lat_deg: Any) -> np.ndarray:
    """Distance along the WGS84 meridian from the equator to ``lat_deg``, in metres (signed)."""
    phi = np.radians(np.asarray(lat_deg, dtype=np.float64))
    total = phi.copy()
    for k, c in enumerate(_M_COEF, start=1):
        total = total + c * np.sin(2 * k * phi)
    return _M_SCALE * total


def _latitude_from_meridian_distance(m: np.ndarray) -> np.ndarray:
    """Inverse of :func:`meridian_distance_m` (degrees), series then one Newton step."""
    mu = np.asarray(m, dtype=np.float64) / _M_SCALE
    phi = mu.copy()
    for k, d in enumerate(_MU_COEF, start=1):
        phi = phi + d * np.sin(2 * k * mu)
    phi = np.clip(phi, -np.pi / 2, np.pi / 2)
    s = np.sin(phi)
    rho = _A * (1.0 - _E2) / (1.0 - _E2 * s * s) ** 1.5  # meridian radius of curvature
    phi = phi - (meridian_distance_m(np.degrees(phi)) - m) / rho
    return np.degrees(np.clip(phi, -np.pi / 2, np.pi / 2))


def _isometric_latitude(lat_deg: np.ndarray) -> np.ndarray:
    """psi = asinh(tan phi) - e atanh(e sin phi) (radians; +-inf at the poles)."""
    phi = np.radians(lat_deg)
    with np.errstate(divide="ignore", invalid="ignore"):
        psi = np.arcsinh(np.tan(phi)) - _E * np.arctanh(_E * np.sin(phi))
    return np.where(lat_deg >= 90.0, np.inf, np.where(lat_deg <= -90.0, -np.inf, psi))


def _parallel_radius_m(lat_deg: np.ndarray) -> np.ndarray:
    phi = np.radians(lat_deg)
    return _A * np.cos(phi) / np.sqrt(1.0 - _E2 * np.sin(phi) ** 2)


def _rhumb_parts(lat1, lon1, lat2, lon2):
    lat1, lon1, lat2, lon2 = (np.asarray(v, dtype=np.float64) for v in (lat1, lon1, lat2, lon2))
    at_pole = (np.abs(lat1) >= 90.0) | (np.abs(lat2) >= 90.0)
    dlon = np.radians(np.where(at_pole, 0.0, wrap_angle(lon2 - lon1)))
    # a rhumb line from or to a pole runs along the other end's meridian
    lon_base = np.where(np.abs(lat1) >= 90.0, lon2, lon1)
    psi1, psi2 = _isometric_latitude(lat1), _isometric_latitude(lat2)
    m1, m2 = meridian_distance_m(lat1), meridian_distance_m(lat2)
    with np.errstate(invalid="ignore"):
        dpsi = psi2 - psi1
    course = np.degrees(np.arctan2(dlon, dpsi))
    small = np.abs(np.radians(lat2 - lat1)) < 1e-6
    with np.errstate(divide="ignore", invalid="ignore"):
        # dM/dpsi: the divided difference, or its limit (radius of the parallel) for small dlat
        ratio = np.where(small, _parallel_radius_m((lat1 + lat2) / 2.0), (m2 - m1) / dpsi)
        distance = np.where(at_pole, np.abs(m2 - m1), np.hypot(dlon, dpsi) * np.abs(ratio))
    return normalize_heading(course), distance, dlon, psi1, dpsi, m1, m2, small, lon_base


def rhumb_inverse(lat1: Any, lon1: Any, lat2: Any, lon2: Any) -> tuple[np.ndarray, np.ndarray]:
    """Course (degrees true, constant) and length (metres) of the rhumb line on WGS84.

    Mercator sailing on the ellipsoid: ``tan C = dlon / dpsi`` with the isometric
    latitude ``psi = asinh(tan phi) - e atanh(e sin phi)``, and ``s = dM / cos C``
    with ``M`` the meridian distance; for (nearly) east-west lines the limit
    ``s = dlon * a cos(phi) / sqrt(1 - e^2 sin^2 phi)``. The shorter way round in
    longitude is taken (so a line may cross the antimeridian).
    """
    course, distance, *_ = _rhumb_parts(lat1, lon1, lat2, lon2)
    return course, distance


def _rhumb_points(lat1, lon1, psi1, dpsi, dlon, m1, m2, small, fraction):
    """Positions at ``fraction`` (0..1) of the rhumb length; arrays already repeated per sample."""
    m = m1 + fraction * (m2 - m1)
    lat = np.where(fraction <= 0.0, lat1, _latitude_from_meridian_distance(m))
    with np.errstate(invalid="ignore", divide="ignore"):
        g = np.where(small | ~np.isfinite(dpsi), fraction, (_isometric_latitude(lat) - psi1) / dpsi)
    g = np.where(np.isfinite(g), g, fraction)
    lon = wrap_angle(lon1 + np.degrees(dlon) * g)
    return lat, lon


# --------------------------------------------------------------------------- route

LEG_COLUMNS: tuple[str, ...] = (
    "from", "to", "from_lat_deg", "from_lon_deg", "to_lat_deg", "to_lon_deg", "distance_nm", "distance_km",
    "true_course_deg", "true_course_deg_mid", "true_course_deg_end",
    "magnetic_course_deg", "magnetic_course_deg_mid", "magnetic_course_deg_end",
    "grid_course_deg", "grid_course_deg_end",
    "variation_deg", "variation_deg_mid", "variation_deg_end",
    "grivation_deg", "grivation_deg_mid", "grivation_deg_end",
    "min_horizontal_nT", "max_declination_uncertainty_deg", "zone", "caution_stretches_nm", "blackout_stretches_nm",
)
"""Columns of :attr:`RouteResult.legs`, in order (see :func:`route`)."""

SAMPLE_COLUMNS: tuple[str, ...] = (
    "leg", "from", "to", "distance_along_leg_nm", "distance_along_route_nm", "lat_deg", "lon_deg", "alt_km",
    "true_course_deg", "variation_deg", "magnetic_course_deg", "convergence_deg", "grid_course_deg",
    "grivation_deg", "horizontal_nT", "declination_uncertainty_deg", "zone", "declination_flag",
)
"""Columns of :attr:`RouteResult.samples`, in order (see :func:`route`)."""


def _stretch_intervals(dist_nm: np.ndarray, h_nT: np.ndarray, threshold: float) -> list[tuple[float, float]]:
    """Stretches of one leg where H < threshold, as (from, to) NM along it; ends by linear interpolation of H."""
    below = h_nT < threshold
    if not below.any():
        return []
    starts = [dist_nm[0]] if below[0] else []
    ends = []
    for i in np.flatnonzero(np.diff(below.astype(np.int8))):
        h0, h1 = h_nT[i], h_nT[i + 1]  # H crosses the threshold between samples i and i+1
        x = dist_nm[i] + (threshold - h0) / (h1 - h0) * (dist_nm[i + 1] - dist_nm[i])
        (ends if below[i] else starts).append(x)
    if below[-1]:
        ends.append(dist_nm[-1])
    return [(float(a), float(b)) for a, b in zip(starts, ends, strict=True)]


def _stretches(dist_nm: np.ndarray, h_nT: np.ndarray, threshold: float) -> str:
    """Stretches of one leg where H < threshold, as 'from-to' NM joined by '; '."""
    return "; ".join(f"{a:.1f}-{b:.1f}" for a, b in _stretch_intervals(dist_nm, h_nT, threshold))


class _Legs(NamedTuple):
    """Geometry of every leg: ends, length, and what the path needs to place points along it."""

    wps: pd.DataFrame
    path: str
    lat1: np.ndarray
    lon1: np.ndarray
    lat2: np.ndarray
    lon2: np.ndarray
    dist_m: np.ndarray
    az12: np.ndarray | None  # geodesic: initial azimuth
    rhumb: tuple | None  # rhumb: (course, dlon, psi1, dpsi, m1, m2, small, lon_base)

    def positions(self, s_m: np.ndarray, legs: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Latitude, longitude and true course at distance ``s_m`` along each leg ``legs``."""
        if self.path == "geodesic":
            lo, la, back = GEOD.fwd(self.lon1[legs], self.lat1[legs], self.az12[legs], s_m)
            return np.asarray(la), np.asarray(lo), normalize_heading(np.asarray(back) + 180.0)
        course, dlon, psi1, dpsi, m1, m2, small, lon_base = (v[legs] for v in self.rhumb)
        la, lo = _rhumb_points(self.lat1[legs], lon_base, psi1, dpsi, dlon, m1, m2, small, s_m / self.dist_m[legs])
        return la, lo, course


class _Track(NamedTuple):
    """Sample points of all legs, then one extra point at the middle of each leg (the last ``n_legs``)."""

    leg: np.ndarray
    fraction: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    course: np.ndarray
    alt: np.ndarray
    n_samples: int
    start: np.ndarray  # index of each leg's first sample
    end: np.ndarray  # index of each leg's last sample


class _References(NamedTuple):
    """The field and the courses in every reference at every track point."""

    variation: np.ndarray
    h_nT: np.ndarray
    uncertainty: np.ndarray
    zone_code: np.ndarray
    magnetic: np.ndarray
    convergence: np.ndarray
    grid_course: np.ndarray
    grivation: np.ndarray
    flag: Any = None  # headingref.field's declination_flag: why D is NaN or (H < 100 nT) not usable


def _check_options(path: str, spacing_nm: Any) -> float:
    """Validate the path kind and the sample spacing (NM > 0)."""
    if path not in ("geodesic", "rhumb"):
        raise InputError(f"path {path!r} is not understood; give 'geodesic' or 'rhumb'")
    try:
        spacing = float(spacing_nm)
    except (TypeError, ValueError):
        raise InputError(f"spacing {spacing_nm!r} is not a number; give NM > 0") from None
    if not math.isfinite(spacing) or spacing <= 0.0:
        raise InputError(f"spacing {spacing_nm!r} NM is not usable; give a positive number of NM")
    return spacing


def _leg_geometry(wps: pd.DataFrame, path: str) -> _Legs:
    """Length and direction of each leg along the geodesic or rhumb line; repeated waypoints refused."""
    lat, lon = wps.lat_deg.to_numpy(), wps.lon_deg.to_numpy()
    lat1, lat2, lon1, lon2 = lat[:-1], lat[1:], lon[:-1], lon[1:]
    az12 = rhumb = None
    if path == "geodesic":
        az12, _, dist_m = GEOD.inv(lon1, lat1, lon2, lat2)
        az12, dist_m = np.asarray(az12, dtype=np.float64), np.asarray(dist_m, dtype=np.float64)
    else:
        course, dist_m, dlon, psi1, dpsi, m1, m2, small, lon_base = _rhumb_parts(lat1, lon1, lat2, lon2)
        rhumb = (course, dlon, psi1, dpsi, m1, m2, small, lon_base)
    short = np.flatnonzero(~(dist_m >= MIN_LEG_M))
    if short.size:
        i = int(short[0])
        raise InputError(
            f"{wps['where'].iloc[i + 1]} repeats {wps['where'].iloc[i]} ({wps.name.iloc[i]} to {wps.name.iloc[i + 1]} "
            f"is {dist_m[i]:.3g} m long); consecutive waypoints must differ"
        )
    return _Legs(wps, path, lat1, lon1, lat2, lon2, dist_m, az12, rhumb)


def _sample_track(legs: _Legs, spacing: float) -> _Track:
    """Points every ``spacing`` NM or less along each leg (ends exact), plus each leg's middle.

    A point at a geographic pole is moved :data:`POLE_NUDGE_M` along its leg; the altitude
    changes linearly with distance along a leg.
    """
    n_legs = legs.dist_m.size
    dist_nm = legs.dist_m / NAUTICAL_MILE_M
    with np.errstate(over="ignore"):
        n_wanted = np.ceil(dist_nm / spacing - 1e-9)
    if n_wanted.sum() + n_legs > MAX_SAMPLES:
        raise InputError(
            f"spacing {spacing:g} NM gives {n_wanted.sum() + n_legs:.3g} samples along the route's {dist_nm.sum():,.1f} NM "
            f"(at most {MAX_SAMPLES:,}); give a larger spacing"
        )
    n_seg = np.maximum(1, n_wanted.astype(np.int64))
    counts = n_seg + 1
    leg_of = np.repeat(np.arange(n_legs), counts)
    k = np.arange(counts.sum()) - np.repeat(np.cumsum(counts) - counts, counts)
    leg_all = np.concatenate([leg_of, np.arange(n_legs)])
    frac_all = np.concatenate([k / n_seg[leg_of], np.full(n_legs, 0.5)])
    s_all = frac_all * legs.dist_m[leg_all]
    n_samples = leg_of.size

    lat, lon, course = legs.positions(s_all, leg_all)
    first = frac_all == 0.0
    last = (frac_all == 1.0) & (np.arange(frac_all.size) < n_samples)
    lat = np.where(first, legs.lat1[leg_all], np.where(last, legs.lat2[leg_all], lat))
    lon = np.where(first, legs.lon1[leg_all], np.where(last, legs.lon2[leg_all], lon))
    polar = np.flatnonzero(np.abs(lat) > 90.0 - 1e-6)
    if polar.size:
        step = np.where(frac_all[polar] < 0.5, POLE_NUDGE_M, -POLE_NUDGE_M)
        lat[polar], lon[polar], course[polar] = legs.positions(s_all[polar] + step, leg_all[polar])
    alt = legs.wps.alt_km.to_numpy()
    s_alt = alt[:-1][leg_all] + frac_all * (alt[1:][leg_all] - alt[:-1][leg_all])
    ends = np.cumsum(counts)
    return _Track(leg_all, frac_all, lat, lon, course, s_alt, n_samples, ends - counts, ends - 1)


def _route_grid(grid: Any, track: _Track) -> Any:
    """The grid of the route (``None``/``auto``: the polar grid of the nearest pole).

    A polar grid given explicitly and used far from its pole warns (the wrong cap is the usual slip);
    the automatic choice does not (a low-latitude route has no better polar grid).
    """
    grid_obj = resolve_grid(grid, track.lat)
    if grid is not None and not (isinstance(grid, str) and grid.strip().lower() == "auto"):
        warn_if_far_from_pole(grid_obj, track.lat, "the route")  # the nearest pole's grid is the user's to judge
    return grid_obj


def _references(track: _Track, wps: pd.DataFrame, grid_obj: Any, year: float, model: Any,
                allow_extrapolation: bool) -> _References:
    """Field along the track and the courses in the magnetic and grid references."""
    from .elements import field_arrays

    fld = field_arrays(track.lat, track.lon, year, track.alt, model=model, allow_extrapolation=allow_extrapolation)
    variation = np.asarray(fld["declination_deg"], dtype=np.float64)

    def check_finite(values: np.ndarray, problem: str, advice: str) -> None:
        bad = np.flatnonzero(~np.isfinite(values))
        if bad.size:
            i, leg = int(bad[0]), int(track.leg[bad[0]])
            raise InputError(
                f"{problem} at lat {track.lat[i]:.5f}, lon {track.lon[i]:.5f} on leg {leg + 1} "
                f"({wps.name.iloc[leg]} to {wps.name.iloc[leg + 1]}); {advice}"
            )

    check_finite(variation, "variation is undefined", "the route passes through a dip pole")
    convergence = grid_obj.convergence_deg(track.lat, track.lon)
    check_finite(convergence, f"grid {grid_obj.name} does not cover the route", "choose another grid")
    return _References(
        variation=variation,
        h_nT=np.asarray(fld["horizontal_nT"], dtype=np.float64),
        uncertainty=np.asarray(fld["declination_uncertainty_deg"], dtype=np.float64),
        zone_code=np.asarray(fld["zone_code"], dtype=np.int8),
        magnetic=normalize_heading(track.course - variation),
        convergence=convergence,
        grid_course=normalize_heading(track.course - convergence),
        grivation=grivation_deg(variation, convergence),
        flag=fld["declination_flag"],
    )


def _zones(codes: np.ndarray) -> pd.Categorical:
    from .elements import ZONE_DTYPE

    return pd.Categorical.from_codes(codes, dtype=ZONE_DTYPE)


def _samples_table(track: _Track, refs: _References, legs: _Legs) -> pd.DataFrame:
    """One row per sample point (:data:`SAMPLE_COLUMNS`)."""
    n = track.n_samples
    leg = track.leg[:n]
    names = legs.wps.name.to_numpy(dtype=object)
    dist_nm = legs.dist_m / NAUTICAL_MILE_M
    along_leg_nm = track.fraction[:n] * dist_nm[leg]
    route_start_nm = np.concatenate([[0.0], np.cumsum(dist_nm)[:-1]])
    columns = {
        "leg": leg + 1,
        "from": names[leg],
        "to": names[leg + 1],
        "distance_along_leg_nm": along_leg_nm,
        "distance_along_route_nm": route_start_nm[leg] + along_leg_nm,
        "lat_deg": track.lat[:n],
        "lon_deg": track.lon[:n],
        "alt_km": track.alt[:n],
        "true_course_deg": track.course[:n],
        "variation_deg": refs.variation[:n],
        "magnetic_course_deg": refs.magnetic[:n],
        "convergence_deg": refs.convergence[:n],
        "grid_course_deg": refs.grid_course[:n],
        "grivation_deg": refs.grivation[:n],
        "horizontal_nT": refs.h_nT[:n],
        "declination_uncertainty_deg": refs.uncertainty[:n],
        "zone": _zones(refs.zone_code[:n]),
        "declination_flag": refs.flag[:n],
    }
    return pd.DataFrame({name: columns[name] for name in SAMPLE_COLUMNS})


def _legs_table(track: _Track, refs: _References, legs: _Legs, along_leg_nm: np.ndarray) -> pd.DataFrame:
    """One row per leg (:data:`LEG_COLUMNS`): courses and references at start, middle and end, weak-field stretches."""
    from .elements import BLACKOUT_NT, CAUTION_NT

    n = track.n_samples
    start, end = track.start, track.end
    mid = n + np.arange(legs.dist_m.size)
    zone_max = np.maximum.reduceat(refs.zone_code[:n], start)
    caution, blackout = [], []
    for i, worst in enumerate(zone_max):
        part = slice(start[i], end[i] + 1)
        caution.append(_stretches(along_leg_nm[part], refs.h_nT[part], CAUTION_NT) if worst else "")
        blackout.append(_stretches(along_leg_nm[part], refs.h_nT[part], BLACKOUT_NT) if worst else "")
    names = legs.wps.name.to_numpy(dtype=object)
    columns = {
        "from": names[:-1],
        "to": names[1:],
        "from_lat_deg": legs.lat1,
        "from_lon_deg": legs.lon1,
        "to_lat_deg": legs.lat2,
        "to_lon_deg": legs.lon2,
        "distance_nm": legs.dist_m / NAUTICAL_MILE_M,
        "distance_km": legs.dist_m / 1000.0,
        "min_horizontal_nT": np.minimum.reduceat(refs.h_nT[:n], start),
        "max_declination_uncertainty_deg": np.maximum.reduceat(refs.uncertainty[:n], start),
        "zone": _zones(zone_max),
        "caution_stretches_nm": caution,
        "blackout_stretches_nm": blackout,
    }
    at = {"": start, "_mid": mid, "_end": end}
    for name, values in (("true_course_deg", track.course), ("magnetic_course_deg", refs.magnetic),
                         ("grid_course_deg", refs.grid_course), ("variation_deg", refs.variation),
                         ("grivation_deg", refs.grivation)):
        for suffix, idx in at.items():
            columns[name + suffix] = values[idx]
    return pd.DataFrame({name: columns[name] for name in LEG_COLUMNS})


def route(
    waypoints: Any,
    date: DateLike,
    alt_km: Any = 0.0,
    grid: Any = None,
    spacing_nm: float = 10.0,
    path: str = "geodesic",
    model: ModelLike = None,
    allow_extrapolation: bool = False,
    route_name: str | None = None,
    columns: str | Mapping[str, str] | None = None,
) -> RouteResult:
    """Legs and samples of a route in true, magnetic and grid references, with the field along it.

    Parameters
    ----------
    waypoints : str, path, DataFrame or list of dicts
        See :func:`read_waypoints`. At least two; consecutive waypoints must differ.
    date : date-like or decimal year
        One date for the whole route.
    alt_km : float or str
        Altitude above the WGS84 ellipsoid (km, or text with a unit: ``FL350``, ``35000 ft``)
        of waypoints that give none, at most :data:`headingref.units.ROUTE_HEIGHT_MAX_KM`.
        Along a leg the altitude changes linearly with distance.
    grid : str, pyproj.CRS, Grid or None
        Grid for grid courses and grivation (see :func:`headingref.headings.parse_grid`).
        None or ``"auto"`` takes the polar stereographic grid on Greenwich of the pole the
        route comes nearest to (``polar`` or ``polar-south``,
        :func:`headingref.headings.polar_grid_for`). A polar grid given explicitly and used
        more than 60° of latitude from its pole draws a
        :class:`~headingref.errors.DataQualityWarning`.
    spacing_nm : float
        Greatest distance between samples along a leg, NM (> 0).
    path : ``"geodesic"`` or ``"rhumb"``
    model : Model, optional
        Field model (default IGRF-14).
    route_name : str, optional
        Which route, track or line of a GPX, KML or GeoJSON file (one of several).
    columns : str or dict, optional
        Column mapping of a waypoint CSV, ``"name=ident,lat=wp_lat,lon=wp_lon"`` (headingref's
        name = the file's column; :func:`headingref.tables.parse_column_mapping`).

    Returns
    -------
    RouteResult
        ``legs`` (columns :data:`LEG_COLUMNS`): ``from, to``, their ``from_lat_deg,
        from_lon_deg, to_lat_deg, to_lon_deg``, ``distance_nm, distance_km``, true/magnetic
        course at start, ``_mid`` and ``_end`` (``true_course_deg`` ...), ``grid_course_deg``
        and ``grid_course_deg_end``, ``variation_deg`` and ``grivation_deg`` (+ ``_mid``,
        ``_end``), ``min_horizontal_nT``, ``max_declination_uncertainty_deg``, ``zone``
        (worst on the leg), ``caution_stretches_nm`` (H below the caution threshold,
        blackout included), ``blackout_stretches_nm``.
        ``samples`` (columns :data:`SAMPLE_COLUMNS`): ``leg, from, to,
        distance_along_leg_nm, distance_along_route_nm, lat_deg, lon_deg, alt_km,
        true_course_deg, variation_deg, magnetic_course_deg, convergence_deg,
        grid_course_deg, grivation_deg, horizontal_nT, declination_uncertainty_deg, zone``.
        ``zone`` is the ordered categorical of :data:`headingref.elements.ZONE_DTYPE`
        (normal < caution < blackout) in both tables.
    """
    spacing = _check_options(path, spacing_nm)
    wps = read_waypoints(waypoints, alt_km=parse_height_km(alt_km, max_km=ROUTE_HEIGHT_MAX_KM), route_name=route_name, columns=columns)
    year = decimal_year(date)
    legs = _leg_geometry(wps, path)
    track = _sample_track(legs, spacing)
    grid_obj = _route_grid(grid, track)
    refs = _references(track, wps, grid_obj, year, model, allow_extrapolation)
    samples = _samples_table(track, refs, legs)
    legs_table = _legs_table(track, refs, legs, samples.distance_along_leg_nm.to_numpy())
    legs_table.attrs.update(grid=grid_obj.name, path=path, decimal_year=float(year), spacing_nm=spacing)
    samples.attrs.update(legs_table.attrs)
    return RouteResult(legs_table, samples)


# --------------------------------------------------------------------------- GeoJSON


def _split_antimeridian(lon: np.ndarray, lat: np.ndarray) -> list[list[list[float]]]:
    """Cut a lon/lat polyline where it crosses 180 degrees (RFC 7946 section 3.1.9)."""
    pieces: list[list[list[float]]] = [[[float(lon[0]), float(lat[0])]]]
    for i in range(1, lon.size):
        step = lon[i] - lon[i - 1]
        if abs(step) > 180.0:
            edge = 180.0 if step < 0 else -180.0  # leaving through +180 (eastward) or -180 (westward)
            unwrapped = lon[i] + (360.0 if step < 0 else -360.0)
            t = (edge - lon[i - 1]) / (unwrapped - lon[i - 1])
            lat_x = float(lat[i - 1] + t * (lat[i] - lat[i - 1]))
            pieces[-1].append([edge, lat_x])
            pieces.append([[-edge, lat_x]])
        pieces[-1].append([float(lon[i]), float(lat[i])])
    return [p for p in pieces if len(p) >= 2]


def _json_value(value: Any) -> Any:
    if isinstance(value, (np.floating, float)):
        return float(value) if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    return value


def _unit_vectors(lat_deg: np.ndarray, lon_deg: np.ndarray) -> np.ndarray:
    lat, lon = np.radians(lat_deg), np.radians(lon_deg)
    return np.stack([np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)], axis=-1)


def _interpolate_position(dist: np.ndarray, lat: np.ndarray, lon: np.ndarray, at: float) -> tuple[float, float]:
    """Position at ``at`` NM between the samples around it (interpolated on the unit sphere, pole- and 180-safe)."""
    k = int(np.clip(np.searchsorted(dist, at), 1, dist.size - 1))
    t = 0.0 if dist[k] == dist[k - 1] else (at - dist[k - 1]) / (dist[k] - dist[k - 1])
    v = _unit_vectors(lat[k - 1 : k + 1], lon[k - 1 : k + 1])
    p = (1.0 - t) * v[0] + t * v[1]
    p = p / np.linalg.norm(p)
    return float(np.degrees(np.arcsin(np.clip(p[2], -1.0, 1.0)))), float(np.degrees(np.arctan2(p[1], p[0])))


WEAK_FIELD_KINDS = {"caution": "caution: weak horizontal field", "blackout": "blackout: no usable magnetic reference"}
"""Kinds of :func:`weak_field_stretches` and their labels in GeoJSON / KML outputs."""


def weak_field_stretches(result: RouteResult) -> list[dict]:
    """The caution and blackout stretches of a route with their geometry.

    One dict per stretch: ``leg, from, to, zone`` (``caution``: H below
    :data:`headingref.elements.CAUTION_NT`, blackout included; ``blackout``: H below
    :data:`headingref.elements.BLACKOUT_NT`), ``from_nm, to_nm`` along the leg, ``min_horizontal_nT``
    and ``lat_deg, lon_deg`` lists: the samples inside the stretch with its two ends, found by
    linear interpolation of H (as the legs table's ``*_stretches_nm``) and placed between the
    samples around them.
    """
    from .elements import BLACKOUT_NT, CAUTION_NT

    out = []
    for leg_no, part in result.samples.groupby("leg", sort=True):
        h = part.horizontal_nT.to_numpy()
        if not (h < CAUTION_NT).any():
            continue
        dist, lat, lon = (part[c].to_numpy() for c in ("distance_along_leg_nm", "lat_deg", "lon_deg"))
        for zone, threshold in (("caution", CAUTION_NT), ("blackout", BLACKOUT_NT)):
            for a, b in _stretch_intervals(dist, h, threshold):
                inside = (dist > a) & (dist < b)
                ends = [_interpolate_position(dist, lat, lon, x) for x in (a, b)]
                out.append({
                    "leg": int(leg_no), "from": part["from"].iloc[0], "to": part["to"].iloc[0], "zone": zone,
                    "from_nm": a, "to_nm": b,
                    "min_horizontal_nT": float(h[inside].min()) if inside.any() else float(min(threshold, h.min())),
                    "lat_deg": [ends[0][0], *lat[inside].tolist(), ends[1][0]],
                    "lon_deg": [ends[0][1], *lon[inside].tolist(), ends[1][1]],
                })
    return out


def _line_geometry(lon: np.ndarray, lat: np.ndarray) -> dict:
    pieces = _split_antimeridian(np.asarray(lon, dtype=np.float64), np.asarray(lat, dtype=np.float64))
    if len(pieces) == 1:
        return {"type": "LineString", "coordinates": pieces[0]}
    return {"type": "MultiLineString", "coordinates": pieces}


def route_geojson(result: RouteResult) -> dict:
    """The route as a GeoJSON FeatureCollection (WGS84 lon/lat degrees).

    One Feature per leg, a LineString through its samples, or a MultiLineString when the
    leg crosses the antimeridian (cut there, RFC 7946 section 3.1.9), with the leg's row of
    the legs table as properties; one Feature per weak-field stretch
    (:func:`weak_field_stretches`, ``properties.kind`` ``caution``/``blackout`` and its label);
    and one Point per waypoint.
    """
    legs, samples = result.legs, result.samples
    features = []
    for leg_no, part in samples.groupby("leg", sort=True):
        geometry = _line_geometry(part.lon_deg.to_numpy(), part.lat_deg.to_numpy())
        props = {"kind": "leg", "leg": int(leg_no), **{k: _json_value(v) for k, v in legs.iloc[int(leg_no) - 1].items()}}
        features.append({"type": "Feature", "properties": props, "geometry": geometry})
    for stretch in weak_field_stretches(result):
        props = {"kind": stretch["zone"], "label": WEAK_FIELD_KINDS[stretch["zone"]],
                 **{k: _json_value(v) for k, v in stretch.items() if k not in ("lat_deg", "lon_deg", "zone")}}
        features.append({"type": "Feature", "properties": props, "geometry": _line_geometry(stretch["lon_deg"], stretch["lat_deg"])})
    names = list(legs["from"]) + [legs["to"].iloc[-1]]
    lons = list(legs.from_lon_deg) + [legs.to_lon_deg.iloc[-1]]
    lats = list(legs.from_lat_deg) + [legs.to_lat_deg.iloc[-1]]
    for i, (name, lo, la) in enumerate(zip(names, lons, lats, strict=True)):
        features.append(
            {
                "type": "Feature",
                "properties": {"kind": "waypoint", "waypoint": i + 1, "name": str(name)},
                "geometry": {"type": "Point", "coordinates": [float(lo), float(la)]},
            }
        )
    return {"type": "FeatureCollection", "properties": dict(legs.attrs), "features": features}


# --------------------------------------------------------------------------- KML

# KML colours are aabbggrr (OGC 07-147r2, 16.9 kml:color); the same colours as headingref.plots.route
_KML_STYLES = {
    "leg": ("ff794e1f", 3.0),
    "caution": ("ff34b1f2", 7.0),
    "blackout": ("ff5b49d1", 9.0),
}


def route_kml(result: RouteResult, name: str | None = None) -> str:
    """The route as a KML 2.2 document (text).

    One placemark per leg (a LineString through its samples, with distance, courses at the start
    and the least H in its description), one per weak-field stretch
    (:func:`weak_field_stretches`: ``caution`` and ``blackout`` in their own
    folders and styles), and one Point per waypoint. Lines are tessellated (drawn on the ground);
    samples every ``spacing_nm`` keep them on the route across the antimeridian and near the poles.
    """
    legs, samples = result.legs, result.samples
    title = name or f"route {legs['from'].iloc[0]} to {legs['to'].iloc[-1]}"
    root, doc = kml.new_document(
        title, f"grid {legs.attrs.get('grid', '')}, {legs.attrs.get('path', '')}, decimal year "
               f"{legs.attrs.get('decimal_year', float('nan')):.3f}. Planning aid only: official publications "
               "and the aircraft's approved data govern.")
    for style_id, line_style in _KML_STYLES.items():
        kml.add_style(doc, style_id, line=line_style)

    def line_placemark(folder, label: str, style: str, lat, lon, description: str) -> None:
        mark = kml.sub(folder, "Placemark")
        kml.sub(mark, "name", label)
        kml.sub(mark, "description", description)
        kml.sub(mark, "styleUrl", f"#{style}")
        line = kml.sub(mark, "LineString")
        kml.sub(line, "tessellate", "1")
        kml.sub(line, "coordinates", kml.coordinates_text(lon, lat, decimals=7))

    folder = kml.sub(doc, "Folder")
    kml.sub(folder, "name", "legs")
    for leg_no, part in samples.groupby("leg", sort=True):
        row = legs.iloc[int(leg_no) - 1]
        text = (f"{row.distance_nm:.1f} NM; true {row.true_course_deg:05.1f}, magnetic {row.magnetic_course_deg:05.1f}, "
                f"grid {row.grid_course_deg:05.1f} at the start; least H {row.min_horizontal_nT:.0f} nT; zone {row.zone}")
        line_placemark(folder, f"{row['from']} - {row['to']}", "leg", part.lat_deg, part.lon_deg, text)
    stretches = weak_field_stretches(result)
    for zone in ("caution", "blackout"):
        chosen = [s for s in stretches if s["zone"] == zone]
        if not chosen:
            continue
        folder = kml.sub(doc, "Folder")
        kml.sub(folder, "name", WEAK_FIELD_KINDS[zone])
        for s in chosen:
            text = (f"leg {s['leg']} ({s['from']} - {s['to']}): {s['from_nm']:.1f}-{s['to_nm']:.1f} NM from its start; "
                    f"least H {s['min_horizontal_nT']:.0f} nT. Use true or grid heading here.")
            line_placemark(folder, f"{zone} {s['from']} - {s['to']}", zone, s["lat_deg"], s["lon_deg"], text)
    folder = kml.sub(doc, "Folder")
    kml.sub(folder, "name", "waypoints")
    names = list(legs["from"]) + [legs["to"].iloc[-1]]
    lats = list(legs.from_lat_deg) + [legs.to_lat_deg.iloc[-1]]
    lons = list(legs.from_lon_deg) + [legs.to_lon_deg.iloc[-1]]
    for wp_name, la, lo in zip(names, lats, lons, strict=True):
        mark = kml.sub(folder, "Placemark")
        kml.sub(mark, "name", str(wp_name))
        kml.sub(kml.sub(mark, "Point"), "coordinates", kml.coordinates_text([lo], [la], decimals=7))
    return kml.to_text(root)
