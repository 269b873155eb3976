"""Whole legal descriptions read as written (lodeline.geo.description and ``lodeline read``).

The corpus in tests/data/descriptions holds descriptions written for the tests with the
values their words were written from (see its README). Acre = 43,560 sq ft (NIST Handbook
44 App. C); a square perch is 1/160 acre (common practice: 160 square rods to the acre).
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.bearings import format_bearing, parse_declination
from lodeline.geo.calls import format_length, parse_call
from lodeline.geo.description import compare_area, read_description, stated_area_m2
from lodeline.geo.document import load_document
from lodeline.geo.errors import ParseError
from lodeline.tui.cli import main

DATA = Path(__file__).parent / "data" / "descriptions"
CASES = sorted(p.stem for p in DATA.glob("*.txt"))
US_ACRE_M2 = 43560 * (1200 / 3937) ** 2  # Handbook 44: acre = 43,560 sq ft (US survey foot)


def test_the_corpus_is_large_and_of_several_eras():
    assert len(CASES) >= 40
    eras = {c.split("_", 1)[1] for c in CASES}
    assert eras == {"colonial", "chains", "varas", "feet", "plss"}


def _expected(case: str) -> dict:
    return tomllib.loads((DATA / f"{case}.expected.toml").read_text(encoding="utf-8"))


def _read(case: str):
    exp = _expected(case)
    opts = exp["options"]
    return read_description(
        (DATA / f"{case}.txt").read_text(encoding="utf-8"),
        foot=opts.get("foot"),
        vara_inches=opts.get("vara_inches"),
    ), exp


@pytest.mark.parametrize("case", CASES)
def test_every_course_of_the_corpus_reads_as_written(case):
    desc, exp = _read(case)
    want = exp["course"]
    assert len(desc.courses) == len(want), [c.source for c in desc.courses]
    for got, course in zip(desc.courses, want, strict=True):
        call = got.call
        assert call.bearing.azimuth_deg == pytest.approx(course["azimuth"], abs=1e-9), got.source
        assert call.distance.value == pytest.approx(course["value"], rel=1e-12), got.source
        assert call.distance.unit == course["unit"], got.source
        if "note" in course:
            assert call.note == course["note"], got.source


@pytest.mark.parametrize("case", CASES)
def test_the_stated_facts_of_the_corpus(case):
    desc, exp = _read(case)
    facts = exp["expect"]
    assert desc.closed is facts["closed"]
    assert desc.beginning.startswith(facts["beginning_starts"])
    assert stated_area_m2(desc.area, foot="us") / US_ACRE_M2 == pytest.approx(
        facts["area_acres"], rel=1e-12
    )
    assert desc.date == facts.get("date")
    assert desc.reference == facts.get("reference")
    assert desc.vara_inches == facts.get("vara_inches")
    if "declination_deg" in facts:
        assert parse_declination(desc.declination) == pytest.approx(facts["declination_deg"])
    else:
        assert desc.declination is None


@pytest.mark.parametrize("case", CASES)
def test_read_writes_a_document_that_convert_and_close_accept(case, tmp_path, capsys):
    exp = _expected(case)
    opts = exp["options"]
    out = tmp_path / "doc.toml"
    argv = ["read", str(DATA / f"{case}.txt"), "--out", str(out)]
    argv += ["--lat", str(opts["lat"]), "--lon", str(opts["lon"])]
    for key in ("date", "foot", "vara_inches"):
        if key in opts:
            argv += [f"--{key.replace('_', '-')}", str(opts[key])]
    assert main(argv) == 0, capsys.readouterr().err
    shown = capsys.readouterr().out
    for n in range(1, len(exp["course"]) + 1):
        assert re.search(rf"^ *{n}  ", shown, re.M)  # each course printed beside its words
    doc = load_document(out)
    assert len(doc.course) == len(exp["course"])
    assert doc.place.description.startswith(exp["expect"]["beginning_starts"])
    assert main(["convert", str(out)]) == 0, capsys.readouterr().err
    capsys.readouterr()
    assert main(["close", str(out)]) == 0, capsys.readouterr().err
    assert "stated area" in capsys.readouterr().out


ISSUE_EXAMPLE = (
    "Beginning at a hickory on the west side of the branch, thence S 14 W 36 poles to a "
    "stone; thence with the line of the Orrin tract N 80 W 20 perches to a post, thence "
    "North 12 perches to the place of beginning, containing 61 acres, more or less, the "
    "needle then varying 2° W, by the magnetic meridian of 1854."
)


def test_the_opening_is_the_point_of_beginning_and_the_rest_the_call():
    desc = read_description(ISSUE_EXAMPLE, foot="us")
    assert desc.beginning == "Beginning at a hickory on the west side of the branch"
    assert [c.call_text for c in desc.courses] == [
        "S 14 W 36 poles to a stone",
        "with the line of the Orrin tract N 80 W 20 perches to a post",
        "North 12 perches to the place of beginning",
    ]
    assert desc.closed
    assert desc.area == "61 acres, more or less"
    assert parse_declination(desc.declination) == -2.0
    assert desc.date == "1854"
    assert desc.reference == "magnetic"


def test_a_course_that_does_not_read_is_refused_naming_it_with_the_words_marked():
    text = ISSUE_EXAMPLE.replace("N 80 W 20 perches", "N 80 W 20 perches 5")
    with pytest.raises(ParseError) as info:
        read_description(text, foot="us")
    assert info.value.message.startswith("course 2: ")
    assert "«5»" in info.value.message


def test_a_course_without_a_distance_is_refused():
    with pytest.raises(ParseError, match="course 2: gives no distance"):
        read_description("Beginning at a stone, thence N 10 E 4 poles, thence N 45 E", foot="us")


def test_courses_one_a_line_without_thence():
    text = "Beginning at a stone pile\nN 10 E 4 poles to a post\nS 80 E 6 poles\nS 10 W 4 poles\n"
    desc = read_description(text, foot="us")
    assert desc.beginning == "Beginning at a stone pile"
    assert [c.call.bearing.azimuth_deg for c in desc.courses] == [10.0, 100.0, 190.0]


def test_a_variation_that_does_not_read_is_refused():
    with pytest.raises(ParseError, match="variation does not read"):
        read_description(
            "Beginning at a stone, thence N 10 E 4 poles, the needle varying 2 or 3 degrees W",
            foot="us",
        )
    with pytest.raises(ParseError, match="course 1: .*not read"):  # no number: not a variation
        read_description(
            "Beginning at a stone, thence N 10 E 4 poles, the needle varying a bit W", foot="us"
        )


def test_stated_areas():
    # 1 acre = 160 square perches (common practice; Handbook 44: acre = 43,560 sq ft and
    # square rod = 272.25 sq ft).
    assert stated_area_m2("12 acres and 40 perches", foot="us") == pytest.approx(12.25 * US_ACRE_M2)
    assert stated_area_m2("sixty-one acres, more or less", foot="us") == pytest.approx(
        61 * US_ACRE_M2
    )
    assert stated_area_m2("2,450 square feet", foot="international") == pytest.approx(
        2450 * 0.3048**2
    )
    assert stated_area_m2("4.2 hectares", foot=None) == pytest.approx(42000.0)
    check = compare_area("10 acres", 10.5 * US_ACRE_M2, foot="us")
    assert check.difference_pct == pytest.approx(5.0)
    assert compare_area("a good deal", 1.0, foot="us").problem is not None


def test_read_prints_the_document_on_stdout_without_out(tmp_path, capsys):
    src = tmp_path / "deed.txt"
    src.write_text(ISSUE_EXAMPLE, encoding="utf-8")
    assert main(["read", str(src)]) == 0
    captured = capsys.readouterr()
    data = tomllib.loads(captured.out)
    assert data["format_version"] == 2
    assert data["record"]["date"] == "1854"
    assert data["record"]["declination"] == "2° W"
    assert "lat" not in data["place"]  # left for the desk, marked
    assert "# lat = ..." in captured.out
    assert "not complete yet" in captured.err
    assert "S 14° W" in captured.err  # the courses as read, beside their words


def test_read_refuses_a_bad_course_with_exit_2_and_writes_nothing(tmp_path, capsys):
    src = tmp_path / "deed.txt"
    src.write_text(ISSUE_EXAMPLE.replace("36 poles", "36 poles 5"), encoding="utf-8")
    out = tmp_path / "doc.toml"
    assert main(["read", str(src), "--out", str(out), "--lat", "40", "--lon", "-77"]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "course 1" in err and "«5»" in err
    assert not out.exists()


# --- property: a call formatted from its parsed values reads back as the same course ----

_UNITS = st.sampled_from(["perch", "chain", "ft", "m", "ch_lk", "vara"])


@settings(max_examples=400, deadline=None)
@given(
    azimuth=st.floats(0, 359.999, allow_nan=False),
    precision=st.sampled_from([1.0, 0.25, 0.5, 1 / 60, 1 / 3600]),
    metres=st.floats(0.5, 5000, allow_nan=False),
    unit=_UNITS,
    note=st.sampled_from(["", " to a stone", " with the road", " crossing a run"]),
)
def test_a_formatted_call_reads_back_as_the_same_course(azimuth, precision, metres, unit, note):
    ctx = {"default_unit": None, "foot": "us", "vara_inches": "texas"}
    first = parse_call(
        f"{format_bearing(azimuth, precision=precision)} "
        f"{format_length(metres, unit, foot='us', vara_inches='texas')}{note}",
        **ctx,
    )
    again = parse_call(
        f"{format_bearing(first.bearing.azimuth_deg, precision=first.bearing.precision_deg)} "
        f"{format_length(first.distance.metres, unit, foot='us', vara_inches='texas')}{note}",
        **ctx,
    )
    assert again.bearing.azimuth_deg == first.bearing.azimuth_deg
    assert again.bearing.precision_deg == first.bearing.precision_deg
    assert again.distance.metres == pytest.approx(first.distance.metres, rel=1e-15)
    assert again.note == first.note == note.strip()


def test_a_compass_line_in_a_call_is_not_a_variation():
    desc = read_description(
        "Beginning at a stone, thence with the compass line N 45 E 20 perches to a post",
        foot="us",
    )
    assert desc.declination is None
    assert desc.courses[0].call.note == "with the compass line, to a post"


_PIECES = st.sampled_from(
    [
        "Beginning at a stone",
        ", thence ",
        "; thence ",
        "\n",
        "N 45 E 20 perches",
        "to a post",
        "containing 6 acres, more or less",
        "the needle then varying 2° W",
        "by the magnetic meridian of 1854",
        "surveyed May 12, 1854",
        "twenty",
        "5",
        " ",
        "(",
        ")",
        "Texas varas",
        "along the road",
        "North",
        "chains",
    ]
)


@settings(max_examples=500, deadline=None)
@given(text=st.one_of(st.text(max_size=200), st.lists(_PIECES, max_size=25).map("".join)))
def test_random_descriptions_raise_only_parse_errors(text):
    try:
        desc = read_description(text, default_unit="perch", foot="us", vara_inches="texas")
    except ParseError:
        return
    for c in desc.courses:
        assert c.call.bearing is not None and c.call.distance is not None
        assert c.call.distance.metres > 0


def test_read_does_not_import_textual(tmp_path):
    import subprocess
    import sys

    src = tmp_path / "deed.txt"
    src.write_text(ISSUE_EXAMPLE, encoding="utf-8")
    code = (
        "import sys; from lodeline.tui.cli import main; "
        f"rc = main(['read', {str(src)!r}, '--lat', '40', '--lon', '-77', '--out', "
        f"{str(tmp_path / 'doc.toml')!r}]); "
        "assert 'textual' not in sys.modules, 'textual imported'; sys.exit(rc)"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr


@pytest.mark.parametrize("case", CASES[::4])
def test_every_corpus_call_formatted_reads_back_as_the_same_course(case):
    desc, exp = _read(case)
    ctx = {"default_unit": None, "foot": "us", "vara_inches": "texas"}
    for got in desc.courses:
        b, d = got.call.bearing, got.call.distance
        text = (
            f"{format_bearing(b.azimuth_deg, precision=b.precision_deg)} "
            f"{format_length(d.metres, d.unit, decimals=9, foot='us', vara_inches='texas')}"
            + (f" {got.call.note}" if got.call.note else "")
        )
        again = parse_call(text, **ctx)
        assert again.bearing.azimuth_deg == b.azimuth_deg, text
        assert again.bearing.precision_deg == b.precision_deg, text
        assert again.distance.metres == pytest.approx(d.metres, rel=1e-9), text  # 9 decimals
        assert again.note == got.call.note
