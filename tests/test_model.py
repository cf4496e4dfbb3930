"""Models by name and each model's own declination error model.

Outside sources: the WMM2015, WMM2020, WMM2025 and WMMHR2025 technical reports (NOAA NCEI / BGS /
CIRES), uncertainty sections, whose declination constants a (deg) and b (nT) pygeomag 1.1.0 carries
in ``geomag.py`` (``GeoMagUncertaintyResult._error_model_*``); pygeomag's ``calculate_uncertainty()``
is used as the independent implementation. ppigrf's IGRF14.shc header for IGRF-14's validity.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from headingref.elements import declination_uncertainty_deg, field, field_grid
from headingref.errors import ModelFileError
from headingref.model import MODEL_NAMES, WMM_ERROR_MODELS, list_models, load_model, model_name

# (name, pygeomag coefficient file, a date inside its validity, published a deg, published b nT)
EDITIONS = [
    ("WMM2015", "wmm/WMM_2015.COF", 2017.5, 0.23, 5430.0),  # WMM2015 report
    ("WMM2020", "wmm/WMM_2020.COF", 2022.0, 0.26, 5625.0),  # WMM2020 report
    ("WMM2025", "wmm/WMM_2025.COF", 2026.9, 0.26, 5417.0),  # WMM2025 report
    ("WMMHR2025", "wmm/WMMHR_2025.COF", 2027.3, 0.25, 5205.0),  # WMMHR2025 report
]


@pytest.mark.parametrize("name, cof, year, a, b", EDITIONS)
def test_each_edition_uses_its_published_error_model(name, cof, year, a, b):
    # the constants as published (reports' uncertainty sections, as quoted in the issue and in pygeomag)
    em = load_model(name).error_model(year)
    assert (em.const_deg, em.scale_nT) == (a, b)
    # and the declination uncertainty at real places equals pygeomag's calculate_uncertainty().d (1e-9 deg)
    from pygeomag import GeoMag

    geomag = GeoMag(coefficients_file=cof, high_resolution=name == "WMMHR2025")
    places = [(70.0, 20.0), (-65.0, 140.0), (10.0, -60.0), (82.0, -100.0)]
    ours = field([p[0] for p in places], [p[1] for p in places], year, model=name)
    for i, (lat, lon) in enumerate(places):
        ref = geomag.calculate(glat=lat, glon=lon, alt=0.0, time=year)
        assert ours.declination_uncertainty_deg[i] == pytest.approx(ref.calculate_uncertainty().d, rel=1e-9)
        assert ours.horizontal_nT[i] == pytest.approx(ref.h, abs=0.05)
    assert name in ours.attrs["declination_uncertainty_model"]


def test_igrf_uses_the_same_epoch_wmm_as_a_labelled_proxy_and_none_before_2015():
    # IGRF has no published declination error model: WMM2015 constants for 2015-2020, WMM2020 for
    # 2020-2025, WMM2025 from 2025 (reports as above); NaN before 2015 (not an uncertainty of a 1900 field)
    igrf = load_model("IGRF-14")
    years = np.array([1965.0, 2014.99, 2015.0, 2019.9, 2020.0, 2024.5, 2025.0, 2029.9])
    a, b = igrf.error_constants(years)
    np.testing.assert_array_equal(a[2:], [0.23, 0.23, 0.26, 0.26, 0.26, 0.26])
    np.testing.assert_array_equal(b[2:], [5430.0, 5430.0, 5625.0, 5625.0, 5417.0, 5417.0])
    assert np.isnan(a[:2]).all() and np.isnan(b[:2]).all()
    assert "proxy" in igrf.error_model(2022.0).label
    table = field([60.0] * 3, [10.0] * 3, np.array([1990.0, 2017.0, 2026.0]))
    assert np.isnan(table.declination_uncertainty_deg[0])
    h = table.horizontal_nT.to_numpy()
    assert table.declination_uncertainty_deg[1] == pytest.approx(math.hypot(0.23, 5430.0 / h[1]), rel=1e-12)
    assert table.declination_uncertainty_deg[2] == pytest.approx(math.hypot(0.26, 5417.0 / h[2]), rel=1e-12)
    assert "none before 2015" in table.attrs["declination_uncertainty_model"]
    grid = field_grid([50.0, 60.0], [0.0, 10.0], 2022.0)
    expected = np.hypot(0.26, 5625.0 / grid.horizontal_nT.values)  # WMM2020 report constants
    np.testing.assert_allclose(grid.declination_uncertainty_deg.values, expected, rtol=1e-12)
    assert "WMM2020 (proxy" in grid.attrs["declination_uncertainty_model"]


def test_declination_uncertainty_function_takes_a_model_and_date():
    # WMMHR2025 report: a = 0.25 deg, b = 5205 nT; at H = 5205 nT sigma = sqrt(0.25^2 + 1)
    assert declination_uncertainty_deg(5205.0, "WMMHR2025", 2026.0) == pytest.approx(math.hypot(0.25, 1.0), rel=1e-12)
    # with no model: WMM2025 (0.26, 5417), as before
    assert declination_uncertainty_deg(5417.0) == pytest.approx(math.hypot(0.26, 1.0), rel=1e-12)


def test_names_resolve_everywhere_and_list_models():
    # validity: IGRF-14 1900-2030 (IAGA V-MOD 2024); WMM editions five years from their epoch (WMM reports)
    table = list_models()
    assert list(table.name) == list(MODEL_NAMES)
    row = table.set_index("name")
    assert (row.loc["IGRF-14", "valid_from"], row.loc["IGRF-14", "valid_to"], row.loc["IGRF-14", "nmax"]) == (1900.0, 2030.0, 13)
    assert (row.loc["WMM2020", "valid_from"], row.loc["WMM2020", "valid_to"], row.loc["WMM2020", "nmax"]) == (2020.0, 2025.0, 12)
    assert row.loc["WMMHR2025", "nmax"] == 133
    assert "WMMHR2025" in row.loc["WMMHR2025", "error_model"]
    assert load_model("igrf14") is load_model(None)
    assert load_model("wmm-2025").name == "WMM2025"
    with pytest.raises(ModelFileError, match="give a model name"):
        load_model("WMM2035")


@settings(max_examples=60, deadline=None)
@given(st.sampled_from(list(MODEL_NAMES)), st.lists(st.sampled_from(["-", "_", " ", ""]), min_size=0, max_size=2),
       st.booleans())
def test_model_name_spellings(name, separators, lower):
    # property: any case and any hyphens/underscores/spaces spell the same model (documented in MODEL_NAMES)
    text = name.replace("-", "")
    for i, sep in enumerate(separators):
        pos = min(3 + i, len(text))
        text = text[:pos] + sep + text[pos:]
    text = text.lower() if lower else text
    assert model_name(text) == name


def test_error_model_table_matches_pygeomag_source():
    # pygeomag 1.1.0 geomag.py carries the same four (a, b) pairs; read them from its source text
    import inspect

    from pygeomag.geomag import GeoMagUncertaintyResult

    source = inspect.getsource(GeoMagUncertaintyResult)
    for edition in ("WMM2015", "WMM2020", "WMM2025", "WMMHR2025"):
        em = WMM_ERROR_MODELS[edition]
        assert f"math.sqrt({em.const_deg:g}**2 + ({em.scale_nT:.0f} / result.h) ** 2)" in source


def test_scenario_model_key_accepts_names(tmp_path):
    # the scenario reader resolves a model name (headingref.model.MODEL_NAMES) without a file
    from headingref.scenario import load_scenario

    path = tmp_path / "s.toml"
    path.write_text('analysis_date = "2026-12-02"\nmodel = "WMMHR2025"\n')
    sc = load_scenario(path)
    assert sc.model == "WMMHR2025" and sc.model_name == "WMMHR2025"
    assert load_model(sc.model).nmax == 133
    path.write_text('analysis_date = "2026-12-02"\nmodel = "WMM-2099"\n')
    with pytest.raises(Exception, match="WMM-2099"):
        load_scenario(path)


def test_list_models_is_a_dataframe_with_sources():
    table = list_models()
    assert isinstance(table, pd.DataFrame)
    assert table.source.str.contains("ppigrf|pygeomag").all()
