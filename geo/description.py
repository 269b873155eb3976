"""A legal description read as it is written: courses, point of beginning, stated facts.

A metes-and-bounds description (common practice of deeds) is one paragraph or several::

    All that tract in Fallow Township: Beginning at a hickory on the west side of the
    branch, thence S 14 W 36 poles to a stone; thence with the line of the Orrin tract
    N 80 W 20 perches to a post, thence North 12 perches to the place of beginning,
    containing 6 acres, more or less. Bearings by the magnetic meridian of 1854, the needle
    then varying 2° W.

Reading
    - Clauses that state facts outside the courses are taken out first, wherever they
      stand: the area (``containing 61 acres, more or less``; ``61 acres and 40 perches``,
      where perches are square perches), the variation (``the needle then varying 2° W``,
      ``variation 2 1/2 degrees East``), the meridian (``by the magnetic meridian of 1854``,
      which gives the date; ``by the true meridian``, which gives the reference), a survey
      date (``surveyed May 12, 1854``, ``surveyed the 12th day of May, 1854``,
      ``surveyed 1854-05-12``), the unit (``distances in chains``) and the vara
      (``varas of 33 1/3 inches``, ``Texas varas``).
    - The rest is cut at each ``thence`` (``and thence``, ``running thence``). The words
      before the first one are the opening: from ``Beginning at``/``Commencing at`` on they
      describe the point of beginning (``Description.beginning``), and the words before
      that are kept as the title. An opening that starts like a call is the first course.
      A piece that holds several calls on lines of their own (a list of courses, one a
      line) is cut at the line breaks too.
    - Every piece is read by :func:`geo.calls.parse_call`: a piece that does not read, or
      gives no bearing or no distance, is refused, naming the course and showing the
      words that were not read between « and ». Nothing is skipped in silence.
    - ``to the place of beginning`` (or ``point of beginning``, ``the beginning``) in the
      last course makes the figure closed.

Public API
    ``ReadCourse``, ``Description``, ``read_description(text, *, default_unit=None,
    foot=None, vara_inches=None, south_azimuth=False) -> Description``,
    ``stated_facts(text) -> dict``, ``read_form(call) -> str``,
    ``stated_area_m2(text, *, foot) -> float``, ``AreaCheck``,
    ``compare_area(stated, computed_m2, *, foot) -> AreaCheck``.
    Reading is linear in the length of the text.
"""

from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass
from fractions import Fraction

from .bearings import (
    Reader,
    mark_unread,
    parse_declination,
    recorded_bearing,
)
from .calls import Call, parse_call
from .errors import LodelineError, ParseError
from .units import UNIT_LABELS, Foot, resolve_vara_inches, square_metres_per, unit_name


@dataclass(frozen=True)
class ReadCourse:
    """One course of a description: ``index`` (from 1), ``source`` (the words it came from,
    spaces closed up), ``call_text`` (the call as it goes into the document) and ``call``."""

    index: int
    source: str
    call_text: str
    call: Call


@dataclass(frozen=True)
class Description:
    """What a description says. Text values are as written (spaces closed up); ``None``
    where the description does not say.

    ``title``: the words before the point of beginning. ``beginning``: the point of
    beginning as described. ``courses``: the courses in order. ``closed``: the last course
    returns to the beginning. ``area``: the stated area. ``declination``: the stated
    variation (``"2° W"``, as :func:`geo.bearings.parse_declination` reads it).
    ``date``: the survey date (ISO date, or a year). ``reference``: ``"true"`` when the
    bearings are stated to be by the true meridian, ``"magnetic"`` when by the magnetic
    meridian. ``unit``: a stated distance unit. ``vara_inches``: a stated vara.
    ``clauses``: (what, words) of every clause read outside the courses.
    """

    title: str | None
    beginning: str | None
    courses: tuple[ReadCourse, ...]
    closed: bool
    area: str | None = None
    declination: str | None = None
    date: str | None = None
    reference: str | None = None
    unit: str | None = None
    vara_inches: str | None = None
    clauses: tuple[tuple[str, str], ...] = ()


_NUM = r"(?:\d[\d,]*(?:\.\d+)?(?:\s+\d+/\d+|\s*[½¼¾⅓⅔])?|\d+/\d+|[a-z]+(?:[\s-]+[a-z]+)*?)"
# A stated variation starts with a number (digits or words): "2° W", "three degrees west".
_ANGLE_START = (
    r"[\d½¼¾]|(?:zero|one|two|three|four|five|six|seven|eight|nine|ten|eleven|twelve|"
    r"thirteen|fourteen|fifteen|sixteen|seventeen|eighteen|nineteen|twenty|thirty|forty|"
    r"fifty|sixty|seventy|eighty|ninety|a\s+half|half)\b"
)
_AREA_UNIT = (
    r"(?:acres?|a\.|hectares?|ha\.?|square\s+(?:feet|foot|perches|poles|rods|chains|metres|"
    r"meters|varas)|sq\.?\s*(?:ft|feet|perches|poles|rods|chains|m)\.?)"
)
_CLAUSES: tuple[tuple[str, re.Pattern[str]], ...] = (
    (
        "area",
        re.compile(
            rf"\b(?:containing|contains|content|and\s+contains)\s+(?:in\s+all\s+)?"
            rf"(?P<v>{_NUM}\s+{_AREA_UNIT}"
            rf"(?:\s*,?\s*(?:and\s+)?\d+\s+(?:square\s+)?(?:perches|poles|rods))?"
            r"(?:\s*,?\s*(?:be\s+the\s+same\s+)?more\s+or\s+less)?)",
            re.I,
        ),
    ),
    (
        "declination",
        re.compile(
            r"\b(?:the\s+)?(?:needle|compass|magnetic\s+variation|variation|declination)"
            r"(?:\s+(?:then|being|at\s+that\s+time))*\s*(?:varying|varied|being|of|was|is)?"
            rf"\s+(?P<v>(?={_ANGLE_START})[^,;()]*?\b(?:east|west|e|w)\b\.?)",
            re.I,
        ),
    ),
    (
        "meridian",
        re.compile(
            r"\b(?:(?:the\s+)?(?:bearings?|courses?)\s+(?:are\s+|being\s+|given\s+|taken\s+)*)?"
            r"(?:by|from|according\s+to|referred\s+to)\s+the\s+(?P<ref>magnetic|true)\s+"
            r"meridian(?:\s+(?:of|in|as\s+of)\s+(?P<v>1[5-9]\d\d|20\d\d))?",
            re.I,
        ),
    ),
    (
        "date",
        re.compile(
            r"\b(?i:surveyed|survey\s+made|measured|run)\s+(?i:on\s+|in\s+)?(?i:the\s+)?"
            r"(?P<v>\d{4}-\d{2}-\d{2}|(?:\d{1,2}(?:st|nd|rd|th)?\s+day\s+of\s+)?"
            r"[A-Z][a-z]+\.?\s+(?:\d{1,2}(?:st|nd|rd|th)?,?\s+)?\d{4})",
        ),
    ),
    (
        "vara",
        re.compile(
            r"\b(?:(?:the\s+)?(?:distances|lengths)\s+(?:are\s+|being\s+|given\s+)*(?:in\s+)?)?"
            r"(?:(?P<named>texas|california)\s+varas?|varas?\s+of\s+(?P<v>\d+(?:\s+\d+/\d+)?"
            r"|\d+(?:\.\d+)?)\s+inches(?:\s+each)?)",
            re.I,
        ),
    ),
    (
        "unit",
        re.compile(
            r"\b(?:all\s+)?(?:the\s+)?(?:distances|lengths)\s+(?:are\s+|being\s+|given\s+)*"
            r"(?:in|by)\s+(?P<v>[a-z]+)",
            re.I,
        ),
    ),
)
_MONTHS = {
    m: n
    for n, names in enumerate(
        (
            ("january", "jan"),
            ("february", "feb"),
            ("march", "mar"),
            ("april", "apr"),
            ("may",),
            ("june", "jun"),
            ("july", "jul"),
            ("august", "aug"),
            ("september", "sept", "sep"),
            ("october", "oct"),
            ("november", "nov"),
            ("december", "dec"),
        ),
        1,
    )
    for m in names
}
_THENCE = re.compile(r"(?:\b(?:and|running|and\s+running)\s+)?\bthence\b", re.I)
_OPENING = re.compile(r"\b(?:beginning|commencing|begin)\s+(?:at|on|in|for)\b", re.I)
_CLOSING = re.compile(r"\b(?:place|point)\s+of\s+beginning\b|\bthe\s+beginning\b", re.I)
_EDGE = " \t\r\n,;:.-–—"


def _closed_up(text: str) -> str:
    return " ".join(text.split())


def _strip(text: str) -> str:
    return text.strip(_EDGE)


def _date_value(words: str) -> str:
    """ISO date (or year) of a stated survey date; ParseError when it is not a date."""
    if re.fullmatch(r"\d{4}-\d{2}-\d{2}", words):
        return words
    parts = re.findall(r"[A-Za-z]+|\d+", words)
    month = next((_MONTHS[p.casefold()] for p in parts if p.casefold() in _MONTHS), None)
    numbers = [int(p) for p in parts if p.isdigit()]
    if month is None or not numbers:
        raise ParseError(f"the survey date '{words}' is not a date", text=words)
    year = numbers[-1]
    if len(numbers) == 1:
        return f"{year:04d}-{month:02d}"[:4]  # month and year only: the year
    try:
        return _dt.date(year, month, numbers[0]).isoformat()
    except ValueError:
        raise ParseError(f"the survey date '{words}' is not a calendar date", text=words) from None


def _take_clauses(text: str) -> tuple[str, dict[str, str], list[tuple[str, str]]]:
    """``text`` with every stated-fact clause blanked out (positions kept), the facts read
    and the clauses as (what, words). Raises ParseError for a clause that does not read."""
    facts: dict[str, str] = {}
    clauses: list[tuple[str, str]] = []
    chars = list(text)
    for what, pattern in _CLAUSES:
        for m in pattern.finditer(text):
            if any(c == "\0" for c in chars[m.start() : m.end()]):
                continue  # inside a clause already taken
            words = _closed_up(m.group(0))
            value = m.group("v")
            if what == "meridian":
                facts.setdefault("reference", m.group("ref").casefold())
                if value:
                    facts.setdefault("date", value)
            elif what == "declination":
                try:
                    parse_declination(_closed_up(value))
                except LodelineError as err:
                    shown = mark_unread(text, m.start("v"), m.end("v"))
                    raise ParseError(
                        f"the variation does not read ({err.message.split(' (at')[0]}): {shown}",
                        text=text,
                        position=m.start("v"),
                    ) from None
                facts.setdefault("declination", _closed_up(value).rstrip("."))
            elif what == "date":
                facts.setdefault("date", _date_value(value))
            elif what == "unit":
                try:
                    facts.setdefault("unit", unit_name(value))
                except LodelineError:
                    continue  # "distances in the deed..." is not a unit clause
            elif what == "vara":
                facts.setdefault("vara_inches", (m.group("named") or value).casefold())
            else:
                facts.setdefault(what, _closed_up(value))
            clauses.append((what, words))
            start, end = m.start(), m.end()
            # brackets around the clause go with it: "(the needle then varying 2° W)"
            while start > 0 and text[start - 1] in " (":
                start -= 1
            while end < len(text) and text[end] in " )":
                end += 1
            for k in range(start, end):
                chars[k] = "\0"
    return "".join(" " if c == "\0" else c for c in chars), facts, clauses


def stated_facts(text: str) -> dict[str, str]:
    """The facts the description states outside its courses (keys as in
    :class:`Description`: area, declination, date, reference, unit, vara_inches), without
    reading the courses (a caller may need the date to choose the foot first)."""
    return _take_clauses(text)[1]


def _pieces(text: str) -> list[tuple[int, int]]:
    """Spans of the text between the ``thence`` words (the first span is the opening)."""
    spans, start = [], 0
    for m in _THENCE.finditer(text):
        spans.append((start, m.start()))
        start = m.end()
    spans.append((start, len(text)))
    return spans


def _starts_call(words: str) -> bool:
    from .bearings import starts_bearing

    r = Reader(words)
    return bool(r.toks) and (starts_bearing(r, 0) or r.is_number(0))


class _Context:
    """Arguments of every call read (unit, foot, vara, south azimuths)."""

    def __init__(self, **kwargs: object) -> None:
        self.kwargs = kwargs

    def call(self, words: str) -> Call:
        return parse_call(words, **self.kwargs)  # type: ignore[arg-type]


def _lines_of(words: str, ctx: _Context) -> list[str]:
    """A piece cut at line breaks when it holds one call a line (a list of courses)."""
    lines = [_strip(line) for line in words.splitlines() if _strip(line)]
    if len(lines) < 2 or not all(_starts_call(line) for line in lines):
        return [words]
    try:
        calls = [ctx.call(line) for line in lines]
    except ParseError:
        return [words]
    if all(c.bearing is not None and c.distance is not None for c in calls):
        return lines
    return [words]


def _course_error(index: int, words: str, err: LodelineError) -> ParseError:
    message = err.message
    if isinstance(err, ParseError) and err.position is not None and "«" not in message:
        message = f"{message.split(' (at character')[0]}: {_marked_from(words, err.position)}"
    elif "(at character" in message:
        message = message.split(" (at character")[0]
    return ParseError(f"course {index}: {message}", text=words, position=err.position)


def _marked_from(words: str, position: int) -> str:
    """``words`` with the token at ``position`` marked (the rest to the end when none)."""
    try:
        toks = Reader(words).toks
    except ParseError:
        toks = []
    for t in toks:
        if t.start >= position:
            return mark_unread(words, t.start, t.end)
    return mark_unread(words, position, len(words))


def _read_course(index: int, words: str, ctx: _Context) -> ReadCourse:
    try:
        call = ctx.call(words)
    except LodelineError as err:
        raise _course_error(index, words, err) from None
    missing = "bearing" if call.bearing is None else "distance" if call.distance is None else ""
    if missing:
        shown = mark_unread(words, len(words), len(words))
        raise ParseError(f"course {index}: gives no {missing}: {shown}", text=words)
    return ReadCourse(index, words, words, call)


def read_description(
    text: str,
    *,
    default_unit: str | None = None,
    foot: Foot | None = None,
    vara_inches: Fraction | int | float | str | None = None,
    south_azimuth: bool = False,
) -> Description:
    """Read a whole legal description (see the module notes).

    ``default_unit`` is the unit of a bare number (else a stated unit clause); ``foot``
    and ``vara_inches`` define the foot-based units (a stated vara is used when
    ``vara_inches`` is ``None``). Raises :class:`ParseError` whose message names the course
    (``course 3: ...``) and shows the unread words between « and ».
    """
    if not isinstance(text, str) or not text.strip():
        raise ParseError("the description is empty: nothing to read", text=str(text))
    blanked, facts, clauses = _take_clauses(text)
    vara = vara_inches if vara_inches is not None else facts.get("vara_inches")
    if vara is not None:
        try:
            resolve_vara_inches(vara)  # a stated vara that is not a length: refused here
        except LodelineError as err:
            raise ParseError(f"the vara: {err.message}", text=text) from None
    ctx = _Context(
        default_unit=default_unit or facts.get("unit"),
        foot=foot,
        vara_inches=vara,
        south_azimuth=south_azimuth,
    )
    spans = _pieces(blanked)
    opening = _strip(blanked[spans[0][0] : spans[0][1]])
    title = beginning = None
    pieces = [_strip(blanked[a:b]) for a, b in spans[1:]]
    found = _OPENING.search(opening)
    if found is not None:
        title = _strip(opening[: found.start()]) or None
        lines = opening[found.start() :].splitlines()
        # "Beginning at ..." on its first lines, then one course a line (no "thence")
        cut = next((n for n in range(1, len(lines)) if _starts_call(lines[n])), len(lines))
        beginning = _closed_up(_strip(" ".join(lines[:cut])))
        if cut < len(lines):
            pieces.insert(0, "\n".join(lines[cut:]))
    elif opening and _starts_call(opening):
        pieces.insert(0, opening)
    elif opening:
        title = opening
    courses: list[ReadCourse] = []
    for piece in pieces:
        if not piece:
            continue
        for words in _lines_of(piece, ctx):
            courses.append(_read_course(len(courses) + 1, _closed_up(words), ctx))
    if not courses:
        raise ParseError("the description gives no course ('thence' and a call)", text=text)
    closed = bool(_CLOSING.search(courses[-1].call.note))
    return Description(
        title=_closed_up(title) if title else None,
        beginning=beginning,
        courses=tuple(courses),
        closed=closed,
        area=facts.get("area"),
        declination=facts.get("declination"),
        date=facts.get("date"),
        reference=facts.get("reference"),
        unit=facts.get("unit"),
        vara_inches=facts.get("vara_inches"),
        clauses=tuple(clauses),
    )


def read_form(call: Call) -> str:
    """The call as it was read, to set beside its words: ``N 35°45′ E  61.5 perches``
    (the bearing at its written precision; the distance in its unit and in metres)."""
    parts = []
    if call.bearing is not None:
        b = call.bearing
        parts.append(recorded_bearing(b.azimuth_deg, b.precision_deg, b.style))
    if call.distance is not None:
        d = call.distance
        value = f"{d.value:.6f}".rstrip("0").rstrip(".")
        parts.append(f"{value} {UNIT_LABELS[d.unit]} ({d.metres:.3f} m)")
    if call.note:
        parts.append(f"[{call.note}]")
    return "  ".join(parts)


# Area units of a stated area: words -> (geo.units area unit, multiple).
_AREA_WORDS = {
    "acre": ("acre", 1),
    "acres": ("acre", 1),
    "a": ("acre", 1),
    "hectare": ("ha", 1),
    "hectares": ("ha", 1),
    "ha": ("ha", 1),
}
_SQUARE_WORDS = {
    "feet": "sq_ft",
    "foot": "sq_ft",
    "ft": "sq_ft",
    "perches": "sq_rod",
    "poles": "sq_rod",
    "rods": "sq_rod",
    "chains": "sq_chain",
    "metres": "m2",
    "meters": "m2",
    "m": "m2",
}


def stated_area_m2(text: str, *, foot: Foot | None) -> float:
    """The square metres of a stated area (``61 acres, more or less``, ``61 1/2 acres``,
    ``sixty-one acres``, ``12 acres and 40 perches`` — square perches —, ``2,450 square
    feet``, ``4.2 hectares``). The foot-based units take ``foot``. Raises ParseError."""
    r = Reader(text.replace(",", "") if re.search(r"\d,\d{3}", text) else text)
    total = Fraction(0)
    i = 0
    read_any = False
    while i < len(r.toks):
        got = r.quantity(i)
        if got is None:
            i += 1
            continue
        q, j = got
        w = r.word(j)
        if w in ("square", "sq"):
            unit = _SQUARE_WORDS.get(r.word(j + 1) or "")
            j += 1
        elif w in _AREA_WORDS:
            unit = _AREA_WORDS[w][0]
        elif w in ("perches", "poles", "rods") and read_any:
            unit = "sq_rod"  # "12 acres and 40 perches": square perches (common practice)
        else:
            unit = None
        if unit is None:
            raise ParseError(f"the stated area '{text}' gives no area unit", text=text)
        try:
            total += q.value * square_metres_per(unit, foot=foot)
        except LodelineError as err:
            raise ParseError(f"the stated area '{text}': {err.message}", text=text) from None
        read_any = True
        i = j + 1
    if not read_any:
        raise ParseError(f"the stated area '{text}' gives no number", text=text)
    return float(total)


@dataclass(frozen=True)
class AreaCheck:
    """A stated area beside the computed one: ``stated`` (as written), ``stated_m2``,
    ``computed_m2``, ``difference_m2`` (computed − stated) and ``difference_pct``
    (of the stated area); ``problem`` says why no comparison was made (else ``None``)."""

    stated: str
    stated_m2: float | None
    computed_m2: float | None
    difference_m2: float | None
    difference_pct: float | None
    problem: str | None = None

    def as_dict(self) -> dict[str, object]:
        return {
            "stated": self.stated,
            "stated_m2": self.stated_m2,
            "computed_m2": self.computed_m2,
            "difference_m2": self.difference_m2,
            "difference_pct": self.difference_pct,
            "problem": self.problem,
        }


def compare_area(stated: str, computed_m2: float | None, *, foot: Foot | None) -> AreaCheck:
    """Compare a stated area with the computed ground area (square metres, ``None`` when
    the figure has none). Never raises: a stated area that does not read is reported."""
    try:
        stated_m2 = stated_area_m2(stated, foot=foot)
    except LodelineError as err:
        return AreaCheck(stated, None, computed_m2, None, None, err.message)
    if computed_m2 is None:
        return AreaCheck(stated, stated_m2, None, None, None, "no computed area")
    diff = computed_m2 - stated_m2
    return AreaCheck(stated, stated_m2, computed_m2, diff, 100.0 * diff / stated_m2)
