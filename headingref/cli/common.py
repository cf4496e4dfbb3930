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
