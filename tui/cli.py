"""The ``lodeline`` command line.

Exit status: 0 on success, 2 on bad input (one line on stderr, no traceback), 1 on an
internal failure. ``lodeline`` with no arguments opens the terminal application on a new
document. Subcommand modules live in :mod:`tui.commands`; this module imports none of
Textual, numpy or pyproj at start-up.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence
from typing import NoReturn

from lodeline.geo import __version__

#: Subcommands, in the order ``--help`` lists them: (name, module under tui.commands).
SUBCOMMANDS: list[tuple[str, str]] = [
    ("field", "field"),
    ("models", "models"),
    ("open", "open"),
    ("read", "read"),
    ("convert", "convert"),
    ("report", "report"),
    ("close", "close"),
    ("fit", "fit"),
    ("stakeout", "stakeout"),
    ("export", "export"),
    ("found", "found"),
    ("describe", "describe"),
    ("layout", "layout"),
]

EPILOG = (
    "Not a legal boundary: original monuments and evidence control; local law and licensed "
    "practice decide. Field models omit local anomalies."
)


class _OneLineParser(argparse.ArgumentParser):
    """An argument parser whose errors are one line on stderr (exit 2), without the usage."""

    def error(self, message: str) -> NoReturn:
        self.exit(2, f"{self.prog}: {message} (see '{self.prog} --help')\n")


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    """Build the argument parser with every registered subcommand (``only``: with that one
    alone, for a command line that names it: the other modules are not imported)."""
    parser = _OneLineParser(
        prog="lodeline",
        description="Magnetic, true and grid bearings for deeds and compass cruise lines.",
        epilog=EPILOG,
    )
    parser.add_argument("--version", action="version", version=f"lodeline {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, module in SUBCOMMANDS:
        if only is not None and name != only:
            continue
        importlib.import_module(f".commands.{module}", __package__).register(subparsers)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``lodeline`` console script; returns the exit status.

    ``argv`` ``None`` is the program's own run (the arguments of ``sys.argv``; the process
    ends right after, see :func:`_freeze_for_exit`); a list is a call from Python (tests),
    which gets its collector back as it was."""
    _one_blas_thread()
    from lodeline.geo.errors import LodelineError

    args_list = list(sys.argv[1:] if argv is None else argv)
    if not args_list and any(name == "open" for name, _ in SUBCOMMANDS):
        args_list = ["open"]
    named = args_list[0] if args_list and args_list[0] in dict(SUBCOMMANDS) else None
    parser = build_parser(only=named)
    args = parser.parse_args(args_list)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    from .commands.common import StandardOutput

    stdout = sys.stdout = StandardOutput(sys.stdout)
    collector = _one_shot_collector() if args.command != "open" else None
    try:
        status = int(args.func(args) or 0)
        stdout.flush()  # a write that fails here is the command's failure too
        return status
    except LodelineError as err:
        print(f"lodeline {args.command}: {err}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("lodeline: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # the reader has gone (| head -1): nothing more to say
        stdout.silence()
        return 0
    except Exception as err:  # an internal failure: short message, status 1
        print(
            f"lodeline {args.command}: internal error: {type(err).__name__}: {err}",
            file=sys.stderr,
        )
        if "LODELINE_DEBUG" in __import__("os").environ:
            raise
        return 1
    finally:
        sys.stdout = stdout._stream
        if collector is not None and argv is None:
            _freeze_for_exit()
        elif collector is not None:
            _restore_collector(collector)


#: The variables that set the thread count of the BLAS numpy may be built with.
BLAS_THREAD_VARIABLES = ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


def _one_blas_thread() -> None:
    """Run numpy's BLAS on one thread, unless the user's environment says otherwise; to take
    effect it must come before numpy is imported (child processes inherit it).

    lodeline's matrix products are many medium-sized ones (the field synthesis), which a
    multi-threaded BLAS makes slower, not faster (``geo.synthesis`` limits it to one thread
    for large batches in any case); and OpenBLAS's worker threads, started as numpy is
    imported, spin for about 0.13 s of CPU time in every process, time taken from the other
    core where ``field --csv`` and ``close --summary`` run their helpers."""
    import os

    for name in BLAS_THREAD_VARIABLES:
        os.environ.setdefault(name, "1")


#: The cyclic garbage collector's thresholds for a command that runs once and ends.
ONE_SHOT_GC_THRESHOLDS = (10_000, 50, 1_000_000)


def _one_shot_collector() -> tuple[int, int, int]:
    """Set the garbage collector for a command that runs once and ends (every command but
    the desk, ``open``); returns the thresholds to restore.

    Such a command builds its whole result in memory (a document of 50,000 courses is millions
    of objects), and Python's collector passes over all of them each time they grow by a
    quarter: a sixth of ``convert --json`` on 50,000 courses went to those full passes
    (measured with ``gc.callbacks``). What the imports made is frozen (never garbage), full
    passes are put off until the command ends, and young passes, which free the short-lived
    cycles, run every 10,000 new objects. Memory is freed by reference counting as before."""
    import gc

    before = gc.get_threshold()
    gc.freeze()
    gc.set_threshold(*ONE_SHOT_GC_THRESHOLDS)
    return before


def _freeze_for_exit() -> None:
    """End the program's own run of a one-shot command (``main()`` called without
    arguments, as the ``lodeline`` command and ``python -m lodeline`` call it; the process
    ends right after): what is left is frozen, so the interpreter's last full pass of the
    collector, made as it shuts down, does not walk every object the command kept (half a
    second after a 50,000-course ``convert --json``, against 0.06 s for the rest of the
    shutdown). Objects are still freed as the modules are; the outputs were written and
    closed by then (every file goes through :mod:`geo.atomic`, standard output is flushed
    above)."""
    import gc

    gc.freeze()


def _restore_collector(thresholds: tuple[int, int, int]) -> None:
    """Undo :func:`_one_shot_collector` (a process that calls :func:`main` again, as tests
    do, gets its own collector back)."""
    import gc

    gc.unfreeze()
    gc.set_threshold(*thresholds)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
