"""The march of a traverse on the grid: the line each course stands for, step by step.

Used by :mod:`geo.north` (which evaluates the field and the grid factors); no field model
and no projection is called here, only the callbacks :func:`march` is given.

The line a course stands for
    A course read on a **magnetic** or a **true** reference is the line a compass (or a
    transit on a true meridian) runs: it keeps its bearing from the reference north while D
    (record date), the convergence gamma and the combined factor k change along it, so on the
    grid it curves. It is integrated in steps of equal ground length h: the step from node p
    to node p+1 runs along the grid azimuth ``recorded + D_mean - gamma_mean`` (the means of
    the values at both ends: the trapezoidal rule, second order) for ``h x k_mean`` grid
    metres. A **grid** course is one straight grid line; its grid length is the ground
    length times the mean of k along it by Simpson's rule, ``(k1 + 4 km + k2) / 6`` (the
    state plane coordinate manuals' rule), with km at its midpoint (a node of its own).

Nodes and steps
    Nodes run along the whole traverse in order: node 0 is the point of beginning, each
    station is a node (:attr:`Layout.offsets`) and a course of m steps has m - 1 nodes inside
    it. Positions, values and steps are arrays over nodes and steps, so a whole figure is
    marched in a few vectorised operations.

How many steps
    A course no longer than :data:`ONE_STEP_M` is one step: the trapezoidal rule's error on
    it is below L^3 (c^2/24 + 1/(12 R^2)) with c the rate of turn of (D - gamma) along it;
    even at 2 degrees a kilometre (near a magnetic pole) that is below 0.04 mm on 100 m.
    A longer magnetic or true course starts with steps of :data:`FIRST_STEP_M` and is marched
    again with the step halved until its end (relative to its start) moves by less than
    :data:`HALVING_TOLERANCE_M`; the finer march is kept. Both marches of a comparison are
    walked from the values of one evaluation of the finer layout's nodes (every node of the
    coarser layout is one of them), so a halving costs one evaluation, not two.

Passes
    Values depend on the positions and positions on the values: the first pass estimates the
    values as linear in grid position from the point of beginning and two probes (see
    :func:`march`), the following passes evaluate every node until no node moves by more
    than :data:`CONVERGED_M`. A halved layout starts from a walk with the values of the
    march before it, taken as linear between its nodes along each course, which keeps the
    bend of the line between them: one pass usually confirms it.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from .angles import angle_difference

__all__ = [
    "CONVERGED_M",
    "FIRST_STEP_M",
    "HALVING_TOLERANCE_M",
    "ONE_STEP_M",
    "Layout",
    "Marched",
    "layout_for",
    "march",
    "node_distance_m",
    "walk",
]

#: Courses up to this ground length (metres) are one step (see the module docstring).
ONE_STEP_M = 100.0
#: First step length (metres) of a longer magnetic or true course.
FIRST_STEP_M = 1000.0
#: A course's end may move by less than this (metres) when its step is halved.
HALVING_TOLERANCE_M = 1e-3
#: Stop the passes when no node moves by more than this (metres).
CONVERGED_M = 1e-3
_MAX_PASSES = 8
_MAX_HALVINGS = 8
#: Probe distance (metres) of the first estimate.
PROBE_M = 1000.0


@dataclass(frozen=True)
class Layout:
    """Steps per course and the node index of every station.

    ``steps`` (n): steps of each course; ``offsets`` (n + 1): node index of station i
    (``offsets[0] == 0``); ``step_course`` (number of steps): the course of each step.
    """

    steps: np.ndarray
    offsets: np.ndarray
    step_course: np.ndarray

    @property
    def n_nodes(self) -> int:
        """Number of nodes (stations and the nodes inside courses)."""
        return int(self.offsets[-1]) + 1


def _layout(steps: np.ndarray) -> Layout:
    steps = np.asarray(steps, dtype=np.int64)
    offsets = np.concatenate([[0], np.cumsum(steps)])
    return Layout(steps, offsets, np.repeat(np.arange(steps.size), steps))


def layout_for(reference: str, length_m: np.ndarray) -> Layout:
    """The first layout: one step a short course, :data:`FIRST_STEP_M` steps a long
    magnetic or true one, two (start, middle, end) a grid course (Simpson's rule)."""
    if reference == "grid":
        return _layout(np.full(length_m.size, 2))
    long = length_m > ONE_STEP_M
    steps = np.ones(length_m.size, dtype=np.int64)
    steps[long] = np.maximum(1, np.ceil(length_m[long] / FIRST_STEP_M)).astype(np.int64)
    return _layout(steps)


def _mid_angle(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """The mean of two angles (degrees) along the shorter way between them."""
    return a + 0.5 * np.asarray(angle_difference(b, a), dtype=float)


def walk(
    reference: str,
    azimuth_deg: np.ndarray,
    length_m: np.ndarray,
    lay: Layout,
    gamma: np.ndarray,
    combined: np.ndarray,
    d1: np.ndarray | None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One march of every step from node values (see the module docstring).

    ``azimuth_deg``/``length_m`` (n): recorded azimuth (from the recorded north; for a
    magnetic record with ``d1`` None taken as true) and ground length of each course;
    ``gamma``, ``combined``, ``d1`` (nodes): convergence, combined factor, D at the record
    date. Returns ``(d_east_m, d_north_m, grid_azimuth_deg)`` per step: grid metres and the
    grid azimuth of each step.
    """
    c = lay.step_course
    start = np.arange(c.size)  # step s runs from node s to node s + 1
    stop = start + 1
    if reference == "grid":
        o = lay.offsets[:-1]
        simpson = (combined[o] + 4.0 * combined[o + 1] + combined[o + 2]) / 6.0
        grid_az = azimuth_deg[c]
        step_len = (length_m * simpson / lay.steps)[c]
    else:
        true = azimuth_deg[c]
        if reference == "magnetic" and d1 is not None:
            true = true + _mid_angle(d1[start], d1[stop])
        grid_az = true - _mid_angle(gamma[start], gamma[stop])
        step_len = (length_m / lay.steps)[c] * 0.5 * (combined[start] + combined[stop])
    rad = np.radians(grid_az)
    return step_len * np.sin(rad), step_len * np.cos(rad), grid_az


@dataclass(frozen=True)
class Marched:
    """The converged march: ``layout``; node ``east``/``north`` (grid units) and
    ``lat``/``lon``; ``values`` the last evaluation at the nodes (whatever ``evaluate``
    returns); ``grid_azimuth_deg``/``grid_step_m`` per step (grid north, grid metres)."""

    layout: Layout
    east: np.ndarray
    north: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    values: Any
    grid_azimuth_deg: np.ndarray
    grid_step_m: np.ndarray


Evaluate = Callable[[np.ndarray, np.ndarray], Any]
ToGeographic = Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class _Figure:
    """What :func:`march` needs to know about the courses and the point of beginning."""

    reference: str
    azimuth_deg: np.ndarray
    length_m: np.ndarray
    e0: float
    n0: float
    lat0: float
    lon0: float
    unit_m: float


def _positions(fig: _Figure, lay: Layout, values: Any) -> tuple[np.ndarray, ...]:
    d1 = values.d1 if values.d1 is not None else None
    de, dn, az = walk(fig.reference, fig.azimuth_deg, fig.length_m, lay, values.gamma,
                      values.combined, d1)  # fmt: skip
    e = fig.e0 + np.concatenate([[0.0], np.cumsum(de)]) / fig.unit_m
    n = fig.n0 + np.concatenate([[0.0], np.cumsum(dn)]) / fig.unit_m
    return e, n, az, np.hypot(de, dn)


def _first_estimate(
    fig: _Figure, lay: Layout, evaluate: Evaluate, probes: tuple[np.ndarray, np.ndarray] | None
) -> tuple[np.ndarray, np.ndarray]:
    """Node positions from values at the point of beginning, then from values taken as
    linear in grid position from the point of beginning and the probes 1 km east and north
    (two rounds): within a small fraction of a millimetre of the converged march on a figure
    of a few kilometres, so one full pass usually confirms it."""
    m = lay.n_nodes
    lat = np.array([fig.lat0]) if probes is None else probes[0]
    lon = np.array([fig.lon0]) if probes is None else probes[1]
    at = evaluate(lat, lon)
    const = at.linear(None, None, m)
    e, n, _, _ = _positions(fig, lay, const)
    if probes is not None:
        for _round in range(2):
            de = (e - fig.e0) * (fig.unit_m / PROBE_M)
            dn = (n - fig.n0) * (fig.unit_m / PROBE_M)
            e, n, _, _ = _positions(fig, lay, at.linear(de, dn, m))
    return e, n


def _converge(
    fig: _Figure,
    lay: Layout,
    evaluate: Evaluate,
    to_geographic: ToGeographic,
    e: np.ndarray,
    n: np.ndarray,
) -> Marched:
    """Passes over every node from the positions ``e``, ``n`` until none moves by more than
    :data:`CONVERGED_M`."""
    for _pass in range(_MAX_PASSES):
        lat, lon = to_geographic(e, n)
        values = evaluate(lat, lon)
        new_e, new_n, az, step = _positions(fig, lay, values)
        moved = float(np.max(np.hypot(new_e - e, new_n - n))) * fig.unit_m
        e, n = new_e, new_n
        if moved <= CONVERGED_M:
            break
    lat, lon = to_geographic(e, n)
    return Marched(lay, e, n, lat, lon, values, az, step)


def _refined(
    fig: _Figure, lay: Layout, finer: np.ndarray, values: Any
) -> tuple[Layout, np.ndarray, np.ndarray, np.ndarray]:
    """The layout with the steps of the courses ``finer`` (bool, n) doubled; a start for
    its passes (node positions walked with ``values``, those of the nodes of ``lay``, taken
    as linear between them along each course); and, for every node of ``lay``, its index
    in the new layout (the nodes of ``lay`` are nodes of the new one)."""
    steps = np.where(finer, lay.steps * 2, lay.steps)
    new = _layout(steps)
    # position of every new node on the old nodes' index, as a fraction of its course
    c = np.repeat(np.arange(steps.size), steps)
    frac = (np.arange(c.size) - new.offsets[:-1][c]) / steps[c]
    old_at = lay.offsets[:-1][c] + frac * lay.steps[c]
    x = np.concatenate([old_at, [lay.offsets[-1]]])
    below = np.minimum(np.floor(x).astype(np.int64), lay.n_nodes - 1)
    w = x - below
    above = np.minimum(below + 1, lay.n_nodes - 1)

    def between(v: np.ndarray | None, angle: bool) -> np.ndarray | None:
        if v is None:
            return None
        v = np.asarray(v, dtype=float)
        if angle:
            return v[below] + w * np.asarray(angle_difference(v[above], v[below]), dtype=float)
        return v[below] + w * (v[above] - v[below])

    start = _Values(between(values.gamma, True), between(values.combined, False),
                    between(values.d1, True))  # fmt: skip
    e, n, _, _ = _positions(fig, new, start)
    return new, e, n, _shared_nodes(lay, new)


@dataclass(frozen=True)
class _Values:
    """Values at nodes for a walk (see :func:`walk`)."""

    gamma: np.ndarray
    combined: np.ndarray
    d1: np.ndarray | None


def _course_vectors(lay: Layout, east: np.ndarray, north: np.ndarray) -> np.ndarray:
    o = lay.offsets
    return np.stack([np.diff(east[o]), np.diff(north[o])], axis=1)


def _coarse_vectors(fig: _Figure, coarse: Layout, old_nodes: np.ndarray, fine: Marched) -> Any:
    """Course vectors (grid units) of the march on the layout ``coarse`` walked with the
    values of ``fine``'s evaluation at the nodes they share (``old_nodes``)."""
    v = fine.values
    picked = _Values(np.asarray(v.gamma)[old_nodes], np.asarray(v.combined)[old_nodes],
                     None if v.d1 is None else np.asarray(v.d1)[old_nodes])  # fmt: skip
    e, n, _, _ = _positions(fig, coarse, picked)
    return _course_vectors(coarse, e, n)


def march(
    *,
    reference: str,
    azimuth_deg: np.ndarray,
    length_m: np.ndarray,
    e0: float,
    n0: float,
    lat0: float,
    lon0: float,
    unit_m: float,
    evaluate: Evaluate,
    to_geographic: ToGeographic,
    probes: tuple[np.ndarray, np.ndarray] | None,
) -> Marched:
    """March the courses from the point of beginning (see the module docstring).

    ``evaluate(lat, lon)`` returns the values at points: an object with ``gamma``,
    ``combined``, ``d1`` arrays (``d1`` None when D at the record date is unknown or not
    needed) and ``linear(de, dn, m)``, the values at the point of beginning (``de`` None) or
    linear in position from the point of beginning and the probes, for ``m`` nodes.
    ``to_geographic(e, n)`` gives lat/lon of grid positions. ``probes``: lat/lon of the point
    of beginning and the two probes, or None.
    """
    fig = _Figure(reference, azimuth_deg, length_m, e0, n0, lat0, lon0, unit_m)
    lay = layout_for(reference, length_m)
    finer = length_m > ONE_STEP_M  # every course the one-step bound does not cover
    if reference == "grid" or not finer.any():
        e, n = _first_estimate(fig, lay, evaluate, probes)
        return _converge(fig, lay, evaluate, to_geographic, e, n)
    # The first layout is not marched on its own: its halving is, and the two are compared
    # on the values of that one march (see the module docstring).
    coarse = lay
    lay = _layout(np.where(finer, coarse.steps * 2, coarse.steps))
    old_nodes = _shared_nodes(coarse, lay)
    e, n = _first_estimate(fig, lay, evaluate, probes)
    for halving in range(_MAX_HALVINGS):
        result = _converge(fig, lay, evaluate, to_geographic, e, n)
        change = _course_vectors(lay, result.east, result.north) - _coarse_vectors(
            fig, coarse, old_nodes, result
        )
        moved = np.hypot(change[:, 0], change[:, 1]) * fig.unit_m
        finer = finer & (moved >= HALVING_TOLERANCE_M)
        if not finer.any() or halving == _MAX_HALVINGS - 1:
            break
        coarse = lay
        lay, e, n, old_nodes = _refined(fig, coarse, finer, result.values)
    return result


def _shared_nodes(coarse: Layout, fine: Layout) -> np.ndarray:
    """Index in ``fine`` of every node of ``coarse`` (each course's steps the same or
    doubled)."""
    c = coarse.step_course
    local = np.arange(c.size) - coarse.offsets[:-1][c]
    ratio = fine.steps // coarse.steps
    inner = fine.offsets[:-1][c] + local * ratio[c]
    return np.concatenate([inner, [fine.offsets[-1]]])


def node_distance_m(lay: Layout, length_m: np.ndarray) -> np.ndarray:
    """Ground distance (metres) of every node from the start of its course (stations: 0,
    except the last, which is its course's length)."""
    c = np.repeat(np.arange(lay.steps.size), lay.steps)
    along = (np.arange(c.size) - lay.offsets[:-1][c]) * (length_m / lay.steps)[c]
    return np.concatenate([along, [length_m[-1] if length_m.size else 0.0]])
