"""Route figures: a map with isogonic lines and weak-field zones, and a profile along the route.

- :func:`plot_route_map`: the route on a polar stereographic cap (routes that stay at high
  latitude) or an oblique stereographic regional map (elsewhere), drawn with
  :mod:`headingref.plots.basemap` (shipped Natural Earth coastline, graticule). Isogonic
  lines (variation, east positive, labelled with E/W) and shading where the horizontal field
  is below the caution and blackout thresholds come from the field model evaluated on a mesh
  of the map's own x/y (so nothing breaks at the antimeridian or the pole).
- :func:`plot_route_profile`: variation, H and declination uncertainty against distance
  along the route, waypoints marked, caution/blackout stretches shaded.

Both take the :class:`headingref.routes.RouteResult` from :func:`headingref.route` and return
the matplotlib Figure (write it with ``save_figure``).

>>> import matplotlib
>>> matplotlib.use("Agg")
>>> import headingref
>>> from headingref.plots.route import plot_route_map, plot_route_profile
>>> result = headingref.route([("ALFA", 69.0, 18.0), ("BRAVO", 78.2, 15.6)], "2026-12-02")
>>> fig = plot_route_map(result)
>>> fig = plot_route_profile(result)
"""

from __future__ import annotations

from typing import Any

import numpy as np

from . import plain_text, save_figure  # noqa: F401  (save_figure re-exported: the plotting modules all offer it)

__all__ = ["plot_route_map", "plot_route_profile", "save_figure", "choose_map"]

CAP_LIMIT_LAT_DEG = 60.0
_ZONE_COLOURS = {"caution": "#f2b134", "blackout": "#d1495b"}
_ROUTE_COLOUR = "#1f4e79"


def _unwrap_lon(lon: np.ndarray) -> np.ndarray:
    """Longitudes made continuous around their circular mean (for spans across 180)."""
    rad = np.radians(lon)
    centre = np.degrees(np.arctan2(np.sin(rad).mean(), np.cos(rad).mean()))
    return centre + ((lon - centre + 180.0) % 360.0) - 180.0


def choose_map(lat: Any, lon: Any) -> tuple[str, Any, float | None]:
    """Map kind, extent and central meridian for points (see :func:`headingref.plots.basemap.map_axes`).

    A polar cap when every point lies poleward of 60 degrees in one hemisphere; otherwise a
    regional map around the points with a 3-degree margin.
    """
    lat = np.asarray(lat, dtype=np.float64)
    lon = _unwrap_lon(np.asarray(lon, dtype=np.float64))
    centre_lon = float(((np.mean(lon) + 180.0) % 360.0) - 180.0)
    for kind, sign in (("north", 1.0), ("south", -1.0)):
        if np.all(sign * lat >= CAP_LIMIT_LAT_DEG):
            edge = max(0.0, np.floor((np.min(sign * lat) - 3.0) / 5.0) * 5.0)
            # the route's mean meridian points down the page (north) / up the page (south)
            return kind, edge, centre_lon
    extent = (
        max(-89.0, float(lat.min()) - 3.0),
        min(89.0, float(lat.max()) + 3.0),
        float(((lon.min() - 3.0 + 180.0) % 360.0) - 180.0),
        float(((lon.max() + 3.0 + 180.0) % 360.0) - 180.0),
    )
    if lon.max() - lon.min() + 6.0 >= 360.0:
        extent = (extent[0], extent[1], -180.0, 180.0)
    return "region", extent, None


def _isogonic_step(values: np.ndarray) -> float:
    span = np.nanmax(values) - np.nanmin(values) if np.isfinite(values).any() else 0.0
    for step in (1.0, 2.0, 5.0, 10.0, 20.0):
        if span / step <= 16:
            return step
    return 30.0


def _variation_label(value: float) -> str:
    value = float(value)
    if value == 0:
        return "0°"
    return f"{abs(value):g}°{'E' if value > 0 else 'W'}"


MAX_DRAWN_POINTS = 4000  # a line of more points looks the same at figure resolution (common practice)
MAX_NAMED_WAYPOINTS = 40  # names beyond this overprint one another


def _evenly(count: int, limit: int) -> np.ndarray:
    """Indices of at most ``limit`` items out of ``count``, evenly spread, first and last included."""
    if count <= limit:
        return np.arange(count)
    return np.unique(np.round(np.linspace(0, count - 1, limit)).astype(int))


def _decimate(x: np.ndarray, y: np.ndarray, limit: int = MAX_DRAWN_POINTS) -> tuple[np.ndarray, np.ndarray]:
    """At most about ``limit`` points of the curve y(x), keeping each bucket's least and greatest y.

    Min/max decimation: the drawn line still reaches every extreme (the least H, the largest
    uncertainty), which a plain stride could step over.
    """
    n = len(x)
    if n <= limit:
        return x, y
    buckets = max(1, limit // 2)
    edges = np.linspace(0, n, buckets + 1).astype(int)
    keep = [0, n - 1]
    finite = np.where(np.isfinite(y), y, np.nan)
    for a, b in zip(edges[:-1], edges[1:], strict=True):
        part = finite[a:b]
        if b <= a or np.isnan(part).all():
            keep.append(a)
            continue
        keep += [a + int(np.nanargmin(part)), a + int(np.nanargmax(part))]
    idx = np.unique(keep)
    return x[idx], y[idx]


def plot_route_map(result: Any, ax=None, model: Any = None, mesh: int = 140, isogonics: bool = True, zones: bool = True):
    """Draw the route on a map with isogonic lines and weak-field zones; returns the Figure.

    Parameters
    ----------
    result : RouteResult
        From :func:`headingref.route` (its samples give the line, its legs the waypoints,
        ``legs.attrs['decimal_year']`` the date of the field).
    ax : matplotlib Axes, optional
    model : Model, optional
        Field model for the isogonic lines and zones (default IGRF-14, as for the route).
    mesh : int
        Points per side of the field mesh over the map.
    """
    import warnings

    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    from ..elements import BLACKOUT_NT, CAUTION_NT, field_arrays
    from ..errors import UndefinedDeclinationWarning
    from ..headings import format_heading
    from .basemap import declutter_labels, draw_dip_poles, map_axes, plot_lonlat, scatter_lonlat

    legs, samples = result.legs, result.samples
    lat = samples.lat_deg.to_numpy()
    lon = samples.lon_deg.to_numpy()
    kind, extent, central_lon = choose_map(lat, lon)
    if ax is None:  # a Figure object, not pyplot's global state (safe from widget callbacks)
        ax = Figure(figsize=(8.0, 8.0)).add_subplot()
    # framed on the route (with a margin), not on the whole cap: the route fills the map
    ax, to_map = map_axes(kind, extent, ax=ax, central_lon=central_lon, frame=(lon, lat))
    year = float(legs.attrs.get("decimal_year", samples.attrs.get("decimal_year")))

    handles = []
    if isogonics or zones:
        x0, x1 = ax.get_xlim()
        y0, y1 = ax.get_ylim()
        gx, gy = np.meshgrid(np.linspace(x0, x1, mesh), np.linspace(y0, y1, mesh))
        with np.errstate(invalid="ignore"):
            glon, glat = to_map.transform(gx.ravel(), gy.ravel(), direction="INVERSE", errcheck=False)
        glon, glat = np.asarray(glon), np.asarray(glat)
        ok = np.isfinite(glon) & np.isfinite(glat) & (np.abs(glat) <= 90.0)
        dec = np.full(glon.size, np.nan)
        h = np.full(glon.size, np.nan)
        with warnings.catch_warnings():  # the mesh may touch the dip pole (H ~ 0); the map masks it, no warning
            warnings.simplefilter("ignore", UndefinedDeclinationWarning)
            fld = field_arrays(glat[ok], glon[ok], year, 0.0, model=model, allow_extrapolation=True)
        dec[ok] = fld["declination_deg"]
        h[ok] = fld["horizontal_nT"]
        dec, h = dec.reshape(gx.shape), h.reshape(gx.shape)
        if zones and np.nanmin(h) < CAUTION_NT:
            ax.contourf(gx, gy, h, levels=[0.0, BLACKOUT_NT, CAUTION_NT], colors=[_ZONE_COLOURS["blackout"], _ZONE_COLOURS["caution"]],
                        alpha=0.35, zorder=1.2)
            # the legend lists only the zones the map shows
            if np.nanmax(np.where(h < CAUTION_NT, h, np.nan)) >= BLACKOUT_NT:
                handles.append(Patch(color=_ZONE_COLOURS["caution"], alpha=0.5, label=f"caution: H < {CAUTION_NT:g} nT"))
            if np.nanmin(h) < BLACKOUT_NT:
                handles.append(Patch(color=_ZONE_COLOURS["blackout"], alpha=0.5, label=f"blackout: H < {BLACKOUT_NT:g} nT"))
        if isogonics:
            # hide the +-180 seam of the variation so that no false lines gather along it
            seam = np.zeros(dec.shape, dtype=bool)
            with np.errstate(invalid="ignore"):
                jump_x = np.abs(np.diff(dec, axis=1)) > 180.0
                jump_y = np.abs(np.diff(dec, axis=0)) > 180.0
            seam[:, 1:] |= jump_x
            seam[:, :-1] |= jump_x
            seam[1:, :] |= jump_y
            seam[:-1, :] |= jump_y
            masked = np.where(seam, np.nan, dec)
            step = _isogonic_step(masked)
            levels = np.arange(-180.0 + step, 180.0, step)
            cs = ax.contour(gx, gy, masked, levels=levels, colors="#6a3d9a", linewidths=0.7, zorder=1.8)
            ax.clabel(cs, fmt=_variation_label, fontsize=7, inline=True)  # matplotlib keeps labels upright
            drawn_levels = [lv for lv, segs in zip(cs.levels, cs.allsegs, strict=True) if any(len(g) > 1 for g in segs)]
            if drawn_levels:
                west = " (west dashed)" if min(drawn_levels) < 0 else ""
                handles.append(Line2D([], [], color="#6a3d9a", lw=0.7, label=f"isogonic lines every {step:g}°{west}"))

    drawn = _evenly(len(lon), MAX_DRAWN_POINTS)  # a 10,000-waypoint route: draw what the figure can show
    plot_lonlat(ax, to_map, lon[drawn], lat[drawn], color=_ROUTE_COLOUR, linewidth=2.0, zorder=5, label="route")
    wp_lat = np.append(legs.from_lat_deg.to_numpy(), legs.to_lat_deg.iloc[-1])
    wp_lon = np.append(legs.from_lon_deg.to_numpy(), legs.to_lon_deg.iloc[-1])
    names = list(legs["from"]) + [legs["to"].iloc[-1]]
    scatter_lonlat(ax, to_map, wp_lon, wp_lat, s=22, color=_ROUTE_COLOUR, edgecolor="white", zorder=6)
    wx, wy = to_map.transform(wp_lon, wp_lat)
    for i in _evenly(len(names), MAX_NAMED_WAYPOINTS):
        x, y, name = wx[i], wy[i], names[i]
        ax.annotate(str(name), (x, y), xytext=(4, 4), textcoords="offset points", fontsize=8, zorder=7,
                    bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8})
    handles.insert(0, Line2D([], [], color=_ROUTE_COLOUR, lw=2.0, label=f"route ({legs.attrs.get('path', 'geodesic')})"))
    handles += draw_dip_poles(ax, to_map, year, model=model)  # only a pole inside the view
    # the legend below the map, clear of the route and of the edge labels
    ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.05), ncol=2, fontsize=7, framealpha=0.85)
    declutter_labels(ax)
    total = float(legs.distance_nm.sum())
    first_course = format_heading(float(legs.true_course_deg.iloc[0]), reference="T")
    ax.set_title(
        f"Route {names[0]} to {names[-1]}: {len(legs)} legs, {total:,.0f} NM (first course {first_course})\n"
        f"variation and weak-field zones, decimal year {year:.2f}",
        fontsize=10,
        pad=18,  # above the meridian labels on the top edge
    )
    return plain_text(ax.figure)


def plot_route_profile(result: Any, fig=None):
    """Variation, H and declination uncertainty against distance along the route; returns the Figure."""
    from matplotlib.figure import Figure

    from ..elements import BLACKOUT_NT, CAUTION_NT, NO_HEADING_DEG

    legs, samples = result.legs, result.samples
    dist = samples.distance_along_route_nm.to_numpy()
    if fig is None:
        fig = Figure(figsize=(9.0, 7.5))
    axes = fig.subplots(3, 1, sharex=True)
    series = [
        ("variation_deg", "variation (°, E +)", "#6a3d9a"),
        ("horizontal_nT", "H (nT)", "#1f4e79"),
        ("declination_uncertainty_deg", "declination\nuncertainty (°)", "#b15928"),
    ]
    zone = samples.zone.to_numpy()
    for ax, (column, label, colour) in zip(axes, series, strict=True):
        # one line for the whole route (legs join end to start), min/max-decimated for long routes
        x, y = _decimate(dist, samples[column].to_numpy(dtype=float))
        if column == "variation_deg":  # break the line where the variation wraps past 180
            cut = np.flatnonzero(np.abs(np.diff(y)) > 180.0) + 1
            x, y = np.insert(x, cut, np.nan), np.insert(y, cut, np.nan)
        ax.plot(x, y, color=colour, lw=1.4)
        ax.set_ylabel(label, fontsize=9)
        ax.grid(True, lw=0.3, alpha=0.6)
        for name, colour_z in _ZONE_COLOURS.items():
            hit = np.isin(zone, [name, "blackout"]) if name == "caution" else zone == name
            if hit.any():
                ax.fill_between(dist, 0, 1, where=hit, transform=ax.get_xaxis_transform(), color=colour_z, alpha=0.2, lw=0)
    axes[0].axhline(0.0, color="0.3", lw=0.6)
    axes[1].axhline(CAUTION_NT, color=_ZONE_COLOURS["caution"], lw=1.0, ls="--", label=f"caution {CAUTION_NT:g} nT")
    axes[1].axhline(BLACKOUT_NT, color=_ZONE_COLOURS["blackout"], lw=1.0, ls="--", label=f"blackout {BLACKOUT_NT:g} nT")
    axes[1].set_ylim(bottom=0.0)
    axes[1].legend(fontsize=7, loc="upper right")
    # the table caps the uncertainty at NO_HEADING_DEG (180: no heading at all, headingref.field); the axis too
    axes[2].set_ylim(0.0, min(axes[2].get_ylim()[1], NO_HEADING_DEG * 1.05))
    all_starts = np.concatenate([[0.0], np.cumsum(legs.distance_nm.to_numpy())])
    all_names = list(legs["from"]) + [legs["to"].iloc[-1]]
    shown = _evenly(len(all_starts), MAX_NAMED_WAYPOINTS)
    starts, names = all_starts[shown], [all_names[i] for i in shown]
    for ax in axes:
        ax.vlines(starts, 0, 1, transform=ax.get_xaxis_transform(), color="0.5", lw=0.6, ls=":")
    top = axes[0].secondary_xaxis("top")
    top.set_xticks(starts)
    top.set_xticklabels([str(n) for n in names], fontsize=7, rotation=45, ha="left")
    axes[-1].set_xlabel("distance along route (NM)")
    axes[-1].set_xlim(0.0, max(float(all_starts[-1]), 1e-9))
    fig.suptitle(f"Field along the route ({legs.attrs.get('path', 'geodesic')}), decimal year {legs.attrs.get('decimal_year', float('nan')):.2f}",
                 fontsize=10)
    plain_text(fig)  # before tight_layout, which draws the waypoint names
    fig.tight_layout()
    return fig

