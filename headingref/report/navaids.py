"""Report job: VOR station declination against the model variation, and when to realign.

:func:`headingref.navaids.check_navaids` with the scenario's ``[navaids]`` settings; the figure
is :func:`headingref.plots.navaids.navaid_map_figure`. ``difference_deg`` is the model variation
minus the station declination (east positive): the angle by which the station's radials now
differ from magnetic. Rows over the tolerance are shown red, rows that pass it within the horizon
amber. File: ``navaids.csv``.
"""

from __future__ import annotations

import numpy as np

from ..navaids import check_navaids
from ..plots.navaids import navaid_map_figure
from .content import OutputFile, Part, Section, SummaryItem, Table, capped, figure_from, flag, latlon_text
from .context import SUMMARY_LIMIT, Context

KEY, TITLE, TOPIC = "navaids", "VOR station declination", "navaids"

_COLUMNS = {
    "ident": "ident", "position": "position", "lat_text": "lat °", "lon_text": "lon °",
    "station_declination_deg": "station declination °", "alignment_date": "aligned",
    "variation_at_alignment_deg": "model variation when aligned °", "variation_deg": "variation now °",
    "difference_deg": "difference °", "exceeds": "exceeds", "realign_date": "realign by",
    "variation_uncertainty_deg": "variation uncertainty °",
}
ALIGNMENT_CHECK_DEG = 1.0
"""A station declination further than this from the model variation on its alignment date is
pointed out as a possible data error (headingref's choice: a station is aligned to the nearest
degree, common practice)."""


def _level(row) -> str:
    if flag(row["exceeds"]):
        return "bad"
    return "warn" if row["realign_date"] else ""


def _summary(table, s: dict) -> list[SummaryItem]:
    tol = s["tolerance_deg"]
    exceeding = table[table["exceeds"].to_numpy(bool)]
    head = SummaryItem(
        f"{s['exceeds']} of {s['rows']} navaids exceed the tolerance of ±{tol:g}° between station declination and "
        f"variation on {s['date']}; {s['due_within_horizon']} more will by {s['forecast_end']}.",
        "VOR station declination", "bad" if s["exceeds"] else "warn" if s["due_within_horizon"] else "")
    items = [SummaryItem(f"station declination {r.station_declination_deg:+.1f}°, variation {r.variation_deg:+.1f}°: "
                         f"radials {abs(r.difference_deg):.1f}° off magnetic; review procedures and realign.", str(r.ident), "bad")
             for r in exceeding.itertuples()]
    due = table[~table["exceeds"].to_numpy(bool) & (table["realign_date"] != "")].sort_values("realign_date", kind="stable")
    items += [SummaryItem(f"exceeds ±{tol:g}° on {r.realign_date} (now {r.difference_deg:+.1f}°).", str(r.ident), "warn")
              for r in due.itertuples()]
    return [head, *capped(items, SUMMARY_LIMIT, "stations (see navaids.csv)")]


def job(ctx: Context) -> Section:
    n = ctx.scenario.navaids
    result = check_navaids(str(n["file"]), ctx.date, tolerance_deg=n["tolerance_deg"], horizon_years=n["horizon_years"],
                           columns=n["columns"] or None, **ctx.common)
    table, s = result.table, result.summary
    shown = table.assign(
        position=[latlon_text(a, b) for a, b in zip(table["lat"], table["lon"], strict=True)],
        lat_text=[f"{v:.4f}" for v in table["lat"]], lon_text=[f"{v:.4f}" for v in table["lon"]],
    )
    levels = [_level(row) for _, row in table.iterrows()]
    text = [
        f"Each VOR's radials are referenced to its station declination, set when it was last aligned. The difference "
        f"is the {s['model']} variation on {s['date']} minus the station declination (east positive): the angle by which "
        f"a radial now differs from the magnetic bearing of the same number. Over ±{s['tolerance_deg']:g}° the station "
        f"is due for realignment and the procedures built on its radials for review; 'realign by' is the first day the "
        f"tolerance is exceeded (the check date when it already is), looking ahead to {s['forecast_end']}.",
        "The tolerance is the scenario's; authorities set their own figure (see headingref.navaids for the source of the "
        "default).",
    ]
    items = []
    known = np.isfinite(table["variation_at_alignment_deg"].to_numpy(float))
    odd = table[known & (np.abs(table["station_declination_deg"] - table["variation_at_alignment_deg"]) > ALIGNMENT_CHECK_DEG)]
    for r in odd.itertuples():
        items.append(f"{r.ident}: station declination {r.station_declination_deg:+.1f}° but the model variation on its "
                     f"alignment date {r.alignment_date} was {r.variation_at_alignment_deg:+.1f}°: check the station's data.")
    part = Part(text=text, items=items, tables=[Table(shown, _COLUMNS, levels)],
                figures=[figure_from(navaid_map_figure(result), "map of VOR stations coloured by the difference",
                                     "Stations coloured by variation minus station declination; ringed: over the tolerance "
                                     "now (solid) or within the horizon (dashed).")])
    return Section(
        KEY, TITLE, TOPIC,
        summary=_summary(table, s),
        parts=[part],
        files=[OutputFile("navaids.csv", table)],
        notes=list(result.notes),
        tables={"navaids": table},
    )
