"""``lodeline stakeout DOC``: the corners to set, and from which corner to run to each.

The corners come from :func:`geo.retrace.restore_document` (``--restore proportion`` or
``rotate-scale``), the lines from :func:`geo.stakeout.stakeout_list`; this module only
formats. ``--json`` prints the list and the restoration; ``--csv OUT`` writes one row a line.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

HELP = "stakeout list: bearing and distance from a found corner to each corner to set"


def register(subparsers: Any) -> None:
    """Add the ``stakeout`` subcommand."""
    p = subparsers.add_parser(
        "stakeout",
        help=HELP,
        description=(
            "Restore the lost corners from the found ones and list, for each corner restored "
            "or known by the record only, the line to run from the nearest found corner (or "
            "the previous corner): bearing in magnetic north of the target date, true and grid "
            "north, ground distance in the record's unit and metres, and the corner's grid "
            "coordinates and latitude/longitude."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    add_restore_option(p)
    p.add_argument(
        "--run-from",
        choices=("nearest", "previous"),
        default="nearest",
        help="run each line from the nearest found corner (default) or the previous corner",
    )
    from .common import add_target_options

    add_target_options(p)
    from .common import add_json_options

    add_json_options(p)
    p.add_argument("--csv", metavar="OUT", help="write the list as CSV to OUT ('-': stdout)")
    p.add_argument("--force", action="store_true", help="overwrite OUT if it exists")
    p.set_defaults(func=run)


def add_restore_option(parser: Any) -> None:
    """Add ``--restore proportion|rotate-scale``."""
    parser.add_argument(
        "--restore",
        choices=("proportion", "rotate-scale"),
        default="proportion",
        help="how lost corners are restored between found ones: the record's misclosure "
        "distributed in proportion to the record lengths (default), or the run turned and "
        "scaled onto its found ends",
    )


def corner_lines(restoration: Any) -> list[str]:
    """The corners of a :class:`geo.retrace.Restoration` as a text table."""
    from .common import text_table as table

    rows = [["corner", "status", "easting", "northing", "lat", "lon", "corner is"]]
    for c in restoration.corners:
        rows.append(
            [
                str(c.index),
                c.status_text,
                f"{c.easting:,.3f}",
                f"{c.northing:,.3f}",
                f"{c.lat:.7f}",
                f"{c.lon:.7f}",
                c.description or "",
            ]
        )
    out = [f"corners ({restoration.crs}; restoration: {restoration.method})"]
    out += table(rows, right={0, 2, 3, 4, 5})
    for r in restoration.runs:
        ratio = f"1:{r.precision:,.0f}" if r.precision else "closes exactly"
        out.append(
            f"run {r.start}-{r.end}: record {r.record_m:,.3f} m, found {r.measured_m:,.3f} m, "
            f"misclosure {r.misclosure_m:.3f} m ({ratio}); turn {r.rotation_deg:+.4f} deg, "
            f"scale {r.scale:.6f}"
        )
    return out


def render(result: Any, title: str | None = None) -> str:
    """The stakeout list (a :class:`StakeoutResult`) as text."""
    from .close import finish
    from .common import text_table as table

    sl = result.stakeout
    when = sl.target_date.isoformat() if sl.target_date else f"{sl.target_year:.2f}"
    lines = [title] if title else []
    lines += corner_lines(result.restoration)
    lines.append("")
    lines.append(
        f"stakeout (lines from the {sl.origin} corner; magnetic bearings at {when}, "
        f"{sl.target_model}; ground distances)"
    )
    rows = [["from", "to", "magnetic", "true", "grid", sl.unit_label, "metres"]]
    for ln in sl.lines:
        rows.append(
            [
                str(ln.start),
                str(ln.target),
                ln.magnetic_bearing or "-",
                ln.true_bearing,
                ln.grid_bearing,
                f"{ln.distance_record:.2f}",
                f"{ln.distance_m:.2f}",
            ]
        )
    lines += table(rows, right={0, 1, 5, 6})
    lines += [f"  {ln.reading}" for ln in sl.lines]
    return finish(lines, result.restoration.notes + sl.notes)


class StakeoutResult:
    """A restoration and its stakeout list, with the ``--json`` object."""

    def __init__(self, restoration: Any, stakeout: Any) -> None:
        self.restoration = restoration
        self.stakeout = stakeout

    def as_dict(self) -> dict[str, Any]:
        """``{"stakeout": ..., "restoration": ...}``."""
        return {"stakeout": self.stakeout.as_dict(), "restoration": self.restoration.as_dict()}


def run(args: argparse.Namespace) -> int:
    """Load, convert, restore and list; print the list, its JSON, or write its CSV."""
    from lodeline.geo.document import load_document
    from lodeline.geo.north import convert_document
    from lodeline.geo.retrace import restore_document
    from lodeline.geo.stakeout import stakeout_list

    from .common import print_json, write_output

    doc = load_document(args.document)
    conv = convert_document(doc, file=args.document, target_date=args.target_date, model=args.model)
    restoration = restore_document(conv, method=args.restore)
    result = StakeoutResult(restoration, stakeout_list(conv, restoration, origin=args.run_from))
    if args.csv is not None:
        write_output(args.csv, result.stakeout.csv_text(), force=args.force)
        if args.csv == "-":
            return 0
    if args.json:
        print_json(result.as_dict(), pretty=args.pretty)
    elif args.csv is None:
        sys.stdout.write(render(result, doc.title))
    return 0
