"""`nav almanac` tables: peak memory and time against the table's length, this tree against an
earlier commit (which built the whole table before writing it), in the same run.

    python benchmarks/bench_almanac_stream.py                 # 10k, 100k and 1M rows (a few min)
    python benchmarks/bench_almanac_stream.py --quick         # 10k and 100k rows
    python benchmarks/bench_almanac_stream.py --base COMMIT

Each case is `nav almanac Sun --from … --to … --step 1min [--json]` as a whole process, its
output sent to /dev/null; memory is the process' peak resident set (ru_maxrss), time its wall
time. The earlier commit runs only up to 100k rows (it holds the table in memory, about 2 GB at
1M rows). The earlier commit is exported with `git archive` and run first on PYTHONPATH.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from datetime import datetime, timedelta, timezone
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
START = datetime(2026, 1, 1, tzinfo=timezone.utc)


def export(commit: str, into: Path) -> Path:
    into.mkdir(parents=True)
    archive = subprocess.run(["git", "-C", str(REPO), "archive", commit], check=True,
                             capture_output=True).stdout
    subprocess.run(["tar", "-x", "-C", str(into)], input=archive, check=True)
    return into


MEASURE = ("import resource, subprocess, sys, time; t = time.perf_counter(); "
           "subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL, check=True); "
           "print(time.perf_counter() - t, "
           "resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024)")


def run(pythonpath: Path, rows: int, json: bool) -> tuple[float, float]:
    """(wall s, peak MB) of one table as its own process (measured by a fresh parent, so the
    peak is this run's alone)."""
    stop = START + timedelta(minutes=rows - 1)
    argv = [sys.executable, "-m", "nav", "almanac", "Sun", "--from", f"{START:%Y-%m-%dT%H:%MZ}",
            "--to", f"{stop:%Y-%m-%dT%H:%MZ}", "--step", "1min"] + (["--json"] if json else [])
    with tempfile.TemporaryDirectory() as cwd:              # -m puts cwd first on the path
        out = subprocess.run([sys.executable, "-c", MEASURE, *argv], cwd=cwd, check=True,
                             capture_output=True, text=True,
                             env=dict(os.environ, PYTHONPATH=str(pythonpath))).stdout.split()
    return float(out[0]), float(out[1])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--base", default="9cfb0e8")
    ap.add_argument("--quick", action="store_true")
    args = ap.parse_args()
    sizes = (10_000, 100_000) if args.quick else (10_000, 100_000, 1_000_000)
    with tempfile.TemporaryDirectory() as tmp:
        base = export(args.base, Path(tmp) / "base")
        for json in (False, True):
            for rows in sizes:
                wall, mb = run(REPO, rows, json)
                line = (f"{'JSON' if json else 'text'} {rows:>9,} rows: this tree {wall:6.1f} s, "
                        f"peak {mb:6.0f} MB")
                if rows <= 100_000:
                    b_wall, b_mb = run(base, rows, json)
                    line += (f"; {args.base} {b_wall:6.1f} s, peak {b_mb:6.0f} MB "
                             f"(memory this/base {mb / b_mb:.2f})")
                print(line, flush=True)


if __name__ == "__main__":
    main()
