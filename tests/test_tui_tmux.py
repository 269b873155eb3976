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
