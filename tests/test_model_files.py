"""Model file readers: shipped tables byte-identical and read losslessly; malformed files fail
with ModelFileError naming file and line; B-spline conversion checked against scipy."""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lodeline.geo.errors import ModelFileError
from lodeline.geo.model_files import (
    bspline_to_piecewise,
    detect_format,
    read_cof,
    read_gufm,
    read_model_file,
    read_shc,
)
from lodeline.geo.models import shipped_models
from lodeline.geo.synthesis import coefficient_index

DATA_DIR = Path(__file__).parents[1] / "geo" / "data"
from shared_data import GUFM1  # noqa: E402


def _reference_file(package: str, *parts: str) -> Path:
    mod = pytest.importorskip(package)
    return Path(os.path.dirname(mod.__file__), *parts)


@pytest.mark.reference
@pytest.mark.parametrize(
    ("ours", "package", "parts"),
    [
        ("IGRF14.shc", "ppigrf", ("IGRF14.shc",)),
        ("WMM_2025.COF", "pygeomag", ("wmm", "WMM_2025.COF")),
        ("WMMHR_2025.COF", "pygeomag", ("wmm", "WMMHR_2025.COF")),
    ],
)
def test_shipped_tables_are_byte_identical_to_the_published_copies(ours, package, parts):
    # the coefficient tables as distributed by ppigrf (IAGA IGRF-14) and pygeomag (NOAA WMM)
    assert (DATA_DIR / ours).read_bytes() == _reference_file(package, *parts).read_bytes()


def test_every_shipped_model_is_listed_with_its_file():
    names = {m.name: m for m in shipped_models()}
    assert set(names) == {"igrf14", "wmm2025", "wmmhr2025"}
    for info in names.values():
        assert info.path.is_file()


def test_igrf14_read_losslessly():
    path = DATA_DIR / "IGRF14.shc"
    model = read_shc(path, name="igrf14")
    lines = [ln for ln in path.read_text().splitlines() if ln.strip() and not ln.startswith("#")]
    epochs = [float(t) for t in lines[1].split()]
    assert model.nmax == 13 and model.start == 1900.0 and model.end == 2030.0
    assert len(epochs) == 27
    at = [model.coefficients_at(e)[0] for e in epochs]
    count = 0
    for ln in lines[2:]:
        tok = ln.split()
        n, m = int(tok[0]), int(tok[1])
        k = coefficient_index(n, abs(m), "h" if m < 0 else "g")
        for j, text in enumerate(tok[2:]):
            assert at[j][k] == pytest.approx(float(text), abs=1e-9), (n, m, epochs[j])
        count += 1
    assert count == 13 * 15  # (n, m) pairs with m = -n..n for n = 1..13


@pytest.mark.parametrize(("file", "nmax"), [("WMM_2025.COF", 12), ("WMMHR_2025.COF", 133)])
def test_wmm_tables_read_losslessly(file, nmax):
    path = DATA_DIR / file
    model = read_cof(path)
    assert model.nmax == nmax and model.start == 2025.0 and model.end == 2030.0
    c = model.coeffs[0]
    rows = 0
    for ln in path.read_text().splitlines()[1:]:
        tok = ln.split()
        if len(tok) != 6:
            continue
        n, m = int(tok[0]), int(tok[1])
        g, h, dg, dh = (float(t) for t in tok[2:])
        kg = coefficient_index(n, m, "g")
        assert (c[0, kg], c[1, kg]) == (g, dg)
        if m:
            kh = coefficient_index(n, m, "h")
            assert (c[0, kh], c[1, kh]) == (h, dh)
        rows += 1
    assert rows == nmax * (nmax + 3) // 2


def _write(tmp_path: Path, name: str, text: str) -> Path:
    p = tmp_path / name
    p.write_text(text)
    return p


SHC_OK = """# tiny test model (invented coefficients)
1 1 2 2 1 1800.0 1900.0
 1800.0 1900.0
1 0 -30000.0 -29000.0
1 1 -2000.0 -1900.0
1 -1 5000.0 5100.0
"""

COF_OK = """    2025.0            TEST-1     01/01/2025
  1  0  -29351.8       0.0       12.0        0.0
  1  1   -1410.8    4545.4        9.7      -21.5
  2  0   -2556.6       0.0      -11.6        0.0
  2  1    2951.1   -3133.6       -5.2      -27.7
  2  2    1649.3    -815.1       -8.0      -12.1
999999999999999999999999999999999999999999999999
"""


def test_small_valid_files_read(tmp_path):
    shc = read_shc(_write(tmp_path, "tiny.shc", SHC_OK))
    assert shc.nmax == 1 and (shc.start, shc.end) == (1800.0, 1900.0)
    values, rates = shc.coefficients_at(1850.0)
    assert values.tolist() == [-29500.0, -1950.0, 5050.0]
    assert rates.tolist() == pytest.approx([10.0, 1.0, 1.0])
    cof = read_cof(_write(tmp_path, "t.COF", COF_OK))
    assert cof.nmax == 2 and cof.title == "TEST-1" and cof.name == "test1"
    values, rates = cof.coefficients_at(2027.0)
    assert values[0] == pytest.approx(-29351.8 + 2 * 12.0)
    assert rates[coefficient_index(2, 2, "h")] == -12.1


def _error(path: Path, reader=read_model_file) -> ModelFileError:
    with pytest.raises(ModelFileError) as info:
        reader(path)
    err = info.value
    assert err.file == str(path)
    return err


@pytest.mark.parametrize(
    ("mutate", "line", "words"),
    [
        (lambda t: t.replace("1 1 2 2 1 1800.0 1900.0", "1 1 2 2"), 2, "at least 5"),
        (lambda t: t.replace(" 1800.0 1900.0\n", " 1800.0\n"), 3, "expected 2 epochs"),
        (lambda t: t.replace(" 1800.0 1900.0\n", " 1900.0 1800.0\n"), 3, "increase"),
        (lambda t: t.replace("-1900.0", "-19x0.0"), 5, "not a number"),
        (lambda t: t.replace("1 -1 5000.0 5100.0\n", ""), 5, "missing"),
        (lambda t: t.replace("1 -1 5000.0", "1 1 5000.0"), 6, "repeats line 5"),
        (lambda t: t.replace("1 -1 5000.0", "2 -1 5000.0"), 6, "outside 1..1"),
        (lambda t: t.replace("1 1 2 2 1", "1 1 2 6 1"), 2, "spline order 6"),
        (lambda t: t.replace("-29000.0", "-29000.0 7.0"), 4, "fields"),
        (lambda t: t.replace("-29000.0", "nan"), 4, "finite"),
    ],
)
def test_malformed_shc(tmp_path, mutate, line, words):
    err = _error(_write(tmp_path, "bad.shc", mutate(SHC_OK)))
    assert err.line == line
    assert words in str(err)
    assert str(err).startswith(f"{tmp_path / 'bad.shc'}:{line}: ")


@pytest.mark.parametrize(
    ("mutate", "line", "words"),
    [
        (lambda t: t.rsplit("\n9", 1)[0] + "\n", 6, "closing line of 9s"),
        (
            lambda t: t.replace("  2  1    2951.1   -3133.6       -5.2      -27.7\n", ""),
            6,
            "n=2 m=1",
        ),
        (lambda t: t.replace("-3133.6", "-31x3.6"), 5, "not a number"),
        (lambda t: t.replace("-11.6        0.0", "-11.6        3.0"), 4, "must be 0 for m=0"),
        (lambda t: t.replace("  2  2 ", "  2  3 "), 6, "out of range"),
        (lambda t: t.replace("  2  2    1649.3    -815.1", "  2  2    1649.3"), 6, "fields"),
        (lambda t: t.replace("2025.0  ", "20x5.0  "), 1, "epoch"),
    ],
)
def test_malformed_cof(tmp_path, mutate, line, words):
    err = _error(_write(tmp_path, "bad.COF", mutate(COF_OK)))
    assert err.line == line
    assert words in str(err)


GUFM_HEAD = " Model tiny\n    1    4   1.0 2.0 3.0 4.0\n  5.0 6.0 7.0 8.0\n"


def _gufm_text(values=None) -> str:
    vals = values if values is not None else [float(i) for i in range(12)]
    body = "\n".join(" ".join(f"{v:.6E}" for v in vals[i : i + 4]) for i in range(0, len(vals), 4))
    return GUFM_HEAD + body + "\n"


def test_gufm_format_small_file(tmp_path):
    model = read_gufm(_write(tmp_path, "tiny.txt", _gufm_text()), name="tiny")
    # valid from the 4th knot (4.0) to the 5th (5.0): one cubic piece
    assert (model.start, model.end, model.nmax) == (4.0, 5.0, 1)
    assert model.title == "tiny"


@pytest.mark.parametrize(
    ("text", "line", "words"),
    [
        (_gufm_text()[:-20] + "\n", 6, "expected 8 knots and 4x3 coefficients"),
        (_gufm_text().replace("2.0 3.0", "2.0 0.5"), 2, "must not decrease"),
        (_gufm_text().replace("5.0 6.0", "5.0 six"), 3, "not a number"),
        (" Model x\n    1.5    4 \n", 2, "nmax 1.5"),
        ("\n", 1, "title"),
    ],
)
def test_malformed_gufm(tmp_path, text, line, words):
    err = _error(_write(tmp_path, "bad.txt", text), reader=read_gufm)
    assert err.line == line
    assert words in str(err)


def test_format_detection(tmp_path):
    assert detect_format(_write(tmp_path, "a.dat", SHC_OK)) == "shc"
    assert detect_format(_write(tmp_path, "b.dat", COF_OK)) == "cof"
    assert detect_format(_write(tmp_path, "c.dat", _gufm_text())) == "gufm"
    with pytest.raises(ModelFileError):
        detect_format(_write(tmp_path, "d.dat", "1.5 2.5\n"))
    with pytest.raises(ModelFileError):
        detect_format(tmp_path / "missing.dat")
    raw = tmp_path / "e.dat"
    raw.write_bytes(b"\x89PNG\r\n\x1a\n")
    with pytest.raises(ModelFileError):
        read_model_file(raw)


@settings(
    max_examples=120, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    text=st.sampled_from([SHC_OK, COF_OK, _gufm_text()]),
    pos=st.integers(min_value=0, max_value=400),
    junk=st.text(alphabet="0123456789 .-eE9x#\n\t", max_size=6),
    cut=st.booleans(),
)
def test_fuzzed_model_files_fail_cleanly(tmp_path, text, pos, junk, cut):
    # any damaged file either reads or raises ModelFileError (never another exception)
    pos = min(pos, len(text))
    damaged = text[:pos] + junk + ("" if cut else text[pos + len(junk) :])
    path = tmp_path / "fuzz.dat"
    path.write_text(damaged)
    try:
        model = read_model_file(path)
    except ModelFileError as err:
        assert err.file == str(path)
    else:
        assert np.isfinite(model.coeffs).all()


@pytest.mark.reference
def test_bspline_conversion_against_scipy():
    interpolate = pytest.importorskip("scipy.interpolate")
    rng = np.random.default_rng(11)
    knots = np.concatenate([[0.0, 1.0, 2.0], np.cumsum(rng.uniform(0.5, 3.0, 12)) + 2.0])
    nspl = len(knots) - 4
    spl = rng.normal(size=(nspl, 3))
    breaks, pp = bspline_to_piecewise(knots, 4, spl)
    ref = interpolate.BSpline(knots, spl, 3, extrapolate=False)
    t = rng.uniform(breaks[0], breaks[-1], 200)
    j = np.clip(np.searchsorted(breaks, t, side="right") - 1, 0, len(breaks) - 2)
    tau = t - breaks[j]
    ours = sum(pp[j, p] * tau[:, None] ** p for p in range(4))
    assert np.allclose(ours, ref(t), atol=1e-12)
    dours = sum(p * pp[j, p] * tau[:, None] ** (p - 1) for p in range(1, 4))
    assert np.allclose(dours, ref.derivative()(t), atol=1e-11)


def test_gufm1_file_reads_with_its_interval():
    if not GUFM1.exists():
        pytest.skip(f"{GUFM1} (gufm1 authors' file, not redistributed) is not present")
    model = read_gufm(GUFM1, name="gufm1")
    # Jackson, Jonkers & Walker (2000): degree 14, 1590-1990
    assert (model.nmax, model.start, model.end) == (14, 1590.0, 1990.0)
