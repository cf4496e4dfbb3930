"""``headingref base``: compass base upkeep (variation to mark, drift, resurvey) and setting-out."""

from __future__ import annotations

from ..errors import InputError
from .swing import number_list

EXAMPLES = """\
  headingref base --input sites.csv --date 2026-12-02 --output upkeep.csv
  headingref base --input sites.csv --date 2026-12-02 --tolerance 0.25 --resurvey-years 5 \\
      --lines 0,45,90,135,180,225,270,315 --distances 30,60 --grid polar --setting-out lines.csv
  headingref base --name "Invented apron base" --lat 69.30 --lon 16.10 --surveyed-variation 9.0E \\
      --survey-date 2024-06-01 --date 2026-12-02"""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "base",
        help_text="compass base upkeep: variation to mark, drift, resurvey date, setting-out",
        description=(
            "Carry a compass base's surveyed variation to the swing date with the model's change since the "
            "survey, round it for marking (nearest 0.5 deg by default; nearest minute for the record), find when "
            "the marked value drifts beyond the tolerance and when the base falls due for resurvey, and list "
            "setting-out points along the marked magnetic heading lines. The survey on the site governs. "
            "Sites CSV columns: name, lat, lon, surveyed_variation, survey_date [, tolerance_deg, resurvey_years] and a height: alt with a unit (35 m, 120 ft) or alt_m / alt_ft."
        ),
        examples=EXAMPLES,
    )
    parser.add_argument("--input", metavar="CSV", help="sites table (or give one site with --lat/--lon/...)")
    parser.add_argument("--columns", metavar="MAP", help="column mapping NAME=COLUMN,... (e.g. name=site,surveyed_variation=var_deg)")
    parser.add_argument("--name", default="base", help="single site: name")
    parser.add_argument("--lat", help="single site: latitude (61.2, N61°10.5′)")
    parser.add_argument("--lon", help="single site: longitude (-149.9, 149 54 W)")
    parser.add_argument("--surveyed-variation", help="single site: surveyed variation (12.5W, 12°30′W, E3.2, -12.5)")
    parser.add_argument("--survey-date", help="single site: date of the survey")
    parser.add_argument("--alt", default="0", help="single site: height above the ellipsoid (km, or with a unit: 35 m, 120 ft; at most 30 km)")
    parser.add_argument("--date", required=True, help="planned swing date (YYYY-MM-DD or decimal year)")
    parser.add_argument("--tolerance", type=float, default=None, metavar="DEG", help="tolerance on the marked variation for sites that give none (default 0.5)")
    parser.add_argument("--resurvey-years", type=float, default=None, metavar="YEARS", help="fixed resurvey interval after the survey, for sites that give none")
    parser.add_argument("--mark-step", type=float, default=0.5, metavar="DEG", help="rounding step of the marked variation (default 0.5; 1 for whole degrees)")
    parser.add_argument("--lines", metavar="LIST", help="magnetic headings of the lines to set out (default 0,30,...,330)")
    parser.add_argument("--distances", default="50,100", metavar="LIST", help="distances of the setting-out points from the centre, metres (default 50,100)")
    parser.add_argument("--grid", help="grid for grid azimuths: auto (polar grid of each base's hemisphere), polar, polar-south, polar:LON, "
                        "lcc:LAT1,LAT2,LON0, utm:33N, EPSG:NNNN")
    parser.add_argument("--output", metavar="FILE", help="upkeep table, one row per site (.csv, or .xlsx: rounded, units in the header)")
    parser.add_argument("--setting-out", metavar="CSV", help="setting-out points, one row per site, line and distance")
    add_model_options(parser)
    parser.set_defaults(func=run)


def _sites(args):
    from ..compass_base import make_site, read_sites_csv

    single = [args.lat, args.lon, args.surveyed_variation, args.survey_date]
    if args.input:
        if any(value is not None for value in single):
            raise InputError("give either --input sites.csv or one site with --lat/--lon/--surveyed-variation/--survey-date, not both")
        return read_sites_csv(args.input, tolerance_deg=args.tolerance, resurvey_years=args.resurvey_years, columns=args.columns)
    if any(value is None for value in single):
        raise InputError("no sites: give --input sites.csv, or --lat, --lon, --surveyed-variation and --survey-date for one site")
    return [
        make_site(
            args.name, args.lat, args.lon, args.surveyed_variation, args.survey_date,
            tolerance_deg=args.tolerance, resurvey_years=args.resurvey_years, alt_km=args.alt, row=f"site {args.name!r}",
        )
    ]


def _when(date: str, note: str) -> str:
    return f"{date} ({note})" if date and note else (date or note)


def run(args) -> int:
    from ..compass_base import SITE_CAUTION, base_upkeep, setting_out, setting_out_parameters
    from ..headings import format_variation
    from ..io import write_csv
    from ..tables import write_output
    from .common import check_outputs

    check_outputs(files=[args.output, args.setting_out], inputs=[args.input, args.model])
    lines = number_list(args.lines, "--lines") if args.lines else None
    distances = number_list(args.distances, "--distances")
    lines, distances, grid = setting_out_parameters(lines, distances, args.grid)  # check before the work
    sites = _sites(args)
    table = base_upkeep(sites, args.date, model=args.model, allow_extrapolation=args.extrapolate, mark_step_deg=args.mark_step)
    points = setting_out(table, lines_deg=lines, distances_m=distances, grid=grid)
    for _, row in table.iterrows():
        print(f"{row['name']} ({row.lat_deg:.4f}, {row.lon_deg:.4f}), swing {row.swing_date}")
        print(
            f"  model variation {format_variation(row.model_variation_deg)} changing {row.annual_change}; "
            f"change since survey of {row.survey_date}: {row.model_change_since_survey_deg:+.2f}°"
        )
        print(f"  mark {row.variation_to_mark} (record {row.variation_record}); tolerance {row.tolerance_deg:g}°")
        print(
            f"  surveyed {format_variation(row.surveyed_variation_deg)} on {row.survey_date} off by more than "
            f"the tolerance: {_when(row.survey_off_date, row.survey_off_note)}"
        )
        print(f"  re-marked value off by more than the tolerance: {_when(row.mark_off_date, row.mark_off_note)}")
        overdue = "  OVERDUE" if row.overdue else ""
        print(f"  resurvey due: {row.resurvey_due_date or 'not within model validity'} ({row.resurvey_reason}){overdue}")
        if row.surveys > 1:
            print(
                f"  {row.surveys} surveys: change observed since the first minus the model's change "
                f"{row.history_minus_model_deg:+.2f}°"
            )
        print(f"  uncertainty ±{row.declination_uncertainty_deg:.2f}°, zone {row.zone}")
        if row.caution != SITE_CAUTION:
            print(f"  {row.caution.replace(SITE_CAUTION, '').strip()}")
    if args.setting_out:
        print("setting-out lines use the variation marked on each base for the swing (rounded), not the unrounded prediction")
    print(SITE_CAUTION)
    if args.output:
        write_output(args.output, table)  # .xlsx: a workbook with units in the header
    if args.setting_out:
        write_csv(args.setting_out, points)
    return 0
