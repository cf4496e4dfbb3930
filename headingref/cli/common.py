"""Option helpers shared by the sub-commands."""

from __future__ import annotations

import argparse

from ..notices import CAUTION


def add_command(subparsers, name: str, help_text: str, description: str, examples: str) -> argparse.ArgumentParser:
    """Add a sub-command whose help ends with examples and the safety caution."""
    return subparsers.add_parser(
        name,
        help=help_text,
        description=description,
        epilog=f"examples:\n{examples}\n\n{CAUTION}",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )


def add_model_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--model", metavar="FILE", help="coefficient file (.shc spherical-harmonic or WMM .COF); default IGRF-14")
    parser.add_argument(
        "--extrapolate",
        action="store_true",
        help="allow dates outside the model's validity (a warning is printed)",
    )


def check_outputs(files=(), figures=(), inputs=()) -> None:
    """Refuse, before any work is done, output names that cannot be written.

    A command writes several files one after the other; checking them all first means a bad
    name (missing folder, a folder, a figure format matplotlib cannot write, the same name twice,
    or the name of an input) stops the run before any output exists, not half-way through.
    ``None`` entries (options not given) are skipped. Raises InputError naming the file.
    """
    from pathlib import Path

    from ..errors import InputError

    given = [str(t) for t in (*files, *figures) if t is not None]
    seen: dict[str, str] = {}
    read = {str(Path(p).resolve()) for p in inputs if p is not None and "\x00" not in str(p)}
    for target in given:
        if "\x00" in target:
            raise InputError(f"cannot write {target!r}: a file name cannot hold a NUL character")
        path = Path(target)
        parent = path.parent
        try:
            if not parent.is_dir():
                raise InputError(f"cannot write {target!r}: folder {str(parent)!r} does not exist")
            if path.is_dir():
                raise InputError(f"cannot write {target!r}: it is a folder; give a file name")
            key = str(path.resolve())
        except OSError as exc:  # name too long
            raise InputError(f"cannot write {target!r}: {exc.strerror or exc}") from None
        if key in read:
            raise InputError(f"cannot write {target!r}: it is an input of this command; give another file name")
        if key in seen:
            raise InputError(f"{target!r} is given for two outputs ({seen[key]!r} and {target!r}); give each its own name")
        seen[key] = target
    wanted = [str(f) for f in figures if f is not None]
    if wanted:
        from matplotlib.backend_bases import FigureCanvasBase

        formats = FigureCanvasBase.get_supported_filetypes()
        for target in wanted:
            suffix = Path(target).suffix.lower().lstrip(".")
            if suffix and suffix not in formats:
                raise InputError(
                    f"cannot draw {target!r}: matplotlib writes no '.{suffix}' files; give a name ending in .png, .pdf or .svg"
                )
