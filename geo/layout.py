"""A systematic cruise design: parallel lines across a boundary, written as a document.

``lay_out_cruise(conv, bearing=…, spacing=…, plot_spacing=…)`` takes a converted boundary
document (a closed figure) and writes the cruise that runs parallel lines across it: one course
per line (its plots by ``every``), an offset course from the end of each line to the start of
the next, as a traverse document of its own that lodeline converts, closes, lists and exports
like any other.

Method (in the grid plane of the boundary's CRS)
    The boundary is the figure of its stations as marched by :mod:`geo.north` (the closing
    gap, if any, bridged from the last station to the first). The baseline bearing is read in
    the chosen north (``north="magnetic"``: magnetic north at the target date, the compass the
    crew carries; ``"true"``; ``"grid"``) and turned onto grid north with D (target date) and
    gamma at the boundary's point of beginning: ``grid = true - gamma``, ``true = magnetic + D``.
    Lines run along that grid direction, ``spacing`` apart; the first lies half a spacing in
    from the boundary's extreme point on its left (looking along the bearing), and each line
    is cut by the boundary into the pieces that lie inside it (even-odd rule), so a concave
    boundary gives a line in several pieces. Lines are run alternately along the bearing and
    back against it (a serpentine). Grid lengths become ground lengths by the combined factor
    at the point of beginning. Bearings are written in the chosen north to the second,
    distances in the boundary's record unit to 1/10,000 of it (a chain: a hundredth of a
    link). The plots stand every ``plot_spacing`` along each line, the first ``first``
    (default half a plot spacing, common practice: no plot on the boundary) from its start.

Public API
    ``lay_out_cruise(conv, *, bearing, spacing, plot_spacing, north="magnetic", first=None)
    -> Document``; ``MAX_LINES``.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

from .errors import DocumentError, InputError, LodelineError

if TYPE_CHECKING:
    from .document import Document
    from .north import DocumentConversion

__all__ = ["MAX_LINES", "lay_out_cruise"]

#: The most parallel lines one layout may hold (a spacing in the wrong unit otherwise asks
#: for millions).
MAX_LINES = 5_000
#: Decimals of the record unit written in the calls.
_DECIMALS = 4


def _length_m(doc: Document, text: str, field: str) -> float:
    from .document import document_distance

    try:
        value = float(document_distance(doc, text).metres)
    except LodelineError as err:
        raise InputError(err.message, field=field) from None
    if not (value > 0.0 and math.isfinite(value)):
        raise InputError("must be a positive length", field=field)
    return value


def _grid_azimuth(conv: DocumentConversion, bearing: str, north: str) -> float:
    """The baseline's grid azimuth (degrees) from ``bearing`` read in ``north``."""
    from .bearings import parse_bearing

    try:
        az = float(parse_bearing(bearing).azimuth_deg)
    except LodelineError as err:
        raise InputError(err.message, field="bearing") from None
    first = conv.courses[0]
    gamma = first.convergence_deg
    if north == "grid":
        return az % 360.0
    if north == "true":
        return (az - gamma) % 360.0
    return (az + first.declination_target_deg - gamma) % 360.0


def _from_grid(conv: DocumentConversion, grid_az: float, north: str) -> float:
    """A grid azimuth written in ``north`` (the inverse of :func:`_grid_azimuth`)."""
    first = conv.courses[0]
    true = grid_az + first.convergence_deg
    if north == "grid":
        return grid_az % 360.0
    if north == "true":
        return true % 360.0
    return (true - first.declination_target_deg) % 360.0


def _pieces(ring: list[tuple[float, float]], u: float) -> list[tuple[float, float]]:
    """``(v_start, v_end)`` of the parts of the line at offset ``u`` inside the ring (even-odd
    rule, edges taken half-open so a vertex on the line counts once)."""
    vs = []
    for (ua, va), (ub, vb) in zip(ring, ring[1:] + ring[:1], strict=True):
        if (ua <= u < ub) or (ub <= u < ua):
            vs.append(va + (u - ua) * (vb - va) / (ub - ua))
    vs.sort()
    return [(vs[k], vs[k + 1]) for k in range(0, len(vs) - 1, 2) if vs[k + 1] > vs[k]]


def _segments(
    conv: DocumentConversion, grid_az: float, spacing_g: float
) -> list[tuple[tuple[float, float], tuple[float, float]]]:
    """The cruise lines as ``((e, n) start, (e, n) end)`` in grid units, in running order."""
    a = math.radians(grid_az)
    d = (math.sin(a), math.cos(a))  # along the line (east, north)
    p = (math.cos(a), -math.sin(a))  # to the right of the line
    st = conv.stations
    n_pts = len(st) - 1 if len(st) > 2 else len(st)
    x0, y0 = st[0].easting, st[0].northing
    ring = [
        (
            p[0] * (s.easting - x0) + p[1] * (s.northing - y0),
            d[0] * (s.easting - x0) + d[1] * (s.northing - y0),
        )
        for s in st[:n_pts]
    ]
    u_min = min(u for u, _ in ring)
    u_max = max(u for u, _ in ring)
    count = math.floor((u_max - u_min) / spacing_g + 0.5)
    if count > MAX_LINES:
        raise InputError(
            f"asks for {count:,} lines (at most {MAX_LINES:,}): check the spacing and its unit",
            field="spacing",
        )
    out = []
    k = 0
    u = u_min + spacing_g / 2.0
    while u < u_max:
        pieces = _pieces(ring, u)
        if k % 2:
            pieces = [(v1, v0) for v0, v1 in reversed(pieces)]
        for v0, v1 in pieces:
            start = (x0 + u * p[0] + v0 * d[0], y0 + u * p[1] + v0 * d[1])
            end = (x0 + u * p[0] + v1 * d[0], y0 + u * p[1] + v1 * d[1])
            out.append((start, end))
        if pieces:
            k += 1
        u += spacing_g
    return out


def lay_out_cruise(
    conv: DocumentConversion,
    *,
    bearing: str,
    spacing: str,
    plot_spacing: str,
    north: str = "magnetic",
    first: str | None = None,
) -> Document:
    """The cruise document of parallel lines across the boundary ``conv`` (see the module
    notes). ``bearing``: the baseline bearing text ("N 10 E"), in ``north``; ``spacing``,
    ``plot_spacing``, ``first``: distance texts ("5 chains"; a bare number is in the
    boundary's record.distance_unit). Raises InputError (field named) for a bad option,
    DocumentError for a boundary that is open or encloses nothing."""
    from .bearings import format_bearing
    from .document import document_from_dict
    from .grid import to_geographic
    from .measures import conversion_unit, in_unit

    doc = conv.document
    if north not in ("magnetic", "true", "grid"):
        raise InputError(f"unknown north {north!r}: use magnetic, true or grid", field="north")
    if not doc.closed or len(conv.courses) < 3:
        raise DocumentError(
            "a layout needs a closed boundary of three courses or more (closed = true)",
            file=conv.file,
            field="closed",
        )
    if north == "magnetic" and conv.courses[0].azimuth.magnetic_target is None:
        raise InputError("no declination at the target date is known", field="north")
    ru = conversion_unit(conv)
    k = conv.courses[0].combined_factor
    spacing_m = _length_m(doc, spacing, "spacing")
    plot_m = _length_m(doc, plot_spacing, "plots")
    first_m = plot_m / 2.0 if first is None else _length_m(doc, first, "first")
    grid_az = _grid_azimuth(conv, bearing, north)
    lines = _segments(conv, grid_az, spacing_m * k / conv.grid_unit_m)
    if not lines:
        raise InputError(
            "no line falls inside the boundary: make the spacing smaller", field="spacing"
        )

    def call(e0: float, n0: float, e1: float, n1: float) -> tuple[str, float]:
        de, dn = e1 - e0, n1 - n0
        ground = math.hypot(de, dn) * conv.grid_unit_m / k
        az = _from_grid(conv, math.degrees(math.atan2(de, dn)) % 360.0, north)
        text = f"{format_bearing(az, precision=1 / 3600)} {in_unit(ground, ru):.{_DECIMALS}f}"
        return f"{text} {ru.unit}", ground

    courses: list[dict[str, Any]] = []
    plots = 0
    for i, ((e0, n0), (e1, n1)) in enumerate(lines, start=1):
        if i > 1:
            pe, pn = lines[i - 2][1]
            text, ground = call(pe, pn, e0, n0)
            if ground > 1e-6:
                courses.append({"call": text, "note": f"offset to line {i}"})
        text, ground = call(e0, n0, e1, n1)
        course = {"call": text, "note": f"line {i}"}
        if ground > first_m:
            course["every"] = f"{in_unit(plot_m, ru):.{_DECIMALS}f} {ru.unit}"
            plots += math.floor((ground - first_m) / plot_m) + 1
        courses.append(course)
    from .along import MAX_ALONG_POINTS

    if plots > MAX_ALONG_POINTS:
        raise InputError(
            f"asks for {plots:,} plots (at most {MAX_ALONG_POINTS:,}): check the plot spacing",
            field="plots",
        )
    lat, lon = to_geographic(conv.crs, easting=lines[0][0][0], northing=lines[0][0][1])
    record: dict[str, Any] = {"reference": north, "distance_unit": ru.unit}
    if north == "magnetic":
        record["date"] = conv.target_date.isoformat() if conv.target_date else conv.target_year
        record["model"] = conv.target_model
    if ru.foot is not None:
        record["foot"] = ru.foot
    if doc.record.vara_inches is not None:
        record["vara_inches"] = doc.record.vara_inches
    data = {
        "format_version": 1,
        "title": f"Cruise lines across {doc.title or conv.file or 'the boundary'}",
        "closed": False,
        "place": {
            "lat": round(float(lat), 9),
            "lon": round(float(lon), 9),
            "height_m": conv.height_m,
        },  # fmt: skip
        "grid": {"crs": conv.crs},
        "record": record,
        "plots": {"start": 1, "first": f"{in_unit(first_m, ru):.{_DECIMALS}f} {ru.unit}"},
        "course": courses,
    }
    if north == "magnetic":
        data["target"] = {"date": record["date"], "model": conv.target_model}
    return document_from_dict(data, file=None)
