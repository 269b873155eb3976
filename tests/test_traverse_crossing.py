"""The self-crossing search of the area computation against a straightforward reference.

``reference_crossing`` is the plain scan every geometry text describes (each edge against every
later non-adjacent edge, orientation signs for a proper crossing, a collinear end point inside
the other edge's box for a touch; common practice), written here without any pre-filter. The
sweep in lodeline.geo.traverse must report the same first pair, with the same touching and collinear
rules, on random figures, on figures drawn on a small integer grid (where touches, shared
vertices and overlaps are frequent and exact) and on traverses with repeated bearings.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.traverse import _find_crossing, march


def _orient(ax, ay, bx, by, cx, cy):
    return (bx - ax) * (cy - ay) - (by - ay) * (cx - ax)


def _on_segment(d, px, py, ax, ay, bx, by, eps, slack):
    return (
        abs(d) <= eps
        and min(ax, bx) - slack <= px <= max(ax, bx) + slack
        and min(ay, by) - slack <= py <= max(ay, by) + slack
    )


def reference_crossing(x: np.ndarray, y: np.ndarray) -> tuple[int, int] | None:
    """First crossing, touching or overlapping pair of edges, by a scan of every pair."""
    n = x.size
    x2, y2 = np.roll(x, -1), np.roll(y, -1)
    scale = max(float(np.max(np.abs(x))), float(np.max(np.abs(y))), 1e-300)
    eps = 1e-12 * scale * scale
    slack = 1e-12 * scale
    for i in range(n):
        k = (i + 1) % n
        ux, uy = x2[i] - x[i], y2[i] - y[i]
        vx, vy = x2[k] - x[k], y2[k] - y[k]
        if abs(ux * vy - uy * vx) <= eps and ux * vx + uy * vy < 0.0:
            return (i, k) if i < k else (k, i)
        for j in range(i + 2, n):
            if i == 0 and j == n - 1:
                continue  # adjacent through vertex 0
            a = (x[i], y[i], x2[i], y2[i])
            b = (x[j], y[j], x2[j], y2[j])
            d1 = _orient(*b, a[0], a[1])
            d2 = _orient(*b, a[2], a[3])
            d3 = _orient(*a, b[0], b[1])
            d4 = _orient(*a, b[2], b[3])
            if (d1 * d2 < 0 and d3 * d4 < 0) or (
                _on_segment(d1, a[0], a[1], *b, eps, slack)
                or _on_segment(d2, a[2], a[3], *b, eps, slack)
                or _on_segment(d3, b[0], b[1], *a, eps, slack)
                or _on_segment(d4, b[2], b[3], *a, eps, slack)
            ):
                return i, j
    return None


def _polygon(points: list[tuple[float, float]]) -> tuple[np.ndarray, np.ndarray] | None:
    x = np.array([p[0] for p in points], dtype=float)
    y = np.array([p[1] for p in points], dtype=float)
    if np.any((x == np.roll(x, -1)) & (y == np.roll(y, -1))):
        return None  # the search is only called on figures without zero-length edges
    return x, y


def _check(points: list[tuple[float, float]]) -> None:
    poly = _polygon(points)
    if poly is None:
        return
    x, y = poly
    assert _find_crossing(x, y) == reference_crossing(x, y)


coordinate = st.floats(-1e4, 1e4, allow_nan=False, allow_infinity=False)


@settings(max_examples=300, deadline=None)
@given(st.lists(st.tuples(coordinate, coordinate), min_size=3, max_size=40))
def test_random_figures_match_the_reference(points):
    _check(points)


@settings(max_examples=500, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(-3, 3).map(float), st.integers(-3, 3).map(float)),
        min_size=3,
        max_size=30,
    )
)
def test_grid_figures_with_touches_and_overlaps_match_the_reference(points):
    _check(points)


@settings(max_examples=200, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.sampled_from([0.0, 45.0, 90.0, 123.25, 180.0, 225.0, 270.0, 303.25, 315.0]),
            st.floats(0.5, 50.0),
        ),
        min_size=3,
        max_size=40,
    )
)
def test_traverses_with_repeated_bearings_match_the_reference(courses):
    stations = march([c[0] for c in courses], [c[1] for c in courses])
    x, y = stations.east_m[:-1], stations.north_m[:-1]
    _check(list(zip((x - x.mean()).tolist(), (y - y.mean()).tolist(), strict=True)))


def test_long_figure_matches_the_reference():
    # a closed regular polygon of 400 courses, then the same with one vertex pulled across
    t = np.linspace(0.0, 2.0 * np.pi, 400, endpoint=False)
    x, y = 100.0 * np.cos(t), 100.0 * np.sin(t)
    assert _find_crossing(x, y) is None
    x[200] = 150.0  # vertex 200 pulled far east: its edges cross the eastern part of the ring
    assert _find_crossing(x, y) == reference_crossing(x, y) is not None
