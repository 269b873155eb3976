"""``lodeline fit DOC``: the record-to-found fit, empirical declination and record-length factor.

Every figure comes from :func:`geo.survey.fit_document` (see its module docstring); this module
only formats. ``--json`` prints :meth:`geo.survey.SurveyFit.as_dict`. Nothing is written.
"""

from __future__ import annotations

import argparse
from typing import Any

HELP = "fit the record traverse to found monuments: rotation, scale, empirical declination"


def register(subparsers: Any) -> None:
    """Add the ``fit`` subcommand."""
    p = subparsers.add_parser(
        "fit",
        help=HELP,
        description=(
            "Least-squares similarity fit (rotation, scale, translation) of the record "
            "traverse onto the found positions of two or more stations; reports the residuals, "
            "the empirical declination at the record date beside the field model's, and the "
            "record-length factor."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    p.add_argument(
        "--no-scale", action="store_true", help="fit rotation and translation only (scale 1)"
    )
    from .stakeout import add_restore_option

    add_restore_option(p)
    p.add_argument(
        "--date-sigma",
        type=float,
        metavar="DEG",
        help="1-sigma of the empirical declination for the survey-date estimate, degrees "
        "(default: the fit's standard error of the rotation)",
    )
    from .common import add_json_options

    add_json_options(p)
    p.set_defaults(func=run)


def render(result: Any, title: str | None = None) -> str:
    """The human-readable fit of a :class:`geo.survey.SurveyFit`."""
    from .close import finish
    from .common import text_table as table

    lines: list[str] = []
    if title:
        lines.append(title)
    lines.append(
        f"rotation {result.rotation_deg:+.4f} deg (recorded azimuths onto grid azimuths, "
        "clockwise positive)"
    )
    if result.with_scale:
        lines.append(f"scale {result.scale:.6f} (found grid length / recorded length)")
    else:
        lines.append("scale fixed at 1 (--no-scale)")
    lines.append(
        f"grid convergence {result.convergence_deg:+.4f} deg, combined factor "
        f"{result.combined_factor:.8f} (mean found position)"
    )
    if result.empirical_declination_deg is not None:
        lines.append(
            f"empirical declination at the record date {result.empirical_declination_deg:+.4f} "
            "deg (east positive; rotation + convergence)"
        )
    else:
        lines.append(
            f"record north to true north {result.true_rotation_deg:+.4f} deg "
            f"(a {result.reference} record has no declination)"
        )
    if result.model_declination_deg is not None:
        lines.append(
            f"field model {result.model} at the record date {result.model_declination_deg:+.4f} deg"
        )
    elif result.reference == "magnetic":
        lines.append("field model: none covers the record date")
    if result.stated_declination_deg is not None:
        lines.append(f"declination stated in the document {result.stated_declination_deg:+.4f} deg")
    if result.record_length_factor is not None:
        lines.append(
            f"record-length factor {result.record_length_factor:.6f} "
            "(true ground length / recorded length)"
        )
    rows = [["station", "east residual m", "north residual m"]]
    for r in result.residuals:
        rows.append([str(r.index), f"{r.east_m:+.3f}", f"{r.north_m:+.3f}"])
    lines += table(rows, right={0, 1, 2})
    lines.append(f"RMS {result.rms_m:.3f} m")
    if result.rotation_sigma_deg is not None:
        lines.append(f"standard error of the rotation {result.rotation_sigma_deg:.4f} deg")
    return finish(lines, result.notes)


class FitReport:
    """The fit with the restored corners and the survey-date estimate (``--json`` object:
    the fit's keys plus ``restoration`` and ``survey_date``). ``restoration`` is the text
    saying why there is none when the stations are not on the grid."""

    def __init__(self, fit: Any, restoration: Any, survey_date: Any) -> None:
        self.fit = fit
        self.restoration = restoration
        self.survey_date = survey_date

    def as_dict(self) -> dict[str, Any]:
        """The ``lodeline fit --json`` object."""
        out = self.fit.as_dict()
        out["restoration"] = (
            self.restoration.as_dict() if not isinstance(self.restoration, str) else None
        )
        out["survey_date"] = None if self.survey_date is None else self.survey_date.as_dict()
        return out


def render_report(result: FitReport, title: str | None = None) -> str:
    """The fit, the survey-date estimate and the corners as text."""
    from .stakeout import corner_lines

    text = render(result.fit, title)
    body, caution = text.rstrip("\n").rsplit("\n", 1)
    extra = [""]
    sd = result.survey_date
    if sd is not None:
        sigma = "" if sd.fit_sigma_deg is None else f" ± {sd.fit_sigma_deg:.3f}"
        extra.append(
            f"survey date: {sd.sentence} (empirical declination {sd.empirical_deg:+.3f}{sigma} "
            "deg at the point of beginning)"
        )
        extra += [f"note: {n}" for n in sd.notes]
        extra.append("")
    if isinstance(result.restoration, str):  # why the corners cannot be restored
        extra.append(f"corners: {result.restoration}")
    else:
        extra += corner_lines(result.restoration)
        extra += [f"note: {n}" for n in result.restoration.notes]
    return body + "\n" + "\n".join(extra) + "\n" + caution + "\n"


def compute(conv: Any, *, with_scale: bool, restore: str, date_sigma: float | None) -> FitReport:
    """Fit, restore (geo.retrace) and estimate the survey date (geo.survey_date)."""
    from lodeline.geo.retrace import UNPLACED, placed, restore_corners
    from lodeline.geo.survey import fit_document

    fit = fit_document(conv, with_scale=with_scale)
    restoration = (
        restore_corners(conv, method=restore, fit_rotation_deg=fit.rotation_deg)
        if placed(conv)
        else UNPLACED
    )
    return FitReport(fit, restoration, survey_date_of(conv, fit, sigma_deg=date_sigma))


def survey_date_of(conv: Any, fit: Any, *, sigma_deg: float | None) -> Any:
    """The survey-date estimate (geo.survey_date) of a fit that found an empirical
    declination, else ``None`` (a true or grid record has none)."""
    from lodeline.geo.survey_date import estimate_survey_date

    if fit.empirical_declination_deg is None:
        return None
    return estimate_survey_date(conv, fit, sigma_deg=sigma_deg)


def run(args: argparse.Namespace) -> int:
    """Load, convert and fit the document; print the fit or its JSON object."""
    from .close import emit

    return emit(
        args,
        lambda conv: compute(
            conv,
            with_scale=not args.no_scale,
            restore=args.restore,
            date_sigma=args.date_sigma,
        ),
        render_report,
        allow_unknown_declination=True,
    )
