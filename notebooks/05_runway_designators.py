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
# VOR stations carry a declination of their own (the station is aligned to it); the last section sets it against
# today's variation.
#
# *Planning and engineering aid only, not approved for navigation. Official publications and charts, the aircraft's approved data, the compass base's own survey and licensed engineering and survey practice govern. The field model omits local crustal anomalies.*

# %% [markdown]
# ## Your inputs
# A scenario file (the demo is invented: data/demo/README.md), your own runway or navaid table (CSV or `.xlsx`;
# `None` keeps the scenario's) and the check date (`None` takes the scenario's analysis date).

# %%
from headingref.scenario import DEMO_SCENARIO

SCENARIO = DEMO_SCENARIO  # or the path of your own scenario TOML
RUNWAY_FILE = None  # e.g. "my_runways.csv": airport, runway, lat, lon, end_lat, end_lon
NAVAID_FILE = None  # e.g. "my_vors.csv": ident, lat, lon, station_declination_deg[, alignment_date]
DATE = None  # e.g. "2027-06-01"

# %%
# %matplotlib inline
from functools import lru_cache

import numpy as np
import pandas as pd

import headingref
from headingref.navaids import check_navaids
from headingref.plots.navaids import navaid_map_figure
from headingref.plots.runways import runway_bearing_figure
from headingref.runways import boundary_margin_deg, designator_from_magnetic
from headingref.scenario import load_scenario
from headingref.workbench import choice, date_picker, explorer, show, slider, status_line, styled, with_warnings

scenario = load_scenario(SCENARIO)
DATE = DATE or scenario.analysis_date
RUNWAYS = scenario.runways  # file, horizon_years, boundary band
RUNWAY_FILE = RUNWAY_FILE or RUNWAYS["file"]
NAVAIDS = scenario.navaids  # file, tolerance_deg, horizon_years
NAVAID_FILE = NAVAID_FILE or NAVAIDS["file"]
print(f"{scenario.title}; check date {DATE}; runways {RUNWAY_FILE.name if hasattr(RUNWAY_FILE, 'name') else RUNWAY_FILE}")

# %% [markdown]
# ## The rule, and its boundaries
# Azimuths ending in 5 are the rounding boundaries; an exact tie rounds up here. `boundary_margin_deg` gives the
# distance to the nearest boundary and the number on its other side.

# %%
azimuths = np.array([4.9, 5.0, 84.99, 85.0, 179.6, 354.9, 355.0, 359.9])
margin, boundary, other_side = boundary_margin_deg(azimuths)
styled(pd.DataFrame({"magnetic_deg": azimuths, "designator": designator_from_magnetic(azimuths), "margin_deg": margin,
                     "boundary_deg": boundary, "other_side": other_side}))

# %% [markdown]
# ## The check on the analysis date
# One row per runway end; each pair of ends is judged as one runway (`pair_check`). `last_fit_date` is the last
# day a painted designator that no longer fits still did. Data-quality warnings (weak field, uncertain
# variation) are shown above the table.

# %%
COLUMNS = ["airport", "runway", "zone", "verdict", "last_fit_date", "change_date", "next_designator", "pair_check",
           "true_bearing_deg", "variation_deg", "magnetic_bearing_deg", "designator_implied", "margin_deg",
           "variation_uncertainty_deg", "status"]


@lru_cache(maxsize=8)
def checked(day, tolerance_deg=RUNWAYS["boundary_band_deg"], horizon_years=RUNWAYS["horizon_years"]):
    """The runway check on one day (kept, so that choosing another runway redraws at once)."""
    return with_warnings(headingref.check_runways, RUNWAY_FILE, str(day), horizon_years=horizon_years,
                         **({"tolerance_deg": tolerance_deg} if tolerance_deg is not None else {}),
                         band_sigmas=RUNWAYS["band_sigmas"])


check, notes = checked(DATE)
show(*notes, status_line(check.summary_text(), level="info"), styled(check.table[COLUMNS]))

# %% [markdown]
# Out of date now, or too close to a boundary to judge, with the last date each painted number fitted:

# %%
styled(check.table.query("verdict != 'match'")[COLUMNS + ["reason"]])

# %% [markdown]
# ## Every change within the horizon
# The forecast stops at the end of the model's validity (IGRF-14: 2030.0) unless extrapolation is allowed.

# %%
styled(check.changes)

# %%
show(runway_bearing_figure(check))


# %% [markdown]
# ## Explore a runway
# Choose a runway end and the check date: its decision, the last date its painted number fitted, and its
# magnetic azimuth through time against the rounding boundaries.

# %%
def label(row):
    return f"{row.airport} {row.runway}"


ENDS = [label(row) for row in check.table.itertuples() if np.isfinite(row.runway_magnetic_deg)]
FIRST = label(check.table.iloc[int(check.changes.row.iloc[0])]) if len(check.changes) else ENDS[0]


def explore_runway(end, day):
    explored, found = checked(str(day))
    row = explored.table[[label(r) == end for r in explored.table.itertuples()]]
    fit = row.last_fit_date.iloc[0]
    verdict = f"{end}: {row.verdict.iloc[0]} on {day}" + (f"; painted number last fitted {fit}" if fit else "")
    reason = row.reason.iloc[0]
    found = found if str(day) != str(DATE) else []  # the check date's warnings are shown above
    return [*found, status_line(verdict, level="info" if row.verdict.iloc[0] == "match" else "warning"),
            *([status_line(reason)] if reason else []), styled(row[COLUMNS]),
            runway_bearing_figure(explored, runways=[end])]


explorer(explore_runway, {"end": choice(ENDS, FIRST, "runway end"), "day": date_picker(DATE, "check date")})

# %% [markdown]
# ## VOR stations: station declination against variation
# Each station is aligned to its own declination on its alignment date; the field moves on. `difference_deg` is
# the variation now minus the station declination (east positive); beyond the tolerance the station is due for
# realignment, and `realign_date` says when it will be within the horizon.

# %%
navaids, notes = with_warnings(check_navaids, NAVAID_FILE, DATE, tolerance_deg=NAVAIDS["tolerance_deg"],
                               horizon_years=NAVAIDS["horizon_years"])
NAVAID_COLUMNS = ["ident", "zone", "exceeds", "station_declination_deg", "variation_deg", "difference_deg",
                  "realign_date", "years_to_realign", "alignment_date", "variation_at_alignment_deg",
                  "declination_rate_deg_per_year", "variation_uncertainty_deg"]
show(*notes, status_line(navaids.summary_text(), level="info"), styled(navaids.table[NAVAID_COLUMNS]),
     navaid_map_figure(navaids))


# %% [markdown]
# ## Explore the navaid tolerance
# The tolerance a station may differ from the variation before it is realigned.

# %%
def explore_navaids(tolerance_deg):
    result, found = with_warnings(check_navaids, NAVAID_FILE, DATE, tolerance_deg=tolerance_deg,
                                  horizon_years=NAVAIDS["horizon_years"])
    due = result.table[result.table.exceeds | (result.table.realign_date != "")]
    return [*found, status_line(f"{int(result.table.exceeds.sum())} of {len(result.table)} stations beyond "
                                f"{tolerance_deg:g}°; {len(due)} due within {NAVAIDS['horizon_years']:g} years"),
            styled(due[NAVAID_COLUMNS])]


explorer(explore_navaids, {"tolerance_deg": slider(NAVAIDS["tolerance_deg"], 0.5, 6.0, 0.5, "tolerance (°)")})
