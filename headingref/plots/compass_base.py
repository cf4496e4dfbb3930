"""Figure of compass base upkeep: each base's surveys against the model, and the band the new mark stays valid in.

- :func:`plot_survey_history`: one panel per base of :func:`headingref.compass_base.base_upkeep`:
  the model's main-field variation over the years (grey), the same carried from the latest
  survey (the survey governs, the model supplies the change), the surveys (dots), the swing date
  and the band ``mark ± tolerance``.

>>> import matplotlib
>>> matplotlib.use("Agg")
>>> from headingref.compass_base import base_upkeep, make_site
>>> from headingref.plots.compass_base import plot_survey_history
>>> site = make_site("Invented base", 64.8, -147.6, "16.9E", "2020-06-01")
>>> upkeep = base_upkeep([site], "2026-12-02")
>>> fig = plot_survey_history(upkeep, [(site.name, 2020.42, 16.9)], 2026.92)
>>> len(fig.axes)
1
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence

import numpy as np
import pandas as pd

from ..elements import field_arrays
from . import plain_text, save_figure

__all__ = ["plot_survey_history", "save_figure"]


def plot_survey_history(upkeep: pd.DataFrame, surveys: Sequence[tuple[str, float, float]], swing_year: float,
                        model=None, allow_extrapolation: bool = False, valid_to: float | None = None):
    """Surveys, the model carried from the latest survey and the marked band, one panel per base.

    Parameters
    ----------
    upkeep : DataFrame
        From :func:`headingref.compass_base.base_upkeep` (``name, lat_deg, lon_deg, alt_km,
        survey_minus_model_deg, variation_to_mark_deg, tolerance_deg``).
    surveys : sequence of (name, decimal year, surveyed variation in degrees east positive)
    swing_year : decimal year of the planned swing
    model, allow_extrapolation : field model for the curves (default IGRF-14)
    valid_to : last decimal year drawn (default the model's end of validity)

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    surveys = pd.DataFrame(list(surveys), columns=["name", "year", "variation_deg"])
    if valid_to is None:
        valid_to = model.valid_to if model is not None and hasattr(model, "valid_to") else 2030.0
    fig = Figure(figsize=(5.5 * len(upkeep), 3.6))
    axes = fig.subplots(1, len(upkeep), squeeze=False)
    for ax, (_, base) in zip(axes[0], upkeep.iterrows(), strict=True):
        rows = surveys[surveys["name"] == base["name"]]
        start = float(rows["year"].min()) if len(rows) else swing_year
        years = np.linspace(start - 1.0, max(min(swing_year + 5.0, valid_to), start), 120)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # base_upkeep has already warned about the same dates
            d = field_arrays(np.full_like(years, base["lat_deg"]), np.full_like(years, base["lon_deg"]), years, base["alt_km"],
                             model=model, allow_extrapolation=allow_extrapolation)["declination_deg"]
        ax.plot(years, d, color="0.5", linewidth=1, label="model (main field)")
        ax.plot(years, d + base["survey_minus_model_deg"], color="C0", label="carried from latest survey")
        mark, tol = base["variation_to_mark_deg"], base["tolerance_deg"]
        ax.axhspan(mark - tol, mark + tol, color="C2", alpha=0.15, label=f"mark {mark:g}° ± {tol:g}°")
        ax.scatter(rows["year"], rows["variation_deg"], color="k", zorder=3, label="surveys")
        ax.axvline(swing_year, color="C1", linestyle=":", label="swing")
        ax.set_title(str(base["name"]), fontsize=10)
        ax.set_xlabel("year")
        ax.set_ylabel("variation (° east +)")
        ax.grid(True, alpha=0.3)
        ax.legend(fontsize=7)
    plain_text(fig)  # base names are drawn as typed, never as mathtext (before tight_layout draws them)
    fig.tight_layout()
    return fig
