"""Compass base upkeep against independent references.

Sources named beside each check: geographiclib (Karney's geodesics, independent of PROJ) for the
setting-out points; ppigrf (an independent IGRF-14 implementation) for the model change since the
survey, the annual change and the drift date; closed forms for a synthetic constant-rate variation
and for the convergence of a polar stereographic grid. All sites are invented.
"""

from __future__ import annotations

import datetime as dt
import math
import warnings

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import ppigrf_declination

from headingref.cli import main
from headingref.compass_base import base_upkeep, make_site, read_sites_csv, setting_out
from headingref.errors import DataQualityWarning, ExtrapolationWarning, InputError
from headingref.units import decimal_year, timestamp_from_decimal_year

DATA = __import__("pathlib").Path(__file__).parent / "data"


def constant_rate(start_deg: float, rate_deg_per_year: float, epoch: float):
    """A synthetic variation D(t) = start + rate (t - epoch), the same everywhere."""

    def variation(lat, lon, year, alt_km):
        year = np.asarray(year, dtype=np.float64)
        return start_deg + rate_deg_per_year * (year - epoch), np.full(year.shape, rate_deg_per_year)

    return variation


def as_datetime(year: float) -> dt.datetime:
    return timestamp_from_decimal_year(year).to_pydatetime()


def sites_file(tmp_path, *rows: str):
    """Write an invented sites CSV with the standard header and the given rows."""
    path = tmp_path / "sites.csv"
    path.write_text("name,lat,lon,surveyed_variation,survey_date\n" + "".join(r + "\n" for r in rows), encoding="utf-8")
    return path


@pytest.mark.parametrize("rate", [0.1, -0.1])
@pytest.mark.parametrize("swing", ["2020-01-01", "2023-03-01", "2026-12-02"])
def test_resurvey_due_five_years_after_survey_at_point_one_degree_a_year(rate, swing):
    # Closed form: |0.1 deg/yr * t| exceeds 0.5 deg after t = 5 years; survey 2020-01-01 -> 2025-01-01,
    # whatever the swing date.
    site = make_site("Invented drift base", 65.0, -20.0, "10.0E", "2020-01-01")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DataQualityWarning)  # overdue on the 2026 swing date
        table = base_upkeep([site], swing, variation_function=constant_rate(3.0, rate, 2020.0))
    exact = timestamp_from_decimal_year(table.resurvey_due_year.iloc[0])
    assert abs(exact - pd.Timestamp("2025-01-01")) < pd.Timedelta(days=1)
    assert table.resurvey_due_date.iloc[0] == "2025-01-01"
    assert table.resurvey_reason.iloc[0] == "variation drift"
    assert table.overdue.iloc[0] == (swing > "2025-01-01")


def test_fixed_interval_comes_first_when_earlier():
    site = make_site("Invented drift base", 65.0, -20.0, "10.0E", "2020-01-01", resurvey_years=3)
    table = base_upkeep([site], "2020-01-01", variation_function=constant_rate(3.0, 0.1, 2020.0))
    assert table.resurvey_due_date.iloc[0] == "2023-01-01"  # survey + 3 years
    assert table.resurvey_reason.iloc[0] == "fixed interval"
    assert table.survey_off_date.iloc[0] == "2025-01-01"  # drift date still reported


def test_mark_rounding_and_change_since_survey():
    # Surveyed 9.0 E on 2022-01-01, synthetic change 0.26 deg/yr: 2026-01-01 predicted 10.04 E,
    # marked to the nearest 0.5 deg (common practice) 10.0 E, to the whole degree 10 E; record 10°02′ E.
    site = make_site("Invented rounding base", 60.0, 10.0, "9°00′E", "2022-01-01")
    variation = constant_rate(7.0, 0.26, 2022.0)
    with pytest.warns(DataQualityWarning, match="fall due for resurvey"):  # 9.0 E went stale in 2023
        half = base_upkeep([site], "2026-01-01", variation_function=variation)
    assert half.model_change_since_survey_deg.iloc[0] == pytest.approx(0.26 * 4, abs=1e-9)
    assert half.predicted_variation_deg.iloc[0] == pytest.approx(10.04, abs=1e-9)
    assert half.variation_to_mark.iloc[0] == "10°00′ E"
    assert half.variation_record.iloc[0] == "10°02′ E"
    assert half.annual_change.iloc[0] == "15.6′ E a year"  # 0.26 deg = 15.6 minutes
    # Marked 10.0, drifting 0.26/yr: off by > 0.5 when predicted > 10.5: 2026 + 0.46/0.26 years.
    assert half.mark_off_year.iloc[0] == pytest.approx(2026.0 + 0.46 / 0.26, abs=2e-6)
    # The surveyed 9.0 E itself was off by > 0.5 when the change passed 0.5: 2022 + 0.5/0.26.
    assert half.survey_off_year.iloc[0] == pytest.approx(2022.0 + 0.5 / 0.26, abs=2e-6)
    # Survey minus model at the survey date: 9.0 - 7.0.
    assert half.survey_minus_model_deg.iloc[0] == pytest.approx(2.0, abs=1e-12)
    with pytest.warns(DataQualityWarning):
        whole = base_upkeep([site], "2026-01-01", variation_function=variation, mark_step_deg=1.0)
    assert whole.variation_to_mark_deg.iloc[0] == 10.0


def test_beyond_model_validity_unless_opted_in():
    site = make_site("Invented slow base", 65.0, -20.0, "10.0E", "2020-01-01")
    slow = constant_rate(3.0, 0.02, 2020.0)  # 0.5 deg takes 25 years: 2045, past IGRF-14 (2030)
    table = base_upkeep([site], "2020-01-01", variation_function=slow)
    assert table.survey_off_date.iloc[0] == "" and table.mark_off_date.iloc[0] == ""
    assert table.survey_off_note.iloc[0].startswith("beyond model validity")
    assert table.resurvey_due_date.iloc[0] == ""
    with pytest.warns(ExtrapolationWarning, match="extrapolated"):
        opted = base_upkeep([site], "2020-01-01", variation_function=slow, allow_extrapolation=True)
    assert opted.survey_off_date.iloc[0] == "2045-01-01"  # closed form 2020 + 0.5/0.02
    assert opted.survey_off_note.iloc[0].startswith("extrapolated past IGRF")


def test_model_values_and_drift_date_against_ppigrf():
    # Invented base in northern Norway; IGRF-14 evaluated independently by ppigrf.
    site = make_site("Invented fjord base", 69.3, 16.1, "9.0E", "2024-06-01")
    with pytest.warns(DataQualityWarning, match="fall due for resurvey"):  # 9.0 E went stale in 2026
        table = base_upkeep([site], "2026-12-02")
    row = table.iloc[0]
    survey, swing = dt.datetime(2024, 6, 1), dt.datetime(2026, 12, 2)
    d_survey, d_swing = ppigrf_declination(69.3, 16.1, survey), ppigrf_declination(69.3, 16.1, swing)
    assert row.model_variation_deg == pytest.approx(d_swing, abs=0.005)
    assert row.model_change_since_survey_deg == pytest.approx(d_swing - d_survey, abs=0.002)
    # Annual change: central difference of ppigrf over +-0.1 year, minutes per year.
    y = decimal_year("2026-12-02")
    fd = (ppigrf_declination(69.3, 16.1, as_datetime(y + 0.1)) - ppigrf_declination(69.3, 16.1, as_datetime(y - 0.1))) / 0.2
    assert row.annual_change_min_per_year == pytest.approx(fd * 60.0, abs=0.1)
    # Drift dates: bisection on ppigrf's declination for |9.0 + D(t) - D(survey) - marked| = 0.5, with
    # marked = 9.0 (the surveyed value) from the survey date, and marked = the value to mark from the swing date.
    for column, marked, start in (("survey_off_year", 9.0, decimal_year("2024-06-01")),
                                  ("mark_off_year", row.variation_to_mark_deg, y)):

        def excess(year, marked=marked):
            return abs(9.0 + ppigrf_declination(69.3, 16.1, as_datetime(year)) - d_survey - marked) - 0.5

        lo, hi = start, 2030.0
        assert excess(lo) < 0 < excess(hi)
        for _ in range(30):
            mid = 0.5 * (lo + hi)
            lo, hi = (lo, mid) if excess(mid) > 0 else (mid, hi)
        assert abs(row[column] - hi) * 365.25 < 2.0, column  # within two days


def test_setting_out_points_against_geographiclib():
    site = make_site("Invented apron base", 69.3, 16.1, "9.6E", "2026-06-01")
    table = base_upkeep([site], "2026-12-02")
    # The lines use the variation marked on the base (rounded to 0.5 deg), not the unrounded prediction.
    variation = table.variation_to_mark_deg.iloc[0]
    assert variation == 0.5 * round(table.predicted_variation_deg.iloc[0] / 0.5)
    assert abs(variation - table.predicted_variation_deg.iloc[0]) > 1e-3  # the two differ here, so the check bites
    points = setting_out(table, lines_deg=[0, 30, 135, 330], distances_m=[25.0, 100.0, 5000.0], grid="polar")
    assert len(points) == 12
    assert set(points.variation_used) == {f"marked {table.variation_to_mark.iloc[0]}"}
    for _, p in points.iterrows():
        # Magnetic to true: east variation is added (true = magnetic + variation), common practice.
        assert p.true_azimuth_deg == pytest.approx((p.magnetic_heading_deg + variation) % 360.0, abs=1e-9)
        ref = Geodesic.WGS84.Direct(69.3, 16.1, p.true_azimuth_deg, p.distance_m)  # geographiclib
        assert p.lat_deg == pytest.approx(ref["lat2"], abs=1e-9)
        assert p.lon_deg == pytest.approx(ref["lon2"], abs=1e-9)
        # Polar stereographic on Greenwich: convergence = longitude (closed form), grid = true - convergence.
        assert p.convergence_deg == pytest.approx(16.1, abs=1e-6)
        assert p.grid_azimuth_deg == pytest.approx((p.true_azimuth_deg - 16.1) % 360.0, abs=1e-6)
    assert list(points.line[:3]) == ["000", "000", "000"]


def test_setting_out_local_metres_and_utm_against_geographiclib_and_pyproj():
    # Svalbard-like invented base at 78.2 N: UTM zone 33X exception (NGA.SIG.0012, from memory) -> EPSG:32633.
    import pyproj

    site = make_site("Invented fjord base", 78.2431, 15.4905, "10.7E", "2021-06-22")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # overdue by 2026
        table = base_upkeep([site], "2026-12-02")
    points = setting_out(table, lines_deg=[0, 45, 200], distances_m=[50.0, 100.0])
    utm = pyproj.Transformer.from_crs("EPSG:4326", "EPSG:32633", always_xy=True)
    centre_e, centre_n = utm.transform(15.4905, 78.2431)
    for _, p in points.iterrows():
        ref = Geodesic.WGS84.Direct(78.2431, 15.4905, p.true_azimuth_deg, p.distance_m)  # geographiclib direct problem
        # Local tangent plane: over 100 m the geodesic is straight to < 1 mm (curvature d^2/2R = 0.8 mm),
        # so east = d sin(az), north = d cos(az) (plane trigonometry) to 2 mm.
        az = np.radians(ref["azi1"])
        assert p.east_m == pytest.approx(p.distance_m * np.sin(az), abs=2e-3)
        assert p.north_m == pytest.approx(p.distance_m * np.cos(az), abs=2e-3)
        # UTM of geographiclib's point by pyproj (EPSG:32633), 1 mm.
        e, n = utm.transform(ref["lon2"], ref["lat2"])
        assert p.utm_zone == "33N"
        assert p.utm_easting_m == pytest.approx(e, abs=1e-3)
        assert p.utm_northing_m == pytest.approx(n, abs=1e-3)
        # Distance on the UTM grid = ground distance x point scale factor (pyproj's get_factors), 1 cm.
        k = pyproj.Proj("EPSG:32633").get_factors(15.4905, 78.2431).meridional_scale
        assert np.hypot(e - centre_e, n - centre_n) == pytest.approx(k * p.distance_m, abs=1e-2)


@pytest.mark.parametrize(
    ("lat", "lon", "expected"),
    [
        (60.0, 5.0, (32, "N")),  # southern Norway: zone 32V widened to 3-12 E (NGA.SIG.0012, from memory)
        (60.0, 2.0, (31, "N")),
        (78.0, 8.9, (31, "N")),  # Svalbard: 31X up to 9 E
        (78.0, 20.0, (33, "N")),  # 33X 9-21 E
        (78.0, 30.0, (35, "N")),  # 35X 21-33 E
        (-45.0, 170.0, (59, "S")),  # standard zone: floor((lon + 180)/6) + 1
        (64.8112, -147.8712, (6, "N")),
        (85.0, 0.0, None),  # beyond 84 N: UPS, not UTM
    ],
)
def test_utm_zone_rules(lat, lon, expected):
    from headingref.compass_base import utm_zone

    assert utm_zone(lat, lon) == expected


@settings(max_examples=50, deadline=None)
@given(value=st.floats(min_value=-60.0, max_value=60.0, allow_nan=False), style=st.sampled_from(["suffix", "prefix", "sign"]))
def test_surveyed_variation_forms(value, style):
    # The trade's forms: 12.5W, E3.2, -12.5 (east positive).
    value = round(value, 4)  # typed values carry a few decimals, never exponents
    letter = "E" if value >= 0 else "W"
    text = {"suffix": f"{abs(value):.4f}{letter}", "prefix": f"{letter}{abs(value):.4f}", "sign": f"{value:.4f}"}[style]
    site = make_site("Invented", 60.0, 10.0, text, "2020-01-01")
    assert site.surveyed_variation_deg == pytest.approx(value, abs=1e-12)


def test_degree_minute_variation():
    assert make_site("Invented", 60.0, 10.0, "12°30′W", "2020-01-01").surveyed_variation_deg == -12.5


# ------------------------------------------------------------------------------ bad input


def test_future_survey_date_names_the_row(tmp_path):
    path = sites_file(tmp_path, "Invented A,60,10,3E,2020-01-01", "Invented B,61,11,3E,2031-05-01")
    with pytest.raises(InputError, match="sites.csv line 3: survey date 2031-05-01 is in the future"):
        read_sites_csv(path, today="2026-12-02")


def test_unparseable_variation_names_the_row(tmp_path):
    path = sites_file(tmp_path, "Invented A,60,10,3 east-ish,2020-01-01")
    with pytest.raises(InputError, match="sites.csv line 2: variation '3 east-ish' is not understood"):
        read_sites_csv(path)


def test_other_bad_inputs():
    with pytest.raises(InputError, match="tolerance"):
        make_site("Invented", 60, 10, "3E", "2020-01-01", tolerance_deg=-1)
    site = make_site("Invented", 60, 10, "3E", "2024-01-01")
    with pytest.raises(InputError, match="before the survey"):
        base_upkeep([site], "2023-01-01")
    with pytest.raises(InputError, match="lines"):
        setting_out(base_upkeep([site], "2026-01-01"), lines_deg=[0, 400])
    with pytest.raises(InputError, match="grid"):
        setting_out(base_upkeep([site], "2026-01-01"), grid="mercatorish")


def test_weak_field_site_warns_and_cautions():
    # Near the north dip pole (Canadian Arctic, invented base): horizontal field well under 6000 nT.
    site = make_site("Invented high base", 84.0, -130.0, "20E", "2026-06-01")
    with pytest.warns(DataQualityWarning, match="weak-horizontal-field"):
        table = base_upkeep([site], "2026-07-01")
    assert table.zone.iloc[0] in ("caution", "blackout")
    assert "compass unreliable" in table.caution.iloc[0]
    assert table.declination_uncertainty_deg.iloc[0] > 1.0  # WMM error model: sqrt(0.26^2 + (5417/H)^2), H < 6000 nT


def test_cli_base_writes_tables(tmp_path, capsys):
    out, lines = tmp_path / "upkeep.csv", tmp_path / "lines.csv"
    code = main(["base", "--input", str(DATA / "base_sites.csv"), "--date", "2026-12-02", "--grid", "polar",
                 "--output", str(out), "--setting-out", str(lines)])
    assert code == 0
    upkeep = pd.read_csv(out)
    assert len(upkeep) == 3 and {"variation_to_mark", "resurvey_due_date", "zone"} <= set(upkeep.columns)
    assert len(pd.read_csv(lines)) == 3 * 12 * 2  # 3 sites, 12 lines, 2 distances
    assert "survey on the site governs" in capsys.readouterr().out
    # Single site from options; a future survey date fails with exit status 2 and a one-line message.
    code = main(["base", "--lat", "60", "--lon", "10", "--surveyed-variation", "3E", "--survey-date", "2099-01-01",
                 "--date", "2026-12-02"])
    assert code == 2
    err = capsys.readouterr().err.strip()
    assert "survey date 2099-01-01 is in the future" in err and len(err.splitlines()) == 1
    assert math.isfinite(upkeep.declination_uncertainty_deg.iloc[0])


def test_survey_history_rows_merge_into_the_latest_survey(tmp_path):
    path = sites_file(
        tmp_path,
        "Invented history base,70,20,8.9E,2019-01-01",
        "Invented history base,70,20,8.0E,2016-01-01",
        "Invented other base,60,10,2W,2020-01-01",
    )
    sites = read_sites_csv(path)
    assert [s.name for s in sites] == ["Invented history base", "Invented other base"]
    assert sites[0].surveyed_variation_deg == 8.9 and len(sites[0].history) == 1
    # Synthetic model moving 0.25 deg/yr: 0.75 over 2016-2019 against 0.9 observed -> +0.15 (closed form).
    table = base_upkeep(sites, "2020-06-01", variation_function=constant_rate(5.0, 0.25, 2016.0))
    assert table.surveys.tolist() == [2, 1]
    assert table.history_minus_model_deg.iloc[0] == pytest.approx(0.15, abs=1e-9)
    assert math.isnan(table.history_minus_model_deg.iloc[1])


def test_history_rows_at_different_positions_name_the_row(tmp_path):
    path = sites_file(tmp_path, "Invented base,70,20,8.9E,2019-01-01", "Invented base,70.5,20,8.0E,2016-01-01")
    with pytest.raises(InputError, match="sites.csv line 2: base 'Invented base' is at a different position from sites.csv line 3"):
        read_sites_csv(path)


@pytest.mark.parametrize("cell", ["6_1", "nan", "٥", "0x10"])
def test_lenient_tolerance_numbers_are_refused(tmp_path, cell):
    # Issue 12 item 9: only plain ASCII decimal numbers; '6_1' was read as 61.
    path = tmp_path / "sites.csv"
    path.write_text(f"name,lat,lon,surveyed_variation,survey_date,tolerance_deg\nInvented,60,10,3E,2020-01-01,{cell}\n", encoding="utf-8")
    with pytest.raises(InputError, match="sites.csv line 2: tolerance_deg .* is not a number"):
        read_sites_csv(path)


@pytest.mark.parametrize(("argument", "value"), [("sites", "base"), ("sites", [1, 2]), ("mark_step_deg", "x"), ("mark_step_deg", float("nan"))])
def test_upkeep_bad_argument_types_are_input_errors(argument, value):
    # Issue 12 item 7: wrong types raise InputError naming the argument, not a raw Python error.
    site = make_site("Invented", 60, 10, "3E", "2020-01-01")
    kwargs = {"sites": [site], "swing_date": "2020-06-01", "variation_function": constant_rate(3.0, 0.1, 2020.0)}
    kwargs[argument] = value
    with pytest.raises(InputError, match=argument.split("_deg")[0]):
        base_upkeep(**kwargs)


def test_upkeep_schema_and_zone_dtype():
    # One zone dtype in every table (the field table's categorical); columns as documented.
    from headingref.compass_base import UPKEEP_COLUMNS
    from headingref.elements import ZONE_DTYPE

    site = make_site("Invented", 60, 10, "3E", "2020-01-01")
    table = base_upkeep([site], "2020-06-01", variation_function=constant_rate(3.0, 0.1, 2020.0))
    assert tuple(table.columns) == UPKEEP_COLUMNS
    assert table.zone.dtype == ZONE_DTYPE and table.zone.iloc[0] == "normal"  # H about 15,000 nT at 60 N 10 E (from memory), far above the 6,000 nT caution edge
