"""The hardening suite: hostile inputs a review tried, each kept as a case (issue 12).

Every case asserts the contract of DEVELOPERS.md ("Conventions"; headingref's own rule): a clear
one-line error naming the value and where it came from, status 2 from the CLI, no traceback, and
no output -- neither a partial file nor a temporary one -- left behind; or, where the input is
legitimate, the right result.

Outside sources named beside the checks: OWASP "CSV Injection" (cells starting = + - @ tab CR);
ECMA-48 (terminal control functions: ESC, CSI); POSIX rename(2) and open(2) O_EXCL; Python's
signal module documentation (SIGTERM's default action ends the process without unwinding);
matplotlib's "Writing mathematical expressions" guide (an even number of unescaped $ is mathtext);
Linux /dev/full (every write fails with ENOSPC).
"""

from __future__ import annotations

import contextlib
import io as _io
import os
import signal
import subprocess
import sys
import textwrap
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from test_cli import error_line, run  # the CLI run in-process, stdout and stderr captured

from headingref import io as hio
from headingref.cli import main
from headingref.errors import InputError

DATA = Path(__file__).parent / "data"
DEMO = Path(__file__).parents[1] / "data" / "demo"
DATE = "2026-12-02"
SWING = DEMO / "swing_readings.csv"
ROUTE = DATA / "route_arctic.csv"
RUNWAYS = DATA / "runways_demo.csv"
HAS_DEV_FULL = os.path.exists("/dev/full")


def leftovers(folder: Path) -> list[str]:
    """Temporary files or staging folders left in ``folder`` (all start with a dot)."""
    return sorted(p.name for p in folder.rglob("*") if p.name.startswith("."))


def write_route(path: Path, names: list[str]) -> Path:
    """A small invented route north of Norway with the given waypoint names (CSV-quoted)."""
    lats = [69.0, 71.0, 73.0, 75.0][: len(names)]
    frame = pd.DataFrame({"name": names, "lat": lats, "lon": [18.0, 20.0, 22.0, 24.0][: len(names)]})
    frame.to_csv(path, index=False)
    return path


# --------------------------------------------------------------------------- 3. temporary-file symlink hole


def test_a_planted_link_at_the_old_temporary_name_is_not_followed(tmp_path):
    # The old temporary name was predictable (.<stem>.tmp<PID><suffix>): a link planted there sent the
    # output into any file the user may write. Temporaries now come from mkstemp (O_CREAT|O_EXCL, a
    # random name; POSIX open(2)), so the planted link and the file it points to stay untouched.
    victim = tmp_path / "victim.txt"
    victim.write_text("precious\n")
    planted = tmp_path / f".legs.tmp{os.getpid()}.csv"
    planted.symlink_to(victim)
    hio.write_csv(tmp_path / "legs.csv", pd.DataFrame({"a": [1, 2]}))
    assert victim.read_text() == "precious\n"
    assert planted.is_symlink()
    assert pd.read_csv(tmp_path / "legs.csv")["a"].tolist() == [1, 2]
    assert leftovers(tmp_path) == [planted.name]


def test_a_target_that_is_a_symbolic_link_is_refused(tmp_path):
    # Writing through the link would let whoever made it choose the file overwritten; headingref
    # refuses (documented in headingref.io) and leaves the link and its file as they were.
    victim = tmp_path / "victim.txt"
    victim.write_text("precious\n")
    (tmp_path / "out.csv").symlink_to(victim)
    code, _, err = run(["field", "--lat", "60", "--lon", "10", "--date", DATE, "--output", tmp_path / "out.csv"])
    line = error_line(code, err, "field")
    assert "symbolic link" in line and "out.csv" in line
    assert victim.read_text() == "precious\n" and (tmp_path / "out.csv").is_symlink()
    assert leftovers(tmp_path) == []


def test_a_linked_figure_name_is_refused_before_any_output(tmp_path):
    # runways writes its table, then its figure: the link is refused before either is written.
    (tmp_path / "elsewhere.png").write_bytes(b"old")
    (tmp_path / "rw.png").symlink_to(tmp_path / "elsewhere.png")
    code, _, err = run(["runways", "--input", RUNWAYS, "--date", DATE, "--horizon", "1", "--output", tmp_path / "rw.csv",
                        "--plot", tmp_path / "rw.png"])
    assert "symbolic link" in error_line(code, err, "runways")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["elsewhere.png", "rw.png"]
    assert (tmp_path / "elsewhere.png").read_bytes() == b"old"


def test_outputs_get_the_usual_permissions_not_mkstemps_private_ones(tmp_path):
    # mkstemp creates files 0600; an output should be like any new file: 0666 less the umask.
    old = os.umask(0o022)
    try:
        hio.write_text(tmp_path / "a.txt", "x")
    finally:
        os.umask(old)
    assert (tmp_path / "a.txt").stat().st_mode & 0o777 == 0o644


def test_standard_output_by_name_is_still_written(capfd):
    # /dev/stdout is a link (to /proc/self/fd/1): a stream the user named, written directly.
    hio.write_text("/dev/stdout", "through the stream\n")
    assert "through the stream" in capfd.readouterr().out


# --------------------------------------------------------------------------- 5. several outputs: all or nothing


@pytest.mark.skipif(not HAS_DEV_FULL, reason="needs Linux /dev/full")
@pytest.mark.parametrize(
    "argv, files",
    [
        (["route", "--input", ROUTE, "--date", DATE, "--spacing", "100", "--output", "{d}/legs.csv",
          "--samples", "{d}/samples.csv", "--plot", "/dev/full"], ["legs.csv", "samples.csv"]),
        (["swing", "--input", SWING, "--output", "{d}/coef.csv", "--card", "{d}/card.csv", "--card-plot", "/dev/full"],
         ["coef.csv", "card.csv"]),
        (["zones", "--cap", "north", "--date", DATE, "--resolution", "3", "--geojson", "{d}/zones.geojson",
          "--netcdf", "/dev/full"], ["zones.geojson"]),
    ],
    ids=["route", "swing", "zones"],
)
def test_a_failing_last_output_leaves_the_earlier_ones_unchanged(tmp_path, argv, files):
    # /dev/full fails every write with ENOSPC (Linux): the last output fails after the others are
    # written. The old files must still be there, unchanged, and no new one may appear.
    for name in files[1:]:
        (tmp_path / name).write_text("old\n")
    code, _, err = run([str(a).replace("{d}", str(tmp_path)) for a in argv])
    line = error_line(code, err, argv[0])
    assert "/dev/full" in line and "No space left on device" in line
    assert not (tmp_path / files[0]).exists(), "a new output appeared although the run failed"
    for name in files[1:]:
        assert (tmp_path / name).read_text() == "old\n"
    assert leftovers(tmp_path) == []


def test_a_folder_refusing_the_second_output_leaves_nothing(tmp_path, monkeypatch):
    # As if the folder of --samples refused new files (EACCES; root ignores permissions, so the refusal
    # is simulated where the temporary file is created): one line, and --output is not written either.
    import tempfile

    real_mkstemp = tempfile.mkstemp

    def mkstemp(*args, **kwargs):
        if str(kwargs.get("prefix", "")).startswith(".samples"):
            raise PermissionError(13, "Permission denied")
        return real_mkstemp(*args, **kwargs)

    monkeypatch.setattr(tempfile, "mkstemp", mkstemp)
    code, _, err = run(["route", "--input", ROUTE, "--date", DATE, "--spacing", "100", "--output", tmp_path / "legs.csv",
                        "--samples", tmp_path / "samples.csv"])
    line = error_line(code, err, "route")
    assert "samples.csv" in line and "Permission denied" in line
    assert list(tmp_path.iterdir()) == []


def test_a_failed_rename_puts_the_earlier_outputs_back(tmp_path, monkeypatch):
    # The renames themselves can fail half-way (an immutable file, a folder made read-only): the
    # outputs already renamed are restored from their backups, so all change or none does.
    (tmp_path / "a.txt").write_text("old a")
    real_replace = os.replace

    def replace(src, dst):
        if Path(dst).name == "b.txt":
            raise PermissionError(1, "Operation not permitted")
        return real_replace(src, dst)

    monkeypatch.setattr(os, "replace", replace)
    with pytest.raises(InputError, match=r"cannot write .*b\.txt.*Operation not permitted; no output of this run was changed"):
        with hio.all_or_nothing():
            hio.write_text(tmp_path / "a.txt", "new a")
            hio.write_text(tmp_path / "b.txt", "new b")
    assert (tmp_path / "a.txt").read_text() == "old a"
    assert not (tmp_path / "b.txt").exists()
    assert leftovers(tmp_path) == []


def test_outputs_of_a_group_appear_only_at_its_end(tmp_path):
    with hio.all_or_nothing():
        hio.write_text(tmp_path / "a.txt", "a")
        assert not (tmp_path / "a.txt").exists()
        hio.write_text(tmp_path / "b.txt", "b")
    assert (tmp_path / "a.txt").read_text() == "a" and (tmp_path / "b.txt").read_text() == "b"
    assert leftovers(tmp_path) == []


# --------------------------------------------------------------------------- 6. SIGTERM cleans up as Ctrl-C does

SLOW_WRITE = textwrap.dedent(
    """
    import sys, time
    import headingref.io as io
    def slow(frame):  # stands for a long write: the temporary file exists while it sleeps
        print("writing", file=sys.stderr, flush=True)
        time.sleep(60)
    io.spreadsheet_safe = slow
    from headingref.cli import main
    sys.exit(main(sys.argv[1:]))
    """
)


def test_sigterm_mid_write_leaves_no_temporary_file(tmp_path):
    # Python's default SIGTERM action ends the process without running finally-blocks (signal module
    # documentation), which left '.name.*.tmp' files; the CLI turns SIGTERM into an exception.
    out = tmp_path / "out.csv"
    proc = subprocess.Popen(
        [sys.executable, "-c", SLOW_WRITE, "swing", "--input", str(SWING), "--output", str(out)],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=tmp_path,
    )
    try:
        deadline = time.monotonic() + 120
        line = ""
        while "writing" not in line and time.monotonic() < deadline:
            line = proc.stderr.readline()
            if not line and proc.poll() is not None:
                break
        assert "writing" in line, f"the write never started: {proc.stderr.read()}"
        assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".out.")], "no temporary file while writing"
        proc.send_signal(signal.SIGTERM)
        _, err = proc.communicate(timeout=60)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == 143, err  # 128 + SIGTERM (15), the shell convention
    assert "headingref: terminated" in err and "Traceback" not in err
    assert list(tmp_path.iterdir()) == []


def test_sigterm_during_a_report_removes_its_staging_folder(tmp_path):
    # The report is built in a '.headingref-report-*' folder beside --out and switched into place at
    # the end; SIGTERM while it is built must remove that folder as Ctrl-C does (same mechanism).
    proc = subprocess.Popen(
        [sys.executable, "-m", "headingref.cli", "report", str(DEMO / "scenario.toml"), "--out", str(tmp_path / "rep"),
         "--no-progress"],
        stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, cwd=tmp_path,
    )
    try:
        deadline = time.monotonic() + 120
        while not list(tmp_path.glob(".headingref-report-*")) and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.02)
        assert list(tmp_path.glob(".headingref-report-*")), "no staging folder seen"
        proc.send_signal(signal.SIGTERM)
        _, err = proc.communicate(timeout=60)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == 143, err
    assert "Traceback" not in err
    assert list(tmp_path.iterdir()) == [], "a staging folder or a partial report was left"


# --------------------------------------------------------------------------- 4. names drawn as math


@pytest.mark.parametrize("name", [r"$\foo{$", "Apron $2 pad $3"])
def test_route_plot_draws_dollar_names_as_typed(tmp_path, name):
    # matplotlib reads text between two unescaped $ as mathtext: '$\foo{$' stops the drawing and
    # 'Apron $2 pad $3' loses its dollars to italics. Names from users are drawn as typed.
    route_csv = write_route(tmp_path / "r.csv", ["FJELLVIK", name, "ISBRE"])
    code, _, err = run(["route", "--input", route_csv, "--date", DATE, "--spacing", "100", "--output", tmp_path / "legs.csv",
                        "--plot", tmp_path / "map.png", "--profile", tmp_path / "profile.png"])
    assert code == 0, err
    assert (tmp_path / "map.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert (tmp_path / "profile.png").stat().st_size > 1000


def test_route_figure_texts_keep_their_dollars(tmp_path):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.text import Text

    from headingref.plots.route import plot_route_map
    from headingref.routes import route

    result = route(write_route(tmp_path / "r.csv", ["A", "Apron $2 pad $3", "B"]), DATE, spacing_nm=100)
    fig = plot_route_map(result, mesh=20)
    texts = [t for t in fig.findobj(Text) if t.get_text() == "Apron $2 pad $3"]
    assert texts and not any(t.get_parse_math() for t in texts)
    plt.close(fig)


def test_runways_plot_with_a_mathtext_airport_name(tmp_path):
    table = pd.read_csv(RUNWAYS, dtype=str).iloc[:2].copy()
    table["airport"] = r"$\foo{$"
    table.to_csv(tmp_path / "rw.csv", index=False)
    code, _, err = run(["runways", "--input", tmp_path / "rw.csv", "--date", DATE, "--horizon", "1",
                        "--plot", tmp_path / "rw.png"])
    assert code == 0, err
    assert (tmp_path / "rw.png").stat().st_size > 1000


SMALL_SCENARIO = """\
title = "Dollar names"
operator = "Invented operator"
analysis_date = "2026-12-02"

[routes]
spacing_nm = 100.0

[[routes.plan]]
name = "Apron $2 pad $3 ferry"
file = "r.csv"

[compass_bases]
file = "compass_bases.csv"

[swing]
file = "swing_readings.csv"
base = "$\\\\foo{$ base"

[runways]
file = "runways.csv"
horizon_years = 1.0
"""


def test_report_with_dollar_names_in_every_drawn_section(tmp_path):
    # A base, an airport and waypoints named as mathtext: every section of the report is still made.
    for name in ("compass_bases.csv", "swing_readings.csv", "runways.csv"):
        (tmp_path / name).write_text((DEMO / name).read_text(encoding="utf-8"), encoding="utf-8")
    bases = pd.read_csv(tmp_path / "compass_bases.csv", dtype=str)
    bases.loc[bases["name"] == bases["name"].iloc[0], "name"] = r"$\foo{$ base"
    bases.to_csv(tmp_path / "compass_bases.csv", index=False)
    runways = pd.read_csv(tmp_path / "runways.csv", dtype=str)
    runways.loc[runways["airport"] == runways["airport"].iloc[0], "airport"] = r"$\foo{$ field"
    runways.to_csv(tmp_path / "runways.csv", index=False)
    write_route(tmp_path / "r.csv", ["A", "Apron $2 pad $3", r"$\foo{$"])
    (tmp_path / "s.toml").write_text(SMALL_SCENARIO, encoding="utf-8")
    code, _, err = run(["report", tmp_path / "s.toml", "--out", tmp_path / "out", "--no-progress"])
    assert code == 0, err
    assert "not made" not in err and "could not" not in err and "ValueError" not in err, err
    html = (tmp_path / "out" / "report.html").read_text(encoding="utf-8")
    assert r"$\foo{$ base" in html and "Apron $2 pad $3" in html


# --------------------------------------------------------------------------- 8. empty option values


@pytest.mark.parametrize(
    "argv, option",
    [
        (["field", "--lat", "60", "--lon", "10", "--date", ""], "--date"),
        (["field", "--lat", "60", "--lon", "10", "--date", DATE, "--output", "  "], "--output"),
        (["route", "--input", ROUTE, "--date", DATE, "--output", ""], "--output"),
        (["report", DEMO / "scenario.toml", "--out", ""], "--out"),
        (["swing", "--input", ""], "--input"),
    ],
)
def test_an_empty_option_value_is_refused(tmp_path, monkeypatch, argv, option):
    # '--date ""' used to mean today and '--out ""' the current folder: silently not what was typed.
    monkeypatch.chdir(tmp_path)
    code, _, err = run(argv)
    line = error_line(code, err, argv[0])
    assert f"{option} is empty" in line
    assert list(tmp_path.iterdir()) == []


# --------------------------------------------------------------------------- 9. lenient numbers


@pytest.mark.parametrize("text", ["6_1", "٦١", "６１", "9_1.5", "nan", "inf", "-inf", "0x3d", "1e999", "", "6 1", "١.٥"])
def test_parse_number_accepts_only_plain_ascii_decimal(text):
    # Python's float() takes '6_1' (PEP 515 digit grouping) as 61 and any Unicode decimal digit
    # (Arabic-Indic U+0660.., full-width U+FF10..) as its ASCII value; headingref refuses them.
    from headingref.units import parse_number

    with pytest.raises(InputError, match="plain decimal number"):
        parse_number(text, "lat")


@pytest.mark.parametrize("text, value", [("61", 61.0), (" -3.5 ", -3.5), ("+.5", 0.5), ("1.2e3", 1200.0), ("−4", -4.0)])
def test_parse_number_reads_plain_numbers(text, value):
    from headingref.units import parse_number

    assert parse_number(text) == value  # exact: these decimals are exact in binary or integral


@pytest.mark.parametrize(
    "argv",
    [
        ["swing", "--input", SWING, "--max-deviation", "nan"],
        ["swing", "--input", SWING, "--limit", "1_0"],
        ["route", "--input", ROUTE, "--date", DATE, "--output", "legs.csv", "--spacing", "６"],
        ["runways", "--input", RUNWAYS, "--date", DATE, "--horizon", "٣"],
        ["field", "--lat", "6_1", "--lon", "10", "--date", DATE],
        ["field", "--lat", "61", "--lon", "10", "--date", "2026_5"],
        ["zones", "--cap", "north", "--date", DATE, "--resolution", "5", "--thresholds", "2_000,6000"],
        ["poles", "--years", "2_020:2022"],
        ["route", "--input", ROUTE, "--date", DATE, "--output", "legs.csv", "--grid", "polar:4_5"],
        ["route", "--input", ROUTE, "--date", DATE, "--output", "legs.csv", "--grid", "utm:\u0663\u0663N"],
    ],
)
def test_lenient_numbers_in_options_are_refused(tmp_path, monkeypatch, argv):
    # '--max-deviation nan' switched the plausibility check off (every comparison with NaN is false).
    monkeypatch.chdir(tmp_path)
    code, _, err = run(argv)
    error_line(code, err, argv[0])
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("text", ["\u0664\u0665", "\uff14\uff15", "4_5"])
def test_headings_take_ascii_digits_only(text):
    # Arabic-Indic (U+0664 U+0665) and full-width (U+FF14 U+FF15) '45' were read as 045.
    from headingref.headings import parse_heading

    with pytest.raises(InputError, match="heading .* is not understood"):
        parse_heading(text)


@pytest.mark.parametrize("cell", ["٦٩.٠", "6_9", "６９"])
def test_lenient_numbers_in_a_route_csv_name_the_line(tmp_path, cell):
    (tmp_path / "r.csv").write_text(f"name,lat,lon\nA,69.0,18.0\nB,{cell},20.0\n", encoding="utf-8")
    code, _, err = run(["route", "--input", tmp_path / "r.csv", "--date", DATE, "--output", tmp_path / "legs.csv"])
    line = error_line(code, err, "route")
    assert "line 3" in line
    assert not (tmp_path / "legs.csv").exists()


def test_places_csv_number_with_underscore_is_refused():
    from headingref.io import float_column

    table = pd.DataFrame({"alt": ["1", "2_0"]}, index=pd.Index([2, 3], name="line"))
    table.attrs["source"] = "places.csv"
    with pytest.raises(InputError, match=r"places\.csv line 3: alt '2_0' is not a number"):
        float_column(table, "alt")


# --------------------------------------------------------------------------- 10. spreadsheet formulas, terminal controls


def test_formula_names_are_neutralised_in_csv_outputs(tmp_path):
    # OWASP "CSV Injection": a cell starting with = + - @ (or tab, CR) runs as a formula in a
    # spreadsheet; a leading apostrophe makes it text. Negative numbers stay numbers.
    names = ["=cmd|' /C calc'!A0", "+SUM(A1)", "@HYPERLINK(1)", "-2+3"]
    route_csv = write_route(tmp_path / "r.csv", names)
    code, _, err = run(["route", "--input", route_csv, "--date", DATE, "--spacing", "100", "--output", tmp_path / "legs.csv"])
    assert code == 0, err
    legs = pd.read_csv(tmp_path / "legs.csv")
    assert legs["from"].tolist() == ["'" + n for n in names[:3]]
    assert legs["to"].tolist() == ["'" + n for n in names[1:]]
    # the variation north of Norway in 2026 is a few degrees east (IGRF-14; ~+10 to +20 deg there,
    # from memory): the column is numeric, not text, and the longitudes read back as numbers
    assert legs["variation_deg"].dtype.kind == "f"
    assert np.allclose(legs["from_lon_deg"].to_numpy(), [18.0, 20.0, 22.0])


def test_spreadsheet_safe_leaves_numbers_and_plain_number_text():
    frame = pd.DataFrame({"n": [-1.5, 2.0], "t": ["-12.5", "=1+1"], "c": pd.Categorical(["@a", "ok"])})
    safe = hio.spreadsheet_safe(frame)
    assert safe["n"].tolist() == [-1.5, 2.0]
    assert safe["t"].tolist() == ["-12.5", "'=1+1"]
    assert safe["c"].tolist() == ["'@a", "ok"]
    assert frame["t"].tolist() == ["-12.5", "=1+1"]  # the caller's frame is not changed


class Terminal(_io.StringIO):
    """A captured stream that says it is a terminal (as sys.stdout does on a console)."""

    def isatty(self) -> bool:
        return True


def test_control_characters_in_names_do_not_reach_the_terminal(tmp_path):
    # ECMA-48: ESC [ 2 J clears the screen; ESC ] 0 ; ... BEL retitles the window. On a terminal they
    # are dropped; redirected to a file the output is data and kept as it is.
    route_csv = write_route(tmp_path / "r.csv", ["A\x1b[2J", "B\x1b]0;owned\x07", "C"])
    argv = ["route", "--input", route_csv, "--date", DATE, "--spacing", "100", "--output", tmp_path / "legs.csv"]
    out, err = Terminal(), Terminal()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err), warnings.catch_warnings():
        code = main([str(a) for a in argv])
    assert code == 0, err.getvalue()
    assert "\x1b" not in out.getvalue() and "\x07" not in out.getvalue() and "\x1b" not in err.getvalue()
    assert "A[2J" in out.getvalue()  # the printable rest of the name is still shown
    code, piped, _ = run(argv)  # not a terminal (a StringIO, as a file or pipe)
    assert code == 0 and "A\x1b[2J" in piped


# --------------------------------------------------------------------------- 11. full disks, deep TOML


@pytest.mark.skipif(not HAS_DEV_FULL, reason="needs Linux /dev/full")
def test_a_figure_to_dev_full_is_an_error_not_a_success():
    code, _, err = run(["swing", "--input", SWING, "--plot", "/dev/full"])
    line = error_line(code, err, "swing")
    assert "No space left on device" in line


@pytest.mark.skipif(not HAS_DEV_FULL, reason="needs Linux /dev/full")
def test_printing_to_a_full_disk_is_one_line(tmp_path):
    with open("/dev/full", "w") as full:
        proc = subprocess.run(
            [sys.executable, "-m", "headingref.cli", "field", "--lat", "60", "--lon", "10", "--date", DATE, "--csv"],
            stdout=full, stderr=subprocess.PIPE, text=True, cwd=tmp_path, timeout=300,
        )
    assert proc.returncode == 2, proc.stderr
    lines = [x for x in proc.stderr.splitlines() if x.strip() and not x.startswith("headingref: warning:")]
    assert len(lines) == 1 and lines[0].startswith("headingref field: error: ") and "No space left on device" in lines[0], lines
    assert "Traceback" not in proc.stderr and "Exception ignored" not in proc.stderr


def test_deeply_nested_toml_is_one_line(tmp_path):
    from headingref.scenario import load_scenario

    (tmp_path / "deep.toml").write_text("x = " + "[" * 5000 + "]" * 5000 + "\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"^scenario deep\.toml: .*nested too deeply"):
        load_scenario(tmp_path / "deep.toml")


# --------------------------------------------------------------------------- 12. scale (behaviour only)


def test_duplicate_column_check_names_the_duplicate_in_a_wide_header(tmp_path):
    # 100,000 columns: the check is linear now (it was quadratic: 95 s); this asserts what it finds.
    header = [f"c{i}" for i in range(100_000)] + ["c77"]
    (tmp_path / "wide.csv").write_text(",".join(header) + "\n" + ",".join("1" * len(header)) + "\n")
    with pytest.raises(InputError, match=r"column\(s\) c77 appear more than once"):
        hio.read_table(tmp_path / "wide.csv", required=["c0"])


def test_route_profile_decimation_keeps_the_extremes():
    # Min/max decimation (common practice for plotting long series): at most about the limit of
    # points drawn, and the least H along the route is still on the drawn line.
    from headingref.plots.route import _decimate, _evenly

    rng = np.random.default_rng(1)
    x = np.cumsum(rng.uniform(0.1, 2.0, 200_000))
    y = 6000.0 + np.cumsum(rng.normal(0.0, 5.0, x.size))
    dx, dy = _decimate(x, y, 4000)
    assert len(dx) <= 4002
    assert dy.min() == y.min() and dy.max() == y.max()
    assert dx[0] == x[0] and dx[-1] == x[-1] and np.all(np.diff(dx) > 0)
    picked = _evenly(10_001, 40)
    assert len(picked) == 40 and picked[0] == 0 and picked[-1] == 10_000


# --------------------------------------------------------------------------- 7. library arguments of the wrong type


def test_check_runways_of_a_list_names_the_argument():
    from headingref import check_runways

    with pytest.raises(InputError, match=r"check_runways: table of type list"):
        check_runways([1, 2, 3], DATE)


def test_load_scenario_of_a_number_names_the_argument():
    from headingref.scenario import load_scenario

    with pytest.raises(InputError, match=r"load_scenario: path 5 of type int"):
        load_scenario(5)
