"""The installed ``lodeline open`` in a real terminal (tmux): type a call, save, quit.

Skipped, with the reason, when tmux or the installed console script is missing.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import time
import uuid
from pathlib import Path

import pytest

from geo.document import load_document

pytestmark = [pytest.mark.tmux, pytest.mark.slow]

DOC = """\
format_version = 1
title = "Tmux check, Sorrel Bottom"
closed = false

[place]
lat = 41.0
lon = -78.0

[record]
reference = "true"
distance_unit = "chain"
foot = "us"

[target]
date = "2025-06-01"

[[course]]
call = "N 10 E 5 chains"

[[course]]
call = "S 80 E 5 chains"
"""


def _console_script() -> str | None:
    beside = Path(sys.executable).with_name("lodeline")
    if beside.exists():
        return str(beside)
    return shutil.which("lodeline")


def _tmux(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(["tmux", *args], capture_output=True, text=True, timeout=20)


def _pane(session: str) -> str:
    return _tmux("capture-pane", "-p", "-t", session).stdout


def _wait_for(session: str, text: str, timeout: float = 40.0) -> str:
    end = time.monotonic() + timeout
    screen = ""
    while time.monotonic() < end:
        screen = _pane(session)
        if text in screen:
            return screen
        time.sleep(0.3)
    raise AssertionError(f"{text!r} did not appear; the screen was:\n{screen}")


def _alive(session: str) -> bool:
    return _tmux("has-session", "-t", session).returncode == 0


@pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed")
@pytest.mark.skipif(
    _console_script() is None, reason="the lodeline console script is not installed"
)
def test_type_save_and_quit_in_a_real_terminal(tmp_path: Path):
    doc = tmp_path / "sorrel.toml"
    doc.write_text(DOC, encoding="utf-8")
    session = f"lodeline-test-{uuid.uuid4().hex[:8]}"
    env = f"LODELINE_STATE={tmp_path / 'state'} TERM=xterm-256color"
    command = f"cd {tmp_path} && env {env} {_console_script()} open {doc.name}"
    started = _tmux("new-session", "-d", "-s", session, "-x", "120", "-y", "40", command)
    assert started.returncode == 0, started.stderr
    try:
        _wait_for(session, "S 80 E 5 chains")  # the desk is up with the calls
        _wait_for(session, "N 10° E ")  # and the conversion shown (true = as recorded)
        _tmux("send-keys", "-t", session, "Down")
        time.sleep(0.5)
        _tmux("send-keys", "-t", session, "Enter")
        _wait_for(session, "Course 2 · call")
        _tmux("send-keys", "-t", session, "C-u")
        time.sleep(0.5)
        _tmux("send-keys", "-t", session, "-l", "S 75 E 6 chains to a stake")
        _wait_for(session, "S 75 E 6 chains to a")
        _wait_for(session, "● modified")
        _tmux("send-keys", "-t", session, "Enter")
        time.sleep(0.5)
        _tmux("send-keys", "-t", session, "C-s")
        _wait_for(session, "· saved ·")
        _tmux("send-keys", "-t", session, "C-q")
        end = time.monotonic() + 20
        while _alive(session) and time.monotonic() < end:
            time.sleep(0.3)
        assert not _alive(session), "lodeline did not quit on Ctrl+Q after saving"
    finally:
        if _alive(session):
            _tmux("kill-session", "-t", session)
    saved = load_document(doc)
    assert [c.call for c in saved.course] == ["N 10 E 5 chains", "S 75 E 6 chains to a stake"]
    assert (tmp_path / "sorrel.toml.bak").read_text(encoding="utf-8") == DOC
    assert not any((tmp_path / "state").glob("recovery/*.json"))
    assert os.environ.get("LODELINE_STATE") != str(tmp_path / "state")


@pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed")
@pytest.mark.skipif(
    _console_script() is None, reason="the lodeline console script is not installed"
)
def test_the_new_document_path_that_crashed_runs_on_and_saves_as_typed(tmp_path: Path):
    # `lodeline`, Esc (an empty desk), F2, a title, Tab Tab, the latitude, Tab, the
    # longitude: the desk once crashed here about a second later. Now it marks what is
    # missing, saves the document as typed under a name made from the title, and quits
    # with status 0 on Ctrl+Q, without a traceback.
    session = f"lodeline-test-{uuid.uuid4().hex[:8]}"
    env = f"LODELINE_STATE={tmp_path / 'state'} TERM=xterm-256color"
    status = tmp_path / "status"
    # the screen stays a few seconds after the program ends, to be read for a traceback
    command = f"cd {tmp_path} && env {env} {_console_script()}; echo $? > {status}; sleep 8"
    started = _tmux("new-session", "-d", "-s", session, "-x", "120", "-y", "40", command)
    assert started.returncode == 0, started.stderr
    try:
        _wait_for(session, "New document (F5)")  # the start screen
        _tmux("send-keys", "-t", session, "Escape")
        _wait_for(session, "typing the call of course 1")  # the desk, cursor in the call
        _tmux("send-keys", "-t", session, "F2")
        _wait_for(session, "job form")
        _tmux("send-keys", "-t", session, "-l", "Glen tract")
        _tmux("send-keys", "-t", session, "Tab", "Tab")
        _tmux("send-keys", "-t", session, "-l", "42.8731")
        _tmux("send-keys", "-t", session, "Tab")
        _tmux("send-keys", "-t", session, "-l", "--", "-76.1934")
        _wait_for(session, "-76.1934")
        time.sleep(1.5)  # where the crash came
        assert _alive(session) and not status.exists()
        _tmux("send-keys", "-t", session, "F4")  # the findings
        _wait_for(session, "EPSG:32618")  # the grid of the place (UTM 18 N)
        screen = _wait_for(session, "● modified")
        assert "record.date" in screen
        _tmux("send-keys", "-t", session, "C-s")
        _wait_for(session, "glen_tract.toml")  # Save as offers a name from the title
        _tmux("send-keys", "-t", session, "Enter")
        _wait_for(session, "· saved ·")
        _tmux("send-keys", "-t", session, "C-q")
        end = time.monotonic() + 20
        while not status.exists() and time.monotonic() < end:
            time.sleep(0.3)
        assert status.exists(), "lodeline did not quit on Ctrl+Q after saving"
        time.sleep(0.5)
        after = _pane(session)
    finally:
        if _alive(session):
            _tmux("kill-session", "-t", session)
    assert status.read_text(encoding="utf-8").strip() == "0"
    assert "Traceback" not in after and "Error" not in after
    saved = load_document(tmp_path / "glen_tract.toml", check=False)
    assert saved.title == "Glen tract"
    assert (saved.place.lat, saved.place.lon) == (42.8731, -76.1934)
    assert len(saved.course) == 0
