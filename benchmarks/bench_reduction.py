"""Speed of the whole sight-reduction chain (Hs to intercept) against the peers a user would pick.

Prints figures; asserts nothing (speed is never asserted in the test suite). Run:

    python benchmarks/bench_reduction.py              # several minutes (astropy is slow at 100k)
    python benchmarks/bench_reduction.py --quick      # 1k and 10k only, one repeat
    python benchmarks/bench_reduction.py --profile    # and a cProfile of nav at 100k

Sights (fixed seed, benchmarks/peers.py): Sun 30 %, Moon 10 %, planets 20 %, stars 40 %, random
instants over 2024-2027, each observer where the body is 10°-80° high.

1. nav (`reduce_sights`, one call) against, in the same run, each peer in its best form
   (benchmarks/peers.py): skyfield vectorised per body with IAU 2000B, astropy AltAz vectorised per
   body, an ephem per-sight loop; at 1,000 and 100,000 sights. Ratio = peer time / nav time.
   Each peer's intercepts are compared with nav's (median and 99th percentile difference).
2. nav alone at 1k, 10k, 100k and 1M sights, each in a fresh subprocess: wall time, the scaling
   exponent (time ∝ n^k, k from 1k to 1M), and the peak memory that numpy and Python allocate
   during the call (tracemalloc, in a second run) — for `reduce_sights` holding every result, and
   for `iter_reduce_sights` streaming chunks (results consumed as they come).
"""

from __future__ import annotations

import argparse
import cProfile
import io
import json
import math
import os
import platform
import pstats
import subprocess
import sys
import time
import warnings
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
sys.path.insert(0, str(REPO))
sys.path.insert(0, str(HERE))

import peers  # noqa: E402
from timing import best_of  # noqa: E402

TARGETS = {1_000: ("ephem per-sight loop", 2.0), 100_000: ("skyfield vectorised (2000B)", 3.0)}
MEMORY_TARGET_MB = 150.0


def _offline_astropy():
    from astropy.utils import iers
    from astropy.utils.data import conf

    iers.conf.auto_download = False
    iers.conf.auto_max_age = None
    conf.allow_internet = False
    warnings.simplefilter("ignore")


def compare(n: int, repeats: int, with_astropy: bool) -> list[str]:
    s = peers.make_sights(n)
    small = peers.take(s, 50)
    peers.nav_reduce(small)                       # warm-up: data loaded on first use
    nav_x = peers.nav_reduce(s)
    t_nav = best_of(lambda: peers.nav_reduce(s), repeats)
    lines = [f"| nav `reduce_sights` | {t_nav:.3f} s | {t_nav / n * 1e6:.1f} µs | 1× | — |"]
    best = None
    for name, fn in peers.PEERS.items():
        if name.startswith("astropy") and not with_astropy:
            continue
        fn(small)
        x = fn(s)
        t = best_of(lambda: fn(s), 1 if name.startswith("astropy") else repeats)
        d = np.abs(x - nav_x)
        lines.append(f"| {name} | {t:.3f} s | {t / n * 1e6:.1f} µs | {t / t_nav:.2f}× | "
                     f"{np.median(d):.3f} / {np.percentile(d, 99):.3f} |")
        best = min(best or (t, name), (t, name))
    target = TARGETS.get(n)
    if target:
        peer_t = next(float(line.split("|")[2].split()[0]) for line in lines if target[0] in line)
        ratio = peer_t / t_nav
        lines.append(f"\ntarget at {n:,}: ≥ {target[1]:g}× faster than the {target[0]}: "
                     f"{ratio:.2f}× — {'met' if ratio >= target[1] else 'MISSED'}")
    lines.append(f"best peer at {n:,}: {best[1]}, {best[0] / t_nav:.2f}× nav's time")
    return lines


_CHILD = r"""
import json, resource, sys, time, tracemalloc
sys.path[:0] = [{here!r}, {repo!r}]
import numpy as np, peers
from nav.reduction import reduce_sights, iter_reduce_sights
n, mode = {n}, {mode!r}
s = peers.make_sights(n)
peers.nav_reduce(peers.take(s, 50))
kw = {{k: s[k] for k in ("limb", "index_error_arcmin", "eye_height_m", "temperature_c",
                        "pressure_hpa", "lat_deg", "lon_deg")}}
def run():
    if mode == "whole":
        return float(np.sum(reduce_sights(s["bodies"], s["utc"], s["hs_deg"], **kw).intercept_nmi))
    return sum(float(np.sum(r.intercept_nmi)) for _, r in iter_reduce_sights(s["bodies"], s["utc"], s["hs_deg"], **kw))
rss_before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
t0 = time.perf_counter(); run(); wall = time.perf_counter() - t0
rss_after = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
tracemalloc.start(); run(); _, peak = tracemalloc.get_traced_memory(); tracemalloc.stop()
inputs = sum(v.nbytes for v in s.values())
print(json.dumps({{"wall": wall, "peak": peak, "inputs": inputs, "rss_before": rss_before,
                  "rss_after": rss_after}}))
"""


def scaling(sizes, mode: str) -> dict:
    out = {}
    for n in sizes:
        code = _CHILD.format(here=str(HERE), repo=str(REPO), n=n, mode=mode)
        run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                             check=True)
        out[n] = json.loads(run.stdout.strip().splitlines()[-1])
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="1k and 10k only, one repeat")
    ap.add_argument("--profile", action="store_true", help="cProfile nav at 100k sights")
    args = ap.parse_args(argv)
    _offline_astropy()
    repeats = 1 if args.quick else 3
    print(f"nav sight-reduction benchmark — Python {platform.python_version()} on "
          f"{platform.machine()}, {os.cpu_count()} CPUs, numpy {np.__version__}; load average "
          f"{os.getloadavg()[0]:.1f}")
    for n in ((1_000, 10_000) if args.quick else (1_000, 100_000)):
        print(f"\n### {n:,} mixed sights, Hs to intercept (best of {repeats})\n")
        print("| case | time | per sight | time / nav's | Δ intercept vs nav, median / p99 (nmi) |")
        print("| --- | --- | --- | --- | --- |")
        for line in compare(n, repeats, with_astropy=True):
            print(line)

    sizes = (1_000, 10_000) if args.quick else (1_000, 10_000, 100_000, 1_000_000)
    print("\n### nav alone: scaling and peak memory (fresh subprocess per size)\n")
    print("| sights | mode | wall | per sight | peak allocated during the call | inputs | "
          "process peak RSS before → after |")
    print("| --- | --- | --- | --- | --- | --- | --- |")
    for mode in ("whole", "stream"):
        res = scaling(sizes, mode)
        for n, r in res.items():
            print(f"| {n:,} | {mode} | {r['wall']:.2f} s | {r['wall'] / n * 1e6:.1f} µs | "
                  f"{r['peak'] / 1e6:.0f} MB | {r['inputs'] / 1e6:.0f} MB | "
                  f"{r['rss_before'] / 1e6:.0f} → {r['rss_after'] / 1e6:.0f} MB |")
        lo, hi = sizes[0], sizes[-1]
        k = math.log(res[hi]["wall"] / res[lo]["wall"]) / math.log(hi / lo)
        print(f"| {lo:,} → {hi:,} | {mode} | scaling exponent {k:.2f} (1 = linear) | | | | |")
        if hi >= 1_000_000:
            peak = res[hi]["peak"] / 1e6
            print(f"\nmemory target at {hi:,} ({mode}): peak ≤ {MEMORY_TARGET_MB:g} MB: {peak:.0f} MB — "
                  f"{'met' if peak <= MEMORY_TARGET_MB else 'MISSED'}\n")
    print("\nwall times depend on the machine and its load: compare the ratios of one run.")
    print("'whole' holds every result (28 arrays of n values: 224 bytes a sight by itself);")
    print("'stream' is iter_reduce_sights, each chunk consumed and dropped.")

    if args.profile:
        s = peers.make_sights(100_000)
        peers.nav_reduce(peers.take(s, 50))
        prof = cProfile.Profile()
        prof.enable()
        peers.nav_reduce(s)
        prof.disable()
        buf = io.StringIO()
        pstats.Stats(prof, stream=buf).sort_stats("tottime").print_stats(20)
        print("\ncProfile of nav at 100,000 sights (own time):")
        print(buf.getvalue())
    return 0


if __name__ == "__main__":
    t0 = time.perf_counter()
    code = main()
    print(f"(benchmark ran {time.perf_counter() - t0:.0f} s)")
    sys.exit(code)
