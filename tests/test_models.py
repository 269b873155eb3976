"""The model registry: data directory, shipped models, 'auto', installation, no extrapolation."""

from __future__ import annotations

import numpy as np
import pytest
from shared_data import GUFM1  # noqa: E402

from lodeline.geo.errors import InputError, ModelFileError, ModelRangeError
from lodeline.geo.magnetic import field_at
from lodeline.geo.models import (
    data_dir,
    find_model,
    install_model,
    load_model,
    require,
    resolve,
    user_models,
)

# An invented two-epoch SHC model for 1700-1900 (test data only; not a real field model).
HISTORIC_SHC = """# invented test model
1 1 2 2 1 1700.0 1900.0
 1700.0 1900.0
1 0 -32000.0 -31600.0
1 1 -2600.0 -2300.0
1 -1 5800.0 5900.0
"""


@pytest.fixture
def user_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    return tmp_path / "data"


def test_data_dir_precedence(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "a"))
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "x"))
    assert data_dir() == tmp_path / "a"
    monkeypatch.delenv("LODELINE_DATA")
    assert data_dir() == tmp_path / "x" / "lodeline"
    monkeypatch.delenv("XDG_DATA_HOME")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    assert data_dir() == tmp_path / "home" / ".local" / "share" / "lodeline"


@pytest.mark.parametrize(
    ("name", "start", "end", "nmax"),
    [
        # intervals and degrees as published (IAGA for IGRF-14; NOAA NCEI/BGS for the WMMs)
        ("igrf14", 1900.0, 2030.0, 13),
        ("wmm2025", 2025.0, 2030.0, 12),
        ("wmmhr2025", 2025.0, 2030.0, 133),
        ("IGRF14", 1900.0, 2030.0, 13),
    ],
)
def test_shipped_models(name, start, end, nmax):
    m = load_model(name)
    assert (m.start, m.end, m.nmax) == (start, end, nmax)
    assert load_model(name) is m  # parsed once, cached


def test_unknown_model_lists_the_choices(user_dir):
    with pytest.raises(ModelRangeError, match="igrf14, wmm2025, wmmhr2025, or 'auto'"):
        find_model("igrf99")


def test_auto_uses_igrf_from_1900_to_2029(user_dir):
    names, ok = resolve("auto", np.array([1900.0, 1950.0, 2029.999, 2030.0, 1899.99]))
    assert names.tolist() == ["igrf14", "igrf14", "igrf14", "", ""]
    assert ok.tolist() == [True, True, True, False, False]


def test_no_silent_extrapolation_names_interval_and_remedies(user_dir):
    with pytest.raises(ModelRangeError) as info:
        require("auto", np.array([1950.0, 1850.0]))
    text = str(info.value)
    assert "1850.0000" in text and "igrf14 1900.0-2030.0" in text
    assert "lodeline models add" in text and "by hand" in text and "lodeline fit" in text
    assert info.value.index == 1
    with pytest.raises(ModelRangeError, match="wmm2025, 2025.0 to 2030.0"):
        field_at(lat=10.0, lon=10.0, year=2024.9, model="wmm2025")
    with pytest.raises(ModelRangeError):
        field_at(lat=10.0, lon=10.0, year=2030.0, model="auto")


def test_install_user_model_and_auto_uses_it_before_1900(user_dir, tmp_path):
    src = tmp_path / "Old Field.shc"
    src.write_text(HISTORIC_SHC)
    info = install_model(src, name="oldfield")
    assert info.path == user_dir / "models" / "oldfield.shc"
    assert info.path.read_bytes() == src.read_bytes()  # installed byte for byte
    assert [m.name for m in user_models()] == ["oldfield"]
    names = require("auto", np.array([1800.0, 1950.0]))
    assert names.tolist() == ["oldfield", "igrf14"]
    f = field_at(lat=[40.0, 40.0], lon=[-80.0, -80.0], year=[1800.0, 1950.0])
    assert f.model == ("oldfield", "igrf14")
    g = field_at(lat=40.0, lon=-80.0, year=1800.0, model="oldfield")
    assert float(g.declination_deg) == float(f.declination_deg[0])
    # 1900-1990: IGRF wins over the user model where both cover the date
    assert require("auto", np.array([1899.5]))[0] == "oldfield"


def test_install_refuses_bad_names_and_clashes(user_dir, tmp_path):
    src = tmp_path / "m.shc"
    src.write_text(HISTORIC_SHC)
    with pytest.raises(InputError, match="shipped model"):
        install_model(src, name="igrf14")
    with pytest.raises(InputError, match="must start with a letter"):
        install_model(src, name="9lives")
    install_model(src, name="mine")
    with pytest.raises(InputError, match="installed already"):
        install_model(src, name="mine")


def test_install_refuses_malformed_file_and_installs_nothing(user_dir, tmp_path):
    src = tmp_path / "broken.shc"
    src.write_text(HISTORIC_SHC.replace("5900.0", "59x0.0"))
    with pytest.raises(ModelFileError) as info:
        install_model(src)
    assert info.value.line == 6
    assert user_models() == ()


def test_gufm1_installed_gives_auto_before_1900(user_dir):
    if not GUFM1.exists():
        pytest.skip(f"{GUFM1} (gufm1 authors' file, not redistributed) is not present")
    install_model(GUFM1, name="gufm1")
    f = field_at(lat=41.2, lon=-77.9, year=1820.0)
    assert f.model == "gufm1"
    assert np.isnan(f.declination_sigma_deg)  # no published error model for gufm1
    with pytest.raises(ModelRangeError, match="gufm1 1590.0-1990.0"):
        field_at(lat=41.2, lon=-77.9, year=1585.0)
