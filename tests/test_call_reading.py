"""Calls read as deeds write them, and no part of a call left unread without a word.

The written forms are those of metes-and-bounds descriptions (common practice: "thence
<bearing> <distance> to <monument>"); lengths are the exact unit definitions of NIST
Handbook 44 App. C (rod = pole = perch = 16 1/2 ft, chain = 66 ft = 100 links), computed
here with fractions. Number words are English cardinal numbers (common practice of deeds).
"""

from __future__ import annotations

from fractions import Fraction as F

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.calls import parse_call
from lodeline.geo.errors import ParseError

US_FT = F(1200, 3937)  # NIST SP 811 App. B: U.S. survey foot = 1200/3937 m exactly
PERCH = F(33, 2) * US_FT  # Handbook 44: rod = pole = perch = 16 1/2 ft
CHAIN = 66 * US_FT  # Handbook 44: chain = 66 ft
LINK = CHAIN / 100  # Handbook 44: link = 0.66 ft
FOOT = US_FT

CTX = {"default_unit": "perch", "foot": "us", "vara_inches": "texas"}


def _close(a: float, b: F) -> bool:
    return abs(a - float(b)) <= 1e-9 * max(1.0, float(b))


# Calls that were once read with part of them dropped: each must be refused, the message
# naming what was not read and showing it marked in the call.
MISREADS = [
    ("N 5 E 10 chains 50", "50", "10 chains 50 links"),
    ("N 5 E 10 ch 50", "50", "10 chains 50 links"),
    ("10 ch 50", "50", "10 chains 50 links"),
    ("N 5 E 10:50 chains", "10:50", "10 chains 50 links"),
    ("N 5 E 10-50 chains", "10-50", "10 chains 50 links"),
    ("N 45 E 20 perches 5", "5", "unit"),
    (
        "N 10 E 10 chains to a stake; thence N 20 E 5 chains to a post",
        "thence N 20 E 5 chains to a post",
        "second course",
    ),
    ("N 45 E 20 perches N 30 E", "N 30 E", "several bearings"),
    ("N 45 E 20 perches perches", "perches", "not read"),
    ("N 45 E 20 perches a white oak", "a white oak", "to, with, along"),
    ("N 45 E 20 perches 3 chains", "3 chains", "several distances"),
    ("N 45 E 20 perches North", "North", "not read"),
    ("N 45 E 20 perches (50)", "(50)", "not read"),
    ("N 45 E 20 perches (links)", "(links)", "not read"),
]


@pytest.mark.parametrize(("text", "unread", "hint"), MISREADS)
def test_a_call_with_an_unread_part_is_refused_with_the_part_marked(text, unread, hint):
    with pytest.raises(ParseError) as info:
        parse_call(text, **CTX)
    message = info.value.message
    assert hint in message, message
    assert f"«{unread}»" in message, message


def test_decimal_chains_stay_decimal_chains():
    call = parse_call("N 5 E 10.50 chains", **CTX)
    assert _close(call.distance.metres, F(21, 2) * CHAIN)
    assert call.distance.value == 10.5


# Forms of deeds that read (expected value from the words' written meaning).
ACCEPTED = [
    ("N 5 E 20 P.", 5.0, 20 * PERCH, ""),
    ("N 5 E 20 p.", 5.0, 20 * PERCH, ""),
    ("N 5 E 20 ps.", 5.0, 20 * PERCH, ""),
    ("N 5 E 4 c. 75 l.", 5.0, 4 * CHAIN + 75 * LINK, ""),
    ("N 5 E 10 chains, 50 links", 5.0, 10 * CHAIN + 50 * LINK, ""),
    ("N 5 E 10 chains, 50 links, to a stake", 5.0, 10 * CHAIN + 50 * LINK, "to a stake"),
    ("N 45 E twenty perches to a stone", 45.0, 20 * PERCH, "to a stone"),
    ("North forty-five degrees East 20 perches", 45.0, 20 * PERCH, ""),
    ("N 45 E one hundred and twelve poles", 45.0, 112 * PERCH, ""),
    ("N 45 E twenty-two and a half perches", 45.0, F(45, 2) * PERCH, ""),
    ("N 45 E three quarters of a mile", 45.0, F(3, 4) * 5280 * FOOT, ""),
    ("N 45 E a half mile", 45.0, F(1, 2) * 5280 * FOOT, ""),
    ("North ten and three quarter degrees West 8 poles", 360 - 10.75, 8 * PERCH, ""),
    ("South eighty-nine degrees thirty minutes East 4 chains", 90.5, 4 * CHAIN, ""),
    ("Northeast 20 poles", 45.0, 20 * PERCH, ""),
    ("North-east 20 poles", 45.0, 20 * PERCH, ""),
    ("NE 20 poles to a gum", 45.0, 20 * PERCH, "to a gum"),
    ("N.E. 20 poles", 45.0, 20 * PERCH, ""),
    ("Southwest 3 chains", 225.0, 3 * CHAIN, ""),
    ("NW 3 chains", 315.0, 3 * CHAIN, ""),
    ("along the road N 45 E 20 poles to a stone", 45.0, 20 * PERCH, "along the road, to a stone"),
    (
        "with the line of the Orrin tract S 10 W 12 chains",
        190.0,
        12 * CHAIN,
        "with the line of the Orrin tract",
    ),
    (
        "North along the section line 40 chains to the quarter corner",
        0.0,
        40 * CHAIN,
        "along the section line, to the quarter corner",
    ),
    (
        "S 14 W with the branch 36 poles to a stone",
        194.0,
        36 * PERCH,
        "with the branch, to a stone",
    ),
    ("N 45 E 20 perches, more or less, to a stone", 45.0, 20 * PERCH, "more or less, to a stone"),
    ("N 45 E 20 perches crossing a run", 45.0, 20 * PERCH, "crossing a run"),
    ("N 45 E 20 perches.", 45.0, 20 * PERCH, ""),
    ("N 45 E 20 perches (a remark)", 45.0, 20 * PERCH, "(a remark)"),
    ("S 3 E 8 rods to a stone; thence", 177.0, 8 * PERCH, "to a stone; thence"),
]


@pytest.mark.parametrize(("text", "azimuth", "metres", "note"), ACCEPTED)
def test_deed_forms_read_as_written(text, azimuth, metres, note):
    call = parse_call(text, **CTX)
    assert call.bearing is not None and call.distance is not None, text
    assert call.bearing.azimuth_deg == pytest.approx(azimuth, abs=1e-12)
    assert _close(call.distance.metres, metres), (call.distance, float(metres))
    assert call.note == note


def test_number_word_angles_keep_their_written_step():
    # "ten and three quarter degrees" is written to a quarter degree, like 10 3/4.
    call = parse_call("North ten and three quarter degrees West 8 poles", **CTX)
    assert call.bearing.precision_deg == 0.25
    assert parse_call("North forty-five degrees East 20 perches", **CTX).bearing.precision_deg == 1


def test_a_lead_phrase_with_no_course_after_it_is_refused():
    with pytest.raises(ParseError, match="along the road"):
        parse_call("along the road to a stone", **CTX)


def test_a_monument_phrase_before_the_bearing_must_read_one_way():
    # "West" in the name and the bearing after it: only the full bearing and distance read.
    call = parse_call("with the line of the West tract N 12 E 9 chains", **CTX)
    assert call.bearing.azimuth_deg == 12.0
    assert call.note == "with the line of the West tract"


# --- fuzz: a number, unit or bearing appended after a valid distance is never ignored ----

_BASES = [
    "N 45 E 20 perches",
    "S 12 W 14.5 chains",
    "N 5°30' W 20.97 chains",
    "20 perches N 45 E",
    "due East 10 chains",
    "N 45 E 3 ch 25 lk",
    "Az 225 30 20 ch",
    "N 45 E 120.5 ft",
    "N 45 E 12 varas",
    "West 40 poles",
]
_NUMBER = st.one_of(
    st.integers(0, 999).map(str),
    st.decimals(0, 999, places=2, allow_nan=False, allow_infinity=False).map(str),
    st.sampled_from(["1/2", "½", "5-1/2", "twenty", "forty-five", "a half"]),
)
_UNIT = st.sampled_from(
    ["perches", "p.", "ch", "chains", "links", "lk", "l.", "ft", "'", '"', "in", "m", "varas"]
)
_BEARING = st.sampled_from(["N 30 E", "S 10 W", "North", "due West", "Az 90", "NE", "45°"])
_SEPARATOR = st.sampled_from([" ", ", ", "", "-", ":", " and "])
_PIECE = st.one_of(
    _NUMBER,
    _UNIT,
    _BEARING,
    st.tuples(_NUMBER, _SEPARATOR, _UNIT).map("".join),
    st.tuples(_NUMBER, st.just(" "), _UNIT, st.just(" "), _NUMBER).map("".join),
    st.sampled_from(["thence N 10 E 5 chains", "; thence S 3 W 2 ch to a post"]),
)


@settings(max_examples=1500, deadline=None)
@given(base=st.sampled_from(_BASES), sep=_SEPARATOR, piece=_PIECE)
def test_an_appended_number_unit_or_bearing_is_never_ignored(base, sep, piece):
    text = base + sep + piece
    try:
        call = parse_call(text, **CTX)
    except ParseError:
        return
    # Read: then every appended character belongs to the bearing or the distance (it
    # changed what was read), never to an unread note.
    assert call.note == "", (text, call)
    read_last = (call.distance.text, call.bearing.text)
    assert text.rstrip().endswith(read_last), (text, call)
