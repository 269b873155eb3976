"""Grid convergence, scale and elevation factors checked against published formulas and against
finite differences of the projection (pyproj used independently of ``Proj.get_factors``)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from pyproj import CRS, Transformer
from pyproj.aoi import AreaOfInterest
from pyproj.database import query_utm_crs_info

from lodeline.geo.errors import GridError, InputError
from lodeline.geo.grid import (
    GridFactors,
    grid_factors,
    grid_unit_m,
    to_geographic,
    to_grid,
    utm_crs_for,
)

ARCSEC = 1.0 / 3600.0
TOL_GAMMA = 0.1 * ARCSEC  # the 0.1" asked of the convergence

# GRS80 (Moritz 1980, "Geodetic Reference System 1980", Bulletin Geodesique 54): a, 1/f.
GRS80_A = 6378137.0
GRS80_INV_F = 298.257222101
# WGS84 (NIMA TR8350.2): a, 1/f.
WGS84_A = 6378137.0
WGS84_INV_F = 298.257223563


def _e2(inv_f: float) -> float:
    f = 1.0 / inv_f
    return f * (2.0 - f)


def _base_lonlat(crs: str, lat, lon):
    """The station on the CRS's own datum (identity for the WGS84-aligned datums used here)."""
    t = Transformer.from_crs("EPSG:4326", CRS(crs).geodetic_crs, always_xy=True)
    blon, blat = t.transform(np.asarray(lon, float), np.asarray(lat, float))
    return np.asarray(blat, float), np.asarray(blon, float)


def _fd_convergence_and_scale(crs: str, lat_deg: float, lon_deg: float, a: float, e2: float):
    """Convergence (deg) and meridional/parallel scale from central differences of the pure
    projection (geographic CRS of the grid -> grid), in metres.

    The map image of the meridian (true north) is (dE/dphi, dN/dphi); its grid azimuth is
    atan2(dE/dphi, dN/dphi) = -gamma when gamma is true north -> grid north, clockwise.
    """
    c = CRS(crs)
    t = Transformer.from_crs(c.geodetic_crs, c, always_xy=True)
    unit = c.axis_info[0].unit_conversion_factor
    d = 1e-5  # degrees
    e_n, n_n = t.transform(lon_deg, lat_deg + d)
    e_s, n_s = t.transform(lon_deg, lat_deg - d)
    e_e, n_e = t.transform(lon_deg + d, lat_deg)
    e_w, n_w = t.transform(lon_deg - d, lat_deg)
    de_dphi, dn_dphi = (e_n - e_s) * unit, (n_n - n_s) * unit
    de_dlam, dn_dlam = (e_e - e_w) * unit, (n_e - n_w) * unit
    gamma = math.degrees(math.atan2(-de_dphi, dn_dphi))
    phi = math.radians(lat_deg)
    w = math.sqrt(1.0 - e2 * math.sin(phi) ** 2)
    m_radius = a * (1.0 - e2) / w**3  # meridian radius of curvature
    n_radius = a / w  # prime-vertical radius of curvature
    h = math.hypot(de_dphi, dn_dphi) / (m_radius * math.radians(2 * d))
    k = math.hypot(de_dlam, dn_dlam) / (n_radius * math.cos(phi) * math.radians(2 * d))
    return gamma, h, k


# ---------------------------------------------------------------------------------------------
# Lambert conformal conic: gamma = n (lambda - lambda0)
# ---------------------------------------------------------------------------------------------


def _lcc_cone_constant(phi1_deg: float, phi2_deg: float, e2: float) -> float:
    """Cone constant n of the ellipsoidal LCC from its standard parallels.

    Snyder, "Map Projections - A Working Manual", USGS PP 1395 (1987): eq. (15-8)
    n = (ln m1 - ln m2) / (ln t1 - ln t2), with m from eq. (14-15) and t from eq. (15-9);
    for one standard parallel n = sin(phi1) (eq. 15-8 in the limit).
    """
    e = math.sqrt(e2)

    def m(phi):
        return math.cos(phi) / math.sqrt(1.0 - e2 * math.sin(phi) ** 2)

    def t(phi):
        s = math.sin(phi)
        return math.tan(math.pi / 4 - phi / 2) / ((1 - e * s) / (1 + e * s)) ** (e / 2)

    p1, p2 = math.radians(phi1_deg), math.radians(phi2_deg)
    if abs(p1 - p2) < 1e-12:
        return math.sin(p1)
    return (math.log(m(p1)) - math.log(m(p2))) / (math.log(t(p1)) - math.log(t(p2)))


# Zone definitions as published (EPSG Geodetic Parameter Dataset; the NAD83 state plane values
# also in NOAA Manual NOS NGS 5, Stem 1989). Values written here from memory of those
# publications and cross-checked against pyproj's own parameters in test_lcc_zone_parameters.
LCC_ZONES = [
    # crs, phi1, phi2, lambda0, (inverse flattening of its ellipsoid), stations (lat, lon)
    pytest.param(
        "EPSG:2271",  # NAD83 / Pennsylvania North (ftUS): 41 57', 40 53', CM 77 45' W
        41.0 + 57.0 / 60.0,
        40.0 + 53.0 / 60.0,
        -77.75,
        GRS80_INV_F,
        [(41.0, -76.0), (41.8, -79.9), (40.9, -77.75), (42.3, -75.1)],
        id="PA-North-ftUS",
    ),
    pytest.param(
        "EPSG:2154",  # RGF93 / Lambert-93: 44 N, 49 N, CM 3 E
        44.0,
        49.0,
        3.0,
        GRS80_INV_F,
        [(48.85, 2.35), (43.3, 5.4), (47.2, -1.55), (49.0, 8.2)],
        id="Lambert-93",
    ),
    pytest.param(
        "EPSG:3112",  # GDA94 / Geoscience Australia Lambert: 18 S, 36 S, CM 134 E
        -18.0,
        -36.0,
        134.0,
        GRS80_INV_F,
        [(-33.87, 151.21), (-31.95, 115.86), (-23.7, 133.9), (-12.46, 130.84)],
        id="GA-Lambert-south",
    ),
    pytest.param(
        # A user-defined one-standard-parallel zone given as a PROJ string.
        "+proj=lcc +lat_1=35 +lat_0=35 +lon_0=-90 +k_0=0.9999 +x_0=500000 +y_0=0 "
        "+ellps=WGS84 +towgs84=0,0,0 +units=m +no_defs",
        35.0,
        35.0,
        -90.0,
        WGS84_INV_F,
        [(35.0, -90.0), (36.2, -86.5), (33.1, -93.9)],
        id="LCC-1SP-proj-string",
    ),
]


@pytest.mark.parametrize("crs, phi1, phi2, lam0, inv_f, stations", LCC_ZONES)
def test_lcc_convergence_is_cone_constant_times_longitude_difference(
    crs, phi1, phi2, lam0, inv_f, stations
):
    n = _lcc_cone_constant(phi1, phi2, _e2(inv_f))
    lat = np.array([s[0] for s in stations])
    lon = np.array([s[1] for s in stations])
    got = grid_factors(crs, lat=lat, lon=lon)
    _blat, blon = _base_lonlat(crs, lat, lon)
    expected = n * (blon - lam0)
    np.testing.assert_allclose(got.convergence_deg, expected, rtol=0, atol=TOL_GAMMA)
    # both sides of the central meridian are exercised (south: n < 0 flips the sign)
    assert np.any(blon > lam0) and np.any(blon < lam0)


@pytest.mark.parametrize("crs, phi1, phi2, lam0, inv_f, stations", LCC_ZONES[:3])
def test_lcc_zone_parameters(crs, phi1, phi2, lam0, inv_f, stations):
    params = {p.name: p.value for p in CRS(crs).coordinate_operation.params}
    got = sorted(
        [params["Latitude of 1st standard parallel"], params["Latitude of 2nd standard parallel"]]
    )
    assert got == pytest.approx(sorted([phi1, phi2]), abs=1e-12)
    assert params["Longitude of false origin"] == pytest.approx(lam0, abs=1e-12)


@pytest.mark.parametrize("crs, phi1, phi2, lam0, inv_f, stations", LCC_ZONES[:3])
def test_lcc_scale_is_one_on_the_standard_parallels(crs, phi1, phi2, lam0, inv_f, stations):
    # Definition of the two-standard-parallel LCC (Snyder PP 1395, ch. 15): k = 1 on both.
    f = grid_factors(crs, lat=[phi1, phi2], lon=[lam0 + 0.7, lam0 - 1.3])
    np.testing.assert_allclose(f.scale_factor, 1.0, rtol=0, atol=1e-9)


def test_lcc_southern_hemisphere_sign():
    # DESIGN.md: gamma > 0 east of the CM in the north; the cone opens the other way in the
    # south (n < 0), so east of the CM gamma < 0 there.
    assert grid_factors("EPSG:3112", lat=-30.0, lon=140.0).convergence_deg < 0
    assert grid_factors("EPSG:3112", lat=-30.0, lon=120.0).convergence_deg > 0
    assert grid_factors("EPSG:2154", lat=46.0, lon=6.0).convergence_deg > 0


# ---------------------------------------------------------------------------------------------
# Transverse Mercator
# ---------------------------------------------------------------------------------------------

TM_CASES = [
    # crs, lambda0 of the zone, k0, inverse flattening, stations (lat, lon)
    pytest.param(
        "EPSG:32618",  # WGS 84 / UTM 18N, CM 75 W
        -75.0,
        0.9996,
        WGS84_INV_F,
        [(40.0, -74.0), (40.0, -76.0), (10.0, -72.1), (60.0, -77.9), (0.5, -75.0)],
        id="UTM18N",
    ),
    pytest.param(
        "EPSG:32756",  # WGS 84 / UTM 56S, CM 153 E
        153.0,
        0.9996,
        WGS84_INV_F,
        [(-33.87, 151.21), (-28.0, 155.4), (-60.0, 150.2), (-5.0, 153.0)],
        id="UTM56S",
    ),
    pytest.param(
        "EPSG:2260",  # NAD83 / New York East (ftUS): TM, CM 74 30' W, k0 = 0.9999
        -74.5,
        0.9999,
        GRS80_INV_F,
        [(41.0, -73.7), (42.5, -75.2), (44.9, -73.35)],
        id="NY-East-ftUS",
    ),
]


def _tm_series_convergence(lat_deg: float, dlon_deg: float, e2: float) -> float:
    """Textbook series for the TM meridian convergence from geographic coordinates, degrees:

    gamma = w sin(phi) [1 + (w^2 cos^2 phi / 3)(1 + 3 eta^2 + 2 eta^4)
                          + (w^4 cos^4 phi / 15)(2 - tan^2 phi)],  eta^2 = e'^2 cos^2 phi,

    w = lambda - lambda0 in radians (Redfearn's series; as printed e.g. in the ICSM Geocentric
    Datum of Australia Technical Manual; written here from memory).
    """
    phi = math.radians(lat_deg)
    w = math.radians(dlon_deg)
    ep2 = e2 / (1.0 - e2)
    eta2 = ep2 * math.cos(phi) ** 2
    c2 = math.cos(phi) ** 2
    t2 = math.tan(phi) ** 2
    g = (
        w
        * math.sin(phi)
        * (1 + w * w * c2 / 3 * (1 + 3 * eta2 + 2 * eta2 * eta2) + w**4 * c2 * c2 / 15 * (2 - t2))
    )
    return math.degrees(g)


def _tm_series_scale(lat_deg: float, dlon_deg: float, e2: float, k0: float) -> float:
    """Snyder PP 1395 eq. (8-11): k = k0 [1 + (1 + C) A^2/2 + (5 - 4T + 42C + 13C^2 - 28e'^2)
    A^4/24 + (61 - 148T + 16T^2) A^6/720], A = w cos phi, C = e'^2 cos^2 phi, T = tan^2 phi
    (written from memory)."""
    phi = math.radians(lat_deg)
    ep2 = e2 / (1.0 - e2)
    A = math.radians(dlon_deg) * math.cos(phi)
    C = ep2 * math.cos(phi) ** 2
    T = math.tan(phi) ** 2
    return k0 * (
        1
        + (1 + C) * A**2 / 2
        + (5 - 4 * T + 42 * C + 13 * C * C - 28 * ep2) * A**4 / 24
        + (61 - 148 * T + 16 * T * T) * A**6 / 720
    )


@pytest.mark.parametrize("crs, lam0, k0, inv_f, stations", TM_CASES)
def test_tm_convergence_against_finite_differences_and_series(crs, lam0, k0, inv_f, stations):
    e2 = _e2(inv_f)
    for lat, lon in stations:
        got = grid_factors(crs, lat=lat, lon=lon)
        blat, blon = (float(v) for v in _base_lonlat(crs, lat, lon))
        fd_gamma, fd_h, fd_k = _fd_convergence_and_scale(crs, blat, blon, WGS84_A, e2)
        assert got.convergence_deg == pytest.approx(fd_gamma, abs=TOL_GAMMA), (lat, lon)
        series = _tm_series_convergence(blat, blon - lam0, e2)
        assert got.convergence_deg == pytest.approx(series, abs=TOL_GAMMA), (lat, lon)
        assert got.scale_factor == pytest.approx(fd_k, abs=2e-8)
        assert got.scale_factor == pytest.approx(fd_h, abs=2e-8)
        assert got.scale_factor == pytest.approx(
            _tm_series_scale(blat, blon - lam0, e2, k0), abs=1e-9
        )


def test_convergence_sign_matches_design_in_both_hemispheres():
    # DESIGN.md: positive east of the central meridian in the northern hemisphere (TM/LCC).
    assert grid_factors("EPSG:32618", lat=40.0, lon=-74.0).convergence_deg > 0
    assert grid_factors("EPSG:32618", lat=40.0, lon=-76.0).convergence_deg < 0
    assert grid_factors("EPSG:32756", lat=-30.0, lon=154.0).convergence_deg < 0
    assert grid_factors("EPSG:32756", lat=-30.0, lon=152.0).convergence_deg > 0
    assert grid_factors("EPSG:32618", lat=40.0, lon=-75.0).convergence_deg == 0.0


@pytest.mark.parametrize("crs", ["EPSG:32618", "EPSG:32756", "EPSG:2271", "EPSG:3112", "EPSG:2154"])
def test_grid_azimuth_of_a_true_line_is_true_minus_gamma(crs):
    # A short geodesic run due true north (azimuth 0) appears on the grid at azimuth -gamma.
    lat, lon = {
        "EPSG:32618": (42.0, -73.2),
        "EPSG:32756": (-31.0, 151.0),
        "EPSG:2271": (41.5, -79.0),
        "EPSG:3112": (-25.0, 145.0),
        "EPSG:2154": (45.0, 6.5),
    }[crs]
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    for true_az in (0.0, 37.0, 123.0, 250.0):
        lon2, lat2, _ = geod.fwd(lon, lat, true_az, 20.0)
        lon1, lat1, _ = geod.fwd(lon, lat, true_az + 180.0, 20.0)
        e1, n1 = to_grid(crs, lat=lat1, lon=lon1)
        e2, n2 = to_grid(crs, lat=lat2, lon=lon2)
        grid_az = math.degrees(math.atan2(e2 - e1, n2 - n1))
        gamma = grid_factors(crs, lat=lat, lon=lon).convergence_deg
        diff = (grid_az - (true_az - gamma) + 180.0) % 360.0 - 180.0
        assert abs(diff) < TOL_GAMMA


@pytest.mark.parametrize("lat", [-60.0, -10.0, 0.0, 30.0, 75.0])
def test_utm_scale_on_central_meridian_is_k0(lat):
    # Published UTM definition (e.g. NGA.SIG.0012, DMA TM 8358.2): k0 = 0.9996 on the CM.
    crs = utm_crs_for(lat=lat, lon=-75.0)
    # PROJ differentiates numerically: its scale factors carry ~1e-10 of rounding.
    assert grid_factors(crs, lat=lat, lon=-75.0).scale_factor == pytest.approx(0.9996, abs=1e-9)


def test_utm_scale_is_about_one_near_180_km_from_the_central_meridian():
    # Common practice: UTM has true scale on lines about 180 km either side of the CM.
    crs = "EPSG:32618"
    e, _ = to_grid(crs, lat=40.0, lon=-75.0 + math.degrees(180_000 / (6_371_000 * math.cos(0.698))))
    k = grid_factors(
        crs, lat=40.0, lon=-75.0 + math.degrees(180_000 / (6_371_000 * math.cos(0.698)))
    )
    assert abs(e - 500_000 - 180_000) < 2_000
    assert k.scale_factor == pytest.approx(1.0, abs=2e-5)


# ---------------------------------------------------------------------------------------------
# Elevation and combined factors
# ---------------------------------------------------------------------------------------------


def test_elevation_factor_uses_gaussian_mean_radius():
    lat = np.array([0.5, 41.0, 41.0, 35.0])
    lon = np.array([-75.0, -74.0, -76.3, -75.5])
    h = np.array([0.0, 300.0, 2500.0, 1200.0])
    f = grid_factors("EPSG:32618", lat=lat, lon=lon, height_m=h)
    e2 = _e2(WGS84_INV_F)
    s2 = np.sin(np.radians(lat)) ** 2
    M = WGS84_A * (1 - e2) / (1 - e2 * s2) ** 1.5  # meridian radius of curvature
    N = WGS84_A / np.sqrt(1 - e2 * s2)  # prime-vertical radius of curvature
    R = np.sqrt(M * N)  # Gaussian mean radius of curvature (textbook definition)
    np.testing.assert_allclose(f.elevation_factor, R / (R + h), rtol=0, atol=1e-15)
    np.testing.assert_allclose(f.combined_factor, f.scale_factor * f.elevation_factor, rtol=1e-15)
    assert f.elevation_factor[0] == 1.0
    # Common practice: about 1 ppm per 6.4 m of height (R ~ 6371 km).
    assert 1 - f.elevation_factor[2] == pytest.approx(2500 / 6.371e6, rel=2e-3)


def test_scalar_in_scalar_out_and_broadcasting():
    f = grid_factors("EPSG:32618", lat=40.0, lon=-74.0, height_m=100.0)
    assert isinstance(f, GridFactors)
    assert all(
        isinstance(v, float)
        for v in (f.convergence_deg, f.scale_factor, f.elevation_factor, f.combined_factor)
    )
    g = grid_factors("EPSG:32618", lat=np.array([[40.0], [41.0]]), lon=[-74.0, -75.0, -76.0])
    assert g.convergence_deg.shape == (2, 3)
    assert g.elevation_factor.shape == (2, 3)
    assert g.convergence_deg[0, 0] == pytest.approx(f.convergence_deg, abs=1e-12)


# ---------------------------------------------------------------------------------------------
# Projection, UTM zone choice, errors
# ---------------------------------------------------------------------------------------------


def test_to_grid_and_back():
    lat = np.array([41.2, 41.9, 40.7])
    lon = np.array([-76.1, -79.3, -75.2])
    e, n = to_grid("EPSG:2271", lat=lat, lon=lon)
    lat2, lon2 = to_geographic("EPSG:2271", easting=e, northing=n)
    np.testing.assert_allclose(lat2, lat, atol=1e-10)
    np.testing.assert_allclose(lon2, lon, atol=1e-10)
    # Native unit of the CRS: US survey foot = 1200/3937 m (NIST; 1959 Federal Register notice).
    assert grid_unit_m("EPSG:2271") == pytest.approx(1200 / 3937, rel=1e-15)
    assert grid_unit_m("EPSG:32618") == 1.0
    # Same numbers as pyproj's own transformation of the WGS84 position.
    t = Transformer.from_crs("EPSG:4326", "EPSG:2271", always_xy=True)
    e_ref, n_ref = t.transform(lon, lat)
    np.testing.assert_allclose(e, e_ref, atol=1e-6)
    np.testing.assert_allclose(n, n_ref, atol=1e-6)


def test_utm_false_origin():
    # Published UTM definition: false easting 500 000 m on the CM; false northing 0 (north) and
    # 10 000 000 m (south) at the equator.
    e, n = to_grid("EPSG:32618", lat=0.0, lon=-75.0)
    assert e == pytest.approx(500_000.0, abs=1e-6) and n == pytest.approx(0.0, abs=1e-6)
    e, n = to_grid("EPSG:32718", lat=0.0, lon=-75.0)
    assert n == pytest.approx(10_000_000.0, abs=1e-6)


@pytest.mark.parametrize(
    "lat, lon, expected",
    [
        # UTM zone arithmetic and the Norway / Svalbard exceptions (NGA.SIG.0012, UTM/UPS
        # definition; common practice).
        (40.0, -77.0, "EPSG:32618"),
        (-33.9, 151.2, "EPSG:32756"),
        (0.0, 0.0, "EPSG:32631"),
        (-0.001, 0.0, "EPSG:32731"),
        (10.0, -180.0, "EPSG:32601"),
        (10.0, 180.0, "EPSG:32660"),
        (60.0, 5.0, "EPSG:32632"),  # zone 32V widened over south-west Norway
        (60.0, 2.9, "EPSG:32631"),
        (55.9, 5.0, "EPSG:32631"),
        (78.0, 8.0, "EPSG:32631"),  # Svalbard: 31X 0-9 E
        (78.0, 15.0, "EPSG:32633"),  # 33X 9-21 E
        (78.0, 25.0, "EPSG:32635"),  # 35X 21-33 E
        (78.0, 40.0, "EPSG:32637"),  # 37X 33-42 E
        (84.0, -10.0, "EPSG:32629"),
        (-80.0, 100.0, "EPSG:32747"),
    ],
)
def test_utm_crs_for(lat, lon, expected):
    assert utm_crs_for(lat=lat, lon=lon) == expected


def test_utm_crs_for_agrees_with_pyproj_database():
    rng = np.random.default_rng(7)
    for _ in range(20):
        lat = float(rng.uniform(-79, 55))
        lon = float(rng.uniform(-179.5, 179.5))
        if abs(((lon + 180) % 6) - 3) > 2.9:  # skip points on a zone edge (two zones match)
            continue
        got = utm_crs_for(lat=lat, lon=lon)
        infos = query_utm_crs_info(
            datum_name="WGS 84", area_of_interest=AreaOfInterest(lon, lat, lon, lat)
        )
        assert got in {f"{i.auth_name}:{i.code}" for i in infos}, (lat, lon)


def test_utm_crs_for_polar_is_an_error_whose_advice_works():
    import re

    from lodeline.geo.grid import projected_crs, to_grid

    for lat in (85.0, -80.5):
        with pytest.raises(GridError, match="UTM range") as caught:
            utm_crs_for(lat=lat, lon=0.0)
        # every grid the message suggests is one the conversion accepts, and it works there
        for crs in re.findall(r'"(\+proj=[^"]+)"', str(caught.value)):
            projected_crs(crs)
            if ("+south" in crs) == (lat < 0):
                e, n = to_grid(crs, lat=lat, lon=0.0)
                assert np.isfinite(e) and np.isfinite(n)


@pytest.mark.parametrize(
    "crs, match",
    [
        ("EPSG:4326", "not a projected CRS"),
        ("EPSG:999999", "cannot build"),
        ("not a crs", "cannot build"),
        ("EPSG:2053", "axes west/south"),  # Hartebeesthoek94 / Lo29: westing/southing
        ("EPSG:5070", "not conformal"),  # NAD83 / Conus Albers (equal-area)
    ],
)
def test_bad_crs_is_a_grid_error(crs, match):
    with pytest.raises(GridError, match=match):
        grid_factors(crs, lat=40.0, lon=-77.0)


def test_station_outside_area_is_a_grid_error():
    with pytest.raises(GridError, match="outside the area of EPSG:2271"):
        to_grid("EPSG:2271", lat=41.0, lon=77.0)  # longitude sign mistake
    with pytest.raises(GridError, match="outside the area"):
        grid_factors("EPSG:32618", lat=40.0, lon=-60.0)  # wrong zone by far
    # Pennsylvania North coordinates (ftUS) mistaken for metres of a far-off place:
    with pytest.raises(GridError, match="outside the area"):
        to_geographic("EPSG:2271", easting=-9.0e6, northing=308_000.0)


def test_bad_coordinates_are_input_errors():
    with pytest.raises(InputError, match="latitude 95"):
        grid_factors("EPSG:32618", lat=95.0, lon=-75.0)
    with pytest.raises(InputError):
        to_grid("EPSG:32618", lat=float("nan"), lon=-75.0)
    with pytest.raises(InputError, match="shapes"):
        to_grid("EPSG:32618", lat=[40.0, 41.0], lon=[-75.0, -74.0, -73.0])


def test_crs_object_accepted_and_cached_per_crs():
    from lodeline.geo import grid as grid_module

    a = grid_module._grid("EPSG:32618")
    assert grid_module._grid("EPSG:32618") is a
    f = grid_factors(CRS("EPSG:32618"), lat=40.0, lon=-74.0)
    assert f.convergence_deg == pytest.approx(
        grid_factors("EPSG:32618", lat=40.0, lon=-74.0).convergence_deg, abs=1e-15
    )
