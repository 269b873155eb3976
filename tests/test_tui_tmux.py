"""The installed ``lodeline open`` in a real terminal (tmux): type a call, save, quit.

Skipped, with the reason, when tmux or the installed console script is missing.
"""

from __future__ import annotations

import os
import time
import uuid
from pathlib import Path

import pytest
from tmux_terminal import alive, console_script, needs_tmux, pane, start, tmux, wait_for

from lodeline.geo.document import load_document

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


@needs_tmux[0]
@needs_tmux[1]
def test_type_save_and_quit_in_a_real_terminal(tmp_path: Path):
    doc = tmp_path / "sorrel.toml"
    doc.write_text(DOC, encoding="utf-8")
    session = f"lodeline-test-{uuid.uuid4().hex[:8]}"
    env = f"LODELINE_STATE={tmp_path / 'state'} TERM=xterm-256color"
    command = f"cd {tmp_path} && env {env} {console_script()} open {doc.name}"
    start(session, command)
    try:
        wait_for(session, "S 80 E 5 chains")  # the desk is up with the calls
        wait_for(session, "N 10° E ")  # and the conversion shown (true = as recorded)
        tmux("send-keys", "-t", session, "Down")
        time.sleep(0.5)
        tmux("send-keys", "-t", session, "Enter")
        wait_for(session, "Course 2 · call")
        tmux("send-keys", "-t", session, "C-u")
        time.sleep(0.5)
        tmux("send-keys", "-t", session, "-l", "S 75 E 6 chains to a stake")
        wait_for(session, "S 75 E 6 chains to a")
        wait_for(session, "● modified")
        tmux("send-keys", "-t", session, "Enter")
        time.sleep(0.5)
        tmux("send-keys", "-t", session, "C-s")
        wait_for(session, "· saved ·")
        tmux("send-keys", "-t", session, "C-q")
        end = time.monotonic() + 20
        while alive(session) and time.monotonic() < end:
            time.sleep(0.3)
        assert not alive(session), "lodeline did not quit on Ctrl+Q after saving"
    finally:
        if alive(session):
            tmux("kill-session", "-t", session)
    saved = load_document(doc)
    assert [c.call for c in saved.course] == ["N 10 E 5 chains", "S 75 E 6 chains to a stake"]
    assert (tmp_path / "sorrel.toml.bak").read_text(encoding="utf-8") == DOC
    assert not any((tmp_path / "state").glob("recovery/*.json"))
    assert os.environ.get("LODELINE_STATE") != str(tmp_path / "state")


@needs_tmux[0]
@needs_tmux[1]
def test_the_new_document_path_that_crashed_runs_on_and_saves_as_typed(tmp_path: Path):
    # `lodeline`, Esc (an empty desk), F2, a title, Tab Tab, the latitude, Tab, the
    # longitude: the desk once crashed here about a second later. Now it marks what is
    # missing, saves the document as typed under a name made from the title, and quits
    # with status 0 on Ctrl+Q, without a traceback.
    session = f"lodeline-test-{uuid.uuid4().hex[:8]}"
    env = f"LODELINE_STATE={tmp_path / 'state'} TERM=xterm-256color"
    status = tmp_path / "status"
    # the screen stays a few seconds after the program ends, to be read for a traceback
    command = f"cd {tmp_path} && env {env} {console_script()}; echo $? > {status}; sleep 8"
    start(session, command)
    try:
        wait_for(session, "New document (F5)")  # the start screen
        tmux("send-keys", "-t", session, "Escape")
        wait_for(session, "typing the call of course 1")  # the desk, cursor in the call
        tmux("send-keys", "-t", session, "F2")
        wait_for(session, "job form")
        tmux("send-keys", "-t", session, "-l", "Glen tract")
        tmux("send-keys", "-t", session, "Tab", "Tab")
        tmux("send-keys", "-t", session, "-l", "42.8731")
        tmux("send-keys", "-t", session, "Tab")
        tmux("send-keys", "-t", session, "-l", "--", "-76.1934")
        wait_for(session, "-76.1934")
        time.sleep(1.5)  # where the crash came
        assert alive(session) and not status.exists()
        tmux("send-keys", "-t", session, "F4")  # the findings
        wait_for(session, "EPSG:32618")  # the grid of the place (UTM 18 N)
        screen = wait_for(session, "● modified")
        assert "record.date" in screen
        tmux("send-keys", "-t", session, "C-s")
        wait_for(session, "glen_tract.toml")  # Save as offers a name from the title
        tmux("send-keys", "-t", session, "Enter")
        wait_for(session, "· saved ·")
        tmux("send-keys", "-t", session, "C-q")
        end = time.monotonic() + 20
        while not status.exists() and time.monotonic() < end:
            time.sleep(0.3)
        assert status.exists(), "lodeline did not quit on Ctrl+Q after saving"
        time.sleep(0.5)
        after = pane(session)
    finally:
        if alive(session):
            tmux("kill-session", "-t", session)
    assert status.read_text(encoding="utf-8").strip() == "0"
    assert "Traceback" not in after and "Error" not in after
    saved = load_document(tmp_path / "glen_tract.toml", check=False)
    assert saved.title == "Glen tract"
    assert (saved.place.lat, saved.place.lon) == (42.8731, -76.1934)
    assert len(saved.course) == 0


@needs_tmux[0]
@needs_tmux[1]
def test_four_calls_typed_in_one_burst_land_each_in_its_course(tmp_path: Path):
    # Tried as a user: on a new document, four calls each ended by Enter, sent to the
    # terminal in one burst. The first call kept only "N" and its other words went into the
    # second course (an Enter acted before the keys typed ahead of it reached the call, and
    # "a" of "chains" on the table added courses). Now each call is its own course, in order.
    session = f"lodeline-test-{uuid.uuid4().hex[:8]}"
    env = f"LODELINE_STATE={tmp_path / 'state'} TERM=xterm-256color"
    start(session, f"cd {tmp_path} && env {env} {console_script()} open burst.toml")
    calls = [
        "N 10 E 5 chains",
        "S 80 E 6 chains to a stake",
        "S 10 W 5 chains",
        "N 80 W 6 chains to the beginning",
    ]
    try:
        wait_for(session, "typing the call of course 1")
        # one write to the terminal: carriage returns are the Enter key
        tmux("send-keys", "-t", session, "-l", "\r".join(calls) + "\r")
        wait_for(session, calls[-1])
        time.sleep(1.0)
        screen = pane(session)
    finally:
        if alive(session):
            tmux("kill-session", "-t", session)
    rows = [line.strip("┃ ").split(None, 1) for line in screen.splitlines()[3:9]]
    assert [r[1].strip() if len(r) > 1 else "" for r in rows[:5]] == [*calls, ""]
    assert [r[0] for r in rows[:4]] == ["1", "2", "3", "▸4"]


@needs_tmux[0]
@needs_tmux[1]
def test_arrows_sent_in_one_burst_with_enter_move_before_the_editor_opens(tmp_path: Path):
    # Tried as a user: on a demo, Down Down Down Enter sent in one burst opened the editor on
    # course 1 (the arrows reached the table only after Enter had moved the keyboard into the
    # call, and were lost), and the call typed next replaced course 1's. Now Enter opens the
    # course the arrows reached.
    demo = Path(__file__).parents[1] / "demo_traverses" / "wrenfield_glebe_1911.toml"
    (tmp_path / "glebe.toml").write_text(demo.read_text(encoding="utf-8"), encoding="utf-8")
    session = f"lodeline-test-{uuid.uuid4().hex[:8]}"
    env = f"LODELINE_STATE={tmp_path / 'state'} TERM=xterm-256color"
    start(session, f"cd {tmp_path} && env {env} {console_script()} open glebe.toml")
    try:
        wait_for(session, "call table: a call typed here is a new course")
        tmux("send-keys", "-t", session, "Down", "Down", "Down", "Enter")
        wait_for(session, "typing the call of")
        time.sleep(0.5)
        screen = pane(session)
    finally:
        if alive(session):
            tmux("kill-session", "-t", session)
    assert "typing the call of course 4" in screen
    assert "Course 4 · call" in screen
