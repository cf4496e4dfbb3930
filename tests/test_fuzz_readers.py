"""Fuzzing every reader of user files: bad bytes, encodings, separators, numbers and columns.

Readers covered: the places CSV of ``headingref field --input``, route waypoints
(:func:`headingref.routes.read_waypoints`), runway tables (:func:`headingref.runways.check_runways`),
compass base sites (:func:`headingref.compass_base.read_sites_csv`), swing readings
(:func:`headingref.swing.read_swing_csv`), the scenario TOML (:func:`headingref.scenario.load_scenario`)
and coefficient files (:func:`headingref.model.load_model`, SHC and WMM .COF).

The contract checked (DEVELOPERS.md, "Conventions"; headingref's own rule, common practice for a
command-line tool): every input either works, or ends in one :class:`~headingref.errors.HeadingrefError`
whose message is a single line (naming the file, and the line where there is one), or in a handled
:class:`~headingref.errors.HeadingrefWarning`. Never another exception, never a foreign warning (a
numpy ``RuntimeWarning`` means a silent NaN or overflow), and from the CLI: exit status 2, one error
line on stderr, no ``Traceback`` and no output file left behind.

The valid starting files are invented (demo data in tests/data and data/demo; pygeomag's WMM2025
.COF and ppigrf's IGRF-14 .shc for the coefficient files).
"""

from __future__ import annotations

import contextlib
import io as _io
import random
import re
import warnings
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from headingref.cli import main
from headingref.errors import HeadingrefError, HeadingrefWarning, InputError, ModelFileError
from headingref.model import default_coefficient_file, load_model

DATA = Path(__file__).parent / "data"
DEMO = Path(__file__).parents[1] / "data" / "demo"
TODAY = "2026-12-02"  # a fixed 'today' so that survey dates are never in the future


def _wmm_cof() -> Path:
    import pygeomag

    return Path(pygeomag.__file__).parent / "wmm" / "WMM_2025.COF"


FUZZ = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


# --------------------------------------------------------------------------- the contract


def outcome(call: Callable[[], object]) -> tuple[str, str]:
    """Run ``call``; return ('ok', '') or ('error', message). Anything else fails the test.

    Only HeadingrefError may escape, with a one-line message; only HeadingrefWarning may be issued.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            call()
            result = ("ok", "")
        except HeadingrefError as exc:
            message = str(exc)
            assert message.strip(), "empty error message"
            assert "\n" not in message, f"multi-line error message: {message!r}"
            result = ("error", message)
    foreign = [f"{w.category.__name__}: {w.message}" for w in caught if not issubclass(w.category, HeadingrefWarning)]
    assert not foreign, f"foreign warnings (silent NaN/overflow?): {foreign}"
    return result


def run_cli(argv: list[str]) -> tuple[int, str, str]:
    """headingref.cli.main in-process, stdout and stderr captured."""
    out, err = _io.StringIO(), _io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err), warnings.catch_warnings():
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def assert_cli_failed_cleanly(code: int, stderr: str, folder: Path, before: set[str], command: str) -> str:
    """Exit 2, one error line (warning lines allowed before it), no traceback, the folder unchanged."""
    assert code == 2, stderr
    assert "Traceback" not in stderr
    lines = [line for line in stderr.splitlines() if line.strip()]
    errors = [line for line in lines if not line.startswith("headingref: warning:")]
    assert len(errors) == 1 and errors[0].startswith(f"headingref {command}: error: "), stderr
    assert {p.name for p in folder.iterdir()} == before, "an output (or temporary) file was left behind"
    return errors[0]


# --------------------------------------------------------------------------- coefficient files

SHC_TEXT = default_coefficient_file().read_text()
COF_TEXT = _wmm_cof().read_text()


def _load_and_use(path: Path) -> None:
    """Load a model and evaluate it once inside its validity: the field must come out finite."""
    from headingref.field import field_arrays

    model = load_model(path)
    year = min(max(2026.0, model.valid_from), model.valid_to)
    f = field_arrays([60.0, -70.0, 0.0], [10.0, 120.0, -100.0], year, model=model)
    values = np.concatenate([f[k] for k in ("north_nT", "east_nT", "down_nT", "total_nT", "declination_deg")])
    assert np.all(np.isfinite(values)), "a loaded model gave a non-finite field"


def _replace_token(text: str, line_no: int, token: int, value: str) -> str:
    """Replace the token-th whitespace-separated field of the line_no-th data line (comments skipped)."""
    lines = text.splitlines()
    data = [i for i, line in enumerate(lines) if line.strip() and not line.startswith("#")]
    i = data[line_no]
    parts = lines[i].split()
    parts[token] = value
    lines[i] = " ".join(parts)
    return "\n".join(lines) + "\n"


BAD_NUMBERS = ["1e308", "-1e308", "1e309", "inf", "-inf", "nan", "x", "1,5", "1 0"]


@pytest.mark.parametrize("suffix, text", [("shc", SHC_TEXT), ("COF", COF_TEXT)], ids=["shc", "cof"])
@pytest.mark.parametrize("value", BAD_NUMBERS)
def test_coefficient_value_not_finite_or_huge_is_refused(tmp_path, suffix, text, value):
    # A coefficient of 1e308 used to load and give an infinite field (fixed in model.py: values must
    # be finite and at most 1e7 nT; the dipole g10 is about -31,500 nT, IGRF-14 1900 column).
    # '1 0' splits one value in two: a .COF line has exactly six fields (NOAA WMM .COF layout), and
    # a seventh used to be ignored, hiding a shifted column.
    path = tmp_path / f"bad.{suffix}"
    token = 4 if suffix == "shc" else 2  # SHC: a mid-series column of g(1,0); COF: g of (1,0)
    line = 2 if suffix == "shc" else 1
    path.write_text(_replace_token(text, line, token, value))
    kind, message = outcome(lambda: _load_and_use(path))
    assert kind == "error", f"{value!r} accepted"
    assert message.startswith(f"coefficient file bad.{suffix}:")


@pytest.mark.parametrize(
    "first, last",
    [("nan", "2030.0"), ("1900.0", "inf"), ("2030.0", "1900.0"), ("1e308", "1e309"), ("-5", "1e6")],
)
def test_shc_validity_on_the_parameter_line_is_checked(tmp_path, first, last):
    # SHC parameter line: N_MIN N_MAX N_TIMES SPLINE_ORDER N_STEPS [VALID_FROM VALID_TO] (the layout
    # of the IGRF .shc files ppigrf ships). A NaN or reversed validity used to be taken as given.
    path = tmp_path / "validity.shc"
    path.write_text(_replace_token(_replace_token(SHC_TEXT, 0, 5, first), 0, 6, last))
    with pytest.raises(ModelFileError, match="validity .* is not an ordered pair"):
        load_model(path)


@pytest.mark.parametrize("epoch", ["0.5", "-0.0", "99999.0", "3001.0"])
def test_cof_epoch_outside_plausible_years_is_refused(tmp_path, epoch):
    # WMM .COF header 'EPOCH NAME DATE' (NOAA NCEI file layout). An epoch of 0.5 made a model that
    # no date headingref accepts (decimal years 1000..3000) could ever use.
    path = tmp_path / "epoch.COF"
    path.write_text(_replace_token(COF_TEXT, 0, 0, epoch))
    with pytest.raises(ModelFileError, match="validity"):
        load_model(path)


def test_cof_with_a_repeated_coefficient_line_is_refused(tmp_path):
    # One line per (n, m) in a .COF file (NOAA layout): a repeated (1, 1) in place of (2, 0) keeps
    # the line count right but would silently set g(2, 0) = 0.
    lines = COF_TEXT.splitlines()
    lines[3] = lines[2]
    path = tmp_path / "repeat.COF"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(ModelFileError, match=r"\(1, 1\)"):
        load_model(path)


def _model_mutations(text: str, suffix: str) -> list[tuple[str, bytes]]:
    lines = text.splitlines()
    data = [i for i, line in enumerate(lines) if line.strip() and not line.startswith("#")]
    cases = [
        ("empty", b""),
        ("blank lines", b"\n \n\t\n"),
        ("comments only", b"# nothing else\n# at all\n"),
        ("utf-16", text.encode("utf-16")),
        ("latin-1 comment", ("# caf\xe9\n" + text).encode("latin-1")),
        ("nul byte", text.encode()[:200] + b"\x00" + text.encode()[200:]),
        ("semicolons", text.replace(" ", ";").encode()),
        ("truncated 1/10", text[: len(text) // 10].encode()),
        ("truncated 1/2", text[: len(text) // 2].encode()),
    ]
    last = max(i for i in data if not lines[i].lstrip().startswith("9999"))
    cut = lines[last].rstrip().rsplit(" ", 1)[0]  # the file ends inside its last coefficient line
    cases.append(("truncated in the last line", ("\n".join(lines[:last] + [cut])).encode()))
    i = data[3]
    cases.append(("missing line", ("\n".join(lines[:i] + lines[i + 1 :]) + "\n").encode()))
    cases.append(("duplicated line", ("\n".join(lines[: i + 1] + lines[i:]) + "\n").encode()))
    cases.append(("missing column", ("\n".join(lines[:i] + [" ".join(lines[i].split()[:-1])] + lines[i + 1 :]) + "\n").encode()))
    cases.append(("degree out of range", _replace_token(text, 3, 0, "99").encode()))
    cases.append(("order above degree", _replace_token(text, 3, 1, "7").encode()))
    return cases


@pytest.mark.parametrize("suffix, text", [("shc", SHC_TEXT), ("COF", COF_TEXT)], ids=["shc", "cof"])
def test_malformed_coefficient_files_end_in_one_clear_error(tmp_path, suffix, text):
    for label, data in _model_mutations(text, suffix):
        path = tmp_path / f"{label.replace(' ', '_').replace('/', '-')}.{suffix}"
        path.write_bytes(data)
        kind, message = outcome(lambda p=path: _load_and_use(p))
        assert kind == "error", f"{label}: accepted"
        assert path.name in message, f"{label}: {message!r} does not name the file"


def test_coefficient_file_with_bom_and_crlf_still_loads(tmp_path):
    # A byte-order mark and Windows line ends are not faults (common practice for text readers);
    # the model read must equal the plain one (WMM2025 g(1,0) = -29351.8 nT, NOAA WMM2025 .COF).
    path = tmp_path / "bom.COF"
    path.write_bytes(b"\xef\xbb\xbf" + COF_TEXT.replace("\n", "\r\n").encode())
    model = load_model(path)
    assert model.g[0, 1, 0] == pytest.approx(-29351.8, abs=1e-9)
    assert (model.valid_from, model.valid_to) == (2025.0, 2030.0)


@FUZZ
@given(data=st.binary(max_size=400), suffix=st.sampled_from(["shc", "COF"]))
def test_coefficient_reader_random_bytes(tmp_path_factory, data, suffix):
    path = tmp_path_factory.mktemp("cof") / f"random.{suffix}"
    path.write_bytes(data)
    outcome(lambda: _load_and_use(path))


@FUZZ
@given(
    seed=st.integers(0, 2**32 - 1),
    suffix=st.sampled_from(["shc", "COF"]),
    junk=st.sampled_from(["1e308", "nan", "inf", "-", ".", "e", "9999", "-0", "\t", "  ", "x", "99"]),
)
def test_coefficient_reader_corrupted_tokens(tmp_path_factory, seed, suffix, junk):
    # Overwrite a random token of a valid file: either still a valid model (finite field) or one error.
    text = SHC_TEXT if suffix == "shc" else COF_TEXT
    rnd = random.Random(seed)
    lines = text.splitlines()
    data = [i for i, line in enumerate(lines) if line.strip() and not line.startswith("#")]
    i = rnd.choice(data[:40])
    parts = lines[i].split()
    parts[rnd.randrange(len(parts))] = junk
    lines[i] = " ".join(parts)
    path = tmp_path_factory.mktemp("tok") / f"corrupt.{suffix}"
    path.write_text("\n".join(lines) + "\n")
    outcome(lambda: _load_and_use(path))


# --------------------------------------------------------------------------- CSV readers


def _places(path: Path):
    """What ``headingref field --input`` does with its CSV (headingref.cli.field), then the field."""
    import argparse

    from headingref import field
    from headingref.cli.field import _inputs

    args = argparse.Namespace(input=str(path), lat=None, lon=None, date=TODAY, alt="0")
    _, lat, lon, alt, years = _inputs(args)
    return field(lat, lon, years, alt_km=alt)


def _route(path: Path):
    from headingref.routes import route

    return route(path, TODAY, spacing_nm=50.0)


def _runways(path: Path):
    from headingref.runways import check_runways

    return check_runways(path, TODAY, horizon_years=0)


def _bases(path: Path):
    from headingref.compass_base import base_upkeep, read_sites_csv

    return base_upkeep(read_sites_csv(path, today=TODAY), TODAY)


def _swing(path: Path):
    from headingref.swing import analyse_swing, read_swing_csv

    magnetic, compass, rows = read_swing_csv(path)
    return analyse_swing(magnetic, compass, rows=rows)


PLACES_CSV = "name,lat,lon,alt,date\nInvented mast,61.2,-149.9,0.1,2026-12-02\nInvented hut,N78°13.5′,015 38 E,FL350,2027-01-01\n"

# name -> (reader, valid text, required columns, numeric columns)
READERS: dict[str, tuple[Callable[[Path], object], str, list[str], list[str]]] = {
    "places": (_places, PLACES_CSV, ["lat", "lon"], ["lat", "lon", "alt"]),
    "route": (_route, (DATA / "route_arctic.csv").read_text(encoding="utf-8"), ["name", "lat", "lon"], ["lat", "lon", "alt"]),
    "runways": (_runways, (DATA / "runways_demo.csv").read_text(encoding="utf-8"), ["airport", "runway", "lat", "lon"],
                ["lat", "lon", "end_lat", "end_lon", "elevation"]),
    "bases": (_bases, (DATA / "base_sites.csv").read_text(encoding="utf-8"),
              ["name", "lat", "lon", "surveyed_variation", "survey_date"],
              ["lat", "lon", "surveyed_variation", "tolerance_deg", "resurvey_years", "alt"]),
    "swing": (_swing, (DATA / "swing_handbook_501.csv").read_text(encoding="utf-8"),
              ["magnetic_heading_deg", "compass_reading_deg"], ["magnetic_heading_deg", "compass_reading_deg"]),
}


def _rows(text: str) -> list[list[str]]:
    return [line.split(",") for line in text.splitlines()]


def _join(rows: list[list[str]]) -> str:
    return "\n".join(",".join(r) for r in rows) + "\n"


def _with_cell(text: str, column: str, value: str, row: int = 1) -> str:
    rows = _rows(text)
    rows[row][rows[0].index(column)] = f'"{value}"' if "," in value else value
    return _join(rows)


def _without_column(text: str, column: str) -> str:
    rows = _rows(text)
    j = rows[0].index(column)
    return _join([r[:j] + r[j + 1 :] for r in rows])


def _structural_cases(text: str) -> list[tuple[str, bytes, str | None]]:
    """(label, bytes, expected): expected None means 'must work', else a regex the error must match."""
    rows = _rows(text)
    header = rows[0]
    accented = _join([rows[0], [rows[1][0] + " Bjørnøya café", *rows[1][1:]], *rows[2:]])
    return [
        ("empty file", b"", "empty"),
        ("blank lines only", b"\n  \n\t\n", "empty"),
        ("header only", (",".join(header) + "\n").encode(), "no data rows"),
        ("byte-order mark", b"\xef\xbb\xbf" + text.encode(), None),
        ("semicolon separators", text.replace(",", ";").encode(), None),
        ("tab separators", text.replace(",", "\t").encode(), None),
        ("CRLF line ends", text.replace("\n", "\r\n").encode(), None),
        ("upper-case header with spaces", _join([[f" {h.upper()} " for h in header], *rows[1:]]).encode(), None),
        ("extra column", _join([header + ["remarks"]] + [r + ["invented"] for r in rows[1:]]).encode(), None),
        ("latin-1 encoded", accented.encode("latin-1", errors="replace"), "UTF-8"),
        ("UTF-16 encoded", text.encode("utf-16"), "binary|UTF-8"),
        ("NUL byte", text.encode() + b"\x00", "binary"),
        ("duplicated header", _join([header + [header[-1]]] + [r + [r[-1]] for r in rows[1:]]).encode(), "more than once"),
        ("extra field in a row", (text + ",".join(rows[1]) + ",surplus\n").encode(), "fields but the header has"),
        # An unbalanced quote used to swallow the following lines into one cell, so rows vanished
        # silently (runways then reported one odd row); fixed in io.read_table.
        ("unterminated quote at the end", (text + '"' + ",".join(rows[1]) + "\n").encode(), r"line \d+: a quoted field runs on"),
        ("unbalanced quote in the middle", _join([rows[0], ['"' + rows[1][0], *rows[1][1:]], *rows[2:]]).encode(),
         r"line 2: a quoted field runs on to line"),
    ]


STRUCTURAL = [(name, *case) for name, (_, text, _, _) in READERS.items() for case in _structural_cases(text)]


@pytest.mark.parametrize("reader, label, data, expected", STRUCTURAL, ids=[f"{c[0]}-{c[1]}" for c in STRUCTURAL])
def test_csv_structure(tmp_path, reader, label, data, expected):
    # Separators , ; and tab and UTF-8 with or without a BOM are accepted (headingref.io docstring);
    # everything else must end in one clear error.
    path = tmp_path / f"{reader}.csv"
    path.write_bytes(data)
    kind, message = outcome(lambda: READERS[reader][0](path))
    if expected is None:
        assert kind == "ok", message
    else:
        assert kind == "error", f"{label} was accepted"
        assert re.search(expected, message), message
        assert path.name in message, f"{message!r} does not name the file"


MISSING = [(name, column) for name, (_, _, required, _) in READERS.items() for column in required]


@pytest.mark.parametrize("reader, column", MISSING, ids=[f"{r}-{c}" for r, c in MISSING])
def test_missing_required_column_is_named(tmp_path, reader, column):
    path = tmp_path / f"{reader}.csv"
    path.write_text(_without_column(READERS[reader][1], column), encoding="utf-8")
    kind, message = outcome(lambda: READERS[reader][0](path))
    assert kind == "error"
    assert re.search(rf"missing column\(s\) .*\b{column}\b", message), message


NON_FINITE = ["1e308", "-1e308", "1e309", "inf", "-inf", "nan", "NaN", "1e-320x", "--1", "0x10"]
# Found here, left to the compass_base author: a tolerance or resurvey interval of 1e308 (degrees,
# years) has no upper bound and is accepted.
_OPEN_BUGS = {("bases", "tolerance_deg", "1e308"), ("bases", "resurvey_years", "1e308")}
NUMBER_CASES = [
    pytest.param(
        name, column, value, id=f"{name}-{column}-{value}",
        marks=[pytest.mark.xfail(strict=True, reason="compass_base: no upper bound")] if (name, column, value) in _OPEN_BUGS else [],
    )
    for name, (_, _, _, numeric) in READERS.items()
    if name != "runways"
    for column in numeric
    for value in NON_FINITE
]


@pytest.mark.parametrize("reader, column, value", NUMBER_CASES)
def test_huge_or_non_finite_number_names_the_line(tmp_path, reader, column, value):
    # None of these is a usable latitude, longitude, height, variation, tolerance, interval or heading;
    # 1e308 degrees / km / years is out of every accepted range. The error names line 2 (the row).
    path = tmp_path / f"{reader}.csv"
    path.write_text(_with_cell(READERS[reader][1], column, value), encoding="utf-8")
    kind, message = outcome(lambda: READERS[reader][0](path))
    assert kind == "error", f"{column} = {value!r} was accepted"
    assert f"{path.name} line 2" in message, message


@pytest.mark.parametrize("reader, column", [("places", "lat"), ("route", "lon"), ("bases", "surveyed_variation"),
                                            ("swing", "compass_reading_deg"), ("places", "alt")])
def test_negative_zero_is_zero(tmp_path, reader, column):
    # -0 is a valid way to write 0 (IEEE 754 signed zero; common practice): accepted.
    path = tmp_path / f"{reader}.csv"
    path.write_text(_with_cell(READERS[reader][1], column, "-0"), encoding="utf-8")
    assert outcome(lambda: READERS[reader][0](path)) == ("ok", "")


@pytest.mark.parametrize("column", ["lat", "lon", "end_lat", "end_lon", "elevation"])
@pytest.mark.parametrize("value", ["1e308", "inf", "-inf", "nan", "abc", "1e309"])
def test_runway_bad_number_is_a_row_error_not_a_crash(tmp_path, column, value):
    # The runway check goes on past a bad row and reports it (headingref.runways docstring): the row
    # gets status 'error' with the column in its reason, every other row is still checked.
    from headingref.runways import check_runways

    path = tmp_path / "runways.csv"
    path.write_text(_with_cell(READERS["runways"][1], column, value), encoding="utf-8")
    holder = {}
    kind, message = outcome(lambda: holder.setdefault("r", check_runways(path, TODAY, horizon_years=0)))
    assert kind == "ok", message
    table = holder["r"].table
    assert table.status.iloc[0] == "error" and column.split("_")[-1] in table.reason.iloc[0], table.reason.iloc[0]
    assert (table.status.iloc[2:] != "error").all()


# hypothesis: random bytes and random cells ---------------------------------------------------

NASTY_CELLS = st.one_of(
    st.sampled_from(["", " ", "1e308", "-1e308", "inf", "nan", "-0", "1,5", "9" * 400, "N", "°", "FL", "FL999",
                     "2026-02-30", "1899-12-31", "2030-01-02", "\ufeff1", "½", "٣", "'", '"', "36", "00", "18R", "1e-320"]),
    st.text(max_size=20),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
)


@FUZZ
@given(reader=st.sampled_from(sorted(READERS)), data=st.binary(max_size=400))
def test_csv_random_bytes(tmp_path_factory, reader, data):
    path = tmp_path_factory.mktemp("bytes") / f"{reader}.csv"
    path.write_bytes(data)
    outcome(lambda: READERS[reader][0](path))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(reader=st.sampled_from(sorted(READERS)), row=st.integers(1, 2), column=st.integers(0, 7), cell=NASTY_CELLS)
def test_csv_random_cell(tmp_path_factory, reader, row, column, cell):
    text = READERS[reader][1]
    rows = _rows(text)
    cell = cell.replace("\n", " ").replace("\r", " ").replace("\x00", "")
    rows[row][column % len(rows[0])] = '"' + cell.replace('"', '""') + '"'
    path = tmp_path_factory.mktemp("cell") / f"{reader}.csv"
    path.write_text(_join(rows), encoding="utf-8")
    outcome(lambda: READERS[reader][0](path))


@FUZZ
@given(reader=st.sampled_from(sorted(READERS)), cut=st.floats(0.0, 1.0))
def test_csv_truncated_anywhere(tmp_path_factory, reader, cut):
    # A file cut short (interrupted copy): a clear error, or a shorter table that is still valid.
    text = READERS[reader][1]
    path = tmp_path_factory.mktemp("cut") / f"{reader}.csv"
    path.write_text(text[: int(cut * len(text))], encoding="utf-8")
    outcome(lambda: READERS[reader][0](path))
