"""``lodeline open [DOC]``: the terminal application on a traverse document.

``lodeline`` with no arguments opens it on its start screen (a new document, a file of the
current folder, or a shipped demo). Textual is imported only when
the command runs, so the other subcommands start without it.
"""

from __future__ import annotations

import argparse
from pathlib import Path


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``open`` subcommand."""
    parser = subparsers.add_parser(
        "open",
        help="edit a traverse in the terminal application",
        description=(
            "Open the terminal application on DOC (a .toml or .json traverse document; "
            "created on the first save if it does not exist), or on a new document. "
            "F1 in the application lists every key."
        ),
    )
    parser.add_argument("document", nargs="?", metavar="DOC", help="traverse document")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run the application until the user quits; return its exit status."""
    from ..app import LodelineApp, load_workspace

    workspace = load_workspace(Path(args.document) if args.document else None)
    app = LodelineApp(workspace, start=not args.document)
    status = app.run()
    if app.return_code:  # the application stopped on an error it did not foresee
        return app.after_crash()
    return int(status or 0)
