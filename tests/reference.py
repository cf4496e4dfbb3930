"""Outside reference values for the tests, each wrapper written once.

ppigrf (Laundal, https://github.com/IAGA-VMOD/ppigrf) synthesises IGRF-14 from the published
coefficient file with its own code: input geodetic longitude, latitude (degrees) and height
above the WGS84 ellipsoid (km); output the east, north and up components (nT) in the same
geodetic frame. Dates are interpolated linearly in days between the 5-year epochs (headingref
uses decimal years; the two differ by well under a day inside 2025-2030).

Use these helpers instead of calling ``ppigrf.igrf`` in a test file, so the argument order
(ppigrf takes lon before lat) and the date conversion are right in one place.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable
from typing import Any

import numpy as np
import pandas as pd
import ppigrf


def as_datetime(when: Any) -> dt.datetime | list[dt.datetime]:
    """One ``datetime`` (or a list of them) from an ISO string, date, datetime or Timestamp (or a sequence of them)."""
    if _single_date(when):
        stamp = pd.Timestamp(when)
        return stamp.to_pydatetime().replace(tzinfo=None)
    if isinstance(when, Iterable):
        return [as_datetime(w) for w in when]
    raise TypeError(f"not a date: {when!r}")


def ppigrf_enu(lat: Any, lon: Any, alt_km: Any, when: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """ppigrf's IGRF-14 east, north and up components, nT, flattened (dates first, then points).

    ``lat``/``lon`` geodetic degrees, ``alt_km`` height above the WGS84 ellipsoid; scalars or
    arrays that broadcast. ``when`` one date or a sequence of dates.
    """
    east, north, up = ppigrf.igrf(np.asarray(lon, dtype=float), np.asarray(lat, dtype=float),
                                  np.asarray(alt_km, dtype=float), as_datetime(when))
    return np.ravel(east), np.ravel(north), np.ravel(up)


def _single_date(when: Any) -> bool:
    return isinstance(when, str | dt.date | pd.Timestamp | np.datetime64)


def _one_or_many(values: np.ndarray, *inputs: Any) -> float | np.ndarray:
    """A float for scalar inputs and one date; otherwise the flat array (even of one element)."""
    *coords, when = inputs
    scalar = _single_date(when) and all(np.ndim(c) == 0 for c in coords)
    return float(values[0]) if scalar else values


def ppigrf_declination(lat: Any, lon: Any, when: Any, alt_km: Any = 0.0) -> float | np.ndarray:
    """ppigrf's IGRF-14 declination, degrees east positive: ``atan2(east, north)``.

    A float when ``lat``, ``lon``, ``alt_km`` are scalars and ``when`` is one date; otherwise a flat
    array (dates first, then points), even of one element.
    """
    east, north, _ = ppigrf_enu(lat, lon, alt_km, when)
    return _one_or_many(np.degrees(np.arctan2(east, north)), lat, lon, alt_km, when)


def ppigrf_horizontal(lat: Any, lon: Any, when: Any, alt_km: Any = 0.0) -> float | np.ndarray:
    """ppigrf's IGRF-14 horizontal intensity ``hypot(east, north)``, nT (float or flat array, as above)."""
    east, north, _ = ppigrf_enu(lat, lon, alt_km, when)
    return _one_or_many(np.hypot(east, north), lat, lon, alt_km, when)
