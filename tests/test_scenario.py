"""Scenario TOML loading and validation (headingref.scenario)."""

from __future__ import annotations

import math
import shutil

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from headingref.errors import InputError
from headingref.scenario import DEMO_SCENARIO, SCHEMA, load_scenario
from headingref.units import decimal_year

MINIMAL = 'analysis_date = "2026-12-02"\n'


def _write(tmp_path, text, name="sc.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_demo_scenario_loads_with_every_section():
    sc = load_scenario(DEMO_SCENARIO)
    assert sc.analysis_date == "2026-12-02"
    # decimal year convention of headingref.units: 2026-12-02 is day 335 of 365 -> 2026 + 335/365
    assert sc.decimal_year == pytest.approx(2026 + 335 / 365, abs=1e-12)
    assert sc.model is None and sc.model_name == "IGRF-14"
    for section in ("routes", "zones", "error_budget", "compass_bases", "swing", "runways"):
        assert getattr(sc, section) is not None, section
    assert 3 <= len(sc.routes["plan"]) <= 5
    for plan in sc.routes["plan"]:
        assert plan["file"].is_file() and plan["file"].is_absolute()
    # FL350 = 35,000 ft x 0.3048 m/ft (international foot, exact) = 10.668 km
    assert sc.routes["alt"] == pytest.approx(10.668, abs=1e-12)


def test_defaults_and_missing_sections(tmp_path):
    sc = load_scenario(_write(tmp_path, MINIMAL))
    assert sc.routes is None and sc.runways is None
    assert sc.title == SCHEMA[""]["title"].default


def test_relative_paths_resolve_against_the_toml_folder(tmp_path, monkeypatch):
    (tmp_path / "inputs").mkdir()
    shutil.copy(DEMO_SCENARIO.parent / "runways.csv", tmp_path / "inputs" / "rw.csv")
    (tmp_path / "cases").mkdir()
    path = _write(tmp_path / "cases", MINIMAL + '[runways]\nfile = "../inputs/rw.csv"\n')
    monkeypatch.chdir(tmp_path / "inputs")  # the working folder must not matter
    sc = load_scenario(path)
    assert sc.runways["file"] == (tmp_path / "inputs" / "rw.csv").resolve()
    assert sc.runways["horizon_years"] == 10.0


def test_toml_native_date_is_accepted(tmp_path):
    sc = load_scenario(_write(tmp_path, "analysis_date = 2027-01-15\n"))
    assert sc.decimal_year == pytest.approx(float(decimal_year("2027-01-15")))


@pytest.mark.parametrize(
    ("text", "words"),
    [
        (MINIMAL + "[routes]\nspacing_mn = 5\n", ["spacing_mn", "did you mean 'spacing_nm'"]),
        (MINIMAL + "[runway]\nfile = 'x.csv'\n", ["runway", "did you mean 'runways'"]),
        (MINIMAL + "colour = 'red'\n", ["colour", "accepted"]),
        ('title = "x"\n', ["analysis_date is missing"]),
        ('analysis_date = "2026-13-45"\n', ["analysis_date", "2026-13-45"]),
        ('analysis_date = "next tuesday"\n', ["analysis_date", "next tuesday"]),
        (MINIMAL + "[zones]\ncap = 'east'\n", ["[zones] cap", "north, south"]),
        (MINIMAL + "[zones]\nblackout_nT = 7000\n", ["blackout_nT", "caution_nT"]),
        (MINIMAL + "[zones]\nstep_deg = '0.5'\n", ["[zones] step_deg", "not a number"]),
        (MINIMAL + "[error_budget]\nlimit_deg = 0\n", ["[error_budget] limit_deg", "above 0"]),
        (MINIMAL + "[error_budget]\nbank_angle_deg = true\n", ["bank_angle_deg", "not a number"]),
        (MINIMAL + "[runways]\nfile = 'nowhere.csv'\n", ["[runways] file", "no such file"]),
        (MINIMAL + "[runways]\nhorizon_years = 5\n", ["[runways] file is missing"]),
        (MINIMAL + "[routes]\ngrid = 'mercator-ish'\n", ["[routes] grid", "mercator-ish"]),
        (MINIMAL + "[routes]\nalt = 'very high'\n", ["[routes] alt"]),
        (MINIMAL + "[routes]\nspacing_nm = 5\n", ["plan"]),
        (MINIMAL + "[compass_bases]\nfile = 'b.csv'\nsetting_out_distances_m = []\n", ["no such file"]),
        (MINIMAL + "model = 'WMM2099.COF'\n", ["model", "no such file"]),
        ("analysis_date = \n", ["not valid TOML"]),
    ],
)
def test_bad_scenarios_name_the_key(tmp_path, text, words):
    with pytest.raises(InputError) as info:
        load_scenario(_write(tmp_path, text))
    message = str(info.value)
    assert "\n" not in message
    for word in words:
        assert word in message


def test_bad_plan_and_duplicate_names(tmp_path):
    route = DEMO_SCENARIO.parent / "routes" / "tm205_antimeridian.csv"
    text = MINIMAL + f"[[routes.plan]]\nname = 'A'\nfile = '{route}'\n[[routes.plan]]\nname = 'A'\nfile = '{route}'\n"
    with pytest.raises(InputError, match="appear more than once"):
        load_scenario(_write(tmp_path, text))
    with pytest.raises(InputError, match="#1.*file is missing"):
        load_scenario(_write(tmp_path, MINIMAL + "[[routes.plan]]\nname = 'A'\n"))


def test_missing_scenario_file(tmp_path):
    with pytest.raises(InputError, match="no such file"):
        load_scenario(tmp_path / "absent.toml")


@settings(max_examples=60, deadline=None)
@given(st.floats(allow_nan=True, allow_infinity=True, width=64))
def test_spacing_accepted_exactly_within_its_range(tmp_path_factory, value):
    # Range stated in SCHEMA: 0 < spacing_nm <= 500; TOML writes nan/inf as nan/inf.
    route = DEMO_SCENARIO.parent / "routes" / "tm205_antimeridian.csv"
    literal = "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf") if math.isinf(value) else repr(value)
    text = MINIMAL + f"[routes]\nspacing_nm = {literal}\n[[routes.plan]]\nname = 'A'\nfile = '{route}'\n"
    path = _write(tmp_path_factory.mktemp("h"), text)
    if math.isfinite(value) and 0 < value <= 500:
        assert load_scenario(path).routes["spacing_nm"] == value
    else:
        with pytest.raises(InputError, match="spacing_nm"):
            load_scenario(path)


def test_heading_error_options_map_the_budget_section():
    # One vocabulary: the section's keys are heading_error's keywords (detector.DetectorSettings/Manoeuvre fields).
    import headingref
    from headingref.scenario import DEMO_SCENARIO, load_scenario

    sc = load_scenario(DEMO_SCENARIO)
    turning, steady = sc.heading_error_options(), sc.heading_error_options(manoeuvre=False)
    assert turning["turn_duration_s"] == sc.error_budget["turn_duration_s"]
    assert turning["joint_limit_deg"] == sc.error_budget["joint_limit_deg"]
    assert turning["bank_angle_deg"] == sc.error_budget["bank_angle_deg"] and steady["bank_angle_deg"] == 0.0
    # every key is an argument heading_error accepts
    table = headingref.heading_error(75.0, 0.0, sc.analysis_date, **turning)
    assert len(table) == 1


def test_input_paths_list_every_file_the_scenario_reads():
    # The demo names 4 route files, the bases, the swing, the runway and the navaid CSVs (data/demo/scenario.toml);
    # the report refuses to write into any folder holding one of them.
    sc = load_scenario(DEMO_SCENARIO)
    paths = sc.input_paths()
    expected = {DEMO_SCENARIO.resolve(), *(p["file"] for p in sc.routes["plan"]), sc.compass_bases["file"],
                sc.swing["file"], sc.runways["file"], sc.navaids["file"]}
    assert set(paths) == expected and len(expected) == 9
    assert all(p.is_absolute() and p.is_file() for p in paths)
