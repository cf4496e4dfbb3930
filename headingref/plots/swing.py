"""Figures for a compass swing: the deviation curve with readings, fit and residuals; the card.

- :func:`deviation_figure` (two panels): the observed deviations, the fitted curve, the curve left
  once B and C are removed, and the limit; below, the fit residuals per reading.
- :func:`card_figure`: the correction card as a printable sheet (save as .pdf with matplotlib's PDF
  backend): identification, for magnetic / steer compass, the terms the card keeps, both verdicts
  and a signature line.
- :func:`save_figure`: write a figure atomically (format from the file suffix).

>>> import numpy as np
>>> from headingref.swing import analyse_swing
>>> from headingref.plots.swing import deviation_figure, card_figure
>>> h = np.arange(0, 360, 30.0)
>>> result = analyse_swing(h, h - (1 + 3 * np.sin(np.radians(h))))
>>> fig = deviation_figure(result)
>>> len(fig.axes)
2
>>> from headingref.swing import CardDetails
>>> card = card_figure(result, details=CardDetails.make(aircraft="ZZ-INV", swung_by="A. Person"))
"""

from __future__ import annotations

import numpy as np

from ..swing import CardDetails, SwingAnalysis, _card_ident_rows
from . import plain_text, save_figure  # noqa: F401  (save_figure re-exported: the plotting modules all offer it)

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
        label=f"readings less B, C (max {analysis.max_residual_deg:.1f}°: {analysis.verdict_after_compensation})",
    )
    top.plot([], [], " ", label=f"as measured: max {analysis.max_deviation_deg:.1f}° ({analysis.verdict_as_measured})")
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
    return plain_text(fig)  # names from users drawn as typed


def card_figure(
    analysis_or_card,
    title: str = "Compass correction card",
    footer: str | None = None,
    details: CardDetails | None = None,
):
    """The card as a printable sheet: for each wanted magnetic heading, the compass heading to steer.

    ``analysis_or_card``: a :class:`~headingref.swing.SwingAnalysis` (the sheet then also carries
    the identification from ``details``, the terms the card keeps, both verdicts and a signature
    line) or a bare card DataFrame (the table alone). All user text is drawn as plain text.
    """
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    analysis = analysis_or_card if isinstance(analysis_or_card, SwingAnalysis) else None
    card = analysis.card if analysis is not None else analysis_or_card
    columns = len(card)
    plain = {"usetex": False, "parse_math": False}
    cells = [list(card.for_magnetic), list(card.steer_compass)]
    if analysis is None:
        fig = Figure(figsize=(max(4.0, 0.7 * columns + 1.6), 2.2), layout="constrained")
        ax = fig.subplots()
        ax.set_axis_off()
        table = ax.table(cellText=cells, rowLabels=["For magnetic", "Steer compass"], loc="center", cellLoc="center")
        table.auto_set_font_size(False)
        table.set_fontsize(11)
        table.scale(1.0, 1.8)
        ax.set_title(title, **plain)
    else:
        details = details or CardDetails()
        ident = [f"{k}: {v}" for k, v in _card_ident_rows(details, analysis)]
        bottom = [f"Card curve: {analysis.card_terms()}", *analysis.verdict_text().splitlines()]
        fig = Figure(figsize=(max(8.0, 0.65 * columns + 2.0), 6.0))
        fig.text(0.5, 0.965, title, ha="center", va="top", fontsize=14, weight="bold", **plain)
        fig.text(0.04, 0.89, "\n".join(ident), ha="left", va="top", fontsize=8.5, linespacing=1.5, **plain)
        ax = fig.add_axes((0.16, 0.40, 0.80, 0.13))
        ax.set_axis_off()
        table = ax.table(cellText=cells, rowLabels=["For magnetic", "Steer compass"], cellLoc="center", bbox=(0, 0, 1, 1))
        table.auto_set_font_size(False)
        table.set_fontsize(11)
        fig.text(0.04, 0.33, "\n".join(bottom), ha="left", va="top", fontsize=8.5, linespacing=1.5, **plain)
        fig.text(0.04, 0.07, f"Swung by: {details.swung_by or ''}", ha="left", fontsize=9, **plain)
        for x, label in ((0.04, ""), (0.40, "Signature"), (0.72, "Date")):
            fig.add_artist(Line2D([x + (0.12 if not label else 0.0), x + 0.24], [0.065, 0.065], color="black", linewidth=0.8))
            if label:
                fig.text(x, 0.035, label, ha="left", fontsize=8, **plain)
    if footer:
        fig.text(0.5, 0.005, footer, ha="center", fontsize=8, **plain)
    return plain_text(fig)  # names from users drawn as typed
