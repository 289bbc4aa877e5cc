"""The passage log on disk: one JSON Lines file per passage, append-only, schema-checked.

Format ``nav-passage-log``, version 2 (our own; summarised in sight_logs/README.md):

- UTF-8, one JSON object per line, each line ending in ``\\n``; keys in a fixed order
  (``id``, ``kind``, ``logged_utc``, then the fields of the kind in the order of :data:`SCHEMA`,
  then ``check``).
- Line 1 is the ``passage`` header. Every entry has ``id`` (``e0001``, ``e0002`` ... increasing
  through the file), ``kind`` and ``logged_utc`` (when it was written, ISO 8601 ``Z``).
- Every line carries ``check``, a hash chain (see :mod:`nav.logschema`): an edited, deleted,
  moved or inserted line is found on load and named by its line number.
- A value as the user typed it is kept beside its parsed value: ``hs`` ("34 12.3") beside
  ``hs_deg`` (34.205). On load the text is read again with nav's parser and must give the
  stored number (:func:`nav.logschema.typed_mismatch`).
- Nothing is ever rewritten. A ``strike`` or ``correct`` entry supersedes an earlier entry by its
  id; the *effective* view applies them, :meth:`LoadedLog.history_of` keeps everything.
- An import (more than one entry appended at once) is marked on its first entry: ``batch``
  says how many entries were written together. A file that ends before the last of them holds
  an import that was cut off: none of its entries counts; the tail is set aside like a torn
  line.
- The one exception to "never rewritten": a torn last line (a power cut mid-write), or the
  tail of a cut-off import, is copied to a side file ``<name>.jsonl.torn-<UTC stamp>``; the copy
  is fsynced and read back, and only then is the main file truncated; a ``repair`` entry then
  records where the bytes went, and no later id reuses an id seen in them. :func:`load_log`
  never changes a file; :meth:`PassageLog.open` (opening for writing) does this repair.
- Strict by default: a bad line anywhere but at the end refuses the file, naming its line and
  field. ``load_log(path, strict=False)`` reads the good lines and lists the problems (for
  review: ``nav review LOG``); such a log is never appended to.
- Version 1 logs (written before lines carried a check) load as they are: their lines are not
  checked, and the entries appended to them later are (from the first checked line on, every
  line must carry its check). A ``note`` problem says so.
- Writing (``PassageLog``, ``new_log``) lives in :mod:`nav.logwriter` and is importable from
  here; the file rules (regular files only, no FIFO) in :mod:`nav.files`.

Content is data only: never evaluated; strings are length-limited and may not hold control or
invisible bidirectional characters; a file over :data:`MAX_LOG_BYTES` is refused unread.
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType
from typing import Any, Mapping

from .errors import NavError, NavInputError
from .timekeeping import parse_utc
from .logschema import (  # SCHEMA and COMMON are re-exported: part of this module's API
    BATCH, CHECK, COMMON, MAX_LINE_BYTES, META_KINDS, SCHEMA, _check_entry, _decode_line, chain_check,
    typed_mismatch,
)

FORMAT, FORMAT_VERSION = "nav-passage-log", 2
READ_VERSIONS = (1, 2)
MAX_LOG_BYTES = 50 * 1024 * 1024      # ~200 000 sights: far more than any passage
SUPERSEDABLE = ("setting", "dr", "sight", "fix", "note", "compass_check", "current",
                "watch_check")
_TORN_ID = re.compile(rb'"id"\s*:\s*"e(\d{4,9})"')


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


class DuplicateSightError(NavInputError):
    """A sight identical in body, UTC and Hs to one that stands in the log: one observation
    counts once. ``duplicates`` pairs each refused entry's place with the id it repeats."""

    def __init__(self, message: str, duplicates: list[tuple[str, str]]):
        super().__init__(message, field="sight",
                         example=f"strike {duplicates[0][1]} REASON first, if that one is wrong")
        self.duplicates = duplicates


@dataclass(frozen=True)
class LogProblem:
    line: int
    field: str | None
    message: str
    severity: str = "error"       # "error" refuses strict loading; "warning" is a torn tail
                                  # or a cut-off import; "note" is said and refuses nothing

    def __str__(self) -> str:
        return f"line {self.line}" + (f", field '{self.field}'" if self.field else "") \
            + f": {self.message}"


@dataclass(frozen=True)
class TornTail:
    line: int                     # the line the torn bytes start on
    offset: int                   # byte offset just after the last good newline
    data: bytes
    reason: str
    batch: bool = False           # the tail of an import that was cut off


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
    check: str | None = None      # the line's check (hash chain); not part of data
    batch: int | None = None      # on the first entry of an import: how many were written at once

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
        self.version: int = FORMAT_VERSION
        self._check = ""                       # the check of the last good line
        self._checked_from: int | None = None  # first line that carried a check
        self._batch: tuple | None = None       # (batch entry, entries still to come)

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
            if kind is not None and e.kind != kind or e.kind in META_KINDS:
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
        if kind == "passage" and BATCH in o:
            return BATCH, "the passage header is not part of an import"
        if self._batch and BATCH in o:
            b = self._batch[0]
            return BATCH, (f"an import begins inside the import that {b.id} (line {b.line}) "
                           f"began, which still has {self._batch[1]} entries to come")
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
        e = Entry(o["id"], o["kind"], o["logged_utc"], line,
                  _freeze({k: v for k, v in o.items() if k not in (CHECK, BATCH)}),
                  check=o.get(CHECK), batch=o.get(BATCH))
        self.entries.append(e)
        self._by_id[e.id] = e
        self._max_num, self._lines = int(e.id[1:]), line
        self._check = o[CHECK] if CHECK in o else chain_check(self._check, o)
        if self._batch:
            left = self._batch[1] - 1
            self._batch = (self._batch[0], left) if left else None
        if e.batch:
            self._batch = (e, e.batch - 1)
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
            if obj is not None and isinstance(obj.get(CHECK), str):
                self._check = obj[CHECK]       # the next line is checked against this one
            return
        self._verify(obj, line)
        self._add(obj, line)

    def _verify(self, o: Mapping, line: int) -> None:
        """The check and the typed values of a well-formed line (problems, never refusals)."""
        if CHECK in o:
            self._checked_from = self._checked_from or line
            if o[CHECK] != chain_check(self._check, o):
                gap = int(o["id"][1:]) - self._max_num - 1 if self._max_num else 0
                hint = (f"; ids jump from e{self._max_num:04d} to {o['id']}" if gap > 0 else "")
                self.problems.append(LogProblem(line, CHECK, (
                    "the entry's check does not match: this line was changed, or a line before "
                    f"it was deleted or moved, after it was written{hint}")))
        elif self.version >= 2 or self._checked_from:
            self.problems.append(LogProblem(line, CHECK, (
                "is missing: every line of this log carries its check "
                + (f"(from line {self._checked_from} on)" if self.version < 2 else ""))))
        kind = o["kind"]
        for fields in ((o, kind),) + (((o["replacement"], self._by_id[o["target"]].kind),)
                                      if kind == "correct" else ()):
            bad = typed_mismatch(fields[1], fields[0])
            if bad:
                name = ("replacement." if fields[0] is not o else "") + bad[0]
                self.problems.append(LogProblem(line, name, bad[1], bad[2]))

    # -- one observation counts once
    def sight_index(self) -> dict:
        """Sight key (body, instant, Hs) -> id, over the sights that stand."""
        return {k: e.id for e in self.effective_entries("sight") if (k := sight_key(e.data))}

    def _state(self) -> dict:
        """A copy of the index (PassageLog stages a batch on it and keeps it if all is well)."""
        keys = LoadedLog(self.path).__dict__
        s = {k: (v.copy() if isinstance(v, (list, dict)) else v)
             for k, v in self.__dict__.items() if k in keys}
        s["_chain"] = {k: v.copy() for k, v in self._chain.items()}
        return s


def sight_key(o: Mapping) -> tuple | None:
    """What makes two sights one observation: the body, the instant and Hs (to 1e-9°)."""
    try:
        return (o["body"], parse_utc(o["utc"]), round(float(o["hs_deg"]), 9))
    except (KeyError, TypeError, ValueError):
        return None


def _read_bytes(path: Path, max_bytes: int) -> bytes:
    from .files import open_input

    if not os.path.lexists(path):
        raise LogFormatError("no such passage log", path=path)
    try:
        fd = open_input(path, field="log", example="sight_logs/passage.jsonl")
    except NavInputError as err:
        raise LogFormatError(err.reason, path=None, field="log") from None
    try:
        with os.fdopen(fd, "rb", closefd=False) as f:
            size = os.fstat(f.fileno()).st_size
            data = f.read(max_bytes + 1) if size <= max_bytes else b""
    except OSError as err:
        raise LogFormatError(f"cannot be read ({err.strerror})", path=path) from None
    finally:
        os.close(fd)
    if size > max_bytes or len(data) > max_bytes:
        raise LogFormatError(f"is {max(size, len(data)):,} bytes, over the {max_bytes / 2**20:g} MB "
                             "limit of a passage log; it was not read", path=path)
    return data


def _parse(log: LoadedLog, data: bytes, strict: bool, _inner: bool = False) -> LoadedLog:
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
    if version not in READ_VERSIONS or isinstance(version, bool):
        newer = "written by a newer nav; " if isinstance(version, int) and \
            version > FORMAT_VERSION else ""
        raise LogFormatError(f"format_version {str(version)[:20]}: {newer}this nav reads versions "
                             + " and ".join(map(str, READ_VERSIONS)), path=path, line=1,
                             field="format_version")
    log.version = version
    offset = 0
    for i, raw in enumerate(lines, start=1):
        if log._batch is None:
            batch_at = (i, offset)
        log._take_line(head if i == 1 else raw, i)
        offset += len(raw) + 1
        if log.problems and i == 1 and log.problems[0].severity == "error":
            p = log.problems[0]
            raise LogFormatError(p.message, path=path, line=1, field=p.field)
    if log._batch is not None:         # an import cut off: none of its entries counts
        b, left = log._batch
        line, start = batch_at
        src = b.get("source") or b.get("note") or ""
        cut = TornTail(line, start, data[start:], (
            f"an import of {b.batch} entries (from {b.id}" + (f", {src[:80]}" if src else "")
            + f") was cut off after {b.batch - left} of them; none of them counts"), True)
        fresh = _parse(LoadedLog(path), data[:start], strict=False, _inner=True)
        log.__dict__.update(fresh.__dict__)
        torn = cut
    if version < 2 and not _inner:
        log.problems.append(LogProblem(1, "format_version", (
            "format version 1, written before lines carried a check: "
            + ("none of its lines can be checked for edits" if log._checked_from is None else
               f"lines before {log._checked_from} cannot be checked for edits")), "note"))
    if torn:
        log.torn_tail = torn
        log._id_floor = max([log._id_floor, *map(int, _TORN_ID.findall(torn.data))])
        what = "the tail of a cut-off import" if torn.batch else "torn last line"
        log.problems.append(LogProblem(torn.line, None, f"{what} ({len(torn.data)} bytes):"
                                       f" {torn.reason}; it is set aside when the log is opened "
                                       "for writing", "warning"))
    if strict and log.errors and not _inner:
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




def __getattr__(name: str):
    """The writer (PassageLog, new_log) lives in nav.logwriter; importable from here too."""
    if name in ("PassageLog", "new_log", "CLOCK_EXAMPLE"):
        from . import logwriter

        return getattr(logwriter, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
