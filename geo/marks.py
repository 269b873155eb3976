"""Named marks of a traverse for field and drafting files: one name and description per point.

Public API
----------
``marks(conv, pos) -> tuple[Mark, ...]``
    The stations and intermediate (plot) points of :func:`geo.export.positions`, in the order
    the GeoJSON lists them, then the events and (with found corners) the retraced corners, each
    with a short name a handheld receiver can show, a full label
    and a description with the bearings to run from it.
``route_stations(pos) -> tuple[Position, ...]``
    The stations along the line in course order (a closed figure ends on its beginning).
``corner_words(text) -> str | None``
    The monument's words of a call's ending ("to a white oak" -> "white oak").

Every position comes from :class:`geo.export.Positions` unchanged, so GPX, KML and DXF carry
the positions of the GeoJSON export. Names are the station number and the monument's words
(``"3 chestnut stump"``), cut to :data:`NAME_CHARS` characters; plots are ``"plot 1"``,
``"plot 2"``...; events ``"E1 crossed a r"`` and corners ``"restored 3"``. The point of
beginning is ``"0 beginning"``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from .export import Position, Positions
    from .north import CourseConversion, DocumentConversion

__all__ = ["NAME_CHARS", "Mark", "corner_words", "marks", "route_stations"]

#: Longest waypoint name written. Older handheld receivers show 14 characters of a waypoint
#: name (common practice, from memory); newer ones show more, so the full label goes in the
#: comment and description.
NAME_CHARS = 14

_LEADING = re.compile(r"^\s*(?:thence\s+)?to\s+(?:(?:a|an|the)\s+)?", re.IGNORECASE)


@dataclass(frozen=True)
class Mark:
    """One named point.

    ``kind``: ``"station"``, ``"plot"``, ``"event"`` or ``"corner"``; ``index``: the station
    number, the plot's or event's number from 1, or the corner's number; ``name``: at most
    :data:`NAME_CHARS` characters, unique in the traverse; ``label``:
    the name uncut; ``description``: what the point is and the course to run from it.
    ``lat``/``lon`` WGS84 degrees, ``easting``/``northing`` in the CRS's unit.
    """

    kind: str
    index: int
    name: str
    label: str
    description: str
    lat: float
    lon: float
    easting: float
    northing: float


def corner_words(text: str | None) -> str | None:
    """The monument's words of a call's ending: ``"to a white oak"`` -> ``"white oak"``;
    ``None`` for no words."""
    if not text:
        return None
    words = _LEADING.sub("", text).strip().rstrip(".;,")
    return words or None


def _number(value: float) -> str:
    return f"{value:.6g}"


def _target(conv: DocumentConversion) -> str:
    if conv.target_date is not None:
        return conv.target_date.isoformat()
    return f"{conv.target_year:.2f}"


def _course_text(conv: DocumentConversion, c: CourseConversion) -> str:
    """ "course 2 (call): compass on DATE ..., true ..., grid ..., record ..., 68.5 perch (m)"."""
    b = c.bearing
    parts = [f"course {c.index} ({c.call}): compass on {_target(conv)} {b.magnetic_target}"]
    parts.append(f"true {b.true}")
    parts.append(f"grid {b.grid}")
    if conv.reference == "magnetic" and b.magnetic_record is not None:
        parts.append(f"compass of the record {b.magnetic_record}")
    parts.append(f"{_number(c.length_value)} {c.length_unit} ({c.length_m:.2f} m)")
    return "; ".join(parts)


def _station_words(conv: DocumentConversion, index: int) -> str:
    if index == 0:
        return "beginning"
    words = corner_words(conv.courses[index - 1].recorded.call_note)
    return words or "corner"


def _station_mark(conv: DocumentConversion, p: Position) -> Mark:
    n = len(conv.courses)
    label = f"{p.index} {_station_words(conv, p.index)}"
    what = "point of beginning" if p.index == 0 else f"station {p.index}, end of course {p.index}"
    if p.index < n:
        run = "Run " + _course_text(conv, conv.courses[p.index])
    elif conv.document.closed:
        run = "The figure closes on the point of beginning"
    else:
        run = "End of the line"
    return Mark("station", p.index, label[:NAME_CHARS].rstrip(), label,
                f"{label}: {what}. {run}.", p.lat, p.lon, p.easting, p.northing)  # fmt: skip


def _plot_mark(conv: DocumentConversion, p: Position) -> Mark:
    c = conv.courses[(p.course or 1) - 1]
    along_m = p.along_m or 0.0
    along = along_m * c.length_value / c.length_m
    label = f"plot {p.index}"
    text = (
        f"{label}: on course {c.index}, {_number(along)} {c.length_unit} ({along_m:.2f} m) "
        f"from station {c.index - 1}; the course runs by compass on {_target(conv)} "
        f"{c.bearing.magnetic_target}, true {c.bearing.true}."
    )
    return Mark("plot", p.index, label[:NAME_CHARS], label, text, p.lat, p.lon, p.easting,
                p.northing)  # fmt: skip


def _event_marks(conv: DocumentConversion, pos: Positions) -> list[Mark]:
    """The events of ``[[course.at]]``, placed on the figure of ``pos`` (geo.along)."""
    from .along import plot_list

    out = []
    for e in plot_list(conv, adjust=pos.adjustment).events:
        label = f"E{e.number} {e.note}" if e.note else f"E{e.number}"
        text = (
            f"event {e.number}: {e.note or 'a point along the line'}, at {e.distance_text} "
            f"({e.along_course_m:.2f} m) on course {e.course} from station {e.course - 1}."
        )
        out.append(Mark("event", e.number, label[:NAME_CHARS].rstrip(), label, text,
                        e.lat, e.lon, e.easting, e.northing))  # fmt: skip
    return out


def _corner_marks(conv: DocumentConversion) -> list[Mark]:
    """Where a retracement puts each corner of a document with found corners (found, held
    or restored from them: :func:`geo.retrace.restore_document`); none without found ones."""
    from .retrace import restore_document

    corners = restore_document(conv).corners
    if not any(c.status in ("found", "held") for c in corners if c.index > 0):
        return []
    out = []
    for c in corners:
        # status first: a name a point file reads back as a corner number ("C3", "3 ...")
        # would turn a computed corner into a found one
        label = f"{c.status} {c.index}"
        words = f" ({c.description})" if c.description else ""
        text = f"corner {c.index}{words}: {c.status_text}."
        out.append(Mark("corner", c.index, label[:NAME_CHARS].rstrip(), label, text,
                        c.lat, c.lon, c.easting, c.northing))  # fmt: skip
    return out


def marks(conv: DocumentConversion, pos: Positions) -> tuple[Mark, ...]:
    """The named stations, plots, events and corners of ``pos`` (see the module docstring).

    For a closed traverse the last station is not a mark: adjusted, it is the point of
    beginning again; unadjusted, it is where the misclosure leaves the march. Events lie on
    the figure of ``pos``; corners are where the retracement puts them (found, held or
    restored), for a document with found corners.
    """
    shown = pos.stations[:-1] if pos.closed else pos.stations
    out = [_station_mark(conv, p) for p in shown]
    out += [_plot_mark(conv, p) for p in pos.points]
    out += _event_marks(conv, pos)
    out += _corner_marks(conv)
    return tuple(out)


def route_stations(pos: Positions) -> tuple[Position, ...]:
    """The stations of ``pos`` in course order along the line, ending on the point of
    beginning for a closed traverse (never on the misclosure of an unadjusted one)."""
    if pos.closed:
        return (*pos.stations[:-1], pos.stations[0])
    return pos.stations
