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

One figure: the marched stations
    The closure is the closure of the stations :mod:`geo.north` marched (the one conversion
    every output takes its stations from): :func:`plane_figure` reduces their grid offsets
    from the point of beginning to the ground by one factor, the length-weighted mean
    combined factor of the courses. The misclosure is the gap between the marched closing
    station and the point of beginning; the adjustment is made once on that figure, along
    grid north and east (the transit rule depends on the meridian it is taken along); the
    area is the shoelace area of the adjusted figure; the export's adjusted stations are the
    same figure scaled back to the grid (:func:`adjusted_grid_stations`). Referring the
    closure to another north (``north="true"``, ``"grid"`` or ``"magnetic"`` = magnetic north
    at the record date) turns the whole figure by **one** angle, ``rotation_deg``: gamma at
    the point of beginning for true north, gamma - D (record date) there for magnetic north.
    So no closure figure (misclosure length, precision, area, corrections' sizes) depends on
    the choice of north. Each course's ``bearing``/``azimuth_deg`` is the conversion's (the
    same text ``lodeline convert`` shows, at the course's own station); its latitude and
    departure are the components of its marched chord in the turned figure, which differ from
    ``L cos az`` of that bearing by the change of gamma (and D) between the course's station
    and the point of beginning. Course ``length_m`` is the recorded ground length (the chord in the
    figure differs from it by the course's own factor over the figure's, a few ppm);
    ``perimeter_m`` is their sum.

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
    On the plane figure: lateral displacement of each station from a bearing uncertainty
    (``bearing_sigma_deg``,
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
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

import numpy as np

from .errors import FitError, InputError, LodelineError, ModelRangeError, TraverseError
from .notes import Note, messages

if TYPE_CHECKING:
    from .north import DocumentConversion

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
    from .bearings import format_bearing

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


def angular_closure(
    rec: Sequence[Any], document: Any, file: str | None
) -> tuple[AngularClosure | None, str | None]:
    """The angular misclosure of parsed courses ``rec`` (:class:`geo.document.RecordedCourse`)
    of ``document`` when it gives every angle of a closed figure, else ``(None, why not)``
    (``(None, None)`` when it gives none). :func:`geo.north.convert_document` marches the
    figure with the balanced azimuths (see the module docstring, *Angles*)."""
    from .traverse import adjust_interior_angles

    given = [r.angle_deg is not None for r in rec]
    if not any(given):
        return None, None
    if not document.closed:
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
    right = document.record.angles == "right"
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
        raise err.located(file=file) from None
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
    angles = conv.angles
    return RecordFigure(
        recorded_azimuth_deg=recorded,
        azimuth_deg=angles.azimuth_deg if angles is not None else recorded,
        length_m=lengths,
        angles=angles,
        angles_note=conv.angles_note,
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
    declination, and both combined; ``distance_m`` from the point of beginning.
    ``declination_m`` and ``total_m`` are ``None`` when the declination's uncertainty is
    unknown (see :func:`declination_term`)."""

    index: int
    distance_m: float
    bearing_m: float
    declination_m: float | None
    total_m: float | None


@dataclass(frozen=True)
class SurveyClosure:
    """The closure of a document (see the module docstring for every convention).

    ``closed``: the document's ``closed``. ``north``: the chosen north; ``rotation_deg`` the
    angle from the recorded azimuths to it. ``adjustment``: the rule applied. Misclosure fields,
    ``precision`` (N of 1:N) and ``area`` are ``None`` for an open traverse; ``precision`` and
    the misclosure direction also when the misclosure is zero. ``area`` is ``None`` as well
    when the courses cross (``crossing``) or fewer than three courses enclose nothing
    (``notes`` says why). ``stations`` are adjusted, ``unadjusted_stations`` as marched.
    ``notes`` are the closure's notes as text; ``note_objects`` the conversion's notes and
    the closure's as :class:`geo.notes.Note` (the JSON's ``notes``). ``declination_term`` is
    :func:`declination_term`'s source; ``combined_factor`` the figure's one factor and
    ``grid_unit_m`` the grid's metres per unit.
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
    declination_term: str
    budget: tuple[BudgetStation, ...]
    combined_factor: float
    grid_unit_m: float
    notes: tuple[str, ...]
    note_objects: tuple[Note, ...] = ()
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
            "combined_factor": self.combined_factor,
            "grid_unit_m": self.grid_unit_m,
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
                "declination_term": self.declination_term,
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
            "notes": [n.as_dict() for n in self.note_objects],
        }


def _north_rotation(conv: DocumentConversion, north: str) -> float:
    """Degrees to add to a grid azimuth of the figure to refer it to ``north`` at the point of
    beginning: gamma there for true north, gamma - D (record date) for magnetic north (gamma
    alone when D is unknown: the figure was then marched with the recorded bearings as true)."""
    if north not in NORTHS:
        raise InputError(f"unknown north {north!r}: use true, grid or magnetic", field="north")
    first = conv.courses[0]
    if north == "grid":
        return 0.0
    gamma = float(first.convergence_deg)
    if north == "true":
        return gamma
    if first.azimuth.magnetic_record is None:
        raise InputError(
            "no magnetic north at the record date: the document gives neither a record date a "
            "field model covers nor a stated declination (use --north true or grid)",
            file=conv.file,
            field="north",
        )
    return gamma - float(first.declination_record_deg or 0.0)


def _acre_foot(conv: DocumentConversion) -> str:
    from . import units

    record = conv.document.record
    try:
        return units.choose_foot(record.foot, record.date).foot
    except LodelineError:
        return "international"


def _attraction(
    conv: DocumentConversion, tolerance_deg: float | None
) -> LocalAttractionResult | None:
    from .bearings import parse_bearing
    from .traverse import local_attraction

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
    from .retrace import closes_on_found_end

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


@dataclass(frozen=True)
class PlaneFigure:
    """The marched figure of :mod:`geo.north` in the plane of the closure.

    The stations are the conversion's (grid CRS) reduced to ground metres by one factor:
    ``north_m``/``east_m`` (n + 1) = grid offsets from the point of beginning x metres per
    grid unit / ``factor``, in **grid north**. ``factor`` is the mean combined factor of the
    courses weighted by their lengths (each course's own factor is its grid path length over
    its ground length). ``azimuth_deg``/``length_m`` (n) are the courses' chords in this plane
    (grid azimuth, metres), ``recorded_length_m`` their recorded ground lengths. One factor and
    (for another north) one rotation keep the figure the exported one: the gap between its
    last station and the point of beginning is the exported gap reduced to the ground.
    """

    factor: float
    north_m: np.ndarray
    east_m: np.ndarray
    azimuth_deg: np.ndarray
    length_m: np.ndarray
    recorded_length_m: np.ndarray


def plane_figure(conv: DocumentConversion) -> PlaneFigure:
    """The conversion's marched stations as a plane figure (see :class:`PlaneFigure`)."""
    from .traverse import azimuth_of

    stations = conv.figure_stations
    unit = conv.grid_unit_m
    recorded = np.array([c.length_m for c in conv.courses], dtype=float)
    grid_len = np.array([c.grid_length_m for c in conv.courses], dtype=float)
    total = math.fsum(recorded.tolist())
    factor = math.fsum(grid_len.tolist()) / total if total > 0.0 else 1.0
    if not math.isfinite(factor):
        factor = float(np.nanmean(np.array([c.combined_factor for c in conv.courses])))
    e0, n0 = stations[0].easting, stations[0].northing
    east = np.array([s.easting - e0 for s in stations], dtype=float) * (unit / factor)
    north = np.array([s.northing - n0 for s in stations], dtype=float) * (unit / factor)
    d_n, d_e = np.diff(north), np.diff(east)
    return PlaneFigure(
        factor=factor,
        north_m=north,
        east_m=east,
        azimuth_deg=np.asarray(azimuth_of(d_n, d_e), dtype=float),
        length_m=np.hypot(d_n, d_e),
        recorded_length_m=recorded,
    )


def _turned(north_m: Any, east_m: Any, angle_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """Vectors (north, east components, metres) referred to a north ``angle_deg`` to the left
    of their own: every azimuth grows by ``angle_deg`` (clockwise positive)."""
    c, s = math.cos(math.radians(angle_deg)), math.sin(math.radians(angle_deg))
    n, e = np.asarray(north_m, dtype=float), np.asarray(east_m, dtype=float)
    return n * c - e * s, e * c + n * s


@dataclass(frozen=True)
class _Adjusted:
    """The plane figure adjusted (grid north): corrections, adjusted courses and stations."""

    lat_c: np.ndarray
    dep_c: np.ndarray
    lat: np.ndarray
    dep: np.ndarray
    north_m: np.ndarray
    east_m: np.ndarray
    closure: Any


def _adjusted(conv: DocumentConversion, plane: PlaneFigure, method: str) -> _Adjusted:
    """Adjust the plane figure in grid north (the compass rule turns with the figure; the
    transit rule does not, so the figure is adjusted once, along grid north and east, and the
    result turned to the chosen north). An open traverse keeps its stations."""
    from . import traverse as tv

    try:
        if _closes_on(conv) is not None:
            end_n, end_e = _plane_target(conv, plane)
            adj = tv.adjust(plane.azimuth_deg, plane.length_m, method=method, end_north_m=end_n,
                            end_east_m=end_e)  # fmt: skip
            return _Adjusted(
                adj.latitude_corrections_m,
                adj.departure_corrections_m,
                adj.latitudes_m,
                adj.departures_m,
                adj.north_m if method != "none" else plane.north_m,
                adj.east_m if method != "none" else plane.east_m,
                adj.closure,
            )
    except LodelineError as err:
        raise err.located(file=conv.file) from None
    zeros = np.zeros(plane.length_m.size)
    return _Adjusted(
        zeros, zeros, np.diff(plane.north_m), np.diff(plane.east_m), plane.north_m,
        plane.east_m, None,
    )  # fmt: skip


def _plane_target(conv: DocumentConversion, plane: PlaneFigure) -> tuple[float, float]:
    """Where the figure should end in the plane (metres north and east of the point of
    beginning, grid north): the point of beginning, or an open line's found end (its grid
    offset reduced by the figure's factor, as the stations are)."""
    if conv.document.closed:
        return 0.0, 0.0
    found = conv.courses[-1].found
    p0 = conv.figure_stations[0]
    scale = conv.grid_unit_m / plane.factor
    return (found.northing - p0.northing) * scale, (found.easting - p0.easting) * scale


def adjusted_grid_stations(
    conv: DocumentConversion, adjust: str | None = None
) -> tuple[str, np.ndarray, np.ndarray, PlaneFigure]:
    """``(rule, easting, northing, plane)``: the stations adjusted as the closure adjusts them,
    in the grid CRS's unit (with ``"none"`` exactly the conversion's stations). The export
    takes its positions from here."""
    method = resolve_adjustment(conv, adjust)
    plane = plane_figure(conv)
    adj = _adjusted(conv, plane, method)
    p0 = conv.figure_stations[0]
    if method == "none":
        e = np.array([s.easting for s in conv.figure_stations], dtype=float)
        n = np.array([s.northing for s in conv.figure_stations], dtype=float)
        return method, e, n, plane
    scale = plane.factor / conv.grid_unit_m
    return method, p0.easting + adj.east_m * scale, p0.northing + adj.north_m * scale, plane


def _closure_courses(
    conv: DocumentConversion, north: str, adj: _Adjusted, plane: PlaneFigure, rotation: float
) -> tuple[ClosureCourse, ...]:
    """Per course: the conversion's bearing in ``north`` (as every output shows it), the plane
    components turned to ``north``, corrections and adjusted course."""
    from .angles import normalize_azimuth
    from .bearings import format_bearings
    from .traverse import azimuth_of

    lat, dep = _turned(np.diff(plane.north_m), np.diff(plane.east_m), rotation)
    lat_c, dep_c = _turned(adj.lat_c, adj.dep_c, rotation)
    a_lat, a_dep = _turned(adj.lat, adj.dep, rotation)
    a_len = np.hypot(a_lat, a_dep)
    a_az = np.asarray(normalize_azimuth(azimuth_of(a_lat, a_dep)), dtype=float)
    key = "magnetic_record" if north == "magnetic" else north
    columns = zip(
        conv.courses,
        _float_list(plane.length_m),
        _float_list(lat),
        _float_list(dep),
        _float_list(lat_c),
        _float_list(dep_c),
        _float_list(a_lat),
        _float_list(a_dep),
        _float_list(a_len),
        _float_list(a_az),
        format_bearings(a_az, precision=_SECOND_DEG),
        strict=True,
    )
    return tuple(
        ClosureCourse(
            index=c.index,
            call=c.call,
            azimuth_deg=getattr(c.azimuth, key),
            bearing=getattr(c.bearing, key),
            length_m=c.length_m,
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
        for c, ln, la, de, lc, dc, ala, ade, aln, aa, aa_text in columns
    )


def _stations(north_m: Any, east_m: Any, rotation: float) -> tuple[ClosureStation, ...]:
    n_arr, e_arr = _turned(north_m, east_m, rotation)
    return tuple(
        ClosureStation(i, n + 0.0, e + 0.0)
        for i, (n, e) in enumerate(zip(_float_list(n_arr), _float_list(e_arr), strict=True))
    )


def _misclosure(adj: _Adjusted, rotation: float, perimeter_m: float) -> tuple[Any, ...]:
    """``(north, east, length, azimuth, precision)`` of the gap from the point of beginning
    to the marched closing station, in the chosen north (all ``None`` for an open traverse;
    zero components and ``None`` direction and precision for a figure that closes exactly)."""
    from .traverse import azimuth_of

    clo = adj.closure
    if clo is None:
        return None, None, None, None, None
    if not clo.misclosure_m:
        return 0.0, 0.0, clo.misclosure_m, None, None
    n, e = (float(v) for v in _turned(clo.misclosure_north_m, clo.misclosure_east_m, rotation))
    return n, e, clo.misclosure_m, float(azimuth_of(n, e)), perimeter_m / clo.misclosure_m


def _area(
    conv: DocumentConversion, adj: _Adjusted, plane: PlaneFigure, notes: list[Note]
) -> tuple[AreaFigures | None, tuple[int, int] | None]:
    """Shoelace area of the adjusted plane figure (ground), and the grid area."""
    from . import traverse as tv

    foot = _acre_foot(conv)
    try:
        fa = tv.figure_area(adj.north_m, adj.east_m, foot=foot)
    except tv.SelfCrossingError as err:
        notes.append(Note("no_area", err.message))
        return None, tuple(err.courses)
    except TraverseError as err:
        notes.append(Note("no_area", err.message))
        return None, None
    cf = plane.factor
    return (
        AreaFigures(
            ground_m2=fa.area_m2,
            hectares=fa.hectares,
            acres=fa.acres,
            grid_m2=fa.area_m2 * cf * cf,
            combined_factor=cf,
            orientation=fa.orientation,
            acre_m2=fa.acre_m2,
            foot=foot,
        ),
        None,
    )


def declination_term(conv: DocumentConversion) -> tuple[str, float | None]:
    """``(source, sigma_deg)`` of the declination term of the error budget: ``"model"`` (the
    model's published 1σ at the record date at the point of beginning), ``"stated"``
    (``record.declination_sigma``), ``"unknown"`` (a magnetic record with neither: the term
    is unknown, not zero) or ``"not applicable"`` (a true or grid record: D does not enter
    the figure)."""
    if conv.reference != "magnetic":
        return "not applicable", None
    published = conv.courses[0].declination_record_sigma_deg if conv.courses else None
    if conv.declination_source == "model" and published is not None:
        return "model", float(published)
    if conv.stated_declination_sigma_deg is not None:
        return "stated", float(conv.stated_declination_sigma_deg)
    return "unknown", None


def _budget(
    conv: DocumentConversion, plane: PlaneFigure, bearing_sigma_deg: float | None
) -> tuple[float, float | None, tuple[BudgetStation, ...]]:
    """The error budget of the plane figure (see the module docstring, *Error budget*)."""
    from . import traverse as tv

    if bearing_sigma_deg is None:
        bearing_sigma_deg = 0.5 * max(c.recorded.precision_deg for c in conv.courses)
    source, dec_sigma = declination_term(conv)
    try:
        eb = tv.error_budget(  # recorded lengths: L sigma per course (Ghilani & Wolf)
            plane.azimuth_deg,
            plane.recorded_length_m,
            bearing_sigma_deg=bearing_sigma_deg,
            declination_sigma_deg=dec_sigma,
        )
    except LodelineError as err:
        raise err.located(file=conv.file, field="bearing_sigma_deg") from None
    rows = zip(
        _float_list(eb.distance_m),
        _float_list(eb.bearing_m),
        _float_list(eb.declination_m),
        _float_list(eb.total_m),
        strict=True,
    )
    if source == "unknown":  # the declination term and so the total are not known
        rows = ((d, b, None, None) for d, b, _, _ in rows)
    budget = tuple(BudgetStation(i, d, b, dm, t) for i, (d, b, dm, t) in enumerate(rows))
    return float(bearing_sigma_deg), dec_sigma, budget


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
        direction in the result, at the point of beginning. A rotation: no closure figure
        depends on it.
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
    if not conv.courses:
        from .errors import DocumentError

        raise DocumentError("has no courses: nothing to close", file=conv.file, field="course")
    closed = bool(conv.document.closed)
    adjust = resolve_adjustment(conv, adjust)
    closes_on = _closes_on(conv)
    rotation = _north_rotation(conv, north)
    notes: list[Note] = []
    if conv.angles_note:
        notes.append(Note("angles_not_balanced", conv.angles_note))
    if conv.angles is not None:
        notes.append(
            Note("angles_balanced", "azimuths carried from course 1 with the balanced angles")
        )
    from . import omitted, retrace

    extra = omitted.closure_notes([c.recorded for c in conv.courses])
    extra += retrace.closure_notes(conv)
    notes += [Note("closure_remark", text) for text in extra]
    # Stages, in order: the plane figure, its adjustment, the courses, area, attraction, budget.
    plane = plane_figure(conv)
    adj = _adjusted(conv, plane, adjust)
    courses = _closure_courses(conv, north, adj, plane, rotation)
    perimeter = math.fsum(plane.recorded_length_m.tolist())
    mis_n, mis_e, mis, mis_az, precision = _misclosure(adj, rotation, perimeter)
    if any(getattr(c.recorded, "solved", None) for c in conv.courses):
        precision = None  # the closure made the figure close (geo.omitted says so)
    area = crossing = None
    if adj.closure is not None:
        if closed:
            area, crossing = _area(conv, adj, plane, notes)
        else:
            notes.append(Note("no_area", f"open line closed on its found end (course "
                              f"{len(conv.courses)}): no area"))  # fmt: skip
    else:
        notes.append(
            Note(
                "open_traverse",
                "open traverse (closed = false): no misclosure, adjustment or area",
            )
        )
    sigma, dec_sigma, budget = _budget(conv, plane, bearing_sigma_deg)
    term = declination_term(conv)[0]
    if term == "unknown":
        notes.append(
            Note(
                "declination_sigma_unknown",
                "error budget: the declination's uncertainty is unknown (the model publishes "
                "none and record.declination_sigma is not given), so the declination term and "
                "the total are unknown, not zero",
            )
        )
    return SurveyClosure(
        file=conv.file,
        closed=closed,
        north=north,
        rotation_deg=rotation,
        adjustment=adjust,
        courses=courses,
        stations=_stations(adj.north_m, adj.east_m, rotation),
        unadjusted_stations=_stations(plane.north_m, plane.east_m, rotation),
        perimeter_m=perimeter,
        misclosure_north_m=mis_n,
        misclosure_east_m=mis_e,
        misclosure_m=mis,
        misclosure_azimuth_deg=mis_az,
        misclosure_bearing=_fmt_bearing(mis_az),
        precision=precision,
        area=area,
        crossing=crossing,
        angles=conv.angles,
        attraction=_attraction(conv, attraction_tolerance_deg),
        bearing_sigma_deg=sigma,
        declination_sigma_deg=dec_sigma,
        declination_term=term,
        budget=budget,
        combined_factor=plane.factor,
        grid_unit_m=conv.grid_unit_m,
        # the budget's own note is said where the budget is shown (close, report, JSON)
        notes=messages([n for n in notes if n.code != "declination_sigma_unknown"]),
        note_objects=(*conv.notes, *notes),
        closes_on=closes_on,
        found_gaps=_found_gaps(conv),
    )


def _closes_on(conv: DocumentConversion) -> str | None:
    """ "beginning", "found end" or None (see SurveyClosure.closes_on)."""
    from .retrace import closes_on_found_end

    if conv.document.closed:
        return "beginning"
    return "found end" if closes_on_found_end(conv) else None


def _closing_point(conv: DocumentConversion, rotation: float, st: Any) -> tuple[float, float]:
    """Where the courses should end in the closure's frame: (0, 0), or an open line's found
    end (geo.retrace.found_end_target)."""
    if conv.document.closed or _closes_on(conv) is None:
        return 0.0, 0.0
    from .retrace import found_end_target

    return found_end_target(
        conv,
        rotation_deg=rotation,
        end_north_m=float(st.north_m[-1]),
        end_east_m=float(st.east_m[-1]),
    )


def _found_gaps(conv: DocumentConversion) -> tuple[Any, ...]:
    from .retrace import found_gaps

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
    from .magnetic import field_at

    name = conv.record_model_query
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
    from . import grid as _grid
    from .fit import fit_similarity
    from .traverse import march

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
    from .angles import angle_difference

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
