"""A new description of the figure, written the way a deed reads.

``write_description(conv, ...)`` turns a converted document into a metes-and-bounds text:

    Beginning at the point of beginning of the record, latitude 44°06′07.56″ N, longitude
    72°52′50.52″ W (WGS84), …; thence N 2°19′ E, 20.97 chains (421.84 m) to an iron pin in a
    stone pile; thence …; thence S 85°11′ W, 21.58 chains (434.11 m) to the place of beginning,
    containing 44.980 acres (44 a 3 r 36.8 p; 18.203 ha), more or less.

followed by sentences saying what the bearings are referred to (the basis of bearings), which
record and model the calls were converted with, what the distances are and how the figure was
balanced, and the cautions.

Method
    The courses are those of :func:`geo.survey.close_document` with the same ``adjust``: the
    record's figure (recorded azimuths and ground lengths) turned by one angle onto the chosen
    north at the point of beginning, balanced by the compass or transit rule when asked (the
    default: compass for a closed figure, none for an open one). ``north="true"`` and
    ``"grid"`` are the closure's true and grid north; ``north="magnetic"`` is magnetic north
    at the *target* date (the date the line is to be run), the true-north figure turned by the
    target-date declination at the point of beginning (``magnetic = true - D``). The area is
    the closure's (ground, of the balanced figure) in acres of the document's foot, with
    acres, roods and perches for a perch or chain document (:mod:`geo.measures`), and hectares.
    A figure with crossing courses has no area and says so.

Wording
    Plain and our own; the trade's terms are kept (beginning, thence, place of beginning,
    containing, more or less). Each call's words after the distance ("to a white oak") are
    kept as written; the last course of a closed figure runs "to the place of beginning".
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

from .cautions import CAUTIONS
from .errors import InputError
from .measures import RecordUnit, area_text, conversion_unit, length_text

if TYPE_CHECKING:
    from .north import DocumentConversion

__all__ = ["BEARING_PRECISIONS", "Description", "write_description"]

#: Bearing precisions a description may be written to, in degrees.
BEARING_PRECISIONS = {"minute": 1.0 / 60.0, "second": 1.0 / 3600.0}
DescriptionNorth = Literal["true", "grid", "magnetic"]

_TO_BEGINNING = re.compile(
    r"^\s*(to\s+)?(the\s+)?(place\s+of\s+|point\s+of\s+)?beginning\.?\s*$", re.I
)
_LEADING_TO = re.compile(r"^\s*(to|at|along|with|by)\b", re.I)


@dataclass(frozen=True)
class Description:
    """A written description: ``courses`` (the metes and bounds), ``basis`` (basis of
    bearings), ``record`` (the record and model retraced), ``distances`` (units, balancing),
    ``caution``; ``text`` joins them as paragraphs. ``north``, ``adjustment`` and ``unit`` say
    how it was written."""

    courses: str
    basis: str
    record: str
    distances: str
    caution: str
    north: str
    adjustment: str
    unit: str

    @property
    def text(self) -> str:
        """The whole description as plain text, paragraphs separated by a blank line."""
        parts = (self.courses, self.basis, self.record, self.distances, self.caution)
        return "\n\n".join(parts) + "\n"

    def as_dict(self) -> dict[str, Any]:
        """Each paragraph under its name, and how it was written (plain JSON values)."""
        return {
            "north": self.north,
            "adjustment": self.adjustment,
            "unit": self.unit,
            "courses": self.courses,
            "basis_of_bearings": self.basis,
            "record": self.record,
            "distances": self.distances,
            "caution": self.caution,
            "text": self.text,
        }


def _dms(value: float, positive: str, negative: str) -> str:
    from .bearings import format_declination

    text = format_declination(abs(value), precision=0.01 / 3600.0)
    return f"{text.rstrip(' EW')} {positive if value >= 0 else negative}"


def _when(conv: DocumentConversion, which: str) -> str:
    if which == "record":
        if conv.record_date is not None:
            return conv.record_date.isoformat()
        return "an undated record" if conv.record_year is None else f"{conv.record_year:g}"
    return conv.target_date.isoformat() if conv.target_date else f"{conv.target_year:g}"


def _distance(metres: float, ru: RecordUnit, bracket: RecordUnit | None, decimals: int) -> str:
    main = length_text(metres, ru, decimals)
    if bracket is None or bracket.unit == ru.unit:
        return main
    return f"{main} ({length_text(metres, bracket, decimals)})"


def _call_end(note: str | None, last_of_closed: bool) -> str:
    """What a course runs to: the call's own words, or the place of beginning."""
    note = (note or "").strip().rstrip(";,.")
    if last_of_closed:
        if not note or _TO_BEGINNING.match(note):
            return " to the place of beginning"
        rest = re.sub(r"^\s*to\s+", "", note, flags=re.I)
        return f" to {rest}, the place of beginning"
    if not note:
        return ""
    return f" {note}" if _LEADING_TO.match(note) else f" to {note}"


def _beginning(conv: DocumentConversion) -> str:
    p0 = conv.stations[0]
    unit = "m" if abs(conv.grid_unit_m - 1.0) < 1e-12 else "grid units"
    how = "as measured" if conv.place_by_grid else "as given in the document"
    return (
        f"Beginning at the point of beginning of the record, latitude "
        f"{_dms(p0.lat, 'N', 'S')}, longitude {_dms(p0.lon, 'E', 'W')} (WGS84), easting "
        f"{p0.easting:,.3f} {unit} and northing {p0.northing:,.3f} {unit} in {conv.crs} "
        f"({how})"
    )


def _basis(conv: DocumentConversion, north: str, rotation_deg: float) -> str:
    from .bearings import format_declination
    from .grid import projected_crs

    first = conv.courses[0]
    d2 = first.declination_target_deg
    if north == "grid":
        name = projected_crs(conv.crs).name
        return (
            f"Bearings are referred to grid north of {conv.crs} ({name}) at the point of "
            f"beginning, where the grid convergence is "
            f"{format_declination(first.convergence_deg, precision=1 / 3600)} "
            "(grid = true − convergence); the record's bearings are turned by "
            f"{format_declination(rotation_deg, precision=1 / 3600)} onto it."
        )
    if north == "true":
        return (
            "Bearings are referred to true (geodetic) north at the point of beginning; the "
            "record's bearings are turned by "
            f"{format_declination(rotation_deg, precision=1 / 3600)} onto it."
        )
    sigma = first.declination_target_sigma_deg
    sig = f" (±{sigma:.2f}°, 1σ)" if sigma is not None else " (no uncertainty published)"
    return (
        f"Bearings are referred to magnetic north on {_when(conv, 'target')} at the point of "
        f"beginning, the declination there being {format_declination(d2)} from "
        f"{conv.target_model}{sig}; a compass disturbed by local attraction reads otherwise."
    )


def _record(conv: DocumentConversion) -> str:
    from .bearings import format_declination

    doc = conv.document
    what = doc.title or conv.file or "the document"
    first = conv.courses[0]
    if conv.declination_source == "stated":
        stated = format_declination(conv.stated_declination_deg)
        dec = f"the declination stated in the record, {stated}"
    elif conv.declination_source == "model":
        dec = (
            f"the declination of {conv.record_model} there on that date, "
            f"{format_declination(first.declination_record_deg)}"
        )
    else:
        dec = "no declination"
    read = f"read from {conv.reference} north"
    return (
        f"The calls retraced are those of the record as written in {what}, dated "
        f"{_when(conv, 'record')}, with bearings {read}"
        + (f", converted with {dec}" if conv.reference == "magnetic" else "")
        + (
            f"; field model for the target date: {conv.target_model}"
            if conv.declination_source != "model"
            else f"; field model(s): {conv.model_label}"
        )
        + ". The document's calls are the record's; "
        "this description restates them and adds nothing found on the ground."
    )


def _distances(
    conv: DocumentConversion, clo: Any, ru: RecordUnit, bracket: RecordUnit | None
) -> str:
    foot = {"us": "US survey feet", "international": "international feet"}
    size = f"1 {ru.unit} = {ru.metres:.10g} m"
    if ru.foot and ru.unit != "ft":
        size += f", from {foot[ru.foot]}"
    text = f"Distances are horizontal ground distances in {ru.name} ({size})"
    if bracket is not None and bracket.unit != ru.unit:
        text += f", with {bracket.name} in brackets"
    text += "."
    if clo.closed and clo.misclosure_m is not None:
        mis = length_text(clo.misclosure_m, ru, 2)
        prec = "" if clo.precision is None else f", 1:{clo.precision:,.0f}"
        if clo.adjustment == "none":
            text += f" The figure is as recorded, not balanced (misclosure {mis}{prec})."
        else:
            text += (
                f" The figure has been balanced by the {clo.adjustment} rule "
                f"(misclosure before balancing {mis}{prec})."
            )
    elif not clo.closed:
        text += " The line is open (it does not return to its beginning)."
    return text


def write_description(
    conv: DocumentConversion,
    *,
    north: DescriptionNorth = "true",
    adjust: str | None = None,
    unit: str | None = None,
    bracket: str | None = "m",
    bearing_precision: str = "minute",
    decimals: int = 2,
) -> Description:
    """Write the new description of a converted document (see the module notes).

    ``north``: ``"true"``, ``"grid"`` or ``"magnetic"`` (at the target date). ``adjust``: as
    :func:`geo.survey.close_document`. ``unit``: the unit of the distances (default the record
    unit); ``bracket``: a second unit in brackets (default metres; ``None`` for none).
    ``bearing_precision``: ``"minute"`` or ``"second"``; ``decimals``: decimals of the
    distances (for chains: of a chain). Raises InputError for an unknown choice or a record
    with no known declination (true and grid north then cannot be given), and what
    :func:`geo.survey.close_document` raises.
    """
    from .angles import normalize_azimuth
    from .bearings import format_bearing
    from .survey import close_document

    if north not in ("true", "grid", "magnetic"):
        raise InputError(f"unknown north {north!r}: use grid, true or magnetic", field="north")
    if bearing_precision not in BEARING_PRECISIONS:
        raise InputError(
            f"unknown bearing precision {bearing_precision!r}: use minute or second",
            field="bearing_precision",
        )
    if not 0 <= decimals <= 6:
        raise InputError(f"decimals {decimals} is outside 0..6", field="decimals")
    ru = conversion_unit(conv, unit)
    second = None if bracket is None else conversion_unit(conv, bracket)
    clo = close_document(conv, adjust=adjust, north="grid" if north == "grid" else "true")
    turn = -conv.courses[0].declination_target_deg if north == "magnetic" else 0.0
    step = BEARING_PRECISIONS[bearing_precision]
    closed = bool(conv.document.closed)
    parts = [_beginning(conv)]
    last = len(clo.courses)
    for c, cc in zip(clo.courses, conv.courses, strict=True):
        az = float(normalize_azimuth(c.adjusted_azimuth_deg + turn))
        parts.append(
            f"thence {format_bearing(az, precision=step)}, "
            f"{_distance(c.adjusted_length_m, ru, second, decimals)}"
            + _call_end(cc.recorded.call_note, closed and c.index == last)
        )
    text = "; ".join(parts)
    if clo.area is not None:
        text += f", containing {area_text(clo.area.ground_m2, ru, clo.area.acres)}, more or less."
    elif closed:
        text += (
            ". No area is stated: "
            + (clo.notes[-1] if clo.notes else "the figure encloses none")
            + "."
        )
    else:
        text += "."
    return Description(
        courses=text,
        basis=_basis(conv, north, clo.rotation_deg + turn),
        record=_record(conv),
        distances=_distances(conv, clo, ru, second),
        caution=CAUTIONS,
        north=north,
        adjustment=clo.adjustment,
        unit=ru.unit,
    )
