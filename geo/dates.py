"""Calendar dates and decimal years.

A decimal year is ``year + (day_of_year - 1) / days_in_year`` (1 January = ``year + 0.0``),
the convention of the WMM and IGRF software. Dates are proleptic Gregorian.
"""

from __future__ import annotations

import datetime as _dt
import math
import re

from .errors import ParseError

#: The years a date may fall in (a decimal year below ``MAX_YEAR + 1``): every date of this
#: range has a decimal year and a following 1 January, which the date arithmetic needs.
MIN_YEAR, MAX_YEAR = 1, 9998

_ISO = re.compile(r"^\s*(\d{4})-(\d{1,2})-(\d{1,2})\s*$")
_DECIMAL = re.compile(r"^\s*(\d{3,4}(?:\.\d*)?)\s*$")


def decimal_year(date: _dt.date) -> float:
    """Return the decimal year of a calendar date (1 January -> ``year + 0.0``)."""
    start = _dt.date(date.year, 1, 1)
    days = (_dt.date(date.year + 1, 1, 1) - start).days
    return date.year + (date - start).days / days


def date_from_decimal_year(year: float) -> _dt.date:
    """Return the calendar date whose decimal year is nearest below ``year``."""
    if not math.isfinite(year):
        raise ParseError(f"decimal year {year!r} is not a finite number", text=str(year))
    whole = math.floor(year)
    if not MIN_YEAR <= whole <= MAX_YEAR:
        raise ParseError(_outside(whole), text=str(year))
    start = _dt.date(whole, 1, 1)
    days = (_dt.date(whole + 1, 1, 1) - start).days
    return start + _dt.timedelta(days=int(math.floor((year - whole) * days + 1e-9)))


def parse_date(text: str | float | int | _dt.date) -> tuple[_dt.date | None, float]:
    """Read an ISO 8601 calendar date (``1854-05-12``) or a decimal year (``2025.5``).

    Returns ``(date, decimal_year)``; ``date`` is ``None`` when a decimal year was given
    (the decimal year is then kept exactly as written). Raises :class:`ParseError` otherwise.
    """
    if isinstance(text, _dt.datetime):
        text = text.date()
    if isinstance(text, _dt.date):
        if not MIN_YEAR <= text.year <= MAX_YEAR:
            raise ParseError(_outside(text.year), text=text.isoformat())
        return text, decimal_year(text)
    if isinstance(text, bool):
        raise ParseError(f"{text!r} is not a date", text=str(text))
    if isinstance(text, int | float):
        if not math.isfinite(text) or not MIN_YEAR <= text < MAX_YEAR + 1:
            raise ParseError(
                f"decimal year {text!r} is outside {MIN_YEAR}..{MAX_YEAR + 1}", text=str(text)
            )
        return None, float(text)
    m = _ISO.match(text)
    if m:
        if not MIN_YEAR <= int(m[1]) <= MAX_YEAR:
            raise ParseError(f"'{text.strip()}': {_outside(int(m[1]))}", text=text)
        try:
            d = _dt.date(int(m[1]), int(m[2]), int(m[3]))
        except ValueError as exc:
            raise ParseError(
                f"'{text.strip()}' is not a calendar date ({exc})", text=text
            ) from None
        return d, decimal_year(d)
    m = _DECIMAL.match(text)
    if m:
        value = float(m[1])
        if not MIN_YEAR <= value < MAX_YEAR + 1:
            raise ParseError(
                f"decimal year '{text.strip()}' is outside {MIN_YEAR}..{MAX_YEAR + 1}", text=text
            )
        return None, value
    raise ParseError(
        f"'{text.strip()}' is not a date: give an ISO date (YYYY-MM-DD) or a decimal year (2025.5)",
        text=text,
    )


def _outside(year: int) -> str:
    return f"year {year} is outside {MIN_YEAR}..{MAX_YEAR}"
