"""The progress bar for batch work: silent off a terminal, done/total, rate and time left on one."""

from __future__ import annotations

import io

from rich.console import Console

from lodeline.tui.progress import Progress


def test_silent_when_stderr_is_not_a_terminal(capsys) -> None:
    # under pytest stderr is captured, so it is not a terminal: nothing is drawn
    with Progress(total=5, unit="documents", description="closing") as bar:
        assert not bar.active
        for _ in range(5):
            bar.advance()
    assert bar.done == 5
    captured = capsys.readouterr()
    assert captured.err == ""
    assert captured.out == ""


def test_silent_console_that_is_not_a_terminal() -> None:
    out = io.StringIO()
    console = Console(file=out, force_terminal=False)
    with Progress(total=3, console=console) as bar:
        bar.advance(3)
    assert not bar.active
    assert out.getvalue() == ""


def test_terminal_shows_done_total_rate_and_time_left() -> None:
    out = io.StringIO()
    console = Console(file=out, force_terminal=True, width=120, color_system=None)
    with Progress(total=4, unit="rows", description="field", console=console) as bar:
        assert bar.active
        bar.advance(2)
        bar.advance(2)
    text = out.getvalue()
    assert "field" in text
    assert "4/4" in text
    assert "rows/s" in text
    assert "left" in text


def test_empty_work_draws_and_ends() -> None:
    out = io.StringIO()
    console = Console(file=out, force_terminal=True, width=120, color_system=None)
    with Progress(total=0, console=console) as bar:
        pass
    assert bar.done == 0
    assert "0/0" in out.getvalue()
