"""``headingref field``: the main field at one place or at every row of a CSV."""

from __future__ import annotations

import datetime as _dt
import sys

from .common import add_command, add_model_options

EXAMPLES = """\
  headingref field --lat 61.17 --lon -150.0 --date 2026-12-02
  headingref field --lat "N78°13.5′" --lon "015 38 E" --alt FL350 --date 2027-06-01
  headingref field --input sites.csv --date 2026-12-02 --output sites_field.csv
  headingref field --lat 80 --lon 10 --date 2026-12-02 --csv > one.csv
  headingref field --lat 70 --lon 20 --date 2027-01-01 --model WMM_2025.COF

CSV input: columns lat, lon (decimal degrees or degrees/minutes with N/S/E/W), optional
name, alt (km, or with a unit: 450 m, 35000 ft, FL350) and date (ISO or decimal year; else --date)."""


def register(subparsers) -> None:
    parser = add_command(
        subparsers,
        "field",
        "declination, inclination and intensities at places and dates",
        "The Earth's main field (IGRF-14 by default) at a place or at each row of a CSV: declination "
        "(variation, east positive), inclination, H, X, Y, Z, F, their annual rates, the WMM declination "
        "uncertainty and the weak-field zone.",
        EXAMPLES,
    )
    parser.add_argument("--lat", help="latitude: 61.17, -33.9, N61°10.5′, 61 10 30 N")
    parser.add_argument("--lon", help="longitude: -150.0, 149 54 30 W, E015°38′")
    parser.add_argument("--alt", default="0", help="height above the WGS84 ellipsoid: km, or 450 m, 35000 ft, FL350 (default 0)")
    parser.add_argument("--date", help="ISO date or decimal year (default: today, UTC)")
    parser.add_argument("--input", metavar="CSV", help="CSV of places (see below)")
    parser.add_argument("--output", metavar="CSV", help="write the full table to this CSV file")
    parser.add_argument("--csv", action="store_true", help="print CSV (machine output) instead of the readable table")
    add_model_options(parser)
    parser.set_defaults(func=run)


def _check_row_dates(table, years, model_path, extrapolate: bool) -> None:
    """Name the first row whose date lies outside the model's validity (the model says only the date)."""
    import numpy as np

    from ..errors import DateRangeError
    from ..model import load_model

    model = load_model(model_path)
    outside = (years < model.valid_from) | (years > model.valid_to)
    if outside.any() and not extrapolate:
        line = table.index[int(np.argmax(outside))]
        raise DateRangeError(
            f"{table.attrs['source']} line {line}: date {table['date'][line]!r} is outside {model.name}'s validity "
            f"{model.valid_from:g} to {model.valid_to:g}; give a date inside it, or opt in with --extrapolate"
        )


def _inputs(args):
    from .. import io
    from ..errors import InputError
    from ..units import decimal_year, parse_coordinate, parse_height_km

    default_date = args.date or _dt.datetime.now(_dt.UTC).date().isoformat()
    if args.input:
        if args.lat or args.lon:
            raise InputError("give either --input or --lat/--lon, not both")
        table = io.read_table(args.input, required=["lat", "lon"], optional=["name", "alt", "date"], what="places")
        lat = io.coordinate_column(table, "lat", "lat")
        lon = io.coordinate_column(table, "lon", "lon")
        alt = []
        for line, cell in (table["alt"].items() if "alt" in table else ((ln, "") for ln in table.index)):
            try:
                alt.append(parse_height_km(cell) if cell else 0.0)
            except InputError as exc:
                raise InputError(f"{table.attrs['source']} line {line}: {exc}") from None
        if "date" in table and (table["date"] != "").all():
            years = io.date_column(table, "date")
            _check_row_dates(table, years, getattr(args, "model", None), getattr(args, "extrapolate", False))
        else:
            if "date" in table and (table["date"] != "").any():
                raise InputError(f"{table.attrs['source']}: some rows have a date and some do not; fill every date or none")
            years = decimal_year(default_date)
        names = table["name"].tolist() if "name" in table else [f"line {n}" for n in table.index]
        return names, lat, lon, alt, years
    if not (args.lat and args.lon):
        raise InputError("give --lat and --lon (or --input CSV); see headingref field --help")
    return (
        ["place"],
        parse_coordinate(args.lat, "lat"),
        parse_coordinate(args.lon, "lon"),
        parse_height_km(args.alt),
        decimal_year(default_date),
    )


def run(args) -> int:
    import numpy as np

    from .. import io
    from ..field import field
    from ..notices import CAUTION
    from ..units import format_dm, timestamp_from_decimal_year
    from .common import check_outputs

    check_outputs(files=[args.output], inputs=[args.input, args.model])
    names, lat, lon, alt, years = _inputs(args)
    table = field(lat, lon, years, alt_km=alt, model=args.model, allow_extrapolation=args.extrapolate)
    table.insert(0, "name", names)
    if args.output:
        io.write_csv(args.output, table)
    if args.csv:
        table.to_csv(sys.stdout, index=False)
        return 0
    model_name = args.model or "IGRF-14"
    if len(table) == 1:
        r = table.iloc[0]
        when = timestamp_from_decimal_year(r.decimal_year).strftime("%Y-%m-%d")
        rate_min = r.declination_deg_per_year * 60
        declination = f"{r.declination_deg:9.3f}°" if np.isfinite(r.declination_deg) else f"{'':>10}"
        change = f"{abs(rate_min):9.1f}′/yr {'E' if rate_min >= 0 else 'W'}" if np.isfinite(rate_min) else f"{'undefined':>9}"
        lines = [
            f"Field at {format_dm(r.lat_deg, 'N', 'S', 1)} {format_dm(r.lon_deg, 'E', 'W', 1)}, "
            f"{r.alt_km:g} km above WGS84, {when} ({r.decimal_year:.3f}), model {model_name}",
            f"  declination (variation)  {declination}   {format_dm(r.declination_deg)}"
            + (f"   [{r.declination_flag}]" if r.declination_flag else ""),
            f"  annual change            {change}",
            f"  uncertainty (WMM model)  {r.declination_uncertainty_deg:9.2f}°   (1 sigma, excludes crustal anomalies)",
            f"  inclination (dip)        {r.inclination_deg:9.3f}°   ({r.inclination_deg_per_year * 60:+.1f}′/yr)",
            f"  horizontal H             {r.horizontal_nT:9.1f} nT ({r.horizontal_nT_per_year:+.1f} nT/yr)   zone: {r.zone}",
            f"  north X / east Y / down Z {r.north_nT:9.1f} / {r.east_nT:.1f} / {r.down_nT:.1f} nT",
            f"  total F                  {r.total_nT:9.1f} nT ({r.total_nT_per_year:+.1f} nT/yr)",
        ]
        print("\n".join(lines))
    else:
        view = table[["name", "lat_deg", "lon_deg", "alt_km", "decimal_year"]].copy()
        view["variation"] = [format_dm(d) for d in table.declination_deg]
        view["change_min_per_yr"] = (table.declination_deg_per_year * 60).round(1)
        view["uncert_deg"] = table.declination_uncertainty_deg.round(2)
        view["dip_deg"] = table.inclination_deg.round(2)
        view["H_nT"] = table.horizontal_nT.round(0).astype(int)
        view["zone"] = table.zone
        print(view.to_string(index=False))
    if args.output:
        print(f"wrote {args.output} ({len(table)} rows)")
    print("\n" + CAUTION, file=sys.stderr)
    return 0
