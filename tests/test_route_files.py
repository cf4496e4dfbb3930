"""Routes from GPX 1.1, KML 2.2 and GeoJSON files: the same legs as the CSV, ambiguity refused, XML bombs refused."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic

from headingref.errors import InputError
from headingref.route_files import read_route_file
from headingref.routes import route

DATE = "2026-12-02"
NM = 1852.0  # international nautical mile (exact)
# invented waypoints (names match no real place); heights in metres in GPX/KML/GeoJSON
POINTS = [("KETTA", 69.683, 18.919, 0.0), ("MIDSEA", 74.5, 17.0, 10668.0), ("NORDA", 78.246, 15.466, 0.0)]


def _csv(tmp_path: Path) -> Path:
    path = tmp_path / "r.csv"
    path.write_text("name,lat,lon,alt_m\n" + "".join(f"{n},{la!r},{lo!r},{h!r}\n" for n, la, lo, h in POINTS), encoding="utf-8")
    return path


def _gpx(tmp_path: Path, routes=(("TMX1", POINTS),), track=False) -> Path:
    body = ""
    for name, pts in routes:
        tag, pt = ("trk", "trkpt") if track else ("rte", "rtept")
        inner = "".join(f'<{pt} lat="{la!r}" lon="{lo!r}"><ele>{h!r}</ele><name>{n}</name></{pt}>' for n, la, lo, h in pts)
        body += f"<{tag}><name>{name}</name>{'<trkseg>' + inner + '</trkseg>' if track else inner}</{tag}>"
    path = tmp_path / "r.gpx"
    path.write_text('<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="test" '
                    f'xmlns="http://www.topografix.com/GPX/1/1">{body}</gpx>\n', encoding="utf-8")
    return path


def _kml(tmp_path: Path, lines=1, points=True) -> Path:
    marks = ""
    for k in range(lines):
        coords = " ".join(f"{lo!r},{la!r},{h!r}" for _, la, lo, h in POINTS)
        marks += (f"<Placemark><name>LINE{k + 1}</name><LineString><altitudeMode>absolute</altitudeMode>"
                  f"<coordinates>{coords}</coordinates></LineString></Placemark>")
    if points:
        for n, la, lo, h in POINTS:
            marks += (f"<Placemark><name>{n}</name><Point><altitudeMode>absolute</altitudeMode>"
                      f"<coordinates>{lo!r},{la!r},{h!r}</coordinates></Point></Placemark>")
    path = tmp_path / "r.kml"
    path.write_text('<?xml version="1.0" encoding="UTF-8"?>\n<kml xmlns="http://www.opengis.net/kml/2.2">'
                    f"<Document>{marks}</Document></kml>\n", encoding="utf-8")
    return path


def _geojson(tmp_path: Path, line=False) -> Path:
    if line:
        features = [{"type": "Feature", "properties": {"name": "TMX1"},
                     "geometry": {"type": "LineString", "coordinates": [[lo, la, h] for _, la, lo, h in POINTS]}}]
    else:
        features = [{"type": "Feature", "properties": {"name": n}, "geometry": {"type": "Point", "coordinates": [lo, la, h]}}
                    for n, la, lo, h in POINTS]
    path = tmp_path / "r.geojson"
    path.write_text(json.dumps({"type": "FeatureCollection", "features": features}), encoding="utf-8")
    return path


def _legs(path, **kw):
    return route(path, DATE, spacing_nm=50.0, **kw).legs


NUMERIC = ["distance_nm", "true_course_deg", "magnetic_course_deg", "grid_course_deg", "variation_deg", "min_horizontal_nT"]


@pytest.mark.parametrize("make", [
    _gpx, lambda p: _gpx(p, track=True), _kml, lambda p: _kml(p, points=False), _geojson, lambda p: _geojson(p, line=True)],
    ids=["gpx-rte", "gpx-trk", "kml-line", "kml-line-no-names", "geojson-points", "geojson-line"])
def test_same_legs_as_csv(tmp_path, make):
    reference = _legs(_csv(tmp_path))
    legs = _legs(make(tmp_path))
    pd.testing.assert_frame_equal(legs[NUMERIC], reference[NUMERIC], check_exact=False, rtol=0, atol=1e-9)
    # and the leg lengths against geographiclib (Karney 2013), independent of both readers
    ref_nm = Geodesic.WGS84.Inverse(POINTS[0][1], POINTS[0][2], POINTS[1][1], POINTS[1][2])["s12"] / NM
    assert legs.distance_nm.iloc[0] == pytest.approx(ref_nm, abs=1e-6)


def test_names_and_heights_carried(tmp_path):
    # GPX 1.1 <ele> is metres; 10,668 m is FL350's nominal height
    for path in (_gpx(tmp_path), _kml(tmp_path), _geojson(tmp_path)):
        result = route(path, DATE, spacing_nm=50.0)
        assert list(result.legs["from"]) == ["KETTA", "MIDSEA"], path.suffix
        assert result.samples.alt_km.max() == pytest.approx(10.668), path.suffix


def test_kml_relative_altitude_is_ignored(tmp_path):
    path = _kml(tmp_path)
    path.write_text(path.read_text(encoding="utf-8").replace("absolute", "clampToGround"), encoding="utf-8")
    records = read_route_file(path)
    assert all("alt_m" not in r for r in records)


def test_two_routes_need_a_name(tmp_path):
    path = _gpx(tmp_path, routes=(("TMX1", POINTS), ("TMX2", POINTS[::-1])))
    with pytest.raises(InputError, match=r"holds 2 routes \(TMX1, TMX2\); say which with --route NAME"):
        route(path, DATE)
    legs = route(path, DATE, route_name="TMX2").legs
    assert legs["from"].iloc[0] == "NORDA"
    with pytest.raises(InputError, match="no route named 'TMX3'"):
        route(path, DATE, route_name="TMX3")
    with pytest.raises(InputError, match=r"holds 2 lines"):
        route(_kml(tmp_path, lines=2), DATE)


@pytest.mark.parametrize("text,match", [
    ('{"type": "MultiLineString", "coordinates": [[[0, 70], [1, 71]], [[2, 72], [3, 73]]]}', "MultiLineString"),
    ('{"type": "FeatureCollection", "features": []}', "nothing to make a route of"),
    ("{not json", "not JSON"),
    ('{"type": "Point", "coordinates": [0, 70]}', "at least two"),
])
def test_bad_geojson_one_line(tmp_path, text, match):
    path = tmp_path / "bad.geojson"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=match) as info:
        route(path, DATE)
    assert "\n" not in str(info.value)


def test_xml_bomb_refused(tmp_path):
    # "billion laughs": entity expansion must be refused, not evaluated (defusedxml)
    bomb = ('<?xml version="1.0"?><!DOCTYPE kml [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">]>'
            '<kml xmlns="http://www.opengis.net/kml/2.2"><Document><name>&b;</name></Document></kml>')
    for suffix in (".kml", ".gpx"):
        path = tmp_path / f"bomb{suffix}"
        path.write_text(bomb, encoding="utf-8")
        with pytest.raises(InputError, match="unsafe XML"):
            route(path, DATE)


def test_gpx_waypoints_alone_are_not_a_route(tmp_path):
    path = tmp_path / "w.gpx"
    path.write_text('<?xml version="1.0"?><gpx version="1.1" creator="t" xmlns="http://www.topografix.com/GPX/1/1">'
                    '<wpt lat="70" lon="10"/><wpt lat="71" lon="11"/></gpx>', encoding="utf-8")
    with pytest.raises(InputError, match="no <rte> or <trk>"):
        route(path, DATE)


def test_route_name_on_csv_refused(tmp_path):
    with pytest.raises(InputError, match="applies to GPX, KML or GeoJSON"):
        route(_csv(tmp_path), DATE, route_name="X")


# --------------------------------------------------------------------------- outputs: KML and GeoJSON stretches


@pytest.fixture(scope="module")
def weak_route():
    # invented legs into and out of the weak-field region round the north dip pole (85 N 140 E in 2026)
    return route([("AAA", 66.0, 90.0, "FL350"), ("BBB", 85.0, 140.0, "FL350"), ("CCC", 68.0, -150.0, "FL350")],
                 DATE, spacing_nm=10.0)


def _ppigrf_h(lat, lon, alt_km):
    from reference import ppigrf_horizontal

    return ppigrf_horizontal(lat, lon, "2026-12-02", alt_km)  # independent IGRF-14 synthesis


def test_stretch_ends_sit_at_the_thresholds(weak_route):
    from headingref.routes import weak_field_stretches

    stretches = weak_field_stretches(weak_route)
    assert {s["zone"] for s in stretches} == {"caution", "blackout"}
    checked = 0
    for s in stretches:
        threshold = 6000.0 if s["zone"] == "caution" else 2000.0  # WMM2025 report: caution < 6000 nT, blackout < 2000 nT
        length = weak_route.legs.distance_nm.iloc[s["leg"] - 1]
        for k, at in ((0, s["from_nm"]), (-1, s["to_nm"])):
            if 0.0 < at < length:  # an end inside the leg: H crosses the threshold there
                # H from ppigrf at the interpolated end: at the threshold within what 10-NM sampling allows
                assert _ppigrf_h(s["lat_deg"][k], s["lon_deg"][k], 10.668) == pytest.approx(threshold, abs=1.0)
                checked += 1
    assert checked == 4


def test_geojson_has_stretch_features(weak_route):
    from headingref.routes import route_geojson, weak_field_stretches

    features = route_geojson(weak_route)["features"]
    kinds = [f["properties"]["kind"] for f in features]
    assert kinds.count("leg") == 2 and kinds.count("waypoint") == 3
    assert kinds.count("caution") + kinds.count("blackout") == len(weak_field_stretches(weak_route))
    blackout = next(f for f in features if f["properties"]["kind"] == "blackout")
    assert blackout["properties"]["label"] == "blackout: no usable magnetic reference"
    assert blackout["properties"]["min_horizontal_nT"] < 2000.0


def test_kml_output_reads_back(weak_route, tmp_path):
    import defusedxml.ElementTree as DET

    from headingref.route_files import KML_NS
    from headingref.routes import route_kml, weak_field_stretches

    text = route_kml(weak_route)
    root = DET.fromstring(text.encode("utf-8"))
    assert root.tag == KML_NS + "kml"  # KML 2.2 namespace (OGC 07-147r2)
    styles = [m.findtext(KML_NS + "styleUrl") for m in root.iter(KML_NS + "Placemark")]
    assert styles.count("#leg") == 2
    assert styles.count("#caution") + styles.count("#blackout") == len(weak_field_stretches(weak_route))
    # the written KML reads back as a route file: several lines, so one is picked by name
    path = tmp_path / "out.kml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match="say which with --route NAME"):
        read_route_file(path)
    back = read_route_file(path, route_name="AAA - BBB")
    assert back[0]["name"] == "AAA" and back[-1]["name"] == "BBB"


def test_kml_escapes_user_text(tmp_path):
    import defusedxml.ElementTree as DET

    from headingref.route_files import KML_NS
    from headingref.routes import route_kml

    result = route([("A<b>&\"x", 70.0, 10.0), ("B", 71.0, 12.0)], DATE, spacing_nm=50.0)
    root = DET.fromstring(route_kml(result).encode("utf-8"))
    names = [m.findtext(KML_NS + "name") for m in root.iter(KML_NS + "Placemark")]
    assert 'A<b>&"x' in names  # the name comes back as the same plain text


def test_cli_writes_kml(tmp_path, capsys):
    from headingref.cli import main

    src = _csv(tmp_path)
    code = main(["route", "--input", str(src), "--date", DATE, "--output", str(tmp_path / "legs.csv"),
                 "--kml", str(tmp_path / "r.kml")])
    assert code == 0
    assert (tmp_path / "r.kml").read_text(encoding="utf-8").startswith("<?xml")
