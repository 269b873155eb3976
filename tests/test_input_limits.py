"""Limits on every input: model files (size, degree, coefficient magnitude), documents (size,
regular files only), calls (length), and error lines that never echo a long value whole.

The limits are stated in README.md ("Limits"); these tests check that each is refused at once
with one line naming the file (and line or key), exit 2.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

import pytest

from lodeline.geo.errors import DocumentError, ModelFileError, ParseError
from lodeline.tui.cli import main

DEMOS = Path(__file__).parents[1] / "demo_traverses"
WOODLOT = DEMOS / "greyfen_woodlot_1925.toml"

# An invented two-epoch SHC model for 1700-1900 (test data only; not a real field model).
HISTORIC_SHC = """# invented test model
1 1 2 2 1 1700.0 1900.0
 1700.0 1900.0
1 0 -32000.0 -31600.0
1 1 -2600.0 -2300.0
1 -1 5800.0 5900.0
"""

# An invented degree-1 COF model (test data only), with its g10 replaced in the tests.
COF = """    2025.0            TESTCOF              01/01/2025
  1  0  -29351.8        0.0       12.0        0.0
  1  1   -1410.8     4545.4        9.7      -21.5
999999999999999999999999999999999999999999999999
999999999999999999999999999999999999999999999999
"""


def run(capsys, *argv):
    status = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return status, out, err


def refused(status: int, err: str) -> str:
    assert status == 2, err
    assert err.count("\n") == 1 and "internal error" not in err, err
    return err


@pytest.fixture
def user_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    return tmp_path / "data" / "models"


# -- model files ----------------------------------------------------------------------------


def test_a_model_file_larger_than_the_limit_is_refused_unread(capsys, tmp_path, user_dir):
    from lodeline.geo.model_files import MAX_MODEL_BYTES

    big = tmp_path / "big.shc"
    with big.open("wb") as handle:  # sparse: the size is there, nothing to read
        handle.write(HISTORIC_SHC.encode())
        handle.truncate(MAX_MODEL_BYTES + 1)
    started = time.monotonic()
    status, _, err = run(capsys, "models", "add", big)
    assert "at most 32 MB" in refused(status, err) and str(big) in err
    assert time.monotonic() - started < 5


@pytest.mark.parametrize(
    ("old", "new", "said"),
    [
        ("-29351.8", "1e300", "coefficient n=1 m=0 1e+300 is beyond 1e+05"),
        ("-29351.8", "-1.5e5", "beyond 1e+05"),
        ("       12.0", "     5000.0", "yearly change n=1 m=0 5000 is beyond 1e+03"),
    ],
)
def test_a_cof_coefficient_beyond_the_bound_is_refused_naming_the_line(tmp_path, old, new, said):
    from lodeline.geo.model_files import read_cof

    path = tmp_path / "test.cof"
    path.write_text(COF.replace(old, new, 1))
    with pytest.raises(ModelFileError) as info:
        read_cof(path)
    assert info.value.line == 2 and said in str(info.value)


def test_an_shc_coefficient_beyond_the_bound_is_refused_naming_the_line(tmp_path):
    from lodeline.geo.model_files import read_shc

    path = tmp_path / "test.shc"
    path.write_text(HISTORIC_SHC.replace("-2300.0", "2.3e7"))
    with pytest.raises(ModelFileError) as info:
        read_shc(path)
    assert info.value.line == 5 and "beyond 1e+05" in str(info.value)


def test_the_shipped_models_are_within_the_bounds():
    from lodeline.geo.models import load_model, shipped_models

    for info in shipped_models():
        load_model(info)  # read through the same checks


def test_models_listing_reads_only_headers(capsys, tmp_path, user_dir, monkeypatch):
    import lodeline.geo.model_files
    import lodeline.geo.models

    src = tmp_path / "oldfield.shc"
    src.write_text(HISTORIC_SHC)
    assert run(capsys, "models", "add", src)[0] == 0
    lodeline.geo.models._load.cache_clear()

    def whole_file_read(*args, **kwargs):
        raise AssertionError("a model file was read whole")

    monkeypatch.setattr(lodeline.geo.model_files, "read_model_file", whole_file_read)
    status, out, err = run(capsys, "models")
    assert status == 0, err
    assert "oldfield   1700.0-1900.0  1" in out and "wmmhr2025  2025.0-2030.0  133" in out


def test_model_headers_agree_with_the_whole_files():
    from lodeline.geo.model_files import read_model_file, read_model_header
    from lodeline.geo.models import shipped_models

    for info in shipped_models():
        model = read_model_file(info.path, fmt=info.fmt)
        head = read_model_header(info.path, info.fmt)
        assert (head.nmax, head.start, head.end) == (model.nmax, model.start, model.end)


# -- documents ------------------------------------------------------------------------------


def test_a_document_linked_to_a_device_is_refused_at_once(capsys, tmp_path):
    doc = tmp_path / "zero.toml"
    doc.symlink_to("/dev/zero")
    status, _, err = run(capsys, "convert", doc)
    assert "not a regular file" in refused(status, err)


def test_a_document_that_is_a_fifo_does_not_block(tmp_path):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    proc = subprocess.run(
        [sys.executable, "-m", "lodeline", "convert", str(fifo)],
        capture_output=True,
        timeout=60,
        text=True,
    )
    assert proc.returncode == 2 and "not a regular file" in proc.stderr


def test_a_document_larger_than_the_limit_is_refused(capsys, tmp_path):
    from lodeline.geo.document import MAX_DOCUMENT_BYTES

    doc = tmp_path / "huge.toml"
    with doc.open("wb") as handle:
        handle.truncate(MAX_DOCUMENT_BYTES + 1)
    status, _, err = run(capsys, "convert", doc)
    assert "a traverse document is at most 50 MB" in refused(status, err)


# -- calls and long values ------------------------------------------------------------------


def test_a_call_longer_than_the_limit_is_refused_at_once():
    from lodeline.geo.calls import MAX_CALL_CHARS, parse_call, parse_distance

    long_call = "N 45 E 20 perches to " + "a white oak, " * 1_000_000
    started = time.monotonic()
    with pytest.raises(ParseError) as info:
        parse_call(long_call, default_unit=None, foot="us")
    with pytest.raises(ParseError):
        parse_distance("2" * (MAX_CALL_CHARS + 1), default_unit="perch", foot="us")
    assert time.monotonic() - started < 1.0
    assert "too long (at most 2,000)" in str(info.value) and len(str(info.value)) < 200
    # a call of the limit's length is read
    head = "N 45 E 20 perches to a "
    parse_call(head + "x" * (MAX_CALL_CHARS - len(head)), default_unit=None, foot="us")


@pytest.mark.parametrize(
    ("old", "new"),
    [
        ('distance_unit = "chain"', 'distance_unit = "' + "furlong" * 1_500_000 + '"'),
        ("[[course]]", '[[course]]\ncall = "N 1 E 1 chain ' + "x" * 10_000_000 + '"\n[[course]]'),
        ("call = \"N 5°30' W", "call = \"N 5°30' W" + " 1" * 5_000_000),
    ],
)
def test_error_lines_cut_long_values(capsys, tmp_path, old, new):
    text = WOODLOT.read_text(encoding="utf-8")
    assert old in text
    doc = tmp_path / "long.toml"
    doc.write_text(text.replace(old, new, 1), encoding="utf-8")
    started = time.monotonic()
    status, _, err = run(capsys, "convert", doc)
    refused(status, err)
    assert len(err) < 700
    assert time.monotonic() - started < 30


def test_every_error_is_one_bounded_line():
    err = DocumentError("bad value " + "v\nw" * 100_000, file="f.toml", field="title")
    text = str(err)
    assert "\n" not in text and len(text) <= 600 and "…" in text
    assert text.startswith("f.toml: 'title': bad value")
