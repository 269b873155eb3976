"""Positions, GeoJSON (RFC 7946) and CSV export (lodeline.geo.export, ``lodeline export``)."""

from __future__ import annotations

import csv
import io
import json
import math
import re
from pathlib import Path

import pytest
from geojson_pydantic import FeatureCollection
from pyproj import Geod

from lodeline.geo.document import document_from_dict, load_document
from lodeline.geo.export import (
    COURSE_COLUMNS,
    POINT_COLUMNS,
    courses_csv_path,
    geojson_collection,
    geojson_text,
    positions,
)
from lodeline.geo.north import convert_document
from lodeline.tui.cli import main

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))
CRUISE = next(d for d in DEMOS if "cruise" in d.name)
TARGET = "2026-01-01"
GEOD = Geod(ellps="WGS84")


@pytest.fixture(autouse=True)
def _shipped_models_only(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def convert_file(path):
    return convert_document(load_document(path), file=str(path), target_date=TARGET)


def signed_area(ring):
    """Shoelace sum over a closed [lon, lat] ring: positive when counter-clockwise."""
    return sum(x0 * y1 - x1 * y0 for (x0, y0), (x1, y1) in zip(ring, ring[1:], strict=False))


def run(capsys, *argv):
    status = main([*map(str, argv)])
    out, err = capsys.readouterr()
    return status, out, err


# -- GeoJSON structure ----------------------------------------------------------------------


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_demo_geojson_is_valid_rfc7946_and_reads_back_the_same(demo):
    conv = convert_file(demo)
    collection = geojson_collection(conv)
    text = geojson_text(collection)
    fc = FeatureCollection.model_validate_json(text)  # geojson-pydantic (test extra)
    again = json.loads(text)
    assert [f.geometry.type for f in fc.features][0] == (
        "Polygon" if conv.document.closed else "LineString"
    )
    for parsed, raw in zip(fc.features, again["features"], strict=True):
        coords = parsed.geometry.model_dump()["coordinates"]
        assert json.loads(json.dumps(coords)) == raw["geometry"]["coordinates"]
    # Coordinates are [longitude, latitude]: the point of beginning is the document's place.
    pob = next(f for f in again["features"] if f["properties"]["kind"] == "station")
    lon, lat = pob["geometry"]["coordinates"]
    assert lon == pytest.approx(conv.stations[0].lon, abs=1e-8)
    assert lat == pytest.approx(conv.stations[0].lat, abs=1e-8)
    # 8 decimals at most in every coordinate.
    for number in re.findall(r"-?\d+\.\d+", json.dumps([f["geometry"] for f in again["features"]])):
        assert len(number.split(".")[1]) <= 8, number
    props = again["properties"]
    for key in (
        "title",
        "record_date",
        "target_date",
        "model",
        "declination_record_deg",
        "declination_target_deg",
        "crs",
        "misclosure_m",
        "precision",
        "adjustment",
        "area_m2",
        "area_acres",
        "cautions",
    ):
        assert key in props
    assert "not a legal boundary" in props["cautions"].lower()
    course = again["features"][0]["properties"]["courses"][0]
    assert set(course["bearing"]) == {"magnetic_record", "true", "grid", "magnetic_target"}
    assert set(course["azimuth"]) == {
        "magnetic_record_deg",
        "true_deg",
        "grid_deg",
        "magnetic_target_deg",
    }
    assert course["call"] == conv.courses[0].call and course["length_m"] > 0


@pytest.mark.parametrize("demo", [d for d in DEMOS if d != CRUISE], ids=lambda p: p.stem)
@pytest.mark.parametrize("adjust", ["compass", "transit", "none"])
def test_polygon_ring_is_closed_and_counter_clockwise(demo, adjust):
    conv = convert_file(demo)
    collection = geojson_collection(conv, adjust=adjust)
    ring = collection["features"][0]["geometry"]["coordinates"][0]
    assert ring[0] == ring[-1] and len(ring) == len(conv.courses) + 1
    assert signed_area(ring) > 0
    stations = [f for f in collection["features"] if f["properties"]["kind"] == "station"]
    # adjusted: the last station is the point of beginning and is not repeated
    assert len(stations) == len(conv.courses) + (1 if adjust == "none" else 0)
    if adjust != "none":
        pos = positions(conv, adjust=adjust)
        first, last = pos.stations[0], pos.stations[-1]
        assert math.hypot(last.easting - first.easting, last.northing - first.northing) < 1e-6


def test_open_traverse_is_a_line_string_through_every_station():
    conv = convert_file(CRUISE)
    collection = geojson_collection(conv)
    geometry = collection["features"][0]["geometry"]
    assert geometry["type"] == "LineString"
    assert len(geometry["coordinates"]) == len(conv.courses) + 1
    assert collection["properties"]["area_m2"] is None


# -- positions against an independent geodesic computation -----------------------------------

# Invented ~1 km figure (four courses, about 300 m each), record to the compass with a
# stated declination, at 250 m above the ellipsoid in UTM zone 18N.
FIGURE = [(35.5, 301.8), (118.25, 255.4), (201.0, 312.6), (290.75, 260.9)]
STATED = -3.25
HEIGHT = 250.0


def figure_doc(*, closed=True):
    return document_from_dict(
        {
            "format_version": 1,
            "title": "Invented export check",
            "closed": closed,
            "place": {"lat": 40.2, "lon": -76.9, "height_m": HEIGHT},
            "record": {
                "reference": "magnetic",
                "date": "1860-07-01",
                "declination": "3 15 W",
                "distance_unit": "m",
                "foot": "us",
            },
            "course": [{"bearing": f"{a}", "distance": d, "every": "100 m"} for a, d in FIGURE],
        }
    )


def test_unadjusted_positions_agree_with_pyproj_geodesics():
    # Independent: pyproj's Geod.fwd along the true azimuth (recorded + D, DESIGN.md) for the
    # ground length reduced to the ellipsoid by R/(R+h), R = sqrt(M N) at the start (the usual
    # elevation factor; common practice). Agreement to 0.02 m (issue 6).
    conv = convert_document(figure_doc(), target_date=TARGET)
    pos = positions(conv, adjust="none")
    a, f = GEOD.a, GEOD.f
    e2 = f * (2 - f)
    lon, lat = -76.9, 40.2
    worst = 0.0
    for (az, d), station in zip(FIGURE, pos.stations[1:], strict=True):
        s = math.sin(math.radians(lat)) ** 2
        radius = math.sqrt(a * (1 - e2) / (1 - e2 * s) ** 1.5 * a / math.sqrt(1 - e2 * s))
        lon, lat, _ = GEOD.fwd(lon, lat, az + STATED, d * radius / (radius + HEIGHT))
        _, _, gap = GEOD.inv(lon, lat, station.lon, station.lat)
        worst = max(worst, gap)
    assert worst < 0.02, worst


def test_intermediate_points_lie_on_their_course_at_the_spacing():
    conv = convert_document(figure_doc(closed=False), target_date=TARGET)
    pos = positions(conv)
    assert pos.adjustment == "none"
    # 301.8 m every 100 m -> 100, 200, 300; 255.4 -> 100, 200; 312.6 -> 3; 260.9 -> 2
    assert [p.course for p in pos.points] == [1, 1, 1, 2, 2, 3, 3, 3, 4, 4]
    for p in pos.points:
        start, end = pos.stations[p.course - 1], pos.stations[p.course]
        _, _, from_start = GEOD.inv(start.lon, start.lat, p.lon, p.lat)
        _, _, whole = GEOD.inv(start.lon, start.lat, end.lon, end.lat)
        assert from_start / whole == pytest.approx(p.along_m / FIGURE[p.course - 1][1], abs=1e-6)
        assert p.along_m in (100.0, 200.0, 300.0)


def test_cruise_demo_plots_every_five_chains_short_of_the_line_end():
    pos = positions(convert_file(CRUISE))
    on_first = [p for p in pos.points if p.course == 1]
    # 40 chains every 5 chains, the first at 2.5 chains ([plots] first): plots at 2.5, 7.5,
    # ... 37.5 chains, numbered from 301 ([plots] start); 1 chain = 66 US survey feet =
    # 66 * 1200/3937 m (NIST).
    chain = 66 * 1200 / 3937
    expected = [(2.5 + k * 5) * chain for k in range(8)]
    assert [p.along_m for p in on_first] == pytest.approx(expected)
    assert [p.index for p in on_first] == list(range(301, 309))


# -- CSV ------------------------------------------------------------------------------------


def test_csv_files_parse_with_the_csv_module(capsys, tmp_path):
    out = tmp_path / "cruise.csv"
    status, _, err = run(capsys, "export", CRUISE, "--csv", out)
    assert status == 0, err
    raw = out.read_bytes()
    assert b"\r\n" in raw and raw.decode("utf-8")
    rows = list(csv.DictReader(io.StringIO(raw.decode("utf-8"), newline="")))
    conv = convert_file(CRUISE)
    pos = positions(conv)
    # the grid coordinates carry their unit in their names (EPSG:32615 is in metres)
    assert tuple(rows[0]) == tuple(
        f"{c}_m" if c in ("easting", "northing") else c for c in POINT_COLUMNS
    )
    assert len(rows) == len(pos.stations) + len(pos.points)
    assert rows[0]["kind"] == "station" and rows[0]["course"] == ""
    assert float(rows[0]["latitude"]) == pytest.approx(conv.stations[0].lat)
    assert {r["kind"] for r in rows} == {"station", "point"}
    courses = courses_csv_path(out)
    assert courses.name == "cruise-courses.csv"
    table = list(csv.DictReader(io.StringIO(courses.read_text(encoding="utf-8"), newline="")))
    assert tuple(table[0]) == COURSE_COLUMNS and len(table) == len(conv.courses)
    assert table[0]["call"] == conv.courses[0].call
    assert float(table[0]["grid_azimuth_deg"]) == pytest.approx(conv.courses[0].azimuth.grid)


# -- command line ---------------------------------------------------------------------------


def test_export_never_overwrites_without_force(capsys, tmp_path):
    demo = DEMOS[0]
    gj, table = tmp_path / "out.geojson", tmp_path / "out.csv"
    status, out, err = run(capsys, "export", demo, "--geojson", gj, "--csv", table)
    assert status == 0, err and gj.exists() and table.exists()
    gj.write_text("kept", encoding="utf-8")
    status, out, err = run(capsys, "export", demo, "--geojson", gj)
    assert status == 2 and "--force" in err and len(err.strip().splitlines()) == 1
    assert gj.read_text(encoding="utf-8") == "kept"
    # An existing course table blocks the whole run: nothing at all is written.
    gj.unlink()
    status, out, err = run(capsys, "export", demo, "--geojson", gj, "--csv", table)
    assert status == 2 and not gj.exists()
    status, out, err = run(capsys, "export", demo, "--geojson", gj, "--csv", table, "--force")
    assert status == 0 and FeatureCollection.model_validate_json(gj.read_text(encoding="utf-8"))
    assert not list(tmp_path.glob(".*.tmp"))


def test_export_errors_exit_2(capsys, tmp_path):
    # the cruise line without its found end: an open line with nothing to close on
    loose = tmp_path / "loose.toml"
    text = CRUISE.read_text(encoding="utf-8")
    loose.write_text("\n".join(ln for ln in text.splitlines() if not ln.startswith("found")))
    status, _, err = run(
        capsys, "export", loose, "--geojson", tmp_path / "a.geojson", "--adjust", "compass"
    )
    assert status == 2 and "open" in err and not (tmp_path / "a.geojson").exists()
    status, _, err = run(capsys, "export", CRUISE)
    assert status == 2 and "nothing to export" in err


def test_geojson_text_holds_the_numbers_the_standard_library_writes_and_refuses_a_bad_one():
    # Reference: Python's json module on the same collection (every number read back equal).
    conv = convert_file(DEMOS[0])
    collection = geojson_collection(conv)
    text = geojson_text(collection)
    assert json.loads(text) == json.loads(json.dumps(collection, ensure_ascii=False))
    assert text.count("\n") == len(collection) + len(collection["features"]) + 3  # a line each
    broken = {**collection, "features": [dict(f) for f in collection["features"]]}
    point = next(k for k, f in enumerate(broken["features"]) if f["geometry"]["type"] == "Point")
    broken["features"][point] = {
        **broken["features"][point],
        "geometry": {"type": "Point", "coordinates": [math.nan, 44.0]},
    }
    with pytest.raises(ValueError, match=f"feature {point}: a coordinate is not a finite"):
        geojson_text(broken)
    ring = broken["features"][0]["geometry"]["coordinates"]
    if broken["features"][0]["geometry"]["type"] == "Polygon":
        bad_ring = [[*ring[0][:-1], [math.inf, 0.0], ring[0][-1]]]
        broken["features"][0] = {
            **broken["features"][0],
            "geometry": {"type": "Polygon", "coordinates": bad_ring},
        }
        broken["features"][point] = collection["features"][point]
        with pytest.raises(ValueError, match="feature 0"):
            geojson_text(broken)
