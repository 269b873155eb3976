"""The key guide: the keys of the application by task, and the cautions."""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from geo.cautions import CAUTIONS


def key_rows(groups: Sequence[tuple[str, Iterable[Binding]]]) -> list[tuple[str, str, str]]:
    """(where, keys, what) for every described binding of ``groups``, duplicates removed."""
    seen: set[tuple[str, str]] = set()
    rows = []
    for where, bindings in groups:
        for b in bindings:
            if not b.description:
                continue
            keys = b.key_display or ", ".join(_pretty(k) for k in b.key.split(","))
            if (where, keys) in seen:
                continue
            seen.add((where, keys))
            rows.append((where, keys, b.description))
    return rows


def _pretty(key: str) -> str:
    names = {
        "left_square_bracket": "[",
        "right_square_bracket": "]",
        "delete": "Delete",
        "enter": "Enter",
        "escape": "Escape",
        "plus": "+",
        "minus": "-",
        "left": "←",
        "right": "→",
        "up": "↑",
        "down": "↓",
    }
    if key in names:
        return names[key]
    *mods, last = key.split("+")
    if mods and len(last) == 1:
        last = last.upper()
    elif len(last) > 1:
        last = last.capitalize()
    return "+".join([*(m.capitalize() for m in mods), last])


class KeyGuide(ModalScreen[None]):
    """The keys by task (enter a deed, mark found corners, export for the field), what each
    does; then the cautions."""

    BINDINGS = [Binding("escape,f1,q", "close", "Close the key guide")]

    DEFAULT_CSS = """
    KeyGuide { align: center middle; }
    KeyGuide > VerticalScroll {
        width: 100; max-width: 98%; height: 90%;
        border: thick $primary; background: $surface; padding: 0 1;
    }
    KeyGuide #cautions { margin-top: 1; border: round $warning; padding: 0 1; }
    """

    def __init__(self, groups: Sequence[tuple[str, Iterable[Binding]]]) -> None:
        super().__init__()
        self._rows = key_rows(groups)

    def compose(self) -> ComposeResult:
        table = Table(show_edge=False, expand=True, pad_edge=False)
        table.add_column("To", no_wrap=True)
        table.add_column("Keys", no_wrap=True, style="bold")
        table.add_column("Does")
        previous = None
        for where, keys, what in self._rows:
            table.add_row(where if where != previous else "", keys, what)
            previous = where
        with VerticalScroll() as box:
            box.border_title = "Keys by task — Escape closes"
            yield Static(table, id="keys")
            yield Static(Text("Cautions\n", style="bold") + Text(CAUTIONS), id="cautions")

    def action_close(self) -> None:
        self.dismiss(None)
