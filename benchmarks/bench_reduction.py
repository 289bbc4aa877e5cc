"""Speed of the whole sight-reduction chain, vectorised against one sight at a time.

Prints figures; asserts nothing (speed is never asserted in the test suite). Run:

    python benchmarks/bench_reduction.py              # about 10 s
    python benchmarks/bench_reduction.py --quick      # one repeat, 100 sampled sights
    python benchmarks/bench_reduction.py --profile    # and a cProfile of the vectorised call

Case: 100,000 sights (fixed seed) of mixed bodies — Sun 30 %, Moon 10 %, the four planets 20 %,
the navigational stars 40 % — at random instants over 2024-2027 and random positions, each body
between 10° and 80° high, with random height of eye, index error, temperature, pressure and limb.

- nav, vectorised: one call of ``nav.reduction.reduce_sights`` for all 100,000 (almanac, Hs -> Ho,
  Hc, Zn and intercept). Target: 2 s or less.
- baseline, one sight at a time: ``nav.reduction.reduce_sight`` in a plain Python loop. The loop is
  SAMPLED (500 sights by default, spread through the set) and its time scaled to 100,000; the
  output says how many were sampled and by what factor it was scaled. Target: the vectorised call
  50 times faster or more.

Both are warmed up first (DE421, the time scale and the star table load on first use, as in any
real run); each reports the best of 3 repeats (1 with --quick).
"""

from __future__ import annotations

import argparse
import cProfile
import io
import os
import platform
import pstats
import sys
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

from nav.almanac import PLANETS, almanac, body_names  # noqa: E402
from nav.reduction import reduce_sight, reduce_sights  # noqa: E402
from timing import best_of

N_SIGHTS = 100_000
TARGET_VECTOR_S = 2.0
TARGET_RATIO = 50.0
SEED = 1852


def make_sights(n: int, seed: int = SEED) -> dict:
    """n plausible sights: each observer stands where the body is 10°-80° high (not timed)."""
    rng = np.random.default_rng(seed)
    stars = [b for b in body_names() if b not in ("Sun", "Moon", *PLANETS)]
    kind = rng.choice(4, size=n, p=[0.3, 0.1, 0.2, 0.4])
    bodies = np.where(kind == 0, "Sun", np.where(kind == 1, "Moon", np.where(
        kind == 2, rng.choice(PLANETS, n), rng.choice(stars, n)))).astype(object)
    start = np.datetime64("2024-01-01T00:00:00", "us")
    span_us = int(4 * 365.25 * 86400e6)
    t64 = start + rng.integers(0, span_us, n).astype("timedelta64[us]")
    # The body's GP from the almanac, then an observer at zenith distance 90° − h from it
    # in a random direction (spherical destination formula).
    gha, dec = np.empty(n), np.empty(n)
    for b in dict.fromkeys(bodies.tolist()):
        idx = np.flatnonzero(bodies == b)
        rec = almanac([b], t64[idx])[0]
        gha[idx], dec[idx] = rec.gha_deg, rec.dec_deg
    h = rng.uniform(10.0, 80.0, n)
    bearing = np.radians(rng.uniform(0.0, 360.0, n))
    zd, lat_gp, lon_gp = np.radians(90.0 - h), np.radians(dec), -gha
    lat = np.arcsin(np.sin(lat_gp) * np.cos(zd) + np.cos(lat_gp) * np.sin(zd) * np.cos(bearing))
    lon = lon_gp + np.degrees(np.arctan2(np.sin(bearing) * np.sin(zd) * np.cos(lat_gp),
                                         np.cos(zd) - np.sin(lat_gp) * np.sin(lat)))
    lat, lon = np.degrees(lat), (lon + 180.0) % 360.0 - 180.0
    eye = rng.uniform(1.0, 15.0, n)
    ie = rng.uniform(-3.0, 3.0, n)
    disc = np.isin(bodies, ["Sun", "Moon"])
    limb = np.where(disc, rng.choice(np.array(["lower", "upper"], dtype=object), n), None)
    # Hs near what a sextant would read: + refraction and dip, − SD for a lower limb, − the
    # Moon's parallax (rough figures; the intercepts come out within some miles).
    refr = 1.0 / np.tan(np.radians(h + 7.31 / (h + 4.4))) / 60.0
    sd = np.where(disc, 16.0 / 60.0, 0.0) * np.where(limb == "lower", 1.0, -1.0)
    moon_par = np.where(bodies == "Moon", 57.0 / 60.0 * np.cos(np.radians(h)), 0.0)
    hs = h + refr + 1.76 * np.sqrt(eye) / 60.0 + ie / 60.0 - sd - moon_par
    return dict(bodies=bodies, utc=t64, hs_deg=hs, limb=limb, index_error_arcmin=ie,
                eye_height_m=eye, temperature_c=rng.choice([-5.0, 10.0, 25.0], n),
                pressure_hpa=rng.choice([990.0, 1010.0, 1030.0], n), lat_deg=lat, lon_deg=lon)


def vectorised(s: dict):
    return reduce_sights(s["bodies"], s["utc"], s["hs_deg"], limb=s["limb"],
                         index_error_arcmin=s["index_error_arcmin"], eye_height_m=s["eye_height_m"],
                         temperature_c=s["temperature_c"], pressure_hpa=s["pressure_hpa"],
                         lat_deg=s["lat_deg"], lon_deg=s["lon_deg"])


def one_at_a_time(s: dict, idx: np.ndarray):
    out = []
    for i in idx:
        out.append(reduce_sight(
            s["bodies"][i], s["utc"][i], float(s["hs_deg"][i]), limb=s["limb"][i],
            index_error_arcmin=float(s["index_error_arcmin"][i]),
            eye_height_m=float(s["eye_height_m"][i]), temperature_c=float(s["temperature_c"][i]),
            pressure_hpa=float(s["pressure_hpa"][i]), lat_deg=float(s["lat_deg"][i]),
            lon_deg=float(s["lon_deg"][i])))
    return out




def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="one repeat, 100 sampled sights")
    ap.add_argument("--sample", type=int, default=None, help="sights in the sampled loop (500)")
    ap.add_argument("--profile", action="store_true", help="cProfile the vectorised call")
    args = ap.parse_args(argv)
    repeats = 1 if args.quick else 3
    sample = args.sample or (100 if args.quick else 500)

    t0 = time.perf_counter()
    s = make_sights(N_SIGHTS)
    setup_s = time.perf_counter() - t0
    idx = np.linspace(0, N_SIGHTS - 1, sample).astype(int)
    one_at_a_time(s, idx[:5])                       # warm-up: data loaded on first use
    res = vectorised(s)

    t_vec = best_of(lambda: vectorised(s), repeats)
    t_loop = best_of(lambda: one_at_a_time(s, idx), repeats)
    scale = N_SIGHTS / sample
    t_loop_all = t_loop * scale

    # the two must agree (a fast wrong answer is no answer)
    loop = one_at_a_time(s, idx[:50])
    worst = max(abs(float(r.intercept_nmi) - float(res.intercept_nmi[i])) for r, i in zip(loop, idx))
    counts = {k: int(np.sum(res.kind == k)) for k in ("sun", "moon", "planet", "star")}

    print(f"nav sight-reduction benchmark — {platform.python_version()} on {platform.machine()}, "
          f"{os.cpu_count()} CPUs, numpy {np.__version__}")
    print(f"{N_SIGHTS:,} sights (seed {SEED}): " + ", ".join(f"{v:,} {k}" for k, v in counts.items())
          + f"; {len(set(s['bodies'].tolist()))} bodies; instants 2024-2027; setup {setup_s:.1f} s "
          "(not timed)")
    print(f"median |intercept| {np.median(np.abs(res.intercept_nmi)):.1f} nmi; vectorised vs loop "
          f"on 50 sights: largest difference {worst:.1e} nmi")
    print()
    print(f"| case | time for {N_SIGHTS:,} | per sight | target | ratio (loop / nav) |")
    print("| --- | --- | --- | --- | --- |")
    print(f"| nav, one `reduce_sights` call | {t_vec:.2f} s | {t_vec / N_SIGHTS * 1e6:.1f} µs | "
          f"≤ {TARGET_VECTOR_S:g} s: {'met' if t_vec <= TARGET_VECTOR_S else 'MISSED'} | "
          f"{t_loop_all / t_vec:.0f}× (target ≥ {TARGET_RATIO:g}×: "
          f"{'met' if t_loop_all / t_vec >= TARGET_RATIO else 'MISSED'}) |")
    print(f"| `reduce_sight` in a loop (sampled {sample}, scaled ×{scale:g}) | {t_loop_all:.1f} s | "
          f"{t_loop / sample * 1e3:.2f} ms | — | 1× |")
    print(f"\nbest of {repeats}; wall times depend on the machine and its load: compare ratios.")

    if args.profile or t_vec > TARGET_VECTOR_S:
        prof = cProfile.Profile()
        prof.enable()
        vectorised(s)
        prof.disable()
        buf = io.StringIO()
        pstats.Stats(prof, stream=buf).sort_stats("cumulative").print_stats(25)
        print("\ncProfile of the vectorised call (cumulative):")
        print(buf.getvalue())
    return 0


if __name__ == "__main__":
    sys.exit(main())
