"""The one-command report on the demo scenario (headingref.report, headingref report / demo)."""

from __future__ import annotations

import base64
import errno
import hashlib
import json
import os
import re
import shutil
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic

import headingref
from headingref.cli import main
from headingref.errors import InputError
from headingref.notices import CAUTION
from headingref.report import REPORT_FILE, build_report
from headingref.scenario import DEMO_SCENARIO, load_scenario

DEMO = DEMO_SCENARIO.parent
SECTIONS = ("summary", "caution", "routes", "zones", "error-budget", "compass-bases", "swing", "runways")


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    out = tmp_path_factory.mktemp("report") / "demo"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = build_report(DEMO_SCENARIO, out, progress=False)
    return result, result.html.read_text(encoding="utf-8")


def _designator(magnetic_deg: float) -> str:
    # ICAO Annex 14 Vol I, runway designation marking (from memory): nearest whole number to a
    # tenth of the magnetic azimuth, 36 for 0, two digits.
    number = int(np.floor(magnetic_deg / 10.0 + 0.5)) % 36
    return f"{number or 36:02d}"


def test_html_has_every_section_and_embedded_images(demo):
    result, page = demo
    for section in SECTIONS:
        assert f'id="{section}"' in page, section
    assert not result.failed
    images = re.findall(r'src="data:image/png;base64,([^"]+)"', page)
    assert len(images) >= 8
    for data in images:
        assert base64.b64decode(data)[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, section 5.2)
    # self-contained: no external resource of any kind
    assert not re.search(r'(src|href)="(https?:)?//', page)
    assert "<link" not in page and "<script" not in page
    # the caution appears, and before the first section
    assert page.index("CAUTION: headingref is a planning") < page.index('id="routes"')
    assert CAUTION.split(".")[0] in page
    assert page.index('id="summary"') < page.index('id="routes"')


def test_every_listed_file_exists_and_no_staging_left(demo):
    result, page = demo
    for path in result.files:
        assert path.is_file() and path.stat().st_size > 0
        assert f'href="{path.name}"' in page or path.name == REPORT_FILE
    leftovers = [p for p in result.out_dir.parent.iterdir() if p.name.startswith(".headingref-report-")]
    assert leftovers == []


def test_leg_courses_equal_independent_recomputation(demo):
    result, _ = demo
    legs = pd.read_csv(result.out_dir / "route_legs.csv")
    sc = load_scenario(DEMO_SCENARIO)
    geod = Geodesic.WGS84
    checked = 0
    for plan in sc.routes["plan"]:
        waypoints = pd.read_csv(plan["file"])
        rows = legs[legs["route"] == plan["name"]].reset_index(drop=True)
        assert len(rows) == len(waypoints) - 1
        for i, row in rows.iterrows():
            a, b = waypoints.iloc[i], waypoints.iloc[i + 1]
            # true course and distance: geographiclib (Karney 2013), independent of pyproj
            line = geod.Inverse(a.lat, a.lon, b.lat, b.lon)
            assert row.true_course_deg == pytest.approx(line["azi1"] % 360.0, abs=1e-6)
            assert row.distance_nm == pytest.approx(line["s12"] / 1852.0, rel=1e-9)
            # magnetic = true - variation (east positive), variation from the field at the start
            # waypoint's altitude (the file's "0 ft" or the scenario's FL350 = 10.668 km)
            alt_km = 0.0 if a.alt == "0 ft" else 35000 * 0.3048 / 1000.0
            variation = float(headingref.field(a.lat, a.lon, sc.analysis_date, alt_km=alt_km).declination_deg.iloc[0])
            assert row.variation_deg == pytest.approx(variation, abs=1e-9)
            expected = (line["azi1"] - variation) % 360.0
            assert abs((row.magnetic_course_deg - expected + 180.0) % 360.0 - 180.0) < 1e-6
            checked += 1
    assert checked >= 10


def test_runway_table_and_summary_equal_independent_recomputation(demo):
    result, page = demo
    table = pd.read_csv(result.out_dir / "runways.csv", dtype={"runway": str, "designator_implied": str})
    inputs = pd.read_csv(DEMO / "runways.csv", dtype={"runway": str})
    geod = Geodesic.WGS84
    out_of_date = set()
    for (_, row), (_, given) in zip(table.iterrows(), inputs.iterrows(), strict=True):
        # true azimuth of the centre line at its midpoint, variation at the same point: geographiclib
        # (Karney 2013) for the geodesic between the thresholds
        line = geod.InverseLine(given.lat, given.lon, given.end_lat, given.end_lon)
        mid = line.Position(line.s13 / 2.0)
        assert row.true_bearing_deg == pytest.approx(mid["azi2"] % 360.0, abs=1e-6)
        variation = float(headingref.field(mid["lat2"], mid["lon2"], "2026-12-02").declination_deg.iloc[0])
        magnetic = (mid["azi2"] - variation) % 360.0
        assert row.magnetic_bearing_deg == pytest.approx(magnetic, abs=1e-3)
        implied = _designator(magnetic)
        assert row.designator_implied.rstrip("LCR") == implied
        margin = abs((magnetic % 10.0) - 5.0)
        if implied != given.runway.rstrip("LCR") and margin > 0.3:
            out_of_date.add(f"{given.airport} {given.runway}")
    # the demo's deliberately stale designators, found independently, are the ones the summary names
    assert out_of_date == {"JXTB 13", "JXTB 31", "JXQR 34", "JXQR 16"}
    # one summary line per runway ("JXTB 13/31"), naming both ends
    leads = [re.sub("<[^>]+>", "", s).split(":")[0] for s in result.summary["runways"] if "out of date" in s]
    listed = {f"{lead.split()[0]} {end}" for lead in leads for end in lead.split()[1].split("/")}
    assert listed == out_of_date and len(leads) == 2


def test_swing_coefficients_equal_least_squares_and_invented_curve(demo):
    result, _ = demo
    readings = pd.read_csv(DEMO / "swing_readings.csv")
    h = np.radians(readings.magnetic_heading_deg.to_numpy())
    deviation = (readings.magnetic_heading_deg - readings.compass_reading_deg + 180.0) % 360.0 - 180.0
    # dev(h) = A + B sin h + C cos h + D sin 2h + E cos 2h (Handbook of Magnetic Compass
    # Adjustment, NGA 2004, ch. V), solved here with numpy's least squares
    basis = np.column_stack([np.ones_like(h), np.sin(h), np.cos(h), np.sin(2 * h), np.cos(2 * h)])
    solution = np.linalg.lstsq(basis, deviation.to_numpy(), rcond=None)[0]
    row = pd.read_csv(result.out_dir / "swing_coefficients.csv").iloc[0]
    got = [row[f"{name}_deg"] for name in "ABCDE"]
    np.testing.assert_allclose(got, solution, atol=1e-9)
    # and near the invented curve the readings were made from (noise 0.2 deg on 12 readings)
    np.testing.assert_allclose(got, [0.5, 6.5, -5.0, 0.8, -0.4], atol=0.25)


def test_compass_base_prediction_equals_field_recomputation(demo):
    result, _ = demo
    bases = pd.read_csv(result.out_dir / "compass_bases.csv")
    history = pd.read_csv(DEMO / "compass_bases.csv")
    for _, base in bases.iterrows():
        latest = history[history.name == base["name"]].iloc[-1]
        surveyed = float(latest.surveyed_variation.rstrip("EW")) * (1 if latest.surveyed_variation.endswith("E") else -1)
        at_survey, at_swing = headingref.field(latest.lat, latest.lon, [latest.survey_date], alt_km=0.0).declination_deg.iloc[0], \
            headingref.field(latest.lat, latest.lon, "2027-03-15").declination_deg.iloc[0]
        # the survey governs; the model supplies only the change since (common practice)
        assert base.predicted_variation_deg == pytest.approx(surveyed + at_swing - at_survey, abs=1e-9)


def test_geojson_outputs_follow_rfc7946(demo):
    result, _ = demo
    routes = json.loads((result.out_dir / "routes.geojson").read_text())
    assert routes["type"] == "FeatureCollection"
    crossing = []
    for feature in routes["features"]:
        geometry = feature["geometry"]
        lines = [geometry["coordinates"]] if geometry["type"] == "LineString" else geometry["coordinates"]
        for line in lines:
            lon = np.array([p[0] for p in line])
            assert np.all(np.abs(lon) <= 180.0)
            # RFC 7946 section 3.1.9: lines are cut at the antimeridian, no 360-degree jumps
            assert np.all(np.abs(np.diff(lon)) < 180.0)
        if geometry["type"] == "MultiLineString":
            crossing.append(feature["properties"]["route"])
    assert any(name.startswith("TM205") for name in crossing)  # the antimeridian route
    kinds = {f["properties"]["kind"] for f in routes["features"]}
    assert kinds == {"leg", "no usable magnetic reference"}
    zones = json.loads((result.out_dir / "zones.geojson").read_text())
    assert {f["properties"]["zone"] for f in zones["features"]} == {"blackout", "caution"}


def test_summary_names_the_blackout_leg(demo):
    result, _ = demo
    legs = pd.read_csv(result.out_dir / "route_samples.csv")
    # H < 2000 nT (WMM2025 technical report, blackout zone) somewhere on each leg the summary names
    lost = legs[legs.horizontal_nT < 2000.0].groupby(["route", "from", "to"]).size().index
    texts = [re.sub("<[^>]+>", "", s) for s in result.summary["routes"] if "no usable" in s]
    assert len(texts) == len(lost) >= 1
    for route, a, b in lost:
        assert any(t.startswith(f"{route}, leg {a}–{b}") for t in texts)


def _scenario(folder: Path, body: str, name: str = "s.toml") -> Path:
    """A scenario TOML with the demo's analysis date and ``body`` (its sections)."""
    path = folder / name
    path.write_text(f'analysis_date = "2026-12-02"\n{body}', encoding="utf-8")
    return path


def _small_scenario(tmp_path, extra=""):
    shutil.copy(DEMO / "runways.csv", tmp_path / "rw.csv")
    return _scenario(tmp_path, f'[runways]\nfile = "rw.csv"\nhorizon_years = 2\n{extra}', "small.toml")


def test_failing_job_is_a_shown_failed_section_not_a_silent_gap(tmp_path, monkeypatch, capsys):
    # A library function renamed or broken: the section is shown as failed with the reason, in the
    # summary and in the result, and the command exits non-zero (never a silently missing figure).
    import headingref.report.runways as job

    def broken(*args, **kwargs):
        raise RuntimeError("check_runways went away")

    monkeypatch.setattr(job, "check_runways", broken)
    with pytest.warns(UserWarning, match="section not made: RuntimeError: check_runways went away"):
        result = build_report(_small_scenario(tmp_path), tmp_path / "out", progress=False)
    assert result.failed == {"runways": "RuntimeError: check_runways went away"}
    page = result.html.read_text(encoding="utf-8")
    assert 'class="failed"' in page and page.count("check_runways went away") == 2  # summary and section
    assert page.index("Sections that could not be made") < page.index('id="runways"')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert main(["report", str(_small_scenario(tmp_path)), "--out", str(tmp_path / "out2"), "--no-progress"]) == 1
    err = capsys.readouterr().err
    assert "section runways could not be made: RuntimeError: check_runways went away" in err


def test_failed_run_writes_nothing(tmp_path):
    (tmp_path / "rw.csv").write_text("airport,runway\nJXAA,09\n", encoding="utf-8")
    path = _scenario(tmp_path, '[runways]\nfile = "rw.csv"\n', "bad.toml")
    with pytest.raises(InputError, match="Runway designators.*lat"):
        build_report(path, tmp_path / "out", progress=False)
    assert not (tmp_path / "out").exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".headingref")] == []


def test_cli_report_and_errors(tmp_path, capsys):
    assert main(["report", str(_small_scenario(tmp_path)), "--out", str(tmp_path / "cli"), "--no-progress"]) == 0
    out = capsys.readouterr().out
    assert "report:" in out and (tmp_path / "cli" / REPORT_FILE).is_file()
    bad = _scenario(tmp_path, "[runway]\n", "typo.toml")
    assert main(["report", str(bad), "--out", str(tmp_path / "x"), "--no-progress"]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "did you mean 'runways'" in err


def test_bad_output_folder_and_bad_route_name_the_culprit(tmp_path):
    (tmp_path / "afile").write_text("x", encoding="utf-8")
    with pytest.raises(InputError, match="exists and is not a folder"):
        build_report(_small_scenario(tmp_path), tmp_path / "afile", progress=False)
    with pytest.raises(InputError, match="does not exist"):
        build_report(_small_scenario(tmp_path), tmp_path / "no" / "such" / "dir", progress=False)
    (tmp_path / "one.csv").write_text("name,lat,lon\nA,70,20\n", encoding="utf-8")
    path = _scenario(tmp_path, '[routes]\n[[routes.plan]]\nname = "R1"\nfile = "one.csv"\n', "r.toml")
    with pytest.raises(InputError, match="route 'R1' \\(one.csv\\): a route needs at least two waypoints"):
        build_report(path, tmp_path / "out", progress=False)
    assert not (tmp_path / "out").exists()


def test_large_runway_batch_keeps_the_summary_short(tmp_path):
    inputs = pd.read_csv(DEMO / "runways.csv", dtype=str)
    copies = []
    for i in range(10):  # 260 ends at 100 invented airfields
        part = inputs.copy()
        part["airport"] = part["airport"].str[:2] + f"{i:02d}"
        copies.append(part)
    pd.concat(copies).to_csv(tmp_path / "rw.csv", index=False)
    path = _scenario(tmp_path, '[runways]\nfile = "rw.csv"\n', "big.toml")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = build_report(path, tmp_path / "out", progress=False)
    lines = result.summary["runways"]
    table = pd.read_csv(result.out_dir / "runways.csv")
    changes = pd.read_csv(result.out_dir / "runway_changes.csv")
    assert len(table) == 260
    stale = int(((table.verdict == "mismatch") & ~table.on_boundary).sum())
    assert stale == 40  # the demo's four stale ends, ten times
    # one line per runway (both ends together) that no longer fits or sits in the band, and one per
    # runway that changes within the horizon, capped at 15 and the rest counted
    attention = table[table.verdict != "match"].groupby(["airport", "runway_id"]).ngroups
    changing = changes.groupby(["airport", "runway_id"]).ngroups
    assert attention >= 30 and changing >= 40  # at least the demo's 3 such runways and 4 changing ones, ten times
    assert len(lines) <= 15 + 4
    assert any(f"and {attention + changing - 15} more" in line for line in lines)
    page = result.html.read_text(encoding="utf-8")
    shown = page.split('id="runways"')[1].count("<tr") - 1  # header row
    assert shown < 260  # only the ends needing attention are listed in the page


# --------------------------------------------------------------------------- issue 12: nothing lost, nothing overwritten
def _digest(folder: Path) -> dict[str, str]:
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(folder.rglob("*")) if p.is_file()}


def _leftovers(folder: Path) -> list[str]:
    return [p.name for p in folder.rglob(".headingref-report-*")]


@pytest.fixture()
def demo_copy(tmp_path):
    folder = tmp_path / "study"
    shutil.copytree(DEMO, folder)
    return folder


def test_report_into_the_scenarios_own_folder_is_refused(demo_copy, tmp_path, capsys):
    # issue 12 item 1: --out the scenario's folder would replace the input runways.csv and compass_bases.csv
    before = _digest(demo_copy)
    for out in (demo_copy, demo_copy / "routes", tmp_path / "." / "study" / ".." / "study"):
        with pytest.raises(InputError, match="holds the scenario's input"):
            build_report(demo_copy / "scenario.toml", out, progress=False)
    (tmp_path / "link").symlink_to(demo_copy, target_is_directory=True)  # links are resolved
    assert main(["report", str(demo_copy / "scenario.toml"), "--out", str(tmp_path / "link"), "--no-progress"]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "holds the scenario's input" in err
    assert _digest(demo_copy) == before and _leftovers(tmp_path) == []


def test_demo_into_the_bundled_demo_folder_is_refused(demo_copy, tmp_path, monkeypatch, capsys):
    # `demo --out data/demo` would destroy the bundled demo; the demo command is pointed at a copy here
    import headingref.scenario

    monkeypatch.setattr(headingref.scenario, "DEMO_SCENARIO", demo_copy / "scenario.toml")
    before = _digest(demo_copy)
    assert main(["demo", "--out", str(demo_copy), "--no-progress"]) == 2
    assert "holds the scenario's input" in capsys.readouterr().err
    assert _digest(demo_copy) == before


def test_folder_holding_an_input_or_other_files_is_refused(tmp_path):
    # An output folder that contains an input named like an output (runways.csv) or any other
    # file: the report replaces the whole folder, so it must be new, empty or an earlier report.
    out = tmp_path / "out"
    out.mkdir()
    shutil.copy(DEMO / "runways.csv", out / "runways.csv")
    path = _scenario(tmp_path, '[runways]\nfile = "out/runways.csv"\nhorizon_years = 1\n')
    with pytest.raises(InputError, match="holds the scenario's input"):
        build_report(path, out, progress=False)
    other = tmp_path / "notes"
    other.mkdir()
    (other / "minutes.txt").write_text("keep me", encoding="utf-8")
    with pytest.raises(InputError, match=r"not an earlier report \(minutes.txt\)"):
        build_report(_small_scenario(tmp_path), other, progress=False)
    assert (other / "minutes.txt").read_text(encoding="utf-8") == "keep me"


def test_earlier_report_is_replaced_as_a_whole(tmp_path):
    out = tmp_path / "out"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        build_report(_small_scenario(tmp_path), out, progress=False)
        (out / "stale_from_last_time.csv").write_text("x\n1\n", encoding="utf-8")
        shutil.copy(DEMO / "swing_readings.csv", tmp_path / "sw.csv")
        swing = _scenario(tmp_path, '[swing]\nfile = "sw.csv"\n', "sw.toml")
        result = build_report(swing, out, progress=False)
    # the folder now holds exactly this report's files: nothing of the earlier one is mixed in
    assert sorted(p.name for p in out.iterdir()) == sorted(p.name for p in result.files)
    assert "runways.csv" not in {p.name for p in result.files}
    assert _leftovers(tmp_path) == []


def test_disk_full_or_interrupt_keeps_the_old_report_and_leaves_no_staging(tmp_path, monkeypatch):
    # issue 12 items 5 and 6: one-line error, the report folder is the old one or the new one
    import headingref.report.build as build
    import headingref.report.folder as folder

    out = tmp_path / "out"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        build_report(_small_scenario(tmp_path), out, progress=False)
    before = _digest(out)

    def full(*args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(build, "write_text", full)
    with pytest.raises(InputError, match="cannot write the report into .*No space left on device") as info:
        build_report(_small_scenario(tmp_path), out, progress=False)
    assert "\n" not in str(info.value)
    assert _digest(out) == before and _leftovers(tmp_path) == []
    monkeypatch.undo()

    from headingref.cli.common import Terminated

    def terminated(ctx):
        raise Terminated()  # SIGTERM, as the command line raises it

    monkeypatch.setattr(build.runways, "job", terminated)
    with pytest.raises(KeyboardInterrupt):
        build_report(_small_scenario(tmp_path), out, progress=False)
    assert _digest(out) == before and _leftovers(tmp_path) == []
    monkeypatch.undo()

    real_replace, calls = os.replace, []

    def failing_second_rename(src, dst):
        calls.append(src)
        if len(calls) == 2:  # old report set aside, the new one cannot be renamed in
            raise OSError(errno.EIO, os.strerror(errno.EIO))
        return real_replace(src, dst)

    monkeypatch.setattr(folder.os, "replace", failing_second_rename)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with pytest.raises(InputError, match="Input/output error"):
            build_report(_small_scenario(tmp_path), out, progress=False)
    assert _digest(out) == before and _leftovers(tmp_path) == []  # the old report was put back


def test_unusable_runway_rows_are_listed_not_a_crash(tmp_path):
    # issue 12 item 2: designator 37 (ICAO Annex 14 Vol I: runway numbers 01 to 36, from memory)
    # and a latitude 'nan' are rows the check cannot use; the report lists them as `runways` does.
    text = (DEMO / "runways.csv").read_text(encoding="utf-8").rstrip("\n")
    text += "\nJXZZ,37,69.6,18.9,69.62,18.9\nJXZY,09,nan,18.9,69.7,18.9\n"
    (tmp_path / "rw.csv").write_text(text, encoding="utf-8")
    path = _scenario(tmp_path, '[runways]\nfile = "rw.csv"\nhorizon_years = 2\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = build_report(path, tmp_path / "out", progress=False)
    lines = len(text.splitlines())
    line = [s for s in result.summary["runways"] if "not checked" in s]
    assert len(line) == 1 and line[0].startswith("2 runway row(s) not checked")
    assert f"rw.csv line {lines - 1}" in line[0] and f"rw.csv line {lines}" in line[0]
    page = result.html.read_text(encoding="utf-8")
    assert "Rows not checked (2)" in page and "37" in page and "nan" in page
    assert not result.failed


def test_library_arguments_of_the_wrong_type_name_the_argument(tmp_path):
    # issue 12 items 7 and 8
    with pytest.raises(InputError, match="scenario = None"):
        build_report(None, tmp_path / "out", progress=False)
    with pytest.raises(InputError, match="out_dir = None"):
        build_report(DEMO_SCENARIO, None, progress=False)
    with pytest.raises(InputError, match="out_dir = ''.*empty"):
        build_report(DEMO_SCENARIO, "", progress=False)
    assert not (tmp_path / "out").exists()


def test_user_text_is_escaped_in_the_page_and_plain_in_the_summary(tmp_path):
    # issue 12 item 4: names are text, never markup (HTML 5 escaping of < > & and quotes)
    shutil.copy(DEMO / "swing_readings.csv", tmp_path / "sw.csv")
    path = tmp_path / "s.toml"
    name = '<script>alert(1)</script> Apron $2 pad $3 & "B"'
    path.write_text(f'title = "<b>Study</b> & co"\nanalysis_date = "2026-12-02"\n[swing]\nfile = "sw.csv"\n'
                    f"base = '{name}'\n", encoding="utf-8")
    result = build_report(path, tmp_path / "out", progress=False)
    page = result.html.read_text(encoding="utf-8")
    assert "<script" not in page and "<b>Study" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt; Apron $2 pad $3 &amp; &#34;B&#34;" in page
    assert "<title>&lt;b&gt;Study&lt;/b&gt; &amp; co</title>" in page
    (line,) = result.summary["swing"]
    assert line.startswith(f"Compass swing on {name}: ")  # plain text, not HTML
    assert "<b>" not in result.summary_text()


def test_sigterm_during_a_report_leaves_no_staging_folder(demo_copy, tmp_path):
    # issue 12 item 6: a real SIGTERM to the command (POSIX signal; the CLI turns it into an
    # interrupt) while the staging folder exists: it is removed and no report folder appears.
    import signal
    import subprocess
    import sys
    import time

    out = tmp_path / "out"
    proc = subprocess.Popen([sys.executable, "-m", "headingref.cli", "report", str(demo_copy / "scenario.toml"), "--out", str(out),
                             "--no-progress"], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 120
        while not _leftovers(tmp_path) and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.05)
        assert _leftovers(tmp_path), "the staging folder never appeared"
        proc.send_signal(signal.SIGTERM)
        code = proc.wait(timeout=120)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert code != 0
    assert _leftovers(tmp_path) == [] and not out.exists()


def test_survey_history_figure_draws_the_model_variation():
    # The grey curve of the compass-base figure is the main-field variation: ppigrf (IGRF-14
    # reference implementation) D = atan2(east, north) at the same place and dates, within 0.02 deg
    # (the two interpolate the coefficients in slightly different time conventions).
    import datetime as dt

    import matplotlib

    matplotlib.use("Agg")
    import ppigrf

    from headingref.compass_base import base_upkeep, make_site
    from headingref.plots.compass_base import plot_survey_history
    from headingref.units import timestamp_from_decimal_year

    site = make_site("Invented base $x$", 64.8, -147.6, "16.9E", "2020-06-01")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        upkeep = base_upkeep([site], "2026-12-02")
    fig = plot_survey_history(upkeep, [(site.name, site.survey_year, 16.9)], 2026.92)
    (ax,) = fig.axes
    assert ax.get_title() == "Invented base $x$" and not ax.title.get_parse_math()  # drawn as typed
    (model_line,) = [line for line in ax.get_lines() if line.get_label() == "model (main field)"]
    years, drawn = model_line.get_xdata(), model_line.get_ydata()
    for i in (0, len(years) // 2, len(years) - 1):
        when = timestamp_from_decimal_year(years[i]).to_pydatetime().replace(tzinfo=None)
        east, north, _ = ppigrf.igrf(-147.6, 64.8, 0.0, dt.datetime(when.year, when.month, when.day))
        expected = np.degrees(np.arctan2(np.ravel(east)[0], np.ravel(north)[0]))
        assert drawn[i] == pytest.approx(expected, abs=0.02)
