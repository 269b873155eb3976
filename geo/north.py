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

from geo.document import Document, RecordedCourse, parse_courses
from geo.errors import DocumentError, LodelineError, ModelRangeError

__all__ = [
    "CourseConversion",
    "DocumentConversion",
    "References",
    "Station",
    "convert_document",
]

#: Stop re-marching when no station moves by more than this (metres).
_CONVERGED_M = 1e-3
_MAX_PASSES = 8
#: Distance (metres) of the probes for the first estimate of the stations (see convert_document).
_PROBE_M = 1000.0
#: The coarsest precision of a derived (converted) bearing: one minute of arc.
_DERIVED_PRECISION_DEG = 1.0 / 60.0


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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
        return {
            f"magnetic_record{suffix}": self.magnetic_record,
            f"true{suffix}": self.true,
            f"grid{suffix}": self.grid,
            f"magnetic_target{suffix}": self.magnetic_target,
        }


@dataclass(frozen=True)
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
            "courses": [c.as_dict() for c in self.courses],
        }


# --------------------------------------------------------------------------------------------


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
    from geo.bearings import recorded_bearing

    for i, rc in enumerate(courses):
        if rc.bearing_style == "cardinal":
            texts[i] = recorded_bearing(rc.azimuth_deg, rc.precision_deg, "cardinal")


def _finite_or_none(v: float) -> float | None:
    return v if math.isfinite(v) else None


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
    return ModelRangeError(message, file=file, course=1 if n_courses else None, field=field)


def _stated_declination(doc: Document, file: str | None) -> float | None:
    record = doc.record
    if not record.stated_declination:
        return None
    if isinstance(record.declination, float):
        return record.declination
    from geo.bearings import parse_declination

    try:
        value = parse_declination(record.declination)
    except LodelineError as err:
        raise DocumentError(err.message, file=file, field="record.declination") from None
    return float(value)


def _date(value: Any, *, file: str | None, field: str) -> tuple[_dt.date | None, float]:
    from geo.dates import parse_date

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
        The field model for the target date (a name or ``"auto"``); default ``target.model``,
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
    from geo import grid as _grid
    from geo import units as _units
    from geo.angles import normalize_azimuth
    from geo.bearings import format_bearings
    from geo.magnetic import field_at

    courses = parse_courses(doc, file=file)
    record = doc.record
    notes: list[str] = []

    # Dates and models
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
    target_model_name = model or (doc.target.model if doc.target is not None else "auto")
    record_model_name = record_model or record.model
    if record.foot is None:
        try:
            choice = _units.choose_foot(None, record.date)
        except LodelineError:
            choice = None
        if choice is not None and any(_units.is_foot_based(c.length_unit) for c in courses):
            notes.append(choice.note)

    stated = _stated_declination(doc, file)
    need_record_model = stated is None and record_year is not None
    magnetic = record.reference == "magnetic"
    if magnetic and stated is None and record_year is None:
        raise DocumentError(
            "a magnetic record needs its date (record.date) or a stated declination "
            "(record.declination) to be turned to true north",
            file=file,
            field="record.date",
        )

    # Point of beginning and CRS
    place = doc.place
    h = float(place.height_m)
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
    e0, n0, lat0, lon0 = float(e0), float(n0), float(lat0), float(lon0)

    n = len(courses)
    recorded = np.array([c.azimuth_deg for c in courses], dtype=float)
    length_m = np.array([c.length_m for c in courses], dtype=float)
    lat = np.full(n + 1, lat0)
    lon = np.full(n + 1, lon0)
    east = np.full(n + 1, e0)
    north = np.full(n + 1, n0)

    def evaluate(which: str, name: str, year: float, lat: np.ndarray, lon: np.ndarray) -> Any:
        when = (record_date if which == "record" else tday) or year
        try:
            return field_at(lat=lat, lon=lon, year=year, height_m=h, model=name)
        except ModelRangeError as err:
            raise _range_error(err, which=which, when=str(when), file=file, n_courses=n) from None
        except LodelineError as err:
            raise err.located(file=file) from None

    record_field: _Split | None = None
    target_field_vec: Any = None
    d1: np.ndarray | None = None
    record_usable = need_record_model
    unknown_d1 = False

    def march(gamma: np.ndarray, combined: np.ndarray, d1: np.ndarray | None) -> tuple:
        """Stations (grid units) from the per-station gamma, combined factor and record D."""
        if unknown_d1:
            true = recorded  # provisional geometry only; withheld from the result below
        elif record.reference == "magnetic":
            true = recorded + d1[:n]
        elif record.reference == "true":
            true = recorded
        else:
            true = recorded + gamma[:n]
        grid_az = np.asarray(normalize_azimuth(true - gamma[:n]), dtype=float)
        step = length_m * combined[:n] / unit_m
        e = e0 + np.concatenate([[0.0], np.cumsum(step * np.sin(np.radians(grid_az)))])
        nn = n0 + np.concatenate([[0.0], np.cumsum(step * np.cos(np.radians(grid_az)))])
        return e, nn, true, grid_az

    # The first pass evaluates at the point of beginning and, for a first estimate of the
    # stations, at two probes 1 km grid east and grid north of it: gamma, the combined factor
    # and D taken as linear in grid position from these three points put the stations within
    # a small fraction of a millimetre of where the full passes put them on a figure of a few
    # kilometres, so the second pass (every station) usually confirms the first.
    probe_e = np.array([e0, e0 + _PROBE_M / unit_m, e0])
    probe_n = np.array([n0, n0, n0 + _PROBE_M / unit_m])
    probe_lat, probe_lon = np.array([lat0]), np.array([lon0])
    if n:
        with contextlib.suppress(LodelineError):  # without probes: the usual passes
            p_lat, p_lon = _grid.to_geographic(crs, easting=probe_e, northing=probe_n)
            probe_lat = np.asarray(p_lat, dtype=float).copy()
            probe_lon = np.asarray(p_lon, dtype=float).copy()
            probe_lat[0], probe_lon[0] = lat0, lon0
            if not (np.all(np.isfinite(probe_lat)) and np.all(np.isfinite(probe_lon))):
                probe_lat, probe_lon = probe_lat[:1], probe_lon[:1]
    for _pass in range(_MAX_PASSES):
        at_lat, at_lon = (probe_lat, probe_lon) if _pass == 0 else (lat, lon)
        m = at_lat.size
        try:
            factors = _grid.grid_factors(crs, lat=at_lat, lon=at_lon, height_m=h)
        except LodelineError as err:
            raise err.located(file=file, field="grid.crs" if doc.grid else "place") from None
        gamma = np.broadcast_to(np.asarray(factors.convergence_deg, dtype=float), (m,))
        combined = np.broadcast_to(np.asarray(factors.combined_factor, dtype=float), (m,))
        record_field = None
        if record_usable and record_model_name == target_model_name:
            try:  # both dates at every station in one evaluation
                both = field_at(
                    lat=np.concatenate([at_lat, at_lat]),
                    lon=np.concatenate([at_lon, at_lon]),
                    year=np.concatenate([np.full(m, record_year), np.full(m, tyear)]),
                    height_m=h,
                    model=record_model_name,
                )
            except ModelRangeError:
                both = None  # one of the dates is not covered: find out which, below
            if both is not None:
                record_field = _Split(both, slice(0, m))
                target_field_vec = _Split(both, slice(m, 2 * m))
        if record_field is None:
            if record_usable:
                try:
                    record_field = _Split(
                        evaluate("record", record_model_name, record_year, at_lat, at_lon), None
                    )
                except ModelRangeError:
                    if magnetic and not allow_unknown_declination:
                        raise
                    record_usable = False
                    unknown_d1 = magnetic
                    notes.append(
                        "no field model covers the record date and no declination is stated: "
                        "true, grid and target-date bearings are not given (fit the "
                        "declination from found monuments, state it, or install a model)"
                        if magnetic
                        else "no field model covers the record date: the magnetic bearings "
                        "at the record date are not given"
                    )
            target_field_vec = _Split(
                evaluate("target", target_model_name, tyear, at_lat, at_lon), None
            )
        if stated is not None:
            d1 = np.full(m, stated)
        elif record_field is not None:
            d1 = np.broadcast_to(np.asarray(record_field.declination_deg, dtype=float), (m,))
        else:
            d1 = None
        if _pass == 0:
            # values at the point of beginning for every station, then linear in position
            values = [np.full(n + 1, v[0]) for v in (gamma, combined)]
            values.append(None if d1 is None else np.full(n + 1, d1[0]))
            new_e, new_n, true, grid_az = march(*values)
            if m == 3:
                for _round in range(2):
                    de = (new_e - e0) * (unit_m / _PROBE_M)  # in units of the probe distance
                    dn = (new_n - n0) * (unit_m / _PROBE_M)
                    values = [
                        None if v is None else _linear(v, de, dn) for v in (gamma, combined, d1)
                    ]
                    new_e, new_n, true, grid_az = march(*values)
            gamma, combined, d1 = values
        else:
            new_e, new_n, true, grid_az = march(gamma, combined, d1)
        moved = float(np.max(np.hypot(new_e - east, new_n - north))) * unit_m if n else 0.0
        east, north = new_e, new_n
        if n:
            try:
                lat, lon = _grid.to_geographic(crs, easting=east, northing=north)
            except LodelineError as err:
                raise err.located(file=file, field="grid.crs" if doc.grid else "place") from None
            lat, lon = np.asarray(lat, dtype=float), np.asarray(lon, dtype=float)
            lat[0], lon[0] = lat0, lon0
        if (_pass > 0 or n == 0) and moved <= _CONVERGED_M:
            break

    if (
        record_field is not None
        and stated is None
        and record_field.model_name != target_field_vec.model_name
    ):
        notes.append(
            f"the record date uses {record_field.model_name} and the target date "
            f"{target_field_vec.model_name}: the change of D between them includes the "
            "difference of the two models, not only the change of the field"
        )
    stations = tuple(
        Station(i, float(lat[i]), float(lon[i]), float(east[i]), float(north[i]))
        for i in range(n + 1)
    )
    d2 = np.asarray(target_field_vec.declination_deg, dtype=float)
    sigma2 = np.asarray(target_field_vec.declination_sigma_deg, dtype=float)
    if record_field is not None and stated is None:
        sigma1 = np.asarray(record_field.declination_sigma_deg, dtype=float)
    else:
        sigma1 = np.full(n + 1, np.nan)
    true = np.asarray(normalize_azimuth(true), dtype=float) if n else np.zeros(0)
    if unknown_d1:
        mag1 = np.asarray(normalize_azimuth(recorded), dtype=float) if n else np.zeros(0)
    else:
        mag1 = None if d1 is None else np.asarray(normalize_azimuth(true - d1[:n]), dtype=float)
    mag2 = np.asarray(normalize_azimuth(true - d2[:n]), dtype=float)

    found = _found_stations(doc, courses, crs, file)
    # Per-course values as Python floats, read once (the same doubles as float(array[i])).
    mag1_l = None if mag1 is None else mag1.tolist()
    true_l, grid_l, mag2_l = true.tolist(), grid_az.tolist(), mag2.tolist()
    d1_l = None if d1 is None else d1.tolist()
    d2_l, gamma_l, combined_l = d2.tolist(), gamma.tolist(), combined.tolist()
    sigma1_l = [_finite_or_none(v) for v in sigma1.tolist()]
    sigma2_l = [_finite_or_none(v) for v in sigma2.tolist()]
    scale_l = np.asarray(factors.scale_factor, dtype=float).tolist()
    elevation_l = np.asarray(factors.elevation_factor, dtype=float).tolist()
    record_warnings = record_field.warnings_list(n) if record_field is not None else [()] * n
    target_warnings = target_field_vec.warnings_list(n)
    # Bearing texts: the recorded reference at the call's precision, the others at the call's
    # but never coarser than a minute.
    own = [rc.precision_deg for rc in courses]
    derived = [min(p, _DERIVED_PRECISION_DEG) for p in own]
    reference = record.reference
    mag1_t = None if mag1 is None else format_bearings(mag1, precision=own if magnetic else derived)
    true_t = format_bearings(true, precision=own if reference == "true" else derived)
    grid_t = format_bearings(grid_az, precision=own if reference == "grid" else derived)
    mag2_t = format_bearings(mag2, precision=derived)
    _cardinals_as_recorded(courses, {"magnetic": mag1_t, "true": true_t, "grid": grid_t}[reference])
    out: list[CourseConversion] = []
    if unknown_d1:
        true_l = grid_l = mag2_l = [None] * n
        true_t = grid_t = mag2_t = [None] * n
        stations = stations[:1] + tuple(
            Station(i, math.nan, math.nan, math.nan, math.nan) for i in range(1, n + 1)
        )
    for i, rc in enumerate(courses):
        az = References(
            None if mag1_l is None else mag1_l[i],
            true_l[i],
            grid_l[i],
            mag2_l[i],
        )
        text = References(None if mag1_t is None else mag1_t[i], true_t[i], grid_t[i], mag2_t[i])
        rec_w, tgt_w = record_warnings[i], target_warnings[i]
        if rec_w or tgt_w:
            listed = [f"record date: {w}" for w in rec_w]
            listed += [f"target date: {w}" for w in tgt_w]
            warnings = tuple(dict.fromkeys(listed))
        else:
            warnings = ()
        out.append(
            CourseConversion(
                index=rc.index,
                call=rc.text,
                recorded=rc,
                length_m=rc.length_m,
                length_value=rc.length_value,
                length_unit=rc.length_unit,
                grid_length_m=rc.length_m * combined_l[i],
                start=stations[i],
                end=stations[i + 1],
                declination_record_deg=None if d1_l is None else d1_l[i],
                declination_target_deg=d2_l[i],
                declination_record_sigma_deg=sigma1_l[i],
                declination_target_sigma_deg=sigma2_l[i],
                convergence_deg=gamma_l[i],
                scale_factor=scale_l[i],
                elevation_factor=elevation_l[i],
                combined_factor=combined_l[i],
                azimuth=az,
                bearing=text,
                found=found[i],
                warnings=warnings,
            )
        )
    return DocumentConversion(
        document=doc,
        file=file,
        reference=record.reference,
        crs=str(crs),
        grid_unit_m=unit_m,
        height_m=h,
        place_by_grid=place.by_grid,
        record_date=record_date,
        record_year=record_year,
        target_date=tday,
        target_year=float(tyear),
        declination_source="stated"
        if stated is not None
        else ("model" if d1 is not None else None),
        stated_declination_deg=stated,
        record_model=None
        if record_field is None or stated is not None
        else record_field.model_name,
        target_model=target_field_vec.model_name,
        courses=tuple(out),
        stations=stations,
        warnings=tuple(dict.fromkeys(notes)),
    )


def _linear(at_probes: np.ndarray, de: np.ndarray, dn: np.ndarray) -> np.ndarray:
    """A value (an angle in degrees, or a factor) taken as linear in grid position from its
    values at the point of beginning and at the probes east and north of it; ``de``, ``dn``:
    offsets from the point of beginning in probe distances. Differences of angles are taken
    in (-180, 180] (:func:`geo.angles.angle_difference`; a factor differs by far less)."""
    from geo.angles import angle_difference

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
    from geo import grid as _grid

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
