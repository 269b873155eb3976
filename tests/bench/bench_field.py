"""Benchmark of the field engine against reference libraries, side by side in one process.

Run:  python tests/bench/bench_field.py [--points 200000] [--quick] [--blas-threads N]

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
"""

from __future__ import annotations

import argparse
import datetime as dt
import os
import sys
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))


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


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=200_000)
    parser.add_argument("--quick", action="store_true", help="smaller reference samples")
    parser.add_argument("--blas-threads", type=int, help="limit BLAS threads (set before numpy)")
    args = parser.parse_args()
    if args.blas_threads:
        for var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
            os.environ[var] = str(args.blas_threads)
    import numpy as np

    from geo.models import load_model
    from geo.synthesis import synthesize

    n = args.points
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
    return 0


if __name__ == "__main__":
    sys.exit(main())
