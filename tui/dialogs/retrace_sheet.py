"""The retracement sheet (Ctrl+T on the desk): corners found, restored and record only, the
stakeout lines a crew runs, when the line was run, and the declination history plot.

Keys: r switches the restoration (proportion / rotate-scale), o runs the lines from the
nearest found corner or the previous corner, Escape or Ctrl+T closes the sheet."""

from __future__ import annotations

from typing import Any

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from ..retrace_view import build_view
from ..widgets.declination_plot import DeclinationPlot


class RetraceSheet(ModalScreen[None]):
    """The sheet for one converted document (``conv``), or a line saying why there is none."""

    BINDINGS = [
        Binding("escape,ctrl+t", "close", "Close"),
        Binding("r", "switch_method", "Restoration"),
        Binding("o", "switch_origin", "Run from"),
    ]

    DEFAULT_CSS = """
    RetraceSheet { align: center middle; }
    RetraceSheet > VerticalScroll {
        width: 96%; height: 94%; border: thick $primary; background: $surface; padding: 0 1;
    }
    RetraceSheet Static { height: auto; margin-bottom: 1; }
    """

    def __init__(self, conv: Any, reason: str = "") -> None:
        super().__init__()
        self.conv = conv
        self.reason = reason
        self.method = "proportion"
        self.origin = "nearest"

    def compose(self) -> ComposeResult:
        with VerticalScroll() as box:
            box.border_title = "Retracement: corners, stakeout, survey date"
            yield Static(id="sheet-corners")
            yield Static(id="sheet-stakeout")
            yield Static(id="sheet-date")
            yield DeclinationPlot(id="sheet-plot")
            yield Static(
                "cyan: D at the point of beginning from the models 'auto' chooses (gaps: no "
                "installed model); yellow: the needle's declination from the fit and its band; "
                "vertical lines: the record and target dates",
                id="sheet-key",
            )
        yield Footer()

    def on_mount(self) -> None:
        self.refresh_view()

    def refresh_view(self) -> None:
        """Compute and show the sheet for the current method and origin."""
        from rich.text import Text

        corners = self.query_one("#sheet-corners", Static)
        if self.conv is None:
            corners.update(Text(self.reason or "no converted document yet"))
            return
        view = build_view(self.conv, method=self.method, origin=self.origin)
        corners.update(Text("\n".join(view.corners)))
        self.query_one("#sheet-stakeout", Static).update(Text("\n".join(view.stakeout)))
        self.query_one("#sheet-date", Static).update(Text("\n".join(view.survey_date)))
        self.query_one(DeclinationPlot).show_view(view)

    def action_close(self) -> None:
        self.dismiss(None)

    def action_switch_method(self) -> None:
        self.method = "rotate-scale" if self.method == "proportion" else "proportion"
        self.refresh_view()

    def action_switch_origin(self) -> None:
        self.origin = "previous" if self.origin == "nearest" else "nearest"
        self.refresh_view()
