"""North conversions of a document: magnetic (record) <-> true <-> grid <-> magnetic (target)."""

from __future__ import annotations

import datetime as dt
import itertools
import math
from pathlib import Path

import numpy as np
import pytest

from lodeline.geo.document import document_from_dict, load_document
from lodeline.geo.errors import DocumentError, ModelRangeError
from lodeline.geo.north import convert_document

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))
REFERENCES = ("magnetic", "true", "grid")


def ppigrf_declination(lat: float, lon: float, day: dt.date, height_m: float = 0.0) -> float:
    """Declination (deg, east positive) from ppigrf's IGRF (reference library, test only)."""
    ppigrf = pytest.importorskip("ppigrf")
    be, bn, _bu = ppigrf.igrf(
        lon, lat, height_m / 1000.0, dt.datetime(day.year, day.month, day.day)
    )
    return math.degrees(math.atan2(float(np.ravel(be)[0]), float(np.ravel(bn)[0])))


def doc_with(courses, *, reference="magnetic", date="1925-06-15", place=None, **record):
    return document_from_dict(
        {
            "format_version": 1,
            "title": "check",
            "closed": False,
            "place": place or {"lat": 44.5, "lon": -72.2, "height_m": 300.0},
            "record": {
                "reference": reference,
                "date": date,
                "distance_unit": "m",
                "foot": "international",
                **record,
            },
            "course": courses,
        }
    )


@pytest.mark.reference
def test_worked_conversion_magnetic_1925_to_2024_against_ppigrf():
    # One course at a place in the north-eastern US; the field engine's declinations at both
    # dates must match ppigrf's IGRF-14 and mag2 = mag1 + D1 - D2 (DESIGN.md) to 0.001 deg.
    lat, lon, h = 44.5, -72.2, 300.0
    doc = doc_with([{"bearing": "N 30 E", "distance": 100}])
    conv = convert_document(doc, target_date="2024-07-01", model="auto")
    c = conv.courses[0]
    d1 = ppigrf_declination(lat, lon, dt.date(1925, 6, 15), h)
    d2 = ppigrf_declination(lat, lon, dt.date(2024, 7, 1), h)
    assert c.declination_record_deg == pytest.approx(d1, abs=1e-3)
    assert c.declination_target_deg == pytest.approx(d2, abs=1e-3)
    assert c.azimuth.magnetic_record == pytest.approx(30.0)
    assert c.azimuth.magnetic_target == pytest.approx((30.0 + d1 - d2) % 360, abs=1e-3)
    assert c.azimuth.true == pytest.approx((30.0 + d1) % 360, abs=1e-3)
    assert c.azimuth.grid == pytest.approx(
        (30.0 + c.declination_record_deg - c.convergence_deg) % 360, abs=1e-12
    )


@pytest.mark.reference
def test_target_model_wmm2025_against_pygeomag():
    # WMM2025 at the target date against pygeomag's own WMM2025 coefficients (test only).
    pygeomag = pytest.importorskip("pygeomag")
    from lodeline.geo.models import available_models  # noqa: F401  (the model must be registered)

    lat, lon, h = 44.5, -72.2, 300.0
    doc = doc_with([{"bearing": "N 30 E", "distance": 100}])
    conv = convert_document(doc, target_date="2026-03-01", model="WMM2025")
    geo_mag = pygeomag.GeoMag(coefficients_file="wmm/WMM_2025.COF")
    year = 2026 + (dt.date(2026, 3, 1) - dt.date(2026, 1, 1)).days / 365
    ref = geo_mag.calculate(glat=lat, glon=lon, alt=h / 1000.0, time=year)
    c = conv.courses[0]
    assert c.declination_target_deg == pytest.approx(ref.d, abs=1e-3)
    assert c.declination_target_sigma_deg is not None and c.declination_target_sigma_deg > 0
    assert c.azimuth.magnetic_target == pytest.approx(
        (30.0 + c.declination_record_deg - ref.d) % 360, abs=1e-3
    )


@pytest.mark.reference
def test_declination_and_convergence_are_taken_at_each_course_start():
    # A long traverse (3 x 30 km) so D and gamma change from station to station.
    courses = [{"bearing": az, "distance": 30000} for az in ("N 60 E", "S 70 E", "N 20 E")]
    doc = doc_with(courses)
    conv = convert_document(doc, target_date="2020-01-01")
    from lodeline.geo.grid import grid_factors

    gammas = []
    for c, start in zip(conv.courses, conv.stations[:-1], strict=True):
        assert c.start == start
        d1 = ppigrf_declination(start.lat, start.lon, dt.date(1925, 6, 15), 300.0)
        assert c.declination_record_deg == pytest.approx(d1, abs=1e-3)
        f = grid_factors(conv.crs, lat=start.lat, lon=start.lon, height_m=300.0)
        assert c.convergence_deg == pytest.approx(float(f.convergence_deg), abs=1e-9)
        assert c.combined_factor == pytest.approx(float(f.combined_factor), abs=1e-12)
        gammas.append(c.convergence_deg)
        # the course curves on the grid: its chord is a little shorter than its marched
        # path and runs between the grid azimuths at its start and its end
        de = (c.end.easting - c.start.easting) * conv.grid_unit_m
        dn = (c.end.northing - c.start.northing) * conv.grid_unit_m
        assert c.steps > 1
        assert math.hypot(de, dn) <= c.grid_length_m + 1e-6
        assert math.hypot(de, dn) == pytest.approx(c.grid_length_m, rel=1e-4)
        chord = math.degrees(math.atan2(de, dn)) % 360
        lo, hi = sorted((c.azimuth.grid, c.azimuth_end.grid))
        assert lo - 1e-9 <= chord <= hi + 1e-9
    assert max(gammas) - min(gammas) > 0.1  # the stations really moved


def test_stations_agree_with_an_independent_geodesic_march():
    # pyproj's Geod.fwd in 5 m steps keeping the true azimuth (the line a compass runs, D
    # taken as changing linearly from the course's start to its end) with ellipsoidal lengths
    # (ground x R/(R+h)) must land within 5 mm of the grid march for a figure of about 1 km.
    from pyproj import Geod

    doc = load_document(next(d for d in DEMOS if "woodlot" in d.name))
    conv = convert_document(doc, target_date="2025-01-01")
    geod = Geod(ellps="WGS84")
    lon, lat = conv.stations[0].lon, conv.stations[0].lat
    for c in conv.courses:
        steps = int(c.length_m / 5) + 1
        t0, t1 = c.azimuth.true, c.azimuth_end.true
        for j in range(steps):
            az = t0 + ((t1 - t0 + 180) % 360 - 180) * (j + 0.5) / steps
            lon, lat, _ = geod.fwd(lon, lat, az, c.length_m * c.elevation_factor / steps)
        end = c.end
        _, _, miss = geod.inv(lon, lat, end.lon, end.lat)
        assert miss < 0.005
        lon, lat = end.lon, end.lat


@pytest.mark.parametrize(("a", "b"), list(itertools.product(REFERENCES, REFERENCES)))
def test_round_trip_through_every_pair_of_references(a, b):
    # Record in reference a, convert, write the course again in reference b (full precision),
    # convert again: all four azimuths and the stations must agree.
    courses = [
        {"bearing": "N 12 30 E", "distance": 400},
        {"bearing": "S 80 15 E", "distance": 350},
        {"bearing": "S 33 W", "distance": 520},
    ]
    first = convert_document(doc_with(courses, reference=a), target_date="2023-05-01")
    key = {"magnetic": "magnetic_record", "true": "true", "grid": "grid"}[b]
    again_courses = [
        {"bearing": f"{getattr(c.azimuth, key):.10f}", "distance": 400 if i == 0 else d}
        for i, (c, d) in enumerate(zip(first.courses, (400, 350, 520), strict=True))
    ]
    second = convert_document(doc_with(again_courses, reference=b), target_date="2023-05-01")
    # A course read in another reference stands for another line (a grid line is straight,
    # a true line turns with gamma on the grid, a magnetic one with D - gamma): written with
    # the bearing at its start, it ends off by about L^2 |d(D - gamma)/ds| / 2, and the
    # stations after it move by that much (gamma changes by about tan(lat) / R = 1.4e-7 rad
    # per metre here, D by the same order; 4e-7 taken). At the first station the bearings
    # are the same numbers.
    lengths = (400, 350, 520)
    for i, (c1, c2) in enumerate(zip(first.courses, second.courses, strict=True)):
        reach = sum(lengths[:i])
        for name in ("magnetic_record", "true", "grid", "magnetic_target"):
            x, y = getattr(c1.azimuth, name), getattr(c2.azimuth, name)
            tol = 1e-7 + math.degrees(reach * 4e-7)
            assert abs((x - y + 180) % 360 - 180) < tol, (name, x, y)
    for i, (s1, s2) in enumerate(zip(first.stations, second.stations, strict=True)):
        tol = 1e-4 + sum(L * L for L in lengths[:i]) * 4e-7 / 2
        assert math.hypot(s1.easting - s2.easting, s1.northing - s2.northing) < tol


def test_stated_declination_replaces_the_model_at_the_record_date():
    # "2°15' W" is -2.25 deg, east positive (DESIGN.md convention).
    doc = doc_with(
        [{"call": "N 45 1/2 E 20 perches"}, {"call": "S 10 E 15 perches"}],
        date="1854-05-12",
        declination="2°15' W",
        foot="us",
    )
    conv = convert_document(doc, target_date="2025-06-01")
    assert conv.declination_source == "stated"
    assert conv.record_model is None
    for c in conv.courses:
        assert c.declination_record_deg == -2.25
        assert c.declination_record_sigma_deg is None
        assert c.azimuth.true == pytest.approx((c.recorded.azimuth_deg - 2.25) % 360)
    assert conv.courses[0].bearing.magnetic_record == "N 45½° E"  # the call's own precision
    assert conv.courses[0].bearing.true == "N 43°15′ E"  # derived: minutes at least


def test_numeric_stated_declination():
    doc = doc_with([{"bearing": "N 0 E", "distance": 10}], declination=3.5)
    c = convert_document(doc, target_date="2025-06-01").courses[0]
    assert c.declination_record_deg == 3.5 and c.azimuth.true == pytest.approx(3.5)


def test_record_outside_every_model_is_a_one_line_error_naming_the_remedies():
    doc = doc_with([{"bearing": "N 10 E", "distance": 10}], date="1700-01-01")
    with pytest.raises(ModelRangeError) as info:
        convert_document(doc, file="old.toml", target_date="2025-01-01")
    err = info.value
    assert (err.file, err.course, err.field) == ("old.toml", None, "record.date")  # a setting
    text = str(err)
    assert "\n" not in text and "record.declination" in text and "1700" in text


def test_target_outside_the_chosen_model_is_a_one_line_error():
    doc = doc_with([{"bearing": "N 10 E", "distance": 10}])
    with pytest.raises(ModelRangeError) as info:
        convert_document(doc, file="d.toml", target_date="2024-01-01", model="WMM2025")
    assert info.value.field == "target.date" and info.value.course is None
    assert "--model" in str(info.value)


def test_grid_record_without_date_has_no_magnetic_record_values():
    doc = doc_with([{"bearing": "N 10 E", "distance": 10}], reference="grid", date=None)
    conv = convert_document(doc, target_date="2025-01-01")
    c = conv.courses[0]
    assert c.declination_record_deg is None
    assert c.azimuth.magnetic_record is None and c.bearing.magnetic_record is None
    assert c.azimuth.true == pytest.approx(10.0 + c.convergence_deg)
    data = conv.as_dict()
    assert data["record_date"] is None
    assert data["courses"][0]["azimuth"]["magnetic_record_deg"] is None


def test_true_record_before_the_models_keeps_going_without_magnetic_record():
    doc = doc_with([{"bearing": "N 10 E", "distance": 10}], reference="true", date="1850-01-01")
    conv = convert_document(doc, target_date="2025-01-01")
    assert conv.courses[0].azimuth.magnetic_record is None
    assert any("record date" in w for w in conv.warnings)


def test_target_date_defaults_to_the_document_then_today():
    doc = doc_with([{"bearing": "N 10 E", "distance": 10}])
    assert convert_document(doc).target_date == dt.date.today()
    data = doc.model_dump()
    data["target"] = {"date": "2021-03-04"}
    doc2 = document_from_dict(data)
    assert convert_document(doc2).target_date == dt.date(2021, 3, 4)
    assert convert_document(doc2, target_date="2022-01-01").target_date == dt.date(2022, 1, 1)
    with pytest.raises(DocumentError):
        convert_document(doc2, target_date="someday")


def test_place_given_by_grid_coordinates():
    # UTM zone 18N (EPSG:32618): a point of beginning by easting/northing.
    data = doc_with([{"bearing": "N 0 E", "distance": 100}]).model_dump(exclude_none=True)
    data["place"] = {"easting": 700000.0, "northing": 4900000.0}
    data["grid"] = {"crs": "EPSG:32618"}
    doc = document_from_dict(data)
    conv = convert_document(doc, target_date="2025-01-01")
    assert conv.place_by_grid
    assert conv.stations[0].easting == pytest.approx(700000.0, abs=1e-6)
    assert conv.stations[0].northing == pytest.approx(4900000.0, abs=1e-6)
    from pyproj import Transformer

    lon, lat = Transformer.from_crs("EPSG:32618", "EPSG:4326", always_xy=True).transform(
        700000.0, 4900000.0
    )
    assert conv.stations[0].lat == pytest.approx(lat, abs=1e-9)
    assert conv.stations[0].lon == pytest.approx(lon, abs=1e-9)


def test_found_positions_in_both_forms():
    doc = doc_with(
        [
            {"bearing": "N 0 E", "distance": 100, "found": {"lat": 44.5009, "lon": -72.2}},
            {"bearing": "N 90 E", "distance": 100, "found": {"easting": 1.0, "northing": 2.0}},
            {"bearing": "S 0 E", "distance": 100},
        ]
    )
    conv = convert_document(doc, target_date="2025-01-01")
    f1, f2, f3 = (c.found for c in conv.courses)
    assert f3 is None
    assert (f1.lat, f1.lon) == (44.5009, -72.2)
    from lodeline.geo.grid import to_grid

    e, n = to_grid(conv.crs, lat=44.5009, lon=-72.2)
    assert f1.easting == pytest.approx(float(e)) and f1.northing == pytest.approx(float(n))
    assert (f2.easting, f2.northing) == (1.0, 2.0)


def test_field_is_evaluated_once_per_pass_for_all_stations(field_calls):
    calls = field_calls
    courses = [{"bearing": "N 10 E", "distance": 100}] * 50
    convert_document(doc_with(courses), target_date="2024-01-01")
    # a first pass at the point of beginning and its two probes (three points at both dates),
    # then every station at both dates in one call; on a 5 km line the first estimate is
    # good enough that one pass over the stations confirms it
    assert calls == [2 * 3, 2 * 51]


@pytest.mark.parametrize("reference", ["magnetic", "true", "grid"])
def test_stations_are_a_fixed_point_of_the_march(reference):
    # The stations must be where the march puts them (the definition in lodeline.geo.march): each
    # step of a magnetic or true course runs along recorded + mean D - mean gamma of its two
    # nodes for its ground length times the mean combined factor (trapezoidal rule); a grid
    # course is straight with Simpson's mean factor (k1 + 4 km + k2) / 6 (state plane
    # coordinate manuals). Evaluate D (field_at), gamma and k (pyproj through grid_factors)
    # at the reported nodes, re-march with them: no station may move by more than 1 mm.
    from pyproj import Transformer

    from lodeline.geo.grid import grid_factors
    from lodeline.geo.magnetic import field_at

    courses = [{"bearing": f"N {10 + 7 * (i % 11)} E", "distance": 400} for i in range(40)]
    doc = doc_with(courses, reference=reference, place={"lat": 64.5, "lon": -147.7})
    conv = convert_document(doc, target_date="2024-01-01")
    inverse = Transformer.from_crs(conv.crs, "EPSG:4326", always_xy=True)

    def values(e, n):
        lon, lat = inverse.transform(np.asarray(e), np.asarray(n))
        d1 = field_at(lat=lat, lon=lon, year=conv.record_year, model="auto").declination_deg
        f = grid_factors(conv.crs, lat=lat, lon=lon, height_m=0.0)
        return np.asarray(d1), np.asarray(f.convergence_deg), np.asarray(f.combined_factor)

    e, n = conv.stations[0].easting, conv.stations[0].northing
    for c in conv.courses:
        rec = c.recorded.azimuth_deg
        pe, pn = np.array(c.path.easting), np.array(c.path.northing)
        if reference == "grid":
            mid_e, mid_n = (pe[0] + pe[-1]) / 2, (pn[0] + pn[-1]) / 2
            _, _, k = values([pe[0], mid_e, pe[-1]], [pn[0], mid_n, pn[-1]])
            g = c.length_m * (k[0] + 4 * k[1] + k[2]) / 6
            e += g * math.sin(math.radians(rec))
            n += g * math.cos(math.radians(rec))
        else:
            d1, gamma, k = values(pe, pn)
            h = c.length_m / (pe.size - 1)
            d_mid = (d1[:-1] + d1[1:]) / 2 if reference == "magnetic" else 0.0
            az = np.radians(rec + d_mid - (gamma[:-1] + gamma[1:]) / 2)
            step = h * (k[:-1] + k[1:]) / 2
            e += float(np.sum(step * np.sin(az)))
            n += float(np.sum(step * np.cos(az)))
        assert math.hypot(e - c.end.easting, n - c.end.northing) <= 1e-3
        e, n = c.end.easting, c.end.northing


@pytest.mark.parametrize("demo", DEMOS, ids=[d.name for d in DEMOS])
def test_demo_documents_convert(demo):
    doc = load_document(demo)
    conv = convert_document(doc, file=str(demo), target_date="2025-06-01")
    assert len(conv.courses) == len(doc.course) >= 3
    assert len(conv.stations) == len(conv.courses) + 1
    for c in conv.courses:
        assert c.bearing.true and c.bearing.grid and c.bearing.magnetic_target
        assert c.bearing.magnetic_record
    if doc.closed:
        # the demos close with a small, realistic misclosure (an old compass-and-chain survey)
        first, last = conv.stations[0], conv.stations[-1]
        miss = math.hypot(last.easting - first.easting, last.northing - first.northing)
        perimeter = sum(c.grid_length_m for c in conv.courses)
        assert 0.05 < miss * conv.grid_unit_m < perimeter / 500
