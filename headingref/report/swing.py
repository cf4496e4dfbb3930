"""Report job: a compass swing: coefficients A to E, both verdicts, the correction card.

:func:`headingref.swing.swing_from_scenario` runs the ``[swing]`` section (linked to the
``[compass_bases]`` file for the base's marked variation and status); the figure is
:func:`headingref.plots.swing.deviation_figure`. Two deviations are judged, each against its limit:
as measured (what the compass shows today) and after compensation (B and C removed: a
prediction until a check swing confirms it); the section says which one the verdict uses. When the
handbook formulas and least squares give different coefficients both are shown. Files:
``swing_coefficients.csv``, ``swing_residuals.csv``, ``swing_card.csv`` and ``swing_card.html``
(the print-ready card of :func:`headingref.swing.card_html`).
"""

from __future__ import annotations

import pandas as pd

from ..plots.swing import deviation_figure
from ..swing import COEFFICIENT_MEANINGS, card_html, swing_from_scenario
from .content import OutputFile, Part, Section, SummaryItem, Table, figure_from
from .context import Context

KEY, TITLE, TOPIC = "swing", "Compass swing", "swing"

_COEFFICIENT_COLUMNS = {"coefficient": "coefficient", "value_deg": "value °", "standard_error_deg": "std. error °", "meaning": "meaning"}
_COMPARISON_COLUMNS = {"coefficient": "coefficient", "least_squares_deg": "least squares °", "handbook_deg": "handbook °",
                       "difference_deg": "handbook − least squares °"}
_CARD_COLUMNS = {"for_magnetic": "for magnetic", "steer_compass": "steer compass", "deviation_deg": "deviation there °"}
_IDENT_COLUMNS = {"item": "identification", "value": "as on the card"}


def _identification(details) -> pd.DataFrame:
    base = details.base
    if details.base_marked_variation:
        base += f" (marked variation {details.base_marked_variation}, surveyed {details.base_survey_date})"
    rows = [("Aircraft", details.aircraft), ("Compass (serial)", details.compass), ("Compass base", base),
            ("Swing date", details.swing_date), ("Conditions", details.conditions), ("Swung by", details.swung_by),
            ("Base status", details.base_status)]
    return pd.DataFrame([{"item": k, "value": v or "not stated"} for k, v in rows if v or k != "Base status"])


def job(ctx: Context) -> Section:
    sc = ctx.scenario
    s = sc.swing
    bases = sc.compass_bases["file"] if sc.compass_bases else None
    analysis, details = swing_from_scenario(s, bases_file=bases, model=ctx.model, allow_extrapolation=sc.allow_extrapolation,
                                            bases_columns=sc.compass_bases["columns"] if sc.compass_bases else None)
    summary_row = analysis.summary_row()
    where = f" on {s['base']}" if s["base"] else ""
    aircraft = f" of {details.aircraft}" if details.aircraft else ""
    passed = str(analysis.verdict).lower() == "pass"
    basis = "as measured" if analysis.verdict_basis == "as_measured" else "after compensation"
    summary = [SummaryItem(
        f"{analysis.verdict.upper()} on the deviation {basis}; as measured largest {analysis.max_deviation_deg:.1f}° (limit "
        f"{analysis.limit_deg:g}°, {analysis.verdict_as_measured.upper()}), after B and C are removed {analysis.max_residual_deg:.1f}° "
        f"(limit {analysis.compensated_limit_deg:g}°, {analysis.verdict_after_compensation.upper()}, a prediction).",
        f"Compass swing{aircraft}{where}", "" if passed else "bad")]
    overdue = "OVERDUE" in details.base_status
    if overdue:
        summary.append(SummaryItem(f"{details.base_status}. Resurvey the base before relying on this swing.",
                                   "Swing base overdue", "bad"))
    coeffs = analysis.curve.coefficients()
    table = pd.DataFrame({"coefficient": list(coeffs), "value_deg": list(coeffs.values()),
                          "standard_error_deg": list(analysis.coefficients.standard_error_deg),
                          "meaning": [COEFFICIENT_MEANINGS[k] for k in coeffs]})
    method = "least squares" if analysis.method == "least_squares" else f"the handbook's {analysis.handbook_formula} formulas"
    main = Part(
        text=[f"{len(analysis.readings)} readings{where}; deviation east positive (magnetic = compass + deviation), fitted "
              f"as A + B sin h + C cos h + D sin 2h + E cos 2h by {method}. Both deviations are judged, each against its "
              f"limit; the verdict uses the deviation {basis}. The deviation after compensation is what is left once the "
              "compensator removes B and C: a prediction that a check swing must confirm."],
        items=analysis.verdict_text().splitlines(),
        tables=[Table(table, _COEFFICIENT_COLUMNS)],
        figures=[figure_from(deviation_figure(analysis), "deviation curve", "Deviations, fitted curve and residuals.")])
    parts = [main]
    if analysis.methods_differ:
        parts.append(Part(
            "Least squares and the handbook formulas differ",
            text=[f"The readings allow the handbook's {analysis.handbook_formula} formulas too; their coefficients differ "
                  "from the least-squares ones (the handbook's B and C use the cardinal headings only, least squares every "
                  f"reading). The section uses {method}."],
            tables=[Table(analysis.comparison, _COMPARISON_COLUMNS)]))
    if analysis.card_after_compensation:
        card_title = "Correction card after compensation (a prediction)"
        card_text = ("A prediction for the compass once the compensator has removed B and C; a check swing after "
                     "adjusting the compensator must confirm it before the card is used.")
    else:
        card_title = "Correction card (as swung)"
        card_text = "The deviation as swung, before any compensator adjustment."
    card_text += f" Card curve: {analysis.card_terms()}."
    card_part = Part(card_title, text=[card_text], tables=[Table(_identification(details), _IDENT_COLUMNS),
                                                           Table(analysis.card, _CARD_COLUMNS)])
    if overdue:
        card_part.items.append(f"Warning: {details.base_status}.")
    card_part.text.append("A print-ready card with a signature line is written as swing_card.html.")
    parts.append(card_part)
    return Section(
        KEY, TITLE, TOPIC,
        summary=summary,
        parts=parts,
        files=[OutputFile("swing_coefficients.csv", summary_row), OutputFile("swing_residuals.csv", analysis.readings),
               OutputFile("swing_card.csv", analysis.card), OutputFile("swing_card.html", card_html(analysis, details))],
        notes=list(analysis.notes),
        tables={"swing_coefficients": summary_row, "swing_readings": analysis.readings, "swing_card": analysis.card},
    )
