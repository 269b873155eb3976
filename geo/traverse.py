"""Planar traverse computations: latitudes and departures, closure, compass and transit rule
adjustments, area, angular misclosure, local attraction and the error budget.

Conventions (DESIGN.md):

- Azimuths are degrees clockwise from one chosen north (true, grid or magnetic: the choice is a
  rotation and changes no closure figure), lengths are horizontal metres.
- A course's *latitude* is its north component ``L cos(az)`` and its *departure* its east
  component ``L sin(az)``.
- Stations are numbered like the result's ``north_m``/``east_m`` arrays: station 0 is the point
  of beginning, station i the end of course i (courses are numbered 1..n in messages). A closed
  traverse of n courses has n + 1 stations, the last meant to coincide with station 0.
- Coordinates are metres north and east of the point of beginning (which is 0, 0).

Sines and cosines of whole multiples of 90 degrees are exact, so "due north" calls give exact
zero departures. Sums use compensated (math.fsum / Neumaier) summation.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .angles import angle_difference, normalize_azimuth, reverse_azimuth
from .errors import InputError, TraverseError
from .units import square_metres_per_acre

__all__ = [
    "Adjustment",
    "AngleAdjustment",
    "ErrorBudget",
    "FigureArea",
    "LocalAttraction",
    "Closure",
    "SelfCrossingError",
    "Stations",
    "adjust",
    "adjust_interior_angles",
    "closure",
    "error_budget",
    "figure_area",
    "latitudes_departures",
    "local_attraction",
    "march",
]

Array = NDArray[np.float64]
Method = Literal["compass", "transit", "none"]
Direction = Literal["clockwise", "counterclockwise"]

SQUARE_METRES_PER_HECTARE = 10_000.0


class SelfCrossingError(TraverseError):
    """The figure's courses cross each other; ``courses`` holds the 1-based pair that cross."""

    def __init__(self, message: str, *, courses: tuple[int, int], **where) -> None:
        super().__init__(message, **where)
        self.courses = courses


# ---------------------------------------------------------------------------------------------
# helpers
# ---------------------------------------------------------------------------------------------


def _courses(azimuth_deg: ArrayLike, length_m: ArrayLike) -> tuple[Array, Array]:
    """Validate and return 1-D float arrays of azimuths and lengths of equal size."""
    az = np.atleast_1d(np.asarray(azimuth_deg, dtype=float))
    length = np.atleast_1d(np.asarray(length_m, dtype=float))
    if az.ndim != 1 or length.ndim != 1 or az.shape != length.shape:
        raise InputError(
            f"azimuths {az.shape} and lengths {length.shape} must be 1-D arrays of one size"
        )
    bad_az = ~np.isfinite(az)
    bad = bad_az | ~np.isfinite(length) | (length < 0.0)
    if bad.any():
        i = int(np.argmax(bad))  # the first course with a bad value, its azimuth checked first
        if bad_az[i]:
            raise InputError("azimuth is not a finite number", course=i + 1, field="azimuth")
        raise InputError(
            f"length {length[i]!r} m is not a non-negative number", course=i + 1, field="length"
        )
    return az, length


def _sincos_deg(az: Array) -> tuple[Array, Array]:
    """sin and cos of azimuths in degrees, exact at whole multiples of 90 degrees."""
    a = np.mod(az, 360.0)
    quadrant = np.rint(a / 90.0)
    rest = np.radians(a - 90.0 * quadrant)  # within +-45 degrees
    s, c = np.sin(rest), np.cos(rest)
    q = quadrant.astype(int) % 4
    sin = np.choose(q, [s, c, -s, -c])
    cos = np.choose(q, [c, -s, -c, s])
    return sin + 0.0, cos + 0.0


def _cumsum(values: Array) -> Array:
    """Running sums, starting with 0, compensated as in Ogita, Rump and Oishi's Sum2 ("Accurate
    sum and dot product", SIAM J. Sci. Comput. 26, 2005): each prefix is as accurate as if
    summed in twice the working precision, then rounded (error about eps |sum| + n^2 eps^2
    sum |v|).

    numpy's running sum adds in order, s_i = fl(s_(i-1) + v_i); Knuth's TwoSum gives the exact
    rounding error of each of those additions, and the running sum of the errors corrects
    each prefix.
    """
    v = np.asarray(values, dtype=float).ravel()
    s = np.cumsum(v)
    before = np.concatenate([[0.0], s[:-1]])
    part = s - before
    errors = (before - (s - part)) + (v - part)  # TwoSum: before + v == s + errors exactly
    return np.concatenate([[0.0], s + np.cumsum(errors)])


def azimuth_of(d_north: ArrayLike, d_east: ArrayLike) -> Array:
    """Azimuth (deg, [0, 360)) of vectors (north, east); 0 for a zero vector."""
    return np.asarray(normalize_azimuth(np.degrees(np.arctan2(d_east, d_north))), dtype=float)


# ---------------------------------------------------------------------------------------------
# latitudes, departures, stations
# ---------------------------------------------------------------------------------------------


def latitudes_departures(azimuth_deg: ArrayLike, length_m: ArrayLike) -> tuple[Array, Array]:
    """Return (latitudes, departures) in metres: north ``L cos az`` and east ``L sin az``."""
    az, length = _courses(azimuth_deg, length_m)
    s, c = _sincos_deg(az)
    return length * c, length * s


@dataclass(frozen=True)
class Stations:
    """A traverse marched from the point of beginning (unadjusted).

    ``azimuth_deg``, ``length_m``, ``latitudes_m``, ``departures_m``: per course (n).
    ``north_m``, ``east_m``: per station (n + 1), station 0 = point of beginning = (0, 0).
    """

    azimuth_deg: Array
    length_m: Array
    latitudes_m: Array
    departures_m: Array
    north_m: Array
    east_m: Array


def march(azimuth_deg: ArrayLike, length_m: ArrayLike) -> Stations:
    """March the courses from the point of beginning; running sums are compensated."""
    az, length = _courses(azimuth_deg, length_m)
    lat, dep = latitudes_departures(az, length)
    return Stations(
        azimuth_deg=np.asarray(normalize_azimuth(az), dtype=float),
        length_m=length,
        latitudes_m=lat,
        departures_m=dep,
        north_m=_cumsum(lat),
        east_m=_cumsum(dep),
    )


# ---------------------------------------------------------------------------------------------
# closure
# ---------------------------------------------------------------------------------------------


#: A computed misclosure below this many metres is floating-point rounding: the figure closes
#: exactly (no direction, no 1:N). No recorded call is written to a nanometre.
CLOSES_EXACTLY_BELOW_M = 1e-9


@dataclass(frozen=True)
class Closure:
    """Linear misclosure of a traverse meant to return to its point of beginning.

    ``misclosure_north_m``/``misclosure_east_m`` are the sums of latitudes and departures: the
    error vector from the point of beginning to the computed end point. ``misclosure_azimuth_deg``
    is the azimuth of that vector (start -> computed end; the correction runs the opposite way),
    None when the misclosure is zero. ``precision`` is N of "1:N" = perimeter / misclosure, None
    when the misclosure is zero (below :data:`CLOSES_EXACTLY_BELOW_M`, all three are zero/None).
    """

    perimeter_m: float
    misclosure_north_m: float
    misclosure_east_m: float
    misclosure_m: float
    misclosure_azimuth_deg: float | None
    precision: float | None


def closure(
    azimuth_deg: ArrayLike,
    length_m: ArrayLike,
    *,
    end_north_m: float = 0.0,
    end_east_m: float = 0.0,
) -> Closure:
    """Misclosure, its azimuth and the precision 1:N of a closed traverse.

    ``end_north_m``/``end_east_m``: where the courses should end, metres from the point of
    beginning (0, 0 for a closed figure; a found end for an open line). The misclosure is the
    computed end minus that point.
    """
    az, length = _courses(azimuth_deg, length_m)
    lat, dep = latitudes_departures(az, length)
    perimeter = math.fsum(length.tolist())
    d_north = math.fsum([*lat.tolist(), -float(end_north_m)])
    d_east = math.fsum([*dep.tolist(), -float(end_east_m)])
    mis = math.hypot(d_north, d_east)
    if mis < CLOSES_EXACTLY_BELOW_M:  # rounding of the arithmetic, not a misclosure
        return Closure(perimeter, 0.0, 0.0, 0.0, None, None)
    return Closure(
        perimeter_m=perimeter,
        misclosure_north_m=d_north,
        misclosure_east_m=d_east,
        misclosure_m=mis,
        misclosure_azimuth_deg=float(azimuth_of(np.array(d_north), np.array(d_east))),
        precision=perimeter / mis,
    )


# ---------------------------------------------------------------------------------------------
# adjustment
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Adjustment:
    """A closed traverse adjusted by the compass (Bowditch) or transit rule.

    Per course (n): ``latitude_corrections_m``, ``departure_corrections_m`` (added to the
    unadjusted values), adjusted ``latitudes_m``, ``departures_m``, ``length_m`` and
    ``azimuth_deg`` (0 for a course adjusted to zero length). Per station (n + 1): adjusted
    ``north_m``, ``east_m``; the last station coincides with the point of beginning, or the
    given end (to rounding, well below 1e-9 m). ``method`` is 'compass', 'transit' or 'none'
    (no correction).
    """

    method: str
    closure: Closure
    latitude_corrections_m: Array
    departure_corrections_m: Array
    latitudes_m: Array
    departures_m: Array
    length_m: Array
    azimuth_deg: Array
    north_m: Array
    east_m: Array


def _distribute(total: float, weights: Array) -> Array:
    """Corrections -total * w_i / sum(w) (zeros when every weight is zero)."""
    wsum = math.fsum(weights.tolist())
    if wsum == 0.0:
        return np.zeros_like(weights)
    return -total * (weights / wsum)


def adjust(
    azimuth_deg: ArrayLike,
    length_m: ArrayLike,
    *,
    method: Method = "compass",
    end_north_m: float = 0.0,
    end_east_m: float = 0.0,
) -> Adjustment:
    """Adjust a closed traverse (or an open one onto a known end: ``end_north_m``,
    ``end_east_m``, metres from the point of beginning; see :func:`closure`).

    compass (Bowditch) rule: each course's latitude and departure corrections are the total
    misclosure components times L_i / perimeter (opposite sign). transit rule: the latitude
    correction is the latitude misclosure times |lat_i| / sum|lat|, the departure correction
    the departure misclosure times |dep_i| / sum|dep|. 'none' leaves the courses as they are.
    """
    if method not in ("compass", "transit", "none"):
        raise InputError(f"unknown adjustment {method!r}: use compass, transit or none")
    az, length = _courses(azimuth_deg, length_m)
    clo = closure(az, length, end_north_m=end_north_m, end_east_m=end_east_m)
    lat, dep = latitudes_departures(az, length)
    if method == "compass":
        c_lat = _distribute(clo.misclosure_north_m, length)
        c_dep = _distribute(clo.misclosure_east_m, length)
    elif method == "transit":
        c_lat = _distribute(clo.misclosure_north_m, np.abs(lat))
        c_dep = _distribute(clo.misclosure_east_m, np.abs(dep))
    else:
        c_lat = np.zeros_like(lat)
        c_dep = np.zeros_like(dep)
    a_lat = lat + c_lat
    a_dep = dep + c_dep
    return Adjustment(
        method=method,
        closure=clo,
        latitude_corrections_m=c_lat,
        departure_corrections_m=c_dep,
        latitudes_m=a_lat,
        departures_m=a_dep,
        length_m=np.hypot(a_lat, a_dep),
        azimuth_deg=azimuth_of(a_lat, a_dep),
        north_m=_cumsum(a_lat),
        east_m=_cumsum(a_dep),
    )


# ---------------------------------------------------------------------------------------------
# area and self-crossing
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FigureArea:
    """Area of a closed figure by the coordinate (shoelace) method.

    ``signed_area_m2`` is positive for a figure run counter-clockwise on the map (north up,
    east right) and negative for one run clockwise, as most deeds are; ``orientation`` says
    which. ``area_m2``, ``hectares`` and ``acres`` are absolute; ``acre_m2`` is the acre used
    (43,560 square feet of the chosen foot: 4046.8564224 m2 international, 4046.8726... m2 US
    survey). The area lies in the plane of the coordinates given (ground or grid).
    """

    signed_area_m2: float
    area_m2: float
    hectares: float
    acres: float
    acre_m2: float
    orientation: str


def _orient(ax, ay, bx, by, cx, cy):
    """Twice the signed area of triangle abc (arrays broadcast)."""
    return (bx - ax) * (cy - ay) - (by - ay) * (cx - ax)


def _on_segment(d, px, py, ax, ay, bx, by, eps, slack):
    """Point p lies on segment ab: collinear (|d| <= eps) and inside its bounding box."""
    return (
        (np.abs(d) <= eps)
        & (np.minimum(ax, bx) - slack <= px)
        & (px <= np.maximum(ax, bx) + slack)
        & (np.minimum(ay, by) - slack <= py)
        & (py <= np.maximum(ay, by) + slack)
    )


def _candidate_pairs(x1: Array, y1: Array, x2: Array, y2: Array, slack: float):
    """Pairs (i, j), i < j, of edges whose bounding boxes, widened by ``slack``, overlap.

    A sweep along x: edges sorted by their west side; edge a pairs with each later edge b whose
    west side lies within a's east-west extent, then the north-south extents are compared.
    """
    lox, hix = np.minimum(x1, x2) - slack, np.maximum(x1, x2) + slack
    loy, hiy = np.minimum(y1, y2) - slack, np.maximum(y1, y2) + slack
    order = np.argsort(lox, kind="stable")
    lo_sorted = lox[order]
    start = np.arange(1, order.size + 1)
    stop = np.searchsorted(lo_sorted, hix[order], side="right")
    count = np.maximum(stop - start, 0)
    total = int(count.sum())
    if total == 0:
        empty = np.empty(0, dtype=np.intp)
        return empty, empty
    first = np.repeat(np.arange(order.size), count)
    offset = np.arange(total) - np.repeat(np.cumsum(count) - count, count)
    a = order[first]
    b = order[np.repeat(start, count) + offset]
    keep = (loy[a] <= hiy[b]) & (loy[b] <= hiy[a])
    a, b = a[keep], b[keep]
    return np.minimum(a, b), np.maximum(a, b)


def _find_crossing(x: Array, y: Array) -> tuple[int, int] | None:
    """First pair (i, j) of 0-based edges of the polygon x, y that cross, touch or overlap.

    Edge i runs from vertex i to vertex i + 1 (the last back to vertex 0); no edge has zero
    length. Adjacent edges share a vertex; they count as crossing only when the second turns
    straight back along the first. "First" is in the order of a scan of edge i = 0, 1, ...:
    the reversal of edge i by edge i + 1 (reported as the pair sorted), then the edges j > i + 1
    that edge i crosses or touches, nearest first.
    """
    n = x.size
    x1, y1 = x, y
    x2, y2 = np.roll(x, -1), np.roll(y, -1)
    scale = max(float(np.max(np.abs(x))), float(np.max(np.abs(y))), 1e-300)
    eps = 1e-12 * scale * scale
    slack = 1e-12 * scale
    # adjacent edges i, i + 1 (mod n): a straight reversal (collinear, pointing back)
    ux, uy = x2 - x1, y2 - y1
    vx, vy = np.roll(ux, -1), np.roll(uy, -1)
    reversal = np.flatnonzero((np.abs(ux * vy - uy * vx) <= eps) & (ux * vx + uy * vy < 0.0))
    best: tuple[int, int] | None = None  # (scan row, column; -1 for the reversal)
    if reversal.size:
        best = (int(reversal[0]), -1)
    # edges that are not adjacent and whose boxes meet: only they can cross or touch
    i, j = _candidate_pairs(x1, y1, x2, y2, slack)
    keep = (j >= i + 2) & ~((i == 0) & (j == n - 1))
    if best is not None:
        keep &= i < best[0]
    i, j = i[keep], j[keep]
    if i.size:
        d1 = _orient(x1[j], y1[j], x2[j], y2[j], x1[i], y1[i])
        d2 = _orient(x1[j], y1[j], x2[j], y2[j], x2[i], y2[i])
        d3 = _orient(x1[i], y1[i], x2[i], y2[i], x1[j], y1[j])
        d4 = _orient(x1[i], y1[i], x2[i], y2[i], x2[j], y2[j])
        proper = (d1 * d2 < 0) & (d3 * d4 < 0)
        touch = (
            _on_segment(d1, x1[i], y1[i], x1[j], y1[j], x2[j], y2[j], eps, slack)
            | _on_segment(d2, x2[i], y2[i], x1[j], y1[j], x2[j], y2[j], eps, slack)
            | _on_segment(d3, x1[j], y1[j], x1[i], y1[i], x2[i], y2[i], eps, slack)
            | _on_segment(d4, x2[j], y2[j], x1[i], y1[i], x2[i], y2[i], eps, slack)
        )
        hit = np.flatnonzero(proper | touch)
        if hit.size:
            rows, cols = i[hit], j[hit]
            first = np.lexsort((cols, rows))[0]
            best = (int(rows[first]), int(cols[first]))
    if best is None:
        return None
    row, col = best
    if col >= 0:
        return row, col
    k = (row + 1) % n
    return (row, k) if row < k else (k, row)


def figure_area(north_m: ArrayLike, east_m: ArrayLike, *, foot: str) -> FigureArea:
    """Area of the figure through the stations (metres north/east), by the shoelace method.

    ``north_m``/``east_m`` are the n + 1 stations of a closed traverse as returned by
    :func:`adjust` or :func:`march`: the polygon is stations 0..n-1 closed back to station 0 (the
    last station is the end of the last course and is not used; for an unadjusted traverse the
    closing gap is bridged straight). ``foot`` ('us' or 'international') fixes the acre.

    Raises SelfCrossingError (a TraverseError) naming the two courses (1-based) that cross or
    touch, and TraverseError for fewer than three courses.
    """
    n_arr = np.atleast_1d(np.asarray(north_m, dtype=float))
    e_arr = np.atleast_1d(np.asarray(east_m, dtype=float))
    if n_arr.shape != e_arr.shape or n_arr.ndim != 1:
        raise InputError("north and east coordinates must be 1-D arrays of one size")
    if not (np.all(np.isfinite(n_arr)) and np.all(np.isfinite(e_arr))):
        raise InputError("station coordinates must be finite numbers")
    acre_m2 = float(square_metres_per_acre(foot))  # InputError for an unknown foot
    y = n_arr[:-1]
    x = e_arr[:-1]
    if y.size < 3:
        raise TraverseError("a figure needs at least three courses to enclose an area")
    # shift to the centroid of the vertices to keep the cross products well conditioned
    x = x - math.fsum(x.tolist()) / x.size
    y = y - math.fsum(y.tolist()) / y.size
    # courses of zero length add no edge: check the figure without them, name real courses
    keep = np.flatnonzero((x != np.roll(x, -1)) | (y != np.roll(y, -1)))
    if keep.size < 3:
        raise TraverseError("the figure's stations lie on fewer than three distinct points")
    crossing = _find_crossing(x[keep], y[keep])
    if crossing is not None:
        # a vertex is kept when the course leaving it has length: reduced edge m is course
        # keep[m] + 1
        a, b = int(keep[crossing[0]]) + 1, int(keep[crossing[1]]) + 1
        raise SelfCrossingError(
            f"courses {a} and {b} cross each other: the figure has no meaningful area",
            courses=(a, b),
            course=a,
        )
    x2, y2 = np.roll(x, -1), np.roll(y, -1)
    signed = 0.5 * math.fsum((x * y2).tolist() + (-(x2 * y)).tolist())
    area = abs(signed)
    return FigureArea(
        signed_area_m2=signed,
        area_m2=area,
        hectares=area / SQUARE_METRES_PER_HECTARE,
        acres=area / acre_m2,
        acre_m2=acre_m2,
        orientation="counterclockwise" if signed > 0 else "clockwise",
    )


# ---------------------------------------------------------------------------------------------
# interior angles
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class AngleAdjustment:
    """Angular misclosure of a closed figure's interior angles and the derived azimuths.

    ``measured_sum_deg`` (sum of the angles), ``expected_sum_deg`` = (n - 2) * 180,
    ``misclosure_deg`` = measured - expected, ``correction_per_angle_deg`` = -misclosure / n
    (equal distribution), ``adjusted_angles_deg`` per station 0..n-1, ``azimuth_deg`` of the
    courses 1..n derived from the first azimuth and the adjusted angles.
    """

    measured_sum_deg: float
    expected_sum_deg: float
    misclosure_deg: float
    correction_per_angle_deg: float
    adjusted_angles_deg: Array
    azimuth_deg: Array


def adjust_interior_angles(
    interior_deg: ArrayLike, *, first_azimuth_deg: float, direction: Direction
) -> AngleAdjustment:
    """Check and adjust interior angles, then carry azimuths round the figure.

    ``interior_deg[i]`` is the interior angle at station i (0 = point of beginning, between the
    last course and course 1; station i = end of course i, between course i and course i + 1),
    in degrees, 0 < angle < 360. ``first_azimuth_deg`` is the azimuth of course 1.

    ``direction`` is the sense in which the figure is run, as seen on the map:

    - 'clockwise': the interior lies to the right of the direction of travel; the interior angle
      is turned clockwise from the forward course to the back course, so
      az(next) = az(previous) + 180 - interior;
    - 'counterclockwise': the interior lies to the left; az(next) = az(previous) - 180 + interior.

    The misclosure (sum - (n - 2) * 180) is distributed equally over the angles.
    """
    ang = np.atleast_1d(np.asarray(interior_deg, dtype=float))
    if ang.ndim != 1 or ang.size < 3:
        raise TraverseError("interior angles need a closed figure of at least three courses")
    for i in range(ang.size):
        if not (math.isfinite(ang[i]) and 0.0 < ang[i] < 360.0):
            where = "point of beginning" if i == 0 else f"station {i}"
            raise InputError(
                f"interior angle {ang[i]!r} at the {where} is not between 0 and 360 degrees",
                course=i if i > 0 else None,
                field="angle",
            )
    if direction not in ("clockwise", "counterclockwise"):
        raise InputError(f"unknown direction {direction!r}: use clockwise or counterclockwise")
    if not math.isfinite(first_azimuth_deg):
        raise InputError("the first azimuth is not a finite number", course=1, field="bearing")
    n = ang.size
    measured = math.fsum(ang.tolist())
    expected = (n - 2) * 180.0
    mis = measured - expected
    corr = -mis / n
    adjusted = ang + corr
    turn = 180.0 - adjusted if direction == "clockwise" else adjusted - 180.0
    az = np.empty(n)
    az[0] = first_azimuth_deg
    for k in range(1, n):  # course k+1 leaves station k
        az[k] = az[k - 1] + turn[k]
    return AngleAdjustment(
        measured_sum_deg=measured,
        expected_sum_deg=expected,
        misclosure_deg=mis,
        correction_per_angle_deg=corr,
        adjusted_angles_deg=adjusted,
        azimuth_deg=np.asarray(normalize_azimuth(az), dtype=float),
    )


# ---------------------------------------------------------------------------------------------
# local attraction
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class LocalAttraction:
    """Fore and back bearings compared, and corrected for local attraction at the stations.

    Per course (n): ``discrepancy_deg`` = back - (fore + 180) in (-180, 180] (NaN where no back
    bearing was read); ``corrected_fore_deg``, ``corrected_back_deg`` (NaN where undetermined);
    ``residual_deg`` = the discrepancy left after correction (0 on the courses used to carry the
    corrections; the closing course of a loop keeps the reading error).

    Per station: ``stations`` (indices 0..n for an open traverse, 0..n-1 for a closed one,
    whose last course ends on station 0), ``correction_deg`` (added to every bearing read at
    the station; NaN where no chain of fore/back pairs reaches it).
    ``start_course`` (1-based) is the course whose fore and back bearings agree best, taken as
    free of attraction; ``free_courses`` all those within the tolerance; ``disturbed_stations``
    those whose |correction| exceeds the tolerance.
    """

    discrepancy_deg: Array
    free_courses: tuple[int, ...]
    start_course: int
    stations: tuple[int, ...]
    correction_deg: Array
    disturbed_stations: tuple[int, ...]
    corrected_fore_deg: Array
    corrected_back_deg: Array
    residual_deg: Array


def local_attraction(
    fore_deg: ArrayLike,
    back_deg: ArrayLike,
    *,
    closed: bool,
    tolerance_deg: float = 1e-6,
) -> LocalAttraction:
    """Find local attraction from fore and back bearings (the usual compass-survey method).

    ``fore_deg[i]`` is the azimuth of course i + 1 read at its start (station i), ``back_deg[i]``
    the azimuth read back along it at its end (station i + 1, or station 0 for the last course
    of a closed traverse); NaN where none was read. Azimuths in degrees from magnetic north.

    The course whose fore and back bearings differ least from 180 degrees is taken as free of
    attraction: both its stations get correction 0. From there the corrections are carried
    along the chain in both directions: at a station with known correction c, the bearing read
    there of the next course, corrected (+c), fixes the true back bearing of that course and so
    the correction at its far station. ``tolerance_deg`` (e.g. the reading precision of the
    compass) decides which courses agree (free) and which stations are disturbed.

    Raises TraverseError when no course has both readings.
    """
    fore = np.atleast_1d(np.asarray(fore_deg, dtype=float))
    back = np.atleast_1d(np.asarray(back_deg, dtype=float))
    if fore.shape != back.shape or fore.ndim != 1:
        raise InputError("fore and back bearings must be 1-D arrays of one size")
    for i in range(fore.size):
        if not math.isfinite(fore[i]):
            raise InputError("fore bearing is not a finite number", course=i + 1, field="bearing")
        if math.isinf(back[i]):
            raise InputError("back bearing is not a finite number", course=i + 1, field="back")
    if not (math.isfinite(tolerance_deg) and tolerance_deg >= 0.0):
        raise InputError(f"tolerance {tolerance_deg!r} deg must be a non-negative number")
    n = fore.size
    if closed and n < 3:
        raise TraverseError("a closed traverse needs at least three courses")
    has_back = ~np.isnan(back)
    if not np.any(has_back):
        raise TraverseError("no course has a back bearing: local attraction cannot be judged")
    disc = np.full(n, np.nan)
    disc[has_back] = angle_difference(back[has_back], reverse_azimuth(fore[has_back]))
    abs_disc = np.where(has_back, np.abs(disc), np.inf)
    start = int(np.argmin(abs_disc))
    free = tuple(int(i) + 1 for i in np.flatnonzero(abs_disc <= tolerance_deg))

    n_st = n if closed else n + 1
    first = np.arange(n)  # station where the fore bearing of course i+1 is read
    last = (first + 1) % n_st  # station where its back bearing is read
    corr = np.full(n_st, np.nan)
    corr[first[start]] = corr[last[start]] = 0.0
    # Along a course with both readings the corrections differ by the discrepancy:
    # true back = fore + c(first) + 180 = back + c(last)  =>  c(last) = c(first) - discrepancy.
    # Forward from the free course (round a loop up to the course before it, whose reading
    # at the free course's start then serves as the check), then backward from it.
    for k in range(1, n):
        i = start + k
        if not closed and i >= n:
            break
        i %= n
        if not has_back[i] or not np.isnan(corr[last[i]]):
            break
        corr[last[i]] = corr[first[i]] - disc[i]
    for k in range(1, n):
        i = start - k
        if not closed and i < 0:
            break
        i %= n
        if not has_back[i] or np.isnan(corr[last[i]]) or not np.isnan(corr[first[i]]):
            break
        corr[first[i]] = corr[last[i]] + disc[i]
    corr = np.asarray(angle_difference(corr, 0.0), dtype=float)  # into (-180, 180]
    c_fore = np.asarray(normalize_azimuth(fore + corr[first]), dtype=float)
    c_back = np.asarray(normalize_azimuth(back + corr[last]), dtype=float)
    resid = np.asarray(angle_difference(c_back, reverse_azimuth(c_fore)), dtype=float)
    disturbed = tuple(int(s) for s in np.flatnonzero(np.abs(np.nan_to_num(corr)) > tolerance_deg))
    return LocalAttraction(
        discrepancy_deg=disc,
        free_courses=free,
        start_course=start + 1,
        stations=tuple(range(n_st)),
        correction_deg=corr,
        disturbed_stations=disturbed,
        corrected_fore_deg=c_fore,
        corrected_back_deg=c_back,
        residual_deg=resid,
    )


# ---------------------------------------------------------------------------------------------
# error budget
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ErrorBudget:
    """Displacement of each station caused by angular uncertainties (1 sigma, metres).

    Per course (n): ``course_lateral_m`` = L_i * sigma_bearing (radians): the sideways error at
    the end of the course from its own bearing ("+-0.3 deg at 400 m is +-2.1 m").
    Per station (n + 1): ``distance_m`` straight from the point of beginning;
    ``bearing_m`` = sqrt(sum over courses up to the station of (L_i sigma_bearing)^2): readings
    taken as independent errors, so their sideways displacements add in quadrature (this is the
    exact RMS of the resulting position error); ``declination_m`` = distance * sigma_D: an error
    of the declination turns the whole traverse about the point of beginning (0 when no
    declination uncertainty is given or published); ``total_m`` = sqrt(bearing^2 +
    declination^2), the two sources being independent.
    """

    bearing_sigma_deg: float
    declination_sigma_deg: float | None
    course_lateral_m: Array
    distance_m: Array
    bearing_m: Array
    declination_m: Array
    total_m: Array


def error_budget(
    azimuth_deg: ArrayLike,
    length_m: ArrayLike,
    *,
    bearing_sigma_deg: float = 0.0,
    declination_sigma_deg: float | None = None,
) -> ErrorBudget:
    """Station displacements from a bearing-reading and a declination uncertainty (degrees).

    ``declination_sigma_deg`` None or NaN means none is published: that part is 0 and the
    field keeps None.
    """
    if not (math.isfinite(bearing_sigma_deg) and bearing_sigma_deg >= 0.0):
        raise InputError(f"bearing uncertainty {bearing_sigma_deg!r} deg must be >= 0")
    if declination_sigma_deg is not None and math.isnan(declination_sigma_deg):
        declination_sigma_deg = None
    if declination_sigma_deg is not None and not (
        math.isfinite(declination_sigma_deg) and declination_sigma_deg >= 0.0
    ):
        raise InputError(f"declination uncertainty {declination_sigma_deg!r} deg must be >= 0")
    st = march(azimuth_deg, length_m)
    lateral = st.length_m * math.radians(bearing_sigma_deg)
    bearing = np.sqrt(_cumsum(lateral * lateral))
    distance = np.hypot(st.north_m, st.east_m)
    dec = distance * math.radians(declination_sigma_deg or 0.0)
    return ErrorBudget(
        bearing_sigma_deg=float(bearing_sigma_deg),
        declination_sigma_deg=declination_sigma_deg,
        course_lateral_m=lateral,
        distance_m=distance,
        bearing_m=bearing,
        declination_m=dec,
        total_m=np.hypot(bearing, dec),
    )
