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

Boundary policy
---------------
The rounding boundaries sit at azimuths ending in 5 (85 and 95 degrees bound 09). At an exact
tie (85.000...) :func:`designator_from_magnetic` rounds half up (to the higher number), as the
US Navy airfield marking manual states ("5 degrees or more, the designation is the next
higher number"), while the FAA Aeronautical Information Manual 4-3-6 says a magnetic
azimuth ending in 5 may be designated either way. Because authorities differ, and because the
model declination itself is uncertain by a few tenths of a degree (see
``variation_uncertainty_deg``), :func:`check_runways` gives no verdict inside a band of
``tolerance_deg`` either side of a boundary: a published designator equal to either
neighbouring number is reported ``on boundary``. The default band, 0.25 degree
(:data:`BOUNDARY_TOLERANCE_DEG`), is headingref's own choice (common practice for survey
rounding of azimuths to the quarter degree; no published figure found) and can be changed.

Geometry and field
------------------
True azimuth: the WGS84 geodesic from this end's threshold towards the opposite threshold
(``pyproj.Geod.inv``, Karney's algorithm). Variation: the field model (IGRF-14 by default) at
the midpoint of the geodesic between the thresholds (at the threshold when only a true
bearing is given), at the runway elevation if given (taken as height above the ellipsoid; the
geoid separation of at most ~100 m changes the declination by far less than its uncertainty).
Magnetic azimuth = true azimuth - variation (east positive).

Forecast
--------
The designator changes when the magnetic azimuth crosses a boundary. Headingref's models are
piecewise linear in time in their Gauss coefficients (IGRF: linear between 5-year epochs;
WMM: linear secular variation), so at a fixed place the north and east components X(t), Y(t)
are linear between the model's epochs. :func:`check_runways` evaluates the field for all
runways at the check date, every model epoch inside the horizon and the horizon's end in one
vectorised call and interpolates X and Y linearly between them (exact for such models);
:func:`forecast_designator_changes` then samples the designator on a monthly grid, brackets
the first change and bisects on whole days. Any variation-against-time function can be
given to :func:`forecast_designator_changes` instead.

Beyond the model's validity (IGRF-14: up to 2030.0) the forecast stops at the validity end
unless ``allow_extrapolation=True``, which extends the last secular variation linearly and
warns (:class:`~headingref.errors.ExtrapolationWarning`).

Public API
----------
- :func:`check_runways` -> :class:`RunwayCheck` (``.table``, ``.summary``, ``.changes``)
- :func:`designator_from_magnetic`, :func:`boundary_margin_deg`, :func:`parse_designator`,
  :func:`format_designator`, :func:`reciprocal_designator`
- :func:`forecast_designator_changes` (the forecast core, variation function injectable)
- :func:`magnetic_bearing_series` (magnetic azimuth against time, for plots)

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

from .errors import DataQualityWarning, InputError
from .io import read_table
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


@dataclass
class _KnotVariation:
    """Variation from X and Y sampled at knots, linear in time between them (exact for Model)."""

    knot_years: np.ndarray  # (K,)
    north_nT: np.ndarray  # (N, K)
    east_nT: np.ndarray  # (N, K)

    def __call__(self, index: np.ndarray, years: np.ndarray) -> np.ndarray:
        index = np.asarray(index, dtype=np.int64)
        years = np.asarray(years, dtype=np.float64)
        knots = self.knot_years
        k = np.clip(np.searchsorted(knots, years, side="right") - 1, 0, knots.size - 2)
        weight = (years - knots[k]) / (knots[k + 1] - knots[k])
        north = self.north_nT[index, k] * (1.0 - weight) + self.north_nT[index, k + 1] * weight
        east = self.east_nT[index, k] * (1.0 - weight) + self.east_nT[index, k + 1] * weight
        return np.degrees(np.arctan2(east, north))


# --------------------------------------------------------------------------- input parsing


_REQUIRED = ("airport", "runway", "lat", "lon")
_OPTIONAL = ("end_lat", "end_lon", "true_bearing_deg", "elevation")


class _Problems:
    """Per-row error and warning messages."""

    def __init__(self, count: int):
        self.errors: list[list[str]] = [[] for _ in range(count)]
        self.warnings: list[list[str]] = [[] for _ in range(count)]

    def error(self, rows: Any, message: str | Sequence[str]) -> None:
        self._add(self.errors, rows, message)

    def warn(self, rows: Any, message: str | Sequence[str]) -> None:
        self._add(self.warnings, rows, message)

    @staticmethod
    def _add(store: list[list[str]], rows: Any, message: str | Sequence[str]) -> None:
        rows = np.flatnonzero(rows) if np.asarray(rows).dtype == bool else np.atleast_1d(rows)
        for j, i in enumerate(rows):
            store[int(i)].append(message if isinstance(message, str) else message[j])

    def has_error(self) -> np.ndarray:
        return np.array([bool(e) for e in self.errors], dtype=bool)


def _as_cells(table: pd.DataFrame | str | os.PathLike) -> tuple[pd.DataFrame, list[str]]:
    """The input as a DataFrame with lower-case column names, plus a row label per row."""
    if isinstance(table, pd.DataFrame):
        frame = table.rename(columns=lambda c: str(c).strip().lower())
        source = frame.attrs.get("source")
        missing = [c for c in _REQUIRED if c not in frame.columns]
        if missing:
            raise InputError(
                f"runway table: missing column(s) {', '.join(missing)}; found {', '.join(map(str, frame.columns)) or 'none'}; "
                f"expected {', '.join(_REQUIRED)} and either end_lat, end_lon or true_bearing_deg [, elevation]"
            )
        if frame.empty:
            raise InputError("runway table has no rows")
        labels = [f"{source} line {i}" if source else f"row {i}" for i in frame.index]
    else:
        frame = read_table(table, required=_REQUIRED, optional=_OPTIONAL, what="runway table")
        source = frame.attrs["source"]
        labels = [f"{source} line {i}" for i in frame.index]
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
    """Elevation column (metres unless a unit is given: '450 m', '1476 ft') as km; blank -> 0."""
    out = np.zeros(len(frame))
    if "elevation" not in frame.columns:
        return out
    series = frame["elevation"]
    blank = _blank(series)
    numeric = pd.to_numeric(series, errors="coerce").to_numpy(dtype=np.float64)
    plain = ~blank & np.isfinite(numeric)
    out[plain] = numeric[plain] * 1e-3
    for i in np.flatnonzero(~blank & ~plain):
        try:
            out[i] = parse_height_km(series.iloc[i], default_unit="m")
        except InputError as exc:
            problems.error(i, f"elevation: {exc}")
    unlikely = ~blank & ((out < -1.0) | (out > 10.0))
    for i in np.flatnonzero(unlikely):
        problems.error(i, f"elevation {series.iloc[i]!r} is outside -1000 to 10000 m (plain numbers are metres; '1200 ft')")
    out[unlikely] = 0.0
    return out


def _designators(frame: pd.DataFrame, problems: _Problems) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    numbers = np.zeros(len(frame), dtype=np.int64)
    suffixes = np.full(len(frame), "", dtype=object)
    valid = np.zeros(len(frame), dtype=bool)
    for i, cell in enumerate(frame["runway"].tolist()):
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
            "key": [format_designator(n, s) for n, s in zip(numbers, suffixes, strict=True)],
            "recip": [format_designator((n + 17) % 36 + 1, _RECIPROCAL_SUFFIX.get(s, "")) for n, s in zip(numbers, suffixes, strict=True)],
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


# --------------------------------------------------------------------------- the check


@dataclass
class RunwayCheck:
    """Result of :func:`check_runways`.

    Attributes
    ----------
    table : pandas.DataFrame
        One row per input row, in input order (columns in :data:`OUTPUT_COLUMNS`).
    summary : dict
        Counts and settings (see :meth:`summary_text`).
    changes : pandas.DataFrame
        Rows whose implied designator changes within the horizon, sorted by ``change_date``.
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
            f"  match: {s['match']}   mismatch: {s['mismatch']}   on boundary (within {s['tolerance_deg']:g} deg): {s['on_boundary']}",
            f"  implied designator changes within the horizon: {s['changes_within_horizon']}",
        ]
        lines += [f"  note: {note}" for note in self.notes]
        return "\n".join(lines)

    def changes_text(self, limit: int | None = None) -> str:
        """The runways whose implied designator changes within the horizon, soonest first."""
        rows = self.changes if limit is None else self.changes.head(limit)
        if rows.empty:
            return f"No implied designator changes before {self.summary['forecast_end']}."
        a = max(7, rows["airport"].astype(str).str.len().max())
        w = max(6, rows["runway"].astype(str).str.len().max())
        out = [f"{'change':<10}  {'airport':<{a}}  {'runway':<{w}}  {'implied now -> next':<19}  {'magnetic now':>12}  {'in years':>8}"]
        for r in rows.itertuples():
            out.append(
                f"{r.change_date:<10}  {r.airport:<{a}}  {r.runway:<{w}}  {r.designator_implied + ' -> ' + r.next_designator:<19}"
                f"  {r.magnetic_bearing_deg:12.2f}  {r.years_to_change:8.2f}"
            )
        if limit is not None and len(self.changes) > limit:
            out.append(f"... and {len(self.changes) - limit} more (see the output table)")
        return "\n".join(out)


OUTPUT_COLUMNS = (
    "input_row",
    "airport",
    "runway",
    "true_bearing_deg",
    "variation_deg",
    "magnetic_bearing_deg",
    "designator_implied",
    "designator_matches",
    "verdict",
    "on_boundary",
    "margin_deg",
    "boundary_deg",
    "change_date",
    "next_designator",
    "years_to_change",
    "pair_runway",
    "pair_check",
    "variation_uncertainty_deg",
    "zone",
    "length_m",
    "mid_lat_deg",
    "mid_lon_deg",
    "alt_km",
    "status",
    "reason",
)


def _horizon_end(start: pd.Timestamp, horizon_years: float) -> pd.Timestamp:
    whole = int(math.floor(horizon_years))
    return start + pd.DateOffset(years=whole) + pd.Timedelta(days=round((horizon_years - whole) * 365.2425))


def check_runways(
    table: pd.DataFrame | str | os.PathLike,
    date: Any,
    horizon_years: float = 10.0,
    model: Model | str | os.PathLike | None = None,
    tolerance_deg: float = BOUNDARY_TOLERANCE_DEG,
    allow_extrapolation: bool = False,
) -> RunwayCheck:
    """Check published runway designators against the magnetic azimuth and forecast changes.

    Parameters
    ----------
    table : DataFrame or path of a CSV file
        Columns ``airport, runway, lat, lon`` and either ``end_lat, end_lon`` (the opposite
        threshold) or ``true_bearing_deg``; optional ``elevation`` (metres, or with a unit:
        ``1476 ft``). Latitudes/longitudes in decimal degrees (north/east positive) or
        degrees-minutes-seconds text. If both end coordinates and a true bearing are given,
        the coordinates are used and a bearing differing by more than 0.5 degree is warned.
    date : date-like or decimal year
        The check date (UTC).
    horizon_years : float
        Forecast length, years (0 for no forecast).
    model : Model, path or None
        Field model (default IGRF-14).
    tolerance_deg : float
        Half-width of the 'on boundary' band, degrees (0 gives a verdict everywhere except at
        exact ties).
    allow_extrapolation : bool
        Forecast past the model's validity (warns); otherwise the forecast stops at its end.

    Returns
    -------
    RunwayCheck
        ``table`` (see :data:`OUTPUT_COLUMNS`; ``designator_implied`` and ``next_designator``
        are the rule's number with the published suffix kept), ``summary``, ``changes``.

    A row that cannot be checked (unreadable designator or coordinates, undefined declination)
    gets ``status='error'`` and its ``reason``; the batch goes on. Suspect rows (thresholds under
    100 m or over 6 km apart, reciprocal ends that disagree, duplicates) get ``status='warning'``.
    One :class:`~headingref.errors.DataQualityWarning` summarises them.
    """
    from .field import field_arrays

    if isinstance(tolerance_deg, bool) or not (isinstance(tolerance_deg, Real) and 0.0 <= tolerance_deg < 5.0):
        raise InputError(f"tolerance {tolerance_deg!r} deg is not a number from 0 up to 5 degrees")
    if isinstance(horizon_years, bool) or not (isinstance(horizon_years, Real) and 0.0 <= horizon_years <= 200.0):
        raise InputError(f"horizon {horizon_years!r} years is not a number from 0 to 200 years")
    the_model = load_model(model)
    start_year = float(decimal_year(date))
    start = timestamp_from_decimal_year(start_year).round("s")
    the_model.check_dates(np.array([start_year]), allow_extrapolation)

    frame, labels = _as_cells(table)
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
    bearing_given = ~_blank(frame.get("true_bearing_deg", blank_col))
    end_lat = _numbers(frame, "end_lat", "lat", problems, end_lat_given)
    end_lon = _numbers(frame, "end_lon", "lon", problems, end_lon_given)
    given_bearing = _numbers(frame, "true_bearing_deg", "bearing", problems, bearing_given)
    problems.error(end_lat_given != end_lon_given, "give both end_lat and end_lon (the opposite threshold), or neither")
    problems.error(~(end_lat_given & end_lon_given) & ~bearing_given, "no end_lat/end_lon and no true_bearing_deg: the azimuth is unknown")
    alt_km = _elevations_km(frame, problems)

    # Geometry: geodesic from this threshold to the opposite one (pyproj.Geod.inv, WGS84).
    use_ends = np.isfinite(lat) & np.isfinite(lon) & np.isfinite(end_lat) & np.isfinite(end_lon)
    true_bearing = np.where(bearing_given & ~use_ends, np.mod(given_bearing, 360.0), np.nan)
    length_m = np.full(count, np.nan)
    mid_lat, mid_lon = lat.copy(), lon.copy()
    if use_ends.any():
        az, _, dist = _GEOD.inv(lon[use_ends], lat[use_ends], end_lon[use_ends], end_lat[use_ends])
        m_lon, m_lat, _ = _GEOD.fwd(lon[use_ends], lat[use_ends], az, dist / 2.0)
        true_bearing[use_ends] = np.mod(az, 360.0)
        length_m[use_ends] = dist
        mid_lat[use_ends], mid_lon[use_ends] = m_lat, m_lon
    coincident = use_ends & (length_m < 0.01)
    problems.error(coincident, "the two thresholds coincide: the azimuth is undefined")
    true_bearing[coincident] = np.nan
    short = use_ends & ~coincident & (length_m < MIN_THRESHOLD_SEPARATION_M)
    long_ = use_ends & (length_m > MAX_THRESHOLD_SEPARATION_M)
    problems.warn(short, [f"thresholds only {d:.0f} m apart (expected 100 m to 6 km): swapped or repeated coordinates?" for d in length_m[short]])
    problems.warn(long_, [f"thresholds {d / 1000:.1f} km apart (expected 100 m to 6 km): wrong units or swapped lat/lon?" for d in length_m[long_]])
    both = use_ends & bearing_given & np.isfinite(given_bearing)
    disagree = both & (np.abs(np.mod(given_bearing - true_bearing + 180.0, 360.0) - 180.0) > 0.5)
    problems.warn(disagree, [f"true_bearing_deg {g:.2f} differs from the thresholds' azimuth {t:.2f}; the thresholds are used"
                             for g, t in zip(given_bearing[disagree], true_bearing[disagree], strict=True)])

    # Field at the check date and at every model epoch inside the forecast window, one call.
    horizon_end = _horizon_end(start, float(horizon_years))
    notes: list[str] = []
    end_year = float(decimal_year(horizon_end))
    if end_year > the_model.valid_to and not allow_extrapolation:
        cut = timestamp_from_decimal_year(the_model.valid_to).floor("D")
        if cut <= start:
            cut = start
        notes.append(
            f"the forecast stops at {cut.date()}, the end of {the_model.name}'s validity, instead of {horizon_end.date()}; "
            "opt in to extrapolation to forecast further (secular variation extended linearly)"
        )
        horizon_end = cut
    forecast_days = max(0, int((horizon_end - start) / pd.Timedelta(days=1)))
    end_year = float(decimal_year(start + pd.Timedelta(days=forecast_days)))
    if end_year > the_model.valid_to:
        notes.append(f"past {the_model.valid_to:g} the {the_model.name} secular variation is extrapolated linearly")
    inner = the_model.starts[(the_model.starts > start_year) & (the_model.starts < end_year)]
    # One knot when there is no forecast (the field at the check date only): a padding knot a day
    # later fell outside the model at its last valid date (2030-01-01 for IGRF-14).
    knots = np.unique(np.concatenate([[start_year], inner, [end_year]]))

    geometry_ok = np.isfinite(true_bearing) & np.isfinite(mid_lat) & np.isfinite(mid_lon)
    computable = np.flatnonzero(geometry_ok)
    n_ok, n_knots = computable.size, knots.size
    variation = np.full(count, np.nan)
    uncertainty = np.full(count, np.nan)
    zone = np.full(count, "", dtype=object)
    north = np.empty((n_ok, n_knots))
    east = np.empty((n_ok, n_knots))
    if n_ok:
        f = field_arrays(
            np.repeat(mid_lat[computable], n_knots),
            np.repeat(mid_lon[computable], n_knots),
            np.tile(knots, n_ok),
            np.repeat(alt_km[computable], n_knots),
            model=the_model,
            allow_extrapolation=allow_extrapolation,
        )
        north = f["north_nT"].reshape(n_ok, n_knots)
        east = f["east_nT"].reshape(n_ok, n_knots)
        at_start = np.arange(n_ok) * n_knots
        variation[computable] = f["declination_deg"][at_start]
        uncertainty[computable] = f["declination_uncertainty_deg"][at_start]
        zone[computable] = np.array(["normal", "caution", "blackout"], dtype=object)[f["zone_code"][at_start]]
        flags = f["declination_flag"][at_start]
        undefined = computable[~np.isfinite(variation[computable])]
        problems.error(undefined, [f"declination undefined ({flags[np.searchsorted(computable, i)] or 'no horizontal field'})" for i in undefined])
        weak = computable[zone[computable] != "normal"]
        problems.warn(weak, [f"weak horizontal field ({zone[i]} zone): variation uncertain by {uncertainty[i]:.1f} deg" for i in weak])

    magnetic = np.mod(true_bearing - variation, 360.0)
    defined = np.isfinite(magnetic)
    implied = np.zeros(count, dtype=np.int64)
    margin = np.full(count, np.nan)
    boundary = np.full(count, np.nan)
    neighbour = np.zeros(count, dtype=np.int64)
    implied[defined] = designator_from_magnetic(magnetic[defined])
    margin[defined], boundary[defined], neighbour[defined] = boundary_margin_deg(magnetic[defined])

    partner, pair_check = _pair_ends(
        airport, numbers, suffixes, designator_ok, (lat, lon, end_lat, end_lon), true_bearing, published, problems
    )

    judged = defined & designator_ok
    matches = judged & (numbers == implied)
    on_boundary = defined & (margin <= tolerance_deg)
    verdict = np.full(count, "", dtype=object)
    verdict[judged] = np.where(matches[judged], "match", "mismatch")
    verdict[judged & on_boundary & ((numbers == implied) | (numbers == neighbour))] = "on boundary"

    # Forecast of the first change of the implied designator.
    change_day = np.full(count, -1, dtype=np.int64)
    next_number = np.zeros(count, dtype=np.int64)
    forecastable = np.flatnonzero(defined[computable]) if n_ok else np.array([], dtype=np.int64)
    if forecast_days >= 1 and forecastable.size:
        provider = _KnotVariation(knots, north[forecastable], east[forecastable])
        rows = computable[forecastable]
        change_day[rows], next_number[rows] = forecast_designator_changes(true_bearing[rows], start, forecast_days, provider)

    errors = problems.has_error()
    status = np.where(errors, "error", np.where([bool(w) for w in problems.warnings], "warning", "ok"))
    reason = np.array(["; ".join(e + w) for e, w in zip(problems.errors, problems.warnings, strict=True)], dtype=object)
    suffix_kept = np.where(designator_ok, suffixes, "")
    verdict[errors] = ""
    changing = change_day >= 0
    change_dates = np.full(count, "", dtype=object)
    if changing.any():
        stamps = pd.DatetimeIndex(start + pd.to_timedelta(change_day[changing], unit="D"))
        change_dates[changing] = stamps.strftime("%Y-%m-%d").to_numpy()
    out = pd.DataFrame(
        {
            "input_row": labels,
            "airport": airport,
            "runway": published,
            "true_bearing_deg": true_bearing,
            "variation_deg": variation,
            "magnetic_bearing_deg": np.where(defined, magnetic, np.nan),
            "designator_implied": [format_designator(n, s) if d else "" for n, s, d in zip(implied, suffix_kept, defined, strict=True)],
            "designator_matches": pd.array(np.where(judged, matches, pd.NA), dtype="boolean"),
            "verdict": verdict,
            "on_boundary": pd.array(np.where(defined, on_boundary, pd.NA), dtype="boolean"),
            "margin_deg": margin,
            "boundary_deg": boundary,
            "change_date": change_dates,
            "next_designator": [format_designator(n, s) if c else "" for n, s, c in zip(next_number, suffix_kept, changing, strict=True)],
            "years_to_change": np.where(changing, change_day / 365.2425, np.nan),
            "pair_runway": [published[p] if p >= 0 else "" for p in partner],
            "pair_check": pair_check,
            "variation_uncertainty_deg": uncertainty,
            "zone": zone,
            "length_m": length_m,
            "mid_lat_deg": np.where(defined, mid_lat, np.nan),
            "mid_lon_deg": np.where(defined, mid_lon, np.nan),
            "alt_km": alt_km,
            "status": status,
            "reason": reason,
        },
        columns=list(OUTPUT_COLUMNS),
    )
    changes = out[changing & ~errors].sort_values(["change_date", "airport", "runway"], kind="stable")
    summary = {
        "date": str(start.date()) if start == start.floor("D") else str(start),
        "model": the_model.name,
        "horizon_years": float(horizon_years),
        "forecast_end": str((start + pd.Timedelta(days=forecast_days)).date()),
        "tolerance_deg": float(tolerance_deg),
        "rows": count,
        "checked": int(defined.sum()),
        "errors": int((status == "error").sum()),
        "warnings": int((status == "warning").sum()),
        "match": int((verdict == "match").sum()),
        "mismatch": int((verdict == "mismatch").sum()),
        "on_boundary": int((verdict == "on boundary").sum()),
        "changes_within_horizon": int((changing & ~errors).sum()),
    }
    _warn_summary(out, labels)
    return RunwayCheck(out, summary, changes, notes, the_model, allow_extrapolation)


def _warn_summary(out: pd.DataFrame, labels: list[str]) -> None:
    for kind in ("error", "warning"):
        rows = np.flatnonzero(out["status"].to_numpy() == kind)
        if rows.size:
            first = "; ".join(f"{labels[i]}: {out['reason'].iat[i]}" for i in rows[:3])
            more = f" (and {rows.size - 3} more)" if rows.size > 3 else ""
            what = "could not be checked" if kind == "error" else "carry warnings"
            warnings.warn(f"{rows.size} runway row(s) {what}: {first}{more}", DataQualityWarning, stacklevel=3)


# --------------------------------------------------------------------------- series for plots


def magnetic_bearing_series(
    result: RunwayCheck, rows: Sequence[int], years: Any
) -> pd.DataFrame:
    """Magnetic azimuth of chosen rows of a :class:`RunwayCheck` at each of ``years``.

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
    from .field import field_arrays

    years = np.atleast_1d(np.asarray(years, dtype=np.float64))
    table = result.table
    columns = {}
    for i in rows:
        row = table.iloc[int(i)]
        if not np.isfinite(row.magnetic_bearing_deg):
            raise InputError(f"row {i} ({row.airport} {row.runway}) has no magnetic azimuth: {row.reason}")
        f = field_arrays(row.mid_lat_deg, row.mid_lon_deg, years, row.alt_km, model=result.model,
                         allow_extrapolation=result.allow_extrapolation)
        magnetic = np.mod(row.true_bearing_deg - f["declination_deg"], 360.0)
        centre = row.magnetic_bearing_deg
        columns[f"{row.airport} {row.runway}"] = centre + np.mod(magnetic - centre + 180.0, 360.0) - 180.0
    return pd.DataFrame(columns, index=pd.Index(years, name="decimal_year"))
