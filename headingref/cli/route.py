"""``headingref route``: a route leg by leg in true, magnetic and grid references, with the field along it."""

from __future__ import annotations

EXAMPLES = """\
  headingref route --input route.csv --date 2026-12-02 --output legs.csv
  headingref route --input route.csv --date 2026-12-02 --grid polar:-45 --spacing 5 --alt FL350 \\
      --output legs.csv --samples samples.csv --geojson route.geojson --kml route.kml --plot route.png --profile profile.png
  headingref route --input route.csv --date 2027.5 --rhumb --grid lcc:60,75,15 --output legs.csv
  headingref route --input plan.gpx --route "TM101" --date 2026-12-02 --output legs.csv"""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "route",
        help_text="courses leg by leg (true, magnetic, grid), variation, grivation and weak-field stretches",
        description=(
            "Follow a route along WGS84 geodesics (or rhumb lines with --rhumb), sample every leg and give "
            "its distance, its true, magnetic and grid courses, the variation and grivation (east positive) at "
            "the start, middle and end, the least horizontal field, the largest declination uncertainty and "
            "the stretches in the caution (H < 6000 nT) and blackout (H < 2000 nT) zones. "
            "Route CSV columns: name, lat, lon and an optional height: alt with a unit in every value (450 m, "
            "35000 ft, FL350, FL350 ISA-20) or alt_ft / alt_m / alt_km holding plain numbers in that unit; a bare "
            "number under alt is refused. Coordinates: decimal degrees, degrees/minutes/seconds with N/S/E/W, or "
            "the compact forms 7443N 09458W and N7443.0 W09458.0."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", required=True, metavar="FILE",
                        help="waypoints in order: a CSV (name, lat, lon [, alt]) or a GPX, KML or GeoJSON route file")
    parser.add_argument("--columns", metavar="MAP", help="column mapping NAME=COLUMN,... (e.g. name=ident,lat=wp_lat,lon=wp_lon)")
    parser.add_argument("--route", metavar="NAME", help="which route, track or line of a GPX/KML/GeoJSON file holding several")
    parser.add_argument("--date", required=True, help="date of the flight (YYYY-MM-DD or decimal year)")
    parser.add_argument(
        "--grid",
        help="grid for grid courses and grivation: auto, polar, polar:LON, polar-south[:LON], lcc:LAT1,LAT2,LON0, "
        "utm:ZONE[N|S], tm:LON0, EPSG:NNNN (default auto: polar grid on Greenwich of the pole the route comes "
        "nearest to; a polar grid given here and used over 60 deg from its pole warns)",
    )
    parser.add_argument("--rhumb", action="store_true", help="follow rhumb lines (constant true course) instead of geodesics")
    parser.add_argument("--spacing", type=float, default=10.0, metavar="NM", help="greatest distance between samples (default 10 NM)")
    parser.add_argument("--alt", default="0", help="altitude of waypoints without one (km, or 35000 ft, FL350; at most 30 km; default 0)")
    parser.add_argument("--output", required=True, metavar="FILE", help="legs table (.csv, or .xlsx: rounded, units in the header)")
    parser.add_argument("--samples", metavar="CSV", help="every sample point along the route")
    parser.add_argument("--geojson", metavar="FILE", help="legs as GeoJSON lines (cut at the antimeridian) and waypoints")
    parser.add_argument("--kml", metavar="FILE", help="legs, weak-field stretches (own styles) and waypoints as KML 2.2")
    parser.add_argument("--plot", metavar="PNG", help="route map with isogonic lines and weak-field zones")
    parser.add_argument("--profile", metavar="PNG", help="variation, H and declination uncertainty along the route")
    add_model_options(parser)
    parser.set_defaults(func=run)


def leg_table_text(legs) -> str:
    """The legs as a fixed-width text table: courses as three digits, variation and grivation with E/W."""
    from ..headings import format_heading, format_variation

    header = (
        f"{'leg':>3}  {'from':<10} {'to':<10} {'NM':>7}  {'true':>4} {'mag':>4} {'grid':>4}  "
        f"{'end T/M/G':>11}  {'variation':>9} {'to':>9}  {'grivation':>9}  {'min H nT':>8} {'unc':>5}  zone"
    )
    lines = [header, "-" * len(header)]
    for i, row in enumerate(legs.itertuples(index=False), start=1):
        frm = str(legs["from"].iloc[i - 1])
        end = "/".join(format_heading(v) for v in (row.true_course_deg_end, row.magnetic_course_deg_end, row.grid_course_deg_end))
        lines.append(
            f"{i:>3}  {frm[:10]:<10} {str(row.to)[:10]:<10} "
            f"{row.distance_nm:>7.1f}  {format_heading(row.true_course_deg):>4} {format_heading(row.magnetic_course_deg):>4} "
            f"{format_heading(row.grid_course_deg):>4}  {end:>11}  {format_variation(row.variation_deg):>9} "
            f"{format_variation(row.variation_deg_end):>9}  {format_variation(row.grivation_deg):>9}  "
            f"{row.min_horizontal_nT:>8.0f} {row.max_declination_uncertainty_deg:>4.1f}°  {row.zone}"
        )
    return "\n".join(lines)


def run(args) -> int:
    import json

    from ..elements import BLACKOUT_NT, CAUTION_NT
    from ..io import all_or_nothing, write_text
    from ..notices import CAUTION
    from ..routes import route, route_geojson, route_kml
    from ..tables import write_output
    from .common import check_outputs

    check_outputs(files=[args.output, args.samples, args.geojson, args.kml], figures=[args.plot, args.profile],
                  inputs=[args.input, args.model])
    result = route(
        args.input,
        args.date,
        alt_km=args.alt,
        grid=args.grid,
        spacing_nm=args.spacing,
        path="rhumb" if args.rhumb else "geodesic",
        model=args.model,
        allow_extrapolation=args.extrapolate,
        route_name=args.route,
        columns=args.columns,
    )
    legs = result.legs
    geojson_text = json.dumps(route_geojson(result), indent=1) if args.geojson else None
    kml_text = route_kml(result) if args.kml else None
    total = legs.distance_nm.sum()
    print(
        f"Route {legs['from'].iloc[0]} to {legs['to'].iloc[-1]}: {len(legs)} legs, {total:,.1f} NM, "
        f"{legs.attrs['path']}, grid {legs.attrs['grid']}, decimal year {legs.attrs['decimal_year']:.3f}"
    )
    print(leg_table_text(legs))
    print("courses in degrees (true, magnetic, grid) at the start and end of each leg; variation and grivation east positive")
    for i, row in enumerate(legs.itertuples(index=False), start=1):
        if row.caution_stretches_nm:
            text = f"  leg {i}: H below {CAUTION_NT:g} nT over {row.caution_stretches_nm} NM from its start"
            if row.blackout_stretches_nm:
                text += f"; below {BLACKOUT_NT:g} nT (blackout) over {row.blackout_stretches_nm} NM"
            print(text)
    print(CAUTION)

    with all_or_nothing():  # every output, or none (a full disk half-way leaves the old files)
        write_output(args.output, legs)  # .xlsx: a workbook with units in the header
        if args.samples:
            write_output(args.samples, result.samples)
        if geojson_text is not None:
            write_text(args.geojson, geojson_text + "\n")
        if kml_text is not None:
            write_text(args.kml, kml_text)
        if args.plot or args.profile:
            import matplotlib

            matplotlib.use("Agg")
            from ..plots.route import plot_route_map, plot_route_profile, save_figure

            if args.plot:
                save_figure(plot_route_map(result, model=args.model), args.plot)
            if args.profile:
                save_figure(plot_route_profile(result), args.profile)
    return 0
