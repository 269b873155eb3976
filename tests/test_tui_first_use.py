"""The desk as someone who has never used it meets it: a new document typed by keyboard only.

One pilot test per defect found that way: a crash on a half-typed document, keys taken as
commands while the user types, the focus left behind by F2, a call replaced instead of
edited, the layout at 80x24, 120x40 and 200x50, small slips of wording, and bearings blanked
after one call that does not read. Documents here are invented (demo data).
"""

from __future__ import annotations

import asyncio
import json
from pathlib import Path

import pytest
from desk_pilot import SQUARE, settle, sync

from lodeline.geo.document import document_from_dict
from lodeline.geo.errors import DocumentError
from lodeline.tui.app import LodelineApp, load_workspace
from lodeline.tui.dialogs.choice import ChoiceDialog
from lodeline.tui.widgets.call_table import CallEditor, CallTable
from lodeline.tui.widgets.job_form import JobForm
from lodeline.tui.workspace import SETTING_LABELS, Workspace, recovery_path, write_recovery


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))
    monkeypatch.chdir(tmp_path)


@pytest.fixture
def square(tmp_path: Path) -> Path:
    path = tmp_path / "square.toml"
    path.write_text(SQUARE, encoding="utf-8")
    return path


def keyboard_text(app) -> str:
    return str(app.desk.query_one("#keyboard").render())


# -- defect 1: a crash on a new document ----------------------------------------------------


def test_a_magnetic_record_without_date_or_declination_raises_a_document_error():
    # The conversion used to fail with a TypeError deep in the march; it is a document
    # problem naming the key to fill in.
    from lodeline.geo.north import convert_document

    doc = document_from_dict(
        {
            "format_version": 1,
            "place": {"lat": 42.8731, "lon": -76.1934},
            "record": {"reference": "magnetic", "distance_unit": "perch", "foot": "us"},
            "course": [{"call": "N 45 E 20 perches"}],
        },
        check=False,
    )
    for courses in (doc.course, []):
        with pytest.raises(DocumentError) as caught:
            convert_document(doc.model_copy(update={"course": courses}))
        assert caught.value.field == "record.date"


@sync
async def test_typing_the_place_of_a_new_document_marks_what_is_missing():
    # The path that crashed: a new document, Esc, F2, a title, Tab Tab, the latitude, Tab,
    # the longitude. The desk runs on, marks the record date as missing, shows the grid of
    # the place, and the document is as typed.
    app = LodelineApp(Workspace())
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("escape", "f2", *"Glen tract", "tab", "tab", *"42.8731")
        await pilot.press("tab", *"-76.1934")
        await settle(pilot, 0.3)
        assert app.is_running
        results = app.desk.results
        assert "record.date" in results.invalid_settings
        assert "record" in (results.panels["field"].error or "")
        grid = "\n".join(results.panels["grid"].lines)
        assert "EPSG:32618" in grid  # UTM zone 18 N for 76.19° W (zone 18 spans 78-72° W)
        doc = app.workspace.doc
        assert doc["title"] == "Glen tract"
        assert doc["place"] == {"lat": 42.8731, "lon": -76.1934}
        label = app.desk.query_one("#set-record--date-label")
        assert str(label.render()).startswith("✗")


@sync
async def test_every_setting_half_typed_in_any_order_is_shown_never_raised():
    # Every setting of the job form set to text that is not what it should be, one after
    # another, then cleared again: the desk keeps running and counts a problem each time.
    app = LodelineApp(Workspace())
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        ws = app.workspace
        for key in reversed(list(SETTING_LABELS)):
            for value in ("?", "-1", "", None):
                ws.set_setting(key, value)
                app.desk.recompute(wait=True)
                assert app.desk.results is not None
        assert app.is_running


@sync
async def test_an_unforeseen_failure_is_shown_and_logged_and_editing_goes_on(square, monkeypatch):
    import lodeline.tui.results as results_module

    def broken(doc):
        raise RuntimeError("a failure nobody foresaw")

    monkeypatch.setattr(results_module, "_crs_hint", broken)
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        error = app.desk.results.panels["closure"].error or ""
        log = results_module.error_log_path()
        assert "unforeseen failure" in error and str(log) in error
        assert "RuntimeError: a failure nobody foresaw" in log.read_text(encoding="utf-8")
        await pilot.press("enter", "end", *" and on")  # editing goes on
        await settle(pilot)
        assert app.workspace.courses[0]["call"] == "N 10 E 10 chains to a stone and on"
        assert app.is_running


@sync
async def test_a_recovery_file_that_cannot_be_restored_is_offered_to_be_kept_aside(square):
    kept = recovery_path(square)
    kept.parent.mkdir(parents=True)
    kept.write_text(
        json.dumps({"saved_at": 0, "document": {"format_version": 1, "course": "N 10 E"}}),
        encoding="utf-8",
    )
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, ChoiceDialog)
        assert "cannot be restored" in app.screen._title
        await pilot.press("k")  # keep it aside
        await settle(pilot)
        assert app.is_running
        assert app.workspace.courses[0]["call"] == "N 10 E 10 chains to a stone"
    assert not kept.exists()
    aside = list(kept.parent.glob("*.unrestorable-*.json"))
    assert len(aside) == 1 and '"N 10 E"' in aside[0].read_text(encoding="utf-8")


@sync
async def test_a_recovery_whose_findings_fail_unforeseen_is_not_replayed(square, monkeypatch):
    import lodeline.tui.results as results_module

    crashed = load_workspace(square)
    crashed.set_course_field(0, "call", "N 12 E 10 chains")
    write_recovery(crashed)
    real = results_module.closure_stage

    def broken(results):
        if results.rows and results.rows[0].call == "N 12 E 10 chains":
            raise TypeError("'NoneType' object is not subscriptable")
        return real(results)

    monkeypatch.setattr(results_module, "closure_stage", broken)
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, ChoiceDialog)
        assert "cannot be restored" in app.screen._title
        await pilot.press("d")  # discard it
        await settle(pilot)
    assert not recovery_path(square).exists()


def test_the_exit_status_after_a_crash_is_not_zero(square, monkeypatch, capsys):
    import argparse

    from lodeline.tui.commands import open as open_command

    def crashing_run(self):
        self.workspace.set_course_field(0, "call", "N 11 E 10 chains")
        self._return_code = 1  # what Textual sets when the application stops on an error
        return None

    monkeypatch.setattr(LodelineApp, "run", crashing_run)
    status = open_command.run(argparse.Namespace(document=str(square)))
    assert status == 1
    message = capsys.readouterr().err
    assert "unforeseen error" in message and str(recovery_path(square)) in message
    assert recovery_path(square).exists()


# -- defect 2: keys go where the cursor is ----------------------------------------------------


@sync
async def test_a_new_document_starts_with_the_cursor_in_the_call():
    app = LodelineApp(Workspace())
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert app.focused.id == "editor-input"
        assert app.desk.query_one("#calls").has_pseudo_class("focus-within")
        assert "typing the call of course 1" in keyboard_text(app)
        await pilot.press(*"N 45 E 20 perches to a white oak")
        await settle(pilot)
        assert [c["call"] for c in app.workspace.courses] == ["N 45 E 20 perches to a white oak"]
        await pilot.press("enter")  # back to the table: now a b e f i n x are commands
        assert isinstance(app.focused, CallTable)
        assert "call table" in keyboard_text(app)
        await pilot.press("a", *"S 45 E 20 perches")  # a adds a course, the text goes in it
        await settle(pilot)
        assert [c["call"] for c in app.workspace.courses] == [
            "N 45 E 20 perches to a white oak",
            "S 45 E 20 perches",
        ]


@sync
async def test_keys_typed_straight_after_enter_go_into_the_editor(square):
    # The table acts on Enter before the next key is read, so nothing typed at speed is
    # taken as a command (here "x" would delete a course).
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        for key in ("enter", "end", "x"):
            app.post_message(__import__("textual.events", fromlist=["Key"]).Key(key, None))
        await settle(pilot)
        assert len(app.workspace.courses) == 4
        assert app.workspace.courses[0]["call"] == "N 10 E 10 chains to a stonex"


# -- defect 3: F2, F3, F4 move the focus; the job form in two columns --------------------------


@sync
async def test_f2_f3_f4_move_the_focus_into_the_pane_they_show(square):
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f2")
        assert app.focused.id == "set-title"
        assert "job form" in keyboard_text(app)
        await pilot.press("f4")
        assert app.desk.query_one("#findings").has_pseudo_class("focus-within")
        await pilot.press("f3")
        assert isinstance(app.focused, CallTable)


@sync
async def test_every_setting_is_visible_at_once_at_120x40(square):
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f2")
        await settle(pilot)
        form = app.desk.query_one(JobForm)
        assert form.has_class("-two-columns")
        shown = form.region
        for key in SETTING_LABELS:
            widget = form.query_one("#set-" + key.replace(".", "--"))
            label = form.query_one("#set-" + key.replace(".", "--") + "-label")
            for part in (widget, label):
                region = part.region
                assert region.height >= 1 and shown.contains_region(region), key
            assert label.region.y == widget.region.y, key  # label: value on one line


@pytest.mark.parametrize("size", [(80, 24), (250, 50)])
@sync
async def test_every_setting_field_shows_its_value_at_80x24_and_beside_the_calls(square, size):
    # At 80x24 the job pane shown alone once took half the width (the hidden calls kept the
    # other half), and in one column (the narrow pane beside the calls at 250 columns) every
    # field was laid out zero rows high: a value typed there could not be seen.
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=size) as pilot:
        await settle(pilot)
        await pilot.press("f2")
        await settle(pilot)
        form = app.desk.query_one(JobForm)
        if size == (80, 24):
            assert form.region.width == 80 and form.has_class("-two-columns")
        else:
            assert not form.has_class("-two-columns")
        title = form.query_one("#set-title")
        assert title.region.height == 1
        assert "Test square" in "".join(
            strip.text for strip in title.render_lines(title.region.reset_offset)
        )
        for key in SETTING_LABELS:
            widget = form.query_one("#set-" + key.replace(".", "--"))
            if widget.region.y < form.region.bottom - 1:  # the fields in view
                assert widget.region.height >= 1, key


# -- defect 4: editing keeps the text ------------------------------------------------------------


@sync
async def test_fixing_one_letter_keeps_the_rest_of_the_call(square):
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("down", "down", "enter")  # "S 10 W 10 chains"
        box = app.focused
        assert box.cursor_position == len(box.value) and box.selected_text == ""
        await pilot.press("home", *["right"] * 6)  # just after the W
        await pilot.press("backspace", "E")
        await settle(pilot)
        assert app.workspace.courses[2]["call"] == "S 10 E 10 chains"


# -- defect 5: layout --------------------------------------------------------------------------


LONG_CALL = "N 45 1/2 E 20 perches to a white oak marked with three hacks"


@pytest.mark.parametrize("size", [(80, 24), (120, 40), (200, 50)])
def test_every_column_is_reachable_and_the_call_gets_the_room_left(square, size):
    async def check() -> None:
        square.write_text(
            SQUARE.replace("N 10 E 10 chains to a stone", LONG_CALL), encoding="utf-8"
        )
        app = LodelineApp(load_workspace(square))
        async with app.run_test(size=size) as pilot:
            await settle(pilot)
            table = app.desk.query_one(CallTable)
            widths = table._shown_widths()
            text = table._line_text(table.get_row_at(0))
            # every column is there (the table scrolls sideways to reach it)
            assert table.virtual_size.width >= len(text)
            for value in table.get_row_at(0)[3:]:
                assert value.strip() in text
            room = table.size.width - sum(w + 2 for c, w in enumerate(widths) if c != 2) - 2
            if room >= len(LONG_CALL):
                assert LONG_CALL in text  # wide enough: the whole call
            else:
                assert widths[2] >= min(room, 20)
            if size == (200, 50):
                assert LONG_CALL in text

    asyncio.run(check())


@sync
async def test_an_empty_document_draws_no_plot_frame():
    app = LodelineApp(Workspace())
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot, 0.3)
        assert not app.desk.query_one("#sketch").display
        assert "Sketch:" in str(app.desk.query_one("#sketch-key").render())


def test_the_north_arrows_stand_apart_beside_the_figure():
    import numpy as np

    from lodeline.tui.widgets.sketch import NORTH_COLUMNS, NorthMark, SketchFigure, TraverseSketch

    async def check() -> None:
        from textual.app import App

        class One(App):
            def compose(self):
                yield TraverseSketch(id="s")

        app = One()
        async with app.run_test(size=(60, 24)) as pilot:
            sketch = app.query_one(TraverseSketch)
            figure = SketchFigure(
                np.array([0.0, 100.0, 100.0, 0.0]),
                np.array([0.0, 0.0, 100.0, 100.0]),
                True,
                (
                    NorthMark("G", "grid", 0.0),
                    NorthMark("T", "true", -0.5),
                    NorthMark("M", "magnetic", 0.3),
                ),
            )
            sketch.show_figure(figure)
            await pilot.pause(0.2)
            letters = [d for d in sketch._datasets if getattr(d, "marker", None) in ("G", "T", "M")]
            xs = sorted(float(d.x[0]) for d in letters)
            assert len(xs) == 3
            width, _h = sketch._area(sketch._fit_size)
            per_col = (sketch._x_max - sketch._x_min) / width
            assert min(np.diff(xs)) >= (NORTH_COLUMNS - 1) * per_col  # apart
            assert xs[0] > 100.0  # beside the figure, not on it

    asyncio.run(check())


# -- defect 6: small slips -----------------------------------------------------------------------


@sync
async def test_each_editor_shows_an_example_of_its_own_kind(square):
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        seen = set()
        for key in ("b", "f", "e", "n"):
            await pilot.press(key)
            seen.add(app.focused.placeholder)
            await pilot.press("escape")
        assert len(seen) == 4
        assert not any("white oak" in text for text in seen)


@sync
async def test_after_x_the_editor_shows_the_course_now_under_the_cursor(square):
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("x")
        await settle(pilot)
        assert app.desk.query_one("#editor-input").value == "S 80 E 10 chains"


@sync
async def test_a_new_document_header_and_the_name_save_as_offers():
    app = LodelineApp(Workspace())
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        bar = str(app.desk.query_one("#docbar").render())
        assert "· saved" not in bar and "new document" in bar
        app.workspace.set_setting("title", "Glen Tract, lot 12 (1854)")
        assert app.suggested_name() == "glen_tract_lot_12_1854.toml"
        await pilot.press("f9")
        await pilot.pause()
        assert app.screen.query_one("#prompt-input").value == "glen_tract_lot_12_1854.toml"


@sync
async def test_the_attraction_panel_speaks_plainly_and_its_tolerance_can_be_set(square):
    square.write_text(
        SQUARE.replace('call = "S 80 E 10 chains"', 'call = "S 80 E 10 chains"\nback = "N 80 W"'),
        encoding="utf-8",
    )
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        text = "\n".join(app.desk.results.panels["attraction"].lines)
        # whole degrees written: the tolerance defaults to 1° = 60′
        assert "tolerance 60′ (the precision the bearings are written to" in text
        assert "taken as free" not in text and "not reached" not in text
        app.desk.query_one("#set-record--attraction_tolerance").focus()
        await pilot.pause()
        await pilot.press(*"0.25")
        await settle(pilot)
        assert app.workspace.doc["record"]["attraction_tolerance"] == 0.25
        text = "\n".join(app.desk.results.panels["attraction"].lines)
        assert "tolerance 15′ (as set in the job form)" in text


# -- defect 7: one bad call --------------------------------------------------------------------


@sync
async def test_one_call_that_does_not_read_leaves_the_later_bearings(square):
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        before = [r.true for r in app.desk.results.rows]
        await pilot.press("down", "enter", "ctrl+u", *"S 95 E 10 chains", "enter")
        await settle(pilot)
        rows = app.desk.results.rows
        assert rows[1].mark == "✗"
        # true record: the true bearing repeats the call (common practice)
        assert [rows[0].true, rows[2].true, rows[3].true] == [before[0], *before[2:]]
        assert "does not read" in " ".join(app.desk.results.panels["closure"].lines)


@sync
async def test_the_grid_panel_shows_the_grid_of_the_place_before_any_course(tmp_path):
    path = tmp_path / "empty.toml"
    path.write_text(
        SQUARE.split("[[course]]")[0].replace('reference = "true"', 'reference = "grid"'),
        encoding="utf-8",
    )
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        grid = app.desk.results.panels["grid"].lines
        assert grid[0] == "EPSG:32618"  # 77° W lies in UTM zone 18 (78-72° W)
        assert any(line.startswith("γ ") for line in grid)


@sync
async def test_typing_after_an_undone_insert_goes_to_a_course_that_exists(square):
    # Found by the random-key test below: "a" opens the editor on a new course 5, Ctrl+Z
    # takes the course away, and the next key once raised an IndexError.
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("end", "a", "ctrl+z", "2")
        await settle(pilot)
        assert app.is_running
        assert len(app.workspace.courses) == 4
        assert app.desk.query_one(CallEditor).index == 3


# -- random keys into a new document -------------------------------------------------------------

from hypothesis import HealthCheck, Phase, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

KEYS = st.one_of(
    st.sampled_from(list("NSEW 0123456789./-perchs")),
    st.sampled_from(
        ["tab", "enter", "escape", "f2", "f3", "f4", "a", "i", "x", "ctrl+z", "ctrl+y"]
    ),
)


@pytest.mark.slow
@settings(
    max_examples=12,
    deadline=None,
    # each example runs the whole desk (seconds): examples are reported as found, unshrunk
    phases=[Phase.explicit, Phase.reuse, Phase.generate],
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)
@given(keys=st.lists(KEYS, min_size=1, max_size=40))
def test_random_keys_leave_the_desk_running_and_the_document_whole(keys, tmp_path_factory):
    from lodeline.geo.document import document_to_dict, load_document, save_document
    from lodeline.geo.errors import LodelineError
    from lodeline.tui.workspace import read_recovery, saveable_document

    folder = tmp_path_factory.mktemp("keys")

    async def run() -> dict:
        app = LodelineApp(Workspace())
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(pilot)
            for key in keys:
                await pilot.press(key)
            await settle(pilot)
            assert app.is_running
            assert app.desk.results is not None
            return app.workspace.doc

    doc = asyncio.run(run())
    try:
        checked = document_from_dict(saveable_document(doc), check=False)
    except LodelineError:
        # refused by the schema (a latitude typed as "4-."): kept whole in the recovery file
        ws = Workspace(doc=doc, path=folder / "typed.toml")
        write_recovery(ws)
        kept = read_recovery(ws.path)
        assert kept is not None and kept.doc == doc
        return
    path = folder / "typed.toml"
    save_document(checked, path)
    assert document_to_dict(load_document(path, check=False)) == document_to_dict(checked)
    reopened = load_workspace(path)
    assert saveable_document(reopened.doc) == {
        **document_to_dict(checked),
        "course": list(document_to_dict(checked).get("course") or []),
    }


# -- the start screen ----------------------------------------------------------------------------


@sync
async def test_a_new_document_from_the_start_screen_types_saves_and_reopens(tmp_path):
    from lodeline.geo.document import document_to_dict, load_document
    from lodeline.tui.screens.start import StartScreen

    app = LodelineApp(Workspace(), start=True)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, StartScreen)
        await pilot.press(*"Glen Tract", "tab", *"42.8731", "tab", *"-76.1934")
        await pilot.press("enter")  # no record date for a magnetic record: named, not opened
        await pilot.pause()
        assert isinstance(app.screen, StartScreen)
        assert "record.date" in str(app.screen.query_one("#new-problems").render())
        date = app.screen.query_one("#new-record--date")
        app.screen.set_focus(date)
        await pilot.press(*"1854-05-12", "enter")
        await settle(pilot)
        assert not isinstance(app.screen, StartScreen)
        assert app.focused.id == "editor-input"  # the cursor in the first call
        assert "typing the call of course 1" in keyboard_text(app)  # and the footer says so
        await pilot.press(*"N 45 E 20 perches to a white oak", "enter", "a")
        await pilot.press(*"S 45 E 20 perches", "enter")
        await settle(pilot)
        assert app.desk.results.problem_count == 0
        await pilot.press("ctrl+s")  # Save as, with a name from the title
        await pilot.pause()
        assert app.screen.query_one("#prompt-input").value == "glen_tract.toml"
        await pilot.press("enter")
        await settle(pilot)
        typed = app.workspace.doc
    saved = load_document(tmp_path / "glen_tract.toml")  # valid: the full check passes
    assert [c.call for c in saved.course] == [
        "N 45 E 20 perches to a white oak",
        "S 45 E 20 perches",
    ]
    assert saved.record.date == "1854-05-12" and saved.record.distance_unit == "perch"
    again = load_workspace(tmp_path / "glen_tract.toml")
    assert again.doc == {
        **document_to_dict(saved),
        "course": list(document_to_dict(saved)["course"]),
    }
    assert again.doc["course"] == typed["course"]


@sync
async def test_the_start_screen_opens_a_file_of_the_folder_and_a_demo(square):
    from lodeline.tui.screens.start import StartScreen, demo_files

    assert {p.name for p in demo_files()} >= {"brindlecombe_farm_1854.toml"}
    app = LodelineApp(Workspace(), start=True)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f6", "enter")  # the first (only) document here: square.toml
        await settle(pilot)
        assert not isinstance(app.screen, StartScreen)
        assert app.workspace.path == square.resolve() or app.workspace.path.name == "square.toml"
        assert app.desk.results.rows[0].true.startswith("N 10")
    app = LodelineApp(Workspace(), start=True)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f7", "down", "enter")  # the second demo, by name
        await settle(pilot, 0.3)
        assert app.workspace.path is None  # a copy: saved only where the user chooses
        assert app.workspace.doc["title"] == load_workspace(demo_files()[1]).doc["title"]
        assert app.desk.results.problem_count == 0


@sync
async def test_escape_on_the_start_screen_gives_an_empty_desk():
    app = LodelineApp(Workspace(), start=True)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("escape")
        await settle(pilot)
        assert app.focused.id == "editor-input"
        assert app.workspace.courses == [{"call": ""}]


@sync
async def test_a_new_document_restored_from_the_start_screen_is_shown_on_the_desk():
    # `lodeline` with no document opens the start screen and offers a kept new document;
    # restoring it once left the start screen in front of the restored calls.
    from lodeline.tui.screens.desk import Desk

    kept = Workspace()
    kept.set_course_field(0, "call", "N 12 E 6 chains to a larch")
    write_recovery(kept)
    app = LodelineApp(Workspace(), start=True)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot, 0.3)
        assert isinstance(app.screen, ChoiceDialog)
        await pilot.press("r")
        await settle(pilot, 0.3)
        assert isinstance(app.screen, Desk)
        assert app.workspace.courses[0]["call"] == "N 12 E 6 chains to a larch"
        row = " ".join(map(str, app.desk.query_one(CallTable).get_row_at(0)))
        assert "N 12 E 6 chains to a larch" in row


@sync
async def test_the_key_guide_fits_one_screen_at_120x40(square):
    from textual.containers import VerticalScroll

    from lodeline.tui.screens.key_guide import KeyGuide

    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f1")
        await settle(pilot)
        assert isinstance(app.screen, KeyGuide) and app.screen.has_class("-two-columns")
        box = app.screen.query_one(VerticalScroll)
        assert box.max_scroll_y == 0  # every key and the cautions without scrolling
        assert app.screen.query_one("#cautions").region.bottom <= 40


def test_the_guide_columns_are_about_equal_and_keep_the_order():
    from lodeline.tui.screens.key_guide import split_in_two

    assert split_in_two([13, 9, 9, 4]) == ([0, 3], [1, 2])
    assert split_in_two([1]) == ([0], [])


@sync
async def test_the_key_guide_is_by_task(square):
    from lodeline.tui.screens.key_guide import KeyGuide

    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(100, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(app.screen, KeyGuide)
        tasks = [where for where, _k, _w in app.screen._rows]
        assert list(dict.fromkeys(tasks)) == [
            "enter a deed",
            "mark found corners",
            "export for the field",
            "anywhere",
        ]


# -- the closure panel: a length in the record unit is never cut across two lines ------------------


@pytest.mark.parametrize("size", [(120, 40), (80, 24)])
@sync
async def test_the_record_unit_lengths_of_the_closure_panel_stay_on_one_line(tmp_path, size):
    # Once "misclosure 0.903 m = 0 ch 4 lk" wrapped in the narrow panel as "... = 0 ch 4" and
    # "lk" below: a length that reads as another one. Chains and links: the greyfen demo.
    import re
    import shutil

    from lodeline.tui.widgets.findings import FindingsPanel

    path = tmp_path / "greyfen.toml"
    shutil.copy(Path(__file__).parents[1] / "demo_traverses" / "greyfen_woodlot_1925.toml", path)
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=size) as pilot:
        await settle(pilot, 0.3)
        await app.workers.wait_for_complete()
        await settle(pilot)
        panel = app.desk.query_one("#panel-closure", FindingsPanel)
        if size == (80, 24):
            await pilot.press("f4")
            await settle(pilot)
        shown = [s.text.strip(" │") for s in panel.render_lines(panel.region.reset_offset)]
        lengths = [line for line in shown if " ch " in line or line.endswith(" lk")]
        assert len(lengths) >= 2, shown  # the perimeter and the misclosure
        for line in lengths:
            assert re.fullmatch(r"= \d[\d,]* ch \d+ lk", line.strip()), shown


# -- Enter on a call that does not read keeps the keyboard in the call ----------------------------


@sync
async def test_enter_on_a_call_that_does_not_read_stays_in_the_call(square):
    # Tried as a user: "S 80 E 10 chains 50" refused, Enter, then " links" typed to mend it;
    # the keys went to the table, where "i" inserted a course and "nks" became its call.
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("down", "enter")
        await settle(pilot)
        await pilot.press("ctrl+u", *"S 80 E 10 chains 50", "enter")
        await settle(pilot)
        editor = app.desk.query_one(CallEditor)
        assert editor.query_one("Input").has_focus
        assert "Escape leaves it" in str(editor.query_one("#editor-message").render())
        await pilot.press(*" links", "enter")
        await settle(pilot)
        assert len(app.workspace.courses) == 4
        assert app.workspace.courses[1]["call"] == "S 80 E 10 chains 50 links"
        assert app.desk.query_one(CallTable).has_focus  # a call that reads: back to the table
        # Escape leaves a call that does not read as written (nothing typed is lost)
        await pilot.press("enter", "ctrl+u", *"S 80 E 10 chains 50", "escape")
        await settle(pilot)
        assert app.desk.query_one(CallTable).has_focus
        assert app.workspace.courses[1]["call"] == "S 80 E 10 chains 50"


@sync
async def test_the_next_call_typed_straight_after_enter_is_a_new_course(square):
    # Tried as a user on a new document: "N 10 E 5 chains", Enter, then "S 80 E 6 chains"
    # typed on: the keys went to the table, where "a" of "chains" added a course and "ins"
    # became its call. A letter that is not a table command begins a call: in a new course
    # after the cursor's (a call already typed is never overwritten), or in a blank one.
    app = LodelineApp(Workspace(), start=False)
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press(*"N 10 E 5 chains", "enter")
        await settle(pilot)
        assert app.desk.query_one(CallTable).has_focus
        await pilot.press(*"S 80 E 6 chains to a stake", "enter", *"S 10 W 5 chains", "enter")
        await settle(pilot)
        assert [c["call"] for c in app.workspace.courses] == [
            "N 10 E 5 chains",
            "S 80 E 6 chains to a stake",
            "S 10 W 5 chains",
        ]
    # on an open document the call goes after the course under the cursor; the table's
    # command letters keep their meaning
    app = LodelineApp(load_workspace(square))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("down", *"S 45 W 2 chains", "escape")
        await settle(pilot)
        calls = [c["call"] for c in app.workspace.courses]
        assert calls[1:3] == ["S 80 E 10 chains", "S 45 W 2 chains"] and len(calls) == 5
        assert app.desk.query_one(CallTable).has_focus
        await pilot.press("x")  # delete the course just typed
        await settle(pilot)
        assert len(app.workspace.courses) == 4
