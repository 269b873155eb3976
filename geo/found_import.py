"""Found corners from a receiver's point file, written into a document's ``found`` keys.

Public API
----------
``plan_found(conv, points, *, match="name", within_m=5.0, file=None) -> FoundPlan``
    Which point of a point file (:mod:`geo.point_files`) is which corner, what did not match
    and what is refused, and the ``found`` value each matched corner gets.
``with_found(data, plan) -> dict``
    The document mapping (as read from TOML or JSON) with the matched ``found`` values set.
``save_found(path, plan) -> Path``
    Write the matched ``found`` values into the document file: TOML edited in place with its
    comments and layout kept (tomlkit), JSON rewritten with the same keys; checked as a
    document before anything is written, saved atomically with the previous file kept as
    ``NAME.bak``.

Corners
    Corner ``k`` is station ``k``, the end of course ``k``; its ``found`` key is course
    ``k``'s. In a closed traverse the point of beginning is the end of the last course, so a
    point named ``0`` is that corner too; the beginning of an open line has no ``found`` key.

Matching by name (``match="name"``)
    A point whose name is the corner's number (``"3"``, ``"03"``, ``"3 chestnut stump"``,
    ``"C3"``, ``"cor 3"``, ``"corner 3"``, ``"sta 3"``, ``"station 3"``, ``"mon 3"``) or
    exactly the monument's words of the call (``"chestnut stump"``, case ignored) is that
    corner. Two points with the same name are both refused.
Matching by position (``match="nearest"``)
    A point is the corner whose marched station (the calls run on the grid, unadjusted, as
    :func:`geo.north.convert_document` gives them) lies within ``within_m`` metres of it, in
    the grid plane; a point within the distance of two corners is refused.

In both, two points matched to one corner are both refused. The value written keeps the
point's own numbers: ``{lat, lon}`` for a geographic point, ``{easting, northing}`` for a
point in the document's grid; a point in another CRS is projected to the document's grid
(through WGS84 with pyproj) and written as ``{easting, northing}`` to 0.1 mm of the unit.
"""

from __future__ import annotations

import copy
import json
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .errors import InputError, LodelineError

if TYPE_CHECKING:
    from .north import DocumentConversion
    from .point_files import FieldPoint

__all__ = ["FoundMatch", "FoundPlan", "plan_found", "save_found", "with_found"]

_NUMBER = re.compile(
    r"^\s*(?:(?:corner|cor|c|station|sta|stn|monument|mon)[\s.#_-]*)?0*(\d+)(?:$|[\s:_-])",
    re.IGNORECASE,
)


@dataclass(frozen=True)
class FoundMatch:
    """A point matched to a corner: the ``course`` whose ``found`` key it fills, ``how``
    (``"name"`` or ``"nearest"``), ``offset_m`` (grid distance from the marched station,
    metres), the ``found`` value written and the ``previous`` one (``None`` when none)."""

    point: FieldPoint
    course: int
    how: str
    offset_m: float
    found: dict[str, float]
    previous: dict[str, float] | None


@dataclass(frozen=True)
class FoundPlan:
    """What a point file gives a document: ``matched`` in course order; ``unmatched`` and
    ``refused`` as (point, reason) in file order."""

    matched: tuple[FoundMatch, ...]
    unmatched: tuple[tuple[FieldPoint, str], ...]
    refused: tuple[tuple[FieldPoint, str], ...]


# --------------------------------------------------------------------------------------------
# Where each point is on the document's grid


def _same_crs(a: str, b: str) -> bool:
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    try:
        return CRS.from_user_input(a) == CRS.from_user_input(b)
    except CRSError:
        raise InputError(f"unknown CRS {a!r}", field="crs") from None


def _on_grid(conv: DocumentConversion, p: FieldPoint) -> tuple[float, float, dict[str, float]]:
    """(easting, northing) on the document's grid and the ``found`` value to write."""
    from . import grid

    if not p.grid:
        e, n = grid.to_grid(conv.crs, lat=p.lat, lon=p.lon)
        return float(e), float(n), {"lat": float(p.lat or 0.0), "lon": float(p.lon or 0.0)}
    assert p.easting is not None and p.northing is not None
    if p.crs is None or _same_crs(p.crs, conv.crs):
        return p.easting, p.northing, {"easting": p.easting, "northing": p.northing}
    lat, lon = grid.to_geographic(p.crs, easting=p.easting, northing=p.northing)
    e, n = grid.to_grid(conv.crs, lat=lat, lon=lon)
    e, n = round(float(e), 4), round(float(n), 4)
    return e, n, {"easting": e, "northing": n}


# --------------------------------------------------------------------------------------------
# Candidates


def _corner_of_station(conv: DocumentConversion, station: int) -> int | None:
    """The course whose found key holds station ``station`` (None: an open line's start)."""
    n = len(conv.courses)
    if station == 0:
        return n if conv.document.closed else None
    return station


def _by_name(conv: DocumentConversion, name: str | None) -> tuple[set[int], str]:
    from .marks import corner_words

    if not name:
        return set(), "has no name"
    n = len(conv.courses)
    m = _NUMBER.match(name)
    if m:
        k = int(m.group(1))
        if k > n:
            return set(), f"names corner {k}, and the traverse has {n} corners"
        course = _corner_of_station(conv, k)
        if course is None:
            return set(), "names the point of beginning, which an open line does not hold found"
        return {course}, ""
    wanted = name.strip().lower()
    hits = {
        c.index
        for c in conv.courses
        if (corner_words(c.recorded.call_note) or "").lower() == wanted
    }
    return hits, "" if hits else f"'{name}' is no corner's number or monument"


def _by_position(
    conv: DocumentConversion, e: float, n: float, within_m: float
) -> tuple[set[int], str]:
    unit = conv.grid_unit_m
    dist = [math.hypot(s.easting - e, s.northing - n) * unit for s in conv.stations]
    near = [k for k, d in enumerate(dist) if d <= within_m]
    hits = {c for c in (_corner_of_station(conv, k) for k in near) if c is not None}
    if hits:
        return hits, ""
    if near:
        return set(), "lies at the beginning of an open line, which holds no found"
    best = min(range(len(dist)), key=dist.__getitem__)
    return set(), f"nearest station {best} is {dist[best]:.2f} m away (more than {within_m:g} m)"


def _offset(conv: DocumentConversion, course: int, e: float, n: float) -> float:
    s = conv.stations[course]
    return math.hypot(s.easting - e, s.northing - n) * conv.grid_unit_m


def _previous(conv: DocumentConversion, course: int) -> dict[str, float] | None:
    f = conv.document.course[course - 1].found
    return None if f is None else f.model_dump(exclude_none=True)


def _duplicate_names(points: Sequence[FieldPoint]) -> dict[int, str]:
    seen: dict[str, list[int]] = {}
    for i, p in enumerate(points):
        if p.name:
            seen.setdefault(p.name.strip().lower(), []).append(i)
    out = {}
    for idx in seen.values():
        if len(idx) > 1:
            for i in idx:
                others = ", ".join(points[j].where for j in idx if j != i)
                out[i] = f"its name '{points[i].name}' is also at {others}"
    return out


def plan_found(
    conv: DocumentConversion,
    points: Sequence[FieldPoint],
    *,
    match: str = "name",
    within_m: float = 5.0,
    file: str | None = None,
) -> FoundPlan:
    """Match ``points`` to the corners of ``conv`` (see the module docstring).

    ``match``: ``"name"`` or ``"nearest"``; ``within_m``: the largest distance (metres, grid
    plane) of a nearest match. Raises InputError for an unknown rule, a bad distance, or a
    point that cannot be put on the document's grid (naming ``file`` and the point).
    """
    if match not in ("name", "nearest"):
        raise InputError(f"unknown match rule {match!r}: use name or nearest", field="match")
    if not (math.isfinite(within_m) and within_m > 0.0):
        raise InputError(f"the distance {within_m} m must be above zero", field="within")
    refused: dict[int, str] = _duplicate_names(points) if match == "name" else {}
    unmatched: dict[int, str] = {}
    chosen: dict[int, tuple[int, float, dict[str, float]]] = {}
    for i, p in enumerate(points):
        try:
            e, n, value = _on_grid(conv, p)
        except LodelineError as err:
            raise InputError(f"{p.where}: {err.message}", file=file, field="crs") from None
        if i in refused:
            continue
        if match == "name":
            hits, why = _by_name(conv, p.name)
        else:
            hits, why = _by_position(conv, e, n, within_m)
        if len(hits) > 1:
            refused[i] = "matches corners " + " and ".join(str(k) for k in sorted(hits))
        elif not hits:
            unmatched[i] = why
        else:
            course = hits.pop()
            chosen[i] = (course, _offset(conv, course, e, n), value)
    by_course: dict[int, list[int]] = {}
    for i, (course, _, _) in chosen.items():
        by_course.setdefault(course, []).append(i)
    for course, idx in by_course.items():
        if len(idx) > 1:
            for i in idx:
                others = ", ".join(points[j].where for j in idx if j != i)
                refused[i] = f"corner {course} is matched by {others} too"
                del chosen[i]
    matched = sorted(
        (FoundMatch(points[i], c, match, off, v, _previous(conv, c))
         for i, (c, off, v) in chosen.items()),
        key=lambda m: m.course,
    )  # fmt: skip
    return FoundPlan(
        tuple(matched),
        tuple((points[i], unmatched[i]) for i in sorted(unmatched)),
        tuple((points[i], refused[i]) for i in sorted(refused)),
    )


# --------------------------------------------------------------------------------------------
# Writing


def with_found(data: Mapping[str, Any], plan: FoundPlan) -> dict[str, Any]:
    """A copy of the document mapping ``data`` with every matched ``found`` value set."""
    out = copy.deepcopy(dict(data))
    courses = out.get("course")
    if not isinstance(courses, list):
        raise InputError("the document has no courses", field="course")
    for m in plan.matched:
        courses[m.course - 1] = {**courses[m.course - 1], "found": dict(m.found)}
    return out


def save_found(path: str | Path, plan: FoundPlan) -> Path:
    """Write the matched ``found`` values into the document at ``path`` (see the module
    docstring); return the path. A TOML document is saved through
    :func:`geo.document.save_document`, which edits its text: only the ``found`` lines change.
    Raises DocumentError or OutputError naming the file."""
    from .atomic import write_atomic
    from .document import (
        _format_of,
        document_from_dict,
        document_to_dict,
        loads_document,
        read_document_text,
        save_document,
    )

    p = Path(path)
    fmt = _format_of(p, str(p))
    text = read_document_text(p)
    if fmt == "toml":
        data = document_to_dict(loads_document(text, "toml", file=str(p), check=False))
        data["course"] = [dict(c) for c in data.get("course", ())]
        doc = document_from_dict(with_found(data, plan), file=str(p))  # never save a bad one
        return save_document(doc, p)
    new = json.dumps(with_found(json.loads(text), plan), indent=2, ensure_ascii=False) + "\n"
    loads_document(new, fmt, file=str(p))  # type: ignore[arg-type]  # never save a bad document
    return write_atomic(p, new, overwrite=True, backup=True)
