"""``lodeline layout BOUNDARY --bearing … --spacing … --plots … --out LINES.toml``.

Writes the parallel cruise lines that fall inside a boundary document, with their plots, as a
document of its own (:func:`geo.layout.lay_out_cruise` gives the method). The file is written
atomically and an existing one is replaced only with ``--force``.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from .common import add_target_options

HELP = "design a systematic cruise: parallel lines and plots across a boundary"


def register(subparsers: Any) -> None:
    """Add the ``layout`` subcommand."""
    p = subparsers.add_parser(
        "layout",
        help=HELP,
        description=(
            "Lay parallel cruise lines across a closed boundary document at a baseline "
            "bearing and line spacing, with plots at a plot spacing along each line, and "
            "write them as a traverse document (one course per line, offsets between lines)."
        ),
    )
    p.add_argument("boundary", metavar="BOUNDARY", help="closed boundary document (.toml/.json)")
    p.add_argument("--bearing", required=True, help='baseline bearing, e.g. "N 10 E"')
    p.add_argument(
        "--north",
        choices=("magnetic", "true", "grid"),
        default="magnetic",
        help="north of --bearing and of the written calls (default magnetic, at the target date)",
    )
    p.add_argument("--spacing", required=True, help='distance between lines, e.g. "10 chains"')
    p.add_argument("--plots", required=True, help='distance between plots, e.g. "5 chains"')
    p.add_argument(
        "--first",
        help="distance of the first plot from the start of each line (default half --plots)",
    )
    add_target_options(p)
    p.add_argument("--out", required=True, metavar="LINES.toml", help="document to write")
    p.add_argument("--force", action="store_true", help="replace LINES.toml if it exists")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Convert the boundary, lay the lines out and write the document."""
    import sys

    from lodeline.geo.document import dumps_document, load_document
    from lodeline.geo.errors import DocumentError, OutputExistsError
    from lodeline.geo.layout import lay_out_cruise
    from lodeline.geo.north import convert_document

    from .common import write_file

    out = Path(args.out)
    if out.suffix.lower() not in (".toml", ".json"):
        raise DocumentError("a traverse document ends in .toml or .json", file=str(out))
    if out.exists() and not args.force:
        raise OutputExistsError(
            "exists; not overwritten (give --force to replace it)", file=str(out)
        )
    doc = load_document(args.boundary)
    conv = convert_document(doc, file=args.boundary, target_date=args.target_date, model=args.model)
    lines = lay_out_cruise(
        conv,
        bearing=args.bearing,
        spacing=args.spacing,
        plot_spacing=args.plots,
        north=args.north,
        first=args.first,
    )
    fmt = "json" if out.suffix.lower() == ".json" else "toml"
    write_file(out, dumps_document(lines, fmt), force=args.force)
    count = sum(1 for c in lines.course if (c.note or "").startswith("line "))
    print(f"wrote {out}: {count} line{'s' if count != 1 else ''}, {len(lines.course)} courses")
    sys.stdout.flush()
    return 0
