"""Lines run as a compass runs them, the target model following the record's, and the notes
of every assumption (lodeline.geo.north, lodeline.geo.march, lodeline.geo.survey's error budget).

Check values: pyproj's ``Proj.get_factors`` (point scale factor, independent of lodeline.geo.grid's
use of it for one point at a time), ppigrf (independent IGRF), Simpson's rule for the mean
scale factor of a line (state plane coordinate manuals), plane-survey formulas (Ghilani &
Wolf, *Elementary Surveying*).
"""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pytest

from lodeline.geo.document import document_from_dict
from lodeline.geo.north import convert_document
from lodeline.geo.survey import close_document

MAINE = {"lat": 45.2, "lon": -68.9, "height_m": 0.0}  # invented place in Maine (UTM 19)
ZONE_EDGE = {"lat": 45.0, "lon": -72.05, "height_m": 0.0}  # near the edge of UTM zone 18


def doc(courses, *, reference="magnetic", date="1950-06-01", place=None, target=None, **record):
    data = {
        "format_version": 1,
        "title": "check",
        "closed": False,
        "place": place or MAINE,
        "record": {
            "reference": reference,
            "date": date,
            "distance_unit": "m",
            "foot": "international",
            **record,
        },
        "course": courses,
    }
    if target:
        data["target"] = target
    return document_from_dict(data)


def codes(conv):
    return [n["code"] for n in conv.as_dict()["notes"]]


# -- point 2: the line a course stands for ------------------------------------------------


@pytest.mark.parametrize(
    ("place", "date"), [(MAINE, "1950-06-01"), (ZONE_EDGE, "2026-01-01")], ids=["maine", "edge"]
)
def test_a_long_magnetic_course_is_the_line_of_its_short_pieces(place, date):
    # The same 30 km N 80 E magnetic line as one call and as 300 calls of 100 m: the needle
    # holds the bearing along the whole line either way, so the ends agree (within 0.5 m).
    one = convert_document(
        doc([{"bearing": "N 80 E", "distance": 30000.0}], place=place, date=date),
        target_date="2026-01-01",
    )
    many = convert_document(
        doc([{"bearing": "N 80 E", "distance": 100.0}] * 300, place=place, date=date),
        target_date="2026-01-01",
    )
    a, b = one.stations[-1], many.stations[-1]
    gap = math.hypot(a.easting - b.easting, a.northing - b.northing) * one.grid_unit_m
    assert gap < 0.5
    # and the line curves on the grid: it is not the straight line of its start's bearing
    c = one.courses[0]
    straight_e = c.start.easting + c.grid_length_m * math.sin(math.radians(c.azimuth.grid))
    straight_n = c.start.northing + c.grid_length_m * math.cos(math.radians(c.azimuth.grid))
    assert math.hypot(a.easting - straight_e, a.northing - straight_n) > 5.0


def test_halving_the_steps_moves_the_end_by_less_than_a_millimetre(monkeypatch):
    import lodeline.geo.march

    course = [{"bearing": "N 80 E", "distance": 30000.0}]
    base = convert_document(doc(course), target_date="2026-01-01")
    assert base.courses[0].steps >= 30
    monkeypatch.setattr(lodeline.geo.march, "FIRST_STEP_M", 125.0)  # 8 times finer to begin with
    fine = convert_document(doc(course), target_date="2026-01-01")
    assert fine.courses[0].steps >= 8 * base.courses[0].steps // 2
    a, b = base.stations[-1], fine.stations[-1]
    assert math.hypot(a.easting - b.easting, a.northing - b.northing) < 1e-3


def test_a_deed_of_courses_over_100_m_is_evaluated_twice(monkeypatch, field_calls):
    # A closed square of 200 m courses: each course is two steps (one step of 200 m and its
    # halving are compared on the values of one evaluation), so the field is evaluated once
    # for the first estimate and once for the one pass that confirms the halved march
    # (geo.march: a halving costs one evaluation, its start keeps the bend of the line).
    import lodeline.geo.march

    square = [{"bearing": b, "distance": 200.0} for b in ("N 90 E", "S 0 E", "S 90 W", "N 0 E")]
    conv = convert_document(doc(square), target_date="2026-01-01")
    assert [c.steps for c in conv.courses] == [2, 2, 2, 2]
    assert len(field_calls) == 2
    # and the kept march is the one a march in 10 m steps gives, within the 1 mm tolerance
    monkeypatch.setattr(lodeline.geo.march, "ONE_STEP_M", 5.0)
    monkeypatch.setattr(lodeline.geo.march, "FIRST_STEP_M", 10.0)
    fine = convert_document(doc(square), target_date="2026-01-01")
    assert all(c.steps >= 20 for c in fine.courses)
    for a, b in zip(conv.stations, fine.stations, strict=True):
        assert math.hypot(a.easting - b.easting, a.northing - b.northing) < 1e-3


def test_short_courses_are_one_step_each():
    conv = convert_document(doc([{"bearing": "N 10 E", "distance": 30.0}] * 20))
    assert all(c.steps == 1 for c in conv.courses)
    assert all(c.path.along_m == (0.0, c.length_m) for c in conv.courses)


def test_the_marched_path_of_a_long_course_is_public():
    conv = convert_document(doc([{"bearing": "N 80 E", "distance": 30000.0}]))
    c = conv.courses[0]
    path = c.path
    assert path.along_m[0] == 0.0 and path.along_m[-1] == c.length_m
    assert len(path.easting) == c.steps + 1
    assert (path.easting[0], path.northing[0]) == (c.start.easting, c.start.northing)
    assert (path.easting[-1], path.northing[-1]) == (c.end.easting, c.end.northing)
    e, n = c.path_at([15000.0])
    assert path.easting[0] < float(e[0]) < path.easting[-1]


def test_a_grid_course_is_straight_with_simpsons_mean_factor():
    # A 30 km grid course due east across UTM zone 19 (EPSG:32619). Its grid length is the
    # ground length times the mean point scale factor along it; the mean by a fine
    # trapezoidal sum of pyproj's Proj.get_factors (independent) must match Simpson's rule
    # (state plane coordinate manuals) to 1e-9 relative: k is nearly quadratic in easting.
    from pyproj import Proj, Transformer

    conv = convert_document(
        doc([{"bearing": "N 90 E", "distance": 30000.0}], reference="grid", date=None),
        target_date="2026-01-01",
    )
    c = conv.courses[0]
    assert conv.crs == "EPSG:32619"
    assert c.end.northing == pytest.approx(c.start.northing, abs=1e-6)  # straight, due east
    inverse = Transformer.from_crs(conv.crs, "EPSG:4326", always_xy=True)
    e = np.linspace(c.start.easting, c.end.easting, 2001)
    lon, lat = inverse.transform(e, np.full(e.size, c.start.northing))
    k = np.asarray(Proj(conv.crs).get_factors(lon, lat).meridional_scale)
    mean_k = float(np.sum((k[1:] + k[:-1]) / 2)) / (k.size - 1)
    assert c.grid_length_m == pytest.approx(30000.0 * mean_k, rel=1e-9)
    assert c.end.easting - c.start.easting == pytest.approx(c.grid_length_m, abs=1e-6)


def test_a_long_course_states_its_target_bearing_at_both_ends():
    conv = convert_document(doc([{"bearing": "N 80 E", "distance": 30000.0}]))
    c = conv.courses[0]
    assert c.bearing_end is not None
    assert c.bearing_end.magnetic_target != c.bearing.magnetic_target
    data = conv.as_dict()["courses"][0]
    assert data["bearing_end"]["magnetic_target"] == c.bearing_end.magnetic_target
    short = convert_document(doc([{"bearing": "N 80 E", "distance": 50.0}])).courses[0]
    assert short.bearing_end is None


# -- point 5: the target model follows the record ------------------------------------------


def _recorded_on(model):
    place = {"lat": 47.0, "lon": -91.0, "height_m": 0.0}
    return doc([{"bearing": "N 35 E", "distance": 100.0}], date="2025-06-01", model=model,
               place=place)  # fmt: skip


def test_target_uses_the_record_model_when_it_covers_the_target_date():
    d = _recorded_on("WMMHR2025")
    conv = convert_document(d, target_date="2025-06-13")
    assert conv.target_model == conv.record_model == "wmmhr2025"
    # twelve days of secular variation: well under a minute of arc (common practice: D
    # changes by a few minutes a year at most at mid latitudes)
    assert abs(conv.courses[0].azimuth.magnetic_target - 35.0) < 1 / 60
    assert conv.courses[0].bearing.magnetic_target == "N 35°00′ E"
    assert "models_differ" not in codes(conv)
    # named explicitly, the target's model is kept, and the note gives the difference
    other = convert_document(d, target_date="2025-06-13", model="igrf14")
    assert other.target_model == "igrf14"
    note = next(n for n in other.notes if n.code == "models_differ")
    assert "point of beginning" in note.message and "′" in note.message


def test_target_falls_back_to_auto_outside_the_record_model():
    # WMM2025 begins at 2025.0: a target date of 2024 falls back to auto (IGRF-14), and the
    # note says the two dates use different models.
    conv = convert_document(_recorded_on("wmm2025"), target_date="2024-01-01")
    assert conv.record_model == "wmm2025" and conv.target_model == "igrf14"
    assert "models_differ" in codes(conv)


# -- point 4: notes, dD/dt, declination_sigma --------------------------------------------


def test_a_missing_height_is_a_note_and_a_given_one_is_not():
    place = {"lat": 45.2, "lon": -68.9}
    conv = convert_document(doc([{"bearing": "N 0 E", "distance": 10.0}], place=place))
    assert "height_assumed" in codes(conv)
    conv = convert_document(doc([{"bearing": "N 0 E", "distance": 10.0}]))
    assert "height_assumed" not in codes(conv)


def test_an_assumed_foot_is_a_note_in_the_json():
    d = doc([{"call": "N 0 E 100 feet"}], foot=None)
    data = convert_document(d).as_dict()
    assert any(n["code"] == "foot_assumed" for n in data["notes"])


def test_forecast_fields_are_noted():
    # IGRF-14 after 2025.0 extrapolates its predicted secular variation; WMM is predictive
    # (IAGA V-MOD; NOAA/BGS WMM2025 report).
    d = doc([{"bearing": "N 0 E", "distance": 10.0}])
    assert "forecast_field" in codes(convert_document(d, target_date="2027-01-01"))
    assert "forecast_field" not in codes(convert_document(d, target_date="2019-01-01"))
    wmm = convert_document(d, target_date="2026-01-01", model="wmm2025")
    assert "forecast_field" in codes(wmm)


@pytest.mark.reference
def test_convert_gives_the_yearly_change_of_d_per_course():
    # ppigrf's IGRF (independent): D a half year either side of the target date.
    pytest.importorskip("ppigrf")
    from tests.test_north import ppigrf_declination

    conv = convert_document(doc([{"bearing": "N 0 E", "distance": 10.0}]), target_date="2012-07-01")
    c = conv.courses[0]
    lat, lon = c.start.lat, c.start.lon
    # ppigrf counts time in years of 365.25 days (from its source), so 61 days are 61/365.25
    # of its year; the secular variation is per year in both.
    before, after = dt.date(2012, 6, 1), dt.date(2012, 8, 1)
    rate = (ppigrf_declination(lat, lon, after) - ppigrf_declination(lat, lon, before)) / (
        61 / 365.25
    )
    assert c.declination_target_rate_deg_per_year == pytest.approx(rate, abs=2e-5)
    assert conv.as_dict()["courses"][0]["declination_target_rate_deg_per_year"] == (
        c.declination_target_rate_deg_per_year
    )


def _square(**record):
    calls = [{"bearing": b, "distance": 400.0} for b in ("N 0 E", "N 90 E", "S 0 E", "N 90 W")]
    data = doc(calls, **record).model_dump(exclude_none=True)
    data["closed"] = True
    return document_from_dict(data)


def test_the_budget_says_the_declination_term_is_unknown_not_zero():
    clo = close_document(convert_document(_square(), target_date="2020-01-01"))
    data = clo.as_dict()["error_budget"]
    assert data["declination_term"] == "unknown" and data["declination_sigma_deg"] is None
    assert data["stations"][-2]["declination_m"] is None
    assert data["stations"][-2]["total_m"] is None
    assert any("unknown, not zero" in n.message for n in clo.note_objects)
    notes = clo.as_dict()["notes"]
    assert all(set(n) == {"code", "message"} for n in notes)
    assert "declination_sigma_unknown" in [n["code"] for n in notes]
    assert "forecast_field" not in [n["code"] for n in notes]  # 2020: IGRF-14 definitive


def test_a_stated_declination_sigma_is_used_where_the_model_publishes_none():
    clo = close_document(
        convert_document(_square(declination_sigma="0°15'"), target_date="2020-01-01")
    )
    assert clo.declination_term == "stated"
    assert clo.declination_sigma_deg == pytest.approx(0.25)
    # the term turns the figure about the point of beginning: distance x sigma (radians)
    b = clo.budget[2]
    assert b.declination_m == pytest.approx(b.distance_m * math.radians(0.25), rel=1e-12)
    assert b.total_m == pytest.approx(math.hypot(b.bearing_m, b.declination_m), rel=1e-12)
