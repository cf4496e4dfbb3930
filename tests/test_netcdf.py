"""NetCDF output: time is a CF datetime ("<unit> since <date>"), the decimal year kept beside it.

Sources: CF Conventions 1.x, section 4.4 "Time Coordinate" (units of the form ``<unit> since
<reference date>``, a ``calendar`` attribute); the day counts are computed with Python's
``datetime`` (proleptic Gregorian, as CF's ``proleptic_gregorian`` calendar); the file is read
back by h5netcdf (raw attributes, no decoding) and by xarray (``decode_times=True``).
"""

from __future__ import annotations

import datetime as dt

import h5netcdf
import numpy as np
import xarray as xr

import headingref
from headingref.cli import main
from headingref.netcdf import cf_time, write_netcdf

DATES = ("2026-12-02", "2027-06-01")


def _days_since_1900(text: str) -> float:
    # Python's datetime: proleptic Gregorian calendar, the CF "proleptic_gregorian" calendar
    return float((dt.date.fromisoformat(text) - dt.date(1900, 1, 1)).days)


def test_zone_grid_time_is_cf_datetime(tmp_path):
    ds = headingref.zones("north", list(DATES), resolution_deg=10.0)
    target = tmp_path / "zones.nc"
    write_netcdf(target, ds)
    with h5netcdf.File(target, "r") as raw:
        units = raw["time"].attrs["units"]
        assert " since " in units  # CF 1.x, 4.4: "<unit> since <reference date>"
        assert raw["time"].attrs["calendar"] == "proleptic_gregorian"
        assert units.startswith("days since 1900-01-01")
        # the stored numbers are days since the reference: datetime's count, to a second
        np.testing.assert_allclose(raw["time"][:], [_days_since_1900(d) for d in DATES], atol=1.0 / 86400)
        assert raw.attrs["Conventions"].startswith("CF-")
    back = xr.open_dataset(target, engine="h5netcdf", decode_times=True)
    assert np.issubdtype(back["time"].dtype, np.datetime64)
    assert [str(v)[:10] for v in back["time"].values] == list(DATES)
    # the decimal year stays, as the calendar-year fraction: 2026-12-02 is day 335 of a 365-day year
    np.testing.assert_allclose(back["decimal_year"].values, [2026 + 335 / 365, 2027 + 151 / 365], atol=1e-9)
    back.close()


def test_single_date_grid_round_trips_and_keeps_values(tmp_path):
    ds = headingref.zones("south", "2026-12-02", resolution_deg=10.0)
    target = tmp_path / "one.nc"
    write_netcdf(target, ds)
    with xr.open_dataset(target, engine="h5netcdf") as back:
        assert str(back["time"].values)[:10] == "2026-12-02"
        np.testing.assert_array_equal(back["zone_code"].values, ds["zone_code"].values)
    assert not np.issubdtype(ds["time"].dtype, np.datetime64)  # the caller's dataset is not changed
    assert cf_time(cf_time(ds))["time"].dtype == np.dtype("datetime64[ns]")  # idempotent


def test_zones_cli_netcdf_is_cf(tmp_path, capsys):
    target = tmp_path / "cli.nc"
    assert main(["zones", "--cap", "north", "--date", "2026-12-02", "--resolution", "10", "--netcdf", str(target)]) == 0
    with h5netcdf.File(target, "r") as raw:
        assert "since" in raw["time"].attrs["units"]
        np.testing.assert_allclose(raw["time"][()], _days_since_1900("2026-12-02"), atol=1.0 / 86400)
