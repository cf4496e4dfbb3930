"""WMMHR2025 (degree 133) and coefficient files of any degree, checked against outside syntheses.

Outside sources:
- pygeomag 1.1.0 (``GeoMag(high_resolution=True)``), an independent pure-Python port of NOAA's
  WMM/WMMHR software, evaluated point by point;
- ``wmmhr`` 1.2.4, NOAA NCEI's own Python module for WMMHR2025 (vectorised).
Tolerances are the issue's: X, Y, Z within 0.05 nT, D within 1e-3 degree where H > 1000 nT.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest

from headingref.elements import field_arrays, field_grid
from headingref.errors import ModelFileError
from headingref.model import MAX_DEGREE, load_model, model_file

COMPONENTS = ("north_nT", "east_nT", "down_nT")


def _places(n: int, seed: int):
    """Random places and dates in WMMHR2025's validity, a fifth of them within 2 degrees of a pole."""
    rng = np.random.default_rng(seed)
    lat = rng.uniform(-90.0, 90.0, n)
    polar = rng.random(n) < 0.2
    lat[polar] = np.sign(rng.uniform(-1, 1, polar.sum())) * rng.uniform(88.0, 89.9999, polar.sum())
    lon = rng.uniform(-180.0, 180.0, n)
    alt = rng.uniform(-0.5, 12.0, n)
    year = rng.uniform(2025.0, 2030.0, n)
    return lat, lon, alt, year


def test_wmmhr2025_against_pygeomag_high_resolution():
    # pygeomag 1.1.0 GeoMag(high_resolution=True): X, Y, Z within 0.05 nT, D within 1e-3 deg (H > 1000 nT).
    # pygeomag is slow at degree 133 (a few places a second), so 40 places here; wmmhr below covers hundreds.
    from pygeomag import GeoMag

    lat, lon, alt, year = _places(40, seed=11)
    ours = field_arrays(lat, lon, year, alt, model="WMMHR2025")
    geomag = GeoMag(coefficients_file="wmm/WMMHR_2025.COF", high_resolution=True)
    ref = np.array([[getattr(geomag.calculate(glat=a, glon=o, alt=h, time=t), k) for k in "xyzd"]
                    for a, o, h, t in zip(lat, lon, alt, year, strict=True)])
    for i, name in enumerate(COMPONENTS):
        np.testing.assert_allclose(ours[name], ref[:, i], rtol=0, atol=0.05, err_msg=name)
    strong = ours["horizontal_nT"] > 1000.0
    np.testing.assert_allclose(ours["declination_deg"][strong], ref[strong, 3], rtol=0, atol=1e-3)


def test_wmmhr2025_against_noaa_wmmhr_module_at_hundreds_of_places():
    # NOAA NCEI's wmmhr module (wmmhr_calc, forward_base / forward_sv): field within 0.05 nT, rates within
    # 0.05 nT/yr, D within 1e-3 deg where H > 1000 nT; 400 places and dates, 80 of them near the poles.
    from wmmhr import wmmhr_calc

    lat, lon, alt, year = _places(400, seed=12)
    ours = field_arrays(lat, lon, year, alt, model="WMMHR2025")
    calc = wmmhr_calc()
    calc.setup_time(dyear=year)
    calc.setup_env(lat, lon, alt, msl=False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the module warns about its blackout zone
        base = calc.forward_base()
        rates = calc.forward_sv()
    for name, ref in zip(COMPONENTS, base, strict=True):
        np.testing.assert_allclose(ours[name], ref, rtol=0, atol=0.05, err_msg=name)
    for name, ref in zip(COMPONENTS, rates, strict=True):
        np.testing.assert_allclose(ours[name + "_per_year"], ref, rtol=0, atol=0.05, err_msg=name)
    strong = ours["horizontal_nT"] > 1000.0
    declination = np.degrees(np.arctan2(base[1], base[0]))
    np.testing.assert_allclose(ours["declination_deg"][strong], declination[strong], rtol=0, atol=1e-3)


def test_wmmhr2025_grid_equals_scattered_and_wmmhr_near_pole():
    # The separable grid path at degree 133 on a 1 arc-minute patch 89.5-89.9 N agrees with NOAA's wmmhr module
    # (0.05 nT): the Legendre recursion is stable close to the pole at high degree.
    from wmmhr import wmmhr_calc

    lats = np.arange(89.5, 89.9, 1 / 60)
    lons = np.arange(-10.0, -9.5, 1 / 60)
    grid = field_grid(lats, lons, 2027.25, model="WMMHR2025")
    la, lo = np.meshgrid(lats, lons, indexing="ij")
    calc = wmmhr_calc()
    calc.setup_time(dyear=np.full(la.size, 2027.25))
    calc.setup_env(la.ravel(), lo.ravel(), np.zeros(la.size), msl=False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        x, y, z = calc.forward_base()
    np.testing.assert_allclose(grid.north_nT.values.ravel(), x, rtol=0, atol=0.05)
    np.testing.assert_allclose(grid.east_nT.values.ravel(), y, rtol=0, atol=0.05)
    np.testing.assert_allclose(grid.down_nT.values.ravel(), z, rtol=0, atol=0.05)


def _write_cof(path: Path, rows, epoch: float = 2025.0) -> Path:
    lines = [f"    {epoch:.1f}            TEST-{epoch:.0f}     01/01/2025"]
    lines += [f"{n:5d}{m:5d}{g:12.4f}{h:12.4f}{gd:12.4f}{hd:12.4f}" for n, m, g, h, gd, hd in rows]
    lines += ["9" * 48, "9" * 48]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_degree_above_limit_is_refused_with_the_reason(tmp_path):
    # MAX_DEGREE is the documented limit (headingref.model.MAX_DEGREE); the message must name it, not a format fault
    rows = [(1, 0, -29000.0, 0.0, 0.0, 0.0), (MAX_DEGREE + 1, 0, 0.01, 0.0, 0.0, 0.0)]
    with pytest.raises(ModelFileError, match=f"degree {MAX_DEGREE + 1}, above the highest supported degree {MAX_DEGREE}"):
        load_model(_write_cof(tmp_path / "deep.COF", rows))


def test_shc_of_degree_133_reads_like_the_cof(tmp_path):
    # WMMHR2025 written out in the SHC layout (IAGA V-MOD IGRF-14 file description: N_MIN N_MAX N_TIMES
    # SPLINE_ORDER N_STEPS, epochs, then 'n m value' with m < 0 for h) gives pygeomag's field at 2025.0.
    from pygeomag import GeoMag

    hr = load_model("WMMHR2025")
    lines = ["# WMMHR2025 main field at 2025.0 as SHC", f"1 {hr.nmax} 1 1 0 2025.0 2025.0", "2025.0"]
    for n in range(1, hr.nmax + 1):
        for m in range(0, n + 1):
            lines.append(f"{n} {m} {hr.g[0, n, m]:.4f}")
            if m:
                lines.append(f"{n} {-m} {hr.h[0, n, m]:.4f}")
    shc = tmp_path / "wmmhr2025_static.shc"
    shc.write_text("\n".join(lines) + "\n")
    static = load_model(shc)
    assert static.nmax == 133
    ours = field_arrays([64.5, -77.0, 12.0], [-20.0, 110.0, 40.0], 2025.0, 0.0, model=static)
    geomag = GeoMag(coefficients_file="wmm/WMMHR_2025.COF", high_resolution=True)
    for i, (a, o) in enumerate([(64.5, -20.0), (-77.0, 110.0), (12.0, 40.0)]):
        ref = geomag.calculate(glat=a, glon=o, alt=0.0, time=2025.0)
        assert ours["north_nT"][i] == pytest.approx(ref.x, abs=0.05)
        assert ours["east_nT"][i] == pytest.approx(ref.y, abs=0.05)
        assert ours["down_nT"][i] == pytest.approx(ref.z, abs=0.05)


def test_wmmhr_file_header_and_secular_variation_degree():
    # WMMHR2025 (NOAA NCEI / CIRES): degree 133, secular variation to degree 15, valid 2025.0-2030.0
    hr = load_model("WMMHR2025")
    assert (hr.nmax, hr.sv_nmax, hr.valid_from, hr.valid_to) == (133, 15, 2025.0, 2030.0)
    assert model_file("wmmhr-2025").name == "WMMHR_2025.COF"
