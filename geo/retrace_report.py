"""The report's retracement sections: corners and their status, the stakeout list, the
survey-date estimate and the declination history at the point of beginning (an SVG).

:func:`retracement_blocks` returns report blocks (:mod:`geo.report`) built from
:func:`geo.retrace.restore_corners`, :func:`geo.stakeout.stakeout_list`,
:func:`geo.survey_date.estimate_survey_date` and :func:`geo.field_history.declination_history`;
:func:`declination_history_svg` draws the history: D (degrees, east positive) against the
decimal year, the record and target dates as vertical lines, the fit's empirical declination
as a horizontal line with its band (the sigma of the estimate).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np

__all__ = ["declination_history_svg", "retracement_blocks"]

#: Plot area of the history figure, SVG user units.
_W, _H = 620.0, 260.0


def _nice(lo: float, hi: float, count: int = 6) -> list[float]:
    from .report import _nice_step

    step = _nice_step((hi - lo) / count)
    first = math.ceil(lo / step) * step
    return [first + k * step for k in range(int((hi - first) / step + 1e-9) + 1)]


def declination_history_svg(
    years: Sequence[float],
    declination_deg: Sequence[float],
    *,
    record_year: float | None = None,
    target_year: float | None = None,
    empirical_deg: float | None = None,
    band_deg: float | None = None,
    title: str = "Declination at the point of beginning",
) -> str:
    """The history plot as an SVG element (NaN values leave gaps in the line)."""
    from .report import _Svg

    t = np.asarray(years, dtype=float)
    d = np.asarray(declination_deg, dtype=float)
    ok = np.isfinite(d)
    values = list(d[ok])
    if empirical_deg is not None:
        values += [empirical_deg - (band_deg or 0.0), empirical_deg + (band_deg or 0.0)]
    lo, hi = (min(values), max(values)) if values else (-1.0, 1.0)
    pad = max(0.5, 0.08 * (hi - lo))
    lo, hi = lo - pad, hi + pad
    t0, t1 = float(t[0]), float(t[-1])
    t1 = t1 if t1 > t0 else t0 + 1.0

    def x(year: float) -> float:
        return (year - t0) / (t1 - t0) * _W

    def y(deg: float) -> float:
        return _H - (deg - lo) / (hi - lo) * _H

    svg = _Svg()
    svg.line(0, _H, _W, _H, stroke="#000", stroke_width=1.0)
    svg.line(0, 0, 0, _H, stroke="#000", stroke_width=1.0)
    for v in _nice(lo, hi):
        svg.line(-4, y(v), _W, y(v), stroke="#ccc", stroke_width=0.5)
        svg.text(-7, y(v) + 4, f"{v:+g}°", size=11, anchor="end")
    for year in _nice(t0, t1, 8):
        svg.line(x(year), _H, x(year), _H + 4, stroke="#000", stroke_width=1.0)
        svg.text(x(year), _H + 17, f"{year:.0f}", size=11, anchor="middle")
    if empirical_deg is not None:
        if band_deg:
            top, bottom = y(empirical_deg + band_deg), y(empirical_deg - band_deg)
            svg.polygon(
                [(0, top), (_W, top), (_W, bottom), (0, bottom)], fill="#f3d9a4", stroke="none"
            )
        svg.line(0, y(empirical_deg), _W, y(empirical_deg), stroke="#b06b00", stroke_width=1.2)
        svg.text(_W - 2, y(empirical_deg) - 5, "needle (fit)", size=11, anchor="end")
    run: list[tuple[float, float]] = []
    for k in range(t.size + 1):
        if k < t.size and ok[k]:
            run.append((x(float(t[k])), y(float(d[k]))))
        elif run:
            svg.polyline(run, fill="none", stroke="#1f4e9c", stroke_width=1.6)
            run = []
    for year, label in ((record_year, "record"), (target_year, "target")):
        if year is not None and t0 <= year <= t1:
            svg.line(
                x(year), 0, x(year), _H, stroke="#555", stroke_width=1.0, stroke_dasharray="4 3"
            )
            svg.text(x(year) + 3, 12, label, size=11)
    svg.text(_W / 2, _H + 34, "year", size=11, anchor="middle")
    svg.text(0, -10, "D (east positive)", size=11)
    return svg.render(name="declination-history", title=title, margin=10.0)


def _corner_table(restoration: Any) -> Any:
    from .report import Table

    rows = tuple(
        (
            str(c.index),
            c.status_text,
            f"{c.easting:,.3f}",
            f"{c.northing:,.3f}",
            f"{c.lat:.7f}, {c.lon:.7f}",
            c.description or "–",
        )
        for c in restoration.corners
    )
    return Table(
        ("corner", "status", "easting", "northing", "latitude, longitude", "corner is"),
        rows,
        right=frozenset({0, 2, 3}),
        small=True,
        caption=f"Grid {restoration.crs}; restoration by {restoration.method}.",
    )


def _stakeout_blocks(conv: Any, restoration: Any) -> list[Any]:
    from .report import Paragraph, Table
    from .stakeout import stakeout_list

    sl = stakeout_list(conv, restoration)
    if not sl.lines:
        return [Paragraph("No corner to set: every corner is found or held.")]
    when = sl.target_date.isoformat() if sl.target_date else f"{sl.target_year:.2f}"
    rows = tuple(
        (
            str(ln.start),
            str(ln.target),
            ln.magnetic_bearing or "–",
            ln.true_bearing,
            ln.grid_bearing,
            f"{ln.distance_record:.2f}",
            f"{ln.distance_m:.2f}",
        )
        for ln in sl.lines
    )
    table = Table(
        ("from", "to", f"magnetic {when}", "true", "grid", sl.unit_label, "m"),
        rows,
        right=frozenset({0, 1, 5, 6}),
        caption=f"Lines from the nearest found corner; magnetic north of {when} "
        f"({sl.target_model}); ground distances.",
    )
    return [table, *(Paragraph(ln.reading[0].upper() + ln.reading[1:] + ".") for ln in sl.lines)]


def _date_blocks(conv: Any, fit: Any) -> list[Any]:
    from .field_history import declination_history, history_years
    from .models import available_models, load_model
    from .report import Facts, Figure
    from .survey_date import estimate_survey_date

    out: list[Any] = []
    empirical = band = None
    if fit is not None and fit.empirical_declination_deg is not None:
        est = estimate_survey_date(conv, fit)
        empirical = est.empirical_deg
        band = est.band_deg
        out.append(
            Facts((("when was the line run", est.sentence), *(("note", n) for n in est.notes)))
        )
    starts = [load_model(m).start for m in available_models()]
    years = history_years(max(1590.0, min(starts)), 2030.0, 1.0)
    p0 = conv.stations[0]
    hist = declination_history(lat=p0.lat, lon=p0.lon, years=years, height_m=conv.height_m)
    svg = declination_history_svg(
        hist.years,
        hist.declination_deg,
        record_year=conv.record_year,
        target_year=conv.target_year,
        empirical_deg=empirical,
        band_deg=band,
    )
    caption = (
        f"Declination at the point of beginning, {years[0]:.0f}–2030, from the models 'auto' "
        "chooses (gaps: no installed model); dashed: the record and target dates"
        + ("; band: the fit's empirical declination ± the estimate's sigma." if band else ".")
    )
    out.append(Figure(svg=svg, caption=caption, name="declination-history"))
    return out


def _gap_blocks(conv: Any) -> list[Any]:
    from .report import Table
    from .retrace import found_gaps

    gaps = found_gaps(conv)
    if not gaps:
        return []
    rows = tuple(
        (
            str(g.index),
            f"{g.gap_m:.3f}",
            f"{g.gap_record:.3f}",
            f"{g.east_m:+.3f}",
            f"{g.north_m:+.3f}",
            g.bearing or "–",
        )
        for g in gaps
    )
    return [
        Table(
            ("station", "gap m", f"gap {gaps[0].unit}", "east m", "north m", "toward (grid)"),
            rows,
            right=frozenset({0, 1, 2, 3, 4}),
            caption="Found minus marched position of every found station (the record's "
            "courses as converted, on the grid).",
        )
    ]


def retracement_blocks(conv: Any, fit: Any) -> list[Any]:
    """The report's blocks for corners, stakeout, survey date and declination history."""
    from .report import Heading, Paragraph
    from .retrace import restore_corners

    out: list[Any] = [Heading("Corners found, restored and to set")]
    if not any(c.found is not None for c in conv.courses):
        out.append(
            Paragraph(
                "No corner is marked found (a course's found key): nothing to restore or stake "
                "out from."
            )
        )
        out.append(Heading("When was the line run; the declination at the place"))
        return out + _date_blocks(conv, fit)
    restoration = restore_corners(
        conv, method="proportion", fit_rotation_deg=None if fit is None else fit.rotation_deg
    )
    out.append(_corner_table(restoration))
    out += _gap_blocks(conv)
    for r in restoration.runs:
        ratio = f"1:{r.precision:,.0f}" if r.precision else "closes exactly"
        out.append(
            Paragraph(
                f"Run {r.start}–{r.end}: record {r.record_m:,.3f} m, found {r.measured_m:,.3f} m, "
                f"misclosure {r.misclosure_m:.3f} m ({ratio}); the record's misclosure is "
                "distributed along the run in proportion to the record lengths."
            )
        )
    out += [Paragraph(n) for n in restoration.notes]
    out.append(Heading("Stakeout", level=3))
    out += _stakeout_blocks(conv, restoration)
    out.append(Heading("When was the line run; the declination at the place"))
    out += _date_blocks(conv, fit)
    return out
