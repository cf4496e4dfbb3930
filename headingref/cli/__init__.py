"""The ``headingref`` command: a thin shell over the library.

Each sub-command lives in its own module of this package and exposes
``register(subparsers)``; it parses its options, calls the library and prints or
writes the result. Any :class:`~headingref.errors.HeadingrefError` becomes one line
on stderr and exit status 2.
"""

from __future__ import annotations

import argparse
import contextlib
import importlib
import os
import sys
import warnings

from ..errors import HeadingrefError, HeadingrefWarning
from ..notices import CAUTION

COMMANDS = ["field", "route", "zones", "poles", "base", "swing", "runways", "report", "demo"]


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="headingref",
        description="Geomagnetic variation and heading-reference workbench (IGRF-14 / WMM).",
        epilog=CAUTION,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        try:
            module = importlib.import_module(f".{name}", __name__)
        except ModuleNotFoundError as exc:
            if exc.name == f"{__name__}.{name}":
                continue  # command not built yet
            raise
        module.register(sub)
    return parser


def _show_warning(message, category, filename, lineno, file=None, line=None):
    if issubclass(category, HeadingrefWarning):
        print(f"headingref: warning: {message}", file=sys.stderr)
    else:
        print(f"headingref: warning: {category.__name__}: {message}", file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    warnings.showwarning = _show_warning
    try:
        result = args.func(args)
    except HeadingrefError as exc:
        print(f"headingref {args.command}: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("headingref: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # The reader of our output went away (``headingref field ... --csv | head``): stop quietly.
        # Python's documentation (signal module, "Note on SIGPIPE"): point stdout at devnull so the
        # flush at exit does not raise again, and exit with status 1.
        with contextlib.suppress(AttributeError, OSError, ValueError):
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 1
    return int(result or 0)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
