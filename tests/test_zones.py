"""Weak-field zones: thresholds, uncertainty, GeoJSON validity (RFC 7946), areas, two dates."""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from matplotlib.path import Path as MplPath
from pyproj import Geod

import headingref
from headingref.elements import BLACKOUT_NT, CAUTION_NT
from headingref.errors import InputError
from headingref.geogrid import CAPS, parse_area
from headingref.weak_field import (
    DEFAULT_LABELS,
    DEFAULT_THRESHOLDS_NT,
    zone_areas,
    zone_change,
    zone_geojson,
)

DATE = "2025-06-01"


@pytest.fixture(scope="module")
def north():
    return headingref.zones("north", DATE, resolution_deg=0.5)


@pytest.fixture(scope="module")
def south():
    return headingref.zones("south", DATE, resolution_deg=0.5)


def test_default_thresholds_are_the_wmm_zones():
    # WMM2020 and WMM2025 technical reports: Blackout Zone H < 2000 nT, Caution Zone 2000-6000 nT
    assert DEFAULT_THRESHOLDS_NT == (2000.0, 6000.0) == (BLACKOUT_NT, CAUTION_NT)
    assert DEFAULT_LABELS == ("blackout", "caution")


def test_zone_codes_and_uncertainty_on_the_grid(north):
    h = north.horizontal_nT.values
    code = north.zone_code.values
    assert np.array_equal(code == 2, h < 2000.0) and np.array_equal(code == 1, (h >= 2000.0) & (h < 6000.0))
    assert np.array_equal(code, north.zone.values)  # same as the field engine's WMM zones
    # WMM2025 technical report error model: declination uncertainty sqrt(0.26^2 + (5417/H)^2) deg
    # (within ~100 nT of the dip pole field.py reports 180 deg, "no usable declination": compare away from it)
    usable = h > 200.0
    assert np.allclose(north.declination_uncertainty_deg.values[usable], np.sqrt(0.26**2 + (5417.0 / h[usable]) ** 2), rtol=1e-12)
    assert {"horizontal_nT", "inclination_deg", "declination_uncertainty_deg"} <= set(north.data_vars)


def _rings(collection):
    for feature in collection["features"]:
        for polygon in feature["geometry"]["coordinates"]:
            for k, ring in enumerate(polygon):
                yield feature, k, np.asarray(ring, dtype=np.float64)


def _signed_area(ring):
    return 0.5 * np.sum(ring[:-1, 0] * ring[1:, 1] - ring[1:, 0] * ring[:-1, 1])


def assert_valid_geojson(collection, labels=DEFAULT_LABELS):
    """RFC 7946: closed linear rings of >= 4 positions, exterior counter-clockwise and holes
    clockwise (section 3.1.6), longitudes within -180..180 with no edge crossing the antimeridian
    (section 3.1.9); every feature carries a zone label."""
    json.loads(json.dumps(collection))
    assert collection["type"] == "FeatureCollection" and collection["features"]
    for feature in collection["features"]:
        assert feature["type"] == "Feature" and feature["geometry"]["type"] == "MultiPolygon"
        assert feature["properties"]["zone"] in labels
    for _, k, ring in _rings(collection):
        assert len(ring) >= 4 and np.array_equal(ring[0], ring[-1])
        assert np.all(np.abs(ring[:, 0]) <= 180.0) and np.all(np.abs(ring[:, 1]) <= 90.0)
        jumps = np.abs(np.diff(ring[:, 0])) > 180.0
        on_pole = (np.abs(ring[:-1, 1]) == 90.0) & (np.abs(ring[1:, 1]) == 90.0)
        assert not np.any(jumps & ~on_pole), "an edge crosses the antimeridian"
        assert (_signed_area(ring) > 0) == (k == 0), "right-hand rule violated"


def _inside(collection, zone, lon, lat):
    """Point-in-polygon in the lon/lat plane (the plane GeoJSON edges are straight in)."""
    result = np.zeros(np.shape(lon), dtype=bool)
    points = np.column_stack([lon, lat])
    for feature in collection["features"]:
        if feature["properties"]["zone"] != zone:
            continue
        for polygon in feature["geometry"]["coordinates"]:
            inside = MplPath(polygon[0]).contains_points(points)
            for hole in polygon[1:]:
                inside &= ~MplPath(hole).contains_points(points)
            result |= inside
    return result


@pytest.mark.parametrize("cap", ["north", "south"])
def test_cap_geojson_is_valid_and_matches_the_field(cap, north, south):
    ds = north if cap == "north" else south
    collection = zone_geojson(ds)
    assert_valid_geojson(collection)
    # membership of random points agrees with the field engine's own H at those points, away
    # from the boundary (|H - threshold| > 150 nT); this exercises the antimeridian cut and the
    # closure along the pole row
    rng = np.random.default_rng(4)
    n = 3000
    sign = 1.0 if cap == "north" else -1.0
    lat = sign * rng.uniform(CAPS[cap].edge_lat_deg + 2.0, 89.99, n)
    lon = rng.uniform(-180.0, 180.0, n)
    h = headingref.field(lat, lon, DATE).horizontal_nT.to_numpy()
    clear = (np.abs(h - 2000.0) > 150.0) & (np.abs(h - 6000.0) > 150.0)
    assert np.array_equal(_inside(collection, "blackout", lon, lat)[clear], (h < 2000.0)[clear])
    assert np.array_equal(_inside(collection, "caution", lon, lat)[clear], ((h >= 2000.0) & (h < 6000.0))[clear])
    # the dip pole (H = 0) lies inside the blackout zone
    pole = headingref.dip_poles(DATE).set_index("pole").loc[cap]
    assert _inside(collection, "blackout", [pole.lon], [pole.lat])[0]


def test_polygon_area_matches_cell_count(north):
    # independent estimate: sum of the geodesic areas (pyproj.Geod) of grid cells whose centre
    # value falls in the zone; discretisation error at 0.5 deg is well under 3 %
    geod = Geod(ellps="WGS84")
    lat_edges = np.arange(CAPS["north"].edge_lat_deg, 90.01, 0.5)
    centres = lat_edges[:-1] + 0.25
    row_km2 = np.array([
        abs(geod.polygon_area_perimeter([0.0, 0.5, 0.5, 0.0], [a, a, a + 0.5, a + 0.5])[0]) / 1e6 for a in lat_edges[:-1]
    ])
    lon_centres = np.arange(-179.75, 180.0, 0.5)
    h = headingref.field_grid(centres, lon_centres, DATE).horizontal_nT.values
    cells = {"blackout": h < 2000.0, "caution": (h >= 2000.0) & (h < 6000.0)}
    areas = zone_areas(north).set_index("zone").area_km2
    for zone, mask in cells.items():
        expected = float(np.sum(mask * row_km2[:, None]))
        assert areas[zone] == pytest.approx(expected, rel=0.03)


def test_region_across_the_antimeridian():
    whole = headingref.zones((55.0, 80.0, 150.0, -120.0), DATE, resolution_deg=0.5)
    assert whole.lon.values[0] == 150.0 and whole.lon.values[-1] == 240.0  # unwrapped coordinate
    collection = zone_geojson(whole)
    assert_valid_geojson(collection)
    lons = np.concatenate([np.asarray(r)[:, 0] for _, _, r in _rings(collection)])
    assert lons.min() < -170.0 and lons.max() > 170.0  # pieces on both sides of the antimeridian
    west = zone_areas(headingref.zones((55.0, 80.0, 150.0, 180.0), DATE, resolution_deg=0.5)).set_index("zone")
    east = zone_areas(headingref.zones((55.0, 80.0, -180.0, -120.0), DATE, resolution_deg=0.5)).set_index("zone")
    both = zone_areas(whole).set_index("zone")
    for zone in ("caution",):
        assert both.area_km2[zone] == pytest.approx(west.area_km2[zone] + east.area_km2[zone], rel=1e-6)


def test_user_thresholds_and_labels():
    ds = headingref.zones("north", DATE, resolution_deg=1.0, thresholds=[3000, 8000, 10000])
    assert ds.attrs["zone_labels"] == ["H<3000nT", "3000<=H<8000nT", "8000<=H<10000nT"]
    h, code = ds.horizontal_nT.values, ds.zone_code.values
    assert np.array_equal(code == 3, h < 3000) and np.array_equal(code == 0, h >= 10000)
    collection = zone_geojson(ds)
    assert_valid_geojson(collection, labels=ds.attrs["zone_labels"])
    areas = zone_areas(ds).set_index("zone").area_km2
    assert areas["H<3000nT"] > 0 and areas["8000<=H<10000nT"] > 0


def test_boundary_moves_between_two_dates():
    ds, table, collection = zone_change("north", "2000-01-01", "2025-01-01", resolution_deg=0.5)
    assert ds.sizes["time"] == 2
    assert list(table.columns) == ["zone", "area_km2_2000-01-01", "area_km2_2025-01-01", "change_km2", "change_percent"]
    assert_valid_geojson(collection)
    assert {f["properties"]["date"] for f in collection["features"]} == {"2000-01-01", "2025-01-01"}
    # the north dip pole moved from about 81 N 110 W (2000) to about 86 N 139 E (2025)
    # (from memory: IGRF-13 paper's pole table and NOAA NCEI's WMM2025 pole position): the
    # blackout zone follows it
    for date, (lat, lon) in {"2000-01-01": (80.97, -109.64), "2025-01-01": (85.76, 139.3)}.items():
        one = {"type": "FeatureCollection", "features": [f for f in collection["features"] if f["properties"]["date"] == date]}
        assert _inside(one, "blackout", [lon], [lat])[0]
    assert np.all(np.isfinite(table.change_km2))


def test_bad_inputs():
    with pytest.raises(InputError, match="east"):
        headingref.zones("east", DATE)
    with pytest.raises(InputError, match="LAT_MIN < LAT_MAX"):
        headingref.zones((80, 60, 0, 10), DATE)
    with pytest.raises(InputError, match="increase"):
        headingref.zones("north", DATE, thresholds=[6000, 2000])
    with pytest.raises(InputError, match="resolution"):
        headingref.zones("north", DATE, resolution_deg=0)
    with pytest.raises(InputError, match="same"):
        zone_change("north", DATE, DATE)
    with pytest.raises(InputError, match="not a number"):
        headingref.zones("60,70,abc,10", DATE)


def test_cli_zones_writes_geojson_png_netcdf(tmp_path, capsys):
    import xarray as xr

    from headingref.cli import main

    geojson, png, nc = tmp_path / "z.geojson", tmp_path / "z.png", tmp_path / "z.nc"
    code = main(["zones", "--cap", "south", "--date", DATE, "--resolution", "1", "--geojson", str(geojson),
                 "--png", str(png), "--netcdf", str(nc)])
    assert code == 0
    out = capsys.readouterr().out
    assert "blackout" in out and "caution" in out
    collection = json.loads(geojson.read_text())
    assert_valid_geojson(collection)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG specification, section 5.2)
    with xr.open_dataset(nc, engine="h5netcdf") as back:
        assert back.zone_code.max() == 2 and float(back.horizontal_nT.min()) < 2000.0


def test_cli_zones_two_dates_and_bad_input(tmp_path, capsys):
    from headingref.cli import main

    code = main(["zones", "--region=-75,-55,100,170", "--date", "2015-01-01", "--date2", DATE, "--resolution", "1",
                 "--thresholds", "3000,8000"])
    assert code == 0
    assert "change_percent" in capsys.readouterr().out
    target = tmp_path / "never.geojson"
    assert main(["zones", "--cap", "north", "--date", DATE, "--thresholds", "2000,abc", "--geojson", str(target)]) == 2
    err = capsys.readouterr().err
    assert "--thresholds" in err and "abc" in err and len(err.strip().splitlines()) == 1
    assert not target.exists()
    assert main(["zones", "--cap", "north", "--date", "1850-01-01"]) == 2
    assert "outside" in capsys.readouterr().err


def test_plot_zone_map_shades_and_outlines():
    import matplotlib

    matplotlib.use("Agg")
    from headingref.plots.zones import plot_error_map, plot_zone_map

    ds, _, _ = zone_change("north", "2010-01-01", DATE, resolution_deg=1.0)
    fig = plot_zone_map(ds, tracks=headingref.pole_tracks(2010, 2025, 5))
    ax = fig.axes[0]
    assert len(ax.patches) >= 2  # blackout and caution of the first date
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any("boundaries" in t for t in labels) and any("dip pole" in t for t in labels)
    from headingref.detector import heading_error_grid

    grid = heading_error_grid("north", DATE, resolution_deg=1.0, limit_deg=2.0)
    fig = plot_error_map(grid)
    assert f"{grid.attrs['area_exceeding_limit_km2']:,.0f}" in fig.axes[0].get_title()
    assert not any("Saturated" in t.get_text() for t in fig.axes[0].texts)  # 25 deg bank: slaving cut out
    # 8 deg of bank, under the cut-out: the drift sits at 3 deg/min x 1 min almost everywhere beyond 2 deg
    saturated = heading_error_grid("north", DATE, resolution_deg=2.0, bank_angle_deg=8.0)
    notes = [t.get_text() for t in plot_error_map(saturated).axes[0].texts]
    assert any("Saturated" in t and "slaving drift" in t for t in notes)


def test_cli_zones_budget_map_and_early_option_check(tmp_path, capsys):
    from headingref.cli import main

    png = tmp_path / "budget.png"
    assert main(["zones", "--cap", "north", "--date", DATE, "--resolution", "1", "--budget-png", str(png),
                 "--budget-bank-angle-deg", "8", "--budget-turn-duration-s", "60", "--budget-limit-deg", "2"]) == 0
    out = capsys.readouterr().out
    # 8 deg bank, below the 10 deg cut-out: slaving on for 60 s at 3 deg/min drags the gyro 3 deg
    # (common practice rate) wherever the tilt error is larger, so the budget is saturated there
    assert "error budget beyond 2 deg" in out and "saturated" in out and "slaving_rate" in out and png.exists()
    # a bad budget option is refused, naming the option typed, before any output is written
    geojson = tmp_path / "z.geojson"
    assert main(["zones", "--cap", "north", "--date", DATE, "--geojson", str(geojson), "--budget-png", str(png),
                 "--budget-bank-angle-deg", "95"]) == 2
    assert "--budget-bank-angle-deg 95" in capsys.readouterr().err and not geojson.exists()


def test_cli_budget_options_come_from_the_settings_dataclasses():
    # one vocabulary (issue 13): every DetectorSettings/Manoeuvre field is an option with its default in the help
    from dataclasses import fields

    from headingref.cli import build_parser
    from headingref.detector import DetectorSettings, Manoeuvre

    parser = build_parser()
    zones_parser = parser._subparsers._group_actions[0].choices["zones"]
    options = {a.dest: a for a in zones_parser._actions}
    for cls in (DetectorSettings, Manoeuvre):
        for spec in fields(cls):
            action = options[spec.name]
            assert action.option_strings == ["--budget-" + spec.name.replace("_", "-").lower()]
            assert f"default {spec.default:g}" in action.help and spec.metadata["unit"] in action.help
    assert not any("--tolerance" in a.option_strings for a in zones_parser._actions)


@settings(max_examples=100, deadline=None)
@given(st.floats(-90, 90), st.floats(-90, 90), st.floats(-180, 180), st.floats(-180, 180))
def test_parse_area_text_and_tuple_agree(lat_a, lat_b, lon_a, lon_b):
    lat_min, lat_max = sorted((lat_a, lat_b))
    if lat_min == lat_max or lon_a == lon_b:
        with pytest.raises(InputError):
            parse_area((lat_min, lat_max, lon_a, lon_b))
        return
    kind, bounds = parse_area((lat_min, lat_max, lon_a, lon_b))
    assert kind == "region"
    assert parse_area(f"{lat_min!r},{lat_max!r},{lon_a!r},{lon_b!r}") == (kind, bounds)
    # the eastward span from LON_MIN to LON_MAX, unwrapped past 180 across the antimeridian
    assert bounds[2] == lon_a and 0.0 < bounds[3] - bounds[2] <= 360.0
    assert min(abs(bounds[3] - lon_b), abs(bounds[3] - lon_b - 360.0)) < 1e-9


@pytest.mark.parametrize("cap", ["north", "south"])
def test_boundary_vertices_lie_on_their_threshold_in_ppigrf(cap, north, south):
    from reference import ppigrf_horizontal

    # ppigrf (independent IGRF-14 synthesis): H at the boundary vertices equals the threshold the
    # boundary stands for, within 20 nT at 0.5 deg (linear interpolation between grid nodes)
    collection = zone_geojson(north if cap == "north" else south)
    for feature in collection["features"]:
        upper = feature["properties"]["upper_nT"]
        lower = feature["properties"]["lower_nT"]
        ring = np.asarray(feature["geometry"]["coordinates"][0][0])
        keep = (np.abs(ring[:, 0]) < 180.0) & (np.abs(ring[:, 1]) < 90.0) & (np.abs(ring[:, 1]) > CAPS[cap].edge_lat_deg + 0.001)
        lon, lat = ring[keep, 0][::5], ring[keep, 1][::5]
        h = ppigrf_horizontal(lat, lon, DATE)
        off = np.minimum(np.abs(h - upper), np.abs(h - lower) if lower > 0 else np.inf)
        assert off.size > 10 and off.max() < 20.0
