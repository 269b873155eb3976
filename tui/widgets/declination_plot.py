"""DeclinationPlot: D at the point of beginning against the year (textual-plot), with the
record and target dates as vertical lines and the fit's empirical declination with its band."""

from __future__ import annotations

import numpy as np
from textual_hires_canvas import HiResMode
from textual_plot import PlotWidget

CURVE_STYLE = "bold cyan"
NEEDLE_STYLE = "bold yellow"
BAND_STYLE = "dim yellow"
DATE_STYLE = "white"


class DeclinationPlot(PlotWidget):
    """The declination history (see :class:`tui.retrace_view.RetraceView`)."""

    DEFAULT_CSS = "DeclinationPlot { height: 16; border: round $foreground 30%; }"

    def on_mount(self) -> None:
        super().on_mount()
        self.margin_left = 8
        self.margin_bottom = 2
        self.set_xlabel("year")
        self.set_ylabel("D (°, east +)")

    def show_view(self, view) -> None:  # noqa: ANN001 - a RetraceView
        """Draw the view's series (nothing when it has none)."""
        self.clear()
        if view.years is None or view.declination_deg is None:
            return
        t, d = view.years, view.declination_deg
        ok = np.isfinite(d)
        edges = np.flatnonzero(np.diff(np.concatenate([[0], ok.astype(int), [0]])))
        for a, b in zip(edges[::2], edges[1::2], strict=True):
            self.plot(t[a:b], d[a:b], line_style=CURVE_STYLE, hires_mode=HiResMode.BRAILLE)
        lo, hi = float(t[0]), float(t[-1])
        if view.empirical_deg is not None:
            e = view.empirical_deg
            self.plot([lo, hi], [e, e], line_style=NEEDLE_STYLE, hires_mode=HiResMode.BRAILLE)
            if view.band_deg:
                for v in (e - view.band_deg, e + view.band_deg):
                    self.plot([lo, hi], [v, v], line_style=BAND_STYLE, hires_mode=HiResMode.BRAILLE)
        for year in (view.record_year, view.target_year):
            if year is not None and lo <= year <= hi:
                self.add_v_line(year, line_style=DATE_STYLE)
        values = list(d[ok]) + ([view.empirical_deg] if view.empirical_deg is not None else [])
        if values:
            pad = max(0.5, 0.08 * (max(values) - min(values)))
            self.set_ylimits(min(values) - pad, max(values) + pad)
        self.set_xlimits(lo, hi)
