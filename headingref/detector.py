"""Heading-reference error budget of a slaved flux-gate (flux-valve) heading detector.

A remote-reading compass system slaves a directional gyro to a flux-gate detector, mounted at a
wingtip or in the fin where the aircraft's own field is least. The detector has three sensing
arms 120 degrees apart in its own plane; each arm's output is proportional to the cosine of the
angle between the arm and the field component lying in that plane, which fixes the heading
without ambiguity (:func:`flux_gate_arm_outputs`, :func:`heading_from_arm_outputs`). It senses
only the horizontal component H, so the signal shrinks as H does. It hangs pendulously on a
universal joint free in pitch and roll (about 25 degrees each way, not in azimuth), so under
acceleration it hangs along the apparent vertical and picks up part of the vertical field.

Error terms (all in degrees of heading, magnetic heading measured clockwise from magnetic north)
--------------------------------------------------------------------------------------------------
- **Residual aircraft field**: an uncompensated disturbing field ``dB`` (nT) in the sensor plane
  turns the sensed vector by at most ``asin(dB / H)`` (the worst case, dB perpendicular to the
  resulting vector); 180 when ``dB >= H`` (no heading left).
- **Tilt** (:func:`detector_tilt`): in a coordinated turn at bank ``phi`` the detector hangs along
  the aircraft's normal axis, tilted by ``phi`` in roll; a longitudinal acceleration ``a`` tilts it
  in pitch by ``atan(a/g)``, nose DOWN when speeding up (it hangs along the apparent gravity
  ``g * down - a * forward``, so its lower end swings aft); in steady flight it hangs level unless the
  aircraft's pitch attitude exceeds the joint's limit, beyond which it rests on the stop and is
  tilted by the excess. The apparent heading comes from rotating the field vector
  ``(H, 0, Z)`` (magnetic north, east, down) into the detector frame (pitch ``theta`` then roll
  ``phi``, aerospace order) and taking the heading of its in-plane components
  (:func:`tilt_heading_error_deg`). For small tilts the error is
  ``tan(I) * (theta sin(psi) - phi cos(psi))`` (radians; derived by first-order expansion), so it
  grows with the tangent of the inclination. With no vertical field only a second-order
  foreshortening remains, ``tan(psi') = cos(tau) tan(psi)`` for a roll ``tau`` (at most 0.44
  degrees at 10 degrees of bank, 4.1 at 30), so at high latitude the vertical field dominates.
  The worst heading is found in closed form (:func:`worst_tilt_heading_error_deg`): any tilt is a single roll by ``tau``
  (``cos tau = cos theta cos phi``) about an axis at ``beta = atan2(cos phi sin theta, sin phi)``
  from the heading plus a fixed in-plane offset ``gamma = atan2(-sin theta, sin phi cos theta)``;
  for a pure roll ``tau`` the stationary points of the error satisfy a quadratic in
  ``s = sin(chi)``: ``sin^2(tau) s^2 + k (2 cos tau - 1) s + (cos tau - 1 - k^2) = 0`` with
  ``k = tan(I) sin(tau)``. When ``tan(tau) tan|I| >= 1`` the field vector lies on the far side of
  the sensor plane's normal and some heading reads 180 degrees wrong.
- **Model uncertainty**: the WMM error model for declination,
  :func:`headingref.field.declination_uncertainty_deg` (WMM2020/WMM2025 technical reports).
- **Slaving**: the gyro is slaved to the detector at a slow rate (default 3 deg/min). Working off
  an error takes ``error / rate`` minutes (:func:`slaving_time_min`); if slaving stays on through
  a turn of given duration, the gyro is dragged toward the detector's tilt error by
  ``min(rate * duration, |tilt error|)`` (:func:`slaving_drift_deg`).

Combined budget
---------------
The terms that reach the slaved heading output are the residual-field error, the model
uncertainty and the slaving drift accumulated during the manoeuvre (the tilt error reaches the
output only through slaving). They are taken as independent: ``budget_rss_deg`` is their
root-sum-square, ``budget_linear_deg`` their plain sum (a worst case with all terms aligned).
``exceeds_limit`` compares the root-sum-square with ``limit_deg``.

Public API
----------
:func:`heading_error` (points or route samples -> DataFrame), :func:`heading_error_grid` (map ->
xarray Dataset, with the area beyond the limit), :func:`detector_tilt`,
:func:`tilt_heading_error_deg`, :func:`worst_tilt_heading_error_deg`,
:func:`small_angle_tilt_error_deg`, :func:`residual_field_error_deg`, :func:`slaving_time_min`,
:func:`slaving_drift_deg`, :func:`flux_gate_arm_outputs`, :func:`heading_from_arm_outputs`.

>>> from headingref.detector import slaving_time_min, tilt_heading_error_deg
>>> float(slaving_time_min(6.0))  # 6 degrees at the default 3 deg/min
2.0
>>> float(tilt_heading_error_deg(75.0, 90.0, tilt_pitch_deg=0.0, tilt_roll_deg=0.0))
0.0
>>> import headingref
>>> row = headingref.heading_error(78.2, 15.6, "2026-12-02", bank_deg=15.0).iloc[0]
>>> bool(row.tilt_error_deg > 10.0)  # weak H, steep dip: a 15 degree bank misleads badly
True
"""

from __future__ import annotations

import functools
import warnings
from typing import Any

import numpy as np
import pandas as pd

from .errors import InputError, UndefinedDeclinationWarning

STANDARD_GRAVITY_MPS2 = 9.80665  # standard acceleration of gravity (3rd CGPM, 1901)
GIMBAL_LIMIT_DEG = 25.0  # common practice: the detector's joint swings about 25 deg in pitch and roll
SLAVING_RATE_DEG_PER_MIN = 3.0  # common practice: slaving (precession) rate about 3 deg per minute
ARM_ANGLES_DEG = (0.0, 120.0, 240.0)  # common practice: three sensing arms 120 deg apart
DEFAULT_RESIDUAL_FIELD_NT = 100.0
DEFAULT_LIMIT_DEG = 2.0


def _wrap180(angle_deg: Any) -> np.ndarray:
    """Wrap to [-180, 180)."""
    return (np.asarray(angle_deg, dtype=np.float64) + 180.0) % 360.0 - 180.0


def _finite(name: str, value: Any, low: float | None = None, high: float | None = None, unit: str = "") -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError(f"{name} {value!r} is not a number") from None
    if not np.all(np.isfinite(arr)):
        raise InputError(f"{name} {value!r} is not finite; give a number{(' in ' + unit) if unit else ''}")
    if (low is not None and np.any(arr < low)) or (high is not None and np.any(arr > high)):
        lo = "-inf" if low is None else f"{low:g}"
        hi = "inf" if high is None else f"{high:g}"
        bad = arr[(arr < (low if low is not None else -np.inf)) | (arr > (high if high is not None else np.inf))]
        raise InputError(f"{name} {bad.ravel()[0]:g} is outside {lo} to {hi}{(' ' + unit) if unit else ''}")
    return arr


# --------------------------------------------------------------------------- detector attitude
def detector_tilt(
    bank_deg: Any = 0.0,
    accel_mps2: Any = 0.0,
    pitch_deg: Any = 0.0,
    gimbal_limit_deg: float = GIMBAL_LIMIT_DEG,
) -> tuple[np.ndarray, np.ndarray]:
    """Tilt of the detector from the horizontal, ``(tilt_pitch_deg, tilt_roll_deg)``.

    Parameters
    ----------
    bank_deg : bank angle of a coordinated turn, degrees (right wing down positive). The detector
        hangs along the aircraft's normal axis, so its roll tilt equals the bank.
    accel_mps2 : longitudinal acceleration, m/s^2 (speeding up positive). A pendulous detector
        hangs along the apparent gravity ``g * down - a * forward``: its lower end swings aft, so
        speeding up tilts it nose DOWN by ``atan(a/g)`` (pitch tilt ``-atan(a/g)``, nose up
        positive). Hence the acceleration error of pendulous and direct-reading compasses: on an
        east or west heading in the northern hemisphere, accelerating shows a turn toward north
        (common practice; FAA Pilot's Handbook of Aeronautical Knowledge, magnetic compass
        acceleration error, "ANDS": accelerate north, decelerate south).
    pitch_deg : the aircraft's pitch attitude, degrees (nose up positive). The joint lets the
        detector hang where it wants within ``gimbal_limit_deg`` of the airframe; beyond that it
        rests on the stop: the angle the joint must take is the physical tilt between airframe
        and apparent vertical, ``-(pitch + atan(a/g))``, clipped to the limit:
        ``tilt = pitch + clip(-atan(a/g) - pitch, -limit, limit)``. In steady flight (``a = 0``)
        this is the excess of the attitude over the limit.
    gimbal_limit_deg : the joint's travel each way, degrees (default 25, common practice).
    """
    bank = _finite("bank_deg", bank_deg, -89.0, 89.0, "degrees")
    accel = _finite("accel_mps2", accel_mps2, -50.0, 50.0, "m/s^2")
    pitch = _finite("pitch_deg", pitch_deg, -89.0, 89.0, "degrees")
    limit = float(_finite("gimbal_limit_deg", gimbal_limit_deg, 0.0, 89.0, "degrees"))
    wanted = -np.degrees(np.arctan2(accel, STANDARD_GRAVITY_MPS2))  # apparent vertical: nose down when speeding up
    tilt_pitch = pitch + np.clip(wanted - pitch, -limit, limit)
    return np.asarray(tilt_pitch, dtype=np.float64), np.asarray(bank, dtype=np.float64)


# --------------------------------------------------------------------------- tilt error
def tilt_heading_error_deg(inclination_deg: Any, heading_deg: Any, tilt_pitch_deg: Any, tilt_roll_deg: Any) -> np.ndarray:
    """Heading error of a tilted detector at a given magnetic heading (exact), degrees.

    The field ``(cos I, 0, sin I)`` (magnetic north, east, down; scale irrelevant) is rotated into
    the detector frame: yaw by the heading, pitch by ``tilt_pitch_deg``, roll by ``tilt_roll_deg``
    (aerospace z-y-x order). The apparent heading is ``atan2(-b_y, b_x)`` of the in-plane
    components; the error is apparent minus true, wrapped to [-180, 180). East (clockwise)
    positive. Arguments broadcast.
    """
    inc = np.radians(_finite("inclination", inclination_deg, -90.0, 90.0, "degrees"))
    psi = np.radians(_finite("heading", heading_deg, None, None, "degrees"))
    th = np.radians(_finite("pitch tilt", tilt_pitch_deg, -90.0, 90.0, "degrees"))
    ph = np.radians(_finite("roll tilt", tilt_roll_deg, -90.0, 90.0, "degrees"))
    b_x, b_y = _sensor_components(np.cos(inc), np.sin(inc), psi, th, ph)
    return _wrap180(np.degrees(np.arctan2(-b_y, b_x) - psi))


def _sensor_components(h, z, psi, th, ph):
    """In-plane field components ``(b_x, b_y)`` of a detector at heading psi, pitch th, roll ph.

    Field ``(h, 0, z)`` in magnetic north-east-down; radians.
    """
    cp, sp = np.cos(psi), np.sin(psi)
    ct, st = np.cos(th), np.sin(th)
    cr, sr = np.cos(ph), np.sin(ph)
    forward, right = h * cp, -h * sp  # level frame aligned with the heading
    b_x = ct * forward - st * z
    b_y = sr * st * forward + cr * right + sr * ct * z
    return b_x, b_y


def small_angle_tilt_error_deg(inclination_deg: Any, heading_deg: Any, tilt_pitch_deg: Any, tilt_roll_deg: Any) -> np.ndarray:
    """First-order tilt error ``tan(I) (theta sin psi - phi cos psi)``, degrees.

    Derived by expanding the exact apparent heading to first order in the tilt angles; its worst
    over headings is ``|tan I| * sqrt(theta^2 + phi^2)``.
    """
    inc = np.radians(np.asarray(inclination_deg, dtype=np.float64))
    psi = np.radians(np.asarray(heading_deg, dtype=np.float64))
    th = np.asarray(tilt_pitch_deg, dtype=np.float64)
    ph = np.asarray(tilt_roll_deg, dtype=np.float64)
    return np.tan(inc) * (th * np.sin(psi) - ph * np.cos(psi))


def worst_tilt_heading_error_deg(
    inclination_deg: Any, tilt_pitch_deg: Any, tilt_roll_deg: Any, return_heading: bool = False
) -> np.ndarray | tuple[np.ndarray, np.ndarray]:
    """Largest absolute tilt error over all headings, degrees (closed form; see module docstring).

    Returns 180 where ``tan(tau) tan|I| >= 1`` (some heading reads reversed). With
    ``return_heading=True`` also returns the magnetic heading (degrees, [0, 360)) where the worst
    occurs (NaN for zero tilt or the reversed case).
    """
    inc = np.radians(np.asarray(inclination_deg, dtype=np.float64))
    th = np.radians(np.asarray(tilt_pitch_deg, dtype=np.float64))
    ph = np.radians(np.asarray(tilt_roll_deg, dtype=np.float64))
    shape = np.broadcast_shapes(inc.shape, th.shape, ph.shape)
    # tilt terms keep their own (often scalar) shape; only the arithmetic below broadcasts
    ct, st, cr, sr = np.cos(th), np.sin(th), np.cos(ph), np.sin(ph)
    cos_tau = ct * cr
    sin_tau = np.sqrt(np.maximum(sr**2 + (cr * st) ** 2, 0.0))
    beta = np.arctan2(cr * st, sr)  # azimuth of the equivalent roll axis from the heading
    gamma = np.arctan2(-st, sr * ct)  # in-plane offset of the detector's reference arm
    offset = beta + gamma
    c_inc, s_inc = np.cos(inc), np.sin(inc)
    k_c = s_inc * sin_tau  # k * cos(I), k = tan(I) sin(tau)
    c_inc2 = c_inc * c_inc
    # quadratic in s = sin(chi), multiplied through by cos^2(I) to stay finite at I = 90
    qa = sin_tau**2 * c_inc2
    qb = k_c * c_inc * (2.0 * cos_tau - 1.0)
    qc = (cos_tau - 1.0) * c_inc2 - k_c * k_c
    with np.errstate(divide="ignore", invalid="ignore"):
        root = np.sqrt(np.maximum(qb * qb - 4.0 * qa * qc, 0.0))
        s_roots = np.clip(np.stack(np.broadcast_arrays((-qb + root) / (2.0 * qa), (-qb - root) / (2.0 * qa))), -1.0, 1.0)
    s_roots = np.nan_to_num(s_roots, nan=0.0)
    c_roots = np.sqrt(1.0 - s_roots * s_roots)
    s_all = np.concatenate([s_roots, s_roots])  # candidates: (s, +c), (s, -c) for both roots
    c_all = np.concatenate([c_roots, -c_roots])
    chi = np.arctan2(s_all, c_all)
    apparent = np.arctan2(c_inc * cos_tau * s_all - s_inc * sin_tau, c_inc * c_all)
    err = np.abs(_wrap180(np.degrees(apparent - chi + offset)))
    pick = np.argmax(err, axis=0)
    worst = np.take_along_axis(err, pick[None], axis=0)[0]
    worst_chi = np.take_along_axis(chi, pick[None], axis=0)[0]
    reversed_ = sin_tau * np.abs(s_inc) >= cos_tau * np.abs(c_inc)
    no_tilt = np.broadcast_to(sin_tau < 1e-12, shape)
    worst = np.where(reversed_ & ~no_tilt, 180.0, np.where(no_tilt, 0.0, worst))
    if not return_heading:
        return worst
    heading = np.degrees(worst_chi - beta) % 360.0
    heading = np.where(reversed_ | no_tilt, np.nan, heading)
    return worst, heading


# --------------------------------------------------------------------------- three-arm detector
def flux_gate_arm_outputs(sensor_x_nT: Any, sensor_y_nT: Any, arm_angles_deg: tuple[float, ...] = ARM_ANGLES_DEG) -> np.ndarray:
    """Outputs of the sensing arms (nT), shape ``(..., n_arms)``.

    Each arm lies in the detector plane at ``arm_angles_deg`` clockwise from the detector's
    forward axis; its output is the in-plane field times the cosine of the angle between the arm
    and the field (common practice: flux-gate arm output proportional to that cosine).
    ``sensor_x_nT`` is the forward, ``sensor_y_nT`` the rightward in-plane component.
    """
    angles = np.radians(np.asarray(arm_angles_deg, dtype=np.float64))
    bx = np.asarray(sensor_x_nT, dtype=np.float64)[..., None]
    by = np.asarray(sensor_y_nT, dtype=np.float64)[..., None]
    return bx * np.cos(angles) + by * np.sin(angles)


def heading_from_arm_outputs(outputs_nT: Any, arm_angles_deg: tuple[float, ...] = ARM_ANGLES_DEG) -> np.ndarray:
    """Heading (degrees, [0, 360)) recovered from three (or more, equally spaced) arm outputs.

    For arms equally spaced round the circle, ``sum V_i cos a_i = (n/2) b_x`` and
    ``sum V_i sin a_i = (n/2) b_y`` exactly, so the field direction and hence the heading
    ``atan2(-b_y, b_x)`` follow without ambiguity.
    """
    angles = np.radians(np.asarray(arm_angles_deg, dtype=np.float64))
    v = np.asarray(outputs_nT, dtype=np.float64)
    bx = np.sum(v * np.cos(angles), axis=-1)
    by = np.sum(v * np.sin(angles), axis=-1)
    return np.degrees(np.arctan2(-by, bx)) % 360.0


# --------------------------------------------------------------------------- other terms
def residual_field_error_deg(horizontal_nT: Any, residual_field_nT: Any) -> np.ndarray:
    """Worst heading error from an uncompensated aircraft field: ``asin(dB/H)`` degrees; 180 if dB >= H."""
    h = _finite("horizontal field", horizontal_nT, 0.0, None, "nT")
    db = np.abs(_finite("residual aircraft field", residual_field_nT, None, None, "nT"))
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(h > 0, db / np.where(h > 0, h, 1.0), np.inf)
    return np.where(ratio >= 1.0, 180.0, np.degrees(np.arcsin(np.minimum(ratio, 1.0))))


def slaving_time_min(error_deg: Any, rate_deg_per_min: float = SLAVING_RATE_DEG_PER_MIN) -> np.ndarray:
    """Minutes the slaving loop needs to work off a heading error at ``rate_deg_per_min``."""
    rate = float(_finite("slaving rate", rate_deg_per_min, 1e-6, None, "deg/min"))
    return np.abs(_finite("heading error", error_deg, None, None, "degrees")) / rate


def slaving_drift_deg(tilt_error_deg: Any, duration_min: Any, rate_deg_per_min: float = SLAVING_RATE_DEG_PER_MIN) -> np.ndarray:
    """Error the gyro is dragged toward when slaving stays on through a manoeuvre, degrees.

    ``min(rate * duration, |tilt error|)``: the gyro precesses toward the detector's (wrong)
    reading at the slaving rate but never past it.
    """
    rate = float(_finite("slaving rate", rate_deg_per_min, 1e-6, None, "deg/min"))
    duration = _finite("turn duration", duration_min, 0.0, None, "minutes")
    return np.minimum(rate * duration, np.abs(np.asarray(tilt_error_deg, dtype=np.float64)))


# --------------------------------------------------------------------------- the budget
def _budget(
    horizontal_nT: np.ndarray,
    inclination_deg: np.ndarray,
    uncertainty_deg: np.ndarray,
    *,
    residual_field_nT: Any,
    bank_deg: Any,
    accel_mps2: Any,
    pitch_deg: Any,
    heading_deg: Any,
    turn_duration_min: Any,
    slaving_rate_deg_per_min: float,
    gimbal_limit_deg: float,
    limit_deg: float,
) -> dict[str, np.ndarray]:
    residual_nT = _finite("residual_field_nT", residual_field_nT, 0.0, 1e5, "nT")
    limit = float(_finite("limit_deg", limit_deg, 0.0, 180.0, "degrees"))
    tilt_pitch, tilt_roll = detector_tilt(bank_deg, accel_mps2, pitch_deg, gimbal_limit_deg)
    if heading_deg is None:
        tilt_error, heading = worst_tilt_heading_error_deg(inclination_deg, tilt_pitch, tilt_roll, return_heading=True)
    else:
        heading = _finite("heading_deg", heading_deg, -360.0, 360.0, "degrees") % 360.0
        tilt_error = tilt_heading_error_deg(inclination_deg, heading, tilt_pitch, tilt_roll)
        # no horizontal field: no heading at all
        tilt_error = np.where(horizontal_nT > 0, tilt_error, 180.0)
    residual = residual_field_error_deg(horizontal_nT, residual_nT)
    uncertainty = np.minimum(np.nan_to_num(uncertainty_deg, nan=180.0, posinf=180.0), 180.0)
    drift = slaving_drift_deg(tilt_error, turn_duration_min, slaving_rate_deg_per_min)
    rss = np.sqrt(residual**2 + uncertainty**2 + drift**2)
    linear = residual + uncertainty + drift
    shape = np.broadcast_shapes(np.shape(horizontal_nT), np.shape(rss))
    out = {
        "tilt_pitch_deg": tilt_pitch,
        "tilt_roll_deg": tilt_roll,
        "heading_deg": heading,
        "residual_field_error_deg": residual,
        "model_uncertainty_deg": uncertainty,
        "tilt_error_deg": tilt_error,
        "slaving_drift_deg": drift,
        "slaving_recovery_min": slaving_time_min(drift, slaving_rate_deg_per_min),
        "budget_rss_deg": rss,
        "budget_linear_deg": linear,
        "exceeds_limit": rss > limit,
    }
    return {name: np.broadcast_to(value, shape) for name, value in out.items()}


def heading_error(
    lat: Any,
    lon: Any,
    date: Any,
    *,
    alt_km: Any = 0.0,
    residual_field_nT: Any = DEFAULT_RESIDUAL_FIELD_NT,
    bank_deg: Any = 0.0,
    accel_mps2: Any = 0.0,
    pitch_deg: Any = 0.0,
    heading_deg: Any = None,
    turn_duration_min: Any = 1.0,
    slaving_rate_deg_per_min: float = SLAVING_RATE_DEG_PER_MIN,
    gimbal_limit_deg: float = GIMBAL_LIMIT_DEG,
    limit_deg: float = DEFAULT_LIMIT_DEG,
    model=None,
    allow_extrapolation: bool = False,
) -> pd.DataFrame:
    """Heading-reference error budget at points or route samples (one row each).

    Parameters
    ----------
    lat, lon : degrees (WGS84, north/east positive), scalars or arrays (broadcast)
    date : one date or one per point (see :func:`headingref.units.decimal_year`)
    alt_km : height above the WGS84 ellipsoid, km
    residual_field_nT : uncompensated aircraft field at the detector, nT (default 100, an
        illustrative value; use the installation's figure)
    bank_deg, accel_mps2, pitch_deg : manoeuvre (see :func:`detector_tilt`); scalars or per point
    heading_deg : magnetic heading, degrees; ``None`` (default) takes the worst heading
    turn_duration_min : how long the manoeuvre lasts with slaving on, minutes
    slaving_rate_deg_per_min : default 3 (common practice)
    gimbal_limit_deg : default 25 (common practice)
    limit_deg : budget limit for ``exceeds_limit`` (root-sum-square), degrees

    Returns
    -------
    pandas.DataFrame
        ``lat_deg, lon_deg, alt_km, decimal_year, horizontal_nT, inclination_deg,
        tilt_pitch_deg, tilt_roll_deg, heading_deg (the heading given, or the worst one; NaN
        where every heading is equally bad or none is), residual_field_error_deg, model_uncertainty_deg,
        tilt_error_deg, slaving_drift_deg, slaving_recovery_min, budget_rss_deg,
        budget_linear_deg, exceeds_limit``. ``tilt_error_deg`` is signed (apparent minus true,
        east positive) for a given heading and the magnitude for the worst heading. How the terms
        combine: module docstring.
    """
    from .field import field_arrays

    f = field_arrays(lat, lon, date, alt_km=alt_km, model=model, allow_extrapolation=allow_extrapolation)
    n = len(f["horizontal_nT"])
    settings = {"residual_field_nT": residual_field_nT, "bank_deg": bank_deg, "accel_mps2": accel_mps2,
                "pitch_deg": pitch_deg, "heading_deg": heading_deg, "turn_duration_min": turn_duration_min}
    for name, value in settings.items():
        if value is not None and np.size(value) not in (1, n):
            raise InputError(f"{name} has {np.size(value)} values for {n} place(s); give one value, or one per place")
    terms = _budget(
        f["horizontal_nT"],
        f["inclination_deg"],
        f["declination_uncertainty_deg"],
        residual_field_nT=residual_field_nT,
        bank_deg=bank_deg,
        accel_mps2=accel_mps2,
        pitch_deg=pitch_deg,
        heading_deg=heading_deg,
        turn_duration_min=turn_duration_min,
        slaving_rate_deg_per_min=slaving_rate_deg_per_min,
        gimbal_limit_deg=gimbal_limit_deg,
        limit_deg=limit_deg,
    )
    columns = {name: f[name] for name in ("lat_deg", "lon_deg", "alt_km", "decimal_year", "horizontal_nT", "inclination_deg")}
    columns.update({name: np.broadcast_to(np.ravel(value) if np.ndim(value) else value, (n,)) for name, value in terms.items()})
    return pd.DataFrame(columns)


def heading_error_grid(
    area: Any,
    date: Any,
    *,
    resolution_deg: float = 0.5,
    alt_km: float = 0.0,
    residual_field_nT: float = DEFAULT_RESIDUAL_FIELD_NT,
    bank_deg: float = 0.0,
    accel_mps2: float = 0.0,
    pitch_deg: float = 0.0,
    heading_deg: float | None = None,
    turn_duration_min: float = 1.0,
    slaving_rate_deg_per_min: float = SLAVING_RATE_DEG_PER_MIN,
    gimbal_limit_deg: float = GIMBAL_LIMIT_DEG,
    limit_deg: float = DEFAULT_LIMIT_DEG,
    model=None,
    allow_extrapolation: bool = False,
):
    """The error budget as a map (one date), an xarray Dataset.

    ``area`` is ``'north'``/``'south'`` or ``(lat_min, lat_max, lon_min, lon_max)`` as for
    :func:`headingref.zones.zones`.

    - A polar cap is computed on a square polar stereographic grid (WGS84,
      ``+proj=stere +lat_0=+-90 +lon_0=0``, the projection of :mod:`headingref.plots.basemap`)
      with dims ``(y, x)`` in metres, spacing ``resolution_deg`` degrees of latitude
      (111.32 km per degree), out to the cap's edge (:data:`CAP_EDGE_LAT_DEG`: 60 N, 50 S);
      points beyond the edge are NaN. 2-D ``lat``/``lon`` coordinates. The area beyond the limit is the sum of the cells'
      ground areas (cell area divided by the projection's areal scale factor from
      :meth:`pyproj.Proj.get_factors`).
    - A region is computed on its latitude-longitude grid (dims ``(lat, lon)``); the area is that
      of the limit contour's polygons (geodesic on WGS84,
      :meth:`pyproj.Geod.polygon_area_perimeter`).

    Variables: ``horizontal_nT``, ``inclination_deg``, ``declination_uncertainty_deg`` and the
    budget terms of :func:`heading_error`. ``attrs['area_exceeding_limit_km2']`` is the area
    where the root-sum-square budget exceeds ``limit_deg``.
    """
    import xarray as xr

    from .zones import area_grid, parse_area, polygons_area_km2, threshold_polygons

    options = {
        "residual_field_nT": residual_field_nT, "bank_deg": bank_deg, "accel_mps2": accel_mps2,
        "pitch_deg": pitch_deg, "heading_deg": heading_deg, "turn_duration_min": turn_duration_min,
        "slaving_rate_deg_per_min": slaving_rate_deg_per_min, "gimbal_limit_deg": gimbal_limit_deg,
        "limit_deg": limit_deg,
    }
    if np.ndim(date) != 0 and not isinstance(date, str):
        raise InputError("heading_error_grid takes one date; call it once per date")
    kind, _ = parse_area(area)
    if kind == "region":
        ds = area_grid(area, date, resolution_deg=resolution_deg, alt_km=alt_km, model=model,
                       allow_extrapolation=allow_extrapolation)
        terms = _budget(ds["horizontal_nT"].values, ds["inclination_deg"].values,
                        ds["declination_uncertainty_deg"].values, **options)
        for name, value in terms.items():
            ds[name] = (("lat", "lon"), np.array(value))
        area_km2 = polygons_area_km2(threshold_polygons(ds, "budget_rss_deg", limit_deg, np.inf))
    else:
        from .field import field_arrays
        from .units import decimal_year

        x, y, lat, lon, inside, _, lat_in, lon_in, cell_in_km2 = _stereo_cap(kind, resolution_deg)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # D at the pole point is not used
            f = field_arrays(lat_in, lon_in, decimal_year(date), alt_km=alt_km, model=model,
                             allow_extrapolation=allow_extrapolation)
        terms = _budget(f["horizontal_nT"], f["inclination_deg"], f["declination_uncertainty_deg"], **options)
        variables = {}
        for name, values in [*((n, f[n]) for n in ("horizontal_nT", "inclination_deg", "declination_uncertainty_deg")),
                             *terms.items()]:
            full = np.full(lat.shape, False if values.dtype == bool else np.nan, dtype=values.dtype)
            full[inside] = values
            variables[name] = (("y", "x"), full)
        ds = xr.Dataset(variables, coords={
            "x": ("x", x, {"units": "m"}), "y": ("y", y, {"units": "m"}),
            "lat": (("y", "x"), lat, {"units": "degrees_north"}), "lon": (("y", "x"), lon, {"units": "degrees_east"}),
        }, attrs={"crs": _cap_proj(kind), "alt_km": float(alt_km), "decimal_year": float(f["decimal_year"][0])})
        area_km2 = float(np.sum(cell_in_km2, where=terms["exceeds_limit"]))
    ds.attrs.update(
        area_kind=kind,
        limit_deg=float(limit_deg),
        area_exceeding_limit_km2=area_km2,
        combination="budget_rss_deg = sqrt(residual^2 + model_uncertainty^2 + slaving_drift^2)",
    )
    return ds


error_budget_map = heading_error_grid
"""Alias of :func:`heading_error_grid`."""

CAP_EDGE_LAT_DEG = {"north": 60.0, "south": 50.0}
"""Edge of the cap maps: the weak-field zones reach about 70 N round the north dip pole (near the
geographic pole) but about 56 S round the south dip pole (near 64 S), so the south cap is wider."""
_METRES_PER_DEG = 111_320.0


def _cap_proj(kind: str) -> str:
    lat0 = 90 if kind == "north" else -90
    return f"+proj=stere +lat_0={lat0} +lat_ts={lat0} +lon_0=0 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs"


def _stereo_cap(kind: str, resolution_deg: float):
    """Square polar stereographic grid over a cap: x, y (m), lat, lon, inside mask, cell km^2.

    Cached by (cap, resolution): the geometry does not change between calls (read-only arrays).
    """
    from .zones import check_resolution_deg

    return _stereo_cap_cached(kind, check_resolution_deg(resolution_deg))


@functools.lru_cache(maxsize=4)
def _stereo_cap_cached(kind: str, step_deg: float):
    from pyproj import Proj

    proj = Proj(_cap_proj(kind))
    sign = 1.0 if kind == "north" else -1.0
    edge = CAP_EDGE_LAT_DEG[kind]
    edge_x, edge_y = proj(0.0, sign * edge)
    radius = float(np.hypot(edge_x, edge_y))
    step = step_deg * _METRES_PER_DEG
    half = int(np.ceil(radius / step))
    if (2 * half + 1) ** 2 > 20_000_000:
        raise InputError(f"resolution {step_deg!r} is too fine for a polar cap map; use 0.05 degrees or more")
    axis = step * np.arange(-half, half + 1)
    xx, yy = np.meshgrid(axis, axis)
    inside = np.hypot(xx, yy) <= radius
    lon, lat = proj(xx, yy, inverse=True)
    # areal scale depends on latitude only: take it on a fine profile and interpolate
    profile_lat = sign * np.linspace(edge - 1.0, 90.0, 2000)
    factors = proj.get_factors(np.zeros_like(profile_lat), profile_lat)
    order = np.argsort(profile_lat)
    areal = np.interp(lat, profile_lat[order], np.asarray(factors.areal_scale)[order])
    cell_km2 = step * step / areal / 1e6
    grid = (axis, axis.copy(), lat, lon, inside, cell_km2, lat[inside], lon[inside], cell_km2[inside])
    for array in grid:
        array.setflags(write=False)
    return grid
