"""Compass swing analysis: deviation, coefficients A to E, verdict and correction card.

Sign convention
---------------
Deviation is east positive: an east deviation means compass north lies east of magnetic north,
so the compass reads low and ``magnetic = compass + deviation``. Hence, for each reading,
``deviation_deg = magnetic_heading_deg - compass_reading_deg``, normalised to (-180, 180].

Model
-----
The deviation as a function of the aircraft's *magnetic* heading ``h`` is the classic
five-coefficient curve (Handbook of Magnetic Compass Adjustment, NGA 2004, formerly Pub. 226,
ch. V; the same form in the Admiralty Manual of Navigation)::

    dev(h) = A + B sin h + C cos h + D sin 2h + E cos 2h

- A: constant deviation: misalignment of the compass or its lubber line with the fore-and-aft axis
  (and unsymmetrical horizontal soft iron);
- B, C: semicircular deviation from permanent (hard-iron) magnetism, fore-and-aft (B) and
  athwartships (C); this is what the compensator's magnets remove;
- D, E: quadrantal deviation from magnetism induced in soft iron by the Earth's field.

The coefficients are fitted by linear least squares (:func:`numpy.linalg.lstsq`) to any number of
readings. On the eight cardinal and intercardinal headings the basis functions are orthogonal and
the fit becomes the handbook's approximate-coefficient formulas (:func:`eight_point_coefficients`):
A, D and E identically; B and C identically whenever the deviations follow the five-term curve.
(The handbook's B = (E - W)/2 uses the two cardinal headings only, the least-squares B also the
four intercardinal ones, ``B = [E - W + (NE + SE - SW - NW) sin 45°] / 4``; the two differ by the
third harmonic that the five-term curve leaves out, and the least-squares value is the less noisy.)
Standard errors are
``sqrt(s2 * diag((X^T X)^-1))`` with ``s2 = RSS / (n - p)``; the *inflation* of each coefficient is
its ``sqrt(diag((X^T X)^-1))`` divided by that of an evenly spread swing with the same number of
readings (1 is ideal; headings bunched on one side of the circle give large values).

Why fit against the magnetic heading
------------------------------------
On a compass base the aircraft is placed on known magnetic headings, so the magnetic heading is
the independent variable. The compass then reads ``compass = h - dev(h)``, so the compass heading
to steer for a wanted magnetic heading ``M`` is exactly ``M - dev(M)``: no inversion is needed for
the correction card. The reverse question (which magnetic heading is the aircraft on when the
compass reads ``c``) needs the root of ``h - dev(h) = c``, solved by Newton's method in
:meth:`DeviationCurve.magnetic_from_compass_deg` (unique while ``|d dev/dh| < 1``, i.e. for any
curve with coefficients summing well under about 57 degrees).

Verdict: as measured and after compensation
--------------------------------------------
Two deviations are judged, each against its limit (both 10 degrees by default, 14 CFR 23.1327(a)(2),
25.1327(b), 29.1327(b): "the compensated installation may not have a deviation, in level flight,
greater than 10 degrees on any heading"):

- *as measured*: the deviation observed on each reading, ``magnetic - compass``: what the compass
  shows today. This is the installation's deviation when the swing is a check swing.
- *after compensation*: the deviation left once the compensator removes B and C, ``observed -
  (B sin h + C cos h)`` on each reading, i.e. the A, D and E terms (which a direct-reading
  compensator cannot remove) plus the reading noise. A *prediction*: a check swing after adjusting
  the compensator must confirm it (AC 43.13-1B CHG 1, para. 12-37: the swing compares the
  deviations with those on the deviation card).

``verdict`` uses the basis named by ``verdict_on`` (default ``'as_measured'``: a swing with B = 12
degrees fails until the compass is compensated and swung again); both verdicts are always given.

Methods
-------
``method='least_squares'`` (default) fits any number of readings. ``method='handbook'`` uses the
approximate-coefficient formulas of the Handbook of Magnetic Compass Adjustment (NGA 2004, formerly
Pub. 226, art. 501) on the eight principal headings, ``A = (N+NE+E+SE+S+SW+W+NW)/8``,
``B = (E - W)/2``, ``C = (N - S)/2``, ``D = (NE + SW - SE - NW)/4``, ``E = (N + S - E - W)/4``, or,
with readings on the four cardinal headings only, the same with ``A = (N+E+S+W)/4`` and no D. Both
results are computed whenever the readings include those headings and are shown side by side
(:attr:`SwingAnalysis.comparison`).

Public API
----------
:func:`deviation_from_readings`, :func:`fit_deviation`, :func:`eight_point_coefficients`,
:func:`four_point_coefficients`, :func:`handbook_coefficients`, :func:`analyse_swing`,
:func:`read_swing_csv`, :func:`correction_card`, :func:`card_html`, :func:`base_link`, :func:`swing_from_scenario`,
:class:`DeviationCurve`, :class:`DeviationFit`, :class:`SwingAnalysis`, :class:`CardDetails`,
:data:`DEFAULT_LIMIT_DEG`, :data:`COEFFICIENT_MEANINGS`, :data:`COMPASS_POINTS_DEG`.

References
----------
.. [1] National Geospatial-Intelligence Agency, *Handbook of Magnetic Compass Adjustment*
   (2004; formerly Pub. No. 226), chapters III-V (no DOI).
.. [2] U.S. Code of Federal Regulations, Title 14, sections 23.1327, 25.1327 and 29.1327,
   magnetic direction indicator (no DOI).

>>> import numpy as np
>>> from headingref.swing import analyse_swing
>>> headings = np.arange(0, 360, 45.0)
>>> curve_dev = 1.0 + 2.0 * np.sin(np.radians(headings))
>>> result = analyse_swing(headings, headings - curve_dev)
>>> round(result.curve.A_deg, 6), round(result.curve.B_deg, 6)
(1.0, 2.0)
>>> result.verdict, result.verdict_basis
('pass', 'as_measured')
>>> result.card.steer_compass.iloc[3]  # for magnetic 090 steer compass 087
'087'
"""

from __future__ import annotations

import html
import math
import os
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .compass_base import base_upkeep, read_sites_csv
from .errors import DataQualityWarning, InputError
from .headings import format_heading, format_variation, normalize_heading, parse_variation, wrap_angle
from .io import read_table
from .notices import CAUTION
from .units import NUMBER_HELP, decimal_year, parse_number, timestamp_from_decimal_year

__all__ = [
    "COEFFICIENT_MEANINGS",
    "COMPASS_POINTS_DEG",
    "DEFAULT_LIMIT_DEG",
    "CardDetails",
    "DeviationCurve",
    "DeviationFit",
    "SwingAnalysis",
    "analyse_swing",
    "base_link",
    "card_html",
    "correction_card",
    "deviation_from_readings",
    "eight_point_coefficients",
    "fit_deviation",
    "four_point_coefficients",
    "handbook_coefficients",
    "read_swing_csv",
    "swing_from_scenario",
]

DEFAULT_LIMIT_DEG = 10.0
"""Largest deviation allowed for a compensated direct-reading magnetic compass, degrees.

14 CFR 23.1327(a)(2), 25.1327(b) and 29.1327(b): "The compensated installation may not have a
deviation, in level flight, greater than 10 degrees on any heading." EASA CS 25.1327(b) carries
the same figure (from memory). Remote-indicating systems are held to tighter limits set by their
manufacturer: pass ``limit_deg``.
"""

MAX_PLAUSIBLE_DEVIATION_DEG = 30.0
"""A reading further than this from its heading is taken as a typing error (common practice)."""

INFLATION_WARN = 2.0
"""Warn when a coefficient's standard error is more than this many times that of an evenly spread
swing of the same size (our threshold: the coefficient then carries four times the variance)."""

DEFAULT_CARD_HEADINGS_DEG = tuple(float(h) for h in range(0, 360, 30))
"""Card headings every 30 degrees: 14 CFR 23.1547(d) asks for calibration readings in magnetic
headings "in not more than 30 degree increments" (25.1547(d): 45 degrees)."""

VERDICT_BASES = ("as_measured", "after_compensation")
"""What the verdict judges: the deviation as measured, or the residual once B and C are removed."""

METHODS = ("least_squares", "handbook")
"""How the coefficients are found: least squares on any readings, or the handbook's formulas."""

COMPASS_POINTS_DEG = {
    name: 22.5 * i
    for i, name in enumerate(
        ("N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE", "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW")
    )
}
"""The sixteen compass points as magnetic headings, degrees (N 000, NNE 022.5, ..., NNW 337.5)."""

HANDBOOK_MATCH_DEG = 0.5
"""A reading counts as 'on' a principal heading for the handbook formulas within this, degrees
(the aircraft is placed on the base's lines; our threshold)."""

METHODS_DIFFER_DEG = 0.05
"""Least-squares and handbook coefficients 'differ' (both shown) by more than this, degrees: half
the 0.1 degree a card or worksheet prints (our threshold)."""

COEFFICIENT_NAMES = ("A", "B", "C", "D", "E")

COEFFICIENT_MEANINGS = {
    # Handbook of Magnetic Compass Adjustment (NGA 2004, formerly Pub. 226), ch. III-V and fig. 318.
    "A": "constant: compass or lubber-line misalignment (and unsymmetrical soft iron)",
    "B": "semicircular, sin h: permanent (hard-iron) magnetism fore and aft",
    "C": "semicircular, cos h: permanent (hard-iron) magnetism athwartships",
    "D": "quadrantal, sin 2h: induced (soft-iron) magnetism, symmetrical arrangements",
    "E": "quadrantal, cos 2h: induced (soft-iron) magnetism, unsymmetrical arrangements",
}


def _wrap180(angle_deg) -> np.ndarray:
    """Normalise to (-180, 180], always as an array."""
    return np.asarray(wrap_angle(np.asarray(angle_deg, dtype=np.float64)))


def _wrap360(angle_deg) -> np.ndarray:
    """Normalise to [0, 360), always as an array."""
    return np.asarray(normalize_heading(np.asarray(angle_deg, dtype=np.float64)))


def _basis(heading_deg: np.ndarray, names: Sequence[str]) -> np.ndarray:
    h = np.radians(np.asarray(heading_deg, dtype=np.float64))
    columns = {
        "A": np.ones_like(h),
        "B": np.sin(h),
        "C": np.cos(h),
        "D": np.sin(2.0 * h),
        "E": np.cos(2.0 * h),
    }
    return np.column_stack([columns[name] for name in names])


def _three_digits(heading_deg: float) -> str:
    return format_heading(float(heading_deg))


@dataclass(frozen=True)
class DeviationCurve:
    """A fitted deviation curve ``dev(h) = A + B sin h + C cos h + D sin 2h + E cos 2h``.

    All values in degrees, deviation east positive, ``h`` the magnetic heading in degrees.
    Accepted wherever headingref wants a deviation model (it has :meth:`deviation_deg`).
    """

    A_deg: float = 0.0
    B_deg: float = 0.0
    C_deg: float = 0.0
    D_deg: float = 0.0
    E_deg: float = 0.0

    def coefficients(self) -> dict[str, float]:
        """The five coefficients as ``{'A': ..., ..., 'E': ...}`` in degrees."""
        return {name: getattr(self, f"{name}_deg") for name in COEFFICIENT_NAMES}

    def deviation_deg(self, magnetic_heading_deg):
        """Deviation (degrees, east positive) on the given magnetic heading(s)."""
        h = np.asarray(magnetic_heading_deg, dtype=np.float64)
        values = _basis(h.ravel(), COEFFICIENT_NAMES) @ np.array(list(self.coefficients().values()))
        return float(values[0]) if h.ndim == 0 else values.reshape(h.shape)

    def slope_per_deg(self, magnetic_heading_deg):
        """d(dev)/dh, degrees of deviation per degree of heading."""
        h = np.radians(np.asarray(magnetic_heading_deg, dtype=np.float64))
        c = self.coefficients()
        slope = c["B"] * np.cos(h) - c["C"] * np.sin(h) + 2 * c["D"] * np.cos(2 * h) - 2 * c["E"] * np.sin(2 * h)
        return np.radians(slope)

    def compass_from_magnetic_deg(self, magnetic_heading_deg):
        """Compass heading (what the compass reads) on a magnetic heading: ``h - dev(h)``, [0, 360).

        Exact: the curve is a function of the magnetic heading.
        """
        out = _wrap360(np.asarray(magnetic_heading_deg, dtype=np.float64) - self.deviation_deg(magnetic_heading_deg))
        return float(out) if np.ndim(out) == 0 else out

    def magnetic_from_compass_deg(self, compass_heading_deg, tol_deg: float = 1e-12):
        """Magnetic heading when the compass reads ``compass_heading_deg``: root of ``h - dev(h) = c``.

        Newton's method started at ``c + dev(c)``. Raises :class:`InputError` if the curve is so
        steep (``|d dev/dh| >= 1`` somewhere) that one compass reading fits several headings.
        """
        grid = np.arange(0.0, 360.0, 0.5)
        if np.max(np.abs(self.slope_per_deg(grid))) >= 0.95:
            raise InputError(
                "deviation curve is too steep to invert (|d dev/dh| reaches 0.95): one compass reading "
                "would fit more than one magnetic heading; check the coefficients"
            )
        c = np.asarray(compass_heading_deg, dtype=np.float64)
        h = c + np.asarray(self.deviation_deg(c))
        for _ in range(50):
            step = _wrap180(h - self.deviation_deg(h) - c) / (1.0 - self.slope_per_deg(h))
            h = h - step
            if np.all(np.abs(step) < tol_deg):
                break
        out = _wrap360(h)
        return float(out) if np.ndim(out) == 0 else out

    def without_semicircular(self) -> DeviationCurve:
        """The curve after a compensator has removed B and C."""
        return DeviationCurve(self.A_deg, 0.0, 0.0, self.D_deg, self.E_deg)

    def max_abs_deg(self) -> tuple[float, float]:
        """Largest |deviation| of the curve over the circle (0.1 degree sampling): (value, heading)."""
        grid = np.arange(0.0, 360.0, 0.1)
        values = np.abs(self.deviation_deg(grid))
        i = int(np.argmax(values))
        return float(values[i]), float(grid[i])


def deviation_from_readings(magnetic_heading_deg, compass_reading_deg) -> np.ndarray:
    """Deviation = magnetic heading - compass reading, degrees east positive, in (-180, 180]."""
    return _wrap180(np.asarray(magnetic_heading_deg, dtype=np.float64) - np.asarray(compass_reading_deg, dtype=np.float64))


def _degrees(values, name: str) -> np.ndarray:
    """``values`` as a 1-D float array, or InputError naming the argument (never a numpy error)."""
    if isinstance(values, (str, bytes)):
        raise InputError(f"{name} {values!r}: give a sequence of numbers of degrees, not text")
    try:
        arr = np.asarray(values, dtype=np.float64).ravel()
    except (TypeError, ValueError):
        shown = repr(values)
        raise InputError(f"{name} {shown[:60]}: give a sequence of numbers of degrees") from None
    return arr


def _finite_number(value, name: str) -> float:
    """A real finite number or InputError naming the argument (NaN would switch a check off)."""
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise InputError(f"{name} {value!r}: give a number of degrees")
    if not math.isfinite(float(value)):
        raise InputError(f"{name} {value!r}: give a finite number of degrees (NaN or infinity would switch the check off)")
    return float(value)


def _choice(value, name: str, choices: Sequence[str]) -> str:
    if not isinstance(value, str) or value not in choices:
        raise InputError(f"{name} {value!r}: give one of {', '.join(choices)}")
    return value


def eight_point_coefficients(deviations_deg: Sequence[float]) -> dict[str, float]:
    """The classic approximate coefficients from deviations on the eight principal headings.

    Parameters
    ----------
    deviations_deg : sequence of 8 floats
        Deviations (east positive) on N, NE, E, SE, S, SW, W, NW (000, 045, ..., 315).

    Returns
    -------
    dict with keys 'A'..'E', degrees. Formulas of the Handbook of Magnetic Compass Adjustment
    (NGA 2004, formerly Pub. 226), art. 501: A = mean of the eight; B = (E - W)/2;
    C = (N - S)/2; D = (NE + SW - SE - NW)/4; E = (N + S - E - W)/4.
    """
    d = _degrees(deviations_deg, "deviations_deg")
    if d.shape != (8,) or not np.all(np.isfinite(d)):
        raise InputError("eight-point coefficients need 8 finite deviations on N, NE, E, SE, S, SW, W, NW")
    n, ne, e, se, s, sw, w, nw = d
    return {
        "A": float(d.sum() / 8.0),
        "B": float((e - w) / 2.0),
        "C": float((n - s) / 2.0),
        "D": float((ne + sw - se - nw) / 4.0),
        "E": float((n + s - e - w) / 4.0),
    }


def four_point_coefficients(deviations_deg: Sequence[float]) -> dict[str, float]:
    """The approximate coefficients from deviations on the four cardinal headings N, E, S, W.

    The eight-point formulas of :func:`eight_point_coefficients` (NGA 2004, formerly Pub. 226,
    art. 501) with only the cardinal headings: ``A = (N + E + S + W)/4``, ``B = (E - W)/2``, ``C = (N - S)/2``, ``E = (N + S - E - W)/4``;
    D cannot be found (sin 2h is zero on every cardinal heading) and is returned as 0.
    """
    d = _degrees(deviations_deg, "deviations_deg")
    if d.shape != (4,) or not np.all(np.isfinite(d)):
        raise InputError("four-point coefficients need 4 finite deviations on N, E, S, W")
    n, e, s_, w = d
    return {
        "A": float(d.sum() / 4.0),
        "B": float((e - w) / 2.0),
        "C": float((n - s_) / 2.0),
        "D": 0.0,
        "E": float((n + s_ - e - w) / 4.0),
    }


def handbook_coefficients(magnetic_heading_deg, deviation_deg) -> tuple[dict[str, float], str] | None:
    """The handbook's approximate coefficients from readings on the principal headings.

    Uses :func:`eight_point_coefficients` when every one of N, NE, ..., NW carries a reading
    (within :data:`HANDBOOK_MATCH_DEG`), else :func:`four_point_coefficients` when N, E, S and W do;
    several readings on one heading are averaged. Readings on other headings are not used.
    Returns ``(coefficients, 'eight-point' or 'four-point')`` or None when neither set is complete.
    """
    h = _wrap360(_degrees(magnetic_heading_deg, "magnetic_heading_deg"))
    d = _degrees(deviation_deg, "deviation_deg")
    means = {}
    for k in range(8):
        near = np.abs(_wrap180(h - 45.0 * k)) <= HANDBOOK_MATCH_DEG
        if near.any():
            means[k] = float(np.mean(d[near]))
    if len(means) == 8:
        return eight_point_coefficients([means[k] for k in range(8)]), "eight-point"
    if all(k in means for k in (0, 2, 4, 6)):
        return four_point_coefficients([means[k] for k in (0, 2, 4, 6)]), "four-point"
    return None


@dataclass
class DeviationFit:
    """Result of :func:`fit_deviation`."""

    curve: DeviationCurve
    table: pd.DataFrame  # coefficient, value_deg, standard_error_deg, inflation, determined, meaning
    condition_number: float
    rms_residual_deg: float
    dof: int


def _labels(n: int, rows: Sequence[str] | None) -> list[str]:
    if rows is None:
        return [f"reading {i + 1}" for i in range(n)]
    if isinstance(rows, (str, bytes)) or not hasattr(rows, "__len__") or len(rows) != n:
        raise InputError(f"rows: give one label per reading ({n} labels)")
    return [str(r) for r in rows]


def fit_deviation(
    magnetic_heading_deg,
    deviation_deg,
    coefficients: str = "ABCDE",
) -> DeviationFit:
    """Least-squares fit of the deviation curve to deviations observed on magnetic headings.

    Parameters
    ----------
    magnetic_heading_deg, deviation_deg : array-like of float
        Observations, degrees (deviation east positive).
    coefficients : str
        Which coefficients to fit (subset of 'ABCDE', 'A' always recommended); the others are 0.
        A four-point swing on the cardinal headings determines 'ABCE' only.
    Returns
    -------
    DeviationFit with ``curve`` (:class:`DeviationCurve`), ``table`` (one row per coefficient:
    ``coefficient, value_deg, standard_error_deg, inflation, determined, meaning``),
    ``condition_number`` (2-norm condition number of the design matrix; sqrt(2) for an evenly
    spread swing of 5 or more headings), ``rms_residual_deg`` and ``dof``.

    Warns :class:`DataQualityWarning` when headings are bunched (inflation above
    :data:`INFLATION_WARN`) or there is no redundancy to estimate standard errors.
    """
    if not isinstance(coefficients, str):
        raise InputError(f"coefficients {coefficients!r}: give letters from ABCDE, e.g. 'ABCDE' or 'ABCE'")
    names = [c for c in "ABCDE" if c in coefficients.upper()]
    if not names or len(set(coefficients.upper()) - set("ABCDE")):
        raise InputError(f"coefficients {coefficients!r}: give letters from ABCDE, e.g. 'ABCDE' or 'ABCE'")
    h = _degrees(magnetic_heading_deg, "magnetic_heading_deg")
    d = _degrees(deviation_deg, "deviation_deg")
    if h.shape != d.shape or not (np.all(np.isfinite(h)) and np.all(np.isfinite(d))):
        raise InputError("fit needs one finite magnetic heading per finite deviation, in degrees")
    p = len(names)
    distinct = np.unique(np.round(_wrap360(h), 6))
    if len(h) < p or len(distinct) < p:
        raise InputError(
            f"{len(h)} readings on {len(distinct)} distinct headings cannot determine {p} coefficients "
            f"({''.join(names)}); give readings on at least {p} different headings (8 or 12 evenly spread is usual), "
            f"or fit fewer coefficients"
        )
    X = _basis(h, names)
    solution, _, rank, singular = np.linalg.lstsq(X, d, rcond=None)
    if rank < p:
        _, _, vt = np.linalg.svd(X)
        null = np.abs(vt[-1])
        lost = [names[i] for i in np.flatnonzero(null > 0.3 * null.max())]
        raise InputError(
            f"headings {', '.join(_three_digits(x) for x in distinct)} cannot separate coefficient(s) {', '.join(lost)}; "
            f"add headings between them, or fit fewer coefficients"
        )
    residual = d - X @ solution
    dof = len(h) - p
    xtx_inv = np.linalg.inv(X.T @ X)
    ideal = np.array([1.0 / len(h) if name == "A" else 2.0 / len(h) for name in names])
    inflation = np.sqrt(np.diag(xtx_inv) / ideal)
    if dof > 0:
        s2 = float(residual @ residual) / dof
        se = np.sqrt(s2 * np.diag(xtx_inv))
    else:
        se = np.full(p, np.nan)
        warnings.warn(
            f"{len(h)} readings for {p} coefficients: no redundancy, the fit passes through every reading and "
            "standard errors cannot be estimated; swing on more headings",
            DataQualityWarning,
            stacklevel=2,
        )
    condition = float(singular[0] / singular[-1])
    if inflation.max() > INFLATION_WARN:
        gaps = np.diff(np.concatenate([distinct, [distinct[0] + 360.0]]))
        worst = names[int(np.argmax(inflation))]
        after = distinct[(int(np.argmax(gaps)) + 1) % len(distinct)]
        warnings.warn(
            f"headings bunched on one side of the circle ({len(distinct)} headings from {_three_digits(after)} "
            f"clockwise over {360.0 - gaps.max():.0f} deg, largest gap {gaps.max():.0f} deg): coefficients "
            f"ill-determined, condition number {condition:.1f}, standard error of {worst} "
            f"{inflation.max():.1f} times that of an evenly spread swing; swing on headings all round the circle",
            DataQualityWarning,
            stacklevel=2,
        )
    values = dict.fromkeys(COEFFICIENT_NAMES, 0.0)
    values.update({name: float(v) for name, v in zip(names, solution, strict=True)})
    table = pd.DataFrame(
        {
            "coefficient": list(COEFFICIENT_NAMES),
            "value_deg": [values[n] for n in COEFFICIENT_NAMES],
            "standard_error_deg": [float(se[names.index(n)]) if n in names else np.nan for n in COEFFICIENT_NAMES],
            "inflation": [float(inflation[names.index(n)]) if n in names else np.nan for n in COEFFICIENT_NAMES],
            "determined": [n in names for n in COEFFICIENT_NAMES],
            "meaning": [COEFFICIENT_MEANINGS[n] for n in COEFFICIENT_NAMES],
        }
    )
    curve = DeviationCurve(*(values[n] for n in COEFFICIENT_NAMES))
    rms = float(np.sqrt(np.mean(residual**2)))
    return DeviationFit(curve=curve, table=table, condition_number=condition, rms_residual_deg=rms, dof=dof)


def correction_card(curve: DeviationCurve, magnetic_headings_deg: Sequence[float] | None = None) -> pd.DataFrame:
    """Compass heading to steer for each wanted magnetic heading.

    ``compass = M - dev(M)`` (exact, the curve being a function of the magnetic heading M).

    Returns a DataFrame with ``for_magnetic`` and ``steer_compass`` (three-digit strings as printed
    on a card), ``magnetic_heading_deg``, ``deviation_deg`` and ``compass_heading_deg``.
    """
    wanted = _degrees(DEFAULT_CARD_HEADINGS_DEG if magnetic_headings_deg is None else magnetic_headings_deg, "card headings")
    if len(wanted) == 0 or not np.all(np.isfinite(wanted)):
        raise InputError("card headings: give a list of finite magnetic headings in degrees, e.g. 0,30,60,...,330")
    wanted = _wrap360(wanted)
    deviation = np.asarray(curve.deviation_deg(wanted))
    compass = _wrap360(wanted - deviation)
    return pd.DataFrame(
        {
            "for_magnetic": [_three_digits(x) for x in wanted],
            "steer_compass": [_three_digits(x) for x in compass],
            "magnetic_heading_deg": wanted,
            "deviation_deg": deviation,
            "compass_heading_deg": compass,
        }
    )


@dataclass
class SwingAnalysis:
    """Everything a swing yields; see :func:`analyse_swing`.

    Both verdicts are kept: ``verdict_as_measured`` (largest |observed deviation|,
    ``max_deviation_deg``, against ``limit_deg``) and ``verdict_after_compensation`` (largest
    |residual after B and C|, ``max_residual_deg``, against ``compensated_limit_deg``);
    ``verdict`` is the one named by ``verdict_basis``.
    """

    curve: DeviationCurve
    coefficients: pd.DataFrame
    readings: pd.DataFrame
    card: pd.DataFrame
    condition_number: float
    rms_fit_residual_deg: float
    max_residual_deg: float
    max_residual_heading_deg: float
    max_residual_row: str
    limit_deg: float
    verdict: str
    max_curve_residual_deg: float = math.nan
    notes: list[str] = field(default_factory=list)
    max_deviation_deg: float = math.nan
    max_deviation_heading_deg: float = math.nan
    max_deviation_row: str = ""
    compensated_limit_deg: float = DEFAULT_LIMIT_DEG
    verdict_as_measured: str = ""
    verdict_after_compensation: str = ""
    verdict_basis: str = "as_measured"
    method: str = "least_squares"
    handbook_formula: str = ""
    comparison: pd.DataFrame | None = None
    card_after_compensation: bool = False

    @property
    def methods_differ(self) -> bool:
        """True when least-squares and handbook coefficients differ by more than METHODS_DIFFER_DEG."""
        if self.comparison is None:
            return False
        return bool(np.nanmax(np.abs(self.comparison.difference_deg.to_numpy())) > METHODS_DIFFER_DEG)

    def verdict_text(self) -> str:
        """Two lines stating both deviations, their limits and which one the verdict uses."""
        used = "as measured" if self.verdict_basis == "as_measured" else "after compensation"
        return (
            f"deviation as measured: largest {self.max_deviation_deg:.1f}° on {_three_digits(self.max_deviation_heading_deg)} "
            f"(limit {self.limit_deg:g}°): {self.verdict_as_measured.upper()}\n"
            f"after compensation (B and C removed; A, D, E kept): largest {self.max_residual_deg:.1f}° on "
            f"{_three_digits(self.max_residual_heading_deg)} (limit {self.compensated_limit_deg:g}°): "
            f"{self.verdict_after_compensation.upper()}\n"
            f"verdict ({used}): {self.verdict.upper()}"
        )

    def card_terms(self) -> str:
        """The terms the card's curve holds, e.g. 'A +1.0°, D +5.0°, E +1.5° (B and C removed)'."""
        c = self.curve.coefficients()
        kept = "ADE" if self.card_after_compensation else "ABCDE"
        text = ", ".join(f"{n} {c[n]:+.1f}°" for n in kept)
        if self.card_after_compensation:
            return text + " (B and C removed by the compensator: a prediction until a check swing confirms it)"
        return text + " (as swung)"

    def summary_row(self) -> pd.DataFrame:
        """One-row table: A_deg..E_deg, verdict, its basis and both deviations, then standard errors and more."""
        row = {f"{n}_deg": self.curve.coefficients()[n] for n in COEFFICIENT_NAMES}
        row.update(
            {
                "verdict": self.verdict,
                "verdict_basis": self.verdict_basis,
                "max_deviation_deg": self.max_deviation_deg,
                "limit_deg": self.limit_deg,
                "verdict_as_measured": self.verdict_as_measured,
                "max_residual_deg": self.max_residual_deg,
                "compensated_limit_deg": self.compensated_limit_deg,
                "verdict_after_compensation": self.verdict_after_compensation,
                "method": self.method,
            }
        )
        for n, se in zip(COEFFICIENT_NAMES, self.coefficients.standard_error_deg, strict=True):
            row[f"{n}_standard_error_deg"] = se
        row.update(
            {
                "max_deviation_heading_deg": self.max_deviation_heading_deg,
                "max_residual_heading_deg": self.max_residual_heading_deg,
                "max_curve_residual_deg": self.max_curve_residual_deg,
                "rms_fit_residual_deg": self.rms_fit_residual_deg,
                "condition_number": self.condition_number,
                "n_readings": len(self.readings),
            }
        )
        return pd.DataFrame([row])


def _check_readings(h: np.ndarray, c: np.ndarray, labels: list[str], max_plausible: float) -> np.ndarray:
    """Bounds and plausibility of the readings; returns the deviations (east positive)."""
    for values, what in ((h, "magnetic heading"), (c, "compass reading")):
        # the same -360..720 window the CSV reader applies: larger values are typing errors, and
        # reducing 1e308 modulo 360 would only hide them
        bad = np.flatnonzero(~(np.isfinite(values) & (values >= -360.0) & (values <= 720.0)))
        if len(bad):
            raise InputError(f"{labels[bad[0]]}: {what} {values[bad[0]]!r} is not a number of degrees from -360 to 720")
    dev = deviation_from_readings(_wrap360(h), _wrap360(c))
    far = np.flatnonzero(np.abs(dev) > max_plausible)
    if len(far):
        i = far[0]
        raise InputError(
            f"{labels[i]}: compass reading {_wrap360(c)[i]:g} is {abs(dev[i]):.1f} deg from magnetic heading {_wrap360(h)[i]:g} "
            f"(more than {max_plausible:g} deg), likely a typing error; correct it or raise the plausibility limit"
        )
    return dev


def _duplicate_notes(h: np.ndarray, dev: np.ndarray, labels: list[str]) -> list[str]:
    notes: list[str] = []
    key = np.round(h, 1)
    for value in np.unique(key):
        same = np.flatnonzero(key == value)
        if len(same) > 1:
            spread = float(np.ptp(dev[same]))
            message = (
                f"duplicate heading {_three_digits(value)} on {', '.join(labels[i] for i in same)} "
                f"(deviations differ by {spread:.2f} deg); both kept in the fit"
            )
            notes.append(message)
            warnings.warn(message, DataQualityWarning, stacklevel=3)
    return notes


def _coefficients(h: np.ndarray, dev: np.ndarray, coefficients: str, method: str):
    """(curve used, least-squares fit, handbook coefficients or None, handbook formula name, comparison)."""
    handbook = handbook_coefficients(h, dev)
    if method == "handbook" and handbook is None:
        raise InputError(
            "method 'handbook' needs readings on the eight principal headings N, NE, E, SE, S, SW, W, NW "
            "(or the four cardinal headings N, E, S, W); these readings have neither set"
        )
    if method == "handbook" and handbook[1] == "four-point" and coefficients.upper() == "ABCDE":
        coefficients = "ABCE"  # the least-squares comparison on four cardinals cannot find D either
    fit = fit_deviation(h, dev, coefficients=coefficients)
    if handbook is None:
        return fit.curve, fit, None, "", None
    values, formula = handbook
    lsq = fit.curve.coefficients()
    comparison = pd.DataFrame(
        {
            "coefficient": list(COEFFICIENT_NAMES),
            "least_squares_deg": [lsq[n] for n in COEFFICIENT_NAMES],
            "handbook_deg": [values[n] if (n != "D" or formula == "eight-point") else np.nan for n in COEFFICIENT_NAMES],
        }
    )
    comparison["difference_deg"] = comparison.handbook_deg - comparison.least_squares_deg
    curve = DeviationCurve(*(values[n] for n in COEFFICIENT_NAMES)) if method == "handbook" else fit.curve
    return curve, fit, values, formula, comparison


def analyse_swing(
    magnetic_heading_deg,
    compass_reading_deg,
    *,
    limit_deg: float = DEFAULT_LIMIT_DEG,
    compensated_limit_deg: float | None = None,
    verdict_on: str = "as_measured",
    method: str = "least_squares",
    card_headings_deg: Sequence[float] | None = None,
    coefficients: str = "ABCDE",
    card_after_compensation: bool = False,
    max_plausible_deviation_deg: float = MAX_PLAUSIBLE_DEVIATION_DEG,
    rows: Sequence[str] | None = None,
) -> SwingAnalysis:
    """Analyse a compass swing: deviations, coefficients, both verdicts, correction card.

    Parameters
    ----------
    magnetic_heading_deg : array-like
        The aircraft's magnetic heading on each reading (from the compass base), degrees.
    compass_reading_deg : array-like
        What the compass read, degrees.
    limit_deg : float
        Limit on the largest deviation *as measured*, degrees (default :data:`DEFAULT_LIMIT_DEG`,
        10, 14 CFR 23.1327(a)(2); tighter for remote-indicating systems).
    compensated_limit_deg : float, optional
        Limit on the largest residual *after compensation* (B and C removed), degrees (default:
        ``limit_deg``; the same 14 CFR 23.1327 figure applies to the compensated installation).
    verdict_on : {'as_measured', 'after_compensation'}
        Which deviation ``verdict`` judges (see the module docstring). Both verdicts are returned.
    method : {'least_squares', 'handbook'}
        Coefficients by least squares (default) or by the handbook's eight-point / four-cardinal
        formulas (NGA 2004, formerly Pub. 226, art. 501; needs readings on those headings).
    card_headings_deg : sequence, optional
        Wanted magnetic headings on the card (default 000, 030, ..., 330).
    coefficients : str
        Coefficients to fit by least squares (default all five).
    card_after_compensation : bool
        Make the card from the curve with B and C removed (after the compensator is adjusted; it
        keeps A, D and E) instead of the curve as swung.
    max_plausible_deviation_deg : float
        A reading further than this from its heading is refused as a likely typing error (30).
    rows : sequence of str, optional
        Labels naming each reading in messages.

    Returns
    -------
    SwingAnalysis
        ``readings`` holds per reading: ``row, magnetic_heading_deg, compass_reading_deg,
        deviation_deg, fitted_deg, fit_residual_deg, residual_after_bc_deg`` where the last is the
        observed deviation minus the B and C terms (what remains once the compensator has removed
        them). ``max_deviation_deg`` is the largest |deviation_deg| (as measured) and
        ``max_residual_deg`` the largest |residual_after_bc_deg|; ``verdict_as_measured`` and
        ``verdict_after_compensation`` are ``'pass'`` when within their limits, and ``verdict``
        is the one ``verdict_on`` names. ``max_curve_residual_deg`` is the largest
        |A + D sin 2h + E cos 2h| of the curve over the whole circle, for information.
        ``comparison`` lists least-squares and handbook coefficients when the readings allow both.
    """
    h = _degrees(magnetic_heading_deg, "magnetic_heading_deg")
    c = _degrees(compass_reading_deg, "compass_reading_deg")
    if h.shape != c.shape:
        raise InputError(f"{len(h)} magnetic headings but {len(c)} compass readings; give one pair per reading")
    labels = _labels(len(h), rows)
    limit = _finite_number(limit_deg, "limit_deg")
    compensated = limit if compensated_limit_deg is None else _finite_number(compensated_limit_deg, "compensated_limit_deg")
    for value, name in ((limit, "limit_deg"), (compensated, "compensated_limit_deg")):
        if value <= 0:
            raise InputError(f"{name} {value!r} deg: give a positive number of degrees (10 for a direct-reading compass)")
    plausible = _finite_number(max_plausible_deviation_deg, "max_plausible_deviation_deg")
    if not 0 < plausible <= 180:
        raise InputError(f"max_plausible_deviation_deg {plausible!r}: give a number of degrees above 0, up to 180")
    _choice(verdict_on, "verdict_on", VERDICT_BASES)
    _choice(method, "method", METHODS)
    if not isinstance(coefficients, str):
        raise InputError(f"coefficients {coefficients!r}: give letters from ABCDE, e.g. 'ABCDE' or 'ABCE'")
    dev = _check_readings(h, c, labels, plausible)
    h, c = _wrap360(h), _wrap360(c)
    notes = _duplicate_notes(h, dev, labels)
    curve, fit, _, formula, comparison = _coefficients(h, dev, coefficients, method)
    fitted = np.asarray(curve.deviation_deg(h))
    bc = curve.B_deg * np.sin(np.radians(h)) + curve.C_deg * np.cos(np.radians(h))
    residual_after_bc = dev - bc
    i_res = int(np.argmax(np.abs(residual_after_bc)))
    i_dev = int(np.argmax(np.abs(dev)))
    max_residual, max_deviation = float(abs(residual_after_bc[i_res])), float(abs(dev[i_dev]))
    verdicts = {
        "as_measured": "pass" if max_deviation <= limit else "fail",
        "after_compensation": "pass" if max_residual <= compensated else "fail",
    }
    if formula:
        notes.append(
            f"handbook {formula} formulas (Pub. 226 art. 501) use only the readings on "
            f"{'N, NE, E, SE, S, SW, W, NW' if formula == 'eight-point' else 'N, E, S, W'}"
        )
    table = fit.table.copy()
    if method == "handbook":
        table["value_deg"] = [curve.coefficients()[n] for n in COEFFICIENT_NAMES]
    readings = pd.DataFrame(
        {
            "row": labels,
            "magnetic_heading_deg": h,
            "compass_reading_deg": c,
            "deviation_deg": dev,
            "fitted_deg": fitted,
            "fit_residual_deg": dev - fitted,
            "residual_after_bc_deg": residual_after_bc,
        }
    )
    card_curve = curve.without_semicircular() if card_after_compensation else curve
    card = correction_card(card_curve, card_headings_deg)
    return SwingAnalysis(
        curve=curve,
        coefficients=table,
        readings=readings,
        card=card,
        condition_number=fit.condition_number,
        rms_fit_residual_deg=float(np.sqrt(np.mean((dev - fitted) ** 2))),
        max_residual_deg=max_residual,
        max_residual_heading_deg=float(h[i_res]),
        max_residual_row=labels[i_res],
        limit_deg=limit,
        verdict=verdicts[verdict_on],
        max_curve_residual_deg=curve.without_semicircular().max_abs_deg()[0],
        notes=notes,
        max_deviation_deg=max_deviation,
        max_deviation_heading_deg=float(h[i_dev]),
        max_deviation_row=labels[i_dev],
        compensated_limit_deg=compensated,
        verdict_as_measured=verdicts["as_measured"],
        verdict_after_compensation=verdicts["after_compensation"],
        verdict_basis=verdict_on,
        method=method,
        handbook_formula=formula,
        comparison=comparison,
        card_after_compensation=bool(card_after_compensation),
    )


# ------------------------------------------------------------------------------ reading a swing CSV

HEADING_COLUMNS = ("magnetic_heading_deg", "magnetic_heading", "magnetic_deg", "magnetic", "mag_heading", "mag_hdg",
                   "heading_deg", "heading", "hdg", "mh")
COMPASS_COLUMNS = ("compass_reading_deg", "compass_reading", "compass_heading_deg", "compass_heading", "compass_deg",
                   "compass", "reading", "compass_hdg", "ch")
DEVIATION_COLUMNS = ("deviation_deg", "deviation", "dev")
"""Accepted column names of a swing CSV (matched ignoring case, spaces, hyphens and dots)."""
MAPPED_COLUMNS = ("magnetic_heading_deg", "compass_reading_deg", "deviation_deg")
"""The names a swing CSV's ``columns`` mapping may map onto (heading; compass reading or deviation)."""


def _column_key(name: str) -> str:
    return "_".join(name.strip().lower().replace("-", " ").replace(".", " ").split())


def _find_column(header: Sequence[str], accepted: Sequence[str], label: str, what: str) -> str | None:
    found = [name for name in header if _column_key(name) in accepted]
    if len(found) > 1:
        raise InputError(f"{label}: columns {', '.join(found)} all name the {what}; keep one")
    return found[0] if found else None


def _heading_cell(cell: str, where: str, what: str, points: bool) -> float:
    """A heading cell: a plain ASCII decimal number of degrees (:func:`headingref.units.parse_number`),
    or (``points``) a compass point N..NNW."""
    text = cell.strip()
    if points and text.upper() in COMPASS_POINTS_DEG:
        return COMPASS_POINTS_DEG[text.upper()]
    try:
        value = parse_number(text, what)
    except InputError:
        accepted = f"degrees as {NUMBER_HELP}" + (", or a compass point (N, NNE, NE, ..., NNW)" if points else "")
        raise InputError(f"{where}: {what} {cell!r} is not understood; give {accepted}") from None
    if not -360.0 <= value <= 720.0:
        raise InputError(f"{where}: {what} {cell!r} is outside -360 to 720 deg")
    return value


def read_swing_csv(path: str | os.PathLike, columns=None) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Read swing readings: a magnetic heading column and a compass reading (or deviation) column.

    Column names are matched ignoring case, spaces and hyphens: the heading from
    :data:`HEADING_COLUMNS` (``magnetic_heading_deg``, ``heading``, ``mh``, ...), and either the
    compass reading from :data:`COMPASS_COLUMNS` (``compass_reading_deg``, ``compass``, ...) or the
    deviation from :data:`DEVIATION_COLUMNS` (``deviation``; east positive or with a letter,
    ``10.5E``, ``W6.8``), from which ``compass = magnetic - deviation``. Headings are plain
    degrees (-360 to 720, normalised later) or compass points ``N``, ``NE``, ..., ``NNW``.

    ``columns`` maps the file's own names first (``"magnetic_heading_deg=hdg_m,deviation_deg=dev_e"``,
    :func:`headingref.tables.parse_column_mapping`; accepted names :data:`MAPPED_COLUMNS`): a mapped
    column is taken over any other column whose name fits the same role.

    Returns (magnetic headings, compass readings, row labels such as ``'readings.csv line 4'``).
    """
    from .tables import parse_column_mapping

    mapping = parse_column_mapping(columns, MAPPED_COLUMNS, f"swing readings {os.path.basename(str(path))}: --columns")
    table = read_table(path, required=[], what="swing readings", columns=mapping, accepted=MAPPED_COLUMNS)
    label = f"swing readings {table.attrs['source']}"
    header = list(table.columns)
    heading, compass, deviation = (
        name if name in mapping else _find_column(header, names, label, role)
        for name, names, role in zip(MAPPED_COLUMNS, (HEADING_COLUMNS, COMPASS_COLUMNS, DEVIATION_COLUMNS),
                                     ("magnetic heading", "compass reading", "deviation"), strict=True)
    )
    if (compass in mapping) != (deviation in mapping):  # the mapped one of the two is taken
        compass, deviation = (compass, None) if compass in mapping else (None, deviation)
    if heading is None or (compass is None) == (deviation is None):
        problem = (
            "missing column(s) magnetic_heading_deg" if heading is None
            else "both a compass reading and a deviation column" if compass is not None
            else "missing column(s) compass_reading_deg (or deviation_deg)"
        )
        raise InputError(
            f"{label}: {problem} (found {', '.join(h for h in header if h) or 'none'}); accepted names: heading "
            f"{'/'.join(HEADING_COLUMNS)}; and compass {'/'.join(COMPASS_COLUMNS)} or deviation {'/'.join(DEVIATION_COLUMNS)}"
        )
    magnetic, reading, labels = [], [], []
    for line, record in table.iterrows():
        where = f"{table.attrs['source']} line {line}"
        for name in (heading, compass or deviation):
            if record[name] == "":
                raise InputError(f"{where}: {name} is empty; a value is needed")
        h = _heading_cell(record[heading], where, heading, points=True)
        if compass is not None:
            c = _heading_cell(record[compass], where, compass, points=False)
        else:
            try:
                d = parse_variation(record[deviation])
            except InputError:
                raise InputError(
                    f"{where}: {deviation} {record[deviation]!r} is not understood; give degrees east positive "
                    "(-1.5) or with a letter (1.5W, E3.2)"
                ) from None
            c = h - d
        magnetic.append(h)
        reading.append(c)
        labels.append(where)
    return np.array(magnetic), np.array(reading), labels


# ------------------------------------------------------------------------------ the card as a document


@dataclass(frozen=True)
class CardDetails:
    """Identification printed on the correction card (all text; '' when not given).

    ``conditions`` should say how the swing was made: 14 CFR 23.1547(b)-(c) ask for the calibration
    in level flight with the engines operating and a statement of whether radio receivers were on
    or off. ``base_*`` link the swing to the compass base (see :func:`base_link`).
    """

    aircraft: str = ""
    compass: str = ""
    base: str = ""
    swing_date: str = ""
    conditions: str = ""
    swung_by: str = ""
    base_marked_variation: str = ""
    base_survey_date: str = ""
    base_status: str = ""

    @classmethod
    def make(cls, *, swing_date=None, **text) -> CardDetails:
        """Check and build: text fields must be one-line strings; ``swing_date`` any date (printed YYYY-MM-DD)."""
        clean = {}
        for key, value in text.items():
            if key not in cls.__dataclass_fields__:
                raise InputError(f"card detail {key!r} is not known; accepted: {', '.join(cls.__dataclass_fields__)}")
            if value is None:
                value = ""
            if not isinstance(value, str) or "\n" in value or "\r" in value or len(value) > 200:
                raise InputError(f"card detail {key} {value!r}: give one line of text (up to 200 characters)")
            clean[key] = "".join(ch for ch in value.strip() if ch.isprintable())
        if swing_date not in (None, ""):
            year = float(decimal_year(swing_date))
            clean["swing_date"] = f"{timestamp_from_decimal_year(year).round('s'):%Y-%m-%d}"
        return cls(**clean)


def base_link(bases_csv, base_name: str, swing_date, model=None, allow_extrapolation: bool = False, columns=None) -> dict:
    """The compass base a swing was made on, from a bases CSV (:func:`headingref.compass_base.read_sites_csv`).

    Returns ``name, marked_variation_deg, marked_variation`` (the value marked at the base's latest
    survey: the surveyed value), ``survey_date``, ``resurvey_due_date``, ``overdue`` (due on or
    before the swing date) and ``status`` (one line for the card). Raises InputError when the base is
    not in the file (listing the names there). ``columns`` is the bases CSV's column mapping.
    """
    sites = read_sites_csv(bases_csv, columns=columns)
    chosen = [s for s in sites if s.name == base_name]
    if not chosen:
        raise InputError(f"base {base_name!r} is not in {os.fspath(bases_csv)}; bases there: {', '.join(s.name for s in sites)}")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # overdue is reported in status
        row = base_upkeep(chosen, swing_date, model=model, allow_extrapolation=allow_extrapolation).iloc[0]
    marked = float(row.surveyed_variation_deg)
    due = row.resurvey_due_date or "not within the model's validity"
    if row.overdue:
        status = f"base OVERDUE for resurvey since {due} ({row.resurvey_reason}): the marked variation may be off by more than {row.tolerance_deg:g}°"
    else:
        status = f"base within tolerance ({row.tolerance_deg:g}°) on the swing date; resurvey due {due}"
    return {
        "name": base_name,
        "marked_variation_deg": marked,
        "marked_variation": format_variation(marked),
        "survey_date": row.survey_date,
        "resurvey_due_date": row.resurvey_due_date,
        "overdue": bool(row.overdue),
        "status": status,
    }


_CARD_CSS = """
body { font-family: "DejaVu Sans", Arial, sans-serif; margin: 2em; color: #111; }
h1 { font-size: 1.4em; margin-bottom: 0.2em; }
table { border-collapse: collapse; margin: 0.8em 0; }
th, td { border: 1px solid #444; padding: 0.25em 0.6em; text-align: center; }
table.ident th, table.ident td { text-align: left; }
p.terms, p.verdict { margin: 0.3em 0; }
.fail { font-weight: bold; }
.sign { margin-top: 2.5em; display: flex; gap: 3em; }
.sign div { border-top: 1px solid #111; min-width: 14em; padding-top: 0.2em; }
.caution { font-size: 0.8em; color: #444; margin-top: 2em; }
@media print {
  @page { size: A5 landscape; margin: 12mm; }
  body { margin: 0; font-size: 10pt; }
  .noprint { display: none; }
}
"""


def _card_ident_rows(details: CardDetails, analysis: SwingAnalysis) -> list[tuple[str, str]]:
    base = details.base
    if details.base_marked_variation:
        base += f" (marked variation {details.base_marked_variation}, surveyed {details.base_survey_date})"
    method = "least squares" if analysis.method == "least_squares" else f"handbook {analysis.handbook_formula} formulas"
    conditions = details.conditions or "not stated (14 CFR 23.1547(c): state whether radios were on or off)"
    rows = [
        ("Aircraft", details.aircraft or "not stated"),
        ("Compass (serial)", details.compass or "not stated"),
        ("Compass base", base or "not stated"),
        ("Swing date", details.swing_date or "not stated"),
        ("Conditions", conditions),
        ("Coefficients", f"{method}, {len(analysis.readings)} readings"),
    ]
    if details.base_status:
        rows.append(("Base status", details.base_status))
    return rows


def card_html(analysis: SwingAnalysis, details: CardDetails | None = None, title: str = "Compass correction card") -> str:
    """The correction card as a print-ready HTML page (CSS ``@media print``, A5 landscape).

    Identification (aircraft, compass serial, base with its marked variation and survey date, swing
    date, conditions), the card (for magnetic / steer compass, every card heading), the terms the
    card's curve keeps, both verdicts and which one decides, and a signature line for the person
    who swung the compass. All user text is HTML-escaped.
    """
    details = details or CardDetails()
    esc = html.escape
    ident = "".join(f"<tr><th>{esc(k)}</th><td>{esc(v)}</td></tr>" for k, v in _card_ident_rows(details, analysis))
    card = analysis.card
    heads = "".join(f"<td>{esc(x)}</td>" for x in card.for_magnetic)
    steer = "".join(f"<td><b>{esc(x)}</b></td>" for x in card.steer_compass)
    verdict_lines = "".join(
        f'<p class="verdict{" fail" if "FAIL" in line else ""}">{esc(line)}</p>' for line in analysis.verdict_text().splitlines()
    )
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{esc(title)}</title><style>{_CARD_CSS}</style></head>
<body>
<h1>{esc(title)}</h1>
<table class="ident">{ident}</table>
<table class="card"><tr><th>For magnetic</th>{heads}</tr><tr><th>Steer compass</th>{steer}</tr></table>
<p class="terms">Card curve: {esc(analysis.card_terms())}; deviation east positive, magnetic = compass + deviation.</p>
{verdict_lines}
<div class="sign"><div>Swung by: {esc(details.swung_by)}</div><div>Signature</div><div>Date</div></div>
<p class="caution">{esc(CAUTION)}</p>
</body></html>
"""


def swing_from_scenario(section: dict, bases_file=None, model=None, allow_extrapolation: bool = False,
                        bases_columns=None) -> tuple[SwingAnalysis, CardDetails]:
    """Run the ``[swing]`` section of a scenario: the analysis and the card's identification.

    ``section`` as :attr:`headingref.scenario.Scenario.swing` (keys ``file, base, limit_deg,
    compensated_limit_deg, verdict_on, method, card_after_compensation, date, aircraft, compass,
    swung_by, conditions``); ``bases_file`` the ``[compass_bases]`` CSV, which links the card to the
    base's marked variation and survey date when ``base`` names a base in it (``bases_columns``:
    that CSV's column mapping). The section's ``columns`` maps the readings' columns.
    """
    magnetic, compass, labels = read_swing_csv(section["file"], columns=section.get("columns"))
    analysis = analyse_swing(
        magnetic,
        compass,
        limit_deg=section["limit_deg"],
        compensated_limit_deg=section.get("compensated_limit_deg"),
        verdict_on=section.get("verdict_on", "as_measured"),
        method=section.get("method", "least_squares"),
        card_after_compensation=bool(section.get("card_after_compensation", False)),
        rows=labels,
    )
    link = {}
    if bases_file is not None and section.get("base") and section.get("date") is not None:
        link = base_link(bases_file, section["base"], section["date"], model=model, allow_extrapolation=allow_extrapolation,
                         columns=bases_columns)
    details = CardDetails.make(
        aircraft=section.get("aircraft", ""), compass=section.get("compass", ""), base=section.get("base", ""),
        swing_date=section.get("date"), conditions=section.get("conditions", ""), swung_by=section.get("swung_by", ""),
        base_marked_variation=link.get("marked_variation", ""), base_survey_date=link.get("survey_date", ""),
        base_status=link.get("status", ""),
    )
    return analysis, details
