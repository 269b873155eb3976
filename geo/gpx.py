"""GPX 1.1 for handheld receivers: stations, plots, events and corners as waypoints, the line as
a route.

Public API
----------
``gpx_text(conv, pos) -> str``
    A GPX 1.1 document (UTF-8 XML, namespace ``http://www.topografix.com/GPX/1/1``): metadata
    (the title, and the cautions as its description), one ``wpt`` per mark of
    :func:`geo.marks.marks` (stations, plots, events, retraced corners; the misclosure is never a
    waypoint) and one
    ``rte`` through the stations in course order (a closed figure ends on its beginning).
``gpx_waypoints(data, *, file=None) -> list[GpxPoint]``
    The waypoints of a GPX 1.0 or 1.1 file (name, lat, lon), in file order, less those whose
    type names a point this program computed (:data:`COMPUTED_KINDS`); a file with none
    reads its route points, then its track points. Raises :class:`geo.errors.InputError` naming
    the file and waypoint for a file that is not GPX or a point without a valid position.

Elements follow the order the GPX 1.1 schema fixes for them (``wptType``: name, cmt, desc,
type; ``rteType``: name, desc, number, rtept). Latitude and longitude are written with
:data:`geo.export.COORD_DECIMALS` decimals (about 1 mm), as in the GeoJSON.
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from typing import TYPE_CHECKING

from .errors import InputError

if TYPE_CHECKING:
    from .export import Positions
    from .north import DocumentConversion

__all__ = ["GPX_NS", "GpxPoint", "gpx_text", "gpx_waypoints"]

GPX_NS = "http://www.topografix.com/GPX/1/1"
_GPX10_NS = "http://www.topografix.com/GPX/1/0"
_XSI = "http://www.w3.org/2001/XMLSchema-instance"
_SCHEMA = f"{GPX_NS} {GPX_NS}/gpx.xsd"


@dataclass(frozen=True)
class GpxPoint:
    """A waypoint read from a GPX file: ``name`` (``None`` when it has none), WGS84 degrees,
    and its 1-based position among the points read (``number``)."""

    number: int
    name: str | None
    lat: float
    lon: float


def _degrees(value: float) -> str:
    from .export import COORD_DECIMALS

    return f"{round(value, COORD_DECIMALS):.{COORD_DECIMALS}f}"


def _sub(parent: ET.Element, tag: str, text: str | None = None) -> ET.Element:
    el = ET.SubElement(parent, f"{{{GPX_NS}}}{tag}")
    if text is not None:
        el.text = text
    return el


def _point(parent: ET.Element, tag: str, lat: float, lon: float) -> ET.Element:
    el = _sub(parent, tag)
    el.set("lat", _degrees(lat))
    el.set("lon", _degrees(lon))
    return el


def gpx_text(conv: DocumentConversion, pos: Positions) -> str:
    """The GPX 1.1 document of a traverse (see the module docstring)."""
    from .cautions import CAUTIONS
    from .marks import marks, route_stations

    ET.register_namespace("", GPX_NS)
    ET.register_namespace("xsi", _XSI)
    root = ET.Element(f"{{{GPX_NS}}}gpx", {"version": "1.1", "creator": "lodeline"})
    root.set(f"{{{_XSI}}}schemaLocation", _SCHEMA)
    title = conv.document.title or "traverse"
    meta = _sub(root, "metadata")
    _sub(meta, "name", title)
    _sub(meta, "desc", CAUTIONS)
    named = marks(conv, pos)
    for m in named:
        w = _point(root, "wpt", m.lat, m.lon)
        _sub(w, "name", m.name)
        _sub(w, "cmt", m.label)
        _sub(w, "desc", m.description)
        _sub(w, "type", m.kind)
    names = {m.index: m.name for m in named if m.kind == "station"}
    rte = _sub(root, "rte")
    _sub(rte, "name", title[:64])
    _sub(rte, "desc", f"the line in course order; adjustment: {pos.adjustment}")
    _sub(rte, "number", "1")
    for p in route_stations(pos):
        rp = _point(rte, "rtept", p.lat, p.lon)
        _sub(rp, "name", names.get(p.index, str(p.index)))
    ET.indent(root, space=" ")
    body = ET.tostring(root, encoding="unicode")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + body + "\n"


# --------------------------------------------------------------------------------------------
# Reading


def _local(tag: str) -> tuple[str, str]:
    if tag.startswith("{"):
        ns, _, name = tag[1:].partition("}")
        return ns, name
    return "", tag


def _coordinate(el: ET.Element, key: str, limit: float, file: str | None, where: str) -> float:
    raw = el.get(key)
    if raw is None:
        raise InputError(f"{where} has no {key}", file=file, field=key)
    try:
        value = float(raw)
    except ValueError:
        raise InputError(f"{where}: {key} {raw!r} is not a number", file=file, field=key) from None
    if not math.isfinite(value) or abs(value) > limit:
        raise InputError(
            f"{where}: {key} {raw} is outside -{limit:g}..{limit:g} degrees", file=file, field=key
        )
    return value


#: Waypoint types this program writes for points it computed, not stations a crew can have
#: found: reading a GPX file back, such waypoints are passed over (``<type>`` of GPX 1.1).
COMPUTED_KINDS = frozenset({"plot", "event", "corner"})


def gpx_waypoints(data: str | bytes, *, file: str | None = None) -> list[GpxPoint]:
    """The waypoints of a GPX file (see the module docstring)."""
    try:
        root = ET.fromstring(data)
    except ET.ParseError as exc:
        raise InputError(f"is not readable XML: {exc}", file=file) from None
    ns, name = _local(root.tag)
    if name != "gpx" or ns not in (GPX_NS, _GPX10_NS, ""):
        raise InputError("is not a GPX file (its root element is not gpx)", file=file)
    q = (lambda t: f"{{{ns}}}{t}") if ns else (lambda t: t)
    found = root.findall(q("wpt"))
    kind = "waypoint"
    if not found:
        found, kind = root.findall(f"{q('rte')}/{q('rtept')}"), "route point"
    if not found:
        found, kind = root.findall(f"{q('trk')}/{q('trkseg')}/{q('trkpt')}"), "track point"
    out = []
    for k, el in enumerate(found, start=1):
        type_el = el.find(q("type"))
        if type_el is not None and (type_el.text or "").strip() in COMPUTED_KINDS:
            continue  # a point this program computed (a plot, event, retraced corner)
        name_el = el.find(q("name"))
        label = name_el.text.strip() if name_el is not None and name_el.text else None
        where = f"{kind} {k}" + (f" ({label})" if label else "")
        lat = _coordinate(el, "lat", 90.0, file, where)
        lon = _coordinate(el, "lon", 180.0, file, where)
        out.append(GpxPoint(k, label or None, lat, lon))
    return out
