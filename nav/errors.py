"""Errors that carry what a user needs to mend the input: the field, the row, an example."""

from __future__ import annotations


class NavError(Exception):
    """Base of every error nav reports to a user as one clear line (exit code 2)."""


class NavInputError(NavError, ValueError):
    """A value a user typed or a file held is not acceptable.

    `field` names the input (``hs``, ``utc``, ``dr_lat`` ...), `row` the data row (1 = first row
    after a CSV header) where there is one, and `example` shows a value that would be accepted.
    """

    def __init__(self, message: str, *, field: str | None = None, row: int | None = None,
                 example: str | None = None):
        super().__init__(message)
        self.reason = message
        self.field = field
        self.row = row
        self.example = example

    def at_row(self, row: int) -> "NavInputError":
        """Return the same error placed at a data row (for the CSV readers)."""
        self.row = row
        return self

    def __str__(self) -> str:
        where = []
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.field:
            where.append(f"field '{self.field}'")
        text = (", ".join(where) + ": " if where else "") + self.reason
        if self.example:
            text += f" (for example: {self.example})"
        return text


class UnknownBodyError(NavInputError):
    """A body name that is neither a solar-system body nor a navigational star."""

    def __init__(self, message: str, *, suggestions: list[str] | None = None, **kw):
        kw.setdefault("field", "body")
        kw.setdefault("example", "Sun, Moon, Venus, Sirius, Rigil Kentaurus")
        super().__init__(message, **kw)
        self.suggestions = list(suggestions or [])


class OutOfRangeError(NavInputError):
    """An instant outside the range the bundled ephemeris covers."""
