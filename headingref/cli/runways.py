"""``headingref runways``: check runway designators against the magnetic azimuth and forecast changes."""

from __future__ import annotations

EXAMPLES = """\
  headingref runways --input runways.csv --date 2026-12-02 --horizon 10 --output checked.csv
  headingref runways --input runways.xlsx --date 2026-12-02 --horizon 3 --output checked.xlsx \\
      --columns airport=ident,end1_runway=le_id,end1_lat=le_lat,end1_lon=le_lon,end2_runway=he_id,end2_lat=he_lat,end2_lon=he_lon
  headingref runways --airport NORDVIK --runway 09 --lat 69.305 --lon 16.12 --end-lat 69.302141 --end-lon 16.180285 \\
      --date 2026-12-02
  headingref runways --input runways.csv --date 2026-12-02 --horizon 30 --extrapolate --band-sigmas 1 \\
      --plot azimuths.png --plot-runways "NORDVIK 09,TUNDRA-LAKE 12\""""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "runways",
        help_text="runway designators: does the number fit the magnetic azimuth, since when not, and when will it change",
        description=(
            "For each runway end: true azimuth of the centre line at the runway's midpoint (WGS84 geodesic between "
            "the thresholds), the variation at that same point, the magnetic azimuth, and the designator it implies "
            "(whole number nearest one tenth of the magnetic azimuth, 36 for north, two digits). Reciprocal ends are "
            "decided as one runway (mean of both ends' azimuths), so both get one verdict and the same change dates. "
            "Verdicts: match, match near boundary, mismatch within band, mismatch. A painted designator that no "
            "longer fits gets the last date it did (back to the model's start). Every change within the horizon is "
            "listed. Bad rows are listed with their reason; the rest are checked. "
            "Input (.csv or .xlsx): one row per end with airport, runway, lat, lon and either end_lat, end_lon or "
            "true_bearing_deg [, elevation with a unit, or elevation_m / elevation_ft]; or one row per runway with "
            "airport, end1_runway, end1_lat, end1_lon, end2_runway, end2_lat, end2_lon. Map other names with --columns."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", metavar="FILE", help="runway ends or runways (.csv or .xlsx)")
    quick = parser.add_argument_group("one runway from the command line (instead of --input)")
    quick.add_argument("--airport", help="airport name or identifier")
    quick.add_argument("--runway", help="painted designator of the end at --lat/--lon (e.g. 09, 27L)")
    quick.add_argument("--lat", help="threshold latitude (degrees or DMS text)")
    quick.add_argument("--lon", help="threshold longitude")
    quick.add_argument("--end-lat", help="opposite threshold latitude (the reciprocal end is checked too)")
    quick.add_argument("--end-lon", help="opposite threshold longitude")
    quick.add_argument("--true-bearing", metavar="DEG", help="true azimuth of the centre line instead of --end-lat/--end-lon")
    quick.add_argument("--elevation", help="runway elevation with a unit (e.g. '450 m', '1476 ft')")
    parser.add_argument("--date", required=True, help="check date (YYYY-MM-DD or decimal year)")
    parser.add_argument("--horizon", type=float, default=10.0, metavar="YEARS", help="forecast length in years (default 10)")
    parser.add_argument("--columns", metavar="MAP", help="column mapping NAME=COLUMN,... (e.g. runway=ident,lat=le_lat)")
    parser.add_argument("--output", metavar="FILE", help="checked table, one row per end (.csv, or .xlsx with units in the header)")
    parser.add_argument("--changes", metavar="FILE", help="every designator change in the horizon, one row each (.csv or .xlsx)")
    parser.add_argument("--plot", metavar="FILE", help="figure of magnetic azimuth against time (.png, .pdf, .svg)")
    parser.add_argument(
        "--plot-runways",
        metavar="LIST",
        help="ends to plot, comma-separated 'AIRPORT RWY' (default: soonest changes, then smallest margins)",
    )
    parser.add_argument(
        "--band",
        dest="band",
        type=float,
        default=None,
        metavar="DEG",
        help="half-width of the band either side of each rounding boundary (default 0.25)",
    )
    parser.add_argument("--band-sigmas", type=float, default=None, metavar="K",
                        help="band = K x the local declination uncertainty (1 sigma) instead of a fixed --band")
    parser.add_argument("--no-last-fit", action="store_true", help="skip the search for the last date a stale designator fitted")
    parser.add_argument("--list", type=int, default=20, metavar="N", help="changes and stale ends to print (default 20)")
    add_model_options(parser)
    parser.set_defaults(func=run)


def _one_runway(args):
    """The quick check's one or two ends as a DataFrame (both ends when the opposite threshold is given)."""
    import pandas as pd

    from ..errors import InputError
    from ..runways import reciprocal_designator

    missing = [name for name in ("airport", "runway", "lat", "lon") if getattr(args, name) in (None, "")]
    if missing:
        raise InputError(f"give --input FILE, or one runway with --airport, --runway, --lat, --lon (missing: "
                         f"{', '.join('--' + m for m in missing)}) and --end-lat/--end-lon or --true-bearing")
    has_end = args.end_lat is not None or args.end_lon is not None
    if has_end and (args.end_lat is None or args.end_lon is None):
        raise InputError("give both --end-lat and --end-lon (the opposite threshold)")
    if not has_end and args.true_bearing is None:
        raise InputError("give --end-lat and --end-lon (the opposite threshold) or --true-bearing DEG")
    row = {"airport": args.airport, "runway": args.runway, "lat": args.lat, "lon": args.lon,
           "end_lat": args.end_lat or "", "end_lon": args.end_lon or "", "true_bearing_deg": args.true_bearing or "",
           "elevation": args.elevation or ""}
    rows = [row]
    if has_end:
        rows.append({**row, "runway": reciprocal_designator(args.runway), "lat": args.end_lat, "lon": args.end_lon,
                     "end_lat": args.lat, "end_lon": args.lon, "true_bearing_deg": ""})
    frame = pd.DataFrame(rows, dtype=object)
    frame.attrs["source"] = "command line"
    return frame


def run(args) -> int:
    from ..errors import InputError
    from ..notices import CAUTION
    from ..runways import BOUNDARY_TOLERANCE_DEG, check_runways, write_runway_table
    from .common import check_outputs

    quick = any(getattr(args, n) is not None for n in ("airport", "runway", "lat", "lon", "end_lat", "end_lon", "true_bearing"))
    if args.input and quick:
        raise InputError("give either --input FILE or one runway (--airport, --runway, --lat, --lon ...), not both")
    check_outputs(files=[args.output, args.changes], figures=[args.plot], inputs=[args.input, args.model])
    table = args.input if args.input else _one_runway(args)
    band = BOUNDARY_TOLERANCE_DEG if args.band is None else args.band
    result = check_runways(
        table,
        args.date,
        horizon_years=args.horizon,
        model=args.model,
        tolerance_deg=band,
        allow_extrapolation=args.extrapolate,
        band_sigmas=args.band_sigmas,
        columns=args.columns,
        last_fit=not args.no_last_fit,
    )
    figure = None
    if args.plot:
        from ..plots.runways import runway_bearing_figure

        names = [part.strip() for part in args.plot_runways.split(",") if part.strip()] if args.plot_runways else None
        figure = runway_bearing_figure(result, names)
    limit = max(0, args.list)
    print(result.summary_text())
    if not args.input:
        print()
        for row in result.table.itertuples():
            print(f"  {row.airport} {row.runway}: implied {row.designator_implied or '-'} ({row.verdict or row.status}), "
                  f"runway magnetic {row.runway_magnetic_deg:.2f} deg, margin {row.margin_deg:.2f} deg"
                  + (f", last fitted {row.last_fit_date}" if row.last_fit_date else ""))
    print()
    print(result.changes_text(limit=limit))
    if result.summary["stale"]:
        print()
        print(result.stale_text(limit=limit))
    errors = result.table[result.table["status"] == "error"]
    if len(errors):
        print()
        print(f"Rows not checked ({len(errors)}):")
        for row in errors.head(limit).itertuples():
            print(f"  {row.input_row}: {row.reason}")
        if len(errors) > limit:
            print(f"  ... and {len(errors) - limit} more (see the status and reason columns)")
    print()
    print(CAUTION)
    if args.output:
        write_runway_table(args.output, result)
        print(f"wrote {args.output}")
    if args.changes:
        write_runway_table(args.changes, result, changes=True)
        print(f"wrote {args.changes}")
    if figure is not None:
        from ..plots import save_figure

        save_figure(figure, args.plot)
        print(f"wrote {args.plot}")
    return 0
