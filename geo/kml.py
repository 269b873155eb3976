"""KML 2.2 (OGC) for a landowner's or forester's globe viewer: the figure and its marks.

Public API
----------
``kml_text(conv, pos, figure) -> str``
    A KML 2.2 document (namespace ``http://www.opengis.net/kml/2.2``): a ``Document`` named
    after the title with the cautions as its description, a ``Placemark`` for the figure
    (``figure`` is the GeoJSON figure geometry of :func:`geo.export.geojson_collection`: a
    closed figure is a ``Polygon`` with its ring as the GeoJSON has it, a figure whose calls
    cross itself or an open line a ``LineString``), then a ``Folder`` of station placemarks
    and a ``Folder`` of plot placemarks named and described as in :mod:`geo.marks`.

Coordinates are ``longitude,latitude`` (WGS84, no height: ``clampToGround``) with
:data:`geo.export.COORD_DECIMALS` decimals, exactly the GeoJSON's numbers. Written with the
standard library's XML writer: the document has a handful of element types, and a KML library
at run time would add a dependency for no gain; the tests read it back with fastkml and
validate it against the OGC schema that fastkml ships.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from .export import Positions
    from .north import DocumentConversion

__all__ = ["KML_NS", "kml_text"]

KML_NS = "http://www.opengis.net/kml/2.2"


def _sub(parent: ET.Element, tag: str, text: str | None = None) -> ET.Element:
    el = ET.SubElement(parent, f"{{{KML_NS}}}{tag}")
    if text is not None:
        el.text = text
    return el


def _coordinates(points: Sequence[Sequence[float]]) -> str:
    from .export import COORD_DECIMALS

    d = COORD_DECIMALS
    return " ".join(f"{lon:.{d}f},{lat:.{d}f}" for lon, lat in points)


def _figure(doc: ET.Element, conv: DocumentConversion, figure: Mapping[str, Any]) -> None:
    mark = _sub(doc, "Placemark")
    _sub(mark, "name", conv.document.title or "traverse")
    kind = "closed figure" if conv.document.closed else "open line"
    _sub(mark, "description", f"{kind} of {len(conv.courses)} courses, as in the GeoJSON export")
    if figure["type"] == "Polygon":
        poly = _sub(mark, "Polygon")
        ring = _sub(_sub(poly, "outerBoundaryIs"), "LinearRing")
        _sub(ring, "coordinates", _coordinates(figure["coordinates"][0]))
    else:
        line = _sub(mark, "LineString")
        _sub(line, "coordinates", _coordinates(figure["coordinates"]))


def kml_text(conv: DocumentConversion, pos: Positions, figure: Mapping[str, Any]) -> str:
    """The KML 2.2 document of a traverse (see the module docstring)."""
    from .cautions import CAUTIONS
    from .export import COORD_DECIMALS
    from .marks import marks

    ET.register_namespace("", KML_NS)
    root = ET.Element(f"{{{KML_NS}}}kml")
    doc = _sub(root, "Document")
    _sub(doc, "name", conv.document.title or "traverse")
    _sub(doc, "description", CAUTIONS)
    _figure(doc, conv, figure)
    named = marks(conv, pos)
    kinds = (("station", "stations"), ("plot", "plots"), ("event", "events"), ("corner", "corners"))
    for kind, title in kinds:
        chosen = [m for m in named if m.kind == kind]
        if not chosen:
            continue
        folder = _sub(doc, "Folder")
        _sub(folder, "name", title)
        for m in chosen:
            place = _sub(folder, "Placemark")
            _sub(place, "name", m.label)
            _sub(place, "description", m.description)
            point = _sub(place, "Point")
            lonlat = (round(m.lon, COORD_DECIMALS), round(m.lat, COORD_DECIMALS))
            _sub(point, "coordinates", _coordinates([lonlat]))
    ET.indent(root, space=" ")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, "unicode") + "\n"
