"""Column mappings (``--columns NAME=COLUMN,...`` and the scenario ``columns`` key) for every CSV
reader, and the height unit rule of the places CSV of ``headingref field --input``.

A mapping only renames columns, so the check is a comparison: the same data under foreign column
names with a mapping must give exactly what the plain file gives. The plain readers are tested
against outside sources elsewhere (tests/test_field.py: IGRF-14 via ppigrf and chaosmagpy, the NOAA
WMM test values; tests/test_routes.py: geographiclib; tests/test_swing.py: the handbook's worked
swing; tests/test_compass_base.py). Unit conversions: 1 ft = 0.3048 m exactly (international yard
and pound agreement, 1959); a flight level FLnnn is nnn x 100 ft of pressure altitude, taken as
that height in the ISA (ICAO Doc 7488; headingref.units docstring).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_cli import error_line, run  # the CLI run in-process, stdout and stderr captured

from headingref.errors import InputError

DATA = Path(__file__).parent / "data"
DEMO = Path(__file__).parents[1] / "data" / "demo"
DATE = "2026-12-02"


def one_error_line(argv) -> str:
    """The single error line of a failed CLI run (test_cli.error_line: status 2, no traceback)."""
    code, _, err = run(argv)
    return error_line(code, err, argv[0])


def foreign(plain: Path, folder: Path, renames: dict[str, str]) -> tuple[Path, str]:
    """The same file with its header renamed (headingref name -> foreign name), same file name in
    another folder (so 'file line N' texts agree), and the --columns text mapping them back."""
    lines = plain.read_text(encoding="utf-8").splitlines(keepends=True)
    header = [c.strip() for c in lines[0].rstrip("\r\n").split(",")]
    lines[0] = ",".join(renames.get(c, c) for c in header) + "\n"
    folder.mkdir(exist_ok=True)
    out = folder / plain.name
    out.write_text("".join(lines), encoding="utf-8")
    return out, ",".join(f"{name}={column}" for name, column in renames.items())


def write(path: Path, text: str) -> Path:
    path.parent.mkdir(exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


PLACES_DECIMAL = "name,lat,lon,alt_m,date\nInvented mast,61.2,-149.9,450,2026-12-02\nInvented hut,78.22,15.6,12,2027-01-01\n"
PLACES_DMS = "name,lat,lon,alt,date\nInvented mast,N61°12.0′,149 54 00 W,450 m,2026-12-02\nInvented hut,78.22,15.6,FL350,2027-01-01\n"


# --------------------------------------------------------------------------- field --input (places)


@pytest.mark.parametrize("text", [PLACES_DECIMAL, PLACES_DMS], ids=["fast path", "row-by-row path"])
def test_field_columns_mapping_gives_the_plain_result(tmp_path, text):
    plain = write(tmp_path / "a" / "places.csv", text)
    height = "alt_m" if "alt_m" in text else "alt"
    mapped, mapping = foreign(plain, tmp_path / "b", {"lat": "Latitude", "lon": "LONG_DEG", height: "elev", "name": "site"})
    code, _, err = run(["field", "--input", plain, "--date", DATE, "--output", tmp_path / "plain.csv"])
    assert code == 0, err
    code, _, err = run(["field", "--input", mapped, "--columns", mapping, "--date", DATE, "--output", tmp_path / "mapped.csv"])
    assert code == 0, err
    assert (tmp_path / "mapped.csv").read_text() == (tmp_path / "plain.csv").read_text()


def test_field_mapping_wins_over_a_column_of_the_same_name(tmp_path):
    # the file has a 'lat' column of something else; lat=true_lat takes the mapped one (the other is dropped)
    plain = write(tmp_path / "a" / "p.csv", "lat,lon\n61.2,-149.9\n")
    both = write(tmp_path / "b" / "p.csv", "lat,lon,true_lat\n-12.5,-149.9,61.2\n")
    assert run(["field", "--input", plain, "--date", DATE, "--output", tmp_path / "1.csv"])[0] == 0
    code, _, err = run(["field", "--input", both, "--columns", "lat=true_lat", "--date", DATE, "--output", tmp_path / "2.csv"])
    assert code == 0, err
    assert (tmp_path / "2.csv").read_text() == (tmp_path / "1.csv").read_text()


@pytest.mark.parametrize("mapping, expected", [
    ("latitude=lat", "'latitude' is not a column headingref reads here; accepted: lat, lon, name, alt, alt_km, alt_m, alt_ft, date"),
    ("lat=breite", "breite (for lat) not in the file"),
    ("lat", "is not NAME=COLUMN"),
])
@pytest.mark.parametrize("text", [PLACES_DECIMAL, PLACES_DMS], ids=["fast path", "row-by-row path"])
def test_field_columns_errors_are_one_line(tmp_path, mapping, expected, text):
    path = write(tmp_path / "a" / "places.csv", text)
    out = tmp_path / "out.csv"
    line = one_error_line(["field", "--input", path, "--columns", mapping, "--date", DATE, "--output", out])
    assert expected in line
    assert not out.exists()


# --------------------------------------------------------------------------- field --input: heights carry their unit


@pytest.mark.parametrize("body", ["61.2,-149.9,450\n", "N61°12′,149 54 W,450\n"], ids=["fast path", "row-by-row path"])
def test_field_bare_number_under_alt_is_refused(tmp_path, body):
    # The documented rule for every height in a CSV (README, 'Conventions'): a bare number under plain 'alt' is refused.
    path = write(tmp_path / "a" / "p.csv", "lat,lon,alt\n" + body)
    line = one_error_line(["field", "--input", path, "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "p.csv line 2" in line and "'450' has no unit" in line and "alt_m" in line and "alt_ft" in line


@pytest.mark.parametrize("column, cells", [
    ("alt", ["450 m", "FL350", "0"]),           # unit in each value; a bare 0 is zero in every unit
    ("alt_m", ["450", "10668", "0"]),           # 35,000 ft x 0.3048 m/ft = 10,668 m exactly (1959 definition)
    ("alt_km", ["0.45", "10.668", "0"]),
    ("alt_ft", ["1476.3779527559054", "35000", "0"]),  # 450 m / 0.3048 m/ft
])
@pytest.mark.parametrize("dms", [False, True], ids=["fast path", "row-by-row path"])
def test_field_height_columns_agree(tmp_path, column, cells, dms):
    lat = ["N61°12′", "78.22", "-45"] if dms else ["61.2", "78.22", "-45"]
    rows = "".join(f"{la},{lo},{c}\n" for la, lo, c in zip(lat, ["-149.9", "15.6", "100"], cells, strict=True))
    path = write(tmp_path / column / "p.csv", f"lat,lon,{column}\n" + rows)
    code, _, err = run(["field", "--input", path, "--date", DATE, "--output", tmp_path / f"{column}.csv"])
    assert code == 0, err
    got = pd.read_csv(tmp_path / f"{column}.csv")
    # the heights reach the field model: alt_km 0.45, 10.668, 0 (to the output's rounding)
    assert got["alt_km"].to_numpy() == pytest.approx([0.45, 10.668, 0.0], abs=1e-4)
    plain = write(tmp_path / "ref" / "p.csv", "lat,lon,alt_km\n" + "".join(
        f"{la},{lo},{c}\n" for la, lo, c in zip(["61.2", "78.22", "-45"], ["-149.9", "15.6", "100"], ["0.45", "10.668", "0"], strict=True)))
    assert run(["field", "--input", plain, "--date", DATE, "--output", tmp_path / "ref.csv"])[0] == 0
    ref = pd.read_csv(tmp_path / "ref.csv")
    for name in ("declination_deg", "inclination_deg", "horizontal_nT", "total_nT"):
        if name in ref:
            assert got[name].to_numpy() == pytest.approx(ref[name].to_numpy(), abs=1e-3), name


def test_field_two_height_columns_refused(tmp_path):
    path = write(tmp_path / "a" / "p.csv", "lat,lon,alt_m,alt_ft\n61.2,-149.9,450,1476\n")
    line = one_error_line(["field", "--input", path, "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "all give the height; keep one" in line


# --------------------------------------------------------------------------- route waypoints


ROUTE_RENAMES = {"name": "ident", "lat": "wp_lat", "lon": "wp_lon", "alt": "height"}


def test_route_waypoints_mapping_gives_the_plain_result(tmp_path):
    from headingref.routes import read_waypoints

    plain = DEMO / "routes" / "tm101_polar.csv"
    mapped, mapping = foreign(plain, tmp_path / "b", ROUTE_RENAMES)
    pd.testing.assert_frame_equal(read_waypoints(mapped, columns=mapping), read_waypoints(plain))
    for args in (["--input", plain], ["--input", mapped, "--columns", mapping]):
        out = tmp_path / f"{len(args)}.csv"
        code, _, err = run(["route", *args, "--date", DATE, "--output", out])
        assert code == 0, err
    assert (tmp_path / "4.csv").read_text() == (tmp_path / "2.csv").read_text()


def test_route_mapping_errors(tmp_path):
    plain = DEMO / "routes" / "tm101_polar.csv"
    line = one_error_line(["route", "--input", plain, "--columns", "ident=name", "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "'ident' is not a column headingref reads here; accepted: name, lat, lon, alt, alt_ft, alt_m, alt_km" in line
    line = one_error_line(["route", "--input", plain, "--columns", "lat=wp_lat", "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "wp_lat (for lat) not in the file" in line
    gpx = write(tmp_path / "r.gpx", "<gpx/>")
    line = one_error_line(["route", "--input", gpx, "--columns", "lat=y", "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "applies to CSV waypoint files" in line


# --------------------------------------------------------------------------- compass bases


BASE_RENAMES = {"name": "site", "surveyed_variation": "var_marked", "survey_date": "surveyed_on", "alt": "elev"}


def test_bases_mapping_gives_the_plain_result(tmp_path):
    from headingref.compass_base import read_sites_csv

    plain = DATA / "base_sites.csv"
    mapped, mapping = foreign(plain, tmp_path / "b", BASE_RENAMES)
    assert read_sites_csv(mapped, columns=mapping) == read_sites_csv(plain)
    for args in (["--input", plain], ["--input", mapped, "--columns", mapping]):
        out = tmp_path / f"{len(args)}.csv"
        code, _, err = run(["base", *args, "--date", DATE, "--output", out])
        assert code == 0, err
    assert (tmp_path / "4.csv").read_text() == (tmp_path / "2.csv").read_text()


def test_bases_mapping_errors(tmp_path):
    plain = DATA / "base_sites.csv"
    line = one_error_line(["base", "--input", plain, "--columns", "variation=var", "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "'variation' is not a column headingref reads here; accepted: name, lat, lon, surveyed_variation" in line
    line = one_error_line(["base", "--input", plain, "--columns", "name=site", "--date", DATE, "--output", tmp_path / "o.csv"])
    assert "site (for name) not in the file" in line


# --------------------------------------------------------------------------- swing readings


def test_swing_mapping_gives_the_plain_result(tmp_path):
    from headingref.swing import read_swing_csv

    plain = DATA / "swing_handbook_501.csv"
    renames = {"magnetic_heading_deg": "hdg_mag", "compass_reading_deg": "cr"}
    mapped, mapping = foreign(plain, tmp_path / "b", renames)
    got, want = read_swing_csv(mapped, columns=mapping), read_swing_csv(plain)
    np.testing.assert_array_equal(got[0], want[0])
    np.testing.assert_array_equal(got[1], want[1])
    assert got[2] == want[2]
    for args in (["--input", plain], ["--input", mapped, "--columns", mapping]):
        out = tmp_path / f"{len(args)}.csv"
        code, _, err = run(["swing", *args, "--output", out])
        assert code == 0, err
    assert (tmp_path / "4.csv").read_text() == (tmp_path / "2.csv").read_text()


def test_swing_mapping_comes_before_the_flexible_names(tmp_path):
    # 'heading' and 'deviation' would be recognised on their own; the mapping names the columns to use instead.
    from headingref.swing import read_swing_csv

    plain = DATA / "swing_handbook_501.csv"
    table = pd.read_csv(plain)
    table = table.rename(columns={"magnetic_heading_deg": "hdg_true_mag", "compass_reading_deg": "cr"})
    table["heading"] = 999  # would be refused as a heading (outside -360 to 720)
    table["deviation"] = "x"  # would make 'both a compass reading and a deviation column'
    path = tmp_path / "b" / plain.name
    path.parent.mkdir()
    table.to_csv(path, index=False)
    got, want = read_swing_csv(path, columns="magnetic_heading_deg=hdg_true_mag,compass_reading_deg=cr"), read_swing_csv(plain)
    np.testing.assert_array_equal(got[0], want[0])
    np.testing.assert_array_equal(got[1], want[1])


def test_swing_mapping_errors(tmp_path):
    plain = DATA / "swing_handbook_501.csv"
    line = one_error_line(["swing", "--input", plain, "--columns", "heading=mh", "--output", tmp_path / "o.csv"])
    assert "'heading' is not a column headingref reads here; accepted: magnetic_heading_deg, compass_reading_deg, deviation_deg" in line
    line = one_error_line(["swing", "--input", plain, "--columns", "deviation_deg=dev", "--output", tmp_path / "o.csv"])
    assert "dev (for deviation_deg) not in the file" in line


# --------------------------------------------------------------------------- scenario columns keys


def _scenario(tmp_path: Path, extra: dict[str, str]):
    from headingref.scenario import load_scenario

    route, _ = foreign(DEMO / "routes" / "tm101_polar.csv", tmp_path, ROUTE_RENAMES)
    bases, _ = foreign(DATA / "base_sites.csv", tmp_path, BASE_RENAMES)
    swing, _ = foreign(DATA / "swing_handbook_501.csv", tmp_path, {"magnetic_heading_deg": "hdg_mag"})
    text = (
        f'analysis_date = "{DATE}"\n'
        f'[routes]\n{extra.get("routes", "")}\n[[routes.plan]]\nname = "N"\nfile = "{route.name}"\n{extra.get("plan", "")}\n'
        f'[compass_bases]\nfile = "{bases.name}"\n{extra.get("compass_bases", "")}\n'
        f'[swing]\nfile = "{swing.name}"\n{extra.get("swing", "")}\n'
    )
    return load_scenario(write(tmp_path / "scenario.toml", text))


def test_scenario_columns_reach_the_readers(tmp_path):
    from headingref import route
    from headingref.compass_base import read_sites_csv
    from headingref.routes import read_waypoints
    from headingref.swing import read_swing_csv, swing_from_scenario

    mapping = ",".join(f"{k}={v}" for k, v in ROUTE_RENAMES.items())
    sc = _scenario(tmp_path, {
        "routes": f'columns = "{mapping}"',
        "compass_bases": 'columns = "' + ",".join(f"{k}={v}" for k, v in BASE_RENAMES.items()) + '"',
        "swing": 'columns = "magnetic_heading_deg=hdg_mag"',
    })
    plan = sc.routes["plan"][0]
    options = sc.route_options(plan)
    assert options["columns"] == mapping
    got = route(str(plan["file"]), DATE, **options)
    want = route(str(DEMO / "routes" / "tm101_polar.csv"), DATE, **{**options, "columns": None})
    pd.testing.assert_frame_equal(got.legs, want.legs)
    assert read_waypoints(plan["file"], columns=options["columns"])["name"].tolist() == read_waypoints(DEMO / "routes" / "tm101_polar.csv")["name"].tolist()
    assert read_sites_csv(sc.compass_bases["file"], columns=sc.compass_bases["columns"]) == read_sites_csv(DATA / "base_sites.csv")
    swing_from_scenario(sc.swing)  # reads the mapped file (unmapped, 'hdg_mag' is no heading name)
    got, want = read_swing_csv(sc.swing["file"], columns=sc.swing["columns"]), read_swing_csv(DATA / "swing_handbook_501.csv")
    np.testing.assert_array_equal(got[0], want[0])


def test_scenario_plan_columns_win_over_the_section(tmp_path):
    sc = _scenario(tmp_path, {"routes": 'columns = "lat=a"', "plan": 'columns = "lat=wp_lat"'})
    assert sc.route_options(sc.routes["plan"][0])["columns"] == "lat=wp_lat"


@pytest.mark.parametrize("section, text, expected", [
    ("routes", 'columns = "ident=name"', "[routes] columns: 'ident' is not a column headingref reads here"),
    ("plan", 'columns = "ident=name"', "[[routes.plan]] 'N' columns: 'ident' is not a column"),
    ("compass_bases", 'columns = "var=x"', "[compass_bases] columns: 'var' is not a column"),
    ("swing", 'columns = "mh=x"', "[swing] columns: 'mh' is not a column"),
])
def test_scenario_bad_columns_refused_at_load(tmp_path, section, text, expected):
    with pytest.raises(InputError) as info:
        _scenario(tmp_path, {section: text})
    assert expected in str(info.value) and "\n" not in str(info.value)


# --------------------------------------------------------------------------- property: any renaming reads back the same table


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.text(alphabet="abcdefghijklmnopqrstuvwxyz_0123456789", min_size=1, max_size=10), min_size=4, max_size=4, unique=True))
def test_any_renaming_reads_back_the_plain_table(tmp_path_factory, names):
    # Property (of io.read_table with columns=, the parser being tables.parse_column_mapping): renaming
    # the header to any distinct names and mapping them back gives the plain table, cell for cell.
    from headingref.io import read_table

    folder = tmp_path_factory.mktemp("prop")
    plain = DEMO / "routes" / "tm101_polar.csv"
    renames = dict(zip(["name", "lat", "lon", "alt"], names, strict=True))
    mapped, mapping = foreign(plain, folder, renames)
    got = read_table(mapped, required=["name", "lat", "lon"], optional=["alt"], what="route", columns=mapping)
    want = read_table(plain, required=["name", "lat", "lon"], optional=["alt"], what="route")
    pd.testing.assert_frame_equal(got, want)
