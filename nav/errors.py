"""Errors that carry what a user needs to mend the input: the field, the row, an example.

Every message a user sees is made safe here, in one place: a control character that came from the
input (ESC, CR, a newline, NUL, DEL, the C1 controls, the bidirectional overrides) is shown as a
visible escape such as ``\\x1b`` and never reaches the terminal raw.
"""

from __future__ import annotations

import re

# C0 controls, DEL, C1 controls, and the Unicode marks that reorder or hide text on a terminal
_UNSAFE = re.compile("[\x00-\x1f\x7f-\x9f\u200b-\u200f\u2028-\u202e\u2066-\u2069\ufeff]")


def printable(text: str) -> str:
    """`text` with every control character replaced by a visible escape (``\\x1b``, ``\\n``)."""
    def esc(m):
        c = m.group(0)
        named = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}
        if c in named:
            return named[c]
        code = ord(c)
        return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"
    return _UNSAFE.sub(esc, str(text))


class NavError(Exception):
    """Base of every error nav reports to a user as one clear line (exit code 2)."""


class NavInputError(NavError, ValueError):
    """A value a user typed or a file held is not acceptable.

    `field` names the input (``hs``, ``utc``, ``dr_lat`` ...), `row` the data row (1 = first row
    after a CSV header) where there is one, `line` the file's line number as an editor shows it
    (a CSV file's header is line 1; named in the message instead of the row when known), and
    `example` shows a value that would be accepted. The text is made printable (:func:`printable`).
    """

    def __init__(self, message: str, *, field: str | None = None, row: int | None = None,
                 example: str | None = None, line: int | None = None):
        super().__init__(printable(message))
        self.reason = printable(message)
        self.field = field
        self.row = row
        self.line = line
        self.example = example

    def at_row(self, row: int) -> "NavInputError":
        """Return the same error placed at a data row (for the CSV readers)."""
        self.row = row
        return self

    def at_line(self, line: int | None) -> "NavInputError":
        """Return the same error placed at a line of its file (as an editor numbers it)."""
        self.line = line
        return self

    def place(self) -> str:
        """``line 7`` (or ``row 6`` where the line is not known), or ''."""
        if self.line is not None:
            return f"line {self.line}"
        return f"row {self.row}" if self.row is not None else ""

    def detail(self) -> str:
        """The message without its place: ``field 'hs': ... (for example: ...)``."""
        return self._text([])

    def _text(self, where: list[str]) -> str:
        if self.field:
            where = where + [f"field '{printable(self.field)}'"]
        text = (", ".join(where) + ": " if where else "") + self.reason
        if self.example:
            text += f" (for example: {printable(self.example)})"
        return text

    def __str__(self) -> str:
        place = self.place()
        return self._text([place] if place else [])


class UnknownBodyError(NavInputError):
    """A body name that is neither a solar-system body nor a navigational star."""

    def __init__(self, message: str, *, suggestions: list[str] | None = None, **kw):
        kw.setdefault("field", "body")
        kw.setdefault("example", "Sun, Moon, Venus, Sirius, Rigil Kentaurus")
        super().__init__(message, **kw)
        self.suggestions = list(suggestions or [])


class OutOfRangeError(NavInputError):
    """An instant outside the range the bundled ephemeris covers."""
