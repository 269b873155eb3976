"""``lodeline field``: the geomagnetic field at a place and date, or for every row of a CSV.

One point::

    lodeline field --lat 41.2 --lon -77.9 --date 1931-07-04 [--height M] [--model NAME|auto]
                   [--json]

A batch::

    lodeline field --csv IN.csv [--out OUT.csv] [--model NAME|auto] [--force] [--skip-bad]

The CSV needs a header with ``lat``, ``lon``, ``date`` and optionally ``height_m`` (any
order). The output repeats the input columns and adds the result columns (``RESULT_KEYS``
from ``model`` on). A bad row stops the run (exit 2, nothing written) unless ``--skip-bad``
is given, which writes the good rows and lists the bad ones on stderr.
"""

from __future__ import annotations

import argparse
import re
import sys

from .common import add_json_options, model_name

#: Keys of the ``--json`` object, in order (also the CSV result columns from ``model`` on).
RESULT_KEYS = (
    "lat",
    "lon",
    "date",
    "height_m",
    "model",
    "declination_deg",
    "inclination_deg",
    "horizontal_nT",
    "north_nT",
    "east_nT",
    "down_nT",
    "total_nT",
    "declination_rate_deg_per_year",
    "inclination_rate_deg_per_year",
    "total_rate_nT_per_year",
    "declination_sigma_deg",
    "warnings",
)
CSV_INPUT = ("lat", "lon", "date")
CSV_OPTIONAL = ("height_m",)


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``field`` subcommand."""
    p = subparsers.add_parser(
        "field",
        help="geomagnetic field (declination, inclination, intensities) at a place and date",
        description=(
            "Print the main geomagnetic field at a place and date from a field model: "
            "declination D and inclination I, the components, their yearly change, the "
            "model used and the declination uncertainty where one is published. Dates are "
            "ISO calendar dates (1931-07-04) or decimal years (2025.5)."
        ),
    )
    p.add_argument("--lat", type=str, help="geodetic latitude, degrees (north positive)")
    p.add_argument("--lon", type=str, help="longitude, degrees (east positive; 0..360 accepted)")
    p.add_argument("--date", type=str, help="ISO date YYYY-MM-DD or decimal year")
    p.add_argument("--height", type=str, help="height above the ellipsoid, metres (default 0)")
    p.add_argument(
        "--model",
        default="auto",
        type=model_name,
        help="model name (see 'lodeline models') or auto (default)",
    )
    add_json_options(p)
    p.add_argument(
        "--csv",
        metavar="IN",
        help="read points from a CSV file (lat,lon,date[,height_m]); with --from/--to: write "
        "the history table to this file",
    )
    p.add_argument("--out", metavar="OUT", help="write the CSV result here (default stdout)")
    p.add_argument("--force", action="store_true", help="overwrite OUT if it exists")
    p.add_argument(
        "--skip-bad", action="store_true", help="write the good CSV rows, list bad ones on stderr"
    )
    from .field_history import add_history_options

    add_history_options(p)
    p.set_defaults(func=run)


#: A number as the command line reads one: ASCII digits, a point, an exponent (no "1_0").
_NUMBER = re.compile(
    r"\s*[+-]?(?:(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?|nan|inf|infinity)\s*", re.ASCII | re.I
)


def _malformed(exc: Exception, path: str, line: int):
    """The error for CSV text that does not read; ``line``: where the bad row starts."""
    from lodeline.geo.errors import InputError

    if "unexpected end of data" in str(exc):
        return InputError(
            'a quoted field opened here is never closed (a " is missing)', file=path, line=line
        )
    return InputError(f"malformed CSV ({exc})", file=path, line=line)


def _number(text: str, field: str, **where) -> float:
    import math

    from lodeline.geo.errors import InputError, clip

    if not _NUMBER.fullmatch(text or ""):  # float() would take 1_0 and full-width digits
        raise InputError(f"'{clip(text, 40)}' is not a number", field=field, **where)
    value = float(text)
    if not math.isfinite(value):
        raise InputError(f"'{text}' is not a finite number", field=field, **where)
    return value


def _date(text: str, **where):
    from lodeline.geo.dates import parse_date
    from lodeline.geo.errors import LodelineError

    try:
        day, year = parse_date(text)
    except LodelineError as err:
        raise err.located(field="date", **where) from None
    label = day.isoformat() if day is not None else text.strip()
    return label, year


def _dm(value: float, *, signed: bool = True) -> str:
    """Degrees and decimal minutes, e.g. -6° 44.5'."""
    import math

    if not math.isfinite(value):
        return "undefined"
    sign = "-" if value < 0 else ("+" if signed else "")
    total = round(abs(value) * 60.0, 1)
    deg, minutes = divmod(total, 60.0)
    return f"{sign}{int(deg)}° {minutes:04.1f}'"


def _shown_lon(given: float, normalised: float) -> float:
    """The longitude as shown: one given in 180..360 is brought to -180..0 in decimal
    arithmetic on the number as written, so 287.1 reads -72.9, not -72.89999999999998 (the
    field is computed at the float, which differs by less than 1e-13 degrees)."""
    if given <= 180.0:
        return normalised
    from decimal import Decimal

    return float(Decimal(repr(given)) - 360)


def _record(result, i: int, lat: float, lon: float, label: str, height: float) -> dict:
    def val(name: str) -> float:
        return float(getattr(result, name).ravel()[i])

    rec = {"lat": lat, "lon": lon, "date": label, "height_m": height, "model": result.model_of(i)}
    for key in RESULT_KEYS[5:-1]:
        rec[key] = val(key)
    import math

    if not math.isfinite(rec["declination_sigma_deg"]):
        rec["declination_sigma_deg"] = None
    rec["warnings"] = list(result.warnings_of(i))
    return rec


def _human(rec: dict, year: float) -> str:
    from lodeline.geo.cautions import SHORT_CAUTION

    d = rec["declination_deg"]
    inc = rec["inclination_deg"]
    side = "E" if d > 0 else ("W" if d < 0 else "")
    lat = rec["lat"]
    lon = rec["lon"]
    place = (
        f"{abs(lat):.4f}° {'N' if lat >= 0 else 'S'}, {abs(lon):.4f}° {'E' if lon >= 0 else 'W'}"
    )
    sigma = rec["declination_sigma_deg"]
    sigma_text = (
        f"±{sigma:.2f}° (1σ, published error model of {rec['model']})"
        if sigma is not None
        else f"none published for {rec['model']}"
    )

    def nt(key: str) -> str:
        return f"{rec[key]:12.1f} nT"

    def rate_dm(key: str) -> str:
        v = rec[key]
        return f"{_dm(v)}/yr ({v:+.4f}°/yr)"

    lines = [
        f"Field at {place}, height {rec['height_m']:g} m, date {rec['date']} "
        f"(decimal year {year:.4f})",
        f"  model              {rec['model']}",
        f"  declination D      {_dm(abs(d), signed=False)} {side}  ({d:+.4f}°)   "
        f"change {rate_dm('declination_rate_deg_per_year')}",
        f"  inclination I      {_dm(inc)}  ({inc:+.4f}°)   "
        f"change {rate_dm('inclination_rate_deg_per_year')}",
        f"  horizontal H  {nt('horizontal_nT')}",
        f"  north X       {nt('north_nT')}",
        f"  east Y        {nt('east_nT')}",
        f"  down Z        {nt('down_nT')}",
        f"  total F       {nt('total_nT')}   change {rec['total_rate_nT_per_year']:+.1f} nT/yr",
        f"  D uncertainty      {sigma_text}",
        "  warnings           " + ("; ".join(rec["warnings"]) if rec["warnings"] else "none"),
        f"Caution: {SHORT_CAUTION}",
    ]
    return "\n".join(lines) + "\n"


def _single(args) -> int:
    from lodeline.geo.errors import InputError
    from lodeline.geo.magnetic import field_at, validate_position

    missing = [name for name in ("lat", "lon", "date") if getattr(args, name) is None]
    if missing:
        raise InputError(
            "give --lat, --lon and --date (or --csv FILE); missing: "
            + ", ".join("--" + m for m in missing)
        )
    lat = _number(args.lat, "--lat")
    lon = _number(args.lon, "--lon")
    height = _number("0" if args.height is None else args.height, "--height")
    label, year = _date(args.date)
    lat_a, lon_a, _h = validate_position(lat, lon, height)
    result = field_at(lat=lat, lon=lon, year=year, height_m=height, model=args.model)
    rec = _record(result, 0, float(lat_a), _shown_lon(lon, float(lon_a)), label, height)
    if args.json:
        from .common import print_json

        print_json(rec, pretty=args.pretty)
    else:
        sys.stdout.write(_human(rec, year))
    return 0


def _csv_value(value) -> str:
    if value is None:
        return ""
    if isinstance(value, list):
        return "; ".join(value)
    if isinstance(value, float):
        return repr(value)
    return str(value)


def _batch(args) -> int:
    from .field_batch import run_batch

    return run_batch(args)


def run(args) -> int:
    """Run ``lodeline field``; returns the exit status (errors raise LodelineError)."""
    from lodeline.geo.errors import InputError

    if args.from_year is not None or args.to_year is not None or args.step is not None:
        from .field_history import run_history

        return run_history(args, _number)
    if args.csv is not None:
        if args.json:
            raise InputError("--json applies to one point; the batch writes CSV", field="--json")
        stray = [n for n in ("lat", "lon", "date", "height") if getattr(args, n) is not None]
        if stray:
            raise InputError(
                "--csv reads lat, lon, date and height_m from the file", field="--" + stray[0]
            )
        return _batch(args)
    stray = "--out" if args.out is not None else ("--skip-bad" if args.skip_bad else None)
    if stray:
        raise InputError("--out and --skip-bad go with --csv", field=stray)
    return _single(args)
