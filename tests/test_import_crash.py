"""Imports are all or nothing: a writer appending batches (as ``nav import`` does, through
``append_many``) is killed with SIGKILL at random moments, many times.

The writer (tests/crash_writer.py, :func:`run_forked`) is a forked child of the test process
(nav already imported), so a kill costs milliseconds and the whole test a few seconds. After each kill the log is checked as a
navigator needs it (common practice, no source):

- every import that was confirmed (printed after append_many returned) is in the log, whole;
- every entry in the log belongs to a complete import: the first entry of an import names how
  many were written together (``batch``), and that many follow;
- an import cut off part way is reported on load (a warning naming the import and how far it
  got), not as entries; opening the log for writing copies those bytes, exactly, to a side file
  and logs a ``repair`` that says so; none of its entries is ever counted.

Three runs in four write each import a few bytes at a time (``tear``), standing in for a power
cut (a SIGKILL cannot split one small write); the others use the real single write. Where a kill
lands after a random wait depends on the machine's load (loaded, most land between imports: a
slow fsync, a late wake-up of the test), so one run in four holds an import part way and is
killed there: the cut-off path is exercised on any machine, not only an idle one.
"""

from __future__ import annotations

import hashlib
import importlib.util
import random
import time
from pathlib import Path

from nav.logbook import PassageLog, load_log, new_log

WRITER = Path(__file__).resolve().parent / "crash_writer.py"
_spec = importlib.util.spec_from_file_location("crash_writer", WRITER)
crash_writer = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(crash_writer)

SEED = 20260621
KILLS = 40
PER_LOG = 10
BATCH = 6


def _batches(entries) -> list[list]:
    """The log's entries grouped by import; every group must be complete."""
    groups, i = [], 0
    body = [e for e in entries if e.kind not in ("passage", "repair")]
    while i < len(body):
        n = body[i].batch or 1
        group = body[i:i + n]
        assert len(group) == n and all(e.batch is None for e in group[1:]), \
            f"an incomplete import from {body[i].id}"
        groups.append(group)
        i += n
    return groups


def test_sigkill_during_imports_leaves_all_or_none(tmp_path):
    rng = random.Random(SEED)
    cut_offs, unconfirmed, imports, started = 0, 0, 0, time.monotonic()
    for i in range(KILLS):
        if i % PER_LOG == 0:                  # a fresh log now and then keeps each load short
            if i:
                _check_final(path, confirmed)
                imports += len(confirmed)
            path = tmp_path / f"storm-petrel-imports-{i // PER_LOG}.jsonl"
            new_log(path, "Storm Petrel (invented)", "Import crash test").close()
            confirmed: dict[str, int] = {}    # first id of an import -> its first seq
            seq = 0
        tear = bool(i % 4)
        wait_s, hold = rng.uniform(0.001, 0.02), (rng.randint(1, 3), rng.random())
        # One run in four holds its import part way and is killed there (a cut-off import on
        # any machine); the others are killed after a random wait, wherever that lands.
        for line in crash_writer.run_forked(path, seq, tear, wait_s, batch=BATCH, tear_chunk=61,
                                            hold=hold if i % 4 == 1 else None):
            eid, s = line.split()
            confirmed[eid] = int(s)
            seq = max(seq, int(s) + BATCH)

        raw = path.read_bytes()
        loaded = load_log(path)               # strict: a kill never leaves a bad middle line
        assert path.read_bytes() == raw
        groups = _batches(loaded.entries)
        firsts = {g[0].id: g for g in groups}
        for eid, s in confirmed.items():      # every confirmed import is there, whole
            got = [{k: v for k, v in e.to_dict().items() if k not in ("id", "logged_utc")}
                   for e in firsts[eid]]
            assert got == [crash_writer.make_entry(x) for x in range(s, s + BATCH)], eid
        extra = [g for g in groups if g[0].id not in confirmed]
        assert len(extra) <= 1                # written whole, killed before it was confirmed
        if extra:
            assert extra[0][-1] is loaded.entries[-1]
            confirmed[extra[0][0].id] = seq
            seq += BATCH
            unconfirmed += 1

        t = loaded.torn_tail
        if t is None:
            continue
        assert t.data == raw[t.offset:]
        if t.batch:
            cut_offs += 1
            warning = [p for p in loaded.problems if p.severity == "warning"]
            assert len(warning) == 1 and "cut off after" in warning[0].message
            assert "none of them counts" in warning[0].message
        with PassageLog.open(path) as lg:     # sets the tail aside, whole
            side = lg.set_aside
            repair = lg.effective_entries("repair")[-1]
        assert side.read_bytes() == t.data
        assert repair["torn_sha256"] == hashlib.sha256(t.data).hexdigest()
        assert path.read_bytes().startswith(raw[:t.offset])
        assert load_log(path).torn_tail is None

    _check_final(path, confirmed)
    imports += len(confirmed)
    # The cut-off path must really have been exercised.
    assert cut_offs >= KILLS // 5, cut_offs
    print(f"\nimport crash test: {KILLS} kills in {time.monotonic() - started:.1f} s; "
          f"{imports} imports of {BATCH} in the logs, all whole ({unconfirmed} written but "
          f"not confirmed); {cut_offs} cut-off imports set aside")


def _check_final(path: Path, confirmed: dict) -> None:
    final = load_log(path)
    assert {g[0].id for g in _batches(final.entries)} == set(confirmed)
