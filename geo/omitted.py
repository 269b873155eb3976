"""Omitted measurements: a call whose bearing, distance or both are written "?" is completed
from the closure of the figure.

Writing a missing part
    ``call = "? 20 perches to a white oak"`` (bearing missing), ``call = "N 45 E ?"`` (distance
    missing), ``call = "?"`` (both); or the keys ``bearing = "?"`` and/or ``distance = "?"``.
    Words after the "?" or after the distance are the call's note, as in any call.

The cases (Ghilani & Wolf, *Elementary Surveying*, "omitted measurements"; the closure gives
two equations, so exactly two unknowns)
    - one course's bearing and distance: the closing vector of the other courses, unique;
    - two distances: two lines meet in one point (none when they are parallel or a distance
      comes out negative);
    - one course's bearing and another course's distance: a circle and a line meet in up to two
      points, each with a positive distance: **two solutions** when both distances are
      positive (the ambiguous case);
    - two bearings: two circles meet in two points mirrored across the line joining the gap's
      ends: **two solutions** (the ambiguous case) unless they touch.

Frame and units
    Everything is in the record's own figure: recorded azimuths (degrees clockwise from the
    recorded north, [0, 360)) and recorded ground lengths (metres), the figure marched from the
    point of beginning with latitudes ``L cos az`` and departures ``L sin az``; the unknowns
    make the sums of latitudes and departures zero. Bearings are written to one second, lengths
    in the call's unit (else ``record.distance_unit``, else metres) to 1/10,000 of it.

A figure completed from its closure closes exactly: its precision can no longer be computed,
and every error of the other calls is hidden in the solved parts (:func:`closure_notes`).
Where two solutions exist the document is refused with both named: the record or the ground
must choose.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from .errors import DocumentError, LodelineError

if TYPE_CHECKING:
    from .document import Course, RecordedCourse

__all__ = ["OmittedCourse", "closure_notes", "has_unknown", "read_omitted", "solve_omitted"]

UNKNOWN = "?"


@dataclass(frozen=True)
class OmittedCourse:
    """A course with a missing part: ``azimuth_deg`` (recorded north) or ``None`` when the
    bearing is missing, ``length_m`` or ``None`` when the distance is; ``unit`` the unit the
    solved length is written in; ``text`` the call as written; ``note`` the call's words."""

    index: int
    text: str
    azimuth_deg: float | None
    length_m: float | None
    length_unit: str
    metres_per_unit: float
    note: str | None
    course_note: str | None


def has_unknown(course: Course) -> bool:
    """True when the course writes "?" for its bearing or distance."""
    if course.call is not None:
        return UNKNOWN in course.call
    return course.bearing == UNKNOWN or course.distance == UNKNOWN


def _unit(ctx: dict[str, Any], unit: str | None) -> tuple[str, float]:
    from .units import metres_per, unit_name

    name = unit_name(unit or ctx.get("default_unit") or "m")
    return name, float(metres_per(name, foot=ctx.get("foot"), vara_inches=ctx.get("vara_inches")))


def read_omitted(course: Course, index: int, ctx: dict[str, Any]) -> OmittedCourse:
    """Read a course that has a "?" (see the module notes); ``ctx`` holds the document's
    ``default_unit``, ``foot`` and ``vara_inches``. Raises :class:`DocumentError` naming the
    course and key for anything else in it that does not read."""
    from .bearings import parse_bearing
    from .calls import parse_call

    where = {"course": index}
    if course.back is not None or course.every is not None or course.angle is not None:
        raise DocumentError(
            "a course with '?' takes no back bearing, every or angle", field="call", **where
        )
    if course.call is None:
        return _from_keys(course, index, ctx)
    text = course.call.strip()
    head, _, tail = text.partition(UNKNOWN)
    head, tail = head.strip(), tail.strip()
    if UNKNOWN in tail:
        raise DocumentError(
            "write '?' once: '?', '? 20 perches' or 'N 45 E ?'", field="call", **where
        )
    try:
        if not head:  # "?" or "? 20 perches to a white oak"
            # a distance starts with a figure; other words after "?" are the call's note
            reads = tail[:1].isdigit() or tail[:1] == "."
            call = parse_call(tail, **ctx) if reads else None
            if call is not None and call.bearing is not None:
                raise DocumentError(
                    "'?' stands for the bearing: write it before the distance ('? 20 perches')",
                    field="call",
                    **where,
                )
            distance = None if call is None else call.distance
            if distance is not None and not distance.metres > 0.0:
                raise DocumentError(
                    f"distance must be positive, not {distance.text!r}", field="call", **where
                )
            note = (call.note or None) if call is not None else (tail or None)
            unit, per = _unit(ctx, None if distance is None else distance.unit)
            return OmittedCourse(
                index,
                text,
                None,
                None if distance is None else distance.metres,
                unit,
                per,
                note,
                course.note,
            )
        bearing = parse_bearing(head)  # "N 45 E ? [to a stone]"
    except LodelineError as err:
        raise DocumentError(
            f"{err.message} ('?' stands for the distance: write it after the bearing, 'N 45 E ?')",
            field="call",
            **where,
        ) from None
    unit, per = _unit(ctx, None)
    return OmittedCourse(
        index, text, bearing.azimuth_deg, None, unit, per, tail or None, course.note
    )


def _from_keys(course: Course, index: int, ctx: dict[str, Any]) -> OmittedCourse:
    from .bearings import parse_bearing
    from .calls import parse_distance

    az = length = None
    unit_text = course.unit
    try:
        if course.bearing not in (None, UNKNOWN):
            az = parse_bearing(course.bearing).azimuth_deg
        if course.distance not in (None, UNKNOWN):
            value = course.distance
            text = value if isinstance(value, str) else repr(value)
            d = parse_distance(f"{text} {unit_text}" if unit_text else text, **ctx)
            length, unit_text = d.metres, d.unit
            if not length > 0.0:
                raise DocumentError(
                    f"must be a positive distance, not {d.text!r}", field="distance", course=index
                )
    except LodelineError as err:
        field = "bearing" if az is None and course.bearing not in (None, UNKNOWN) else "distance"
        raise DocumentError(err.message, field=field, course=index) from None
    unit, per = _unit(ctx, unit_text)
    text = f"{course.bearing or UNKNOWN} {course.distance or UNKNOWN}"
    return OmittedCourse(index, text, az, length, unit, per, None, course.note)


def _vec(az_deg: float, length: float) -> complex:
    """north + i*east of a course."""
    a = math.radians(az_deg)
    return complex(length * math.cos(a), length * math.sin(a))


def _az(v: complex) -> float:
    return math.degrees(math.atan2(v.imag, v.real)) % 360.0


#: Below this many metres a solved length is no length (the courses already close).
_TINY_M = 1e-6


def _solutions(
    gap: complex, omitted: list[OmittedCourse]
) -> tuple[str, list[dict[int, tuple[float, float]]]]:
    """The case's name and its solutions: course -> (azimuth deg, length m)."""
    if len(omitted) == 1:
        (o,) = omitted
        return "one course's bearing and distance", (
            [{o.index: (_az(gap), abs(gap))}] if abs(gap) > _TINY_M else []
        )
    a, b = omitted
    if a.length_m is None and b.length_m is None:  # two distances
        ua, ub = _vec(a.azimuth_deg, 1.0), _vec(b.azimuth_deg, 1.0)  # type: ignore[arg-type]
        det = ua.real * ub.imag - ua.imag * ub.real
        if abs(det) < 1e-12:
            return "two distances (the two courses are parallel)", []
        la = (gap.real * ub.imag - gap.imag * ub.real) / det
        lb = (ua.real * gap.imag - ua.imag * gap.real) / det
        ok = la > _TINY_M and lb > _TINY_M
        return "two distances", (
            [{a.index: (a.azimuth_deg, la), b.index: (b.azimuth_deg, lb)}] if ok else []
        )
    if a.azimuth_deg is None and b.azimuth_deg is None:  # two bearings
        r = abs(gap)
        la, lb = a.length_m, b.length_m
        if r < _TINY_M:
            return "two bearings", []
        cos_t = (la * la + r * r - lb * lb) / (2.0 * la * r)  # type: ignore[operator]
        if abs(cos_t) > 1.0:
            return "two bearings (the distances cannot span the gap)", []
        t = math.degrees(math.acos(cos_t))
        out = []
        for sign in (1.0,) if t < 1e-9 else (1.0, -1.0):
            va = _vec(_az(gap) + sign * t, la)  # type: ignore[arg-type]
            out.append({a.index: (_az(va), la), b.index: (_az(gap - va), lb)})
        return "two bearings", out
    # one course's bearing (length known) and another course's distance (bearing known)
    free, line = (a, b) if a.azimuth_deg is None else (b, a)
    u = _vec(line.azimuth_deg, 1.0)  # type: ignore[arg-type]
    p = gap.real * u.real + gap.imag * u.imag
    disc = p * p - abs(gap) ** 2 + free.length_m**2  # type: ignore[operator]
    if -1e-9 * (p * p + free.length_m**2) < disc < 0.0:  # type: ignore[operator]
        disc = 0.0  # the line touches the circle (the two courses at right angles): one root
    if disc < 0.0:
        return "a bearing and a distance (no course of that length reaches the line)", []
    roots = sorted({p - math.sqrt(disc), p + math.sqrt(disc)})
    out = []
    for lj in roots:
        if lj > _TINY_M:
            out.append(
                {free.index: (_az(gap - lj * u), free.length_m), line.index: (line.azimuth_deg, lj)}
            )
    return "a bearing and a distance", out


def _described(o: OmittedCourse, az: float, length: float) -> str:
    from .bearings import format_bearing

    bearing = format_bearing(az, precision=1.0 / 3600.0)
    return f"{bearing} {length / o.metres_per_unit:.4f} {o.length_unit}"


def solve_omitted(
    known: list[RecordedCourse],
    omitted: list[OmittedCourse],
    *,
    closed: bool,
    reference: str,
    file: str | None,
) -> list[RecordedCourse]:
    """The omitted courses completed from the closure of the figure (see the module notes),
    as :class:`~geo.document.RecordedCourse` with ``solved`` saying what the closure gave.

    Raises :class:`DocumentError` (at the first omitted course) for an open figure, a count of
    unknowns other than two, no solution, or two solutions (both named: the ambiguous case).
    """
    from .bearings import format_bearing
    from .document import RecordedCourse

    first = omitted[0].index
    where = {"file": file, "course": first, "field": "call"}
    if not closed:
        raise DocumentError(
            "'?' is completed from the closure: the figure must be closed (closed = true)",
            **where,
        )
    unknowns = sum((o.azimuth_deg is None) + (o.length_m is None) for o in omitted)
    if unknowns != 2:
        raise DocumentError(
            f"the closure supplies exactly two missing parts (two equations); {unknowns} "
            "written '?' (courses " + ", ".join(str(o.index) for o in omitted) + ")",
            **where,
        )
    gap = -sum((_vec(c.azimuth_deg, c.length_m) for c in known), complex(0.0, 0.0))
    case, solutions = _solutions(gap, omitted)
    north = f"{reference} north of the record"
    if not solutions:
        raise DocumentError(f"the closure gives no solution for {case}", **where)
    if len(solutions) > 1:
        texts = [
            "; ".join(f"course {o.index} {_described(o, *s[o.index])}" for o in omitted)
            for s in solutions
        ]
        raise DocumentError(
            f"two solutions from the closure ({case}, the ambiguous case; {north}): "
            f"{texts[0]} — or — {texts[1]}; write the one the record or the ground shows",
            **where,
        )
    (sol,) = solutions
    out = []
    for o in omitted:
        az, length = sol[o.index]
        missing = " and ".join(
            p
            for p, gone in (("bearing", o.azimuth_deg is None), ("distance", o.length_m is None))
            if gone
        )
        out.append(
            RecordedCourse(
                index=o.index,
                text=o.text,
                azimuth_deg=float(az),
                precision_deg=1.0 / 3600.0,
                bearing_text=format_bearing(az, precision=1.0 / 3600.0),
                angle_deg=None,
                length_m=float(length),
                length_value=float(length / o.metres_per_unit),
                length_unit=o.length_unit,
                back_azimuth_deg=None,
                every_m=None,
                note=o.course_note,
                call_note=o.note,
                solved=f"{missing} from the closure ({case}): {_described(o, az, length)} "
                f"({north})",
            )
        )
    return out


def closure_notes(recorded: list[RecordedCourse] | tuple[RecordedCourse, ...]) -> list[str]:
    """The notes a closure carries when parts of its courses came from the closure itself."""
    solved = [r for r in recorded if getattr(r, "solved", None)]
    if not solved:
        return []
    notes = [f"course {r.index}: {r.solved}" for r in solved]
    notes.append(
        "the closure completed the figure, so it closes exactly: its precision cannot be "
        "computed, and the errors of the other calls are hidden in the solved parts"
    )
    return notes
