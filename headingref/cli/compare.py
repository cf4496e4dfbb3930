"""``headingref compare``: several field models at the same places, one row per place and model."""

from __future__ import annotations

from .common import add_command, add_place_options

EXAMPLES = """\
  headingref compare --lat 64.5 --lon -20 --date 2026-06-01
  headingref compare --models IGRF-14,WMM2025,WMMHR2025 --input sites.csv --date 2026-06-01 --output compare.csv
  headingref compare --models WMM2025,WMMHR2025 --map 60:72:-30:0 --step 0.05 --date 2026-06-01 --plot diff.png
  headingref compare --route route.csv --date 2026-06-01 --output route_models.csv --plot route_models.png
  headingref compare --runways runways.csv --models WMM2025,WMMHR2025 --date 2026-06-01 --output runway_models.xlsx
  headingref compare --bases compass_bases.csv --date 2026-06-01 --mark-step 0.5

CSV input as for 'headingref field' (lat, lon, optional name, alt with a unit, date). Output columns:
place, name, lat_deg, lon_deg, alt_km, decimal_year, model, declination_deg, inclination_deg,
horizontal_nT, total_nT, declination_uncertainty_deg, declination_diff_deg and horizontal_diff_nT
(this model minus the first), combined_uncertainty_deg (root-sum-square of the two models' 1 sigma),
significant (|difference| above it), zone, declination_flag.

--route (CSV, GPX, KML or GeoJSON as for 'headingref route'): the same columns at every route sample
with leg, distance_along_leg_nm and distance_along_route_nm; the stretches where a model disagrees with
the first by more than the combined uncertainty are printed (from-to NM along each leg).
--runways (as for 'headingref runways'): one row per runway end with each model's variation,
runway_magnetic_deg, designator_implied and verdict, and model_dependent (the implied designators differ).
--bases (as for 'headingref compass-base'): one row per base with each model's variation to mark
(rounded to --mark-step) and its difference to the first model's, and mark_differs."""


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
    add_place_options(parser, "CSV of places (as for 'headingref field')")
    parser.add_argument("--output", metavar="FILE", help="write the long table to this file (.csv, or .xlsx: rounded, units in the header)")
    parser.add_argument("--map", metavar="LAT0:LAT1:LON0:LON1", help="difference map of the first two models over this box (degrees)")
    parser.add_argument("--step", type=float, default=0.25, metavar="DEG", help="grid step of --map in degrees (default 0.25; 1 arc-minute is 0.016667)")
    parser.add_argument("--route", metavar="FILE", help="compare along this route (CSV, GPX, KML or GeoJSON waypoints)")
    parser.add_argument("--spacing", type=float, default=10.0, metavar="NM", help="with --route: greatest distance between samples, NM (default 10)")
    parser.add_argument("--runways", metavar="FILE", help="compare the implied designators of these runway ends (CSV or .xlsx)")
    parser.add_argument("--bases", metavar="CSV", help="compare the variation to mark at these compass bases")
    parser.add_argument("--mark-step", type=float, default=0.5, metavar="DEG", help="with --bases: rounding step of the marked variation (default 0.5)")
    parser.add_argument("--plot", metavar="PNG", help="with --map: draw the difference map with coastlines; with --route: the difference profile")
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

    lat0, lat1, lon0, lon1 = _box(args.map)
    if not (args.step > 0):
        raise InputError(f"--step {args.step:g}: give a positive grid step in degrees")
    lats = np.arange(lat0, lat1 + args.step / 2, args.step)
    lons = np.arange(lon0, lon1 + args.step / 2, args.step)
    when = _when(args)
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


def _when(args):
    import datetime as _dt

    from ..units import decimal_year

    return decimal_year(args.date or _dt.datetime.now(_dt.UTC).date().isoformat())


def _write_with_plot(args, table, figure_maker=None) -> None:
    from ..io import all_or_nothing
    from ..tables import write_output

    with all_or_nothing():  # the table and the figure appear together, or neither
        if args.output:
            write_output(args.output, table)  # .xlsx: a workbook with units in the header
        if args.plot and figure_maker is not None:
            from ..plots import save_figure

            save_figure(figure_maker(), args.plot)


def _run_route(args, models) -> int:
    from ..compare import compare_route

    result = compare_route(args.route, _when(args), models, alt_km=args.alt, spacing_nm=args.spacing,
                           allow_extrapolation=args.extrapolate)

    def figure():
        from ..plots.compare import plot_route_difference

        return plot_route_difference(result)

    _write_with_plot(args, result.samples, figure)
    s, reference = result.samples, result.samples.attrs["reference_model"]
    n = int(s["sample"].max())
    print(f"{n} samples on {len(result.legs)} legs; differences are each model minus {reference}")
    for model in s.model.cat.categories[1:]:
        part = s[s.model.astype(str) == model]
        diff = part.declination_diff_deg.abs()
        print(f"  {model}: median |difference| {diff.median():.3f} deg, largest {diff.max():.3f} deg "
              f"(at {part.distance_along_route_nm.iloc[int(diff.to_numpy().argmax())]:.1f} NM); "
              f"beyond the combined 1 sigma at {int(part.significant.sum())} of {n} samples")
    if len(result.stretches):
        view = result.stretches[["model", "leg", "from", "to", "from_nm", "to_nm", "length_nm", "max_abs_declination_diff_deg"]]
        print("\nstretches where a model disagrees beyond the combined uncertainty (NM along the leg):")
        print(view.round(2).to_string(index=False))
    else:
        print("no stretch where a model disagrees with the first beyond the combined uncertainty")
    for written in (args.output, args.plot):
        if written:
            print(f"wrote {written}")
    return 0


def _run_runways(args, models) -> int:
    from ..compare import compare_runways

    table = compare_runways(args.runways, _when(args), models, allow_extrapolation=args.extrapolate)
    _write_with_plot(args, table)
    names = table.attrs["models"]
    view = table[["airport", "runway"] + [f"{m}_designator_implied" for m in names] + ["variation_spread_deg", "model_dependent"]]
    view.columns = ["airport", "runway"] + names + ["spread_deg", "model_dependent"]
    print(view.round({"spread_deg": 2}).to_string(index=False))
    dependent = table[table.model_dependent]
    print(f"\n{len(dependent)} of {len(table)} runway ends have an implied designator that depends on the model"
          + (": " + ", ".join(f"{a} {r}" for a, r in zip(dependent.airport, dependent.runway, strict=True)) if len(dependent) else ""))
    if args.output:
        print(f"wrote {args.output} ({len(table)} rows)")
    return 0


def _run_bases(args, models) -> int:
    from ..compare import compare_bases

    table = compare_bases(args.bases, _when(args), models, mark_step_deg=args.mark_step, allow_extrapolation=args.extrapolate)
    _write_with_plot(args, table)
    names = table.attrs["models"]
    view = table[["name"] + [f"{m}_variation_to_mark" for m in names] + ["max_predicted_diff_deg", "mark_differs", "status"]]
    view.columns = ["base"] + names + ["max_diff_deg", "mark_differs", "status"]
    view = view.fillna({m: "refused" for m in names})
    print(view.round({"max_diff_deg": 3}).to_string(index=False))
    for reason in table.reason[table.reason != ""]:
        print(f"  {reason}")
    print(f"\nvariation to mark: surveyed plus each model's change since the survey, rounded to {args.mark_step:g} deg; "
          f"differences are each model minus {names[0]}")
    if args.output:
        print(f"wrote {args.output} ({len(table)} rows)")
    return 0


def _check_inputs(args) -> str | None:
    """The one comparison input given (route, runways, bases, map), or None for places; refuse mixtures."""
    from ..errors import InputError

    given = [name for name in ("route", "runways", "bases", "map") if getattr(args, name)]
    places = bool(args.input or args.lat or args.lon)
    if len(given) + places > 1:
        what = [f"--{g}" for g in given] + (["places (--lat/--lon or --input)"] if places else [])
        raise InputError(f"give one of --route, --runways, --bases, --map or places; got {' and '.join(what)}")
    kind = given[0] if given else None
    if args.netcdf and kind != "map":
        raise InputError("--netcdf writes a difference grid; give --map LAT0:LAT1:LON0:LON1 with it")
    if args.plot and kind not in ("map", "route"):
        raise InputError("--plot draws a difference map (--map) or a route profile (--route); give one of them")
    return kind


def run(args) -> int:
    import sys

    from ..compare import compare_models, parse_models
    from ..notices import CAUTION
    from ..tables import write_output
    from .common import check_outputs
    from .field import _inputs

    kind = _check_inputs(args)
    check_outputs(files=[args.output, args.netcdf], figures=[args.plot],
                  inputs=[args.input, args.route, args.runways, args.bases])
    models = parse_models(args.models)
    if kind is not None:
        runner = {"map": _run_map, "route": _run_route, "runways": _run_runways, "bases": _run_bases}[kind]
        code = runner(args, models)
        print("\n" + CAUTION, file=sys.stderr)
        return code
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
