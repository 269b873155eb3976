"""Helpers shared by the subcommands: JSON output, output files, number formatting."""

from __future__ import annotations

import json
import math
import sys
from typing import Any


def to_jsonable(value: Any) -> Any:
    """Turn numpy scalars/arrays, tuples and NaN into plain JSON values (NaN -> null)."""
    try:
        import numpy as np
    except ImportError:  # pragma: no cover - numpy is a dependency
        np = None
    if np is not None:
        if isinstance(value, np.ndarray):
            return [to_jsonable(v) for v in value.tolist()]
        if isinstance(value, np.generic):
            value = value.item()
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [to_jsonable(v) for v in value]
    return value


def print_json(obj: Any) -> None:
    """Print ``obj`` as indented JSON on stdout."""
    json.dump(to_jsonable(obj), sys.stdout, indent=2, ensure_ascii=False, allow_nan=False)
    sys.stdout.write("\n")


def write_output(path: str | None, text: str, *, force: bool) -> None:
    """Write ``text`` to ``path`` atomically (refusing to overwrite without ``force``), or to
    stdout when ``path`` is ``None`` or ``-``."""
    if path in (None, "-"):
        sys.stdout.write(text)
        return
    from geo.atomic import write_atomic

    write_atomic(path, text, overwrite=force)
