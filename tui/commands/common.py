"""Helpers shared by the subcommands: JSON output, output files, number formatting."""

from __future__ import annotations

import json
import math
import os
import sys
from typing import Any


def to_jsonable(value: Any) -> Any:
    """Turn numpy scalars/arrays, tuples and NaN into plain JSON values (NaN -> null)."""
    try:
        import numpy as np
    except ImportError:  # pragma: no cover - numpy is a dependency
        np = None
    if np is not None:
        if isinstance(value, np.ndarray):
            return [to_jsonable(v) for v in value.tolist()]
        if isinstance(value, np.generic):
            value = value.item()
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [to_jsonable(v) for v in value]
    return value


def _plain(value: Any) -> Any:
    """``default`` of the fast JSON encoding: a numpy scalar or array, or a float subclass,
    as a plain value."""
    if hasattr(value, "tolist"):  # numpy arrays and scalars
        return value.tolist()
    if isinstance(value, float):
        return float(value)
    raise TypeError(f"not JSON: {type(value).__name__}")


def _compact_json(obj: Any, *, newline: bool = False) -> bytes | None:
    """``obj`` as one line of UTF-8 JSON written by orjson (compiled; the same shortest
    round-trip digits as Python's ``repr`` of each float, NaN and infinities as null, about
    six times the standard library's speed on a long document's output), with a final
    newline if asked; ``None`` for what orjson refuses (an integer beyond 64 bits, a key
    that is not text). orjson writes an exponent as ``1e-5`` where ``json`` writes
    ``1e-05``: the same number to every JSON reader."""
    import orjson

    option = orjson.OPT_SERIALIZE_NUMPY | (orjson.OPT_APPEND_NEWLINE if newline else 0)
    try:
        return orjson.dumps(obj, default=_plain, option=option)
    except TypeError:  # orjson.JSONEncodeError is a TypeError
        return None


def json_text(obj: Any, *, pretty: bool = False) -> str:
    """``obj`` as JSON text (numpy values plain, NaN and infinities as null), on one compact
    line (no space after ``:`` and ``,``; see :func:`_compact_json`), or indented by two
    spaces with ``pretty``. What orjson refuses goes through :func:`to_jsonable` and the
    standard library."""
    if not pretty:
        data = _compact_json(obj)
        if data is not None:
            return data.decode()
    indent = 2 if pretty else None
    return json.dumps(to_jsonable(obj), indent=indent, ensure_ascii=False, allow_nan=False)


def print_json(obj: Any, *, pretty: bool = False) -> None:
    """Print ``obj`` as JSON on stdout (see :func:`json_text`), one write.

    The one-line JSON of a standard output that encodes UTF-8 goes to its byte buffer as
    orjson wrote it (a long document's 50 MB are then neither decoded to text nor encoded
    again: a fifth of a second of a 50,000-course ``convert --json``)."""
    out = sys.stdout
    encoding = getattr(out, "encoding", None)
    if not pretty and hasattr(out, "buffer") and encoding and _is_utf8(encoding):
        data = _compact_json(obj, newline=True)
        if data is not None:
            if isinstance(out, StandardOutput):
                out.write_bytes(data)  # guarded: a full device is one line, exit 2
            else:
                write_bytes(out, data)
            return
    out.write(json_text(obj, pretty=pretty) + "\n")


def write_bytes(stream: Any, data: bytes) -> None:
    """Write ``data`` to the byte buffer of the text stream ``stream``, after the text
    written to it before (flushed first)."""
    stream.flush()
    stream.buffer.write(data)
    stream.buffer.flush()


def _is_utf8(encoding: str) -> bool:
    import codecs

    try:
        return codecs.lookup(encoding).name == "utf-8"
    except LookupError:
        return False


def add_json_options(parser: Any, help: str = "print one JSON object") -> None:
    """Add ``--json`` and ``--pretty`` (indented JSON; default: one line) to ``parser``."""
    parser.add_argument("--json", action="store_true", help=help)
    parser.add_argument(
        "--pretty",
        action="store_true",
        help="with --json: indent the JSON for reading (default: one line, the fastest)",
    )


def write_file(
    path: str | os.PathLike[str],
    text: str,
    *,
    force: bool,
    inputs: tuple[str | os.PathLike[str], ...] = (),
) -> None:
    """Write ``text`` to the file ``path`` atomically, refusing to overwrite without ``force``
    and refusing a ``path`` that is one of ``inputs`` (the file the output is made from).

    A destination that cannot be written (missing folder, a folder of that name, no
    permission) raises :class:`geo.errors.LodelineError` naming the file, so the command
    exits 2 with one line instead of failing as an internal error.
    """
    from lodeline.geo.atomic import write_all

    write_all([(path, text)], overwrite=force, inputs=inputs)  # OutputError names the file


def write_output(
    path: str | None,
    text: str,
    *,
    force: bool,
    inputs: tuple[str | os.PathLike[str], ...] = (),
) -> None:
    """Write ``text`` to ``path`` atomically (see :func:`write_file`), or to stdout when
    ``path`` is ``None`` or ``-``."""
    if path in (None, "-"):
        sys.stdout.write(text)
        return
    write_file(path, text, force=force, inputs=inputs)


def refuse_input_as_output(
    outputs: list[str | os.PathLike[str]], inputs: list[str | os.PathLike[str]]
) -> None:
    """Refuse, before any work, an output that is one of the inputs (the same file after
    resolving links): replacing it would lose the input. Raises OutputError naming it."""
    from lodeline.geo.atomic import same_file
    from lodeline.geo.errors import OutputError

    for output in outputs:
        for source in inputs:
            if same_file(output, source):
                raise OutputError(
                    f"is the input {source}: give the output another name", file=str(output)
                )


def model_name(text: str) -> str:
    """An argparse type for a field model option: a name or auto, never empty."""
    import argparse

    if not text.strip():
        raise argparse.ArgumentTypeError("is empty: give a model name or auto")
    return text


def add_target_options(parser: Any) -> None:
    """Add ``--target-date`` and ``--model`` (the target-date field model) to ``parser``."""
    parser.add_argument(
        "--target-date",
        metavar="YYYY-MM-DD",
        help="date to convert to (default: the document's target.date, else today)",
    )
    parser.add_argument(
        "--model",
        metavar="NAME|auto",
        type=model_name,
        help="field model for the target date (default: the document's target.model, else auto)",
    )


def add_adjust_option(parser: Any, what: str = "adjustment rule") -> None:
    """Add ``--adjust compass|transit|none`` (no default: the document decides)."""
    parser.add_argument(
        "--adjust",
        choices=("compass", "transit", "none"),
        help=f"{what} (default: compass for a closed traverse, none for an open one)",
    )


def text_table(rows: list[list[str]], right: set[int]) -> list[str]:
    """Lay out ``rows`` (the first is the header) as aligned text lines with a rule below the
    header; columns whose index is in ``right`` are right-aligned."""
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    out = []
    for n, r in enumerate(rows):
        cells = [
            c.rjust(w) if i in right else c.ljust(w)
            for i, (c, w) in enumerate(zip(r, widths, strict=True))
        ]
        out.append("  ".join(cells).rstrip())
        if n == 0:
            out.append("  ".join("-" * w for w in widths))
    return out


class StandardOutput:
    """``sys.stdout`` for a command: a failed write or flush (a full device, an I/O error)
    becomes one line of bad input (:class:`geo.errors.OutputError`, exit 2) instead of an
    internal error; a closed pipe (``| head -1``) raises :class:`BrokenPipeError`, which the
    command line ends quietly on. After a failure the rest of the output goes nowhere, so
    Python's own flush at exit has nothing more to report."""

    def __init__(self, stream: Any) -> None:
        self._stream = stream

    def _guarded(self, method: Any, *args: Any) -> Any:
        try:
            return method(*args)
        except BrokenPipeError:
            self.silence()
            raise
        except OSError as exc:
            from lodeline.geo.errors import OutputError

            self.silence()
            raise OutputError(f"cannot write to standard output: {exc.strerror or exc}") from None

    def write(self, text: str) -> int:
        return self._guarded(self._stream.write, text)

    def write_bytes(self, data: bytes) -> None:
        """Write UTF-8 ``data`` after the text written before (see :func:`write_bytes`)."""
        self._guarded(write_bytes, self._stream, data)

    def flush(self) -> None:
        self._guarded(self._stream.flush)

    def silence(self) -> None:
        """Point the standard output at the null device (what is still buffered is dropped)."""
        try:
            null = os.open(os.devnull, os.O_WRONLY)
            os.dup2(null, self._stream.fileno())
            os.close(null)
        except (OSError, ValueError, AttributeError):
            pass

    def __getattr__(self, name: str) -> Any:
        return getattr(self._stream, name)
