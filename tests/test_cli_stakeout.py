"""``lodeline stakeout``, ``lodeline fit --restore`` and the report's retracement sections."""

from __future__ import annotations

import csv
import io
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from lodeline.geo.cautions import SHORT_CAUTION
from lodeline.tui.cli import main

DEMO = Path(__file__).parents[1] / "demo_traverses" / "wrenfield_glebe_1911.toml"


@pytest.fixture(autouse=True)
def _no_user_models(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "no-user-models"))


def run(capsys, *argv):
    status = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return status, out, err


def test_stakeout_text_json_and_csv(capsys, tmp_path):
    status, out, err = run(capsys, "stakeout", DEMO, "--target-date", "2025-10-01")
    assert status == 0, err
    assert "from corner 1, " in out and "to corner 0, a restored point of beginning" in out
    assert out.rstrip().endswith(SHORT_CAUTION)
    status, out, _ = run(capsys, "stakeout", DEMO, "--target-date", "2025-10-01", "--json")
    data = json.loads(out)
    assert data["stakeout"]["target_date"] == "2025-10-01"
    assert [ln["to"] for ln in data["stakeout"]["lines"]] == [0, 2, 5]
    statuses = [c["status"] for c in data["restoration"]["corners"]]
    assert statuses == ["restored", "found", "restored", "found", "found", "restored"]
    path = tmp_path / "stake.csv"
    status, out, _ = run(capsys, "stakeout", DEMO, "--csv", path, "--run-from", "previous")
    assert status == 0 and out == ""
    rows = list(csv.DictReader(io.StringIO(path.read_text())))
    assert [(r["from"], r["to"]) for r in rows] == [("5", "0"), ("1", "2"), ("4", "5")]
    status, _, err = run(capsys, "stakeout", DEMO, "--csv", path)
    assert status == 2 and len(err.strip().splitlines()) == 1 and "Traceback" not in err


def test_stakeout_refuses_an_unknown_method(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["stakeout", str(DEMO), "--restore", "shift"])
    assert exc.value.code == 2


def test_fit_shows_restoration_and_survey_date(capsys):
    status, out, _ = run(capsys, "fit", DEMO, "--restore", "rotate-scale")
    assert status == 0
    assert "restored (rotate-scale, 1-3)" in out
    assert "the needle's declination matches the field of" in out and "(igrf14)" in out
    status, out, _ = run(capsys, "fit", DEMO, "--json")
    data = json.loads(out)
    assert data["restoration"]["method"] == "proportion"
    rng = data["survey_date"]["ranges"][0]
    # the record is dated 1911; its found corners were set from a needle within 0.1 deg of
    # the model's D of that year (demo data)
    assert rng["model"] == "igrf14" and rng["start_year"] <= 1911.4 <= rng["end_year"]


def test_report_has_stakeout_survey_date_and_history_figure(capsys, tmp_path):
    out = tmp_path / "r.html"
    status, _, err = run(capsys, "report", DEMO, "--out", out, "--target-date", "2025-10-01")
    assert status == 0, err
    page = out.read_text()
    assert "Stakeout" in page and "When was the line run" in page
    assert "From corner 1, " in page and "gap m" in page
    svg = re.search(r"<svg[^>]*declination-history.*?</svg>", page, re.S).group(0)
    root = ET.fromstring(svg)
    ns = "{http://www.w3.org/2000/svg}"
    lines = root.findall(f".//{ns}polyline")
    assert lines, "the declination curve is drawn"
    xs = [float(p.split(",")[0]) for p in lines[0].get("points").split()]
    assert min(xs) >= 0.0 and max(xs) <= 620.0
    labels = [t.text for t in root.iter(f"{ns}text")]
    assert "record" in labels and "target" in labels and "needle (fit)" in labels


def test_geojson_carries_the_corners_with_their_status(capsys, tmp_path):
    out = tmp_path / "w.geojson"
    status, _, err = run(capsys, "export", DEMO, "--geojson", out)
    assert status == 0, err
    data = json.loads(out.read_text())
    corners = [f for f in data["features"] if f["properties"]["kind"] == "corner"]
    assert [c["properties"]["status"] for c in corners] == [
        "restored",
        "found",
        "restored",
        "found",
        "found",
        "restored",
    ]
    found = corners[1]["properties"]
    assert (found["easting"], found["northing"]) == (507495.39, 4274986.85)


OLD_OPEN = """format_version = 1
closed = false
[place]
lat = 47.4783
lon = -91.221
[record]
reference = "magnetic"
date = "1850-09-16"
distance_unit = "chain"
foot = "us"
[[course]]
call = "N 10 E 40 chains"
[[course]]
call = "S 80 E 10 chains"
found = { lat = 47.4855, lon = -91.2167 }
[[course]]
call = "S 10 W 40 chains"
found = { lat = 47.478031, lon = -91.218402 }
"""


def test_no_declination_at_the_record_date_says_why_there_are_no_corners(capsys, tmp_path):
    # 1850 with no model installed and no stated declination: the stations are not on the
    # grid; close (magnetic north) and fit still run and say what they cannot do
    path = tmp_path / "old.toml"
    path.write_text(OLD_OPEN)
    status, out, err = run(capsys, "close", path, "--north", "magnetic")
    assert status == 0, err
    assert "not on the grid" in out
    status, out, err = run(capsys, "fit", path, "--json")
    assert status == 0, err
    data = json.loads(out)
    assert data["restoration"] is None and data["survey_date"]["ranges"]
    status, _, err = run(capsys, "stakeout", path)
    assert status == 2 and len(err.strip().splitlines()) == 1
