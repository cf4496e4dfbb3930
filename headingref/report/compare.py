"""Report job: where the choice of field model matters (the scenario's ``compare_models``).

:func:`headingref.compare.compare_models` at the scenario's places: the compass bases (latest
survey position), the runways' reference points (midpoint of the centre line) and the route
samples (every ``spacing_nm`` along the legs, from the routes job). A difference (model minus the
first, reference, model; declination east positive) is *significant* when it exceeds the
root-sum-square of the two models' one-sigma declination uncertainties (each model's own error
model): the two answers then disagree by more than either claims to be wrong by. For the runways,
:func:`headingref.compare.compare_runways` (``check_runways`` once per model) gives the implied
designators, and the runways whose designator depends on the model are listed (an authority may use WMM while a
crustal-field model says otherwise). The map is
:func:`headingref.compare.difference_grid` of the first and last model on a modest grid over the
cap, drawn by :func:`headingref.plots.compare.plot_difference_map`. Where a model flags the
declination (geographic pole, no usable declination near a dip pole) the tables show the flag,
not a number. File: ``model_comparison.csv`` (the long table: one row per place and model).
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd

from ..compare import compare_models, compare_runways, difference_grid, parse_models
from ..compass_base import read_sites_csv
from ..plots.compare import plot_difference_map
from .content import OutputFile, Part, Section, SummaryItem, Table, capped, figure_from, latlon_text
from .context import SUMMARY_LIMIT, TABLE_LIMIT, Context

KEY, TITLE, TOPIC = "model-comparison", "Field model comparison", "models"

GRID_STEP_DEG = 0.5  # difference map step (latitude), degrees; 1 degree of longitude
_RUNWAY_COLUMNS_LEAD = {"airport": "airport", "runway_id": "runway", "painted": "painted"}


def _places(ctx: Context) -> pd.DataFrame:
    """Every place of the scenario: kind, name, lat, lon, alt_km."""
    sc = ctx.scenario
    rows = []
    if sc.compass_bases:
        for site in read_sites_csv(sc.compass_bases["file"], columns=sc.compass_bases.get("columns")):
            rows.append({"kind": "compass base", "name": site.name, "lat": site.lat_deg, "lon": site.lon_deg, "alt_km": site.alt_km})
    for name, result in ctx.routes:
        s = result.samples
        for lat, lon, alt, leg, dist in zip(s["lat_deg"], s["lon_deg"], s["alt_km"], s["from"] + "–" + s["to"],
                                            s["distance_along_leg_nm"], strict=True):
            rows.append({"kind": "route", "name": f"{name}, {leg} {dist:.0f} NM", "route": name, "where": f"{leg} {dist:.0f} NM",
                         "lat": lat, "lon": lon, "alt_km": alt})
    return pd.DataFrame(rows, columns=["kind", "name", "route", "where", "lat", "lon", "alt_km"])


def _runways(ctx: Context, models: list) -> tuple[pd.DataFrame, pd.DataFrame]:
    """(reference points of the runways, implied designators per model, one row per runway).

    :func:`headingref.compare.compare_runways` (``check_runways`` once per model) gives each end's
    implied designator per model; the ends of one runway are joined (``25/07``). The reference
    points are compared at height 0 (the runway elevation moves the declination by far less than
    the differences between models)."""
    r = ctx.scenario.runways
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the runways section gives the file's warnings once
        ends = compare_runways(str(r["file"]), ctx.date, models, tolerance_deg=r["boundary_band_deg"], columns=r["columns"] or None,
                               allow_extrapolation=ctx.scenario.allow_extrapolation)
    ends = ends[ends["status"] != "error"]
    names = [m.name for m in models]
    grouped = ends.groupby(["airport", "runway_id"], sort=False)
    table = grouped.agg(painted=("runway", "/".join), lat=("ref_lat_deg", "first"), lon=("ref_lon_deg", "first"),
                        **{n: (f"{n}_designator_implied", "/".join) for n in names},
                        depends_on_model=("model_dependent", "any")).reset_index()
    places = pd.DataFrame({"kind": "runway", "name": table["airport"] + " " + table["runway_id"], "route": "", "where": "",
                           "lat": table["lat"], "lon": table["lon"], "alt_km": 0.0})
    return places, table[["airport", "runway_id", "painted", *names, "depends_on_model"]]


def _wide(long: pd.DataFrame, places: pd.DataFrame, names: list[str]) -> pd.DataFrame:
    """One row per place: declination per model (or its flag), largest |difference| to the reference, significant."""
    wide = places[["kind", "name", "route", "where"]].reset_index(drop=True).copy()
    wide["position"] = [latlon_text(a, b) for a, b in zip(places["lat"], places["lon"], strict=True)]
    flagged = np.zeros(len(wide), dtype=bool)
    for name in names:
        rows = long[long["model"] == name].reset_index(drop=True)
        flag = rows["declination_flag"].astype(str).to_numpy()
        flagged |= flag != ""
        wide[name] = [f if f else f"{d:+.2f}" for d, f in zip(rows["declination_deg"], flag, strict=True)]
    others = long[long["model"] != names[0]]
    diff = np.abs(others["declination_diff_deg"].to_numpy(float)).reshape(len(wide), -1)
    combined = others["combined_uncertainty_deg"].to_numpy(float).reshape(len(wide), -1)
    significant = others["significant"].to_numpy(bool).reshape(len(wide), -1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN rows (flagged places) stay NaN
        wide["max_diff_deg"] = np.where(flagged, np.nan, np.nanmax(diff, axis=1))
        wide["combined_uncertainty_deg"] = np.where(flagged, np.nan, np.nanmax(combined, axis=1))
    wide["significant"] = significant.any(axis=1) & ~flagged
    wide["flag"] = ["; ".join(dict.fromkeys(f for f in long[long["place"] == i]["declination_flag"].astype(str) if f))
                    for i in range(len(wide))]
    return wide


def _grid(ctx: Context, places: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """A modest latitude-longitude grid over the cap that holds the places (north or south)."""
    sc = ctx.scenario
    lat = places["lat"].to_numpy(float)
    cap = sc.zones["cap"] if sc.zones else ("north" if np.median(lat) >= 0 else "south")
    side = lat[lat >= 0] if cap == "north" else -lat[lat < 0]
    edge = float(min(55.0, max(0.0, np.floor(side.min()) - 2.0))) if side.size else 55.0
    lats = np.arange(edge, 89.5 + 1e-9, GRID_STEP_DEG)
    lats = lats if cap == "north" else -lats[::-1]
    return lats, np.arange(-180.0, 180.0, 1.0)


def job(ctx: Context) -> Section:
    sc = ctx.scenario
    models = parse_models(sc.compare_models)
    names = [m.name for m in models]
    places = _places(ctx)
    runway_table = None
    if sc.runways:
        runway_places, runway_table = _runways(ctx, models)
        places = pd.concat([places, runway_places], ignore_index=True)
    if places.empty:
        return Section(KEY, TITLE, TOPIC, parts=[Part(text=[
            "The scenario lists models to compare but has no places (compass bases, runways or routes) to compare them at."])])
    long = compare_models(places["lat"].to_numpy(float), places["lon"].to_numpy(float), ctx.date, models,
                          alt_km=places["alt_km"].to_numpy(float), names=list(places["name"]),
                          allow_extrapolation=sc.allow_extrapolation)
    long.insert(1, "kind", np.repeat(places["kind"].to_numpy(), len(models)))
    wide = _wide(long, places, names)
    ref = names[0]
    summary: list[SummaryItem] = []
    parts = [Part(text=[
        f"Declination (east positive) of {', '.join(names)} on {ctx.date} at the scenario's places: compass bases, runway "
        f"reference points and the route samples. Differences are each model minus {ref}; a difference is significant when "
        "it exceeds the root-sum-square of the two models' one-sigma declination uncertainties (each model's own error "
        "model: " + "; ".join(f"{k}: {v}" for k, v in long.attrs["error_models"].items()) + "). The crustal field that "
        "a high-resolution model adds is inside the WMM error model, so a difference below that bound is expected."])]
    fixed = wide[wide["kind"] != "route"]
    if not fixed.empty:
        levels = ["bad" if s else "warn" if f else "" for s, f in zip(fixed["significant"], fixed["flag"], strict=True)]
        columns = {"kind": "place", "name": "name", "position": "position", **{n: f"{n} °" for n in names},
                   "max_diff_deg": f"largest |difference| to {ref} °", "combined_uncertainty_deg": "combined 1σ °",
                   "significant": "significant", "flag": "flag"}
        parts.append(Part("Compass bases and runways", tables=[Table(fixed, columns, levels)]))
        for r in fixed[fixed["significant"]].itertuples():
            summary.append(SummaryItem(f"the models disagree by {r.max_diff_deg:.2f}°, more than their combined uncertainty "
                                       f"({r.combined_uncertainty_deg:.2f}°).", f"{r.kind} {r.name}", "warn"))
    if runway_table is not None:
        depends = runway_table[runway_table["depends_on_model"]]
        columns = {**_RUNWAY_COLUMNS_LEAD, **{n: f"implied with {n}" for n in names}, "depends_on_model": "depends on the model"}
        text = [f"{len(depends)} of {len(runway_table)} runways get a different implied designator from one of the models."
                if len(depends) else f"All {len(runway_table)} runways get the same implied designators from every model."]
        parts.append(Part("Runway designators by model", text=text, tables=[
            Table(runway_table, columns, ["warn" if d else "" for d in runway_table["depends_on_model"]])]))
        for _, r in depends.iterrows():
            implied = ", ".join(f"{n}: {r[n]}" for n in names)
            summary.append(SummaryItem(f"the implied designator depends on the model ({implied}).", f"{r['airport']} {r['runway_id']}", "warn"))
    route_rows = wide[wide["kind"] == "route"].reset_index(drop=True)
    if not route_rows.empty:
        per_route = []
        route_of = places.loc[places["kind"] == "route", "route"].to_numpy()
        for name in dict.fromkeys(route_of):
            mine = route_rows[route_of == name]
            worst = mine["max_diff_deg"].to_numpy(float)
            i = int(np.nanargmax(worst)) if np.isfinite(worst).any() else 0
            per_route.append({"route": name, "samples": len(mine), "significant": int(mine["significant"].sum()),
                              "flagged": int((mine["flag"] != "").sum()), "max_diff_deg": worst[i] if worst.size else np.nan,
                              "where": mine["where"].iat[i]})
            if mine["significant"].any():
                summary.append(SummaryItem(f"{int(mine['significant'].sum())} of {len(mine)} samples where the models disagree "
                                           f"by more than their combined uncertainty; largest {worst[i]:.2f}° at "
                                           f"{per_route[-1]['where']}.", name, "warn"))
        table = pd.DataFrame(per_route)
        shown = route_rows[route_rows["significant"] | (route_rows["flag"] != "")].head(TABLE_LIMIT)
        columns = {"route": "route", "where": "leg and distance along it", "position": "position", **{n: f"{n} °" for n in names},
                   "max_diff_deg": f"largest |difference| to {ref} °", "combined_uncertainty_deg": "combined 1σ °", "flag": "flag"}
        route_part = Part("Along the routes", tables=[Table(table, {"route": "route", "samples": "samples",
                                                                    "significant": "significant samples", "flagged": "flagged samples",
                                                                    "max_diff_deg": "largest |difference| °", "where": "where"})])
        if not shown.empty:
            route_part.text.append(f"Per route, the samples where the models disagree significantly and those where a model "
                                   f"flags the declination; below that table, each such sample ({len(shown)} listed).")
            route_part.tables.append(Table(shown, columns, ["warn"] * len(shown)))
        parts.append(route_part)
    lats, lons = _grid(ctx, places)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # flagged nodes near the poles are masked on the map
        grid = difference_grid(lats, lons, ctx.date, models[0], models[-1], allow_extrapolation=sc.allow_extrapolation)
    significant_share = float(np.nanmean(grid["significant"].values))
    parts.append(Part(f"Difference map: {models[-1].name} − {ref}", text=[
        f"Declination of {models[-1].name} minus {ref} on a {GRID_STEP_DEG:g}° × 1° grid from {abs(lats[0]):g}° to "
        f"{abs(lats[-1]):g}° {'N' if lats[0] >= 0 else 'S'}; the black line is where the difference equals the combined "
        f"uncertainty. {100 * significant_share:.0f}% of the grid's nodes differ by more than it."],
        figures=[figure_from(plot_difference_map(grid), "declination difference map",
                             f"Declination {models[-1].name} minus {ref} (east positive).")]))
    if not summary:
        summary.append(SummaryItem(f"{', '.join(names[1:])} agree with {ref} within the combined uncertainty at every place "
                                   "of the scenario" + (", and every runway gets the same designator." if runway_table is not None else ".")))
    return Section(
        KEY, TITLE, TOPIC,
        summary=capped(summary, SUMMARY_LIMIT, "places (see model_comparison.csv)"),
        parts=parts,
        files=[OutputFile("model_comparison.csv", long)],
        tables={"model_comparison": long, **({"runways_by_model": runway_table} if runway_table is not None else {})},
    )
