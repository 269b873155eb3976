"""The field engine against published test values and independent reference libraries.

Sources:
- WMM2025_TEST_VALUES.txt / WMMHR2025_TEST_VALUES.txt: the official test values published by
  NOAA NCEI and BGS with the models (../shared/data, see its README).
- ppigrf 2.1 (IGRF-14, its own SHC reader and synthesis), pygeomag 1.1 (port of the NOAA WMM
  legacy C code, WMM2025 and WMMHR2025), chaosmagpy 0.16 (gufm1 from the authors' file).
"""

from __future__ import annotations

import datetime as dt
import os

import numpy as np
import pytest
from shared_data import DATA  # noqa: E402

from lodeline.geo.magnetic import field_at, forget_computed_points
from lodeline.geo.models import load_model
from lodeline.geo.synthesis import SphericalHarmonicModel, geodetic_to_geocentric, synthesize

GUFM1 = DATA / "gufm1.txt"


def _test_values(name: str) -> np.ndarray:
    path = DATA / name
    if not path.exists():
        pytest.skip(f"{path} (published WMM test values) is not present")
    return np.loadtxt(path, comments="#")


@pytest.mark.parametrize(
    ("file", "model"),
    [("WMM2025_TEST_VALUES.txt", "wmm2025"), ("WMMHR2025_TEST_VALUES.txt", "wmmhr2025")],
)
def test_official_wmm_test_values_every_row(file, model):
    # Every row of the published test values (NOAA NCEI / BGS, December 2024):
    # D, I printed to 0.01 deg; H X Y Z F and rates to 1e-6 nT -> agree to 0.05 nT.
    a = _test_values(file)
    assert a.shape == (100, 18)
    f = field_at(lat=a[:, 2], lon=a[:, 3], year=a[:, 0], height_m=a[:, 1] * 1000.0, model=model)
    assert f.model == model
    checks = {
        "declination_deg": (4, 0.005 + 1e-9),
        "inclination_deg": (5, 0.005 + 1e-9),
        "horizontal_nT": (6, 0.05),
        "north_nT": (7, 0.05),
        "east_nT": (8, 0.05),
        "down_nT": (9, 0.05),
        "total_nT": (10, 0.05),
        "declination_rate_deg_per_year": (11, 0.5e-6 + 1e-7),
        "inclination_rate_deg_per_year": (12, 0.5e-6 + 1e-7),
        "horizontal_rate_nT_per_year": (13, 0.05),
        "north_rate_nT_per_year": (14, 0.05),
        "east_rate_nT_per_year": (15, 0.05),
        "down_rate_nT_per_year": (16, 0.05),
        "total_rate_nT_per_year": (17, 0.05),
    }
    for attr, (col, tol) in checks.items():
        err = np.abs(getattr(f, attr) - a[:, col])
        worst = int(np.argmax(err))
        assert err[worst] <= tol, f"{attr}: row {worst + 1} off by {err[worst]:.3g}"


def _ppigrf_time(day: dt.date, epochs: np.ndarray) -> float:
    """The decimal year at which ppigrf effectively evaluates IGRF for a calendar date.

    ppigrf interpolates the SHC epochs linearly in elapsed days (pandas 'time' interpolation),
    lodeline in decimal years; the two differ by up to a day within a 5-year span. Mapping the
    date onto ppigrf's convention keeps the comparison about the synthesis alone.
    """
    j = int(np.searchsorted(epochs, day.year, side="right") - 1)
    j = min(j, len(epochs) - 2)
    e0 = dt.date(int(epochs[j]), 1, 1)
    e1 = dt.date(int(epochs[j + 1]), 1, 1)
    return epochs[j] + (epochs[j + 1] - epochs[j]) * (day - e0).days / (e1 - e0).days


@pytest.mark.reference
def test_igrf14_against_ppigrf_random_points():
    ppigrf = pytest.importorskip("ppigrf")
    rng = np.random.default_rng(20241201)
    n = 320
    lat = rng.uniform(-89.5, 89.5, n)
    lon = rng.uniform(-180.0, 180.0, n)
    h_km = rng.uniform(-0.5, 8.0, n)
    start = dt.date(1900, 1, 1).toordinal()
    end = dt.date(2029, 12, 31).toordinal()
    days = [dt.date.fromordinal(int(o)) for o in rng.integers(start, end + 1, n)]
    model = load_model("igrf14")
    epochs = np.array(model.meta["epochs"])
    years = np.array([_ppigrf_time(d, epochs) for d in days])
    be, bn, bu = ppigrf.igrf(lon, lat, h_km, [dt.datetime(d.year, d.month, d.day) for d in days])
    idx = np.arange(n)
    x, y, z = bn[idx, idx], be[idx, idx], -bu[idx, idx]
    whole = field_at(lat=lat, lon=lon, year=years, height_m=h_km * 1000.0, model="igrf14")
    # batches of a few points (a deed's march) are summed in one product: same references
    forget_computed_points()  # else the batches are read back from the first evaluation
    parts = [
        field_at(lat=lat[k], lon=lon[k], year=years[k], height_m=h_km[k] * 1000.0, model="igrf14")
        for k in np.array_split(idx, 40)
    ]
    for f in (whole, _joined(parts)):
        _agrees_with(f, x, y, z)


def _joined(parts):
    """The declination, inclination, total and components of several evaluations, joined."""
    from types import SimpleNamespace

    keys = ("declination_deg", "inclination_deg", "total_nT", "north_nT", "east_nT", "down_nT")
    return SimpleNamespace(**{k: np.concatenate([getattr(p, k) for p in parts]) for k in keys})


def _agrees_with(f, x, y, z):
    hz = np.hypot(x, y)
    d_ref = np.degrees(np.arctan2(y, x))
    i_ref = np.degrees(np.arctan2(z, hz))
    f_ref = np.hypot(hz, z)
    dd = np.abs((f.declination_deg - d_ref + 180.0) % 360.0 - 180.0)
    assert dd.max() <= 0.001
    assert np.abs(f.inclination_deg - i_ref).max() <= 0.001
    assert np.abs(f.total_nT - f_ref).max() <= 0.5
    assert np.abs(f.north_nT - x).max() <= 0.5
    assert np.abs(f.east_nT - y).max() <= 0.5
    assert np.abs(f.down_nT - z).max() <= 0.5


@pytest.mark.reference
def test_igrf14_rates_against_ppigrf_secular_variation():
    # IGRF is linear in time between its 5-year epochs, so ppigrf's difference over one
    # year inside a span is the exact secular variation there.
    ppigrf = pytest.importorskip("ppigrf")
    rng = np.random.default_rng(7)
    n = 60
    lat = rng.uniform(-85.0, 85.0, n)
    lon = rng.uniform(-180.0, 180.0, n)
    t0, t1 = dt.datetime(1962, 1, 1), dt.datetime(1963, 1, 1)
    be, bn, bu = ppigrf.igrf(lon, lat, 0.0, [t0, t1])
    span = 365.0 / (dt.date(1965, 1, 1) - dt.date(1960, 1, 1)).days * 5.0  # years in ppigrf time
    f = field_at(lat=lat, lon=lon, year=1962.5, model="igrf14")
    assert np.abs(f.north_rate_nT_per_year - (bn[1] - bn[0]) / span).max() < 1e-3
    assert np.abs(f.east_rate_nT_per_year - (be[1] - be[0]) / span).max() < 1e-3
    assert np.abs(f.down_rate_nT_per_year + (bu[1] - bu[0]) / span).max() < 1e-3


def _pygeomag(file: str, high_resolution: bool):
    pygeomag = pytest.importorskip("pygeomag")
    path = os.path.join(os.path.dirname(pygeomag.__file__), "wmm", file)
    return pygeomag.GeoMag(coefficients_file=path, high_resolution=high_resolution)


@pytest.mark.reference
@pytest.mark.slow
@pytest.mark.parametrize(
    ("file", "model", "hr"),
    [("WMM_2025.COF", "wmm2025", False), ("WMMHR_2025.COF", "wmmhr2025", True)],
)
def test_wmm_models_against_pygeomag(file, model, hr):
    geomag = _pygeomag(file, hr)
    rng = np.random.default_rng(2025)
    n = 200
    lat = rng.uniform(-89.0, 89.0, n)
    lon = rng.uniform(-180.0, 180.0, n)
    h_km = rng.uniform(0.0, 10.0, n)
    years = rng.uniform(2025.0, 2029.999, n)
    f = field_at(lat=lat, lon=lon, year=years, height_m=h_km * 1000.0, model=model)
    ref = [
        geomag.calculate(glat=la, glon=lo, alt=h, time=t)
        for la, lo, h, t in zip(lat, lon, h_km, years, strict=True)
    ]
    d_ref = np.array([r.d for r in ref])
    i_ref = np.array([r.i for r in ref])
    f_ref = np.array([r.f for r in ref])
    dd = np.abs((f.declination_deg - d_ref + 180.0) % 360.0 - 180.0)
    assert dd.max() <= 0.001
    assert np.abs(f.inclination_deg - i_ref).max() <= 0.001
    assert np.abs(f.total_nT - f_ref).max() <= 0.5
    # the published error model (pygeomag implements the same WMM2025/WMMHR2025 formulas)
    sig_ref = np.array([r.calculate_uncertainty().d for r in ref])
    assert np.allclose(f.declination_sigma_deg, sig_ref, rtol=1e-6)


@pytest.mark.reference
def test_gufm1_against_chaosmagpy():
    if not GUFM1.exists():
        pytest.skip(f"{GUFM1} (gufm1 authors' file, not redistributed) is not present")
    cp = pytest.importorskip("chaosmagpy")
    from chaosmagpy import coordinate_utils as cu
    from chaosmagpy import data_utils as du

    from lodeline.geo.model_files import read_gufm

    model = read_gufm(GUFM1, name="gufm1")
    ref = cp.load_gufm1_txtfile(str(GUFM1))
    rng = np.random.default_rng(1590)
    n = 120
    lat = rng.uniform(-88.0, 88.0, n)
    lon = rng.uniform(-180.0, 180.0, n)
    h_km = rng.uniform(0.0, 3.0, n)
    years = rng.uniform(1590.0, 1989.99, n)
    ours = synthesize(model, lat_deg=lat, lon_deg=lon, height_m=h_km * 1000.0, year=years)
    radius, theta = cu.gg_to_geo(h_km, 90.0 - lat)
    # chaosmagpy reads the gufm1 knots with 365.25 days a year; the same mapping for the dates
    mjd = du.dyear_to_mjd(years, leap_year=False)
    br, bt, bp = ref.synth_values(mjd, radius, theta, lon)
    _, _, x, z = cu.geo_to_gg(radius, theta, br, bt)
    hz = np.hypot(x, bp)
    d_ours = np.degrees(np.arctan2(ours.east, ours.north))
    i_ours = np.degrees(np.arctan2(ours.down, np.hypot(ours.north, ours.east)))
    assert np.abs(d_ours - np.degrees(np.arctan2(bp, x))).max() <= 0.001
    assert np.abs(i_ours - np.degrees(np.arctan2(z, hz))).max() <= 0.001
    f_ours = np.sqrt(ours.north**2 + ours.east**2 + ours.down**2)
    assert np.abs(f_ours - np.hypot(hz, z)).max() <= 0.5
    # rates: chaosmagpy's time derivative of the B-splines (nT/yr)
    dbr, dbt, dbp = ref.synth_values(mjd, radius, theta, lon, deriv=1)
    _, _, dx, dz = cu.geo_to_gg(radius, theta, dbr, dbt)
    assert np.abs(ours.north_rate - dx).max() < 0.01
    assert np.abs(ours.east_rate - dbp).max() < 0.01
    assert np.abs(ours.down_rate - dz).max() < 0.01


def test_geocentric_conversion_known_values():
    # WGS84 (NIMA TR8350.2): a = 6378.137 km, b = 6356.7523142 km; at the equator r = a,
    # at the poles r = b; geocentric = geodetic latitude there (psi = 0).
    r, cos_t, sin_t, cos_psi, sin_psi = geodetic_to_geocentric(np.array([0.0, 90.0, -90.0]), 0.0)
    assert np.allclose(r, [6378.137, 6356.7523142, 6356.7523142], atol=1e-6)
    assert np.allclose(sin_psi, 0.0, atol=1e-12)
    # at 45 deg geodetic the geocentric latitude is 44.8076 deg (WGS84; common practice value)
    r, cos_t, sin_t, cos_psi, sin_psi = geodetic_to_geocentric(45.0, 0.0)
    assert np.degrees(np.arctan2(cos_t, sin_t)) == pytest.approx(44.8076, abs=1e-4)


def test_single_date_and_mixed_dates_agree():
    # each point its own date == the same points evaluated date by date
    model = load_model("igrf14")
    rng = np.random.default_rng(3)
    lat = rng.uniform(-80, 80, 50)
    lon = rng.uniform(-180, 180, 50)
    years = rng.choice([1903.2, 1957.0, 2001.9, 2024.99], 50)
    mixed = synthesize(model, lat_deg=lat, lon_deg=lon, height_m=0.0, year=years)
    for y in np.unique(years):
        sel = years == y
        one = synthesize(model, lat_deg=lat[sel], lon_deg=lon[sel], height_m=0.0, year=y)
        assert np.allclose(one.north, mixed.north[sel], rtol=0, atol=1e-8)
        assert np.allclose(one.down_rate, mixed.down_rate[sel], rtol=0, atol=1e-8)


def test_small_chunks_give_the_same_field():
    model = load_model("wmm2025")
    rng = np.random.default_rng(4)
    lat = rng.uniform(-90, 90, 300)
    lon = rng.uniform(-180, 180, 300)
    a = synthesize(model, lat_deg=lat, lon_deg=lon, height_m=100.0, year=2026.0)
    b = synthesize(model, lat_deg=lat, lon_deg=lon, height_m=100.0, year=2026.0, chunk_size=7)
    assert np.allclose(a.east, b.east, rtol=0, atol=1e-8)


def test_geographic_pole_is_finite_and_continuous():
    # at the pole the east direction is that of the given meridian: the limit of nearby points
    model = load_model("igrf14")
    at = synthesize(model, lat_deg=90.0, lon_deg=30.0, height_m=0.0, year=2000.0)
    near = synthesize(model, lat_deg=90.0 - 1e-7, lon_deg=30.0, height_m=0.0, year=2000.0)
    for name in ("north", "east", "down"):
        assert np.isfinite(getattr(at, name))
        assert getattr(at, name) == pytest.approx(float(getattr(near, name)), abs=1e-2)


def test_dipole_only_model_matches_closed_form():
    # A pure axial dipole g10 on a sphere-equivalent check: at the geocentric equator
    # (geodetic 0 deg) X = -g10 (a/r)^3, Z = 0 (textbook dipole field; common practice).
    coeffs = np.zeros((1, 2, 3))
    coeffs[0, 0, 0] = -30000.0
    coeffs[0, 1, 0] = 10.0
    m = SphericalHarmonicModel("dip", "dipole", 1, np.array([2000.0, 2010.0]), coeffs)
    f = synthesize(m, lat_deg=0.0, lon_deg=12.0, height_m=0.0, year=2005.0)
    ratio = (6371.2 / 6378.137) ** 3
    assert float(f.north) == pytest.approx(29950.0 * ratio, rel=1e-12)
    assert float(f.down) == pytest.approx(0.0, abs=1e-9)
    assert float(f.north_rate) == pytest.approx(-10.0 * ratio, rel=1e-12)


@pytest.mark.parametrize("model_name", ["igrf14", "wmm2025"])
def test_one_product_for_a_few_points_is_the_order_by_order_sum(model_name, monkeypatch):
    # A chunk of a few points sums every order in one matrix product; the terms are those of
    # the order-by-order loop, added in another order, so the two agree to rounding (a few
    # units in the last place of fields of tens of thousands of nT), at every kind of point:
    # poles, both sides of the antimeridian, heights, dates in several segments.
    import lodeline.geo.synthesis as gs
    from lodeline.geo.models import load_model

    model = load_model(model_name)
    rng = np.random.default_rng(17)
    n = gs._ONE_PRODUCT_POINTS
    lat = np.concatenate([[90.0, -90.0, 0.0], rng.uniform(-90, 90, n - 3)])
    lon = np.concatenate([[0.0, 180.0, -180.0], rng.uniform(-180, 360, n - 3)])
    h = rng.uniform(-1000, 100_000, n)
    year = rng.uniform(model.start, model.end - 1e-6, n)
    assert model_name == "wmm2025" or np.unique(model.segment_of(year)).size > 5
    for size in (1, 2, 5, n):
        parts = [slice(k, min(k + size, n)) for k in range(0, n, size)]
        one = [gs.synthesize(model, lat_deg=lat[p], lon_deg=lon[p], height_m=h[p],
                             year=year[p]) for p in parts]  # fmt: skip
        monkeypatch.setattr(gs, "_ONE_PRODUCT_POINTS", 0)
        loop = gs.synthesize(model, lat_deg=lat, lon_deg=lon, height_m=h, year=year)
        monkeypatch.undo()
        for name in ("north", "east", "down", "north_rate", "east_rate", "down_rate"):
            got = np.concatenate([getattr(o, name) for o in one])
            want = getattr(loop, name)
            # bounds on the main field's size: under 70,000 nT at the surface and a few
            # hundred nT/yr of secular variation (common practice; from memory). Heights up
            # to 100 km only make the field smaller.
            scale = 70_000.0 if "rate" not in name else 300.0
            assert np.max(np.abs(got - want)) <= 1e-14 * scale, (size, name)


@pytest.mark.parametrize("model_name", ["igrf14", "wmmhr2025"])
def test_table_of_every_order_gives_the_same_bits_as_one_order_at_a_time(model_name, monkeypatch):
    # Small chunks build the Legendre tables of every order in one pass of the recursion;
    # larger ones build one order at a time. Both take the same operations in the same order,
    # so the field must be identical to the last bit, for points at several dates.
    import lodeline.geo.synthesis as gs
    from lodeline.geo.models import load_model

    model = load_model(model_name)
    monkeypatch.setattr(gs, "_ONE_PRODUCT_POINTS", 0)  # that path sums in another order
    rng = np.random.default_rng(3)
    lat = rng.uniform(-89.9, 89.9, 50)
    lon = rng.uniform(-180, 180, 50)
    h = rng.uniform(-500, 30_000, 50)
    lo, hi = (2020.0, 2029.9) if model_name == "igrf14" else (2025.0, 2029.9)
    year = rng.uniform(lo, hi, 50)
    one_pass = gs.synthesize(model, lat_deg=lat, lon_deg=lon, height_m=h, year=year)
    monkeypatch.setattr(gs, "_TABLE_POINTS", 0)
    by_order = gs.synthesize(model, lat_deg=lat, lon_deg=lon, height_m=h, year=year)
    for name in ("north", "east", "down", "north_rate", "east_rate", "down_rate"):
        assert np.array_equal(getattr(one_pass, name), getattr(by_order, name)), name


def test_a_place_at_several_dates_is_the_field_at_each_date():
    # A batch holding each place at several dates (two of one WMM segment; two of one IGRF
    # segment and one of the next, so places are shared and sorted by segment) shares the
    # time polynomials of a place within a segment; the result must be what each date gives
    # on its own.
    from lodeline.geo.models import load_model

    rng = np.random.default_rng(11)
    lat = rng.uniform(-85, 85, 30)
    lon = rng.uniform(-180, 180, 30)
    for name, dates in (("wmm2025", (2025.2, 2029.7)), ("igrf14", (1903.5, 1904.5, 1907.0))):
        model = load_model(name)
        k = len(dates)
        both = synthesize(
            model,
            lat_deg=np.tile(lat, k),
            lon_deg=np.tile(lon, k),
            height_m=0.0,
            year=np.repeat(dates, 30),
        )
        for i, year in enumerate(dates):
            alone = synthesize(model, lat_deg=lat, lon_deg=lon, height_m=0.0, year=year)
            part = slice(30 * i, 30 * (i + 1))
            for comp in ("north", "east", "down", "north_rate", "east_rate", "down_rate"):
                np.testing.assert_allclose(
                    getattr(both, comp)[part], getattr(alone, comp), rtol=0, atol=1e-9
                )
