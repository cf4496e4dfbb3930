"""Compass swing analysis against published formulas, a handbook example and exact synthetic curves.

Sources named beside each check:
- NGA, Handbook of Magnetic Compass Adjustment (2004, formerly Pub. No. 226), ch. V art. 501
  "Simple analysis": the eight deviations of a typical curve and the approximate-coefficient
  formulas A = mean of the eight, B = (E - W)/2, C = (N - S)/2, D = (NE + SW - SE - NW)/4,
  E = (N + S - E - W)/4, east deviation plus, west minus.
- 14 CFR 23.1327 / 25.1327(b) / 29.1327(b): the compensated installation may not have a deviation,
  in level flight, greater than 10 degrees on any heading.
- CAA NZ / CASA advisory material on calibration of aircraft compasses (AC 43-17): "Deviation means
  the angle required to be added algebraically to a compass reading to obtain the aircraft
  magnetic heading", i.e. magnetic = compass + deviation.
"""

from __future__ import annotations

import csv
import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import ppigrf_declination

from headingref import headings
from headingref.cli import main
from headingref.errors import DataQualityWarning, InputError
from headingref.swing import (
    DEFAULT_LIMIT_DEG,
    DeviationCurve,
    analyse_swing,
    correction_card,
    deviation_from_readings,
    eight_point_coefficients,
    fit_deviation,
)

DATA = __import__("pathlib").Path(__file__).parent / "data"


def _latest_demo_survey(demo_dir, name: str) -> dict:
    """The base's latest survey row in data/demo/compass_bases.csv, read with the csv module."""
    with (demo_dir / "compass_bases.csv").open(encoding="utf-8", newline="") as fh:
        rows = [row for row in csv.DictReader(fh) if row["name"] == name]
    row = max(rows, key=lambda r: r["survey_date"])
    text = row["surveyed_variation"]
    value = float(text[:-1]) * (1.0 if text.endswith("E") else -1.0)
    return {"value_deg": value, "date": row["survey_date"], "lat": float(row["lat"]), "lon": float(row["lon"])}


def _dm_east(value_deg: float) -> str:
    """Degrees and whole minutes with E/W, the card's form (10.7 -> 10°42′ E)."""
    minutes = round(abs(value_deg) * 60)
    return f"{minutes // 60}°{minutes % 60:02d}′ {'E' if value_deg >= 0 else 'W'}"

# Pub. 226 art. 501 deviations on N, NE, E, SE, S, SW, W, NW (east +, west -).
HANDBOOK_501 = [10.5, 20.0, 11.5, -1.2, -5.5, -8.0, -12.5, -6.8]
EIGHT = np.arange(0.0, 360.0, 45.0)


def _curve(a, b, c, d, e, h):
    """Five-term curve written out independently of the module (handbook form)."""
    r = np.radians(h)
    return a + b * np.sin(r) + c * np.cos(r) + d * np.sin(2 * r) + e * np.cos(2 * r)


def test_sign_convention_east_deviation_means_compass_reads_low():
    # AC 43-17 definition: magnetic = compass + deviation. Compass 087 on magnetic 090 -> 3 deg E (+).
    assert deviation_from_readings(90.0, 87.0) == pytest.approx(3.0, abs=1e-12)
    # Across north: magnetic 002, compass 358 -> 4 deg E; magnetic 358, compass 002 -> 4 deg W.
    assert deviation_from_readings(2.0, 358.0) == pytest.approx(4.0, abs=1e-12)
    assert deviation_from_readings(358.0, 2.0) == pytest.approx(-4.0, abs=1e-12)
    # Normalised to (-180, 180]: exactly opposite gives +180, never -180.
    assert deviation_from_readings(180.0, 0.0) == pytest.approx(180.0)
    assert deviation_from_readings(0.0, 180.0) == pytest.approx(180.0)


@settings(max_examples=200, deadline=None)
@given(magnetic=st.floats(min_value=0.0, max_value=359.999), compass=st.floats(min_value=0.0, max_value=359.999))
def test_deviation_normalisation_property(magnetic, compass):
    # magnetic = compass + deviation (AC 43-17), deviation reduced to (-180, 180].
    dev = float(deviation_from_readings(magnetic, compass))
    assert -180.0 < dev <= 180.0
    assert math.remainder(compass + dev - magnetic, 360.0) == pytest.approx(0.0, abs=1e-9)


def test_eight_point_formulas_on_handbook_example():
    # Pub. 226 art. 501 data and formulas; arithmetic done by hand:
    # 8A = 10.5 + 20.0 + 11.5 - 1.2 - 5.5 - 8.0 - 12.5 - 6.8 = 8.0 -> A = 1.0 E
    # B = (11.5 + 12.5)/2 = 12.0 E; C = (10.5 + 5.5)/2 = 8.0 E
    # D = (20.0 - 8.0 + 1.2 + 6.8)/4 = 5.0 E; E = (10.5 - 5.5 - 11.5 + 12.5)/4 = 1.5 E
    coeffs = eight_point_coefficients(HANDBOOK_501)
    expected = {"A": 1.0, "B": 12.0, "C": 8.0, "D": 5.0, "E": 1.5}
    for name, value in expected.items():
        assert coeffs[name] == pytest.approx(value, abs=1e-12), name


def test_least_squares_on_handbook_example_matches_eight_point_a_d_e_and_lsq_b_c():
    # On eight equally spaced headings the basis is orthogonal: A, D, E from least squares are the
    # Pub. 226 formulas exactly; B and C use all eight readings: B = [E - W + (NE + SE - SW - NW) sin 45]/4
    # (discrete Fourier coefficient), by hand: (24 + 33.6 * 0.70711) / 4 = 11.9397; C = [N - S + (NE - SE - SW + NW) sin 45]/4
    # = (16 + (20 + 1.2 + 8 - 6.8) * 0.70711)/4 = 7.9598.
    fit = fit_deviation(EIGHT, HANDBOOK_501)
    c = fit.curve
    assert c.A_deg == pytest.approx(1.0, abs=1e-12)
    assert c.D_deg == pytest.approx(5.0, abs=1e-12)
    assert c.E_deg == pytest.approx(1.5, abs=1e-12)
    assert c.B_deg == pytest.approx((24 + 33.6 * np.sqrt(0.5)) / 4, abs=1e-12)
    assert c.C_deg == pytest.approx((16 + 22.4 * np.sqrt(0.5)) / 4, abs=1e-12)
    # Condition number of an evenly spread 8-heading design: sqrt(8/4) (X^T X = diag(8, 4, 4, 4, 4)).
    assert fit.condition_number == pytest.approx(np.sqrt(2.0), abs=1e-12)


coefficient = st.floats(min_value=-5.9, max_value=5.9, allow_nan=False)  # |dev| < 30: readings stay plausible


@settings(max_examples=60, deadline=None)
@given(a=coefficient, b=coefficient, c=coefficient, d=coefficient, e=coefficient)
def test_eight_point_formulas_equal_least_squares_for_a_five_term_curve(a, b, c, d, e):
    # Pub. 226 art. 501 formulas are exact for a pure five-term curve sampled on N..NW.
    dev = _curve(a, b, c, d, e, EIGHT)
    eight = eight_point_coefficients(dev)
    fit = fit_deviation(EIGHT, dev).curve.coefficients()
    for name, value in zip("ABCDE", (a, b, c, d, e), strict=True):
        assert eight[name] == pytest.approx(value, abs=1e-9)
        assert fit[name] == pytest.approx(value, abs=1e-9)


@settings(max_examples=40, deadline=None)
@given(
    a=coefficient, b=coefficient, c=coefficient, d=coefficient, e=coefficient,
    n=st.sampled_from([8, 12, 24]),
    start=st.floats(min_value=0.0, max_value=359.0),
)
def test_recovers_known_coefficients_from_synthetic_readings(a, b, c, d, e, n, start):
    # Exact synthetic readings: compass = magnetic - dev(magnetic) (sign convention of AC 43-17).
    magnetic = np.mod(start + np.arange(n) * 360.0 / n, 360.0)
    compass = np.mod(magnetic - _curve(a, b, c, d, e, magnetic), 360.0)
    result = analyse_swing(magnetic, compass)
    got = result.curve.coefficients()
    for name, value in zip("ABCDE", (a, b, c, d, e), strict=True):
        assert got[name] == pytest.approx(value, abs=1e-9), name
    # Evenly spread: every coefficient as well determined as possible (inflation 1).
    np.testing.assert_allclose(result.coefficients.inflation, 1.0, atol=1e-9)


@settings(max_examples=40, deadline=None)
@given(a=coefficient, b=coefficient, c=coefficient, d=coefficient, e=coefficient,
       wanted=st.lists(st.floats(min_value=0.0, max_value=359.999), min_size=1, max_size=12))
def test_card_round_trip_against_the_curve(a, b, c, d, e, wanted):
    curve = DeviationCurve(a, b, c, d, e)
    card = correction_card(curve, wanted)
    # The compass on magnetic heading M reads M - dev(M): the card must give exactly that ...
    expected = np.mod(np.asarray(wanted) - _curve(a, b, c, d, e, np.asarray(wanted)), 360.0)
    diff = np.mod(card.compass_heading_deg.to_numpy() - expected + 180.0, 360.0) - 180.0
    assert np.max(np.abs(diff)) < 1e-9
    # ... and steering that compass heading brings the aircraft back onto M (Newton inversion here,
    # and the independent inversion in headingref.headings.compass_to_magnetic).
    for back in (curve.magnetic_from_compass_deg(card.compass_heading_deg.to_numpy()),
                 headings.compass_to_magnetic(card.compass_heading_deg.to_numpy(), curve)):
        err = np.mod(np.asarray(back) - np.mod(wanted, 360.0) + 180.0, 360.0) - 180.0
        assert np.max(np.abs(err)) < 1e-9


def test_card_is_not_the_deviation_at_the_wrong_heading():
    # Strong B: dev(h) = 10 sin h. For magnetic 045, steer 045 - 7.071 = 037.9 -> '038'. Subtracting the
    # deviation read at the compass heading instead would give 045 - 10 sin(38) = 038.8 -> '039'.
    card = correction_card(DeviationCurve(B_deg=10.0), [45.0])
    assert card.compass_heading_deg.iloc[0] == pytest.approx(45.0 - 10.0 * np.sin(np.radians(45.0)), abs=1e-12)
    assert card.steer_compass.iloc[0] == "038"
    assert correction_card(DeviationCurve(A_deg=0.3), [0.0]).steer_compass.iloc[0] == "000"  # 359.7 prints 000


def test_residuals_after_b_and_c_and_verdict():
    # Synthetic: after a compensator removes B and C the deviation left is A + D sin 2h + E cos 2h.
    a, b, c, d, e = 1.0, 6.0, -4.0, 2.5, -1.0
    magnetic = np.arange(0.0, 360.0, 30.0)
    compass = magnetic - _curve(a, b, c, d, e, magnetic)
    result = analyse_swing(magnetic, compass)
    left = _curve(a, 0, 0, d, e, magnetic)
    np.testing.assert_allclose(result.readings.residual_after_bc_deg, left, atol=1e-9)
    assert result.max_residual_deg == pytest.approx(np.max(np.abs(left)), abs=1e-9)
    # Over the whole circle |A + D sin 2h + E cos 2h| peaks at |A| + sqrt(D^2 + E^2) (amplitude-phase form).
    assert result.max_curve_residual_deg == pytest.approx(abs(a) + np.hypot(d, e), abs=1e-4)
    # 14 CFR 25.1327(b): 10 deg default limit.
    assert DEFAULT_LIMIT_DEG == 10.0
    assert result.verdict == "pass"
    tight = analyse_swing(magnetic, compass, limit_deg=2.0)  # a tighter limit for a remote-indicating system
    assert tight.verdict == "fail"


def test_standard_errors_match_monte_carlo_scatter():
    # Gauss-Markov: the formula standard error should match the scatter of B over noisy swings.
    rng = np.random.default_rng(5)
    magnetic = np.arange(0.0, 360.0, 30.0)
    clean = _curve(0.5, 3.0, -2.0, 1.0, 0.4, magnetic)
    sigma = 0.5
    b_values, b_se = [], []
    for _ in range(400):
        fit = fit_deviation(magnetic, clean + rng.normal(0.0, sigma, magnetic.size))
        b_values.append(fit.curve.B_deg)
        b_se.append(fit.table.standard_error_deg.iloc[1])
    # Theory for an evenly spread swing: SE(B) = sigma * sqrt(2/n) = 0.2041.
    assert np.std(b_values) == pytest.approx(sigma * np.sqrt(2 / 12), rel=0.12)
    assert np.mean(b_se) == pytest.approx(sigma * np.sqrt(2 / 12), rel=0.12)


def test_four_cardinal_headings_fit_abce_only():
    # Pub. 226 formulas on four cardinals: A = mean, B = (E - W)/2, C = (N - S)/2, E = (N + S - E - W)/4.
    n, e_, s, w = 4.0, 3.0, -2.0, -1.0
    magnetic = np.array([0.0, 90.0, 180.0, 270.0])
    dev = np.array([n, e_, s, w])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DataQualityWarning)  # exactly determined: no redundancy
        fit = fit_deviation(magnetic, dev, coefficients="ABCE")
    c = fit.curve
    assert c.A_deg == pytest.approx((n + e_ + s + w) / 4, abs=1e-12)
    assert c.B_deg == pytest.approx((e_ - w) / 2, abs=1e-12)
    assert c.C_deg == pytest.approx((n - s) / 2, abs=1e-12)
    assert c.E_deg == pytest.approx((n + s - e_ - w) / 4, abs=1e-12)
    assert c.D_deg == 0.0 and not fit.table.determined.iloc[3]


# ------------------------------------------------------------------------------ bad input


def test_fewer_readings_than_coefficients():
    with pytest.raises(InputError, match="cannot determine 5 coefficients"):
        analyse_swing([0, 90, 180, 270], [0, 90, 180, 270])


def test_headings_that_cannot_separate_a_coefficient_name_it():
    # Cardinal headings only: sin 2h is zero on every one of them, so D cannot be found.
    with pytest.raises(InputError, match="cannot separate coefficient\\(s\\) D"):
        fit_deviation([0, 90, 180, 270], [1, 2, 3, 4], coefficients="ABD")


def test_bunched_headings_warn_with_condition_number():
    magnetic = np.arange(0.0, 100.0, 10.0)  # all in the north-east quadrant
    compass = magnetic - _curve(1, 2, 3, 0.5, 0.2, magnetic)
    with pytest.warns(DataQualityWarning, match="bunched on one side.*condition number") as record:
        result = analyse_swing(magnetic, compass)
    assert result.condition_number > 50
    assert result.coefficients.inflation.max() > 2
    assert "largest gap 270 deg" in str(record[0].message)


def test_duplicate_headings_warn_naming_rows():
    magnetic = [0, 45, 90, 135, 180, 225, 270, 315, 90]
    compass = [0, 45, 89, 135, 180, 225, 270, 315, 88.5]
    with pytest.warns(DataQualityWarning, match="duplicate heading 090 on reading 3, reading 9"):
        analyse_swing(magnetic, compass)


def test_reading_far_from_heading_names_row():
    magnetic = [0, 45, 90, 135, 180, 225, 270, 315]
    compass = [0, 45, 90, 315, 180, 225, 270, 315]  # 135 typed as 315
    rows = [f"readings.csv line {i}" for i in range(2, 10)]
    with pytest.raises(InputError, match="readings.csv line 5: compass reading 315 is 180.0 deg"):
        analyse_swing(magnetic, compass, rows=rows)


def test_csv_errors_name_the_line(tmp_path, capsys):
    path = tmp_path / "readings.csv"
    path.write_text("magnetic_heading_deg,compass_reading_deg\n0,1\n45,4x\n", encoding="utf-8")
    assert main(["swing", "--input", str(path), "--output", str(tmp_path / "c.csv")]) == 2
    err = capsys.readouterr().err.strip()
    assert "readings.csv line 3: compass_reading_deg '4x' is not understood" in err and len(err.splitlines()) == 1
    assert not (tmp_path / "c.csv").exists()  # nothing half-written


def test_cli_writes_coefficients_card_and_residuals(tmp_path, capsys):
    # Pub. 226 art. 501 deviations put on magnetic headings 000..315 (compass = magnetic - deviation).
    out, card, res, plot, card_plot = (tmp_path / n for n in ("c.csv", "card.csv", "r.csv", "dev.png", "card.pdf"))
    code = main(["swing", "--input", str(DATA / "swing_handbook_501.csv"), "--limit", "5",
                 "--output", str(out), "--card", str(card), "--residuals", str(res), "--plot", str(plot),
                 "--card-plot", str(card_plot)])
    assert code == 0
    import pandas as pd

    row = pd.read_csv(out).iloc[0]
    assert list(pd.read_csv(out).columns[:8]) == ["A_deg", "B_deg", "C_deg", "D_deg", "E_deg", "verdict", "verdict_basis", "max_deviation_deg"]
    assert row.A_deg == pytest.approx(1.0, abs=1e-9)  # Pub. 226 art. 501: A = 1.0 E
    assert row.D_deg == pytest.approx(5.0, abs=1e-9)  # D = 5.0 E
    assert row.E_deg == pytest.approx(1.5, abs=1e-9)  # E = 1.5 E
    # Residual after B, C on SW, by hand: -8.0 - (B sin 225 + C cos 225) with the least-squares B, C.
    b, c = (24 + 33.6 * np.sqrt(0.5)) / 4, (16 + 22.4 * np.sqrt(0.5)) / 4
    assert row.max_residual_deg == pytest.approx(-8.0 + (b + c) * np.sqrt(0.5), abs=1e-9)
    assert row.verdict_after_compensation == "fail"  # 6.07 deg > the 5 deg limit given
    assert row.verdict == "fail" and row.verdict_basis == "as_measured"  # 20.0 deg on NE > 5
    assert len(pd.read_csv(card)) == 12 and len(pd.read_csv(res)) == 8
    assert plot.stat().st_size > 10_000 and card_plot.read_bytes()[:4] == b"%PDF"
    assert "FAIL" in capsys.readouterr().out


# ------------------------------------------------------------------------------ verdict: as measured and after compensation


def test_handbook_501_verdict_as_measured_and_after_compensation():
    # tests/data/swing_handbook_501.csv holds the NGA Handbook of Magnetic Compass Adjustment (2004,
    # Pub. 226) art. 501 deviations (N 10.5E, NE 20.0E, E 11.5E, SE 1.2W, S 5.5W, SW 8.0W, W 12.5W,
    # NW 6.8W) put on the magnetic headings 000..315 (compass = magnetic - deviation). The handbook
    # tabulates them against the ship's *compass* heading; on the base the aircraft sits on magnetic
    # headings, so the file is the handbook's numbers on our independent variable, not a re-derivation
    # (stored copy of art. 501 read: data, signs "east plus, west minus" and 8A = sum of the eight).
    # Its B of 12 deg must not pass as it stands.
    from headingref.swing import read_swing_csv

    magnetic, compass, rows = read_swing_csv(DATA / "swing_handbook_501.csv")
    result = analyse_swing(magnetic, compass, rows=rows, method="handbook")
    # Pub. 226 art. 501 coefficients (worked by hand above): A 1.0, B 12.0, C 8.0, D 5.0, E 1.5 (all E).
    for name, value in {"A": 1.0, "B": 12.0, "C": 8.0, "D": 5.0, "E": 1.5}.items():
        assert result.curve.coefficients()[name] == pytest.approx(value, abs=1e-9), name
    # As measured: the largest deviation is the 20.0 E on NE; 14 CFR 23.1327(a)(2) allows 10 -> fail.
    assert result.max_deviation_deg == pytest.approx(20.0, abs=1e-9)
    assert result.max_deviation_heading_deg == pytest.approx(45.0)
    assert result.verdict_as_measured == "fail"
    # After compensation (B, C removed): on SW -8.0 - (12 sin 225 + 8 cos 225) = -8 + 20 sqrt(1/2) = 6.142 -> pass.
    assert result.max_residual_deg == pytest.approx(-8.0 + 20.0 * np.sqrt(0.5), abs=1e-9)
    assert result.max_residual_heading_deg == pytest.approx(225.0)
    assert result.verdict_after_compensation == "pass"
    # The verdict uses the deviation as measured unless asked otherwise, and says so.
    assert result.verdict == "fail" and result.verdict_basis == "as_measured"
    assert "verdict (as measured): FAIL" in result.verdict_text()
    after = analyse_swing(magnetic, compass, method="handbook", verdict_on="after_compensation")
    assert after.verdict == "pass" and "verdict (after compensation): PASS" in after.verdict_text()
    # Least squares gives B = 11.94, C = 7.96 here (see above): both methods shown as they differ.
    assert result.methods_differ and result.handbook_formula == "eight-point"
    row = result.comparison.set_index("coefficient")
    assert row.loc["B", "handbook_deg"] == pytest.approx(12.0, abs=1e-12)
    assert row.loc["B", "least_squares_deg"] == pytest.approx((24 + 33.6 * np.sqrt(0.5)) / 4, abs=1e-12)


def test_card_after_compensation_keeps_a_d_e():
    # After the compensator removes B and C the card's curve is A + D sin 2h + E cos 2h (Pub. 226
    # ch. V: B, C semicircular removed by the magnets; A, D, E remain). On 045 that is 1 + 5 = 6.0 E
    # with the art. 501 values, so for magnetic 045 steer 039.
    h = EIGHT
    compass = h - np.array(HANDBOOK_501)
    result = analyse_swing(h, compass, method="handbook", card_after_compensation=True, card_headings_deg=[45.0, 90.0])
    assert result.card.deviation_deg.iloc[0] == pytest.approx(6.0, abs=1e-12)
    assert result.card.steer_compass.iloc[0] == "039"
    assert result.card.deviation_deg.iloc[1] == pytest.approx(1.0 - 1.5, abs=1e-12)  # on 090: A - E
    terms = result.card_terms()
    assert terms.startswith("A +1.0°, D +5.0°, E +1.5°") and "B and C removed" in terms


@settings(max_examples=40, deadline=None)
@given(a=coefficient, b=coefficient, c=coefficient, d=coefficient, e=coefficient)
def test_four_cardinal_formulas_exact_for_a_five_term_curve(a, b, c, d, e):
    # Pub. 226 art. 501 formulas on N, E, S, W: sin 2h = 0 there, so D drops out and A, B, C, E are exact.
    from headingref.swing import four_point_coefficients

    dev = _curve(a, b, c, d, e, np.array([0.0, 90.0, 180.0, 270.0]))
    got = four_point_coefficients(dev)
    for name, value in zip("ABCE", (a, b, c, e), strict=True):
        assert got[name] == pytest.approx(value, abs=1e-9)
    assert got["D"] == 0.0


def test_handbook_method_needs_the_principal_headings():
    h = np.arange(10.0, 360.0, 30.0)  # 010, 040, ...: none on a principal heading
    with pytest.raises(InputError, match="method 'handbook' needs readings on the eight principal headings"):
        analyse_swing(h, h, method="handbook")


# ------------------------------------------------------------------------------ reading swings


def test_handbook_table_as_printed_reads_like_the_numeric_file(tmp_path):
    # Pub. 226 art. 501 as printed: compass points and deviations with E/W letters.
    from headingref.swing import read_swing_csv

    path = tmp_path / "art501.csv"
    path.write_text("Heading,Deviation\nN,10.5E\nNE,20.0E\nE,11.5E\nSE,1.2W\nS,5.5W\nSW,8.0W\nW,12.5W\nNW,6.8W\n", encoding="utf-8")
    m1, c1, rows = read_swing_csv(path)
    m2, c2, _ = read_swing_csv(DATA / "swing_handbook_501.csv")
    np.testing.assert_allclose(m1, m2, atol=1e-12)
    np.testing.assert_allclose(np.mod(c1, 360.0), c2, atol=1e-12)
    assert rows[0] == "art501.csv line 2"


@pytest.mark.parametrize("point,expected", [("N", 0.0), ("nne", 22.5), ("E", 90.0), ("SSW", 202.5), ("NW", 315.0), ("NNW", 337.5)])
def test_compass_points(tmp_path, point, expected):
    # The 16-point compass rose, 22.5 deg apart clockwise from N (common practice).
    from headingref.swing import read_swing_csv

    path = tmp_path / "p.csv"
    path.write_text(f"MH,Compass\n{point},0\n", encoding="utf-8")
    assert read_swing_csv(path)[0][0] == expected


@settings(max_examples=100, deadline=None)
@given(value=st.floats(min_value=-360.0, max_value=720.0, allow_nan=False).map(lambda v: round(v, 3)))
def test_plain_heading_numbers_round_trip(tmp_path_factory, value):
    from headingref.swing import read_swing_csv

    path = tmp_path_factory.mktemp("h") / "r.csv"
    path.write_text(f"magnetic_heading_deg,compass_reading_deg\n{value!r},{value!r}\n", encoding="utf-8")
    m, c, _ = read_swing_csv(path)
    assert m[0] == value and c[0] == value


@pytest.mark.parametrize("cell", ["6_1", "٤٥", "４５", "nan", "inf", "0x10", "NE2"])
def test_lenient_numbers_are_refused(tmp_path, cell):
    # Issue 12 item 9: only plain ASCII decimal numbers (and the compass points) are headings.
    from headingref.swing import read_swing_csv

    path = tmp_path / "r.csv"
    path.write_text(f"heading,compass\n{cell},0\n", encoding="utf-8")
    with pytest.raises(InputError, match="r.csv line 2: heading .* is not understood"):
        read_swing_csv(path)


def test_column_names_error_lists_accepted_names(tmp_path):
    from headingref.swing import read_swing_csv

    path = tmp_path / "r.csv"
    path.write_text("bearing,compass\n0,0\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"missing column\(s\) magnetic_heading_deg.*accepted names: heading magnetic_heading_deg/") as info:
        read_swing_csv(path)
    assert "\n" not in str(info.value)
    path.write_text("heading,compass,deviation\n0,0,0\n", encoding="utf-8")
    with pytest.raises(InputError, match="both a compass reading and a deviation column"):
        read_swing_csv(path)


# ------------------------------------------------------------------------------ library arguments (issue 12)


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"magnetic_heading_deg": ["a"], "compass_reading_deg": [1.0]}, "magnetic_heading_deg"),
        ({"magnetic_heading_deg": "0,90", "compass_reading_deg": [1.0]}, "magnetic_heading_deg"),
        ({"magnetic_heading_deg": [0.0], "compass_reading_deg": [object()]}, "compass_reading_deg"),
        ({"limit_deg": float("nan")}, "limit_deg"),
        ({"limit_deg": "10"}, "limit_deg"),
        ({"compensated_limit_deg": float("inf")}, "compensated_limit_deg"),
        ({"max_plausible_deviation_deg": float("nan")}, "max_plausible_deviation_deg"),
        ({"verdict_on": "residual"}, "verdict_on"),
        ({"method": "lsq"}, "method"),
        ({"coefficients": 5}, "coefficients"),
        ({"rows": "abc"}, "rows"),
        ({"card_headings_deg": ["x"]}, "card headings"),
    ],
)
def test_bad_arguments_are_input_errors_naming_the_argument(kwargs, match):
    args = {"magnetic_heading_deg": EIGHT, "compass_reading_deg": EIGHT} | kwargs
    with pytest.raises(InputError, match=match):
        analyse_swing(args.pop("magnetic_heading_deg"), args.pop("compass_reading_deg"), **args)


@pytest.mark.parametrize("option", ["--max-deviation", "--limit", "--compensated-limit"])
def test_cli_refuses_non_finite_limits(tmp_path, capsys, option):
    # Issue 12 item 9: '--max-deviation nan' turned the plausibility check off.
    assert main(["swing", "--input", str(DATA / "swing_handbook_501.csv"), option, "nan"]) == 2
    err = capsys.readouterr().err.strip()
    assert "'nan' is not a number" in err and option in err and len(err.splitlines()) == 1


# ------------------------------------------------------------------------------ the card as a document


def test_card_document_html_and_pdf(tmp_path, capsys, demo_dir):
    html_path, pdf_path = tmp_path / "card.html", tmp_path / "card.pdf"
    code = main([
        "swing", "--input", str(DATA / "swing_handbook_501.csv"), "--date", "2026-12-02",
        "--aircraft", "ZZ-<b>INV</b>", "--compass", "SN 0001", "--swung-by", "A. N. Other",
        "--conditions", "engines running, radios on", "--bases", str(DATA.parent.parent / "data/demo/compass_bases.csv"),
        "--base", "Svalbrekka compass base", "--compensated", "--card-html", str(html_path), "--card-plot", str(pdf_path),
    ])
    assert code == 0
    out = capsys.readouterr().out
    text = html_path.read_text(encoding="utf-8")
    assert "@media print" in text and "Signature" in text and "A. N. Other" in text
    assert "ZZ-&lt;b&gt;INV&lt;/b&gt;" in text and "<b>INV</b>" not in text  # user text escaped
    assert "engines running, radios on" in text and "2026-12-02" in text
    # The base link: the demo file's latest survey of this base (read here with the csv module),
    # printed as degrees and minutes; ppigrf's IGRF-14 variation there has moved more than the
    # 0.5 deg tolerance by the 2026 swing, so the base is overdue (data/demo/README.md).
    survey = _latest_demo_survey(demo_dir, "Svalbrekka compass base")
    assert f"marked variation {_dm_east(survey['value_deg'])}, surveyed {survey['date']}" in text
    assert abs(ppigrf_declination(survey["lat"], survey["lon"], "2026-12-02") - survey["value_deg"]) > 0.5
    assert "OVERDUE" in text and "OVERDUE" in out
    # The after-compensation card names the terms it keeps.
    assert "A +1.0°, D +5.0°, E +1.5°" in text
    assert pdf_path.read_bytes()[:4] == b"%PDF"


def test_card_base_not_in_file_lists_names(capsys):
    code = main(["swing", "--input", str(DATA / "swing_handbook_501.csv"), "--date", "2026-12-02",
                 "--bases", str(DATA.parent.parent / "data/demo/compass_bases.csv"), "--base", "Nowhere base"])
    assert code == 2
    err = capsys.readouterr().err
    assert "base 'Nowhere base' is not in" in err and "Svalbrekka compass base" in err


@settings(max_examples=100, deadline=None)
@given(value=st.floats(min_value=-29.9, max_value=29.9, allow_nan=False).map(lambda v: round(v, 2)),
       style=st.sampled_from(["suffix", "prefix", "sign"]))
def test_deviation_column_forms(tmp_path_factory, value, style):
    # Deviation written as the handbook prints it (10.5E, 1.2W: east plus, west minus, Pub. 226 art. 501)
    # or signed; magnetic = compass + deviation (AC 43-17), so compass = magnetic - deviation.
    from headingref.swing import read_swing_csv

    letter = "E" if value >= 0 else "W"
    text = {"suffix": f"{abs(value):.2f}{letter}", "prefix": f"{letter}{abs(value):.2f}", "sign": f"{value:.2f}"}[style]
    path = tmp_path_factory.mktemp("d") / "r.csv"
    path.write_text(f"heading,deviation\nE,{text}\n", encoding="utf-8")
    magnetic, compass, _ = read_swing_csv(path)
    assert magnetic[0] == 90.0
    assert float(deviation_from_readings(magnetic, compass)[0]) == pytest.approx(value, abs=1e-9)


def test_swing_from_the_demo_scenario(demo_dir):
    # The demo's [swing] section on the demo bases: the card links to the base's latest survey in
    # data/demo/compass_bases.csv (Svalbrekka 10.7E on 2021-06-22, overdue by the 2027-03-15 swing:
    # drift about +0.4 deg a year against a 0.5 deg tolerance, data/demo/README.md).
    from headingref.scenario import DEMO_SCENARIO, load_scenario
    from headingref.swing import swing_from_scenario

    sc = load_scenario(DEMO_SCENARIO)
    analysis, details = swing_from_scenario(sc.swing, sc.compass_bases["file"])
    # Demo readings are the invented curve A 0.5, B 6.5, C -5.0, D 0.8, E -0.4 plus 0.2 deg noise
    # (data/demo/README.md): least squares recovers each within 3 standard errors of 12 readings
    # (sigma sqrt(2/12) = 0.08 deg for B..E; Gauss-Markov).
    for name, value in {"A": 0.5, "B": 6.5, "C": -5.0, "D": 0.8, "E": -0.4}.items():
        assert analysis.curve.coefficients()[name] == pytest.approx(value, abs=0.25), name
    survey = _latest_demo_survey(demo_dir, "Svalbrekka compass base")
    assert details.swing_date == "2027-03-15" and details.base_marked_variation == _dm_east(survey["value_deg"])
    assert details.base_survey_date == survey["date"] == "2021-06-22" and "OVERDUE" in details.base_status
    # ppigrf (IGRF-14) at the base on the swing date: more than the 0.5 deg tolerance from the survey
    assert abs(ppigrf_declination(survey["lat"], survey["lon"], "2027-03-15") - survey["value_deg"]) > 0.5
