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

COMMANDS = ["field", "route", "zones", "poles", "base", "swing", "runways", "navaids", "report", "demo", "models", "compare"]


def build_parser() -> argparse.ArgumentParser:
    from .common import OneLineParser

    parser = OneLineParser(
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
    from ..io import one_line_reason
    from .common import Terminated, empty_option, for_console, sigterm_as_interrupt

    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    empty = empty_option(parser, args)
    if empty:
        print(f"headingref {args.command}: error: {empty} is empty; give a value (or leave the option out)", file=sys.stderr)
        return 2
    warnings.showwarning = _show_warning
    stdout, stderr = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = for_console(stdout), for_console(stderr)
    try:
        with sigterm_as_interrupt():
            result = args.func(args)
            try:
                sys.stdout.flush()  # a full disk or closed stream behind stdout shows here, not at exit
            except BrokenPipeError:
                raise
            except OSError as exc:
                _silence(stdout)
                print(f"headingref {args.command}: error: writing to standard output: {one_line_reason(exc)}", file=sys.stderr)
                return 2
    except HeadingrefError as exc:
        print(f"headingref {args.command}: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt as exc:
        terminated = isinstance(exc, Terminated)
        print(f"headingref: {'terminated' if terminated else 'interrupted'}", file=sys.stderr)
        return 143 if terminated else 130
    except BrokenPipeError:
        # The reader of our output went away (``headingref field ... --csv | head``): stop quietly.
        # Python's documentation (signal module, "Note on SIGPIPE"): point stdout at devnull so the
        # flush at exit does not raise again, and exit with status 1.
        _silence(stdout)
        return 1
    except OSError as exc:
        # Standard output on a full disk (``field --csv > /dev/full``) or another system error the
        # command did not turn into an InputError: one line, and no second error at exit.
        where = f" {exc.filename}:" if exc.filename else ""
        try:
            stdout.flush()
        except (OSError, ValueError):  # the error came from a print to a full or closed stdout
            where = " writing to standard output:"
            _silence(stdout)
        print(f"headingref {args.command}: error:{where} {one_line_reason(exc)}", file=sys.stderr)
        return 2
    finally:
        sys.stdout, sys.stderr = stdout, stderr
    return int(result or 0)


def _silence(stream) -> None:
    """Point ``stream``'s descriptor at devnull and drop what it still buffers (it cannot be written)."""
    with contextlib.suppress(AttributeError, OSError, ValueError):
        os.dup2(os.open(os.devnull, os.O_WRONLY), stream.fileno())
    with contextlib.suppress(AttributeError, OSError, ValueError):
        stream.flush()


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
