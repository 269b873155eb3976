"""The lodeline terminal application: the App, its keys and its commands.

The App owns the :class:`~tui.workspace.Workspace` (the document, its file and its history)
and the actions that act on the whole document: save, save as, undo, redo, export, report,
key guide, quit. The desk screen (:mod:`tui.screens.desk`) shows and edits the document;
dialogs ask the questions (:mod:`tui.dialogs`). Numbers come from :mod:`geo` through
:mod:`tui.results`; nothing here computes a bearing.
"""

from __future__ import annotations

import asyncio
import contextlib
import datetime as _dt
import gc
import re
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from textual import events
from textual.app import App, SystemCommand
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import Input

from lodeline.geo.errors import DocumentError, LodelineError

from .dialogs.choice import ChoiceDialog
from .dialogs.file_prompt import FileNamePrompt
from .screens.desk import Desk
from .screens.key_guide import KeyGuide
from .widgets.call_table import CallTable
from .widgets.sketch import TraverseSketch
from .workspace import (
    RecoveryKeeper,
    Workspace,
    new_document,
    read_recovery,
    saveable_document,
    untitled_recoveries,
    write_recovery,
)

DOCUMENT_SUFFIXES = (".toml", ".json")


#: Not empty once the start-up heap has been frozen out of the collector (once a process).
_FROZEN: list[bool] = []


def load_workspace(path: Path | None) -> Workspace:
    """A workspace on document ``path``: read it if it exists (calls that do not read are
    kept), or a new document to be saved there.

    A document the schema refuses (a latitude of 95, a course with a negative distance, a
    misspelt key) opens as written: the desk marks what is wrong and saving waits until it is
    valid. Settings and courses can be put right here; a key the format does not know has to
    be removed from the file itself. Raises :class:`DocumentError` for a file that
    is not a traverse document at all (not TOML or JSON, another format_version, no table of
    courses), before any screen opens.
    """
    from lodeline.geo.document import document_to_dict, load_document

    if path is None:
        return Workspace(doc=new_document())
    if path.suffix.lower() not in DOCUMENT_SUFFIXES:
        raise DocumentError("a traverse document ends in .toml or .json", file=str(path))
    if not path.exists():
        return Workspace(doc=new_document(), path=path)
    try:
        doc = document_to_dict(load_document(path, check=False))
    except DocumentError as refused:
        doc = _as_written(path)
        if doc is None:
            raise refused from None
    doc["course"] = [dict(c) for c in doc.get("course") or ()] or [{"call": ""}]
    return Workspace(doc=doc, path=path)


def _as_written(path: Path) -> dict[str, Any] | None:
    """The data of a TOML or JSON file that has the shape of a traverse document of a
    format_version this version reads (tables where the document has tables, a list of
    course tables), with dates as text, or ``None``."""
    from lodeline.geo.document import load_mapping, plain_values

    try:
        data = load_mapping(path)
    except DocumentError:
        return None
    if not _has_document_shape(data):
        return None
    return plain_values(data)


def restore_problem(doc: Any) -> str | None:
    """Why the document of a recovery file cannot be restored into the desk, or ``None``:
    it must have a document's shape, and computing its findings must not fail unforeseen
    (a problem of the document itself is shown as usual, not refused here)."""
    from .results import compute_results, compute_safely

    if not _has_document_shape(doc):
        return "it does not hold a traverse document of a format_version this version reads"
    _results, ok = compute_safely(lambda: compute_results(doc), doc)
    if not ok:
        from .results import error_log_path

        return f"computing it fails unforeseen (details in {error_log_path()})"
    return None


def _has_document_shape(data: Any) -> bool:
    """Tables where the document has tables, a list of course tables, a format_version this
    version reads."""
    from lodeline.geo.document import READABLE_VERSIONS

    if not isinstance(data, dict) or data.get("format_version") not in READABLE_VERSIONS:
        return False
    if any(
        not isinstance(data.get(key, {}), dict) for key in ("place", "grid", "record", "target")
    ):
        return False
    courses = data.get("course", [])
    return isinstance(courses, list) and all(isinstance(c, dict) for c in courses)


def set_aside(file: Path) -> Path:
    """Rename recovery ``file`` so it is no longer offered; return the new name
    (``NAME.unrestorable-YYYYMMDD-HHMMSS.json`` beside it)."""
    stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    target = file.with_name(f"{file.stem}.unrestorable-{stamp}{file.suffix}")
    n = 1
    while target.exists():
        n += 1
        target = file.with_name(f"{file.stem}.unrestorable-{stamp}-{n}{file.suffix}")
    file.rename(target)
    return target


_FOUND_KEYS = {
    "e": "easting",
    "easting": "easting",
    "n": "northing",
    "northing": "northing",
    "lat": "lat",
    "latitude": "lat",
    "lon": "lon",
    "longitude": "lon",
}


def parse_found(text: str) -> dict[str, float] | str | None:
    """Read a found position typed as ``easting=…, northing=…`` (``E=… N=…``), ``lat=…,
    lon=…`` or two bare numbers (easting northing). Text that does not read is returned as
    typed (the document check then names the course and key); empty text gives ``None``."""
    text = text.strip()
    if not text:
        return None
    parts = [p for p in re.split(r"[,\s;]+", text) if p]
    try:
        if all("=" not in p for p in parts) and len(parts) == 2:
            return {"easting": float(parts[0]), "northing": float(parts[1])}
        out: dict[str, float] = {}
        for part in parts:
            key, _, value = part.partition("=")
            out[_FOUND_KEYS[key.strip().lower()]] = float(value)
        return out
    except (KeyError, ValueError):
        return text


def key_guide_tasks() -> list[tuple[str, list[Binding]]]:
    """The keys of the desk grouped by what the user is doing (the F1 guide)."""

    def keys(*rows: tuple[str, str]) -> list[Binding]:
        return [Binding(key, "", what) for key, what in rows]

    return [
        (
            "enter a deed",
            keys(
                ("f2", "Job form: place, record date, unit (Tab: next)"),
                ("f3", "The calls: the table, one course a line"),
                ("enter", "Edit the call here; Enter again: done"),
                ("escape", "Leave the editor, back to the table"),
                ("a", "Add a course after this one, type its call"),
            )
            + [Binding("N", "", "A call typed here goes into a new course", key_display="N S 0-9…")]
            + keys(
                ("i", "Insert a course above this one"),
                ("delete,x", "Delete this course"),
                ("left_square_bracket,right_square_bracket", "Move this course up / down"),
                ("b", "Back bearing read at the far end"),
                ("n", "Note of this course"),
                ("e", "Points every so far along this course"),
                ("ctrl+z", "Undo"),
                ("ctrl+y", "Redo"),
            ),
        ),
        (
            "mark found corners",
            keys(
                ("f", "Found position of this course's end"),
                ("f5", "Found corners from a receiver's file (GPX…)"),
                ("ctrl+t", "Corners and stakeout: the lines to run"),
                ("r", "There: proportion or rotate-scale restoring"),
                ("o", "There: run from nearest found / last corner"),
                ("f4", "Findings: closure, attraction, fit, sketch"),
                ("0", "Fit the whole figure in the sketch"),
                ("plus,minus", "Zoom the sketch in / out"),
                ("left,right,up,down", "Pan the sketch"),
            ),
        ),
        (
            "export for the field",
            keys(
                ("ctrl+s", "Save (the previous file kept as .bak)"),
                ("f9", "Save under a new name"),
                ("f6", "GeoJSON of the stations and lines"),
                ("f7", "CSV of stations and courses"),
                ("f8", "Report with the cautions"),
                ("f10", "The new description"),
                ("f12", "The plot list and events"),
                ("w", "On a description or plot sheet: write it"),
                ("ctrl+l", "Lay cruise lines and plots in this boundary"),
            ),
        ),
        (
            "anywhere",
            keys(
                ("f1", "This guide"),
                ("escape", "Close a sheet or dialog"),
                ("ctrl+p", "Command palette: every action by name"),
                ("ctrl+q", "Quit (asks about unsaved changes)"),
            ),
        ),
    ]


#: Longest wait (seconds) for a widget to take a key before the next one is read.
KEY_WAIT_S = 0.5


class LodelineApp(App[int]):
    """Edit a traverse and see its conversions, closure and sketch update as you type."""

    TITLE = "lodeline"
    ENABLE_COMMAND_PALETTE = True

    BINDINGS = [
        Binding("f1", "key_guide", "Keys"),
        Binding("ctrl+s", "save", "Save", priority=True),
        Binding("f9", "save_as", "Save as"),
        Binding("ctrl+z", "undo", "Undo", priority=True),
        Binding("ctrl+y", "redo", "Redo", priority=True),
        Binding("f6", "export('geojson')", "GeoJSON"),
        Binding("f7", "export('csv')", "CSV"),
        Binding("f8", "export('report')", "Report"),
        Binding("f5", "found_from", "Found from file"),
        Binding("f10", "sheet('description')", "Description"),
        Binding("f12", "sheet('plots')", "Plots"),
        Binding("ctrl+l", "layout", "Layout"),
        Binding("ctrl+q", "quit", "Quit", priority=True),
    ]

    def __init__(self, workspace: Workspace | None = None, *, start: bool = False) -> None:
        super().__init__()
        self.workspace = workspace or Workspace()
        self.parse_found = parse_found
        #: Show the start screen (new document, open a file, open a demo) first.
        self.start = start
        #: Writes the recovery entry from its own thread while the document is edited.
        self.recovery = RecoveryKeeper(self.workspace, on_error=self._recovery_failed)
        #: Quit was asked for while an output was being written: quit once it is written.
        self._quit_when_written = False

    # -- start -------------------------------------------------------------------------
    def on_mount(self) -> None:
        self.push_screen(Desk())
        if self.start:
            from .screens.start import StartScreen

            self.push_screen(StartScreen())
        self.call_after_refresh(self._offer_recovery)
        # Everything alive once the screen is up (Textual, the document, the models) lasts
        # the session: keep it out of the collector's full passes, which otherwise walk it
        # all every few hundred keystrokes and stall one of them by tens of milliseconds.
        if not _FROZEN:
            _FROZEN.append(True)
            self.call_after_refresh(gc.freeze)

    # -- keys, in order -------------------------------------------------------------------
    async def on_event(self, event: events.Event) -> None:
        """Keys act in the order they were typed. Textual hands a key to the focused widget's
        queue as it arrives but runs a priority binding (Enter leaving the call editor, the
        table's letters) at once, so in a burst (a fast typist, a paste through the terminal)
        an Enter used to act before the characters typed ahead of it had reached the call,
        and they then went into the next course the editor was put on (seen in tmux: a new
        document's first call lost its words to the second). So before any key other than a
        character typed into a text field, the focused widget first takes what it was given
        (a wait bounded by :data:`KEY_WAIT_S`: a busy widget delays keys, never stops them).
        Characters typed into a field go straight on, as fast as before."""
        if isinstance(event, events.Key) and not event.is_forwarded:
            target = self.focused
            if target is not None and not (isinstance(target, Input) and event.is_printable):
                done = asyncio.Event()
                if target.call_later(done.set):  # runs once the keys before it are taken
                    with contextlib.suppress(asyncio.TimeoutError):
                        await asyncio.wait_for(done.wait(), KEY_WAIT_S)
        await super().on_event(event)

    @property
    def desk(self) -> Desk:
        for screen in self.screen_stack:
            if isinstance(screen, Desk):
                return screen
        raise LookupError("the desk is not open")

    # -- the start screen's ways in -----------------------------------------------------
    def start_document(self, doc: dict[str, Any], *, path: Path | None) -> None:
        """Put ``doc`` (a new document, not yet saved) on the desk, cursor in its first call."""
        ws = Workspace(path=path)
        ws.replace(doc, label="new document")
        self._show_workspace(ws)

    def start_demo(self, demo: Path) -> None:
        """A copy of shipped demo ``demo`` on the desk (saving asks for a name here)."""
        shown = load_workspace(demo)
        self.start_document(shown.doc, path=None)
        self.notify(f"Demo {demo.stem}: a copy, saved only where you choose.", timeout=4)

    def open_path(self, path: Path) -> bool:
        """Open document ``path`` on the desk; ``False`` (and a message) if it cannot be."""
        try:
            ws = load_workspace(path)
        except LodelineError as err:
            self.notify(f"⚠ {err}", severity="error", timeout=8)
            return False
        self._show_workspace(ws)
        self.call_after_refresh(self._offer_recovery)
        return True

    def _show_workspace(self, ws: Workspace) -> None:
        self.workspace = ws
        desk = self.desk
        desk.reload()
        desk.focus_start()

    def _offer_recovery(self) -> None:
        ws = self.workspace
        if ws.path is None:  # a new document: each unsaved new document kept, newest first
            self._offer_untitled(untitled_recoveries())
            return
        found = read_recovery(ws.path)
        if found is None or found.doc == ws.doc:
            return
        when = _dt.datetime.fromtimestamp(found.saved_at).strftime("%Y-%m-%d %H:%M")
        name = str(ws.path) if ws.path else "a new document"
        problem = restore_problem(found.doc)
        if problem is not None:
            self._offer_set_aside(found.file, name, when, problem)
            return

        def answered(answer: str | None) -> None:
            if answer == "restore":
                ws.replace(found.doc, label="restore unsaved changes")
                self.desk.reload()
                self.notify("Unsaved changes restored (Ctrl+Z undoes the restore).")
            elif answer == "discard":
                self.recovery.discard()
                self.notify("Kept changes discarded.")

        self.push_screen(
            ChoiceDialog(
                "Unsaved changes found",
                f"Changes to {name} that were not saved (kept {when}) were found, probably "
                "after a crash. Restore them?",
                [("restore", "Restore them"), ("discard", "Discard them")],
            ),
            answered,
        )

    def _leave_start_screen(self) -> None:
        """Close the start screen if it is open (a restored document is shown on the desk)."""
        from .screens.start import StartScreen

        for screen in list(self.screen_stack):
            if isinstance(screen, StartScreen):
                screen.dismiss(None)

    def _offer_set_aside(self, file: Path, name: str, when: str, problem: str) -> None:
        """A recovery file that cannot be restored: keep it aside (renamed) or discard it,
        never replay it into the desk."""

        def answered(answer: str | None) -> None:
            if answer == "aside":
                try:
                    aside = set_aside(file)
                except OSError as err:
                    self.notify(f"⚠ cannot rename {file}: {err}", severity="error", timeout=8)
                    return
                self.notify(f"Kept aside as {aside}", timeout=6)
            elif answer == "discard":
                with contextlib.suppress(FileNotFoundError):
                    file.unlink()
                self.notify("Kept changes discarded.")

        self.push_screen(
            ChoiceDialog(
                "Unsaved changes that cannot be restored",
                f"Changes to {name} that were not saved (kept {when}) were found, but they "
                f"cannot be opened here: {problem}. Keep the file aside (renamed, to read or "
                "mend by hand) and start afresh?",
                [("aside", "Keep it aside"), ("discard", "Discard it")],
            ),
            answered,
        )

    def _offer_untitled(self, entries: list[Any]) -> None:
        """Offer the kept new documents one by one until one is restored."""
        if not entries:
            return
        found, rest = entries[0], entries[1:]
        ws = self.workspace
        when = _dt.datetime.fromtimestamp(found.saved_at).strftime("%Y-%m-%d %H:%M:%S")
        more = f" ({len(rest)} more after this one)" if rest else ""

        def answered(answer: str | None) -> None:
            if answer == "restore":
                ws.replace(found.doc, label="restore unsaved changes")
                if found.key:
                    ws.recovery_key = found.key  # edits go on in the same entry
                self._leave_start_screen()
                self.desk.reload()
                self.desk.focus_start()
                later = (
                    f" {len(rest)} more unsaved new document(s) are kept; they are offered "
                    "when lodeline next starts on a new document."
                    if rest
                    else ""
                )
                self.notify(f"Unsaved changes restored (Ctrl+Z undoes the restore).{later}")
                return
            if answer == "discard":
                found.file.unlink(missing_ok=True)
            self._offer_untitled(rest)

        self.push_screen(
            ChoiceDialog(
                "Unsaved changes found",
                f"A new document that was not saved (kept {when}) was found, probably after "
                f"a crash{more}. Restore it?",
                [
                    ("restore", "Restore it"),
                    ("discard", "Discard it"),
                    ("later", "Keep it for later"),
                ],
            ),
            answered,
        )

    # -- recovery ----------------------------------------------------------------------
    def keep_recovery(self) -> None:
        """Keep unsaved changes in the recovery file now (or remove it when all is saved)."""
        self.recovery.write_now()

    def _recovery_failed(self, message: str) -> None:
        """A recovery write failed in the keeper's thread: say so on the desk."""
        with contextlib.suppress(RuntimeError):  # the app has stopped
            self.call_from_thread(
                self.notify, f"⚠ cannot keep the recovery file: {message}", severity="warning"
            )

    def after_crash(self) -> int:
        """After the application stopped on an unforeseen error: keep the unsaved changes in
        the recovery file, say where, and return the exit status (1)."""
        import sys

        ws = self.workspace
        kept = ""
        if ws.dirty:
            try:
                kept = f"; the unsaved changes are kept in {write_recovery(ws)}"
            except (OSError, LodelineError, TypeError, ValueError) as err:
                kept = f"; the unsaved changes could not be kept ({err})"
        print(f"lodeline: the desk stopped on an unforeseen error{kept}", file=sys.stderr)
        return 1

    # -- commands ----------------------------------------------------------------------
    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        yield from super().get_system_commands(screen)
        commands = [
            (
                "Save",
                "Write the document (Ctrl+S); the previous file is kept as .bak",
                self.action_save,
            ),
            ("Save as…", "Write the document under a new name (F9)", self.action_save_as),
            ("Undo", "Undo the last edit (Ctrl+Z)", self.action_undo),
            ("Redo", "Redo the last undone edit (Ctrl+Y)", self.action_redo),
            (
                "Export GeoJSON…",
                "Write the traverse as GeoJSON (F6)",
                lambda: self.action_export("geojson"),
            ),
            (
                "Export CSV…",
                "Write stations and courses as CSV (F7)",
                lambda: self.action_export("csv"),
            ),
            (
                "Write report…",
                "Write the retracement report (F8)",
                lambda: self.action_export("report"),
            ),
            (
                "Found corners from a point file…",
                "Set found positions from a receiver's CSV, GeoJSON or GPX file (F5)",
                self.action_found_from,
            ),
            (
                "New description",
                "Show the figure written as a description; w writes it to a file (F10)",
                lambda: self.action_sheet("description"),
            ),
            (
                "Plots and events",
                "Show the plot list and the events along the lines (F12)",
                lambda: self.action_sheet("plots"),
            ),
            (
                "Cruise layout…",
                "Lay parallel cruise lines and plots across this boundary (Ctrl+L)",
                self.action_layout,
            ),
            ("Key guide", "Every key, and the cautions (F1)", self.action_key_guide),
            (
                "Corners and stakeout",
                "Found, restored and record-only corners, the stakeout list, the survey date "
                "and the declination history (Ctrl+T)",
                self.desk.action_retrace_sheet,
            ),
            (
                "Show job",
                "Bring the job settings forward (F2)",
                lambda: self.desk.action_pane("job"),
            ),
            (
                "Show calls",
                "Bring the call table forward (F3)",
                lambda: self.desk.action_pane("calls"),
            ),
            (
                "Show findings",
                "Bring the findings and sketch forward (F4)",
                lambda: self.desk.action_pane("findings"),
            ),
            (
                "Fit sketch",
                "Frame the whole figure in the sketch (0 in the sketch)",
                lambda: self.desk.query_one(TraverseSketch).action_fit(),
            ),
            (
                "Add course",
                "Add a course after the current one (a)",
                lambda: self._table_action("add_after"),
            ),
            (
                "Insert course",
                "Insert a course above the current one (i)",
                lambda: self._table_action("insert_before"),
            ),
            (
                "Delete course",
                "Delete the current course (Delete or x)",
                lambda: self._table_action("delete_course"),
            ),
            (
                "Move course up",
                "Move the current course up (Alt+Up or [)",
                lambda: self._table_action("move", -1),
            ),
            (
                "Move course down",
                "Move the current course down (Alt+Down or ])",
                lambda: self._table_action("move", 1),
            ),
            (
                "Edit call",
                "Edit the current call (Enter)",
                lambda: self._table_action("edit", "call"),
            ),
            (
                "Edit back bearing",
                "Edit the back bearing of the current course (b)",
                lambda: self._table_action("edit", "back"),
            ),
            (
                "Edit found position",
                "Edit the found position of the current course (f)",
                lambda: self._table_action("edit", "found"),
            ),
            (
                "Edit every",
                "Edit the spacing of points along the current course (e)",
                lambda: self._table_action("edit", "every"),
            ),
            (
                "Edit note",
                "Edit the note of the current course (n)",
                lambda: self._table_action("edit", "note"),
            ),
            (
                "Quit",
                "Leave lodeline, asking first about unsaved changes (Ctrl+Q)",
                self.action_quit,
            ),
        ]
        for title, help_text, callback in commands:
            yield SystemCommand(title, help_text, callback)

    def _table_action(self, name: str, *args: Any) -> None:
        table = self.desk.query_one(CallTable)
        getattr(table, f"action_{name}")(*args)

    # -- actions -----------------------------------------------------------------------
    def action_key_guide(self) -> None:
        """Show the keys by task, and the cautions."""
        self.push_screen(KeyGuide(key_guide_tasks()))

    def action_sheet(self, name: str) -> None:
        """Show the new description or the plot list and events (tui.screens.sheets)."""
        from .screens.sheets import DescriptionSheet, PlotSheet

        self.push_screen(DescriptionSheet() if name == "description" else PlotSheet())

    def action_layout(self) -> None:
        """Ask for a cruise layout's options and file, and write the layout document."""
        from . import outputs
        from .dialogs.layout_form import LayoutForm

        ws = self.workspace
        stem = ws.path.with_suffix("") if ws.path else Path("boundary")

        def asked(options: dict[str, str] | None) -> None:
            if options is None:
                return
            prompt = FileNamePrompt("Write cruise lines", f"{stem}-lines.toml", DOCUMENT_SUFFIXES)

            def chosen(path: Path | None) -> None:
                if path is None:
                    return
                try:
                    written = outputs.write_layout(
                        ws.doc, path, options, file=ws.path, replace=prompt.replace
                    )
                except LodelineError as err:
                    self.notify(f"⚠ Layout: not written: {err}", severity="error", timeout=8)
                    return
                self.notify(f"Written: {', '.join(str(p) for p in written)}", timeout=4)

            self.push_screen(prompt, chosen)

        self.push_screen(LayoutForm(), asked)

    def action_undo(self) -> None:
        """Undo the last edit of the document."""
        label = self.workspace.undo()
        self._after_history(label, "Undone", "nothing to undo")

    def action_redo(self) -> None:
        """Redo the last undone edit."""
        label = self.workspace.redo()
        self._after_history(label, "Redone", "nothing to redo")

    def _after_history(self, label: str | None, verb: str, none: str) -> None:
        if label is None:
            self.notify(none.capitalize(), severity="warning", timeout=2)
            return
        self.desk.reload()
        self.desk.schedule_recompute()
        self.notify(f"{verb}: {label}", timeout=2)

    def action_save(self) -> None:
        """Save to the document's file (Save as when it has none)."""
        if self.workspace.path is None:
            self.action_save_as()
            return
        self.save_to(self.workspace.path)

    def save_to(self, path: Path) -> bool:
        """Write the document to ``path`` atomically (previous file kept as .bak)."""
        from lodeline.geo.document import document_from_dict, save_document

        ws = self.workspace
        try:
            doc = document_from_dict(saveable_document(ws.doc), file=path.name, check=False)
            # the text the document was opened from is edited, so its comments are kept
            save_document(doc, path, base=ws.path, fresh=ws.path is None)
        except LodelineError as err:
            self.notify(
                f"⚠ Not saved: {err}. Your changes are kept in the recovery file.",
                severity="error",
                timeout=8,
            )
            self.keep_recovery()
            return False
        old, old_key = ws.path, ws.recovery_key
        ws.mark_saved(path)
        self.recovery.discard(old, old_key)  # the new file's entry and the old one
        desk = self.desk
        desk.update_docbar()
        current = desk.results is not None and desk.applied[0] == ws.revision
        problems = desk.results.problem_count if current else 0
        note = (
            f" ({problems} problem{'s' if problems != 1 else ''} still marked ✗)"
            if problems
            else ""
        )
        self.notify(f"Saved {path}{note}", timeout=3)
        return True

    def action_save_as(self) -> None:
        """Ask for a file name and save there (never replacing a file without asking)."""
        suggestion = self.suggested_name()

        def chosen(path: Path | None) -> None:
            if path is not None:
                self.save_to(path)

        self.push_screen(FileNamePrompt("Save as", suggestion, DOCUMENT_SUFFIXES), chosen)

    def suggested_name(self) -> str:
        """The file name offered by Save as: the document's own, else one made from its
        title ("Glen Tract, 1854" -> glen_tract_1854.toml), else traverse.toml."""
        ws = self.workspace
        if ws.path is not None:
            return str(ws.path)
        title = str(ws.doc.get("title") or "")
        stem = re.sub(r"[^0-9a-z]+", "_", title.lower()).strip("_")[:60]
        if not stem or stem == "untitled_traverse":
            stem = "traverse"
        return f"{stem}.toml"

    def action_export(self, kind: str) -> None:
        """Ask for a file name and write the GeoJSON, CSV or report there."""
        from . import outputs

        spec = outputs.OUTPUTS[kind]
        ws = self.workspace
        stem = Path(self.suggested_name()).with_suffix("")
        prompt = FileNamePrompt(
            spec.title,
            f"{stem}{spec.suffixes[0]}",
            spec.suffixes,
            companions=lambda path: outputs.companions(kind, path),
        )

        def chosen(path: Path | None) -> None:
            if path is None:
                return
            doc, file, replace = ws.doc, ws.path, prompt.replace
            # off the main thread: a large export takes seconds, and the keys stay live
            self.run_worker(
                lambda: self._write_output(kind, doc, path, file, replace),
                thread=True,
                group="output",
                exit_on_error=False,
            )

        self.push_screen(prompt, chosen)

    def _write_output(
        self, kind: str, doc: dict[str, Any], path: Path, file: Path | None, replace: bool
    ) -> None:
        """Write one output (in a worker thread) and say how it went."""
        from . import outputs

        title = outputs.OUTPUTS[kind].title
        try:
            written = outputs.write_output(kind, doc, path, file=file, replace=replace)
        except LodelineError as err:
            message, severity = f"⚠ {title}: not written: {err}", "error"
        else:
            message, severity = f"Written: {', '.join(str(p) for p in written)}", "information"
        self.call_from_thread(self._written, message, severity)

    def _outputs_being_written(self) -> int:
        """How many outputs (GeoJSON, CSV, report) are still being written."""
        return sum(1 for w in self.workers if w.group == "output" and not w.is_finished)

    def _written(self, message: str, severity: str) -> None:
        """Say how an output went; then, if quit was asked for meanwhile, quit when every
        output is written, or stay, to show why, if this one was refused."""
        ok = severity == "information"
        self.notify(message, severity=severity, timeout=4 if ok else 8)
        if not self._quit_when_written:
            return
        if not ok:
            self._quit_when_written = False
            self.notify("Not quitting: an output was not written (the message says why).")
        elif self._outputs_being_written() <= 1:  # this one's worker is ending
            self.exit(0)

    def _quit(self) -> None:
        """Quit, or, while an output is being written, say so and quit once it is written
        (an output is written whole or not at all; quitting never leaves half a file, and
        the desk says why it has not gone yet instead of looking stuck)."""
        busy = self._outputs_being_written()
        if not busy:
            self.exit(0)
            return
        self._quit_when_written = True
        self.notify(
            f"Quitting once the {'output' if busy == 1 else f'{busy} outputs'} being written "
            f"{'is' if busy == 1 else 'are'} written (never half a file).",
            timeout=30,
        )

    def action_found_from(self) -> None:
        """Set found corners from a point file (see :mod:`tui.found_from`)."""
        from .found_from import found_from_file

        found_from_file(self)

    async def action_quit(self) -> None:
        """Quit, asking first when there are unsaved changes."""
        ws = self.workspace
        if not ws.dirty:
            self.recovery.discard()
            self._quit()
            return

        def answered(answer: str | None) -> None:
            if answer == "save":
                if ws.path is None:

                    def chosen(path: Path | None) -> None:
                        if path is not None and self.save_to(path):
                            self._quit()

                    self.push_screen(
                        FileNamePrompt("Save as", self.suggested_name(), DOCUMENT_SUFFIXES),
                        chosen,
                    )
                elif self.save_to(ws.path):
                    self._quit()
            elif answer == "discard":
                self.recovery.discard()
                self._quit()

        self.push_screen(
            ChoiceDialog(
                "Unsaved changes",
                "The document has changes that are not saved.",
                [
                    ("save", "Save and quit"),
                    ("discard", "Discard changes and quit"),
                    ("cancel", "Cancel: keep working"),
                ],
            ),
            answered,
        )
