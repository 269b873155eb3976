"""Models kept in binary form in the user's cache folder, so a command need not parse text.

A model file (shipped or installed) is parsed and validated by :mod:`geo.model_files` once;
its arrays (breaks and the piecewise-polynomial coefficients, float64, byte for byte) and
descriptive fields are then kept as one ``.npz`` file in the cache folder:
``$LODELINE_CACHE``, else ``$XDG_CACHE_HOME/lodeline``, else ``~/.cache/lodeline``.

The cached form is used only when it was made from the same source file: the same path, size,
modification time and SHA-256 of its first 64 KiB, all stored inside the cached file and
compared on reading. Anything else (no cache, another key, a file that does not read, arrays
of the wrong shape) means the text is parsed again and the cache rewritten; a cache folder that
cannot be written is simply not used. Either way the numbers are those of the text file: the
arrays are stored and read back exactly (no pickling, no conversion).
"""

from __future__ import annotations

import hashlib
import json
import os
from pathlib import Path

import numpy as np

from .synthesis import SphericalHarmonicModel

#: Bump when the layout of a cached file changes (older files are then rebuilt).
CACHE_FORMAT = 1
_HEAD_BYTES = 64 * 1024


def cache_dir() -> Path:
    """The folder of cached models (not created here)."""
    env = os.environ
    if env.get("LODELINE_CACHE"):
        return Path(env["LODELINE_CACHE"])
    if env.get("XDG_CACHE_HOME"):
        return Path(env["XDG_CACHE_HOME"]) / "lodeline"
    return Path.home() / ".cache" / "lodeline"


def _key(path: str, fmt: str, name: str, title: str | None, mtime_ns: int, size: int) -> str:
    """What a cached model must have been made from (path, format, names, size, time, and the
    hash of the file's first 64 KiB)."""
    with open(path, "rb") as fh:
        head = hashlib.sha256(fh.read(_HEAD_BYTES)).hexdigest()
    return json.dumps([CACHE_FORMAT, os.path.abspath(path), fmt, name, title, mtime_ns, size, head])


def _cache_file(key: str, name: str) -> Path:
    return cache_dir() / f"{name}-{hashlib.sha256(key.encode()).hexdigest()[:20]}.npz"


def load_cached(
    path: str, fmt: str, name: str, title: str | None, mtime_ns: int, size: int
) -> SphericalHarmonicModel:
    """The model of the file ``path`` (as :func:`geo.model_files.read_model_file` reads it),
    from the cache when a cached form of this very file exists, else parsed and cached."""
    try:
        key = _key(path, fmt, name, title, mtime_ns, size)
    except OSError:
        key = None
    if key is not None:
        cached = _read(_cache_file(key, name), key)
        if cached is not None:
            return cached
    from .model_files import read_model_file

    model = read_model_file(path, name=name, title=title, fmt=fmt)
    if key is not None:
        _write(_cache_file(key, name), key, model)
    return model


def _read(file: Path, key: str) -> SphericalHarmonicModel | None:
    """The cached model in ``file`` if it was made with ``key`` and reads whole, else None."""
    try:
        with np.load(file, allow_pickle=False) as data:
            if str(data["key"]) != key:
                return None
            text = json.loads(str(data["text"]))
            breaks = np.array(data["breaks"], dtype=np.float64)
            coeffs = np.array(data["coeffs"], dtype=np.float64)
        return SphericalHarmonicModel(
            name=text["name"],
            title=text["title"],
            nmax=int(text["nmax"]),
            breaks=breaks,
            coeffs=coeffs,
            source=text["source"],
            meta=text["meta"],
        )
    except Exception:  # noqa: BLE001 - a cache that does not read is never trusted
        return None


def _write(file: Path, key: str, model: SphericalHarmonicModel) -> None:
    """Keep ``model`` in ``file`` (atomically; a folder that cannot be written is skipped)."""
    import io

    from .atomic import write_atomic
    from .errors import LodelineError

    text = {
        "name": model.name,
        "title": model.title,
        "nmax": model.nmax,
        "source": model.source,
        "meta": model.meta,
    }
    buffer = io.BytesIO()
    try:
        np.savez(
            buffer,
            key=np.array(key),
            text=np.array(json.dumps(text)),
            breaks=model.breaks,
            coeffs=model.coeffs,
        )
        file.parent.mkdir(parents=True, exist_ok=True)
        for old in file.parent.glob(f"{model.name}-*.npz"):  # made from an earlier file
            if old.name != file.name:
                old.unlink()
        write_atomic(file, buffer.getvalue(), durable=False)
    except (OSError, TypeError, ValueError, LodelineError):
        pass  # not kept: the next command parses the text again
