"""The one error type for bad input, with the position it was found at."""
from __future__ import annotations


class InputError(Exception):
    """Bad input: a problem or certificate file that cannot be read as written.

    ``str(err)`` is one line: ``FILE:LINE:COLUMN: message`` (line and column
    are 1-based; either may be missing when the fault has no position, e.g. a
    file that is not UTF-8).  ``construct`` names the offending syntax.
    """

    def __init__(self, message: str, path: str = "<input>", line: int | None = None,
                 column: int | None = None, construct: str | None = None):
        super().__init__(message)
        self.message = message
        self.path = path
        self.line = line
        self.column = column
        self.construct = construct

    def __str__(self) -> str:
        where = self.path
        if self.line is not None:
            where += f":{self.line}"
            if self.column is not None:
                where += f":{self.column}"
        return f"{where}: {self.message}"


def read_limited(path, limit: int, what: str) -> bytes:
    """The bytes of the file ``path``: InputError when unreadable or larger than ``limit``."""
    try:
        with open(path, "rb") as f:
            data = f.read(limit + 1)
    except OSError as err:
        raise InputError(f"cannot read {what}: {err.strerror or err}", str(path)) from None
    if len(data) > limit:
        raise InputError(f"{what} larger than {limit} bytes (over the limit)", str(path))
    return data
