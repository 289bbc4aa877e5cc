"""`nav demo` as a whole process: this tree against an earlier commit, in the same run.

    python benchmarks/bench_demo.py                  # against 9cfb0e8, 5 rounds (about 1-2 min)
    python benchmarks/bench_demo.py --base COMMIT --rounds 3

The earlier commit is exported with `git archive` into a temporary folder and run with that
folder first on PYTHONPATH (the same interpreter and packages). The two are run alternately,
each round both, from an empty working folder; the figure is the best of the rounds, wall time
and CPU time (user + system of the process and its children: the demo draws its plots in worker
processes, so CPU time is what the work costs and wall time is what the user waits for).
Target (issue 11): at most half the earlier commit's time.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]


def export(commit: str, into: Path) -> Path:
    archive = subprocess.run(["git", "-C", str(REPO), "archive", commit], check=True,
                             capture_output=True).stdout
    into.mkdir(parents=True)
    subprocess.run(["tar", "-x", "-C", str(into)], input=archive, check=True)
    return into


def run_demo(pythonpath: Path, cwd: Path) -> tuple[float, float]:
    env = dict(os.environ, PYTHONPATH=str(pythonpath))
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "nav", "demo", "--out", "out"], cwd=cwd, env=env,
                   check=True, capture_output=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--base", default="9cfb0e8")
    ap.add_argument("--rounds", type=int, default=5)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        base = export(args.base, Path(tmp) / "base")
        best = {"base": [1e9, 1e9], "this": [1e9, 1e9]}
        for _ in range(args.rounds):
            for name, path in (("base", base), ("this", REPO)):
                with tempfile.TemporaryDirectory() as cwd:     # -m puts cwd first on the path
                    wall, cpu = run_demo(path, Path(cwd))
                best[name] = [min(best[name][0], wall), min(best[name][1], cpu)]
    (bw, bc), (tw, tc) = best["base"], best["this"]
    print(f"nav demo, whole process, best of {args.rounds} (on {os.cpu_count()} cores):")
    print(f"  {args.base}: wall {bw:.2f} s, CPU {bc:.2f} s")
    print(f"  this tree: wall {tw:.2f} s, CPU {tc:.2f} s")
    print(f"  this/base: wall {tw / bw:.2f}, CPU {tc / bc:.2f} (target: wall <= 0.5)")


if __name__ == "__main__":
    main()
