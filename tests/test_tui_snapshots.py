"""SVG snapshots of the application's main states at fixed terminal sizes (few on purpose:
every style change rewrites them; update with ``pytest --snapshot-update``).

The document states its target date, so the magnetic bearings do not change with the day.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from lodeline.tui.app import LodelineApp, load_workspace

DEMO = Path(__file__).parents[1] / "demo_traverses" / "brindlecombe_farm_1854.toml"


@pytest.fixture
def farm(tmp_path, monkeypatch) -> Path:
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))
    monkeypatch.chdir(tmp_path)
    text = DEMO.read_text(encoding="utf-8")
    if "[target]" not in text:
        text = text.replace("\n[[course]]", '\n[target]\ndate = "2025-06-01"\n\n[[course]]', 1)
    Path("farm.toml").write_text(text, encoding="utf-8")
    return Path("farm.toml")


async def _ready(pilot) -> None:
    from textual.widgets import Input

    await pilot.pause(0.3)
    await pilot.app.workers.wait_for_complete()
    # a blinking cursor is drawn or not by the half second the snapshot falls on: hold it on
    for screen in pilot.app.screen_stack:
        for field in screen.query(Input):
            field.cursor_blink = False
    await pilot.pause(0.2)


def test_desk_stacked_120x40(snap_compare, farm):
    assert snap_compare(
        LodelineApp(load_workspace(farm)), terminal_size=(120, 40), run_before=_ready
    )


def test_desk_single_pane_80x24_with_a_call_that_does_not_read(snap_compare, farm):
    async def run_before(pilot) -> None:
        await _ready(pilot)
        await pilot.press("down", "enter", "ctrl+u", *list("N 95 E 68 perches"), "enter")
        await _ready(pilot)

    assert snap_compare(
        LodelineApp(load_workspace(farm)), terminal_size=(80, 24), run_before=run_before
    )


def test_key_guide(snap_compare, farm):
    async def run_before(pilot) -> None:
        await _ready(pilot)
        await pilot.press("f1")
        await pilot.pause(0.2)

    assert snap_compare(
        LodelineApp(load_workspace(farm)), terminal_size=(100, 40), run_before=run_before
    )


def test_desk_side_by_side_200x50_with_the_job_form(snap_compare, farm):
    async def run_before(pilot) -> None:
        await _ready(pilot)
        await pilot.press("f2")  # the job form beside the calls, label: value
        await pilot.pause(0.2)

    assert snap_compare(
        LodelineApp(load_workspace(farm)), terminal_size=(200, 50), run_before=run_before
    )


def test_start_screen_80x24(snap_compare, farm):
    from lodeline.tui.workspace import Workspace

    assert snap_compare(
        LodelineApp(Workspace(), start=True), terminal_size=(80, 24), run_before=_ready
    )
