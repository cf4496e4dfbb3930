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
SECTIONS = ("summary", "caution", "routes", "zones", "error-budget", "compass-bases", "swing", "runways", "navaids",
            "model-comparison")


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


# --------------------------------------------------------------------------- new sections (issues 11, 14, 16, 17)
def _section_html(page: str, key: str) -> str:
    start = page.index(f'<section id="{key}"')
    return page[start:page.index("</section>", start)]


def _ppigrf_declination(lat: float, lon: float, when, alt_km: float = 0.0) -> float:
    # ppigrf (IGRF-14 reference implementation): D = atan2(east, north), geodetic height in km
    import datetime as dt

    import ppigrf

    when = pd.Timestamp(when).to_pydatetime().replace(tzinfo=None)
    east, north, _ = ppigrf.igrf(lon, lat, alt_km, dt.datetime(when.year, when.month, when.day))
    return float(np.degrees(np.arctan2(np.ravel(east)[0], np.ravel(north)[0])))


def test_navaid_section_against_ppigrf(demo):
    result, page = demo
    table = pd.read_csv(result.out_dir / "navaids.csv", keep_default_na=False)
    stations = pd.read_csv(DEMO / "navaids.csv")
    assert list(table["ident"]) == list(stations["ident"])
    tolerance = load_scenario(DEMO_SCENARIO).navaids["tolerance_deg"]
    exceeding = []
    for (_, row), (_, given) in zip(table.iterrows(), stations.iterrows(), strict=True):
        alt_km = float(given.elevation.split()[0]) * (0.3048 if given.elevation.endswith("ft") else 1.0) / 1000.0
        variation = _ppigrf_declination(given.lat, given.lon, "2026-12-02", alt_km)
        # ppigrf and headingref interpolate the coefficients in slightly different time conventions
        assert float(row.variation_deg) == pytest.approx(variation, abs=0.02)
        declination = float(given.station_declination_deg[:-1]) * (1 if given.station_declination_deg.endswith("E") else -1)
        assert float(row.difference_deg) == pytest.approx(variation - declination, abs=0.02)
        if abs(variation - declination) > tolerance:
            exceeding.append(given.ident)
        elif row.realign_date:
            # the tolerance is crossed around the realign date: ppigrf a week either side
            day = pd.Timestamp(row.realign_date)
            before = _ppigrf_declination(given.lat, given.lon, day - pd.Timedelta(days=7), alt_km) - declination
            after = _ppigrf_declination(given.lat, given.lon, day + pd.Timedelta(days=7), alt_km) - declination
            assert abs(before) < tolerance < abs(after)
    assert sorted(exceeding) == ["QNL", "QTL"]  # data/demo/README.md: QTL (aligned 2009) and QNL exceed
    (head, *_) = [s for s in result.summary["navaids"] if s.startswith("VOR station declination")]
    assert f"{len(exceeding)} of {len(stations)} navaids exceed the tolerance of ±{tolerance:g}°" in head
    section = _section_html(page, "navaids")
    bad_rows = re.findall(r'<tr class="bad"><td>([^<]+)</td>', section)
    assert sorted(bad_rows) == ["QNL", "QTL"]  # exceeding rows highlighted
    assert 'src="data:image/png;base64,' in section and 'href="navaids.csv"' in section


def test_runway_pairs_last_fit_and_changes_against_ppigrf(demo):
    result, page = demo
    inputs = pd.read_csv(DEMO / "runways.csv", dtype={"runway": str}).set_index(["airport", "runway"])
    geod = Geodesic.WGS84

    def designator_on(airport, end, when):
        given = inputs.loc[(airport, end)]
        # true azimuth of the centre line at its midpoint (geographiclib), variation there (ppigrf)
        line = geod.InverseLine(given.lat, given.lon, given.end_lat, given.end_lon)
        mid = line.Position(line.s13 / 2.0)
        return _designator(mid["azi2"] - _ppigrf_declination(mid["lat2"], mid["lon2"], when))

    table = pd.read_csv(result.out_dir / "runways.csv", dtype=str, keep_default_na=False)
    row = table[(table.airport == "JXTB") & (table.runway == "13")].iloc[0]
    last = pd.Timestamp(row.last_fit_date)
    # stale since the last fit date: 13 fitted a month before it, 14 a month after (ppigrf)
    assert designator_on("JXTB", "13", last - pd.Timedelta(days=30)) == "13"
    assert designator_on("JXTB", "13", last + pd.Timedelta(days=30)) == "14"
    # never fitted: JXQR 34 is not the designator on any 1 January from 1900 to 2026 (ppigrf)
    assert table[(table.airport == "JXQR") & (table.runway == "34")].iloc[0].last_fit_date == "not since 1900-01-01"
    import datetime as dt

    import ppigrf

    given = inputs.loc[("JXQR", "34")]
    line = geod.InverseLine(given.lat, given.lon, given.end_lat, given.end_lon)
    mid = line.Position(line.s13 / 2.0)
    east, north, _ = ppigrf.igrf(mid["lon2"], mid["lat2"], 0.0, [dt.datetime(y, 1, 1) for y in range(1900, 2027)])
    declination = np.degrees(np.arctan2(np.ravel(east), np.ravel(north)))
    assert len(declination) == 127 and all(_designator(mid["azi2"] - d) != "34" for d in declination)
    summary: dict[str, str] = {}
    for line in result.summary["runways"]:
        summary[line.split(":")[0]] = summary.get(line.split(":")[0], "") + line
    assert f"stale since {row.last_fit_date}" in summary["JXTB 13/31"]
    assert "never fitted since 1900-01-01" in summary["JXQR 34/16"]
    # every change within the horizon: both ends on one day, reciprocal designators (ppigrf 10 days either side)
    changes = pd.read_csv(result.out_dir / "runway_changes.csv", dtype=str)
    section = _section_html(page, "runways")
    for (airport, _runway_id), rows in changes.groupby(["airport", "runway_id"]):
        assert rows.change_date.nunique() == 1
        day = pd.Timestamp(rows.change_date.iloc[0])
        for end, after in zip(rows.runway, rows.next_designator, strict=True):
            assert designator_on(airport, end, day - pd.Timedelta(days=10)) == end
            assert designator_on(airport, end, day + pd.Timedelta(days=10)) == after
        assert f"{'/'.join(rows.designator_before)} → {'/'.join(rows.next_designator)}" in section
    # the verdict categories in words, from the margin to the nearest boundary (geographiclib and ppigrf);
    # margins within 0.025 deg of 0 or of the band are left out: there the two field codes may disagree
    band = load_scenario(DEMO_SCENARIO).runways["boundary_band_deg"]
    words = 0
    for airport, runway_id in table[["airport", "runway_id"]].drop_duplicates().itertuples(index=False):
        end = runway_id.split("/")[0]
        given = inputs.loc[(airport, end)]
        line = geod.InverseLine(given.lat, given.lon, given.end_lat, given.end_lon)
        mid = line.Position(line.s13 / 2.0)
        magnetic = mid["azi2"] - _ppigrf_declination(mid["lat2"], mid["lon2"], "2026-12-02")
        margin = abs(magnetic % 10.0 - 5.0)
        if margin < 0.025 or abs(margin - band) < 0.025 or margin > band:
            continue
        fits = _designator(magnetic) == end.rstrip("LCR")
        expected = "still fits, near a boundary" if fits else "no longer fits, but within the band"
        assert expected in summary[f"{airport} {runway_id}"]
        words += 1
    assert words >= 1  # JXRH 25/07 sits 0.25-0.27 deg inside its boundary (data/demo/README.md)
    assert "Designator changes within the horizon" in section and "One decision per runway" in section


def test_model_comparison_against_pygeomag(demo):
    from pygeomag import GeoMag

    result, page = demo
    long = pd.read_csv(result.out_dir / "model_comparison.csv", keep_default_na=False)
    assert set(long.model) == {"IGRF-14", "WMM2025", "WMMHR2025"}
    fixed = long[long.kind.isin(["compass base", "runway"])]
    assert len(fixed) >= 3 * 10
    cof = {"WMM2025": ("wmm/WMM_2025.COF", False), "WMMHR2025": ("wmm/WMMHR_2025.COF", True)}
    geomag = {name: GeoMag(coefficients_file=file, high_resolution=high) for name, (file, high) in cof.items()}
    for _, row in fixed[fixed.model != "IGRF-14"].iterrows():
        # pygeomag 1.1 (NOAA's WMM2025 / WMMHR2025 coefficient files, its own synthesis)
        got = geomag[row.model].calculate(glat=row.lat_deg, glon=row.lon_deg, alt=row.alt_km, time=row.decimal_year)
        assert row.declination_deg == pytest.approx(got.d, abs=2e-3)
    # which runway designators depend on the model: recomputed with geographiclib and pygeomag
    inputs = pd.read_csv(DEMO / "runways.csv", dtype={"runway": str})
    geod = Geodesic.WGS84
    depends = set()
    for _, given in inputs.iterrows():
        line = geod.InverseLine(given.lat, given.lon, given.end_lat, given.end_lon)
        mid = line.Position(line.s13 / 2.0)
        implied = {_designator(mid["azi2"] - _ppigrf_declination(mid["lat2"], mid["lon2"], "2026-12-02"))}
        for model in geomag.values():
            implied.add(_designator(mid["azi2"] - model.calculate(glat=mid["lat2"], glon=mid["lon2"], alt=0.0, time=2026.92).d))
        margin = abs((mid["azi2"] - _ppigrf_declination(mid["lat2"], mid["lon2"], "2026-12-02")) % 10.0 - 5.0)
        if len(implied) > 1 and margin > 0.02:  # the pair's mean azimuth may differ by survey noise
            depends.add(given.airport)
    listed = {s.split()[0] for s in result.summary["models"] if "depends on the model" in s}
    assert listed == depends and "JXRH" in depends
    section = _section_html(page, "model-comparison")
    assert "Runway designators by model" in section and "Difference map" in section
    assert 'src="data:image/png;base64,' in section


def test_swing_section_both_verdicts_card_and_overdue_base(demo):
    result, page = demo
    readings = pd.read_csv(DEMO / "swing_readings.csv")
    h = np.radians(readings.magnetic_heading_deg.to_numpy())
    deviation = ((readings.magnetic_heading_deg - readings.compass_reading_deg + 180.0) % 360.0 - 180.0).to_numpy()
    # the five-term curve by numpy's least squares (NGA Handbook of Magnetic Compass Adjustment, ch. V);
    # after compensation the B and C terms are removed from each reading
    basis = np.column_stack([np.ones_like(h), np.sin(h), np.cos(h), np.sin(2 * h), np.cos(2 * h)])
    a, b, c, d, e = np.linalg.lstsq(basis, deviation, rcond=None)[0]
    residual = deviation - b * np.sin(h) - c * np.cos(h)
    section = _section_html(page, "swing")
    assert f"deviation as measured: largest {np.abs(deviation).max():.1f}°" in section
    assert f"after compensation (B and C removed; A, D, E kept): largest {np.abs(residual).max():.1f}°" in section
    assert "verdict (as measured): PASS" in section  # 8.2 < 10 deg (14 CFR 23.1327)
    assert "Correction card (as swung)" in section and f"A {a:+.1f}°, B {b:+.1f}°" in section
    # the demo base's latest survey is 2021-06-22 with a 5-year interval: overdue on the swing date 2027-03-15
    assert any("OVERDUE" in s for s in result.summary["swing"])
    assert "Warning: base OVERDUE" in section
    card = (result.out_dir / "swing_card.html").read_text(encoding="utf-8")
    assert "TM-QXZ (invented registration)" in card and "Signature" in card and "OVERDUE" in card
    assert 'href="swing_card.html"' in section


def test_swing_section_methods_differ_and_predicted_card(tmp_path):
    # readings on the eight principal headings with a third harmonic (3 deg sin 3h) that the five-term
    # curve leaves out: the handbook's B = (E - W)/2 (NGA Handbook art. 501) then differs from least
    # squares, B_handbook - B_lsq = -3 sin(270) / 2 ... computed here by hand
    headings = np.arange(0.0, 360.0, 45.0)
    rad = np.radians(headings)
    deviation = 1.0 + 4.0 * np.sin(rad) + 3.0 * np.sin(3 * rad)
    pd.DataFrame({"magnetic_heading_deg": headings, "compass_reading_deg": np.round(headings - deviation, 3)}).to_csv(
        tmp_path / "sw.csv", index=False)
    path = _scenario(tmp_path, '[swing]\nfile = "sw.csv"\ncard_after_compensation = true\naircraft = "<i>X</i>"\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = build_report(path, tmp_path / "out", progress=False)
    page = result.html.read_text(encoding="utf-8")
    section = _section_html(page, "swing")
    assert "Least squares and the handbook formulas differ" in section
    b_handbook = (deviation[2] - deviation[6]) / 2.0  # (E - W)/2
    basis = np.column_stack([np.ones_like(rad), np.sin(rad), np.cos(rad), np.sin(2 * rad), np.cos(2 * rad)])
    b_lsq = np.linalg.lstsq(basis, deviation, rcond=None)[0][1]
    assert abs(b_handbook - b_lsq) > 0.5
    assert f"{b_handbook - b_lsq:.1f}" in section
    assert "Correction card after compensation (a prediction)" in section and "prediction until a check swing" in section
    assert "&lt;i&gt;X&lt;/i&gt;" in page and "<i>X</i>" not in page
    card = (result.out_dir / "swing_card.html").read_text(encoding="utf-8")
    assert "&lt;i&gt;X&lt;/i&gt;" in card and "<i>X</i>" not in card


def test_setting_out_table_uses_the_marked_variation(demo):
    result, page = demo
    lines = pd.read_csv(result.out_dir / "setting_out.csv", keep_default_na=False)
    bases = pd.read_csv(result.out_dir / "compass_bases.csv")
    geod = Geodesic.WGS84
    for _, base in bases.iterrows():
        mine = lines[lines.name == base["name"]]
        marked = float(base.variation_to_mark_deg)
        assert (mine.variation_used.str.startswith("marked ")).all()
        for _, row in mine.iterrows():
            true_az = (row.magnetic_heading_deg + marked) % 360.0
            assert row.true_azimuth_deg == pytest.approx(true_az, abs=1e-9)
            # the point: geographiclib's direct geodesic from the centre (Karney 2013)
            point = geod.Direct(base.lat_deg, base.lon_deg, true_az, row.distance_m)
            assert row.lat_deg == pytest.approx(point["lat2"], abs=1e-8)
            assert row.lon_deg == pytest.approx(point["lon2"], abs=1e-8)
            # east/north in the local tangent plane: s sin(az), s cos(az) within 1 cm at 100 m
            az = np.radians(true_az)
            assert row.east_m == pytest.approx(row.distance_m * np.sin(az), abs=0.01)
            assert row.north_m == pytest.approx(row.distance_m * np.cos(az), abs=0.01)
        # UTM zone from the 6-degree rule with the Svalbard exception (NGA.SIG.0012, from memory)
        lon = base.lon_deg
        zone = (33 if 9 <= lon < 21 else 31) if base.lat_deg >= 72 and 0 <= lon < 42 else int((lon + 180) // 6) + 1
        assert set(mine.utm_zone) == {f"{zone}N"}
    section = _section_html(page, "compass-bases")
    assert "variation marked on the base" in section and "UTM" in section and "east of centre m" in section


def test_error_budget_says_when_slaving_is_cut_out(demo, tmp_path):
    result, page = demo
    section = _section_html(page, "error-budget")
    areas = pd.read_csv(result.out_dir / "error_budget_areas.csv")
    # the demo's 8 deg turn is below the 10 deg cut-out (common practice, from memory): slaving on, and the
    # drift of the tilt error adds to the budget, so more of the cap exceeds the limit than in steady flight
    assert list(areas.slaving) == ["on", "on"]
    assert areas.area_exceeding_limit_km2.iloc[1] > areas.area_exceeding_limit_km2.iloc[0]
    assert "at or below the slaving cut-out" in section and "cut out above" not in section
    # a 25 deg turn above the cut-out: slaving off, the turn's budget is the steady one and the text says so
    path = _scenario(tmp_path, "[zones]\nstep_deg = 2.0\n[error_budget]\nbank_angle_deg = 25.0\nslaving_cutout_bank_deg = 10.0\n")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        other = build_report(path, tmp_path / "out", progress=False)
    text = _section_html(other.html.read_text(encoding="utf-8"), "error-budget")
    areas = pd.read_csv(other.out_dir / "error_budget_areas.csv")
    assert list(areas.slaving) == ["on", "cut out"]
    assert areas.area_exceeding_limit_km2.iloc[1] == pytest.approx(areas.area_exceeding_limit_km2.iloc[0], rel=1e-12)
    assert "above the slaving cut-out" in text and "slaving stays on" not in text and "slaving on at" not in text


def test_flagged_declination_shows_the_flag_not_numbers(tmp_path):
    # A route through the north dip pole: there H < 100 nT and the report shows headingref.field's
    # flag ("no usable declination") instead of an uncertainty of thousands of degrees.
    import ppigrf

    from headingref.poles import dip_poles

    pole = dip_poles("2026-12-02").set_index("pole").loc["north"]
    lat, lon = float(pole.lat) - 0.05, float(pole.lon)  # 5.5 km from the pole: H defined but tiny
    east, north, _ = ppigrf.igrf(lon, lat, 0.0, pd.Timestamp("2026-12-02").to_pydatetime())
    assert 1.0 < np.hypot(np.ravel(east)[0], np.ravel(north)[0]) < 100.0  # ppigrf: H below 100 nT at that point
    pd.DataFrame({"name": ["XA", "XB", "XC"], "lat": [lat - 1.0, lat, lat - 1.0], "lon": [lon, lon, lon + 20.0]}).to_csv(
        tmp_path / "r.csv", index=False)
    path = _scenario(tmp_path, 'compare_models = ["IGRF-14", "WMM2025"]\n[routes]\nspacing_nm = 5\n'
                     '[[routes.plan]]\nname = "Through the pole"\nfile = "r.csv"\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = build_report(path, tmp_path / "out", progress=False)
    assert not result.failed
    page = result.html.read_text(encoding="utf-8")
    routes = _section_html(page, "routes")
    assert "no usable declination: H below 100 nT" in routes
    cells = re.findall(r'<td class="num">([^<]+)</td>', routes)
    assert all(abs(float(c.replace(",", ""))) < 1000 for c in cells if re.fullmatch(r"-?[\d,]+\.\d", c)), cells
    # no heading at all: the uncertainty and the budget (180 degrees or more) are blank, the flag says why
    table = routes[routes.index("<table>"):routes.index("</table>")]
    headers = re.findall(r"<th>([^<]*)</th>", table)
    for row in re.findall(r"<tr[^>]*>(<td.*?)</tr>", table):
        values = dict(zip(headers, re.findall(r"<td[^>]*>([^<]*)</td>", row), strict=True))
        assert values["max D uncertainty °"] == values["max budget (steady) °"] == ""
        assert values["declination flagged"].startswith("no usable declination")
    compare = _section_html(page, "model-comparison")
    assert "no usable declination" in compare


def test_navaid_ident_and_card_text_are_escaped(tmp_path):
    (tmp_path / "v.csv").write_text("ident,lat,lon,station_declination_deg\n<b>Q&amp;</b>,64.8,-147.6,20E\n", encoding="utf-8")
    path = _scenario(tmp_path, '[navaids]\nfile = "v.csv"\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = build_report(path, tmp_path / "out", progress=False)
    page = result.html.read_text(encoding="utf-8")
    assert "<b>Q" not in page and "&lt;b&gt;Q&amp;amp;&lt;/b&gt;" in page
    assert any(s.startswith("<b>Q&amp;</b>: ") for s in result.summary["navaids"])  # plain text in the summary
