"""Routes: geodesic and rhumb legs, samples, field along the way, GeoJSON, CLI and bad input."""

from __future__ import annotations

import json
import math
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from reference import ppigrf_enu, ppigrf_horizontal

from headingref.errors import DataQualityWarning, InputError
from headingref.routes import meridian_distance_m, read_waypoints, rhumb_inverse, route, route_geojson

DATA = Path(__file__).parent / "data"
DATE = "2026-12-02"
NM = 1852.0  # international nautical mile, m (exact by definition)
WGS84 = Geodesic.WGS84  # geographiclib: independent implementation of Karney (2013) geodesics
rng = np.random.default_rng(7)


def angle_diff(a, b):
    d = np.mod(np.asarray(a, dtype=float) - np.asarray(b, dtype=float), 360.0)
    return np.minimum(d, 360.0 - d)


def _random_chain(n):
    """Waypoints whose consecutive pairs are random, nearly antipodal, or near a pole."""
    lat, lon = [20.0], [-30.0]
    for i in range(n):
        kind = i % 4
        if kind == 0:  # random
            la, lo = rng.uniform(-85, 85), rng.uniform(-180, 180)
        elif kind == 1:  # nearly antipodal to the previous point
            la, lo = -lat[-1] + rng.uniform(-0.5, 0.5), ((lon[-1] + 180 + rng.uniform(-0.7, 0.7) + 180) % 360) - 180
        elif kind == 2:  # near a pole
            la, lo = np.sign(rng.uniform(-1, 1)) * rng.uniform(88.5, 89.999), rng.uniform(-180, 180)
        else:  # across the antimeridian
            la, lo = rng.uniform(60, 80), 179.0 + rng.uniform(0, 2.0)
        lat.append(float(la))
        lon.append(float(((lo + 180) % 360) - 180))
    return [{"name": f"P{i}", "lat": a, "lon": o} for i, (a, o) in enumerate(zip(lat, lon, strict=True))]


@pytest.fixture(scope="module")
def chain_result():
    wps = _random_chain(24)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DataQualityWarning)  # the chain reaches the south pole on a north grid on purpose
        return wps, route(wps, DATE, spacing_nm=300.0, grid="polar")


def test_geodesic_legs_match_geographiclib(chain_result):
    wps, (legs, samples) = chain_result
    for i, leg in legs.iterrows():
        a, b = wps[i], wps[i + 1]
        inv = WGS84.Inverse(a["lat"], a["lon"], b["lat"], b["lon"])
        # distance to 1 mm, courses to 1e-7 deg (both are Karney's algorithm; tolerances are loose on purpose)
        assert leg.distance_nm * NM == pytest.approx(inv["s12"], abs=1e-3)
        assert angle_diff(leg.true_course_deg, inv["azi1"]) < 1e-7
        assert angle_diff(leg.true_course_deg_end, inv["azi2"]) < 1e-7
        line = WGS84.InverseLine(a["lat"], a["lon"], b["lat"], b["lon"])
        mid = line.Position(line.s13 / 2)
        assert angle_diff(leg.true_course_deg_mid, mid["azi2"]) < 1e-7
        # every sample lies on the geodesic at its distance along the leg
        part = samples[samples.leg == i + 1]
        for _, s in part.iloc[[1, len(part) // 2, -2]].iterrows():
            pos = line.Position(s.distance_along_leg_nm * NM)
            assert s.lat_deg == pytest.approx(pos["lat2"], abs=1e-9)
            assert angle_diff(s.lon_deg, pos["lon2"]) < 1e-9 or abs(pos["lat2"]) > 90 - 1e-6
            assert angle_diff(s.true_course_deg, pos["azi2"]) < 1e-7


def test_samples_spacing_and_route_distance(chain_result):
    _, (legs, samples) = chain_result
    for leg_no, part in samples.groupby("leg"):
        steps = np.diff(part.distance_along_leg_nm.to_numpy())
        assert steps.max() <= 300.0 + 1e-9
        assert part.distance_along_leg_nm.iloc[-1] == pytest.approx(legs.distance_nm.iloc[leg_no - 1], rel=1e-12)
    assert samples.distance_along_route_nm.iloc[-1] == pytest.approx(legs.distance_nm.sum(), rel=1e-12)
    assert samples.notna().all().all() and legs.drop(columns=[]).notna().all().all()


def test_handbook_great_circle_worked_example():
    # Worked great-circle example posted by an airline instructor (sci.aeronautics.airliners, 1995,
    # http://www.kls2.com/cgi-bin/arcfetch?db=sci.aeronautics.airliners&id=%3Cairliners.1995.1597@ohare.chicago.com%3E)
    # with the spherical formulas of Bowditch's great-circle sailing: 33°00'S 91°55'W to 14°30'N 100°39'E,
    # D = 158°16' = 9496 NM, initial course 214°40'. Sphere vs WGS84 geodesic differ by up to about 0.5 %
    # in distance (Tseng et al., J. Marine Sci. Tech. 21(3), 2013) and a fraction of a degree in course.
    legs, _ = route([("A", "33 00 S", "91 55 W"), ("B", "14 30 N", "100 39 E")], DATE, spacing_nm=500)
    assert legs.distance_nm.iloc[0] == pytest.approx(9496.0, rel=0.005)
    assert angle_diff(legs.true_course_deg.iloc[0], 214.0 + 40.0 / 60.0) < 1.0


# --------------------------------------------------------------------------- rhumb lines


def _mercator_sailing(lat1, lon1, lat2, lon2):
    """Closed-form Mercator sailing on WGS84 from independent pieces.

    Meridional parts from PROJ's ellipsoidal Mercator (y = a psi, Snyder 1987 eq. 7-7), course
    tan C = dlon / dpsi, distance = dM / cos C with the meridian arc dM from geographiclib
    (Bowditch, American Practical Navigator, "Mercator sailing").
    """
    import pyproj

    merc = pyproj.Proj("+proj=merc +datum=WGS84 +lon_0=0")
    a = 6378137.0
    _, y1 = merc(0.0, lat1)
    _, y2 = merc(0.0, lat2)
    dlon = math.radians(((lon2 - lon1 + 180.0) % 360.0) - 180.0)
    course = math.degrees(math.atan2(dlon * a, y2 - y1)) % 360.0
    dm = WGS84.Inverse(lat1, 0.0, lat2, 0.0)["s12"] * (1 if lat2 >= lat1 else -1)
    return course, dm / math.cos(math.radians(course))


@pytest.mark.parametrize(
    "lat1,lon1,lat2,lon2",
    [(32.245, -66.4817, 30.4183, -75.2833), (60.0, 10.0, 75.0, -165.0), (-40.0, 170.0, -10.0, -150.0),
     (69.0, 18.0, 78.2, 15.6), (0.0, 0.0, 1.0, 1.0), (-70.0, -60.0, -75.0, 100.0)],
)
def test_rhumb_matches_mercator_sailing(lat1, lon1, lat2, lon2):
    course_ref, dist_ref = _mercator_sailing(lat1, lon1, lat2, lon2)
    course, dist = rhumb_inverse(lat1, lon1, lat2, lon2)
    assert angle_diff(course, course_ref) < 1e-6  # PROJ merc is accurate to ~1e-9 m in y
    assert float(dist) == pytest.approx(dist_ref, rel=1e-9)


def test_rhumb_east_west_is_parallel_arc():
    # Parallel sailing: along a parallel the rhumb is the parallel itself; its length is the
    # limit of many short geodesic chords (geographiclib), error ~ (chord)^3 curvature^2 / 24.
    lat, lon1, lon2 = 72.0, -10.0, 35.0
    lons = np.linspace(lon1, lon2, 4501)
    chords = sum(WGS84.Inverse(lat, lons[i], lat, lons[i + 1])["s12"] for i in range(lons.size - 1))
    course, dist = rhumb_inverse(lat, lon1, lat, lon2)
    assert float(course) == pytest.approx(90.0, abs=1e-12)
    assert float(dist) == pytest.approx(chords, rel=1e-8)
    # nearly east-west: just below and just above the switch (1e-6 rad of latitude) from the
    # parallel-radius limit to the divided difference dM/dpsi the lengths agree; the true change,
    # tan(lat) * 1e-8 relative (the line's mean latitude moves), is 3e-8 here.
    _, d1 = rhumb_inverse(lat, lon1, lat + math.degrees(0.99e-6), lon2)
    _, d2 = rhumb_inverse(lat, lon1, lat + math.degrees(1.01e-6), lon2)
    assert float(d1) == pytest.approx(float(d2), rel=1e-7)


def test_meridian_distance_matches_geographiclib():
    # geographiclib meridian arc (independent); series truncated at n^4 is good to ~0.1 mm.
    for lat in (-90.0, -60.0, -1.0, 0.0, 12.5, 45.0, 80.0, 90.0):
        ref = WGS84.Inverse(0.0, 0.0, lat, 0.0)["s12"] * (1 if lat >= 0 else -1)
        assert float(meridian_distance_m(lat)) == pytest.approx(ref, abs=1e-4)


def test_rhumb_route_samples_are_straight_on_mercator():
    # A rhumb line is straight on the Mercator projection (Bowditch, Mercator sailing):
    # every sample must lie on the segment joining the ends in PROJ's Mercator x/y.
    import pyproj

    legs, samples = route([("A", 35.0, 170.0), ("B", 50.0, -150.0)], DATE, path="rhumb", spacing_nm=25.0)
    merc = pyproj.Proj("+proj=merc +datum=WGS84 +lon_0=-170")
    x, y = merc(samples.lon_deg.to_numpy(), samples.lat_deg.to_numpy())
    x, y = np.asarray(x), np.asarray(y)
    ux, uy = x[-1] - x[0], y[-1] - y[0]
    off = np.abs((x - x[0]) * uy - (y - y[0]) * ux) / math.hypot(ux, uy)
    assert off.max() < 1e-3  # metres
    # constant course, equal to Mercator sailing's, and samples at their stated distances
    course_ref, dist_ref = _mercator_sailing(35.0, 170.0, 50.0, -150.0)
    assert np.max(angle_diff(samples.true_course_deg, course_ref)) < 1e-6
    assert legs.distance_nm.iloc[0] * NM == pytest.approx(dist_ref, rel=1e-9)
    _, part = rhumb_inverse(35.0, 170.0, samples.lat_deg.iloc[10], samples.lon_deg.iloc[10])
    assert float(part) / NM == pytest.approx(samples.distance_along_leg_nm.iloc[10], rel=1e-9)
    assert np.all(np.abs(samples.lon_deg) >= 150.0)  # crosses the antimeridian, not the long way


def test_rhumb_from_the_pole_runs_down_the_meridian():
    legs, samples = route([("POLE", 90.0, 0.0), ("B", 80.0, 30.0)], DATE, path="rhumb", spacing_nm=50.0)
    assert legs.true_course_deg.iloc[0] == pytest.approx(180.0, abs=1e-9)
    ref = WGS84.Inverse(90.0, 30.0, 80.0, 30.0)["s12"]  # geographiclib meridian arc
    assert legs.distance_nm.iloc[0] * NM == pytest.approx(ref, abs=1e-3)
    assert np.allclose(samples.lon_deg.iloc[1:], 30.0)
    assert samples.variation_deg.notna().all()


# --------------------------------------------------------------------------- pole, antimeridian, field


def test_leg_over_the_pole_has_defined_variation():
    legs, samples = route([("A", 80.0, 0.0), ("B", 80.0, 180.0)], DATE, spacing_nm=20.0)
    ref = WGS84.Inverse(80.0, 0.0, 80.0, 180.0)
    assert legs.distance_nm.iloc[0] * NM == pytest.approx(ref["s12"], abs=1e-3)
    assert angle_diff(legs.true_course_deg.iloc[0], 0.0) < 1e-7
    assert samples[["variation_deg", "magnetic_course_deg", "grid_course_deg"]].notna().all().all()
    # on a Greenwich polar grid the geodesic across the pole along 0/180 is a straight grid line:
    # grid course constant (000 out along 0 deg, Bowditch polar grid; from memory)
    assert np.max(angle_diff(samples.grid_course_deg, 0.0)) < 1e-5


def test_antimeridian_leg_and_geojson_split():
    result = route([("A", 70.0, 175.0), ("B", 72.0, -175.0)], DATE, spacing_nm=10.0)
    legs, samples = result
    ref = WGS84.Inverse(70.0, 175.0, 72.0, -175.0)
    assert legs.distance_nm.iloc[0] * NM == pytest.approx(ref["s12"], abs=1e-3)
    assert np.all(np.abs(samples.lon_deg) >= 174.0)
    gj = route_geojson(result)
    line = gj["features"][0]["geometry"]
    assert line["type"] == "MultiLineString" and len(line["coordinates"]) == 2
    for piece in line["coordinates"]:
        lons = np.array([p[0] for p in piece])
        assert np.all(np.abs(np.diff(lons)) < 180.0)
    assert {line["coordinates"][0][-1][0], line["coordinates"][1][0][0]} == {180.0, -180.0}
    assert line["coordinates"][0][-1][1] == line["coordinates"][1][0][1]
    json.dumps(gj, allow_nan=False)  # valid JSON, no NaN


def test_variation_along_route_matches_ppigrf():
    # Independent IGRF-14 evaluation (ppigrf) at sample points; magnetic = true - variation.
    legs, samples = route(str(DATA / "route_arctic.csv"), DATE, spacing_nm=100.0)
    pick = samples.iloc[::7]
    be, bn, _ = ppigrf_enu(pick.lat_deg.to_numpy(), pick.lon_deg.to_numpy(), pick.alt_km.to_numpy(), DATE)
    dec = np.degrees(np.arctan2(be, bn))
    assert np.max(angle_diff(pick.variation_deg, dec)) < 0.02
    assert np.max(np.abs(pick.horizontal_nT - np.hypot(be, bn))) < 5.0
    assert np.max(angle_diff(samples.magnetic_course_deg, samples.true_course_deg - samples.variation_deg)) < 1e-9
    assert np.max(angle_diff(samples.grid_course_deg, samples.true_course_deg - samples.convergence_deg)) < 1e-9
    # the leg table's start values are the first sample's
    first = samples.groupby("leg").first()
    assert np.allclose(legs.variation_deg, first.variation_deg)
    # altitudes: FL330 = 33,000 ft = 10.0584 km (international foot, 0.3048 m exactly)
    assert samples[samples.leg == 2].alt_km.iloc[-1] == pytest.approx(10.668)
    assert samples[samples.leg == 1].alt_km.iloc[-1] == pytest.approx(10.0584)


def test_caution_stretch_ends_are_at_threshold():
    # At each interpolated end of a caution stretch, H from ppigrf (independent) is 6000 nT
    # within the error of linear interpolation over a 10 NM sample step.
    wps = [("A", 75.0, 20.0), ("B", 86.0, -120.0)]
    legs, _ = route(wps, DATE, spacing_nm=10.0)
    text = legs.caution_stretches_nm.iloc[0]
    assert text and legs.zone.iloc[0] in ("caution", "blackout")
    start = float(text.split("-")[0])
    line = WGS84.InverseLine(75.0, 20.0, 86.0, -120.0)
    pos = line.Position(start * NM)
    assert ppigrf_horizontal(pos["lat2"], pos["lon2"], DATE) == pytest.approx(6000.0, abs=25.0)
    assert legs.min_horizontal_nT.iloc[0] < 6000.0


def test_polar_grid_course_rule_on_samples():
    # Greenwich polar grid: grid = true + west longitude (Bowditch polar navigation; from memory).
    _, samples = route(str(DATA / "route_arctic.csv"), DATE, grid="polar")
    assert np.max(angle_diff(samples.grid_course_deg, samples.true_course_deg + (-samples.lon_deg))) < 1e-6
    # grivation = variation - convergence, with convergence = longitude here
    assert np.max(angle_diff(samples.grivation_deg, samples.variation_deg - samples.lon_deg)) < 1e-6


def test_csv_and_list_inputs_agree():
    wps = read_waypoints(DATA / "route_arctic.csv")
    assert wps.lat_deg.iloc[2] == pytest.approx(85.5) and wps.lon_deg.iloc[2] == pytest.approx(-100.0)
    assert wps["where"].iloc[0] == "route_arctic.csv line 2"
    again = read_waypoints(wps[["name", "lat_deg", "lon_deg"]].rename(columns={"lat_deg": "lat", "lon_deg": "lon"}), alt_km=1.0)
    assert np.allclose(again.alt_km, 1.0)


# --------------------------------------------------------------------------- bad input


def test_too_few_waypoints():
    with pytest.raises(InputError, match="at least two waypoints; 1 given"):
        route([("A", 70.0, 10.0)], DATE)


def test_zero_length_leg_names_rows(write_csv):
    csv = write_csv("r.csv", "name,lat,lon\nA,70,10\nB,71,12\nC,71.0,12.0\n")
    with pytest.raises(InputError, match=r"r.csv line 4 repeats r.csv line 3"):
        route(csv, DATE)
    # the same pole written with two longitudes is the same point
    with pytest.raises(InputError, match="repeats"):
        route([("A", 80.0, 0.0), ("P1", 90.0, 0.0), ("P2", 90.0, 45.0)], DATE)


def test_bad_coordinate_names_line(write_csv):
    csv = write_csv("r.csv", "name,lat,lon\nA,70,10\nB,95,12\n")
    with pytest.raises(InputError, match=r"r.csv line 3: latitude"):
        route(csv, DATE)
    with pytest.raises(InputError, match=r"waypoint 2 \(B\): longitude"):
        route([("A", 70.0, 10.0), ("B", 70.0, "12Q")], DATE)


@pytest.mark.parametrize(
    "kwargs,match",
    [({"grid": "mercator"}, "grid"), ({"spacing_nm": 0}, "spacing"), ({"spacing_nm": "x"}, "spacing"),
     ({"path": "great-ellipse"}, "path"), ({"alt_km": "high"}, "height"), ({"grid": "utm:33N"}, "does not cover")],
)
def test_bad_options(kwargs, match):
    with pytest.raises(InputError, match=match):
        route([("A", 5.0, 100.0), ("B", -5.0, 110.0)], DATE, **kwargs)


def test_bad_altitude_names_row():
    with pytest.raises(InputError, match=r"waypoint 2 \(B\): height"):
        route([("A", 70.0, 10.0, 0), ("B", 71.0, 12.0, "35000 yards")], DATE)


# --------------------------------------------------------------------------- plots


def test_map_choice_suits_the_route():
    # common practice: polar stereographic charts for high-latitude work, a regional conformal map elsewhere
    from headingref.plots.route import choose_map

    kind, edge, _ = choose_map([69.0, 78.2, 85.5, 64.7], [18.5, 15.5, -100.0, 177.7])
    assert kind == "north" and edge == 60.0
    kind, edge, _ = choose_map([-70.0, -89.0], [0.0, 120.0])
    assert kind == "south" and edge == 65.0
    kind, extent, _ = choose_map([35.0, 50.0], [170.0, -150.0])
    assert kind == "region"
    assert extent[2] == pytest.approx(167.0) and extent[3] == pytest.approx(-147.0)  # across 180: lon_max < lon_min


# --------------------------------------------------------------------------- command line


def test_cli_writes_all_outputs(tmp_path, capsys):
    from headingref.cli import main

    out = {k: tmp_path / f"{k}.{ext}" for k, ext in
           (("legs", "csv"), ("samples", "csv"), ("geo", "geojson"), ("map", "png"), ("profile", "png"))}
    rc = main(["route", "--input", str(DATA / "route_arctic.csv"), "--date", DATE, "--grid", "polar:-45",
               "--spacing", "20", "--output", str(out["legs"]), "--samples", str(out["samples"]),
               "--geojson", str(out["geo"]), "--plot", str(out["map"]), "--profile", str(out["profile"])])
    assert rc == 0
    text = capsys.readouterr().out
    assert "CAUTION" in text and "blackout" in text
    legs = pd.read_csv(out["legs"])
    needed = ["from", "to", "distance_nm", "true_course_deg", "magnetic_course_deg", "grid_course_deg", "variation_deg",
              "grivation_deg", "min_horizontal_nT", "max_declination_uncertainty_deg", "zone", "true_course_deg_mid",
              "magnetic_course_deg_end", "variation_deg_end"]
    assert set(needed) <= set(legs.columns) and len(legs) == 4
    # courses as three digits in the printed table: the first leg's true course (geographiclib)
    azi = WGS84.Inverse(69.06, 18.54, 78.25, 15.47)["azi1"] % 360
    assert f" {round(azi):03d} " in text
    gj = json.loads(out["geo"].read_text())
    assert sum(f["geometry"]["type"] == "Point" for f in gj["features"]) == 5
    assert out["map"].stat().st_size > 10_000 and out["profile"].stat().st_size > 10_000


def test_cli_bad_input_writes_nothing(tmp_path, capsys, write_csv):
    from headingref.cli import main

    csv = write_csv("r.csv", "name,lat,lon\nA,70,10\n")
    legs = tmp_path / "legs.csv"
    rc = main(["route", "--input", str(csv), "--date", DATE, "--output", str(legs)])
    assert rc == 2
    err = capsys.readouterr().err
    assert "at least two waypoints" in err and err.count("\n") == 1
    assert not legs.exists() and list(tmp_path.iterdir()) == [csv]


# --------------------------------------------------------------------------- grids, heights and forms (issues 11, 13, 17)


SOUTH_ROUTE = [("DEPART", -42.88, 147.33, "0 ft"), ("ICEEDGE", -66.28, 110.53, "FL310")]  # the southern case


def test_southern_route_default_grid_is_the_south_polar_grid():
    # Snyder 1987 (USGS PP 1395) south polar stereographic on Greenwich: C = -(lon - 0), so
    # grid = true + lon at every sample (and not true - lon, the north grid's rule).
    legs, samples = route(SOUTH_ROUTE, DATE, spacing_nm=100.0)
    assert legs.attrs["grid"] == "polar-south:0"
    assert np.max(angle_diff(samples.grid_course_deg, samples.true_course_deg + samples.lon_deg)) < 1e-6
    auto, _ = route(SOUTH_ROUTE, DATE, spacing_nm=100.0, grid="auto")
    assert np.allclose(auto.grid_course_deg, legs.grid_course_deg)


def test_explicit_northern_grid_on_a_southern_route_warns():
    from headingref.errors import DataQualityWarning

    with pytest.warns(DataQualityWarning, match="polar:0 is used"):
        route(SOUTH_ROUTE, DATE, spacing_nm=100.0, grid="polar")


def test_route_altitude_units(write_csv):
    # international foot, 0.3048 m exactly (1959): 35,000 ft = 10.668 km
    csv = write_csv("r.csv", "name,lat,lon,alt_ft\nA,70,10,0\nB,71,12,35000\n")
    assert read_waypoints(csv).alt_km.tolist() == pytest.approx([0.0, 10.668])
    csv.write_text("name,lat,lon,alt_m\nA,70,10,120\nB,71,12,\n", encoding="utf-8")
    assert read_waypoints(csv, alt_km=1.0).alt_km.tolist() == pytest.approx([0.12, 1.0])


@pytest.mark.parametrize(
    "header,cell,match",
    [("alt", "350", r"r.csv line 3: height '350' has no unit.*FL350"),
     ("alt_km", "350", r"r.csv line 3: height '350' is 350 km.*FL350 or 35000 ft"),
     ("alt", "35 km", r"r.csv line 3: .*35 km.*FL350")],
)
def test_bare_or_impossible_altitude_refused(header, cell, match, write_csv):
    csv = write_csv("r.csv", f"name,lat,lon,{header}\nA,70,10,0 ft\nB,71,12,{cell}\n".replace(",0 ft", ",0"))
    with pytest.raises(InputError, match=match):
        route(csv, DATE)


def test_dict_waypoints_follow_the_same_height_rule():
    with pytest.raises(InputError, match=r"waypoint 2 \(B\): height 350.0 has no unit"):
        read_waypoints([{"name": "A", "lat": 70, "lon": 10}, {"name": "B", "lat": 71, "lon": 12, "alt": 350.0}])
    wps = read_waypoints([{"name": "A", "lat": 70, "lon": 10, "alt_ft": 1000}, {"name": "B", "lat": 71, "lon": 12}])
    assert wps.alt_km.iloc[0] == pytest.approx(0.3048)


def test_compact_coordinates_give_the_same_legs(tmp_path):
    # 7443N 09458W = 74 deg 43' N, 94 deg 58' W (compact trade form; DDMM / DDDMM)
    compact, plain = tmp_path / "c.csv", tmp_path / "p.csv"
    compact.write_text("name,lat,lon\nA,7443N,09458W\nB,N8130.5,W06215.0\n", encoding="utf-8")
    plain.write_text(f"name,lat,lon\nA,{74 + 43 / 60!r},{-(94 + 58 / 60)!r}\nB,{81 + 30.5 / 60!r},{-(62 + 15 / 60)!r}\n",
                     encoding="utf-8")
    a, b = route(compact, DATE).legs, route(plain, DATE).legs
    assert a.distance_nm.iloc[0] == pytest.approx(b.distance_nm.iloc[0], abs=1e-9)
    # and the distance itself against geographiclib (Karney 2013)
    ref = WGS84.Inverse(74 + 43 / 60, -(94 + 58 / 60), 81 + 30.5 / 60, -(62 + 15 / 60))["s12"] / NM
    assert a.distance_nm.iloc[0] == pytest.approx(ref, abs=1e-6)


def test_output_schema_and_zone_dtype(chain_result):
    from headingref.elements import ZONE_DTYPE
    from headingref.routes import LEG_COLUMNS, SAMPLE_COLUMNS

    _, (legs, samples) = chain_result
    assert tuple(legs.columns) == LEG_COLUMNS and tuple(samples.columns) == SAMPLE_COLUMNS
    assert legs.zone.dtype == ZONE_DTYPE and samples.zone.dtype == ZONE_DTYPE
    # worst zone of a leg is the max of its samples' zones (ordered normal < caution < blackout)
    worst = samples.groupby("leg", observed=True).zone.max()
    assert list(worst.astype(str)) == list(legs.zone.astype(str))


def _scenario(tmp_path, routes_extra="", plan_extra=""):
    from headingref.scenario import load_scenario

    (tmp_path / "north.csv").write_text("name,lat,lon,alt\nNA,69.7,18.9,0 ft\nNB,78.2,15.5,FL350\n", encoding="utf-8")
    (tmp_path / "south.csv").write_text("name,lat,lon,alt\nDEPART,-42.88,147.33,0 ft\nICEEDGE,-66.28,110.53,FL310\n",
                                        encoding="utf-8")
    (tmp_path / "s.toml").write_text(
        'analysis_date = "2026-12-02"\n[routes]\n' + routes_extra
        + '[[routes.plan]]\nname = "N"\nfile = "north.csv"\n'
        + '[[routes.plan]]\nname = "S"\nfile = "south.csv"\n' + plan_extra,
        encoding="utf-8",
    )
    return load_scenario(tmp_path / "s.toml")


def test_scenario_default_grid_serves_both_caps(tmp_path):
    # Snyder 1987 polar stereographic convergence: north grid C = +lon, south grid C = -lon (lon0 = 0)
    sc = _scenario(tmp_path)
    assert sc.routes["grid"] == "auto"
    north, south = (route(str(plan["file"]), DATE, **sc.route_options(plan)) for plan in sc.routes["plan"])
    assert north.legs.attrs["grid"] == "polar:0" and south.legs.attrs["grid"] == "polar-south:0"
    assert np.max(angle_diff(south.samples.grid_course_deg, south.samples.true_course_deg + south.samples.lon_deg)) < 1e-6
    assert np.max(angle_diff(north.samples.grid_course_deg, north.samples.true_course_deg - north.samples.lon_deg)) < 1e-6


def test_scenario_route_keeps_its_own_grid_and_alt(tmp_path):
    sc = _scenario(tmp_path, routes_extra='grid = "polar"\nalt = "FL300"\n', plan_extra='grid = "polar-south:90"\nalt = "2 km"\n')
    options = {plan["name"]: sc.route_options(plan) for plan in sc.routes["plan"]}
    assert options["N"]["grid"] == "polar" and options["S"]["grid"] == "polar-south:90"
    assert options["N"]["alt_km"] == pytest.approx(9.144)  # 30,000 ft x 0.3048 m (1959 definition)
    assert options["S"]["alt_km"] == pytest.approx(2.0)


@pytest.mark.parametrize("extra,match", [("alt = 350\n", "FL350"), ('grid = "mercator"\n', "grid")])
def test_scenario_bad_route_keys(tmp_path, extra, match):
    with pytest.raises(InputError, match=match):
        _scenario(tmp_path, routes_extra=extra)
