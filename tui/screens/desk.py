"""The desk: the main screen, with the job form, the call table and the findings.

The arrangement follows the terminal (see :func:`arrangement`):

- ``wide`` (240 columns or more): job | calls | findings, side by side;
- ``side`` (150-239): calls | findings, the job taking the findings' place on F2 (at 200
  columns the calls keep room for a long call beside every bearing);
- ``stacked`` (100-149 columns and 30 rows or more): calls above, the findings below in three
  columns (field and grid | closure, attraction, fit | sketch); F2 puts the job beside the
  calls instead of the findings, F4 brings the findings back;
- ``single`` (smaller, e.g. 80x24): one pane fills the screen; F2, F3, F4 switch.

F2, F3 and F4 bring the job, the calls and the findings forward in every arrangement.
"""

from __future__ import annotations

import contextlib
import gc
import time
from collections.abc import Callable, Iterator
from typing import TYPE_CHECKING

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.reactive import reactive
from textual.screen import Screen
from textual.timer import Timer
from textual.widget import Widget
from textual.widgets import Footer, Input, Static
from textual.worker import get_current_worker

from ..results import (
    MARK_BAD,
    Results,
    closure_stage,
    compute_safely,
    conversion_stage,
    plain_rows,
)
from ..widgets.call_table import FIELD_TITLES, CallEditor, CallInput, CallTable
from ..widgets.findings import FindingsPanel, SteadyText, set_text
from ..widgets.job_form import JobForm
from ..widgets.sketch import TraverseSketch
from ..workspace import (
    COURSE_FIELDS,
    course_call_text,
    distance_unit_of,
    is_blank_course,
    read_pasted,
)

if TYPE_CHECKING:
    from ..app import LodelineApp

#: Seconds of quiet typing before the findings are recomputed: at least this, and at least
#: as long as the last recomputation took (so a long document is not recomputed between
#: every two keystrokes of quick typing), at most DEBOUNCE_MAX_S.
DEBOUNCE_S = 0.03
DEBOUNCE_MAX_S = 0.5
#: Seconds of quiet typing before the sketch is drawn again: while the user types, each
#: keystroke's frame shows the table and panels, and the sketch follows the pause.
SKETCH_PAUSE_S = 0.2
#: Documents with more courses than this are computed in a thread.
THREAD_ABOVE = 1000

#: Width of the job form when it takes the findings' place beside the calls: room for
#: each label beside its field (see tui.widgets.job_form.TWO_COLUMNS_FROM).
JOB_BESIDE_WIDTH = 60

PANELS = (
    ("field", "Field at the beginning"),
    ("grid", "Grid"),
    ("closure", "Closure"),
    ("attraction", "Local attraction"),
    ("fit", "Record-to-found fit"),
)


def arrangement(width: int, height: int) -> str:
    """The arrangement of the desk for a terminal of ``width`` x ``height`` cells."""
    if width >= 240:
        return "wide"
    if width >= 150:
        return "side"
    if width >= 100 and height >= 30:
        return "stacked"
    return "single"


class Desk(Screen):
    """The main screen: job form, call table with its editor, findings and sketch."""

    # Priority: the focus moves before the next key is read (typing straight after F2 goes
    # into the job form).
    BINDINGS = [
        Binding("f2", "pane('job')", "Job", priority=True),
        Binding("f3", "pane('calls')", "Calls", priority=True),
        Binding("f4", "pane('findings')", "Findings", priority=True),
        Binding("ctrl+t", "retrace_sheet", "Stakeout"),
    ]

    DEFAULT_CSS = """
    Desk #docbar { height: 1; padding: 0 1; background: $panel; }
    Desk #panes { height: 1fr; }
    Desk #job { width: 34; border: round $foreground 30%; }
    Desk #main { width: 1fr; }
    Desk #calls { width: 1fr; height: 1fr; border: round $foreground 30%; }
    Desk #findings { border: round $foreground 30%; }
    Desk #job:focus-within, Desk #calls:focus-within, Desk #findings:focus-within {
        border: heavy $accent;
    }
    Desk #bottom { dock: bottom; height: 1; }
    Desk #keyboard { width: auto; max-width: 50%; height: 1; padding: 0 1;
                     background: $accent; color: $text; text-style: bold; }
    Desk #bottom Footer { width: 1fr; dock: none; }
    Desk #calls CallTable { height: 1fr; }
    Desk #findings { width: 52; height: 1fr; }
    Desk #findings > Vertical { height: auto; }
    Desk #findings TraverseSketch { height: 22; border: round $foreground 30%; }
    Desk #sketch-key { height: auto; padding: 0 1; color: $text-muted; }
    """

    #: The pane brought forward last: "job", "calls" or "findings".
    pane = reactive("calls")
    #: The side pane shown beside the calls at medium width: "findings" or "job".
    side = reactive("findings")
    #: The arrangement for the terminal size: "wide", "side", "stacked" or "single".
    mode = "wide"

    def __init__(self) -> None:
        super().__init__()
        self._timer: Timer | None = None
        self._sketch_timer: Timer | None = None
        self._sketch_pending: tuple[Results, int] | None = None
        #: True while the results being computed come from typing (see :meth:`_apply`).
        self._typing = False
        self.results: Results | None = None
        self._editor_session = 0
        #: (revision, complete) of the results shown last; complete: every panel and the
        #: sketch show the final results.
        self.applied: tuple[int, bool] = (-1, False)
        #: Called with (revision, complete) after results are shown (the bench listens here).
        self.on_applied: Callable[[int, bool], None] | None = None
        #: False until the first document has been computed once (see :meth:`recompute`).
        self._computed_once = False
        #: True while the desk holds the cycle collector (see :meth:`_collector_waits`).
        self._holding_collector = False
        #: Seconds the last recomputation after typing took (see :data:`DEBOUNCE_S`).
        self._last_compute_s = 0.0

    @property
    def lode(self) -> LodelineApp:
        return self.app  # type: ignore[return-value]

    def compose(self) -> ComposeResult:
        yield Static("", id="docbar")
        with Horizontal(id="panes"):
            yield JobForm(id="job")
            with Horizontal(id="main"):
                with Vertical(id="calls") as calls:
                    calls.border_title = "Calls"
                    yield CallTable(id="table")
                    yield CallEditor(id="editor")
                with VerticalScroll(id="findings") as findings:
                    findings.border_title = "Findings"
                    with Vertical(id="findings-a"):
                        for key, title in PANELS[:2]:
                            yield FindingsPanel(title, id=f"panel-{key}")
                    with Vertical(id="findings-b"):
                        for key, title in PANELS[2:]:
                            yield FindingsPanel(title, id=f"panel-{key}")
                    with Vertical(id="findings-c"):
                        sketch = TraverseSketch(id="sketch")
                        sketch.border_title = "Sketch (to scale, grid north up)"
                        yield sketch
                        yield Static("", id="sketch-key")
        with Horizontal(id="bottom"):
            yield Static("", id="keyboard")
            yield Footer()

    def on_mount(self) -> None:
        table = self.query_one(CallTable)
        table.handler = self._table_request
        editor = self.query_one(CallEditor)
        editor.handler = self.on_call_editor_finished
        editor.edited_handler = self.on_call_editor_edited
        self.reload()
        self._arrange()
        self.focus_start()

    def focus_start(self) -> None:
        """The cursor in the first call of a new or empty document, else on the table."""
        table = self.query_one(CallTable)
        if all(is_blank_course(c) for c in self.lode.workspace.courses):
            table.move_cursor(row=0)
            self.open_editor(0, "call")
        else:
            self.set_focus(table)

    def _table_request(self, message: Message) -> None:
        """What the table asks for, done at once (see :attr:`CallTable.handler`)."""
        if isinstance(message, CallTable.EditRequested):
            self.on_call_table_edit_requested(message)
        elif isinstance(message, CallTable.StructureRequested):
            self.on_call_table_structure_requested(message)
        elif isinstance(message, CallTable.CallStarted):
            self.on_call_table_call_started(message)

    def on_descendant_focus(self, event) -> None:
        self.show_keyboard(event.widget)

    def show_keyboard(self, widget: Widget | None) -> None:
        """Say in the footer which pane has the keyboard and what the keys do there."""
        if isinstance(widget, CallTable):
            text = "⌨ call table: a call typed here is a new course"
        elif widget is not None and widget.id == "editor-input":
            editor = self.query_one(CallEditor)
            what = FIELD_TITLES.get(editor.field, editor.field)
            text = f"⌨ typing the {what} of course {editor.index + 1} (Enter: done)"
        elif widget is not None and self.query_one(JobForm) in widget.ancestors_with_self:
            text = "⌨ job form: typing a setting (Tab: next)"
        elif widget is not None:
            text = "⌨ findings and sketch (0 fits the sketch)"
        else:
            text = ""
        set_text(self.query_one("#keyboard", Static), text)

    def on_resize(self, _event) -> None:
        self._arrange()

    def watch_pane(self) -> None:
        self._arrange()

    def watch_side(self) -> None:
        self._arrange()

    def _arrange(self) -> None:
        """Show and lay out the panes for the terminal size.

        Sets styles on a few containers directly: a class on the screen would restyle every
        widget of the desk, which is slow enough to feel on a pane switch.
        """
        mode = arrangement(self.size.width, self.size.height)
        self.mode = mode
        if mode == "wide":
            shown = {"job", "calls", "findings"}
        elif mode in ("side", "stacked"):  # the job, when asked for, takes the findings' room
            shown = {"calls", self.side}
        else:
            shown = {self.pane}
        for name in ("job", "calls", "findings"):
            pane = self.query_one(f"#{name}")
            pane.display = name in shown
        stacked = mode == "stacked"
        main = self.query_one("#main")
        main.display = bool(shown & {"calls", "findings"})  # the job alone takes the width
        findings = self.query_one("#findings")
        main.styles.layout = "vertical" if stacked else "horizontal"
        findings.styles.layout = "horizontal" if stacked else "vertical"
        findings.styles.width = "1fr" if mode in ("stacked", "single") else 52
        findings.styles.height = max(16, self.size.height // 2 - 2) if stacked else "1fr"
        for column in findings.query("#findings > Vertical"):
            wide_column = column.id == "findings-c"
            column.styles.width = ("1fr" if wide_column else 34) if stacked else "100%"
            column.styles.height = "100%" if stacked else "auto"
            column.styles.overflow_y = "auto" if stacked else "hidden"
        sketch = self.query_one(TraverseSketch)
        sketch.styles.height = "1fr" if stacked else 22
        job_width = {"single": "1fr", "wide": 34}.get(mode, JOB_BESIDE_WIDTH)
        self.query_one("#job").styles.width = job_width

    # -- data flow -----------------------------------------------------------------------
    def reload(self) -> None:
        """Show the workspace's document afresh (after open, undo, redo, restore)."""
        ws = self.lode.workspace
        self.query_one(JobForm).load(ws.doc)
        table = self.query_one(CallTable)
        if table.row_count != len(ws.courses):
            table.show_rows(plain_rows(ws.doc))  # the calls at once; the numbers follow
        self.recompute()
        editor = self.query_one(CallEditor)
        courses = self.lode.workspace.courses
        if courses:
            # the editor's course may be gone (an undone insert): it moves to the last one,
            # as a new editing session (what is typed next is its own undo step)
            index, session = editor.index, editor.session
            if index >= len(courses):
                index = len(courses) - 1
                self._editor_session += 1
                session = self._editor_session
                table.move_cursor(row=index)
            editor.load(
                index, editor.field, self._field_text(courses[index], editor.field), session
            )
            self.show_keyboard(self.focused)

    def schedule_recompute(self) -> None:
        """Recompute once typing pauses (see :data:`DEBOUNCE_S`)."""
        if self._timer is not None:
            self._timer.stop()
        pause = min(max(DEBOUNCE_S, self._last_compute_s), DEBOUNCE_MAX_S)
        self._timer = self.set_timer(pause, self.recompute_typed)
        self.update_docbar()
        self._schedule_recovery()

    def _schedule_recovery(self) -> None:
        """The document changed: its recovery entry is written within 0.1 s, off this
        thread (see :class:`tui.workspace.RecoveryKeeper`)."""
        self.lode.recovery.changed()

    def recompute_typed(self) -> None:
        """:meth:`recompute` after a pause in typing: the sketch waits for a longer pause."""
        self.recompute(typed=True)

    def recompute(self, *, wait: bool = False, typed: bool = False) -> None:
        """Recompute every finding from the document and show it.

        A document of up to :data:`THREAD_ABOVE` courses is computed here and shown in one
        redraw. A larger one is computed in a thread, so the keyboard stays live: the
        conversion is shown as soon as it is ready, then the closure and fit. The first time
        a large document is shown (opening it), its conversion runs here right after the
        calls are painted, and its closure here right after the bearings are painted: both
        come quicker than from a thread sharing the processor with the screen's start-up.
        ``wait=True`` computes here and now whatever the size. ``typed``: the edit was typed, so the
        sketch is drawn after :data:`SKETCH_PAUSE_S` more of quiet typing.
        """
        self._timer = None
        self._typing = typed
        ws = self.lode.workspace
        first_time = not self._computed_once
        self._computed_once = True
        if wait or len(ws.courses) <= THREAD_ABOVE:
            # both stages, then one redraw: quicker than showing the conversion first
            started = time.perf_counter()
            with self._collector_waits():
                doc, path = ws.doc, ws.path
                results, _ok = compute_safely(
                    lambda: closure_stage(conversion_stage(doc, path=path)), doc
                )
                self._apply(results, ws.revision)
            if typed:  # what typing costs (a first computation also loads models and grids)
                self._last_compute_s = time.perf_counter() - started
            return
        # start after the next paint, so the screen is drawn before the computation
        if first_time:
            self.call_after_refresh(self._convert_then_close, ws.doc, ws.path, ws.revision)
        else:
            self.call_after_refresh(self._compute, ws.doc, ws.path, ws.revision)

    def _convert_then_close(self, doc: dict, path, revision: int) -> None:
        if revision != self.lode.workspace.revision:
            self.recompute()  # edited meanwhile: compute what is there now
            return
        with self._collector_waits():
            first, _ok = compute_safely(lambda: conversion_stage(doc, path=path), doc)
            self._apply(first, revision)
        if not first.final:
            # then the closure, here too once the bearings are painted: a worker thread would
            # share the processor with the screen's first frames and finish later
            self.call_after_refresh(self._close_here, first, revision)

    def _close_here(self, first: Results, revision: int) -> None:
        if revision == self.lode.workspace.revision:  # else the edit's recompute follows
            with self._collector_waits():
                doc = self.lode.workspace.doc
                self._apply(compute_safely(lambda: closure_stage(first), doc)[0], revision)

    @contextlib.contextmanager
    def _collector_waits(self) -> Iterator[None]:
        """Hold Python's collector of reference cycles until the screen has been painted:
        what a computation leaves is mostly freed as it goes, the rest can wait a frame, and
        a full collection in the middle of it would delay what the user is waiting for."""
        collecting = gc.isenabled() or self._holding_collector
        gc.disable()
        self._holding_collector = collecting
        try:
            yield
        finally:
            if collecting:
                # after the paint, or in a second at the latest (a callback after the
                # refresh can be dropped when a dialog closes first)
                if not self.call_after_refresh(self._release_collector):
                    self._release_collector()
                self.set_timer(1.0, self._release_collector)

    def _release_collector(self) -> None:
        if self._holding_collector:
            self._holding_collector = False
            gc.enable()

    # A description of our own: by default Textual writes the repr of every argument (the
    # whole document and its results), which takes most of a second for 5,000 courses.
    @work(thread=True, exclusive=True, group="compute", description="compute the findings")
    def _compute(self, doc: dict, path, revision: int) -> None:
        worker = get_current_worker()
        first, _ok = compute_safely(lambda: conversion_stage(doc, path=path), doc)
        if worker.is_cancelled:
            return
        self.app.call_from_thread(self._apply, first, revision)
        if first.final:
            return
        final, _ok = compute_safely(lambda: closure_stage(first), doc)
        if not worker.is_cancelled:
            self.app.call_from_thread(self._apply, final, revision)

    def _apply(self, results: Results, revision: int) -> None:
        """Show ``results`` if they belong to the document as it is now: the table and the
        panels in one redraw, then the sketch (the slowest to draw) in the next, or, while
        the user types, once typing pauses for :data:`SKETCH_PAUSE_S`."""
        if revision != self.lode.workspace.revision:
            return
        with self.app.batch_update():
            self._show(results)
        self.applied = (revision, False)
        if self.on_applied is not None:
            self.on_applied(revision, False)
        if self._sketch_timer is not None:
            self._sketch_timer.stop()
            self._sketch_timer = None
        if self._typing:
            self._sketch_timer = self.set_timer(
                SKETCH_PAUSE_S, lambda: self._show_sketch(results, revision)
            )
            self._sketch_pending = (results, revision)
        else:
            self.call_after_refresh(self._show_sketch, results, revision)

    def _show(self, results: Results) -> None:
        self.results = results
        self.query_one(CallTable).show_rows(results.rows)
        for key, _title in PANELS:
            panel = self.query_one(f"#panel-{key}", FindingsPanel)
            outcome = results.panels[key]
            panel.show(outcome.lines, error=outcome.error, idle=outcome.idle, hold=self._typing)
        form = self.query_one(JobForm)
        form.mark_invalid(results.invalid_settings)
        form.show_crs_hint(results.crs_hint)
        self._show_row_message()
        self.update_docbar()

    def flush_sketch(self) -> None:
        """Draw the sketch now if it is waiting for a pause in typing."""
        if self._sketch_timer is not None and self._sketch_pending is not None:
            self._sketch_timer.stop()
            self._show_sketch(*self._sketch_pending)

    def _show_sketch(self, results: Results, revision: int) -> None:
        self._sketch_timer = None
        self._sketch_pending = None
        if revision != self.lode.workspace.revision:
            return
        sketch = self.query_one(TraverseSketch)
        sketch.show_figure(results.sketch, results.sketch_message)
        if results.sketch is not None:
            sketch.border_title = f"Sketch (to scale, {results.sketch.up} up)"
        # no figure: no empty plot frame, only the reason
        sketch.display = results.sketch is not None
        key = (
            TraverseSketch.key_text(results.sketch)
            if results.sketch
            else f"Sketch: {results.sketch_message or 'no figure yet'}"
        )
        set_text(self.query_one("#sketch-key", Static), key)
        if results.final:
            self.applied = (revision, True)
            if self.on_applied is not None:
                self.on_applied(revision, True)

    def update_docbar(self) -> None:
        ws = self.lode.workspace
        name = str(ws.path) if ws.path else "new document"
        if ws.dirty:
            state = "● modified"
        elif ws.path is not None and ws.path.exists():
            state = "saved"
        else:
            state = "nothing typed yet, not saved"
        problems = ""
        if self.results is not None and self.results.problem_count:
            n = self.results.problem_count
            problems = f" · ✗ {n} problem{'s' if n != 1 else ''}"
        title = ws.doc.get("title") or ""
        set_text(
            self.query_one("#docbar", Static),
            f"lodeline · {name} · {state}{problems} · {title}   (F1 keys)",
        )

    def _show_row_message(self) -> None:
        results = self.results
        editor = self.query_one(CallEditor)
        if results is None:
            return
        index = editor.index
        message = ""
        if 0 <= index < len(results.rows):
            row = results.rows[index]
            if row.message:
                message = row.message
        editor.show_message(message, hold=self._typing)

    def release_heights(self) -> None:
        """Let the findings panels and the editor's message take the height of their text
        again (typing has stopped; while it goes on they keep their height)."""
        for panel in self.query(FindingsPanel):
            panel.release()
        self.query_one("#editor-message", SteadyText).release()

    def _field_text(self, course: dict, field: str) -> str:
        if field == "call":
            return course_call_text(course, distance_unit_of(self.lode.workspace.doc))
        value = course.get(field)
        if field == "found" and isinstance(value, dict):
            return ", ".join(f"{k}={v}" for k, v in value.items())
        return "" if value is None else str(value)

    # -- events from the widgets ---------------------------------------------------------
    def on_call_table_edit_requested(self, event: CallTable.EditRequested) -> None:
        self.open_editor(event.index, event.field)

    def open_editor(self, index: int, field: str = "call") -> None:
        """Put the editor on ``field`` of course ``index`` and focus it."""
        courses = self.lode.workspace.courses
        if not courses:
            return
        index = min(index, len(courses) - 1)
        self._editor_session += 1
        editor = self.query_one(CallEditor)
        editor.load(index, field, self._field_text(courses[index], field), self._editor_session)
        self._show_row_message()
        editor.focus_input()
        self.show_keyboard(self.focused)

    def on_call_table_call_started(self, event: CallTable.CallStarted) -> None:
        """A call typed on the table: it goes into the course under the cursor when that one
        is blank, else into a new course after it (no call typed there is ever overwritten),
        and the keys typed next follow it into the editor."""
        courses = self.lode.workspace.courses
        if not 0 <= event.index < len(courses):
            return
        index = event.index
        if is_blank_course(courses[index]):
            self.open_editor(index, "call")
        else:
            index += 1
            self.on_call_table_structure_requested(CallTable.StructureRequested("insert", index))
        editor = self.query_one(CallEditor)
        editor.query_one("#editor-input", Input).insert_text_at_cursor(event.character)
        editor.show_message(
            f"typed on the table: the call goes into course {index + 1} (Escape: back to the "
            "table; there a, i, x, b, f, e and n are commands, Ctrl+Z undoes)",
            hold=True,
        )

    def on_call_editor_edited(self, event: CallEditor.Edited) -> None:
        if not 0 <= event.index < len(self.lode.workspace.courses):
            return  # typed for a course an undo removed meanwhile (the editor has moved)
        value = event.value
        stored: object = value
        if event.field == "found":
            stored = self.lode.parse_found(value)
        self.lode.workspace.set_course_field(
            event.index, event.field, stored, session=event.session
        )
        self.schedule_recompute()

    def on_call_input_description_pasted(self, event: CallInput.DescriptionPasted) -> None:
        """A description pasted into the call editor: its courses replace the course being
        edited (one undo step), or the editor says what did not read and nothing changes."""
        event.stop()
        from lodeline.geo.errors import LodelineError

        editor = self.query_one(CallEditor)
        try:
            calls, settings, summary = read_pasted(event.text, self.lode.workspace.doc)
        except LodelineError as err:
            editor.show_message(f"✗ the pasted description does not read: {err.message}")
            return
        self.lode.workspace.put_description(editor.index, calls, settings)
        self._editor_session += 1
        editor.session = self._editor_session  # typing after the paste is a new undo step
        self.reload()
        editor.show_message(summary)

    def on_call_editor_finished(self, event: CallEditor.Finished) -> None:
        self._end_typing()
        self.flush_sketch()  # the call is done: the sketch need not wait
        editor = self.query_one(CallEditor)
        refused = self._refused_row(editor.index)
        if event.by_enter and refused is not None:
            # letters typed next would be the table's commands: stay, and say how to leave
            editor.show_message(f"{refused}\nEnter keeps this call here to mend; Escape leaves it.")
            editor.focus_input()
            return
        self.set_focus(self.query_one(CallTable))

    def _refused_row(self, index: int) -> str | None:
        """The message of course ``index`` if the results shown are those of the text now
        in the document and they mark the course as not read; else None."""
        results = self.results
        if results is None:
            return None
        if self.applied[0] != self.lode.workspace.revision or not 0 <= index < len(results.rows):
            return None
        row = results.rows[index]
        return row.message if row.mark == MARK_BAD and row.message else None

    def on_call_table_row_highlighted(self, event: CallTable.RowHighlighted) -> None:
        editor = self.query_one(CallEditor)
        courses = self.lode.workspace.courses
        index = event.cursor_row
        if 0 <= index < len(courses) and not editor.query_one("Input").has_focus:
            self._editor_session += 1
            editor.load(
                index, "call", self._field_text(courses[index], "call"), self._editor_session
            )
            self._show_row_message()

    def on_call_table_structure_requested(self, event: CallTable.StructureRequested) -> None:
        ws = self.lode.workspace
        table = self.query_one(CallTable)
        rows = list(self.results.rows) if self.results else plain_rows(ws.doc)
        fresh = plain_rows({"course": [{"call": ""}]})[0]
        if event.action == "insert":
            ws.insert_course(event.index)
            rows.insert(event.index, fresh)
            target = event.index
        elif event.action == "delete":
            ws.delete_course(event.index)
            del rows[event.index]
            if not ws.courses:
                ws.insert_course(0)
                rows = [fresh]
            target = min(event.index, len(rows) - 1)
        else:
            target = ws.move_course(event.index, event.delta)
            if target != event.index:
                rows.insert(target, rows.pop(event.index))
        if len(rows) != len(ws.courses):  # a mismatch should not happen; show the calls
            rows = plain_rows(ws.doc)
        table.show_rows(rows)  # the table changes at once; the numbers follow
        table.move_cursor(row=target, animate=False)
        if event.action != "insert":  # the editor shows the course now under the cursor
            self._editor_session += 1
            self.query_one(CallEditor).load(
                target, "call", self._field_text(ws.courses[target], "call"), self._editor_session
            )
        self.recompute()
        self.update_docbar()
        if event.action == "insert":
            self.open_editor(event.index, "call")
        self._schedule_recovery()

    def on_descendant_blur(self, event) -> None:
        """Leaving a text field ends its typing."""
        if isinstance(event.widget, Input):
            self._end_typing()

    def _end_typing(self) -> None:
        """Typing has stopped: what was typed last is computed now (not as typed), and the
        panels take their text's height again."""
        if self._timer is not None:
            self._timer.stop()
            self.recompute()
        if self._typing:
            self._typing = False
            self.release_heights()

    def on_job_form_changed(self, event: JobForm.Changed) -> None:
        self.lode.workspace.set_setting(event.key, event.value, session=event.session)
        self.schedule_recompute()

    # -- actions -------------------------------------------------------------------------
    def action_pane(self, name: str) -> None:
        """Bring a pane forward and focus it."""
        self.pane = name
        if name in ("job", "findings"):
            self.side = name
        target = {"job": "#job Input", "calls": "#table", "findings": "#findings"}[name]

        if name == "job" and self.query_one(JobForm) in getattr(self.focused, "ancestors", ()):
            return  # already in the form: keep the field
        widget = self.query(target).first()
        self.set_focus(widget, scroll_visible=False)
        if name == "findings":
            widget.scroll_home(animate=False)

    def action_retrace_sheet(self) -> None:
        """Open the retracement sheet (tui.dialogs.retrace_sheet) for the shown results."""
        from ..dialogs.retrace_sheet import RetraceSheet

        conv = self.results.conversion if self.results is not None else None
        reason = "" if conv is not None else "the document does not convert yet"
        if conv is not None and self.results is not None and self.results.first_bad is not None:
            conv, reason = None, "a call does not read: the corners wait for every course"
        self.app.push_screen(RetraceSheet(conv, reason))

    def current_course(self) -> int:
        return self.query_one(CallTable).current_index


__all__ = ["COURSE_FIELDS", "Desk"]
