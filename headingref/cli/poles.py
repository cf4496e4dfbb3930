"""``headingref poles``: dip and geomagnetic poles at a date or over a range of years."""

from __future__ import annotations

import sys

EXAMPLES = """\
  headingref poles --date 2026-12-02
  headingref poles --years 1990:2030 --step 1 --output poles.csv --plot poles.png
  headingref poles --years 2020:2025 --step 0.5 --output poles.csv

Columns: date, pole (north|south), kind (dip|geomagnetic), lat, lon (degrees, geodetic WGS84,
east positive), decimal_year, lat_geocentric (degrees; the geocentric latitude that centred-dipole
tables such as WHOI's and NOAA NCEI's list for geomagnetic poles), horizontal_nT (H at the dip
pole found; empty for geomagnetic poles)."""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "poles",
        help_text="dip poles (H = 0) and geomagnetic poles, at a date or as tracks over years",
        description=(
            "The north and south dip poles (where the field is vertical: found by Newton's method on the "
            "ellipsoid) and geomagnetic poles (centred dipole from g10, g11, h11), at one date or every "
            "--step years from A to B."
        ),
        examples=EXAMPLES,
    )
    when = parser.add_mutually_exclusive_group(required=True)
    when.add_argument("--date", help="one date (YYYY-MM-DD or decimal year)")
    when.add_argument("--years", metavar="A:B", help="first and last year, e.g. 1990:2030")
    parser.add_argument("--step", type=float, default=1.0, metavar="YEARS", help="years between dates with --years (default 1)")
    parser.add_argument("--output", metavar="FILE", help="write the table to this file (.csv, or .xlsx: rounded, units in the header)")
    parser.add_argument("--plot", metavar="PNG", help="map of the pole tracks (both caps)")
    add_model_options(parser)
    parser.set_defaults(func=run)


def _years(text: str) -> tuple[float, float]:
    from ..errors import InputError
    from ..units import parse_number

    parts = str(text).split(":")
    try:
        if len(parts) != 2:
            raise ValueError
        # plain ASCII decimal only; nan is let through to be refused as a date by decimal_year
        return parse_number(parts[0], "--years", allow_nan=True), parse_number(parts[1], "--years", allow_nan=True)
    except (ValueError, InputError):
        raise InputError(f"--years {text!r} is not understood; give FIRST:LAST such as 1990:2030") from None


def run(args) -> int:
    import pandas as pd

    from ..notices import CAUTION
    from ..poles import TRACK_COLUMNS, dip_poles, geomagnetic_poles, pole_tracks
    from ..tables import write_output
    from ..units import format_dm
    from .common import check_outputs

    check_outputs(files=[args.output], figures=[args.plot], inputs=[args.model])

    if args.years:
        first, last = _years(args.years)
        table = pole_tracks(first, last, args.step, model=args.model, allow_extrapolation=args.extrapolate)
    else:
        dip = dip_poles(args.date, model=args.model, allow_extrapolation=args.extrapolate)
        geo = geomagnetic_poles(args.date, model=args.model, allow_extrapolation=args.extrapolate)
        table = pd.concat([dip, geo], ignore_index=True)
    table = table[list(TRACK_COLUMNS)]
    if args.output:
        write_output(args.output, table, float_format="%.6f")  # .xlsx: a workbook with units in the header
    view = table[["date", "pole", "kind"]].copy()
    view["latitude"] = [format_dm(v, "N", "S", 1) for v in table.lat]
    view["longitude"] = [format_dm(v, "E", "W", 1) for v in table.lon]
    view["lat_deg"] = table.lat.round(3)
    view["lon_deg"] = table.lon.round(3)
    view["lat_geocentric_deg"] = table.lat_geocentric.round(3)
    print(view.to_string(index=False))
    if args.output:
        print(f"wrote {args.output} ({len(table)} rows)")
    if args.plot:
        from .zones import save_plot

        save_plot("plot_pole_tracks", table, args.plot)
    print("\n" + CAUTION, file=sys.stderr)
    return 0
