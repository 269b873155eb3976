"""Sheets shown over the desk: the new description and the plot list with the events.

Each sheet is a modal screen computed from the document as it stands when the sheet opens
(every call must read). The texts come from :mod:`geo.deed_text` and :mod:`geo.along`; this
module only lays them out. ``w`` on a sheet writes it to a file through the application's
output prompt (the description as text, the plot list and events as the CSV export).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from typing import TYPE_CHECKING, Any

from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from lodeline.geo.cautions import SHORT_CAUTION
from lodeline.geo.errors import LodelineError

if TYPE_CHECKING:
    from textual.widget import Widget


class _Sheet(ModalScreen[None]):
    """A scrollable sheet with a title; Escape closes, ``w`` writes it to a file."""

    BINDINGS = [
        Binding("escape,q", "close", "Close the sheet"),
        Binding("w", "write", "Write it to a file"),
    ]

    DEFAULT_CSS = """
    _Sheet { align: center middle; }
    _Sheet > VerticalScroll {
        width: 100%; max-width: 140; height: 92%;
        border: thick $primary; background: $surface; padding: 0 1;
    }
    _Sheet > VerticalScroll { overflow-x: auto; }
    _Sheet .sheet-table { width: auto; }
    _Sheet .sheet-caution { margin-top: 1; color: $warning; }
    """

    #: What the sheet is called, and the output kind ``w`` writes (tui.outputs.OUTPUTS).
    TITLE = ""
    OUTPUT = ""
    #: The sheet's widgets (each sheet defines its own ``body`` method).
    body: Callable[[], Iterable[Widget]]

    def compose(self) -> ComposeResult:
        with VerticalScroll() as box:
            box.border_title = f"{self.TITLE} — w writes it to a file, Escape closes"
            try:
                yield from self.body()
            except LodelineError as err:
                yield Static(Text(f"✗ {err}", style="bold red"), classes="sheet-error")
            yield Static(SHORT_CAUTION, classes="sheet-caution")

    def conversion(self) -> Any:
        from ..outputs import converted

        ws = self.app.workspace  # type: ignore[attr-defined]
        return converted(ws.doc, ws.path)

    def action_close(self) -> None:
        self.dismiss(None)

    def action_write(self) -> None:
        self.dismiss(None)
        self.app.action_export(self.OUTPUT)  # type: ignore[attr-defined]


class DescriptionSheet(_Sheet):
    """The figure written as a new description (true north, the record's units)."""

    TITLE = "New description"
    OUTPUT = "description"

    def body(self) -> Any:
        from lodeline.geo.deed_text import write_description

        desc = write_description(self.conversion())
        for part in (desc.courses, desc.basis, desc.record, desc.distances):
            yield Static(part + "\n", classes="sheet-paragraph")


class PlotSheet(_Sheet):
    """The plot list of the cruise and the events along the courses."""

    TITLE = "Plots and events"
    OUTPUT = "csv"

    def body(self) -> Any:
        from lodeline.geo.along import EVENT_HEADERS, PLOT_HEADERS, event_rows, plot_list, plot_rows

        al = plot_list(self.conversion())
        if not al.plots and not al.events:
            yield Static(
                "No plots and no events: give a course an 'every' spacing (e) for plots, or "
                "[[course.at]] entries in the document for what the line meets."
            )
        if al.plots:
            yield Static(
                Text(f"{len(al.plots)} plots, numbered from {al.start}", style="bold"),
                classes="sheet-heading",
            )
            yield Static(
                _table(PLOT_HEADERS, plot_rows(al)), id="plot-table", classes="sheet-table"
            )
        if al.events:
            yield Static(Text("Along the lines", style="bold"), classes="sheet-heading")
            yield Static(
                _table(EVENT_HEADERS, event_rows(al)), id="event-table", classes="sheet-table"
            )


def _table(headers: tuple[str, ...], rows: list[tuple[str, ...]]) -> Table:
    table = Table(show_edge=False, pad_edge=False, expand=False)
    for h in headers:
        table.add_column(h, no_wrap=True)
    for row in rows:
        table.add_row(*row)
    return table
