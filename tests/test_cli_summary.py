"""``lodeline close DIR_OR_FILES… --summary OUT.csv``: one row per document of a folder of deeds.

Check values: every figure of a row is the number ``lodeline close --json``, ``convert --json``
and ``fit --json`` print for that document (one figure everywhere: the row is built from the
same result objects, and CSV floats are written by their shortest repr, so they must be equal,
not close); precision as perimeter / misclosure (N of 1:N, common practice, Ghilani & Wolf,
*Elementary Surveying*); the CSV read back by the standard library's RFC 4180 reader.
"""

from __future__ import annotations

import csv
import io
import json
import shutil
from pathlib import Path

import pytest

from lodeline.tui.cli import main
from lodeline.tui.summary import COLUMNS

DEMO_DIR = Path(__file__).parents[1] / "demo_traverses"
DEMOS = sorted(DEMO_DIR.glob("*.toml"))
FOUND_DEMO = DEMO_DIR / "wrenfield_glebe_1911.toml"  # three found corners

# A document the schema refuses (an unknown key) and a file that is not TOML at all.
SCHEMA_REFUSED = (
    'format_version = 1\ntitle = "refused"\nclosed = true\ncolour = "red"\n\n'
    "[place]\nlat = 44.0\nlon = -72.0\n\n"
    '[record]\nreference = "magnetic"\ndate = "1925-06-01"\ndistance_unit = "rod"\n\n'
    '[[course]]\ncall = "N 10 E 40 rods"\n'
)
NOT_TOML = "this = is [not toml\n"


def _run(capsys, *args: str) -> tuple[int, str, str]:
    capsys.readouterr()
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out, out.err


def _json(capsys, *args: str) -> dict:
    code, out, err = _run(capsys, *args)
    assert code == 0, err
    return json.loads(out)


def _rows(path: Path) -> list[dict[str, str]]:
    with path.open(encoding="utf-8", newline="") as handle:
        return list(csv.DictReader(handle))


def _float(cell: str) -> float | None:
    return None if cell == "" else float(cell)


@pytest.fixture
def archive(tmp_path: Path) -> Path:
    """The demos, one in a subfolder, a refused and an unreadable document, and files that
    are not documents (a hidden one, a text file) which the search leaves out."""
    folder = tmp_path / "deeds"
    (folder / "box 2").mkdir(parents=True)
    for demo in DEMOS:
        shutil.copy(demo, folder / demo.name)
    shutil.move(folder / FOUND_DEMO.name, folder / "box 2" / FOUND_DEMO.name)
    (folder / "refused.toml").write_text(SCHEMA_REFUSED, encoding="utf-8")
    (folder / "garbled.toml").write_text(NOT_TOML, encoding="utf-8")
    (folder / ".hidden.toml").write_text(NOT_TOML, encoding="utf-8")
    (folder / "notes.txt").write_text("not a document\n", encoding="utf-8")
    return folder


def test_folder_rows_sorted_good_bad_and_unreadable(capsys, archive, tmp_path):
    out = tmp_path / "summary.csv"
    code, stdout, err = _run(capsys, "close", str(archive), "--summary", str(out), "--jobs", "1")
    assert code == 0, err
    assert f"wrote {out}" in stdout
    # the count of documents with problems on stderr, one line
    assert err.count("\n") == 1 and "2 of 8 documents" in err and "2 did not read" in err
    with out.open(encoding="utf-8", newline="") as handle:
        assert next(csv.reader(handle)) == list(COLUMNS)
    rows = _rows(out)
    files = [r["file"] for r in rows]
    assert files == sorted(files)
    assert len(rows) == len(DEMOS) + 2  # hidden file and text file left out
    assert str(archive / "box 2" / FOUND_DEMO.name) in files  # searched recursively
    by_name = {Path(r["file"]).name: r for r in rows}
    for name in ("refused.toml", "garbled.toml"):
        row = by_name[name]
        assert row["status"] == "not read"
        # the same one-line error `lodeline close DOC` gives
        code, _, single = _run(capsys, "close", str(archive / name))
        assert code == 2
        assert single == f"lodeline close: {row['problems']}\n"
        assert row["misclosure_m"] == "" and row["title"] == ""
    assert "colour" in by_name["refused.toml"]["problems"]
    for demo in DEMOS:
        assert by_name[demo.name]["status"] == "closed", by_name[demo.name]["problems"]


def test_every_figure_is_the_one_the_single_commands_print(capsys, tmp_path):
    out = tmp_path / "demos.csv"
    code, _, err = _run(capsys, "close", *map(str, DEMOS), "--summary", str(out), "--jobs", "1")
    assert code == 0, err
    rows = {r["file"]: r for r in _rows(out)}
    assert set(rows) == {str(d) for d in DEMOS}
    for demo in DEMOS:
        row = rows[str(demo)]
        closure = _json(capsys, "close", str(demo), "--json")
        conv = _json(capsys, "convert", str(demo), "--json")
        for key in (
            "misclosure_m",
            "misclosure_azimuth_deg",
            "precision",
            "area_m2",
            "area_hectares",
            "area_acres",
        ):
            assert _float(row[key]) == closure[key], (demo.name, key)
        assert row["misclosure_bearing"] == (closure["misclosure_bearing"] or "")
        assert row["adjustment"] == closure["adjustment"]
        assert row["notes"].split() == list(dict.fromkeys(n["code"] for n in closure["notes"]))
        assert int(row["courses"]) == len(conv["courses"])
        assert row["record_date"] == str(conv["record_date"])
        assert row["model"] == conv["model"]
        assert _float(row["declination_deg"]) == conv["courses"][0]["declination_record_deg"]
        if closure["precision"] is not None:
            # N of 1:N = perimeter / misclosure (common practice)
            ratio = closure["perimeter_m"] / closure["misclosure_m"]
            assert float(row["precision"]) == pytest.approx(ratio, rel=1e-12)


def test_found_corners_give_the_fit_declination_and_survey_date(capsys, tmp_path):
    out = tmp_path / "found.csv"
    code, _, err = _run(capsys, "close", str(FOUND_DEMO), "--summary", str(out))
    assert code == 0, err
    (row,) = _rows(out)
    fit = _json(capsys, "fit", str(FOUND_DEMO), "--json")
    assert int(row["found_stations"]) == 3
    assert _float(row["fit_declination_deg"]) == fit["empirical_declination_deg"]
    assert _float(row["fit_rms_m"]) == fit["rms_m"]
    ranges = fit["survey_date"]["ranges"]
    assert ranges, "the demo's needle matches a span of IGRF-14 years"
    assert row["survey_date"] == "; ".join(f"{r['text']} ({r['model']})" for r in ranges)
    # the survey of 1911 lies inside the estimated span
    assert "1906–1912 (igrf14)" in row["survey_date"]
    # no found corners: no fit figures, and no problem either
    plain = tmp_path / "plain.csv"
    _run(capsys, "close", str(DEMO_DIR / "greyfen_woodlot_1925.toml"), "--summary", str(plain))
    (row,) = _rows(plain)
    assert row["found_stations"] == "0" and row["fit_declination_deg"] == ""
    assert row["problems"] == "" and row["status"] == "closed"


def test_one_and_two_jobs_give_the_same_bytes(capsys, archive, tmp_path):
    one, two = tmp_path / "one.csv", tmp_path / "two.csv"
    assert _run(capsys, "close", str(archive), "--summary", str(one), "--jobs", "1")[0] == 0
    assert _run(capsys, "close", str(archive), "--summary", str(two), "--jobs", "2")[0] == 0
    assert one.read_bytes() == two.read_bytes()


def test_existing_summary_needs_force_and_an_input_is_never_the_output(capsys, archive, tmp_path):
    out = tmp_path / "summary.csv"
    out.write_text("keep\n", encoding="utf-8")
    code, _, err = _run(capsys, "close", str(archive), "--summary", str(out), "--jobs", "1")
    assert code == 2 and "--force" in err and err.count("\n") == 1
    assert out.read_text(encoding="utf-8") == "keep\n"
    code, _, err = _run(
        capsys, "close", str(archive), "--summary", str(out), "--jobs", "1", "--force"
    )
    assert code == 0, err
    assert out.read_text(encoding="utf-8").startswith("file,status,")
    victim = archive / DEMOS[0].name
    before = victim.read_bytes()
    code, _, err = _run(capsys, "close", str(archive), "--summary", str(victim), "--force")
    assert code == 2 and "is the input" in err
    assert victim.read_bytes() == before


def test_refusals_without_a_summary_and_with_nothing_to_read(capsys, tmp_path):
    code, _, err = _run(capsys, "close", str(DEMOS[0]), str(DEMOS[1]))
    assert code == 2 and "--summary" in err
    code, _, err = _run(capsys, "close", str(DEMOS[0]), "--jobs", "2")
    assert code == 2 and "--summary" in err
    empty = tmp_path / "empty"
    empty.mkdir()
    code, _, err = _run(capsys, "close", str(empty), "--summary", str(tmp_path / "s.csv"))
    assert code == 2 and "no .toml or .json documents" in err
    assert not (tmp_path / "s.csv").exists()
    code, _, err = _run(
        capsys, "close", str(DEMOS[0]), "--summary", str(tmp_path / "s.csv"), "--json"
    )
    assert code == 2 and err.count("\n") == 1
    with pytest.raises(SystemExit) as stop:  # argparse refuses it, one line
        main(["close", str(DEMOS[0]), "--summary", "x.csv", "--jobs", "0"])
    assert stop.value.code == 2
    assert "--jobs" in capsys.readouterr().err


def test_a_missing_file_is_a_row_not_a_stop(capsys, tmp_path):
    out = tmp_path / "s.csv"
    missing = tmp_path / "gone.toml"
    code, _, err = _run(capsys, "close", str(missing), str(DEMOS[0]), "--summary", str(out))
    assert code == 0, err
    rows = {r["file"]: r for r in _rows(out)}
    assert rows[str(missing)]["status"] == "not read"
    assert "cannot be read" in rows[str(missing)]["problems"]
    assert rows[str(DEMOS[0])]["status"] == "closed"


def test_summary_text_is_rfc4180(capsys, tmp_path):
    out = tmp_path / "s.csv"
    _run(capsys, "close", str(DEMOS[0]), "--summary", str(out))
    raw = out.read_bytes().decode("utf-8")
    assert raw.endswith("\r\n")
    assert list(csv.reader(io.StringIO(raw, newline="")))[0] == list(COLUMNS)


def test_a_record_date_no_model_covers_still_gives_the_date_and_the_fit(capsys, tmp_path):
    # The found demo moved to 1850, before IGRF-14 (1900 on): the conversion is refused (no
    # declination at the record date) but the fit finds one; the row keeps the record date.
    text = FOUND_DEMO.read_text(encoding="utf-8")
    assert 'date = "1911-05-09"' in text
    doc = tmp_path / "moved.toml"
    doc.write_text(text.replace('date = "1911-05-09"', 'date = "1850-06-01"'), encoding="utf-8")
    out = tmp_path / "moved.csv"
    code, stdout, err = _run(capsys, "close", str(doc), "--summary", str(out))
    assert code == 0, err
    assert f"wrote {out} (1 document)" in stdout
    (row,) = _rows(out)
    assert row["status"] == "partial" and "outside every model" in row["problems"]
    assert row["record_date"] == "1850-06-01" and row["courses"] == "6"
    assert row["declination_deg"] == "" and row["model"] == ""  # none covers the date
    fit = _json(capsys, "fit", str(doc), "--json")
    assert _float(row["fit_declination_deg"]) == fit["empirical_declination_deg"]
