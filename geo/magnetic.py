"""The geomagnetic field at places and dates: the public face of the field engine.

Conventions: declination D is the angle from true north to the horizontal field, east
positive; inclination I is positive when the field points down; X north, Y east, Z down in
the geodetic (WGS84) frame, in nT; rates are per year. Latitude and longitude are geodetic
degrees (longitude east positive; 0..360 is accepted and brought to -180..180), heights are
metres above the ellipsoid, dates are decimal years (see :mod:`geo.dates`).

Uncertainty: the 1-sigma declination uncertainty is given only where the model's publisher
publishes an error model: WMM2025 and WMMHR2025 (``declination_sigma_deg``; NaN otherwise).
Compass warnings follow the WMM's published thresholds on the horizontal intensity H:
below 6000 nT a caution zone, below 2000 nT the compass is unreliable. No model includes
local crustal anomalies, which can reach several degrees (see :mod:`geo.cautions`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import InputError
from .models import (
    BLEND_END,
    BLEND_START,
    blend_label,
    blend_parts,
    blend_weight,
    load_model,
    require,
)
from .synthesis import synthesize

#: Horizontal intensity below which compass readings need caution, nT (WMM caution zone).
CAUTION_H_NT = 6000.0
#: Horizontal intensity below which a compass is unreliable, nT (WMM blackout zone).
UNRELIABLE_H_NT = 2000.0

#: Published declination error models: sigma_D = sqrt(a^2 + (b / H)^2) degrees, H in nT.
#: WMM2025: a = 0.26 deg, b = 5417 deg nT; WMMHR2025: a = 0.25 deg, b = 5205 deg nT.
#: Source: NOAA NCEI & BGS, "The US/UK World Magnetic Model for 2025-2030: Technical
#: Report" (error model table), and the WMMHR2025 release notes.
DECLINATION_ERROR_MODELS: dict[str, tuple[float, float]] = {
    "wmm2025": (0.26, 5417.0),
    "wmmhr2025": (0.25, 5205.0),
}

LAT_LIMIT = 90.0
HEIGHT_MIN_M = -1000.0
HEIGHT_MAX_M = 100_000.0


@dataclass(frozen=True)
class FieldVector:
    """The field and its yearly change at one or more points.

    Every numeric attribute is a numpy array with the broadcast shape of the inputs (0-d for
    scalar inputs). ``model`` is a ``str`` when every point used the same model, else a tuple
    of model names, one per point in flattened (C) order. ``warnings`` is, for 0-d input, a
    tuple of warning strings; otherwise a tuple (flattened order) of such tuples.
    """

    declination_deg: NDArray[np.float64]
    inclination_deg: NDArray[np.float64]
    horizontal_nT: NDArray[np.float64]
    north_nT: NDArray[np.float64]
    east_nT: NDArray[np.float64]
    down_nT: NDArray[np.float64]
    total_nT: NDArray[np.float64]
    declination_rate_deg_per_year: NDArray[np.float64]
    inclination_rate_deg_per_year: NDArray[np.float64]
    horizontal_rate_nT_per_year: NDArray[np.float64]
    north_rate_nT_per_year: NDArray[np.float64]
    east_rate_nT_per_year: NDArray[np.float64]
    down_rate_nT_per_year: NDArray[np.float64]
    total_rate_nT_per_year: NDArray[np.float64]
    declination_sigma_deg: NDArray[np.float64]
    model: str | tuple[str, ...]
    warnings: tuple

    def model_of(self, index: int) -> str:
        """Model name used at flat point ``index``."""
        return self.model if isinstance(self.model, str) else self.model[index]

    def warnings_of(self, index: int) -> tuple[str, ...]:
        """Warnings at flat point ``index``."""
        if np.ndim(self.declination_deg) == 0:
            return self.warnings
        return self.warnings[index]


def _checked(value: ArrayLike, field: str) -> NDArray[np.float64]:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{value!r} is not a number", field=field) from None
    if np.isnan(arr).any():
        raise InputError("is not a number (NaN)", field=field)
    return arr


def validate_position(
    lat: ArrayLike, lon: ArrayLike, height_m: ArrayLike = 0.0
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Check latitude (-90..90), longitude (-180..360, brought to [-180, 180]) and height
    (-1 km..+100 km). Returns float arrays; raises :class:`InputError` naming the field."""
    la = _checked(lat, "lat")
    lo = _checked(lon, "lon")
    h = _checked(height_m, "height_m")
    bad_lat, bad_lon, bad_h = _position_faults(la, lo, h)
    if bad_lat.any():
        raise InputError(
            f"latitude {float(la[bad_lat].flat[0])!r} is outside -90..90 degrees", field="lat"
        )
    if bad_lon.any():
        raise InputError(
            f"longitude {float(lo[bad_lon].flat[0])!r} is outside -180..180 (or 0..360) degrees",
            field="lon",
        )
    lo = np.where(lo > 180.0, lo - 360.0, lo)
    if bad_h.any():
        raise InputError(
            f"height {float(h[bad_h].flat[0])!r} m is outside {HEIGHT_MIN_M:.0f}.."
            f"{HEIGHT_MAX_M:.0f} m above the ellipsoid",
            field="height_m",
        )
    return la, lo, h


def _position_faults(
    la: NDArray[np.float64], lo: NDArray[np.float64], h: NDArray[np.float64]
) -> tuple[NDArray[np.bool_], NDArray[np.bool_], NDArray[np.bool_]]:
    """Masks of latitudes, longitudes and heights outside what :func:`validate_position`
    accepts (NaN latitude aside, which :func:`_checked` refuses first)."""
    bad_lat = np.abs(la) > LAT_LIMIT
    bad_lon = (lo < -180.0) | (lo > 360.0) | ~np.isfinite(lo)
    bad_h = (h < HEIGHT_MIN_M) | (h > HEIGHT_MAX_M) | ~np.isfinite(h)
    return bad_lat, bad_lon, bad_h


def position_ok(lat: ArrayLike, lon: ArrayLike, height_m: ArrayLike = 0.0) -> NDArray[np.bool_]:
    """Mask of the points :func:`validate_position` accepts (latitude -90..90 degrees,
    longitude -180..360, height -1 km..+100 km; NaN anywhere is refused), element by element."""
    la, lo, h = (np.asarray(v, dtype=float) for v in (lat, lon, height_m))
    bad_lat, bad_lon, bad_h = _position_faults(la, lo, h)
    return ~(bad_lat | bad_lon | bad_h | np.isnan(la) | np.isnan(h))


def _checked_years(year: ArrayLike) -> NDArray[np.float64]:
    yr = _checked(year, "date")
    bad = ~np.isfinite(yr)
    if bad.any():
        raise InputError("date is not a finite decimal year", field="date")
    return yr


def field_at(
    *,
    lat: ArrayLike,
    lon: ArrayLike,
    year: ArrayLike,
    height_m: ArrayLike = 0.0,
    model: str = "auto",
) -> FieldVector:
    """Evaluate the main field at geodetic points and decimal years (each point its own date).

    ``lat``/``lon`` in degrees (WGS84 geodetic, east positive), ``year`` a decimal year,
    ``height_m`` metres above the ellipsoid; all broadcast together. ``model`` is a model name
    (``igrf14``, ``wmm2025``, ``wmmhr2025`` or an installed one) or ``auto``.
    Raises :class:`InputError` for out-of-range input and :class:`ModelRangeError` when a date
    lies outside the model's interval (never extrapolates).
    """
    la, lo, h = validate_position(lat, lon, height_m)
    yr = _checked_years(year)
    la, lo, h, yr = np.broadcast_arrays(la, lo, h, yr)
    shape = la.shape
    flat = [a.ravel() for a in (la, lo, h, yr)]
    names = require(model, flat[3])
    unique = sorted(set(names.tolist()))
    size = flat[0].size
    comps = np.empty((6, size))
    for name in unique:
        sel = names == name if len(unique) > 1 else slice(None)
        comps[:, sel] = _components(name, *(a[sel] for a in flat))
    x, y, z, dx, dy, dz = comps
    hz = np.hypot(x, y)
    f = np.hypot(hz, z)
    with np.errstate(invalid="ignore", divide="ignore"):
        d = np.degrees(np.arctan2(y, x))
        inc = np.degrees(np.arctan2(z, hz))
        dh = (x * dx + y * dy) / hz
        df = (x * dx + y * dy + z * dz) / f
        dd = np.degrees((x * dy - y * dx) / (hz * hz))
        di = np.degrees((hz * dz - z * dh) / (f * f))
    sigma = np.full(size, np.nan)
    for name, (a, b) in DECLINATION_ERROR_MODELS.items():
        sel = names == name
        if sel.any():
            with np.errstate(divide="ignore"):
                sigma[sel] = np.sqrt(a * a + (b / hz[sel]) ** 2)
    # Most points need no warning: format the message only where H is low or not finite.
    flagged = ~(np.isfinite(hz) & (hz >= CAUTION_H_NT))
    if flagged.any():
        warn_list: list[tuple[str, ...]] = [()] * size
        for k in np.flatnonzero(flagged).tolist():
            warn_list[k] = _warnings(float(hz[k]))
        warn = tuple(warn_list)
    else:
        warn = ((),) * size
    model_out: str | tuple[str, ...] = unique[0] if len(unique) == 1 else tuple(names.tolist())
    if any(blend_parts(u) is not None for u in unique):  # blends are named with their weights
        labels = [
            blend_label(nm, yr) if blend_parts(nm) is not None else nm
            for nm, yr in zip(names.tolist(), flat[3].tolist(), strict=True)
        ]
        model_out = labels[0] if len(set(labels)) == 1 else tuple(labels)

    def shaped(a: NDArray[np.float64]) -> NDArray[np.float64]:
        return a.reshape(shape)

    return FieldVector(
        declination_deg=shaped(d),
        inclination_deg=shaped(inc),
        horizontal_nT=shaped(hz),
        north_nT=shaped(x),
        east_nT=shaped(y),
        down_nT=shaped(z),
        total_nT=shaped(f),
        declination_rate_deg_per_year=shaped(dd),
        inclination_rate_deg_per_year=shaped(di),
        horizontal_rate_nT_per_year=shaped(dh),
        north_rate_nT_per_year=shaped(dx),
        east_rate_nT_per_year=shaped(dy),
        down_rate_nT_per_year=shaped(dz),
        total_rate_nT_per_year=shaped(df),
        declination_sigma_deg=shaped(sigma),
        model=model_out,
        warnings=warn[0] if shape == () else warn,
    )


#: Components already computed are kept with the loaded model (a model file that changes is
#: loaded afresh, with nothing kept), by (lat, lon, height, year) of the point: an editor
#: evaluates the stations of a document on every keystroke, and only those after the edited
#: course have moved. Kept for batches of up to _MEMO_BATCH points (a grid or a file of points
#: is computed whole), at most _MEMO_MAX points a model (then forgotten at once).
_MEMO_BATCH = 4096
_MEMO_MAX = 50_000
#: Every model's memory of points (by the model's id), for :func:`forget_computed_points`.
_MEMOS: dict[int, dict[tuple[float, ...], tuple[float, ...]]] = {}


def forget_computed_points() -> None:
    """Empty every model's memory of computed points.

    A point is synthesized together with the others of its batch, and a value taken from the
    memory was computed in another batch (the matrix products may then round in the last
    bit). A process that works through many unrelated documents forgets before each one, so
    that each document's figures are the very bits a process opening only that document
    gives."""
    for memo in _MEMOS.values():
        memo.clear()


def _components(
    name: str,
    lat: NDArray[np.float64],
    lon: NDArray[np.float64],
    h: NDArray[np.float64],
    year: NDArray[np.float64],
) -> NDArray[np.float64]:
    """X, Y, Z (geodetic north, east, down, nT) and their yearly rates at flat points, shape
    (6, points), from model ``name`` (:func:`geo.synthesis.synthesize`)."""

    parts = blend_parts(name)
    if parts is not None:
        return _blended(parts, lat, lon, h, year)
    model = load_model(name)

    def synthesized(at: tuple[NDArray[np.float64], ...]) -> NDArray[np.float64]:
        res = synthesize(model, lat_deg=at[0], lon_deg=at[1], height_m=at[2], year=at[3])
        return np.array(
            [res.north, res.east, res.down, res.north_rate, res.east_rate, res.down_rate],
            dtype=float,
        ).reshape(6, -1)

    if lat.size > _MEMO_BATCH:
        return synthesized((lat, lon, h, year))
    memo: dict[tuple[float, ...], tuple[float, ...]] | None = model._cache.get("points")
    if memo is None:
        memo = model._cache["points"] = {}
        _MEMOS[id(model)] = memo
    keys = list(zip(lat.tolist(), lon.tolist(), h.tolist(), year.tolist(), strict=True))
    found = list(map(memo.get, keys))
    missing = [i for i, v in enumerate(found) if v is None]
    if len(missing) == len(keys):  # nothing kept: the batch is computed whole, as it is
        fresh_all = synthesized((lat, lon, h, year))
        if len(memo) + len(keys) > _MEMO_MAX:
            memo.clear()
        memo.update(zip(keys, map(tuple, fresh_all.T.tolist()), strict=True))
        return fresh_all
    if missing:
        at = np.array(missing)
        fresh = synthesized((lat[at], lon[at], h[at], year[at])).T.tolist()
        if len(memo) + len(missing) > _MEMO_MAX:
            memo.clear()
        for i, values in zip(missing, fresh, strict=True):
            found[i] = memo[keys[i]] = tuple(values)
    return np.array(found, dtype=float).reshape(-1, 6).T


def _blended(
    parts: tuple[str, str],
    lat: NDArray[np.float64],
    lon: NDArray[np.float64],
    h: NDArray[np.float64],
    year: NDArray[np.float64],
) -> NDArray[np.float64]:
    """Components of a blend (:func:`geo.models.blend_key`): the field is linear in the
    Gauss coefficients, so blending the coefficients with weights w and 1 - w is blending
    X, Y, Z; the rates add the change of the weight, dw/dt (A - B)."""
    a = _components(parts[0], lat, lon, h, year)
    b = _components(parts[1], lat, lon, h, year)
    w = blend_weight(year)
    inside = (year >= BLEND_START) & (year < BLEND_END)
    dw = np.where(inside, -1.0 / (BLEND_END - BLEND_START), 0.0)
    out = w * a + (1.0 - w) * b
    out[3:] += dw * (a[:3] - b[:3])
    return out


def _warnings(h_nt: float) -> tuple[str, ...]:
    if not math.isfinite(h_nt) or h_nt < UNRELIABLE_H_NT:
        return (
            f"horizontal intensity {h_nt:.0f} nT is below {UNRELIABLE_H_NT:.0f} nT: "
            "a compass is unreliable here",
        )
    if h_nt < CAUTION_H_NT:
        return (
            f"horizontal intensity {h_nt:.0f} nT is below {CAUTION_H_NT:.0f} nT: "
            "caution, compass readings carry large uncertainty here",
        )
    return ()


def declination_at(
    *,
    lat: ArrayLike,
    lon: ArrayLike,
    year: ArrayLike,
    height_m: ArrayLike = 0.0,
    model: str = "auto",
) -> float | NDArray[np.float64]:
    """Declination in degrees (east positive): a float for scalar input, else an array."""
    d = field_at(lat=lat, lon=lon, year=year, height_m=height_m, model=model).declination_deg
    return float(d) if np.ndim(d) == 0 else d
