"""Points along the courses: the plot list of a cruise and the events of the field notes.

Positions on a course
    A point ``along_m`` metres (ground) from a course's start lies on that course's marched
    line (:attr:`geo.north.CourseConversion.path`, interpolated between its nodes at equal
    ground steps; for a course of one step, the fraction ``along_m / length_m`` of the way
    from its starting to its ending station). :func:`course_points` is the one place that
    places such points.
    Latitude and longitude come from the inverse projection of the grid position.

The plot list (courses with ``every``)
    On each course that carries ``every`` (spacing ``s``), plots stand at ``first``,
    ``first + s``, ``first + 2s``… short of the course's end, where ``first`` is
    ``plots.first`` (default: one spacing, which gives exactly the intermediate points of the
    export), and with ``plots.course_ends = true`` also at the course's end. Plots are
    numbered in course order from ``plots.start`` (default 1), the numbering running on across
    courses. Each plot has its chainage from the start of its course and from the start of
    the line (the point of beginning; the recorded ground lengths of the courses before it
    added up), in metres and in the record unit (:mod:`geo.measures`), the bearing to run to it
    (its course's bearing: magnetic at the target date, true, grid, and magnetic at the record
    date where there is one), its grid coordinates and its latitude and longitude.

Events (``[[course.at]]``)
    What a line meets at a distance from the course's start ("at 12 chains crossed a run"):
    a distance text, or a number in the unit the course is written in, and a note. An event
    beyond the course's end is refused (file, course, key ``at.distance``).

Public API
    ``course_points(conv, course, along_m) -> (easting, northing)``,
    ``along_problems(doc, file=None) -> list[DocumentError]``,
    ``plot_list(conv, adjust=None) -> AlongList`` (plots and events on the exports' figure),
    ``Plot``, ``Event``, ``AlongList``
    (``as_dict()`` is the ``plots``/``events`` object of the JSON outputs),
    ``geojson_features(al)``, ``plots_csv(al)``, ``events_csv(al)``, ``report_blocks(al)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import DocumentError, LodelineError
from .measures import RecordUnit, conversion_unit, document_foot, in_unit, length_text

if TYPE_CHECKING:
    from .document import Document
    from .north import DocumentConversion

__all__ = [
    "MAX_ALONG_POINTS",
    "AlongList",
    "Event",
    "Plot",
    "along_problems",
    "course_points",
    "events_csv",
    "geojson_features",
    "plot_list",
    "plots_csv",
    "report_blocks",
]

#: The most plots and events one document may ask for (a cruise of a whole forest holds a few
#: thousand; more is a spacing typed in the wrong unit).
MAX_ALONG_POINTS = 200_000
#: A point this close to the course's end (relative to its length) is at the end.
_END_TOLERANCE = 1e-9


def course_points(
    conv: DocumentConversion,
    course: int,
    along_m: np.ndarray,
    stations: tuple[np.ndarray, np.ndarray] | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Grid easting and northing (CRS units) of points ``along_m`` metres (ground) from the
    start of course ``course`` (1-based), following the course's line (see the module notes).

    ``stations``: the grid eastings and northings of the figure's stations (an adjusted
    figure, :func:`geo.survey.adjusted_grid_stations`); the points are then moved by the
    adjustment of the course's two ends in proportion to the distance along it, so that they
    lie on the figure the stations draw. ``None``: on the marched (unadjusted) line.
    """
    c = conv.courses[course - 1]
    along = np.asarray(along_m, dtype=float)
    east, north = c.path_at(along)  # the marched line (geo.north)
    if stations is None:
        return east, north
    e_st, n_st = stations
    i = course - 1
    f = along / c.length_m
    d0e, d0n = e_st[i] - c.start.easting, n_st[i] - c.start.northing
    d1e, d1n = e_st[i + 1] - c.end.easting, n_st[i + 1] - c.end.northing
    return east + d0e + f * (d1e - d0e), north + d0n + f * (d1n - d0n)


# --------------------------------------------------------------------------------------------
# Events written inside a call: "N 10 E, at 12 chains a run, 40 chains to a stake"
# --------------------------------------------------------------------------------------------

#: The most words a distance after "at" may take ("12 ch 50 lk" is four).
_EVENT_DISTANCE_WORDS = 4


def _event_segment(part: str, foot: str | None, vara_inches: Any) -> tuple[str, str] | None:
    """``(distance text, note)`` of one comma-separated part of a call that reads as an event
    ("at 12 chains a run", "at 31.50 a blazed beech"), or ``None``."""
    from .calls import parse_distance

    words = part.split()
    if len(words) < 2 or words[0].casefold() != "at":
        return None
    for n in range(min(_EVENT_DISTANCE_WORDS, len(words) - 1), 0, -1):
        text = " ".join(words[1 : 1 + n])
        try:  # a bare number is probed as metres; its unit is the course's (see plot_list)
            parse_distance(text, default_unit="m", foot=foot, vara_inches=vara_inches)  # type: ignore[arg-type]
        except LodelineError:
            continue
        return text, " ".join(words[1 + n :])
    return None


def split_call_events(
    text: str, *, foot: str | None = None, vara_inches: Any = None
) -> tuple[str, tuple[tuple[str, str], ...]]:
    """A call without the events written in it, and those events as ``(distance, note)``.

    Only comma-separated parts between the bearing and the course's distance are read, and
    only when each starts with "at" and a distance ("N 10 E, at 12 chains a run, at 31.50 a
    blazed beech, 40 chains to a stake"): words after the distance stay the call's note, so
    "40 chains to a stake, at 2 rods from the brook" keeps its note whole. A call without
    such parts is returned unchanged with no events.
    """
    from .calls import parse_call

    parts = text.split(",")
    if len(parts) < 3:
        return text, ()
    try:  # the first part must be the bearing alone (the distance comes after the events)
        head = parse_call(parts[0], default_unit=None, foot=foot, vara_inches=vara_inches)  # type: ignore[arg-type]
    except LodelineError:
        return text, ()
    if head.bearing is None or head.distance is not None or head.note:
        return text, ()
    events: list[tuple[str, str]] = []
    k = 1
    while k < len(parts) - 1:
        event = _event_segment(parts[k], foot, vara_inches)
        if event is None:
            break
        events.append(event)
        k += 1
    if not events:
        return text, ()
    rest = ",".join(parts[k:]).strip()
    return f"{parts[0].rstrip()}, {rest}", tuple(events)


# --------------------------------------------------------------------------------------------
# Reading the keys
# --------------------------------------------------------------------------------------------


def _first_m(doc: Document, file: str | None) -> float | None:
    if doc.plots is None or doc.plots.first is None:
        return None
    from .document import document_distance

    if doc.plots.first == 0.0:  # a plot at each course's start (a number: no unit needed)
        return 0.0
    try:
        value = document_distance(doc, doc.plots.first).metres
    except LodelineError as err:
        raise DocumentError(err.message, file=file, field="plots.first") from None
    if not (value >= 0.0 and math.isfinite(value)):
        raise DocumentError("must be a length of zero or more", file=file, field="plots.first")
    return float(value)


def _event_m(doc: Document, value: float | str, unit: str | None) -> float:
    from .document import document_distance

    return float(document_distance(doc, value, unit=unit).metres)


def _course_events(doc: Document, course: Any) -> list[Any]:
    """The events of a course: those written in its call, then its ``[[course.at]]``."""
    from .document import CourseEvent

    out: list[Any] = []
    if course.call is not None and course.call.count(",") >= 2:  # see split_call_events
        foot = document_foot(doc)
        _, in_call = split_call_events(course.call, foot=foot, vara_inches=doc.record.vara_inches)
        out += [CourseEvent(distance=d, note=n or None) for d, n in in_call]
    return out + list(course.at)


def along_problems(doc: Document, *, file: str | None = None) -> list[DocumentError]:
    """Every event distance and ``plots.first`` that does not read (course and key named);
    what depends on the courses' lengths is checked by :func:`plot_list`."""
    problems: list[DocumentError] = []
    try:
        _first_m(doc, file)
    except DocumentError as err:
        problems.append(err)
    for i, course in enumerate(doc.course, start=1):
        for event in course.at:
            unit = course.unit or doc.record.distance_unit
            try:
                _event_m(doc, event.distance, unit)
            except LodelineError as err:
                problems.append(
                    DocumentError(err.message, file=file, course=i, field="at.distance")
                )
    return problems


# --------------------------------------------------------------------------------------------
# The list
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Plot:
    """One plot (see the module notes). Chainages are ground metres; ``*_record`` the same in
    the record unit. ``bearing``/``azimuth``: :class:`geo.north.References` of the course
    (texts and degrees). ``easting``/``northing`` in the CRS's unit, ``lat``/``lon`` WGS84."""

    number: int
    course: int
    along_course_m: float
    along_line_m: float
    along_course_record: float
    along_line_record: float
    at_course_end: bool
    bearing: Any
    azimuth: Any
    easting: float
    northing: float
    lat: float
    lon: float


@dataclass(frozen=True)
class Event:
    """One event of ``[[course.at]]``: ``number`` counts the events of the document from 1."""

    number: int
    course: int
    distance_text: str
    note: str | None
    along_course_m: float
    along_line_m: float
    along_course_record: float
    along_line_record: float
    easting: float
    northing: float
    lat: float
    lon: float


@dataclass(frozen=True)
class AlongList:
    """The plots and events of a document, with the record unit of their chainages."""

    record_unit: RecordUnit
    crs: str
    #: The figure the points lie on: ``"compass"``, ``"transit"`` (the adjusted figure of
    #: the closure and exports) or ``"none"`` (the marched, unadjusted line).
    adjustment: str
    start: int
    first_m: float | None
    course_ends: bool
    plots: tuple[Plot, ...]
    events: tuple[Event, ...]

    def as_dict(self) -> dict[str, Any]:
        """``{"plots": [...], "events": [...], "plot_numbering": {...}}`` (plain JSON values)."""
        ru = self.record_unit
        return {
            "plot_numbering": {
                "start": self.start,
                "first_m": self.first_m,
                "first_record": None if self.first_m is None else in_unit(self.first_m, ru),
                "course_ends": self.course_ends,
                "record_unit": ru.as_dict(),
            },
            "plots": [
                {
                    "number": p.number,
                    "course": p.course,
                    "along_course_m": p.along_course_m,
                    "along_line_m": p.along_line_m,
                    "along_course_record": p.along_course_record,
                    "along_line_record": p.along_line_record,
                    "at_course_end": p.at_course_end,
                    "bearing": p.bearing.as_dict(),
                    "azimuth": p.azimuth.as_dict("_deg"),
                    "easting": p.easting,
                    "northing": p.northing,
                    "lat": p.lat,
                    "lon": p.lon,
                }
                for p in self.plots
            ],
            "events": [
                {
                    "number": e.number,
                    "course": e.course,
                    "distance": e.distance_text,
                    "note": e.note,
                    "along_course_m": e.along_course_m,
                    "along_line_m": e.along_line_m,
                    "along_course_record": e.along_course_record,
                    "along_line_record": e.along_line_record,
                    "easting": e.easting,
                    "northing": e.northing,
                    "lat": e.lat,
                    "lon": e.lon,
                }
                for e in self.events
            ],
        }


def _plot_chainages(
    length_m: float, spacing_m: float, first_m: float | None, course_ends: bool
) -> list[tuple[float, bool]] | None:
    """``(along_m, at_end)`` of the plots of one course (see the module notes); ``None`` for
    more than :data:`MAX_ALONG_POINTS` plots (the caller refuses it)."""
    start = spacing_m if first_m is None else first_m
    end = length_m * (1.0 - _END_TOLERANCE)
    count = 0 if start >= end else math.floor((end - start) / spacing_m) + 1
    if count > MAX_ALONG_POINTS:
        return None
    out = [(a, False) for a in (start + k * spacing_m for k in range(count)) if a < end]
    if course_ends:
        out.append((length_m, True))
    return out


def _refuse_count(file: str | None, field: str, course: int) -> DocumentError:
    return DocumentError(
        f"asks for more than {MAX_ALONG_POINTS:,} plots and events: check the spacing and its unit",
        file=file,
        course=course,
        field=field,
    )


def plot_chainages(conv: DocumentConversion) -> list[tuple[int, int, float, bool]]:
    """``(number, course, along_m, at_course_end)`` of every plot, in course order (see the
    module notes): the numbering and chainages every output shares (the export places the
    same plots on its adjusted figure). Raises :class:`DocumentError` (file, course, key) for
    a ``plots.first`` beyond the end of a course with ``every`` or too many plots."""
    doc, file = conv.document, conv.file
    first_m = _first_m(doc, file)
    number = doc.plots.start if doc.plots is not None else 1
    ends = bool(doc.plots.course_ends) if doc.plots is not None else False
    out: list[tuple[int, int, float, bool]] = []
    for c in conv.courses:
        spacing = c.recorded.every_m
        if not spacing:
            continue
        if first_m is not None and first_m >= c.length_m and not ends:
            ru = conversion_unit(conv)
            raise DocumentError(
                f"the first plot ({length_text(first_m, ru)}) lies beyond the end of the "
                f"course ({length_text(c.length_m, ru)})",
                file=file,
                course=c.index,
                field="plots.first",
            )
        chainages = _plot_chainages(c.length_m, spacing, first_m, ends)
        if chainages is None or len(out) + len(chainages) > MAX_ALONG_POINTS:
            raise _refuse_count(file, "every", c.index)
        for along, at_end in chainages:
            out.append((number, c.index, along, at_end))
            number += 1
    return out


def plot_list(conv: DocumentConversion, *, adjust: str | None = None) -> AlongList:
    """The plots and events of a converted document (see the module notes), placed on the
    figure of ``adjust`` (``"compass"``, ``"transit"`` or ``"none"``; default, as the closure
    and the exports: compass for a closed traverse, none for an open one), so that they are
    the points the exports carry.

    Raises :class:`DocumentError` (file, course, key) for an event beyond its course's end, a
    ``plots.first`` beyond the end of a course with ``every``, an unreadable distance, or more
    than :data:`MAX_ALONG_POINTS` points; GridError from the inverse projection.
    """
    doc, file = conv.document, conv.file
    ru = conversion_unit(conv)
    starts = [0.0]
    for c in conv.courses:
        starts.append(math.fsum((starts[-1], c.length_m)))
    rows: list[tuple[str, int, float, float, Any]] = [  # kind, course, along, line, extra
        ("plot", course, along, starts[course - 1] + along, at_end)
        for _number, course, along, at_end in plot_chainages(conv)
    ]
    for c, course in zip(conv.courses, doc.course, strict=True):
        for event in _course_events(doc, course):
            try:
                along = _event_m(doc, event.distance, course.unit or c.length_unit)
            except LodelineError as err:
                raise DocumentError(
                    err.message, file=file, course=c.index, field="at.distance"
                ) from None
            if along > c.length_m * (1.0 + _END_TOLERANCE):
                raise DocumentError(
                    f"{event.distance!s} lies beyond the end of the course "
                    f"({length_text(c.length_m, ru)})",
                    file=file,
                    course=c.index,
                    field="at.distance",
                )
            rows.append(
                ("event", c.index, min(along, c.length_m), starts[c.index - 1] + along, event)
            )
        if len(rows) > MAX_ALONG_POINTS:
            raise _refuse_count(file, "at", c.index)
    start = doc.plots.start if doc.plots is not None else 1
    ends = bool(doc.plots.course_ends) if doc.plots is not None else False
    method, stations = "none", None
    if rows:
        from .survey import adjusted_grid_stations

        method, e_st, n_st, _plane = adjusted_grid_stations(conv, adjust)
        stations = (e_st, n_st) if method != "none" else None
    return _placed(conv, ru, rows, (method, stations), start, _first_m(doc, file), ends)


def _placed(
    conv: DocumentConversion,
    ru: RecordUnit,
    rows: list[tuple[str, int, float, float, Any]],
    figure: tuple[str, tuple[np.ndarray, np.ndarray] | None],
    start: int,
    first_m: float | None,
    ends: bool,
) -> AlongList:
    """Grid and WGS84 positions of the rows of :func:`plot_list` on ``figure`` (the
    adjustment and its stations, see :func:`course_points`), and the list."""
    from . import grid as _grid

    east = np.empty(len(rows))
    north = np.empty(len(rows))
    by_course: dict[int, list[int]] = {}
    for k, row in enumerate(rows):
        by_course.setdefault(row[1], []).append(k)
    for course, ks in by_course.items():
        e, n = course_points(conv, course, np.array([rows[k][2] for k in ks]), figure[1])
        east[ks], north[ks] = e, n
    lat = lon = np.empty(0)
    if rows:
        try:
            lat, lon = _grid.to_geographic(conv.crs, easting=east, northing=north)
        except LodelineError as err:
            raise err.located(file=conv.file, field="grid.crs") from None
        lat, lon = np.atleast_1d(lat), np.atleast_1d(lon)
    plots: list[Plot] = []
    events: list[Event] = []
    for k, (kind, course, along, line, extra) in enumerate(rows):
        c = conv.courses[course - 1]
        common = dict(
            course=course,
            along_course_m=float(along),
            along_line_m=float(line),
            along_course_record=in_unit(along, ru),
            along_line_record=in_unit(line, ru),
            easting=float(east[k]),
            northing=float(north[k]),
            lat=float(lat[k]),
            lon=float(lon[k]),
        )
        if kind == "plot":
            plots.append(
                Plot(
                    number=start + len(plots),
                    at_course_end=bool(extra),
                    bearing=c.bearing,
                    azimuth=c.azimuth,
                    **common,
                )
            )
        else:
            text = extra.distance
            if not isinstance(text, str):
                text = f"{text:g} {c.length_unit}"
            events.append(
                Event(number=len(events) + 1, distance_text=text, note=extra.note, **common)
            )
    return AlongList(ru, conv.crs, figure[0], start, first_m, ends, tuple(plots), tuple(events))


# --------------------------------------------------------------------------------------------
# Outputs: GeoJSON features, CSV tables, report blocks
# --------------------------------------------------------------------------------------------


def geojson_features(al: AlongList) -> list[dict[str, Any]]:
    """One RFC 7946 Point feature per event (``kind = "event"``), [longitude, latitude]
    rounded to 8 decimals, with its chainages. (The plots are the export's intermediate
    points, numbered and placed by :func:`plot_chainages`.)"""
    from .export import COORD_DECIMALS

    def point(lat: float, lon: float) -> dict[str, Any]:
        return {
            "type": "Point",
            "coordinates": [round(lon, COORD_DECIMALS), round(lat, COORD_DECIMALS)],
        }

    out = []
    rows = al.as_dict()
    for e, row in zip(al.events, rows["events"], strict=True):
        props = {"kind": "event", "index": e.number}
        props |= {k: v for k, v in row.items() if k not in ("lat", "lon")}
        out.append({"type": "Feature", "geometry": point(e.lat, e.lon), "properties": props})
    return out


PLOT_COLUMNS = (
    "plot",
    "course",
    "along_course_m",
    "along_course_record",
    "along_line_m",
    "along_line_record",
    "record_unit",
    "at_course_end",
    "magnetic_target_bearing",
    "true_bearing",
    "grid_bearing",
    "magnetic_record_bearing",
    "easting",
    "northing",
    "latitude",
    "longitude",
)
EVENT_COLUMNS = (
    "event",
    "course",
    "distance",
    "note",
    "along_course_m",
    "along_course_record",
    "along_line_m",
    "along_line_record",
    "record_unit",
    "easting",
    "northing",
    "latitude",
    "longitude",
)


def plots_csv(al: AlongList) -> str:
    """The plot list as RFC 4180 CSV (columns :data:`PLOT_COLUMNS`)."""
    from .export import csv_table

    unit = al.record_unit.unit
    rows = [
        [p.number, p.course, p.along_course_m, p.along_course_record, p.along_line_m,
         p.along_line_record, unit, "yes" if p.at_course_end else "no",
         p.bearing.magnetic_target, p.bearing.true, p.bearing.grid, p.bearing.magnetic_record,
         p.easting, p.northing, p.lat, p.lon]
        for p in al.plots
    ]  # fmt: skip
    return csv_table(PLOT_COLUMNS, rows)


def events_csv(al: AlongList) -> str:
    """The events as RFC 4180 CSV (columns :data:`EVENT_COLUMNS`)."""
    from .export import csv_table

    unit = al.record_unit.unit
    rows = [
        [e.number, e.course, e.distance_text, e.note, e.along_course_m, e.along_course_record,
         e.along_line_m, e.along_line_record, unit, e.easting, e.northing, e.lat, e.lon]
        for e in al.events
    ]  # fmt: skip
    return csv_table(EVENT_COLUMNS, rows)


def plot_rows(al: AlongList) -> list[tuple[str, ...]]:
    """The plot list as text cells: plot, course, chainage on the course and on the line (record
    unit and metres), bearing to run (magnetic target, true, grid), easting, northing,
    latitude, longitude (decimal degrees, 7 places)."""
    ru = al.record_unit
    return [
        (
            str(p.number) + (" (end)" if p.at_course_end else ""),
            str(p.course),
            f"{length_text(p.along_course_m, ru)} / {p.along_course_m:,.2f} m",
            f"{length_text(p.along_line_m, ru)} / {p.along_line_m:,.2f} m",
            p.bearing.magnetic_target or "–",
            p.bearing.true or "–",
            p.bearing.grid or "–",
            f"{p.easting:,.2f}",
            f"{p.northing:,.2f}",
            f"{p.lat:.7f}",
            f"{p.lon:.7f}",
        )
        for p in al.plots
    ]


def event_rows(al: AlongList) -> list[tuple[str, ...]]:
    """The events as text cells: course, distance as written, note, chainage on the course and
    on the line (record unit and metres), easting, northing, latitude, longitude."""
    ru = al.record_unit
    return [
        (
            str(e.course),
            e.distance_text,
            e.note or "",
            f"{length_text(e.along_course_m, ru)} / {e.along_course_m:,.2f} m",
            f"{length_text(e.along_line_m, ru)} / {e.along_line_m:,.2f} m",
            f"{e.easting:,.2f}",
            f"{e.northing:,.2f}",
            f"{e.lat:.7f}",
            f"{e.lon:.7f}",
        )
        for e in al.events
    ]


PLOT_HEADERS = ("plot", "course", "on the course", "on the line", "magnetic (target)", "true",
                "grid", "easting", "northing", "latitude", "longitude")  # fmt: skip
EVENT_HEADERS = ("course", "at", "note", "on the course", "on the line", "easting", "northing",
                 "latitude", "longitude")  # fmt: skip


def report_blocks(al: AlongList, conv: DocumentConversion) -> list[Any]:
    """The report's plot-list and events sections (blocks of :mod:`geo.report`)."""
    from .report import Heading, Paragraph, Table

    out: list[Any] = []
    when = conv.target_date.isoformat() if conv.target_date else f"{conv.target_year:g}"
    if al.plots:
        first = (
            "one spacing from its start"
            if al.first_m is None
            else f"{length_text(al.first_m, al.record_unit)} from its start"
        )
        out.append(Heading("Plot list"))
        out.append(
            Paragraph(
                f"Plots numbered from {al.start}, the numbering running on across courses; the "
                f"first plot on each course with a spacing at {first}"
                + ("; a plot at each such course's end" if al.course_ends else "")
                + f". Chainages are ground distances in {al.record_unit.name} and metres. The "
                f"bearing to run is the course's: magnetic on {when} ({conv.target_model}), true "
                f"and grid ({conv.crs}). Positions follow the courses as marched, not adjusted."
            )
        )
        out.append(
            Table(
                PLOT_HEADERS,
                tuple(plot_rows(al)),
                right=frozenset({0, 1, 2, 3, 7, 8, 9, 10}),
                nowrap=frozenset({2, 3, 4, 5, 6}),
                small=True,
                caption=f"Grid coordinates in {conv.crs}; latitude and longitude WGS84.",
            )
        )
    if al.events:
        out.append(Heading("Along the lines"))
        out.append(
            Paragraph(
                "What the field notes record along the courses, placed at their distance from "
                "the course's start (ground distance)."
            )
        )
        out.append(
            Table(
                EVENT_HEADERS,
                tuple(event_rows(al)),
                right=frozenset({0, 3, 4, 5, 6, 7, 8}),
                nowrap=frozenset({3, 4}),
                small=True,
            )
        )
    return out
