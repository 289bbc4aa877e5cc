"""The passage log on disk: one JSON Lines file per passage, append-only, schema-checked.

Format ``nav-passage-log``, version 1 (our own; summarised in sight_logs/README.md):

- UTF-8, one JSON object per line, each line ending in ``\\n``; keys in a fixed order
  (``id``, ``kind``, ``logged_utc``, then the fields of the kind in the order of :data:`SCHEMA`).
- Line 1 is the ``passage`` header. Every entry has ``id`` (``e0001``, ``e0002`` ... increasing
  through the file), ``kind`` and ``logged_utc`` (when it was written, ISO 8601 ``Z``).
- A value as the user typed it is kept beside its parsed value: ``hs`` ("34 12.3") beside
  ``hs_deg`` (34.205). The log stores and loads; it parses no input and does no navigation.
- Nothing is ever rewritten. A ``strike`` or ``correct`` entry supersedes an earlier entry by its
  id; the *effective* view applies them, :meth:`LoadedLog.history_of` keeps everything.
- The schema (fields, kinds, checks) and the line codec live in :mod:`nav.logschema`.
- The one exception: a torn last line (a power cut mid-write) is copied to a side file
  ``<name>.jsonl.torn-<UTC stamp>``; the copy is fsynced and read back, and only then is the main
  file truncated to its last good newline; a ``repair`` entry then records where the bytes went,
  and no later id reuses an id seen in torn bytes. :func:`load_log` never changes a file;
  :meth:`PassageLog.open` (opening for writing) does this repair.
- Strict by default: a bad line anywhere but at the end refuses the file, naming its line and
  field. ``load_log(path, strict=False)`` reads the good lines and lists the problems (for an
  instructor reading a damaged log); such a log is never appended to.
- ``logged_utc`` comes from the log's clock: the wall clock, or a callable given to
  :func:`new_log` / :meth:`PassageLog.open` (``clock=``) that returns an aware datetime (a
  replayed or generated passage, a test); the time is written in UTC, rounded to the second.
- Durability: an append writes its line(s) with one ``write`` on an ``O_APPEND`` descriptor and
  fsyncs before it returns; a new file (the log, a side file) is written under a temporary name,
  fsynced, hard-linked into place (never overwriting) and its directory fsynced.

Content is data only: never evaluated; strings are length-limited and may not hold control or
invisible bidirectional characters; a file over :data:`MAX_LOG_BYTES` is refused unread.
"""

from __future__ import annotations

import errno
import glob
import hashlib
import os
import re
import secrets
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from types import MappingProxyType
from typing import Any, Callable, Iterable, Mapping

from . import __version__
from .errors import NavError, NavInputError
from .timekeeping import UTC, format_utc
from .logschema import (  # SCHEMA and COMMON are re-exported: part of this module's API
    COMMON, MAX_LINE_BYTES, SCHEMA, _check_entry, _decode_line, _encode, _normalise,
)

try:
    import fcntl
except ImportError:  # pragma: no cover - Windows: no advisory lock; one writer at a time
    fcntl = None

FORMAT, FORMAT_VERSION = "nav-passage-log", 1
MAX_LOG_BYTES = 50 * 1024 * 1024      # ~200 000 sights: far more than any passage
SUPERSEDABLE = ("setting", "dr", "sight", "fix", "note", "compass_check", "current",
                "watch_check")
_TORN_ID = re.compile(rb'"id"\s*:\s*"e(\d{4,9})"')
CLOCK_EXAMPLE = "clock=lambda: datetime(2026, 6, 19, 8, 0, tzinfo=timezone.utc)"


class LogFormatError(NavInputError):
    """A passage log that cannot be read as one: names the file, the line and the field."""

    def __init__(self, message: str, *, path=None, line: int | None = None,
                 field: str | None = None, example: str | None = None):
        super().__init__(message, field=field, example=example)
        self.path, self.line = path, line

    def __str__(self) -> str:
        where = ([Path(self.path).name] if self.path else []) \
            + ([f"line {self.line}"] if self.line else []) \
            + ([f"field '{self.field}'"] if self.field else [])
        return ", ".join(where) + ": " + self.reason + \
            (f" (for example: {self.example})" if self.example else "")


class LogWriteError(NavError):
    """An append that did not complete: the entry must be treated as NOT logged."""


@dataclass(frozen=True)
class LogProblem:
    line: int
    field: str | None
    message: str
    severity: str = "error"       # "error" refuses strict loading; "warning" is a torn tail

    def __str__(self) -> str:
        return f"line {self.line}" + (f", field '{self.field}'" if self.field else "") \
            + f": {self.message}"


@dataclass(frozen=True)
class TornTail:
    line: int                     # the line the torn bytes start on
    offset: int                   # byte offset just after the last good newline
    data: bytes
    reason: str


@dataclass(frozen=True)
class Entry:
    """One entry, read-only; ``data`` is the whole JSON object (lists as tuples).

    In the effective view a corrected entry keeps its original id, kind and logged_utc and
    carries the replacement fields; ``revised_by`` and ``line`` are the latest ``correct``'s.
    """

    id: str
    kind: str
    logged_utc: str
    line: int
    data: Mapping[str, Any]
    revised_by: str | None = None

    def __getitem__(self, name: str) -> Any:
        return self.data[name]

    def get(self, name: str, default: Any = None) -> Any:
        return self.data.get(name, default)

    def to_dict(self) -> dict:
        return _thaw(self.data)


def _freeze(v):
    if isinstance(v, dict):
        return MappingProxyType({k: _freeze(x) for k, x in v.items()})
    return tuple(_freeze(x) for x in v) if isinstance(v, list) else v


def _thaw(v):
    if isinstance(v, Mapping):
        return {k: _thaw(x) for k, x in v.items()}
    return [_thaw(x) for x in v] if isinstance(v, tuple) else v


# ---------------------------------------------------------------- the loaded log

class LoadedLog:
    """Every good entry in file order, the effective view, and the problems found."""

    def __init__(self, path: Path | str):
        self.path = Path(path)
        self.entries: list[Entry] = []
        self.problems: list[LogProblem] = []
        self.torn_tail: TornTail | None = None
        self.set_aside: Path | None = None     # where PassageLog.open put a torn tail
        self._by_id: dict[str, Entry] = {}
        self._chain: dict[str, list[Entry]] = {}
        self._struck: dict[str, Entry] = {}
        self._max_num = self._id_floor = self._lines = 0

    @property
    def header(self) -> Entry:
        return self.entries[0]

    @property
    def errors(self) -> list[LogProblem]:
        return [p for p in self.problems if p.severity == "error"]

    def next_id(self) -> str:
        return f"e{max(self._max_num, self._id_floor) + 1:04d}"

    def entry_by_id(self, eid: str) -> Entry | None:
        """The entry exactly as written (any kind), or None."""
        return self._by_id.get(eid)

    def effective_by_id(self, eid: str) -> Entry | None:
        """The entry as it stands: None if struck (or unknown), the latest replacement if corrected."""
        e = self._by_id.get(eid)
        if e is None or e.kind not in SUPERSEDABLE or eid in self._struck:
            return None
        if not self._chain.get(eid):
            return e
        last = self._chain[eid][-1]
        data = {"id": e.id, "kind": e.kind, "logged_utc": e.logged_utc,
                **_thaw(last["replacement"])}
        return Entry(e.id, e.kind, e.logged_utc, last.line, _freeze(data), revised_by=last.id)

    def effective_entries(self, kind: str | None = None) -> list[Entry]:
        """Entries as they stand (struck ones out, corrected ones replaced), in logged order.

        The header, strikes and corrections are not listed (see :meth:`history_of`); repair
        entries are, so that a reader sees that a torn tail was set aside.
        """
        out = []
        for e in self.entries:
            if kind is not None and e.kind != kind or e.kind in ("passage", "strike", "correct"):
                continue
            cur = e if e.kind == "repair" else self.effective_by_id(e.id)
            if cur is not None:
                out.append(cur)
        return out

    def history_of(self, eid: str) -> list[Entry]:
        """The original entry, then every strike/correction of it in file order."""
        e = self._by_id.get(eid)
        if e is None:
            raise NavInputError(f"no entry {eid} in this log", field="id", example="e0002")
        if e.kind in ("strike", "correct"):
            e = self._by_id[e["target"]]
        return [e, *self._chain.get(e.id, [])]

    # -- building, for the loader and for PassageLog
    def _admit(self, o: Mapping) -> tuple[str | None, str] | None:
        """Checks against the entries before this one: ids, targets, references."""
        eid, kind = o["id"], o["kind"]
        if eid in self._by_id:
            return "id", f"duplicate id {eid} (first at line {self._by_id[eid].line})"
        if int(eid[1:]) <= self._max_num:
            return "id", f"{eid} comes after e{self._max_num:04d}: ids must increase"
        if kind == "passage" and self.entries:
            return "kind", "a second passage header: a log holds one passage"
        if kind in ("strike", "correct"):
            t = o["target"]
            target = self._by_id.get(t)
            if target is None:
                return "target", f"names {t}, which is not an earlier entry of this log"
            if target.kind not in SUPERSEDABLE:
                hint = f"; name {target['target']} instead" if "target" in target.data else ""
                return "target", f"names {t}, a {target.kind} entry, which cannot be superseded{hint}"
            if t in self._struck:
                s = self._struck[t]
                return "target", f"{t} was already struck by {s.id} (line {s.line})"
            if kind == "correct":
                bad = _check_entry(o["replacement"], replacement_of=target.kind)
                if bad:
                    return "replacement" + (f".{bad[0]}" if bad[0] else ""), bad[1]
        if kind == "fix":
            for sid in o["sight_ids"]:
                e = self._by_id.get(sid)
                if e is None or e.kind != "sight":
                    what = "not an earlier entry" if e is None else f"a {e.kind} entry, not a sight"
                    return "sight_ids", f"names {sid}, {what}"
            if len(set(o["sight_ids"])) != len(o["sight_ids"]):
                return "sight_ids", "names one sight twice"
        return None

    def _add(self, o: dict, line: int) -> Entry:
        e = Entry(o["id"], o["kind"], o["logged_utc"], line, _freeze(o))
        self.entries.append(e)
        self._by_id[e.id] = e
        self._max_num, self._lines = int(e.id[1:]), line
        if e.kind in ("strike", "correct"):
            self._chain.setdefault(e["target"], []).append(e)
            if e.kind == "strike":
                self._struck[e["target"]] = e
        return e

    def _take_line(self, raw: bytes, line: int) -> None:
        self._lines = line
        obj, msg = (None, f"is {len(raw)} bytes long; the limit is {MAX_LINE_BYTES}") \
            if len(raw) > MAX_LINE_BYTES else _decode_line(raw)
        bad = (None, msg) if msg else (_check_entry(obj) or self._admit(obj))
        if bad:
            self.problems.append(LogProblem(line, bad[0], bad[1]))
        else:
            self._add(obj, line)

    def _state(self) -> dict:
        """A copy of the index (PassageLog stages a batch on it and keeps it if all is well)."""
        keys = LoadedLog(self.path).__dict__
        s = {k: (v.copy() if isinstance(v, (list, dict)) else v)
             for k, v in self.__dict__.items() if k in keys}
        s["_chain"] = {k: v.copy() for k, v in self._chain.items()}
        return s


def _read_bytes(path: Path, max_bytes: int) -> bytes:
    try:
        with open(path, "rb") as f:
            size = os.fstat(f.fileno()).st_size
            data = f.read(max_bytes + 1) if size <= max_bytes else b""
    except OSError as err:
        raise LogFormatError("no such passage log" if isinstance(err, FileNotFoundError)
                             else f"cannot be read ({err.strerror})", path=path) from None
    if size > max_bytes or len(data) > max_bytes:
        raise LogFormatError(f"is {max(size, len(data)):,} bytes, over the {max_bytes / 2**20:g} MB "
                             "limit of a passage log; it was not read", path=path)
    return data


def _parse(log: LoadedLog, data: bytes, strict: bool) -> LoadedLog:
    path, end = log.path, data.rfind(b"\n") + 1
    lines, torn = data[:end].split(b"\n")[:-1], None
    if end < len(data):
        torn = TornTail(len(lines) + 1, end, data[end:], "the last line has no newline")
    elif len(lines) > 1 and _decode_line(lines[-1])[1]:
        start = end - len(lines[-1]) - 1
        torn = TornTail(len(lines), start, data[start:],
                        "the last line is " + _decode_line(lines.pop())[1])
    if torn and len(torn.data) > MAX_LINE_BYTES + 1:   # far longer than any line nav writes
        raise LogFormatError(f"ends with {len(torn.data):,} bytes that are not a line nav wrote",
                             path=path, line=torn.line)
    if not lines:
        raise LogFormatError("is not a nav passage log (" + ("it is empty)" if not data else
                             "it has no complete first line)"), path=path, line=1)
    head = lines[0][3:] if lines[0].startswith(b"\xef\xbb\xbf") else lines[0]
    obj, msg = _decode_line(head)
    if msg or obj.get("kind") != "passage" or obj.get("format") != FORMAT:
        raise LogFormatError(f"is not a nav passage log (line 1 is {msg or 'not its header'})",
                             path=path, line=1, example=f'{{"kind": "passage", "format": "{FORMAT}"')
    version = obj.get("format_version")
    if version != FORMAT_VERSION or isinstance(version, bool):
        newer = "written by a newer nav; " if isinstance(version, int) and version > 1 else ""
        raise LogFormatError(f"format_version {str(version)[:20]}: {newer}this nav reads version "
                             f"{FORMAT_VERSION}", path=path, line=1, field="format_version")
    for i, raw in enumerate(lines, start=1):
        log._take_line(head if i == 1 else raw, i)
        if log.problems and i == 1:
            p = log.problems[0]
            raise LogFormatError(p.message, path=path, line=1, field=p.field)
    if torn:
        log.torn_tail = torn
        log._id_floor = max([log._id_floor, *map(int, _TORN_ID.findall(torn.data))])
        log.problems.append(LogProblem(torn.line, None, f"torn last line ({len(torn.data)} bytes):"
                                       f" {torn.reason}; it is set aside when the log is opened "
                                       "for writing", "warning"))
    if strict and log.errors:
        first, more = log.errors[0], len(log.errors) - 1
        raise LogFormatError(first.message + (f" ({more} more problems)" if more else "")
                             + "; the log was not opened and nothing was changed",
                             path=path, line=first.line, field=first.field)
    return log


def load_log(path: Path | str, *, strict: bool = True, max_bytes: int = MAX_LOG_BYTES) -> LoadedLog:
    """Read a passage log; never changes the file. Strict: any bad line raises LogFormatError.

    A reader does not lock: while a writer is mid-append it may report a torn last line."""
    path = Path(path)
    return _parse(LoadedLog(path), _read_bytes(path, max_bytes), strict)


# ---------------------------------------------------------------- writing

def _write_fully(fd: int, data: bytes) -> None:
    """One os.write (more only if the kernel writes short). The crash test tears lines here."""
    view = memoryview(data)
    while view:
        view = view[os.write(fd, view):]


def _fsync_dir(directory: Path) -> None:
    try:
        dfd = os.open(directory, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
    except OSError:  # pragma: no cover - a platform that cannot open a directory (Windows)
        return
    try:
        os.fsync(dfd)
    except OSError as err:  # pragma: no cover - a file system that cannot sync a directory
        if err.errno not in (errno.EINVAL, errno.ENOTSUP):
            raise
    finally:
        os.close(dfd)


def _write_new_file(candidates: list[Path], data: bytes) -> Path:
    """Write data under the first free candidate name, complete or not at all: a temporary file
    is written and fsynced, hard-linked under the name (a link never replaces a file), removed,
    and the directory fsynced."""
    tmp = candidates[0].with_name(f".{candidates[0].name}.{secrets.token_hex(4)}.tmp")
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_CLOEXEC", 0), 0o644)
    try:
        _write_fully(fd, data)
        os.fsync(fd)
    finally:
        os.close(fd)
    try:
        for target in candidates:
            try:
                os.link(tmp, target)
                break
            except FileExistsError:
                continue
        else:
            raise FileExistsError(candidates[-1])
    finally:
        os.unlink(tmp)
    _fsync_dir(tmp.parent)
    return target


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
    path, clock = Path(path), _checked_clock(clock)
    header = {"id": "e0001", "kind": "passage", "logged_utc": _logged_utc(clock),
              "format": FORMAT, "format_version": FORMAT_VERSION,
              "passage_uid": secrets.token_hex(8) if passage_uid is None else passage_uid,
              "vessel": vessel, "title": title,
              "software": f"nav {__version__}" if software is None else software}
    bad = _check_entry(header)
    if bad:
        raise NavInputError(bad[1], field=bad[0], example="0123456789abcdef" if bad[0] ==
                            "passage_uid" else "vessel 'Kittiwake', title 'Azores run'")
    exists = NavInputError(f"{path} already exists; a passage log is never overwritten",
                           field="path", example=str(path.with_name(path.stem + "-2.jsonl")))
    if path.exists():
        raise exists
    try:
        if not path.parent.is_dir():
            path.parent.mkdir(parents=True)
            _fsync_dir(path.parent.parent)
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
        """Open for appending: strict loading, then a torn tail set aside (see the module doc).
        ``clock`` (default: the wall clock) gives every logged_utc this log writes."""
        path, clock = Path(path), _checked_clock(clock)
        try:
            fd = os.open(path, os.O_WRONLY | os.O_APPEND | getattr(os, "O_CLOEXEC", 0))
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
            data = _read_bytes(path, max_bytes)
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
        written with one write and made durable by one fsync: a batch is confirmed as a whole."""
        if self._fd is None or self._broken:
            raise LogWriteError(f"{self.path.name}: " + ("the log is closed" if self._fd is None
                                                         else self._broken + "; reopen the log"))
        trial = LoadedLog(self.path)
        trial.__dict__.update(self._state())
        lines, added, entries = [], [], list(entries)
        for n, given in enumerate(entries, 1):
            where = f" (entry {n} of {len(entries)})" if len(entries) > 1 else ""
            if not isinstance(given, Mapping):
                raise NavInputError("an entry must be a mapping of field names to values" + where)
            o = _normalise(given, "entry")
            if "id" in o or "logged_utc" in o:
                raise NavInputError("id and logged_utc are assigned by the log" + where, field="id")
            o = {"id": trial.next_id(), "logged_utc": _logged_utc(self._clock), **o}
            bad = _check_entry(o) or trial._admit(o)
            if bad:
                raise NavInputError(bad[1] + where, field=bad[0])
            line = _encode(o, o["kind"] == "correct" and trial.entry_by_id(o["target"]).kind)
            if len(line) > MAX_LINE_BYTES:
                raise NavInputError(f"the entry is {len(line):,} bytes as a line; the limit is "
                                    f"{MAX_LINE_BYTES:,}" + where, field="entry")
            back = _decode_line(line[:-1])[0]
            if back != o:  # pragma: no cover - a line that would not read back as written
                raise NavInputError("the entry does not read back as written" + where)
            added.append(trial._add(back, trial._lines + 1))
            lines.append(line)
        blob = b"".join(lines)
        if self._size + len(blob) > self._max_bytes:
            raise NavInputError(f"the log would pass its {self._max_bytes / 2**20:g} MB limit; "
                                "start a new passage log", field="entry")
        try:
            if os.fstat(self._fd).st_size != self._size:
                self._broken = "the file was changed by something else since it was opened"
                raise LogWriteError(f"{self.path.name}: {self._broken}; nothing was written; "
                                    "reopen the log")
            _write_fully(self._fd, blob)
            os.fsync(self._fd)
        except OSError as err:
            self._broken = f"an append failed ({err.strerror})"
            raise LogWriteError(f"{self.path.name}: the entry was NOT logged ({err.strerror}); "
                                "reopen the log") from None
        self._size += len(blob)
        self.__dict__.update(trial.__dict__)
        return added

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
        self._size, self._lines, self.set_aside = t.offset, t.line - 1, side
        self.problems = [p for p in self.problems if p.severity != "warning"] + [LogProblem(
            t.line, None, f"torn last line ({len(t.data)} bytes): {t.reason}; set aside in "
            f"{side.name}", "warning")]
        self.append({"kind": "repair", "side_file": side.name, "torn_line": t.line,
                     "torn_bytes": len(t.data), "torn_sha256": hashlib.sha256(t.data).hexdigest(),
                     "note": t.reason})


def _side_file_floor(path: Path) -> int:
    """The highest id seen in this log's torn-tail side files (no later id reuses it)."""
    best = 0
    for side in glob.glob(glob.escape(str(path)) + ".torn-*"):
        try:
            with open(side, "rb") as f:
                best = max([best, *map(int, _TORN_ID.findall(f.read(MAX_LINE_BYTES + 2)))])
        except OSError as err:
            raise LogFormatError(f"its side file {Path(side).name} cannot be read "
                                 f"({err.strerror})", path=path) from None
    return best
