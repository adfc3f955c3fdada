"""Errors of the criteria library and of data files read by vibration calcs.

DataFileError (a bad data or criteria file: file, column, row) and UnknownCriterionError.
"""

from __future__ import annotations

__all__ = ["DataFileError", "UnknownCriterionError"]


class DataFileError(ValueError):
    """A data file that cannot be used as it is.

    ``file`` is the name the engineer knows the file by, ``column`` the column (or field) at
    fault, ``row`` the 1-based line of the file where it applies; the calc wiring turns this
    into a message naming the calc and field, and exit code 2.
    """

    def __init__(self, file: str, message: str, column: str = "", row: int | None = None):
        self.file = str(file)
        self.message = message
        self.column = column
        self.row = row
        where = [self.file]
        if row is not None:
            where.append(f"line {row}")
        if column:
            where.append(f"column {column!r}")
        super().__init__(f"{', '.join(where)}: {message}")


class UnknownCriterionError(LookupError):
    """A criterion name that is neither built in nor supplied; carries the nearest names."""

    def __init__(self, name: str, suggestions: tuple[str, ...], known: tuple[str, ...]):
        self.name = name
        self.suggestions = suggestions
        self.known = known
        hint = (f"; did you mean {' or '.join(repr(s) for s in suggestions)}?" if suggestions
                else f"; known criteria: {', '.join(known)}")
        super().__init__(f"unknown vibration criterion {name!r}{hint}")

    def __str__(self) -> str:  # LookupError would quote the message again
        return str(self.args[0])
