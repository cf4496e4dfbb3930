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
  (international foot, 1959 agreement). In a CSV a height carries its unit, in every
  value (``450 m``, ``35000 ft``, ``FL350``) or in the column name (``alt_m``,
  ``alt_ft``, ``alt_km``); a bare number in a column named only ``alt`` is refused
  (:func:`height_column`), and a waypoint or base above 30 km is refused as a unit slip.
- A flight level ``FLnnn`` is a pressure altitude, ``nnn * 100 ft`` in the ICAO
  Standard Atmosphere; plain ``FL350`` is taken as 35,000 ft of height. That is an
  approximation: in a cold column (ISA-35, low QNH) FL350 can lie about 1.5 km below
  10.67 km, which changes the total field by about 35 nT at high latitude (33-39 nT at
  70-85° N with IGRF-14 for 2026-12-02; the radial gradient of F is about -3F/r, some
  -25 nT/km) and the declination by
  far less than the model's own uncertainty. ``FL350 ISA-20`` gives the temperature
  deviation of the column and is converted hypsometrically
  (:func:`pressure_altitude_height_km`, ICAO Doc 7488/3).

Public API: :func:`decimal_year`, :func:`timestamp_from_decimal_year`,
:func:`parse_coordinate`, :func:`format_coordinate_compact`, :func:`parse_height_km`,
:func:`height_column`, :func:`isa_pressure_pa`, :func:`pressure_altitude_height_km`,
:func:`format_dm`, :data:`FOOT_M`.

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


# One strict reading of a number for everything a user types or a CSV holds: plain ASCII decimal,
# an optional sign (the typographic minus U+2212 too), an optional exponent, surrounding blanks.
# Python's float() is far more lenient: it takes "6_1" as 61, Arabic-Indic and full-width digits,
# "nan" and "inf"; a typo or a locale quirk would then pass as a valid value.
_NUMBER_RE = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?", re.ASCII)
NUMBER_HELP = "a plain decimal number such as 12, -3.5 or 1.2e3"


def is_number_text(text: str) -> bool:
    """True if ``text`` (blanks and a U+2212 minus allowed) is a plain ASCII decimal number."""
    return bool(_NUMBER_RE.fullmatch(text.strip().replace("\u2212", "-")))


def parse_number(text: Any, what: str = "value", *, allow_nan: bool = False) -> float:
    """Read one number strictly and return it as a finite float.

    Accepted: plain ASCII decimal digits with an optional sign, decimal point and exponent
    (``12``, ``-3.5``, ``+.5``, ``1.2e3``, ``−4`` with the typographic minus), blanks around.
    Refused with an :class:`InputError` naming ``what``: digit group underscores (``6_1``), digits
    of other scripts (Arabic-Indic, full-width), hexadecimal, ``nan`` and ``inf`` (``allow_nan``
    lets ``nan`` through for a parameter that documents it), and finite text that overflows.
    Numbers (int, float, numpy) pass through the same finiteness check; bool is refused.
    """
    if isinstance(text, (bool, np.bool_)):
        raise InputError(f"{what} {text!r} is not a number; give {NUMBER_HELP}")
    if isinstance(text, (int, float, np.integer, np.floating)):
        value = float(text)
    elif isinstance(text, str):
        cleaned = text.strip().replace("\u2212", "-")
        if allow_nan and cleaned.lower() == "nan":
            return math.nan
        if not _NUMBER_RE.fullmatch(cleaned):
            raise InputError(f"{what} {text!r} is not a number; give {NUMBER_HELP}")
        value = float(cleaned)
    else:
        raise InputError(f"{what} {text!r} of type {type(text).__name__} is not a number; give {NUMBER_HELP}")
    if math.isnan(value) and allow_nan:
        return value
    if not math.isfinite(value):
        raise InputError(f"{what} {text!r} is not a finite number; give {NUMBER_HELP}")
    return value


def _as_datetime64(value: Any) -> np.datetime64 | None:
    """Return a UTC naive datetime64[us] for a date-like scalar, None for a number."""
    if isinstance(value, (bool, np.bool_)):
        raise InputError(f"date {value!r} is not a date; give {_DATE_HELP}")
    if isinstance(value, (int, float, np.integer, np.floating)):
        return None
    if isinstance(value, str):
        text = value.strip()
        if is_number_text(text):
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
            year = float(value.strip().replace("\u2212", "-")) if isinstance(value, str) else float(value)
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
    re.VERBOSE | re.ASCII,  # \d: ASCII digits only (not Arabic-Indic or full-width ones)
)


def _plain_number(text: str) -> float | None:
    return float(text.strip().replace("−", "-")) if is_number_text(text) else None


_COMPACT_RE = re.compile(r"^\s*(?P<pre>[NSEWnsew])?(?P<digits>\d{4,7})(?P<frac>[.,]\d+)?(?P<post>[NSEWnsew])?\s*$", re.ASCII)


def _coordinate_accepted(kind: str) -> str:
    if kind == "lat":
        return ("decimal degrees (61.175, -61.175), degrees/minutes/seconds with N or S (N61°10.5′, 61 10 30 S), "
                "or the compact trade form DDMM[.m] or DDMMSS with N or S (6110N, N6110.5, 611030S)")
    return ("decimal degrees (-149.9), degrees/minutes/seconds with E or W (149 54 30 W, W149°54.5′), "
            "or the compact trade form DDDMM[.m] or DDDMMSS with E or W (14954W, W14954.5, 1495430W)")


def _parse_compact(raw: str, kind: str) -> float | None:
    """The compact trade form (``7443N``, ``N7443.0``, ``09458W``, ``744330N``), or None if not that form.

    Latitude: 4 digits DDMM or 6 digits DDMMSS; longitude: 5 digits DDDMM or 7 digits DDDMMSS;
    a decimal fraction belongs to the last unit; a hemisphere letter before or after is required
    (common practice: the ICAO flight-plan position forms, ICAO Doc 4444 Appendix 2, from memory).
    """
    match = _COMPACT_RE.match(raw)
    if not match or bool(match["pre"]) == bool(match["post"]):
        return None
    digits = match["digits"]
    lengths = (4, 6) if kind == "lat" else (5, 7)
    if len(digits) not in lengths:
        return None
    d = 2 if kind == "lat" else 3
    deg, minutes = int(digits[:d]), int(digits[d : d + 2])
    seconds = int(digits[d + 2 :]) if len(digits) == lengths[1] else 0
    frac = float("0" + match["frac"].replace(",", ".")) if match["frac"] else 0.0
    if len(digits) == lengths[1]:
        seconds += frac
    else:
        minutes += frac
    if minutes >= 60.0 or seconds >= 60.0:
        raise InputError(f"{'latitude' if kind == 'lat' else 'longitude'} {raw!r} has minutes or seconds of 60 or more")
    value = deg + minutes / 60.0 + seconds / 3600.0
    hemi = (match["pre"] or match["post"]).upper()
    if hemi not in ("NS" if kind == "lat" else "EW"):
        return None
    return -value if hemi in "SW" else value


def format_coordinate_compact(value_deg: float, kind: str, seconds: bool = False, decimals: int = 0,
                              letter_first: bool = False) -> str:
    """Format a latitude or longitude in the compact trade form ``7443N`` / ``W09458.0`` / ``744330N``.

    Minutes (or seconds with ``seconds=True``) get ``decimals`` decimals; rounding carries into
    the degrees. The inverse of the compact form :func:`parse_coordinate` accepts.
    """
    if kind not in ("lat", "lon"):
        raise ValueError("kind must be 'lat' or 'lon'")
    if not math.isfinite(value_deg) or abs(value_deg) > (90.0 if kind == "lat" else 180.0):
        raise InputError(f"{kind} {value_deg!r} cannot be formatted; give finite degrees within range")
    unit = 3600.0 if seconds else 60.0
    scale = 10**decimals
    total = round(abs(value_deg) * unit * scale) / scale
    deg = int(total // unit)
    rest = total - deg * unit
    if seconds:
        mins = int(rest // 60)
        last = rest - 60 * mins
        body = f"{deg:0{2 if kind == 'lat' else 3}d}{mins:02d}"
    else:
        last = rest
        body = f"{deg:0{2 if kind == 'lat' else 3}d}"
    width = 2 + (decimals + 1 if decimals else 0)
    body += f"{last:0{width}.{decimals}f}"
    letter = ("N" if value_deg >= 0 or total == 0 else "S") if kind == "lat" else ("E" if value_deg >= 0 or total == 0 else "W")
    return letter + body if letter_first else body + letter


def parse_coordinate(text: Any, kind: str) -> float:
    """Parse a latitude (``kind='lat'``) or longitude (``kind='lon'``) in decimal degrees.

    Accepted forms: decimal degrees with a sign (``61.175``, ``-149.9``); degrees and
    minutes, or degrees, minutes and seconds, separated by spaces, ``°``, ``′``/``'``,
    ``″``/``"`` or ``:``, with a hemisphere letter before or after (``N61°10.5′``,
    ``149 54 30 W``, ``61:10:30N``); the compact trade form without separators and with a
    hemisphere letter (``7443N``, ``N7443.0``, ``09458W``, ``W09458.0``, ``744330N``;
    :func:`format_coordinate_compact`). Minutes and seconds must be below 60. North and
    east are positive. Raises :class:`InputError` naming the text and listing the forms otherwise.

    >>> parse_coordinate("7443N", "lat"), parse_coordinate("W09458.0", "lon")
    (74.71666666666667, -94.96666666666667)
    """
    if kind not in ("lat", "lon"):
        raise ValueError("kind must be 'lat' or 'lon'")
    name = "latitude" if kind == "lat" else "longitude"
    limit = 90.0 if kind == "lat" else 180.0
    letters = "NS" if kind == "lat" else "EW"
    accepted = _coordinate_accepted(kind)
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
        compact = None if plain is not None else _parse_compact(raw, kind)
        if plain is not None:
            if not math.isfinite(plain):
                raise InputError(f"{name} {raw!r} is not a finite number; give {accepted}")
            value = plain
        elif compact is not None:
            value = compact
        elif not match or (match["pre"] and match["post"]):
            raise InputError(f"{name} {raw!r} is not understood; give {accepted}")
        else:
            value = _parse_coordinate_match(match, raw, name, letters)
    if abs(value) > limit:
        raise InputError(f"{name} {text!r} is outside -{limit:g} to {limit:g} degrees; give {accepted}")
    return value


def _parse_coordinate_match(match: re.Match, raw: str, name: str, letters: str) -> float:
    """Degrees from a match of the separated degrees/minutes/seconds form."""
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
    return -value if match["sign"] in ("-", "−") or hemi in ("S", "W") else value


_HEIGHT_RE = re.compile(
    r"^\s*(?:(?P<fl>FL)\s*(?P<flnum>\d{1,3})(?:\s+ISA\s*(?P<dt>[-+−]\s*\d+(?:\.\d*)?)\s*(?:K|C|°C)?)?"
    r"|(?P<num>[-+]?\d+(?:\.\d*)?(?:[eE][-+]?\d+)?|[-+]?\.\d+)\s*(?P<unit>km|m|ft|feet|')?)\s*$",
    re.IGNORECASE | re.ASCII,  # \d: ASCII digits only
)

HEIGHT_MIN_KM = -1.0
HEIGHT_MAX_KM = 1000.0
ROUTE_HEIGHT_MAX_KM = 30.0
"""Highest height (km) accepted for a waypoint or a compass base: a cell above it is refused as a likely
unit slip (``350`` meant as FL350), not read as 350 km."""

HEIGHT_UNITS = {"km": 1.0, "m": 1e-3, "ft": FOOT_M * 1e-3, "feet": FOOT_M * 1e-3, "'": FOOT_M * 1e-3}
"""Factors to km of the height units accepted in text and in column names (``alt_ft``)."""

# ICAO Standard Atmosphere (ICAO Doc 7488/3, 1993; identical to the U.S. Standard Atmosphere 1976 below
# 32 km): sea-level temperature and pressure, tropospheric lapse rate, tropopause, gas constant of dry air,
# standard gravity, and the Earth radius of the geopotential-to-geometric height conversion.
ISA_T0_K = 288.15
ISA_P0_PA = 101325.0
ISA_LAPSE_K_PER_M = 0.0065
ISA_TROPOPAUSE_M = 11000.0
ISA_R_J_PER_KG_K = 287.05287
ISA_G0_MPS2 = 9.80665
ISA_EARTH_RADIUS_M = 6356766.0
_ISA_T11_K = ISA_T0_K - ISA_LAPSE_K_PER_M * ISA_TROPOPAUSE_M  # 216.65 K
_ISA_EXP = ISA_G0_MPS2 / (ISA_R_J_PER_KG_K * ISA_LAPSE_K_PER_M)  # 5.25588
_ISA_P11_PA = ISA_P0_PA * (_ISA_T11_K / ISA_T0_K) ** _ISA_EXP  # 22632 Pa


def isa_pressure_pa(geopotential_m: Any) -> Any:
    """Pressure (Pa) of the ICAO Standard Atmosphere at a geopotential height (m), 0 to 20 km.

    Troposphere ``p = p0 (T/T0)^(g0/(R L))`` with ``T = T0 - L H``; isothermal layer above
    11 km ``p = p11 exp(-g0 (H - 11000) / (R T11))`` (ICAO Doc 7488/3, 1993, eqs. for the
    hydrostatic ISA layers).
    """
    h = np.asarray(geopotential_m, dtype=np.float64)
    if np.any(~np.isfinite(h)) or np.any(h < -5000.0) or np.any(h > 20000.0):
        raise InputError(f"geopotential height {geopotential_m!r} m is outside -5,000 to 20,000 m of this ISA model")
    trop = ISA_P0_PA * ((ISA_T0_K - ISA_LAPSE_K_PER_M * h) / ISA_T0_K) ** _ISA_EXP
    strat = _ISA_P11_PA * np.exp(-ISA_G0_MPS2 * (h - ISA_TROPOPAUSE_M) / (ISA_R_J_PER_KG_K * _ISA_T11_K))
    out = np.where(h <= ISA_TROPOPAUSE_M, trop, strat)
    return float(out) if np.ndim(out) == 0 else out


def pressure_altitude_height_km(pressure_altitude_m: float, isa_deviation_K: float = 0.0) -> float:
    """Geometric height (km above mean sea level) of a pressure altitude in a column ISA + dT.

    The hypsometric equation ``dz = (T / T_ISA) dH`` integrated from standard sea-level pressure
    up to the pressure surface, with the column temperature ``T = T_ISA(H) + dT`` at every level:
    ``Z = H + dT * integral dH / T_ISA(H)`` (geopotential metres), then geometric height
    ``z = r Z / (r - Z)`` with ``r = 6356766 m`` (ICAO Doc 7488/3, 1993). Assumes the standard
    sea-level pressure (QNH 1013.25 hPa); a low QNH lowers the surface further. Mean sea level is
    taken as the ellipsoid (the geoid lies within about 100 m of it).
    """
    h = float(pressure_altitude_m)
    if not -5000.0 <= h <= 20000.0 or not math.isfinite(isa_deviation_K) or abs(isa_deviation_K) > 60.0:
        raise InputError(
            f"pressure altitude {h:g} m with ISA{isa_deviation_K:+g} is outside -5,000 to 20,000 m and ISA-60 to ISA+60"
        )
    trop_top = min(h, ISA_TROPOPAUSE_M)
    integral = -math.log((ISA_T0_K - ISA_LAPSE_K_PER_M * trop_top) / ISA_T0_K) / ISA_LAPSE_K_PER_M
    if h > ISA_TROPOPAUSE_M:
        integral += (h - ISA_TROPOPAUSE_M) / _ISA_T11_K
    z_geopotential = h + isa_deviation_K * integral
    return ISA_EARTH_RADIUS_M * z_geopotential / (ISA_EARTH_RADIUS_M - z_geopotential) / 1000.0


def _height_accepted(default_unit: str | None) -> str:
    if default_unit is None:
        return "a value with a unit (450 m, 35000 ft, 3.2 km) or a flight level (FL350, FL350 ISA-20)"
    return f"a number of {default_unit}, or a value with a unit (450 m, 35000 ft, 3.2 km), or a flight level (FL350)"


def parse_height_km(text: Any, default_unit: str | None = "km", max_km: float = HEIGHT_MAX_KM) -> float:
    """Parse a height above the WGS84 ellipsoid and return it in km.

    Accepted: a number in ``default_unit`` (``km``, ``m`` or ``ft``; ``None`` refuses a number
    without a unit), or a number with a unit (``3.2km``, ``450 m``, ``35000 ft``), or a flight
    level (``FL350``, taken as 35,000 ft; see the module docstring), optionally with the column's
    temperature deviation from ISA (``FL350 ISA-20``: geometric height by
    :func:`pressure_altitude_height_km`). Heights must lie between -1 km and ``max_km``
    (1,000 km; :data:`ROUTE_HEIGHT_MAX_KM` for waypoints and bases, where a larger number is
    refused as a likely unit slip with a suggestion).
    """
    if default_unit is not None and default_unit not in HEIGHT_UNITS:
        raise ValueError("default_unit must be km, m, ft or None")
    accepted = _height_accepted(default_unit)
    if isinstance(text, (bool, np.bool_)):
        raise InputError(f"height {text!r} is not understood; give {accepted}")
    if isinstance(text, (int, float, np.integer, np.floating)):
        if default_unit is None and text != 0:  # zero is zero in every unit
            raise InputError(f"height {text!r} has no unit; give {accepted}, or name the column with its unit (alt_ft, alt_m, alt_km)")
        value_km = float(text) * HEIGHT_UNITS[default_unit]
    else:
        match = _HEIGHT_RE.match(str(text))
        if not match:
            raise InputError(f"height {text!r} is not understood; give {accepted}")
        if match["fl"]:
            feet = int(match["flnum"]) * 100
            if match["dt"]:
                deviation = float(re.sub(r"\s", "", match["dt"]).replace("−", "-"))
                value_km = pressure_altitude_height_km(feet * FOOT_M, deviation)
            else:
                value_km = feet * FOOT_M * 1e-3
        else:
            if match["unit"] is None and default_unit is None and float(match["num"]) != 0.0:
                raise InputError(
                    f"height {text!r} has no unit; give {accepted}, or name the column with its unit (alt_ft, alt_m, alt_km)"
                )
            unit = (match["unit"] or default_unit or "km").lower()
            value_km = float(match["num"]) * HEIGHT_UNITS[unit]
    if not math.isfinite(value_km):
        raise InputError(f"height {text!r} is not a finite number")
    if value_km > max_km and max_km < HEIGHT_MAX_KM and value_km <= HEIGHT_MAX_KM:
        raise InputError(
            f"height {text!r} is {value_km:g} km, above the {max_km:g} km a waypoint or base can have; "
            "for a flight level or feet write FL350 or 35000 ft"
        )
    if not HEIGHT_MIN_KM <= value_km <= min(max_km, HEIGHT_MAX_KM):
        raise InputError(
            f"height {text!r} ({value_km:g} km) is outside -1 km to {min(max_km, HEIGHT_MAX_KM):g} km above the ellipsoid"
        )
    return value_km


def height_column(columns: Any, base: str = "alt") -> tuple[str | None, str | None]:
    """Find the height column of a table: ``base`` (unit in each value) or ``base_km/_m/_ft``.

    Returns ``(column name, unit)``; the unit is None for the plain ``base`` column (each value
    must then carry its unit, :func:`parse_height_km` with ``default_unit=None``; a bare 0 is
    accepted, zero in every unit), and
    ``(None, None)`` when the table has no height column. Two height columns are refused.
    """
    names = [str(c) for c in columns]
    found = [(c, None) for c in names if c == base]
    found += [(c, u) for c in names for u in ("km", "m", "ft") if c == f"{base}_{u}"]
    if len(found) > 1:
        raise InputError(f"columns {', '.join(c for c, _ in found)} all give the height; keep one")
    return found[0] if found else (None, None)


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
