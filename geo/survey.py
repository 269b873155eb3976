"""Closure and record-to-found fit of a whole traverse document: the one source of closure figures.

The command line (``lodeline close``, ``lodeline fit``), the export, the report and the terminal
application all take their closure figures from here; the planar arithmetic itself lives in
:mod:`geo.traverse` and :mod:`geo.fit`, the north references in :mod:`geo.north`.

Public API
----------
``record_figure(conv) -> RecordFigure``
    The record's own figure: recorded azimuths (degrees from the recorded north) and recorded
    ground lengths (metres), with the interior angles balanced first when the document records
    every angle of a closed figure (see *Angles* below).
``close_document(conv, *, adjust=None, north="true", bearing_sigma_deg=None,
attraction_tolerance_deg=None) -> SurveyClosure``
    Latitudes and departures, misclosure, precision, adjustment, area, crossing, angular
    misclosure, local attraction and error budget. ``SurveyClosure.as_dict()`` is the
    ``lodeline close --json`` object.
``fit_document(conv, *, with_scale=True) -> SurveyFit``
    The record-to-found similarity fit, empirical declination, model declination and
    record-length factor. ``SurveyFit.as_dict()`` is the ``lodeline fit --json`` object.
``resolve_adjustment(conv, adjust) -> str``
    The rule applied for ``adjust`` (``None``: compass when closed, none when open); raises
    for an adjustment of an open traverse. The export uses it too.
``found_count(conv) -> int``
    How many stations have measured positions (the point of beginning counts when placed by
    grid coordinates); the fit needs two.

Every result is a frozen dataclass holding floats and tuples (no mutable arrays).

The ground plane and the choice of north
    The closure is a property of the record: the courses are the recorded (horizontal, ground)
    lengths along the recorded azimuths, the figure the original surveyor described. Referring
    it to another north (``north="true"``, ``"grid"`` or ``"magnetic"`` = magnetic north at the
    record date) turns the whole figure by **one** angle, ``rotation_deg`` = the chosen north's
    azimuth minus the recorded azimuth of course 1 at the point of beginning (from
    :mod:`geo.north`: D and gamma at station 0). So every closure figure (misclosure length,
    precision, area, corrections' sizes) is exactly independent of the choice of north, and
    only directions change. Per-course bearings in :mod:`geo.north` use D and gamma at each
    course's own start and can differ from these by the change of D and gamma across the
    figure (a few thousandths of a degree per kilometre).

Sign conventions
    Azimuths are degrees clockwise from the chosen north in [0, 360). A latitude is the north
    component ``L cos az`` and a departure the east component ``L sin az`` (metres). Station 0
    is the point of beginning at (0, 0); station i is the end of course i. The misclosure
    vector runs from the point of beginning to the computed end point (the sum of latitudes and
    departures); its azimuth is that vector's.

Adjustment
    ``adjust=None`` picks ``"compass"`` for a closed traverse and ``"none"`` for an open one.
    An open traverse has no misclosure, adjustment or area: asking for a compass or transit
    adjustment of one raises :class:`~geo.errors.TraverseError`.

Area
    Shoelace area of the adjusted figure (the unadjusted one, its gap bridged, with
    ``adjust="none"``), in the ground plane: m², hectares and acres (the acre of the document's
    foot, ``record.foot`` or its default by date; with neither, the international acre). The
    grid area is the ground area times the square of the mean combined factor of the courses.
    A figure whose courses cross has no area: ``crossing`` names the pair (1-based courses).

Angles
    When a closed document gives an ``angle`` on every course (course 1 with its bearing and
    the angle at the point of beginning), the angular misclosure is the sum against
    (n - 2)·180° (interior angles) or (n + 2)·180° (exterior angles, recognised by their sum),
    distributed equally, and the figure's azimuths are carried from course 1's bearing with the
    balanced angles (common practice: balance the angles before the latitudes and departures).

Local attraction
    From the fore and back bearings (``back`` keys), by :func:`geo.traverse.local_attraction`,
    with the tolerance (default) equal to the coarsest precision to which those bearings were
    written. Corrections are reported per station; they are not applied to the closure (the
    record is closed as written), the corrected bearings are given beside it.

Error budget
    Lateral displacement of each station from a bearing uncertainty (``bearing_sigma_deg``,
    default half the coarsest precision of the calls) and, for a magnetic record, the field
    model's published 1σ declination uncertainty at the record date (none for a stated
    declination or a model without an error model).

Fit
    Found positions (``found`` on a course, and the point of beginning when it is given by grid
    coordinates) in the grid CRS, in metres from the point of beginning, against the record
    figure marched from (0, 0) with recorded azimuths and recorded lengths (no adjustment).
    ``rotation_deg`` turns recorded azimuths clockwise onto grid azimuths; ``scale`` = found
    grid length / recorded length. gamma and the combined factor are evaluated at the mean
    position of the found stations. ``true_rotation_deg = rotation + gamma`` turns recorded
    azimuths onto true azimuths; for a magnetic record it is the empirical declination at the
    record date. ``record_length_factor = scale / combined factor`` = true ground length /
    recorded length (``None`` without a fitted scale). ``model_declination_deg`` is the field
    model's D at the record date at the same mean position, ``None`` when no model covers the
    date (the fit itself never needs a model).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

import numpy as np

from geo.errors import FitError, InputError, LodelineError, ModelRangeError, TraverseError

if TYPE_CHECKING:
    from geo.north import DocumentConversion

__all__ = [
    "AngularClosure",
    "AreaFigures",
    "AttractionStation",
    "BudgetStation",
    "ClosureCourse",
    "ClosureStation",
    "FitResidual",
    "LocalAttractionResult",
    "RecordFigure",
    "SurveyClosure",
    "SurveyFit",
    "close_document",
    "fit_document",
    "found_count",
    "record_figure",
    "resolve_adjustment",
]

North = Literal["true", "grid", "magnetic"]
Adjust = Literal["compass", "transit", "none"]
NORTHS: tuple[str, ...] = ("true", "grid", "magnetic")
ADJUSTMENTS: tuple[str, ...] = ("compass", "transit", "none")

#: Displayed directions of derived figures (misclosure, adjusted courses): one second of arc.
_SECOND_DEG = 1.0 / 3600.0


def _fmt_bearing(azimuth_deg: float | None) -> str | None:
    if azimuth_deg is None:
        return None
    from geo.bearings import format_bearing

    return format_bearing(azimuth_deg, precision=_SECOND_DEG)


def _float_list(values: Any) -> list[float]:
    """A 1-D array's values as Python floats (``float(values[i])`` for each ``i``)."""
    return np.asarray(values, dtype=float).tolist()


def _floats(values: Any) -> tuple[float, ...]:
    return tuple(float(v) for v in np.asarray(values, dtype=float).ravel())


def _opt(value: float) -> float | None:
    return float(value) if math.isfinite(value) else None


# --------------------------------------------------------------------------------------------
# The record figure (angles balanced when the document gives them all)
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class AngularClosure:
    """Angular misclosure of a closed figure recorded by angles (degrees).

    ``kind`` is ``"interior"`` or ``"exterior"`` (recognised by the sum); ``measured_sum_deg``
    is the sum of the recorded angles, ``expected_sum_deg`` (n - 2)·180 or (n + 2)·180,
    ``misclosure_deg`` = measured - expected, ``correction_per_angle_deg`` = -misclosure / n,
    ``adjusted_angles_deg`` the balanced angles as recorded (station 0 first), and
    ``azimuth_deg`` the course azimuths (recorded north) carried with them from course 1.
    """

    kind: str
    measured_sum_deg: float
    expected_sum_deg: float
    misclosure_deg: float
    correction_per_angle_deg: float
    adjusted_angles_deg: tuple[float, ...]
    azimuth_deg: tuple[float, ...]


@dataclass(frozen=True)
class RecordFigure:
    """The record's own figure: azimuths from the recorded north (degrees), ground lengths (m).

    ``recorded_azimuth_deg`` are the azimuths as parsed (angles carried unbalanced);
    ``azimuth_deg`` the ones the closure uses (balanced when ``angles`` is not ``None``).
    ``angles_note`` explains why angles given on some courses gave no angular misclosure.
    """

    recorded_azimuth_deg: tuple[float, ...]
    azimuth_deg: tuple[float, ...]
    length_m: tuple[float, ...]
    angles: AngularClosure | None
    angles_note: str | None


def _angular_closure(conv: DocumentConversion) -> tuple[AngularClosure | None, str | None]:
    from geo.traverse import adjust_interior_angles

    rec = [c.recorded for c in conv.courses]
    given = [r.angle_deg is not None for r in rec]
    if not any(given):
        return None, None
    if not conv.document.closed:
        return None, "angles on an open traverse: no angular misclosure (no figure to close)"
    if not all(given) or len(rec) < 3:
        missing = [r.index for r in rec if r.angle_deg is None]
        where = (
            "course 1 (the angle at the point of beginning)"
            if missing == [1]
            else ("courses " + ", ".join(str(i) for i in missing))
        )
        return None, f"no angular misclosure: the angle is missing on {where}"
    angles = np.array([r.angle_deg for r in rec], dtype=float)
    n = angles.size
    right = conv.document.record.angles == "right"
    # Turned to the right (clockwise), interior angles belong to a figure run counter-clockwise.
    direction = "counterclockwise" if right else "clockwise"
    total = math.fsum(angles.tolist())
    kind = "interior"
    if abs(total - (n + 2) * 180.0) < abs(total - (n - 2) * 180.0):
        # Exterior angles: the interior ones are 360 - a, the figure runs the other way.
        kind = "exterior"
        angles = 360.0 - angles
        direction = "clockwise" if right else "counterclockwise"
    try:
        aa = adjust_interior_angles(
            angles, first_azimuth_deg=rec[0].azimuth_deg, direction=direction
        )
    except LodelineError as err:
        raise err.located(file=conv.file) from None
    adjusted = aa.adjusted_angles_deg if kind == "interior" else 360.0 - aa.adjusted_angles_deg
    sign = 1.0 if kind == "interior" else -1.0
    return (
        AngularClosure(
            kind=kind,
            measured_sum_deg=total,
            expected_sum_deg=(n - 2) * 180.0 if kind == "interior" else (n + 2) * 180.0,
            misclosure_deg=sign * aa.misclosure_deg,
            correction_per_angle_deg=sign * aa.correction_per_angle_deg,
            adjusted_angles_deg=_floats(adjusted),
            azimuth_deg=_floats(aa.azimuth_deg),
        ),
        None,
    )


def record_figure(conv: DocumentConversion) -> RecordFigure:
    """The record figure of a converted document (see the module docstring, *Angles*)."""
    recorded = tuple(float(c.recorded.azimuth_deg) for c in conv.courses)
    lengths = tuple(float(c.length_m) for c in conv.courses)
    angles, note = _angular_closure(conv)
    return RecordFigure(
        recorded_azimuth_deg=recorded,
        azimuth_deg=angles.azimuth_deg if angles is not None else recorded,
        length_m=lengths,
        angles=angles,
        angles_note=note,
    )


# --------------------------------------------------------------------------------------------
# Closure
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ClosureCourse:
    """One course of the closure, in the chosen north (degrees) and metres.

    ``azimuth_deg``/``bearing``, ``length_m``, ``latitude_m``, ``departure_m``: unadjusted.
    ``latitude_correction_m``/``departure_correction_m``: added by the adjustment.
    ``adjusted_*``: after adjustment (equal to the unadjusted values with ``"none"``).
    """

    index: int
    call: str
    azimuth_deg: float
    bearing: str
    length_m: float
    latitude_m: float
    departure_m: float
    latitude_correction_m: float
    departure_correction_m: float
    adjusted_latitude_m: float
    adjusted_departure_m: float
    adjusted_length_m: float
    adjusted_azimuth_deg: float
    adjusted_bearing: str


@dataclass(frozen=True)
class ClosureStation:
    """A station in metres north and east of the point of beginning (chosen north)."""

    index: int
    north_m: float
    east_m: float


@dataclass(frozen=True)
class AreaFigures:
    """Area of the figure: ground (m², ha, acres) and grid (m²).

    ``orientation`` is ``"clockwise"`` or ``"counterclockwise"`` (as run on the map);
    ``acre_m2`` the acre used and ``foot`` its foot; ``combined_factor`` the mean combined
    factor of the courses, ``grid_m2 = ground_m2 * combined_factor**2``.
    """

    ground_m2: float
    hectares: float
    acres: float
    grid_m2: float
    combined_factor: float
    orientation: str
    acre_m2: float
    foot: str


@dataclass(frozen=True)
class AttractionStation:
    """Local attraction at one station: ``correction_deg`` is added to every bearing read there
    (``None`` where no chain of fore/back pairs reaches it); ``disturbed`` when it exceeds the
    tolerance."""

    station: int
    correction_deg: float | None
    disturbed: bool


@dataclass(frozen=True)
class LocalAttractionResult:
    """Fore and back bearings compared (see :func:`geo.traverse.local_attraction`).

    Per course: ``discrepancy_deg`` = back - (fore + 180) in (-180, 180] (``None`` without a
    back bearing), ``corrected_azimuth_deg``/``corrected_bearing`` the corrected fore bearing in
    the **recorded** north (``None`` where undetermined). ``start_course`` is the course taken
    as free of attraction; ``free_courses`` all within ``tolerance_deg``.
    """

    tolerance_deg: float
    start_course: int
    free_courses: tuple[int, ...]
    stations: tuple[AttractionStation, ...]
    discrepancy_deg: tuple[float | None, ...]
    corrected_azimuth_deg: tuple[float | None, ...]
    corrected_bearing: tuple[str | None, ...]

    @property
    def disturbed_stations(self) -> tuple[int, ...]:
        """Stations whose correction exceeds the tolerance."""
        return tuple(s.station for s in self.stations if s.disturbed)

    @property
    def start_is_free(self) -> bool:
        """Whether the reference course's own fore and back bearings agree (within tolerance);
        when no course's do, the corrections are only relative to the least disturbed one."""
        return self.start_course in self.free_courses

    def reference_text(self) -> str:
        """One phrase naming the reference course and whether it is free of attraction."""
        k = self.start_course
        if self.start_is_free:
            return f"course {k} taken as free"
        off = self.discrepancy_deg[k - 1]
        off_text = "" if off is None else f", itself off by {abs(off) * 60:.1f}′"
        return (
            f"no course's fore and back bearings agree within {self.tolerance_deg * 60:.1f}′: "
            f"corrections are relative to course {k}{off_text}"
        )


@dataclass(frozen=True)
class BudgetStation:
    """Position uncertainty of one station (1σ, metres): from the bearing readings, from the
    declination, and both combined; ``distance_m`` from the point of beginning."""

    index: int
    distance_m: float
    bearing_m: float
    declination_m: float
    total_m: float


@dataclass(frozen=True)
class SurveyClosure:
    """The closure of a document (see the module docstring for every convention).

    ``closed``: the document's ``closed``. ``north``: the chosen north; ``rotation_deg`` the
    angle from the recorded azimuths to it. ``adjustment``: the rule applied. Misclosure fields,
    ``precision`` (N of 1:N) and ``area`` are ``None`` for an open traverse; ``precision`` and
    the misclosure direction also when the misclosure is zero. ``area`` is ``None`` as well
    when the courses cross (``crossing``) or fewer than three courses enclose nothing
    (``notes`` says why). ``stations`` are adjusted, ``unadjusted_stations`` as marched.
    """

    file: str | None
    closed: bool
    north: str
    rotation_deg: float
    adjustment: str
    courses: tuple[ClosureCourse, ...]
    stations: tuple[ClosureStation, ...]
    unadjusted_stations: tuple[ClosureStation, ...]
    perimeter_m: float
    misclosure_north_m: float | None
    misclosure_east_m: float | None
    misclosure_m: float | None
    misclosure_azimuth_deg: float | None
    misclosure_bearing: str | None
    precision: float | None
    area: AreaFigures | None
    crossing: tuple[int, int] | None
    angles: AngularClosure | None
    attraction: LocalAttractionResult | None
    bearing_sigma_deg: float
    declination_sigma_deg: float | None
    budget: tuple[BudgetStation, ...]
    notes: tuple[str, ...]
    #: What the misclosure is measured against: "beginning" (a closed figure), "found end" (an
    #: open line whose last course is found; geo.retrace), or None (open, nothing to close on).
    closes_on: str | None = None
    #: Found minus marched position of every found station (geo.retrace.found_gaps).
    found_gaps: tuple[Any, ...] = ()

    @property
    def latitudes_m(self) -> tuple[float, ...]:
        """Unadjusted latitudes per course (metres, chosen north)."""
        return tuple(c.latitude_m for c in self.courses)

    @property
    def departures_m(self) -> tuple[float, ...]:
        """Unadjusted departures per course (metres, chosen north)."""
        return tuple(c.departure_m for c in self.courses)

    def as_dict(self) -> dict[str, Any]:
        """The ``lodeline close --json`` object (plain JSON values; see issue keys)."""
        area = self.area
        att = self.attraction
        ang = self.angles
        return {
            "file": self.file,
            "closed": self.closed,
            "north": self.north,
            "rotation_deg": self.rotation_deg,
            "adjustment": self.adjustment,
            "perimeter_m": self.perimeter_m,
            "misclosure_m": self.misclosure_m,
            "misclosure_north_m": self.misclosure_north_m,
            "misclosure_east_m": self.misclosure_east_m,
            "misclosure_azimuth_deg": self.misclosure_azimuth_deg,
            "misclosure_bearing": self.misclosure_bearing,
            "precision": self.precision,
            "latitudes_m": list(self.latitudes_m),
            "departures_m": list(self.departures_m),
            "courses": [
                {
                    "index": c.index,
                    "call": c.call,
                    "azimuth_deg": c.azimuth_deg,
                    "bearing": c.bearing,
                    "length_m": c.length_m,
                    "latitude_m": c.latitude_m,
                    "departure_m": c.departure_m,
                    "latitude_correction_m": c.latitude_correction_m,
                    "departure_correction_m": c.departure_correction_m,
                    "adjusted_length_m": c.adjusted_length_m,
                    "adjusted_azimuth_deg": c.adjusted_azimuth_deg,
                    "adjusted_bearing": c.adjusted_bearing,
                }
                for c in self.courses
            ],
            "stations": [
                {"index": s.index, "north_m": s.north_m, "east_m": s.east_m} for s in self.stations
            ],
            "area_m2": None if area is None else area.ground_m2,
            "area_hectares": None if area is None else area.hectares,
            "area_acres": None if area is None else area.acres,
            "grid_area_m2": None if area is None else area.grid_m2,
            "area_kind": None if area is None else "ground",
            "combined_factor": None if area is None else area.combined_factor,
            "crossing_courses": None if self.crossing is None else list(self.crossing),
            "angular_misclosure": None
            if ang is None
            else {
                "kind": ang.kind,
                "measured_sum_deg": ang.measured_sum_deg,
                "expected_sum_deg": ang.expected_sum_deg,
                "misclosure_deg": ang.misclosure_deg,
                "correction_per_angle_deg": ang.correction_per_angle_deg,
                "adjusted_angles_deg": list(ang.adjusted_angles_deg),
            },
            "local_attraction": []
            if att is None
            else [
                {"station": s.station, "correction_deg": s.correction_deg, "disturbed": s.disturbed}
                for s in att.stations
            ],
            "local_attraction_courses": []
            if att is None
            else [
                {
                    "index": c.index,
                    "discrepancy_deg": att.discrepancy_deg[i],
                    "corrected_bearing": att.corrected_bearing[i],
                }
                for i, c in enumerate(self.courses)
            ],
            "error_budget": {
                "bearing_sigma_deg": self.bearing_sigma_deg,
                "declination_sigma_deg": self.declination_sigma_deg,
                "stations": [
                    {
                        "index": b.index,
                        "distance_m": b.distance_m,
                        "bearing_m": b.bearing_m,
                        "declination_m": b.declination_m,
                        "total_m": b.total_m,
                    }
                    for b in self.budget
                ],
            },
            "closes_on": self.closes_on,
            "found_gaps": [g.as_dict() for g in self.found_gaps],
            "notes": list(self.notes),
        }


def _north_rotation(conv: DocumentConversion, north: str) -> float:
    """Degrees to add to a recorded azimuth to refer it to ``north`` (at the point of beginning)."""
    if north not in NORTHS:
        raise InputError(f"unknown north {north!r}: use true, grid or magnetic", field="north")
    first = conv.courses[0]
    target = {
        "true": first.azimuth.true,
        "grid": first.azimuth.grid,
        "magnetic": first.azimuth.magnetic_record,
    }[north]
    if target is None:
        raise InputError(
            "no magnetic north at the record date: the document gives neither a record date a "
            "field model covers nor a stated declination (use --north true or grid)",
            file=conv.file,
            field="north",
        )
    from geo.angles import angle_difference

    return float(angle_difference(target, first.recorded.azimuth_deg))


def _acre_foot(conv: DocumentConversion) -> str:
    from geo import units

    record = conv.document.record
    try:
        return units.choose_foot(record.foot, record.date).foot
    except LodelineError:
        return "international"


def _attraction(
    conv: DocumentConversion, tolerance_deg: float | None
) -> LocalAttractionResult | None:
    from geo.bearings import parse_bearing
    from geo.traverse import local_attraction

    rec = [c.recorded for c in conv.courses]
    if all(r.back_azimuth_deg is None for r in rec):
        return None
    fore = np.array([r.azimuth_deg for r in rec], dtype=float)
    back = np.array([np.nan if r.back_azimuth_deg is None else r.back_azimuth_deg for r in rec])
    if tolerance_deg is None:
        tolerance_deg = conv.document.record.attraction_tolerance
    if tolerance_deg is None:
        precisions = []
        for r, course in zip(rec, conv.document.course, strict=True):
            if r.back_azimuth_deg is not None:
                precisions.append(r.precision_deg)
                precisions.append(parse_bearing(course.back).precision_deg)
        tolerance_deg = max(precisions)
    try:
        la = local_attraction(fore, back, closed=conv.document.closed, tolerance_deg=tolerance_deg)
    except LodelineError as err:
        raise err.located(file=conv.file) from None
    disturbed = set(la.disturbed_stations)
    corr = [_opt(float(c)) for c in la.correction_deg]
    fixed = [_opt(float(a)) for a in la.corrected_fore_deg]
    return LocalAttractionResult(
        tolerance_deg=float(tolerance_deg),
        start_course=la.start_course,
        free_courses=la.free_courses,
        stations=tuple(
            AttractionStation(int(s), corr[k], int(s) in disturbed)
            for k, s in enumerate(la.stations)
        ),
        discrepancy_deg=tuple(_opt(float(d)) for d in la.discrepancy_deg),
        corrected_azimuth_deg=tuple(fixed),
        corrected_bearing=tuple(None if a is None else _fmt_bearing(a) for a in fixed),
    )


def resolve_adjustment(conv: DocumentConversion, adjust: str | None) -> str:
    """The adjustment rule to apply: ``adjust``, or by default compass for a closed traverse and
    none for an open one. Raises InputError for an unknown rule and TraverseError for a compass
    or transit adjustment asked of an open traverse (it has no misclosure and no area)."""
    if adjust is not None and adjust not in ADJUSTMENTS:
        raise InputError(
            f"unknown adjustment {adjust!r}: use compass, transit or none", field="adjust"
        )
    from geo.retrace import closes_on_found_end

    closed = bool(conv.document.closed) or closes_on_found_end(conv)
    if adjust is None:
        return "compass" if closed else "none"
    if not closed and adjust != "none":
        raise TraverseError(
            f"the traverse is open (closed = false): it has no misclosure to adjust by the "
            f"{adjust} rule and no area (use --adjust none, or set closed = true if the calls "
            "return to the point of beginning)",
            file=conv.file,
            field="closed",
        )
    return adjust


def close_document(
    conv: DocumentConversion,
    *,
    adjust: Adjust | None = None,
    north: North = "true",
    bearing_sigma_deg: float | None = None,
    attraction_tolerance_deg: float | None = None,
) -> SurveyClosure:
    """Close a converted document (see the module docstring for the method and conventions).

    Parameters
    ----------
    conv:
        The document's conversion (:func:`geo.north.convert_document`).
    adjust:
        ``"compass"`` (Bowditch), ``"transit"`` or ``"none"``; default compass for a closed
        traverse, none for an open one.
    north:
        ``"true"`` (default), ``"grid"`` or ``"magnetic"`` (record date): the north of every
        direction in the result. A rotation: no closure figure depends on it.
    bearing_sigma_deg:
        1σ uncertainty of a bearing reading, degrees (default: half the coarsest precision
        the calls were written to).
    attraction_tolerance_deg:
        Fore/back agreement tolerance, degrees (default: the document's
        ``record.attraction_tolerance``, else the coarsest precision of those bearings).

    Raises
    ------
    DocumentError
        The document has no courses.
    TraverseError
        A compass or transit adjustment was asked of an open traverse.
    InputError
        Unknown ``north``/``adjust``, or magnetic north asked of a record that has none.
    """
    from geo import traverse as tv

    doc = conv.document
    if not conv.courses:
        from geo.errors import DocumentError

        raise DocumentError("has no courses: nothing to close", file=conv.file, field="course")
    closed = bool(doc.closed)
    adjust = resolve_adjustment(conv, adjust)
    closes_on = _closes_on(conv)
    figure = record_figure(conv)
    rotation = _north_rotation(conv, north)
    notes: list[str] = []
    if figure.angles_note:
        notes.append(figure.angles_note)
    if figure.angles is not None:
        notes.append("azimuths carried from course 1 with the balanced angles")
    from geo import omitted, retrace

    notes += omitted.closure_notes([c.recorded for c in conv.courses])
    notes += retrace.closure_notes(conv)

    from geo.angles import normalize_azimuth

    az = np.asarray(normalize_azimuth(np.asarray(figure.azimuth_deg) + rotation), dtype=float)
    length = np.asarray(figure.length_m, dtype=float)
    try:
        st = tv.march(az, length)
        end_n, end_e = _closing_point(conv, rotation, st)
        adj = (
            tv.adjust(az, length, method=adjust, end_north_m=end_n, end_east_m=end_e)
            if closes_on
            else None
        )
    except LodelineError as err:
        raise err.located(file=conv.file) from None

    if adj is not None:
        lat_c, dep_c = adj.latitude_corrections_m, adj.departure_corrections_m
        a_lat, a_dep = adj.latitudes_m, adj.departures_m
        a_len, a_az = adj.length_m, adj.azimuth_deg
        north_m, east_m = adj.north_m, adj.east_m
        if adjust == "none":
            a_len, a_az = length, az
    else:
        lat_c = dep_c = np.zeros(length.size)
        a_lat, a_dep, a_len, a_az = st.latitudes_m, st.departures_m, length, az
        north_m, east_m = st.north_m, st.east_m

    from geo.bearings import format_bearings

    # Per-course values as Python floats, read once (the same doubles as float(array[i])).
    columns = zip(
        conv.courses,
        _float_list(az),
        format_bearings(az, precision=_SECOND_DEG),
        _float_list(length),
        _float_list(st.latitudes_m),
        _float_list(st.departures_m),
        _float_list(lat_c),
        _float_list(dep_c),
        _float_list(a_lat),
        _float_list(a_dep),
        _float_list(a_len),
        _float_list(a_az),
        format_bearings(a_az, precision=_SECOND_DEG),
        strict=True,
    )
    courses = tuple(
        ClosureCourse(
            index=c.index,
            call=c.call,
            azimuth_deg=a,
            bearing=a_text,
            length_m=ln,
            latitude_m=la,
            departure_m=de,
            latitude_correction_m=lc,
            departure_correction_m=dc,
            adjusted_latitude_m=ala,
            adjusted_departure_m=ade,
            adjusted_length_m=aln,
            adjusted_azimuth_deg=aa,
            adjusted_bearing=aa_text,
        )
        for c, a, a_text, ln, la, de, lc, dc, ala, ade, aln, aa, aa_text in columns
    )

    def stations(n_arr: np.ndarray, e_arr: np.ndarray) -> tuple[ClosureStation, ...]:
        return tuple(
            ClosureStation(i, n + 0.0, e + 0.0)
            for i, (n, e) in enumerate(zip(_float_list(n_arr), _float_list(e_arr), strict=True))
        )

    perimeter = math.fsum(length.tolist())
    mis_n = mis_e = mis = mis_az = precision = None
    area = crossing = None
    if adj is not None:
        clo = adj.closure
        mis_n, mis_e, mis = clo.misclosure_north_m, clo.misclosure_east_m, clo.misclosure_m
        mis_az, precision = clo.misclosure_azimuth_deg, clo.precision
        foot = _acre_foot(conv)
        try:
            if not closed:
                raise TraverseError(
                    f"open line closed on its found end (course {len(conv.courses)}): no area"
                )
            fa = tv.figure_area(north_m, east_m, foot=foot)
        except tv.SelfCrossingError as err:
            crossing = tuple(err.courses)
            notes.append(err.message)
        except TraverseError as err:
            notes.append(err.message)
        else:
            cf = math.fsum(c.combined_factor for c in conv.courses) / len(conv.courses)
            area = AreaFigures(
                ground_m2=fa.area_m2,
                hectares=fa.hectares,
                acres=fa.acres,
                grid_m2=fa.area_m2 * cf * cf,
                combined_factor=cf,
                orientation=fa.orientation,
                acre_m2=fa.acre_m2,
                foot=foot,
            )
    else:
        notes.append("open traverse (closed = false): no misclosure, adjustment or area")

    attraction = _attraction(conv, attraction_tolerance_deg)

    if bearing_sigma_deg is None:
        bearing_sigma_deg = 0.5 * max(c.recorded.precision_deg for c in conv.courses)
    dec_sigma = None
    if conv.reference == "magnetic" and conv.declination_source == "model":
        dec_sigma = conv.courses[0].declination_record_sigma_deg
    try:
        eb = tv.error_budget(
            az, length, bearing_sigma_deg=bearing_sigma_deg, declination_sigma_deg=dec_sigma
        )
    except LodelineError as err:
        raise err.located(file=conv.file, field="bearing_sigma_deg") from None
    budget = tuple(
        BudgetStation(i, d, b, dm, t)
        for i, (d, b, dm, t) in enumerate(
            zip(
                _float_list(eb.distance_m),
                _float_list(eb.bearing_m),
                _float_list(eb.declination_m),
                _float_list(eb.total_m),
                strict=True,
            )
        )
    )
    return SurveyClosure(
        file=conv.file,
        closed=closed,
        north=north,
        rotation_deg=rotation,
        adjustment=adjust,
        courses=courses,
        stations=stations(north_m, east_m),
        unadjusted_stations=stations(st.north_m, st.east_m),
        perimeter_m=perimeter,
        misclosure_north_m=mis_n,
        misclosure_east_m=mis_e,
        misclosure_m=mis,
        misclosure_azimuth_deg=mis_az,
        misclosure_bearing=_fmt_bearing(mis_az),
        precision=precision,
        area=area,
        crossing=crossing,
        angles=figure.angles,
        attraction=attraction,
        bearing_sigma_deg=float(bearing_sigma_deg),
        declination_sigma_deg=dec_sigma,
        budget=budget,
        notes=tuple(notes),
        closes_on=closes_on,
        found_gaps=_found_gaps(conv),
    )


def _closes_on(conv: DocumentConversion) -> str | None:
    """ "beginning", "found end" or None (see SurveyClosure.closes_on)."""
    from geo.retrace import closes_on_found_end

    if conv.document.closed:
        return "beginning"
    return "found end" if closes_on_found_end(conv) else None


def _closing_point(conv: DocumentConversion, rotation: float, st: Any) -> tuple[float, float]:
    """Where the courses should end in the closure's frame: (0, 0), or an open line's found
    end (geo.retrace.found_end_target)."""
    if conv.document.closed or _closes_on(conv) is None:
        return 0.0, 0.0
    from geo.retrace import found_end_target

    return found_end_target(
        conv,
        rotation_deg=rotation,
        end_north_m=float(st.north_m[-1]),
        end_east_m=float(st.east_m[-1]),
    )


def _found_gaps(conv: DocumentConversion) -> tuple[Any, ...]:
    from geo.retrace import found_gaps

    return found_gaps(conv)


# --------------------------------------------------------------------------------------------
# Record-to-found fit
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FitResidual:
    """Found minus fitted position of one found station (metres, grid east and north)."""

    index: int
    east_m: float
    north_m: float


@dataclass(frozen=True)
class SurveyFit:
    """The record-to-found fit of a document (see the module docstring, *Fit*).

    ``rotation_deg``: clockwise, recorded azimuths onto grid azimuths. ``scale``: found grid
    length / recorded length (1 when not fitted: ``with_scale`` False). ``exact``: two stations
    with scale, residuals zero by construction. ``convergence_deg``/``combined_factor``: at the
    mean found position. ``true_rotation_deg`` = rotation + gamma. ``empirical_declination_deg``:
    the same for a magnetic record, else ``None``. ``model_declination_deg``/``model``: the
    field model at the record date (``None`` when none covers it or the record has no date);
    ``stated_declination_deg``: the document's stated declination, if any.
    """

    file: str | None
    reference: str
    with_scale: bool
    exact: bool
    rotation_deg: float
    scale: float
    translation_east_m: float
    translation_north_m: float
    rms_m: float
    residuals: tuple[FitResidual, ...]
    convergence_deg: float
    combined_factor: float
    true_rotation_deg: float
    empirical_declination_deg: float | None
    model_declination_deg: float | None
    model: str | None
    stated_declination_deg: float | None
    record_length_factor: float | None
    notes: tuple[str, ...]
    #: Standard error of the rotation (degrees; geo.fit.SimilarityFit.rotation_sigma_deg).
    rotation_sigma_deg: float | None = None

    def as_dict(self) -> dict[str, Any]:
        """The ``lodeline fit --json`` object (plain JSON values)."""
        return {
            "file": self.file,
            "reference": self.reference,
            "with_scale": self.with_scale,
            "exact": self.exact,
            "rotation_deg": self.rotation_deg,
            "scale": self.scale,
            "translation_east_m": self.translation_east_m,
            "translation_north_m": self.translation_north_m,
            "rms_m": self.rms_m,
            "residuals": [
                {"index": r.index, "east_m": r.east_m, "north_m": r.north_m} for r in self.residuals
            ],
            "convergence_deg": self.convergence_deg,
            "combined_factor": self.combined_factor,
            "true_rotation_deg": self.true_rotation_deg,
            "empirical_declination_deg": self.empirical_declination_deg,
            "model_declination_deg": self.model_declination_deg,
            "model": self.model,
            "stated_declination_deg": self.stated_declination_deg,
            "record_length_factor": self.record_length_factor,
            "rotation_sigma_deg": self.rotation_sigma_deg,
            "notes": list(self.notes),
        }


def _found(conv: DocumentConversion) -> list[Any]:
    """The found stations (geo.north.Station), the point of beginning first when measured."""
    out = [conv.stations[0]] if conv.place_by_grid else []
    out += [c.found for c in conv.courses if c.found is not None]
    return out


def found_count(conv: DocumentConversion) -> int:
    """Number of stations with measured positions (the fit needs at least two)."""
    return len(_found(conv))


def _model_declination(
    conv: DocumentConversion, lat: float, lon: float
) -> tuple[float | None, str | None]:
    """The field model's D at the record date (None when no model covers it)."""
    if conv.record_year is None:
        return None, None
    from geo.magnetic import field_at

    name = conv.record_model or conv.document.record.model
    try:
        fv = field_at(lat=lat, lon=lon, year=conv.record_year, height_m=conv.height_m, model=name)
    except ModelRangeError:
        return None, None
    d = float(np.ravel(np.asarray(fv.declination_deg, dtype=float))[0])
    model = fv.model if isinstance(fv.model, str) else str(np.ravel(fv.model)[0])
    return d, model


def fit_document(conv: DocumentConversion, *, with_scale: bool = True) -> SurveyFit:
    """Fit the record figure onto the found positions (see the module docstring, *Fit*).

    Raises :class:`FitError` (one line, names the file) for fewer than two found stations or an
    undetermined rotation.
    """
    from geo import grid as _grid
    from geo.fit import fit_similarity
    from geo.traverse import march

    found = _found(conv)
    if len(found) < 2:
        raise FitError(
            f"the record-to-found fit needs found positions on two or more stations, "
            f"{len(found)} given (add found = {{easting, northing}} or {{lat, lon}} to courses)",
            file=conv.file,
            field="found",
        )
    figure = record_figure(conv)
    st = march(np.asarray(figure.azimuth_deg), np.asarray(figure.length_m))
    idx = [s.index for s in found]
    unit = conv.grid_unit_m
    p0 = conv.stations[0]
    try:
        fit = fit_similarity(
            record_east_m=st.east_m[idx],
            record_north_m=st.north_m[idx],
            found_east_m=[(s.easting - p0.easting) * unit for s in found],
            found_north_m=[(s.northing - p0.northing) * unit for s in found],
            with_scale=with_scale,
            indices=idx,
        )
    except LodelineError as err:
        raise err.located(file=conv.file, field="found") from None
    lat = math.fsum(s.lat for s in found) / len(found)
    lon = math.fsum(s.lon for s in found) / len(found)
    try:
        gf = _grid.grid_factors(conv.crs, lat=lat, lon=lon, height_m=conv.height_m)
    except LodelineError as err:
        raise err.located(file=conv.file, field="found") from None
    gamma, cf = float(gf.convergence_deg), float(gf.combined_factor)
    from geo.angles import angle_difference

    true_rotation = float(angle_difference(fit.rotation_deg + gamma, 0.0))
    magnetic = conv.reference == "magnetic"
    model_d, model = _model_declination(conv, lat, lon)
    notes: list[str] = []
    if fit.exact:
        notes.append(
            "two found stations with a fitted scale: the fit is exact, the residuals say "
            "nothing about the record (add a third found station or use --no-scale)"
        )
    if magnetic and model_d is None:
        notes.append("no field model covers the record date: only the empirical declination")
    return SurveyFit(
        file=conv.file,
        reference=conv.reference,
        with_scale=with_scale,
        exact=fit.exact,
        rotation_deg=fit.rotation_deg,
        scale=fit.scale,
        translation_east_m=fit.translation_east_m,
        translation_north_m=fit.translation_north_m,
        rms_m=fit.rms_m,
        residuals=tuple(
            FitResidual(i, float(e), float(n))
            for i, e, n in zip(fit.indices, fit.residual_east_m, fit.residual_north_m, strict=True)
        ),
        convergence_deg=gamma,
        combined_factor=cf,
        true_rotation_deg=true_rotation,
        empirical_declination_deg=true_rotation if magnetic else None,
        model_declination_deg=model_d,
        model=model,
        stated_declination_deg=conv.stated_declination_deg,
        record_length_factor=fit.scale / cf if with_scale else None,
        notes=tuple(notes),
        rotation_sigma_deg=fit.rotation_sigma_deg,
    )
