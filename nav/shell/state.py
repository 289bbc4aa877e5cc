"""The shell's state: the open passage log, the passage rebuilt from it, output and dispatch.

No prompt_toolkit here: the same :class:`ShellState` serves the prompt session and the line mode
(standard input not a terminal), and the tests drive it directly.
"""

from __future__ import annotations

import re
import sys
import textwrap
from datetime import datetime, timedelta
from typing import Callable

from ..angles import format_arcmin, format_lat, format_lon
from ..errors import NavError
from ..logbook import Entry, PassageLog
from ..passage import Passage, now_utc
from ..timekeeping import format_date_hm, parse_utc
from .common import LIVE_HOURS, QUIT, Cancelled, iso_z  # noqa: F401 - for the shell's parts
from .dispatch import check, run_line

_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")
# a position in navigator notation on one line: 41°12.4′ N ... 032°07.1′ W
_POSITION = re.compile(r"\d°\d\d\.\d′ [NS]\b.*\d{3}°\d\d\.\d′ [EW]\b")


class ShellState:
    """What a shell session holds; also the context its parsers read (settings, ids, time)."""

    def __init__(self, log: PassageLog, *, out=None, err=None,
                 clock: Callable[[], datetime] | None = None,
                 ask: Callable | None = None, interactive: bool = False,
                 width: Callable[[], int] | None = None, commands=None):
        self.log = log
        self.out = out if out is not None else sys.stdout
        self.err = err if err is not None else self.out
        self._clock = clock or now_utc
        self._ask = ask
        self.interactive = interactive
        self._width = width                # the terminal's width (None: one line per error)
        self._commands = commands          # the command table (None: the registry's)
        self._passage: Passage | None = None
        self.refused = 0                   # lines refused or failed (line mode: exit status)
        self.last_error: str | None = None
        self.shown_position = False        # this command's output showed a position ...
        self.cautioned = False             # ... and the caution (see dispatch.run_line)

    # ------------------------------------------------------------ the passage
    def _named(self, key: str) -> str:
        """The vessel's name or the passage title: the latest `vessel`/`title` setting, else the
        log's header."""
        names = self.__dict__.setdefault("_names", {})
        if key not in names:
            names[key] = next((e[key] for e in reversed(self.log.effective_entries("setting"))
                               if key in e.data), self.log.header[key])
        return names[key]

    @property
    def title(self) -> str:
        return self._named("title")

    @property
    def vessel(self) -> str:
        return self._named("vessel")

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
            self.changed()

    def changed(self) -> None:
        """The log changed (a strike or a correction): rebuild the passage when next asked."""
        self._passage = None
        self.__dict__.pop("_names", None)

    def append_many(self, entries: list[dict]) -> list[Entry]:
        try:
            return self.log.append_many(entries)
        finally:
            self.changed()

    # ------------------------------------------------------------ context for the parsers
    def now(self) -> datetime:
        return self._clock()

    def reference(self) -> tuple[datetime | None, str | None]:
        """The time of the latest entry (in log order) that has one, and its id."""
        for e in reversed(self.log.effective_entries()):
            if "utc" in e.data:
                return parse_utc(e["utc"]), e.id
        return None, None

    def latest(self) -> tuple[datetime | None, str | None]:
        """The latest time of any entry that has one (in time, not log order), and its id."""
        names = self.__dict__.setdefault("_names", {})
        if "latest" not in names:
            best = (None, None)
            for e in self.log.effective_entries():
                if "utc" in e.data:
                    t = parse_utc(e["utc"])
                    if best[0] is None or t >= best[0]:
                        best = (t, e.id)
            names["latest"] = best
        return names["latest"]

    def passage_now(self) -> tuple[datetime, str | None]:
        """The time `where` and the toolbar answer for: the clock while the log is live (its
        latest entry at most LIVE_HOURS before the clock), else the time of the latest entry
        (a passage entered after the fact, or a clock behind the log). Returns (time, id of that
        entry, or None for the clock)."""
        now = self.now()
        t, eid = self.latest()
        if t is None or timedelta(0) <= now - t <= timedelta(hours=LIVE_HOURS):
            return now, None
        return t, eid

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
            if line.startswith("CAUTION:"):
                self.cautioned = True
            elif not self.shown_position and _POSITION.search(line):
                self.shown_position = True
        self.out.flush()

    def caution_once(self) -> None:
        """nav's caution after a command's output that showed a position, unless it had it."""
        if self.shown_position and not self.cautioned:
            from .. import CAUTION

            self.say(*textwrap.wrap(CAUTION, 78))
        self.shown_position = self.cautioned = False

    def wrap(self, text: str, indent: str = "  ") -> list[str]:
        """`text` as lines of the terminal's width (one line when there is no terminal)."""
        if self._width is None:
            return [text]
        width = max(40, int(self._width()) - 1)
        return textwrap.wrap(text, width, subsequent_indent=indent, break_on_hyphens=False) \
            or [text]

    KEPT_LINE = "the line is kept at the prompt to be mended; Ctrl-C clears it"
    KEPT_ANSWER = "the answer is kept to be mended; Ctrl-C gives up the whole entry"

    def error(self, text: str, *, kept: bool | str = False) -> None:
        """An error in full, wrapped to the terminal's width. `kept`: the refused line (or the
        answer, with `kept` the words to say) stays at the prompt for editing, and the message
        says so."""
        self.refused += 1
        text = _CONTROL.sub("?", text)      # typed control characters are not sent to the tty
        self.last_error = text
        lines = self.wrap(f"error: {text}")
        if kept:
            lines += self.wrap("  " + (kept if isinstance(kept, str) else self.KEPT_LINE), "    ")
        for line in lines:
            print(line, file=self.err)
        self.err.flush()

    def ask(self, label: str, default: str | None, check: Callable | None, kind: str | None) -> str:
        """One answer of a guided entry (Enter takes the default shown); Cancelled if given up."""
        if self._ask is None:
            raise Cancelled()
        return self._ask(label, default, check, kind)

    # ------------------------------------------------------------ lines
    @property
    def commands(self):
        """The command table (the registry's, unless another was given)."""
        if self._commands is None:
            from .registry import TABLE

            self._commands = TABLE
        return self._commands

    def check(self, line: str) -> str | None:
        """Why a line would be refused (None if it parses): the answer on Enter."""
        return check(self.commands, self, line)

    def dispatch(self, line: str) -> bool:
        """Run one line. False when the shell should end. Never raises (but KeyboardInterrupt
        in line mode, which ends the shell)."""
        return run_line(self.commands, self, line)


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
    clock = st.now()
    try:
        now, eid = st.passage_now()
    except Exception:  # noqa: BLE001 - a toolbar must never break the prompt
        now, eid = clock, None
    parts = [st.title[:32], f"UTC {now:%H:%M:%S}" if eid is None else
             f"latest entry {format_date_hm(now)} UTC"]
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
                         f"{format_date_hm(a.utc)}")
    except Exception:  # noqa: BLE001 - a toolbar must never break the prompt
        return f"{st.title[:32]}  |  UTC {clock:%H:%M:%S}"
    parts.append(f"eye {s.eye_height_m:.1f} m  IE {format_arcmin(s.index_error_arcmin)}")
    return "  |  ".join(parts)
