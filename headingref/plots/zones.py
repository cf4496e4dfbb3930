"""Zone, pole and error-budget maps (polar stereographic caps or a regional map, with coastlines).

- :func:`plot_zone_map`: the zones of a :func:`headingref.zones` Dataset shaded (first date),
  the boundaries of a second date outlined (dashed), optional dip and geomagnetic pole tracks.
- :func:`plot_pole_tracks`: dip and geomagnetic pole tracks of :func:`headingref.pole_tracks` on
  the caps, first and last years labelled.
- :func:`plot_error_map`: the combined heading-reference error budget of
  :func:`headingref.detector.heading_error_grid` with the limit contour and the area beyond it.

Maps use :mod:`headingref.plots.basemap` (shipped Natural Earth coastline, graticule; no
cartopy). Each function returns the matplotlib Figure; write it with :func:`save_figure`.

>>> import matplotlib
>>> matplotlib.use("Agg")
>>> import headingref
>>> from headingref.plots.zones import plot_zone_map
>>> fig = plot_zone_map(headingref.zones("north", "2026-12-02", resolution_deg=1.0))
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..geogrid import CAPS
from ..weak_field import SEVERITY_COLOURS as _SEVERITY_COLOURS  # most severe first; the KML uses them too
from . import plain_text
from .route import save_figure

__all__ = ["plot_zone_map", "plot_pole_tracks", "plot_error_map", "save_figure"]

_TRACK_STYLE = {"dip": {"color": "#3a0ca3", "marker": "o"}, "geomagnetic": {"color": "#2a9d8f", "marker": "s"}}


def _map_for(ds) -> tuple[str, Any]:
    kind = ds.attrs.get("area_kind", "north")
    lat_min, lat_max, lon_min, lon_max = ds.attrs.get("area_bounds", list(CAPS["north"].bounds()))
    if kind == "north":
        return kind, lat_min
    if kind == "south":
        return kind, lat_max
    lon_max = lon_max - 360.0 if lon_max > 180.0 else lon_max
    return "region", (lat_min, lat_max, lon_min, lon_max)


def _band_colours(labels: list[str]) -> dict[str, str]:
    return {label: _SEVERITY_COLOURS[min(i, len(_SEVERITY_COLOURS) - 1)] for i, label in enumerate(labels)}


def _draw_tracks(ax, to_map, tracks, hemisphere: str | None) -> None:
    from .basemap import plot_lonlat, scatter_lonlat

    x0, x1 = sorted(ax.get_xlim())
    y0, y1 = sorted(ax.get_ylim())
    for (kind, pole), group in tracks.groupby(["kind", "pole"], sort=True):
        if hemisphere not in (None, "region") and pole != hemisphere:
            continue
        gx, gy = to_map.transform(group.lon.to_numpy(), group.lat.to_numpy(), errcheck=False)
        with np.errstate(invalid="ignore"):
            if not np.any((gx >= x0) & (gx <= x1) & (gy >= y0) & (gy <= y1)):
                continue  # a track wholly outside the view is neither drawn nor listed in the legend
        group = group.sort_values("decimal_year")
        style = _TRACK_STYLE.get(kind, {"color": "k", "marker": "x"})
        plot_lonlat(ax, to_map, group.lon, group.lat, color=style["color"], linewidth=1.2, zorder=4,
                    label=f"{kind} pole {group.date.iloc[0][:4]}–{group.date.iloc[-1][:4]}")
        scatter_lonlat(ax, to_map, group.lon.iloc[[-1]], group.lat.iloc[[-1]], color=style["color"],
                       marker=style["marker"], s=28, zorder=5,
                       label=f"{kind} pole {group.date.iloc[0][:10]}" if len(group) == 1 else None)
        for idx, offset, align in ((0, (-4, -10), "right"), (len(group) - 1, (4, 4), "left")):
            x, y = to_map.transform(group.lon.iloc[idx], group.lat.iloc[idx])
            if np.isfinite(x) and not (idx == 0 and len(group) == 1):
                ax.annotate(group.date.iloc[idx][:4], (x, y), xytext=offset, textcoords="offset points",
                            ha=align, fontsize=7, color=style["color"], zorder=6)


def _on_cut(a: np.ndarray, b: np.ndarray, bounds: list[float]) -> np.ndarray:
    """Edges lying along the antimeridian, a pole row or the grid's edge (not zone boundaries)."""
    lat_min, lat_max, lon_min, lon_max = bounds
    cut = (np.abs(a[:, 0]) == 180.0) & (np.abs(b[:, 0]) == 180.0)
    cut |= (np.abs(a[:, 1]) == 90.0) & (np.abs(b[:, 1]) == 90.0)
    for value in (lat_min, lat_max):
        cut |= np.isclose(a[:, 1], value) & np.isclose(b[:, 1], value)
    for value in (lon_min, (lon_max + 180.0) % 360.0 - 180.0):
        cut |= np.isclose(a[:, 0], value) & np.isclose(b[:, 0], value)
    return cut


def _draw_boundaries(ax, to_map, collection: dict, bounds: list[float], colours: dict[str, str], **style) -> None:
    """Outline the zones, leaving out the edges where polygons were cut (antimeridian, pole, grid)."""
    from .basemap import plot_lonlat

    for feature in collection["features"]:
        colour = colours[feature["properties"]["zone"]]
        for polygon in feature["geometry"]["coordinates"]:
            for ring in polygon:
                ring = np.asarray(ring, dtype=np.float64)
                cut = _on_cut(ring[:-1], ring[1:], bounds)
                start = 0
                for i in [*np.flatnonzero(cut), len(ring) - 1]:
                    if i > start:
                        plot_lonlat(ax, to_map, ring[start:i + 1, 0], ring[start:i + 1, 1], color=colour, **style)
                    start = i + 1


def plot_zone_map(ds, *, tracks=None, title: str | None = None, figsize: tuple[float, float] = (7.5, 7.5),
                  lines=None, shade_latest: bool = False):
    """Map of the weak-field zones of a :func:`headingref.zones` Dataset.

    The first date's zones are shaded; with a second date (a two-step ``time`` dimension, as
    from :func:`headingref.weak_field.zone_change`) its boundaries are drawn dashed on top. ``tracks``
    (a :func:`headingref.pole_tracks` table) adds the pole tracks of the map's hemisphere. ``lines``
    ((label, lon, lat) each, e.g. routes) are drawn on top; ``shade_latest`` shades the last date instead.
    """
    from matplotlib.patches import Patch

    from ..weak_field import zone_geojson
    from .basemap import declutter_labels, draw_geojson, map_axes, plot_lonlat

    kind, extent = _map_for(ds)
    bounds = list(ds.attrs.get("area_bounds", list(CAPS["north"].bounds())))
    ax, to_map = map_axes(kind, extent, figsize=figsize)
    collection = zone_geojson(ds)
    dates = sorted({f["properties"]["date"] for f in collection["features"]}, reverse=shade_latest)
    labels = list(ds.attrs.get("zone_labels", ["blackout", "caution"]))
    colours = _band_colours(labels)
    handles = []
    if dates:
        first = {"type": "FeatureCollection", "features": [f for f in collection["features"] if f["properties"]["date"] == dates[0]]}
        draw_geojson(ax, to_map, first, lambda p: {"facecolor": colours[p["zone"]], "edgecolor": "none", "alpha": 0.55})
        _draw_boundaries(ax, to_map, first, bounds, colours, linewidth=0.8, zorder=3)
        drawn = {f["properties"]["zone"] for f in first["features"]}  # the legend lists only zones on the map
        handles = [Patch(facecolor=colours[name], alpha=0.55, label=f"{name} ({dates[0]})") for name in labels if name in drawn]
    for date in dates[1:]:
        later = {"type": "FeatureCollection", "features": [f for f in collection["features"] if f["properties"]["date"] == date]}
        _draw_boundaries(ax, to_map, later, bounds, colours, linestyle="--", linewidth=1.4, zorder=3)
        handles.append(Patch(facecolor="none", edgecolor="0.2", linestyle="--", label=f"boundaries {date}"))
    for i, (label, lon, lat) in enumerate(lines or ()):
        plot_lonlat(ax, to_map, lon, lat, color=f"C{i}", linewidth=1.6, zorder=4, label=str(label))
    if tracks is not None and len(tracks):
        _draw_tracks(ax, to_map, tracks, kind)
    if dates and (tracks is None or not (tracks["kind"] == "dip").any()):
        _mark_dip_poles(ax, to_map, ds, dates[0])
    line_handles, _ = ax.get_legend_handles_labels()
    handles.extend(line_handles)
    if handles:
        ax.legend(handles=handles, loc="lower left", fontsize=7, framealpha=0.85)
    thresholds = ds.attrs.get("thresholds_nT", [2000.0, 6000.0])
    ax.set_title(title or f"Weak horizontal field, H thresholds {', '.join(f'{t:g}' for t in thresholds)} nT "
                 f"({ds.attrs.get('model', 'IGRF')}, {ds.attrs.get('alt_km', 0):g} km)", fontsize=9, pad=16)
    declutter_labels(ax)
    return plain_text(ax.figure)  # names from users drawn as typed


def _mark_dip_poles(ax, to_map, ds, date: str) -> None:
    """The dip pole(s) in view at ``date``, from the map's own model (by its name; IGRF-14 if none)."""
    from ..errors import HeadingrefError
    from .basemap import draw_dip_poles

    try:
        draw_dip_poles(ax, to_map, date, model=ds.attrs.get("model"))
    except HeadingrefError:  # the grid's model file is no longer at hand: no pole from another model
        pass


def plot_pole_tracks(tracks, *, title: str | None = None, figsize: tuple[float, float] = (11.0, 5.8)):
    """North and south caps side by side with the dip and geomagnetic pole tracks."""
    from matplotlib.figure import Figure

    from .basemap import map_axes

    fig = Figure(figsize=figsize)
    axes = fig.subplots(1, 2)
    for ax, hemisphere in zip(axes, ("north", "south"), strict=True):
        part = tracks[tracks.pole == hemisphere]
        cap_edge = CAPS[hemisphere].edge_lat_deg
        edge = float(np.floor(min(np.abs(part.lat).min() - 5.0, cap_edge) / 5.0) * 5.0) if len(part) else cap_edge
        ax, to_map = map_axes(hemisphere, edge, ax=ax)
        _draw_tracks(ax, to_map, part, hemisphere)
        if ax.get_legend_handles_labels()[0]:  # nothing labelled (e.g. one date, or no pole in this cap)
            ax.legend(loc="lower left", fontsize=7, framealpha=0.85)
        ax.set_title(f"{hemisphere.capitalize()} poles", fontsize=9)
    fig.suptitle(title or "Dip poles (H = 0) and geomagnetic (centred-dipole) poles", fontsize=10)
    return plain_text(fig)  # names from users drawn as typed


_SATURATION_WORDS = {
    "slaving_rate": "the slaving drift at its ceiling (slaving rate x turn duration)",
    "residual_field": "the residual aircraft field (at least H: no heading)",
    "model_uncertainty": "the model uncertainty (capped at 180 deg)",
}


def _saturation_note(ds) -> str:
    """One sentence when the budget beyond the limit is saturated by one term (hatched), else ''."""
    term = ds.attrs.get("saturated_by", "none")
    if term == "none" or "saturated_by" not in ds:
        return ""
    share = 100.0 * float(ds.attrs.get("saturated_share_beyond_limit", 0.0))
    return (f"Saturated (hatched): over {share:.0f}% of the area beyond the limit\nthe budget is set by "
            f"{_SATURATION_WORDS.get(term, term)};\na larger manoeuvre would not change it.")


def plot_error_map(ds, *, title: str | None = None, vmax_deg: float = 10.0, figsize: tuple[float, float] = (7.5, 7.5)):
    """The combined error budget (root-sum-square, degrees) with the limit contour.

    Where the budget is saturated by one term (``saturated_by`` of
    :func:`headingref.detector.heading_error_grid`) the map is hatched and a note says which term.
    """
    from .basemap import declutter_labels, draw_coastlines, map_axes

    kind = ds.attrs.get("area_kind", "north")
    limit = float(ds.attrs.get("limit_deg", 2.0))
    values = np.asarray(ds["budget_rss_deg"].values, dtype=np.float64)
    if "x" in ds.dims:  # polar stereographic grid, same projection as the cap basemap
        edge = float(np.min(np.abs(ds["lat"].values[np.isfinite(values)])))
        ax, to_map = map_axes(kind, edge, figsize=figsize, coastlines=False)
        x, y = ds["x"].values, ds["y"].values
    else:
        bounds = ds.attrs["area_bounds"]
        lon_max = bounds[3] - 360.0 if bounds[3] > 180.0 else bounds[3]
        ax, to_map = map_axes("region", (bounds[0], bounds[1], bounds[2], lon_max), figsize=figsize, coastlines=False)
        lon2, lat2 = np.meshgrid(ds["lon"].values, ds["lat"].values)
        x, y = to_map.transform(lon2, lat2)
    mesh = ax.pcolormesh(x, y, np.ma.masked_invalid(values), cmap="magma_r", vmin=0.0, vmax=vmax_deg,
                         shading="nearest", zorder=0.5)
    if np.nanmax(values) > limit > np.nanmin(values):
        ax.contour(x, y, values, levels=[limit], colors="#0b3954", linewidths=1.4, zorder=3)
    note = _saturation_note(ds)
    if note:  # hatch where one term sits at its ceiling, and say so
        saturated = np.asarray(ds["saturated_by"].values) > 0
        if saturated.any() and not saturated.all():
            ax.contourf(x, y, saturated.astype(float), levels=[0.5, 1.5], colors="none", hatches=["////"], zorder=2)
        ax.text(0.01, 0.99, note, transform=ax.transAxes, ha="left", va="top", fontsize=7, zorder=7,
                bbox={"facecolor": "white", "alpha": 0.85, "edgecolor": "0.6"})
    draw_coastlines(ax, to_map)
    bar = ax.figure.colorbar(mesh, ax=ax, shrink=0.75, extend="max")
    bar.set_label("heading error budget, root-sum-square (deg)")
    area = ds.attrs.get("area_exceeding_limit_km2", float("nan"))
    ax.set_title(title or f"Heading-reference error budget; contour {limit:g}°, beyond it {area:,.0f} km²", fontsize=9, pad=16)
    year = ds.attrs.get("decimal_year", ds["time"].values if "time" in ds.coords and ds["time"].size == 1 else None)
    if year is not None:
        _mark_dip_poles(ax, to_map, ds, float(year))
        if ax.get_legend_handles_labels()[0]:
            ax.legend(loc="lower left", fontsize=7, framealpha=0.85)
    declutter_labels(ax)  # after the colour bar narrowed the map
    return plain_text(ax.figure)  # names from users drawn as typed
