"""VOR station declination: how far the radials have drifted from magnetic, and when to realign.

A VOR's radials are referenced to the station's *station declination*, the variation set when
the station was last aligned (ICAO: the alignment variation between the zero-degree radial and
true north, determined when the station is calibrated; AIXM ``VOR.declination``). The magnetic
variation keeps drifting, so the radial ``R`` (magnetic by the station's declination) points
``variation - station_declination`` degrees away from the magnetic bearing ``R`` computed with
today's variation; procedures built on the radials are reviewed and the station realigned when
that difference grows past a tolerance.

Method
------
For each station: variation ``V`` (east positive) of the field model (IGRF-14 by default) at the
station and the check date; ``difference_deg = V - station_declination_deg``; ``exceeds`` is
``|difference| > tolerance``. ``realign_date`` is the first day within the horizon on which the
difference exceeds the tolerance (the check date itself when it already does). As in
:mod:`headingref.runways`, the model is piecewise linear in time, so the north and east components
are linear between the knots (check date, model epochs, horizon end) and the day the declination
reaches ``station_declination +/- tolerance`` is the root of a linear equation: exact, no sampling.

Tolerance
---------
Default :data:`DEFAULT_TOLERANCE_DEG` = 3 degrees. Source: NAV CANADA AIC 12/08 (2012), as
summarised publicly: published variation in the southern domestic airspace is kept within +/-2
degrees, VORs within +/-3 degrees. The FAA reviews a VOR's magnetic variation of record against
the current epoch's variation under FAA Order 8260.19 (Flight Procedures and Airspace); its
threshold is not restated here (from memory; not verified against the order's text). Set
``tolerance_deg`` to the figure your authority uses.

Input
-----
CSV or ``.xlsx``: ``ident, lat, lon, station_declination_deg`` (east positive; ``12.5W`` and
``E3`` are accepted too) and optional ``alignment_date`` (the model variation on that date is
reported as ``variation_at_alignment_deg``: far from the station declination, it points to a data
error) and elevation (``elevation`` with a unit
in each value, or ``elevation_m`` / ``elevation_ft``). A column mapping renames the file's
columns (``columns="ident=id,station_declination_deg=slaved_var"``).

Public API: :func:`check_navaids` -> :class:`NavaidCheck`; :data:`OUTPUT_COLUMNS`,
:data:`DEFAULT_TOLERANCE_DEG`.

>>> import pandas as pd
>>> from headingref.navaids import check_navaids
>>> stations = pd.DataFrame({"ident": ["XQA"], "lat": [64.8], "lon": [-147.6], "station_declination_deg": [20.0]})
>>> row = check_navaids(stations, "2026-12-02", horizon_years=3).table.iloc[0]
>>> bool(row.exceeds), row.realign_date
(True, '2026-12-02')
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from numbers import Real
from typing import Any

import numpy as np
import pandas as pd

from ._types import DateLike, ModelLike, PathLike, TableSource
from .errors import InputError
from .io import coordinate_column, date_column
from .runways import _crossing_fraction, _KnotField, _stamps
from .units import parse_height_km

__all__ = ["DEFAULT_TOLERANCE_DEG", "OUTPUT_COLUMNS", "NavaidCheck", "check_navaids", "write_navaid_table"]

DEFAULT_TOLERANCE_DEG = 3.0
"""Default |variation - station declination| that calls for review, degrees (see module docstring)."""

REQUIRED = ("ident", "lat", "lon", "station_declination_deg")
OPTIONAL = ("alignment_date", "elevation", "elevation_m", "elevation_ft")

OUTPUT_COLUMNS = (
    "input_row", "ident", "lat", "lon", "station_declination_deg", "alignment_date", "variation_at_alignment_deg",
    "variation_deg", "difference_deg",
    "exceeds", "realign_date", "years_to_realign", "declination_rate_deg_per_year", "variation_uncertainty_deg", "zone",
    "alt_km",
)
"""Columns of :attr:`NavaidCheck.table`."""

UNITS = {
    "lat": "deg N", "lon": "deg E", "station_declination_deg": "deg, east positive", "variation_deg": "deg, east positive",
    "difference_deg": "deg, variation - station declination", "years_to_realign": "years",
    "declination_rate_deg_per_year": "deg/year", "variation_uncertainty_deg": "deg, 1 sigma", "alt_km": "km",
    "realign_date": "UTC date", "alignment_date": "UTC date", "variation_at_alignment_deg": "deg, east positive",
}
DECIMALS = {"lat": 6, "lon": 6, "station_declination_deg": 2, "variation_at_alignment_deg": 2, "variation_deg": 2, "difference_deg": 2, "years_to_realign": 2,
            "declination_rate_deg_per_year": 3, "variation_uncertainty_deg": 2, "alt_km": 3}


@dataclass
class NavaidCheck:
    """Result of :func:`check_navaids`: ``table`` (:data:`OUTPUT_COLUMNS`), ``summary``, ``notes``."""

    table: pd.DataFrame
    summary: dict
    notes: list[str] = field(default_factory=list)

    def summary_text(self) -> str:
        s = self.summary
        lines = [
            f"VOR station declination check for {s['date']} with {s['model']} (horizon to {s['forecast_end']})",
            f"  stations: {s['rows']}   exceeding {s['tolerance_deg']:g} deg now: {s['exceeds']}   "
            f"exceeding within the horizon: {s['due_within_horizon']}",
        ]
        return "\n".join(lines + [f"  note: {n}" for n in self.notes])

    def table_text(self, limit: int | None = 20) -> str:
        """Stations that exceed now or within the horizon, soonest first."""
        t = self.table[self.table["realign_date"] != ""].sort_values(["realign_date", "ident"], kind="stable")
        if t.empty:
            return f"No station exceeds {self.summary['tolerance_deg']:g} deg before {self.summary['forecast_end']}."
        shown = t if limit is None else t.head(limit)
        w = max(5, shown["ident"].astype(str).str.len().max())
        out = [f"{'ident':<{w}}  {'station decl':>12}  {'variation':>9}  {'difference':>10}  realign by"]
        for r in shown.itertuples():
            out.append(f"{r.ident:<{w}}  {r.station_declination_deg:12.2f}  {r.variation_deg:9.2f}  {r.difference_deg:10.2f}  "
                       f"{r.realign_date}{'  (exceeds now)' if r.exceeds else ''}")
        if limit is not None and len(t) > limit:
            out.append(f"... and {len(t) - limit} more (see the output table)")
        return "\n".join(out)


def _as_text_frame(table: pd.DataFrame | str | os.PathLike, columns: Any) -> pd.DataFrame:
    """The input as read_table gives it: strings, index = row number, attrs['source']."""
    from .tables import apply_column_mapping, parse_column_mapping, read_source

    mapping = parse_column_mapping(columns, REQUIRED + OPTIONAL, "navaid columns")
    if not isinstance(table, pd.DataFrame):
        return read_source(table, REQUIRED, OPTIONAL, what="navaid table", columns=mapping)
    frame = apply_column_mapping(table.rename(columns=lambda c: str(c).strip().lower()), mapping, "navaid table")
    missing = [c for c in REQUIRED if c not in frame.columns]
    if missing:
        raise InputError(f"navaid table: missing column(s) {', '.join(missing)}; expected {', '.join(REQUIRED)}")
    if frame.empty:
        raise InputError("navaid table has no rows")
    text = frame.astype(object).where(frame.notna(), "").map(lambda v: str(v).strip())
    text.index = pd.RangeIndex(1, len(text) + 1, name="line")
    text.attrs["source"] = frame.attrs.get("source", "table")
    return text


def _read(frame: pd.DataFrame) -> dict:
    """Every column as numbers; the first bad cell stops with its file line."""
    from .headings import parse_variation
    from .units import height_column

    source = frame.attrs.get("source", "table")
    out = {
        "ident": frame["ident"].to_numpy(dtype=object),
        "lat": coordinate_column(frame, "lat", "lat"),
        "lon": coordinate_column(frame, "lon", "lon"),
    }
    declination = np.empty(len(frame))
    for i, (line, cell) in enumerate(frame["station_declination_deg"].items()):
        if cell == "":
            raise InputError(f"{source} line {line}: station_declination_deg is empty; give degrees east positive (or 12.5W)")
        try:
            declination[i] = parse_variation(cell)
        except InputError as exc:
            raise InputError(f"{source} line {line}: station_declination_deg: {exc}") from None
    out["station_declination_deg"] = declination
    for line, ident in zip(frame.index, out["ident"], strict=True):
        if not ident:
            raise InputError(f"{source} line {line}: ident is empty")
    alt = np.zeros(len(frame))
    column, unit = height_column(frame.columns, base="elevation")
    if column is not None:
        for i, (line, cell) in enumerate(frame[column].items()):
            if cell != "":
                try:
                    alt[i] = parse_height_km(cell, default_unit=unit, max_km=10.0)
                except InputError as exc:
                    raise InputError(f"{source} line {line}: {column}: {exc}") from None
    out["alt_km"] = alt
    dates = np.full(len(frame), "", dtype=object)
    if "alignment_date" in frame.columns:
        given = frame["alignment_date"] != ""
        if given.any():
            date_column(frame[given], "alignment_date")  # row-named error for a bad date
            dates[given.to_numpy()] = frame["alignment_date"][given].to_numpy()
    out["alignment_date"] = dates
    return out


def check_navaids(
    table: TableSource,
    date: DateLike,
    tolerance_deg: float = DEFAULT_TOLERANCE_DEG,
    horizon_years: float = 10.0,
    model: ModelLike = None,
    allow_extrapolation: bool = False,
    columns: str | dict | None = None,
) -> NavaidCheck:
    """Compare each VOR's station declination with the model variation now and over the horizon.

    Parameters
    ----------
    table : DataFrame or path of a CSV / ``.xlsx`` file
        ``ident, lat, lon, station_declination_deg`` [, ``alignment_date``, elevation]; see the
        module docstring.
    date : date-like or decimal year
        Check date (UTC).
    tolerance_deg : float
        Largest acceptable |variation - station declination|, degrees (default 3; see module docstring).
    horizon_years : float
        How far ahead to look for the day the tolerance is exceeded.
    model, allow_extrapolation
        Field model (IGRF-14 default) and whether to go past its validity (warns).
    columns : str or dict, optional
        Column mapping ``"ident=id,station_declination_deg=slaved_var"``.

    Returns
    -------
    NavaidCheck
        ``difference_deg`` = variation - station declination (east positive, degrees);
        ``realign_date`` is '' when the tolerance is not exceeded within the horizon.
    """
    from .elements import ZONE_DTYPE, field_arrays
    from .runways import _settings

    if isinstance(tolerance_deg, bool) or not (isinstance(tolerance_deg, Real) and 0.0 < tolerance_deg <= 30.0):
        raise InputError(f"tolerance {tolerance_deg!r} deg is not a number above 0 and up to 30 degrees")
    settings = _settings(date, horizon_years, model, 0.0, None, allow_extrapolation, False)
    frame = _as_text_frame(table, columns)
    values = _read(frame)
    n = len(frame)
    knots = np.unique(np.concatenate([[settings.start_year],
                                      settings.model.starts[(settings.model.starts > settings.start_year)
                                                            & (settings.model.starts < settings.end_year)],
                                      [settings.end_year]]))
    k = knots.size
    f = field_arrays(np.repeat(values["lat"], k), np.repeat(values["lon"], k), np.tile(knots, n),
                     np.repeat(values["alt_km"], k), model=settings.model, allow_extrapolation=settings.allow_extrapolation)
    now = np.arange(n) * k
    variation = f["declination_deg"][now]
    undefined = ~np.isfinite(variation)
    if undefined.any():
        i = int(np.flatnonzero(undefined)[0])
        raise InputError(f"{frame.attrs.get('source', 'table')} line {frame.index[i]}: {values['ident'][i]}: the declination "
                         "is undefined there (at a pole or with no horizontal field); a VOR cannot be aligned to it")
    station = values["station_declination_deg"]
    difference = np.mod(variation - station + 180.0, 360.0) - 180.0
    exceeds = np.abs(difference) > tolerance_deg
    knot_field = _KnotField(knots, f["north_nT"].reshape(n, k), f["east_nT"].reshape(n, k))
    first = np.full(n, np.nan)
    for j in range(k - 1):
        x0, y0 = knot_field.north_nT[:, j], knot_field.east_nT[:, j]
        x1, y1 = knot_field.north_nT[:, j + 1], knot_field.east_nT[:, j + 1]
        for side in (tolerance_deg, -tolerance_deg):
            year = knots[j] + _crossing_fraction(x0, y0, x1, y1, station + side) * (knots[j + 1] - knots[j])
            year = np.where(year > settings.start_year, year, np.nan)
            first = np.fmin(first, year)
    realign = np.full(n, "", dtype=object)
    years_to = np.full(n, np.nan)
    realign[exceeds] = str(settings.start.date())
    years_to[exceeds] = 0.0
    due = ~exceeds & np.isfinite(first)
    if due.any():
        delta = (_stamps(first[due]) - np.datetime64(settings.start.to_datetime64(), "ns")) / np.timedelta64(1, "D")
        days = np.maximum(1, np.ceil(delta)).astype(np.int64)
        stamps = pd.DatetimeIndex(settings.start + pd.to_timedelta(days, unit="D"))
        realign[due] = np.asarray(stamps.strftime("%Y-%m-%d"), dtype=object)
        years_to[due] = days / 365.2425
    at_alignment = _variation_at_alignment(values, settings)
    labels = [f"{frame.attrs.get('source', 'table')} line {i}" for i in frame.index]
    out = pd.DataFrame({
        "input_row": labels, "ident": values["ident"], "lat": values["lat"], "lon": values["lon"],
        "station_declination_deg": station, "alignment_date": values["alignment_date"],
        "variation_at_alignment_deg": at_alignment, "variation_deg": variation,
        "difference_deg": difference, "exceeds": exceeds, "realign_date": realign, "years_to_realign": years_to,
        "declination_rate_deg_per_year": f["declination_deg_per_year"][now],
        "variation_uncertainty_deg": f["declination_uncertainty_deg"][now],
        "zone": pd.Categorical.from_codes(f["zone_code"][now], dtype=ZONE_DTYPE), "alt_km": values["alt_km"],
    }, columns=list(OUTPUT_COLUMNS))
    summary = {
        "date": str(settings.start.date()), "model": settings.model.name, "tolerance_deg": float(tolerance_deg),
        "horizon_years": float(horizon_years),
        "forecast_end": str((settings.start + pd.Timedelta(days=settings.forecast_days)).date()),
        "rows": n, "exceeds": int(exceeds.sum()), "due_within_horizon": int(due.sum()),
    }
    return NavaidCheck(out, summary, list(settings.notes))


def _variation_at_alignment(values: dict, settings) -> np.ndarray:
    """Model variation at each station on its alignment date (NaN without a date or outside the model's validity).

    A station declination far from this value suggests a data error (or an alignment to another
    model), the navaid counterpart of a runway designator that never fitted.
    """
    from .elements import field_arrays
    from .units import decimal_year

    out = np.full(len(values["ident"]), np.nan)
    given = np.flatnonzero(values["alignment_date"] != "")
    if given.size == 0:
        return out
    years = np.array([float(decimal_year(d)) for d in values["alignment_date"][given]])
    model = settings.model
    inside = (years >= model.valid_from) & (years <= model.valid_to)
    rows = given[inside]
    if rows.size:
        f = field_arrays(values["lat"][rows], values["lon"][rows], years[inside], values["alt_km"][rows], model=model)
        out[rows] = f["declination_deg"]
    return out


def write_navaid_table(target: PathLike, result: NavaidCheck):
    """Write the checked table as CSV or ``.xlsx`` (by the name), rounded, units in a workbook's header."""
    from .tables import write_table

    frame = result.table.assign(zone=result.table["zone"].astype(object))
    return write_table(target, frame, units=UNITS, decimals=DECIMALS, sheet="navaids")

