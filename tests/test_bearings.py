"""Bearings, azimuths and declinations: text -> degrees -> text.

Expected values are the arithmetic of the quadrant convention (common practice of land
surveying: N a E = a, S a E = 180 - a, S a W = 180 + a, N a W = 360 - a) applied to the
written forms of deeds and field books (common practice; forms listed in the product's
design of deed calls).
"""

from __future__ import annotations

import sys
from fractions import Fraction as F

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.angles import angle_difference
from lodeline.geo.bearings import (
    DEGREE,
    MINUTE,
    SECOND,
    TENTH_SECOND,
    format_azimuth,
    format_bearing,
    format_declination,
    parse_bearing,
    parse_declination,
)
from lodeline.geo.errors import InputError, ParseError

D = 1
M = F(1, 60)
S = F(1, 3600)

# (text, azimuth (exact), style, precision (exact))
GOOD = [
    ("N 45° 30' E", 45 + 30 * M, "quadrant", M),
    ("N45°30'E", 45 + 30 * M, "quadrant", M),
    ("N 45-30 E", 45 + 30 * M, "quadrant", M),
    ("N 45-30-15 E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45 30 15 E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45.5 E", F(91, 2), "quadrant", F(1, 10)),
    ("N 45½ E", F(91, 2), "quadrant", F(1, 2)),
    ("N 45 1/2 E", F(91, 2), "quadrant", F(1, 2)),
    ("N 45 1/4 W", 360 - F(181, 4), "quadrant", F(1, 4)),
    ("N 45-1/2 E", F(91, 2), "quadrant", F(1, 2)),
    ("N 45¾ W", 360 - F(183, 4), "quadrant", F(1, 4)),
    ("N45d30m15sE", 45 + 30 * M + 15 * S, "quadrant", S),
    ("n45d30m15se", 45 + 30 * M + 15 * S, "quadrant", S),
    ("North 45 degrees 30 minutes East", 45 + 30 * M, "quadrant", M),
    ("South 12 degrees West", 192, "quadrant", D),
    ("N 45°30′15″ E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45°30'15\" E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45°30’15” E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45°30‘15“ E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45°30'15'' E", 45 + 30 * M + 15 * S, "quadrant", S),
    ("N 45º30' E", 45 + 30 * M, "quadrant", M),
    ("n 45 30 e", 45 + 30 * M, "quadrant", M),
    ("  N   45    E  ", 45, "quadrant", D),
    ("N. 45 deg. E.", 45, "quadrant", D),
    ("S 12 W", 192, "quadrant", D),
    ("S 12 E", 168, "quadrant", D),
    ("S12°E", 168, "quadrant", D),
    ("N 89°59'59\" W", 270 + S, "quadrant", S),
    ("N 45°30.5' E", 45 + F(61, 120), "quadrant", M / 10),
    ("N 45°30'15.25\" E", 45 + 30 * M + F(6100, 400) * S, "quadrant", S / 100),
    ("N 0° E", 0, "quadrant", D),
    ("N 0 W", 0, "quadrant", D),
    ("N 90° E", 90, "quadrant", D),
    ("S 90 E", 90, "quadrant", D),
    ("N 90 W", 270, "quadrant", D),
    ("S 0 E", 180, "quadrant", D),
    ("North", 0, "cardinal", D),
    ("due North", 0, "cardinal", D),
    ("N", 0, "cardinal", D),
    ("East", 90, "cardinal", D),
    ("Due South", 180, "cardinal", D),
    ("west", 270, "cardinal", D),
    ("DUE WEST", 270, "cardinal", D),
    ("Az 225°30'", 225 + 30 * M, "azimuth", M),
    ("Az. 225-30", 225 + 30 * M, "azimuth", M),
    ("azimuth 225.5", F(451, 2), "azimuth", F(1, 10)),
    ("225-30-00", 225 + 30 * M, "azimuth", S),
    ("225.5", F(451, 2), "azimuth", F(1, 10)),
    ("225 30 00", 225 + 30 * M, "azimuth", S),
    ("225°30' from north", 225 + 30 * M, "azimuth", M),
    ("225°30' from the North", 225 + 30 * M, "azimuth", M),
    ("0", 0, "azimuth", D),
    ("360", 0, "azimuth", D),
    ("359°59'59.9\"", 360 - S / 10, "azimuth", S / 10),
    ("12d", 12, "azimuth", D),
    ("12 1/4", F(49, 4), "azimuth", F(1, 4)),
]


@pytest.mark.parametrize(("text", "azimuth", "style", "precision"), GOOD)
def test_written_bearings(text, azimuth, style, precision):
    b = parse_bearing(text)
    assert b.azimuth_deg == pytest.approx(float(azimuth), abs=1e-12)
    assert 0.0 <= b.azimuth_deg < 360.0
    assert b.style == style
    assert b.precision_deg == pytest.approx(float(precision), rel=1e-12)
    assert b.text == text.strip()


def test_quadrant_details():
    b = parse_bearing("S 12°30' W")
    assert b.quadrant == "SW" and b.angle_deg == pytest.approx(12.5)
    assert b.reference == "north"
    assert parse_bearing("North").quadrant is None


def test_south_azimuths_only_with_the_option():
    # Azimuths counted from south (common practice in some older work): from north = +180.
    b = parse_bearing("45°00' from south", south_azimuth=True)
    assert b.azimuth_deg == pytest.approx(225.0) and b.reference == "south"
    assert parse_bearing("45", south_azimuth=True).azimuth_deg == pytest.approx(225.0)
    assert parse_bearing("45 from north", south_azimuth=True).azimuth_deg == pytest.approx(45.0)
    with pytest.raises(ParseError, match="counted from south"):
        parse_bearing("45 from south")
    # Quadrant bearings are unaffected by the option.
    assert parse_bearing("N 45 E", south_azimuth=True).azimuth_deg == pytest.approx(45.0)


# (text, message fragment, 0-based position)
BAD = [
    ("", "empty bearing", 0),
    ("   ", "empty bearing", 0),
    ("N 45 60 E", "minutes 60 must be less than 60", 5),
    ("N 45 75 E", "minutes 75 must be less than 60", 5),
    ("N 45°30'60\" E", "seconds 60 must be less than 60", 8),
    ("N 45-30-75 E", "seconds 75 must be less than 60", 8),
    ("N 91 E", "quadrant angle 91 is more than 90", 2),
    ("N 90-00-01 E", "quadrant angle 90-00-01 is more than 90", 2),
    ("N 95½ W", "more than 90", 2),
    ("45 E", "N or S missing", 3),
    ("N 45", "E or W missing after 'N 45'", 4),
    ("N 45 30", "E or W missing", 7),
    ("N N 45 E", "N or S given twice", 2),
    ("N 45 N", "N or S given twice", 5),
    ("N 45 E E", "E or W given twice", 7),
    ("N 45 E W", "E or W given twice", 7),
    ("E 45 N", "starts with N or S", 0),
    ("N E", "gives no angle", 2),
    ("NNE", "gives no angle", 0),  # NE reads as N 45 E
    ("N -45 E", "negative angle", 2),
    ("-45", "negative angle", 0),
    ("Az -5", "negative angle", 3),
    ("N 45 E S 30 W", "several bearings", 7),
    ("N 45 E, Az 30", "several bearings", 8),
    ("225°30' 45°", "several bearings", 8),
    ("N 45.5 30 E", "fractional part", 7),
    ("N 45 30.5 15 E", "fractional part", 10),
    ("N 45 30 15 10 E", "too many numbers", 11),
    ("400", "more than 360", 0),
    ("N 45' E", "marks minutes, but the degrees come first", 4),
    ("N 45°30°", "marks degrees where minutes", 7),
    ("N 45 3/2 E", "fraction below 1", 5),
    ("N 45 1/0 E", "not a fraction", 5),
    ("due 45", "'due' must be followed", 4),
    ("Az", "expected the azimuth angle", 2),
    ("hello", "does not start a bearing", 0),
    ("N 45 E of the road", "unexpected 'of'", 7),
    ("45 from", "'from' must be followed by north or south", 7),
    ("1234567890123456789012345", "too long", 0),
]


@pytest.mark.parametrize(("text", "fragment", "position"), BAD)
def test_malformed_bearings(text, fragment, position):
    with pytest.raises(ParseError) as info:
        parse_bearing(text)
    err = info.value
    assert fragment in err.message
    assert err.position == position
    assert err.text == text
    if text.strip():
        assert f"at character {position + 1}" in err.message


def test_error_message_names_the_text():
    with pytest.raises(ParseError) as info:
        parse_bearing("N 45 75 E")
    assert str(info.value) == "minutes 75 must be less than 60 (at character 6 of 'N 45 75 E')"


def test_long_text_is_shortened_in_messages():
    text = "N 45 E " + "x" * 5000
    with pytest.raises(ParseError) as info:
        parse_bearing(text)
    assert len(str(info.value)) < 200


# ---------------------------------------------------------------------------------------
# Formatting


@pytest.mark.parametrize(
    ("azimuth", "precision", "ascii", "expected"),
    [
        (0.0, SECOND, False, "N 0°00′00″ E"),
        (0.0, SECOND, True, "N 0-00-00 E"),
        (45 + 30 / 60 + 15 / 3600, SECOND, False, "N 45°30′15″ E"),
        (45 + 30 / 60 + 15 / 3600, SECOND, True, "N 45-30-15 E"),
        (45 + 30 / 60 + 15 / 3600, MINUTE, False, "N 45°30′ E"),
        (45 + 30 / 60 + 15 / 3600, DEGREE, False, "N 46° E"),
        (45 + 30 / 60 + 15.25 / 3600, TENTH_SECOND, False, "N 45°30′15.3″ E"),
        (45 + 30 / 60 + 15.25 / 3600, TENTH_SECOND, True, "N 45-30-15.3 E"),
        # carry: 59′59.6″ rounds up to the next degree, never 59′60″
        (10 + 59 / 60 + 59.6 / 3600, SECOND, False, "N 11°00′00″ E"),
        (10 + 59 / 60 + 59.96 / 3600, TENTH_SECOND, False, "N 11°00′00.0″ E"),
        (10 + 59.6 / 60, MINUTE, True, "N 11-00 E"),
        (89 + 59 / 60 + 59.9 / 3600, SECOND, False, "N 90°00′00″ E"),
        (359.99999, SECOND, False, "N 0°00′00″ E"),
        (90.0, MINUTE, False, "N 90°00′ E"),
        (180.0, MINUTE, False, "S 0°00′ E"),
        (270.0, MINUTE, False, "N 90°00′ W"),
        (192.0, DEGREE, False, "S 12° W"),
        (192.0, DEGREE, True, "S 12 W"),
        (168.0, "min", False, "S 12°00′ E"),
        (314.75, 0.25, False, "N 45¼° W"),
        (314.75, 0.25, True, "N 45 1/4 W"),
        (45.5, 0.5, False, "N 45½° E"),
        (45.5, 0.1, False, "N 45.5° E"),
        (45.5, 0.1, True, "N 45.5 E"),
        (-45.0, DEGREE, False, "N 45° W"),
        (405.0, DEGREE, False, "N 45° E"),
    ],
)
def test_format_bearing(azimuth, precision, ascii, expected):
    assert format_bearing(azimuth, precision=precision, ascii=ascii) == expected


def test_format_azimuth():
    assert format_azimuth(225.5, precision=SECOND) == "225°30′00″"
    assert format_azimuth(225.5, precision=SECOND, ascii=True) == "225-30-00"
    assert format_azimuth(225.5, precision=DEGREE, ascii=True) == "226"
    assert format_azimuth(359.9999999) == "0°00′00″"
    assert format_azimuth(225.0, precision=DEGREE, reference="south") == "45° from south"
    with pytest.raises(InputError):
        format_azimuth(10.0, reference="east")  # type: ignore[arg-type]


def test_format_rejects_bad_input():
    for bad in (float("nan"), float("inf"), "ten"):
        with pytest.raises(InputError):
            format_bearing(bad)  # type: ignore[arg-type]
    for bad in (0.0, -1.0, "hour", float("nan")):
        with pytest.raises(InputError):
            format_bearing(10.0, precision=bad)


def test_parsed_precision_formats_back():
    for text in ("N 45 1/4 W", "N 45.5 E", "N 45°30' E", "N 45-30-15 E", "N 12°30.5' E"):
        b = parse_bearing(text)
        again = parse_bearing(format_bearing(b.azimuth_deg, precision=b.precision_deg))
        assert again.azimuth_deg == pytest.approx(b.azimuth_deg, abs=1e-9)
        assert again.precision_deg == pytest.approx(b.precision_deg)


PRECISIONS = [DEGREE, MINUTE, SECOND, TENTH_SECOND, 0.5, 0.25, 0.1, 0.01, MINUTE / 10]


@settings(max_examples=400, deadline=None)
@given(
    az=st.floats(min_value=0.0, max_value=360.0, allow_nan=False),
    precision=st.sampled_from(PRECISIONS),
    ascii=st.booleans(),
    style=st.sampled_from(["quadrant", "azimuth", "south"]),
)
def test_format_parse_round_trip(az, precision, ascii, style):
    if style == "quadrant":
        text = format_bearing(az, precision=precision, ascii=ascii)
        b = parse_bearing(text)
    elif style == "azimuth":
        text = format_azimuth(az, precision=precision, ascii=ascii)
        b = parse_bearing(text)
    else:
        text = format_azimuth(az, precision=precision, ascii=ascii, reference="south")
        b = parse_bearing(text, south_azimuth=True)
    assert abs(angle_difference(b.azimuth_deg, az)) <= precision / 2 + 1e-9, text
    if precision in (0.5, 0.25):
        # fractions are written reduced (45½, not 45 2/4): they read back at the reduced step
        steps = b.precision_deg / precision
        assert abs(steps - round(steps)) < 1e-9 and b.precision_deg <= 1.0, text
    else:
        assert b.precision_deg == pytest.approx(precision, rel=1e-9), text
    # the text is a fixed point: formatting the parsed value gives the same text
    if style == "quadrant":
        assert format_bearing(b.azimuth_deg, precision=precision, ascii=ascii) == text
    assert "60″" not in text and "60′" not in text and "-60" not in text


# ---------------------------------------------------------------------------------------
# Declinations


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("3°10' W", -(3 + 10 / 60)),
        ("3 10 W", -(3 + 10 / 60)),
        ("3°10′ E", 3 + 10 / 60),
        ("W 3°10'", -(3 + 10 / 60)),
        ("-3.1667", -3.1667),
        ("+2.5", 2.5),
        ("3.5 E", 3.5),
        ("3.5", 3.5),
        ("12 west", -12.0),
        ("0", 0.0),
        (-3.1667, -3.1667),
        (7, 7.0),
    ],
)
def test_parse_declination(value, expected):
    assert parse_declination(value) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(
    ("value", "fragment"),
    [
        ("", "empty"),
        ("-3 W", "either a sign or E/W"),
        ("3 70 W", "minutes 70"),
        ("190 E", "more than 180"),
        ("3 W E", "unexpected"),
        ("N 3 E", "expected the declination angle"),
        (float("nan"), "finite"),
        (200.0, "within ±180"),
        (True, "not a declination"),
    ],
)
def test_parse_declination_errors(value, fragment):
    with pytest.raises(ParseError, match=fragment):
        parse_declination(value)


def test_format_declination():
    assert format_declination(-(3 + 10 / 60)) == "3°10′ W"
    assert format_declination(3 + 10 / 60) == "3°10′ E"
    assert format_declination(-(3 + 10 / 60), ascii=True) == "3-10 W"
    assert format_declination(0.004) == "0°00′"
    assert format_declination(-0.004) == "0°00′"
    assert format_declination(2.9999, precision=MINUTE) == "3°00′ E"


@settings(max_examples=200, deadline=None)
@given(
    d=st.floats(min_value=-180.0, max_value=180.0, allow_nan=False),
    precision=st.sampled_from([DEGREE, MINUTE, SECOND, TENTH_SECOND]),
    ascii=st.booleans(),
)
def test_declination_round_trip(d, precision, ascii):
    text = format_declination(d, precision=precision, ascii=ascii)
    assert abs(parse_declination(text) - d) <= precision / 2 + 1e-9, text


# ---------------------------------------------------------------------------------------
# Robustness

_ALPHABET = st.sampled_from(
    list("NSEWnsewAaZzdmsf0123456789 .,;-/'\"°º′″’”½¼¾⅓+*()xy")
    + ["due ", "from ", "north", "degrees", "Az ", "ch", "  "]
)
_TEXT = st.one_of(st.text(), st.lists(_ALPHABET, max_size=30).map("".join))


@settings(max_examples=1500, deadline=None)
@given(text=_TEXT, south=st.booleans())
def test_random_text_raises_only_parse_error(text, south):
    try:
        b = parse_bearing(text, south_azimuth=south)
    except ParseError as err:
        assert err.position is None or 0 <= err.position <= len(text)
        assert "\n" not in err.message or "\n" in text
    else:
        assert 0.0 <= b.azimuth_deg < 360.0
        assert b.precision_deg > 0


@settings(max_examples=500, deadline=None)
@given(text=_TEXT)
def test_random_declination_raises_only_parse_error(text):
    try:
        d = parse_declination(text)
    except ParseError:
        pass
    else:
        assert -180.0 <= d <= 180.0


def _line_events(fn, text: str) -> int:
    """Count the Python line events while ``fn(text)`` runs (a measure of work done)."""
    count = 0

    def tracer(frame, event, arg):
        nonlocal count
        if event == "line":
            count += 1
        return tracer

    sys.settrace(tracer)
    try:
        fn(text)
    except ParseError:
        pass
    finally:
        sys.settrace(None)
    return count


@pytest.mark.parametrize(
    "unit",
    [
        "N 45 30 E ",
        "45 ",
        "N ",
        "1/",
        "'",
        "12345.6 ",
        "x",
        "N45d30m15sE",
        "½",
        "- ",
    ],
)
def test_parsing_is_linear(unit):
    # Work (line events) for 100x the text must stay within 3x of 100x the work.
    small = unit * (1000 // len(unit))
    large = unit * (100_000 // len(unit))
    a = _line_events(parse_bearing, small)
    b = _line_events(parse_bearing, large)
    assert b <= 300 * max(a, 1), (a, b)


_STEPS = [1.0, 1.0 / 60.0, 1.0 / 3600.0, 0.1 / 3600.0, 0.5, 0.25, 1.0 / 120.0, "minute"]


@settings(max_examples=150, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.floats(min_value=-720.0, max_value=720.0, allow_nan=False),
            st.sampled_from(_STEPS),
        ),
        min_size=1,
        max_size=40,
    ),
    st.booleans(),
    st.booleans(),
)
def test_many_bearings_at_once_read_as_each_alone(pairs, ascii, one_step):
    # format_bearings writes many azimuths in one call (numpy rounding, texts reused across
    # calls, one step for all taken at once): every text must be format_bearing's own.
    from lodeline.geo.bearings import format_bearings

    azimuths = [a for a, _ in pairs]
    steps = [pairs[0][1]] * len(pairs) if one_step else [p for _, p in pairs]
    pairs_out = zip(azimuths, steps, strict=True)
    want = [format_bearing(a, precision=p, ascii=ascii) for a, p in pairs_out]
    for _ in range(2):  # the second call finds the texts already written
        assert format_bearings(azimuths, precision=steps, ascii=ascii) == want


@pytest.mark.parametrize("bad", [[True, True], [float("nan")] * 2, [None, None], [-1.0, -1.0]])
def test_many_bearings_refuse_a_bad_step_as_one_bearing_does(bad):
    from lodeline.geo.bearings import format_bearings

    with pytest.raises(InputError):
        format_bearing(10.0, precision=bad[0])
    with pytest.raises(InputError):
        format_bearings([10.0, 20.0], precision=bad)
