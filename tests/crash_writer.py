"""Helper for tests/test_logbook_crash.py: append entries to a passage log until killed.

    python crash_writer.py LOG START [--tear] [--batch N]

Opens LOG for writing (which sets aside a torn tail), prints ``ready``, then appends entries made
by :func:`make_entry` from sequence number START on, printing ``<id> <seq>`` for each one only
after ``append()`` has returned (that is, after the fsync).

``--tear`` stands in for a power cut tearing a line: the log's single write is replaced by one
that writes the line a few bytes at a time with pauses, so that a kill lands mid-line. (A kill
cannot tear a real append: the kernel finishes a small write before the process dies; a power
cut can.) The test data are invented.

``--batch N`` stands in for ``nav import``: entries are appended N at a time with
``append_many`` (one import), and ``<first id> <first seq>`` is printed after each batch returned.

:func:`run_forked` runs the same writer in a forked child of the test process, for tests that
kill many writers (no interpreter start-up per kill).
"""

from __future__ import annotations

import os
import sys
import time

BODIES = ("Sun", "Moon", "Venus", "Jupiter", "Sirius", "Canopus", "Arcturus", "Vega")


def make_entry(seq: int) -> dict:
    """A deterministic entry for a sequence number (the test recomputes it to compare)."""
    kind = ("sight", "sight", "dr", "note", "setting")[seq % 5]
    minute = f"{seq % 60:02d}"
    # Every sight unique in body, UTC and Hs for 17,280 entries (the log refuses a repeated
    # sight): the second and the hour of the sight also step with the sequence number.
    sec, hour = (seq // 60) % 48, 15 + (seq // 2880) % 6
    if kind == "sight":
        deg = 10 + seq % 70
        return {"kind": "sight", "body": BODIES[seq % len(BODIES)],
                "utc": f"2026-03-20T{hour + 3:02d}:{minute}:{sec:02d}Z", "time_source": "watch",
                "time_text": f"2026-03-20 {hour:02d}:{minute}:{sec + 12:02d}",
                "zone_description": "+3",
                "zone_description_h": 3, "watch_error": "12 fast", "watch_error_s": 12.0,
                "hs": f"{deg} {seq % 60}.4", "hs_deg": deg + (seq % 60 + 0.4) / 60,
                "limb": "lower", "note": f"crash test entry {seq} " + "x" * (seq % 40)}
    if kind == "dr":
        return {"kind": "dr", "utc": f"2026-03-20T19:{minute}:00Z", "lat_deg": 38.5 + seq / 1e4,
                "lon_deg": -31.25 - seq / 1e4, "course_deg": float(seq % 360), "speed_kn": 6.5}
    if kind == "note":
        return {"kind": "note", "text": f"crash test note {seq}: 'quoted' \"and\" ünïcödé ✓"}
    return {"kind": "setting", "eye_height": f"{2 + seq % 3} m", "eye_height_m": 2 + seq % 3}


TEAR_CHUNK = 7            # bytes per write when tearing
HOLD = None               # (n, frac): hold the n-th torn write part way (see run_forked)
_SAY = None


def _torn_write(fd: int, data: bytes) -> None:
    global HOLD
    chunks = [data[i:i + TEAR_CHUNK] for i in range(0, len(data), TEAR_CHUNK)]
    stop = len(chunks)
    if HOLD is not None:
        n, frac = HOLD
        HOLD = (n - 1, frac) if n > 1 else None
        if n == 1:   # stop after the first line is whole (an import's batch count is on disk)
            first = -(-(data.index(b"\n") + 1) // TEAR_CHUNK)
            stop = min(len(chunks) - 1, first + int(frac * (len(chunks) - first)))
    for chunk in chunks[:stop]:
        os.write(fd, chunk)
        time.sleep(0.0005)
    if stop < len(chunks):
        _SAY("held")         # part of the write is on disk, the rest never will be
        while True:
            time.sleep(1)


def append_until_killed(path, seq: int, tear: bool, say, batch: int | None = None) -> None:
    """Open the log, say "ready", then append (one entry, or `batch` at a time) for ever,
    saying "<id> <seq>" after each append returned (the first id of a batch)."""
    from nav import logbook, logwriter

    log = logbook.PassageLog.open(path)
    if tear:
        logwriter._write_fully = _torn_write
    say("ready")
    while True:
        if batch:
            added = log.append_many([make_entry(s) for s in range(seq, seq + batch)])
            say(f"{added[0].id} {seq}")
            seq += batch
        else:
            say(f"{log.append(make_entry(seq)).id} {seq}")
            seq += 1


def run_forked(path, seq: int, tear: bool, wait_s: float, batch: int | None = None,
               tear_chunk: int = TEAR_CHUNK, hold: tuple[int, float] | None = None) -> list[str]:
    """Fork a writer (nav is already imported: a kill costs milliseconds, not a start-up), let it
    append for `wait_s` after it is ready, SIGKILL it; returns the lines it said after "ready".

    ``hold=(n, frac)`` (with ``tear``) makes the kill land mid-write whatever the machine's load:
    the n-th write stops part way (after its first line, then `frac` of the rest), says "held"
    and waits; the writer is killed as soon as that is read (`wait_s` is not used). Without it,
    where the kill lands depends on timing, and a loaded machine moves it (a slow fsync or a
    late wake-up of this process lands most kills between writes, not inside one)."""
    global TEAR_CHUNK, HOLD, _SAY
    import signal
    import traceback

    r, w = os.pipe()
    pid = os.fork()
    if pid == 0:  # pragma: no cover - the child: never returns, leaves without pytest's cleanup
        os.close(r)
        TEAR_CHUNK, HOLD = tear_chunk, hold
        _SAY = lambda t: os.write(w, (t + "\n").encode())  # noqa: E731
        try:
            append_until_killed(path, seq, tear, _SAY, batch)
        except BaseException:  # noqa: BLE001 - report anything to the parent
            os.write(w, ("error " + traceback.format_exc()).encode())
        os._exit(1)
    os.close(w)
    with os.fdopen(r, "rb") as f:
        first = f.readline()
        if first != b"ready\n":
            os.waitpid(pid, 0)
            raise AssertionError((first + f.read()).decode())
        said = []
        if hold is None:
            time.sleep(wait_s)
        else:
            while (line := f.readline()) not in (b"held\n", b""):
                said.append(line)
        os.kill(pid, signal.SIGKILL)
        os.waitpid(pid, 0)
        rest = b"".join(said).decode() + f.read().decode()
    assert "error" not in rest and "held" not in rest, rest
    return rest.split("\n")[:-1]


def main(argv: list[str]) -> int:
    sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
    batch = int(argv[argv.index("--batch") + 1]) if "--batch" in argv else None
    append_until_killed(argv[0], int(argv[1]), "--tear" in argv,
                        lambda t: print(t, flush=True), batch)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
