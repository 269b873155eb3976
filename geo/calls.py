"""Distances and whole deed calls ("N 45 1/2 E 20 perches to a white oak") as numbers.

Distances
    ``20 perches``, ``20 rods``, ``20 poles``, ``3 chains 25 links``, ``3.25 ch``,
    ``3 ch 25 lk``, ``325 links``, ``120.5 ft``, ``120' 6"`` (feet and inches), ``5 ft 6 in``,
    ``36.6 m``, ``36.6 metres``, ``15 varas``, ``0.5 mile``, ``1/2 mile``, ``20½ perches``.
    A compound distance goes from a larger unit to smaller ones of the same system, and each
    smaller part is less than one of the unit before (``3 ch 125 lk`` is an error). A bare
    number takes ``default_unit``; with no default unit it is an error. Which foot the
    foot-based units use (``foot='us'`` or ``'international'``, see :mod:`geo.units`) and the
    inches per vara (``vara_inches``) are parameters, never guessed: a unit that needs one of
    them when it is ``None`` is a :class:`~geo.errors.ParseError`.

Calls
    A call is an optional ``thence``/``then``, a bearing (see :mod:`geo.bearings`) and a
    distance in either order, separated by spaces or commas, then a free note (``to a white
    oak``), kept as written. A call may have only a bearing or only a distance
    (``Call.kind`` says which). In a call a number directly after a quadrant bearing is the
    distance, so ``N 45 30 E 120' 6"`` reads the primes as feet and inches. An azimuth
    followed by a distance with a foot mark needs a comma (``Az 225°30', 120' 6"``) or a
    unit word. A call that starts with a bare number followed by another number is an
    azimuth and a distance (``225 30 20 ch``); a bare number alone is a distance.

Errors
    :class:`~geo.errors.ParseError` whose message starts with the part that could not be
    read (``bearing:``, ``distance:`` or ``call:``) and gives the character (from 1) and the
    text; ``position`` holds the 0-based character.

Public API
    ``Distance``, ``Call``;
    ``parse_distance(text, *, default_unit=None, foot, vara_inches=None) -> Distance``;
    ``parse_call(text, *, default_unit, foot, vara_inches=None, south_azimuth=False) -> Call``;
    ``format_length(metres, unit, *, decimals=2, foot, vara_inches=None) -> str``.
    Parsing is a single left-to-right pass over the tokens (linear in the text length).
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Literal

from geo.bearings import (
    COMMA,
    DASH,
    DEG,
    MIN,
    NUM,
    SEC,
    WORD,
    Bearing,
    Reader,
    finite_number,
    looks_like_bearing,
    read_bearing,
    short,
    starts_bearing,
)
from geo.errors import InputError, LodelineError, ParseError
from geo.units import (
    UNIT_ALIASES,
    UNIT_LABELS,
    Foot,
    feet_per,
    metres_per,
    unit_name,
)

_LEAD_WORDS = {"thence", "then"}
_UNIT_WORDS = frozenset(UNIT_ALIASES)
_METRIC_METRES = {"m": 1, "km": 1000}


@dataclass(frozen=True)
class Distance:
    """A distance read from text.

    ``metres``: the length in metres. ``value``: the length in ``unit`` (for a compound
    distance such as ``3 ch 25 lk``, the total in its first unit: 3.25). ``unit``: the
    canonical unit name (see :data:`geo.units.UNITS`). ``text``: the source text.
    """

    metres: float
    value: float
    unit: str
    text: str


CallKind = Literal["bearing_and_distance", "bearing_only", "distance_only"]


@dataclass(frozen=True)
class Call:
    """One call of a deed: ``bearing`` and/or ``distance``, the ``note`` that follows them
    (``''`` if none), ``kind`` ('bearing_and_distance', 'bearing_only', 'distance_only') and
    the whole source ``text``."""

    bearing: Bearing | None
    distance: Distance | None
    note: str
    kind: CallKind
    text: str = ""


def _unit_at(r: Reader, i: int) -> str | None:
    """Canonical unit of the token at ``i`` (a unit word, ' for feet, " for inches)."""
    t = r.tok(i)
    if t is None:
        return None
    if t.kind == WORD and t.word in UNIT_ALIASES:
        return UNIT_ALIASES[t.word]
    if t.kind == MIN:
        return "ft"
    if t.kind == SEC:
        return "in"
    return None


def _size_key(unit: str) -> tuple[str, Fraction] | None:
    """(system, size) used to order the parts of a compound distance."""
    if unit in _METRIC_METRES:
        return "metric", Fraction(_METRIC_METRES[unit])
    feet = feet_per(unit)
    return None if feet is None else ("foot", feet)


def read_distance(
    r: Reader,
    i: int,
    *,
    default_unit: str | None,
    foot: Foot | None,
    vara_inches,
) -> tuple[Distance, int]:
    """Read one distance starting at token ``i``; return it and the next token index."""
    if r.kind(i) == DASH and r.is_number(i + 1):
        raise r.fail(i, "negative distance: a distance is written without a sign")
    got = r.quantity(i)
    if got is None:
        raise r.fail(i, "expected a distance (a number and a unit, such as 20 perches)")
    q, j = got
    unit = _unit_at(r, j)
    first_unit: str
    total = q.value
    if unit is None:
        t = r.tok(j)
        if (
            t is not None
            and t.kind == WORD
            and t.word not in _NOTE_WORDS
            and not starts_bearing(r, j)
        ):
            raise r.fail(
                j,
                f"'{r.show(j, j + 1)}' after {r.text[q.start : q.end]} is not a length unit "
                "(perch, rod, pole, chain, link, ft, in, m, vara, mile...)",
            )
        if t is not None and t.kind == DEG:
            raise r.fail(j, f"{r.text[q.start : q.end]}° is an angle, not a distance")
        if default_unit is None:
            raise r.fail(
                i,
                f"{r.text[q.start : q.end]} has no unit and no default unit is set "
                "(write the unit, e.g. 20 perches)",
            )
        try:
            first_unit = unit_name(default_unit)
        except InputError as exc:
            raise ParseError(f"default unit: {exc.message}", text=r.text) from None
        end_tok = j
    else:
        first_unit = unit
        end_tok = j + 1
        prev = _size_key(unit)
        prev_unit = unit
        # Smaller parts: "3 ch 25 lk", "120' 6\"", "5 ft 6 in", "3 chains and 25 links".
        while prev is not None:
            k = end_tok
            if r.word(k) == "and" and r.is_number(k + 1):
                k += 1
            nxt = r.quantity(k) if r.is_number(k) else None
            if nxt is None:
                break
            nq, nk = nxt
            nunit = _unit_at(r, nk)
            key = _size_key(nunit) if nunit is not None else None
            if key is None or key[0] != prev[0] or key[1] >= prev[1]:
                break
            if nq.value * key[1] >= prev[1]:
                raise r.fail(
                    k,
                    f"{r.show(k, nk + 1)} is one {prev_unit} or more: "
                    f"carry it into the {prev_unit}s",
                )
            total += nq.value * key[1] / _size_key(first_unit)[1]  # type: ignore[index]
            prev, prev_unit = key, nunit
            end_tok = nk + 1
    if total.numerator <= 0:  # a Fraction's denominator is positive
        raise r.fail(i, f"the distance {r.show(i, end_tok)} must be more than zero")
    try:
        per = metres_per(first_unit, foot=foot, vara_inches=vara_inches)
    except InputError as exc:
        raise r.fail(j if unit is not None else i, exc.message) from None
    text = r.span(i, end_tok)
    # float(total * per) and float(total) without Fraction arithmetic: int / int is correctly
    # rounded, as float() of the reduced Fraction is, so the doubles are the same.
    metres = (total.numerator * per.numerator) / (total.denominator * per.denominator)
    value = total.numerator / total.denominator
    return Distance(metres, value, first_unit, text), end_tok


# Words that may follow a bare number in a call (the note begins there).
_NOTE_WORDS = {"to", "with", "along", "by", "at", "on", "crossing", "thence", "more", "or"}


def _part_error(part: str, exc: LodelineError, text: str) -> ParseError:
    position = exc.position if isinstance(exc, ParseError) else None
    return ParseError(f"{part}: {exc.message}", text=text, position=position)


def parse_distance(
    text: str,
    *,
    default_unit: str | None = None,
    foot: Foot | None,
    vara_inches: Fraction | int | float | str | None = None,
) -> Distance:
    """Read a distance; the whole text must be one distance.

    ``default_unit`` is used for a bare number; ``foot`` ('us', 'international' or ``None``
    for a metric-only document) and ``vara_inches`` define the foot-based units (see
    :mod:`geo.units`). Returns a :class:`Distance` in metres. Raises :class:`ParseError`.
    """
    if not isinstance(text, str):
        raise ParseError(f"a distance must be text, not {type(text).__name__}", text=str(text))
    if not text.strip():
        raise ParseError("empty distance: nothing to read", text=text, position=0)
    r = Reader(text)
    d, j = read_distance(r, 0, default_unit=default_unit, foot=foot, vara_inches=vara_inches)
    if j < len(r.toks):
        raise r.fail(j, f"unexpected '{r.show(j, j + 1)}' after the distance '{short(d.text)}'")
    return d


def _skip_commas(r: Reader, i: int) -> int:
    while r.kind(i) == COMMA:
        i += 1
    return i


def _leading_number_is_azimuth(r: Reader, i: int) -> bool:
    """Decide whether a call that starts with a number starts with an azimuth."""
    got = r.quantity(i)
    if got is None:
        return False
    _, j = got
    t = r.tok(j)
    if t is None:
        return False
    if t.kind == DEG or (t.kind == WORD and r.mark(j, 0, words_ok=False) == 0):
        return True
    if t.kind == DASH and r.is_number(j + 1):
        return True
    if t.kind == WORD and t.word == "from":
        return True
    if t.kind == WORD and t.word in ("e", "w", "east", "west"):
        # "45 E 20 ch" is a quadrant bearing without its N/S (reported as such), while
        # "20 East to a stone" is a distance and a cardinal call.
        return r.tok(j + 1) is None or r.is_number(j + 1)
    return t.kind == NUM


def parse_call(
    text: str,
    *,
    default_unit: str | None,
    foot: Foot | None,
    vara_inches: Fraction | int | float | str | None = None,
    south_azimuth: bool = False,
) -> Call:
    """Read one deed call: bearing and/or distance, then a note.

    Parameters are those of :func:`parse_distance` and :func:`geo.bearings.parse_bearing`.
    Returns a :class:`Call`; raises :class:`ParseError` naming the part that could not be
    read and the character.
    """
    if not isinstance(text, str):
        raise ParseError(f"a call must be text, not {type(text).__name__}", text=str(text))
    if not text.strip():
        raise ParseError("call: empty call, nothing to read", text=text, position=0)
    r = Reader(text)
    i = 0
    while r.word(i) in _LEAD_WORDS or r.kind(i) == COMMA:
        i += 1
    if i >= len(r.toks):
        raise r.fail(i, "call: no bearing or distance after 'thence'")
    bearing: Bearing | None = None
    distance: Distance | None = None
    stop = _UNIT_WORDS

    def bearing_at(k: int) -> int:
        nonlocal bearing
        try:
            bearing, k2 = read_bearing(r, k, south_azimuth=south_azimuth, stop_before_units=stop)
        except ParseError as exc:
            raise _part_error("bearing", exc, text) from None
        return k2

    def distance_at(k: int) -> int:
        nonlocal distance
        try:
            distance, k2 = read_distance(
                r, k, default_unit=default_unit, foot=foot, vara_inches=vara_inches
            )
        except ParseError as exc:
            raise _part_error("distance", exc, text) from None
        return k2

    numeric = r.is_number(i) or (r.kind(i) == DASH and r.is_number(i + 1))
    if starts_bearing(r, i) or (numeric and r.kind(i) == DASH):
        if r.kind(i) == DASH:
            raise _part_error(
                "call",
                r.fail(i, "negative number: bearings and distances are written without a sign"),
                text,
            )
        i = _skip_commas(r, bearing_at(i))
        if r.is_number(i) or (r.kind(i) == DASH and r.is_number(i + 1)):
            i = _skip_commas(r, distance_at(i))
    elif numeric:
        if _leading_number_is_azimuth(r, i):
            i = _skip_commas(r, bearing_at(i))
            if r.is_number(i) or (r.kind(i) == DASH and r.is_number(i + 1)):
                i = _skip_commas(r, distance_at(i))
        else:
            i = _skip_commas(r, distance_at(i))
            if starts_bearing(r, i) or (r.is_number(i) and _leading_number_is_azimuth(r, i)):
                i = _skip_commas(r, bearing_at(i))
    else:
        raise _part_error(
            "call",
            r.fail(
                i,
                f"'{r.show(i, i + 1)}' starts neither a bearing (N 45 E, North, Az 225) "
                "nor a distance (20 perches)",
            ),
            text,
        )
    if i < len(r.toks):
        if bearing is not None and looks_like_bearing(r, i):
            message = f"several bearings in one call: '{short(bearing.text)}' and more"
            raise _part_error("call", r.fail(i, message), text)
        if distance is not None and r.is_number(i) and _unit_at(r, i + 1) is not None:
            raise _part_error(
                "call",
                r.fail(i, f"several distances in one call: '{short(distance.text)}' and more"),
                text,
            )
    note = ""
    if i < len(r.toks):
        note = text[r.toks[i].start :].strip().rstrip(",;").strip()
    if bearing is not None and distance is not None:
        kind: CallKind = "bearing_and_distance"
    elif bearing is not None:
        kind = "bearing_only"
    else:
        kind = "distance_only"
    return Call(bearing, distance, note, kind, text)


def format_length(
    metres: float,
    unit: str,
    *,
    decimals: int | None = None,
    foot: Foot | None,
    vara_inches: Fraction | int | float | str | None = None,
) -> str:
    """Write a length given in metres in ``unit``: ``20.00 perches``, ``36.60 m``.

    ``unit`` is any accepted unit spelling, or ``'ch_lk'`` for chains and links
    (``3 ch 25 lk``) or ``'ft_in'`` for feet and inches (``120 ft 6 in``). ``decimals`` is
    the number of decimals of the (last) figure: 2 by default for a single unit, 0 (whole
    links, whole inches) by default for the two compound forms; rounding carries
    (``3 ch 100 lk`` never appears). Raises :class:`InputError` for an unknown unit, a
    missing foot or vara, or a non-finite length.
    """
    m = finite_number(metres, "length")
    key = unit.strip().casefold().replace(" ", "_")
    compound = key in ("ch_lk", "chains_and_links", "ft_in", "feet_and_inches")
    if decimals is None:
        decimals = 0 if compound else 2
    if isinstance(decimals, bool) or not isinstance(decimals, int) or not 0 <= decimals <= 9:
        raise InputError(f"decimals {decimals!r} must be a whole number from 0 to 9")
    if compound:
        big, small = ("chain", "link") if key.startswith("ch") else ("ft", "in")
        ratio = int(feet_per(big) / feet_per(small))  # type: ignore[operator]
        scale = 10**decimals
        smalls = round(abs(m) / float(metres_per(small, foot=foot)) * scale)
        whole, rest = divmod(smalls, ratio * scale)
        sign = "-" if m < 0 and smalls else ""
        rest_text = f"{rest // scale}.{rest % scale:0{decimals}d}" if decimals else f"{rest}"
        return f"{sign}{whole} {UNIT_LABELS[big]} {rest_text} {UNIT_LABELS[small]}"
    name = unit_name(unit)
    value = m / float(metres_per(name, foot=foot, vara_inches=vara_inches))
    return f"{value:.{decimals}f} {UNIT_LABELS[name]}"
