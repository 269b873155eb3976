"""When was this line run? Dates at which the field's declination matches the needle's.

The record-to-found fit (:func:`geo.survey.fit_document`) gives the empirical declination of
a magnetic record: the angle that turns its needle bearings onto the found corners' true
directions. Every installed field model gives D at the place over its interval
(:func:`geo.field_history.model_histories`, sampled every 0.1 year). The dates whose D agrees
with the empirical declination within the combined uncertainty

    sigma = sqrt(sigma_fit^2 + sigma_model^2)

(sigma_fit the fit's standard error of the rotation; sigma_model the model's published 1-sigma
declination uncertainty where it has one, else the stated ``STATED_SIGMA_DEG``) form the
date ranges of the estimate, per model. Agreement is ``|D(t) - D_empirical| <= sigma`` (one
sigma). The place is the point of beginning (D changes by thousandths of a degree across a
figure of a few hundred metres).

What it cannot know: the models leave out the crustal field, which moves the needle at a
place by tenths of a degree and near iron ore by degrees; a compass with an adjusted vernier,
or a surveyor who set off a declination, read a different north. The ranges are evidence for
the examiner, not a date.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import InputError

if TYPE_CHECKING:
    from .field_history import DeclinationHistory
    from .north import DocumentConversion
    from .survey import SurveyFit

__all__ = ["STATED_SIGMA_DEG", "DateRange", "SurveyDateEstimate", "estimate_survey_date"]

#: 1-sigma declination uncertainty stated for a model that publishes none (IGRF-14, gufm1),
#: degrees: the main-field models' own error at mid-latitudes is about a tenth of a degree
#: (common practice); the crustal field at a place is not in it (see the module notes).
STATED_SIGMA_DEG = 0.15
#: Sampling of each model's interval (years).
STEP_YEARS = 0.1


@dataclass(frozen=True)
class DateRange:
    """Decimal years ``start``..``end`` (sampled every 0.1 year) when ``model``'s D matches;
    ``at_model_start``/``at_model_end``: the range reaches the end of the model's interval
    (the match may continue beyond what the model covers)."""

    model: str
    start: float
    end: float
    at_model_start: bool
    at_model_end: bool

    @property
    def text(self) -> str:
        """``1788–1797`` (calendar years touched); ``…`` marks a model's interval edge."""
        a, b = math.floor(self.start), math.floor(self.end)
        left = "…" if self.at_model_start else ""
        right = "…" if self.at_model_end else ""
        span = f"{a}" if a == b else f"{a}–{b}"
        return f"{left}{span}{right}"


@dataclass(frozen=True)
class SurveyDateEstimate:
    """The ranges of every installed model, with what was compared (degrees)."""

    empirical_deg: float
    fit_sigma_deg: float | None
    stated_sigma_deg: float
    lat: float
    lon: float
    ranges: tuple[DateRange, ...]
    models: tuple[tuple[str, float, float], ...]
    notes: tuple[str, ...]

    @property
    def band_deg(self) -> float:
        """The agreement band for a model with no published sigma: sqrt(fit^2 + stated^2)."""
        return math.hypot(self.fit_sigma_deg or 0.0, self.stated_sigma_deg)

    @property
    def sentence(self) -> str:
        """``the needle's declination matches the field of 1788–1797 (gufm1)``."""
        if not self.ranges:
            covered = ", ".join(f"{m} {a:.0f}–{b:.0f}" for m, a, b in self.models)
            return (
                "the needle's declination matches the field of no date the installed models "
                f"cover ({covered})"
            )
        parts = ", ".join(f"{r.text} ({r.model})" for r in self.ranges)
        return f"the needle's declination matches the field of {parts}"

    def as_dict(self) -> dict[str, Any]:
        """The ``survey_date`` object of ``lodeline fit --json``."""
        return {
            "empirical_declination_deg": self.empirical_deg,
            "fit_sigma_deg": self.fit_sigma_deg,
            "stated_model_sigma_deg": self.stated_sigma_deg,
            "lat": self.lat,
            "lon": self.lon,
            "ranges": [
                {
                    "model": r.model,
                    "start_year": r.start,
                    "end_year": r.end,
                    "at_model_start": r.at_model_start,
                    "at_model_end": r.at_model_end,
                    "text": r.text,
                }
                for r in self.ranges
            ],
            "models": [{"model": m, "start": a, "end": b} for m, a, b in self.models],
            "sentence": self.sentence,
            "notes": list(self.notes),
        }


def _ranges(h: DeclinationHistory, empirical: float, fit_sigma: float) -> list[DateRange]:
    model_sigma = np.where(np.isfinite(h.sigma_deg), h.sigma_deg, STATED_SIGMA_DEG)
    sigma = np.sqrt(fit_sigma**2 + model_sigma**2)
    diff = (h.declination_deg - empirical + 180.0) % 360.0 - 180.0
    ok = np.abs(diff) <= sigma
    out = []
    edges = np.flatnonzero(np.diff(np.concatenate([[0], ok.astype(int), [0]])))
    for a, b in zip(edges[::2], edges[1::2] - 1, strict=True):
        out.append(
            DateRange(
                model=h.model[0],
                start=float(h.years[a]),
                end=float(h.years[b]),
                at_model_start=bool(a == 0),
                at_model_end=bool(b == h.years.size - 1),
            )
        )
    return out


def estimate_survey_date(
    conv: DocumentConversion, fit: SurveyFit, *, sigma_deg: float | None = None
) -> SurveyDateEstimate:
    """The survey-date estimate of a magnetic record from its fit (see the module notes).

    ``sigma_deg`` replaces the fit's standard error of the rotation (degrees). Raises
    :class:`InputError` for a record that is not magnetic or a fit without an empirical
    declination.
    """
    from .field_history import model_histories

    if fit.empirical_declination_deg is None:
        raise InputError(
            f"a {fit.reference} record has no needle: no survey date to estimate",
            file=conv.file,
            field="record.reference",
        )
    notes: list[str] = []
    fit_sigma = sigma_deg if sigma_deg is not None else fit.rotation_sigma_deg
    if fit_sigma is None:
        fit_sigma = 0.0
        notes.append(
            "the fit has no redundancy (two found stations): only the model's uncertainty is "
            "counted; a third found corner gives the fit's own"
        )
    elif not (math.isfinite(fit_sigma) and fit_sigma >= 0):
        raise InputError(f"sigma {fit_sigma!r} must be 0 or more degrees", field="--date-sigma")
    p0 = conv.stations[0]
    histories = model_histories(lat=p0.lat, lon=p0.lon, height_m=conv.height_m, step=STEP_YEARS)
    ranges: list[DateRange] = []
    models = []
    for h in histories:
        models.append((h.model[0], float(h.years[0]), float(h.years[-1]) + STEP_YEARS))
        ranges += _ranges(h, fit.empirical_declination_deg, fit_sigma)
    notes.append(
        f"models without a published declination uncertainty counted at "
        f"{STATED_SIGMA_DEG:.2f} deg (1 sigma); the crustal field at the place is in none of them"
    )
    return SurveyDateEstimate(
        empirical_deg=fit.empirical_declination_deg,
        fit_sigma_deg=None if fit_sigma == 0.0 and sigma_deg is None else fit_sigma,
        stated_sigma_deg=STATED_SIGMA_DEG,
        lat=p0.lat,
        lon=p0.lon,
        ranges=tuple(sorted(ranges, key=lambda r: (r.start, r.model))),
        models=tuple(models),
        notes=tuple(notes),
    )
