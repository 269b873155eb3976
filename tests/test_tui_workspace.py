"""The application's document state: edits, undo/redo, dirty tracking and recovery files.

No Textual here: these are the plain-Python parts the desk drives.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from lodeline.tui.app import parse_found
from lodeline.tui.workspace import (
    Workspace,
    discard_recovery,
    is_blank_course,
    read_recovery,
    recovery_path,
    saveable_document,
    with_setting,
    write_recovery,
)


@pytest.fixture(autouse=True)
def _state(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_STATE", str(tmp_path / "state"))


def _doc() -> dict:
    return {
        "format_version": 1,
        "title": "Test figure",
        "place": {"lat": 40.0, "lon": -77.0},
        "record": {"reference": "true", "distance_unit": "chain"},
        "course": [{"call": "N 10 E 5 chains"}, {"call": "S 80 E 5 chains"}],
    }


def test_typing_in_one_field_is_one_undo_step():
    ws = Workspace(doc=_doc())
    original = ws.doc
    for text in ("N", "N 1", "N 12", "N 12 E 5 chains"):
        ws.set_course_field(0, "call", text, session=7)
    assert ws.courses[0]["call"] == "N 12 E 5 chains"
    assert len(ws.undo_stack) == 1
    assert ws.undo() == "edit call of course 1"
    assert ws.doc is original
    assert not ws.dirty
    ws.redo()
    assert ws.courses[0]["call"] == "N 12 E 5 chains"
    assert ws.dirty


def test_a_new_session_is_a_new_undo_step():
    ws = Workspace(doc=_doc())
    ws.set_course_field(0, "call", "N 11 E 5 chains", session=1)
    ws.set_course_field(0, "call", "N 12 E 5 chains", session=2)
    assert len(ws.undo_stack) == 2
    ws.undo()
    assert ws.courses[0]["call"] == "N 11 E 5 chains"


def test_structure_edits_undo_in_order():
    ws = Workspace(doc=_doc())
    original = ws.doc
    ws.insert_course(1, {"call": "N 80 W 2 chains"})
    assert [c["call"] for c in ws.courses] == [
        "N 10 E 5 chains",
        "N 80 W 2 chains",
        "S 80 E 5 chains",
    ]
    assert ws.move_course(1, 1) == 2
    assert ws.courses[2]["call"] == "N 80 W 2 chains"
    ws.delete_course(0)
    assert len(ws.courses) == 2
    while ws.undo():
        pass
    assert ws.doc == original
    assert not ws.dirty


def test_edits_never_change_an_earlier_snapshot():
    ws = Workspace(doc=_doc())
    before = ws.doc
    ws.set_setting("place.lat", 41.5)
    ws.set_course_field(1, "back", "N 80 W")
    assert before["place"]["lat"] == 40.0
    assert "back" not in before["course"][1]


def test_setting_removed_with_none_drops_empty_table():
    doc = with_setting({"grid": {"crs": "EPSG:32618"}}, "grid.crs", None)
    assert doc == {}


def test_blank_courses_are_not_saved_but_typed_ones_are():
    doc = {**_doc(), "course": [{"call": ""}, {"call": "N 95 E junk"}, {"call": "  "}]}
    assert [is_blank_course(c) for c in doc["course"]] == [True, False, True]
    assert saveable_document(doc)["course"] == [{"call": "N 95 E junk"}]


def test_recovery_round_trip_and_discard(tmp_path: Path):
    target = tmp_path / "farm.toml"
    ws = Workspace(doc=_doc(), path=target)
    ws.set_course_field(0, "call", "N 95 E this does not read")
    write_recovery(ws)
    found = read_recovery(target)
    assert found is not None
    assert found.doc == ws.doc
    assert found.document_path == target.resolve()
    assert read_recovery(tmp_path / "other.toml") is None
    discard_recovery(target)
    assert read_recovery(target) is None
    assert not recovery_path(target).exists()


def test_unreadable_recovery_file_is_ignored(tmp_path: Path):
    target = tmp_path / "farm.toml"
    file = recovery_path(target)
    file.parent.mkdir(parents=True)
    file.write_text("{not json", encoding="utf-8")
    assert read_recovery(target) is None
    assert file.exists()  # left in place for the user


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("easting=1200.5, northing=880.25", {"easting": 1200.5, "northing": 880.25}),
        ("E=10 N=20", {"easting": 10.0, "northing": 20.0}),
        ("1200.5 880.25", {"easting": 1200.5, "northing": 880.25}),
        ("lat=40.1, lon=-77.2", {"lat": 40.1, "lon": -77.2}),
        ("", None),
        ("near the old mill", "near the old mill"),  # kept as typed; the check names it
    ],
)
def test_found_positions_read_or_kept(text, expected):
    assert parse_found(text) == expected


def test_call_text_of_parts_reads_as_in_the_commands():
    """Regression: the desk joined a course's parts by itself and showed an interior-angle
    course of the 1887 demo as "1547 vara" (angle lost) while every command showed
    "angle 98 16, 1547 vara"; both now come from lodeline.geo.document.course_call_text."""
    from lodeline.tui.workspace import course_call_text

    assert course_call_text({"angle": "98 16", "distance": 1547.0, "unit": "vara"}) == (
        "angle 98 16, 1547 vara"
    )
    assert course_call_text({"bearing": "N 45 E", "distance": "x"}) == "N 45 E x"


def test_editing_the_call_of_a_course_given_by_parts_keeps_its_meaning():
    # The desk shows a course given by angle and distance as its call ("angle 98 16, 1547
    # vara"); writing that call replaces the parts and the course reads the same. The first
    # course (bearing, distance and the angle at the point of beginning) keeps its angle.
    from lodeline.geo.document import document_from_dict, parse_courses
    from lodeline.tui.app import load_workspace
    from lodeline.tui.workspace import course_call_text

    demo = Path(__file__).parents[1] / "demo_traverses" / "piedra_lisa_survey_1887.toml"
    ws = load_workspace(demo)
    before = parse_courses(document_from_dict(ws.doc))
    shown = [course_call_text(ws.courses[i], "vara") for i in (0, 1)]
    assert shown[1] == "angle 98 16, 1547 vara"  # as the commands write it
    for index in (0, 1):
        ws.set_course_field(index, "call", shown[index])
    first, second = ws.courses[0], ws.courses[1]
    assert "bearing" not in first and "distance" not in first and "angle" in first
    assert second["call"].startswith("angle ") and "angle" not in second
    after = parse_courses(document_from_dict(ws.doc))
    for a, b in zip(before, after, strict=True):
        assert (a.azimuth_deg, a.length_m, a.angle_deg) == (b.azimuth_deg, b.length_m, b.angle_deg)


def test_each_new_document_has_its_own_recovery_entry():
    from lodeline.tui.workspace import untitled_recoveries

    first, second = Workspace(), Workspace()
    first.set_course_field(0, "call", "N 1 E 1 chain")
    second.set_course_field(0, "call", "S 2 W 2 chains")
    assert write_recovery(first) != write_recovery(second)
    kept = untitled_recoveries()
    assert sorted(e.doc["course"][0]["call"] for e in kept) == ["N 1 E 1 chain", "S 2 W 2 chains"]
    assert {e.key for e in kept} == {first.recovery_key, second.recovery_key}


def test_a_new_document_another_running_session_keeps_is_not_offered():
    import json
    import subprocess
    import sys

    from lodeline.tui.workspace import untitled_recoveries

    ws = Workspace()
    ws.set_course_field(0, "call", "N 1 E 1 chain")
    file = write_recovery(ws)
    payload = json.loads(file.read_text(encoding="utf-8"))
    assert payload["pid"] > 0
    other = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(30)"])
    try:
        payload["pid"] = other.pid  # kept by a session still running
        file.write_text(json.dumps(payload), encoding="utf-8")
        assert untitled_recoveries() == []
    finally:
        other.kill()
        other.wait()
    assert [e.key for e in untitled_recoveries()] == [ws.recovery_key]  # it ended: offered


def test_keeper_writes_while_changes_keep_coming_and_a_discard_holds():
    import json
    import time

    from lodeline.tui.workspace import RECOVERY_INTERVAL_S, RecoveryKeeper

    ws = Workspace()
    keeper = RecoveryKeeper(ws)
    file = recovery_path(None, ws.recovery_key)
    lags = []
    for n in range(40):  # a keystroke every 30 ms for 1.2 s: never a pause
        ws.set_course_field(0, "call", f"N {n} E 1 chain", session=1)
        keeper.changed()
        time.sleep(0.03)
        if file.exists():
            kept = json.loads(file.read_text(encoding="utf-8"))["document"]["course"][0]["call"]
            lags.append(n - int(kept.split()[1]))
    assert lags and max(lags[5:]) * 0.03 <= RECOVERY_INTERVAL_S + 0.15  # written as typed
    keeper.discard()  # quit without saving: nothing pending may bring the entry back
    time.sleep(3 * RECOVERY_INTERVAL_S)
    assert not file.exists()
    keeper.stop()
