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

# %%
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

scenario = load_scenario(DATA_DIR / "demo" / "scenario.toml")  # the invented demo scenario (data/demo/README.md)
DATE = scenario.analysis_date
SETTINGS = scenario.routes  # spacing_nm, path, grid, alt (km) and the route plans
OPTIONS = dict(alt_km=SETTINGS["alt"], grid=SETTINGS["grid"], spacing_nm=SETTINGS["spacing_nm"], path=SETTINGS["path"])
PLANS = {plan["name"]: plan["file"] for plan in SETTINGS["plan"]}
ROUTE = list(PLANS)[0]  # TM101, across the polar cap
list(PLANS)

# %% [markdown]
# ## The waypoints
# Waypoints without an altitude fly at the scenario's default (FL350, here in km above the ellipsoid).

# %%
read_waypoints(PLANS[ROUTE], alt_km=SETTINGS["alt"])

# %% [markdown]
# ## The legs
# Courses are at the start of each leg (the `_mid` and `_end` columns give them half-way and at the end: on a
# geodesic near the pole they turn a lot). The stretches are distances along the leg (NM) where H is below the
# caution / blackout threshold: there a magnetic heading reference is degraded or unusable.

# %%
result = headingref.route(PLANS[ROUTE], DATE, **OPTIONS)
LEG_COLUMNS = ["from", "to", "distance_nm", "true_course_deg", "variation_deg", "magnetic_course_deg",
               "grid_course_deg", "grivation_deg", "min_horizontal_nT", "max_declination_uncertainty_deg", "zone",
               "caution_stretches_nm", "blackout_stretches_nm"]
result.legs[LEG_COLUMNS].round(1)

# %% [markdown]
# ## Map and profile
# The map draws isogonic lines (variation, E/W) and shades the caution and blackout zones; the profile shows
# variation, H and the declination uncertainty against distance along the route.

# %%
plot_route_map(result)
plt.show()
plot_route_profile(result)
plt.show()

# %% [markdown]
# ## One course in every reference
# The same conversions one at a time with `headingref.headings` (the route does them for every sample): the
# first leg's initial true course at its first waypoint.

# %%
first = result.legs.iloc[0]
lat, lon, true_course = first.from_lat_deg, first.from_lon_deg, first.true_course_deg
variation = model_variation_deg(lat, lon, DATE)
convergence = convergence_deg(lat, lon, SETTINGS["grid"])
print(f"true {format_heading(true_course, reference='T')}, variation {format_variation(variation)}, "
      f"magnetic {format_heading(true_to_magnetic(true_course, lat=lat, lon=lon, date=DATE), reference='M')}")
print(f"convergence {convergence:+.1f}°, grid {format_heading(true_to_grid(true_course, convergence), reference='G')}, "
      f"grivation {format_variation(grivation_deg(variation, convergence))}")

# %% [markdown]
# ## Across the antimeridian, and geodesic against rhumb line
# TM205 crosses 180° over the Bering Strait; the map and the courses carry on without a break. Below it, the
# polar route flown as rhumb lines instead of geodesics: longer, with one constant true course per leg.

# %%
across = headingref.route(PLANS[list(PLANS)[1]], DATE, **OPTIONS)
plot_route_map(across)
plt.show()
across.legs[LEG_COLUMNS].round(1)

# %%
rhumb = headingref.route(PLANS[ROUTE], DATE, **{**OPTIONS, "path": "rhumb"})
pd.DataFrame({"from": result.legs["from"], "to": result.legs["to"],
              "geodesic_nm": result.legs["distance_nm"], "rhumb_nm": rhumb.legs["distance_nm"],
              "geodesic_true_course_deg": result.legs["true_course_deg"],
              "rhumb_true_course_deg": rhumb.legs["true_course_deg"]}).round(1)


# %% [markdown]
# ## Explore
# Pick a route, a date (decimal year), a grid and the path; the legs and the profile follow (ipywidgets).

# %%
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

# %% [markdown]
# ## Samples and GeoJSON
# Every sample along the route (for your own plots or a spreadsheet), and the legs as GeoJSON lines cut at the
# antimeridian (RFC 7946), ready for a GIS.

# %%
result.samples.head()

# %%
pd.json_normalize(route_geojson(across)["features"])
