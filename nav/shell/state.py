"""The shell's state: the open passage log, the passage rebuilt from it, output and dispatch.

No prompt_toolkit here: the same :class:`ShellState` serves the prompt session and the line mode
(standard input not a terminal), and the tests drive it directly.
"""

from __future__ import annotations

import re
import sys
from datetime import datetime
from typing import Callable

from ..angles import format_arcmin, format_lat, format_lon
from ..errors import NavError, NavInputError
from ..logbook import Entry, PassageLog
from ..passage import Passage, now_utc
from ..timekeeping import UTC, parse_utc


class Cancelled(Exception):
    """A guided entry given up (Ctrl-C, or the end of the input): nothing is logged."""


QUIT = object()
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def iso_z(t: datetime) -> str:
    """An aware datetime as ISO 8601 UTC with Z, to the microsecond (what the log stores)."""
    return t.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%S.%fZ")


class ShellState:
    """What a shell session holds; also the context its parsers read (settings, ids, time)."""

    def __init__(self, log: PassageLog, *, out=None, err=None,
                 clock: Callable[[], datetime] | None = None,
                 ask: Callable | None = None, interactive: bool = False):
        self.log = log
        self.out = out if out is not None else sys.stdout
        self.err = err if err is not None else self.out
        self._clock = clock or now_utc
        self._ask = ask
        self.interactive = interactive
        self._passage: Passage | None = None
        self.refused = 0                   # lines refused or failed (line mode: exit status)
        self.last_error: str | None = None

    # ------------------------------------------------------------ the passage
    @property
    def title(self) -> str:
        return self.log.header["title"]

    @property
    def vessel(self) -> str:
        return self.log.header["vessel"]

    @property
    def passage(self) -> Passage:
        if self._passage is None:
            self._passage = Passage(self.log)
        return self._passage

    @property
    def settings(self):
        return self.passage.settings

    def append(self, entry: dict) -> Entry:
        """Log one entry; it is on disk (fsynced) when this returns."""
        try:
            return self.log.append(entry)
        finally:
            self._passage = None

    def changed(self) -> None:
        """The log changed (a strike or a correction): rebuild the passage when next asked."""
        self._passage = None

    def append_many(self, entries: list[dict]) -> list[Entry]:
        try:
            return self.log.append_many(entries)
        finally:
            self._passage = None

    # ------------------------------------------------------------ context for the parsers
    def now(self) -> datetime:
        return self._clock()

    def reference(self) -> tuple[datetime | None, str | None]:
        """The time of the latest entry (in log order) that has one, and its id."""
        for e in reversed(self.log.effective_entries()):
            if "utc" in e.data:
                return parse_utc(e["utc"]), e.id
        return None, None

    def raw(self, eid: str) -> Entry | None:
        return self.log.entry_by_id(eid)

    def lookup(self, eid: str) -> Entry | None:
        return self.log.effective_by_id(eid)

    def course_at(self, t: datetime) -> float | None:
        leg = self.passage.leg_at(t)
        return leg.course_deg if leg else None

    # ------------------------------------------------------------ output
    def say(self, *lines: str) -> None:
        for line in lines:
            print(line, file=self.out)
        self.out.flush()

    def error(self, text: str) -> None:
        self.refused += 1
        text = _CONTROL.sub("?", text)      # typed control characters are not sent to the tty
        self.last_error = text
        print(f"error: {text}", file=self.err)
        self.err.flush()

    def ask(self, label: str, default: str | None, check: Callable | None, kind: str | None) -> str:
        """One answer of a guided entry (Enter takes the default shown); Cancelled if given up."""
        if self._ask is None:
            raise Cancelled()
        return self._ask(label, default, check, kind)

    # ------------------------------------------------------------ lines
    def check(self, line: str) -> str | None:
        """Why a line would be refused (None if it parses): the validator's answer on Enter."""
        from .registry import parse_line

        try:
            parse_line(line, self)
        except NavInputError as err:
            return str(err)
        except Exception:  # noqa: BLE001 - the run reports it as an internal error
            return None
        return None

    def dispatch(self, line: str) -> bool:
        """Run one line. False when the shell should end. Never raises (but KeyboardInterrupt
        in line mode, which ends the shell)."""
        from .registry import parse_line

        name = line.strip().split(" ", 1)[0][:20] if line.strip() else ""
        try:
            parsed = parse_line(line, self)
            if parsed is None:
                return True
            cmd, request = parsed
            name = cmd.name
            return cmd.run(self, request) is not QUIT
        except Cancelled:
            self.say(f"{name} cancelled; nothing was logged")
        except NavError as err:           # NavInputError, LogWriteError: one clear line
            self.error(str(err))
        except KeyboardInterrupt:
            if not self.interactive:
                raise
            self.error(f"'{name}' interrupted; nothing more was logged")
        except Exception as err:  # noqa: BLE001 - the shell goes on; no traceback
            self._passage = None
            self.error(f"internal error in '{name}' ({type(err).__name__}); nothing more was "
                       "logged and the shell goes on; please report it")
        return True


def position_brief(w) -> str:
    """``fix 41°12.4′ N 032°07.1′ W`` or ``DR 41°… (1.2 h from the fix)`` for the toolbar."""
    pos = f"{format_lat(w.lat_deg)} {format_lon(w.lon_deg)}"
    hours = w.age.total_seconds() / 3600.0
    what = {"fix": "fix", "running fix": "running fix"}.get(w.basis, w.basis.upper())
    if hours < 1 / 60:
        return f"{what} {pos}"
    age = f"{hours:.1f} h" if hours < 48 else f"{hours / 24:.1f} d"
    return f"DR {pos} ({age} from the {what})"


def status_line(st: ShellState | None) -> str:
    """The bottom toolbar: passage, UTC now, the DR/fix and its age, height of eye, IE."""
    if st is None:
        return f"choosing a passage log  |  UTC {now_utc():%H:%M:%S}"
    now = st.now()
    parts = [st.title[:32], f"UTC {now:%H:%M:%S}"]
    try:
        s = st.settings
        try:
            parts.append(position_brief(st.passage.where(now)))
            ep = st.passage.ep(now)             # issue 10: the EP beside the DR
            if ep is not None:
                parts.append(f"EP {format_lat(ep[0])} {format_lon(ep[1])}")
        except NavError:   # nothing before now, or a DR that cannot be carried so far
            a = st.passage.anchors[-1] if st.passage.anchors else None
            parts.append("no DR yet" if a is None else
                         f"last {a.basis if 'fix' in a.basis else a.basis.upper()} "
                         f"{format_lat(a.lat_deg)} {format_lon(a.lon_deg)} at "
                         f"{a.utc:%Y-%m-%d %H:%M}")
    except Exception:  # noqa: BLE001 - a toolbar must never break the prompt
        return f"{st.title[:32]}  |  UTC {now:%H:%M:%S}"
    parts.append(f"eye {s.eye_height_m:.1f} m  IE {format_arcmin(s.index_error_arcmin)}")
    return "  |  ".join(parts)
