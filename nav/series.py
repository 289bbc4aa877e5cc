"""The sight-series check: several shots of one body in a few minutes, the bad one found.

The model. A *run* is three or more sights of one body (and limb) whose first and last shots lie
within ``window_min`` minutes (15 by default). Each shot i is reduced from its own DR, which the
batch file or the log carries forward by the course and speed in force, so the vessel's motion
is in it; and its Hc is computed exactly on the sphere, so the curvature of the altitude curve
near the meridian is in it too. What is left, d_i = Ho_i − Hc_i (arcmin), is the same for every
shot of the run apart from the sight errors: the run's common offset (the intercept of the run).
Nothing is fitted freely through the shots, so a bad shot cannot pull the curve to itself.

The estimate. The common offset is the median of the d_i; each shot's residual is d_i minus that
median. Each shot is judged against the *other* shots of its run (leave one out, so that a bad
shot cannot inflate the scatter it is judged by): its residual is d_i minus the median of the
others, and it is flagged when that exceeds ``K_SIGMA`` (3.5) robust σ of the others, where the
robust σ is 1.4826 × their median absolute deviation (the MAD scaled to σ for a normal
distribution), and never when it is below ``FLOOR_ARCMIN`` (1.75′): with three to six shots the
MAD can come out tiny by chance, and no one reads a sextant closer than that in a seaway (common
practice, no source). The rule was chosen by simulation (README: about 1 % false alarms per run
and 94 % of 3′ blunders found, with shots scattered 0.5′).

The averaged sight. The unflagged shots are averaged: their mean offset is placed on the
predicted altitude curve at their mean time, at the DR of that time, and turned back into an Hs
with the corrections of that altitude. Used in a fix in place of the run, it carries the run's
information without its bad shot. Its σ is left at the shots' own σ (conservative: averaging
does not remove an error common to the shots, such as an index error).

Pure: no printing, no disk.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import datetime, timedelta
from typing import Sequence

import numpy as np

from .sightfile import SightRow

WINDOW_MIN = 15.0           # a run: first to last shot within this many minutes
MIN_SHOTS = 3               # fewer than three shots cannot say which one is bad
K_SIGMA = 3.5               # flag beyond this many robust σ of the other shots ...
FLOOR_ARCMIN = 1.75         # ... and never below this many arcminutes (common practice, no source)
MAD_TO_SIGMA = 1.4826       # σ = 1.4826 · MAD for a normal distribution (common practice)


@dataclass(frozen=True)
class Shot:
    row: int
    utc: datetime
    hs_deg: float
    residual_arcmin: float
    threshold_arcmin: float
    flagged: bool
    line: int | None = None
    """The file's line of the shot, as an editor numbers it (None for shots not from a file)."""


@dataclass(frozen=True)
class SightRun:
    """One run checked. ``indices``: positions of its shots in the rows given."""

    body: str
    limb: str | None
    indices: tuple[int, ...]
    shots: tuple[Shot, ...]
    offset_arcmin: float
    robust_sigma_arcmin: float
    averaged_utc: datetime
    averaged_hs_deg: float
    averaged_row: SightRow

    @property
    def flagged_rows(self) -> tuple[int, ...]:
        return tuple(s.row for s in self.shots if s.flagged)

    @property
    def used_rows(self) -> tuple[int, ...]:
        return tuple(s.row for s in self.shots if not s.flagged)

    @property
    def used_lines(self) -> tuple[int, ...]:
        """The file lines of the shots the averaged sight is made from (rows where no line)."""
        return tuple(s.line if s.line is not None else s.row for s in self.shots if not s.flagged)


def find_runs(rows: Sequence[SightRow], *, window_min: float = WINDOW_MIN,
              min_shots: int = MIN_SHOTS) -> list[tuple[int, ...]]:
    """Index groups of the runs in `rows` (rows in time order; other bodies may come between).

    Shots of one body and limb are taken in time order; a run starts at a shot and takes every
    later one within `window_min` of that first shot; the next run starts after it.
    """
    by_body: dict[tuple, list[int]] = {}
    for i, r in enumerate(rows):
        by_body.setdefault((r.body, r.limb), []).append(i)
    window = timedelta(minutes=window_min)
    runs = []
    for idx in by_body.values():
        idx = sorted(idx, key=lambda i: rows[i].utc)
        k = 0
        while k < len(idx):
            j = k
            while j + 1 < len(idx) and rows[idx[j + 1]].utc - rows[idx[k]].utc <= window:
                j += 1
            if j - k + 1 >= min_shots:
                runs.append(tuple(idx[k:j + 1]))
            k = j + 1
    return sorted(runs, key=lambda g: g[0])


def robust_flags(offsets_arcmin, *, k_sigma: float = K_SIGMA, floor_arcmin: float = FLOOR_ARCMIN):
    """Leave-one-out robust test of one run's offsets d_i (arcmin).

    Returns (median offset, residuals, robust σ of the run, thresholds, flags): shot i's residual
    is d_i minus the median of the *other* shots, its threshold max(k·σ_others, floor) with
    σ_others = 1.4826·MAD of the other shots. Leaving the shot out keeps a bad shot from
    inflating the very scatter it is judged against.
    """
    d = np.asarray(offsets_arcmin, float)
    med = float(np.median(d))
    sigma = MAD_TO_SIGMA * float(np.median(np.abs(d - med)))
    res, thr = np.empty_like(d), np.empty_like(d)
    for i in range(d.size):
        others = np.delete(d, i)
        centre = np.median(others)
        res[i] = d[i] - centre
        thr[i] = max(k_sigma * MAD_TO_SIGMA * float(np.median(np.abs(others - centre))),
                     floor_arcmin)
    return med, res, sigma, thr, np.abs(res) > thr


def _dr_at(rows: Sequence[SightRow], t: datetime) -> tuple[float, float]:
    """The DR at `t`, carried from the latest of `rows` at or before `t` by its course/speed."""
    from .sailing import dr_position

    before = [r for r in rows if r.utc <= t] or [rows[0]]
    r = before[-1]
    hours = (t - r.utc).total_seconds() / 3600.0
    if r.speed_kn and r.course_deg is not None and hours > 0.0:
        lat, lon = dr_position(r.dr_lat_deg, r.dr_lon_deg, r.course_deg, r.speed_kn, hours)
        return float(lat), float(lon)
    return r.dr_lat_deg, r.dr_lon_deg


def _averaged(rows, specs) -> list[SightRow]:
    """The averaged sight of each (used indices, mean offset) in `specs`, in one vectorised
    reduction per pass (the corrections depend a little on the altitude: three passes)."""
    from .angles import format_dm
    from .workflow import reduce_rows

    probes = []
    for used, _ in specs:
        t0 = rows[used[0]].utc
        mean_s = float(np.mean([(rows[i].utc - t0).total_seconds() for i in used]))
        t = t0 + timedelta(seconds=round(mean_s, 1))
        lat, lon = _dr_at([rows[i] for i in used], t)
        hs = float(np.mean([rows[i].hs_deg for i in used]))
        probes.append(replace(rows[used[0]], utc=t, hs_deg=hs, dr_lat_deg=lat, dr_lon_deg=lon))
    offsets = np.array([off for _, off in specs])
    for _ in range(3):
        red = reduce_rows(probes)
        step = np.atleast_1d(red.hc_deg) + offsets / 60.0 - np.atleast_1d(red.ho_deg)
        probes = [replace(p, hs_deg=p.hs_deg + float(d)) for p, d in zip(probes, step)]
    out = []
    for p, (used, _) in zip(probes, specs):
        by_line = all(rows[i].line is not None for i in used)
        rows_text = ", ".join(str(rows[i].line if by_line else rows[i].row) for i in used)
        out.append(replace(p, hs_text=format_dm(p.hs_deg, decimals=2), dr_given=False,
                           note=f"average of {'the shots on lines' if by_line else 'rows'} {rows_text}",
                           cells={**p.cells, "averaged_from": rows_text.replace(" ", "")}))
    return out


def check_runs(rows: Sequence[SightRow], reductions=None, *, window_min: float = WINDOW_MIN,
               min_shots: int = MIN_SHOTS, k_sigma: float = K_SIGMA,
               floor_arcmin: float = FLOOR_ARCMIN) -> tuple[SightRun, ...]:
    """Check every run in `rows` (validated sights with their DRs); see the module docstring.

    `reductions`: the rows already reduced from their DRs (:func:`nav.workflow.reduce_rows`),
    to save a second reduction.
    """
    from .workflow import reduce_rows

    rows = tuple(rows)
    groups = find_runs(rows, window_min=window_min, min_shots=min_shots)
    if not groups:
        return ()
    red = reductions if reductions is not None else reduce_rows(rows)
    intercept = np.atleast_1d(np.asarray(red.intercept_nmi, float))   # Ho − Hc at the DR, ′
    checked = []
    for g in groups:
        med, res, sigma, thr, flags = robust_flags(intercept[list(g)], k_sigma=k_sigma,
                                                   floor_arcmin=floor_arcmin)
        used = [i for i, f in zip(g, flags) if not f]
        checked.append((g, med, res, sigma, thr, flags, used, float(np.mean(intercept[used]))))
    averaged = _averaged(rows, [(c[6], c[7]) for c in checked])
    out = []
    for (g, med, res, sigma, thr, flags, _, _), avg in zip(checked, averaged):
        shots = tuple(Shot(row=rows[i].row, utc=rows[i].utc, hs_deg=rows[i].hs_deg,
                           residual_arcmin=float(r), threshold_arcmin=float(t), flagged=bool(f),
                           line=rows[i].line)
                      for i, r, t, f in zip(g, res, thr, flags))
        out.append(SightRun(body=rows[g[0]].body, limb=rows[g[0]].limb, indices=tuple(g),
                            shots=shots, offset_arcmin=med, robust_sigma_arcmin=sigma,
                            averaged_utc=avg.utc, averaged_hs_deg=avg.hs_deg, averaged_row=avg))
    return tuple(out)


def rows_with_runs_averaged(rows: Sequence[SightRow], runs: Sequence[SightRun]) -> tuple:
    """`rows` with each run's shots replaced by its averaged sight (kept in time order)."""
    drop = {i for run in runs for i in run.indices}
    kept = [r for i, r in enumerate(rows) if i not in drop] + [run.averaged_row for run in runs]
    return tuple(sorted(kept, key=lambda r: r.utc))
