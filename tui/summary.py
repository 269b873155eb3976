"""A folder of deeds closed at once: one CSV row per document (``lodeline close … --summary``).

:func:`find_documents` turns the command line's folders and files into the sorted list of
documents: a folder is searched **recursively** for ``.toml`` and ``.json`` files (hidden files
and folders, whose names start with ``.``, are left out; links to folders are not followed);
a file named on the command line is taken whatever its name. The rows are sorted by path
(the text of the path as found), so the same folder gives the same CSV bytes.

:func:`summarise` closes every document, in this process (``jobs=1``) or spread over a
process pool, and returns one :class:`SummaryRow` per document in that order. A document that
does not read (not TOML, refused by the schema, a call that does not read, no field model for
its date…) is a row with its one-line error in ``problems``; nothing stops the run.

Every figure of a row is taken from the same result objects the single-document commands
print, never computed again here:

- ``courses``, ``record_date``, ``declination_source``, ``declination_deg`` (the record-date
  declination at the point of beginning, east positive, degrees) and ``model`` from
  :func:`geo.north.convert_document` (``lodeline convert --json``: ``courses[0]
  .declination_record_deg``, ``record_date``, ``model``);
- the misclosure (metres, its azimuth in degrees clockwise from the chosen north and its
  bearing), ``precision`` (N of 1:N), the area (ground m², hectares, acres) and ``notes``
  (the codes of the closure's notes) from :func:`geo.survey.close_document`
  (``lodeline close --json`` with the same ``--adjust`` and ``--north``);
- with two or more found stations, ``fit_declination_deg`` (the empirical declination at the
  record date), ``fit_rms_m`` and ``survey_date`` (the calendar-year ranges of the survey-date
  estimate, with their model) from :func:`geo.survey.fit_document` and
  :func:`geo.survey_date.estimate_survey_date` (``lodeline fit --json`` with its defaults).

Floats are written by their shortest repr, the digits ``--json`` prints.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field

#: The suffixes a folder is searched for (lower case; a file's suffix is compared lowered).
DOCUMENT_SUFFIXES = (".toml", ".json")

#: The columns of the summary CSV, in order.
COLUMNS: tuple[str, ...] = (
    "file",
    "status",
    "title",
    "courses",
    "record_date",
    "declination_source",
    "declination_deg",
    "model",
    "adjustment",
    "north",
    "misclosure_m",
    "misclosure_azimuth_deg",
    "misclosure_bearing",
    "precision",
    "area_m2",
    "area_hectares",
    "area_acres",
    "found_stations",
    "fit_declination_deg",
    "fit_rms_m",
    "survey_date",
    "notes",
    "problems",
)

#: ``status``: every figure there is; some part did not work out (see ``problems``); the
#: document did not read at all; an unexpected failure (``internal error: …`` in ``problems``).
STATUS_OK, STATUS_PARTIAL, STATUS_UNREAD, STATUS_FAILED = "closed", "partial", "not read", "failed"

#: Documents handed to a worker process at once (fewer round trips than one by one).
CHUNK = 32


@dataclass
class SummaryRow:
    """One document's row (see the module docstring for where each value comes from)."""

    file: str
    status: str = STATUS_OK
    values: dict[str, object] = field(default_factory=dict)
    problems: list[str] = field(default_factory=list)

    def cells(self) -> list[object]:
        """The row's values in :data:`COLUMNS` order (``None`` for an empty cell)."""
        base = {"file": self.file, "status": self.status, "problems": "; ".join(self.problems)}
        return [base[c] if c in base else self.values.get(c) for c in COLUMNS]


def find_documents(paths: Sequence[str]) -> list[str]:
    """The documents named by ``paths`` (folders searched recursively), sorted by path.

    A path that names nothing is kept: its row then says it cannot be read. The same file
    reached twice (named and inside a named folder) is listed once.
    """
    found: list[str] = []
    for given in paths:
        if os.path.isdir(given):
            found += _search(given)
        else:
            found.append(given)
    seen: set[str] = set()
    out = []
    for name in sorted(found):
        key = os.path.realpath(name)
        if key not in seen:
            seen.add(key)
            out.append(name)
    return out


def _search(folder: str) -> list[str]:
    out = []
    for root, dirs, files in os.walk(folder):  # links to folders are not followed
        dirs[:] = [d for d in dirs if not d.startswith(".")]
        out += [
            os.path.join(root, f)
            for f in files
            if not f.startswith(".") and os.path.splitext(f)[1].lower() in DOCUMENT_SUFFIXES
        ]
    return out


def summary_row(path: str, *, adjust: str | None = None, north: str = "true") -> SummaryRow:
    """Read, convert, close and (with two or more found stations) fit the document ``path``.

    Never raises for a document that does not read or close: the one-line error goes to
    ``problems`` (an unexpected failure too, as ``internal error: …``).
    """
    from lodeline.geo.magnetic import forget_computed_points

    forget_computed_points()  # the same bits as `lodeline close` of this document alone
    try:
        return _row(path, adjust=adjust, north=north)
    except Exception as err:  # one bad document never stops the run
        return SummaryRow(path, STATUS_FAILED, problems=[_internal(err)])


def _internal(err: BaseException) -> str:
    from lodeline.geo.errors import clip

    return f"internal error: {type(err).__name__}: {clip(err, 300)}"


def _row(path: str, *, adjust: str | None, north: str) -> SummaryRow:
    from lodeline.geo.document import load_document
    from lodeline.geo.errors import LodelineError
    from lodeline.geo.north import convert_document

    row = SummaryRow(path)
    try:
        doc = load_document(path)
    except LodelineError as err:
        return SummaryRow(path, STATUS_UNREAD, problems=[str(err)])
    row.values.update(title=doc.title, courses=len(doc.course), adjustment=None, north=north)
    conv = fit_conv = None
    try:
        conv = convert_document(doc, file=path, allow_unknown_declination=north == "magnetic")
        fit_conv = conv
    except LodelineError as err:
        row.problems.append(str(err))
        try:  # the fit needs no declination at the record date: it finds one
            fit_conv = convert_document(doc, file=path, allow_unknown_declination=True)
        except LodelineError:
            fit_conv = None
    if conv is not None:
        _conversion_values(row, conv)
        _closure_values(row, conv, adjust=adjust, north=north)
    elif fit_conv is not None:  # the record date stands even where no model covers it
        data = fit_conv.as_dict()  # type: ignore[attr-defined]
        row.values.update(courses=len(data["courses"]), record_date=data["record_date"])
    if fit_conv is not None:
        _fit_values(row, fit_conv)
    if row.problems:
        row.status = STATUS_PARTIAL
    return row


def _conversion_values(row: SummaryRow, conv: object) -> None:
    data = conv.as_dict()  # type: ignore[attr-defined]
    courses = conv.courses  # type: ignore[attr-defined]
    row.values.update(
        courses=len(courses),
        record_date=data["record_date"],
        declination_source=conv.declination_source,  # type: ignore[attr-defined]
        declination_deg=courses[0].declination_record_deg if courses else None,
        model=data["model"],
    )


def _closure_values(row: SummaryRow, conv: object, *, adjust: str | None, north: str) -> None:
    from lodeline.geo.errors import LodelineError
    from lodeline.geo.survey import close_document

    try:
        closure = close_document(conv, adjust=adjust, north=north)  # type: ignore[arg-type]
    except LodelineError as err:
        row.problems.append(str(err))
        return
    data = closure.as_dict()
    row.values.update(
        adjustment=data["adjustment"],
        misclosure_m=data["misclosure_m"],
        misclosure_azimuth_deg=data["misclosure_azimuth_deg"],
        misclosure_bearing=data["misclosure_bearing"],
        precision=data["precision"],
        area_m2=data["area_m2"],
        area_hectares=data["area_hectares"],
        area_acres=data["area_acres"],
        notes=" ".join(dict.fromkeys(n["code"] for n in data["notes"])),
    )
    if data["crossing_courses"]:
        a, b = data["crossing_courses"]
        row.problems.append(f"courses {a} and {b} cross: the figure has no area")


def _fit_values(row: SummaryRow, conv: object) -> None:
    from lodeline.geo.errors import LodelineError
    from lodeline.geo.survey import fit_document, found_count

    from .commands.fit import survey_date_of

    count = found_count(conv)  # type: ignore[arg-type]
    row.values["found_stations"] = count
    if count < 2:
        return
    try:
        fit = fit_document(conv)  # type: ignore[arg-type]
        estimate = survey_date_of(conv, fit, sigma_deg=None)
    except LodelineError as err:
        row.problems.append(str(err))
        return
    row.values.update(fit_declination_deg=fit.empirical_declination_deg, fit_rms_m=fit.rms_m)
    if estimate is not None:
        ranges = estimate.as_dict()["ranges"]
        row.values["survey_date"] = (
            "; ".join(f"{r['text']} ({r['model']})" for r in ranges) or "no date matches"
        )


def _rows_of(paths: Sequence[str], adjust: str | None, north: str) -> list[SummaryRow]:
    """Worker task: the rows of a chunk of documents."""
    return [summary_row(p, adjust=adjust, north=north) for p in paths]


def _quiet_worker() -> None:
    """A worker leaves Ctrl-C to the command, which stops the pool."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)


def summarise(
    paths: Sequence[str],
    *,
    jobs: int = 1,
    adjust: str | None = None,
    north: str = "true",
    advance: Callable[[int], None] | None = None,
) -> list[SummaryRow]:
    """One row per document of ``paths``, in that order.

    ``jobs=1`` works in this process; more spreads chunks of at most :data:`CHUNK` documents
    (at least four chunks a worker) over a pool of ``jobs`` worker processes (never more
    workers than chunks). ``advance(n)`` is
    called as documents are done (the progress bar). The rows are the same whatever ``jobs``.
    """
    step = advance or (lambda n: None)
    size = max(1, min(CHUNK, -(-len(paths) // (4 * max(1, jobs)))))  # four chunks a worker
    chunks = [list(paths[i : i + size]) for i in range(0, len(paths), size)]
    if jobs <= 1 or len(chunks) <= 1:
        rows = []
        for chunk in chunks:
            rows += _rows_of(chunk, adjust, north)
            step(len(chunk))
        return rows
    from concurrent.futures import ProcessPoolExecutor, as_completed

    # the engine imported once here: workers forked from this process start with it
    import lodeline.geo.document
    import lodeline.geo.north
    import lodeline.geo.survey  # noqa: F401

    done: dict[int, list[SummaryRow]] = {}
    pool = ProcessPoolExecutor(max_workers=min(jobs, len(chunks)), initializer=_quiet_worker)
    try:
        futures = {pool.submit(_rows_of, c, adjust, north): i for i, c in enumerate(chunks)}
        for future in as_completed(futures):
            i = futures[future]
            done[i] = future.result()
            step(len(chunks[i]))
    finally:
        pool.shutdown(wait=True, cancel_futures=True)
    return [row for i in range(len(chunks)) for row in done[i]]


def summary_csv(rows: Iterable[SummaryRow]) -> str:
    """The summary as RFC 4180 CSV text (the export's CSV writer: CRLF, floats by repr)."""
    from lodeline.geo.export import csv_table

    return csv_table(COLUMNS, [r.cells() for r in rows])
