"""Figures of the field at one place through time and of a regional declination map.

Both return :class:`matplotlib.figure.Figure` objects made without pyplot, so they are safe to
draw from a widget callback and to show with ``display(fig)`` or save with
:func:`headingref.plots.save_figure`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from matplotlib.figure import Figure

from . import plain_text

CAUTION_NT = 6000.0  # WMM2025 technical report: caution zone H < 6000 nT
BLACKOUT_NT = 2000.0  # WMM2025 technical report: blackout zone H < 2000 nT


def field_history_figure(history: pd.DataFrame, title: str = "") -> Figure:
    """Declination, H and the declination uncertainty against the year, from a ``field()`` table.

    ``history`` is what :func:`headingref.field` returns for one place and many dates (columns
    ``decimal_year``, ``declination_deg``, ``horizontal_nT``, ``declination_uncertainty_deg``).
    Declination is east positive. The caution and blackout thresholds of H are drawn dashed.
    """
    fig = Figure(figsize=(9.0, 7.0), layout="constrained")
    axes = fig.subplots(3, 1, sharex=True)
    years = history["decimal_year"].to_numpy()
    axes[0].plot(years, history["declination_deg"].to_numpy(), color="C0")
    axes[0].axhline(0.0, color="0.6", lw=0.6)
    axes[0].set_ylabel("declination (°, east +)")
    axes[1].plot(years, history["horizontal_nT"].to_numpy(), color="C2")
    axes[1].axhline(CAUTION_NT, ls="--", c="#b8860b", lw=0.8, label="caution (H < 6000 nT)")
    axes[1].axhline(BLACKOUT_NT, ls="--", c="#b22222", lw=0.8, label="blackout (H < 2000 nT)")
    axes[1].set_ylabel("H (nT)")
    axes[1].set_ylim(bottom=0.0)
    axes[1].legend(loc="best", fontsize=8)
    sigma = history["declination_uncertainty_deg"].to_numpy(dtype=float)
    axes[2].plot(years, np.where(np.isfinite(sigma), sigma, np.nan), color="C3")
    axes[2].set_ylabel("declination uncertainty (°)")
    axes[2].set_xlabel("year")
    for ax in axes:
        ax.grid(True, lw=0.3)
    if title:
        fig.suptitle(title)
    return plain_text(fig)


def declination_map_figure(grid, place: tuple[float, float] | None = None, step_deg: float = 2.0, title: str = "") -> Figure:
    """Filled isogonic map of ``grid.declination_deg`` (an xarray Dataset from ``field_grid``).

    Longitude/latitude axes (plate carrée), contours every ``step_deg`` degrees, east positive
    in red, west in blue; ``place`` (lat, lon) is marked with a star.
    """
    fig = Figure(figsize=(9.0, 5.0), layout="constrained")
    ax = fig.add_subplot()
    declination = grid["declination_deg"]
    if "time" in declination.dims:
        declination = declination.isel(time=0)
    values = declination.transpose("lat", "lon").to_numpy()
    finite = values[np.isfinite(values)]
    bound = max(step_deg, float(np.ceil(np.abs(finite).max() / step_deg) * step_deg)) if finite.size else step_deg
    levels = np.arange(-bound, bound + step_deg / 2, step_deg)
    filled = ax.contourf(grid["lon"].to_numpy(), grid["lat"].to_numpy(), values, levels=levels, cmap="RdBu_r")
    fig.colorbar(filled, ax=ax, label="declination (°, east +)")
    if place is not None:
        ax.plot(place[1], place[0], "k*", ms=12)
    ax.set_xlabel("longitude (°, east +)")
    ax.set_ylabel("latitude (°, north +)")
    ax.set_title(title or "declination (variation), east positive")
    return plain_text(fig)
