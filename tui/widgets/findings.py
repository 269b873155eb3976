"""The findings panels beside the call table: field, grid, closure, local attraction, fit.

Each panel shows the result of one core function, already formatted as lines, or the one-line
error that function raised (prefixed with ``⚠`` so it reads without colour).

While the user types, a panel keeps the height it has reached (:class:`SteadyText`): a
result that needs fewer lines than the one before is padded, so the screen around it does
not jump on every keystroke, and Textual repaints the panel instead of laying out the whole
screen again. The desk lets panels shrink to their text when typing stops.
"""

from __future__ import annotations

import textwrap
from collections.abc import Sequence

from rich.cells import cell_len
from rich.text import Text
from textual import events
from textual.widgets import Static


def _extent(text: str) -> tuple[int, int]:
    """(lines, widest line in cells) of a plain text."""
    lines = text.split("\n")
    return len(lines), max(cell_len(line) for line in lines)


def replace_text(widget: Static, old: str | None, text: str) -> None:
    """Show plain ``text`` in ``widget`` in place of ``old`` (plain: a call may hold "[").

    The screen is laid out again only when the text's size can change the widget's: another
    number of lines, a line too wide for the widget (it wraps), or, for a widget as wide as
    its text, another widest line.
    """
    if old is None:
        layout = True
    else:
        lines, widest = _extent(text)
        old_lines, old_widest = _extent(old)
        width = widget.styles.width
        layout = (
            lines != old_lines
            or max(widest, old_widest) > widget.content_size.width
            or (width is not None and width.is_auto and widest != old_widest)
        )
    widget.update(Text(text), layout=layout)


def set_text(widget: Static, text: str) -> None:
    """Update a Static only when its text changes."""
    old = getattr(widget, "_lodeline_text", None)
    if old != text:
        widget._lodeline_text = text  # type: ignore[attr-defined]
        replace_text(widget, old, text)


def wrap_lines(text: str, width: int) -> list[str]:
    """The lines of plain ``text`` wrapped at word boundaries to ``width`` cells (``width``
    of 0 or less: not wrapped). A wrapped line's continuation keeps the line's indent plus
    two spaces. Widths are counted in characters, which is cells for the text of the panels
    (no double-width characters)."""
    out: list[str] = []
    for line in text.split("\n"):
        if width <= 0 or cell_len(line) <= width:
            out.append(line)
            continue
        indent = " " * (len(line) - len(line.lstrip(" ")) + 2)
        out += textwrap.wrap(
            line,
            width=width,
            subsequent_indent=indent if len(indent) < width // 2 else "",
            break_long_words=True,
            break_on_hyphens=False,
        ) or [""]
    return out


class SteadyText(Static):
    """Plain text wrapped to the widget's width, whose height can be held while it changes.

    :meth:`show_text` with ``hold=True`` pads a shorter text with blank lines to the height
    shown before, so a change of text repaints the widget without a layout of the screen;
    with ``hold=False`` the widget takes the height of its text.
    """

    def __init__(self, text: str = "", *, id: str | None = None) -> None:
        super().__init__(text, id=id)
        self._plain = text
        self._painted: str | None = None
        self._rows = 0
        self._width = 0

    @property
    def plain(self) -> str:
        """The text shown, without the padding and wrapping."""
        return self._plain

    def show_text(self, text: str, *, hold: bool = False) -> None:
        """Show plain ``text``; ``hold``: keep at least the height shown so far."""
        self._plain = text
        self._paint(hold)

    def release(self) -> None:
        """Let the widget take the height of its text (typing has stopped)."""
        self._paint(False)

    def _paint(self, hold: bool) -> None:
        self._width = self.content_size.width
        rows = wrap_lines(self._plain, self._width)
        if hold and len(rows) < self._rows:
            rows += [""] * (self._rows - len(rows))
        self._rows = len(rows)
        painted = "\n".join(rows)
        if painted != self._painted:
            old, self._painted = self._painted, painted
            replace_text(self, old, painted)

    def on_resize(self, _event: events.Resize) -> None:
        if self.content_size.width != self._width:
            self._paint(False)  # wrapped for another width: wrap again


class FindingsPanel(SteadyText):
    """A titled block of result lines, or an error line."""

    DEFAULT_CSS = """
    FindingsPanel {
        border: round $foreground 30%;
        border-title-style: bold;
        padding: 0 1;
        height: auto;
    }
    FindingsPanel.-error { border: round $error; }
    FindingsPanel.-idle { color: $text-muted; }
    """

    def __init__(self, title: str, *, id: str | None = None) -> None:
        super().__init__("", id=id)
        self.border_title = title
        self._shown: tuple[tuple[str, ...], str | None, bool] | None = None

    def show(
        self,
        lines: Sequence[str],
        *,
        error: str | None = None,
        idle: bool = False,
        hold: bool = False,
    ) -> None:
        """Show ``lines``; with ``error`` show the error instead (``idle``: nothing to show,
        the lines explain why, in muted text). ``hold``: keep the panel's height (typing)."""
        key = (tuple(lines), error, idle)
        if key == self._shown:
            if not hold:
                self.release()  # the same text, no longer held at a taller height
            return
        self._shown = key
        self.set_class(error is not None, "-error")
        self.set_class(idle and error is None, "-idle")
        self.show_text(("⚠ " + error) if error is not None else "\n".join(lines), hold=hold)

    @property
    def text(self) -> str:
        """The plain text shown (for tests and the bench)."""
        return self.plain
