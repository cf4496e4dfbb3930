"""The report folder: which folders may be written, and switching a folder as a whole.

A report is built in a staging folder made with :func:`tempfile.mkdtemp` beside the report
folder (same parent, so the renames stay on one file system), then switched in: the old folder
(if any) is renamed aside, the new one renamed in, and the old one deleted. If anything fails
the old folder is put back, so the report folder is the old report or the new one, never a mix.
The staging and the set-aside folders are removed in ``finally`` blocks, so an error or an
interrupt (Ctrl-C, or SIGTERM raised as an interrupt by the command line) leaves no
``.headingref-report-*`` folder behind.

Because the whole folder is replaced, :func:`check_out_dir` refuses a folder that holds a
scenario input (at any depth, links resolved) and a folder holding anything that is not an
earlier report (a report folder holds ``report.html`` and data files only).
"""

from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
import warnings
from collections.abc import Iterable, Iterator
from pathlib import Path

from ..errors import HeadingrefWarning, InputError

STAGE_PREFIX = ".headingref-report-"
REPORT_SUFFIXES = (".html", ".csv", ".geojson", ".json", ".png", ".svg")


def _resolved(path: Path, what: str) -> Path:
    try:
        return path.resolve()
    except (OSError, RuntimeError) as exc:  # a link loop, a name too long
        raise InputError(f"{what} {str(path)!r} cannot be used: {exc}") from None


def check_out_dir(out_dir: object, inputs: Iterable[Path], report_file: str) -> Path:  # noqa: C901 - owned by the report work in progress (issue 13 item 7 left it alone)
    """The report folder, resolved (links followed), or InputError naming the problem.

    Refused: no name or an empty one; a path that is not a folder; a missing parent folder; a
    folder that is, or holds, one of ``inputs``; a folder holding anything but an earlier report.
    """
    if not isinstance(out_dir, (str, os.PathLike)):
        raise InputError(f"out_dir = {out_dir!r}: give the report folder as a path (str or pathlib.Path)")
    text = os.fspath(out_dir)
    if isinstance(text, bytes) or not text.strip():
        raise InputError(f"out_dir = {text!r}: give the report folder's name (an empty name is refused)")
    if "\x00" in text:
        raise InputError(f"out_dir = {text!r}: a folder name cannot hold a NUL character")
    path = Path(text).expanduser()
    real = _resolved(path, "output folder")
    try:
        if real.exists() and not real.is_dir():
            raise InputError(f"output folder {text!r} exists and is not a folder")
        if not real.parent.is_dir():
            raise InputError(f"cannot write the report into {text!r}: folder {str(real.parent)!r} does not exist")
    except OSError as exc:
        raise InputError(f"cannot write the report into {text!r}: {exc.strerror or exc}") from None
    if real == real.parent:
        raise InputError(f"cannot write the report into {text!r}: the report replaces its whole folder; give a new folder")
    for given in inputs:
        source = _resolved(Path(given), "input")
        if source == real or source.is_relative_to(real):
            raise InputError(
                f"cannot write the report into {text!r}: it holds the scenario's input {str(source)!r}, and the report "
                "replaces the whole folder; give another folder"
            )
    if real.is_dir():
        try:
            entries = list(real.iterdir())
        except OSError as exc:
            raise InputError(f"cannot write the report into {text!r}: {exc.strerror or exc}") from None
        foreign = sorted(e.name for e in entries
                         if e.is_symlink() or not e.is_file() or e.suffix.lower() not in REPORT_SUFFIXES)
        if entries and (foreign or not (real / report_file).is_file()):
            shown = ", ".join(foreign[:3]) + (" ..." if len(foreign) > 3 else "") if foreign else f"no {report_file}"
            raise InputError(
                f"cannot write the report into {text!r}: the folder is not an earlier report ({shown}) and the report "
                "replaces the whole folder; give a new or empty folder, or an earlier report's folder"
            )
    return real


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _swap(stage: Path, real: Path) -> None:
    """Put ``stage`` in place of ``real``: old aside, new in, old deleted; old restored on failure."""
    mode = (real.stat().st_mode & 0o7777) if real.is_dir() else (0o777 & ~_umask())
    os.chmod(stage, mode)  # mkdtemp made it private (0o700)
    aside = None
    moved = False
    try:
        if real.is_dir():
            aside = Path(tempfile.mkdtemp(prefix=STAGE_PREFIX, dir=real.parent))
            os.replace(real, aside)  # POSIX rename onto an empty folder
            moved = True
        os.replace(stage, real)
    except BaseException:
        if moved and not real.exists():
            os.replace(aside, real)
        raise
    finally:
        if aside is not None:
            shutil.rmtree(aside, ignore_errors=True)
            if aside.exists():
                warnings.warn(f"the previous report was replaced but could not be deleted; remove {str(aside)!r} by hand",
                              HeadingrefWarning, stacklevel=3)


@contextlib.contextmanager
def staged(real: Path) -> Iterator[Path]:
    """Yield a staging folder beside ``real``; on success switch it in (see the module docstring).

    OSError (no permission, disk full) becomes one InputError naming the folder.
    """
    try:
        stage = Path(tempfile.mkdtemp(prefix=STAGE_PREFIX, dir=real.parent))
    except OSError as exc:
        raise InputError(f"cannot write the report into {str(real)!r}: {exc.strerror or exc}") from None
    try:
        yield stage
        _swap(stage, real)
    except OSError as exc:
        raise InputError(f"cannot write the report into {str(real)!r}: {exc.strerror or exc}") from None
    finally:
        shutil.rmtree(stage, ignore_errors=True)
