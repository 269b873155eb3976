"""DXF for drafting the plat: grid coordinates in the CRS's unit, one layer per kind of line.

Public API
----------
``dxf_text(conv, pos) -> str``
    A DXF drawing (AutoCAD 2010 format, UTF-8 text) written with ezdxf. Coordinates are the
    grid easting (x) and northing (y) of :func:`geo.export.positions`, in the CRS's unit
    (``$INSUNITS`` says which: metres, international feet or US survey feet; other units are
    left unitless). Layers (names of this program's own, :data:`LAYERS`):

    ``lodeline-record``    the record figure: the calls marched on the grid, unadjusted
                           (open at the misclosure of a closed traverse);
    ``lodeline-adjusted``  the adjusted figure (closed traverses adjusted by compass or
                           transit rule only), a closed polyline;
    ``lodeline-stations``  a point at every station with its name (:mod:`geo.marks`);
    ``lodeline-plots``     a point at every intermediate (plot) point with its name;
    ``lodeline-events``    a point at every event along a line (``[[course.at]]``);
    ``lodeline-corners``   with found corners: each corner where the retracement puts it
                           (found, held or restored), named with its status;
    ``lodeline-courses``   along each course, at its middle and turned with it: the bearing of
                           the record's reference and the distance as written (the record's
                           precision) above the line, the grid bearing below.

The stations, plots and course texts are placed on the exported (adjusted) figure, the one the
GeoJSON carries.
"""

from __future__ import annotations

import io
import math
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from .export import Position, Positions
    from .north import DocumentConversion

__all__ = ["LAYERS", "dxf_text", "insunits"]

#: Layer name -> AutoCAD colour index.
LAYERS = {
    "lodeline-record": 8,
    "lodeline-adjusted": 7,
    "lodeline-stations": 1,
    "lodeline-plots": 3,
    "lodeline-events": 6,
    "lodeline-corners": 2,
    "lodeline-courses": 5,
}

#: ``$INSUNITS`` codes of the DXF reference: 6 metres, 2 feet, 21 US survey feet.
_UNITS = ((1.0, 6), (0.3048, 2), (1200.0 / 3937.0, 21))


def insunits(unit_m: float) -> int:
    """The DXF ``$INSUNITS`` code of a CRS unit of ``unit_m`` metres (0: unitless)."""
    for metres, code in _UNITS:
        if math.isclose(unit_m, metres, rel_tol=1e-12):
            return code
    return 0


def _xy(p: Position) -> tuple[float, float]:
    return (p.easting, p.northing)


def _text_height(pos: Positions) -> float:
    """A text height of about 1/80 of the figure's larger extent (CRS units)."""
    es = [p.easting for p in pos.stations]
    ns = [p.northing for p in pos.stations]
    extent = max(max(es) - min(es), max(ns) - min(ns))
    return max(extent / 80.0, 0.01)


def _reading_angle(grid_azimuth_deg: float) -> float:
    """DXF text rotation (degrees counter-clockwise from the x axis) along a course of the
    given grid azimuth, turned so the text never reads upside down."""
    angle = (90.0 - grid_azimuth_deg) % 360.0
    if 90.0 < angle <= 270.0:
        angle -= 180.0
    return angle


def _course_texts(msp: object, conv: DocumentConversion, pos: Positions, h: float) -> None:
    from ezdxf.enums import TextEntityAlignment

    layer = "lodeline-courses"
    for i, c in enumerate(conv.courses):
        a, b = pos.stations[i], pos.stations[i + 1]
        mid = ((a.easting + b.easting) / 2.0, (a.northing + b.northing) / 2.0)
        rot = _reading_angle(pos.grid_azimuth_deg[i])
        record = getattr(c.bearing, conv.reference if conv.reference != "magnetic"
                         else "magnetic_record")  # fmt: skip
        upper = f"{record} {c.length_value:.6g} {c.length_unit}"
        lower = f"grid {c.bearing.grid}"
        for text, align in ((upper, TextEntityAlignment.BOTTOM_CENTER),
                            (lower, TextEntityAlignment.TOP_CENTER)):  # fmt: skip
            t = msp.add_text(text, height=h, rotation=rot, dxfattribs={"layer": layer})  # type: ignore[attr-defined]
            off = h * 0.4 if align is TextEntityAlignment.BOTTOM_CENTER else -h * 0.4
            normal = math.radians(rot + 90.0)
            t.set_placement(
                (mid[0] + off * math.cos(normal), mid[1] + off * math.sin(normal)), align=align
            )


def dxf_text(conv: DocumentConversion, pos: Positions) -> str:
    """The DXF drawing of a traverse (see the module docstring)."""
    import ezdxf

    from .export import positions
    from .marks import marks

    drawing = ezdxf.new("R2010")
    drawing.header["$INSUNITS"] = insunits(pos.grid_unit_m)
    for name, colour in LAYERS.items():
        drawing.layers.add(name, color=colour)
    msp = drawing.modelspace()
    record = pos if pos.adjustment == "none" else positions(conv, adjust="none")
    msp.add_lwpolyline([_xy(p) for p in record.stations], dxfattribs={"layer": "lodeline-record"})
    if pos.closed and pos.adjustment != "none":
        msp.add_lwpolyline(
            [_xy(p) for p in pos.stations[:-1]], close=True,
            dxfattribs={"layer": "lodeline-adjusted"},
        )  # fmt: skip
    h = _text_height(pos)
    for m in marks(conv, pos):
        layer = f"lodeline-{m.kind}s"  # stations, plots, events, corners
        msp.add_point((m.easting, m.northing), dxfattribs={"layer": layer})
        label = msp.add_text(m.label, height=h * 0.8, dxfattribs={"layer": layer})
        label.set_placement((m.easting + h * 0.5, m.northing + h * 0.5))
    _course_texts(msp, conv, pos, h)
    out = io.StringIO()
    drawing.write(out)
    return out.getvalue()
