"""Pasting a whole description into the desk's call editor (Textual pilot)."""

from __future__ import annotations

from pathlib import Path

from desk_pilot import SQUARE, settle, sync
from textual import events

from lodeline.tui.app import LodelineApp, load_workspace
from lodeline.tui.widgets.call_table import CallEditor, looks_like_description

DEED = (
    "Beginning at a hickory on the west side of the branch, thence S 14 W 36 poles to a "
    "stone;\nthence N 80 W 20 perches to a post, thence North 12 perches to the place of "
    "beginning, containing 61 acres, more or less."
)


def _doc(tmp_path: Path) -> Path:
    path = tmp_path / "square.toml"
    path.write_text(SQUARE, encoding="utf-8")
    return path


def test_what_counts_as_a_description():
    assert looks_like_description(DEED)
    assert looks_like_description("N 10 E 4 poles\nS 80 E 6 poles")
    assert not looks_like_description("thence N 10 E 4 poles to a stone")
    assert not looks_like_description("N 10 E 4 poles")


@sync
async def test_a_pasted_description_becomes_courses_in_one_undo_step(tmp_path: Path):
    app = LodelineApp(load_workspace(_doc(tmp_path)))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("down")  # course 2
        await pilot.press("enter")
        assert isinstance(app.focused.parent.parent, CallEditor)
        app.focused.post_message(events.Paste(DEED))
        await settle(pilot)
        calls = [c["call"] for c in app.workspace.courses]
        assert calls == [
            "N 10 E 10 chains to a stone",
            "S 14 W 36 poles to a stone",
            "N 80 W 20 perches to a post",
            "North 12 perches to the place of beginning",
            "S 10 W 10 chains",
            "N 80 W 10 chains to the beginning",
        ]
        doc = app.workspace.doc
        assert doc["place"]["description"].startswith("Beginning at a hickory")
        assert doc["record"]["area"] == "61 acres, more or less"
        assert doc["format_version"] == 2
        rows = app.desk.results.rows
        assert rows[1].true.startswith("S 14") and rows[3].true == "due N"
        message = str(app.desk.query_one("#editor-message").render())
        assert "3 courses read" in message
        await pilot.press("escape")
        await pilot.press("ctrl+z")  # the whole paste is one step
        await settle(pilot)
        assert [c["call"] for c in app.workspace.courses][1] == "S 80 E 10 chains"
        assert len(app.workspace.courses) == 4
        assert "description" not in app.workspace.doc["place"]


@sync
async def test_a_pasted_description_that_does_not_read_changes_nothing(tmp_path: Path):
    app = LodelineApp(load_workspace(_doc(tmp_path)))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("enter")
        app.focused.post_message(events.Paste(DEED.replace("36 poles", "36 poles 5")))
        await settle(pilot)
        assert len(app.workspace.courses) == 4
        assert not app.workspace.dirty
        message = str(app.desk.query_one("#editor-message").render())
        assert "course 1" in message and "«5»" in message


@sync
async def test_a_pasted_single_call_is_typed_as_before(tmp_path: Path):
    app = LodelineApp(load_workspace(_doc(tmp_path)))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("enter")
        await pilot.press("ctrl+u")
        app.focused.post_message(events.Paste("N 20 E 10 chains"))
        await settle(pilot)
        assert app.workspace.courses[0]["call"] == "N 20 E 10 chains"
        assert len(app.workspace.courses) == 4
