"""Every ``headingref`` command as a new user meets it: help, success, bad input, atomic outputs.

Contract (DEVELOPERS.md "Conventions"; common practice for command-line tools): ``--help`` shows
examples and the safety caution; exit status 0 on success; on bad input a non-zero status and one
error line on stderr (``headingref CMD: error: ...``), never a traceback; outputs are written to
a temporary file and renamed, so after a failure no output (and no temporary file) exists and an
older file of the same name is untouched.

Values printed or written on success are checked against independent sources named beside each
check: ppigrf (IGRF-14), geographiclib (WGS84 geodesics), NGA Pub. 226 art. 501 (swing formulas),
RFC 7946 (GeoJSON). All places, runways and bases are invented (tests/data, data/demo).
"""

from __future__ import annotations

import contextlib
import datetime as dt
import io as _io
import json
import os
import stat
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import ppigrf
import pytest
from geographiclib.geodesic import Geodesic

from headingref.cli import main
from headingref.notices import CAUTION

DATA = Path(__file__).parent / "data"
DATE = "2026-12-02"
EXPECTED_COMMANDS = ["field", "route", "zones", "poles", "base", "swing", "runways", "report", "demo"]  # issue 8


def run(argv: list[str]) -> tuple[int, str, str]:
    """headingref.cli.main in-process; (status, stdout, stderr). argparse exits become the status."""
    out, err = _io.StringIO(), _io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err), warnings.catch_warnings():
        try:
            code = main([str(a) for a in argv])
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else 2
    return code, out.getvalue(), err.getvalue()


def error_line(code: int, stderr: str, command: str) -> str:
    """The single error line of a failed run (warning lines before it are allowed)."""
    assert code == 2, f"status {code}: {stderr}"
    assert "Traceback" not in stderr
    lines = [line for line in stderr.splitlines() if line.strip() and not line.startswith("headingref: warning:")]
    assert len(lines) == 1, f"expected one error line, got: {lines}"
    assert lines[0].startswith(f"headingref {command}: error: "), lines[0]
    return lines[0]


def ppigrf_declination(lat: float, lon: float, date: str, alt_km: float = 0.0) -> float:
    """Declination (deg, east positive) from ppigrf's geodetic east and north components."""
    east, north, _ = ppigrf.igrf(lon, lat, alt_km, dt.datetime.fromisoformat(date))
    return float(np.degrees(np.arctan2(np.ravel(east)[0], np.ravel(north)[0])))


# --------------------------------------------------------------------------- help


def test_console_script_lists_every_command():
    # The installed console script (pyproject [project.scripts]) and the nine commands of issue 8.
    done = subprocess.run(["headingref", "--help"], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stderr
    listed = [line.split()[0] for line in done.stdout.splitlines() if line.startswith("    ") and line.split()]
    assert [c for c in EXPECTED_COMMANDS if c not in listed] == []
    assert "CAUTION" in done.stdout


def test_module_entry_point_runs():
    # `python -m headingref.cli` is the other documented way in (README): same parser.
    done = subprocess.run([sys.executable, "-m", "headingref.cli", "field", "--help"], capture_output=True, text=True,
                          timeout=60, cwd=Path(__file__).parents[1])
    assert done.returncode == 0 and "headingref field" in done.stdout


@pytest.mark.parametrize("command", EXPECTED_COMMANDS)
def test_help_shows_examples_and_caution(command):
    code, out, err = run([command, "--help"])
    assert code == 0, err
    assert "examples:" in out
    examples = [line for line in out.splitlines() if line.strip().startswith(f"headingref {command}")]
    assert examples, f"no example of headingref {command} in its help"
    # argparse may re-wrap; compare the caution with whitespace collapsed
    assert " ".join(CAUTION.split()) in " ".join(out.split())


def test_no_command_prints_help_and_fails():
    code, out, _ = run([])
    assert code == 2 and "COMMAND" in out


# --------------------------------------------------------------------------- success, checked outside


def _no_temporary_files(folder: Path) -> None:
    leftovers = [p.name for p in folder.rglob("*") if p.name.startswith(".") or ".tmp" in p.name]
    assert leftovers == [], leftovers


def test_field_csv_matches_ppigrf(tmp_path):
    out = tmp_path / "field.csv"
    code, stdout, _ = run(["field", "--lat", "69.68", "--lon", "18.94", "--alt", "2 km", "--date", DATE, "--output", out])
    assert code == 0
    row = pd.read_csv(out).iloc[0]
    # ppigrf (independent IGRF-14), geodetic, 2 km above the ellipsoid; 0.01 deg covers the date convention
    assert row.declination_deg == pytest.approx(ppigrf_declination(69.68, 18.94, DATE, 2.0), abs=0.01)
    assert "declination (variation)" in stdout
    _no_temporary_files(tmp_path)


def test_field_input_csv_one_row_per_place(tmp_path):
    places = tmp_path / "places.csv"
    places.write_text("name;lat;lon;alt\nInvented mast;61.2;-149.9;450 m\nInvented hut;N78°13.5′;015 38 E;FL350\n",
                      encoding="utf-8")
    out = tmp_path / "out.csv"
    code, _, _ = run(["field", "--input", places, "--date", DATE, "--output", out])
    assert code == 0
    table = pd.read_csv(out)
    assert list(table.name) == ["Invented mast", "Invented hut"]
    # FL350 = 35,000 ft x 0.3048 m (1959 international foot) = 10.668 km
    assert table.alt_km.iloc[1] == pytest.approx(10.668, abs=1e-9)
    assert table.declination_deg.iloc[0] == pytest.approx(ppigrf_declination(61.2, -149.9, DATE, 0.45), abs=0.01)


def test_route_distances_match_geographiclib(tmp_path):
    legs_csv, samples_csv, geo = tmp_path / "legs.csv", tmp_path / "samples.csv", tmp_path / "route.geojson"
    code, _, _ = run(["route", "--input", DATA / "route_arctic.csv", "--date", DATE, "--spacing", "25",
                      "--output", legs_csv, "--samples", samples_csv, "--geojson", geo])
    assert code == 0
    legs = pd.read_csv(legs_csv)
    for leg in legs.itertuples():
        # geographiclib (Karney) WGS84 geodesic; 1 m tolerance
        s12 = Geodesic.WGS84.Inverse(leg.from_lat_deg, leg.from_lon_deg, leg.to_lat_deg, leg.to_lon_deg)["s12"]
        assert leg.distance_nm * 1852.0 == pytest.approx(s12, abs=1.0)
    collection = json.loads(geo.read_text())
    assert collection["type"] == "FeatureCollection"  # RFC 7946 section 3.3
    _no_temporary_files(tmp_path)


def test_runways_implied_designator_matches_independent_rule(tmp_path):
    out = tmp_path / "checked.csv"
    code, stdout, _ = run(["runways", "--input", DATA / "runways_demo.csv", "--date", DATE, "--horizon", "2", "--output", out])
    assert code == 0 and "CAUTION" in stdout
    table = pd.read_csv(out, dtype={"designator_implied": str})
    ends = pd.read_csv(DATA / "runways_demo.csv").dropna(subset=["end_lat"])
    checked = 0
    for i, end in ends.iterrows():
        # geographiclib azimuth towards the far threshold, ppigrf declination at the midpoint;
        # designator = nearest whole tenth of the magnetic azimuth, 0 -> 36 (ICAO Annex 14 Vol I 5.2.2.4, from memory)
        line = Geodesic.WGS84.InverseLine(end.lat, end.lon, end.end_lat, end.end_lon)
        mid = line.Position(line.s13 / 2)
        magnetic = (line.azi1 - ppigrf_declination(mid["lat2"], mid["lon2"], DATE)) % 360.0
        if abs((magnetic / 10.0) % 1.0 - 0.5) < 0.05:
            continue  # within 0.5 deg of a rounding boundary: the model difference could flip it
        number = int(np.floor(magnetic / 10.0 + 0.5)) or 36
        number = 36 if number == 0 else (number if number <= 36 else number - 36)
        assert table.designator_implied.iloc[i][:2] == f"{number:02d}", end.runway
        checked += 1
    assert checked >= 6


def test_swing_coefficients_match_pub226_formulas(tmp_path):
    out, card = tmp_path / "coef.csv", tmp_path / "card.csv"
    code, _, _ = run(["swing", "--input", DATA / "swing_handbook_501.csv", "--output", out, "--card", card])
    assert code == 0
    row = pd.read_csv(out).iloc[0]
    # NGA Pub. 226 art. 501 deviations on N..NW. On eight equally spaced headings the five terms are
    # orthogonal, so least squares gives A = mean(d), B = mean(2 d sin h), C = mean(2 d cos h),
    # D = mean(2 d sin 2h), E = mean(2 d cos 2h) (discrete Fourier coefficients; D and E equal the
    # handbook's (NE + SW - SE - NW)/4 = 5.0 and (N + S - E - W)/4 = 1.5, A its mean 1.0; B and C
    # also use the intercardinal readings, unlike the handbook's approximate (E - W)/2 and (N - S)/2).
    dev = np.array([10.5, 20.0, 11.5, -1.2, -5.5, -8.0, -12.5, -6.8])
    h = np.radians(np.arange(0.0, 360.0, 45.0))
    expected = (dev.mean(), np.mean(2 * dev * np.sin(h)), np.mean(2 * dev * np.cos(h)),
                np.mean(2 * dev * np.sin(2 * h)), np.mean(2 * dev * np.cos(2 * h)))
    assert expected[0] == pytest.approx(1.0) and expected[3] == pytest.approx(5.0) and expected[4] == pytest.approx(1.5)
    for name, value in zip("ABCDE", expected, strict=True):
        assert row[f"{name}_deg"] == pytest.approx(value, abs=1e-9), name
    assert len(pd.read_csv(card)) == 12  # default card: every 30 degrees


def test_base_model_variation_matches_ppigrf(tmp_path):
    out, points = tmp_path / "upkeep.csv", tmp_path / "points.csv"
    code, _, _ = run(["base", "--input", DATA / "base_sites.csv", "--date", DATE, "--output", out, "--setting-out", points])
    assert code == 0
    table = pd.read_csv(out)
    assert len(table) == 3
    first = table.iloc[0]
    # ppigrf declination at the first invented base (69.30 N, 16.10 E, 12 m), 0.02 deg
    assert first.model_variation_deg == pytest.approx(ppigrf_declination(69.30, 16.10, DATE, 0.012), abs=0.02)
    _no_temporary_files(tmp_path)


def test_zones_geojson_rings_are_closed(tmp_path):
    geo = tmp_path / "zones.geojson"
    code, stdout, _ = run(["zones", "--cap", "north", "--date", DATE, "--resolution", "2", "--geojson", geo])
    assert code == 0 and "blackout" in stdout
    collection = json.loads(geo.read_text())
    rings = [ring for f in collection["features"] for poly in
             ([f["geometry"]["coordinates"]] if f["geometry"]["type"] == "Polygon" else f["geometry"]["coordinates"])
             for ring in poly]
    assert rings
    for ring in rings:
        # RFC 7946 section 3.1.6: a linear ring has >= 4 positions, first and last equivalent
        assert len(ring) >= 4 and ring[0] == ring[-1]


def test_poles_dip_pole_is_where_ppigrf_has_no_horizontal_field(tmp_path):
    out = tmp_path / "poles.csv"
    code, _, _ = run(["poles", "--date", DATE, "--output", out])
    assert code == 0
    table = pd.read_csv(out)
    dip = table[table.kind == "dip"]
    assert len(dip) == 2
    for pole in dip.itertuples():
        east, north, _ = ppigrf.igrf(pole.lon, pole.lat, 0.0, dt.datetime.fromisoformat(DATE))
        # definition of a dip pole: H = 0 (WMM2025 report); ppigrf's H there below 5 nT
        assert float(np.hypot(np.ravel(east)[0], np.ravel(north)[0])) < 5.0


def test_report_writes_into_its_folder_and_leaves_no_staging(tmp_path):
    # A one-section scenario (the demo's invented swing) keeps this fast; the full demo runs in test_report.
    study = tmp_path / "study.toml"
    study.write_text(f'analysis_date = "{DATE}"\n[swing]\nfile = "{SWING}"\n', encoding="utf-8")
    out = tmp_path / "report"
    code, stdout, _ = run(["report", study, "--out", out, "--no-progress"])
    assert code == 0
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "not approved for navigation" in html
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report", "study.toml"]  # the staging folder is gone
    _no_temporary_files(tmp_path)


# --------------------------------------------------------------------------- bad input: one line, nothing written

ROUTE = DATA / "route_arctic.csv"
RUNWAYS = DATA / "runways_demo.csv"
SITES = DATA / "base_sites.csv"
SWING = DATA / "swing_handbook_501.csv"

# (command line with OUT standing for the output folder, regex the error line must match)
BAD_RUNS = [
    (["field", "--lat", "91", "--lon", "0", "--date", DATE, "--output", "OUT/f.csv"], "latitude .*outside -90 to 90"),
    (["field", "--lat", "nan", "--lon", "0", "--date", DATE, "--output", "OUT/f.csv"], "latitude"),
    (["field", "--lat", "60", "--lon", "0", "--date", "2025-02-29", "--output", "OUT/f.csv"], "not a valid calendar date"),
    (["field", "--lat", "60", "--lon", "0", "--date", "2031-01-01", "--output", "OUT/f.csv"], "outside IGRF-14's validity"),
    (["field", "--lat", "60", "--lon", "0", "--date", DATE, "--alt", "1e308", "--output", "OUT/f.csv"], "height"),
    (["field", "--lat", "60", "--lon", "0", "--date", DATE, "--model", ROUTE, "--output", "OUT/f.csv"], "coefficient file"),
    (["field", "--lat", "60", "--date", DATE], "give --lat and --lon"),
    (["field", "--input", ROUTE, "--lat", "60", "--date", DATE], "either --input or --lat"),
    (["route", "--input", ROUTE, "--date", DATE, "--spacing", "nan", "--output", "OUT/l.csv"], "spacing"),
    (["route", "--input", ROUTE, "--date", DATE, "--spacing", "1e-9", "--output", "OUT/l.csv"], "samples .*larger spacing"),
    (["route", "--input", ROUTE, "--date", DATE, "--grid", "utm:99Q", "--output", "OUT/l.csv"], "grid"),
    (["route", "--input", ROUTE, "--date", DATE, "--alt", "FL9999", "--output", "OUT/l.csv"], "height"),
    (["route", "--input", ROUTE, "--date", "1899-12-31", "--output", "OUT/l.csv"], "validity"),
    (["runways", "--input", RUNWAYS, "--date", DATE, "--horizon", "inf", "--output", "OUT/r.csv"], "horizon"),
    (["runways", "--input", RUNWAYS, "--date", DATE, "--band", "nan", "--output", "OUT/r.csv"], "band"),
    (["runways", "--input", SWING, "--date", DATE, "--output", "OUT/r.csv"], "missing column"),
    (["runways", "--input", RUNWAYS, "--date", DATE, "--plot", "OUT/p.png", "--plot-runways", "NOWHERE 09",
      "--output", "OUT/r.csv"], "not in the table"),
    (["swing", "--input", SWING, "--limit", "nan", "--output", "OUT/s.csv"], "limit"),
    (["swing", "--input", SWING, "--coefficients", "XYZ", "--output", "OUT/s.csv"], "coefficients"),
    (["swing", "--input", SWING, "--card-headings", "nan,inf", "--output", "OUT/s.csv"], "card headings"),
    (["swing", "--input", ROUTE, "--output", "OUT/s.csv"], "missing column"),
    (["base", "--input", SITES, "--date", DATE, "--mark-step", "0", "--output", "OUT/b.csv"], "mark step"),
    (["base", "--input", SITES, "--date", DATE, "--distances", "nan", "--output", "OUT/b.csv"], "distances"),
    (["base", "--lat", "60", "--lon", "10", "--surveyed-variation", "3E", "--survey-date", "2999-01-01",
      "--date", DATE, "--output", "OUT/b.csv"], "future"),
    (["zones", "--cap", "north", "--date", DATE, "--resolution", "1e-6", "--geojson", "OUT/z.geojson"], "resolution"),
    (["zones", "--cap", "north", "--date", DATE, "--thresholds", "6000,2000", "--geojson", "OUT/z.geojson"], "thresholds"),
    (["zones", "--region=91,95,0,10", "--date", DATE, "--geojson", "OUT/z.geojson"], "latitudes"),
    (["poles", "--years", "2030:1990", "--output", "OUT/p.csv"], "before start"),
    (["poles", "--years", "1990:2030", "--step", "nan", "--output", "OUT/p.csv"], "step"),
    (["poles", "--years", "nan:2030", "--output", "OUT/p.csv"], "date"),
    (["report", "OUT/absent.toml", "--out", "OUT/report"], "no such file"),
    (["report", ROUTE, "--out", "OUT/report"], "not valid TOML"),
]


def _argv(argv: list, folder: Path) -> list[str]:
    return [str(a).replace("OUT/", f"{folder}/") for a in argv]


@pytest.mark.parametrize("argv, expected", BAD_RUNS, ids=[" ".join(str(a) for a in b[0][:1] + b[0][3:5]) + f" #{i}"
                                                          for i, b in enumerate(BAD_RUNS)])
def test_bad_input_is_one_line_and_writes_nothing(tmp_path, argv, expected):
    import re

    code, _, err = run(_argv(argv, tmp_path))
    line = error_line(code, err, argv[0])
    assert re.search(expected, line), line
    assert list(tmp_path.iterdir()) == [], "output written despite the error"


@pytest.mark.parametrize(
    "argv",
    [["route", "--date", DATE, "--output", "x.csv"], ["field", "--lat", "60", "--lon", "0", "--alt"],
     ["runways", "--input", RUNWAYS, "--date", DATE, "--horizon", "ten"], ["zones", "--cap", "east", "--date", DATE],
     ["swing", "--input", SWING, "--limit", "1e999e"], ["frobnicate"]],
)
def test_argparse_errors_end_with_one_error_line(argv):
    # argparse (Python standard library) would print the usage block first; headingref's parser
    # (cli.common.OneLineParser) prints only 'headingref COMMAND: error: ... (see ... --help)', status 2.
    code, out, err = run(argv)
    assert code == 2 and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1, err
    assert err.startswith("headingref") and ": error: " in err, err


# --------------------------------------------------------------------------- atomic outputs

OUTPUT_RUNS = {
    # command -> (good arguments, output options: the first takes a CSV, the last a figure if any)
    "field": (["field", "--lat", "60", "--lon", "10", "--date", DATE], ["--output"]),
    "route": (["route", "--input", ROUTE, "--date", DATE, "--spacing", "50"], ["--output", "--samples", "--geojson", "--plot"]),
    "runways": (["runways", "--input", RUNWAYS, "--date", DATE, "--horizon", "1"], ["--output", "--plot"]),
    "swing": (["swing", "--input", SWING], ["--output", "--card", "--residuals", "--plot"]),
    "base": (["base", "--input", SITES, "--date", DATE], ["--output", "--setting-out"]),
    "zones": (["zones", "--cap", "north", "--date", DATE, "--resolution", "2"], ["--geojson", "--netcdf", "--png"]),
    "poles": (["poles", "--date", DATE], ["--output", "--plot"]),
}
SUFFIX = {"--geojson": ".geojson", "--netcdf": ".nc", "--plot": ".png", "--png": ".png"}

# Found here, left to the authors of these command modules: an unwritable later output (missing folder,
# or a figure format matplotlib does not know) is found only after the earlier outputs are written,
# and an unknown figure format escapes as a ValueError traceback. cli/field, cli/route and cli/runways
# now check every output name first (headingref.cli.common.check_outputs).
_PARTIAL: set[str] = set()  # commands that still wrote some outputs before checking the rest (none now)


def _outputs(command: str, folder: Path, last: str) -> list[str]:
    argv, options = OUTPUT_RUNS[command]
    args = list(argv)
    for i, option in enumerate(options):
        name = f"out{i}{SUFFIX.get(option, '.csv')}"
        if i == len(options) - 1 and len(options) > 1:
            name = last if option in ("--plot", "--png") or last.startswith("missing/") else name
        args += [option, str(folder / name)]
    return args


@pytest.mark.parametrize(
    "command",
    [pytest.param(c, marks=[pytest.mark.xfail(strict=True, reason="checks outputs only when writing")] if c in _PARTIAL else [])
     for c in OUTPUT_RUNS if len(OUTPUT_RUNS[c][1]) > 1],
)
def test_bad_last_output_leaves_no_earlier_output(tmp_path, command):
    # The last output goes to a folder that does not exist: the whole run must fail before writing.
    code, _, err = run(_outputs(command, tmp_path, "missing/last.png"))
    error_line(code, err, command)
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize(
    "command",
    [pytest.param(c, marks=[pytest.mark.xfail(strict=True, reason="unknown figure format is a ValueError")] if c in _PARTIAL else [])
     for c in OUTPUT_RUNS if OUTPUT_RUNS[c][1][-1] in ("--plot", "--png")],
)
def test_unknown_figure_format_is_refused_before_any_output(tmp_path, command):
    code, _, err = run(_outputs(command, tmp_path, "figure.xyz"))
    assert "xyz" in error_line(code, err, command)
    assert list(tmp_path.iterdir()) == []


def test_failed_run_keeps_the_older_file(tmp_path):
    old = tmp_path / "legs.csv"
    old.write_text("older result\n", encoding="utf-8")
    code, _, err = run(["route", "--input", ROUTE, "--date", "2031-06-01", "--output", old])
    error_line(code, err, "route")
    assert old.read_text(encoding="utf-8") == "older result\n"
    assert [p.name for p in tmp_path.iterdir()] == ["legs.csv"]


@pytest.mark.parametrize("command", ["field", "route", "runways"])
def test_output_may_not_overwrite_the_input(tmp_path, command):
    source = {"field": None, "route": ROUTE, "runways": RUNWAYS}[command]
    if source is None:
        source = tmp_path / "places.csv"
        source.write_text("lat,lon\n60,10\n", encoding="utf-8")
        argv = ["field", "--input", source, "--date", DATE]
    else:
        source = Path(tmp_path / source.name)
        source.write_bytes((DATA / source.name).read_bytes())
        argv = list(OUTPUT_RUNS[command][0])
        argv[argv.index("--input") + 1] = source
    before = source.read_bytes()
    code, _, err = run([*argv, "--output", source])
    assert "input" in error_line(code, err, command)
    assert source.read_bytes() == before


def test_same_file_for_two_outputs_is_refused(tmp_path):
    both = tmp_path / "same.csv"
    code, _, err = run(["route", "--input", ROUTE, "--date", DATE, "--output", both, "--samples", both])
    assert "two outputs" in error_line(code, err, "route")
    assert list(tmp_path.iterdir()) == []


def test_output_that_is_a_folder_is_refused(tmp_path):
    code, _, err = run(["field", "--lat", "60", "--lon", "10", "--date", DATE, "--output", tmp_path])
    assert "folder" in error_line(code, err, "field")


@pytest.mark.parametrize("name", ["x" * 300 + ".csv", "bad\x00name.csv"])
def test_unwritable_output_name_is_one_line(tmp_path, name):
    # NAME_MAX 255 bytes on Linux file systems (from memory); NUL can never be in a POSIX path
    code, _, err = run(["field", "--lat", "60", "--lon", "10", "--date", DATE, "--output", str(tmp_path / name)])
    error_line(code, err, "field")
    assert list(tmp_path.iterdir()) == []


def test_long_output_name_within_name_max_is_written(tmp_path):
    # A 250-character name is legal; the temporary name beside it must not exceed NAME_MAX either.
    target = tmp_path / ("y" * 246 + ".csv")
    code, _, err = run(["field", "--lat", "60", "--lon", "10", "--date", DATE, "--output", target])
    assert code == 0, err
    assert [p.name for p in tmp_path.iterdir()] == [target.name]


def test_output_to_a_device_writes_through_it(tmp_path):
    # Renaming a temporary file onto a device node (as /dev/null) would replace the device when run
    # as root; a device is written directly. A private null device (Linux major 1, minor 3) is used.
    node = tmp_path / "null"
    try:
        os.mknod(node, stat.S_IFCHR | 0o666, os.makedev(1, 3))
    except (PermissionError, OSError, AttributeError):
        pytest.skip("cannot create a device node here (not root)")
    code, _, err = run(["field", "--lat", "60", "--lon", "10", "--date", DATE, "--output", node])
    assert code == 0, err
    assert stat.S_ISCHR(node.stat().st_mode), "the device was replaced by a regular file"
    assert [p.name for p in tmp_path.iterdir()] == ["null"]


# --------------------------------------------------------------------------- option values fuzzed

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

NASTY_OPTION = st.one_of(
    st.text(alphabet=st.characters(blacklist_categories=("Cs",), blacklist_characters="\x00"), max_size=16),
    st.sampled_from(["nan", "inf", "-inf", "1e308", "-0", "", " ", "91", "-181", "FL", "FL999", "2031-01-01", "1899-12-31",
                     "2024-02-29", "2025-02-29", "12:00", "N", "°", "0x10", "1e-320", "polar:1e308", "utm:61", "EPSG:0",
                     "lcc:0,0,0", "1990:2030", "2030:1990", ":", "ABCDEF", "0,0,0", ",,,", "60,85,150,-120"]),
    st.floats().map(repr),
)
OPTION_FUZZ = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


def _fuzz_run(argv: list[str], command: str) -> None:
    code, _, err = run(argv)
    assert code in (0, 2), f"status {code}: {err}"
    assert "Traceback" not in err
    if code == 2 and "usage: " in err:  # argparse refused the value: usage, then one error line
        assert err.strip().splitlines()[-1].startswith(f"headingref {command}: error: "), err
    elif code == 2:
        error_line(code, err, command)  # the library refused it: one line, nothing else


@OPTION_FUZZ
@given(lat=NASTY_OPTION, lon=NASTY_OPTION, alt=NASTY_OPTION, date=NASTY_OPTION)
def test_field_options_fuzzed(lat, lon, alt, date):
    _fuzz_run(["field", f"--lat={lat}", f"--lon={lon}", f"--alt={alt}", f"--date={date}"], "field")


@OPTION_FUZZ
@given(spacing=NASTY_OPTION, grid=NASTY_OPTION, alt=NASTY_OPTION, date=st.sampled_from([DATE, "2030-01-01", "nan", "x"]))
def test_route_options_fuzzed(tmp_path, spacing, grid, alt, date):
    _fuzz_run(["route", f"--input={ROUTE}", f"--date={date}", f"--spacing={spacing}", f"--grid={grid}", f"--alt={alt}",
               f"--output={tmp_path / 'legs.csv'}"], "route")


@OPTION_FUZZ
@given(years=NASTY_OPTION, step=NASTY_OPTION, region=NASTY_OPTION, thresholds=NASTY_OPTION)
def test_poles_and_zones_options_fuzzed(years, step, region, thresholds):
    _fuzz_run(["poles", f"--years={years}", f"--step={step}"], "poles")
    _fuzz_run(["zones", f"--region={region}", f"--thresholds={thresholds}", "--resolution=5", f"--date={DATE}"], "zones")


@OPTION_FUZZ
@given(coefficients=NASTY_OPTION, card=NASTY_OPTION, limit=NASTY_OPTION, lines=NASTY_OPTION, distances=NASTY_OPTION)
def test_swing_and_base_options_fuzzed(coefficients, card, limit, lines, distances):
    _fuzz_run(["swing", f"--input={SWING}", f"--coefficients={coefficients}", f"--card-headings={card}", f"--limit={limit}"],
              "swing")
    _fuzz_run(["base", "--lat=60", "--lon=10", "--surveyed-variation=3E", "--survey-date=2020-01-01", f"--date={DATE}",
               f"--lines={lines}", f"--distances={distances}"], "base")


def test_base_mark_step_denormal():
    # Found by the fuzzing above: --mark-step 1e-320 once passed the step check and overflowed
    # ('cannot convert float infinity to integer'); steps below 0.01 deg are now refused.
    code, _, err = run(["base", "--lat=60", "--lon=10", "--surveyed-variation=3E", "--survey-date=2020-01-01",
                        f"--date={DATE}", "--mark-step=1e-320"])
    error_line(code, err, "base")


def test_output_piped_into_a_reader_that_stops(tmp_path):
    # `headingref field --input big.csv --csv | head -1`: the reader closes the pipe early; the
    # command must stop quietly (Python docs, signal module, 'Note on SIGPIPE'), not print a
    # BrokenPipeError traceback.
    places = tmp_path / "many.csv"
    lat, lon = np.linspace(-80.0, 80.0, 5000), np.linspace(-179.0, 179.0, 5000)
    places.write_text("lat,lon\n" + "".join(f"{a:.4f},{b:.4f}\n" for a, b in zip(lat, lon, strict=True)), encoding="utf-8")
    proc = subprocess.Popen(["headingref", "field", "--input", str(places), "--date", DATE, "--csv"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    first = proc.stdout.readline()
    proc.stdout.close()  # like head -1
    _, err = proc.communicate(timeout=120)
    assert first.startswith(b"name,lat_deg,lon_deg")
    assert b"Traceback" not in err and b"BrokenPipeError" not in err, err.decode()[-500:]
    assert proc.returncode in (0, 1)


def test_poles_plot_prints_no_foreign_warning(tmp_path):
    # Found here, left to the author of the pole-track map: with one date the legend is empty and
    # matplotlib's UserWarning reaches the user as 'headingref: warning: UserWarning: ...'.
    code, _, err = run(["poles", "--date", DATE, "--plot", tmp_path / "poles.png"])
    assert code == 0
    assert "UserWarning" not in err, err


def test_field_input_date_outside_validity_names_the_line(tmp_path):
    places = tmp_path / "places.csv"
    places.write_text("name,lat,lon,date\nInvented mast,60,10,2026-12-02\nInvented hut,61,10,2031-06-01\n", encoding="utf-8")
    code, _, err = run(["field", "--input", places, "--output", tmp_path / "out.csv"])
    # IGRF-14 is valid 1900.0 to 2030.0 (IAGA V-MOD release); the model alone named only the date
    assert "places.csv line 3: date '2031-06-01' is outside IGRF-14's validity" in error_line(code, err, "field")
    assert [p.name for p in tmp_path.iterdir()] == ["places.csv"]
    code, _, err = run(["field", "--input", places, "--extrapolate", "--output", tmp_path / "out.csv"])
    assert code == 0 and "headingref: warning:" in err


def test_field_at_the_pole_prints_undefined_not_nan():
    code, out, _ = run(["field", "--lat", "90", "--lon", "0", "--date", DATE])
    assert code == 0
    assert "nan" not in out.lower() and out.count("undefined") >= 2


def test_tolerance_means_one_thing():
    # --tolerance is the allowed difference between a fixed reference (a base's marked variation, a
    # navaid's station declination) and today's variation; the runway band around a rounding boundary
    # is --band and nothing else (one vocabulary for settings, common practice of CLI design)
    import argparse

    from headingref.cli import build_parser

    parser = build_parser()
    commands = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction)).choices
    with_tolerance = sorted(name for name, sub in commands.items()
                            if any("--tolerance" in action.option_strings for action in sub._actions))
    assert with_tolerance == ["base", "navaids"]
