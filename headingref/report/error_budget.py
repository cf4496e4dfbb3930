"""Report job: the heading-reference error budget as maps over the cap, steady and in the turn.

:func:`headingref.detector.heading_error_grid` twice (steady level flight and the scenario's
turn, settings from :meth:`headingref.scenario.Scenario.heading_error_options`), drawn with
:func:`headingref.plots.zones.plot_error_map`. File: ``error_budget_areas.csv``.
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
            "combination": "how the terms combine"}


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
    table = pd.DataFrame([{"case": label, "limit_deg": b["limit_deg"], "area_exceeding_limit_km2": g.attrs["area_exceeding_limit_km2"],
                           "combination": g.attrs.get("combination", "")} for label, g in grids.items()])
    first = next(iter(grids.values()))
    edge = float(np.nanmin(np.abs(first["lat"].values[np.isfinite(first["budget_rss_deg"].values)])))
    figures = [figure_from(plot_error_map(g, title=f"{label}: error budget, contour {b['limit_deg']:g}°"),
                           f"error budget map, {label}", f"Combined heading error (RSS), {label}.")
               for label, g in grids.items()]
    return Section(
        KEY, TITLE, TOPIC,
        parts=[Part(text=[
            f"The heading-reference error budget at {alt:.1f} km over the {cap} cap (to about {edge:.0f}°): residual "
            f"aircraft field {b['residual_field_nT']:g} nT (error up to asin(ΔB/H)), the WMM declination uncertainty, and "
            f"in the turn ({ctx.manoeuvre} for {b['turn_duration_s']:g} s) the detector's tilt error, which grows with the "
            f"tangent of the inclination, as far as slaving carries it into the gyro ({ctx.slaving}). "
            f"The contour marks where the combined error exceeds {b['limit_deg']:g}°."],
            tables=[Table(table, _COLUMNS)], figures=figures)],
        files=[OutputFile("error_budget_areas.csv", table)],
        tables={"budget_areas": table},
    )
