"""Report job: the heading-reference error budget as maps over the cap, steady and in the turn.

:func:`headingref.detector.heading_error_grid` twice (steady level flight and the scenario's
turn, settings from :meth:`headingref.scenario.Scenario.heading_error_options`), drawn with
:func:`headingref.plots.zones.plot_error_map`. For each case the table says whether slaving is on
(``slaving_on``: off above the cut-out bank, when the detector's tilt error never reaches the
gyro), which term dominates the budget where it exceeds the limit (``dominant_term``) and whether
the budget sits at a ceiling there (``saturated_by``: a map that does not change with the bank or
the field). File: ``error_budget_areas.csv``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..detector import heading_error_grid
from ..plots.zones import plot_error_map
from .content import OutputFile, Part, Section, Table, figure_from
from .context import Context

KEY, TITLE, TOPIC = "error-budget", "Heading-reference error budget", ""

_COLUMNS = {"case": "case", "limit_deg": "limit °", "area_exceeding_limit_km2": "area above limit km²",
            "slaving": "slaving", "dominant_term": "largest term where above the limit",
            "saturated_by": "budget saturated by", "saturated_percent": "share of that area saturated %"}
_TERMS = {"residual_field": "residual aircraft field", "model_uncertainty": "model declination uncertainty",
          "slaving_drift": "slaving drift of the tilt error", "none": "nothing", "slaving_rate": "slaving rate × duration",
          "": "—"}


def _dominant(grid) -> str:
    """The term that is largest over most nodes where the budget exceeds the limit ('' when nowhere)."""
    from ..detector import TERMS

    codes = grid["dominant_term"].values[grid["exceeds_limit"].values.astype(bool)]
    codes = codes[codes >= 0]
    return TERMS[int(np.bincount(codes, minlength=len(TERMS)).argmax())] if codes.size else ""


def _slaving(grid) -> str:
    on = grid["slaving_on"].values
    on = on[np.isfinite(grid["budget_rss_deg"].values)]
    return "on" if on.all() else "cut out" if not on.any() else "partly cut out"


def job(ctx: Context) -> Section:
    sc = ctx.scenario
    b = ctx.budget
    cap = sc.zones["cap"] if sc.zones else "north"
    step = sc.zones["step_deg"] if sc.zones else 0.5
    alt = sc.routes["alt"] if sc.routes else 0.0
    options = {"resolution_deg": step, "alt_km": alt, **ctx.common}
    cases = {"steady level flight": sc.heading_error_options(manoeuvre=False),
             f"{ctx.manoeuvre}, {b['turn_duration_s']:g} s": sc.heading_error_options()}
    grids = {label: heading_error_grid(cap, ctx.date, **settings, **options) for label, settings in cases.items()}
    rows = []
    for label, g in grids.items():
        rows.append({"case": label, "limit_deg": b["limit_deg"], "area_exceeding_limit_km2": g.attrs["area_exceeding_limit_km2"],
                     "slaving": _slaving(g), "dominant_term": _TERMS[_dominant(g)],
                     "saturated_by": _TERMS[g.attrs.get("saturated_by", "none")],
                     "saturated_percent": 100.0 * g.attrs.get("saturated_share_beyond_limit", 0.0),
                     "combination": g.attrs.get("combination", "")})
    table = pd.DataFrame(rows)
    first = next(iter(grids.values()))
    edge = float(np.nanmin(np.abs(first["lat"].values[np.isfinite(first["budget_rss_deg"].values)])))
    figures = [figure_from(plot_error_map(g, title=f"{label}: error budget, contour {b['limit_deg']:g}°"),
                           f"error budget map, {label}", f"Combined heading error (RSS), {label}.")
               for label, g in grids.items()]
    turn = list(grids.values())[1]
    cutout = b["slaving_cutout_bank_deg"]
    if _slaving(turn) == "cut out":
        turn_text = (f"In this turn the bank ({b['bank_angle_deg']:g}°) is above the slaving cut-out ({cutout:g}°): slaving "
                     "is off, the gyro holds its heading and the detector's tilt error does not reach it, so the turn's "
                     "budget is the steady one (the gyro's own drift over the turn is not part of this budget). Set a bank "
                     "at or below the cut-out to see the slaving drift.")
    else:
        turn_text = (f"In this turn the bank ({b['bank_angle_deg']:g}°) is at or below the slaving cut-out ({cutout:g}°): "
                     f"slaving stays on at {b['slaving_rate_deg_per_min']:g}°/min and drags the gyro toward the tilted "
                     f"detector by at most rate × duration = {b['slaving_rate_deg_per_min'] * b['turn_duration_s'] / 60.0:g}° "
                     "or the tilt error, whichever is smaller.")
    saturated = [r for r in rows if r["saturated_by"] != _TERMS["none"] and r["saturated_percent"] >= 1.0]
    if saturated:
        turn_text += " " + " ".join(
            f"Case '{r['case']}': where the budget exceeds the limit, {r['saturated_percent']:.0f}% of the area sits at a "
            f"ceiling ({r['saturated_by']}), so a larger bank or a weaker field changes nothing there (the map is flat in that part)."
            for r in saturated)
    return Section(
        KEY, TITLE, TOPIC,
        parts=[Part(text=[
            f"The heading-reference error budget at {alt:.1f} km over the {cap} cap (to about {edge:.0f}°): residual "
            f"aircraft field {b['residual_field_nT']:g} nT (error up to asin(ΔB/H)), the field model's declination "
            f"uncertainty, and in the turn ({ctx.manoeuvre} for {b['turn_duration_s']:g} s) the detector's tilt error, which "
            "grows with the tangent of the inclination and reaches the slaved heading only through slaving. "
            f"The contour marks where the combined error (root-sum-square) exceeds {b['limit_deg']:g}°.", turn_text],
            tables=[Table(table, _COLUMNS)], figures=figures)],
        files=[OutputFile("error_budget_areas.csv", table)],
        tables={"budget_areas": table},
    )
