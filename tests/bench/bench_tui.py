"""Speed of the terminal application: a keystroke on a 200-course document, opening 5,000.

Run: ``python tests/bench/bench_tui.py`` (not collected by pytest). Prints, for each figure,
the time, the budget of the design (50 ms per keystroke, 2 s to open) and the ratio to a
reference measured side by side in the same process: for a keystroke, Textual redrawing the
same screen with nothing changed (the floor any keystroke pays); for opening, the same
application opening a 3-course document (the start-up floor).

A keystroke is measured as the user feels it: the edit of the call (a new length for course
101, different at every keystroke), the recomputation of every finding through geo (one
vectorised conversion of the whole document), the update of the table and panels, and the screen redraw, up to the end of the frame that shows it (Textual's
pilot sleeps while it waits for the screen; those sleeps are not counted). Typing is debounced
in the application (the recomputation starts after a pause); the debounce delay itself is not
counted. While the user types, the sketch is drawn once typing pauses a little longer
(``SKETCH_PAUSE_S``); it is timed from the end of that pause to the end of its frame.

The documents are generated in a temporary folder: an invented closed figure (a regular
polygon of 4-perch courses in magnetic bearings of 1925, converted to 2025 with IGRF-14 and
WMM2025), and the same figure recorded in 2025 on WMMHR2025 (degree 133, the costliest model
to evaluate).
"""

from __future__ import annotations

import asyncio
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

from lodeline.geo.bearings import format_bearing  # noqa: E402
from lodeline.tui.app import LodelineApp, load_workspace  # noqa: E402
from lodeline.tui.results import compute_results  # noqa: E402
from lodeline.tui.screens.desk import Desk  # noqa: E402

SIZE = (160, 45)


def make_document(path: Path, courses: int, model: str | None = None) -> Path:
    """Write an invented closed traverse of ``courses`` courses (a regular polygon); with
    ``model``, a recent record and both dates on that field model."""
    lines = [
        "format_version = 1",
        f'title = "Bench figure of {courses} courses, Wrenmoor Flats"',
        "closed = true",
        "",
        "[place]",
        "lat = 40.5",
        "lon = -77.5",
        "",
        "[record]",
        'reference = "magnetic"',
        'date = "1925-06-01"',
        'distance_unit = "perch"',
        'foot = "us"',
        "",
        "[target]",
        'date = "2025-06-01"',
    ]
    if model is not None:
        at = lines.index('date = "1925-06-01"')
        lines[at : at + 1] = ['date = "2025-03-01"', f'model = "{model}"']
        lines.append(f'model = "{model}"')
    for i in range(courses):
        az = (360.0 * i / courses + 90.0) % 360.0
        bearing = format_bearing(az, precision=1.0 / 60.0, ascii=True)
        lines += ["", "[[course]]", f'call = "{bearing} 4 perches"']
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


#: End times of the frames the desk has written (see :func:`_note_frames`).
FRAMES: list[float] = []
#: (revision, complete) -> when a desk first showed those results (see :func:`_note_frames`).
APPLIED: dict[tuple[int, bool], float] = {}
#: revision -> when a desk started drawing its sketch (see :func:`_note_frames`).
SKETCH_START: dict[int, float] = {}


def _note_frames() -> None:
    """Make every desk note in FRAMES when it has written a frame (the end of the screen's
    compositor refresh), and in APPLIED when it has shown results, from its creation on (a
    desk may show results before the pilot hands over)."""
    paint = Desk._compositor_refresh
    create = Desk.__init__
    sketch = Desk._show_sketch

    def sketching(self, results, revision: int) -> None:
        SKETCH_START.setdefault(revision, time.perf_counter())
        sketch(self, results, revision)

    def painted(self) -> None:
        paint(self)
        FRAMES.append(time.perf_counter())
        _wake()

    def applied(revision: int, final: bool) -> None:
        APPLIED.setdefault((revision, final), time.perf_counter())
        _wake()

    def created(self, *args, **kwargs) -> None:
        create(self, *args, **kwargs)
        self.on_applied = applied

    Desk._compositor_refresh = painted
    Desk.__init__ = created
    Desk._show_sketch = sketching


#: Set when a desk writes a frame or shows results (see :func:`_frame_showing`).
_NEWS: list[asyncio.Event] = []


def _wake() -> None:
    for event in _NEWS:
        event.set()


async def _next_news() -> None:
    """Wait for the next frame or results of a desk, doing nothing meanwhile."""
    event = asyncio.Event()
    _NEWS.append(event)
    try:
        await asyncio.wait_for(event.wait(), timeout=30.0)
    finally:
        _NEWS.remove(event)


async def _frame_showing(revision: int, final: bool) -> float:
    """When the frame that shows the results of ``revision`` (the first shown, or with
    ``final`` the complete ones) was written.

    A figure is the time from the edit to the end of the first frame written after the desk
    applied the results. The bench waits for it on an event the desk's own hooks set, not
    with Textual's pilot pause: the pause asks every widget on the screen whether it is idle
    (some hundred messages), work that would delay the frame being measured.
    """
    while True:
        applied = APPLIED.get((revision, final))
        if applied is not None:
            shown = [t for t in FRAMES if t >= applied]
            if shown:
                return shown[0]
        await _next_news()


async def _keystrokes(path: Path, n: int) -> tuple[list[float], list[float], list[float]]:
    for seen in (FRAMES, APPLIED, SKETCH_START):  # revisions start again in a new application
        seen.clear()
    app = LodelineApp(load_workspace(path))
    table: list[float] = []
    sketch: list[float] = []
    floor: list[float] = []
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause(0.5)
        await app.workers.wait_for_complete()
        desk = app.desk
        ws = app.workspace
        base = ws.courses[100]["call"]
        for k in range(n):
            # reference: a redraw of the same screen with nothing changed
            FRAMES.clear()
            t0 = time.perf_counter()
            desk.refresh()
            while not FRAMES:
                await _next_news()
            floor.append(FRAMES[0] - t0)
            await pilot.pause()  # let the screen settle before the keystroke
            # a keystroke in course 101 (a digit of its distance), then the recomputation the
            # debounce starts; every keystroke gives a length not seen before, so every
            # station after course 101 moves to where no field has been computed yet
            text = base.replace("4 perches", f"4.{k + 1:02d} perches")
            t0 = time.perf_counter()
            ws.set_course_field(100, "call", text, session=1)
            desk.recompute_typed()
            table.append(await _frame_showing(ws.revision, final=False) - t0)
            shown = await _frame_showing(ws.revision, final=True)
            sketch.append(shown - SKETCH_START[ws.revision])
    return table, sketch, floor


async def _open(path: Path) -> tuple[float, float, float, float]:
    FRAMES.clear()
    APPLIED.clear()
    t0 = time.perf_counter()
    app = LodelineApp(load_workspace(path))
    async with app.run_test(size=SIZE) as pilot:
        desk = app.desk
        while not FRAMES:
            await _next_news()
        first_screen = FRAMES[0] - t0
        converted = await _frame_showing(app.workspace.revision, final=False) - t0
        closed = await _frame_showing(app.workspace.revision, final=True) - t0
        await pilot.pause()
        FRAMES.clear()
        t1 = time.perf_counter()
        desk.refresh()
        while not FRAMES:
            await _next_news()
        floor = FRAMES[0] - t1
    return first_screen, converted, closed, floor


def _timed(fn, times: int) -> list[float]:
    """Seconds taken by each of ``times`` calls of ``fn``."""
    out = []
    for _ in range(times):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return out


def main() -> int:
    _note_frames()
    os.environ.setdefault("LODELINE_STATE", tempfile.mkdtemp(prefix="lodeline-bench-state-"))
    with tempfile.TemporaryDirectory() as tmp:
        small = make_document(Path(tmp) / "bench200.toml", 200)
        large = make_document(Path(tmp) / "bench5000.toml", 5000)

        ws = load_workspace(small)
        compute_results(ws.doc, path=small)  # the first call loads the models and the CRS
        base = ws.courses[100]["call"]
        lengths = iter(range(50, 100))

        def edit_and_compute() -> None:  # a new length for course 101, as in the keystrokes
            text = base.replace("4 perches", f"4.{next(lengths)} perches")
            ws.set_course_field(100, "call", text, session=1)
            compute_results(ws.doc, path=small)

        core = statistics.median(_timed(edit_and_compute, 20))

        table, sketch, floor = asyncio.run(_keystrokes(small, 20))
        ref = statistics.median(floor)

        def line(label: str, values: list[float]) -> None:
            med = statistics.median(values)
            p90 = sorted(values)[int(0.9 * len(values)) - 1]
            print(
                f"  {label:26s}{med * 1e3:7.1f} ms (90%: {p90 * 1e3:6.1f})   budget 50 ms: "
                f"ratio {med / 0.050:5.2f}   to idle redraw: {med / ref:5.2f}"
            )

        print("keystroke on a 200-course document (edit + recompute + redraw)")
        print(
            f"  compute_results alone     {core * 1e3:7.1f} ms (both stages, no screen, same edits)"
        )
        line("table and every panel", table)
        line("sketch, after the pause", sketch)
        print(f"  reference: idle redraw    {ref * 1e3:7.1f} ms")
        high = make_document(Path(tmp) / "bench200hr.toml", 200, model="wmmhr2025")
        table_hr, _sketch_hr, floor_hr = asyncio.run(_keystrokes(high, 20))
        ref = statistics.median(floor_hr)
        print("the same on WMMHR2025 (degree 133; record 2025, target 2025)")
        line("table and every panel", table_hr)

        t0 = time.perf_counter()
        ws5 = load_workspace(large)
        load = time.perf_counter() - t0
        t0 = time.perf_counter()
        compute_results(ws5.doc, path=large)
        core5 = time.perf_counter() - t0
        tiny = make_document(Path(tmp) / "bench3.toml", 3)
        asyncio.run(_open(tiny))  # warm the imports and caches
        tiny_open = asyncio.run(_open(tiny))[0]
        first, converted, closed, floor5 = asyncio.run(_open(large))
        print("opening a 5,000-course document")
        print(f"  read the document         {load * 1e3:7.1f} ms")
        print(f"  compute_results alone     {core5 * 1e3:7.1f} ms (both stages, no screen)")
        for label, value in (
            ("screen with every call", first),
            ("bearings in the table", converted),
            ("closure and sketch", closed),
        ):
            print(
                f"  {label:26s}{value * 1e3:7.1f} ms   budget 2000 ms: ratio {value / 2.0:5.2f}"
                f"   to a 3-course open: {value / tiny_open:5.2f}"
            )
        print(f"  reference: 3-course open  {tiny_open * 1e3:7.1f} ms (Textual start-up floor)")
        print(f"  reference: idle redraw    {floor5 * 1e3:7.1f} ms")
        print(f"(regular polygon of 4-perch courses; terminal {SIZE[0]}x{SIZE[1]}; 20 keystrokes)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
