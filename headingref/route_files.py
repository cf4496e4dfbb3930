"""Routes from the files planning tools export: GPX 1.1, KML 2.2 and GeoJSON (RFC 7946).

Each reader returns the waypoints as a list of dicts ``name, lat, lon[, alt_m]`` (the form
:func:`headingref.routes.read_waypoints` takes), with ``where`` naming the point in the file, so
a route read from any of these formats gives exactly the legs of the same waypoints in a CSV.

What is read
------------
- **GPX 1.1** (https://www.topografix.com/GPX/1/1/, parsed with gpxpy): a route ``<rte>`` and its
  ``<rtept>`` in order, names from ``<name>``; or a track ``<trk>`` (its segments joined in
  order). ``<ele>`` is metres (GPX 1.1 schema: "Elevation (in meters) of the point").
- **KML 2.2** (OGC 07-147r2, namespace ``http://www.opengis.net/kml/2.2``, parsed with the standard
  library behind defusedxml): one ``LineString`` placemark (its vertices; a vertex gets the name of
  a ``Point`` placemark at the same place), or else the ``Point`` placemarks in document order.
  Coordinates are ``lon,lat[,alt]``; the altitude (metres) is used only with
  ``altitudeMode`` ``absolute`` (any other mode ties it to the ground or sea floor).
- **GeoJSON** (RFC 7946): one ``LineString`` (feature or bare geometry), or else ``Point`` features
  in order, names from ``properties.name``; positions ``[lon, lat[, height]]`` with the height in
  metres above the WGS84 ellipsoid (RFC 7946 section 3.1.1).

Anything ambiguous is refused in one line: two routes, tracks or lines need ``route_name`` (the
CLI's ``--route NAME``); a MultiLineString, a file with neither a line nor points, an unknown name.
XML is read through defusedxml (no entity expansion, no external entities: safe against XML bombs).

The KML output of a route is :func:`headingref.routes.route_kml` (this module sits below
:mod:`headingref.routes`).

Public API: :func:`read_route_file`, :data:`ROUTE_FILE_SUFFIXES`, :data:`KML_NS`.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

from .errors import InputError
from .kml import KML_NS  # OGC 07-147r2, 6.1

__all__ = ["KML_NS", "ROUTE_FILE_SUFFIXES", "read_route_file"]

ROUTE_FILE_SUFFIXES = {".gpx": "gpx", ".kml": "kml", ".geojson": "geojson", ".json": "geojson"}
"""File name endings read by :func:`read_route_file` (any other ending is read as CSV)."""

MAX_ROUTE_FILE_BYTES = 50 * 1024 * 1024


def _read_text(path: Path, label: str) -> str:
    try:
        if not path.is_file():
            raise InputError(f"{label}: no such file {str(path)!r}")
        if path.stat().st_size > MAX_ROUTE_FILE_BYTES:
            raise InputError(f"{label}: file is larger than {MAX_ROUTE_FILE_BYTES // 2**20} MiB")
        raw = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{label}: cannot read {str(path)!r}: {exc.strerror or exc}") from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{label}: not UTF-8 text (byte {exc.start}); save the file as UTF-8") from None


def _safe_xml(text: str, label: str):
    """Parse XML refusing DTDs, entities and external references (defusedxml)."""
    import xml.etree.ElementTree as ET

    import defusedxml
    import defusedxml.ElementTree as DET

    try:
        return DET.fromstring(text.encode("utf-8"), forbid_dtd=True)
    except (defusedxml.DefusedXmlException, ValueError) as exc:
        raise InputError(f"{label}: refused unsafe XML ({type(exc).__name__}: {exc})") from None
    except ET.ParseError as exc:
        raise InputError(f"{label}: not well-formed XML ({exc})") from None


def _pick(items: list[tuple[str, Any]], route_name: str | None, what: str, label: str) -> Any:
    """The one item, or the one named ``route_name``; otherwise a one-line refusal listing the names."""
    names = [name or f"#{i + 1}" for i, (name, _) in enumerate(items)]
    if route_name is not None:
        hits = [item for name, item in zip(names, items, strict=True) if name == route_name]
        if len(hits) != 1:
            found = "no" if not hits else f"{len(hits)}"
            raise InputError(f"{label}: {found} {what} named {route_name!r}; the file holds {', '.join(names)}")
        return hits[0][1]
    if len(items) > 1:
        raise InputError(f"{label} holds {len(items)} {what}s ({', '.join(names)}); say which with --route NAME")
    return items[0][1]


def _record(label: str, i: int, name: Any, lat: Any, lon: Any, alt_m: Any = None) -> dict:
    rec = {"name": (str(name).strip() or None) if name is not None else None, "lat": lat, "lon": lon,
           "where": f"{label} point {i + 1}"}
    if alt_m is not None and not (isinstance(alt_m, float) and math.isnan(alt_m)):
        rec["alt_m"] = alt_m
    return rec


# --------------------------------------------------------------------------- GPX


def _gpx(text: str, label: str, route_name: str | None) -> list[dict]:
    import gpxpy
    import gpxpy.gpx

    _safe_xml(text, label)  # refuse entity tricks before gpxpy parses it
    try:
        doc = gpxpy.parse(text)
    except gpxpy.gpx.GPXException as exc:
        raise InputError(f"{label}: not a readable GPX file ({exc})") from None
    items = [(r.name or "", [(p.name, p.latitude, p.longitude, p.elevation) for p in r.points]) for r in doc.routes]
    if not items:
        items = [(t.name or "", [(p.name, p.latitude, p.longitude, p.elevation) for s in t.segments for p in s.points])
                 for t in doc.tracks]
    if not items:
        raise InputError(f"{label}: no <rte> or <trk>; waypoints <wpt> alone give no order, so no route")
    points = _pick(items, route_name, "route" if doc.routes else "track", label)
    return [_record(label, i, *p) for i, p in enumerate(points)]


# --------------------------------------------------------------------------- KML


def _kml_coordinates(text: str | None, label: str, where: str) -> list[tuple[float, float, float | None]]:
    out = []
    for token in (text or "").split():
        parts = token.split(",")
        if len(parts) not in (2, 3):
            raise InputError(f"{label} {where}: coordinate {token!r} is not lon,lat[,alt]")
        try:
            values = [float(p) for p in parts]
        except ValueError:
            raise InputError(f"{label} {where}: coordinate {token!r} is not lon,lat[,alt] numbers") from None
        out.append((values[1], values[0], values[2] if len(values) == 3 else None))
    return out


def _kml(text: str, label: str, route_name: str | None) -> list[dict]:
    root = _safe_xml(text, label)
    if not root.tag.startswith(KML_NS):
        raise InputError(f"{label}: not KML 2.2 (root {root.tag!r}; expected the {KML_NS[1:-1]} namespace)")
    lines, points = [], []
    for placemark in root.iter(f"{KML_NS}Placemark"):
        name = placemark.findtext(f"{KML_NS}name") or ""
        for line in placemark.iter(f"{KML_NS}LineString"):
            absolute = (line.findtext(f"{KML_NS}altitudeMode") or "").strip() == "absolute"
            coords = _kml_coordinates(line.findtext(f"{KML_NS}coordinates"), label, f"line {name!r}")
            lines.append((name, [(la, lo, alt if absolute else None) for la, lo, alt in coords]))
        for point in placemark.iter(f"{KML_NS}Point"):
            absolute = (point.findtext(f"{KML_NS}altitudeMode") or "").strip() == "absolute"
            coords = _kml_coordinates(point.findtext(f"{KML_NS}coordinates"), label, f"point {name!r}")
            if len(coords) != 1:
                raise InputError(f"{label}: point {name!r} has {len(coords)} coordinates; a Point has one")
            la, lo, alt = coords[0]
            points.append((name, la, lo, alt if absolute else None))
    if lines:
        vertices = _pick(lines, route_name, "line", label)
        named = {(round(la, 9), round(lo, 9)): n for n, la, lo, _ in points}
        return [_record(label, i, named.get((round(la, 9), round(lo, 9))), la, lo, alt)
                for i, (la, lo, alt) in enumerate(vertices)]
    if not points:
        raise InputError(f"{label}: no LineString and no Point placemarks; nothing to make a route of")
    if route_name is not None:
        raise InputError(f"{label}: --route {route_name!r} names a line, but the file holds only Point placemarks")
    return [_record(label, i, n, la, lo, alt) for i, (n, la, lo, alt) in enumerate(points)]


# --------------------------------------------------------------------------- GeoJSON


def _position(value: Any, label: str, where: str) -> tuple[Any, Any, Any]:
    if not isinstance(value, list) or len(value) not in (2, 3):
        raise InputError(f"{label} {where}: position {value!r} is not [lon, lat] or [lon, lat, height]")
    return value[1], value[0], value[2] if len(value) == 3 else None


def _geojson_features(text: str, label: str) -> list:
    """The features of a GeoJSON text: a FeatureCollection's, a Feature, or a bare geometry as one feature."""
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"{label}: not JSON ({exc.msg} at line {exc.lineno})") from None
    if not isinstance(doc, dict) or "type" not in doc:
        raise InputError(f"{label}: not GeoJSON (no object with a 'type')")
    if doc["type"] == "FeatureCollection":
        features = doc.get("features")
        if not isinstance(features, list):
            raise InputError(f"{label}: FeatureCollection without a 'features' list")
        return features
    if doc["type"] == "Feature":
        return [doc]
    return [{"type": "Feature", "properties": {}, "geometry": doc}]


def _geojson_lines_and_points(features: list, label: str) -> tuple[list, list]:
    """(name, positions) of each LineString and (name, lat, lon, alt) of each Point."""
    lines, points = [], []
    for i, feature in enumerate(features):
        geometry = feature.get("geometry") if isinstance(feature, dict) else None
        props = feature.get("properties") if isinstance(feature, dict) else None
        name = str(props.get("name", "")) if isinstance(props, dict) and props.get("name") is not None else ""
        kind = geometry.get("type") if isinstance(geometry, dict) else None
        where = f"feature {i + 1}"
        if kind == "LineString":
            coords = geometry.get("coordinates")
            if not isinstance(coords, list):
                raise InputError(f"{label} {where}: LineString without a coordinates list")
            lines.append((name, [_position(c, label, where) for c in coords]))
        elif kind == "Point":
            points.append((name, *_position(geometry.get("coordinates"), label, where)))
        elif kind == "MultiLineString":
            raise InputError(f"{label} {where}: a MultiLineString has no one order of waypoints; give one LineString")
    return lines, points


def _geojson(text: str, label: str, route_name: str | None) -> list[dict]:
    lines, points = _geojson_lines_and_points(_geojson_features(text, label), label)
    if lines:
        vertices = _pick(lines, route_name, "line", label)
        return [_record(label, i, None, la, lo, alt) for i, (la, lo, alt) in enumerate(vertices)]
    if not points:
        raise InputError(f"{label}: no LineString and no Point features; nothing to make a route of")
    if route_name is not None:
        raise InputError(f"{label}: --route {route_name!r} names a line, but the file holds only Point features")
    return [_record(label, i, n, la, lo, alt) for i, (n, la, lo, alt) in enumerate(points)]


def read_route_file(path: Any, route_name: str | None = None) -> list[dict]:
    """Waypoints of the route in a GPX, KML or GeoJSON file (chosen by the file's ending).

    Returns dicts ``name, lat, lon, where`` and ``alt_m`` where the file gives a usable height
    (see the module docstring). ``route_name`` picks one of several routes, tracks or lines.
    Raises :class:`InputError` with one line naming the file for anything unreadable or ambiguous.
    """
    path = Path(path)
    kind = ROUTE_FILE_SUFFIXES.get(path.suffix.lower())
    if kind is None:
        raise InputError(f"route file {path.name}: ending {path.suffix!r} is not GPX, KML or GeoJSON")
    label = f"route {path.name}"
    text = _read_text(path, label)
    reader = {"gpx": _gpx, "kml": _kml, "geojson": _geojson}[kind]
    records = reader(text, label, route_name)
    if len(records) < 2:
        raise InputError(f"{label}: the route has {len(records)} point(s); a route needs at least two")
    return records
