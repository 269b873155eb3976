"""Length and area units of deeds and field books, with exact definitions.

Every size is a :class:`fractions.Fraction` of a metre (or square metre), so conversions
can be checked exactly against the published definitions:

- international foot = 0.3048 m exactly; US survey foot = 1200/3937 m exactly;
- inch = 1/12 ft; yard = 3 ft; Gunter's chain = 66 ft = 100 links (link = 0.66 ft);
  rod = pole = perch = 16.5 ft = 25 links; statute mile = 5280 ft = 80 chains;
- acre = 43,560 sq ft = 10 square chains; hectare = 10,000 m².
- vara: regional values differ (Texas 33 1/3 in, California 33 in). The number of inches
  in a vara is always given explicitly (``vara_inches``); it is never guessed.

Which foot
    Every foot-based unit (ft, in, yd, link, chain, rod, pole, perch, vara, mile) is defined
    from *the foot of the document*, ``foot='us'`` (US survey foot) or
    ``foot='international'``. This follows US practice, where the chain, rod and mile of
    the public land surveys are multiples of the survey foot: with ``foot='us'`` a Gunter's
    chain is 66 US survey feet (= 792/39.37 m), with ``foot='international'`` it is
    66 international feet (= 20.1168 m exactly). Inches and varas follow the same foot (a
    "120' 6\\"" in a survey-foot deed means survey inches). Metric units ignore ``foot``.
    A foot-based unit without a foot is an :class:`~geo.errors.InputError`: the choice is
    never made silently. :func:`default_foot` gives the usual default for a survey date
    (US survey foot before 2023-01-01, the date from which NIST deprecated it; the
    international foot from then on) and says that it is a default.

Public API
    ``Foot`` (``Literal['us', 'international']``), ``FOOT_METRES``, ``UNITS``,
    ``UNIT_ALIASES``, ``UNIT_LABELS``, ``NAMED_VARAS``,
    ``unit_name(text) -> str``, ``is_foot_based(unit) -> bool``,
    ``resolve_vara_inches(vara_inches) -> Fraction``,
    ``metres_per(unit, *, foot=None, vara_inches=None) -> Fraction``,
    ``AREA_UNITS``, ``square_metres_per(area_unit, *, foot=None) -> Fraction``,
    ``square_metres_per_acre(foot) -> Fraction``,
    ``FootChoice``, ``default_foot(date) -> FootChoice``,
    ``choose_foot(foot, date=None) -> FootChoice``.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass
from fractions import Fraction
from typing import Literal

from .dates import parse_date
from .errors import InputError

Foot = Literal["us", "international"]

#: Metres per foot, exactly.
FOOT_METRES: dict[str, Fraction] = {
    "international": Fraction(3048, 10000),
    "us": Fraction(1200, 3937),
}

#: Inches per vara for the regional varas that have a settled value.
NAMED_VARAS: dict[str, Fraction] = {
    "texas": Fraction(100, 3),  # 33 1/3 inches
    "california": Fraction(33),
}

#: First day on which the international foot is the default foot.
INTERNATIONAL_FOOT_FROM = _dt.date(2023, 1, 1)

# Size of each foot-based unit in feet (of the chosen foot).
_FEET_PER: dict[str, Fraction] = {
    "in": Fraction(1, 12),
    "ft": Fraction(1),
    "yd": Fraction(3),
    "link": Fraction(66, 100),
    "rod": Fraction(33, 2),
    "pole": Fraction(33, 2),
    "perch": Fraction(33, 2),
    "chain": Fraction(66),
    "mile": Fraction(5280),
}
_METRES_PER_METRIC: dict[str, Fraction] = {"m": Fraction(1), "km": Fraction(1000)}

#: Canonical unit names, smallest first within each system.
UNITS: tuple[str, ...] = (
    "in",
    "ft",
    "yd",
    "link",
    "vara",
    "rod",
    "pole",
    "perch",
    "chain",
    "mile",
    "m",
    "km",
)

#: Short labels used when formatting a length (each is also an accepted spelling).
UNIT_LABELS: dict[str, str] = {
    "in": "in",
    "ft": "ft",
    "yd": "yd",
    "link": "lk",
    "vara": "varas",
    "rod": "rods",
    "pole": "poles",
    "perch": "perches",
    "chain": "ch",
    "mile": "mi",
    "m": "m",
    "km": "km",
}

_SPELLINGS: dict[str, tuple[str, ...]] = {
    "in": ("in", "ins", "inch", "inches"),
    "ft": ("ft", "foot", "feet", "fts"),
    "yd": ("yd", "yds", "yard", "yards"),
    "link": ("link", "links", "lk", "lks", "li", "l"),
    "vara": ("vara", "varas", "vr", "vrs"),
    "rod": ("rod", "rods", "rd", "rds"),
    "pole": ("pole", "poles"),
    "perch": ("perch", "perches", "prch", "per", "p", "ps", "pch", "pchs"),
    "chain": ("chain", "chains", "ch", "chs", "chn", "chns", "c"),
    "mile": ("mile", "miles", "mi"),
    "m": ("m", "metre", "metres", "meter", "meters"),
    "km": ("km", "kilometre", "kilometres", "kilometer", "kilometers"),
}

#: Every accepted spelling (lower case) -> canonical unit name.
UNIT_ALIASES: dict[str, str] = {s: unit for unit, names in _SPELLINGS.items() for s in names}

#: Area units: canonical name -> (size in square feet, or None for metric sizes).
AREA_UNITS: tuple[str, ...] = ("m2", "ha", "sq_ft", "sq_rod", "sq_chain", "acre")
_SQ_FEET_PER: dict[str, Fraction] = {
    "sq_ft": Fraction(1),
    "sq_rod": Fraction(33, 2) ** 2,
    "sq_chain": Fraction(66) ** 2,
    "acre": Fraction(43560),
}
_SQ_METRES_PER_METRIC: dict[str, Fraction] = {"m2": Fraction(1), "ha": Fraction(10000)}


def unit_name(text: str) -> str:
    """Return the canonical unit name for any accepted spelling (case-insensitive).

    ``'Chains'`` -> ``'chain'``, ``'lk'`` -> ``'link'``, ``'metres'`` -> ``'m'``.
    Raises :class:`InputError` listing the canonical names for an unknown unit.
    """
    key = text.strip().casefold().rstrip(".")
    if key in UNIT_ALIASES:
        return UNIT_ALIASES[key]
    raise InputError(f"unknown length unit '{text}': use one of {', '.join(UNITS)}")


def is_foot_based(unit: str) -> bool:
    """True when the unit's size depends on which foot the document uses."""
    return unit_name(unit) not in _METRES_PER_METRIC


def _check_foot(foot: str | None, what: str) -> str:
    if foot is None:
        raise InputError(
            f"{what} is defined from the foot: say which foot is meant "
            "(foot='us' for the US survey foot or 'international')"
        )
    if foot not in FOOT_METRES:
        raise InputError(f"unknown foot {foot!r}: use 'us' or 'international'")
    return foot


def resolve_vara_inches(vara_inches: Fraction | int | float | str | None) -> Fraction:
    """Return the inches per vara as an exact fraction.

    Accepts a positive number (a float is read by its decimal text, so ``33.3333`` is
    33.3333 exactly), a fraction (``Fraction(100, 3)``, or text: ``"100/3"``,
    ``"33 1/3"``, ``"33⅓"``, ``"33.5"``), or a named value: ``'texas'`` (33 1/3 in) or
    ``'california'`` (33 in), in any case. ``None`` raises :class:`InputError`: the vara
    has several regional values and lodeline never picks one.
    """
    if vara_inches is None:
        raise InputError(
            "a vara's length depends on the region: give vara_inches "
            "(for example 'texas' = 33 1/3 in or 'california' = 33 in)"
        )
    if isinstance(vara_inches, str):
        key = vara_inches.strip().casefold()
        if key in NAMED_VARAS:
            return NAMED_VARAS[key]
        try:
            value = _fraction_text(key)
        except (ValueError, ZeroDivisionError):
            raise InputError(
                f"vara_inches {vara_inches!r} is neither a number nor one of "
                f"{', '.join(NAMED_VARAS)}"
            ) from None
    elif isinstance(vara_inches, bool):
        raise InputError(f"vara_inches {vara_inches!r} is not a number")
    elif isinstance(vara_inches, float):
        if not math.isfinite(vara_inches):
            raise InputError(f"vara_inches {vara_inches!r} is not a finite number")
        value = Fraction(repr(vara_inches))
    elif isinstance(vara_inches, int | Fraction):
        value = Fraction(vara_inches)
    else:
        raise InputError(f"vara_inches {vara_inches!r} is not a number")
    if not 0 < value <= 100:
        raise InputError(f"vara_inches {vara_inches!r} must be a length in inches, 0 < v <= 100")
    return value


_VULGAR_THIRDS = {"⅓": "1/3", "⅔": "2/3", "½": "1/2", "¼": "1/4", "¾": "3/4"}


def _fraction_text(text: str) -> Fraction:
    """The exact value of ``33``, ``33.5``, ``100/3``, ``33 1/3`` or ``33⅓`` (ValueError else)."""
    for mark, plain in _VULGAR_THIRDS.items():
        text = text.replace(mark, f" {plain}")
    parts = text.split()
    if len(parts) == 2 and "/" in parts[1] and "/" not in parts[0] and "." not in parts[0]:
        whole, frac = Fraction(parts[0]), Fraction(parts[1])
        if not 0 < frac < 1:
            raise ValueError(text)
        return whole + frac
    if len(parts) != 1:
        raise ValueError(text)
    return Fraction(parts[0])


def metres_per(
    unit: str,
    *,
    foot: Foot | None = None,
    vara_inches: Fraction | int | float | str | None = None,
) -> Fraction:
    """Return the exact number of metres in one ``unit``.

    ``foot`` ('us' or 'international') is required for every foot-based unit (see the
    module notes); ``vara_inches`` is required for the vara. Raises :class:`InputError`
    when the unit is unknown or a required parameter is missing.
    """
    key = (unit, foot, type(vara_inches), vara_inches)
    try:
        return _METRES_PER_SEEN[key]
    except KeyError:
        pass
    except TypeError:  # an unhashable argument: _metres_per says what is wrong with it
        return _metres_per(unit, foot, vara_inches)
    value = _metres_per(unit, foot, vara_inches)
    if len(_METRES_PER_SEEN) >= 1024:
        _METRES_PER_SEEN.clear()
    _METRES_PER_SEEN[key] = value
    return value


# metres_per results already computed (exact Fractions, immutable): a document parses
# thousands of distances in one or two units. Errors are not remembered.
_METRES_PER_SEEN: dict[tuple, Fraction] = {}


def _metres_per(
    unit: str, foot: Foot | None, vara_inches: Fraction | int | float | str | None
) -> Fraction:
    name = unit_name(unit)
    if name in _METRES_PER_METRIC:
        return _METRES_PER_METRIC[name]
    foot_m = FOOT_METRES[_check_foot(foot, f"'{name}'")]
    if name == "vara":
        return resolve_vara_inches(vara_inches) * foot_m / 12
    return _FEET_PER[name] * foot_m


def feet_per(unit: str) -> Fraction | None:
    """Return the size of a foot-based unit in feet (of whichever foot), else ``None``.

    The vara returns ``None`` too, since its size in feet depends on ``vara_inches``.
    """
    return _FEET_PER.get(unit_name(unit))


def square_metres_per(area_unit: str, *, foot: Foot | None = None) -> Fraction:
    """Return the exact number of square metres in one ``area_unit``.

    ``area_unit`` is one of :data:`AREA_UNITS` ('m2', 'ha', 'sq_ft', 'sq_rod', 'sq_chain',
    'acre'); the foot-based ones need ``foot`` (an acre of the US survey foot is
    43,560 square US survey feet).
    """
    key = area_unit.strip().casefold()
    if key in _SQ_METRES_PER_METRIC:
        return _SQ_METRES_PER_METRIC[key]
    if key not in _SQ_FEET_PER:
        raise InputError(f"unknown area unit '{area_unit}': use one of {', '.join(AREA_UNITS)}")
    return _SQ_FEET_PER[key] * FOOT_METRES[_check_foot(foot, f"'{key}'")] ** 2


def square_metres_per_acre(foot: Foot) -> Fraction:
    """Return the square metres in one acre (43,560 square feet of ``foot``)."""
    return square_metres_per("acre", foot=foot)


@dataclass(frozen=True)
class FootChoice:
    """Which foot a document's lengths use, and whether that was a default.

    ``note`` is an empty string when the foot was given, otherwise one sentence saying
    which default was taken and why (show it to the user).
    """

    foot: Foot
    defaulted: bool
    note: str


def default_foot(date: _dt.date | str | float) -> FootChoice:
    """Return the default foot for a survey made on ``date``.

    The US survey foot for dates before 2023-01-01 and the international foot from then
    on (NIST and NOAA deprecated the US survey foot from that date). ``date`` is a
    :class:`datetime.date`, an ISO date or a decimal year (read by :func:`geo.dates.parse_date`,
    which raises :class:`~geo.errors.ParseError` for bad text). The result always has
    ``defaulted=True`` and a note naming the choice.
    """
    day, year = parse_date(date)
    before = day < INTERNATIONAL_FOOT_FROM if day is not None else year < 2023.0
    when = day.isoformat() if day is not None else f"{year:g}"
    if before:
        return FootChoice(
            "us",
            True,
            f"no foot given: the US survey foot (1200/3937 m) is assumed for a survey "
            f"dated {when}, before 2023-01-01",
        )
    return FootChoice(
        "international",
        True,
        f"no foot given: the international foot (0.3048 m) is assumed for a survey "
        f"dated {when}, on or after 2023-01-01",
    )


def choose_foot(foot: str | None, date: _dt.date | str | float | None = None) -> FootChoice:
    """Return the document's foot: ``foot`` when given, else :func:`default_foot` of ``date``.

    Raises :class:`InputError` when ``foot`` is unknown or when neither is given.
    """
    if foot is not None:
        return FootChoice(_check_foot(foot, "the length"), False, "")  # type: ignore[arg-type]
    if date is None:
        raise InputError("no foot and no survey date given: say which foot the lengths use")
    return default_foot(date)
