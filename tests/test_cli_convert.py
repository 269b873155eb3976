"""``lodeline convert``: table, exact JSON keys, one-line errors with exit status 2."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from lodeline.geo.cautions import SHORT_CAUTION
from lodeline.tui.cli import BLAS_THREAD_VARIABLES, main

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))
WOODLOT = next(d for d in DEMOS if "woodlot" in d.name)

# The keys of the issue that defines `lodeline convert --json`.
TOP_KEYS = {"record_date", "target_date", "model", "crs", "grid_unit_m", "notes", "courses"}
# beside the metres: the record unit (lodeline.geo.measures), the plot list and events (lodeline.geo.along)
TOP_KEYS |= {"record_unit", "plot_numbering", "plots", "events"}
COURSE_KEYS = {
    "index",
    "call",
    "length_m",
    "start",
    "declination_record_deg",
    "declination_target_deg",
    "convergence_deg",
    "scale_factor",
    "combined_factor",
    "azimuth",
    "bearing",
    "declination_sigma_deg",
    "declination_record_rate_deg_per_year",
    "declination_target_rate_deg_per_year",
    "grid_length_m",
    "steps",
    "bearing_end",
    "warnings",
    "length_record",
    "length_record_text",
    "distance_to_start_m",
    "distance_to_start_record",
}
AZIMUTH_KEYS = {"magnetic_record_deg", "true_deg", "grid_deg", "magnetic_target_deg"}
BEARING_KEYS = {"magnetic_record", "true", "grid", "magnetic_target"}


def run(capsys, *argv):
    status = main(["convert", *map(str, argv)])
    out, err = capsys.readouterr()
    return status, out, err


def test_json_has_exactly_the_documented_keys(capsys):
    status, out, err = run(capsys, WOODLOT, "--target-date", "2025-06-01", "--json")
    assert status == 0, err
    data = json.loads(out)
    assert set(data) == TOP_KEYS
    assert data["record_date"] == "1925-10-03"
    assert data["target_date"] == "2025-06-01"
    assert data["crs"] == "EPSG:32145"
    assert len(data["courses"]) == 4
    for i, c in enumerate(data["courses"], start=1):
        assert set(c) == COURSE_KEYS
        assert c["index"] == i
        assert set(c["start"]) == {"lat", "lon"}
        assert set(c["azimuth"]) == AZIMUTH_KEYS
        assert set(c["bearing"]) == BEARING_KEYS
        assert isinstance(c["warnings"], list)
        mag1 = c["azimuth"]["magnetic_record_deg"]
        mag2 = c["azimuth"]["magnetic_target_deg"]
        d1, d2 = c["declination_record_deg"], c["declination_target_deg"]
        # mag2 = mag1 + D1 - D2 (DESIGN.md)
        assert (mag1 + d1 - d2 - mag2 + 180) % 360 - 180 == pytest.approx(0, abs=1e-9)
    assert data["courses"][0]["call"].startswith("N 5°30' W 20.97 chains")
    # 20.97 chains = 20 ch 97 lk (100 links a chain, NIST Handbook 44); course 2 starts
    # 20.97 chains from the point of beginning
    assert data["courses"][0]["length_record"] == pytest.approx(20.97)
    assert data["courses"][0]["length_record_text"] == "20 ch 97 lk"
    assert data["courses"][1]["distance_to_start_record"] == pytest.approx(20.97)
    assert data["record_unit"]["unit"] == "chain" and data["plots"] == []


def test_table_lists_every_course_and_ends_with_the_caution(capsys):
    status, out, _ = run(capsys, WOODLOT, "--target-date", "2025-06-01")
    assert status == 0
    lines = out.rstrip("\n").splitlines()
    assert lines[-1] == SHORT_CAUTION
    assert "magnetic (record)" in out and "magnetic (target)" in out
    assert "20.97 chain" in out and "421.850" in out  # 20.97 x 66 US survey ft = 421.850 m
    assert "N 5°30′ W" in out


@pytest.mark.parametrize("demo", DEMOS, ids=[d.name for d in DEMOS])
def test_every_demo_converts(capsys, demo):
    status, out, err = run(capsys, demo, "--json")
    assert status == 0, err
    assert json.loads(out)["courses"]


BAD = [
    (
        'format_version = 1\n[place]\nlat = 40\nlon = -77\n[record]\ndate = "1925-01-01"\n'
        '[[course]]\ncall = "N 10 E 5 chains"\n[[course]]\ncall = "N 10 X 5 chains"\n',
        "course 2: 'call'",
    ),
    (
        "format_version = 1\n[place]\nlat = 40\nlon = -77\n[record]\n"
        '[[course]]\ncall = "N 10 E 5 chains"\n',
        "'record.date'",
    ),
    (
        'format_version = 1\n[place]\nlat = 40\nlon = -77\n[record]\ndate = "1925-01-01"\n'
        '[[course]]\ncall = "N 10 E 5 chains"\ncolour = "red"\n',
        "course 1: 'colour'",
    ),
    (
        'format_version = 1\n[place]\nlat = 40\nlon = -77\n[record]\ndate = "1700-01-01"\n'
        '[[course]]\ncall = "N 10 E 5 chains"\n',
        "deed.toml: 'record.date'",  # a setting, named without a course
    ),
]


@pytest.mark.parametrize(("text", "where"), BAD)
def test_bad_document_exits_2_with_one_line_and_writes_nothing(capsys, tmp_path, text, where):
    doc = tmp_path / "deed.toml"
    doc.write_text(text, encoding="utf-8")
    status, out, err = run(capsys, doc)
    assert status == 2
    assert out == ""
    assert err.count("\n") == 1 and err.startswith("lodeline convert: ")
    assert str(doc) in err and where in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["deed.toml"]


def test_bad_target_date_option(capsys):
    status, _, err = run(capsys, WOODLOT, "--target-date", "2025-13-01")
    assert status == 2 and "--target-date" in err and err.count("\n") == 1


def test_console_script_does_not_import_textual(tmp_path):
    code = (
        "import sys; from lodeline.tui.cli import main; "
        f"rc = main(['convert', {str(WOODLOT)!r}, '--json']); "
        "assert 'textual' not in sys.modules, 'textual imported'; sys.exit(rc)"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr


def test_a_one_shot_command_puts_off_full_collections_and_restores_the_collector(
    monkeypatch, capsys
):
    # The CPython collector (documented in the gc module): a command that runs once and ends
    # runs with tui.cli.ONE_SHOT_GC_THRESHOLDS and the imports frozen; the caller gets its own
    # thresholds back and nothing left frozen, after a good run and after a refused one.
    import gc

    import lodeline.geo.north
    from lodeline.tui import cli

    seen = []
    real = lodeline.geo.north.convert_document

    def watched(*args, **kwargs):
        seen.append((gc.get_threshold(), gc.get_freeze_count() > 0))
        return real(*args, **kwargs)

    monkeypatch.setattr(lodeline.geo.north, "convert_document", watched)
    before = gc.get_threshold()
    assert cli.main(["convert", str(DEMOS[0]), "--json"]) == 0
    assert seen == [(cli.ONE_SHOT_GC_THRESHOLDS, True)]
    assert gc.get_threshold() == before and gc.get_freeze_count() == 0
    assert cli.main(["convert", "/nonexistent/deed.toml"]) == 2
    assert gc.get_threshold() == before and gc.get_freeze_count() == 0
    capsys.readouterr()


def test_the_programs_own_run_leaves_the_collector_frozen_for_its_exit(monkeypatch, capsys):
    # main() without arguments is the lodeline command itself, which ends right after: what
    # is left stays frozen so the interpreter's last full pass skips it (CPython's gc module:
    # frozen objects are ignored by collections); the output is the same as a call's.
    import gc

    from lodeline.tui import cli

    assert cli.main(["convert", str(DEMOS[0]), "--json"]) == 0
    expected = capsys.readouterr().out
    monkeypatch.setattr(sys, "argv", ["lodeline", "convert", str(DEMOS[0]), "--json"])
    try:
        assert cli.main() == 0
        assert gc.get_freeze_count() > 0
    finally:
        gc.unfreeze()
    assert capsys.readouterr().out == expected


@pytest.mark.parametrize("users", [None, "2"])
def test_the_command_runs_blas_on_one_thread_unless_the_user_says_otherwise(users):
    # OpenBLAS reads OPENBLAS_NUM_THREADS as numpy loads it (OpenBLAS's documented variable);
    # threadpoolctl reports the count the library runs with
    if users and (os.cpu_count() or 1) < 2:
        pytest.skip("a second thread needs a second core")
    env = {k: v for k, v in os.environ.items() if k not in BLAS_THREAD_VARIABLES}
    if users:
        env["OPENBLAS_NUM_THREADS"] = users
    code = (
        "import sys; from lodeline.tui.cli import main; "
        f"rc = main(['convert', {str(WOODLOT)!r}, '--json']); "
        "from threadpoolctl import threadpool_info; "
        "print([p['num_threads'] for p in threadpool_info() if p['user_api'] == 'blas'], "
        "file=sys.stderr); sys.exit(rc)"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env)
    assert done.returncode == 0, done.stderr
    assert done.stderr.strip() == f"[{users or 1}]"
