"""Write the job notebooks 02 to 05 in notebooks/ (stored without outputs), reproducibly.

Each notebook is a list of markdown and code cells below; cell ids are derived from the notebook's
file name and the cell's position, so running this script twice gives byte-identical files. The
notebooks only call the headingref library and plot; they run top to bottom on the invented demo
scenario in data/demo/ (tests/test_notebooks.py executes them). Notebook 01 is written by hand
and is not touched here. Run from the repository root::

    python tools/make_notebooks.py           # write the four notebooks
    python tools/make_notebooks.py --check   # exit 1 if a stored notebook differs from this script
"""

from __future__ import annotations

import argparse
import hashlib
import sys
from pathlib import Path

import nbformat
from nbformat.v4 import new_code_cell, new_markdown_cell, new_notebook

NOTEBOOK_DIR = Path(__file__).resolve().parent.parent / "notebooks"

CAUTION_MD = (
    "*Planning and engineering aid only, not approved for navigation. Official publications and charts, "
    "the aircraft's approved data, the compass base's own survey and licensed engineering and survey "
    "practice govern. The field model omits local crustal anomalies.*"
)

SCENARIO_SETUP = '''\
scenario = load_scenario(DATA_DIR / "demo" / "scenario.toml")  # the invented demo scenario (data/demo/README.md)
DATE = scenario.analysis_date'''


def md(text: str) -> tuple[str, str]:
    return ("markdown", text.strip("\n"))


def code(text: str) -> tuple[str, str]:
    return ("code", text.strip("\n"))


# --------------------------------------------------------------------------- 02 route
ROUTE = [
    md(f"""
# A high-latitude route

Legs of a route leg by leg: distance and course along the WGS84 geodesic (Karney's algorithms, through
`pyproj.Geod`) or the rhumb line, in every heading reference: true, magnetic (IGRF-14 variation, east
positive, `magnetic = true - variation`), grid (meridian convergence of a polar stereographic grid from PROJ,
`grid = true - convergence`) and grivation. Along the way: the horizontal field H against the WMM caution
(6000 nT) and blackout (2000 nT) thresholds, and the declination uncertainty from the WMM error model. Copy
this notebook and point it at your own waypoint CSV (`name, lat, lon[, alt]`).

{CAUTION_MD}
"""),
    code(f"""
import ipywidgets as widgets
import matplotlib.pyplot as plt
import pandas as pd

import headingref
from headingref.headings import (
    convergence_deg,
    format_heading,
    format_variation,
    grivation_deg,
    model_variation_deg,
    true_to_grid,
    true_to_magnetic,
)
from headingref.notices import DATA_DIR
from headingref.plots.route import plot_route_map, plot_route_profile
from headingref.routes import read_waypoints, route_geojson
from headingref.scenario import load_scenario

{SCENARIO_SETUP}
SETTINGS = scenario.routes  # spacing_nm, path, grid, alt (km) and the route plans
OPTIONS = dict(alt_km=SETTINGS["alt"], grid=SETTINGS["grid"], spacing_nm=SETTINGS["spacing_nm"], path=SETTINGS["path"])
PLANS = {{plan["name"]: plan["file"] for plan in SETTINGS["plan"]}}
ROUTE = list(PLANS)[0]  # TM101, across the polar cap
list(PLANS)
"""),
    md("""
## The waypoints
Waypoints without an altitude fly at the scenario's default (FL350, here in km above the ellipsoid).
"""),
    code("""
read_waypoints(PLANS[ROUTE], alt_km=SETTINGS["alt"])
"""),
    md("""
## The legs
Courses are at the start of each leg (the `_mid` and `_end` columns give them half-way and at the end: on a
geodesic near the pole they turn a lot). The stretches are distances along the leg (NM) where H is below the
caution / blackout threshold: there a magnetic heading reference is degraded or unusable.
"""),
    code("""
result = headingref.route(PLANS[ROUTE], DATE, **OPTIONS)
LEG_COLUMNS = ["from", "to", "distance_nm", "true_course_deg", "variation_deg", "magnetic_course_deg",
               "grid_course_deg", "grivation_deg", "min_horizontal_nT", "max_declination_uncertainty_deg", "zone",
               "caution_stretches_nm", "blackout_stretches_nm"]
result.legs[LEG_COLUMNS].round(1)
"""),
    md("""
## Map and profile
The map draws isogonic lines (variation, E/W) and shades the caution and blackout zones; the profile shows
variation, H and the declination uncertainty against distance along the route.
"""),
    code("""
plot_route_map(result)
plt.show()
plot_route_profile(result)
plt.show()
"""),
    md("""
## One course in every reference
The same conversions one at a time with `headingref.headings` (the route does them for every sample): the
first leg's initial true course at its first waypoint.
"""),
    code("""
first = result.legs.iloc[0]
lat, lon, true_course = first.from_lat_deg, first.from_lon_deg, first.true_course_deg
variation = model_variation_deg(lat, lon, DATE)
convergence = convergence_deg(lat, lon, SETTINGS["grid"])
print(f"true {format_heading(true_course, reference='T')}, variation {format_variation(variation)}, "
      f"magnetic {format_heading(true_to_magnetic(true_course, lat=lat, lon=lon, date=DATE), reference='M')}")
print(f"convergence {convergence:+.1f}°, grid {format_heading(true_to_grid(true_course, convergence), reference='G')}, "
      f"grivation {format_variation(grivation_deg(variation, convergence))}")
"""),
    md("""
## Across the antimeridian, and geodesic against rhumb line
TM205 crosses 180° over the Bering Strait; the map and the courses carry on without a break. Below it, the
polar route flown as rhumb lines instead of geodesics: longer, with one constant true course per leg.
"""),
    code("""
across = headingref.route(PLANS[list(PLANS)[1]], DATE, **OPTIONS)
plot_route_map(across)
plt.show()
across.legs[LEG_COLUMNS].round(1)
"""),
    code("""
rhumb = headingref.route(PLANS[ROUTE], DATE, **{**OPTIONS, "path": "rhumb"})
pd.DataFrame({"from": result.legs["from"], "to": result.legs["to"],
              "geodesic_nm": result.legs["distance_nm"], "rhumb_nm": rhumb.legs["distance_nm"],
              "geodesic_true_course_deg": result.legs["true_course_deg"],
              "rhumb_true_course_deg": rhumb.legs["true_course_deg"]}).round(1)
"""),
    md("""
## Explore
Pick a route, a date (decimal year), a grid and the path; the legs and the profile follow (ipywidgets).
"""),
    code("""
def explore(route_name=ROUTE, year=scenario.decimal_year, grid=SETTINGS["grid"], path=SETTINGS["path"]):
    explored = headingref.route(PLANS[route_name], year, alt_km=SETTINGS["alt"], grid=grid,
                                spacing_nm=SETTINGS["spacing_nm"], path=path)
    display(explored.legs[LEG_COLUMNS].round(1))
    plot_route_profile(explored)
    plt.show()


widgets.interact(explore, route_name=widgets.Dropdown(options=list(PLANS), value=ROUTE),
                 year=widgets.FloatSlider(value=scenario.decimal_year, min=1990, max=2030, step=0.25),
                 grid=widgets.Dropdown(options=["polar", "polar:-100", "lcc:65,80,-100", "utm:33"], value="polar"),
                 path=widgets.Dropdown(options=["geodesic", "rhumb"], value=SETTINGS["path"]));
"""),
    md("""
## Samples and GeoJSON
Every sample along the route (for your own plots or a spreadsheet), and the legs as GeoJSON lines cut at the
antimeridian (RFC 7946), ready for a GIS.
"""),
    code("""
result.samples.head()
"""),
    code("""
pd.json_normalize(route_geojson(across)["features"])
"""),
]

# --------------------------------------------------------------------------- 03 zones and budget
ZONES = [
    md(f"""
# Weak-field zones and the heading-reference error budget

Where the horizontal field H is too weak for a magnetic heading reference: the WMM technical reports' zones
(blackout where H < 2000 nT, caution where H < 6000 nT) from IGRF-14 on a latitude-longitude grid, their
GeoJSON boundaries (RFC 7946) and geodesic areas (Karney's algorithm via `pyproj`), how they moved in ten
years, and the poles: dip poles (H = 0, Newton's method) and geomagnetic poles (axis of the centred dipole
from g10, g11, h11). Then the error budget of a slaved flux-gate detector: the residual aircraft field
(`asin(dB/H)`), the tilt of the pendulous detector in a banked turn (grows with the tangent of the
inclination), the WMM error model for declination, and the gyro dragged by slaving, combined root-sum-square.

{CAUTION_MD}
"""),
    code(f"""
import ipywidgets as widgets
import matplotlib.pyplot as plt
import pandas as pd

import headingref
from headingref.detector import heading_error_grid
from headingref.notices import DATA_DIR
from headingref.plots.zones import plot_error_map, plot_pole_tracks, plot_zone_map
from headingref.scenario import load_scenario
from headingref.zones import zone_areas, zone_change

{SCENARIO_SETUP}
ZONE_SETTINGS = scenario.zones  # step_deg, blackout_nT, caution_nT, compare_date
THRESHOLDS = (ZONE_SETTINGS["blackout_nT"], ZONE_SETTINGS["caution_nT"])
STEP = ZONE_SETTINGS["step_deg"]  # 0.5 degree grid
BUDGET = scenario.error_budget
ALT_KM = scenario.routes["alt"]  # cruise level of the demo routes (FL350), km
BUDGET_OPTIONS = scenario.heading_error_options()  # the section as heading_error's keyword arguments
BUDGET_OPTIONS.pop("bank_deg")  # the bank angle is the slider below
BUDGET
"""),
    md("""
## The zones now and ten years ago
`zone_change` evaluates both dates on one grid: the areas at each date and their change, and all boundaries
as one GeoJSON FeatureCollection. On the map the earlier date is shaded and the later one's boundaries are
dashed; the dip pole's track between the two dates is drawn on top.
"""),
    code("""
zone_grid, change, collection = zone_change("north", ZONE_SETTINGS["compare_date"], DATE, resolution_deg=STEP,
                                            thresholds=THRESHOLDS)
change
"""),
    code("""
tracks = headingref.pole_tracks(scenario.decimal_year - 10.0, DATE, step_years=2.0)
plot_zone_map(zone_grid, tracks=tracks)
plt.show()
"""),
    code("""
pd.json_normalize(collection["features"]).drop(columns="geometry.coordinates")
"""),
    md("""
## The poles
Dip poles (where the field is vertical) and geomagnetic poles (the centred dipole's axis) on the analysis
date, and their tracks over IGRF's whole span, 1900 to 2030.
"""),
    code("""
pd.concat([headingref.dip_poles(DATE), headingref.geomagnetic_poles(DATE)], ignore_index=True)
"""),
    code("""
century = headingref.pole_tracks(1900, 2030, step_years=10.0)
plot_pole_tracks(century)
plt.show()
"""),
    md("""
## Explore the thresholds
Move the date and the two thresholds; the map and the areas follow (a 1° grid keeps it quick).
"""),
    code("""
def explore_zones(year=scenario.decimal_year, blackout_nT=THRESHOLDS[0], caution_nT=THRESHOLDS[1]):
    grid = headingref.zones("north", year, resolution_deg=1.0, thresholds=(blackout_nT, caution_nT))
    display(zone_areas(grid))
    plot_zone_map(grid)
    plt.show()


widgets.interact(explore_zones,
                 year=widgets.FloatSlider(value=scenario.decimal_year, min=1900, max=2030, step=1.0),
                 blackout_nT=widgets.FloatSlider(value=THRESHOLDS[0], min=500, max=4000, step=250),
                 caution_nT=widgets.FloatSlider(value=THRESHOLDS[1], min=4500, max=12000, step=250));
"""),
    md("""
## The error budget at one place
Svalbrekka (an invented airfield on real coordinates) at cruise level: in steady level flight, and in the
scenario's banked turn. The tilt error reaches the slaved heading only through slaving, at most the slaving
rate times the turn's duration.
"""),
    code("""
PLACE = {"lat": 78.246, "lon": 15.466}
steady = headingref.heading_error(PLACE["lat"], PLACE["lon"], DATE, alt_km=ALT_KM, bank_deg=0.0, **BUDGET_OPTIONS)
turning = headingref.heading_error(PLACE["lat"], PLACE["lon"], DATE, alt_km=ALT_KM, bank_deg=BUDGET["bank_angle_deg"],
                                   **BUDGET_OPTIONS)
pd.concat({"steady": steady, f"{BUDGET['bank_angle_deg']:g}° bank": turning}).T
"""),
    md("""
## Along a route
The budget along the polar route TM101 (steady flight and in the turn), against the limit.
"""),
    code("""
polar = headingref.route(scenario.routes["plan"][0]["file"], DATE, alt_km=ALT_KM, grid=scenario.routes["grid"],
                         spacing_nm=scenario.routes["spacing_nm"])
samples = polar.samples
along_steady = headingref.heading_error(samples.lat_deg, samples.lon_deg, DATE, alt_km=samples.alt_km, bank_deg=0.0,
                                        **BUDGET_OPTIONS)
along_turn = headingref.heading_error(samples.lat_deg, samples.lon_deg, DATE, alt_km=samples.alt_km,
                                      bank_deg=BUDGET["bank_angle_deg"], **BUDGET_OPTIONS)
fig, ax = plt.subplots(figsize=(9, 3.5))
ax.plot(samples.distance_along_route_nm, along_steady.budget_rss_deg, label="steady level flight")
ax.plot(samples.distance_along_route_nm, along_turn.budget_rss_deg, label=f"{BUDGET['bank_angle_deg']:g}° bank turn")
ax.axhline(BUDGET["limit_deg"], color="C3", linestyle="--", label=f"limit {BUDGET['limit_deg']:g}°")
ax.set_yscale("log")
ax.set_xlabel("distance along route (NM)")
ax.set_ylabel("heading error (°, RSS)")
ax.legend()
plt.show()
"""),
    md("""
## The budget as a map
On a polar stereographic grid; the limit contour is drawn and `area_exceeding_limit_km2` is the area beyond it.
"""),
    code("""
budget_map = heading_error_grid("north", DATE, resolution_deg=STEP, alt_km=ALT_KM, bank_deg=0.0, **BUDGET_OPTIONS)
print(f"steady flight: {budget_map.attrs['area_exceeding_limit_km2']:,.0f} km² beyond {BUDGET['limit_deg']:g}°")
plot_error_map(budget_map)
plt.show()
"""),
    md("""
## Explore the bank angle
Bank angle, residual aircraft field and the acceptable error; the map and the area beyond the limit follow.
"""),
    code("""
def explore_budget(bank_deg=BUDGET["bank_angle_deg"], residual_field_nT=BUDGET["residual_field_nT"],
                   limit_deg=BUDGET["limit_deg"]):
    options = {**BUDGET_OPTIONS, "residual_field_nT": residual_field_nT, "limit_deg": limit_deg}
    grid = heading_error_grid("north", DATE, resolution_deg=1.0, alt_km=ALT_KM, bank_deg=bank_deg, **options)
    print(f"{grid.attrs['area_exceeding_limit_km2']:,.0f} km² beyond {limit_deg:g}°")
    plot_error_map(grid)
    plt.show()


widgets.interact(explore_budget,
                 bank_deg=widgets.FloatSlider(value=BUDGET["bank_angle_deg"], min=0, max=45, step=1),
                 residual_field_nT=widgets.FloatSlider(value=BUDGET["residual_field_nT"], min=0, max=500, step=10),
                 limit_deg=widgets.FloatSlider(value=BUDGET["limit_deg"], min=0.5, max=10, step=0.5));
"""),
]

# --------------------------------------------------------------------------- 04 compass base and swing
SWING = [
    md(f"""
# Compass base and compass swing

**Compass base upkeep.** The survey on the site governs (it includes the local crustal field); IGRF-14
supplies only the change since the survey. For a planned swing date: the variation to mark (rounded to
0.5°), the first date the marked value is off by more than the tolerance (model stepped forward, then a
safeguarded Newton search on the model's analytic annual rate), the resurvey due date, and the setting-out
of the heading lines (WGS84 forward geodesic, Karney's algorithm via `pyproj`).

**Compass swing.** Deviation (east positive, `magnetic = compass + deviation`) fitted as
`A + B sin h + C cos h + D sin 2h + E cos 2h` by linear least squares (the classic five-coefficient curve of
the Handbook of Magnetic Compass Adjustment), the verdict on what is left once the compensator removes B
and C, and the correction card.

{CAUTION_MD}
"""),
    code(f"""
import ipywidgets as widgets
import matplotlib.pyplot as plt
import pandas as pd

import headingref
from headingref.compass_base import base_upkeep, read_sites_csv, setting_out
from headingref.headings import compass_to_true, format_heading, format_variation
from headingref.notices import DATA_DIR
from headingref.plots.swing import card_figure, deviation_figure
from headingref.scenario import load_scenario
from headingref.swing import COEFFICIENT_MEANINGS, read_swing_csv
from headingref.units import decimal_year

{SCENARIO_SETUP}
BASES = scenario.compass_bases  # file, swing_date, tolerance, setting-out lines and distances
SWING_DATE = BASES["swing_date"]
SWING_YEAR = float(decimal_year(SWING_DATE))
sites = read_sites_csv(BASES["file"], tolerance_deg=BASES["tolerance_deg"], resurvey_years=BASES["resurvey_years"])
pd.DataFrame(sites)
"""),
    md("""
## Upkeep for the planned swing
One column per base: the latest survey carried forward with the model's change, the value to mark, when the
surveyed value drifts out of tolerance and when a resurvey is due (overdue if on or before the swing).
"""),
    code("""
upkeep = base_upkeep(sites, SWING_DATE)
upkeep.drop(columns="caution").T
"""),
    md("""
## One base through time
The model's variation at the base, the same carried from the latest survey (model plus the survey's local
offset), the surveys, and the band the new mark stays valid in.
"""),
    code("""
site, base = sites[0], upkeep.iloc[0]
through_time = headingref.field(site.lat_deg, site.lon_deg, pd.date_range("2014-01-01", "2030-01-01", freq="MS"))
fig, ax = plt.subplots(figsize=(9, 4))
ax.plot(through_time.decimal_year, through_time.declination_deg, color="0.5", label="IGRF-14 main field")
ax.plot(through_time.decimal_year, through_time.declination_deg + base.survey_minus_model_deg,
        label="carried from the latest survey")
surveys = pd.DataFrame([*site.history, (site.survey_year, site.surveyed_variation_deg)], columns=["year", "variation_deg"])
ax.scatter(surveys.year, surveys.variation_deg, color="k", zorder=3, label="surveys")
ax.axhspan(base.variation_to_mark_deg - base.tolerance_deg, base.variation_to_mark_deg + base.tolerance_deg,
           color="C2", alpha=0.15, label=f"mark {base.variation_to_mark} ± {base.tolerance_deg:g}°")
ax.axvline(SWING_YEAR, color="C1", linestyle=":", label="swing")
ax.set_xlabel("year")
ax.set_ylabel("variation (°, east positive)")
ax.set_title(site.name)
ax.legend(fontsize=8)
plt.show()
"""),
    md("""
## Setting out the heading lines
For the survey party: each marked magnetic line's true and grid azimuth and the points along it.
"""),
    code("""
setting_out(upkeep, lines_deg=BASES["setting_out_lines_deg"], distances_m=BASES["setting_out_distances_m"],
            grid=scenario.routes["grid"]).round(6)
"""),
    md("""
## Explore the swing date and the marking step
Move the planned swing date; the value to mark is rounded to the marking step.
"""),
    code("""
def explore_upkeep(swing_year=SWING_YEAR, mark_step_deg=0.5):
    display(base_upkeep(sites, swing_year, mark_step_deg=mark_step_deg)[["name", "predicted_variation_deg", "variation_to_mark", "annual_change",
                                              "survey_off_date", "mark_off_date", "mark_off_note",
                                              "resurvey_due_date", "overdue"]])


widgets.interact(explore_upkeep,
                 swing_year=widgets.FloatSlider(value=SWING_YEAR, min=2025, max=2030, step=0.25),
                 mark_step_deg=widgets.FloatSlider(value=0.5, min=0.1, max=1.0, step=0.1));
"""),
    md("""
## The swing
Twelve readings taken on the Svalbrekka base (invented). The standard errors come from the fit's residual
scatter; the inflation is 1 for readings spread evenly round the circle.
"""),
    code("""
magnetic, compass, rows = read_swing_csv(scenario.swing["file"])
swing = headingref.analyse_swing(magnetic, compass, limit_deg=scenario.swing["limit_deg"], rows=rows)
print(f"verdict {swing.verdict}: largest deviation after B and C removed {swing.max_residual_deg:.2f}° "
      f"(limit {swing.limit_deg:g}°), rms fit residual {swing.rms_fit_residual_deg:.2f}°")
swing.coefficients
"""),
    code("""
COEFFICIENT_MEANINGS
"""),
    code("""
display(deviation_figure(swing))
display(card_figure(swing, title="Compass correction card (invented aircraft)"))
"""),
    code("""
swing.readings.round(2)
"""),
    md("""
## Using the fitted curve
The fitted `DeviationCurve` plugs into the heading conversions: what is the true heading when the compass
reads 090 on the base? (`true = compass + deviation + variation`, the deviation taken at the magnetic
heading, found by Newton's method.)
"""),
    code("""
curve = swing.curve
reads = 90.0
on_magnetic = curve.magnetic_from_compass_deg(reads)
variation = upkeep.iloc[0].predicted_variation_deg
print(f"compass {format_heading(reads, reference='C')}: magnetic {format_heading(on_magnetic, 1, 'M')} "
      f"(deviation {format_variation(float(curve.deviation_deg(on_magnetic)), 'decimal', 1)}), "
      f"true {format_heading(compass_to_true(reads, curve, variation), 1, 'T')} with variation "
      f"{format_variation(variation, 'decimal', 1)}")
"""),
    md("""
## Explore the fit
Fit fewer coefficients, change the limit, or print the card for after the compensator has removed B and C.
"""),
    code("""
def explore_swing(coefficients="ABCDE", limit_deg=scenario.swing["limit_deg"], after_compensation=False):
    explored = headingref.analyse_swing(magnetic, compass, limit_deg=limit_deg, coefficients=coefficients,
                                        card_after_compensation=after_compensation, rows=rows)
    print(f"verdict {explored.verdict}: {explored.max_residual_deg:.2f}° after B and C (limit {limit_deg:g}°); "
          f"rms fit residual {explored.rms_fit_residual_deg:.2f}°")
    display(explored.card[["for_magnetic", "steer_compass", "deviation_deg"]].T.round(1))


widgets.interact(explore_swing, coefficients=widgets.Dropdown(options=["ABCDE", "ABC", "BC"], value="ABCDE"),
                 limit_deg=widgets.FloatSlider(value=scenario.swing["limit_deg"], min=0.5, max=15, step=0.5),
                 after_compensation=widgets.Checkbox(value=False));
"""),
]

# --------------------------------------------------------------------------- 05 runways
RUNWAYS = [
    md(f"""
# Runway designators

Does the painted number still fit the magnetic azimuth, and until when? The rule (ICAO Annex 14, Volume I,
runway designation marking): the designator is the whole number nearest one tenth of the magnetic azimuth of
the centre line, seen from the approach; 0 is written 36. The true azimuth is the WGS84 geodesic between the
thresholds (Karney's algorithm via `pyproj`), the variation IGRF-14 at the runway's midpoint. The forecast
interpolates the field's north and east components linearly between the model's epochs (exact for IGRF) and
bisects on whole days. Inside a band either side of a rounding boundary (default 0.25°, headingref's own
choice) no verdict is given: authorities differ on ties and the variation itself is uncertain.

{CAUTION_MD}
"""),
    code(f"""
%matplotlib inline
import ipywidgets as widgets
import numpy as np
import pandas as pd

import headingref
from headingref.notices import DATA_DIR
from headingref.plots.runways import runway_bearing_figure
from headingref.runways import boundary_margin_deg, designator_from_magnetic, magnetic_bearing_series
from headingref.scenario import load_scenario

{SCENARIO_SETUP}
RUNWAYS = scenario.runways  # file, horizon_years
RUNWAY_FILE = RUNWAYS["file"]
pd.read_csv(RUNWAY_FILE, dtype=str).head()
"""),
    md("""
## The rule, and its boundaries
Azimuths ending in 5 are the rounding boundaries; an exact tie rounds up here. `boundary_margin_deg` gives the
distance to the nearest boundary and the number on its other side.
"""),
    code("""
azimuths = np.array([4.9, 5.0, 84.99, 85.0, 179.6, 354.9, 355.0, 359.9])
margin, boundary, other_side = boundary_margin_deg(azimuths)
pd.DataFrame({"magnetic_deg": azimuths, "designator": designator_from_magnetic(azimuths), "margin_deg": margin,
              "boundary_deg": boundary, "other_side": other_side})
"""),
    md("""
## The check on the analysis date
"""),
    code("""
check = headingref.check_runways(RUNWAY_FILE, DATE, horizon_years=RUNWAYS["horizon_years"])
print(check.summary_text())
"""),
    code("""
COLUMNS = ["airport", "runway", "true_bearing_deg", "variation_deg", "magnetic_bearing_deg", "designator_implied",
           "verdict", "margin_deg", "change_date", "next_designator", "pair_check", "variation_uncertainty_deg",
           "zone", "status"]
check.table[COLUMNS].round(2)
"""),
    md("""
Out of date now, or too close to a boundary to judge:
"""),
    code("""
check.table.query("verdict != 'match'")[COLUMNS + ["reason"]].round(2)
"""),
    md("""
## Changes within the horizon
The forecast stops at the end of the model's validity (IGRF-14: 2030.0) unless extrapolation is allowed.
"""),
    code("""
print(check.changes_text())
"""),
    code("""
runway_bearing_figure(check)
"""),
    md("""
Any ends by name, here the two already out of date:
"""),
    code("""
runway_bearing_figure(check, runways=["JXTB 13", "JXQR 34"])
"""),
    md("""
One airfield's ends through time (the numbers behind the figure):
"""),
    code("""
magnetic_bearing_series(check, list(np.flatnonzero(check.table.airport == "JXRH")),
                        np.arange(scenario.decimal_year, 2030.0, 0.5)).round(2)
"""),
    md("""
## Explore
Move the check date, the boundary band and the horizon; allow extrapolation past 2030 to forecast further.
"""),
    code("""
def explore(year=scenario.decimal_year, tolerance_deg=0.25, horizon_years=RUNWAYS["horizon_years"],
            allow_extrapolation=False):
    explored = headingref.check_runways(RUNWAY_FILE, year, horizon_years=horizon_years, tolerance_deg=tolerance_deg,
                                        allow_extrapolation=allow_extrapolation)
    print(explored.summary_text())
    display(explored.table.query("verdict != 'match' or change_date != ''")[COLUMNS].round(2))


widgets.interact(explore, year=widgets.FloatSlider(value=scenario.decimal_year, min=2020, max=2030, step=0.25),
                 tolerance_deg=widgets.FloatSlider(value=0.25, min=0.0, max=1.0, step=0.05),
                 horizon_years=widgets.FloatSlider(value=RUNWAYS["horizon_years"], min=1, max=20, step=1),
                 allow_extrapolation=widgets.Checkbox(value=False));
"""),
]

NOTEBOOKS = {
    "02_high_latitude_route.ipynb": ROUTE,
    "03_zones_and_error_budget.ipynb": ZONES,
    "04_compass_base_and_swing.ipynb": SWING,
    "05_runway_designators.ipynb": RUNWAYS,
}


def build(name: str, cells: list[tuple[str, str]]) -> nbformat.NotebookNode:
    """The notebook ``name`` from its cells, with ids derived from the name and position."""
    notebook = new_notebook(metadata={"kernelspec": {"display_name": "Python 3", "language": "python", "name": "python3"}})
    for index, (kind, source) in enumerate(cells):
        cell = new_markdown_cell(source) if kind == "markdown" else new_code_cell(source)
        cell.id = hashlib.sha1(f"{name}:{index}".encode()).hexdigest()[:8]
        notebook.cells.append(cell)
    nbformat.validate(notebook)
    return notebook


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="compare with the stored notebooks instead of writing")
    args = parser.parse_args(argv)
    stale = []
    for name, cells in NOTEBOOKS.items():
        text = nbformat.writes(build(name, cells)) + "\n"
        path = NOTEBOOK_DIR / name
        if args.check:
            if not path.exists() or path.read_text(encoding="utf-8") != text:
                stale.append(name)
            continue
        tmp = path.with_suffix(".ipynb.tmp")
        tmp.write_text(text, encoding="utf-8")
        tmp.replace(path)
        print(f"wrote {path.relative_to(NOTEBOOK_DIR.parent)}")
    if stale:
        print("out of date (run python tools/make_notebooks.py): " + ", ".join(stale), file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
