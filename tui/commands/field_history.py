"""``lodeline field --lat --lon --from 1750 --to 2030 [--step 1] [--csv OUT]``: D over time.

The table behind the declination-history plot: every date in one call of
:func:`geo.field_history.declination_history` (one synthesis call for all the dates). Text
by default, ``--json`` one object, ``--csv OUT`` a file (``-`` for stdout). Dates no installed
model covers are listed without a value and named in a note.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

#: CSV columns of the history, in order (also the keys of each ``rows`` entry in JSON).
COLUMNS = (
    "year",
    "model",
    "declination_deg",
    "declination_rate_deg_per_year",
    "declination_sigma_deg",
)


def add_history_options(parser: Any) -> None:
    """Add ``--from``, ``--to`` and ``--step`` to the ``field`` parser."""
    parser.add_argument(
        "--from", dest="from_year", metavar="YEAR", help="first decimal year of a history table"
    )
    parser.add_argument("--to", dest="to_year", metavar="YEAR", help="last decimal year")
    parser.add_argument("--step", metavar="YEARS", help="years between rows (default 1)")


def _gaps(rows: list[dict[str, Any]]) -> list[str]:
    """Spans of uncovered dates as text ("1750–1899")."""
    out, start, prev = [], None, None
    for r in rows + [{"year": None, "model": "end"}]:
        if r["model"] is None:
            start = r["year"] if start is None else start
            prev = r["year"]
        elif start is not None:
            out.append(f"{start:g}–{prev:g}" if prev != start else f"{start:g}")
            start = None
    return out


def run_history(args: argparse.Namespace, number: Any) -> int:
    """Print or write the history table (``number`` reads a numeric option, naming it)."""
    from lodeline.geo.errors import InputError
    from lodeline.geo.field_history import declination_history, history_years

    from .common import print_json, write_output

    missing = [n for n in ("lat", "lon", "from_year", "to_year") if getattr(args, n) is None]
    if missing:
        names = {"from_year": "--from", "to_year": "--to"}
        raise InputError(
            "a history needs --lat, --lon, --from and --to; missing: "
            + ", ".join(names.get(m, "--" + m) for m in missing)
        )
    stray = next((o for o in ("date", "out") if getattr(args, o) is not None), None)
    if stray or args.skip_bad:
        raise InputError(
            "--date, --out and --skip-bad do not go with --from/--to (the history writes its "
            "CSV with --csv OUT)",
            field="--" + (stray or "skip-bad"),
        )
    lat, lon = number(args.lat, "--lat"), number(args.lon, "--lon")
    height = number("0" if args.height is None else args.height, "--height")
    years = history_years(
        number(args.from_year, "--from"),
        number(args.to_year, "--to"),
        number("1" if args.step is None else args.step, "--step"),
    )
    hist = declination_history(lat=lat, lon=lon, years=years, height_m=height, model=args.model)
    rows = hist.rows()
    gaps = _gaps(rows)
    if args.csv is not None:
        write_output(args.csv, _csv(rows), force=args.force)
    elif args.json:
        obj = {"lat": lat, "lon": lon, "height_m": height, "uncovered": gaps, "rows": rows}
        print_json(obj, pretty=getattr(args, "pretty", False))
    else:
        sys.stdout.write(_text(rows, lat, lon, gaps))
    return 0


def _csv(rows: list[dict[str, Any]]) -> str:
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(COLUMNS)
    for r in rows:
        w.writerow(
            [
                "" if r[k] is None else (repr(r[k]) if isinstance(r[k], float) else r[k])
                for k in COLUMNS
            ]
        )
    return buf.getvalue()


def _text(rows: list[dict[str, Any]], lat: float, lon: float, gaps: list[str]) -> str:
    from lodeline.geo.cautions import SHORT_CAUTION

    from .common import text_table

    table = [["year", "model", "declination", "change a year", "sigma"]]
    for r in rows:
        d, rate, s = (
            r["declination_deg"],
            r["declination_rate_deg_per_year"],
            r["declination_sigma_deg"],
        )
        table.append(
            [
                f"{r['year']:g}",
                r["model"] or "-",
                "-" if d is None else f"{d:+.3f} deg",
                "-" if rate is None else f"{rate * 60:+.2f}′",
                "-" if s is None else f"{s:.2f} deg",
            ]
        )
    lines = [f"declination at {lat:g}, {lon:g} (east positive; true = magnetic + D)"]
    lines += text_table(table, right={0, 2, 3, 4})
    if gaps:
        lines.append(
            "note: no installed model covers " + ", ".join(gaps) + " (add one with 'lodeline "
            "models add FILE', e.g. gufm1 for 1590–1990)"
        )
    lines.append(SHORT_CAUTION)
    return "\n".join(lines) + "\n"
