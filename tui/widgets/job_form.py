"""The job form: the settings of the traverse (place, grid, record, units, target date).

Each field edits one document key (dotted, as in :data:`tui.workspace.SETTING_LABELS`). What
is typed is kept as typed: a number field holding text that is not a number stores the text,
and the document check then names the key, so nothing typed is lost.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.message import Message
from textual.widgets import Checkbox, Input, Label, Select, Static

from ..workspace import SETTING_LABELS, get_setting
from .findings import set_text

#: Keys whose value is a number when the text reads as one.
NUMBER_KEYS = frozenset(
    {
        "place.lat",
        "place.lon",
        "place.height_m",
        "place.easting",
        "place.northing",
        "record.vara_inches",
        "record.attraction_tolerance",
    }
)
#: Keys chosen from a short list: key -> choices.
CHOICE_KEYS: dict[str, tuple[str, ...]] = {
    "record.reference": ("magnetic", "true", "grid"),
    "record.angles": ("right", "left"),
    "record.foot": ("us", "international"),
    "record.distance_unit": (
        "perch",
        "rod",
        "pole",
        "chain",
        "link",
        "ft",
        "m",
        "vara",
        "mile",
    ),
}
#: Hints shown as placeholders.
PLACEHOLDERS = {
    "place.lat": "e.g. 42.8731 (north +)",
    "place.lon": "e.g. -76.1934 (east +)",
    "place.easting": "or grid, e.g. 432100.5",
    "place.northing": "or grid, e.g. 4747300.2",
    "grid.crs": "auto (UTM), or e.g. EPSG:2261",
    "title": "e.g. Glen Tract, lot 12",
    "place.height_m": "0",
    "record.date": "e.g. 1854-05-12",
    "record.declination": "auto, or e.g. 3°10' W",
    "record.model": "auto",
    "record.vara_inches": "only when varas occur",
    "record.attraction_tolerance": "auto: the bearings' precision",
    "target.date": "today, or e.g. 2025-06-01",
    "target.model": "auto",
}


def _widget_id(key: str) -> str:
    return "set-" + key.replace(".", "--")


def _key_of(widget_id: str | None) -> str:
    return (widget_id or "")[4:].replace("--", ".")


def typed_value(key: str, text: str) -> Any:
    """The value to store for ``text`` typed into setting ``key`` (``None`` removes it)."""
    text = text.strip()
    if text == "":
        return None
    if key in NUMBER_KEYS:
        try:
            return float(text)
        except ValueError:
            return text
    if key == "record.declination":
        try:
            return float(text)
        except ValueError:
            return text
    return text


def shown_text(value: Any) -> str:
    """The text shown in a field for a stored ``value``."""
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return f"{value:.1f}"
    return str(value)


#: Columns from which the form shows each label beside its field (label: value).
TWO_COLUMNS_FROM = 48


class JobForm(VerticalScroll):
    """The settings of the job, one labelled field per document key: label and field side
    by side where the pane is wide enough (every setting on one line), else the label above.
    """

    DEFAULT_CSS = """
    JobForm { padding: 0 1; layout: vertical; }
    JobForm.-two-columns {
        layout: grid; grid-size: 2; grid-columns: 24 1fr; grid-rows: auto; grid-gutter: 0 1;
    }
    JobForm Label { color: $text-muted; height: 1; }
    JobForm.-two-columns Label { text-align: right; }
    JobForm Input, JobForm Select, JobForm Checkbox { height: 1; margin-bottom: 1; }
    JobForm.-two-columns Input, JobForm.-two-columns Select,
    JobForm.-two-columns Checkbox { margin-bottom: 0; }
    JobForm Input { background: $boost; padding: 0 1; }
    JobForm Checkbox { width: 1fr; }
    JobForm Input:focus { background: $accent 35%; text-style: bold; }
    JobForm Checkbox:focus, JobForm Select:focus-within { background: $accent 35%; }
    JobForm .hint { color: $text-muted; text-style: italic; height: auto; column-span: 2; }
    JobForm .-refused { background: $error 35%; }
    """

    # Priority: the focus moves before the next key is read, so typing straight after Tab
    # goes into the next field.
    BINDINGS = [
        Binding("tab", "move(1)", "Next setting", show=False, priority=True),
        Binding("shift+tab", "move(-1)", "Previous setting", show=False, priority=True),
    ]

    class Changed(Message):
        """The user changed setting ``key`` to ``value`` (``None``: removed)."""

        def __init__(self, key: str, value: Any, session: int) -> None:
            super().__init__()
            self.key = key
            self.value = value
            self.session = session

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self._session = 0
        self._invalid: set[str] = set()
        self.border_title = "Job"

    def compose(self) -> ComposeResult:
        keys = list(SETTING_LABELS)
        for key in keys:
            label = SETTING_LABELS[key]
            yield Label(label, id=_widget_id(key) + "-label")
            if key == "closed":
                yield Checkbox(
                    "returns to the beginning",
                    value=True,
                    id=_widget_id(key),
                    compact=True,
                )
            elif key in CHOICE_KEYS:
                yield Select(
                    [(c, c) for c in CHOICE_KEYS[key]],
                    allow_blank=True,
                    id=_widget_id(key),
                    compact=True,
                )
            else:
                yield Input(
                    placeholder=PLACEHOLDERS.get(key, ""),
                    id=_widget_id(key),
                    compact=True,
                    select_on_focus=False,
                )
            if key == "grid.crs":
                yield Static("", id="crs-hint", classes="hint")

    def on_resize(self) -> None:
        self.set_class(self.size.width >= TWO_COLUMNS_FROM, "-two-columns")

    # -- data ----------------------------------------------------------------------------
    def load(self, doc: Mapping[str, Any]) -> None:
        """Show the settings of ``doc``."""
        for key in SETTING_LABELS:
            widget = self.query_one("#" + _widget_id(key))
            value = get_setting(doc, key)
            if isinstance(widget, Checkbox):
                with widget.prevent(Checkbox.Changed):
                    widget.value = bool(True if value is None else value)
            elif isinstance(widget, Select):
                with widget.prevent(Select.Changed):
                    widget.value = value if value in CHOICE_KEYS[key] else Select.NULL
            elif isinstance(widget, Input):
                text = shown_text(value)
                # the new document's title is typed over; every other value is edited
                widget.select_on_focus = key == "title" and text == "Untitled traverse"
                if widget.value != text:
                    with widget.prevent(Input.Changed):
                        widget.value = text

    def show_crs_hint(self, text: str) -> None:
        """Show the grid suggestion (e.g. the UTM zone of the place) under the CRS field."""
        set_text(self.query_one("#crs-hint", Static), text)

    def mark_invalid(self, keys: set[str]) -> None:
        """Mark the fields of ``keys`` as holding a value the document check refused: a red
        background, and ``✗`` before the label (so it reads without colour)."""
        if keys == self._invalid:
            return
        self._invalid = set(keys)
        for key, text in SETTING_LABELS.items():
            widget = self.query_one("#" + _widget_id(key))
            widget.set_class(key in keys, "-refused")
            label = self.query_one("#" + _widget_id(key) + "-label", Label)
            label.update(f"✗ {text}" if key in keys else text)

    def action_move(self, step: int) -> None:
        """Focus the next (``step`` 1) or previous (-1) field of the whole screen, now."""
        if step > 0:
            self.screen.focus_next()
        else:
            self.screen.focus_previous()

    # -- events --------------------------------------------------------------------------
    def on_descendant_focus(self) -> None:
        self._session += 1

    def on_input_changed(self, event: Input.Changed) -> None:
        event.stop()
        key = _key_of(event.input.id)
        self.post_message(self.Changed(key, typed_value(key, event.value), self._session))

    def on_select_changed(self, event: Select.Changed) -> None:
        event.stop()
        key = _key_of(event.select.id)
        value = None if event.value is Select.NULL else event.value
        self.post_message(self.Changed(key, value, self._session))

    def on_checkbox_changed(self, event: Checkbox.Changed) -> None:
        event.stop()
        self.post_message(self.Changed(_key_of(event.checkbox.id), event.value, None))
