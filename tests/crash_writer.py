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
``append_many`` (one import), and ``<first id> <last id> <first seq> <N>`` is printed after each
batch returned.
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
    if kind == "sight":
        deg = 10 + seq % 70
        return {"kind": "sight", "body": BODIES[seq % len(BODIES)],
                "utc": f"2026-03-20T18:{minute}:10Z", "time_source": "watch",
                "time_text": f"2026-03-20 15:{minute}:22", "zone_description": "+3",
                "zone_description_h": 3, "watch_error": "12 fast", "watch_error_s": 12.0,
                "hs": f"{deg} {seq % 60}.4", "hs_deg": deg + (seq % 60 + 0.4) / 60,
                "limb": "lower", "note": f"crash test entry {seq} " + "x" * (seq % 40)}
    if kind == "dr":
        return {"kind": "dr", "utc": f"2026-03-20T19:{minute}:00Z", "lat_deg": 38.5 + seq / 1e4,
                "lon_deg": -31.25 - seq / 1e4, "course_deg": float(seq % 360), "speed_kn": 6.5}
    if kind == "note":
        return {"kind": "note", "text": f"crash test note {seq}: 'quoted' \"and\" ünïcödé ✓"}
    return {"kind": "setting", "eye_height": f"{2 + seq % 3} m", "eye_height_m": 2 + seq % 3}


def _torn_write(fd: int, data: bytes) -> None:
    for i in range(0, len(data), 7):
        os.write(fd, data[i:i + 7])
        time.sleep(0.0005)


def main(argv: list[str]) -> int:
    sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
    from nav import logbook, logwriter

    path, seq = argv[0], int(argv[1])
    log = logbook.PassageLog.open(path)
    if "--tear" in argv:
        logwriter._write_fully = _torn_write
    print("ready", flush=True)
    if "--batch" in argv:
        n = int(argv[argv.index("--batch") + 1])
        while True:
            added = log.append_many([make_entry(s) for s in range(seq, seq + n)])
            print(added[0].id, added[-1].id, seq, n, flush=True)
            seq += n
    while True:
        entry = log.append(make_entry(seq))
        print(entry.id, seq, flush=True)
        seq += 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
