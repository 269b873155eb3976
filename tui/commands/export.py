"""``lodeline export DOC [--geojson OUT] [--csv OUT] [--gpx OUT] [--kml OUT] [--dxf OUT]``.

Files for GIS, GNSS receivers, globe viewers and CAD.

The positions, GeoJSON and CSV come from :mod:`geo.export` (see its module docstring for the
method and the file layouts); the CSV course table goes to ``OUT-courses.csv`` beside
``OUT.csv``. Files are written atomically and never replaced without ``--force``.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

from .common import add_adjust_option

HELP = "write the traverse as GeoJSON (RFC 7946), CSV, GPX, KML and/or DXF"


def register(subparsers: Any) -> None:
    """Add the ``export`` subcommand."""
    p = subparsers.add_parser(
        "export",
        help=HELP,
        description=(
            "Write station positions (grid CRS and WGS84), intermediate points and every "
            "course's bearings as a GeoJSON FeatureCollection and/or CSV (OUT.csv for the "
            "points, OUT-courses.csv for the courses); waypoints and a route as GPX for a "
            "handheld receiver; the figure and marks as KML; the figure in grid coordinates "
            "as DXF for drafting. Every file carries the same positions and all are written "
            "or none."
        ),
    )
    p.add_argument("document", metavar="DOC", help="traverse document (.toml or .json)")
    p.add_argument("--geojson", metavar="OUT.geojson", help="GeoJSON file to write")
    p.add_argument(
        "--csv", metavar="OUT.csv", help="CSV of the points (and OUT-courses.csv) to write"
    )
    p.add_argument("--gpx", metavar="OUT.gpx", help="GPX 1.1 file for a handheld receiver")
    p.add_argument("--kml", metavar="OUT.kml", help="KML 2.2 file for a globe viewer")
    p.add_argument("--dxf", metavar="OUT.dxf", help="DXF drawing in grid coordinates for CAD")
    add_adjust_option(p, "adjustment of the positions")
    p.add_argument("--force", action="store_true", help="replace existing output files")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Load and convert the document, write the requested files, list them."""
    from lodeline.geo.cautions import SHORT_CAUTION
    from lodeline.geo.document import load_document
    from lodeline.geo.errors import InputError
    from lodeline.geo.export import write_exports
    from lodeline.geo.north import convert_document

    if not any((args.geojson, args.csv, args.gpx, args.kml, args.dxf)):
        raise InputError("nothing to export: give --geojson, --csv, --gpx, --kml or --dxf")
    _check_destinations(args)
    doc = load_document(args.document)
    conv = convert_document(doc, file=args.document)
    written = write_exports(
        conv,
        geojson=args.geojson,
        csv_path=args.csv,
        adjust=args.adjust,
        force=args.force,
        gpx=args.gpx,
        kml=args.kml,
        dxf=args.dxf,
        inputs=(args.document,),
    )
    for path in written:
        sys.stdout.write(f"wrote {path}\n")
    sys.stdout.write(SHORT_CAUTION + "\n")
    return 0


def _check_destinations(args: argparse.Namespace) -> None:
    """Refuse, before anything is written, an output whose folder does not exist or whose
    name is a folder, so a bad second path never leaves the first file written alone."""
    from pathlib import Path

    from lodeline.geo.errors import LodelineError
    from lodeline.geo.export import courses_csv_path

    from .common import refuse_input_as_output

    targets = [Path(args.geojson)] if args.geojson else []
    if args.csv:
        targets += [Path(args.csv), courses_csv_path(args.csv)]
    targets += [Path(p) for p in (args.gpx, args.kml, args.dxf) if p]
    refuse_input_as_output(targets, [args.document])
    for target in targets:
        folder = target.parent
        if not folder.is_dir():
            raise LodelineError(f"cannot be written: no folder {folder}", file=str(target))
        if target.is_dir():
            raise LodelineError("cannot be written: it is a directory", file=str(target))
