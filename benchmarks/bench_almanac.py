"""Speed of the almanac engine, against the peers a user would pick, in the same run.

Prints figures; asserts nothing (speed is never asserted in the test suite). Run:

    python benchmarks/bench_almanac.py            # about a minute
    python benchmarks/bench_almanac.py --quick    # fewer repeats, for a smoke run

Cases
  1. One year of hourly GHA and Dec of the Sun (8760 instants): nav, one vectorised call, against
     skyfield vectorised over a Time array with the IAU 2000B nutation set as nav does (target:
     nav 2x faster or more), skyfield vectorised with its defaults (IAU 2000A), and an ephem loop.
     A sampled skyfield one-call-per-instant loop is shown for information.
  2. One year of hourly positions of all 64 bodies (Sun, Moon, 4 planets, 58 stars) in one call.
  3. Whole processes, start-up included (median of several runs): ``nav --version`` (target
     0.06 s) and ``nav almanac Sun --utc ...`` (target 0.15 s), against ``python -c pass`` and an
     ephem one-shot script.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

from nav import almanac as al  # noqa: E402
from nav.ephemeris import ephemeris, skyfield_time, timescale  # noqa: E402
from timing import best_of

HOURS_PER_YEAR = 8760
TARGET_ALL_BODIES_S = 3.0
TARGET_PROCESS_S = 0.15
TARGET_VERSION_S = 0.06
TARGET_VS_SKYFIELD_2000B = 2.0
EPHEM_ONE_SHOT = ("import ephem; o = ephem.Observer(); o.date = '2026/3/20 18:42:10'; "
                  "s = ephem.Sun(); s.compute(o); print(s.g_ra, s.g_dec, o.sidereal_time())")


def hourly_year(year: int = 2026) -> np.ndarray:
    start = np.datetime64(f"{year}-01-01T00:00:00", "us")
    return start + np.arange(HOURS_PER_YEAR) * np.timedelta64(1, "h")




def nav_sun_year(t64):
    sun = al.body_almanac("Sun", t64)
    return sun.gha_deg, sun.dec_deg


def skyfield_loop(times):
    """The straightforward baseline: one skyfield call per instant (skyfield's defaults)."""
    eph = ephemeris()
    earth, sun = eph["earth"], eph["sun"]
    out = []
    for t in times:
        ra, dec, _ = earth.at(t).observe(sun).apparent().radec(epoch="date")
        out.append(((t.gast - ra.hours) * 15.0 % 360.0, dec.degrees))
    return out


def skyfield_vectorised(t, nutation_2000b: bool):
    """skyfield over a Time array; with `nutation_2000b` the IAU 2000B nutation is set on the
    Time first (skyfield's documented shortcut, what nav uses), else skyfield's IAU 2000A."""
    if nutation_2000b:
        from skyfield.nutationlib import iau2000b_radians

        t._nutation_angles_radians = iau2000b_radians(t)
    eph = ephemeris()
    ra, dec, _ = eph["earth"].at(t).observe(eph["sun"]).apparent().radec(epoch="date")
    return (t.gast - ra.hours) * 15.0 % 360.0, dec.degrees


def ephem_loop(t64):
    import ephem

    obs = ephem.Observer()
    obs.pressure = 0.0
    sun = ephem.Sun()
    out = []
    for d in (t64.astype(np.int64) / 86400e6 + 2_440_587.5 - 2_415_020.0).tolist():
        obs.date = d
        sun.compute(obs)
        out.append((float(obs.sidereal_time()) - float(sun.g_ra), float(sun.g_dec)))
    return out


def process_times(argv, runs: int):
    env = {**os.environ, "PYTHONPATH": str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    # An installed package has its bytecode compiled; so that the runs below measure that, not
    # compiling nav's sources at every start, bytecode may be written (one warm-up run first).
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    subprocess.run([sys.executable, *argv], check=True, capture_output=True, env=env, cwd=REPO)
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, *argv], check=True, capture_output=True, env=env, cwd=REPO)
        times.append(time.perf_counter() - t0)
    return statistics.median(times), min(times), max(times)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer repeats and a smaller sample")
    parser.add_argument("--sample", type=int, default=500, help="instants in the skyfield loop (default 500)")
    args = parser.parse_args()
    repeats = 1 if args.quick else 3
    sample = min(args.sample, 100) if args.quick else args.sample
    runs = 3 if args.quick else 9

    t64 = hourly_year()
    print(f"nav almanac benchmark - Python {platform.python_version()}, numpy {np.__version__}, "
          f"{platform.machine()}, {os.cpu_count()} CPU(s)")
    # Warm up: load DE421, the time scale and the star table once, as any real run would.
    nav_sun_year(t64[:2])
    al.almanac(al.body_names(), t64[:2])

    rows = []
    # 1. Sun, one year hourly.
    nav_sun = best_of(lambda: nav_sun_year(t64), repeats)
    ts = timescale()
    step = HOURS_PER_YEAR // sample
    picked = t64[::step][:sample]
    times = [skyfield_time(x) for x in picked]  # one skyfield Time per instant, built outside the timing
    loop_sample = best_of(lambda: skyfield_loop(times), 1)
    loop_year = loop_sample * HOURS_PER_YEAR / len(times)
    t_all = skyfield_time(t64)
    sky_b = best_of(lambda: skyfield_vectorised(ts.tt_jd(t_all.tt), True), repeats)
    sky_a = best_of(lambda: skyfield_vectorised(ts.tt_jd(t_all.tt), False), repeats)
    eph_loop = best_of(lambda: ephem_loop(t64), repeats)
    rows.append(("Sun, 1 year hourly: nav, one call", nav_sun, None))
    rows.append(("Sun, 1 year hourly: skyfield vectorised, IAU 2000B", sky_b, sky_b / nav_sun))
    rows.append(("Sun, 1 year hourly: skyfield vectorised, defaults (2000A)", sky_a, sky_a / nav_sun))
    rows.append(("Sun, 1 year hourly: ephem loop", eph_loop, eph_loop / nav_sun))
    rows.append((f"Sun, 1 year hourly: skyfield loop ({len(times)} sampled, x{HOURS_PER_YEAR / len(times):.1f})",
                 loop_year, loop_year / nav_sun))

    # 2. All 64 bodies, one year hourly.
    names = al.body_names()
    all_bodies = best_of(lambda: al.almanac(names, t64), repeats)
    rows.append((f"{len(names)} bodies, 1 year hourly: nav, one call", all_bodies, None))

    # 3. Whole processes.
    med, lo, hi = process_times(["-m", "nav", "almanac", "Sun", "--utc", "2026-03-20T18:42:10Z"], runs)
    ver, vlo, vhi = process_times(["-m", "nav", "--version"], runs)
    bare, _, _ = process_times(["-c", "pass"], runs)
    one_shot, _, _ = process_times(["-c", EPHEM_ONE_SHOT], runs)
    rows.append((f"`nav almanac Sun --utc ...` process, median of {runs} (min {lo:.3f}, max {hi:.3f})", med, None))
    rows.append((f"`nav --version` process, median of {runs} (min {vlo:.3f}, max {vhi:.3f})", ver, None))
    rows.append((f"ephem one-shot script process, median of {runs}", one_shot, None))
    rows.append((f"`python -c pass` process, median of {runs} (interpreter start alone)", bare, None))

    width = max(len(r[0]) for r in rows)
    print()
    print(f"{'case':<{width}}  {'wall s':>9}  {'ratio':>8}")
    print(f"{'-' * width}  {'-' * 9}  {'-' * 8}")
    for label, seconds, ratio in rows:
        ratio_text = f"{ratio:7.1f}x" if ratio is not None else ""
        print(f"{label:<{width}}  {seconds:9.3f}  {ratio_text:>8}")
    print()
    print("ratio = the baseline's time / nav's time (how many times faster nav is).")
    print(f"`nav almanac` start-up and run: {med - bare:.3f} s beyond a bare interpreter start; "
          f"`nav --version`: {ver - bare:.3f} s beyond it.")
    ratio_b = sky_b / nav_sun
    print(f"targets: Sun year >= {TARGET_VS_SKYFIELD_2000B:g}x faster than skyfield 2000B "
          f"vectorised: {ratio_b:.2f}x, {'met' if ratio_b >= TARGET_VS_SKYFIELD_2000B else 'MISSED'}; "
          f"{len(names)} bodies for a year in <= {TARGET_ALL_BODIES_S:.0f} s: "
          f"{'met' if all_bodies <= TARGET_ALL_BODIES_S else 'MISSED'} ({all_bodies:.2f} s); "
          f"`nav almanac` process <= {TARGET_PROCESS_S} s: "
          f"{'met' if med <= TARGET_PROCESS_S else 'MISSED'} ({med:.3f} s); `nav --version` <= "
          f"{TARGET_VERSION_S} s: {'met' if ver <= TARGET_VERSION_S else 'MISSED'} ({ver:.3f} s)")
    print(f"load average {os.getloadavg()[0]:.1f}: process times include the interpreter's own "
          f"start ({bare:.3f} s here).")
    return 0


if __name__ == "__main__":
    sys.exit(main())
