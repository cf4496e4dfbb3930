"""The console prints courses and variations in the trade forms the report and cards use.

Three-digit courses (``045``, ``000`` not ``360``) and variation as degrees and minutes with its
letter (``14°39′ W``): common practice on charts and compass cards. The values are checked
against ppigrf (independent IGRF-14 synthesis) and Karney's geodesic (geographiclib).
"""

from __future__ import annotations

import datetime as dt
import re

import numpy as np
import ppigrf
from geographiclib.geodesic import Geodesic

from tests.test_cli import run

DATE = "2026-12-02"
DM = re.compile(r"(\d{1,3})°(\d{2})′ ([EW])")


def _ppigrf_declination(lat: float, lon: float) -> float:
    east, north, _ = ppigrf.igrf(lon, lat, 0.0, dt.datetime.fromisoformat(DATE))
    return float(np.degrees(np.arctan2(np.ravel(east)[0], np.ravel(north)[0])))


def _dm_value(match: re.Match) -> float:
    value = int(match.group(1)) + int(match.group(2)) / 60.0
    return value if match.group(3) == "E" else -value


def test_base_prints_the_model_variation_in_degrees_and_minutes():
    code, out, err = run(["base", "--name", "Invented apron base", "--lat", "69.30", "--lon", "16.10",
                          "--surveyed-variation", "9.0E", "--survey-date", "2024-06-01", "--date", DATE])
    assert code == 0, err
    line = next(text for text in out.splitlines() if "model variation" in text)
    match = DM.search(line)
    assert match, line
    # ppigrf; printed to the minute (half a minute of rounding)
    assert abs(_dm_value(match) - _ppigrf_declination(69.30, 16.10)) <= 0.5 / 60 + 1e-9


def test_route_prints_three_digit_courses_and_dm_variation(tmp_path):
    waypoints = tmp_path / "wp.csv"
    waypoints.write_text("name,lat,lon\nALFA,64.0,-22.0\nBRAVO,64.2,-21.0\n", encoding="utf-8")
    code, out, err = run(["route", "--input", waypoints, "--date", DATE, "--output", tmp_path / "legs.csv"])
    assert code == 0, err
    row = next(text for text in out.splitlines() if text.strip().startswith("1 "))
    # geographiclib: the initial true course, printed as three digits (070 style)
    azi = Geodesic.WGS84.Inverse(64.0, -22.0, 64.2, -21.0)["azi1"] % 360.0
    assert f" {round(azi) % 360:03d} " in row
    match = DM.search(row)
    assert match, row
    assert abs(_dm_value(match) - _ppigrf_declination(64.0, -22.0)) <= 0.5 / 60 + 1e-9
