"""``geo.float_text.reprs`` against the reference it stands in for: Python's own ``repr`` of
each float (the shortest text that reads back as the same double; Python language
reference, "float.__repr__"), over every kind of double.

``field --csv`` writes its float columns with :func:`reprs`, and its output must stay the
bytes ``repr`` gives (tests/test_field_batch.py compares whole files with the row-by-row
reading); here the formatting alone is checked on far more values than a file holds.
"""

from __future__ import annotations

import math

import numpy as np
from fuzz import examples
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.float_text import HIGH, LOW, reprs


def _expected(values: np.ndarray) -> list[str]:
    return [repr(v) for v in values.tolist()]


def test_random_bit_patterns_every_double_kind():
    # every bit pattern is a double: normal, subnormal, zero, infinite or NaN, either sign
    rng = np.random.default_rng(20261202)
    bits = rng.integers(0, 2**64 - 1, 400_000, dtype=np.uint64, endpoint=True)
    values = bits.view(np.float64)
    assert reprs(values) == _expected(values)


def test_values_of_the_field_columns_and_their_rates():
    # what field --csv writes: degrees, nanotesla, their yearly rates (small: 1e-6 and less)
    rng = np.random.default_rng(7)
    values = np.concatenate(
        [
            rng.uniform(-180, 180, 100_000),
            rng.uniform(-70_000, 70_000, 100_000),
            rng.normal(0, 1e-3, 100_000),
            rng.normal(0, 1e-6, 20_000),
            np.round(rng.uniform(-1e5, 1e5, 50_000), 2),
        ]
    )
    assert reprs(values) == _expected(values)


def test_around_the_switches_to_an_exponent():
    # Python writes an exponent below 1e-4 and from 1e16 on (common practice of repr since
    # Python 3.1); reprs switches to repr at LOW and HIGH: check each edge, both sides
    edges = [1e-4, 1e-3, 1e15, 1e16, LOW, HIGH]
    near = []
    for edge in edges:
        for sign in (1.0, -1.0):
            x = sign * edge
            for _ in range(3):
                near += [x, math.nextafter(x, 0.0), math.nextafter(x, math.inf * sign)]
                x = math.nextafter(x, math.inf * sign)
    values = np.array(near + [0.0, -0.0, 5e-324, -5e-324, 2.2250738585072014e-308])
    assert reprs(values) == _expected(values)


def test_every_kind_of_double_between_the_small_switch_and_a_thousandth():
    # where most yearly rates lie: plain digits in both, from 1e-4 (repr's switch) up;
    # uniform in the bit patterns and in the logarithm, both signs
    rng = np.random.default_rng(20261203)
    low, high = (np.array([1e-4, 1e-3]).view(np.int64)).tolist()
    values = np.concatenate(
        [rng.integers(low, high, 300_000).view(np.float64), 10 ** rng.uniform(-4, -3, 300_000)]
    )
    values = np.concatenate([values, -values])
    assert LOW == 1e-4
    assert reprs(values) == _expected(values)


def test_not_finite_and_whole_numbers():
    values = np.array([math.nan, -math.nan, math.inf, -math.inf, 1.0, -2.0, 33346.0, 1e14])
    assert reprs(values) == _expected(values)
    assert reprs(np.zeros(0)) == []


def test_any_shape_and_float_kind_is_read_as_a_flat_float64_column():
    values = np.arange(12, dtype=np.float32).reshape(3, 4) / 7
    assert reprs(values) == [repr(float(v)) for v in values.ravel().astype(np.float64)]


@settings(max_examples=examples(300))
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True, width=64), max_size=50))
def test_fuzz_any_list_of_floats(values):
    array = np.array(values, dtype=np.float64)
    assert reprs(array) == _expected(array)


def test_rows_of_a_table_are_the_cells_repr_writes_joined():
    # repr_rows: each row of a 2-D table as its cells by repr, comma-joined; random bit
    # patterns put NaN, infinities, subnormals and exponents in many rows
    from lodeline.geo.float_text import repr_rows

    rng = np.random.default_rng(20261203)
    plain = rng.uniform(-70_000, 70_000, (3_000, 9))
    odd = rng.integers(0, 2**64 - 1, (300, 9), dtype=np.uint64, endpoint=True).view(np.float64)
    table = np.concatenate([plain, odd, [[0.0, -0.0, 1e-4, 1e16, 5e-324, 1.5, -2.0, 3e15, 7.0]]])
    rng.shuffle(table)
    assert repr_rows(table) == [",".join(map(repr, row)) for row in table.tolist()]
    assert repr_rows(np.zeros((0, 9))) == [] and repr_rows(np.zeros((2, 0))) == ["", ""]
    assert repr_rows(np.array([[1.5]])) == ["1.5"]
