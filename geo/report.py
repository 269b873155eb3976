"""The printable retracement report: self-contained HTML (with inline SVG figures) or Markdown.

The report is built in two steps. :func:`collect_report` asks the core for every figure (the
north conversion of :mod:`geo.north`, the field vector at the point of beginning from
:mod:`geo.magnetic`, the closure, adjustment, area, local attraction, fit and error budget of
:mod:`geo.survey`) and arranges them as a list of neutral blocks (headings, facts, tables,
figures, cautions). :func:`render_html` and :func:`render_markdown` write those blocks; so the
two formats carry the same content, the Markdown one without the SVG figures. Nothing here
prints or writes files (``lodeline report`` does that).

Figures (HTML only), drawn as hand-written SVG:

- the north-reference diagram: true north straight up, grid north at the convergence gamma
  (clockwise from true north, ``grid = true - gamma``), magnetic north at D (east positive,
  ``true = magnetic + D``) at the record date and at the target date. Small angles would be
  invisible, so every ray is drawn at :func:`diagram_angle` of its true angle (larger than the
  true angle below 15 degrees, true above); the labels give the true values and the caption
  says so;
- the traverse sketch: the stations marched on the ground from the point of beginning along
  true azimuths (the plane of the closure figures), true north up, at a stated map scale
  (``1:N`` when the SVG is printed at its stated width), with a scale bar, a north arrow and the
  misclosure drawn to the same scale from the computed end back to the point of beginning.

Every user string (title, calls, notes, file names) is escaped: HTML entities in the HTML and
the SVG, Markdown and HTML specials in the Markdown.

Page layout (HTML): ``@page`` margins of 18 mm top and bottom and 20 mm left and right leave a
printable width of 170 mm on A4 (210 mm) and 175.9 mm on Letter (215.9 mm); figures are at
most :data:`FIGURE_WIDTH_MM` wide and tables and figures avoid page breaks inside them. The
paper size is the printer's (``auto``) unless ``paper`` names A4 or Letter.
"""

from __future__ import annotations

import datetime as _dt
import html
import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

from .cautions import CAUTIONS

__all__ = [
    "FIGURE_WIDTH_MM",
    "Block",
    "Facts",
    "Figure",
    "Heading",
    "Notice",
    "Paragraph",
    "Report",
    "Table",
    "build_report",
    "collect_report",
    "diagram_angle",
    "north_diagram_svg",
    "render_html",
    "render_markdown",
    "traverse_sketch_svg",
]

#: Width of every figure when printed, millimetres (fits A4 and Letter with 20 mm margins).
FIGURE_WIDTH_MM = 165.0
#: Printable width of the page body, millimetres (A4 210 mm less two 20 mm margins).
BODY_WIDTH_MM = 170.0

Paper = Literal["auto", "a4", "letter"]
_PAGE_SIZE = {"auto": "auto", "a4": "A4", "letter": "letter"}
_MINUTE = 1.0 / 60.0
_SECOND = 1.0 / 3600.0


# --------------------------------------------------------------------------------------------
# Blocks
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Heading:
    """A section heading (level 2 or 3; the title is level 1)."""

    text: str
    level: int = 2


@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text."""

    text: str


@dataclass(frozen=True)
class Facts:
    """Label/value pairs (a two-column table)."""

    items: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class Table:
    """A table: header texts, rows of cell texts, the indices of right-aligned columns."""

    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    right: frozenset[int] = frozenset()
    caption: str | None = None
    small: bool = False
    nowrap: frozenset[int] = frozenset()


@dataclass(frozen=True)
class Figure:
    """An SVG figure (HTML only) with its caption (both formats)."""

    svg: str
    caption: str
    name: str


@dataclass(frozen=True)
class Notice:
    """A boxed list of lines: ``kind`` is ``"caution"`` or ``"warning"``."""

    title: str
    lines: tuple[str, ...]
    kind: str = "warning"


Block = Heading | Paragraph | Facts | Table | Figure | Notice


@dataclass(frozen=True)
class Report:
    """A report ready to render: the title, the blocks, and the objects they were built from.

    ``conversion`` is the :class:`geo.north.DocumentConversion`; ``survey`` the closure result
    of :mod:`geo.survey` (or ``None`` when the closure could not be computed: ``survey_error``
    says why); ``generated`` is the date the report was made.
    """

    title: str
    blocks: tuple[Block, ...]
    conversion: Any
    survey: Any = None
    survey_error: str | None = None
    generated: _dt.date = field(default_factory=_dt.date.today)


# --------------------------------------------------------------------------------------------
# Small formatting helpers
# --------------------------------------------------------------------------------------------


def _signed_angle(deg: float | None, precision: float = _MINUTE) -> str:
    """``1°45′ W`` / ``0°12′ E`` for a signed angle (east/clockwise positive)."""
    from .bearings import format_declination

    if deg is None or not math.isfinite(deg):
        return "–"
    return format_declination(deg, precision=precision)


def _decimal(deg: float | None, digits: int = 4) -> str:
    if deg is None or not math.isfinite(deg):
        return "–"
    return f"{deg:+.{digits}f}°"


def _when(day: _dt.date | None, year: float | None) -> str:
    if day is not None:
        return day.isoformat()
    if year is not None:
        return f"{year:.3f} (decimal year)"
    return "none"


def _num(value: float | None, digits: int = 3, unit: str = "") -> str:
    if value is None or not math.isfinite(value):
        return "–"
    text = f"{value:,.{digits}f}"
    return f"{text} {unit}".rstrip()


def _trim(value: float, digits: int = 4) -> str:
    return f"{value:.{digits}f}".rstrip("0").rstrip(".")


def _unit_label(unit: str) -> str:
    from .units import UNIT_LABELS

    return UNIT_LABELS.get(unit, unit)


def _esc(text: str) -> str:
    """HTML/XML text and attribute escape (``< > & " '``); a text without any of them is
    returned as it is (most cells of a long report: numbers and bearings)."""
    text = str(text)
    return html.escape(text, quote=True) if _HTML_SPECIAL.search(text) else text


#: The characters :func:`html.escape` replaces (with ``quote=True``).
_HTML_SPECIAL = re.compile("[<>&\"']")


_MD_SPECIAL = re.compile(r"([\\`*_\[\]|~])")


def _md(text: str) -> str:
    """Escape a user string for GitHub-flavoured Markdown (specials and raw HTML)."""
    text = html.escape(str(text), quote=False)
    return " ".join(_MD_SPECIAL.sub(r"\\\1", text).split())


def _md_line(text: str) -> str:
    """A user string as a line of its own (a leading ``#``, ``-``, ``+``, ``>``... escaped)."""
    out = _md(text)
    return "\\" + out if out[:1] in "#+-=>" and out else out


# --------------------------------------------------------------------------------------------
# SVG
# --------------------------------------------------------------------------------------------


class _Svg:
    """A small SVG writer that keeps the extent of everything drawn (for a tight viewBox).

    Text extents are estimated from the number of characters (0.6 em each, 1 em high), which
    covers the sans-serif faces the report names.
    """

    def __init__(self) -> None:
        self.parts: list[str] = []
        self.xmin = math.inf
        self.ymin = math.inf
        self.xmax = -math.inf
        self.ymax = -math.inf

    def _extend(self, x: float, y: float) -> None:
        self.xmin = min(self.xmin, x)
        self.xmax = max(self.xmax, x)
        self.ymin = min(self.ymin, y)
        self.ymax = max(self.ymax, y)

    @staticmethod
    def _attrs(attrs: dict[str, Any]) -> str:
        out = []
        for key, value in attrs.items():
            if value is None:
                continue
            name = key.rstrip("_").replace("_", "-")
            if isinstance(value, float):
                value = repr(value) if key.startswith("data_") else f"{value:.3f}"
                value = value if key.startswith("data_") else value.rstrip("0").rstrip(".")
            out.append(f' {name}="{_esc(str(value))}"')
        return "".join(out)

    def line(self, x1: float, y1: float, x2: float, y2: float, **attrs: Any) -> None:
        self._extend(x1, y1)
        self._extend(x2, y2)
        a = {"x1": x1, "y1": y1, "x2": x2, "y2": y2, **attrs}
        self.parts.append(f"<line{self._attrs(a)}/>")

    def polyline(self, points: Sequence[tuple[float, float]], **attrs: Any) -> None:
        for x, y in points:
            self._extend(x, y)
        pts = " ".join(f"{x:.3f},{y:.3f}" for x, y in points)
        self.parts.append(f'<polyline points="{pts}"{self._attrs(attrs)}/>')

    def polygon(self, points: Sequence[tuple[float, float]], **attrs: Any) -> None:
        for x, y in points:
            self._extend(x, y)
        pts = " ".join(f"{x:.3f},{y:.3f}" for x, y in points)
        self.parts.append(f'<polygon points="{pts}"{self._attrs(attrs)}/>')

    def circle(self, cx: float, cy: float, r: float, **attrs: Any) -> None:
        self._extend(cx - r, cy - r)
        self._extend(cx + r, cy + r)
        self.parts.append(f"<circle{self._attrs({'cx': cx, 'cy': cy, 'r': r, **attrs})}/>")

    def arc(self, cx: float, cy: float, r: float, a0: float, a1: float, **attrs: Any) -> None:
        """An arc of radius r about (cx, cy) from azimuth a0 to a1 (degrees, clockwise from up)."""
        if abs(a1 - a0) < 1e-9:
            return
        steps = max(2, int(abs(a1 - a0) / 3.0) + 2)
        pts = []
        for k in range(steps + 1):
            a = math.radians(a0 + (a1 - a0) * k / steps)
            pts.append((cx + r * math.sin(a), cy - r * math.cos(a)))
        self.polyline(pts, fill="none", **attrs)

    def text(
        self,
        x: float,
        y: float,
        content: str,
        *,
        size: float = 12.0,
        anchor: str = "start",
        **attrs: Any,
    ) -> None:
        width = 0.6 * size * len(content)
        left = {"start": x, "middle": x - width / 2, "end": x - width}[anchor]
        self._extend(left, y - 0.8 * size)
        self._extend(left + width, y + 0.25 * size)
        a = {"x": x, "y": y, "font_size": size, "text_anchor": anchor, **attrs}
        self.parts.append(f"<text{self._attrs(a)}>{_esc(content)}</text>")

    def render(
        self,
        *,
        name: str,
        title: str,
        margin: float = 8.0,
        width: float | None = None,
        print_mm: float = FIGURE_WIDTH_MM,
        **root: Any,
    ) -> str:
        """The ``<svg>`` element, printed FIGURE_WIDTH_MM wide.

        The viewBox is the drawn extent plus ``margin``; with ``width`` it is that many user
        units wide, centred on x = 0 (a fixed scale on paper), widened only if the drawing
        does not fit.
        """
        x0, y0 = self.xmin - margin, self.ymin - margin
        w, h = self.xmax - self.xmin + 2 * margin, self.ymax - self.ymin + 2 * margin
        if width is not None:
            half = max(width / 2.0, abs(self.xmin) + margin, abs(self.xmax) + margin)
            x0, w = -half, 2.0 * half
        height_mm = print_mm * h / w
        attrs = {
            "xmlns": "http://www.w3.org/2000/svg",
            "viewBox": f"{x0:.3f} {y0:.3f} {w:.3f} {h:.3f}",
            "width": f"{print_mm:g}mm",
            "height": f"{height_mm:.1f}mm",
            "class": f"figure {name}",
            "role": "img",
            **root,
        }
        attrs_text = "".join(f' {k.replace("_", "-")}="{_esc(str(v))}"' for k, v in attrs.items())
        body = "\n".join(self.parts)
        return (
            f"<svg{attrs_text}>\n<title>{_esc(title)}</title>\n"
            f'<g font-family="DejaVu Sans, Liberation Sans, Arial, Helvetica, sans-serif">\n'
            f"{body}\n</g>\n</svg>"
        )


#: Printed width of the north diagram, millimetres.
NORTH_DIAGRAM_MM = 110.0

#: Below this angle (degrees) the north diagram draws rays larger than true.
EXAGGERATE_BELOW_DEG = 15.0


def diagram_angle(true_deg: float) -> float:
    """The angle (degrees, clockwise from true north) at which the north diagram draws a ray.

    ``sign(a) * 15 * sqrt(|a| / 15)`` for ``|a| < 15`` degrees, ``a`` itself beyond: monotone
    (the order of the rays is kept), continuous, and it turns 0.1 degree into 1.2, 1 into 3.9
    and 5 into 8.7 degrees so that small convergences and declinations can be seen.
    """
    a = float(true_deg)
    t = EXAGGERATE_BELOW_DEG
    if abs(a) >= t:
        return a
    return math.copysign(t * math.sqrt(abs(a) / t), a)


@dataclass(frozen=True)
class NorthRay:
    """One north of the diagram: its key, label and true angle from true north (degrees)."""

    key: str
    label: str
    angle_deg: float


def north_diagram_svg(rays: Sequence[NorthRay], *, title: str = "North references") -> str:
    """The north-reference diagram as an SVG element (see the module docstring).

    ``rays`` are the norths other than true north (true north is drawn straight up). Each ray
    is a ``<line class="ray" data-north=KEY data-angle-deg=TRUE data-drawn-deg=DRAWN>`` from the
    centre; an arc from true north to each ray (``class="angle"``) and a label with the true
    value follow.
    """
    svg = _Svg()
    cx, cy = 0.0, 0.0
    base = 170.0
    ordered = sorted(rays, key=lambda r: diagram_angle(r.angle_deg))
    # Stagger the ray lengths so the labels at the tips never share a line of text.
    lengths = {id(r): base + 34.0 * k for k, r in enumerate(sorted(rays, key=lambda r: r.key))}
    svg.line(
        cx,
        cy,
        cx,
        cy - base - 34.0 * len(rays),
        class_="ray",
        data_north="true",
        data_angle_deg=0.0,
        data_drawn_deg=0.0,
        stroke="#000",
        stroke_width=2.2,
    )
    top = cy - base - 34.0 * len(rays)
    star = []
    for k in range(10):
        r = 9.0 if k % 2 == 0 else 3.8
        a = math.radians(36.0 * k)
        star.append((cx + r * math.sin(a), top - 12.0 - r * math.cos(a)))
    svg.polygon(star, fill="#000")
    svg.text(cx, top - 28.0, "true north", size=13, anchor="middle", font_weight="bold")
    styles = {
        "grid": ("#1b5e9a", "6 0"),
        "magnetic_record": ("#a3320b", "9 4"),
        "magnetic_target": ("#2f7d32", "3 3"),
    }
    for k, ray in enumerate(ordered):
        drawn = diagram_angle(ray.angle_deg)
        length = lengths[id(ray)]
        a = math.radians(drawn)
        x2, y2 = cx + length * math.sin(a), cy - length * math.cos(a)
        colour, dash = styles.get(ray.key, ("#444", "6 0"))
        svg.line(
            cx,
            cy,
            x2,
            y2,
            class_="ray",
            data_north=ray.key,
            data_angle_deg=ray.angle_deg,
            data_drawn_deg=drawn,
            stroke=colour,
            stroke_width=2.0,
            stroke_dasharray=dash,
        )
        # arrow head
        for side in (-1.0, 1.0):
            b = a + math.pi + side * math.radians(20.0)
            svg.line(
                x2,
                y2,
                x2 + 11.0 * math.sin(b),
                y2 - 11.0 * math.cos(b),
                stroke=colour,
                stroke_width=2.0,
            )
        radius = 46.0 + 22.0 * k
        svg.arc(
            cx,
            cy,
            radius,
            0.0,
            drawn,
            class_="angle",
            data_north=ray.key,
            stroke=colour,
            stroke_width=1.2,
        )
        anchor = "start" if drawn >= 0 else "end"
        lx = x2 + (8.0 if drawn >= 0 else -8.0)
        svg.text(
            lx,
            y2 - 4.0,
            ray.label,
            size=12.5,
            anchor=anchor,
            fill=colour,
            class_="ray-label",
            data_north=ray.key,
        )
    svg.circle(cx, cy, 3.0, fill="#000")
    return svg.render(name="north-diagram", title=title, margin=10.0, print_mm=NORTH_DIAGRAM_MM)


def _nice_step(value: float) -> float:
    """The largest 1-2-5 step not above ``value`` (value > 0)."""
    exp = math.floor(math.log10(value))
    for m in (5.0, 2.0, 1.0):
        if m * 10.0**exp <= value:
            return m * 10.0**exp
    return 10.0 ** (exp - 1) * 5.0


#: Map scales the sketch may be drawn at (the N of 1:N).
_SCALES = tuple(m * 10**e for e in range(1, 8) for m in (1, 1.25, 2, 2.5, 5))


@dataclass(frozen=True)
class SketchScale:
    """The sketch's scale: SVG user units per metre and the printed map scale 1:N."""

    units_per_m: float
    ratio: float


#: The sketch's drawing area in SVG user units, and the viewBox width around it (printed
#: FIGURE_WIDTH_MM wide, so one unit is FIGURE_WIDTH_MM / _SKETCH_VIEW_W mm on paper).
_SKETCH_W = 640.0
_SKETCH_H_MAX = 700.0
_SKETCH_VIEW_W = 760.0


def sketch_scale(width_m: float, height_m: float) -> SketchScale:
    """The largest usual map scale at which a figure ``width_m`` x ``height_m`` fits the sketch.

    The sketch is printed :data:`FIGURE_WIDTH_MM` wide for 640 user units plus margins; a map
    scale 1:N means N metres of ground per metre of paper.
    """
    mm_per_unit = FIGURE_WIDTH_MM / _SKETCH_VIEW_W
    span_w = max(width_m, 1e-6)
    span_h = max(height_m, 1e-6)
    for n in _SCALES:
        units_per_m = 1000.0 / (n * mm_per_unit)
        if span_w * units_per_m <= _SKETCH_W and span_h * units_per_m <= _SKETCH_H_MAX:
            return SketchScale(units_per_m, float(n))
    n = max(span_w / _SKETCH_W, span_h / _SKETCH_H_MAX) * 1000.0 / mm_per_unit
    return SketchScale(1000.0 / (n * mm_per_unit), n)


def traverse_sketch_svg(
    north_m: Sequence[float],
    east_m: Sequence[float],
    *,
    closed: bool,
    misclosure_m: float | None = None,
    adjusted: tuple[Sequence[float], Sequence[float]] | None = None,
    title: str = "Traverse sketch",
) -> tuple[str, SketchScale]:
    """The traverse sketch as an SVG element, and its scale.

    ``north_m``/``east_m`` are the unadjusted stations (metres from the point of beginning,
    true north; station 0 the point of beginning, station n the computed end). For a closed
    traverse the misclosure is drawn as ``<line class="misclosure">`` from the computed end to
    the point of beginning at the sketch's scale (``data-units-per-m`` on the root element),
    ringed so that a short gap can be found, and labelled with ``misclosure_m``.
    ``adjusted`` (north, east of the adjusted stations) is drawn dashed beneath.
    """
    n = [float(v) for v in north_m]
    e = [float(v) for v in east_m]
    width = max(e) - min(e)
    height = max(n) - min(n)
    scale = sketch_scale(width, height)
    s = scale.units_per_m
    cx = (max(e) + min(e)) / 2.0
    cy = (max(n) + min(n)) / 2.0

    def xy(i: int) -> tuple[float, float]:
        return ((e[i] - cx) * s, -(n[i] - cy) * s)

    svg = _Svg()
    if adjusted is not None:
        an, ae = adjusted
        svg.polyline(
            [((float(x) - cx) * s, -(float(y) - cy) * s) for y, x in zip(an, ae, strict=True)],
            fill="none",
            stroke="#7a7a7a",
            stroke_width=1.0,
            stroke_dasharray="5 4",
            class_="adjusted-line",
        )
    pts = [xy(i) for i in range(len(n))]
    svg.polyline(
        pts,
        fill="none",
        stroke="#000",
        stroke_width=1.8,
        class_="course-line",
        stroke_linejoin="round",
    )
    last = len(pts) - 1
    for i, (x, y) in enumerate(pts):
        if i == last and closed and i > 0:
            continue
        if i == 0:
            svg.circle(x, y, 5.0, fill="#fff", stroke="#000", stroke_width=1.6)
        else:
            svg.circle(x, y, 3.0, fill="#000")
        right = x <= 0.0
        svg.text(
            x + (7.0 if right else -7.0),
            y - 7.0,
            "POB" if i == 0 else str(i),
            size=12,
            anchor="start" if right else "end",
            class_="station-label",
        )
    if closed and last > 0:
        (x1, y1), (x0, y0) = pts[last], pts[0]
        svg.line(
            x1,
            y1,
            x0,
            y0,
            class_="misclosure",
            stroke="#c00000",
            stroke_width=2.0,
            data_misclosure_m=misclosure_m,
        )
        svg.circle(x1, y1, 11.0, fill="none", stroke="#c00000", stroke_width=1.0)
        label = "closes exactly" if not misclosure_m else f"misclosure {misclosure_m:.3f} m"
        right = x1 <= 0.0
        svg.text(
            x1 + (14.0 if right else -14.0),
            y1 + 22.0,
            label,
            size=12,
            fill="#c00000",
            anchor="start" if right else "end",
            class_="misclosure-label",
        )
    # Frame below the figure: scale bar (left) and north arrow (right).
    fy = svg.ymax + 40.0
    fx = min(svg.xmin, -_SKETCH_W / 2.0)
    bar_m = _nice_step(max(width, height, 1.0) / 3.0)
    bar = bar_m * s
    for k in range(4):
        svg.polygon(
            [
                (fx + k * bar / 4, fy),
                (fx + (k + 1) * bar / 4, fy),
                (fx + (k + 1) * bar / 4, fy + 7),
                (fx + k * bar / 4, fy + 7),
            ],
            fill="#000" if k % 2 == 0 else "#fff",
            stroke="#000",
            stroke_width=1.0,
        )
    svg.text(fx, fy + 22.0, "0", size=11, anchor="middle")
    svg.text(
        fx + bar, fy + 22.0, f"{_trim(bar_m)} m", size=11, anchor="middle", class_="scale-bar-label"
    )
    svg.line(
        fx,
        fy,
        fx + bar,
        fy,
        class_="scale-bar",
        data_length_m=bar_m,
        stroke="#000",
        stroke_width=1.0,
    )
    svg.text(fx + bar + 40.0, fy + 8.0, f"scale 1:{scale.ratio:,.0f}", size=12)
    ax = max(svg.xmax, _SKETCH_W / 2.0) - 20.0
    svg.polygon(
        [(ax, fy - 40.0), (ax + 9.0, fy + 6.0), (ax, fy - 2.0), (ax - 9.0, fy + 6.0)],
        fill="#000",
        class_="north-arrow",
    )
    svg.text(ax, fy - 46.0, "N", size=14, anchor="middle", font_weight="bold")
    svg.text(ax, fy + 24.0, "true", size=11, anchor="middle")
    svg_text = svg.render(
        name="traverse-sketch",
        title=title,
        margin=12.0,
        width=_SKETCH_VIEW_W,
        data_units_per_m=f"{s:.9g}",
        data_scale=f"1:{scale.ratio:.0f}",
    )
    return svg_text, scale


# --------------------------------------------------------------------------------------------
# Collecting the content
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _FieldColumn:
    """The field at the point of beginning at one date: the vector, or why there is none."""

    label: str
    model: str | None
    vector: Any = None
    error: str | None = None


def _scalar(values: Any) -> float:
    import numpy as np

    return float(np.ravel(np.asarray(values, dtype=float))[0])


def _field_columns(conv: Any) -> list[_FieldColumn]:
    """field_at at the point of beginning for the record date (when it has one) and target."""
    from .errors import LodelineError
    from .magnetic import field_at

    p0 = conv.stations[0]
    wanted: list[tuple[str, float, str]] = []
    if conv.record_year is not None:
        name = conv.record_model_query
        wanted.append(
            (f"record date {_when(conv.record_date, conv.record_year)}", conv.record_year, name)
        )
    wanted.append(
        (
            f"target date {_when(conv.target_date, conv.target_year)}",
            conv.target_year,
            conv.target_model_query,
        )
    )
    out = []
    for label, year, name in wanted:
        try:
            vec = field_at(lat=p0.lat, lon=p0.lon, year=year, height_m=conv.height_m, model=name)
        except LodelineError as err:
            out.append(_FieldColumn(label, name, error=err.message))
            continue
        model = vec.model if isinstance(vec.model, str) else vec.model_of(0)
        out.append(_FieldColumn(label, model, vector=vec))
    return out


def _field_table(columns: Sequence[_FieldColumn]) -> Table:
    """Quantity rows x date columns: what a compass, a dip circle and a field meter show."""

    def cell(col: _FieldColumn, what: str) -> str:
        if col.vector is None:
            return "no model covers this date (see the warnings)" if what == "model" else "–"
        v = col.vector
        if what == "model":
            return str(col.model)
        if what == "D":
            d = _scalar(v.declination_deg)
            return f"{_signed_angle(d)} ({d:+.3f}°)"
        if what == "sigma":
            s = _scalar(v.declination_sigma_deg)
            return f"±{s:.2f}° (1σ)" if math.isfinite(s) else "none published"
        if what == "dD":
            return f"{_scalar(v.declination_rate_deg_per_year) * 60.0:+.1f}′ per year"
        if what == "I":
            return f"{_scalar(v.inclination_deg):+.2f}°"
        if what == "warn":
            return "; ".join(v.warnings_of(0)) or "no warning: the field suits a compass"
        attr, unit = {
            "H": ("horizontal_nT", "nT"),
            "X": ("north_nT", "nT"),
            "Y": ("east_nT", "nT"),
            "Z": ("down_nT", "nT"),
            "F": ("total_nT", "nT"),
        }[what]
        return f"{_scalar(getattr(v, attr)):,.0f} {unit}"

    rows = [
        ("model", "model"),
        ("declination D (compass; east +)", "D"),
        ("D uncertainty", "sigma"),
        ("yearly change of D", "dD"),
        ("inclination I (dip circle; down +)", "I"),
        ("horizontal intensity H", "H"),
        ("north component X (field meter)", "X"),
        ("east component Y (field meter)", "Y"),
        ("vertical component Z (field meter; down +)", "Z"),
        ("total intensity F (field meter)", "F"),
        ("compass warnings", "warn"),
    ]
    body = []
    for label, key in rows:
        body.append((label, *[cell(c, key) for c in columns]))
    headers = ("quantity", *[c.label for c in columns])
    return Table(headers, tuple(body), right=frozenset(), caption=None)


def _rays(conv: Any) -> list[NorthRay]:
    """The norths at the point of beginning (course 1's start): grid, magnetic at both dates."""
    first = conv.courses[0]
    rays = [
        NorthRay(
            "grid",
            f"grid north  γ = {_signed_angle(first.convergence_deg, _SECOND)}",
            first.convergence_deg,
        )
    ]
    if first.declination_record_deg is not None:
        rays.append(
            NorthRay(
                "magnetic_record",
                f"magnetic north {_when(conv.record_date, conv.record_year)}  "
                f"D = {_signed_angle(first.declination_record_deg)}",
                first.declination_record_deg,
            )
        )
    rays.append(
        NorthRay(
            "magnetic_target",
            f"magnetic north {_when(conv.target_date, conv.target_year)}  "
            f"D = {_signed_angle(first.declination_target_deg)}",
            first.declination_target_deg,
        )
    )
    return rays


def _length_text(course: Any) -> str:
    return f"{_trim(course.length_value)} {_unit_label(course.length_unit)}"


def collect_report(
    conv: Any,
    *,
    adjust: str | None = None,
    generated: _dt.date | None = None,
) -> Report:
    """Gather every figure of the report for a converted document (``geo.north``).

    ``adjust`` is passed to :func:`geo.survey.close_document` (default compass for a closed
    traverse, none for an open one). A closure or fit that cannot be computed for this
    document (crossing courses, too few found stations...) becomes a note in the report;
    bad input raises the core's :class:`~geo.errors.LodelineError`.
    """
    from .errors import DocumentError

    doc = conv.document
    if not conv.courses:
        raise DocumentError("has no courses: nothing to report", file=conv.file, field="course")
    title = doc.title or (conv.file or "Traverse")
    # The sections in the order they are read: cautions, place, dates and declinations,
    # warnings, the field, the courses, closure and fit, notes.
    blocks: list[Block] = [
        Paragraph(
            "Retracement report: the calls of the record in magnetic, true and "
            "grid bearings, with the closure of the figure."
        ),
        Notice("Cautions", (CAUTIONS,), kind="caution"),
    ]
    columns = _field_columns(conv)
    blocks += _place_blocks(conv)
    blocks += _dates_blocks(conv)
    blocks += _warning_blocks(conv, columns)
    blocks += _field_blocks(conv, columns)
    blocks += _course_blocks(conv)
    survey_blocks, closure, survey_error = _survey_blocks(conv, adjust)
    blocks += survey_blocks
    when = generated or _dt.date.today()
    blocks += _notes_blocks(conv, when)

    return Report(
        title=title,
        blocks=tuple(blocks),
        conversion=conv,
        survey=closure,
        survey_error=survey_error,
        generated=when,
    )


def _place_blocks(conv: Any) -> list[Block]:
    """The point of beginning, its grid and factors."""
    blocks: list[Block] = []
    p0 = conv.stations[0]
    first = conv.courses[0]
    unit = "m" if abs(conv.grid_unit_m - 1.0) < 1e-12 else f"units of {conv.grid_unit_m:.10g} m"
    blocks.append(Heading("Place"))
    blocks.append(
        Facts(
            (
                ("point of beginning", f"latitude {p0.lat:.7f}°, longitude {p0.lon:.7f}° (WGS84)"),
                *(
                    (("described as", conv.document.place.description),)
                    if conv.document.place.description
                    else ()
                ),
                (
                    "placed by",
                    "measured grid coordinates" if conv.place_by_grid else "latitude and longitude",
                ),
                ("ellipsoidal height", f"{conv.height_m:,.1f} m"),
                ("grid", conv.crs),
                ("easting, northing", f"{p0.easting:,.3f}, {p0.northing:,.3f} ({unit})"),
                (
                    "grid convergence γ",
                    f"{_signed_angle(first.convergence_deg, _SECOND)} "
                    f"({first.convergence_deg:+.5f}°; grid = true − γ)",
                ),
                (
                    "scale, elevation, combined factor",
                    f"{first.scale_factor:.8f}, {first.elevation_factor:.8f}, "
                    f"{first.combined_factor:.8f}",
                ),
                ("document", conv.file or "(not from a file)"),
            )
        )
    )

    return blocks


def _dates_blocks(conv: Any) -> list[Block]:
    """Record and target dates, the model(s) and the declinations."""
    blocks: list[Block] = []
    first = conv.courses[0]
    rec = conv.document.record
    blocks.append(Heading("Dates, model and declinations"))
    if conv.declination_source == "stated":
        d1_text = (
            f"{_signed_angle(conv.stated_declination_deg)} as stated in the record (no model used)"
        )
    elif conv.declination_source == "model":
        s1 = first.declination_record_sigma_deg
        sig = (
            f" ± {s1:.2f}° (1σ)" if s1 is not None else " (no uncertainty published for this model)"
        )
        d1_text = f"{_signed_angle(first.declination_record_deg)} from {conv.record_model}{sig}"
    else:
        d1_text = "none (no record date or stated declination)"
    s2 = first.declination_target_sigma_deg
    sig2 = f" ± {s2:.2f}° (1σ)" if s2 is not None else " (no uncertainty published for this model)"
    facts = [
        ("bearings recorded from", f"{conv.reference} north"),
        ("record date", _when(conv.record_date, conv.record_year)),
        ("target date", _when(conv.target_date, conv.target_year)),
        ("field model", conv.model_label),
        ("declination at the record date", d1_text),
        (
            "declination at the target date",
            f"{_signed_angle(first.declination_target_deg)} from {conv.target_model}{sig2}",
        ),
    ]
    if first.declination_record_deg is not None:
        change = first.declination_record_deg - first.declination_target_deg
        facts.append(
            (
                "record magnetic to target magnetic",
                f"add {_signed_angle(change)} ({change:+.4f}°) to the record's magnetic "
                "bearings (mag₂ = mag₁ + D₁ − D₂)",
            )
        )
    facts.append(
        (
            "distances",
            f"foot: {rec.foot or 'by date (see notes)'}; unit of bare numbers: "
            f"{rec.distance_unit or 'none'}",
        )
    )
    blocks.append(Facts(tuple(facts)))
    blocks.append(
        Paragraph(
            "Values at the point of beginning; each course uses D and γ at its own "
            "starting station (course tables below). D is east positive "
            "(true = magnetic + D); γ is clockwise from true north to grid north "
            "(grid = true − γ)."
        )
    )
    return blocks


def _warning_blocks(conv: Any, columns: Sequence[_FieldColumn]) -> list[Block]:
    """Every note of the conversion and compass-reliability warning."""
    blocks: list[Block] = []
    warnings = list(conv.warnings)
    for c in conv.courses:
        warnings += [f"course {c.index}: {w}" for w in c.warnings]
    warnings += [
        f"field at the point of beginning, {col.label}: {col.error}" for col in columns if col.error
    ]
    if warnings:
        blocks.append(Notice("Warnings", tuple(dict.fromkeys(warnings))))
    else:
        blocks.append(
            Paragraph(
                "No compass-reliability warnings: the horizontal intensity is above "
                "6000 nT at every station at both dates."
            )
        )

    return blocks


def _field_blocks(conv: Any, columns: Sequence[_FieldColumn]) -> list[Block]:
    """The field vector and the north diagram at the point of beginning."""
    blocks: list[Block] = []
    blocks.append(Heading("The field at the point of beginning"))
    blocks.append(
        Paragraph(
            "What the instruments show there: a compass needle points along D, "
            "a dip circle reads I, a three-axis field meter reads X, Y and Z "
            "(and F). The models describe the main field only; local crustal "
            "anomalies are not in them."
        )
    )
    blocks.append(_field_table(columns))

    rays = _rays(conv)
    blocks.append(
        Figure(
            north_diagram_svg(rays, title="North references at the point of beginning"),
            "North references at the point of beginning. Angles are drawn out of scale: small "
            "angles are enlarged so that they can be seen (below 15° the drawn angle grows with "
            "the square root of the true one); the labels give the true values.",
            "north-diagram",
        )
    )

    return blocks


def _course_blocks(conv: Any) -> list[Block]:
    """The courses in every north reference and their per-course figures."""
    blocks: list[Block] = []
    blocks.append(Heading("Courses in every north reference"))
    rows = []
    for c in conv.courses:
        b = c.bearing
        rows.append(
            (
                str(c.index),
                c.call,
                _length_text(c),
                f"{c.length_m:,.3f}",
                b.magnetic_record or "–",
                b.true,
                b.grid,
                b.magnetic_target,
            )
        )
    blocks.append(
        Table(
            (
                "#",
                "call as written",
                "length",
                "metres",
                "magnetic (record)",
                "true",
                "grid",
                "magnetic (target)",
            ),
            tuple(rows),
            right=frozenset({0, 2, 3}),
            nowrap=frozenset({4, 5, 6, 7}),
            small=True,
            caption="Bearings to the precision of the call as recorded; derived bearings "
            "to at least "
            "one minute. Lengths are ground (horizontal) lengths.",
        )
    )
    rows = []
    for c in conv.courses:
        sig = c.declination_target_sigma_deg
        rows.append(
            (
                str(c.index),
                _decimal(c.declination_record_deg),
                _decimal(c.declination_target_deg),
                "–" if sig is None else f"±{sig:.2f}°",
                _decimal(c.convergence_deg, 5),
                f"{c.combined_factor:.8f}",
                f"{c.grid_length_m:,.3f}",
                "; ".join(c.warnings) or "–",
            )
        )
    blocks.append(
        Table(
            (
                "#",
                "D record",
                "D target",
                "σD target",
                "γ",
                "combined factor",
                "grid length m",
                "warnings",
            ),
            tuple(rows),
            right=frozenset({0, 1, 2, 3, 4, 5, 6}),
            small=True,
            caption="Per course, at its starting station.",
        )
    )

    return blocks


def _survey_blocks(conv: Any, adjust: str | None) -> tuple[list[Block], Any, str | None]:
    """The closure (or why it was not computed) and the record-to-found fit."""
    from . import survey
    from .errors import LodelineError

    blocks: list[Block] = []
    survey_error = None
    closure = None
    try:
        closure = survey.close_document(conv, adjust=adjust)
    except LodelineError as err:
        if adjust is not None:
            raise
        survey_error = err.message
    if closure is not None:
        blocks += _closure_blocks(conv, closure)
    else:
        blocks.append(Heading("Closure"))
        blocks.append(Notice("Closure not computed", (str(survey_error),)))

    if closure is not None and conv.document.closed:
        blocks += _description_blocks(conv, closure.adjustment)
    from .along import plot_list, report_blocks

    placed_on = closure.adjustment if closure is not None else adjust
    blocks += report_blocks(plot_list(conv, adjust=placed_on), conv)

    fit = None
    if survey.found_count(conv) >= 2:
        blocks.append(Heading("Record-to-found fit"))
        try:
            fit = survey.fit_document(conv)
        except LodelineError as err:
            blocks.append(Notice("Fit not computed", (err.message,)))
        else:
            blocks += _fit_blocks(conv, fit)

    from .retrace_report import retracement_blocks

    blocks += retracement_blocks(conv, fit)

    return blocks, closure, survey_error


def _notes_blocks(conv: Any, when: _dt.date) -> list[Block]:
    """The notes the document carries, and the closing line with the cautions."""
    blocks: list[Block] = []
    blocks.append(Heading("Notes"))
    note_rows = tuple((str(c.index), c.recorded.note) for c in conv.courses if c.recorded.note)
    if note_rows:
        blocks.append(Table(("#", "note in the document"), note_rows, right=frozenset({0})))
    else:
        blocks.append(Paragraph("The document carries no notes."))
    blocks.append(Paragraph(f"Report made {when.isoformat()} by lodeline. {CAUTIONS}"))
    return blocks


def _stated_area_text(conv: Any, area: Any) -> str:
    """The deed's stated area (record.area) beside the computed ground area."""
    from .description import compare_area

    foot = area.foot if area is not None else conv.document.record.foot
    check = compare_area(
        conv.document.record.area, area.ground_m2 if area is not None else None, foot=foot
    )
    if check.problem is not None:
        return f"{check.stated} (not compared: {check.problem})"
    return (
        f"{check.stated} = {check.stated_m2:,.1f} m²; the computed ground area differs by "
        f"{check.difference_m2:+,.1f} m² ({check.difference_pct:+.2f} %)"
    )


def _closure_blocks(conv: Any, clo: Any) -> list[Block]:
    """The closure section: facts, sketch, latitudes and departures, stations, attraction."""
    return [
        *_closure_facts(conv, clo),
        *_closure_sketch(clo),
        *_closure_tables(clo),
        *_attraction_blocks(conv, clo),
    ]


_NORTH_NAMES = {"true": "true north", "grid": "grid north", "magnetic": "magnetic north (record)"}


def _closure_facts(conv: Any, clo: Any) -> list[Block]:
    """Misclosure, precision, adjustment, area, angular misclosure and the closure's notes."""
    from .measures import area_text, conversion_unit, length_text

    ru = conversion_unit(conv)

    def rec(metres: float) -> str:
        return "" if ru.metric else f" = {length_text(metres, ru)}"

    out: list[Block] = [Heading("Closure, adjustment and area")]
    north = _NORTH_NAMES
    facts: list[tuple[str, str]] = [
        (
            "figure",
            "closed (the calls return to the point of beginning)"
            if clo.closed
            else (
                f"open line closed on its found end (station {len(clo.courses)})"
                if clo.closes_on
                else "open traverse (closed = false)"
            ),
        ),
        ("directions referred to", north.get(clo.north, clo.north)),
        ("perimeter", f"{clo.perimeter_m:,.3f} m{rec(clo.perimeter_m)}"),
    ]
    if clo.closes_on:
        if clo.misclosure_m:
            facts.append(
                (
                    "linear misclosure",
                    f"{clo.misclosure_m:,.3f} m{rec(clo.misclosure_m)} toward "
                    f"{clo.misclosure_bearing} "
                    f"(north {clo.misclosure_north_m:+.3f} m, east {clo.misclosure_east_m:+.3f} m)",
                )
            )
            facts.append(("precision", f"1:{clo.precision:,.0f}"))
        else:
            facts.append(("linear misclosure", "0 m (the calls close exactly)"))
        facts.append(
            (
                "adjustment",
                {
                    "compass": "compass (Bowditch) rule",
                    "transit": "transit rule",
                    "none": "none (as recorded)",
                }.get(clo.adjustment, clo.adjustment),
            )
        )
        a = clo.area
        if a is not None:
            facts.append(
                (
                    "area (ground)",
                    f"{a.ground_m2:,.1f} m² = {a.hectares:,.4f} ha = {a.acres:,.3f} acres "
                    f"({'US survey' if a.foot == 'us' else 'international'} acre)",
                )
            )
            facts.append(("area in the record's measure", area_text(a.ground_m2, ru, a.acres)))
            facts.append(
                (
                    "area (grid)",
                    f"{a.grid_m2:,.1f} m² (ground × mean combined factor² "
                    f"{a.combined_factor:.8f}²)",
                )
            )
        elif clo.crossing is not None:
            facts.append(("area", f"none: courses {clo.crossing[0]} and {clo.crossing[1]} cross"))
        if conv.document.record.area is not None:
            facts.append(("stated area", _stated_area_text(conv, a)))
    out.append(Facts(tuple(facts)))
    if clo.angles is not None:
        ang = clo.angles
        out.append(
            Facts(
                (
                    (
                        "angles",
                        f"{ang.kind}, sum {ang.measured_sum_deg:.4f}° against "
                        f"{ang.expected_sum_deg:.0f}°",
                    ),
                    (
                        "angular misclosure",
                        f"{ang.misclosure_deg * 3600:+.1f}″ (correction "
                        f"{ang.correction_per_angle_deg * 3600:+.1f}″ per angle)",
                    ),
                )
            )
        )
    if clo.notes:
        out.append(Notice("Closure notes", tuple(clo.notes)))

    if not ru.metric:
        out.append(_record_unit_table(clo, ru))
    return out


def _closure_sketch(clo: Any) -> list[Block]:
    """The sketch of the marched figure, adjusted beside it, and the misclosure."""
    out: list[Block] = []
    north = _NORTH_NAMES
    ua = clo.unadjusted_stations
    adj_n = [s.north_m for s in clo.stations]
    adj_e = [s.east_m for s in clo.stations]
    svg, scale = traverse_sketch_svg(
        [s.north_m for s in ua],
        [s.east_m for s in ua],
        closed=clo.closed,
        misclosure_m=clo.misclosure_m,
        adjusted=(adj_n, adj_e) if clo.closed else None,
        title="Sketch of the traverse",
    )
    gap = (
        f"The misclosure (red) is drawn to the same scale from the computed end to the point of "
        f"beginning: {clo.misclosure_m:,.3f} m."
        if clo.closed and clo.misclosure_m
        else ""
    )
    out.append(
        Figure(
            svg,
            f"Sketch of the marched figure (the stations every output shows, reduced to the "
            f"ground), {north.get(clo.north, clo.north)} up, scale 1:{scale.ratio:,.0f} when "
            f"printed {FIGURE_WIDTH_MM:g} mm wide. " + gap,
            "traverse-sketch",
        )
    )

    return out


def _closure_tables(clo: Any) -> list[Block]:
    """Latitudes and departures per course; stations with their uncertainty."""
    out: list[Block] = []
    north = _NORTH_NAMES
    ua = clo.unadjusted_stations
    adjusted = clo.closed and clo.adjustment != "none"
    rows = []
    for c in clo.courses:
        row = [
            str(c.index),
            c.bearing,
            f"{c.length_m:,.3f}",
            f"{c.latitude_m:+,.3f}",
            f"{c.departure_m:+,.3f}",
        ]
        if adjusted:
            row += [
                f"{c.latitude_correction_m:+.3f}",
                f"{c.departure_correction_m:+.3f}",
                c.adjusted_bearing,
                f"{c.adjusted_length_m:,.3f}",
            ]
        rows.append(tuple(row))
    headers = ("#", "bearing", "length m", "latitude m", "departure m")
    caption = f"Latitudes and departures ({north.get(clo.north, clo.north)})"
    if adjusted:
        headers += ("corr. lat. m", "corr. dep. m", "adj. bearing", "adj. length m")
        caption += f", corrections of the {clo.adjustment} rule and the adjusted courses"
    out.append(
        Table(
            headers,
            tuple(rows),
            right=frozenset({0, 2, 3, 4, 5, 6, 8}),
            nowrap=frozenset({1, 7}),
            small=True,
            caption=caption + ".",
        )
    )
    rows = []
    for s, u, b in zip(clo.stations, ua, clo.budget, strict=True):
        row = ["POB" if s.index == 0 else str(s.index), f"{u.north_m:+,.3f}", f"{u.east_m:+,.3f}"]
        if adjusted:
            row += [f"{s.north_m:+,.3f}", f"{s.east_m:+,.3f}"]
        rows.append((*row, f"±{b.total_m:.2f}" if b.total_m is not None else "unknown"))
    headers = ("station", "north m", "east m")
    if adjusted:
        headers += ("adj. north m", "adj. east m")
    if clo.declination_term == "unknown":
        dec = (
            "(the declination's uncertainty is unknown: none published or stated, so the "
            "total is unknown, not zero)"
        )
    elif clo.declination_sigma_deg:
        source = "stated" if clo.declination_term == "stated" else "the model's"
        dec = f"and {source} declination uncertainty ±{clo.declination_sigma_deg:.2f}°"
    else:
        dec = "(no declination enters a true or grid record)"
    out.append(
        Table(
            (*headers, "±1σ m"),
            tuple(rows),
            right=frozenset(range(1, len(headers) + 1)),
            small=True,
            caption="Stations from the point of beginning"
            + (", as marched and adjusted" if adjusted else ", as marched")
            + f"; ±1σ: position uncertainty from a bearing reading uncertainty of "
            f"±{clo.bearing_sigma_deg:.3f}° {dec}.",
        )
    )
    return out


def _attraction_blocks(conv: Any, clo: Any) -> list[Block]:
    """Local attraction from the fore and back bearings."""
    from .bearings import format_bearing, recorded_bearing

    out: list[Block] = []
    att = clo.attraction
    if att is not None:
        out.append(Heading("Local attraction (fore and back bearings)", level=3))
        out.append(
            Paragraph(
                f"Fore and back bearings: {att.reference_text()}; "
                f"tolerance {att.tolerance_deg * 60:.0f}′."
            )
        )
        rows = []
        for s in att.stations:
            corr = "not reached" if s.correction_deg is None else _signed_angle(s.correction_deg)
            rows.append(
                (
                    "POB" if s.station == 0 else str(s.station),
                    corr,
                    "disturbed" if s.disturbed else "–",
                )
            )
        out.append(Table(("station", "correction", "state"), tuple(rows), right=frozenset()))
        rows = []
        for c, disc, fixed in zip(
            conv.courses, att.discrepancy_deg, att.corrected_bearing, strict=True
        ):
            back = c.recorded.back_azimuth_deg
            rows.append(
                (
                    str(c.index),
                    recorded_bearing(
                        c.recorded.azimuth_deg,
                        c.recorded.precision_deg,
                        c.recorded.bearing_style or "",
                    ),
                    "–"
                    if back is None
                    else format_bearing(back, precision=c.recorded.back_precision_deg),
                    "–" if disc is None else _signed_angle(disc),
                    fixed or "–",
                )
            )
        out.append(
            Table(
                ("#", "fore", "back", "back − (fore + 180°)", "corrected fore"),
                tuple(rows),
                right=frozenset({0}),
            )
        )
    return out


def _record_unit_table(clo: Any, ru: Any) -> Table:
    """Lengths, latitudes, departures and the running distance in the record unit."""
    from .measures import length_text

    rows = []
    along = 0.0
    for c in clo.courses:
        along += c.length_m
        rows.append(
            (
                str(c.index),
                length_text(c.length_m, ru),
                length_text(c.latitude_m, ru),
                length_text(c.departure_m, ru),
                length_text(along, ru),
            )
        )
    return Table(
        ("#", "length", "latitude", "departure", "to the course's end"),
        tuple(rows),
        right=frozenset({0, 1, 2, 3, 4}),
        small=True,
        caption=f"The same courses in {ru.name} (1 {ru.unit} = {ru.metres:.10g} m; "
        f"record unit from {ru.source}), unadjusted; the last column runs from the point of "
        "beginning.",
    )


def _description_blocks(conv: Any, adjust: str | None) -> list[Block]:
    """The new description (closed figures): see :mod:`geo.deed_text`."""
    from .deed_text import write_description
    from .errors import LodelineError

    out: list[Block] = [Heading("New description")]
    try:
        desc = write_description(conv, adjust=adjust)
    except LodelineError as err:
        return [*out, Notice("Description not written", (err.message,))]
    out.append(
        Paragraph(
            "The figure written as a description, bearings referred to true north "
            "(lodeline describe writes it to grid or magnetic north and in other units)."
        )
    )
    for text in (desc.courses, desc.basis, desc.record, desc.distances):
        out.append(Paragraph(text))
    return out


def _fit_blocks(conv: Any, fit: Any) -> list[Block]:
    facts = [
        ("rotation (record → grid)", f"{fit.rotation_deg:+.4f}°"),
        ("rotation (record → true)", f"{fit.true_rotation_deg:+.4f}°"),
        ("scale", f"{fit.scale:.6f}" + ("" if fit.with_scale else " (not fitted)")),
        ("RMS of residuals", f"{fit.rms_m:.3f} m"),
    ]
    if fit.empirical_declination_deg is not None:
        facts.append(
            (
                "empirical declination (record date)",
                f"{_signed_angle(fit.empirical_declination_deg)} "
                f"({fit.empirical_declination_deg:+.4f}°)",
            )
        )
    if fit.model_declination_deg is not None:
        facts.append(
            (
                "model declination (record date)",
                f"{_signed_angle(fit.model_declination_deg)} ({fit.model})",
            )
        )
    if fit.stated_declination_deg is not None:
        facts.append(("stated declination", _signed_angle(fit.stated_declination_deg)))
    if fit.record_length_factor is not None:
        facts.append(
            (
                "record-length factor",
                f"{fit.record_length_factor:.6f} (true ground length / recorded length)",
            )
        )
    out: list[Block] = [Facts(tuple(facts))]
    rows = tuple(
        ("POB" if r.index == 0 else str(r.index), f"{r.east_m:+.3f}", f"{r.north_m:+.3f}")
        for r in fit.residuals
    )
    out.append(
        Table(("station", "residual east m", "residual north m"), rows, right=frozenset({1, 2}))
    )
    if fit.notes:
        out.append(Notice("Fit notes", tuple(fit.notes)))
    return out


# --------------------------------------------------------------------------------------------
# Rendering
# --------------------------------------------------------------------------------------------

_CSS = """
@page { size: %(size)s; margin: 18mm 20mm 18mm 20mm; }
* { box-sizing: border-box; }
html { font-size: 10pt; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif;
  color: #111; background: #fff; margin: 0 auto; max-width: 170mm; line-height: 1.35; }
@media screen { body { padding: 12mm 0; } }
h1 { font-size: 16pt; margin: 0 0 2mm 0; }
h2 { font-size: 12.5pt; margin: 6mm 0 2mm 0; border-bottom: 0.4pt solid #555;
  break-after: avoid; page-break-after: avoid; }
h3 { font-size: 11pt; margin: 4mm 0 1.5mm 0; break-after: avoid; page-break-after: avoid; }
p { margin: 1.5mm 0; }
table { border-collapse: collapse; width: 100%%; margin: 2mm 0 3mm 0;
  break-inside: avoid; page-break-inside: avoid; }
th, td { border: 0.4pt solid #888; padding: 0.8mm 1.4mm; text-align: left;
  vertical-align: top; overflow-wrap: anywhere; }
th { background: #ececec; font-weight: bold; }
th.num { text-align: right; }
td.num { text-align: right; white-space: nowrap; }
td.nw { white-space: nowrap; }
table.small { font-size: 8pt; }
table.facts th { width: 34%%; background: #f5f5f5; font-weight: normal; }
caption { caption-side: bottom; text-align: left; font-size: 8pt; color: #333;
  padding-top: 1mm; }
figure { margin: 3mm 0; break-inside: avoid; page-break-inside: avoid; }
figure svg { display: block; max-width: 100%%; height: auto; margin: 0 auto; }
figcaption { font-size: 8.5pt; color: #333; margin-top: 1.5mm; }
.notice { border: 0.6pt solid #a36b00; background: #fff7e6; padding: 2mm 3mm; margin: 3mm 0;
  break-inside: avoid; page-break-inside: avoid; }
.notice.caution { border: 1.2pt solid #9b1c1c; background: #fdeeee; }
.notice h3 { margin: 0 0 1mm 0; }
.notice ul { margin: 0; padding-left: 5mm; }
.notice.caution h3 { color: #9b1c1c; }
.subtitle { color: #333; margin-bottom: 3mm; }
@media print { a { color: inherit; text-decoration: none; } }
"""


def _html_table(t: Table, *, facts: bool = False) -> str:
    cls = " ".join(c for c in ("facts" if facts else "", "small" if t.small else "") if c)
    out = [f'<table class="{cls}">' if cls else "<table>"]
    if t.caption:
        out.append(f"<caption>{_esc(t.caption)}</caption>")
    if t.headers:
        cells = "".join(
            f'<th class="num">{_esc(h)}</th>' if i in t.right else f"<th>{_esc(h)}</th>"
            for i, h in enumerate(t.headers)
        )
        out.append(f"<thead><tr>{cells}</tr></thead>")
    out.append("<tbody>")
    for row in t.rows:
        if facts:
            out.append(f"<tr><th>{_esc(row[0])}</th><td>{_esc(row[1])}</td></tr>")
            continue
        cells = "".join(
            f'<td class="num">{_esc(c)}</td>'
            if i in t.right
            else (f'<td class="nw">{_esc(c)}</td>' if i in t.nowrap else f"<td>{_esc(c)}</td>")
            for i, c in enumerate(row)
        )
        out.append(f"<tr>{cells}</tr>")
    out.append("</tbody></table>")
    return "\n".join(out)


def render_html(report: Report, *, paper: Paper = "auto") -> str:
    """The report as one self-contained HTML document (inline CSS and SVG, nothing external).

    ``paper`` sets the ``@page`` size: ``"auto"`` (the printer's paper), ``"a4"`` or
    ``"letter"``; the layout fits both.
    """
    if paper not in _PAGE_SIZE:
        from .errors import InputError

        raise InputError(f"unknown paper {paper!r}: use auto, a4 or letter", field="paper")
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_esc(report.title)} — retracement report</title>",
        f"<style>{_CSS % {'size': _PAGE_SIZE[paper]}}</style>",
        "</head>",
        "<body>",
        f"<h1>{_esc(report.title)}</h1>",
    ]
    for block in report.blocks:
        if isinstance(block, Heading):
            level = min(max(block.level, 2), 3)
            parts.append(f"<h{level}>{_esc(block.text)}</h{level}>")
        elif isinstance(block, Paragraph):
            parts.append(f"<p>{_esc(block.text)}</p>")
        elif isinstance(block, Facts):
            parts.append(_html_table(Table((), block.items), facts=True))
        elif isinstance(block, Table):
            parts.append(_html_table(block))
        elif isinstance(block, Figure):
            parts.append(
                f'<figure class="{_esc(block.name)}">\n{block.svg}\n'
                f"<figcaption>{_esc(block.caption)}</figcaption>\n</figure>"
            )
        elif isinstance(block, Notice):
            items = "".join(f"<li>{_esc(line)}</li>" for line in block.lines)
            body = (
                f"<p>{_esc(block.lines[0])}</p>" if len(block.lines) == 1 else f"<ul>{items}</ul>"
            )
            parts.append(
                f'<div class="notice {_esc(block.kind)}"><h3>{_esc(block.title)}</h3>{body}</div>'
            )
    parts += ["</body>", "</html>", ""]
    return "\n".join(parts)


def _md_table(headers: Sequence[str], rows: Iterable[Sequence[str]], right: frozenset[int]) -> str:
    head = "| " + " | ".join(_md(h) for h in headers) + " |"
    rule = "|" + "|".join("---:" if i in right else "---" for i in range(len(headers))) + "|"
    body = ["| " + " | ".join(_md(c) for c in row) + " |" for row in rows]
    return "\n".join([head, rule, *body])


def render_markdown(report: Report) -> str:
    """The report as GitHub-flavoured Markdown: the same content as the HTML, no figures
    (each figure's caption is kept, marked as shown in the HTML report)."""
    out = [f"# {_md(report.title)}", ""]
    for block in report.blocks:
        if isinstance(block, Heading):
            out += ["#" * min(max(block.level, 2), 3) + " " + _md(block.text), ""]
        elif isinstance(block, Paragraph):
            out += [_md_line(block.text), ""]
        elif isinstance(block, Facts):
            out += [_md_table(("item", "value"), block.items, frozenset()), ""]
        elif isinstance(block, Table):
            out += [_md_table(block.headers, block.rows, block.right), ""]
            if block.caption:
                out += [f"*{_md(block.caption)}*", ""]
        elif isinstance(block, Figure):
            out += [f"*Figure (in the HTML report): {_md(block.caption)}*", ""]
        elif isinstance(block, Notice):
            strong = "**" + _md(block.title.upper() if block.kind == "caution" else block.title)
            out.append(f"> {strong}**")
            out.append(">")
            for line in block.lines:
                out.append(f"> {'- ' if len(block.lines) > 1 else ''}{_md(line)}")
            out.append("")
    return "\n".join(out).rstrip("\n") + "\n"


def build_report(
    doc: Any,
    *,
    fmt: Literal["html", "markdown"],
    file: str | None = None,
    target_date: _dt.date | str | float | None = None,
    model: str | None = None,
    record_model: str | None = None,
    adjust: str | None = None,
    paper: Paper = "auto",
) -> str:
    """Convert ``doc`` (a :class:`geo.document.Document`) and return the report text.

    ``target_date``, ``model`` and ``record_model`` are those of
    :func:`geo.north.convert_document`; ``adjust`` that of :func:`geo.survey.close_document`;
    ``paper`` that of :func:`render_html`. Raises the core's LodelineError for bad input.
    """
    from .north import convert_document

    conv = convert_document(
        doc, file=file, target_date=target_date, model=model, record_model=record_model
    )
    report = collect_report(conv, adjust=adjust)
    if fmt == "html":
        return render_html(report, paper=paper)
    if fmt == "markdown":
        return render_markdown(report)
    from .errors import InputError

    raise InputError(f"unknown report format {fmt!r}: use html or markdown", field="format")
