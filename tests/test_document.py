"""The traverse document: schema, one-line errors, round trips, atomic save, fuzzing."""

from __future__ import annotations

import contextlib
import copy
import json
import tomllib
from pathlib import Path

import pytest
from fuzz import examples
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lodeline.geo.document import (
    Document,
    check_document,
    document_from_dict,
    document_problems,
    document_to_dict,
    dumps_document,
    load_document,
    loads_document,
    parse_courses,
    save_document,
)
from lodeline.geo.errors import DocumentError

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))

BASE = {
    "format_version": 1,
    "title": "test figure",
    "closed": True,
    "place": {"lat": 40.0, "lon": -77.0},
    "record": {"reference": "magnetic", "date": "1925-06-01", "distance_unit": "chain"},
    "course": [
        {"call": "N 10 E 10 chains"},
        {"bearing": "S 80 E", "distance": 10, "unit": "chain"},
        {"call": "S 10 W 10"},
        {"call": "N 80 W 10 chains to the beginning"},
    ],
}


def variant(**changes):
    """BASE with changes: keys like "record.date" or "course.2.bearing"; None deletes."""
    data = copy.deepcopy(BASE)
    for dotted, value in changes.items():
        parts = dotted.split(".")
        node = data
        for p in parts[:-1]:
            node = node[int(p) - 1] if isinstance(node, list) else node.setdefault(p, {})
        key = parts[-1]
        if isinstance(node, list):
            node[int(key) - 1] = value
        elif value is None:
            node.pop(key, None)
        else:
            node[key] = value
    return data


# (case name, document dict, expected course, expected field, a word of the message)
MALFORMED = [
    ("no format version", variant(format_version=None), None, "format_version", "missing"),
    ("future format", variant(format_version=3), None, "format_version", "format"),
    ("unknown top key", variant(colour="red"), None, "colour", "unknown key"),
    ("unknown record key", variant(**{"record.variation": 2}), None, "record.variation", "unknown"),
    ("unknown course key", variant(**{"course.3.length": 2}), 3, "length", "unknown key"),
    ("no place", variant(place=None), None, "place", "missing"),
    ("place not a table", variant(place=3), None, "place", "table"),
    ("lat without lon", variant(place={"lat": 40.0}), None, "place.lon", "together"),
    ("lat out of range", variant(place={"lat": 95.0, "lon": 0.0}), None, "place.lat", "-90..90"),
    ("lat is text", variant(place={"lat": "forty", "lon": 0.0}), None, "place.lat", "number"),
    (
        "both lat/lon and easting/northing",
        variant(place={"lat": 40.0, "lon": -77.0, "easting": 1.0, "northing": 2.0}),
        None,
        "place.lat",
        "not both",
    ),
    (
        "easting without crs",
        variant(place={"easting": 500000.0, "northing": 4400000.0}),
        None,
        "grid.crs",
        "CRS",
    ),
    ("closed not boolean", variant(closed="yes"), None, "closed", "true or false"),
    (
        "bad reference",
        variant(**{"record.reference": "compass"}),
        None,
        "record.reference",
        "magnetic",
    ),
    ("magnetic without date", variant(**{"record.date": None}), None, "record.date", "date"),
    ("date not a date", variant(**{"record.date": "May 1854"}), None, "record.date", "date"),
    ("impossible date", variant(**{"record.date": "1854-02-30"}), None, "record.date", "calendar"),
    (
        "declination does not parse",
        variant(**{"record.declination": "a few degrees west"}),
        None,
        "record.declination",
        "",
    ),
    ("unknown foot", variant(**{"record.foot": "survey"}), None, "record.foot", "international"),
    (
        "unknown unit",
        variant(**{"record.distance_unit": "furlongs"}),
        None,
        "record.distance_unit",
        "unit",
    ),
    ("course call not text", variant(**{"course.2": {"call": 12}}), 2, "call", "text"),
    ("call and bearing", variant(**{"course.1.bearing": "N 10 E"}), 1, "bearing", "either"),
    (
        "bearing without distance",
        variant(**{"course.2": {"bearing": "S 80 E"}}),
        2,
        "distance",
        "missing",
    ),
    ("empty course", variant(**{"course.4": {}}), 4, "call", "missing"),
    ("call does not parse", variant(**{"course.3": {"call": "S 10 Q 10 chains"}}), 3, "call", ""),
    ("call without distance", variant(**{"course.3": {"call": "S 10 W"}}), 3, "call", "distance"),
    ("bearing does not parse", variant(**{"course.2.bearing": "S 95 E"}), 2, "bearing", ""),
    ("unit unknown on course", variant(**{"course.2.unit": "cubits"}), 2, "unit", "unit"),
    ("negative distance", variant(**{"course.2.distance": -10}), 2, "distance", ""),
    ("back does not parse", variant(**{"course.1.back": "backwards"}), 1, "back", ""),
    ("found half", variant(**{"course.2.found": {"easting": 1.0}}), 2, "found.easting", "both"),
    ("found extra", variant(**{"course.2.found": {"x": 1.0, "y": 2.0}}), 2, "found.x", "unknown"),
    ("every does not parse", variant(**{"course.1.every": "often"}), 1, "every", ""),
    ("every zero", variant(**{"course.1.every": "0 chains"}), 1, "every", ""),
    (
        "varas without vara_inches",
        variant(**{"course.1": {"call": "N 10 E 100 varas"}}),
        1,
        "call",
        "vara",
    ),
    (
        "angle without record.angles",
        variant(**{"course.2": {"angle": "90", "distance": 10}}),
        None,
        "record.angles",
        "right",
    ),
    (
        "first course by angle",
        variant(**{"record.angles": "right", "course.1": {"angle": "90", "distance": 10}}),
        1,
        "bearing",
        "first course",
    ),
    (
        "angle that is a bearing",
        variant(**{"record.angles": "right", "course.2": {"angle": "S 80 E", "distance": 10}}),
        2,
        "angle",
        "bearing",
    ),
    ("course list not a list", variant(course="N 10 E"), None, "course", "list"),
    ("target date bad", variant(target={"date": "tomorrow"}), None, "target.date", "date"),
    ("target unknown key", variant(target={"when": "2025-01-01"}), None, "target.when", "unknown"),
    (
        "nan height",
        variant(place={"lat": 40.0, "lon": -77.0, "height_m": float("nan")}),
        None,
        "place.height_m",
        "finite",
    ),
]


@pytest.mark.parametrize(
    ("data", "course", "field", "word"),
    [case[1:] for case in MALFORMED],
    ids=[case[0] for case in MALFORMED],
)
def test_malformed_document_names_file_course_and_key(data, course, field, word):
    with pytest.raises(DocumentError) as info:
        document_from_dict(data, file="deed.toml")
    err = info.value
    assert err.file == "deed.toml"
    assert err.course == course
    assert err.field == field
    text = str(err)
    assert "\n" not in text
    assert text.startswith("deed.toml: ")
    if course is not None:
        assert f"course {course}" in text
    assert f"'{field}'" in text
    assert word.lower() in text.lower()


def test_malformed_table_is_large_enough():
    assert len(MALFORMED) >= 20


def test_toml_syntax_error_names_the_file(tmp_path):
    p = tmp_path / "broken.toml"
    p.write_text("format_version = 1\n[place\nlat = 1\n", encoding="utf-8")
    with pytest.raises(DocumentError) as info:
        load_document(p)
    assert str(p) in str(info.value) and "TOML" in str(info.value)


def test_json_syntax_error_names_file_and_line(tmp_path):
    p = tmp_path / "broken.json"
    p.write_text('{\n"format_version": 1,\n"place": {\n}}}', encoding="utf-8")
    with pytest.raises(DocumentError) as info:
        load_document(p)
    assert info.value.line == 4


def test_unknown_suffix_and_missing_file(tmp_path):
    with pytest.raises(DocumentError, match="toml or .json"):
        load_document(tmp_path / "deed.txt")
    with pytest.raises(DocumentError, match="cannot be read"):
        load_document(tmp_path / "absent.toml")


def test_not_utf8(tmp_path):
    p = tmp_path / "latin1.toml"
    p.write_bytes('format_version = 1\ntitle = "Ste-Th\xe9r\xe8se"\n'.encode("latin-1"))
    with pytest.raises(DocumentError, match="UTF-8"):
        load_document(p)


def test_schema_keys_are_those_of_format_version_1():
    # The keys of the issue that introduced the format, plus target/angle/angles and
    # record.declination_sigma (documented; optional, so every older document still reads).
    assert list(Document.model_fields) == [
        "format_version",
        "title",
        "closed",
        "place",
        "grid",
        "record",
        "target",
        "plots",
        "course",
    ]
    from lodeline.geo.document import Course, CourseEvent, Found, Place, Plots, Record, Target

    # events along a course and the plot list's numbering (documented beside target)
    assert set(CourseEvent.model_fields) == {"distance", "note"}
    assert set(Plots.model_fields) == {"start", "first", "course_ends"}

    assert set(Place.model_fields) == {
        "lat",
        "lon",
        "easting",
        "northing",
        "height_m",
        "description",  # format_version 2
    }
    assert set(Record.model_fields) == {
        "reference",
        "date",
        "declination",
        "declination_sigma",
        "model",
        "distance_unit",
        "foot",
        "vara_inches",
        "angles",
        "attraction_tolerance",
        "area",  # format_version 2
    }
    assert set(Target.model_fields) == {"date", "model"}
    assert set(Course.model_fields) == {
        "call",
        "bearing",
        "angle",
        "distance",
        "unit",
        "back",
        "found",
        "every",
        "note",
        "at",
    }
    assert set(Found.model_fields) == {"easting", "northing", "lat", "lon"}


def test_issue_example_document_loads():
    text = """
format_version = 1
title = "Example"
closed = true

[place]
lat = 40.0
lon = -77.0
height_m = 0.0

[grid]
crs = "EPSG:2271"

[record]
reference = "magnetic"
date = "1854-05-12"
declination = "3°10' W"
model = "auto"
distance_unit = "perch"
foot = "us"
vara_inches = 33.333333

[[course]]
call = "N 45 1/2 E 20 perches to a white oak"
back = "S 45 15 W"
found = { easting = 0.0, northing = 0.0 }
every = "5 chains"
note = "first corner"

[[course]]
bearing = "N 45 30 E"
distance = 20
unit = "perch"
"""
    doc = loads_document(text, file="example.toml")
    courses = parse_courses(doc)
    # Rod = perch = 16.5 US survey feet (DESIGN.md; US survey foot 1200/3937 m, NIST).
    assert courses[0].length_m == pytest.approx(20 * 16.5 * 1200 / 3937, abs=1e-9)
    assert courses[0].azimuth_deg == pytest.approx(45.5)
    assert courses[0].back_azimuth_deg == pytest.approx(225.25)
    assert courses[0].call_note == "to a white oak"
    # 5 chains = 5 x 66 US survey feet.
    assert courses[0].every_m == pytest.approx(5 * 66 * 1200 / 3937, abs=1e-9)
    assert courses[1].text == "N 45 30 E 20 perch"
    assert courses[1].precision_deg == pytest.approx(1 / 60)


def test_toml_date_and_numbers_are_kept_as_written():
    doc = loads_document(
        "format_version = 1\n[place]\nlat = 40\nlon = -77\n[record]\ndate = 1925-06-01\n"
        'distance_unit = "chain"\n[[course]]\nbearing = "N 1 E"\ndistance = 3\n'
    )
    assert doc.record.date == "1925-06-01"
    assert doc.course[0].distance == 3.0
    assert doc.place.lat == 40.0


@pytest.mark.parametrize("demo", DEMOS, ids=[d.name for d in DEMOS])
def test_demo_round_trip_toml(tmp_path, demo):
    doc = load_document(demo)
    out = tmp_path / "copy.toml"
    save_document(doc, out)
    again = load_document(out)
    assert again == doc
    first_text = out.read_text(encoding="utf-8")
    save_document(again, out)
    assert out.read_text(encoding="utf-8") == first_text
    # the previous version is kept beside it
    assert (tmp_path / "copy.toml.bak").read_text(encoding="utf-8") == first_text
    # what is written is plain TOML of the same dict, and holds no derived numbers
    assert tomllib.loads(first_text) == json.loads(json.dumps(document_to_dict(doc)))
    assert "azimuth" not in first_text and "length_m" not in first_text


@pytest.mark.parametrize("demo", DEMOS, ids=[d.name for d in DEMOS])
def test_demo_round_trip_json(tmp_path, demo):
    doc = load_document(demo)
    out = tmp_path / "copy.json"
    save_document(doc, out)
    assert load_document(out) == doc
    text = out.read_text(encoding="utf-8")
    save_document(load_document(out), out)
    assert out.read_text(encoding="utf-8") == text
    assert json.loads(text)["format_version"] == 1


def test_toml_and_json_give_the_same_document(tmp_path):
    doc = document_from_dict(BASE)
    save_document(doc, tmp_path / "a.toml")
    save_document(doc, tmp_path / "a.json")
    assert load_document(tmp_path / "a.toml") == load_document(tmp_path / "a.json") == doc


def test_save_is_refused_for_unknown_suffix_and_leaves_no_file(tmp_path):
    doc = document_from_dict(BASE)
    with pytest.raises(DocumentError):
        save_document(doc, tmp_path / "a.yaml")
    assert list(tmp_path.iterdir()) == []


def test_dict_round_trip_keeps_order_and_drops_absent_keys():
    doc = document_from_dict(BASE)
    data = document_to_dict(doc)
    assert list(data) == ["format_version", "title", "closed", "place", "record", "course"]
    assert data["course"][0] == {"call": "N 10 E 10 chains"}
    assert document_from_dict(data) == doc


def test_unchecked_document_keeps_a_bad_call_and_lists_the_problem():
    data = variant(**{"course.3": {"call": "S 10 Q 10 chains"}, "course.4.call": "N 80 W"})
    with pytest.raises(DocumentError):
        document_from_dict(data)
    doc = document_from_dict(data, check=False)
    assert doc.course[2].call == "S 10 Q 10 chains"
    problems = document_problems(doc)
    assert [(p.course, p.field) for p in problems] == [(3, "call"), (4, "call")]
    assert dumps_document(doc).count("S 10 Q 10 chains") == 1


def test_angles_right_and_left():
    # A 10-chain square. Run counter-clockwise (N, W, S, E) its interior angles are angles
    # turned to the right: az_i = az_(i-1) + 180 + 90 (common practice: angles right).
    ccw = variant(
        **{
            "record.angles": "right",
            "course.1": {"bearing": "N 0 E", "distance": 10, "angle": "90"},
            "course.2": {"angle": "90", "distance": 10},
            "course.3": {"angle": "90 00 00", "distance": 10},
            "course.4": {"angle": 90.0, "distance": 10},
        }
    )
    assert [c.azimuth_deg for c in parse_courses(document_from_dict(ccw))] == [0, 270, 180, 90]
    cw = copy.deepcopy(ccw)
    cw["record"]["angles"] = "left"
    assert [c.azimuth_deg for c in parse_courses(document_from_dict(cw))] == [0, 90, 180, 270]


def test_vara_inches_makes_varas_usable():
    data = variant(**{"course.1": {"call": "N 10 E 100 varas"}, "record.vara_inches": 33.5})
    doc = document_from_dict(data)
    # A vara of 33 1/2 inches of the US survey foot: 100 x 33.5/12 x 1200/3937 m.
    assert parse_courses(doc)[0].length_m == pytest.approx(100 * 33.5 / 12 * 1200 / 3937)
    bad = variant(**{"record.distance_unit": "vara"})
    with pytest.raises(DocumentError) as info:
        check_document(document_from_dict(bad, check=False))
    assert info.value.field == "record.vara_inches"


def test_true_record_needs_no_date():
    doc = document_from_dict(
        variant(**{"record.reference": "true", "record.date": None, "record.foot": "us"})
    )
    assert len(parse_courses(doc)) == 4


# ---------------------------------------------------------------- fuzzing

_TOMLISH = st.text(
    alphabet=st.sampled_from(list("[]{}=\".,\n #-+:0123456789etruflasnbvgcopixdm_TZ'\\")),
    max_size=200,
)
_VALID = dumps_document(document_from_dict(BASE))


@settings(max_examples=examples(300), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(st.binary(max_size=200), _TOMLISH))
def test_fuzz_random_text_only_raises_document_error(data):
    for fmt in ("toml", "json"):
        try:
            loads_document(data, fmt, file="fuzz")
        except DocumentError as err:
            assert "\n" not in str(err)


@settings(max_examples=examples(300), deadline=None)
@given(st.integers(0, len(_VALID)), st.integers(0, 40), _TOMLISH)
def test_fuzz_damaged_valid_document_only_raises_document_error(start, length, insert):
    text = _VALID[:start] + insert + _VALID[start + length :]
    try:
        loads_document(text, "toml", file="fuzz.toml")
    except DocumentError as err:
        assert str(err).startswith("fuzz.toml")


_JSONISH = st.recursive(
    st.none() | st.booleans() | st.floats() | st.integers() | st.text(max_size=12),
    lambda inner: (
        st.lists(inner, max_size=4) | st.dictionaries(st.text(max_size=8), inner, max_size=4)
    ),
    max_leaves=20,
)


@settings(max_examples=examples(300), deadline=None)
@given(
    st.dictionaries(
        st.sampled_from(
            [
                "format_version",
                "place",
                "record",
                "course",
                "grid",
                "target",
                "title",
                "closed",
                "x",
            ]
        ),
        _JSONISH,
    )
)
def test_fuzz_random_structures_only_raise_document_error(data):
    with contextlib.suppress(DocumentError):
        document_from_dict(data, file="fuzz.json")


def test_a_course_given_by_parts_reads_the_same_written_as_its_call():
    # The commands and the desk show a course given by angle and distance as "angle 98 16,
    # 1547 vara"; typed back as a call it must give the same azimuth, length and precision
    # (the demo's field notes turn interior angles to the left; demo data, invented). The
    # first course keeps its angle at the point of beginning beside its call.
    from lodeline.geo.document import course_call_text, parse_courses

    demo = Path(__file__).parents[1] / "demo_traverses" / "piedra_lisa_survey_1887.toml"
    doc = load_document(demo)
    data = document_to_dict(doc)
    as_calls = []
    for course, raw in zip(doc.course, data["course"], strict=True):
        rewritten = {"call": course_call_text(course, doc.record.distance_unit)}
        if course.bearing is not None and course.angle is not None:
            rewritten["angle"] = raw["angle"]
        as_calls.append(rewritten)
    typed = document_from_dict({**data, "course": as_calls})
    for parts, call in zip(parse_courses(doc), parse_courses(typed), strict=True):
        assert call.azimuth_deg == parts.azimuth_deg
        assert call.length_m == parts.length_m
        assert call.precision_deg == parts.precision_deg
        assert call.angle_deg == parts.angle_deg
    assert as_calls[1]["call"].startswith("angle ")


@pytest.mark.parametrize(
    "call, extra, words",
    [
        ("angle 98 16", {}, "the angle, a comma, then the distance"),
        ("angle, 40 varas", {}, "the angle, a comma, then the distance"),
        ("angle 98 16, N 10 E 40 varas", {}, "not a bearing too"),
        ("angle 98 16, 40 varas", {"angle": "90"}, "give the angle once"),
        ("angle N 10 E, 40 varas", {}, "is a bearing"),
    ],
)
def test_angle_calls_that_cannot_be_read_name_the_course(call, extra, words):
    from lodeline.geo.document import check_document

    doc = document_from_dict(
        {
            "format_version": 1,
            "place": {"lat": 30.0, "lon": -98.0},
            "record": {
                "reference": "true",
                "distance_unit": "vara",
                "foot": "us",
                "vara_inches": 33.333,
                "angles": "left",
            },
            "course": [{"call": "N 10 E 100 varas"}, {"call": call, **extra}],
        },
        file="notes.toml",
        check=False,
    )
    with pytest.raises(DocumentError) as caught:
        check_document(doc, file="notes.toml")
    assert "course 2" in str(caught.value) and words in str(caught.value)


# -- saving keeps what the surveyor wrote ------------------------------------------------------

_COMMENTED = """\
# Deed book 14, page 203 (invented example); copied by hand, checked twice.
format_version = 1
title = 'Hollin Brook lot'   # literal string, as written
closed = true

[place]
lat = 40.431200   # from the county GIS viewer
lon = -77.5
height_m = 310

[record]
reference = "magnetic"
date = 1885       # year only: the deed gives no day
distance_unit = "perch"

# The calls, in the deed's order.
[[course]]
call = "N 45 1/2 E 20 perches to a white oak"  # oak gone, stump found 1962

[[course]]
# this one was read from the margin
call = "S 44 E 18 perches to a stone"
note = "stone marked X"

[[course]]
call = "S 45 W 20 perches to a post"
"""


def _changed_lines(before: str, after: str) -> list[str]:
    import difflib

    return [
        line
        for line in difflib.unified_diff(before.splitlines(), after.splitlines(), lineterm="", n=0)
        if line[:1] in "+-" and not line.startswith(("+++", "---"))
    ]


def test_save_of_an_edited_course_changes_only_that_course(tmp_path):
    path = tmp_path / "lot.toml"
    path.write_text(_COMMENTED, encoding="utf-8")
    data = document_to_dict(load_document(path))
    data["course"] = list(data["course"])
    data["course"][1] = {**data["course"][1], "call": "S 44 1/4 E 18 perches to a stone"}
    save_document(document_from_dict(data), path)
    after = path.read_text(encoding="utf-8")
    assert _changed_lines(_COMMENTED, after) == [
        '-call = "S 44 E 18 perches to a stone"',
        '+call = "S 44 1/4 E 18 perches to a stone"',
    ]
    # the .bak is the file as it was, comments and all; a second save keeps them too
    assert (tmp_path / "lot.toml.bak").read_text(encoding="utf-8") == _COMMENTED
    save_document(load_document(path), path)
    assert path.read_text(encoding="utf-8") == after
    assert (tmp_path / "lot.toml.bak").read_text(encoding="utf-8") == after


def test_save_keeps_untouched_values_as_written_and_edits_in_place(tmp_path):
    path = tmp_path / "lot.toml"
    path.write_text(_COMMENTED, encoding="utf-8")
    data = document_to_dict(load_document(path))
    data["course"] = list(data["course"])
    data["place"] = {**data["place"], "lon": -77.25}
    data["course"].insert(1, {"call": "E 3 perches to a stake"})
    del data["course"][2]["note"]
    data["target"] = {"date": "2026-05-01", "model": "auto"}
    save_document(document_from_dict(data), path)
    after = path.read_text(encoding="utf-8")
    for kept in (
        "title = 'Hollin Brook lot'   # literal string, as written",
        "lat = 40.431200   # from the county GIS viewer",
        "height_m = 310",
        "date = 1885       # year only: the deed gives no day",
        "# this one was read from the margin",
        "# oak gone, stump found 1962",
    ):
        assert kept in after
    assert "lon = -77.25" in after and "stone marked X" not in after
    assert load_document(path) == document_from_dict(data)


def test_save_as_edits_the_text_the_document_came_from(tmp_path):
    source = tmp_path / "lot.toml"
    source.write_text(_COMMENTED, encoding="utf-8")
    out = tmp_path / "copy.toml"
    save_document(load_document(source), out, base=source)
    assert out.read_text(encoding="utf-8") == _COMMENTED


_EDITS = st.lists(
    st.tuples(
        st.sampled_from(["call", "insert", "delete", "move", "note", "lon", "target", "found"]),
        st.integers(0, 10),
        st.sampled_from(["N 1 E 2 perches", "S 44 E 18 perches to a stone", "W 3 perches"]),
    ),
    max_size=6,
)


def _edited(data: dict, edits) -> dict:
    data = {**data, "course": [dict(c) for c in data["course"]]}
    courses = data["course"]
    for op, n, call in edits:
        i = n % len(courses) if courses else 0
        if op == "call" and courses:
            courses[i]["call"] = call
        elif op == "insert":
            courses.insert(i, {"call": call})
        elif op == "delete" and len(courses) > 1:
            del courses[i]
        elif op == "move" and len(courses) > 1:
            courses.insert((i + 1) % len(courses), courses.pop(i))
        elif op == "note" and courses:
            courses[i].pop("note", None) if "note" in courses[i] else courses[i].update(note=call)
        elif op == "found" and courses:
            courses[i]["found"] = {"easting": float(n), "northing": 2.5}
        elif op == "lon":
            data["place"] = {**data["place"], "lon": -77.0 - n / 7}
        elif op == "target":
            data.pop("target", None) if "target" in data else data.update(target={"date": "2030"})
    return data


@settings(max_examples=examples(150), deadline=None)
@given(_EDITS)
def test_fuzz_saved_edits_read_back_as_the_edited_document(tmp_path_factory, edits):
    path = tmp_path_factory.mktemp("save") / "lot.toml"
    path.write_text(_COMMENTED, encoding="utf-8")
    data = _edited(document_to_dict(load_document(path)), edits)
    save_document(document_from_dict(data), path)
    assert load_document(path) == document_from_dict(data)
    assert "# Deed book 14" in path.read_text(encoding="utf-8")
