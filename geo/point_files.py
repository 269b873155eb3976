"""Point files from the field: a receiver's CSV, GeoJSON points or GPX waypoints.

Public API
----------
``read_points(path, *, crs=None) -> list[FieldPoint]``
    Every point of the file, in file order, with its name and position. The format follows the
    suffix: ``.csv``/``.txt`` (CSV), ``.geojson``/``.json`` (GeoJSON), ``.gpx`` (GPX).
``read_points_text(text, fmt, *, crs=None, file=None) -> list[FieldPoint]``
    The same from text.

CSV
    A header row names the columns, matched case-insensitively in the usual spellings
    (:data:`NAME_COLUMNS`, :data:`EASTING_COLUMNS`, :data:`NORTHING_COLUMNS`,
    :data:`LAT_COLUMNS`, :data:`LON_COLUMNS`); the values are separated by commas, semicolons
    or tabs. A file gives easting and northing (in ``crs``, else the document's grid) or
    latitude and longitude (WGS84 degrees); when it has both, easting and northing are read.
GeoJSON (RFC 7946)
    Point features (other geometries are passed over); coordinates are [longitude, latitude]
    WGS84, or [easting, northing] in ``crs`` when one is given. The name is the property
    ``name`` (or ``Name``, ``label``, ``id``, ``point``); a station of lodeline's own GeoJSON
    export (``kind = "station"``) is named by its number.
GPX
    Waypoints (:func:`geo.gpx.gpx_waypoints`), WGS84.

Every error is an :class:`geo.errors.InputError` naming the file, the row (or feature or
waypoint) and the column.
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .errors import InputError

__all__ = [
    "EASTING_COLUMNS",
    "LAT_COLUMNS",
    "LON_COLUMNS",
    "NAME_COLUMNS",
    "NORTHING_COLUMNS",
    "FieldPoint",
    "point_format",
    "read_points",
    "read_points_text",
]

NAME_COLUMNS = ("name", "point", "point name", "point_name", "pt", "id", "point id", "point_id",
                "label", "ident", "station", "corner")  # fmt: skip
EASTING_COLUMNS = ("easting", "east", "e", "x", "easting_m", "easting (m)", "e (m)")
NORTHING_COLUMNS = ("northing", "north", "n", "y", "northing_m", "northing (m)", "n (m)")
LAT_COLUMNS = ("lat", "latitude", "lat_deg", "latitude (deg)", "phi")
LON_COLUMNS = ("lon", "long", "lng", "longitude", "lon_deg", "longitude (deg)", "lambda")

_SUFFIXES = {".csv": "csv", ".txt": "csv", ".geojson": "geojson", ".json": "geojson",
             ".gpx": "gpx"}  # fmt: skip
_NAME_PROPERTIES = ("name", "Name", "NAME", "label", "id", "point")


@dataclass(frozen=True)
class FieldPoint:
    """One point read from a file.

    ``where`` says where it is in the file (``"row 3"``, ``"feature 2"``, ``"waypoint 4"``);
    ``name`` is ``None`` when the point has none. A geographic point has ``lat``/``lon``
    (WGS84 degrees) and ``crs`` ``None``; a grid point has ``easting``/``northing`` in
    ``crs``'s unit, or in the document's grid when ``crs`` is ``None`` and ``grid`` is true.
    """

    where: str
    name: str | None
    lat: float | None = None
    lon: float | None = None
    easting: float | None = None
    northing: float | None = None
    crs: str | None = None

    @property
    def grid(self) -> bool:
        """True when the point is given by easting and northing."""
        return self.easting is not None


def point_format(path: str | Path) -> str:
    """``"csv"``, ``"geojson"`` or ``"gpx"`` from the file's suffix (InputError otherwise)."""
    fmt = _SUFFIXES.get(Path(path).suffix.lower())
    if fmt is None:
        raise InputError(
            "unknown point file type: use .csv, .geojson (or .json) or .gpx", file=str(path)
        )
    return fmt


def read_points(path: str | Path, *, crs: str | None = None) -> list[FieldPoint]:
    """The points of a CSV, GeoJSON or GPX file (see the module docstring)."""
    fmt = point_format(path)
    try:
        raw = Path(path).read_bytes()
    except OSError as exc:
        raise InputError(f"cannot be read: {exc.strerror or exc}", file=str(path)) from None
    return read_points_text(raw, fmt, crs=crs, file=str(path))


def read_points_text(
    text: str | bytes, fmt: str, *, crs: str | None = None, file: str | None = None
) -> list[FieldPoint]:
    """The points of CSV, GeoJSON or GPX text (``fmt``; see the module docstring)."""
    if fmt == "gpx":
        from .gpx import gpx_waypoints

        if crs is not None:
            raise InputError("GPX positions are WGS84 latitude and longitude: leave out --crs",
                             file=file, field="crs")  # fmt: skip
        return [
            FieldPoint(f"waypoint {w.number}", w.name, lat=w.lat, lon=w.lon)
            for w in gpx_waypoints(text, file=file)
        ]
    if isinstance(text, bytes):
        try:
            text = text.decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            raise InputError(f"is not UTF-8 text (byte {exc.start})", file=file) from None
    if fmt == "geojson":
        return _geojson_points(text, crs, file)
    if fmt == "csv":
        return _csv_points(text, crs, file)
    raise InputError(f"unknown point file format {fmt!r}", file=file)


def _number(raw: Any, file: str | None, where: str, field: str) -> float:
    if isinstance(raw, bool):
        raise InputError(f"{where}: {field} {raw!r} is not a number", file=file, field=field)
    try:
        value = float(raw.strip() if isinstance(raw, str) else raw)
    except (TypeError, ValueError):
        raise InputError(f"{where}: {field} {raw!r} is not a number", file=file,
                         field=field) from None  # fmt: skip
    if not math.isfinite(value):
        raise InputError(f"{where}: {field} {raw!r} is not a finite number", file=file,
                         field=field)  # fmt: skip
    return value


def _checked(point: FieldPoint, file: str | None) -> FieldPoint:
    if point.lat is not None and not -90.0 <= point.lat <= 90.0:
        raise InputError(f"{point.where}: latitude {point.lat} is outside -90..90 degrees",
                         file=file, field="lat")  # fmt: skip
    if point.lon is not None and not -180.0 <= point.lon <= 180.0:
        raise InputError(f"{point.where}: longitude {point.lon} is outside -180..180 degrees",
                         file=file, field="lon")  # fmt: skip
    return point


# --------------------------------------------------------------------------------------------
# CSV


def _column(header: list[str], names: tuple[str, ...]) -> int | None:
    folded = [h.strip().strip('"').lower() for h in header]
    for name in names:
        if name in folded:
            return folded.index(name)
    return None


def _csv_rows(text: str, file: str | None) -> list[list[str]]:
    # the separator is the one the header row uses most (names in the rows may hold any)
    header = next((line for line in text.splitlines() if line.strip()), "")
    delimiter = max(",;\t", key=header.count)
    try:
        rows = [r for r in csv.reader(io.StringIO(text), delimiter=delimiter)
                if any(c.strip() for c in r)]  # fmt: skip
    except csv.Error as exc:
        raise InputError(f"is not readable CSV: {exc}", file=file) from None
    if not rows:
        raise InputError("has no rows", file=file)
    return rows


def _csv_points(text: str, crs: str | None, file: str | None) -> list[FieldPoint]:
    rows = _csv_rows(text, file)
    header = rows[0]
    cols = {key: _column(header, names) for key, names in (
        ("name", NAME_COLUMNS), ("easting", EASTING_COLUMNS), ("northing", NORTHING_COLUMNS),
        ("lat", LAT_COLUMNS), ("lon", LON_COLUMNS))}  # fmt: skip
    grid = cols["easting"] is not None and cols["northing"] is not None
    geographic = cols["lat"] is not None and cols["lon"] is not None
    if not grid and not geographic:
        raise InputError(
            "the header row names no easting and northing nor lat and lon columns "
            f"(it reads {', '.join(h.strip() for h in header)})", file=file, field="header",
        )  # fmt: skip
    if not grid and crs is not None:
        raise InputError("lat and lon are WGS84 degrees: --crs is for easting and northing",
                         file=file, field="crs")  # fmt: skip
    keys = ("easting", "northing") if grid else ("lat", "lon")
    out = []
    for k, row in enumerate(rows[1:], start=2):
        where = f"row {k}"
        values = {}
        for key in keys:
            i = cols[key]
            assert i is not None
            if i >= len(row) or not row[i].strip():
                raise InputError(f"{where}: no {header[i].strip()} value", file=file,
                                 field=header[i].strip())  # fmt: skip
            values[key] = _number(row[i], file, where, header[i].strip())
        i = cols["name"]
        name = row[i].strip() if i is not None and i < len(row) and row[i].strip() else None
        out.append(_checked(FieldPoint(where, name, crs=crs if grid else None, **values), file))
    return out


# --------------------------------------------------------------------------------------------
# GeoJSON


def _feature_name(props: Any) -> str | None:
    if not isinstance(props, dict):
        return None
    for key in _NAME_PROPERTIES:
        value = props.get(key)
        if isinstance(value, str | int) and not isinstance(value, bool) and str(value).strip():
            return str(value).strip()
    if props.get("kind") == "station" and isinstance(props.get("index"), int):
        return str(props["index"])
    return None


def _features(data: Any, file: str | None) -> list[Any]:
    if not isinstance(data, dict):
        raise InputError("is not a GeoJSON object", file=file)
    if data.get("type") == "FeatureCollection":
        features = data.get("features")
        if not isinstance(features, list):
            raise InputError("has no features list", file=file, field="features")
        return features
    if data.get("type") == "Feature":
        return [data]
    raise InputError("is not a GeoJSON FeatureCollection or Feature", file=file, field="type")


def _geojson_points(text: str, crs: str | None, file: str | None) -> list[FieldPoint]:
    try:
        data = json.loads(text)
    except (json.JSONDecodeError, RecursionError) as exc:
        raise InputError(f"is not valid JSON: {exc}", file=file) from None
    out = []
    for k, feature in enumerate(_features(data, file), start=1):
        where = f"feature {k}"
        geom = feature.get("geometry") if isinstance(feature, dict) else None
        if not isinstance(geom, dict) or geom.get("type") != "Point":
            continue
        coords = geom.get("coordinates")
        if not isinstance(coords, list) or len(coords) < 2:
            raise InputError(f"{where}: a Point needs two coordinates", file=file,
                             field="coordinates")  # fmt: skip
        x = _number(coords[0], file, where, "coordinates")
        y = _number(coords[1], file, where, "coordinates")
        name = _feature_name(feature.get("properties"))
        if crs is None:
            out.append(_checked(FieldPoint(where, name, lat=y, lon=x), file))
        else:
            out.append(FieldPoint(where, name, easting=x, northing=y, crs=crs))
    return out
