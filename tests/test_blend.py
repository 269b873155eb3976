"""The hand-over from gufm1 to IGRF-14 under auto (lodeline.geo.models, lodeline.geo.magnetic, lodeline field).

gufm1 is read from the shared data folder (the authors' file, not redistributed); the tests
skip with the reason when it is absent. Check values: the linearity of the field in the Gauss
coefficients (any spherical-harmonic text; here the two models evaluated on their own) and a
finite difference of the blended declination for its rate.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from lodeline.geo.magnetic import field_at
from lodeline.geo.models import install_model
from lodeline.tui.cli import main
from tests.shared_data import GUFM1

PLACES = [(50.73, -3.53), (41.2, -77.9), (-33.9, 18.4), (35.7, 139.7), (64.1, -21.9)]


@pytest.fixture
def with_gufm1(tmp_path, monkeypatch):
    if not GUFM1.exists():
        pytest.skip(f"{GUFM1} (gufm1 authors' file, not redistributed) is not present")
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    install_model(GUFM1, name="gufm1")


def _field(capsys, lat, lon, date, *extra):
    capsys.readouterr()
    assert main(["field", "--lat", str(lat), "--lon", str(lon), "--date", date, "--json",
                 *extra]) == 0  # fmt: skip
    return json.loads(capsys.readouterr().out)


@pytest.mark.parametrize(("lat", "lon"), PLACES)
def test_no_jump_in_d_where_gufm1_hands_over(with_gufm1, capsys, lat, lon):
    before = _field(capsys, lat, lon, "1899-12-31")
    after = _field(capsys, lat, lon, "1900-01-01")
    assert before["model"] == "gufm1"
    assert after["model"] == "gufm1+igrf14 (1.00/0.00)"
    assert abs(after["declination_deg"] - before["declination_deg"]) < 1e-3
    end = _field(capsys, lat, lon, "1909-12-31")
    then = _field(capsys, lat, lon, "1910-01-01")
    assert then["model"] == "igrf14"
    assert abs(then["declination_deg"] - end["declination_deg"]) < 1e-3


def test_the_blend_is_the_weighted_sum_of_the_two_models(with_gufm1):
    lat, lon = np.array([p[0] for p in PLACES]), np.array([p[1] for p in PLACES])
    year = 1906.0  # w = (1910 - 1906) / 10 = 0.4 for gufm1
    blend = field_at(lat=lat, lon=lon, year=year)
    g = field_at(lat=lat, lon=lon, year=year, model="gufm1")
    i = field_at(lat=lat, lon=lon, year=year, model="igrf14")
    assert blend.model == "gufm1+igrf14 (0.40/0.60)"
    for comp in ("north_nT", "east_nT", "down_nT"):
        expected = 0.4 * getattr(g, comp) + 0.6 * getattr(i, comp)
        assert getattr(blend, comp) == pytest.approx(expected, rel=1e-12, abs=1e-9)
    # the rate includes the change of the weights: a central difference of D agrees
    h = 1e-3
    up = field_at(lat=lat, lon=lon, year=year + h).declination_deg
    down = field_at(lat=lat, lon=lon, year=year - h).declination_deg
    assert blend.declination_rate_deg_per_year == pytest.approx((up - down) / (2 * h), abs=1e-5)


def test_a_model_named_explicitly_is_never_blended(with_gufm1, capsys):
    assert field_at(lat=41.2, lon=-77.9, year=1905.0, model="gufm1").model == "gufm1"
    assert field_at(lat=41.2, lon=-77.9, year=1905.0, model="igrf14").model == "igrf14"
    out = _field(capsys, 41.2, -77.9, "1905-01-01", "--model", "igrf14")
    assert out["model"] == "igrf14"


def test_without_a_historical_model_auto_is_igrf_alone(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "none"))
    assert field_at(lat=41.2, lon=-77.9, year=1905.0).model == "igrf14"


def test_a_blended_record_date_is_a_note_of_the_conversion(with_gufm1):
    from lodeline.geo.document import document_from_dict
    from lodeline.geo.north import convert_document

    doc = document_from_dict(
        {
            "format_version": 1,
            "title": "check",
            "closed": False,
            "place": {"lat": 41.2, "lon": -77.9, "height_m": 0.0},
            "record": {"reference": "magnetic", "date": "1904-01-01", "distance_unit": "m"},
            "course": [{"bearing": "N 10 E", "distance": 50.0}],
        }
    )
    conv = convert_document(doc, target_date="2020-01-01")
    assert conv.record_model.startswith("gufm1+igrf14 (0.60/0.40)")
    data = conv.as_dict()
    assert any(n["code"] == "blended_models" for n in data["notes"])
    assert "gufm1+igrf14 (0.60/0.40)" in data["model"]
