"""The traverse sketch: the figure to scale, its misclosure gap and the north indicators.

Built on textual-plot's :class:`PlotWidget` (axes in metres, high-resolution braille lines,
a legend, keyboard and mouse zoom). textual-plot scales each axis on its own, so this widget
keeps the axes equal itself: the view is always chosen so that one metre spans the same
distance across and up the screen, taking a terminal cell to be twice as tall as it is wide.
Zooming in and out scales both axes together; "fit" frames the whole figure again.

Meaning never rests on colour alone: every north indicator ends in its letter (T, G, M, m),
the point of beginning is drawn as ``◎``, stations as ``•``, the gap's far end as ``×``, and
the key under the sketch names each mark (an in-plot legend would hide the figure).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from textual.app import RenderResult
from textual.binding import Binding
from textual.css.query import NoMatches
from textual.events import Resize
from textual.geometry import Size
from textual_hires_canvas import Canvas, HiResMode
from textual_plot import PlotWidget

#: Height of a terminal cell divided by its width (most monospace fonts: about 2).
CELL_ASPECT = 2.0
#: Styles that read on light and dark backgrounds alike (meaning is also in the marks).
LINE_STYLE = "bold #3b82c4"
GAP_STYLE = "#c2410c"
NORTH_STYLE = "#6b7280"
#: Cells between the north arrows drawn beside the figure.
NORTH_COLUMNS = 4


@dataclass(frozen=True)
class NorthMark:
    """One north indicator: its letter, its legend text, and its azimuth from true north."""

    letter: str
    label: str
    azimuth_deg: float


@dataclass(frozen=True)
class SketchFigure:
    """What the sketch draws; coordinates in metres from the point of beginning, east and
    north in the frame of true north (``north`` up)."""

    east: np.ndarray
    north: np.ndarray
    closed: bool
    norths: tuple[NorthMark, ...]
    gap_label: str = "misclosure"
    #: The north at the top of the sketch, as the sketch's title names it.
    up: str = "grid north"


def _same(a: SketchFigure | None, b: SketchFigure | None) -> bool:
    if a is None or b is None:
        return a is b
    return (
        a.closed == b.closed
        and a.up == b.up
        and a.norths == b.norths
        and np.array_equal(a.east, b.east)
        and np.array_equal(a.north, b.north)
    )


def equal_axes_limits(
    east: np.ndarray, north: np.ndarray, width: int, height: int, *, pad: float = 0.08
) -> tuple[float, float, float, float]:
    """Return (x_min, x_max, y_min, y_max) framing the points with equal metres per unit of
    screen length, for a drawing area of ``width`` x ``height`` cells."""
    width = max(width, 2)
    height = max(height, 2)
    x0, x1 = float(np.min(east)), float(np.max(east))
    y0, y1 = float(np.min(north)), float(np.max(north))
    span_x = max(x1 - x0, 1e-3)
    span_y = max(y1 - y0, 1e-3)
    per_col = max(span_x / width, span_y / (height * CELL_ASPECT)) * (1.0 + 2.0 * pad)
    cx, cy = (x0 + x1) / 2.0, (y0 + y1) / 2.0
    half_x = per_col * width / 2.0
    half_y = per_col * CELL_ASPECT * height / 2.0
    return cx - half_x, cx + half_x, cy - half_y, cy + half_y


class TraverseSketch(PlotWidget):
    """The figure of the traverse drawn to scale, with equal axes and north indicators."""

    BINDINGS = [
        Binding("0", "fit", "Fit sketch", show=True),
        Binding("ctrl+equals_sign", "zoom_in", show=False),
        Binding("ctrl+minus", "zoom_out", show=False),
        Binding("ctrl+shift+equals_sign", "zoom_in", show=False),
        Binding("ctrl+shift+minus", "zoom_out", show=False),
        Binding("r", "fit", show=False),
    ]

    DEFAULT_CSS = """
    TraverseSketch { height: 1fr; min-height: 12; }
    TraverseSketch > #legend { border: round $foreground 40%; }
    """

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id, allow_pan_and_zoom=True)
        self._figure: SketchFigure | None = None
        self._message = "no figure yet"
        self._drawing = False
        self._fit_size = Size(0, 0)

    def on_mount(self) -> None:
        super().on_mount()
        self.margin_left = 8
        self.margin_bottom = 2
        self.margin_top = 1
        self.set_xlabel("east (m)")
        self.show_legend(is_visible=False)

    # -- public --------------------------------------------------------------------------
    def show_figure(self, figure: SketchFigure | None, message: str = "") -> None:
        """Draw ``figure`` (or clear the sketch and title it with ``message``)."""
        if _same(figure, self._figure) and message == self._message:
            return
        same_extent = (
            figure is not None
            and self._figure is not None
            and figure.east.shape == self._figure.east.shape
        )
        self._figure = figure
        self._message = message
        self.border_subtitle = message if figure is None else ""
        self._draw(refit=not same_extent)

    @staticmethod
    def key_text(figure: SketchFigure) -> str:
        """The key of the marks, shown under the sketch (letters and symbols, not colours)."""
        parts = ["◎ beginning", "• station"]
        if figure.closed:
            parts.append(f"× {figure.gap_label}")
        parts += [f"{m.letter} {m.label}" for m in figure.norths]
        return "  ".join(parts)

    def action_fit(self) -> None:
        """Frame the whole figure again."""
        self._fit()

    def action_zoom_x_in(self) -> None:  # keep the axes equal
        self.action_zoom_in()

    def action_zoom_x_out(self) -> None:
        self.action_zoom_out()

    def action_zoom_y_in(self) -> None:
        self.action_zoom_in()

    def action_zoom_y_out(self) -> None:
        self.action_zoom_out()

    def on_resize(self, event: Resize) -> None:
        self._fit(event.size)

    # -- drawing -------------------------------------------------------------------------
    def _area(self, size: Size) -> tuple[int, int]:
        """The drawing area in cells (inside the axes) for a widget of ``size``."""
        width = size.width - self.margin_left - 2
        height = size.height - self.margin_top - self.margin_bottom - 2
        return width, height

    def _fit(self, size: Size | None = None) -> None:
        fig = self._figure
        if fig is None or fig.east.size == 0:
            return
        self._fit_size = size or self.content_size
        width, height = self._area(self._fit_size)
        # the figure, then room on its right for the norths (NORTH_COLUMNS cells)
        x0, x1, y0, y1 = equal_axes_limits(fig.east, fig.north, width, height)
        per_col = (x1 - x0) / max(width, 1)
        east_max = float(np.max(fig.east)) + per_col * NORTH_COLUMNS * len(fig.norths)
        xs = np.append(fig.east, east_max)
        ys = np.append(fig.north, float(np.mean(fig.north)))
        x0, x1, y0, y1 = equal_axes_limits(xs, ys, width, height)
        self.set_xlimits(x0, x1)
        self.set_ylimits(y0, y1)
        if not self._drawing:  # the norths' places depend on the scale
            self._draw(refit=False)

    def _draw_norths(self, fig: SketchFigure) -> None:
        """The norths as short arrows beside the figure, on its right: each from its own
        base, NORTH_COLUMNS cells apart, its letter above its tip, so no letter covers another
        or the figure (the key under the sketch gives each angle)."""
        width, height = self._area(self._fit_size)
        per_col = (self._x_max - self._x_min) / max(width, 1)
        per_row = (self._y_max - self._y_min) / max(height, 1)
        if not (per_col > 0 and per_row > 0):
            return
        length = per_row * max(min(height // 3, 6), 2)
        base_y = float(np.mean(fig.north)) - length / 2
        east_max = float(np.max(fig.east))
        for i, mark in enumerate(fig.norths):
            base_x = east_max + per_col * NORTH_COLUMNS * (i + 0.6)
            a = math.radians(mark.azimuth_deg)
            tip_x, tip_y = base_x + length * math.sin(a), base_y + length * math.cos(a)
            self.plot(
                [base_x, tip_x],
                [base_y, tip_y],
                hires_mode=HiResMode.BRAILLE,
                line_style=NORTH_STYLE,
            )
            self.scatter([tip_x], [tip_y + per_row], marker=mark.letter, marker_style="bold")

    def render(self) -> RenderResult:
        """Draw the plot with one repaint of its canvas (the canvas would otherwise ask for a
        repaint after every dot, which costs more than the drawing for a long traverse)."""
        try:
            canvas = self.query_one("#plot", Canvas)
        except NoMatches:
            return super().render()
        with canvas.batch_refresh():
            return super().render()

    def _draw(self, *, refit: bool) -> None:
        self._drawing = True
        try:
            self._draw_figure(refit=refit)
        finally:
            self._drawing = False

    def _draw_figure(self, *, refit: bool) -> None:
        self.clear()
        fig = self._figure
        if fig is None or fig.east.size == 0:
            return
        if refit:
            self._fit()
        self.plot(
            fig.east,
            fig.north,
            line_style=LINE_STYLE,
            hires_mode=HiResMode.BRAILLE,
            label="record",
        )
        if fig.east.size > 1:
            self.scatter(fig.east[1:], fig.north[1:], marker="•", marker_style=LINE_STYLE)
        if fig.closed and fig.east.size > 1:
            gx = np.array([fig.east[-1], fig.east[0]])
            gy = np.array([fig.north[-1], fig.north[0]])
            self.plot(gx, gy, line_style=GAP_STYLE, hires_mode=HiResMode.QUADRANT)
            self.scatter(gx[:1], gy[:1], marker="×", marker_style=f"bold {GAP_STYLE}")
        self._draw_norths(fig)
        self.scatter(fig.east[:1], fig.north[:1], marker="◎", marker_style="bold")
