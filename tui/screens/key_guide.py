"""The key guide: the keys of the application by task, and the cautions."""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from lodeline.geo.cautions import CAUTIONS


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


#: Terminal columns from which the guide shows its tasks in two columns (one screen at 120x40).
TWO_COLUMNS_FROM = 110


def _task_table(where: str, rows: list[tuple[str, str]]) -> RenderableType:
    table = Table(show_header=False, show_edge=False, box=None, expand=True, pad_edge=False)
    table.add_column("Keys", no_wrap=True, style="bold", min_width=6)
    table.add_column("Does", ratio=1)
    for keys, what in rows:
        table.add_row(keys, what)
    return Group(Text(where, style="bold underline"), table, Text(""))


def split_in_two(sizes: Sequence[int]) -> tuple[list[int], list[int]]:
    """Indices of tasks of ``sizes`` rows for two columns of about equal height: the largest
    first, each to the shorter column; each column keeps the guide's order."""
    columns: tuple[list[int], list[int]] = ([], [])
    heights = [0, 0]
    for i in sorted(range(len(sizes)), key=lambda i: -sizes[i]):
        shorter = 0 if heights[0] <= heights[1] else 1
        columns[shorter].append(i)
        heights[shorter] += sizes[i]
    return sorted(columns[0]), sorted(columns[1])


class KeyGuide(ModalScreen[None]):
    """The keys by task (enter a deed, mark found corners, export for the field), what each
    does; then the cautions. Two columns of tasks where the terminal is wide enough."""

    BINDINGS = [Binding("escape,f1,q", "close", "Close the key guide")]

    DEFAULT_CSS = """
    KeyGuide { align: center middle; }
    KeyGuide > VerticalScroll {
        width: 100; max-width: 98%; height: auto; max-height: 98%;
        border: thick $primary; background: $surface; padding: 0 1;
    }
    KeyGuide.-two-columns > VerticalScroll { width: 118; }
    KeyGuide #cautions { border: round $warning; padding: 0 1; }
    """

    def __init__(self, groups: Sequence[tuple[str, Iterable[Binding]]]) -> None:
        super().__init__()
        self._rows = key_rows(groups)

    def _tasks(self) -> list[tuple[str, list[tuple[str, str]]]]:
        tasks: dict[str, list[tuple[str, str]]] = {}
        for where, keys, what in self._rows:
            tasks.setdefault(where, []).append((keys, what))
        return list(tasks.items())

    def compose(self) -> ComposeResult:
        tasks = self._tasks()
        two = self.app.size.width >= TWO_COLUMNS_FROM
        self.set_class(two, "-two-columns")
        if two:
            left, right = split_in_two([len(rows) for _where, rows in tasks])
            keys: RenderableType = Table.grid(expand=True, padding=(0, 2))
            keys.add_column(ratio=1)
            keys.add_column(ratio=1)
            keys.add_row(
                Group(*(_task_table(*tasks[i]) for i in left)),
                Group(*(_task_table(*tasks[i]) for i in right)),
            )
        else:
            keys = Group(*(_task_table(where, rows) for where, rows in tasks))
        with VerticalScroll() as box:
            box.border_title = "Keys by task — Escape closes"
            yield Static(keys, id="keys")
            yield Static(Text("Cautions\n", style="bold") + Text(CAUTIONS), id="cautions")

    def action_close(self) -> None:
        self.dismiss(None)
