"""``lodeline found DOC --from POINTS``: receiver files (invented points written for these
tests) matched to corners and written into the document."""

from __future__ import annotations

import json
from pathlib import Path

import gpxpy
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pyproj import Transformer

from lodeline.geo.document import load_document
from lodeline.geo.errors import InputError
from lodeline.geo.export import write_exports
from lodeline.geo.north import convert_document
from lodeline.geo.point_files import read_points_text
from lodeline.tui.cli import main

DEMOS = Path(__file__).parents[1] / "demo_traverses"
ASHGROVE = DEMOS / "ashgrove_hollow_1796.toml"
BRINDLE = DEMOS / "brindlecombe_farm_1854.toml"
TARGET = "2026-01-01"


@pytest.fixture(autouse=True)
def _shipped_models_only(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def copy_doc(src, tmp_path, comment="# kept: a comment of the surveyor\n"):
    dst = tmp_path / src.name
    dst.write_text(comment + src.read_text(encoding="utf-8"), encoding="utf-8")
    return dst


def run(capsys, *argv):
    status = main([*map(str, argv)])
    out, err = capsys.readouterr()
    return status, out, err


def conv_of(path):
    return convert_document(load_document(path), file=str(path), target_date=TARGET)


@pytest.mark.parametrize("demo", sorted(DEMOS.glob("*.toml")), ids=lambda p: p.stem)
def test_found_from_an_exported_gpx_restores_its_positions(demo, tmp_path, capsys):
    doc = copy_doc(demo, tmp_path)
    conv = conv_of(doc)
    gpx_path, geojson = tmp_path / "line.gpx", tmp_path / "line.geojson"
    write_exports(conv, gpx=gpx_path, geojson=geojson)
    status, out, err = run(capsys, "found", doc, "--from", gpx_path)
    assert status == 0, err
    gpx = gpxpy.parse(gpx_path.read_text(encoding="utf-8"))
    stations = {int(w.name.split()[0]): w for w in gpx.waypoints if w.type == "station"}
    saved = load_document(doc)
    n = len(saved.course)
    for k, w in stations.items():
        course = n if k == 0 else k
        if k == 0 and not saved.closed:
            assert "the point of beginning" in out  # an open line's start holds no found
            continue
        f = saved.course[course - 1].found
        assert (f.lat, f.lon) == (w.latitude, w.longitude)  # exactly the numbers of the file
    # the found stations are the GeoJSON's points within 1 mm (the 8 decimals written)
    points = {
        (f["properties"]["index"]): f["properties"]
        for f in json.loads(geojson.read_text())["features"]
        if f["properties"].get("kind") == "station"
    }
    again = conv_of(doc)
    for c in again.courses:
        k = 0 if saved.closed and c.index == n else c.index
        if c.found is not None and k in points:
            dx = (c.found.easting - points[k]["easting"]) * again.grid_unit_m
            dy = (c.found.northing - points[k]["northing"]) * again.grid_unit_m
            assert abs(dx) < 1e-3 and abs(dy) < 1e-3
    assert doc.read_text().startswith("# kept: a comment of the surveyor")
    assert Path(f"{doc}.bak").read_text() == demo.read_text().join(
        ["# kept: a comment of the surveyor\n", ""]
    )


def test_csv_in_another_crs_is_projected_to_the_document_grid(tmp_path, capsys):
    doc = copy_doc(ASHGROVE, tmp_path)
    conv = conv_of(doc)
    # Pennsylvania South state plane, US survey feet (EPSG:2272), by pyproj on its own
    to_spcs = Transformer.from_crs("EPSG:4326", "EPSG:2272", always_xy=True)
    rows = ["Point ID,Easting,Northing,Code"]
    for s in conv.stations[1:]:
        e, n = to_spcs.transform(s.lon, s.lat)
        rows.append(f"C{s.index},{e:.4f},{n:.4f},IP")
    pts = tmp_path / "spcs.csv"
    pts.write_text("\n".join(rows) + "\n")
    status, out, err = run(capsys, "found", doc, "--from", pts, "--crs", "EPSG:2272")
    assert status == 0, err
    saved = load_document(doc)
    for s in conv.stations[1:]:
        f = saved.course[s.index - 1].found
        # 0.1 mm of a foot in the file, 0.1 mm of a metre written: within 1 mm
        assert abs(f.easting - s.easting) < 1e-3 and abs(f.northing - s.northing) < 1e-3


def test_csv_in_lat_lon_with_usual_header_spellings(tmp_path, capsys):
    doc = copy_doc(BRINDLE, tmp_path)
    pts = tmp_path / "receiver.csv"
    # invented points, semicolon-separated, header in mixed case
    pts.write_text("NAME;Latitude;Long\n2 post;40.433056;-77.597347\nchestnut stump;40.43030;-77.59618\n"
                   "spring;40.4300;-77.6000\n")  # fmt: skip
    status, out, err = run(capsys, "found", doc, "--from", pts)
    assert status == 0, err
    saved = load_document(doc)
    assert (saved.course[1].found.lat, saved.course[1].found.lon) == (40.433056, -77.597347)
    assert (saved.course[2].found.lat, saved.course[2].found.lon) == (40.4303, -77.59618)
    assert "not matched 1:" in out and "'spring'" in out


def test_duplicate_names_are_refused_and_the_rest_written(tmp_path, capsys):
    doc = copy_doc(BRINDLE, tmp_path)
    pts = tmp_path / "dups.csv"
    pts.write_text("name,lat,lon\n3,40.4303,-77.5962\n3,40.4304,-77.5961\n4,40.42833,-77.59940\n")
    status, out, err = run(capsys, "found", doc, "--from", pts)
    assert status == 0, err
    assert "refused 2:" in out and "also at row 3" in out and "also at row 2" in out
    saved = load_document(doc)
    assert saved.course[2].found is None
    assert saved.course[3].found.lat == 40.42833


def test_two_points_on_one_corner_and_one_point_near_two_corners_are_refused(tmp_path, capsys):
    doc = copy_doc(BRINDLE, tmp_path)
    conv = conv_of(doc)
    s2 = conv.stations[2]
    pts = tmp_path / "same.csv"
    pts.write_text(
        f"name,easting,northing\n2,{s2.easting},{s2.northing}\nC2,{s2.easting},{s2.northing}\n"
    )
    status, out, _ = run(capsys, "found", doc, "--from", pts, "--dry-run")
    assert status == 0 and "corner 2 is matched by row 3 too" in out
    status, out, _ = run(capsys, "found", doc, "--from", pts, "--match", "nearest", "--within",
                         "400", "m", "--dry-run")  # fmt: skip
    assert "matches corners" in out  # the courses are 250-350 m long
    assert not Path(f"{doc}.bak").exists()


def test_nearest_match_within_the_distance(tmp_path, capsys):
    doc = copy_doc(BRINDLE, tmp_path)
    conv = conv_of(doc)
    s = conv.stations[3]
    pts = tmp_path / "near.geojson"
    features = [
        {"type": "Feature", "properties": {"name": "stump?"},
         "geometry": {"type": "Point", "coordinates": [s.lon + 2e-5, s.lat]}},  # about 1.7 m east
        {"type": "Feature", "properties": {"name": "far"},
         "geometry": {"type": "Point", "coordinates": [s.lon + 5e-4, s.lat]}},  # about 42 m
    ]  # fmt: skip
    pts.write_text(json.dumps({"type": "FeatureCollection", "features": features}))
    before = doc.read_bytes()
    status, out, _ = run(capsys, "found", doc, "--from", pts, "--match", "nearest", "--dry-run")
    assert status == 0 and "course 3 <- feature 1 'stump?'" in out and "dry run" in out
    assert "nearest station 3 is" in out and "more than 5 m" in out
    assert doc.read_bytes() == before
    status, out, _ = run(capsys, "found", doc, "--from", pts, "--match", "nearest", "--within",
                         "1", "m")  # fmt: skip
    assert "nothing written" in out and doc.read_bytes() == before


def test_json_document(tmp_path, capsys):
    from lodeline.geo.document import dumps_document

    doc = tmp_path / "farm.json"
    doc.write_text(dumps_document(load_document(BRINDLE), "json"))
    pts = tmp_path / "p.csv"
    pts.write_text("name,lat,lon\n1,40.4335,-77.6014\n")
    assert run(capsys, "found", doc, "--from", pts)[0] == 0
    assert load_document(doc).course[0].found.lat == 40.4335


@pytest.mark.parametrize(
    ("name", "text", "says"),
    [
        ("bad.csv", "name,lat,lon\n1,forty,-77\n", "row 2: lat 'forty' is not a number"),
        ("bad.csv", "name,x_coord\n1,2\n", "names no easting and northing"),
        ("bad.csv", "name,lat,lon\n1,95,-77\n", "outside -90..90"),
        ("bad.gpx", "<gpx><wpt lat='x' lon='1'/></gpx>", "waypoint 1: lat 'x' is not a number"),
        ("bad.gpx", "not xml", "is not readable XML"),
        ("bad.geojson", '{"type": "Point"}', "is not a GeoJSON FeatureCollection"),
        ("bad.kmz", "", "unknown point file type"),
    ],
)
def test_bad_point_files_are_one_line_exit_2(tmp_path, capsys, name, text, says):
    doc = copy_doc(BRINDLE, tmp_path)
    pts = tmp_path / name
    pts.write_text(text)
    before = doc.read_bytes()
    status, out, err = run(capsys, "found", doc, "--from", pts)
    assert status == 2
    assert says in err and name in err and len(err.strip().splitlines()) == 1
    assert doc.read_bytes() == before


def test_bad_within_is_refused(tmp_path, capsys):
    doc = copy_doc(BRINDLE, tmp_path)
    pts = tmp_path / "p.csv"
    pts.write_text("name,lat,lon\n1,40.4335,-77.6014\n")
    # ("five" reads as 5 m: number words are distances; "far" is none)
    status, _, err = run(capsys, "found", doc, "--from", pts, "--within", "far")
    assert status == 2 and "--within" in err


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=300), st.sampled_from(["csv", "geojson", "gpx"]))
def test_point_file_readers_refuse_with_input_error_only(text, fmt):
    try:
        points = read_points_text(text, fmt, file="fuzz")
    except InputError:
        return
    for p in points:
        assert (p.lat is not None) != (p.easting is not None)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(st.text(alphabet="0123456789CcP ,;", max_size=6),
                          st.floats(-89, 89), st.floats(-179, 179)), max_size=8))  # fmt: skip
def test_csv_reader_reads_what_a_receiver_writes(rows):
    text = "name,lat,lon\n" + "".join(f'"{n}",{a!r},{b!r}\n' for n, a, b in rows)
    points = read_points_text(text, "csv", file="fuzz")
    assert [(p.lat, p.lon) for p in points] == [(a, b) for _, a, b in rows]
