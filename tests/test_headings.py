"""Heading conversions, grids and meridian convergence, and the trade's text forms."""

from __future__ import annotations

import math

import numpy as np
import pyproj
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import ppigrf_declination

from headingref.errors import InputError
from headingref.headings import (
    compass_to_magnetic,
    compass_to_true,
    convergence_deg,
    format_heading,
    format_variation,
    grid_to_magnetic,
    grid_to_true,
    grivation_deg,
    magnetic_to_compass,
    magnetic_to_grid,
    magnetic_to_true,
    normalize_heading,
    parse_grid,
    parse_heading,
    parse_variation,
    true_to_compass,
    true_to_grid,
    true_to_magnetic,
    wrap_angle,
)

WGS84_A = 6378137.0  # WGS84 semi-major axis, m (NIMA TR8350.2)
WGS84_F = 1 / 298.257223563  # WGS84 flattening (NIMA TR8350.2)
WGS84_E2 = WGS84_F * (2 - WGS84_F)


def angle_diff(a, b):
    """Smallest absolute difference of two angles in degrees."""
    d = np.mod(np.asarray(a, dtype=float) - np.asarray(b, dtype=float), 360.0)
    return np.minimum(d, 360.0 - d)


# Headings near the 0/360 seam are where naive code goes wrong.
headings = st.one_of(
    st.floats(0.0, 360.0, allow_nan=False, exclude_max=True),
    st.sampled_from([0.0, 1e-12, 5e-324, 359.9999999999, 359.99999999999994, 180.0, 90.0]),
)
signed = st.floats(-180.0, 180.0, allow_nan=False)


# --------------------------------------------------------------------------- rule of thumb and signs


def test_rule_of_thumb_east_subtract_west_add():
    # common practice: true to magnetic, "east is least, west is best" (east variation subtracted)
    assert true_to_magnetic(100.0, 10.0) == pytest.approx(90.0, abs=1e-12)
    assert true_to_magnetic(100.0, -10.0) == pytest.approx(110.0, abs=1e-12)
    assert magnetic_to_true(90.0, 10.0) == pytest.approx(100.0, abs=1e-12)
    # across north: 005 T with 12 E gives 353 M, 355 T with 12 W gives 007 M
    assert true_to_magnetic(5.0, 12.0) == pytest.approx(353.0, abs=1e-12)
    assert true_to_magnetic(355.0, -12.0) == pytest.approx(7.0, abs=1e-12)


def test_deviation_east_compass_least():
    # common practice: deviation is named like variation; east deviation, compass reads less
    assert magnetic_to_compass(100.0, 3.0) == pytest.approx(97.0, abs=1e-12)
    assert compass_to_magnetic(97.0, 3.0) == pytest.approx(100.0, abs=1e-12)
    # full chain C -> M -> T, "can dead men vote twice at elections" (common practice: add east going C to T)
    assert compass_to_true(97.0, 3.0, -10.0) == pytest.approx(90.0, abs=1e-12)
    assert true_to_compass(90.0, -10.0, 3.0) == pytest.approx(97.0, abs=1e-12)


def test_grid_rule_northern_polar_grid():
    # Polar (Greenwich) grid, northern hemisphere: grid = true + west longitude
    # (Bowditch, American Practical Navigator, polar navigation chapter; from memory).
    grid = parse_grid("polar")
    for lon in (-150.0, -40.0, 0.0, 25.0, 170.0):
        conv = grid.convergence_deg(80.0, lon)
        assert true_to_grid(90.0, conv) == pytest.approx(normalize_heading(90.0 - lon), abs=1e-6)


def test_grivation_is_grid_north_to_magnetic_north():
    # Definition (grivation = variation - convergence; magnetic = grid - grivation), common practice:
    # at 60E on a Greenwich polar grid with 20E variation, grid north lies 60E of true north,
    # magnetic north 20E of true: magnetic north is 40 deg west of grid north.
    conv = convergence_deg(80.0, 60.0, "polar")
    griv = grivation_deg(20.0, conv)
    assert griv == pytest.approx(-40.0, abs=1e-6)
    true = 123.0
    magnetic = true_to_magnetic(true, 20.0)
    assert grid_to_magnetic(true_to_grid(true, conv), griv) == pytest.approx(magnetic, abs=1e-9)


# --------------------------------------------------------------------------- round trips (hypothesis)


@pytest.mark.parametrize(
    "forward,back",
    [(true_to_magnetic, magnetic_to_true), (true_to_grid, grid_to_true), (grid_to_magnetic, magnetic_to_grid)],
    ids=["true-magnetic-true", "true-grid-true", "grid-magnetic-grid"],
)
@settings(max_examples=300, deadline=None)
@given(h=headings, angle=signed)
def test_round_trips_exact(forward, back, h, angle):
    # reference angle: variation, convergence or grivation, east positive
    result = back(forward(h, angle), angle)
    assert 0.0 <= result < 360.0
    assert angle_diff(result, h) <= 1e-9


class DeviationCurve:
    """Deviation as a function of magnetic heading: d = A + B sin h + C cos h + D sin 2h + E cos 2h.

    The classical five-coefficient deviation formula (Bowditch, American Practical Navigator,
    magnetic compass adjustment; NGA Pub. 226 Handbook of Magnetic Compass Adjustment).
    """

    def __init__(self, a, b, c, d, e):
        self.coef = (a, b, c, d, e)

    def deviation_deg(self, magnetic_heading_deg):
        a, b, c, d, e = self.coef
        h = np.radians(magnetic_heading_deg)
        return a + b * np.sin(h) + c * np.cos(h) + d * np.sin(2 * h) + e * np.cos(2 * h)


coefs = st.floats(-4.0, 4.0, allow_nan=False)


@settings(max_examples=200, deadline=None)
@given(c=headings, v=signed, k=st.tuples(coefs, coefs, coefs, coefs, coefs))
def test_round_trip_compass_true_compass_with_curve(c, v, k):
    curve = DeviationCurve(*k)
    true = compass_to_true(c, curve, v)
    back = true_to_compass(true, v, curve)
    assert 0.0 <= back < 360.0
    assert angle_diff(back, c) <= 1e-9
    # the deviation used is the curve's at the magnetic heading found
    m = compass_to_magnetic(c, curve)
    assert angle_diff(m - curve.deviation_deg(m), c) <= 1e-9


@settings(max_examples=200, deadline=None)
@given(c=headings, v=signed, d=st.floats(-20, 20, allow_nan=False))
def test_round_trip_compass_true_compass_plain(c, v, d):
    assert angle_diff(true_to_compass(compass_to_true(c, d, v), v, d), c) <= 1e-9


def test_plain_callable_deviation_and_arrays():
    def curve(m):
        return 2.0 * np.sin(np.radians(m))

    c = np.array([0.0, 90.0, 359.5])
    m = compass_to_magnetic(c, curve)
    assert np.all(angle_diff(m - curve(m), c) <= 1e-9)
    # at compass 090 the deviation is near +2: magnetic about 092 (d(m) = 2 sin m)
    assert m[1] == pytest.approx(92.0, abs=0.01)


def test_swing_module_curve_is_accepted():
    # the swing analysis' fitted curve (five-coefficient formula, NGA Pub. 226) plugs straight in
    from headingref.swing import DeviationCurve as SwingCurve

    curve = SwingCurve(A_deg=0.5, B_deg=3.0, C_deg=-2.0, D_deg=0.8, E_deg=-0.4)
    compass = np.linspace(0.0, 359.9, 361)
    true = compass_to_true(compass, curve, -14.0)
    assert np.max(angle_diff(true_to_compass(true, -14.0, curve), compass)) <= 1e-9
    magnetic = true_to_magnetic(true, -14.0)
    assert np.max(angle_diff(magnetic - curve.deviation_deg(magnetic), compass)) <= 1e-9


def test_steep_deviation_curve_rejected():
    with pytest.raises(InputError, match="deviation curve"):
        compass_to_magnetic(10.0, lambda m: 200.0 * np.sin(np.radians(3 * m)))


def test_normalize_never_returns_360():
    values = np.array([-1e-17, -0.0, 360.0, 720.0, -360.0, 359.99999999999994])
    out = normalize_heading(values)
    assert np.all((out >= 0.0) & (out < 360.0))
    assert wrap_angle(-180.0) == 180.0 and wrap_angle(540.0) == 180.0


def test_model_variation_matches_ppigrf():
    # Independent model: ppigrf (IGRF-14 coefficients) declination at an invented point.
    lat, lon = 69.3, 16.1
    dec = ppigrf_declination(lat, lon, "2026-12-02")
    mag = true_to_magnetic(200.0, lat=lat, lon=lon, date="2026-12-02")
    assert angle_diff(mag, 200.0 - dec) < 0.01  # 0.01 deg: date-interpolation differences only


# --------------------------------------------------------------------------- convergence vs closed forms


rng = np.random.default_rng(20261202)


@pytest.mark.parametrize("lon0", [0.0, -45.0, 100.0])
def test_polar_stereographic_convergence_is_longitude_difference(lon0):
    # Snyder 1987 (USGS PP 1395), polar stereographic, eqs. 21-30/21-31: x = rho sin(lon-lon0),
    # y = -rho cos(lon-lon0) (north) so meridians are radial lines and C = lon - lon0;
    # south aspect y = +rho cos(lon - lon0) gives C = -(lon - lon0).
    lat = rng.uniform(45.0, 89.99, 200)
    lon = rng.uniform(-180.0, 180.0, 200)
    north = parse_grid(f"polar:{lon0:g}").convergence_deg(lat, lon)
    assert np.max(angle_diff(north, lon - lon0)) < 1e-6
    south = parse_grid(f"polar-south:{lon0:g}").convergence_deg(-lat, lon)
    assert np.max(angle_diff(south, -(lon - lon0))) < 1e-6


def _snyder_m(phi):
    return np.cos(phi) / np.sqrt(1 - WGS84_E2 * np.sin(phi) ** 2)  # Snyder eq. 14-15


def _snyder_t(phi):
    e = math.sqrt(WGS84_E2)
    return np.tan(np.pi / 4 - phi / 2) / ((1 - e * np.sin(phi)) / (1 + e * np.sin(phi))) ** (e / 2)  # Snyder eq. 15-9


@pytest.mark.parametrize("lat1,lat2,lon0", [(60.0, 70.0, 10.0), (33.0, 45.0, -96.0), (-45.0, -20.0, 135.0)])
def test_lambert_convergence_is_cone_constant_times_dlon(lat1, lat2, lon0):
    # Snyder 1987 (USGS PP 1395) eq. 15-8: n = (ln m1 - ln m2) / (ln t1 - ln t2); convergence = n (lon - lon0).
    p1, p2 = np.radians(lat1), np.radians(lat2)
    n = (np.log(_snyder_m(p1)) - np.log(_snyder_m(p2))) / (np.log(_snyder_t(p1)) - np.log(_snyder_t(p2)))
    sign = 1.0 if lat1 + lat2 > 0 else -1.0
    lat = sign * rng.uniform(10.0, 85.0, 200)
    dlon = rng.uniform(-179.0, 179.0, 200)
    conv = parse_grid(f"lcc:{lat1:g},{lat2:g},{lon0:g}").convergence_deg(lat, lon0 + dlon)
    assert np.max(np.abs(conv - n * dlon)) < 1e-6


def test_lambert_cone_constant_one_parallel_is_sin():
    # Snyder 1987 eq. 15-8 with equal parallels reduces to n = sin(lat1) (eq. 15-3, tangent cone).
    conv = parse_grid("lcc:50,50.0000001,0").convergence_deg(60.0, 20.0)
    assert conv == pytest.approx(20.0 * math.sin(math.radians(50.0)), abs=2e-6)


def test_transverse_mercator_convergence_near_central_meridian():
    # Redfearn's series for TM grid convergence (as in Snyder 1987 ch. 8 and the OSGB/ICSM
    # guides; from memory): C = dl sin(phi) [1 + dl^2 cos^2(phi) (1 + 3 eta^2 + 2 eta^4) / 3] + O(dl^5),
    # eta^2 = e'^2 cos^2(phi). First order: C ~ dl sin(phi).
    ep2 = WGS84_E2 / (1 - WGS84_E2)
    lat = rng.uniform(-80.0, 80.0, 300)
    dlon = rng.uniform(-3.0, 3.0, 300)
    for spec, lon0 in (("tm:15", 15.0), ("utm:33N", 15.0), ("utm:33S", 15.0)):
        conv = parse_grid(spec).convergence_deg(lat, lon0 + dlon)
        phi, dl = np.radians(lat), np.radians(dlon)
        eta2 = ep2 * np.cos(phi) ** 2
        second = np.degrees(dl * np.sin(phi) * (1 + dl**2 * np.cos(phi) ** 2 * (1 + 3 * eta2 + 2 * eta2**2) / 3))
        assert np.max(np.abs(conv - second)) < 1e-6
        first = dlon * np.sin(phi)
        assert np.max(np.abs(conv - first)) < 3e-3  # the dl^3 term is below 0.0027 deg for |dl| <= 3 deg


@pytest.mark.parametrize("spec", ["EPSG:3413", "EPSG:3031", "EPSG:32633", "lcc:60,70,10", "polar:-45"])
def test_convergence_sign_matches_geometry_of_projection(spec):
    # Definition check with PROJ forward projection only (no factors): the grid bearing of
    # true north at a point is atan2(dx, dy) of a short northward step; convergence is minus that.
    grid = parse_grid(spec)
    # EPSG CRSs may list axes northing-first; pyproj.Proj is always easting, northing
    proj = pyproj.Proj(grid.crs)
    lat = rng.uniform(62.0, 80.0, 20) * (-1 if spec == "EPSG:3031" else 1)
    lon = rng.uniform(-170.0, 170.0, 20)
    x0, y0 = proj(lon, lat)
    x1, y1 = proj(lon, lat + 1e-5)
    bearing_of_true_north = np.degrees(np.arctan2(x1 - x0, y1 - y0))
    assert np.max(angle_diff(grid.convergence_deg(lat, lon), -bearing_of_true_north)) < 1e-4


# --------------------------------------------------------------------------- grid spec parser


def test_grid_specs_canonical_names():
    assert parse_grid("polar").name == "polar:0"
    assert parse_grid(" POLAR:-45 ").name == "polar:-45"
    assert parse_grid("polar-south:90").name == "polar-south:90"
    assert parse_grid("lcc:60,70,10").name == "lcc:60,70,10"
    assert parse_grid("utm:33").name == "utm:33N"
    assert parse_grid("utm:19s").name == "utm:19S"
    assert parse_grid("epsg:3413").name == "EPSG:3413"
    assert parse_grid(pyproj.CRS.from_epsg(3031)).crs.is_projected


@pytest.mark.parametrize(
    "spec",
    ["mercator", "polar:200", "polar:east", "lcc:60,70", "lcc:0,0,0", "utm:61", "utm:33X", "EPSG:4326", "EPSG:999999", "", None, 5],
)
def test_bad_grid_specs(spec):
    with pytest.raises(InputError, match="grid"):
        parse_grid(spec)


@settings(max_examples=100, deadline=None)
@given(lon0=st.floats(-180.0, 180.0, allow_nan=False), lat=st.floats(50.0, 89.0), dlon=st.floats(-179.0, 179.0))
def test_polar_spec_property(lon0, lat, dlon):
    # Snyder 1987 polar stereographic (as above): C = lon - lon0 whatever the reference meridian.
    grid = parse_grid(f"polar:{lon0!r}")
    assert angle_diff(grid.convergence_deg(lat, lon0 + dlon), dlon) < 1e-6


# --------------------------------------------------------------------------- text forms


@pytest.mark.parametrize(
    "text,value",
    [("045", 45.0), ("45", 45.0), ("045°T", 45.0), ("045 T", 45.0), ("270.5 M", 270.5), ("360", 0.0), ("000", 0.0),
     ("359.9", 359.9), (".5", 0.5), (90, 90.0)],
)
def test_parse_heading_forms(text, value):
    assert parse_heading(text) == pytest.approx(value, abs=1e-12)


@pytest.mark.parametrize("text", ["abc", "370", "-5", "045X", "045°TT", "", "4 5", float("nan"), True, "1e2"])
def test_parse_heading_rejects(text):
    with pytest.raises(InputError, match="heading"):
        parse_heading(text)


def test_parse_heading_reference_mismatch():
    assert parse_heading("045°T", reference="T") == 45.0
    with pytest.raises(InputError, match="marked M"):
        parse_heading("045 M", reference="true")


@pytest.mark.parametrize(
    "text,value",
    [("12°30′W", -12.5), ("12.5W", -12.5), ("E3.2", 3.2), ("-12.5", -12.5), ("12 30 W", -12.5), ("12°30'E", 12.5),
     ("0", 0.0), ("W 7", -7.0), (4.5, 4.5)],
)
def test_parse_variation_forms(text, value):
    assert parse_variation(text) == pytest.approx(value, abs=1e-12)


@pytest.mark.parametrize("text", ["12.5Q", "N12", "12.5 E W", "-12.5W", "190E", "", "twelve"])
def test_parse_variation_rejects(text):
    with pytest.raises(InputError, match="variation"):
        parse_variation(text)


def test_format_heading_and_variation():
    assert format_heading(45.0) == "045"
    assert format_heading(359.7) == "000"  # three digits, 000 not 360 (common practice)
    assert format_heading(0.4) == "000"
    assert format_heading(44.96, reference="T") == "045°T"
    assert format_heading(-10.0) == "350"
    assert format_heading(123.456, decimals=1) == "123.5"
    assert format_heading(float("nan")) == "---"
    assert format_variation(-12.5) == "12°30′ W"
    assert format_variation(3.2, style="decimal", decimals=1) == "3.2° E"
    assert format_variation(-0.01, style="decimal", decimals=1) == "0.0° E"


@settings(max_examples=300, deadline=None)
@given(h=st.floats(-1e6, 1e6, allow_nan=False))
def test_format_heading_always_three_digits(h):
    text = format_heading(h)
    assert len(text) == 3 and text.isdigit() and 0 <= int(text) <= 359
    assert angle_diff(int(text), h) <= 0.5 + 1e-9


@settings(max_examples=300, deadline=None)
@given(h=st.floats(0.0, 360.0, allow_nan=False, exclude_max=True), decimals=st.integers(0, 3))
def test_heading_format_parse_round_trip(h, decimals):
    text = format_heading(h, decimals=decimals, reference="M")
    assert angle_diff(parse_heading(text, reference="M"), h) <= 0.5 * 10**-decimals + 1e-9


@settings(max_examples=300, deadline=None)
@given(v=st.floats(-179.0, 179.0, allow_nan=False), decimals=st.integers(0, 2))
def test_variation_format_parse_round_trip(v, decimals):
    text = format_variation(v, decimals=decimals)
    assert text.endswith((" E", " W"))
    assert parse_variation(text.replace(" ", "")) == pytest.approx(v, abs=0.5 / 60 * 10**-decimals + 1e-9)


# --------------------------------------------------------------------------- which polar grid


HOBART = (-42.88, 147.33)  # a real city's position for the hemisphere check (rounded, public gazetteer)


def test_auto_grid_is_the_nearest_pole():
    from headingref.headings import polar_grid_for, resolve_grid

    assert polar_grid_for([HOBART[0], -66.3]).name == "polar-south:0"
    assert polar_grid_for([69.7, 78.2]).name == "polar:0"
    assert resolve_grid("auto", [HOBART[0], -66.3]).name == "polar-south:0"
    assert resolve_grid(None, [10.0, 70.0]).name == "polar:0"
    assert resolve_grid("polar:-45", [-80.0]).name == "polar:-45"  # an explicit grid is kept
    with pytest.raises(InputError, match="resolve_grid"):
        parse_grid("auto")


def test_southern_route_on_northern_grid_is_about_295_degrees_off():
    # Snyder 1987 (USGS PP 1395) polar stereographic: convergence +(lon - lon0) on the north grid,
    # -(lon - lon0) on the south grid, so at Hobart's 147.33 E the two grid courses differ by 2 x 147.33
    # = 294.66 degrees (mod 360) -- the size of the slip the issue reports.
    north = float(parse_grid("polar").convergence_deg(*HOBART))
    south = float(parse_grid("polar-south").convergence_deg(*HOBART))
    assert north == pytest.approx(HOBART[1], abs=1e-6)
    assert south == pytest.approx(-HOBART[1], abs=1e-6)
    assert (north - south) % 360.0 == pytest.approx(294.66, abs=1e-6)


@pytest.mark.parametrize("spec,pole", [("polar", 1), ("polar-south:30", -1), ("EPSG:3413", 1), ("EPSG:3031", -1),
                                       ("EPSG:32661", 1), ("lcc:60,70,10", 0), ("utm:33N", 0)])
def test_polar_grids_know_their_pole(spec, pole):
    # EPSG:3413 / 32661 are north polar stereographic, EPSG:3031 south (EPSG registry)
    assert parse_grid(spec).pole == pole


def test_polar_grid_far_from_its_pole_warns():
    import warnings

    from headingref.errors import DataQualityWarning
    from headingref.headings import POLAR_GRID_MAX_POLE_DISTANCE_DEG, warn_if_far_from_pole

    assert POLAR_GRID_MAX_POLE_DISTANCE_DEG == 60.0
    # the southern grid at Hobart (47 deg from the south pole) is within the limit ...
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert warn_if_far_from_pole(parse_grid("polar-south"), [HOBART[0], -66.3]) is False
        assert warn_if_far_from_pole(parse_grid("lcc:60,70,10"), [-70.0]) is False
    # ... the northern grid is 156 deg from its pole at -66.3
    with pytest.warns(DataQualityWarning, match=r"polar:0 is used 156° .* polar-south"):
        assert warn_if_far_from_pole(parse_grid("polar"), [HOBART[0], -66.3], "the route") is True


def test_polar_grid_scale_at_the_warning_limit():
    # Why 60 deg: polar stereographic scale on WGS84 at 30 N (lat_ts = 90) from PROJ, against the
    # spherical k = 2 / (1 + sin lat) of Snyder 1987 eq. 21-4 (phi1 = 90): both about 4/3 there.
    grid = parse_grid("polar")
    k = grid._proj.get_factors(0.0, 30.0).meridional_scale
    assert k == pytest.approx(2.0 / (1.0 + math.sin(math.radians(30.0))), rel=0.01)


def test_convergence_deg_with_auto_grid():
    # Snyder 1987 polar stereographic: C = +(lon - 0) on the north grid, -(lon - 0) on the south grid
    assert convergence_deg(75.0, 30.0, "auto") == pytest.approx(30.0, abs=1e-9)
    assert convergence_deg(-75.0, 30.0, "auto") == pytest.approx(-30.0, abs=1e-9)
