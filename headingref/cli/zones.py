"""``headingref zones``: weak-horizontal-field zones over a polar cap or a region, with areas."""

from __future__ import annotations

import sys

EXAMPLES = """\
  headingref zones --cap north --date 2026-12-02 --output areas.xlsx
  headingref zones --cap south --date 2026-12-02 --thresholds 2000,6000 --geojson south.geojson --kml south.kml --png south.png
  headingref zones --cap north --date 2015-01-01 --date2 2026-12-02 --geojson moved.geojson --png moved.png
  headingref zones --region 60,85,150,-120 --date 2027.0 --resolution 0.25 --netcdf region.nc
  headingref zones --region=-75,-55,100,170 --date 2026-12-02 --thresholds 3000,8000
  headingref zones --cap north --date 2026-12-02 --budget-png budget.png --budget-bank-angle-deg 8 --budget-turn-duration-s 30
  headingref zones --cap south --date 2026-12-02 --budget-png turn.png --budget-slaving-cutout-bank-deg 90

A cap runs from 55 N or 50 S to the pole. A region is LAT_MIN,LAT_MAX,LON_MIN,LON_MAX in degrees;
LON_MAX < LON_MIN crosses the antimeridian.
Write --region=... with '=' when it starts with a minus sign. Areas are geodesic on WGS84."""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "zones",
        help_text="weak horizontal field zones (blackout, caution) over a cap or region, areas, boundaries",
        description=(
            "Horizontal intensity H, declination uncertainty and inclination on a grid over a polar cap "
            "(55 N or 50 S to the pole) or a region, zoned by H thresholds (default: the WMM blackout zone "
            "H < 2000 nT and caution zone 2000 to 6000 nT). Prints the area of each zone; with --date2, "
            "the areas at both dates and the change. Boundaries go to GeoJSON (cut at the antimeridian, "
            "closed round the poles), a map to PNG, the grid to netCDF."
        ),
        examples=EXAMPLES,
    )
    where = parser.add_mutually_exclusive_group(required=True)
    where.add_argument("--cap", choices=["north", "south"], help="polar cap")
    where.add_argument("--region", metavar="LAT_MIN,LAT_MAX,LON_MIN,LON_MAX", help="region in degrees")
    parser.add_argument("--date", required=True, help="date (YYYY-MM-DD or decimal year)")
    parser.add_argument("--date2", help="second date: areas at both dates and both sets of boundaries")
    parser.add_argument("--thresholds", default="2000,6000", metavar="NT,NT",
                        help="increasing H thresholds in nT (default 2000,6000: blackout, caution)")
    parser.add_argument("--resolution", type=float, default=0.5, metavar="DEG", help="grid spacing in degrees (default 0.5)")
    parser.add_argument("--alt", default="0", help="height above the WGS84 ellipsoid: km, or 35000 ft, FL350 (default 0)")
    parser.add_argument("--output", metavar="FILE", help="the area table (.csv, or .xlsx with units in the header)")
    parser.add_argument("--geojson", metavar="FILE", help="zone boundaries as GeoJSON polygons")
    parser.add_argument("--kml", metavar="FILE", help="zone polygons as KML 2.2 for globe viewers (cut into pieces "
                        "of at most 90 degrees of longitude, safe across the antimeridian and round the poles)")
    parser.add_argument("--png", metavar="FILE", help="map of the zones (and of the second date's boundaries)")
    parser.add_argument("--netcdf", metavar="FILE", help="the grid (H, uncertainty, inclination, zone codes) as netCDF")
    budget = parser.add_argument_group(
        "heading-reference error budget (map of the combined error of a slaved flux-gate compass)")
    budget.add_argument("--budget-png", metavar="FILE", help="map of the combined error budget with the limit contour")
    add_budget_options(budget)
    add_model_options(parser)
    parser.set_defaults(func=run)


def budget_option_name(setting: str) -> str:
    """The command-line option of an error-budget setting: ``--budget-`` and the field name."""
    return "--budget-" + setting.replace("_", "-").lower()


def add_budget_options(group) -> None:
    """One option per field of DetectorSettings and Manoeuvre: name, help, unit and default from the fields."""
    from dataclasses import fields

    from ..detector import DetectorSettings, Manoeuvre

    for cls in (DetectorSettings, Manoeuvre):
        for spec in fields(cls):
            meta = spec.metadata
            group.add_argument(budget_option_name(spec.name), dest=spec.name, type=float, default=None,
                               metavar=meta["unit"].upper().replace("/", "_PER_").replace("^", ""),
                               help=f"{meta['doc']}; {meta['unit']} (default {spec.default:g})")


def _budget_settings(args) -> dict:
    from dataclasses import fields

    from ..detector import DetectorSettings, Manoeuvre

    names = [spec.name for cls in (DetectorSettings, Manoeuvre) for spec in fields(cls)]
    return {name: getattr(args, name) for name in names if getattr(args, name) is not None}


def parse_thresholds(text: str) -> list[float]:
    from ..errors import InputError
    from ..units import parse_number

    values = []
    for part in str(text).split(","):
        try:
            values.append(parse_number(part, "--thresholds"))  # plain ASCII decimal only (not 2_000)
        except InputError:
            raise InputError(f"--thresholds {text!r}: {part.strip()!r} is not a number; give nT values such as 2000,6000") from None
    return values


def save_plot(function_name: str, data, target: str) -> None:
    """Draw with ``headingref.plots.zones.<function_name>(data)`` (Agg backend) and save atomically."""
    import matplotlib

    matplotlib.use("Agg")
    from ..plots import zones as plots

    plots.save_figure(getattr(plots, function_name)(data), target)
    print(f"wrote {target}")


def run(args) -> int:
    from ..io import all_or_nothing, write_text
    from ..netcdf import write_netcdf
    from ..notices import CAUTION
    from ..tables import write_output
    from ..units import parse_height_km
    from ..weak_field import write_geojson, zone_areas, zone_change, zone_geojson, zone_kml, zones
    from .common import check_outputs

    check_outputs(files=[args.output, args.geojson, args.kml, args.netcdf], figures=[args.png, args.budget_png], inputs=[args.model])
    area = args.cap or args.region
    if args.budget_png:  # check the budget options before anything is computed or written
        _budget_options_checked(args)
    options = {
        "resolution_deg": args.resolution,
        "thresholds": parse_thresholds(args.thresholds),
        "alt_km": parse_height_km(args.alt),
        "model": args.model,
        "allow_extrapolation": args.extrapolate,
    }
    if args.date2:
        ds, table, collection = zone_change(area, args.date, args.date2, **options)
        view = table.copy()
        for column in view.columns[1:-1]:
            view[column] = view[column].map(lambda v: f"{v:,.0f}")
        view["change_percent"] = table["change_percent"].map(lambda v: f"{v:+.1f}")
        text = view.to_string(index=False)
    else:
        ds = zones(area, args.date, **options)
        collection = zone_geojson(ds)
        table = zone_areas(ds)
        view = table[["zone", "lower_nT", "upper_nT", "area_km2"]].copy()
        view["area_km2"] = view["area_km2"].map(lambda v: f"{v:,.0f}")
        text = view.to_string(index=False)
    place = f"{args.cap} cap" if args.cap else f"region {args.region}"
    print(f"Weak-field zones, {place}, grid {args.resolution:g} deg, model {ds.attrs.get('model', 'IGRF-14')} (areas in km^2)")
    print(text)
    with all_or_nothing():  # every output, or none
        if args.output:
            write_output(args.output, table.assign(zone=table["zone"].astype(str)), sheet="zones")
            print(f"wrote {args.output}")
        if args.geojson:
            write_geojson(args.geojson, collection)
            print(f"wrote {args.geojson} ({len(collection['features'])} features)")
        if args.kml:
            write_text(args.kml, zone_kml(ds))
            print(f"wrote {args.kml}")
        if args.netcdf:
            write_netcdf(args.netcdf, ds)  # time as a CF datetime, decimal_year beside it
            print(f"wrote {args.netcdf}")
        if args.png:
            save_plot("plot_zone_map", ds, args.png)
        if args.budget_png:
            _budget_map(args, area)
    print("\n" + CAUTION, file=sys.stderr)
    return 0


def _budget_options_checked(args) -> None:
    from ..detector import budget_settings
    from ..errors import InputError

    try:
        budget_settings(**_budget_settings(args))
    except InputError as exc:  # name the option the user typed
        text = str(exc)
        for name in _budget_settings(args):
            if text.startswith(name + " "):
                raise InputError(f"{budget_option_name(name)}{text[len(name):]}") from None
        raise


def _budget_map(args, area) -> None:
    from ..detector import heading_error_grid
    from ..units import parse_height_km

    grid = heading_error_grid(area, args.date, resolution_deg=args.resolution, alt_km=parse_height_km(args.alt),
                              model=args.model, allow_extrapolation=args.extrapolate, **_budget_settings(args))
    attrs = grid.attrs
    print(f"error budget beyond {attrs['limit_deg']:g} deg (root-sum-square of residual field, model uncertainty "
          f"and slaving drift; {attrs['bank_angle_deg']:g} deg bank for {attrs['turn_duration_s']:g} s, slaving cut out "
          f"above {attrs['slaving_cutout_bank_deg']:g} deg): {attrs['area_exceeding_limit_km2']:,.0f} km^2")
    if attrs["saturated_by"] != "none":
        print(f"  saturated: over {100.0 * attrs['saturated_share_beyond_limit']:.0f}% of that area the budget sits at "
              f"the ceiling of one term (mostly {attrs['saturated_by']}); a larger manoeuvre would not change it")
    save_plot("plot_error_map", grid, args.budget_png)
