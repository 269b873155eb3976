"""The document being edited in the terminal application: edits, undo/redo and recovery.

The workspace holds the traverse document as the plain TOML-shaped mapping that
:mod:`geo.document` reads and writes (``title``, ``place``, ``grid``, ``record``, ``course``
...). Every edit builds a new mapping that shares the untouched parts with the previous one,
so a snapshot stack gives undo and redo of every edit for the price of a few references,
even for a 5,000-course document. Calls are kept exactly as typed, whether or not they
parse; nothing here interprets them.

No Textual and no geodesy here: the screens call these methods and :mod:`tui.results`
turns a snapshot into numbers through :mod:`geo`.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import threading
import time
import uuid
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from lodeline.geo.atomic import write_atomic
from lodeline.geo.document import VERSION_2_KEYS

#: The keys of a course the application edits, in the order the editor offers them.
COURSE_FIELDS = ("call", "back", "found", "every", "note")

#: Settings the job form edits: dotted document key -> label shown to the user.
SETTING_LABELS: dict[str, str] = {
    "title": "Title",
    "closed": "Closed figure",
    "place.lat": "Latitude (°)",
    "place.lon": "Longitude (°)",
    "place.easting": "Easting (m)",
    "place.northing": "Northing (m)",
    "place.height_m": "Height (m, ellipsoid)",
    "place.description": "Beginning described",
    "grid.crs": "Grid CRS",
    "record.reference": "Record reference",
    "record.date": "Record date",
    "record.declination": "Declination",
    "record.model": "Field model",
    "record.distance_unit": "Distance unit",
    "record.foot": "Foot",
    "record.vara_inches": "Vara (inches)",
    "record.angles": "Angles turned",
    "record.attraction_tolerance": "Attraction tolerance (°)",
    "record.area": "Stated area",
    "target.date": "Target date",
    "target.model": "Target field model",
}

Document = dict[str, Any]


def new_document() -> Document:
    """Return the mapping of a new, empty document (one blank course to type into)."""
    return {
        "format_version": 1,
        "title": "Untitled traverse",
        "closed": True,
        "place": {},
        "record": {"reference": "magnetic", "distance_unit": "perch", "foot": "us"},
        "course": [{"call": ""}],
    }


def get_setting(doc: Mapping[str, Any], key: str) -> Any:
    """Return the value at dotted ``key`` (``"record.date"``) or ``None`` when absent."""
    node: Any = doc
    for part in key.split("."):
        if not isinstance(node, Mapping) or part not in node:
            return None
        node = node[part]
    return node


def with_setting(doc: Mapping[str, Any], key: str, value: Any) -> Document:
    """Return a copy of ``doc`` with dotted ``key`` set to ``value`` (``None`` removes it).

    Only the mappings on the path are copied; empty tables left behind are removed.
    """
    head, _, rest = key.partition(".")
    out = dict(doc)
    if key in VERSION_2_KEYS and value is not None and out.get("format_version") == 1:
        out["format_version"] = 2  # the key is one of format_version 2
    if not rest:
        if value is None:
            out.pop(head, None)
        else:
            out[head] = value
        return out
    child = with_setting(doc.get(head) or {}, rest, value)
    if child:
        out[head] = child
    else:
        out.pop(head, None)
    return out


def course_call_text(course: Mapping[str, Any], default_unit: str | None = None) -> str:
    """The call of a course as the user wrote it: ``call``, or its parts joined as
    :func:`geo.document.course_call_text` joins them (so "angle 98 16, 1547 vara" reads the
    same here as in every command; ``default_unit``: the document's record.distance_unit);
    parts that do not validate are joined as typed."""
    if "call" in course:
        return str(course["call"])
    from pydantic import ValidationError

    from lodeline.geo.document import Course
    from lodeline.geo.document import course_call_text as document_call_text

    try:
        return document_call_text(Course.model_validate(dict(course)), default_unit)
    except ValidationError:
        keys = ("bearing", "angle", "distance", "unit")
        return " ".join(str(course[k]) for k in keys if k in course)


def distance_unit_of(doc: Mapping[str, Any]) -> str | None:
    """The document's record.distance_unit (the unit of a distance given without one)."""
    unit = get_setting(doc, "record.distance_unit")
    return unit if isinstance(unit, str) else None


def is_blank_course(course: Mapping[str, Any]) -> bool:
    """True for a course with nothing typed in it (a fresh row): it is not saved."""
    keys = {k for k, v in course.items() if v not in (None, "")}
    return not keys or (keys <= {"call"} and not str(course.get("call", "")).strip())


def read_pasted(text: str, doc: Mapping[str, Any]) -> tuple[list[str], dict[str, Any], str]:
    """Read a description pasted into the call editor with the document's unit, foot and
    vara: ``(calls, settings, summary)`` where ``settings`` are the dotted keys it states
    (point of beginning, area, variation, date) and ``summary`` one line for the editor.
    Raises the reader's :class:`geo.errors.ParseError` (course named, unread words marked)."""
    from lodeline.geo.description import read_description, read_form, stated_facts
    from lodeline.geo.errors import LodelineError
    from lodeline.geo.units import choose_foot

    record = doc.get("record") or {}
    date = record.get("date") or stated_facts(text).get("date")
    try:
        foot = choose_foot(record.get("foot"), date).foot
    except LodelineError:
        foot = None
    desc = read_description(
        text,
        default_unit=record.get("distance_unit"),
        foot=foot,
        vara_inches=record.get("vara_inches"),
    )
    settings = {
        "place.description": desc.beginning,
        "record.area": desc.area,
        "record.declination": desc.declination,
        "record.date": desc.date,
        "record.vara_inches": desc.vara_inches,
    }
    settings = {k: v for k, v in settings.items() if v is not None}
    if desc.closed:
        settings["closed"] = True
    read = "; ".join(f"{c.index}: {read_form(c.call)}" for c in desc.courses)
    summary = f"✓ {len(desc.courses)} courses read from the pasted description — {read}"
    return [c.call_text for c in desc.courses], settings, summary


def saveable_document(doc: Mapping[str, Any]) -> Document:
    """The document without blank courses, as it is written and checked."""
    return {**doc, "course": [c for c in doc.get("course") or [] if not is_blank_course(c)]}


@dataclass(frozen=True)
class Step:
    """One entry of the undo or redo stack: the document before the edit and its name."""

    label: str
    before: Document
    target: tuple[Any, ...]
    session: int | None


@dataclass
class Workspace:
    """The open document, its file, and the history of edits.

    ``doc`` is never mutated in place; each edit replaces it. ``dirty`` is true when ``doc``
    differs from what was last loaded or saved (undoing back to that state makes it clean).
    """

    doc: Document = field(default_factory=new_document)
    path: Path | None = None
    undo_stack: list[Step] = field(default_factory=list)
    redo_stack: list[Step] = field(default_factory=list)
    _clean: Document | None = None
    _revision: int = 0
    #: Names the recovery entry of a document that has no file yet (each its own).
    recovery_key: str = field(default_factory=lambda: new_recovery_key())

    def __post_init__(self) -> None:
        if self._clean is None:
            self._clean = self.doc

    # -- state -------------------------------------------------------------------------
    @property
    def dirty(self) -> bool:
        """Whether there are changes not yet saved to ``path``."""
        return self.doc is not self._clean

    @property
    def revision(self) -> int:
        """A counter bumped by every change of ``doc`` (edits, undo, redo, reload)."""
        return self._revision

    @property
    def courses(self) -> list[dict[str, Any]]:
        """The courses of the document (read only: edit through the methods)."""
        return list(self.doc.get("course") or [])

    def mark_saved(self, path: Path) -> None:
        """Record that ``doc`` is now what ``path`` holds."""
        self.path = path
        self._clean = self.doc

    def replace(self, doc: Document, *, label: str, clean: bool = False) -> None:
        """Replace the whole document (a restored recovery file) as one undoable edit."""
        self._apply(doc, label=label, target=("document",), session=None)
        if clean:
            self._clean = self.doc

    # -- edits -----------------------------------------------------------------------
    def _apply(
        self, doc: Document, *, label: str, target: tuple[Any, ...], session: int | None
    ) -> None:
        top = self.undo_stack[-1] if self.undo_stack else None
        merge = (
            session is not None
            and top is not None
            and not self.redo_stack
            and top.session == session
            and top.target == target
        )
        if not merge:
            self.undo_stack.append(Step(label, self.doc, target, session))
        self.redo_stack.clear()
        self.doc = doc
        self._revision += 1

    def set_setting(self, key: str, value: Any, *, session: int | None = None) -> None:
        """Set a document setting by dotted key (``None`` removes the key).

        Consecutive edits with the same ``session`` and key form one undo step (typing a
        word in a field is undone at once).
        """
        if get_setting(self.doc, key) == value:
            return
        label = f"change {SETTING_LABELS.get(key, key).lower()}"
        self._apply(
            with_setting(self.doc, key, value),
            label=label,
            target=("setting", key),
            session=session,
        )

    def set_course_field(
        self, index: int, name: str, value: Any, *, session: int | None = None
    ) -> None:
        """Set key ``name`` of course ``index`` (0-based); ``None`` or ``""`` removes it,
        except the call, which is kept even when empty.

        Writing ``call`` replaces a course given by parts (``bearing`` or ``angle``,
        ``distance``, ``unit``): the call as the desk shows it reads the same ("angle 98 16,
        1547 vara").
        """
        courses = self.courses
        course = dict(courses[index])
        if name == "call":
            # an angle that gives the direction is in the call as shown; one measured at a
            # course with a bearing (for the angular misclosure) stays beside the call
            drop = ["bearing", "distance", "unit"] + ([] if "bearing" in course else ["angle"])
            for key in drop:
                course.pop(key, None)
            if course.get("call") == value:
                return
            course["call"] = "" if value is None else value
        else:
            if value in (None, ""):
                if name not in course:
                    return
                course.pop(name)
            else:
                if course.get(name) == value:
                    return
                course[name] = value
        courses[index] = course
        self._apply(
            {**self.doc, "course": courses},
            label=f"edit {name} of course {index + 1}",
            target=("course", index, name),
            session=session,
        )

    def put_description(
        self, index: int, calls: Sequence[str], settings: Mapping[str, Any]
    ) -> None:
        """Replace course ``index`` (0-based) by the courses of a pasted description, one call
        each, and set the ``settings`` (dotted keys: the point of beginning's description, a
        stated area...) the document does not have yet: one undo step."""
        courses = self.courses
        index = max(0, min(index, len(courses)))
        courses[index : index + 1] = [{"call": call} for call in calls]
        doc: Document = {**self.doc, "course": courses}
        for key, value in settings.items():
            if key == "closed" or get_setting(doc, key) in (None, "", "auto"):
                doc = with_setting(doc, key, value)
        self._apply(
            doc,
            label=f"paste a description ({len(calls)} courses)",
            target=("description", index),
            session=None,
        )

    def insert_course(self, index: int, course: Mapping[str, Any] | None = None) -> None:
        """Insert a course (blank by default) so that it becomes course ``index`` (0-based)."""
        courses = self.courses
        index = max(0, min(index, len(courses)))
        courses.insert(index, dict(course) if course else {"call": ""})
        self._apply(
            {**self.doc, "course": courses},
            label=f"insert course {index + 1}",
            target=("insert", index),
            session=None,
        )

    def delete_course(self, index: int) -> None:
        """Delete course ``index`` (0-based)."""
        courses = self.courses
        if not 0 <= index < len(courses):
            return
        del courses[index]
        self._apply(
            {**self.doc, "course": courses},
            label=f"delete course {index + 1}",
            target=("delete", index),
            session=None,
        )

    def move_course(self, index: int, delta: int) -> int:
        """Move course ``index`` by ``delta`` places; return its new index."""
        courses = self.courses
        new = index + delta
        if not (0 <= index < len(courses) and 0 <= new < len(courses)):
            return index
        courses.insert(new, courses.pop(index))
        self._apply(
            {**self.doc, "course": courses},
            label=f"move course {index + 1} to {new + 1}",
            target=("move", index, delta),
            session=None,
        )
        return new

    # -- history ---------------------------------------------------------------------
    def undo(self) -> str | None:
        """Undo the last edit; return its label, or ``None`` when there is nothing to undo."""
        if not self.undo_stack:
            return None
        step = self.undo_stack.pop()
        self.redo_stack.append(Step(step.label, self.doc, step.target, None))
        self.doc = step.before
        self._revision += 1
        return step.label

    def redo(self) -> str | None:
        """Redo the last undone edit; return its label, or ``None``."""
        if not self.redo_stack:
            return None
        step = self.redo_stack.pop()
        self.undo_stack.append(Step(step.label, self.doc, step.target, None))
        self.doc = step.before
        self._revision += 1
        return step.label


# -- recovery files ------------------------------------------------------------------------
#
# Every unsaved document has its own recovery entry, a JSON file in recovery_dir(): a document
# with a file is named by its resolved path ("deed-<hash of the path>.json"), a new document by
# a key drawn when its workspace was made ("untitled-<time>-<random>.json"), so two sessions on
# new documents never share one. The entry holds the document as edited, its path (or none),
# the key and when it was kept. A RecoveryKeeper writes it from a thread of its own at most
# RECOVERY_INTERVAL_S after any change, whatever the rhythm of typing.


def new_recovery_key() -> str:
    """A key no other session draws: the time (sortable) and random digits."""
    return f"{time.strftime('%Y%m%d-%H%M%S')}-{uuid.uuid4().hex[:8]}"


def recovery_dir() -> Path:
    """The folder of recovery files: ``$LODELINE_STATE/recovery`` if set, otherwise
    ``$XDG_STATE_HOME/lodeline/recovery`` (``~/.local/state/lodeline/recovery``)."""
    if os.environ.get("LODELINE_STATE"):
        return Path(os.environ["LODELINE_STATE"]) / "recovery"
    base = os.environ.get("XDG_STATE_HOME") or str(Path.home() / ".local" / "state")
    return Path(base) / "lodeline" / "recovery"


def recovery_path(path: Path | None, key: str | None = None) -> Path:
    """The recovery file of document ``path``, or of the new document with ``key``."""
    if path is None:
        return recovery_dir() / (f"untitled-{key}.json" if key else "untitled.json")
    digest = hashlib.sha256(str(path.resolve()).encode()).hexdigest()[:16]
    return recovery_dir() / f"{path.stem[:40]}-{digest}.json"


@dataclass(frozen=True)
class Recovery:
    """Unsaved changes found on disk: the document they belong to and when they were kept."""

    file: Path
    document_path: Path | None
    saved_at: float
    doc: Document
    key: str | None = None
    #: The process that kept it (``None`` in entries written before the pid was kept).
    pid: int | None = None


def _running(pid: int | None) -> bool:
    """True if process ``pid`` (not this one) is still running: its entry is being kept by
    a live session and is not offered to another."""
    if pid is None or pid == os.getpid() or pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    return True


def recovery_payload(workspace: Workspace) -> str:
    """The text of the workspace's recovery entry (JSON)."""
    payload = {
        "document_path": str(workspace.path.resolve()) if workspace.path else None,
        "key": None if workspace.path else workspace.recovery_key,
        "saved_at": time.time(),
        "pid": os.getpid(),
        "document": workspace.doc,
    }
    # default=str: a value JSON has no type for (a date object) is kept as its text
    return json.dumps(payload, ensure_ascii=False, default=str)  # the C encoder: no indent


def write_recovery(workspace: Workspace) -> Path:
    """Keep the workspace's unsaved document in its recovery file (atomic write)."""
    target = recovery_path(workspace.path, workspace.recovery_key)
    target.parent.mkdir(parents=True, exist_ok=True)
    # replaced whole by a rename; no fsync: a recovery file outlives a killed program, and
    # written several times a second it must not wait on the disk
    write_atomic(target, recovery_payload(workspace), durable=False)
    return target


def _read_entry(file: Path) -> Recovery | None:
    try:
        payload = json.loads(file.read_text(encoding="utf-8"))
        doc = payload["document"]
        if not isinstance(doc, dict):
            return None
        where = payload.get("document_path")
        key = payload.get("key")
        pid = payload.get("pid")
        return Recovery(
            file=file,
            document_path=Path(where) if where else None,
            saved_at=float(payload.get("saved_at") or 0.0),
            doc=doc,
            key=key if isinstance(key, str) else None,
            pid=pid if isinstance(pid, int) and not isinstance(pid, bool) else None,
        )
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return None


def read_recovery(path: Path | None) -> Recovery | None:
    """Return the unsaved changes kept for document ``path``, or ``None`` (for ``None``:
    the newest entry of a new document, see :func:`untitled_recoveries`).

    A recovery file that cannot be read is left in place and ignored.
    """
    if path is None:
        found = untitled_recoveries()
        return found[0] if found else None
    return _read_entry(recovery_path(path))


def list_recoveries() -> list[Recovery]:
    """Every recovery entry that can be read, newest first."""
    try:
        files = sorted(recovery_dir().glob("*.json"))
    except OSError:
        return []
    found = [entry for entry in map(_read_entry, files) if entry is not None]
    return sorted(found, key=lambda e: e.saved_at, reverse=True)


def untitled_recoveries() -> list[Recovery]:
    """The entries of new documents (never saved to a file), newest first; those another
    running session is keeping are left to it."""
    return [
        entry
        for entry in list_recoveries()
        if entry.document_path is None and not _running(entry.pid)
    ]


def discard_recovery(path: Path | None, key: str | None = None) -> None:
    """Remove the recovery file of document ``path`` (or new document ``key``) if any."""
    with contextlib.suppress(FileNotFoundError):
        recovery_path(path, key).unlink()


#: Seconds after a change within which the recovery entry is written (the typing that can be
#: lost in a crash is what came in the last RECOVERY_INTERVAL_S plus one write).
RECOVERY_INTERVAL_S = 0.1


class RecoveryKeeper:
    """Keeps a workspace's recovery entry current from a thread of its own.

    :meth:`changed` (called on every edit) only sets a flag; the thread writes the document
    as it then is at most :data:`RECOVERY_INTERVAL_S` later, and again after each further
    interval while changes keep coming: a keystroke never pushes the write back, and the
    writing (JSON, fsync) never runs on the caller's thread. A clean workspace has its entry
    removed. ``on_error`` is called (from the thread) with the message of a failed write.
    """

    def __init__(self, workspace: Workspace, on_error: Any = None) -> None:
        self.workspace = workspace
        self.on_error = on_error
        self._wake = threading.Condition()
        self._io = threading.Lock()
        self._pending = False
        self._stopped = False
        self._thread: threading.Thread | None = None
        #: Changes counted, and the count at the last discard: the thread writes nothing
        #: for changes a discard has already dealt with (quit without saving).
        self._changes = 0
        self._discarded_at = -1

    def changed(self) -> None:
        """The document changed: write it within the interval."""
        with self._wake:
            self._pending = True
            self._changes += 1
            if self._thread is None:
                self._thread = threading.Thread(
                    target=self._run, name="lodeline-recovery", daemon=True
                )
                self._thread.start()
            self._wake.notify()

    def write_now(self) -> None:
        """Write (or remove) the entry at once, on the caller's thread."""
        with self._wake:
            self._pending = False
        self._keep()

    def discard(self, path: Path | None = None, key: str | None = None) -> None:
        """Remove the workspace's entry (and that of ``path``/``key`` if given) and forget
        a pending write; waits for a write in progress."""
        with self._wake:
            self._pending = False
            self._discarded_at = self._changes
        with self._io:
            ws = self.workspace
            discard_recovery(ws.path, ws.recovery_key)
            discard_recovery(None, ws.recovery_key)
            if path is not None or key is not None:
                discard_recovery(path, key)

    def stop(self) -> None:
        """End the thread (what is pending is written first)."""
        with self._wake:
            self._stopped = True
            self._wake.notify()
        if self._thread is not None:
            self._thread.join(timeout=5)

    def _run(self) -> None:
        while True:
            with self._wake:
                while not self._pending and not self._stopped:
                    self._wake.wait()
                if self._stopped and not self._pending:
                    return
            time.sleep(RECOVERY_INTERVAL_S)  # more keystrokes join this write
            with self._wake:
                self._pending = False
                changes = self._changes
            self._keep(changes)

    def _keep(self, changes: int | None = None) -> None:
        with self._io:
            if changes is not None and changes <= self._discarded_at:
                return  # discarded since
            ws = self.workspace
            try:
                if ws.dirty:
                    write_recovery(ws)
                else:
                    discard_recovery(ws.path, ws.recovery_key)
            except Exception as err:  # a full disk must not end the editing
                if self.on_error is not None:
                    self.on_error(str(err))
