"""The stakeout list checked against pyproj's geodesic and an independent IGRF (ppigrf)."""

from __future__ import annotations

import csv
import datetime as dt
import io
import json
import math
from pathlib import Path

import numpy as np
import pytest
from pyproj import Geod

from lodeline.geo.document import load_document
from lodeline.geo.north import convert_document
from lodeline.geo.retrace import restore_document
from lodeline.geo.stakeout import COLUMNS, stakeout_list

DEMOS = Path(__file__).resolve().parent.parent / "demo_traverses"
WGS84 = Geod(ellps="WGS84")


def _ppigrf_declination(lat: float, lon: float, day: dt.date, height_m: float) -> float:
    """D (deg, east positive) from ppigrf's IGRF (reference library, test only)."""
    ppigrf = pytest.importorskip("ppigrf")
    be, bn, _ = ppigrf.igrf(lon, lat, height_m / 1000.0, dt.datetime(day.year, day.month, day.day))
    return math.degrees(math.atan2(float(np.ravel(be)[0]), float(np.ravel(bn)[0])))


def _demo(name: str, origin: str = "nearest"):
    path = DEMOS / name
    conv = convert_document(load_document(path), file=str(path), target_date="2025-10-01")
    res = restore_document(conv)
    return conv, res, stakeout_list(conv, res, origin=origin)


@pytest.mark.reference
@pytest.mark.parametrize("origin", ["nearest", "previous"])
def test_lines_against_the_geodesic_and_ppigrf(origin):
    conv, res, sl = _demo("wrenfield_glebe_1911.toml", origin)
    assert sl.lines, "the demo has corners to set"
    h = conv.height_m
    for ln in sl.lines:
        a = res.corners[ln.start]
        b = res.corners[ln.target]
        fwd, _, dist = WGS84.inv(a.lon, a.lat, b.lon, b.lat)
        # true azimuth: grid chord + gamma equals the geodesic azimuth to the arc-to-chord
        # correction, well under 2 seconds on lines of a few hundred metres
        assert ln.true_azimuth_deg == pytest.approx(fwd % 360.0, abs=2.0 / 3600.0)
        # ground distance: the ellipsoidal distance raised to the ground (R + h) / R
        # (common practice; R = 6371 km is within 0.3 % of the radius used, a part in 10^7)
        assert ln.distance_m == pytest.approx(dist * (6_371_000.0 + h) / 6_371_000.0, rel=2e-6)
        d = _ppigrf_declination(a.lat, a.lon, dt.date(2025, 10, 1), h)
        assert ln.magnetic_azimuth_deg == pytest.approx((fwd - d) % 360.0, abs=2e-3)
        assert (ln.lat, ln.lon) == (b.lat, b.lon)


def test_only_corners_to_set_are_listed_and_nearest_starts_from_a_found_corner():
    _, res, sl = _demo("wrenfield_glebe_1911.toml")
    targets = {ln.target for ln in sl.lines}
    assert targets == {c.index for c in res.restored}
    for ln in sl.lines:
        assert ln.start_status in ("found", "held")
    _, _, prev = _demo("wrenfield_glebe_1911.toml", "previous")
    n = len(res.corners)
    assert all(ln.start == (ln.target - 1) % n for ln in prev.lines)


def test_reading_is_the_way_a_crew_calls_it():
    conv, _, sl = _demo("ashgrove_hollow_1796.toml")
    (ln,) = sl.lines
    assert ln.reading == (
        f"from corner 1, {ln.magnetic_bearing} (magnetic), {ln.distance_record:.2f} perches "
        f"({ln.distance_m:.2f} m) to corner 0, a restored point of beginning"
    )
    assert ln.magnetic_bearing.startswith("S ") and "′" in ln.magnetic_bearing
    # perches of 16.5 US survey feet (exact definition)
    assert ln.distance_record == pytest.approx(ln.distance_m / (16.5 * 1200 / 3937), rel=1e-12)


def test_json_and_csv_carry_every_line():
    _, _, sl = _demo("wrenfield_glebe_1911.toml")
    obj = json.loads(json.dumps(sl.as_dict()))
    assert obj["target_date"] == "2025-10-01"
    assert len(obj["lines"]) == len(sl.lines)
    rows = list(csv.reader(io.StringIO(sl.csv_text())))
    assert tuple(rows[0]) == COLUMNS
    assert len(rows) == len(sl.lines) + 1
    first = dict(zip(COLUMNS, rows[1], strict=True))
    assert float(first["distance_m"]) == sl.lines[0].distance_m
