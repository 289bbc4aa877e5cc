"""Shared by the benchmark scripts (run as `python benchmarks/NAME.py`, so this folder is on the path)."""

import time


def best_of(fn, repeats: int) -> float:
    """Best wall time of `repeats` calls (the least disturbed by the rest of the machine)."""
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)
