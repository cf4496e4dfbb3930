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
from headingref.errors import HeadingrefError, HeadingrefWarning, ModelFileError
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
    from headingref.elements import field_arrays

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
    places = _inputs(args)
    return field(places.lat, places.lon, places.years, alt_km=places.alt)


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


PLACES_CSV = "name,lat,lon,alt,date\nInvented mast,61.2,-149.9,0.1 km,2026-12-02\nInvented hut,N78°13.5′,015 38 E,FL350,2027-01-01\n"

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


NON_FINITE = ["1e308", "-1e308", "1e309", "inf", "-inf", "nan", "NaN", "1e-320x", "--1", "0x10",
              # lenient forms Python's float() reads as 61 (PEP 515 underscores; any Unicode decimal digit:
              # Arabic-Indic U+0660.., full-width U+FF10..): only plain ASCII decimal is a number here
              "6_1", "\u0666\u0661", "\uff16\uff11", "9_1.5"]
# Found here, left to the compass_base author: a tolerance or resurvey interval of 1e308 (degrees,
# years) has no upper bound and is accepted.
_OPEN_BUGS: set[tuple[str, str, str]] = set()  # cases still escaping as tracebacks (none now)
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


# --------------------------------------------------------------------------- scenario TOML


def _toml_value(value) -> str:
    """A TOML literal for the values a scenario holds (tomllib reads, this writes; TOML 1.0 spec)."""
    import datetime as dt
    import json
    import math

    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf") if math.isinf(value) else repr(value)
    if isinstance(value, int):
        return str(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, (dt.date, dt.time)):
        return value.isoformat()
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{json.dumps(k)} = {_toml_value(v)}" for k, v in value.items()) + "}"
    raise TypeError(value)


def _toml_text(doc: dict) -> str:
    out = [f"{json_key(k)} = {_toml_value(v)}" for k, v in doc.items() if not isinstance(v, dict) or k not in SECTION_NAMES]
    for name in SECTION_NAMES:
        if isinstance(doc.get(name), dict):
            section = dict(doc[name])
            plans = section.pop("plan", None) if name == "routes" else None
            out.append(f"[{name}]")
            out += [f"{json_key(k)} = {_toml_value(v)}" for k, v in section.items()]
            if isinstance(plans, list) and all(isinstance(p, dict) for p in plans):
                for plan in plans:
                    out.append("[[routes.plan]]")
                    out += [f"{json_key(k)} = {_toml_value(v)}" for k, v in plan.items()]
            elif plans is not None:
                out.append(f"plan = {_toml_value(plans)}")
    return "\n".join(out) + "\n"


def json_key(key: str) -> str:
    import json

    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else json.dumps(key)


SECTION_NAMES = ("routes", "zones", "error_budget", "compass_bases", "swing", "runways")


@pytest.fixture(scope="module")
def demo_copy(tmp_path_factory) -> Path:
    """The demo folder copied, so that the scenario's relative file names resolve beside our TOML."""
    import shutil

    folder = tmp_path_factory.mktemp("scenario") / "demo"
    shutil.copytree(DEMO, folder)
    return folder


def _demo_doc() -> dict:
    import tomllib

    return tomllib.loads((DEMO / "scenario.toml").read_text(encoding="utf-8"))


def _load(folder: Path, text: str | bytes, name: str = "s.toml"):
    from headingref.scenario import load_scenario

    path = folder / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode())
    return outcome(lambda: load_scenario(path))


def test_toml_writer_round_trips_the_demo(demo_copy):
    # The helper above must write what tomllib reads back (TOML 1.0, Python's tomllib).
    import tomllib

    doc = _demo_doc()
    assert tomllib.loads(_toml_text(doc)) == doc
    assert _load(demo_copy, _toml_text(doc)) == ("ok", "")


@pytest.mark.parametrize(
    "label, data, expected",
    [
        ("empty", b"", "analysis_date is missing"),
        ("only a comment", b"# nothing\n", "analysis_date is missing"),
        ("byte-order mark", b"\xef\xbb\xbf" + (DEMO / "scenario.toml").read_bytes(), None),
        ("CRLF", (DEMO / "scenario.toml").read_bytes().replace(b"\n", b"\r\n"), None),
        ("UTF-16", (DEMO / "scenario.toml").read_text(encoding="utf-8").encode("utf-16"), "not UTF-8"),
        ("latin-1", 'analysis_date = "2026-12-02"\ntitle = "Bjørnøya"\n'.encode("latin-1"), "not UTF-8"),
        ("NUL byte", b'analysis_date = "2026-12-02"\x00\n', "not valid TOML"),
        ("duplicated key", b'analysis_date = "2026-12-02"\nanalysis_date = "2026-12-03"\n', "not valid TOML"),
        ("duplicated section", b'analysis_date = "2026-12-02"\n[zones]\n[zones]\n', "not valid TOML"),
        ("not TOML at all", b"analysis_date: 2026-12-02\n", "not valid TOML"),
        ("CSV given as the scenario", (DATA / "route_arctic.csv").read_bytes(), "not valid TOML"),
        ("section as a value", b'analysis_date = "2026-12-02"\nzones = 5\n', r"\[zones\] must be a table"),
        ("zones as array of tables", b'analysis_date = "2026-12-02"\n[[zones]]\ncap = "north"\n', r"\[zones\] must be a table"),
        ("unknown section", b'analysis_date = "2026-12-02"\n[zone]\n', "unknown key 'zone'"),
        ("plan as a table", b'analysis_date = "2026-12-02"\n[routes]\n[routes.plan]\nname = "A"\nfile = "x.csv"\n',
         r"\[\[routes.plan\]\] tables"),
        ("plan file is a folder", b'analysis_date = "2026-12-02"\n[routes]\n[[routes.plan]]\nname = "A"\nfile = "routes"\n',
         "no such file"),
        ("model file missing", b'analysis_date = "2026-12-02"\nmodel = "WMM.COF"\n', "no such file"),
        ("time of day as date", b"analysis_date = 12:00:00\n", "not understood"),
        ("date as a table", b"analysis_date = {year = 2026}\n", "is not a date"),
        ("decimal year nan", b"analysis_date = nan\n", "not a plausible decimal year"),
        ("decimal year -inf", b"analysis_date = -inf\n", "not a plausible decimal year"),
        ("huge integer", b"analysis_date = 9223372036854775807\n", "not a plausible decimal year"),
        ("29 February of a common year", b'analysis_date = "2027-02-29"\n', "not a valid calendar date"),
        ("blackout above caution", b'analysis_date = "2026-12-02"\n[zones]\nblackout_nT = 7000.0\n', "must be below caution_nT"),
    ],
)
def test_scenario_structure(demo_copy, label, data, expected):
    kind, message = _load(demo_copy, data)
    if expected is None:
        assert kind == "ok", message
    else:
        assert kind == "error", f"{label} was accepted"
        assert re.search(expected, message), message
        assert message.startswith("scenario s.toml"), message


def _schema_keys() -> list[tuple[str, str]]:
    from headingref.scenario import SCHEMA

    return [(section, key) for section, keys in SCHEMA.items() for key in keys if section != "routes.plan" and key != "plan"]


NASTY_TOML = [float("nan"), float("inf"), float("-inf"), 1e308, -1e308, -0.0, 5e-324, 2**63 - 1, -1, True, "", "  ",
              "x" * 300, "nan", "1e308", [], [float("nan")], [1e308, "a"], {}, {"a": 1}]


@pytest.mark.parametrize("section, key", _schema_keys(), ids=[f"{s or 'top'}.{k}" for s, k in _schema_keys()])
def test_every_scenario_key_with_nasty_values(demo_copy, section, key):
    # Each key of the schema, in turn, set to values of the wrong type, non-finite, huge or empty:
    # accepted only when the schema allows it, else one error naming the key.
    from headingref.scenario import SCHEMA

    spec = SCHEMA[section][key]
    for value in NASTY_TOML:
        doc = _demo_doc()
        (doc[section] if section else doc)[key] = value
        kind, message = _load(demo_copy, _toml_text(doc))
        if kind == "error":
            assert key in message, f"{key} = {value!r}: {message!r} does not name the key"
        numeric = isinstance(value, float) and not isinstance(value, bool)
        if spec.kind in ("float", "floats", "height") and numeric and not np.isfinite(value):
            assert kind == "error", f"{key} = {value!r} was accepted"
        if spec.kind in ("float", "floats") and numeric and spec.high is not None and abs(value) > 1e300:
            assert kind == "error", f"{key} = {value!r} was accepted"


def test_scenario_file_name_too_long(demo_copy):
    # Found by fuzzing: a 300-character file name once escaped as OSError (File name too long)
    # instead of an InputError naming the key.
    doc = _demo_doc()
    doc["runways"]["file"] = "x" * 300 + ".csv"
    kind, message = _load(demo_copy, _toml_text(doc))
    assert kind == "error" and "[runways] file" in message


TOML_VALUES = st.recursive(
    st.one_of(st.floats(), st.integers(-(2**63), 2**63 - 1), st.booleans(), st.text(max_size=30), st.dates(),
              st.sampled_from(["2026-12-02", "1899-12-31", "2031-01-01", "polar", "FL350", "rhumb", "IGRF-14", "routes"])),
    lambda children: st.lists(children, max_size=3) | st.dictionaries(st.sampled_from(["name", "file", "a"]), children, max_size=2),
    max_leaves=5,
)


@FUZZ
@given(key=st.sampled_from(_schema_keys()), value=TOML_VALUES)
def test_scenario_random_values(demo_copy, key, value):
    section, name = key
    doc = _demo_doc()
    (doc[section] if section else doc)[name] = value
    _load(demo_copy, _toml_text(doc), name="h.toml")


@FUZZ
@given(data=st.binary(max_size=300))
def test_scenario_random_bytes(demo_copy, data):
    _load(demo_copy, data, name="b.toml")


@FUZZ
@given(cut=st.floats(0.0, 1.0))
def test_scenario_truncated_anywhere(demo_copy, cut):
    text = (DEMO / "scenario.toml").read_text(encoding="utf-8")
    _load(demo_copy, text[: int(cut * len(text))], name="t.toml")


# --------------------------------------------------------------------------- paths that cannot be read

BAD_PATHS = [
    ("no such file", lambda tmp: tmp / "absent.csv", "no such file"),
    ("a folder", lambda tmp: tmp, "not a file"),
    # a 300-character name: os.stat fails with ENAMETOOLONG (POSIX NAME_MAX is 255 on Linux, from memory);
    # it used to escape as a bare OSError traceback (fixed in io.read_table and model.load_model)
    ("name too long", lambda tmp: tmp / ("x" * 300 + ".csv"), "File name too long|cannot read"),
    ("unreadable special file", lambda tmp: Path("/proc/self/mem"), "cannot read|not a file"),
]


@pytest.mark.parametrize("reader", sorted(READERS))
@pytest.mark.parametrize("label, make, expected", BAD_PATHS, ids=[b[0] for b in BAD_PATHS])
def test_csv_reader_bad_paths(tmp_path, reader, label, make, expected):
    path = make(tmp_path)
    if label == "unreadable special file" and not path.exists():
        pytest.skip("no /proc on this system")
    kind, message = outcome(lambda: READERS[reader][0](path))
    assert kind == "error" and re.search(expected, message), message


@pytest.mark.parametrize("label, make, expected", BAD_PATHS, ids=[b[0] for b in BAD_PATHS])
def test_coefficient_file_bad_paths(tmp_path, label, make, expected):
    path = make(tmp_path)
    if label == "unreadable special file" and not path.exists():
        pytest.skip("no /proc on this system")
    kind, message = outcome(lambda: load_model(path))
    assert kind == "error" and message.startswith("coefficient file"), message
    assert re.search("does not exist" if label in ("no such file", "a folder") else "cannot be read", message), message


# --------------------------------------------------------------------------- the same through the CLI


def _cli_argv(reader: str, path: Path, out: Path) -> list[str]:
    return {
        "places": ["field", "--input", path, "--date", TODAY, "--output", out / "field.csv"],
        "route": ["route", "--input", path, "--date", TODAY, "--spacing", "50", "--output", out / "legs.csv",
                  "--samples", out / "samples.csv", "--geojson", out / "route.geojson"],
        "runways": ["runways", "--input", path, "--date", TODAY, "--horizon", "0", "--output", out / "checked.csv"],
        "bases": ["base", "--input", path, "--date", TODAY, "--output", out / "upkeep.csv"],
        "swing": ["swing", "--input", path, "--output", out / "coefficients.csv", "--card", out / "card.csv"],
        "scenario": ["report", path, "--out", out / "report", "--no-progress"],
        "model": ["field", "--lat", "60", "--lon", "10", "--date", TODAY, "--model", path, "--output", out / "field.csv"],
    }[reader]


COMMAND = {"places": "field", "route": "route", "runways": "runways", "bases": "base", "swing": "swing",
           "scenario": "report", "model": "field"}

CLI_CASES = [(reader, label, data) for reader, label, data, expected in STRUCTURAL if expected is not None]
CLI_CASES += [("scenario", label, data) for label, data in
              [("empty", b""), ("UTF-16", (DEMO / "scenario.toml").read_text(encoding="utf-8").encode("utf-16")),
               ("bad TOML", b"analysis_date: 2026\n"), ("unknown key", b'analysis_date = "2026-12-02"\nmodle = "x"\n')]]
CLI_CASES += [("model", f"{suffix} {label}", data) for suffix, text in (("shc", SHC_TEXT), ("COF", COF_TEXT))
              for label, data in _model_mutations(text, suffix)[:6]]


@pytest.mark.parametrize("reader, label, data", CLI_CASES, ids=[f"{c[0]}-{c[1]}" for c in CLI_CASES])
def test_cli_bad_file_one_line_and_no_output(tmp_path, reader, label, data):
    # exit 2, one 'headingref CMD: error:' line, no traceback, the output folder still empty
    inputs, out = tmp_path / "in", tmp_path / "out"
    inputs.mkdir()
    out.mkdir()
    suffix = {"scenario": ".toml", "model": ".shc" if label.startswith("shc") else ".COF"}.get(reader, ".csv")
    path = inputs / f"input{suffix}"
    if reader == "scenario":  # inside a copy of the demo folder, so relative names resolve
        import shutil

        shutil.copytree(DEMO, inputs / "demo")
        path = inputs / "demo" / "bad.toml"
    path.write_bytes(data)
    code, _, err = run_cli([str(a) for a in _cli_argv(reader, path, out)])
    assert_cli_failed_cleanly(code, err, out, set(), COMMAND[reader])
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []  # no report staging folder left


SECTION_FILES = {  # scenario section -> (TOML lines, data file the section reads)
    "routes": ('[routes]\n[[routes.plan]]\nname = "Invented"\nfile = "data.csv"\n', "route"),
    "compass_bases": ('[compass_bases]\nfile = "data.csv"\n', "bases"),
    "swing": ('[swing]\nfile = "data.csv"\n', "swing"),
    "runways": ('[runways]\nfile = "data.csv"\nhorizon_years = 1.0\n', "runways"),
}


@pytest.mark.parametrize("section", sorted(SECTION_FILES))
@pytest.mark.parametrize("damage", ["UTF-16", "missing column", "empty"])
def test_report_with_a_broken_data_file(tmp_path, section, damage):
    # A valid scenario whose data file is broken: the report stops with one line naming the job and
    # the file, and writes nothing (no report folder, no staging folder beside it).
    toml, reader = SECTION_FILES[section]
    text = READERS[reader][1]
    data = {"UTF-16": text.encode("utf-16"), "empty": b"",
            "missing column": _without_column(text, READERS[reader][2][-1]).encode()}[damage]
    (tmp_path / "data.csv").write_bytes(data)
    scenario = tmp_path / "study.toml"
    scenario.write_text(f'analysis_date = "{TODAY}"\n' + toml, encoding="utf-8")
    before = {p.name for p in tmp_path.iterdir()}
    code, _, err = run_cli(["report", str(scenario), "--out", str(tmp_path / "report"), "--no-progress"])
    line = assert_cli_failed_cleanly(code, err, tmp_path, before, "report")
    assert "data.csv" in line


def test_runway_table_from_pandas_with_a_float_designator_column():
    # pandas reads an all-number runway column with a blank as float (9.0, NaN). That used to end the
    # whole check with "runway designator '9.0' is not understood" (forming the reciprocal of '9.0')
    # and a pandas warning about filling a float column with ''; now the blank row is the only error.
    import pandas as pd

    from headingref.runways import check_runways

    frame = pd.DataFrame({"airport": ["INVENTED", "INVENTED"], "runway": [9.0, np.nan], "lat": [60.0, 60.0],
                          "lon": [10.0, 10.05], "end_lat": [60.0, 60.0], "end_lon": [10.05, 10.0]})
    holder = {}
    kind, message = outcome(lambda: holder.setdefault("r", check_runways(frame, TODAY, horizon_years=0)))
    assert kind == "ok", message
    table = holder["r"].table
    assert list(table.runway) == ["9", ""] and list(table.status) == ["warning", "error"]
    assert "empty" in table.reason.iloc[1]


@pytest.mark.parametrize("model", [5, 2.5, ["IGRF14.shc"], b"IGRF14.shc"])
def test_model_of_the_wrong_type_is_one_error(model):
    # used to raise TypeError from pathlib (fixed in model.load_model)
    from headingref import field

    kind, message = outcome(lambda: field(60.0, 10.0, TODAY, model=model))
    assert kind == "error" and "is not understood" in message
