"""Structured notes: every assumption and caveat an output states, with a stable code.

A note is ``Note(code, message)``; the JSON outputs carry ``notes: [{code, message}]``, the
text outputs and the report one line per note. The codes are part of the interface (README,
"Notes"): a code keeps its meaning once published; the message may be reworded.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["CODES", "Note", "messages"]

#: Every code an output may carry, and what it says (README, "Notes").
CODES: dict[str, str] = {
    "height_assumed": "the place gives no height_m: 0 m above the ellipsoid was assumed",
    "foot_assumed": "the document names no foot: the foot of its date was assumed",
    "forecast_field": "the field at a date is a forecast of the model, not a measurement",
    "blended_models": "the field is a blend of two models across their hand-over",
    "models_differ": "the record and target dates use different models",
    "record_declination_unknown": "no model covers the record date and none is stated",
    "angles_balanced": "the figure's azimuths are carried with the balanced angles",
    "angles_not_balanced": "angles are given but give no angular misclosure",
    "open_traverse": "an open traverse has no misclosure, adjustment or area",
    "no_area": "the figure has no area (its courses cross, or too few enclose nothing)",
    "declination_sigma_unknown": "no uncertainty of the declination is published or stated",
    "closure_remark": "a remark on how the closure was made (calls solved, found corners)",
}


@dataclass(frozen=True)
class Note:
    """One assumption or caveat: ``code`` (a key of :data:`CODES`) and its ``message``."""

    code: str
    message: str

    def __post_init__(self) -> None:
        if self.code not in CODES:
            raise ValueError(f"unknown note code {self.code!r}")

    def as_dict(self) -> dict[str, str]:
        """``{"code": ..., "message": ...}``."""
        return {"code": self.code, "message": self.message}


def messages(notes: tuple[Note, ...] | list[Note]) -> tuple[str, ...]:
    """The messages of ``notes``, in order, each once."""
    return tuple(dict.fromkeys(n.message for n in notes))
