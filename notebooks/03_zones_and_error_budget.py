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
# # Weak-field zones and the heading-reference error budget
#
# Where the horizontal field H is too weak for a magnetic heading reference: the WMM technical reports' zones
# (blackout where H < 2000 nT, caution where H < 6000 nT) from IGRF-14 on a latitude-longitude grid, their
# GeoJSON boundaries (RFC 7946) and geodesic areas (Karney's algorithm via `pyproj`), how they moved in ten
# years, and the poles: dip poles (H = 0, Newton's method) and geomagnetic poles (axis of the centred dipole
# from g10, g11, h11). Then the error budget of a slaved flux-gate detector: the residual aircraft field
# (`asin(dB/H)`), the tilt of the pendulous detector in a banked turn (grows with the tangent of the
# inclination), the WMM error model for declination, and the gyro dragged by slaving, combined root-sum-square.
#
# *Planning and engineering aid only, not approved for navigation. Official publications and charts, the aircraft's approved data, the compass base's own survey and licensed engineering and survey practice govern. The field model omits local crustal anomalies.*

# %%
import ipywidgets as widgets
import matplotlib.pyplot as plt
import pandas as pd

import headingref
from headingref.detector import heading_error_grid
from headingref.notices import DATA_DIR
from headingref.plots.zones import plot_error_map, plot_pole_tracks, plot_zone_map
from headingref.scenario import load_scenario
from headingref.zones import zone_areas, zone_change

scenario = load_scenario(DATA_DIR / "demo" / "scenario.toml")  # the invented demo scenario (data/demo/README.md)
DATE = scenario.analysis_date
ZONE_SETTINGS = scenario.zones  # step_deg, blackout_nT, caution_nT, compare_date
THRESHOLDS = (ZONE_SETTINGS["blackout_nT"], ZONE_SETTINGS["caution_nT"])
STEP = ZONE_SETTINGS["step_deg"]  # 0.5 degree grid
BUDGET = scenario.error_budget
ALT_KM = scenario.routes["alt"]  # cruise level of the demo routes (FL350), km
BUDGET_OPTIONS = scenario.heading_error_options()  # the section as heading_error's keyword arguments
BUDGET_OPTIONS.pop("bank_angle_deg")  # the bank angle is the slider below
BUDGET

# %% [markdown]
# ## The zones now and ten years ago
# `zone_change` evaluates both dates on one grid: the areas at each date and their change, and all boundaries
# as one GeoJSON FeatureCollection. On the map the earlier date is shaded and the later one's boundaries are
# dashed; the dip pole's track between the two dates is drawn on top.

# %%
zone_grid, change, collection = zone_change("north", ZONE_SETTINGS["compare_date"], DATE, resolution_deg=STEP,
                                            thresholds=THRESHOLDS)
change

# %%
tracks = headingref.pole_tracks(scenario.decimal_year - 10.0, DATE, step_years=2.0)
plot_zone_map(zone_grid, tracks=tracks)
plt.show()

# %%
pd.json_normalize(collection["features"]).drop(columns="geometry.coordinates")

# %% [markdown]
# ## The poles
# Dip poles (where the field is vertical) and geomagnetic poles (the centred dipole's axis) on the analysis
# date, and their tracks over IGRF's whole span, 1900 to 2030.

# %%
pd.concat([headingref.dip_poles(DATE), headingref.geomagnetic_poles(DATE)], ignore_index=True)

# %%
century = headingref.pole_tracks(1900, 2030, step_years=10.0)
plot_pole_tracks(century)
plt.show()


# %% [markdown]
# ## Explore the thresholds
# Move the date and the two thresholds; the map and the areas follow (a 1° grid keeps it quick).

# %%
def explore_zones(year=scenario.decimal_year, blackout_nT=THRESHOLDS[0], caution_nT=THRESHOLDS[1]):
    grid = headingref.zones("north", year, resolution_deg=1.0, thresholds=(blackout_nT, caution_nT))
    display(zone_areas(grid))
    plot_zone_map(grid)
    plt.show()


widgets.interact(explore_zones,
                 year=widgets.FloatSlider(value=scenario.decimal_year, min=1900, max=2030, step=1.0),
                 blackout_nT=widgets.FloatSlider(value=THRESHOLDS[0], min=500, max=4000, step=250),
                 caution_nT=widgets.FloatSlider(value=THRESHOLDS[1], min=4500, max=12000, step=250));

# %% [markdown]
# ## The error budget at one place
# Svalbrekka (an invented airfield on real coordinates) at cruise level: in steady level flight, and in the
# scenario's banked turn. The tilt error reaches the slaved heading only through slaving, at most the slaving
# rate times the turn's duration.

# %%
PLACE = {"lat": 78.246, "lon": 15.466}
steady = headingref.heading_error(PLACE["lat"], PLACE["lon"], DATE, alt_km=ALT_KM, bank_deg=0.0, **BUDGET_OPTIONS)
turning = headingref.heading_error(PLACE["lat"], PLACE["lon"], DATE, alt_km=ALT_KM, bank_deg=BUDGET["bank_angle_deg"],
                                   **BUDGET_OPTIONS)
pd.concat({"steady": steady, f"{BUDGET['bank_angle_deg']:g}° bank": turning}).T

# %% [markdown]
# ## Along a route
# The budget along the polar route TM101 (steady flight and in the turn), against the limit.

# %%
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

# %% [markdown]
# ## The budget as a map
# On a polar stereographic grid; the limit contour is drawn and `area_exceeding_limit_km2` is the area beyond it.

# %%
budget_map = heading_error_grid("north", DATE, resolution_deg=STEP, alt_km=ALT_KM, bank_deg=0.0, **BUDGET_OPTIONS)
print(f"steady flight: {budget_map.attrs['area_exceeding_limit_km2']:,.0f} km² beyond {BUDGET['limit_deg']:g}°")
plot_error_map(budget_map)
plt.show()


# %% [markdown]
# ## Explore the bank angle
# Bank angle, residual aircraft field and the acceptable error; the map and the area beyond the limit follow.

# %%
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
