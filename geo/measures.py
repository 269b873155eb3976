"""Lengths and areas in the record's own units, beside metres.

A deed in perches or a cruise line in chains is read in those units: every output that shows a
length in metres also shows it in the *record unit* of the document, and every area in acres,
hectares and square metres, and for a perch or chain document in acres, roods and perches.

The record unit
    ``record.distance_unit`` when the document names one; else the unit most of its courses are
    written in (the first such unit on a tie); metres for a document with neither. Foot-based
    units use the document's foot (``record.foot``, else the default for the record date, see
    :mod:`geo.units`); a vara uses ``record.vara_inches``. The sizes are the exact ones of
    :mod:`geo.units` (a Gunter's chain is 66 feet = 100 links; a perch 16.5 feet = 25 links).

Chains and links
    A length in chains is written ``"10 ch 50 lk"`` (whole chains and links, the links to
    ``decimals - 2`` places, so the text carries as many decimals of a chain as ``decimals``);
    a rounding that reaches 100 links carries into the chains (``"11 ch 0 lk"``).

Acres, roods and perches
    1 acre = 4 roods = 160 square perches (a rood is 40 square perches; NIST Handbook 44,
    Appendix C gives the acre as 160 square rods = 43,560 square feet, and the rood of a
    quarter acre is the statute rood of English measure). The square perch is that of the
    document's foot. The total is rounded to the perches' decimals first and then split, so the
    three parts always add up to the rounded total.

Public API
    ``RecordUnit``, ``record_unit(doc) -> RecordUnit``, ``conversion_unit(conv)``,
    ``in_unit(metres, ru) -> float``, ``document_foot(doc)``,
    ``length_text(metres, ru, decimals=2) -> str``, ``AcresRoodsPerches``,
    ``acres_roods_perches(m2, foot, perch_decimals=1)``, ``uses_roods(ru) -> bool``,
    ``area_text(m2, ru) -> str``, ``conversion_record_values(conv) -> dict`` and
    ``closure_record_values(conv, closure) -> dict`` (the JSON additions; see their docs).
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from . import units
from .errors import LodelineError

if TYPE_CHECKING:
    from .document import Document
    from .north import DocumentConversion
    from .survey import SurveyClosure

__all__ = [
    "AcresRoodsPerches",
    "RecordUnit",
    "acres_roods_perches",
    "area_text",
    "closure_record_values",
    "conversion_unit",
    "conversion_record_values",
    "in_unit",
    "length_text",
    "record_unit",
    "uses_roods",
]

#: Unit names in prose (plural).
UNIT_NAMES = {
    "in": "inches",
    "ft": "feet",
    "yd": "yards",
    "link": "links",
    "vara": "varas",
    "rod": "rods",
    "pole": "poles",
    "perch": "perches",
    "chain": "chains",
    "mile": "miles",
    "m": "metres",
    "km": "kilometres",
}

#: Square perches in an acre and in a rood.
PERCHES_PER_ACRE = 160
PERCHES_PER_ROOD = 40


@dataclass(frozen=True)
class RecordUnit:
    """The record unit of a document.

    ``unit`` is a canonical unit name of :mod:`geo.units` (``"chain"``, ``"perch"``, ``"m"``…);
    ``metres`` the exact size in metres as a float; ``foot`` the foot it is defined from
    (``None`` for metric units); ``label`` the short label ("ch", "perches", "ft"…);
    ``source`` says where the choice came from (shown in reports).
    """

    unit: str
    metres: float
    foot: str | None
    label: str
    source: str

    @property
    def name(self) -> str:
        """The unit's name in prose, plural: "chains", "perches", "US survey feet"…"""
        if self.unit == "ft" and self.foot:
            return "US survey feet" if self.foot == "us" else "international feet"
        return UNIT_NAMES[self.unit]

    @property
    def metric(self) -> bool:
        """True for metres and kilometres (no second unit is shown beside metres)."""
        return self.unit in ("m", "km")

    def as_dict(self) -> dict[str, Any]:
        """``{"unit", "label", "metres", "foot"}`` for the JSON outputs."""
        return {"unit": self.unit, "label": self.label, "metres": self.metres, "foot": self.foot}


def document_foot(doc: Document) -> str | None:
    """The document's foot (``record.foot``, else the default for the record date), or
    ``None`` when neither tells it."""
    try:
        return units.choose_foot(doc.record.foot, doc.record.date).foot
    except LodelineError:
        return None


def conversion_unit(conv: DocumentConversion, unit: str | None = None) -> RecordUnit:
    """:func:`record_unit` of a converted document, from the units its courses were read in
    (no call is read again)."""
    return record_unit(conv.document, unit, written=[c.length_unit for c in conv.courses])


def record_unit(
    doc: Document, unit: str | None = None, *, written: list[str] | None = None
) -> RecordUnit:
    """The record unit of ``doc`` (see the module notes), or ``unit`` when given.
    ``written``: the units the courses are written in, when already known (else the calls
    are read).

    Raises :class:`~geo.errors.InputError` for an unknown ``unit``, or a foot-based unit in a
    document whose foot cannot be told, or a vara without ``record.vara_inches``.
    """
    record = doc.record
    if unit is not None:
        name, source = units.unit_name(unit), "as asked"
    elif record.distance_unit is not None:
        name, source = units.unit_name(record.distance_unit), "record.distance_unit"
    else:
        written = _written_units(doc) if written is None else _canonical(written)
        if written:
            name = Counter(written).most_common(1)[0][0]
            source = "the unit most courses are written in"
        else:
            name, source = "m", "no unit in the document"
    foot = document_foot(doc) if units.is_foot_based(name) else None
    metres = units.metres_per(name, foot=foot, vara_inches=record.vara_inches)  # type: ignore[arg-type]
    return RecordUnit(name, float(metres), foot, units.UNIT_LABELS[name], source)


def _written_units(doc: Document) -> list[str]:
    """The canonical unit of every course that reads (the same reader as the conversion)."""
    from .document import parse_courses

    try:
        courses = parse_courses(doc)
    except LodelineError:
        return []
    return _canonical([c.length_unit for c in courses])


def _canonical(names: list[str]) -> list[str]:
    out = []
    for name in names:
        try:
            out.append(units.unit_name(name))
        except LodelineError:
            continue
    return out


def in_unit(metres: float, ru: RecordUnit) -> float:
    """``metres`` expressed in the record unit (a float; sign kept)."""
    return metres / ru.metres


def _grouped(value: float, decimals: int) -> str:
    return f"{value:,.{max(decimals, 0)}f}"


def length_text(metres: float, ru: RecordUnit, decimals: int = 2) -> str:
    """A length in the record unit: ``"10 ch 50 lk"``, ``"61.50 perches"``, ``"1,014.75 ft"``.

    ``decimals`` is the number of decimals of the record unit (for chains: of a chain, so
    2 gives whole links). A negative length keeps its sign in front ("-0 ch 12 lk").
    """
    value = in_unit(metres, ru)
    if not math.isfinite(value):
        return "–"
    if ru.unit != "chain":
        return f"{_grouped(value, decimals)} {ru.label}"
    sign = "-" if value < 0 else ""
    link_decimals = max(decimals - 2, 0)
    total_links = round(abs(value) * 100.0, link_decimals)
    chains = int(total_links // 100)
    links = total_links - chains * 100
    if round(links, link_decimals) >= 100:  # a rounding that reaches a whole chain
        chains, links = chains + 1, 0.0
    return f"{sign}{chains:,} ch {links:.{link_decimals}f} lk"


@dataclass(frozen=True)
class AcresRoodsPerches:
    """An area as whole acres, whole roods and (square) perches; ``text`` as written in a deed
    ("61 a 0 r 3.2 p"); ``square_perch_m2`` the square perch used."""

    acres: int
    roods: int
    perches: float
    square_perch_m2: float

    @property
    def text(self) -> str:
        """``"61 a 0 r 3.2 p"``."""
        return f"{self.acres:,} a {self.roods} r {self.perches:g} p"

    def as_dict(self) -> dict[str, Any]:
        """``{"acres", "roods", "perches", "square_perch_m2"}`` for the JSON outputs."""
        return {
            "acres": self.acres,
            "roods": self.roods,
            "perches": self.perches,
            "square_perch_m2": self.square_perch_m2,
        }


def acres_roods_perches(m2: float, foot: str, perch_decimals: int = 1) -> AcresRoodsPerches:
    """Split an area of ``m2`` square metres into acres, roods and square perches of ``foot``
    (1 acre = 4 roods = 160 square perches; the module notes give the sources)."""
    perch_m2 = float(units.square_metres_per("sq_rod", foot=foot))  # type: ignore[arg-type]
    total = round(m2 / perch_m2, perch_decimals)
    scale = 10**perch_decimals
    whole = round(total * scale)  # integer count of 1/scale perches
    acres, rest = divmod(whole, PERCHES_PER_ACRE * scale)
    roods, rest = divmod(rest, PERCHES_PER_ROOD * scale)
    return AcresRoodsPerches(int(acres), int(roods), round(rest / scale, perch_decimals), perch_m2)


def uses_roods(ru: RecordUnit) -> bool:
    """True for a document in perches, rods, poles, chains or links (acres, roods, perches)."""
    return ru.unit in ("perch", "rod", "pole", "chain", "link") and ru.foot is not None


def area_text(m2: float, ru: RecordUnit, acres: float | None = None) -> str:
    """An area as the deed writer reads it: ``"61.020 acres (61 a 0 r 3.2 p) = 24.694 ha =
    246,940 m²"``; ``acres`` is the closure's own figure when known (same acre)."""
    if acres is None:
        foot = ru.foot or "international"
        acres = m2 / float(units.square_metres_per_acre(foot))  # type: ignore[arg-type]
    parts = [f"{acres:,.3f} acres"]
    if uses_roods(ru):
        parts[0] += f" ({acres_roods_perches(m2, ru.foot).text})"  # type: ignore[arg-type]
    parts.append(f"{m2 / 10000.0:,.4f} ha")
    parts.append(f"{m2:,.1f} m²")
    return " = ".join(parts)


# --------------------------------------------------------------------------------------------
# JSON additions: record-unit values under names of their own (metres are kept as they are)
# --------------------------------------------------------------------------------------------


def _running(lengths: list[float]) -> list[float]:
    """Running sums 0, l1, l1 + l2, … of finite ``lengths``, each correctly rounded (the
    value ``math.fsum`` gives of that prefix), in linear time: the exact prefix sum is carried
    as non-overlapping partials (Shewchuk's algorithm, the one ``math.fsum`` uses), and the
    few partials are rounded once a step."""
    out, partials = [0.0], []
    for value in lengths:
        x, kept = value, 0
        for y in partials:
            if abs(x) < abs(y):
                x, y = y, x
            hi = x + y
            lo = y - (hi - x)
            if lo:
                partials[kept] = lo
                kept += 1
            x = hi
        partials[kept:] = [x]
        out.append(math.fsum(partials))
    return out


def conversion_record_values(conv: DocumentConversion) -> dict[str, Any]:
    """What ``lodeline convert --json`` adds: ``record_unit`` and, per course (by index),
    ``length_record`` (the recorded length in the record unit), ``length_record_text`` and
    ``distance_to_start_m``/``distance_to_start_record`` (running distance along the
    traverse from the point of beginning to the course's start)."""
    ru = conversion_unit(conv)
    lengths = [c.length_m for c in conv.courses]
    running = _running(lengths)
    return {
        "record_unit": ru.as_dict(),
        "courses": [
            {
                "index": c.index,
                "length_record": in_unit(c.length_m, ru),
                "length_record_text": length_text(c.length_m, ru),
                "distance_to_start_m": running[i],
                "distance_to_start_record": in_unit(running[i], ru),
            }
            for i, c in enumerate(conv.courses)
        ],
    }


def closure_record_values(conv: DocumentConversion, clo: SurveyClosure) -> dict[str, Any]:
    """What ``lodeline close --json`` adds (metres stay as they are): ``record_unit``,
    ``perimeter_record``, ``misclosure_record``, ``misclosure_north_record``,
    ``misclosure_east_record``, per course ``length_record``, ``latitude_record``,
    ``departure_record``, ``adjusted_length_record``, per station ``distance_m`` and
    ``distance_record`` (running distance from the point of beginning) and, for a perch or
    chain document with an area, ``area_acres_roods_perches``."""
    ru = conversion_unit(conv)

    def rec(value: float | None) -> float | None:
        return None if value is None else in_unit(value, ru)

    running = _running([c.length_m for c in clo.courses])
    area = clo.area
    arp = None
    if area is not None and uses_roods(ru):
        arp = acres_roods_perches(area.ground_m2, ru.foot).as_dict()  # type: ignore[arg-type]
    return {
        "record_unit": ru.as_dict(),
        "perimeter_record": rec(clo.perimeter_m),
        "misclosure_record": rec(clo.misclosure_m),
        "misclosure_north_record": rec(clo.misclosure_north_m),
        "misclosure_east_record": rec(clo.misclosure_east_m),
        "courses": [
            {
                "index": c.index,
                "length_record": rec(c.length_m),
                "latitude_record": rec(c.latitude_m),
                "departure_record": rec(c.departure_m),
                "adjusted_length_record": rec(c.adjusted_length_m),
            }
            for c in clo.courses
        ],
        "stations": [
            {
                "index": s.index,
                "distance_m": running[s.index],
                "distance_record": rec(running[s.index]),
            }
            for s in clo.stations
        ],
        "area_acres_roods_perches": arp,
    }


def merge_record_values(base: dict[str, Any], extra: dict[str, Any]) -> dict[str, Any]:
    """``base`` (an ``as_dict()`` object) with ``extra`` merged in: top-level keys added, and the
    per-course and per-station objects of ``extra`` merged into those of ``base`` of the same
    index (list position). The per-course and per-station objects of ``base`` are updated in
    place (``base`` is a fresh ``as_dict()`` object: a long document has 50,000 of them)."""
    out = dict(base)
    for key, value in extra.items():
        if key in ("courses", "stations") and isinstance(out.get(key), list):
            for row, add in zip(out[key], value, strict=True):
                row.update(add)
        else:
            out[key] = value
    return out
