"""field_at: input checks, facts of the trade, uncertainty, warnings, properties."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lodeline.geo.errors import InputError
from lodeline.geo.magnetic import declination_at, field_at
from lodeline.geo.models import load_model


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"lat": 90.5}, "lat"),
        ({"lat": -91.0}, "lat"),
        ({"lon": 360.5}, "lon"),
        ({"lon": -180.5}, "lon"),
        ({"height_m": -1000.5}, "height_m"),
        ({"height_m": 100_000.5}, "height_m"),
        ({"lat": math.nan}, "lat"),
        ({"lon": [1.0, math.nan]}, "lon"),
        ({"year": math.nan}, "date"),
        ({"lat": "north"}, "lat"),
    ],
)
def test_bad_input_is_an_input_error_naming_the_field(kwargs, field):
    args = {"lat": 40.0, "lon": -80.0, "year": 2000.0, "height_m": 0.0} | kwargs
    with pytest.raises(InputError) as info:
        field_at(**args)
    assert info.value.field == field


def test_longitude_0_to_360_is_normalised():
    a = field_at(lat=40.0, lon=[-80.0, -180.0, 0.0], year=2000.0)
    b = field_at(lat=40.0, lon=[280.0, 180.0, 360.0], year=2000.0)
    assert np.allclose(a.declination_deg, b.declination_deg, atol=1e-9)


def test_limits_are_accepted():
    f = field_at(lat=[-90.0, 90.0], lon=[-180.0, 180.0], year=2000.0, height_m=[-1000.0, 1e5])
    assert np.isfinite(f.total_nT).all()


def test_shapes_broadcast_and_scalars():
    f = field_at(lat=np.array([[10.0], [20.0]]), lon=[0.0, 5.0, 10.0], year=1990.0)
    assert f.declination_deg.shape == (2, 3)
    assert len(f.warnings) == 6 and f.model == "igrf14"
    g = field_at(lat=10.0, lon=0.0, year=1990.0)
    assert g.declination_deg.shape == () and g.warnings == ()
    assert isinstance(declination_at(lat=10.0, lon=0.0, year=1990.0), float)
    assert float(g.declination_deg) == declination_at(lat=10.0, lon=0.0, year=1990.0)


def _grid(step=5.0):
    lat, lon = np.meshgrid(np.arange(-89.0, 89.1, step), np.arange(-180.0, 180.0, step))
    return lat.ravel(), lon.ravel()


@pytest.mark.parametrize("year", [2010.0, 2025.0, 2029.0])
def test_total_intensity_range_at_the_surface(year):
    # Common practice (textbooks; the WMM2025 report's maps, from memory): at the Earth's
    # surface today F lies between about 22,000 nT (South Atlantic) and 67,000 nT (near the
    # south magnetic pole). (A century ago the field was some 5 % stronger.)
    lat, lon = _grid()
    f = field_at(lat=lat, lon=lon, year=year)
    assert 21_000.0 < f.total_nT.min() < 24_000.0
    assert 65_000.0 < f.total_nT.max() < 68_000.0
    # and F = sqrt(H^2 + Z^2), H = sqrt(X^2 + Y^2) by definition
    assert np.allclose(f.horizontal_nT, np.hypot(f.north_nT, f.east_nT))
    assert np.allclose(f.total_nT, np.hypot(f.horizontal_nT, f.down_nT))


def test_inclination_sign_and_dip_poles():
    # Common practice: the field points down (I > 0) in the northern magnetic hemisphere and
    # up (I < 0) in the southern; at the dip poles I is near +-90 degrees.
    lat, lon = _grid()
    f = field_at(lat=lat, lon=lon, year=2025.0)
    assert (f.inclination_deg[lat >= 50.0] > 0).all()
    assert (f.inclination_deg[lat <= -50.0] < 0).all()
    north = field_at(
        lat=np.arange(80.0, 90.0, 0.25)[:, None], lon=np.arange(-180, 180, 1.0), year=2025.0
    )
    south = field_at(
        lat=np.arange(-70.0, -60.0, 0.25)[:, None], lon=np.arange(100, 160, 1.0), year=2025.0
    )
    assert north.inclination_deg.max() > 89.5
    assert south.inclination_deg.min() < -89.5


def test_compass_aligns_with_the_horizontal_component():
    # Common practice: a compass needle aligns with H; D is the angle from true north to H,
    # east positive, so true azimuth of the needle = D.
    f = field_at(lat=[45.0, -30.0], lon=[-120.0, 20.0], year=2010.0)
    az = np.degrees(np.arctan2(f.east_nT, f.north_nT))
    assert np.allclose(az, f.declination_deg)
    assert f.declination_deg[0] > 0  # east declination in the US north-west (common practice)


def test_declination_uncertainty_only_where_published():
    f = field_at(lat=40.0, lon=-80.0, year=2026.0, model="igrf14")
    assert np.isnan(f.declination_sigma_deg)
    g = field_at(lat=[40.0, 80.0], lon=[-80.0, -80.0], year=2026.0, model="wmm2025")
    # WMM2025 error model: sigma_D = sqrt(0.26^2 + (5417/H)^2) degrees (WMM2025 report)
    expected = np.sqrt(0.26**2 + (5417.0 / g.horizontal_nT) ** 2)
    assert np.allclose(g.declination_sigma_deg, expected)
    assert g.declination_sigma_deg[1] > g.declination_sigma_deg[0]  # grows as H shrinks
    h = field_at(lat=40.0, lon=-80.0, year=2026.0, model="wmmhr2025")
    assert float(h.declination_sigma_deg) == pytest.approx(
        math.sqrt(0.25**2 + (5205.0 / float(h.horizontal_nT)) ** 2)
    )


def test_warnings_follow_the_wmm_thresholds():
    # WMM thresholds: H < 6000 nT caution zone, H < 2000 nT compass unreliable.
    lat, lon = np.meshgrid(np.arange(60.0, 90.0, 0.5), np.arange(-180.0, 180.0, 5.0))
    f = field_at(lat=lat.ravel(), lon=lon.ravel(), year=2025.0)
    h = f.horizontal_nT
    kinds = [("unreliable" in " ".join(w), "caution" in " ".join(w)) for w in f.warnings]
    unreliable = np.array([k[0] for k in kinds])
    caution = np.array([k[1] for k in kinds])
    assert unreliable.any() and caution.any()
    assert (unreliable == (h < 2000.0)).all()
    assert (caution == ((h >= 2000.0) & (h < 6000.0))).all()


@settings(max_examples=150, deadline=None)
@given(
    lat=st.floats(-90.0, 90.0),
    lon=st.floats(-180.0, 360.0),
    height=st.floats(-1000.0, 100_000.0),
    year=st.floats(1900.0, 2029.99),
)
def test_field_is_finite_and_in_range(lat, lon, height, year):
    f = field_at(lat=lat, lon=lon, year=year, height_m=height)
    assert -180.0 <= float(f.declination_deg) <= 180.0
    assert -90.0 <= float(f.inclination_deg) <= 90.0
    # F at -1..100 km: a little above/below the surface range (common practice bounds)
    assert 15_000.0 < float(f.total_nT) < 70_000.0
    if float(f.horizontal_nT) > 2000.0:  # outside the dip-pole caps
        for name in (
            "declination_rate_deg_per_year",
            "inclination_rate_deg_per_year",
            "total_rate_nT_per_year",
        ):
            assert math.isfinite(float(getattr(f, name)))
        assert abs(float(f.declination_rate_deg_per_year)) < 2.0


@pytest.mark.parametrize("model", ["igrf14", "wmmhr2025"])
def test_points_computed_before_give_the_same_field(model):
    # field_at keeps the components of points it has computed (an editor evaluates the same
    # stations on every keystroke); a batch mixing such points with new ones, in another
    # order, must give what the synthesis gives for every point afresh.
    from lodeline.geo.synthesis import synthesize

    rng = np.random.default_rng(7)
    lat = rng.uniform(-80, 80, 40)
    lon = rng.uniform(-180, 180, 40)
    year = rng.uniform(2025.0, 2029.9, 40)
    field_at(lat=lat[:25], lon=lon[:25], year=year[:25], model=model)  # 25 of them known
    order = rng.permutation(40)
    got = field_at(lat=lat[order], lon=lon[order], year=year[order], model=model)
    ref = synthesize(
        load_model(model), lat_deg=lat[order], lon_deg=lon[order], height_m=0.0, year=year[order]
    )
    for name, want in (
        ("north_nT", ref.north),
        ("east_nT", ref.east),
        ("down_nT", ref.down),
        ("down_rate_nT_per_year", ref.down_rate),
    ):
        np.testing.assert_allclose(getattr(got, name), want, rtol=0, atol=1e-9, err_msg=name)
    assert len(load_model(model)._cache.get("points", {})) >= 40  # the points were kept


def test_a_model_file_that_changes_is_evaluated_afresh(tmp_path, monkeypatch):
    # The components kept for computed points belong to the loaded model: when an installed
    # model file changes (another size or time), the field comes from the new file.
    from lodeline.geo.models import install_model, shipped_models, shipped_path

    monkeypatch.setenv("LODELINE_DATA", str(tmp_path / "data"))
    igrf = next(m for m in shipped_models() if m.name == "igrf14")
    src = tmp_path / "mine.shc"
    src.write_bytes(shipped_path(igrf).read_bytes())
    info = install_model(src, name="mine")
    before = float(field_at(lat=40.0, lon=-80.0, year=1990.0, model="mine").declination_deg)
    want = float(field_at(lat=40.0, lon=-80.0, year=1990.0, model="igrf14").declination_deg)
    assert before == want
    lines = info.path.read_text().splitlines(keepends=True)
    # halve g(1,1) at every epoch: in an SHC file the row "1 1" holds g(1,1) (h has m < 0)
    rows = [i for i, line in enumerate(lines) if line.split()[:2] == ["1", "1"]]
    first = lines[rows[0]].split()
    lines[rows[0]] = " ".join(first[:2] + [repr(float(v) / 2) for v in first[2:]]) + "\n"
    info.path.write_text("".join(lines))
    after = float(field_at(lat=40.0, lon=-80.0, year=1990.0, model="mine").declination_deg)
    fresh = synthesize_declination(load_model("mine"), 40.0, -80.0, 1990.0)
    assert after != before and after == pytest.approx(fresh, abs=1e-12)


def synthesize_declination(model, lat: float, lon: float, year: float) -> float:
    from lodeline.geo.synthesis import synthesize

    res = synthesize(model, lat_deg=lat, lon_deg=lon, height_m=0.0, year=year)
    return math.degrees(math.atan2(float(res.east), float(res.north)))
