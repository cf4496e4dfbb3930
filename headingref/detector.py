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
  :func:`headingref.elements.declination_uncertainty_deg` (WMM2020/WMM2025 technical reports).
- **Slaving**: the gyro is slaved to the detector at a slow rate (default 3 deg/min). Working off
  an error takes ``error / rate`` minutes (:func:`slaving_time_min`); if slaving stays on through
  a turn of given duration, the gyro is dragged toward the detector's tilt error by
  ``min(rate * duration, |tilt error|)`` (:func:`slaving_drift_deg`). Many systems cut slaving
  out while the bank exceeds about 10 degrees (common practice, from memory), precisely so that
  the tilt error does not reach the gyro: ``DetectorSettings.slaving_cutout_bank_deg`` (default
  10; 90 never cuts out). Above it the drift is 0 and ``slaving_on`` is False.

Settings
--------
One frozen dataclass per concern, whose field names are the scenario's ``[error_budget]`` keys and
(with ``--budget-``) the options of ``headingref zones``: :class:`DetectorSettings` (residual
field 50 nT, joint limit 25 deg, slaving 3 deg/min, cut-out above 10 deg of bank, limit 2 deg) and
:class:`Manoeuvre` (bank 25 deg, acceleration 0, pitch 0, 60 s; ``Manoeuvre.level()`` for steady
flight). :func:`budget_settings` builds both from keywords.

Combined budget
---------------
The terms that reach the slaved heading output are the residual-field error, the model
uncertainty and the slaving drift accumulated during the manoeuvre (the tilt error reaches the
output only through slaving). They are taken as independent: ``budget_rss_deg`` is their
root-sum-square, ``budget_linear_deg`` their plain sum (a worst case with all terms aligned).
``exceeds_limit`` compares the root-sum-square with ``limit_deg``. ``dominant_term`` names the
largest term and ``saturated_by`` says where the budget sits at a ceiling (slaving drift at
rate x duration, residual field at least H, model term capped at 180): there a larger bank or a
weaker field changes nothing, so a map of the budget is flat; say so when you show it.

Public API
----------
:func:`heading_error` (points or route samples -> DataFrame), :func:`heading_error_grid` (map ->
xarray Dataset, with the area beyond the limit), :class:`DetectorSettings`, :class:`Manoeuvre`,
:func:`budget_settings`, :func:`detector_tilt`,
:func:`tilt_heading_error_deg`, :func:`worst_tilt_heading_error_deg`,
:func:`small_angle_tilt_error_deg`, :func:`residual_field_error_deg`, :func:`slaving_time_min`,
:func:`slaving_drift_deg`, :func:`flux_gate_arm_outputs`, :func:`heading_from_arm_outputs`.

References
----------
.. [1] Federal Aviation Administration, *Pilot's Handbook of Aeronautical Knowledge*,
   FAA-H-8083-25, chapter "Flight Instruments": magnetic compass acceleration and turning
   errors, the remote-indicating (slaved) compass (no DOI; edition from memory: 25C, 2023).
.. [2] A. Chulliat, W. Brown, P. Alken, C. Beggan, M. Nair, G. Cox, A. Woods, S. Macmillan,
   B. Meyer and M. Paniccia, *The US/UK World Magnetic Model for 2020-2025: Technical Report*,
   NOAA National Centers for Environmental Information (2020), doi:10.25923/ytk1-yx35.
.. [3] A. Chulliat et al., *The US/UK World Magnetic Model for 2025-2030: Technical Report*,
   NOAA National Centers for Environmental Information (2025), doi:10.25923/prbc-s316.

>>> from headingref.detector import slaving_time_min, tilt_heading_error_deg
>>> float(slaving_time_min(6.0))  # 6 degrees at the default 3 deg/min
2.0
>>> float(tilt_heading_error_deg(75.0, 90.0, tilt_pitch_deg=0.0, tilt_roll_deg=0.0))
0.0
>>> import headingref
>>> row = headingref.heading_error(78.2, 15.6, "2026-12-02", bank_angle_deg=15.0).iloc[0]
>>> bool(row.tilt_error_deg > 10.0)  # weak H, steep dip: a 15 degree bank misleads badly
True
>>> bool(row.slaving_on), float(row.slaving_drift_deg)  # but slaving is cut out above 10 degrees
(False, 0.0)
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field, fields, replace
from typing import Any

import numba as nb
import numpy as np
import pandas as pd

from .elements import ZONE_DTYPE, field_arrays
from .errors import InputError, UndefinedDeclinationWarning
from .geogrid import CAPS, METRES_PER_DEG, area_grid, cap_stereo_grid, parse_area, polygons_area_km2, threshold_polygons
from .synthesis import threads_for
from .units import decimal_year

STANDARD_GRAVITY_MPS2 = 9.80665  # standard acceleration of gravity (3rd CGPM, 1901)
GIMBAL_LIMIT_DEG = 25.0  # common practice: the detector's joint swings about 25 deg in pitch and roll
SLAVING_RATE_DEG_PER_MIN = 3.0  # common practice: slaving (precession) rate about 3 deg per minute
ARM_ANGLES_DEG = (0.0, 120.0, 240.0)  # common practice: three sensing arms 120 deg apart
SLAVING_CUTOUT_BANK_DEG = 10.0  # common practice, from memory: slaving cut out above about 10 deg of bank
DEFAULT_RESIDUAL_FIELD_NT = 50.0  # illustrative; use the installation's compensated figure
DEFAULT_LIMIT_DEG = 2.0
DEFAULT_BANK_DEG = 25.0  # the standard turn of the budget (see Manoeuvre)
DEFAULT_TURN_DURATION_S = 60.0


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
    # tilt terms keep their own (often scalar) size: the kernel reads element 0 when there is one
    flat = [np.ascontiguousarray(v.ravel() if v.size == 1 else np.broadcast_to(v, shape).ravel()) for v in (inc, th, ph)]
    worst = np.empty(int(np.prod(shape)), dtype=np.float64)
    heading = np.empty_like(worst)
    with threads_for(worst.size):
        _worst_tilt_kernel(flat[0], flat[1], flat[2], worst, heading)
    worst, heading = worst.reshape(shape), heading.reshape(shape)
    return (worst, heading) if return_heading else worst


@nb.njit(parallel=True, cache=True)
def _worst_tilt_kernel(inc, th, ph, worst, heading):  # pragma: no cover - compiled
    """Closed-form worst tilt error per point (module docstring): the quadratic's roots, both
    signs of cos(chi), the largest wrapped error and its heading. Radians in, degrees out."""
    two_pi = 2.0 * math.pi
    for i in nb.prange(worst.size):
        t = th[0] if th.size == 1 else th[i]
        p = ph[0] if ph.size == 1 else ph[i]
        inc_i = inc[0] if inc.size == 1 else inc[i]
        ct, st, cr, sr = math.cos(t), math.sin(t), math.cos(p), math.sin(p)
        cos_tau = ct * cr
        sin_tau = math.sqrt(max(sr * sr + (cr * st) ** 2, 0.0))
        c_inc, s_inc = math.cos(inc_i), math.sin(inc_i)
        if sin_tau < 1e-12:  # no tilt
            worst[i], heading[i] = 0.0, np.nan
            continue
        if sin_tau * abs(s_inc) >= cos_tau * abs(c_inc):  # some heading reads reversed
            worst[i], heading[i] = 180.0, np.nan
            continue
        beta = math.atan2(cr * st, sr)  # azimuth of the equivalent roll axis from the heading
        offset = beta + math.atan2(-st, sr * ct)  # plus the in-plane offset of the reference arm
        k_c = s_inc * sin_tau  # k * cos(I), k = tan(I) sin(tau)
        c_inc2 = c_inc * c_inc
        # quadratic in s = sin(chi), multiplied through by cos^2(I) to stay finite at I = 90
        qa = sin_tau * sin_tau * c_inc2
        qb = k_c * c_inc * (2.0 * cos_tau - 1.0)
        qc = (cos_tau - 1.0) * c_inc2 - k_c * k_c
        root = math.sqrt(max(qb * qb - 4.0 * qa * qc, 0.0))
        best, best_chi = -1.0, 0.0
        for sign in (1.0, -1.0):  # candidates: (s, +c) for both roots, then (s, -c)
            for s_raw in ((-qb + root) / (2.0 * qa), (-qb - root) / (2.0 * qa)):
                s_c = 0.0 if math.isnan(s_raw) else min(max(s_raw, -1.0), 1.0)
                c_c = sign * math.sqrt(1.0 - s_c * s_c)
                chi = math.atan2(s_c, c_c)
                diff = math.atan2(c_inc * cos_tau * s_c - s_inc * sin_tau, c_inc * c_c) - chi + offset
                err = abs(math.degrees(diff - two_pi * np.rint(diff / two_pi)))
                if err > best:
                    best, best_chi = err, chi
        worst[i] = best
        heading[i] = math.degrees(best_chi - beta) % 360.0


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


# --------------------------------------------------------------------------- settings
def _setting(default: float, unit: str, low: float, high: float, doc: str, open_low: bool = False):
    return field(default=default, metadata={"unit": unit, "low": low, "high": high, "doc": doc, "open_low": open_low})


def _validated(obj) -> None:
    """Check every field of a settings dataclass against its metadata; store floats or arrays."""
    for spec in fields(obj):
        meta = spec.metadata
        value = _finite(spec.name, getattr(obj, spec.name), meta["low"], meta["high"], meta["unit"])
        if meta["open_low"] and np.any(value <= meta["low"]):
            raise InputError(f"{spec.name} {np.ravel(value)[0]:g} must be above {meta['low']:g} {meta['unit']}")
        object.__setattr__(obj, spec.name, float(value) if value.ndim == 0 else value)


@dataclass(frozen=True)
class DetectorSettings:
    """The installation: the detector and its slaving loop, and the budget's limit.

    Field names are the ``[error_budget]`` keys of a scenario and, with ``--budget-`` in front,
    the options of ``headingref zones``. ``residual_field_nT`` may be one value per place.
    """

    residual_field_nT: float = _setting(
        DEFAULT_RESIDUAL_FIELD_NT, "nT", 0.0, 20000.0,
        "uncompensated aircraft field at the detector (illustrative default; use the installation's figure)")
    joint_limit_deg: float = _setting(
        GIMBAL_LIMIT_DEG, "deg", 0.0, 89.0, "travel of the detector's universal joint each way (common practice: about 25)")
    slaving_rate_deg_per_min: float = _setting(
        SLAVING_RATE_DEG_PER_MIN, "deg/min", 0.0, 600.0, "gyro slaving rate (common practice: about 3)", open_low=True)
    slaving_cutout_bank_deg: float = _setting(
        SLAVING_CUTOUT_BANK_DEG, "deg", 0.0, 90.0,
        "slaving is cut out while the bank exceeds this (common practice, from memory: about 10); 90 = never cut out")
    limit_deg: float = _setting(DEFAULT_LIMIT_DEG, "deg", 0.0, 180.0, "acceptable combined heading error (root-sum-square)",
                                open_low=True)

    def __post_init__(self) -> None:
        _validated(self)


@dataclass(frozen=True)
class Manoeuvre:
    """What the aircraft does while the budget is taken.

    Field names are the ``[error_budget]`` keys of a scenario and, with ``--budget-`` in front,
    the options of ``headingref zones``. The default is the budget's standard turn: 25 degrees
    of bank for one minute (a rate-one turn of a jet at about 250 kt TAS needs about 25 degrees;
    common practice, from memory). :meth:`level` is steady level flight. Each value may be one
    per place.
    """

    bank_angle_deg: float = _setting(
        DEFAULT_BANK_DEG, "deg", -89.0, 89.0, "bank angle of a coordinated turn, right wing down positive")
    acceleration_mps2: float = _setting(0.0, "m/s^2", -20.0, 20.0, "along-track acceleration, speeding up positive")
    pitch_deg: float = _setting(0.0, "deg", -89.0, 89.0, "pitch attitude, nose up positive")
    turn_duration_s: float = _setting(
        DEFAULT_TURN_DURATION_S, "s", 0.0, 3600.0, "how long the manoeuvre lasts (slaving drift accrues meanwhile)")

    def __post_init__(self) -> None:
        _validated(self)

    @classmethod
    def level(cls) -> Manoeuvre:
        """Steady level flight: no bank, no acceleration, level attitude."""
        return cls(bank_angle_deg=0.0, acceleration_mps2=0.0, pitch_deg=0.0)


_LEGACY_NAMES = {  # heading_error's earlier keyword names -> (settings field, factor)
    "bank_deg": ("bank_angle_deg", 1.0),
    "accel_mps2": ("acceleration_mps2", 1.0),
    "gimbal_limit_deg": ("joint_limit_deg", 1.0),
    "turn_duration_min": ("turn_duration_s", 60.0),
}
_DETECTOR_FIELDS = tuple(f.name for f in fields(DetectorSettings))
_MANOEUVRE_FIELDS = tuple(f.name for f in fields(Manoeuvre))


def budget_settings(
    detector: DetectorSettings | None = None, manoeuvre: Manoeuvre | None = None, **settings: Any
) -> tuple[DetectorSettings, Manoeuvre]:
    """``(DetectorSettings, Manoeuvre)`` from optional objects and keyword overrides.

    Keywords are the fields of either class; the earlier names ``bank_deg``, ``accel_mps2``,
    ``gimbal_limit_deg`` and ``turn_duration_min`` (minutes) are still accepted with the same
    meaning. ``None`` values are ignored (not given).
    """
    detector = detector if detector is not None else DetectorSettings()
    manoeuvre = manoeuvre if manoeuvre is not None else Manoeuvre()
    if not isinstance(detector, DetectorSettings) or not isinstance(manoeuvre, Manoeuvre):
        raise InputError("detector must be a DetectorSettings and manoeuvre a Manoeuvre (headingref.detector)")
    for_detector, for_manoeuvre, given_as = {}, {}, {}
    for name, value in settings.items():
        if value is None:
            continue
        if name in _LEGACY_NAMES:
            new, factor = _LEGACY_NAMES[name]
            if new in settings and settings[new] is not None:
                raise InputError(f"{name} and {new} are the same setting; give one of them")
            value = np.multiply(_finite(name, value), factor) if factor != 1.0 else value
            given_as[new] = name
            name = new
        if name in _DETECTOR_FIELDS:
            for_detector[name] = value
        elif name in _MANOEUVRE_FIELDS:
            for_manoeuvre[name] = value
        else:
            accepted = ", ".join((*_DETECTOR_FIELDS, *_MANOEUVRE_FIELDS))
            raise InputError(f"unknown error-budget setting {name!r}; accepted: {accepted}")
    try:
        return replace(detector, **for_detector), replace(manoeuvre, **for_manoeuvre)
    except InputError as exc:
        text = str(exc)
        for new, old in given_as.items():
            if text.startswith(new + " "):
                raise InputError(f"{old} (as {new}){text[len(new):]}") from None
        raise


# --------------------------------------------------------------------------- the budget
TERMS = ("residual_field", "model_uncertainty", "slaving_drift")
"""The terms that reach the slaved heading, in the order of ``dominant_term`` codes."""
TERM_DTYPE = pd.CategoricalDtype(list(TERMS))
SATURATION = ("none", "slaving_rate", "residual_field", "model_uncertainty")
"""Values of ``saturated_by``: what caps the budget (see :func:`heading_error`)."""
SATURATION_DTYPE = pd.CategoricalDtype(list(SATURATION))


def _budget(
    horizontal_nT: np.ndarray,
    inclination_deg: np.ndarray,
    uncertainty_deg: np.ndarray,
    detector: DetectorSettings,
    manoeuvre: Manoeuvre,
    heading_deg: Any,
) -> dict[str, np.ndarray]:
    tilt_pitch, tilt_roll = detector_tilt(manoeuvre.bank_angle_deg, manoeuvre.acceleration_mps2, manoeuvre.pitch_deg,
                                          detector.joint_limit_deg)
    if heading_deg is None:
        tilt_error, heading = worst_tilt_heading_error_deg(inclination_deg, tilt_pitch, tilt_roll, return_heading=True)
    else:
        heading = _finite("heading_deg", heading_deg, -360.0, 360.0, "degrees") % 360.0
        tilt_error = tilt_heading_error_deg(inclination_deg, heading, tilt_pitch, tilt_roll)
        # no horizontal field: no heading at all
        tilt_error = np.where(horizontal_nT > 0, tilt_error, 180.0)
    residual = residual_field_error_deg(horizontal_nT, detector.residual_field_nT)
    uncertainty = np.minimum(np.nan_to_num(uncertainty_deg, nan=180.0, posinf=180.0), 180.0)
    rate = detector.slaving_rate_deg_per_min
    duration_min = np.asarray(manoeuvre.turn_duration_s, dtype=np.float64) / 60.0
    slaving_on = np.abs(np.asarray(manoeuvre.bank_angle_deg)) <= detector.slaving_cutout_bank_deg
    drift = np.where(slaving_on, slaving_drift_deg(tilt_error, duration_min, rate), 0.0)
    rss = np.sqrt(residual**2 + uncertainty**2 + drift**2)
    linear = residual + uncertainty + drift
    shape = np.broadcast_shapes(np.shape(horizontal_nT), np.shape(rss))
    stack = np.stack(np.broadcast_arrays(residual, uncertainty, drift))
    dominant = np.argmax(stack, axis=0).astype(np.int8)
    at_rate = slaving_on & (rate * duration_min < np.abs(tilt_error)) & (dominant == 2)
    saturated = np.where(residual >= 180.0, 2, np.where(uncertainty >= 180.0, 3, np.where(at_rate, 1, 0))).astype(np.int8)
    out = {
        "tilt_pitch_deg": tilt_pitch,
        "tilt_roll_deg": tilt_roll,
        "heading_deg": heading,
        "residual_field_error_deg": residual,
        "model_uncertainty_deg": uncertainty,
        "tilt_error_deg": tilt_error,
        "slaving_on": slaving_on,
        "slaving_drift_deg": drift,
        "slaving_recovery_min": slaving_time_min(drift, rate),
        "budget_rss_deg": rss,
        "budget_linear_deg": linear,
        "exceeds_limit": rss > detector.limit_deg,
        "dominant_term": dominant,
        "saturated_by": saturated,
    }
    return {name: np.broadcast_to(value, shape) for name, value in out.items()}


_CODED = {"dominant_term": TERM_DTYPE, "saturated_by": SATURATION_DTYPE}


def heading_error(
    lat: Any,
    lon: Any,
    date: Any,
    *,
    alt_km: Any = 0.0,
    heading_deg: Any = None,
    detector: DetectorSettings | None = None,
    manoeuvre: Manoeuvre | None = None,
    model=None,
    allow_extrapolation: bool = False,
    **settings: Any,
) -> pd.DataFrame:
    """Heading-reference error budget at points or route samples (one row each).

    Parameters
    ----------
    lat, lon : degrees (WGS84, north/east positive), scalars or arrays (broadcast)
    date : one date or one per point (see :func:`headingref.units.decimal_year`)
    alt_km : height above the WGS84 ellipsoid, km
    heading_deg : magnetic heading, degrees; ``None`` (default) takes the worst heading
    detector : :class:`DetectorSettings` (default: its defaults)
    manoeuvre : :class:`Manoeuvre` (default: the standard 25 degree, 60 s turn;
        ``Manoeuvre.level()`` for steady level flight)
    **settings : any field of either class by name, overriding the objects (e.g.
        ``bank_angle_deg=15``, ``residual_field_nT=100``); the earlier names ``bank_deg``,
        ``accel_mps2``, ``gimbal_limit_deg`` and ``turn_duration_min`` (minutes) keep working.
        Manoeuvre values and ``residual_field_nT`` may be one per place.

    Returns
    -------
    pandas.DataFrame
        ``lat_deg, lon_deg, alt_km, decimal_year, horizontal_nT, inclination_deg, zone,
        tilt_pitch_deg, tilt_roll_deg, heading_deg (the heading given, or the worst one; NaN
        where every heading is equally bad or none is), residual_field_error_deg,
        model_uncertainty_deg, tilt_error_deg, slaving_on, slaving_drift_deg,
        slaving_recovery_min, budget_rss_deg, budget_linear_deg, exceeds_limit, dominant_term,
        saturated_by``. ``tilt_error_deg`` is signed (apparent minus true, east positive) for a
        given heading and the magnitude for the worst heading. ``zone`` is the WMM zone
        (:data:`headingref.elements.ZONE_DTYPE`). ``slaving_on`` is False where the bank exceeds
        the slaving cut-out: the gyro then runs free and the tilt error does not reach the
        output (drift 0). ``dominant_term`` (categorical, :data:`TERMS`) is the largest term;
        ``saturated_by`` (categorical, :data:`SATURATION`) says when the budget sits at a
        ceiling so that the manoeuvre no longer changes it: ``slaving_rate`` where the drift is
        the largest term and equals rate x duration (the tilt error is larger still),
        ``residual_field`` where the residual field is at least H (no heading, 180),
        ``model_uncertainty`` where the model term is capped at 180; else ``none``.
    """
    detector, manoeuvre = budget_settings(detector, manoeuvre, **settings)
    f = field_arrays(lat, lon, date, alt_km=alt_km, model=model, allow_extrapolation=allow_extrapolation)
    n = len(f["horizontal_nT"])
    per_place = {"residual_field_nT": detector.residual_field_nT, "heading_deg": heading_deg,
                 **{name: getattr(manoeuvre, name) for name in _MANOEUVRE_FIELDS}}
    for name, value in per_place.items():
        if value is not None and np.size(value) not in (1, n):
            raise InputError(f"{name} has {np.size(value)} values for {n} place(s); give one value, or one per place")
    terms = _budget(f["horizontal_nT"], f["inclination_deg"], f["declination_uncertainty_deg"], detector, manoeuvre,
                    heading_deg)
    columns = {name: f[name] for name in ("lat_deg", "lon_deg", "alt_km", "decimal_year", "horizontal_nT", "inclination_deg")}
    columns["zone"] = pd.Categorical.from_codes(f["zone_code"], dtype=ZONE_DTYPE)
    for name, value in terms.items():
        value = np.broadcast_to(np.ravel(value) if np.ndim(value) else value, (n,))
        columns[name] = pd.Categorical.from_codes(value, dtype=_CODED[name]) if name in _CODED else value
    return pd.DataFrame(columns)


def heading_error_grid(
    area: Any,
    date: Any,
    *,
    resolution_deg: float = 0.5,
    alt_km: float = 0.0,
    heading_deg: float | None = None,
    detector: DetectorSettings | None = None,
    manoeuvre: Manoeuvre | None = None,
    model=None,
    allow_extrapolation: bool = False,
    **settings: Any,
):
    """The error budget as a map (one date), an xarray Dataset.

    ``area`` is ``'north'``/``'south'`` or ``(lat_min, lat_max, lon_min, lon_max)`` as for
    :func:`headingref.weak_field.zones`; settings as for :func:`heading_error` (one value each).

    - A polar cap is computed on a square polar stereographic grid
      (:func:`headingref.geogrid.cap_stereo_grid`, the projection of
      :mod:`headingref.plots.basemap`) with dims ``(y, x)`` in metres, spacing ``resolution_deg``
      degrees of latitude, out to the cap's edge (:data:`headingref.geogrid.CAPS`); points
      beyond the edge are NaN. 2-D ``lat``/``lon`` coordinates. The area beyond the limit is the
      sum of the cells' ground areas.
    - A region is computed on its latitude-longitude grid (dims ``(lat, lon)``); the area is that
      of the limit contour's polygons (geodesic on WGS84,
      :meth:`pyproj.Geod.polygon_area_perimeter`).

    Variables: ``horizontal_nT``, ``inclination_deg``, ``declination_uncertainty_deg`` and the
    budget terms of :func:`heading_error` (``dominant_term`` and ``saturated_by`` as int8 codes
    with CF ``flag_values``/``flag_meanings``). ``attrs``: ``area_exceeding_limit_km2`` (where
    the root-sum-square budget exceeds ``limit_deg``), ``saturated_share_beyond_limit`` (the
    share of that area where the budget is saturated, 0..1) and ``saturated_by`` (the term
    saturating most of it, or ``none``), and every setting used.
    """
    import xarray as xr

    detector, manoeuvre = budget_settings(detector, manoeuvre, **settings)
    for name in _MANOEUVRE_FIELDS:
        if np.ndim(getattr(manoeuvre, name)) != 0:
            raise InputError(f"{name}: a map takes one value")
    if np.ndim(date) != 0 and not isinstance(date, str):
        raise InputError("heading_error_grid takes one date; call it once per date")
    kind, _ = parse_area(area)
    if kind == "region":
        ds = area_grid(area, date, resolution_deg=resolution_deg, alt_km=alt_km, model=model,
                       allow_extrapolation=allow_extrapolation)
        terms = _budget(ds["horizontal_nT"].values, ds["inclination_deg"].values,
                        ds["declination_uncertainty_deg"].values, detector, manoeuvre, heading_deg)
        for name, value in terms.items():
            ds[name] = (("lat", "lon"), np.array(value))
        area_km2 = polygons_area_km2(threshold_polygons(ds, "budget_rss_deg", detector.limit_deg, np.inf))
        cell_km2 = _latlon_cell_km2(ds["lat"].values, ds["lon"].values)
    else:
        x, y, lat, lon, inside, cell_all_km2, lat_in, lon_in, cell_in_km2 = cap_stereo_grid(kind, resolution_deg)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UndefinedDeclinationWarning)  # D at the pole point is not used
            f = field_arrays(lat_in, lon_in, decimal_year(date), alt_km=alt_km, model=model,
                             allow_extrapolation=allow_extrapolation)
        terms = _budget(f["horizontal_nT"], f["inclination_deg"], f["declination_uncertainty_deg"], detector, manoeuvre,
                        heading_deg)
        variables = {}
        for name, values in [*((n, f[n]) for n in ("horizontal_nT", "inclination_deg", "declination_uncertainty_deg")),
                             *terms.items()]:
            fill = False if values.dtype == bool else (-1 if values.dtype == np.int8 else np.nan)
            full = np.full(lat.shape, fill, dtype=values.dtype)
            full[inside] = values
            variables[name] = (("y", "x"), full)
        ds = xr.Dataset(variables, coords={
            "x": ("x", x, {"units": "m"}), "y": ("y", y, {"units": "m"}),
            "lat": (("y", "x"), lat, {"units": "degrees_north"}), "lon": (("y", "x"), lon, {"units": "degrees_east"}),
        }, attrs={"crs": CAPS[kind].proj, "alt_km": float(alt_km), "decimal_year": float(f["decimal_year"][0])})
        area_km2 = float(np.sum(cell_in_km2, where=terms["exceeds_limit"]))
        cell_km2 = cell_all_km2
    for name, dtype in _CODED.items():
        ds[name].attrs.update(flag_values=np.arange(len(dtype.categories), dtype=np.int8),
                              flag_meanings=" ".join(dtype.categories),
                              long_name=f"{name} code (-1 outside the map)")
    beyond = ds["exceeds_limit"].values
    saturated = ds["saturated_by"].values
    weights = np.where(beyond, cell_km2, 0.0)
    total = float(weights.sum())
    shares = [float(weights[saturated == code].sum()) / total if total > 0 else 0.0 for code in range(len(SATURATION))]
    main = int(np.argmax(shares[1:])) + 1
    ds.attrs.update(
        area_kind=kind,
        area_exceeding_limit_km2=area_km2,
        saturated_share_beyond_limit=float(sum(shares[1:])),
        saturated_by=SATURATION[main] if shares[main] > 0 else "none",
        combination="budget_rss_deg = sqrt(residual^2 + model_uncertainty^2 + slaving_drift^2)",
        **{name: float(getattr(detector, name)) for name in _DETECTOR_FIELDS},
        **{name: float(getattr(manoeuvre, name)) for name in _MANOEUVRE_FIELDS},
    )
    if heading_deg is not None:
        ds.attrs["heading_deg"] = float(heading_deg)
    return ds


def _latlon_cell_km2(lats: np.ndarray, lons: np.ndarray) -> np.ndarray:
    """Approximate ground area of the cell round each (lat, lon) node, km^2 (spherical, for shares only)."""
    dlat = np.gradient(lats) if lats.size > 1 else np.ones(1)
    dlon = np.gradient(lons) if lons.size > 1 else np.ones(1)
    row = np.abs(np.cos(np.radians(lats)) * dlat) * (METRES_PER_DEG / 1000.0) ** 2
    return row[:, None] * np.abs(dlon)[None, :]


error_budget_map = heading_error_grid
"""Alias of :func:`heading_error_grid`."""
