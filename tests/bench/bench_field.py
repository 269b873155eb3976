"""Benchmark of the field engine against reference libraries, side by side in one process.

Run:  python tests/bench/bench_field.py [--points 200000] [--quick] [--blas-threads N]
                                        [--rows 1000000] [--only engine|command]

``--blas-threads 1`` sets OPENBLAS_NUM_THREADS (and OMP/MKL) before numpy is imported: on a
busy machine a multithreaded BLAS slows small matrix products (lodeline's and ppigrf's alike).

Cases (the same seeded random points for every library):
  IGRF-14, 200,000 points at one date; IGRF-14, 200,000 points each with its own date;
  WMMHR2025 (degree 133), 200,000 points at one date and with mixed dates.
References: ppigrf (IGRF-14), chaosmagpy (IGRF-14 from the SHC file; WMMHR2025 by its
generic synth_values), pygeomag (WMMHR2025, pure Python, a small sample). A reference that
cannot handle the full set at once (memory, or one date per call) is timed on a sample of the
points and reported per point. lodeline's figures include the geodetic conversion, rates and
the rotation to the geodetic frame; the references' include what they compute.

The command (``--only command`` runs this part alone): ``lodeline field --csv`` as a whole
process (start-up, reading, checks, synthesis, formatting, the atomic write) on the same
points written as a CSV file (lat, lon, height_m, date), against ppigrf computing those points
in this process at one date; the same file with every point its own date against one date;
the peak memory (largest resident set of the command and its worker) on ``--rows`` rows; and
``lodeline field --lat --lon --date`` for one point, whole process (median of ten, after one
run that fills the model cache), beside ``python -c pass`` and ``import numpy``.
"""

from __future__ import annotations

import argparse
import datetime as dt
import os
import sys
import time
import warnings
from pathlib import Path


def _timeit(fn, repeat: int = 1) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def _row(label: str, seconds: float, npts: int, ours_us: float | None = None) -> str:
    us = seconds / npts * 1e6
    ratio = f"{us / ours_us:8.1f}x" if ours_us else "        "
    return f"  {label:<44} {npts:>8} pts {us:10.2f} us/pt {ratio}"


def _write_points(path: Path, lat, lon, height, dates, repeat: int = 1) -> None:
    with path.open("w", encoding="utf-8") as fh:
        fh.write("lat,lon,height_m,date\n")
        body = "".join(
            f"{a:.6f},{b:.6f},{c:.1f},{d}\n"
            for a, b, c, d in zip(lat.tolist(), lon.tolist(), height.tolist(), dates, strict=True)
        )
        for _ in range(repeat):
            fh.write(body)


def _command(*argv: str, env: dict | None = None) -> float:
    import subprocess

    code = "import sys; from lodeline.tui.cli import main; sys.exit(main(sys.argv[1:]))"
    t0 = time.perf_counter()
    subprocess.run(
        [sys.executable, "-c", code, *argv], check=True, env=env, stdout=subprocess.DEVNULL
    )
    return time.perf_counter() - t0


def _python(code: str) -> float:
    import subprocess

    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", code], check=True)
    return time.perf_counter() - t0


def bench_command(n: int, rows: int, quick: bool) -> None:
    """The whole ``field --csv`` command against ppigrf in this process (see the docstring)."""
    import statistics
    import subprocess
    import tempfile

    import numpy as np

    rng = np.random.default_rng(2024)
    lat = rng.uniform(-89.9, 89.9, n)
    lon = rng.uniform(-180.0, 180.0, n)
    height = rng.uniform(-100.0, 3000.0, n)
    first = dt.date(1900, 1, 1)
    offsets = rng.integers(0, (dt.date(2029, 12, 31) - first).days, n).tolist()
    mixed = [(first + dt.timedelta(days=k)).isoformat() for k in offsets]
    folder = Path(tempfile.mkdtemp(prefix="bench-field-"))
    env = dict(os.environ, LODELINE_CACHE=str(folder / "cache"))
    one_csv, mixed_csv = folder / "one.csv", folder / "mixed.csv"
    _write_points(one_csv, lat, lon, height, ["2012-07-01"] * n)
    _write_points(mixed_csv, lat, lon, height, mixed)
    out = str(folder / "out.csv")
    print(f"\nlodeline field --csv, whole process, {n} rows (best of 2)")
    t_one = min(_command("field", "--csv", str(one_csv), "--out", out, "--force", env=env)
                for _ in range(2))  # fmt: skip
    t_mixed = min(_command("field", "--csv", str(mixed_csv), "--out", out, "--force", env=env)
                  for _ in range(2))  # fmt: skip
    print(f"  {'command, one date (2012-07-01)':<44} {t_one:8.2f} s  {t_one / n * 1e6:7.2f} us/row")
    print(
        f"  {'command, each row its own date':<44} {t_mixed:8.2f} s  {t_mixed / n * 1e6:7.2f} us/row"
    )
    print(f"  per-point dates / one date: {t_mixed / t_one:.2f}x (goal: within 1.5x)")
    try:
        import ppigrf

        m = n if not quick else min(n, 20_000)
        t0 = time.perf_counter()
        ppigrf.igrf(lon[:m], lat[:m], height[:m] / 1000.0, dt.datetime(2012, 7, 1))
        t_pp = (time.perf_counter() - t0) * n / m
        print(f"  {'ppigrf in-process, same points, one date':<44} {t_pp:8.2f} s"
              f"{'  (from ' + str(m) + ' points)' if m < n else ''}")  # fmt: skip
        print(f"  ppigrf / command: one date {t_pp / t_one:.1f}x, each row its own date "
              f"{t_pp / t_mixed:.1f}x (goal: >= 5x; ppigrf takes one date a call)")  # fmt: skip
    except ImportError:
        print("  ppigrf not installed")
    big = folder / "big.csv"
    reps = max(1, rows // n)
    _write_points(big, lat, lon, height, mixed, repeat=reps)
    # one process between: its children are the command and the command's worker alone
    probe = (
        "import resource, subprocess, sys, time; t = time.perf_counter(); "
        "subprocess.run(sys.argv[1:], check=True, stdout=subprocess.DEVNULL); "
        "print(time.perf_counter() - t, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)"
    )
    code = "import sys; from lodeline.tui.cli import main; sys.exit(main(sys.argv[1:]))"
    argv = [sys.executable, "-c", code, "field", "--csv", str(big), "--out", out, "--force"]
    done = subprocess.run(
        [sys.executable, "-c", probe, *argv], check=True, env=env, capture_output=True, text=True
    )
    t_big, peak_kb = (float(v) for v in done.stdout.split())
    print(f"  {reps * n} rows: {t_big:.1f} s, peak resident set {peak_kb / 1024:.0f} MB "
          "(goal: under 500 MB)")  # fmt: skip
    print("\nlodeline field, one point, whole process (median of 10)")
    argv = ("field", "--lat", "41.2", "--lon", "-77.9", "--date", "1931-07-04")
    _command(*argv, env=env)  # fills the model cache
    one = statistics.median(_command(*argv, env=env) for _ in range(10))
    hr = (
        "field",
        "--lat",
        "41.2",
        "--lon",
        "-77.9",
        "--date",
        "2026-07-04",
        "--model",
        "wmmhr2025",
    )
    _command(*hr, env=env)
    one_hr = statistics.median(_command(*hr, env=env) for _ in range(10))
    bare = statistics.median(_python("pass") for _ in range(10))
    numpy_only = statistics.median(_python("import numpy") for _ in range(10))
    print(
        f"  IGRF-14 {one:.3f} s, WMMHR2025 {one_hr:.3f} s (goal: under 0.35 s); "
        f"python -c pass {bare:.3f} s, import numpy {numpy_only:.3f} s"
    )
    for p in folder.rglob("*"):
        if p.is_file():
            p.unlink()


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=200_000)
    parser.add_argument("--quick", action="store_true", help="smaller reference samples")
    parser.add_argument("--blas-threads", type=int, help="limit BLAS threads (set before numpy)")
    parser.add_argument("--rows", type=int, default=1_000_000, help="rows of the memory run")
    parser.add_argument("--only", choices=("engine", "command"), help="run one part")
    args = parser.parse_args()
    if args.blas_threads:
        for var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
            os.environ[var] = str(args.blas_threads)
    import numpy as np

    from lodeline.geo.models import load_model
    from lodeline.geo.synthesis import synthesize

    n = args.points
    if args.only == "command":
        print(f"numpy {np.__version__}; {os.cpu_count()} CPUs; {n} points")
        bench_command(n, args.rows, args.quick)
        return 0
    rng = np.random.default_rng(2024)
    lat = rng.uniform(-89.9, 89.9, n)
    lon = rng.uniform(-180.0, 180.0, n)
    h_km = np.zeros(n)
    one_year = 2012.5
    mixed_igrf = rng.uniform(1900.0, 2029.999, n)
    mixed_wmm = rng.uniform(2025.0, 2029.999, n)
    warnings.filterwarnings("ignore")
    threads = os.environ.get("OPENBLAS_NUM_THREADS", "default")
    print(f"numpy {np.__version__}; {os.cpu_count()} CPUs; BLAS threads {threads}; {n} points")
    print("  (ratio = reference time per point / lodeline time per point)")

    igrf = load_model("igrf14")
    wmmhr = load_model("wmmhr2025")
    synthesize(igrf, lat_deg=lat[:1000], lon_deg=lon[:1000], height_m=0.0, year=one_year)

    print("\nIGRF-14, one date")
    t = _timeit(lambda: synthesize(igrf, lat_deg=lat, lon_deg=lon, height_m=0.0, year=one_year), 3)
    ours = t / n * 1e6
    print(_row("lodeline", t, n))
    try:
        import ppigrf

        day = dt.datetime(2012, 7, 1, 12)
        m = n if not args.quick else min(n, 20_000)
        t = _timeit(lambda: ppigrf.igrf(lon[:m], lat[:m], h_km[:m], day))
        print(_row("ppigrf", t, m, ours))
    except ImportError:
        print("  ppigrf not installed")
    try:
        from chaosmagpy import coordinate_utils as cu
        from chaosmagpy import data_utils as du
        from chaosmagpy.chaos import BaseModel

        ref = BaseModel.from_shc(str(igrf.source), name="IGRF14")
        mjd = du.dyear_to_mjd(one_year)

        def chaos_igrf():
            for s in range(0, n, 50_000):
                r, th = cu.gg_to_geo(h_km[s : s + 50_000], 90.0 - lat[s : s + 50_000])
                br, bt, bp = ref.synth_values(mjd, r, th, lon[s : s + 50_000])
                cu.geo_to_gg(r, th, br, bt)

        t = _timeit(chaos_igrf)
        print(_row("chaosmagpy (BaseModel.from_shc)", t, n, ours))
    except ImportError:
        print("  chaosmagpy not installed")

    print("\nIGRF-14, each point its own date (1900-2029)")
    t = _timeit(lambda: synthesize(igrf, lat_deg=lat, lon_deg=lon, height_m=0.0, year=mixed_igrf))
    ours = t / n * 1e6
    print(_row("lodeline", t, n))
    try:
        import ppigrf

        k = 100 if args.quick else 400
        days = [
            dt.datetime(1900, 1, 1) + dt.timedelta(days=float((y - 1900) * 365.2425))
            for y in mixed_igrf[:k]
        ]

        def pp_mixed():
            for i in range(k):  # one call per point: ppigrf evaluates every date at every point
                ppigrf.igrf(lon[i], lat[i], 0.0, days[i])

        t = _timeit(pp_mixed)
        print(_row("ppigrf (one call per point)", t, k, ours))
    except ImportError:
        pass
    try:
        mjd_mixed = du.dyear_to_mjd(mixed_igrf)

        def chaos_mixed():
            for s in range(0, n, 50_000):
                r, th = cu.gg_to_geo(h_km[s : s + 50_000], 90.0 - lat[s : s + 50_000])
                br, bt, bp = ref.synth_values(mjd_mixed[s : s + 50_000], r, th, lon[s : s + 50_000])
                cu.geo_to_gg(r, th, br, bt)

        t = _timeit(chaos_mixed)
        print(_row("chaosmagpy (per-point times)", t, n, ours))
    except NameError:
        pass

    print("\nWMMHR2025 (degree 133), one date")
    t = _timeit(lambda: synthesize(wmmhr, lat_deg=lat, lon_deg=lon, height_m=0.0, year=2027.5))
    ours = t / n * 1e6
    print(_row("lodeline", t, n))
    coef_2027 = wmmhr.coefficients_at(2027.5)[0]
    try:
        from chaosmagpy import model_utils as mu

        m = 2_000 if args.quick else 10_000

        def chaos_hr():
            for s in range(0, m, 1_000):
                r, th = cu.gg_to_geo(h_km[s : s + 1_000], 90.0 - lat[s : s + 1_000])
                br, bt, bp = mu.synth_values(coef_2027, r, th, lon[s : s + 1_000])
                cu.geo_to_gg(r, th, br, bt)

        t = _timeit(chaos_hr)
        print(_row("chaosmagpy (model_utils.synth_values)", t, m, ours))
    except NameError:
        pass
    try:
        import pygeomag

        path = os.path.join(os.path.dirname(pygeomag.__file__), "wmm", "WMMHR_2025.COF")
        gm = pygeomag.GeoMag(coefficients_file=path, high_resolution=True)
        k = 5 if args.quick else 20
        t = _timeit(lambda: [gm.calculate(lat[i], lon[i], 0.0, 2027.5) for i in range(k)])
        print(_row("pygeomag (pure Python)", t, k, ours))
    except ImportError:
        pass

    print("\nWMMHR2025 (degree 133), each point its own date (2025-2029)")
    t = _timeit(lambda: synthesize(wmmhr, lat_deg=lat, lon_deg=lon, height_m=0.0, year=mixed_wmm))
    print(_row("lodeline", t, n))
    if args.only != "engine":
        bench_command(n, args.rows, args.quick)
    return 0


if __name__ == "__main__":
    sys.exit(main())
