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

# %% [markdown]
# ## Your inputs
# A scenario file (the demo is invented: data/demo/README.md). Its `[compass_bases]` section names the bases CSV
# and the planned swing date, its `[swing]` section the readings CSV; give your own files or date here to
# override them (`None` keeps the scenario's).

# %%
from headingref.scenario import DEMO_SCENARIO

SCENARIO = DEMO_SCENARIO  # or the path of your own scenario TOML
BASES_FILE = None  # e.g. "my_bases.csv"
SWING_FILE = None  # e.g. "my_swing.csv"
SWING_DATE = None  # e.g. "2027-05-01"

# %%
# %matplotlib inline
import ipywidgets as widgets
import pandas as pd

from headingref.compass_base import base_upkeep, read_sites_csv, setting_out
from headingref.headings import compass_to_true, format_heading, format_variation
from headingref.plots.compass_base import plot_survey_history
from headingref.plots.swing import card_figure, deviation_figure
from headingref.scenario import load_scenario
from headingref.swing import analyse_swing, read_swing_csv, swing_from_scenario
from headingref.units import decimal_year
from headingref.workbench import choice, date_picker, explorer, show, slider, status_line, styled, with_warnings

scenario = load_scenario(SCENARIO)
BASES = {**scenario.compass_bases, **({"file": BASES_FILE} if BASES_FILE else {})}
SWING = {**scenario.swing, **({"file": SWING_FILE} if SWING_FILE else {})}
SWING_DATE = SWING_DATE or BASES["swing_date"]
SWING_YEAR = float(decimal_year(SWING_DATE))
sites, notes = with_warnings(read_sites_csv, BASES["file"], tolerance_deg=BASES["tolerance_deg"],
                             resurvey_years=BASES["resurvey_years"])
show(*notes, styled(pd.DataFrame(sites).drop(columns="history")))

# %% [markdown]
# ## Upkeep for the planned swing
# One row per base: the latest survey carried forward with the model's change, the value to mark, when the
# surveyed value drifts out of tolerance and when a resurvey is due (overdue if on or before the swing).

# %%
UPKEEP_COLUMNS = ["name", "overdue", "caution", "predicted_variation_deg", "variation_to_mark", "annual_change",
                  "survey_off_date", "mark_off_date", "mark_off_note", "resurvey_due_date"]
upkeep, notes = with_warnings(base_upkeep, sites, SWING_DATE)
show(*notes, styled(upkeep[[c for c in UPKEEP_COLUMNS if c in upkeep.columns]]))

# %% [markdown]
# ## The bases through time
# The model's variation at each base, the same carried from the latest survey (model plus the survey's local
# offset), the surveys, and the band the new mark stays valid in.

# %%
surveys = [(site.name, year, value) for site in sites
           for year, value in (*site.history, (site.survey_year, site.surveyed_variation_deg))]
show(plot_survey_history(upkeep, surveys, SWING_YEAR))

# %% [markdown]
# ## Setting out the heading lines
# For the survey party: each marked magnetic line's true and grid azimuth and the points along it.

# %%
styled(setting_out(upkeep, lines_deg=BASES["setting_out_lines_deg"], distances_m=BASES["setting_out_distances_m"],
                   grid=scenario.routes["grid"]).head(24))


# %% [markdown]
# ## Explore the swing date and the marking step
# Move the planned swing date; the value to mark is rounded to the marking step.

# %%
def explore_upkeep(day, mark_step_deg):
    table, found = with_warnings(base_upkeep, sites, day, mark_step_deg=mark_step_deg)
    return [*found, styled(table[[c for c in UPKEEP_COLUMNS if c in table.columns]])]


explorer(explore_upkeep, {"day": date_picker(SWING_DATE, "planned swing date"),
                          "mark_step_deg": slider(0.5, 0.1, 1.0, 0.1, "marking step (°)")})

# %% [markdown]
# ## The swing
# The readings of the scenario's swing (invented). Two verdicts: the deviation as measured, and what is left
# once the compensator removes B and C; the scenario says which one decides. The standard errors come from the
# fit's residual scatter; the inflation is 1 for readings spread evenly round the circle.

# %%
(swing, details), notes = with_warnings(swing_from_scenario, SWING, bases_file=BASES["file"])
level = "info" if swing.verdict == "pass" else "warning"
show(*notes, *(status_line(line, level=level) for line in swing.verdict_text().splitlines()),
     styled(swing.coefficients))

# %%
show(deviation_figure(swing), card_figure(swing, title="Compass correction card (invented aircraft)", details=details))

# %%
styled(swing.readings)

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
# Fit fewer coefficients, change the limits, or print the card for after the compensator has removed B and C.
# Both verdicts and the card follow.

# %%
magnetic, compass, rows = read_swing_csv(SWING["file"])


def explore_swing(coefficients, limit_deg, compensated_limit_deg, after_compensation):
    explored, found = with_warnings(analyse_swing, magnetic, compass, limit_deg=limit_deg,
                                    compensated_limit_deg=compensated_limit_deg, coefficients=coefficients,
                                    verdict_on=SWING["verdict_on"], card_after_compensation=after_compensation,
                                    rows=rows)
    lines = [status_line(line, level="info" if explored.verdict == "pass" else "warning")
             for line in explored.verdict_text().splitlines()]
    return [*found, *lines, card_figure(explored, title="Compass correction card (invented aircraft)", details=details)]


explorer(explore_swing, {
    "coefficients": choice(["ABCDE", "ABC", "BC"], "ABCDE", "coefficients fitted"),
    "limit_deg": slider(SWING["limit_deg"], 0.5, 15, 0.5, "limit as measured (°)"),
    "compensated_limit_deg": slider(swing.compensated_limit_deg, 0.5, 15, 0.5, "limit after compensation (°)"),
    "after_compensation": widgets.Checkbox(value=bool(SWING["card_after_compensation"]),
                                           description="card after compensation"),
})
