"""Report job: weak-field zones over the scenario's cap, how they moved, and the magnetic poles.

:func:`headingref.weak_field.zones` (or :func:`headingref.weak_field.zone_change` with a comparison
date), :func:`headingref.poles.dip_poles`, :func:`headingref.poles.geomagnetic_poles` and
:func:`headingref.poles.pole_tracks`; the map is :func:`headingref.plots.zones.plot_zone_map`
with the routes of the routes job on top. Files: ``zones.geojson``, ``zone_areas.csv``,
``poles.csv``, ``pole_tracks.csv``.
"""

from __future__ import annotations

import pandas as pd

from ..plots.zones import plot_zone_map
from ..poles import dip_poles, geomagnetic_poles, pole_tracks
from ..units import decimal_year
from ..weak_field import zone_areas, zone_change, zone_geojson, zones
from .content import OutputFile, Part, Section, SummaryItem, Table, figure_from, latlon_text
from .context import Context

KEY, TITLE, TOPIC = "zones", "Weak-field zones and magnetic poles", "zones"

_POLE_COLUMNS = {"date": "date", "pole": "pole", "kind": "kind", "lat": "lat °", "lon": "lon °", "horizontal_nT": "H at point nT"}


def _area_header(column: str) -> str:
    """'area_km2_2016-12-02' -> 'area 2016-12-02 km²'; units as the other tables show them."""
    if column.startswith("area_km2_"):
        return f"area {column.removeprefix('area_km2_')} km²"
    return {"area_km2": "area km²", "change_km2": "change km²", "change_percent": "change %", "lower_nT": "from nT",
            "upper_nT": "below nT", "decimal_year": "decimal year"}.get(column, column)


def cap_area(ctx: Context) -> tuple[float, float, float, float]:
    """(lat_min, lat_max, lon_min, lon_max) of the scenario's cap."""
    z = ctx.scenario.zones
    edge = z["edge_lat_deg"]
    return (edge, 90.0, -180.0, 180.0) if z["cap"] == "north" else (-90.0, -edge, -180.0, 180.0)


def job(ctx: Context) -> Section:
    z = ctx.scenario.zones
    sc = ctx.scenario
    area = cap_area(ctx)
    options = {"resolution_deg": z["step_deg"], "thresholds": (z["blackout_nT"], z["caution_nT"]), "model": ctx.model}
    if z["compare_date"]:
        ds, areas, collection = zone_change(area, z["compare_date"], ctx.date, **options)
    else:
        ds = zones(area, ctx.date, **options)
        areas, collection = zone_areas(ds), zone_geojson(ds)
    poles = pd.concat([dip_poles(ctx.date, model=ctx.model), geomagnetic_poles(ctx.date, model=ctx.model)], ignore_index=True)
    start = float(decimal_year(z["compare_date"])) if z["compare_date"] else sc.decimal_year - 10.0
    # Five steps show the track; each dip-pole search costs a few tenths of a second.
    tracks = pole_tracks(start, sc.decimal_year, step_years=max((sc.decimal_year - start) / 5.0, 0.25), model=ctx.model)
    hemi = z["cap"]
    dip = poles[(poles["pole"] == hemi) & (poles["kind"] == "dip")].iloc[0]
    text = f"The {hemi} dip pole is at {latlon_text(dip['lat'], dip['lon'])} on {ctx.date}."
    blackout = areas[areas["zone"] == "blackout"]
    if z["compare_date"] and not blackout.empty:
        row = blackout.iloc[0]
        now = [c for c in areas.columns if c.startswith("area_km2_")][-1]
        text += (f" The blackout zone (H below {z['blackout_nT']:g} nT) covers {row[now]:,.0f} km², "
                 f"{row['change_percent']:+.0f}% since {z['compare_date']}.")
    lines = [(name.split(" ")[0], result.samples["lon_deg"], result.samples["lat_deg"]) for name, result in ctx.routes]
    figure = plot_zone_map(ds, tracks=tracks[tracks["pole"] == hemi], lines=lines, shade_latest=True)
    return Section(
        KEY, TITLE, TOPIC,
        summary=[SummaryItem(text)],
        parts=[
            Part(text=[
                f"Zones of weak horizontal field H over the {hemi} cap (grid step {z['step_deg']:g}°): blackout where "
                f"H < {z['blackout_nT']:g} nT, caution where H < {z['caution_nT']:g} nT (WMM technical reports' zones). "
                "A flux-gate detector senses only H; as H falls its signal shrinks and any disturbing field turns the sensed "
                "direction further. Poles: dip poles where H = 0; geomagnetic poles of the centred dipole."],
                figures=[figure_from(figure, "weak-field zone map", "Weak-field zones, pole tracks and routes.")]),
            Part("Zone areas", tables=[Table(areas, {c: _area_header(c) for c in areas.columns})]),
            Part("Poles", tables=[Table(poles, _POLE_COLUMNS)]),
        ],
        files=[OutputFile("zones.geojson", collection), OutputFile("zone_areas.csv", areas),
               OutputFile("poles.csv", poles), OutputFile("pole_tracks.csv", tracks)],
        tables={"zone_areas": areas, "poles": poles, "pole_tracks": tracks},
    )
