"""Omitted measurements: calls written with "?" completed from the closure.

Check values: a closed figure whose every call is known (written out here, its latitudes and
departures summing to zero by construction); blanking two of its parts, the closure must give
them back. The cases are those of "omitted measurements" in Ghilani & Wolf, *Elementary
Surveying* (one course's bearing and distance; two distances; a bearing and a distance; two
bearings), the last two with the two solutions of the ambiguous case.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from lodeline.geo.document import document_from_dict, document_problems, parse_courses
from lodeline.geo.errors import DocumentError
from lodeline.geo.north import convert_document
from lodeline.geo.survey import close_document

PERCH = 16.5 * 1200 / 3937  # metres, US survey foot (exact definition)


def _closed_figure(azimuths, lengths):
    """The closing course (azimuth, length) of an open list of courses, and the whole list."""
    n = -sum(L * math.cos(math.radians(a)) for a, L in zip(azimuths, lengths, strict=True))
    e = -sum(L * math.sin(math.radians(a)) for a, L in zip(azimuths, lengths, strict=True))
    return [*azimuths, math.degrees(math.atan2(e, n)) % 360], [*lengths, math.hypot(n, e)]


def _doc(calls, *, closed=True, check=True):
    return document_from_dict(
        {
            "format_version": 1,
            "closed": closed,
            "place": {"lat": 40.0, "lon": -77.0},
            "record": {"reference": "true", "distance_unit": "perch", "foot": "us"},
            "course": [{"call": c} for c in calls],
        },
        check=check,
    )


def _call(az, length_m):
    return f"{az:.10f} {length_m / PERCH:.10f} perches"


AZ, LEN = _closed_figure([15.0, 110.0, 200.0], [40 * PERCH, 33 * PERCH, 25 * PERCH])


def test_one_course_bearing_and_distance():
    calls = [_call(a, L) for a, L in zip(AZ, LEN, strict=True)]
    calls[3] = "? to the beginning"
    rec = parse_courses(_doc(calls))
    assert rec[3].azimuth_deg == pytest.approx(AZ[3], abs=1e-9)
    assert rec[3].length_m == pytest.approx(LEN[3], abs=1e-9)
    assert rec[3].length_unit == "perch" and rec[3].call_note == "to the beginning"
    assert "bearing and distance from the closure" in rec[3].solved


def test_two_distances():
    calls = [_call(a, L) for a, L in zip(AZ, LEN, strict=True)]
    calls[1] = f"{AZ[1]:.10f} ?"
    calls[3] = f"{AZ[3]:.10f} ? to a stone"
    rec = parse_courses(_doc(calls))
    assert rec[1].length_m == pytest.approx(LEN[1], abs=1e-8)
    assert rec[3].length_m == pytest.approx(LEN[3], abs=1e-8)
    assert rec[3].call_note == "to a stone"


def test_bearing_and_distance_gives_two_solutions_named():
    # Course 1 (10 perches on N 30 E) shorter than the gap it and course 2 (due east, 50
    # perches) span: the circle of course 1 cuts the line of course 2 twice, at 50 perches
    # and at 2 x 55 - 50 = 60 perches (55 = the gap's east component; written out by hand).
    az, length = _closed_figure([30.0, 90.0, 180.0], [10 * PERCH, 50 * PERCH, 8.660254 * PERCH])
    calls = [_call(a, L) for a, L in zip(az, length, strict=True)]
    calls[0] = "? 10 perches"
    calls[1] = "90 ?"
    with pytest.raises(DocumentError) as exc:
        parse_courses(_doc(calls))
    msg = str(exc.value)
    assert "two solutions" in msg and "a bearing and a distance, the ambiguous case" in msg
    assert "course 2 N 90°00′00″ E 50.0000 perch" in msg
    assert "course 2 N 90°00′00″ E 60.0000 perch" in msg
    assert exc.value.course == 1


def test_two_bearings_gives_two_mirrored_solutions():
    calls = [_call(a, L) for a, L in zip(AZ, LEN, strict=True)]
    calls[1] = f"? {LEN[1] / PERCH:.10f} perches"
    calls[2] = f"? {LEN[2] / PERCH:.10f} perches"
    with pytest.raises(DocumentError, match="two solutions .*two bearings, the ambiguous case"):
        parse_courses(_doc(calls))


def test_refusals_name_the_course():
    calls = [_call(a, L) for a, L in zip(AZ, LEN, strict=True)]
    calls[3] = "?"
    with pytest.raises(DocumentError, match="closed = true"):
        parse_courses(_doc(calls, closed=False))
    calls[2] = "?"
    with pytest.raises(DocumentError, match="exactly two missing parts") as exc:
        parse_courses(_doc(calls))
    assert exc.value.course == 3
    calls = [_call(a, L) for a, L in zip(AZ, LEN, strict=True)]
    calls[1] = f"{AZ[1]:.10f} ? ?"
    with pytest.raises(DocumentError, match="write '\\?' once"):
        parse_courses(_doc(calls))
    problems = document_problems(_doc(calls, check=False))
    assert problems and problems[0].course == 2


def test_keys_written_with_question_marks():
    doc = document_from_dict(
        {
            "format_version": 1,
            "closed": True,
            "place": {"lat": 40.0, "lon": -77.0},
            "record": {"reference": "true", "distance_unit": "perch", "foot": "us"},
            "course": [
                *({"call": _call(a, L)} for a, L in zip(AZ[:3], LEN[:3], strict=True)),
                {"bearing": "?", "distance": "?"},
            ],
        }
    )
    rec = parse_courses(doc)
    assert rec[3].length_m == pytest.approx(LEN[3], abs=1e-9)


def test_closure_says_the_precision_cannot_be_computed():
    calls = [_call(a, L) for a, L in zip(AZ, LEN, strict=True)]
    calls[1] = f"{AZ[1]:.10f} ?"
    calls[3] = f"{AZ[3]:.10f} ?"
    clo = close_document(convert_document(_doc(calls)))
    assert clo.precision is None
    assert any("precision cannot be computed" in n for n in clo.notes)
    assert any(n.startswith("course 2: distance from the closure") for n in clo.notes)


@settings(max_examples=80, deadline=None)
@given(
    st.lists(st.floats(0.0, 359.0), min_size=3, max_size=6),
    st.lists(st.floats(5.0, 300.0), min_size=6, max_size=6),
    st.sampled_from(["both", "two distances", "bearing and distance"]),
    st.data(),
)
def test_blanked_parts_come_back(azimuths, lengths, case, data):
    az, length = _closed_figure(azimuths, lengths[: len(azimuths)])
    assume(length[-1] > 1.0)
    n = len(az)
    i, j = data.draw(st.lists(st.integers(0, n - 1), min_size=2, max_size=2, unique=True))
    if case == "two distances":
        # well conditioned only when the two courses are far from parallel
        assume(abs(math.sin(math.radians(az[i] - az[j]))) > 0.2)
    calls = [_call(a, L) for a, L in zip(az, length, strict=True)]
    if case == "both":
        calls[i] = "?"
    elif case == "two distances":
        calls[i], calls[j] = f"{az[i]:.10f} ?", f"{az[j]:.10f} ?"
    else:
        calls[i], calls[j] = f"? {length[i] / PERCH:.10f} perches", f"{az[j]:.10f} ?"
    try:
        rec = parse_courses(_doc(calls))
    except DocumentError as err:
        assert case == "bearing and distance" and "two solutions" in str(err)
        return
    for k in (i,) if case == "both" else (i, j):
        assert rec[k].length_m == pytest.approx(length[k], abs=1e-6)
        d = (rec[k].azimuth_deg - az[k] + 180.0) % 360.0 - 180.0
        assert abs(d) < 1e-6


@settings(max_examples=200, deadline=None)
@given(
    st.text(alphabet="NSEW0123456789 ?./°′'-abcdefghperchs", max_size=15),
    st.text(alphabet="NSEW0123456789 ?./°′'-abcdefghperchs", max_size=15),
)
def test_reader_fuzz_refuses_with_one_document_error(before, after):
    # any text with a "?" either reads or is refused as a DocumentError naming the course
    from lodeline.geo.document import Course
    from lodeline.geo.omitted import read_omitted

    text = f"{before}?{after}"
    ctx = {"default_unit": "perch", "foot": "us", "vara_inches": None}
    try:
        got = read_omitted(Course(call=text), 3, ctx)
    except DocumentError as err:
        assert err.course == 3
    else:
        assert got.azimuth_deg is None or 0.0 <= got.azimuth_deg < 360.0
        assert got.length_m is None or got.length_m > 0.0
