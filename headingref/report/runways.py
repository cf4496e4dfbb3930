"""Report job: runway designators against the magnetic azimuth, and the changes within the horizon.

:func:`headingref.runways.check_runways`; the figure is
:func:`headingref.plots.runways.runway_bearing_figure`. Rows the check could not use (a bad
designator, a missing or non-finite coordinate) are listed with their reasons, as the
``runways`` command lists them under "rows not checked". Files: ``runways.csv``,
``runway_changes.csv``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..plots.runways import runway_bearing_figure
from ..runways import check_runways
from .content import OutputFile, Part, Section, SummaryItem, Table, capped, figure_from, flag
from .context import SUMMARY_LIMIT, TABLE_LIMIT, Context

KEY, TITLE, TOPIC = "runways", "Runway designators", "runways"

_COLUMNS = {
    "airport": "airport", "runway": "runway", "true_bearing_deg": "true °", "variation_deg": "variation °",
    "magnetic_bearing_deg": "magnetic °", "designator_implied": "implied", "verdict": "verdict", "margin_deg": "margin °",
    "change_date": "changes on", "next_designator": "to", "pair_check": "pair", "status": "status", "reason": "reason",
}
_NOT_CHECKED_COLUMNS = {"input_row": "row", "airport": "airport", "runway": "runway", "reason": "reason"}


def _text(value) -> str:
    return "" if value is None or (pd.api.types.is_scalar(value) and pd.isna(value)) else str(value)


def _level(row: pd.Series) -> str:
    if row["status"] == "error" or row["verdict"] == "mismatch":
        return "bad"
    changing = _text(row["change_date"]) != ""
    return "warn" if flag(row["on_boundary"]) or changing or row["status"] == "warning" else ""


def _summary(table: pd.DataFrame, changes: pd.DataFrame, result) -> list[SummaryItem]:
    ok = (table["status"] != "error").to_numpy()
    on_boundary = np.array([flag(v) for v in table["on_boundary"]], dtype=bool)
    matches = np.array([flag(v) for v in table["designator_matches"]], dtype=bool)
    stale = table[ok & ~matches & ~on_boundary]
    items = [SummaryItem(f"out of date now; magnetic {row['magnetic_bearing_deg']:.1f}° implies {row['designator_implied']}.",
                         f"{row['airport']} {row['runway']}", "bad") for _, row in stale.iterrows()]
    items += [SummaryItem(f"becomes {row['next_designator']} on {row['change_date']}.", f"{row['airport']} {row['runway']}", "warn")
              for _, row in changes.iterrows()]
    items = capped(items, SUMMARY_LIMIT, "(see runways.csv and runway_changes.csv)")
    boundary = table[ok & on_boundary]
    if not boundary.empty:
        ends = [f"{a} {b}" for a, b in zip(boundary["airport"], boundary["runway"], strict=True)]
        more = f" and {len(ends) - SUMMARY_LIMIT} more" if len(ends) > SUMMARY_LIMIT else ""
        items.append(SummaryItem(f"{', '.join(ends[:SUMMARY_LIMIT])}{more}.", "On a rounding boundary (no verdict; check with the survey)", "warn"))
    bad = table[~ok]
    if not bad.empty:
        listed = "; ".join(f"{r['input_row']}: {r['reason']}" for _, r in bad.head(SUMMARY_LIMIT).iterrows())
        more = f"; and {len(bad) - SUMMARY_LIMIT} more" if len(bad) > SUMMARY_LIMIT else ""
        items.append(SummaryItem(f"{listed}{more}.", f"{len(bad)} runway row(s) not checked", "bad"))
    s = result.summary
    if not items:
        items.append(SummaryItem(f"All {s['rows']} runway ends match and none changes before {s['forecast_end']}."))
    if result.notes:
        items.append(SummaryItem(f"Forecast to {s['forecast_end']}: " + " ".join(result.notes)))
    return items


def job(ctx: Context) -> Section:
    r = ctx.scenario.runways
    kwargs = {"tolerance_deg": r["boundary_band_deg"]} if r["boundary_band_deg"] is not None else {}
    result = check_runways(str(r["file"]), ctx.date, horizon_years=r["horizon_years"], **kwargs, **ctx.common)
    table, changes = result.table, result.changes
    levels = [_level(row) for _, row in table.iterrows()]
    first, *rest = result.summary_text().splitlines()
    main = Part(text=[first], items=[line.strip() for line in rest])
    shown, shown_levels = table, levels
    if len(table) > TABLE_LIMIT:  # a large batch: list only the rows that need attention
        keep = [level != "" for level in levels]
        shown, shown_levels = table[keep], [level for level in levels if level]
        main.text.append(f"{len(shown)} of {len(table)} runway ends need attention and are listed; all are in runways.csv.")
    main.tables.append(Table(shown, _COLUMNS, shown_levels))
    if np.isfinite(table["magnetic_bearing_deg"].to_numpy(dtype=float)).any():
        main.figures.append(figure_from(runway_bearing_figure(result), "runway magnetic azimuth against time",
                                        "Magnetic azimuth of the chosen runway ends against time, with the rounding boundaries."))
    parts = [main]
    not_checked = table[table["status"] == "error"]
    if not not_checked.empty:
        parts.append(Part(f"Rows not checked ({len(not_checked)})", tables=[Table(not_checked, _NOT_CHECKED_COLUMNS, ["bad"] * len(not_checked))]))
    return Section(
        KEY, TITLE, TOPIC,
        summary=_summary(table, changes, result),
        parts=parts,
        files=[OutputFile("runways.csv", table), OutputFile("runway_changes.csv", changes)],
        notes=list(result.notes),
        tables={"runways": table, "runway_changes": changes},
    )
