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

# %% [markdown]
# ## Your inputs
# A scenario file (the demo is invented: data/demo/README.md), the date (`None` takes the scenario's analysis
# date) and a place for the error budget, typed as on the command line (`N78°14.8′`, `015 28 00 E`, `78.246`)
# with its height (`FL350`, `0 m`). The default place is Svalbrekka, an invented airfield on real coordinates.

# %%
from headingref.scenario import DEMO_SCENARIO

SCENARIO = DEMO_SCENARIO  # or the path of your own scenario TOML
DATE = None  # e.g. "2027-06-01"
PLACE_LAT = "N78°14.8′"
PLACE_LON = "015 28 00 E"
HEIGHT = "FL350"

# %%
# %matplotlib inline
import pandas as pd

import headingref
from headingref.detector import heading_error_grid
from headingref.plots.detector import plot_budget_profile
from headingref.plots.zones import plot_error_map, plot_pole_tracks, plot_zone_map
from headingref.scenario import load_scenario
from headingref.units import format_dm, parse_coordinate, parse_height_km
from headingref.weak_field import zone_areas, zone_change
from headingref.workbench import date_picker, explorer, show, slider, status_line, styled, with_warnings

scenario = load_scenario(SCENARIO)
DATE = DATE or scenario.analysis_date
YEAR = float(headingref.units.decimal_year(DATE))
LAT, LON = parse_coordinate(PLACE_LAT, "lat"), parse_coordinate(PLACE_LON, "lon")
ALT_KM = parse_height_km(HEIGHT, default_unit=None)
ZONE_SETTINGS = scenario.zones  # step_deg, blackout_nT, caution_nT, compare_date
THRESHOLDS = (ZONE_SETTINGS["blackout_nT"], ZONE_SETTINGS["caution_nT"])
STEP = ZONE_SETTINGS["step_deg"]  # 0.5 degree grid
TURN = scenario.heading_error_options()  # the [error_budget] section: detector settings and the turn
LEVEL = scenario.heading_error_options(manoeuvre=False)  # the same detector in steady level flight
print(f"{scenario.title}; date {DATE}; place {format_dm(LAT, 'N', 'S', 1)} {format_dm(LON, 'E', 'W', 1)} "
      f"at {ALT_KM:.2f} km")
styled(pd.DataFrame([TURN]))

# %% [markdown]
# ## The zones now and ten years ago
# `zone_change` evaluates both dates on one grid: the areas at each date and their change, and all boundaries
# as one GeoJSON FeatureCollection. On the map the earlier date is shaded and the later one's boundaries are
# dashed; the dip pole's track between the two dates is drawn on top.

# %%
zone_grid, change, collection = zone_change("north", ZONE_SETTINGS["compare_date"], DATE, resolution_deg=STEP,
                                            thresholds=THRESHOLDS)
styled(change)

# %%
tracks = headingref.pole_tracks(YEAR - 10.0, DATE, step_years=2.0)
show(plot_zone_map(zone_grid, tracks=tracks))

# %%
pd.json_normalize(collection["features"]).drop(columns="geometry.coordinates")

# %% [markdown]
# ## The poles
# Dip poles (where the field is vertical) and geomagnetic poles (the centred dipole's axis) on the analysis
# date, and their tracks over IGRF's whole span, 1900 to 2030.

# %%
styled(pd.concat([headingref.dip_poles(DATE), headingref.geomagnetic_poles(DATE)], ignore_index=True))

# %%
show(plot_pole_tracks(headingref.pole_tracks(1900, 2030, step_years=10.0)))


# %% [markdown]
# ## Explore the thresholds
# Move the date and the two thresholds; the map and the areas follow (a 1° grid keeps it quick).

# %%
def explore_zones(day, blackout_nT, caution_nT):
    if blackout_nT >= caution_nT:
        return status_line("the blackout threshold must be below the caution threshold", level="error")
    grid = headingref.zones("north", day, resolution_deg=1.0, thresholds=(blackout_nT, caution_nT))
    return [styled(zone_areas(grid)), plot_zone_map(grid)]


explorer(explore_zones, {"day": date_picker(DATE, "date"),
                         "blackout_nT": slider(THRESHOLDS[0], 500, 4000, 250, "blackout below (nT)"),
                         "caution_nT": slider(THRESHOLDS[1], 4500, 12000, 250, "caution below (nT)")})

# %% [markdown]
# ## The error budget at one place
# The place at its height: in steady level flight, and in the scenario's banked turn. The tilt error reaches
# the slaved heading only through slaving (at most the slaving rate times the turn's duration), and not at all
# while the bank is beyond the slaving cut-out. `dominant_term` is the largest term; `saturated_by` says when
# the budget sits at a ceiling that a larger manoeuvre would not change.

# %%
BREAKDOWN = ["zone", "saturated_by", "dominant_term", "budget_rss_deg", "exceeds_limit", "residual_field_error_deg",
             "model_uncertainty_deg", "tilt_error_deg", "slaving_on", "slaving_drift_deg", "slaving_recovery_min",
             "horizontal_nT", "inclination_deg"]


def saturation_lines(table):
    """A status line for each row whose budget one term saturates."""
    return [status_line(f"{case}: the budget is saturated by {row.saturated_by.replace('_', ' ')} "
                        f"({row.budget_rss_deg:.1f}°); a larger manoeuvre would not change it")
            for case, row in table.iterrows() if row.saturated_by != "none"]


cases = pd.concat({
    "steady level flight": headingref.heading_error(LAT, LON, DATE, alt_km=ALT_KM, **LEVEL),
    f"{TURN['bank_angle_deg']:g}° bank, {TURN['turn_duration_s']:g} s": headingref.heading_error(
        LAT, LON, DATE, alt_km=ALT_KM, **TURN),
}).droplevel(1)
show(*saturation_lines(cases), styled(cases[BREAKDOWN].reset_index(names="case")))

# %% [markdown]
# ## Along a route
# The budget along the scenario's first route (steady flight and in the turn), against the limit.

# %%
plan = scenario.routes["plan"][0]
polar, notes = with_warnings(headingref.route, plan["file"], DATE, **scenario.route_options(plan))
samples = polar.samples
along = {label: headingref.heading_error(samples.lat_deg, samples.lon_deg, DATE, alt_km=samples.alt_km,
                                         **options).budget_rss_deg
         for label, options in (("steady level flight", LEVEL), (f"{TURN['bank_angle_deg']:g}° bank turn", TURN))}
show(*notes, plot_budget_profile(samples.distance_along_route_nm, along, limit_deg=TURN["limit_deg"]))

# %% [markdown]
# ## The budget as a map
# On a polar stereographic grid; the limit contour is drawn and `area_exceeding_limit_km2` is the area beyond it.

# %%
budget_map = heading_error_grid("north", DATE, resolution_deg=STEP, alt_km=ALT_KM, **LEVEL)
print(f"steady flight: {budget_map.attrs['area_exceeding_limit_km2']:,.0f} km² beyond {TURN['limit_deg']:g}°")
show(plot_error_map(budget_map))


# %% [markdown]
# ## Explore the error budget
# The manoeuvre (bank angle and how long it lasts), the installation (residual aircraft field, slaving rate and
# the bank at which slaving is cut out) and the acceptable error. The breakdown at the place and the map (1°
# grid) follow; a status line says when one term saturates the budget.

# %%
def explore_budget(bank_angle_deg, turn_duration_s, residual_field_nT, slaving_rate_deg_per_min,
                   slaving_cutout_bank_deg, limit_deg):
    options = {**TURN, "bank_angle_deg": bank_angle_deg, "turn_duration_s": turn_duration_s,
               "residual_field_nT": residual_field_nT, "slaving_rate_deg_per_min": slaving_rate_deg_per_min,
               "slaving_cutout_bank_deg": slaving_cutout_bank_deg, "limit_deg": limit_deg}
    here = headingref.heading_error(LAT, LON, DATE, alt_km=ALT_KM, **options)
    here.index = ["at the place"]
    grid = heading_error_grid("north", DATE, resolution_deg=1.0, alt_km=ALT_KM, **options)
    share = grid.attrs.get("saturated_share_beyond_limit", 0.0)
    items = saturation_lines(here)
    if grid.attrs.get("saturated_by", "none") != "none":
        part = f"{100 * share:.0f}%" if share >= 0.01 else "under 1%"
        items.append(status_line(f"map: {part} of the area beyond {limit_deg:g}° is saturated by "
                                 f"{grid.attrs['saturated_by'].replace('_', ' ')}"))
    summary = status_line(f"{grid.attrs['area_exceeding_limit_km2']:,.0f} km² beyond {limit_deg:g}°", level="info")
    return [*items, summary, styled(here[BREAKDOWN].reset_index(names="case")), plot_error_map(grid)]


explorer(explore_budget, {
    "bank_angle_deg": slider(TURN["bank_angle_deg"], 0, 45, 1, "bank angle (°)"),
    "turn_duration_s": slider(TURN["turn_duration_s"], 0, 300, 10, "turn duration (s)"),
    "residual_field_nT": slider(TURN["residual_field_nT"], 0, 500, 10, "residual aircraft field (nT)"),
    "slaving_rate_deg_per_min": slider(TURN["slaving_rate_deg_per_min"], 0.5, 10, 0.5, "slaving rate (°/min)"),
    "slaving_cutout_bank_deg": slider(TURN["slaving_cutout_bank_deg"], 0, 90, 1, "slaving cut out above bank (°)"),
    "limit_deg": slider(TURN["limit_deg"], 0.5, 10, 0.5, "acceptable error (°)"),
})
