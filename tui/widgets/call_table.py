"""The call table (one row per course) and the call editor beneath it.

The table shows, per course: its number, a mark (``✗`` the call does not read, ``!`` a
caution such as weak horizontal field, blank when all is well), the call as written, the
length in the document's unit and the four bearings. Rows are updated cell by cell, and only
where the text changed, so typing in a 200-course document redraws little.

The editor edits one field of the course under the cursor as free text; what is typed is
kept as typed, and the parser's message for it is shown below it.
"""

from __future__ import annotations

import re
import string
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from rich.segment import Segment
from textual import events
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.geometry import Size
from textual.message import Message
from textual.reactive import reactive
from textual.scroll_view import ScrollView
from textual.strip import Strip
from textual.widgets import Input, Label

from .findings import SteadyText

#: Column keys and headings of the call table.
COLUMNS: tuple[tuple[str, str], ...] = (
    ("n", "#"),
    ("mark", " "),
    ("call", "Call as written"),
    ("length", "Length"),
    ("mag_record", "Mag. record"),
    ("true", "True"),
    ("grid", "Grid"),
    ("mag_target", "Mag. target"),
    ("back", "Back"),
)

#: The call column takes the width the other columns leave, but never less than this many
#: characters (the table then scrolls sideways to the bearings; the editor shows the call
#: whole). A longer call is cut with "…".
CALL_MIN_WIDTH = 20

#: Names of the course fields the editor can edit, as the user sees them.
FIELD_TITLES = {
    "call": "call",
    "back": "back bearing",
    "found": "found position",
    "every": "every (points along)",
    "note": "note",
}


#: An example of its own kind in each editor field, shown while the field is empty.
FIELD_EXAMPLES = {
    "call": "e.g. N 45 30 E 20 perches to a white oak (or paste a deed)",
    "back": "e.g. S 45 30 W (the bearing read back from the far end)",
    "found": "e.g. easting=432100.5, northing=4521300.2  or  lat=42.87, lon=-76.19",
    "every": "e.g. 5 chains (a point every so far along the course)",
    "note": "e.g. corner stone found in the fence line",
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
        return (
            str(number),
            self.mark,
            self.call,
            self.length,
            self.mag_record,
            self.true,
            self.grid,
            self.mag_target,
            self.back,
        )


#: The table's command letters (its bindings above); every other letter, digit or ``?``
#: typed on the table begins a call (:meth:`CallTable.action_start_call`).
COMMAND_LETTERS = frozenset("abefinx")
#: (character, Textual key name) of the keys that begin a call when typed on the table.
_CALL_START_KEYS = tuple(
    (c, c if c.isalnum() else "question_mark")
    for c in (string.ascii_letters + string.digits + "?")
    if c not in COMMAND_LETTERS
)


class CallTable(ScrollView, can_focus=True):
    """The courses of the traverse, one per row, with a row cursor.

    Drawn line by line (Textual's line API) from plain text cells: a keystroke that changes
    a few bearings repaints only the lines that changed, and a 5,000-course document costs
    no more to show than the rows on the screen. The heading stays at the top.
    """

    # Priority: the application acts on these before it reads the next key, so a key typed
    # straight after Enter or ``a`` goes into the editor they open, never to the table, and
    # arrows sent with an Enter move the cursor before Enter opens the course they reached
    # (not priority, they reached the table only after Enter and were lost).
    BINDINGS = [
        Binding("enter", "edit('call')", "Edit call", priority=True),
        Binding("a", "add_after", "Add course", priority=True),
        Binding("i", "insert_before", "Insert above", priority=True),
        Binding("delete,x", "delete_course", "Delete course", priority=True),
        Binding("alt+up,left_square_bracket", "move(-1)", "Move up", show=False, priority=True),
        Binding("alt+down,right_square_bracket", "move(1)", "Move down", show=False, priority=True),
        Binding("b", "edit('back')", "Back bearing", show=False, priority=True),
        Binding("f", "edit('found')", "Found position", show=False, priority=True),
        Binding("e", "edit('every')", "Every", show=False, priority=True),
        Binding("n", "edit('note')", "Note", show=False, priority=True),
        Binding("up", "cursor(-1)", "Previous course", show=False, priority=True),
        Binding("down", "cursor(1)", "Next course", show=False, priority=True),
        Binding("pageup", "page(-1)", "Page up", show=False, priority=True),
        Binding("pagedown", "page(1)", "Page down", show=False, priority=True),
        Binding("home", "first", "First course", show=False, priority=True),
        Binding("end", "last", "Last course", show=False, priority=True),
        Binding("left", "scroll_left", "Scroll left", show=False, priority=True),
        Binding("right", "scroll_right", "Scroll right", show=False, priority=True),
        *(
            Binding(key, f"start_call({char!r})", show=False, priority=True)
            for char, key in _CALL_START_KEYS
        ),
    ]

    COMPONENT_CLASSES = {
        "call-table--header",
        "call-table--cursor",
        "call-table--alt",
        "call-table--bad",
    }

    DEFAULT_CSS = """
    CallTable { background: $surface; }
    CallTable > .call-table--header { text-style: bold; background: $panel; }
    CallTable > .call-table--cursor { background: $block-cursor-background;
                                      color: $block-cursor-foreground; text-style: bold; }
    CallTable:blur > .call-table--cursor { background: $block-cursor-blurred-background;
                                           text-style: none; }
    CallTable > .call-table--alt { background: $surface-lighten-1; }
    CallTable > .call-table--bad { text-style: bold; }
    """

    #: The 0-based row under the cursor.
    cursor_row: reactive[int] = reactive(0)

    class RowHighlighted(Message):
        """The cursor moved to row ``cursor_row`` (0-based)."""

        def __init__(self, cursor_row: int) -> None:
            super().__init__()
            self.cursor_row = cursor_row

    class EditRequested(Message):
        """The user asked to edit ``field`` of the course at ``index`` (0-based)."""

        def __init__(self, index: int, field: str) -> None:
            super().__init__()
            self.index = index
            self.field = field

    class CallStarted(Message):
        """A character that is not a command was typed on the table: it begins a call, in the
        course at ``index`` (0-based) if that one is blank, else in a new one after it."""

        def __init__(self, index: int, character: str) -> None:
            super().__init__()
            self.index = index
            self.character = character

    class StructureRequested(Message):
        """The user asked to add, insert, delete or move the course at ``index``."""

        def __init__(self, action: str, index: int, delta: int = 0) -> None:
            super().__init__()
            self.action = action
            self.index = index
            self.delta = delta

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self._rows: list[tuple[str, ...]] = []
        self._bad: list[bool] = []
        self._widths = [len(h) for _k, h in COLUMNS]
        self._cache: dict[tuple, Strip] = {}
        self._sized: tuple[Size, Size, Size, Size] | None = None
        #: Called with each EditRequested or StructureRequested instead of posting it.
        self.handler: Callable[[Message], None] | None = None

    def _size_updated(
        self, size: Size, virtual_size: Size, container_size: Size, layout: bool = True
    ) -> bool:
        """Textual's scroll view repaints its scroll bars at every layout of the screen; when
        a findings panel changes height (most keystrokes that change the closure) the table
        itself has not changed, so nothing of it is repainted or resized."""
        sized = (size, virtual_size, container_size, self.virtual_size)
        if sized == self._sized:
            return False
        self._sized = sized
        return super()._size_updated(size, virtual_size, container_size, layout)

    # -- data ----------------------------------------------------------------------------
    def show_rows(self, rows: Sequence[CallRow]) -> None:
        """Show ``rows``; only the lines whose text changed are repainted."""
        new = [row.cells(i + 1) for i, row in enumerate(rows)]
        bad = [row.mark == "✗" for row in rows]
        # columns widen to fit and do not narrow while typing (no jumping, no relayout)
        widths = (
            list(self._widths) if len(new) == len(self._rows) else [len(h) for _k, h in COLUMNS]
        )
        for cells in new:
            for c, text in enumerate(cells):
                if len(text) > widths[c]:
                    widths[c] = len(text)
        if widths != self._widths or len(new) != len(self._rows):
            self._rows, self._bad, self._widths = new, bad, widths
            self._cache.clear()
            size = Size(self._total_width(), len(new) + 1)
            if size != self.virtual_size:
                self.virtual_size = size
            if new and self.cursor_row >= len(new):
                self.cursor_row = len(new) - 1
            self.refresh()
            return
        top = int(self.scroll_offset.y)
        height = self.size.height
        for r, (cells, is_bad) in enumerate(zip(new, bad, strict=True)):
            if (cells != self._rows[r] or is_bad != self._bad[r]) and top <= r < top + height:
                self.refresh_line(r - top + 1)
        self._rows, self._bad = new, bad

    @property
    def row_count(self) -> int:
        return len(self._rows)

    @property
    def current_index(self) -> int:
        """The 0-based course under the cursor (0 for an empty table)."""
        return max(min(self.cursor_row, len(self._rows) - 1), 0)

    def get_row_at(self, index: int) -> tuple[str, ...]:
        """The cells of row ``index`` as shown."""
        return self._rows[index]

    def move_cursor(self, *, row: int, animate: bool = False) -> None:
        """Put the cursor on ``row`` (clamped to the table)."""
        if self._rows:
            self.cursor_row = max(0, min(row, len(self._rows) - 1))

    # -- drawing -------------------------------------------------------------------------
    def _total_width(self) -> int:
        return sum(w + 2 for w in self._shown_widths())

    def _shown_widths(self) -> list[int]:
        """Column widths as drawn: the call's own width where the table is wide enough, else
        the width the other columns leave (at least :data:`CALL_MIN_WIDTH`)."""
        widths = list(self._widths)
        others = sum(w + 2 for c, w in enumerate(widths) if c != 2)
        room = self.size.width - others - 2
        widths[2] = max(min(widths[2], room), min(widths[2], CALL_MIN_WIDTH), len(COLUMNS[2][1]))
        return widths

    def on_resize(self) -> None:
        self._cache.clear()
        size = Size(self._total_width(), len(self._rows) + 1)
        if size != self.virtual_size:
            self.virtual_size = size

    def notify_style_update(self) -> None:
        super().notify_style_update()
        self._cache.clear()

    def _line_text(self, cells: tuple[str, ...]) -> str:
        parts = []
        for c, (text, width) in enumerate(zip(cells, self._shown_widths(), strict=True)):
            if len(text) > width:
                text = text[: width - 1] + "…"
            parts.append(" " + (text.rjust(width) if c == 0 else text.ljust(width)) + " ")
        return "".join(parts)

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        scroll_x = int(self.scroll_offset.x)
        if y == 0:
            key: tuple = ("header", width, scroll_x, tuple(self._widths))
            style = self.get_component_rich_style("call-table--header")
            text = self._line_text(tuple(h for _k, h in COLUMNS))
        else:
            r = int(self.scroll_offset.y) + y - 1
            if r >= len(self._rows):
                return Strip.blank(width, self.rich_style)
            cursor = r == self.cursor_row
            key = (r, self._rows[r], self._bad[r], cursor, width, scroll_x)
            cached = self._cache.get(key)
            if cached is not None:
                return cached
            style = self.rich_style
            if r % 2 == 1:
                style = style + self.get_component_rich_style("call-table--alt")
            if self._bad[r]:
                style = style + self.get_component_rich_style("call-table--bad")
            if cursor:
                style = style + self.get_component_rich_style("call-table--cursor")
            text = self._line_text(self._rows[r])
            if cursor:  # the cursor reads without colour too
                text = "▸" + text[1:]
        cached = self._cache.get(key)
        if cached is not None:
            return cached
        strip = Strip([Segment(text, style)]).crop_extend(scroll_x, scroll_x + width, style)
        if len(self._cache) > 4000:
            self._cache.clear()
        self._cache[key] = strip
        return strip

    # -- cursor --------------------------------------------------------------------------
    def watch_cursor_row(self, old: int, new: int) -> None:
        top = int(self.scroll_offset.y)
        body = max(self.size.height - 1, 1)
        if new < top:
            self.scroll_to(y=new, animate=False)
        elif new >= top + body:
            self.scroll_to(y=new - body + 1, animate=False)
        else:
            for r in (old, new):
                if top <= r < top + body:
                    self.refresh_line(r - top + 1)
        self.post_message(self.RowHighlighted(new))

    def action_cursor(self, delta: int) -> None:
        self.move_cursor(row=self.cursor_row + delta)

    def action_page(self, direction: int) -> None:
        self.move_cursor(row=self.cursor_row + direction * max(self.size.height - 2, 1))

    def action_first(self) -> None:
        self.move_cursor(row=0)

    def action_last(self) -> None:
        self.move_cursor(row=len(self._rows) - 1)

    def on_click(self, event: events.Click) -> None:
        if event.y >= 1:
            self.move_cursor(row=int(self.scroll_offset.y) + event.y - 1)

    # -- actions -------------------------------------------------------------------------
    def _send(self, message: Message) -> None:
        """Hand ``message`` to :attr:`handler` at once when one is set (so the focus has moved
        to the editor before the next key is read: keys typed straight after Enter or ``a``
        go into the editor), else post it."""
        if self.handler is not None:
            self.handler(message)
        else:
            self.post_message(message)

    def action_edit(self, field: str) -> None:
        if self._rows:
            self._send(self.EditRequested(self.current_index, field))

    def action_start_call(self, character: str) -> None:
        """A call typed on the table goes into a call, not into the table's commands (a
        surveyor types the next call straight after Enter)."""
        if self._rows:
            self._send(self.CallStarted(self.current_index, character))

    def action_add_after(self) -> None:
        self._send(self.StructureRequested("insert", self.current_index + 1))

    def action_insert_before(self) -> None:
        self._send(self.StructureRequested("insert", self.current_index))

    def action_delete_course(self) -> None:
        if self._rows:
            self._send(self.StructureRequested("delete", self.current_index))

    def action_move(self, delta: int) -> None:
        if self._rows:
            self._send(self.StructureRequested("move", self.current_index, delta))


class CallInput(Input):
    """The call editor's text field: a paste that holds a whole description (several lines,
    or a ``thence``) is handed to the desk to be cut into courses instead of being cut to
    its first line."""

    #: The (course index, field, editor session) the text belongs to, set by
    #: :meth:`CallEditor.load`, and given to each change as it happens (a change is handled
    #: after the editor may have moved to another course: it keeps the course it was typed in).
    stamp: tuple[int, str, int] = (0, "call", 0)

    #: Called at once with (stamp, value) on every change, instead of a Changed message
    #: (set by :class:`CallEditor`): the document holds what the field shows as soon as it
    #: shows it, so a key that acts on the document next sees the text typed before it.
    on_edit: Callable[[tuple[int, str, int], str], None] | None = None

    def post_message(self, message: Message) -> bool:
        if isinstance(message, Input.Changed) and not self._is_prevented(Input.Changed):
            if self.on_edit is not None:
                self.on_edit(self.stamp, message.value)
                return True
            message.stamp = self.stamp  # type: ignore[attr-defined]
        return super().post_message(message)

    class DescriptionPasted(Message):
        """A description was pasted into the call field."""

        def __init__(self, text: str) -> None:
            super().__init__()
            self.text = text

    def _on_paste(self, event: events.Paste) -> None:
        text = event.text or ""
        parent = self.parent.parent if self.parent is not None else None
        if (
            isinstance(parent, CallEditor)
            and parent.field == "call"
            and looks_like_description(text)
        ):
            event.prevent_default()  # Input's own paste (first line only) does not run
            event.stop()
            self.post_message(self.DescriptionPasted(text))
        # any other paste: Input's own handler runs after this one


def looks_like_description(text: str) -> bool:
    """True for pasted text that is more than one call: several lines, or a ``thence``
    after its first words."""
    lines = [line for line in text.splitlines() if line.strip()]
    return len(lines) > 1 or re.search(r"\S.*\bthence\b", text, re.I | re.S) is not None


class CallEditor(Vertical):
    """Edits one field of one course as free text; shows the parser's message."""

    # Priority, so that a key typed straight after Enter goes to the table, not the call.
    BINDINGS = [
        Binding("escape", "done", "Back to table", show=False, priority=True),
        Binding("enter", "done(True)", "Done: back to the table", show=False, priority=True),
    ]

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
        """The user left the editor: ``by_enter`` True for Enter (the desk keeps the keyboard
        in a call that does not read), False for Escape (always back to the table)."""

        def __init__(self, by_enter: bool = False) -> None:
            super().__init__()
            self.by_enter = by_enter

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self.index = 0
        self.field = "call"
        self.session = 0
        #: Called with Finished instead of posting it (the desk moves the focus at once).
        self.handler: Callable[[Message], None] | None = None
        #: Called with Edited as the text changes, instead of posting it (the desk puts the
        #: text in the document at once).
        self.edited_handler: Callable[[CallEditor.Edited], None] | None = None

    def compose(self) -> ComposeResult:
        with Horizontal():
            yield Label("Course 1 · call", id="editor-label")
            yield CallInput(
                placeholder=FIELD_EXAMPLES["call"], id="editor-input", select_on_focus=False
            )
        yield SteadyText("", id="editor-message")

    def load(self, index: int, field: str, value: str, session: int) -> None:
        """Show ``value`` of ``field`` of course ``index`` ready for typing."""
        self.index, self.field, self.session = index, field, session
        self.query_one("#editor-label", Label).update(
            f"Course {index + 1} · {FIELD_TITLES.get(field, field)}"
        )
        box = self.query_one("#editor-input", CallInput)
        box.stamp = (index, field, session)
        box.placeholder = FIELD_EXAMPLES.get(field, "")
        with box.prevent(Input.Changed):
            box.value = value
        box.cursor_position = len(value)

    def on_mount(self) -> None:
        self.query_one("#editor-input", CallInput).on_edit = self._edited_now

    def _edited_now(self, stamp: tuple[int, str, int], value: str) -> None:
        index, field, session = stamp
        message = self.Edited(index, field, value, session)
        if self.edited_handler is not None:
            self.edited_handler(message)
        else:
            self.post_message(message)

    def show_message(self, text: str, *, hold: bool = False) -> None:
        """Show the parser's (or another) message under the editor; ``""`` clears it.
        ``hold``: keep the room a longer message took (while the user types)."""
        self.query_one("#editor-message", SteadyText).show_text(text, hold=hold)

    def focus_input(self) -> None:
        """Move the keyboard into the field now (the next key read goes there)."""
        self.screen.set_focus(self.query_one("#editor-input", Input))

    def on_input_changed(self, event: Input.Changed) -> None:
        event.stop()
        index, field, session = getattr(event, "stamp", (self.index, self.field, self.session))
        self.post_message(self.Edited(index, field, event.value, session))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.action_done(True)

    def action_done(self, by_enter: bool = False) -> None:
        if self.handler is not None:
            self.handler(self.Finished(by_enter))
        else:
            self.post_message(self.Finished(by_enter))
