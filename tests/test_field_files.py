"""GPX, KML and DXF exports: read back with gpxpy, fastkml and ezdxf, positions equal to the
GeoJSON's, structure of each format, all-or-nothing writing."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import ezdxf
import gpxpy
import pytest
from fastkml import kml as fkml
from fastkml.validator import validate
from pyproj import Transformer

from lodeline.geo.document import load_document
from lodeline.geo.export import positions, write_exports
from lodeline.geo.marks import NAME_CHARS
from lodeline.geo.north import convert_document
from lodeline.tui.cli import main

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))
TARGET = "2026-01-01"
GPX = "{http://www.topografix.com/GPX/1/1}"

# The element order of the GPX 1.1 schema (topografix.com/GPX/1/1/gpx.xsd, from memory):
# gpxType is metadata, wpt*, rte*, trk*, extensions; wptType is ele, time, magvar, geoidheight,
# name, cmt, desc, src, link*, sym, type, fix, sat, hdop, vdop, pdop, ageofdgpsdata, dgpsid,
# extensions; rteType is name, cmt, desc, src, link*, number, type, extensions, rtept*;
# metadataType is name, desc, author, copyright, link*, time, keywords, bounds, extensions.
GPX_ORDER = ["metadata", "wpt", "rte", "trk", "extensions"]
WPT_ORDER = ["ele", "time", "magvar", "geoidheight", "name", "cmt", "desc", "src", "link",
             "sym", "type", "fix", "sat", "hdop", "vdop", "pdop", "ageofdgpsdata", "dgpsid",
             "extensions"]  # fmt: skip
RTE_ORDER = ["name", "cmt", "desc", "src", "link", "number", "type", "extensions", "rtept"]
META_ORDER = ["name", "desc", "author", "copyright", "link", "time", "keywords", "bounds",
              "extensions"]  # fmt: skip


@pytest.fixture(autouse=True)
def _shipped_models_only(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def convert_file(path):
    return convert_document(load_document(path), file=str(path), target_date=TARGET)


def export_all(demo, folder, adjust=None):
    conv = convert_file(demo)
    out = {k: folder / f"out.{k}" for k in ("geojson", "gpx", "kml", "dxf")}
    write_exports(conv, geojson=out["geojson"], gpx=out["gpx"], kml=out["kml"],
                  dxf=out["dxf"], adjust=adjust)  # fmt: skip
    return conv, out, json.loads(out["geojson"].read_text())


def geojson_points(collection):
    """{(kind, index): (lon, lat, easting, northing)} of the GeoJSON's Point features:
    stations, plots (kind "point"), events along the lines and, with found corners, the
    corners with their restoration status (every one a waypoint, placemark and DXF point)."""
    return {
        (f["properties"]["kind"], f["properties"]["index"]): (
            *f["geometry"]["coordinates"],
            f["properties"]["easting"],
            f["properties"]["northing"],
        )
        for f in collection["features"]
        if f["geometry"]["type"] == "Point"
    }


def mark_key(name):
    """(kind, index) of a waypoint or placemark name: "3 chestnut stump", "plot 2",
    "E1 crossed a run" (an event), "restored 3" or "record only 5" (a corner)."""
    if name.startswith("plot "):
        return ("point", int(name.split()[1]))
    first = name.split()[0]
    if first[0] == "E":
        return ("event", int(first[1:]))
    if first in ("found", "held", "restored", "record"):
        return ("corner", int(name.split()[-1]))
    return ("station", int(first))


def children(el):
    return [c.tag.removeprefix(GPX) for c in el]


def in_schema_order(tags, order):
    ranks = [order.index(t) for t in tags]  # ValueError: an element the schema does not have
    return ranks == sorted(ranks)


# -- GPX -------------------------------------------------------------------------------------


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_gpx_reads_back_with_gpxpy_at_the_geojson_positions(demo, tmp_path):
    conv, out, collection = export_all(demo, tmp_path)
    points = geojson_points(collection)
    gpx = gpxpy.parse(out["gpx"].read_text(encoding="utf-8"))
    assert gpx.version == "1.1"
    assert len(gpx.waypoints) == len(points)
    for w in gpx.waypoints:
        lon, lat, _, _ = points[mark_key(w.comment)]
        # written to the 8 decimals of the GeoJSON: equal to the last written digit
        assert (w.longitude, w.latitude) == (lon, lat)
        assert len(w.name) <= NAME_CHARS
        assert w.type in ("station", "plot", "event", "corner")
    assert len({w.name for w in gpx.waypoints}) == len(gpx.waypoints)
    (route,) = gpx.routes
    n = len(conv.courses)
    assert len(route.points) == n + 1
    stations = [points[("station", k % n if conv.document.closed else k)] for k in range(n + 1)]
    assert [(p.longitude, p.latitude) for p in route.points] == [s[:2] for s in stations]


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_gpx_follows_the_gpx_1_1_structure(demo, tmp_path):
    _, out, _ = export_all(demo, tmp_path)
    root = ET.parse(out["gpx"]).getroot()
    assert root.tag == f"{GPX}gpx"
    assert root.get("version") == "1.1" and root.get("creator")
    assert in_schema_order(children(root), GPX_ORDER)
    assert in_schema_order(children(root.find(f"{GPX}metadata")), META_ORDER)
    for w in root.iter(f"{GPX}wpt"):
        assert in_schema_order(children(w), WPT_ORDER)
        lat, lon = float(w.get("lat")), float(w.get("lon"))
        assert -90 <= lat <= 90 and -180 <= lon < 180  # latitudeType, longitudeType
        assert len(w.get("lat").split(".")[1]) == 8
    for r in root.iter(f"{GPX}rte"):
        assert in_schema_order(children(r), RTE_ORDER)
        assert int(r.find(f"{GPX}number").text) >= 0  # nonNegativeInteger
        for rp in r.iter(f"{GPX}rtept"):
            assert in_schema_order(children(rp), WPT_ORDER)


def test_gpx_of_an_unadjusted_closed_traverse_has_no_misclosure_waypoint(tmp_path):
    demo = next(d for d in DEMOS if "brindlecombe" in d.name)
    conv, out, collection = export_all(demo, tmp_path, adjust="none")
    n = len(conv.courses)
    gpx = gpxpy.parse(out["gpx"].read_text(encoding="utf-8"))
    stations = [w for w in gpx.waypoints if w.type == "station"]
    assert [mark_key(w.comment)[1] for w in stations] == list(range(n))  # not station n
    route = gpx.routes[0].points
    assert (route[-1].latitude, route[-1].longitude) == (route[0].latitude, route[0].longitude)


def test_gpx_waypoint_describes_the_bearings_to_run(tmp_path):
    demo = next(d for d in DEMOS if "brindlecombe" in d.name)
    conv, out, _ = export_all(demo, tmp_path)
    gpx = gpxpy.parse(out["gpx"].read_text(encoding="utf-8"))
    first = gpx.waypoints[0]
    c = conv.courses[0]
    assert first.name == "0 beginning"
    for text in (c.call, c.bearing.magnetic_target, c.bearing.true, c.bearing.grid):
        assert text in first.description
    assert gpx.waypoints[1].name == "1 white oak"  # "to a white oak" (the call's words)


# -- KML -------------------------------------------------------------------------------------


def kml_placemarks(path):
    doc = fkml.KML.parse(path).features[0]
    out = []
    stack = list(doc.features)
    while stack:
        f = stack.pop(0)
        if hasattr(f, "features"):
            stack += list(f.features)
        else:
            out.append(f)
    return out


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_kml_reads_back_with_fastkml_at_the_geojson_positions(demo, tmp_path):
    conv, out, collection = export_all(demo, tmp_path)
    assert validate(file_to_validate=out["kml"])  # the OGC KML 2.2 schema fastkml ships
    points = geojson_points(collection)
    figure = collection["features"][0]["geometry"]
    marks = kml_placemarks(out["kml"])
    shapes = [m for m in marks if m.geometry.geom_type != "Point"]
    assert len(shapes) == 1
    shape = shapes[0].geometry
    assert shape.geom_type == figure["type"]
    coords = shape.exterior.coords if figure["type"] == "Polygon" else shape.coords
    want = figure["coordinates"][0] if figure["type"] == "Polygon" else figure["coordinates"]
    assert [tuple(c) for c in coords] == [tuple(c) for c in want]
    singles = [m for m in marks if m.geometry.geom_type == "Point"]
    assert len(singles) == len(points)
    for m in singles:
        lon, lat, _, _ = points[mark_key(m.name)]
        assert (m.geometry.x, m.geometry.y) == (lon, lat)
        assert m.description


# -- DXF -------------------------------------------------------------------------------------


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_dxf_reads_back_with_ezdxf_at_the_geojson_grid_positions(demo, tmp_path):
    conv, out, collection = export_all(demo, tmp_path)
    drawing = ezdxf.readfile(out["dxf"])
    assert drawing.header["$INSUNITS"] == 6  # every demo's grid is in metres (UTM)
    layers = {layer.dxf.name for layer in drawing.layers}
    assert {"lodeline-record", "lodeline-stations", "lodeline-courses"} <= layers
    msp = drawing.modelspace()
    points = geojson_points(collection)
    unit = conv.grid_unit_m
    marks = [e for e in msp.query("POINT")]
    assert len(marks) == len(points)
    labels = {(round(t.dxf.insert.x, 6), round(t.dxf.insert.y, 6)) for t in msp.query("TEXT")}
    assert labels
    by_xy = list(points.values())
    for p in marks:
        x, y = p.dxf.location.x, p.dxf.location.y
        best = min(by_xy, key=lambda v: abs(v[2] - x) + abs(v[3] - y))
        assert abs(best[2] - x) * unit < 1e-3 and abs(best[3] - y) * unit < 1e-3
    record = [e for e in msp.query("LWPOLYLINE") if e.dxf.layer == "lodeline-record"]
    marched = positions(conv, adjust="none").stations
    (line,) = record
    xy = [(v[0], v[1]) for v in line.get_points("xy")]
    assert len(xy) == len(marched)
    for (x, y), s in zip(xy, marched, strict=True):
        assert abs(x - s.easting) * unit < 1e-3 and abs(y - s.northing) * unit < 1e-3
    adjusted = [e for e in msp.query("LWPOLYLINE") if e.dxf.layer == "lodeline-adjusted"]
    assert len(adjusted) == (1 if conv.document.closed else 0)
    if adjusted:
        assert adjusted[0].closed
        for x, y in adjusted[0].get_points("xy"):
            assert any(abs(v[2] - x) * unit < 1e-3 and abs(v[3] - y) * unit < 1e-3
                       for v in by_xy)  # fmt: skip


def test_dxf_grid_coordinates_agree_with_an_independent_projection(tmp_path):
    demo = next(d for d in DEMOS if "brindlecombe" in d.name)
    conv, out, collection = export_all(demo, tmp_path)
    to_lonlat = Transformer.from_crs(conv.crs, "EPSG:4326", always_xy=True)  # pyproj directly
    points = geojson_points(collection)
    drawing = ezdxf.readfile(out["dxf"])
    for p in drawing.modelspace().query("POINT"):
        lon, lat = to_lonlat.transform(p.dxf.location.x, p.dxf.location.y)
        assert any(abs(lon - v[0]) < 2e-8 and abs(lat - v[1]) < 2e-8 for v in points.values())


def test_dxf_course_text_carries_the_record_bearing_and_distance(tmp_path):
    demo = next(d for d in DEMOS if "brindlecombe" in d.name)
    conv, out, _ = export_all(demo, tmp_path)
    texts = [t.dxf.text for t in ezdxf.readfile(out["dxf"]).modelspace().query("TEXT")
             if t.dxf.layer == "lodeline-courses"]  # fmt: skip
    assert len(texts) == 2 * len(conv.courses)
    c = conv.courses[0]
    assert f"{c.bearing.magnetic_record} 61.5 perch" in texts  # the record: N 35 3/4 E 61 1/2
    assert f"grid {c.bearing.grid}" in texts


@pytest.mark.parametrize(("unit_m", "code"), [(1.0, 6), (0.3048, 2), (1200 / 3937, 21), (0.5, 0)])
def test_dxf_units_code(unit_m, code):
    from lodeline.geo.dxf import insunits

    # $INSUNITS codes of the DXF reference (6 metres, 2 feet, 21 US survey feet; from memory)
    assert insunits(unit_m) == code


# -- Writing ---------------------------------------------------------------------------------


def test_all_formats_are_written_or_none(tmp_path, capsys):
    demo = DEMOS[0]
    (tmp_path / "b.kml").write_text("kept")
    argv = ["export", str(demo), "--geojson", str(tmp_path / "b.geojson"), "--gpx",
            str(tmp_path / "b.gpx"), "--kml", str(tmp_path / "b.kml"), "--dxf",
            str(tmp_path / "b.dxf")]  # fmt: skip
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "b.kml" in err and "--force" in err and "Traceback" not in err
    assert not any((tmp_path / f"b.{k}").exists() for k in ("geojson", "gpx", "dxf"))
    assert (tmp_path / "b.kml").read_text() == "kept"
    assert main([*argv, "--force"]) == 0
    assert gpxpy.parse((tmp_path / "b.gpx").read_text(encoding="utf-8")).waypoints


def test_export_to_a_missing_folder_is_refused_before_writing(tmp_path, capsys):
    argv = ["export", str(DEMOS[0]), "--gpx", str(tmp_path / "a.gpx"), "--dxf",
            str(tmp_path / "nowhere" / "a.dxf")]  # fmt: skip
    assert main(argv) == 2
    assert "no folder" in capsys.readouterr().err
    assert not (tmp_path / "a.gpx").exists()


def test_field_files_carry_events_and_the_retraced_corners(tmp_path):
    # the greyfen demo crosses a brook on course 2; the wrenfield demo has three found
    # corners and the others restored from them (as `close --json` lists them)
    demos = {d.stem: d for d in DEMOS}
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    _conv, out, collection = export_all(demos["greyfen_woodlot_1925"], tmp_path / "a")
    gpx = gpxpy.parse(out["gpx"].read_text(encoding="utf-8"))
    (event,) = [w for w in gpx.waypoints if w.type == "event"]
    assert event.name.startswith("E1 crossed") and "course 2" in event.description
    assert "lodeline-events" in {layer.dxf.name for layer in ezdxf.readfile(out["dxf"]).layers}
    _conv, out, collection = export_all(demos["wrenfield_glebe_1911"], tmp_path / "b")
    corners = {
        f["properties"]["index"]: f["properties"]["status"]
        for f in collection["features"]
        if f["properties"]["kind"] == "corner"
    }
    gpx = gpxpy.parse(out["gpx"].read_text(encoding="utf-8"))
    written = {int(w.name.split()[-1]): w.name.rsplit(" ", 1)[0] for w in gpx.waypoints
               if w.type == "corner"}  # fmt: skip
    assert written == corners
    assert {"found", "restored"} <= set(written.values())
    names = [m.name for m in kml_placemarks(out["kml"]) if m.geometry.geom_type == "Point"]
    assert sum(mark_key(n)[0] == "corner" for n in names) == len(corners)
    # read back as a receiver's file that lost the waypoint types, a restored corner's name
    # is no corner number: it is never taken for a found corner
    from lodeline.geo.found_import import _by_name

    conv = convert_file(demos["wrenfield_glebe_1911"])
    for k, status in corners.items():
        if status == "restored":
            assert _by_name(conv, f"restored {k}")[0] == set()
