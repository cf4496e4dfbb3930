"""Weak-horizontal-field zones, their GeoJSON and KML boundaries and their areas.

Zones
-----
:func:`zones` evaluates the field on a latitude-longitude grid (a polar cap or a region, through
the fast grid synthesis :func:`headingref.elements.field_grid`) and adds ``zone_code`` for any
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

Zone labels are one categorical type in every table (:func:`zone_dtype`): the WMM zones use
:data:`headingref.elements.ZONE_DTYPE` (``normal < caution < blackout``), the same type as
:func:`headingref.elements.field`'s ``zone`` column; user thresholds give ``normal`` and their labels,
ordered the same way (least to most severe). Grids keep CF flag codes (``zone_code``, int8).

Grids and polygons come from :mod:`headingref.geogrid` (shared with the error-budget maps); the
poles live in :mod:`headingref.poles`.

Public API
----------
:func:`zones`, :func:`zone_geojson`, :func:`zone_kml`, :func:`zone_areas`, :func:`zone_change`,
:func:`write_geojson`, :func:`zone_dtype`.

KML (:func:`zone_kml`, OGC 07-147r2) is drawn by globe viewers that join vertices by great
circles and take a polygon's inside to be its smaller side, so a lon/lat polygon closed round a
pole or cut at the antimeridian is not read as meant. The KML zones are therefore traced again
in longitude sectors of at most 90 degrees (each piece is far smaller than a hemisphere, with
the pole as one vertex where a zone covers it), repeated points are dropped and edges are
densified to 0.5 degree, so a great-circle edge follows the lon/lat line within about 30 m
(the bulge of a great circle over a parallel, about ``R * dlon^2 / 8 * sin(lat) * cos(lat)``).

The package exports ``zones`` at top level (``headingref.zones`` is that function); this module is
``headingref.weak_field``, so the function does not hide it.

>>> import headingref
>>> from headingref.weak_field import zone_areas
>>> ds = headingref.zones("north", "2026-12-02", resolution_deg=1.0)
>>> sorted(zone_areas(ds).zone)
['blackout', 'caution']
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from .elements import ZONE_DTYPE, ZONE_NAMES
from .errors import InputError
from .geogrid import area_grid, date_label, polygons_area_km2, threshold_polygons
from .io import write_text
from .units import decimal_year

DEFAULT_THRESHOLDS_NT = (2000.0, 6000.0)  # WMM2020/WMM2025 technical reports: blackout, caution
DEFAULT_LABELS = ("blackout", "caution")
SEVERITY_COLOURS = ("#8c1c13", "#e4572e", "#f3a712", "#a8c686", "#669bbc")
"""Zone colours, most severe band first (maps and KML)."""
KML_SECTOR_DEG = 90.0
KML_STEP_DEG = 0.5


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
    if ZONE_NAMES[0] in labels or len(set(labels)) != len(labels):
        raise InputError(f"labels {labels!r}: give distinct names other than {ZONE_NAMES[0]!r} (the band above every threshold)")
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
                    "date": date_label(year),
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
            rows.append({"date": date_label(year), "decimal_year": year, "zone": name,
                         "lower_nT": max(lo, 0.0), "upper_nT": hi, "area_km2": area})
    table = pd.DataFrame(rows, columns=["date", "decimal_year", "zone", "lower_nT", "upper_nT", "area_km2"])
    table["zone"] = table["zone"].astype(zone_dtype(ds.attrs.get("zone_labels", DEFAULT_LABELS)))
    return table


def zone_dtype(labels: Sequence[str] = DEFAULT_LABELS) -> pd.CategoricalDtype:
    """The categorical type of the ``zone`` column for bands named ``labels`` (most severe first).

    The WMM labels give :data:`headingref.elements.ZONE_DTYPE` itself (``normal < caution <
    blackout``); other labels give ``normal`` and the labels in the same order of severity.
    """
    labels = tuple(str(v) for v in labels)
    if labels == DEFAULT_LABELS:
        return ZONE_DTYPE
    return pd.CategoricalDtype([ZONE_NAMES[0], *reversed(labels)], ordered=True)


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
    dtype = areas["zone"].dtype
    d1, d2 = date_label(y1), date_label(y2)
    table = areas.astype({"zone": str}).pivot(index="zone", columns="date", values="area_km2")
    table = table.reindex([name for name, _, _ in _bands(ds)])
    table = table.rename(columns={d1: f"area_km2_{d1}", d2: f"area_km2_{d2}"}).reset_index()
    first, second = table[f"area_km2_{d1}"], table[f"area_km2_{d2}"]
    table["change_km2"] = second - first
    with np.errstate(divide="ignore", invalid="ignore"):
        table["change_percent"] = np.where(first > 0, 100.0 * (second - first) / first, np.nan)
    table.columns.name = None
    table["zone"] = table["zone"].astype(dtype)
    return ds, table, zone_geojson(ds)


def write_geojson(path: str | os.PathLike, collection: dict) -> None:
    """Write a FeatureCollection atomically (UTF-8 JSON)."""
    write_text(path, json.dumps(collection, separators=(",", ":")))


def _clean_ring(ring: np.ndarray, step_deg: float = KML_STEP_DEG) -> np.ndarray:
    """Drop repeated points (a pole row collapses to one vertex) and densify to ``step_deg`` in lon/lat."""
    ring = np.asarray(ring, dtype=np.float64)
    polar = np.abs(ring[:, 1]) >= 90.0
    # a run of pole points (every longitude names the same pole) becomes its first point
    same = np.all(np.diff(ring, axis=0) == 0.0, axis=1) | (polar[1:] & polar[:-1])
    ring = ring[np.concatenate(([True], ~same))]
    if len(ring) > 1 and abs(ring[0, 1]) >= 90.0 and abs(ring[-1, 1]) >= 90.0:
        ring = ring[:-1]  # the ring ran round through the pole at its start
    if not np.array_equal(ring[0], ring[-1]):
        ring = np.vstack([ring, ring[:1]])
    out = [ring[:1]]
    for a, b in zip(ring[:-1], ring[1:], strict=True):
        if abs(a[1]) >= 90.0 or abs(b[1]) >= 90.0:  # along a meridian to the pole: already a great circle
            out.append(b[None, :])
            continue
        n = max(1, math.ceil(float(np.max(np.abs(b - a))) / step_deg))
        t = np.arange(1, n + 1)[:, None] / n
        out.append(a + t * (b - a))
    return np.vstack(out)


def _sector_pieces(one, sector_deg: float) -> list:
    """The single-date grid cut into longitude sectors of at most ``sector_deg`` (sharing edge columns)."""
    lons = np.asarray(one["lon"].values, dtype=np.float64)
    span = float(lons[-1] - lons[0])
    count = max(1, math.ceil(span / sector_deg - 1e-9))
    cuts = np.unique(np.round(np.linspace(0, lons.size - 1, count + 1)).astype(int))
    return [one.isel(lon=slice(a, b + 1)) for a, b in zip(cuts[:-1], cuts[1:], strict=True) if b > a]


def zone_kml(ds, name: str | None = None, sector_deg: float = KML_SECTOR_DEG) -> str:
    """The zones of a :func:`zones` Dataset as a KML 2.2 document (OGC 07-147r2), as text.

    One Folder per date, one Placemark per zone (a ``MultiGeometry`` of Polygons), styled per
    zone (the map colours, half-transparent), with the thresholds and the geodesic area
    (:func:`zone_areas`) in its description. Pieces are traced per longitude sector of at most
    ``sector_deg`` degrees, repeated points dropped, edges densified (see the module notes), so
    a zone round a pole or across the antimeridian draws as meant on a globe.
    """
    from .kml import add_style, coordinates_text, kml_colour, new_document, sub, to_text

    if not 0.0 < float(sector_deg) <= 90.0:
        raise InputError(f"sector_deg {sector_deg!r} must be above 0 and at most 90 degrees")
    thresholds = ", ".join(f"{t:g}" for t in ds.attrs.get("thresholds_nT", DEFAULT_THRESHOLDS_NT))
    title = name or f"weak horizontal field zones ({ds.attrs.get('model', 'IGRF-14')}, {ds.attrs.get('alt_km', 0.0):g} km)"
    root, doc = new_document(title, f"H thresholds {thresholds} nT; areas geodesic on WGS84. Planning aid only: "
                                    "official publications and charts govern.")
    bands = _bands(ds)
    for i in range(len(bands)):
        colour = SEVERITY_COLOURS[min(i, len(SEVERITY_COLOURS) - 1)]
        add_style(doc, f"zone{i}", line=(kml_colour(colour), 1.5), poly=kml_colour(colour, 0.45))
    for one in _by_date(ds):
        year = float(one["time"].values)
        folder = sub(doc, "Folder")
        sub(folder, "name", date_label(year))
        pieces = _sector_pieces(one, float(sector_deg))
        for i, (label, lo, hi) in enumerate(bands):
            polygons = [rings for piece in pieces for rings in threshold_polygons(piece, "horizontal_nT", lo, hi)]
            if not polygons:
                continue
            mark = sub(folder, "Placemark")
            sub(mark, "name", f"{label} {date_label(year)}")
            upper = f"below {hi:g} nT" if lo <= 0 else f"{max(lo, 0.0):g} to {hi:g} nT"
            sub(mark, "description", f"H {upper}; area {polygons_area_km2(polygons):,.0f} km2")
            sub(mark, "styleUrl", f"#zone{i}")
            multi = sub(mark, "MultiGeometry")
            for rings in polygons:
                polygon = sub(multi, "Polygon")
                sub(polygon, "tessellate", "1")
                for k, ring in enumerate(rings):
                    ring = _clean_ring(ring)
                    if len(ring) < 4:
                        continue
                    boundary = sub(polygon, "outerBoundaryIs" if k == 0 else "innerBoundaryIs")
                    sub(sub(boundary, "LinearRing"), "coordinates", coordinates_text(ring[:, 0], ring[:, 1]))
    return to_text(root)
