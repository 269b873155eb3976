"""Reading input files within bounds: regular files only, never more than a stated size.

A document or a model file named by the user could be a device (``/dev/zero`` reads without
end), a FIFO (opening it blocks until a writer comes) or simply far larger than any real one.
:func:`read_regular_file` opens without blocking, refuses anything but a regular file after
links, and reads at most the stated number of bytes.
"""

from __future__ import annotations

import os
import stat

__all__ = ["FileRefusedError", "read_regular_file"]


class FileRefusedError(Exception):
    """A file that is not read: the message says why (the caller names the file)."""


def read_regular_file(
    path: str | os.PathLike[str], max_bytes: int, *, what: str = "file", head: int | None = None
) -> bytes:
    """The bytes of ``path``: a regular file (after links) of at most ``max_bytes``.

    ``head`` reads only the first ``head`` bytes (any size of file is then accepted). Raises
    :class:`FileRefusedError` for a device, pipe or folder, a larger file, or an OS error.
    """
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise FileRefusedError(f"cannot be read: {exc.strerror or exc}") from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            raise FileRefusedError("is not a regular file (a device, pipe or folder)")
        limit = max_bytes if head is None else head
        if head is None and info.st_size > max_bytes:
            raise FileRefusedError(_too_large(info.st_size, max_bytes, what))
        chunks, total = [], 0
        while total < limit + 1 and (chunk := os.read(fd, min(1 << 20, limit + 1 - total))):
            chunks.append(chunk)
            total += len(chunk)
        if head is None and total > max_bytes:  # it grew while being read
            raise FileRefusedError(_too_large(total, max_bytes, what))
        return b"".join(chunks)[:limit]
    except OSError as exc:
        raise FileRefusedError(f"cannot be read: {exc.strerror or exc}") from None
    finally:
        os.close(fd)


def read_tail(path: str | os.PathLike[str], nbytes: int) -> bytes:
    """The last ``nbytes`` of a regular file (see :func:`read_regular_file`)."""
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise FileRefusedError(f"cannot be read: {exc.strerror or exc}") from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            raise FileRefusedError("is not a regular file (a device, pipe or folder)")
        os.lseek(fd, max(0, info.st_size - nbytes), os.SEEK_SET)
        return os.read(fd, nbytes)
    except OSError as exc:
        raise FileRefusedError(f"cannot be read: {exc.strerror or exc}") from None
    finally:
        os.close(fd)


def _too_large(size: int, limit: int, what: str) -> str:
    return f"is {size / 1048576:.1f} MB: a {what} is at most {limit // 1048576} MB"
