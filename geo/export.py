"""Positions of a traverse in the grid CRS and WGS84, and their GeoJSON and CSV files.

Public API
----------
``positions(conv, *, adjust=None) -> Positions``
    Station and intermediate-point positions: easting/northing in the grid CRS and WGS84
    latitude/longitude.
``geojson_collection(conv, *, adjust=None, positions=None, closure=None) -> dict``
    An RFC 7946 FeatureCollection (plain JSON values).
``geojson_text(collection) -> str``
    The collection as UTF-8 JSON text.
``points_csv(positions) -> str`` and ``courses_csv(conv, positions) -> str``
    The two RFC 4180 CSV tables.
``courses_csv_path(path) -> Path``
    Where the course table goes beside a points CSV: ``NAME-courses.csv``.
``write_exports(conv, *, geojson=None, csv=None, adjust=None, force=False, gpx=None, kml=None,
dxf=None) -> list[Path]``
    Write the requested files atomically; refuses to replace any existing one (before writing
    anything) unless ``force``. GPX, KML and DXF come from :mod:`geo.gpx`, :mod:`geo.kml` and
    :mod:`geo.dxf`, fed by the same :class:`Positions` as the GeoJSON.

Positions
    The stations are those of the conversion (:mod:`geo.north`: each course marched on the
    grid as the line it stands for) and, adjusted, those of the closure
    (:func:`geo.survey.adjusted_grid_stations`: the one plane figure adjusted once, in grid
    north, and scaled back to the grid by the figure's mean combined factor), so the
    exported gap and the closure's misclosure are one number. With ``adjust="none"`` easting,
    northing, latitude and longitude are exactly the conversion's stations. Easting and
    northing are in the CRS's unit, named beside them (``grid_unit``); latitude/longitude
    of adjusted stations come from the inverse projection (:func:`geo.grid.to_geographic`).
    Intermediate points are the plots of courses with ``every``
    (:func:`geo.along.plot_chainages`, numbered as the plot list numbers them); they lie on
    their course's marched path
    (:attr:`geo.north.CourseConversion.path`) at their chainage (ground distance from the
    course's start), moved by the adjustment of
    the course's ends in proportion to the distance along it.

GeoJSON (RFC 7946)
    A FeatureCollection of: the figure (a Polygon for a closed traverse, exterior ring
    counter-clockwise in longitude/latitude and closed, its vertices stations 0..n-1; a closed
    LineString when the calls cross themselves, which no valid Polygon can hold, with the
    crossing pair in ``crossing_courses``; otherwise a LineString through every station), one
    Point per station (for an adjusted closed traverse the last station is the point of
    beginning and is not repeated), one Point per intermediate point (plot), and one Point
    per event (``kind = "event"``) of :mod:`geo.along`. Coordinates are
    [longitude, latitude], WGS84, rounded to 8 decimals (about 1 mm).
    The figure's properties hold one object per course (call as written; magnetic (record),
    true, grid and magnetic (target) bearings and azimuths; length in the document's unit and
    in metres; grid length; adjusted grid azimuth and length). The collection's ``properties``
    (a foreign member, RFC 7946 section 6.1) hold the title, record and target dates, models,
    declinations at the point of beginning, CRS, the closure figures of
    :func:`geo.survey.close_document` (ground plane: misclosure, precision, adjustment, area) and
    the cautions text.

CSV (RFC 4180, UTF-8, CRLF line ends, a header row)
    ``OUT.csv``: one row per station and intermediate point, columns ``index, kind, course,
    along_m, easting_U, northing_U, latitude, longitude`` where ``U`` names the CRS's unit
    (``m``, ``ft``, ``us_ft``: :func:`geo.grid.grid_unit_name`); ``kind`` is ``station``
    (``index`` the station number, ``course`` the course it ends, empty for the point of
    beginning) or
    ``point`` (``index`` the plot number, ``course`` the course it lies on,
    ``along_m`` its ground distance from the course's start). ``OUT-courses.csv``: one row per
    course with every bearing and length (see :data:`COURSE_COLUMNS`). When the document has
    plots or events, ``OUT-plots.csv`` and ``OUT-events.csv`` too (:mod:`geo.along`).
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import InputError, LodelineError

if TYPE_CHECKING:
    from .north import DocumentConversion
    from .survey import SurveyClosure

__all__ = [
    "COURSE_COLUMNS",
    "POINT_COLUMNS",
    "Positions",
    "Position",
    "courses_csv",
    "courses_csv_path",
    "geojson_collection",
    "geojson_text",
    "points_csv",
    "point_columns",
    "positions",
    "write_exports",
]


#: Decimal places of exported longitude/latitude (1e-8 deg is about 1 mm).
COORD_DECIMALS = 8

POINT_COLUMNS = ("index", "kind", "course", "along_m", "easting", "northing", "latitude",
                 "longitude")  # fmt: skip
COURSE_COLUMNS = (
    "index",
    "call",
    "length",
    "unit",
    "length_m",
    "grid_length_m",
    "magnetic_record_bearing",
    "magnetic_record_azimuth_deg",
    "true_bearing",
    "true_azimuth_deg",
    "grid_bearing",
    "grid_azimuth_deg",
    "magnetic_target_bearing",
    "magnetic_target_azimuth_deg",
    "declination_record_deg",
    "declination_target_deg",
    "convergence_deg",
    "combined_factor",
    "adjusted_grid_azimuth_deg",
    "adjusted_grid_length_m",
)


@dataclass(frozen=True)
class Position:
    """One exported point.

    ``kind`` is ``"station"`` or ``"point"`` (intermediate); ``index`` the station number, or
    the intermediate point's plot number (geo.along); ``course`` the course a station ends
    (``None`` for the point of beginning) or a point lies on; ``along_m`` a point's ground
    distance from its course's start (``None`` for a station). ``easting``/``northing`` in
    the CRS's unit, ``lat``/``lon`` WGS84 degrees.
    """

    kind: str
    index: int
    course: int | None
    along_m: float | None
    easting: float
    northing: float
    lat: float
    lon: float


@dataclass(frozen=True)
class Positions:
    """Positions of a traverse (see the module docstring).

    ``stations`` are the n + 1 stations (station 0 = point of beginning), ``points`` the
    intermediate points in course order. ``grid_azimuth_deg``/``grid_length_m``: per course,
    after adjustment (grid north, metres). ``grid_misclosure_m``: the misclosure in the grid
    plane before adjustment (``None`` for an open traverse).
    """

    crs: str
    grid_unit_m: float
    grid_unit: str
    closed: bool
    adjustment: str
    stations: tuple[Position, ...]
    points: tuple[Position, ...]
    grid_azimuth_deg: tuple[float, ...]
    grid_length_m: tuple[float, ...]
    grid_misclosure_m: float | None


def _station_note(conv: Any, p: Any) -> str | None:
    """The note of a GeoJSON point: the point of beginning's description (station 0), the
    words of the call after its distance (other stations), none for intermediate points."""
    if p.kind != "station":
        return None
    if p.index == 0:
        return conv.document.place.description
    return conv.courses[p.index - 1].recorded.call_note


def positions(conv: DocumentConversion, *, adjust: str | None = None) -> Positions:
    """Station and intermediate-point positions of a converted document.

    ``adjust``: ``"compass"``, ``"transit"`` or ``"none"`` (default compass for a closed
    traverse, none for an open one). The stations are those of the closure
    (:func:`geo.survey.adjusted_grid_stations`). Raises DocumentError for a document without
    courses, TraverseError for an adjustment asked of an open traverse, GridError from the
    projection.
    """
    from . import grid as _grid
    from .survey import adjusted_grid_stations
    from .traverse import azimuth_of

    if not conv.courses:
        from .errors import DocumentError

        raise DocumentError("has no courses: nothing to export", file=conv.file, field="course")
    method, e_st, n_st, plane = adjusted_grid_stations(conv, adjust)
    unit = conv.grid_unit_m
    d_e, d_n = np.diff(e_st) * unit, np.diff(n_st) * unit
    out_az, out_len = azimuth_of(d_n, d_e), np.hypot(d_n, d_e)
    mis = None
    if conv.document.closed:
        mis = math.hypot(plane.north_m[-1], plane.east_m[-1]) * plane.factor
    pts = _intermediate(conv, e_st, n_st)
    all_e = np.concatenate([e_st, [p[3] for p in pts]])
    all_n = np.concatenate([n_st, [p[4] for p in pts]])
    try:
        lat, lon = _grid.to_geographic(conv.crs, easting=all_e, northing=all_n)
    except LodelineError as err:
        raise err.located(file=conv.file, field="grid.crs") from None
    lat = np.atleast_1d(np.asarray(lat, dtype=float))
    lon = np.atleast_1d(np.asarray(lon, dtype=float))
    n = len(conv.courses)
    stations_ll = conv.stations if method == "none" else conv.stations[:1]
    for s in stations_ll:  # exactly the conversion's stations
        lat[s.index], lon[s.index] = s.lat, s.lon
    stations = tuple(
        Position("station", i, None if i == 0 else i, None, float(e_st[i]), float(n_st[i]),
                 float(lat[i]), float(lon[i]))
        for i in range(n + 1)
    )  # fmt: skip
    points = tuple(
        Position("point", p[0], p[1], float(p[2]), float(p[3]), float(p[4]),
                 float(lat[n + 1 + k]), float(lon[n + 1 + k]))
        for k, p in enumerate(pts)
    )  # fmt: skip
    return Positions(
        crs=conv.crs,
        grid_unit_m=unit,
        grid_unit=_grid.grid_unit_name(conv.crs),
        closed=bool(conv.document.closed),
        adjustment=method,
        stations=stations,
        points=points,
        grid_azimuth_deg=tuple(float(a) for a in out_az),
        grid_length_m=tuple(float(x) for x in out_len),
        grid_misclosure_m=mis,
    )


def _intermediate(
    conv: DocumentConversion, e_st: np.ndarray, n_st: np.ndarray
) -> list[tuple[int, int, float, float, float]]:
    """Intermediate points ``(number, course, along_m, easting, northing)``: the plots of
    :func:`geo.along.plot_chainages` on each course's marched path
    (:attr:`geo.north.CourseConversion.path`), moved by the adjustment of the course's ends in
    proportion to the distance along it (:func:`geo.along.course_points`)."""
    from .along import course_points, plot_chainages

    pts: list[tuple[int, int, float, float, float]] = []
    for number, course, along, _end in plot_chainages(conv):
        e, n = course_points(conv, course, np.array([along]), (e_st, n_st))
        pts.append((number, course, float(along), float(e[0]), float(n[0])))
    return pts


# --------------------------------------------------------------------------------------------
# GeoJSON
# --------------------------------------------------------------------------------------------


def _lonlat(p: Position) -> list[float]:
    return [round(p.lon, COORD_DECIMALS), round(p.lat, COORD_DECIMALS)]


def _ring(stations: tuple[Position, ...]) -> list[list[float]]:
    """Closed exterior ring through stations 0..n-1, counter-clockwise in lon/lat."""
    ring = [_lonlat(p) for p in stations[:-1]]
    x = np.array([c[0] for c in ring])
    y = np.array([c[1] for c in ring])
    signed = float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))
    if signed < 0.0:
        ring = [ring[0], *reversed(ring[1:])]
    return [*ring, ring[0]]


def _course_properties(conv: DocumentConversion, pos: Positions) -> list[dict[str, Any]]:
    out = []
    for i, c in enumerate(conv.courses):
        out.append(
            {
                "index": c.index,
                "call": c.call,
                "length": c.length_value,
                "unit": c.length_unit,
                "length_m": c.length_m,
                "grid_length_m": c.grid_length_m,
                "bearing": c.bearing.as_dict(),
                "azimuth": c.azimuth.as_dict("_deg"),
                "declination_record_deg": c.declination_record_deg,
                "declination_target_deg": c.declination_target_deg,
                "convergence_deg": c.convergence_deg,
                "combined_factor": c.combined_factor,
                "adjusted_grid_azimuth_deg": pos.grid_azimuth_deg[i],
                "adjusted_grid_length_m": pos.grid_length_m[i],
                "note": c.recorded.note,
            }
        )
    return out


def _when(day: Any, year: float | None) -> Any:
    return day.isoformat() if day is not None else year


def geojson_collection(
    conv: DocumentConversion,
    *,
    adjust: str | None = None,
    positions_: Positions | None = None,
    closure: SurveyClosure | None = None,
) -> dict[str, Any]:
    """The RFC 7946 FeatureCollection of a converted document (see the module docstring).

    ``positions_``/``closure`` may be passed when already computed (same ``adjust``).
    """
    from .cautions import CAUTIONS
    from .survey import close_document

    pos = positions_ if positions_ is not None else positions(conv, adjust=adjust)
    clo = closure if closure is not None else close_document(conv, adjust=pos.adjustment)
    doc = conv.document
    first = conv.courses[0]
    if pos.closed and clo.crossing is None:
        geometry = {"type": "Polygon", "coordinates": [_ring(pos.stations)]}
    elif pos.closed:  # a figure whose calls cross itself is no valid Polygon (RFC 7946 3.1.6)
        ring = [_lonlat(p) for p in pos.stations[:-1]]
        geometry = {"type": "LineString", "coordinates": [*ring, ring[0]]}
    else:
        geometry = {"type": "LineString", "coordinates": [_lonlat(p) for p in pos.stations]}
    features: list[dict[str, Any]] = [
        {
            "type": "Feature",
            "geometry": geometry,
            "properties": {
                "kind": "figure",
                "title": doc.title,
                "closed": pos.closed,
                "adjustment": pos.adjustment,
                "courses": _course_properties(conv, pos),
            },
        }
    ]
    shown = pos.stations[:-1] if pos.closed and pos.adjustment != "none" else pos.stations
    for p in (*shown, *pos.points):
        features.append(
            {
                "type": "Feature",
                "geometry": {"type": "Point", "coordinates": _lonlat(p)},
                "properties": {
                    "kind": p.kind,
                    "index": p.index,
                    "course": p.course,
                    "along_m": p.along_m,
                    "easting": p.easting,
                    "northing": p.northing,
                    "grid_unit": pos.grid_unit,
                    "note": _station_note(conv, p),
                },
            }
        )
    from .along import geojson_features, plot_list
    from .retrace import corner_features

    features += geojson_features(plot_list(conv, adjust=pos.adjustment))
    features += corner_features(conv, decimals=COORD_DECIMALS)
    area = clo.area
    properties = {
        "title": doc.title,
        "record_date": _when(conv.record_date, conv.record_year),
        "target_date": _when(conv.target_date, conv.target_year),
        "reference": conv.reference,
        "model": conv.model_label,
        "declination_source": conv.declination_source,
        "declination_record_deg": first.declination_record_deg,
        "declination_target_deg": first.declination_target_deg,
        "convergence_deg": first.convergence_deg,
        "crs": conv.crs,
        "grid_unit": pos.grid_unit,
        "grid_unit_m": pos.grid_unit_m,
        "adjustment": pos.adjustment,
        "misclosure_m": clo.misclosure_m,
        "misclosure_azimuth_deg": clo.misclosure_azimuth_deg,
        "precision": clo.precision,
        "area_m2": None if area is None else area.ground_m2,
        "area_hectares": None if area is None else area.hectares,
        "area_acres": None if area is None else area.acres,
        "grid_area_m2": None if area is None else area.grid_m2,
        "crossing_courses": None if clo.crossing is None else list(clo.crossing),
        "notes": [n.as_dict() for n in clo.note_objects],
        "cautions": CAUTIONS,
    }
    return {"type": "FeatureCollection", "properties": properties, "features": features}


def geojson_text(collection: dict[str, Any]) -> str:
    """The collection as JSON text (UTF-8 characters kept, trailing newline): one key of the
    collection a line and one feature a line, each written by orjson (compiled: the shortest
    round-trip digits of every float, as Python's ``repr`` gives them, an exponent written
    ``1e-8``; about ten times the standard library's C encoder on a long document's 50 MB).

    Every coordinate must be a finite number (RFC 7946 has no other): one that is not is
    refused (``ValueError``), never written. A property that is not a finite number is
    ``null``, as in every JSON output of lodeline."""
    import orjson

    def dump(value: Any) -> str:
        return orjson.dumps(value, option=orjson.OPT_SERIALIZE_NUMPY).decode()

    parts = []
    for key, value in collection.items():
        if key == "features":
            for k, feature in enumerate(value):
                if not _finite_coordinates(feature["geometry"]["coordinates"]):
                    raise ValueError(f"GeoJSON feature {k}: a coordinate is not a finite number")
            rows = ",\n".join("  " + dump(feature) for feature in value)
            parts.append(f'"features": [\n{rows}\n ]' if rows else '"features": []')
        else:
            parts.append(f"{dump(key)}: {dump(value)}")
    return "{\n " + ",\n ".join(parts) + "\n}\n"


def _finite_coordinates(coordinates: Any) -> bool:
    """Whether every number of a GeoJSON ``coordinates`` value (a position, or nested lists
    of positions) is finite."""
    if coordinates and isinstance(coordinates[0], list | tuple):
        return all(map(_finite_coordinates, coordinates))
    return all(map(math.isfinite, coordinates))


# --------------------------------------------------------------------------------------------
# CSV
# --------------------------------------------------------------------------------------------


def csv_table(header: tuple[str, ...], rows: list[list[Any]]) -> str:
    """RFC 4180 CSV text (CRLF line ends, a header row; floats by their shortest repr)."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    writer.writerow(header)
    if rows:
        columns = [_cells(column) for column in zip(*rows, strict=True)]
        writer.writerows(zip(*columns, strict=True))
    return buffer.getvalue()


def _cells(column: tuple[Any, ...]) -> list[Any]:
    """One column's cells: ``""`` for ``None``, each float as ``repr`` writes it (made for
    the whole column at once by :func:`geo.float_text.reprs`), anything else as it is."""
    from .float_text import reprs

    cells = ["" if v is None else v for v in column]
    at = [k for k, v in enumerate(column) if isinstance(v, float)]
    if at:
        texts = reprs(np.array([column[k] for k in at], dtype=float))
        for k, text in zip(at, texts, strict=True):
            cells[k] = text
    return cells


def point_columns(grid_unit: str) -> tuple[str, ...]:
    """The points table's columns: :data:`POINT_COLUMNS` with the grid coordinates named by
    their unit (``easting_m``, ``easting_us_ft``...; see :func:`geo.grid.grid_unit_name`)."""
    return tuple(f"{c}_{grid_unit}" if c in ("easting", "northing") else c for c in POINT_COLUMNS)


def points_csv(pos: Positions) -> str:
    """One row per station and intermediate point (columns :func:`point_columns`)."""
    rows = [
        [p.index, p.kind, p.course, p.along_m, p.easting, p.northing, p.lat, p.lon]
        for p in (*pos.stations, *pos.points)
    ]
    return csv_table(point_columns(pos.grid_unit), rows)


def courses_csv(conv: DocumentConversion, pos: Positions) -> str:
    """One row per course with every bearing and length (columns :data:`COURSE_COLUMNS`)."""
    rows = []
    for i, c in enumerate(conv.courses):
        b, a = c.bearing, c.azimuth
        rows.append(
            [
                c.index,
                c.call,
                c.length_value,
                c.length_unit,
                c.length_m,
                c.grid_length_m,
                b.magnetic_record,
                a.magnetic_record,
                b.true,
                a.true,
                b.grid,
                a.grid,
                b.magnetic_target,
                a.magnetic_target,
                c.declination_record_deg,
                c.declination_target_deg,
                c.convergence_deg,
                c.combined_factor,
                pos.grid_azimuth_deg[i],
                pos.grid_length_m[i],
            ]
        )
    return csv_table(COURSE_COLUMNS, rows)


def courses_csv_path(path: str | Path) -> Path:
    """The course table's file beside the points CSV ``path``: ``NAME-courses.csv``."""
    return csv_path_beside(path, "courses")


def csv_path_beside(path: str | Path, table: str) -> Path:
    """A table's file beside the points CSV ``path``: ``NAME-courses.csv``, ``NAME-plots.csv``,
    ``NAME-events.csv``."""
    p = Path(path)
    return p.with_name(f"{p.stem}-{table}{p.suffix or '.csv'}")


# --------------------------------------------------------------------------------------------
# Files
# --------------------------------------------------------------------------------------------


def write_exports(
    conv: DocumentConversion,
    *,
    geojson: str | Path | None = None,
    csv_path: str | Path | None = None,
    adjust: str | None = None,
    force: bool = False,
    gpx: str | Path | None = None,
    kml: str | Path | None = None,
    dxf: str | Path | None = None,
    inputs: Sequence[str | Path] = (),
) -> list[Path]:
    """Write the GeoJSON, the two CSV files, GPX (:mod:`geo.gpx`), KML (:mod:`geo.kml`) and/or
    DXF (:mod:`geo.dxf`), all from the same positions; return the paths written.

    Every file is generated first, then written all-or-nothing (:func:`geo.atomic.write_all`):
    without ``force`` an existing target raises :class:`OutputExistsError`; a target that is
    one of ``inputs`` (the document) is refused; if any file cannot be written none is
    replaced and the error names it.
    """
    from .atomic import write_all

    if all(x is None for x in (geojson, csv_path, gpx, kml, dxf)):
        raise InputError("nothing to export: name a GeoJSON, CSV, GPX, KML or DXF file",
                         field="output")  # fmt: skip
    pos = positions(conv, adjust=adjust)
    outputs: list[tuple[Path, str]] = []
    collection = None
    if geojson is not None or kml is not None:
        collection = geojson_collection(conv, positions_=pos)
    if geojson is not None and collection is not None:
        outputs.append((Path(geojson), geojson_text(collection)))
    if csv_path is not None:
        from .along import events_csv, plot_list, plots_csv

        outputs.append((Path(csv_path), points_csv(pos)))
        outputs.append((courses_csv_path(csv_path), courses_csv(conv, pos)))
        al = plot_list(conv, adjust=pos.adjustment)
        if al.plots:
            outputs.append((csv_path_beside(csv_path, "plots"), plots_csv(al)))
        if al.events:
            outputs.append((csv_path_beside(csv_path, "events"), events_csv(al)))
    outputs += _field_files(conv, pos, collection, gpx=gpx, kml=kml, dxf=dxf)
    return write_all(outputs, overwrite=force, inputs=inputs)  # OutputError names the file


def _field_files(
    conv: DocumentConversion,
    pos: Positions,
    collection: dict[str, Any] | None,
    *,
    gpx: str | Path | None,
    kml: str | Path | None,
    dxf: str | Path | None,
) -> list[tuple[Path, str]]:
    """The GPX, KML and DXF texts asked for, from ``pos`` (and the GeoJSON figure for KML)."""
    out: list[tuple[Path, str]] = []
    if gpx is not None:
        from .gpx import gpx_text

        out.append((Path(gpx), gpx_text(conv, pos)))
    if kml is not None and collection is not None:
        from .kml import kml_text

        out.append((Path(kml), kml_text(conv, pos, collection["features"][0]["geometry"])))
    if dxf is not None:
        from .dxf import dxf_text

        out.append((Path(dxf), dxf_text(conv, pos)))
    return out
