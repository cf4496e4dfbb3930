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
from headingref.errors import InputError
from headingref.field import field_grid

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
    import datetime as dt

    import ppigrf

    table = compare_models(64.5, -20.0, "2026-07-02", ["IGRF-14", "WMMHR2025"])
    be, bn, _ = ppigrf.igrf(-20.0, 64.5, 0.0, dt.datetime(2026, 7, 2))
    expected = math.degrees(math.atan2(float(np.ravel(be)[0]), float(np.ravel(bn)[0])))
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
