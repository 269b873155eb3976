"""The stakeout list: from a corner the crew stands on, what to run to each corner to be set.

Input: a converted document (:func:`geo.north.convert_document`) and its restoration
(:func:`geo.retrace.restore_corners`). For every corner restored or record only, the line runs
from the nearest found (or held) corner (``origin="nearest"``) or from the previous corner in
order (``origin="previous"``; corner 0 of a closed figure follows the last).

Conventions (the forward march of :mod:`geo.north`, inverted)
    The grid azimuth is the direction of the grid chord from the start to the corner, degrees
    clockwise from grid north; the true azimuth is ``grid + gamma`` and the magnetic azimuth
    at the target date ``true - D_target``, gamma and D at the **starting** corner (as a course
    is converted with the values of its start); the ground distance is the grid distance
    divided by the combined factor at the starting corner. Marching the listed course forward
    as :mod:`geo.north` does lands on the corner. Distances are in metres and in the record's
    unit. The result is what a crew would run; a computed point is not a boundary.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

import numpy as np

from .errors import InputError

if TYPE_CHECKING:
    from .north import DocumentConversion
    from .retrace import Corner, Restoration

__all__ = ["COLUMNS", "ORIGINS", "StakeoutLine", "StakeoutList", "stakeout_list"]

Origin = Literal["nearest", "previous"]
ORIGINS: tuple[str, ...] = ("nearest", "previous")
_MINUTE = 1.0 / 60.0


@dataclass(frozen=True)
class StakeoutLine:
    """One line to run: from corner ``start`` to corner ``target`` (see the module docstring).

    Azimuths in degrees clockwise from each north; ``magnetic_azimuth_deg`` at the list's
    target date (``None`` where no model covers it). ``distance_m`` ground metres,
    ``distance_record`` the same in the list's ``unit``. ``easting``/``northing`` of the
    target in the grid CRS unit, ``lat``/``lon`` WGS84. ``reading``: the line as a crew calls it.
    """

    start: int
    start_status: str
    target: int
    target_status: str
    description: str | None
    magnetic_azimuth_deg: float | None
    magnetic_bearing: str | None
    true_azimuth_deg: float
    true_bearing: str
    grid_azimuth_deg: float
    grid_bearing: str
    distance_m: float
    distance_record: float
    easting: float
    northing: float
    lat: float
    lon: float
    reading: str

    def as_dict(self) -> dict[str, Any]:
        """Plain JSON values, keyed by :data:`COLUMNS` (also the CSV columns)."""
        values = (
            self.start,
            self.start_status,
            self.target,
            self.target_status,
            self.description,
            self.magnetic_azimuth_deg,
            self.magnetic_bearing,
            self.true_azimuth_deg,
            self.true_bearing,
            self.grid_azimuth_deg,
            self.grid_bearing,
            self.distance_m,
            self.distance_record,
            self.easting,
            self.northing,
            self.lat,
            self.lon,
            self.reading,
        )
        return dict(zip(COLUMNS, values, strict=True))


#: Keys of a stakeout line in JSON and the CSV header, in order.
COLUMNS: tuple[str, ...] = (
    "from",
    "from_status",
    "to",
    "to_status",
    "description",
    "magnetic_target_azimuth_deg",
    "magnetic_target_bearing",
    "true_azimuth_deg",
    "true_bearing",
    "grid_azimuth_deg",
    "grid_bearing",
    "distance_m",
    "distance_record",
    "easting",
    "northing",
    "lat",
    "lon",
    "reading",
)


@dataclass(frozen=True)
class StakeoutList:
    """The lines to run, with the date and model of the magnetic bearings and the units."""

    file: str | None
    origin: str
    method: str
    crs: str
    unit: str
    unit_label: str
    target_date: _dt.date | None
    target_year: float
    target_model: str
    lines: tuple[StakeoutLine, ...]
    notes: tuple[str, ...]

    def as_dict(self) -> dict[str, Any]:
        """The ``lodeline stakeout --json`` object."""
        return {
            "file": self.file,
            "origin": self.origin,
            "restore": self.method,
            "crs": self.crs,
            "unit": self.unit,
            "target_date": self.target_date.isoformat() if self.target_date else self.target_year,
            "target_model": self.target_model,
            "lines": [ln.as_dict() for ln in self.lines],
            "notes": list(self.notes),
        }

    def csv_text(self) -> str:
        """One row per line, the columns of :meth:`StakeoutLine.as_dict` (header first)."""
        import csv
        import io

        buf = io.StringIO()
        writer = csv.writer(buf, lineterminator="\n")
        writer.writerow(COLUMNS)
        for line in self.lines:
            row = line.as_dict()
            writer.writerow(["" if row[k] is None else _csv_cell(row[k]) for k in COLUMNS])
        return buf.getvalue()


def _csv_cell(value: Any) -> str:
    return repr(value) if isinstance(value, float) else str(value)


def _start_of(corner: Corner, corners: tuple[Corner, ...], origin: str, closed: bool) -> Corner:
    if origin == "previous":
        i = corner.index - 1
        if i < 0:
            i = len(corners) - 1 if closed else 0
        return corners[i]
    held = [c for c in corners if c.status in ("found", "held")]
    if not held:  # nothing found: run from the point of beginning
        return corners[0]
    return min(held, key=lambda c: math.hypot(c.east_m - corner.east_m, c.north_m - corner.north_m))


def stakeout_list(
    conv: DocumentConversion, restoration: Restoration, *, origin: Origin = "nearest"
) -> StakeoutList:
    """The stakeout list of a restoration (module docstring); ``origin`` nearest or previous.

    Raises :class:`InputError` for an unknown ``origin``.
    """
    from . import grid as _grid
    from .retrace import record_unit
    from .units import UNIT_LABELS

    if origin not in ORIGINS:
        raise InputError(f"unknown origin {origin!r}: use nearest or previous", field="--from")
    corners = restoration.corners
    pairs = [(_start_of(c, corners, origin, restoration.closed), c) for c in restoration.restored]
    pairs = [(s, c) for s, c in pairs if s.index != c.index]
    unit, per = record_unit(conv)
    label = UNIT_LABELS.get(unit, unit)
    notes: list[str] = []
    lines: list[StakeoutLine] = []
    if pairs:
        lat = np.array([s.lat for s, _ in pairs])
        lon = np.array([s.lon for s, _ in pairs])
        gf = _grid.grid_factors(conv.crs, lat=lat, lon=lon, height_m=conv.height_m)
        gamma = np.atleast_1d(np.asarray(gf.convergence_deg, dtype=float))
        cf = np.atleast_1d(np.asarray(gf.combined_factor, dtype=float))
        dec = _target_declination(conv, lat, lon, notes)
        for k, (s, c) in enumerate(pairs):
            lines.append(_line(s, c, gamma[k], cf[k], None if dec is None else dec[k], per, label))
    else:
        notes.append("no corner to set: every corner is found or held")
    return StakeoutList(
        file=conv.file,
        origin=origin,
        method=restoration.method,
        crs=conv.crs,
        unit=unit,
        unit_label=label,
        target_date=conv.target_date,
        target_year=conv.target_year,
        target_model=conv.target_model,
        lines=tuple(lines),
        notes=tuple(notes),
    )


def _target_declination(
    conv: DocumentConversion, lat: np.ndarray, lon: np.ndarray, notes: list[str]
) -> np.ndarray | None:
    from .errors import ModelRangeError
    from .magnetic import field_at

    try:
        fv = field_at(
            lat=lat, lon=lon, year=conv.target_year, height_m=conv.height_m, model=conv.target_model
        )
    except ModelRangeError as err:
        notes.append(f"no magnetic bearings: {err.message}")
        return None
    return np.atleast_1d(np.asarray(fv.declination_deg, dtype=float))


def _line(
    s: Corner,
    c: Corner,
    gamma: float,
    cf: float,
    dec: float | None,
    per: float,
    label: str,
) -> StakeoutLine:
    from .bearings import format_bearing

    de, dn = c.east_m - s.east_m, c.north_m - s.north_m
    grid_az = math.degrees(math.atan2(de, dn)) % 360.0
    true_az = (grid_az + float(gamma)) % 360.0
    mag_az = None if dec is None else (true_az - float(dec)) % 360.0
    ground = math.hypot(de, dn) / float(cf)
    mag_text = None if mag_az is None else format_bearing(mag_az, precision=_MINUTE)
    what = c.description or "corner"
    what = _article_off(what)
    what = f"a restored {what}" if c.status == "restored" else f"a {what} (by the record only)"
    said = mag_text if mag_text is not None else format_bearing(true_az, precision=_MINUTE)
    north = "magnetic" if mag_text is not None else "true"
    reading = (
        f"from corner {s.index}, {said} ({north}), {ground / per:.2f} {label} "
        f"({ground:.2f} m) to corner {c.index}, {what}"
    )
    return StakeoutLine(
        start=s.index,
        start_status=s.status,
        target=c.index,
        target_status=c.status,
        description=c.description,
        magnetic_azimuth_deg=mag_az,
        magnetic_bearing=mag_text,
        true_azimuth_deg=true_az,
        true_bearing=format_bearing(true_az, precision=_MINUTE),
        grid_azimuth_deg=grid_az,
        grid_bearing=format_bearing(grid_az, precision=_MINUTE),
        distance_m=ground,
        distance_record=ground / per,
        easting=c.easting,
        northing=c.northing,
        lat=c.lat,
        lon=c.lon,
        reading=reading,
    )


def _article_off(words: str) -> str:
    """ "a stone pile" -> "stone pile" (the reading supplies its own article)."""
    low = words.casefold()
    for lead in ("a ", "an ", "the "):
        if low.startswith(lead):
            return words[len(lead) :]
    return words
