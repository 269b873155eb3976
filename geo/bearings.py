"""Bearings, azimuths and declinations as deeds write them: text <-> degrees.

Conventions
    An azimuth is float degrees clockwise from north, in [0, 360). A quadrant bearing
    ``N a E`` is azimuth ``a``, ``S a E`` is ``180 - a``, ``S a W`` is ``180 + a`` and
    ``N a W`` is ``360 - a`` (0 <= a <= 90). A declination is degrees, east positive.

Accepted bearings (case-insensitive, spaces optional, a ``.`` after a word is ignored)
    - quadrant: ``N 45° 30' E``, ``N45°30'E``, ``N 45-30 E``, ``N 45-30-15 E``,
      ``N 45 30 15 E``, ``N 45.5 E``, ``N 45½ E``, ``N 45 1/2 E``, ``N45d30m15sE``,
      ``North 45 degrees 30 minutes East``, ``N 45°30′15″ E`` (primes or straight/curly
      quotes), decimal minutes or seconds (``N 45°30.5' E``);
    - cardinal: ``N``, ``North``, ``due North``, ``East``, ``Due South``...;
    - azimuth: ``Az 225°30'``, ``225-30-00``, ``225.5``, ``225°30' from north``. Azimuths
      count from north unless ``south_azimuth=True`` (the document says its azimuths count
      from south); then an unmarked azimuth and ``... from south`` count from south and
      ``... from north`` from north. ``from south`` without the option is an error.

    The precision a call was written to is kept in ``Bearing.precision_deg``: whole degrees
    1, quarter degree 0.25, minutes 1/60, seconds 1/3600, one decimal of a degree 0.1,
    a decimal of a second 0.1/3600. Cardinal calls have precision 1 (a whole-degree call).

Errors
    :class:`~geo.errors.ParseError` with ``text`` and ``position`` (0-based character where
    reading failed); the message names what was read and what is wrong, counting
    characters from 1 for people.

Formatting
    ``precision`` is a step in degrees: :data:`DEGREE` (1), :data:`MINUTE` (1/60),
    :data:`SECOND` (1/3600), :data:`TENTH_SECOND` (1/36000), decimals of any of them
    (0.1, 0.01, 0.1/60... down to 6 decimals), or 1/n of a degree for n = 2, 3, 4, 6, 8, 16
    (0.5, 0.25, 0.125 - written as reduced fractions, 45½ rather than 45 2/4, so they read
    back at the reduced step); any other positive step is shown at the coarsest of 1°,
    1′, 1″, 0.1″... that is not coarser than it. A parsed ``Bearing.precision_deg`` can be
    passed back as is. The strings ``'deg'``,
    ``'min'``, ``'sec'`` and ``'0.1sec'`` name the four usual steps. Rounding carries
    (``59′60″`` never appears). Unicode style: ``N 45°30′15″ E``; ASCII style:
    ``N 45-30-15 E``.

Public API
    ``Bearing``; ``parse_bearing(text, *, south_azimuth=False) -> Bearing``;
    ``format_bearing(azimuth_deg, *, precision=SECOND, ascii=False) -> str``;
    ``format_bearings(azimuths_deg, *, precision=SECOND, ascii=False) -> list[str]`` (many);
    ``format_azimuth(azimuth_deg, *, precision=SECOND, ascii=False, reference='north') -> str``;
    ``format_declination(declination_deg, *, precision=MINUTE, ascii=False) -> str``;
    ``recorded_bearing(azimuth_deg, precision_deg, style) -> str`` (a recorded bearing
    in its recorded form: ``due N``, ``N``, ``NE``); ``parse_declination(value) -> float``;
    ``DEGREE``, ``MINUTE``, ``SECOND``,
    ``TENTH_SECOND``. Parsing is a single left-to-right pass (linear in the text length).
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any, Literal, NamedTuple

import numpy as np

from .angles import normalize_azimuth
from .errors import InputError, ParseError
from .frozen import quick_init

DEGREE = 1.0
MINUTE = 1.0 / 60.0
SECOND = 1.0 / 3600.0
TENTH_SECOND = 1.0 / 36000.0

_NAMED_PRECISIONS = {
    "deg": DEGREE,
    "degree": DEGREE,
    "1°": DEGREE,
    "min": MINUTE,
    "minute": MINUTE,
    "1'": MINUTE,
    "1′": MINUTE,
    "sec": SECOND,
    "second": SECOND,
    '1"': SECOND,
    "1″": SECOND,
    "0.1sec": TENTH_SECOND,
    '0.1"': TENTH_SECOND,
    "0.1″": TENTH_SECOND,
}

# ---------------------------------------------------------------------------------------
# Tokens (shared with geo.calls)

NUM = "number"
WORD = "word"
FRAC = "fraction"  # a vulgar fraction character such as ½
SLASH = "slash"
DASH = "dash"
COMMA = "comma"
DEG = "degree mark"
MIN = "minute mark"
SEC = "second mark"
OTHER = "other"

_DIGITS = "0123456789"
_DEG_CHARS = "°º˚"
_MIN_CHARS = "'′’‘´`"
_SEC_CHARS = '"″”“'
_DASH_CHARS = "-–—−‐‑"
_VULGAR: dict[str, Fraction] = {
    "½": Fraction(1, 2),
    "¼": Fraction(1, 4),
    "¾": Fraction(3, 4),
    "⅛": Fraction(1, 8),
    "⅜": Fraction(3, 8),
    "⅝": Fraction(5, 8),
    "⅞": Fraction(7, 8),
    "⅓": Fraction(1, 3),
    "⅔": Fraction(2, 3),
    "⅕": Fraction(1, 5),
    "⅖": Fraction(2, 5),
    "⅗": Fraction(3, 5),
    "⅘": Fraction(4, 5),
    "⅙": Fraction(1, 6),
    "⅚": Fraction(5, 6),
}
_VULGAR_TEXT = {v: k for k, v in _VULGAR.items()}
_MAX_NUMBER_CHARS = 20
_NUMBER_RE = re.compile(r"[0-9]*(\.[0-9]+)?")
_ASCII_WORD_RE = re.compile(r"[A-Za-z]+")
# Steps of numbers written with k decimals (1/10**k), and of whole numbers.
_DECIMAL_STEPS = tuple(Fraction(1, 10**k) for k in range(_MAX_NUMBER_CHARS + 1))
_WHOLE_STEP = Fraction(1)
# Exact values of number texts already read ("17", "0.97"): calls repeat the same few numbers.
_NUMBER_VALUES: dict[str, Fraction] = {}
_NUMBER_VALUES_MAX = 4096
_FRACTION_STEPS = (2, 3, 4, 6, 8, 16)
# Letter pairs written straight after a number in compact bearings (``15sE``): mark + letter.
_COMPACT_PAIRS = {m + d for m in "dms" for d in "nsew"}


class Token:
    """One token of a call: ``kind``, source span ``[start, end)``, lower-cased ``word``."""

    __slots__ = ("kind", "start", "end", "word", "value", "decimals", "point")

    def __init__(
        self,
        kind: str,
        start: int,
        end: int,
        word: str = "",
        value: Fraction | None = None,
        decimals: int = 0,
        point: bool = False,
    ) -> None:
        self.kind = kind
        self.start = start
        self.end = end
        self.word = word
        self.value = value
        self.decimals = decimals
        self.point = point

    def __repr__(self) -> str:  # pragma: no cover - debugging aid
        return f"Token({self.kind}, {self.start}, {self.end}, {self.word!r}, {self.value})"


def quote(text: str, position: int | None = None, width: int = 60) -> str:
    """Return ``text`` in quotes, shortened around ``position`` when it is long."""
    flat = " ".join(text.split()) if len(text) <= width else text
    if len(flat) <= width:
        return f"'{flat}'"
    pos = 0 if position is None else max(0, min(position, len(text)))
    start = max(0, pos - width // 2)
    piece = " ".join(text[start : start + width].split())
    return f"'{'…' if start else ''}{piece}…'"


def short(text: str, limit: int = 40) -> str:
    """``text`` with runs of spaces closed up, cut to ``limit`` characters for a message."""
    piece = " ".join(text.split())
    return piece if len(piece) <= limit else piece[: limit - 1] + "…"


def mark_unread(text: str, start: int, end: int, width: int = 100) -> str:
    """``text`` with ``text[start:end]`` between « and » (the part that was not read), cut
    around it to about ``width`` characters when the text is long."""
    start = max(0, min(start, len(text)))
    end = max(start, min(end, len(text)))
    before = " ".join(text[:start].split())
    part = " ".join(text[start:end].split())
    after = " ".join(text[end:].split())
    if len(part) > width // 2:
        part = part[: width // 2 - 1] + "…"
    room = max(0, width - len(part)) // 2
    if len(before) > room:
        before = "…" + before[len(before) - room :]
    if len(after) > room:
        after = after[:room] + "…"
    gap_before = " " if before and text[:start][-1:].isspace() else ""
    gap_after = " " if after and text[end : end + 1].isspace() else ""
    return f"{before}{gap_before}«{part}»{gap_after}{after}"


def fail(text: str, position: int, message: str) -> ParseError:
    """Build a :class:`ParseError` for ``text`` failing at 0-based ``position``."""
    position = max(0, min(position, len(text)))
    return ParseError(
        f"{message} (at character {position + 1} of {quote(text, position)})",
        text=text,
        position=position,
    )


def _number_value(digits: str) -> Fraction:
    """Exact value of a number text (digits with an optional decimal point), remembered."""
    value = _NUMBER_VALUES.get(digits)
    if value is None:
        if len(_NUMBER_VALUES) >= _NUMBER_VALUES_MAX:
            _NUMBER_VALUES.clear()
        value = _NUMBER_VALUES[digits] = Fraction(digits)
    return value


def tokenize(text: str) -> list[Token]:
    """Split ``text`` into tokens in one pass; raises :class:`ParseError` on huge numbers."""
    toks: list[Token] = []
    n = len(text)
    ascii_text = text.isascii()  # then a word is a run of A-Z, a-z (str.isalpha on ASCII)
    number_words = False  # a word that may start a number written in words
    i = 0
    while i < n:
        c = text[i]
        if c.isspace():
            i += 1
        elif c in _DIGITS or (c == "." and i + 1 < n and text[i + 1] in _DIGITS):
            # digits, then a decimal point only when a digit follows it
            match = _NUMBER_RE.match(text, i)
            assert match is not None
            j = match.end()
            point = match.group(1) is not None
            decimals = len(match.group(1)) - 1 if point else 0
            if j - i > _MAX_NUMBER_CHARS:
                raise fail(text, i, f"the number '{text[i : i + 12]}…' is too long")
            digits = text[i:j]
            toks.append(Token(NUM, i, j, digits, _number_value(digits), decimals, point))
            i = j
        elif c in _DEG_CHARS:
            toks.append(Token(DEG, i, i + 1, c))
            i += 1
        elif c in _MIN_CHARS:
            if i + 1 < n and text[i + 1] in _MIN_CHARS:  # '' written for a double prime
                toks.append(Token(SEC, i, i + 2, text[i : i + 2]))
                i += 2
            else:
                toks.append(Token(MIN, i, i + 1, c))
                i += 1
        elif c in _SEC_CHARS:
            toks.append(Token(SEC, i, i + 1, c))
            i += 1
        elif c in _VULGAR:
            toks.append(Token(FRAC, i, i + 1, c, _VULGAR[c]))
            i += 1
        elif c in _DASH_CHARS:
            toks.append(Token(DASH, i, i + 1, c))
            i += 1
        elif c == "/" or c == "⁄":
            toks.append(Token(SLASH, i, i + 1, c))
            i += 1
        elif c in ",;":
            toks.append(Token(COMMA, i, i + 1, c))
            i += 1
        elif c.isalpha():
            if ascii_text:
                match = _ASCII_WORD_RE.match(text, i)
                assert match is not None
                j = match.end()
            else:
                j = i
                while j < n and text[j].isalpha() and text[j] not in _DEG_CHARS:
                    j += 1
            word = text[i:j].casefold()
            end = j
            if j < n and text[j] == "." and not (j + 1 < n and text[j + 1] in _DIGITS):
                end = j + 1  # abbreviation point: "N.", "chs.", "deg."
            if len(word) == 2 and word in _COMPACT_PAIRS and i > 0 and text[i - 1] in _DIGITS:
                toks.append(Token(WORD, i, i + 1, word[0]))
                toks.append(Token(WORD, i + 1, end, word[1]))
            else:
                toks.append(Token(WORD, i, end, word))
                if word in _NUMBER_FLAG_WORDS:
                    number_words = True
            i = end
        else:
            toks.append(Token(OTHER, i, i + 1, c))
            i += 1
    if number_words:
        return _fold_number_words(text, toks)
    return toks


# Number words of deeds ("twenty perches", "forty-five degrees", "one hundred and twelve
# poles", "twenty-two and a half", "three quarters of a mile"); common practice of deeds.
_ONES_WORDS = {
    w: n
    for n, w in enumerate(
        [
            "zero",
            "one",
            "two",
            "three",
            "four",
            "five",
            "six",
            "seven",
            "eight",
            "nine",
            "ten",
            "eleven",
            "twelve",
            "thirteen",
            "fourteen",
            "fifteen",
            "sixteen",
            "seventeen",
            "eighteen",
            "nineteen",
        ]
    )
}
_TENS_WORDS = {
    w: 10 * n
    for n, w in enumerate(
        ["twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety"], 2
    )
}
_FRACTION_WORDS = {
    "half": 2,
    "halves": 2,
    "third": 3,
    "thirds": 3,
    "quarter": 4,
    "quarters": 4,
    "fourth": 4,
    "fourths": 4,
    "eighth": 8,
    "eighths": 8,
}
_NUMBER_WORD_STARTS = frozenset(_ONES_WORDS) | frozenset(_TENS_WORDS) | {"a", "an"}
# Words whose presence makes the tokenizer look for numbers in words ("a" alone does not).
_NUMBER_FLAG_WORDS = frozenset(_ONES_WORDS) | frozenset(_TENS_WORDS) | frozenset(_FRACTION_WORDS)


def _word_at(toks: list[Token], i: int) -> str | None:
    return toks[i].word if i < len(toks) and toks[i].kind == WORD else None


def _group_words(toks: list[Token], i: int) -> tuple[int, int] | None:
    """A number below 1000 in words from token ``i``: (value, next index), or ``None``."""
    w = _word_at(toks, i)
    value = 0
    if w in _ONES_WORDS:
        value, i = _ONES_WORDS[w], i + 1
        if _word_at(toks, i) == "hundred":
            value, i = value * 100, i + 1
            k = i + 1 if _word_at(toks, i) == "and" else i
            rest = _tens_words(toks, k)
            if rest is not None:
                value, i = value + rest[0], rest[1]
        return value, i
    return _tens_words(toks, i)


def _tens_words(toks: list[Token], i: int) -> tuple[int, int] | None:
    """1..99 in words (``twenty``, ``forty-five``, ``forty five``, ``seven``)."""
    w = _word_at(toks, i)
    if w in _ONES_WORDS:
        return _ONES_WORDS[w], i + 1
    if w not in _TENS_WORDS:
        return None
    value, i = _TENS_WORDS[w], i + 1
    k = i + 1 if i < len(toks) and toks[i].kind == DASH else i
    if _word_at(toks, k) in _ONES_WORDS and 0 < _ONES_WORDS[_word_at(toks, k) or ""] < 10:
        value, i = value + _ONES_WORDS[_word_at(toks, k) or ""], k + 1
    return value, i


def _fraction_words(toks: list[Token], i: int) -> tuple[Fraction, int] | None:
    """``a half``, ``one half``, ``three quarters``, ``three-quarters``: (value, next)."""
    w = _word_at(toks, i)
    if w in ("a", "an"):
        numerator, k = 1, i + 1
    elif w in _ONES_WORDS and 0 < _ONES_WORDS[w or ""] < 10:
        numerator, k = _ONES_WORDS[w or ""], i + 1
    else:
        return None
    if k < len(toks) and toks[k].kind == DASH:
        k += 1
    den = _FRACTION_WORDS.get(_word_at(toks, k) or "")
    if den is None or numerator >= den:
        return None
    return Fraction(numerator, den), k + 1


def _fold_number_words(text: str, toks: list[Token]) -> list[Token]:
    """Replace runs of number words by a number token (and a fraction token for a
    fraction), spanning the words, so that the readers see ``45`` or ``22 ½``."""
    out: list[Token] = []
    i, n = 0, len(toks)
    while i < n:
        t = toks[i]
        if t.kind != WORD or t.word not in _NUMBER_WORD_STARTS and t.word != "and":
            out.append(t)
            i += 1
            continue
        whole: tuple[int, int] | None = None
        frac = None if t.word == "and" else _fraction_words(toks, i)
        if frac is None and t.word != "and":
            whole = _group_words(toks, i)
            if whole is not None and _word_at(toks, whole[1]) == "thousand":
                k = whole[1] + 1
                k = k + 1 if _word_at(toks, k) == "and" else k
                below = _group_words(toks, k)
                whole = (whole[0] * 1000 + (below[0] if below else 0), below[1] if below else k)
        k = whole[1] if whole is not None else i
        if frac is None and _word_at(toks, k) == "and":
            frac = _fraction_words(toks, k + 1)
            if frac is not None and whole is None and not (out and out[-1].kind == NUM):
                frac = None  # "and a half" after no number: words of a note
        if whole is None and frac is None:
            out.append(t)
            i += 1
            continue
        if whole is not None:
            end = toks[whole[1] - 1].end
            out.append(Token(NUM, t.start, end, str(whole[0]), Fraction(whole[0])))
        if frac is not None:
            first = toks[k].start if whole is not None or t.word == "and" else t.start
            last = frac[1]
            if whole is None and t.word != "and":
                out.append(Token(NUM, t.start, t.start, "0", Fraction(0)))
                if _word_at(toks, last) == "of":  # "three quarters of a mile"
                    last += 2 if _word_at(toks, last + 1) in ("a", "an", "the") else 1
            out.append(Token(FRAC, first, toks[last - 1].end, "", frac[0]))
            i = last
        else:
            i = whole[1]  # type: ignore[index]
    return out


# ---------------------------------------------------------------------------------------
# Reading numbers and angles

_NS = {"n": "N", "north": "N", "s": "S", "south": "S"}
_EW = {"e": "E", "east": "E", "w": "W", "west": "W"}
_INTERCARDINAL = {
    "ne",
    "nw",
    "se",
    "sw",
    "northeast",
    "northwest",
    "southeast",
    "southwest",
    "nne",
    "ene",
    "ese",
    "sse",
    "ssw",
    "wsw",
    "wnw",
    "nnw",
}
_AZ_WORDS = {"az", "azm", "azi", "azimuth"}
_DEG_WORDS = {"d", "deg", "degs", "degree", "degrees"}
_MIN_WORDS = {"m", "min", "mins", "minute", "minutes"}
_SEC_WORDS = {"s", "sec", "secs", "second", "seconds"}
_LEVEL_NAMES = ("degrees", "minutes", "seconds")
_SIXTY_POWERS = (1, 60, 3600)


class Quantity(NamedTuple):
    """A number as written: exact ``value``, the ``step`` it was written to, its span."""

    value: Fraction
    step: Fraction
    start: int
    end: int
    whole: bool  # written as a whole number (no decimals, no fraction)


class Reader:
    """Cursor over the tokens of one text (used by this module and :mod:`geo.calls`)."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.toks = tokenize(text)
        self._n = len(self.toks)
        self._kinds = [t.kind for t in self.toks]

    def tok(self, i: int) -> Token | None:
        return self.toks[i] if 0 <= i < self._n else None

    def kind(self, i: int) -> str | None:
        return self._kinds[i] if 0 <= i < self._n else None

    def word(self, i: int) -> str | None:
        if 0 <= i < self._n and self._kinds[i] == WORD:
            return self.toks[i].word
        return None

    def pos(self, i: int) -> int:
        t = self.tok(i)
        return t.start if t is not None else len(self.text)

    def fail(self, i: int, message: str) -> ParseError:
        return fail(self.text, self.pos(i), message)

    def span(self, i: int, j: int) -> str:
        """Source text of tokens ``i..j-1``."""
        if j <= i:
            return ""
        return self.text[self.toks[i].start : self.toks[j - 1].end]

    def show(self, i: int, j: int, limit: int = 40) -> str:
        """Source text of tokens ``i..j-1`` for a message, shortened to ``limit`` characters."""
        return short(self.span(i, j), limit)

    def is_number(self, i: int) -> bool:
        return 0 <= i < self._n and self._kinds[i] == NUM

    def is_negative(self, i: int) -> bool:
        return self.kind(i) == DASH and self.kind(i + 1) == NUM and self._dash_starts(i)

    def _dash_starts(self, i: int) -> bool:
        prev = self.tok(i - 1)
        return prev is None or prev.kind in (WORD, COMMA, OTHER)

    def quantity(self, i: int) -> tuple[Quantity, int] | None:
        """Read ``45``, ``45.5``, ``45½``, ``45 1/2``, ``45-1/2`` or ``1/2`` at token ``i``."""
        t = self.tok(i)
        if t is None or t.kind != NUM:
            return None
        assert t.value is not None
        if self.kind(i + 1) == SLASH and self.kind(i + 2) == NUM:
            return self._fraction(i, Fraction(0))
        if t.point:
            return Quantity(t.value, _DECIMAL_STEPS[t.decimals], t.start, t.end, False), i + 1
        nxt = self.tok(i + 1)
        if nxt is not None and nxt.kind == FRAC:
            assert nxt.value is not None
            step = Fraction(1, nxt.value.denominator)
            return Quantity(t.value + nxt.value, step, t.start, nxt.end, False), i + 2
        k = i + 1
        if self.kind(k) == DASH and self.kind(k + 2) == SLASH:
            k += 1
        if self.kind(k) == NUM and self.kind(k + 1) == SLASH and self.kind(k + 2) == NUM:
            return self._fraction(k, t.value, start=t.start, proper=True)
        return Quantity(t.value, _WHOLE_STEP, t.start, t.end, True), i + 1

    def _fraction(
        self, i: int, whole: Fraction, start: int | None = None, proper: bool = False
    ) -> tuple[Quantity, int]:
        num, den = self.toks[i], self.toks[i + 2]
        assert num.value is not None and den.value is not None
        if num.point or den.point or den.value == 0:
            raise self.fail(i, f"'{self.span(i, i + 3)}' is not a fraction such as 1/2 or 3/4")
        frac = num.value / den.value
        if proper and not 0 < frac < 1:
            raise self.fail(
                i, f"'{self.span(i, i + 3)}' after a whole number must be a fraction below 1"
            )
        first = self.toks[i].start if start is None else start
        return Quantity(whole + frac, Fraction(1, den.value), first, den.end, False), i + 3

    def mark(self, i: int, level: int, words_ok: bool) -> int | None:
        """Return the level (0 deg, 1 min, 2 sec) of an angle mark at token ``i``, if any.

        ``level`` is the part just read; ``words_ok`` says whether the bare letters
        ``m``/``s`` count as minute/second marks (only after an explicit degree mark or in
        a quadrant bearing, since ``m`` also means metres).
        """
        t = self.tok(i)
        if t is None:
            return None
        if t.kind == DEG:
            return 0
        if t.kind == MIN:
            return 1
        if t.kind == SEC:
            return 2
        if t.kind != WORD:
            return None
        w = t.word
        if w in _DEG_WORDS:
            return 0
        if w in _MIN_WORDS and (w != "m" or (words_ok and level == 1)):
            return 1
        if w in _SEC_WORDS and (w != "s" or (words_ok and level == 2)):
            return 2
        return None


class Angle(NamedTuple):
    """An angle read from degrees/minutes/seconds parts, exact: ``num / den`` degrees, written
    to a step of ``step_num / step_den`` degrees (integers, denominators positive; ``n / d``
    of two ints is the correctly rounded double, the same as ``float(Fraction(n, d))``)."""

    num: int
    den: int
    step_num: int
    step_den: int
    start: int
    end: int
    marked: bool  # at least one explicit mark (°, ', d, degrees...)

    @property
    def value(self) -> Fraction:
        """The angle in degrees."""
        return Fraction(self.num, self.den)

    @property
    def step(self) -> Fraction:
        """The step it was written to, in degrees."""
        return Fraction(self.step_num, self.step_den)


def read_angle(
    r: Reader,
    i: int,
    *,
    quadrant: bool,
    stop_before_units: frozenset[str] | set[str] = frozenset(),
) -> tuple[Angle, int]:
    """Read degrees [minutes [seconds]] starting at token ``i``.

    Parts are separated by marks, hyphens or spaces. In a quadrant bearing the E/W letter
    ends the angle, so every following number belongs to it. Otherwise (azimuths in a
    call) an unmarked part is left alone when the token after it is one of
    ``stop_before_units`` (it is then the distance), or when it carries a mark of the wrong
    kind (``120'`` after minutes is a length in feet).
    """
    first = r.quantity(i)
    if first is None:
        raise r.fail(i, "expected the angle (a number of degrees)")
    # The total so far is num / den degrees, exactly.
    num, den = 0, 1
    scale = 1
    marked = False
    q, j = first
    qi = i
    level = 0
    while True:
        m = r.mark(j, level, words_ok=quadrant or marked)
        if m is not None and m != level:
            if level == 0:
                raise r.fail(
                    j,
                    f"'{r.show(j, j + 1)}' after {_num(q.value)} marks {_LEVEL_NAMES[m]}, "
                    "but the degrees come first",
                )
            raise r.fail(
                j,
                f"'{r.show(j, j + 1)}' marks {_LEVEL_NAMES[m]} where "
                f"{_LEVEL_NAMES[level]} were expected",
            )
        if level > 0 and q.value.numerator >= 60 * q.value.denominator:  # 60 or more
            raise r.fail(qi, f"{_LEVEL_NAMES[level]} {_num(q.value)} must be less than 60")
        scale = _SIXTY_POWERS[level]
        part_den = q.value.denominator * scale
        num, den = num * part_den + q.value.numerator * den, den * part_den
        end = q.end
        if m is not None:
            marked = True
            end = r.toks[j].end
            j += 1
        if level == 2:
            break
        k = j
        dashed = r.kind(k) == DASH and r.kind(k + 1) == NUM
        if dashed:
            k += 1
        if r.kind(k) != NUM:
            break
        nxt = r.quantity(k)
        assert nxt is not None
        nq, nj = nxt
        if not quadrant and not dashed:
            # In an azimuth a number joined by a space is the next part only when it is
            # not the distance that follows the azimuth.
            after = r.tok(nj)
            if after is not None and after.kind == WORD and after.word in stop_before_units:
                break
            nm = r.mark(nj, level + 1, words_ok=marked)
            if nm is not None and nm != level + 1:
                break
        if not q.whole:
            raise r.fail(
                k,
                f"{_LEVEL_NAMES[level]} {r.text[q.start : q.end]} have a fractional part, "
                f"so no {_LEVEL_NAMES[level + 1]} can follow",
            )
        q, j, qi = nq, nj, k
        level += 1
    step = q.step
    return Angle(num, den, step.numerator, step.denominator * scale, first[0].start, end, marked), j


def _num(value: Fraction) -> str:
    if value.denominator == 1:
        return str(value.numerator)
    return f"{float(value):g}"


# ---------------------------------------------------------------------------------------
# Bearings

Style = Literal["quadrant", "azimuth", "cardinal"]


@quick_init
@dataclass(frozen=True, slots=True)
class Bearing:
    """A bearing or azimuth as read from a call.

    ``azimuth_deg``: degrees clockwise from north in [0, 360). ``style``: how it was
    written. ``precision_deg``: the step it was written to (degrees). ``text``: the source
    text of the bearing. ``quadrant``: ``'NE'``, ``'SE'``, ``'SW'`` or ``'NW'`` for a
    quadrant bearing, else ``None``. ``angle_deg``: the quadrant angle (0-90) or the
    azimuth as written from its reference; ``None`` for cardinal calls. ``reference``:
    ``'north'`` or ``'south'`` (the origin an azimuth was counted from).
    """

    azimuth_deg: float
    style: Style
    precision_deg: float
    text: str
    quadrant: str | None = None
    angle_deg: float | None = None
    reference: Literal["north", "south"] = "north"


def starts_bearing(r: Reader, i: int) -> bool:
    """True when token ``i`` begins a bearing written with words (N, South, due, Az...)."""
    w = r.word(i)
    return w is not None and (
        w in _NS or w in _EW or w in _AZ_WORDS or w == "due" or w in _INTERCARDINAL or w in _POINTS
    )


def read_bearing(
    r: Reader,
    i: int,
    *,
    south_azimuth: bool,
    stop_before_units: frozenset[str] | set[str] = frozenset(),
) -> tuple[Bearing, int]:
    """Read one bearing starting at token ``i``; return it and the next token index."""
    t = r.tok(i)
    if t is None:
        raise r.fail(i, "expected a bearing")
    w = r.word(i)
    if w == "due":
        d = r.word(i + 1)
        if d is None or (d not in _NS and d not in _EW):
            raise r.fail(i + 1, "'due' must be followed by North, South, East or West")
        return _cardinal(r, i, i + 1), i + 2
    if w in _POINTS:
        az = _POINTS[w]
        return Bearing(az, "cardinal", 1.0, r.span(i, i + 1), _POINT_QUADRANT[az]), i + 1
    if w in _INTERCARDINAL:
        raise r.fail(
            i,
            f"'{r.show(i, i + 1)}' gives no angle: write a quadrant bearing such as N 45 E",
        )
    if w in _NS:
        end = _split_point_end(r, i)
        if end is not None:
            az = _POINTS[(w[0] + (r.word(end - 1) or "")[0])]
            return Bearing(az, "cardinal", 1.0, r.span(i, end), _POINT_QUADRANT[az]), end
        return _quadrant(r, i, stop_before_units)
    if w in _EW:
        got = r.quantity(i + 1) if r.is_number(i + 1) else None
        if got is not None and (r.word(got[1]) in stop_before_units or _feet_after(r, got[1])):
            return _cardinal(r, i, i), i + 1  # "West 40 poles": a cardinal call and a distance
        if r.is_number(i + 1) or r.is_negative(i + 1):
            raise r.fail(
                i,
                f"a quadrant bearing starts with N or S, not '{r.show(i, i + 1)}' "
                "(write it as N/S angle E/W)",
            )
        if r.word(i + 1) in _NS or r.word(i + 1) in _EW:
            raise r.fail(i + 1, f"direction given twice: '{r.show(i, i + 2)}'")
        return _cardinal(r, i, i), i + 1
    if w in _AZ_WORDS:
        if r.is_negative(i + 1) or (r.kind(i + 1) == DASH and r.is_number(i + 2)):
            raise r.fail(i + 1, "negative angle: an azimuth is written from 0 to 360")
        if not r.is_number(i + 1):
            raise r.fail(i + 1, f"expected the azimuth angle after '{r.show(i, i + 1)}'")
        return _azimuth(r, i, i + 1, south_azimuth, stop_before_units)
    if r.is_negative(i) or (t.kind == DASH and r.is_number(i + 1)):
        raise r.fail(i, "negative angle: bearings and azimuths are written without a sign")
    if t.kind == NUM:
        return _azimuth(r, i, i, south_azimuth, stop_before_units)
    raise r.fail(i, f"'{r.show(i, i + 1)}' does not start a bearing (N/S, a cardinal or Az)")


# The four intercardinal points, N 45° E and so on (common practice: "Northeast" is N 45 E).
_POINTS = {
    "ne": 45.0,
    "northeast": 45.0,
    "se": 135.0,
    "southeast": 135.0,
    "sw": 225.0,
    "southwest": 225.0,
    "nw": 315.0,
    "northwest": 315.0,
}
_POINT_QUADRANT = {45.0: "NE", 135.0: "SE", 225.0: "SW", 315.0: "NW"}


def _split_point_end(r: Reader, i: int) -> int | None:
    """End token of an intercardinal point written in two parts at ``i`` (``North-east``,
    ``N.E.``, ``N. E.``), else ``None``. ``N E`` or ``N. E`` without both points is not
    one (it may be a quadrant bearing whose angle was left out)."""
    if r.kind(i + 1) == DASH and r.word(i + 2) in _EW:
        return i + 3
    points = r.text[r.toks[i].end - 1] == "." and r.word(i + 1) in _EW
    if points and r.text[r.toks[i + 1].end - 1] == ".":
        return i + 2
    return None


def _feet_after(r: Reader, k: int) -> bool:
    """True when token ``k`` (after a number that follows a cardinal word) is a foot mark
    that no E or W follows: ``East 149' 2"`` is a cardinal call and feet and inches, while
    ``N 45' E`` stays a (wrongly written) quadrant bearing."""
    if r.kind(k) != MIN:
        return False
    nxt = k + 1
    if r.is_number(nxt) and r.kind(nxt + 1) == SEC:
        nxt += 2
    return r.word(nxt) not in _EW and r.word(nxt) not in _NS


def in_range(azimuth_deg: float) -> float:
    """``azimuth_deg`` reduced to [0, 360) by :func:`geo.angles.normalize_azimuth`, skipped when
    it is already inside (0, 360), where the reduction returns it unchanged."""
    if 0.0 < azimuth_deg < 360.0:
        return azimuth_deg
    return float(normalize_azimuth(azimuth_deg))


def _cardinal(r: Reader, start: int, i: int) -> Bearing:
    w = r.word(i)
    assert w is not None
    letter = _NS.get(w) or _EW[w]
    az = {"N": 0.0, "E": 90.0, "S": 180.0, "W": 270.0}[letter]
    return Bearing(az, "cardinal", 1.0, r.span(start, i + 1))


def _quadrant(r: Reader, i: int, stop_before_units) -> tuple[Bearing, int]:
    ns = _NS[r.word(i) or ""]
    j = i + 1
    w2 = r.word(j)
    if w2 in _NS:
        raise r.fail(j, f"N or S given twice: '{r.show(i, j + 1)}'")
    if w2 in _EW:
        if r.is_number(j + 1):
            raise r.fail(j, f"'{r.show(i, j + 1)}': the angle comes between N/S and E/W")
        raise r.fail(
            j, f"'{r.show(i, j + 1)}' gives no angle: write a quadrant bearing such as N 45 E"
        )
    if r.kind(j) == DASH and r.is_number(j + 1):
        raise r.fail(j, "negative angle: a quadrant angle is written from 0 to 90")
    if not r.is_number(j):
        return _cardinal(r, i, i), j
    got = r.quantity(j)
    if got is not None and (r.word(got[1]) in stop_before_units or _feet_after(r, got[1])):
        return _cardinal(r, i, i), j  # "North 20 perches": a cardinal call and a distance
    angle, k = read_angle(r, j, quadrant=True)
    ew_word = r.word(k)
    if ew_word not in _EW:
        if ew_word in _NS:
            raise r.fail(
                k,
                "N or S given twice: a quadrant bearing ends with E or W, "
                f"not '{r.show(k, k + 1)}'",
            )
        if r.is_number(k):
            raise r.fail(k, f"too many numbers in the angle of '{r.show(i, k + 1)}'")
        raise r.fail(k, f"E or W missing after '{r.show(i, k)}'")
    ew = _EW[ew_word]
    if r.word(k + 1) in _EW:
        raise r.fail(k + 1, f"E or W given twice: '{r.show(i, k + 2)}'")
    a, den = angle.num, angle.den
    if a > 90 * den:
        raise r.fail(j, f"quadrant angle {r.text[angle.start : angle.end]} is more than 90 degrees")
    quadrant = ns + ew
    if quadrant == "NE":
        az = a
    elif quadrant == "SE":
        az = 180 * den - a
    elif quadrant == "SW":
        az = 180 * den + a
    else:
        az = 360 * den - a
    bearing = Bearing(
        in_range(az / den),
        "quadrant",
        angle.step_num / angle.step_den,
        r.span(i, k + 1),
        quadrant,
        a / den,
    )
    return bearing, k + 1


def _azimuth(
    r: Reader, start: int, i: int, south_azimuth: bool, stop_before_units
) -> tuple[Bearing, int]:
    angle, k = read_angle(r, i, quadrant=False, stop_before_units=stop_before_units)
    w = r.word(k)
    if w in _EW:
        raise r.fail(
            k, f"N or S missing before the angle: '{r.show(start, k + 1)}' is not a bearing"
        )
    if w in _NS:
        raise r.fail(k, f"'{r.show(start, k + 1)}': N or S comes before the angle")
    reference: Literal["north", "south"] = "south" if south_azimuth else "north"
    end = k
    if w == "from":
        m = k + 1
        if r.word(m) == "the":
            m += 1
        ref = r.word(m)
        if ref not in ("n", "north", "s", "south"):
            raise r.fail(m, "'from' must be followed by north or south")
        reference = "north" if ref in ("n", "north") else "south"
        if reference == "south" and not south_azimuth:
            raise r.fail(
                m,
                "azimuth counted from south, but this document counts azimuths from north "
                "(set the south-azimuth option if it really counts from south)",
            )
        end = m + 1
    a, den = angle.num, angle.den
    if a > 360 * den:
        raise r.fail(i, f"azimuth {r.text[angle.start : angle.end]} is more than 360 degrees")
    from_north = a + 180 * den if reference == "south" else a
    bearing = Bearing(
        in_range(from_north / den),
        "azimuth",
        angle.step_num / angle.step_den,
        r.span(start, end),
        None,
        a / den,
        reference,
    )
    return bearing, end


def looks_like_bearing(r: Reader, i: int) -> bool:
    """True when token ``i`` begins a second bearing (direction word + number, Az, 45°)."""
    w = r.word(i)
    if w is not None:
        if w in _AZ_WORDS:
            return True
        if w in _NS or w in _EW:
            return r.is_number(i + 1) or r.word(i + 1) in _EW
        return w == "due"
    if r.is_number(i):
        q = r.quantity(i)
        return q is not None and r.mark(q[1], 0, words_ok=False) == 0
    return False


def parse_bearing(text: str, *, south_azimuth: bool = False) -> Bearing:
    """Read a quadrant bearing, cardinal call or azimuth; the whole text must be one bearing.

    Returns a :class:`Bearing` (azimuth in degrees clockwise from north, [0, 360)).
    ``south_azimuth``: the document counts azimuths from south (see the module notes).
    Raises :class:`ParseError` naming what was read, what is wrong and the character.
    """
    if not isinstance(text, str):
        raise ParseError(f"a bearing must be text, not {type(text).__name__}", text=str(text))
    if not text.strip():
        raise ParseError("empty bearing: nothing to read", text=text, position=0)
    r = Reader(text)
    bearing, j = read_bearing(r, 0, south_azimuth=south_azimuth)
    if j < len(r.toks):
        k = j
        while r.kind(k) == COMMA:
            k += 1
        if looks_like_bearing(r, k):
            message = f"several bearings in one call: '{short(bearing.text)}' and then more"
            raise r.fail(k, message)
        message = f"unexpected '{r.show(j, j + 1)}' after the bearing '{short(bearing.text)}'"
        raise r.fail(j, message)
    return bearing


# ---------------------------------------------------------------------------------------
# Formatting


@dataclass(frozen=True)
class _Plan:
    per_degree: int  # counts per degree
    level: int  # 0 deg, 1 min, 2 sec; -1 for fractions of a degree
    decimals: int


# Plans already made, keyed on (type, precision): a report formats thousands of bearings at a
# handful of precisions. Errors are not remembered (they are raised again).
_PLANS: dict[tuple[type, float | str], _Plan] = {}
_PLANS_MAX = 256


def _plan(precision: float | str) -> _Plan:
    key = (type(precision), precision)
    try:
        return _PLANS[key]
    except KeyError:
        pass
    except TypeError:  # unhashable: _make_plan says what is wrong with it
        return _make_plan(precision)
    plan = _make_plan(precision)
    if len(_PLANS) >= _PLANS_MAX:
        _PLANS.clear()
    _PLANS[key] = plan
    return plan


def _make_plan(precision: float | str) -> _Plan:
    if isinstance(precision, str):
        key = precision.strip().casefold()
        if key not in _NAMED_PRECISIONS:
            raise InputError(
                f"unknown precision {precision!r}: use 'deg', 'min', 'sec', '0.1sec' "
                "or a step in degrees"
            )
        precision = _NAMED_PRECISIONS[key]
    if isinstance(precision, bool) or not isinstance(precision, int | float | Fraction):
        raise InputError(f"precision {precision!r} is not a step in degrees")
    p = float(precision)
    if not (math.isfinite(p) and p > 0):
        raise InputError(f"precision {precision!r} must be a positive step in degrees")
    for level, unit in enumerate((1.0, 60.0, 3600.0)):
        ratio = p * unit
        k = round(-math.log10(ratio))
        if 0 <= k <= 6 and abs(ratio - 10.0**-k) <= 1e-9 * 10.0**-k:
            return _Plan(int(round(unit)) * 10**k, level, k)
    n = round(1.0 / p)
    if n in _FRACTION_STEPS and abs(1.0 / p - n) <= 1e-9 * n:
        return _Plan(n, -1, 0)
    # Any other step: the coarsest usual step that is not coarser than it.
    for level, unit in enumerate((1.0, 60.0, 3600.0)):
        if unit * p >= 1.0 - 1e-12:
            return _Plan(int(unit), level, 0)
    k = min(6, math.ceil(-math.log10(p * 3600.0) - 1e-12))
    return _Plan(3600 * 10**k, 2, k)


def _counts(angle_deg: float, plan: _Plan) -> int:
    return math.floor(angle_deg * plan.per_degree + 0.5)


def _render(counts: int, plan: _Plan, ascii: bool) -> str:
    """Text of a non-negative angle given in counts of the plan's step."""
    k = plan.decimals
    if plan.level == -1:
        d, num = divmod(counts, plan.per_degree)
        if num == 0:
            return f"{d}" if ascii else f"{d}°"
        frac = Fraction(num, plan.per_degree)
        if ascii or frac not in _VULGAR_TEXT:
            text = f"{d} {frac.numerator}/{frac.denominator}"
            return text if ascii else text + "°"
        return f"{d}{_VULGAR_TEXT[frac]}°"
    scale = 10**k
    if plan.level == 0:
        d, f = divmod(counts, scale)
        text = f"{d}.{f:0{k}d}" if k else f"{d}"
        return text if ascii else text + "°"
    d, rest = divmod(counts, plan.per_degree)
    if plan.level == 1:
        m, mf = divmod(rest, scale)
        ms = f"{m:02d}.{mf:0{k}d}" if k else f"{m:02d}"
        return f"{d}-{ms}" if ascii else f"{d}°{ms}′"
    m, rest = divmod(rest, 60 * scale)
    s, sf = divmod(rest, scale)
    ss = f"{s:02d}.{sf:0{k}d}" if k else f"{s:02d}"
    return f"{d}-{m:02d}-{ss}" if ascii else f"{d}°{m:02d}′{ss}″"


_CARDINAL_LETTERS = {0.0: "N", 90.0: "E", 180.0: "S", 270.0: "W"}


def recorded_bearing(azimuth_deg: float, precision_deg: float, style: str) -> str:
    """A recorded bearing in its recorded form (the record column): a cardinal call
    (``North``, ``due East``) as ``due N``, ``due E``..., an intercardinal point as ``NE``
    (never ``N 0° E``, ``N 45° E``); any other bearing by :func:`format_bearing` at its
    written precision. ``style`` is :attr:`Bearing.style`."""
    if style == "cardinal":
        if azimuth_deg in _CARDINAL_LETTERS:
            return f"due {_CARDINAL_LETTERS[azimuth_deg]}"
        return _POINT_QUADRANT[azimuth_deg]
    return format_bearing(azimuth_deg, precision=precision_deg)


def finite_number(value: float, what: str) -> float:
    """Return ``value`` as a finite float or raise :class:`InputError` naming ``what``."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} {value!r} is not a number") from None
    if not math.isfinite(v):
        raise InputError(f"{what} {value!r} is not a finite number")
    return v


def format_bearing(
    azimuth_deg: float, *, precision: float | str = SECOND, ascii: bool = False
) -> str:
    """Write an azimuth (degrees from north) as a quadrant bearing.

    ``N 45°30′15″ E`` (or ``N 45-30-15 E`` with ``ascii=True``), rounded to ``precision``
    (see the module notes) with carry. North is ``N 0°… E``, east ``N 90°… E``, south
    ``S 0°… E`` and west ``N 90°… W``.
    """
    plan = _plan(precision)
    c = _counts(finite_number(azimuth_deg, "azimuth") % 360.0, plan) % (360 * plan.per_degree)
    return _bearing_text(c, plan, ascii)


def _bearing_text(c: int, plan: _Plan, ascii: bool) -> str:
    """Quadrant bearing text of an azimuth given in counts of the plan's step, [0, full)."""
    full = 360 * plan.per_degree
    quarter = 90 * plan.per_degree
    if c <= quarter:
        ns, ew, a = "N", "E", c
    elif c <= 2 * quarter:
        ns, ew, a = "S", "E", 2 * quarter - c
    elif c < 3 * quarter:
        ns, ew, a = "S", "W", c - 2 * quarter
    else:
        ns, ew, a = "N", "W", full - c
    return f"{ns} {_render(a, plan, ascii)} {ew}"


def format_bearings(
    azimuths_deg: Sequence[float] | np.ndarray,
    *,
    precision: float | str | Sequence[float | str] = SECOND,
    ascii: bool = False,
) -> list[str]:
    """:func:`format_bearing` of many azimuths at once: the same texts, in order.

    ``precision`` is one step for all, or a sequence of steps, one per azimuth. The rounding
    is done on all azimuths of a step together (numpy: the same double arithmetic as
    :func:`format_bearing`), and a text already written in the batch is reused.
    """
    try:
        values = np.asarray(azimuths_deg, dtype=float).ravel()
        bad = not np.all(np.isfinite(values))
    except (TypeError, ValueError):
        bad = True
    if bad:  # finite_number names the bad azimuth as format_bearing would
        values = np.array([finite_number(a, "azimuth") for a in azimuths_deg], dtype=float)
    count = values.size
    if (
        isinstance(precision, list | tuple)
        and len(precision) == count > 0
        and all(type(p) is float and p == precision[0] for p in precision)
    ):
        precision = precision[0]  # one step for all (the usual case)
    if isinstance(precision, str) or not isinstance(precision, Sequence | np.ndarray):
        groups: dict[tuple[type, Any], list[int]] = {(type(precision), precision): []}
        steps: dict[tuple[type, Any], Any] = {(type(precision), precision): precision}
        every = True
    else:
        if len(precision) != count:
            raise InputError(f"{len(precision)} precisions for {count} azimuths")
        groups, steps, every = {}, {}, False
        for i, p in enumerate(precision):
            key = (type(p), p)
            groups.setdefault(key, []).append(i)
            steps.setdefault(key, p)
    out: list[str] = [""] * count
    if len(_TEXTS) > _TEXTS_MAX:
        _TEXTS.clear()
    for key, members in groups.items():
        plan = _plan(steps[key])
        sel = values if every else values[members]
        # _counts(a % 360.0, plan) % full for each: np.mod and Python's % agree on doubles
        counts = np.floor(np.mod(sel, 360.0) * plan.per_degree + 0.5).astype(np.int64)
        counts %= 360 * plan.per_degree
        seen = _TEXTS.setdefault((plan, ascii), {})
        if len(seen) > _TEXTS_PER_PLAN:
            seen.clear()
        for i, c in zip(range(count) if every else members, counts.tolist(), strict=True):
            text = seen.get(c)
            if text is None:
                text = seen[c] = _bearing_text(c, plan, ascii)
            out[i] = text
    return out


# Texts already written by format_bearings, by (plan, ascii) then count of steps: an editor
# formats every bearing of a document on each keystroke, and nearly all come out as before.
_TEXTS: dict[tuple[_Plan, bool], dict[int, str]] = {}
_TEXTS_MAX = 64  # (plan, ascii) pairs kept
_TEXTS_PER_PLAN = 100_000  # texts kept per pair (a 0.1″ plan has 12,960,000 steps in a circle)


def format_azimuth(
    azimuth_deg: float,
    *,
    precision: float | str = SECOND,
    ascii: bool = False,
    reference: Literal["north", "south"] = "north",
) -> str:
    """Write an azimuth (degrees from north) as azimuth text: ``225°30′00″`` / ``225-30-00``.

    With ``reference='south'`` the angle is counted from south and the text ends in
    ``from south`` (read back with ``parse_bearing(..., south_azimuth=True)``).
    """
    if reference not in ("north", "south"):
        raise InputError(f"unknown azimuth reference {reference!r}: use 'north' or 'south'")
    plan = _plan(precision)
    az = finite_number(azimuth_deg, "azimuth") + (180.0 if reference == "south" else 0.0)
    c = _counts(az % 360.0, plan) % (360 * plan.per_degree)
    text = _render(c, plan, ascii)
    return text + " from south" if reference == "south" else text


def format_declination(
    declination_deg: float, *, precision: float | str = MINUTE, ascii: bool = False
) -> str:
    """Write a signed angle (east positive) as ``3°10′ E`` / ``3°10′ W`` (``3-10 W`` ascii).

    Zero after rounding is written without a letter (``0°00′``).
    """
    plan = _plan(precision)
    d = finite_number(declination_deg, "declination")
    c = _counts(abs(d), plan)
    text = _render(c, plan, ascii)
    if c == 0:
        return text
    return f"{text} {'E' if d > 0 else 'W'}"


def parse_declination(value: str | float | int) -> float:
    """Read a declination (or any signed east/west angle) and return degrees, east positive.

    Accepts a number (``-3.1667``), or text: ``3°10' W``, ``3 10 W``, ``W 3°10'``,
    ``3.5 E``, ``-3.1667``, ``+2.5``. A letter and a sign together are an error, and so is
    an angle beyond 180 degrees. Raises :class:`ParseError`.
    """
    if isinstance(value, bool):
        raise ParseError(f"{value!r} is not a declination", text=str(value))
    if isinstance(value, int | float | Fraction):
        v = float(value)
        if not math.isfinite(v) or abs(v) > 180:
            raise ParseError(
                f"declination {value!r} must be a finite angle within ±180 degrees",
                text=str(value),
            )
        return v + 0.0
    if not isinstance(value, str):
        raise ParseError(f"a declination must be text or a number, not {type(value).__name__}")
    if not value.strip():
        raise ParseError("empty declination: nothing to read", text=value, position=0)
    r = Reader(value)
    i = 0
    sign = 0
    letter = None
    t = r.tok(0)
    if t is not None and (t.kind == DASH or (t.kind == OTHER and t.word == "+")):
        sign = -1 if t.kind == DASH else 1
        i = 1
    if r.word(i) in _EW:
        letter = _EW[r.word(i) or ""]
        i += 1
    if not r.is_number(i):
        raise r.fail(i, "expected the declination angle (for example 3°10' W)")
    angle, j = read_angle(r, i, quadrant=True)
    if letter is None and r.word(j) in _EW:
        letter = _EW[r.word(j) or ""]
        j += 1
    if j < len(r.toks):
        raise r.fail(j, f"unexpected '{r.show(j, j + 1)}' after the declination")
    if letter is not None and sign:
        raise r.fail(0, "give either a sign or E/W, not both")
    if angle.num > 180 * angle.den:
        raise r.fail(i, f"declination {r.text[angle.start : angle.end]} is more than 180 degrees")
    negative = sign < 0 or letter == "W"
    v = angle.num / angle.den
    return (-v if negative else v) + 0.0
