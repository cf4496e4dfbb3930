"""Routes leg by leg: distance and course in every heading reference, and the field along the way.

A route is an ordered list of waypoints (name, lat, lon, optional altitude). Each leg
is followed along the WGS84 geodesic (default; ``pyproj.Geod``, Karney's algorithms)
or along the rhumb line (Mercator sailing on the ellipsoid, see :func:`rhumb_inverse`).
Every leg is densified at ``spacing_nm``; the field is evaluated once for all
samples (:func:`headingref.field.field_arrays`). Sign conventions are those of
:mod:`headingref.headings`: variation and grivation east positive,
``magnetic = true - variation``, ``grid = true - convergence``,
``magnetic = grid - grivation``.

Public API
----------
:func:`route` -> :class:`RouteResult` ``(legs, samples)``; :func:`read_waypoints`;
:func:`route_geojson` (legs as GeoJSON lines cut at the antimeridian, RFC 7946 3.1.9);
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
  :data:`headingref.field.CAUTION_NT` / :data:`headingref.field.BLACKOUT_NT`; their ends
  are found by linear interpolation of H between samples. They are listed as
  ``"from-to"`` distances along the leg in NM, ``"; "`` between stretches.
"""

from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np
import pandas as pd
import pyproj

from .errors import InputError
from .headings import grivation_deg, normalize_heading, parse_grid, wrap_angle
from .io import coordinate_column, read_table
from .units import NAUTICAL_MILE_M, decimal_year, parse_coordinate, parse_height_km

__all__ = ["RouteResult", "meridian_distance_m", "read_waypoints", "rhumb_inverse", "route", "route_geojson"]

GEOD = pyproj.Geod(ellps="WGS84")
_A = GEOD.a  # WGS84 semi-major axis, m
_F = GEOD.f  # WGS84 flattening
_E2 = _F * (2.0 - _F)
_E = math.sqrt(_E2)
_N = _F / (2.0 - _F)  # third flattening
ZONE_NAMES = np.array(["normal", "caution", "blackout"])
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


def read_waypoints(waypoints: Any, alt_km: float = 0.0) -> pd.DataFrame:
    """Waypoints as a DataFrame ``name, lat_deg, lon_deg, alt_km, where``.

    ``waypoints`` is a CSV path (columns ``name, lat, lon`` and optional ``alt``), a
    DataFrame, or a list of dicts/tuples ``(name, lat, lon[, alt])``. Coordinates take
    any form :func:`headingref.units.parse_coordinate` accepts; an altitude any form
    :func:`headingref.units.parse_height_km` accepts (plain numbers are km); a missing
    altitude takes ``alt_km``. ``where`` names the row for error messages.
    """
    if isinstance(waypoints, (str, os.PathLike)):
        table = read_table(Path(waypoints), required=["name", "lat", "lon"], optional=["alt"], what="route")
        source = table.attrs["source"]
        lat = coordinate_column(table, "lat", "lat")
        lon = coordinate_column(table, "lon", "lon")
        where = [f"{source} line {line}" for line in table.index]
        names = [n or f"WP{i + 1}" for i, n in enumerate(table["name"])]
        alt_cells = table["alt"].tolist() if "alt" in table else [""] * len(table)
    else:
        if isinstance(waypoints, pd.DataFrame):
            records = waypoints.to_dict("records")
        else:
            try:
                records = list(waypoints)
            except TypeError:
                raise InputError(
                    f"waypoints of type {type(waypoints).__name__} are not understood; give a CSV path, "
                    "a DataFrame or a list of dicts with name, lat, lon and optional alt"
                ) from None
        names, lat_list, lon_list, alt_cells, where = [], [], [], [], []
        for i, rec in enumerate(records):
            label = f"waypoint {i + 1}"
            if isinstance(rec, dict):
                rec = {str(k).strip().lower(): v for k, v in rec.items()}
                if "lat" not in rec or "lon" not in rec:
                    raise InputError(f"{label}: needs lat and lon (found {', '.join(rec) or 'nothing'})")
                name, la, lo, al = rec.get("name"), rec["lat"], rec["lon"], rec.get("alt")
            elif isinstance(rec, (tuple, list)) and len(rec) in (3, 4):
                name, la, lo, al = (*rec, None) if len(rec) == 3 else rec
            else:
                raise InputError(f"{label}: {rec!r} is not understood; give a dict with name, lat, lon[, alt]")
            name = f"WP{i + 1}" if name is None or (isinstance(name, float) and math.isnan(name)) else str(name)
            label = f"waypoint {i + 1} ({name})"
            try:
                lat_list.append(parse_coordinate(la, "lat"))
                lon_list.append(parse_coordinate(lo, "lon"))
            except InputError as exc:
                raise InputError(f"{label}: {exc}") from None
            names.append(name)
            alt_cells.append("" if al is None or (isinstance(al, float) and math.isnan(al)) else al)
            where.append(label)
        lat, lon = np.array(lat_list, dtype=np.float64), np.array(lon_list, dtype=np.float64)
    alts = np.empty(len(names), dtype=np.float64)
    for i, cell in enumerate(alt_cells):
        try:
            alts[i] = alt_km if (isinstance(cell, str) and cell.strip() == "") else parse_height_km(cell)
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


def _stretches(dist_nm: np.ndarray, h_nT: np.ndarray, threshold: float) -> str:
    """Stretches of one leg where H < threshold, as 'from-to' NM; ends by linear interpolation."""
    below = h_nT < threshold
    if not below.any():
        return ""
    starts = [dist_nm[0]] if below[0] else []
    ends = []
    for i in np.flatnonzero(np.diff(below.astype(np.int8))):
        h0, h1 = h_nT[i], h_nT[i + 1]  # H crosses the threshold between samples i and i+1
        x = dist_nm[i] + (threshold - h0) / (h1 - h0) * (dist_nm[i + 1] - dist_nm[i])
        (ends if below[i] else starts).append(x)
    if below[-1]:
        ends.append(dist_nm[-1])
    parts = [f"{a:.1f}-{b:.1f}" for a, b in zip(starts, ends, strict=True)]
    return "; ".join(parts)


def route(
    waypoints: Any,
    date: Any,
    alt_km: float = 0.0,
    grid: Any = None,
    spacing_nm: float = 10.0,
    path: str = "geodesic",
    model: Any = None,
    allow_extrapolation: bool = False,
) -> RouteResult:
    """Legs and samples of a route in true, magnetic and grid references, with the field along it.

    Parameters
    ----------
    waypoints : str, path, DataFrame or list of dicts
        See :func:`read_waypoints`. At least two; consecutive waypoints must differ.
    date : date-like or decimal year
        One date for the whole route.
    alt_km : float
        Altitude above the WGS84 ellipsoid (km) of waypoints that give none. Along a
        leg the altitude changes linearly with distance.
    grid : str, pyproj.CRS, Grid or None
        Grid for grid courses and grivation (see :func:`headingref.headings.parse_grid`).
        None takes the polar stereographic grid on Greenwich of the hemisphere holding
        most of the route (``polar`` or ``polar-south``).
    spacing_nm : float
        Greatest distance between samples along a leg, NM (> 0).
    path : ``"geodesic"`` or ``"rhumb"``
    model : Model, optional
        Field model (default IGRF-14).

    Returns
    -------
    RouteResult
        ``legs``: ``from, to``, their ``from_lat_deg, from_lon_deg, to_lat_deg,
        to_lon_deg``, ``distance_nm, distance_km``, true/magnetic course at
        start, ``_mid`` and ``_end`` (``true_course_deg`` ...), ``grid_course_deg`` and
        ``grid_course_deg_end``, ``variation_deg`` and ``grivation_deg`` (+ ``_mid``,
        ``_end``), ``min_horizontal_nT``, ``max_declination_uncertainty_deg``, ``zone``
        (worst on the leg), ``caution_stretches_nm`` (H below the caution threshold,
        blackout included), ``blackout_stretches_nm``.
        ``samples``: ``leg, from, to, distance_along_leg_nm, distance_along_route_nm,
        lat_deg, lon_deg, alt_km, true_course_deg, variation_deg, magnetic_course_deg,
        convergence_deg, grid_course_deg, grivation_deg, horizontal_nT,
        declination_uncertainty_deg, zone``.
    """
    from .field import BLACKOUT_NT, CAUTION_NT, field_arrays

    if path not in ("geodesic", "rhumb"):
        raise InputError(f"path {path!r} is not understood; give 'geodesic' or 'rhumb'")
    try:
        spacing = float(spacing_nm)
    except (TypeError, ValueError):
        raise InputError(f"spacing {spacing_nm!r} is not a number; give NM > 0") from None
    if not math.isfinite(spacing) or spacing <= 0.0:
        raise InputError(f"spacing {spacing_nm!r} NM is not usable; give a positive number of NM")
    wps = read_waypoints(waypoints, alt_km=parse_height_km(alt_km))
    year = decimal_year(date)
    if grid is None:
        grid = "polar" if np.mean(wps.lat_deg.to_numpy()) >= 0 else "polar-south"
    grid_obj = parse_grid(grid)

    lat = wps.lat_deg.to_numpy()
    lon = wps.lon_deg.to_numpy()
    alt = wps.alt_km.to_numpy()
    lat1, lat2, lon1, lon2 = lat[:-1], lat[1:], lon[:-1], lon[1:]
    n_legs = len(lat1)
    if path == "geodesic":
        az12, _, dist_m = GEOD.inv(lon1, lat1, lon2, lat2)
        az12, dist_m = np.asarray(az12, dtype=np.float64), np.asarray(dist_m, dtype=np.float64)
    else:
        rhumb_course, dist_m, dlon, psi1, dpsi, m1, m2, small, lon_base = _rhumb_parts(lat1, lon1, lat2, lon2)
    short = np.flatnonzero(~(dist_m >= MIN_LEG_M))
    if short.size:
        i = int(short[0])
        raise InputError(
            f"{wps['where'].iloc[i + 1]} repeats {wps['where'].iloc[i]} ({wps.name.iloc[i]} to {wps.name.iloc[i + 1]} "
            f"is {dist_m[i]:.3g} m long); consecutive waypoints must differ"
        )

    dist_nm = dist_m / NAUTICAL_MILE_M
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
    fraction = k / n_seg[leg_of]
    # one extra point per leg at its middle
    leg_all = np.concatenate([leg_of, np.arange(n_legs)])
    frac_all = np.concatenate([fraction, np.full(n_legs, 0.5)])
    s_all = frac_all * dist_m[leg_all]
    n_samples = leg_of.size

    def positions(s: np.ndarray, legs: np.ndarray):
        if path == "geodesic":
            lo, la, back = GEOD.fwd(lon1[legs], lat1[legs], az12[legs], s)
            return np.asarray(la), np.asarray(lo), normalize_heading(np.asarray(back) + 180.0)
        f = s / dist_m[legs]
        la, lo = _rhumb_points(lat1[legs], lon_base[legs], psi1[legs], dpsi[legs], dlon[legs], m1[legs], m2[legs], small[legs], f)
        return la, lo, rhumb_course[legs]

    s_lat, s_lon, s_course = positions(s_all, leg_all)
    # exact waypoint coordinates at leg ends
    first = frac_all == 0.0
    last = (frac_all == 1.0) & (np.arange(frac_all.size) < n_samples)
    s_lat = np.where(first, lat1[leg_all], np.where(last, lat2[leg_all], s_lat))
    s_lon = np.where(first, lon1[leg_all], np.where(last, lon2[leg_all], s_lon))
    polar = np.abs(s_lat) > 90.0 - 1e-6
    if polar.any():
        idx = np.flatnonzero(polar)
        step = np.where(frac_all[idx] < 0.5, POLE_NUDGE_M, -POLE_NUDGE_M)
        la, lo, co = positions(s_all[idx] + step, leg_all[idx])
        s_lat[idx], s_lon[idx], s_course[idx] = la, lo, co
    s_alt = alt[:-1][leg_all] + frac_all * (alt[1:][leg_all] - alt[:-1][leg_all])

    fld = field_arrays(s_lat, s_lon, year, s_alt, model=model, allow_extrapolation=allow_extrapolation)
    variation = np.asarray(fld["declination_deg"], dtype=np.float64)
    h_nT = np.asarray(fld["horizontal_nT"], dtype=np.float64)
    unc = np.asarray(fld["declination_uncertainty_deg"], dtype=np.float64)

    def check_finite(values: np.ndarray, problem: str, advice: str) -> None:
        bad = np.flatnonzero(~np.isfinite(values))
        if bad.size:
            i, leg = int(bad[0]), int(leg_all[bad[0]])
            raise InputError(
                f"{problem} at lat {s_lat[i]:.5f}, lon {s_lon[i]:.5f} on leg {leg + 1} "
                f"({wps.name.iloc[leg]} to {wps.name.iloc[leg + 1]}); {advice}"
            )

    check_finite(variation, "variation is undefined", "the route passes through a dip pole")
    convergence = grid_obj.convergence_deg(s_lat, s_lon)
    check_finite(convergence, f"grid {grid_obj.name} does not cover the route", "choose another grid")
    magnetic = normalize_heading(s_course - variation)
    grid_course = normalize_heading(s_course - convergence)
    grivation = grivation_deg(variation, convergence)
    zone_code = np.where(h_nT < BLACKOUT_NT, 2, np.where(h_nT < CAUTION_NT, 1, 0))

    names = wps.name.to_numpy(dtype=object)
    along_leg_nm = frac_all[:n_samples] * dist_nm[leg_of]
    route_start_nm = np.concatenate([[0.0], np.cumsum(dist_nm)[:-1]])
    samples = pd.DataFrame(
        {
            "leg": leg_of + 1,
            "from": names[leg_of],
            "to": names[leg_of + 1],
            "distance_along_leg_nm": along_leg_nm,
            "distance_along_route_nm": route_start_nm[leg_of] + along_leg_nm,
            "lat_deg": s_lat[:n_samples],
            "lon_deg": s_lon[:n_samples],
            "alt_km": s_alt[:n_samples],
            "true_course_deg": s_course[:n_samples],
            "variation_deg": variation[:n_samples],
            "magnetic_course_deg": magnetic[:n_samples],
            "convergence_deg": convergence[:n_samples],
            "grid_course_deg": grid_course[:n_samples],
            "grivation_deg": grivation[:n_samples],
            "horizontal_nT": h_nT[:n_samples],
            "declination_uncertainty_deg": unc[:n_samples],
            "zone": ZONE_NAMES[zone_code[:n_samples]],
        }
    )

    start_idx = np.cumsum(counts) - counts
    end_idx = np.cumsum(counts) - 1
    mid_idx = n_samples + np.arange(n_legs)
    h_min = np.minimum.reduceat(h_nT[:n_samples], start_idx)
    unc_max = np.maximum.reduceat(unc[:n_samples], start_idx)
    zone_max = np.maximum.reduceat(zone_code[:n_samples], start_idx)
    caution, blackout = [], []
    for leg in range(n_legs):
        sl = slice(start_idx[leg], end_idx[leg] + 1)
        if zone_max[leg] == 0:
            caution.append("")
            blackout.append("")
            continue
        caution.append(_stretches(along_leg_nm[sl], h_nT[sl], CAUTION_NT))
        blackout.append(_stretches(along_leg_nm[sl], h_nT[sl], BLACKOUT_NT))

    legs = pd.DataFrame(
        {
            "from": names[:-1],
            "to": names[1:],
            "from_lat_deg": lat1,
            "from_lon_deg": lon1,
            "to_lat_deg": lat2,
            "to_lon_deg": lon2,
            "distance_nm": dist_nm,
            "distance_km": dist_m / 1000.0,
            "true_course_deg": s_course[start_idx],
            "true_course_deg_mid": s_course[mid_idx],
            "true_course_deg_end": s_course[end_idx],
            "magnetic_course_deg": magnetic[start_idx],
            "magnetic_course_deg_mid": magnetic[mid_idx],
            "magnetic_course_deg_end": magnetic[end_idx],
            "grid_course_deg": grid_course[start_idx],
            "grid_course_deg_end": grid_course[end_idx],
            "variation_deg": variation[start_idx],
            "variation_deg_mid": variation[mid_idx],
            "variation_deg_end": variation[end_idx],
            "grivation_deg": grivation[start_idx],
            "grivation_deg_mid": grivation[mid_idx],
            "grivation_deg_end": grivation[end_idx],
            "min_horizontal_nT": h_min,
            "max_declination_uncertainty_deg": unc_max,
            "zone": ZONE_NAMES[zone_max],
            "caution_stretches_nm": caution,
            "blackout_stretches_nm": blackout,
        }
    )
    legs.attrs.update(grid=grid_obj.name, path=path, decimal_year=float(year), spacing_nm=spacing)
    samples.attrs.update(legs.attrs)
    return RouteResult(legs, samples)


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


def route_geojson(result: RouteResult) -> dict:
    """The route as a GeoJSON FeatureCollection (WGS84 lon/lat degrees).

    One Feature per leg, a LineString through its samples, or a MultiLineString when the
    leg crosses the antimeridian (cut there, RFC 7946 section 3.1.9), with the leg's row of
    the legs table as properties; and one Point per waypoint.
    """
    legs, samples = result.legs, result.samples
    features = []
    for leg_no, part in samples.groupby("leg", sort=True):
        pieces = _split_antimeridian(part.lon_deg.to_numpy(), part.lat_deg.to_numpy())
        geometry = (
            {"type": "LineString", "coordinates": pieces[0]}
            if len(pieces) == 1
            else {"type": "MultiLineString", "coordinates": pieces}
        )
        props = {"leg": int(leg_no), **{k: _json_value(v) for k, v in legs.iloc[int(leg_no) - 1].items()}}
        features.append({"type": "Feature", "properties": props, "geometry": geometry})
    names = list(legs["from"]) + [legs["to"].iloc[-1]]
    lons = list(legs.from_lon_deg) + [legs.to_lon_deg.iloc[-1]]
    lats = list(legs.from_lat_deg) + [legs.to_lat_deg.iloc[-1]]
    for i, (name, lo, la) in enumerate(zip(names, lons, lats, strict=True)):
        features.append(
            {
                "type": "Feature",
                "properties": {"waypoint": i + 1, "name": str(name)},
                "geometry": {"type": "Point", "coordinates": [float(lo), float(la)]},
            }
        )
    return {"type": "FeatureCollection", "properties": dict(legs.attrs), "features": features}
