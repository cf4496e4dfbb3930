"""``headingref navaids``: VOR station declination against the model variation, and when to realign."""

from __future__ import annotations

EXAMPLES = """\
  headingref navaids --input vors.csv --date 2026-12-02 --output vors_checked.csv
  headingref navaids --input vors.xlsx --date 2026-12-02 --tolerance 2 --horizon 5 --output vors_checked.xlsx \\
      --columns ident=id,station_declination_deg=slaved_var --map vors.png"""


def register(subparsers) -> None:
    from ..navaids import DEFAULT_TOLERANCE_DEG
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "navaids",
        help_text="VOR station declination: drift of the radials from magnetic, and the date to realign",
        description=(
            "For each VOR: the model variation (east positive) at the station, the difference variation minus "
            "station declination, whether it exceeds the tolerance, and the first day within the horizon it will. "
            "Input CSV or .xlsx: ident, lat, lon, station_declination_deg (east positive, or 12.5W) "
            "[, alignment_date, elevation with a unit (or elevation_m / elevation_ft)]. "
            f"Default tolerance {DEFAULT_TOLERANCE_DEG:g} deg: NAV CANADA AIC 12/08 keeps VOR variation within "
            "+/-3 deg (as summarised publicly); use your authority's figure."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", required=True, metavar="FILE", help="stations, one row each (.csv or .xlsx)")
    parser.add_argument("--date", required=True, help="check date (YYYY-MM-DD or decimal year)")
    parser.add_argument("--tolerance", type=float, default=DEFAULT_TOLERANCE_DEG, metavar="DEG",
                        help=f"largest acceptable |variation - station declination| (default {DEFAULT_TOLERANCE_DEG:g})")
    parser.add_argument("--horizon", type=float, default=10.0, metavar="YEARS", help="look-ahead in years (default 10)")
    parser.add_argument("--columns", metavar="MAP", help="column mapping NAME=COLUMN,... (e.g. ident=id,lat=latitude)")
    parser.add_argument("--output", metavar="FILE", help="checked table (.csv, or .xlsx with units in the header)")
    parser.add_argument("--map", metavar="FILE", help="map of the stations coloured by the difference (.png, .pdf, .svg)")
    parser.add_argument("--list", type=int, default=20, metavar="N", help="stations to print (default 20)")
    add_model_options(parser)
    parser.set_defaults(func=run)


def run(args) -> int:
    from ..navaids import check_navaids, write_navaid_table
    from ..notices import CAUTION
    from .common import check_outputs

    check_outputs(files=[args.output], figures=[args.map], inputs=[args.input, args.model])
    result = check_navaids(args.input, args.date, tolerance_deg=args.tolerance, horizon_years=args.horizon,
                           model=args.model, allow_extrapolation=args.extrapolate, columns=args.columns)
    figure = None
    if args.map:
        from ..plots.navaids import navaid_map_figure

        figure = navaid_map_figure(result)
    print(result.summary_text())
    print()
    print(result.table_text(limit=max(0, args.list)))
    print()
    print(CAUTION)
    if args.output:
        write_navaid_table(args.output, result)
        print(f"wrote {args.output}")
    if figure is not None:
        from ..plots import save_figure

        save_figure(figure, args.map)
        print(f"wrote {args.map}")
    return 0
