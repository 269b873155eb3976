"""Least-squares similarity (2-D Helmert) fit of a record traverse onto found monuments.

Coordinates are planar metres (east, north). The fit finds the rotation theta, scale s and
translation (t_e, t_n) minimising the sum of squared residuals over the found stations of

    found = t + s * R(theta) * record,

where R(theta) turns a direction *clockwise* by theta: a recorded azimuth alpha becomes
alpha + theta. Written with complex numbers z = north + i east (so that z = L e^(i azimuth)),
the model is w = a + b z with b = s e^(i theta); its least-squares solution is closed-form
(b = sum(conj(z_c) w_c) / sum(|z_c|^2) over centred coordinates; without scale, theta is the
argument of the numerator and s = 1).

With two found stations and scale free the fit is exact (zero residuals); with scale fixed it
is a least-squares fit even for two. Collinear found stations do determine a similarity (the
direction of the line fixes the rotation); the fit is undetermined only when the record
stations or the found stations coincide, or the record and found figures are unrelated so that
no rotation is preferred (FitError).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .angles import angle_difference
from .errors import FitError, InputError

__all__ = ["MIN_SPREAD_M", "SimilarityFit", "fit_similarity"]

Array = NDArray[np.float64]

#: Record or found stations whose RMS spread about their centroid is below this (metres)
#: are treated as coincident: they do not fix a rotation.
MIN_SPREAD_M = 1e-3


@dataclass(frozen=True)
class SimilarityFit:
    """Result of :func:`fit_similarity`.

    ``rotation_deg``: clockwise rotation taking recorded azimuths onto found (grid) azimuths,
    in (-180, 180]. ``scale``: found length / recorded length (1.0 exactly when not fitted).
    ``translation_east_m``/``translation_north_m``: where the record origin (0, 0) lands.
    ``indices``: the station index of each found station (as given, else 0..m-1).
    ``residual_east_m``/``residual_north_m``: found - fitted, per found station.
    ``rms_m``: sqrt(mean(residual_east^2 + residual_north^2)) over the found stations (no
    degrees-of-freedom correction). ``with_scale``: whether the scale was fitted. ``exact``:
    True when the fit has no redundancy (two stations with scale), so residuals are zero by
    construction and say nothing about the quality of the record.
    """

    rotation_deg: float
    scale: float
    translation_east_m: float
    translation_north_m: float
    indices: tuple[int, ...]
    residual_east_m: Array
    residual_north_m: Array
    rms_m: float
    with_scale: bool
    exact: bool
    #: Standard error of ``rotation_deg`` (degrees) from the residuals: sigma0 / (|b| sqrt(sum
    #: |z - z_mean|^2)), sigma0^2 = sum |residual|^2 / (2m - parameters), b the fitted complex
    #: rotation-scale (the least-squares 2-D conformal transformation; Ghilani, *Adjustment
    #: Computations*, chapter on coordinate transformations, from memory). ``None`` without
    #: redundancy (two stations with scale).
    rotation_sigma_deg: float | None = None

    def apply(self, *, east_m: ArrayLike, north_m: ArrayLike) -> tuple[Array, Array]:
        """Map record coordinates (metres) into the found frame: returns (east_m, north_m)."""
        z = np.asarray(north_m, dtype=float) + 1j * np.asarray(east_m, dtype=float)
        b = self.scale * np.exp(1j * math.radians(self.rotation_deg))
        w = complex(self.translation_north_m, self.translation_east_m) + b * z
        return np.asarray(w.imag, dtype=float), np.asarray(w.real, dtype=float)


def _vector(name: str, values: ArrayLike) -> Array:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if arr.ndim != 1:
        raise InputError(f"{name} must be a 1-D array of metres")
    if not np.all(np.isfinite(arr)):
        raise InputError(f"{name} must hold finite numbers")
    return arr


def fit_similarity(
    *,
    record_east_m: ArrayLike,
    record_north_m: ArrayLike,
    found_east_m: ArrayLike,
    found_north_m: ArrayLike,
    with_scale: bool = True,
    indices: Sequence[int] | None = None,
) -> SimilarityFit:
    """Fit the record positions of the found stations onto their found positions.

    All four arrays hold one entry per found station, in metres (record: from the marched
    record traverse; found: measured, in a grid or local frame). ``indices`` labels the
    stations in the result (station numbers as in the traverse). Raises FitError for fewer than
    two stations or an undetermined rotation.
    """
    re_ = _vector("record east", record_east_m)
    rn = _vector("record north", record_north_m)
    fe = _vector("found east", found_east_m)
    fn = _vector("found north", found_north_m)
    m = re_.size
    if not (rn.size == m and fe.size == m and fn.size == m):
        raise InputError("record and found coordinates must have one entry per found station")
    labels = tuple(range(m)) if indices is None else tuple(int(i) for i in indices)
    if len(labels) != m:
        raise InputError("indices must have one entry per found station")
    if m < 2:
        raise FitError(
            f"the record-to-found fit needs at least two found stations, {m} given",
            field="found",
        )
    z = rn + 1j * re_
    w = fn + 1j * fe
    z0 = complex(math.fsum(z.real.tolist()) / m, math.fsum(z.imag.tolist()) / m)
    w0 = complex(math.fsum(w.real.tolist()) / m, math.fsum(w.imag.tolist()) / m)
    zc, wc = z - z0, w - w0
    zz = math.fsum((np.abs(zc) ** 2).tolist())
    ww = math.fsum((np.abs(wc) ** 2).tolist())
    if math.sqrt(zz / m) < MIN_SPREAD_M:
        raise FitError(
            "the record positions of the found stations coincide: the rotation is undetermined",
            field="found",
        )
    if math.sqrt(ww / m) < MIN_SPREAD_M:
        raise FitError("the found stations coincide: the rotation is undetermined", field="found")
    prod = np.conj(zc) * wc
    num = complex(math.fsum(prod.real.tolist()), math.fsum(prod.imag.tolist()))
    if abs(num) <= 1e-9 * math.sqrt(zz * ww):
        raise FitError(
            "the found stations bear no similarity to the record figure: the rotation is "
            "undetermined",
            field="found",
        )
    theta = math.atan2(num.imag, num.real)
    scale = abs(num) / zz if with_scale else 1.0
    b = scale * complex(math.cos(theta), math.sin(theta))
    a = w0 - b * z0
    fitted = a + b * z
    res = w - fitted
    rms = math.sqrt(math.fsum((np.abs(res) ** 2).tolist()) / m)
    dof = 2 * m - (4 if with_scale else 3)
    sigma_rot = None
    if dof > 0:
        sigma0 = math.sqrt(math.fsum((np.abs(res) ** 2).tolist()) / dof)
        sigma_rot = math.degrees(sigma0 / (abs(b) * math.sqrt(zz)))
    return SimilarityFit(
        rotation_deg=float(angle_difference(math.degrees(theta), 0.0)),
        scale=scale,
        translation_east_m=a.imag,
        translation_north_m=a.real,
        indices=labels,
        residual_east_m=np.asarray(res.imag, dtype=float),
        residual_north_m=np.asarray(res.real, dtype=float),
        rms_m=rms,
        with_scale=with_scale,
        exact=with_scale and m == 2,
        rotation_sigma_deg=sigma_rot,
    )
