"""The traverse document: schema (format_version 2; 1 still read), loading, saving, checking.

A traverse document is a TOML file (or a JSON file with the same schema) holding the calls of a
deed or a compass cruise line *as written*, the point of beginning, the grid and how the
bearings were read. Derived numbers are never stored in it. This module is the only place that
reads or writes such files.

Schema, format_version 2 (every table and key below; any other key is an error)::

    format_version = 2            # required: 2, or 1 for a document without the keys of 2
    title = "..."                 # optional
    closed = true                 # the calls are meant to return to the point of beginning
                                  # (default false: an open traverse)

    [place]                       # required: the point of beginning, one of
    lat = 40.0                    #   geodetic degrees (WGS84), longitude east positive
    lon = -77.0
    # easting = ...               #   or grid coordinates in [grid] crs units (needs grid.crs)
    # northing = ...
    height_m = 0.0                # ellipsoidal height, metres (default 0)
    description = "Beginning at a hickory on the west side of the branch"
                                  # optional (format 2): the point of beginning as the deed
                                  # describes it

    [grid]                        # optional table
    crs = "EPSG:2271"             # projected CRS; default: the UTM zone of the place

    [record]                      # how the recorded bearings were read (defaults shown)
    reference = "magnetic"        # magnetic | true | grid
    date = "1854-05-12"           # ISO date (or decimal year) of the original survey;
                                  # required when reference = magnetic
    declination = "auto"          # auto (field model), or the stated declination:
                                  # "3°10' W" or a number of degrees, east positive
    declination_sigma = "0°15'"   # optional: 1-sigma uncertainty of the declination, used
                                  # where the model publishes none (or D is stated)
    model = "auto"                # field model for the record date, or auto
    distance_unit = "perch"       # unit of calls that give none (optional)
    foot = "us"                   # us | international (optional; default by the date)
    vara_inches = "texas"         # length of the vara in inches (a number, "33 1/3", or
                                  # "texas" = 33 1/3, "california" = 33); required when
                                  # varas occur
    angles = "right"              # right | left; required when a course gives an angle
    attraction_tolerance = 0.25   # degrees within which fore and back bearings agree (local
                                  # attraction); default: the coarsest precision to which
                                  # those bearings are written (a compass read to 1/4 degree
                                  # cannot show agreement closer than that)
    area = "61 acres, more or less"   # optional (format 2): the area the deed states, as
                                      # written (compared with the computed area)

    [target]                      # optional: the date to convert to (added in version 1)
    date = "2026-05-01"           # default: today (the command line may override it)
    model = "auto"                # field model for the target date, or auto

    [[course]]                    # zero or more, in order from the point of beginning
    call = "N 45 1/2 E 20 perches to a white oak"   # as written; or the keys below
    # bearing = "N 45 30 E"       # a bearing, or (courses after the first) an angle:
    # angle = "95 30"             # the angle turned at the course's starting station
    # distance = 20               # a number (in `unit`) or a distance text "20 perches"
    # unit = "perch"              # default: record.distance_unit
    back = "S 45 15 W"            # optional back bearing read at the far end
    found = { easting = 0.0, northing = 0.0 }   # optional measured position of the end of
                                                # the course (grid CRS units) or {lat, lon}
    every = "5 chains"            # optional: intermediate points along the course
    note = "..."                  # optional

    [[course.at]]                 # zero or more events along the course (field notes)
    distance = "12 chains"        # from the course's start: a number (in the course's unit)
                                  # or a distance text
    note = "crossed a run"        # optional: what is there

    [plots]                       # optional: the plot list of a cruise (courses with every)
    start = 1                     # number of the first plot (default 1)
    first = "2.5 chains"          # first plot on each course with every, from its start
                                  # (default: one spacing; 0: at the course's start)
    course_ends = false           # also a plot at the end of each course with every

Keys beyond the issue that introduced the format, and why:

- ``[target]`` (``date``, ``model``): the terminal application edits and saves the target date;
  a stored target date also makes a filed conversion reproducible (today changes). The command
  line's ``--target-date``/``--model`` override it.
- ``course.angle`` and ``record.angles``: deeds and plats that record interior angles rather than
  bearings. ``angle`` (degrees, or DMS text such as ``"95 30"`` or ``"95°30'"``) is the angle
  turned at the course's starting station from the line back to the previous station to this
  course. ``record.angles`` says which way it was turned: ``"right"`` (clockwise; interior
  angles of a figure run counter-clockwise) or ``"left"`` (counter-clockwise; interior angles of
  a figure run clockwise). The first course needs a ``bearing`` (it may also carry the angle at
  the point of beginning, used only for the angular misclosure). Unadjusted azimuths follow
  ``az_i = az_(i-1) + 180 + angle`` (right) or ``- angle`` (left). A ``call`` may be written
  the same way, ``"angle 95 30, 20 perches to a stake"`` (the angle, a comma, the distance and
  any note), which is how the commands and the terminal application show a course given by
  ``angle`` and ``distance``; a course whose call gives a bearing may carry ``angle`` too (the
  angle at its starting station, for the angular misclosure).

- ``[[course.at]]`` (``distance``, ``note``) and ``[plots]`` (``start``, ``first``,
  ``course_ends``): what field notes record along a line ("at 12 chains crossed a run") and
  how a cruise numbers and places its plots (:mod:`geo.along`). Documents without them read
  as before.
Format versions: version 2 added ``place.description`` and ``record.area`` (what a legal
description states besides its calls, see :mod:`geo.description`); everything else is as in
version 1, so a version-1 document reads unchanged and a document that uses neither key may
keep ``format_version = 1``. A version-1 document with a key of version 2 is refused (the key
and the version to write are named).

Every error is a :class:`geo.errors.DocumentError` with the file, the 1-based course number and
the key (``record.date``, ``found.easting`` ...), printed as one line.
"""

from __future__ import annotations

import datetime as _dt
import json
import math
import os
import re
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Annotated, Any, Literal

import tomli  # tomllib's own source, compiled: reads a long document 3x faster
from pydantic import (
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Field,
    ValidationError,
    model_validator,
)
from pydantic_core import PydanticCustomError

from . import units
from .angles import normalize_azimuth
from .bearings import parse_bearing
from .calls import parse_call, parse_distance
from .errors import DocumentError, LodelineError
from .frozen import quick_init
from .omitted import has_unknown

__all__ = [
    "FORMAT_VERSION",
    "Course",
    "CourseEvent",
    "Document",
    "Found",
    "Grid",
    "Place",
    "Plots",
    "RecordedCourse",
    "Record",
    "Target",
    "check_document",
    "course_call_text",
    "document_distance",
    "document_from_dict",
    "document_problems",
    "document_to_dict",
    "dumps_document",
    "dumps_mapping",
    "load_document",
    "loads_document",
    "parse_courses",
    "save_document",
]

FORMAT_VERSION = 2
#: Every format_version this version reads.
READABLE_VERSIONS = (1, 2)
#: Keys added by format_version 2 (dotted).
VERSION_2_KEYS = ("place.description", "record.area")

#: File suffixes and their formats.
_FORMATS = {".toml": "toml", ".json": "json"}


# --------------------------------------------------------------------------------------------
# Schema
# --------------------------------------------------------------------------------------------


def _fail(field: str | None, message: str) -> PydanticCustomError:
    """A validation error that keeps our own message and the key it concerns."""
    return PydanticCustomError("lodeline", "{message}", {"message": message, "field": field})


def _text(value: Any) -> Any:
    """Accept only text for a text key (no silent number-to-text coercion)."""
    if value is not None and not isinstance(value, str):
        raise _fail(None, f"must be text in quotes, not {_show(value)}")
    return value


def _number_or_text(value: Any) -> Any:
    if value is None or isinstance(value, str):
        return value
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise _fail(None, f"must be a number or text, not {_show(value)}")
    return value


def _date_text(value: Any) -> Any:
    """Dates are kept as text: a TOML date becomes its ISO form, a number its decimal year."""
    if value is None or isinstance(value, str):
        return value
    if isinstance(value, _dt.datetime):
        return value.date().isoformat()
    if isinstance(value, _dt.date):
        return value.isoformat()
    if isinstance(value, int | float) and not isinstance(value, bool):
        return repr(float(value)) if isinstance(value, float) else str(value)
    raise _fail(None, f'must be a date such as "1854-05-12", not {_show(value)}')


def _strict_number(value: Any) -> Any:
    if isinstance(value, bool) or (value is not None and not isinstance(value, int | float)):
        raise _fail(None, f"must be a number, not {_show(value)}")
    if value is not None and not math.isfinite(value):
        raise _fail(None, f"must be a finite number, not {value!r}")
    return value


def _strict_int(value: Any) -> Any:
    if isinstance(value, bool) or not isinstance(value, int):
        raise _fail(None, f"must be a whole number, not {_show(value)}")
    if not 0 <= value <= 10**9:
        raise _fail(None, f"must be a whole number from 0 to 1000000000, not {value}")
    return value


def _strict_bool(value: Any) -> Any:
    if not isinstance(value, bool):
        raise _fail(None, f"must be true or false, not {_show(value)}")
    return value


Text = Annotated[str | None, BeforeValidator(_text)]
Number = Annotated[float | None, BeforeValidator(_strict_number)]
NumberOrText = Annotated[float | str | None, BeforeValidator(_number_or_text)]
DateText = Annotated[str | None, BeforeValidator(_date_text)]


class _Table(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, allow_inf_nan=False)


class Place(_Table):
    """The point of beginning: ``lat``/``lon`` (WGS84 degrees) or ``easting``/``northing``
    (grid CRS units), and the ellipsoidal height in metres."""

    lat: Number = None
    lon: Number = None
    easting: Number = None
    northing: Number = None
    height_m: Annotated[float, BeforeValidator(_strict_number)] = 0.0
    description: Text = None

    @model_validator(mode="after")
    def _one_position(self) -> Place:
        geographic = (self.lat is not None, self.lon is not None)
        grid = (self.easting is not None, self.northing is not None)
        if any(geographic) and any(grid):
            raise _fail("lat", "give lat/lon or easting/northing, not both")
        if any(geographic) and not all(geographic):
            raise _fail("lon" if self.lon is None else "lat", "lat and lon go together")
        if any(grid) and not all(grid):
            raise _fail(
                "northing" if self.northing is None else "easting",
                "easting and northing go together",
            )
        if not any(geographic) and not any(grid):
            raise _fail("lat", "missing: give lat and lon, or easting and northing")
        if self.lat is not None and not -90.0 <= self.lat <= 90.0:
            raise _fail("lat", f"latitude {self.lat} is outside -90..90 degrees")
        if self.lon is not None and not -180.0 <= self.lon <= 180.0:
            raise _fail("lon", f"longitude {self.lon} is outside -180..180 degrees")
        from .magnetic import HEIGHT_MAX_M, HEIGHT_MIN_M  # the one height range

        if not HEIGHT_MIN_M <= self.height_m <= HEIGHT_MAX_M:
            raise _fail(
                "height_m",
                f"height {self.height_m} m is outside {HEIGHT_MIN_M:.0f}..{HEIGHT_MAX_M:.0f} m "
                "above the ellipsoid",
            )
        return self

    @property
    def by_grid(self) -> bool:
        """True when the point of beginning is given by grid coordinates (measured)."""
        return self.easting is not None


class Grid(_Table):
    """The projected CRS the job is mapped in (``None``: the UTM zone of the place)."""

    crs: Text = None


class Record(_Table):
    """How the recorded bearings and distances were read."""

    reference: Literal["magnetic", "true", "grid"] = "magnetic"
    date: DateText = None
    declination: Annotated[float | str, BeforeValidator(_number_or_text)] = "auto"
    declination_sigma: Annotated[float | str | None, BeforeValidator(_number_or_text)] = None
    model: Annotated[str, BeforeValidator(_text)] = "auto"
    distance_unit: Text = None
    foot: Literal["us", "international"] | None = None
    vara_inches: NumberOrText = None
    angles: Literal["right", "left"] | None = None
    attraction_tolerance: Number = None
    area: Text = None

    @property
    def stated_declination(self) -> bool:
        """True when the document states the declination instead of asking a model."""
        return not (isinstance(self.declination, str) and self.declination.strip() == "auto")


class Target(_Table):
    """The date (default today) and model (default auto) the bearings are converted to."""

    date: DateText = None
    model: Annotated[str, BeforeValidator(_text)] = "auto"


class Found(_Table):
    """A measured position: ``easting``/``northing`` in the grid CRS, or WGS84 ``lat``/``lon``."""

    easting: Number = None
    northing: Number = None
    lat: Number = None
    lon: Number = None

    @model_validator(mode="after")
    def _one_position(self) -> Found:
        grid = (self.easting is not None, self.northing is not None)
        geographic = (self.lat is not None, self.lon is not None)
        if any(grid) and any(geographic):
            raise _fail("easting", "give {easting, northing} or {lat, lon}, not both")
        if not (all(grid) or all(geographic)):
            raise _fail(
                "easting" if any(grid) else "lat",
                "give both easting and northing, or both lat and lon",
            )
        if self.lat is not None and not -90.0 <= self.lat <= 90.0:
            raise _fail("lat", f"latitude {self.lat} is outside -90..90 degrees")
        if self.lon is not None and not -180.0 <= self.lon <= 180.0:
            raise _fail("lon", f"longitude {self.lon} is outside -180..180 degrees")
        return self


class CourseEvent(_Table):
    """Something the line meets at a distance from the course's start (``[[course.at]]``)."""

    distance: Annotated[float | str, BeforeValidator(_number_or_text)]
    note: Text = None


class Plots(_Table):
    """How the plots of a cruise are numbered and placed (``[plots]``; see geo.along)."""

    start: Annotated[int, BeforeValidator(_strict_int)] = 1
    first: NumberOrText = None
    course_ends: Annotated[bool, BeforeValidator(_strict_bool)] = False


class Course(_Table):
    """One course as written: ``call``, or ``bearing``/``angle`` + ``distance`` [+ ``unit``]."""

    call: Text = None
    bearing: Text = None
    angle: NumberOrText = None
    distance: NumberOrText = None
    unit: Text = None
    back: Text = None
    found: Found | None = None
    every: NumberOrText = None
    note: Text = None
    at: tuple[CourseEvent, ...] = ()

    @model_validator(mode="after")
    def _call_or_parts(self) -> Course:
        parts = {"bearing": self.bearing, "angle": self.angle, "distance": self.distance}
        parts["unit"] = self.unit
        if self.call is not None:
            # a call may carry the angle at its starting station (see course.angle)
            for key, value in parts.items():
                if value is not None and key != "angle":
                    raise _fail(key, f"give either 'call' or '{key}' (with the other parts)")
            if not self.call.strip():
                raise _fail("call", "is empty")
            return self
        if self.bearing is None and self.angle is None:
            raise _fail(
                "call", "missing: give a 'call', or a 'bearing' (or 'angle') and 'distance'"
            )
        if self.distance is None:
            raise _fail("distance", "missing: give the course's distance (or a 'call')")
        return self


class Document(_Table):
    """A traverse document, format_version 1 (see the module docstring for every key)."""

    format_version: Literal[1, 2]
    title: Text = None
    closed: Annotated[bool, BeforeValidator(_strict_bool)] = False
    place: Place
    grid: Grid | None = None
    record: Record = Field(default_factory=Record)
    target: Target | None = None
    plots: Plots | None = None
    course: tuple[Course, ...] = ()

    @model_validator(mode="after")
    def _keys_of_the_version(self) -> Document:
        if self.format_version == 1:
            for key, value in (
                ("place.description", self.place.description),
                ("record.area", self.record.area),
            ):
                if value is not None:
                    raise _fail(key, "is a key of format_version 2: write format_version = 2")
        return self

    @model_validator(mode="after")
    def _grid_for_coordinates(self) -> Document:
        if self.place.by_grid and (self.grid is None or not self.grid.crs):
            raise _fail(
                "grid.crs", "the place is given by easting/northing: name their CRS in grid.crs"
            )
        return self


# --------------------------------------------------------------------------------------------
# Validation errors -> DocumentError
# --------------------------------------------------------------------------------------------

_TABLES: dict[str, type[_Table]] = {
    "place": Place,
    "grid": Grid,
    "record": Record,
    "target": Target,
    "course": Course,
    "found": Found,
    "at": CourseEvent,
    "plots": Plots,
}


def _show(value: Any) -> str:
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


def _model_at(path: list[str]) -> type[_Table]:
    model: type[_Table] = Document
    for part in path:
        model = _TABLES.get(part, model)
    return model


def _message(err: Mapping[str, Any], path: list[str]) -> str:
    kind = err["type"]
    value = err.get("input")
    if kind == "extra_forbidden":
        valid = ", ".join(_model_at(path[:-1]).model_fields)
        return f"unknown key (valid keys here: {valid})"
    if kind == "missing":
        return "missing (required)"
    if kind == "literal_error" and path == ["format_version"]:
        return f"{_show(value)} is not a format this version reads (format_version = 1 or 2)"
    if kind == "literal_error":
        expected = err.get("ctx", {}).get("expected", "")
        return f"{_show(value)} is not valid: use {expected}"
    if kind in ("model_type", "model_attributes_type", "dict_type"):
        return f"must be a table, not {_show(value)}"
    if kind in ("tuple_type", "list_type"):
        return f"must be a list of [[{path[-1] if path else 'course'}]] tables, not {_show(value)}"
    if kind in ("float_type", "float_parsing", "finite_number"):
        return f"must be a finite number, not {_show(value)}"
    if kind in ("string_type", "str_type"):
        return f"must be text in quotes, not {_show(value)}"
    if kind == "bool_type":
        return f"must be true or false, not {_show(value)}"
    return str(err.get("ctx", {}).get("message") or err.get("msg", "is not valid"))


def _document_error(exc: ValidationError, file: str | None) -> DocumentError:
    """Turn pydantic's first error into one DocumentError naming file, course and key."""
    errors = exc.errors(include_url=False)
    err = errors[0]
    course: int | None = None
    path: list[str] = []
    loc = err["loc"]
    for n, part in enumerate(loc):
        if err["type"] == "extra_forbidden" and n == len(loc) - 1:
            path.append(str(part))
            continue
        if isinstance(part, int):
            if path == ["course"] and course is None:
                course = part + 1
            continue
        if part in _TABLES or any(part in m.model_fields for m in (Document, *_TABLES.values())):
            path.append(str(part))
    extra = (err.get("ctx") or {}).get("field")
    if extra:
        path.append(str(extra))
    message = _message(err, path)
    if course is not None and path[:1] == ["course"]:
        path = path[1:]
    field = ".".join(path) if path else None
    if len(errors) > 1:
        message += f" (and {len(errors) - 1} more problem{'s' if len(errors) > 2 else ''})"
    return DocumentError(message, file=file, course=course, field=field)


# --------------------------------------------------------------------------------------------
# Dict <-> Document
# --------------------------------------------------------------------------------------------


def document_from_dict(
    data: Mapping[str, Any], *, file: str | None = None, check: bool = True
) -> Document:
    """Build a :class:`Document` from a plain mapping (parsed TOML or JSON, or an edited dict).

    The schema is always enforced. ``check=True`` also parses every call, bearing, distance,
    date and unit (:func:`check_document`); the terminal application passes ``check=False``
    to keep a call that does not parse yet, and asks :func:`document_problems` what is wrong.
    Raises :class:`DocumentError` naming ``file``, the course (1-based) and the key.
    """
    if not isinstance(data, Mapping):
        raise DocumentError(
            f"the document must be a table of keys, not {type(data).__name__}", file=file
        )
    try:
        doc = Document.model_validate(dict(data))
    except ValidationError as exc:
        raise _document_error(exc, file) from None
    except RecursionError:
        raise DocumentError("is nested too deeply to be a traverse document", file=file) from None
    if check:
        check_document(doc, file=file)
    return doc


def document_to_dict(doc: Document) -> dict[str, Any]:
    """Return the document as a plain dict in the stable key order of the schema.

    Keys whose value is absent (``None``) are left out; everything else is written, so a dict
    read back gives an identical document. Derived numbers are never included.
    """
    data = doc.model_dump(mode="python", exclude_none=True)
    for course in data.get("course", ()):
        if not course.get("at"):
            course.pop("at", None)  # no events: the key is left out, as an absent one
    return data


# --------------------------------------------------------------------------------------------
# Text <-> Document (TOML and JSON)
# --------------------------------------------------------------------------------------------


#: Keys of a course written as an inline table (``found = { easting = …, northing = … }``).
_INLINE = frozenset({"found"})


def dumps_document(
    doc: Document, fmt: Literal["toml", "json"] = "toml", *, base: str | None = None
) -> str:
    """Serialise a document as TOML or as indented JSON with the same keys.

    TOML without ``base``: tables in schema order, one ``[[course]]`` per course, ``found``
    as an inline table. With ``base`` (the TOML text the document was read from), the text
    is ``base`` changed only where the document differs from what ``base`` means: comments,
    blank lines, key order and the written form of every untouched value stay as they were
    (:func:`geo.toml_text.update_toml`). A ``base`` that is not a readable document gives
    fresh text.
    """
    from .toml_text import update_toml

    data = document_to_dict(doc)
    if fmt == "toml" and base is not None:
        old = _meaning(base)
        if old is not None:
            text = update_toml(base, data, old, _INLINE)
            # the edited text must mean the document exactly, else it is written afresh
            if text is not None and _meaning(text) == data:
                return text
    return dumps_mapping(data, fmt)


def _meaning(text: str) -> dict[str, Any] | None:
    """The normalised data of TOML text (as :func:`document_to_dict` gives it), or ``None``
    when the text is not a document the schema reads."""
    try:
        return document_to_dict(loads_document(text, "toml", check=False))
    except DocumentError:
        return None


def dumps_mapping(data: Mapping[str, Any], fmt: Literal["toml", "json"] = "toml") -> str:
    """Serialise the mapping of a document (checked or not) as fresh text: indented JSON, or
    TOML with the plain keys first, then the tables in the mapping's order (the schema's),
    one ``[[course]]`` per course (its events as ``[[course.at]]``), ``found`` inline."""
    from .toml_text import dumps_toml

    if fmt == "json":
        return json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    return dumps_toml(data, _INLINE)


def _format_of(path: Path, file: str) -> str:
    fmt = _FORMATS.get(path.suffix.lower())
    if fmt is None:
        raise DocumentError(
            f"unknown document type '{path.suffix}': use a .toml or .json file", file=file
        )
    return fmt


def loads_document(
    text: str | bytes,
    fmt: Literal["toml", "json"] = "toml",
    *,
    file: str | None = None,
    check: bool = True,
) -> Document:
    """Read a document from TOML or JSON text (bytes must be UTF-8).

    Raises :class:`DocumentError` (and nothing else) for anything that is not a valid document.
    """
    return document_from_dict(loads_mapping(text, fmt, file=file), file=file, check=check)


def load_mapping(path: str | os.PathLike[str]) -> Any:
    """The data of a ``.toml`` or ``.json`` file as read, before any schema check (TOML dates
    and times are kept as :mod:`datetime` objects). Raises :class:`DocumentError` naming the
    file when it cannot be read or is not TOML or JSON text."""
    p = Path(path)
    file = str(path)
    fmt = _format_of(p, file)
    return loads_mapping(read_document_bytes(p), fmt, file=file)  # type: ignore[arg-type]


#: The largest document read, in bytes (a 5,000-course deed book is under 1 MB).
MAX_DOCUMENT_BYTES = 50 * 1024 * 1024


def read_document_bytes(path: str | os.PathLike[str]) -> bytes:
    """The bytes of a document file: a regular file (after links) of at most
    :data:`MAX_DOCUMENT_BYTES`. A device, a pipe or a folder is refused without waiting on
    it. Raises :class:`DocumentError` naming the file."""
    from .file_input import FileRefusedError, read_regular_file

    try:
        return read_regular_file(path, MAX_DOCUMENT_BYTES, what="traverse document")
    except FileRefusedError as refused:
        raise DocumentError(str(refused), file=str(path)) from None


def read_document_text(path: str | os.PathLike[str]) -> str:
    """The UTF-8 text of a document file (see :func:`read_document_bytes`)."""
    raw = read_document_bytes(path)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise DocumentError(
            f"is not UTF-8 text (byte {exc.start} cannot be read)", file=str(path)
        ) from None
    return text[1:] if text.startswith("\ufeff") else text


def loads_mapping(
    text: str | bytes, fmt: Literal["toml", "json"] = "toml", *, file: str | None = None
) -> Any:
    """The data of TOML or JSON text as read, before any schema check (see
    :func:`load_mapping`)."""
    if isinstance(text, bytes):
        try:
            text = text.decode("utf-8")
        except UnicodeDecodeError as exc:
            raise DocumentError(
                f"is not UTF-8 text (byte {exc.start} cannot be read)", file=file
            ) from None
    if text.startswith("\ufeff"):
        text = text[1:]
    try:
        data = json.loads(text) if fmt == "json" else tomli.loads(text)
    except json.JSONDecodeError as exc:
        raise DocumentError(f"is not valid JSON: {exc.msg}", file=file, line=exc.lineno) from None
    except tomli.TOMLDecodeError as exc:
        raise DocumentError(f"is not valid TOML: {exc}", file=file) from None
    except (RecursionError, ValueError) as exc:
        raise DocumentError(f"cannot be read: {exc}", file=file) from None
    return data


def load_document(path: str | os.PathLike[str], *, check: bool = True) -> Document:
    """Read a traverse document from a ``.toml`` or ``.json`` file.

    Raises :class:`DocumentError` naming the file (and course and key) for a file that cannot
    be read or is not a valid document.
    """
    return document_from_dict(load_mapping(path), file=str(path), check=check)


def plain_values(data: Any) -> Any:
    """``data`` (tables, lists, values as a TOML or JSON reader gives them) with TOML dates,
    date-times and times written as ISO text, the way the document keeps dates: what can be
    written as JSON and shown in a text field."""
    if isinstance(data, dict):
        return {k: plain_values(v) for k, v in data.items()}
    if isinstance(data, list):
        return [plain_values(v) for v in data]
    if isinstance(data, _dt.datetime | _dt.date | _dt.time):
        return data.isoformat()
    return data


def save_document(
    doc: Document,
    path: str | os.PathLike[str],
    *,
    base: str | os.PathLike[str] | None = None,
    fresh: bool = False,
) -> Path:
    """Write ``doc`` atomically to a ``.toml`` or ``.json`` file and return the path.

    This is the one way a document is saved. A TOML document is written as the edit of the
    text it came from, so the surveyor's comments, the order of keys and the written form of
    every value not edited are kept and only what changed is rewritten (see
    :func:`dumps_document`). That text is read from ``base`` (the file the document was
    opened from, for a "save as"), else from ``path`` itself when it exists; a file that is
    not a readable TOML document gives fresh text. An existing file is kept as
    ``NAME.toml.bak`` (``NAME.json.bak``). ``fresh=True`` writes fresh text whatever is
    there (a new document saved over another file). The text is generated before anything
    is touched, so a failure never leaves a damaged file. Raises
    :class:`geo.errors.OutputError` naming the file when it cannot be written.
    """
    from .atomic import write_atomic

    p = Path(path)
    fmt = _format_of(p, str(path))
    edits = fmt == "toml" and not fresh
    text = dumps_document(doc, fmt, base=_base_text(p, base) if edits else None)  # type: ignore[arg-type]
    return write_atomic(p, text, overwrite=True, backup=True)  # OutputError names the file


def _base_text(path: Path, base: str | os.PathLike[str] | None) -> str | None:
    """The TOML text a save edits: ``base`` if given, else ``path`` (``None``: none)."""
    source = Path(base) if base is not None else path
    if source.suffix.lower() != ".toml":
        return None
    try:
        return read_document_text(source)
    except DocumentError:
        return None


# --------------------------------------------------------------------------------------------
# Semantics: parse every call as the conversion will
# --------------------------------------------------------------------------------------------


@quick_init
@dataclass(frozen=True, slots=True)
class RecordedCourse:
    """One course parsed into numbers, in the document's recorded reference.

    Attributes
    ----------
    index:
        1-based course number.
    text:
        The call as written (``call``, or the bearing/angle, distance and unit joined).
    azimuth_deg:
        Recorded azimuth, degrees clockwise from the recorded north, [0, 360). For a course
        given by an angle: the unadjusted azimuth carried from the previous course.
    precision_deg:
        The precision the bearing was written to (degrees); for an angle, the angle's.
    bearing_text:
        The bearing as written, or ``None`` when the course gives an angle.
    angle_deg:
        The angle turned at the starting station (see ``record.angles``), or ``None``.
    length_m:
        Recorded (ground, horizontal) length in metres.
    length_value, length_unit:
        The length in the unit it was written in (unit name as the call parser gives it).
    back_azimuth_deg:
        The back bearing read at the far end as an azimuth, or ``None``.
    every_m:
        Spacing of intermediate points along the course in metres, or ``None``.
    note:
        The course's ``note`` key, or ``None``.
    call_note:
        The words of the call after the distance ("to a white oak"), or ``None``.
    bearing_style:
        How the bearing was written (``'quadrant'``, ``'azimuth'``, ``'cardinal'``, see
        :class:`geo.bearings.Bearing`), or ``None`` for a course given by an angle.
    back_precision_deg:
        The precision the back bearing was written to (degrees), or ``None``.
    """

    index: int
    text: str
    azimuth_deg: float
    precision_deg: float
    bearing_text: str | None
    angle_deg: float | None
    length_m: float
    length_value: float
    length_unit: str
    back_azimuth_deg: float | None
    every_m: float | None
    note: str | None
    call_note: str | None
    bearing_style: str | None = None
    back_precision_deg: float | None = None
    #: What the closure supplied when the call wrote "?" (geo.omitted), else None.
    solved: str | None = None


def course_call_text(course: Course, default_unit: str | None = None) -> str:
    """The call as written: ``call`` itself, or its parts joined ("N 45 30 E 20 perch",
    "angle 98 16, 1547 vara"); ``default_unit`` (record.distance_unit) names a unit left out."""
    if course.call is not None:
        return course.call
    parts = [course.bearing if course.bearing is not None else f"angle {_plain(course.angle)},"]
    parts.append(_plain(course.distance))
    unit = course.unit or (default_unit if not isinstance(course.distance, str) else None)
    if unit:
        parts.append(unit)
    return " ".join(p for p in parts if p)


_ANGLE_CALL = re.compile(r"\s*angle\b\s*(?P<angle>[^,]*?)\s*(?:,\s*(?P<rest>.*))?$", re.I | re.S)


def _angle_call(text: str) -> tuple[str, str] | None:
    """``(angle, rest)`` of a call written as an angle turned and a distance ("angle 98 16,
    1547 varas to a mesquite", the form the courses given by parts are written in), or
    ``None`` for any other call. Raises DocumentError for an angle call without its comma."""
    match = _ANGLE_CALL.match(text)
    if match is None:
        return None
    if not match.group("angle") or match.group("rest") is None:
        raise DocumentError(
            "an angle call is the angle, a comma, then the distance: 'angle 98 16, 1547 varas'",
            field="call",
        )
    return match.group("angle"), match.group("rest")


def _without_events(text: str, ctx: dict[str, Any]) -> str:
    """The call without the events written in it ("N 10 E, at 12 chains a run, 40 chains"):
    see :func:`geo.along.split_call_events`."""
    if "," not in text:
        return text
    from .along import split_call_events

    return split_call_events(text, foot=ctx["foot"], vara_inches=ctx["vara_inches"])[0]


def _plain(value: float | str | None) -> str:
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


def _locate(err: LodelineError, file: str | None, course: int | None, field: str) -> DocumentError:
    """Re-express a parser error as a DocumentError at a course and key."""
    return DocumentError(err.message, file=file, course=course, field=field)


def _unit_context(doc: Document) -> dict[str, Any]:
    """Arguments shared by every distance parse: default unit, foot and vara.

    The foot is ``record.foot``, else the default for the record date (geo.units); with
    neither, ``None``, so that a foot-based length raises an error at its course.
    """
    record = doc.record
    try:
        foot: str | None = units.choose_foot(record.foot, record.date).foot
    except LodelineError:
        foot = None
    return {
        "default_unit": record.distance_unit,
        "foot": foot,
        "vara_inches": record.vara_inches,
    }


def document_distance(doc: Document, value: float | str, *, unit: str | None = None) -> Any:
    """Read a length of ``doc`` (an event's ``distance``, ``plots.first``): a distance text, or a
    number in ``unit`` (default ``record.distance_unit``), with the document's foot and vara.
    Returns a :class:`geo.calls.Distance`; raises :class:`~geo.errors.LodelineError` (the
    caller names the course and key)."""
    ctx = _unit_context(doc)
    if isinstance(value, str):
        return parse_distance(value, **{**ctx, "default_unit": unit or ctx["default_unit"]})
    unit = unit or ctx["default_unit"]
    if unit is None:
        raise DocumentError("a bare number needs a unit: write it as a distance ('12 chains')")
    if not value > 0.0:
        raise DocumentError(f"must be a positive length, not {_plain(value)}")
    return parse_distance(f"{_plain(value)} {unit}", **ctx)


def _check_record(doc: Document, file: str | None) -> list[DocumentError]:
    from .bearings import parse_declination
    from .dates import parse_date

    problems: list[DocumentError] = []
    record = doc.record
    for table, value in (("record", record.date), ("target", doc.target and doc.target.date)):
        if value is not None:
            try:
                parse_date(value)
            except LodelineError as err:
                problems.append(_locate(err, file, None, f"{table}.date"))
    tolerance = record.attraction_tolerance
    if tolerance is not None and not 0.0 <= tolerance <= 10.0:
        problems.append(
            DocumentError(
                f"attraction tolerance {tolerance} is outside 0..10 degrees",
                file=file,
                field="record.attraction_tolerance",
            )
        )
    if record.reference == "magnetic" and record.date is None:
        problems.append(
            DocumentError(
                "missing: a magnetic record needs the date of the original survey",
                file=file,
                field="record.date",
            )
        )
    if record.stated_declination:
        if isinstance(record.declination, float):
            if not -180.0 <= record.declination <= 180.0:
                problems.append(
                    DocumentError(
                        f"declination {record.declination} is outside -180..180 degrees",
                        file=file,
                        field="record.declination",
                    )
                )
        else:
            try:
                parse_declination(record.declination)
            except LodelineError as err:
                problems.append(_locate(err, file, None, "record.declination"))
    if record.distance_unit is not None:
        try:
            unit = units.unit_name(record.distance_unit)
        except LodelineError as err:
            problems.append(_locate(err, file, None, "record.distance_unit"))
        else:
            if unit == "vara" and record.vara_inches is None:
                problems.append(DocumentError(_VARA_MISSING, file=file, field="record.vara_inches"))
    if record.vara_inches is not None:
        try:
            units.resolve_vara_inches(record.vara_inches)
        except LodelineError as err:
            problems.append(_locate(err, file, None, "record.vara_inches"))
    if record.model.strip() == "":
        problems.append(
            DocumentError("is empty: give a model name or auto", file=file, field="record.model")
        )
    if doc.target is not None and doc.target.model.strip() == "":
        problems.append(
            DocumentError("is empty: give a model name or auto", file=file, field="target.model")
        )
    if doc.grid is not None and doc.grid.crs is not None and not doc.grid.crs.strip():
        problems.append(
            DocumentError("is empty: give a CRS such as EPSG:32618", file=file, field="grid.crs")
        )
    return problems


def _parse_angle(value: float | str) -> tuple[float, float]:
    """An angle: degrees (number) or DMS text ("95 30", "95°30'", "95-30-00").

    Returns ``(degrees, precision_deg)``; the text is read by the bearing parser as an azimuth
    (the same DMS grammar), so a quadrant bearing here is an error.
    """
    if isinstance(value, float):
        text = repr(value)
        decimals = len(text.split(".")[1].rstrip("0")) if "e" not in text else 6
        degrees, precision = value, 10.0 ** (-decimals)
    else:
        b = parse_bearing(value)
        if b.style != "azimuth" or b.reference != "north":
            raise DocumentError(
                f"'{value}' is a bearing: an angle is degrees, minutes and seconds (\"95 30\")"
            )
        degrees, precision = float(b.angle_deg), b.precision_deg
    if not 0.0 <= degrees < 360.0:
        raise DocumentError(f"angle {value!r} is outside 0..360 degrees")
    return degrees, precision


def _course_distance(course: Course, ctx: dict[str, Any], file: str | None, index: int) -> Any:
    """The ``distance`` [+ ``unit``] of a course without a call, parsed (errors at the key)."""
    unit = course.unit or ctx["default_unit"]
    if course.unit is not None:
        try:
            units.unit_name(course.unit)
        except LodelineError as err:
            raise _locate(err, file, index, "unit") from None
    if isinstance(course.distance, str):
        text = course.distance
    else:
        if unit is None:
            raise DocumentError(
                "missing: give the unit here or set record.distance_unit",
                file=file,
                course=index,
                field="unit",
            )
        if not course.distance > 0.0:
            raise DocumentError(
                f"must be a positive length, not {_plain(course.distance)}",
                file=file,
                course=index,
                field="distance",
            )
        text = f"{_plain(course.distance)} {unit}"
    try:
        return parse_distance(text, **{**ctx, "default_unit": unit})
    except LodelineError as err:
        raise _locate(err, file, index, "distance") from None


def _parse_course(
    course: Course,
    index: int,
    previous_azimuth: float | None,
    doc: Document,
    ctx_items: tuple[tuple[str, Any], ...],
    file: str | None,
) -> RecordedCourse:
    """Parse one course (cached on the course's keys and context: an editor re-parses a whole
    document on every keystroke, and only the edited course is new). ``ctx_items``: the
    items of the document's unit context (:func:`_unit_context`)."""
    try:
        turned = course.bearing is None and (course.call is None or _angle_call(course.call))
        fields = _parse_course_cached(
            course,
            index == 1,
            previous_azimuth if turned else None,
            doc.record.angles,
            doc.record.distance_unit,
            ctx_items,
        )
    except LodelineError as err:
        if (err.field or "").startswith("record."):
            raise err.located(file=file) from None
        raise err.located(file=file, course=index) from None
    return RecordedCourse(index, *fields)


@lru_cache(maxsize=50_000)
def _parse_course_cached(
    course: Course,
    first: bool,
    previous_azimuth: float | None,
    angles: str | None,
    distance_unit: str | None,
    ctx_items: tuple[tuple[str, Any], ...],
) -> tuple[Any, ...]:
    """The fields of the course's :class:`RecordedCourse` after ``index``, in order (the
    course number is not part of the key: inserting a course keeps the others cached)."""
    ctx = dict(ctx_items)
    where: dict[str, Any] = {}
    call_note: str | None = None
    angle_deg: float | None = None
    angle_text: str | float | None = None
    angle_field = "angle"
    angle_call = _angle_call(course.call) if course.call is not None else None
    if angle_call is not None:
        # "angle 98 16, 1547 varas to a mesquite": the angle, a comma, the distance [note]
        angle_text, rest = angle_call
        angle_field = "call"
        bearing = None
        if course.angle is not None:
            raise DocumentError(
                "the call turns an angle already: give the angle once", field="angle"
            )
        try:
            call = parse_call(rest, **ctx)
        except LodelineError as err:
            raise _locate(err, None, None, "call") from None
        if call.bearing is not None:
            raise DocumentError(
                "an angle call gives an angle and a distance, not a bearing too", field="call"
            )
        if call.distance is None:
            raise DocumentError("gives no distance after the angle", field="call", **where)
        distance = call.distance
        call_note = call.note or None
    elif course.call is not None:
        try:
            call = parse_call(_without_events(course.call, ctx), **ctx)
        except LodelineError as err:
            raise _locate(err, None, None, "call") from None
        if call.bearing is None:
            raise DocumentError("gives no bearing", field="call", **where)
        if call.distance is None:
            raise DocumentError("gives no distance", field="call", **where)
        bearing, distance = call.bearing, call.distance
        call_note = call.note or None
        angle_text = course.angle  # with a bearing: the angle at the station, for the closure
    else:
        bearing = None
        if course.bearing is not None:
            try:
                bearing = parse_bearing(course.bearing)
            except LodelineError as err:
                raise _locate(err, None, None, "bearing") from None
        angle_text = course.angle
        distance = _course_distance(course, ctx, None, None)
    if angle_text is not None:
        try:
            angle_deg, angle_precision = _parse_angle(angle_text)
        except LodelineError as err:
            raise _locate(err, None, None, angle_field) from None
        if angles is None:
            raise DocumentError(
                "courses give angles: say in record.angles whether they were turned to the "
                "right (clockwise) or to the left",
                field="record.angles",
            )
    if bearing is None and previous_azimuth is None:
        raise DocumentError(
            "the first course needs a bearing (angles are turned from it)"
            if first
            else "the angle cannot be turned: the previous course has no azimuth",
            field="bearing" if first and angle_field == "angle" else angle_field,
            **where,
        )
    if bearing is not None:
        azimuth, precision, bearing_text = bearing.azimuth_deg, bearing.precision_deg, bearing.text
    else:
        sign = 1.0 if angles == "right" else -1.0
        azimuth = float(normalize_azimuth(previous_azimuth + 180.0 + sign * angle_deg))
        precision, bearing_text = angle_precision, None
    if not (distance.metres > 0.0 and math.isfinite(distance.metres)):
        raise DocumentError(
            f"distance must be positive, not {distance.text!r}",
            field="call" if course.call is not None else "distance",
            **where,
        )
    back = back_precision = None
    if course.back is not None:
        try:
            back_bearing = parse_bearing(course.back)
            back, back_precision = back_bearing.azimuth_deg, back_bearing.precision_deg
        except LodelineError as err:
            raise _locate(err, None, None, "back") from None
    every_m = None
    if course.every is not None:
        every_text = course.every if isinstance(course.every, str) else _plain(course.every)
        try:
            every_m = parse_distance(every_text, **ctx).metres
        except LodelineError as err:
            raise _locate(err, None, None, "every") from None
        if not every_m > 0.0:
            raise DocumentError("must be a positive distance", field="every", **where)
    return (
        course_call_text(course, distance_unit),  # text
        float(azimuth),  # azimuth_deg
        float(precision),  # precision_deg
        bearing_text,
        angle_deg,
        float(distance.metres),  # length_m
        float(distance.value),  # length_value
        str(distance.unit),  # length_unit
        None if back is None else float(back),  # back_azimuth_deg
        every_m,
        course.note,  # note
        call_note,
        None if bearing is None else bearing.style,  # bearing_style
        back_precision,  # back_precision_deg
    )


#: The document whose courses were parsed last, its file and its courses: loading checks
#: every course and the conversion right after asks for the same ones (a document is frozen,
#: so the same object has the same courses). One tuple, replaced whole (threads read it whole).
_last_parsed: tuple[Any, str | None, tuple[RecordedCourse, ...]] | None = None


def parse_courses(doc: Document, *, file: str | None = None) -> tuple[RecordedCourse, ...]:
    """Parse every course of ``doc`` into recorded azimuths and lengths (metres).

    Raises the first :class:`DocumentError` (file, course, key) met, courses in order.
    Courses given by an angle take their azimuth from the previous course (unadjusted).
    """
    global _last_parsed
    last = _last_parsed
    if last is not None and last[0] is doc and last[1] == file:
        return last[2]
    result = _parse_courses(doc, file)
    _last_parsed = (doc, file, result)
    return result


def _parse_courses(doc: Document, file: str | None) -> tuple[RecordedCourse, ...]:
    ctx_items = tuple(_unit_context(doc).items())
    out: list[RecordedCourse] = []
    omitted: list[Any] = []
    previous: float | None = None
    for i, course in enumerate(doc.course, start=1):
        if has_unknown(course):  # "?" in the call: completed from the closure (geo.omitted)
            omitted.append(_read_omitted(course, i, ctx_items, file))
            previous = None
            continue
        parsed = _parse_course(course, i, previous, doc, ctx_items, file)
        out.append(parsed)
        previous = parsed.azimuth_deg
    if omitted:
        out = _with_omitted(doc, out, omitted, file)
    return tuple(out)


def _read_omitted(course: Course, i: int, ctx_items: tuple, file: str | None) -> Any:
    from .omitted import read_omitted

    try:
        return read_omitted(course, i, dict(ctx_items))
    except DocumentError as err:
        raise err.located(file=file) from None


def _with_omitted(
    doc: Document, known: list[RecordedCourse], omitted: list[Any], file: str | None
) -> list[RecordedCourse]:
    """The courses in order, those written with "?" completed from the closure."""
    from .omitted import solve_omitted

    solved = solve_omitted(
        known, omitted, closed=doc.closed, reference=doc.record.reference, file=file
    )
    return sorted([*known, *solved], key=lambda r: r.index)


_VARA_MISSING = (
    "varas occur: give record.vara_inches (the vara has regional values, e.g. 33 1/3 in "
    "Texas, 33 in California)"
)


def document_problems(doc: Document, *, file: str | None = None) -> list[DocumentError]:
    """Every semantic problem of ``doc`` (record keys first, then each course), without raising.

    The terminal application shows these beside the courses; :func:`check_document` raises the
    first one.
    """
    problems = _check_record(doc, file)
    try:
        ctx = _unit_context(doc)
    except LodelineError as err:
        problems.append(_locate(err, file, None, "record"))
        return problems
    ctx_items = tuple(ctx.items())
    previous: float | None = None
    if any(has_unknown(c) for c in doc.course):
        try:
            parse_courses(doc, file=file)
        except DocumentError as err:
            problems.append(err)
        return problems
    for i, course in enumerate(doc.course, start=1):
        try:
            parsed = _parse_course(course, i, previous, doc, ctx_items, file)
            previous = parsed.azimuth_deg
        except LodelineError as err:
            problems.append(
                err if isinstance(err, DocumentError) else _locate(err, file, i, "call")
            )
            previous = None
    from .along import along_problems

    problems.extend(along_problems(doc, file=file))
    return problems


def check_document(doc: Document, *, file: str | None = None) -> None:
    """Raise the first semantic problem of ``doc`` as a :class:`DocumentError`, if any."""
    problems = _check_record(doc, file)
    if problems:
        raise problems[0]
    parse_courses(doc, file=file)
    from .along import along_problems

    problems = along_problems(doc, file=file)
    if problems:
        raise problems[0]
