"""Files written from the application: GeoJSON, CSV and the report, through geo's writers."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any


@dataclass(frozen=True)
class OutputSpec:
    """What the file prompt says and accepts for one kind of output."""

    title: str
    suffixes: tuple[str, ...]


OUTPUTS: dict[str, OutputSpec] = {
    "geojson": OutputSpec("Export GeoJSON", (".geojson", ".json")),
    "csv": OutputSpec("Export CSV", (".csv",)),
    "report": OutputSpec("Write report", (".html", ".md")),
    "description": OutputSpec("Write description", (".txt", ".md")),
}


def companions(kind: str, path: Path) -> list[Path]:
    """Every file output ``kind`` writes for the name ``path`` (the CSV writes two)."""
    if kind == "csv":
        from lodeline.geo.export import courses_csv_path, csv_path_beside

        beside = [csv_path_beside(path, t) for t in ("plots", "events")]
        return [path, courses_csv_path(path), *(p for p in beside if p.exists())]
    return [path]


def converted(data: Mapping[str, Any], file: Path | None = None) -> Any:
    """The conversion of document ``data`` (every call must read). Raises LodelineError."""
    from lodeline.geo.document import document_from_dict
    from lodeline.geo.north import convert_document

    from .workspace import saveable_document

    name = file.name if file else None
    return convert_document(document_from_dict(saveable_document(data), file=name), file=name)


def write_output(
    kind: str,
    data: Mapping[str, Any],
    path: Path,
    *,
    file: Path | None = None,
    replace: bool = False,
) -> list[Path]:
    """Write output ``kind`` of document ``data`` to ``path``; return the files written.

    ``replace`` is true only when the user has agreed to replace the files that exist (the
    prompt asked); otherwise an existing file is refused. Every call must read: an export
    of a document with a call that does not read is refused with that call's error.
    Raises :class:`geo.errors.LodelineError`.
    """
    from lodeline.geo.document import document_from_dict
    from lodeline.geo.north import convert_document

    from .workspace import saveable_document

    name = file.name if file else None
    doc = document_from_dict(saveable_document(data), file=name)
    if kind == "report":
        from lodeline.geo.atomic import write_all
        from lodeline.geo.report import build_report

        fmt = "markdown" if path.suffix.lower() == ".md" else "html"
        text = build_report(doc, fmt=fmt, file=name)
        return write_all([(path, text)], overwrite=replace, inputs=(file,) if file else ())
    from lodeline.geo.export import write_exports

    conv = convert_document(doc, file=name)
    inputs = (file,) if file else ()  # the document itself is never replaced by an output
    if kind == "description":
        from lodeline.geo.atomic import write_all
        from lodeline.geo.deed_text import write_description

        text = write_description(conv).text
        return write_all([(path, text)], overwrite=replace, inputs=inputs)
    if kind == "geojson":
        return write_exports(conv, geojson=path, force=replace, inputs=inputs)
    return write_exports(conv, csv_path=path, force=replace, inputs=inputs)


def write_layout(
    data: Mapping[str, Any],
    path: Path,
    options: Mapping[str, str],
    *,
    file: Path | None = None,
    replace: bool = False,
) -> list[Path]:
    """Write the cruise layout across document ``data`` (a closed boundary) to ``path`` with
    the options of :class:`tui.dialogs.layout_form.LayoutForm` (see geo.layout). Raises
    :class:`geo.errors.LodelineError`."""
    from lodeline.geo.atomic import write_atomic
    from lodeline.geo.document import dumps_document
    from lodeline.geo.layout import lay_out_cruise

    lines = lay_out_cruise(
        converted(data, file),
        bearing=options["bearing"],
        spacing=options["spacing"],
        plot_spacing=options["plots"],
        north=options["north"],
    )
    fmt = "json" if path.suffix.lower() == ".json" else "toml"
    return [write_atomic(path, dumps_document(lines, fmt), overwrite=replace)]
