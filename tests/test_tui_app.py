"""The terminal application driven headless with Textual's pilot.

Type a call and see the bearings change, undo, save, reopen and compare the file; calls that
do not read are kept and marked; the quit question; the recovery offer after a crash; file
prompts that never overwrite silently; the layout at 80x24.

Expected bearings are those of ``lodeline.geo.bearings.format_bearing`` for the azimuth typed: the
record here is in true bearings, so the true column repeats the call (common practice: a
record in true bearings needs no declination).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from desk_pilot import SQUARE, settle, sync

from lodeline.geo.document import document_to_dict, load_document
from lodeline.tui.app import LodelineApp, load_workspace
from lodeline.tui.dialogs.choice import ChoiceDialog
from lodeline.tui.dialogs.file_prompt import FileNamePrompt
from lodeline.tui.screens.key_guide import KeyGuide
from lodeline.tui.widgets.call_table import CallEditor, CallTable
from lodeline.tui.widgets.findings import wrap_lines
from lodeline.tui.workspace import read_recovery, write_recovery

DOC = SQUARE


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))


@pytest.fixture
def doc_path(tmp_path: Path) -> Path:
    path = tmp_path / "square.toml"
    path.write_text(DOC, encoding="utf-8")
    return path


async def _retype(pilot, text: str) -> None:
    """Replace the editor's text with ``text`` as a user would (clear, then type)."""
    await pilot.press("ctrl+u")
    await pilot.press(*list(text))


async def _paste(pilot, text: str) -> None:
    """Replace the focused field's text at once (as a paste does): quicker than typing."""
    pilot.app.focused.value = text
    await pilot.pause()


@sync
async def test_type_a_call_undo_save_reopen(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        desk = app.desk
        before = desk.results.rows[0]
        assert before.true.startswith("N 10")
        assert before.mark == ""
        await pilot.press("enter")  # edit the call of course 1
        assert isinstance(app.focused.parent.parent, CallEditor)
        await _retype(pilot, "N 20 E 10 chains")
        await settle(pilot)
        after = desk.results.rows[0]
        assert after.true.startswith("N 20")
        assert after.true != before.true
        assert after.grid != before.grid
        table = desk.query_one(CallTable)
        assert table.get_row_at(0)[5] == after.true  # the table shows it
        assert app.workspace.dirty
        await pilot.press("enter")  # back to the table
        await pilot.press("ctrl+z")  # the whole typed call is one step
        await settle(pilot)
        assert app.workspace.courses[0]["call"] == "N 10 E 10 chains to a stone"
        assert desk.results.rows[0].true == before.true
        assert not app.workspace.dirty
        await pilot.press("ctrl+y")
        await settle(pilot)
        assert app.workspace.courses[0]["call"] == "N 20 E 10 chains"
        await pilot.press("ctrl+s")
        await settle(pilot)
        assert not app.workspace.dirty
        shown = app.workspace.doc
    saved = document_to_dict(load_document(doc_path))
    assert saved["course"][0]["call"] == "N 20 E 10 chains"
    assert saved == document_to_dict(load_document(doc_path, check=False))
    assert list(saved["course"]) == shown["course"]
    assert (doc_path.parent / "square.toml.bak").read_text(encoding="utf-8") == DOC
    assert read_recovery(doc_path) is None
    # reopen: the same document comes back
    again = load_workspace(doc_path)
    assert again.doc == {**saved, "course": list(saved["course"])}


@sync
async def test_call_that_does_not_read_is_kept_and_marked(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("down", "enter")
        await _paste(pilot, "N 95 E 10 chains")
        await settle(pilot)
        row = app.desk.results.rows[1]
        assert row.mark == "✗"
        assert row.call == "N 95 E 10 chains"
        assert row.message.startswith("✗")
        message = str(app.desk.query_one("#editor-message").render())
        assert row.message.lstrip("✗ ") in message
        # the courses before it still convert; the closure waits
        assert app.desk.results.rows[0].true.startswith("N 10")
        assert "does not read" in " ".join(app.desk.results.panels["closure"].lines)
        await pilot.press("enter", "ctrl+s")
        await settle(pilot)
    text = doc_path.read_text(encoding="utf-8")
    assert 'call = "N 95 E 10 chains"' in text  # saved as typed, never lost
    reopened = load_workspace(doc_path)
    assert reopened.courses[1]["call"] == "N 95 E 10 chains"


@sync
async def test_course_the_schema_refuses_waits_like_a_call_that_does_not_read(doc_path: Path):
    # Course 2 keeps a note, so clearing its call leaves a course the schema refuses (an
    # empty call) rather than a blank row: it is marked, the other courses still convert,
    # and the closure waits for it, as for a call that does not read.
    doc_path.write_text(
        DOC.replace('call = "S 80 E 10 chains"', 'call = "S 80 E 10 chains"\nnote = "fence"'),
        encoding="utf-8",
    )
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("down", "enter")
        await _paste(pilot, "")
        await settle(pilot)
        rows = app.desk.results.rows
        assert rows[1].mark == "✗" and "empty" in rows[1].message
        assert rows[0].true.startswith("N 10")
        # after the refused course: still converted (placed as if it were absent)
        assert rows[2].true.startswith("S 10")
        assert "as if course 2 were absent" in rows[2].message
        assert "does not read" in " ".join(app.desk.results.panels["closure"].lines)
        assert app.desk.results.panels["field"].error is None
        assert app.desk.results.problem_count == 1


def test_every_refused_or_unread_course_is_marked_and_counted(doc_path: Path):
    # Courses 2 and 4 both wrong (one refused by the schema, one that does not read, in
    # either order): both are marked and counted, course 1 still converts.
    from lodeline.tui.results import compute_results

    ws = load_workspace(doc_path)
    for second, fourth in (
        ({"call": "", "note": "fence"}, {"call": "", "note": "wall"}),
        ({"call": "", "note": "fence"}, {"call": "N 95 E 10 chains"}),
        ({"call": "N 95 E 10 chains"}, {"call": "", "note": "wall"}),
    ):
        doc = {**ws.doc, "course": [dict(c) for c in ws.doc["course"]]}
        doc["course"][1] = second
        doc["course"][3] = fourth
        results = compute_results(doc, path=doc_path)
        assert [row.mark for row in results.rows] == ["", "✗", "", "✗"]
        assert results.problem_count == 2
        assert results.rows[0].true.startswith("N 10")
        assert results.first_bad == 1


@pytest.mark.parametrize("bad", [1, 3])  # in the middle, and the last course
def test_a_sketch_cut_short_at_a_course_that_does_not_read_draws_no_misclosure(doc_path, bad):
    # The closed square with one course that does not read: the sketch draws the courses
    # before it, and no gap back to the beginning (that gap would be the courses not yet
    # read, shown as if it were the survey's misclosure, while the closure panel waits).
    from lodeline.tui.results import compute_results
    from lodeline.tui.widgets.sketch import TraverseSketch

    ws = load_workspace(doc_path)
    whole = compute_results(ws.doc, path=doc_path)
    assert whole.sketch is not None and whole.sketch.closed  # the whole square: its gap
    doc = {**ws.doc, "course": [dict(c) for c in ws.doc["course"]]}
    doc["course"][bad] = {"call": "N 95 E 10 chains"}
    results = compute_results(doc, path=doc_path)
    assert results.first_bad == bad and results.sketch is not None
    assert results.sketch.east.size == bad + 1  # the beginning and the stations before it
    assert not results.sketch.closed
    assert "misclosure" not in TraverseSketch.key_text(results.sketch)
    assert results.sketch_message == f"drawn up to course {bad}"


@sync
async def test_old_magnetic_record_without_a_declination_closes_and_fits(tmp_path: Path):
    # A deed of 1796 in magnetic bearings, no declination stated and no model covering 1796
    # (IGRF starts in 1900): the desk keeps what does not depend on that declination, closes
    # the figure in magnetic north of the record date and lets the fit find the declination
    # from the found corners (the retracement case; common practice). Demo data: invented.
    demo = Path(__file__).parents[1] / "demo_traverses" / "ashgrove_hollow_1796.toml"
    text = "".join(
        line
        for line in demo.read_text(encoding="utf-8").splitlines(keepends=True)
        if not line.startswith("declination")
    )
    path = tmp_path / "ashgrove.toml"
    path.write_text(text, encoding="utf-8")
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot, 0.3)
        results = app.desk.results
        assert results.problem_count == 0
        first = results.rows[0]
        assert first.mag_record.startswith("N 22")
        assert first.true == first.grid == first.mag_target == "—"
        closure = "\n".join(results.panels["closure"].lines)
        assert "(magnetic, record date)" in closure and "acres" in closure
        fit = "\n".join(results.panels["fit"].lines)
        assert "empirical D" in fit
        field = "\n".join(results.panels["field"].lines)
        assert "no field model covers this date" in field
        assert results.sketch is not None and results.sketch.up == "magnetic north of 1796"
        assert "magnetic north of 1796" in str(app.desk.query_one("#sketch").border_title)


@sync
async def test_add_insert_delete_move_and_undo_all(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        original = app.workspace.doc
        await pilot.press("a")  # add after course 1 and edit it
        await pilot.pause()
        await _paste(pilot, "S 45 E 1 chain")
        await pilot.press("enter")
        await settle(pilot)
        assert [c["call"] for c in app.workspace.courses][1] == "S 45 E 1 chain"
        await pilot.press("right_square_bracket")  # move it down
        await settle(pilot)
        assert app.workspace.courses[2]["call"] == "S 45 E 1 chain"
        await pilot.press("x")  # delete it
        await settle(pilot)
        assert len(app.workspace.courses) == 4
        for _ in range(4):
            await pilot.press("ctrl+z")
        await settle(pilot)
        assert app.workspace.doc == original
        assert len(app.desk.results.rows) == 4


@sync
async def test_quit_asks_when_there_are_unsaved_changes(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("enter")
        await pilot.pause()
        await _paste(pilot, "N 10 E 10 chains and more")
        await pilot.press("enter")
        await settle(pilot)
        await pilot.press("ctrl+q")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)
        await pilot.press("c")  # cancel: keep working
        await pilot.pause()
        assert not isinstance(app.screen, ChoiceDialog)
        assert app.is_running
        await pilot.press("ctrl+q")
        await pilot.pause()
        await pilot.press("d")  # discard and quit
        await pilot.pause()
    assert doc_path.read_text(encoding="utf-8") == DOC
    assert read_recovery(doc_path) is None


@sync
async def test_recovery_is_offered_after_a_crash(doc_path: Path):
    crashed = load_workspace(doc_path)
    crashed.set_course_field(0, "call", "N 12 E 10 chains (typed before the crash)")
    write_recovery(crashed)  # what the desk keeps while editing; then the process died
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, ChoiceDialog)
        await pilot.press("r")  # restore them
        await settle(pilot)
        assert app.workspace.courses[0]["call"].startswith("N 12 E 10 chains")
        assert app.workspace.dirty
        assert app.desk.results.rows[0].true.startswith("N 12")


@sync
async def test_export_prompt_never_overwrites_silently(doc_path: Path):
    existing = doc_path.with_suffix(".csv")
    existing.write_text("kept\n", encoding="utf-8")
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f7")
        await pilot.pause()
        assert isinstance(app.screen, FileNamePrompt)
        await pilot.press("enter")  # suggested name square.csv exists
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)
        await pilot.press("k")  # keep it
        await pilot.pause()
        assert isinstance(app.screen, FileNamePrompt)
        assert "kept" in str(app.screen.query_one("#prompt-message").render())
        await pilot.press("escape")
    assert existing.read_text(encoding="utf-8") == "kept\n"


@sync
async def test_save_as_refuses_other_suffixes_and_asks_before_replacing(doc_path: Path):
    other = doc_path.parent / "copy.toml"
    other.write_text("old\n", encoding="utf-8")
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f9")
        await pilot.pause()
        await _paste(pilot, str(doc_path.parent / "copy.txt"))
        await pilot.press("enter")
        await pilot.pause()
        assert ".toml or .json" in str(app.screen.query_one("#prompt-message").render())
        await _paste(pilot, str(other))
        await pilot.press("enter")
        await pilot.pause()
        await pilot.press("r")  # replace
        await settle(pilot)
        assert app.workspace.path == other
    assert load_document(other).title == "Test square, Marrow Creek"
    assert (doc_path.parent / "copy.toml.bak").read_text(encoding="utf-8") == "old\n"


@sync
async def test_key_guide_lists_every_key_and_the_cautions(doc_path: Path):
    from lodeline.geo.cautions import CAUTIONS

    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(app.screen, KeyGuide)
        keys = {k for _where, k, _what in app.screen._rows}
        for needed in (
            "F1",
            "Ctrl+S",
            "F9",
            "Ctrl+Z",
            "Ctrl+Y",
            "Ctrl+Q",
            "F6",
            "F7",
            "F8",
            "Enter",
            "a",
            "i",
            "Delete, x",
            "Ctrl+P",
            "F2",
            "F3",
            "F4",
            "0",
        ):
            assert needed in keys, needed
        text = str(app.screen.query_one("#cautions").render())
        assert CAUTIONS[:60] in text.replace("\n", " ")


@sync
async def test_every_action_is_in_the_command_palette(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        titles = {c.title for c in app.get_system_commands(app.screen)}
    for needed in (
        "Save",
        "Save as…",
        "Undo",
        "Redo",
        "Export GeoJSON…",
        "Export CSV…",
        "Write report…",
        "Key guide",
        "Add course",
        "Delete course",
        "Edit call",
        "Edit back bearing",
        "Edit found position",
        "Fit sketch",
        "Quit",
    ):
        assert needed in titles, needed


@sync
async def test_small_terminal_shows_one_pane_at_a_time(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        desk = app.desk
        assert desk.query_one("#calls").display
        assert not desk.query_one("#findings").display
        await pilot.press("f4")
        await settle(pilot)
        assert desk.query_one("#findings").display
        assert not desk.query_one("#calls").display
        await pilot.press("f2")
        await settle(pilot)
        assert desk.query_one("#job").display
        await pilot.press("f3")
        await settle(pilot)
        assert desk.query_one("#calls").display


@sync
async def test_job_setting_edit_is_undoable(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        desk = app.desk
        field = desk.query_one("#set-place--lat")
        field.focus()
        await pilot.pause()
        await _paste(pilot, "41.5")
        await settle(pilot)
        assert app.workspace.doc["place"]["lat"] == 41.5
        await pilot.press("ctrl+z")
        await settle(pilot)
        assert app.workspace.doc["place"]["lat"] == 40.0
        assert field.value == "40.0"


@sync
async def test_exports_and_report_are_written_from_the_desk(doc_path: Path):
    import json

    from geojson_pydantic import FeatureCollection

    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        for key in ("f6", "f7", "f8"):
            await pilot.press(key)
            await pilot.pause()
            assert isinstance(app.screen, FileNamePrompt)
            await pilot.press("enter")  # the suggested names do not exist yet
            await settle(pilot)
            assert not isinstance(app.screen, FileNamePrompt)
    collection = json.loads(doc_path.with_suffix(".geojson").read_text(encoding="utf-8"))
    FeatureCollection.model_validate(collection)  # RFC 7946 shape (geojson-pydantic)
    assert doc_path.with_suffix(".csv").exists()
    assert (doc_path.parent / "square-courses.csv").exists()  # the CSV's second file
    assert "Marrow Creek" in doc_path.with_suffix(".html").read_text(encoding="utf-8")


@sync
async def test_csv_prompt_asks_when_only_the_second_file_exists(doc_path: Path):
    second = doc_path.parent / "square-courses.csv"
    second.write_text("kept\n", encoding="utf-8")
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("f7")
        await pilot.pause()
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)  # square-courses.csv exists: asked
        await pilot.press("k")
        await pilot.pause()
        await pilot.press("escape")
    assert second.read_text(encoding="utf-8") == "kept\n"
    assert not doc_path.with_suffix(".csv").exists()


@sync
async def test_found_positions_typed_give_the_fit(doc_path: Path):
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        conv = app.desk.results.conversion
        assert "needs found positions" in app.desk.query_one("#panel-fit").text
        for row in (0, 2):  # the record's own end stations as found: a fit with no rotation
            end = conv.courses[row].end
            app.desk.query_one(CallTable).move_cursor(row=row)
            await pilot.press("f")
            await pilot.pause()
            assert "found position" in str(app.desk.query_one("#editor-label").render())
            await _paste(pilot, f"easting={end.easting:.3f}, northing={end.northing:.3f}")
            await pilot.press("enter")
            await settle(pilot)
        assert app.workspace.courses[2]["found"]["easting"] == pytest.approx(
            conv.courses[2].end.easting, abs=1e-3
        )
        text = app.desk.query_one("#panel-fit").text
        # a true record onto its own grid positions: the rotation record -> grid is -gamma
        # (grid az = true az - gamma, DESIGN.md), the same across this small figure to 0.01°
        rotation = float(text.split("rotation ")[1].split("°")[0])
        assert rotation == pytest.approx(-conv.courses[0].convergence_deg, abs=0.01)
        assert "rms 0.000 m" in text


@sync
async def test_a_document_the_schema_refuses_opens_to_be_put_right(doc_path: Path):
    # A latitude of 95 is refused by the schema; the document opens as written, the
    # setting is marked (✗ before its label, not only a colour), saving waits, and once the
    # latitude is put right the bearings appear and the file saves.
    doc_path.write_text(DOC.replace("lat = 40.0", "lat = 95.0"), encoding="utf-8")
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        desk = app.desk
        assert "latitude 95" in (desk.results.panels["closure"].error or "")
        label = desk.query_one("#set-place--lat-label")
        assert str(label.render()).startswith("✗")
        await pilot.press("ctrl+s")
        await settle(pilot)
        assert "lat = 95.0" in doc_path.read_text(encoding="utf-8")  # not saved yet
        app.workspace.set_setting("place.lat", 40.0)
        desk.reload()
        await settle(pilot)
        assert desk.results.rows[0].true.startswith("N 10")
        assert not str(label.render()).startswith("✗")
        await pilot.press("ctrl+s")
        await settle(pilot)
    assert "lat = 40.0" in doc_path.read_text(encoding="utf-8")


def test_a_file_that_is_not_a_traverse_document_still_refuses_to_open(tmp_path: Path):
    from lodeline.geo.errors import DocumentError

    for name, text in (
        ("other.toml", "format_version = 3\n"),
        ("broken.toml", "title = [unclosed\n"),
        ("list.json", "[1, 2]"),
        ("courses.toml", 'format_version = 1\ncourse = "N 10 E 4 perches"\n'),
    ):
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        with pytest.raises(DocumentError) as caught:
            load_workspace(path)
        assert name in str(caught.value)


@sync
async def test_panels_keep_their_height_while_typing_and_give_it_back_after(doc_path: Path):
    # While a call is typed, a panel whose text gets shorter keeps its height (padded), so
    # the screen does not jump; leaving the editor gives each panel its text's height.
    app = LodelineApp(load_workspace(doc_path))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        desk = app.desk
        panel = desk.query_one("#panel-closure")
        full = panel.size.height
        await pilot.press("enter")
        await _retype(pilot, "N 10 E")  # no distance yet: the closure waits (one line)
        await settle(pilot)
        assert "does not read" in panel.text
        held = panel.size.height
        assert held >= full  # never shorter while typing (it may have grown on the way)
        await pilot.press("enter")  # back to the table: the call stays as typed
        await settle(pilot)
        wrapped = wrap_lines(panel.text, panel.content_size.width)
        assert panel.size.height == len(wrapped) < held  # its own text's height again
        assert app.workspace.courses[0]["call"] == "N 10 E"


def test_a_refused_document_with_toml_dates_keeps_its_recovery(doc_path: Path):
    # Opened as written, a document's TOML dates (unquoted) become text as in every other
    # document, so its unsaved changes can be kept in the recovery file.
    text = DOC.replace("lat = 40.0", "lat = 95.0").replace(
        '[target]\ndate = "2025-06-01"', "[target]\ndate = 2025-06-01"
    )
    assert "date = 2025-06-01" in text
    doc_path.write_text(text, encoding="utf-8")
    ws = load_workspace(doc_path)
    assert ws.doc["target"]["date"] == "2025-06-01"
    ws.set_setting("place.lat", 40.5)
    write_recovery(ws)
    kept = read_recovery(doc_path)
    assert kept is not None and kept.doc["place"]["lat"] == 40.5
    assert kept.doc["target"]["date"] == "2025-06-01"
