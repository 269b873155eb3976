"""Ask for the options of a systematic cruise layout (baseline bearing, spacings, north)."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Label, Static

#: The fields asked, in order: (key, label, suggestion).
FIELDS = (
    ("bearing", "Baseline bearing", "N 0 E"),
    ("north", "North of the bearing (magnetic, true or grid)", "magnetic"),
    ("spacing", "Distance between lines", "5 chains"),
    ("plots", "Distance between plots", "2.5 chains"),
)


class LayoutForm(ModalScreen[dict[str, str] | None]):
    """The layout's options; dismiss with ``{key: text}`` or ``None`` (Escape). Enter moves to
    the next field and, on the last one, asks for the file to write."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", show=False)]

    DEFAULT_CSS = """
    LayoutForm { align: center middle; }
    LayoutForm > Vertical {
        width: 76; max-width: 95%; height: auto;
        border: thick $primary; background: $surface; padding: 1 2;
    }
    LayoutForm #layout-message { height: auto; margin-top: 1; }
    """

    def compose(self) -> ComposeResult:
        with Vertical() as box:
            box.border_title = "Cruise layout across this boundary"
            yield Static(
                "Parallel lines across the figure at the bearing, with plots along them, "
                "written as a document of its own. Enter: next field; Escape: cancel."
            )
            for key, label, suggestion in FIELDS:
                yield Label(label)
                yield Input(value=suggestion, id=f"layout-{key}")
            yield Static("", id="layout-message")

    def on_mount(self) -> None:
        self.query_one("#layout-bearing", Input).focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        keys = [key for key, _, _ in FIELDS]
        key = (event.input.id or "").removeprefix("layout-")
        values = {k: self.query_one(f"#layout-{k}", Input).value.strip() for k in keys}
        if not values[key]:
            self.query_one("#layout-message", Static).update(f"⚠ give the {key}")
            return
        if values["north"].lower() not in ("magnetic", "true", "grid"):
            self.query_one("#layout-message", Static).update("⚠ north: magnetic, true or grid")
            return
        if key != keys[-1]:
            self.query_one(f"#layout-{keys[keys.index(key) + 1]}", Input).focus()
            return
        values["north"] = values["north"].lower()
        self.dismiss(values)

    def action_cancel(self) -> None:
        self.dismiss(None)
