"""What every part of the shell shares, and nothing else: the outcomes of a command, the log's
time format, the shell's stated rules. A leaf module: it imports no other part of the shell, so
handlers, state and dispatch can all use it without importing each other."""

from __future__ import annotations

from datetime import datetime

from ..timekeeping import UTC


class Cancelled(Exception):
    """A guided entry given up (Ctrl-C, or the end of the input): nothing is logged."""


QUIT = object()                # a handler's answer that ends the shell
LIVE_HOURS = 12                # a log whose latest entry is older: entered after the fact


def iso_z(t: datetime) -> str:
    """An aware datetime as ISO 8601 UTC with Z, to the microsecond (what the log stores)."""
    return t.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%S.%fZ")


def ut1_lines(st, *instants) -> list[str]:
    """The UT1 caution for the instants a command's figures are for (:mod:`nav.ut1_note`),
    wrapped to the terminal: none while UT1 is measured."""
    from ..ut1_note import ut1_text

    return [line for text in ut1_text(*instants, indent="  ") for line in st.wrap(text, "    ")]
