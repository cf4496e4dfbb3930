"""Option helpers shared by the sub-commands."""

from __future__ import annotations

import argparse
import contextlib

from ..notices import CAUTION


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose refusals are one line, like every other headingref error.

    argparse prints the whole usage block before its message; headingref prints
    ``headingref COMMAND: error: ...`` and points to ``--help`` instead (status 2, as argparse).
    """

    def error(self, message: str):
        self.exit(2, f"{self.prog}: error: {strip_controls(message)} (see {self.prog} --help)\n")


def add_command(subparsers, name: str, help_text: str, description: str, examples: str) -> argparse.ArgumentParser:
    """Add a sub-command whose help ends with examples and the safety caution.

    Its options declared ``type=float`` or ``type=int`` are read strictly (:func:`strict_float`,
    :func:`strict_int`), not by Python's lenient ``float``/``int``.
    """
    parser = subparsers.add_parser(
        name,
        help=help_text,
        description=description,
        epilog=f"examples:\n{examples}\n\n{CAUTION}",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    # argparse looks a ``type`` up in the parser's registry before calling it ("type" registry,
    # argparse.ArgumentParser.register), so every float/int option of every command goes through here.
    parser.register("type", float, strict_float)
    parser.register("type", int, strict_int)
    return parser


def strict_float(text: str) -> float:
    """Option value as a finite float: plain ASCII decimal only (``headingref.units.parse_number``).

    Python's ``float`` would take ``6_1``, Arabic-Indic or full-width digits, and ``nan`` (which
    turns a limit such as ``--max-deviation`` off: every comparison with NaN is false).
    """
    from ..errors import InputError
    from ..units import NUMBER_HELP, parse_number

    try:
        return parse_number(text, "value")
    except InputError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a plain finite number; give {NUMBER_HELP}") from None


def strict_int(text: str) -> int:
    """Option value as an integer written in plain ASCII digits (an optional sign)."""
    import re

    if not re.fullmatch(r"[+-]?[0-9]+", text.strip(), flags=re.ASCII):
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number in plain digits (such as 20)")
    return int(text)


def add_place_options(parser, input_help: str) -> None:
    """The one-place options (--lat, --lon, --alt, --date) and --input for a CSV of places."""
    parser.add_argument("--lat", help="latitude: 61.17, -33.9, N61°10.5′, 61 10 30 N, 7443N")
    parser.add_argument("--lon", help="longitude: -150.0, 149 54 30 W, E015°38′, 09458W")
    parser.add_argument("--alt", default="0", help="height above the WGS84 ellipsoid: km, or 450 m, 35000 ft, FL350 (default 0)")
    parser.add_argument("--date", help="ISO date or decimal year (default: today, UTC)")
    parser.add_argument("--input", metavar="CSV", help=input_help)


def add_model_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--model", metavar="NAME|FILE",
                        help="model name (IGRF-14, WMM2015, WMM2015v2, WMM2020, WMM2025, WMMHR2025; see 'headingref models') "
                             "or coefficient file (.shc spherical-harmonic or WMM .COF); default IGRF-14")
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
    from ..io import check_target

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
        check_target(path)  # a symbolic link is refused before any work, as at writing time
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


# --------------------------------------------------------------------------- the shell around every command
_CONTROL = __import__("re").compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f]")


def strip_controls(text: str) -> str:
    """``text`` without terminal control characters (C0 but tab and newline, DEL, C1).

    A name read from a user's file can hold an escape sequence that, echoed to a terminal, moves
    the cursor, rewrites earlier lines or retitles the window (OWASP, "Log Injection"; ECMA-48
    defines the sequences). Everything the CLI prints to a terminal passes through
    :class:`ConsoleText` (see :func:`for_console`).
    """
    return _CONTROL.sub("", text)


def for_console(stream):
    """``stream`` wrapped in :class:`ConsoleText` if it is a terminal, else ``stream`` itself.

    Only a terminal acts on control sequences; output redirected to a file or a pipe is data and is
    written as it is (and at full speed: ``field --csv`` of a million rows is not scanned).
    """
    try:
        terminal = stream.isatty()
    except (AttributeError, OSError, ValueError):
        terminal = False
    return ConsoleText(stream) if terminal else stream


class ConsoleText:
    """A text stream (stdout or stderr) that drops terminal control characters from what is written."""

    def __init__(self, stream) -> None:
        self._stream = stream

    def write(self, text: str) -> int:
        self._stream.write(strip_controls(text))
        return len(text)

    def writelines(self, lines) -> None:
        for line in lines:
            self.write(line)

    def __getattr__(self, name):
        return getattr(self._stream, name)


def empty_option(parser: argparse.ArgumentParser, args: argparse.Namespace) -> str | None:
    """The first option or argument given as an empty (or blank) string, as ``--name`` or ``NAME``; else None.

    An empty value is never what a user meant: ``--date ''`` would otherwise fall back to today and
    ``--out ''`` to the current folder. Checked for every command after argparse has parsed.
    """
    parsers = [parser]
    command = getattr(args, "command", None)
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction) and command in action.choices:
            parsers.append(action.choices[command])
    for each in parsers:
        for action in each._actions:
            value = getattr(args, action.dest, None)
            values = value if isinstance(value, list) else [value]
            if value is action.default:
                continue
            if any(isinstance(v, str) and not v.strip() for v in values):
                return max(action.option_strings, key=len) if action.option_strings else (action.metavar or action.dest)
    return None


@contextlib.contextmanager
def sigterm_as_interrupt():
    """While the block runs, SIGTERM raises :class:`Terminated` (a KeyboardInterrupt), as SIGINT does.

    Python's default SIGTERM action ends the process at once, so ``finally`` blocks never run and
    the temporaries of an atomic write (``.name.*.tmp``) or a report's staging folder stay behind.
    Raising an exception instead unwinds the stack through every clean-up. Only in the main thread
    (the signal module allows handlers nowhere else); the previous handler is restored afterwards.
    """
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, frame):
        raise Terminated()

    previous = signal.signal(signal.SIGTERM, handler)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


class Terminated(KeyboardInterrupt):
    """The process received SIGTERM (raised by :func:`sigterm_as_interrupt`)."""
