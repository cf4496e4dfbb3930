"""Any --output ending in .xlsx is a workbook: rounded, units in the header, formula-like text inert.

Sources: geographiclib (Karney's WGS84 geodesic: leg distances), ppigrf (independent IGRF-14:
declination in the field workbook), openpyxl and pandas (reading the workbook back; openpyxl
marks a cell that a spreadsheet would evaluate with data type ``f``), OWASP "CSV Injection"
(cells starting with = + - @ run as formulas), ECMA-376 (an .xlsx sheet holds 1,048,576 rows).
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import openpyxl
import pandas as pd
import ppigrf
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given
from hypothesis import strategies as st

from headingref.tables import column_decimals, column_units, write_output
from tests.test_cli import error_line, run

DATE = "2026-12-02"
HOSTILE = "=SUM(1+1)*cmd|' /C calc'!A0"  # the OWASP CSV injection example form (no comma: one CSV field)


def _sheet(path):
    book = openpyxl.load_workbook(path)
    ws = book.worksheets[0]
    rows = list(ws.iter_rows())
    header = [c.value for c in rows[0]]
    return header, rows[1:]


def _column(header, rows, name):
    i = next(k for k, h in enumerate(header) if h == name or str(h).startswith(name + " ("))
    return [r[i] for r in rows]


def test_route_legs_workbook_units_rounding_and_inert_names(tmp_path):
    waypoints = tmp_path / "wp.csv"
    waypoints.write_text(f"name,lat,lon\n{HOSTILE},69.0,18.0\n@SUM(A1),78.2,15.6\nCHARL,82.0,-80.0\n",
                         encoding="utf-8")
    target = tmp_path / "legs.xlsx"
    code, out, err = run(["route", "--input", waypoints, "--date", DATE, "--output", target])
    assert code == 0, err
    header, rows = _sheet(target)
    assert "distance_nm (NM)" in header and "true_course_deg (deg)" in header and "from" in header
    # formula-like names are text, not formulas (openpyxl data type 's', not 'f'), shown with a leading apostrophe
    names = _column(header, rows, "from")
    assert all(c.data_type == "s" for c in names)
    assert names[0].value.startswith("'=") and names[1].value.startswith("'@")
    for leg, dist in zip(rows, _column(header, rows, "distance_nm"), strict=True):
        cells = dict(zip(header, (c.value for c in leg), strict=True))
        # geographiclib (Karney) WGS84 geodesic; the workbook keeps 2 decimals of NM (0.005 NM = 9 m)
        s12 = Geodesic.WGS84.Inverse(cells["from_lat_deg (deg)"], cells["from_lon_deg (deg)"],
                                     cells["to_lat_deg (deg)"], cells["to_lon_deg (deg)"])["s12"]
        assert dist.value == pytest.approx(s12 / 1852.0, abs=0.006)
        assert dist.value == round(dist.value, 2)
    courses = [c.value for c in _column(header, rows, "true_course_deg")]
    assert all(v == round(v, 3) for v in courses)
    # read back with pandas too: one row per leg
    assert len(pd.read_excel(target)) == 2


def test_field_workbook_matches_ppigrf(tmp_path):
    places = tmp_path / "places.csv"
    places.write_text("name,lat,lon\nNORTH,70.0,20.0\n-SOUTH,-65.0,140.0\n", encoding="utf-8")
    target = tmp_path / "field.xlsx"
    code, _, err = run(["field", "--input", places, "--date", DATE, "--output", target])
    assert code == 0, err
    frame = pd.read_excel(target)
    assert "declination_deg (deg)" in frame.columns and "horizontal_nT (nT)" in frame.columns
    assert list(frame["name"]) == ["NORTH", "'-SOUTH"]  # a leading minus on text is made inert (OWASP)
    for row in frame.itertuples(index=False):
        east, north, _ = ppigrf.igrf(row[2], row[1], 0.0, dt.datetime.fromisoformat(DATE))
        expected = np.degrees(np.arctan2(np.ravel(east)[0], np.ravel(north)[0]))
        # ppigrf (independent IGRF-14); the workbook keeps 3 decimals of a degree
        assert frame.loc[frame["name"] == row[0], "declination_deg (deg)"].iloc[0] == pytest.approx(expected, abs=2e-3)


def test_zones_and_poles_workbooks(tmp_path):
    areas = tmp_path / "areas.xlsx"
    code, _, err = run(["zones", "--cap", "south", "--date", DATE, "--resolution", "5", "--output", areas])
    assert code == 0, err
    header, rows = _sheet(areas)
    assert header == ["date", "decimal_year (year)", "zone", "lower_nT (nT)", "upper_nT (nT)", "area_km2 (km²)"]
    assert sorted(c.value for c in _column(header, rows, "zone")) == ["blackout", "caution"]
    poles = tmp_path / "poles.xlsx"
    code, _, err = run(["poles", "--date", DATE, "--output", poles])
    assert code == 0, err
    frame = pd.read_excel(poles)
    assert "lat (deg)" in frame.columns and "lon (deg)" in frame.columns
    north = frame[(frame["pole"] == "north") & (frame["kind"] == "dip")]
    east, north_nT, _ = ppigrf.igrf(north["lon (deg)"].iloc[0], north["lat (deg)"].iloc[0], 0.0, dt.datetime.fromisoformat(DATE))
    assert float(np.hypot(np.ravel(east)[0], np.ravel(north_nT)[0])) < 1.0  # ppigrf: H ~ 0 at the dip pole, 6 decimals kept


def test_csv_output_unchanged_workbook_rounded(tmp_path):
    frame = pd.DataFrame({"name": [HOSTILE], "variation_deg": [-14.6512345]})
    write_output(tmp_path / "t.csv", frame)
    text = (tmp_path / "t.csv").read_text(encoding="utf-8")
    assert "-14.6512345" in text  # a CSV keeps the value as computed
    assert "'=SUM" in text
    write_output(tmp_path / "t.xlsx", frame)
    header, rows = _sheet(tmp_path / "t.xlsx")
    assert header == ["name", "variation_deg (deg)"]
    assert rows[0][1].value == -14.651 and rows[0][0].data_type == "s"


def test_route_xlsx_output_in_a_missing_folder_is_one_line(tmp_path):
    waypoints = tmp_path / "wp.csv"
    waypoints.write_text("name,lat,lon\nA,70,20\nB,71,30\n", encoding="utf-8")
    code, _, err = run(["route", "--input", waypoints, "--date", DATE, "--output", tmp_path / "no" / "x.xlsx"])
    assert "x.xlsx" in error_line(code, err, "route")
    assert not (tmp_path / "no").exists()


@given(st.from_regex(r"[a-z]{1,8}", fullmatch=True), st.sampled_from(["deg", "nT", "km", "nm", "km2"]), st.booleans())
def test_units_follow_the_naming_rule(word, unit, rate):
    # the project's naming rule (DEVELOPERS.md): a name ends in its unit, rates in _per_year
    name = f"{word}_{unit}" + ("_per_year" if rate else "")
    shown = {"deg": "deg", "nT": "nT", "km": "km", "nm": "NM", "km2": "km²"}[unit]
    assert column_units([name]) == {name: shown + ("/year" if rate else "")}
    assert column_decimals([name])[name] >= 1 or unit == "ft"
    assert column_units([word]) == ({word: "deg"} if word in ("lat", "lon") else {})
