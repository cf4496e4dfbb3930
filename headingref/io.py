"""Reading user tables and writing outputs safely.

- :func:`read_table` reads a CSV (comma, semicolon or tab separated; UTF-8 with or
  without a byte-order mark) into a DataFrame of stripped strings whose index is the
  line number in the file, so that every later error can name its row. Its ``columns=``
  mapping (:func:`parse_column_mapping`, ``"lat=le_lat,lon=le_lon"``; applied by
  :func:`apply_column_mapping`) renames the file's columns to headingref's names first.
- :func:`float_column`, :func:`coordinate_column`, :func:`date_column` turn one
  column into a numpy array or raise :class:`InputError` naming file, line and value.
- :func:`atomic_file`, :func:`atomic_path` and the ``write_*`` helpers write to a temporary
  file beside the target (``tempfile.mkstemp``: exclusive, random name; a target that is a
  symbolic link is refused) and rename it into place, so an output is either complete or absent.
- :func:`all_or_nothing` groups the outputs of one command: all appear at its end, or none.
- :func:`spreadsheet_safe` makes text cells inert for spreadsheets (OWASP CSV injection);
  :func:`write_csv` applies it.
"""

from __future__ import annotations

import collections
import contextlib
import contextvars
import csv
import io as _io
import os
import shutil
import stat
import tempfile
from collections.abc import Iterator, Mapping, Sequence
from pathlib import Path
from typing import IO, Any

import numpy as np
import pandas as pd

from .errors import InputError
from .units import decimal_year, is_number_text, parse_coordinate, parse_number

MAX_TABLE_BYTES = 200 * 1024 * 1024


def parse_column_mapping(text: str | Mapping[str, str] | None, accepted: Sequence[str], what: str = "--columns") -> dict[str, str]:
    """``'runway=ident,lat=le_lat'`` -> ``{'runway': 'ident', 'lat': 'le_lat'}`` (lower case).

    Left of ``=``: headingref's column name (one of ``accepted``); right: the column in the file.
    A dict is checked the same way. Raises InputError naming the bad item and what is accepted.
    """
    if text is None or (isinstance(text, str) and not text.strip()):
        return {}
    if isinstance(text, Mapping):
        items = [(str(k), str(v)) for k, v in text.items()]
    elif isinstance(text, str):
        items = []
        for part in (p for p in text.split(",") if p.strip()):
            if part.count("=") != 1:
                raise InputError(f"{what}: {part.strip()!r} is not NAME=COLUMN; write e.g. runway=ident,lat=le_lat")
            left, right = part.split("=")
            items.append((left, right))
    else:
        raise InputError(f"{what} = {text!r} must be text such as 'runway=ident,lat=le_lat'")
    mapping: dict[str, str] = {}
    for left, right in items:
        name, column = left.strip().lower(), right.strip().lower()
        if name not in accepted:
            raise InputError(f"{what}: {name!r} is not a column headingref reads here; accepted: {', '.join(accepted)}")
        if not column:
            raise InputError(f"{what}: {name}= names no column of the file")
        if name in mapping:
            raise InputError(f"{what}: {name} is mapped twice")
        mapping[name] = column
    sources = list(mapping.values())
    dupes = sorted({c for c in sources if sources.count(c) > 1})
    if dupes:
        raise InputError(f"{what}: file column(s) {', '.join(dupes)} mapped to more than one name")
    return mapping


def apply_column_mapping(frame: pd.DataFrame, mapping: Mapping[str, str], what: str = "table") -> pd.DataFrame:
    """Rename the file's columns to headingref's names; a mapped column that is absent is an InputError.

    A file column already carrying a headingref name that another column is mapped onto is
    dropped (the mapping wins).
    """
    if not mapping:
        return frame
    columns = [str(c).strip().lower() for c in frame.columns]
    missing = [f"{src} (for {name})" for name, src in mapping.items() if src not in columns]
    if missing:
        raise InputError(f"{what}: mapped column(s) {', '.join(missing)} not in the file; found {', '.join(columns) or 'none'}")
    out = frame.copy()
    out.columns = columns
    shadowed = [name for name, src in mapping.items() if name in columns and name != src and name not in mapping.values()]
    out = out.drop(columns=shadowed)
    out = out.rename(columns={src: name for name, src in mapping.items()})
    out.attrs = dict(frame.attrs)
    return out


def read_table(  # noqa: C901 - owned by the IO work in progress (issue 13 item 7 left it alone)
    path: str | os.PathLike,
    required: Sequence[str],
    optional: Sequence[str] = (),
    what: str = "table",
    columns: str | Mapping[str, str] | None = None,
    accepted: Sequence[str] | None = None,
) -> pd.DataFrame:
    """Read a delimited text table with a header row.

    Column names are matched case-insensitively after stripping spaces. Missing
    required columns raise :class:`InputError` listing what is accepted. Columns not
    named in ``required`` or ``optional`` are kept. Blank lines are skipped.

    ``columns`` maps headingref's names to the file's (``"lat=le_lat,lon=le_lon"`` or a dict,
    read by :func:`parse_column_mapping`; the names on the left must be among
    ``accepted``, by default ``required`` + ``optional``). The file's columns are renamed right
    after the header is read, so every later check and message uses headingref's names.

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
    counts = collections.Counter(header)  # linear: a 100,000-column header is checked at once
    dupes = sorted(name for name, count in counts.items() if count > 1 and name)
    if dupes:
        raise InputError(f"{label}: column(s) {', '.join(dupes)} appear more than once in the header")
    table = pd.DataFrame(rows, columns=header, index=pd.Index(line_numbers, name="line"), dtype=str)
    if columns:
        names = list(required) + list(optional) if accepted is None else list(accepted)
        mapping = parse_column_mapping(columns, names, f"{label}: --columns")
        table = apply_column_mapping(table, mapping, label)
        header = list(table.columns)
    missing = [name for name in required if name not in header]
    if missing:
        expected = ", ".join(list(required) + [f"[{name}]" for name in optional])
        raise InputError(
            f"{label}: missing column(s) {', '.join(missing)}; found {', '.join(h for h in header if h) or 'none'}; "
            f"expected {expected} (separator , or ; detected {delimiter!r}; map other names with --columns NAME=COLUMN,...)"
        )
    if not rows:
        raise InputError(f"{label}: the header is there but no data rows follow")
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
            value = parse_number(cell, column)
        except InputError as exc:
            raise InputError(f"{_where(table, line)}: {exc}") from None
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


# --------------------------------------------------------------------------- writing outputs
#
# Every output is first written to a temporary file that ``tempfile.mkstemp`` creates beside the
# target (O_CREAT | O_EXCL with a random name, so a link planted in a shared folder is never
# followed), then renamed onto the target with ``os.replace`` (an atomic rename on POSIX: readers
# see the old file or the new one, never half of one). A target that is itself a symbolic link is
# refused (writing through it would let whoever made the link choose the file overwritten; replacing
# it would silently turn the user's link into a file); the one exception is a link under /dev or
# /proc (/dev/stdout -> /proc/self/fd/1), which like /dev/null and pipes is written directly: a
# device or stream cannot be replaced by a rename.

_ACTIVE: contextvars.ContextVar[OutputSet | None] = contextvars.ContextVar("headingref_outputs", default=None)


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def check_target(target: Path) -> str:
    """'file' (absent or regular: written through a temporary) or 'special' (written directly).

    Raises InputError for an unusable name, a missing folder, a folder, or a symbolic link.
    """
    text = str(target)
    if "\x00" in text:
        raise InputError(f"cannot write {text!r}: a file name cannot hold a NUL character")
    if not text.strip():
        raise InputError(f"cannot write {text!r}: the file name is empty")
    parent = target.parent if str(target.parent) else Path(".")
    try:
        if not parent.is_dir():
            raise InputError(f"cannot write {text!r}: folder {str(parent)!r} does not exist")
        link = target.is_symlink()
        if target.is_dir():
            raise InputError(f"cannot write {text!r}: it is a folder; give a file name")
        special = target.exists() and not target.is_file()
    except OSError as exc:  # name too long, no permission to look
        raise InputError(f"cannot write {text!r}: {exc.strerror or exc}") from None
    if link and os.path.abspath(text).startswith(("/dev/", "/proc/")):
        return "special"  # /dev/stdout, /dev/fd/1: the stream the user named, written directly
    if link:
        raise InputError(
            f"cannot write {text!r}: it is a symbolic link; give the real file name or remove the link "
            "(outputs never write through links)"
        )
    return "special" if special else "file"


def _new_temporary(target: Path) -> tuple[int, Path]:
    """Create an empty temporary file beside ``target`` (mkstemp: exclusive, random name).

    The name keeps the target's suffix (matplotlib picks the format from it). Its permissions are
    those a new file would get (0666 less the umask), not mkstemp's 0600.
    """
    parent = target.parent if str(target.parent) else Path(".")
    try:
        fd, name = tempfile.mkstemp(prefix=f".{target.stem[:60]}.", suffix=f".tmp{target.suffix[:20]}", dir=parent)
    except OSError as exc:  # no permission, read-only file system, disk full
        raise InputError(f"cannot write {str(target)!r}: {exc.strerror or exc}") from None
    with contextlib.suppress(OSError):
        os.fchmod(fd, 0o666 & ~_umask())
    return fd, Path(name)


def _same_file(fd: int, path: Path) -> bool:
    """True when ``path`` is still the regular file opened as ``fd`` (not swapped for a link)."""
    try:
        here, there = os.fstat(fd), os.lstat(path)
    except OSError:
        return False
    return stat.S_ISREG(there.st_mode) and (here.st_dev, here.st_ino) == (there.st_dev, there.st_ino)


def _cannot_write(target: Path, exc: BaseException) -> InputError:
    return InputError(f"cannot write {str(target)!r}: {one_line_reason(exc)}")


def one_line_reason(exc: BaseException) -> str:
    """The reason of a system error on one line: its strerror, else its text with line breaks folded.

    Some writers (HDF5 through h5py) put a multi-line report in the message of an OSError.
    """
    reason = " ".join(str(getattr(exc, "strerror", None) or exc).split()) or type(exc).__name__
    return reason if len(reason) <= 300 else reason[:297] + "..."


@contextlib.contextmanager
def _atomic(target: str | os.PathLike) -> Iterator[tuple[Path, int | None]]:
    """The machinery of :func:`atomic_path`: yields (path to write, mkstemp's descriptor or None for a device)."""
    target = Path(target)
    if check_target(target) == "special":
        try:
            yield target, None
        except OSError as exc:
            raise _cannot_write(target, exc) from None
        return
    fd, tmp = _new_temporary(target)
    keep = False
    try:
        try:
            yield tmp, fd
            if not _same_file(fd, tmp):
                raise InputError(f"cannot write {str(target)!r}: its temporary file {tmp.name!r} was replaced while writing")
        except OSError as exc:  # disk full, no permission, I/O error
            raise _cannot_write(target, exc) from None
        group = _ACTIVE.get()
        if group is not None:
            group._add(tmp, target)
        else:
            try:
                os.replace(tmp, target)
            except OSError as exc:
                raise _cannot_write(target, exc) from None
        keep = True
    finally:
        os.close(fd)
        if not keep:
            with contextlib.suppress(OSError):
                tmp.unlink()


@contextlib.contextmanager
def atomic_path(target: str | os.PathLike) -> Iterator[Path]:
    """Yield a temporary path beside ``target``; on success rename it onto ``target``.

    The temporary is created by ``tempfile.mkstemp`` (exclusive, random name) and keeps the
    target's suffix. On any exception the temporary file is removed and ``target`` is untouched.
    Inside :func:`all_or_nothing` the rename waits until every output of the block is written.
    A device or pipe (/dev/null, /dev/stdout) is written directly. A symbolic link as target is
    refused (see the comment above). Write errors (no permission, disk full) are InputError.
    Prefer :func:`atomic_file` where the writer takes an open file.
    """
    with _atomic(target) as (path, _fd):
        yield path


@contextlib.contextmanager
def atomic_file(target: str | os.PathLike, mode: str = "w", **open_args) -> Iterator[IO]:
    """Yield an open file for ``target`` (text ``'w'`` or binary ``'wb'``); renamed into place on success.

    Like :func:`atomic_path`, but the data go through the descriptor ``mkstemp`` returned, so not
    even a race on the temporary's name can redirect them. Closing (the last flush) is part of the
    write: a full disk is an InputError, never a silently short file.
    """
    if mode not in ("w", "wb"):
        raise ValueError("mode must be 'w' or 'wb'")
    if mode == "w":
        open_args.setdefault("encoding", "utf-8")
        open_args.setdefault("newline", "")
    with _atomic(target) as (path, fd):
        handle = open(path, mode, **open_args) if fd is None else os.fdopen(os.dup(fd), mode, **open_args)  # noqa: SIM115
        try:
            yield handle
        except BaseException:
            with contextlib.suppress(OSError):
                handle.close()
            raise
        handle.close()


class OutputSet:
    """The outputs of one :func:`all_or_nothing` block: temporaries waiting to replace their targets."""

    def __init__(self) -> None:
        self._pending: list[tuple[Path, Path]] = []

    def _add(self, tmp: Path, target: Path) -> None:
        self._pending.append((tmp, target))

    def _discard(self) -> None:
        for tmp, _ in self._pending:
            with contextlib.suppress(OSError):
                tmp.unlink()
        self._pending.clear()

    def _commit(self) -> None:
        """Rename every temporary onto its target; if one rename fails, put the earlier ones back.

        Each existing target is first hard-linked (or, where links are refused, copied) to a backup
        beside it, so a failed rename (an immutable file, a folder turned read-only) restores the old
        files and removes the new ones: all outputs change, or none does.
        """
        backups: list[tuple[Path, Path | None]] = []  # (target, backup or None when it did not exist)
        done: list[tuple[Path, Path | None]] = []
        try:
            for _tmp, target in self._pending:
                backup = None
                if target.exists():
                    fd, backup = _new_temporary(target)
                    os.close(fd)
                    try:
                        backup.unlink()
                        os.link(target, backup)
                    except OSError:
                        shutil.copy2(target, backup)
                backups.append((target, backup))
            for (tmp, target), (_, backup) in zip(self._pending, backups, strict=True):
                os.replace(tmp, target)
                done.append((target, backup))
        except (OSError, InputError) as exc:
            failed = self._pending[len(done)][1] if len(done) < len(self._pending) else self._pending[-1][1]
            for target, backup in reversed(done):
                with contextlib.suppress(OSError):
                    if backup is None:
                        target.unlink()
                    else:
                        os.replace(backup, target)
            self._discard()
            if isinstance(exc, InputError):
                raise
            raise InputError(f"{_cannot_write(failed, exc)}; no output of this run was changed") from None
        finally:
            for _, backup in backups:
                if backup is not None:
                    with contextlib.suppress(OSError):
                        backup.unlink()
        self._pending.clear()


@contextlib.contextmanager
def all_or_nothing() -> Iterator[OutputSet]:
    """Make every output written in the block (by :func:`atomic_path` and the ``write_*`` helpers)
    appear together when the block ends, or none of them if anything in it fails.

    A command with several outputs (``route --output --plot``) wraps its writing in this, so an
    unwritable folder or a full disk half-way leaves the old files as they were. Devices are still
    written directly. Nested blocks join the outermost one.
    """
    if _ACTIVE.get() is not None:
        yield _ACTIVE.get()
        return
    group = OutputSet()
    token = _ACTIVE.set(group)
    try:
        yield group
    except BaseException:
        _ACTIVE.reset(token)
        group._discard()
        raise
    _ACTIVE.reset(token)
    group._commit()


# OWASP "CSV Injection": a spreadsheet reads a cell that starts with = + - @ (or a tab or carriage
# return before one) as a formula. Such text cells get a leading apostrophe, which spreadsheets show
# as text and which pandas/csv readers keep visibly. Numbers, and text that is a plain number
# ("-12.5"), are left as they are.
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def spreadsheet_safe_text(value: Any) -> Any:
    """A text cell made inert for spreadsheets (OWASP CSV injection); other values unchanged.

    Text that is a plain number (``-12.5``, :func:`headingref.units.is_number_text`) or only
    dashes (``--``) cannot hold a formula and is kept as it is.
    """
    if (isinstance(value, str) and value.startswith(_FORMULA_START) and not is_number_text(value)
            and value.strip("-")):
        return "'" + value
    return value


def spreadsheet_safe(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy of ``frame`` whose text cells and column names cannot run as spreadsheet formulas.

    Only object, string and categorical columns are touched; numeric columns (negative numbers
    included) are written as numbers.
    """
    out = frame.copy(deep=False)
    for i in range(frame.shape[1]):
        series = frame.iloc[:, i]
        kind = series.dtype
        if isinstance(kind, pd.CategoricalDtype):
            series = series.astype(object)
        elif not pd.api.types.is_string_dtype(kind):
            continue
        if series.map(lambda v: spreadsheet_safe_text(v) is not v).any():
            out.isetitem(i, series.map(spreadsheet_safe_text))
    out.columns = [spreadsheet_safe_text(c) for c in frame.columns]
    if pd.api.types.is_string_dtype(frame.index.dtype):
        out.index = frame.index.map(spreadsheet_safe_text)
    return out


def write_text(target: str | os.PathLike, text: str) -> Path:
    """Write text (UTF-8) atomically."""
    with atomic_file(target, "w", newline=None) as handle:
        handle.write(text)
    return Path(target)


def write_csv(target: str | os.PathLike, frame: pd.DataFrame, index: bool = False, float_format: str | None = None) -> Path:
    """Write a DataFrame as CSV atomically, text cells made safe for spreadsheets (:func:`spreadsheet_safe`)."""
    with atomic_file(target, "w") as handle:
        spreadsheet_safe(frame).to_csv(handle, index=index, float_format=float_format)
    return Path(target)
