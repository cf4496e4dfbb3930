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
- :func:`setting_out`: for each marked magnetic heading line (laid out with the *marked* variation),
  its true and grid azimuth and the points at given distances from the base centre along it: east
  and north metres from the centre, latitude and longitude (WGS84 forward geodesic,
  :meth:`pyproj.Geod.fwd`) and UTM easting and northing (pyproj).

``base_upkeep`` is a pipeline of named steps: check the sites and dates, evaluate the model for all
sites at once (:class:`_UpkeepState`), build one row per site, warn once per kind of finding.

Conventions: variation east positive (``true = magnetic + variation``); grid azimuth
``= true - convergence`` (see :mod:`headingref.headings`); distances in metres.

The variation-versus-time function can be injected (``variation_function``) for tests or for a
local model: a callable ``f(lat_deg, lon_deg, decimal_year, alt_km) -> (declination_deg,
declination_deg_per_year)`` on numpy arrays.

Public API
----------
:class:`Site`, :func:`make_site`, :func:`read_sites_csv`, :func:`base_upkeep`, :func:`setting_out`,
:func:`setting_out_parameters`, :func:`model_variation_function`, :func:`utm_zone`, :data:`DEFAULT_TOLERANCE_DEG`,
:data:`DEFAULT_MARK_STEP_DEG`, :data:`SITE_CAUTION`, :data:`UPKEEP_COLUMNS`, :data:`SETTING_OUT_COLUMNS`.

References
----------
.. [1] C. F. F. Karney, "Algorithms for geodesics", *Journal of Geodesy* 87(1), 43-55
   (2013), doi:10.1007/s00190-012-0578-z. (``pyproj.Geod`` implements it.)
.. [2] C. F. F. Karney, "Transverse Mercator with an accuracy of a few nanometers",
   *Journal of Geodesy* 85(8), 475-485 (2011), doi:10.1007/s00190-011-0445-3. (PROJ's ``tmerc``/``utm``.)
.. [3] National Geospatial-Intelligence Agency, *Handbook of Magnetic Compass Adjustment*
   (2004; formerly Pub. No. 226) (no DOI).

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
from .headings import (
    AUTO_GRID,
    format_heading,
    format_variation,
    normalize_heading,
    parse_grid,
    parse_variation,
    resolve_grid,
    warn_if_far_from_pole,
)
from .units import (
    ROUTE_HEIGHT_MAX_KM,
    decimal_year,
    height_column,
    parse_coordinate,
    parse_height_km,
    parse_number,
    timestamp_from_decimal_year,
)

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
    "utm_zone",
    "SETTING_OUT_COLUMNS",
    "UPKEEP_COLUMNS",
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

UPKEEP_COLUMNS = (
    "name", "row", "lat_deg", "lon_deg", "alt_km", "survey_date", "swing_date", "surveys",
    "surveyed_variation_deg", "model_variation_at_survey_deg", "survey_minus_model_deg",
    "model_variation_deg", "annual_change_min_per_year", "annual_change", "model_change_since_survey_deg",
    "predicted_variation_deg", "variation_to_mark_deg", "variation_to_mark", "variation_record",
    "tolerance_deg", "survey_off_year", "survey_off_date", "survey_off_note",
    "mark_off_year", "mark_off_date", "mark_off_note",
    "resurvey_years", "resurvey_due_year", "resurvey_due_date", "resurvey_reason", "overdue",
    "history_minus_model_deg", "horizontal_nT", "declination_uncertainty_deg", "zone", "caution",
)
"""Columns of :func:`base_upkeep`'s table, in order."""

SETTING_OUT_COLUMNS = (
    "name", "line", "magnetic_heading_deg", "variation_deg", "variation_used", "true_azimuth_deg",
    "convergence_deg", "grid_azimuth_deg", "distance_m", "east_m", "north_m", "lat_deg", "lon_deg",
    "utm_zone", "utm_easting_m", "utm_northing_m",
)
"""Columns of :func:`setting_out`'s table, in order (the two grid columns only when a grid is given)."""

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


SITE_COLUMNS = ("name", "lat", "lon", "surveyed_variation", "survey_date", "tolerance_deg", "resurvey_years",
                "alt", "alt_m", "alt_ft", "alt_km")
"""Columns of a compass-base CSV (the first five required); what a column mapping may map onto."""


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
    ``alt_km`` as :func:`headingref.units.parse_height_km` (km, or text with a unit; at most 30 km).
    Errors name ``row`` (or the site).
    """
    where = row or f"site {name!r}"
    try:
        lat_deg = parse_coordinate(lat, "lat")
        lon_deg = parse_coordinate(lon, "lon")
        variation = parse_variation(surveyed_variation)
        survey_year = float(decimal_year(survey_date))
        alt = parse_height_km(alt_km, max_km=ROUTE_HEIGHT_MAX_KM)
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


def read_sites_csv(path: str | os.PathLike, tolerance_deg: float | None = None, resurvey_years: float | None = None, today=None,
                   columns=None) -> list[Site]:
    """Read sites from a CSV: ``name, lat, lon, surveyed_variation, survey_date`` and optional
    ``tolerance_deg, resurvey_years`` and a height: ``alt`` with a unit in each value (``35 m``,
    ``120 ft``; a bare number is refused) or ``alt_m``/``alt_ft``/``alt_km`` (numbers in that unit).

    Empty optional cells take ``tolerance_deg`` / ``resurvey_years`` given here. Several rows with
    one name are that base's survey history: the latest survey is returned, with the earlier ones
    in ``Site.history`` (the rows must give the same position, within 0.001 degree, and different
    dates). Every error names the file and line. ``columns`` maps headingref's names to the file's
    (``"name=site,surveyed_variation=var_deg"``, :func:`headingref.tables.parse_column_mapping`).
    """
    from .io import read_table

    table = read_table(
        path,
        required=SITE_COLUMNS[:5],
        optional=SITE_COLUMNS[5:],
        what="compass bases",
        columns=columns,
    )
    try:
        height, height_unit = height_column(table.columns, "alt")
    except InputError as exc:
        raise InputError(f"{table.attrs['source']}: {exc}") from None
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
                extra[column] = parse_number(cell, column)  # plain ASCII decimal only: 6_1 or nan refused
            except InputError as exc:
                raise InputError(f"{where}: {exc}") from None
        if not record["name"]:
            raise InputError(f"{where}: name is empty; give each base a name")
        cell = record[height] if height else ""
        try:
            alt = parse_height_km(cell, default_unit=height_unit, max_km=ROUTE_HEIGHT_MAX_KM) if cell else 0.0
        except InputError as exc:
            raise InputError(f"{where}: {exc}") from None
        sites.append(
            make_site(
                record["name"],
                record["lat"],
                record["lon"],
                record["surveyed_variation"],
                record["survey_date"],
                alt_km=alt,
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
    from .elements import field_arrays

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
    - ``horizontal_nT, declination_uncertainty_deg, zone`` (categorical, :data:`headingref.elements.ZONE_DTYPE`),
      ``caution``.

    Dates are ``YYYY-MM-DD`` text ('' when none), decimal years in the ``*_year`` columns.
    """
    from .elements import ZONE_DTYPE
    from .model import load_model

    sites = _site_list(sites)
    mark_step_deg = parse_number(mark_step_deg, "mark_step_deg")
    if not 0.01 <= mark_step_deg <= 5:
        raise InputError(f"mark step {mark_step_deg!r} deg: give a rounding step from 0.01 to 5 degrees (0.5 or 1)")
    swing_year = float(decimal_year(swing_date))
    loaded = load_model(model)
    _check_dates(sites, swing_year, loaded, allow_extrapolation)
    variation = variation_function or model_variation_function(loaded, allow_extrapolation)
    state = _model_state(sites, swing_year, loaded, variation, allow_extrapolation, mark_step_deg)
    table = pd.DataFrame([_upkeep_row(i, site, state) for i, site in enumerate(sites)], columns=list(UPKEEP_COLUMNS))
    table["zone"] = table["zone"].astype(ZONE_DTYPE)  # the zone dtype of every headingref table
    _warn_upkeep(table, loaded)
    table.attrs["caution"] = SITE_CAUTION
    return table


def _site_list(sites) -> list[Site]:
    if isinstance(sites, Site):
        sites = [sites]
    if isinstance(sites, (str, bytes)) or not hasattr(sites, "__iter__"):
        raise InputError(f"sites {sites!r}: give a Site or a list of Site (make_site, read_sites_csv)")
    sites = list(sites)
    if not sites:
        raise InputError("no compass bases given; give at least one site")
    bad = [s for s in sites if not isinstance(s, Site)]
    if bad:
        raise InputError(f"sites: {bad[0]!r} is not a Site; build sites with make_site or read_sites_csv")
    return sites


def _check_dates(sites: list[Site], swing_year: float, loaded, allow_extrapolation: bool) -> None:
    """Swing on or after each survey; surveys within the model's validity unless extrapolating."""
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


@dataclass
class _UpkeepState:
    """Model values for every site at once (arrays indexed like the sites)."""

    swing_year: float
    loaded: object
    variation: VariationFunction
    allow_extrapolation: bool
    end_year: float
    here: pd.DataFrame
    dec_now: np.ndarray
    rate_now: np.ndarray
    dec_survey: np.ndarray
    offsets: np.ndarray
    marks: np.ndarray
    survey_offs: np.ndarray
    mark_offs: np.ndarray


def _model_state(sites, swing_year, loaded, variation, allow_extrapolation, mark_step_deg) -> _UpkeepState:
    """The model at the swing and survey dates, the marks and both drift dates, all sites at once."""
    from .elements import field

    lat = np.array([s.lat_deg for s in sites])
    lon = np.array([s.lon_deg for s in sites])
    alt = np.array([s.alt_km for s in sites])
    survey_years = np.array([s.survey_year for s in sites])
    here = field(lat, lon, swing_year, alt, model=loaded, allow_extrapolation=allow_extrapolation)
    dec_now, rate_now = (np.asarray(v, dtype=np.float64) for v in variation(lat, lon, np.full(len(sites), swing_year), alt))
    dec_survey = np.asarray(variation(lat, lon, survey_years, alt)[0], dtype=np.float64)
    for i, site in enumerate(sites):
        if not (math.isfinite(dec_now[i]) and math.isfinite(dec_survey[i])):
            raise InputError(f"{site.row}: the variation is undefined at lat {site.lat_deg:g}, lon {site.lon_deg:g} (pole)")
    end_year = loaded.valid_to + (EXTRAPOLATION_HORIZON_YEARS if allow_extrapolation else 0.0)
    surveyed = np.array([s.surveyed_variation_deg for s in sites])
    offsets = surveyed - dec_survey
    marks = np.array([_round_to(v, mark_step_deg) for v in surveyed + dec_now - dec_survey])
    return _UpkeepState(
        swing_year=swing_year, loaded=loaded, variation=variation, allow_extrapolation=allow_extrapolation,
        end_year=end_year, here=here, dec_now=dec_now, rate_now=rate_now, dec_survey=dec_survey, offsets=offsets,
        marks=marks,
        survey_offs=_first_departures(variation, sites, offsets, surveyed, survey_years, end_year),
        mark_offs=_first_departures(variation, sites, offsets, marks, np.full(len(sites), swing_year), end_year),
    )


def _drift_notes(survey_off: float, mark_off: float, state: _UpkeepState) -> tuple[str, str]:
    """Why a drift date is missing or rough ('' when it is a plain date)."""
    loaded = state.loaded
    notes = []
    for year in (survey_off, mark_off):
        note = "" if math.isfinite(year) else _not_found_note(state.allow_extrapolation, state.end_year)
        if year > loaded.valid_to:
            note = f"extrapolated past {loaded.name}'s validity ({loaded.valid_to:g})"
        notes.append(note)
    if math.isfinite(mark_off) and mark_off == state.swing_year:
        notes[1] = "already off by more than the tolerance on the swing date (mark step too coarse for the tolerance)"
    return notes[0], notes[1]


def _resurvey_due(site: Site, survey_off: float) -> tuple[float, str]:
    """The earlier of the survey's drift date and survey + fixed interval."""
    interval_year = site.survey_year + site.resurvey_years if math.isfinite(site.resurvey_years) else math.nan
    candidates = [(y, why) for y, why in ((survey_off, "variation drift"), (interval_year, "fixed interval")) if math.isfinite(y)]
    return min(candidates) if candidates else (math.nan, "no due date within model validity")


def _history_minus_model(site: Site, dec_survey: float, variation: VariationFunction) -> float:
    """Change observed between the first and latest survey minus the model's change (NaN with one survey)."""
    if not site.history:
        return math.nan
    first_year, first_value = min(site.history)
    first_model, _ = variation(np.array([site.lat_deg]), np.array([site.lon_deg]), np.array([first_year]), np.array([site.alt_km]))
    return (site.surveyed_variation_deg - first_value) - (dec_survey - float(np.asarray(first_model)[0]))


def _site_caution(zone: str, horizontal_nT: float, offset: float, uncertainty: float) -> str:
    caution = SITE_CAUTION
    if zone != "normal":
        caution = f"{zone} zone (H {horizontal_nT:.0f} nT): compass unreliable here. " + caution
    if abs(offset) > 2 * uncertainty:
        caution += (
            f" Survey differs from the model by {offset:+.2f} deg at the survey date (over twice the model's "
            f"{uncertainty:.2f} deg uncertainty): a local anomaly or a survey error; check the survey."
        )
    return caution


def _upkeep_row(i: int, site: Site, state: _UpkeepState) -> dict:
    """One row of the upkeep table (columns :data:`UPKEEP_COLUMNS`)."""
    change = float(state.dec_now[i] - state.dec_survey[i])
    predicted = site.surveyed_variation_deg + change
    marked = float(state.marks[i])
    offset = float(state.offsets[i])
    survey_off, mark_off = float(state.survey_offs[i]), float(state.mark_offs[i])
    survey_note, mark_note = _drift_notes(survey_off, mark_off, state)
    due_year, reason = _resurvey_due(site, survey_off)
    uncertainty = float(state.here.declination_uncertainty_deg.iloc[i])
    zone = str(state.here.zone.iloc[i])
    horizontal = float(state.here.horizontal_nT.iloc[i])
    rate_min = float(state.rate_now[i]) * 60.0
    return {
        "name": site.name,
        "row": site.row,
        "lat_deg": site.lat_deg,
        "lon_deg": site.lon_deg,
        "alt_km": site.alt_km,
        "survey_date": _date_text(site.survey_year),
        "swing_date": _date_text(state.swing_year),
        "surveys": 1 + len(site.history),
        "surveyed_variation_deg": site.surveyed_variation_deg,
        "model_variation_at_survey_deg": float(state.dec_survey[i]),
        "survey_minus_model_deg": offset,
        "model_variation_deg": float(state.dec_now[i]),
        "annual_change_min_per_year": rate_min,
        "annual_change": _annual_change_text(rate_min),
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
        "overdue": bool(math.isfinite(due_year) and due_year <= state.swing_year),
        "history_minus_model_deg": _history_minus_model(site, float(state.dec_survey[i]), state.variation),
        "horizontal_nT": horizontal,
        "declination_uncertainty_deg": uncertainty,
        "zone": zone,
        "caution": _site_caution(zone, horizontal, offset, uncertainty),
    }


def _warn_upkeep(table: pd.DataFrame, loaded) -> None:
    """One warning each for weak-field bases, extrapolated drift dates and bases overdue."""
    if (table.zone != "normal").any():
        names = ", ".join(table.name[table.zone != "normal"])
        warnings.warn(f"compass base(s) {names} lie in a weak-horizontal-field zone; see the caution column", DataQualityWarning, stacklevel=3)
    late = (table.survey_off_year > loaded.valid_to) | (table.mark_off_year > loaded.valid_to)
    if late.any():
        warnings.warn(
            f"drift dates for {', '.join(table.name[late])} lie past {loaded.name}'s validity ({loaded.valid_to:g}) "
            "and were extrapolated; treat them as rough",
            ExtrapolationWarning,
            stacklevel=3,
        )
    if table.overdue.any():
        names = ", ".join(table.name[table.overdue])
        warnings.warn(f"compass base(s) {names} fall due for resurvey on or before the swing date", DataQualityWarning, stacklevel=3)


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
    (default 50 and 100), grid as :func:`headingref.headings.parse_grid` or ``auto`` (the polar grid
    of each base's hemisphere). Raises InputError.
    """
    lines = normalize_heading(_number_list(DEFAULT_LINES_DEG if lines_deg is None else lines_deg, "lines", 0.0, 360.0, "degrees"))
    distances = _number_list(DEFAULT_DISTANCES_M if distances_m is None else distances_m, "distances", 0.0, 100_000.0, "metres")
    auto = isinstance(grid, str) and grid.strip().lower() == AUTO_GRID  # resolved per base by setting_out
    return np.atleast_1d(lines), distances, (None if grid is None else AUTO_GRID if auto else parse_grid(grid))


def utm_zone(lat_deg: float, lon_deg: float) -> tuple[int, str] | None:
    """UTM zone number and hemisphere letter ('N'/'S') of a point, or None beyond 84 N / 80 S.

    Zones are 6 degrees wide from 180 W; the exceptions are zone 32V widened to 3-12 E (southern
    Norway) and zones 31X, 33X, 35X, 37X over Svalbard (72-84 N). Source: NGA, *The Universal
    Grids and the Transverse Mercator and Polar Stereographic Map Projections*, NGA.SIG.0012
    (2014), section on UTM zones (from memory). Beyond the UTM limits the polar stereographic UPS
    grid applies.
    """
    if not (-80.0 <= lat_deg <= 84.0):
        return None
    lon = ((lon_deg + 180.0) % 360.0) - 180.0
    zone = int((lon + 180.0) // 6.0) + 1
    if 56.0 <= lat_deg < 64.0 and 3.0 <= lon < 12.0:
        zone = 32
    if lat_deg >= 72.0 and 0.0 <= lon < 42.0:
        zone = 31 if lon < 9.0 else 33 if lon < 21.0 else 35 if lon < 33.0 else 37
    return min(zone, 60), ("N" if lat_deg >= 0 else "S")


def _local_and_utm(lat0: float, lon0: float, lat: np.ndarray, lon: np.ndarray) -> dict:
    """East/north metres from the centre (local tangent plane, WGS84 topocentric) and UTM of the points."""
    topo = pyproj.Transformer.from_pipeline(
        f"+proj=pipeline +step +proj=cart +ellps=WGS84 +step +proj=topocentric +ellps=WGS84 "
        f"+lat_0={lat0!r} +lon_0={lon0!r} +h_0=0"
    )
    east, north, _ = topo.transform(lon, lat, np.zeros_like(lat))
    out = {"east_m": np.asarray(east), "north_m": np.asarray(north)}
    zone = utm_zone(lat0, lon0)
    if zone is None:
        out.update(utm_zone="", utm_easting_m=np.nan, utm_northing_m=np.nan)
        return out
    number, hemisphere = zone
    epsg = (32600 if hemisphere == "N" else 32700) + number
    utm = pyproj.Transformer.from_crs("EPSG:4326", f"EPSG:{epsg}", always_xy=True)
    x, y = utm.transform(lon, lat)
    out.update(utm_zone=f"{number}{hemisphere}", utm_easting_m=np.asarray(x), utm_northing_m=np.asarray(y))
    return out


def setting_out(
    upkeep: pd.DataFrame,
    lines_deg: Sequence[float] | None = None,
    distances_m: Sequence[float] | None = None,
    grid=None,
) -> pd.DataFrame:
    """Setting-out table for the survey party, one row per site, line and distance.

    The lines are laid out with the variation **marked on the base** for the swing
    (``variation_to_mark_deg``: the surveyed value carried to the swing date and rounded to the
    marking step), not the unrounded prediction: the painted lines and the painted value must agree.
    Column ``variation_used`` states it (e.g. ``marked 9°30′ E``).

    Parameters
    ----------
    upkeep : DataFrame from :func:`base_upkeep`
        Uses ``name, lat_deg, lon_deg`` (the base centre) and ``variation_to_mark_deg``.
    lines_deg : sequence of float
        Magnetic headings of the lines (default every 30 degrees from 000; twelve radials as in FAA
        AC 150/5300-13, the compass calibration pad, from memory).
    distances_m : sequence of float
        Distances of the points from the centre along each line, metres (default 50 and 100).
    grid : grid spec or None
        As :func:`headingref.headings.parse_grid` (``polar``, ``lcc:...``, ``EPSG:...``) or ``auto``
        (the polar grid of each base's hemisphere; a polar grid given explicitly and used more than 60°
        from its pole warns); adds
        ``convergence_deg`` and ``grid_azimuth_deg`` (``true - convergence``, at the centre).

    Returns
    -------
    DataFrame with columns :data:`SETTING_OUT_COLUMNS`: the line, its magnetic heading, the
    variation used, the true azimuth (``magnetic + variation``), [convergence and grid azimuth,]
    the distance, the point as ``east_m, north_m`` from the base centre (local tangent plane of the
    WGS84 ellipsoid at the centre, PROJ ``topocentric``), as ``lat_deg, lon_deg`` (WGS84 forward
    geodesic, :meth:`pyproj.Geod.fwd`, Karney's algorithm) and in UTM (``utm_zone`` such as ``33N``
    of the centre, easting and northing in metres, WGS84 / UTM EPSG:326xx or 327xx; empty beyond
    84 N / 80 S, where UPS applies).
    """
    lines, distances, grid_obj = setting_out_parameters(lines_deg, distances_m, grid)
    if not isinstance(upkeep, pd.DataFrame) or "variation_to_mark_deg" not in upkeep:
        raise InputError("setting_out needs the table from base_upkeep (with variation_to_mark_deg)")
    geod = pyproj.Geod(ellps="WGS84")
    frames, grids_used = [], []
    for _, site in upkeep.iterrows():
        marked = float(site.variation_to_mark_deg)
        true_az = normalize_heading(lines + marked)
        az = np.repeat(true_az, len(distances))
        dist = np.tile(distances, len(lines))
        lon2, lat2, _ = geod.fwd(np.full(az.size, site.lon_deg), np.full(az.size, site.lat_deg), az, dist)
        frame = pd.DataFrame(
            {
                "name": site["name"],
                "line": [format_heading(h) for h in np.repeat(lines, len(distances))],
                "magnetic_heading_deg": np.repeat(lines, len(distances)),
                "variation_deg": marked,
                "variation_used": f"marked {format_variation(marked)}",
                "true_azimuth_deg": az,
            }
        )
        if grid_obj is not None:
            site_grid = resolve_grid(grid_obj, [site.lat_deg])
            if grid_obj != AUTO_GRID:
                warn_if_far_from_pole(site_grid, [site.lat_deg], f"base {site['name']!r}")
            grids_used.append(site_grid.name)
            convergence = float(site_grid.convergence_deg(site.lat_deg, site.lon_deg))
            if not math.isfinite(convergence):
                raise InputError(f"base {site['name']!r} lies outside grid {site_grid.name}; choose a grid that covers it")
            frame["convergence_deg"] = convergence
            frame["grid_azimuth_deg"] = normalize_heading(az - convergence)
        frame["distance_m"] = dist
        placed = _local_and_utm(float(site.lat_deg), float(site.lon_deg), np.asarray(lat2), np.asarray(lon2))
        frame["east_m"], frame["north_m"] = placed["east_m"], placed["north_m"]
        frame["lat_deg"] = np.asarray(lat2)
        frame["lon_deg"] = np.asarray(lon2)
        for key in ("utm_zone", "utm_easting_m", "utm_northing_m"):
            frame[key] = placed[key]
        frames.append(frame)
    table = pd.concat(frames, ignore_index=True)
    table = table[[c for c in SETTING_OUT_COLUMNS if c in table.columns]]
    table.attrs["variation_used"] = "the variation marked on the base for the swing (rounded), not the unrounded prediction"
    table.attrs["grid"] = ", ".join(dict.fromkeys(grids_used))
    return table
