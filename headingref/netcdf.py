"""Grids to netCDF with a CF time coordinate.

headingref's grids (:func:`headingref.elements.field_grid`, :func:`headingref.zones`,
:func:`headingref.compare.difference_grid`) carry the date as a decimal year (a float ``time``
coordinate, :func:`headingref.units.decimal_year`). CF readers (xarray ``decode_times``,
Panoply, ncview, GDAL) expect time as a number with units ``<unit> since <reference date>``
(CF Conventions 1.x, section 4.4 "Time Coordinate"). :func:`cf_time` turns the coordinate into
``datetime64`` (UTC) that xarray encodes as ``days since 1900-01-01`` in the
``proleptic_gregorian`` calendar, and keeps the decimal year beside it as the variable
``decimal_year`` on the same dimension. :func:`write_netcdf` writes atomically (temporary file,
then rename, :func:`headingref.io.atomic_path`).

>>> import headingref
>>> from headingref.netcdf import cf_time
>>> ds = cf_time(headingref.zones("north", "2026-12-02", resolution_deg=5.0))
>>> str(ds["time"].values)[:10], round(float(ds["decimal_year"]), 3)
('2026-12-02', 2026.918)
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

__all__ = ["TIME_UNITS", "cf_time", "write_netcdf"]

TIME_UNITS = "days since 1900-01-01"
"""The CF time units written (CF Conventions 1.x, 4.4: ``<unit> since <date>``)."""
_CALENDAR = "proleptic_gregorian"  # numpy datetime64 is proleptic Gregorian (CF 1.x, 4.4.1)


def cf_time(ds):
    """A copy of ``ds`` whose ``time`` coordinate is ``datetime64[ns]`` (UTC), CF-encoded on writing.

    The decimal years stay as the variable ``decimal_year`` (same dimension as ``time``, units
    ``year``); a dataset without a ``time`` coordinate, or whose time is already a datetime, is
    returned unchanged. Each date is :func:`headingref.units.timestamp_from_decimal_year` of the
    decimal year (the inverse of :func:`headingref.units.decimal_year`).
    """
    from .units import timestamp_from_decimal_year

    if "time" not in ds.coords or np.issubdtype(ds["time"].dtype, np.datetime64):
        return ds
    years = np.asarray(ds["time"].values, dtype=np.float64)
    stamps = np.array([timestamp_from_decimal_year(float(y)).tz_localize(None).to_datetime64() for y in years.ravel()],
                      dtype="datetime64[ns]").reshape(years.shape)
    dims = ds["time"].dims
    out = ds.assign_coords(time=(dims, stamps, {"standard_name": "time", "long_name": "date (UTC)"}))
    out["decimal_year"] = (dims, years, {"long_name": "decimal year (calendar-year fraction, UTC)", "units": "year"})
    out["time"].encoding.update(units=TIME_UNITS, calendar=_CALENDAR, dtype="float64", _FillValue=None)
    return out


def write_netcdf(target: str | os.PathLike, ds) -> Path:
    """Write ``ds`` as netCDF-4 (h5netcdf) atomically, time as a CF datetime (:func:`cf_time`)."""
    from .io import atomic_path

    out = cf_time(ds)
    out.attrs = {"Conventions": "CF-1.8", **out.attrs}
    with atomic_path(target) as tmp:
        out.to_netcdf(tmp, engine="h5netcdf")
    return Path(target)
