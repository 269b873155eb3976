"""Document-level closure and record-to-found fit (lodeline.geo.survey)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from pyproj import Geod, Transformer

from lodeline.geo.document import document_from_dict
from lodeline.geo.errors import DocumentError, FitError, InputError, TraverseError
from lodeline.geo.north import convert_document
from lodeline.geo.survey import close_document, fit_document, found_count, record_figure

TARGET = "2026-01-01"
PLACE = {"lat": 40.4312, "lon": -77.6034, "height_m": 300.0}
CRS = "EPSG:32618"  # UTM 18N, metres


@pytest.fixture(autouse=True)
def _no_user_models(tmp_path, monkeypatch):
    # Only the shipped models: a record date before 1900 then has no model (IGRF-14 1900-2030).
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def make_doc(
    courses,
    *,
    closed=True,
    reference="magnetic",
    date="1925-06-15",
    place=None,
    grid=None,
    **record,
):
    data = {
        "format_version": 1,
        "title": "check",
        "closed": closed,
        "place": place or PLACE,
        "record": {
            "reference": reference,
            "date": date,
            "distance_unit": "m",
            "foot": "international",
            **record,
        },
        "course": courses,
    }
    if grid:
        data["grid"] = {"crs": grid}
    return document_from_dict(data)


def convert(doc):
    return convert_document(doc, target_date=TARGET)


def course(az, length, **extra):
    """A course given by an azimuth text (DMS grammar of the bearing parser) and metres."""
    return {"bearing": f"{az:.10f}", "distance": float(length), **extra}


# -- a 10-chain square is 10 acres ----------------------------------------------------------


def test_ten_chain_square_is_ten_acres_and_closes_exactly():
    # Common practice: 1 acre = 10 square chains (Gunter's chain, 66 ft), so a square of
    # 10 chains a side holds 10 acres of the document's foot.
    doc = make_doc(
        [
            {"call": c}
            for c in ("N 0 E 10 chains", "N 90 E 10 chains", "S 0 E 10 chains", "N 90 W 10 chains")
        ],
        reference="true",
        foot="us",
    )
    r = close_document(convert(doc))
    # Held on true bearings the square does not close on the ellipsoid (the meridians
    # converge, common practice): a few millimetres on 201 m sides.
    assert r.misclosure_m < 0.01
    assert r.area.acres == pytest.approx(10.0, rel=1e-5)
    # 10 chains = 660 US survey feet = 660 * 1200/3937 m (exact definition, NIST).
    side = 660 * 1200 / 3937
    assert r.area.ground_m2 == pytest.approx(side * side, rel=1e-5)
    assert r.area.hectares == pytest.approx(r.area.ground_m2 / 1e4, rel=1e-12)
    cf = r.area.combined_factor
    assert r.area.grid_m2 == pytest.approx(r.area.ground_m2 * cf * cf, rel=1e-12)
    assert r.area.orientation == "clockwise"


# -- compass and transit rules against an independent computation ---------------------------

# Invented figure (demo-style data): a magnetic record with a stated declination.
RECORD = [
    (35.75, 310.0),
    (100.0, 345.2),
    (163.75, 322.9),
    (233.25, 350.6),
    (288.5, 284.1),
    (346.0, 247.0),
]
STATED = -1.75  # 1 deg 45 min W


def record_doc(**kw):
    return make_doc(
        [course(a, d) for a, d in RECORD], date="1854-05-12", declination="1 45 W", **kw
    )


def independent_lat_dep(rotation):
    az = np.radians([a + rotation for a, _ in RECORD])
    length = np.array([d for _, d in RECORD])
    return length * np.cos(az), length * np.sin(az), length


def test_compass_rule_matches_an_independent_computation():
    conv = convert(record_doc())
    r = close_document(conv, adjust="compass", north="true")
    # true north at the point of beginning = grid north turned by gamma there
    assert r.rotation_deg == pytest.approx(conv.courses[0].convergence_deg, abs=1e-12)
    # The marched courses are the record's (true = magnetic + D) to within the change of
    # gamma and of the combined factor across this kilometre-sized figure (about 1e-5 rad).
    lat_r, dep_r, _ = independent_lat_dep(STATED)
    assert r.latitudes_m == pytest.approx(tuple(lat_r), abs=0.05)
    assert r.departures_m == pytest.approx(tuple(dep_r), abs=0.05)
    # The rules (Ghilani & Wolf) applied independently to the closure's own courses.
    lat, dep = np.array(r.latitudes_m), np.array(r.departures_m)
    length = np.array([c.length_m for c in r.courses])
    # recorded ground lengths; the marched chords differ by the change of the factor
    assert length == pytest.approx(np.hypot(lat, dep), rel=1e-5)
    length = np.hypot(lat, dep)  # the rule weighs the courses of the figure it adjusts
    mis_n, mis_e = lat.sum(), dep.sum()
    assert r.misclosure_m == pytest.approx(math.hypot(mis_n, mis_e), abs=1e-9)
    assert r.misclosure_azimuth_deg == pytest.approx(
        math.degrees(math.atan2(mis_e, mis_n)) % 360, abs=1e-9
    )
    assert r.precision == pytest.approx(r.perimeter_m / math.hypot(mis_n, mis_e), rel=1e-9)
    assert r.perimeter_m == pytest.approx(sum(d for _, d in RECORD), abs=1e-9)
    # Compass (Bowditch) rule: corrections proportional to course length (common practice).
    for c, L in zip(r.courses, length, strict=True):
        assert c.latitude_correction_m == pytest.approx(-mis_n * L / length.sum(), abs=1e-12)
        assert c.departure_correction_m == pytest.approx(-mis_e * L / length.sum(), abs=1e-12)
    last = r.stations[-1]
    assert abs(last.north_m) < 1e-9 and abs(last.east_m) < 1e-9
    assert r.stations[0].north_m == 0.0 and r.stations[0].east_m == 0.0
    a = r.courses[0]
    assert a.adjusted_length_m == pytest.approx(
        math.hypot(a.adjusted_latitude_m, a.adjusted_departure_m)
    )


def test_transit_rule_corrections_proportional_to_latitudes_and_departures():
    # The transit rule is applied along grid north and east (the figure is adjusted once).
    r = close_document(convert(record_doc()), adjust="transit", north="grid")
    lat, dep = np.array(r.latitudes_m), np.array(r.departures_m)
    for c, la, de in zip(r.courses, lat, dep, strict=True):
        assert c.latitude_correction_m == pytest.approx(
            -lat.sum() * abs(la) / np.abs(lat).sum(), abs=1e-12
        )
        assert c.departure_correction_m == pytest.approx(
            -dep.sum() * abs(de) / np.abs(dep).sum(), abs=1e-12
        )
    assert abs(r.stations[-1].north_m) < 1e-9 and abs(r.stations[-1].east_m) < 1e-9


def test_adjust_none_keeps_the_record_and_bridges_the_gap_for_the_area():
    r = close_document(convert(record_doc()), adjust="none")
    assert all(c.latitude_correction_m == 0.0 for c in r.courses)
    assert r.stations == r.unadjusted_stations
    assert r.area is not None and r.adjustment == "none"


# -- invariance to the choice of north and to a rotation of every bearing -------------------


def figures(r):
    return (
        r.misclosure_m,
        r.precision,
        r.perimeter_m,
        r.area.ground_m2 if r.area else None,
        *(c.adjusted_length_m for c in r.courses),
    )


def test_demo_style_record_figures_do_not_depend_on_north():
    conv = convert(record_doc())
    base = figures(close_document(conv, north="true"))
    for north in ("grid", "magnetic"):
        got = figures(close_document(conv, north=north))
        assert got == pytest.approx(base, rel=1e-11, abs=1e-9)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    turn=st.floats(0.0, 360.0),
    bumps=st.lists(st.floats(-3.0, 3.0), min_size=6, max_size=6),
    stretch=st.lists(st.floats(0.9, 1.1), min_size=6, max_size=6),
    north=st.sampled_from(["true", "grid", "magnetic"]),
)
def test_property_closure_invariant_to_rotation_and_north(turn, bumps, stretch, north):
    base_courses = [(a + b, d * s) for (a, d), b, s in zip(RECORD, bumps, stretch, strict=True)]
    doc0 = make_doc([course(a % 360, d) for a, d in base_courses], date="1925-06-15")
    doc1 = make_doc([course((a + turn) % 360, d) for a, d in base_courses], date="1925-06-15")
    conv0, conv1 = convert(doc0), convert(doc1)
    r0 = close_document(conv0, north="true")
    # The choice of north turns the one figure: nothing else changes.
    assert figures(close_document(conv0, north=north)) == pytest.approx(
        figures(r0), rel=1e-11, abs=1e-9
    )
    # Turning every bearing turns the record, but the marched figure then lies elsewhere on
    # the grid: its figures agree to the change of gamma and of the factors (millimetres).
    # A station r metres out moves by up to 2 r sin(turn / 2); gamma changes by about
    # tan(lat) / R per metre moved (1.3e-7 rad/m here, from memory of the TM series), which
    # turns each course by that much: the bound below takes 2e-7 rad/m.
    r1 = close_document(conv1, north=north)
    reach = max(math.hypot(p.north_m, p.east_m) for p in r0.unadjusted_stations)
    moved = 2 * reach * abs(math.sin(math.radians(turn) / 2))
    tol = r0.perimeter_m * moved * 2e-7 + 1e-6
    assert r1.misclosure_m == pytest.approx(r0.misclosure_m, abs=tol)
    assert r1.area.ground_m2 == pytest.approx(r0.area.ground_m2, rel=1e-4)
    lengths = [c.adjusted_length_m for c in r1.courses]
    assert lengths == pytest.approx([c.adjusted_length_m for c in r0.courses], abs=tol)


# -- open traverse, crossing figure, bad requests -------------------------------------------


def test_open_traverse_has_no_misclosure_or_area_and_refuses_an_adjustment():
    doc = make_doc([course(10, 400), course(100, 100)], closed=False)
    r = close_document(convert(doc))
    assert r.adjustment == "none" and r.area is None and r.misclosure_m is None
    assert r.precision is None
    d = make_doc([course(10, 400), course(100, 100)], closed=False).record
    d1 = convert(doc).courses[0].declination_record_deg  # true = magnetic + D (record date)
    assert d is not None
    assert r.stations[-1].north_m == pytest.approx(
        400 * math.cos(math.radians(10 + d1)) + 100 * math.cos(math.radians(100 + d1)), abs=0.01
    )
    with pytest.raises(TraverseError, match="open"):
        close_document(convert(doc), adjust="compass")


def test_self_crossing_figure_names_the_crossing_courses_and_gives_no_area():
    # A bow tie: 0,0 -> 100 N -> east across to (0, 100) -> ... courses 1 and 3 cross.
    doc = make_doc(
        [
            course(45, 100 * math.sqrt(2)),
            course(180, 100),
            course(315, 100 * math.sqrt(2)),
            course(180, 100),
        ],
        reference="true",
    )
    r = close_document(convert(doc), adjust="none")
    assert r.area is None
    assert r.crossing is not None and set(r.crossing) == {1, 3}
    assert any("cross" in n for n in r.notes)


def test_bad_requests_are_one_line_errors():
    conv = convert(record_doc())
    with pytest.raises(InputError):
        close_document(conv, north="sideways")
    with pytest.raises(InputError):
        close_document(conv, adjust="least-squares")
    empty = convert(make_doc([], closed=True))
    with pytest.raises(DocumentError, match="no courses"):
        close_document(empty)
    grid_record = convert(
        make_doc([course(0, 10), course(90, 10), course(225, 14.14)], reference="grid", date=None)
    )
    with pytest.raises(InputError, match="magnetic"):
        close_document(grid_record, north="magnetic")


# -- angular misclosure ---------------------------------------------------------------------


def angle_doc(angles, *, turned="right", first="N 0 E", sides=(100.0, 100.0, 100.0, 100.0)):
    courses = [{"bearing": first, "distance": sides[0], "angle": angles[0]}]
    courses += [{"angle": a, "distance": d} for a, d in zip(angles[1:], sides[1:], strict=True)]
    return make_doc(courses, reference="true", angles=turned)


def test_interior_angles_misclosure_and_equal_distribution():
    # A square run counter-clockwise (north, west, south, east) with right-turned interior
    # angles of 90 deg, one of them read 2 minutes large: sum 360 deg 2 min against
    # (4 - 2) * 180 = 360 (common practice); each angle loses 30 seconds.
    angles = ["90 00", "90 02", "90 00", "90 00"]
    r = close_document(convert(angle_doc(angles, turned="right")))
    a = r.angles
    assert a.kind == "interior"
    assert a.expected_sum_deg == 360.0
    assert a.misclosure_deg == pytest.approx(2 / 60, abs=1e-12)
    assert a.correction_per_angle_deg == pytest.approx(-0.5 / 60, abs=1e-12)
    assert sum(a.adjusted_angles_deg) == pytest.approx(360.0, abs=1e-12)
    # Right-turned interior angles: the figure runs counter-clockwise, course 2 heads west.
    assert r.courses[1].azimuth_deg == pytest.approx(270.0 + 2 / 60 - 0.5 / 60, abs=1e-9)
    assert r.misclosure_m < 0.1 and r.area.orientation == "counterclockwise"


def test_exterior_angles_are_recognised_by_their_sum():
    # The same square run clockwise (north, east, south, west) with right-turned angles: these
    # are exterior angles, 270 deg each, summing to (4 + 2) * 180 (common practice).
    angles = ["270 00", "269 58", "270 00", "270 00"]
    r = close_document(convert(angle_doc(angles, turned="right")))
    assert r.angles.kind == "exterior"
    assert r.angles.expected_sum_deg == 1080.0
    assert r.angles.misclosure_deg == pytest.approx(-2 / 60, abs=1e-12)
    assert r.courses[1].azimuth_deg == pytest.approx(90.0 - 2 / 60 + 0.5 / 60, abs=1e-9)
    assert r.area.orientation == "clockwise"
    assert r.area.ground_m2 == pytest.approx(1e4, rel=1e-3)


def test_a_missing_angle_at_the_point_of_beginning_is_explained():
    courses = [
        {"bearing": "N 0 E", "distance": 100},
        {"angle": "90", "distance": 100},
        {"angle": "90", "distance": 100},
        {"angle": "90", "distance": 100},
    ]
    r = close_document(convert(make_doc(courses, reference="true", angles="right")))
    assert r.angles is None and any("point of beginning" in n for n in r.notes)
    assert (
        record_figure(convert(make_doc(courses, reference="true", angles="right"))).angles is None
    )


# -- local attraction -----------------------------------------------------------------------


def test_local_attraction_worked_example():
    # Invented example worked by hand with the usual compass-survey method: the readings at
    # station 1 are 1 deg low (true 40, 100, 200 deg). Course 3's fore and back bearings
    # agree (200 / 20), so stations 2 and 3 are free; course 2 (99 / 280: 1 deg off) gives
    # station 1 the correction +1 deg; course 1 (40 / 219) then gives station 0 zero.
    doc = make_doc(
        [
            {"bearing": "N 40 00 E", "distance": 100, "back": "S 39 00 W"},
            {"bearing": "S 81 00 E", "distance": 100, "back": "N 80 00 W"},
            {"bearing": "S 20 00 W", "distance": 100, "back": "N 20 00 E"},
        ],
        closed=False,
        date="1925-06-15",
    )
    r = close_document(convert(doc))
    att = r.attraction
    assert att.tolerance_deg == pytest.approx(1 / 60)  # bearings read to the minute
    assert att.start_course == 3
    corr = {s.station: s.correction_deg for s in att.stations}
    assert corr == pytest.approx({0: 0.0, 1: 1.0, 2: 0.0, 3: 0.0}, abs=1e-9)
    assert att.disturbed_stations == (1,)
    assert att.corrected_bearing[1] == "S 80°00′00″ E"
    assert att.discrepancy_deg == pytest.approx((-1.0, 1.0, 0.0), abs=1e-9)
    data = r.as_dict()
    assert data["local_attraction"][1] == {
        "station": 1,
        "correction_deg": pytest.approx(1.0),
        "disturbed": True,
    }


# -- error budget ---------------------------------------------------------------------------


def test_error_budget_lateral_displacement():
    # Lateral displacement = distance x angle (radians): +-0.3 deg at 400 m is +-2.09 m.
    doc = make_doc([course(30, 400)], closed=False, reference="true")
    r = close_document(convert(doc), bearing_sigma_deg=0.3)
    assert r.budget[1].bearing_m == pytest.approx(400 * math.radians(0.3), rel=1e-12)
    assert r.budget[1].bearing_m == pytest.approx(2.094, abs=1e-3)
    assert r.declination_sigma_deg is None and r.budget[1].declination_m == 0.0


def test_error_budget_uses_the_published_declination_uncertainty():
    # WMM2025 publishes a declination uncertainty; a record dated 2025-09-16 uses it.
    doc = make_doc([course(30, 400)], closed=False, date="2025-09-16", model="WMM2025")
    r = close_document(convert(doc))
    assert r.declination_sigma_deg is not None and r.declination_sigma_deg > 0
    assert r.budget[1].declination_m == pytest.approx(
        400 * math.radians(r.declination_sigma_deg), rel=1e-9
    )
    # default bearing uncertainty: half the precision the call was written to
    assert r.bearing_sigma_deg == pytest.approx(0.5 * 1e-10, rel=1e-6)


# -- record-to-found fit --------------------------------------------------------------------

FIT_RECORD = [(12.5, 402.3), (97.25, 251.5), (171.0, 380.0), (255.75, 310.2)]
GEOD = Geod(ellps="WGS84")


def found_by_geodesic(lat0, lon0, true_rotation, length_factor, height_m):
    """Walk the record with pyproj's Geod (independent of geo.*): true azimuth = recorded +
    true_rotation, ellipsoidal distance = recorded * length_factor * R/(R+h) (the ground length
    reduced to the ellipsoid; R the Gaussian mean radius, a common-practice approximation)."""
    a, f = GEOD.a, GEOD.f
    e2 = f * (2 - f)
    phi = math.radians(lat0)
    w = 1 - e2 * math.sin(phi) ** 2
    radius = math.sqrt((a * (1 - e2) / w**1.5) * (a / math.sqrt(w)))
    reduce = radius / (radius + height_m)
    lats, lons = [lat0], [lon0]
    for az, d in FIT_RECORD:
        lon, lat, _back = GEOD.fwd(
            lons[-1], lats[-1], az + true_rotation, d * length_factor * reduce
        )
        lats.append(lat)
        lons.append(lon)
    return lats, lons


def fit_doc(found_lats, found_lons, *, stated="2 30 E", date="1790-04-01", which=(2, 3, 4)):
    courses = []
    for i, (az, d) in enumerate(FIT_RECORD, start=1):
        c = course(az, d)
        if i in which:
            c["found"] = {"lat": found_lats[i], "lon": found_lons[i]}
        courses.append(c)
    return make_doc(courses, closed=False, date=date, declination=stated, grid=CRS)


def pyproj_convergence(lat, lon):
    """gamma by finite differences of the projection (independent of lodeline.geo.grid): the grid
    azimuth of true north is -gamma (DESIGN.md sign convention)."""
    t = Transformer.from_crs("EPSG:4326", CRS, always_xy=True)
    e1, n1 = t.transform(lon, lat - 1e-5)
    e2, n2 = t.transform(lon, lat + 1e-5)
    return -math.degrees(math.atan2(e2 - e1, n2 - n1))


def test_fit_recovers_declination_and_chain_length_without_a_model():
    # The original surveyor's needle pointed 3.2 deg east of true north and his chain was
    # 0.2 % long (ground length = 1.002 x recorded). The record date (1790) lies before every
    # shipped model, so the model's declination is null while the fit still works.
    lat0, lon0 = PLACE["lat"], PLACE["lon"]
    lats, lons = found_by_geodesic(lat0, lon0, 3.2, 1.002, PLACE["height_m"])
    conv = convert(fit_doc(lats, lons))
    assert found_count(conv) == 3
    r = fit_document(conv)
    assert r.empirical_declination_deg == pytest.approx(3.2, abs=0.005)
    assert r.record_length_factor == pytest.approx(1.002, abs=1e-4)
    assert r.model_declination_deg is None and r.model is None
    assert r.stated_declination_deg == pytest.approx(2.5)
    assert r.rms_m < 0.02
    mean_lat, mean_lon = np.mean(lats[2:]), np.mean(lons[2:])
    gamma = pyproj_convergence(mean_lat, mean_lon)
    assert r.convergence_deg == pytest.approx(gamma, abs=1e-6)
    assert r.empirical_declination_deg == pytest.approx(r.rotation_deg + gamma, abs=1e-6)
    assert r.record_length_factor == pytest.approx(r.scale / r.combined_factor, rel=1e-12)
    assert [x.index for x in r.residuals] == [2, 3, 4]


def test_fit_and_magnetic_closure_need_no_declination_at_the_record_date():
    """Regression: a magnetic record of 1790 with neither a stated declination nor a model
    covering the date made every command fail, the fit included, which is the tool for
    exactly that case. Found corners walked with pyproj's Geod (independent of geo.*)."""
    from lodeline.geo.errors import ModelRangeError

    lat0, lon0 = PLACE["lat"], PLACE["lon"]
    lats, lons = found_by_geodesic(lat0, lon0, -1.4, 1.003, PLACE["height_m"])
    doc = fit_doc(lats, lons, stated="auto")
    with pytest.raises(ModelRangeError, match="lodeline fit"):
        convert(doc)
    conv = convert_document(doc, target_date=TARGET, allow_unknown_declination=True)
    assert conv.declination_source is None
    assert all(c.azimuth.true is None and c.bearing.grid is None for c in conv.courses)
    assert all(math.isnan(s.easting) for s in conv.stations[1:])
    r = fit_document(conv)
    assert r.empirical_declination_deg == pytest.approx(-1.4, abs=0.005)
    assert r.record_length_factor == pytest.approx(1.003, abs=1e-4)
    assert r.model_declination_deg is None and r.stated_declination_deg is None
    closed = make_doc([course(az, d) for az, d in FIT_RECORD], date="1790-04-01")
    magnetic = close_document(
        convert_document(closed, target_date=TARGET, allow_unknown_declination=True),
        north="magnetic",
    )
    with_d = close_document(
        convert(
            make_doc([course(az, d) for az, d in FIT_RECORD], date="1790-04-01", declination="2 E")
        ),
        north="magnetic",
    )
    # The stated 2 degrees turn the marched figure, whose gamma and factors change across it:
    # the two closures agree within a millimetre.
    assert magnetic.misclosure_m == pytest.approx(with_d.misclosure_m, abs=1e-3)


def test_fit_with_noise_and_without_scale():
    # Found positions displaced by 1 cm noise (fixed seed): rotation still within 0.005 deg.
    lat0, lon0 = PLACE["lat"], PLACE["lon"]
    lats, lons = found_by_geodesic(lat0, lon0, -4.0, 1.0, PLACE["height_m"])
    rng = np.random.default_rng(7)
    lats = [la + float(rng.normal(0, 0.01 / 111_000)) for la in lats]
    lons = [lo + float(rng.normal(0, 0.01 / 85_000)) for lo in lons]
    conv = convert(fit_doc(lats, lons, which=(1, 2, 3, 4)))
    free = fit_document(conv)
    fixed = fit_document(conv, with_scale=False)
    assert free.empirical_declination_deg == pytest.approx(-4.0, abs=0.005)
    assert fixed.empirical_declination_deg == pytest.approx(-4.0, abs=0.005)
    assert fixed.scale == 1.0 and fixed.record_length_factor is None
    assert free.record_length_factor == pytest.approx(1.0, abs=1e-4)


def test_fit_beside_the_model_declination_when_a_model_covers_the_date():
    lat0, lon0 = PLACE["lat"], PLACE["lon"]
    lats, lons = found_by_geodesic(lat0, lon0, -7.0, 1.0, PLACE["height_m"])
    conv = convert(fit_doc(lats, lons, date="1925-06-15", stated="auto"))
    r = fit_document(conv)
    assert r.model_declination_deg is not None and r.model
    assert abs(r.model_declination_deg) < 30
    assert r.empirical_declination_deg == pytest.approx(-7.0, abs=0.005)


def test_point_of_beginning_by_grid_coordinates_counts_as_found():
    t = Transformer.from_crs("EPSG:4326", CRS, always_xy=True)
    lats, lons = found_by_geodesic(PLACE["lat"], PLACE["lon"], 1.0, 1.0, PLACE["height_m"])
    e0, n0 = t.transform(PLACE["lon"], PLACE["lat"])
    doc = fit_doc(lats, lons, which=(4,))
    data = doc.model_dump(exclude_none=True)
    data["place"] = {"easting": e0, "northing": n0, "height_m": PLACE["height_m"]}
    conv = convert(document_from_dict(data))
    assert found_count(conv) == 2
    r = fit_document(conv, with_scale=False)
    assert r.empirical_declination_deg == pytest.approx(1.0, abs=0.005)


def test_too_few_found_stations_is_a_clear_error():
    lats, lons = found_by_geodesic(PLACE["lat"], PLACE["lon"], 0.0, 1.0, 0.0)
    conv = convert(fit_doc(lats, lons, which=(2,)))
    with pytest.raises(FitError, match="two or more"):
        fit_document(conv)


def test_a_lone_disagreeing_back_bearing_is_not_called_free():
    """Bug: with one fore/back pair 15' apart and a 1' tolerance, the course was reported as
    'taken as free' with zero corrections, as if its readings agreed."""
    doc = make_doc(
        [
            course(0, 100),
            course(90, 100, back="N 89 45 W"),  # 15' from the reverse of the fore bearing
            course(180, 100),
            course(270, 100),
        ],
        reference="true",
    )
    att = close_document(convert(doc), adjust="none", attraction_tolerance_deg=1 / 60).attraction
    assert att is not None and att.free_courses == () and not att.start_is_free
    assert att.start_course == 2
    assert "no course" in att.reference_text() and "15.0′" in att.reference_text()
