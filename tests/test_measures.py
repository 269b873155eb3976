"""Record units beside metres: chains and links, perches, acres-roods-perches (lodeline.geo.measures)."""

from __future__ import annotations

from fractions import Fraction

import pytest
from hypothesis import given
from hypothesis import strategies as st

from lodeline.geo.document import document_from_dict
from lodeline.geo.measures import (
    acres_roods_perches,
    area_text,
    in_unit,
    length_text,
    record_unit,
    uses_roods,
)

# Published definitions (NIST Handbook 44, Appendix C; NIST SP 811): US survey foot =
# 1200/3937 m; Gunter's chain = 66 ft = 100 links; rod = pole = perch = 16.5 ft; acre =
# 43,560 sq ft = 160 square rods. The rood = 1/4 acre = 40 square perches (English statute
# measure; from memory).
US_FT = Fraction(1200, 3937)
INTL_FT = Fraction(3048, 10000)
CHAIN_US = 66 * US_FT
PERCH_US = Fraction(33, 2) * US_FT
ACRE_US = 43560 * US_FT**2


def _doc(record: dict, courses: list[dict]) -> object:
    return document_from_dict(
        {
            "format_version": 1,
            "place": {"lat": 44.0, "lon": -72.0},
            "record": record,
            "course": courses,
        }  # fmt: skip
    )


def test_chains_and_links_text():
    doc = _doc({"reference": "true", "distance_unit": "chain", "foot": "us"}, [])
    ru = record_unit(doc)
    assert ru.unit == "chain" and ru.foot == "us"
    assert ru.metres == pytest.approx(float(CHAIN_US), rel=1e-15)
    # 10.50 chains = 10 ch 50 lk (Gunter's chain of 100 links, NIST HB 44)
    assert length_text(float(Fraction(21, 2) * CHAIN_US), ru) == "10 ch 50 lk"
    # 20.97 chains (hand-worked: 20 chains and 97 links)
    assert length_text(float(Fraction(2097, 100) * CHAIN_US), ru) == "20 ch 97 lk"
    # a rounding that reaches 100 links carries: 10.996 chains -> 11 ch 0 lk
    assert length_text(float(Fraction(10996, 1000) * CHAIN_US), ru) == "11 ch 0 lk"
    # links to one decimal with decimals=3
    assert length_text(float(Fraction(10505, 1000) * CHAIN_US), ru, 3) == "10 ch 50.5 lk"
    assert length_text(-float(Fraction(12, 100) * CHAIN_US), ru) == "-0 ch 12 lk"


def test_perches_varas_and_feet():
    doc = _doc({"reference": "true", "distance_unit": "perch", "foot": "us"}, [])
    ru = record_unit(doc)
    assert length_text(float(Fraction(123, 2) * PERCH_US), ru) == "61.50 perches"
    # 61.5 perches = 1,014.75 ft (16.5 ft a perch, hand-worked)
    ft = record_unit(doc, "ft")
    assert length_text(float(Fraction(123, 2) * PERCH_US), ft) == "1,014.75 ft"
    assert ft.name == "US survey feet"
    vara = _doc({"reference": "true", "distance_unit": "vara", "foot": "us",
                 "vara_inches": 33.333333333333336}, [])  # fmt: skip
    rv = record_unit(vara)
    # Texas vara = 33 1/3 in = 25/9 ft (Texas General Land Office, common practice); the
    # document writes it as the float 33.333333333333336, read by its decimal text
    assert rv.metres == pytest.approx(float(Fraction(25, 9) * US_FT), rel=1e-12)
    assert in_unit(float(1547 * Fraction(25, 9) * US_FT), rv) == pytest.approx(1547.0)


def test_record_unit_falls_back_to_the_courses_unit_then_metres():
    doc = _doc(
        {"reference": "true", "foot": "international"},
        [{"call": "N 10 E 5 chains"}, {"call": "N 80 E 3 chains"}, {"call": "S 10 W 100 ft"}],
    )
    ru = record_unit(doc)
    assert ru.unit == "chain" and ru.source.startswith("the unit most")
    assert ru.metres == pytest.approx(float(66 * INTL_FT), rel=1e-15)  # 20.1168 m exactly
    metric = _doc({"reference": "true"}, [{"call": "N 10 E 50 m"}])
    assert record_unit(metric).metric
    assert record_unit(_doc({"reference": "true"}, [])).unit == "m"


def test_acres_roods_perches_hand_worked():
    # 61 acres 1 rood 12.5 perches = (61 * 160 + 40 + 12.5) square perches
    m2 = float((61 * 160 + 40 + Fraction(25, 2)) * PERCH_US**2)
    arp = acres_roods_perches(m2, "us")
    assert (arp.acres, arp.roods, arp.perches) == (61, 1, 12.5)
    assert arp.text == "61 a 1 r 12.5 p"
    # 10 square chains = 1 acre = 4 roods = 160 perches (NIST HB 44): exactly one acre
    one = acres_roods_perches(float(10 * CHAIN_US**2), "us")
    assert (one.acres, one.roods, one.perches) == (1, 0, 0.0)
    assert float(ACRE_US) == pytest.approx(float(160 * PERCH_US**2), rel=1e-15)
    # 39.96 perches rounds to 40.0 and carries into a rood
    carry = acres_roods_perches(float(Fraction(3996, 100) * PERCH_US**2), "us")
    assert (carry.acres, carry.roods, carry.perches) == (0, 1, 0.0)


@given(st.floats(min_value=0.0, max_value=1e9, allow_nan=False))
def test_acres_roods_perches_add_up(m2):
    arp = acres_roods_perches(m2, "us")
    total = arp.acres * 160 + arp.roods * 40 + arp.perches
    assert 0 <= arp.roods < 4 and 0 <= arp.perches < 40
    assert total == pytest.approx(round(m2 / float(PERCH_US**2), 1), abs=1e-6)


def test_area_text_names_every_measure():
    doc = _doc({"reference": "true", "distance_unit": "perch", "foot": "us"}, [])
    ru = record_unit(doc)
    assert uses_roods(ru)
    text = area_text(float(ACRE_US * 2), ru)
    assert text.startswith("2.000 acres (2 a 0 r 0 p)")
    assert "0.8094 ha" in text  # 2 US survey acres = 8,093.745 m² (from the definitions)
    feet = record_unit(_doc({"reference": "true", "distance_unit": "ft", "foot": "us"}, []))
    assert not uses_roods(feet) and " a " not in area_text(float(ACRE_US), feet)


def test_running_distances_are_the_correctly_rounded_prefix_sums():
    # reference: the standard library's math.fsum of every prefix (correctly rounded sums)
    import math
    import random

    from lodeline.geo.measures import _running

    rng = random.Random(1925)
    for _ in range(100):
        values = [
            rng.choice((rng.uniform(0, 500), 10 ** rng.uniform(-9, 7), 0.1, 0.0))
            for _ in range(rng.randint(0, 200))
        ]
        expected = [0.0] + [math.fsum(values[: i + 1]) for i in range(len(values))]
        assert _running(values) == expected
