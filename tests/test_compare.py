"""Model comparison (compare_models, difference_grid, CLI compare/models) and chunked grids.

Outside sources: pygeomag 1.1.0 (WMM2025 and WMMHR2025 high resolution, with its uncertainty
constants from the WMM2025/WMMHR2025 reports), ppigrf (IGRF-14), and the eager field_grid checked
in tests/test_field.py and tests/test_highres.py against chaosmagpy, pygeomag and wmmhr.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pandas as pd
import pytest

from headingref.cli import main
from headingref.compare import COLUMNS, compare_models, difference_grid, wrap_deg
from headingref.elements import field_grid
from headingref.errors import InputError

PLACES = [(64.5, -20.0), (78.2, 15.6), (-43.0, 147.3), (10.0, -60.0)]
YEAR = 2026.5


def _pygeomag(lat, lon, year, high_resolution):
    from pygeomag import GeoMag

    cof = "wmm/WMMHR_2025.COF" if high_resolution else "wmm/WMM_2025.COF"
    result = GeoMag(coefficients_file=cof, high_resolution=high_resolution).calculate(glat=lat, glon=lon, alt=0.0, time=year)
    return result.d, result.h, result.calculate_uncertainty().d


def test_compare_models_long_table_against_pygeomag():
    # pygeomag WMM2025 and WMMHR2025: declination within 1e-3 deg, H within 0.05 nT, uncertainty (each
    # report's constants) within 1e-6 deg, difference WMMHR - WMM within 2e-3 deg
    lat = [p[0] for p in PLACES]
    lon = [p[1] for p in PLACES]
    table = compare_models(lat, lon, YEAR, "WMM2025,WMMHR2025", names=["A", "B", "C", "D"])
    assert tuple(table.columns) == COLUMNS
    assert len(table) == 2 * len(PLACES)
    assert list(table.model.astype(str)[:2]) == ["WMM2025", "WMMHR2025"]
    for i, (la, lo) in enumerate(PLACES):
        d0, h0, s0 = _pygeomag(la, lo, YEAR, False)
        d1, h1, s1 = _pygeomag(la, lo, YEAR, True)
        wmm, hr = table.iloc[2 * i], table.iloc[2 * i + 1]
        assert wmm["name"] == hr["name"] == "ABCD"[i]
        assert wmm.declination_deg == pytest.approx(d0, abs=1e-3)
        assert hr.declination_deg == pytest.approx(d1, abs=1e-3)
        assert hr.horizontal_nT == pytest.approx(h1, abs=0.05)
        assert wmm.declination_uncertainty_deg == pytest.approx(s0, abs=1e-6)
        assert hr.declination_uncertainty_deg == pytest.approx(s1, abs=1e-6)
        assert wmm.declination_diff_deg == 0.0
        assert hr.declination_diff_deg == pytest.approx(d1 - d0, abs=2e-3)
        assert hr.horizontal_diff_nT == pytest.approx(h1 - h0, abs=0.1)
        assert hr.combined_uncertainty_deg == pytest.approx(math.hypot(s0, s1), abs=1e-6)
        assert hr.significant == (abs(d1 - d0) > math.hypot(s0, s1))


def test_compare_models_with_igrf_first_against_ppigrf():
    # ppigrf (IGRF-14, geodetic components) for the reference row: declination within 1e-3 deg
    from reference import ppigrf_declination

    table = compare_models(64.5, -20.0, "2026-07-02", ["IGRF-14", "WMMHR2025"])
    expected = ppigrf_declination(64.5, -20.0, "2026-07-02")
    assert table.declination_deg.iloc[0] == pytest.approx(expected, abs=1e-3)
    assert table.attrs["reference_model"] == "IGRF-14"
    assert "proxy" in table.attrs["error_models"]["IGRF-14"]


def test_compare_refuses_one_model_and_repeats():
    with pytest.raises(InputError, match="at least two"):
        compare_models(60, 10, YEAR, "WMM2025")
    with pytest.raises(InputError, match="more than once"):
        compare_models(60, 10, YEAR, "WMM2025,wmm-2025")


def test_wrap_deg_half_open_interval():
    # (-180, 180]: a difference of -190 deg is +170 deg, -180 is +180 (definition in the docstring)
    np.testing.assert_array_equal(wrap_deg([-190.0, -180.0, 180.0, 359.0, 0.0]), [170.0, 180.0, 180.0, -1.0, 0.0])


def test_difference_grid_equals_pygeomag_difference_at_nodes():
    # each node's b - a against pygeomag's WMMHR2025 minus WMM2025 (2e-3 deg)
    lats = np.array([62.0, 63.0])
    lons = np.array([-22.0, -18.0, -14.0])
    ds = difference_grid(lats, lons, YEAR, "WMM2025", "WMMHR2025")
    for i, la in enumerate(lats):
        for j, lo in enumerate(lons):
            d0, _, _ = _pygeomag(la, lo, YEAR, False)
            d1, _, _ = _pygeomag(la, lo, YEAR, True)
            assert float(ds.declination_diff_deg[i, j]) == pytest.approx(d1 - d0, abs=2e-3)


def test_chunked_grid_equals_eager_and_writes_netcdf(tmp_path):
    # the chunked grid is the eager one (same kernels per chunk); BLAS summation order changes the last bits only
    pytest.importorskip("dask")
    import xarray as xr

    lats = np.arange(-90.0, 90.01, 7.5)
    lons = np.arange(-180.0, 180.0, 10.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the pole rows
        eager = field_grid(lats, lons, [2026.0, 2028.5], model="WMMHR2025")
        lazy = field_grid(lats, lons, [2026.0, 2028.5], model="WMMHR2025", chunks={"lat": 7, "lon": 11, "time": 1})
    assert lazy.declination_deg.chunks is not None
    assert lazy.attrs == eager.attrs
    done = lazy.compute()
    for name in eager.data_vars:
        a, b = eager[name].values, done[name].values
        if a.dtype.kind == "f":
            np.testing.assert_allclose(b, a, rtol=1e-12, atol=1e-9, equal_nan=True, err_msg=name)
        else:
            np.testing.assert_array_equal(b, a, err_msg=name)
        assert eager[name].attrs.keys() == done[name].attrs.keys()
    target = tmp_path / "cube.nc"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        lazy.to_netcdf(target, engine="h5netcdf")
    with xr.open_dataset(target, engine="h5netcdf") as back:
        np.testing.assert_allclose(back.down_nT.values, eager.down_nT.values, rtol=1e-12, atol=1e-9)


def test_chunks_argument_is_checked():
    pytest.importorskip("dask")
    with pytest.raises(InputError, match="unknown dimension"):
        field_grid([0.0, 1.0], [0.0, 1.0], YEAR, chunks={"latitude": 1})
    with pytest.raises(InputError, match="whole number"):
        field_grid([0.0, 1.0], [0.0, 1.0], YEAR, chunks={"lat": 0})


def test_cli_compare_place_and_csv(tmp_path, capsys):
    out = tmp_path / "cmp.csv"
    assert main(["compare", "--lat", "64.5", "--lon", "-20", "--date", "2026-07-02", "--output", str(out)]) == 0
    table = pd.read_csv(out)
    assert list(table.model) == ["IGRF-14", "WMM2025", "WMMHR2025"]
    for column in ("lat_deg", "lon_deg", "model", "declination_deg", "horizontal_nT", "declination_uncertainty_deg",
                   "declination_diff_deg"):
        assert column in table
    d1, _, _ = _pygeomag(64.5, -20.0, 2026.5 + 0.5 / 365, True)  # pygeomag WMMHR2025 (1e-2 deg: date rounding)
    assert table.declination_deg.iloc[2] == pytest.approx(d1, abs=1e-2)
    places = tmp_path / "places.csv"
    places.write_text("name,lat,lon\nP1,70,20\nP2,-60,100\n")
    assert main(["compare", "--models", "WMM2020,WMM2025", "--input", str(places), "--date", "2025-01-01",
                 "--output", str(out)]) == 0
    assert list(pd.read_csv(out).name) == ["P1", "P1", "P2", "P2"]
    assert main(["compare", "--models", "WMM2025", "--lat", "1", "--lon", "1"]) == 2
    assert "at least two" in capsys.readouterr().err


def test_cli_compare_map_and_models(tmp_path, capsys):
    png = tmp_path / "diff.png"
    assert main(["compare", "--models", "WMM2025,WMMHR2025", "--map", "60:63:-22:-16", "--step", "0.5",
                 "--date", "2026-07-02", "--plot", str(png)]) == 0
    assert png.stat().st_size > 10_000
    assert main(["models", "--output", str(tmp_path / "m.csv")]) == 0
    listed = pd.read_csv(tmp_path / "m.csv")
    assert listed.set_index("name").loc["WMMHR2025", "nmax"] == 133  # WMMHR2025: degree 133 (NOAA NCEI)


# --------------------------------------------------------------------------- route, runways, compass bases

ROUTE = [dict(name="ALFA", lat=66.55, lon=-51.95), dict(name="BRAVO", lat=77.02, lon=-66.1)]  # invented waypoints


def _pygeomag_at(lat, lon, year, alt_km=0.0):
    """pygeomag 1.1.0 WMM2025 and WMMHR2025 (high resolution): (declination, uncertainty) of each, degrees."""
    from pygeomag import GeoMag

    out = []
    for cof, high in (("wmm/WMM_2025.COF", False), ("wmm/WMMHR_2025.COF", True)):
        result = GeoMag(coefficients_file=cof, high_resolution=high).calculate(glat=lat, glon=lon, alt=alt_km, time=year)
        out.append((result.d, result.calculate_uncertainty().d))
    return out


def _along_geodesic(lat1, lon1, lat2, lon2, distance_nm):
    # geographiclib (Karney 2013): the point distance_nm along the WGS84 geodesic (1 NM = 1852 m, SI brochure)
    from geographiclib.geodesic import Geodesic

    line = Geodesic.WGS84.InverseLine(lat1, lon1, lat2, lon2)
    point = line.Position(distance_nm * 1852.0)
    return point["lat2"], point["lon2"], line.s13 / 1852.0


def test_compare_route_samples_against_pygeomag_ppigrf_and_geographiclib():
    from reference import ppigrf_declination

    from headingref.compare import ROUTE_SAMPLE_COLUMNS, compare_route

    result = compare_route(ROUTE, YEAR, "IGRF-14,WMM2025,WMMHR2025", spacing_nm=50.0)
    s = result.samples
    assert tuple(s.columns) == ROUTE_SAMPLE_COLUMNS
    assert len(s) == 3 * s["sample"].max()
    for k in (0, 6, int(s["sample"].max()) - 1):  # three samples: start, inside, end
        rows = s[s["sample"] == k + 1]
        igrf, wmm, hr = (rows.iloc[j] for j in range(3))
        # the sample lies on the geodesic at its distance (geographiclib, 1 m)
        lat, lon, _ = _along_geodesic(66.55, -51.95, 77.02, -66.1, igrf.distance_along_leg_nm)
        assert igrf.lat_deg == pytest.approx(lat, abs=1e-5) and igrf.lon_deg == pytest.approx(lon, abs=1e-5)
        (d_wmm, s_wmm), (d_hr, s_hr) = _pygeomag_at(igrf.lat_deg, igrf.lon_deg, YEAR)
        d_igrf = ppigrf_declination(igrf.lat_deg, igrf.lon_deg, "2026-07-02")  # ppigrf IGRF-14 (YEAR ~ 2 July)
        assert igrf.declination_deg == pytest.approx(d_igrf, abs=2e-3)
        assert wmm.declination_deg == pytest.approx(d_wmm, abs=1e-3)  # pygeomag WMM2025
        assert hr.declination_deg == pytest.approx(d_hr, abs=1e-3)  # pygeomag WMMHR2025 (high resolution)
        assert hr.declination_diff_deg == pytest.approx(d_hr - d_igrf, abs=3e-3)
        assert wmm.declination_diff_deg == pytest.approx(d_wmm - d_igrf, abs=3e-3)
        assert hr.declination_uncertainty_deg == pytest.approx(s_hr, abs=1e-6)  # WMMHR2025 report constants (pygeomag)


def test_compare_route_stretches_where_pygeomag_models_disagree():
    # The stretch where WMMHR2025 minus WMM2025 exceeds their combined 1 sigma (both from pygeomag, with
    # each report's uncertainty constants): inside it pygeomag's difference is beyond the bound, 20 NM
    # outside it within, and at its ends on the bound within 0.1 deg (linear interpolation between 20-NM samples).
    from headingref.compare import ROUTE_STRETCH_COLUMNS, compare_route

    result = compare_route(ROUTE, YEAR, ["WMM2025", "WMMHR2025"], spacing_nm=20.0)
    st = result.stretches
    assert tuple(st.columns) == ROUTE_STRETCH_COLUMNS
    assert len(st) >= 1
    stretch = st.iloc[0]
    assert stretch.model == "WMMHR2025" and stretch.reference_model == "WMM2025" and stretch.leg == 1
    assert stretch.length_nm == pytest.approx(stretch.to_nm - stretch.from_nm)

    def margin(distance_nm):
        lat, lon, _ = _along_geodesic(66.55, -51.95, 77.02, -66.1, distance_nm)
        (d0, s0), (d1, s1) = _pygeomag_at(lat, lon, YEAR)
        return math.hypot(s0, s1) - abs(d1 - d0)

    length = _along_geodesic(66.55, -51.95, 77.02, -66.1, 0.0)[2]
    assert margin((stretch.from_nm + stretch.to_nm) / 2) < 0.0
    assert abs(margin(stretch.from_nm)) < 0.1
    if stretch.from_nm > 20.0:
        assert margin(stretch.from_nm - 20.0) > 0.0
    if stretch.to_nm < length - 20.0:
        assert abs(margin(stretch.to_nm)) < 0.1
        assert margin(stretch.to_nm + 20.0) > 0.0
    assert stretch.max_abs_declination_diff_deg > 0.5


def _designator(magnetic_deg):
    # ICAO Annex 14 Vol I 5.2.2.4 / FAA AC 150/5340-1J: the magnetic azimuth to the nearest 10 degrees,
    # leading digits; 0 is 36 (exact halves do not occur here)
    number = int(math.floor((magnetic_deg % 360.0) / 10.0 + 0.5)) % 36
    return f"{number or 36:02d}"


def test_compare_runways_designator_dependence_recomputed(write_csv):
    # Implied designators recomputed from geographiclib (azimuths, midpoint) and pygeomag (WMM2025,
    # WMMHR2025) / ppigrf (IGRF-14) declination at the midpoint, with the nearest-tenth rule.
    from geographiclib.geodesic import Geodesic
    from reference import ppigrf_declination

    from headingref.compare import compare_runways

    ends = [("JXRH", "25", 77.031936, -66.070419, 77.008061, -66.129527),  # invented airfields (demo data)
            ("JXRH", "07", 77.008061, -66.129527, 77.031936, -66.070419),
            ("JXSB", "07", 70.549154, -155.228532, 70.550842, -155.171465),
            ("JXSB", "25", 70.550842, -155.171465, 70.549154, -155.228532)]
    path = write_csv("rw.csv", ["airport", "runway", "lat", "lon", "end_lat", "end_lon"], ends)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # weak-field warnings at JXRH
        table = compare_runways(path, YEAR, "IGRF-14,WMM2025,WMMHR2025")
    assert len(table) == 4 and table.attrs["models"] == ["IGRF-14", "WMM2025", "WMMHR2025"]
    for i, (_, _, la1, lo1, la2, lo2) in enumerate(ends):
        line = Geodesic.WGS84.Inverse(la1, lo1, la2, lo2)
        azimuth = math.degrees(math.atan2(  # mean of the two ends' azimuths in this direction (Karney 2013)
            math.sin(math.radians(line["azi1"])) + math.sin(math.radians(line["azi2"])),
            math.cos(math.radians(line["azi1"])) + math.cos(math.radians(line["azi2"]))))
        mid = Geodesic.WGS84.Direct(la1, lo1, line["azi1"], line["s12"] / 2)
        (d_wmm, _), (d_hr, _) = _pygeomag_at(mid["lat2"], mid["lon2"], YEAR)
        d_igrf = ppigrf_declination(mid["lat2"], mid["lon2"], "2026-07-02")
        expected = {"IGRF-14": d_igrf, "WMM2025": d_wmm, "WMMHR2025": d_hr}
        row = table.iloc[i]
        for model, dec in expected.items():
            assert row[f"{model}_variation_deg"] == pytest.approx(dec, abs=3e-3)
            assert row[f"{model}_runway_magnetic_deg"] == pytest.approx((azimuth - dec) % 360.0, abs=0.01)
            assert row[f"{model}_designator_implied"] == _designator(azimuth - dec)
        dependent = len({_designator(azimuth - d) for d in expected.values()}) > 1
        assert bool(row.model_dependent) == dependent
        assert row.variation_spread_deg == pytest.approx(max(expected.values()) - min(expected.values()), abs=5e-3)
    # at JXRH the crustal field of WMMHR2025 moves the runway across the 245 deg boundary (25 -> 24)
    assert list(table.model_dependent) == [True, True, False, False]


def test_compare_bases_variation_to_mark_against_pygeomag_and_ppigrf(write_csv):
    # predicted variation = surveyed + the model's change since the survey (NGA Handbook of Magnetic
    # Compass Adjustment: bring the surveyed variation forward); model changes from pygeomag / ppigrf;
    # rounding to the mark step: nearest multiple (common practice)
    from reference import ppigrf_declination

    from headingref.compare import compare_bases

    path = write_csv("bases.csv", ["name", "lat", "lon", "surveyed_variation", "survey_date"],
                     [("Testbase North", 67.012, -50.711, "26.4W", "2025-03-01"),  # invented sites
                      ("Testbase East", 64.130, -21.940, "11.9W", "2025-09-15"),
                      ("Testbase West", 67.013, -50.711, "26.51W", "2025-03-01")])  # the models' changes straddle 25.75 W
    swing = "2027-01-01"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        table = compare_bases(path, swing, "IGRF-14,WMM2025,WMMHR2025", mark_step_deg=0.5)
    assert table.attrs["models"] == ["IGRF-14", "WMM2025", "WMMHR2025"]
    assert list(table.status) == ["ok", "ok", "ok"]
    from headingref.units import decimal_year

    t0s = [decimal_year("2025-03-01"), decimal_year("2025-09-15")]
    t1 = decimal_year(swing)
    differs = []
    for i, (lat, lon, surveyed, t0, d0) in enumerate([(67.012, -50.711, -26.4, t0s[0], "2025-03-01"),
                                                       (64.130, -21.940, -11.9, t0s[1], "2025-09-15"),
                                                       (67.013, -50.711, -26.51, t0s[0], "2025-03-01")]):
        (w0, _), (h0, _) = _pygeomag_at(lat, lon, t0)
        (w1, _), (h1, _) = _pygeomag_at(lat, lon, t1)
        g0, g1 = ppigrf_declination(lat, lon, d0), ppigrf_declination(lat, lon, swing)
        predicted = {"IGRF-14": surveyed + g1 - g0, "WMM2025": surveyed + w1 - w0, "WMMHR2025": surveyed + h1 - h0}
        row = table.iloc[i]
        for model, value in predicted.items():
            assert row[f"{model}_predicted_variation_deg"] == pytest.approx(value, abs=2e-3)
            assert row[f"{model}_predicted_diff_deg"] == pytest.approx(value - predicted["IGRF-14"], abs=3e-3)
        assert row["WMMHR2025_model_variation_deg"] == pytest.approx(h1, abs=1e-3)
        marks = {math.floor(v / 0.5 + 0.5) * 0.5 for v in predicted.values()}
        assert row["WMM2025_variation_to_mark_deg"] == math.floor(predicted["WMM2025"] / 0.5 + 0.5) * 0.5
        assert bool(row.mark_differs) == (len(marks) > 1)
        differs.append(len(marks) > 1)
    assert differs == [False, False, True]  # the third base's mark depends on the model (from pygeomag / ppigrf)


def test_compare_bases_refused_survey_is_named(write_csv):
    # WMM2025 starts on 2025-01-01 (WMM2025 technical report): a 2020 survey is outside it
    from headingref.compare import compare_bases

    path = write_csv("bases.csv", ["name", "lat", "lon", "surveyed_variation", "survey_date"],
                     [("Old base", 60.0, 10.0, "3.0E", "2020-05-01")])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the base is due for resurvey
        table = compare_bases(path, "2026-06-01", "IGRF-14,WMM2025")
    assert table.status.iloc[0] == "warning"
    assert "WMM2025" in table.reason.iloc[0] and "validity" in table.reason.iloc[0]
    assert math.isnan(table["WMM2025_variation_to_mark_deg"].iloc[0])
    assert np.isfinite(table["IGRF-14_variation_to_mark_deg"].iloc[0])
    refused = compare_bases(path, "2026-06-01", "WMM2025,WMMHR2025")  # every model refuses: an error row
    assert refused.status.iloc[0] == "error" and refused.reason.iloc[0].count("validity") == 2


def test_cli_compare_route_runways_bases(tmp_path, demo_dir, capsys):
    route_csv = tmp_path / "route.csv"
    route_csv.write_text("name,lat,lon\nALFA,66.55,-51.95\nBRAVO,77.02,-66.1\n")
    out, png = tmp_path / "route_models.csv", tmp_path / "route_models.png"
    assert main(["compare", "--route", str(route_csv), "--models", "WMM2025,WMMHR2025", "--date", "2026-07-02",
                 "--spacing", "25", "--output", str(out), "--plot", str(png)]) == 0
    samples = pd.read_csv(out)
    assert set(samples.model) == {"WMM2025", "WMMHR2025"} and "distance_along_route_nm" in samples
    first = samples.iloc[1]  # WMMHR2025 at ALFA: pygeomag high resolution (1e-2 deg: date rounding)
    assert first.declination_deg == pytest.approx(_pygeomag_at(66.55, -51.95, 2026.5)[1][0], abs=1e-2)
    assert png.stat().st_size > 10_000
    assert "stretches where a model disagrees" in capsys.readouterr().out
    xlsx = tmp_path / "rw.xlsx"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert main(["compare", "--runways", str(demo_dir / "runways.csv"), "--date", "2026-07-02",
                     "--output", str(xlsx)]) == 0
    back = pd.read_excel(xlsx, header=None)
    assert back.shape[0] >= 27  # header rows plus 26 runway ends
    assert "depends on the model" in capsys.readouterr().out
    assert main(["compare", "--bases", str(demo_dir / "compass_bases.csv"), "--date", "2026-07-02",
                 "--models", "IGRF-14,WMM2020", "--extrapolate"]) == 0
    assert "variation to mark" in capsys.readouterr().out


def test_cli_compare_refuses_mixed_inputs(tmp_path, demo_dir, capsys):
    assert main(["compare", "--route", "a.csv", "--bases", "b.csv"]) == 2
    err = capsys.readouterr().err
    assert "give one of --route" in err and "Traceback" not in err
    assert main(["compare", "--bases", str(demo_dir / "compass_bases.csv"), "--plot", str(tmp_path / "p.png")]) == 2
    assert "--plot draws" in capsys.readouterr().err
    assert main(["compare", "--runways", str(tmp_path / "missing.csv")]) == 2
    assert "missing.csv" in capsys.readouterr().err
    # a bad date or rounding step is refused once, not turned into a reason on every base
    assert main(["compare", "--bases", str(demo_dir / "compass_bases.csv"), "--mark-step", "0"]) == 2
    assert "mark step" in capsys.readouterr().err
    assert main(["compare", "--bases", str(demo_dir / "compass_bases.csv"), "--date", "2026-13-01"]) == 2
    assert "2026-13-01" in capsys.readouterr().err
