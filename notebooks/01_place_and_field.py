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
# # A place and its field through time
#
# The Earth's main field at one place from IGRF-14 (the International Geomagnetic Reference Field, 14th
# generation), evaluated on the WGS84 ellipsoid: declination (variation, east positive), inclination,
# horizontal intensity H and its weak-field zone, and the WMM error model for the declination uncertainty.
#
# *Planning and engineering aid only, not approved for navigation. Official publications and charts, the
# aircraft's approved data, the survey on site and licensed practice govern. The field model omits local
# crustal anomalies.*

# %% [markdown]
# ## Your inputs
# Type the place as you would on the command line: decimal degrees (`78.6`), degrees and minutes with a
# hemisphere letter (`N61°10.5′`, `149 54 30 W`) or the compact trade form (`7836N 01754E`). Heights take a
# unit (`0 m`, `35000 ft`, `FL350`). The defaults are an invented airfield of the demo scenario.

# %%
PLACE_LAT = "N78°36.0′"
PLACE_LON = "017 54 00 E"
HEIGHT = "0 m"
DATE = "2026-12-02"
MODEL = None  # None for IGRF-14, or a model name / coefficient file

# %%
# %matplotlib inline
import ipywidgets as widgets
import numpy as np
import pandas as pd
from IPython.display import display

import headingref
from headingref.plots.field import declination_map_figure, field_history_figure
from headingref.units import format_dm, parse_coordinate, parse_height_km
from headingref.workbench import date_picker, explorer, status_line, styled

lat = parse_coordinate(PLACE_LAT, "lat")
lon = parse_coordinate(PLACE_LON, "lon")
alt_km = parse_height_km(HEIGHT, default_unit=None)
now = headingref.field(lat, lon, DATE, alt_km=alt_km, model=MODEL)
row = now.iloc[0]
print(f"{format_dm(lat, 'N', 'S', 1)} {format_dm(lon, 'E', 'W', 1)} on {DATE}: variation {format_dm(row.declination_deg)}, "
      f"changing {row.declination_deg_per_year * 60:+.1f}′/yr, uncertainty ±{row.declination_uncertainty_deg:.2f}°, "
      f"H {row.horizontal_nT:,.0f} nT ({row.zone})")

# %% [markdown]
# ## The field on one date
# Every element and its annual rate (analytic, from the model's secular variation).

# %%
styled(now.T.rename(columns={0: "value"}).reset_index(names="element"))

# %% [markdown]
# ## Through time, 1900 to 2030
# IGRF is linear in time between its 5-year epochs; its last interval is the predicted secular variation.

# %%
history = headingref.field(lat, lon, pd.date_range("1900-01-01", "2030-01-01", freq="3MS"), alt_km=alt_km, model=MODEL)
display(field_history_figure(history, title="IGRF-14 at the chosen place"))

# %% [markdown]
# ## Explore
# Pick a date and a height; the elements follow. A place in a weak-field zone is flagged above the table.

# %%
COLUMNS = ["zone", "declination_deg", "declination_deg_per_year", "inclination_deg", "horizontal_nT",
           "declination_uncertainty_deg"]


def show(day, height_km):
    table = headingref.field(lat, lon, day, alt_km=height_km, model=MODEL)
    items = [styled(table[COLUMNS])]
    if (table.zone != "normal").any():
        items.insert(0, status_line(f"H {table.horizontal_nT.iloc[0]:,.0f} nT: {table.zone.iloc[0]} zone, "
                                    "magnetic heading reference degraded"))
    return items


explorer(show, {"day": date_picker(DATE, "date"),
                "height_km": widgets.FloatSlider(value=alt_km, min=0.0, max=15.0, step=0.5,
                                             description="height (km)")})

# %% [markdown]
# ## A grid around the place
# `field_grid` evaluates a regular latitude-longitude grid in one call and returns an xarray Dataset.

# %%
grid = headingref.field_grid(np.arange(max(lat - 8, -89), min(lat + 8, 89.01), 0.25),
                             np.arange(lon - 35, lon + 35.01, 0.25), DATE, model=MODEL)
display(declination_map_figure(grid, place=(lat, lon)))
