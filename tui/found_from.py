"""The desk's "found corners from a point file": ask for the file and the rule, show the
matches, and apply them to the document as one undoable edit (saving stays with the user).

Reading and matching are :mod:`geo.point_files` and :mod:`geo.found_import`; the listing is
the command line's (:func:`tui.commands.found.report_lines`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from .dialogs.choice import ChoiceDialog
from .dialogs.file_prompt import FileNamePrompt

#: Point files the prompt accepts.
POINT_SUFFIXES = (".csv", ".gpx", ".geojson", ".json", ".txt")
#: The distance of a nearest match offered in the desk (metres), as the command's default.
WITHIN_M = 5.0


def _plan(app: Any, path: Path, rule: str) -> Any:
    """The :class:`geo.found_import.FoundPlan` of ``path`` for the workspace's document."""
    from lodeline.geo.document import document_from_dict
    from lodeline.geo.found_import import plan_found
    from lodeline.geo.north import convert_document
    from lodeline.geo.point_files import read_points

    from .workspace import saveable_document

    ws = app.workspace
    name = ws.path.name if ws.path else None
    doc = document_from_dict(saveable_document(ws.doc), file=name)
    conv = convert_document(doc, file=name)
    points = read_points(path)
    return plan_found(conv, points, match=rule, within_m=WITHIN_M, file=str(path))


def _offer(app: Any, path: Path, plan: Any) -> None:
    from lodeline.geo.found_import import with_found

    from .commands.found import report_lines

    text = "\n".join(report_lines(plan, wrote=True))
    if not plan.matched:
        app.notify(f"Found from {path.name}: {text}", severity="warning", timeout=10)
        return

    def answered(answer: str | None) -> None:
        if answer != "apply":
            return
        ws = app.workspace
        ws.replace(with_found(ws.doc, plan), label=f"found corners from {path.name}")
        app.desk.reload()
        app.notify(f"{len(plan.matched)} found corners set from {path.name} (Ctrl+Z undoes).")

    app.push_screen(
        ChoiceDialog(
            f"Found corners from {path.name}",
            text,
            [("apply", "Apply them"), ("cancel", "Keep the document as it is")],
        ),
        answered,
    )


def found_from_file(app: Any) -> None:
    """Ask for a point file, then the matching rule; show and offer the matches."""
    from lodeline.geo.errors import LodelineError

    def ruled(path: Path, rule: str | None) -> None:
        if rule not in ("name", "nearest"):
            return
        try:
            plan = _plan(app, path, rule)
        except LodelineError as err:
            app.notify(f"⚠ Found from {path.name}: {err}", severity="error", timeout=8)
            return
        _offer(app, path, plan)

    def chosen(path: Path | None) -> None:
        if path is None:
            return
        app.push_screen(
            ChoiceDialog(
                "Match the points",
                "Match each point by its name or corner number, or to the marched station "
                f"within {WITHIN_M:g} m of it?",
                [("name", "By name or number"), ("nearest", f"Within {WITHIN_M:g} m")],
            ),
            lambda rule: ruled(path, rule),
        )

    app.push_screen(
        FileNamePrompt(
            "Found corners from a point file",
            "points.gpx",
            POINT_SUFFIXES,
            companions=lambda path: [],
            verb="read",
        ),
        chosen,
    )
