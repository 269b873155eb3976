"""The start screen of ``lodeline`` with no document: a new document, a file, or a demo.

A new document asks only what every traverse needs before its first call: a title, the place
(latitude and longitude, or grid coordinates with their CRS), how the bearings were read and
when, and the unit of the distances, each with an example. Its check is the document's own
(:func:`geo.document.document_problems`): a problem is named beside the form and the desk
opens once there is none, with the cursor in the first call. Escape goes to the desk with an
empty document.
"""

from __future__ import annotations

import importlib.resources
from pathlib import Path
from typing import TYPE_CHECKING, Any

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import (
    Button,
    ContentSwitcher,
    Footer,
    Input,
    Label,
    OptionList,
    Select,
    Static,
)
from textual.widgets.option_list import Option

from lodeline.geo.errors import LodelineError

from ..widgets.findings import set_text
from ..widgets.job_form import CHOICE_KEYS, typed_value
from ..workspace import new_document, with_setting

if TYPE_CHECKING:
    from ..app import LodelineApp

#: The questions of a new document: (document key, label, example shown in the field).
NEW_FIELDS: tuple[tuple[str, str, str], ...] = (
    ("title", "Title", "e.g. Glen Tract, lot 12"),
    ("place.lat", "Latitude (°, north +)", "e.g. 42.8731"),
    ("place.lon", "Longitude (°, east +)", "e.g. -76.1934"),
    ("place.easting", "or grid easting", "e.g. 432100.5 (with a grid CRS)"),
    ("place.northing", "and grid northing", "e.g. 4747300.2"),
    ("grid.crs", "Grid CRS", "auto: the UTM zone, or e.g. EPSG:2261"),
    ("record.reference", "Bearings read from", ""),
    ("record.date", "Record date", "e.g. 1854-05-12 (the original survey)"),
    ("record.declination", "Declination then", "auto (field model), or e.g. 3°10' W"),
    ("record.distance_unit", "Distances in", ""),
)


def demo_files() -> list[Path]:
    """The demo documents shipped with lodeline (invented places), by name."""
    try:
        root = importlib.resources.files("lodeline.demos")
        found = [Path(str(p)) for p in root.iterdir() if p.name.endswith(".toml")]
    except (ModuleNotFoundError, OSError, NotADirectoryError):
        found = []
    return sorted(found, key=lambda p: p.name)


def document_files(folder: Path) -> list[Path]:
    """The traverse documents (.toml, .json) of ``folder``, by name."""
    try:
        return sorted(
            (p for p in folder.iterdir() if p.suffix.lower() in (".toml", ".json") and p.is_file()),
            key=lambda p: p.name.lower(),
        )
    except OSError:
        return []


def new_document_from(answers: dict[str, Any]) -> tuple[dict[str, Any], list[str]]:
    """The document the answers make, and its problems as lines naming the key."""
    from lodeline.geo.document import document_from_dict, document_problems

    doc = new_document()
    for key, value in answers.items():
        doc = with_setting(doc, key, value)
    doc["course"] = []
    try:
        checked = document_from_dict(doc, check=False)
    except LodelineError as err:
        return doc, [str(err)]
    problems = [str(e) for e in document_problems(checked) if e.course is None]
    return doc, problems


class StartScreen(Screen[None]):
    """New document, open a file, open a demo; Escape: the desk with an empty document."""

    BINDINGS = [
        Binding("f5", "show('new')", "New document"),
        Binding("f6", "show('open')", "Open a file"),
        Binding("f7", "show('demo')", "Open a demo"),
        Binding("escape", "empty", "Empty desk"),
        # priority: the focus moves before the next key is read
        Binding("tab", "app.focus_next", "Next", show=False, priority=True),
        Binding("shift+tab", "app.focus_previous", "Previous", show=False, priority=True),
    ]

    DEFAULT_CSS = """
    StartScreen { align: center top; }
    StartScreen #start { width: 90; max-width: 100%; height: 1fr; padding: 0 1; }
    StartScreen #intro { height: auto; margin: 1 0; }
    StartScreen #choices { height: auto; }
    StartScreen #choices Button { margin-right: 1; }
    StartScreen ContentSwitcher { height: 1fr; border: heavy $accent; }
    StartScreen #new { layout: grid; grid-size: 2; grid-columns: 24 1fr; grid-rows: auto;
                       grid-gutter: 0 1; height: auto; max-height: 100%; }
    StartScreen #new Label { text-align: right; color: $text-muted; }
    StartScreen #new Input { background: $boost; padding: 0 1; }
    StartScreen #new Input:focus { background: $accent 35%; }
    StartScreen #new Select:focus-within { background: $accent 35%; }
    StartScreen #new-problems { column-span: 2; height: auto; color: $error; }
    StartScreen #new-go { column-span: 2; margin-top: 1; }
    StartScreen OptionList { height: 1fr; }
    StartScreen .empty { color: $text-muted; padding: 1; }
    """

    def __init__(self, folder: Path | None = None) -> None:
        super().__init__()
        self.folder = folder or Path.cwd()

    @property
    def lode(self) -> LodelineApp:
        return self.app  # type: ignore[return-value]

    def compose(self) -> ComposeResult:
        files = document_files(self.folder)
        demos = demo_files()
        with Vertical(id="start"):
            yield Static(
                "[b]lodeline[/b]: the calls of an old deed or a compass line turned to true, "
                "grid and today's magnetic bearings, closed and drawn to scale.\n"
                "Not a legal boundary: original monuments and evidence control; local law "
                "and licensed practice decide.",
                id="intro",
            )
            with Horizontal(id="choices"):
                yield Button("New document (F5)", id="choose-new", variant="primary")
                yield Button(f"Open a file (F6, {len(files)} here)", id="choose-open")
                yield Button("Open a demo (F7)", id="choose-demo")
            with ContentSwitcher(initial="new"):
                with VerticalScroll(id="new") as new:
                    new.border_title = "New document"
                    for key, label, example in NEW_FIELDS:
                        yield Label(label)
                        wid = "new-" + key.replace(".", "--")
                        if key in CHOICE_KEYS:
                            yield Select(
                                [(c, c) for c in CHOICE_KEYS[key]],
                                value=new_document()["record"][key.split(".")[1]],
                                allow_blank=False,
                                id=wid,
                                compact=True,
                            )
                        else:
                            yield Input(placeholder=example, id=wid, compact=True)
                    yield Static("", id="new-problems")
                    yield Button("Start typing the calls (Enter)", id="new-go", variant="success")
                with Vertical(id="open"):
                    if files:
                        yield OptionList(
                            *[Option(p.name, id=str(p)) for p in files], id="open-list"
                        )
                    else:
                        yield Static(
                            f"No .toml or .json documents in {self.folder}.", classes="empty"
                        )
                with Vertical(id="demo"):
                    if demos:
                        yield OptionList(
                            *[Option(p.stem.replace("_", " "), id=str(p)) for p in demos],
                            id="demo-list",
                        )
                    else:
                        yield Static("No demos are installed with this copy.", classes="empty")
        yield Footer()

    def on_mount(self) -> None:
        self.set_focus(self.query_one("#new-title", Input))

    # -- choosing ----------------------------------------------------------------------
    def action_show(self, name: str) -> None:
        self.query_one(ContentSwitcher).current = name
        target = {"new": "#new-title", "open": "#open-list", "demo": "#demo-list"}[name]
        found = self.query(target)
        if found:
            self.set_focus(found.first())

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        if event.button.id == "new-go":
            self.start_new()
        elif event.button.id:
            self.action_show(event.button.id.removeprefix("choose-"))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.start_new()

    def action_empty(self) -> None:
        self.dismiss(None)

    # -- the three ways in -------------------------------------------------------------
    def answers(self) -> dict[str, Any]:
        out: dict[str, Any] = {}
        for key, _label, _example in NEW_FIELDS:
            widget = self.query_one("#new-" + key.replace(".", "--"))
            if isinstance(widget, Select):
                value = None if widget.value is Select.NULL else widget.value
            else:
                value = typed_value(key, widget.value)
            if value is not None:
                out[key] = value
        return out

    def start_new(self) -> None:
        """Open the desk on the new document, cursor in the first call, once it has no
        problem of its own (each is named under the form)."""
        doc, problems = new_document_from(self.answers())
        if problems:
            set_text(self.query_one("#new-problems", Static), "\n".join(f"⚠ {p}" for p in problems))
            return
        doc["course"] = [{"call": ""}]
        self.lode.start_document(doc, path=None)
        self.dismiss(None)

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        path = Path(event.option.id or "")
        if event.option_list.id == "demo-list":
            self.lode.start_demo(path)
            self.dismiss(None)
        elif self.lode.open_path(path):
            self.dismiss(None)
