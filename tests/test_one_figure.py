"""One figure everywhere: close, export and convert describe the same marched stations.

Check values: distances between exported stations by pyproj's ``Geod.inv`` on WGS84 (an
independent geodesic), misclosure and compass rule as in Ghilani & Wolf, *Elementary
Surveying* (the misclosure is the gap between the computed closing station and the point of
beginning; the compass rule distributes it in proportion to the course lengths).
"""

from __future__ import annotations

import datetime
import json
import math
from pathlib import Path

import pytest
from pyproj import Geod, Transformer

from lodeline.tui.cli import main

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))
CLOSED_DEMOS = [d for d in DEMOS if "closed = true" in d.read_text(encoding="utf-8")]
GEOD = Geod(ellps="WGS84")


def _square_toml(lat: float, lon: float, date: str, rods: float) -> str:
    calls = ("N 10 E", "S 80 E", "S 10 W", "N 80 W")
    courses = "\n".join(f'[[course]]\ncall = "{c} {rods:g} rods"\n' for c in calls)
    return (
        f'format_version = 1\ntitle = "square"\nclosed = true\n\n'
        f"[place]\nlat = {lat}\nlon = {lon}\nheight_m = 0.0\n\n"
        f'[record]\nreference = "magnetic"\ndate = "{date}"\nmodel = "IGRF14"\n'
        f'distance_unit = "rod"\n\n[target]\ndate = "2026-01-01"\n\n{courses}'
    )


# A 2 km square (400 rods = 2011.7 m a side) 3 degrees east of the central meridian of UTM
# zone 18 (-75), recorded in 1950; and a 400 m square (80 rods) at 68.6 N.
UTM_EDGE = _square_toml(44.5, -72.0, "1950-06-01", 400)
ARCTIC = _square_toml(68.6, 19.0, "1950-06-01", 80)


def _run(args, capsys):
    capsys.readouterr()
    code = main(args)
    out = capsys.readouterr()
    assert code == 0, out.err
    return out.out


def _close(path, capsys, *extra):
    return json.loads(_run(["close", str(path), "--json", *extra], capsys))


def _export(path, tmp_path, capsys, adjust):
    out = tmp_path / f"out-{adjust}.geojson"
    _run(["export", str(path), "--geojson", str(out), "--adjust", adjust, "--force"], capsys)
    data = json.loads(out.read_text(encoding="utf-8"))
    stations = [f for f in data["features"] if f["properties"]["kind"] == "station"]
    return data, stations


def _docs(tmp_path):
    out = []
    for name, text in (("utm_edge", UTM_EDGE), ("arctic", ARCTIC)):
        p = tmp_path / f"{name}.toml"
        p.write_text(text, encoding="utf-8")
        out.append(p)
    return out + CLOSED_DEMOS


@pytest.mark.parametrize("which", range(2 + len(CLOSED_DEMOS)))
def test_close_misclosure_is_the_gap_between_exported_stations(which, tmp_path, capsys):
    path = _docs(tmp_path)[which]
    clo = _close(path, capsys)
    data, stations = _export(path, tmp_path, capsys, "none")
    first, last = stations[0], stations[-1]
    (lon0, lat0), (lon1, lat1) = first["geometry"]["coordinates"], last["geometry"]["coordinates"]
    _, _, gap = GEOD.inv(lon0, lat0, lon1, lat1)  # pyproj geodesic, metres on the ellipsoid
    height = float(
        next(
            line.split("=")[1]
            for line in path.read_text(encoding="utf-8").splitlines()
            if line.startswith("height_m")
        )
    )
    gap_ground = gap * (1.0 + height / 6371000.0)  # ellipsoid -> ground (common practice)
    assert clo["misclosure_m"] == pytest.approx(gap_ground, abs=1e-3)
    assert data["properties"]["misclosure_m"] == pytest.approx(clo["misclosure_m"], abs=1e-9)


@pytest.mark.parametrize("which", range(2 + len(CLOSED_DEMOS)))
def test_close_adjusted_stations_are_the_exported_adjusted_stations(which, tmp_path, capsys):
    path = _docs(tmp_path)[which]
    clo = _close(path, capsys, "--north", "grid")
    _, stations = _export(path, tmp_path, capsys, "compass")
    e0, n0 = stations[0]["properties"]["easting"], stations[0]["properties"]["northing"]
    k = clo["combined_factor"]
    unit = clo["grid_unit_m"]
    exported = {s["properties"]["index"]: s["properties"] for s in stations}
    assert len(clo["stations"]) == len(exported) + 1  # the closing station is the beginning
    for s in clo["stations"][:-1]:
        p = exported[s["index"]]
        assert (p["easting"] - e0) * unit / k == pytest.approx(s["east_m"], abs=1e-3)
        assert (p["northing"] - n0) * unit / k == pytest.approx(s["north_m"], abs=1e-3)


def test_utm_edge_square_misclosure_is_not_zero(tmp_path, capsys):
    # The record closes exactly on paper; D and gamma change across 2 km, so the marched
    # figure does not (about 2.5 m here, by the independent geodesic above).
    path = _docs(tmp_path)[0]
    clo = _close(path, capsys)
    assert clo["misclosure_m"] > 1.0


@pytest.mark.parametrize("which", range(2 + len(CLOSED_DEMOS)))
def test_close_shows_the_bearings_convert_shows(which, tmp_path, capsys):
    path = _docs(tmp_path)[which]
    conv = json.loads(_run(["convert", str(path), "--json"], capsys))
    for north in ("true", "grid"):
        clo = _close(path, capsys, "--north", north)
        for cc, c in zip(clo["courses"], conv["courses"], strict=True):
            assert cc["bearing"] == c["bearing"][north]
            assert cc["azimuth_deg"] == pytest.approx(c["azimuth"][f"{north}_deg"], abs=1e-12)


def test_exported_grid_coordinates_match_exported_lonlat(tmp_path, capsys):
    # Independent: pyproj's own transformer from the exported lon/lat to the exported CRS.
    path = _docs(tmp_path)[0]
    data, stations = _export(path, tmp_path, capsys, "compass")
    _assert_grid_is_lonlat(data, stations)


def _assert_grid_is_lonlat(data, stations):
    # Independent: pyproj's own transformer from the exported lon/lat to the exported CRS.
    to_grid = Transformer.from_crs("EPSG:4326", data["properties"]["crs"], always_xy=True)
    for s in stations:
        lon, lat = s["geometry"]["coordinates"]
        e, n = to_grid.transform(lon, lat)
        assert math.isfinite(e) and math.isfinite(n)
        assert e == pytest.approx(s["properties"]["easting"], abs=2e-3)
        assert n == pytest.approx(s["properties"]["northing"], abs=2e-3)


def _angle_square_toml() -> str:
    # A 1 km square run counter-clockwise by right-turned interior angles, one of them read
    # 30 minutes large (sum 360 deg 30 min against (4 - 2) x 180, common practice).
    courses = [
        '[[course]]\nbearing = "N 0 E"\nangle = "90 00"\ndistance = 1000.0\n',
        '[[course]]\nangle = "90 30"\ndistance = 1000.0\n',
        '[[course]]\nangle = "90 00"\ndistance = 1000.0\n',
        '[[course]]\nangle = "90 00"\ndistance = 1000.0\n',
    ]
    return (
        'format_version = 1\ntitle = "angles"\nclosed = true\n\n'
        "[place]\nlat = 44.5\nlon = -72.0\nheight_m = 0.0\n\n"
        '[record]\nreference = "true"\nangles = "right"\ndistance_unit = "m"\n'
        'foot = "international"\n\n[target]\ndate = "2026-01-01"\n\n' + "\n".join(courses)
    )


@pytest.mark.parametrize("adjust", ["none", "compass"])
def test_a_record_by_angles_exports_one_figure(adjust, tmp_path, capsys):
    path = tmp_path / "angles.toml"
    path.write_text(_angle_square_toml(), encoding="utf-8")
    data, stations = _export(path, tmp_path, capsys, adjust)
    _assert_grid_is_lonlat(data, stations)
    clo = _close(path, capsys, "--adjust", adjust)
    assert clo["angular_misclosure"]["misclosure_deg"] == pytest.approx(0.5, abs=1e-12)
    if adjust == "none":
        last = stations[-1]["geometry"]["coordinates"]
        _, _, gap = GEOD.inv(*stations[0]["geometry"]["coordinates"], *last)
        assert clo["misclosure_m"] == pytest.approx(gap, abs=1e-3)


US_FEET = (
    'format_version = 1\ntitle = "feet"\nclosed = false\n\n'
    "[place]\nlat = 40.75\nlon = -73.95\nheight_m = 0.0\n\n"
    '[grid]\ncrs = "EPSG:2263"\n\n'  # NAD83 / New York Long Island (ftUS), EPSG registry
    '[record]\nreference = "grid"\ndistance_unit = "m"\nfoot = "us"\n\n'
    '[[course]]\nbearing = "N 0 E"\ndistance = 100.0\nevery = 40.0\n'
)


def test_grid_coordinates_carry_their_unit(tmp_path, capsys):
    path = tmp_path / "feet.toml"
    path.write_text(US_FEET, encoding="utf-8")
    out_csv = tmp_path / "feet.csv"
    geo_out = tmp_path / "feet.geojson"
    _run(["export", str(path), "--csv", str(out_csv), "--geojson", str(geo_out)], capsys)
    header = out_csv.read_text(encoding="utf-8").splitlines()[0].split(",")
    assert "easting_us_ft" in header and "northing_us_ft" in header
    assert "easting" not in header
    rows = out_csv.read_text(encoding="utf-8").splitlines()[1:]
    first, last = rows[0].split(","), rows[1].split(",")
    north = header.index("northing_us_ft")
    # 100 m north on the grid is 100 x 3937/1200 US survey feet (exact definition, NIST),
    # times the combined factor (within 1e-4 here)
    assert float(last[north]) - float(first[north]) == pytest.approx(100 * 3937 / 1200, rel=1e-4)
    data = json.loads(geo_out.read_text(encoding="utf-8"))
    assert data["properties"]["grid_unit"] == "us_ft"
    assert data["properties"]["grid_unit_m"] == pytest.approx(1200 / 3937, rel=1e-12)
    points = [f for f in data["features"] if f["properties"]["kind"] != "figure"]
    assert all(f["properties"]["grid_unit"] == "us_ft" for f in points)
    text = _run(["convert", str(path)], capsys)
    assert "us_ft)" in text


def _walked_gap(lat, lon, year, side_m, step_m):
    """The square walked independently: pyproj geodesic steps, each along the true azimuth
    magnetic + D with D from the field model at the step's middle (the line a compass runs);
    returns the gap between the end and the beginning (metres, on the ellipsoid)."""
    from lodeline.geo.magnetic import field_at

    lon0, lat0 = lon, lat
    for mag in (10.0, 100.0, 190.0, 280.0):  # N 10 E, S 80 E, S 10 W, N 80 W
        n = round(side_m / step_m)
        for _ in range(n):
            d0 = float(field_at(lat=lat, lon=lon, year=year).declination_deg)
            lo, la, _ = GEOD.fwd(lon, lat, mag + d0, side_m / n / 2)
            dm = float(field_at(lat=la, lon=lo, year=year).declination_deg)
            lon, lat, _ = GEOD.fwd(lo, la, mag + dm, side_m / n / 2)
    return GEOD.inv(lon0, lat0, lon, lat)[2]


@pytest.mark.reference
@pytest.mark.parametrize(("which", "step"), [(0, 20.0), (1, 4.0)], ids=["utm_edge", "arctic"])
def test_the_misclosure_is_that_of_the_square_walked_by_compass(which, step, tmp_path, capsys):
    # Independent of lodeline.geo.north, lodeline.geo.march and lodeline.geo.grid: pyproj's geodesics and the field
    # model's D (itself checked against ppigrf in test_north). Height 0: ground = ellipsoid.
    from lodeline.geo.dates import decimal_year

    path = _docs(tmp_path)[which]
    lat, lon = (44.5, -72.0) if which == 0 else (68.6, 19.0)
    # rods of 16.5 ft (the document's foot by date; the two feet differ by 2 ppm, which
    # changes the gap by far less than the tolerance)
    side = (400 if which == 0 else 80) * 5.0292
    year = decimal_year(datetime.date(1950, 6, 1))
    gap = _walked_gap(lat, lon, year, side, step)
    assert _close(path, capsys)["misclosure_m"] == pytest.approx(gap, abs=1e-3)


def test_events_and_plots_lie_on_the_exported_figure(tmp_path: Path, capsys):
    # An event and a plot at the same chainage of one course of a closed figure that does
    # not close (the compass rule moves every point): both are the same point of the export,
    # on the adjusted figure, in the GeoJSON, the plot list of `close` and the events CSV;
    # the compass rule moves a point between its course's ends in proportion to the distance
    # along it (Ghilani & Wolf, Elementary Surveying).
    doc = tmp_path / "lot.toml"
    doc.write_text(
        'format_version = 1\ntitle = "Test lot, Quarry Fork"\nclosed = true\n\n'
        '[place]\nlat = 44.1\nlon = -72.9\n\n[record]\nreference = "true"\n'
        'distance_unit = "chain"\nfoot = "us"\n\n[target]\ndate = "2025-06-01"\n\n'
        '[[course]]\ncall = "N 5 W 20.97 chains"\n\n'
        '[[course]]\ncall = "N 83 E 21.52 chains"\nevery = "9.5 chains"\n\n'
        '[[course.at]]\ndistance = "9.50 chains"\nnote = "crossed a brook"\n\n'
        '[[course]]\ncall = "S 5 E 20.48 chains"\n\n'
        '[[course]]\ncall = "S 82 W 21.58 chains"\n',
        encoding="utf-8",
    )
    out = tmp_path / "lot.geojson"
    assert (
        main(["export", str(doc), "--geojson", str(out), "--csv", str(tmp_path / "lot.csv")]) == 0
    )
    features = json.loads(out.read_text(encoding="utf-8"))["features"]
    (event,) = [f for f in features if f["properties"]["kind"] == "event"]
    plot = next(
        f
        for f in features
        if f["properties"]["kind"] == "point"
        and f["properties"]["course"] == 2
        # the chain of 66 US survey feet, 20.1168 m (common practice)
        and abs(f["properties"]["along_m"] - 9.5 * 20.1168) < 1e-3
    )
    assert event["geometry"]["coordinates"] == plot["geometry"]["coordinates"]
    assert event["properties"]["easting"] == pytest.approx(plot["properties"]["easting"], abs=1e-6)
    # the marched (unadjusted) point is elsewhere: the figure misses by decimetres
    capsys.readouterr()
    assert main(["close", str(doc), "--json"]) == 0
    closure = json.loads(capsys.readouterr().out)
    assert closure["misclosure_m"] > 0.05
    (listed,) = [
        p
        for p in closure["plots"]
        if p["course"] == 2 and abs(p["along_course_m"] - plot["properties"]["along_m"]) < 1e-6
    ]
    assert listed["easting"] == pytest.approx(plot["properties"]["easting"], abs=1e-6)
    assert listed["northing"] == pytest.approx(plot["properties"]["northing"], abs=1e-6)
    (ev,) = closure["events"]
    assert (ev["easting"], ev["northing"]) == pytest.approx(
        (listed["easting"], listed["northing"]), abs=1e-6
    )
    events_csv = (tmp_path / "lot-events.csv").read_text(encoding="utf-8")
    assert f"{ev['easting']:.3f}"[:-1] in events_csv
