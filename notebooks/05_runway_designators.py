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
# # Runway designators
#
# Does the painted number still fit the magnetic azimuth, and until when? The rule (ICAO Annex 14, Volume I,
# runway designation marking): the designator is the whole number nearest one tenth of the magnetic azimuth of
# the centre line, seen from the approach; 0 is written 36. The true azimuth is the WGS84 geodesic between the
# thresholds (Karney's algorithm via `pyproj`), the variation IGRF-14 at the runway's midpoint. The forecast
# interpolates the field's north and east components linearly between the model's epochs (exact for IGRF) and
# bisects on whole days. Inside a band either side of a rounding boundary (default 0.25°, headingref's own
# choice) no verdict is given: authorities differ on ties and the variation itself is uncertain.
#
# *Planning and engineering aid only, not approved for navigation. Official publications and charts, the aircraft's approved data, the compass base's own survey and licensed engineering and survey practice govern. The field model omits local crustal anomalies.*

# %%
# %matplotlib inline
import ipywidgets as widgets
import numpy as np
import pandas as pd

import headingref
from headingref.notices import DATA_DIR
from headingref.plots.runways import runway_bearing_figure
from headingref.runways import boundary_margin_deg, designator_from_magnetic, magnetic_bearing_series
from headingref.scenario import load_scenario

scenario = load_scenario(DATA_DIR / "demo" / "scenario.toml")  # the invented demo scenario (data/demo/README.md)
DATE = scenario.analysis_date
RUNWAYS = scenario.runways  # file, horizon_years
RUNWAY_FILE = RUNWAYS["file"]
pd.read_csv(RUNWAY_FILE, dtype=str).head()

# %% [markdown]
# ## The rule, and its boundaries
# Azimuths ending in 5 are the rounding boundaries; an exact tie rounds up here. `boundary_margin_deg` gives the
# distance to the nearest boundary and the number on its other side.

# %%
azimuths = np.array([4.9, 5.0, 84.99, 85.0, 179.6, 354.9, 355.0, 359.9])
margin, boundary, other_side = boundary_margin_deg(azimuths)
pd.DataFrame({"magnetic_deg": azimuths, "designator": designator_from_magnetic(azimuths), "margin_deg": margin,
              "boundary_deg": boundary, "other_side": other_side})

# %% [markdown]
# ## The check on the analysis date

# %%
check = headingref.check_runways(RUNWAY_FILE, DATE, horizon_years=RUNWAYS["horizon_years"])
print(check.summary_text())

# %%
COLUMNS = ["airport", "runway", "true_bearing_deg", "variation_deg", "magnetic_bearing_deg", "designator_implied",
           "verdict", "margin_deg", "change_date", "next_designator", "pair_check", "variation_uncertainty_deg",
           "zone", "status"]
check.table[COLUMNS].round(2)

# %% [markdown]
# Out of date now, or too close to a boundary to judge:

# %%
check.table.query("verdict != 'match'")[COLUMNS + ["reason"]].round(2)

# %% [markdown]
# ## Changes within the horizon
# The forecast stops at the end of the model's validity (IGRF-14: 2030.0) unless extrapolation is allowed.

# %%
print(check.changes_text())

# %%
runway_bearing_figure(check)

# %% [markdown]
# Any ends by name, here the two already out of date:

# %%
runway_bearing_figure(check, runways=["JXTB 13", "JXQR 34"])

# %% [markdown]
# One airfield's ends through time (the numbers behind the figure):

# %%
magnetic_bearing_series(check, list(np.flatnonzero(check.table.airport == "JXRH")),
                        np.arange(scenario.decimal_year, 2030.0, 0.5)).round(2)


# %% [markdown]
# ## Explore
# Move the check date, the boundary band and the horizon; allow extrapolation past 2030 to forecast further.

# %%
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
