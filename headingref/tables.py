"""Tables as they come from authorities and open datasets: column mappings and Excel files.

- :func:`parse_column_mapping` reads ``"runway=ident,lat=le_lat"`` (headingref's name on the
  left, the file's column on the right) into a dict (defined in :mod:`headingref.io`, whose
  ``read_table(columns=...)`` applies it; re-exported here).
- :func:`read_source` reads a CSV (through :func:`headingref.io.read_table`) or an Excel
  workbook (``.xlsx``, first sheet, through openpyxl), renames mapped columns to headingref's
  names and checks the required ones. The result is the same as ``read_table``'s: a DataFrame of
  stripped strings indexed by the row number in the file (the line of a CSV, the sheet row of a
  workbook), with ``attrs['source']`` the file name, so that every later error names its row.
- :func:`write_table` writes a result table as CSV or ``.xlsx`` (by the file name), with values
  rounded per column and, in a workbook, the unit beside each column name in the header.
- :func:`write_output` is what every command's ``--output`` calls: a name ending in ``.xlsx``
  gives a workbook (units read from the column names, :func:`column_units`; values rounded by
  unit, :func:`column_decimals`), anything else the CSV of :func:`headingref.io.write_csv`.
  Text cells that a spreadsheet would run as a formula are made inert in both (OWASP).

Writing goes through :func:`headingref.io.atomic_path` (temporary file, then rename).
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputError
from .io import (
    MAX_TABLE_BYTES,
    apply_column_mapping,
    atomic_path,
    parse_column_mapping,
    read_table,
    spreadsheet_safe,
    write_csv,
)

__all__ = ["apply_column_mapping", "column_decimals", "column_units", "parse_column_mapping", "read_source", "write_output", "write_table"]

EXCEL_SUFFIXES = (".xlsx", ".xlsm")


def _cell_text(value) -> str:
    """An Excel cell as the text a CSV would hold: whole floats without '.0', dates as ISO."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return str(value).lower()
    if isinstance(value, float):
        if not math.isfinite(value):
            return ""
        return str(int(value)) if value.is_integer() and abs(value) < 1e15 else repr(value)
    if hasattr(value, "isoformat"):
        text = value.isoformat()
        return text[:10] if text.endswith("T00:00:00") else text
    return str(value).strip()


def _open_workbook(path: Path, label: str):
    """The workbook opened read-only, or a one-line InputError (too large, not a workbook)."""
    try:
        from openpyxl import load_workbook
    except ImportError:  # pragma: no cover - openpyxl is a dependency
        raise InputError(f"{label}: reading .xlsx needs openpyxl (pip install openpyxl)") from None
    try:
        if path.stat().st_size > MAX_TABLE_BYTES:
            raise InputError(f"{label}: file is larger than {MAX_TABLE_BYTES // 2**20} MiB")
        return load_workbook(path, read_only=True, data_only=True)
    except InputError:
        raise
    except Exception as exc:  # zipfile.BadZipFile, KeyError, OSError: not a workbook
        raise InputError(f"{label}: not a readable Excel workbook ({type(exc).__name__}); save it as .xlsx or CSV") from None


def _sheet_rows(sheet, label: str) -> tuple[list[str] | None, list[list[str]], list[int]]:
    """Header (lower case), data rows as text padded to the header, and their 1-based row numbers."""
    header: list[str] | None = None
    rows: list[list[str]] = []
    numbers: list[int] = []
    for number, values in enumerate(sheet.iter_rows(values_only=True), start=1):
        cells = [_cell_text(v) for v in values]
        if not any(cells):
            continue
        if header is None:
            header = [c.lower() for c in cells]
            while header and not header[-1]:
                header.pop()
            continue
        if len(cells) > len(header) and any(cells[len(header):]):
            raise InputError(f"{label} row {number}: {len(cells)} cells but the header has {len(header)}")
        rows.append((cells + [""] * len(header))[: len(header)])
        numbers.append(number)
    return header, rows, numbers


def _read_xlsx(path: Path, required: Sequence[str], what: str) -> pd.DataFrame:
    label = f"{what} {path.name}"
    book = _open_workbook(path, label)
    try:
        header, rows, numbers = _sheet_rows(book.worksheets[0], label)
    finally:
        book.close()
    if header is None:
        raise InputError(f"{label}: the first sheet is empty; it needs a header row with columns {', '.join(required)}")
    dupes = sorted({h for h in header if h and header.count(h) > 1})
    if dupes:
        raise InputError(f"{label}: column(s) {', '.join(dupes)} appear more than once in the header")
    if not rows:
        raise InputError(f"{label}: the header is there but no data rows follow")
    table = pd.DataFrame(rows, columns=header, index=pd.Index(numbers, name="line"), dtype=str)
    table.attrs["source"] = path.name
    return table


def read_source(
    path: str | os.PathLike,
    required: Sequence[str],
    optional: Sequence[str] = (),
    what: str = "table",
    columns: Mapping[str, str] | None = None,
) -> pd.DataFrame:
    """Read a CSV or ``.xlsx`` table, apply a column mapping and check the required columns.

    Returns the DataFrame :func:`headingref.io.read_table` returns (strings, index = row number in
    the file, ``attrs['source']``).
    """
    path = Path(path)
    mapping = dict(columns or {})
    if path.suffix.lower() in EXCEL_SUFFIXES:
        if not path.is_file():
            raise InputError(f"{what} {path.name}: no such file {str(path)!r}")
        frame = _read_xlsx(path, required, what)
    elif mapping:
        frame = read_table(path, required=(), optional=(), what=what)
    else:
        return read_table(path, required=required, optional=optional, what=what)
    frame = apply_column_mapping(frame, mapping, f"{what} {path.name}")
    missing = [c for c in required if c not in frame.columns]
    if missing:
        accepted = ", ".join(list(required) + [f"[{c}]" for c in optional])
        raise InputError(
            f"{what} {path.name}: missing column(s) {', '.join(missing)}; found {', '.join(frame.columns) or 'none'}; "
            f"expected {accepted} (or map yours with --columns NAME=COLUMN,...)"
        )
    return frame


def write_table(
    target: str | os.PathLike,
    frame: pd.DataFrame,
    units: Mapping[str, str] | None = None,
    decimals: Mapping[str, int] | None = None,
    sheet: str = "headingref",
) -> Path:
    """Write ``frame`` as CSV, or as an Excel workbook when the name ends in ``.xlsx``.

    ``decimals`` rounds float columns (others keep 4 decimals in a CSV, full precision rounded to
    6 in a workbook); ``units`` adds the unit to the header in a workbook (``variation_deg (deg,
    east positive)``). Missing values are empty cells. Atomic (temporary file, then rename).
    """
    target = Path(target)
    decimals = dict(decimals or {})
    out = frame.copy()
    for name in out.columns:
        if out[name].dtype.kind == "f":
            out[name] = out[name].round(decimals.get(name, 6))
    out = spreadsheet_safe(out)  # formula-like text made inert in CSV and workbook alike (OWASP CSV injection)
    if target.suffix.lower() not in EXCEL_SUFFIXES:
        with atomic_path(target) as tmp:
            out.to_csv(tmp, index=False)
        return target
    from openpyxl import Workbook

    units = dict(units or {})
    book = Workbook(write_only=True)
    ws = book.create_sheet(sheet[:31])
    ws.append([f"{c} ({units[c]})" if units.get(c) else str(c) for c in out.columns])
    columns = [out[c].to_numpy(dtype=object) for c in out.columns]
    for i in range(len(out)):
        ws.append([_excel_value(col[i]) for col in columns])
    with atomic_path(target) as tmp:
        book.save(tmp)
    return target


def _excel_value(value):
    if value is None or value is pd.NA or value is pd.NaT:
        return None
    if isinstance(value, (float, np.floating)):
        return None if not math.isfinite(value) else float(value)
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    return str(value)


# unit words of headingref's column names (the naming rule in DEVELOPERS.md): shown unit, decimals kept
_UNIT_SUFFIXES = (("km2", "km²", 1), ("deg", "deg", 3), ("nT", "nT", 1), ("km", "km", 3), ("nm", "NM", 2),
                  ("m", "m", 2), ("ft", "ft", 0), ("percent", "%", 2), ("s", "s", 2), ("min", "min", 2))
_RATE = "_per_year"


def _unit_of(name: str) -> tuple[str, int] | None:
    text = str(name)
    if text == "decimal_year":
        return "year", 6
    rate = _RATE in text
    tokens = text.replace(_RATE, "").split("_")
    if (tokens[-1] == "deg" and ("lat" in tokens or "lon" in tokens)) or tokens[0] in ("lat", "lon") and "deg" not in tokens:
        return "deg", 6  # positions (also the pole tables' bare lat, lon): 0.000001 deg is 0.1 m
    for token in reversed(tokens[1:]):  # the unit is the last unit-like token after the first word
        for suffix, unit, places in _UNIT_SUFFIXES:
            if token == suffix:
                return (f"{unit}/year", places + 1) if rate else (unit, places)
    return None


def column_units(columns: Sequence[str]) -> dict[str, str]:
    """The unit of each column whose name carries one (``variation_deg`` -> ``deg``, ``H_nT_per_year`` -> ``nT/year``)."""
    return {str(c): found[0] for c in columns if (found := _unit_of(c)) is not None}


def column_decimals(columns: Sequence[str]) -> dict[str, int]:
    """Decimals kept per column by unit: deg 3 (0.001 deg = 3.6 arc-seconds), nT 1, km 3, NM 2, year 6, rates one more."""
    return {str(c): found[1] for c in columns if (found := _unit_of(c)) is not None}


def write_output(target: str | os.PathLike, frame: pd.DataFrame, units: Mapping[str, str] | None = None,
                 decimals: Mapping[str, int] | None = None, sheet: str = "headingref", float_format: str | None = None) -> Path:
    """A command's table output: ``.xlsx`` as a rounded workbook with units in the header, else CSV.

    A workbook gets :func:`column_units` and :func:`column_decimals` from the column names,
    overridden by ``units`` and ``decimals``; it holds at most 1,048,575 data rows (the .xlsx
    sheet limit, ECMA-376). A CSV is written by :func:`headingref.io.write_csv` (values as
    computed, ``float_format`` if given). Both make formula-like text inert. Atomic.
    """
    if Path(target).suffix.lower() not in EXCEL_SUFFIXES:
        return write_csv(target, frame, float_format=float_format)
    if len(frame) > 1_048_575:
        raise InputError(f"{target}: {len(frame):,} rows do not fit in one .xlsx sheet (1,048,575 at most); write a .csv")
    return write_table(target, frame, units={**column_units(frame.columns), **dict(units or {})},
                       decimals={**column_decimals(frame.columns), **dict(decimals or {})}, sheet=sheet)
