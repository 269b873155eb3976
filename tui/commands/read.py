"""``lodeline read DESCRIPTION.txt``: a legal description as written -> a traverse document.

Reads the description (see :mod:`geo.description`), prints each course as read beside the
words it came from, and writes the document to ``--out`` (refusing to overwrite without
``--force``) or, with no ``--out``, prints it as TOML on stdout (the courses as read then go
to stderr). A course that does not read is refused with the unread words marked, and nothing
is written. The point of beginning's coordinates and the grid come from the command line; left
out, the document is written without them, marked, to be completed in the desk. A date, unit,
variation or vara stated in the text is used unless the command line gives one.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

HELP = "read a legal description (Beginning at ..., thence ...) into a traverse document"


def register(subparsers: Any) -> None:
    """Add the ``read`` subcommand."""
    p = subparsers.add_parser(
        "read",
        help=HELP,
        description=(
            "Read a metes-and-bounds description as written: 'Beginning at ...', every "
            "'thence' course, the stated area, date and variation. Prints each course as read "
            "beside its words and writes a traverse document (TOML on stdout without --out)."
        ),
    )
    p.add_argument("description", metavar="DESCRIPTION.txt", help="the description, as text")
    p.add_argument("--out", metavar="DOC.toml", help="write the document here (.toml or .json)")
    p.add_argument("--force", action="store_true", help="overwrite an existing --out file")
    p.add_argument("--lat", type=float, help="latitude of the point of beginning (degrees)")
    p.add_argument("--lon", type=float, help="longitude of the point of beginning (degrees)")
    p.add_argument("--crs", help="projected CRS of the job (default: the UTM zone of the place)")
    p.add_argument("--date", metavar="YYYY-MM-DD", help="date of the survey (default: stated)")
    p.add_argument(
        "--reference",
        choices=("magnetic", "true", "grid"),
        help="north the bearings refer to (default: as stated, else magnetic)",
    )
    p.add_argument("--unit", help="unit of a distance written without one (default: as stated)")
    p.add_argument(
        "--foot", choices=("us", "international"), help="the foot (default: by the survey date)"
    )
    p.add_argument(
        "--vara-inches",
        metavar="INCHES|texas|california",
        help="length of the vara (default: as stated; required when varas occur)",
    )
    p.set_defaults(func=run)


def _read_text(path: str) -> str:
    from lodeline.geo.errors import InputError

    try:
        raw = open(path, "rb").read()  # noqa: SIM115 - read at once
    except OSError as exc:
        raise InputError(f"{path}: cannot be read: {exc.strerror or exc}") from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{path}: is not UTF-8 text (byte {exc.start})") from None


def _foot(args: argparse.Namespace, date: str | None) -> str | None:
    from lodeline.geo.errors import LodelineError
    from lodeline.geo.units import choose_foot

    try:
        return choose_foot(args.foot, date).foot
    except LodelineError:
        return None


def document_data(desc: Any, args: argparse.Namespace, foot: str | None) -> dict[str, Any]:
    """The mapping of the traverse document written for ``desc`` and the options."""
    from lodeline.geo.document import FORMAT_VERSION

    place: dict[str, Any] = {}
    if args.lat is not None or args.lon is not None:
        place.update({"lat": args.lat, "lon": args.lon})
    if desc.beginning:
        place["description"] = desc.beginning
    record: dict[str, Any] = {"reference": args.reference or desc.reference or "magnetic"}
    date = args.date or desc.date
    for key, value in (
        ("date", date),
        ("declination", desc.declination),
        ("distance_unit", args.unit or desc.unit),
        ("foot", args.foot or (foot if date is None else None)),
        ("vara_inches", args.vara_inches or desc.vara_inches),
        ("area", desc.area),
    ):
        if value is not None:
            record[key] = value
    data: dict[str, Any] = {"format_version": FORMAT_VERSION}
    if desc.title:
        data["title"] = desc.title
    data.update({"closed": desc.closed, "place": place})
    if args.crs:
        data["grid"] = {"crs": args.crs}
    data["record"] = record
    data["course"] = [{"call": c.call_text} for c in desc.courses]
    return data


def echo(desc: Any) -> str:
    """The courses as read, each beside the words it came from, and the stated facts."""
    from lodeline.geo.description import read_form

    from .common import text_table

    lines = []
    if desc.beginning:
        lines.append(f"point of beginning: {desc.beginning}")
    rows = [["#", "words", "read as"]]
    for c in desc.courses:
        rows.append([str(c.index), c.source, read_form(c.call)])
    lines += text_table(rows, right={0})
    for what, words in desc.clauses:
        lines.append(f"{what}: {words}")
    if desc.closed:
        lines.append("the last course returns to the beginning: a closed figure")
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    """Read the description, print the courses as read, write (or print) the document."""
    from lodeline.geo.description import read_description, stated_facts
    from lodeline.geo.document import document_from_dict, dumps_document, dumps_mapping
    from lodeline.geo.errors import LodelineError, ParseError

    from .common import write_output

    text = _read_text(args.description)
    date = args.date or stated_facts(text).get("date")
    foot = _foot(args, date)
    vara = args.vara_inches
    try:
        desc = read_description(text, default_unit=args.unit, foot=foot, vara_inches=vara)
    except ParseError as err:
        if foot is None and "foot" in err.message:
            raise ParseError(f"{err.message} (give --foot, or --date)") from None
        raise
    data = document_data(desc, args, foot)
    fmt = "json" if (args.out or "").lower().endswith(".json") else "toml"
    problem = None
    try:
        out = dumps_document(document_from_dict(data, file=args.out), fmt)
    except LodelineError as err:
        problem = err
        out = dumps_mapping(data, fmt)
        if fmt == "toml" and "lat" not in data["place"]:
            out = out.replace(
                "[place]\n",
                "[place]\n# lat = ... and lon = ...: the point of beginning is not given yet "
                "(lodeline read --lat --lon, or the desk)\n",
                1,
            )
    to_stdout = args.out in (None, "-")
    shown = sys.stderr if to_stdout else sys.stdout
    shown.write(echo(desc))
    write_output(args.out, out, force=args.force)
    if problem is not None:
        print(f"lodeline read: the document is not complete yet: {problem}", file=sys.stderr)
    if not to_stdout:
        shown.write(f"wrote {args.out} ({len(desc.courses)} courses)\n")
    return 0
