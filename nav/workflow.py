"""From validated sights to reductions, lines of position and a fix: the chain every edge uses.

The batch commands, the shell and the demo all hold their sights as :class:`nav.sightfile.SightRow`
(each with its DR at the sight's time) and call these functions; there is one way to turn sights
into a fix. No printing, no disk.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Sequence

import numpy as np

from .fix import Fix, LOP, Sight, lops_at, solve_fix
from .reduction import SightReductions, reduce_sights
from .sailing import rhumb_line
from .sightfile import SightRow
from .timekeeping import format_hm, to_datetime64


@dataclass(frozen=True)
class FixResult:
    """A fix with everything that produced it: the reductions, the sights, the LOPs to plot."""

    fix: Fix
    reductions: SightReductions
    sights: tuple[Sight, ...]
    lops: tuple[LOP, ...]
    dr_lat_deg: float
    dr_lon_deg: float
    rows: tuple[SightRow, ...]
    used: tuple[int, ...] = ()
    """The places, in the rows given, of the sights the fix used (`rows` holds those rows)."""
    doubts: tuple = ()
    """:class:`nav.plausibility.Doubt` of each sight judged doubtful (its `index` in the rows
    given), left out of the fix unless it was asked to keep them."""
    left_out: tuple[SightRow, ...] = ()


def reduce_rows(rows: Sequence[SightRow], *, use_ap: bool = False) -> SightReductions:
    """Reduce validated sights in one vectorised call (arrays in the order of `rows`).

    An error raised for the i-th sight is placed at that sight's own row number.
    """
    from .errors import NavInputError

    try:
        red = reduce_sights(
            [r.body for r in rows], to_datetime64(np.array([r.utc for r in rows], dtype=object)),
            np.array([r.hs_deg for r in rows]),
            limb=np.array([r.limb for r in rows], dtype=object),
            index_error_arcmin=np.array([r.index_error_arcmin for r in rows]),
            eye_height_m=np.array([r.eye_height_m for r in rows]),
            horizon=np.array([r.horizon for r in rows], dtype=object),
            temperature_c=np.array([r.temperature_c for r in rows]),
            pressure_hpa=np.array([r.pressure_hpa for r in rows]),
            lat_deg=np.array([r.dr_lat_deg for r in rows]),
            lon_deg=np.array([r.dr_lon_deg for r in rows]), use_ap=use_ap)
    except NavInputError as err:
        if err.row is not None and 1 <= err.row <= len(rows):
            err.line = rows[err.row - 1].line
            err.row = rows[err.row - 1].row
        raise
    return apply_row_choices(red, rows, use_ap=use_ap)


PRESCRIBED_NOTE = "GHA/Dec prescribed by the sight file (columns gha, dec), not nav's ephemeris"


def apply_row_choices(red: SightReductions, rows: Sequence[SightRow], *,
                      use_ap: bool) -> SightReductions:
    """Each row's own choices: a prescribed GHA/Dec replaces the ephemeris' (and says so), and a
    row's ``method`` (``ap``/``dr``) overrides the command's choice of position to reduce from."""
    from dataclasses import replace

    from .reduction import reduce_at, reduce_from_ap

    prescribed = [r.gha_override_deg is not None or r.dec_override_deg is not None for r in rows]
    ap = np.array([use_ap if r.method is None else r.method == "ap" for r in rows])
    if not any(prescribed) and bool(np.all(ap == use_ap)):
        return red
    gha = np.array([r.gha_override_deg if r.gha_override_deg is not None else g
                    for r, g in zip(rows, np.atleast_1d(red.gha_deg))])
    dec = np.array([r.dec_override_deg if r.dec_override_deg is not None else d
                    for r, d in zip(rows, np.atleast_1d(red.dec_deg))])
    args = (red.ho_deg, gha, dec, red.dr_lat_deg, red.dr_lon_deg)
    by_ap, by_dr = reduce_from_ap(*args), reduce_at(*args)
    pick = {f: np.where(ap, getattr(by_ap, f), getattr(by_dr, f))
            for f in ("gha_deg", "dec_deg", "lat_deg", "lon_deg", "lha_deg", "hc_deg", "zn_deg",
                      "intercept_nmi")}
    from .reduction import reduction_warnings

    warnings = []
    for w, p, ho, before, after in zip(red.warnings, prescribed, np.atleast_1d(red.ho_deg),
                                       np.atleast_1d(red.intercept_nmi), pick["intercept_nmi"]):
        stale = set(reduction_warnings(ho, before))      # they judged the replaced reduction
        warnings.append(tuple(x for x in w if x not in stale) + reduction_warnings(ho, after)
                        + ((PRESCRIBED_NOTE,) if p else ()))
    warnings = tuple(warnings)
    return replace(red, **pick, from_ap=bool(np.all(ap)), warnings=warnings)


def refused_rows(rows: Sequence[SightRow], *, use_ap: bool = False) -> list:
    """The errors of every sight that the chain refuses (e.g. an apparent altitude below −1°).

    Called only after :func:`reduce_rows` failed: halves the rows until each error is pinned to
    its own row, so a few bad sights among many cost a few vectorised calls, not one per row.
    """
    from .errors import NavInputError

    rows = list(rows)
    if not rows:
        return []
    try:
        reduce_rows(rows, use_ap=use_ap)
        return []
    except NavInputError as err:
        if len(rows) == 1:
            return [err if err.row is not None else err.at_row(rows[0].row).at_line(rows[0].line)]
    mid = len(rows) // 2
    return refused_rows(rows[:mid], use_ap=use_ap) + refused_rows(rows[mid:], use_ap=use_ap)


def run_between(row: SightRow, fix_row: SightRow) -> tuple[float | None, float]:
    """Course and speed that carry `row`'s DR to `fix_row`'s DR in the time between them."""
    hours = (fix_row.utc - row.utc).total_seconds() / 3600.0
    if abs(hours) < 1e-9:
        return None, 0.0
    course, dist = rhumb_line(row.dr_lat_deg, row.dr_lon_deg, fix_row.dr_lat_deg, fix_row.dr_lon_deg)
    dist, course = float(dist), float(course)
    if dist < 1e-9:
        return None, 0.0
    if hours < 0:  # a later sight retired to an earlier fix time: sail the reverse course
        course, hours = (course + 180.0) % 360.0, -hours
    return course, dist / hours


def runs_between(rows: Sequence[SightRow], fix_row: SightRow) -> list:
    """:func:`run_between` for every row at once (one vectorised rhumb-line call)."""
    hours = np.array([(fix_row.utc - r.utc).total_seconds() / 3600.0 for r in rows])
    course, dist = rhumb_line(np.array([r.dr_lat_deg for r in rows]),
                              np.array([r.dr_lon_deg for r in rows]),
                              fix_row.dr_lat_deg, fix_row.dr_lon_deg)
    course, dist = np.atleast_1d(course), np.atleast_1d(dist)
    back = hours < 0       # a later sight retired to an earlier fix time: the reverse course
    course = np.where(back, np.remainder(course + 180.0, 360.0), course)
    out = []
    for h, c, d, b in zip(np.abs(hours).tolist(), course.tolist(), dist.tolist(), back.tolist()):
        out.append((None, 0.0) if h < 1e-9 or d < 1e-9 else (c, d / h))
    return out


def fix_from_rows(rows: Sequence[SightRow], *, fix_utc: datetime | None = None,
                  confidence: float = 0.95, reductions: SightReductions | None = None,
                  runs: Sequence[tuple[float | None, float]] | None = None,
                  keep_doubtful: bool = False, names: Sequence[str] | None = None) -> FixResult:
    """The fix (or running fix) at the time of the last sight (or `fix_utc`).

    Each earlier sight is advanced to the fix time by the vessel's run: by default the run between
    the sight's DR and the DR at the fix time (the last row's), which is the run a DR track of
    course and speed says the vessel made; or `runs`, one (course_deg, speed_kn) per row, where
    the caller knows the legs sailed (a passage log whose DR was reset by a fix in between).

    A sight its DR cannot explain (:mod:`nav.plausibility`) is left out, and said so in the fix's
    warnings, unless `keep_doubtful`; a fix farther from its DR than the DR's age explains gets a
    warning that names the distance (first among the fix's warnings).
    """
    from dataclasses import replace

    from .plausibility import DoubtfulSightsError, doubtful_sights, far_from_dr

    rows = tuple(rows)
    red = reductions if reductions is not None else reduce_rows(rows)
    doubts = doubtful_sights(rows, red)
    used = tuple(range(len(rows)))
    notes = []
    if doubts:
        for d in doubts:
            r = rows[d.index]
            where = (names[d.index] if names is not None else
                     f"line {r.line}" if r.line is not None else f"row {r.row}")
            notes.append(f"{r.body} {r.utc:%H:%M:%S} ({where}) "
                         + ("kept though doubtful: " if keep_doubtful else "left out, doubtful: ")
                         + d.text())
        if not keep_doubtful:
            bad = {d.index for d in doubts}
            used = tuple(i for i in used if i not in bad)
            if len(used) < 2:
                raise DoubtfulSightsError(
                    f"a fix needs two or more sights, and {len(bad)} of the {len(rows)} are "
                    "doubtful (each is named above with why)", notes, field="sights",
                    example="mend them, or ask to use the doubtful sights")
    kept = tuple(rows[i] for i in used)
    if len(kept) != len(rows):
        red = reduce_rows(kept)
        runs = None if runs is None else [runs[i] for i in used]
    result = _solve(kept, red, fix_utc, confidence, runs)
    fix = result.fix
    _, dist = rhumb_line(result.dr_lat_deg, result.dr_lon_deg, fix.lat_deg, fix.lon_deg)
    far = far_from_dr(float(dist), kept[-1].dr_age_h, fix.kind)
    warnings = ([far] if far else []) + list(fix.warnings) + notes
    return replace(result, fix=replace(fix, warnings=tuple(warnings)), used=used, doubts=doubts,
                   left_out=tuple(rows[i] for i in range(len(rows)) if i not in used))


def _solve(rows, red, fix_utc, confidence, runs) -> FixResult:
    last = rows[-1]
    fix_utc = fix_utc or last.utc
    sights = []
    runs = runs if runs is not None else runs_between(rows, last)
    for i, row in enumerate(rows):
        course, speed = runs[i]
        sights.append(Sight(
            ho_deg=float(red.ho_deg[i]), gha_deg=float(red.gha_deg[i]), dec_deg=float(red.dec_deg[i]),
            utc=row.utc, body=row.body, sigma_arcmin=row.sigma_arcmin,
            course_deg=course, speed_kn=speed, label=f"{row.body} {format_hm(row.utc)}"))
    fix = solve_fix(sights, last.dr_lat_deg, last.dr_lon_deg, fix_utc, confidence=confidence)
    lops = lops_at(sights, [r.dr_lat_deg for r in rows], [r.dr_lon_deg for r in rows], fix_utc)
    return FixResult(fix=fix, reductions=red, sights=tuple(sights), lops=lops,
                     dr_lat_deg=last.dr_lat_deg, dr_lon_deg=last.dr_lon_deg, rows=rows)
