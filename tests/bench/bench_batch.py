"""Speed of batch work, whole process: a folder of deeds summarised, and one long document.

Run: ``python tests/bench/bench_batch.py [--documents 10000] [--jobs 2] [--old CHECKOUT]``
(not collected by pytest). In a temporary folder it generates, then times as whole processes
(``python -m lodeline …``, imports and model loading included):

- ``close DIR --summary OUT.csv --jobs N`` on ``--documents`` invented deeds of ``--courses``
  courses each (goal: 10,000 documents of 10 courses in under 60 s on two cores), and beside
  it ppigrf computing IGRF at the courses' starting points and dates in this process (the
  irreducible field work of the conversion, done by a reference library), with the ratio;
- ``convert --json``, ``close --json`` and ``export --geojson --csv`` of one document of
  ``--long`` courses (goal: ``convert --json`` of 50,000 courses in under 5 s).

``--old CHECKOUT`` runs the same commands with that checkout of the program first on the
import path (for example an earlier commit, ``git worktree add /tmp/old main``) and prints its
times and the ratio beside. The documents are generated and invented: decagons of short
courses in rods recorded with a compass in 1925 around 44 N, 73 W, each at its own place.
"""

from __future__ import annotations

import argparse
import datetime
import os
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_document import make_document  # noqa: E402

RECORD_DATE = "1925-06-01"


def _bearing(azimuth: float) -> str:
    """A quadrant bearing in whole degrees and minutes for an azimuth in degrees."""
    az = azimuth % 360.0
    ns = "N" if az <= 90 or az >= 270 else "S"
    ew = "E" if az < 180 else "W"
    angle = {("N", "E"): az, ("S", "E"): 180 - az, ("S", "W"): az - 180, ("N", "W"): 360 - az}
    a = min(89.98, max(0.0, angle[ns, ew]))
    deg, minutes = int(a), round((a - int(a)) * 60)
    if minutes == 60:
        deg, minutes = deg + 1, 0
    return f"{ns} {deg} {minutes} {ew}"


def make_deeds(folder: Path, documents: int, courses: int, seed: int = 1925) -> list[tuple]:
    """Write ``documents`` invented closed deeds; return the (lat, lon) of every course start."""
    rng = random.Random(seed)
    starts = []
    for k in range(documents):
        lat, lon = 44.0 + rng.random(), -73.0 + rng.random()
        lines = [
            "format_version = 1",
            f'title = "Bench deed {k}, Harlow Mill lot {k % 97}"',
            "closed = true",
            "",
            "[place]",
            f"lat = {lat:.5f}",
            f"lon = {lon:.5f}",
            "",
            "[record]",
            'reference = "magnetic"',
            f'date = "{RECORD_DATE}"',
            'distance_unit = "rod"',
            'foot = "us"',
        ]
        for i in range(courses):
            az = 360.0 * i / courses + rng.uniform(-0.5, 0.5)
            lines += [
                "",
                "[[course]]",
                f'call = "{_bearing(az)} {rng.uniform(39.5, 40.5):.1f} rods"',
            ]
            starts.append((lat, lon))
        sub = folder / f"box{k // 1000:02d}"
        sub.mkdir(exist_ok=True)
        (sub / f"deed{k:05d}.toml").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return starts


def _timed(args: list[str], checkout: Path | None, cwd: Path) -> float:
    """Seconds of one whole command: the installed ``lodeline`` (``checkout`` None), or an
    earlier checkout from before the install name, run from its folders (``-m tui.cli``)."""
    if checkout is None:
        env, module = dict(os.environ), "lodeline"
    else:
        env, module = dict(os.environ, PYTHONPATH=str(checkout)), "tui.cli"
    t0 = time.perf_counter()
    done = subprocess.run(
        [sys.executable, "-m", module, *args],
        cwd=cwd,
        env=env,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )
    elapsed = time.perf_counter() - t0
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(args)}: exit {done.returncode}: {done.stderr.strip()}")
    return elapsed


def _ppigrf_time(starts: list[tuple]) -> float:
    """ppigrf's IGRF at every course start (one call over all the points, the record date)."""
    import numpy as np
    import ppigrf

    lat = np.array([s[0] for s in starts])
    lon = np.array([s[1] for s in starts])
    when = datetime.datetime.fromisoformat(RECORD_DATE)
    t0 = time.perf_counter()
    ppigrf.igrf(lon, lat, np.zeros_like(lat), when)
    return time.perf_counter() - t0


def _line(label: str, new: float, old: float | None, goal: float | None) -> str:
    text = f"  {label:34s}{new:8.2f} s"
    if old is not None:
        text += f"   before {old:8.2f} s   ({old / new:.1f}x faster)"
    if goal is not None:
        text += f"   goal {goal:g} s: ratio {new / goal:.2f}"
    return text


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--documents", type=int, default=10_000, help="deeds in the folder")
    parser.add_argument("--courses", type=int, default=10, help="courses a deed (default 10)")
    parser.add_argument("--jobs", type=int, default=2, help="worker processes (default 2)")
    parser.add_argument("--long", type=int, default=50_000, help="courses of the long document")
    parser.add_argument("--old", type=Path, help="an earlier checkout to time beside")
    parser.add_argument("--skip-folder", action="store_true", help="only the long document")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        if not args.skip_folder:
            folder = work / "deeds"
            folder.mkdir()
            starts = make_deeds(folder, args.documents, args.courses)
            new = _timed(
                ["close", str(folder), "--summary", str(work / "s.csv"), "--jobs", str(args.jobs)],
                None,
                work,
            )
            ref = _ppigrf_time(starts)
            print(
                f"folder of {args.documents:,} deeds of {args.courses} courses, "
                f"--jobs {args.jobs} ({os.cpu_count()} cores here)"
            )
            print(_line("close DIR --summary", new, None, 60.0))
            print(
                f"  {'per document':34s}{new / args.documents * 1e3:8.2f} ms; ppigrf alone at "
                f"the {len(starts):,} course starts {ref:.2f} s in-process: summary / ppigrf = "
                f"{new / ref:.1f}"
            )
        long_doc = make_document(work / "long.toml", args.long)
        print(f"one document of {args.long:,} courses (whole process)")
        runs = (
            ("convert --json", ["convert", str(long_doc), "--json"], 5.0),
            ("close --json", ["close", str(long_doc), "--json", "--adjust", "none"], None),
            (
                "export --geojson --csv",
                ["export", str(long_doc), "--geojson", "o.geojson", "--csv", "o.csv", "--force"],
                None,
            ),
        )
        for label, command, goal in runs:
            new = _timed(command, None, work)
            old = _timed(command, args.old, work) if args.old else None
            print(_line(label, new, old, goal))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
