"""Command-line outputs that cannot be written, and options that do not apply.

Bad input, including an output path that cannot be written, must exit 2 with one line on
stderr naming the file (the product's rule for every command), never exit 1 with an
internal error; an option that a mode does not use must be refused, not ignored.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from lodeline.tui.cli import main

DEMO = Path(__file__).parents[1] / "demo_traverses" / "greyfen_woodlot_1925.toml"
SHIPPED_SHC = Path(__file__).parents[1] / "geo" / "data" / "IGRF14.shc"


@pytest.fixture(autouse=True)
def user_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))


@pytest.fixture
def points(tmp_path) -> Path:
    src = tmp_path / "points.csv"
    src.write_text("lat,lon,date\n41.2,-77.9,1931-07-04\n", encoding="utf-8")
    return src


def one_line_naming(err: str, path: Path) -> bool:
    return err.count("\n") == 1 and str(path) in err and "internal error" not in err


def test_report_into_a_missing_folder_is_bad_input(tmp_path, capsys):
    """Bug: 'lodeline report DOC --out missing/r.html' exited 1 with an internal
    FileNotFoundError instead of exit 2 with one line naming the file."""
    out = tmp_path / "missing" / "r.html"
    assert main(["report", str(DEMO), "--out", str(out), "--target-date", "2027-05-01"]) == 2
    err = capsys.readouterr().err
    assert one_line_naming(err, out) and "cannot be written" in err
    assert not out.parent.exists()


def test_report_over_a_folder_with_force_is_bad_input(tmp_path, capsys):
    """Bug: 'lodeline report DOC --out FOLDER.html --force', where FOLDER.html is a folder,
    exited 1 with an internal IsADirectoryError; the folder must be left as it was."""
    out = tmp_path / "r.html"
    out.mkdir()
    code = main(["report", str(DEMO), "--out", str(out), "--force", "--target-date", "2027-05-01"])
    assert code == 2
    assert one_line_naming(capsys.readouterr().err, out)
    assert out.is_dir() and not any(out.iterdir())
    assert not list(tmp_path.glob(".r.html.*"))  # no temporary file left behind


def test_field_csv_into_a_missing_folder_is_bad_input(tmp_path, points, capsys):
    """Bug: 'lodeline field --csv IN --out missing/out.csv' exited 1 with an internal
    FileNotFoundError instead of exit 2 with one line naming the file."""
    out = tmp_path / "missing" / "out.csv"
    assert main(["field", "--csv", str(points), "--out", str(out)]) == 2
    assert one_line_naming(capsys.readouterr().err, out)


def test_field_csv_refuses_a_height_option(points, capsys):
    """Bug: 'lodeline field --csv IN --height 500' silently ignored --height (the heights
    come from the file's height_m column), so the user got sea-level results unawares."""
    assert main(["field", "--csv", str(points), "--height", "500"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "'--height'" in err and "height_m" in err


def test_skip_bad_without_csv_names_skip_bad(capsys):
    """Bug: 'lodeline field --lat .. --skip-bad' (no --csv) blamed '--out', an option that
    was not given; the message must name the option that was."""
    argv = ["field", "--lat", "41.2", "--lon", "-77.9", "--date", "1931-07-04", "--skip-bad"]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "'--skip-bad'" in err


def test_single_point_height_still_defaults_to_zero(capsys):
    """The single-point height is 0 m when --height is not given (as the help says)."""
    argv = ["field", "--lat", "41.2", "--lon", "-77.9", "--date", "1931-07-04", "--json"]
    assert main(argv) == 0
    assert json.loads(capsys.readouterr().out)["height_m"] == 0.0


@pytest.mark.parametrize("bad", ["missing/p.csv", "folder.csv"])
def test_export_with_one_unwritable_output_writes_none(tmp_path, capsys, bad):
    """Bug: 'lodeline export DOC --geojson a.geojson --csv missing/p.csv' exited 2 but left
    a.geojson written; a failed export must write nothing."""
    (tmp_path / "folder.csv").mkdir()
    geojson = tmp_path / "a.geojson"
    csv_path = tmp_path / bad
    argv = ["export", str(DEMO), "--geojson", str(geojson), "--csv", str(csv_path), "--force"]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert one_line_naming(err, csv_path) and "cannot be written" in err
    assert not geojson.exists()


def test_unadjusted_stations_are_not_called_adjusted(capsys):
    """Bug: 'lodeline close DOC --adjust none' headed the station table "stations (none
    adjustment)" with "adjusted bearing" columns, for positions that are as recorded."""
    assert main(["close", str(DEMO), "--adjust", "none"]) == 0
    out = capsys.readouterr().out
    assert "none adjustment" not in out and "adjusted bearing" not in out
    assert "as recorded, not adjusted" in out
    assert main(["close", str(DEMO), "--adjust", "compass"]) == 0
    assert "stations (compass adjustment)" in capsys.readouterr().out


def test_option_errors_are_one_line(capsys):
    """Bug: a bad option ('lodeline close DOC --north bogus') printed argparse's usage line
    before the error: two lines on stderr where the rule is one."""
    with pytest.raises(SystemExit) as info:
        main(["close", str(DEMO), "--north", "bogus"])
    assert info.value.code == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--north" in err and "usage" not in err


def test_a_crossing_figure_exports_as_a_closed_line_not_an_invalid_polygon(tmp_path):
    """Bug: a closed document whose calls cross themselves (a bow tie) was exported as a
    self-intersecting Polygon, which RFC 7946 (section 3.1.6) and GIS readers reject."""
    import json

    from geojson_pydantic import FeatureCollection

    doc = tmp_path / "bow.toml"
    doc.write_text(
        'format_version = 1\ntitle = "bow tie"\nclosed = true\n'
        "[place]\nlat = 40.4312\nlon = -77.6034\n"
        '[record]\nreference = "true"\ndistance_unit = "m"\nfoot = "international"\n'
        '[[course]]\ncall = "N 0 E 100 m"\n[[course]]\ncall = "S 45 E 141.4214 m"\n'
        '[[course]]\ncall = "N 0 E 100 m"\n[[course]]\ncall = "S 45 W 141.4214 m"\n',
        encoding="utf-8",
    )
    out = tmp_path / "bow.geojson"
    assert main(["export", str(doc), "--geojson", str(out), "--adjust", "none"]) == 0
    data = json.loads(out.read_text(encoding="utf-8"))
    FeatureCollection.model_validate(data)
    figure = data["features"][0]
    assert figure["geometry"]["type"] == "LineString"
    ring = figure["geometry"]["coordinates"]
    assert ring[0] == ring[-1] and len(ring) == 5
    assert data["properties"]["crossing_courses"] is not None


@pytest.mark.parametrize(
    ("argv", "expected"),
    [
        (["models", "add", str(SHIPPED_SHC), "--name", "auto"], "reserved"),
        (["models", "add", str(SHIPPED_SHC), "--name", " "], "empty"),
        (["convert", str(DEMO), "--model", "nosuch"], "'lodeline models' lists"),
        (
            ["field", "--lat", "10", "--lon", "0", "--date", "2030.0", "--model", "igrf14"],
            "end itself excluded",
        ),
    ],
)
def test_model_messages_name_the_real_problem(argv, expected, capsys):
    """Bugs: '--name auto' was called a shipped model, an empty --name fell back silently to
    the file's name, an unknown target model was told to choose another date, and a date at
    the very end of a model's interval was refused without saying the end is excluded."""
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and expected in err


def test_atomic_write_into_a_missing_folder_is_a_project_error(tmp_path):
    """Bug: lodeline.geo.atomic.write_atomic let OSError escape, so the terminal application's report
    and export (which catch the project's errors) could fail with a traceback."""
    from lodeline.geo.atomic import write_atomic
    from lodeline.geo.errors import OutputError

    target = tmp_path / "missing" / "out.html"
    with pytest.raises(OutputError) as info:
        write_atomic(target, "x")
    assert info.value.file == str(target) and "cannot be written" in str(info.value)
