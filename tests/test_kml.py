"""Zone polygons as KML 2.2: structure, pieces a globe viewer draws as meant, and the field inside.

Sources: OGC 07-147r2 (KML 2.2): namespace ``http://www.opengis.net/kml/2.2`` (6.1), the element
names used (kml, Document, Folder, Placemark, Style, LineStyle, PolyStyle, MultiGeometry, Polygon,
outerBoundaryIs, innerBoundaryIs, LinearRing, coordinates, tessellate; sections 9-12, 16),
``kml:color`` as ``aabbggrr`` (16.9) and ``kml:coordinates`` as ``lon,lat,alt`` (16.10). The field
inside the polygons is checked against ppigrf (independent IGRF-14 synthesis); areas with pyproj's
``Geod.polygon_area_perimeter`` (Karney's geodesic polygon area) on the rings read back from the KML.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np
import pandas as pd
import ppigrf
import pytest
from matplotlib.path import Path as MplPath
from pyproj import Geod

import headingref
from headingref.cli import main
from headingref.kml import kml_colour
from headingref.weak_field import zone_areas, zone_kml

NS = "{http://www.opengis.net/kml/2.2}"  # OGC 07-147r2, 6.1
# element names of OGC 07-147r2 that a zone document may use
KML22_ELEMENTS = {"kml", "Document", "Folder", "Placemark", "name", "description", "styleUrl", "Style", "LineStyle",
                  "PolyStyle", "color", "width", "MultiGeometry", "Polygon", "tessellate", "outerBoundaryIs",
                  "innerBoundaryIs", "LinearRing", "coordinates"}
DATE = "2026-12-02"


def _h_ppigrf(lon, lat) -> np.ndarray:
    east, north, _ = ppigrf.igrf(np.asarray(lon, float), np.asarray(lat, float), 0.0, pd.Timestamp(DATE))
    return np.hypot(np.ravel(east), np.ravel(north))


def _coords(element) -> np.ndarray:
    values = [tuple(float(v) for v in item.split(",")) for item in element.text.split()]
    assert all(len(v) == 3 for v in values)  # lon,lat,alt (07-147r2, 16.10)
    return np.asarray(values)[:, :2]


def _placemarks(text: str) -> dict[str, list[list[np.ndarray]]]:
    """Zone name -> polygons (each a list of rings: outer first), parsed back from the KML text."""
    root = ET.fromstring(text)
    assert root.tag == NS + "kml"
    assert {el.tag for el in root.iter()} <= {NS + name for name in KML22_ELEMENTS}
    out: dict[str, list[list[np.ndarray]]] = {}
    for mark in root.iter(NS + "Placemark"):
        zone = mark.find(NS + "name").text.split()[0]
        assert mark.find(NS + "styleUrl").text.startswith("#zone")
        # child order of the schema's sequences (07-147r2: Feature's name, description, styleUrl
        # before the Geometry; Polygon's tessellate, then outerBoundaryIs, then innerBoundaryIs)
        assert [c.tag[len(NS):] for c in mark] == ["name", "description", "styleUrl", "MultiGeometry"]
        polygons = []
        for polygon in mark.iter(NS + "Polygon"):
            tags = [c.tag[len(NS):] for c in polygon]
            assert tags[:2] == ["tessellate", "outerBoundaryIs"] and set(tags[2:]) <= {"innerBoundaryIs"}
            outer = polygon.findall(f"{NS}outerBoundaryIs/{NS}LinearRing/{NS}coordinates")
            assert len(outer) == 1  # exactly one outer boundary per Polygon (07-147r2, 10.8)
            inner = polygon.findall(f"{NS}innerBoundaryIs/{NS}LinearRing/{NS}coordinates")
            polygons.append([_coords(outer[0]), *(_coords(c) for c in inner)])
        out[zone] = polygons
    return out


def _inside(polygons, lon, lat) -> np.ndarray:
    points = np.column_stack([lon, lat])
    hit = np.zeros(len(points), dtype=bool)
    for rings in polygons:
        here = MplPath(rings[0]).contains_points(points)
        for hole in rings[1:]:
            here &= ~MplPath(hole).contains_points(points)
        hit |= here
    return hit


def _check_pieces(polygons) -> None:
    for rings in polygons:
        for ring in rings:
            assert len(ring) >= 4 and np.array_equal(ring[0], ring[-1])  # closed LinearRing, 4+ tuples (10.11)
            assert np.all(np.abs(ring[:, 0]) <= 180.0) and np.all(np.abs(ring[:, 1]) <= 90.0)
            # no piece spans more than 90 degrees of longitude: far smaller than a hemisphere, so a
            # globe viewer that fills the smaller side fills the zone (pole-safe, antimeridian-safe)
            assert np.ptp(ring[:, 0]) <= 90.0 + 1e-6
            assert not np.any(np.all(np.diff(ring, axis=0) == 0.0, axis=1))  # no repeated points
            step = np.abs(np.diff(ring, axis=0)).max(axis=1)
            to_pole = (np.abs(ring[:-1, 1]) == 90.0) | (np.abs(ring[1:, 1]) == 90.0)
            assert np.all(step[~to_pole] <= 0.5 + 1e-6)  # densified: great-circle edges stay on the lon/lat line


@pytest.fixture(scope="module")
def north():
    return headingref.zones("north", DATE, resolution_deg=1.0)


def test_colour_is_aabbggrr():
    # OGC 07-147r2, 16.9: alpha, blue, green, red; opaque red is ff0000ff, half-transparent blue 80ff0000
    assert kml_colour("#ff0000") == "ff0000ff"
    assert kml_colour("#0000ff", 0.5) == "80ff0000"


def test_north_cap_kml_pole_safe_and_matches_ppigrf(north):
    # ppigrf: the geographic north pole lies in the blackout zone on this date (the case to get right)
    h_pole = _h_ppigrf([0.0], [89.9])[0]
    assert h_pole < 2000.0
    zones = _placemarks(zone_kml(north))
    assert set(zones) == {"blackout", "caution"}
    for polygons in zones.values():
        _check_pieces(polygons)
    assert any(np.any(ring[:, 1] == 90.0) for rings in zones["blackout"] for ring in rings)  # the pole is a vertex
    # points off the sector edges (lon not a multiple of 90): ppigrf H clearly below / above a
    # threshold means inside / outside that zone's pieces (10% margin for the 1-degree grid)
    lon, lat = np.meshgrid(np.arange(-172.5, 180.0, 15.0), np.arange(60.0, 89.6, 2.5))
    lon, lat = lon.ravel(), lat.ravel()
    h = _h_ppigrf(lon, lat)
    in_black, in_caution = _inside(zones["blackout"], lon, lat), _inside(zones["caution"], lon, lat)
    assert np.all(in_black[h < 1800.0]) and not np.any(in_black[h > 2200.0])
    band = (h > 2200.0) & (h < 5400.0)
    assert band.sum() > 10 and np.all(in_caution[band])
    assert not np.any(in_caution[(h > 6600.0) | (h < 1800.0)])


def test_kml_areas_equal_the_zone_areas(north):
    geod = Geod(ellps="WGS84")  # pyproj: geodesic polygon area on WGS84 (Karney 2013)
    zones = _placemarks(zone_kml(north))
    expected = zone_areas(north).set_index("zone")["area_km2"]
    for name, polygons in zones.items():
        total = 0.0
        for rings in polygons:
            for k, ring in enumerate(rings):
                area, _ = geod.polygon_area_perimeter(ring[:-1, 0], ring[:-1, 1])
                total += abs(area) if k == 0 else -abs(area)
        # the pieces cover the same zone: the sum of their areas is the zone's (0.5%: densified edges)
        assert total / 1e6 == pytest.approx(float(expected[name]), rel=5e-3)


def test_region_across_the_antimeridian_and_two_dates(tmp_path, capsys):
    target = tmp_path / "zones.kml"
    assert main(["zones", "--region", "60,89,150,-120", "--date", DATE, "--date2", "2030-01-01", "--resolution", "1",
                 "--kml", str(target)]) == 0
    assert f"wrote {target}" in capsys.readouterr().out
    root = ET.parse(target).getroot()
    assert [f.find(NS + "name").text for f in root.iter(NS + "Folder")] == [DATE, "2030-01-01"]
    zones = _placemarks(target.read_text(encoding="utf-8"))
    for polygons in zones.values():
        _check_pieces(polygons)
    lons = np.concatenate([ring[:, 0] for polygons in zones.values() for rings in polygons for ring in rings])
    assert lons.min() < -150.0 and lons.max() > 170.0  # pieces on both sides of 180, each within -180..180


def test_labels_are_escaped_and_bad_sector_refused():
    ds = headingref.zones("south", DATE, resolution_deg=2.0, thresholds=[3000.0], labels=["<b>&low</b>"])
    text = zone_kml(ds)
    root = ET.fromstring(text)  # still well-formed XML: the label is text, not markup
    names = [m.find(NS + "name").text for m in root.iter(NS + "Placemark")]
    assert names == [f"<b>&low</b> {DATE}"]
    with pytest.raises(headingref.InputError, match="sector_deg"):
        zone_kml(ds, sector_deg=180.0)
