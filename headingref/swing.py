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

Public API
----------
:func:`deviation_from_readings`, :func:`fit_deviation`, :func:`eight_point_coefficients`,
:func:`analyse_swing`, :func:`read_swing_csv`, :func:`correction_card`,
:class:`DeviationCurve`, :class:`DeviationFit`, :class:`SwingAnalysis`, :data:`DEFAULT_LIMIT_DEG`,
:data:`COEFFICIENT_MEANINGS`.

>>> import numpy as np
>>> from headingref.swing import analyse_swing
>>> headings = np.arange(0, 360, 45.0)
>>> curve_dev = 1.0 + 2.0 * np.sin(np.radians(headings))
>>> result = analyse_swing(headings, headings - curve_dev)
>>> round(result.curve.A_deg, 6), round(result.curve.B_deg, 6)
(1.0, 2.0)
>>> result.verdict
'pass'
>>> result.card.steer_compass.iloc[3]  # for magnetic 090 steer compass 087
'087'
"""

from __future__ import annotations

import math
import os
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .errors import DataQualityWarning, InputError
from .headings import format_heading, normalize_heading, wrap_angle

__all__ = [
    "COEFFICIENT_MEANINGS",
    "DEFAULT_LIMIT_DEG",
    "DeviationCurve",
    "DeviationFit",
    "SwingAnalysis",
    "analyse_swing",
    "correction_card",
    "deviation_from_readings",
    "eight_point_coefficients",
    "fit_deviation",
    "read_swing_csv",
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
    d = np.asarray(deviations_deg, dtype=np.float64)
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
    if len(rows) != n:
        raise ValueError("rows must have one label per reading")
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
    names = [c for c in "ABCDE" if c in coefficients.upper()]
    if not names or len(set(coefficients.upper()) - set("ABCDE")):
        raise InputError(f"coefficients {coefficients!r}: give letters from ABCDE, e.g. 'ABCDE' or 'ABCE'")
    h = np.asarray(magnetic_heading_deg, dtype=np.float64).ravel()
    d = np.asarray(deviation_deg, dtype=np.float64).ravel()
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
    wanted = np.asarray(DEFAULT_CARD_HEADINGS_DEG if magnetic_headings_deg is None else magnetic_headings_deg, dtype=np.float64)
    if wanted.ndim != 1 or len(wanted) == 0 or not np.all(np.isfinite(wanted)):
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
    """Everything a swing yields; see :func:`analyse_swing`."""

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

    def summary_row(self) -> pd.DataFrame:
        """One-row table: A_deg..E_deg, max_residual_deg, verdict, then standard errors and more."""
        row = {f"{n}_deg": self.curve.coefficients()[n] for n in COEFFICIENT_NAMES}
        row.update({"max_residual_deg": self.max_residual_deg, "verdict": self.verdict, "limit_deg": self.limit_deg})
        for n, se in zip(COEFFICIENT_NAMES, self.coefficients.standard_error_deg, strict=True):
            row[f"{n}_standard_error_deg"] = se
        row.update(
            {
                "max_residual_heading_deg": self.max_residual_heading_deg,
                "max_curve_residual_deg": self.max_curve_residual_deg,
                "rms_fit_residual_deg": self.rms_fit_residual_deg,
                "condition_number": self.condition_number,
                "n_readings": len(self.readings),
            }
        )
        return pd.DataFrame([row])


def analyse_swing(
    magnetic_heading_deg,
    compass_reading_deg,
    *,
    limit_deg: float = DEFAULT_LIMIT_DEG,
    card_headings_deg: Sequence[float] | None = None,
    coefficients: str = "ABCDE",
    card_after_compensation: bool = False,
    max_plausible_deviation_deg: float = MAX_PLAUSIBLE_DEVIATION_DEG,
    rows: Sequence[str] | None = None,
) -> SwingAnalysis:
    """Analyse a compass swing: deviations, coefficients, residuals after B and C, verdict, card.

    Parameters
    ----------
    magnetic_heading_deg : array-like
        The aircraft's magnetic heading on each reading (from the compass base), degrees.
    compass_reading_deg : array-like
        What the compass read, degrees.
    limit_deg : float
        Verdict limit on the largest residual deviation after B and C are removed, degrees
        (default :data:`DEFAULT_LIMIT_DEG`, 10 degrees; tighter for remote-indicating systems).
    card_headings_deg : sequence, optional
        Wanted magnetic headings on the card (default 000, 030, ..., 330).
    coefficients : str
        Coefficients to fit (default all five).
    card_after_compensation : bool
        Make the card from the curve with B and C removed (after the compensator is adjusted)
        instead of the curve as swung.
    max_plausible_deviation_deg : float
        A reading further than this from its heading is refused as a likely typing error (30).
    rows : sequence of str, optional
        Labels naming each reading in messages.

    Returns
    -------
    SwingAnalysis
        ``readings`` holds per reading: ``row, magnetic_heading_deg, compass_reading_deg,
        deviation_deg, fitted_deg, fit_residual_deg, residual_after_bc_deg`` where the last is the
        observed deviation minus the fitted B and C terms (what remains once the compensator has
        removed them). ``max_residual_deg`` is its largest absolute value and ``verdict`` is
        ``'pass'`` when that is within ``limit_deg``, else ``'fail'``. ``max_curve_residual_deg`` is
        the largest |A + D sin 2h + E cos 2h| of the fitted curve over the whole circle (between the
        swung headings), for information.
    """
    h = np.asarray(magnetic_heading_deg, dtype=np.float64).ravel()
    c = np.asarray(compass_reading_deg, dtype=np.float64).ravel()
    if h.shape != c.shape:
        raise InputError(f"{len(h)} magnetic headings but {len(c)} compass readings; give one pair per reading")
    labels = _labels(len(h), rows)
    if not math.isfinite(limit_deg) or limit_deg <= 0:
        raise InputError(f"limit {limit_deg!r} deg: give a positive number of degrees (10 for a direct-reading compass)")
    for values, what in ((h, "magnetic heading"), (c, "compass reading")):
        # the same -360..720 window the CSV reader applies: larger values are typing errors, and
        # reducing 1e308 modulo 360 would only hide them
        bad = np.flatnonzero(~(np.isfinite(values) & (values >= -360.0) & (values <= 720.0)))
        if len(bad):
            raise InputError(f"{labels[bad[0]]}: {what} {values[bad[0]]!r} is not a number of degrees from -360 to 720")
    h = _wrap360(h)
    c = _wrap360(c)
    dev = deviation_from_readings(h, c)
    far = np.flatnonzero(np.abs(dev) > max_plausible_deviation_deg)
    if len(far):
        i = far[0]
        raise InputError(
            f"{labels[i]}: compass reading {c[i]:g} is {abs(dev[i]):.1f} deg from magnetic heading {h[i]:g} "
            f"(more than {max_plausible_deviation_deg:g} deg), likely a typing error; correct it or raise the plausibility limit"
        )
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
            warnings.warn(message, DataQualityWarning, stacklevel=2)
    fit = fit_deviation(h, dev, coefficients=coefficients)
    curve = fit.curve
    fitted = np.asarray(curve.deviation_deg(h))
    bc = curve.B_deg * np.sin(np.radians(h)) + curve.C_deg * np.cos(np.radians(h))
    residual_after_bc = dev - bc
    i_max = int(np.argmax(np.abs(residual_after_bc)))
    max_residual = float(abs(residual_after_bc[i_max]))
    verdict = "pass" if max_residual <= limit_deg else "fail"
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
        coefficients=fit.table,
        readings=readings,
        card=card,
        condition_number=fit.condition_number,
        rms_fit_residual_deg=fit.rms_residual_deg,
        max_residual_deg=max_residual,
        max_residual_heading_deg=float(h[i_max]),
        max_residual_row=labels[i_max],
        limit_deg=float(limit_deg),
        verdict=verdict,
        max_curve_residual_deg=curve.without_semicircular().max_abs_deg()[0],
        notes=notes,
    )


def read_swing_csv(path: str | os.PathLike) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Read a swing CSV with columns ``magnetic_heading_deg, compass_reading_deg``.

    Returns (magnetic headings, compass readings, row labels such as ``'readings.csv line 4'``).
    Headings are accepted from -360 to 720 degrees and normalised later.
    """
    from .io import float_column, read_table

    table = read_table(path, required=["magnetic_heading_deg", "compass_reading_deg"], what="swing readings")
    magnetic = float_column(table, "magnetic_heading_deg", low=-360.0, high=720.0, unit="deg")
    compass = float_column(table, "compass_reading_deg", low=-360.0, high=720.0, unit="deg")
    labels = [f"{table.attrs['source']} line {line}" for line in table.index]
    return magnetic, compass, labels
