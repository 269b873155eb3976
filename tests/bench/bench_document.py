"""Speed of the document pipeline: load, convert and close a traverse of 200 and 5,000 courses.

Run: ``python tests/bench/bench_document.py [--repeat 5]`` (not collected by pytest). Prints, for
each size, the time of

- ``load``: :func:`lodeline.geo.document.load_document` of the file (TOML, schema, every call parsed),
  with the parsed-course cache and the field engine's memory of computed points emptied
  first (opening a document);
- ``convert``: :func:`lodeline.geo.north.convert_document` right after the load (the courses are then
  cached, as in the terminal application after a keystroke);
- ``close``: :func:`lodeline.geo.survey.close_document` of that conversion;

with the budgets of the terminal application as ratios (open = load + convert + close of 5,000
courses in 2 s; recompute = convert + close of 200 courses after a keystroke in 50 ms; the
redraw that follows is measured by bench_tui.py). For comparison, the same process times pyproj alone doing exactly
the projection work the conversion asked of :mod:`lodeline.geo.grid` (the same number of forward and
inverse transforms and ``get_factors`` calls, on the same points) and prints the ratio: how
many times that irreducible projection work the whole conversion takes.

The documents are generated and invented: an open cruise line in chains, a magnetic record of
1925, short courses, starting at 44.1 N, 72.9 W.
"""

from __future__ import annotations

import argparse
import random
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np  # noqa: E402
from pyproj import CRS, Proj, Transformer  # noqa: E402

from lodeline.geo import document as _document  # noqa: E402
from lodeline.geo import grid as _grid  # noqa: E402
from lodeline.geo.document import load_document  # noqa: E402
from lodeline.geo.models import load_model  # noqa: E402
from lodeline.geo.north import convert_document  # noqa: E402
from lodeline.geo.survey import close_document  # noqa: E402

TARGET_DATE = "2025-06-01"


def make_document(path: Path, courses: int, seed: int = 1925) -> Path:
    """Write an invented cruise line of ``courses`` short courses in chains (magnetic, 1925)."""
    rng = random.Random(seed)
    lines = [
        "format_version = 1",
        f'title = "Bench cruise line of {courses} courses, Hollins Brook lot"',
        "closed = false",
        "",
        "[place]",
        "lat = 44.1",
        "lon = -72.9",
        "",
        "[record]",
        'reference = "magnetic"',
        'date = "1925-10-03"',
        'distance_unit = "chain"',
        'foot = "us"',
    ]
    for _ in range(courses):
        ns, ew = rng.choice("NS"), rng.choice("EW")
        call = f"{ns} {rng.randint(0, 89)} {rng.randint(0, 59)} {ew} {rng.randint(1, 99) / 100:.2f} chains"
        lines += ["", "[[course]]", f'call = "{call}"']
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _once(path: Path) -> tuple[float, float, float, object]:
    _document._parse_course_cached.cache_clear()
    for name in ("igrf14", "wmm2025"):  # the field at every station computed afresh
        load_model(name)._cache.pop("points", None)
    t0 = time.perf_counter()
    doc = load_document(path)
    t1 = time.perf_counter()
    conv = convert_document(doc, target_date=TARGET_DATE)
    t2 = time.perf_counter()
    close_document(conv)
    t3 = time.perf_counter()
    return t1 - t0, t2 - t1, t3 - t2, doc


def _grid_work(doc) -> list[tuple[str, str, np.ndarray, np.ndarray]]:
    """Record the lodeline.geo.grid calls one conversion makes: (kind, crs, first, second) arrays."""
    calls: list[tuple[str, str, np.ndarray, np.ndarray]] = []
    originals = (_grid.grid_factors, _grid.to_grid, _grid.to_geographic)

    def factors(crs, *, lat, lon, height_m=0.0):
        calls.append(("factors", crs, np.atleast_1d(lat).copy(), np.atleast_1d(lon).copy()))
        return originals[0](crs, lat=lat, lon=lon, height_m=height_m)

    def forward(crs, *, lat, lon):
        calls.append(("forward", crs, np.atleast_1d(lat).copy(), np.atleast_1d(lon).copy()))
        return originals[1](crs, lat=lat, lon=lon)

    def inverse(crs, *, easting, northing):
        e, n = np.atleast_1d(easting).copy(), np.atleast_1d(northing).copy()
        calls.append(("inverse", crs, e, n))
        return originals[2](crs, easting=easting, northing=northing)

    _grid.grid_factors, _grid.to_grid, _grid.to_geographic = factors, forward, inverse
    try:
        convert_document(doc, target_date=TARGET_DATE)
    finally:
        _grid.grid_factors, _grid.to_grid, _grid.to_geographic = originals
    return calls


def _pyproj_time(calls: list[tuple[str, str, np.ndarray, np.ndarray]], repeat: int) -> float:
    """Best time of pyproj alone doing the recorded work (transformers built beforehand)."""
    built: dict[str, tuple[Transformer, Transformer, Transformer, Proj]] = {}
    for _, crs, _, _ in calls:
        if crs not in built:
            c = CRS.from_user_input(crs)
            built[crs] = (
                Transformer.from_crs("EPSG:4326", c, always_xy=True),
                Transformer.from_crs(c, "EPSG:4326", always_xy=True),
                Transformer.from_crs("EPSG:4326", c.geodetic_crs, always_xy=True),
                Proj(c),
            )
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        for kind, crs, a, b in calls:
            fwd, inv, base, proj = built[crs]
            if kind == "factors":  # lodeline.geo.grid evaluates the factors on the CRS's own datum
                blon, blat = base.transform(b, a)
                proj.get_factors(blon, blat)
            elif kind == "forward":
                fwd.transform(b, a)
            else:
                inv.transform(a, b)
        best = min(best, time.perf_counter() - t0)
    return best


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5, help="runs per size (default 5)")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        for courses in (200, 5000):
            path = make_document(Path(tmp) / f"cruise{courses}.toml", courses)
            _once(path)  # imports, model tables and transformers built once, as in a session
            runs = [_once(path) for _ in range(max(1, args.repeat))]
            doc = runs[-1][3]
            load = [r[0] for r in runs]
            conv = [r[1] for r in runs]
            close = [r[2] for r in runs]
            total = [r[0] + r[1] + r[2] for r in runs]
            calls = _grid_work(doc)
            ref = _pyproj_time(calls, max(3, args.repeat))
            points = sum(c[2].size for c in calls)
            print(f"{courses} courses ({args.repeat} runs; median, best)")
            for label, values in (("load", load), ("convert", conv), ("close", close)):
                print(
                    f"  {label:9s}{statistics.median(values) * 1e3:9.1f} ms"
                    f"{min(values) * 1e3:9.1f} ms"
                )
            opened = statistics.median(total)
            recompute = statistics.median([r[1] + r[2] for r in runs])
            open_budget = f"; budget 2000 ms: ratio {opened / 2.0:.2f}" if courses >= 5000 else ""
            key_budget = f"; budget 50 ms: ratio {recompute / 0.050:.2f}" if courses < 5000 else ""
            print(f"  {'open':9s}{opened * 1e3:9.1f} ms   (load + convert + close{open_budget})")
            print(f"  {'recompute':9s}{recompute * 1e3:9.1f} ms   (convert + close{key_budget})")
            kinds = {
                k: sum(1 for c in calls if c[0] == k) for k in ("factors", "forward", "inverse")
            }
            print(
                f"  pyproj alone, the same projection work ({kinds['factors']} get_factors, "
                f"{kinds['forward']} forward, {kinds['inverse']} inverse calls, {points} points): "
                f"{ref * 1e3:.2f} ms; convert / pyproj = {statistics.median(conv) / ref:.1f}"
            )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
