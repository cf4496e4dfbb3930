# ---
# jupyter:
#   jupytext:
#     formats: ipynb,py:percent
#     text_representation:
#       extension: .py
#       format_name: percent
#       format_version: '1.3'
#       jupytext_version: 1.19.6
#   kernelspec:
#     display_name: Python 3
#     language: python
#     name: python3
# ---

# %% [markdown]
# # A high-latitude route
#
# Legs of a route leg by leg: distance and course along the WGS84 geodesic (Karney's algorithms, through
# `pyproj.Geod`) or the rhumb line, in every heading reference: true, magnetic (IGRF-14 variation, east
# positive, `magnetic = true - variation`), grid (meridian convergence of a polar stereographic grid from PROJ,
# `grid = true - convergence`) and grivation. Along the way: the horizontal field H against the WMM caution
# (6000 nT) and blackout (2000 nT) thresholds, and the declination uncertainty from the WMM error model. Copy
# this notebook and point it at your own waypoint CSV (`name, lat, lon[, alt]`).
#
# *Planning and engineering aid only, not approved for navigation. Official publications and charts, the aircraft's approved data, the compass base's own survey and licensed engineering and survey practice govern. The field model omits local crustal anomalies.*

# %% [markdown]
# ## Your inputs
# A scenario file (the demo is invented: data/demo/README.md), the route to study (a waypoint CSV
# `name, lat, lon[, alt]`, or a GPX, KML or GeoJSON file; `None` takes the scenario's first route plan) and the
# date (`None` takes the scenario's analysis date).

# %%
from headingref.scenario import DEMO_SCENARIO

SCENARIO = DEMO_SCENARIO  # or the path of your own scenario TOML
ROUTE_FILE = None  # e.g. "my_route.csv" or "my_route.gpx"
DATE = None  # e.g. "2027-06-01"

# %%
# %matplotlib inline
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
from headingref.plots.route import plot_route_map, plot_route_profile
from headingref.routes import read_waypoints, route_geojson
from headingref.scenario import load_scenario
from headingref.workbench import choice, date_picker, explorer, show, status_line, styled, with_warnings

scenario = load_scenario(SCENARIO)
DATE = DATE or scenario.analysis_date
PLANS = {plan["name"]: plan for plan in scenario.routes["plan"]}
if ROUTE_FILE is not None:
    PLANS = {str(ROUTE_FILE): {"name": str(ROUTE_FILE), "file": ROUTE_FILE}, **PLANS}
ROUTE = next(iter(PLANS))
OPTIONS = scenario.route_options(PLANS[ROUTE])
print(f"{scenario.title} ({scenario.operator}); date {DATE}; route {ROUTE}")

# %% [markdown]
# ## The waypoints
# Waypoints without an altitude fly at the scenario's default (FL350, here in km above the ellipsoid).

# %%
styled(read_waypoints(PLANS[ROUTE]["file"], alt_km=OPTIONS["alt_km"]))

# %% [markdown]
# ## The legs
# Courses are at the start of each leg (the `_mid` and `_end` columns give them half-way and at the end: on a
# geodesic near the pole they turn a lot). The stretches (first columns) are distances along the leg (NM) where
# H is below the caution / blackout threshold: there a magnetic heading reference is degraded or unusable.

# %%
LEG_COLUMNS = ["from", "to", "zone", "blackout_stretches_nm", "caution_stretches_nm", "distance_nm",
               "true_course_deg", "variation_deg", "magnetic_course_deg", "grid_course_deg", "grivation_deg",
               "min_horizontal_nT", "max_declination_uncertainty_deg"]


def legs_view(result):
    """The legs as a readable table, led by a status line when a leg has no magnetic reference."""
    weak = result.legs[result.legs.zone != "normal"]
    items = [status_line(f"{len(weak)} of {len(result.legs)} legs cross a weak-field zone: magnetic heading "
                         "reference degraded there")] if len(weak) else []
    return items + [styled(result.legs[LEG_COLUMNS])]


result, notes = with_warnings(headingref.route, PLANS[ROUTE]["file"], DATE, **OPTIONS)
show(*notes, *legs_view(result))

# %% [markdown]
# ## Map and profile
# The map draws isogonic lines (variation, E/W) and shades the caution and blackout zones; the profile shows
# variation, H and the declination uncertainty against distance along the route.

# %%
show(plot_route_map(result), plot_route_profile(result))

# %% [markdown]
# ## One course in every reference
# The same conversions one at a time with `headingref.headings` (the route does them for every sample): the
# first leg's initial true course at its first waypoint.

# %%
first = result.legs.iloc[0]
lat, lon, true_course = first.from_lat_deg, first.from_lon_deg, first.true_course_deg
variation = model_variation_deg(lat, lon, DATE)
convergence = convergence_deg(lat, lon, result.legs.attrs.get("grid", "polar"))
print(f"true {format_heading(true_course, reference='T')}, variation {format_variation(variation)}, "
      f"magnetic {format_heading(true_to_magnetic(true_course, lat=lat, lon=lon, date=DATE), reference='M')}")
print(f"convergence {convergence:+.1f}°, grid {format_heading(true_to_grid(true_course, convergence), reference='G')}, "
      f"grivation {format_variation(grivation_deg(variation, convergence))}")

# %% [markdown]
# ## Across the antimeridian, and geodesic against rhumb line
# TM205 crosses 180° over the Bering Strait; the map and the courses carry on without a break. Below it, the
# first route flown as rhumb lines instead of geodesics: longer, with one constant true course per leg.

# %%
ACROSS = next((name for name in PLANS if "antimeridian" in name), list(PLANS)[-1])
across, notes = with_warnings(headingref.route, PLANS[ACROSS]["file"], DATE, **scenario.route_options(PLANS[ACROSS]))
show(plot_route_map(across), *notes, *legs_view(across))

# %%
rhumb = headingref.route(PLANS[ROUTE]["file"], DATE, **{**OPTIONS, "path": "rhumb"})
styled(pd.DataFrame({"from": result.legs["from"], "to": result.legs["to"],
                     "geodesic_nm": result.legs["distance_nm"], "rhumb_nm": rhumb.legs["distance_nm"],
                     "geodesic_true_course_deg": result.legs["true_course_deg"],
                     "rhumb_true_course_deg": rhumb.legs["true_course_deg"]}))


# %% [markdown]
# ## Explore
# Pick a route, a date, a grid and the path; the legs and the map follow.

# %%
def explore(route_name, day, grid, path):
    options = {**scenario.route_options(PLANS[route_name]), "grid": grid, "path": path}
    explored, found = with_warnings(headingref.route, PLANS[route_name]["file"], day, **options)
    return found + legs_view(explored) + [plot_route_map(explored)]


explorer(explore, {"route_name": choice(list(PLANS), ROUTE, "route"),
                   "day": date_picker(DATE, "date"),
                   "grid": choice(["auto", "polar", "polar:-100", "lcc:65,80,-100", "utm:33"], "auto", "grid"),
                   "path": choice(["geodesic", "rhumb"], OPTIONS["path"], "path")})

# %% [markdown]
# ## Samples and GeoJSON
# Every sample along the route (for your own plots or a spreadsheet), and the legs as GeoJSON lines cut at the
# antimeridian (RFC 7946), ready for a GIS.

# %%
styled(result.samples.head())

# %%
pd.json_normalize(route_geojson(across)["features"])
