"""Compass base upkeep: variation to mark, drift, resurvey date, uncertainty, setting-out.

A compass base (swing site) carries a surveyed magnetic variation. The survey on the site governs:
it includes the local crustal field, which the main-field model omits. The model supplies only the
*change* since the survey. For each site and a planned swing date this module gives

- the model variation there on the swing date and its annual change (minutes of arc a year, east
  or west), and the model's change since the survey;
- the predicted variation ``surveyed + (model at swing date - model at survey date)``, the
  variation to mark on the base rounded to ``mark_step_deg`` (default 0.5 degree, common
  practice for a base's marking) and the value for the record, to the nearest minute (common
  practice);
- the first date on which the model says the variation marked at the last survey (the surveyed
  value, painted on the base) is off by more than the tolerance (default 0.5 degree), and likewise
  for the variation to mark on the swing date if the base is re-marked from the model: found by
  stepping the model forward in 1/24-year steps, then a safeguarded Newton/bisection on the
  crossing using the model's analytic annual rate (to better than 1e-6 year). Past the model's
  validity the answer is 'beyond model validity' unless extrapolation is opted in;
- the resurvey due date: the survey's drift date, or ``survey date + resurvey_years`` if an
  interval is given, whichever is earlier; a base due on or before the swing date is overdue;
- survey history: several rows with one name are that base's surveys; the latest is in force and
  the change observed since the first one is compared with the model's change;
- the declination uncertainty (WMM error model) and the zone (normal / caution / blackout), with
  the caution that local crustal anomalies are not in the model;
- :func:`setting_out`: for each marked magnetic heading line, its true and grid azimuth and the
  coordinates of points at given distances from the base centre along it (WGS84 forward geodesic,
  :meth:`pyproj.Geod.fwd`).

Conventions: variation east positive (``true = magnetic + variation``); grid azimuth
``= true - convergence`` (see :mod:`headingref.headings`); distances in metres.

The variation-versus-time function can be injected (``variation_function``) for tests or for a
local model: a callable ``f(lat_deg, lon_deg, decimal_year, alt_km) -> (declination_deg,
declination_deg_per_year)`` on numpy arrays.

Public API
----------
:class:`Site`, :func:`make_site`, :func:`read_sites_csv`, :func:`base_upkeep`, :func:`setting_out`,
:func:`setting_out_parameters`, :func:`model_variation_function`, :data:`DEFAULT_TOLERANCE_DEG`, :data:`DEFAULT_MARK_STEP_DEG`,
:data:`SITE_CAUTION`.

>>> from headingref.compass_base import make_site, base_upkeep, setting_out
>>> site = make_site("North apron base", 69.3, 16.1, "9°30′E", "2026-06-01")
>>> table = base_upkeep([site], "2026-12-02")
>>> table.loc[0, "variation_to_mark"]  # 9.5 + model change since survey, to the nearest 0.5 deg
'9°30′ E'
>>> table.loc[0, "resurvey_due_date"][:4]  # the model moves it about 0.26 deg a year
'2028'
>>> lines = setting_out(table, lines_deg=[0, 90], distances_m=[50.0])
>>> list(lines.line)
['000', '090']
"""

from __future__ import annotations

import dataclasses
import math
import os
import warnings
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyproj

from .errors import DataQualityWarning, ExtrapolationWarning, InputError
from .headings import format_heading, format_variation, normalize_heading, parse_grid, parse_variation
from .units import decimal_year, parse_coordinate, parse_height_km, timestamp_from_decimal_year

__all__ = [
    "DEFAULT_MARK_STEP_DEG",
    "DEFAULT_TOLERANCE_DEG",
    "SITE_CAUTION",
    "Site",
    "base_upkeep",
    "make_site",
    "model_variation_function",
    "read_sites_csv",
    "setting_out",
    "setting_out_parameters",
]

DEFAULT_TOLERANCE_DEG = 0.5
"""Largest accepted error of the marked variation before the base is resurveyed (common practice)."""

DEFAULT_MARK_STEP_DEG = 0.5
"""The marked variation is rounded to this step, degrees (common practice; 1.0 is also seen)."""

DEFAULT_LINES_DEG = tuple(float(h) for h in range(0, 360, 30))
DEFAULT_DISTANCES_M = (50.0, 100.0)

SITE_CAUTION = (
    "The field model omits local crustal anomalies, which can reach several degrees; the survey on "
    "the site governs, the model only carries the surveyed variation forward in time."
)

STEP_YEARS = 1.0 / 24.0
"""Search step for the tolerance crossing; the secular change is smooth on this scale."""

EXTRAPOLATION_HORIZON_YEARS = 25.0
"""How far past the model's validity the search runs when extrapolation is opted in."""

VariationFunction = Callable[[np.ndarray, np.ndarray, np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class Site:
    """One compass base: position, survey and upkeep parameters.

    ``surveyed_variation_deg`` east positive; ``survey_year`` decimal year; ``alt_km`` above the
    WGS84 ellipsoid; ``resurvey_years`` NaN when no fixed interval; ``row`` names the source row;
    ``history`` holds earlier surveys of the same base as ``(survey_year, surveyed_variation_deg)``.
    """

    name: str
    lat_deg: float
    lon_deg: float
    surveyed_variation_deg: float
    survey_year: float
    tolerance_deg: float = DEFAULT_TOLERANCE_DEG
    resurvey_years: float = math.nan
    alt_km: float = 0.0
    row: str = ""
    history: tuple[tuple[float, float], ...] = ()


def _now_year() -> float:
    return float(decimal_year(pd.Timestamp.now(tz="UTC")))


def _positive(value: float, what: str, where: str, accepted: str, upper: float) -> float:
    if not math.isfinite(value) or not 0 < value <= upper:
        raise InputError(f"{where}: {what} {value!r} must be a positive number up to {upper:g} ({accepted})")
    return float(value)


def make_site(
    name: str,
    lat,
    lon,
    surveyed_variation,
    survey_date,
    tolerance_deg: float | None = None,
    resurvey_years: float | None = None,
    alt_km=0.0,
    row: str | None = None,
    today=None,
) -> Site:
    """Build a :class:`Site` from user values, checking each one.

    ``lat``/``lon`` as :func:`headingref.units.parse_coordinate` accepts; ``surveyed_variation`` as
    :func:`headingref.headings.parse_variation` (``12.5W``, ``12°30′W``, ``E3.2``, ``-12.5``);
    ``survey_date`` any date or decimal year, not in the future (``today`` overrides the clock);
    ``alt_km`` as :func:`headingref.units.parse_height_km`. Errors name ``row`` (or the site).
    """
    where = row or f"site {name!r}"
    try:
        lat_deg = parse_coordinate(lat, "lat")
        lon_deg = parse_coordinate(lon, "lon")
        variation = parse_variation(surveyed_variation)
        survey_year = float(decimal_year(survey_date))
        alt = parse_height_km(alt_km)
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None
    now = _now_year() if today is None else float(decimal_year(today))
    if survey_year > now:
        raise InputError(
            f"{where}: survey date {survey_date} is in the future (today is "
            f"{timestamp_from_decimal_year(now):%Y-%m-%d}); give the date the base was last surveyed"
        )
    tol = DEFAULT_TOLERANCE_DEG if tolerance_deg is None else _positive(tolerance_deg, "tolerance", where, "degrees, e.g. 0.5", 30.0)
    interval = math.nan if resurvey_years is None else _positive(resurvey_years, "resurvey interval", where, "years, e.g. 5", 100.0)
    return Site(str(name), lat_deg, lon_deg, variation, survey_year, tol, interval, alt, row or f"site {name!r}")


def read_sites_csv(path: str | os.PathLike, tolerance_deg: float | None = None, resurvey_years: float | None = None, today=None) -> list[Site]:
    """Read sites from a CSV: ``name, lat, lon, surveyed_variation, survey_date`` and optional
    ``tolerance_deg, resurvey_years, alt`` (alt in km, or with a unit: ``35 m``).

    Empty optional cells take ``tolerance_deg`` / ``resurvey_years`` given here. Several rows with
    one name are that base's survey history: the latest survey is returned, with the earlier ones
    in ``Site.history`` (the rows must give the same position, within 0.001 degree, and different
    dates). Every error names the file and line.
    """
    from .io import read_table

    table = read_table(
        path,
        required=["name", "lat", "lon", "surveyed_variation", "survey_date"],
        optional=["tolerance_deg", "resurvey_years", "alt"],
        what="compass bases",
    )
    sites = []
    for line, record in table.iterrows():
        where = f"{table.attrs['source']} line {line}"
        extra = {}
        for column, fallback in (("tolerance_deg", tolerance_deg), ("resurvey_years", resurvey_years)):
            cell = record.get(column, "") or ""
            if cell == "":
                extra[column] = fallback
                continue
            try:
                extra[column] = float(cell)
            except ValueError:
                raise InputError(f"{where}: {column} {cell!r} is not a number") from None
        if not record["name"]:
            raise InputError(f"{where}: name is empty; give each base a name")
        sites.append(
            make_site(
                record["name"],
                record["lat"],
                record["lon"],
                record["surveyed_variation"],
                record["survey_date"],
                alt_km=record.get("alt", "") or 0.0,
                row=where,
                today=today,
                **extra,
            )
        )
    return _merge_history(sites)


def _merge_history(sites: list[Site]) -> list[Site]:
    """One Site per name: the latest survey, with the earlier ones as history."""
    by_name: dict[str, list[Site]] = {}
    for site in sites:
        by_name.setdefault(site.name, []).append(site)
    merged = []
    for name, group in by_name.items():
        group.sort(key=lambda s: s.survey_year)
        latest = group[-1]
        for earlier, later in zip(group, group[1:], strict=False):
            if abs(earlier.lat_deg - later.lat_deg) > 1e-3 or abs(earlier.lon_deg - later.lon_deg) > 1e-3:
                raise InputError(
                    f"{later.row}: base {name!r} is at a different position from {earlier.row}; "
                    "rows with one name are one base's survey history, give each base its own name"
                )
            if earlier.survey_year == later.survey_year:
                raise InputError(f"{later.row}: base {name!r} has a second survey on the same date as {earlier.row}")
        history = tuple((s.survey_year, s.surveyed_variation_deg) for s in group[:-1])
        merged.append(dataclasses.replace(latest, history=history))
    return merged


def model_variation_function(model=None, allow_extrapolation: bool = False) -> VariationFunction:
    """The field model's declination and its analytic annual rate as a variation function."""
    from .field import field_arrays

    def variation(lat, lon, year, alt_km):
        with warnings.catch_warnings():
            # One warning per upkeep run is issued by base_upkeep itself.
            warnings.simplefilter("ignore")
            out = field_arrays(lat, lon, np.asarray(year, dtype=np.float64), alt_km, model=model, allow_extrapolation=allow_extrapolation)
        return out["declination_deg"], out["declination_deg_per_year"]

    return variation


def _round_to(value: float, step: float) -> float:
    return math.floor(value / step + 0.5) * step


def _first_departures(
    variation: VariationFunction,
    sites: Sequence[Site],
    offset_deg: np.ndarray,
    marked_deg: np.ndarray,
    start_year: np.ndarray,
    end_year: float,
) -> np.ndarray:
    """For each site, the first decimal year in [start, end] where
    ``|offset + D(t) - marked| > tolerance`` (NaN if none), all sites at once.

    ``offset = surveyed - D(survey)``. The model is stepped every :data:`STEP_YEARS` in one call;
    the first bracketing step is then refined by a safeguarded Newton iteration using the analytic
    rate (bisection whenever Newton would leave the bracket), to 1e-8 year.
    """
    n = len(sites)
    lat = np.array([s.lat_deg for s in sites])
    lon = np.array([s.lon_deg for s in sites])
    alt = np.array([s.alt_km for s in sites])
    tol = np.array([s.tolerance_deg for s in sites])
    start_year = np.asarray(start_year, dtype=np.float64)
    result = np.full(n, np.nan)
    span = max(0.0, float(np.max(end_year - start_year)))
    steps = int(math.ceil(span / STEP_YEARS)) + 1
    years = np.minimum(start_year[:, None] + STEP_YEARS * np.arange(steps)[None, :], end_year)
    dec, _ = variation(
        np.repeat(lat, steps), np.repeat(lon, steps), years.ravel(), np.repeat(alt, steps)
    )
    excess = np.abs(offset_deg[:, None] + np.asarray(dec).reshape(n, steps) - marked_deg[:, None]) - tol[:, None]
    excess[start_year > end_year] = -np.inf
    found = (excess > 0).any(axis=1)
    k = np.argmax(excess > 0, axis=1)
    already = found & (k == 0)
    result[already] = start_year[already]
    todo = np.flatnonzero(found & (k > 0))
    if len(todo) == 0:
        return result
    lo = years[todo, k[todo] - 1].copy()
    hi = years[todo, k[todo]].copy()
    t = 0.5 * (lo + hi)
    active = np.ones(len(todo), dtype=bool)
    for _ in range(100):
        idx = todo[active]
        d, rate = variation(lat[idx], lon[idx], t[active], alt[idx])
        diff = offset_deg[idx] + np.asarray(d) - marked_deg[idx]
        value = np.abs(diff) - tol[idx]
        slope = np.sign(diff) * np.asarray(rate)
        ta, la, ha = t[active], lo[active], hi[active]
        ha = np.where(value > 0, ta, ha)
        la = np.where(value > 0, la, ta)
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = ta - value / slope
        inside = np.isfinite(newton) & (newton > la) & (newton < ha)
        done = (inside & (np.abs(newton - ta) < 1e-8)) | (ha - la < 1e-8)
        nxt = np.where(inside, newton, 0.5 * (la + ha))
        t[active], lo[active], hi[active] = nxt, la, ha
        finished = np.flatnonzero(active)[done]
        result[todo[finished]] = np.where(inside[done], newton[done], ha[done])
        active[finished] = False
        if not active.any():
            break
    return result


def _date_text(year: float) -> str:
    """The calendar day a decimal year falls in ('' for NaN); rounded to the second first so that
    a date converted to a decimal year and back keeps its day."""
    return "" if not math.isfinite(year) else f"{timestamp_from_decimal_year(year).round('s'):%Y-%m-%d}"


def _annual_change_text(minutes_per_year: float) -> str:
    if not math.isfinite(minutes_per_year):
        return "undefined"
    letter = "E" if minutes_per_year >= 0 else "W"
    return f"{abs(minutes_per_year):.1f}′ {letter} a year"


def _not_found_note(allow_extrapolation: bool, end_year: float) -> str:
    if allow_extrapolation:
        return f"not within {EXTRAPOLATION_HORIZON_YEARS:g} years past the model's validity"
    return f"beyond model validity (not before {_date_text(end_year)})"


def base_upkeep(
    sites: Sequence[Site] | Site,
    swing_date,
    *,
    model=None,
    allow_extrapolation: bool = False,
    mark_step_deg: float = DEFAULT_MARK_STEP_DEG,
    variation_function: VariationFunction | None = None,
) -> pd.DataFrame:
    """Upkeep of one or more compass bases for a planned swing date.

    Parameters
    ----------
    sites : Site or sequence of Site
        From :func:`make_site` or :func:`read_sites_csv` (the latest survey of each base, with its
        earlier surveys in ``Site.history``).
    swing_date : date-like or decimal year
        The planned swing; not before any site's survey.
    model : Model, path or None
        Field model (default IGRF-14). Used for uncertainty and zone, and for the variation unless
        ``variation_function`` is given.
    allow_extrapolation : bool
        Let the drift search (and a swing date) go past the model's validity, with a warning.
    mark_step_deg : float
        Rounding step of the marked variation (0.5 degree by default; 1.0 for whole degrees).
    variation_function : callable, optional
        ``f(lat, lon, year, alt_km) -> (declination_deg, declination_deg_per_year)``; default the model.

    Returns
    -------
    pandas.DataFrame, one row per site. Columns:

    - ``name, row, lat_deg, lon_deg, alt_km, survey_date, swing_date, surveys``;
    - ``surveyed_variation_deg, model_variation_at_survey_deg, survey_minus_model_deg`` (the site's
      offset from the model: local anomaly plus model and survey error);
    - ``model_variation_deg, annual_change_min_per_year`` (east positive), ``annual_change`` (text),
      ``model_change_since_survey_deg``;
    - ``predicted_variation_deg`` (surveyed + model change), ``variation_to_mark_deg`` and
      ``variation_to_mark`` (rounded to ``mark_step_deg``), ``variation_record`` (nearest minute);
    - ``tolerance_deg``; ``survey_off_year/date``: first date the variation marked at the survey
      (the surveyed value) is off by more than the tolerance; ``mark_off_year/date``: the same for
      the variation to mark on the swing date; ``*_note`` says why a date is missing;
    - ``resurvey_years, resurvey_due_year, resurvey_due_date, resurvey_reason`` (the earlier of the
      survey's drift date and survey + interval), ``overdue`` (due on or before the swing date);
    - ``history_minus_model_deg``: change observed between the first and the latest survey minus
      the model's change over the same time (NaN with one survey);
    - ``horizontal_nT, declination_uncertainty_deg, zone, caution``.

    Dates are ``YYYY-MM-DD`` text ('' when none), decimal years in the ``*_year`` columns.
    """
    from .field import field
    from .model import load_model

    if isinstance(sites, Site):
        sites = [sites]
    sites = list(sites)
    if not sites:
        raise InputError("no compass bases given; give at least one site")
    if not math.isfinite(mark_step_deg) or not 0.01 <= mark_step_deg <= 5:
        raise InputError(f"mark step {mark_step_deg!r} deg: give a rounding step from 0.01 to 5 degrees (0.5 or 1)")
    swing_year = float(decimal_year(swing_date))
    loaded = load_model(model)
    for site in sites:
        if swing_year < site.survey_year:
            raise InputError(
                f"{site.row}: swing date {_date_text(swing_year)} is before the survey of {_date_text(site.survey_year)}; "
                "give a swing date on or after the survey"
            )
        first = min([site.survey_year] + [year for year, _ in site.history])
        if first < loaded.valid_from and not allow_extrapolation:
            raise InputError(
                f"{site.row}: survey date {_date_text(first)} is before {loaded.name}'s validity "
                f"({loaded.valid_from:g}); opt in to extrapolation or give a later survey"
            )
    variation = variation_function or model_variation_function(loaded, allow_extrapolation)
    lat = np.array([s.lat_deg for s in sites])
    lon = np.array([s.lon_deg for s in sites])
    alt = np.array([s.alt_km for s in sites])
    here = field(lat, lon, swing_year, alt, model=loaded, allow_extrapolation=allow_extrapolation)
    dec_now, rate_now = (np.asarray(v, dtype=np.float64) for v in variation(lat, lon, np.full(len(sites), swing_year), alt))
    dec_survey, _ = variation(lat, lon, np.array([s.survey_year for s in sites]), alt)
    dec_survey = np.asarray(dec_survey, dtype=np.float64)
    for i, site in enumerate(sites):
        if not (math.isfinite(dec_now[i]) and math.isfinite(dec_survey[i])):
            raise InputError(f"{site.row}: the variation is undefined at lat {site.lat_deg:g}, lon {site.lon_deg:g} (pole)")
    end_year = loaded.valid_to + (EXTRAPOLATION_HORIZON_YEARS if allow_extrapolation else 0.0)
    surveyed = np.array([s.surveyed_variation_deg for s in sites])
    offsets = surveyed - dec_survey
    marks = np.array([_round_to(v, mark_step_deg) for v in surveyed + dec_now - dec_survey])
    survey_offs = _first_departures(variation, sites, offsets, surveyed, np.array([s.survey_year for s in sites]), end_year)
    mark_offs = _first_departures(variation, sites, offsets, marks, np.full(len(sites), swing_year), end_year)
    rows = []
    for i, site in enumerate(sites):
        change = float(dec_now[i] - dec_survey[i])
        predicted = site.surveyed_variation_deg + change
        marked = float(marks[i])
        offset = float(offsets[i])
        survey_off, mark_off = float(survey_offs[i]), float(mark_offs[i])
        survey_note = "" if math.isfinite(survey_off) else _not_found_note(allow_extrapolation, end_year)
        mark_note = "" if math.isfinite(mark_off) else _not_found_note(allow_extrapolation, end_year)
        if survey_off > loaded.valid_to:
            survey_note = f"extrapolated past {loaded.name}'s validity ({loaded.valid_to:g})"
        if mark_off > loaded.valid_to:
            mark_note = f"extrapolated past {loaded.name}'s validity ({loaded.valid_to:g})"
        if math.isfinite(mark_off) and mark_off == swing_year:
            mark_note = "already off by more than the tolerance on the swing date (mark step too coarse for the tolerance)"
        interval_year = site.survey_year + site.resurvey_years if math.isfinite(site.resurvey_years) else math.nan
        candidates = [(y, why) for y, why in ((survey_off, "variation drift"), (interval_year, "fixed interval")) if math.isfinite(y)]
        due_year, reason = min(candidates) if candidates else (math.nan, "no due date within model validity")
        history = math.nan
        if site.history:
            first_year, first_value = min(site.history)
            first_model, _ = variation(lat[i : i + 1], lon[i : i + 1], np.array([first_year]), alt[i : i + 1])
            history = (site.surveyed_variation_deg - first_value) - (float(dec_survey[i]) - float(np.asarray(first_model)[0]))
        uncertainty = float(here.declination_uncertainty_deg.iloc[i])
        zone = str(here.zone.iloc[i])
        caution = SITE_CAUTION
        if zone != "normal":
            caution = f"{zone} zone (H {here.horizontal_nT.iloc[i]:.0f} nT): compass unreliable here. " + caution
        if abs(offset) > 2 * uncertainty:
            caution += (
                f" Survey differs from the model by {offset:+.2f} deg at the survey date (over twice the model's "
                f"{uncertainty:.2f} deg uncertainty): a local anomaly or a survey error; check the survey."
            )
        rows.append(
            {
                "name": site.name,
                "row": site.row,
                "lat_deg": site.lat_deg,
                "lon_deg": site.lon_deg,
                "alt_km": site.alt_km,
                "survey_date": _date_text(site.survey_year),
                "swing_date": _date_text(swing_year),
                "surveys": 1 + len(site.history),
                "surveyed_variation_deg": site.surveyed_variation_deg,
                "model_variation_at_survey_deg": float(dec_survey[i]),
                "survey_minus_model_deg": offset,
                "model_variation_deg": float(dec_now[i]),
                "annual_change_min_per_year": float(rate_now[i]) * 60.0,
                "annual_change": _annual_change_text(float(rate_now[i]) * 60.0),
                "model_change_since_survey_deg": change,
                "predicted_variation_deg": predicted,
                "variation_to_mark_deg": marked,
                "variation_to_mark": format_variation(marked),
                "variation_record": format_variation(predicted),
                "tolerance_deg": site.tolerance_deg,
                "survey_off_year": survey_off,
                "survey_off_date": _date_text(survey_off),
                "survey_off_note": survey_note,
                "mark_off_year": mark_off,
                "mark_off_date": _date_text(mark_off),
                "mark_off_note": mark_note,
                "resurvey_years": site.resurvey_years,
                "resurvey_due_year": due_year,
                "resurvey_due_date": _date_text(due_year),
                "resurvey_reason": reason,
                "overdue": bool(math.isfinite(due_year) and due_year <= swing_year),
                "history_minus_model_deg": history,
                "horizontal_nT": float(here.horizontal_nT.iloc[i]),
                "declination_uncertainty_deg": uncertainty,
                "zone": zone,
                "caution": caution,
            }
        )
    table = pd.DataFrame(rows)
    if (table.zone != "normal").any():
        names = ", ".join(table.name[table.zone != "normal"])
        warnings.warn(f"compass base(s) {names} lie in a weak-horizontal-field zone; see the caution column", DataQualityWarning, stacklevel=2)
    late = (table.survey_off_year > loaded.valid_to) | (table.mark_off_year > loaded.valid_to)
    if late.any():
        warnings.warn(
            f"drift dates for {', '.join(table.name[late])} lie past {loaded.name}'s validity ({loaded.valid_to:g}) "
            "and were extrapolated; treat them as rough",
            ExtrapolationWarning,
            stacklevel=2,
        )
    if table.overdue.any():
        names = ", ".join(table.name[table.overdue])
        warnings.warn(f"compass base(s) {names} fall due for resurvey on or before the swing date", DataQualityWarning, stacklevel=2)
    table.attrs["caution"] = SITE_CAUTION
    return table


def _number_list(values, what: str, low: float, high: float, unit: str) -> np.ndarray:
    try:
        arr = np.asarray(values, dtype=np.float64).ravel()
    except (TypeError, ValueError):
        arr = np.array([np.nan])
    if arr.size == 0 or not np.all(np.isfinite(arr)) or np.any(arr < low) or np.any(arr > high):
        shown = ", ".join(str(v) for v in np.atleast_1d(np.asarray(values, dtype=object)).ravel())
        raise InputError(f"{what} [{shown}]: give numbers from {low:g} to {high:g} {unit}")
    return arr


def setting_out_parameters(lines_deg=None, distances_m=None, grid=None):
    """Check setting-out options: ``(lines_deg array, distances_m array, Grid or None)``.

    Lines are magnetic headings 0-360 (default every 30 degrees), distances 0-100 km in metres
    (default 50 and 100), grid as :func:`headingref.headings.parse_grid`. Raises InputError.
    """
    lines = normalize_heading(_number_list(DEFAULT_LINES_DEG if lines_deg is None else lines_deg, "lines", 0.0, 360.0, "degrees"))
    distances = _number_list(DEFAULT_DISTANCES_M if distances_m is None else distances_m, "distances", 0.0, 100_000.0, "metres")
    return np.atleast_1d(lines), distances, (parse_grid(grid) if grid is not None else None)


def setting_out(
    upkeep: pd.DataFrame,
    lines_deg: Sequence[float] | None = None,
    distances_m: Sequence[float] | None = None,
    grid=None,
) -> pd.DataFrame:
    """Setting-out table for the survey party, one row per site, line and distance.

    Parameters
    ----------
    upkeep : DataFrame from :func:`base_upkeep`
        Uses ``name, lat_deg, lon_deg`` (the base centre) and ``predicted_variation_deg`` (the
        variation the lines are laid out with: surveyed value carried to the swing date, full
        precision, not the rounded mark).
    lines_deg : sequence of float
        Magnetic headings of the lines (default every 30 degrees from 000).
    distances_m : sequence of float
        Distances of the points from the centre along each line, metres (default 50 and 100).
    grid : grid spec or None
        As :func:`headingref.headings.parse_grid` (``polar``, ``lcc:...``, ``EPSG:...``); adds
        ``convergence_deg`` and ``grid_azimuth_deg`` (``true - convergence``, at the centre).

    Returns
    -------
    DataFrame: ``name, line, magnetic_heading_deg, variation_deg, true_azimuth_deg,
    [convergence_deg, grid_azimuth_deg,] distance_m, lat_deg, lon_deg`` (point coordinates,
    WGS84, from :meth:`pyproj.Geod.fwd`).
    """
    lines, distances, grid_obj = setting_out_parameters(lines_deg, distances_m, grid)
    geod = pyproj.Geod(ellps="WGS84")
    frames = []
    for _, site in upkeep.iterrows():
        true_az = normalize_heading(lines + site.predicted_variation_deg)
        az = np.repeat(true_az, len(distances))
        dist = np.tile(distances, len(lines))
        lon2, lat2, _ = geod.fwd(np.full(az.size, site.lon_deg), np.full(az.size, site.lat_deg), az, dist)
        frame = pd.DataFrame(
            {
                "name": site["name"],
                "line": [format_heading(h) for h in np.repeat(lines, len(distances))],
                "magnetic_heading_deg": np.repeat(lines, len(distances)),
                "variation_deg": site.predicted_variation_deg,
                "true_azimuth_deg": az,
            }
        )
        if grid_obj is not None:
            convergence = float(grid_obj.convergence_deg(site.lat_deg, site.lon_deg))
            if not math.isfinite(convergence):
                raise InputError(f"base {site['name']!r} lies outside grid {grid_obj.name}; choose a grid that covers it")
            frame["convergence_deg"] = convergence
            frame["grid_azimuth_deg"] = normalize_heading(az - convergence)
        frame["distance_m"] = dist
        frame["lat_deg"] = np.asarray(lat2)
        frame["lon_deg"] = np.asarray(lon2)
        frames.append(frame)
    return pd.concat(frames, ignore_index=True)
