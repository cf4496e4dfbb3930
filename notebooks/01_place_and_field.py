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
# The Earth's main field at one place from IGRF-14 (the International Geomagnetic Reference Field, 14th generation), evaluated on the WGS84 ellipsoid: declination (variation, east positive), inclination, horizontal intensity H and its weak-field zone, and the WMM error model for the declination uncertainty. Copy this notebook and change the place and dates.
#
# *Planning and engineering aid only; official publications, charts, the aircraft's approved data and the survey on site govern.*

# %%
import numpy as np
import pandas as pd
import matplotlib.pyplot as plt
import headingref

PLACE = {"lat": 78.246, "lon": 15.466}  # an invented airfield's coordinates (demo scenario: Svalbrekka)
DATE = "2026-12-02"

# %% [markdown]
# ## The field on one date
# One row, all elements and their annual rates (analytic, from the model's secular variation).

# %%
now = headingref.field(PLACE["lat"], PLACE["lon"], DATE)
now.T

# %%
from headingref.units import format_dm
row = now.iloc[0]
print(f"variation {format_dm(row.declination_deg)}, changing {row.declination_deg_per_year * 60:+.1f}′/yr; "
      f"uncertainty {row.declination_uncertainty_deg:.2f}°; H {row.horizontal_nT:.0f} nT ({row.zone})")

# %% [markdown]
# ## Through time, 1900 to 2030
# IGRF is linear in time between its 5-year epochs; the last interval is its predicted secular variation.

# %%
dates = pd.date_range("1900-01-01", "2030-01-01", freq="3MS")
history = headingref.field(PLACE["lat"], PLACE["lon"], dates)
fig, axes = plt.subplots(3, 1, figsize=(9, 8), sharex=True)
axes[0].plot(history.decimal_year, history.declination_deg)
axes[0].set_ylabel("declination (°, E+)")
axes[1].plot(history.decimal_year, history.horizontal_nT)
axes[1].axhline(6000, ls="--", c="k", lw=0.8)
axes[1].set_ylabel("H (nT)")
axes[2].plot(history.decimal_year, history.declination_uncertainty_deg)
axes[2].set_ylabel("D uncertainty (°)")
axes[2].set_xlabel("year")
fig.suptitle("IGRF-14 at the chosen place")
plt.show()

# %% [markdown]
# ## Explore
# Move the date; the table follows (ipywidgets).

# %%
import ipywidgets as widgets

def show(year=2026.9, alt_km=0.0):
    cols = ["declination_deg", "declination_deg_per_year", "inclination_deg", "horizontal_nT",
            "declination_uncertainty_deg", "zone"]
    display(headingref.field(PLACE["lat"], PLACE["lon"], year, alt_km=alt_km)[cols])

widgets.interact(show, year=widgets.FloatSlider(value=2026.9, min=1900, max=2030, step=0.1),
                 alt_km=widgets.FloatSlider(value=0, min=0, max=15, step=0.5));

# %% [markdown]
# ## A grid around the place
# `field_grid` evaluates a regular latitude-longitude grid in one call and returns an xarray Dataset.

# %%
grid = headingref.field_grid(np.arange(70, 86, 0.25), np.arange(-20, 50, 0.25), DATE)
grid.declination_deg.plot.contourf(levels=np.arange(-20, 41, 2), cmap="RdBu_r", figsize=(9, 5))
plt.plot(PLACE["lon"], PLACE["lat"], "k*", ms=12)
plt.title("declination (°, east positive)")
plt.show()
