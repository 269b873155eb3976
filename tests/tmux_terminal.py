"""The installed ``lodeline`` in a real terminal: tmux sessions for the tests that type
into the program and read its screen (shared by the tmux test modules)."""

from __future__ import annotations

import shlex
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

COLUMNS, ROWS = 120, 40


def console_script() -> str | None:
    """The ``lodeline`` console script beside this Python, or on the PATH."""
    beside = Path(sys.executable).with_name("lodeline")
    if beside.exists():
        return str(beside)
    return shutil.which("lodeline")


#: Marks of a test that needs tmux and the installed console script (skipped, with the
#: reason, without them).
needs_tmux = [
    pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed"),
    pytest.mark.skipif(console_script() is None, reason="the console script is not installed"),
]


def tmux(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(["tmux", *args], capture_output=True, text=True, timeout=20)


def pane(session: str) -> str:
    return tmux("capture-pane", "-p", "-t", session).stdout


def wait_for(session: str, text: str, timeout: float = 40.0) -> str:
    """The screen once ``text`` shows on it; AssertionError with the screen after ``timeout``."""
    end = time.monotonic() + timeout
    screen = ""
    nudged = 0.0
    while time.monotonic() < end:
        screen = pane(session)
        if text in screen:
            return screen
        if _drawn_narrow(screen) and time.monotonic() - nudged > 1.0:
            _nudge(session)
            nudged = time.monotonic()
        time.sleep(0.1)
    raise AssertionError(f"{text!r} did not appear; the screen was:\n{screen}")


def _drawn_narrow(screen: str) -> bool:
    """True if the program drew 80x24 in the larger pane: a program that read the size
    while tmux was still sizing a new window (seen under load) keeps it until told again."""
    lines = screen.splitlines()
    widest = max((len(line) for line in lines), default=0)
    return 0 < widest <= 80 and any(line.strip() for line in lines[:3])


def _nudge(session: str) -> None:
    """Resize the window and back: the program is told the size again (SIGWINCH)."""
    tmux("resize-window", "-t", session, "-x", str(COLUMNS - 1), "-y", str(ROWS))
    time.sleep(0.1)
    tmux("resize-window", "-t", session, "-x", str(COLUMNS), "-y", str(ROWS))


def alive(session: str) -> bool:
    return tmux("has-session", "-t", session).returncode == 0


def start(session: str, command: str) -> None:
    """A detached session of COLUMNS x ROWS running shell ``command``.

    The command starts once the terminal has its size: a program that reads the size while
    tmux is still sizing a new window sees 80x24 and draws that in the larger pane. COLUMNS
    and LINES are cleared first: GNU readline, loaded into the test process, exports them
    (80 and 24 without a terminal), the tmux server and its panes inherit them, and a
    program that asks ``shutil.get_terminal_size`` takes them over the pane's real size.
    """
    size = f"{ROWS} {COLUMNS}"
    waits = (
        "unset COLUMNS LINES; "
        f'n=0; while [ "$(stty size)" != {shlex.quote(size)} ] && [ $n -lt 100 ]; '
        "do sleep 0.05; n=$((n+1)); done; "
    )
    started = tmux(
        "new-session", "-d", "-s", session, "-x", str(COLUMNS), "-y", str(ROWS), waits + command
    )
    assert started.returncode == 0, started.stderr
    tmux("set-option", "-t", session, "window-size", "manual")  # no client resizes it
    tmux("resize-window", "-t", session, "-x", str(COLUMNS), "-y", str(ROWS))
