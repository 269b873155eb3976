"""The quick reader of the common call forms gives exactly what the general reader gives.

Reference: the general call reader of :mod:`lodeline.geo.calls` (``_read_call``), whose every form is
checked against handbook unit definitions and deed practice in tests/test_calls.py and
tests/test_call_reading.py. Here every generated text, in and around the common forms
(``N 45 30 E 20 perches to a stake``, ``S 10° W 10 chains 50 links``), must give the same
:class:`~lodeline.geo.calls.Call` (or the same error) through :func:`lodeline.geo.calls.parse_call`, whichever
reader takes it.
"""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.calls import _quick_call, _read_call, parse_call
from lodeline.geo.errors import LodelineError
from tests.fuzz import examples

CONTEXTS = (
    {"default_unit": "perch", "foot": "us", "vara_inches": "texas"},
    {"default_unit": "chain", "foot": "international", "vara_inches": None},
    {"default_unit": None, "foot": None, "vara_inches": None},
)
UNITS = (
    "perches", "perch", "rods", "poles", "chains", "chain", "links", "ft", "feet", "m",
    "metres", "varas", "miles", "ch", "lk", "chainz", "degrees", "to",
)  # fmt: skip
NOTES = (
    "", " to a stake", " to a white oak", " with the road", " more or less", " to a stake;",
    " to a stone, the corner", " along the fence (gone)", " to a stake; thence N 5 E 2 rods",
    " to a stake 3 ft east", " thence", " N 5 E", " 5 links", " stake", " To a Hickory",
    " by the run.", " crossing the brook", " to an oak one rod east", " e", " to 'the' pin",
)  # fmt: skip
DEG_MARKS = ("", "°", "º")
MIN_MARKS = ("", "'", "′", "’")
SEC_MARKS = ("", '"', "″", "''")
SEPARATORS = (" ", "", "  ", "-")


def _outcome(read, text: str, ctx: dict):
    try:
        return ("call", read(text, ctx))
    except LodelineError as err:
        return ("error", type(err).__name__, str(err), getattr(err, "position", None))


def _general(text: str, ctx: dict):
    return _read_call(text, ctx["default_unit"], ctx["foot"], ctx["vara_inches"], False)


def _either(text: str, ctx: dict):
    return parse_call(text, **ctx)


def _mostly(common: tuple, rare: tuple) -> st.SearchStrategy:
    """One of ``common`` nine times in ten, else one of ``rare``."""
    return st.one_of(*[st.sampled_from(common)] * 9, st.sampled_from(rare))


@st.composite
def near_common_calls(draw) -> str:
    """Mostly texts of the common forms, each part now and then just outside them."""
    lead = draw(_mostly(("", "", "thence ", "Thence "), ("then ", "THENCE ", "thence, ")))
    ns, ew = draw(_mostly(("N", "S"), ("n", "North", "s"))), draw(_mostly(("E", "W"), ("e", "W.")))
    count = draw(st.integers(0, 2))
    parts = [draw(_mostly(tuple(range(0, 91)), (91, 99, 100)))]
    parts += [draw(_mostly(tuple(range(0, 60)), (60, 61, 99))) for _ in range(count)]
    marked = draw(st.booleans())
    texts = [str(p).zfill(draw(_mostly((1,), (2, 3)))) for p in parts]
    marks = ("°", "'", '"') if marked else ("", "", "")
    angle = texts[0] + marks[0]
    for k in range(1, len(texts)):
        sep = draw(_mostly(("",) if marked else (" ",), (" ", "-", "  ")))
        if not marked and sep == "":
            sep = " "
        angle += sep + texts[k] + draw(_mostly((marks[k],), ("", "′", "″")))
    value = draw(_mostly(("20", "10", "3.25", "1.5", "120", "0.75", "7"), ("0", "0.0", "12345")))
    unit = draw(_mostly(("perches", "rods", "chains", "poles", "links", "ft", "m", "varas"), UNITS))
    second = ""
    if unit == "chains" and draw(st.booleans()):
        second = f" {draw(_mostly(tuple(range(1, 100)), (0, 100, 150)))} " + draw(
            _mostly(("links",), ("link", "lk", "inches"))
        )
    return f"{lead}{ns} {angle} {ew} {value} {unit}{second}{draw(st.sampled_from(NOTES))}"


@settings(max_examples=examples(1500))
@given(near_common_calls(), st.sampled_from(CONTEXTS))
def test_quick_reader_agrees_near_the_common_forms(text, ctx):
    assert _outcome(_either, text, ctx) == _outcome(_general, text, ctx)


@st.composite
def common_calls(draw) -> str:
    lead = draw(st.sampled_from(("", "thence ", "Thence ", "then ", "THENCE ")))
    ns, ew = draw(st.sampled_from("NSns")), draw(st.sampled_from("EWew"))
    parts = [str(draw(st.integers(0, 99)))]
    parts[0] = draw(st.sampled_from((parts[0], parts[0].zfill(2), parts[0] + ".5")))
    count = draw(st.integers(0, 2))
    parts += [str(draw(st.integers(0, 70))).zfill(draw(st.integers(1, 2))) for _ in range(count)]
    marks = [
        draw(st.sampled_from(DEG_MARKS)),
        draw(st.sampled_from(MIN_MARKS)),
        draw(st.sampled_from(SEC_MARKS)),
    ]
    angle = ""
    for k, part in enumerate(parts):
        if k:
            angle += draw(st.sampled_from(SEPARATORS))
        angle += part + marks[k]
    whole = draw(st.integers(0, 12000))
    number = draw(
        st.sampled_from(
            (str(whole), f"{whole}.{draw(st.integers(0, 999))}", f"{whole}.", f"{whole / 10:g}")
        )
    )
    unit = draw(st.sampled_from(UNITS))
    second = ""
    if draw(st.booleans()):
        second = f" {draw(st.integers(0, 150))} {draw(st.sampled_from(('links', 'link', 'lk', 'inches', 'ft')))}"
    gap = draw(st.sampled_from((" ", " ", "  ", ", ")))
    return f"{lead}{ns} {angle} {ew}{gap}{number} {unit}{second}{draw(st.sampled_from(NOTES))}"


@settings(max_examples=examples(1000))
@given(common_calls(), st.sampled_from(CONTEXTS))
def test_quick_reader_agrees_around_the_common_forms(text, ctx):
    assert _outcome(_either, text, ctx) == _outcome(_general, text, ctx)


def test_the_common_forms_take_the_quick_reader():
    ctx = CONTEXTS[0]
    for text in (
        "N 45 30 E 20 perches to a stake",
        "S 10 W 10 chains 50 links",
        "thence N 45°30' E 20.5 rods to a white oak",
        "S 89 59 59 W 1.5 chains",
        "N 12°15'30\" W 3.25 chains more or less",
    ):
        quick = _quick_call(text, ctx["foot"], ctx["vara_inches"])
        assert quick is not None, text
        assert quick == _general(text, ctx)


def test_the_others_are_left_to_the_general_reader():
    ctx = CONTEXTS[0]
    for text in (
        "N 45 1/2 E 20 perches",  # a fraction
        "N 45 60 E 20 perches",  # 60 minutes: the general reader's error
        "N 91 E 20 perches",  # more than 90 degrees
        "S 10 W 10 chains 100 links",  # a link part of a chain or more
        "N 45 E 20 perches to a stake; thence N 5 E 2 rods",  # a second course
        "N 45 E 20 chainz",  # not a unit
        "North 20 perches",
    ):
        assert _quick_call(text, ctx["foot"], ctx["vara_inches"]) is None, text
