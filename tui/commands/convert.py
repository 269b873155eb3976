"""``lodeline convert DOC``: every course of a traverse document in all four north references.

Prints a table (course, call as written, distance in the document's unit and in metres, the
magnetic (record date), true, grid and magnetic (target date) bearings, D at both dates, the
grid convergence and the model's D uncertainty where one is published), or with ``--json``
one object (see :meth:`geo.north.DocumentConversion.as_dict`). Nothing is written.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

from .common import add_json_options, add_target_options, model_name, text_table

HELP = "convert the bearings of a traverse document between north references"


def register(subparsers: Any) -> None:
    """Add the ``convert`` subcommand."""
    p = subparsers.add_parser(
        "convert",
        help=HELP,
        description=(
            "Convert each course of a traverse document (TOML or JSON) to magnetic north at "
            "the record date, true north, grid north and magnetic north at a target date. "
            "D and the grid convergence are evaluated at each course's starting station."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    add_target_options(p)
    p.add_argument(
        "--record-model",
        metavar="NAME|auto",
        type=model_name,
        help="field model for the record date (default: the document's record.model)",
    )
    add_json_options(p)
    p.set_defaults(func=run)


def _deg(value: float | None, digits: int = 3) -> str:
    return "-" if value is None else f"{value:+.{digits}f}"


def _length(value: float) -> str:
    return f"{value:.4f}".rstrip("0").rstrip(".")


def render(conv: Any) -> str:
    """The human-readable conversion (header, course table, warnings, caution)."""
    from lodeline.geo.cautions import SHORT_CAUTION

    doc = conv.document
    lines: list[str] = []
    if doc.title:
        lines.append(doc.title)
    p0 = conv.stations[0]
    lines.append(
        f"point of beginning {p0.lat:.6f}, {p0.lon:.6f}  h {conv.height_m:g} m  "
        f"grid {conv.crs} (E {p0.easting:.3f}, N {p0.northing:.3f} {_unit_name(conv.crs)})"
    )
    rec_when = (
        conv.record_date.isoformat()
        if conv.record_date
        else (f"{conv.record_year:g}" if conv.record_year is not None else "none")
    )
    if conv.declination_source == "stated":
        d1 = f"stated declination {conv.stated_declination_deg:+.4f} deg"
    elif conv.declination_source == "model":
        d1 = f"model {conv.record_model}"
    else:
        d1 = "no declination"
    lines.append(f"record: {conv.reference} bearings, date {rec_when}, {d1}")
    t_when = conv.target_date.isoformat() if conv.target_date else f"{conv.target_year:g}"
    lines.append(f"target: magnetic at {t_when}, model {conv.target_model}")
    lines.append("")
    if not conv.courses:
        lines.append("(no courses)")
    else:
        from lodeline.geo.measures import conversion_unit, length_text

        ru = conversion_unit(conv)
        rows = [
            [
                "#",
                "call as written",
                "distance",
                f"in {ru.label}",
                "metres",
                "magnetic (record)",
                "true",
                "grid",
                "magnetic (target)",
                "D record",
                "D target",
                "gamma",
                "dD/dt",
                "D sigma",
            ]
        ]
        for c in conv.courses:
            unit = c.length_unit
            rows.append(
                [
                    str(c.index),
                    c.call,
                    f"{_length(c.length_value)} {unit}",
                    length_text(c.length_m, ru, 4 if ru.unit != "chain" else 2),
                    f"{c.length_m:.3f}",
                    c.bearing.magnetic_record or "-",
                    c.bearing.true,
                    c.bearing.grid,
                    c.bearing.magnetic_target,
                    _deg(c.declination_record_deg),
                    _deg(c.declination_target_deg),
                    _deg(c.convergence_deg, 4),
                    _rate(c.declination_target_rate_deg_per_year),
                    "none published"
                    if c.declination_target_sigma_deg is None
                    else f"{c.declination_target_sigma_deg:.3f}",
                ]
            )
        lines += text_table(rows, right={0, 2, 3, 4, 9, 10, 11, 12})
        lines.append("")
        lines.append(
            "D east positive (true = magnetic + D); gamma: true north to grid north, clockwise "
            "(grid = true - gamma); degrees. Combined factor at the point of beginning "
            f"{conv.courses[0].combined_factor:.8f}. dD/dt: yearly change of D at the target "
            "date, minutes of arc a year."
        )
        for c in conv.courses:
            if c.bearing_end is not None:
                lines.append(
                    f"course {c.index}: the line keeps its recorded bearing; magnetic (target) "
                    f"{c.bearing.magnetic_target} at its start, {c.bearing_end.magnetic_target} "
                    f"at its end (true {c.bearing.true} to {c.bearing_end.true})"
                )

        from .close import along_lines

        lines += along_lines(conv, "none")  # on the stations shown: the marched ones
    notes = list(conv.warnings)
    for c in conv.courses:
        notes += [f"course {c.index}: {w}" for w in c.warnings]
    for note in dict.fromkeys(notes):
        lines.append(f"note: {note}")
    lines.append(SHORT_CAUTION)
    return "\n".join(lines) + "\n"


def _rate(deg_per_year: float | None) -> str:
    return "-" if deg_per_year is None else f"{deg_per_year * 60:+.2f}′"


def _unit_name(crs: str) -> str:
    from lodeline.geo.grid import grid_unit_name

    return grid_unit_name(crs)


def run(args: argparse.Namespace) -> int:
    """Load the document, convert it and print the table or the JSON object."""
    from lodeline.geo.document import load_document
    from lodeline.geo.north import convert_document

    from .common import print_json

    doc = load_document(args.document)
    conv = convert_document(
        doc,
        file=args.document,
        target_date=args.target_date,
        model=args.model,
        record_model=args.record_model,
    )
    if args.json:
        from lodeline.geo.along import plot_list
        from lodeline.geo.measures import conversion_record_values, merge_record_values

        extra = {**conversion_record_values(conv), **plot_list(conv).as_dict()}
        print_json(merge_record_values(conv.as_dict(), extra), pretty=args.pretty)
    else:
        sys.stdout.write(render(conv))
    return 0
