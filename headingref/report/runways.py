"""Report job: runway designators against the magnetic azimuth, runway by runway, and every change within the horizon.

:func:`headingref.runways.check_runways` (with the scenario's band: ``boundary_band_deg`` or
``band_sigmas``, and its column mapping); the figure is
:func:`headingref.plots.runways.runway_bearing_figure`. A runway is renamed as a pair, so the
page leads with one decision per runway (``runway_id``, the runway's magnetic azimuth that both
ends are decided on, the implied pair, the verdict, since when a stale designator no longer fits
and every change within the horizon), then every change as its own row, then the ends. The
verdicts (:data:`headingref.runways.VERDICTS`) are put in words: *still fits, near a boundary*
(``match near boundary``) against *no longer fits, within the band* (``mismatch within band``).
``last_fit_date`` separates an old painting ("stale since 2014") from a data error ("never
fitted since 1900-01-01", the model's start). Rows the check could not use are listed with their
reasons, as the ``runways`` command lists them under "rows not checked". Files: ``runways.csv``,
``runway_changes.csv``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..plots.runways import runway_bearing_figure
from ..runways import check_runways
from .content import OutputFile, Part, Section, SummaryItem, Table, capped, figure_from
from .context import SUMMARY_LIMIT, TABLE_LIMIT, Context

KEY, TITLE, TOPIC = "runways", "Runway designators", "runways"

VERDICT_WORDS = {
    "match": "fits",
    "match near boundary": "still fits, near a boundary",
    "mismatch within band": "no longer fits, within the band",
    "mismatch": "no longer fits",
    "": "not checked",
}
"""The verdicts of :func:`headingref.runways.check_runways` in words."""

_RUNWAY_COLUMNS = {
    "airport": "airport", "runway_id": "runway", "runway_magnetic_deg": "runway magnetic °", "variation_deg": "variation °",
    "implied": "implied", "verdict_text": "verdict", "margin_deg": "margin to boundary °", "band_deg": "band °",
    "last_fit_text": "painted designator last fitted", "changes_text": "changes within the horizon", "pair_check": "pair check",
}
_END_COLUMNS = {
    "airport": "airport", "runway": "end", "runway_id": "runway", "true_bearing_deg": "true °", "variation_deg": "variation °",
    "magnetic_bearing_deg": "end's own magnetic °", "runway_magnetic_deg": "decided on °", "designator_implied": "implied",
    "verdict": "verdict", "last_fit_date": "last fitted", "all_changes": "changes", "pair_check": "pair", "status": "status",
    "reason": "reason",
}
_CHANGE_COLUMNS = {"change_date": "changes on", "airport": "airport", "runway_id": "runway", "change": "designators",
                   "years_to_change": "in years"}
_NOT_CHECKED_COLUMNS = {"input_row": "row", "airport": "airport", "runway": "runway", "reason": "reason"}


def _text(value) -> str:
    return "" if value is None or (pd.api.types.is_scalar(value) and pd.isna(value)) else str(value)


def _last_fit_words(value: str, check_date: str) -> str:
    value = _text(value)
    if not value:
        return ""
    if value.startswith("not since"):
        return f"never fitted {value.replace('not ', '')} (likely a data error)"
    return f"stale since {value}" if value < check_date else value


def _change_events(changes: pd.DataFrame) -> pd.DataFrame:
    """One row per runway and change date: both ends' designators before and after ('25/07 → 24/06')."""
    if changes.empty:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in (*_CHANGE_COLUMNS, "airport")})
    grouped = changes.groupby(["airport", "runway_id", "change_date"], sort=False)
    rows = [{"change_date": date, "airport": airport, "runway_id": rid,
             "change": f"{'/'.join(g['designator_before'])} → {'/'.join(g['next_designator'])}",
             "after": "/".join(g["next_designator"]), "years_to_change": float(g["years_to_change"].iloc[0])}
            for (airport, rid, date), g in grouped]
    return pd.DataFrame(rows).sort_values(["change_date", "airport", "runway_id"], kind="stable").reset_index(drop=True)


def _runway_table(table: pd.DataFrame, events: pd.DataFrame, check_date: str) -> pd.DataFrame:
    """One row per runway (reciprocal ends together; an unpaired end is its own runway)."""
    ok = table[table["status"] != "error"]
    rows = []
    for (airport, rid), g in ok.groupby(["airport", "runway_id"], sort=False):
        first = g.iloc[0]
        mine = events[(events["airport"] == airport) & (events["runway_id"] == rid)]
        rows.append({
            "airport": airport, "runway_id": rid, "runway_magnetic_deg": first["runway_magnetic_deg"],
            "variation_deg": first["variation_deg"], "implied": "/".join(g["designator_implied"]), "verdict": first["verdict"],
            "verdict_text": VERDICT_WORDS.get(first["verdict"], first["verdict"]), "margin_deg": first["margin_deg"],
            "band_deg": first["band_deg"], "last_fit_date": first["last_fit_date"],
            "last_fit_text": _last_fit_words(first["last_fit_date"], check_date),
            "changes_text": "; ".join(f"{d}: {c}" for d, c in zip(mine["change_date"], mine["change"], strict=True)),
            "first_change": mine["change_date"].iloc[0] if len(mine) else "",
            "pair_check": ", ".join(dict.fromkeys(g["pair_check"].astype(str))), "status": ", ".join(dict.fromkeys(g["status"])),
        })
    return pd.DataFrame(rows, columns=[*_RUNWAY_COLUMNS, "verdict", "last_fit_date", "first_change", "status"])


def _level(verdict: str, status: str, changing: bool) -> str:
    if verdict == "mismatch" or "error" in status:
        return "bad"
    return "warn" if verdict != "match" or changing or "warning" in status else ""


def _summary(runways: pd.DataFrame, events: pd.DataFrame, table: pd.DataFrame, result) -> list[SummaryItem]:
    s = result.summary
    items = []
    for r in runways.itertuples():
        lead = f"{r.airport} {r.runway_id}"
        since = f"; {r.last_fit_text}" if r.last_fit_text else ""
        if r.verdict == "mismatch":
            items.append(SummaryItem(f"out of date now; runway magnetic {r.runway_magnetic_deg:.1f}° implies {r.implied}{since}.",
                                     lead, "bad"))
        elif r.verdict == "mismatch within band":
            items.append(SummaryItem(
                f"no longer fits, but within the band: magnetic {r.runway_magnetic_deg:.1f}° is {r.margin_deg:.2f}° past the "
                f"boundary (band {r.band_deg:.2f}°) and implies {r.implied}{since}; confirm with a survey before repainting.",
                lead, "warn"))
        elif r.verdict == "match near boundary":
            items.append(SummaryItem(
                f"still fits, near a boundary: magnetic {r.runway_magnetic_deg:.1f}° is {r.margin_deg:.2f}° inside it "
                f"(band {r.band_deg:.2f}°).", lead, "warn"))
    for (airport, rid), g in events.groupby(["airport", "runway_id"], sort=False):
        steps = "; then ".join(f"{a} on {d}" for a, d in zip(g["after"], g["change_date"], strict=True))
        items.append(SummaryItem(f"becomes {steps}.", f"{airport} {rid}", "warn"))
    items = capped(items, SUMMARY_LIMIT, "runways (see runways.csv and runway_changes.csv)")
    bad = table[table["status"] == "error"]
    if not bad.empty:
        listed = "; ".join(f"{r['input_row']}: {r['reason']}" for _, r in bad.head(SUMMARY_LIMIT).iterrows())
        more = f"; and {len(bad) - SUMMARY_LIMIT} more" if len(bad) > SUMMARY_LIMIT else ""
        items.append(SummaryItem(f"{listed}{more}.", f"{len(bad)} runway row(s) not checked", "bad"))
    if not items:
        items.append(SummaryItem(f"All {s['rows']} runway ends match and none changes before {s['forecast_end']}."))
    if result.notes:
        items.append(SummaryItem(f"Forecast to {s['forecast_end']}: " + " ".join(result.notes)))
    return items


def job(ctx: Context) -> Section:
    r = ctx.scenario.runways
    kwargs = {"tolerance_deg": r["boundary_band_deg"]} if r["boundary_band_deg"] is not None else {}
    if r["band_sigmas"] is not None:
        kwargs["band_sigmas"] = r["band_sigmas"]
    result = check_runways(str(r["file"]), ctx.date, horizon_years=r["horizon_years"], columns=r["columns"] or None,
                           **kwargs, **ctx.common)
    table, changes, s = result.table, result.changes, result.summary
    events = _change_events(changes)
    runways = _runway_table(table, events, s["date"])
    levels = [_level(v, st, bool(c)) for v, st, c in zip(runways["verdict"], runways["status"], runways["first_change"], strict=True)]
    first = result.summary_text().splitlines()[0]
    counts = [
        f"{s['rows']} runway ends ({s['checked']} checked, {s['errors']} with errors, {s['warnings']} with warnings).",
        f"Verdicts by end: {s['match']} fit, {s['match_near_boundary']} still fit near a boundary, {s['mismatch_within_band']} "
        f"no longer fit within the band, {s['mismatch']} no longer fit (band: {s['band']}).",
        f"Painted designators that no longer fit: {s['stale']} ends, {s['never_fitted']} of them never fitted since {s['search_from']}.",
        f"Implied designator changes before {s['forecast_end']}: {s['change_events']} at {s['changes_within_horizon']} ends.",
    ]
    main = Part(text=[
        first + ".",
        "A runway is renamed as a pair: both ends are decided on one magnetic azimuth, the runway's (the circular mean of "
        "one end's azimuth and the reciprocal of the other's, true azimuth and variation both at the midpoint of the "
        "centre line), so the implied designators differ by 18 and change on the same day. The designator is the whole "
        "number nearest a tenth of the magnetic azimuth (ICAO Annex 14). Verdicts: 'fits'; 'still fits, near a boundary' "
        f"(within the band of {s['band']} of a rounding boundary); 'no longer fits, within the band' (the number just "
        "across a boundary that lies within the band: it has already changed, within the uncertainty); 'no longer fits'. "
        "For a designator that no longer fits, 'last fitted' gives the last date it did, searched back to the model's "
        f"start ({s['search_from']}): an old painting shows as 'stale since', a designator that never fitted as a likely "
        "data error."], items=counts)
    shown, shown_levels = runways, levels
    if len(table) > TABLE_LIMIT:  # a large batch: list only the runways that need attention
        keep = [level != "" for level in levels]
        shown, shown_levels = runways[keep], [level for level in levels if level]
        main.text.append(f"{len(shown)} of {len(runways)} runways need attention and are listed; every end is in runways.csv.")
    main.tables.append(Table(shown, _RUNWAY_COLUMNS, shown_levels, caption="One decision per runway"))
    if np.isfinite(table["magnetic_bearing_deg"].to_numpy(dtype=float)).any():
        main.figures.append(figure_from(runway_bearing_figure(result), "runway magnetic azimuth against time",
                                        "Magnetic azimuth of the chosen runway ends against time, with the rounding boundaries."))
    parts = [main]
    if not events.empty:
        listed = events.head(TABLE_LIMIT)
        text = [f"Every implied designator change before {s['forecast_end']}, soonest first ({len(events)} change(s) at "
                f"{events['runway_id'].groupby(events['airport']).nunique().sum()} runway(s))."]
        if len(events) > TABLE_LIMIT:
            text.append(f"The first {TABLE_LIMIT} are listed; all are in runway_changes.csv (one row per end and change).")
        parts.append(Part("Designator changes within the horizon", text=text,
                          tables=[Table(listed, _CHANGE_COLUMNS, ["warn"] * len(listed))]))
    if len(table) <= TABLE_LIMIT:
        end_levels = ["bad" if st == "error" or v == "mismatch" else "warn" if v not in ("match", "") or c or st == "warning"
                      else "" for v, st, c in zip(table["verdict"], table["status"], table["change_date"], strict=True)]
        parts.append(Part(f"Each runway end ({len(table)})", text=[
            "Each end's own magnetic azimuth (its true azimuth minus the variation) beside the runway azimuth it is decided on."],
            tables=[Table(table, _END_COLUMNS, end_levels)], collapsed=True))
    not_checked = table[table["status"] == "error"]
    if not not_checked.empty:
        parts.append(Part(f"Rows not checked ({len(not_checked)})", tables=[Table(not_checked, _NOT_CHECKED_COLUMNS, ["bad"] * len(not_checked))]))
    return Section(
        KEY, TITLE, TOPIC,
        summary=_summary(runways, events, table, result),
        parts=parts,
        files=[OutputFile("runways.csv", table), OutputFile("runway_changes.csv", changes)],
        notes=list(result.notes),
        tables={"runways": table, "runway_changes": changes},
    )
