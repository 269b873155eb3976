"""Recorded values shown as they were written; the facts a description states carried into
the document and its outputs (point of beginning described, stated area)."""

from __future__ import annotations

import json
from fractions import Fraction
from pathlib import Path

import pytest

from lodeline.geo.bearings import recorded_bearing
from lodeline.geo.document import document_from_dict, load_document, loads_document
from lodeline.geo.errors import DocumentError
from lodeline.geo.export import geojson_collection
from lodeline.geo.north import convert_document
from lodeline.geo.report import build_report
from lodeline.geo.units import resolve_vara_inches
from lodeline.tui.cli import main

DEMOS = Path(__file__).resolve().parents[1] / "demo_traverses"
TARGET = "2026-05-01"

DOC = """format_version = 2
title = "Wren Hollow lot"
closed = true

[place]
lat = 40.2
lon = -77.1
description = "Beginning at a stone heap by the lane"

[record]
reference = "true"
foot = "us"
distance_unit = "perch"
area = "1 acre, more or less"

[[course]]
call = "due North 10 perches to a post"

[[course]]
call = "East 16 perches to a stake"

[[course]]
call = "South 10 perches"

[[course]]
call = "West 16 perches to the beginning"
"""


def test_cardinal_calls_show_in_their_recorded_form_in_the_record_column(tmp_path):
    doc = loads_document(DOC)
    conv = convert_document(doc, target_date=TARGET)
    record = [c.bearing.true for c in conv.courses]
    assert record == ["due N", "due E", "due S", "due W"]
    # derived columns keep the quadrant form
    assert conv.courses[0].bearing.grid.startswith(("N ", "S "))
    assert recorded_bearing(45.0, 1.0, "cardinal") == "NE"
    assert recorded_bearing(45.5, 0.5, "quadrant") == "N 45½° E"


def test_the_local_attraction_table_shows_each_back_bearing_at_its_own_precision():
    # brindlecombe demo: course 5 is "N 71 1/2 W ..." with back = "S 71 1/4 E"
    doc = load_document(DEMOS / "brindlecombe_farm_1854.toml")
    md = build_report(doc, fmt="markdown", target_date=TARGET)
    section = md[md.index("Local attraction") :]
    assert "S 71¼° E" in section
    assert "N 71½° W" in section
    assert "S 71° E" not in section


def test_the_point_of_beginning_and_stated_area_reach_the_outputs(tmp_path, capsys):
    src = tmp_path / "lot.toml"
    src.write_text(DOC, encoding="utf-8")
    doc = load_document(src)
    conv = convert_document(doc, target_date=TARGET)
    features = geojson_collection(conv)["features"]
    pob = next(
        f for f in features if f["geometry"]["type"] == "Point" and f["properties"]["index"] == 0
    )
    assert pob["properties"]["note"] == "Beginning at a stone heap by the lane"
    md = build_report(doc, fmt="markdown", target_date=TARGET)
    assert "Beginning at a stone heap by the lane" in md
    # 10 x 16 perches = 160 square perches = 1 acre (common practice: 160 sq rods an acre)
    assert "stated area" in md and "1 acre, more or less" in md
    assert main(["close", str(src), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["stated_area"]["difference_pct"] == pytest.approx(0.0, abs=1e-6)


def test_version_1_documents_still_read_and_refuse_the_keys_of_version_2():
    v1 = DOC.replace("format_version = 2", "format_version = 1")
    with pytest.raises(DocumentError) as info:
        loads_document(v1)
    assert info.value.field == "place.description" and "format_version = 2" in str(info.value)
    plain = v1.replace('description = "Beginning at a stone heap by the lane"\n', "").replace(
        'area = "1 acre, more or less"\n', ""
    )
    assert loads_document(plain).format_version == 1


@pytest.mark.parametrize(
    ("value", "inches"),
    [
        ("texas", Fraction(100, 3)),  # Texas vara 33 1/3 in (from memory)
        ("Texas", Fraction(100, 3)),
        ("california", Fraction(33)),  # California vara 33 in (from memory)
        ("33 1/3", Fraction(100, 3)),
        ("33⅓", Fraction(100, 3)),
        ("100/3", Fraction(100, 3)),
        (33.5, Fraction(67, 2)),
    ],
)
def test_record_vara_inches_takes_names_and_fractions_exactly(value, inches):
    assert resolve_vara_inches(value) == inches
    doc = document_from_dict(
        {
            "format_version": 1,
            "place": {"lat": 30.0, "lon": -98.0},
            "record": {"reference": "true", "foot": "us", "vara_inches": value},
            "course": [{"call": "N 45 E 100 varas"}],
        }
    )
    from lodeline.geo.document import parse_courses

    (course,) = parse_courses(doc)
    assert course.length_m == pytest.approx(float(100 * inches / 12 * Fraction(1200, 3937)))


def test_a_vara_that_is_not_a_length_is_refused_at_its_key():
    with pytest.raises(DocumentError) as info:
        document_from_dict(
            {
                "format_version": 1,
                "place": {"lat": 30.0, "lon": -98.0},
                "record": {"reference": "true", "foot": "us", "vara_inches": "33 4/3"},
            }
        )
    assert info.value.field == "record.vara_inches"
