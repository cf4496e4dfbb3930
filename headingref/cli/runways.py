"""``headingref runways``: check runway designators against the magnetic azimuth and forecast changes."""

from __future__ import annotations

EXAMPLES = """\
  headingref runways --input runways.csv --date 2026-12-02 --horizon 10 --output checked.csv
  headingref runways --input runways.csv --date 2026-12-02 --horizon 30 --extrapolate --output checked.csv \\
      --plot azimuths.png --plot-runways "NORDVIK 09,TUNDRA-LAKE 12" --tolerance 0.5"""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "runways",
        help_text="runway designators: does the number fit the magnetic azimuth, and when will it change",
        description=(
            "For each runway end: true azimuth of the centre line (WGS84 geodesic towards the opposite threshold), "
            "variation at the runway's midpoint, magnetic azimuth, the designator it implies (whole number nearest "
            "one tenth of the magnetic azimuth, 36 for north, two digits), whether the published one matches, the "
            "margin to the nearest rounding boundary, whether reciprocal ends agree, and the first date the implied "
            "designator changes. Bad rows are listed with their reason; the rest are checked. "
            "CSV columns: airport, runway, lat, lon and either end_lat, end_lon or true_bearing_deg [, elevation "
            "(metres, or '1476 ft')]."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", required=True, metavar="CSV", help="runway ends, one row per end")
    parser.add_argument("--date", required=True, help="check date (YYYY-MM-DD or decimal year)")
    parser.add_argument("--horizon", type=float, default=10.0, metavar="YEARS", help="forecast length in years (default 10)")
    parser.add_argument("--output", metavar="CSV", help="checked table, one row per input row")
    parser.add_argument("--plot", metavar="FILE", help="figure of magnetic azimuth against time (.png, .pdf, .svg)")
    parser.add_argument(
        "--plot-runways",
        metavar="LIST",
        help="ends to plot, comma-separated 'AIRPORT RWY' (default: soonest changes, then smallest margins)",
    )
    parser.add_argument(
        "--tolerance",
        type=float,
        default=None,
        metavar="DEG",
        help="half-width of the 'on boundary' band around each rounding boundary (default 0.25)",
    )
    parser.add_argument("--list", type=int, default=20, metavar="N", help="changes to print (default 20; the table has all)")
    add_model_options(parser)
    parser.set_defaults(func=run)


def run(args) -> int:
    from ..io import write_csv
    from ..notices import CAUTION
    from ..runways import BOUNDARY_TOLERANCE_DEG, check_runways
    from .common import check_outputs

    check_outputs(files=[args.output], figures=[args.plot], inputs=[args.input, args.model])
    tolerance = BOUNDARY_TOLERANCE_DEG if args.tolerance is None else args.tolerance
    result = check_runways(
        args.input,
        args.date,
        horizon_years=args.horizon,
        model=args.model,
        tolerance_deg=tolerance,
        allow_extrapolation=args.extrapolate,
    )
    figure = None
    if args.plot:
        from ..plots.runways import runway_bearing_figure

        names = [part.strip() for part in args.plot_runways.split(",") if part.strip()] if args.plot_runways else None
        figure = runway_bearing_figure(result, names)
    print(result.summary_text())
    print()
    print(result.changes_text(limit=max(0, args.list)))
    errors = result.table[result.table["status"] == "error"]
    if len(errors):
        print()
        print(f"Rows not checked ({len(errors)}):")
        for row in errors.head(max(0, args.list)).itertuples():
            print(f"  {row.input_row}: {row.reason}")
        if len(errors) > args.list:
            print(f"  ... and {len(errors) - args.list} more (see the status and reason columns)")
    print()
    print(CAUTION)
    if args.output:
        write_csv(args.output, result.table, float_format="%.4f")
        print(f"wrote {args.output}")
    if figure is not None:
        from ..plots.runways import save_figure

        save_figure(figure, args.plot)
        print(f"wrote {args.plot}")
    return 0
