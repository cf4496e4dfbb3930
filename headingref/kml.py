"""Small KML 2.2 writing helpers (standard library ``xml.etree``), shared by the KML outputs.

KML 2.2 is OGC standard 07-147r2 (namespace ``http://www.opengis.net/kml/2.2``). The helpers
build the elements that standard names: ``kml`` > ``Document`` (``name``, ``description``,
``Style``) > ``Folder`` > ``Placemark`` (``name``, ``description``, ``styleUrl``, geometry), with
``kml:color`` written ``aabbggrr`` (07-147r2, 16.9) and ``kml:coordinates`` as
``lon,lat,alt`` tuples in decimal degrees on WGS84 (07-147r2, 16.10). Text is escaped by
ElementTree, so user names cannot inject markup.

Public API: :data:`KML_NS`, :func:`new_document`, :func:`sub`, :func:`kml_colour`,
:func:`coordinates_text`, :func:`add_style`, :func:`to_text`.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from collections.abc import Iterable

__all__ = ["KML_NS", "add_style", "coordinates_text", "kml_colour", "new_document", "sub", "to_text"]

KML_NS = "{http://www.opengis.net/kml/2.2}"  # OGC 07-147r2, 6.1


def sub(parent, tag: str, text: str | None = None, **attrib):
    """A child element ``tag`` in the KML namespace, with optional text."""
    element = ET.SubElement(parent, KML_NS + tag, attrib)
    if text is not None:
        element.text = text
    return element


def new_document(name: str, description: str) -> tuple[ET.Element, ET.Element]:
    """``(kml, Document)`` elements with the document's name and description."""
    ET.register_namespace("", KML_NS[1:-1])
    root = ET.Element(KML_NS + "kml")
    doc = sub(root, "Document")
    sub(doc, "name", name)
    sub(doc, "description", description)
    return root, doc


def kml_colour(hex_rgb: str, alpha: float = 1.0) -> str:
    """``'#rrggbb'`` and an opacity 0..1 as KML's ``aabbggrr`` (OGC 07-147r2, 16.9 kml:color)."""
    text = hex_rgb.lstrip("#")
    a = round(max(0.0, min(1.0, float(alpha))) * 255)
    return f"{a:02x}{text[4:6]}{text[2:4]}{text[0:2]}".lower()


def coordinates_text(lon: Iterable[float], lat: Iterable[float], decimals: int = 6) -> str:
    """``lon,lat,0`` tuples separated by spaces (OGC 07-147r2, 16.10 kml:coordinates)."""
    return " ".join(f"{float(lo):.{decimals}f},{float(la):.{decimals}f},0" for lo, la in zip(lon, lat, strict=True))


def add_style(doc, style_id: str, line: tuple[str, float] | None = None, poly: str | None = None):
    """A shared ``Style`` with a LineStyle (colour, width) and/or a PolyStyle (colour)."""
    style = sub(doc, "Style", id=style_id)
    if line is not None:
        line_style = sub(style, "LineStyle")
        sub(line_style, "color", line[0])
        sub(line_style, "width", f"{line[1]:g}")
    if poly is not None:
        poly_style = sub(style, "PolyStyle")
        sub(poly_style, "color", poly)
    return style


def to_text(root) -> str:
    """The document as UTF-8 KML text with an XML declaration."""
    ET.indent(root, space=" ")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"
