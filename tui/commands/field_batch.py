"""``lodeline field --csv``: the batch, read, checked, computed and written a chunk at a time.

The file is read :data:`CHUNK_ROWS` lines at a time. In a chunk every column is parsed at
once (numbers by one check of the column's characters and one conversion, dates once per
distinct text, a column of ISO dates as bytes at once), every check is an array mask, the field
is one :func:`geo.magnetic.field_at` call, and the output is formatted column by column. Only a row
that a mask flags goes through the per-row check (:func:`_row_error`), which gives the same
one-line message, naming the line and column, as reading row by row would. Memory holds one
chunk: the output goes to a temporary file put in place at the end (all-or-nothing, as the
project's atomic writer does), so a bad row that stops the run leaves nothing written.

Which error stops the run (without ``--skip-bad``) is the one a row-by-row reading would give:
a file that is not UTF-8 first, then the first bad row (in line order; CSV that does not read
counts as a bad row where it stands), then the first date no model covers.
"""

from __future__ import annotations

import contextlib
import csv
import io
import itertools
import os
import re
import sys
import tempfile
from collections.abc import Iterator
from typing import Any

import numpy as np

from lodeline.geo.errors import InputError, LodelineError
from lodeline.geo.float_text import repr_rows, reprs

from .field import CSV_INPUT, RESULT_KEYS, _date, _malformed, _number

#: Lines of the file read, checked, computed and written together.
CHUNK_ROWS = 20_000
#: Jobs at the helper process at most (one it works on, the next ones waiting for it).
HELPER_JOBS = 3
#: Distinct date texts remembered (a file of decimal years has one per row).
_DATE_MEMORY = 200_000

#: Every character a column of numbers may hold when each cell reads as
#: :data:`tui.commands.field._NUMBER` reads it: ASCII digits, sign, point, exponent, the letters
#: of nan, inf and infinity, ASCII white space, and the commas between the cells. Within these,
#: Python's ``float`` reads exactly what that pattern reads (no underscore, no other digit or
#: space), so a column made of them only is read by ``float`` alone.
_NUMBER_BYTES = b"0123456789+-.eE" + b"nNaAiIfFtTyY" + b" \t\n\r\f\v,"
#: The common ISO form, read a column at once by :func:`_iso_column_years` (years 0001-9998,
#: ASCII digits).
_PLAIN_ISO = re.compile(r"(?!0000|9999)\d{4}-\d\d-\d\d", re.ASCII)


def run_batch(args: Any) -> int:
    """Run ``lodeline field --csv`` (see :mod:`tui.commands.field`); returns the exit status."""
    path = args.csv
    if args.out not in (None, "-"):
        from .common import refuse_input_as_output

        refuse_input_as_output([args.out], [path])  # before any work: the input is kept
    try:
        handle = open(path, encoding="utf-8-sig", newline="")  # noqa: SIM115 (closed below)
    except OSError as exc:
        raise InputError(f"cannot read ({exc.strerror})", file=path) from None
    try:
        with handle:
            try:
                return _run(args, path, handle)
            except LodelineError:
                while handle.read(1 << 20):  # a file that is not UTF-8 is named first
                    pass
                raise
    except UnicodeDecodeError:
        raise InputError("is not UTF-8 text", file=path) from None
    except OSError as exc:
        raise InputError(f"cannot read ({exc.strerror})", file=path) from None


def _header(path: str, lines: Iterator[str]) -> tuple[list[str], dict[str, int], int]:
    """The header's cells (stripped), the index of each column and the lines it took."""
    reader = csv.reader(lines, strict=True)
    try:
        header = next(reader)
    except StopIteration:
        raise InputError("empty file: a header with lat,lon,date is required", file=path) from None
    except csv.Error as exc:
        raise _malformed(exc, path, 1) from None
    header = [h.strip() for h in header]
    for name in CSV_INPUT:
        if name not in header:
            raise InputError(
                "header must name the columns lat, lon, date (height_m optional)",
                file=path,
                field=name,
                line=1,
            )
    if len(set(header)) != len(header):
        raise InputError("header repeats a column name", file=path, line=1)
    clash = [k for k in RESULT_KEYS[4:] if k in header]
    if clash:
        raise InputError(
            "input column would clash with a result column", file=path, field=clash[0], line=1
        )
    return header, {name: header.index(name) for name in header}, reader.line_num


class _Chunk:
    """Rows of one chunk: the cells column by column, line numbers, the input part of each
    output line as CSV text, and the CSV error that ended the reading, if any."""

    def __init__(self) -> None:
        self.rows: list[list[str]] | None = None  # None: split from ``prefix`` when needed
        self.columns: list[Any] = []
        self.count_ok: np.ndarray = np.zeros(0, dtype=bool)
        self.lines: list[int] = []
        self.prefix: list[str] = []
        self.failure: csv.Error | None = None
        self.consumed = 0  # lines of the file this chunk took
        self.last_line = 0  # the line of the last row read (a blank one too)

    def row(self, k: int) -> list[str]:
        """The cells of row ``k``."""
        return self.rows[k] if self.rows is not None else self.prefix[k].split(",")

    def split(self, ncol: int) -> None:
        """Fill :attr:`columns` and :attr:`count_ok` from :attr:`rows` (a row with another
        number of cells than ``ncol`` gets empty cells here and is flagged)."""
        assert self.rows is not None
        self.count_ok = np.fromiter(map(len, self.rows), int, len(self.rows)) == ncol
        cells = (
            self.rows
            if self.count_ok.all()
            else [
                r if ok else [""] * ncol
                for r, ok in zip(self.rows, self.count_ok.tolist(), strict=True)
            ]
        )
        self.columns = list(zip(*cells, strict=True)) if cells else [()] * ncol


def _read_chunk(
    block: list[str], lines: Iterator[str], base: int, last_line: int, ncol: int
) -> _Chunk:
    """Split ``block`` (lines ``base + 1`` on) into rows as :func:`csv.reader` does. Without
    quotes (nor NUL, nor a line longer than the CSV field limit) a row is its line split at
    commas; otherwise the csv module reads it, continuing into ``lines`` for a quoted field
    that runs past the block."""
    chunk = _Chunk()
    chunk.last_line = last_line
    chunk.consumed = len(block)
    text = "".join(block)
    if '"' not in text and "\0" not in text and max(map(len, block)) <= csv.field_size_limit():
        text = text.replace("\r\n", "\n").replace("\r", "\n")
        parts = text.split("\n")
        if text[-1] == "\n":
            parts.pop()
        chunk.prefix = parts
        chunk.lines = list(range(base + 1, base + 1 + len(parts)))
        chunk.last_line = base + len(parts)
        # every line holds ncol - 1 commas when none holds more and they add up
        if text.count(",") == (ncol - 1) * len(parts) and (
            max(map(str.count, parts, itertools.repeat(","))) == ncol - 1
        ):
            cells = text.replace("\n", ",").split(",")
            chunk.columns = [cells[j : ncol * len(parts) : ncol] for j in range(ncol)]
            chunk.count_ok = np.ones(len(parts), dtype=bool)
        else:
            chunk.rows = [p.split(",") for p in parts]
            chunk.split(ncol)
        return chunk
    reader = csv.reader(itertools.chain(block, lines), strict=True)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")  # (a cell holding "\n" is quoted)
    chunk.rows = []
    while reader.line_num < len(block):
        try:
            row = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            chunk.failure = exc
            break
        chunk.last_line = base + reader.line_num
        chunk.rows.append(row)
        chunk.lines.append(chunk.last_line)
        buffer.seek(0)
        buffer.truncate()
        writer.writerow(row)
        chunk.prefix.append(buffer.getvalue()[:-1])
    chunk.consumed = reader.line_num
    chunk.split(ncol)
    return chunk


def _numbers(
    cells: tuple[str, ...], *, blank: float | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """A column of number texts as floats and a mask of the cells that read as a finite
    number (``blank``: the value of an empty cell, else an empty cell is bad)."""
    joined = ",".join(cells)
    values = None
    if (
        joined.count(",") == len(cells) - 1
        and joined.isascii()
        and not joined.encode("ascii").translate(None, _NUMBER_BYTES)
    ):
        # an empty cell, "1e", "+-1"…: read cell by cell below
        with contextlib.suppress(ValueError):
            values = np.array(list(map(float, cells)), dtype=float)
    if values is None:
        from .field import _NUMBER

        stripped = list(map(str.strip, cells))
        values = np.array(
            [
                float(s)
                if _NUMBER.fullmatch(s)
                else (blank if blank is not None and not s else np.nan)
                for s in stripped
            ],
            dtype=float,
        )
    return values, np.isfinite(values)


def _decimal_years(cells: list[str]) -> dict[str, float]:
    """The decimal year of each distinct date text (NaN for one that does not read)."""
    from lodeline.geo.dates import parse_date

    out: dict[str, float] = {}
    plain = cells
    value = _iso_column_years(cells)  # the usual file: one form for all
    if value is None:
        plain = [c for c in cells if _PLAIN_ISO.fullmatch(c)]
        value = _iso_column_years(plain) if plain else None
    if value is not None:
        out.update(zip(plain, value.tolist(), strict=True))
    for c in cells:
        if c not in out:
            try:
                out[c] = parse_date(c)[1]
            except LodelineError:
                out[c] = float("nan")
    return out


#: Days before each month (index 1-12; 13 the year), in a common year and a leap year.
_DAYS_BEFORE = np.array(
    [
        [0, 0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334, 365],
        [0, 0, 31, 60, 91, 121, 152, 182, 213, 244, 274, 305, 335, 366],
    ]
)
#: Where the digits of ``YYYY-MM-DD`` stand.
_ISO_DIGITS = [0, 1, 2, 3, 5, 6, 8, 9]


def _iso_column_years(cells: Any) -> np.ndarray | None:
    """The decimal years of a column of dates, as :func:`geo.dates.decimal_year` gives them
    (year + (day of year - 1) / days in the year), when every cell is a date of the form
    ``_PLAIN_ISO`` reads (``YYYY-MM-DD``, ASCII digits, years 0001-9998) of a day that exists;
    otherwise ``None``, and the caller reads the cells one by one.

    The column is read as bytes at once: the cells joined by line breaks must make rows of
    eleven bytes, digits at the digit places, hyphens at the fifth and eighth, a line break
    at the last (a cell of another length or holding a line break cannot make that pattern:
    the breaks would not all stand at the ends of rows)."""
    n = len(cells)
    if n == 0:
        return None
    text = "\n".join(cells) + "\n"
    if len(text) != 11 * n or not text.isascii():
        return None
    rows = np.frombuffer(text.encode("ascii"), dtype=np.uint8).reshape(n, 11)
    digits = rows[:, _ISO_DIGITS] - np.uint8(48)  # below "0" wraps round to a large value
    if (digits > 9).any() or (rows[:, [4, 7]] != 45).any() or (rows[:, 10] != 10).any():
        return None
    d = digits.astype(np.int64)
    year = d[:, 0] * 1000 + d[:, 1] * 100 + d[:, 2] * 10 + d[:, 3]
    month = d[:, 4] * 10 + d[:, 5]
    day = d[:, 6] * 10 + d[:, 7]
    if (year < 1).any() or (year > 9998).any() or (month < 1).any() or (month > 12).any():
        return None
    leap = ((year % 4 == 0) & ((year % 100 != 0) | (year % 400 == 0))).astype(np.intp)
    before = _DAYS_BEFORE[leap, month]
    if (day < 1).any() or (day > _DAYS_BEFORE[leap, month + 1] - before).any():
        return None  # 2001-02-29, 2012-04-31, 2012-07-00: read one by one by the caller
    return year + (before + day - 1) / _DAYS_BEFORE[leap, 13]


class _Sink:
    """Where the output goes: a file put in place whole at the end, or standard output
    (kept in a temporary file until the end, so a bad row leaves nothing printed)."""

    def __init__(self, out: str | None, *, force: bool, inputs: tuple[str, ...]) -> None:
        from lodeline.geo.atomic import AtomicStream

        self._stream: AtomicStream | None = None
        if out in (None, "-"):
            self._file: Any = tempfile.SpooledTemporaryFile(  # noqa: SIM115 (see discard)
                max_size=8 << 20, mode="w+", encoding="utf-8", newline=""
            )
        else:
            self._stream = AtomicStream(out, overwrite=force, inputs=inputs)
            self._file = self._stream

    def write(self, text: str) -> None:
        self._file.write(text)

    def commit(self) -> None:
        if self._stream is not None:
            self._stream.commit()
            return
        self._file.seek(0)
        while piece := self._file.read(1 << 20):
            sys.stdout.write(piece)

    def discard(self) -> None:
        if self._stream is not None:
            self._stream.discard()
        else:
            self._file.close()


def _row_error(
    row: list[str], header: list[str], col: dict[str, int], path: str, line: int
) -> LodelineError | None:
    """The first fault of one row as the per-row reading names it (None for a blank row,
    which is skipped); the row must be one a mask flagged."""
    from lodeline.geo.magnetic import validate_position

    if not row or all(not cell.strip() for cell in row):
        return None
    try:
        if len(row) != len(header):
            raise InputError(
                f"has {len(row)} fields, the header has {len(header)}", file=path, line=line
            )
        where = {"file": path, "line": line}
        lat = _number(row[col["lat"]].strip(), "lat", **where)
        lon = _number(row[col["lon"]].strip(), "lon", **where)
        hcell = row[col["height_m"]].strip() if "height_m" in col else ""
        height = _number(hcell, "height_m", **where) if hcell else 0.0
        _date(row[col["date"]], **where)
        try:
            validate_position(lat, lon, height)
        except LodelineError as err:
            raise err.located(**where) from None
    except LodelineError as err:
        return err
    raise AssertionError(f"{path}:{line}: a row the checks flagged reads as good")


def _warning_cells(warnings: tuple) -> list[str]:
    """The warnings column: "; "-joined, quoted as the csv module quotes a cell. A cell
    holding a comma or a double quote goes in double quotes, each double quote doubled (its
    default dialect, in every Python); one holding a line break is left to the module itself
    (whether a carriage return is quoted has changed between Python versions)."""
    cells = [""] * len(warnings)
    buffer = None
    for k, w in enumerate(warnings):
        if not w:
            continue
        text = "; ".join(w)
        if "\n" in text or "\r" in text:
            buffer = buffer or io.StringIO()
            buffer.seek(0)
            buffer.truncate()
            csv.writer(buffer, lineterminator="\n").writerow([text, ""])
            text = buffer.getvalue()[:-2]
        elif "," in text or '"' in text:
            text = '"' + text.replace('"', '""') + '"'
        cells[k] = text
    return cells


def _payload(result: Any, lo: int, hi: int) -> tuple[Any, np.ndarray, tuple]:
    """Rows ``lo:hi`` of a :class:`geo.magnetic.FieldVector` as :func:`_format` takes them:
    the model name(s), the float columns from ``declination_deg`` to ``declination_sigma_deg``
    stacked, and the warnings (small to pass to a worker process)."""
    model = result.model if isinstance(result.model, str) else result.model[lo:hi]
    floats = np.stack([getattr(result, key).ravel()[lo:hi] for key in RESULT_KEYS[5:-1]])
    return model, floats, tuple(result.warnings[lo:hi])


def _format(payload: tuple[Any, np.ndarray, tuple], prefix: list[str]) -> str:
    """The output lines of computed rows (:func:`_payload`): input part, then the results."""
    model, floats, warnings = payload
    n = len(prefix)
    sigma = floats[-1]
    stated = np.isfinite(sigma)  # a model without an uncertainty leaves the cell empty
    if stated.all():
        sigma_cells = reprs(sigma)
    else:
        sigma_cells = [""] * n
        for k, text in zip(np.flatnonzero(stated).tolist(), reprs(sigma[stated]), strict=True):
            sigma_cells[k] = text
    columns: list[list[str]] = [
        prefix,
        [model] * n if isinstance(model, str) else list(model),
        repr_rows(floats[:-1].T),  # the nine value columns, a row's cells at once
        sigma_cells,
        _warning_cells(warnings),
    ]
    return "\n".join(map(",".join, zip(*columns, strict=True))) + "\n"


def _cpu_times() -> tuple[int, int] | None:
    """Idle and total CPU time of the machine so far (Linux /proc/stat), or None."""
    try:
        with open("/proc/stat", encoding="ascii") as fh:
            fields = [int(v) for v in fh.readline().split()[1:]]
    except (OSError, ValueError):
        return None
    return fields[3] + (fields[4] if len(fields) > 4 else 0), sum(fields[:8])


def _idle_cores(since: tuple[int, int] | None) -> float | None:
    """How many cores were idle, on average, since ``since`` (:func:`_cpu_times`), or None
    where that is not known."""
    import os

    now = _cpu_times()
    if since is None or now is None or now[1] <= since[1]:
        return None
    return (now[0] - since[0]) / (now[1] - since[1]) * (os.cpu_count() or 1)


def _compute(inputs: tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, str]) -> Any:
    """The field at the checked rows of one chunk: one :func:`geo.magnetic.field_at` call
    (latitude, longitude, decimal year, height, model), wherever it runs."""
    from lodeline.geo.magnetic import field_at

    lat, lon, year, height, model = inputs
    return field_at(lat=lat, lon=lon, year=year, height_m=height, model=model)


def _computed_lines(inputs: tuple, prefix: list[str]) -> str:
    """The output lines of one chunk, computed and formatted (the helper's usual job)."""
    return _format(_payload(_compute(inputs), 0, len(prefix)), prefix)


def _job_text(kind: str, data: Any, prefix: list[str]) -> str:
    """The text of one job, wherever it is done: a chunk computed and formatted
    (``"lines"``, :func:`_computed_lines`) or one computed already, formatted (``"format"``)."""
    return _computed_lines(data, prefix) if kind == "lines" else _format(data, prefix)


def _serve(conn: Any, folder: str) -> None:
    """The helper process: take job numbers from ``conn`` until ``None``; each job is read
    from its file of ``folder``, its text goes to another file there and only its number comes
    back (small messages, which never wait for the other process to read them: the command
    goes on while the helper works, and the helper is free again at once)."""
    import pickle

    try:
        while (number := conn.recv()) is not None:
            job = os.path.join(folder, f"{number}.job")
            try:  # the job taken: the command, as it waits, takes back one not yet taken
                os.rename(job, job + ".taken")
            except FileNotFoundError:
                conn.send(number)
                continue
            with open(job + ".taken", "rb") as fh:
                kind, data, prefix = pickle.load(fh)
            os.remove(job + ".taken")
            text = _job_text(kind, data, prefix)
            with open(
                os.path.join(folder, f"{number}.txt"), "w", encoding="utf-8", newline=""
            ) as fh:
                fh.write(text)
            conn.send(number)
    except (EOFError, OSError, KeyboardInterrupt):
        pass
    finally:
        os._exit(0)  # nothing of the command's own state to tear down here


class _Writer:
    """Computes and formats the checked chunks and writes them in order, sharing the work
    with one helper process when the machine has a core to spare.

    For a file of more than a chunk on a machine of several cores, the helper is forked once
    the first chunk has been read and checked and its first row computed, so that it finds
    every module imported and the model read, as this process has them; and only when, on
    average, half a core or more stayed idle meanwhile (``/proc/stat``); otherwise everything
    runs here (sharing costs about a tenth more work in all: passing the chunk and reading
    back its text). Each chunk but the last goes to the helper while it holds fewer than
    :data:`HELPER_JOBS` jobs; otherwise it is computed and formatted here, while the helper
    works, so each process takes the share its speed gives it. The last chunk is computed
    here and its formatting shared when the helper can take it. Each job goes to the helper
    as a file of a private temporary folder and its number down a pipe, and its text comes
    back the same way, read when its turn to be written comes; memory stays bounded by a few
    chunks. Rather than wait for the helper, this process takes back the last job it has not
    started (at the end of the file, where the helper would otherwise finish alone). Each
    chunk is one ``field_at`` call wherever it runs, so the bytes are the same with or
    without the helper; a job the helper did not finish (it was killed) is done here.
    """

    def __init__(self, sink: _Sink, size: int) -> None:
        self._sink = sink
        self._pool: Any = None  # (process, connection, folder) of the helper, or None
        self._pending: list[Any] = []  # in output order: text, or a job number at the helper
        self._jobs: dict[int, tuple[str, Any, list[str]]] = {}  # at the helper, kept for a retry
        self._done: set[int] = set()
        self._taken_back: set[int] = set()  # jobs done here after all, the helper told so
        self._chunks = 0
        self._long = size > CHUNK_ROWS * 40  # more than a chunk of short lines
        self._cpu_at_start = _cpu_times()  # while the first chunk is read, checked, computed

    def write(self, inputs: tuple, prefix: list[str], more: bool) -> None:
        """Compute, format and write the rows of one chunk (``inputs``: see
        :func:`_compute`; ``more``: lines of the file follow this chunk)."""
        self._chunks += 1
        if self._chunks == 1 and more and self._long:
            _compute(tuple(v[:1] for v in inputs[:4]) + inputs[4:])  # the model read here
            if self._spare_core():
                self._start()
        self._collect(wait=False)
        free = self._pool is not None and len(self._jobs) < HELPER_JOBS
        n = len(prefix)
        if free and more:
            self._send("lines", inputs, prefix)
        elif free and n > 1:  # the last chunk: computed here, its formatting shared
            result = _compute(inputs)
            half = n // 2
            self._send("format", _payload(result, 0, half), prefix[:half])
            self._pending.append(_format(_payload(result, half, n), prefix[half:]))
        else:
            self._pending.append(_computed_lines(inputs, prefix))
        self._drain(keep=HELPER_JOBS + 1)

    def finish(self) -> None:
        """Write what is still being formatted."""
        self._drain(keep=0)

    def close(self) -> None:
        """Stop the helper and remove its folder (what it had not finished is dropped)."""
        if self._pool is None:
            return
        import shutil

        process, conn, folder = self._pool
        self._pool = None
        with contextlib.suppress(OSError):  # the helper gone already
            conn.send(None)
        process.join(timeout=5)
        if process.is_alive():
            process.kill()
            process.join()
        conn.close()
        shutil.rmtree(folder, ignore_errors=True)

    def _start(self) -> None:
        import multiprocessing

        if (os.cpu_count() or 1) < 2 or "fork" not in multiprocessing.get_all_start_methods():
            return
        folder = tempfile.mkdtemp(prefix="lodeline-field-")
        context = multiprocessing.get_context("fork")
        ours, theirs = context.Pipe()
        process = context.Process(target=_serve, args=(theirs, folder), daemon=True)
        process.start()
        theirs.close()
        self._pool = (process, ours, folder)

    def _spare_core(self) -> bool:
        idle = _idle_cores(self._cpu_at_start)
        return idle is None or idle >= 0.5  # the helper gains only on a core left idle

    def _send(self, kind: str, data: Any, prefix: list[str]) -> None:
        import pickle

        number = self._chunks
        self._jobs[number] = (kind, data, prefix)
        self._pending.append(number)
        try:
            with open(os.path.join(self._pool[2], f"{number}.job"), "wb") as fh:
                pickle.dump((kind, data, prefix), fh, protocol=pickle.HIGHEST_PROTOCOL)
            self._pool[1].send(number)
        except OSError:  # the helper has gone (or its folder): its jobs are done here
            self._helper_gone()

    def _collect(self, *, wait: bool, until: int | None = None) -> None:
        """Take the job numbers the helper has sent back: those already sent (``wait``:
        waiting until job ``until`` is back, or every job when ``until`` is None)."""
        while self._jobs and self._pool is not None:
            if until is not None and until not in self._jobs:
                return
            conn = self._pool[1]
            try:
                if not wait and not conn.poll():
                    return
                number = conn.recv()
            except (EOFError, OSError):
                self._helper_gone()
                return
            if number in self._taken_back:
                self._taken_back.discard(number)
                continue
            del self._jobs[number]
            self._done.add(number)

    def _take_back(self) -> bool:
        """Do here the last job sent if the helper has not taken it yet (rather than wait for
        it); whether it had not. The helper takes a job by renaming its file, this process by
        removing it: whichever comes first has it (the helper takes jobs in order, so when
        the last is taken, every one is)."""
        if not self._jobs:
            return False
        number = max(self._jobs)
        try:
            os.remove(os.path.join(self._pool[2], f"{number}.job"))
        except FileNotFoundError:
            return False
        self._taken_back.add(number)
        self._pending[self._pending.index(number)] = _job_text(*self._jobs.pop(number))
        return True

    def _helper_gone(self) -> None:
        """The helper has ended before its work (killed): what it finished is read, what it
        had not is done here, and the rest of the run goes without it."""
        for at, item in enumerate(self._pending):
            if isinstance(item, int):
                self._pending[at] = self._text_of(item)
        self._jobs.clear()
        self.close()

    def _text_of(self, number: int) -> str:
        """The text of job ``number``: from the helper's file, or made here if it has none."""
        if number in self._done:
            self._done.discard(number)
            path = os.path.join(self._pool[2], f"{number}.txt")
            with open(path, encoding="utf-8", newline="") as fh:
                text = fh.read()
            os.remove(path)
            return text
        return _job_text(*self._jobs[number])

    def _drain(self, *, keep: int) -> None:
        """Write the leading texts that are ready, waiting for the helper while more than
        ``keep`` texts or jobs are still to be written."""
        while self._pending:
            item = self._pending[0]
            if isinstance(item, int):
                if item not in self._done:
                    if len(self._pending) <= keep:
                        return
                    if self._take_back():
                        continue
                    self._collect(wait=True, until=item)
                    continue  # now done, or made here (the helper gone)
                item = self._text_of(item)
            self._pending.pop(0)
            self._sink.write(item)


def _checked(
    chunk: _Chunk, col: dict[str, int], dates: dict[str, float]
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Latitude, longitude, height, decimal year of every row of ``chunk`` and the mask of
    the rows that pass every check of the per-row reading (``dates``: decimal years of the
    date texts seen so far, extended here)."""
    from lodeline.geo.magnetic import position_ok

    n = len(chunk.lines)
    lat, ok_lat = _numbers(chunk.columns[col["lat"]])
    lon, ok_lon = _numbers(chunk.columns[col["lon"]])
    if "height_m" in col:
        height, ok_h = _numbers(chunk.columns[col["height_m"]], blank=0.0)
    else:
        height, ok_h = np.zeros(n), chunk.count_ok
    cells = chunk.columns[col["date"]]
    if len(dates) > _DATE_MEMORY:
        dates.clear()
    year = _iso_column_years(cells)  # the usual column: ISO dates, read at once
    if year is None:
        new = [c for c in dict.fromkeys(cells) if c not in dates]
        if new:
            dates.update(_decimal_years(new))
        year = np.fromiter(map(dates.__getitem__, cells), float, n)
    ok = chunk.count_ok & ok_lat & ok_lon & ok_h & np.isfinite(year)
    ok &= position_ok(*(np.where(ok, v, 0.0) for v in (lat, lon, height)))
    return lat, lon, height, year, ok


def _covered(
    model: str, years: np.ndarray, path: str, chunk: _Chunk, rows: np.ndarray
) -> tuple[np.ndarray, list[LodelineError]]:
    """Mask of the ``years`` (of chunk rows ``rows``) some model covers, and the error of each
    other one, located at its line (the message made once per distinct year)."""
    from lodeline.geo.models import require, resolve

    _names, covered = resolve(model, years)
    errors: list[LodelineError] = []
    messages: dict[float, LodelineError] = {}
    for k in np.flatnonzero(~covered).tolist():
        y = float(years[k])
        if y not in messages:
            try:
                require(model, years[k : k + 1])
            except LodelineError as err:
                messages[y] = err
        first = messages[y]
        err = type(first)(first.message, field=first.field)
        errors.append(err.located(file=path, line=chunk.lines[int(rows[k])]))
    return covered, errors


def _progress(path: str) -> Any:
    """The bar on stderr (drawn only on a terminal; its total counts the file's lines)."""
    from ..progress import Progress

    bar = Progress(total=0, unit="rows", description="field")
    if bar.active:
        with open(path, "rb") as raw:
            bar.total = max(
                0, sum(piece.count(b"\n") for piece in iter(lambda: raw.read(1 << 20), b"")) - 1
            )
    return bar


def _run(args: Any, path: str, handle: Any) -> int:
    lines = iter(handle)
    header, col, base = _header(path, lines)
    sink = _Sink(args.out, force=args.force, inputs=(path,))
    try:
        with tempfile.SpooledTemporaryFile(max_size=4 << 20, mode="w+", encoding="utf-8") as bad:
            return _chunks(args, path, lines, header, col, base, sink, bad)
    except BaseException:
        sink.discard()  # nothing written (the temporary file removed)
        raise


def _chunks(
    args: Any,
    path: str,
    lines: Iterator[str],
    header: list[str],
    col: dict[str, int],
    base: int,
    sink: _Sink,
    bad: Any,
) -> int:
    """Read, check, compute and write every chunk; then list the skipped rows."""
    ncol = len(header)
    dates: dict[str, float] = {}
    progress = _progress(path)
    nbad = ngood = 0
    last_line = 1
    range_error: LodelineError | None = None  # the first date no model covers
    head = io.StringIO()
    csv.writer(head, lineterminator="\n").writerow(header + list(RESULT_KEYS[4:]))
    writer = _Writer(sink, os.path.getsize(path))
    try:
        sink.write(head.getvalue())
        with progress:
            following = next(lines, None)  # the first line of the next chunk
            while following is not None:
                block = [following, *itertools.islice(lines, CHUNK_ROWS - 1)]
                chunk = _read_chunk(block, lines, base, last_line, ncol)
                following = next(lines, None)  # None: this chunk is the last
                base += chunk.consumed
                last_line = chunk.last_line
                errors: list[LodelineError] = []
                if chunk.lines:
                    lat, lon, height, year, ok = _checked(chunk, col, dates)
                    for k in np.flatnonzero(~ok).tolist():
                        err = _row_error(chunk.row(k), header, col, path, chunk.lines[k])
                        if err is None:
                            continue
                        if not args.skip_bad:
                            raise err
                        errors.append(err)
                    keep = np.flatnonzero(ok)
                    if keep.size:
                        covered, uncovered = _covered(args.model, year[keep], path, chunk, keep)
                        if uncovered and not args.skip_bad:
                            range_error = range_error or uncovered[0]
                        errors += uncovered
                        keep = keep[covered]
                    if keep.size and range_error is None:
                        inputs = (lat[keep], lon[keep], year[keep], height[keep], args.model)
                        prefix = (
                            chunk.prefix
                            if keep.size == len(chunk.prefix)
                            else [chunk.prefix[k] for k in keep.tolist()]
                        )
                        writer.write(inputs, prefix, following is not None)
                        ngood += int(keep.size)
                if chunk.failure is not None:
                    raise _malformed(chunk.failure, path, chunk.last_line + 1) from None
                if args.skip_bad and errors:
                    errors.sort(key=lambda e: e.line or 0)
                    bad.writelines(f"lodeline field: skipped {e}\n" for e in errors)
                    nbad += len(errors)
                progress.advance(chunk.consumed)
            if range_error is not None:
                raise range_error
            writer.finish()
        sink.commit()
    finally:
        writer.close()
    if nbad:
        bad.seek(0)
        while piece := bad.read(1 << 20):
            sys.stderr.write(piece)
        print(f"lodeline field: {nbad} bad row(s) skipped, {ngood} written", file=sys.stderr)
    return 0
