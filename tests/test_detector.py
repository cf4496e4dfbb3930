"""Heading-reference error budget: tilt geometry, three-arm detector, slaving, combination."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import headingref
from headingref.detector import (
    GIMBAL_LIMIT_DEG,
    SLAVING_RATE_DEG_PER_MIN,
    DetectorSettings,
    Manoeuvre,
    _sensor_components,
    budget_settings,
    detector_tilt,
    flux_gate_arm_outputs,
    heading_error_grid,
    heading_from_arm_outputs,
    residual_field_error_deg,
    slaving_drift_deg,
    slaving_time_min,
    small_angle_tilt_error_deg,
    tilt_heading_error_deg,
    worst_tilt_heading_error_deg,
)
from headingref.errors import InputError, UndefinedDeclinationWarning
from headingref.geogrid import CAPS

angles = st.floats(min_value=-180.0, max_value=180.0, allow_nan=False)
inclinations = st.floats(min_value=-89.0, max_value=89.0, allow_nan=False)


def _rotation_matrix_ned(heading_deg, pitch_deg, roll_deg):
    """Independent construction: body-to-NED direction-cosine matrix (Titterton & Weston,
    Strapdown Inertial Navigation Technology, eq. 3.47, z-y-x Euler angles)."""
    p, t, r = np.radians([heading_deg, pitch_deg, roll_deg])
    cz, sz, cy, sy, cx, sx = np.cos(p), np.sin(p), np.cos(t), np.sin(t), np.cos(r), np.sin(r)
    return np.array([
        [cy * cz, -cx * sz + sx * sy * cz, sx * sz + cx * sy * cz],
        [cy * sz, cx * cz + sx * sy * sz, -sx * cz + cx * sy * sz],
        [-sy, sx * cy, cx * cy],
    ])


@settings(max_examples=60, deadline=None)
@given(inclinations, angles, st.floats(-40, 40), st.floats(-40, 40))
def test_sensor_rotation_matches_direction_cosine_matrix(inc, heading, pitch, roll):
    # the field in the detector frame equals C_b^n transposed times the NED field (Titterton & Weston)
    field_ned = np.array([math.cos(math.radians(inc)), 0.0, math.sin(math.radians(inc))])
    body = _rotation_matrix_ned(heading, pitch, roll).T @ field_ned
    b_x, b_y = _sensor_components(field_ned[0], field_ned[2], *np.radians([heading, pitch, roll]))
    assert b_x == pytest.approx(body[0], abs=1e-12)
    assert b_y == pytest.approx(body[1], abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(inclinations, angles)
def test_zero_tilt_gives_zero_error(inc, heading):
    assert float(tilt_heading_error_deg(inc, heading, 0.0, 0.0)) == pytest.approx(0.0, abs=1e-9)
    assert float(worst_tilt_heading_error_deg(inc, 0.0, 0.0)) == 0.0


@settings(max_examples=60, deadline=None)
@given(angles, st.floats(-60, 60))
def test_zero_vertical_field_leaves_only_foreshortening(heading, roll):
    # no vertical field: the vertical-field term vanishes; what is left is the projection of a
    # horizontal vector onto a plane rolled by phi, tan(psi') = cos(phi) tan(psi) (plane geometry)
    expected = math.degrees(math.atan2(math.cos(math.radians(roll)) * math.sin(math.radians(heading)),
                                       math.cos(math.radians(heading)))) - heading
    expected = (expected + 180.0) % 360.0 - 180.0
    got = float(tilt_heading_error_deg(0.0, heading, 0.0, roll))
    assert got == pytest.approx(expected, abs=1e-9)
    # to first order in the tilt it vanishes: 0.1 deg of pitch and roll leave only second-order
    # terms (about theta * phi = 1.7e-4 deg), against 0.1 * tan(I) deg of first order at I != 0
    small = tilt_heading_error_deg(0.0, np.arange(0.0, 360.0, 5.0), 0.1, 0.1)
    assert np.max(np.abs(small)) < 3e-4
    # at the headings along and across the roll axis it is exactly zero
    assert float(tilt_heading_error_deg(0.0, 0.0, 0.0, roll)) == pytest.approx(0.0, abs=1e-9)
    assert abs(float(tilt_heading_error_deg(0.0, 90.0, 0.0, roll))) == pytest.approx(0.0, abs=1e-9)


def test_northerly_turning_error_classic_formula():
    # heading north, bank phi: tan(error) = -tan(I) sin(phi), the textbook northerly turning error
    # (from memory; it follows from the compass needle aligning with the field's in-plane part)
    for inc, bank in [(70.0, 15.0), (80.0, 25.0), (-65.0, 20.0)]:
        expected = -math.degrees(math.atan(math.tan(math.radians(inc)) * math.sin(math.radians(bank))))
        assert float(tilt_heading_error_deg(inc, 0.0, 0.0, bank)) == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize("inc", [20.0, 45.0, 70.0, 80.0])
def test_small_angle_form_within_one_percent(inc):
    # first-order expansion derived in the module docstring; 0.05 deg tilt in pitch and roll
    headings = np.arange(0.0, 360.0, 1.0)
    exact = tilt_heading_error_deg(inc, headings, 0.05, -0.04)
    approx = small_angle_tilt_error_deg(inc, headings, 0.05, -0.04)
    big = np.abs(approx) > 0.2 * np.abs(approx).max()
    assert np.all(np.abs(exact[big] - approx[big]) <= 0.01 * np.abs(approx[big]))
    worst = float(worst_tilt_heading_error_deg(inc, 0.05, -0.04))
    assert worst == pytest.approx(math.tan(math.radians(inc)) * math.hypot(0.05, 0.04), rel=0.01)


@settings(max_examples=80, deadline=None)
@given(inclinations, st.floats(-35, 35), st.floats(-45, 45))
def test_closed_form_worst_heading_matches_brute_force(inc, pitch, roll):
    tau = math.degrees(math.acos(math.cos(math.radians(pitch)) * math.cos(math.radians(roll))))
    if abs(tau - (90.0 - abs(inc))) < 1.0:
        return  # within a degree of reversal the peak is too narrow for a 0.02 deg scan
    headings = np.arange(0.0, 360.0, 0.02)
    brute = float(np.max(np.abs(tilt_heading_error_deg(inc, headings, pitch, roll))))
    worst, at = worst_tilt_heading_error_deg(inc, pitch, roll, return_heading=True)
    if tau > 90.0 - abs(inc):
        assert float(worst) == 180.0 and brute > 90.0
        return
    assert float(worst) == pytest.approx(brute, abs=1e-3)
    if float(worst) > 1e-6:
        assert abs(float(tilt_heading_error_deg(inc, at, pitch, roll))) == pytest.approx(float(worst), abs=1e-6)


def test_tilt_error_grows_with_tangent_of_inclination():
    small = [float(worst_tilt_heading_error_deg(i, 0.0, 0.5)) for i in (60.0, 75.0, 85.0)]
    ratios = [s / math.tan(math.radians(i)) for s, i in zip(small, (60.0, 75.0, 85.0), strict=True)]
    assert max(ratios) / min(ratios) < 1.01  # first order: error / tan(I) constant (the tilt, 0.5 deg)
    assert ratios[0] == pytest.approx(0.5, rel=0.01)


@settings(max_examples=100, deadline=None)
@given(st.floats(0.0, 360.0, exclude_max=True), st.floats(100.0, 60000.0))
def test_three_arm_detector_recovers_every_heading(heading, horizontal_nT):
    # common practice: three arms 120 deg apart, outputs proportional to cos(arm - field)
    b_x, b_y = _sensor_components(horizontal_nT, 0.0, math.radians(heading), 0.0, 0.0)
    outputs = flux_gate_arm_outputs(b_x, b_y)
    assert outputs.shape == (3,)
    # each arm reads H cos(angle between arm and field): field lies at -heading from the nose
    for arm, out in zip((0.0, 120.0, 240.0), outputs, strict=True):
        assert out == pytest.approx(horizontal_nT * math.cos(math.radians(arm + heading)), abs=1e-6)
    recovered = float(heading_from_arm_outputs(outputs))
    assert (recovered - heading + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=1e-9)


def test_detector_tilt_model():
    # coordinated turn: roll tilt = bank; acceleration g*tan(5 deg): the apparent gravity
    # g*down - a*forward leans 5 deg aft, so the pendulous detector pitches 5 deg nose DOWN
    pitch, roll = detector_tilt(bank_deg=20.0)
    assert (float(pitch), float(roll)) == (0.0, 20.0)
    pitch, _ = detector_tilt(accel_mps2=9.80665 * math.tan(math.radians(5.0)))
    assert float(pitch) == pytest.approx(-5.0, abs=1e-9)
    # the joint clips the physical tilt pitch + atan(a/g): nose 20 deg up while accelerating at
    # g*tan(10 deg) asks the joint for 30 deg; on its 25 deg stop the detector lies 20 - 25 = -5 deg
    # (5 deg nose down) instead of the -10 deg of the apparent vertical
    pitch, _ = detector_tilt(accel_mps2=9.80665 * math.tan(math.radians(10.0)), pitch_deg=20.0)
    assert float(pitch) == pytest.approx(-5.0, abs=1e-9)
    pitch, _ = detector_tilt(accel_mps2=9.80665 * math.tan(math.radians(10.0)), pitch_deg=10.0)
    assert float(pitch) == pytest.approx(-10.0, abs=1e-9)  # 20 deg asked: within the joint's travel
    # steady flight: level within the joint's travel (common practice: about 25 deg), excess beyond
    assert GIMBAL_LIMIT_DEG == 25.0
    assert float(detector_tilt(pitch_deg=20.0)[0]) == pytest.approx(0.0, abs=1e-12)
    assert float(detector_tilt(pitch_deg=30.0)[0]) == pytest.approx(5.0, abs=1e-12)
    assert float(detector_tilt(pitch_deg=-32.0)[0]) == pytest.approx(-7.0, abs=1e-12)


def _pendulum_heading_error_deg(inc_deg, heading_deg, accel_mps2, g=9.80665):
    """First principles, written apart from the module: the detector hangs along the apparent
    gravity g*down - a*forward (specific force of a pendulum in an accelerating frame; any
    mechanics text); its plane is normal to that direction. The field (cos I, 0, sin I) in
    north-east-down is projected on the plane and the heading read off against the nose's
    projection, clockwise positive."""
    psi, inc = math.radians(heading_deg), math.radians(inc_deg)
    forward = np.array([math.cos(psi), math.sin(psi), 0.0])
    down = np.array([0.0, 0.0, 1.0])
    normal = g * down - accel_mps2 * forward
    normal /= np.linalg.norm(normal)
    x_axis = forward - normal * (forward @ normal)  # the nose, projected into the detector plane
    x_axis /= np.linalg.norm(x_axis)
    y_axis = np.cross(normal, x_axis)  # right wing: z cross x = y in a right-handed frame
    b = np.array([math.cos(inc), 0.0, math.sin(inc)])
    apparent = math.degrees(math.atan2(-(b @ y_axis), b @ x_axis))  # heading of the nose from the field
    return (apparent - heading_deg + 180.0) % 360.0 - 180.0


@pytest.mark.parametrize("heading", [90.0, 270.0, 45.0, 135.0, 0.0])
@pytest.mark.parametrize("accel", [1.5, -2.0])
def test_acceleration_error_matches_a_pendulum_in_apparent_gravity(heading, accel):
    # first-principles rotation (helper above) against the detector model, 65 N 20 W
    row = headingref.heading_error(65.0, -20.0, "2026-12-02", accel_mps2=accel, heading_deg=heading, bank_deg=0.0).iloc[0]
    expected = _pendulum_heading_error_deg(row.inclination_deg, heading, accel)
    assert row.tilt_error_deg == pytest.approx(expected, abs=1e-9)


def test_acceleration_error_follows_the_textbook_rule():
    # FAA Pilot's Handbook of Aeronautical Knowledge, magnetic compass acceleration error ("ANDS",
    # common practice for pendulous and direct-reading compasses): on east or west headings in
    # the northern hemisphere accelerating shows a turn toward north, decelerating toward south;
    # reversed in the southern hemisphere; none on north or south headings. Wings level.
    level = {"manoeuvre": Manoeuvre.level()}
    east = headingref.heading_error(65.0, -20.0, "2026-12-02", accel_mps2=1.5, heading_deg=90.0, **level).iloc[0]
    assert east.tilt_error_deg == pytest.approx(-31.0, abs=1.0)  # the example: about -31 deg
    west = headingref.heading_error(65.0, -20.0, "2026-12-02", accel_mps2=1.5, heading_deg=270.0, **level).iloc[0]
    assert west.tilt_error_deg > 10.0  # 270 reads toward 360: toward north
    slower = headingref.heading_error(65.0, -20.0, "2026-12-02", accel_mps2=-1.5, heading_deg=90.0, **level).iloc[0]
    assert slower.tilt_error_deg > 10.0  # decelerate: toward south (090 reads toward 180)
    south = headingref.heading_error(-65.0, 140.0, "2026-12-02", accel_mps2=1.5, heading_deg=90.0, **level).iloc[0]
    assert south.inclination_deg < 0 and south.tilt_error_deg > 10.0  # southern hemisphere: toward south
    along = headingref.heading_error([65.0, 65.0], [-20.0, -20.0], "2026-12-02", accel_mps2=1.5, heading_deg=[0.0, 180.0],
                                  **level)
    assert np.allclose(along.tilt_error_deg, 0.0, atol=1e-9)


def test_residual_field_error():
    # arcsin(dB/H): 500 nT against 10000 nT -> asin(0.05) = 2.866 deg
    assert float(residual_field_error_deg(10000.0, 500.0)) == pytest.approx(math.degrees(math.asin(0.05)), abs=1e-12)
    assert float(residual_field_error_deg(400.0, 500.0)) == 180.0
    assert float(residual_field_error_deg(0.0, 10.0)) == 180.0


def test_slaving():
    # common practice: slaving at about 3 deg/min; 6 deg of error takes 2 minutes
    assert SLAVING_RATE_DEG_PER_MIN == 3.0
    assert float(slaving_time_min(6.0)) == pytest.approx(2.0)
    # dragged toward the detector's error at 3 deg/min, never past it
    assert float(slaving_drift_deg(10.0, 1.0)) == pytest.approx(3.0)
    assert float(slaving_drift_deg(2.0, 1.0)) == pytest.approx(2.0)
    assert float(slaving_drift_deg(-10.0, 0.5)) == pytest.approx(1.5)


def test_heading_error_budget_at_route_samples():
    lats = np.array([60.0, 70.0, 78.0, 85.0])
    lons = np.array([10.0, 20.0, 30.0, 120.0])
    df = headingref.heading_error(lats, lons, "2026-12-02", bank_deg=5.0, residual_field_nT=100.0, turn_duration_min=0.2)
    assert len(df) == 4
    field = headingref.field(lats, lons, "2026-12-02")
    # model term: WMM error model sqrt(0.26^2 + (5417/H)^2) (WMM2025 technical report)
    expected_unc = np.sqrt(0.26**2 + (5417.0 / field.horizontal_nT.to_numpy()) ** 2)
    assert np.allclose(df.model_uncertainty_deg, np.minimum(expected_unc, 180.0), rtol=1e-12)
    assert np.allclose(df.residual_field_error_deg, np.degrees(np.arcsin(np.minimum(100.0 / field.horizontal_nT, 1.0))))
    # drift = min(3 deg/min * 0.2 min, |tilt error|)
    assert np.allclose(df.slaving_drift_deg, np.minimum(0.6, df.tilt_error_deg))
    rss = np.sqrt(df.residual_field_error_deg**2 + df.model_uncertainty_deg**2 + df.slaving_drift_deg**2)
    assert np.allclose(df.budget_rss_deg, rss)
    assert np.all(df.budget_linear_deg >= df.budget_rss_deg)
    # the worst heading bounds any given heading, and re-evaluating at it gives the worst again
    some = headingref.heading_error(lats, lons, "2026-12-02", bank_deg=5.0, heading_deg=37.0)
    assert np.all(np.abs(some.tilt_error_deg) <= df.tilt_error_deg + 1e-9)
    finite = np.isfinite(df.heading_deg.to_numpy())
    again = headingref.heading_error(lats[finite], lons[finite], "2026-12-02", bank_deg=5.0,
                                     heading_deg=df.heading_deg.to_numpy()[finite])
    assert np.allclose(np.abs(again.tilt_error_deg), df.tilt_error_deg[finite], atol=1e-6)
    # weaker H further north: the tilt error grows toward the dip pole
    assert df.tilt_error_deg.iloc[0] < df.tilt_error_deg.iloc[1] < df.tilt_error_deg.iloc[2]
    assert df.exceeds_limit.iloc[3] and not df.exceeds_limit.iloc[0]


def test_error_map_and_area_beyond_limit():
    ds = heading_error_grid("north", "2026-12-02", resolution_deg=1.0, bank_deg=0.0, limit_deg=2.0)
    assert set(ds.budget_rss_deg.dims) == {"y", "x"}
    # with no manoeuvre the budget is residual + model terms; the WMM model term alone exceeds
    # 2 deg where 5417/H > 1.98 i.e. H < ~2740 nT, so the area exceeds the blackout zone's
    blackout = headingref.zones("north", "2026-12-02", resolution_deg=1.0)
    from headingref.weak_field import zone_areas

    blackout_km2 = float(zone_areas(blackout).set_index("zone").loc["blackout", "area_km2"])
    assert ds.attrs["area_exceeding_limit_km2"] > blackout_km2 > 0
    # region map, same date: the same physics on a lat/lon grid gives a similar area (5 %)
    region = heading_error_grid((70.0, 90.0, -180.0, 180.0), "2026-12-02", resolution_deg=0.5, limit_deg=2.0)
    assert region.attrs["area_exceeding_limit_km2"] == pytest.approx(ds.attrs["area_exceeding_limit_km2"], rel=0.05)


def test_cap_map_cell_areas_sum_to_the_geodesic_cap_area():
    from pyproj import Geod

    # a tiny limit: every cell exceeds, so the area is the whole cap north of its edge (55 N);
    # pyproj.Geod (Karney's geodesic polygon area) of that parallel gives the reference
    ds = heading_error_grid("north", "2026-12-02", resolution_deg=0.5, limit_deg=1e-6)
    lons = np.arange(-180.0, 180.0, 0.05)
    cap_m2, _ = Geod(ellps="WGS84").polygon_area_perimeter(lons, np.full(lons.size, CAPS["north"].edge_lat_deg))
    assert ds.attrs["area_exceeding_limit_km2"] == pytest.approx(abs(cap_m2) / 1e6, rel=0.005)


def test_bad_inputs():
    with pytest.raises(InputError, match="bank_deg"):
        headingref.heading_error(70.0, 0.0, "2026-01-01", bank_deg=95.0)
    with pytest.raises(InputError, match="residual_field_nT"):
        headingref.heading_error(70.0, 0.0, "2026-01-01", residual_field_nT=-5.0)
    with pytest.raises(InputError, match="bank_deg"):
        headingref.heading_error(70.0, 0.0, "2026-01-01", bank_deg=float("nan"))
    with pytest.raises(InputError):
        headingref.heading_error(70.0, 0.0, "2026-01-01", turn_duration_min=-1.0)
    with pytest.raises(InputError):
        slaving_time_min(6.0, rate_deg_per_min=0.0)
    with pytest.raises(InputError):
        heading_error_grid("west", "2026-01-01")


def test_manoeuvre_settings_must_match_the_places():
    # One value, or one per place (common practice for vectorised APIs); anything else is one clear error.
    with pytest.raises(InputError, match="bank_angle_deg has 3 values for 2 place"):
        headingref.heading_error([70.0, 71.0], [20.0, 21.0], "2026-12-02", bank_deg=[0.0, 10.0, 20.0])
    table = headingref.heading_error([70.0, 71.0], [20.0, 21.0], "2026-12-02", bank_deg=[0.0, 10.0])
    assert len(table) == 2


def test_settings_dataclasses_are_the_one_set_of_defaults():
    # one vocabulary and one set of defaults (issue 13): the scenario's [error_budget] keys are
    # the dataclass fields with the same defaults, and heading_error uses the same objects
    from dataclasses import fields

    from headingref.scenario import SCHEMA

    keys = SCHEMA["error_budget"]
    for cls in (DetectorSettings, Manoeuvre):
        for spec in fields(cls):
            assert keys[spec.name].default == spec.default
    # common practice: slaving about 3 deg/min, joint about 25 deg, cut-out about 10 deg of bank (from memory)
    d = DetectorSettings()
    assert (d.slaving_rate_deg_per_min, d.joint_limit_deg, d.slaving_cutout_bank_deg) == (3.0, 25.0, 10.0)
    # the earlier keyword names keep their meaning: 0.5 min is 30 s, the gimbal limit is the joint limit
    det, man = budget_settings(turn_duration_min=0.5, gimbal_limit_deg=20.0, bank_deg=5.0, accel_mps2=1.0)
    assert (man.turn_duration_s, det.joint_limit_deg, man.bank_angle_deg, man.acceleration_mps2) == (30.0, 20.0, 5.0, 1.0)
    with pytest.raises(InputError, match="same setting"):
        budget_settings(bank_deg=5.0, bank_angle_deg=6.0)
    with pytest.raises(InputError, match="unknown error-budget setting 'bank'"):
        budget_settings(bank=5.0)
    with pytest.raises(InputError, match="slaving_cutout_bank_deg"):
        DetectorSettings(slaving_cutout_bank_deg=-1.0)


def test_slaving_cut_out_in_turns():
    # common practice (from memory): slaving is cut out above about 10 deg of bank, so the tilt
    # error of the turn never reaches the gyro; below the cut-out the gyro is dragged at 3 deg/min
    place = (78.2, 15.6, "2026-12-02")
    banks = np.array([5.0, 9.9, 10.1, 25.0])
    rows = [headingref.heading_error(*place, bank_angle_deg=b, turn_duration_s=60.0).iloc[0] for b in banks]
    assert [bool(r.slaving_on) for r in rows] == [True, True, False, False]
    assert [float(r.slaving_drift_deg) for r in rows[:2]] == pytest.approx([min(3.0, r.tilt_error_deg) for r in rows[:2]])
    assert [float(r.slaving_drift_deg) for r in rows[2:]] == [0.0, 0.0]
    steady = headingref.heading_error(*place, manoeuvre=Manoeuvre.level()).iloc[0]
    assert rows[3].budget_rss_deg == pytest.approx(steady.budget_rss_deg, abs=1e-12)
    never = headingref.heading_error(*place, bank_angle_deg=25.0, slaving_cutout_bank_deg=90.0).iloc[0]
    assert bool(never.slaving_on) and never.slaving_drift_deg == pytest.approx(3.0)  # 3 deg/min x 1 min


def test_saturation_and_dominant_term_are_stated():
    # Svalbard-like field (H ~ 7,200 nT, I ~ 82 deg): a 5 deg bank gives a tilt error of many
    # degrees (tan(82) * 5 ~ 36 deg, first order), far above the 3 deg/min x 1 min ceiling, so
    # the drift is the largest term and sits at its ceiling
    row = headingref.heading_error(78.2, 15.6, "2026-12-02", bank_angle_deg=5.0, turn_duration_s=60.0).iloc[0]
    assert row.tilt_error_deg > 3.0 and row.slaving_drift_deg == pytest.approx(3.0)
    assert row.dominant_term == "slaving_drift" and row.saturated_by == "slaving_rate"
    # 10 s of slaving: ceiling 0.5 deg, below the WMM model term there (5417/H ~ 0.75 deg,
    # WMM2025 report): the model term dominates and nothing saturates
    row = headingref.heading_error(78.2, 15.6, "2026-12-02", bank_angle_deg=5.0, turn_duration_s=10.0).iloc[0]
    assert row.dominant_term == "model_uncertainty" and row.saturated_by == "none"
    # at the dip pole H = 0: the residual field leaves no heading (asin(dB/H), dB >= H)
    pole = headingref.dip_poles("2026-12-02").set_index("pole").loc["north"]
    with pytest.warns(UndefinedDeclinationWarning):  # D is undefined where H = 0
        row = headingref.heading_error(pole.lat, pole.lon, "2026-12-02").iloc[0]
    assert row.residual_field_error_deg == 180.0 and row.saturated_by == "residual_field"
    assert isinstance(row.zone, str) and row.zone == "blackout"


def test_budget_map_says_when_it_is_saturated():
    grid = heading_error_grid("north", "2026-12-02", resolution_deg=2.0, bank_angle_deg=8.0, turn_duration_s=60.0)
    assert grid.attrs["saturated_by"] == "slaving_rate" and grid.attrs["saturated_share_beyond_limit"] > 0.5
    assert grid.attrs["bank_angle_deg"] == 8.0 and grid.attrs["slaving_cutout_bank_deg"] == 10.0
    assert grid["saturated_by"].attrs["flag_meanings"].split()[1] == "slaving_rate"
    level = heading_error_grid("north", "2026-12-02", resolution_deg=2.0, manoeuvre=Manoeuvre.level())
    assert level.attrs["saturated_by"] != "slaving_rate"


@settings(max_examples=100, deadline=None)
@given(st.floats(0.0, 60.0), st.floats(-89.0, 89.0), st.floats(-20.0, 20.0))
def test_earlier_keyword_names_convert_to_the_settings(minutes, bank, accel):
    # parser property: the earlier names mean the same settings; 1 min = 60 s (SI)
    det, man = budget_settings(turn_duration_min=minutes, bank_deg=bank, accel_mps2=accel)
    assert man.turn_duration_s == pytest.approx(60.0 * minutes, rel=1e-12, abs=1e-12)
    assert (man.bank_angle_deg, man.acceleration_mps2) == (bank, accel)
    assert det == DetectorSettings()
