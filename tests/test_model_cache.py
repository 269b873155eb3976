"""Models kept in binary form in the cache folder: the same bits as the text, rebuilt when the
text changes, never trusted when they do not read.

Reference values: the model text files themselves (IGRF-14 as published by IAGA V-MOD, WMM2025
and WMMHR2025 as published by NOAA NCEI and BGS), parsed without the cache.
"""

from __future__ import annotations

import os

import numpy as np
import pytest

import lodeline.geo.model_cache as model_cache
import lodeline.geo.models
from lodeline.geo.magnetic import field_at
from lodeline.geo.model_files import read_model_file

# An invented degree-1 COF model (test data only; not a real field model).
COF = """    2025.0            TESTCOF              01/01/2025
  1  0  -29351.8        0.0       12.0        0.0
  1  1   -1410.8     4545.4        9.7      -21.5
999999999999999999999999999999999999999999999999
999999999999999999999999999999999999999999999999
"""


@pytest.fixture(autouse=True)
def folders(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_CACHE", str(tmp_path / "cache"))
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    lodeline.geo.models._load.cache_clear()
    yield tmp_path
    lodeline.geo.models._load.cache_clear()


def _fresh(name: str):
    """The model loaded anew (nothing kept in memory), through the cache folder."""
    lodeline.geo.models._load.cache_clear()
    return lodeline.geo.models.load_model(name)


@pytest.mark.parametrize("name", ["igrf14", "wmm2025", "wmmhr2025"])
def test_cached_model_has_the_bits_of_the_text(folders, name):
    info = lodeline.geo.models.find_model(name)
    text = read_model_file(info.path, name=info.name, title=info.title, fmt=info.fmt)
    first = _fresh(name)  # parsed, then written to the cache
    assert list((folders / "cache").glob(f"{name}-*.npz"))
    cached = _fresh(name)  # read from the cache
    for model in (first, cached):
        assert model.breaks.tobytes() == text.breaks.tobytes()
        assert model.coeffs.tobytes() == text.coeffs.tobytes()
        assert (model.name, model.title, model.nmax, model.meta, model.source) == (
            text.name, text.title, text.nmax, text.meta, text.source
        )  # fmt: skip
    rng = np.random.default_rng(5)
    lat, lon = rng.uniform(-89, 89, 50), rng.uniform(-180, 180, 50)
    year = rng.uniform(cached.start, cached.end - 1e-3, 50)
    a = field_at(lat=lat, lon=lon, year=year, model=name)
    lodeline.geo.models._load.cache_clear()
    os.environ["LODELINE_CACHE"] = str(folders / "elsewhere")  # no cache: parsed again
    b = field_at(lat=lat, lon=lon, year=year, model=name)
    assert a.declination_deg.tobytes() == b.declination_deg.tobytes()
    assert a.total_nT.tobytes() == b.total_nT.tobytes()


def _install(folders, g10: str) -> None:
    models = folders / "data" / "models"
    models.mkdir(parents=True, exist_ok=True)
    (models / "testcof.cof").write_text(COF.replace("-29351.8", g10))


def test_a_changed_model_file_is_read_again(folders):
    _install(folders, "-29351.8")
    assert _fresh("testcof").coeffs[0, 0, 0] == -29351.8
    _install(folders, "-29000.0")  # same size; another time and header hash
    path = folders / "data" / "models" / "testcof.cof"
    os.utime(path, ns=(1, 1))
    assert _fresh("testcof").coeffs[0, 0, 0] == -29000.0
    assert len(list((folders / "cache").glob("testcof-*.npz"))) == 1  # the old one is removed


def test_a_cache_that_does_not_read_is_not_trusted(folders):
    _install(folders, "-29351.8")
    _fresh("testcof")
    (cached,) = (folders / "cache").glob("testcof-*.npz")
    cached.write_bytes(b"not an npz file")
    assert _fresh("testcof").coeffs[0, 0, 0] == -29351.8
    assert cached.read_bytes()[:2] == b"PK"  # rewritten whole
    # a cached file under the right name but made from another file's text is not used
    info = lodeline.geo.models.find_model("testcof")
    other = read_model_file(info.path, name="testcof", fmt="cof")
    other.coeffs[0, 0, 0] = 1.0
    model_cache._write(cached, "another key", other)
    assert _fresh("testcof").coeffs[0, 0, 0] == -29351.8


def test_a_cache_folder_that_cannot_be_written_is_skipped(folders, monkeypatch):
    blocker = folders / "a file"
    blocker.write_text("")
    monkeypatch.setenv("LODELINE_CACHE", str(blocker / "cache"))
    assert _fresh("igrf14").nmax == 13
    assert model_cache.cache_dir() == blocker / "cache"


def test_cache_folder_follows_the_environment(monkeypatch, tmp_path):
    monkeypatch.delenv("LODELINE_CACHE")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert model_cache.cache_dir() == tmp_path / "xdg" / "lodeline"
    monkeypatch.delenv("XDG_CACHE_HOME")
    monkeypatch.setenv("HOME", str(tmp_path))
    assert model_cache.cache_dir() == tmp_path / ".cache" / "lodeline"
