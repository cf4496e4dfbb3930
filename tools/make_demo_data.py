"""Regenerate the invented demo scenario's CSV files in data/demo/ (one-off, for maintainers).

Everything here is invented: the operator (Tern Meridian Air), the airfield names, their
identifiers (first letter ``J``, which ICAO allocates to no region) and their coordinates (open
ground or ice 35 km or more from any aerodrome or landing strip listed in the ``airportsdata``
package, release 20261103, kept in the same high-latitude regions so the routes, zones and drift
rates stay interesting), the survey history of the compass bases (the model's variation at the
survey date plus a small invented local offset) and the swing readings (an invented deviation
curve plus Gaussian noise). Invented en-route waypoints are named ``TM`` + letter + two digits.
Runway geometry is placed with the field model (IGRF-14) so that, on the analysis date, each
runway sits where the demo wants it (well inside its designator, near a rounding boundary, or
already past one): the true azimuth and the variation are both taken at the runway's midpoint,
the reference point :func:`headingref.runways.check_runways` uses. Run from the repository root::

    PYTHONPATH=. python tools/make_demo_data.py
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pyproj

import headingref

DEMO = Path(__file__).resolve().parent.parent / "data" / "demo"
ANALYSIS_DATE = "2026-12-02"
GEOD = pyproj.Geod(ellps="WGS84")

# Invented names, identifiers and coordinates (the midpoint of each airfield's first runway).
AIRFIELDS = {
    "JXKV": ("Kvitnes Strand", 69.4200, 21.7800),
    "JXSF": ("Svalbrekka", 78.6000, 17.9000),
    "JXRH": ("Ravnhogda", 77.0200, -66.1000),
    "JXTB": ("Tallurut Bight", 69.6000, -104.5000),
    "JXSB": ("Sikutaq Bay", 70.5500, -155.2000),
    "JXLS": ("Lisovets Spit", 65.2800, 175.9500),
    "JXBK": ("Birchkettle Field", 65.3500, -146.4000),
    "JXQR": ("Qarsaq Ridge", 75.0500, -99.3000),
    "JXNL": ("Nareslys", 82.1200, -66.4000),
    "JXYV": ("Yelvik Sound", 66.5500, -51.9500),
}

ROUTES = {
    "tm101_polar.csv": [  # across the polar cap, past the north dip pole
        ("JXKV", None), ("JXSF", None), ("TMN88", (88.0, 120.0)), ("JXSB", None)],
    "tm205_antimeridian.csv": [  # across the antimeridian
        ("JXLS", None), ("TMB66", (66.0, -172.0)), ("JXBK", None)],
    "tm310_archipelago.csv": [  # through the caution zone over the Canadian Arctic
        ("JXBK", None), ("JXTB", None), ("JXQR", None), ("JXNL", None)],
    "tm412_greenland.csv": [
        ("JXYV", None), ("JXRH", None), ("JXSF", None), ("JXKV", None)],
}

# (airport, designator of this end, of the other end, magnetic azimuth wanted on the analysis
#  date for this end, runway length m, lateral offset m of the threshold, note)
RUNWAYS = [
    ("JXKV", "19", "01", 186.0, 2450, 0, "well inside its designator"),
    ("JXKV", "11", "29", 108.0, 1600, 900, "well inside its designator"),
    ("JXSF", "28", "10", 276.0, 2480, 0, "1.0 deg from 275: becomes 27 in about two years"),
    ("JXRH", "25", "07", 245.25, 3050, 0, "0.25 deg from 245: becomes 24 within months"),
    ("JXTB", "13", "31", 136.0, 1550, 0, "out of date: magnetic 136 is runway 14"),
    ("JXSB", "07", "25", 74.0, 2130, 0, "1.0 deg from 075: becomes 08 in about two years"),
    ("JXLS", "01", "19", 14.6, 2500, 0, "0.4 deg from 015: becomes 02 soon"),
    ("JXLS", "36", "18", 4.0, 1300, 1200, "across 355-005: 004 is runway 36"),
    ("JXBK", "02L", "20R", 20.0, 3200, 0, "parallel pair, well inside"),
    ("JXBK", "02R", "20L", 20.0, 2300, 210, "parallel pair, well inside"),
    ("JXQR", "34", "16", 351.0, 1950, 0, "out of date: magnetic 351 is runway 35"),
    ("JXNL", "31", "13", 305.02, 1830, 0, "on the 305 boundary (weak field)"),
    ("JXYV", "09", "27", 93.0, 2810, 0, "well inside its designator"),
]

# Compass bases: (name, airfield, north and east offset of the base from the airfield's reference
# point in degrees, invented local offset deg, survey dates, tolerance, resurvey years)
BASES = [
    ("Svalbrekka compass base", "JXSF", -0.0029, 0.0245, 0.15, ["2015-06-16", "2018-06-20", "2021-06-22"], 0.5, 5),
    ("Birchkettle compass base", "JXBK", -0.0038, -0.0152, -0.10, ["2018-05-09", "2021-05-10", "2024-05-14"], 1.0, 5),
]

# Invented deviation curve of the swung aircraft's standby compass, degrees (east positive).
SWING_COEFFS = {"A": 0.5, "B": 6.5, "C": -5.0, "D": 0.8, "E": -0.4}
SWING_NOISE_DEG = 0.2
SWING_SEED = 7


def variation(lat: float, lon: float, date: str) -> float:
    return float(headingref.field(lat, lon, date).declination_deg.iloc[0])


def write(path: Path, header: list[str], rows: list[list]) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(rows)


def make_routes() -> None:
    for filename, points in ROUTES.items():
        rows = []
        for ident, coords in points:
            lat, lon = coords if coords else AIRFIELDS[ident][1:]
            rows.append([ident, f"{lat:.4f}", f"{lon:.4f}", "FL350"])
        rows[0][3] = rows[-1][3] = "0 ft"  # departure and destination on the ground
        write(DEMO / "routes" / filename, ["name", "lat", "lon", "alt"], rows)


def make_runways() -> None:
    rows = []
    for ident, this, other, magnetic, length_m, offset_m, _note in RUNWAYS:
        _, lat_m, lon_m = AIRFIELDS[ident]
        if offset_m:  # a second runway: its midpoint lies offset_m east of the airfield's reference point
            lon_m, lat_m, _ = GEOD.fwd(lon_m, lat_m, 90.0, offset_m)
        # True azimuth and variation at the same point, the midpoint: the geodesic through the
        # midpoint with that azimuth, half the length either way, has its midpoint there and its
        # forward azimuth there equal to true_bearing.
        true_bearing = magnetic + variation(lat_m, lon_m, ANALYSIS_DATE)
        lon0, lat0, _ = GEOD.fwd(lon_m, lat_m, true_bearing + 180.0, length_m / 2)
        lon1, lat1, _ = GEOD.fwd(lon_m, lat_m, true_bearing, length_m / 2)
        a = [f"{lat0:.6f}", f"{((lon0 + 180) % 360) - 180:.6f}"]
        b = [f"{lat1:.6f}", f"{((lon1 + 180) % 360) - 180:.6f}"]
        rows.append([ident, this, *a, *b])
        rows.append([ident, other, *b, *a])
    write(DEMO / "runways.csv", ["airport", "runway", "lat", "lon", "end_lat", "end_lon"], rows)


def make_bases() -> None:
    rows = []
    for name, airfield, dlat, dlon, offset, dates, tolerance, interval in BASES:
        lat, lon = AIRFIELDS[airfield][1] + dlat, AIRFIELDS[airfield][2] + dlon
        for date in dates:
            value = round(variation(lat, lon, date) + offset, 1)
            text = f"{abs(value):.1f}{'E' if value >= 0 else 'W'}"
            rows.append([name, f"{lat:.4f}", f"{lon:.4f}", text, date, f"{tolerance:g}", f"{interval:g}"])
    write(
        DEMO / "compass_bases.csv",
        ["name", "lat", "lon", "surveyed_variation", "survey_date", "tolerance_deg", "resurvey_years"],
        rows,
    )


def make_swing() -> None:
    rng = np.random.default_rng(SWING_SEED)
    h = np.arange(0.0, 360.0, 30.0)
    r = np.radians(h)
    c = SWING_COEFFS
    dev = c["A"] + c["B"] * np.sin(r) + c["C"] * np.cos(r) + c["D"] * np.sin(2 * r) + c["E"] * np.cos(2 * r)
    reading = (h - dev + rng.normal(0.0, SWING_NOISE_DEG, h.size)) % 360.0
    write(DEMO / "swing_readings.csv", ["magnetic_heading_deg", "compass_reading_deg"], [[f"{a:.0f}", f"{b:.1f}"] for a, b in zip(h, reading, strict=True)])


def check_far_from_aerodromes(min_km: float = 35.0) -> None:
    """Refuse airfield coordinates within ``min_km`` of a listed aerodrome (needs ``pip install airportsdata``)."""
    try:
        import airportsdata
    except ImportError:
        print("airportsdata is not installed: distances to real aerodromes not checked")
        return
    known = list(airportsdata.load().values())
    lats = np.array([a["lat"] for a in known])
    lons = np.array([a["lon"] for a in known])
    for ident, (name, lat, lon) in AIRFIELDS.items():
        if ident in airportsdata.load():
            raise SystemExit(f"{ident} is a real ICAO identifier")
        _, _, dist_m = GEOD.inv(np.full(lats.size, lon), np.full(lats.size, lat), lons, lats)
        nearest = int(np.argmin(dist_m))
        if dist_m[nearest] < min_km * 1000.0:
            raise SystemExit(f"{ident} {name} lies {dist_m[nearest] / 1000:.0f} km from {known[nearest]['name']}")


if __name__ == "__main__":
    check_far_from_aerodromes()
    make_routes()
    make_runways()
    make_bases()
    make_swing()
    print(f"demo data written to {DEMO}")
