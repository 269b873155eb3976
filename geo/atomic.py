"""Atomic file output: one file, or several all-or-nothing.

:func:`write_atomic` writes one file: a temporary file in the target's folder, flushed and
fsynced, then renamed over the target, so a crash never leaves a half-written file.
Optionally the previous file is kept as ``NAME.bak`` and an existing file is refused unless
``overwrite`` is true.

:func:`write_all` writes several files that belong together (a GeoJSON and its CSVs, a
document and its exchange files) all-or-nothing:

1. every target is checked first: no two name the same file, none is one of ``inputs``
   (the same file after resolving links), none exists unless ``overwrite``, each has a
   folder and is not itself a folder;
2. every file is written to its temporary file beside its target and fsynced; if any of
   them fails (a full disk, no permission), every temporary file is removed, no target is
   touched, and :class:`geo.errors.OutputError` names the file that failed;
3. only then are the targets replaced, one rename each; should a rename fail, the targets
   already replaced are put back as they were (from hard links made beforehand), so either
   every target holds its new text or every target is as it was.

Every failure is an :class:`geo.errors.OutputError` (or :class:`OutputExistsError`) naming the
file, never an ``OSError``.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path

from .errors import OutputError, OutputExistsError

__all__ = ["AtomicStream", "check_targets", "same_file", "write_all", "write_atomic"]

PathLike = str | os.PathLike[str]


def write_atomic(
    path: PathLike,
    data: str | bytes,
    *,
    overwrite: bool = True,
    backup: bool = False,
    encoding: str = "utf-8",
    durable: bool = True,
) -> Path:
    """Write ``data`` to ``path`` atomically and return the path.

    ``overwrite=False`` raises :class:`OutputExistsError` when ``path`` exists (the command
    line maps this to "use --force"). ``backup=True`` copies an existing file to
    ``path + ".bak"`` before replacing it. A destination that cannot be written raises
    :class:`OutputError` naming the file (no temporary file is left behind).
    ``durable=False`` skips the fsyncs: the file is still replaced whole (a rename), and
    survives the program being killed, but not the machine losing power (for a file
    rewritten several times a second, such as a recovery file).
    """
    return write_all(
        [(path, data)], overwrite=overwrite, backup=backup, encoding=encoding, durable=durable
    )[0]


def same_file(a: PathLike, b: PathLike) -> bool:
    """True when ``a`` and ``b`` are one file (after resolving links; for a path that does
    not exist yet, when both resolve to the same name)."""
    try:
        return os.path.samefile(a, b)
    except OSError:
        return Path(a).resolve() == Path(b).resolve()


@dataclass
class _Pending:
    target: Path
    payload: bytes
    temp: str | None = None
    saved: str | None = None  # a hard link to the previous file, to put it back
    existed: bool = False
    replaced: bool = False


def write_all(
    outputs: Sequence[tuple[PathLike, str | bytes]],
    *,
    overwrite: bool = False,
    backup: bool = False,
    inputs: Iterable[PathLike] = (),
    encoding: str = "utf-8",
    durable: bool = True,
) -> list[Path]:
    """Write every ``(path, data)`` of ``outputs`` all-or-nothing; return the paths.

    ``overwrite=False`` refuses (nothing written) when any target exists; ``backup=True``
    keeps each existing target as ``NAME.bak``; ``inputs`` are files the outputs were made
    from, which no output may be; ``durable=False`` skips the fsyncs (see
    :func:`write_atomic`). See the module docstring for the order of the steps.
    Raises :class:`OutputExistsError` or :class:`OutputError` naming the file.
    """
    pending = [
        _Pending(Path(p), d.encode(encoding) if isinstance(d, str) else d) for p, d in outputs
    ]
    _check_targets(pending, overwrite, list(inputs))
    try:
        for item in pending:
            _write_temp(item, durable)
        if backup:
            for item in pending:
                if item.target.exists():
                    _copy_backup(item.target)
        _replace_all(pending)
    finally:
        for item in pending:
            for name in (item.temp, item.saved):
                if name is not None:
                    with contextlib.suppress(OSError):
                        os.unlink(name)
    for folder in {_folder(item.target) for item in pending} if durable else ():
        _sync_folder(folder)
    return [item.target for item in pending]


def check_targets(
    paths: Sequence[PathLike], *, overwrite: bool = False, inputs: Iterable[PathLike] = ()
) -> None:
    """Refuse, before any work is done, outputs :func:`write_all` would refuse (step 1 of the
    module docstring): named twice, one of ``inputs``, a folder, in no folder, or existing
    without ``overwrite``. Raises :class:`OutputExistsError` or :class:`OutputError`."""
    _check_targets([_Pending(Path(p), b"") for p in paths], overwrite, list(inputs))


def _folder(target: Path) -> Path:
    return target.parent if str(target.parent) else Path(".")


def _check_targets(pending: list[_Pending], overwrite: bool, inputs: list[PathLike]) -> None:
    seen: list[Path] = []
    for item in pending:
        target, name = item.target, str(item.target)
        if any(same_file(target, other) for other in seen):
            raise OutputError("is named twice among the outputs", file=name)
        seen.append(target)
        source = next((p for p in inputs if same_file(target, p)), None)
        if source is not None:
            raise OutputError(
                f"is the input {source}: give the output another name (nothing written)",
                file=name,
            )
        if target.is_dir():
            raise OutputError("cannot be written: it is a directory", file=name)
        if not _folder(target).is_dir():
            raise OutputError(f"cannot be written: no folder {_folder(target)}", file=name)
    if not overwrite:
        for item in pending:
            if item.target.exists():
                raise OutputExistsError(
                    "exists; not overwritten (give --force to replace it)", file=str(item.target)
                )


def _write_temp(item: _Pending, durable: bool = True) -> None:
    """Write the payload to a temporary file beside the target (and fsync it)."""
    target = item.target
    try:
        fd, item.temp = tempfile.mkstemp(
            prefix=f".{target.name}.", suffix=".tmp", dir=_folder(target)
        )
        with os.fdopen(fd, "wb") as handle:
            handle.write(item.payload)
            handle.flush()
            if durable:
                os.fsync(handle.fileno())
        if target.exists():
            shutil.copymode(target, item.temp)
        else:
            os.chmod(item.temp, 0o644)
    except OSError as exc:
        raise OutputError(
            f"cannot be written: {exc.strerror or exc} (no file was replaced)", file=str(target)
        ) from None


def _copy_backup(target: Path) -> None:
    try:
        shutil.copy2(target, target.with_name(target.name + ".bak"))
    except OSError as exc:
        raise OutputError(
            f"cannot keep the previous file as .bak: {exc.strerror or exc} (no file was replaced)",
            file=str(target),
        ) from None


def _replace_all(pending: list[_Pending]) -> None:
    """Rename every temporary file over its target; on a failure put back what was replaced."""
    for item in pending:
        item.existed = item.target.exists()
        if item.existed:
            saved = f"{item.temp}.previous"
            with contextlib.suppress(OSError):  # no hard links here: nothing to put back
                os.link(item.target, saved)
                item.saved = saved
    for item in pending:
        try:
            os.replace(item.temp, item.target)  # type: ignore[arg-type]
        except OSError as exc:
            _put_back(pending)
            raise OutputError(
                f"cannot be written: {exc.strerror or exc} (no file was replaced)",
                file=str(item.target),
            ) from None
        item.temp, item.replaced = None, True


def _put_back(pending: list[_Pending]) -> None:
    for item in pending:
        if not item.replaced:
            continue
        with contextlib.suppress(OSError):
            if item.saved is not None:
                os.replace(item.saved, item.target)
                item.saved = None
            elif not item.existed:
                os.unlink(item.target)


def _sync_folder(folder: Path) -> None:
    """Make the renames durable where the platform allows it."""
    try:
        dir_fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dir_fd)
    except OSError:
        pass
    finally:
        os.close(dir_fd)


class AtomicStream:
    """One output file written piece by piece (a long CSV) and put in place whole at the end.

    The text goes, as it comes, to a temporary file beside the target (or, when that folder
    cannot take one, in the system's temporary folder), so memory holds only the piece being
    written. :meth:`commit` then checks the target exactly as :func:`write_all` does (an
    input, a directory, no folder, an existing file without ``overwrite``: nothing written),
    fsyncs and renames; :meth:`discard` (or leaving a ``with`` block by an exception) removes
    the temporary file and leaves the target as it was. Failures are :class:`OutputError`
    naming the target.
    """

    def __init__(
        self,
        path: PathLike,
        *,
        overwrite: bool = False,
        inputs: Iterable[PathLike] = (),
        encoding: str = "utf-8",
        durable: bool = True,
    ) -> None:
        self._item = _Pending(Path(path), b"")
        self._overwrite = overwrite
        self._inputs = list(inputs)
        self._durable = durable
        folder = _folder(self._item.target)
        try:
            fd, self._temp = tempfile.mkstemp(
                prefix=f".{self._item.target.name}.", suffix=".tmp", dir=folder
            )
            self._beside = True
        except OSError:  # no such folder, or not writable: commit says which
            fd, self._temp = tempfile.mkstemp(suffix=".tmp")
            self._beside = False
        self._handle = os.fdopen(fd, "w", encoding=encoding, newline="")

    def write(self, text: str) -> None:
        """Append ``text`` to the temporary file."""
        try:
            self._handle.write(text)
        except OSError as exc:
            self.discard()
            raise OutputError(
                f"cannot be written: {exc.strerror or exc} (no file was replaced)",
                file=str(self._item.target),
            ) from None

    def commit(self) -> Path:
        """Check the target, make the text durable and rename it over the target."""
        item = self._item
        try:
            _check_targets([item], self._overwrite, self._inputs)
            self._handle.flush()
            if not self._beside:  # copy it beside the target: a rename across folders is not
                _write_temp(item, self._durable)  # atomic (an unwritable folder fails here)
                with open(item.temp, "ab") as out, open(self._temp, "rb") as src:  # type: ignore[arg-type]
                    shutil.copyfileobj(src, out, 1 << 20)
                    out.flush()
                    if self._durable:
                        os.fsync(out.fileno())
            else:
                if self._durable:
                    os.fsync(self._handle.fileno())
                item.temp = self._temp
                if item.target.exists():
                    shutil.copymode(item.target, item.temp)
                else:
                    os.chmod(item.temp, 0o644)
            self._handle.close()
            _replace_all([item])
        except OSError as exc:
            raise OutputError(
                f"cannot be written: {exc.strerror or exc} (no file was replaced)",
                file=str(item.target),
            ) from None
        finally:
            self.discard()
        if self._durable:
            _sync_folder(_folder(item.target))
        return item.target

    def discard(self) -> None:
        """Remove the temporary file(s); the target is not touched."""
        with contextlib.suppress(OSError):
            self._handle.close()
        for name in (self._temp, self._item.temp, self._item.saved):
            if name is not None:  # (a temporary file already renamed is gone)
                with contextlib.suppress(OSError):
                    os.unlink(name)
        self._temp = self._item.temp = self._item.saved = None

    def __enter__(self) -> AtomicStream:
        return self

    def __exit__(self, exc_type: object, exc: object, tb: object) -> None:
        self.discard()
