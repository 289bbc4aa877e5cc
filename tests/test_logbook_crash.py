"""Crash test of the passage log: a writer process is killed (SIGKILL) at random moments.

tests/crash_writer.py appends entries in a loop and says each id only after append() returned,
that is after the fsync; it runs in a forked child of the test process (no start-up per kill). The test kills it at a random moment (fixed seed), many times, and after
each kill checks the log as a navigator would need it (common practice, no source):

- every confirmed entry loads, intact (its fields equal what the writer appended);
- besides them, at most one entry appears that was never confirmed (written, killed before the
  print), and it is the last one;
- at most the one unconfirmed last line is torn; the loader reports it without changing the file,
  and opening the log for writing copies it, byte for byte, to a side file before removing it;
- no id is ever reused, not even the id of a torn line.

Half of the runs tear lines on purpose (``--tear``: the line is written a few bytes at a time),
standing in for a power cut: a SIGKILL cannot tear a real append, because the kernel completes a
small write before the process dies. The other half exercise the real append path. Where a kill
lands after a random wait depends on the machine's load, so one run in four holds a line part
way and is killed there: the torn-tail path is exercised on any machine, not only an idle one.
"""

from __future__ import annotations

import hashlib
import importlib.util
import json
import random
import re
import subprocess
import sys
import time
from pathlib import Path

from nav.logbook import PassageLog, load_log, new_log

WRITER = Path(__file__).resolve().parent / "crash_writer.py"
SEED = 20260320
KILLS = 40
_spec = importlib.util.spec_from_file_location("crash_writer", WRITER)
crash_writer = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(crash_writer)


def _ids_in(data: bytes) -> set[str]:
    return {m.decode() for m in re.findall(rb'"id"\s*:\s*"(e\d+)"', data)}


def test_sigkill_at_random_moments_loses_nothing_confirmed(tmp_path):
    rng = random.Random(SEED)
    path = tmp_path / "petrel-crash.jsonl"
    new_log(path, "Petrel (invented)", "Crash test passage").close()
    confirmed: dict[str, int] = {}          # id -> sequence number of the entry appended
    unconfirmed: set[str] = set()           # complete lines whose print the kill prevented
    torn_ids: set[str] = set()
    seq, started = 0, time.monotonic()
    stats = {"append": [0, 0, 0], "tear": [0, 0, 0]}   # kills, torn tails, unconfirmed lines

    for i in range(KILLS):
        mode = "tear" if i % 2 else "append"
        wait_s, hold = rng.uniform(0.005, 0.12), (rng.randint(1, 3), rng.random())
        # One run in four holds a line part way and is killed there (a torn tail on any
        # machine); the others are killed after a random wait, wherever that lands.
        said = crash_writer.run_forked(path, seq, mode == "tear", wait_s,
                                       hold=hold if i % 4 == 1 else None)
        stats[mode][0] += 1
        for line in said:                    # each was said after the fsync
            eid, s = line.split()
            confirmed[eid] = int(s)
            seq = max(seq, int(s) + 1)

        raw = path.read_bytes()
        loaded = load_log(path)              # strict: a kill never leaves a bad middle line
        assert path.read_bytes() == raw      # reading changes nothing
        by_id = {e.id: e for e in loaded.entries}
        for eid, s in confirmed.items():
            got = {k: v for k, v in by_id[eid].to_dict().items() if k != "logged_utc"}
            assert got == {"id": eid, **crash_writer.make_entry(s)}, eid
        extra = [e for e in loaded.entries if e.kind not in ("passage", "repair")
                 and e.id not in confirmed and e.id not in unconfirmed]
        # One kill stops one writer once: at most its last entry was written and not said.
        assert len(extra) <= 1, (f"kill {i} ({mode}): unconfirmed {[e.id for e in extra]}; "
                                 f"the writer said {said}; log ends {raw[-700:]!r}")
        if extra:
            assert extra[0] is loaded.entries[-1], extra[0].id
            got = {k: v for k, v in extra[0].to_dict().items() if k not in ("id", "logged_utc")}
            assert got == crash_writer.make_entry(seq), extra[0].id   # the writer's next one
            unconfirmed.add(extra[0].id)
            stats[mode][2] += 1
            seq += 1                         # it holds the next sequence number: a new sight
            #                                  with the same body, UTC and Hs would be refused

        t = loaded.torn_tail
        if t is None:
            assert raw.endswith(b"\n")
            continue
        stats[mode][1] += 1
        assert t.offset == raw.rfind(b"\n") + 1 and t.data == raw[t.offset:]
        assert b"\n" not in t.data           # one line at most
        assert not _ids_in(t.data) & set(confirmed)
        torn_ids |= _ids_in(t.data)
        with PassageLog.open(path) as lg:    # sets the torn tail aside
            side = lg.set_aside
            repair = lg.effective_entries("repair")[-1]
        assert side.read_bytes() == t.data   # the side file holds exactly the torn bytes
        assert repair["side_file"] == side.name
        assert repair["torn_sha256"] == hashlib.sha256(t.data).hexdigest()
        after = path.read_bytes()
        assert after.startswith(raw[:t.offset]) and after.endswith(b"\n")
        assert load_log(path).torn_tail is None

    final = load_log(path)
    ids = [e.id for e in final.entries]
    assert ids == sorted(ids) and len(set(ids)) == len(ids)
    assert not torn_ids & set(ids)           # a torn line's id is never given to a later entry
    assert set(confirmed) <= set(ids)
    sides = sorted(tmp_path.glob(path.name + ".torn-*"))
    assert len(sides) == stats["append"][1] + stats["tear"][1]
    # The torn-line path must really have been exercised (a kill lands mid-line most of the time).
    assert stats["tear"][1] >= KILLS // 4
    print(f"\ncrash test: {KILLS} kills in {time.monotonic() - started:.1f} s; "
          f"{len(confirmed)} confirmed entries, all intact; "
          f"real appends: {stats['append'][0]} kills, {stats['append'][1]} torn tails, "
          f"{stats['append'][2]} written-but-unconfirmed; "
          f"torn writes: {stats['tear'][0]} kills, {stats['tear'][1]} torn tails set aside, "
          f"{stats['tear'][2]} written-but-unconfirmed; final log {len(ids)} entries")


def test_reopening_after_a_kill_continues_the_ids(tmp_path):
    path = tmp_path / "petrel-reopen.jsonl"
    new_log(path, "Petrel (invented)", "Reopen test").close()
    proc = subprocess.Popen([sys.executable, str(WRITER), str(path), "0", "--tear"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    assert proc.stdout.readline() == b"ready\n"
    time.sleep(0.3)
    proc.kill()
    out, _ = proc.communicate()
    last_confirmed = out.split(b"\n")[:-1][-1].split()[0].decode()
    torn = load_log(path).torn_tail
    highest = max([int(last_confirmed[1:]), *(int(i[1:]) for i in _ids_in(torn.data if torn else b""))])
    with PassageLog.open(path) as lg:
        e = lg.append({"kind": "note", "text": "after the crash"})
    assert int(e.id[1:]) > highest
    assert json.loads(path.read_text(encoding="utf-8").splitlines()[-1])["id"] == e.id
