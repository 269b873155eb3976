"""The desk on bad input: documents it must open without crashing, work it must not run on
its main thread, and the recovery file it keeps while typing (see also tests/test_tui_tmux.py)."""

from __future__ import annotations

import contextlib

import pytest
from desk_pilot import sync
from textual.worker import WorkerCancelled

from lodeline.tui.app import LodelineApp, load_workspace

DOC = """\
format_version = 1
title = "Test square, Marrow Creek"
closed = true

[place]
lat = 40.0
lon = -77.0

[record]
reference = "magnetic"
date = "{record}"
distance_unit = "chain"
foot = "us"

[target]
date = "{target}"

[[course]]
call = "N 10 E 10 chains to a stone"

[[course]]
call = "S 80 E 10 chains"
"""


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))


async def _settle(pilot) -> None:
    await pilot.pause(0.1)
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()


@pytest.mark.parametrize(
    ("record", "target"), [("1925-10-03", "9999-01-01"), ("9999-12-31", "2025-06-01")]
)
@sync
async def test_desk_opens_a_document_with_a_date_outside_the_calendar(tmp_path, record, target):
    path = tmp_path / "far.toml"
    path.write_text(DOC.format(record=record, target=target), encoding="utf-8")
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=(120, 40)) as pilot:
        await _settle(pilot)
        results = app.desk.results
        assert results is not None
        key = "target.date" if target.startswith("9999") else "record.date"
        assert key in results.invalid_settings


@sync
async def test_a_large_export_runs_off_the_main_thread_and_quit_waits_for_it_saying_so(tmp_path):
    from lodeline.geo.along import MAX_ALONG_POINTS

    path = tmp_path / "long.toml"
    path.write_text(
        'format_version = 1\n[place]\nlat = 40.0\nlon = -77.0\n[record]\nreference = "true"\n'
        f'[[course]]\ncall = "N 10 E {MAX_ALONG_POINTS} m"\nevery = "1 m"\n',
        encoding="utf-8",
    )
    app = LodelineApp(load_workspace(path))
    out = path.with_suffix(".geojson")
    async with app.run_test(size=(120, 40)) as pilot:
        await _settle(pilot)
        await pilot.press("f6")
        await pilot.pause()
        await pilot.press("enter")  # the suggested name: long.geojson, the most points allowed
        busy = [w for w in app.workers if w.group == "output" and not w.is_finished]
        assert busy, "the export ran on the main thread"
        await pilot.press("ctrl+q")  # the document is saved, but an export is being written
        # the key was answered while the export runs: the desk says it quits once it is
        # written, instead of looking stuck (or leaving half a file)
        assert not out.exists() and app.return_value is None
        said = [n.message for n in app._notifications]
        assert any(m.startswith("Quitting once the output being written is written") for m in said)
        with contextlib.suppress(WorkerCancelled):  # the desk quits as the worker ends
            await busy[0].wait()
        await pilot.pause()
    assert app.return_value == 0
    assert out.read_text(encoding="utf-8").endswith("}\n")  # written whole
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []
