"""``headingref compare``: several field models at the same places, one row per place and model."""

from __future__ import annotations

from .common import add_command

EXAMPLES = """\
  headingref compare --lat 64.5 --lon -20 --date 2026-06-01
  headingref compare --models IGRF-14,WMM2025,WMMHR2025 --input sites.csv --date 2026-06-01 --output compare.csv
  headingref compare --models WMM2025,WMMHR2025 --map 60:72:-30:0 --step 0.05 --date 2026-06-01 --plot diff.png

CSV input as for 'headingref field' (lat, lon, optional name, alt with a unit, date). Output columns:
place, name, lat_deg, lon_deg, alt_km, decimal_year, model, declination_deg, inclination_deg,
horizontal_nT, total_nT, declination_uncertainty_deg, declination_diff_deg and horizontal_diff_nT
(this model minus the first), combined_uncertainty_deg (root-sum-square of the two models' 1 sigma),
significant (|difference| above it), zone, declination_flag."""


def register(subparsers) -> None:
    parser = add_command(
        subparsers,
        "compare",
        "compare field models (e.g. IGRF-14, WMM2025, WMMHR2025) at places or as a difference map",
        "Declination, H and the declination uncertainty of several models at one place or each row of a "
        "CSV, with each model's difference to the first; or, with --map, the declination difference of the "
        "first two models on a grid, drawn with coastlines (--plot) or written as NetCDF (--netcdf).",
        EXAMPLES,
    )
    parser.add_argument("--models", default="IGRF-14,WMM2025,WMMHR2025",
                        help="comma-separated model names or files; the first is the reference (default IGRF-14,WMM2025,WMMHR2025)")
    parser.add_argument("--lat", help="latitude: 61.17, -33.9, N61°10.5′")
    parser.add_argument("--lon", help="longitude: -150.0, E015°38′")
    parser.add_argument("--alt", default="0", help="height above the WGS84 ellipsoid: km, or 450 m, 35000 ft, FL350 (default 0)")
    parser.add_argument("--date", help="ISO date or decimal year (default: today, UTC)")
    parser.add_argument("--input", metavar="CSV", help="CSV of places (as for 'headingref field')")
    parser.add_argument("--output", metavar="FILE", help="write the long table to this file (.csv, or .xlsx: rounded, units in the header)")
    parser.add_argument("--map", metavar="LAT0:LAT1:LON0:LON1", help="difference map of the first two models over this box (degrees)")
    parser.add_argument("--step", type=float, default=0.25, metavar="DEG", help="grid step of --map in degrees (default 0.25; 1 arc-minute is 0.016667)")
    parser.add_argument("--plot", metavar="PNG", help="with --map: draw the difference map with coastlines")
    parser.add_argument("--netcdf", metavar="NC", help="with --map: write the difference grid as NetCDF")
    parser.add_argument("--extrapolate", action="store_true", help="allow dates outside a model's validity (a warning is printed)")
    parser.set_defaults(func=run)


def _box(text: str):
    import numpy as np

    from ..errors import InputError

    parts = str(text).split(":")
    try:
        if len(parts) != 4:
            raise ValueError
        lat0, lat1, lon0, lon1 = (float(p) for p in parts)
    except ValueError:
        raise InputError(f"--map {text!r} is not understood; give LAT0:LAT1:LON0:LON1 such as 60:72:-30:0") from None
    if not (np.isfinite([lat0, lat1, lon0, lon1]).all() and -90 <= lat0 < lat1 <= 90 and -360 <= lon0 < lon1 <= 360):
        raise InputError(f"--map {text!r}: need -90 <= LAT0 < LAT1 <= 90 and LON0 < LON1 (degrees)")
    return lat0, lat1, lon0, lon1


def _run_map(args, models) -> int:
    import numpy as np

    from ..compare import difference_grid
    from ..errors import InputError
    from ..io import all_or_nothing
    from ..netcdf import write_netcdf
    from ..units import decimal_year

    lat0, lat1, lon0, lon1 = _box(args.map)
    if not (args.step > 0):
        raise InputError(f"--step {args.step:g}: give a positive grid step in degrees")
    lats = np.arange(lat0, lat1 + args.step / 2, args.step)
    lons = np.arange(lon0, lon1 + args.step / 2, args.step)
    import datetime as _dt

    when = decimal_year(args.date or _dt.datetime.now(_dt.UTC).date().isoformat())
    ds = difference_grid(lats, lons, when, models[0], models[1], allow_extrapolation=args.extrapolate)
    with all_or_nothing():  # both outputs appear together, or neither
        if args.netcdf:
            write_netcdf(args.netcdf, ds)  # time as a CF datetime (headingref.netcdf)
        if args.plot:
            from ..plots import save_figure
            from ..plots.compare import plot_difference_map

            save_figure(plot_difference_map(ds), args.plot)
    for written in (args.netcdf, args.plot):
        if written:
            print(f"wrote {written}")
    diff = np.abs(ds.declination_diff_deg.values)
    print(f"{models[1].name} minus {models[0].name} over {args.map} at {args.step:g} deg ({diff.size:,} nodes): "
          f"median |difference| {np.nanmedian(diff):.3f} deg, largest {np.nanmax(diff):.3f} deg; "
          f"above the combined 1 sigma at {100 * float(np.mean(ds.significant.values)):.1f}% of nodes")
    return 0


def run(args) -> int:
    import sys

    from ..compare import compare_models, parse_models
    from ..errors import InputError
    from ..notices import CAUTION
    from ..tables import write_output
    from .common import check_outputs
    from .field import _inputs

    check_outputs(files=[args.output, args.netcdf], figures=[args.plot], inputs=[args.input])
    models = parse_models(args.models)
    if args.map:
        if args.input or args.lat or args.lon:
            raise InputError("give either --map or places (--lat/--lon or --input), not both")
        code = _run_map(args, models)
        print("\n" + CAUTION, file=sys.stderr)
        return code
    if args.plot or args.netcdf:
        raise InputError("--plot and --netcdf draw a difference map; give --map LAT0:LAT1:LON0:LON1 with them")
    places = _inputs(args)  # the reader of 'headingref field': the same CSV columns and row-named errors
    table = compare_models(places.lat, places.lon, places.years, models, alt_km=places.alt, names=places.names,
                           allow_extrapolation=args.extrapolate)
    if args.output:
        write_output(args.output, table)  # .xlsx: a workbook with units in the header
    view = table[["name", "model", "declination_deg", "declination_uncertainty_deg", "declination_diff_deg",
                  "horizontal_nT", "horizontal_diff_nT", "significant"]].copy()
    view.columns = ["place", "model", "decl_deg", "sigma_deg", "diff_deg", "H_nT", "dH_nT", "beyond_sigma"]
    print(view.round({"decl_deg": 3, "sigma_deg": 2, "diff_deg": 3, "H_nT": 0, "dH_nT": 1}).to_string(index=False))
    print(f"\ndifferences are each model minus {table.attrs['reference_model']}; sigma is each model's own "
          "declination error model (see 'headingref models'); beyond_sigma: |diff| above the two sigmas combined")
    if args.output:
        print(f"wrote {args.output} ({len(table)} rows)")
    print("\n" + CAUTION, file=sys.stderr)
    return 0
