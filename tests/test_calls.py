"""Distances and whole deed calls.

The written forms are those of deeds and field books (common practice of metes-and-bounds
descriptions: "thence <bearing> <distance> to <monument>"); the expected lengths are the
exact unit definitions of NIST Handbook 44 App. C and NIST SP 811 App. B (cited in
tests/test_units.py), computed here with fractions.
"""

from __future__ import annotations

from fractions import Fraction as F

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.calls import format_length, parse_call, parse_distance
from lodeline.geo.errors import InputError, ParseError
from lodeline.geo.units import metres_per
from tests.test_bearings import _line_events

US_FT = F(1200, 3937)  # NIST SP 811 App. B: U.S. survey foot = 1200/3937 m exactly
INT_FT = F(3048, 10000)  # NIST SP 811 App. B: foot = 0.3048 m exactly
PERCH = F(33, 2) * US_FT  # Handbook 44: rod = pole = perch = 16 1/2 ft
CHAIN = 66 * US_FT  # Handbook 44: chain = 66 ft
LINK = CHAIN / 100  # Handbook 44: link = 0.66 ft
MILE = 5280 * US_FT  # Handbook 44: statute mile = 5280 ft
TX_VARA = F(100, 3) / 12 * US_FT  # Texas vara 33 1/3 in (from memory)

CTX = {"default_unit": "perch", "foot": "us", "vara_inches": "texas"}

# (call, azimuth or None, metres (exact) or None, note, kind)
CALLS = [
    ("N 45 1/2 E 20 perches to a white oak", 45.5, 20 * PERCH, "to a white oak", "full"),
    ("thence N 45 1/2 E 20 perches", 45.5, 20 * PERCH, "", "full"),
    ("Thence N 45 1/2 E 20 perches", 45.5, 20 * PERCH, "", "full"),
    ("S 12 W, 14.5 chains, to a stone", 192.0, F(29, 2) * CHAIN, "to a stone", "full"),
    ("S 12 W 14.5 ch to a stone", 192.0, F(29, 2) * CHAIN, "to a stone", "full"),
    ("20 perches N 45 E to a stone", 45.0, 20 * PERCH, "to a stone", "full"),
    ("20 perches, N 45 E, to a stone", 45.0, 20 * PERCH, "to a stone", "full"),
    ("N 45 E", 45.0, None, "", "bearing"),
    ("N 45 E to a stone", 45.0, None, "to a stone", "bearing"),
    ("thence N 45 E, to a stone", 45.0, None, "to a stone", "bearing"),
    ("20 perches", None, 20 * PERCH, "", "distance"),
    ("20 perches to a stone", None, 20 * PERCH, "to a stone", "distance"),
    ("20", None, 20 * PERCH, "", "distance"),
    ("20 rods", None, 20 * PERCH, "", "distance"),
    ("20 poles", None, 20 * PERCH, "", "distance"),
    ("3 chains 25 links", None, 3 * CHAIN + 25 * LINK, "", "distance"),
    ("3 chains and 25 links", None, 3 * CHAIN + 25 * LINK, "", "distance"),
    ("3.25 ch", None, F(13, 4) * CHAIN, "", "distance"),
    ("3 ch 25 lk", None, 3 * CHAIN + 25 * LINK, "", "distance"),
    ("325 links", None, 325 * LINK, "", "distance"),
    ("120.5 ft", None, F(241, 2) * US_FT, "", "distance"),
    ("120.5 feet", None, F(241, 2) * US_FT, "", "distance"),
    ("120' 6\"", None, F(241, 2) * US_FT, "", "distance"),
    ("120′ 6″", None, F(241, 2) * US_FT, "", "distance"),
    ("5 ft 6 in", None, F(11, 2) * US_FT, "", "distance"),
    ("36.6 m", None, F(366, 10), "", "distance"),
    ("36.6 metres", None, F(366, 10), "", "distance"),
    ("36.6 meters", None, F(366, 10), "", "distance"),
    ("15 varas", None, 15 * TX_VARA, "", "distance"),
    ("0.5 mile", None, MILE / 2, "", "distance"),
    ("1/2 mile", None, MILE / 2, "", "distance"),
    ("½ mile", None, None, "", "error"),  # no whole number: a fraction alone needs digits
    ("20½ perches", None, F(41, 2) * PERCH, "", "distance"),
    ("20 1/2 perches", None, F(41, 2) * PERCH, "", "distance"),
    ("N 45 30 E 120' 6\"", 45.5, F(241, 2) * US_FT, "", "full"),
    ("N 45 30 E 120' 6\" to a pin", 45.5, F(241, 2) * US_FT, "to a pin", "full"),
    ("N 45°30' E 120' 6\"", 45.5, F(241, 2) * US_FT, "", "full"),
    ("N45°30'E 120'6\"", 45.5, F(241, 2) * US_FT, "", "full"),
    ("N 45-30-15 E 120.5 ft", 45 + 30 / 60 + 15 / 3600, F(241, 2) * US_FT, "", "full"),
    ("N45d30m15sE 36.6 m", 45 + 30 / 60 + 15 / 3600, F(366, 10), "", "full"),
    ("North 45 degrees 30 minutes East 20 perches", 45.5, 20 * PERCH, "", "full"),
    ("North 20 perches to a hickory", 0.0, 20 * PERCH, "to a hickory", "full"),
    ("due East 10 chains to the road", 90.0, 10 * CHAIN, "to the road", "full"),
    ("Due South, 3 ch 25 lk", 180.0, 3 * CHAIN + 25 * LINK, "", "full"),
    ("West 40 poles", 270.0, 40 * PERCH, "", "full"),
    ("20 East to a stone", 90.0, 20 * PERCH, "to a stone", "full"),
    ("S 12 W 14.5", 192.0, F(29, 2) * PERCH, "", "full"),
    ("N 45 E 20 to a stone", 45.0, 20 * PERCH, "to a stone", "full"),
    ("N 45 E 20 perches 5 ft", 45.0, 20 * PERCH + 5 * US_FT, "", "full"),
    ("Az 225°30', 120' 6\"", 225.5, F(241, 2) * US_FT, "", "full"),
    ("Az 225°30' 20 ch", 225.5, 20 * CHAIN, "", "full"),
    ("Az 225 30 20 perches", 225.5, 20 * PERCH, "", "full"),
    ("225 30 20 ch", 225.5, 20 * CHAIN, "", "full"),
    ("225.5 20 ch", 225.5, 20 * CHAIN, "", "full"),
    ("225-30 36.6 m", 225.5, F(366, 10), "", "full"),
    ("225°30' from north 20 ch", 225.5, 20 * CHAIN, "", "full"),
    ("N 0° E 10 ch", 0.0, 10 * CHAIN, "", "full"),
    ("N 90° E 10 ch", 90.0, 10 * CHAIN, "", "full"),
    ("n 45 1/4 w 12.5 poles to a post", 314.75, F(25, 2) * PERCH, "to a post", "full"),
    ("S 89°59'59\" E 100.00 ft", 90 + 1 / 3600, 100 * US_FT, "", "full"),
    ("N. 12 deg. W. 6 chs. 10 lks. to a stake", 348.0, 6 * CHAIN + 10 * LINK, "to a stake", "full"),
    (
        "thence S 3 E 8 rods to the place of beginning",
        177.0,
        8 * PERCH,
        "to the place of beginning",
        "full",
    ),
    ("S 3 E 8 rods to a stone; thence", 177.0, 8 * PERCH, "to a stone; thence", "full"),
    ("N 45 E 15 varas to a mound", 45.0, 15 * TX_VARA, "to a mound", "full"),
    ("S 60 W 0.5 mile", 240.0, MILE / 2, "", "full"),
    ("N 45 E 3 1/2 chains", 45.0, F(7, 2) * CHAIN, "", "full"),
    ("N 45 E 1 mile 20 chains", 45.0, MILE + 20 * CHAIN, "", "full"),
]


@pytest.mark.parametrize(("text", "azimuth", "metres", "note", "kind"), CALLS)
def test_written_calls(text, azimuth, metres, note, kind):
    if kind == "error":
        with pytest.raises(ParseError):
            parse_call(text, **CTX)
        return
    call = parse_call(text, **CTX)
    expected_kind = {
        "full": "bearing_and_distance",
        "bearing": "bearing_only",
        "distance": "distance_only",
    }[kind]
    assert call.kind == expected_kind
    if azimuth is None:
        assert call.bearing is None
    else:
        assert call.bearing.azimuth_deg == pytest.approx(azimuth, abs=1e-12)
    if metres is None:
        assert call.distance is None
    else:
        assert call.distance.metres == pytest.approx(float(metres), rel=1e-15, abs=1e-12)
    assert call.note == note
    assert call.text == text


def test_call_parts_keep_their_text_and_units():
    call = parse_call("N 45 1/2 E 3 ch 25 lk to a white oak", **CTX)
    assert call.bearing.text == "N 45 1/2 E"
    assert call.bearing.precision_deg == 0.5
    assert call.distance.text == "3 ch 25 lk"
    assert call.distance.unit == "chain" and call.distance.value == 3.25
    d = parse_distance("120' 6\"", foot="us")
    assert d.unit == "ft" and d.value == 120.5


def test_foot_choice_changes_lengths():
    us = parse_distance("10 chains", foot="us").metres
    intl = parse_distance("10 chains", foot="international").metres
    assert us == pytest.approx(float(660 * US_FT))
    assert intl == pytest.approx(201.168)  # 660 × 0.3048 m exactly
    assert us - intl == pytest.approx(float(660 * (US_FT - INT_FT)))
    assert parse_distance("36.6 m", foot=None).metres == pytest.approx(36.6)


def test_south_azimuth_option_in_calls():
    call = parse_call("45 from south 20 ch", **CTX, south_azimuth=True)
    assert call.bearing.azimuth_deg == pytest.approx(225.0)


# (call, part, message fragment, 0-based position)
BAD_CALLS = [
    ("", "call", "empty call", 0),
    ("   ", "call", "empty call", 0),
    ("thence", "call", "no bearing or distance", 6),
    ("to a stone", "call", "starts neither a bearing", 0),
    ("N 95 E 20 perches", "bearing", "quadrant angle 95 is more than 90", 2),
    ("N 45 75 E 20 perches", "bearing", "minutes 75 must be less than 60", 5),
    ("N 45 30 75 E 20 ch", "bearing", "seconds 75 must be less than 60", 8),
    ("45 E 20 ch", "bearing", "N or S missing", 3),
    ("N 45 20 perches", "bearing", "E or W missing", 8),
    ("N N 45 E 20 ch", "bearing", "N or S given twice", 2),
    ("N 45 E E 20 ch", "bearing", "E or W given twice", 7),
    ("N -45 E 20 ch", "bearing", "negative angle", 2),
    ("-20 ft", "call", "negative number", 0),
    ("N 45 E -20 ft", "distance", "negative distance", 7),
    ("N 45 E S 30 W 20 ch", "call", "several bearings", 7),
    ("N 45 E 20 ch S 30 W", "call", "several bearings", 13),
    ("20 ch N 45 E N 30 W", "call", "several bearings", 13),
    ("N 45 E 20 ft 3 ch", "call", "several distances", 13),
    ("N 45 E 20 furlongs", "distance", "'furlongs' after 20 is not a length unit", 10),
    ("N 45 E 3 ch 125 lk", "distance", "125 lk is one chain or more", 12),
    ("N 45 E 120' 13\"", "distance", '13" is one ft or more', 12),
    ("N 45 E 0 ch", "distance", "must be more than zero", 7),
    ("N 45 E 20 ch", None, None, None),  # control: reads
    ("NNE 20 ch", "bearing", "gives no angle", 0),  # NE reads as N 45 E (test_call_reading)
    ("N 45.5 30 E 20 ch", "bearing", "fractional part", 7),
    ("Az 400 20 ch", "bearing", "more than 360", 3),
    ("Az -5 20 ch", "bearing", "negative angle", 3),
    ("N 45 3/2 E 20 ch", "bearing", "fraction below 1", 5),
    ("N 45 E 20 1/0 ch", "distance", "not a fraction", 10),
    ("45 from south 20 ch", "bearing", "counted from south", 8),
    ("N 45 E 12345678901234567890123 ch", "call", "too long", 7),
    ("N 45 E 20°", "distance", "is an angle, not a distance", 9),
    ("N 45' E 20 ch", "bearing", "marks minutes, but the degrees come first", 4),
]


@pytest.mark.parametrize(("text", "part", "fragment", "position"), BAD_CALLS)
def test_malformed_calls(text, part, fragment, position):
    if part is None:
        assert parse_call(text, **CTX).kind == "bearing_and_distance"
        return
    with pytest.raises(ParseError) as info:
        parse_call(text, **CTX)
    err = info.value
    assert fragment in err.message, err.message
    if part != "call" or "too long" not in fragment:
        assert err.message.startswith(f"{part}: ") or "too long" in err.message
    assert err.position == position, err.message
    if text.strip():
        assert f"at character {position + 1}" in err.message


def test_missing_parameters_are_errors_not_guesses():
    with pytest.raises(ParseError, match="no unit and no default unit"):
        parse_call("N 45 E 20", default_unit=None, foot="us")
    with pytest.raises(ParseError, match="which foot") as info:
        parse_call("N 45 E 20 ft", default_unit=None, foot=None)
    assert info.value.position == 10
    with pytest.raises(ParseError, match="vara_inches") as info:
        parse_call("N 45 E 15 varas", default_unit=None, foot="us")
    assert info.value.position == 10
    with pytest.raises(ParseError, match="default unit"):
        parse_distance("20", default_unit="furlong", foot="us")


def test_parse_distance_whole_text():
    with pytest.raises(ParseError, match="unexpected 'N'"):
        parse_distance("20 ch N 45 E", foot="us")
    with pytest.raises(ParseError, match="empty distance"):
        parse_distance("", foot="us")
    with pytest.raises(ParseError, match="expected a distance"):
        parse_distance("ch", foot="us")


@pytest.mark.parametrize(
    ("metres", "unit", "kwargs", "expected"),
    [
        (float(3 * CHAIN + 25 * LINK), "ch_lk", {"foot": "us"}, "3 ch 25 lk"),
        (float(3 * CHAIN + 99.6 * LINK), "ch_lk", {"foot": "us"}, "4 ch 0 lk"),  # carry
        (float(3 * CHAIN + 25.5 * LINK), "ch_lk", {"foot": "us", "decimals": 1}, "3 ch 25.5 lk"),
        (float(F(241, 2) * US_FT), "ft_in", {"foot": "us"}, "120 ft 6 in"),
        (float(20 * PERCH), "perch", {"foot": "us"}, "20.00 perches"),
        (float(20 * PERCH), "rods", {"foot": "us", "decimals": 1}, "20.0 rods"),
        (36.6, "m", {"foot": None}, "36.60 m"),
        (36.6, "metres", {"foot": None, "decimals": 3}, "36.600 m"),
        (float(MILE / 2), "mile", {"foot": "us"}, "0.50 mi"),
        (float(15 * TX_VARA), "vara", {"foot": "us", "vara_inches": "texas"}, "15.00 varas"),
        (30.48, "ft", {"foot": "international"}, "100.00 ft"),
        (float(F(13, 4) * CHAIN), "chains", {"foot": "us"}, "3.25 ch"),
    ],
)
def test_format_length(metres, unit, kwargs, expected):
    assert format_length(metres, unit, **kwargs) == expected


def test_format_length_errors():
    with pytest.raises(InputError):
        format_length(10.0, "ft", foot=None)
    with pytest.raises(InputError):
        format_length(10.0, "vara", foot="us")
    with pytest.raises(InputError):
        format_length(float("nan"), "m", foot=None)
    with pytest.raises(InputError):
        format_length(10.0, "furlong", foot="us")
    with pytest.raises(InputError):
        format_length(10.0, "m", foot=None, decimals=-1)


@settings(max_examples=300, deadline=None)
@given(
    metres=st.floats(min_value=0.01, max_value=1e5, allow_nan=False),
    unit=st.sampled_from(["ft", "chain", "link", "perch", "rod", "m", "mile", "vara"]),
    decimals=st.integers(min_value=0, max_value=6),
    foot=st.sampled_from(["us", "international"]),
)
def test_format_length_parse_round_trip(metres, unit, decimals, foot):
    text = format_length(metres, unit, decimals=decimals, foot=foot, vara_inches="texas")
    per = float(metres_per(unit, foot=foot, vara_inches="texas"))
    if float(text.split()[0]) == 0:
        return  # rounded to nothing: not a distance
    d = parse_distance(text, foot=foot, vara_inches="texas")
    assert abs(d.metres - metres) <= per * 0.5 * 10**-decimals + 1e-9 * metres


@settings(max_examples=200, deadline=None)
@given(metres=st.floats(min_value=0.3, max_value=1e5, allow_nan=False))
def test_chains_and_links_round_trip(metres):
    text = format_length(metres, "ch_lk", foot="us")
    d = parse_distance(text, foot="us")
    assert abs(d.metres - metres) <= float(LINK) / 2 + 1e-9


_ALPHABET = st.sampled_from(
    list("NSEWnsew0123456789 .,;-/'\"°′″½¼")
    + ["ch", "lk", "ft", "perches", "to ", "thence "]
    + ["varas", "m", "in", "Az ", "due ", "and "]
)
_TEXT = st.one_of(st.text(), st.lists(_ALPHABET, max_size=30).map("".join))


@settings(max_examples=1500, deadline=None)
@given(text=_TEXT, south=st.booleans(), vara=st.sampled_from([None, "texas"]))
def test_random_calls_raise_only_parse_error(text, south, vara):
    try:
        call = parse_call(
            text, default_unit="perch", foot="us", vara_inches=vara, south_azimuth=south
        )
    except ParseError as err:
        assert err.position is None or 0 <= err.position <= len(text)
    else:
        assert call.bearing is not None or call.distance is not None
        if call.distance is not None:
            assert call.distance.metres > 0


@settings(max_examples=800, deadline=None)
@given(text=_TEXT, unit=st.sampled_from([None, "chain", "m"]))
def test_random_distances_raise_only_parse_error(text, unit):
    try:
        d = parse_distance(text, default_unit=unit, foot=None)
    except ParseError:
        pass
    else:
        assert d.metres > 0


@pytest.mark.parametrize(
    "unit",
    [
        "N 45 E 20 perches to a white oak ",
        "3 ch 25 lk ",
        "120' 6\" ",
        "1 ",
        "N 45 ",
        ", ",
        "thence ",
        "1/2 ",
        "Az 225 30 ",
        "N 45 E 20 ch and ",
    ],
)
def test_call_parsing_is_linear(unit):
    # Work (line events) for 100x the text must stay within 3x of 100x the work.
    def run(text):
        return parse_call(text, **CTX)

    small = unit * (1000 // len(unit))
    large = unit * (100_000 // len(unit))
    a = _line_events(run, small)
    b = _line_events(run, large)
    assert b <= 300 * max(a, 1), (a, b)
