"""The exceptions the core raises.

Every error says what was wrong and where: the file, the course number (1-based) and the
field (document key or CSV column) when they are known. The command line prints ``str(err)``
as its one-line message and exits with status 2.
"""

from __future__ import annotations

#: An error line longer than this is cut in its middle (a value echoed whole could be
#: megabytes long); :func:`clip` cuts a single value to fewer characters.
MAX_MESSAGE_CHARS = 600


def clip(value: object, limit: int = 80) -> str:
    """``value`` as text of at most ``limit`` characters, on one line: a longer text keeps
    its start and end around "…" (for echoing what the user gave in an error line)."""
    text = " ".join(str(value).split())
    if len(text) <= limit:
        return text
    head = max(1, (limit - 1) * 2 // 3)
    return text[:head] + "…" + text[len(text) - (limit - 1 - head) :]


class LodelineError(Exception):
    """Base of every error the core raises on bad input.

    Parameters
    ----------
    message:
        What is wrong, in words a user understands (list valid values where there are few).
    file:
        The file being read, if any.
    course:
        1-based course number within a traverse document, if any.
    field:
        The document key, CSV column or option concerned, if any.
    line:
        1-based line number within ``file``, if known.
    """

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        course: int | None = None,
        field: str | None = None,
        line: int | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.course = course
        self.field = field
        self.line = line

    def located(
        self,
        *,
        file: str | None = None,
        course: int | None = None,
        field: str | None = None,
        line: int | None = None,
    ) -> LodelineError:
        """Fill in location parts that are still unknown and return ``self`` (for re-raise)."""
        if self.file is None:
            self.file = file
        if self.course is None:
            self.course = course
        if self.field is None:
            self.field = field
        if self.line is None:
            self.line = line
        return self

    def __str__(self) -> str:
        parts = []
        if self.file is not None:
            parts.append(f"{self.file}:{self.line}" if self.line is not None else self.file)
        elif self.line is not None:
            parts.append(f"line {self.line}")
        if self.course is not None:
            parts.append(f"course {self.course}")
        if self.field is not None:
            parts.append(f"'{self.field}'")
        prefix = ": ".join(parts)
        line = f"{prefix}: {self.message}" if prefix else self.message
        if "\n" in line or len(line) > MAX_MESSAGE_CHARS:  # always one bounded line
            line = clip(line, MAX_MESSAGE_CHARS)
        return line


class ParseError(LodelineError):
    """Text (a bearing, a distance, a call, a date) could not be read.

    ``text`` is what was read and ``position`` the 0-based character where reading failed.
    """

    def __init__(self, message: str, *, text: str = "", position: int | None = None, **where):
        super().__init__(message, **where)
        self.text = text
        self.position = position


class InputError(LodelineError):
    """A value is out of its valid range (latitude, height, date, option)."""


class ModelFileError(LodelineError):
    """A geomagnetic model file is malformed (names the file and line)."""


class ModelRangeError(LodelineError):
    """A date lies outside every available field model's interval, or a model is unknown."""


class DocumentError(LodelineError):
    """A traverse document is malformed or inconsistent."""


class GridError(LodelineError):
    """A coordinate reference system cannot be built or used for a station."""


class TraverseError(LodelineError):
    """Closure, adjustment or area cannot be computed (open traverse, crossing figure...)."""


class FitError(LodelineError):
    """The record-to-found fit is undetermined (too few or collinear found stations)."""


class OutputExistsError(LodelineError):
    """An output file exists and ``--force`` was not given."""


class OutputError(LodelineError):
    """An output file cannot be written (missing folder, a folder of that name, permission)."""
