"""Systematic cruise layout (lodeline.geo.layout, lodeline layout), checked by hand and by geometry."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from lodeline.geo.along import plot_list
from lodeline.geo.document import document_from_dict, load_document
from lodeline.geo.errors import LodelineError
from lodeline.geo.layout import lay_out_cruise
from lodeline.geo.north import convert_document
from lodeline.tui.cli import main

DEMOS = Path(__file__).parents[1] / "demo_traverses"


@pytest.fixture(autouse=True)
def _no_user_models(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def _boundary(calls, reference="grid"):
    return document_from_dict(
        {
            "format_version": 1,
            "title": "Test block",
            "closed": True,
            "place": {"lat": 44.1, "lon": -72.9},
            "grid": {"crs": "EPSG:32145"},
            "record": {"reference": reference, "distance_unit": "chain", "foot": "us"},
            "course": [{"call": c} for c in calls],
        }  # fmt: skip
    )


SQUARE = ["N 0 E 40 chains", "N 90 E 40 chains", "S 0 E 40 chains", "N 90 W 40 chains"]


def _inside(points, ring):
    """Even-odd point-in-polygon test, written for the test (ray to +x)."""
    out = []
    for x, y in points:
        inside = False
        for (x1, y1), (x2, y2) in zip(ring, ring[1:] + ring[:1], strict=True):
            if (y1 > y) != (y2 > y) and x < x1 + (y - y1) * (x2 - x1) / (y2 - y1):
                inside = not inside
        out.append(inside)
    return out


def test_square_grid_layout_hand_worked():
    # A 40 x 40 chain square on grid bearings, lines grid north 10 chains apart: lines at 5,
    # 15, 25 and 35 chains from the west side, each 40 chains long (ground lengths: grid
    # length / combined factor = the recorded ones), run N, S, N, S with 10-chain offsets
    # due east between them; plots every 5 chains from 2.5: 8 a line, 32 in all.
    conv = convert_document(_boundary(SQUARE), target_date="2026-05-01")
    lines = lay_out_cruise(
        conv, bearing="N 0 E", spacing="10 chains", plot_spacing="5 chains", north="grid"
    )
    calls = [c.call for c in lines.course]
    assert calls == [
        "N 0°00′00″ E 40.0000 chain",
        "N 90°00′00″ E 10.0000 chain",
        "S 0°00′00″ E 40.0000 chain",
        "N 90°00′00″ E 10.0000 chain",
        "N 0°00′00″ E 40.0000 chain",
        "N 90°00′00″ E 10.0000 chain",
        "S 0°00′00″ E 40.0000 chain",
    ]
    assert [c.note for c in lines.course][:2] == ["line 1", "offset to line 2"]
    new = convert_document(lines, target_date="2026-05-01")
    al = plot_list(new)
    assert len(al.plots) == 32
    assert [round(p.along_course_record, 6) for p in al.plots[:8]] == [
        2.5, 7.5, 12.5, 17.5, 22.5, 27.5, 32.5, 37.5
    ]  # fmt: skip
    # The first line starts 5 chains east of the boundary's point of beginning
    s0, b0 = new.stations[0], conv.stations[0]
    chain_grid = 66 * 1200 / 3937 * conv.courses[0].combined_factor  # metres on the grid
    assert s0.easting - b0.easting == pytest.approx(5 * chain_grid, abs=1e-3)
    assert s0.northing == pytest.approx(b0.northing, abs=1e-3)


def test_every_plot_falls_inside_a_concave_boundary():
    # An L-shaped block (concave): a line crossing the notch comes in two pieces.
    calls = ["N 0 E 40 chains", "N 90 E 20 chains", "S 0 E 20 chains", "N 90 E 20 chains",
             "S 0 E 20 chains", "N 90 W 40 chains"]  # fmt: skip
    conv = convert_document(_boundary(calls), target_date="2026-05-01")
    lines = lay_out_cruise(
        conv, bearing="N 90 E", spacing="6 chains", plot_spacing="4 chains", north="grid"
    )
    new = convert_document(lines, target_date="2026-05-01")
    al = plot_list(new)
    ring = [(s.easting, s.northing) for s in conv.stations[:-1]]
    assert al.plots and all(_inside([(p.easting, p.northing) for p in al.plots], ring))
    # the lines' total length (hand-worked): lines run east, so the first lies half a spacing
    # in from the north edge: at 37, 31, 25 chains north (20 chains wide, in the upper arm)
    # and 19, 13, 7, 1 (40 chains wide): 3 * 20 + 4 * 40 = 220 chains
    line_len = sum(
        c.length_value for c in new.courses if (c.recorded.note or "").startswith("line")
    )
    assert line_len == pytest.approx(220.0, abs=1e-3)


def test_magnetic_layout_runs_the_compass_bearing():
    doc = load_document(DEMOS / "greyfen_woodlot_1925.toml")
    conv = convert_document(doc, target_date="2026-05-01")
    lines = lay_out_cruise(conv, bearing="N 10 E", spacing="5 chains", plot_spacing="2.5 chains")
    assert lines.record.reference == "magnetic" and lines.record.date == "2026-05-01"
    assert lines.course[0].call.startswith("N 10°00′00″ E")
    new = convert_document(lines)
    # the new document's magnetic bearing at the target date reads back as the one asked
    assert new.courses[0].azimuth.magnetic_target == pytest.approx(10.0, abs=2e-3)
    ring = [(s.easting, s.northing) for s in conv.stations[:-1]]
    pts = [(p.easting, p.northing) for p in plot_list(new).plots]
    assert pts and all(_inside(pts, ring))


def test_refusals(tmp_path, capsys):
    conv = convert_document(_boundary(SQUARE), target_date="2026-05-01")
    with pytest.raises(LodelineError) as err:
        lay_out_cruise(conv, bearing="N 0 E", spacing="0.01 links", plot_spacing="5 chains")
    assert err.value.field == "spacing"
    with pytest.raises(LodelineError):
        lay_out_cruise(conv, bearing="Q 5 X", spacing="10 chains", plot_spacing="5 chains")
    open_doc = DEMOS / "kettle_ridge_cruise_2025.toml"
    out = tmp_path / "lines.toml"
    argv = ["layout", str(open_doc), "--bearing", "N 10 E", "--spacing", "5 chains",
            "--plots", "2 chains", "--out", str(out)]  # fmt: skip
    assert main(argv) == 2
    assert "closed" in capsys.readouterr().err and not out.exists()
    argv[1] = str(DEMOS / "greyfen_woodlot_1925.toml")
    assert main(argv) == 0 and out.exists()
    assert main(argv) == 2  # never replaced without --force
    assert "exists" in capsys.readouterr().err
    assert main([*argv, "--force"]) == 0
    assert math.isfinite(load_document(out).place.lat)
