"""The findings panels beside the call table: field, grid, closure, local attraction, fit.

Each panel shows the result of one core function, already formatted as lines, or the one-line
error that function raised (prefixed with ``⚠`` so it reads without colour).
"""

from __future__ import annotations

from collections.abc import Sequence

from rich.cells import cell_len
from rich.text import Text
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


class FindingsPanel(Static):
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

    def show(self, lines: Sequence[str], *, error: str | None = None, idle: bool = False) -> None:
        """Show ``lines``; with ``error`` show the error instead (``idle``: nothing to show,
        the lines explain why, in muted text)."""
        key = (tuple(lines), error, idle)
        if key == self._shown:
            return
        old = None if self._shown is None else self.text
        self._shown = key
        self.set_class(error is not None, "-error")
        self.set_class(idle and error is None, "-idle")
        replace_text(self, old, self.text)

    @property
    def text(self) -> str:
        """The plain text shown (for tests and the bench)."""
        if self._shown is None:
            return ""
        lines, error, _ = self._shown
        return ("⚠ " + error) if error is not None else "\n".join(lines)
