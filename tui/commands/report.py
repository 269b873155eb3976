"""``lodeline report DOC --out OUT.html|OUT.md [--force]``: the printable retracement report.

The format follows the extension of ``--out``: ``.html``/``.htm`` (self-contained, inline SVG
figures, print layout for A4 and Letter) or ``.md`` (GitHub-flavoured Markdown, the same
content without the figures). The file is written atomically and an existing one is replaced
only with ``--force``. The content is built by :mod:`geo.report`.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from .common import add_adjust_option, add_target_options, refuse_input_as_output, write_file

HELP = "write a printable retracement report (HTML or Markdown)"

#: Output extensions and the report format each one selects.
FORMATS = {".html": "html", ".htm": "html", ".md": "markdown"}


def register(subparsers: Any) -> None:
    """Add the ``report`` subcommand."""
    p = subparsers.add_parser(
        "report",
        help=HELP,
        description=(
            "Write a report of a traverse document to file: place, dates, model and "
            "declinations, the field at the point of beginning, a north-reference diagram and "
            "a sketch of the traverse (HTML), the courses in every north reference, closure, "
            "adjustment, area, local attraction, the record-to-found fit, and the cautions."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    p.add_argument(
        "--out",
        required=True,
        metavar="OUT.html|OUT.md",
        help="output file; .html or .htm for HTML, .md for Markdown",
    )
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    add_target_options(p)
    add_adjust_option(p, "adjustment of the figure")
    p.add_argument(
        "--paper",
        choices=("auto", "a4", "letter"),
        default="auto",
        help="page size named in the HTML's print layout (default auto: the printer's paper)",
    )
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Build the report and write it to ``--out``."""
    from lodeline.geo.document import load_document
    from lodeline.geo.errors import InputError, OutputError, OutputExistsError
    from lodeline.geo.report import build_report

    out = Path(args.out)
    fmt = FORMATS.get(out.suffix.lower())
    if fmt is None:
        raise InputError(
            f"cannot tell the report format from {out.suffix or 'no extension'!r}: "
            "use .html, .htm or .md",
            file=str(out),
        )
    refuse_input_as_output([out], [args.document])
    if out.is_dir():
        raise OutputError("cannot be written: it is a directory", file=str(out))
    if out.exists() and not args.force:  # refuse before any work is done
        raise OutputExistsError(
            "exists; not overwritten (give --force to replace it)", file=str(out)
        )
    doc = load_document(args.document)
    text = build_report(
        doc,
        fmt=fmt,
        file=args.document,
        target_date=args.target_date,
        model=args.model,
        adjust=args.adjust,
        paper=args.paper,
    )
    write_file(out, text, force=args.force, inputs=(args.document,))
    return 0
