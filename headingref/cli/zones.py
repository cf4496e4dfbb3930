"""``headingref zones``: weak-horizontal-field zones over a polar cap or a region, with areas."""

from __future__ import annotations

import sys

EXAMPLES = """\
  headingref zones --cap north --date 2026-12-02
  headingref zones --cap south --date 2026-12-02 --thresholds 2000,6000 --geojson south.geojson --png south.png
  headingref zones --cap north --date 2015-01-01 --date2 2026-12-02 --geojson moved.geojson --png moved.png
  headingref zones --region 60,85,150,-120 --date 2027.0 --resolution 0.25 --netcdf region.nc
  headingref zones --region=-75,-55,100,170 --date 2026-12-02 --thresholds 3000,8000

A region is LAT_MIN,LAT_MAX,LON_MIN,LON_MAX in degrees; LON_MAX < LON_MIN crosses the antimeridian.
Write --region=... with '=' when it starts with a minus sign. Areas are geodesic on WGS84."""


def register(subparsers) -> None:
    from .common import add_command, add_model_options

    parser = add_command(
        subparsers,
        "zones",
        help_text="weak horizontal field zones (blackout, caution) over a cap or region, areas, boundaries",
        description=(
            "Horizontal intensity H, declination uncertainty and inclination on a grid over a polar cap "
            "(50 degrees to the pole) or a region, zoned by H thresholds (default: the WMM blackout zone "
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
    parser.add_argument("--geojson", metavar="FILE", help="zone boundaries as GeoJSON polygons")
    parser.add_argument("--png", metavar="FILE", help="map of the zones (and of the second date's boundaries)")
    parser.add_argument("--netcdf", metavar="FILE", help="the grid (H, uncertainty, inclination, zone codes) as netCDF")
    add_model_options(parser)
    parser.set_defaults(func=run)


def parse_thresholds(text: str) -> list[float]:
    from ..errors import InputError

    values = []
    for part in str(text).split(","):
        try:
            values.append(float(part))
        except ValueError:
            raise InputError(f"--thresholds {text!r}: {part.strip()!r} is not a number; give nT values such as 2000,6000") from None
    return values


def save_plot(function_name: str, data, target: str) -> None:
    """Draw with ``headingref.plots.zones.<function_name>(data)`` (Agg backend) and save atomically."""
    import matplotlib

    matplotlib.use("Agg")
    from ..plots import zones as plots

    plots.save_figure(getattr(plots, function_name)(data), target)
    print(f"wrote {target}")


def _netcdf_ready(ds):
    """Attributes netCDF can store: lists of strings become one space-separated string."""
    out = ds.copy()
    for name, value in list(out.attrs.items()):
        if isinstance(value, list) and value and isinstance(value[0], str):
            out.attrs[name] = " ".join(value)
    return out


def run(args) -> int:
    from ..io import atomic_path
    from ..notices import CAUTION
    from ..units import parse_height_km
    from ..zones import write_geojson, zone_areas, zone_change, zone_geojson, zones

    area = args.cap or args.region
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
    if args.geojson:
        write_geojson(args.geojson, collection)
        print(f"wrote {args.geojson} ({len(collection['features'])} features)")
    if args.netcdf:
        with atomic_path(args.netcdf) as tmp:
            _netcdf_ready(ds).to_netcdf(tmp, engine="h5netcdf")
        print(f"wrote {args.netcdf}")
    if args.png:
        save_plot("plot_zone_map", ds, args.png)
    print("\n" + CAUTION, file=sys.stderr)
    return 0
