"""`lodeline field --csv` read, checked, computed and written by chunks: the same bytes and the
same messages as reading row by row.

The reference below is the row-by-row reading the chunked one replaced (csv.reader, one row
checked at a time by the single-point helpers, one field_at call for every good row, csv.writer
per row). The field values themselves are checked against ppigrf and the published WMM test
values in tests/test_magnetic.py; here the subject is the batch around the engine.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import os
import tempfile
from pathlib import Path

import numpy as np
import pytest
from fuzz import examples
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import lodeline.tui.commands.field_batch as batch
from lodeline.geo.errors import LodelineError
from lodeline.tui.cli import main
from lodeline.tui.commands.field import RESULT_KEYS, _csv_value, _date, _number, _record


@pytest.fixture(autouse=True)
def user_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    return tmp_path / "data"


def reference(path: str, model: str = "auto", skip_bad: bool = False) -> tuple[str, list[str]]:
    """The output text and stderr lines of the row-by-row reading (raises its first error)."""
    from lodeline.geo.magnetic import field_at, validate_position
    from lodeline.geo.models import require, resolve

    text = Path(path).read_text(encoding="utf-8-sig")
    reader = csv.reader(io.StringIO(text, newline=""), strict=True)
    header = [h.strip() for h in next(reader)]
    col = {name: header.index(name) for name in header}
    good, bad, line = [], [], 1
    try:
        for row in reader:
            line = reader.line_num
            if not row or all(not cell.strip() for cell in row):
                continue
            try:
                if len(row) != len(header):
                    raise LodelineError(
                        f"has {len(row)} fields, the header has {len(header)}", file=path, line=line
                    )
                where = {"file": path, "line": line}
                lat = _number(row[col["lat"]].strip(), "lat", **where)
                lon = _number(row[col["lon"]].strip(), "lon", **where)
                hcell = row[col["height_m"]].strip() if "height_m" in col else ""
                height = _number(hcell, "height_m", **where) if hcell else 0.0
                _label, year = _date(row[col["date"]], **where)
                try:
                    validate_position(lat, lon, height)
                except LodelineError as err:
                    raise err.located(**where) from None
                good.append((line, row, lat, lon, height, year))
            except LodelineError as err:
                if not skip_bad:
                    raise
                bad.append(err)
    except csv.Error as exc:
        from lodeline.tui.commands.field import _malformed

        raise _malformed(exc, path, line + 1) from None
    if good:
        years = np.array([g[5] for g in good])
        _names, ok = resolve(model, years)
        for k in np.flatnonzero(~ok):
            try:
                require(model, years[k : k + 1])
            except LodelineError as err:
                err.located(file=path, line=good[k][0])
                if not skip_bad:
                    raise
                bad.append(err)
        good = [g for g, keep in zip(good, ok.tolist(), strict=True) if keep]
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(header + list(RESULT_KEYS[4:]))
    if good:
        result = field_at(
            lat=np.array([g[2] for g in good]),
            lon=np.array([g[3] for g in good]),
            year=np.array([g[5] for g in good]),
            height_m=np.array([g[4] for g in good]),
            model=model,
        )
        for i, (_line, row, lat, lon, height, _year) in enumerate(good):
            rec = _record(result, i, lat, lon, "", height)
            writer.writerow(row + [_csv_value(rec[k]) for k in RESULT_KEYS[4:]])
    bad.sort(key=lambda e: e.line or 0)
    err_lines = [f"lodeline field: skipped {e}" for e in bad]
    if bad:
        err_lines.append(f"lodeline field: {len(bad)} bad row(s) skipped, {len(good)} written")
    return out.getvalue(), err_lines


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


#: Rows of every kind the batch meets: the common forms and the edge cases of the reading.
GOOD_ROWS = [
    ["41.2", "-77.9", "300", "1931-07-04", "a"],
    ["41.2", "282.1", "", "2025.5", "b"],  # 0..360 longitude, blank height
    ["-33.87", "359.9999", "0", "1900-01-01", "c"],
    ["89.99", "180", "1500.5", "2029-12-31", "d"],  # polar: low H, warnings
    ["-89.5", "-180", "-999", "1904-02-29", "e"],  # leap day
    [" 12.5 ", "+.5", "1e3", " 1955-5-7 ", "f"],  # spaces, short ISO, exponent
    ["0", "0", "99999", "2000", "g"],
    ["60", "10", "20", "1965.", "h"],
    ["-10", "-20", "5", "1987-06-30", "site, with a comma"],  # quoted on output
    ["1E1", "2e-1", "0.0", "\u0661\u0669\u0663\u0661-07-04", 'say "oak"'],  # Arabic digits
    ["45", "-100", "12", "2019-12-31", "i"],
    ["45", "-100", "12", "2020-01-01", "j"],  # across an IGRF segment boundary
    ["80.5", "-70", "0", "1990-03-03", "k"],
]
BAD_ROWS = [
    ["100", "10", "0", "2000-01-01", "lat outside"],
    ["10", "400", "0", "2000-01-01", "lon outside"],
    ["10", "10", "-2000", "2000-01-01", "height outside"],
    ["x", "10", "0", "2000", "not a number"],
    ["1_0", "10", "0", "2000", "underscore"],
    ["10", "nan", "0", "2000", "nan"],
    ["10", "inf", "0", "2000", "inf"],
    ["10", "1e999", "0", "2000", "overflow"],
    ["10", "10", "0", "2021-02-29", "no such day"],
    ["10", "10", "0", "1700-01-01", "no model"],
    ["10", "10", "0", "9999-01-01", "year"],
    ["10", "10", "0", "yesterday", "words"],
    ["10", "10", "", "", "no date"],
    ["10", "10", "0"],  # too few fields
    ["", "", "", "", ""],  # blank: skipped silently
]


def _write(path: Path, rows: list[list[str]], header=("lat", "lon", "height_m", "date", "site")):
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(header)
        writer.writerows(rows)
    return path


def _mixed_rows(seed: int, n: int) -> list[list[str]]:
    rng = np.random.default_rng(seed)
    pool = GOOD_ROWS + BAD_ROWS
    return [list(pool[i]) for i in rng.integers(0, len(pool), n)]


@pytest.mark.parametrize("model", ["auto", "igrf14"])
def test_one_chunk_gives_the_bytes_of_the_row_by_row_reading(capsys, tmp_path, model):
    src = _write(tmp_path / "in.csv", GOOD_ROWS + [["0", "0", "", "2026-06-01", "z"]])
    code, out, err = run(capsys, "field", "--csv", src, "--model", model)
    assert code == 0 and err == ""
    assert out == reference(str(src), model)[0]


def test_sigma_column_with_a_published_error_model(capsys, tmp_path):
    rows = [["41.2", "-77.9", "0", "2026-01-01", "a"], ["89.9", "0", "0", "2027.5", "b"]]
    src = _write(tmp_path / "in.csv", rows)
    code, out, _ = run(capsys, "field", "--csv", src, "--model", "wmm2025")
    assert code == 0 and out == reference(str(src), "wmm2025")[0]
    assert out.count("horizontal intensity") == 1  # near the pole: warned, quoted cell


def test_skip_bad_gives_the_bytes_and_messages_of_the_row_by_row_reading(capsys, tmp_path):
    src = _write(tmp_path / "in.csv", _mixed_rows(1, 400))
    code, out, err = run(capsys, "field", "--csv", src, "--skip-bad")
    want_out, want_err = reference(str(src), skip_bad=True)
    assert code == 0
    assert out == want_out
    assert err.splitlines() == want_err


def test_quoted_cells_and_a_newline_inside_one(capsys, tmp_path):
    src = tmp_path / "in.csv"
    src.write_text(
        'lat,lon,date,note\n41,-77,2020-01-01,"two\nlines"\n"42",-77,2020-01-01,plain\r\n'
        'x,1,2020,bad\n43,-77,2020-01-01,"a ""b"""\n',
        encoding="utf-8",
    )
    code, out, err = run(capsys, "field", "--csv", src, "--skip-bad")
    want_out, want_err = reference(str(src), skip_bad=True)
    assert code == 0 and out == want_out and err.splitlines() == want_err
    assert f"{src}:5:" in err  # the line count includes the line inside the quotes


def test_the_first_bad_row_stops_the_run_with_the_same_message(capsys, tmp_path):
    for seed in range(6):
        src = _write(tmp_path / f"in{seed}.csv", _mixed_rows(seed, 60))
        with pytest.raises(LodelineError) as want:
            reference(str(src))
        code, out, err = run(capsys, "field", "--csv", src)
        assert code == 2 and out == ""
        assert err == f"lodeline field: {want.value}\n"


def _numbers_equal(a: str, b: str) -> bool:
    """Two output texts with the same cells, floats equal to 1e-12 relative (a chunk is
    computed in one field_at call, whose last bit can depend on the other points of the
    call: the engine orders points by time segment within blocks)."""
    ra, rb = list(csv.reader(io.StringIO(a))), list(csv.reader(io.StringIO(b)))
    if len(ra) != len(rb):
        return False
    floats = set(range(len(ra[0]) - 11, len(ra[0]) - 2))
    for x, y in zip(ra, rb, strict=True):
        for j, (u, v) in enumerate(zip(x, y, strict=True)):
            if u == v:
                continue
            if j not in floats or not np.isclose(float(u), float(v), rtol=1e-12, atol=1e-9):
                return False
    return True


def test_chunk_boundaries_name_the_true_line(capsys, tmp_path, monkeypatch):
    monkeypatch.setattr(batch, "CHUNK_ROWS", 7)
    rows = [list(GOOD_ROWS[k % 4]) for k in range(20)]
    rows[12] = ["91", "0", "0", "2000", "bad in the second chunk"]
    src = _write(tmp_path / "in.csv", rows)
    out_path = tmp_path / "out.csv"
    code, out, err = run(capsys, "field", "--csv", src, "--out", out_path)
    assert code == 2 and out == "" and not out_path.exists()
    assert err == f"lodeline field: {src}:14: 'lat': latitude 91.0 is outside -90..90 degrees\n"
    assert sorted(os.listdir(tmp_path)) == ["in.csv"]  # no temporary file left behind
    code, out, err = run(capsys, "field", "--csv", src, "--skip-bad")
    want_out, want_err = reference(str(src), skip_bad=True)
    assert code == 0 and err.splitlines() == want_err
    assert _numbers_equal(out, want_out)


def test_chunks_with_skip_bad_across_many_boundaries(capsys, tmp_path, monkeypatch):
    monkeypatch.setattr(batch, "CHUNK_ROWS", 5)
    src = _write(tmp_path / "in.csv", _mixed_rows(7, 120))
    out_path = tmp_path / "out.csv"
    code, _, err = run(capsys, "field", "--csv", src, "--skip-bad", "--out", out_path)
    want_out, want_err = reference(str(src), skip_bad=True)
    assert code == 0 and err.splitlines() == want_err
    assert _numbers_equal(out_path.read_text(encoding="utf-8"), want_out)


def test_uncovered_date_early_and_bad_row_late(capsys, tmp_path, monkeypatch):
    # the row-by-row reading names a bad row before any date no model covers
    monkeypatch.setattr(batch, "CHUNK_ROWS", 3)
    rows = [["10", "10", "0", "1700-01-01", "a"]] + [list(GOOD_ROWS[0])] * 8
    rows.append(["10", "10", "0", "2000-13-01", "b"])
    src = _write(tmp_path / "in.csv", rows)
    with pytest.raises(LodelineError) as want:
        reference(str(src))
    code, _, err = run(capsys, "field", "--csv", src)
    assert code == 2 and err == f"lodeline field: {want.value}\n" and ":11:" in err
    rows.pop()
    src = _write(tmp_path / "in.csv", rows)
    code, _, err = run(capsys, "field", "--csv", src)
    assert code == 2 and f"{src}:2: 'date': date 1700.0000 is outside" in err


def test_not_utf8_late_in_the_file_is_named_before_a_bad_row(capsys, tmp_path, monkeypatch):
    monkeypatch.setattr(batch, "CHUNK_ROWS", 2)
    src = tmp_path / "in.csv"
    body = "lat,lon,date\n1,2,2000\n100,2,2000\n" + "1,2,2000\n" * 5
    src.write_bytes(body.encode() + b"1,2,\xff\n")
    code, out, err = run(capsys, "field", "--csv", src)
    assert code == 2 and out == "" and err == f"lodeline field: {src}: is not UTF-8 text\n"


cell = st.sampled_from(
    ["1", "-1.5", " 2 ", "", "x", "1e5", "+.5", "1.", "nan", "Infinity", "1_0", "\u0662", "9e9",
     "180.000001", "360", "-180", "90", "-90.1", "1,5", " ", "0x10", "1e", "+-1", "-NaN",
     "4\x1c", "\t3", "infinit", "1e999", "1.5E+2", "."]
)  # fmt: skip
date_cell = st.sampled_from(
    ["2000-01-01", "2000-1-1", " 2000-02-29 ", "2001-02-29", "2025.5", "1899", "0001-01-01",
     "9998-12-31", "1700-06-01", "", "2020-00-10", "2030-01-01", "1999.9999", "12345"]
)  # fmt: skip


@settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(rows=st.lists(st.tuples(cell, cell, cell, date_cell), min_size=1, max_size=30))
def test_masks_accept_exactly_what_the_row_by_row_reading_accepts(capsys, tmp_path, rows):
    src = _write(
        tmp_path / "h.csv", [list(r) for r in rows], header=("lat", "lon", "height_m", "date")
    )
    code, out, err = run(capsys, "field", "--csv", src, "--skip-bad")
    want_out, want_err = reference(str(src), skip_bad=True)
    assert code == 0 and out == want_out and err.splitlines() == want_err


def test_numpy_dates_give_the_decimal_years_of_geo_dates():
    import datetime as dt

    from lodeline.geo.dates import parse_date

    days = [dt.date(1, 1, 1), dt.date(1899, 12, 31), dt.date(9998, 12, 31)]
    days += [dt.date(1900, 1, 1) + dt.timedelta(days=k) for k in range(0, 48_000, 7)]
    texts = [d.isoformat() for d in days]
    got = batch._decimal_years(texts)
    for t in texts:
        assert got[t] == parse_date(t)[1], t  # the same bits


def test_a_column_of_iso_dates_read_at_once_gives_the_decimal_years_of_geo_dates():
    # reference: the standard library's calendar (datetime.date), through geo.dates
    import datetime as dt

    from lodeline.geo.dates import parse_date

    rng = np.random.default_rng(20261203)
    ordinals = rng.integers(dt.date(1, 1, 1).toordinal(), dt.date(9998, 12, 31).toordinal(), 50_000)
    days = [dt.date.fromordinal(k) for k in ordinals.tolist()]
    days += [dt.date(1, 1, 1), dt.date(9998, 12, 31), dt.date(2000, 2, 29), dt.date(1900, 3, 1)]
    days += [dt.date(y, 12, 31) for y in (1600, 1700, 1900, 2000, 2004, 2100)]
    texts = [d.isoformat() for d in days]
    got = batch._iso_column_years(texts)
    assert got is not None and got.tolist() == [parse_date(t)[1] for t in texts]  # the same bits


@pytest.mark.parametrize(
    "odd",
    [
        "2001-02-29",  # no such day
        "1900-02-29",
        "2012-04-31",
        "2012-07-00",
        "2012-00-10",
        "2012-13-01",
        "0000-01-01",  # outside the years read
        "9999-01-01",
        "2012-7-01",  # another length
        "2012-07-011",
        "２０１２-07-01",  # digits that are not ASCII
        "2012/07/01",
        " 2012-07-0",
        "2012.5",
        "",
    ],
)
def test_a_column_of_iso_dates_with_one_other_cell_is_left_to_the_cell_by_cell_reading(odd):
    cells = ["2012-07-01", "1931-07-04", odd, "2020-02-29"]
    assert batch._iso_column_years(cells) is None
    assert batch._iso_column_years(["2012-07-0", "12012-07-01"]) is None  # lengths that add up
    assert batch._iso_column_years(["2012-07-01\n2012-07-01", ""]) is None
    assert batch._iso_column_years([]) is None


@settings(max_examples=examples(300))
@given(
    st.lists(
        st.one_of(
            st.dates().map(dt.date.isoformat),
            st.text(alphabet=st.sampled_from("0123456789-\n/ "), min_size=9, max_size=11),
        ),
        max_size=6,
    )
)
def test_fuzz_a_column_of_date_texts_is_read_at_once_only_as_geo_dates_reads_each(cells):
    from lodeline.geo.dates import parse_date

    got = batch._iso_column_years(cells)
    if got is not None:
        assert all(batch._PLAIN_ISO.fullmatch(c) for c in cells)
        assert got.tolist() == [parse_date(c)[1] for c in cells]


def test_progress_bar_only_on_a_terminal(capsys, tmp_path, monkeypatch):
    import lodeline.tui.progress

    src = _write(tmp_path / "in.csv", [list(GOOD_ROWS[k % 5]) for k in range(30)])
    code, out, err = run(capsys, "field", "--csv", src, "--out", tmp_path / "a.csv")
    assert code == 0 and out == "" and err == ""  # stderr is not a terminal: silent
    monkeypatch.setattr(lodeline.tui.progress, "_stderr_is_terminal", lambda: True)
    monkeypatch.setattr(batch, "CHUNK_ROWS", 7)
    code, out, err = run(capsys, "field", "--csv", src, "--out", tmp_path / "b.csv")
    assert code == 0 and out == ""
    assert "30/30" in err and "rows/s" in err  # done/total and the rate, on stderr only
    assert (tmp_path / "a.csv").read_text() == (tmp_path / "b.csv").read_text()


def test_formatting_in_a_worker_writes_the_same_bytes(capsys, tmp_path, monkeypatch):
    monkeypatch.setattr(batch, "CHUNK_ROWS", 6)
    src = _write(tmp_path / "in.csv", _mixed_rows(11, 93))  # the last chunk shared
    monkeypatch.setattr(batch, "_idle_cores", lambda since: 0.0)  # no core to spare
    code, here, err_here = run(capsys, "field", "--csv", src, "--skip-bad")
    assert code == 0
    started = []
    start = batch._Writer._start

    def recorded(self):
        start(self)
        started.append(self._pool is not None)

    monkeypatch.setattr(batch._Writer, "_start", recorded)
    monkeypatch.setattr(batch, "_idle_cores", lambda since: 1.0)
    code, there, err_there = run(capsys, "field", "--csv", src, "--skip-bad")
    assert code == 0 and started == [os.cpu_count() > 1]
    assert there == here and err_there == err_here
    src = _write(tmp_path / "in.csv", _mixed_rows(11, 90) + [list(GOOD_ROWS[0])])
    code, there, err = run(capsys, "field", "--csv", src, "--skip-bad")  # one row in the last chunk
    want_out, want_err = reference(str(src), skip_bad=True)
    assert code == 0 and err.splitlines() == want_err and _numbers_equal(there, want_out)


@pytest.mark.skipif((os.cpu_count() or 1) < 2, reason="the helper runs on a second core")
def test_a_helper_that_ends_before_its_work_changes_nothing(capsys, tmp_path, monkeypatch):
    # The helper takes its first job and ends without an answer (as if killed): the command
    # does that job itself and goes on alone, with the bytes of the row-by-row reading.
    monkeypatch.setattr(batch, "CHUNK_ROWS", 6)
    monkeypatch.setattr(batch, "_idle_cores", lambda since: 1.0)
    src = _write(tmp_path / "in.csv", _mixed_rows(12, 95))
    want_out, want_err = reference(str(src), skip_bad=True)

    def ends_at_once(conn, folder):
        conn.recv()
        os._exit(0)

    gone = []
    real = batch._Writer._helper_gone

    def recorded(self):
        gone.append(len(self._jobs))
        real(self)

    monkeypatch.setattr(batch, "_serve", ends_at_once)
    monkeypatch.setattr(batch._Writer, "_helper_gone", recorded)
    code, out, err = run(capsys, "field", "--csv", src, "--skip-bad")
    assert code == 0 and err.splitlines() == want_err and _numbers_equal(out, want_out)
    # the jobs left undone by the helper (the one it took, and the next if already sent), done here
    assert len(gone) == 1 and 1 <= gone[0] <= batch.HELPER_JOBS
    assert not list(Path(tempfile.gettempdir()).glob("lodeline-field-*"))


@settings(max_examples=examples(300))
@given(
    st.lists(
        st.lists(st.text(alphabet=st.sampled_from(' ab,;"\n\r:1'), max_size=12), max_size=3),
        max_size=6,
    )
)
def test_fuzz_the_warnings_column_is_quoted_as_the_csv_module_quotes_it(warnings):
    # reference: the standard library's csv writer, default dialect, one cell per warning list
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    expected = []
    for w in warnings:
        buffer.seek(0)
        buffer.truncate()
        writer.writerow(["; ".join(w), ""])
        expected.append(buffer.getvalue()[:-2] if w else "")
    assert batch._warning_cells(tuple(tuple(w) for w in warnings)) == expected


@pytest.mark.skipif((os.cpu_count() or 1) < 2, reason="the helper runs on a second core")
def test_jobs_the_slow_helper_has_not_started_are_taken_back_with_the_same_bytes(
    capsys, tmp_path, monkeypatch
):
    # A helper slowed down (as on a busy core): rather than wait at the end of the file, the
    # command does the jobs the helper has not started; the bytes are the row-by-row reading's
    import time

    monkeypatch.setattr(batch, "CHUNK_ROWS", 6)
    monkeypatch.setattr(batch, "_idle_cores", lambda since: 1.0)
    src = _write(tmp_path / "in.csv", _mixed_rows(14, 97))
    want_out, want_err = reference(str(src), skip_bad=True)
    here = os.getpid()
    real_lines = batch._computed_lines

    def slow_in_the_helper(inputs, prefix):
        if os.getpid() != here:
            time.sleep(0.4)
        return real_lines(inputs, prefix)

    taken = []
    real_take = batch._Writer._take_back

    def recorded(self):
        done = real_take(self)
        taken.append(done)
        return done

    monkeypatch.setattr(batch, "_computed_lines", slow_in_the_helper)
    monkeypatch.setattr(batch._Writer, "_take_back", recorded)
    code, out, err = run(capsys, "field", "--csv", src, "--skip-bad")
    assert code == 0 and err.splitlines() == want_err and _numbers_equal(out, want_out)
    assert any(taken)  # at least one job done here after all
    assert not list(Path(tempfile.gettempdir()).glob("lodeline-field-*"))
