"""Floats as text, many at once: the text Python's ``repr`` gives each one, made fast.

``repr`` of a float is the shortest decimal text that reads back as the same float (David
Gay's correctly rounded conversion); it is what every CSV column of lodeline holds, so a
file read back gives the very numbers that were computed. Calling it once a value costs
about 0.75 µs on the project's machine: half of ``field --csv``'s work. orjson writes the
same shortest, correctly rounded digits from compiled code some five times faster, but
spells some numbers differently: no exponent below 1e-4 (``0.00001`` where ``repr`` gives
``1e-05``) and ``null`` for NaN and the infinities. So :func:`reprs` takes orjson's text only
for values in the range where both write plain decimal digits (zero, and 1e-4 <= |x| < 1e15:
from Python's own switch to an exponent below 1e-4 to a margin below its switch at 1e16)
and calls ``repr`` for every other value. The small end matters: the yearly rates that
``field --csv`` writes often lie between 1e-4 and 1e-3. The tests compare :func:`reprs` with
``repr`` over every kind of double (random bit patterns, the range edges, every double
between 1e-4 and 1e-3 drawn at random, negative zero, subnormals, NaN).
"""

from __future__ import annotations

import numpy as np
import orjson

#: Where orjson and ``repr`` write the same text: 0, and LOW <= |x| < HIGH.
LOW, HIGH = 1e-4, 1e15


def reprs(values: np.ndarray) -> list[str]:
    """``[repr(float(v)) for v in values]`` for a 1-D float array (float64), made fast."""
    values = np.ascontiguousarray(values, dtype=np.float64).ravel()
    if values.size == 0:
        return []
    texts = orjson.dumps(values, option=orjson.OPT_SERIALIZE_NUMPY).decode("ascii")
    cells = texts[1:-1].split(",")
    for k in np.flatnonzero(_spelt_otherwise(values)).tolist():
        cells[k] = repr(float(values[k]))
    return cells


def repr_rows(table: np.ndarray) -> list[str]:
    """``",".join(repr(float(v)) for v in row)`` for each row of a 2-D float array (float64),
    made fast: one orjson text of the whole table cut at its rows, so no text of a single cell
    is made except in the rows holding a value the two spell differently."""
    table = np.ascontiguousarray(table, dtype=np.float64)
    if table.ndim != 2:
        raise ValueError(f"repr_rows takes a 2-D array, not {table.ndim}-D")
    if table.shape[0] == 0:
        return []
    if table.shape[1] == 0:
        return [""] * table.shape[0]
    text = orjson.dumps(table, option=orjson.OPT_SERIALIZE_NUMPY).decode("ascii")
    rows = text[2:-2].split("],[")
    for i in np.flatnonzero(_spelt_otherwise(table).any(axis=1)).tolist():
        rows[i] = ",".join([repr(v) for v in table[i].tolist()])
    return rows


def _spelt_otherwise(values: np.ndarray) -> np.ndarray:
    """Where orjson's text is not ``repr``'s: outside 0 and LOW <= |x| < HIGH (NaN too)."""
    size = np.abs(values)
    return ~((size >= LOW) & (size < HIGH)) & (values != 0.0)
