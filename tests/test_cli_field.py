"""`lodeline field` and `lodeline models` from the command line."""

from __future__ import annotations

import csv
import io
import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from shared_data import GUFM1  # noqa: E402

from lodeline.geo.magnetic import field_at
from lodeline.tui.cli import main
from lodeline.tui.commands.field import RESULT_KEYS

JSON_KEYS = [
    "lat", "lon", "date", "height_m", "model", "declination_deg", "inclination_deg",
    "horizontal_nT", "north_nT", "east_nT", "down_nT", "total_nT",
    "declination_rate_deg_per_year", "inclination_rate_deg_per_year", "total_rate_nT_per_year",
    "declination_sigma_deg", "warnings",
]  # fmt: skip


@pytest.fixture(autouse=True)
def user_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    return tmp_path / "data"


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_json_has_exactly_the_keys_and_the_field(capsys):
    code, out, err = run(
        capsys, "field", "--lat", "41.2", "--lon", "-77.9", "--date", "1931-07-04", "--json"
    )
    assert code == 0 and err == ""
    obj = json.loads(out)
    assert list(obj) == JSON_KEYS
    assert list(RESULT_KEYS) == JSON_KEYS
    assert obj["date"] == "1931-07-04" and obj["model"] == "igrf14"
    assert obj["declination_sigma_deg"] is None and obj["warnings"] == []
    ref = field_at(lat=41.2, lon=-77.9, year=1931 + 184 / 365)
    assert obj["declination_deg"] == pytest.approx(float(ref.declination_deg), abs=1e-12)
    assert obj["total_nT"] == pytest.approx(float(ref.total_nT), abs=1e-9)


@pytest.mark.parametrize("given, shown", [("287.1", -72.9), ("360", 0.0), ("180", 180.0)])
def test_longitude_in_0_to_360_is_shown_brought_to_minus_180_to_180(capsys, given, shown):
    # 287.1 E is 72.9 W (common practice); the echo reads -72.9 exactly, and the field is
    # the field at -72.9.
    code, out, _ = run(capsys, "field", "--lat", "44", "--lon", given, "--date", "2025.0", "--json")
    obj = json.loads(out)
    assert code == 0 and obj["lon"] == shown
    ref = field_at(lat=44.0, lon=shown, year=2025.0)
    assert obj["declination_deg"] == pytest.approx(float(ref.declination_deg), abs=1e-9)


def test_human_output(capsys):
    code, out, _ = run(
        capsys, "field", "--lat", "45", "--lon", "0", "--date", "2026.5", "--model", "wmm2025"
    )
    assert code == 0
    d = float(field_at(lat=45.0, lon=0.0, year=2026.5, model="wmm2025").declination_deg)
    minutes = round(abs(d) * 60.0, 1)
    assert f"{int(minutes // 60)}° {minutes % 60:04.1f}' E" in out
    for word in ("inclination I", "horizontal H", "north X", "east Y", "down Z", "total F"):
        assert word in out
    assert "±" in out and "1σ" in out and "wmm2025" in out
    assert "Caution: Not a legal boundary" in out
    assert "/yr" in out


def test_warning_in_output(capsys):
    # near the north dip pole (WMM test value row 1: 89 N 121 W, H = 1504 nT in 2025)
    code, out, _ = run(
        capsys, "field", "--lat", "89", "--lon", "-121", "--date", "2025.0", "--json"
    )
    assert code == 0
    assert "compass is unreliable" in json.loads(out)["warnings"][0]


@pytest.mark.parametrize(
    ("argv", "words"),
    [
        (["--lat", "95", "--lon", "0", "--date", "2000-01-01"], "'lat'"),
        (["--lat", "abc", "--lon", "0", "--date", "2000-01-01"], "'--lat'"),
        (["--lat", "40", "--lon", "0", "--date", "yesterday"], "'date'"),
        (["--lat", "40", "--lon", "0", "--date", "2000-02-30"], "not a calendar date"),
        (["--lat", "40", "--lon", "0", "--date", "2000", "--height", "200000"], "height"),
        (["--lat", "40", "--lon", "0", "--date", "2000", "--model", "nope"], "unknown field model"),
        (["--lat", "40", "--lon", "0", "--date", "1850-01-01"], "lodeline models add"),
        (["--lat", "40", "--lon", "0"], "missing: --date"),
        (["--lat", "nan", "--lon", "0", "--date", "2000"], "finite"),
    ],
)
def test_bad_input_exit_2_one_line(capsys, argv, words):
    code, out, err = run(capsys, "field", *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and words in err
    assert "Traceback" not in err


def test_subprocess_exit_code_and_no_textual(tmp_path):
    code = (
        "import sys\n"
        "from lodeline.tui.cli import main\n"
        "rc = main(['field','--lat','41.2','--lon','-77.9','--date','1931-07-04','--json'])\n"
        "for name in ('textual', 'pyproj', 'pydantic', 'rich', 'lodeline.tui.commands.convert'):\n"
        "    assert name not in sys.modules, name + ' imported'\n"
        "sys.exit(rc)\n"
    )
    ok = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert ok.returncode == 0, ok.stderr
    bad = subprocess.run(
        [sys.executable, "-m", "lodeline", "field", "--lat", "91", "--lon", "0", "--date", "2000"],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert bad.returncode == 2
    assert bad.stderr.strip().count("\n") == 0 and "Traceback" not in bad.stderr


def _write_csv(path: Path, rows: list[list[str]]) -> Path:
    with path.open("w", newline="") as fh:
        csv.writer(fh).writerows(rows)
    return path


def _read_csv(text: str) -> list[dict]:
    return list(csv.DictReader(io.StringIO(text)))


def test_csv_batch_any_column_order(capsys, tmp_path):
    src = _write_csv(
        tmp_path / "in.csv",
        [["date", "height_m", "lon", "lat", "site"],
         ["1931-07-04", "300", "-77.9", "41.2", "a"],
         ["2025.5", "", "282.1", "41.2", "b"]],
    )  # fmt: skip
    code, out, err = run(capsys, "field", "--csv", str(src))
    assert code == 0 and err == ""
    rows = _read_csv(out)
    assert list(rows[0]) == ["date", "height_m", "lon", "lat", "site"] + JSON_KEYS[4:]
    assert rows[1]["lon"] == "282.1" and rows[1]["site"] == "b"  # input columns as written
    one = field_at(lat=41.2, lon=-77.9, year=1931 + 184 / 365, height_m=300.0)
    assert float(rows[0]["declination_deg"]) == pytest.approx(float(one.declination_deg), abs=1e-12)
    assert rows[0]["declination_sigma_deg"] == "" and rows[0]["warnings"] == ""


def test_csv_out_never_overwritten_without_force(capsys, tmp_path):
    src = _write_csv(tmp_path / "in.csv", [["lat", "lon", "date"], ["10", "10", "2000-01-01"]])
    out_path = tmp_path / "out.csv"
    out_path.write_text("precious\n")
    code, _, err = run(capsys, "field", "--csv", str(src), "--out", str(out_path))
    assert code == 2 and "--force" in err
    assert out_path.read_text() == "precious\n"
    code, _, _ = run(capsys, "field", "--csv", str(src), "--out", str(out_path), "--force")
    assert code == 0 and len(_read_csv(out_path.read_text())) == 1


def test_csv_bad_row_stops_and_writes_nothing(capsys, tmp_path):
    src = _write_csv(
        tmp_path / "in.csv",
        [["lat", "lon", "date"], ["10", "10", "2000-01-01"], ["100", "10", "2000-01-01"],
         ["10", "10", "1700-01-01"], ["x", "10", "2000"]],
    )  # fmt: skip
    out_path = tmp_path / "out.csv"
    code, out, err = run(capsys, "field", "--csv", str(src), "--out", str(out_path))
    assert code == 2 and not out_path.exists()
    assert f"{src}:3: 'lat'" in err and err.count("\n") == 1
    code, out, err = run(capsys, "field", "--csv", str(src), "--out", str(out_path), "--skip-bad")
    assert code == 0
    assert len(_read_csv(out_path.read_text())) == 1
    assert f"{src}:3:" in err and f"{src}:4:" in err and f"{src}:5:" in err
    assert "3 bad row(s) skipped, 1 written" in err


@pytest.mark.parametrize(
    ("rows", "words"),
    [
        ([["lat", "lon"], ["1", "2"]], "'date'"),
        ([["lat", "lon", "date", "model"], ["1", "2", "2000", "x"]], "clash"),
        ([["lat", "lon", "date"], ["1", "2"]], ":2: has 2 fields"),
        ([], "empty file"),
    ],
)
def test_csv_structure_errors(capsys, tmp_path, rows, words):
    src = _write_csv(tmp_path / "in.csv", rows)
    code, _, err = run(capsys, "field", "--csv", str(src))
    assert code == 2 and words in err


point = st.tuples(
    st.floats(-89.0, 89.0).map(lambda v: round(v, 4)),
    st.floats(-180.0, 180.0).map(lambda v: round(v, 4)),
    st.floats(1900.0, 2029.9).map(lambda v: round(v, 3)),
    st.floats(-500.0, 5000.0).map(lambda v: round(v, 1)),
)


@settings(
    max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(points=st.lists(point, min_size=1, max_size=12))
def test_csv_batch_equals_single_points(capsys, tmp_path, points):
    src = _write_csv(
        tmp_path / "batch.csv",
        [["lat", "lon", "date", "height_m"]] + [[repr(a), repr(b), repr(c), repr(d)] for a, b, c, d in points],
    )  # fmt: skip
    code, out, _ = run(capsys, "field", "--csv", str(src))
    assert code == 0
    rows = _read_csv(out)
    assert len(rows) == len(points)
    for row, (lat, lon, year, h) in zip(rows, points, strict=True):
        code, single, _ = run(
            capsys, "field", "--lat", repr(lat), "--lon", repr(lon), "--date", repr(year),
            "--height", repr(h), "--json",
        )  # fmt: skip
        obj = json.loads(single)
        for key in JSON_KEYS[5:-2]:
            assert math.isclose(float(row[key]), obj[key], rel_tol=1e-11, abs_tol=1e-9), key
        assert row["model"] == obj["model"]
        assert row["warnings"] == "; ".join(obj["warnings"])


def test_models_list_and_add(capsys, user_dir, tmp_path):
    code, out, _ = run(capsys, "models")
    assert code == 0
    for text in ("igrf14", "1900.0-2030.0", "wmmhr2025", "133", str(user_dir / "models")):
        assert text in out
    shc = tmp_path / "made.shc"
    shc.write_text(
        "# invented test model\n1 1 2 2 1\n 1700.0 1900.0\n1 0 -32000 -31600\n"
        "1 1 -2600 -2300\n1 -1 5800 5900\n"
    )
    code, out, _ = run(capsys, "models", "add", str(shc), "--name", "madeup")
    assert code == 0 and "installed 'madeup'" in out
    code, out, _ = run(capsys, "models")
    assert "madeup" in out and "1700.0-1900.0" in out
    code, out, err = run(capsys, "models", "add", str(shc), "--name", "madeup")
    assert code == 2 and "installed already" in err
    code, out, err = run(capsys, "models", "add", str(tmp_path / "none.shc"))
    assert code == 2 and "none.shc" in err


def test_add_gufm1_then_1820_declination(capsys):
    if not GUFM1.exists():
        pytest.skip(f"{GUFM1} (gufm1 authors' file, not redistributed) is not present")
    code, out, _ = run(capsys, "models", "add", str(GUFM1), "--name", "gufm1")
    assert code == 0
    code, out, _ = run(
        capsys, "field", "--lat", "41.2", "--lon", "-77.9", "--date", "1820-06-01", "--json"
    )
    assert code == 0
    obj = json.loads(out)
    assert obj["model"] == "gufm1" and np.isfinite(obj["declination_deg"])


def test_help_lists_every_subcommand_and_a_named_one_parses_alone(capsys):
    from lodeline.tui.cli import SUBCOMMANDS

    with pytest.raises(SystemExit):
        main(["--help"])
    out = capsys.readouterr().out
    assert all(name in out for name, _ in SUBCOMMANDS)
    with pytest.raises(SystemExit):
        main(["field", "--help"])
    assert "--skip-bad" in capsys.readouterr().out
    with pytest.raises(SystemExit) as unknown:
        main(["fild"])
    assert unknown.value.code == 2 and "invalid choice: 'fild'" in capsys.readouterr().err
