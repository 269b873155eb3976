"""What the desk's retracement sheet shows: corners, stakeout lines, the survey date and the
declination history, as text and plot series (formatting only; the figures come from
geo.retrace, geo.stakeout, geo.survey_date and geo.field_history)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from lodeline.geo.errors import LodelineError


@dataclass
class RetraceView:
    """Lines of text for the sheet and the series of its plot."""

    corners: list[str] = field(default_factory=list)
    stakeout: list[str] = field(default_factory=list)
    survey_date: list[str] = field(default_factory=list)
    years: np.ndarray | None = None
    declination_deg: np.ndarray | None = None
    record_year: float | None = None
    target_year: float | None = None
    empirical_deg: float | None = None
    band_deg: float | None = None


def survey_date_line(conv: Any, fit: Any) -> str | None:
    """``needle matches the field of 1906–1912 (igrf14)`` for a magnetic record's fit."""
    from lodeline.geo.survey_date import estimate_survey_date

    if fit is None or fit.empirical_declination_deg is None:
        return None
    est = estimate_survey_date(conv, fit)
    return est.sentence.replace("the needle's declination", "needle", 1)


def build_view(conv: Any, *, method: str = "proportion", origin: str = "nearest") -> RetraceView:
    """Everything the sheet shows for a converted document (errors become text lines)."""
    from lodeline.geo.field_history import declination_history, history_years
    from lodeline.geo.models import available_models, load_model
    from lodeline.geo.retrace import restore_corners
    from lodeline.geo.stakeout import stakeout_list
    from lodeline.geo.survey import fit_document, found_count
    from lodeline.geo.survey_date import estimate_survey_date

    view = RetraceView(record_year=conv.record_year, target_year=conv.target_year)
    fit = None
    if found_count(conv) >= 2:
        try:
            fit = fit_document(conv)
        except LodelineError as err:
            view.survey_date.append(f"fit: {err}")
    try:
        res = restore_corners(
            conv, method=method, fit_rotation_deg=None if fit is None else fit.rotation_deg
        )
        sl = stakeout_list(conv, res, origin=origin)
    except LodelineError as err:
        view.corners.append(f"✗ {err}")
        res = sl = None
    if res is not None and sl is not None:
        view.corners.append(f"corners ({res.crs}), restored by {res.method}:")
        for c in res.corners:
            view.corners.append(
                f"  {c.index:>3}  {c.status_text:<28} {c.easting:,.2f} E  {c.northing:,.2f} N"
                f"  {c.description or ''}"
            )
        view.corners += [f"note: {n}" for n in res.notes]
        when = sl.target_date.isoformat() if sl.target_date else f"{sl.target_year:.2f}"
        view.stakeout.append(
            f"stakeout from the {sl.origin} corner (magnetic north of {when}, {sl.target_model}):"
        )
        for ln in sl.lines:
            view.stakeout.append(
                f"  {ln.start}→{ln.target}  magnetic {ln.magnetic_bearing or '–'}  true "
                f"{ln.true_bearing}  grid {ln.grid_bearing}  {ln.distance_record:.2f} "
                f"{sl.unit_label}  {ln.distance_m:.2f} m  at {ln.lat:.7f}, {ln.lon:.7f}"
            )
        view.stakeout += [f"  {ln.reading}" for ln in sl.lines]
        if not sl.lines:
            view.stakeout.append("  nothing to set")
        view.stakeout += [f"note: {n}" for n in sl.notes]
    if fit is not None and fit.empirical_declination_deg is not None:
        est = estimate_survey_date(conv, fit)
        view.survey_date.append(est.sentence)
        view.survey_date += [f"note: {n}" for n in est.notes]
        view.empirical_deg = est.empirical_deg
        view.band_deg = est.band_deg
    elif not view.survey_date:
        view.survey_date.append(
            "survey date: needs a magnetic record and two or more found corners"
        )
    start = max(1590.0, min(load_model(m).start for m in available_models()))
    p0 = conv.stations[0]
    hist = declination_history(
        lat=p0.lat, lon=p0.lon, years=history_years(start, 2030.0, 1.0), height_m=conv.height_m
    )
    view.years, view.declination_deg = hist.years, hist.declination_deg
    return view
