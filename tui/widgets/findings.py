"""The findings panels beside the call table: field, grid, closure, local attraction, fit.

Each panel shows the result of one core function, already formatted as lines, or the one-line
error that function raised (prefixed with ``⚠`` so it reads without colour).
"""

from __future__ import annotations

from collections.abc import Sequence

from rich.text import Text
from textual.widgets import Static


def set_text(widget: Static, text: str) -> None:
    """Update a Static only when its text changes (each update lays out the screen again)."""
    if getattr(widget, "_lodeline_text", None) != text:
        widget._lodeline_text = text  # type: ignore[attr-defined]
        widget.update(Text(text))  # plain text: a call may hold "[" or "]"


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
        self._shown = key
        self.set_class(error is not None, "-error")
        self.set_class(idle and error is None, "-idle")
        if error is not None:
            self.update(Text("⚠ " + error))
        else:
            self.update(Text("\n".join(lines)))

    @property
    def text(self) -> str:
        """The plain text shown (for tests and the bench)."""
        if self._shown is None:
            return ""
        lines, error, _ = self._shown
        return ("⚠ " + error) if error is not None else "\n".join(lines)
