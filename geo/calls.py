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

import re
from dataclasses import dataclass
from fractions import Fraction
from typing import Literal, NamedTuple

from .bearings import (
    COMMA,
    DASH,
    DEG,
    MIN,
    NUM,
    OTHER,
    SEC,
    WORD,
    Bearing,
    Reader,
    fail,
    finite_number,
    in_range,
    looks_like_bearing,
    mark_unread,
    read_bearing,
    short,
    starts_bearing,
)
from .errors import InputError, LodelineError, ParseError
from .frozen import quick_init
from .units import (
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


@quick_init
@dataclass(frozen=True, slots=True)
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


@quick_init
@dataclass(frozen=True, slots=True)
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
    if (r.kind(j) == DASH or (r.kind(j) == OTHER and r.toks[j].word == ":")) and r.is_number(j + 1):
        raise _ambiguous_pair(r, i, j)
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
            if r.kind(k) == COMMA and r.is_number(k + 1):
                k += 1  # "10 chains, 50 links"
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


def _ambiguous_pair(r: Reader, i: int, j: int) -> ParseError:
    """Refuse ``10-50 chains`` / ``10:50 chains`` (chains and links? a range?)."""
    a, b = r.text[r.toks[i].start : r.toks[i].end], r.text[r.toks[j + 1].start : r.toks[j + 1].end]
    got = r.quantity(j + 1)
    unit = _unit_at(r, got[1]) if got is not None else None
    end = r.toks[j + 1].end
    pair = r.text[r.toks[i].start : end]
    if unit == "chain":
        hint = f"write {a} chains {b} links (or {a}.{b.zfill(2)} chains)"
    else:
        hint = "write each part with its unit (10 chains 50 links, 12 ft 6 in)"
    shown = mark_unread(r.text, r.toks[i].start, end)
    return fail(r.text, r.toks[i].start, f"'{pair}' is ambiguous: {hint}: {shown}")


# Words that may follow a bare number in a call (the note begins there).
_NOTE_WORDS = {"to", "with", "along", "by", "at", "on", "crossing", "thence", "more", "or"}


def _part_error(part: str, exc: LodelineError, text: str) -> ParseError:
    position = exc.position if isinstance(exc, ParseError) else None
    return ParseError(f"{part}: {exc.message}", text=text, position=position)


#: The longest call (or distance) read, in characters; a longer text is refused at once (the
#: longest course of a deed is a few hundred characters).
MAX_CALL_CHARS = 2000


def _check_length(text: str, what: str) -> None:
    if len(text) > MAX_CALL_CHARS:
        raise ParseError(
            f"{what} of {len(text):,} characters is too long (at most {MAX_CALL_CHARS:,})",
            text=text[:40],
        )


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
    _check_length(text, "a distance")
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


# Words that begin a monument phrase ("to a white oak", "with the road", "crossing a run"):
# after the bearing and distance of a call only such a phrase, or nothing, may follow.
MONUMENT_WORDS = frozenset(
    [
        "to",
        "unto",
        "with",
        "along",
        "by",
        "at",
        "on",
        "crossing",
        "across",
        "passing",
        "past",
        "through",
        "over",
        "into",
        "near",
        "binding",
        "bounding",
        "following",
        "leaving",
        "intersecting",
        "corner",
        "cornering",
        "more",
        "or",
        "where",
        "thence",
    ]
)
# Words that may open a phrase before the bearing or between the bearing and the distance
# ("along the road N 45 E 20 poles", "North along the section line 40 chains").
_PHRASE_WORDS = frozenset(["along", "with", "by", "binding", "following", "on", "up", "down"])
# A phrase before the bearing is looked for in its first tokens only (calls are short).
_LEAD_PHRASE_TOKENS = 40
_END_MARKS = frozenset(".)]")


class _Options(NamedTuple):
    default_unit: str | None
    foot: Foot | None
    vara_inches: Fraction | int | float | str | None
    south_azimuth: bool


def _unread(r: Reader, start: int, end: int, message: str) -> ParseError:
    """A refusal of the unread characters ``[start, end)``, shown marked in the call."""
    shown = mark_unread(r.text, start, end)
    return _part_error("call", fail(r.text, start, f"{message}: {shown}"), r.text)


def _run_end(r: Reader, i: int) -> int:
    """Character end of the tokens from ``i`` up to the next monument word (or the end)."""
    k = i + 1
    while k < len(r.toks) and r.word(k) not in MONUMENT_WORDS and r.kind(k) != COMMA:
        k += 1
    return r.toks[k - 1].end


def _number_after_distance(r: Reader, i: int, distance: Distance) -> ParseError:
    """The refusal of a number written after the distance (``10 chains 50``)."""
    got = r.quantity(i)
    end = got[0].end if got is not None else r.toks[i].end
    number = r.text[r.toks[i].start : end]
    if got is not None and _unit_at(r, got[1]) is not None:
        return _unread(
            r,
            r.toks[i].start,
            r.toks[got[1]].end,
            f"several distances in one call: '{short(distance.text)}' and more",
        )
    if distance.unit == "chain" and got is not None and got[0].whole and got[0].value < 100:
        whole = short(distance.text)
        return _unread(
            r,
            r.toks[i].start,
            end,
            f"'{whole} {number}' is ambiguous: write {whole.split()[0]} chains {number} links "
            f"(or {whole.split()[0]}.{int(got[0].value):02d} chains)",
        )
    return _unread(
        r,
        r.toks[i].start,
        end,
        f"the number {number} after the distance '{short(distance.text)}' is not read: "
        "write its unit or leave it out",
    )


def _rest_note(r: Reader, i: int, bearing: Bearing | None, distance: Distance | None) -> str:
    """The note after the parts of a call read up to token ``i``: a monument phrase or
    nothing. Anything else (a number, a unit, a bearing, a second course) is refused with
    the unread part marked."""
    i = _skip_commas(r, i)
    t = r.tok(i)
    if t is None:
        return ""
    if bearing is not None and looks_like_bearing(r, i):
        return_error = f"several bearings in one call: '{short(bearing.text)}' and more"
        raise _unread(r, t.start, _run_end(r, i), return_error)
    if distance is not None and r.is_number(i):
        raise _number_after_distance(r, i, distance)
    if (t.kind == WORD and t.word in MONUMENT_WORDS) or _remark_at(r, i):
        _no_second_course(r, i)
        return r.text[t.start :].strip().rstrip(",;").strip()
    rest = r.text[t.start :].strip()
    if all(c in _END_MARKS for c in rest.replace(" ", "")):
        return ""
    what = "bearing" if distance is None else "distance"
    raise _unread(
        r,
        t.start,
        _run_end(r, i),
        f"not read after the {what}: a monument phrase starts with to, with, along, by, at, "
        "crossing... (write 'to a white oak')",
    )


def _remark_at(r: Reader, i: int) -> bool:
    """True for a remark in brackets that opens with a plain word: ``(typed in the field)``,
    not ``(50)``, ``(links)`` or ``(N 10 E)``."""
    t = r.tok(i)
    if t is None or t.kind != OTHER or t.word not in "([":
        return False
    w = r.word(i + 1)
    return w is not None and w not in _UNIT_WORDS and not starts_bearing(r, i + 1)


def _no_second_course(r: Reader, i: int) -> None:
    """Refuse a note that holds a second course ("to a stake; thence N 20 E 5 chains")."""
    if "thence" not in r.text[r.toks[i].start :].casefold():
        return  # the usual note: no word to look for
    for k in range(i, len(r.toks)):
        if r.word(k) == "thence" and _skip_commas(r, k + 1) < len(r.toks):
            raise _unread(
                r,
                r.toks[k].start,
                len(r.text),
                "a second course in one call: put each 'thence' course in a course of its own",
            )


def _mid_phrase(r: Reader, i: int, o: _Options) -> tuple[str, Distance, int] | None:
    """A phrase between the bearing and the distance ("North along the section line 40
    chains"): the phrase has no number and the distance is written with its unit.
    Returns (phrase, distance, next token) or ``None``."""
    if r.word(i) not in _PHRASE_WORDS:
        return None
    k = i + 1
    while k < len(r.toks) and r.kind(k) != NUM and r.word(k) != "thence":
        k += 1
    got = r.quantity(k) if r.is_number(k) else None
    if got is None or _unit_at(r, got[1]) is None:
        return None
    try:
        distance, j = read_distance(r, k, default_unit=None, foot=o.foot, vara_inches=o.vara_inches)
    except ParseError:
        return None
    phrase = r.text[r.toks[i].start : r.toks[k - 1].end].strip().rstrip(",;").strip()
    return phrase, distance, j


def _read_parts(r: Reader, i: int, o: _Options) -> tuple[Bearing | None, Distance | None, int, str]:
    """The bearing and distance of a call from token ``i``, in either order; returns them,
    the next token and the phrase written between them (``''`` if none)."""
    bearing: Bearing | None = None
    distance: Distance | None = None
    text = r.text

    def bearing_at(k: int) -> int:
        nonlocal bearing
        try:
            bearing, k2 = read_bearing(
                r, k, south_azimuth=o.south_azimuth, stop_before_units=_UNIT_WORDS
            )
        except ParseError as exc:
            raise _part_error("bearing", exc, text) from None
        return _skip_commas(r, k2)

    def distance_at(k: int) -> int:
        nonlocal distance
        try:
            distance, k2 = read_distance(
                r, k, default_unit=o.default_unit, foot=o.foot, vara_inches=o.vara_inches
            )
        except ParseError as exc:
            raise _part_error("distance", exc, text) from None
        return _skip_commas(r, k2)

    def number_at(k: int) -> bool:
        return r.is_number(k) or (r.kind(k) == DASH and r.is_number(k + 1))

    numeric = number_at(i)
    if starts_bearing(r, i) or (numeric and r.kind(i) == DASH):
        if r.kind(i) == DASH:
            message = "negative number: bearings and distances are written without a sign"
            raise _part_error("call", r.fail(i, message), text)
        i = bearing_at(i)
        if number_at(i):
            i = distance_at(i)
        else:
            mid = _mid_phrase(r, i, o)
            if mid is not None:
                return bearing, mid[1], mid[2], mid[0]
    elif numeric:
        if _leading_number_is_azimuth(r, i):
            i = bearing_at(i)
            if number_at(i):
                i = distance_at(i)
        else:
            i = distance_at(i)
            if starts_bearing(r, i) or (r.is_number(i) and _leading_number_is_azimuth(r, i)):
                i = bearing_at(i)
    else:
        message = (
            f"'{r.show(i, i + 1)}' starts neither a bearing (N 45 E, North, Az 225) "
            "nor a distance (20 perches)"
        )
        raise _part_error("call", r.fail(i, message), text)
    return bearing, distance, i, ""


def _lead_phrase(r: Reader, i: int, o: _Options) -> tuple[str, Call]:
    """A call opening with a monument phrase before its bearing ("along the road N 45 E 20
    poles to a stone"). The phrase ends where a bearing and distance read to the end of the
    call; exactly one such place must exist. Returns (phrase, call of the rest)."""
    found: list[tuple[str, tuple]] = []
    first_end = 0  # tokens before this belong to the first reading's bearing and distance
    rest_error: ParseError | None = None
    for k in range(i + 1, min(len(r.toks), i + _LEAD_PHRASE_TOKENS)):
        if k < first_end or not starts_bearing(r, k):
            continue
        try:
            bearing, distance, j, mid = _read_parts(r, k, o)
        except ParseError:
            continue
        if bearing is None or distance is None:
            continue
        try:
            note = _rest_note(r, j, bearing, distance)
        except ParseError as exc:
            rest_error = rest_error or exc  # a course read, and something after it did not
            continue
        if bearing is not None and distance is not None:
            phrase = r.text[r.toks[i].start : r.toks[k - 1].end].strip().rstrip(",;").strip()
            found.append((phrase, (bearing, distance, mid, note)))
            first_end = first_end or j
    lead = r.show(i, i + 1)
    if not found and rest_error is not None:
        raise rest_error
    if not found:
        raise _unread(
            r,
            r.toks[i].start,
            len(r.text),
            f"a call opening with '{lead}' needs a bearing and a distance after its phrase",
        )
    if len(found) > 1:
        raise _unread(
            r,
            r.toks[i].start,
            len(r.text),
            f"the phrase opening with '{lead}' reads more than one way: put the bearing first",
        )
    phrase, (bearing, distance, mid, note) = found[0]
    return phrase, Call(bearing, distance, _join_notes(mid, note), "bearing_and_distance")


def _join_notes(*notes: str) -> str:
    return ", ".join(n for n in notes if n)


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
    read and the character. After the bearing and distance only a monument phrase (see
    :data:`MONUMENT_WORDS`) may follow: a number, unit, bearing or second ``thence``
    course there is refused, the unread part shown between « and ».

    The most common forms (``N 45 30 E 20 perches to a stake``, ``S 10° W 10 chains 50
    links``) are read by :func:`_quick_call`, which gives the very :class:`Call` the general
    reader gives, about ten times faster; every other text goes to the general reader.
    """
    if not isinstance(text, str):
        raise ParseError(f"a call must be text, not {type(text).__name__}", text=str(text))
    _check_length(text, "a call")
    quick = _quick_call(text, foot, vara_inches)
    if quick is not None:
        return quick
    return _read_call(text, default_unit, foot, vara_inches, south_azimuth)


def _read_call(
    text: str,
    default_unit: str | None,
    foot: Foot | None,
    vara_inches: Fraction | int | float | str | None,
    south_azimuth: bool,
) -> Call:
    """The general reader of :func:`parse_call` (any form; every error)."""
    if not text.strip():
        raise ParseError("call: empty call, nothing to read", text=text, position=0)
    r = Reader(text)
    o = _Options(default_unit, foot, vara_inches, south_azimuth)
    i = 0
    while r.word(i) in _LEAD_WORDS or r.kind(i) == COMMA:
        i += 1
    if i >= len(r.toks):
        raise r.fail(i, "call: no bearing or distance after 'thence'")
    if r.word(i) in _PHRASE_WORDS:
        phrase, call = _lead_phrase(r, i, o)
        return Call(call.bearing, call.distance, _join_notes(phrase, call.note), call.kind, text)
    bearing, distance, i, mid = _read_parts(r, i, o)
    note = _join_notes(mid, _rest_note(r, i, bearing, distance))
    if bearing is not None and distance is not None:
        kind: CallKind = "bearing_and_distance"
    elif bearing is not None:
        kind = "bearing_only"
    else:
        kind = "distance_only"
    return Call(bearing, distance, note, kind, text)


# The common forms, read by one regular expression: [thence] a quadrant bearing in whole
# degrees [minutes [seconds]], unmarked and single-spaced or marked (45°30'15"), then a number
# and a unit word [, links after chains], then [a note opening with a monument word]. Only
# texts the general reader reads the same way match; anything else (and every error) is left
# to it. The note takes no digits (the general reader reads numbers even inside a note) and
# no "thence" (a second course).
_QUICK_SEP = r"(?: |(?<=[°'′\"″]) ?)"
_QUICK_CALL = re.compile(
    r"(?:[Tt]hence |then )?"
    r"(?P<bearing>(?P<ns>[NS]) (?P<d>\d{1,2})(?P<dm>°)?"
    rf"(?:{_QUICK_SEP}(?P<m>\d{{1,2}})(?P<mm>['′])?"
    rf"(?:{_QUICK_SEP}(?P<s>\d{{1,2}})(?P<sm>[\"″])?)?)? (?P<ew>[EW]))"
    r" (?P<distance>(?P<v>\d{1,4}(?:\.\d{1,3})?) (?P<u>[a-z]+)(?: (?P<v2>\d{1,2}) (?P<u2>[a-z]+))?)"
    r"(?: (?P<note>(?P<w>[A-Za-z]+)[A-Za-z ,.;'()-]*))?"
)
_QUICK_STEPS = (1.0, 1 / 60, 1 / 3600)  # the step of whole degrees, minutes, seconds
_QUADRANT_TURN = {"NE": (0, 1), "SE": (180, -1), "SW": (180, 1), "NW": (360, -1)}


def _quick_note_words() -> frozenset[str]:
    """Monument words the general reader takes as the start of a note (none reads as a
    bearing there)."""
    return frozenset(w for w in MONUMENT_WORDS if not looks_like_bearing(Reader(w), 0))


_QUICK_NOTE_WORDS = _quick_note_words()


def _quick_call(
    text: str, foot: Foot | None, vara_inches: Fraction | int | float | str | None
) -> Call | None:
    """The :class:`Call` of a text in one of the common forms (see ``_QUICK_CALL``), the
    same the general reader makes of it, or ``None`` to leave the text to that reader."""
    m = _QUICK_CALL.fullmatch(text)
    if m is None:
        return None
    (bearing_text, ns, d, dm, mi, mm, se, sm, ew, distance_text, v, u, v2, u2, note, w) = m.groups()
    if note is not None and (w.casefold() not in _QUICK_NOTE_WORDS or "thence" in note.casefold()):
        return None
    # 60 minutes, or a mark left off the last part only ("45° 30 E"): the general reader
    # says what it makes of it
    seconds = int(d) * 3600
    if mi is None:
        level = 0
    else:
        minutes = int(mi)
        if minutes >= 60:
            return None
        seconds += minutes * 60
        if se is None:
            level = 1
            if mm is None and dm is not None:
                return None
        else:
            level = 2
            secs = int(se)
            if secs >= 60 or (sm is None and (dm is not None or mm is not None)):
                return None
            seconds += secs
    if seconds > 90 * 3600:
        return None
    quadrant = ns + ew
    base, sign = _QUADRANT_TURN[quadrant]
    bearing = Bearing(
        in_range((base * 3600 + sign * seconds) / 3600),
        "quadrant",
        _QUICK_STEPS[level],
        bearing_text,
        quadrant,
        seconds / 3600,
    )
    unit = UNIT_ALIASES.get(u)
    if unit is None:
        return None
    # the length in the unit, exactly: num / den (int / int is the correctly rounded double
    # of the exact ratio, reduced or not, as the general reader's Fraction arithmetic gives)
    whole, _, decimals = v.partition(".")
    num, den = int(whole + decimals), 10 ** len(decimals)
    if u2 is not None:
        if unit != "chain" or UNIT_ALIASES.get(u2) != "link":
            return None
        links = int(v2)
        if links >= 100:
            return None
        num, den = num * 100 + links * den, den * 100
    if num <= 0:
        return None
    try:
        per = metres_per(unit, foot=foot, vara_inches=vara_inches)
    except LodelineError:
        return None
    metres = (num * per.numerator) / (den * per.denominator)
    distance = Distance(metres, num / den, unit, distance_text)
    note_text = "" if note is None else note.strip().rstrip(",;").strip()
    return Call(bearing, distance, note_text, "bearing_and_distance", text)


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
