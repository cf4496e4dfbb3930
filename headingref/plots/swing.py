"""Figures for a compass swing: the deviation curve with readings, fit and residuals; the card.

- :func:`deviation_figure` (two panels): the observed deviations, the fitted curve, the curve left
  once B and C are removed, and the limit; below, the fit residuals per reading.
- :func:`card_figure`: the correction card as a printable table (for magnetic / steer compass).
- :func:`save_figure`: write a figure atomically (format from the file suffix).

>>> import numpy as np
>>> from headingref.swing import analyse_swing
>>> from headingref.plots.swing import deviation_figure, card_figure
>>> h = np.arange(0, 360, 30.0)
>>> result = analyse_swing(h, h - (1 + 3 * np.sin(np.radians(h))))
>>> fig = deviation_figure(result)
>>> len(fig.axes)
2
>>> card = card_figure(result, title="Invented aircraft, standby compass")
"""

from __future__ import annotations

import numpy as np

from ..swing import SwingAnalysis
from . import save_figure  # noqa: F401  (re-exported: the plotting modules all offer it)

_EAST_COLOUR = "#1b6f8a"
_FIT_COLOUR = "#b5462f"
_RESIDUAL_COLOUR = "#6a6a6a"


def deviation_figure(analysis: SwingAnalysis, title: str | None = None):
    """Deviation (east positive) against magnetic heading: readings, fit, after B and C, residuals."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(8.0, 6.0), layout="constrained")
    top, bottom = fig.subplots(2, 1, sharex=True, height_ratios=[3, 1])
    grid = np.linspace(0.0, 360.0, 721)
    readings = analysis.readings
    top.axhline(0.0, color="black", linewidth=0.6)
    for sign in (1, -1):
        top.axhline(sign * analysis.limit_deg, color=_FIT_COLOUR, linewidth=0.8, linestyle=":")
    top.plot(grid, analysis.curve.deviation_deg(grid), color=_FIT_COLOUR, label="fitted curve A..E")
    top.plot(
        grid,
        analysis.curve.without_semicircular().deviation_deg(grid),
        color=_FIT_COLOUR,
        linestyle="--",
        linewidth=1.0,
        label="after B and C removed",
    )
    top.plot(readings.magnetic_heading_deg, readings.deviation_deg, "o", color=_EAST_COLOUR, label="readings")
    top.plot(
        readings.magnetic_heading_deg,
        readings.residual_after_bc_deg,
        "x",
        color=_EAST_COLOUR,
        label=f"readings less B, C (max {analysis.max_residual_deg:.1f}°: {analysis.verdict})",
    )
    top.set_ylabel("deviation, degrees (+ east)")
    top.legend(loc="best", fontsize="small")
    c = analysis.curve
    top.set_title(
        title
        or f"Compass swing: A {c.A_deg:+.2f}°  B {c.B_deg:+.2f}°  C {c.C_deg:+.2f}°  D {c.D_deg:+.2f}°  E {c.E_deg:+.2f}°"
    )
    bottom.axhline(0.0, color="black", linewidth=0.6)
    bottom.bar(readings.magnetic_heading_deg, readings.fit_residual_deg, width=4.0, color=_RESIDUAL_COLOUR)
    bottom.set_ylabel("fit residual, °")
    bottom.set_xlabel("magnetic heading, degrees")
    bottom.set_xlim(0.0, 360.0)
    bottom.set_xticks(np.arange(0, 361, 45))
    return fig


def card_figure(analysis_or_card, title: str = "Compass correction card", footer: str | None = None):
    """The card as a table: for each wanted magnetic heading, the compass heading to steer.

    ``analysis_or_card``: a :class:`~headingref.swing.SwingAnalysis` or the card DataFrame.
    """
    from matplotlib.figure import Figure

    card = analysis_or_card.card if isinstance(analysis_or_card, SwingAnalysis) else analysis_or_card
    columns = len(card)
    fig = Figure(figsize=(max(4.0, 0.7 * columns + 1.6), 2.2), layout="constrained")
    ax = fig.subplots()
    ax.set_axis_off()
    cells = [list(card.for_magnetic), list(card.steer_compass)]
    table = ax.table(
        cellText=cells,
        rowLabels=["For magnetic", "Steer compass"],
        loc="center",
        cellLoc="center",
    )
    table.auto_set_font_size(False)
    table.set_fontsize(11)
    table.scale(1.0, 1.8)
    ax.set_title(title)
    if footer is None and isinstance(analysis_or_card, SwingAnalysis):
        footer = f"Largest residual after B and C: {analysis_or_card.max_residual_deg:.1f}° ({analysis_or_card.verdict})"
    if footer:
        fig.text(0.5, 0.02, footer, ha="center", fontsize=8)
    return fig

