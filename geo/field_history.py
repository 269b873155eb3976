"""Declination at one place over a span of dates: the table and plot behind a retracement.

``declination_history(lat=, lon=, years=, height_m=0, model="auto")`` evaluates the field at
one place for every date in **one** call of :func:`geo.magnetic.field_at` (the synthesis
groups the dates by model and time segment internally), after choosing a model for each date
by :func:`geo.models.resolve` (``auto``: IGRF-14 from 1900, an installed historical model such
as gufm1 before). Dates no model covers are kept, marked uncovered, with no value: nothing is
extrapolated.

``model_histories(...)`` gives one history per installed model over the part of the span the
model covers (the survey-date estimate compares every model, and the plot draws each).

Units: decimal years; declination D in degrees, east positive (true = magnetic + D); rate in
degrees a year; ``sigma_deg`` the model's published 1-sigma declination uncertainty where it
has one (WMM2025, WMMHR2025), else NaN.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .errors import InputError

__all__ = ["DeclinationHistory", "declination_history", "history_years", "model_histories"]

#: The longest table ``history_years`` builds (a step of a day over 300 years is 110,000).
MAX_DATES = 200_000


@dataclass(frozen=True)
class DeclinationHistory:
    """D at one place for each date. Arrays have one entry per date; ``model`` names the model
    of each date (``""`` where none covers it, ``covered`` False and the values NaN)."""

    lat: float
    lon: float
    height_m: float
    years: np.ndarray
    declination_deg: np.ndarray
    rate_deg_per_year: np.ndarray
    sigma_deg: np.ndarray
    model: tuple[str, ...]
    covered: np.ndarray

    def rows(self) -> list[dict[str, Any]]:
        """One plain dict a date: year, model, declination_deg, rate, sigma (None for NaN)."""

        def val(x: float) -> float | None:
            return float(x) if np.isfinite(x) else None

        return [
            {
                "year": float(y),
                "model": m or None,
                "declination_deg": val(d),
                "declination_rate_deg_per_year": val(r),
                "declination_sigma_deg": val(s),
            }
            for y, m, d, r, s in zip(
                self.years.tolist(),
                self.model,
                self.declination_deg.tolist(),
                self.rate_deg_per_year.tolist(),
                self.sigma_deg.tolist(),
                strict=True,
            )
        ]


def history_years(start: float, stop: float, step: float = 1.0) -> np.ndarray:
    """Decimal years from ``start`` to ``stop`` inclusive (where the step lands on it).

    Raises :class:`InputError` for a step that is not positive, ``stop`` before ``start``, or
    more than :data:`MAX_DATES` dates.
    """
    if not (np.isfinite(start) and np.isfinite(stop) and np.isfinite(step)):
        raise InputError("--from, --to and --step must be numbers", field="--from")
    if step <= 0:
        raise InputError(f"--step {step:g} must be more than 0 years", field="--step")
    if stop < start:
        raise InputError(f"--to {stop:g} comes before --from {start:g}", field="--to")
    count = int(np.floor((stop - start) / step + 1e-9)) + 1
    if count > MAX_DATES:
        raise InputError(
            f"{count} dates asked ({start:g} to {stop:g} every {step:g}): at most {MAX_DATES}",
            field="--step",
        )
    return start + step * np.arange(count, dtype=float)


def declination_history(
    *, lat: float, lon: float, years: Any, height_m: float = 0.0, model: str = "auto"
) -> DeclinationHistory:
    """D at (``lat``, ``lon``, ``height_m``) for every decimal year in ``years`` (see module)."""
    from .magnetic import field_at, validate_position
    from .models import resolve

    validate_position(lat, lon, height_m)
    yrs = np.atleast_1d(np.asarray(years, dtype=float))
    names, ok = resolve(model, yrs)
    d = np.full(yrs.shape, np.nan)
    rate = np.full(yrs.shape, np.nan)
    sigma = np.full(yrs.shape, np.nan)
    if ok.any():
        chosen = "auto" if model.strip().lower() == "auto" else model
        fv = field_at(lat=lat, lon=lon, year=yrs[ok], height_m=height_m, model=chosen)
        d[ok] = np.asarray(fv.declination_deg, dtype=float)
        rate[ok] = np.asarray(fv.declination_rate_deg_per_year, dtype=float)
        sigma[ok] = np.asarray(fv.declination_sigma_deg, dtype=float)
    return DeclinationHistory(
        lat=float(lat),
        lon=float(lon),
        height_m=float(height_m),
        years=yrs,
        declination_deg=d,
        rate_deg_per_year=rate,
        sigma_deg=sigma,
        model=tuple(str(n) for n in names.tolist()),
        covered=np.asarray(ok, dtype=bool),
    )


def model_histories(
    *, lat: float, lon: float, height_m: float = 0.0, step: float = 0.1
) -> tuple[DeclinationHistory, ...]:
    """One history per installed model (shipped and user), each over its own interval at
    ``step`` years (the interval's end excluded, as the models define it).

    The last few results are kept (keyed on the place, the step and the loaded models, so a
    model file that changes is evaluated afresh): the desk asks again on every keystroke.
    """
    from .models import available_models, load_model

    models = tuple((info.name, load_model(info)) for info in available_models())
    key = (float(lat), float(lon), float(height_m), float(step), tuple(id(m) for _, m in models))
    kept = _KEPT.get(key)
    if kept is not None:
        return kept[1]
    out = []
    for name, m in models:
        years = np.arange(m.start, m.end, step, dtype=float)
        if years.size:
            out.append(
                declination_history(lat=lat, lon=lon, years=years, height_m=height_m, model=name)
            )
    if len(_KEPT) >= _KEEP:
        _KEPT.pop(next(iter(_KEPT)))
    # the models are kept with the result, so the ids in the key stay theirs
    _KEPT[key] = (models, tuple(out))
    return tuple(out)


_KEEP = 8
_KEPT: dict[tuple[Any, ...], tuple[Any, tuple[DeclinationHistory, ...]]] = {}
