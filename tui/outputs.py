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
}


def write_output(
    kind: str, data: Mapping[str, Any], path: Path, *, file: Path | None = None
) -> list[Path]:
    """Write output ``kind`` of document ``data`` to ``path`` (the user has already agreed to
    replace an existing file); return the files written. Raises LodelineError."""
    from geo.document import document_from_dict
    from geo.errors import LodelineError
    from tui.workspace import saveable_document

    document_from_dict(saveable_document(data), file=file.name if file else None)
    try:
        from geo import export
    except ImportError:
        raise LodelineError("export and report are not available in this build") from None
    raise LodelineError(f"{kind}: {export!r}")
