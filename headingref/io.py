"""Reading user tables and writing outputs safely.

- :func:`read_table` reads a CSV (comma, semicolon or tab separated; UTF-8 with or
  without a byte-order mark) into a DataFrame of stripped strings whose index is the
  line number in the file, so that every later error can name its row.
- :func:`float_column`, :func:`coordinate_column`, :func:`date_column` turn one
  column into a numpy array or raise :class:`InputError` naming file, line and value.
- :func:`atomic_path` and the ``write_*`` helpers write to a temporary file beside
  the target and rename it into place, so an output is either complete or absent.
"""

from __future__ import annotations

import contextlib
import csv
import io as _io
import math
import os
from collections.abc import Iterator, Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputError
from .units import decimal_year, parse_coordinate

MAX_TABLE_BYTES = 200 * 1024 * 1024


def read_table(
    path: str | os.PathLike,
    required: Sequence[str],
    optional: Sequence[str] = (),
    what: str = "table",
) -> pd.DataFrame:
    """Read a delimited text table with a header row.

    Column names are matched case-insensitively after stripping spaces. Missing
    required columns raise :class:`InputError` listing what is accepted. Columns not
    named in ``required`` or ``optional`` are kept. Blank lines are skipped.

    Returns a DataFrame of ``str`` (empty string for an empty cell) indexed by the
    1-based line number in the file; ``df.attrs['source']`` holds the file name.
    """
    path = Path(path)
    label = f"{what} {path.name}"
    try:
        if not path.exists():
            raise InputError(f"{label}: no such file {str(path)!r}")
        if not path.is_file():
            raise InputError(f"{label}: {str(path)!r} is not a file")
        if path.stat().st_size > MAX_TABLE_BYTES:
            raise InputError(f"{label}: file is larger than {MAX_TABLE_BYTES // 2**20} MiB")
        raw = path.read_bytes()
    except OSError as exc:  # name too long, no permission, I/O error
        raise InputError(f"{label}: cannot read {str(path)!r}: {exc.strerror or exc}") from None
    if b"\x00" in raw:
        raise InputError(f"{label}: file holds binary data (NUL bytes); give a UTF-8 CSV text file")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{label}: not UTF-8 text (byte {exc.start}); save the file as UTF-8 CSV") from None
    lines = text.splitlines()
    first = next((line for line in lines if line.strip()), None)
    if first is None:
        raise InputError(f"{label}: file is empty; it needs a header row with columns {', '.join(required)}")
    delimiter = max([",", ";", "\t"], key=first.count)
    reader = csv.reader(_io.StringIO(text, newline=""), delimiter=delimiter)
    header: list[str] | None = None
    rows: list[list[str]] = []
    line_numbers: list[int] = []
    end_of_previous = 0
    try:
        for record in reader:
            start, end_of_previous = end_of_previous + 1, reader.line_num
            if any("\n" in cell or "\r" in cell for cell in record):
                raise InputError(
                    f"{label} line {start}: a quoted field runs on to line {reader.line_num}; "
                    'check that every double quote (") is closed on its own line'
                )
            if not any(cell.strip() for cell in record):
                continue
            if header is None:
                header = [cell.strip().lower() for cell in record]
                continue
            if len(record) > len(header) and any(cell.strip() for cell in record[len(header):]):
                raise InputError(
                    f"{label} line {reader.line_num}: {len(record)} fields but the header has {len(header)}"
                )
            record = (record + [""] * len(header))[: len(header)]
            rows.append([cell.strip() for cell in record])
            line_numbers.append(reader.line_num)
    except csv.Error as exc:
        raise InputError(f"{label} line {reader.line_num}: {exc}") from None
    if header is None:
        raise InputError(f"{label}: no header row; it needs columns {', '.join(required)}")
    dupes = sorted({name for name in header if header.count(name) > 1 and name})
    if dupes:
        raise InputError(f"{label}: column(s) {', '.join(dupes)} appear more than once in the header")
    missing = [name for name in required if name not in header]
    if missing:
        accepted = ", ".join(list(required) + [f"[{name}]" for name in optional])
        raise InputError(
            f"{label}: missing column(s) {', '.join(missing)}; found {', '.join(h for h in header if h) or 'none'}; "
            f"expected {accepted} (separator , or ; detected {delimiter!r})"
        )
    if not rows:
        raise InputError(f"{label}: the header is there but no data rows follow")
    table = pd.DataFrame(rows, columns=header, index=pd.Index(line_numbers, name="line"), dtype=str)
    table.attrs["source"] = path.name
    return table


def _where(table: pd.DataFrame, line: int) -> str:
    return f"{table.attrs.get('source', 'table')} line {line}"


def float_column(
    table: pd.DataFrame,
    column: str,
    *,
    low: float | None = None,
    high: float | None = None,
    default: float | None = None,
    unit: str = "",
) -> np.ndarray:
    """Column as float64, every value finite and within [low, high].

    Empty cells take ``default``; with no default they are an error.
    """
    values = np.empty(len(table), dtype=np.float64)
    cells = table[column] if column in table else pd.Series([""] * len(table), index=table.index)
    for i, (line, cell) in enumerate(cells.items()):
        if cell == "":
            if default is None:
                raise InputError(f"{_where(table, line)}: {column} is empty; a number is needed")
            values[i] = default
            continue
        try:
            value = float(cell.replace("−", "-"))
        except ValueError:
            raise InputError(f"{_where(table, line)}: {column} {cell!r} is not a number") from None
        if not math.isfinite(value):
            raise InputError(f"{_where(table, line)}: {column} {cell!r} is not a finite number")
        if (low is not None and value < low) or (high is not None and value > high):
            raise InputError(
                f"{_where(table, line)}: {column} {cell!r} is outside {low:g} to {high:g}{(' ' + unit) if unit else ''}"
            )
        values[i] = value
    return values


def coordinate_column(table: pd.DataFrame, column: str, kind: str) -> np.ndarray:
    """Column of latitudes (``kind='lat'``) or longitudes (``'lon'``) in decimal degrees."""
    out = np.empty(len(table), dtype=np.float64)
    for i, (line, cell) in enumerate(table[column].items()):
        if cell == "":
            raise InputError(f"{_where(table, line)}: {column} is empty")
        try:
            out[i] = parse_coordinate(cell, kind)
        except InputError as exc:
            raise InputError(f"{_where(table, line)}: {exc}") from None
    return out


def date_column(table: pd.DataFrame, column: str) -> np.ndarray:
    """Column of dates as decimal years (see :mod:`headingref.units`)."""
    out = np.empty(len(table), dtype=np.float64)
    for i, (line, cell) in enumerate(table[column].items()):
        try:
            out[i] = decimal_year(cell)
        except InputError as exc:
            raise InputError(f"{_where(table, line)}: {column}: {exc}") from None
    return out


@contextlib.contextmanager
def atomic_path(target: str | os.PathLike) -> Iterator[Path]:
    """Yield a temporary path beside ``target``; on success rename it onto ``target``.

    The temporary name keeps the target's suffix (matplotlib picks the format from
    it). On any exception the temporary file is removed and ``target`` is untouched.
    """
    target = Path(target)
    parent = target.parent if str(target.parent) else Path(".")
    if "\x00" in str(target):
        raise InputError(f"cannot write {str(target)!r}: a file name cannot hold a NUL character")
    if not parent.is_dir():
        raise InputError(f"cannot write {str(target)!r}: folder {str(parent)!r} does not exist")
    try:
        kind = "folder" if target.is_dir() else "special" if target.exists() and not target.is_file() else "file"
    except OSError as exc:  # name too long
        raise InputError(f"cannot write {str(target)!r}: {exc.strerror or exc}") from None
    if kind == "folder":
        raise InputError(f"cannot write {str(target)!r}: it is a folder; give a file name")
    # A device or pipe (/dev/null, /dev/stdout) is written directly: renaming a file onto it would
    # replace the device itself (as root) instead of writing through it.
    tmp = target if kind == "special" else parent / f".{target.stem[:100]}.tmp{os.getpid()}{target.suffix}"
    try:
        yield tmp
        if tmp != target:
            os.replace(tmp, target)
    except OSError as exc:  # name too long, disk full, no permission
        raise InputError(f"cannot write {str(target)!r}: {exc.strerror or exc}") from None
    finally:
        if tmp != target:
            with contextlib.suppress(OSError):
                tmp.unlink()


def write_text(target: str | os.PathLike, text: str) -> Path:
    """Write text (UTF-8) atomically."""
    with atomic_path(target) as tmp:
        tmp.write_text(text, encoding="utf-8")
    return Path(target)


def write_csv(target: str | os.PathLike, frame: pd.DataFrame, index: bool = False, float_format: str | None = None) -> Path:
    """Write a DataFrame as CSV atomically."""
    with atomic_path(target) as tmp:
        frame.to_csv(tmp, index=index, float_format=float_format)
    return Path(target)
