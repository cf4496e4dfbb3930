"""Parsers and formatters at the edge: coordinates, dates, heights, CSV reading, atomic writes."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given
from hypothesis import strategies as st

from headingref import io
from headingref.errors import InputError
from headingref.units import (
    FOOT_M,
    ROUTE_HEIGHT_MAX_KM,
    decimal_year,
    format_coordinate_compact,
    format_dm,
    height_column,
    isa_pressure_pa,
    parse_coordinate,
    parse_height_km,
    pressure_altitude_height_km,
    timestamp_from_decimal_year,
)


def test_foot_and_flight_level_definitions():
    # Source: international yard and pound agreement (1959): 1 ft = 0.3048 m exactly.
    assert FOOT_M == 0.3048
    assert parse_height_km("35000 ft") == pytest.approx(10.668, abs=1e-12)
    # A flight level is hundreds of feet of pressure altitude (ICAO Annex 2 definitions, from memory);
    # FL350 -> 35,000 ft taken as height.
    assert parse_height_km("FL350") == pytest.approx(35000 * 0.3048 / 1000, abs=1e-12)
    assert parse_height_km("450 m") == pytest.approx(0.45)
    assert parse_height_km(3.2) == 3.2
    assert parse_height_km("1000", default_unit="ft") == pytest.approx(0.3048)


@pytest.mark.parametrize("text", ["FL", "12 parsecs", "-2 km", "1001 km", "nan", ""])
def test_bad_heights(text):
    with pytest.raises(InputError, match="height"):
        parse_height_km(text)


def test_decimal_year_convention():
    # Calendar-year fraction with leap years (the convention of the NOAA WMM software, from memory).
    assert decimal_year("2024-07-02") == pytest.approx(2024 + 183 / 366, abs=1e-12)
    assert decimal_year("2023-07-02") == pytest.approx(2023 + 182 / 365, abs=1e-12)
    assert decimal_year("2024-02-29") == pytest.approx(2024 + 59 / 366, abs=1e-12)
    assert decimal_year("2026-12-02T12:00:00+02:00") == pytest.approx(2026 + (335 + 10 / 24) / 365, abs=1e-12)
    assert decimal_year(2026.5) == 2026.5
    np.testing.assert_allclose(decimal_year(["2020-01-01", 2021.25]), [2020.0, 2021.25])


@given(st.datetimes(min_value=pd.Timestamp("1900-01-01").to_pydatetime(), max_value=pd.Timestamp("2099-12-31").to_pydatetime()))
def test_decimal_year_round_trip(when):
    back = timestamp_from_decimal_year(decimal_year(when))
    assert abs((back - pd.Timestamp(when)).total_seconds()) < 1e-3


@pytest.mark.parametrize("text", ["2025-02-30", "02/03/2025", "soon", "99999", True])
def test_bad_dates(text):
    with pytest.raises(InputError, match="date"):
        decimal_year(text)


@pytest.mark.parametrize(
    "text, kind, expected",
    [
        ("N61°10.5′", "lat", 61.175),
        ("61 10 30 N", "lat", 61 + 10 / 60 + 30 / 3600),
        ("S33 52", "lat", -(33 + 52 / 60)),
        ("149 54 30 W", "lon", -(149 + 54 / 60 + 30 / 3600)),
        ("E015°38'", "lon", 15 + 38 / 60),
        ("-149.9", "lon", -149.9),
        ("61:10:30N", "lat", 61 + 10 / 60 + 30 / 3600),
        ("12°30'15\" S", "lat", -(12 + 30 / 60 + 15 / 3600)),
    ],
)
def test_coordinate_forms(text, kind, expected):
    # Degrees-minutes-seconds arithmetic (common practice).
    assert parse_coordinate(text, kind) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(
    "text, kind, message",
    [("N61 70", "lat", "60 or more"), ("E61", "lat", "hemisphere letter"), ("-N61", "lat", "not understood"),
     ("91N", "lat", "outside"), ("181 W", "lon", "outside"), ("abc", "lon", "not understood"), ("", "lat", "not understood")],
)
def test_bad_coordinates(text, kind, message):
    with pytest.raises(InputError, match=message):
        parse_coordinate(text, kind)


@given(st.floats(min_value=-90, max_value=90, allow_nan=False))
def test_format_dm_parses_back_within_half_a_tenth_of_a_minute(value):
    text = format_dm(value, "N", "S", decimals=1).replace(" ", "")
    back = parse_coordinate(text, "lat")
    assert abs(back - value) <= 0.05 / 60 + 1e-12


@given(st.floats(min_value=-180, max_value=180, allow_nan=False), st.sampled_from(["dms", "dm", "dec"]))
def test_longitude_text_round_trip(value, form):
    sign = "E" if value >= 0 else "W"
    total_seconds = round(abs(value) * 3600, 4)  # round first so that no field prints as 60
    deg = int(total_seconds // 3600)
    minutes = (total_seconds - 3600 * deg) / 60
    if form == "dec":
        text = repr(value)
    elif form == "dm":
        text = f"{deg} {minutes:.7f} {sign}"
    else:
        m = math.floor(minutes)
        text = f"{sign}{deg}°{m}′{total_seconds - 3600 * deg - 60 * m:.4f}″"
    assert parse_coordinate(text, "lon") == pytest.approx(value, abs=1e-6)


def test_format_dm_carries_and_letters():
    assert format_dm(12.9999) == "13°00′ E"
    assert format_dm(-0.25) == "0°15′ W"
    assert format_dm(float("nan")) == "undefined"


def test_read_table_forms(tmp_path):
    path = tmp_path / "t.csv"
    path.write_bytes("\ufeffName;LAT;lon\nA;61,5;10\n\nB;62;11\n".encode())
    with pytest.raises(InputError, match="line 2: lat '61,5' is not a number"):
        io.float_column(io.read_table(path, ["name", "lat", "lon"]), "lat")
    path.write_text("name,lat\nA,61\n")
    with pytest.raises(InputError, match="missing column"):
        io.read_table(path, ["name", "lat", "lon"])
    path.write_bytes(b"\xff\xfe\x00n")
    with pytest.raises(InputError, match="binary|UTF-8"):
        io.read_table(path, ["lat"])
    path.write_text("")
    with pytest.raises(InputError, match="empty"):
        io.read_table(path, ["lat"])
    path.write_text("lat,lon\n1,2,3\n")
    with pytest.raises(InputError, match="3 fields"):
        io.read_table(path, ["lat", "lon"])
    path.write_text("lat,lon\n1e999,2\n")
    with pytest.raises(InputError, match="finite"):
        io.float_column(io.read_table(path, ["lat", "lon"]), "lat")


@given(st.binary(max_size=300))
def test_read_table_never_crashes_on_random_bytes(tmp_path_factory, data):
    path = tmp_path_factory.mktemp("fuzz") / "f.csv"
    path.write_bytes(data)
    try:
        table = io.read_table(path, ["lat", "lon"])
        io.coordinate_column(table, "lat", "lat")
    except InputError:
        pass


def test_atomic_write_leaves_nothing_on_failure(tmp_path):
    target = tmp_path / "out.csv"
    target.write_text("old")
    with pytest.raises(RuntimeError), io.atomic_path(target) as tmp:
        tmp.write_text("half")
        raise RuntimeError("boom")
    assert target.read_text() == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["out.csv"]
    with pytest.raises(InputError, match="does not exist"):
        io.write_text(tmp_path / "no" / "x.txt", "x")


@given(st.dates(min_value=pd.Timestamp("1900-01-01").date(), max_value=pd.Timestamp("2099-12-31").date()))
def test_calendar_dates_come_back_exact(day):
    # A date must not come back as 23:59:59.999 of the day before (it would print the wrong day).
    assert timestamp_from_decimal_year(decimal_year(day.isoformat())) == pd.Timestamp(day)


# --------------------------------------------------------------------------- heights: units, flight levels, ISA


def test_height_needs_a_unit_where_the_column_has_none():
    # A plain number in a unit-less height column is refused (our documented rule, README "Units");
    # a bare zero is zero in every unit.
    with pytest.raises(InputError, match="no unit"):
        parse_height_km("350", default_unit=None)
    with pytest.raises(InputError, match="no unit"):
        parse_height_km(350.0, default_unit=None)
    assert parse_height_km("0", default_unit=None) == 0.0
    assert parse_height_km("120 m", default_unit=None) == pytest.approx(0.12)
    assert parse_height_km("FL350", default_unit=None) == pytest.approx(10.668)  # 35,000 ft x 0.3048 m (1959)


def test_route_height_above_30_km_suggests_flight_level():
    with pytest.raises(InputError, match=r"350 km.*FL350 or 35000 ft"):
        parse_height_km(350, max_km=ROUTE_HEIGHT_MAX_KM)
    with pytest.raises(InputError, match="FL350"):
        parse_height_km("350", default_unit="km", max_km=ROUTE_HEIGHT_MAX_KM)
    assert parse_height_km("29 km", max_km=ROUTE_HEIGHT_MAX_KM) == 29.0


@pytest.mark.parametrize(
    "columns,expected",
    [(["name", "lat", "lon"], (None, None)), (["name", "alt"], ("alt", None)), (["alt_ft"], ("alt_ft", "ft")),
     (["x", "alt_m"], ("alt_m", "m")), (["alt_km"], ("alt_km", "km"))],
)
def test_height_column_names_carry_the_unit(columns, expected):
    assert height_column(columns) == expected


def test_two_height_columns_refused():
    with pytest.raises(InputError, match="alt, alt_ft"):
        height_column(["alt", "alt_ft"])


@pytest.mark.parametrize(
    "geopotential_m,pressure_pa,tol",
    [
        (0.0, 101325.0, 1e-9),  # ICAO Doc 7488/3 (1993), sea level
        (11000.0, 22632.06, 0.05),  # ICAO Doc 7488/3 = U.S. Standard Atmosphere 1976 Table 4, tropopause (from memory)
        (20000.0, 5474.89, 0.05),  # U.S. Standard Atmosphere 1976 Table 4, base of the 20 km layer (from memory)
        (1000.0, 89874.6, 0.1),  # U.S. Standard Atmosphere 1976, H = 1 km geopotential (from memory)
    ],
)
def test_isa_pressure_matches_standard_tables(geopotential_m, pressure_pa, tol):
    assert isa_pressure_pa(geopotential_m) == pytest.approx(pressure_pa, abs=tol)


def test_isa_column_gives_geopotential_to_geometric_only():
    # With no temperature deviation the pressure altitude is the geopotential height; geometric height
    # z = r H / (r - H), r = 6356766 m (ICAO Doc 7488/3; U.S. Standard Atmosphere 1976 eq. 18).
    h = 35000 * FOOT_M
    assert pressure_altitude_height_km(h, 0.0) == pytest.approx(6356766.0 * h / (6356766.0 - h) / 1000.0, abs=1e-12)
    assert parse_height_km("FL350 ISA+0") == pytest.approx(10.6859, abs=1e-4)


@pytest.mark.parametrize("deviation", [-35.0, -10.0, 15.0])
def test_hypsometric_height_matches_numerical_integration(deviation):
    # First principles: hydrostatic balance dZ = -(R T / g0) dp / p (hypsometric equation) integrated
    # numerically over pressure, with the column at ISA + dT at every pressure level (scipy quad),
    # against the closed form used in units.pressure_altitude_height_km.
    from scipy.integrate import quad

    r_air, g0, t0, lapse, p0 = 287.05287, 9.80665, 288.15, 0.0065, 101325.0  # ICAO Doc 7488/3 constants
    expo = g0 / (r_air * lapse)

    def std_height(p):  # ISA geopotential height of a pressure, troposphere (FL350 stays below 11 km)
        return t0 / lapse * (1.0 - (p / p0) ** (1.0 / expo))

    p_top = isa_pressure_pa(35000 * FOOT_M)
    z, _ = quad(lambda p: r_air * (t0 - lapse * std_height(p) + deviation) / (g0 * p), p_top, p0)
    geometric = 6356766.0 * z / (6356766.0 - z) / 1000.0
    assert parse_height_km(f"FL350 ISA{deviation:+g}") == pytest.approx(geometric, abs=1e-6)


def test_cold_column_flight_level_lies_far_below_its_nominal_height():
    # README claim: in a cold column FL350 can lie ~1.5 km below 10.67 km. ISA-35 at standard QNH:
    below_km = 10.668 - parse_height_km("FL350 ISA-35")
    assert 1.3 < below_km < 1.6


@pytest.mark.parametrize("text", ["FL350 ISA-99", "FL350 ISA", "FL350 ISA+x"])
def test_bad_isa_deviation(text):
    with pytest.raises(InputError):
        parse_height_km(text)


# --------------------------------------------------------------------------- compact trade coordinates


@pytest.mark.parametrize(
    "text,kind,value",
    [
        ("7443N", "lat", 74 + 43 / 60),  # DDMM with a letter (ICAO flight-plan position form, Doc 4444 App. 2; from memory)
        ("N7443.0", "lat", 74 + 43 / 60),
        ("09458W", "lon", -(94 + 58 / 60)),  # DDDMM
        ("W09458.0", "lon", -(94 + 58 / 60)),
        ("7443.5S", "lat", -(74 + 43.5 / 60)),
        ("744330N", "lat", 74 + 43 / 60 + 30 / 3600),  # DDMMSS
        ("0945830E", "lon", 94 + 58 / 60 + 30 / 3600),  # DDDMMSS
        ("18000W", "lon", -180.0),
    ],
)
def test_compact_trade_coordinates(text, kind, value):
    assert parse_coordinate(text, kind) == pytest.approx(value, abs=1e-12)


@pytest.mark.parametrize(
    "text,kind",
    [("7443", "lat"), ("7443W", "lat"), ("09458N", "lon"), ("7463N", "lat"), ("9100N", "lat"), ("N7443N", "lat"),
     ("07443N", "lat"), ("9458W", "lon"), ("18100E", "lon")],
)
def test_bad_compact_coordinates_list_the_forms(text, kind):
    with pytest.raises(InputError) as info:
        parse_coordinate(text, kind)
    message = str(info.value)
    assert text in message and "\n" not in message  # one line naming the value


def test_unknown_coordinate_lists_compact_form():
    with pytest.raises(InputError, match=r"compact trade form DDDMM\[\.m\]"):
        parse_coordinate("W9458", "lon")


@given(st.floats(-90.0, 90.0), st.booleans(), st.integers(0, 3), st.booleans())
def test_compact_latitude_round_trip(lat, seconds, decimals, letter_first):
    text = format_coordinate_compact(lat, "lat", seconds=seconds, decimals=decimals, letter_first=letter_first)
    unit = 3600.0 if seconds else 60.0
    assert abs(parse_coordinate(text, "lat") - lat) <= 0.5 / unit / 10**decimals + 1e-12


@given(st.floats(-180.0, 180.0), st.booleans(), st.integers(0, 3), st.booleans())
def test_compact_longitude_round_trip(lon, seconds, decimals, letter_first):
    text = format_coordinate_compact(lon, "lon", seconds=seconds, decimals=decimals, letter_first=letter_first)
    unit = 3600.0 if seconds else 60.0
    back = parse_coordinate(text, "lon")
    assert abs(back - lon) <= 0.5 / unit / 10**decimals + 1e-12


@given(st.floats(-999.0, 30000.0, allow_nan=False), st.sampled_from(["m", "ft", "km"]))
def test_height_with_unit_property(value, unit):
    # unit factors: 1 m = 1e-3 km; 1 ft = 0.3048 m exactly (1959 international foot)
    factor = {"m": 1e-3, "ft": 0.3048e-3, "km": 1.0}[unit]
    km = value * factor
    if not -1.0 <= km <= ROUTE_HEIGHT_MAX_KM:
        return
    assert parse_height_km(f"{value!r} {unit}", default_unit=None, max_km=ROUTE_HEIGHT_MAX_KM) == pytest.approx(km, rel=1e-12, abs=1e-15)
    assert parse_height_km(value, default_unit=unit, max_km=ROUTE_HEIGHT_MAX_KM) == pytest.approx(km, rel=1e-12, abs=1e-15)


@given(st.integers(0, 650), st.floats(-50.0, 50.0))
def test_flight_level_height_property(level, deviation):
    # hypsometric equation: a warmer column puts the same pressure surface higher (ICAO Doc 7488 / hydrostatics);
    # with no deviation the height is the geopotential-to-geometric conversion of level x 100 ft
    h = parse_height_km(f"FL{level:03d} ISA{deviation:+.1f}")
    h0 = parse_height_km(f"FL{level:03d} ISA+0")
    geo = level * 100 * 0.3048
    assert h0 == pytest.approx(6356766.0 * geo / (6356766.0 - geo) / 1000.0, abs=1e-9)
    assert (h - h0) * deviation >= -1e-12
