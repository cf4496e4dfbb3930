"""Map axes, projections and the shipped coastline (headingref.plots.basemap)."""

from __future__ import annotations

import os
from pathlib import Path

import matplotlib
import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from pyproj import CRS, Transformer

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

from headingref.errors import InputError  # noqa: E402
from headingref.plots import basemap  # noqa: E402

WGS84_A = 6378137.0
WGS84_F = 1 / 298.257223563
NE_ZIP = Path(os.environ.get("HEADINGREF_NE_ZIP", "/work/shared/data/ne_110m_coastline.zip"))


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    plt.close("all")


def _max_step(line) -> float:
    x, y = line.get_data()
    return float(np.hypot(np.diff(x), np.diff(y)).max())


# --------------------------------------------------------------------------- coastline data
def test_coastline_matches_natural_earth_shapefile():
    # Outside source: the original Natural Earth 1:110m shapefile read by pyshp, an
    # independent reader (available on the maintainer's machine; the conversion's check).
    shapefile = pytest.importorskip("shapefile")
    if not NE_ZIP.is_file():
        pytest.skip(f"Natural Earth zip not at {NE_ZIP} (set HEADINGREF_NE_ZIP)")
    reader = shapefile.Reader(str(NE_ZIP))
    parts = [
        np.asarray(shape.points[start:stop])
        for shape in reader.shapes()
        for start, stop in zip(list(shape.parts), list(shape.parts[1:]) + [len(shape.points)], strict=True)
    ]
    ours = basemap.load_coastlines()
    assert len(ours) == len(parts)  # one line per shapefile part
    assert sum(len(a) for a in ours) == sum(len(p) for p in parts)
    for mine, theirs in zip(ours, parts, strict=True):
        # rounded to 4 decimals (and clamped to +-180): 5e-5 degrees at most
        np.testing.assert_allclose(mine, np.clip(theirs, -180, 180), atol=5.1e-5)
    all_ours = np.vstack(ours)
    bbox = reader.bbox
    np.testing.assert_allclose(all_ours.min(axis=0), [bbox[0], bbox[1]], atol=1e-4)
    np.testing.assert_allclose(all_ours.max(axis=0), [min(bbox[2], 180), bbox[3]], atol=1e-4)


def test_coastline_geography():
    coast = np.vstack(basemap.load_coastlines())
    geod = Geodesic.WGS84
    # Northernmost land on the coastline: Cape Morris Jesup, Greenland, 83°39' N 33°22' W
    # (from memory); 1:110m generalisation moves it by a few km at most.
    top = coast[np.argmax(coast[:, 1])]
    assert geod.Inverse(83.65, -33.37, top[1], top[0])["s12"] < 30e3
    # North Cape (Nordkapp), Norway, 71°10' N 25°47' E (from memory): a coastline point within 40 km.
    dist = [geod.Inverse(71.17, 25.78, lat, lon)["s12"] for lon, lat in coast if abs(lat - 71) < 2 and abs(lon - 26) < 4]
    assert min(dist) < 40e3
    # Lines are broken at the antimeridian, as in the source: some end exactly on +-180.
    ends = np.concatenate([line[[0, -1], 0] for line in basemap.load_coastlines()])
    assert np.any(ends == 180.0) and np.any(ends == -180.0)
    assert coast[:, 0].min() >= -180.0 and coast[:, 0].max() <= 180.0


# --------------------------------------------------------------------------- projections
@pytest.mark.parametrize(
    ("kind", "central_lon", "lat_ts", "epsg", "lat_range"),
    [
        # EPSG:3413 NSIDC Sea Ice Polar Stereographic North: lat_ts 70 N, lon_0 45 W (EPSG registry)
        ("north", -45.0, 70.0, 3413, (50, 90)),
        # EPSG:3031 Antarctic Polar Stereographic: lat_ts 71 S, lon_0 0 (EPSG registry)
        ("south", 0.0, -71.0, 3031, (-90, -50)),
    ],
)
def test_polar_crs_equals_epsg_definition(kind, central_lon, lat_ts, epsg, lat_range):
    rng = np.random.default_rng(3)
    lon = rng.uniform(-180, 180, 500)
    lat = rng.uniform(*lat_range, 500)
    ours = Transformer.from_crs(4326, basemap.map_crs(kind, central_lon=central_lon, true_scale_lat=lat_ts), always_xy=True)
    ref = Transformer.from_crs(4326, CRS.from_epsg(epsg), always_xy=True)
    np.testing.assert_allclose(ours.transform(lon, lat), ref.transform(lon, lat), atol=1e-3)  # 1 mm


def test_north_cap_matches_snyder_polar_stereographic_formula():
    # Snyder (1987), Map Projections: A Working Manual, USGS PP 1395, eqs. 15-9, 21-33, 21-34
    # (polar stereographic on the ellipsoid, true scale at the pole, k0 = 1).
    _, to_map = basemap.map_axes("north", 60, central_lon=-30.0, coastlines=False, graticule=False)
    e = np.sqrt(WGS84_F * (2 - WGS84_F))
    lat = np.radians([89.0, 80.0, 72.5, 61.0])
    lon = np.radians([10.0, -170.0, 95.0, -30.0])
    lon0 = np.radians(-30.0)
    t = np.tan(np.pi / 4 - lat / 2) / ((1 - e * np.sin(lat)) / (1 + e * np.sin(lat))) ** (e / 2)
    rho = 2 * WGS84_A * t / np.sqrt((1 + e) ** (1 + e) * (1 - e) ** (1 - e))
    x_ref, y_ref = rho * np.sin(lon - lon0), -rho * np.cos(lon - lon0)
    x, y = to_map.transform(np.degrees(lon), np.degrees(lat))
    np.testing.assert_allclose(x, x_ref, atol=1e-3)
    np.testing.assert_allclose(y, y_ref, atol=1e-3)


# --------------------------------------------------------------------------- drawing
def test_coastlines_have_no_wild_jumps_on_every_kind():
    for kind, extent in (("north", 50), ("south", -50), ("region", (50, 72, 140, -120))):
        ax, to_map = basemap.map_axes(kind, extent, graticule=False)
        x0, x1 = ax.get_xlim()
        lines = ax.get_lines()
        assert len(lines) > 5  # some coast drawn
        # A 1:110m coastline step is a few hundred km at most; without the split the far
        # side of the projection would join points tens of thousands of km apart.
        assert max(_max_step(line) for line in lines) < 0.5 * (x1 - x0)


def test_route_across_antimeridian_is_one_short_line():
    ax, to_map = basemap.map_axes("region", (55, 75, 150, -140), coastlines=False, graticule=False)
    lines = basemap.plot_lonlat(ax, to_map, [170.0, 179.9, -179.9, -170.0], [64.0, 65.0, 65.0, 66.0])
    assert len(lines) == 1
    # densified to <= 1 degree steps: on the map no step exceeds ~1 degree of arc (111 km) by much
    assert _max_step(lines[0]) < 120e3
    # the line's middle sits at the antimeridian, not on the far side of the map
    x, y = lines[0].get_data()
    x_am, y_am = to_map.transform(180.0, 65.0)
    # the nearest vertices are at 179.9 E / W, 0.1 degree of longitude at 65 N = 4.7 km away
    assert np.min(np.hypot(x - x_am, y - y_am)) < 5e3


def test_fill_around_the_pole_and_geojson():
    ax, to_map = basemap.map_axes("north", 60, coastlines=False, graticule=False)
    cap = {"type": "Polygon", "coordinates": [[[-180, 85], [180, 85], [180, 90], [-180, 90], [-180, 85]]]}
    (patch,) = basemap.draw_geojson(ax, to_map, cap, style={"color": "orange"})
    # The ring's 85N edge projects to a circle of radius rho(85N) about the pole:
    # spherical check, 2 R tan(2.5 deg) ~ 556 km (within 1% for the ellipsoid).
    verts = patch.get_path().vertices
    radius = np.hypot(verts[:, 0], verts[:, 1]).max()
    assert radius == pytest.approx(2 * 6371e3 * np.tan(np.radians(2.5)), rel=0.01)
    # south pole does not project on a north map: dropped, no NaN or inf in the path
    basemap.draw_geojson(ax, to_map, {"type": "Point", "coordinates": [0, -90]})
    assert np.isfinite(verts).all()


def test_split_projected():
    x = np.array([0.0, 1.0, 2.0, 50.0, 51.0, np.nan, 60.0, 61.0, 62.0])
    pieces = basemap.split_projected(x, np.zeros_like(x), max_jump=5.0)
    assert [len(px) for px, _ in pieces] == [3, 2, 3]


def test_labels():
    assert basemap.format_lon(-150) == "150°W"
    assert basemap.format_lon(190) == "170°W"
    assert basemap.format_lon(180) == "180°"
    assert basemap.format_lat(-70) == "70°S"
    ax, _ = basemap.map_axes("north", 60)
    texts = {t.get_text() for t in ax.texts}
    assert {"70°N", "80°N", "30°E", "150°W"} <= texts


@pytest.mark.parametrize(
    ("kind", "extent"),
    [("east", None), ("region", None), ("region", (70, 60, 0, 10)), ("region", (60, 95, 0, 10)), ("north", 95), ("region", "abc")],
)
def test_bad_map_requests(kind, extent):
    with pytest.raises(InputError):
        basemap.map_axes(kind, extent)
