"""Recovery files written while typing, checked on the installed ``lodeline`` in tmux: the
program is killed (SIGKILL, no chance to save) and the recovery entry must hold everything
typed more than 250 ms before the kill, whatever the rhythm of the typing; two new documents
killed at once keep one entry each, and both are offered on the next start.

Skipped, with the reason, when tmux or the installed console script is missing.
"""

from __future__ import annotations

import json
import os
import signal
import time
import uuid
from pathlib import Path

import pytest
from tmux_terminal import console_script, needs_tmux, pane, start, tmux, wait_for

pytestmark = [pytest.mark.tmux, pytest.mark.slow]

DOC = """\
format_version = 1
title = "Recovery check, Larchmere Run"
closed = false

[place]
lat = 41.0
lon = -78.0

[record]
reference = "true"
distance_unit = "chain"
foot = "us"

[[course]]
call = "N 10 E 5 chains"
"""


class Desk:
    """One ``lodeline`` in a tmux session; ``exec`` makes the pane's process the program."""

    def __init__(self, folder: Path, state: Path, *args: str) -> None:
        self.session = f"lodeline-recovery-{uuid.uuid4().hex[:8]}"
        env = f"LODELINE_STATE={state} TERM=xterm-256color"
        command = f"cd {folder} && exec env {env} {console_script()} {' '.join(args)}"
        start(self.session, command)
        self.pid = int(tmux("display", "-p", "-t", self.session, "#{pane_pid}").stdout)

    def keys(self, *keys: str, literal: bool = False) -> None:
        tmux("send-keys", "-t", self.session, *(["-l"] if literal else []), *keys)

    def wait_for(self, text: str) -> str:
        return wait_for(self.session, text)

    def kill(self) -> None:
        """SIGKILL the program itself (the terminal stays), as a crash would."""
        os.kill(self.pid, signal.SIGKILL)
        end = time.monotonic() + 10
        while time.monotonic() < end and "Pane is dead" not in pane(self.session):
            try:
                os.kill(self.pid, 0)
            except ProcessLookupError:
                break
            time.sleep(0.05)

    def close(self) -> None:
        tmux("kill-session", "-t", self.session)


def _entries(state: Path) -> list[dict]:
    return [json.loads(p.read_text(encoding="utf-8")) for p in (state / "recovery").glob("*.json")]


def _calls(entry: dict) -> list[str]:
    return [c.get("call", "") for c in entry["document"]["course"]]


@pytest.fixture
def desk_factory(tmp_path):
    opened: list[Desk] = []

    def make(*args: str) -> Desk:
        desk = Desk(tmp_path, tmp_path / "state", *args)
        opened.append(desk)
        return desk

    yield make
    for desk in opened:
        desk.close()


def _open_course_1(desk: Desk) -> None:
    """Open the call editor of course 1, empty, and make sure it takes keys.

    ``lodeline`` without a document shows the start screen first (Esc gives the empty desk,
    its cursor already in the call of course 1); on an opened document the call table has
    the keyboard and Enter opens the editor on its course 1.
    """
    end = time.monotonic() + 40
    asked_at = 0.0
    while time.monotonic() < end:
        screen = pane(desk.session)
        if "typing the call of course 1" in screen:
            break
        if time.monotonic() - asked_at > 2.0:  # one key, then time for the screen to follow
            if "New document (F5)" in screen:
                desk.keys("Escape")
                asked_at = time.monotonic()
            elif "call table: a call typed here is a new course" in screen:
                desk.keys("Enter")
                asked_at = time.monotonic()
        time.sleep(0.1)
    desk.wait_for("typing the call of course 1")
    # keys sent in one burst may reach the program in one read, and Textual runs a bound
    # key (Ctrl+U) after the letters read with it: clear, see it cleared, then type
    desk.keys("C-u")
    desk.wait_for("▊  e.g. ")  # the empty editor shows its example
    time.sleep(0.5)  # (it may have been empty before: let Ctrl+U be read on its own)
    desk.keys("qqq", literal=True)  # a probe: the editor takes the keys
    desk.wait_for("▊  qqq")
    desk.keys("C-u")
    end = time.monotonic() + 10
    while "qqq" in pane(desk.session) and time.monotonic() < end:
        time.sleep(0.1)
    assert "qqq" not in pane(desk.session)


@needs_tmux[0]
@needs_tmux[1]
def test_a_word_every_half_second_is_all_recovered_after_a_kill(tmp_path, desk_factory):
    (tmp_path / "run.toml").write_text(DOC, encoding="utf-8")
    desk = desk_factory("open", "run.toml")
    desk.wait_for("N 10 E 5 chains")
    _open_course_1(desk)
    words = ["N", " 12", " E", " 6", " chains", " to", " a", " blazed", " larch", " stump"]
    for word in words:  # never a second without a keystroke
        desk.keys(word, literal=True)
        time.sleep(0.5)
    typed = "".join(words)
    desk.wait_for(typed)  # the program has read every key
    time.sleep(0.25)
    desk.kill()
    entries = _entries(tmp_path / "state")
    assert len(entries) == 1, entries
    assert _calls(entries[0]) == [typed]


@needs_tmux[0]
@needs_tmux[1]
def test_a_burst_then_a_kill_after_0_4_s_is_recovered(tmp_path, desk_factory):
    (tmp_path / "run.toml").write_text(DOC, encoding="utf-8")
    desk = desk_factory("open", "run.toml")
    desk.wait_for("N 10 E 5 chains")
    _open_course_1(desk)
    burst = "S 44 E 18 chains to a stone " + "marked with three notches " * 7
    burst = burst[:200]
    desk.keys(burst, literal=True)
    desk.wait_for(burst[-30:])
    started = time.monotonic()
    time.sleep(max(0.0, 0.4 - (time.monotonic() - started)))
    desk.kill()
    entries = _entries(tmp_path / "state")
    assert len(entries) == 1 and _calls(entries[0]) == [burst]


@needs_tmux[0]
@needs_tmux[1]
def test_two_new_documents_killed_keep_an_entry_each_and_both_are_offered(tmp_path, desk_factory):
    state = tmp_path / "state"
    first, second = desk_factory(), desk_factory()
    for desk, call in ((first, "N 1 E 1 chain first"), (second, "S 2 W 2 chains second")):
        _open_course_1(desk)
        desk.keys(call, literal=True)
        desk.wait_for(call)
    time.sleep(0.5)
    first.kill()
    second.kill()
    kept = sorted(_calls(e)[0] for e in _entries(state))
    assert kept == ["N 1 E 1 chain first", "S 2 W 2 chains second"]
    # the next start offers the newest, then (kept for later) the other one
    third = desk_factory()
    third.wait_for("Unsaved changes found")
    screen = third.wait_for("1 more after this one")
    assert "Restore it" in screen
    third.keys("l")  # keep it for later: the next one is offered
    third.wait_for("Restore it")
    time.sleep(0.3)
    third.keys("r")
    screen = third.wait_for("restored")
    assert "first" in screen or "second" in screen
    assert len(_entries(state)) == 2  # nothing lost: the restored one goes on in its entry
