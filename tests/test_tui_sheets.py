"""Desk sheets (F10 new description, F12 plots and events, Ctrl+L layout), driven headless with the pilot."""

from __future__ import annotations

from pathlib import Path

import pytest
from desk_pilot import sync
from textual.widgets import Static

from lodeline.tui.app import LodelineApp, load_workspace
from lodeline.tui.dialogs.file_prompt import FileNamePrompt
from lodeline.tui.screens.sheets import DescriptionSheet, PlotSheet

# A square of 10 chains in true bearings: 100 square chains = 10 acres = 10 a 0 r 0 p
# (1 acre = 10 square chains = 4 roods = 160 square perches; NIST Handbook 44, App. C).
DOC = """\
format_version = 1
title = "Test square, Marrow Creek"
closed = true

[place]
lat = 40.0
lon = -77.0

[record]
reference = "true"
distance_unit = "chain"
foot = "us"

[target]
date = "2025-06-01"

[[course]]
call = "N 0 E 10 chains to a stone"
every = "4 chains"

[[course.at]]
distance = "6 chains"
note = "crossed a run"

[[course]]
call = "N 90 E 10 chains"

[[course]]
call = "S 0 E 10 chains"

[[course]]
call = "N 90 W 10 chains to the beginning"
"""


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))


def _text(screen) -> str:
    return "\n".join(str(w.render()) for w in screen.query(Static))


@sync
async def test_description_sheet_shows_and_writes_the_description(tmp_path: Path):
    path = tmp_path / "square.toml"
    path.write_text(DOC, encoding="utf-8")
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause(0.3)
        await pilot.press("f10")
        await pilot.pause(0.3)
        assert isinstance(app.screen, DescriptionSheet)
        text = _text(app.screen)
        assert "thence N 0°00′ E, 10 ch 0 lk (201.17 m) to a stone" in text
        assert "containing 10.000 acres (10 a 0 r 0 p)" in text
        await pilot.press("w")
        await pilot.pause(0.3)
        assert isinstance(app.screen, FileNamePrompt)
        await pilot.press("enter")
        await pilot.pause(0.5)
    written = (tmp_path / "square.txt").read_text(encoding="utf-8")
    assert written.startswith("Beginning at the point of beginning") and "more or less." in written


@sync
async def test_plot_sheet_lists_plots_and_events(tmp_path: Path):
    path = tmp_path / "square.toml"
    path.write_text(DOC, encoding="utf-8")
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=(160, 45)) as pilot:
        await pilot.pause(0.3)
        await pilot.press("f12")
        await pilot.pause(0.3)
        assert isinstance(app.screen, PlotSheet)
        text = _text(app.screen)
        # plots at 4 and 8 chains on course 1 (short of its 10-chain end), the run at 6
        assert "2 plots, numbered from 1" in text
        shot = app.export_screenshot()  # what the screen shows (SVG text)
        assert "crossed" in shot and "6&#160;ch&#160;0&#160;lk" in shot
        await pilot.press("escape")
        await pilot.pause(0.2)
        assert not isinstance(app.screen, PlotSheet)


@sync
async def test_layout_key_writes_the_cruise_lines(tmp_path: Path):
    from lodeline.geo.document import load_document
    from lodeline.tui.dialogs.layout_form import LayoutForm

    path = tmp_path / "square.toml"
    path.write_text(DOC, encoding="utf-8")
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause(0.3)
        await pilot.press("ctrl+l")
        await pilot.pause(0.2)
        assert isinstance(app.screen, LayoutForm)
        app.focused.value = "N 0 E"
        await pilot.press("enter")
        app.focused.value = "true"
        await pilot.press("enter")
        app.focused.value = "5 chains"
        await pilot.press("enter")
        app.focused.value = "2.5 chains"
        await pilot.press("enter")
        await pilot.pause(0.2)
        assert isinstance(app.screen, FileNamePrompt)
        await pilot.press("enter")
        await pilot.pause(0.5)
    lines = load_document(tmp_path / "square-lines.toml")
    # A 10-chain square, lines true north 5 chains apart: at 2.5 and 7.5 chains from the
    # west side, each 10 chains, with one 5-chain offset between them (hand-worked; the
    # square is in true bearings, so its sides run true north within rounding).
    calls = [c.call for c in lines.course]
    assert len(calls) == 3 and calls[0].startswith("N 0°00′00″ E 10.0000 chain")
    assert lines.course[1].note == "offset to line 2"
