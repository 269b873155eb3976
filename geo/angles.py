"""Angle normalisation and differences: the one place where they live.

All angles are float degrees. Azimuths are clockwise from a reference north and are
normalised to [0, 360). Differences are normalised to (-180, 180].
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray


def normalize_azimuth(deg: ArrayLike) -> NDArray[np.float64] | float:
    """Return ``deg`` reduced to [0, 360) degrees (scalar in, scalar out).

    ``-0.0`` and values that round to 360 become ``0.0``.
    """
    a = np.mod(np.asarray(deg, dtype=float), 360.0)
    a = np.where(a >= 360.0, 0.0, a) + 0.0  # + 0.0 turns -0.0 into 0.0
    return float(a) if a.ndim == 0 else a


def angle_difference(a_deg: ArrayLike, b_deg: ArrayLike) -> NDArray[np.float64] | float:
    """Return ``a - b`` in degrees, reduced to (-180, 180] (scalar in, scalar out)."""
    d = np.mod(np.asarray(a_deg, dtype=float) - np.asarray(b_deg, dtype=float), 360.0)
    d = np.where(d > 180.0, d - 360.0, d) + 0.0
    return float(d) if d.ndim == 0 else d


def reverse_azimuth(deg: ArrayLike) -> NDArray[np.float64] | float:
    """Return the back azimuth (``deg + 180``) in [0, 360) degrees."""
    return normalize_azimuth(np.asarray(deg, dtype=float) + 180.0)
