"""The field engine against the outside: published WMM test values, pygeomag, ppigrf, chaosmagpy."""

from __future__ import annotations

import datetime as dt
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import headingref
from headingref.errors import DateRangeError, ExtrapolationWarning, InputError, ModelFileError
from headingref.field import field_arrays
from headingref.model import load_model

HERE = Path(__file__).parent


def pygeomag_cof(name: str) -> Path:
    import pygeomag

    return Path(pygeomag.__file__).parent / "wmm" / name


# --- NOAA NCEI published WMM test values -------------------------------------------------------

WMM_VALUES = pd.read_csv(HERE / "data" / "wmm_test_values.csv", comment="#")
COF = {"WMM2015": "WMM_2015.COF", "WMM2020": "WMM_2020.COF"}
# (our column, table column, half of the printed resolution + rounding slack)
PRINTED = [
    ("north_nT", "X", 0.051), ("east_nT", "Y", 0.051), ("down_nT", "Z", 0.051),
    ("horizontal_nT", "H", 0.051), ("total_nT", "F", 0.051),
    ("inclination_deg", "I", 0.0051), ("declination_deg", "D", 0.0051),
    ("north_nT_per_year", "dX", 0.051), ("east_nT_per_year", "dY", 0.051), ("down_nT_per_year", "dZ", 0.051),
    ("horizontal_nT_per_year", "dH", 0.051), ("total_nT_per_year", "dF", 0.051),
    ("inclination_deg_per_year", "dI", 0.0051),
    # dD: the WMM2020 row (2020.0, 0 km, 80S, 240E) prints -0.10 while the analytic rate is -0.0944
    # deg/yr, which a finite difference of pygeomag's declination (-0.0944) confirms; 0.006 admits it.
    ("declination_deg_per_year", "dD", 0.006),
]


@pytest.mark.parametrize("model_name", ["WMM2015", "WMM2020"])
def test_wmm_published_test_values(model_name):
    # Source: NOAA NCEI WMM2015 and WMM2020 test-value documents (tests/data/wmm_test_values.csv),
    # evaluated with the coefficient files shipped inside pygeomag; agreement to the printed precision.
    table = WMM_VALUES[WMM_VALUES.model == model_name]
    model = load_model(pygeomag_cof(COF[model_name]))
    got = headingref.field(table.lat.to_numpy(), table.lon.to_numpy(), table.time.to_numpy(),
                           alt_km=table.alt.to_numpy(), model=model)
    for ours, theirs, tol in PRINTED:
        np.testing.assert_allclose(got[ours].to_numpy(), table[theirs].to_numpy(), atol=tol, rtol=0, err_msg=ours)


def test_wmm2025_against_pygeomag():
    # Source: pygeomag (independent pure-Python port of the NOAA WMM C code), WMM2025 coefficients.
    from pygeomag import GeoMag

    rng = np.random.default_rng(2025)
    n = 60
    lat, lon = rng.uniform(-89, 89, n), rng.uniform(-180, 180, n)
    alt, year = rng.uniform(0, 40, n), rng.uniform(2025.0, 2029.99, n)
    ours = headingref.field(lat, lon, year, alt_km=alt, model=pygeomag_cof("WMM_2025.COF"))
    gm = GeoMag(coefficients_file="wmm/WMM_2025.COF")
    for i in range(n):
        ref = gm.calculate(glat=lat[i], glon=lon[i], alt=alt[i], time=year[i])
        assert ours.north_nT[i] == pytest.approx(ref.x, abs=0.01)
        assert ours.east_nT[i] == pytest.approx(ref.y, abs=0.01)
        assert ours.down_nT[i] == pytest.approx(ref.z, abs=0.01)
        assert ours.declination_deg[i] == pytest.approx(ref.d, abs=1e-4)
        assert ours.inclination_deg[i] == pytest.approx(ref.i, abs=1e-4)
        # WMM2025 error model as implemented by pygeomag (WMM2025 technical report): sqrt(0.26^2 + (5417/H)^2)
        assert ours.declination_uncertainty_deg[i] == pytest.approx(ref.calculate_uncertainty().d, rel=1e-9)


# --- IGRF-14 against ppigrf (the reference implementation that ships the coefficients) ---------


def _ppigrf_xyz(lat, lon, alt, when: dt.datetime):
    import ppigrf

    east, north, up = (np.asarray(c).ravel() for c in ppigrf.igrf(lon, lat, alt, when))
    return north, east, -up


def _ppigrf_equivalent_year(when: dt.datetime) -> float:
    """ppigrf interpolates linearly in elapsed time between 1 January of the epochs; this is the
    decimal year that puts our calendar-fraction convention at the same point of the interval."""
    start = 1900 + 5 * min((when.year - 1900) // 5, 25)
    t0, t1 = dt.datetime(start, 1, 1), dt.datetime(start + 5, 1, 1)
    return start + 5.0 * (when - t0).total_seconds() / (t1 - t0).total_seconds()


def test_igrf_against_ppigrf_random_dates_heights():
    # Source: ppigrf (pure-Python IGRF reference). Random places, heights 0-40 km, dates 1900-2030.
    rng = np.random.default_rng(14)
    for _ in range(25):
        when = dt.datetime(1900, 1, 1) + dt.timedelta(seconds=int(rng.uniform(0, 130 * 365.2425 * 86400)))
        lat, lon, alt = rng.uniform(-89.9, 89.9, 80), rng.uniform(-180, 180, 80), rng.uniform(0, 40, 80)
        north, east, down = _ppigrf_xyz(lat, lon, alt, when)
        # Same instant in the two conventions: agreement to 0.01 nT.
        same = field_arrays(lat, lon, _ppigrf_equivalent_year(when), alt)
        for key, ref in (("north_nT", north), ("east_nT", east), ("down_nT", down)):
            np.testing.assert_allclose(same[key], ref, atol=0.01, rtol=0)
        # Our own decimal year: the conventions differ by at most ~1.5 days inside a 5-year
        # interval (leap days), so the difference is bounded by |rate| * 1.5 days.
        ours = field_arrays(lat, lon, headingref.units.decimal_year(when), alt)
        for key, ref in (("north_nT", north), ("east_nT", east), ("down_nT", down)):
            bound = 0.01 + np.abs(ours[key + "_per_year"]) * 1.5 / 365.25
            assert np.all(np.abs(ours[key] - ref) <= bound), key
        strong = ours["horizontal_nT"] > 1000
        d_ref = np.degrees(np.arctan2(east, north))
        d_same = same["declination_deg"]
        assert np.all(np.abs(d_same[strong] - d_ref[strong]) < 1e-4)


def test_igrf_against_chaosmagpy_at_epochs():
    # Source: chaosmagpy synth_values (independent spherical-harmonic synthesis, DTU) with the
    # IGRF-14 coefficients as read by ppigrf.read_shc, and chaosmagpy's own WGS84 geodetic <->
    # geocentric conversion (gg_to_geo). At the model epochs no time interpolation is involved.
    import ppigrf
    from chaosmagpy.coordinate_utils import gg_to_geo
    from chaosmagpy.model_utils import synth_values
    from ppigrf.ppigrf import read_shc

    g_df, h_df = read_shc(str(Path(ppigrf.__file__).with_name("IGRF14.shc")))
    import chaosmagpy

    # chaosmagpy's default ellipsoid rounds the WGS84 polar radius to 6356.752 km; use the exact
    # WGS84 value b = a (1 - f) (NIMA TR8350.2) so that both sides describe the same ellipsoid.
    saved = chaosmagpy.basicConfig["params.ellipsoid"]
    chaosmagpy.basicConfig["params.ellipsoid"] = np.array([6378.137, 6378.137 * (1 - 1 / 298.257223563)])
    try:
        _compare_with_chaosmagpy(g_df, h_df, gg_to_geo, synth_values)
    finally:
        chaosmagpy.basicConfig["params.ellipsoid"] = saved


def _compare_with_chaosmagpy(g_df, h_df, gg_to_geo, synth_values):
    rng = np.random.default_rng(7)
    lat, lon, alt = rng.uniform(-89.5, 89.5, 400), rng.uniform(-180, 180, 400), rng.uniform(0, 40, 400)
    radius, theta = gg_to_geo(alt, 90.0 - lat)
    for epoch_index in (0, 10, 20, 24, 25):
        epoch = 1900 + 5 * epoch_index
        coeffs = []
        for n in range(1, 14):
            coeffs.append(g_df.iloc[epoch_index][(n, 0)])
            for m in range(1, n + 1):
                coeffs += [g_df.iloc[epoch_index][(n, m)], h_df.iloc[epoch_index][(n, m)]]
        b_r, b_t, b_p = synth_values(np.array(coeffs), radius, theta, lon)
        psi = np.radians((90.0 - theta) - lat)  # geocentric minus geodetic latitude
        north_gc, down_gc = -b_t, -b_r
        north = north_gc * np.cos(psi) - down_gc * np.sin(psi)
        down = north_gc * np.sin(psi) + down_gc * np.cos(psi)
        ours = field_arrays(lat, lon, float(epoch), alt)
        np.testing.assert_allclose(ours["north_nT"], north, atol=0.01, rtol=0)
        np.testing.assert_allclose(ours["east_nT"], b_p, atol=0.01, rtol=0)
        np.testing.assert_allclose(ours["down_nT"], down, atol=0.01, rtol=0)


def test_rates_equal_central_difference_inside_interval():
    # Source: definition of the derivative; IGRF is linear in time inside each 5-year interval,
    # so X, Y, Z rates are exact and D, I, H, F rates agree with a small central difference.
    rng = np.random.default_rng(5)
    lat, lon = rng.uniform(-85, 85, 300), rng.uniform(-180, 180, 300)
    t, step = 2012.3, 0.01
    mid = field_arrays(lat, lon, t)
    plus, minus = field_arrays(lat, lon, t + step), field_arrays(lat, lon, t - step)
    for name, tol in (("north_nT", 1e-6), ("east_nT", 1e-6), ("down_nT", 1e-6), ("horizontal_nT", 1e-3),
                      ("total_nT", 1e-3), ("inclination_deg", 1e-6), ("declination_deg", 1e-5)):
        diff = (plus[name] - minus[name]) / (2 * step)
        np.testing.assert_allclose(mid[name + "_per_year"], diff, atol=tol, rtol=1e-5, err_msg=name)


def test_field_identities():
    # Source: definitions of the seven elements (e.g. WMM2020 technical report, eq. 19).
    rng = np.random.default_rng(11)
    f = headingref.field(rng.uniform(-89, 89, 500), rng.uniform(-180, 180, 500), 2026.5)
    np.testing.assert_allclose(f.total_nT**2, f.horizontal_nT**2 + f.down_nT**2, rtol=1e-12)
    np.testing.assert_allclose(np.tan(np.radians(f.inclination_deg)), f.down_nT / f.horizontal_nT, rtol=1e-9)
    np.testing.assert_allclose(f.declination_deg, np.degrees(np.arctan2(f.east_nT, f.north_nT)), atol=1e-9)


def test_zones_and_uncertainty_thresholds():
    # Source: WMM2025 technical report: blackout H < 2000 nT, caution 2000 <= H < 6000 nT.
    from headingref.field import classify_zone, declination_uncertainty_deg

    assert list(classify_zone([1999.9, 2000.0, 5999.9, 6000.0])) == ["blackout", "caution", "caution", "normal"]
    # sqrt(0.26^2 + (5417/5417)^2) = sqrt(1.0676)
    assert declination_uncertainty_deg(5417.0) == pytest.approx(np.sqrt(0.26**2 + 1.0), rel=1e-12)


def test_declination_undefined_at_geographic_poles():
    # Source: geometry (north undefined at the pole); the flag says why.
    with pytest.warns(headingref.UndefinedDeclinationWarning):
        f = headingref.field([90.0, -90.0, 89.0], [0.0, 0.0, 0.0], "2026-01-01")
    assert np.isnan(f.declination_deg[0]) and np.isnan(f.declination_deg[1])
    assert "pole" in f.declination_flag[0] and f.declination_flag[2] == ""
    assert np.isfinite(f.horizontal_nT[0]) and f.horizontal_nT[0] > 0


def test_grid_equals_scattered_and_writes_netcdf(tmp_path):
    # Internal consistency of the separable grid path against the scattered kernel (itself checked
    # against ppigrf, chaosmagpy and the NOAA test values above).
    lats = np.linspace(-89, 89, 37)
    lons = np.linspace(-180, 175, 72)
    ds = headingref.field_grid(lats, lons, "2026-12-02", alt_km=10.0)
    la, lo = np.meshgrid(lats, lons, indexing="ij")
    f = field_arrays(la.ravel(), lo.ravel(), headingref.units.decimal_year("2026-12-02"), 10.0)
    for name in ("north_nT", "east_nT", "down_nT", "declination_deg", "inclination_deg_per_year"):
        np.testing.assert_allclose(ds[name].values.ravel(), f[name], atol=1e-8, rtol=1e-10)
    path = tmp_path / "grid.nc"
    ds.to_netcdf(path)
    import xarray as xr

    back = xr.open_dataset(path)
    np.testing.assert_array_equal(back.zone.values, ds.zone.values)
    multi = headingref.field_grid(lats[:3], lons[:4], ["2020-01-01", "2025-01-01"])
    assert multi.declination_deg.dims == ("time", "lat", "lon")
    assert multi.time.values[1] == 2025.0


def test_date_validity_and_extrapolation():
    with pytest.raises(DateRangeError, match="outside IGRF-14's validity"):
        headingref.field(60, 10, "2031-01-01")
    with pytest.warns(ExtrapolationWarning):
        headingref.field(60, 10, "2031-01-01", allow_extrapolation=True)
    wmm = load_model(pygeomag_cof("WMM_2025.COF"))
    assert (wmm.valid_from, wmm.valid_to) == (2025.0, 2030.0)
    with pytest.raises(DateRangeError):
        headingref.field(60, 10, 2024.9, model=wmm)
    # validity edges are inside
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        headingref.field(60, 10, 1900.0)
        headingref.field(60, 10, 2030.0)


@pytest.mark.parametrize(
    "kwargs, message",
    [
        ({"lat": 91.0}, "outside -90 to 90"),
        ({"lat": float("nan")}, "not a finite"),
        ({"lon": float("inf")}, "not a finite"),
        ({"alt_km": -1.5}, "outside -1 to 1000 km"),
        ({"alt_km": 1001.0}, "outside -1 to 1000 km"),
        ({"date": "2025-13-01"}, "not a valid calendar date"),
        ({"date": "yesterday"}, "not understood"),
        ({"lat": "N95°"}, "outside"),
        ({"lat": [1.0, 2.0], "lon": [1.0, 2.0, 3.0]}, "do not broadcast"),
    ],
)
def test_bad_input_is_one_clear_error(kwargs, message):
    args = {"lat": 60.0, "lon": 10.0, "date": "2026-01-01", "alt_km": 0.0} | kwargs
    with pytest.raises(InputError, match=message):
        headingref.field(args["lat"], args["lon"], args["date"], alt_km=args["alt_km"])


def test_bad_coefficient_files(tmp_path):
    with pytest.raises(ModelFileError, match="does not exist"):
        load_model(tmp_path / "nothing.shc")
    bad = tmp_path / "bad.shc"
    bad.write_text("# header\n1 2 2 2 1\n2020.0 2025.0\n1 0 -29000 -29100\n1 1 x y\n")
    with pytest.raises(ModelFileError, match="line"):
        load_model(bad)
    short = tmp_path / "short.COF"
    short.write_text("    2025.0  WMM-2025  11/13/2024\n  1  0  -29351.8  0.0  12.0  0.0\n999999999999\n")
    with pytest.raises(ModelFileError, match="expected 2 for degree 1"):  # (1, 1) is missing
        load_model(short)


def test_other_shc_file_igrf13():
    # IGRF-13 ships with ppigrf too; at 2015.0 its definitive coefficients equal IGRF-14's
    # (IGRF-14 revised only 2020 onward: IAGA V-MOD, IGRF-14 release notes) -> same field.
    import ppigrf

    igrf13 = load_model(Path(ppigrf.__file__).with_name("IGRF13.shc"))
    assert igrf13.valid_to == pytest.approx(2025.0)
    a = field_arrays(70.0, 25.0, 2015.0, model=igrf13)
    b = field_arrays(70.0, 25.0, 2015.0)
    assert a["declination_deg"][0] == pytest.approx(b["declination_deg"][0], abs=1e-9)


def test_sincos_deg_matches_numpy():
    # numpy's sin/cos as the reference for the kernels' one-call sine-and-cosine (quadrant reduction).
    import numba

    from headingref.synthesis import sincos_deg

    @numba.njit
    def both(x, s, c):
        for i in range(x.size):
            s[i], c[i] = sincos_deg(x[i])

    x = np.concatenate([np.random.default_rng(3).uniform(-720, 720, 20000), np.arange(-360.0, 360.5, 0.5)])
    s, c = np.empty_like(x), np.empty_like(x)
    both(x, s, c)
    np.testing.assert_allclose(s, np.sin(np.radians(x)), atol=2e-15, rtol=0)
    np.testing.assert_allclose(c, np.cos(np.radians(x)), atol=2e-15, rtol=0)
