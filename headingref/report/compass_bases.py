"""Report job: compass base upkeep for the planned swing, survey history and setting-out.

:func:`headingref.compass_base.read_sites_csv`, :func:`headingref.compass_base.base_upkeep`
and :func:`headingref.compass_base.setting_out`; every survey beside the model's variation on
its date; the figure is :func:`headingref.plots.compass_base.plot_survey_history`. Files:
``compass_bases.csv``, ``compass_base_history.csv``, ``setting_out.csv``.
"""

from __future__ import annotations

import warnings

import pandas as pd

from ..compass_base import base_upkeep, read_sites_csv, setting_out
from ..elements import field_arrays
from ..plots.compass_base import plot_survey_history
from ..units import decimal_year, timestamp_from_decimal_year
from .content import OutputFile, Part, Section, SummaryItem, Table, figure_from, flag
from .context import Context

KEY, TITLE, TOPIC = "compass-bases", "Compass bases", "bases"

_UPKEEP_COLUMNS = {
    "name": "base", "survey_date": "last survey", "surveyed_variation_deg": "surveyed °", "model_change_since_survey_deg": "model change since °",
    "predicted_variation_deg": "predicted °", "variation_to_mark": "mark", "annual_change": "annual change",
    "tolerance_deg": "tolerance °", "resurvey_due_date": "resurvey due", "resurvey_reason": "because",
    "mark_off_date": "new mark off tolerance", "horizontal_nT": "H nT", "declination_uncertainty_deg": "D uncertainty °", "zone": "zone",
}
_HISTORY_COLUMNS = {"name": "base", "survey_date": "survey", "surveyed_variation_deg": "surveyed °",
                    "model_variation_at_survey_deg": "model °", "survey_minus_model_deg": "survey − model °"}
_SETTING_OUT_COLUMNS = {"name": "base", "line": "magnetic line", "variation_used": "variation used",
                        "true_azimuth_deg": "true azimuth °", "grid_azimuth_deg": "grid azimuth °", "distance_m": "distance m",
                        "east_m": "east of centre m", "north_m": "north of centre m", "lat_text": "lat °", "lon_text": "lon °",
                        "utm_zone": "UTM zone", "utm_easting_m": "UTM easting m", "utm_northing_m": "UTM northing m"}


def survey_history(ctx: Context, sites: list) -> pd.DataFrame:
    """Every survey of every base beside the model's variation on the survey date."""
    rows = []
    for site in sites:
        for year, value in sorted([*site.history, (site.survey_year, site.surveyed_variation_deg)]):
            rows.append({"name": site.name, "lat_deg": site.lat_deg, "lon_deg": site.lon_deg, "alt_km": site.alt_km,
                         "survey_year": year, "surveyed_variation_deg": value})
    table = pd.DataFrame(rows)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # base_upkeep has already warned about the same dates
        model_deg = field_arrays(table["lat_deg"].to_numpy(), table["lon_deg"].to_numpy(), table["survey_year"].to_numpy(),
                                 table["alt_km"].to_numpy(), model=ctx.model, allow_extrapolation=True)["declination_deg"]
    table.insert(4, "survey_date", [f"{timestamp_from_decimal_year(y).round('D'):%Y-%m-%d}" for y in table["survey_year"]])
    table["model_variation_at_survey_deg"] = model_deg
    table["survey_minus_model_deg"] = table["surveyed_variation_deg"] - model_deg
    return table


def _summary(upkeep: pd.DataFrame, swing_date: str) -> list[SummaryItem]:
    items = []
    for _, r in upkeep.iterrows():
        due = r["resurvey_due_date"] if isinstance(r["resurvey_due_date"], str) else ""
        reason = r["resurvey_reason"]
        overdue = flag(r["overdue"])
        if due:
            due_text = f"resurvey {'overdue since' if overdue else 'due'} {due} ({reason})"
        else:
            due_text = "no resurvey date within the model's validity"
        items.append(SummaryItem(f"{due_text}; mark {r['variation_to_mark']} for the swing on {swing_date} "
                                 f"(variation changing {r['annual_change']}).", str(r["name"]), "bad" if overdue else ""))
    return items


def job(ctx: Context) -> Section:
    sc = ctx.scenario
    c = sc.compass_bases
    sites = read_sites_csv(c["file"], tolerance_deg=c["tolerance_deg"], resurvey_years=c["resurvey_years"], columns=c.get("columns"))
    upkeep = base_upkeep(sites, c["swing_date"], **ctx.common)
    history = survey_history(ctx, sites)
    grid = sc.routes["grid"] if sc.routes else "auto"  # auto: the polar grid of each base's hemisphere
    lines = setting_out(upkeep, lines_deg=c["setting_out_lines_deg"], distances_m=c["setting_out_distances_m"], grid=grid)
    figure = plot_survey_history(upkeep, list(zip(history["name"], history["survey_year"], history["surveyed_variation_deg"], strict=True)),
                                 float(decimal_year(c["swing_date"])), **ctx.common)
    levels = ["bad" if flag(overdue) else "" for overdue in upkeep["overdue"]]
    shown_lines = lines.assign(lat_text=[f"{v:.6f}" for v in lines["lat_deg"]], lon_text=[f"{v:.6f}" for v in lines["lon_deg"]])
    return Section(
        KEY, TITLE, TOPIC,
        summary=_summary(upkeep, c["swing_date"]),
        parts=[
            Part(text=[
                f"For the swing planned on {c['swing_date']}: the latest survey of each base carried forward with the model's "
                "change since that survey, the value to mark, the first date the surveyed value is off by more than the "
                "tolerance, and the resurvey due date (that date or the fixed interval, whichever comes first). The survey on "
                "the site governs: the model omits local crustal anomalies."],
                tables=[Table(upkeep, _UPKEEP_COLUMNS, levels)]),
            Part("Survey history against the model", tables=[Table(history, _HISTORY_COLUMNS)],
                 figures=[figure_from(figure, "survey history",
                                      "Surveys, the model carried from the latest survey, and the band the new mark stays valid in.")]),
            Part("Setting-out table for the survey party", text=[
                "Each line is laid out with the variation marked on the base for the swing (column 'variation used': the "
                "surveyed value carried to the swing date and rounded to the marking step), not the unrounded prediction, so "
                "the painted lines and the painted value agree: true azimuth = magnetic line + marked variation. Points are "
                "given as east/north metres from the base centre (local tangent plane of the WGS84 ellipsoid), as latitude "
                "and longitude (WGS84 geodesic) and in UTM (WGS84, the centre's zone; empty beyond 84° N / 80° S, where UPS "
                "applies)."], tables=[Table(shown_lines, _SETTING_OUT_COLUMNS)], collapsed=True),
        ],
        files=[OutputFile("compass_bases.csv", upkeep), OutputFile("compass_base_history.csv", history),
               OutputFile("setting_out.csv", lines)],
        tables={"base_upkeep": upkeep, "base_history": history, "setting_out": lines},
    )
