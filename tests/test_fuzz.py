"""Fuzz suites (hypothesis) for the readers and what runs on their output.

- the call reader: any text gives a call or a ParseError, never another exception, within
  the call-length limit, at once beyond it;
- the desk's recomputation (:func:`lodeline.tui.results.compute_results`) from random document states:
  whatever the mapping holds, no exception other than the project's own errors escapes, and
  the results hold one row per course;
- the command line on mutated documents: exit 0 or 2 (never 1, never a traceback), one line
  on stderr for 2.

Counts follow the Hypothesis profile (``--hypothesis-profile nightly`` for a long run; see
tests/conftest.py). Every document here is invented.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest
from fuzz import examples
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lodeline.geo.calls import MAX_CALL_CHARS, parse_call
from lodeline.geo.errors import LodelineError

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))

_CALL_ALPHABET = st.sampled_from(
    list("NSEW0123456789 .,/°'\"-½¼¾")
    + ["ch", "chains", "perch", "rods", "ft", "m", "vara", "to", "angle"]
)
_CALLS = st.lists(_CALL_ALPHABET, max_size=40).map("".join) | st.text(max_size=80)


@settings(max_examples=examples(400), deadline=None)
@given(_CALLS, st.sampled_from([None, "perch", "chain"]), st.sampled_from([None, 33.0]))
def test_call_reader_gives_a_call_or_its_own_error(text, unit, vara):
    try:
        parse_call(text, default_unit=unit, foot="us", vara_inches=vara)
    except LodelineError as err:
        assert "\n" not in str(err)


@settings(max_examples=examples(30), deadline=None)
@given(st.integers(MAX_CALL_CHARS + 1, 50 * MAX_CALL_CHARS), st.sampled_from("N x 1"))
def test_call_reader_refuses_long_calls_at_once(length, char):
    with pytest.raises(LodelineError, match="too long"):
        parse_call(char * length, default_unit="perch", foot="us")


# -- the desk's recomputation ---------------------------------------------------------------

_VALUES = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**6), 10**6),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.sampled_from(
        [
            "auto",
            "magnetic",
            "true",
            "grid",
            "1854-05-12",
            "9999-12-31",
            "0001-01-01",
            "chain",
            "EPSG:32618",
            "+proj=utm +zone=18 +nadgrids=/dev/zero",
            "3°10' W",
            "right",
            "us",
        ]
    ),
    st.dictionaries(
        st.sampled_from(["easting", "northing", "lat", "lon", "x"]), st.floats(), max_size=3
    ),
)
_KEYS = {
    "place": ["lat", "lon", "easting", "northing", "height_m"],
    "grid": ["crs"],
    "record": [
        "reference",
        "date",
        "declination",
        "model",
        "distance_unit",
        "foot",
        "vara_inches",
        "angles",
    ],
    "target": ["date", "model"],
    "course": ["call", "bearing", "angle", "distance", "unit", "back", "found", "every", "note"],
}
_BASE = json.loads(
    json.dumps(
        __import__("lodeline.geo.document", fromlist=["x"]).document_to_dict(
            __import__("lodeline.geo.document", fromlist=["x"]).load_document(DEMOS[0])
        )
    )
)


@st.composite
def _document_states(draw):
    """The demo document with a few keys set to random values, removed, or courses added."""
    data = copy.deepcopy(_BASE)
    for _ in range(draw(st.integers(1, 6))):
        table = draw(st.sampled_from(sorted(_KEYS)))
        key = draw(st.sampled_from(_KEYS[table]))
        value = draw(_VALUES)
        if table == "course":
            courses = data.setdefault("course", [])
            if not courses or draw(st.booleans()):
                courses.append({"call": draw(_CALLS)})
            course = courses[draw(st.integers(0, len(courses) - 1))]
            target = course
        else:
            target = data.setdefault(table, {})
            if not isinstance(target, dict):
                continue
        if value is None:
            target.pop(key, None)
        else:
            target[key] = value
    return data


@settings(
    max_examples=examples(60),
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
@given(_document_states())
def test_desk_recomputation_raises_only_the_projects_errors(data):
    from lodeline.tui.results import compute_results

    try:
        results = compute_results(data, path=Path("fuzz.toml"))
    except LodelineError:
        return
    assert len(results.rows) == len(data.get("course") or [])


# -- the command line on mutated documents --------------------------------------------------

_PIECES = st.sampled_from(
    list('[]{}=".,\n #-+:0123456789etrufl') + ["9999-12-31", 'every = "0.001 m"', "1e300"]
)
_MUTATIONS = st.lists(
    st.tuples(st.integers(0, 4000), st.integers(0, 30), st.lists(_PIECES, max_size=8).map("".join)),
    min_size=1,
    max_size=3,
)


@settings(
    max_examples=examples(40),
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)
@given(
    st.sampled_from(DEMOS), _MUTATIONS, st.sampled_from(["convert", "close", "export", "report"])
)
def test_cli_exit_codes_on_mutated_documents(tmp_path, capsys, demo, mutations, command):
    from lodeline.tui.cli import main

    text = demo.read_text(encoding="utf-8")
    for start, length, insert in mutations:
        start = start % (len(text) + 1)
        text = text[:start] + insert + text[start + length :]
    doc = tmp_path / "mutated.toml"
    doc.write_text(text, encoding="utf-8")
    argv = {
        "convert": ["convert", str(doc), "--target-date", "2025-06-01"],
        "close": ["close", str(doc)],
        "export": ["export", str(doc), "--geojson", str(tmp_path / "m.geojson"), "--force"],
        "report": ["report", str(doc), "--out", str(tmp_path / "m.md"), "--force"],
    }[command]
    status = main(argv)
    _, err = capsys.readouterr()
    assert status in (0, 2), err
    if status == 2:
        assert err.count("\n") == 1 and "internal error" not in err, err
