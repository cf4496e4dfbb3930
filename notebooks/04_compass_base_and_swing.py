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
# # Compass base and compass swing
#
# **Compass base upkeep.** The survey on the site governs (it includes the local crustal field); IGRF-14
# supplies only the change since the survey. For a planned swing date: the variation to mark (rounded to
# 0.5°), the first date the marked value is off by more than the tolerance (model stepped forward, then a
# safeguarded Newton search on the model's analytic annual rate), the resurvey due date, and the setting-out
# of the heading lines (WGS84 forward geodesic, Karney's algorithm via `pyproj`).
#
# **Compass swing.** Deviation (east positive, `magnetic = compass + deviation`) fitted as
# `A + B sin h + C cos h + D sin 2h + E cos 2h` by linear least squares (the classic five-coefficient curve of
# the Handbook of Magnetic Compass Adjustment), the verdict on what is left once the compensator removes B
# and C, and the correction card.
#
# *Planning and engineering aid only, not approved for navigation. Official publications and charts, the aircraft's approved data, the compass base's own survey and licensed engineering and survey practice govern. The field model omits local crustal anomalies.*

# %%
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

scenario = load_scenario(DATA_DIR / "demo" / "scenario.toml")  # the invented demo scenario (data/demo/README.md)
DATE = scenario.analysis_date
BASES = scenario.compass_bases  # file, swing_date, tolerance, setting-out lines and distances
SWING_DATE = BASES["swing_date"]
SWING_YEAR = float(decimal_year(SWING_DATE))
sites = read_sites_csv(BASES["file"], tolerance_deg=BASES["tolerance_deg"], resurvey_years=BASES["resurvey_years"])
pd.DataFrame(sites)

# %% [markdown]
# ## Upkeep for the planned swing
# One column per base: the latest survey carried forward with the model's change, the value to mark, when the
# surveyed value drifts out of tolerance and when a resurvey is due (overdue if on or before the swing).

# %%
upkeep = base_upkeep(sites, SWING_DATE)
upkeep.drop(columns="caution").T

# %% [markdown]
# ## One base through time
# The model's variation at the base, the same carried from the latest survey (model plus the survey's local
# offset), the surveys, and the band the new mark stays valid in.

# %%
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

# %% [markdown]
# ## Setting out the heading lines
# For the survey party: each marked magnetic line's true and grid azimuth and the points along it.

# %%
setting_out(upkeep, lines_deg=BASES["setting_out_lines_deg"], distances_m=BASES["setting_out_distances_m"],
            grid=scenario.routes["grid"]).round(6)


# %% [markdown]
# ## Explore the swing date and the marking step
# Move the planned swing date; the value to mark is rounded to the marking step.

# %%
def explore_upkeep(swing_year=SWING_YEAR, mark_step_deg=0.5):
    display(base_upkeep(sites, swing_year, mark_step_deg=mark_step_deg)[["name", "predicted_variation_deg", "variation_to_mark", "annual_change",
                                              "survey_off_date", "mark_off_date", "mark_off_note",
                                              "resurvey_due_date", "overdue"]])


widgets.interact(explore_upkeep,
                 swing_year=widgets.FloatSlider(value=SWING_YEAR, min=2025, max=2030, step=0.25),
                 mark_step_deg=widgets.FloatSlider(value=0.5, min=0.1, max=1.0, step=0.1));

# %% [markdown]
# ## The swing
# Twelve readings taken on the Svalbrekka base (invented). The standard errors come from the fit's residual
# scatter; the inflation is 1 for readings spread evenly round the circle.

# %%
magnetic, compass, rows = read_swing_csv(scenario.swing["file"])
swing = headingref.analyse_swing(magnetic, compass, limit_deg=scenario.swing["limit_deg"], rows=rows)
print(f"verdict {swing.verdict}: largest deviation after B and C removed {swing.max_residual_deg:.2f}° "
      f"(limit {swing.limit_deg:g}°), rms fit residual {swing.rms_fit_residual_deg:.2f}°")
swing.coefficients

# %%
COEFFICIENT_MEANINGS

# %%
display(deviation_figure(swing))
display(card_figure(swing, title="Compass correction card (invented aircraft)"))

# %%
swing.readings.round(2)

# %% [markdown]
# ## Using the fitted curve
# The fitted `DeviationCurve` plugs into the heading conversions: what is the true heading when the compass
# reads 090 on the base? (`true = compass + deviation + variation`, the deviation taken at the magnetic
# heading, found by Newton's method.)

# %%
curve = swing.curve
reads = 90.0
on_magnetic = curve.magnetic_from_compass_deg(reads)
variation = upkeep.iloc[0].predicted_variation_deg
print(f"compass {format_heading(reads, reference='C')}: magnetic {format_heading(on_magnetic, 1, 'M')} "
      f"(deviation {format_variation(float(curve.deviation_deg(on_magnetic)), 'decimal', 1)}), "
      f"true {format_heading(compass_to_true(reads, curve, variation), 1, 'T')} with variation "
      f"{format_variation(variation, 'decimal', 1)}")


# %% [markdown]
# ## Explore the fit
# Fit fewer coefficients, change the limit, or print the card for after the compensator has removed B and C.

# %%
def explore_swing(coefficients="ABCDE", limit_deg=scenario.swing["limit_deg"], after_compensation=False):
    explored = headingref.analyse_swing(magnetic, compass, limit_deg=limit_deg, coefficients=coefficients,
                                        card_after_compensation=after_compensation, rows=rows)
    print(f"verdict {explored.verdict}: {explored.max_residual_deg:.2f}° after B and C (limit {limit_deg:g}°); "
          f"rms fit residual {explored.rms_fit_residual_deg:.2f}°")
    display(explored.card[["for_magnetic", "steer_compass", "deviation_deg"]].T.round(1))


widgets.interact(explore_swing, coefficients=widgets.Dropdown(options=["ABCDE", "ABC", "BC"], value="ABCDE"),
                 limit_deg=widgets.FloatSlider(value=scenario.swing["limit_deg"], min=0.5, max=15, step=0.5),
                 after_compensation=widgets.Checkbox(value=False));
