"""Bad input at every edge of the command line: one line naming what is wrong, exit 2.

Dates outside the calendar the program computes in, CRS definitions that would make PROJ read
files, outputs that are the input, limits on the size of inputs, and write failures on stdout.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from lodeline.tui.cli import main

DEMOS = Path(__file__).parents[1] / "demo_traverses"
WOODLOT = DEMOS / "greyfen_woodlot_1925.toml"


def run(capsys, *argv):
    try:
        status = main([str(a) for a in argv])
    except SystemExit as stop:  # the option parser's refusals
        status = stop.code
    out, err = capsys.readouterr()
    return status, out, err


def one_line_refusal(status: int, err: str) -> str:
    assert status == 2, err
    assert err.count("\n") == 1 and "internal error" not in err and "Traceback" not in err, err
    return err


def _document_with(tmp_path: Path, old: str, new: str, count: int = -1) -> Path:
    """The woodlot demo with ``old`` replaced by ``new`` (the first ``count`` times)."""
    text = WOODLOT.read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "doc.toml"
    path.write_text(text.replace(old, new, count), encoding="utf-8")
    return path


# -- dates ---------------------------------------------------------------------------------


@pytest.mark.parametrize("day", ["9999-12-31", "9999-01-01", "0000-06-01", "9999.5"])
def test_field_date_outside_the_calendar_is_bad_input(capsys, day):
    status, _, err = run(capsys, "field", "--lat", "41", "--lon", "-77", "--date", day)
    assert "outside" in one_line_refusal(status, err)


def test_target_date_outside_the_calendar_is_bad_input(capsys):
    status, _, err = run(capsys, "convert", WOODLOT, "--target-date", "9999-01-01")
    assert "year 9999 is outside 1..9998" in one_line_refusal(status, err)


def test_document_target_date_outside_the_calendar_names_the_key(capsys, tmp_path):
    doc = _document_with(tmp_path, "[[course]]", "[target]\ndate = 9999-01-01\n\n[[course]]", 1)
    status, _, err = run(capsys, "convert", doc)
    err = one_line_refusal(status, err)
    assert "target.date" in err and "9999" in err


# -- grid.crs: no files, no network, PROJ's errors as one line ---------------------------


@pytest.mark.parametrize(
    ("crs", "said"),
    [
        ("+proj=utm +zone=18 +datum=WGS84 +nadgrids=/dev/zero", "+nadgrids would read a file"),
        ("+proj=utm +zone=18 +datum=WGS84 +grids=/etc/shadow", "+grids would read a file"),
        ("+proj=utm +zone=18 +datum=WGS84 +geoidgrids=egm96_15.gtx", "+geoidgrids"),
        ("+init=epsg:32145", "+init would read a file"),
        ("+proj=tmerc +lat_0=42.5 +lon_0=-72.5 +k=1e-300 +datum=WGS84", "k/k_0"),
        ("+proj=utm +zone=18 +datum=WGS84 +nadgrids=@missing_grid.gsb", "+nadgrids"),
        ("EPSG:99999999", "grid.crs"),
        ("x" * 10_000_000, "characters is longer than any"),
    ],
)
def test_grid_crs_that_reads_files_or_fails_in_proj_is_one_line_of_bad_input(
    capsys, tmp_path, crs, said
):
    doc = _document_with(tmp_path, 'crs = "EPSG:32145"', f'crs = "{crs}"')
    status, _, err = run(capsys, "convert", doc)
    err = one_line_refusal(status, err)
    assert said in err and "'grid.crs'" in err
    assert len(err) < 700  # a long value is cut, not echoed whole
    assert "FutureWarning" not in err


def test_crs_definitions_without_files_are_accepted():
    from pyproj import CRS

    from lodeline.geo.grid import grid_factors

    # WKT and PROJJSON of the same grid as the EPSG code give its factors (pyproj itself)
    code = "EPSG:32145"
    expected = grid_factors(code, lat=44.1, lon=-72.9).scale_factor
    for text in (CRS(code).to_wkt(), CRS(code).to_json()):
        assert grid_factors(text, lat=44.1, lon=-72.9).scale_factor == pytest.approx(expected)


def test_proj_network_is_off():
    import pyproj.network

    import lodeline.geo.grid  # noqa: F401  (importing the module turns it off)

    assert not pyproj.network.is_network_enabled()


# -- an output that is the input ------------------------------------------------------------


CSV_IN = "lat,lon,date\n41.2,-77.9,2020-01-01\nnot,a,row\n"


@pytest.mark.parametrize("by_link", [False, True])
def test_field_csv_output_that_is_the_input_is_refused(capsys, tmp_path, by_link):
    source = tmp_path / "a.csv"
    source.write_text(CSV_IN, encoding="utf-8")
    out = source
    if by_link:
        out = tmp_path / "link.csv"
        out.symlink_to(source)
    status, _, err = run(capsys, "field", "--csv", source, "--out", out, "--force", "--skip-bad")
    assert "is the input" in one_line_refusal(status, err)
    assert source.read_text(encoding="utf-8") == CSV_IN


@pytest.mark.parametrize("option", ["--geojson", "--csv"])
def test_export_output_that_is_the_document_is_refused(capsys, tmp_path, option):
    doc = tmp_path / "doc.toml"
    doc.write_text(WOODLOT.read_text(encoding="utf-8"), encoding="utf-8")
    status, _, err = run(capsys, "export", doc, option, doc, "--force")
    assert "is the input" in one_line_refusal(status, err)
    assert doc.read_text(encoding="utf-8") == WOODLOT.read_text(encoding="utf-8")


def test_report_output_that_is_the_document_is_refused(capsys, tmp_path):
    doc = tmp_path / "doc.md"  # a document may not end in .md, but the check comes first
    doc.write_text("x", encoding="utf-8")
    status, _, err = run(capsys, "report", doc, "--out", doc, "--force")
    assert "is the input" in one_line_refusal(status, err)
    assert doc.read_text(encoding="utf-8") == "x"


# -- several outputs: all or nothing --------------------------------------------------------


def test_export_that_fails_on_its_third_file_replaces_none(capsys, tmp_path, monkeypatch):
    import errno

    import lodeline.geo.atomic

    out = {name: tmp_path / name for name in ("x.geojson", "x.csv", "x-courses.csv")}
    for path in out.values():
        path.write_text("previous " + path.name, encoding="utf-8")
    real_fsync, calls = lodeline.geo.atomic.os.fsync, []

    def full_disk_on_third(fd):  # the disk fills while the third file is written
        calls.append(fd)
        if len(calls) == 3:
            raise OSError(errno.ENOSPC, "No space left on device")
        return real_fsync(fd)

    monkeypatch.setattr(lodeline.geo.atomic.os, "fsync", full_disk_on_third)
    status, _, err = run(
        capsys, "export", WOODLOT, "--geojson", out["x.geojson"], "--csv", out["x.csv"], "--force"
    )
    err = one_line_refusal(status, err)
    assert str(out["x-courses.csv"]) in err and "No space left on device" in err
    assert "no file was replaced" in err
    for path in out.values():
        assert path.read_text(encoding="utf-8") == "previous " + path.name
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(out)  # no temporary file left


def test_a_failed_rename_puts_back_the_files_already_replaced(tmp_path, monkeypatch):
    import errno

    import lodeline.geo.atomic
    from lodeline.geo.errors import OutputError

    first, second = tmp_path / "a.txt", tmp_path / "b.txt"
    first.write_text("old a", encoding="utf-8")
    real_replace = lodeline.geo.atomic.os.replace

    def fail_on_b(src, dst):
        if Path(dst) == second:
            raise OSError(errno.EIO, "Input/output error")
        return real_replace(src, dst)

    monkeypatch.setattr(lodeline.geo.atomic.os, "replace", fail_on_b)
    with pytest.raises(OutputError, match="b.txt"):
        lodeline.geo.atomic.write_all([(first, "new a"), (second, "new b")], overwrite=True)
    monkeypatch.setattr(lodeline.geo.atomic.os, "replace", real_replace)
    assert first.read_text(encoding="utf-8") == "old a"
    assert not second.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt"]


def test_export_into_a_directory_says_it_is_a_directory(capsys, tmp_path):
    (tmp_path / "x.geojson").mkdir()
    status, _, err = run(capsys, "export", WOODLOT, "--geojson", tmp_path / "x.geojson")
    assert "is a directory" in one_line_refusal(status, err)


# -- standard output that cannot be written ---------------------------------------------------


def _lodeline(*argv, **kwargs):
    return subprocess.Popen(
        [sys.executable, "-m", "lodeline", *map(str, argv)], stderr=subprocess.PIPE, **kwargs
    )


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full")
@pytest.mark.parametrize(
    "argv",
    [
        ("convert", WOODLOT),
        ("convert", WOODLOT, "--json"),
        ("field", "--lat", "41", "--lon", "-77", "--date", "2020-01-01"),
    ],
)
def test_stdout_on_a_full_device_is_one_line_exit_2(argv):
    with open("/dev/full", "w") as full:
        proc = _lodeline(*argv, stdout=full)
        _, err = proc.communicate(timeout=120)
    err = err.decode()
    assert proc.returncode == 2, err
    assert err.count("\n") == 1 and "No space left on device" in err and "internal" not in err


def test_stdout_closed_by_the_reader_ends_quietly():
    proc = _lodeline("convert", WOODLOT, "--json", stdout=subprocess.PIPE)
    proc.stdout.close()  # the reader goes away before anything is written (| head -0)
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 0 and err == b""


# -- messages that say what is wrong --------------------------------------------------------


def test_latitude_just_outside_the_range_shows_its_digits(capsys):
    status, _, err = run(capsys, "field", "--lat", "90.0000001", "--lon", "1", "--date", "2020")
    assert "latitude 90.0000001 is outside" in one_line_refusal(status, err)


@pytest.mark.parametrize(
    "text", ["1_0", "\uff11\uff10", "4\u0661"]
)  # 1_0, full-width 10, 4 + Arabic-Indic 1
def test_numbers_with_underscores_or_non_ascii_digits_are_refused(capsys, text):
    status, _, err = run(capsys, "field", "--lat", text, "--lon", "1", "--date", "2020")
    assert "is not a number" in one_line_refusal(status, err) and "--lat" in err


@pytest.mark.parametrize("command", ["report", "field"])
def test_output_that_is_a_directory_says_so(capsys, tmp_path, command):
    folder = tmp_path / "out.md"
    folder.mkdir()
    if command == "report":
        argv = ("report", WOODLOT, "--out", folder)
    else:
        source = tmp_path / "in.csv"
        source.write_text("lat,lon,date\n41,-77,2020-01-01\n", encoding="utf-8")
        argv = ("field", "--csv", source, "--out", folder)
    status, _, err = run(capsys, *argv)
    assert "it is a directory" in one_line_refusal(status, err)


def test_unterminated_csv_quote_is_named_as_such(capsys, tmp_path):
    source = tmp_path / "in.csv"
    source.write_text('lat,lon,date\n41,-77,"2020-01-01\n42,-77,2020-01-01\n', encoding="utf-8")
    status, _, err = run(capsys, "field", "--csv", source)
    err = one_line_refusal(status, err)
    assert f"{source}:2:" in err and "never closed" in err


def test_height_has_one_range_in_the_document_and_the_conversion(capsys, tmp_path):
    from lodeline.geo.magnetic import HEIGHT_MIN_M

    doc = _document_with(tmp_path, "height_m = 540.0", "height_m = -5000.0")
    status, _, err = run(capsys, "convert", doc)
    err = one_line_refusal(status, err)
    assert "'place.height_m'" in err and f"{HEIGHT_MIN_M:.0f}..100000 m" in err


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        ('model = "IGRF14"', 'model = "NO SUCH MODEL"', "'record.model'"),
        ('date = "1925-10-03"', 'date = "1066-10-14"', "'record.date'"),
    ],
)
def test_a_setting_that_fails_is_named_without_a_course(capsys, tmp_path, old, new, key):
    doc = _document_with(tmp_path, old, new)
    status, _, err = run(capsys, "convert", doc)
    err = one_line_refusal(status, err)
    assert key in err and "course" not in err.split(key)[0]


@pytest.mark.parametrize("option", ["--record-model", "--model"])
def test_an_empty_model_option_is_refused(capsys, option):
    status, _, err = run(capsys, "convert", WOODLOT, option, "")
    assert "is empty" in one_line_refusal(status, err)


# -- counts with a bound ------------------------------------------------------------------------


@pytest.mark.parametrize("spacing", ["0.001 ft", "0.0000001 m"])
def test_every_that_would_make_too_many_points_is_refused_at_once(capsys, tmp_path, spacing):
    import time

    from lodeline.geo.along import MAX_ALONG_POINTS

    doc = tmp_path / "long.toml"
    doc.write_text(
        'format_version = 1\n[place]\nlat = 40.0\nlon = -77.0\n[record]\nreference = "true"\n'
        f'foot = "us"\n[[course]]\ncall = "N 10 E 421 m"\nevery = "{spacing}"\n',
        encoding="utf-8",
    )
    started = time.monotonic()
    status, _, err = run(capsys, "export", doc, "--geojson", tmp_path / "x.geojson")
    err = one_line_refusal(status, err)
    assert "course 1: 'every'" in err and f"more than {MAX_ALONG_POINTS:,}" in err
    assert time.monotonic() - started < 30  # refused before any point is made (was 85 s)
    assert not (tmp_path / "x.geojson").exists()


def test_points_are_counted_over_the_whole_document(capsys, tmp_path):
    from lodeline.geo.along import MAX_ALONG_POINTS

    # 60 % of the bound on each of two courses: the second passes the document's bound
    n = int(MAX_ALONG_POINTS * 0.6)
    doc = tmp_path / "two.toml"
    doc.write_text(
        'format_version = 1\n[place]\nlat = 40.0\nlon = -77.0\n[record]\nreference = "true"\n'
        + f'[[course]]\ncall = "N 10 E {n} m"\nevery = "1 m"\n' * 2,
        encoding="utf-8",
    )
    status, _, err = run(capsys, "export", doc, "--geojson", tmp_path / "x.geojson")
    assert "course 2: 'every'" in one_line_refusal(status, err)
