"""``lodeline found DOC --from POINTS``: found corners from a receiver's point file.

Reading, matching and writing are :mod:`geo.point_files` and :mod:`geo.found_import`; this
module parses the options and lists what matched, what did not and what was refused.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

HELP = "write found corners into a document from a receiver's CSV, GeoJSON or GPX file"


def register(subparsers: Any) -> None:
    """Add the ``found`` subcommand."""
    p = subparsers.add_parser(
        "found",
        help=HELP,
        description=(
            "Read a point file (CSV with name, easting, northing or lat, lon; GeoJSON points; "
            "GPX waypoints), match each point to a corner by its name or number, or to the "
            "nearest marched station within a distance, and write the found positions into "
            "the document (atomically, the previous file kept as DOC.bak, comments kept). A "
            "point that matches two corners, two points on one corner and two points of one "
            "name are refused and listed."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    p.add_argument("--from", dest="points", metavar="POINTS", required=True,
                   help="point file: .csv, .geojson (.json) or .gpx")  # fmt: skip
    p.add_argument(
        "--crs",
        metavar="CRS",
        help="CRS of the file's easting/northing (default: the document's grid)",
    )
    p.add_argument(
        "--match",
        choices=("name", "nearest"),
        default="name",
        help="match by name or number (default), or by the nearest marched station",
    )
    p.add_argument(
        "--within",
        nargs="+",
        metavar="DISTANCE",
        default=["5", "m"],
        help="largest distance of a nearest match: '5 m' (default), '16 ft'",
    )
    p.add_argument("--dry-run", action="store_true", help="list the matches; write nothing")
    p.set_defaults(func=run)


def _within_m(words: list[str], foot: str | None) -> float:
    from lodeline.geo.calls import parse_distance
    from lodeline.geo.errors import InputError, LodelineError

    text = " ".join(words)
    try:
        return parse_distance(text, default_unit="m", foot=foot).metres
    except LodelineError as err:
        raise InputError(f"--within {text!r}: {err.message}", field="within") from None


def report_lines(plan: Any, *, wrote: bool) -> list[str]:
    """The lines that list a :class:`geo.found_import.FoundPlan`."""

    def point(p: Any) -> str:
        return f"{p.where}" + (f" '{p.name}'" if p.name else "")

    def value(v: dict[str, float]) -> str:
        return ", ".join(f"{k} = {x!r}" for k, x in v.items())

    lines = [f"matched {len(plan.matched)}:"]
    for m in plan.matched:
        was = "" if m.previous is None else f" (was {value(m.previous)})"
        lines.append(
            f"  course {m.course} <- {point(m.point)}: found = {{{value(m.found)}}}{was}; "
            f"{m.offset_m:.2f} m from the marched station"
        )
    for title, rows in (("not matched", plan.unmatched), ("refused", plan.refused)):
        if rows:
            lines.append(f"{title} {len(rows)}:")
            lines += [f"  {point(p)}: {why}" for p, why in rows]
    if not plan.matched:
        lines.append("nothing written")
    elif not wrote:
        lines.append("dry run: nothing written")
    return lines


def run(args: argparse.Namespace) -> int:
    """Read the document and the points, match them, write unless ``--dry-run``."""
    from lodeline.geo.cautions import SHORT_CAUTION
    from lodeline.geo.document import load_document
    from lodeline.geo.found_import import plan_found, save_found
    from lodeline.geo.north import convert_document
    from lodeline.geo.point_files import read_points

    doc = load_document(args.document)
    within = _within_m(args.within, doc.record.foot or "international")
    points = read_points(args.points, crs=args.crs)
    conv = convert_document(doc, file=args.document)
    plan = plan_found(conv, points, match=args.match, within_m=within, file=args.points)
    wrote = bool(plan.matched) and not args.dry_run
    if wrote:
        save_found(args.document, plan)
    for line in report_lines(plan, wrote=wrote):
        sys.stdout.write(line + "\n")
    if wrote:
        sys.stdout.write(f"wrote {args.document} (previous kept as {args.document}.bak)\n")
    sys.stdout.write(SHORT_CAUTION + "\n")
    return 0
