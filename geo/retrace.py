"""Retracement from found corners: gaps at found corners, an open line closed on its found end,
and lost corners restored between the found ones.

Input is a converted document (:func:`geo.north.convert_document`): its stations marched on
the grid from the point of beginning (the record's courses in grid azimuths and grid lengths,
D and gamma of each course's own start) and the found positions of the courses (``found``).

Frame and sign conventions
    Positions are grid metres east and north of the point of beginning (grid CRS unit x
    ``grid_unit_m``); azimuths are degrees clockwise from grid north, [0, 360). A *gap* runs
    from the marched (record) station to the found position: ``gap = found - marched``.

Corners
    Corner ``i`` is station ``i`` (0 = point of beginning, ``i`` = end of course ``i``). In a
    closed figure the last station is the point of beginning again, so the corners are
    ``0 .. n-1`` and a run may pass through the point of beginning. A corner is an *anchor*
    when it is found (``found`` on the course ending there) or held: the point of beginning
    of an open line (the line is run from it, and closes on its found end from it) or of a
    figure placed by grid coordinates (as :func:`geo.survey.fit_document` counts it). A closed
    figure placed by latitude and longitude does not hold its beginning: that place only
    chooses the field and the grid.

Restoration (``method``)
    Between each pair of consecutive anchors A, B the record courses from A to B are made to
    end on both:

    - ``"proportion"``: the run's misclosure ``m = (R_B - R_A) - (F_B - F_A)`` is distributed
      along it in proportion to the record lengths (the compass rule of Ghilani & Wolf,
      *Elementary Surveying*, applied to the run): ``P_i = F_A + (R_i - R_A) - m * S_i / S``,
      ``S_i`` the record length from A to corner i and ``S`` from A to B. On a straight line
      this is the single proportionate measurement of the public-land survey manuals: the
      restored corner keeps the record's ratio of distances between the found corners;
    - ``"rotate-scale"``: the run is turned and scaled about A so that R_B falls on F_B:
      ``P_i = F_A + s * rot(theta) (R_i - R_A)``.

    Corners before the first anchor or after the last (an open line) follow the record from
    the nearest anchor, turned by the fit's rotation less the conversion's (so the record
    runs in the found corners' north). Without any anchor every corner is record only.

Statuses: ``found``, ``held``, ``restored`` (with the method and the run), ``record only``.
Nothing here decides where a boundary is: original monuments and evidence control.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

import numpy as np

from .errors import InputError

if TYPE_CHECKING:
    from .north import DocumentConversion

__all__ = [
    "METHODS",
    "Corner",
    "FoundGap",
    "Restoration",
    "RestorationRun",
    "closes_on_found_end",
    "closure_notes",
    "placed",
    "corner_features",
    "found_end_target",
    "found_gaps",
    "proportion_run",
    "record_unit",
    "restore_corners",
    "restore_document",
    "rotate_scale_run",
]

Method = Literal["proportion", "rotate-scale"]
METHODS: tuple[str, ...] = ("proportion", "rotate-scale")


def _grid_m(conv: DocumentConversion, easting: float, northing: float) -> tuple[float, float]:
    """Grid metres east and north of the point of beginning."""
    p0 = conv.stations[0]
    u = conv.grid_unit_m
    return (easting - p0.easting) * u, (northing - p0.northing) * u


def _azimuth(d_east: float, d_north: float) -> float:
    if d_east == 0.0 and d_north == 0.0:
        return 0.0
    return math.degrees(math.atan2(d_east, d_north)) % 360.0


def placed(conv: DocumentConversion) -> bool:
    """True when every station has a grid position (False for a magnetic record whose
    declination at the record date is unknown: its stations are not on the grid)."""
    return all(math.isfinite(s.easting) and math.isfinite(s.northing) for s in conv.stations)


UNPLACED = (
    "the record's stations are not on the grid (the declination at the record date is "
    "unknown): no gap at the found corners, no closure on a found end, no restoration; "
    "state record.declination (the fit's empirical declination, say) or install a model "
    "that covers the date"
)


def closure_notes(conv: DocumentConversion) -> list[str]:
    """What the closure says about found corners it cannot use (see :data:`UNPLACED`)."""
    if any(c.found is not None for c in conv.courses) and not placed(conv):
        return [UNPLACED]
    return []


def record_unit(conv: DocumentConversion) -> tuple[str, float]:
    """The record's length unit (as the call parser names it) and metres per unit.

    The unit of the document's ``record.distance_unit`` when a course uses it, else the unit of
    course 1; metres per unit as that course's length was read (its foot and vara).
    """
    want = conv.document.record.distance_unit
    courses = [c.recorded for c in conv.courses if c.recorded.length_value]
    if not courses:
        return "m", 1.0
    pick = courses[0]
    if want:
        from .units import unit_name

        try:
            name = unit_name(want)
        except Exception:  # an unreadable unit was refused when the calls were read
            name = pick.length_unit
        pick = next((r for r in courses if r.length_unit == name), pick)
    return pick.length_unit, pick.length_m / pick.length_value


def _unit_label(unit: str) -> str:
    from .units import UNIT_LABELS

    return UNIT_LABELS.get(unit, unit)


# --------------------------------------------------------------------------------------------
# Gaps at found corners and the open line closed on its found end
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FoundGap:
    """Found minus marched position of one found station (grid metres, record unit).

    ``azimuth_deg``/``bearing``: grid azimuth of the gap (marched toward found), ``None`` for a
    zero gap; ``true_azimuth_deg`` the same referred to true north (+ gamma at the station).
    ``gap_record`` is ``gap_m`` in the record's unit ``unit``.
    """

    index: int
    east_m: float
    north_m: float
    gap_m: float
    gap_record: float
    unit: str
    azimuth_deg: float | None
    true_azimuth_deg: float | None
    bearing: str | None

    def as_dict(self) -> dict[str, Any]:
        """Plain JSON values."""
        return {
            "index": self.index,
            "east_m": self.east_m,
            "north_m": self.north_m,
            "gap_m": self.gap_m,
            "gap_record": self.gap_record,
            "unit": self.unit,
            "grid_azimuth_deg": self.azimuth_deg,
            "true_azimuth_deg": self.true_azimuth_deg,
            "grid_bearing": self.bearing,
        }


def found_gaps(conv: DocumentConversion) -> tuple[FoundGap, ...]:
    """The gap between the marched station and the found position of every found station."""
    from .bearings import format_bearing

    unit, per = record_unit(conv)
    out: list[FoundGap] = []
    if not placed(conv):
        return ()
    for c in conv.courses:
        if c.found is None:
            continue
        fe, fn = _grid_m(conv, c.found.easting, c.found.northing)
        me, mn = _grid_m(conv, c.end.easting, c.end.northing)
        de, dn = fe - me, fn - mn
        gap = math.hypot(de, dn)
        az = _azimuth(de, dn) if gap > 0.0 else None
        gamma = _station_gamma(conv, c.index)
        out.append(
            FoundGap(
                index=c.index,
                east_m=de,
                north_m=dn,
                gap_m=gap,
                gap_record=gap / per,
                unit=unit,
                azimuth_deg=az,
                true_azimuth_deg=None if az is None else (az + gamma) % 360.0,
                bearing=None if az is None else format_bearing(az, precision=1.0 / 3600.0),
            )
        )
    return tuple(out)


def _station_gamma(conv: DocumentConversion, index: int) -> float:
    """gamma (degrees) used at station ``index``: the following course's, else the last's."""
    courses = conv.courses
    return float(courses[min(index, len(courses) - 1)].convergence_deg)


def closes_on_found_end(conv: DocumentConversion) -> bool:
    """True for an open document (``closed = false``) whose last course has ``found`` and
    whose stations are on the grid (:func:`placed`)."""
    return (
        bool(conv.courses)
        and not conv.document.closed
        and conv.courses[-1].found is not None
        and placed(conv)
    )


def found_end_target(
    conv: DocumentConversion, *, rotation_deg: float, end_north_m: float, end_east_m: float
) -> tuple[float, float]:
    """Where an open line should end in a closure's frame, metres north and east of the point
    of beginning.

    The closure (:func:`geo.survey.close_document`) marches the record from (0, 0) in one
    north (``rotation_deg`` = that north's azimuth minus the recorded azimuth of course 1) with
    ground lengths, and its computed end is (``end_north_m``, ``end_east_m``). The misclosure
    of the line is the gap at its found end (marched minus found, on the grid, from
    :mod:`geo.north`'s march) turned into that north (by ``rotation_deg`` less the grid's) and
    brought from grid to ground (divided by the length-weighted mean combined factor).
    """
    from .angles import angle_difference

    last = conv.courses[-1]
    if last.found is None:
        raise InputError("the last course has no found position", file=conv.file, field="found")
    fe, fn = _grid_m(conv, last.found.easting, last.found.northing)
    me, mn = _grid_m(conv, last.end.easting, last.end.northing)
    first = conv.courses[0]
    grid_rot = float(angle_difference(first.azimuth.grid, first.recorded.azimuth_deg))
    turn = math.radians(rotation_deg - grid_rot)
    lengths = [c.length_m for c in conv.courses]
    cf = math.fsum(c.combined_factor * c.length_m for c in conv.courses) / math.fsum(lengths)
    mis_e, mis_n = (me - fe) / cf, (mn - fn) / cf
    rn = mis_n * math.cos(turn) - mis_e * math.sin(turn)
    re_ = mis_n * math.sin(turn) + mis_e * math.cos(turn)
    return end_north_m - rn, end_east_m - re_


# --------------------------------------------------------------------------------------------
# One run between two anchors (pure planar arithmetic)
# --------------------------------------------------------------------------------------------


def proportion_run(
    record_east_m: Any,
    record_north_m: Any,
    length_m: Any,
    *,
    start: tuple[float, float],
    end: tuple[float, float],
) -> tuple[np.ndarray, np.ndarray]:
    """Restore the corners of one run by the compass rule onto its two found ends.

    ``record_east_m``/``record_north_m``: the run's record positions, corner A first and B
    last (k + 1 points, metres, any plane frame); ``length_m``: the k record lengths of its
    courses (the weights); ``start``/``end``: found (east, north) of A and B. Returns restored
    (east, north) of all k + 1 points; the first is ``start`` and the last ``end``.
    """
    re_ = np.asarray(record_east_m, dtype=float)
    rn = np.asarray(record_north_m, dtype=float)
    w = np.asarray(length_m, dtype=float)
    s = np.concatenate([[0.0], np.cumsum(w)])
    total = s[-1]
    t = s / total if total > 0.0 else np.linspace(0.0, 1.0, s.size)
    me = (re_[-1] - re_[0]) - (end[0] - start[0])
    mn = (rn[-1] - rn[0]) - (end[1] - start[1])
    east = start[0] + (re_ - re_[0]) - me * t
    north = start[1] + (rn - rn[0]) - mn * t
    east[-1], north[-1] = end
    return east, north


def rotate_scale_run(
    record_east_m: Any,
    record_north_m: Any,
    *,
    start: tuple[float, float],
    end: tuple[float, float],
) -> tuple[np.ndarray, np.ndarray, float, float]:
    """Turn and scale a run about its first corner so its last falls on the found end.

    Arguments as :func:`proportion_run` (no weights). Returns restored (east, north), the
    rotation (degrees, clockwise positive) and the scale (found / record distance A to B).
    Raises :class:`InputError` when the run's record ends coincide (no direction to turn).
    """
    z = np.asarray(record_east_m, dtype=float) + 1j * np.asarray(record_north_m, dtype=float)
    za, zb = complex(start[0], start[1]), complex(end[0], end[1])
    d = z[-1] - z[0]
    if abs(d) < 1e-9:
        raise InputError("the run returns to its first corner: nothing to turn or scale")
    b = (zb - za) / d
    w = za + b * (z - z[0])
    w[-1] = zb
    return w.real.copy(), w.imag.copy(), -math.degrees(math.atan2(b.imag, b.real)), abs(b)


# --------------------------------------------------------------------------------------------
# Restoration of a whole document
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class RestorationRun:
    """One run between consecutive anchors ``start`` and ``end`` (corner numbers).

    ``record_m``: record (grid) distance A to B; ``measured_m``: found distance A to B;
    ``misclosure_m``: length of the run's misclosure; ``precision``: N of 1:N (record length
    along the run / misclosure; ``None`` for a zero misclosure); ``rotation_deg``/``scale``:
    the turn and scale that take the record chord A-B onto the found one.
    """

    start: int
    end: int
    corners: tuple[int, ...]
    record_m: float
    measured_m: float
    misclosure_m: float
    precision: float | None
    rotation_deg: float
    scale: float

    def as_dict(self) -> dict[str, Any]:
        """Plain JSON values."""
        return {
            "start": self.start,
            "end": self.end,
            "corners": list(self.corners),
            "record_m": self.record_m,
            "measured_m": self.measured_m,
            "misclosure_m": self.misclosure_m,
            "precision": self.precision,
            "rotation_deg": self.rotation_deg,
            "scale": self.scale,
        }


@dataclass(frozen=True)
class Corner:
    """One corner with its status and position.

    ``status``: ``found``, ``held``, ``restored`` or ``record only``; ``method`` the
    restoration method (``None`` unless restored); ``run`` the anchors (A, B) of the run that
    restored it, or for a record-only corner the anchor it follows from (A, A), else ``None``.
    ``easting``/``northing`` in the grid CRS unit, ``east_m``/``north_m`` grid metres from the
    point of beginning, ``lat``/``lon`` WGS84 degrees. ``record_east_m``/``record_north_m``:
    where the record alone puts it. ``description``: the call's words ("a stone pile").
    """

    index: int
    status: str
    method: str | None
    run: tuple[int, int] | None
    easting: float
    northing: float
    east_m: float
    north_m: float
    lat: float
    lon: float
    record_east_m: float
    record_north_m: float
    description: str | None

    @property
    def status_text(self) -> str:
        """``restored (proportion, 1-3)``, ``record only (from 3)``, ``found``, ``held``."""
        if self.status == "restored" and self.run is not None:
            return f"restored ({self.method}, {self.run[0]}-{self.run[1]})"
        if self.status == "record only" and self.run is not None:
            return f"record only (from {self.run[0]})"
        return self.status

    def as_dict(self) -> dict[str, Any]:
        """Plain JSON values."""
        return {
            "index": self.index,
            "status": self.status,
            "method": self.method,
            "run": list(self.run) if self.run is not None else None,
            "easting": self.easting,
            "northing": self.northing,
            "east_m": self.east_m,
            "north_m": self.north_m,
            "lat": self.lat,
            "lon": self.lon,
            "record_east_m": self.record_east_m,
            "record_north_m": self.record_north_m,
            "description": self.description,
        }


@dataclass(frozen=True)
class Restoration:
    """Every corner of a document with its status (see the module docstring).

    ``corners`` in corner order (a closed figure lists ``0 .. n-1``, an open line ``0 .. n``);
    ``restored`` the corners restored or record only (what a stakeout sets); ``crs`` the
    grid of ``easting``/``northing``; ``follow_rotation_deg`` the turn applied to corners
    outside every run (fit rotation less the conversion's; 0 without a fit).
    """

    file: str | None
    method: str
    crs: str
    closed: bool
    corners: tuple[Corner, ...]
    runs: tuple[RestorationRun, ...]
    follow_rotation_deg: float
    notes: tuple[str, ...]

    @property
    def restored(self) -> tuple[Corner, ...]:
        """The corners a crew has to set: restored or record only."""
        return tuple(c for c in self.corners if c.status in ("restored", "record only"))

    def as_dict(self) -> dict[str, Any]:
        """The ``restoration`` object of ``lodeline fit --json`` and ``lodeline stakeout``."""
        return {
            "method": self.method,
            "crs": self.crs,
            "closed": self.closed,
            "corners": [c.as_dict() for c in self.corners],
            "runs": [r.as_dict() for r in self.runs],
            "follow_rotation_deg": self.follow_rotation_deg,
            "notes": list(self.notes),
        }


def _anchors(conv: DocumentConversion, n_corners: int) -> dict[int, tuple[str, float, float]]:
    """Anchor corners: index -> (status, grid east m, grid north m)."""
    out: dict[int, tuple[str, float, float]] = {}
    if conv.place_by_grid or not conv.document.closed:
        out[0] = ("held", 0.0, 0.0)
    for c in conv.courses:
        if c.found is not None:
            fe, fn = _grid_m(conv, c.found.easting, c.found.northing)
            out[c.index % n_corners] = ("found", fe, fn)
    return out


def _description(conv: DocumentConversion, index: int) -> str | None:
    """The call's words for corner ``index`` (the course ending there), "to" dropped."""
    if index == 0:
        return "point of beginning"
    words = conv.courses[index - 1].recorded.call_note
    if not words:
        return None
    words = words.strip().rstrip(".;,")
    low = words.casefold()
    for lead in ("to ", "at "):
        if low.startswith(lead):
            return words[len(lead) :].strip() or None
    return words


def _unrolled(record: np.ndarray, n: int, j: int) -> np.ndarray:
    """Record position of unrolled station j of a closed figure (j may exceed n)."""
    return record[j] if j <= n else record[n] + record[j - n]


def restore_corners(
    conv: DocumentConversion,
    *,
    method: Method = "proportion",
    fit_rotation_deg: float | None = None,
) -> Restoration:
    """Restore the lost corners of a converted document from its found ones.

    ``method``: ``"proportion"`` or ``"rotate-scale"`` (module docstring). ``fit_rotation_deg``:
    the record-to-found fit's rotation (recorded azimuths onto grid, degrees clockwise;
    :func:`geo.survey.fit_document`), used to turn corners outside every run; ``None`` leaves
    them on the converted record. Raises :class:`InputError` for an unknown method.
    """
    if method not in METHODS:
        raise InputError(
            f"unknown restoration {method!r}: use proportion or rotate-scale", field="--restore"
        )
    if not placed(conv):
        raise InputError(UNPLACED, file=conv.file, field="record.declination")
    n = len(conv.courses)
    closed = bool(conv.document.closed)
    n_corners = n if closed else n + 1
    record = np.array([_grid_m(conv, s.easting, s.northing) for s in conv.stations])
    lengths = np.array([c.length_m for c in conv.courses])
    anchors = _anchors(conv, n_corners)
    pos: dict[int, tuple[float, float]] = {k: (v[1], v[2]) for k, v in anchors.items()}
    state: dict[int, tuple[str, str | None, tuple[int, int] | None]] = {
        k: (v[0], None, None) for k, v in anchors.items()
    }
    notes: list[str] = []
    order = sorted(anchors)
    pairs = list(zip(order, order[1:], strict=False))
    if closed and order:
        pairs.append((order[-1], order[0] + n))
    runs = []
    for a, b in pairs:
        if b - a < 1 or (closed and len(order) == 1 and method == "rotate-scale"):
            continue
        run = _restore_run(record, lengths, n, closed, a, b, pos[a], pos[b % n_corners], method)
        runs.append(run[0])
        for j, (e, nn) in zip(range(a + 1, b), run[1], strict=True):
            pos[j % n_corners] = (e, nn)
            state[j % n_corners] = ("restored", method, (a % n_corners, b % n_corners))
    turn = 0.0
    if fit_rotation_deg is not None and order:
        from .angles import angle_difference

        first = conv.courses[0]
        grid_rot = float(angle_difference(first.azimuth.grid, first.recorded.azimuth_deg))
        turn = float(angle_difference(fit_rotation_deg, grid_rot))
    for i in range(n_corners):
        if i in pos:
            continue
        if not order:
            pos[i] = (float(record[i][0]), float(record[i][1]))
            state[i] = ("record only", None, None)
            continue
        a = min(order, key=lambda k: abs(k - i))
        pos[i] = _follow(record[i] - record[a], pos[a], turn)
        state[i] = ("record only", None, (a, a))
    if not order:
        notes.append("no found corner: every corner is where the record alone puts it")
    if closed and len(order) == 1 and method == "rotate-scale":
        notes.append("one found corner: rotate-scale needs two; the others follow the record")
    return Restoration(
        file=conv.file,
        method=method,
        crs=conv.crs,
        closed=closed,
        corners=_corners(conv, record, pos, state, n_corners),
        runs=tuple(runs),
        follow_rotation_deg=turn,
        notes=tuple(notes),
    )


def _follow(delta: np.ndarray, at: tuple[float, float], turn_deg: float) -> tuple[float, float]:
    """``at`` plus the record vector ``delta`` (east, north) turned clockwise by ``turn_deg``."""
    t = math.radians(turn_deg)
    de, dn = float(delta[0]), float(delta[1])
    return at[0] + de * math.cos(t) + dn * math.sin(t), at[1] - de * math.sin(t) + dn * math.cos(t)


def _restore_run(
    record: np.ndarray,
    lengths: np.ndarray,
    n: int,
    closed: bool,
    a: int,
    b: int,
    fa: tuple[float, float],
    fb: tuple[float, float],
    method: str,
) -> tuple[RestorationRun, list[tuple[float, float]]]:
    """One run A..B (unrolled station numbers): its summary and the inner corners' positions."""
    pts = np.array([_unrolled(record, n, j) if closed else record[j] for j in range(a, b + 1)])
    w = np.array([lengths[j % n] for j in range(a, b)])
    if method == "proportion":
        east, north = proportion_run(pts[:, 0], pts[:, 1], w, start=fa, end=fb)
    else:
        east, north, _, _ = rotate_scale_run(pts[:, 0], pts[:, 1], start=fa, end=fb)
    rec = complex(*(pts[-1] - pts[0]))
    meas = complex(fb[0] - fa[0], fb[1] - fa[1])
    mis = abs(rec - meas)
    ratio = meas / rec if abs(rec) > 0 else complex(1.0, 0.0)
    summary = RestorationRun(
        start=a % (n if closed else n + 1),
        end=b % (n if closed else n + 1),
        corners=tuple(j % (n if closed else n + 1) for j in range(a + 1, b)),
        record_m=abs(rec),
        measured_m=abs(meas),
        misclosure_m=mis,
        precision=(float(w.sum()) / mis) if mis > 1e-9 else None,
        rotation_deg=-math.degrees(math.atan2(ratio.imag, ratio.real)),
        scale=abs(ratio),
    )
    return summary, [(float(e), float(v)) for e, v in zip(east[1:-1], north[1:-1], strict=True)]


def _corners(
    conv: DocumentConversion,
    record: np.ndarray,
    pos: dict[int, tuple[float, float]],
    state: dict[int, tuple[str, str | None, tuple[int, int] | None]],
    n_corners: int,
) -> tuple[Corner, ...]:
    """Corner records with grid coordinates and latitude/longitude (one inverse projection)."""
    from . import grid as _grid

    p0 = conv.stations[0]
    u = conv.grid_unit_m
    east = np.array([pos[i][0] for i in range(n_corners)])
    north = np.array([pos[i][1] for i in range(n_corners)])
    easting = p0.easting + east / u
    northing = p0.northing + north / u
    lat, lon = _grid.to_geographic(conv.crs, easting=easting, northing=northing)
    lat, lon = np.atleast_1d(lat), np.atleast_1d(lon)
    return tuple(
        Corner(
            index=i,
            status=state[i][0],
            method=state[i][1],
            run=state[i][2],
            easting=float(easting[i]),
            northing=float(northing[i]),
            east_m=float(east[i]),
            north_m=float(north[i]),
            lat=float(lat[i]),
            lon=float(lon[i]),
            record_east_m=float(record[i][0]),
            record_north_m=float(record[i][1]),
            description=_description(conv, i),
        )
        for i in range(n_corners)
    )


def restore_document(conv: DocumentConversion, *, method: Method = "proportion") -> Restoration:
    """:func:`restore_corners` with the record-to-found fit's rotation when two or more
    stations are found (:func:`geo.survey.fit_document`), else without (the one call every
    interface uses)."""
    from .errors import FitError
    from .survey import fit_document, found_count

    rotation = None
    if found_count(conv) >= 2:
        try:
            rotation = fit_document(conv).rotation_deg
        except FitError:
            rotation = None
    return restore_corners(conv, method=method, fit_rotation_deg=rotation)


def corner_features(
    conv: DocumentConversion, *, method: Method = "proportion", decimals: int = 8
) -> list[dict]:
    """GeoJSON (RFC 7946) Point features of the corners of a document with found corners
    (``kind`` = ``"corner"``, with ``status``, ``method``, ``run``, grid coordinates and the
    call's words); an empty list when nothing is found (the stations are the record).
    Coordinates are rounded to ``decimals`` (8: about a millimetre)."""
    if not any(c.found is not None for c in conv.courses):
        return []  # no corner beyond the beginning is found or held: nothing to restore
    res = restore_document(conv, method=method)
    if not any(c.status in ("found", "held") for c in res.corners if c.index > 0):
        return []
    return [
        {
            "type": "Feature",
            "geometry": {
                "type": "Point",
                "coordinates": [round(c.lon, decimals), round(c.lat, decimals)],
            },
            "properties": {
                "kind": "corner",
                "index": c.index,
                "status": c.status,
                "method": c.method,
                "run": list(c.run) if c.run is not None else None,
                "easting": c.easting,
                "northing": c.northing,
                "description": c.description,
            },
        }
        for c in res.corners
    ]
