"""Record-to-found similarity (2-D Helmert) fit."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pyproj import Geod

from lodeline.geo.errors import FitError, InputError
from lodeline.geo.fit import fit_similarity
from lodeline.geo.grid import grid_factors, to_grid
from lodeline.geo.traverse import march

RECORD_AZ = np.array([12.5, 97.25, 171.0, 255.75, 300.0])
RECORD_LEN = np.array([402.3, 251.5, 380.0, 310.2, 120.7])


def _transform(east, north, rot_deg, scale, te, tn):
    """found = t + s R(rot) record, R turning azimuths clockwise by rot (independent form)."""
    t = math.radians(rot_deg)
    fe = te + scale * (east * math.cos(t) + north * math.sin(t))
    fn = tn + scale * (-east * math.sin(t) + north * math.cos(t))
    return fe, fn


def test_rotation_sign_a_north_line_found_at_ten_degrees():
    # Record: due north 100 m; found: azimuth 10 deg -> rotation +10 (clockwise).
    f = fit_similarity(
        record_east_m=[0.0, 0.0],
        record_north_m=[0.0, 100.0],
        found_east_m=[500.0, 500.0 + 100.0 * math.sin(math.radians(10))],
        found_north_m=[800.0, 800.0 + 100.0 * math.cos(math.radians(10))],
    )
    assert f.rotation_deg == pytest.approx(10.0, abs=1e-12)
    assert f.scale == pytest.approx(1.0, abs=1e-12)
    assert f.exact and f.rms_m == pytest.approx(0.0, abs=1e-9)
    assert (f.translation_east_m, f.translation_north_m) == pytest.approx((500.0, 800.0))


def test_known_rotation_scale_shift_with_noise_recovered():
    # The record traverse turned 2.75 deg clockwise, 1.0123 times longer, moved, plus 2 mm noise.
    st_ = march(RECORD_AZ, RECORD_LEN)
    rng = np.random.default_rng(2024)
    fe, fn = _transform(st_.east_m, st_.north_m, 2.75, 1.0123, 412_345.6, 4_501_234.5)
    fe = fe + rng.normal(0, 0.002, fe.size)
    fn = fn + rng.normal(0, 0.002, fn.size)
    idx = list(range(st_.east_m.size))
    f = fit_similarity(
        record_east_m=st_.east_m,
        record_north_m=st_.north_m,
        found_east_m=fe,
        found_north_m=fn,
        indices=idx,
    )
    assert f.rotation_deg == pytest.approx(2.75, abs=0.005)
    assert f.scale == pytest.approx(1.0123, abs=1e-4)
    assert f.indices == tuple(idx)
    assert f.rms_m < 0.005 and not f.exact
    assert f.rms_m == pytest.approx(
        math.sqrt(np.mean(f.residual_east_m**2 + f.residual_north_m**2)), rel=1e-12
    )
    # residuals are found - fitted
    ae, an = f.apply(east_m=st_.east_m, north_m=st_.north_m)
    np.testing.assert_allclose(f.residual_east_m, fe - ae, atol=1e-9)
    np.testing.assert_allclose(f.residual_north_m, fn - an, atol=1e-9)


def test_against_an_independent_linear_least_squares():
    # The same similarity as a real linear model E' = te + a E + b N, N' = tn - b E + a N
    # (a = s cos t, b = s sin t) solved with numpy.linalg.lstsq.
    st_ = march(RECORD_AZ, RECORD_LEN)
    rng = np.random.default_rng(5)
    fe, fn = _transform(st_.east_m, st_.north_m, -7.1, 0.9987, 1000.0, -2000.0)
    fe = fe + rng.normal(0, 0.3, fe.size)
    fn = fn + rng.normal(0, 0.3, fn.size)
    m = st_.east_m.size
    A = np.zeros((2 * m, 4))
    A[:m] = np.column_stack([np.ones(m), np.zeros(m), st_.east_m, st_.north_m])
    A[m:] = np.column_stack([np.zeros(m), np.ones(m), st_.north_m, -st_.east_m])
    sol, *_ = np.linalg.lstsq(A, np.concatenate([fe, fn]), rcond=None)
    te, tn, a, b = sol
    f = fit_similarity(
        record_east_m=st_.east_m, record_north_m=st_.north_m, found_east_m=fe, found_north_m=fn
    )
    assert f.rotation_deg == pytest.approx(math.degrees(math.atan2(b, a)), abs=1e-10)
    assert f.scale == pytest.approx(math.hypot(a, b), rel=1e-12)
    assert f.translation_east_m == pytest.approx(te, abs=1e-6)
    assert f.translation_north_m == pytest.approx(tn, abs=1e-6)


def test_without_scale():
    st_ = march(RECORD_AZ, RECORD_LEN)
    fe, fn = _transform(st_.east_m, st_.north_m, -1.5, 1.0, 10.0, 20.0)
    f = fit_similarity(
        record_east_m=st_.east_m,
        record_north_m=st_.north_m,
        found_east_m=fe,
        found_north_m=fn,
        with_scale=False,
    )
    assert f.scale == 1.0 and not f.with_scale
    assert f.rotation_deg == pytest.approx(-1.5, abs=1e-10)
    assert f.rms_m < 1e-9
    # two stations without scale: a least-squares fit, not exact
    g = fit_similarity(
        record_east_m=[0.0, 0.0],
        record_north_m=[0.0, 100.0],
        found_east_m=[0.0, 0.0],
        found_north_m=[0.0, 101.0],
        with_scale=False,
    )
    assert not g.exact and g.rms_m == pytest.approx(0.5, abs=1e-12)


@settings(max_examples=100, deadline=None)
@given(
    st.floats(-179.0, 179.0),
    st.floats(0.9, 1.1),
    st.floats(-1e6, 1e6),
    st.floats(-1e7, 1e7),
    st.integers(2, 6),
)
def test_noise_free_parameters_recovered(rot, scale, te, tn, k):
    st_ = march(RECORD_AZ, RECORD_LEN)
    e, n = st_.east_m[:k], st_.north_m[:k]
    fe, fn = _transform(e, n, rot, scale, te, tn)
    f = fit_similarity(record_east_m=e, record_north_m=n, found_east_m=fe, found_north_m=fn)
    assert f.rotation_deg == pytest.approx(rot, abs=1e-9)
    assert f.scale == pytest.approx(scale, rel=1e-10)
    assert f.rms_m < 1e-6


def test_collinear_found_stations_still_fix_the_rotation():
    # A similarity has no shear: stations along one line fix the rotation (its direction).
    e = np.array([0.0, 0.0, 0.0])
    n = np.array([0.0, 50.0, 130.0])
    fe, fn = _transform(e, n, 4.0, 1.001, 7.0, 9.0)
    f = fit_similarity(record_east_m=e, record_north_m=n, found_east_m=fe, found_north_m=fn)
    assert f.rotation_deg == pytest.approx(4.0, abs=1e-10)


@pytest.mark.parametrize(
    "rec_e, rec_n, fnd_e, fnd_n, match",
    [
        ([0.0], [0.0], [1.0], [1.0], "at least two"),
        ([], [], [], [], "at least two"),
        ([5.0, 5.0, 5.0], [1.0, 1.0, 1.0], [0.0, 10.0, 3.0], [0.0, 0.0, 4.0], "record positions"),
        ([0.0, 10.0], [0.0, 0.0], [3.0, 3.0], [4.0, 4.0], "found stations coincide"),
        # found figure is the mirror image of the record: no rotation is preferred
        (
            [1.0, -1.0, 0.0, 0.0],
            [0.0, 0.0, 1.0, -1.0],
            [0.0, 0.0, 1.0, -1.0],
            [1.0, -1.0, 0.0, 0.0],
            "undetermined",
        ),
    ],
)
def test_undetermined_fits_are_fit_errors(rec_e, rec_n, fnd_e, fnd_n, match):
    with pytest.raises(FitError, match=match):
        fit_similarity(
            record_east_m=rec_e, record_north_m=rec_n, found_east_m=fnd_e, found_north_m=fnd_n
        )


def test_bad_fit_input():
    with pytest.raises(InputError):
        fit_similarity(
            record_east_m=[0.0, 1.0],
            record_north_m=[0.0],
            found_east_m=[0, 1],
            found_north_m=[0, 1],
        )
    with pytest.raises(InputError):
        fit_similarity(
            record_east_m=[0.0, float("nan")],
            record_north_m=[0.0, 1.0],
            found_east_m=[0, 1],
            found_north_m=[0, 1],
        )


def test_empirical_declination_is_rotation_plus_convergence():
    # A magnetic record: the original compass read azimuths D lower than true (D east positive,
    # true = magnetic + D). Run the true lines on the WGS84 ellipsoid (pyproj.Geod), project the
    # stations to UTM, and fit the record onto them: the rotation is D - gamma (grid az = true
    # az - gamma, DESIGN.md), so rotation + gamma recovers D; the scale is the grid scale k.
    D = -4.25  # invented declination of the original survey (4 deg 15' W)
    lat0, lon0 = 44.3, -72.4  # invented farm in UTM 18N, east of the central meridian
    crs = "EPSG:32618"
    geod = Geod(ellps="WGS84")
    lats, lons = [lat0], [lon0]
    for az_mag, length in zip(RECORD_AZ, RECORD_LEN, strict=True):
        lon2, lat2, _ = geod.fwd(lons[-1], lats[-1], az_mag + D, length)
        lats.append(lat2)
        lons.append(lon2)
    fe, fn = to_grid(crs, lat=np.array(lats), lon=np.array(lons))
    record = march(RECORD_AZ, RECORD_LEN)
    f = fit_similarity(
        record_east_m=record.east_m,
        record_north_m=record.north_m,
        found_east_m=fe,
        found_north_m=fn,
    )
    g = grid_factors(crs, lat=float(np.mean(lats)), lon=float(np.mean(lons)))
    assert g.convergence_deg > 1.0  # a real convergence is being taken out
    assert f.rotation_deg + g.convergence_deg == pytest.approx(D, abs=0.005)
    # Each call is referred to the meridian at its own station while the planar record ignores
    # the change of convergence along the lines (about 0.004 deg over this farm), which bends
    # the figure by about a centimetre: the scale then agrees with k (1 + 1.3e-4) to ~1e-5.
    assert f.scale == pytest.approx(g.scale_factor, abs=3e-5)
    assert f.rms_m < 0.02
