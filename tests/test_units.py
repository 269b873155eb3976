"""Exact length and area units against their published definitions.

Sources (cited beside each value):
- NIST SP 811 (2008 edition), "Guide for the Use of the International System of Units",
  Appendix B.8/B.9 conversion factors: foot = 3.048 E-01 m (exact); foot (U.S. survey) =
  3.048 006 E-01 m (1200/3937 m exactly, footnote); chain (based on U.S. survey foot) =
  2.011 684 E+01 m; rod (based on U.S. survey foot) = 5.029 210 E+00 m; mile (based on U.S.
  survey foot) = 1.609 347 E+03 m; mile (international) = 1.609 344 E+03 m (exact); acre
  (based on U.S. survey foot) = 4.046 873 E+03 m²; inch = 2.54 E-02 m (exact). The printed
  digits are quoted from memory of that table.
- NIST Handbook 44 (2019 and earlier editions), Appendix C, "General Tables of Units of
  Measurement", units of length (survey measure): 1 link = 0.66 ft; 1 rod = 1 pole =
  1 perch = 16 1/2 ft = 25 links; 1 chain (Gunter's or surveyor's) = 66 ft = 4 rods =
  100 links; 1 statute mile = 8 furlongs = 80 chains = 5280 ft; units of area: 1 acre =
  43 560 sq ft = 10 square chains = 160 square rods (from memory of the tables).
- Federal Register 85 FR 62698 (5 October 2020), "Deprecation of the United States (U.S.)
  Survey Foot": the international foot for all uses from 1 January 2023 (from memory).
- Texas vara = 33 1/3 in (Texas Natural Resources Code §21.041, from memory); California
  vara = 33 in (common practice; from memory).
"""

from __future__ import annotations

import datetime as dt
from fractions import Fraction

import pytest

from lodeline.geo.errors import InputError, ParseError
from lodeline.geo.units import (
    FOOT_METRES,
    NAMED_VARAS,
    UNIT_ALIASES,
    UNITS,
    choose_foot,
    default_foot,
    feet_per,
    is_foot_based,
    metres_per,
    resolve_vara_inches,
    square_metres_per,
    square_metres_per_acre,
    unit_name,
)


def test_foot_definitions_are_exact():
    # NIST SP 811 App. B: foot = 0.3048 m exactly; U.S. survey foot = 1200/3937 m exactly.
    assert FOOT_METRES["international"] == Fraction(3048, 10000)
    assert FOOT_METRES["us"] == Fraction(1200, 3937)
    assert metres_per("ft", foot="international") == Fraction("0.3048")
    assert metres_per("ft", foot="us") == Fraction(1200, 3937)
    # NIST SP 811 App. B: inch = 2.54 E-02 m exactly (international).
    assert metres_per("in", foot="international") == Fraction("0.0254")


@pytest.mark.parametrize(
    ("unit", "feet"),
    [
        # NIST Handbook 44 App. C, survey measure (quoted from memory):
        ("link", Fraction(66, 100)),
        ("rod", Fraction(33, 2)),
        ("pole", Fraction(33, 2)),
        ("perch", Fraction(33, 2)),
        ("chain", Fraction(66)),
        ("mile", Fraction(5280)),
        ("yd", Fraction(3)),
        ("in", Fraction(1, 12)),
    ],
)
@pytest.mark.parametrize("foot", ["us", "international"])
def test_survey_units_in_feet(unit, feet, foot):
    assert metres_per(unit, foot=foot) == feet * FOOT_METRES[foot]
    assert feet_per(unit) == feet


def test_survey_unit_relations_handbook_44():
    # NIST Handbook 44 App. C: chain = 100 links = 4 rods; rod = 25 links; mile = 80 chains.
    for foot in ("us", "international"):
        ch = metres_per("chain", foot=foot)
        assert ch == 100 * metres_per("link", foot=foot)
        assert ch == 4 * metres_per("rod", foot=foot)
        assert metres_per("rod", foot=foot) == 25 * metres_per("link", foot=foot)
        assert metres_per("mile", foot=foot) == 80 * ch


@pytest.mark.parametrize(
    ("unit", "foot", "published_m", "last_digit"),
    [
        # NIST SP 811 App. B.9 (values as printed there, from memory):
        ("ft", "us", 0.3048006, 1e-7),  # foot (U.S. survey) 3.048 006 E-01 m
        ("chain", "us", 20.11684, 1e-5),  # chain (based on U.S. survey foot) 2.011 684 E+01 m
        ("rod", "us", 5.029210, 1e-6),  # rod (based on U.S. survey foot) 5.029 210 E+00 m
        ("mile", "us", 1609.347, 1e-3),  # mile (based on U.S. survey foot) 1.609 347 E+03 m
        ("mile", "international", 1609.344, 1e-3),  # mile 1.609 344 E+03 m (exact)
        ("link", "us", 0.2011684, 1e-7),  # Handbook 44 App. C: link 0.201 168 4 m
        ("chain", "international", 20.1168, 1e-4),  # 66 × 0.3048 m exactly
    ],
)
def test_against_printed_nist_values(unit, foot, published_m, last_digit):
    assert abs(float(metres_per(unit, foot=foot)) - published_m) <= last_digit / 2


def test_international_mile_exact():
    # NIST SP 811 App. B: mile (international) = 1.609 344 E+03 m exactly.
    assert metres_per("mile", foot="international") == Fraction(1609344, 1000)


def test_acre_exact_and_printed():
    # Handbook 44 App. C: acre = 43 560 sq ft = 10 square chains = 160 square rods.
    for foot in ("us", "international"):
        acre = square_metres_per_acre(foot)
        assert acre == 43560 * FOOT_METRES[foot] ** 2
        assert acre == 10 * square_metres_per("sq_chain", foot=foot)
        assert acre == 160 * square_metres_per("sq_rod", foot=foot)
    # NIST SP 811 App. B: acre (based on U.S. survey foot) = 4.046 873 E+03 m² (from memory).
    assert abs(float(square_metres_per_acre("us")) - 4046.873) <= 0.0005
    # International acre: 43 560 × 0.3048² = 4046.856 422 4 m² exactly (arithmetic).
    assert square_metres_per_acre("international") == Fraction("4046.8564224")
    assert square_metres_per("ha") == 10000
    assert square_metres_per("m2") == 1


def test_metric_units_ignore_foot():
    assert metres_per("m") == 1
    assert metres_per("metres", foot="us") == 1
    assert metres_per("km") == 1000
    assert not is_foot_based("meters")
    assert is_foot_based("chains")


def test_foot_based_unit_without_foot_is_an_error():
    with pytest.raises(InputError, match="which foot"):
        metres_per("chain")
    with pytest.raises(InputError, match="unknown foot"):
        metres_per("ft", foot="survey")  # type: ignore[arg-type]
    with pytest.raises(InputError, match="which foot"):
        square_metres_per("acre")


def test_vara_needs_explicit_inches():
    with pytest.raises(InputError, match="vara_inches"):
        metres_per("vara", foot="us")
    # Texas vara 33 1/3 in (Texas Natural Resources Code §21.041, from memory).
    assert NAMED_VARAS["texas"] == Fraction(100, 3)
    assert metres_per("vara", foot="us", vara_inches="texas") == Fraction(100, 3) / 12 * Fraction(
        1200, 3937
    )
    # California vara 33 in (common practice, from memory).
    assert metres_per("varas", foot="international", vara_inches="California") == Fraction(
        33
    ) * Fraction("0.0254")
    assert resolve_vara_inches(33.3333) == Fraction("33.3333")
    assert resolve_vara_inches("100/3") == Fraction(100, 3)
    assert resolve_vara_inches(Fraction(100, 3)) == Fraction(100, 3)
    for bad in ("spanish", 0, -3, float("nan"), True, 500):
        with pytest.raises(InputError):
            resolve_vara_inches(bad)


@pytest.mark.parametrize(
    ("spelling", "unit"),
    [
        ("perch", "perch"),
        ("Perches", "perch"),
        ("rod", "rod"),
        ("RODS", "rod"),
        ("rd", "rod"),
        ("pole", "pole"),
        ("poles", "pole"),
        ("chain", "chain"),
        ("chains", "chain"),
        ("ch", "chain"),
        ("chs.", "chain"),
        ("link", "link"),
        ("links", "link"),
        ("lk", "link"),
        ("ft", "ft"),
        ("foot", "ft"),
        ("feet", "ft"),
        ("in", "in"),
        ("inches", "in"),
        ("m", "m"),
        ("metre", "m"),
        ("meters", "m"),
        ("vara", "vara"),
        ("varas", "vara"),
        ("mile", "mile"),
        ("miles", "mile"),
        ("yards", "yd"),
    ],
)
def test_unit_spellings(spelling, unit):
    assert unit_name(spelling) == unit


def test_every_alias_names_a_unit():
    assert set(UNIT_ALIASES.values()) == set(UNITS)
    with pytest.raises(InputError, match="unknown length unit 'furlong'"):
        unit_name("furlong")


def test_default_foot_by_date():
    # 85 FR 62698: the U.S. survey foot is deprecated from 2023-01-01 (from memory).
    old = default_foot(dt.date(1854, 5, 12))
    assert old.foot == "us" and old.defaulted and "US survey foot" in old.note
    assert default_foot("2022-12-31").foot == "us"
    assert default_foot("2023-01-01").foot == "international"
    assert default_foot(2025.5).foot == "international"
    assert default_foot(2022.99).foot == "us"
    assert "assumed" in default_foot(2030.0).note
    with pytest.raises(ParseError):
        default_foot("not a date")


def test_choose_foot():
    given = choose_foot("international", "1850-01-01")
    assert given.foot == "international" and not given.defaulted and given.note == ""
    assert choose_foot(None, "1850-01-01").defaulted
    with pytest.raises(InputError):
        choose_foot(None)
    with pytest.raises(InputError):
        choose_foot("imperial")
