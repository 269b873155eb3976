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
    p.add_argument("--json", action="store_true", help="print one JSON object")
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
    return finish(lines, result.notes)


def run(args: argparse.Namespace) -> int:
    """Load, convert and fit the document; print the fit or its JSON object."""
    from geo.survey import fit_document

    from .close import emit

    return emit(
        args,
        lambda conv: fit_document(conv, with_scale=not args.no_scale),
        render,
        allow_unknown_declination=True,
    )
