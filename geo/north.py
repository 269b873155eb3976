"""North references of a traverse document: magnetic (record date), true, grid, magnetic (target).

Conventions (DESIGN.md):

- azimuths are degrees clockwise from their north, in [0, 360);
- declination D is the angle from true north to magnetic north, east positive:
  ``true = magnetic + D``;
- grid convergence gamma is the angle from true north to grid north, clockwise positive:
  ``grid = true - gamma``;
- so ``magnetic_target = magnetic_record + D_record - D_target``.

Stations
    Stations are marched forward from the point of beginning **in the grid CRS**: each course
    runs from its starting station along its grid azimuth for its grid length, ``grid length =
    ground length x combined factor`` (scale factor x elevation factor) evaluated at the
    course's starting station; the station's latitude and longitude come from the inverse
    projection. The field (D at both dates) and the grid factors (gamma, k, combined factor)
    of a course are those of its starting station. Because the stations depend on D and gamma
    and those depend on the stations, the march is repeated (each pass one vectorised field
    evaluation of every station at both dates and one vectorised grid-factor evaluation) until
    no station moves by more than 1 mm. The first pass evaluates at the point of beginning
    and two probes 1 km grid east and north of it and takes the values as linear in grid
    position, which puts the stations of a figure of a few kilometres well within that
    millimetre, so one pass over every station usually confirms them (another follows when it
    does not). The closure, export, report and terminal application all take their stations
    and per-course figures from here.

Declinations
    The record date's D comes from ``record.declination`` when the document states it (one value
    for every course, as the original surveyor used it), else from the field model
    ``record.model`` at each station. The target date's D always comes from a model (the
    ``model`` argument, else ``target.model``, else auto). A record that is not magnetic gets a
    magnetic (record date) bearing only when a record date or a stated declination exists.

Displayed bearings
    The recorded reference is shown at the precision of the call; the three derived ones at the
    call's precision but never coarser than one minute of arc (D and gamma are known better than
    a coarse call, and a retracement needs the minutes).
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .document import Document, RecordedCourse, parse_courses
from .errors import DocumentError, LodelineError, ModelRangeError
from .frozen import quick_init
from .notes import Note, messages

__all__ = [
    "CourseConversion",
    "CoursePath",
    "DocumentConversion",
    "References",
    "Station",
    "convert_document",
]

#: The coarsest precision of a derived (converted) bearing: one minute of arc.
_DERIVED_PRECISION_DEG = 1.0 / 60.0


@quick_init
@dataclass(frozen=True, slots=True)
class Station:
    """A station of the traverse.

    ``index`` is 0 for the point of beginning and ``i`` for the end of course ``i``; ``lat``,
    ``lon`` are WGS84 degrees; ``easting``, ``northing`` are in the grid CRS's unit
    (see :attr:`DocumentConversion.grid_unit_m`).
    """

    index: int
    lat: float
    lon: float
    easting: float
    northing: float


@quick_init
@dataclass(frozen=True, slots=True)
class References:
    """One value per north reference (azimuth degrees, or bearing text).

    ``magnetic_record`` is ``None`` when the record is not magnetic and neither a record date
    nor a stated declination exists.
    """

    magnetic_record: Any
    true: Any
    grid: Any
    magnetic_target: Any

    def as_dict(self, suffix: str = "") -> dict[str, Any]:
        """``{"magnetic_record"+suffix: ..., "true"+suffix: ..., ...}``."""
        keys = _REFERENCE_KEYS.get(suffix) or _reference_keys(suffix)
        return {
            keys[0]: self.magnetic_record,
            keys[1]: self.true,
            keys[2]: self.grid,
            keys[3]: self.magnetic_target,
        }


#: The keys of References.as_dict by suffix (a long document asks for them per course).
_REFERENCE_KEYS: dict[str, tuple[str, ...]] = {}


def _reference_keys(suffix: str) -> tuple[str, ...]:
    keys = tuple(
        f"{name}{suffix}" for name in ("magnetic_record", "true", "grid", "magnetic_target")
    )
    _REFERENCE_KEYS[suffix] = keys
    return keys


@dataclass(frozen=True)
class CoursePath:
    """The line one course stands for, as marched on the grid (see the module docstring).

    ``along_m``: ground distances from the course's start, metres, 0 first and the course's
    length last; ``easting``, ``northing``: the marched grid position there, in the CRS's unit.
    Between nodes the line is taken as straight on the grid (the nodes are close enough that
    halving their spacing moves the course's end by less than a millimetre).
    """

    along_m: tuple[float, ...]
    easting: tuple[float, ...]
    northing: tuple[float, ...]

    def at(self, along_m: Any) -> tuple[np.ndarray, np.ndarray]:
        """Grid ``(easting, northing)`` (CRS unit) at ground distances ``along_m`` (metres)
        from the course's start, interpolated between the nodes."""
        x = np.asarray(along_m, dtype=float)
        return np.interp(x, self.along_m, self.easting), np.interp(x, self.along_m, self.northing)


@quick_init
@dataclass(frozen=True, slots=True)
class CourseConversion:
    """One course in every north reference, with what was used to convert it.

    Attributes
    ----------
    index:
        1-based course number.
    call:
        The call as written.
    recorded:
        The parsed course (recorded azimuth, length, back bearing, ``every``...).
    length_m, length_value, length_unit:
        Recorded ground (horizontal) length in metres, and as written in its unit.
    grid_length_m:
        Length on the grid in metres: ``length_m * combined_factor``.
    start, end:
        The course's starting and ending stations.
    declination_record_deg:
        D at the record date at the starting station (stated or model), or ``None``.
    declination_target_deg:
        D at the target date at the starting station (model).
    declination_record_sigma_deg, declination_target_sigma_deg:
        The model's published 1-sigma D uncertainty at each date, ``None`` where none is
        published (or D was stated).
    convergence_deg, scale_factor, elevation_factor, combined_factor:
        Grid factors at the starting station (see geo.grid).
    azimuth:
        :class:`References` of azimuths in degrees.
    bearing:
        :class:`References` of quadrant bearing texts (see the module docstring for precision).
    found:
        The measured position of the course's end, as a :class:`Station` (grid and WGS84), or
        ``None``.
    warnings:
        Compass-reliability warnings of the field model at the starting station.
    path_nodes:
        The marched nodes of a course of more than one step (see :attr:`path`).
    declination_record_rate_deg_per_year, declination_target_rate_deg_per_year:
        Yearly change of D at each date at the starting station (degrees a year, east
        positive), ``None`` where D is stated or unknown.
    steps:
        Steps the course was marched in (see :mod:`geo.march`).
    azimuth_end:
        :class:`References` of azimuths with D and gamma at the course's end, for a course of
        more than one step (``None`` for one step).
    bearing_end:
        Bearing texts at the course's end when its magnetic (target) bearing there differs
        from the one at its start by more than the precision shown, else ``None``.
    """

    index: int
    call: str
    recorded: RecordedCourse
    length_m: float
    length_value: float
    length_unit: str
    grid_length_m: float
    start: Station
    end: Station
    declination_record_deg: float | None
    declination_target_deg: float
    declination_record_sigma_deg: float | None
    declination_target_sigma_deg: float | None
    convergence_deg: float
    scale_factor: float
    elevation_factor: float
    combined_factor: float
    azimuth: References
    bearing: References
    found: Station | None
    warnings: tuple[str, ...]
    path_nodes: CoursePath | None = None
    declination_record_rate_deg_per_year: float | None = None
    declination_target_rate_deg_per_year: float | None = None
    steps: int = 1
    azimuth_end: References | None = None
    bearing_end: References | None = None

    @property
    def mean_combined_factor(self) -> float:
        """Grid length over ground length: the combined factor along the course."""
        return self.grid_length_m / self.length_m if self.length_m else self.combined_factor

    @property
    def path(self) -> CoursePath:
        """The course's marched line on the grid (:class:`CoursePath`): its nodes from start
        to end (a straight grid line from start to end when it was marched in one step)."""
        if self.path_nodes is not None:
            return self.path_nodes
        return CoursePath(
            (0.0, self.length_m),
            (self.start.easting, self.end.easting),
            (self.start.northing, self.end.northing),
        )

    def path_at(self, along_m: Any) -> tuple[np.ndarray, np.ndarray]:
        """Grid ``(easting, northing)`` at ground distances ``along_m`` along the course."""
        return self.path.at(along_m)

    def as_dict(self) -> dict[str, Any]:
        """The course as the ``lodeline convert --json`` object (plain JSON values)."""
        return {
            "index": self.index,
            "call": self.call,
            "length_m": self.length_m,
            "start": {"lat": self.start.lat, "lon": self.start.lon},
            "declination_record_deg": self.declination_record_deg,
            "declination_target_deg": self.declination_target_deg,
            "convergence_deg": self.convergence_deg,
            "scale_factor": self.scale_factor,
            "combined_factor": self.combined_factor,
            "azimuth": self.azimuth.as_dict("_deg"),
            "bearing": self.bearing.as_dict(),
            "declination_sigma_deg": self.declination_target_sigma_deg,
            "declination_record_rate_deg_per_year": self.declination_record_rate_deg_per_year,
            "declination_target_rate_deg_per_year": self.declination_target_rate_deg_per_year,
            "grid_length_m": self.grid_length_m,
            "steps": self.steps,
            "bearing_end": None if self.bearing_end is None else self.bearing_end.as_dict(),
            "warnings": list(self.warnings),
        }


@dataclass(frozen=True)
class DocumentConversion:
    """A whole document converted (see the module docstring for the method).

    Attributes
    ----------
    document, file:
        The document converted and the file it came from (or ``None``).
    reference:
        The recorded reference: ``"magnetic"``, ``"true"`` or ``"grid"``.
    crs:
        The grid CRS used (``grid.crs`` or the UTM zone of the place).
    grid_unit_m:
        Metres per unit of the CRS's easting/northing.
    height_m:
        Ellipsoidal height of every station (the document's place height), metres.
    place_by_grid:
        True when the point of beginning was given by grid coordinates (a measured position).
    record_date, record_year:
        The record date (``None`` when given as a decimal year, or absent) and decimal year.
    target_date, target_year:
        The target date (``None`` when given as a decimal year) and its decimal year.
    declination_source:
        ``"stated"``, ``"model"`` or ``None`` (no record-date declination).
    stated_declination_deg:
        The stated declination (east positive) or ``None``.
    record_model, target_model:
        Resolved model names used at each date (``None`` when no model was used at the record
        date).
    courses:
        One :class:`CourseConversion` per course, in order.
    stations:
        The ``len(courses) + 1`` stations (index 0 = point of beginning).
    warnings:
        Document-level notes (a defaulted foot, a record-date declination a model could not
        give for a non-magnetic record...).
    """

    document: Document
    file: str | None
    reference: str
    crs: str
    grid_unit_m: float
    height_m: float
    place_by_grid: bool
    record_date: _dt.date | None
    record_year: float | None
    target_date: _dt.date | None
    target_year: float
    declination_source: str | None
    stated_declination_deg: float | None
    record_model: str | None
    target_model: str
    courses: tuple[CourseConversion, ...]
    stations: tuple[Station, ...]
    warnings: tuple[str, ...]
    marched_stations: tuple[Station, ...] = ()
    angles: Any = None
    angles_note: str | None = None
    notes: tuple[Note, ...] = ()
    stated_declination_sigma_deg: float | None = None

    @property
    def figure_stations(self) -> tuple[Station, ...]:
        """The stations of the marched figure: :attr:`stations`, or for a magnetic record with
        no declination known at its date the figure marched with the recorded bearings taken
        as true (its stations withheld from :attr:`stations`): the closure in magnetic north
        of the record date works from it."""
        return self.marched_stations or self.stations

    @property
    def record_model_query(self) -> str:
        """The model name to ask :func:`geo.magnetic.field_at` for at the record date to get
        the field this conversion used (a blend is asked for as ``auto``)."""
        return _query(self.record_model or self.document.record.model)

    @property
    def target_model_query(self) -> str:
        """The same for the target date."""
        return _query(self.target_model)

    @property
    def model_label(self) -> str:
        """The model(s) used, as one text: ``"IGRF14"`` or ``"gufm1 (record), IGRF14 (target)"``."""
        if self.record_model is None or self.record_model == self.target_model:
            return self.target_model
        return f"{self.record_model} (record), {self.target_model} (target)"

    def as_dict(self) -> dict[str, Any]:
        """The ``lodeline convert --json`` object (plain JSON values)."""

        def when(day: _dt.date | None, year: float | None) -> Any:
            return day.isoformat() if day is not None else year

        return {
            "record_date": when(self.record_date, self.record_year),
            "target_date": when(self.target_date, self.target_year),
            "model": self.model_label,
            "crs": self.crs,
            "grid_unit_m": self.grid_unit_m,
            "notes": [n.as_dict() for n in self.notes],
            "courses": [c.as_dict() for c in self.courses],
        }


# --------------------------------------------------------------------------------------------


def _query(name: str) -> str:
    """A model name ``field_at`` accepts: a blend label (``gufm1+igrf14 (0.40/0.60)``) came
    from ``auto``."""
    from .models import blend_parts

    return "auto" if blend_parts(name) is not None else name


def _first_model(model: Any) -> str:
    if isinstance(model, str):
        return model
    names = list(dict.fromkeys(np.asarray(model, dtype=object).ravel().tolist()))
    return ", ".join(str(n) for n in names)


def _cardinals_as_recorded(courses: Sequence[Any], texts: list[str] | None) -> None:
    """Write the recorded column's cardinal calls in their recorded form (``due N``, ``NE``),
    in place; the derived columns keep the quadrant form."""
    if texts is None:
        return
    from .bearings import recorded_bearing

    for i, rc in enumerate(courses):
        if rc.bearing_style == "cardinal":
            texts[i] = recorded_bearing(rc.azimuth_deg, rc.precision_deg, "cardinal")


def _range_error(
    err: LodelineError, *, which: str, when: str, file: str | None, n_courses: int
) -> ModelRangeError:
    if which == "record":
        remedy = (
            "a stated declination goes in record.declination; 'lodeline close --north "
            "magnetic' and 'lodeline fit' need none"
        )
        field = "record.model" if "unknown" in err.message.lower() else "record.date"
    else:
        unknown = "unknown" in err.message.lower()
        remedy = (
            "name one that 'lodeline models' lists, or auto"
            if unknown
            else "choose a target date inside the model's interval or another model (--model)"
        )
        field = "target.model" if unknown else "target.date"
    message = f"{which} date {when}: {err.message.rstrip('.')}; {remedy}"
    return ModelRangeError(message, file=file, field=field)  # a setting, not a course


def _stated_declination(doc: Document, file: str | None) -> float | None:
    record = doc.record
    if not record.stated_declination:
        return None
    if isinstance(record.declination, float):
        return record.declination
    from .bearings import parse_declination

    try:
        value = parse_declination(record.declination)
    except LodelineError as err:
        raise DocumentError(err.message, file=file, field="record.declination") from None
    return float(value)


def _date(value: Any, *, file: str | None, field: str) -> tuple[_dt.date | None, float]:
    from .dates import parse_date

    try:
        return parse_date(value)
    except LodelineError as err:
        raise DocumentError(err.message, file=file, field=field) from None


def convert_document(
    doc: Document,
    *,
    file: str | None = None,
    target_date: _dt.date | str | float | None = None,
    model: str | None = None,
    record_model: str | None = None,
    allow_unknown_declination: bool = False,
) -> DocumentConversion:
    """Convert every course of ``doc`` to all four north references.

    Parameters
    ----------
    doc:
        A document (schema-valid; its calls are parsed here and bad ones raise).
    file:
        The file name used in error messages.
    target_date:
        The date to convert to (date, ISO text or decimal year); default ``target.date`` of the
        document, else today (:func:`datetime.date.today`).
    model:
        The field model for the target date (a name or ``"auto"``); default ``target.model``
        when the document names one, else the record's model when it covers the target date,
        else ``"auto"``.
    record_model:
        The field model for the record date; default ``record.model``.
    allow_unknown_declination:
        For a magnetic record with no stated declination and no model covering the record
        date: instead of raising, return a conversion that keeps only what does not depend
        on D at the record date (the recorded bearings, lengths, the point of beginning,
        γ and the factors there, found positions). Its true, grid and target-date azimuths
        and bearings are ``None``, ``declination_source`` is ``None``, and the stations after
        the point of beginning are NaN. This is what the closure in magnetic north and the
        record-to-found fit (which finds that declination) work from.

    Raises
    ------
    DocumentError
        A course, key or date of the document is wrong (names file, course and key).
    ModelRangeError
        No model covers a date (names the course, the date and the remedies).
    GridError
        The CRS cannot be built or a station lies far outside it.
    """
    # The stages, in the order they happen: parse, first estimate and march (geo.march),
    # per-course figures, notes.
    setup = _parse_stage(doc, file, target_date, model, record_model, allow_unknown_declination)
    evaluator = _Evaluator(setup)
    marched = _march_stage(setup, evaluator)
    courses, stations = _course_figures(setup, marched, evaluator)
    notes = _document_notes(setup, evaluator)
    record_field = evaluator.record_field
    unknown = evaluator.unknown_d1
    return DocumentConversion(
        document=doc,
        file=file,
        reference=setup.reference,
        crs=setup.crs,
        grid_unit_m=setup.unit_m,
        height_m=setup.h,
        place_by_grid=doc.place.by_grid,
        record_date=setup.record_date,
        record_year=setup.record_year,
        target_date=setup.tday,
        target_year=float(setup.tyear),
        declination_source="stated"
        if setup.stated is not None
        else ("model" if evaluator.has_d1 else None),
        stated_declination_deg=setup.stated,
        record_model=None
        if record_field is None or setup.stated is not None
        else evaluator.record_model_name,
        target_model=evaluator.target_model_name,
        courses=courses,
        stations=_withheld(stations) if unknown else stations,
        warnings=messages(notes),
        marched_stations=stations if unknown else (),
        angles=setup.angles,
        angles_note=setup.angles_note,
        notes=notes,
        stated_declination_sigma_deg=setup.stated_sigma,
    )


# -- parse ---------------------------------------------------------------------------------


@dataclass
class _Setup:
    """Everything read from the document before the march (the parse stage)."""

    doc: Document
    file: str | None
    courses: tuple[RecordedCourse, ...]
    record_date: _dt.date | None
    record_year: float | None
    tday: _dt.date | None
    tyear: float
    target_model: str
    record_model: str
    stated: float | None
    stated_sigma: float | None
    reference: str
    allow_unknown: bool
    crs: str
    unit_m: float
    e0: float
    n0: float
    lat0: float
    lon0: float
    h: float
    azimuth: np.ndarray
    length: np.ndarray
    angles: Any
    angles_note: str | None
    notes: list[Note]

    @property
    def magnetic(self) -> bool:
        return self.reference == "magnetic"

    def where(self) -> str:
        """The key a place or grid error is reported on."""
        return "grid.crs" if self.doc.grid else "place"


def _parse_stage(
    doc: Document,
    file: str | None,
    target_date: Any,
    model: str | None,
    record_model: str | None,
    allow_unknown: bool,
) -> _Setup:
    """Calls, dates, models, stated declination, place and CRS, balanced angles, and the
    notes of what was assumed (height, foot)."""
    from .survey import angular_closure

    courses = parse_courses(doc, file=file)
    record = doc.record
    record_date: _dt.date | None = None
    record_year: float | None = None
    if record.date is not None:
        record_date, record_year = _date(record.date, file=file, field="record.date")
    target_field = "target.date"
    if target_date is None and doc.target is not None and doc.target.date is not None:
        target_date = doc.target.date
    elif target_date is not None:
        target_field = "--target-date"
    if target_date is None:
        target_date = _dt.date.today()
    tday, tyear = _date(target_date, file=file, field=target_field)
    record_model_name = record_model or record.model
    no_date = record.reference == "magnetic" and record_year is None
    if no_date and _stated_declination(doc, file) is None:
        raise DocumentError(
            "a magnetic record needs its date (record.date) or a stated declination "
            "(record.declination) to be turned to true north",
            file=file,
            field="record.date",
        )
    notes = _assumption_notes(doc, courses)
    crs, unit_m, e0, n0, lat0, lon0 = _place(doc, file)
    angles, angles_note = angular_closure(courses, doc, file)
    azimuth = angles.azimuth_deg if angles is not None else [c.azimuth_deg for c in courses]
    return _Setup(
        doc=doc,
        file=file,
        courses=courses,
        record_date=record_date,
        record_year=record_year,
        tday=tday,
        tyear=float(tyear),
        target_model=_target_model(doc, model, record_model_name, float(tyear)),
        record_model=record_model_name,
        stated=_stated_declination(doc, file),
        stated_sigma=_stated_sigma(doc, file),
        reference=record.reference,
        allow_unknown=allow_unknown,
        crs=crs,
        unit_m=unit_m,
        e0=e0,
        n0=n0,
        lat0=lat0,
        lon0=lon0,
        h=float(doc.place.height_m),
        azimuth=np.array(azimuth, dtype=float),
        length=np.array([c.length_m for c in courses], dtype=float),
        angles=angles,
        angles_note=angles_note,
        notes=notes,
    )


def _assumption_notes(doc: Document, courses: tuple[RecordedCourse, ...]) -> list[Note]:
    """Notes of what the document leaves unsaid and the conversion assumes."""
    from . import units as _units

    notes: list[Note] = []
    if "height_m" not in doc.place.model_fields_set:
        notes.append(
            Note(
                "height_assumed",
                "place.height_m is not given: 0 m above the ellipsoid is assumed (the "
                "combined factor changes by about 16 ppm per 100 m of height; state it)",
            )
        )
    record = doc.record
    if record.foot is None:
        try:
            choice = _units.choose_foot(None, record.date)
        except LodelineError:
            choice = None
        if choice is not None and any(_units.is_foot_based(c.length_unit) for c in courses):
            notes.append(Note("foot_assumed", choice.note))
    return notes


def _target_model(doc: Document, model: str | None, record_model: str, tyear: float) -> str:
    """The target date's model: ``model``, else the document's ``target.model`` when it names
    one, else the record's model when it covers the target date, else ``auto``."""
    if model:
        return model
    if doc.target is not None and "model" in doc.target.model_fields_set:
        return doc.target.model
    if record_model.strip().lower() != "auto":
        from .models import resolve

        with contextlib.suppress(LodelineError):
            _, ok = resolve(record_model, np.array([tyear]))
            if bool(ok[0]):
                return record_model
    return "auto"


def _stated_sigma(doc: Document, file: str | None) -> float | None:
    """``record.declination_sigma`` in degrees (an angle text such as ``0°15'``), or None."""
    value = getattr(doc.record, "declination_sigma", None)
    if value is None:
        return None
    from .bearings import parse_declination

    try:
        sigma = float(parse_declination(value))
    except LodelineError as err:
        raise DocumentError(err.message, file=file, field="record.declination_sigma") from None
    if not sigma > 0.0:
        raise DocumentError(
            f'{value!r}: a declination uncertainty is an angle above zero (e.g. "0°15\'")',
            file=file,
            field="record.declination_sigma",
        )
    return sigma


def _place(doc: Document, file: str | None) -> tuple[str, float, float, float, float, float]:
    """``(crs, metres per grid unit, e0, n0, lat0, lon0)`` of the point of beginning."""
    from . import grid as _grid

    place = doc.place
    try:
        if place.by_grid:
            crs = str(doc.grid.crs)  # the schema requires grid.crs here
            lat0, lon0 = _grid.to_geographic(crs, easting=place.easting, northing=place.northing)
        else:
            lat0, lon0 = float(place.lat), float(place.lon)
            crs = doc.grid.crs if doc.grid is not None and doc.grid.crs else None
            crs = crs or _grid.utm_crs_for(lat=lat0, lon=lon0)
        unit_m = float(_grid.grid_unit_m(crs))
        e0, n0 = _grid.to_grid(crs, lat=lat0, lon=lon0)
    except LodelineError as err:
        raise err.located(file=file, field="grid.crs" if doc.grid else "place") from None
    return str(crs), unit_m, float(e0), float(n0), float(lat0), float(lon0)


# -- field and grid factors at points --------------------------------------------------------


@dataclass(frozen=True)
class _NodeValues:
    """Values at points: gamma (deg), combined factor, D at the record date (deg, or None);
    with the full evaluation also the scale and elevation factors and both field views."""

    gamma: np.ndarray
    combined: np.ndarray
    d1: np.ndarray | None
    scale: np.ndarray | None = None
    elevation: np.ndarray | None = None
    record: _Split | None = None
    target: _Split | None = None

    def linear(self, de: np.ndarray | None, dn: np.ndarray | None, m: int) -> _NodeValues:
        """For ``m`` nodes: the values at the point of beginning (``de`` None), or linear
        in grid position from the point of beginning and the two probes (``de``, ``dn`` in
        probe distances; see :func:`_linear`)."""
        parts = (self.gamma, self.combined, self.d1)
        if de is None or self.gamma.size < 3:
            return _NodeValues(*(None if v is None else np.full(m, v[0]) for v in parts))
        return _NodeValues(*(None if v is None else _linear(v, de, dn) for v in parts))


class _Evaluator:
    """Evaluates the field at both dates and the grid factors at points, remembering whether
    D at the record date is known (a magnetic record with no model covering its date and
    none stated is marched provisionally with the recorded bearings as true)."""

    def __init__(self, setup: _Setup) -> None:
        self.s = setup
        self.record_usable = setup.stated is None and setup.record_year is not None
        self.unknown_d1 = False
        self.record_field: _Split | None = None
        self.record_model_name: str | None = None
        self.target_model_name = setup.target_model
        self.unknown_note: Note | None = None

    @property
    def has_d1(self) -> bool:
        return self.s.stated is not None or self.record_field is not None

    def _field(self, which: str, name: str, year: Any, lat: np.ndarray, lon: np.ndarray) -> Any:
        from .magnetic import field_at

        s = self.s
        when = (s.record_date if which == "record" else s.tday) or year
        try:
            return field_at(lat=lat, lon=lon, year=year, height_m=s.h, model=name)
        except ModelRangeError as err:
            raise _range_error(
                err, which=which, when=str(when), file=s.file, n_courses=len(s.courses)
            ) from None
        except LodelineError as err:
            raise err.located(file=s.file) from None

    def _both(self, lat: np.ndarray, lon: np.ndarray) -> tuple[_Split | None, _Split | None]:
        """Both dates in one evaluation when they share a model (None, None if a date is
        not covered: the separate evaluations then say which)."""
        from .magnetic import field_at

        s, m = self.s, lat.size
        if not (self.record_usable and s.record_model == s.target_model):
            return None, None
        try:
            both = field_at(
                lat=np.concatenate([lat, lat]),
                lon=np.concatenate([lon, lon]),
                year=np.concatenate([np.full(m, s.record_year), np.full(m, s.tyear)]),
                height_m=s.h,
                model=s.record_model,
            )
        except ModelRangeError:
            return None, None
        return _Split(both, slice(0, m)), _Split(both, slice(m, 2 * m))

    def _record(self, lat: np.ndarray, lon: np.ndarray) -> _Split | None:
        s = self.s
        try:
            return _Split(self._field("record", s.record_model, s.record_year, lat, lon), None)
        except ModelRangeError:
            if s.magnetic and not s.allow_unknown:
                raise
        self.record_usable = False
        self.unknown_d1 = s.magnetic
        self.unknown_note = Note(
            "record_declination_unknown",
            "no field model covers the record date and no declination is stated: true, grid "
            "and target-date bearings are not given (fit the declination from found "
            "monuments, state it, or install a model)"
            if s.magnetic
            else "no field model covers the record date: the magnetic bearings at the record "
            "date are not given",
        )
        return None

    def __call__(self, lat: np.ndarray, lon: np.ndarray) -> _NodeValues:
        from . import grid as _grid

        s, m = self.s, lat.size
        try:
            factors = _grid.grid_factors(s.crs, lat=lat, lon=lon, height_m=s.h)
        except LodelineError as err:
            raise err.located(file=s.file, field=s.where()) from None
        record, target = self._both(lat, lon)
        if target is None:
            record = self._record(lat, lon) if self.record_usable else None
            target = _Split(self._field("target", s.target_model, s.tyear, lat, lon), None)
        self.record_field = record
        if record is not None:
            self.record_model_name = record.model_name
        self.target_model_name = target.model_name
        if s.stated is not None:
            d1: np.ndarray | None = np.full(m, s.stated)
        elif record is not None:
            d1 = np.broadcast_to(record.declination_deg, (m,))
        else:
            d1 = None

        def full(v: Any) -> np.ndarray:
            return np.broadcast_to(np.asarray(v, dtype=float), (m,))

        return _NodeValues(
            full(factors.convergence_deg),
            full(factors.combined_factor),
            d1,
            full(factors.scale_factor),
            full(factors.elevation_factor),
            record,
            target,
        )


# -- the march ----------------------------------------------------------------------------


def _march_stage(setup: _Setup, evaluate: _Evaluator) -> Any:
    """The stations and the nodes between them (:func:`geo.march.march`)."""
    from . import grid as _grid
    from .march import march

    s = setup

    def to_geographic(e: np.ndarray, n: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        try:
            lat, lon = _grid.to_geographic(s.crs, easting=e, northing=n)
        except LodelineError as err:
            raise err.located(file=s.file, field=s.where()) from None
        lat = np.atleast_1d(np.asarray(lat, dtype=float)).copy()
        lon = np.atleast_1d(np.asarray(lon, dtype=float)).copy()
        lat[0], lon[0] = s.lat0, s.lon0
        return lat, lon

    return march(
        reference=s.reference,
        azimuth_deg=s.azimuth,
        length_m=s.length,
        e0=s.e0,
        n0=s.n0,
        lat0=s.lat0,
        lon0=s.lon0,
        unit_m=s.unit_m,
        evaluate=evaluate,
        to_geographic=to_geographic,
        probes=_probes(s) if s.courses else None,
    )


def _probes(s: _Setup) -> tuple[np.ndarray, np.ndarray] | None:
    """Lat/lon of the point of beginning and of two probes 1 km grid east and north of it
    (None when they cannot be projected: the usual passes then start from the point of
    beginning alone)."""
    from . import grid as _grid
    from .march import PROBE_M

    step = PROBE_M / s.unit_m
    try:
        lat, lon = _grid.to_geographic(
            s.crs,
            easting=np.array([s.e0, s.e0 + step, s.e0]),
            northing=np.array([s.n0, s.n0, s.n0 + step]),
        )
    except LodelineError:
        return None
    lat, lon = np.asarray(lat, dtype=float).copy(), np.asarray(lon, dtype=float).copy()
    lat[0], lon[0] = s.lat0, s.lon0
    if not (np.all(np.isfinite(lat)) and np.all(np.isfinite(lon))):
        return None
    return lat, lon


# -- per-course figures -----------------------------------------------------------------------


def _withheld(stations: tuple[Station, ...]) -> tuple[Station, ...]:
    """The stations with every one after the point of beginning NaN (D unknown)."""
    nan = math.nan
    return stations[:1] + tuple(Station(s.index, nan, nan, nan, nan) for s in stations[1:])


@dataclass(frozen=True)
class _Directions:
    """Azimuths (degrees) of every course in each north at a set of nodes."""

    mag1: np.ndarray | None
    true: np.ndarray | None
    grid: np.ndarray | None
    mag2: np.ndarray | None


def _directions(s: _Setup, v: _NodeValues, at: np.ndarray, unknown: bool) -> _Directions:
    """The course azimuths with D, gamma at the nodes ``at`` (one node per course)."""
    from .angles import normalize_azimuth

    def norm(a: np.ndarray) -> np.ndarray:
        return np.asarray(normalize_azimuth(a), dtype=float)

    rec = s.azimuth
    if unknown:
        return _Directions(norm(rec), None, None, None)
    gamma = v.gamma[at]
    d1 = None if v.d1 is None else v.d1[at]
    if s.reference == "magnetic":
        true = rec + d1
    elif s.reference == "true":
        true = rec
    else:
        true = rec + gamma
    d2 = np.asarray(v.target.declination_deg, dtype=float)[at]
    return _Directions(
        None if d1 is None else norm(true - d1), norm(true), norm(true - gamma), norm(true - d2)
    )


def _texts(s: _Setup, d: _Directions) -> _Directions:
    """Bearing texts: the recorded reference at the call's precision, the others at the
    call's but never coarser than a minute."""
    from .bearings import format_bearings

    own = [rc.precision_deg for rc in s.courses]
    derived = [min(p, _DERIVED_PRECISION_DEG) for p in own]

    def text(a: np.ndarray | None, recorded: bool) -> list[str] | None:
        return None if a is None else format_bearings(a, precision=own if recorded else derived)

    out = _Directions(
        text(d.mag1, s.magnetic),
        text(d.true, s.reference == "true"),
        text(d.grid, s.reference == "grid"),
        text(d.mag2, False),
    )
    recorded = {"magnetic": out.mag1, "true": out.true, "grid": out.grid}[s.reference]
    _cardinals_as_recorded(s.courses, recorded)
    return out


def _column(values: Any, at: np.ndarray) -> list[Any]:
    """``values[at]`` as Python floats (None where not finite); ``[None]*`` when absent."""
    if values is None:
        return [None] * at.size
    picked = np.asarray(values, dtype=float)[at]
    finite = np.isfinite(picked)
    if finite.all():
        return picked.tolist()
    if not finite.any():  # a column without values (no sigma published, say)
        return [None] * at.size
    out = picked.tolist()
    for k in np.flatnonzero(~finite).tolist():
        out[k] = None
    return out


def _lists(d: _Directions) -> tuple[list[Any], ...]:
    """Each north's values as a list (Python floats or texts; ``None`` entries if absent)."""

    def listed(a: Any) -> list[Any] | None:
        if a is None:
            return None
        return a.tolist() if isinstance(a, np.ndarray) else list(a)

    return tuple(listed(a) for a in (d.mag1, d.true, d.grid, d.mag2))


def _refs(lists: tuple[list[Any] | None, ...], n: int) -> list[References]:
    """One :class:`References` per course from the four columns (a missing column: None)."""
    nones = [None] * n
    return list(map(References, *(nones if a is None else a for a in lists)))


def _ref(lists: tuple[list[Any] | None, ...], i: int) -> References:
    a, b, c, d = lists
    return References(
        None if a is None else a[i],
        None if b is None else b[i],
        None if c is None else c[i],
        None if d is None else d[i],
    )


def _course_figures(
    s: _Setup, marched: Any, evaluator: _Evaluator
) -> tuple[tuple[CourseConversion, ...], tuple[Station, ...]]:
    """Stations, and per course: lengths, D, gamma, factors and rates at its start, its
    bearings in every north (at its start, and at its end when the target bearing differs
    there by more than the precision shown), its marched path and the warnings."""
    from .march import node_distance_m

    lay = marched.layout
    o = lay.offsets
    n = len(s.courses)
    columns_at = zip(*(a[o].tolist() for a in (marched.lat, marched.lon, marched.east,
                                                marched.north)), strict=True)  # fmt: skip
    stations = tuple(Station(i, la, lo, e, no) for i, (la, lo, e, no) in enumerate(columns_at))
    v = marched.values
    unknown = evaluator.unknown_d1
    start, end = o[:-1], o[1:]
    az, az_end = _directions(s, v, start, unknown), _directions(s, v, end, unknown)
    text = _texts(s, az)
    ends = _ends(s, az, az_end)
    az_r, text_r = _refs(_lists(az), n), _refs(_lists(text), n)
    steps_l = lay.steps.tolist()
    az_end_l = _lists(az_end)
    warnings = _warnings_at(rec_of(marched), marched.values.target, start)
    grid_len = np.add.reduceat(marched.grid_step_m, start) if n else np.zeros(0)
    along = node_distance_m(lay, s.length) if any(k > 1 for k in lay.steps.tolist()) else None
    rec, tgt = v.record, v.target
    columns = {
        "d1": _column(v.d1, start),
        "d2": _column(tgt.declination_deg, start),
        "s1": _column(None if rec is None or s.stated is not None else
                      rec.declination_sigma_deg, start),
        "s2": _column(tgt.declination_sigma_deg, start),
        "r1": _column(None if rec is None or s.stated is not None else
                      rec.declination_rate_deg_per_year, start),
        "r2": _column(tgt.declination_rate_deg_per_year, start),
        "gamma": _column(v.gamma, start),
        "scale": _column(v.scale, start),
        "elev": _column(v.elevation, start),
        "k": _column(v.combined, start),
    }  # fmt: skip
    found = _found_stations(s.doc, s.courses, s.crs, s.file)
    cs = s.courses
    paths: list[CoursePath | None] = [None] * n
    refs_end: list[References | None] = [None] * n
    texts_end: list[References | None] = [None] * n
    for i in [i for i, k in enumerate(steps_l) if k > 1] + list(ends):
        if steps_l[i] > 1 and s.reference != "grid":
            nodes = slice(o[i], o[i + 1] + 1)
            paths[i] = CoursePath(
                tuple(along[nodes][:-1].tolist()) + (cs[i].length_m,),
                tuple(marched.east[nodes].tolist()),
                tuple(marched.north[nodes].tolist()),
            )
        refs_end[i] = _ref(az_end_l, i) if steps_l[i] > 1 else None
        texts_end[i] = ends.get(i)
    rows = zip(
        [rc.index for rc in cs], [rc.text for rc in cs], cs, [rc.length_m for rc in cs],
        [rc.length_value for rc in cs], [rc.length_unit for rc in cs], grid_len.tolist(),
        stations[:-1], stations[1:], columns["d1"], columns["d2"], columns["s1"],
        columns["s2"], columns["gamma"], columns["scale"], columns["elev"], columns["k"],
        az_r, text_r, found, warnings, paths, columns["r1"], columns["r2"], steps_l,
        refs_end, texts_end, strict=True,
    )  # fmt: skip
    # the fields in CourseConversion's order, positionally (a long document has thousands)
    return tuple(CourseConversion(*row) for row in rows), stations


def rec_of(marched: Any) -> _Split | None:
    """The record-date field of the march's last evaluation (None without one)."""
    return marched.values.record


def _ends(s: _Setup, az: _Directions, az_end: _Directions) -> dict[int, References]:
    """Bearing texts at the end of the courses whose magnetic (target) azimuth there differs
    from the one at their start by more than the precision it is shown to."""
    from .angles import angle_difference

    if az.mag2 is None or az_end.mag2 is None or not s.courses:
        return {}
    shown = np.minimum([rc.precision_deg for rc in s.courses], _DERIVED_PRECISION_DEG)
    turned = np.abs(np.asarray(angle_difference(az_end.mag2, az.mag2), dtype=float))
    which = np.flatnonzero(turned > shown)
    if which.size == 0:
        return {}
    sub = _Directions(
        *(
            None if a is None else a[which]
            for a in (az_end.mag1, az_end.true, az_end.grid, az_end.mag2)
        )
    )
    picked = _Setup.__new__(_Setup)
    picked.__dict__.update(s.__dict__)
    picked.courses = tuple(s.courses[k] for k in which.tolist())
    texts = _lists(_texts(picked, sub))
    return {int(k): _ref(texts, j) for j, k in enumerate(which.tolist())}  # fmt: skip


def _warnings_at(rec: _Split | None, tgt: _Split, nodes: np.ndarray) -> list[tuple[str, ...]]:
    """Compass-reliability warnings of the field at each course's starting node."""
    out: list[tuple[str, ...]] = []
    quiet_rec = rec is None or rec.quiet()
    quiet_tgt = tgt.quiet()
    if quiet_rec and quiet_tgt:
        return [()] * nodes.size
    for node in nodes.tolist():
        listed = [] if quiet_rec else [f"record date: {w}" for w in rec.warnings_at(node)]
        listed += [] if quiet_tgt else [f"target date: {w}" for w in tgt.warnings_at(node)]
        out.append(tuple(dict.fromkeys(listed)))
    return out


# -- notes ------------------------------------------------------------------------------------


def _document_notes(s: _Setup, evaluator: _Evaluator) -> tuple[Note, ...]:
    """The document's notes: assumptions (parse), a record date no model covers, forecast
    fields, and record and target on different models (with the size of the difference)."""
    notes = list(s.notes)
    if evaluator.unknown_note is not None:
        notes.append(evaluator.unknown_note)
    used = []
    if evaluator.record_field is not None and s.stated is None:
        used.append(("record", evaluator.record_model_name, s.record_year))
    used.append(("target", evaluator.target_model_name, s.tyear))
    for which, name, year in used:
        note = _forecast_note(which, str(name), float(year))
        if note is not None:
            notes.append(note)
        if "+" in str(name):
            notes.append(
                Note(
                    "blended_models",
                    f"{which} date: the field is {name}: under auto the historical model "
                    "hands over to IGRF-14 across 1900-1910, their Gauss coefficients blended "
                    "linearly with these weights (historical/IGRF-14); a model named "
                    "explicitly is never blended",
                )
            )
    if (
        evaluator.record_field is not None
        and s.stated is None
        and evaluator.record_model_name != evaluator.target_model_name
    ):
        notes.append(
            _models_differ_note(s, evaluator.record_model_name, evaluator.target_model_name)
        )
    return tuple(dict.fromkeys(notes))


#: Last definitive epoch of the shipped IGRF (IGRF-14: DGRF to 2020.0; the 2025 main field is
#: provisional and its secular variation to 2030 a prediction; IAGA V-MOD's release notes).
_IGRF_DEFINITIVE_TO = 2020.0
_IGRF_MAIN_TO = 2025.0


def _forecast_note(which: str, name: str, year: float) -> Note | None:
    """A ``forecast_field`` note when the field at ``year`` is a model's forecast."""
    key = name.lower()
    if key.startswith("wmm"):
        return Note(
            "forecast_field",
            f"{which} date: {name} is a predictive model; its field after 2025.0 is a "
            "forecast of the change (WMM2025 technical report)",
        )
    if "igrf14" in key and year > _IGRF_MAIN_TO:
        return Note(
            "forecast_field",
            f"{which} date {year:.2f}: IGRF-14 after 2025.0 is its predicted secular "
            "variation, a forecast (its last definitive epoch is 2020.0)",
        )
    if "igrf14" in key and year > _IGRF_DEFINITIVE_TO:
        return Note(
            "forecast_field",
            f"{which} date {year:.2f}: IGRF-14 between 2020.0 and 2025.0 is provisional "
            "(its last definitive epoch is 2020.0)",
        )
    return None


def _models_differ_note(s: _Setup, record_name: Any, target_name: Any) -> Note:
    """Record and target dates on different models, with the difference of their D at the
    point of beginning at the date nearest the target date both cover."""
    from .magnetic import field_at
    from .models import load_model

    head = (
        f"the record date uses {record_name} and the target date {target_name}: the change "
        "of D between them includes the difference of the two models, not only the change "
        "of the field"
    )
    try:
        a, b = load_model(str(record_name)), load_model(str(target_name))
        lo, hi = max(a.start, b.start), min(a.end, b.end)
        if lo >= hi:
            return Note("models_differ", f"{head} (the two models share no date to compare)")
        year = min(max(s.tyear, lo), hi - 1e-6)
        d = [
            float(field_at(lat=s.lat0, lon=s.lon0, year=year, height_m=s.h,
                           model=str(m)).declination_deg)
            for m in (record_name, target_name)
        ]  # fmt: skip
    except LodelineError:
        return Note("models_differ", head)
    diff = d[1] - d[0]
    return Note(
        "models_differ",
        f"{head}: at the point of beginning in {year:.1f} they differ by {diff * 60:+.1f}′ "
        f"({diff:+.4f}°)",
    )


def _linear(at_probes: np.ndarray, de: np.ndarray, dn: np.ndarray) -> np.ndarray:
    """A value (an angle in degrees, or a factor) taken as linear in grid position from its
    values at the point of beginning and at the probes east and north of it; ``de``, ``dn``:
    offsets from the point of beginning in probe distances. Differences of angles are taken
    in (-180, 180] (:func:`geo.angles.angle_difference`; a factor differs by far less)."""
    from .angles import angle_difference

    v0, ve, vn = (float(x) for x in at_probes[:3])
    return v0 + angle_difference(ve, v0) * de + angle_difference(vn, v0) * dn


class _Split:
    """A view on part of a FieldVector (the record or target half of one evaluation)."""

    def __init__(self, field: Any, part: slice | None) -> None:
        self._field = field
        self._part = part if part is not None else slice(None)

    def _take(self, values: Any) -> np.ndarray:
        return np.atleast_1d(np.asarray(values, dtype=float))[self._part]

    @property
    def declination_deg(self) -> np.ndarray:
        return self._take(self._field.declination_deg)

    @property
    def declination_sigma_deg(self) -> np.ndarray:
        return self._take(self._field.declination_sigma_deg)

    @property
    def declination_rate_deg_per_year(self) -> np.ndarray:
        return self._take(self._field.declination_rate_deg_per_year)

    @property
    def model_name(self) -> str:
        model = self._field.model
        if isinstance(model, str):
            return model
        return _first_model(np.asarray(model, dtype=object).ravel()[self._part])

    def warnings_at(self, i: int) -> tuple[str, ...]:
        warnings = self._field.warnings
        start = self._part.start or 0
        try:
            item = warnings[start + i]
        except (IndexError, TypeError, KeyError):
            return ()
        if isinstance(item, str):
            return (item,)
        return tuple(str(w) for w in item or ())

    def quiet(self) -> bool:
        """Whether no point of this view has a warning (the usual case)."""
        warnings = self._field.warnings
        if not isinstance(warnings, tuple):
            return False
        part = warnings[self._part]
        return part.count(()) == len(part)

    def warnings_list(self, count: int) -> list[tuple[str, ...]]:
        """``[warnings_at(i) for i in range(count)]``, without a call per point when the
        field gives no warnings (the usual case)."""
        warnings = self._field.warnings
        start = self._part.start or 0
        if (
            isinstance(warnings, tuple)
            and len(warnings) >= start + count
            and warnings[start : start + count].count(()) == count
        ):
            return [()] * count
        return [self.warnings_at(i) for i in range(count)]


def _found_stations(
    doc: Document, courses: tuple[RecordedCourse, ...], crs: str, file: str | None
) -> list[Station | None]:
    """Measured end positions of the courses as Stations (grid CRS units and WGS84)."""
    from . import grid as _grid

    out: list[Station | None] = []
    for rc, course in zip(courses, doc.course, strict=True):
        f = course.found
        if f is None:
            out.append(None)
            continue
        try:
            if f.easting is not None:
                flat, flon = _grid.to_geographic(crs, easting=f.easting, northing=f.northing)
                fe, fn = f.easting, f.northing
            else:
                fe, fn = _grid.to_grid(crs, lat=f.lat, lon=f.lon)
                flat, flon = f.lat, f.lon
        except LodelineError as err:
            raise DocumentError(err.message, file=file, course=rc.index, field="found") from None
        out.append(Station(rc.index, float(flat), float(flon), float(fe), float(fn)))
    return out
