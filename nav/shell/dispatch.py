"""Dispatch beside the registry: a table of commands (the registry's data) finds the command of
a line, parses it, checks it for the prompt, and runs it with the shell's state.

No handler imports this module or the registry: a handler that needs the table (help, the
guided sight's one-line form) reads it from the state (``st.commands``).
"""

from __future__ import annotations

import difflib

from ..errors import NavError, NavInputError
from .common import QUIT, Cancelled
from .words import tokenize


class CommandTable:
    """The commands (each with its syntax, parser and handler) and the help topics."""

    def __init__(self, commands, topics):
        self.list = tuple(commands)
        self.by_name = {c.name: c for c in self.list}
        self.aliases = {a: c.name for c in self.list for a in c.aliases}
        self.topics = dict(topics)

    def find(self, word: str):
        key = word.lower()
        key = self.aliases.get(key, key)
        if key in self.by_name:
            return self.by_name[key]
        names = list(self.by_name) + list(self.aliases)
        near = difflib.get_close_matches(key, names, n=2, cutoff=0.6)
        hint = f"; did you mean {' or '.join(near)}?" if near else "; type help for the list"
        raise NavInputError(f"unknown command '{word[:40]}'{hint}", field="command",
                            example="sight, fix, where, help")

    def parse_line(self, line: str, ctx):
        """A typed line -> (its command, the request it makes); None for a blank line.

        Raises NavInputError (field, example) for a line that is not valid."""
        tokens = tokenize(line)
        if not tokens:
            return None
        cmd = self.find(tokens[0].text)
        return cmd, cmd.parse(tokens[1:], line, ctx)


def check(table: CommandTable, st, line: str) -> str | None:
    """Why a line would be refused (None if it parses): the answer on Enter."""
    try:
        table.parse_line(line, st)
    except NavInputError as err:
        return str(err)
    except Exception:  # noqa: BLE001 - the run reports it as an internal error
        return None
    return None


def run_line(table: CommandTable, st, line: str) -> bool:
    """Run one line. False when the shell should end. Never raises (but KeyboardInterrupt in
    line mode, which ends the shell)."""
    st.shown_position = st.cautioned = False
    try:
        return _run_line(table, st, line)
    finally:
        st.caution_once()          # a position shown: the caution once, after the output


def _run_line(table: CommandTable, st, line: str) -> bool:
    name = line.strip().split(" ", 1)[0][:20] if line.strip() else ""
    try:
        parsed = table.parse_line(line, st)
        if parsed is None:
            return True
        cmd, request = parsed
        name = cmd.name
        return cmd.run(st, request) is not QUIT
    except Cancelled:
        st.say(f"{name} cancelled; nothing was logged")
    except NavError as err:           # NavInputError, LogWriteError: one clear line
        st.error(str(err))
    except KeyboardInterrupt:
        if not st.interactive:
            raise
        st.error(f"'{name}' interrupted; nothing more was logged")
    except Exception:  # noqa: BLE001 - the shell goes on; no traceback
        st.changed()
        st.error(f"internal error in '{name}': nothing more was logged and the shell goes on; "
                 "please report it with the line you typed")
    return True
