"""Atomic file output.

A file is written to a temporary file in the target's folder, flushed and fsynced, then
renamed over the target, so a crash never leaves a half-written file. Optionally the previous
file is kept as ``NAME.bak`` and an existing file is refused unless ``overwrite`` is true.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path

from geo.errors import OutputError, OutputExistsError


def write_atomic(
    path: str | os.PathLike[str],
    data: str | bytes,
    *,
    overwrite: bool = True,
    backup: bool = False,
    encoding: str = "utf-8",
) -> Path:
    """Write ``data`` to ``path`` atomically and return the path.

    ``overwrite=False`` raises :class:`OutputExistsError` when ``path`` exists (the command
    line maps this to "use --force"). ``backup=True`` copies an existing file to
    ``path + ".bak"`` before replacing it. A destination that cannot be written raises
    :class:`OutputError` naming the file (no temporary file is left behind).
    """
    target = Path(path)
    if target.exists() and not overwrite:
        raise OutputExistsError(
            "exists; not overwritten (give --force to replace it)", file=str(target)
        )
    payload = data.encode(encoding) if isinstance(data, str) else data
    folder = target.parent if str(target.parent) else Path(".")
    try:
        return _replace(target, folder, payload, backup)
    except OSError as exc:
        raise OutputError(f"cannot be written: {exc.strerror or exc}", file=str(target)) from None


def _replace(target: Path, folder: Path, payload: bytes, backup: bool) -> Path:
    fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(payload)
            handle.flush()
            os.fsync(handle.fileno())
        if backup and target.exists():
            shutil.copy2(target, target.with_name(target.name + ".bak"))
        if target.exists():
            shutil.copymode(target, tmp_name)
        else:
            os.chmod(tmp_name, 0o644)
        os.replace(tmp_name, target)
    except BaseException:
        if os.path.exists(tmp_name):
            os.unlink(tmp_name)
        raise
    try:  # make the rename itself durable where the platform allows it
        dir_fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return target
    try:
        os.fsync(dir_fd)
    except OSError:
        pass
    finally:
        os.close(dir_fd)
    return target
