"""Spherical-harmonic synthesis of the geomagnetic main field (one engine for every model).

The internal potential is

    V = a * sum_n (a/r)^(n+1) * sum_m (g_nm cos(m*lon) + h_nm sin(m*lon)) * P_nm(cos theta)

with the reference radius a = 6371.2 km, Gauss coefficients g, h in nT and P_nm the Schmidt
semi-normalised associated Legendre functions (no Condon-Shortley phase). B = -grad V.

Positions are geodetic (WGS84): latitude and longitude in degrees (east positive), height in
metres above the ellipsoid. They are converted to geocentric spherical coordinates, the field
is synthesised there, and the vector is rotated back to the geodetic north/east/down frame.
Results are X (north), Y (east), Z (down) in nT and their rates in nT/yr; rates come
analytically from the time derivative of the coefficients, never from differencing.

Vectorisation. Every point carries its own date. A model's time dependence is held in
piecewise-polynomial form (see :class:`SphericalHarmonicModel`); points are put in time
segment order once and processed in chunks of 4096 consecutive points, a chunk possibly holding
runs of several segments that share one Legendre table. Inside a chunk the loop runs over order m
and degree n only; every operation works on all points of the chunk at once. The Legendre
functions are built by the standard stable three-term recursion in n for each m, seeded by
the sectoral recursion in m. Functions with m >= 1 are carried divided by sin(theta) (finite
at the geographic poles) and with the radial factor (a/r)^(n+2) folded in; the per-point
factors sin, cos and a/r and the derivative dP/dtheta are moved past the coefficient sums, so
that the inner sums are one small matrix product per order m. A chunk of a few points of a
model of low degree puts every order's sums into one product (:func:`_synth_one_product`).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

#: Reference radius of the spherical-harmonic expansion, km (IGRF, WMM, gufm1).
REFERENCE_RADIUS_KM = 6371.2
#: WGS84 semi-major axis, km.
WGS84_A_KM = 6378.137
#: WGS84 flattening.
WGS84_F = 1.0 / 298.257223563
#: WGS84 first eccentricity squared.
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)


def coefficient_count(nmax: int) -> int:
    """Number of Gauss coefficients g_nm, h_nm for degrees 1..nmax: nmax * (nmax + 2)."""
    return nmax * (nmax + 2)


def coefficient_index(n: int, m: int, kind: str) -> int:
    """Position of g_nm (``kind='g'``) or h_nm (``kind='h'``, m >= 1) in the flat ordering.

    The ordering is the usual one: g10, g11, h11, g20, g21, h21, g22, h22, g30 ...
    """
    base = n * n - 1
    if m == 0:
        if kind != "g":
            raise ValueError("h_n0 does not exist")
        return base
    return base + 2 * m - (1 if kind == "g" else 0)


@dataclass(frozen=True, eq=False)
class SphericalHarmonicModel:
    """A main-field model in piecewise-polynomial time form.

    Attributes
    ----------
    name:
        Short identifier (``igrf14``).
    title:
        Human-readable name (``IGRF-14``).
    nmax:
        Maximum spherical-harmonic degree.
    breaks:
        Segment boundaries in decimal years, shape (S + 1,), strictly increasing. The model is
        valid on ``[breaks[0], breaks[-1]]``.
    coeffs:
        Shape (S, P + 1, K) with K = nmax (nmax + 2): on segment j the coefficient vector is
        ``sum_p coeffs[j, p] * (t - breaks[j]) ** p`` (nT, t in decimal years).
    source:
        Where the coefficients come from (file path or publication).
    """

    name: str
    title: str
    nmax: int
    breaks: NDArray[np.float64]
    coeffs: NDArray[np.float64]
    source: str = ""
    meta: dict = field(default_factory=dict)
    _cache: dict = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        if self.coeffs.ndim != 3 or self.coeffs.shape[2] != coefficient_count(self.nmax):
            raise ValueError("coeffs must have shape (segments, order + 1, nmax * (nmax + 2))")
        if self.breaks.shape != (self.coeffs.shape[0] + 1,):
            raise ValueError("breaks must have one more entry than there are segments")
        if not np.all(np.diff(self.breaks) > 0):
            raise ValueError("breaks must increase strictly")

    @property
    def start(self) -> float:
        """First decimal year of validity."""
        return float(self.breaks[0])

    @property
    def end(self) -> float:
        """Last decimal year of validity (the interval is used half-open, [start, end))."""
        return float(self.breaks[-1])

    def segment_of(self, year: ArrayLike) -> NDArray[np.intp]:
        """Index of the time segment holding each decimal year (clipped to the valid range)."""
        seg = np.searchsorted(self.breaks, np.asarray(year, dtype=float), side="right") - 1
        return np.clip(seg, 0, self.coeffs.shape[0] - 1)

    def coefficients_at(self, year: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Gauss coefficients (nT) and their rates (nT/yr) at one decimal year, flat ordering."""
        j = int(self.segment_of(year))
        tau = float(year) - self.breaks[j]
        c = self.coeffs[j]
        powers = tau ** np.arange(c.shape[0])
        dpowers = np.concatenate([[0.0], np.arange(1, c.shape[0]) * powers[:-1]])
        return powers @ c, dpowers @ c


@dataclass(frozen=True)
class FieldComponents:
    """Field vector in the geodetic frame: X north, Y east, Z down (nT) and rates (nT/yr)."""

    north: NDArray[np.float64]
    east: NDArray[np.float64]
    down: NDArray[np.float64]
    north_rate: NDArray[np.float64]
    east_rate: NDArray[np.float64]
    down_rate: NDArray[np.float64]


def geodetic_to_geocentric(
    lat_deg: ArrayLike, height_m: ArrayLike
) -> tuple[NDArray[np.float64], ...]:
    """Convert WGS84 geodetic latitude (degrees) and ellipsoidal height (m).

    Returns ``(r_km, cos_theta, sin_theta, cos_psi, sin_psi)``: the geocentric radius in km,
    cosine and sine of the geocentric colatitude theta, and of psi = geodetic latitude minus
    geocentric latitude (the angle that rotates geocentric components to geodetic ones).
    """
    lat = np.radians(np.asarray(lat_deg, dtype=float))
    h = np.asarray(height_m, dtype=float) / 1000.0
    sin_lat = np.sin(lat)
    cos_lat = np.cos(lat)
    n_radius = WGS84_A_KM / np.sqrt(1.0 - WGS84_E2 * sin_lat * sin_lat)
    p = (n_radius + h) * cos_lat
    z = (n_radius * (1.0 - WGS84_E2) + h) * sin_lat
    r = np.hypot(p, z)
    cos_theta = z / r  # sine of the geocentric latitude
    sin_theta = p / r  # cosine of the geocentric latitude
    cos_psi = cos_lat * sin_theta + sin_lat * cos_theta
    sin_psi = sin_lat * sin_theta - cos_lat * cos_theta
    return r, cos_theta, sin_theta, cos_psi, sin_psi


@dataclass(frozen=True)
class _Recursion:
    """Constants of the scaled Legendre recursion for one maximum degree.

    For each order m the table rows n = m..nmax hold T_n with K_n T_n = (a/r)^(n+2) P_nm
    (m = 0) or (a/r)^(n+2) P_nm / sin(theta) (m >= 1), where K_n = prod alpha and
    T_n = u T_(n-1) - b_n v T_(n-2), u = cos(theta) a/r, v = (a/r)^2.
    """

    b_coef: tuple[NDArray[np.float64], ...]  # per m, indexed by row n - m
    scale: tuple[NDArray[np.float64], ...]  # K_n per m, indexed by row n - m
    b_table: NDArray[np.float64]  # b_coef as one (nmax + 1, nmax + 1) array, zero-padded


@functools.lru_cache(maxsize=16)
def _recursion(nmax: int) -> _Recursion:
    b_all, s_all = [], []
    for m in range(nmax + 1):
        n = np.arange(m, nmax + 1, dtype=float)
        # Schmidt recursion: P_n = alpha_n c P_(n-1) - beta_n P_(n-2) with
        # alpha_n = (2n-1)/sqrt(n^2-m^2), beta_n = sqrt((n-1)^2-m^2)/sqrt(n^2-m^2).
        alpha = np.ones_like(n)
        beta = np.zeros_like(n)
        for k in range(1, len(n)):
            den = math.sqrt(n[k] ** 2 - m * m)
            alpha[k] = (2 * n[k] - 1) / den
            beta[k] = math.sqrt(max((n[k] - 1) ** 2 - m * m, 0.0)) / den
        scale = np.cumprod(alpha)
        b = np.zeros_like(n)
        b[2:] = beta[2:] * scale[:-2] / scale[2:]
        b_all.append(b)
        s_all.append(scale)
    b_table = np.zeros((nmax + 1, nmax + 1))
    for m, b in enumerate(b_all):
        b_table[m, : b.size] = b
    return _Recursion(tuple(b_all), tuple(s_all), b_table)


def _weights(model: SphericalHarmonicModel) -> tuple[tuple, ...]:
    """Per-order coefficient matrices of every time segment against the scaled table.

    Each entry is ``(trig_first, w, w_xs)`` with ``w[j]`` the matrix of segment j. For m = 0,
    ``w`` has shape (S, P1, nmax) on rows n = 1..nmax and gives Z' (m = 0 part). For m >= 1
    the output groups are 0 Z' [times sin theta], 1 X' [times cos theta], 2 X' [times a/r],
    3 Y' [times 1], each with P1 rows (time-polynomial coefficients). With ``trig_first``
    ``w`` has shape (S, 4 P1, 2 L) against the table rows times cos(m lon) stacked over the
    rows times sin(m lon); otherwise (S, 8 P1, L), the first 4 P1 rows to be taken times
    cos(m lon), the next times sin(m lon). For m = 1, ``w_xs`` (S, P1, L) gives the m = 0
    derivative part of X' [times sin theta]. Signs are folded in so that every group is added.
    All segments are built at once and cached on the model.
    """
    cache = model._cache
    if "weights" in cache:
        return cache["weights"]
    nmax = model.nmax
    rec = _recursion(nmax)
    coef = model.coeffs  # (S, P1, K)
    out = []
    for m in range(nmax + 1):
        n = np.arange(max(m, 1), nmax + 1)
        scale = rec.scale[m]
        gi = np.array([coefficient_index(int(k), m, "g") for k in n], dtype=np.intp)
        if m == 0:
            # Z' = -Br = -(n+1) g_n0 (a/r)^(n+2) P_n0
            w0 = -coef[:, :, gi] * ((n + 1) * scale[1:])
            out.append((False, np.ascontiguousarray(w0), None))
            continue
        hi = gi + 1
        g = coef[:, :, gi] * scale
        h = coef[:, :, hi] * scale
        # (a/r)^(n+2) dP_nm/dtheta = n cos(theta) Q~_n - sqrt(n^2-m^2) (a/r) Q~_(n-1):
        # the second part puts gamma_(n+1) [g,h]_(n+1) on row n.
        gamma_next = np.sqrt((n[:-1] + 1.0) ** 2 - m * m) * scale[:-1]
        gs = np.zeros_like(g)
        hs = np.zeros_like(h)
        gs[:, :, :-1] = coef[:, :, gi[1:]] * gamma_next
        hs[:, :, :-1] = coef[:, :, hi[1:]] * gamma_next
        cos_part = np.concatenate([-g * (n + 1), g * n, -gs, -h * m], axis=1)
        sin_part = np.concatenate([-h * (n + 1), h * n, -hs, g * m], axis=1)
        xs = None
        if m == 1:
            g0 = np.array([coefficient_index(int(k), 0, "g") for k in n], dtype=np.intp)
            # dP_n0/dtheta = -sqrt(n(n+1)/2) sin(theta) Q_n1
            xs = np.ascontiguousarray(-coef[:, :, g0] * (np.sqrt(n * (n + 1) / 2.0) * scale))
        if len(n) <= _TRIG_FIRST_ROWS:
            # short columns: multiply the table by cos/sin first, then one product
            w = np.concatenate([cos_part, sin_part], axis=2)
        else:
            w = np.concatenate([cos_part, sin_part], axis=1)
        out.append((len(n) <= _TRIG_FIRST_ROWS, np.ascontiguousarray(w), xs))
    result = tuple(out)
    cache["weights"] = result
    return result


#: Orders whose Legendre column has at most this many rows take the trig-first path.
_TRIG_FIRST_ROWS = 24


def _chunk_size(nmax: int) -> int:
    # 4096 points keep the per-order products small enough that a multithreaded BLAS does
    # not lose time to thread start-up on a busy machine, and the table in cache.
    return 4096


def _synth_chunk(
    model: SphericalHarmonicModel,
    runs: list[tuple[int, int, int]],
    cos_t: NDArray[np.float64],
    sin_t: NDArray[np.float64],
    rho: NDArray[np.float64],
    cos_lon: NDArray[np.float64],
    sin_lon: NDArray[np.float64],
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Geocentric north, east, down components of one chunk as polynomials in time.

    ``runs`` lists ``(segment, first, stop)``: the chunk's columns ``first:stop`` lie in time
    segment ``segment`` (a chunk may hold points of several segments; the Legendre table is
    built once for all of them and each run is multiplied by its own segment's weights).
    Returns an array of shape (3, P1, C): the time-polynomial coefficients (powers of the
    time since each point's segment start) of X' (north), Y' (east), Z' (down) in nT.
    """
    nmax = model.nmax
    rec = _recursion(nmax)
    weights = _weights(model)
    p1 = model.coeffs.shape[1]
    half = 4 * p1
    c_pts = cos_t.shape[0]
    u = cos_t * rho
    v = rho * rho
    every_order = (
        _table_of_every_order(nmax, rec, u, v, rho, sin_t)
        if c_pts <= _TABLE_POINTS and (nmax + 1) ** 2 * c_pts * 8 <= _TABLE_BYTES
        else None
    )
    table = np.empty((nmax + 1, c_pts)) if every_order is None else None
    trig = np.empty((2 * min(nmax + 1, _TRIG_FIRST_ROWS), c_pts))
    tmp = np.empty(c_pts)
    acc = np.zeros((half, c_pts))  # groups 0..3 of the weights
    z0 = np.empty((p1, c_pts))
    xs = np.zeros((p1, c_pts))
    sectoral = np.empty(c_pts)
    cos_m = np.ones(c_pts)
    sin_m = np.zeros(c_pts)
    for m in range(nmax + 1):
        b = rec.b_coef[m]
        length = nmax + 1 - m
        if every_order is not None:
            t = every_order[m, :length]
        else:
            t = table[:length]
            _table_of_order(m, t, b, u, v, rho, sin_t, sectoral, tmp)
        trig_first, w, w_xs = weights[m]
        if m == 0:
            _run_products(w, t[1:], runs, z0)
            continue
        if w_xs is not None:
            _run_products(w_xs, t, runs, xs)
        cos_m, sin_m = cos_m * cos_lon - sin_m * sin_lon, sin_m * cos_lon + cos_m * sin_lon
        if trig_first:
            np.multiply(t, cos_m, out=trig[:length])
            np.multiply(t, sin_m, out=trig[length : 2 * length])
            _run_products(w, trig[: 2 * length], runs, acc, add=True)
            continue
        res = np.empty((2 * half, c_pts))
        _run_products(w, t, runs, res)
        part = res[:half]
        part *= cos_m
        acc += part
        part = res[half:]
        part *= sin_m
        acc += part
    return _components_of(acc.reshape(4, p1, c_pts), z0, xs, cos_t, sin_t, rho)


def _components_of(
    acc: NDArray[np.float64],
    z0: NDArray[np.float64],
    xs: NDArray[np.float64],
    cos_t: NDArray[np.float64],
    sin_t: NDArray[np.float64],
    rho: NDArray[np.float64],
) -> NDArray[np.float64]:
    """X', Y', Z' (shape (3, P1, C)) from the sums against the weights: ``acc`` groups 0..3
    (shape (4, P1, C), see :func:`_weights`), ``z0`` the m = 0 part of Z', ``xs`` the m = 0
    part of X' before its factor sin theta; the per-point factors put back here."""
    comps = np.empty((3,) + z0.shape)
    np.multiply(acc[1], cos_t, out=comps[0])
    comps[0] += acc[2] * rho
    comps[0] += xs * sin_t
    comps[1] = acc[3]
    np.multiply(acc[0], sin_t, out=comps[2])
    comps[2] += z0
    return comps


#: Chunks of up to this many points of a model of degree below _TRIG_FIRST_ROWS are summed
#: in one matrix product (:func:`_synth_one_product`): the loop over orders costs some 150
#: array operations whatever the number of points, which is most of the time of the dozen
#: points of a deed's march (measured on IGRF-14: 0.50 -> 0.24 ms for 3 to 22 points, even at
#: 128, slower from about 200).
_ONE_PRODUCT_POINTS = 64


def _one_product_weights(
    model: SphericalHarmonicModel,
) -> tuple[NDArray[np.float64], NDArray[np.intp], NDArray[np.intp]] | None:
    """Every order's weights of :func:`_weights` side by side in one matrix per segment, for
    :func:`_synth_one_product`; ``None`` for a model of too high a degree (not every order
    takes the trig-first path).

    Returns ``(big, rows, trig)``: ``big`` of shape (S, 6 P1, C) gives the rows [groups 0..3
    of the weights (4 P1) | Z' of m = 0 (P1) | the m = 0 part of X' times sin theta (P1)]
    against C input rows; input row c is row ``rows[c]`` of the flattened table of every
    order (entry [m, k] at m (nmax + 1) + k) times row ``trig[c]`` of [1, cos(m lon) for
    m = 1..nmax, sin(m lon) for m = 1..nmax]. The blocks not used are zero.
    """
    cache = model._cache
    if "one_product" in cache:
        return cache["one_product"]
    nmax = model.nmax
    size = nmax + 1
    out = None
    if 1 <= nmax < _TRIG_FIRST_ROWS:
        weights = _weights(model)
        p1 = model.coeffs.shape[1]
        half = 4 * p1
        ncols = 2 * nmax + sum(2 * (size - m) for m in range(1, size))
        big = np.zeros((model.coeffs.shape[0], 6 * p1, ncols))
        rows: list[int] = []
        trig: list[int] = []
        big[:, half : half + p1, :nmax] = weights[0][1]  # m = 0: rows n = 1..nmax
        rows += range(1, size)
        big[:, half + p1 :, nmax : 2 * nmax] = weights[1][2]  # order 1's rows, times sin theta
        rows += range(size, size + nmax)
        trig += [0] * (2 * nmax)
        col = 2 * nmax
        for m in range(1, size):
            length = size - m
            big[:, :half, col : col + 2 * length] = weights[m][1]
            rows += list(range(m * size, m * size + length)) * 2
            trig += [m] * length + [nmax + m] * length
            col += 2 * length
        out = (big, np.array(rows, dtype=np.intp), np.array(trig, dtype=np.intp))
    cache["one_product"] = out
    return out


def _synth_one_product(
    model: SphericalHarmonicModel,
    runs: list[tuple[int, int, int]],
    cos_t: NDArray[np.float64],
    sin_t: NDArray[np.float64],
    rho: NDArray[np.float64],
    lon_rad: NDArray[np.float64],
) -> NDArray[np.float64]:
    """What :func:`_synth_chunk` gives, for a few points: the table of every order times
    cos(m lon) and sin(m lon) gathered into one input matrix, and one product per run with
    :func:`_one_product_weights` (the same terms, summed in another order: equal to the
    order-by-order sums to a few units in the last place)."""
    big, rows, trig = _one_product_weights(model)  # type: ignore[misc]
    nmax = model.nmax
    size = nmax + 1
    p1 = model.coeffs.shape[1]
    half = 4 * p1
    c_pts = cos_t.shape[0]
    table = _table_of_every_order(nmax, _recursion(nmax), cos_t * rho, rho * rho, rho, sin_t)
    factors = np.empty((2 * nmax + 1, c_pts))
    factors[0] = 1.0
    angle = np.multiply.outer(np.arange(1.0, size), lon_rad)
    np.cos(angle, out=factors[1:size])
    np.sin(angle, out=factors[size:])
    x = table.reshape(size * size, c_pts)[rows]
    x *= factors[trig]
    res = np.empty((6 * p1, c_pts))
    for j, a, b in runs:
        np.matmul(big[j], x[:, a:b], out=res[:, a:b])
    acc = res[:half].reshape(4, p1, c_pts)
    return _components_of(acc, res[half : half + p1], res[half + p1 :], cos_t, sin_t, rho)


def _table_of_order(
    m: int,
    t: NDArray[np.float64],
    b: NDArray[np.float64],
    u: NDArray[np.float64],
    v: NDArray[np.float64],
    rho: NDArray[np.float64],
    sin_t: NDArray[np.float64],
    sectoral: NDArray[np.float64],
    tmp: NDArray[np.float64],
) -> None:
    """Fill ``t`` (rows n = m..nmax) with the scaled table of order ``m`` (see _Recursion),
    orders taken in turn from 0: ``sectoral`` carries the sectoral term from order m - 1."""
    length = t.shape[0]
    if m == 0:
        np.copyto(t[0], v)  # (a/r)^2 P_00
    elif m == 1:
        np.multiply(rho, v, out=sectoral)  # (a/r)^3 P_11 / sin(theta)
        t[0] = sectoral
    else:
        sectoral *= sin_t
        sectoral *= rho
        sectoral *= math.sqrt((2 * m - 1) / (2 * m))
        t[0] = sectoral
    if length > 1:
        np.multiply(u, t[0], out=t[1])
    for k in range(2, length):
        np.multiply(u, t[k - 1], out=t[k])
        np.multiply(v, t[k - 2], out=tmp)
        tmp *= b[k]
        t[k] -= tmp


#: Chunks of up to this many points, whose table of every order at once takes at most
#: _TABLE_BYTES, build that table (:func:`_table_of_every_order`); larger chunks build one
#: order's table at a time, which is as quick once the arithmetic outweighs the number of
#: array operations (measured: from about 250 points for degree 13 and for degree 133).
_TABLE_POINTS = 256
_TABLE_BYTES = 40 * 2**20


def _table_of_every_order(
    nmax: int,
    rec: _Recursion,
    u: NDArray[np.float64],
    v: NDArray[np.float64],
    rho: NDArray[np.float64],
    sin_t: NDArray[np.float64],
) -> NDArray[np.float64]:
    """The scaled tables of every order at once, shape (nmax + 1, nmax + 1, points): entry
    [m, k] is row n = m + k of order m (entries with m + k > nmax are not filled).

    The same operations, in the same order, as :func:`_table_of_order` for each order, but
    each step of the recursion is taken for every order together: a few hundred array
    operations instead of one per (n, m). For a few points of a high-degree model (degree
    133: some 9,000 (n, m) pairs) this is what keeps one evaluation in milliseconds.
    """
    size = nmax + 1
    c_pts = u.shape[0]
    table = np.empty((size, size, c_pts))
    sectoral = np.empty(c_pts)
    table[0, 0] = v
    if size > 1:
        np.multiply(rho, v, out=sectoral)
        table[1, 0] = sectoral
    for m in range(2, size):
        sectoral *= sin_t
        sectoral *= rho
        sectoral *= math.sqrt((2 * m - 1) / (2 * m))
        table[m, 0] = sectoral
    if size > 1:
        np.multiply(u, table[: size - 1, 0], out=table[: size - 1, 1])
    b_of = rec.b_table
    tmp = np.empty((size, c_pts))
    for k in range(2, size):
        rows = size - k  # the orders m <= nmax - k have a row n = m + k
        np.multiply(u, table[:rows, k - 1], out=table[:rows, k])
        np.multiply(v, table[:rows, k - 2], out=tmp[:rows])
        tmp[:rows] *= b_of[:rows, k, None]
        table[:rows, k] -= tmp[:rows]
    return table


def _run_products(
    w: NDArray[np.float64],
    x: NDArray[np.float64],
    runs: list[tuple[int, int, int]],
    out: NDArray[np.float64],
    *,
    add: bool = False,
) -> None:
    """``out[:, a:b] = w[j] @ x[:, a:b]`` (or ``+=`` with ``add``) for each run (j, a, b)."""
    for j, a, b in runs:
        if add:
            out[:, a:b] += w[j] @ x[:, a:b]
        else:
            np.matmul(w[j], x[:, a:b], out=out[:, a:b])


#: From this many points on, synthesis runs BLAS on one thread (see :func:`synthesize`).
_SINGLE_THREAD_FROM = 4096


def synthesize(
    model: SphericalHarmonicModel,
    *,
    lat_deg: ArrayLike,
    lon_deg: ArrayLike,
    height_m: ArrayLike,
    year: ArrayLike,
    chunk_size: int | None = None,
) -> FieldComponents:
    """Evaluate ``model`` at geodetic points, each with its own decimal year.

    ``lat_deg`` (geodetic, WGS84), ``lon_deg`` (east positive), ``height_m`` (above the
    ellipsoid) and ``year`` (decimal year) broadcast together. Returns X north, Y east,
    Z down in nT and their yearly rates in nT/yr, in the geodetic frame, with the broadcast
    shape. No range checking: years outside the model are evaluated on the nearest segment's
    polynomial (callers check the interval; see :mod:`geo.magnetic`).
    """
    size = np.broadcast_shapes(
        np.shape(lat_deg), np.shape(lon_deg), np.shape(height_m), np.shape(year)
    )
    if int(np.prod(size)) < _SINGLE_THREAD_FROM:
        return _synthesize(model, lat_deg, lon_deg, height_m, year, chunk_size)
    # Many medium-sized matrix products: a multi-threaded BLAS spends more time waking its
    # threads than computing (measured 3-6x slower on two loaded cores), so run on one.
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=1, user_api="blas"):
        return _synthesize(model, lat_deg, lon_deg, height_m, year, chunk_size)


def _synthesize(
    model: SphericalHarmonicModel,
    lat_deg: ArrayLike,
    lon_deg: ArrayLike,
    height_m: ArrayLike,
    year: ArrayLike,
    chunk_size: int | None,
) -> FieldComponents:
    lat, lon, hgt, yr = np.broadcast_arrays(
        np.asarray(lat_deg, dtype=float),
        np.asarray(lon_deg, dtype=float),
        np.asarray(height_m, dtype=float),
        np.asarray(year, dtype=float),
    )
    shape = lat.shape
    lat, lon, hgt, yr = (a.ravel() for a in (lat, lon, hgt, yr))
    npts = lat.size
    seg = model.segment_of(yr[:1] if np.size(year) == 1 else yr)
    seg_all = np.broadcast_to(seg, (npts,))
    # A place asked for at several dates of one time segment (a record and a target date a
    # few years apart, say) has one set of time polynomials: compute it once.
    spread = None
    if 1 < npts <= _SHARED_PLACES_MAX and np.size(year) > 1 and _dates_share_segment(yr, seg_all):
        key = np.column_stack([lat, lon, hgt, seg_all.astype(float)])
        _, first, inverse = np.unique(key, axis=0, return_index=True, return_inverse=True)
        if first.size < npts:
            spread = inverse.ravel()
            places = (lat[first], lon[first], hgt[first], seg_all[first])
    if spread is None:
        polys, cos_psi, sin_psi = _polynomials(model, lat, lon, hgt, seg_all, chunk_size)
    else:
        polys, cos_psi, sin_psi = _polynomials(model, *places, chunk_size)
        polys, cos_psi, sin_psi = polys[:, :, spread], cos_psi[spread], sin_psi[spread]
    tau = yr - model.breaks[seg_all]
    # Horner for value and derivative in the time since each point's segment start
    p1 = polys.shape[1]
    out = polys[:, p1 - 1].copy()
    out_rate = np.zeros_like(out)
    for p in range(p1 - 2, -1, -1):
        out_rate *= tau
        out_rate += out
        out *= tau
        out += polys[:, p]
    x_c, y_c, z_c = out
    dx_c, dy_c, dz_c = out_rate
    north = x_c * cos_psi + z_c * sin_psi
    down = -x_c * sin_psi + z_c * cos_psi
    north_rate = dx_c * cos_psi + dz_c * sin_psi
    down_rate = -dx_c * sin_psi + dz_c * cos_psi
    results = (north, y_c, down, north_rate, dy_c, down_rate)
    return FieldComponents(*(a.reshape(shape) for a in results))


#: Batches of up to this many points are searched for places repeated at several dates.
_SHARED_PLACES_MAX = 4096


def _dates_share_segment(year: NDArray[np.float64], seg: NDArray[np.intp]) -> bool:
    """Whether two different years of the batch lie in one time segment (else no place can
    be asked for at several dates of one segment, and the search for them is skipped: a
    record and a target date a century apart are in different segments)."""
    return bool(np.unique(year).size > np.unique(seg).size)


def _polynomials(
    model: SphericalHarmonicModel,
    lat: NDArray[np.float64],
    lon: NDArray[np.float64],
    hgt: NDArray[np.float64],
    seg: NDArray[np.intp],
    chunk_size: int | None,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Time polynomials of the geocentric X', Y', Z' at flat points, each in its time segment
    ``seg`` (shape (3, P1, points), see :func:`_synth_chunk`), and the cosine and sine of the
    angle from the geocentric to the geodetic frame at each point."""
    npts = lat.size
    order = None
    run_seg = seg[:1]
    run_bounds = np.array([0, npts])
    if seg.size > 1 and seg.min() != seg.max():
        # Points are put in segment order once (a radix sort of small integers); chunks of
        # consecutive points then hold one or a few runs of equal segment, and the results
        # are put back in input order once at the end.
        small = np.int16 if model.coeffs.shape[0] < 2**15 else np.intp
        order = np.argsort(seg.astype(small), kind="stable")
        seg = seg[order]
        lat, lon, hgt = lat[order], lon[order], hgt[order]
        cuts = np.flatnonzero(seg[1:] != seg[:-1]) + 1
        run_seg = seg[np.concatenate([[0], cuts])]
        run_bounds = np.concatenate([[0], cuts, [npts]])
    r, cos_t, sin_t, cos_psi, sin_psi = geodetic_to_geocentric(lat, hgt)
    rho = REFERENCE_RADIUS_KM / r
    lon_rad = np.radians(lon)
    cos_lon = np.cos(lon_rad)
    sin_lon = np.sin(lon_rad)
    size = chunk_size or _chunk_size(model.nmax)
    p1 = model.coeffs.shape[1]
    polys = np.empty((3, p1, npts))
    run = 0
    for c0 in range(0, npts, size):
        c1 = min(c0 + size, npts)
        while run_bounds[run + 1] <= c0:
            run += 1
        runs = []
        k = run
        while k < run_seg.size and run_bounds[k] < c1:
            a = max(int(run_bounds[k]), c0) - c0
            b = min(int(run_bounds[k + 1]), c1) - c0
            runs.append((int(run_seg[k]), a, b))
            k += 1
        part = slice(c0, c1)
        if c1 - c0 <= _ONE_PRODUCT_POINTS and _one_product_weights(model) is not None:
            polys[:, :, part] = _synth_one_product(
                model, runs, cos_t[part], sin_t[part], rho[part], lon_rad[part]
            )
            continue
        polys[:, :, part] = _synth_chunk(
            model, runs, cos_t[part], sin_t[part], rho[part], cos_lon[part], sin_lon[part]
        )
    if order is not None:
        polys = polys[:, :, np.argsort(order)]
        cos_psi, sin_psi = _unsort(cos_psi, order), _unsort(sin_psi, order)
    return polys, cos_psi, sin_psi


def _unsort(values: NDArray[np.float64], order: NDArray[np.intp]) -> NDArray[np.float64]:
    """Values computed in the order ``order`` put back in input order."""
    result = np.empty_like(values)
    result[order] = values
    return result
