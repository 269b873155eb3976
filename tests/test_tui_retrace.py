"""The desk's retracement sheet (Ctrl+T): corners, stakeout lines, survey date and the plot."""

from __future__ import annotations

import asyncio
import shutil
from pathlib import Path

import pytest

from lodeline.tui.app import LodelineApp, load_workspace
from lodeline.tui.dialogs.retrace_sheet import RetraceSheet
from lodeline.tui.widgets.declination_plot import DeclinationPlot

DEMO = Path(__file__).parents[1] / "demo_traverses" / "wrenfield_glebe_1911.toml"


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def _text(screen, selector: str) -> str:
    return str(screen.query_one(selector).render())


def test_ctrl_t_shows_corners_stakeout_and_survey_date(tmp_path):
    path = tmp_path / "w.toml"
    shutil.copy(DEMO, path)

    async def scenario() -> None:
        app = LodelineApp(load_workspace(path))
        async with app.run_test(size=(120, 40)) as pilot:
            await pilot.pause(0.3)
            await app.workers.wait_for_complete()
            await pilot.press("ctrl+t")
            await pilot.pause(0.3)
            sheet = app.screen
            assert isinstance(sheet, RetraceSheet)
            corners = _text(sheet, "#sheet-corners")
            assert "restored (proportion, 1-3)" in corners and "found" in corners
            stake = _text(sheet, "#sheet-stakeout")
            assert (
                "from corner 1, " in stake and "to corner 0, a restored point of beginning" in stake
            )
            assert "matches the field of" in _text(sheet, "#sheet-date")
            assert sheet.query_one(DeclinationPlot)
            await pilot.press("r")
            await pilot.pause(0.2)
            assert "rotate-scale" in _text(sheet, "#sheet-corners")
            await pilot.press("o")
            await pilot.pause(0.2)
            assert "from the previous corner" in _text(sheet, "#sheet-stakeout")
            await pilot.press("escape")
            await pilot.pause(0.1)
            assert not isinstance(app.screen, RetraceSheet)

    asyncio.run(scenario())
