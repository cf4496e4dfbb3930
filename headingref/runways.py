"""Runway designators: does the painted number still fit the magnetic azimuth, and until when?

The designation rule
--------------------
ICAO Annex 14, Volume I (Aerodrome Design and Operations), runway designation marking,
paragraph 5.2.2.4 in the eighth edition (July 2018) (paragraph number from memory; the
rule's wording is confirmed by several trade summaries): the designator is *the whole
number nearest one tenth of the magnetic azimuth of the centre line, viewed from the
direction of approach*; a single-digit result is preceded by a zero; parallel runways add a
letter (two: L, R; three: L, C, R; paragraph 5.2.2.5, from memory). A result of 0 is written 36
(north), so the designator always lies in 01..36 (common practice; it follows from the
rule: 355 up to 360 degrees rounds to 36).

FAA Advisory Circular 150/5340-1J (Standards for Airport Markings), runway designation marking,
states the same rule for single and dual/triple parallel runways ("the whole number nearest
one-tenth of the magnetic azimuth when viewed from the direction of approach"; worked example
183 degrees -> 18, as quoted publicly), except that in the United States a single digit is not
preceded by a zero; headingref always writes two digits.

Boundary policy and verdicts
----------------------------
The rounding boundaries sit at azimuths ending in 5 (85 and 95 degrees bound 09). At an exact
tie (85.000...) :func:`designator_from_magnetic` rounds half up (to the higher number), as the
US Navy airfield marking manual states ("5 degrees or more, the designation is the next
higher number"), while the FAA Aeronautical Information Manual 4-3-6 says a magnetic
azimuth ending in 5 may be designated either way. Because authorities differ, and because the
model declination itself is uncertain (``variation_uncertainty_deg``), each runway has a *band*
either side of a boundary: ``tolerance_deg`` (default 0.25 degree, :data:`BOUNDARY_TOLERANCE_DEG`,
headingref's own choice: common practice for survey rounding of azimuths to the quarter
degree; no published figure found), or, with ``band_sigmas=k``, k times the local one-sigma
declination uncertainty of the field model (WMM error model, see :mod:`headingref.elements`),
which is the meaningful band where the horizontal field is weak (sigma 1.6 degrees makes a
fixed 0.25 degree band meaningless). The verdict (:data:`VERDICTS`):

- ``match``: the painted number is the implied one and the azimuth is outside the band;
- ``match near boundary``: it still fits, but the azimuth is within the band of a boundary;
- ``mismatch within band``: it no longer fits, but it is the number just across a boundary
  that lies within the band (the designator has already changed, within the uncertainty);
- ``mismatch``: it does not fit.

Geometry and field: one point per runway
----------------------------------------
The true azimuth and the variation are taken at the same point, the runway's *reference
point*: the midpoint of the centre line (the WGS84 geodesic between the two thresholds,
``pyproj.Geod``, Karney's algorithm). The true azimuth is the geodesic's forward azimuth at
that midpoint (``true_bearing_deg``); the variation is the field model's (IGRF-14 by default)
there (``variation_deg``), at the runway elevation if given (taken as height above the
ellipsoid; the geoid separation of at most ~100 m changes the declination by far less than
its uncertainty). When only ``true_bearing_deg`` is given, that bearing is used as given and
the point is the threshold. Magnetic azimuth = true azimuth - variation (east positive).

Runway pairs: one decision per runway
-------------------------------------
A runway is renamed as a pair, so the two reciprocal ends of one runway (found by designator,
number +/- 18 with L<->R, or by coordinates when the painted numbers disagree) are decided
together. headingref's rule: the runway's magnetic azimuth (``runway_magnetic_deg``) is the
circular mean of the first-listed end's azimuth and the reciprocal of the other end's, both at
one reference point (the first-listed end's midpoint); the other end's is that plus 180
degrees. The implied designators therefore always differ by exactly 18 (rounding ``x + 180``
gives ``round(x) + 18``), both ends get one verdict basis and the same change dates, and the
pair is also checked on the implied designators. Ends whose true azimuths are not opposite
within 3 degrees stay separate (and are warned). The mean is used rather than "the first end to
change" because a consistent survey gives exactly opposite azimuths at the midpoint: the mean
only absorbs small survey inconsistencies and favours neither end (headingref's choice; neither
Annex 14 nor AC 150/5340-1J addresses it, common practice is to repaint both ends together).

Forecast, every change, and since when a designator is stale
------------------------------------------------------------
Headingref's models are piecewise linear in time in their Gauss coefficients (IGRF: linear
between 5-year epochs; WMM: linear secular variation), so at a fixed place the north and east
components X(t), Y(t) are linear between the model's epochs. Between two knots the horizontal
vector moves on a straight line, the declination is monotonic there, and the instant the
magnetic azimuth reaches a boundary b solves ``Y cos(T - b) - X sin(T - b) = 0``, linear in
time. :func:`check_runways` evaluates the field once for all runways at the check date, the
model epochs inside the horizon and the horizon's end, and lists *every* boundary crossing
(``changes``, ``all_changes``): exact, no sampling, nothing missed. The change date is the
first whole day after the crossing. :func:`forecast_designator_changes` keeps the older
sampling-and-bisection core for any variation-against-time function.

``last_fit_date``: for a painted designator that does not fit now, the last date on or before
the check date on which it did, searched back to the model's start (IGRF-14: 1900-01-01) with
the same exact crossings over the model's epochs; ``not since 1900-01-01`` when it never did
in that time (likely a data error rather than an old painting); empty when it fits now.

Beyond the model's validity (IGRF-14: up to 2030.0) the forecast stops at the validity end
unless ``allow_extrapolation=True``, which extends the last secular variation linearly and
warns (:class:`~headingref.errors.ExtrapolationWarning`).

Real files
----------
CSV or ``.xlsx`` (first sheet; openpyxl), one row per end or one row per runway (``end1_*``,
``end2_*``, split into two ends), with a column mapping for other names
(``columns="runway=ident,lat=le_lat"``, :func:`headingref.tables.parse_column_mapping`).
:func:`write_runway_table` writes CSV or ``.xlsx`` with rounded values (:data:`DECIMALS`) and
units in the header (:data:`UNITS`).

Public API
----------
- :func:`check_runways` -> :class:`RunwayCheck` (``.table``, ``.summary``, ``.changes``)
- :func:`designator_from_magnetic`, :func:`boundary_margin_deg`, :func:`parse_designator`,
  :func:`format_designator`, :func:`reciprocal_designator`
- :func:`forecast_designator_changes` (sampling core, variation function injectable)
- :func:`magnetic_bearing_series` (runway magnetic azimuth against time, for plots)
- :func:`write_runway_table`; :data:`OUTPUT_COLUMNS`, :data:`CHANGE_COLUMNS`, :data:`VERDICTS`

References
----------
.. [1] ICAO, Annex 14 to the Convention on International Civil Aviation, *Aerodromes*,
   Volume I, *Aerodrome Design and Operations*, 8th ed. (2018), runway designation marking
   (no DOI).
.. [2] C. F. F. Karney, "Algorithms for geodesics", *Journal of Geodesy* 87(1), 43-55
   (2013), doi:10.1007/s00190-012-0578-z. (``pyproj.Geod`` implements it.)

>>> import pandas as pd
>>> from headingref.runways import check_runways, designator_from_magnetic
>>> int(designator_from_magnetic(357.0))
36
>>> ends = pd.DataFrame({"airport": ["XAA", "XAA"], "runway": ["09", "27"],
...                      "lat": [61.2000, 61.2000], "lon": [-149.9500, -149.8900],
...                      "end_lat": [61.2000, 61.2000], "end_lon": [-149.8900, -149.9500]})
>>> result = check_runways(ends, "2026-12-02", horizon_years=3)
>>> list(result.table.designator_implied)
['08', '26']
"""

from __future__ import annotations

import math
import os
import re
import warnings
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from numbers import Real
from typing import Any

import numpy as np
import pandas as pd
import pyproj

from ._types import DateLike, ModelLike, PathLike, TableSource
from .errors import DataQualityWarning, InputError
from .model import Model, load_model
from .units import decimal_year, parse_coordinate, parse_height_km, timestamp_from_decimal_year

BOUNDARY_TOLERANCE_DEG = 0.25
"""Default half-width of the 'on boundary' band, degrees (headingref's choice, see module docstring)."""
MIN_THRESHOLD_SEPARATION_M = 100.0  # shorter: likely swapped/duplicated coordinates (common practice)
MAX_THRESHOLD_SEPARATION_M = 6000.0  # longer than any runway built (longest ~5.5 km): wrong units or typo
PAIR_BEARING_TOLERANCE_DEG = 3.0  # reciprocal ends' true azimuths must be opposite within this
PAIR_POSITION_TOLERANCE_M = 30.0  # one end's far threshold and the other's threshold coincide within this
FORECAST_GRID_DAYS = 30  # sampling step before bisection to the day

_GEOD = pyproj.Geod(ellps="WGS84")
_DESIGNATOR_RE = re.compile(r"^(\d{1,3})([A-Z]*)$")
_RECIPROCAL_SUFFIX = {"": "", "L": "R", "R": "L", "C": "C"}
_DESIGNATOR_HELP = "a number 01 to 36 with an optional L, C or R (e.g. 09, 27L, 18C)"

VariationFunction = Callable[[np.ndarray, np.ndarray], np.ndarray]
"""``f(index, decimal_years) -> variation_deg``: variation (east positive) of runway ``index`` at each date."""


# --------------------------------------------------------------------------- the designation rule


def designator_from_magnetic(magnetic_deg: Any) -> np.ndarray:
    """Runway number implied by a magnetic azimuth (ICAO Annex 14 Vol I 5.2.2.4; see module docstring).

    Parameters
    ----------
    magnetic_deg : float or array-like
        Magnetic azimuth of the centre line seen from the approach, degrees (any real value,
        taken modulo 360).

    Returns
    -------
    numpy.ndarray of int64
        1..36; exact ties (azimuths ending in 5.000) round up; 0 is written 36.
    """
    mag = np.mod(np.asarray(magnetic_deg, dtype=np.float64), 360.0)
    number = np.floor(mag / 10.0 + 0.5).astype(np.int64) % 36
    return np.where(number == 0, 36, number)


def _offset_from_centre(magnetic_deg: np.ndarray, number: np.ndarray) -> np.ndarray:
    """Signed degrees from the designator's centre azimuth (10 x number), in [-5, 5]."""
    return np.mod(magnetic_deg - 10.0 * number + 180.0, 360.0) - 180.0


def boundary_margin_deg(magnetic_deg: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Distance to the nearest rounding boundary and the number on its other side.

    Returns
    -------
    margin_deg : ndarray
        0 (on a boundary) to 5 (on the designator's centre azimuth), degrees.
    boundary_deg : ndarray
        The nearest boundary azimuth, 5..355 degrees (ending in 5).
    neighbour : ndarray of int
        The designator number across that boundary (1..36).
    """
    mag = np.mod(np.asarray(magnetic_deg, dtype=np.float64), 360.0)
    number = designator_from_magnetic(mag)
    offset = _offset_from_centre(mag, number)
    upward = offset >= 0.0
    margin = 5.0 - np.abs(offset)
    boundary = np.mod(10.0 * number + np.where(upward, 5.0, -5.0), 360.0)
    neighbour = np.mod(number + np.where(upward, 1, -1) - 1, 36) + 1
    return margin, boundary, neighbour


def format_designator(number: int, suffix: str = "") -> str:
    """Two digits with a leading zero, then the suffix: ``format_designator(9, 'L') == '09L'``."""
    return f"{int(number):02d}{suffix}"


_NUMBER_TEXT = np.array([f"{n:02d}" for n in range(37)], dtype=object)


def _designator_texts(numbers: np.ndarray, suffixes: Any = "") -> np.ndarray:
    """Vectorised :func:`format_designator` (numbers 0..36; object array of text)."""
    return _NUMBER_TEXT[np.asarray(numbers, dtype=np.int64)] + np.asarray(suffixes, dtype=object)


def parse_designator(text: Any) -> tuple[int, str]:
    """Split a published designator into number (1..36) and suffix ('', 'L', 'C' or 'R').

    Accepts one or two digits (``9`` is read as ``09``), upper or lower case, spaces ignored.
    Raises :class:`InputError` for numbers outside 01..36 or other letters.
    """
    raw = "" if text is None else str(text)
    cleaned = raw.replace(" ", "").upper()
    if isinstance(text, float) and text.is_integer():
        cleaned = str(int(text))
    if not cleaned:
        raise InputError(f"runway designator is empty; give {_DESIGNATOR_HELP}")
    match = _DESIGNATOR_RE.match(cleaned)
    if not match:
        raise InputError(f"runway designator {raw!r} is not understood; give {_DESIGNATOR_HELP}")
    number, suffix = int(match[1]), match[2]
    if not 1 <= number <= 36 or len(match[1]) > 2:
        raise InputError(f"runway designator {raw!r}: number {match[1]} is outside 01 to 36")
    if suffix not in _RECIPROCAL_SUFFIX:
        raise InputError(f"runway designator {raw!r}: suffix {suffix!r} is malformed; accepted L, C or R (or none)")
    return number, suffix


def reciprocal_designator(text: Any) -> str:
    """Designator of the opposite end: number +/- 18, L <-> R, C <-> C (Annex 14 Vol I 5.2.2.5, from memory)."""
    number, suffix = parse_designator(text)
    return format_designator((number + 17) % 36 + 1, _RECIPROCAL_SUFFIX[suffix])


# --------------------------------------------------------------------------- forecast core


def _years_after(start: pd.Timestamp, days: np.ndarray) -> np.ndarray:
    """Decimal years of ``start + days`` (whole days), vectorised."""
    stamps = np.datetime64(start.to_datetime64(), "ns") + np.asarray(days, dtype=np.int64) * np.timedelta64(1, "D")
    return np.asarray(decimal_year(stamps), dtype=np.float64)


def forecast_designator_changes(
    true_bearing_deg: Any,
    start: Any,
    days: int,
    variation_at: VariationFunction,
    grid_days: int = FORECAST_GRID_DAYS,
) -> tuple[np.ndarray, np.ndarray]:
    """First whole day on which each runway's implied designator differs from the start's.

    Parameters
    ----------
    true_bearing_deg : array-like (N,)
        True azimuths of the centre lines, degrees.
    start : date-like
        The check date; day 0.
    days : int
        Forecast length in days; changes on days 1..days are reported.
    variation_at : callable ``(index, decimal_years) -> variation_deg``
        Variation (east positive) of runway ``index`` at each decimal year; called with flat
        arrays of equal length (vectorised).
    grid_days : int
        Sampling step. The designator is sampled every ``grid_days`` days for all runways in
        one call; in the first step where it differs from day 0 the change is found by
        bisection on whole days. A change that reverses within one step is not seen.

    Returns
    -------
    change_day : ndarray of int64 (N,)
        Days after ``start`` of the first day (at the time of day of ``start``) whose implied
        designator differs; -1 if none within ``days``.
    next_number : ndarray of int64 (N,)
        The implied number on that day; 0 if none.
    """
    true_bearing = np.asarray(true_bearing_deg, dtype=np.float64).ravel()
    count = true_bearing.size
    start_ts = start if isinstance(start, pd.Timestamp) else timestamp_from_decimal_year(decimal_year(start)).round("s")
    change_day = np.full(count, -1, dtype=np.int64)
    next_number = np.zeros(count, dtype=np.int64)
    if count == 0 or days < 1:
        return change_day, next_number
    grid = np.unique(np.append(np.arange(0, days, max(1, int(grid_days)), dtype=np.int64), days))
    grid_years = _years_after(start_ts, grid)
    index = np.repeat(np.arange(count), grid.size)
    variation = np.asarray(variation_at(index, np.tile(grid_years, count)), dtype=np.float64)
    numbers = designator_from_magnetic(np.repeat(true_bearing, grid.size) - variation).reshape(count, grid.size)
    initial = numbers[:, 0]
    differs = numbers != initial[:, None]
    rows = np.flatnonzero(differs.any(axis=1))
    if rows.size == 0:
        return change_day, next_number
    first = np.argmax(differs[rows], axis=1)
    low, high = grid[first - 1], grid[first]
    while True:
        active = high - low > 1
        if not active.any():
            break
        act = np.flatnonzero(active)
        middle = (low[act] + high[act]) // 2
        number = designator_from_magnetic(true_bearing[rows[act]] - variation_at(rows[act], _years_after(start_ts, middle)))
        same = number == initial[rows[act]]
        low[act[same]] = middle[same]
        high[act[~same]] = middle[~same]
    change_day[rows] = high
    final_variation = variation_at(rows, _years_after(start_ts, high))
    next_number[rows] = designator_from_magnetic(true_bearing[rows] - final_variation)
    return change_day, next_number


# --------------------------------------------------------------------------- exact crossings (piecewise-linear models)


def _stamps(years: np.ndarray) -> np.ndarray:
    """Decimal years -> datetime64[ns] (calendar-year fraction, :func:`headingref.units.decimal_year`'s convention)."""
    years = np.asarray(years, dtype=np.float64)
    whole = np.floor(years).astype(np.int64)
    first = (whole - 1970).astype("datetime64[Y]").astype("datetime64[ns]")
    length = ((whole - 1969).astype("datetime64[Y]").astype("datetime64[ns]") - first).astype(np.int64)
    return first + np.round((years - whole) * length).astype(np.int64).astype("timedelta64[ns]")


def _crossing_fraction(x0, y0, x1, y1, declination_deg) -> np.ndarray:
    """Where, as a fraction 0..1 of a knot interval, the declination atan2(Y, X) equals ``declination_deg``.

    X and Y are linear in time between knots, so ``Y cos a - X sin a = 0`` is a linear equation in
    the fraction; the root is kept when it lies in [0, 1] on the ray of direction ``a`` (not the
    opposite one). NaN where there is no such crossing.
    """
    a = np.radians(declination_deg)
    c, s = np.cos(a), np.sin(a)
    g0 = y0 * c - x0 * s
    dg = (y1 - y0) * c - (x1 - x0) * s
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = -g0 / dg
    ok = np.isfinite(frac) & (frac >= 0.0) & (frac <= 1.0)
    along = (x0 + frac * (x1 - x0)) * c + (y0 + frac * (y1 - y0)) * s
    return np.where(ok & (along > 0.0), frac, np.nan)


@dataclass
class _KnotField:
    """North and east components at knot dates, linear in time between them.

    Exact for headingref's models: their Gauss coefficients are linear in time between epochs (IGRF:
    5-year epochs, the last with its secular variation; WMM: one epoch and its secular variation), and
    X, Y at a fixed place are linear in the coefficients. Between two knots the horizontal vector
    moves on a straight line, so the declination is monotonic there and sweeps less than 180 degrees:
    the designator changes only where the magnetic azimuth crosses a boundary, and each crossing is
    the root of one linear equation (:func:`_crossing_fraction`). No sampling, nothing missed.
    """

    years: np.ndarray  # (K,) ascending decimal years
    north_nT: np.ndarray  # (G, K)
    east_nT: np.ndarray  # (G, K)

    def declination_deg(self) -> np.ndarray:
        return np.degrees(np.arctan2(self.east_nT, self.north_nT))

    def variation_at(self, group: np.ndarray, years: np.ndarray) -> np.ndarray:
        """Variation (deg, east positive) of ``group`` rows at ``years`` (for :func:`forecast_designator_changes`)."""
        knots = self.years
        if knots.size == 1:
            return np.degrees(np.arctan2(self.east_nT[group, 0], self.north_nT[group, 0]))
        k = np.clip(np.searchsorted(knots, years, side="right") - 1, 0, knots.size - 2)
        w = (years - knots[k]) / (knots[k + 1] - knots[k])
        north = self.north_nT[group, k] * (1.0 - w) + self.north_nT[group, k + 1] * w
        east = self.east_nT[group, k] * (1.0 - w) + self.east_nT[group, k + 1] * w
        return np.degrees(np.arctan2(east, north))

    def crossings(self, group: np.ndarray, true_deg: np.ndarray, start_year: float, end_year: float):
        """Every boundary crossing of the magnetic azimuth ``true - D(t)`` in (start_year, end_year].

        Returns flat arrays ``(row, year, number_after)``; ``row`` indexes ``group``/``true_deg``.
        """
        rows_out, years_out, after_out = [], [], []
        decl = self.declination_deg()
        knots = self.years
        for k in range(knots.size - 1):
            lo, hi = knots[k], knots[k + 1]
            if hi <= start_year or lo >= end_year:
                continue
            d0, d1 = decl[group, k], decl[group, k + 1]
            m0 = true_deg - d0
            dm = -(np.mod(d1 - d0 + 180.0, 360.0) - 180.0)
            c0 = np.floor((m0 - 5.0) / 10.0)
            count = np.abs(np.floor((m0 + dm - 5.0) / 10.0) - c0).astype(np.int64)
            for j in range(int(count.max(initial=0))):
                idx = np.flatnonzero(count > j)
                up = dm[idx] > 0.0
                boundary = np.where(up, 10.0 * (c0[idx] + j + 1) + 5.0, 10.0 * (c0[idx] - j) + 5.0)
                g = group[idx]
                frac = _crossing_fraction(self.north_nT[g, k], self.east_nT[g, k], self.north_nT[g, k + 1],
                                          self.east_nT[g, k + 1], true_deg[idx] - boundary)
                year = lo + frac * (hi - lo)
                keep = np.isfinite(year) & (year > start_year) & (year <= end_year)
                rows_out.append(idx[keep])
                years_out.append(year[keep])
                after_out.append(designator_from_magnetic(boundary[keep] + np.where(up[keep], 1.0, -1.0)))
        if not rows_out:
            empty = np.array([], dtype=np.int64)
            return empty, np.array([], dtype=np.float64), empty
        return np.concatenate(rows_out), np.concatenate(years_out), np.concatenate(after_out)

    def last_fit_year(self, group: np.ndarray, true_deg: np.ndarray, number: np.ndarray) -> np.ndarray:
        """Latest knot-range year at which ``designator(true - D(t)) == number``; NaN if never.

        Candidates: every knot where it fits, and every crossing of the two boundaries of ``number``
        (10 x number +/- 5 degrees magnetic); the latest candidate is the last moment it fitted.
        """
        decl = self.declination_deg()
        knots = self.years
        best = np.full(group.size, np.nan)
        for k in range(knots.size):
            fits = designator_from_magnetic(true_deg - decl[group, k]) == number
            best = np.where(fits, knots[k], best)
        for k in range(knots.size - 1):
            g = group
            for side in (-5.0, 5.0):
                frac = _crossing_fraction(self.north_nT[g, k], self.east_nT[g, k], self.north_nT[g, k + 1],
                                          self.east_nT[g, k + 1], true_deg - (10.0 * number + side))
                year = knots[k] + frac * (knots[k + 1] - knots[k])
                best = np.fmax(best, year)
        return best


# --------------------------------------------------------------------------- input parsing


_REQUIRED = ("airport", "runway", "lat", "lon")
_OPTIONAL = ("end_lat", "end_lon", "true_bearing_deg", "elevation", "elevation_m", "elevation_ft")
_PER_RUNWAY = ("end1_runway", "end1_lat", "end1_lon", "end2_runway", "end2_lat", "end2_lon")
_PER_RUNWAY_OPTIONAL = ("end1_elevation", "end1_elevation_m", "end1_elevation_ft", "end2_elevation",
                        "end2_elevation_m", "end2_elevation_ft")
ACCEPTED_COLUMNS = _REQUIRED + _OPTIONAL + _PER_RUNWAY + _PER_RUNWAY_OPTIONAL
"""Every column name the runway reader knows (the left-hand names of a ``--columns`` mapping)."""

class _Problems:
    """Per-row error and warning messages (stored only for rows that have any)."""

    def __init__(self, count: int):
        self.count = count
        self._errors: dict[int, list[str]] = {}
        self._warnings: dict[int, list[str]] = {}

    def error(self, rows: Any, message: str | Sequence[str]) -> None:
        self._add(self._errors, rows, message)

    def warn(self, rows: Any, message: str | Sequence[str]) -> None:
        self._add(self._warnings, rows, message)

    @staticmethod
    def _add(store: dict[int, list[str]], rows: Any, message: str | Sequence[str]) -> None:
        rows = np.flatnonzero(rows) if np.asarray(rows).dtype == bool else np.atleast_1d(rows)
        for j, i in enumerate(rows):
            store.setdefault(int(i), []).append(message if isinstance(message, str) else message[j])

    def has_error(self) -> np.ndarray:
        out = np.zeros(self.count, dtype=bool)
        out[list(self._errors)] = True
        return out

    def has_warning(self) -> np.ndarray:
        out = np.zeros(self.count, dtype=bool)
        out[list(self._warnings)] = True
        return out

    def reasons(self) -> np.ndarray:
        out = np.full(self.count, "", dtype=object)
        for i in set(self._errors) | set(self._warnings):
            out[i] = "; ".join(self._errors.get(i, []) + self._warnings.get(i, []))
        return out




def _split_runway_rows(frame: pd.DataFrame, labels: list[str]) -> tuple[pd.DataFrame, list[str]]:
    """One row per runway (``end1_*``, ``end2_*``) -> two rows, one per end, each pointing at the other."""
    rows = []
    out_labels = []
    shared = [c for c in frame.columns if not c.startswith(("end1_", "end2_"))]
    for position, (_, record) in enumerate(frame.iterrows()):
        for this, other in (("end1", "end2"), ("end2", "end1")):
            row = {c: record[c] for c in shared}
            row.update({"runway": record[f"{this}_runway"], "lat": record[f"{this}_lat"], "lon": record[f"{this}_lon"],
                        "end_lat": record[f"{other}_lat"], "end_lon": record[f"{other}_lon"]})
            for unit in ("", "_m", "_ft"):
                if f"{this}_elevation{unit}" in frame.columns:
                    row[f"elevation{unit}"] = record[f"{this}_elevation{unit}"]
            rows.append(row)
            out_labels.append(f"{labels[position]} ({this})")
    split = pd.DataFrame(rows)
    split.attrs = dict(frame.attrs)
    return split, out_labels


def _as_cells(table: pd.DataFrame | str | os.PathLike, columns: Any = None) -> tuple[pd.DataFrame, list[str]]:
    """The input as a DataFrame with headingref's lower-case column names, one row per end, plus a label per row.

    ``columns`` maps headingref's names to the file's (:func:`headingref.tables.parse_column_mapping`).
    A table with ``end1_runway`` and ``end2_runway`` (one row per runway) is split into two ends.
    """
    from .tables import apply_column_mapping, parse_column_mapping, read_source

    mapping = parse_column_mapping(columns, ACCEPTED_COLUMNS, "runway columns")
    expected = (f"expected {', '.join(_REQUIRED)} and either end_lat, end_lon or true_bearing_deg [, elevation], "
                f"or one row per runway: airport, {', '.join(_PER_RUNWAY)}")
    if isinstance(table, pd.DataFrame):
        frame = apply_column_mapping(table.rename(columns=lambda c: str(c).strip().lower()), mapping, "runway table")
        source = frame.attrs.get("source")
        if frame.empty:
            raise InputError("runway table has no rows")
        labels = [f"{source} line {i}" if source else f"row {i}" for i in frame.index]
    else:
        frame = read_source(table, required=(), optional=_OPTIONAL, what="runway table", columns=mapping)
        source = frame.attrs["source"]
        labels = [f"{source} line {i}" for i in frame.index]
    if set(_PER_RUNWAY) <= set(frame.columns) and "airport" in frame.columns:
        frame, labels = _split_runway_rows(frame, labels)
    missing = [c for c in _REQUIRED if c not in frame.columns]
    if missing:
        found = ", ".join(map(str, frame.columns)) or "none"
        raise InputError(f"runway table{' ' + source if source else ''}: missing column(s) {', '.join(missing)}; found {found}; {expected}")
    if not ({"end_lat", "end_lon"} <= set(frame.columns) or "true_bearing_deg" in frame.columns):
        raise InputError(
            f"runway table{' ' + source if source else ''}: give columns end_lat and end_lon (the opposite threshold) "
            "or true_bearing_deg"
        )
    return frame.reset_index(drop=True), labels


def _blank(series: pd.Series) -> np.ndarray:
    if series.dtype.kind in "fiub":
        return series.isna().to_numpy()
    return series.isna().to_numpy() | (series.astype(str).str.strip() == "").to_numpy()


def _numbers(frame: pd.DataFrame, column: str, kind: str, problems: _Problems, present: np.ndarray) -> np.ndarray:
    """Parse a numeric column where ``present``; bad cells become NaN and a row error.

    ``kind`` is 'lat', 'lon' (degrees, also degrees-minutes-seconds text) or 'bearing'.
    """
    values = np.full(len(frame), np.nan)
    if column not in frame.columns:
        return values
    series = frame[column]
    if series.dtype.kind in "fiu":
        values = series.to_numpy(dtype=np.float64).copy()
        unparsed = np.zeros(len(frame), dtype=bool)
    else:
        text = series.astype(str).str.strip().str.replace("−", "-", regex=False)
        values = pd.to_numeric(text, errors="coerce").to_numpy(dtype=np.float64, copy=True)
        unparsed = present & np.isnan(values)
    for i in np.flatnonzero(unparsed):
        cell = series.iloc[i]
        if kind == "bearing":
            problems.error(i, f"{column} {cell!r} is not a number of degrees")
            continue
        try:
            values[i] = parse_coordinate(cell, kind)
        except InputError as exc:
            problems.error(i, f"{column}: {exc}")
    values[~present] = np.nan
    limit = {"lat": 90.0, "lon": 180.0, "bearing": 360.0}[kind]
    low = 0.0 if kind == "bearing" else -limit
    with np.errstate(invalid="ignore"):
        bad = present & ~unparsed & ~((values >= low) & (values <= limit))
    for i in np.flatnonzero(bad):
        problems.error(i, f"{column} {series.iloc[i]!r} is outside {low:g} to {limit:g} degrees")
    values[bad] = np.nan
    return values




def _elevations_km(frame: pd.DataFrame, problems: _Problems) -> np.ndarray:
    """Runway elevation as km above the ellipsoid; blank -> 0.

    The unit is in each value (``elevation``: ``450 m``, ``1476 ft``) or in the column name
    (``elevation_m``, ``elevation_ft``); a bare number in a plain ``elevation`` column is a row error
    (the rule every headingref table follows, :func:`headingref.units.height_column`).
    """
    from .units import height_column

    out = np.zeros(len(frame))
    column, unit = height_column(frame.columns, base="elevation")
    if column is None:
        return out
    series = frame[column]
    blank = _blank(series)
    for i in np.flatnonzero(~blank):
        cell = series.iloc[i]
        if isinstance(cell, str):
            cell = cell.strip()
        try:
            out[i] = parse_height_km(cell, default_unit=unit, max_km=10.0)
        except InputError as exc:
            problems.error(i, f"{column}: {exc}")
            continue
        if out[i] < -1.0:  # pragma: no cover - parse_height_km refuses below -1 km
            problems.error(i, f"{column} {cell!r} is below -1000 m")
    return out


def _designators(frame: pd.DataFrame, problems: _Problems) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Published designators as number and suffix; the common forms vectorised, the rest by :func:`parse_designator`."""
    count = len(frame)
    numbers = np.zeros(count, dtype=np.int64)
    suffixes = np.full(count, "", dtype=object)
    valid = np.zeros(count, dtype=bool)
    cells = frame["runway"].astype(object)
    text = cells.map(lambda v: str(int(v)) if isinstance(v, float) and v.is_integer() else ("" if v is None or v != v else str(v)))
    parts = text.str.replace(" ", "", regex=False).str.upper().str.extract(r"^(\d{1,2})([LCR]?)$")
    number = pd.to_numeric(parts[0], errors="coerce").to_numpy(dtype=np.float64)
    quick = (number >= 1) & (number <= 36)
    numbers[quick] = number[quick].astype(np.int64)
    suffixes[quick] = parts[1].to_numpy(dtype=object)[quick]
    valid[quick] = True
    for i in np.flatnonzero(~quick):
        cell = cells.iat[i]
        try:
            numbers[i], suffixes[i] = parse_designator("" if cell is None or cell != cell else cell)
            valid[i] = True
        except InputError as exc:
            problems.error(i, str(exc))
    return numbers, suffixes, valid


# --------------------------------------------------------------------------- pairing of reciprocal ends


def _pair_ends(
    airport: np.ndarray,
    numbers: np.ndarray,
    suffixes: np.ndarray,
    valid: np.ndarray,
    positions: tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray],
    true_bearing: np.ndarray,
    published: np.ndarray,
    problems: _Problems,
) -> tuple[np.ndarray, np.ndarray]:
    """Find each end's reciprocal in the table and judge the pair.

    Pairs are found first by designator (same airport, number +/- 18, L<->R, C<->C), then, for
    ends left over, by coordinates (this end's far threshold is the other's threshold and back),
    which catches reciprocal ends whose designators disagree.
    """
    count = airport.size
    partner = np.full(count, -1, dtype=np.int64)
    check = np.full(count, "", dtype=object)
    keys = pd.DataFrame(
        {
            "pos": np.arange(count),
            "airport": airport,
            "key": _designator_texts(numbers, suffixes),
            "recip": _designator_texts((numbers + 17) % 36 + 1, [_RECIPROCAL_SUFFIX.get(s, "") for s in suffixes]),
        }
    )[valid]
    duplicated = keys.duplicated(["airport", "key"], keep=False).to_numpy()
    if duplicated.any():
        dup_pos = keys["pos"].to_numpy()[duplicated]
        problems.warn(dup_pos, [f"designator {published[i]} appears more than once for airport {airport[i]}" for i in dup_pos])
    matched = keys.merge(
        keys[["pos", "airport", "key"]].rename(columns={"pos": "other", "key": "recip"}), on=["airport", "recip"]
    ).drop_duplicates("pos")
    partner[matched["pos"].to_numpy()] = matched["other"].to_numpy()
    check[matched["pos"].to_numpy()] = "ok"

    lat, lon, end_lat, end_lon = positions
    has_end = np.isfinite(end_lat) & np.isfinite(lat)
    leftovers = np.flatnonzero((partner < 0) & has_end)
    if leftovers.size > 1:
        frame = pd.DataFrame({"pos": leftovers, "airport": airport[leftovers]})
        for _, group in frame.groupby("airport", sort=False):
            members = group["pos"].to_numpy()
            for a_i, a in enumerate(members):
                for b in members[a_i + 1 :]:
                    if partner[a] >= 0 or partner[b] >= 0:
                        continue
                    _, _, d1 = _GEOD.inv(end_lon[a], end_lat[a], lon[b], lat[b])
                    _, _, d2 = _GEOD.inv(end_lon[b], end_lat[b], lon[a], lat[a])
                    if max(d1, d2) <= PAIR_POSITION_TOLERANCE_M:
                        partner[a], partner[b] = b, a
                        for x, y in ((a, b), (b, a)):
                            expected = reciprocal_designator(published[y]) if valid[y] else "?"
                            check[x] = f"disagrees: opposite end is {published[y]}, reciprocal of {published[y]} would be {expected}"
                            problems.warn(x, f"reciprocal end {published[y]} disagrees with {published[x]}")
    paired = partner >= 0
    check[~paired & valid] = "no reciprocal end in table"
    # Paired by designator: the two true azimuths must be (nearly) opposite.
    idx = np.flatnonzero(paired & (check == "ok"))
    if idx.size:
        opposite_error = np.abs(np.mod(true_bearing[idx] - true_bearing[partner[idx]], 360.0) - 180.0)
        odd = idx[opposite_error > PAIR_BEARING_TOLERANCE_DEG]
        for i in odd:
            check[i] = f"true azimuths {true_bearing[i]:.1f} and {true_bearing[partner[i]]:.1f} are not opposite"
        problems.warn(odd, [f"reciprocal end {published[partner[i]]}: {check[i]}" for i in odd])
    return partner, check




# --------------------------------------------------------------------------- the check: output schema


OUTPUT_COLUMNS = (
    "input_row",
    "airport",
    "runway",
    "runway_id",
    "true_bearing_deg",
    "variation_deg",
    "magnetic_bearing_deg",
    "runway_magnetic_deg",
    "designator_implied",
    "designator_matches",
    "verdict",
    "on_boundary",
    "margin_deg",
    "boundary_deg",
    "band_deg",
    "last_fit_date",
    "change_date",
    "next_designator",
    "years_to_change",
    "all_changes",
    "pair_runway",
    "pair_check",
    "variation_uncertainty_deg",
    "zone",
    "length_m",
    "ref_lat_deg",
    "ref_lon_deg",
    "alt_km",
    "status",
    "reason",
)
"""Columns of :attr:`RunwayCheck.table`, in order (see :func:`check_runways` for their meaning)."""

CHANGE_COLUMNS = (
    "row", "input_row", "airport", "runway", "runway_id", "change_date", "designator_before", "next_designator",
    "years_to_change",
)
"""Columns of :attr:`RunwayCheck.changes`: one row per designator change within the horizon."""

UNITS = {
    "true_bearing_deg": "deg true", "variation_deg": "deg, east positive", "magnetic_bearing_deg": "deg magnetic",
    "runway_magnetic_deg": "deg magnetic", "margin_deg": "deg", "boundary_deg": "deg magnetic", "band_deg": "deg",
    "years_to_change": "years", "variation_uncertainty_deg": "deg, 1 sigma", "length_m": "m", "ref_lat_deg": "deg N",
    "ref_lon_deg": "deg E", "alt_km": "km above ellipsoid", "change_date": "UTC date", "last_fit_date": "UTC date",
}
"""Unit of each numeric or date column (the header of an ``.xlsx`` output)."""

DECIMALS = {
    "true_bearing_deg": 2, "variation_deg": 2, "magnetic_bearing_deg": 2, "runway_magnetic_deg": 2, "margin_deg": 2,
    "boundary_deg": 0, "band_deg": 2, "years_to_change": 2, "variation_uncertainty_deg": 2, "length_m": 0,
    "ref_lat_deg": 6, "ref_lon_deg": 6, "alt_km": 3,
}
"""Decimals written per column (bearings to 0.01 deg, positions to 0.000001 deg ~ 0.1 m)."""

VERDICTS = ("match", "match near boundary", "mismatch within band", "mismatch")
"""Verdicts: fits (margin over the band); fits but within the band of a boundary; does not fit but
is the number just across a boundary within the band; does not fit."""


@dataclass
class RunwayCheck:
    """Result of :func:`check_runways`.

    Attributes
    ----------
    table : pandas.DataFrame
        One row per runway end, in input order (columns :data:`OUTPUT_COLUMNS`).
    summary : dict
        Counts and settings (see :meth:`summary_text`).
    changes : pandas.DataFrame
        Every designator change within the horizon, one row per end and change, sorted by date
        (columns :data:`CHANGE_COLUMNS`; ``row`` is the position in ``table``).
    notes : list of str
        Statements about the run (forecast cut at model validity, extrapolation).
    """

    table: pd.DataFrame
    summary: dict
    changes: pd.DataFrame
    notes: list[str] = field(default_factory=list)
    model: Model | None = None
    allow_extrapolation: bool = False

    def summary_text(self) -> str:
        s = self.summary
        lines = [
            f"Runway designator check for {s['date']} with {s['model']} (horizon to {s['forecast_end']})",
            f"  runway ends: {s['rows']} ({s['checked']} checked, {s['errors']} with errors, {s['warnings']} with warnings)",
            f"  match: {s['match']}   match near boundary: {s['match_near_boundary']}   "
            f"mismatch within band: {s['mismatch_within_band']}   mismatch: {s['mismatch']}   (band: {s['band']})",
            f"  painted designators that no longer fit: {s['stale']} ({s['never_fitted']} never fitted since {s['search_from']})",
            f"  implied designator changes within the horizon: {s['changes_within_horizon']} end(s), {s['change_events']} change(s)",
        ]
        lines += [f"  note: {note}" for note in self.notes]
        return "\n".join(lines)

    def changes_text(self, limit: int | None = None) -> str:
        """Every designator change within the horizon, soonest first."""
        rows = self.changes if limit is None else self.changes.head(limit)
        if rows.empty:
            return f"No implied designator changes before {self.summary['forecast_end']}."
        a = max(7, rows["airport"].astype(str).str.len().max())
        w = max(7, rows["runway_id"].astype(str).str.len().max())
        out = [f"{'change':<10}  {'airport':<{a}}  {'runway':<{w}}  {'end':<4}  {'from -> to':<10}  {'in years':>8}"]
        for r in rows.itertuples():
            out.append(f"{r.change_date:<10}  {r.airport:<{a}}  {r.runway_id:<{w}}  {r.runway:<4}  "
                       f"{r.designator_before + ' -> ' + r.next_designator:<10}  {r.years_to_change:8.2f}")
        if limit is not None and len(self.changes) > limit:
            out.append(f"... and {len(self.changes) - limit} more (see the output table)")
        return "\n".join(out)

    def stale_text(self, limit: int | None = None) -> str:
        """The painted designators that no longer fit, with the last date they did."""
        t = self.table
        stale = t[t["last_fit_date"] != ""]
        if stale.empty:
            return "Every checked painted designator fits now."
        shown = stale if limit is None else stale.head(limit)
        a = max(7, shown["airport"].astype(str).str.len().max())
        out = [f"{'airport':<{a}}  {'end':<4}  {'implied':<7}  {'magnetic':>8}  last fitted"]
        for r in shown.itertuples():
            out.append(f"{r.airport:<{a}}  {r.runway:<4}  {r.designator_implied:<7}  {r.runway_magnetic_deg:8.2f}  {r.last_fit_date}")
        if limit is not None and len(stale) > limit:
            out.append(f"... and {len(stale) - limit} more (see the output table)")
        return "\n".join(out)


# --------------------------------------------------------------------------- the check: named steps


@dataclass
class _Settings:
    model: Model
    start: pd.Timestamp
    start_year: float
    forecast_days: int
    end_year: float
    tolerance_deg: float
    band_sigmas: float | None
    allow_extrapolation: bool
    last_fit: bool
    horizon_years: float
    notes: list[str]


def _horizon_end(start: pd.Timestamp, horizon_years: float) -> pd.Timestamp:
    whole = int(math.floor(horizon_years))
    return start + pd.DateOffset(years=whole) + pd.Timedelta(days=round((horizon_years - whole) * 365.2425))


def _settings(date, horizon_years, model, tolerance_deg, band_sigmas, allow_extrapolation, last_fit) -> _Settings:
    """Validate the options; cut the horizon at the model's validity unless extrapolation is allowed."""
    if isinstance(tolerance_deg, bool) or not (isinstance(tolerance_deg, Real) and 0.0 <= tolerance_deg < 5.0):
        raise InputError(f"boundary band (tolerance) {tolerance_deg!r} deg is not a number from 0 up to 5 degrees")
    if band_sigmas is not None and (isinstance(band_sigmas, bool) or not (isinstance(band_sigmas, Real) and 0.0 <= band_sigmas <= 5.0)):
        raise InputError(f"band in declination sigmas {band_sigmas!r} is not a number from 0 to 5")
    if isinstance(horizon_years, bool) or not (isinstance(horizon_years, Real) and 0.0 <= horizon_years <= 200.0):
        raise InputError(f"horizon {horizon_years!r} years is not a number from 0 to 200 years")
    the_model = load_model(model)
    start_year = float(decimal_year(date))
    start = timestamp_from_decimal_year(start_year).round("s")
    the_model.check_dates(np.array([start_year]), allow_extrapolation)
    notes: list[str] = []
    horizon_end = _horizon_end(start, float(horizon_years))
    if float(decimal_year(horizon_end)) > the_model.valid_to and not allow_extrapolation:
        cut = max(timestamp_from_decimal_year(the_model.valid_to).floor("D"), start)
        notes.append(
            f"the forecast stops at {cut.date()}, the end of {the_model.name}'s validity, instead of {horizon_end.date()}; "
            "opt in to extrapolation to forecast further (secular variation extended linearly)"
        )
        horizon_end = cut
    forecast_days = max(0, int((horizon_end - start) / pd.Timedelta(days=1)))
    end_year = float(decimal_year(start + pd.Timedelta(days=forecast_days)))
    if end_year > the_model.valid_to:
        notes.append(f"past {the_model.valid_to:g} the {the_model.name} secular variation is extrapolated linearly")
    return _Settings(the_model, start, start_year, forecast_days, end_year, float(tolerance_deg),
                     None if band_sigmas is None else float(band_sigmas), bool(allow_extrapolation), bool(last_fit),
                     float(horizon_years), notes)


@dataclass
class _Ends:
    """Per-end arrays, filled step by step."""

    labels: list[str]
    problems: _Problems
    airport: np.ndarray
    published: np.ndarray
    numbers: np.ndarray
    suffixes: np.ndarray
    designator_ok: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    end_lat: np.ndarray
    end_lon: np.ndarray
    alt_km: np.ndarray
    given_bearing: np.ndarray
    bearing_given: np.ndarray
    true_bearing: np.ndarray = None  # at the reference point
    length_m: np.ndarray = None
    ref_lat: np.ndarray = None
    ref_lon: np.ndarray = None
    from_coordinates: np.ndarray = None

    @property
    def count(self) -> int:
        return self.airport.size


def _read_ends(table, columns) -> _Ends:
    """Parse every cell; a bad cell is a row error, the batch goes on."""
    frame, labels = _as_cells(table, columns)
    count = len(frame)
    problems = _Problems(count)
    # object dtype first: filling a float column (all-numeric designators read by pandas) with '' warns;
    # a whole float (9.0) is written as the integer it is ('9'), like an int, not '9.0'
    airport = frame["airport"].astype(object).fillna("").astype(str).str.strip().to_numpy(dtype=object)
    problems.error(airport == "", "airport is empty")
    runway = frame["runway"].astype(object).map(lambda v: str(int(v)) if isinstance(v, float) and v.is_integer() else v)
    published = runway.fillna("").astype(str).str.strip().str.upper().str.replace(" ", "").to_numpy(dtype=object)
    numbers, suffixes, designator_ok = _designators(frame, problems)
    lat = _numbers(frame, "lat", "lat", problems, ~_blank(frame["lat"]))
    lon = _numbers(frame, "lon", "lon", problems, ~_blank(frame["lon"]))
    problems.error(_blank(frame["lat"]) | _blank(frame["lon"]), "lat/lon of the threshold is empty")
    blank_col = pd.Series([""] * count)
    end_lat_given = ~_blank(frame.get("end_lat", blank_col))
    end_lon_given = ~_blank(frame.get("end_lon", blank_col))
    end_lat = _numbers(frame, "end_lat", "lat", problems, end_lat_given)
    end_lon = _numbers(frame, "end_lon", "lon", problems, end_lon_given)
    bearing_given = ~_blank(frame.get("true_bearing_deg", blank_col))
    given_bearing = _numbers(frame, "true_bearing_deg", "bearing", problems, bearing_given)
    problems.error(end_lat_given != end_lon_given, "give both end_lat and end_lon (the opposite threshold), or neither")
    problems.error(~(end_lat_given & end_lon_given) & ~bearing_given, "no end_lat/end_lon and no true_bearing_deg: the azimuth is unknown")
    return _Ends(labels, problems, airport, published, numbers, suffixes, designator_ok, lat, lon, end_lat, end_lon,
                 _elevations_km(frame, problems), given_bearing, bearing_given)


def _geometry(ends: _Ends) -> None:
    """True azimuth of each end's centre line at its reference point (the midpoint), and its length.

    With both thresholds: the WGS84 geodesic from this threshold to the opposite one (pyproj.Geod,
    Karney's algorithm); the reference point is its midpoint and the true azimuth is the geodesic's
    forward azimuth there. With only ``true_bearing_deg``: that bearing, at the threshold.
    """
    problems, count = ends.problems, ends.count
    given, bearing_given = ends.given_bearing, ends.bearing_given
    use_ends = np.isfinite(ends.lat) & np.isfinite(ends.lon) & np.isfinite(ends.end_lat) & np.isfinite(ends.end_lon)
    true_bearing = np.where(bearing_given & ~use_ends, np.mod(given, 360.0), np.nan)
    length_m = np.full(count, np.nan)
    ref_lat, ref_lon = ends.lat.copy(), ends.lon.copy()
    azimuth_at_threshold = np.full(count, np.nan)
    if use_ends.any():
        az, _, dist = _GEOD.inv(ends.lon[use_ends], ends.lat[use_ends], ends.end_lon[use_ends], ends.end_lat[use_ends])
        m_lon, m_lat, back = _GEOD.fwd(ends.lon[use_ends], ends.lat[use_ends], az, dist / 2.0)
        true_bearing[use_ends] = np.mod(np.asarray(back) + 180.0, 360.0)  # forward azimuth at the midpoint
        azimuth_at_threshold[use_ends] = np.mod(az, 360.0)
        length_m[use_ends] = dist
        ref_lat[use_ends], ref_lon[use_ends] = m_lat, m_lon
    coincident = use_ends & (length_m < 0.01)
    problems.error(coincident, "the two thresholds coincide: the azimuth is undefined")
    true_bearing[coincident] = np.nan
    short = use_ends & ~coincident & (length_m < MIN_THRESHOLD_SEPARATION_M)
    long_ = use_ends & (length_m > MAX_THRESHOLD_SEPARATION_M)
    problems.warn(short, [f"thresholds only {d:.0f} m apart (expected 100 m to 6 km): swapped or repeated coordinates?" for d in length_m[short]])
    problems.warn(long_, [f"thresholds {d / 1000:.1f} km apart (expected 100 m to 6 km): wrong units or swapped lat/lon?" for d in length_m[long_]])
    both = use_ends & bearing_given & np.isfinite(given)
    disagree = both & (np.abs(np.mod(given - azimuth_at_threshold + 180.0, 360.0) - 180.0) > 0.5)
    problems.warn(disagree, [f"true_bearing_deg {g:.2f} differs from the thresholds' azimuth {t:.2f}; the thresholds are used"
                             for g, t in zip(given[disagree], azimuth_at_threshold[disagree], strict=True)])
    ends.true_bearing, ends.length_m, ends.ref_lat, ends.ref_lon, ends.from_coordinates = (
        true_bearing, length_m, ref_lat, ref_lon, use_ends)


@dataclass
class _Runways:
    """Runways as decided: one group per runway (a reciprocal pair) or per unpaired end."""

    group: np.ndarray  # (N,) group of each end
    reversed_: np.ndarray  # (N,) True for the second-listed end of a pair (its direction is the group's + 180)
    runway_id: np.ndarray  # (N,) '04L/22R' for a pair, the end's own designator otherwise
    ref_lat: np.ndarray  # (G,)
    ref_lon: np.ndarray
    alt_km: np.ndarray
    true_deg: np.ndarray  # (G,) the runway's true azimuth in the first-listed end's direction

    def end_true_deg(self) -> np.ndarray:
        """Decision true azimuth of each end: the runway's, reversed for the second-listed end."""
        return np.mod(self.true_deg[self.group] + np.where(self.reversed_, 180.0, 0.0), 360.0)


def _runways(ends: _Ends, partner: np.ndarray, pair_check: np.ndarray) -> _Runways:
    """Group reciprocal ends into runways: one reference point, one true azimuth, one decision.

    A pair whose true azimuths are not opposite (``pair_check`` says so) is left as two single ends.
    The runway's true azimuth is the circular mean of the first-listed end's azimuth and the
    reciprocal of the other's; its reference point is the first-listed end's midpoint when that end
    has both thresholds (else the other's; else the geodesic midpoint of the two thresholds).
    """
    count = ends.count
    usable = np.isfinite(ends.true_bearing) & np.isfinite(ends.ref_lat) & np.isfinite(ends.ref_lon)
    paired = (partner >= 0) & usable & ~np.char.startswith(pair_check.astype(str), "true azimuths")
    paired &= np.where(partner >= 0, usable[np.maximum(partner, 0)], False)
    index = np.arange(count)
    paired &= partner[np.maximum(partner, 0)] == index  # mutual pairs only (a duplicated designator stays single)
    paired &= paired[np.maximum(partner, 0)]
    first = paired & (index < partner)
    second = paired & ~first
    group = np.full(count, -1, dtype=np.int64)
    leaders = np.flatnonzero(~second)
    group[leaders] = np.arange(leaders.size)
    group[second] = group[partner[second]]
    reversed_ = second.copy()
    a = leaders
    b = np.where(first[a], partner[a], a)
    ta, tb = np.radians(ends.true_bearing[a]), np.radians(ends.true_bearing[b] + np.where(first[a], 180.0, 0.0))
    with np.errstate(invalid="ignore"):
        true_deg = np.mod(np.degrees(np.arctan2(np.sin(ta) + np.sin(tb), np.cos(ta) + np.cos(tb))), 360.0)
    ref_lat, ref_lon = ends.ref_lat[a].copy(), ends.ref_lon[a].copy()
    other_has = first[a] & ~ends.from_coordinates[a] & ends.from_coordinates[b]
    ref_lat[other_has], ref_lon[other_has] = ends.ref_lat[b[other_has]], ends.ref_lon[b[other_has]]
    neither = first[a] & ~ends.from_coordinates[a] & ~ends.from_coordinates[b]
    if neither.any():
        az, _, dist = _GEOD.inv(ends.lon[a[neither]], ends.lat[a[neither]], ends.lon[b[neither]], ends.lat[b[neither]])
        m_lon, m_lat, _ = _GEOD.fwd(ends.lon[a[neither]], ends.lat[a[neither]], az, np.asarray(dist) / 2.0)
        ref_lat[neither], ref_lon[neither] = m_lat, m_lon
    alt = np.where(first[a], 0.5 * (ends.alt_km[a] + ends.alt_km[b]), ends.alt_km[a])
    runway_id = ends.published.copy()
    runway_id[first] = [f"{ends.published[i]}/{ends.published[partner[i]]}" for i in np.flatnonzero(first)]
    runway_id[second] = runway_id[partner[second]]
    return _Runways(group, reversed_, runway_id, ref_lat, ref_lon, alt, true_deg)


def _knot_years(settings: _Settings, backwards: bool) -> np.ndarray:
    """Knots of the piecewise-linear field: the check date and the model epochs in the window.

    Forward: check date, epochs inside the horizon, horizon end. Backward: model start, epochs
    before the check date, check date.
    """
    starts, s = settings.model.starts, settings.start_year
    if backwards:
        lo = settings.model.valid_from
        inner = starts[(starts > lo) & (starts < s)]
        return np.unique(np.concatenate([[min(lo, s)], inner, [s]]))
    inner = starts[(starts > s) & (starts < settings.end_year)]
    return np.unique(np.concatenate([[s], inner, [settings.end_year]]))


def _field_at_knots(runways: _Runways, groups: np.ndarray, knots: np.ndarray, settings: _Settings) -> tuple[dict, _KnotField]:
    """One vectorised field call for ``groups`` at every knot; the check-date values and the knot field."""
    from .elements import field_arrays

    n, k = groups.size, knots.size
    f = field_arrays(np.repeat(runways.ref_lat[groups], k), np.repeat(runways.ref_lon[groups], k), np.tile(knots, n),
                     np.repeat(runways.alt_km[groups], k), model=settings.model,
                     allow_extrapolation=settings.allow_extrapolation)
    return f, _KnotField(knots, f["north_nT"].reshape(n, k), f["east_nT"].reshape(n, k))


@dataclass
class _Variation:
    variation: np.ndarray  # per end
    uncertainty: np.ndarray
    zone: pd.Categorical
    forward: _KnotField  # rows = groups with a defined variation (index by forward_row)
    forward_row: np.ndarray  # (G,) row in forward, -1 if none


def _variation(ends: _Ends, runways: _Runways, settings: _Settings) -> _Variation:
    """Variation at each runway's reference point now and at the forecast knots (east positive)."""
    from .elements import ZONE_DTYPE

    n_groups = runways.true_deg.size
    leaders = np.flatnonzero(np.bincount(runways.group[runways.group >= 0], minlength=n_groups) > 0)
    ok = leaders[np.isfinite(runways.true_deg[leaders]) & np.isfinite(runways.ref_lat[leaders])]
    knots = _knot_years(settings, backwards=False)
    variation_g = np.full(n_groups, np.nan)
    uncertainty_g = np.full(n_groups, np.nan)
    zone_g = np.full(n_groups, -1, dtype=np.int64)
    flags_g = np.full(n_groups, "", dtype=object)
    forward_row = np.full(n_groups, -1, dtype=np.int64)
    forward = _KnotField(knots, np.empty((0, knots.size)), np.empty((0, knots.size)))
    if ok.size:
        f, forward = _field_at_knots(runways, ok, knots, settings)
        now = np.arange(ok.size) * knots.size
        variation_g[ok] = f["declination_deg"][now]
        uncertainty_g[ok] = f["declination_uncertainty_deg"][now]
        zone_g[ok] = f["zone_code"][now]
        flags_g[ok] = np.asarray(f["declination_flag"], dtype=object)[now]
        forward_row[ok] = np.arange(ok.size)
    has = runways.group >= 0
    g = np.where(has, runways.group, 0)
    variation = np.where(has, variation_g[g], np.nan)
    uncertainty = np.where(has, uncertainty_g[g], np.nan)
    codes = np.where(has, zone_g[g], -1)
    problems = ends.problems
    undefined = np.flatnonzero(has & ~np.isfinite(variation) & (codes >= 0))
    problems.error(undefined, [f"declination undefined ({flags_g[g[i]] or 'no horizontal field'})" for i in undefined])
    weak = np.flatnonzero(codes > 0)
    names = ZONE_DTYPE.categories
    problems.warn(weak, [f"weak horizontal field ({names[codes[i]]} zone): variation uncertain by {uncertainty[i]:.1f} deg" for i in weak])
    forward_row[~np.isfinite(variation_g)] = -1
    zone = pd.Categorical.from_codes(codes, dtype=ZONE_DTYPE)
    return _Variation(variation, uncertainty, zone, forward, forward_row)


@dataclass
class _Judgement:
    decision_true: np.ndarray
    runway_magnetic: np.ndarray
    magnetic: np.ndarray
    defined: np.ndarray
    implied: np.ndarray
    margin: np.ndarray
    boundary: np.ndarray
    band: np.ndarray
    judged: np.ndarray
    matches: np.ndarray
    within_band: np.ndarray
    verdict: np.ndarray


def _judge(ends: _Ends, runways: _Runways, var: _Variation, settings: _Settings) -> _Judgement:
    """Implied designator from the runway's magnetic azimuth; the verdict against the painted one."""
    decision_true = np.where(runways.group >= 0, runways.end_true_deg(), np.nan)
    runway_magnetic = np.mod(decision_true - var.variation, 360.0)
    magnetic = np.mod(ends.true_bearing - var.variation, 360.0)
    defined = np.isfinite(runway_magnetic)
    count = ends.count
    implied = np.zeros(count, dtype=np.int64)
    margin, boundary = np.full(count, np.nan), np.full(count, np.nan)
    neighbour = np.zeros(count, dtype=np.int64)
    implied[defined] = designator_from_magnetic(runway_magnetic[defined])
    margin[defined], boundary[defined], neighbour[defined] = boundary_margin_deg(runway_magnetic[defined])
    if settings.band_sigmas is None:
        band = np.where(defined, settings.tolerance_deg, np.nan)
    else:
        band = np.where(defined, np.minimum(5.0, settings.band_sigmas * var.uncertainty), np.nan)
    judged = defined & ends.designator_ok & ~ends.problems.has_error()
    matches = judged & (ends.numbers == implied)
    within_band = defined & (margin <= band)
    verdict = np.full(count, "", dtype=object)
    verdict[judged & matches] = "match"
    verdict[judged & matches & within_band] = "match near boundary"
    verdict[judged & ~matches] = "mismatch"
    verdict[judged & ~matches & within_band & (ends.numbers == neighbour)] = "mismatch within band"
    return _Judgement(decision_true, runway_magnetic, magnetic, defined, implied, margin, boundary, band, judged,
                      matches, within_band, verdict)


def _day_of(years: np.ndarray, settings: _Settings) -> np.ndarray:
    """First whole day after the check date (at its time of day) falling after each decimal year."""
    delta = (_stamps(years) - np.datetime64(settings.start.to_datetime64(), "ns")) / np.timedelta64(1, "D")
    return np.maximum(1, np.ceil(delta)).astype(np.int64)


def _changes(ends: _Ends, runways: _Runways, var: _Variation, judge: _Judgement, settings: _Settings) -> pd.DataFrame:
    """Every crossing of a rounding boundary by each end's decision azimuth within the horizon."""
    rows = np.flatnonzero(judge.defined & (var.forward_row[np.maximum(runways.group, 0)] >= 0) & (runways.group >= 0))
    empty = pd.DataFrame({c: pd.Series(dtype=object) for c in CHANGE_COLUMNS})
    if settings.forecast_days < 1 or rows.size == 0:
        return empty
    frow = var.forward_row[runways.group[rows]]
    which, years, after = var.forward.crossings(frow, judge.decision_true[rows], settings.start_year, settings.end_year)
    if which.size == 0:
        return empty
    end = rows[which]
    day = _day_of(years, settings)
    order = np.lexsort((day, end))
    end, day, after = end[order], day[order], after[order]
    first_of_end = np.r_[True, end[1:] != end[:-1]]
    before = np.where(first_of_end, judge.implied[end], np.r_[0, after[:-1]])
    suffix = np.where(ends.designator_ok[end], ends.suffixes[end], "")
    dates = pd.DatetimeIndex(settings.start + pd.to_timedelta(day, unit="D")).strftime("%Y-%m-%d")
    out = pd.DataFrame({
        "row": end, "input_row": np.asarray(ends.labels, dtype=object)[end], "airport": ends.airport[end],
        "runway": ends.published[end], "runway_id": runways.runway_id[end], "change_date": np.asarray(dates, dtype=object),
        "designator_before": _designator_texts(before, suffix),
        "next_designator": _designator_texts(after, suffix),
        "years_to_change": day / 365.2425,
    }, columns=list(CHANGE_COLUMNS))
    return out.sort_values(["change_date", "airport", "runway_id", "row"], kind="stable").reset_index(drop=True)


def _last_fit(ends: _Ends, runways: _Runways, judge: _Judgement, settings: _Settings) -> np.ndarray:
    """For each painted designator that does not fit now: the last date on or before the check date it did.

    Searched back to the model's start with the exact crossings of :class:`_KnotField` (one field call
    at the model's epochs before the check date). 'not since <start>' when it never fitted; '' when
    it fits now or the row was not judged.
    """
    out = np.full(ends.count, "", dtype=object)
    stale = np.flatnonzero(judge.judged & ~judge.matches)
    if not settings.last_fit or stale.size == 0:
        return out
    groups, inverse = np.unique(runways.group[stale], return_inverse=True)
    knots = _knot_years(settings, backwards=True)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the check-date warnings were given once already
        _, back = _field_at_knots(runways, groups, knots, settings)
    years = back.last_fit_year(inverse, judge.decision_true[stale], ends.numbers[stale])
    found = np.isfinite(years)
    search_from = timestamp_from_decimal_year(knots[0]).date()
    out[stale[~found]] = f"not since {search_from}"
    if found.any():
        dates = pd.DatetimeIndex(_stamps(years[found])).floor("D").strftime("%Y-%m-%d")
        out[stale[found]] = np.asarray(dates, dtype=object)
    return out


def _assemble(ends: _Ends, runways: _Runways, var: _Variation, judge: _Judgement, partner: np.ndarray,
              pair_check: np.ndarray, changes: pd.DataFrame, last_fit: np.ndarray) -> pd.DataFrame:
    """The output table (:data:`OUTPUT_COLUMNS`)."""
    count, problems = ends.count, ends.problems
    errors = problems.has_error()
    status = np.where(errors, "error", np.where(problems.has_warning(), "warning", "ok"))
    reason = problems.reasons()
    suffix_kept = np.where(ends.designator_ok, ends.suffixes, "")
    change_date = np.full(count, "", dtype=object)
    next_designator = np.full(count, "", dtype=object)
    years_to_change = np.full(count, np.nan)
    all_changes = np.full(count, "", dtype=object)
    if len(changes):
        firsts = changes.drop_duplicates("row")
        rows = firsts["row"].to_numpy(dtype=np.int64)
        change_date[rows] = firsts["change_date"].to_numpy()
        next_designator[rows] = firsts["next_designator"].to_numpy()
        years_to_change[rows] = firsts["years_to_change"].to_numpy()
        listed = (changes["change_date"] + " " + changes["next_designator"]).groupby(changes["row"]).agg("; ".join)
        all_changes[listed.index.to_numpy(dtype=np.int64)] = listed.to_numpy()
    defined = judge.defined
    return pd.DataFrame(
        {
            "input_row": ends.labels,
            "airport": ends.airport,
            "runway": ends.published,
            "runway_id": runways.runway_id,
            "true_bearing_deg": ends.true_bearing,
            "variation_deg": var.variation,
            "magnetic_bearing_deg": np.where(np.isfinite(var.variation), judge.magnetic, np.nan),
            "runway_magnetic_deg": judge.runway_magnetic,
            "designator_implied": np.where(defined, _designator_texts(judge.implied, suffix_kept), ""),
            "designator_matches": pd.array(np.where(judge.judged, judge.matches, pd.NA), dtype="boolean"),
            "verdict": np.where(errors, "", judge.verdict),
            "on_boundary": pd.array(np.where(defined, judge.within_band, pd.NA), dtype="boolean"),
            "margin_deg": judge.margin,
            "boundary_deg": judge.boundary,
            "band_deg": judge.band,
            "last_fit_date": np.where(errors, "", last_fit),
            "change_date": change_date,
            "next_designator": next_designator,
            "years_to_change": years_to_change,
            "all_changes": all_changes,
            "pair_runway": [ends.published[p] if p >= 0 else "" for p in partner],
            "pair_check": pair_check,
            "variation_uncertainty_deg": var.uncertainty,
            "zone": var.zone,
            "length_m": ends.length_m,
            "ref_lat_deg": np.where(defined, runways.ref_lat[np.maximum(runways.group, 0)], np.nan),
            "ref_lon_deg": np.where(defined, runways.ref_lon[np.maximum(runways.group, 0)], np.nan),
            "alt_km": ends.alt_km,
            "status": status,
            "reason": reason,
        },
        columns=list(OUTPUT_COLUMNS),
    )


def _summary(out: pd.DataFrame, changes: pd.DataFrame, settings: _Settings) -> dict:
    start, verdict = settings.start, out["verdict"].to_numpy()
    last = out["last_fit_date"].astype(str)
    band = (f"{settings.band_sigmas:g} x local declination sigma" if settings.band_sigmas is not None
            else f"{settings.tolerance_deg:g} deg")
    return {
        "date": str(start.date()) if start == start.floor("D") else str(start),
        "model": settings.model.name,
        "horizon_years": settings.horizon_years,
        "forecast_end": str((start + pd.Timedelta(days=settings.forecast_days)).date()),
        "tolerance_deg": settings.tolerance_deg,
        "band_sigmas": settings.band_sigmas,
        "band": band,
        "rows": len(out),
        "checked": int(out["designator_implied"].ne("").sum()),
        "errors": int((out["status"] == "error").sum()),
        "warnings": int((out["status"] == "warning").sum()),
        "match": int((verdict == "match").sum()),
        "match_near_boundary": int((verdict == "match near boundary").sum()),
        "mismatch_within_band": int((verdict == "mismatch within band").sum()),
        "mismatch": int((verdict == "mismatch").sum()),
        "on_boundary": int(np.isin(verdict, ["match near boundary", "mismatch within band"]).sum()),
        "stale": int(last.ne("").sum()),
        "never_fitted": int(last.str.startswith("not since").sum()),
        "search_from": str(timestamp_from_decimal_year(settings.model.valid_from).date()),
        "changes_within_horizon": int(changes["row"].nunique()) if len(changes) else 0,
        "change_events": len(changes),
    }


def check_runways(
    table: TableSource,
    date: DateLike,
    horizon_years: float = 10.0,
    model: ModelLike = None,
    tolerance_deg: float = BOUNDARY_TOLERANCE_DEG,
    allow_extrapolation: bool = False,
    band_sigmas: float | None = None,
    columns: str | dict | None = None,
    last_fit: bool = True,
) -> RunwayCheck:
    """Check painted runway designators against the magnetic azimuth, runway by runway, and forecast changes.

    Parameters
    ----------
    table : DataFrame, or path of a CSV or ``.xlsx`` file
        One row per end: ``airport, runway, lat, lon`` and either ``end_lat, end_lon`` (the
        opposite threshold) or ``true_bearing_deg``; or one row per runway: ``airport,
        end1_runway, end1_lat, end1_lon, end2_runway, end2_lat, end2_lon`` (split into two ends).
        Optional elevation: ``elevation`` with a unit in each value (``450 m``, ``1476 ft``) or
        ``elevation_m`` / ``elevation_ft``. Latitudes/longitudes in decimal degrees (north/east
        positive) or degrees-minutes-seconds text.
    date : date-like or decimal year
        The check date (UTC).
    horizon_years : float
        Forecast length, years (0 for no forecast).
    model : Model, path or None
        Field model (default IGRF-14).
    tolerance_deg : float
        Half-width of the band either side of a rounding boundary, degrees (default
        :data:`BOUNDARY_TOLERANCE_DEG`).
    allow_extrapolation : bool
        Forecast past the model's validity (warns); otherwise the forecast stops at its end.
    band_sigmas : float, optional
        If given, the band of each runway is this many times the local declination uncertainty
        (``declination_uncertainty_deg`` of :func:`headingref.elements.field`, one sigma; at most 5
        degrees) instead of ``tolerance_deg``.
    columns : str or dict, optional
        Column mapping, ``"runway=ident,lat=le_lat"`` (headingref's name = the file's).
    last_fit : bool
        Search back for ``last_fit_date`` (default true).

    Returns
    -------
    RunwayCheck
        ``table`` (:data:`OUTPUT_COLUMNS`), ``summary``, ``changes`` (:data:`CHANGE_COLUMNS`).

    Columns: ``true_bearing_deg`` and ``variation_deg`` are both taken at the runway's reference
    point (the midpoint of the centre line); ``magnetic_bearing_deg`` is this end's own azimuth
    minus the variation; ``runway_magnetic_deg`` is the runway's azimuth in this end's direction
    (for a reciprocal pair, the mean of this end's azimuth and the reciprocal of the other's) and is
    what the designator is decided on, so both ends get one decision, reciprocal designators (they
    differ by 18) and the same change dates. ``verdict`` is one of :data:`VERDICTS`;
    ``on_boundary`` is true within the band; ``last_fit_date`` is empty when the painted designator
    fits now, else the last date (on or before ``date``, back to the model's start) it fitted, or
    ``not since <start>``; ``all_changes`` lists every change in the horizon (``date number``).

    A row that cannot be checked (unreadable designator or coordinates, undefined declination)
    gets ``status='error'`` and its ``reason``; the batch goes on. Suspect rows (thresholds under
    100 m or over 6 km apart, reciprocal ends that disagree, duplicates) get ``status='warning'``.
    One :class:`~headingref.errors.DataQualityWarning` summarises them.
    """
    if not isinstance(table, (pd.DataFrame, str, os.PathLike)):
        raise InputError(f"check_runways: table of type {type(table).__name__} is not understood; "
                         "give a pandas DataFrame or the path of a CSV or .xlsx file")
    settings = _settings(date, horizon_years, model, tolerance_deg, band_sigmas, allow_extrapolation, last_fit)
    ends = _read_ends(table, columns)
    _geometry(ends)
    positions = (ends.lat, ends.lon, ends.end_lat, ends.end_lon)
    partner, pair_check = _pair_ends(ends.airport, ends.numbers, ends.suffixes, ends.designator_ok, positions,
                                     ends.true_bearing, ends.published, ends.problems)
    runways = _runways(ends, partner, pair_check)
    variation = _variation(ends, runways, settings)
    judgement = _judge(ends, runways, variation, settings)
    changes = _changes(ends, runways, variation, judgement, settings)
    changes = changes[~ends.problems.has_error()[changes["row"].to_numpy(dtype=np.int64)]].reset_index(drop=True)
    last = _last_fit(ends, runways, judgement, settings)
    out = _assemble(ends, runways, variation, judgement, partner, pair_check, changes, last)
    _warn_summary(out, ends.labels)
    return RunwayCheck(out, _summary(out, changes, settings), changes, settings.notes, settings.model,
                       settings.allow_extrapolation)


def _warn_summary(out: pd.DataFrame, labels: list[str]) -> None:
    for kind in ("error", "warning"):
        rows = np.flatnonzero(out["status"].to_numpy() == kind)
        if rows.size:
            first = "; ".join(f"{labels[i]}: {out['reason'].iat[i]}" for i in rows[:3])
            more = f" (and {rows.size - 3} more)" if rows.size > 3 else ""
            what = "could not be checked" if kind == "error" else "carry warnings"
            warnings.warn(f"{rows.size} runway row(s) {what}: {first}{more}", DataQualityWarning, stacklevel=3)


def write_runway_table(target: PathLike, result: RunwayCheck, changes: bool = False):
    """Write the checked table (or the changes) as CSV or ``.xlsx`` (by the name), rounded, with units in a workbook's header."""
    from .tables import write_table

    frame = result.changes.drop(columns=["row"]) if changes else result.table
    if "zone" in frame.columns:
        frame = frame.assign(zone=frame["zone"].astype(object).fillna(""))
    return write_table(target, frame, units=UNITS, decimals=DECIMALS, sheet="changes" if changes else "runways")


# --------------------------------------------------------------------------- series for plots


def magnetic_bearing_series(
    result: RunwayCheck, rows: Sequence[int], years: Any
) -> pd.DataFrame:
    """The runway magnetic azimuth (``runway_magnetic_deg``) of chosen rows at each of ``years``.

    Parameters
    ----------
    result : RunwayCheck
    rows : sequence of int
        Positions in ``result.table`` (rows with ``status != 'error'``).
    years : array-like of decimal years

    Returns
    -------
    DataFrame indexed by decimal year, one column per row (``'AIRPORT RWY'``), degrees
    magnetic, unwrapped around the check date's value (so 359 -> 361 stays continuous).
    """
    from .elements import field_arrays

    years = np.atleast_1d(np.asarray(years, dtype=np.float64))
    table = result.table
    columns = {}
    for i in rows:
        row = table.iloc[int(i)]
        if not np.isfinite(row.runway_magnetic_deg):
            raise InputError(f"row {i} ({row.airport} {row.runway}) has no magnetic azimuth: {row.reason}")
        f = field_arrays(row.ref_lat_deg, row.ref_lon_deg, years, row.alt_km, model=result.model,
                         allow_extrapolation=result.allow_extrapolation)
        decision_true = row.runway_magnetic_deg + row.variation_deg
        magnetic = np.mod(decision_true - f["declination_deg"], 360.0)
        centre = row.runway_magnetic_deg
        columns[f"{row.airport} {row.runway}"] = centre + np.mod(magnetic - centre + 180.0, 360.0) - 180.0
    return pd.DataFrame(columns, index=pd.Index(years, name="decimal_year"))
