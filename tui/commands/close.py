"""``lodeline close DOC``: latitudes and departures, misclosure, adjustment, area, local attraction.

Every figure comes from :func:`geo.survey.close_document` (see its module docstring for the
method and sign conventions); this module only formats. ``--json`` prints
:meth:`geo.survey.SurveyClosure.as_dict`. Nothing is written.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

from .common import add_adjust_option, add_json_options

HELP = "misclosure, adjustment, area and local attraction of a traverse document"


def register(subparsers: Any) -> None:
    """Add the ``close`` subcommand."""
    p = subparsers.add_parser(
        "close",
        help=HELP,
        description=(
            "Latitudes and departures of each course, the misclosure and its direction, the "
            "precision, the compass- or transit-rule adjustment, the ground and grid area, the "
            "angular misclosure where angles are recorded and local attraction where back "
            "bearings are. Choosing another north turns the figure; no closure figure changes."
        ),
    )
    p.add_argument(
        "document",
        metavar="DOC",
        nargs="+",
        help="traverse document (.toml or .json); with --summary, any number of documents and "
        "folders (searched recursively for .toml and .json documents)",
    )
    add_adjust_option(p, "adjustment rule")
    p.add_argument(
        "--north",
        choices=("true", "grid", "magnetic"),
        default="true",
        help="north of the latitudes, departures and bearings (default true; magnetic = at the "
        "record date)",
    )
    add_json_options(p)
    p.add_argument(
        "--summary",
        metavar="OUT.csv",
        help="close every document and write one CSV row per document (figures, or the "
        "one-line error of a document that does not read); sorted by path",
    )
    p.add_argument(
        "--jobs",
        type=_jobs,
        metavar="N",
        help="with --summary: worker processes (default: the number of cores; 1 works in "
        "this process)",
    )
    p.add_argument("--force", action="store_true", help="with --summary: replace OUT.csv")
    p.set_defaults(func=run)


def _jobs(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        value = 0
    if not 1 <= value <= 512:
        raise argparse.ArgumentTypeError(f"{text!r}: give a whole number of processes, 1 to 512")
    return value


def _m(value: float, digits: int = 3) -> str:
    return f"{value:,.{digits}f}"


def _deg(value: float | None, digits: int = 4) -> str:
    return "-" if value is None else f"{value:+.{digits}f}"


def stated_area_line(check: Any) -> str:
    """One line comparing the deed's stated area with the computed ground area."""
    if check.problem is not None:
        return f"stated area {check.stated}: not compared ({check.problem})"
    return (
        f"stated area {check.stated} = {check.stated_m2:,.2f} m2; computed ground area "
        f"{check.computed_m2:,.2f} m2 differs by {check.difference_m2:+,.2f} m2 "
        f"({check.difference_pct:+.2f} % of the stated area)"
    )


def render(result: Any, title: str | None = None, conv: Any = None) -> str:
    """The human-readable closure of a :class:`geo.survey.SurveyClosure`; with the conversion
    ``conv``, lengths are given in the record unit beside metres, the area in acres, roods and
    perches for a perch or chain document, and the plot list and events follow."""
    from lodeline.geo.measures import area_text, conversion_unit, length_text

    from .common import text_table as table

    ru = None if conv is None else conversion_unit(conv)
    both = ru is not None and not ru.metric

    def rec(metres: float) -> list[str]:
        return [length_text(metres, ru)] if both else []

    lines: list[str] = []
    if title:
        lines.append(title)
    lines.append(
        f"north: {result.north} at the point of beginning (the marched figure turned "
        f"{result.rotation_deg:+.4f} deg from grid north); adjustment: {result.adjustment}; "
        "ground metres (the marched figure reduced by its mean combined factor "
        f"{result.combined_factor:.8f})" + (f"; also in {ru.name}" if both else "")
    )
    lines.append("")
    unit_head = [f"length ({ru.label})", f"latitude ({ru.label})", f"departure ({ru.label})"]
    rows = [["#", "bearing", "length", "latitude", "departure", "corr lat", "corr dep"]]
    if both:
        rows[0] += unit_head
    for c in result.courses:
        rows.append(
            [
                str(c.index),
                c.bearing,
                _m(c.length_m),
                _m(c.latitude_m),
                _m(c.departure_m),
                _m(c.latitude_correction_m),
                _m(c.departure_correction_m),
                *rec(c.length_m),
                *rec(c.latitude_m),
                *rec(c.departure_m),
            ]
        )
    lines += table(rows, right={0, 2, 3, 4, 5, 6, 7, 8, 9})
    perimeter = f" = {length_text(result.perimeter_m, ru)}" if both else ""
    lines.append(f"perimeter {_m(result.perimeter_m)} m{perimeter}")
    if result.closes_on:
        onto = (
            ""
            if result.closes_on == "beginning"
            else f" on the found end (station {len(result.courses)})"
        )
        if result.misclosure_bearing is None:
            lines.append(f"misclosure{onto} 0 m: the figure closes exactly")
        else:
            mis = f" = {length_text(result.misclosure_m, ru)}" if both else ""
            lines.append(
                f"misclosure{onto} {_m(result.misclosure_m)} m{mis} toward "
                f"{result.misclosure_bearing} "
                f"(azimuth {result.misclosure_azimuth_deg:.4f}); precision 1:"
                f"{result.precision:,.0f}"
            )
    lines.append("")
    adjusted = result.adjustment != "none"
    how = f"{result.adjustment} adjustment" if adjusted else "as recorded, not adjusted"
    lines.append(f"stations ({how}), metres from the point of beginning")
    head = ["adjusted bearing", "adjusted length"] if adjusted else ["bearing", "length"]
    rows = [["station", "north", "east", *head, "along m"]]
    if both:
        rows[0].append(f"along ({ru.label})")
    along = 0.0
    for s in result.stations:
        course = result.courses[s.index - 1] if s.index else None
        along += course.length_m if course else 0.0
        rows.append(
            [
                str(s.index),
                _m(s.north_m),
                _m(s.east_m),
                course.adjusted_bearing if course else "",
                _m(course.adjusted_length_m) if course else "",
                _m(along),
                *rec(along),
            ]
        )
    lines += table(rows, right={0, 1, 2, 4, 5, 6})
    area = result.area
    if area is not None:
        lines.append(
            f"ground area {area.ground_m2:,.2f} m2 = {area.hectares:,.4f} ha = "
            f"{area.acres:,.4f} acres ({area.foot} foot acre); grid area {area.grid_m2:,.2f} m2 "
            f"(combined factor {area.combined_factor:.8f})"
        )
        if ru is not None:
            lines.append(f"area: {area_text(area.ground_m2, ru, area.acres)}")
    check = _area_check(conv.document, result) if conv is not None else None
    if check is not None:
        lines.append(stated_area_line(check))
    lines += found_gap_lines(result.found_gaps)
    ang = result.angles
    if ang is not None:
        lines.append(
            f"angular misclosure: {ang.kind} angles sum {ang.measured_sum_deg:.4f} against "
            f"{ang.expected_sum_deg:.0f} deg: {ang.misclosure_deg:+.4f} deg, "
            f"{ang.correction_per_angle_deg:+.5f} deg to each angle"
        )
    att = result.attraction
    if att is not None:
        lines.append("")
        lines.append(
            f"local attraction (fore and back bearings; {att.reference_text()}; "
            f"tolerance {att.tolerance_deg * 60:.1f} min)"
        )
        rows = [["station", "correction deg", "state"]]
        for s in att.stations:
            state = (
                "not reached"
                if s.correction_deg is None
                else ("disturbed" if s.disturbed else ("free" if att.start_is_free else "ref"))
            )
            rows.append([str(s.station), _deg(s.correction_deg), state])
        lines += table(rows, right={0, 1})
        rows = [["course", "back - fore - 180", "corrected bearing (recorded north)"]]
        for c, d, b in zip(result.courses, att.discrepancy_deg, att.corrected_bearing, strict=True):
            rows.append([str(c.index), _deg(d), b or "-"])
        lines += table(rows, right={0, 1})
    if result.budget:
        last = result.budget[-1]
        term = result.declination_term
        if term == "unknown":
            dec = ", declination uncertainty unknown (none published or stated)"
        elif term == "not applicable":
            dec = " (no declination enters a true or grid record)"
        else:
            dec = f", declination +-{result.declination_sigma_deg:.3f} deg ({term})"
        total = (
            f"; last station +-{last.total_m:.2f} m (1 sigma)"
            if last.total_m is not None
            else f"; last station +-{last.bearing_m:.2f} m from the bearings alone, the "
            "declination term unknown"
        )
        lines.append(f"error budget: bearings +-{result.bearing_sigma_deg:.3f} deg{dec}{total}")
    if conv is not None:
        lines += along_lines(conv, result.adjustment)
    return finish(lines, result.notes)


def found_gap_lines(gaps: Any) -> list[str]:
    """The table of gaps at found stations (geo.retrace.FoundGap), or nothing."""
    from .common import text_table as table

    if not gaps:
        return []
    unit = gaps[0].unit
    rows = [["station", "gap m", f"gap {unit}", "east m", "north m", "gap toward (grid)"]]
    for g in gaps:
        rows.append(
            [
                str(g.index),
                f"{g.gap_m:.3f}",
                f"{g.gap_record:.3f}",
                f"{g.east_m:+.3f}",
                f"{g.north_m:+.3f}",
                g.bearing or "-",
            ]
        )
    head = "found stations: found minus marched position (grid, record courses as converted)"
    return ["", head, *table(rows, right={0, 1, 2, 3, 4})]


def along_lines(conv: Any, adjust: str | None = None) -> list[str]:
    """The plot list and the events of ``conv`` as text tables (nothing when it has neither),
    placed on the figure of ``adjust`` (see :func:`geo.along.plot_list`)."""
    from lodeline.geo.along import EVENT_HEADERS, PLOT_HEADERS, event_rows, plot_list, plot_rows

    from .common import text_table

    al = plot_list(conv, adjust=adjust)
    figure = "unadjusted line" if al.adjustment == "none" else f"{al.adjustment}-adjusted figure"
    lines: list[str] = []
    if al.plots:
        lines += [
            "",
            f"plot list ({len(al.plots)} plots on the {figure}; chainage record unit / metres)",
        ]
        lines += text_table([list(PLOT_HEADERS), *map(list, plot_rows(al))], right={0, 1, 2, 3})
    if al.events:
        lines += ["", f"along the lines (on the {figure})"]
        lines += text_table([list(EVENT_HEADERS), *map(list, event_rows(al))], right={0, 3, 4})
    return lines


def finish(lines: list[str], notes: tuple[str, ...]) -> str:
    """Close a human-readable output: its notes, then the one-line caution."""
    from lodeline.geo.cautions import SHORT_CAUTION

    lines += [f"note: {note}" for note in notes]
    lines.append(SHORT_CAUTION)
    return "\n".join(lines) + "\n"


def emit(
    args: argparse.Namespace,
    compute: Any,
    render_result: Any,
    *,
    allow_unknown_declination: bool = False,
    extra_json: Any = None,
    with_conversion: bool = False,
) -> int:
    """Load and convert ``args.document``, compute a result from the conversion and print it
    (``--json``: its ``as_dict()``; else ``render_result(result, title)``).

    ``allow_unknown_declination``: see :func:`geo.north.convert_document` (the fit and the
    closure in magnetic north need no declination at the record date). ``extra_json(conv,
    result)`` gives keys merged into the JSON object (:func:`geo.measures.merge_record_values`);
    ``with_conversion`` passes the conversion to ``render_result`` as a third argument."""
    from lodeline.geo.document import load_document
    from lodeline.geo.north import convert_document

    from .common import print_json

    doc = load_document(args.document)
    conv = convert_document(
        doc, file=args.document, allow_unknown_declination=allow_unknown_declination
    )
    result = compute(conv)
    if args.json:
        obj = result.as_dict()
        if extra_json is not None:
            from lodeline.geo.measures import merge_record_values

            obj = merge_record_values(obj, extra_json(conv, result))
        print_json(obj, pretty=args.pretty)
    elif with_conversion:
        sys.stdout.write(render_result(result, doc.title, conv))
    else:
        sys.stdout.write(render_result(result, doc.title))
    return 0


def _area_check(doc: Any, result: Any) -> Any:
    """The stated area (record.area) beside the computed ground area, or ``None``."""
    if doc.record.area is None:
        return None
    from lodeline.geo.description import compare_area

    area = result.area
    foot = area.foot if area is not None else doc.record.foot
    return compare_area(doc.record.area, area.ground_m2 if area else None, foot=foot)


def record_json(conv: Any, result: Any) -> dict[str, Any]:
    """What ``close --json`` adds: record-unit values, the plot list and the events."""
    from lodeline.geo.along import plot_list
    from lodeline.geo.measures import closure_record_values

    out = {
        **closure_record_values(conv, result),
        **plot_list(conv, adjust=result.adjustment).as_dict(),
    }
    check = _area_check(conv.document, result)
    if check is not None:
        out["stated_area"] = check.as_dict()
    return out


def run(args: argparse.Namespace) -> int:
    """Load, convert and close the document; print the closure or its JSON object. With
    ``--summary``, close every document named and write the summary CSV instead."""
    from lodeline.geo.errors import InputError
    from lodeline.geo.survey import close_document

    if args.summary is not None:
        return run_summary(args)
    if len(args.document) > 1:
        raise InputError("several documents are closed together with --summary OUT.csv")
    for option in ("jobs", "force"):
        if getattr(args, option):
            raise InputError(f"--{option} goes with --summary OUT.csv")
    args.document = args.document[0]
    return emit(
        args,
        lambda conv: close_document(conv, adjust=args.adjust, north=args.north),
        render,
        allow_unknown_declination=args.north == "magnetic",
        extra_json=record_json,
        with_conversion=True,
    )


def run_summary(args: argparse.Namespace) -> int:
    """Close every document of ``args.document`` (files and folders) and write the summary
    CSV all-or-nothing (see :mod:`tui.summary`). Exit 0 once it is written, also when some
    documents did not read; their count goes to stderr."""
    import os

    from lodeline.geo.atomic import check_targets
    from lodeline.geo.cautions import SHORT_CAUTION
    from lodeline.geo.errors import InputError

    from ..progress import Progress
    from ..summary import STATUS_OK, STATUS_UNREAD, find_documents, summarise, summary_csv
    from .common import write_file

    if args.json:
        raise InputError("--json and --summary: the summary is a CSV file, give one of them")
    paths = find_documents(args.document)
    if not paths:
        raise InputError("no .toml or .json documents in " + ", ".join(args.document), field="DOC")
    check_targets([args.summary], overwrite=args.force, inputs=paths)
    jobs = args.jobs or os.cpu_count() or 1
    with Progress(len(paths), unit="documents", description="closing") as bar:
        rows = summarise(
            paths, jobs=jobs, adjust=args.adjust, north=args.north, advance=bar.advance
        )
    write_file(args.summary, summary_csv(rows), force=args.force, inputs=tuple(paths))
    failed = sum(1 for r in rows if r.status != STATUS_OK)
    count = f"{len(rows)} document{'' if len(rows) == 1 else 's'}"
    sys.stdout.write(f"wrote {args.summary} ({count})\n")
    sys.stdout.write(SHORT_CAUTION + "\n")
    if failed:
        unread = sum(1 for r in rows if r.status == STATUS_UNREAD)
        sys.stderr.write(
            f"lodeline close: {failed} of {len(rows)} documents with problems "
            f"({unread} did not read); see the problems column of {args.summary}\n"
        )
    return 0
