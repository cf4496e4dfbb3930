"""Parsing and formatting of the quantities users type: coordinates, dates, heights.

Everything here runs once, at the edge, and either returns plain numbers or raises
:class:`headingref.errors.InputError` naming the value and what is accepted.

Conventions
-----------
- Latitude north positive, longitude east positive, both in decimal degrees.
- Decimal year: ``year + (t - 1 Jan 00:00 UTC) / (length of that calendar year)``,
  leap years respected (366 days). 2024-07-02 00:00 is 2024 + 183/366. Naive times
  are taken as UTC; aware ones are converted to UTC.
- Heights are above the WGS84 ellipsoid in km. 1 ft = 0.3048 m exactly
  (international foot, 1959 agreement). A flight level ``FLnnn`` is taken as
  ``nnn * 100 ft`` of height above the ellipsoid: a pressure altitude is not a
  geometric height, but the few hundred metres between them change the main field
  by well under 10 nT and the declination by far less than the model's own
  uncertainty.

Public API: :func:`decimal_year`, :func:`timestamp_from_decimal_year`,
:func:`parse_coordinate`, :func:`parse_height_km`, :func:`format_dm`,
:data:`FOOT_M`.

>>> round(float(decimal_year("2024-07-02")), 6)
2024.5
>>> parse_coordinate("149 54 30 W", "lon")
-149.90833333333333
>>> format_dm(-12.5, "E", "W")
'12°30′ W'
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from typing import Any

import numpy as np
import pandas as pd

from .errors import InputError

FOOT_M = 0.3048  # international foot, exact by definition (1959)
NAUTICAL_MILE_M = 1852.0  # international nautical mile, exact by definition (1929)

_DATE_HELP = "an ISO date such as 2026-12-02 (optionally with a time), or a decimal year such as 2026.92"


def _as_datetime64(value: Any) -> np.datetime64 | None:
    """Return a UTC naive datetime64[us] for a date-like scalar, None for a number."""
    if isinstance(value, (bool, np.bool_)):
        raise InputError(f"date {value!r} is not a date; give {_DATE_HELP}")
    if isinstance(value, (int, float, np.integer, np.floating)):
        return None
    if isinstance(value, str):
        text = value.strip()
        try:
            float(text)
        except ValueError:
            pass
        else:
            return None
        if not re.match(r"^\d{4}-\d{1,2}(-\d{1,2})?([ T].*)?$", text):
            raise InputError(f"date {value!r} is not understood; give {_DATE_HELP}")
        try:
            ts = pd.Timestamp(text)
        except (ValueError, OverflowError) as exc:
            raise InputError(f"date {value!r} is not a valid calendar date ({exc}); give {_DATE_HELP}") from None
    elif isinstance(value, (_dt.datetime, _dt.date, np.datetime64, pd.Timestamp)):
        try:
            ts = pd.Timestamp(value)
        except (ValueError, OverflowError) as exc:
            raise InputError(f"date {value!r} cannot be used ({exc})") from None
    else:
        raise InputError(f"date {value!r} of type {type(value).__name__} is not understood; give {_DATE_HELP}")
    if ts is pd.NaT or pd.isna(ts):
        raise InputError(f"date {value!r} is missing; give {_DATE_HELP}")
    if ts.tzinfo is not None:
        ts = ts.tz_convert("UTC").tz_localize(None)
    return ts.to_datetime64().astype("datetime64[us]")


def _decimal_year_from_datetime64(values: np.ndarray) -> np.ndarray:
    values = values.astype("datetime64[us]")
    years = values.astype("datetime64[Y]")
    start = years.astype("datetime64[us]")
    end = (years + 1).astype("datetime64[us]")
    fraction = (values - start).astype(np.float64) / (end - start).astype(np.float64)
    return years.astype(np.int64) + 1970 + fraction


def decimal_year(dates: Any) -> np.ndarray | float:
    """Convert one date or a sequence of dates to decimal years.

    Parameters
    ----------
    dates : str, datetime, date, pandas.Timestamp, numpy.datetime64, float, or a sequence of these
        A float (or a string holding one) is taken as a decimal year already.

    Returns
    -------
    float or numpy.ndarray of float64
        A float for a scalar input, else an array. Convention in the module docstring.
    """
    if isinstance(dates, (str, bytes)) or np.ndim(dates) == 0:
        value = dates.decode() if isinstance(dates, bytes) else dates
        if isinstance(value, np.ndarray):
            value = value.item()
        dt64 = _as_datetime64(value)
        if dt64 is None:
            year = float(value)
            if not math.isfinite(year) or not 1000.0 <= year <= 3000.0:
                raise InputError(f"date {value!r} is not a plausible decimal year; give {_DATE_HELP}")
            return year
        return float(_decimal_year_from_datetime64(np.array([dt64]))[0])
    if isinstance(dates, pd.DatetimeIndex) or (isinstance(dates, (pd.Series, np.ndarray)) and np.asarray(dates).dtype.kind == "M"):
        series = pd.to_datetime(pd.Series(np.asarray(dates)))
        if series.isna().any():
            raise InputError(f"date number {int(np.argmax(series.isna().to_numpy()))} is missing; give {_DATE_HELP}")
        if getattr(series.dt, "tz", None) is not None:
            series = series.dt.tz_convert("UTC").dt.tz_localize(None)
        return _decimal_year_from_datetime64(series.to_numpy())
    items = list(dates)
    out = np.empty(len(items), dtype=np.float64)
    for i, item in enumerate(items):
        try:
            out[i] = decimal_year(item)
        except InputError as exc:
            raise InputError(f"date number {i} : {exc}") from None
    return out


def timestamp_from_decimal_year(year: float) -> pd.Timestamp:
    """Inverse of :func:`decimal_year` for one value, rounded to the millisecond.

    A float64 decimal year near 2000 resolves about 7 microseconds, so the millisecond rounding
    keeps round trips exact (2026-12-02 comes back as 00:00:00.000, not 23:59:59.999998 the day
    before).
    """
    if not math.isfinite(year):
        raise InputError(f"decimal year {year!r} is not finite")
    if not 1.0 <= year < 9999.0:  # the years a calendar date (datetime, pandas.Timestamp) can hold
        raise InputError(f"decimal year {year!r} is outside the calendar years 1 to 9998")
    whole = math.floor(year)
    start = pd.Timestamp(year=whole, month=1, day=1)
    end = pd.Timestamp(year=whole + 1, month=1, day=1)
    return (start + (end - start) * (year - whole)).round("ms")


_COORD_RE = re.compile(
    r"""^\s*(?P<pre>[NSEWnsew])?\s*
        (?P<sign>[-+−])?\s*
        (?P<deg>\d+(?:[.,]\d*)?)\s*(?:°|º|d|deg|:|\s)?\s*
        (?:(?P<min>\d+(?:[.,]\d*)?)\s*(?:′|'|’|m|min|:|\s)?\s*)?
        (?:(?P<sec>\d+(?:[.,]\d*)?)\s*(?:″|"|”|''|s|sec)?\s*)?
        (?P<post>[NSEWnsew])?\s*$""",
    re.VERBOSE,
)


def _plain_number(text: str) -> float | None:
    try:
        return float(text.strip().replace("−", "-"))
    except ValueError:
        return None


def parse_coordinate(text: Any, kind: str) -> float:
    """Parse a latitude (``kind='lat'``) or longitude (``kind='lon'``) in decimal degrees.

    Accepted forms: decimal degrees with a sign (``61.175``, ``-149.9``); degrees and
    minutes, or degrees, minutes and seconds, separated by spaces, ``°``, ``′``/``'``,
    ``″``/``"`` or ``:``, with a hemisphere letter before or after (``N61°10.5′``,
    ``149 54 30 W``, ``61:10:30N``). Minutes and seconds must be below 60. North and
    east are positive. Raises :class:`InputError` naming the text otherwise.
    """
    if kind not in ("lat", "lon"):
        raise ValueError("kind must be 'lat' or 'lon'")
    name = "latitude" if kind == "lat" else "longitude"
    limit = 90.0 if kind == "lat" else 180.0
    letters = "NS" if kind == "lat" else "EW"
    accepted = (
        f"decimal degrees (e.g. {'61.175' if kind == 'lat' else '-149.9'}) or degrees/minutes/seconds with "
        f"{'N or S' if kind == 'lat' else 'E or W'} (e.g. {'N61°10.5′' if kind == 'lat' else '149 54 30 W'})"
    )
    if isinstance(text, (bool, np.bool_)):
        raise InputError(f"{name} {text!r} is not a number; give {accepted}")
    if isinstance(text, (int, float, np.integer, np.floating)):
        value = float(text)
        if not math.isfinite(value):
            raise InputError(f"{name} {text!r} is not a finite number; give {accepted}")
    else:
        raw = str(text)
        match = _COORD_RE.match(raw)
        plain = _plain_number(raw)
        if plain is not None:
            return parse_coordinate(plain, kind)
        if not match or (match["pre"] and match["post"]):
            raise InputError(f"{name} {raw!r} is not understood; give {accepted}")
        hemi = (match["pre"] or match["post"] or "").upper()
        if hemi and hemi not in letters:
            raise InputError(f"{name} {raw!r} has hemisphere letter {hemi!r}; a {name} takes {letters[0]} or {letters[1]}")
        if hemi and match["sign"]:
            raise InputError(f"{name} {raw!r} has both a sign and a hemisphere letter; give one of them")

        def num(part: str | None) -> float:
            return float(part.replace(",", ".")) if part else 0.0

        deg, minutes, seconds = num(match["deg"]), num(match["min"]), num(match["sec"])
        if match["min"] and "." in match["deg"].replace(",", "."):
            raise InputError(f"{name} {raw!r} has decimal degrees followed by minutes; give one form")
        if minutes >= 60.0 or seconds >= 60.0:
            raise InputError(f"{name} {raw!r} has minutes or seconds of 60 or more")
        value = deg + minutes / 60.0 + seconds / 3600.0
        if match["sign"] in ("-", "−") or hemi in ("S", "W"):
            value = -value
    if abs(value) > limit:
        raise InputError(f"{name} {text!r} is outside -{limit:g} to {limit:g} degrees")
    return value


_HEIGHT_RE = re.compile(
    r"^\s*(?:(?P<fl>FL)\s*(?P<flnum>\d{1,3})|(?P<num>[-+]?\d+(?:\.\d*)?(?:[eE][-+]?\d+)?|[-+]?\.\d+)\s*(?P<unit>km|m|ft|feet|')?)\s*$",
    re.IGNORECASE,
)

HEIGHT_MIN_KM = -1.0
HEIGHT_MAX_KM = 1000.0


def parse_height_km(text: Any, default_unit: str = "km") -> float:
    """Parse a height above the WGS84 ellipsoid and return it in km.

    Accepted: a number in ``default_unit`` (``km``, ``m`` or ``ft``), or a number
    with a unit (``3.2km``, ``450 m``, ``35000 ft``), or a flight level (``FL350``,
    taken as 35,000 ft; see the module docstring). Heights must lie between
    -1 km and 1,000 km.
    """
    factors = {"km": 1.0, "m": 1e-3, "ft": FOOT_M * 1e-3, "feet": FOOT_M * 1e-3, "'": FOOT_M * 1e-3}
    if default_unit not in factors:
        raise ValueError("default_unit must be km, m or ft")
    accepted = "a number of km, or a value with a unit (450 m, 35000 ft, 3.2 km), or a flight level (FL350)"
    if isinstance(text, (bool, np.bool_)):
        raise InputError(f"height {text!r} is not understood; give {accepted}")
    if isinstance(text, (int, float, np.integer, np.floating)):
        value_km = float(text) * factors[default_unit]
    else:
        match = _HEIGHT_RE.match(str(text))
        if not match:
            raise InputError(f"height {text!r} is not understood; give {accepted}")
        if match["fl"]:
            value_km = int(match["flnum"]) * 100 * FOOT_M * 1e-3
        else:
            unit = (match["unit"] or default_unit).lower()
            value_km = float(match["num"]) * factors[unit]
    if not math.isfinite(value_km):
        raise InputError(f"height {text!r} is not a finite number")
    if not HEIGHT_MIN_KM <= value_km <= HEIGHT_MAX_KM:
        raise InputError(f"height {text!r} ({value_km:g} km) is outside -1 km to 1000 km above the ellipsoid")
    return value_km


def format_dm(angle_deg: float, positive: str = "E", negative: str = "W", decimals: int = 0) -> str:
    """Format an angle as degrees and minutes with a letter, the trade's form: ``12°34′ E``.

    ``decimals`` is the number of decimals of the minutes. Rounding carries into the
    degrees (12°59.7′ with no decimals prints ``13°00′``). NaN prints ``undefined``.
    """
    if angle_deg is None or not math.isfinite(angle_deg):
        return "undefined"
    scale = 10**decimals
    total_minutes = round(abs(angle_deg) * 60.0 * scale) / scale
    degrees = int(total_minutes // 60)
    minutes = total_minutes - 60 * degrees
    letter = positive if angle_deg >= 0 or total_minutes == 0 else negative
    width = 2 + (decimals + 1 if decimals else 0)
    return f"{degrees}°{minutes:0{width}.{decimals}f}′ {letter}"
