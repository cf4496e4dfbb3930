"""Model differences: a map between two field models (with the shipped coastline), a route profile.

:func:`plot_difference_map` draws :func:`headingref.compare.difference_grid`'s
``declination_diff_deg`` (model b minus model a, degrees, east positive) on a
:func:`headingref.plots.basemap.map_axes` map, a diverging colour scale centred on zero, and a
contour where the difference equals the two models' combined uncertainty (inside it the models
disagree by more than either claims to be wrong by).
"""

from __future__ import annotations

from typing import Any

import numpy as np


def _edges(centres: np.ndarray) -> np.ndarray:
    """Cell edges half-way between grid nodes (the outer edges half a step beyond the ends)."""
    if centres.size == 1:
        return np.array([centres[0] - 0.5, centres[0] + 0.5])
    mid = (centres[1:] + centres[:-1]) / 2.0
    return np.concatenate([[2 * centres[0] - mid[0]], mid, [2 * centres[-1] - mid[-1]]])


def _default_view(ds) -> tuple[str, Any]:
    lat = ds.lat.values
    lon = ds.lon.values
    if lat.min() >= 55.0 and lon.max() - lon.min() >= 300.0:
        return "north", float(lat.min())
    if lat.max() <= -55.0 and lon.max() - lon.min() >= 300.0:
        return "south", float(lat.max())
    return "region", (float(lat.min()), float(lat.max()), float(lon.min()), float(lon.max()))


def plot_difference_map(ds, kind: str | None = None, extent: Any = None, limit_deg: float | None = None, ax=None):
    """Declination difference map (degrees, b - a) from :func:`headingref.compare.difference_grid`.

    ``kind``/``extent`` as :func:`headingref.plots.basemap.map_axes` (default: a polar cap when the
    grid is one, else the grid's box). ``limit_deg`` is the colour scale's half-range (default the
    99th percentile of |difference|, at least 0.1 degree). Returns the matplotlib Figure.
    """
    from . import plain_text
    from .basemap import draw_coastlines, map_axes

    if kind is None:
        kind, default_extent = _default_view(ds)
        extent = default_extent if extent is None else extent
    ax, to_map = map_axes(kind, extent, ax=ax, coastlines=False)
    lon2, lat2 = np.meshgrid(ds.lon.values, ds.lat.values)
    x, y = to_map.transform(lon2, lat2)
    # cell edges half-way between nodes, projected: pcolormesh then needs no monotonic map coordinates
    xe, ye = to_map.transform(*np.meshgrid(_edges(ds.lon.values), np.clip(_edges(ds.lat.values), -90.0, 90.0)))
    diff = np.ma.masked_invalid(ds.declination_diff_deg.values)
    if limit_deg is None:
        finite = np.abs(diff.compressed())
        limit_deg = max(float(np.percentile(finite, 99)) if finite.size else 0.1, 0.1)
    mesh = ax.pcolormesh(xe, ye, diff, cmap="RdBu_r", vmin=-limit_deg, vmax=limit_deg, shading="flat")
    ratio = np.abs(ds.declination_diff_deg.values) / ds.combined_uncertainty_deg.values
    if np.isfinite(ratio).any() and np.nanmax(ratio) > 1.0 > np.nanmin(ratio):
        ax.contour(x, y, np.ma.masked_invalid(ratio), levels=[1.0], colors="k", linewidths=0.8)
    draw_coastlines(ax, to_map, color="0.2", linewidth=0.6)
    fig = ax.figure
    bar = fig.colorbar(mesh, ax=ax, shrink=0.75, extend="both")
    bar.set_label(f"declination {ds.attrs['model_b']} minus {ds.attrs['model_a']} (°, east positive)")
    ax.set_title(f"Declination difference {ds.attrs['model_b']} − {ds.attrs['model_a']}, "
                 f"{ds.attrs['decimal_year']:.2f}, {ds.attrs['alt_km']:g} km\n"
                 "black line: difference = combined 1σ uncertainty of the two models", fontsize=9)
    return plain_text(fig)


def plot_route_difference(comparison, ax=None):
    """Profile of the declination difference along a route (:func:`headingref.compare.compare_route`).

    Each model other than the first is drawn as its declination minus the first's (degrees, east
    positive) against the distance along the route (NM), with a band of the combined 1 sigma
    uncertainty of the two models (dashed, ±) and the stretches beyond it shaded; thin vertical
    lines mark the waypoints. Returns the matplotlib Figure.
    """
    from matplotlib import rcParams
    from matplotlib.figure import Figure

    from . import plain_text

    samples, stretches = comparison.samples, comparison.stretches
    reference = samples.attrs.get("reference_model", str(samples.model.iloc[0]))
    if ax is None:
        ax = Figure(figsize=(9, 4.2), layout="constrained").add_subplot()
    others = [m for m in samples.model.cat.categories if m != reference]
    colours = rcParams["axes.prop_cycle"].by_key()["color"]
    for k, model in enumerate(others):
        part = samples[samples.model.astype(str) == model]
        colour = colours[k % len(colours)]
        x = part.distance_along_route_nm.to_numpy()
        ax.plot(x, part.declination_diff_deg.to_numpy(), color=colour, linewidth=1.4, label=f"{model} − {reference}")
        band = part.combined_uncertainty_deg.to_numpy()
        ax.plot(x, band, color=colour, linewidth=0.8, linestyle="--")
        ax.plot(x, -band, color=colour, linewidth=0.8, linestyle="--", label=f"± combined 1σ ({model}, {reference})")
        for row in stretches[stretches.model == model].itertuples(index=False):
            ax.axvspan(row.from_route_nm, row.to_route_nm, color=colour, alpha=0.15, linewidth=0)
    starts = samples.drop_duplicates("leg").distance_along_route_nm.to_numpy()
    for x in starts[1:]:
        ax.axvline(x, color="0.6", linewidth=0.6)
    ax.axhline(0.0, color="0.3", linewidth=0.6)
    ax.set_xlabel("distance along the route (NM)")
    ax.set_ylabel(f"declination minus {reference} (°, east positive)")
    ax.set_title("Declination difference between field models along the route\n"
                 "shaded: the difference exceeds the two models' combined 1σ uncertainty", fontsize=9)
    ax.legend(fontsize=8, loc="best")
    ax.grid(alpha=0.3)
    return plain_text(ax.figure)
