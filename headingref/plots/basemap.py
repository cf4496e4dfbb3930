"""Map axes with the shipped coastline, a labelled graticule and lon/lat drawing helpers.

No cartopy: the map is an ordinary matplotlib axes in projected metres, and a
:class:`pyproj.Transformer` turns longitude/latitude (WGS84, degrees, east positive) into map
x/y. Projections:

- ``kind='north'`` / ``'south'``: polar stereographic on WGS84 centred on the pole
  (``+proj=stere +lat_0=±90``), the usual chart for high-latitude navigation; conformal, so
  angles (courses) are shown true. ``central_lon`` is the meridian pointing down the page
  (north cap) or up the page (south cap); default Greenwich. ``extent`` is the latitude of
  the cap's edge (default 55° N / 55° S).
- ``kind='region'``: an oblique stereographic projection centred on the region (conformal,
  fine anywhere on the globe). ``extent=(lat_min, lat_max, lon_min, lon_max)``; a region
  across the antimeridian is given with ``lon_max < lon_min`` (e.g. ``(60, 75, 150, -150)``).

Lines are projected point by point and split where the projected step is large (a line that
passes behind the projection's far side, or a non-finite point at the opposite pole), so
polylines crossing the antimeridian or running close to a pole draw correctly.

Public API: :func:`load_coastlines`, :func:`map_crs`, :func:`map_axes`, :func:`draw_coastlines`,
:func:`draw_graticule`, :func:`plot_lonlat`, :func:`scatter_lonlat`, :func:`fill_lonlat`,
:func:`draw_geojson`, :func:`split_projected`, :func:`format_lat`, :func:`format_lon`,
:func:`frame_limits`, :func:`declutter_labels`, :func:`draw_dip_poles`, :data:`COASTLINE_FILE`.

A map can be framed on points (``map_axes(..., frame=(lon, lat))``, e.g. a route) rather than
the whole cap; graticule labels that would overprint one another are hidden
(:func:`declutter_labels`, thinned on their rendered boxes, so never two on top of each other).

Example
-------
>>> import matplotlib
>>> matplotlib.use("Agg")
>>> from headingref.plots.basemap import map_axes, plot_lonlat
>>> ax, to_map = map_axes("north", extent=60)
>>> lines = plot_lonlat(ax, to_map, [20.0, 170.0, -150.0], [69.0, 75.0, 65.0], color="C3")
>>> x, y = to_map.transform(0.0, 90.0)  # the pole is the map origin
>>> round(abs(x), 6), round(abs(y), 6)
(0.0, 0.0)
"""

from __future__ import annotations

import functools
import json
from collections.abc import Callable, Iterable, Sequence
from pathlib import Path
from typing import Any

import numpy as np
from pyproj import CRS, Transformer

from ..errors import HeadingrefError, InputError
from ..notices import DATA_DIR

COASTLINE_FILE: Path = DATA_DIR / "ne_110m_coastline.geojson"
"""Natural Earth 1:110m coastline 4.1.0 as GeoJSON (public domain; see data/README.md)."""

MAP_KINDS = ("north", "south", "region")
DEFAULT_CAP_EDGE_LAT_DEG = 55.0
_DENSIFY_STEP_DEG = 1.0
_COAST_STYLE = {"color": "0.35", "linewidth": 0.6, "zorder": 2}
_GRID_STYLE = {"color": "0.6", "linewidth": 0.4, "linestyle": ":", "zorder": 1}
_LABEL_STYLE = {"fontsize": 7, "color": "0.3"}
LABEL_GID = "graticule-label"
"""The ``gid`` of every graticule label (see :func:`declutter_labels`)."""
FRAME_MARGIN = 0.12
"""Margin round a framed map's points, as a fraction of their projected extent."""
DIP_POLE_STYLE = {"marker": "*", "s": 140, "color": "#3a0ca3", "edgecolor": "white", "linewidths": 0.6, "zorder": 6}


# --------------------------------------------------------------------------- coastline data
@functools.lru_cache(maxsize=1)
def _read_coastlines(path: str) -> tuple[np.ndarray, ...]:
    try:
        collection = json.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise HeadingrefError(f"coastline file {path!r} is missing; reinstall headingref from its repository") from None
    lines = []
    for feature in collection["features"]:
        coords = np.asarray(feature["geometry"]["coordinates"], dtype=np.float64)
        coords.setflags(write=False)
        lines.append(coords)
    return tuple(lines)


def load_coastlines() -> list[np.ndarray]:
    """The shipped coastline as a list of read-only ``(n, 2)`` arrays of (lon, lat) in degrees.

    Read once and cached. Source: Natural Earth 1:110m coastline, version 4.1.0 (public
    domain, "Made with Natural Earth"); lines are broken at the antimeridian as in the source.
    """
    return list(_read_coastlines(str(COASTLINE_FILE)))


# --------------------------------------------------------------------------- projections
def _check_kind(kind: str) -> str:
    if kind not in MAP_KINDS:
        raise InputError(f"map kind {kind!r} is not known; use one of {', '.join(MAP_KINDS)}")
    return kind


def _check_lon(value: float, what: str) -> float:
    value = float(value)
    if not np.isfinite(value) or not -180.0 <= value <= 360.0:
        raise InputError(f"{what} {value!r} is outside -180 to 360 degrees")
    return value


def _region_extent(extent: Any) -> tuple[float, float, float, float]:
    """Validate ``(lat_min, lat_max, lon_min, lon_max)``; returns lon_max unwrapped past lon_min."""
    try:
        lat_min, lat_max, lon_min, lon_max = (float(v) for v in extent)
    except (TypeError, ValueError):
        raise InputError(
            f"region extent {extent!r} is not understood; give (lat_min, lat_max, lon_min, lon_max) in degrees"
        ) from None
    for value, what in ((lat_min, "lat_min"), (lat_max, "lat_max")):
        if not np.isfinite(value) or not -90.0 <= value <= 90.0:
            raise InputError(f"region {what} {value!r} is outside -90 to 90 degrees")
    if lat_min >= lat_max:
        raise InputError(f"region lat_min {lat_min:g} must be below lat_max {lat_max:g}")
    lon_min = _check_lon(lon_min, "region lon_min")
    lon_max = _check_lon(lon_max, "region lon_max")
    if lon_max <= lon_min:  # across the antimeridian
        lon_max += 360.0
    if lon_max - lon_min > 360.0:
        raise InputError(f"region spans {lon_max - lon_min:g} degrees of longitude; at most 360")
    return lat_min, lat_max, lon_min, lon_max


def _cap_edge(kind: str, extent: Any) -> float:
    edge = DEFAULT_CAP_EDGE_LAT_DEG if extent is None else extent
    try:
        edge = abs(float(edge))
    except (TypeError, ValueError):
        raise InputError(f"{kind} cap extent {extent!r} must be the latitude of the cap's edge in degrees") from None
    if not np.isfinite(edge) or not 0.0 <= edge < 89.0:
        raise InputError(f"{kind} cap edge latitude {extent!r} must be between 0 and 89 degrees")
    return edge if kind == "north" else -edge


def map_crs(
    kind: str = "north",
    extent: Any = None,
    central_lon: float | None = None,
    true_scale_lat: float | None = None,
) -> CRS:
    """The projected CRS used by :func:`map_axes` (WGS84 datum, metres).

    Parameters
    ----------
    kind : {'north', 'south', 'region'}
    extent : float or (lat_min, lat_max, lon_min, lon_max), optional
        Only used for ``'region'`` (its centre is the projection's centre).
    central_lon : float, optional
        Meridian pointing down the page (north cap) / up the page (south cap); default 0.
        For a region, overrides the centre longitude.
    true_scale_lat : float, optional
        Latitude of true scale for the caps (default: the pole, scale factor 1 there).
    """
    _check_kind(kind)
    if kind == "region":
        if extent is None:
            raise InputError("a region map needs extent=(lat_min, lat_max, lon_min, lon_max)")
        lat_min, lat_max, lon_min, lon_max = _region_extent(extent)
        lat_0 = 0.5 * (lat_min + lat_max)
        lon_0 = 0.5 * (lon_min + lon_max) if central_lon is None else _check_lon(central_lon, "central_lon")
        lon_0 = ((lon_0 + 180.0) % 360.0) - 180.0
        return CRS.from_proj4(f"+proj=stere +lat_0={lat_0:.6f} +lon_0={lon_0:.6f} +k=1 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs")
    pole = 90.0 if kind == "north" else -90.0
    lon_0 = 0.0 if central_lon is None else _check_lon(central_lon, "central_lon")
    lat_ts = pole if true_scale_lat is None else float(true_scale_lat)
    if not np.isfinite(lat_ts) or lat_ts * pole <= 0 or abs(lat_ts) > 90.0:
        raise InputError(f"true_scale_lat {true_scale_lat!r} must lie in the {kind}ern hemisphere, up to 90 degrees")
    return CRS.from_proj4(
        f"+proj=stere +lat_0={pole:g} +lat_ts={lat_ts:.6f} +lon_0={lon_0:.6f} +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs"
    )


def _transformer(crs: CRS) -> Transformer:
    return Transformer.from_crs(CRS.from_epsg(4326), crs, always_xy=True)


def _project(transformer: Transformer, lon: Any, lat: Any) -> tuple[np.ndarray, np.ndarray]:
    lon = np.asarray(lon, dtype=np.float64).ravel()
    lat = np.asarray(lat, dtype=np.float64).ravel()
    if lon.shape != lat.shape:
        raise InputError(f"lon and lat differ in length ({lon.size} and {lat.size})")
    with np.errstate(invalid="ignore", over="ignore"):
        x, y = transformer.transform(lon, lat, errcheck=False)
    x = np.asarray(x, dtype=np.float64)
    y = np.asarray(y, dtype=np.float64)
    bad = ~(np.isfinite(x) & np.isfinite(y)) | (np.abs(x) > 1e15) | (np.abs(y) > 1e15)
    x[bad] = np.nan
    y[bad] = np.nan
    return x, y


# --------------------------------------------------------------------------- line handling
def split_projected(x: Any, y: Any, max_jump: float) -> list[tuple[np.ndarray, np.ndarray]]:
    """Split a projected polyline into pieces at non-finite points and at steps longer than ``max_jump``.

    Returns a list of ``(x, y)`` arrays, each with at least two points.
    """
    x = np.asarray(x, dtype=np.float64)
    y = np.asarray(y, dtype=np.float64)
    if x.size < 2:
        return []
    finite = np.isfinite(x) & np.isfinite(y)
    with np.errstate(invalid="ignore"):
        step = np.hypot(np.diff(x), np.diff(y))
    cut = ~finite[:-1] | ~finite[1:] | ~(step <= max_jump)
    starts = np.concatenate(([0], np.flatnonzero(cut) + 1))
    stops = np.concatenate((np.flatnonzero(cut) + 1, [x.size]))
    pieces = []
    for start, stop in zip(starts, stops, strict=True):
        if stop - start >= 2 and finite[start:stop].all():
            pieces.append((x[start:stop], y[start:stop]))
    return pieces


def _densify(lon: np.ndarray, lat: np.ndarray, shortest: bool, step_deg: float = _DENSIFY_STEP_DEG) -> tuple[np.ndarray, np.ndarray]:
    """Insert points so that no lon/lat step exceeds ``step_deg``.

    ``shortest=True`` takes each step the short way round in longitude (a polyline whose
    longitude jumps from 179.9 to -179.9 crosses the antimeridian); ``False`` takes the
    coordinates literally, as GeoJSON polygons are meant.
    """
    if lon.size < 2:
        return lon, lat
    dlon = np.diff(lon)
    if shortest:
        dlon = (dlon + 180.0) % 360.0 - 180.0
        lon = np.concatenate(([lon[0]], lon[0] + np.cumsum(dlon)))
    counts = np.maximum(1, np.ceil(np.maximum(np.abs(dlon), np.abs(np.diff(lat))) / step_deg).astype(int))
    if (counts == 1).all():
        return lon, lat
    fractions = np.concatenate([np.arange(n) / n for n in counts])
    index = np.repeat(np.arange(lon.size - 1), counts)
    out_lon = np.append(lon[index] + fractions * np.diff(lon)[index], lon[-1])
    out_lat = np.append(lat[index] + fractions * np.diff(lat)[index], lat[-1])
    return out_lon, out_lat


def _view(ax) -> tuple[float, float, float, float]:
    x0, x1 = sorted(ax.get_xlim())
    y0, y1 = sorted(ax.get_ylim())
    return x0, x1, y0, y1


def _default_jump(ax) -> float:
    x0, x1, y0, y1 = _view(ax)
    return 0.5 * max(x1 - x0, y1 - y0)


def _visible(ax, x: np.ndarray, y: np.ndarray, pad: float = 0.1) -> bool:
    x0, x1, y0, y1 = _view(ax)
    px, py = pad * (x1 - x0), pad * (y1 - y0)
    return bool(x.max() >= x0 - px and x.min() <= x1 + px and y.max() >= y0 - py and y.min() <= y1 + py)


# --------------------------------------------------------------------------- public drawing helpers
def plot_lonlat(ax, transformer: Transformer, lon: Any, lat: Any, max_jump: float | None = None, **style) -> list:
    """Draw a polyline given in lon/lat degrees; returns the matplotlib Line2D objects.

    Consecutive points are joined the short way round in longitude (a route crossing the
    antimeridian draws as one line) and densified to 1° steps before projecting. Style
    keywords go to :meth:`matplotlib.axes.Axes.plot`.
    """
    lon = np.asarray(lon, dtype=np.float64).ravel()
    lat = np.asarray(lat, dtype=np.float64).ravel()
    keep = np.isfinite(lon) & np.isfinite(lat)
    lon, lat = _densify(lon[keep], lat[keep], shortest=True)
    x, y = _project(transformer, lon, lat)
    jump = _default_jump(ax) if max_jump is None else max_jump
    lines = []
    for px, py in split_projected(x, y, jump):
        lines.extend(ax.plot(px, py, **style))
        style.pop("label", None)  # one legend entry per call
    return lines


def scatter_lonlat(ax, transformer: Transformer, lon: Any, lat: Any, **style):
    """Draw points given in lon/lat degrees (style keywords to ``Axes.scatter``)."""
    x, y = _project(transformer, lon, lat)
    keep = np.isfinite(x)
    style.setdefault("zorder", 4)
    return ax.scatter(x[keep], y[keep], **style)


def _ring_path_parts(transformer: Transformer, ring: Any) -> tuple[np.ndarray, np.ndarray] | None:
    ring = np.asarray(ring, dtype=np.float64)
    if ring.ndim != 2 or ring.shape[0] < 3 or ring.shape[1] < 2:
        raise InputError(f"a polygon ring needs at least 3 (lon, lat) points; got shape {ring.shape}")
    lon, lat = _densify(ring[:, 0], ring[:, 1], shortest=False)
    x, y = _project(transformer, lon, lat)
    keep = np.isfinite(x)
    if keep.sum() < 3:
        return None
    return x[keep], y[keep]


def fill_lonlat(ax, transformer: Transformer, lon: Any, lat: Any, holes: Iterable[Any] = (), **style):
    """Fill a polygon given by its outer ring (lon, lat degrees) and optional hole rings.

    Ring coordinates are taken literally, as in GeoJSON (an edge from -180 to 180 runs
    the long way round; a polygon across the antimeridian must be split there or use
    longitudes beyond 180). Points that do not project (the far pole) are dropped.
    Returns the :class:`matplotlib.patches.PathPatch`, or None if nothing projects.
    """
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MplPath

    rings = [np.column_stack([np.asarray(lon, dtype=np.float64), np.asarray(lat, dtype=np.float64)])]
    rings.extend(np.asarray(h, dtype=np.float64) for h in holes)
    vertices, codes = [], []
    for ring in rings:
        parts = _ring_path_parts(transformer, ring)
        if parts is None:
            continue
        xy = np.column_stack(parts)
        vertices.append(np.vstack([xy, xy[:1]]))
        codes.append([MplPath.MOVETO] + [MplPath.LINETO] * (len(xy) - 1) + [MplPath.CLOSEPOLY])
    if not vertices:
        return None
    style.setdefault("zorder", 1.5)
    patch = PathPatch(MplPath(np.vstack(vertices), np.concatenate(codes)), **style)
    ax.add_patch(patch)
    return patch


def draw_geojson(
    ax,
    transformer: Transformer,
    obj: dict,
    style: Callable[[dict], dict] | dict | None = None,
) -> list:
    """Draw a GeoJSON FeatureCollection, Feature or geometry (lon/lat degrees).

    Points are scattered, lines plotted (:func:`plot_lonlat`), polygons filled
    (:func:`fill_lonlat`). ``style`` is a dict of matplotlib keywords, or a function of a
    feature's properties returning one. Returns the artists drawn.
    """
    if not isinstance(obj, dict) or "type" not in obj:
        raise InputError("draw_geojson needs a GeoJSON object (a dict with a 'type')")
    if obj["type"] == "FeatureCollection":
        features = obj.get("features", [])
    elif obj["type"] == "Feature":
        features = [obj]
    else:
        features = [{"type": "Feature", "properties": {}, "geometry": obj}]
    artists: list = []
    for feature in features:
        props = feature.get("properties") or {}
        kw = dict(style(props) if callable(style) else (style or {}))
        artists.extend(_draw_geometry(ax, transformer, feature.get("geometry"), kw))
    return artists


def _draw_geometry(ax, transformer: Transformer, geometry: dict | None, kw: dict) -> list:
    if not geometry:
        return []
    kind, coords = geometry.get("type"), geometry.get("coordinates")
    if kind == "GeometryCollection":
        return [a for g in geometry.get("geometries", []) for a in _draw_geometry(ax, transformer, g, kw)]
    if kind in ("Point", "MultiPoint"):
        pts = np.atleast_2d(np.asarray(coords, dtype=np.float64))
        return [scatter_lonlat(ax, transformer, pts[:, 0], pts[:, 1], **kw)]
    if kind in ("LineString", "MultiLineString"):
        lines = [coords] if kind == "LineString" else coords
        out = []
        for line in lines:
            arr = np.asarray(line, dtype=np.float64)
            out.extend(plot_lonlat(ax, transformer, arr[:, 0], arr[:, 1], **kw))
        return out
    if kind in ("Polygon", "MultiPolygon"):
        polygons = [coords] if kind == "Polygon" else coords
        out = []
        for rings in polygons:
            outer = np.asarray(rings[0], dtype=np.float64)
            patch = fill_lonlat(ax, transformer, outer[:, 0], outer[:, 1], holes=rings[1:], **kw)
            if patch is not None:
                out.append(patch)
        return out
    raise InputError(f"GeoJSON geometry type {kind!r} is not supported")


def draw_coastlines(ax, transformer: Transformer, **style) -> list:
    """Draw the shipped coastline on a map axes; returns the Line2D objects.

    Lines are projected, split where a projected step exceeds half the view (the far side
    of the projection, the opposite pole) and skipped when wholly outside the view.
    """
    kw = {**_COAST_STYLE, **style}
    jump = _default_jump(ax)
    artists = []
    for coords in load_coastlines():
        x, y = _project(transformer, coords[:, 0], coords[:, 1])
        for px, py in split_projected(x, y, jump):
            if _visible(ax, px, py):
                artists.extend(ax.plot(px, py, **kw))
    return artists


# --------------------------------------------------------------------------- graticule
def format_lat(lat: float) -> str:
    """Latitude label such as ``70°N``, ``15.5°S`` or ``0°``."""
    value = float(lat)
    text = f"{abs(value):g}°"
    return text if value == 0 else text + ("N" if value > 0 else "S")


def format_lon(lon: float) -> str:
    """Longitude label such as ``30°E``, ``150°W``, ``180°`` or ``0°`` (input any range)."""
    value = ((float(lon) + 180.0) % 360.0) - 180.0
    if np.isclose(abs(value), 180.0) or np.isclose(value, 0.0):
        return f"{abs(value):.0f}°"
    return f"{abs(value):g}°" + ("E" if value > 0 else "W")


def _nice_step(span: float, target_lines: int = 6) -> float:
    for step in (0.5, 1, 2, 5, 10, 15, 20, 30, 45, 60, 90):
        if span / step <= target_lines:
            return float(step)
    return 90.0


def _edge_crossing(
    x: np.ndarray, y: np.ndarray, view: tuple[float, float, float, float], edges: Sequence[str]
) -> tuple[float, float, str] | None:
    """First point where the polyline crosses one of the named view edges ('left', 'right', 'bottom', 'top')."""
    x0, x1, y0, y1 = view
    for i in range(x.size - 1):
        xa, ya, xb, yb = x[i], y[i], x[i + 1], y[i + 1]
        for edge in edges:
            if edge in ("left", "right"):
                xe = x0 if edge == "left" else x1
                if (xa - xe) * (xb - xe) < 0:
                    ye = ya + (xe - xa) / (xb - xa) * (yb - ya)
                    if y0 <= ye <= y1:
                        return xe, ye, edge
            else:
                ye = y0 if edge == "bottom" else y1
                if (ya - ye) * (yb - ye) < 0:
                    xe = xa + (ye - ya) / (yb - ya) * (xb - xa)
                    if x0 <= xe <= x1:
                        return xe, ye, edge
    return None


_EDGE_ALIGN = {
    "left": {"ha": "right", "va": "center"},
    "right": {"ha": "left", "va": "center"},
    "bottom": {"ha": "center", "va": "top"},
    "top": {"ha": "center", "va": "bottom"},
}


def draw_graticule(
    ax,
    transformer: Transformer,
    kind: str,
    lat_range: tuple[float, float],
    lon_range: tuple[float, float],
    lat_step: float | None = None,
    lon_step: float | None = None,
    labels: bool = True,
    label_lon: float | None = None,
    edge_labels: bool | None = None,
) -> list:
    """Draw parallels and meridians with degree labels on a map axes.

    Meridians are labelled where they leave the frame; parallels where they cross the left
    edge of a region map, or along the meridian ``label_lon`` inside a polar cap. With
    ``edge_labels`` (default: region maps) parallels are labelled at the left or right edge and
    meridians at any edge (a cap framed on a route). Labels carry the gid ``graticule-label``;
    :func:`declutter_labels` hides those that would overprint one another.
    """
    edge_labels = (kind == "region") if edge_labels is None else edge_labels
    view = _view(ax)
    lat_lo, lat_hi = lat_range
    lon_lo, lon_hi = lon_range
    lat_step = lat_step or (10.0 if kind != "region" else _nice_step(lat_hi - lat_lo))
    lon_step = lon_step or (30.0 if kind != "region" else _nice_step(lon_hi - lon_lo))
    jump = _default_jump(ax)
    artists: list = []
    meridians = np.arange(np.ceil(lon_lo / lon_step) * lon_step, lon_hi + 1e-9, lon_step)
    parallels = np.arange(np.ceil(lat_lo / lat_step) * lat_step, lat_hi + 1e-9, lat_step)
    parallels = parallels[np.abs(parallels) < 89.999]
    if kind != "region":
        meridians = meridians[meridians < lon_lo + 360.0 - 1e-9]
    lat_samples = np.linspace(lat_lo, lat_hi, max(2, int((lat_hi - lat_lo) / 0.25) + 1))
    lon_samples = np.linspace(lon_lo, lon_hi, max(2, int((lon_hi - lon_lo) / 0.5) + 1))
    for lon in meridians:
        x, y = _project(transformer, np.full_like(lat_samples, lon), lat_samples)
        for px, py in split_projected(x, y, jump):
            artists.extend(ax.plot(px, py, **_GRID_STYLE))
            if labels:
                edges = ("bottom",) if kind == "region" else ("bottom", "left", "right", "top")
                hit = _edge_crossing(px, py, view, edges)
                if hit:
                    artists.append(ax.text(hit[0], hit[1], format_lon(lon), clip_on=False, gid=LABEL_GID,
                                           **_EDGE_ALIGN[hit[2]], **_LABEL_STYLE))
    for lat in parallels:
        x, y = _project(transformer, lon_samples, np.full_like(lon_samples, lat))
        for px, py in split_projected(x, y, jump):
            artists.extend(ax.plot(px, py, **_GRID_STYLE))
        if not labels:
            continue
        if edge_labels:
            hit = _edge_crossing(x, y, view, ("left",) if kind == "region" else ("left", "right"))
            if hit:
                artists.append(ax.text(hit[0], hit[1], format_lat(lat), clip_on=False, gid=LABEL_GID,
                                       **_EDGE_ALIGN[hit[2]], **_LABEL_STYLE))
        else:
            lx, ly = _project(transformer, [label_lon if label_lon is not None else 0.0], [lat])
            if np.isfinite(lx[0]) and view[0] <= lx[0] <= view[1] and view[2] <= ly[0] <= view[3]:
                artists.append(
                    ax.text(lx[0], ly[0], format_lat(lat), ha="center", va="center", zorder=3, gid=LABEL_GID,
                            bbox={"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none", "alpha": 0.7}, **_LABEL_STYLE)
                )
    return artists


# --------------------------------------------------------------------------- map axes
def map_axes(
    kind: str = "north",
    extent: Any = None,
    ax=None,
    *,
    central_lon: float | None = None,
    coastlines: bool = True,
    graticule: bool = True,
    lat_step: float | None = None,
    lon_step: float | None = None,
    figsize: tuple[float, float] = (7.0, 7.0),
    frame: tuple[Any, Any] | None = None,
    margin: float = FRAME_MARGIN,
):
    """A matplotlib axes set up as a map, and the lon/lat -> map x/y transformer.

    Parameters
    ----------
    kind : {'north', 'south', 'region'}
        Polar stereographic cap or an oblique stereographic regional map (see module notes).
    extent : float or (lat_min, lat_max, lon_min, lon_max)
        Cap: latitude of the cap's edge in degrees (default 55; the sign is taken from ``kind``).
        Region: the bounding box, ``lon_max < lon_min`` for one across the antimeridian.
    ax : matplotlib Axes, optional
        Axes to draw into; a new figure is made if omitted.
    central_lon : float, optional
        Central meridian (see :func:`map_crs`).
    coastlines, graticule : bool
        Draw the shipped coastline and a labelled graticule (default both).
    lat_step, lon_step : float, optional
        Graticule spacing in degrees (default 10/30 on caps, chosen from the span on regions
        and framed maps).
    frame : (lon, lat) arrays of degrees, optional
        Frame the map on these points (e.g. a route) instead of the whole cap or region: the
        view is their projected bounding box with ``margin`` (fraction of its larger side, at
        least 100 km) on each side, widened so that neither side is under 0.6 of the other
        (:func:`frame_limits`). Graticule labels then sit on the edges.

    Returns
    -------
    ax : matplotlib.axes.Axes
        Equal-aspect axes in projected metres, ticks hidden.
    transformer : pyproj.Transformer
        ``transformer.transform(lon_deg, lat_deg) -> (x_m, y_m)`` (always_xy);
        ``transformer.target_crs`` is the map's CRS.
    """
    from matplotlib.figure import Figure

    _check_kind(kind)
    crs = map_crs(kind, extent, central_lon=central_lon)
    transformer = _transformer(crs)
    lon_0 = 0.0 if central_lon is None else float(central_lon)
    if kind == "region":
        lat_min, lat_max, lon_min, lon_max = _region_extent(extent)
        n = 181
        edge_lon = np.concatenate([np.linspace(lon_min, lon_max, n), np.full(n, lon_max), np.linspace(lon_max, lon_min, n), np.full(n, lon_min)])
        edge_lat = np.concatenate([np.full(n, lat_min), np.linspace(lat_min, lat_max, n), np.full(n, lat_max), np.linspace(lat_max, lat_min, n)])
        x, y = _project(transformer, edge_lon, edge_lat)
        x0, x1, y0, y1 = np.nanmin(x), np.nanmax(x), np.nanmin(y), np.nanmax(y)
        pad = 0.02 * max(x1 - x0, y1 - y0)
        limits = (x0 - pad, x1 + pad, y0 - pad, y1 + pad)
        lat_range = (max(-90.0, lat_min - 10.0), min(90.0, lat_max + 10.0))
        lon_range = (lon_min - 20.0, lon_max + 20.0)
        label_lon = None
    else:
        edge = _cap_edge(kind, extent)
        ex, ey = _project(transformer, [lon_0], [edge])
        radius = float(np.hypot(ex[0], ey[0]))
        limits = (-radius, radius, -radius, radius)
        lat_range = (max(edge - 25.0, -89.0), 90.0) if kind == "north" else (-90.0, min(edge + 25.0, 89.0))
        lon_range = (-180.0, 180.0)
        label_lon = lon_0 + 180.0 + 15.0 if kind == "north" else lon_0 + 15.0
    edge_labels = kind == "region"
    if frame is not None:
        limits = frame_limits(transformer, frame[0], frame[1], margin=margin)
        lat_range, lon_range = _view_ranges(transformer, limits)
        lat_step = lat_step or _nice_step(lat_range[1] - lat_range[0])
        lon_step = lon_step or _nice_step(lon_range[1] - lon_range[0])
        # parallels round a pole in view are labelled along a meridian through the view, else on the edges
        edge_labels = lon_range != (-180.0, 180.0)
        if not edge_labels:
            cx, cy = 0.5 * (limits[0] + limits[1]), 0.5 * (limits[2] + limits[3])
            centre_lon = transformer.transform(cx, cy, direction="INVERSE", errcheck=False)[0]
            label_lon = (float(centre_lon) if np.isfinite(centre_lon) else lon_0) + 10.0
    if ax is None:  # a Figure object, not pyplot's global state (safe from widget callbacks)
        ax = Figure(figsize=figsize).add_subplot()
    ax.set_xlim(limits[0], limits[1])
    ax.set_ylim(limits[2], limits[3])
    ax.set_aspect("equal", adjustable="box")
    ax.set_xticks([])
    ax.set_yticks([])
    if graticule:
        draw_graticule(ax, transformer, kind, lat_range, lon_range, lat_step, lon_step, labels=True, label_lon=label_lon,
                       edge_labels=edge_labels)
    if coastlines:
        draw_coastlines(ax, transformer)
    ax.set_xlim(limits[0], limits[1])
    ax.set_ylim(limits[2], limits[3])
    declutter_labels(ax)
    return ax, transformer


def frame_limits(transformer: Transformer, lon: Any, lat: Any, margin: float = FRAME_MARGIN,
                 min_half_m: float = 100e3, min_ratio: float = 0.6) -> tuple[float, float, float, float]:
    """``(x0, x1, y0, y1)`` in map metres framing the points (lon, lat degrees) with a margin.

    The projected bounding box, widened by ``margin`` times its larger side on every side (at
    least ``min_half_m`` from the centre), and its shorter side raised to ``min_ratio`` of the
    longer one (an east-west route is not drawn as a thin strip). Points that do not project
    are ignored; raises InputError when none does.
    """
    x, y = _project(transformer, lon, lat)
    keep = np.isfinite(x) & np.isfinite(y)
    if not keep.any():
        raise InputError("none of the points to frame lies on this map projection")
    x0, x1, y0, y1 = x[keep].min(), x[keep].max(), y[keep].min(), y[keep].max()
    cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
    half = 0.5 * max(x1 - x0, y1 - y0)
    pad = margin * 2.0 * half
    hx = max(0.5 * (x1 - x0) + pad, min_half_m)
    hy = max(0.5 * (y1 - y0) + pad, min_half_m)
    hx, hy = max(hx, min_ratio * hy), max(hy, min_ratio * hx)
    return float(cx - hx), float(cx + hx), float(cy - hy), float(cy + hy)


def _view_ranges(transformer: Transformer, limits: Sequence[float]) -> tuple[tuple[float, float], tuple[float, float]]:
    """Latitude and (unwrapped) longitude ranges, degrees, seen in a view of map metres."""
    x0, x1, y0, y1 = limits
    gx, gy = np.meshgrid(np.linspace(x0, x1, 41), np.linspace(y0, y1, 41))
    with np.errstate(invalid="ignore"):
        lon, lat = transformer.transform(gx.ravel(), gy.ravel(), direction="INVERSE", errcheck=False)
    lon, lat = np.asarray(lon), np.asarray(lat)
    ok = np.isfinite(lon) & np.isfinite(lat) & (np.abs(lat) <= 90.0)
    lon, lat = lon[ok], lat[ok]
    lat_range = (max(-90.0, float(lat.min()) - 1.0), min(90.0, float(lat.max()) + 1.0))
    pole_in_view = False
    for pole in (90.0, -90.0):
        px, py = _project(transformer, [0.0], [pole])
        pole_in_view |= bool(np.isfinite(px[0]) and x0 <= px[0] <= x1 and y0 <= py[0] <= y1)
    if pole_in_view:
        return lat_range, (-180.0, 180.0)
    rad = np.radians(lon)
    centre = float(np.degrees(np.arctan2(np.sin(rad).mean(), np.cos(rad).mean())))
    unwrapped = centre + ((lon - centre + 180.0) % 360.0) - 180.0
    return lat_range, (float(unwrapped.min()) - 1.0, float(unwrapped.max()) + 1.0)


def _renderer(fig):
    canvas = fig.canvas
    if hasattr(canvas, "get_renderer"):
        return canvas.get_renderer()
    return fig._get_renderer()  # a bare Figure (no pyplot): matplotlib's own renderer lookup


def declutter_labels(ax, pad_px: float = 2.0) -> int:
    """Hide graticule labels (gid :data:`LABEL_GID`) that would overprint an earlier one; returns how many.

    Labels are tested in the order drawn (meridians, then parallels) on their rendered
    bounding boxes, after the axes take their final equal-aspect shape. Call it again after
    anything that resizes the axes (a colour bar); hidden labels are reconsidered each time.
    """
    labels = [t for t in ax.texts if t.get_gid() == LABEL_GID]
    if not labels:
        return 0
    ax.apply_aspect()
    renderer = _renderer(ax.figure)
    kept, hidden = [], 0
    for text in labels:
        text.set_visible(True)
        box = text.get_window_extent(renderer).padded(pad_px)
        if any(box.overlaps(other) for other in kept):
            text.set_visible(False)
            hidden += 1
        else:
            kept.append(box)
    return hidden


def draw_dip_poles(ax, transformer: Transformer, date: Any, model: Any = None, label: bool = True) -> list:
    """Mark the dip poles (H = 0, :func:`headingref.poles.dip_poles`) that lie in the view.

    ``date`` is any date or decimal year; ``model`` a Model or a model name (default IGRF-14).
    Each pole in view gets a star (:data:`DIP_POLE_STYLE`) and, with ``label``, the words
    ``dip pole`` beside it; returns the scatter artists (the first carries the legend label
    ``dip pole (H = 0), <date>``), none when no pole is in view.
    """
    import warnings

    from ..errors import ExtrapolationWarning
    from ..poles import dip_poles

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ExtrapolationWarning)  # the map already says which date it shows
        poles = dip_poles(date, model=model, allow_extrapolation=True)
    x, y = _project(transformer, poles.lon.to_numpy(), poles.lat.to_numpy())
    x0, x1, y0, y1 = _view(ax)
    artists = []
    for i in range(len(poles)):
        if not (np.isfinite(x[i]) and x0 <= x[i] <= x1 and y0 <= y[i] <= y1):
            continue
        legend = f"dip pole (H = 0), {poles.date.iloc[i]}" if not artists else None
        artists.append(ax.scatter([x[i]], [y[i]], label=legend, **DIP_POLE_STYLE))
        if label:
            ax.annotate("dip pole", (x[i], y[i]), xytext=(6, -10), textcoords="offset points", fontsize=7,
                        color=DIP_POLE_STYLE["color"], zorder=7,
                        bbox={"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none", "alpha": 0.7})
    return artists
