"""Property tests (hypothesis) for what the other test modules do not already cover.

Already covered elsewhere, so not repeated here: heading/variation format-parse round trips and every
heading conversion round trip (test_headings), designator 01..36 / reciprocal-18 / double-reciprocal
(test_runways), swing coefficients recovered from evenly spaced readings (test_swing), coordinate and
date-time round trips (test_units).

Sources beside each check: the definitions of the seven field elements (WMM2025 technical report,
section on the geomagnetic elements: H = sqrt(X^2 + Y^2), F = sqrt(H^2 + Z^2), D = atan2(Y, X),
I = atan2(Z, H)); its error model and zones; geographiclib for geodesics; the Gregorian calendar;
the 1959 international foot.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from headingref import io
from headingref.elements import classify_zone, declination_uncertainty_deg, field_arrays
from headingref.routes import route
from headingref.runways import boundary_margin_deg, designator_from_magnetic
from headingref.swing import analyse_swing
from headingref.units import FOOT_M, decimal_year, parse_height_km, timestamp_from_decimal_year

PROPS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])

lats = st.floats(-89.9, 89.9, allow_nan=False)
lons = st.floats(-180.0, 180.0, allow_nan=False)
alts = st.floats(-1.0, 1000.0, allow_nan=False)
years = st.floats(1900.0, 2030.0, allow_nan=False)


# --------------------------------------------------------------------------- field identities


@PROPS
@given(lat=st.lists(lats, min_size=1, max_size=20), lon=lons, alt=alts, year=years)
def test_field_identities(lat, lon, alt, year):
    with warnings.catch_warnings():
        # no foreign warning either: a one-point list with scalars used to raise numpy's broadcast
        # FutureWarning through numba (fixed in field._prepare)
        warnings.simplefilter("error")
        f = field_arrays(np.array(lat), lon, year, alt_km=alt)
    x, y, z = f["north_nT"], f["east_nT"], f["down_nT"]
    h, total = f["horizontal_nT"], f["total_nT"]
    # WMM2025 report, geomagnetic elements: H^2 = X^2 + Y^2, F^2 = H^2 + Z^2, D = atan2(Y, X), tan I = Z / H
    np.testing.assert_allclose(h, np.hypot(x, y), rtol=1e-12)
    np.testing.assert_allclose(total**2, h**2 + z**2, rtol=1e-12)
    np.testing.assert_allclose(np.tan(np.radians(f["inclination_deg"])) * h, z, rtol=1e-9, atol=1e-6)
    diff = np.mod(f["declination_deg"] - np.degrees(np.arctan2(y, x)) + 180.0, 360.0) - 180.0
    np.testing.assert_allclose(diff, 0.0, atol=1e-9)
    # sign conventions: declination east positive (Y > 0 <=> D > 0), inclination down positive
    assert np.all(np.sign(f["declination_deg"]) == np.sign(y))
    assert np.all(np.sign(f["inclination_deg"]) == np.sign(z))


@PROPS
@given(lat=lats, lon=lons, alt=alts, year=years)
def test_rate_identities(lat, lon, alt, year):
    # d/dt of the definitions (chain rule): dH = (X dX + Y dY)/H, dF = (H dH + Z dZ)/F,
    # dD = (X dY - Y dX)/H^2 rad, dI = (H dZ - Z dH)/F^2 rad
    f = field_arrays(lat, lon, year, alt_km=alt)
    x, y, z = (f[k][0] for k in ("north_nT", "east_nT", "down_nT"))
    dx, dy, dz = (f[k][0] for k in ("north_nT_per_year", "east_nT_per_year", "down_nT_per_year"))
    h, total = math.hypot(x, y), math.sqrt(x * x + y * y + z * z)
    dh = (x * dx + y * dy) / h
    assert f["horizontal_nT_per_year"][0] == pytest.approx(dh, rel=1e-9, abs=1e-9)
    assert f["total_nT_per_year"][0] == pytest.approx((h * dh + z * dz) / total, rel=1e-9, abs=1e-9)
    assert f["declination_deg_per_year"][0] == pytest.approx(math.degrees((x * dy - y * dx) / h**2), rel=1e-9, abs=1e-12)
    assert f["inclination_deg_per_year"][0] == pytest.approx(math.degrees((h * dz - z * dh) / total**2), rel=1e-9, abs=1e-12)


@PROPS
@given(lat=lats, lon=st.floats(-180.0, 180.0), alt=alts, year=years)
def test_longitude_is_periodic(lat, lon, alt, year):
    # spherical harmonics are 360-degree periodic in longitude; longitudes are accepted within +-360
    a = field_arrays(lat, lon, year, alt_km=alt)
    b = field_arrays(lat, lon - 360.0 if lon > 0 else lon + 360.0, year, alt_km=alt)
    for name in ("north_nT", "east_nT", "down_nT"):
        assert b[name][0] == pytest.approx(a[name][0], abs=1e-6)


@PROPS
@given(lat=lats, lon=lons, year=years)
def test_uncertainty_and_zone_follow_h(lat, lon, year):
    f = field_arrays(lat, lon, year, model="WMM2025") if year >= 2025.0 else field_arrays(lat, lon, year)
    h = f["horizontal_nT"][0]
    expected = "blackout" if h < 2000.0 else "caution" if h < 6000.0 else "normal"
    assert ("normal", "caution", "blackout")[f["zone_code"][0]] == expected  # WMM2025 report: H < 2000, < 6000 nT
    assert str(np.asarray(classify_zone(h)).ravel()[0]) == expected
    if year < 2025.0:  # IGRF: the same-epoch WMM error model as a proxy, none before 2015 (headingref.model)
        assert np.isnan(f["declination_uncertainty_deg"][0]) == (year < 2015.0)
        return
    # WMM2025 report: sigma_D = sqrt(0.26^2 + (5417/H)^2) deg
    assert f["declination_uncertainty_deg"][0] == pytest.approx(math.hypot(0.26, 5417.0 / h), rel=1e-12)
    assert declination_uncertainty_deg(h) == pytest.approx(f["declination_uncertainty_deg"][0], rel=1e-12)


# --------------------------------------------------------------------------- routes

waypoint = st.tuples(st.floats(-80.0, 80.0), st.floats(-180.0, 180.0))


@settings(max_examples=25, deadline=None)
@given(points=st.lists(waypoint, min_size=2, max_size=4), spacing=st.floats(20.0, 400.0))
def test_route_reference_identities(points, spacing):
    for (a_lat, a_lon), (b_lat, b_lon) in zip(points, points[1:], strict=False):
        assume(Geodesic.WGS84.Inverse(a_lat, a_lon, b_lat, b_lon)["s12"] > 1000.0)
    wps = [(f"WP{i}", la, lo) for i, (la, lo) in enumerate(points)]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        legs, samples = route(wps, "2026-12-02", spacing_nm=spacing, grid="polar" if points[0][0] >= 0 else "polar-south")

    def wrap(a):
        return np.mod(np.asarray(a) + 180.0, 360.0) - 180.0

    # headingref.headings conventions (east positive): magnetic = true - variation,
    # grid = true - convergence, grivation = variation - convergence, so magnetic = grid - grivation
    np.testing.assert_allclose(wrap(samples.magnetic_course_deg - (samples.true_course_deg - samples.variation_deg)), 0, atol=1e-9)
    np.testing.assert_allclose(wrap(samples.grid_course_deg - (samples.true_course_deg - samples.convergence_deg)), 0, atol=1e-9)
    np.testing.assert_allclose(wrap(samples.grivation_deg - (samples.variation_deg - samples.convergence_deg)), 0, atol=1e-9)
    # geographiclib: each leg's length; samples no further apart than the spacing; distances increase
    for leg, ((a_lat, a_lon), (b_lat, b_lon)) in zip(legs.itertuples(), zip(points, points[1:], strict=False), strict=True):
        assert leg.distance_nm * 1852.0 == pytest.approx(Geodesic.WGS84.Inverse(a_lat, a_lon, b_lat, b_lon)["s12"], abs=0.5)
    along = samples.distance_along_route_nm.to_numpy()
    assert np.all(np.diff(along) >= -1e-9)
    assert np.all(np.diff(samples.distance_along_leg_nm)[np.diff(samples.leg) == 0] <= spacing + 1e-6)
    assert along[-1] == pytest.approx(legs.distance_nm.sum(), rel=1e-12)


# --------------------------------------------------------------------------- designators

azimuths = st.floats(-720.0, 720.0, allow_nan=False)


@PROPS
@given(azimuths, st.integers(-3, 3))
def test_designator_is_the_nearest_tenth(magnetic, turns):
    # ICAO Annex 14 Vol I 5.2.2.4 (from memory): the whole number nearest one tenth of the magnetic
    # azimuth; so 10 x number lies within 5 degrees of the azimuth (circularly), and adding whole
    # turns changes nothing.
    number = int(designator_from_magnetic(magnetic))
    off = (magnetic - 10.0 * number + 180.0) % 360.0 - 180.0
    assert abs(off) <= 5.0 + 1e-9
    shifted = magnetic + 360.0 * turns
    assume(abs((shifted % 10.0) - 5.0) > 1e-6)  # exactly on a boundary float error may pick either side
    assert int(designator_from_magnetic(shifted)) == number


@PROPS
@given(azimuths)
def test_boundary_margin_is_consistent(magnetic):
    margin, boundary, neighbour = (np.asarray(v)[()] for v in boundary_margin_deg(magnetic))
    here = int(designator_from_magnetic(magnetic))
    assert 0.0 <= margin <= 5.0
    assert boundary % 10.0 == pytest.approx(5.0, abs=1e-9)  # boundaries end in 5
    assert (neighbour - here) % 36 in (1, 35)  # the next number up or down
    # the boundary is `margin` away, and just past it the designator is the neighbour
    gap = (boundary - magnetic % 360.0 + 180.0) % 360.0 - 180.0
    assert abs(gap) == pytest.approx(margin, abs=1e-9)
    assume(margin > 1e-6)
    step = math.copysign(margin + 1e-6, gap)
    assert int(designator_from_magnetic(magnetic + step)) == neighbour


# --------------------------------------------------------------------------- swing

coef = st.floats(-5.0, 5.0, allow_nan=False)


@settings(max_examples=40, deadline=None)
@given(a=coef, b=coef, c=coef, d=coef, e=coef,
       headings=st.lists(st.floats(0.0, 359.0), min_size=8, max_size=16, unique_by=lambda h: round(h)))
def test_swing_recovers_coefficients_from_uneven_headings(a, b, c, d, e, headings):
    magnetic = np.sort(np.asarray(headings))
    gaps = np.diff(np.concatenate([magnetic, [magnetic[0] + 360.0]]))
    assume(gaps.max() < 100.0)  # spread round the circle, so every coefficient is determined
    r = np.radians(magnetic)
    dev = a + b * np.sin(r) + c * np.cos(r) + d * np.sin(2 * r) + e * np.cos(2 * r)  # Pub. 226 five-term form
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        got = analyse_swing(magnetic, np.mod(magnetic - dev, 360.0)).curve.coefficients()
    # exact readings from a five-term curve: least squares returns the curve (its residual is zero)
    for name, value in zip("ABCDE", (a, b, c, d, e), strict=True):
        assert got[name] == pytest.approx(value, abs=1e-7), name


# --------------------------------------------------------------------------- heights, dates, CSV


@PROPS
@given(km=st.floats(-1.0, 1000.0, allow_nan=False))
def test_height_units_round_trip(km):
    # 1 ft = 0.3048 m exactly (1959 international yard and pound agreement)
    assert parse_height_km(f"{km!r} km") == pytest.approx(km, abs=1e-12)
    assert parse_height_km(f"{km * 1000.0!r} m") == pytest.approx(km, abs=1e-9)
    feet = km * 1000.0 / FOOT_M
    assume(-0.999999 <= km <= 999.999999)  # at the very limits the conversion may round 1 ulp outside
    assert parse_height_km(f"{feet!r} ft") == pytest.approx(km, abs=1e-9)


dates = st.dates(min_value=pd.Timestamp("1000-01-01").date(), max_value=pd.Timestamp("2999-12-30").date())


@PROPS
@given(first=dates, second=dates)
def test_decimal_year_is_monotonic_and_in_its_year(first, second):
    # the calendar-year fraction lies in [year, year + 1) and preserves order (Gregorian calendar),
    # over the whole 1000-2999 range (datetime64[ns] alone wraps outside 1677-2262)
    a, b = decimal_year(first.isoformat()), decimal_year(second.isoformat())
    assert first.year <= a < first.year + 1
    assert (a < b) == (first < second) and (a == b) == (first == second)
    days_in_year = 366 if (first.year % 4 == 0 and (first.year % 100 != 0 or first.year % 400 == 0)) else 365
    assert a == pytest.approx(first.year + (first.timetuple().tm_yday - 1) / days_in_year, abs=1e-12)
    assert timestamp_from_decimal_year(a).date() == first


@PROPS
@given(
    values=st.lists(st.floats(allow_nan=False, allow_infinity=False, width=64), min_size=1, max_size=10),
    separator=st.sampled_from([",", ";", "\t"]),
    bom=st.booleans(),
)
def test_csv_numbers_round_trip(tmp_path_factory, values, separator, bom):
    # repr() of a float parses back to the same float (Python float repr, shortest round trip)
    path = tmp_path_factory.mktemp("csv") / "values.csv"
    text = "value" + separator + "other\n" + "".join(f"{v!r}{separator}x\n" for v in values)
    path.write_bytes((b"\xef\xbb\xbf" if bom else b"") + text.encode())
    table = io.read_table(path, ["value"])
    assert list(table.index) == list(range(2, len(values) + 2))  # file line numbers
    np.testing.assert_array_equal(io.float_column(table, "value"), np.asarray(values))


@PROPS
@given(values=st.lists(st.floats(-1e6, 1e6, allow_nan=False), min_size=1, max_size=10))
def test_write_csv_then_read_back(tmp_path_factory, values):
    folder = tmp_path_factory.mktemp("out")
    target = folder / "out.csv"
    io.write_csv(target, pd.DataFrame({"value": values}))
    assert [p.name for p in folder.iterdir()] == ["out.csv"]  # no temporary file left
    np.testing.assert_array_equal(io.float_column(io.read_table(target, ["value"]), "value"), np.asarray(values))


# --------------------------------------------------------------------------- strict numbers, spreadsheet-safe text


@PROPS
@given(value=st.floats(allow_nan=False, allow_infinity=False, width=64))
def test_parse_number_reads_every_float_repr(value):
    # Python's float repr is the shortest text that reads back to the same double (Python docs,
    # "Floating Point Arithmetic"); it is always plain ASCII decimal with an optional exponent.
    from headingref.units import parse_number

    assert parse_number(repr(value)) == value
    assert parse_number(f"{value:.17g}") == value  # 17 significant digits round-trip a double (IEEE 754)


@PROPS
@given(text=st.text(alphabet=st.characters(categories=["Nd"]), min_size=1, max_size=6))
def test_parse_number_refuses_digits_of_other_scripts(text):
    # Unicode category Nd holds the decimal digits of every script; float() accepts them all
    # (Python docs, float()); headingref takes only ASCII 0-9.
    from headingref.errors import InputError
    from headingref.units import parse_number

    assume(not text.isascii())
    with pytest.raises(InputError):
        parse_number(text)
    with pytest.raises(InputError):
        parse_number(text[:1] + "_" + text)


@PROPS
@given(text=st.text(max_size=12))
def test_parse_number_agrees_with_float_where_it_accepts(text):
    # Whatever the strict reader accepts, Python's float reads to the same value (it is a subset).
    from headingref.errors import InputError
    from headingref.units import parse_number

    try:
        value = parse_number(text)
    except InputError:
        return
    assert value == float(text.strip().replace("\u2212", "-"))
    assert text.strip().replace("\u2212", "-").isascii()


@PROPS
@given(cell=st.text(max_size=12))
def test_spreadsheet_safe_text_never_starts_a_formula(cell):
    # OWASP "CSV Injection": cells starting = + - @ tab CR are formulas; plain numbers stay as they are.
    from headingref.units import is_number_text

    safe = io.spreadsheet_safe_text(cell)
    if cell[:1] in ("=", "+", "-", "@", "\t", "\r") and not is_number_text(cell) and set(cell) != {"-"}:
        assert safe == "'" + cell
    else:
        assert safe == cell
