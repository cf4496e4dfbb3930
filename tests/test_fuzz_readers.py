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
