"""Benchmark of the declination history (300 dates at one place) and the survey-date estimate.

Run:  python tests/bench/bench_history.py [--repeat 5]

lodeline evaluates every date in one call of lodeline.geo.magnetic.field_at
(lodeline.geo.field_history.declination_history); ppigrf, the reference, is given the same dates as
one array of datetimes at the same place. The survey-date estimate samples every installed
model's interval every 0.1 year (IGRF-14: 1,300 dates), first without and then with the
histories kept from an earlier call (what the desk's fit panel sees on each keystroke).
Prints the median time of each and the ratio.
"""

from __future__ import annotations

import argparse
import datetime as dt
import statistics
import time

import numpy as np  # noqa: E402


def _median(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    import ppigrf

    from lodeline.geo import field_history
    from lodeline.geo.field_history import declination_history, model_histories

    lat, lon = 38.62, -80.91
    years = np.linspace(1901.0, 2029.0, 300)
    dates = [dt.datetime(int(y), 1, 1) + dt.timedelta(days=(y % 1) * 365.0) for y in years]
    declination_history(lat=lat, lon=lon, years=years)  # load the model once
    ours = _median(lambda: declination_history(lat=lat, lon=lon, years=years), args.repeat)

    def reference() -> None:
        be, bn, _ = ppigrf.igrf(lon, lat, 0.0, dates)
        np.degrees(np.arctan2(np.ravel(be), np.ravel(bn)))

    ref = _median(reference, args.repeat)
    print(
        f"history, {years.size} dates at one place: lodeline {ours * 1e3:.2f} ms, "
        f"ppigrf {ref * 1e3:.2f} ms, ratio {ref / ours:.1f}x"
    )

    def cold() -> None:
        field_history._KEPT.clear()
        model_histories(lat=lat, lon=lon)

    c = _median(cold, args.repeat)
    w = _median(lambda: model_histories(lat=lat, lon=lon), args.repeat)
    print(
        f"survey-date histories (every installed model, 0.1 year): {c * 1e3:.1f} ms afresh, "
        f"{w * 1e3:.3f} ms kept"
    )


if __name__ == "__main__":
    main()
