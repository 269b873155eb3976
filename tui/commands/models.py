"""``lodeline models``: list the field models; ``lodeline models add PATH [--name NAME]``.

The list shows every model (shipped and installed by the user) with its validity interval,
maximum degree and source. ``add`` validates a model file (SHC, WMM COF or the gufm1 text
format) and installs a byte-identical copy in the user data directory
(``$LODELINE_DATA``, else ``$XDG_DATA_HOME/lodeline``, else ``~/.local/share/lodeline``).
"""

from __future__ import annotations

import argparse
import sys


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``models`` subcommand."""
    p = subparsers.add_parser(
        "models",
        help="list the geomagnetic field models, or install one ('models add FILE')",
        description=(
            "List every field model lodeline can use, with its interval, degree and source. "
            "'lodeline models add FILE [--name NAME]' checks a model file (SHC, WMM COF or the "
            "gufm1 text format) and installs it for later use by name."
        ),
    )
    sub = p.add_subparsers(dest="models_action", metavar="ACTION")
    add = sub.add_parser("add", help="validate a model file and install it")
    add.add_argument("path", metavar="PATH", help="model file (.shc, .COF, or gufm1 text)")
    add.add_argument("--name", help="name to choose it by (default: from the file name)")
    add.set_defaults(func=run)
    p.set_defaults(func=run)


def _listing() -> str:
    from lodeline.geo.errors import LodelineError
    from lodeline.geo.models import AUTO, DEFAULT_MODEL, available_models, data_dir, model_header

    rows = [("name", "interval", "degree", "source")]
    problems = []
    for info in available_models():
        try:
            model = model_header(info)  # the header only: a listing reads no whole file
        except LodelineError as err:
            problems.append(f"  unreadable: {err}")
            continue
        source = f"{info.title}, {info.publisher}" if info.shipped else f"{info.title}, {info.path}"
        rows.append((info.name, f"{model.start:.1f}-{model.end:.1f}", str(model.nmax), source))
    widths = [max(len(r[i]) for r in rows) for i in range(3)]
    lines = [
        "  ".join(cell.ljust(widths[i]) for i, cell in enumerate(r[:3])) + "  " + r[3] for r in rows
    ]
    lines.append("")
    lines.append(
        f"'{AUTO}' uses {DEFAULT_MODEL} from 1900-01-01 to 2029-12-31 and an installed "
        "historical model (such as gufm1) for earlier dates."
    )
    lines.append(f"User models are kept in {data_dir() / 'models'}.")
    lines.extend(problems)
    return "\n".join(lines) + "\n"


def run(args) -> int:
    """Run ``lodeline models`` or ``lodeline models add``."""
    if getattr(args, "models_action", None) == "add":
        from lodeline.geo.models import install_model, load_model

        info = install_model(args.path, name=args.name)
        model = load_model(info)
        print(
            f"installed '{info.name}' ({model.title}, degree {model.nmax}, "
            f"{model.start:.1f}-{model.end:.1f}) as {info.path}"
        )
        print(f"use it with --model {info.name}, or let 'auto' choose it for its dates")
        return 0
    sys.stdout.write(_listing())
    return 0
