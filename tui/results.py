"""From the edited document to what the desk shows: one core call per panel, formatted.

:func:`compute_results` takes the TOML-shaped mapping the workspace holds and returns the rows
of the call table, the text of each findings panel (or the one-line error of the core function
behind it), and the figure for the sketch. Every number comes from :mod:`geo`; this module only
chooses what to ask, and writes the answers as text. Nothing here raises for bad input: a
problem becomes a row mark and message, or a panel error.

Courses that do not read are kept as typed and marked ``✗`` with the parser's message. The
conversion runs on the courses before the first such course (their stations do not depend on
later courses); the rest wait, and the closure waits for every course.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from lodeline.geo.errors import DocumentError, LodelineError, ModelRangeError

from .widgets.call_table import CallRow
from .widgets.sketch import NorthMark, SketchFigure
from .workspace import course_call_text, distance_unit_of, is_blank_course

MARK_BAD = "✗"
MARK_CAUTION = "!"
MARK_BLANK = "…"


@dataclass(frozen=True)
class PanelText:
    """The text of one findings panel: lines, or an error, or an idle explanation."""

    lines: tuple[str, ...] = ()
    error: str | None = None
    idle: bool = False


@dataclass
class Results:
    """Everything the desk shows for one state of the document."""

    rows: list[CallRow]
    panels: dict[str, PanelText]
    sketch: SketchFigure | None = None
    sketch_message: str = ""
    invalid_settings: set[str] = field(default_factory=set)
    crs_hint: str = ""
    problem_count: int = 0
    document: Any = None
    conversion: Any = None
    #: Table row of each document course (blank rows are not part of the document).
    kept: list[int] = field(default_factory=list)
    #: 0-based document course of the first call that does not read, if any.
    first_bad: int | None = None
    #: True when every panel holds its final text (the closure stage has run).
    final: bool = False


#: How the desk asks for the conversion: a magnetic record whose declination at the record
#: date is not known keeps its recorded bearings (see geo.north.convert_document).
_CONVERT: dict[str, Any] = {"allow_unknown_declination": True}

#: The findings panels, in the order the desk shows them.
PANEL_KEYS = ("field", "grid", "closure", "attraction", "fit")


def _idle(text: str) -> PanelText:
    return PanelText((text,), idle=True)


def _panel(fn: Callable[[], PanelText]) -> PanelText:
    """Run one panel's core call; its error (never a traceback) becomes the panel's text."""
    try:
        return fn()
    except LodelineError as err:
        return PanelText(error=str(err))
    except (ImportError, AttributeError) as err:
        return PanelText(error=f"not available in this build: {err}")


def _length_text(value: float, unit: str) -> str:
    shown = f"{value:.4f}".rstrip("0").rstrip(".")
    return f"{shown} {unit}"


def _deg(value: float | None, precision: float = 1.0 / 60.0) -> str:
    from lodeline.geo.bearings import format_declination

    if value is None or not math.isfinite(value):
        return "—"
    return format_declination(value, precision=precision)


#: Plain row and blank flag of each course mapping seen last, by identity (and the
#: document's distance unit): the workspace shares untouched courses between edits, so a
#: keystroke builds one new row, not all.
_PLAIN_CACHE: dict[int, tuple[Mapping[str, Any], str | None, CallRow, bool]] = {}


def _plain_row(course: Mapping[str, Any], unit: str | None) -> tuple[CallRow, bool]:
    """The row of ``course`` before any computation, and whether the course is blank."""
    hit = _PLAIN_CACHE.get(id(course))
    if hit is not None and hit[0] is course and hit[1] == unit:  # the entry holds the mapping
        return hit[2], hit[3]
    blank = is_blank_course(course)
    row = CallRow(
        MARK_BLANK if blank else "",
        course_call_text(course, unit),
        "",
        "",
        "",
        "",
        "",
        str(course.get("back", "")),
        "empty: type a call (blank courses are not saved)" if blank else "",
    )
    _PLAIN_CACHE[id(course)] = (course, unit, row, blank)
    return row, blank


def _plain(courses: list[Mapping[str, Any]], unit: str | None) -> tuple[list[CallRow], list[bool]]:
    """Rows and blank flags of ``courses``; the cache keeps only these courses' entries once
    it holds more than a few documents' worth."""
    pairs = [_plain_row(c, unit) for c in courses]
    if len(_PLAIN_CACHE) > 4 * len(courses) + 1000:
        keep = {id(c) for c in courses}
        for key in [k for k in _PLAIN_CACHE if k not in keep]:
            del _PLAIN_CACHE[key]
    return [row for row, _ in pairs], [blank for _, blank in pairs]


def plain_rows(data: Mapping[str, Any]) -> list[CallRow]:
    """The rows of the table before any computation: calls as typed, blank rows marked."""
    return _plain(list(data.get("course") or []), distance_unit_of(data))[0]


def compute_results(data: Mapping[str, Any], *, path: Path | None = None) -> Results:
    """Compute and format everything the desk shows for document ``data`` (both stages)."""
    return closure_stage(conversion_stage(data, path=path))


def conversion_stage(data: Mapping[str, Any], *, path: Path | None = None) -> Results:
    """The first stage: check the document, convert every course (one vectorised
    :func:`geo.north.convert_document`), and the field, grid and sketch. The closure panels
    say they are being computed; :func:`closure_stage` fills them."""
    from lodeline.geo.document import document_from_dict, document_problems

    file = path.name if path else None
    raw = list(data.get("course") or [])
    rows, blanks = _plain(raw, distance_unit_of(data))
    kept = [i for i, blank in enumerate(blanks) if not blank]  # course k -> row kept[k]
    clean = {**data, "course": [raw[i] for i in kept]}
    results = Results(rows=rows, panels={})
    results.kept = kept

    def fail_all(message: str) -> Results:
        for key in PANEL_KEYS:
            results.panels[key] = PanelText(error=message)
        place_grid = _panel(lambda: _place_grid_panel(data))
        if place_grid.lines:  # the grid of the place does not wait for the record
            results.panels["grid"] = place_grid
        results.sketch_message = message
        results.final = True
        return results

    def mark(k: int, err: LodelineError) -> None:
        """Mark document course ``k`` (0-based) with ``err``'s message."""
        where = f"'{err.field}': " if err.field and err.field != "call" else ""
        rows[kept[k]] = replace(
            rows[kept[k]], mark=MARK_BAD, message=f"{MARK_BAD} {where}{err.message}"
        )

    # Courses the schema refuses (an empty call, a negative distance...) are marked, every one,
    # and left out of the check of the rest; a refused setting stops everything.
    remaining = list(range(len(clean["course"])))  # document courses still in the check
    refused: list[int] = []
    while True:
        try:
            checked = document_from_dict(
                {**clean, "course": [clean["course"][k] for k in remaining]},
                file=file,
                check=False,
            )
        except LodelineError as err:
            results.problem_count += 1
            if err.course is None or not 1 <= err.course <= len(remaining):
                if err.field:
                    results.invalid_settings.add(err.field)
                return fail_all(str(err))
            k = remaining.pop(err.course - 1)
            mark(k, err)
            refused.append(k)
            continue
        break
    # Every course that reads is converted, those after a course that does not read too
    # (placed as if it were absent); the closure and the sketch wait for every course.
    from lodeline.geo.north import convert_document

    try:
        # the common case: everything reads, and the conversion parses every course itself
        conv = None if refused else convert_document(checked, file=file, **_CONVERT)
        first_error: LodelineError | None = None
    except LodelineError as err:
        conv, first_error = None, err
    unread: set[int] = set()  # document courses that do not read
    if conv is None:
        problems = document_problems(checked, file=file)
        for err in problems:
            if err.course is not None:
                k = remaining[err.course - 1]
                mark(k, err)
                unread.add(k)
            elif err.field:
                results.invalid_settings.add(err.field)
        results.problem_count += len(problems)
        record_problems = [e for e in problems if e.course is None]
        if record_problems:
            return fail_all(str(record_problems[0]))
        bad = set(refused) | unread
        try:
            if not bad:
                assert first_error is not None
                raise first_error
            usable = checked.model_copy(
                update={
                    "course": [c for p, c in enumerate(checked.course) if remaining[p] not in bad]
                }
            )
            conv = convert_document(usable, file=file, **_CONVERT)
        except LodelineError as err:
            located = isinstance(err, DocumentError) and err.course is not None
            if located and not bad and 1 <= err.course <= len(remaining):
                mark(remaining[err.course - 1], err)
            if err.field and err.course is None:
                results.invalid_settings.add(err.field)
            results.problem_count = max(results.problem_count, 1)
            return fail_all(str(err))
    good = [k for k in remaining if k not in unread]  # conv.courses[j] is course good[j]
    first_bad = min(set(refused) | unread) if (refused or unread) else None
    results.first_bad = first_bad
    results.conversion = conv
    results.document = conv.document
    results.crs_hint = _crs_hint(conv.document)
    bad_before = False  # a course that does not read lies between here and the last bearing
    last_bad = 0
    by_course = dict(zip(good, conv.courses, strict=True))
    for k in range(len(clean["course"])):
        c = by_course.get(k)
        if c is None:
            if k in refused or k in unread:
                bad_before, last_bad = True, k
            continue
        row = kept[k]
        if c.recorded.bearing_text is not None:
            bad_before = False
        elif bad_before:  # an angle turned from a course that does not read: it waits
            rows[row] = replace(
                rows[row],
                message=f"waits: its angle is turned from course {kept[last_bad] + 1}'s line,"
                " which does not read yet",
            )
            continue
        caution = bool(c.warnings)
        message = ("! " + "; ".join(c.warnings)) if caution else ""
        if first_bad is not None and k > first_bad:
            placed = (
                f"placed as if course {kept[first_bad] + 1} were absent until it reads "
                "(D and γ taken there)"
            )
            message = f"{message}; {placed}" if message else placed
        rows[row] = CallRow(
            MARK_CAUTION if caution else "",
            rows[row].call,
            _length_text(c.length_value, c.length_unit),
            c.bearing.magnetic_record or "—",
            c.bearing.true or "—",
            c.bearing.grid or "—",
            c.bearing.magnetic_target or "—",
            rows[row].back,
            message,
        )
    results.panels["field"] = _panel(lambda: _field_panel_cached(conv))
    results.panels["grid"] = _panel(lambda: _grid_panel(conv))
    if results.first_bad is not None:
        bad = f"course {kept[results.first_bad] + 1} does not read yet; the closure waits for it"
        for key in ("closure", "attraction", "fit"):
            results.panels[key] = _idle(bad)
        results.final = True
    else:
        for key in ("closure", "attraction", "fit"):
            results.panels[key] = _idle("computing…")
    before = len(good) if first_bad is None else sum(1 for k in good if k < first_bad)
    results.sketch, results.sketch_message = _sketch(conv, before)
    if first_bad is not None and results.sketch is not None:
        results.sketch_message = f"drawn up to course {kept[first_bad]}"
        # a figure cut short at a course that does not read has no misclosure to draw: the gap
        # back to the beginning would be the courses not yet read, not an error of the survey
        results.sketch = replace(results.sketch, closed=False)
    return results


def closure_stage(results: Results) -> Results:
    """The second stage: closure, local attraction and fit of a converted document
    (:func:`geo.survey.close_document`, :func:`geo.survey.fit_document`)."""
    if results.final or results.conversion is None:
        results.final = True
        return results
    conv = results.conversion
    panels = dict(results.panels)
    try:
        closure = _closure(conv)
    except LodelineError as err:
        panels["closure"] = panels["attraction"] = PanelText(error=str(err))
    else:
        panels["closure"] = _panel(lambda: _closure_panel(closure, conv))
        stated = conv.document.record.attraction_tolerance
        panels["attraction"] = _panel(lambda: _attraction_panel(closure, stated))
    panels["fit"] = _panel(lambda: _fit_panel(conv))
    return replace(results, panels=panels, final=True)


def _crs_hint(doc: Any) -> str:
    from lodeline.geo.grid import utm_crs_for

    place = doc.place
    if place.lat is None:
        return ""
    try:
        zone = utm_crs_for(lat=place.lat, lon=place.lon)
    except LodelineError:
        return ""
    if doc.grid is not None and doc.grid.crs:
        return f"UTM zone of the place: {zone}"
    return f"none given: using {zone} (UTM zone of the place)"


# -- panels ----------------------------------------------------------------------------------


#: The field panel shown last and what it was computed from (see :func:`_field_panel_cached`).
_FIELD_CACHE: list[tuple[tuple[Any, ...], PanelText]] = []


def _field_panel_cached(conv: Any) -> PanelText:
    """:func:`_field_panel`, reused while its inputs stay the same: the point of beginning,
    dates, models, height and the stated declination, and the declinations the conversion
    found at the point of beginning (so a change of the model files shows too). A keystroke
    in a course changes none of these."""
    pob = conv.stations[0]
    doc = conv.document
    first = conv.courses[0] if conv.courses else None
    key = (
        pob.lat,
        pob.lon,
        conv.height_m,
        conv.record_year,
        str(conv.record_date),
        conv.target_year,
        str(conv.target_date),
        conv.declination_source,
        conv.stated_declination_deg,
        doc.record.model,
        doc.target.model if doc.target is not None else "auto",
        None if first is None else first.declination_record_deg,
        None if first is None else first.declination_target_deg,
    )
    if _FIELD_CACHE and _FIELD_CACHE[0][0] == key:
        return _FIELD_CACHE[0][1]
    panel = _field_panel(conv)
    _FIELD_CACHE[:] = [(key, panel)]
    return panel


def _field_panel(conv: Any) -> PanelText:
    """The field at the point of beginning at both dates (geo.magnetic.field_at)."""
    from lodeline.geo.magnetic import field_at

    pob = conv.stations[0]
    doc = conv.document
    lines: list[str] = []
    dates: list[tuple[str, float, str]] = []
    if conv.record_year is not None and conv.declination_source != "stated":
        dates.append(
            (f"record {conv.record_date or conv.record_year}", conv.record_year, doc.record.model)
        )
    target_model = conv.target_model_query  # the conversion's (it follows the record's)
    dates.append((f"target {conv.target_date or conv.target_year}", conv.target_year, target_model))
    if conv.declination_source == "stated":
        lines.append(f"record: D {_deg(conv.stated_declination_deg)} stated")
    for label, year, model in dates:
        try:
            f = field_at(lat=pob.lat, lon=pob.lon, year=year, height_m=conv.height_m, model=model)
        except ModelRangeError as err:
            if label.startswith("record") and _unknown_declination(conv):
                lines.append(f"{label}: ⚠ no field model covers this date")
                lines.append("  D unknown: state it, add a model or fit it from found corners")
            else:
                lines.append(f"{label}: ⚠ {err.message}")
            continue
        except LodelineError as err:
            lines.append(f"{label}: ⚠ {err.message}")
            continue
        name = f.model if isinstance(f.model, str) else ", ".join(dict.fromkeys(f.model))
        d = float(np.asarray(f.declination_deg))
        sigma = float(np.asarray(f.declination_sigma_deg))
        sig = f"±{sigma:.2f}° 1σ" if math.isfinite(sigma) else "(no σ published)"
        rate = float(np.asarray(f.declination_rate_deg_per_year)) * 60.0
        lines.append(f"{label} · {name}")
        lines.append(f"  D {_deg(d)} {sig}")
        lines.append(f"  dD/dt {rate:+.1f}′/yr")
        lines.append(
            f"  I {float(np.asarray(f.inclination_deg)):+.2f}°"
            f"  H {float(np.asarray(f.horizontal_nT)):,.0f} nT"
        )
        lines.append(
            f"  Z {float(np.asarray(f.down_nT)):,.0f}  F {float(np.asarray(f.total_nT)):,.0f} nT"
        )
        warns = f.warnings if isinstance(f.warnings, tuple | list) else ()
        flat = [w for w in warns if isinstance(w, str)] or [
            w for item in warns if isinstance(item, tuple | list) for w in item
        ]
        lines += [f"  ! {w}" for w in flat]
    lines.append("Models omit local anomalies.")
    return PanelText(tuple(lines))


def _grid_panel(conv: Any) -> PanelText:
    """Grid convergence and factors at the point of beginning (from the conversion)."""
    if not conv.courses:
        pob = conv.stations[0]
        return _grid_lines(conv.crs, pob.lat, pob.lon, conv.height_m)
    c = conv.courses[0]
    return _grid_text(conv.crs, c.convergence_deg, c.scale_factor, c.elevation_factor)


def _grid_text(crs: str, gamma: float, k: float, elevation: float) -> PanelText:
    return PanelText(
        (
            f"{crs}",
            f"γ {_deg(gamma, 1.0 / 3600.0)}",
            "  (grid = true − γ)",
            f"k {k:.7f}",
            f"elevation {elevation:.7f}",
            f"combined {k * elevation:.7f}",
        )
    )


def _grid_lines(crs: str, lat: float, lon: float, height_m: float) -> PanelText:
    """Grid convergence and factors at one place (geo.grid.grid_factors)."""
    from lodeline.geo.grid import grid_factors

    f = grid_factors(crs, lat=lat, lon=lon, height_m=height_m)
    return _grid_text(
        crs, float(f.convergence_deg), float(f.scale_factor), float(f.elevation_factor)
    )


def _place_grid_panel(data: Mapping[str, Any]) -> PanelText:
    """The grid at the place of a document whose record stops the conversion: empty when the
    place itself is not yet given as numbers (the document check names what is missing)."""
    from lodeline.geo.grid import to_geographic, utm_crs_for

    place = data.get("place") if isinstance(data.get("place"), Mapping) else {}
    grid = data.get("grid") if isinstance(data.get("grid"), Mapping) else {}
    crs = grid.get("crs") if isinstance(grid.get("crs"), str) and grid.get("crs") else None
    height = place.get("height_m", 0.0)
    numbers = [place.get(k) for k in ("lat", "lon", "easting", "northing")] + [height]
    if not all(
        v is None or (isinstance(v, int | float) and not isinstance(v, bool)) for v in numbers
    ):
        return PanelText()
    lat, lon, easting, northing = numbers[:4]
    if lat is not None and lon is not None:
        crs = crs or utm_crs_for(lat=float(lat), lon=float(lon))
    elif easting is not None and northing is not None and crs:
        lat, lon = to_geographic(crs, easting=float(easting), northing=float(northing))
    else:
        return PanelText()
    return _grid_lines(crs, float(lat), float(lon), float(height))


def _unknown_declination(conv: Any) -> bool:
    """True for a magnetic record whose declination at the record date is not known (no model
    covers the date and none is stated): only what does not depend on it is computed."""
    return conv.reference == "magnetic" and conv.declination_source is None


def _closure(conv: Any) -> Any:
    """The closure of the converted document (geo.survey.close_document), in true north, or
    in magnetic north of the record date when the declination then is not known."""
    from lodeline.geo.survey import close_document

    return close_document(conv, north="magnetic" if _unknown_declination(conv) else "true")


def _closure_panel(closure: Any, conv: Any = None) -> PanelText:
    """Misclosure, precision and area from the closure; with the conversion, the lengths in
    the record unit too and the area in acres, roods and perches for a perch or chain deed."""
    from lodeline.geo.measures import acres_roods_perches, conversion_unit, length_text, uses_roods

    ru = None if conv is None else conversion_unit(conv)

    def rec(metres: float) -> list[str]:
        """The length in the record unit on a line of its own ("  = 20 ch 6 lk"): the panel
        is narrow, and a wrapped "0 ch 6 / lk" reads as another length."""
        return [] if ru is None or ru.metric else [f"  = {length_text(metres, ru)}"]

    if not closure.closes_on:
        return PanelText(
            (
                "open traverse (closed = false): no misclosure or area",
                f"length {closure.perimeter_m:,.2f} m",
                *rec(closure.perimeter_m),
            ),
            idle=True,
        )
    lines = [f"perimeter {closure.perimeter_m:,.2f} m", *rec(closure.perimeter_m)]
    if closure.closes_on == "found end":
        lines.append(f"closes on the found end (station {len(closure.courses)})")
    if closure.misclosure_bearing is None:
        lines.append("misclosure 0 m (closes exactly)")
    else:
        lines.append(f"misclosure {closure.misclosure_m:,.3f} m")
        lines += rec(closure.misclosure_m)
        north = "magnetic, record date" if closure.north == "magnetic" else closure.north
        lines.append(f"  toward {closure.misclosure_bearing} ({north})")
        lines.append(f"precision 1:{closure.precision:,.0f}")
    area = closure.area
    if area is not None:
        lines.append(f"area {area.acres:,.3f} acres")
        if ru is not None and uses_roods(ru):
            lines.append(f"  {acres_roods_perches(area.ground_m2, ru.foot).text}")
        lines.append(f"  {area.hectares:,.4f} ha")
        lines.append(f"  {area.ground_m2:,.1f} m² ground")
        lines.append(f"  {area.grid_m2:,.1f} m² grid")
        lines.append(f"  adjusted by the {closure.adjustment} rule")
    if closure.crossing is not None:
        a, b = closure.crossing
        lines.append(f"! courses {a} and {b} cross: no area")
    if closure.angles is not None:
        lines.append(f"angular misclosure {closure.angles.misclosure_deg * 3600:+.0f}″")
    lines += [
        f"found {g.index}: gap {g.gap_m:.2f} m ({g.gap_record:.2f} {g.unit}) {g.bearing or ''}"
        for g in closure.found_gaps
    ]
    lines += [f"note: {n}" for n in closure.notes]
    return PanelText(tuple(lines))


def _attraction_panel(closure: Any, stated_tolerance: float | None = None) -> PanelText:
    """Fore and back bearings compared at each station, from the closure, in plain words.
    ``stated_tolerance``: the document's record.attraction_tolerance (degrees), if given."""
    from lodeline.geo.bearings import format_declination

    la = closure.attraction
    if la is None:
        return _idle("no back bearings in the document")
    minutes = la.tolerance_deg * 60.0
    why = (
        "as set in the job form"
        if stated_tolerance is not None
        else "the precision the bearings are written to; the job form can set it"
    )
    lines = [f"tolerance {minutes:.4g}′ ({why})"]
    k = la.start_course
    if la.start_is_free:
        lines.append(f"course {k} is taken as undisturbed: its fore and back bearings agree")
    else:
        lines.append(
            f"no course's fore and back bearings agree: corrections are relative to course {k}"
        )
    for st in la.stations:
        if st.disturbed and st.correction_deg is not None:
            lines.append(
                f"! station {st.station} disturbed:"
                f" add {format_declination(st.correction_deg, precision=1.0 / 60.0)}"
            )
    if not la.disturbed_stations:
        lines.append(f"no station off by more than {minutes:.4g}′")
    unreached = [str(st.station) for st in la.stations if st.correction_deg is None]
    if unreached:
        lines.append(
            f"no correction for station {', '.join(unreached)}: no back bearing links it "
            "to the undisturbed course"
        )
    return PanelText(tuple(lines))


def _fit_panel(conv: Any) -> PanelText:
    """The record-to-found fit (geo.survey.fit_document)."""
    from lodeline.geo.survey import fit_document, found_count

    found = found_count(conv)
    if found < 2:
        return _idle(f"needs found positions on two or more stations ({found} given)")
    fit = fit_document(conv)
    lines = [
        f"rotation {fit.rotation_deg:+.4f}° (record → grid)",
        f"scale {fit.scale:.6f}" + (" (exact: 2 stations)" if fit.exact else ""),
        f"rms {fit.rms_m:.3f} m over {len(fit.residuals)} stations",
    ]
    if fit.empirical_declination_deg is not None:
        lines.append(f"empirical D {_deg(fit.empirical_declination_deg)}")
    if fit.model_declination_deg is not None:
        lines.append(f"model D {_deg(fit.model_declination_deg)} ({fit.model})")
    if fit.record_length_factor is not None:
        lines.append(f"record length factor {fit.record_length_factor:.5f}")
    from .retrace_view import survey_date_line

    when = survey_date_line(conv, fit)
    if when:
        lines.append(when)
    lines += [f"  station {r.index}: {r.east_m:+.2f} E {r.north_m:+.2f} N m" for r in fit.residuals]
    lines += [f"note: {n}" for n in fit.notes]
    return PanelText(tuple(lines))


# -- sketch ----------------------------------------------------------------------------------


def _when(day: Any, year: float | None) -> str:
    """The year of a date for the sketch's key ("" when there is no date)."""
    if day is not None:
        return str(day.year)
    return "" if year is None else f"{year:.1f}"


def _sketch(conv: Any, upto: int | None = None) -> tuple[SketchFigure | None, str]:
    """Stations in grid metres from the point of beginning, grid north up, and the norths;
    with no declination known at the record date, the recorded figure in ground metres,
    magnetic north of the record date up (true and grid north cannot be placed). ``upto``:
    draw only the first so many courses (those before a course that does not read)."""
    courses = conv.courses if upto is None else conv.courses[:upto]
    if not courses:
        return None, "no courses yet: the sketch follows the first call"
    if _unknown_declination(conv):
        from lodeline.geo.traverse import march

        st = march([c.recorded.azimuth_deg for c in courses], [c.length_m for c in courses])
        when = _when(conv.record_date, conv.record_year)
        up = NorthMark("M", f"magnetic {when} (record; D unknown)", 0.0)
        figure = SketchFigure(
            np.asarray(st.east_m),
            np.asarray(st.north_m),
            bool(conv.document.closed),
            (up,),
            up=f"magnetic north of {when}",
        )
        return figure, ""
    unit = conv.grid_unit_m
    e0, n0 = conv.stations[0].easting, conv.stations[0].northing
    stations = conv.stations[: len(courses) + 1]
    east = np.array([s.easting - e0 for s in stations]) * unit
    north = np.array([s.northing - n0 for s in stations]) * unit
    first = conv.courses[0]
    gamma = first.convergence_deg
    norths = [
        NorthMark("G", "grid north (up)", 0.0),
        NorthMark("T", f"true north, γ {_deg(gamma)}", -gamma),
    ]
    if first.declination_record_deg is not None:
        d1 = first.declination_record_deg
        when = _when(conv.record_date, conv.record_year) or "of the record (stated)"
        norths.append(NorthMark("M", f"magnetic {when}, D {_deg(d1)}", d1 - gamma))
    d2 = first.declination_target_deg
    when2 = _when(conv.target_date, conv.target_year)
    norths.append(NorthMark("m", f"magnetic {when2}, D {_deg(d2)}", d2 - gamma))
    return SketchFigure(east, north, bool(conv.document.closed), tuple(norths)), ""


# -- unforeseen failures ---------------------------------------------------------------------


def error_log_path() -> Path:
    """The file unforeseen failures of the desk are written to: ``errors.log`` beside the
    recovery folder (``$LODELINE_STATE/errors.log``, else the user's state folder)."""
    from .workspace import recovery_dir

    return recovery_dir().parent / "errors.log"


def log_failure(err: BaseException, what: str) -> Path | None:
    """Append ``err``'s traceback to :func:`error_log_path` under a heading naming ``what``
    was being done; return the file (``None`` when it cannot be written)."""
    import datetime as _dt
    import traceback

    path = error_log_path()
    stamp = _dt.datetime.now().isoformat(timespec="seconds")
    text = "".join(traceback.format_exception(type(err), err, err.__traceback__))
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        with path.open("a", encoding="utf-8") as log:
            log.write(f"--- {stamp} while {what}\n{text}\n")
    except OSError:
        return None
    return path


def failure_text(err: BaseException, log: Path | None) -> str:
    """One line for the user about an unforeseen failure and where its details are."""
    where = f"details in {log}" if log is not None else "the log file could not be written"
    return (
        f"unforeseen failure ({type(err).__name__}: {err}); {where}. "
        "Nothing typed is lost: editing goes on."
    )


def failed_results(data: Mapping[str, Any], err: BaseException) -> Results:
    """What the desk shows when computing the findings failed for a reason nobody foresaw:
    the calls as typed, and the failure (logged) in every panel."""
    message = failure_text(err, log_failure(err, "computing the findings"))
    try:
        rows = plain_rows(data)
    except Exception:  # the document itself is not shaped as expected
        rows = []
    results = Results(rows=rows, panels={k: PanelText(error=message) for k in PANEL_KEYS})
    results.sketch_message = "no sketch: the findings could not be computed"
    results.problem_count = 1
    results.final = True
    return results


def compute_safely(stage: Callable[[], Results], data: Mapping[str, Any]) -> tuple[Results, bool]:
    """``stage()``, or :func:`failed_results` when it raises; and whether it succeeded."""
    try:
        return stage(), True
    except Exception as err:  # shown and logged, never raised into the desk
        return failed_results(data, err), False
