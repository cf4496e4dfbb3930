"""Report job: a compass swing: coefficients A to E, verdict after compensation, correction card.

:func:`headingref.swing.read_swing_csv` and :func:`headingref.swing.analyse_swing`; the figure
is :func:`headingref.plots.swing.deviation_figure`. Files: ``swing_coefficients.csv``,
``swing_residuals.csv``, ``swing_card.csv``.
"""

from __future__ import annotations

import pandas as pd

from ..plots.swing import deviation_figure
from ..swing import COEFFICIENT_MEANINGS, analyse_swing, read_swing_csv
from .content import OutputFile, Part, Section, SummaryItem, Table, figure_from
from .context import Context

KEY, TITLE, TOPIC = "swing", "Compass swing", "swing"

_COEFFICIENT_COLUMNS = {"coefficient": "coefficient", "value_deg": "value °", "standard_error_deg": "std. error °", "meaning": "meaning"}
_CARD_COLUMNS = {"for_magnetic": "for magnetic", "steer_compass": "steer compass", "deviation_deg": "deviation there °"}


def job(ctx: Context) -> Section:
    s = ctx.scenario.swing
    magnetic, compass, labels = read_swing_csv(s["file"])
    analysis = analyse_swing(magnetic, compass, limit_deg=s["limit_deg"], rows=labels)
    summary_row = analysis.summary_row()
    where = f" on {s['base']}" if s["base"] else ""
    verdict = str(analysis.verdict)
    passed = verdict.lower() == "pass"
    basis = "verdict on the deviation as measured" if analysis.verdict_basis == "as_measured" else \
        "verdict on the deviation after compensation"
    coeffs = analysis.curve.coefficients()
    table = pd.DataFrame({"coefficient": list(coeffs), "value_deg": list(coeffs.values()),
                          "standard_error_deg": list(analysis.coefficients.standard_error_deg),
                          "meaning": [COEFFICIENT_MEANINGS[k] for k in coeffs]})
    return Section(
        KEY, TITLE, TOPIC,
        summary=[SummaryItem(
            f"{verdict.upper()} ({basis}); largest deviation as measured {analysis.max_deviation_deg:.1f}° (limit "
            f"{analysis.limit_deg:g}°), after B and C are removed {analysis.max_residual_deg:.1f}° (limit "
            f"{analysis.compensated_limit_deg:g}°).", f"Compass swing{where}", "" if passed else "bad")],
        parts=[
            Part(text=[
                f"{len(magnetic)} readings{where}; deviation east positive (magnetic = compass + deviation), fitted as "
                "A + B sin h + C cos h + D sin 2h + E cos 2h by least squares."], items=analysis.verdict_text().splitlines(),
                tables=[Table(table, _COEFFICIENT_COLUMNS)],
                figures=[figure_from(deviation_figure(analysis), "deviation curve", "Deviations, fitted curve and residuals.")]),
            Part("Correction card", tables=[Table(analysis.card, _CARD_COLUMNS)]),
        ],
        files=[OutputFile("swing_coefficients.csv", summary_row), OutputFile("swing_residuals.csv", analysis.readings),
               OutputFile("swing_card.csv", analysis.card)],
        notes=list(analysis.notes),
        tables={"swing_coefficients": summary_row, "swing_readings": analysis.readings, "swing_card": analysis.card},
    )
