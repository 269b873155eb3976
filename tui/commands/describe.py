"""``lodeline describe DOC``: the figure written as a new legal description.

The text comes from :func:`geo.deed_text.write_description` (see its module notes for the
method, the basis of bearings and the wording); this module only reads the options and writes
the text to stdout or ``--out`` (atomically; an existing file is replaced only with
``--force``). ``--json`` prints each paragraph under its name.
"""

from __future__ import annotations

import argparse
from typing import Any

from .common import (
    add_adjust_option,
    add_json_options,
    add_target_options,
    print_json,
    write_output,
)

HELP = "write the figure as a new legal description (basis of bearings, record, area)"


def register(subparsers: Any) -> None:
    """Add the ``describe`` subcommand."""
    p = subparsers.add_parser(
        "describe",
        help=HELP,
        description=(
            "Write the courses as a metes-and-bounds description: beginning at the point of "
            "beginning, thence each bearing and distance to its monument, to the place of "
            "beginning, containing the area; then what the bearings are referred to, the "
            "record and model the calls were converted with, the units, and the cautions."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    p.add_argument(
        "--north",
        choices=("grid", "true", "magnetic"),
        default="true",
        help="north the bearings are referred to (default true; magnetic = at the target date)",
    )
    add_adjust_option(p, "balancing of the figure")
    p.add_argument(
        "--unit",
        metavar="UNIT",
        help="unit of the distances (default: the record's unit, e.g. perch, chain, ft, vara, m)",
    )
    p.add_argument(
        "--bracket",
        metavar="UNIT|none",
        default="m",
        help="second unit written in brackets after each distance (default m; none for none)",
    )
    p.add_argument(
        "--bearings",
        choices=("minute", "second"),
        default="minute",
        help="precision of the bearings (default minute)",
    )
    p.add_argument(
        "--decimals",
        type=int,
        default=2,
        metavar="N",
        help="decimals of the distances, 0..6 (default 2; for chains, of a chain: 2 = links)",
    )
    add_target_options(p)
    p.add_argument("--out", metavar="FILE", help="write the text to FILE instead of stdout")
    p.add_argument("--force", action="store_true", help="replace FILE if it exists")
    add_json_options(p)
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Convert the document and write its description."""
    from pathlib import Path

    from lodeline.geo.deed_text import write_description
    from lodeline.geo.document import load_document
    from lodeline.geo.errors import OutputExistsError
    from lodeline.geo.north import convert_document

    if args.out and args.out != "-" and Path(args.out).exists() and not args.force:
        raise OutputExistsError(
            "exists; not overwritten (give --force to replace it)", file=args.out
        )
    doc = load_document(args.document)
    conv = convert_document(doc, file=args.document, target_date=args.target_date, model=args.model)
    bracket = None if args.bracket.strip().lower() == "none" else args.bracket
    desc = write_description(
        conv,
        north=args.north,
        adjust=args.adjust,
        unit=args.unit,
        bracket=bracket,
        bearing_precision=args.bearings,
        decimals=args.decimals,
    )
    if args.json:
        print_json(desc.as_dict(), pretty=args.pretty)
        return 0
    write_output(args.out, desc.text, force=args.force)
    return 0
