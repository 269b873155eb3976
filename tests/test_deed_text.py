"""The new description (lodeline.geo.deed_text, lodeline describe) and record units in close/report."""

from __future__ import annotations

import json
import math
import re
from fractions import Fraction
from pathlib import Path

import pytest
from pyproj import CRS, Transformer

from lodeline.geo.deed_text import write_description
from lodeline.geo.document import document_from_dict, dumps_document, load_document
from lodeline.geo.north import convert_document
from lodeline.tui.cli import main

DEMOS = Path(__file__).parents[1] / "demo_traverses"
# US survey foot = 1200/3937 m; chain = 66 ft; perch = 16.5 ft (NIST Handbook 44, App. C).
US_FT = Fraction(1200, 3937)
CHAIN = float(66 * US_FT)


@pytest.fixture(autouse=True)
def _no_user_models(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def _square(reference="true", **extra):
    # Hand-worked: a square of 10 chains on true bearings closes exactly and holds 100 square
    # chains = 10 acres (1 acre = 10 square chains, NIST HB 44) = 10 a 0 r 0 p.
    record = {"reference": reference, "distance_unit": "chain", "foot": "us", **extra}
    calls = ["N 0 E 10 chains to a stone", "N 90 E 10 chains to a white oak",
             "S 0 E 10 chains to a post", "N 90 W 10 chains to the beginning"]  # fmt: skip
    return document_from_dict(
        {
            "format_version": 1,
            "title": "Test square",
            "closed": True,
            "place": {"lat": 44.1, "lon": -72.9},
            "grid": {"crs": "EPSG:32145"},
            "record": record,
            "course": [{"call": c} for c in calls],
        }  # fmt: skip
    )


def test_square_in_true_north_hand_worked():
    conv = convert_document(_square(), target_date="2026-05-01")
    d = write_description(conv)
    text = d.courses
    assert text.startswith("Beginning at the point of beginning of the record, latitude 44°06′")
    metres = f"{10 * CHAIN:,.2f} m"  # 201.17 m
    assert f"; thence N 0°00′ E, 10 ch 0 lk ({metres}) to a stone;" in text
    assert f"; thence N 90°00′ E, 10 ch 0 lk ({metres}) to a white oak;" in text
    assert f"; thence S 0°00′ E, 10 ch 0 lk ({metres}) to a post;" in text
    assert text.endswith(
        f"thence N 90°00′ W, 10 ch 0 lk ({metres}) to the place of beginning, containing "
        "10.000 acres (10 a 0 r 0 p) = 4.0469 ha = 40,468.7 m², more or less."
    )
    assert "true (geodetic) north" in d.basis
    assert "not a legal boundary" in d.caution
    assert "Test square" in d.record and "read from true north" in d.record


def test_grid_north_turns_by_the_convergence_from_pyproj():
    # gamma from pyproj by a finite difference: the grid azimuth of true north is -gamma
    # (grid = true - gamma, DESIGN.md).
    conv = convert_document(_square(), target_date="2026-05-01")
    p0 = conv.stations[0]
    fwd = Transformer.from_crs(CRS("EPSG:4326"), CRS("EPSG:32145"), always_xy=True)
    e1, n1 = fwd.transform(p0.lon, p0.lat)
    e2, n2 = fwd.transform(p0.lon, p0.lat + 1e-5)
    gamma = -math.degrees(math.atan2(e2 - e1, n2 - n1))
    d = write_description(conv, north="grid", bearing_precision="second")

    from lodeline.geo.bearings import parse_bearing

    # The description gives the adjusted courses of the marched figure, which holds true
    # bearings and so turns with gamma along each course and closes only to a few mm on the
    # ellipsoid: its first course is within 2 seconds of N 0 E turned by gamma.
    first = d.courses.split("thence ", 1)[1].split(",", 1)[0]
    az = parse_bearing(first).azimuth_deg
    assert abs(((az - (0.0 - gamma)) + 180) % 360 - 180) <= 2 / 3600
    assert ", 10 ch 0 lk" in d.courses
    assert "grid north of EPSG:32145 (NAD83 / Vermont)" in d.basis


@pytest.mark.reference
def test_magnetic_north_at_the_target_date_against_pygeomag():
    pygeomag = pytest.importorskip("pygeomag")
    conv = convert_document(_square(), target_date="2026-03-01", model="WMM2025")
    p0 = conv.stations[0]
    year = 2026 + 59 / 365  # 2026-03-01, day 60 of 365
    ref = pygeomag.GeoMag(coefficients_file="wmm/WMM_2025.COF").calculate(
        glat=p0.lat, glon=p0.lon, alt=0.0, time=year
    )
    d = write_description(conv, north="magnetic")
    from lodeline.geo.bearings import format_bearing

    # magnetic = true - D; course 1 runs true north
    assert f"thence {format_bearing((0.0 - ref.d) % 360.0, precision=1 / 60)}, " in d.courses
    assert "magnetic north on 2026-03-01" in d.basis and "WMM2025" in d.basis.upper()


def test_units_and_brackets_as_asked():
    conv = convert_document(_square(), target_date="2026-05-01")
    d = write_description(conv, unit="ft", bracket="perch", decimals=1)
    # 10 chains = 660 ft = 40 perches (hand-worked from the definitions)
    assert "660.0 ft (40.0 perches)" in d.courses
    assert "US survey feet" in d.distances
    bare = write_description(conv, bracket=None)
    assert "10 ch 0 lk to a stone" in bare.courses


def test_brindlecombe_demo_reads_like_a_deed(capsys, tmp_path):
    out = tmp_path / "desc.txt"
    demo = DEMOS / "brindlecombe_farm_1854.toml"
    assert main(["describe", str(demo), "--target-date", "2026-05-01", "--out", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    assert "to a white oak;" in text and "to the place of beginning, containing" in text
    assert "61.022 acres (61 a 0 r 3.6 p)" in text
    assert "more or less." in text and "1854-05-12" in text
    assert main(["describe", str(demo), "--out", str(out)]) == 2  # never overwritten
    assert "exists" in capsys.readouterr().err
    assert main(["describe", str(demo), "--json", "--north", "grid"]) == 0
    obj = json.loads(capsys.readouterr().out)
    assert obj["north"] == "grid" and "grid north of EPSG:32618" in obj["basis_of_bearings"]
    assert main(["describe", str(demo), "--unit", "furlong"]) == 2
    assert "unknown length unit" in capsys.readouterr().err


def test_open_line_has_no_area():
    doc = load_document(DEMOS / "kettle_ridge_cruise_2025.toml")
    d = write_description(convert_document(doc, target_date="2026-05-01"))
    assert "containing" not in d.courses and "open" in d.distances


def test_close_json_record_units_brindlecombe(capsys):
    # Brindlecombe's calls: 61 1/2 + 68 1/2 + 64 + 69 1/2 + 56 1/2 + 49 = 369 perches.
    assert main(["close", str(DEMOS / "brindlecombe_farm_1854.toml"), "--json"]) == 0
    obj = json.loads(capsys.readouterr().out)
    assert obj["record_unit"]["unit"] == "perch"
    assert obj["perimeter_record"] == pytest.approx(369.0, abs=1e-9)
    assert obj["perimeter_m"] == pytest.approx(369 * float(Fraction(33, 2) * US_FT))
    assert obj["courses"][0]["length_record"] == pytest.approx(61.5)
    assert obj["stations"][2]["distance_record"] == pytest.approx(130.0)
    arp = obj["area_acres_roods_perches"]
    total = arp["acres"] * 160 + arp["roods"] * 40 + arp["perches"]
    assert total == pytest.approx(obj["area_acres"] * 160, abs=0.05)
    assert obj["misclosure_record"] == pytest.approx(
        obj["misclosure_m"] / obj["record_unit"]["metres"]
    )


def test_reports_carry_the_description_and_the_plot_list(tmp_path):
    deed = tmp_path / "deed.md"
    assert main(["report", str(DEMOS / "greyfen_woodlot_1925.toml"), "--out", str(deed)]) == 0
    text = deed.read_text(encoding="utf-8")
    assert "## New description" in text and "to the place of beginning" in text
    assert re.search(r"\d+ a [0-3] r [\d.]+ p", text)  # acres, roods, perches of a chain deed
    cruise = tmp_path / "cruise.html"
    assert main(["report", str(DEMOS / "kettle_ridge_cruise_2025.toml"), "--out", str(cruise)]) == 0
    html = cruise.read_text(encoding="utf-8")
    # the demo numbers its plots from 301, the first 2.5 chains from the start of each line
    assert "Plot list" in html and "2 ch 50 lk" in html and ">301<" in html


def test_round_trip_of_square_document(tmp_path):
    path = tmp_path / "sq.toml"
    path.write_text(dumps_document(_square()), encoding="utf-8")
    assert load_document(path) == _square()
