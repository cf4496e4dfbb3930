"""``headingref demo``: the full report on the bundled, invented demo scenario."""

from __future__ import annotations

DEFAULT_OUT = "headingref-demo"

EXAMPLES = """\
  headingref demo                       # writes ./headingref-demo/report.html
  headingref demo --out /tmp/demo --no-progress"""


def register(subparsers) -> None:
    from .common import add_command
    from .report import add_report_options

    parser = add_command(
        subparsers,
        "demo",
        help_text="run the report on the bundled demo scenario (an invented operator)",
        description=(
            "Run the one-command report on the bundled demo scenario (data/demo/scenario.toml: an invented "
            "operator flying between invented airfields at high northern latitudes) and write the HTML "
            "report and its CSV/GeoJSON files."
        ),
        examples=EXAMPLES,
    )
    add_report_options(parser, default_out=DEFAULT_OUT)
    parser.set_defaults(func=run)


def run(args) -> int:
    from ..scenario import DEMO_SCENARIO
    from .report import run_report

    return run_report(DEMO_SCENARIO, args.out, progress=not args.no_progress)
