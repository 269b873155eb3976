"""A progress bar on stderr for long batch work (rows of a CSV, documents of a folder).

The bar is drawn only when stderr is a terminal; otherwise (a pipe, a file, the tests) it
draws nothing and costs one comparison per :meth:`Progress.advance`. It shows done/total,
the rate in the given unit per second and the time left. rich (installed with Textual) draws
it; it is imported only when a bar is actually drawn, so a command that writes to a pipe does
not pay for the import.

Usage::

    with Progress(total=len(paths), unit="documents") as bar:
        for path in paths:
            ...
            bar.advance()
"""

from __future__ import annotations

import sys
from types import TracebackType
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from rich.console import Console


def _stderr_is_terminal() -> bool:
    isatty = getattr(sys.stderr, "isatty", None)
    try:
        return bool(isatty and isatty())
    except (OSError, ValueError):  # a closed or odd stream
        return False


class Progress:
    """A done/total bar with a rate (``unit`` per second) and time left, on stderr.

    ``total`` is the number of items of work (rows, documents); ``description`` is the short
    label at the left. ``console`` replaces stderr (a rich Console, used by the tests with
    ``force_terminal``); when it is None the bar is drawn on stderr if stderr is a terminal
    and not at all otherwise. Used as a context manager; :meth:`advance` adds done items.
    """

    def __init__(
        self,
        total: int,
        *,
        unit: str = "rows",
        description: str = "",
        console: Console | None = None,
    ) -> None:
        self.total = max(0, int(total))
        self.unit = unit
        self.description = description
        self.done = 0
        self._console = console
        self._bar: Any = None
        self._task: Any = None
        self._drawn = 0.0
        #: Whether a bar is drawn at all (a terminal, or a console given by the caller).
        self.active = console.is_terminal if console is not None else _stderr_is_terminal()

    def __enter__(self) -> Progress:
        if self.active:
            self._start()
        return self

    def __exit__(
        self,
        exc_type: type[BaseException] | None,
        exc: BaseException | None,
        tb: TracebackType | None,
    ) -> None:
        if self._bar is not None:
            self._bar.stop()
            self._bar = None

    def _start(self) -> None:
        from rich.console import Console
        from rich.progress import (
            BarColumn,
            MofNCompleteColumn,
            TaskProgressColumn,
            TextColumn,
            TimeRemainingColumn,
        )
        from rich.progress import Progress as RichProgress

        console = self._console if self._console is not None else Console(stderr=True)
        self._bar = RichProgress(
            TextColumn("{task.description}"),
            BarColumn(),
            MofNCompleteColumn(),
            TaskProgressColumn(),
            TextColumn("{task.fields[rate]}"),
            TextColumn("left"),
            TimeRemainingColumn(),
            console=console,
            transient=False,
            auto_refresh=False,
        )
        self._bar.start()
        self._task = self._bar.add_task(self.description, total=self.total, rate=f"– {self.unit}/s")
        self._bar.refresh()

    def advance(self, n: int = 1) -> None:
        """Count ``n`` more items done and redraw the bar (at most a few times a second)."""
        self.done += n
        if self._bar is None:
            return
        self._bar.update(self._task, advance=n)
        task = self._bar.tasks[0]
        speed = task.speed
        rate = f"{speed:,.0f} {self.unit}/s" if speed else f"– {self.unit}/s"
        self._bar.update(self._task, rate=rate)
        # redraw at most ten times a second, and always at the end
        now = task.get_time()
        if self.done >= self.total or now - self._drawn >= 0.1:
            self._drawn = now
            self._bar.refresh()
