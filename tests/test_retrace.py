"""Retracement: gaps at found corners, open lines closed on a found end, lost corners restored."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pyproj import Proj, Transformer

from lodeline.geo.document import document_from_dict, load_document
from lodeline.geo.north import convert_document
from lodeline.geo.retrace import (
    found_gaps,
    proportion_run,
    restore_corners,
    restore_document,
    rotate_scale_run,
)
from lodeline.geo.survey import close_document

DEMOS = Path(__file__).resolve().parent.parent / "demo_traverses"
CRS = "EPSG:32617"
E0, N0 = 500_000.0 + 21_000.0, 4_420_000.0  # a point of beginning in UTM zone 17N
CHAIN_M = 66 * 1200 / 3937  # Gunter's chain of 66 US survey feet (exact definition)


def _doc(courses, *, closed=False, place=None, unit="chain"):
    return document_from_dict(
        {
            "format_version": 1,
            "title": "check",
            "closed": closed,
            "place": place or {"easting": E0, "northing": N0, "height_m": 0.0},
            "grid": {"crs": CRS},
            "record": {"reference": "grid", "distance_unit": unit, "foot": "us"},
            "course": courses,
        }
    )


def _k(easting: float, northing: float) -> float:
    """Point scale factor of UTM 17N from pyproj's own factors (independent of lodeline.geo.grid)."""
    lon, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(easting, northing)
    return Proj(CRS).get_factors(lon, lat).meridional_scale


# ---------------------------------------------------------------------------------------------
# Single proportionate measurement (pure arithmetic)
# ---------------------------------------------------------------------------------------------


def test_single_proportion_worked_example():
    # Worked example written for this test from the published formula of single proportionate
    # measurement (U.S. Bureau of Land Management, Manual of Surveying Instructions, 2009,
    # chapter 7, "proportionate measurement"; section number 7-20 from memory):
    #   proportioned distance = record distance x measured distance / record distance,
    # all between the two found corners. Record: A to the lost corner 20.00 chains, the lost
    # corner to B 60.00 chains (80.00 chains A to B, due north); found A to B: 79.20 chains on
    # N 1 deg E. Proportioned A to the lost corner: 20.00 x 79.20 / 80.00 = 19.80 chains, on
    # the straight line between the found corners.
    rec_e = np.array([0.0, 0.0, 0.0])
    rec_n = np.array([0.0, 20.0, 80.0])
    az = math.radians(1.0)
    b = (79.20 * math.sin(az), 79.20 * math.cos(az))
    east, north = proportion_run(rec_e, rec_n, [20.0, 60.0], start=(0.0, 0.0), end=b)
    assert math.hypot(east[1], north[1]) == pytest.approx(19.80, abs=1e-12)
    assert math.hypot(b[0] - east[1], b[1] - north[1]) == pytest.approx(59.40, abs=1e-12)
    # on the line A-B
    assert math.degrees(math.atan2(east[1], north[1])) == pytest.approx(1.0, abs=1e-12)
    assert (east[0], north[0], east[-1], north[-1]) == (0.0, 0.0, *b)


def test_proportion_is_the_compass_rule_on_a_bent_run():
    # Compass rule of Ghilani & Wolf, Elementary Surveying (chapter "Traverse computations"):
    # correction in latitude of course i = -(misclosure in latitude / perimeter) x L_i, and the
    # same for departures; written out here by hand for a run of three courses.
    az = np.radians([30.0, 100.0, 170.0])
    lengths = np.array([120.0, 80.0, 150.0])
    lat, dep = lengths * np.cos(az), lengths * np.sin(az)
    rec_n = np.concatenate([[0.0], np.cumsum(lat)])
    rec_e = np.concatenate([[0.0], np.cumsum(dep)])
    start, end = (10.0, -5.0), (10.0 + rec_e[-1] + 0.9, -5.0 + rec_n[-1] - 1.2)
    east, north = proportion_run(rec_e, rec_n, lengths, start=start, end=end)
    mis_n, mis_e = 1.2, -0.9  # computed end minus found end (record minus measured)
    total = lengths.sum()
    for i in range(1, 3):
        c_lat = -mis_n * lengths[:i].sum() / total
        c_dep = -mis_e * lengths[:i].sum() / total
        assert north[i] == pytest.approx(start[1] + rec_n[i] + c_lat, abs=1e-12)
        assert east[i] == pytest.approx(start[0] + rec_e[i] + c_dep, abs=1e-12)


def test_rotate_scale_run_turns_and_scales_about_the_first_corner():
    rec_e, rec_n = np.array([0.0, 30.0, 100.0]), np.array([0.0, 40.0, 0.0])
    turn, scale = 2.5, 1.004
    t = math.radians(turn)

    def moved(e, n):  # clockwise turn of azimuths by `turn`, then scale, about (500, 700)
        return 500 + scale * (e * math.cos(t) + n * math.sin(t)), 700 + scale * (
            -e * math.sin(t) + n * math.cos(t)
        )

    east, north, rot, s = rotate_scale_run(rec_e, rec_n, start=(500.0, 700.0), end=moved(100, 0))
    assert rot == pytest.approx(turn, abs=1e-12)
    assert s == pytest.approx(scale, abs=1e-12)
    assert (east[1], north[1]) == pytest.approx(moved(30.0, 40.0), abs=1e-9)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.floats(1.0, 500.0), min_size=2, max_size=8),
    st.lists(st.floats(0.0, 359.9), min_size=8, max_size=8),
    st.floats(-5.0, 5.0),
    st.floats(-5.0, 5.0),
)
def test_proportion_run_ends_on_both_found_corners(lengths, azimuths, de, dn):
    n = len(lengths)
    az = np.radians(azimuths[:n])
    length = np.array(lengths)
    rec_n = np.concatenate([[0.0], np.cumsum(length * np.cos(az))])
    rec_e = np.concatenate([[0.0], np.cumsum(length * np.sin(az))])
    end = (rec_e[-1] + de, rec_n[-1] + dn)
    east, north = proportion_run(rec_e, rec_n, length, start=(0.0, 0.0), end=end)
    assert (east[0], north[0]) == (0.0, 0.0)
    assert (east[-1], north[-1]) == end
    # each corner moves by at most the run's misclosure
    moved = np.hypot(east - rec_e, north - rec_n)
    assert np.all(moved <= math.hypot(de, dn) + 1e-9)


# ---------------------------------------------------------------------------------------------
# Documents
# ---------------------------------------------------------------------------------------------


def _straight_line_document():
    # Grid-north record due north from a point of beginning placed by grid coordinates: 20.00
    # and 60.00 chains; B found 79.20 chains (ground) on grid N 1 E. The ground-to-grid factor
    # (UTM point scale at this height 0) comes from pyproj's factors, independently.
    k = _k(E0, N0 + 40 * CHAIN_M)
    d = 79.20 * CHAIN_M * k
    b_e = E0 + d * math.sin(math.radians(1.0))
    b_n = N0 + d * math.cos(math.radians(1.0))
    courses = [
        {"call": "N 0 E 20 chains to a lost post"},
        {"call": "N 0 E 60 chains to a found stone", "found": {"easting": b_e, "northing": b_n}},
    ]
    return convert_document(_doc(courses)), (b_e, b_n), k


def test_document_single_proportion_on_the_grid():
    conv, (b_e, b_n), k = _straight_line_document()
    res = restore_corners(conv, method="proportion")
    statuses = [c.status for c in res.corners]
    assert statuses == ["held", "restored", "found"]
    lost = res.corners[1]
    assert lost.run == (0, 2) and lost.method == "proportion"
    assert lost.description == "a lost post"
    # 19.80 chains from A on the line A-B (worked example above), to a millimetre (the grid
    # factor changes by parts in 10^8 along the line)
    dist = math.hypot(lost.easting - E0, lost.northing - N0) / k
    assert dist == pytest.approx(19.80 * CHAIN_M, abs=1e-3)
    assert math.degrees(math.atan2(lost.easting - E0, lost.northing - N0)) == pytest.approx(
        1.0, abs=1e-5
    )
    # latitude and longitude of the corner by pyproj directly
    lon, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(
        lost.easting, lost.northing
    )
    assert (lost.lat, lost.lon) == pytest.approx((lat, lon), abs=1e-9)
    run = res.runs[0]
    assert run.measured_m == pytest.approx(79.20 * CHAIN_M * k, abs=1e-6)


def test_document_rotate_scale_keeps_the_record_shape():
    conv, _, _ = _straight_line_document()
    res = restore_corners(conv, method="rotate-scale")
    run = res.runs[0]
    assert run.rotation_deg == pytest.approx(1.0, abs=1e-5)
    assert run.scale == pytest.approx(79.20 / 80.0, abs=1e-6)
    # on a straight line rotate-scale and proportion agree
    prop = restore_corners(conv, method="proportion")
    assert res.corners[1].easting == pytest.approx(prop.corners[1].easting, abs=1e-6)
    assert res.corners[1].northing == pytest.approx(prop.corners[1].northing, abs=1e-6)


def test_open_line_closes_on_its_found_end():
    # Grid record of three courses from a point placed by grid coordinates; the end point is
    # computed here with pyproj's point scale factor (independent of lodeline.geo.north's march), and
    # the found end put 0.30 m west and 0.40 m north of it: a gap of 0.50 m.
    calls = [("N 10 E", 40), ("S 80 E", 10), ("S 10 W", 30)]
    e, n = E0, N0
    for bearing, chains in calls:
        az = {"N 10 E": 10.0, "S 80 E": 100.0, "S 10 W": 190.0}[bearing]
        k = _k(e, n)
        e += chains * CHAIN_M * k * math.sin(math.radians(az))
        n += chains * CHAIN_M * k * math.cos(math.radians(az))
    found = {"easting": e - 0.30, "northing": n + 0.40}
    courses = [{"call": f"{b} {c} chains"} for b, c in calls]
    courses[-1]["found"] = found
    conv = convert_document(_doc(courses))
    clo = close_document(conv, north="grid")
    assert clo.closes_on == "found end"
    assert clo.adjustment == "compass"
    cf = sum(c.combined_factor * c.length_m for c in conv.courses) / sum(
        c.length_m for c in conv.courses
    )
    assert clo.misclosure_m == pytest.approx(0.50 / cf, abs=2e-3)
    # misclosure runs from the found end to the computed end: 0.30 E, 0.40 S
    assert clo.misclosure_azimuth_deg == pytest.approx(
        math.degrees(math.atan2(0.30, -0.40)) % 360, abs=0.3
    )
    perimeter = 80 * CHAIN_M
    assert clo.precision == pytest.approx(perimeter / clo.misclosure_m, rel=1e-12)
    # compass rule (Ghilani & Wolf): corrections proportional to the course lengths (those of
    # the marched figure, within a few ppm of the recorded ones)
    for c in clo.courses:
        assert c.latitude_correction_m == pytest.approx(
            -clo.misclosure_north_m * c.length_m / perimeter, abs=1e-6
        )
    gap = found_gaps(conv)
    assert [g.index for g in gap] == [3]
    assert gap[0].gap_m == pytest.approx(0.50, abs=2e-3)
    assert gap[0].gap_record == pytest.approx(gap[0].gap_m / CHAIN_M, rel=1e-12)
    assert clo.area is None
    transit = close_document(conv, north="grid", adjust="transit")
    assert transit.stations[-1].north_m == pytest.approx(clo.stations[-1].north_m, abs=1e-9)
    as_json = clo.as_dict()
    assert as_json["closes_on"] == "found end" and as_json["found_gaps"][0]["index"] == 3


def test_open_line_without_found_end_still_has_no_misclosure():
    conv = convert_document(_doc([{"call": "N 10 E 4 chains"}]))
    clo = close_document(conv)
    assert clo.closes_on is None and clo.misclosure_m is None


def test_kettle_ridge_reports_its_misclosure_on_the_found_end():
    path = DEMOS / "kettle_ridge_cruise_2025.toml"
    conv = convert_document(load_document(path), file=str(path), target_date="2025-10-01")
    clo = close_document(conv)
    assert clo.closes_on == "found end"
    assert clo.misclosure_m is not None and 0.5 < clo.misclosure_m < 20
    assert not any("no misclosure" in note for note in clo.notes)
    res = restore_document(conv)
    assert [c.status for c in res.corners] == ["held", "restored", "restored", "found"]
    # the proportion restoration of a run from the beginning is the compass adjustment onto
    # the found end: station 1 from both, turned into the same frame, agree to a millimetre
    adjusted = close_document(conv, north="grid").stations[1]
    c1 = res.corners[1]
    cf = conv.courses[0].combined_factor
    assert math.hypot(c1.east_m, c1.north_m) / cf == pytest.approx(
        math.hypot(adjusted.east_m, adjusted.north_m), abs=0.01
    )


def test_closed_figure_restores_through_the_beginning():
    path = DEMOS / "ashgrove_hollow_1796.toml"
    conv = convert_document(load_document(path), file=str(path), target_date="2025-10-01")
    res = restore_document(conv)
    assert [c.status for c in res.corners] == ["restored", "found", "found", "found"]
    assert res.corners[0].run == (3, 1)
    assert [(r.start, r.end) for r in res.runs] == [(1, 2), (2, 3), (3, 1)]
    # found corners keep their found positions
    assert res.corners[2].easting == pytest.approx(633917.60, abs=1e-6)


def test_no_found_corner_every_corner_is_record_only():
    place = {"lat": 39.88, "lon": -79.44, "height_m": 0.0}
    courses = [{"call": "N 10 E 4 chains"}, {"call": "S 80 E 4 chains"}, {"call": "S 55 W 5.6 ch"}]
    conv = convert_document(_doc(courses, closed=True, place=place))
    res = restore_corners(conv)
    assert {c.status for c in res.corners} == {"record only"}
    assert res.notes


def test_unknown_method_is_refused():
    conv, _, _ = _straight_line_document()
    from lodeline.geo.errors import InputError

    with pytest.raises(InputError, match="proportion or rotate-scale"):
        restore_corners(conv, method="shift")  # type: ignore[arg-type]


def test_corners_beyond_the_last_found_follow_the_record_turned_by_the_fit():
    # An open grid record from a point placed by grid coordinates; the ground turned 1.5 deg
    # clockwise about the beginning (found corner 2 set there by hand): corners 3 and 4,
    # beyond the last found corner, must land where the turned record puts them.
    calls = ["N 10 E 10 chains", "S 80 E 12 chains", "N 5 W 9 chains", "N 60 E 7 chains"]
    record = convert_document(_doc([{"call": c} for c in calls]))
    t = math.radians(1.5)

    def turned(s):
        de, dn = s.easting - E0, s.northing - N0
        return E0 + de * math.cos(t) + dn * math.sin(t), N0 - de * math.sin(t) + dn * math.cos(t)

    e2, n2 = turned(record.stations[2])
    courses = [{"call": c} for c in calls]
    courses[1]["found"] = {"easting": e2, "northing": n2}
    conv = convert_document(_doc(courses))
    res = restore_document(conv)
    assert [c.status for c in res.corners] == [
        "held",
        "restored",
        "found",
        "record only",
        "record only",
    ]
    # the marched lines turn with gamma along each course (a few 1e-6 deg here)
    assert res.follow_rotation_deg == pytest.approx(1.5, abs=1e-5)
    for k in (3, 4):
        want = turned(record.stations[k])
        assert (res.corners[k].easting, res.corners[k].northing) == pytest.approx(want, abs=1e-4)
        assert res.corners[k].run == (2, 2)
