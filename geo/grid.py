"""Grid coordinates and grid factors of a projected coordinate reference system (via pyproj).

Conventions (see DESIGN.md):

- ``lat``/``lon`` are geodetic degrees on WGS84, longitude east positive. Conversion to a CRS on
  another datum uses the best transformation pyproj has offline (for NAD83, ETRS89, GDA94/2020
  and other WGS84-aligned datums without grids this is the identity, within 1-2 m).
- Easting/northing are in the CRS's own linear unit (metre, US survey foot...);
  :func:`grid_unit_m` gives metres per unit.
- Meridian convergence ``gamma`` is the angle from true north to grid north, clockwise positive:
  ``grid azimuth = true azimuth - gamma``. It is positive east of the central meridian in the
  northern hemisphere for transverse Mercator and Lambert conformal conic grids.

pyproj's ``Proj.get_factors().meridian_convergence`` (PROJ 9) uses this same sign. That was
checked independently with finite differences of the projection: the map direction of true
north, (dE/dphi, dN/dphi), has grid azimuth atan2(dE/dphi, dN/dphi) = -gamma (tests/test_grid.py
repeats the check for every CRS it uses).
"""

from __future__ import annotations

import json
import math
import re
import threading
import warnings
from dataclasses import dataclass

import numpy as np
import pyproj.network
from numpy.typing import ArrayLike, NDArray
from pyproj import CRS, Proj, Transformer
from pyproj.exceptions import CRSError, ProjError

from .errors import GridError, InputError, clip

# No network at run time: PROJ never fetches grids from its content delivery network.
pyproj.network.set_network_enabled(False)

__all__ = [
    "AREA_MARGIN_DEG",
    "GridFactors",
    "grid_factors",
    "grid_unit_m",
    "projected_crs",
    "to_geographic",
    "to_grid",
    "utm_crs_for",
]

#: A station may lie this many degrees beyond the CRS's published area of use. Parcels straddle
#: zone edges and the UTM zones of Norway and Svalbard are wider than the EPSG areas; the
#: projection formulas stay exact there. The check exists to catch gross mistakes (wrong zone,
#: wrong sign of a longitude), which put a station far outside.
AREA_MARGIN_DEG = 3.0

#: Conformality test: |meridional scale / parallel scale - 1| below this at the station.
_CONFORMAL_TOL = 1e-7

_WGS84 = "EPSG:4326"

Scalar = float | NDArray[np.float64]


@dataclass(frozen=True)
class GridFactors:
    """Grid factors at one or more stations (floats for scalar input, else numpy arrays).

    Attributes
    ----------
    convergence_deg:
        Meridian convergence gamma in degrees: true north to grid north, clockwise positive;
        grid azimuth = true azimuth - gamma.
    scale_factor:
        Point scale factor k of the (conformal) projection: grid length / ellipsoid length.
    elevation_factor:
        R / (R + h), reducing a horizontal ground length at ellipsoidal height h to the
        ellipsoid; R is the Gaussian mean radius of curvature sqrt(M N) of the CRS's ellipsoid
        at the station's latitude.
    combined_factor:
        scale_factor * elevation_factor: grid length = ground length * combined_factor.
    """

    convergence_deg: Scalar
    scale_factor: Scalar
    elevation_factor: Scalar
    combined_factor: Scalar


class _Grid:
    """Everything built once per CRS: the CRS, transformers, the Proj used for factors."""

    def __init__(self, key: str, crs: CRS) -> None:
        self.key = key
        self.crs = crs
        self.name = crs.name
        base = crs.geodetic_crs
        self.forward = Transformer.from_crs(_WGS84, crs, always_xy=True)
        self.inverse = Transformer.from_crs(crs, _WGS84, always_xy=True)
        # WGS84 -> the CRS's own geographic CRS, where the projection formulas are evaluated.
        self.to_base = Transformer.from_crs(_WGS84, base, always_xy=True)
        self.proj = Proj(crs)
        ell = crs.ellipsoid
        self.a = float(ell.semi_major_metre)
        inv_f = float(ell.inverse_flattening)
        f = 0.0 if inv_f == 0.0 or not math.isfinite(inv_f) else 1.0 / inv_f
        self.e2 = f * (2.0 - f)
        area = crs.area_of_use
        self.bounds = area.bounds if area is not None else None
        self.unit_m = float(crs.axis_info[0].unit_conversion_factor)


_local = threading.local()  # pyproj transformers must not be shared between threads


def _describe(crs: str | CRS) -> str:
    return clip(crs, 60) if isinstance(crs, str) else crs.name


#: PROJ string parameters that name a file PROJ would open (grids, init files, models).
_FILE_KEYS = frozenset(
    {
        "nadgrids",
        "grids",
        "geoidgrids",
        "init",
        "file",
        "model",
        "catalog",
        "xy_grids",
        "z_grids",
        "hgridshift",
        "vgridshift",
    }
)
_PROJ_KEY = re.compile(r"(?:^|[\s+])\+?([A-Za-z_][A-Za-z0-9_]*)\s*=")
#: The longest CRS definition read (a WKT of a compound CRS is a few kilobytes).
MAX_CRS_CHARS = 20_000


def check_crs_definition(text: str) -> None:
    """Refuse a CRS definition that would make PROJ read a file, or is too long to be one.

    Accepted: authority codes ("EPSG:2271"), WKT, PROJJSON and PROJ strings without
    parameters that name files (``nadgrids``, ``grids``, ``geoidgrids``, ``init``, ``file``,
    ``model`` ...). WKT may not name a parameter file (``PARAMETERFILE``) and PROJJSON no
    parameter given as a file name. Raises :class:`GridError`.
    """
    if len(text) > MAX_CRS_CHARS:
        raise GridError(
            f"a CRS definition of {len(text):,} characters is longer than any "
            f"({MAX_CRS_CHARS:,} at most)"
        )
    stripped = text.strip()
    if stripped.startswith("{"):
        _check_projjson(stripped)
        return
    if re.search(r"PARAMETERFILE|PARAMETER_FILE", text, re.I):
        raise GridError(f"{clip(text, 60)!r} names a parameter file: give a CRS without grid files")
    named = {key.lower() for key in _PROJ_KEY.findall(text)}
    files = sorted(k for k in named if k in _FILE_KEYS or k.endswith("grids"))
    if files:
        keys = ", ".join(f"+{k}" for k in files)
        raise GridError(
            f"{clip(text, 60)!r}: {keys} would read a file; give the CRS by its EPSG code, "
            "WKT or a PROJ string without file parameters"
        )


def _check_projjson(text: str) -> None:
    try:
        data = json.loads(text)
    except ValueError:
        return  # not JSON: PROJ refuses it, and the error says so
    stack = [data]
    while stack:
        node = stack.pop()
        if isinstance(node, dict):
            if isinstance(node.get("value"), str) or "parameter_file" in node:
                raise GridError(
                    f"the PROJJSON CRS names a file ({clip(node.get('value'), 40)!r}): give a "
                    "CRS without grid files"
                )
            stack.extend(node.values())
        elif isinstance(node, list):
            stack.extend(node)


def _proj_message(exc: Exception) -> str:
    """PROJ's error as one short line (its text can span lines and repeat the input)."""
    text = " ".join(str(exc).split())
    text = re.sub(r"^.*?\(Internal Proj Error: ", "", text).rstrip(")")
    return clip(text, 160)


def projected_crs(crs: str | CRS) -> CRS:
    """Return ``crs`` as a projected pyproj CRS with east/north axes, or raise GridError.

    Accepts anything ``pyproj.CRS.from_user_input`` reads ("EPSG:2271", WKT, a PROJ string).
    A compound CRS is reduced to its projected horizontal part.
    """
    if isinstance(crs, str):
        check_crs_definition(crs)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # PROJ's deprecation notes; errors still raise
            obj = CRS.from_user_input(crs)
    except (CRSError, ProjError, TypeError, ValueError) as exc:
        raise GridError(
            f"cannot build the coordinate reference system {_describe(crs)!r}: {_proj_message(exc)}"
        ) from None
    if obj.is_compound:
        horizontal = [sub for sub in obj.sub_crs_list if sub.is_projected]
        if horizontal:
            obj = horizontal[0]
    if not obj.is_projected:
        raise GridError(
            f"{_describe(crs)!r} ({obj.name}) is not a projected CRS; give a grid such as a "
            "state plane zone or a UTM zone"
        )
    directions = [axis.direction.lower() for axis in obj.axis_info[:2]]
    if sorted(directions) != ["east", "north"]:
        raise GridError(
            f"{_describe(crs)!r} ({obj.name}) has axes {'/'.join(directions)}; only grids with "
            "east and north axes are supported"
        )
    return obj


def _grid(crs: str | CRS) -> _Grid:
    key = crs if isinstance(crs, str) else crs.to_wkt()
    cache = getattr(_local, "cache", None)
    if cache is None:
        cache = _local.cache = {}
    grid = cache.get(key)
    if grid is None:
        obj = projected_crs(crs)
        try:
            built = _Grid(clip(key, 60), obj)
        except (CRSError, ProjError, ValueError, TypeError) as exc:
            raise GridError(
                f"the coordinate reference system {_describe(crs)!r} cannot be used: "
                f"{_proj_message(exc)}"
            ) from None
        grid = cache[key] = built
    return grid


def _as_arrays(*values: ArrayLike) -> tuple[bool, list[NDArray[np.float64]]]:
    arrays = [np.asarray(v, dtype=float) for v in values]
    scalar = all(a.ndim == 0 for a in arrays)
    try:
        arrays = list(np.broadcast_arrays(*arrays))
    except ValueError:
        shapes = ", ".join(str(a.shape) for a in arrays)
        raise InputError(f"coordinate arrays have incompatible shapes {shapes}") from None
    return scalar, arrays


def _out(scalar: bool, value: NDArray[np.float64]) -> Scalar:
    return float(value) if scalar else np.array(value, dtype=float)


def _check_geographic(lat: NDArray[np.float64], lon: NDArray[np.float64]) -> None:
    if not (np.isfinite(lat).all() and np.isfinite(lon).all()):
        raise InputError("latitude and longitude must be finite numbers")
    if (np.abs(lat) > 90.0).any():
        bad = float(lat[np.abs(lat) > 90.0].flat[0])
        raise InputError(f"latitude {bad!r} is outside -90..90 degrees", field="lat")
    if (np.abs(lon) > 180.0).any():
        bad = float(lon[np.abs(lon) > 180.0].flat[0])
        raise InputError(f"longitude {bad!r} is outside -180..180 degrees", field="lon")


def _check_area(grid: _Grid, lat: NDArray[np.float64], lon: NDArray[np.float64]) -> None:
    if grid.bounds is None:
        return
    west, south, east, north = grid.bounds
    m = AREA_MARGIN_DEG
    lat_ok = (lat >= south - m) & (lat <= north + m)
    if west <= east:
        lon_ok = (lon >= west - m) & (lon <= east + m)
    else:  # area crosses the antimeridian
        lon_ok = (lon >= west - m) | (lon <= east + m)
    ok = lat_ok & lon_ok
    if not ok.all():
        i = int(np.flatnonzero(~ok.ravel())[0])
        raise GridError(
            f"station {lat.ravel()[i]:.6f}, {lon.ravel()[i]:.6f} lies outside the area of "
            f"{grid.key} ({grid.name}: lon {west:g}..{east:g}, lat {south:g}..{north:g})"
        )


def grid_unit_m(crs: str | CRS) -> float:
    """Metres per linear unit of ``crs`` (1.0 for metres, 1200/3937 for the US survey foot)."""
    return _grid(crs).unit_m


#: Short names of the usual grid units, by metres per unit (EPSG's definitions).
_UNIT_NAMES = {1.0: "m", 0.3048: "ft", 1200.0 / 3937.0: "us_ft"}


def grid_unit_name(crs: str | CRS) -> str:
    """A short name of the CRS's linear unit: ``"m"``, ``"ft"`` (international foot),
    ``"us_ft"`` (US survey foot), else the unit's own name as PROJ gives it."""
    grid = _grid(crs)
    for unit_m, name in _UNIT_NAMES.items():
        if abs(grid.unit_m - unit_m) <= 1e-12 * unit_m:
            return name
    return str(grid.crs.axis_info[0].unit_name).replace(" ", "_")


def utm_crs_for(*, lat: float, lon: float) -> str:
    """Return the WGS84 UTM zone CRS of a place: "EPSG:326zz" (north) or "EPSG:327zz" (south).

    Zones are 6 degrees wide from 180 W (zone 1); longitude 180 belongs to zone 60; the equator
    belongs to the northern zones. The exceptions of the UTM/MGRS definition are applied: zone
    32V is widened over south-west Norway (56-64 N, 3-12 E) and Svalbard (72-84 N) uses zones
    31, 33, 35 and 37 only. UTM is defined from 80 S to 84 N; beyond, GridError (the polar
    regions use the universal polar stereographic grids).
    """
    lat_f, lon_f = float(lat), float(lon)
    _check_geographic(np.asarray(lat_f), np.asarray(lon_f))
    if not -80.0 <= lat_f <= 84.0:
        raise GridError(
            f"latitude {lat_f:g} is outside the UTM range 80 S..84 N; give a polar grid with "
            'east and north axes in grid.crs, e.g. "+proj=ups +datum=WGS84" (north) or '
            '"+proj=ups +south +datum=WGS84" (south)'
        )
    zone = min(int(math.floor((lon_f + 180.0) / 6.0)) + 1, 60)
    if 56.0 <= lat_f < 64.0 and 3.0 <= lon_f < 12.0:
        zone = 32
    elif 72.0 <= lat_f <= 84.0 and 0.0 <= lon_f < 42.0:
        zone = 31 if lon_f < 9.0 else 33 if lon_f < 21.0 else 35 if lon_f < 33.0 else 37
    return f"EPSG:{32600 + zone if lat_f >= 0.0 else 32700 + zone}"


def to_grid(crs: str | CRS, *, lat: ArrayLike, lon: ArrayLike) -> tuple[Scalar, Scalar]:
    """Project WGS84 ``lat``/``lon`` (degrees) to ``(easting, northing)`` in the CRS's unit.

    Scalars in, floats out; arrays broadcast. Raises GridError for a CRS that cannot be built
    or is not projected, or a station outside the CRS's area (see AREA_MARGIN_DEG).
    """
    grid = _grid(crs)
    scalar, (lat_a, lon_a) = _as_arrays(lat, lon)
    _check_geographic(lat_a, lon_a)
    _check_area(grid, lat_a, lon_a)
    e, n = grid.forward.transform(lon_a, lat_a)
    e, n = np.asarray(e, dtype=float), np.asarray(n, dtype=float)
    if not (np.all(np.isfinite(e)) and np.all(np.isfinite(n))):
        raise GridError(f"a station cannot be projected to {grid.key} ({grid.name})")
    return _out(scalar, e), _out(scalar, n)


def to_geographic(
    crs: str | CRS, *, easting: ArrayLike, northing: ArrayLike
) -> tuple[Scalar, Scalar]:
    """Return WGS84 ``(lat, lon)`` degrees of grid coordinates given in the CRS's unit.

    The inverse of :func:`to_grid` (same transformation, reversed). Raises GridError when the
    point cannot be unprojected or falls outside the CRS's area.
    """
    grid = _grid(crs)
    scalar, (e, n) = _as_arrays(easting, northing)
    if not (np.all(np.isfinite(e)) and np.all(np.isfinite(n))):
        raise InputError("easting and northing must be finite numbers")
    lon, lat = grid.inverse.transform(e, n)
    lat, lon = np.asarray(lat, dtype=float), np.asarray(lon, dtype=float)
    if not (np.all(np.isfinite(lat)) and np.all(np.isfinite(lon))):
        raise GridError(f"grid coordinates cannot be converted from {grid.key} ({grid.name})")
    _check_area(grid, lat, lon)
    return _out(scalar, lat), _out(scalar, lon)


def _gaussian_radius(a: float, e2: float, lat_deg: NDArray[np.float64]) -> NDArray[np.float64]:
    """Gaussian mean radius of curvature sqrt(M N) = a sqrt(1 - e2) / (1 - e2 sin^2 phi), m."""
    s = np.sin(np.radians(lat_deg))
    return a * math.sqrt(1.0 - e2) / (1.0 - e2 * s * s)


def grid_factors(
    crs: str | CRS, *, lat: ArrayLike, lon: ArrayLike, height_m: ArrayLike = 0.0
) -> GridFactors:
    """Meridian convergence, point scale, elevation and combined factors at WGS84 stations.

    Parameters
    ----------
    crs:
        A projected, conformal CRS (anything pyproj builds: "EPSG:2271", WKT, PROJ string).
    lat, lon:
        Geodetic degrees (WGS84), scalars or arrays (broadcast together with ``height_m``).
    height_m:
        Ellipsoidal height in metres (only the elevation factor uses it).

    Returns
    -------
    GridFactors with ``convergence_deg`` gamma (true north to grid north, clockwise positive;
    grid az = true az - gamma), ``scale_factor`` k, ``elevation_factor`` R / (R + h) with R the
    Gaussian mean radius sqrt(M N) of the CRS's ellipsoid at the latitude, and
    ``combined_factor`` = k * R / (R + h). Floats for scalar input, else arrays.

    The projection is evaluated at the station's position on the CRS's own datum. gamma and k
    come from PROJ's factors (``Proj.get_factors``; PROJ differentiates the projection
    numerically, good to about 1e-10 in k and far below 0.001" in gamma), whose sign convention
    matches ours (verified by finite differences; see the module docstring).

    Raises GridError for an unbuildable, non-projected or non-conformal CRS (where the scale
    depends on direction and no single combined factor exists), or a station outside the area.
    """
    grid = _grid(crs)
    scalar, (lat_a, lon_a, h) = _as_arrays(lat, lon, height_m)
    _check_geographic(lat_a, lon_a)
    if not np.all(np.isfinite(h)):
        raise InputError("height must be a finite number of metres", field="height_m")
    _check_area(grid, lat_a, lon_a)
    base_lon, base_lat = grid.to_base.transform(lon_a, lat_a)
    factors = grid.proj.get_factors(
        np.asarray(base_lon, dtype=float), np.asarray(base_lat, dtype=float)
    )
    gamma = np.asarray(factors.meridian_convergence, dtype=float).reshape(lat_a.shape) + 0.0
    k = np.asarray(factors.parallel_scale, dtype=float).reshape(lat_a.shape)
    h_scale = np.asarray(factors.meridional_scale, dtype=float).reshape(lat_a.shape)
    if not (np.all(np.isfinite(gamma)) and np.all(np.isfinite(k)) and np.all(k > 0.0)):
        raise GridError(f"grid factors of {grid.key} ({grid.name}) are undefined at a station")
    if np.any(np.abs(h_scale / k - 1.0) > _CONFORMAL_TOL):
        raise GridError(
            f"{grid.key} ({grid.name}) is not conformal: its scale depends on direction, so no "
            "single combined factor exists; use a conformal grid (transverse Mercator, Lambert "
            "conformal conic, stereographic, oblique Mercator)"
        )
    radius = _gaussian_radius(grid.a, grid.e2, lat_a)
    if np.any(radius + h <= 0.0):
        raise InputError("height is below the centre of the earth", field="height_m")
    elevation = radius / (radius + h)
    return GridFactors(
        convergence_deg=_out(scalar, gamma),
        scale_factor=_out(scalar, k),
        elevation_factor=_out(scalar, elevation),
        combined_factor=_out(scalar, k * elevation),
    )
