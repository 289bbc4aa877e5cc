"""Writing the passage log: create it, open it for appending, append, strike, correct.

The format and the reading are :mod:`nav.logbook`'s (read its module doc first); the file rules
are :mod:`nav.files`'. Here:

- ``logged_utc`` comes from the log's clock: the wall clock, or a callable given to
  :func:`new_log` / :meth:`PassageLog.open` (``clock=``) that returns an aware datetime (a
  replayed or generated passage, a test); the time is written in UTC, rounded to the second.
- Durability: an append writes its line(s) with one ``write`` on an ``O_APPEND`` descriptor and
  fsyncs before it returns; a new file (the log, a side file) is written under a temporary name,
  fsynced, hard-linked into place (never overwriting) and its directory fsynced.
- Every line gets its ``check`` (the hash chain). More than one entry at once (an import):
  the first carries ``batch``, how many were written together; killed at any moment, the log
  holds all of them or, after the next open, none.
- One observation counts once: a sight identical in body, UTC and Hs to one that stands (not
  struck) is refused, naming the entry it repeats (:class:`nav.logbook.DuplicateSightError`).
- Before every append the open file is compared with the file at the path (device and inode):
  if the log was replaced (renamed over, as editors and sync tools do) or removed, nothing is
  written and the log must be reopened.
"""

from __future__ import annotations

import errno
import glob
import hashlib
import os
import re
import secrets
from datetime import datetime
from pathlib import Path
from typing import Callable, Iterable, Mapping

from . import __version__
from .errors import NavInputError
from .files import check_input, fsync_dir, write_fully, write_new_file
from .logbook import (
    FORMAT, FORMAT_VERSION, MAX_LOG_BYTES, DuplicateSightError, Entry, LoadedLog, LogFormatError,
    LogProblem, LogWriteError, _TORN_ID, _parse, _read_bytes, sight_key,
)
from .logschema import (
    BATCH, CHECK, COMMON, MAX_BATCH, MAX_LINE_BYTES, _check_entry, _decode_line, _encode, _normalise,
    chain_check, typed_mismatch,
)
from .timekeeping import UTC, format_utc

try:
    import fcntl
except ImportError:  # pragma: no cover - Windows: no advisory lock; one writer at a time
    fcntl = None

CLOCK_EXAMPLE = "clock=lambda: datetime(2026, 6, 19, 8, 0, tzinfo=timezone.utc)"
MAX_DUPLICATES_NAMED = 10
_write_fully = write_fully          # the crash test tears lines here
_write_new_file = write_new_file    # a test fills the disk here


def _wall_clock() -> datetime:
    return datetime.now(UTC)


def _checked_clock(clock: Callable[[], datetime] | None) -> Callable[[], datetime]:
    if clock is None:
        return _wall_clock
    if not callable(clock):
        raise NavInputError(f"the log's clock must be callable, not a {type(clock).__name__}",
                            field="clock", example=CLOCK_EXAMPLE)
    return clock


def _logged_utc(clock: Callable[[], datetime]) -> str:
    """The clock's time as a logged_utc: an aware datetime, written in UTC to the second."""
    t = clock()
    if not isinstance(t, datetime) or t.utcoffset() is None:
        what = "a time without a time zone" if isinstance(t, datetime) else f"a {type(t).__name__}"
        raise NavInputError(f"the log's clock gave {what}; it must give an aware UTC datetime",
                            field="clock", example=CLOCK_EXAMPLE)
    return format_utc(t)


def new_log(path: Path | str, vessel: str, title: str, *,
            clock: Callable[[], datetime] | None = None, passage_uid: str | None = None,
            software: str | None = None, max_bytes: int = MAX_LOG_BYTES) -> "PassageLog":
    """Create a passage log holding its header, and open it. An existing file is never replaced.

    ``clock`` (default: the wall clock) gives every logged_utc, see the module doc;
    ``passage_uid`` (default: random) is 16 lower-case hex digits; ``software`` names the writer.
    """
    from .files import check_name

    path = check_name(path, "log", "sight_logs/passage.jsonl")
    clock = _checked_clock(clock)
    header = {"id": "e0001", "kind": "passage", "logged_utc": _logged_utc(clock),
              "format": FORMAT, "format_version": FORMAT_VERSION,
              "passage_uid": secrets.token_hex(8) if passage_uid is None else passage_uid,
              "vessel": vessel, "title": title,
              "software": f"nav {__version__}" if software is None else software}
    bad = _check_entry(header)
    if bad:
        raise NavInputError(bad[1], field=bad[0], example="0123456789abcdef" if bad[0] ==
                            "passage_uid" else "vessel 'Kittiwake', title 'Azores run'")
    header[CHECK] = chain_check("", header)
    exists = NavInputError(f"{path} already exists; a passage log is never overwritten",
                           field="path", example=str(path.with_name(path.stem + "-2.jsonl")))
    if os.path.lexists(path):
        raise exists
    try:
        if not path.parent.is_dir():
            path.parent.mkdir(parents=True)
            fsync_dir(path.parent.parent)
        _write_new_file([path], _encode(header))
    except OSError as err:
        if isinstance(err, FileExistsError) and path.exists():
            raise exists from None
        raise LogWriteError(f"{path}: the log could not be created ({err.strerror})") from None
    return PassageLog.open(path, clock=clock, max_bytes=max_bytes)


class PassageLog(LoadedLog):
    """A passage log open for appending; every append is on disk (fsynced) when it returns.

    One writer at a time: the open log holds an exclusive advisory lock (flock) until closed, and
    a second writer is refused, so ids stay unique and increasing. Readers (load_log) need no lock.
    """

    def __init__(self, path: Path, fd: int, max_bytes: int, clock: Callable[[], datetime]):
        super().__init__(path)
        self._fd, self._size, self._max_bytes, self._broken = fd, 0, max_bytes, None
        self._clock = clock

    @classmethod
    def open(cls, path: Path | str, *, clock: Callable[[], datetime] | None = None,
             max_bytes: int = MAX_LOG_BYTES) -> "PassageLog":
        """Open for appending: strict loading, then a torn tail or the tail of a cut-off import
        set aside (see the module doc of nav.logbook). ``clock`` (default: the wall clock)
        gives every logged_utc this log writes."""
        path, clock = Path(path), _checked_clock(clock)
        if not os.path.lexists(path):
            raise LogFormatError("no such passage log", path=path)
        try:                                     # a FIFO, a device, a folder: refused at once
            check_input(path, field="log", example="sight_logs/passage.jsonl")
        except NavInputError as err:
            raise LogFormatError(err.reason, field="log") from None
        try:
            fd = os.open(path, os.O_WRONLY | os.O_APPEND | getattr(os, "O_NONBLOCK", 0)
                         | getattr(os, "O_CLOEXEC", 0))
        except OSError as err:
            raise LogFormatError("no such passage log" if isinstance(err, FileNotFoundError)
                                 else f"cannot be opened for writing ({err.strerror})",
                                 path=path) from None
        try:
            if fcntl is not None:
                try:
                    fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                except BlockingIOError:
                    raise LogFormatError("is open for writing in another nav session; close it "
                                         "there first", path=path) from None
            self = cls(path, fd, max_bytes, clock)
            data = _read_bytes(path, max_bytes)  # again, under the lock
            _parse(self, data, strict=True)
            self._size, self._id_floor = len(data), max(self._id_floor, _side_file_floor(path))
            if self.torn_tail:
                self._set_aside_torn()
        except BaseException:
            os.close(fd)
            raise
        return self

    def append(self, entry: Mapping) -> Entry:
        """Check, write one line, fsync, return the entry as logged. Confirm to the user after."""
        return self.append_many([entry])[0]

    def append_many(self, entries: Iterable[Mapping]) -> list[Entry]:
        """Every entry is checked first (one bad entry: nothing is written), then all are
        written with one write and made durable by one fsync: a batch is confirmed as a whole.
        More than one entry: the first carries ``batch`` (their number), so that a batch cut
        off by a crash is set aside whole on the next open."""
        if self._fd is None or self._broken:
            raise LogWriteError(f"{self.path.name}: " + ("the log is closed" if self._fd is None
                                                         else self._broken + "; reopen the log"))
        entries = list(entries)
        if len(entries) > MAX_BATCH:
            raise NavInputError(f"{len(entries):,} entries at once; the limit is {MAX_BATCH:,}",
                                field="entry")
        trial = LoadedLog(self.path)
        trial.__dict__.update(self._state())
        lines, added, dupes = [], [], []
        index = trial.sight_index()
        for n, given in enumerate(entries, 1):
            where = f" (entry {n} of {len(entries)})" if len(entries) > 1 else ""
            if not isinstance(given, Mapping):
                raise NavInputError("an entry must be a mapping of field names to values" + where)
            o = _normalise(given, "entry")
            if {"id", "logged_utc", CHECK, BATCH} & set(o):
                raise NavInputError("id, logged_utc, batch and check are assigned by the log"
                                    + where, field="id")
            o = {"id": trial.next_id(), "logged_utc": _logged_utc(self._clock), **o}
            if n == 1 and len(entries) > 1:
                o[BATCH] = len(entries)
            bad = _check_entry(o) or trial._admit(o) or _typed_error(trial, o)
            if bad:
                raise NavInputError(bad[1] + where, field=bad[0])
            _same_sight(trial, index, o, dupes, given.get("source") or f"entry {n}")
            o[CHECK] = chain_check(trial._check, o)
            line = _encode(o, o["kind"] == "correct" and trial.entry_by_id(o["target"]).kind)
            if len(line) > MAX_LINE_BYTES:
                raise NavInputError(f"the entry is {len(line):,} bytes as a line; the limit is "
                                    f"{MAX_LINE_BYTES:,}" + where, field="entry")
            back = _decode_line(line[:-1])[0]
            if back != o:  # pragma: no cover - a line that would not read back as written
                raise NavInputError("the entry does not read back as written" + where)
            added.append(trial._add(back, trial._lines + 1))
            lines.append(line)
        if dupes:
            _refuse_duplicates(dupes, len(entries))
        blob = b"".join(lines)
        if self._size + len(blob) > self._max_bytes:
            raise NavInputError(f"the log would pass its {self._max_bytes / 2**20:g} MB limit; "
                                "start a new passage log", field="entry")
        try:
            self._same_file()
            _write_fully(self._fd, blob)
            os.fsync(self._fd)
        except OSError as err:
            self._broken = f"an append failed ({err.strerror})"
            raise LogWriteError(f"{self.path.name}: the entry was NOT logged ({err.strerror}); "
                                "reopen the log") from None
        self._size += len(blob)
        self.__dict__.update(trial.__dict__)
        return added

    def _same_file(self) -> None:
        """Refuse to write unless the path still names the file this log holds open."""
        mine = os.fstat(self._fd)
        try:
            disk = os.stat(self.path)
            why = None if (disk.st_dev, disk.st_ino) == (mine.st_dev, mine.st_ino) else \
                "the file at its path was replaced since it was opened (renamed over, as an " \
                "editor or a sync tool does)"
        except FileNotFoundError:
            why = "the file was removed or renamed since it was opened"
        if why is None and mine.st_size != self._size:
            why = "the file was changed by something else since it was opened"
        if why:
            self._broken = why
            raise LogWriteError(f"{self.path.name}: {why}; nothing was written; reopen the log "
                                "and check what is in it")

    def strike(self, target: str, reason: str) -> Entry:
        return self.append({"kind": "strike", "target": target, "reason": reason})

    def correct(self, target: str, reason: str, changes: Mapping) -> Entry:
        """Supersede an entry by its current fields with ``changes`` applied (None removes one)."""
        cur = self.effective_by_id(target)
        if cur is None:
            raise NavInputError(f"{target} is not an entry that stands in this log (unknown, "
                                "struck, or of a kind that cannot be corrected)", field="target")
        fields = {k: v for k, v in cur.to_dict().items() if k not in COMMON}
        return self.append({"kind": "correct", "target": target, "reason": reason,
                            "replacement": {**fields, **changes}})

    def close(self) -> None:
        if self._fd is not None:
            os.close(self._fd)          # releases the lock
            self._fd = None

    def __enter__(self) -> "PassageLog":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def _set_aside_torn(self) -> None:
        """Copy the torn tail to a side file (fsynced, read back), then truncate; log a repair."""
        t = self.torn_tail
        stamp = re.sub("[-:]", "", _logged_utc(self._clock))
        try:
            side = _write_new_file([self.path.with_name(f"{self.path.name}.torn-{stamp}"
                                                        + (f"-{i}" if i else ""))
                                    for i in range(100)], t.data)
            if side.read_bytes() != t.data:  # pragma: no cover - a disk that does not keep data
                raise OSError(errno.EIO, f"{side.name} does not hold the torn bytes")
            os.ftruncate(self._fd, t.offset)
            os.fsync(self._fd)
        except OSError as err:
            raise LogWriteError(f"{self.path.name}: its torn last line could not be set aside "
                                f"({err.strerror}); the log was not opened") from None
        what = "the tail of a cut-off import" if t.batch else "torn last line"
        self._size, self._lines, self.set_aside = t.offset, t.line - 1, side
        self.problems = [p for p in self.problems if p.severity != "warning"] + [LogProblem(
            t.line, None, f"{what} ({len(t.data)} bytes): {t.reason}; set aside in "
            f"{side.name}", "warning")]
        self.append({"kind": "repair", "side_file": side.name, "torn_line": t.line,
                     "torn_bytes": len(t.data), "torn_sha256": hashlib.sha256(t.data).hexdigest(),
                     "note": t.reason})


def _typed_error(trial: LoadedLog, o: dict) -> tuple[str, str] | None:
    """A value as typed that reads as another number than the one given beside it."""
    pairs = [(o["kind"], o, "")]
    if o["kind"] == "correct":
        pairs.append((trial.entry_by_id(o["target"]).kind, o["replacement"], "replacement."))
    for kind, fields, prefix in pairs:
        bad = typed_mismatch(kind, fields)
        if bad and bad[2] == "error":
            return prefix + bad[0], bad[1].replace(" after it was logged", "")
    return None


def _same_sight(trial: LoadedLog, index: dict, o: dict, dupes: list, where: str) -> None:
    """Keep the index of standing sights up to date; note a sight that repeats one."""
    kind, eid = o["kind"], o["id"]
    if kind in ("strike", "correct"):
        target = trial.effective_by_id(o["target"])
        if target is None or target.kind != "sight":
            return
        index.pop(sight_key(target.data), None)
        if kind == "strike":
            return
        o, eid = {**o["replacement"]}, target.id
        where = f"the correction of {target.id}"
    elif kind != "sight":
        return
    key = sight_key(o)
    if key is None:
        return
    if key in index:
        dupes.append((where, index[key], o))
    else:
        index[key] = eid


def _refuse_duplicates(dupes: list, n_entries: int) -> None:
    named = "; ".join(f"{where} repeats {eid}" for where, eid, _ in dupes[:MAX_DUPLICATES_NAMED])
    more = len(dupes) - MAX_DUPLICATES_NAMED
    o = dupes[0][2]
    first = (f"{o['body']} at {o['utc'][:19].replace('T', ' ')} UTC, Hs "
             f"{o.get('hs', o['hs_deg'])}")
    if n_entries == 1 and dupes[0][0].startswith("the correction"):
        msg = (f"{dupes[0][0]} would make it the same sight ({first}) as {dupes[0][1]}: one "
               "observation counts once; it was not logged")
    elif n_entries == 1:
        msg = (f"this sight ({first}) is already logged as {dupes[0][1]}: one observation "
               "counts once; it was not logged")
    else:
        msg = (f"{len(dupes)} sight(s) are already logged (the same body, UTC and Hs): {named}"
               + (f"; and {more} more" if more > 0 else "")
               + "; one observation counts once, so nothing was logged")
    raise DuplicateSightError(msg, [(w, e) for w, e, _ in dupes])


def _side_file_floor(path: Path) -> int:
    """The highest id seen in this log's torn-tail side files (no later id reuses it)."""
    best = 0
    for side in glob.glob(glob.escape(str(path)) + ".torn-*"):
        try:
            with open(side, "rb") as f:
                best = max([best, *map(int, _TORN_ID.findall(f.read()))])
        except OSError as err:
            raise LogFormatError(f"its side file {Path(side).name} cannot be read "
                                 f"({err.strerror})", path=path) from None
    return best
