"""The call table (one row per course) and the call editor beneath it.

The table shows, per course: its number, a mark (``✗`` the call does not read, ``!`` a
caution such as weak horizontal field, blank when all is well), the call as written, the
length in the document's unit and the four bearings. Rows are updated cell by cell, and only
where the text changed, so typing in a 200-course document redraws little.

The editor edits one field of the course under the cursor as free text; what is typed is
kept as typed, and the parser's message for it is shown below it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.widgets import DataTable, Input, Label, Static

#: Column keys and headings of the call table.
COLUMNS: tuple[tuple[str, str], ...] = (
    ("n", "#"),
    ("mark", " "),
    ("call", "Call as written"),
    ("length", "Length"),
    ("mag_record", "Magnetic (record)"),
    ("true", "True"),
    ("grid", "Grid"),
    ("mag_target", "Magnetic (target)"),
    ("back", "Back"),
)

#: Characters of the call shown in the table (the editor shows all of it).
CALL_WIDTH = 30

#: Names of the course fields the editor can edit, as the user sees them.
FIELD_TITLES = {
    "call": "call",
    "back": "back bearing",
    "found": "found position",
    "every": "every (points along)",
    "note": "note",
}


@dataclass(frozen=True)
class CallRow:
    """The text of one row of the call table (already formatted)."""

    mark: str
    call: str
    length: str
    mag_record: str
    true: str
    grid: str
    mag_target: str
    back: str
    message: str = ""

    def cells(self, number: int) -> tuple[str, ...]:
        call = self.call if len(self.call) <= CALL_WIDTH else self.call[: CALL_WIDTH - 1] + "…"
        return (
            str(number),
            self.mark,
            call,
            self.length,
            self.mag_record,
            self.true,
            self.grid,
            self.mag_target,
            self.back,
        )


class CallTable(DataTable):
    """The courses of the traverse, one per row."""

    BINDINGS = [
        Binding("enter", "edit('call')", "Edit call"),
        Binding("a", "add_after", "Add course"),
        Binding("i", "insert_before", "Insert above"),
        Binding("delete,x", "delete_course", "Delete course"),
        Binding("alt+up,left_square_bracket", "move(-1)", "Move up", show=False),
        Binding("alt+down,right_square_bracket", "move(1)", "Move down", show=False),
        Binding("b", "edit('back')", "Back bearing", show=False),
        Binding("f", "edit('found')", "Found position", show=False),
        Binding("e", "edit('every')", "Every", show=False),
        Binding("n", "edit('note')", "Note", show=False),
    ]

    class EditRequested(Message):
        """The user asked to edit ``field`` of the course at ``index`` (0-based)."""

        def __init__(self, index: int, field: str) -> None:
            super().__init__()
            self.index = index
            self.field = field

    class StructureRequested(Message):
        """The user asked to add, insert, delete or move the course at ``index``."""

        def __init__(self, action: str, index: int, delta: int = 0) -> None:
            super().__init__()
            self.action = action
            self.index = index
            self.delta = delta

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id, cursor_type="row", zebra_stripes=True)
        self._shown: list[tuple[str, ...]] = []

    def on_mount(self) -> None:
        for key, heading in COLUMNS:
            self.add_column(heading, key=key)

    # -- data ----------------------------------------------------------------------------
    def show_rows(self, rows: Sequence[CallRow]) -> None:
        """Show ``rows``, changing only the cells whose text changed."""
        new = [row.cells(i + 1) for i, row in enumerate(rows)]
        old = self._shown
        if len(new) != len(old):
            cursor = self.cursor_row
            self.clear()
            self.add_rows(new)
            if new:
                self.move_cursor(row=min(max(cursor, 0), len(new) - 1), animate=False)
        else:
            for r, (a, b) in enumerate(zip(old, new, strict=True)):
                if a != b:
                    for c, (x, y) in enumerate(zip(a, b, strict=True)):
                        if x != y:
                            self.update_cell_at((r, c), y, update_width=True)
        self._shown = new

    @property
    def current_index(self) -> int:
        """The 0-based course under the cursor (0 for an empty table)."""
        return max(self.cursor_row, 0)

    # -- actions -------------------------------------------------------------------------
    def action_edit(self, field: str) -> None:
        if self.row_count:
            self.post_message(self.EditRequested(self.current_index, field))

    def action_add_after(self) -> None:
        self.post_message(self.StructureRequested("insert", self.current_index + 1))

    def action_insert_before(self) -> None:
        self.post_message(self.StructureRequested("insert", self.current_index))

    def action_delete_course(self) -> None:
        if self.row_count:
            self.post_message(self.StructureRequested("delete", self.current_index))

    def action_move(self, delta: int) -> None:
        if self.row_count:
            self.post_message(self.StructureRequested("move", self.current_index, delta))


class CallEditor(Vertical):
    """Edits one field of one course as free text; shows the parser's message."""

    BINDINGS = [Binding("escape", "done", "Back to table", show=False)]

    DEFAULT_CSS = """
    CallEditor { height: auto; }
    CallEditor > Horizontal { height: auto; }
    CallEditor #editor-label { width: auto; padding: 1 1 0 0; text-style: bold; }
    CallEditor Input { width: 1fr; }
    CallEditor #editor-message { height: auto; padding: 0 1; }
    """

    class Edited(Message):
        """Text typed into the editor for ``field`` of course ``index``."""

        def __init__(self, index: int, field: str, value: str, session: int) -> None:
            super().__init__()
            self.index = index
            self.field = field
            self.value = value
            self.session = session

    class Finished(Message):
        """The user left the editor (Enter or Escape)."""

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self.index = 0
        self.field = "call"
        self.session = 0

    def compose(self) -> ComposeResult:
        with Horizontal():
            yield Label("Course 1 · call", id="editor-label")
            yield Input(placeholder="e.g. N 45 30 E 20 perches to a white oak", id="editor-input")
        yield Static("", id="editor-message")

    def load(self, index: int, field: str, value: str, session: int) -> None:
        """Show ``value`` of ``field`` of course ``index`` ready for typing."""
        self.index, self.field, self.session = index, field, session
        self.query_one("#editor-label", Label).update(
            f"Course {index + 1} · {FIELD_TITLES.get(field, field)}"
        )
        box = self.query_one("#editor-input", Input)
        with box.prevent(Input.Changed):
            box.value = value
        box.cursor_position = len(value)

    def show_message(self, text: str) -> None:
        """Show the parser's (or another) message under the editor; ``""`` clears it."""
        self.query_one("#editor-message", Static).update(text)

    def focus_input(self) -> None:
        self.query_one("#editor-input", Input).focus()

    def on_input_changed(self, event: Input.Changed) -> None:
        event.stop()
        self.post_message(self.Edited(self.index, self.field, event.value, self.session))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.post_message(self.Finished())

    def action_done(self) -> None:
        self.post_message(self.Finished())
