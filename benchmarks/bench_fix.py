"""Fixes: nav's solvers against a plain numpy batched Gauss–Newton, in the same run.

    python benchmarks/bench_fix.py            # about 20 s
    python benchmarks/bench_fix.py --quick    # one repeat, smaller cases: a smoke run

Cases (fixed seed; each observer at a random place, bodies at random azimuths and altitudes
15°–75°, sights with 1′ of noise, DR some 20 nmi off):
- 10,000 independent 3-sight fixes: `nav.fix.solve_fixes` against the peer (target ≤ 2× it);
- one fix of 1,000 sights: `nav.fix.solve_fix` (Sight objects built beforehand, not timed)
  and `solve_fixes` with F = 1, against the peer (target ≤ 5 ms);
- scaling of one fix from 1,000 to 100,000 sights (time per sight, peak memory by tracemalloc).
The peer is what a capable user would write: the triangle with np.sin/np.arcsin, the 2 × 2
normal equations summed per fix and solved by Cramer's rule, the same stopping rule (every
step below 0.01 nmi), and the ellipse's semi-axes in closed form. nav also does the residual check
(leave-one-out flags), the widest angle of cut and the azimuth spread, which the peer does not.
"""

from __future__ import annotations

import argparse
import sys
import tracemalloc
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from timing import best_of  # noqa: E402

from nav.fix import Sight, solve_fix, solve_fixes  # noqa: E402

R_NMI = 10800.0 / np.pi


def make_sights(n_fix: int, k: int, seed: int = 11):
    """(ho, gha, dec, dr_lat, dr_lon, truth_lat, truth_lon): spherical triangle solved forward."""
    rng = np.random.default_rng(seed)
    lat = rng.uniform(-60, 60, n_fix)
    lon = rng.uniform(-180, 180, n_fix)
    zn = rng.uniform(0, 360, (n_fix, k))
    ho = rng.uniform(15, 75, (n_fix, k))
    d = np.radians(90.0 - ho)                    # zenith distance: the GP's distance
    p1, a = np.radians(lat)[:, None], np.radians(zn)
    p2 = np.arcsin(np.sin(p1) * np.cos(d) + np.cos(p1) * np.sin(d) * np.cos(a))
    dl = np.arctan2(np.sin(a) * np.sin(d) * np.cos(p1), np.cos(d) - np.sin(p1) * np.sin(p2))
    gp_lon = lon[:, None] + np.degrees(dl)
    gha = np.remainder(-gp_lon, 360.0)
    ho = ho + rng.normal(0, 1.0, ho.shape) / 60.0
    off = 20.0 / 60.0
    return ho, gha, np.degrees(p2), lat + off * rng.uniform(-1, 1, n_fix), \
        lon + off * rng.uniform(-1, 1, n_fix), lat, lon


def peer(ho, gha, dec, lat0, lon0, w, tol_nmi=0.01, max_iter=20):
    """Plain numpy batched Gauss–Newton with the ellipse; returns (lat, lon, semi-axes).

    In its best form: the 2 × 2 normal equations summed per fix and solved by Cramer's rule,
    the covariance's eigenvalues in closed form (np.linalg on (F, 2, 2) stacks is slower)."""
    lat, lon = np.array(lat0, float), np.array(lon0, float)
    sd, cd = np.sin(np.radians(dec)), np.cos(np.radians(dec))
    for _ in range(max_iter):
        la = np.radians(lat)[:, None]
        lha = np.radians(gha + lon[:, None])
        sl, cl, sh, ch = np.sin(la), np.cos(la), np.sin(lha), np.cos(lha)
        hc = np.degrees(np.arcsin(np.clip(sl * sd + cl * cd * ch, -1, 1)))
        zn = np.arctan2(-cd * sh, cl * sd - sl * cd * ch)
        ae, an = np.sin(zn), np.cos(zn)                          # partials east, north
        wr = w * (ho - hc) * 60.0
        see, sen, snn = (w * ae * ae).sum(1), (w * ae * an).sum(1), (w * an * an).sum(1)
        be, bn = (wr * ae).sum(1), (wr * an).sum(1)
        det = see * snn - sen * sen
        de, dn = (snn * be - sen * bn) / det, (see * bn - sen * be) / det
        lat = lat + dn / 60.0
        lon = lon + de / (60.0 * np.cos(np.radians(lat)))
        if np.max(np.hypot(de, dn)) < tol_nmi:
            break
    a, b, c = snn / det, -sen / det, see / det                   # covariance (east, north)
    m, d = 0.5 * (a + c), np.hypot(0.5 * (a - c), b)
    return lat, lon, 2.4477 * np.sqrt(m + d), 2.4477 * np.sqrt(m - d)


def sep_nmi(lat1, lon1, lat2, lon2):
    p1, p2 = np.radians(lat1), np.radians(lat2)
    c = np.sin(p1) * np.sin(p2) + np.cos(p1) * np.cos(p2) * np.cos(np.radians(lon2 - lon1))
    return np.degrees(np.arccos(np.clip(c, -1, 1))) * 60.0


def batch_case(n_fix, k, repeats):
    ho, gha, dec, dlat, dlon, tlat, tlon = make_sights(n_fix, k)
    w = np.ones_like(ho)
    t_nav = best_of(lambda: solve_fixes(ho, gha, dec, dlat, dlon), repeats)
    t_peer = best_of(lambda: peer(ho, gha, dec, dlat, dlon, w), repeats)
    f = solve_fixes(ho, gha, dec, dlat, dlon)
    p = peer(ho, gha, dec, dlat, dlon, w)
    agree = float(np.nanpercentile(sep_nmi(f.lat_deg, f.lon_deg, p[0], p[1]), 99.9))
    return t_nav, t_peer, agree, float(np.mean(f.converged))


def one_fix_case(k, repeats):
    ho, gha, dec, dlat, dlon, _, _ = make_sights(1, k, seed=5)
    t = datetime(2026, 3, 20, 5, 30, tzinfo=timezone.utc)
    sights = [Sight(float(h), float(g), float(d), t, "star") for h, g, d in
              zip(ho[0], gha[0], dec[0])]
    t_fix = best_of(lambda: solve_fix(sights, float(dlat[0]), float(dlon[0])), repeats)
    t_batch = best_of(lambda: solve_fixes(ho, gha, dec, dlat, dlon), repeats)
    t_peer = best_of(lambda: peer(ho, gha, dec, dlat, dlon, np.ones_like(ho)), repeats)
    return t_fix, t_batch, t_peer


def peak_mb(fn) -> float:
    tracemalloc.start()
    fn()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak / 1e6


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true")
    args = ap.parse_args()
    repeats = 1 if args.quick else 5
    n_batch = 1_000 if args.quick else 10_000
    solve_fixes(*make_sights(4, 3)[:5])                     # warm up imports

    t_nav, t_peer, agree, conv = batch_case(n_batch, 3, repeats)
    print(f"{n_batch:,} independent 3-sight fixes: solve_fixes {t_nav * 1e3:.1f} ms, "
          f"numpy batched Gauss-Newton {t_peer * 1e3:.1f} ms: nav/peer = {t_nav / t_peer:.2f} "
          f"(target <= 2); 99.9 % of positions agree within {agree:.1e} nmi (the rest have cuts of a few degrees), "
          f"{conv:.1%} converged")
    t_fix, t_b1, t_p1 = one_fix_case(1_000, repeats)
    print(f"one fix of 1,000 sights: solve_fix {t_fix * 1e3:.2f} ms (target <= 5 ms), "
          f"solve_fixes {t_b1 * 1e3:.2f} ms, numpy peer {t_p1 * 1e3:.2f} ms: "
          f"solve_fix/peer = {t_fix / t_p1:.1f}")
    sizes = (1_000, 10_000) if args.quick else (1_000, 10_000, 100_000)
    rows = []
    for k in sizes:
        ho, gha, dec, dlat, dlon, _, _ = make_sights(1, k, seed=7)
        t = best_of(lambda: solve_fixes(ho, gha, dec, dlat, dlon), repeats)
        mb = peak_mb(lambda: solve_fixes(ho, gha, dec, dlat, dlon))
        rows.append((k, t, mb))
        print(f"one fix of {k:>7,} sights (solve_fixes): {t * 1e3:8.2f} ms, "
              f"{t / k * 1e6:.2f} µs a sight, peak {mb:.1f} MB ({mb * 1e6 / k:.0f} B a sight)")
    (k0, t0, _), (k1, t1, _) = rows[0], rows[-1]
    print(f"scaling exponent of time from {k0:,} to {k1:,} sights: "
          f"{np.log(t1 / t0) / np.log(k1 / k0):.2f} (1 = linear)")


if __name__ == "__main__":
    main()
