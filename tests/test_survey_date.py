"""Declination history at a place and the survey-date estimate of an undated magnetic record."""

from __future__ import annotations

import datetime as dt
import math
import subprocess
import sys
from unittest import mock

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shared_data import GUFM1

from lodeline.geo.document import document_from_dict
from lodeline.geo.errors import InputError
from lodeline.geo.field_history import declination_history, history_years
from lodeline.geo.fit import fit_similarity
from lodeline.geo.north import convert_document
from lodeline.geo.survey import fit_document
from lodeline.geo.survey_date import estimate_survey_date

LAT, LON = 52.0, 10.0  # central Europe: D rose through +2.5 deg about 2015 at ~10' a year


@pytest.fixture(autouse=True)
def _no_user_models(tmp_path, monkeypatch):
    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))


def _ppigrf_d(lat: float, lon: float, year: float) -> float:
    """D (deg) from ppigrf's IGRF at a decimal year (reference library, test only)."""
    ppigrf = pytest.importorskip("ppigrf")
    whole = int(year)
    start = dt.datetime(whole, 1, 1)
    days = (dt.datetime(whole + 1, 1, 1) - start).days
    when = start + dt.timedelta(days=(year - whole) * days)
    be, bn, _ = ppigrf.igrf(lon, lat, 0.0, when)
    return math.degrees(math.atan2(float(np.ravel(be)[0]), float(np.ravel(bn)[0])))


@pytest.mark.reference
def test_history_against_ppigrf_in_one_synthesis_call():
    years = history_years(1900, 2029, 1)
    assert years.size == 130
    from lodeline.geo import magnetic

    with mock.patch.object(magnetic, "field_at", wraps=magnetic.field_at) as spy:
        hist = declination_history(lat=LAT, lon=LON, years=years)
    assert spy.call_count == 1
    for k in (0, 37, 90, 129):
        assert hist.declination_deg[k] == pytest.approx(_ppigrf_d(LAT, LON, years[k]), abs=2e-3)
    assert set(hist.model) == {"igrf14"}


def test_history_marks_uncovered_dates_and_refuses_bad_spans():
    hist = declination_history(lat=LAT, lon=LON, years=history_years(1750, 2030, 1))
    assert hist.years.size == 281
    assert not hist.covered[:150].any() and hist.covered[150:-1].all()
    assert np.isnan(hist.declination_deg[0]) and hist.rows()[0]["declination_deg"] is None
    assert not hist.covered[-1]  # 2030.0 is the end of IGRF-14, itself excluded
    with pytest.raises(InputError, match="--step"):
        history_years(1750, 2030, 0)
    with pytest.raises(InputError, match="comes before"):
        history_years(2030, 1750, 1)


@pytest.mark.slow
@pytest.mark.skipif(not GUFM1.exists(), reason=f"{GUFM1} (gufm1 authors' file) is not present")
def test_history_before_1900_comes_from_gufm1_once_installed():
    from lodeline.geo.models import install_model

    install_model(GUFM1, name="gufm1")
    hist = declination_history(lat=LAT, lon=LON, years=history_years(1750, 2029, 1))
    assert hist.covered.all()
    assert hist.model[0] == "gufm1" and hist.model[-1] == "igrf14"


def _undated_record_rotated_by(d_deg: float, *, noise_m: float = 0.0):
    """A magnetic record whose found corners say its needle read D. Its date (which the
    schema requires) is set to 1990, far from the date the needle tells: the estimate uses
    only the needle and the found corners."""
    calls = [("N 20 E", 220.0), ("S 75 E", 180.0), ("S 10 W", 210.0), ("N 80 W", 160.0)]
    place = {"lat": LAT, "lon": LON, "height_m": 0.0}
    true_doc = document_from_dict(
        {
            "format_version": 1,
            "closed": False,
            "place": place,
            "record": {"reference": "true", "distance_unit": "m"},
            "course": [{"call": f"{b} {d} m"} for b, d in calls],
        }
    )
    stations = convert_document(true_doc).stations
    rng = np.random.default_rng(3)
    courses = []
    for (b, d), s in zip(calls, stations[1:], strict=True):
        az = ({"N 20 E": 20.0, "S 75 E": 105.0, "S 10 W": 190.0, "N 80 W": 280.0}[b] - d_deg) % 360
        courses.append(
            {
                "bearing": f"{az:.6f}",
                "distance": d,
                "unit": "m",
                "found": {
                    "easting": s.easting + rng.normal(0, noise_m),
                    "northing": s.northing + rng.normal(0, noise_m),
                },
            }
        )
    doc = document_from_dict(
        {
            "format_version": 1,
            "closed": False,
            "place": place,
            "record": {
                "reference": "magnetic",
                "date": "1990-06-01",
                "declination": "auto",
                "distance_unit": "m",
            },
            "course": courses,
        }
    )
    return convert_document(doc, allow_unknown_declination=True)


@pytest.mark.reference
def test_survey_date_of_a_figure_turned_by_the_field_of_a_known_date():
    # The date when IGRF's D at the place was +2.5 deg, found by bisection on ppigrf (the
    # reference library), and its secular variation there (over 5' a year).
    lo, hi = 2012.0, 2018.0
    for _ in range(30):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if _ppigrf_d(LAT, LON, mid) < 2.5 else (lo, mid)
    true_year = 0.5 * (lo + hi)
    rate = (_ppigrf_d(LAT, LON, true_year + 0.5) - _ppigrf_d(LAT, LON, true_year - 0.5)) * 60
    assert rate > 5.0
    conv = _undated_record_rotated_by(2.5, noise_m=0.02)
    fit = fit_document(conv)
    assert fit.empirical_declination_deg == pytest.approx(2.5, abs=0.01)
    est = estimate_survey_date(conv, fit)
    igrf = [r for r in est.ranges if r.model == "igrf14"]
    assert len(igrf) == 1
    (r,) = igrf
    assert r.start <= true_year <= r.end
    assert r.end - r.start <= 4.0  # "a few years": 2 x 0.15 deg at 10' a year is 1.8 years
    assert f"{math.floor(r.start)}" in est.sentence and "(igrf14)" in est.sentence
    assert est.as_dict()["ranges"][0]["model"] == "igrf14"


def test_a_declination_no_model_reaches_gives_no_range():
    conv = _undated_record_rotated_by(40.0)
    est = estimate_survey_date(conv, fit_document(conv))
    assert est.ranges == ()
    assert "no date the installed models cover" in est.sentence


def test_a_true_record_has_no_survey_date():
    doc = document_from_dict(
        {
            "format_version": 1,
            "place": {"lat": LAT, "lon": LON},
            "record": {"reference": "true", "distance_unit": "m"},
            "course": [
                {"call": "N 10 E 100 m", "found": {"lat": 52.0009, "lon": 10.0002}},
                {"call": "N 80 E 100 m", "found": {"lat": 52.0011, "lon": 10.0017}},
            ],
        }
    )
    conv = convert_document(doc)
    with pytest.raises(InputError, match="no needle"):
        estimate_survey_date(conv, fit_document(conv))


@settings(max_examples=30, deadline=None)
@given(st.floats(0.1, 5.0), st.integers(0, 2**31))
def test_rotation_sigma_matches_the_scatter_of_repeated_fits(noise, seed):
    # The fit's standard error of the rotation against the spread of the rotation over
    # repeated noisy fits of the same figure (a simulation, independent of the formula).
    rng = np.random.default_rng(seed)
    e = np.array([0.0, 75.0, 260.0, 300.0, 120.0])
    n = np.array([0.0, 210.0, 160.0, -40.0, -90.0])
    rots, sigmas = [], []
    for _ in range(200):
        f = fit_similarity(
            record_east_m=e,
            record_north_m=n,
            found_east_m=e + rng.normal(0, noise, e.size),
            found_north_m=n + rng.normal(0, noise, n.size),
        )
        rots.append(f.rotation_deg)
        sigmas.append(f.rotation_sigma_deg)
    spread = float(np.std(rots))
    assert float(np.sqrt(np.mean(np.square(sigmas)))) == pytest.approx(spread, rel=0.25)


def test_cli_history_csv_and_errors(tmp_path):
    out = tmp_path / "d.csv"
    run = [sys.executable, "-m", "lodeline", "field", "--lat", "52", "--lon", "10"]
    ok = subprocess.run(
        [*run, "--from", "2000", "--to", "2010", "--csv", str(out)], text=True, capture_output=True
    )
    assert ok.returncode == 0, ok.stderr
    rows = out.read_text().splitlines()
    assert rows[0].startswith("year,model,declination_deg") and len(rows) == 12
    again = subprocess.run(
        [*run, "--from", "2000", "--to", "2010", "--csv", str(out)], text=True, capture_output=True
    )
    assert again.returncode == 2 and "Traceback" not in again.stderr
    bad = subprocess.run([*run, "--from", "2000", "--to", "1990"], text=True, capture_output=True)
    assert bad.returncode == 2 and "comes before" in bad.stderr
    assert len(bad.stderr.strip().splitlines()) == 1
