"""Opening the shell: choose or create the passage log, print the caution, run the session.

With a terminal on standard input the shell runs one prompt_toolkit ``PromptSession`` (history in
the user's data directory, completion and validation from the registry, a bottom toolbar); else
it reads the same commands line by line and prints the same results, so it can be scripted.
"""

from __future__ import annotations

import os
import re
import sys
import textwrap
from collections import Counter
from datetime import datetime
from pathlib import Path

from .. import CAUTION, __version__
from ..errors import NavError, NavInputError
from ..timekeeping import UTC
from .common import Cancelled
from .state import ShellState, status_line

LOGS_DIR = "sight_logs"
DEFAULT_VESSEL = "unnamed vessel"
EXIT_OK, EXIT_INPUT, EXIT_INTERRUPTED = 0, 2, 130


def history_path(env=None) -> Path:
    """``$XDG_DATA_HOME/nav/history`` (an absolute XDG_DATA_HOME only, as the XDG spec says),
    else ``~/.local/share/nav/history``; never the working directory."""
    env = os.environ if env is None else env
    base = env.get("XDG_DATA_HOME", "")
    root = Path(base) if base and os.path.isabs(base) else Path.home() / ".local" / "share"
    return root / "nav" / "history"


def banner_lines() -> list[str]:
    return [f"nav {__version__}: sight-reduction shell", *textwrap.wrap(CAUTION, 78), ""]


def slug(name: str) -> str:
    s = re.sub(r"[^a-z0-9_-]+", "-", name.strip().lower()).strip("-")
    return s[:80] or "passage"


def free_name(folder: Path, stem: str) -> Path:
    path, n = folder / f"{stem}.jsonl", 2
    while path.exists():
        path, n = folder / f"{stem}-{n}.jsonl", n + 1
    return path


def open_or_create(path: Path, vessel: str | None, title: str | None, say):
    """Open an existing log (a torn tail is set aside and reported), or create a new one."""
    from ..logbook import PassageLog, new_log

    if path.exists():
        log = PassageLog.open(path)
        say(f"passage log: {path}")
    else:
        log = new_log(path, (vessel or DEFAULT_VESSEL).strip() or DEFAULT_VESSEL,
                      (title or path.stem).strip() or path.stem)
        say(f"new passage log: {path}")
    if log.set_aside is not None:
        for p in log.problems:
            if p.severity == "warning":
                say(f"caution: {p}")
        say(f"  (the bytes are kept in {log.set_aside}; a repair entry records it)")
    return log


def opening_lines(st: ShellState) -> list[str]:
    kinds = Counter(e.kind for e in st.log.effective_entries())
    parts = [f"{kinds[k]} {w}{'' if kinds[k] == 1 else 's'}" for k, w in
             (("sight", "sight"), ("dr", "DR entry"), ("fix", "fix"), ("setting", "setting"),
              ("note", "note")) if kinds[k]]
    parts = [p.replace("entrys", "entries").replace("fixs", "fixes") for p in parts]
    head = f"passage '{st.title}', vessel {st.vessel}: " + (", ".join(parts) or "no entries yet")
    out = [head]
    try:
        from ..timekeeping import format_date_hm
        from .state import position_brief

        t, eid = st.passage_now()
        when = "now" if eid is None else \
            f"at the latest entry, {eid}, {format_date_hm(t)} UTC (not the clock)"
        out.append(f"{when}: {position_brief(st.passage.where(t))}")
    except NavError:
        pass
    out.append("type help for the commands, help COMMAND for one; quit (or Ctrl-D) leaves")
    return out


def _choose_interactively(ask, say, folder: Path, today: str):
    """Ask for a passage name (or the number of a log listed); returns (path, title, vessel)."""
    logs = sorted(folder.glob("*.jsonl"), key=lambda p: p.stat().st_mtime, reverse=True)[:20] \
        if folder.is_dir() else []
    if logs:
        say(f"passage logs in {folder}:")
        say(*(f"  {i}. {p.name}" for i, p in enumerate(logs, 1)))
    default = f"passage-{today}"
    answer = ask(f"passage name{' or number' if logs else ''} [{default}]: ").strip() or default
    if answer.isdigit() and 1 <= int(answer) <= len(logs):
        return logs[int(answer) - 1], None, None
    path = folder / f"{slug(answer)}.jsonl"
    if path.exists():
        return path, None, None
    vessel = ask(f"vessel name [{DEFAULT_VESSEL}]: ").strip() or DEFAULT_VESSEL
    return path, answer, vessel


def run_shell(log: str | os.PathLike | None = None, *, vessel: str | None = None, stdin=None,
              stdout=None, stderr=None, interactive: bool | None = None,
              history_file: str | os.PathLike | None = None, clock=None,
              refresh_interval: float | None = 1.0, cwd: str | os.PathLike | None = None) -> int:
    """Run the shell on a passage log; returns the exit status.

    `interactive` defaults to whether `stdin` is a terminal; `history_file` to
    :func:`history_path`; `clock` (a function returning an aware UTC datetime) to the real one.
    """
    stdin = stdin if stdin is not None else sys.stdin
    out = stdout if stdout is not None else sys.stdout
    err = stderr if stderr is not None else sys.stderr
    if interactive is None:
        interactive = bool(getattr(stdin, "isatty", lambda: False)())

    def say(*lines):
        for line in lines:
            print(line, file=out)
        out.flush()

    say(*banner_lines())
    if interactive:
        return _run_interactive(log, vessel, say, out, err, history_file, clock,
                                refresh_interval, cwd)
    return _run_lines(log, vessel, stdin, say, out, err, clock, cwd)


def _today(clock) -> str:
    return (clock() if clock else datetime.now(UTC)).strftime("%Y-%m-%d")


def _open(log, vessel, title, say, err):
    try:
        return open_or_create(Path(log), vessel, title, say)
    except NavError as e:
        print(f"nav shell: {e}", file=err)
        return None


def _run_lines(log, vessel, stdin, say, out, err, clock, cwd) -> int:
    folder = Path(cwd or os.getcwd()) / LOGS_DIR
    title = None
    if log is None:
        log = free_name(folder, f"passage-{_today(clock)}")
        title = log.stem
    plog = _open(log, vessel, title, say, err)
    if plog is None:
        return EXIT_INPUT
    lines = iter(stdin.readline, "")

    def ask(label, default, check, kind):
        raw = next(lines, None)
        if raw is None:
            raise Cancelled()
        text = raw.rstrip("\r\n")
        if not text.strip():
            if default is not None:
                return default
            raise NavInputError("a value is needed", field=label.split(" (")[0],
                                example="the value, on the next line")
        if check is not None:
            check(text)
        return text

    st = ShellState(plog, out=out, err=err, clock=clock, ask=ask, interactive=False)
    try:
        say(*opening_lines(st))
        for raw in lines:
            if not st.dispatch(raw.rstrip("\r\n")):
                break
    except KeyboardInterrupt:
        print("nav shell: interrupted", file=err)
        return EXIT_INTERRUPTED
    finally:
        plog.close()
    say(f"log closed: {plog.path}")
    if st.refused:
        print(f"nav shell: {st.refused} line(s) refused (see the errors above)", file=err)
        return EXIT_INPUT
    return EXIT_OK


def make_history(path: Path | None, say):
    """The session's history: a file in the user's data directory, paused during guided entry."""
    from prompt_toolkit.history import FileHistory, InMemoryHistory

    class _Pausable:
        paused = False
        keep = None                       # a line -> whether it goes into the history

        def append_string(self, string: str) -> None:
            if not self.paused and (self.keep is None or self.keep(string)):
                super().append_string(string)

    path = Path(path) if path is not None else history_path()
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        return type("ShellHistory", (_Pausable, FileHistory), {})(str(path))
    except OSError as e:
        say(f"(history is not kept: {path.parent} cannot be created: {e.strerror})")
        return type("ShellHistory", (_Pausable, InMemoryHistory), {})()


def _run_interactive(log, vessel, say, out, err, history_file, clock, refresh_interval,
                     cwd) -> int:
    """The prompt session. A line is checked on Enter by its command's parser; a refused line
    gets its error in full above the prompt (wrapped to the terminal's width) and comes back at
    the prompt to be mended; Ctrl-C clears it. Refused lines are not kept in the history."""
    from prompt_toolkit import PromptSession

    from .complete import FieldCompleter, ShellCompleter

    holder: dict = {"st": None}
    history = make_history(history_file, say)
    line_completer = ShellCompleter(lambda: holder["st"])
    toolbar = lambda: status_line(holder["st"])  # noqa: E731
    session = PromptSession(history=history, bottom_toolbar=toolbar,
                            refresh_interval=refresh_interval or 0,
                            validate_while_typing=False, complete_while_typing=True)

    def width() -> int:
        return session.output.get_size().columns

    def plain_ask(message: str) -> str:
        history.paused = True
        try:
            return session.prompt(message, completer=None)
        finally:
            history.paused = False

    def ask(label, default, check, kind):
        """One answer of a guided entry; a refused answer is shown in full and kept to mend."""
        message = f"  {label}" + (f" [{default}]" if default else "") + ": "
        typed = ""
        history.paused = True
        try:
            while True:
                text = session.prompt(message, default=typed, completer=FieldCompleter(kind))
                if not text.strip():
                    if default is not None:
                        return default
                    holder["st"].error("a value is needed (Ctrl-C gives up the entry)")
                    continue
                try:
                    if check is not None:
                        check(text)
                    return text
                except NavInputError as e:
                    holder["st"].error(str(e), kept=ShellState.KEPT_ANSWER)
                    typed = text
        except (KeyboardInterrupt, EOFError):
            raise Cancelled() from None
        finally:
            history.paused = False

    title = None
    try:
        if log is None:
            folder = Path(cwd or os.getcwd()) / LOGS_DIR
            log, title, vessel = _choose_interactively(plain_ask, say, folder, _today(clock))
    except (KeyboardInterrupt, EOFError):
        say("no passage log chosen")
        return EXIT_OK
    plog = _open(log, vessel, title, say, err)
    if plog is None:
        return EXIT_INPUT
    st = holder["st"] = ShellState(plog, out=out, err=err, clock=clock, ask=ask,
                                   interactive=True, width=width)
    history.keep = lambda line: st.check(line) is None
    try:
        say(*opening_lines(st))
        kept = ""                          # a refused line, back at the prompt to be mended
        while True:
            try:
                line = session.prompt("nav> ", default=kept, completer=line_completer)
            except KeyboardInterrupt:
                kept = ""
                continue
            except EOFError:
                break
            why = st.check(line)
            if why:
                st.error(why, kept=True)
                kept = line
                continue
            kept = ""
            if not st.dispatch(line):
                break
    finally:
        plog.close()
    say(f"log closed: {plog.path}")
    return EXIT_OK
