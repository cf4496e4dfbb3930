"""Report job: routes leg by leg, where the magnetic reference is lost, the error budget along them.

For each ``[[routes.plan]]`` route: :func:`headingref.route` (legs and samples), the error
budget at every sample with :func:`headingref.heading_error` (steady level flight and the
scenario's turn), the stretches where H is below the blackout and caution thresholds (ends
interpolated linearly between samples) and where the steady budget exceeds the limit. Files:
``route_legs.csv``, ``route_samples.csv`` and ``routes.geojson`` (RFC 7946: the legs of
:func:`headingref.routes.route_geojson` and the stretches without a usable magnetic reference,
cut at the antimeridian).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..detector import heading_error
from ..errors import HeadingrefError
from ..plots.detector import plot_budget_profile
from ..plots.route import plot_route_map, plot_route_profile
from ..routes import _interpolate_position, _line_geometry, _stretch_intervals, route, route_geojson
from .content import OutputFile, Part, Section, SummaryItem, Table, capped, figure_from, latlon_text
from .context import SUMMARY_LIMIT, Context

KEY, TITLE, TOPIC = "routes", "Routes leg by leg", "routes"

_LEG_COLUMNS = {
    "from": "from", "to": "to", "distance_nm": "NM", "true_course_deg": "true °", "variation_deg": "variation °",
    "magnetic_course_deg": "magnetic °", "grid_course_deg": "grid °", "grivation_deg": "grivation °",
    "variation_deg_end": "variation at end °", "min_horizontal_nT": "least H nT",
    "max_declination_uncertainty_deg": "max D uncertainty °", "max_budget_steady_deg": "max budget (steady) °",
    "zone": "worst zone", "no_magnetic_reference": "no usable magnetic reference",
}
_LEG_PROPERTIES = ("from", "to", "distance_nm", "true_course_deg", "magnetic_course_deg", "grid_course_deg",
                   "variation_deg", "min_horizontal_nT", "max_declination_uncertainty_deg", "zone")


def _position(part: pd.DataFrame, distance_nm: float) -> tuple[float, float]:
    """Lat/lon at a distance along a leg, between the samples around it (headingref.routes' interpolation)."""
    return _interpolate_position(part["distance_along_leg_nm"].to_numpy(), part["lat_deg"].to_numpy(), part["lon_deg"].to_numpy(),
                                 distance_nm)


def _flags(part: pd.DataFrame) -> str:
    """The declination flags met along one leg (headingref.field's declination_flag), with where, or ''."""
    flags = part["declination_flag"].astype(str).to_numpy()
    out = []
    for reason in dict.fromkeys(f for f in flags if f):
        at = part["distance_along_leg_nm"].to_numpy()[flags == reason]
        out.append(f"{reason} ({at.min():.0f}–{at.max():.0f} NM)" if at.size > 1 else f"{reason} (at {at[0]:.0f} NM)")
    return "; ".join(out)


def _shown_legs(legs: pd.DataFrame, samples: pd.DataFrame) -> pd.DataFrame:
    """The legs as the page shows them: where a leg's start or end has a flagged declination, the
    variation and the courses that depend on it are blank, and so are an uncertainty or budget of
    180 degrees or more on a flagged leg (no heading at all); the flag says why (no huge numbers)."""
    shown = legs.copy()
    for i in range(len(legs)):
        part = samples[samples["leg"] == i + 1]
        start, end = (str(part["declination_flag"].iloc[k]) for k in (0, -1))
        if start:
            shown.loc[i, ["variation_deg", "magnetic_course_deg", "grivation_deg"]] = np.nan
        if end:
            shown.loc[i, "variation_deg_end"] = np.nan
        for column in ("max_declination_uncertainty_deg", "max_budget_steady_deg"):  # 180 deg or more: no heading at all
            if shown.loc[i, column] >= 180.0 and legs.loc[i, "declination_flag"]:
                shown.loc[i, column] = np.nan
    return shown


def _with_budget(ctx: Context, samples: pd.DataFrame) -> pd.DataFrame:
    lat, lon, alt = (samples[c].to_numpy() for c in ("lat_deg", "lon_deg", "alt_km"))
    sc = ctx.scenario
    steady = heading_error(lat, lon, ctx.date, alt_km=alt, **sc.heading_error_options(manoeuvre=False), **ctx.common)
    turning = heading_error(lat, lon, ctx.date, alt_km=alt, **sc.heading_error_options(), **ctx.common)
    samples = samples.copy()
    samples["budget_steady_deg"] = steady["budget_rss_deg"].to_numpy()
    samples["budget_turn_deg"] = turning["budget_rss_deg"].to_numpy()
    samples["tilt_error_turn_deg"] = turning["tilt_error_deg"].to_numpy()
    return samples


def _one_leg(ctx: Context, name: str, leg: pd.Series, part: pd.DataFrame, summary: list[SummaryItem],
             features: list[dict]) -> str:
    """Summary lines and blackout features of one leg; returns the 'no usable reference' text."""
    blackout_nT, caution_nT = ctx.thresholds
    limit = ctx.budget["limit_deg"]
    dist = part["distance_along_leg_nm"].to_numpy()
    h = part["horizontal_nT"].to_numpy()
    lost = []
    for a, b in _stretch_intervals(dist, h, blackout_nT):
        p0, p1 = _position(part, a), _position(part, b)
        lost.append(f"{a:.0f}–{b:.0f} NM ({latlon_text(*p0)} to {latlon_text(*p1)})")
        inside = part[(part.distance_along_leg_nm >= a) & (part.distance_along_leg_nm <= b)]
        features.append({
            "type": "Feature",
            "geometry": _line_geometry(np.concatenate([[p0[1]], inside.lon_deg.to_numpy(), [p1[1]]]),
                              np.concatenate([[p0[0]], inside.lat_deg.to_numpy(), [p1[0]]])),
            "properties": {"kind": "no usable magnetic reference", "route": name, "from": str(leg["from"]), "to": str(leg["to"]),
                           "from_nm": round(a, 1), "to_nm": round(b, 1), "threshold_nT": blackout_nT},
        })
    where = f"{name}, leg {leg['from']}–{leg['to']}"
    text = "; ".join(lost)
    if lost:
        summary.append(SummaryItem(f"no usable magnetic reference (H below {blackout_nT:g} nT) over {text}; least H "
                                   f"{leg['min_horizontal_nT']:.0f} nT. Use true or grid heading there.", where, "bad"))
        return text
    caution = _stretch_intervals(dist, h, caution_nT)
    if caution:
        span = "; ".join(f"{a:.0f}–{b:.0f} NM" for a, b in caution)
        summary.append(SummaryItem(f"degraded magnetic reference (H below {caution_nT:g} nT) over {span}; least H "
                                   f"{leg['min_horizontal_nT']:.0f} nT.", where, "warn"))
    over = _stretch_intervals(dist, -part["budget_steady_deg"].to_numpy(), -limit)  # budget above the limit
    if over:
        span = "; ".join(f"{a:.0f}–{b:.0f} NM" for a, b in over)
        summary.append(SummaryItem(f"heading error budget in steady flight above {limit:g}° over {span}.", where, "warn"))
    return text


def _one_route(ctx: Context, plan: dict, summary: list[SummaryItem], features: list[dict]) -> tuple[pd.DataFrame, pd.DataFrame, Part]:
    name = plan["name"]
    try:
        result = route(str(plan["file"]), ctx.date, **ctx.scenario.route_options(plan), **ctx.common)
    except HeadingrefError as exc:
        raise type(exc)(f"route {name!r} ({plan['file'].name}): {exc}") from None
    ctx.routes.append((name, result))
    samples = _with_budget(ctx, result.samples)
    legs = result.legs.copy()
    steady_max, lost = [], []
    for i, leg in legs.iterrows():
        part = samples[samples["leg"] == i + 1]
        steady_max.append(float(part["budget_steady_deg"].max()))
        lost.append(_one_leg(ctx, name, leg, part, summary, features))
    legs["max_budget_steady_deg"] = steady_max
    legs["no_magnetic_reference"] = lost
    legs["declination_flag"] = [_flags(samples[samples["leg"] == i + 1]) for i in range(len(legs))]
    for feature in route_geojson(result)["features"]:
        # the legs; the weak-field stretches are the report's own (the scenario's thresholds), waypoints are in the legs
        if feature["properties"]["kind"] == "leg":
            props = feature["properties"]
            feature["properties"] = {"kind": "leg", "route": name, **{k: props[k] for k in _LEG_PROPERTIES}}
            features.append(feature)
    samples.insert(0, "route", name)
    legs.insert(0, "route", name)
    levels = ["bad" if z == "blackout" else "warn" if z == "caution" else "" for z in legs["zone"]]
    cases = {"steady level flight": samples["budget_steady_deg"], ctx.manoeuvre: samples["budget_turn_deg"]}
    part = Part(
        title=name,
        text=[f"{len(legs)} legs, {legs['distance_nm'].sum():,.0f} NM."],
        tables=[Table(_shown_legs(legs.drop(columns="route"), samples), _LEG_COLUMNS if not legs["declination_flag"].any()
                      else {**_LEG_COLUMNS, "declination_flag": "declination flagged"}, levels)],
        figures=[
            figure_from(plot_route_map(result, model=ctx.model), f"map of {name}", "Route with isogonic lines and weak-field zones."),
            figure_from(plot_route_profile(result), f"profile of {name}", "Variation, H and declination uncertainty along the route."),
            figure_from(plot_budget_profile(samples["distance_along_route_nm"], cases, ctx.budget["limit_deg"]),
                        f"error budget along {name}", "Heading-reference error budget along the route."),
        ],
    )
    return legs, samples, part


def job(ctx: Context) -> Section:
    settings = ctx.scenario.routes
    b = ctx.budget
    section = Section(KEY, TITLE, TOPIC)
    section.parts.append(Part(text=[
        f"Legs along the WGS84 {settings['path']} path, sampled every {settings['spacing_nm']:g} NM; grid {settings['grid']}; "
        f"field {ctx.scenario.model_name} on {ctx.date}. Courses are at the start of each leg (true, magnetic = true − "
        f"variation, grid = true − convergence). The error budget is for a slaved flux-gate detector with a "
        f"{b['residual_field_nT']:g} nT residual aircraft field: steady level flight, and a {ctx.manoeuvre} lasting "
        f"{b['turn_duration_s']:g} s ({ctx.slaving}); root-sum-square of the terms, against a limit of {b['limit_deg']:g}°."
    ]))
    summary: list[SummaryItem] = []
    features: list[dict] = []
    all_legs, all_samples = [], []
    for plan in settings["plan"]:
        legs, samples, part = _one_route(ctx, plan, summary, features)
        all_legs.append(legs)
        all_samples.append(samples)
        section.parts.append(part)
    legs_all = pd.concat(all_legs, ignore_index=True)
    samples_all = pd.concat(all_samples, ignore_index=True)
    section.tables.update(route_legs=legs_all, route_samples=samples_all)
    section.files += [OutputFile("route_legs.csv", legs_all), OutputFile("route_samples.csv", samples_all),
                      OutputFile("routes.geojson", {"type": "FeatureCollection", "features": features})]
    section.summary = capped(summary, SUMMARY_LIMIT, "legs (see route_legs.csv)") or [
        SummaryItem("Every leg keeps a usable magnetic reference (H above the caution threshold throughout).")]
    return section
