"""VOR station declination check (headingref.navaids), each against an outside source.

Sources
-------
- Variation: ppigrf (IGRF-14, its own synthesis and time interpolation).
- Difference sign: AIXM 5 VOR.declination (angle from true north to the station's zero radial,
  east positive) and magnetic variation (east positive); difference = variation - declination.
- Default tolerance: NAV CANADA AIC 12/08 as summarised publicly (VOR variation kept within +/-3 deg).
The stations are invented (identifiers match no real navaid).
"""

from __future__ import annotations

import datetime as dt
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from reference import ppigrf_declination

from headingref.errors import InputError
from headingref.navaids import DEFAULT_TOLERANCE_DEG, check_navaids

DEMO = Path(__file__).parent.parent / "data" / "demo" / "navaids.csv"
DATE = "2026-12-02"


def test_variation_and_difference_against_ppigrf():
    result = check_navaids(DEMO, DATE, horizon_years=3)
    t = result.table
    assert t.ident.tolist() == ["QVN", "QKM", "QTL", "QBS", "QHS", "QNL"]
    assert t.station_declination_deg.tolist() == [7.0, 4.0, 21.0, 20.0, 17.0, -45.0]  # 45W is west, negative
    for row in t.itertuples():
        reference = ppigrf_declination(row.lat, row.lon, [dt.date(2026, 12, 2)], row.alt_km)[0]
        # ppigrf IGRF-14: 0.001 deg, 0.003 deg at QNL (82 N, weak horizontal field amplifies rounding)
        assert row.variation_deg == pytest.approx(reference, abs=3e-3)
        assert row.difference_deg == pytest.approx(reference - row.station_declination_deg, abs=3e-3)
        assert row.exceeds == (abs(reference - row.station_declination_deg) > DEFAULT_TOLERANCE_DEG)
    assert DEFAULT_TOLERANCE_DEG == 3.0  # NAV CANADA AIC 12/08 (VORs within +/-3 deg), as summarised publicly


def test_realign_date_against_a_daily_ppigrf_scan():
    # A station aligned 2.7 deg short of today's variation in the direction it drifts: ppigrf's first day
    # with |variation - declination| > 2.9 must be our realign_date (+-1 day, interpolation in days vs years).
    lat, lon = 61.0, 10.0
    d = ppigrf_declination(lat, lon, [dt.date(2026, 12, 2), dt.date(2027, 12, 2)])
    drift = d[1] - d[0]
    station = d[0] - math.copysign(2.7, drift)
    stations = pd.DataFrame({"ident": ["XQC"], "lat": [lat], "lon": [lon], "station_declination_deg": [station]})
    row = check_navaids(stations, DATE, tolerance_deg=2.9, horizon_years=3).table.iloc[0]
    assert not row.exceeds and row.realign_date
    found = dt.date.fromisoformat(row.realign_date)
    days = [found + dt.timedelta(days=k) for k in range(-3, 4)]
    over = np.abs(ppigrf_declination(lat, lon, days) - station) > 2.9
    assert not over[0] and over[-1]
    assert abs((days[int(np.argmax(over))] - found).days) <= 1


def test_already_exceeding_and_never_within_the_horizon():
    stations = pd.DataFrame({"ident": ["XQD", "XQE"], "lat": [61.0, 61.0], "lon": [10.0, 10.0],
                             "station_declination_deg": ["20W", "5E"]})
    d = ppigrf_declination(61.0, 10.0, [dt.date(2026, 12, 2)])[0]
    t = check_navaids(stations, DATE, tolerance_deg=abs(d - 5.0) + 1.0, horizon_years=1).table
    assert t.exceeds.tolist() == [True, False]
    assert t.realign_date.tolist() == [DATE, ""]  # ppigrf drift here is ~0.2 deg/yr: no crossing of 1 deg in a year


def test_column_mapping_and_bad_input(write_csv):
    path = write_csv("vors.csv", "id,latitude,longitude,slaved\nXQF,61 00 00 N,010 00 00 E,2.5\n")
    t = check_navaids(path, DATE, columns="ident=id,lat=latitude,lon=longitude,station_declination_deg=slaved").table
    assert t.lat[0] == 61.0 and t.station_declination_deg[0] == 2.5
    path.write_text("ident,lat,lon,station_declination_deg\nXQG,61,10,east\n", encoding="utf-8")
    with pytest.raises(InputError, match="line 2: station_declination_deg"):
        check_navaids(path, DATE)
    path.write_text("ident,lat,lon,station_declination_deg,elevation\nXQG,61,10,3,300\n", encoding="utf-8")
    with pytest.raises(InputError, match="no unit"):
        check_navaids(path, DATE)
    with pytest.raises(InputError, match="tolerance"):
        check_navaids(DEMO, DATE, tolerance_deg=0.0)


def test_cli_writes_xlsx_and_map(tmp_path, capsys):
    openpyxl = pytest.importorskip("openpyxl")
    from headingref.cli import main

    out, fig = tmp_path / "vors.xlsx", tmp_path / "vors.png"
    code = main(["navaids", "--input", str(DEMO), "--date", DATE, "--horizon", "3", "--output", str(out), "--map", str(fig)])
    printed = capsys.readouterr().out
    assert code == 0 and "CAUTION" in printed and "QNL" in printed
    header = next(openpyxl.load_workbook(out, read_only=True).worksheets[0].iter_rows(values_only=True))
    assert "difference_deg (deg, variation - station declination)" in header
    assert fig.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_scenario_navaids_section_and_column_mapping(tmp_path):
    # The [navaids] section is validated when the scenario loads; a mapping naming a column headingref
    # does not read is refused there with the section named.
    from headingref.scenario import load_scenario

    (tmp_path / "vors.csv").write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    good = tmp_path / "good.toml"
    good.write_text('analysis_date = "2026-12-02"\n[navaids]\nfile = "vors.csv"\ntolerance_deg = 2.0\n', encoding="utf-8")
    sc = load_scenario(good)
    assert sc.navaids["tolerance_deg"] == 2.0 and sc.navaids["horizon_years"] == 10.0
    bad = tmp_path / "bad.toml"
    bad.write_text('analysis_date = "2026-12-02"\n[navaids]\nfile = "vors.csv"\ncolumns = "callsign=id"\n', encoding="utf-8")
    with pytest.raises(InputError, match=r"\[navaids\] columns"):
        load_scenario(bad)


def test_variation_at_alignment_against_ppigrf():
    # The model variation on each station's alignment date (ppigrf IGRF-14, 0.003 deg as above).
    t = check_navaids(DEMO, DATE, horizon_years=1).table
    for row in t.itertuples():
        day = dt.date.fromisoformat(row.alignment_date)
        reference = ppigrf_declination(row.lat, row.lon, [day], row.alt_km)[0]
        assert row.variation_at_alignment_deg == pytest.approx(reference, abs=3e-3)


@pytest.mark.parametrize("lons, lats", [([179.5, -179.0, 178.0], [64.0, 66.0, 65.0]),  # across the antimeridian
                                         ([140.0, 150.0, 160.0], [-70.0, -68.0, -75.0]),  # south polar cap
                                         ([-10.0, 30.0, 100.0], [-30.0, 10.0, 45.0])])  # a wide region
def test_navaid_map_draws_every_station(lons, lats):
    # Every station is one dot on the map (common practice: nothing silently dropped off the chart).
    from headingref.plots.navaids import navaid_map_figure

    stations = pd.DataFrame({"ident": ["XA1", "XA2", "XA3"], "lat": lats, "lon": lons, "station_declination_deg": [0.0] * 3})
    fig = navaid_map_figure(check_navaids(stations, DATE, horizon_years=1))
    ax = fig.axes[0]
    dots = [c for c in ax.collections if c.get_array() is not None and len(c.get_offsets()) == 3]
    assert len(dots) == 1 and np.isfinite(np.asarray(dots[0].get_offsets())).all()
