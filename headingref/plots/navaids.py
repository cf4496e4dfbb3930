"""Map of VOR stations coloured by the difference between variation and station declination.

- :func:`navaid_map_figure`: the stations on the shipped coastline (polar stereographic when they
  all lie poleward of 55 degrees, an oblique stereographic region otherwise), each dot coloured
  by ``difference_deg`` (variation minus station declination, east positive) on a diverging scale
  centred on zero, stations over the tolerance ringed, those due within the horizon ringed dashed.

>>> import pandas as pd
>>> from headingref.navaids import check_navaids
>>> from headingref.plots.navaids import navaid_map_figure
>>> stations = pd.DataFrame({"ident": ["XQA", "XQB"], "lat": [64.8, 61.0], "lon": [-147.6, -140.0],
...                          "station_declination_deg": [20.0, 15.0]})
>>> fig = navaid_map_figure(check_navaids(stations, "2026-12-02", horizon_years=3))
>>> len(fig.axes) >= 1
True
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..navaids import NavaidCheck
from . import plain_text

__all__ = ["navaid_map_figure"]


def _extent(lat: np.ndarray, lon: np.ndarray):
    """Map kind and extent that hold every station with a margin."""
    if lat.min() >= 55.0:
        return "north", max(50.0, float(np.floor(lat.min() - 3.0)))
    if lat.max() <= -55.0:
        return "south", min(-50.0, float(np.ceil(lat.max() + 3.0)))
    # longitudes: the smallest arc holding them all (may cross the antimeridian)
    ordered = np.sort(np.mod(lon, 360.0))
    gaps = np.diff(np.r_[ordered, ordered[0] + 360.0])
    widest = int(np.argmax(gaps))
    west, east = ordered[(widest + 1) % ordered.size], ordered[widest]
    pad_lat = max(2.0, 0.1 * (lat.max() - lat.min()))
    lat_min, lat_max = max(-89.0, lat.min() - pad_lat), min(89.0, lat.max() + pad_lat)
    span = np.mod(east - west, 360.0)
    pad_lon = max(3.0, 0.1 * span)
    lon_min = ((west - pad_lon + 180.0) % 360.0) - 180.0
    lon_max = ((east + pad_lon + 180.0) % 360.0) - 180.0
    if span + 2 * pad_lon >= 359.0:
        lon_min, lon_max = -180.0, 180.0
    return "region", (float(lat_min), float(lat_max), float(lon_min), float(lon_max))


def navaid_map_figure(result: NavaidCheck, label_limit: int = 30):
    """Stations coloured by ``difference_deg``; over-tolerance ringed, due-within-horizon ringed dashed.

    Parameters
    ----------
    result : NavaidCheck
        From :func:`headingref.navaids.check_navaids`.
    label_limit : int
        Idents drawn beside the dots for at most this many stations (the worst first).

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib import colors

    from .basemap import map_axes, scatter_lonlat

    t = result.table
    if t.empty:
        raise InputError("no stations to map")
    lat, lon = t["lat"].to_numpy(float), t["lon"].to_numpy(float)
    diff = t["difference_deg"].to_numpy(float)
    tol = result.summary["tolerance_deg"]
    kind, extent = _extent(lat, lon)
    ax, to_map = map_axes(kind, extent, figsize=(8.0, 7.0))
    fig = ax.figure
    limit = max(tol * 1.5, float(np.nanmax(np.abs(diff))) if diff.size else tol)
    norm = colors.TwoSlopeNorm(vcenter=0.0, vmin=-limit, vmax=limit)
    dots = scatter_lonlat(ax, to_map, lon, lat, c=diff, cmap="PuOr_r", norm=norm, s=28, edgecolors="#333333",
                          linewidths=0.4, zorder=5)
    over = t["exceeds"].to_numpy(bool)
    due = (t["realign_date"].to_numpy(object) != "") & ~over
    if over.any():
        scatter_lonlat(ax, to_map, lon[over], lat[over], s=110, facecolors="none", edgecolors="#b5462f", linewidths=1.4,
                       zorder=6, label=f"|difference| > {tol:g}° now")
    if due.any():
        scatter_lonlat(ax, to_map, lon[due], lat[due], s=110, facecolors="none", edgecolors="#1b6f8a", linewidths=1.0,
                       linestyles="--", zorder=6, label="exceeds within the horizon")
    worst = np.argsort(-np.abs(diff), kind="stable")[:label_limit]
    for i in worst:
        x, y = to_map.transform(lon[i], lat[i])
        ax.annotate(str(t["ident"].iat[i]), (x, y), xytext=(4, 3), textcoords="offset points", fontsize=7, zorder=7)
    fig.colorbar(dots, ax=ax, shrink=0.7, label="variation − station declination (°, east positive)")
    if over.any() or due.any():
        ax.legend(loc="lower left", fontsize=8)
    s = result.summary
    ax.set_title(f"VOR station declination vs {s['model']} variation on {s['date']} "
                 f"(tolerance ±{tol:g}°, horizon to {s['forecast_end']})", fontsize=9)
    return plain_text(fig)
