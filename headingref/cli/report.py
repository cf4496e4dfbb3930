"""``headingref report``: run every job of a scenario and write the HTML report and data files."""

from __future__ import annotations

import sys
from pathlib import Path

EXAMPLES = """\
  headingref report my_study.toml --out my_study_report
  headingref report data/demo/scenario.toml --out /tmp/demo --no-progress
  (the scenario format is described in data/demo/README.md)"""


def add_report_options(parser, default_out: str | None) -> None:
    """Options shared by ``report`` and ``demo``."""
    parser.add_argument(
        "--out", metavar="DIR", required=default_out is None, default=default_out,
        help="folder for report.html and the CSV/GeoJSON files (created if missing; an earlier report there is "
        "replaced as a whole; a folder holding the scenario's inputs or other files is refused)"
        + (f"; default {default_out}" if default_out else ""),
    )
    parser.add_argument("--no-progress", action="store_true", help="do not show the progress bar")


def register(subparsers) -> None:
    from .common import add_command

    parser = add_command(
        subparsers,
        "report",
        help_text="one-command report: scenario TOML -> HTML report + CSV + GeoJSON",
        description=(
            "Run every analysis a scenario file names (routes, weak-field zones and poles, the heading "
            "error budget, compass bases, a compass swing, runway designators, VOR station declination, a "
            "comparison of field models) and write a self-contained "
            "HTML report opening with a one-minute summary, plus the CSV and GeoJSON outputs."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("scenario", metavar="SCENARIO.toml", help="scenario file")
    add_report_options(parser, default_out=None)
    parser.set_defaults(func=run)


def run_report(scenario: str | Path, out: str | Path, progress: bool) -> int:
    """Build the report, print its summary; exit status 1 when a section could not be made."""
    from ..report import build_report
    from .common import strip_controls

    result = build_report(scenario, out, progress=progress)
    print(strip_controls(result.summary_text()))
    for key, why in result.failed.items():
        print(f"headingref report: error: section {key} could not be made: {strip_controls(why)}", file=sys.stderr)
    print(f"report: {result.html}  ({len(result.files)} files in {result.out_dir})")
    return 1 if result.failed else 0


def run(args) -> int:
    return run_report(args.scenario, args.out, progress=not args.no_progress)
