"""Lines of position, the least-squares fix, its error ellipse, the running fix.

The model. A sight i is an observed altitude Ho_i of a body whose GHA and Dec at the sight's
instant are known. The vessel sails between the sight and the fix time (course/speed through the
water, plus a current), so for a candidate fix F at ``fix_utc`` the observer at the sight's
instant stood at F moved *back* along the rhumb line of the course and speed made good
(:func:`nav.sailing.advance_position` with negative hours). The residual is

    r_i = Ho_i − Hc_i(observer_i)      (minutes of arc = nautical miles; + toward the body)

and its partial derivatives with respect to F's north and east displacement are cos Zn_i and
sin Zn_i (the altitude grows by 1′ for each mile run toward the body's geographical position).
The fix minimises Σ r_i²/σ_i² by Gauss–Newton: reduce every sight from the current position,
solve the 2×2 normal equations for a step, move, and repeat until the step is below ``tol_nmi``.
Because Hc is computed exactly at each iterate (not read off a straight LOP), the converged fix is
the intersection of the circles of equal altitude; it does not depend on how far the DR was, and
sights near the zenith (above about 80°, where a straight LOP drawn from a distant AP is a poor
stand-in for a small circle) need no special treatment.

The error ellipse is the confidence region of the two-dimensional normal distribution with
covariance C = s²·(AᵀWA)⁻¹ (A: the partials above, W = diag(1/σ_i²)), scaled by √χ²₂(p)
(2.4477 for p = 0.95). Choice of s, stated plainly:

- 2 or 3 sights: s = 1, i.e. the a-priori σ only (two lines have no redundancy; three have one
  degree of freedom, too few to estimate a scatter);
- 4 or more: s = max(1, ŝ) with ŝ² = Σ w r² / (n − 2) the a-posteriori variance factor. The
  ellipse is widened when the sights scatter more than the stated σ, and never shrunk below it
  when they happen to agree well. This makes the ellipse somewhat conservative (the tests measure
  its coverage), and it does not cover a systematic error common to all sights (a wrong index
  error, an unknown dip), which no number of sights reveals through their scatter.

A bad sight (a blunder: a wrong body, a misread minute, a wrong second) is looked for only with 4
or more sights: with two lines there is nothing to compare, and with three the one degree of
freedom gives every sight the same normalised residual, so the cocked hat can say that something
is wrong but not which sight. For each sight the residual is normalised by its own standard error
σ_i·√(1 − h_ii) (h_ii the leverage), with σ_i scaled by the a-posteriori factor of the *other*
sights when that is larger than 1 (a leave-one-out test); the sight is flagged when the normalised
residual exceeds 3 (about 0.3 % false alarms per sight when σ is right).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime

import numpy as np

from .angles import cosd, format_dm, sind
from .errors import NavInputError
from .fixsolve import (BAD_SIGHT_THRESHOLD, DEFAULT_SIGMA_ARCMIN, HIGH_ALT_DEG,  # noqa: F401
                       LOW_ALT_DEG, MAX_STEP_NMI, MIN_SIGHTS_FOR_CHECK, PARALLEL, WEAK_CUT_DEG,
                       Fixes, chi2_2d_scale, cut_angle_deg, solve_batch,
                       solve_fixes)
from .reduction import hc_zn
from .sailing import advance_position, course_speed_made_good
from .timekeeping import UTC, format_hms
from .units import NMI_PER_DEG

RUNNING_FIX_MIN = 30.0          # sights advanced across more than this make a running fix
# A running fix is commonly run over a few hours (Sun-run-Sun, about 3 h); past this many hours
# of advance the DR's unknown current and leeway outgrow the ellipse, and the fix says so
# (common practice, no source).
LONG_RUN_H = 8.0
MAX_FIX_SIGHTS = 200_000        # one fix takes at most this many sights (memory grows linearly)


# ---------------------------------------------------------------- data

@dataclass(frozen=True)
class Sight:
    """One corrected sight (Ho) with the body's GHA and Dec at its instant.

    ``course_deg``/``speed_kn`` (and ``set_deg``/``drift_kn``) are the vessel's motion between the
    sight and the fix time, used to advance (or retire) the sight; leave them at None/0 for a
    vessel hove to, or when all sights are taken at the fix time. ``sigma_arcmin`` is the a-priori
    standard error of Ho (default 1.0′ for a yacht sextant: common practice, no source).
    """

    ho_deg: float
    gha_deg: float
    dec_deg: float
    utc: datetime
    body: str
    sigma_arcmin: float = DEFAULT_SIGMA_ARCMIN
    course_deg: float | None = None
    speed_kn: float = 0.0
    set_deg: float | None = None
    drift_kn: float = 0.0
    label: str = ""

    def __post_init__(self):
        def bad(field, msg, example):
            raise NavInputError(msg, field=field, example=example)

        for name, example in (("ho_deg", "34.205"), ("gha_deg", "283.13"), ("dec_deg", "-12.4"),
                              ("sigma_arcmin", "1.0"), ("speed_kn", "6.5"), ("drift_kn", "0.8")):
            v = getattr(self, name)
            if not isinstance(v, (int, float, np.floating, np.integer)) or not math.isfinite(v):
                bad(name, f"'{v}' is not a finite number", example)
        if not (-5.0 <= self.ho_deg <= 90.0):
            bad("ho_deg", "Ho must be between -5° and 90°", "34.205")
        if not (-90.0 <= self.dec_deg <= 90.0):
            bad("dec_deg", "Dec must be between -90° and 90°", "-12.4")
        if not isinstance(self.utc, datetime) or self.utc.tzinfo is None:
            bad("utc", "the sight's time must be an aware datetime (UTC)", "2026-03-20T18:42:10Z")
        if self.sigma_arcmin <= 0.0:
            bad("sigma_arcmin", "σ must be positive", "1.0")
        if self.speed_kn < 0.0 or self.drift_kn < 0.0:
            bad("speed_kn" if self.speed_kn < 0 else "drift_kn", "must not be negative", "6.5")
        if self.speed_kn > 0.0 and self.course_deg is None:
            bad("course_deg", "a speed needs a course", "course_deg=225, speed_kn=6.5")
        if self.drift_kn > 0.0 and self.set_deg is None:
            bad("set_deg", "a drift needs a set (direction toward)", "set_deg=210, drift_kn=0.8")
        for name in ("course_deg", "set_deg"):
            v = getattr(self, name)
            if v is not None and not math.isfinite(v):
                bad(name, f"'{v}' is not a finite number", "225")

    @property
    def moving(self) -> bool:
        return self.speed_kn > 0.0 or self.drift_kn > 0.0

    @property
    def name(self) -> str:
        return self.label or f"{self.body} at {format_hms(self.utc)}"


@dataclass(frozen=True)
class LOP:
    """A straight line of position (Marcq St Hilaire) plotted from an AP.

    The line is perpendicular to ``zn_deg`` at ``intercept_nmi`` from (``ap_lat_deg``,
    ``ap_lon_deg``), + toward the body. When the sight was advanced (or retired) to ``fix_utc``,
    the AP shown is the reduction point moved by the run (``advanced_nmi`` on
    ``advanced_course_deg``), the line moved parallel to itself; ``origin_*`` keep the point the
    sight was reduced from.
    """

    utc: datetime
    fix_utc: datetime
    body: str
    label: str
    ap_lat_deg: float
    ap_lon_deg: float
    zn_deg: float
    intercept_nmi: float
    hc_deg: float
    ho_deg: float
    advanced_nmi: float = 0.0
    advanced_course_deg: float = 0.0
    origin_lat_deg: float | None = None
    origin_lon_deg: float | None = None


@dataclass(frozen=True)
class ErrorEllipse:
    """Confidence ellipse of a fix: semi-axes in nmi, orientation = true bearing of the major
    axis in [0, 180), ``confidence`` the probability it is meant to cover."""

    semi_major_nmi: float
    semi_minor_nmi: float
    orientation_deg: float
    confidence: float


@dataclass(frozen=True)
class Fix:
    """The result of :func:`solve_fix`. Per-sight tuples follow the order of the sights given.

    ``residuals_nmi``: Ho − Hc at the fix (+ toward); ``normalised_residuals``: the leave-one-out
    statistic (None with fewer than 4 sights); ``flags``: True for a sight inconsistent with the
    others (always False with fewer than 4). ``cut_angle_deg``: the angle of cut of two LOPs, or
    with three or more the widest angle of cut between any two of them; ``azimuth_spread_deg``:
    the smallest arc of the horizon holding every Zn.
    """

    utc: datetime
    lat_deg: float
    lon_deg: float
    kind: str
    n_sights: int
    iterations: int
    converged: bool
    ellipse: ErrorEllipse
    sigma_used_arcmin: tuple
    sigma_source: str
    variance_factor: float | None
    residuals_nmi: tuple
    normalised_residuals: tuple
    flags: tuple
    zn_deg: tuple
    labels: tuple
    cut_angle_deg: float
    azimuth_spread_deg: float
    warnings: tuple


# ---------------------------------------------------------------- single lines

def _check_point(lat_deg, lon_deg, prefix: str):
    for name, v, lim in ((f"{prefix}lat_deg", lat_deg, 90.0), (f"{prefix}lon_deg", lon_deg, 360.0)):
        arr = np.asarray(v, dtype=float)
        if not np.all(np.isfinite(arr)) or np.any(np.abs(arr) > lim):
            raise NavInputError(f"'{v}' is not a valid position", field=name,
                                example="41.2083 (north +) / -32.118 (east +)")


def _hours(t_from: datetime, t_to: datetime) -> float:
    return (t_to - t_from).total_seconds() / 3600.0


def lop_at(sight: Sight, lat_deg: float, lon_deg: float, fix_utc: datetime | None = None) -> LOP:
    """Reduce `sight` from the AP/DR (lat, lon); with `fix_utc`, advance the LOP to that time."""
    _check_point(lat_deg, lon_deg, "ap_")
    hc, zn = hc_zn(lat_deg, sight.dec_deg, sight.gha_deg + lon_deg)
    intercept = (sight.ho_deg - hc) * 60.0
    ap_lat, ap_lon, run, run_course = float(lat_deg), float(lon_deg), 0.0, 0.0
    if fix_utc is not None:
        if fix_utc.tzinfo is None:
            raise NavInputError("fix_utc must be an aware datetime", field="fix_utc",
                                example="2026-03-20T12:00:00Z")
        h = _hours(sight.utc, fix_utc)
        if sight.moving and h != 0.0:
            cmg, smg = course_speed_made_good(sight.course_deg or 0.0, sight.speed_kn,
                                              sight.set_deg, sight.drift_kn)
            ap_lat, ap_lon = advance_position(lat_deg, lon_deg, cmg, smg, h)
            ap_lat, ap_lon = float(ap_lat), float(ap_lon)
            run = abs(float(smg) * h)
            run_course = float(cmg) if h > 0 else float((cmg + 180.0) % 360.0)
    return LOP(utc=sight.utc, fix_utc=fix_utc or sight.utc, body=sight.body, label=sight.name,
               ap_lat_deg=ap_lat, ap_lon_deg=ap_lon, zn_deg=zn, intercept_nmi=intercept,
               hc_deg=hc, ho_deg=sight.ho_deg, advanced_nmi=run, advanced_course_deg=run_course,
               origin_lat_deg=float(lat_deg), origin_lon_deg=float(lon_deg))


def lops_at(sights, lat_deg, lon_deg, fix_utc: datetime | None = None) -> tuple:
    """:func:`lop_at` for many sights at once (each from its own AP/DR), in a few vectorised
    calls: the same LOPs, in time linear in the number of sights."""
    sights = list(sights)
    n = len(sights)
    lat = np.asarray(lat_deg, float).reshape(n)
    lon = np.asarray(lon_deg, float).reshape(n)
    _check_point(lat, lon, "ap_")
    if fix_utc is not None and fix_utc.tzinfo is None:
        raise NavInputError("fix_utc must be an aware datetime", field="fix_utc",
                            example="2026-03-20T12:00:00Z")
    ho, gha, dec = np.array([(s.ho_deg, s.gha_deg, s.dec_deg) for s in sights], float).reshape(n, 3).T
    hc, zn = hc_zn(lat, dec, gha + lon)
    hc, zn = np.atleast_1d(hc), np.atleast_1d(zn)
    ap_lat, ap_lon, run, run_course = lat.copy(), lon.copy(), np.zeros(n), np.zeros(n)
    if fix_utc is not None:
        h = np.array([_hours(s.utc, fix_utc) for s in sights], float)
        go = np.array([s.moving for s in sights], bool) & (h != 0.0)
        if go.any():
            i = np.flatnonzero(go)
            cmg, smg = course_speed_made_good(
                [sights[k].course_deg or 0.0 for k in i], [sights[k].speed_kn for k in i],
                [0.0 if sights[k].set_deg is None else sights[k].set_deg for k in i],
                [sights[k].drift_kn for k in i])
            a_lat, a_lon = advance_position(lat[i], lon[i], cmg, smg, h[i])
            ap_lat[i], ap_lon[i] = a_lat, a_lon
            run[i] = np.abs(np.asarray(smg) * h[i])
            run_course[i] = np.where(h[i] > 0, cmg, np.remainder(np.asarray(cmg) + 180.0, 360.0))
    return tuple(LOP(utc=s.utc, fix_utc=fix_utc or s.utc, body=s.body, label=s.name,
                     ap_lat_deg=float(ap_lat[k]), ap_lon_deg=float(ap_lon[k]),
                     zn_deg=float(zn[k]), intercept_nmi=float((ho[k] - hc[k]) * 60.0),
                     hc_deg=float(hc[k]), ho_deg=s.ho_deg, advanced_nmi=float(run[k]),
                     advanced_course_deg=float(run_course[k]), origin_lat_deg=float(lat[k]),
                     origin_lon_deg=float(lon[k]))
                 for k, s in enumerate(sights))


def _plane(lat0, lon0, lat, lon, coslat):
    """(east, north) nmi of (lat, lon) from (lat0, lon0) on the tangent plane."""
    dlon = np.remainder(np.asarray(lon, float) - lon0 + 180.0, 360.0) - 180.0
    return dlon * coslat * NMI_PER_DEG, (np.asarray(lat, float) - lat0) * NMI_PER_DEG


def distance_to_lop(lop: LOP, lat_deg, lon_deg):
    """Signed distance (nmi) of a point from the LOP on the tangent plane at the AP, + toward the
    body. Vectorised over the point."""
    coslat = cosd(0.5 * (lop.ap_lat_deg + np.asarray(lat_deg, float)))
    x, y = _plane(lop.ap_lat_deg, lop.ap_lon_deg, lat_deg, lon_deg, coslat)
    out = x * sind(lop.zn_deg) + y * cosd(lop.zn_deg) - lop.intercept_nmi
    return out[()] if np.ndim(out) == 0 else out


def two_lop_intersection(lop_a: LOP, lop_b: LOP):
    """(lat_deg, lon_deg, cut_angle_deg) where two straight LOPs cross.

    Worked on the tangent plane at the mean latitude of the two APs (longitude scaled by its
    cosine), as on a plotting sheet. Fields may be numpy arrays (vectorised). Raises
    NavInputError for parallel lines.
    """
    lat0, lon0 = np.asarray(lop_a.ap_lat_deg, float), np.asarray(lop_a.ap_lon_deg, float)
    coslat = cosd(0.5 * (lat0 + np.asarray(lop_b.ap_lat_deg, float)))
    bx, by = _plane(lat0, lon0, lop_b.ap_lat_deg, lop_b.ap_lon_deg, coslat)
    u1x, u1y = sind(lop_a.zn_deg), cosd(lop_a.zn_deg)
    u2x, u2y = sind(lop_b.zn_deg), cosd(lop_b.zn_deg)
    c1 = np.asarray(lop_a.intercept_nmi, float)
    c2 = u2x * bx + u2y * by + lop_b.intercept_nmi
    det = u1x * u2y - u1y * u2x
    if np.any(np.abs(det) < 1e-9):
        raise NavInputError("the two LOPs are parallel: they do not cross", field="lops",
                            example="sights of bodies some 30° to 150° apart in azimuth")
    x = (c1 * u2y - c2 * u1y) / det
    y = (u1x * c2 - u2x * c1) / det
    lat = lat0 + y / NMI_PER_DEG
    lon = np.remainder(lon0 + x / (NMI_PER_DEG * coslat) + 180.0, 360.0) - 180.0
    cut = cut_angle_deg(lop_a.zn_deg, lop_b.zn_deg)
    if np.ndim(lat) == 0:
        return float(lat), float(lon), float(cut)
    return lat, lon, cut


def azimuth_spread_deg(zn_deg) -> float:
    """The smallest arc of the horizon that holds every azimuth (0 for one body, up to 360)."""
    z = np.sort(np.remainder(np.asarray(zn_deg, float).ravel(), 360.0))
    if z.size < 2:
        return 0.0
    gaps = np.diff(np.concatenate([z, [z[0] + 360.0]]))
    return float(360.0 - gaps.max())


def in_ellipse(fix: Fix, lat_deg, lon_deg):
    """True where (lat, lon) lies inside the fix's error ellipse (vectorised over points)."""
    e = fix.ellipse
    coslat = cosd(fix.lat_deg)
    x, y = _plane(fix.lat_deg, fix.lon_deg, lat_deg, lon_deg, coslat)
    a_e, a_n = sind(e.orientation_deg), cosd(e.orientation_deg)     # major axis unit vector
    u = x * a_e + y * a_n
    v = -x * a_n + y * a_e
    with np.errstate(divide="ignore", invalid="ignore"):
        q = (u / e.semi_major_nmi) ** 2 + (v / e.semi_minor_nmi) ** 2
    out = q <= 1.0
    return bool(out) if np.ndim(out) == 0 else out


# ---------------------------------------------------------------- the fix

def _validate(sights, dr_lat_deg, dr_lon_deg, fix_utc, confidence, max_iter, tol_nmi):
    sights = list(sights)
    if len(sights) < 2:
        raise NavInputError(f"a fix needs at least two sights ({len(sights)} given)",
                            field="sights", example="two or more sights of bodies apart in azimuth")
    if len(sights) > MAX_FIX_SIGHTS:
        raise NavInputError(f"{len(sights):,} sights: one fix takes at most {MAX_FIX_SIGHTS:,}",
                            field="sights", example="the sights of one watch or one day")
    for i, s in enumerate(sights):
        if not isinstance(s, Sight):
            raise NavInputError(f"sight {i + 1} is not a Sight", field="sights").at_row(i + 1)
    _check_point(dr_lat_deg, dr_lon_deg, "dr_")
    if np.ndim(dr_lat_deg) or np.ndim(dr_lon_deg):
        raise NavInputError("the DR must be one position", field="dr_lat_deg", example="41.2")
    if fix_utc is not None and (not isinstance(fix_utc, datetime) or fix_utc.tzinfo is None):
        raise NavInputError("fix_utc must be an aware datetime", field="fix_utc",
                            example="2026-03-20T12:00:00Z")
    chi2_2d_scale(confidence)
    if int(max_iter) < 1:
        raise NavInputError("max_iter must be at least 1", field="max_iter", example="20")
    if not (tol_nmi > 0.0):
        raise NavInputError("tol_nmi must be positive", field="tol_nmi", example="0.01")
    return sights


def _labels(sights) -> tuple:
    """Each sight's name; the time of day is formatted once for sights that share it."""
    hms: dict = {}
    out = []
    for s in sights:
        if s.label:
            out.append(s.label)
        else:
            t = hms.get(s.utc)
            if t is None:
                t = hms[s.utc] = format_hms(s.utc)
            out.append(f"{s.body} at {t}")
    return tuple(out)


def _runs(sights, fix_utc):
    """Course and signed run (sight minus fix time, nmi) of every sight, in one vectorised call;
    and the hours from the fix to each sight."""
    dt_h = np.fromiter(((s.utc - fix_utc).total_seconds() / 3600.0 for s in sights), float,
                       len(sights))
    moving = np.fromiter((s.moving for s in sights), bool, len(sights))
    if not moving.any():
        return None, dt_h, moving
    course = np.array([s.course_deg or 0.0 for s in sights], float)
    speed = np.array([s.speed_kn for s in sights], float)
    set_ = np.array([0.0 if s.set_deg is None else s.set_deg for s in sights], float)
    drift = np.array([s.drift_kn for s in sights], float)
    cmg, smg = course_speed_made_good(course, speed, set_, drift)
    run = np.asarray(smg) * dt_h
    if not run.any():
        return None, dt_h, moving
    return (np.asarray(cmg, float)[None, :], run[None, :]), dt_h, moving


def solve_fix(sights, dr_lat_deg: float, dr_lon_deg: float, fix_utc: datetime | None = None, *,
              confidence: float = 0.95, max_iter: int = 20, tol_nmi: float = 0.01) -> Fix:
    """The weighted least-squares fix (or running fix) of two or more sights at `fix_utc`.

    `fix_utc` defaults to the time of the latest sight. The DR only starts the iteration; the
    result is the same from any DR near enough to pick the right intersection of the circles (two
    circles cross twice; the iteration finds the crossing nearer the DR).

    The ellipse: with 2 or 3 sights it rests on the a-priori σ alone; with 4 or more the
    a-posteriori σ replaces it when the sights scatter more than stated (never when they scatter
    less), so the 95 % ellipse then covers a little more than 95 % (measured about 96–97 % with
    six sights). Neither reveals an error shared by all sights. Bad sights are flagged only with
    4 or more sights. See the module docstring for the details. The solver is
    :func:`nav.fixsolve.solve_batch`, the same as :func:`solve_fixes` uses, for one fix.
    """
    sights = _validate(sights, dr_lat_deg, dr_lon_deg, fix_utc, confidence, max_iter, tol_nmi)
    if fix_utc is None:
        fix_utc = max(s.utc for s in sights)
    fix_utc = fix_utc.astimezone(UTC)
    n = len(sights)
    motion, dt_h, moving = _runs(sights, fix_utc)
    ho, gha, dec, sigma = np.array([(s.ho_deg, s.gha_deg, s.dec_deg, s.sigma_arcmin)
                                    for s in sights], float).T
    res = solve_batch(ho[None, :], gha[None, :], dec[None, :],
                      np.array([float(dr_lat_deg)]), np.array([float(dr_lon_deg)]),
                      (1.0 / sigma ** 2)[None, :], motion, confidence=confidence,
                      max_iter=max_iter, tol_nmi=tol_nmi)
    if res.failure[0] == PARALLEL:
        raise NavInputError("the lines of position are all parallel: no fix",
                            field="sights", example="bodies some 30° or more apart in Zn")
    if res.failure[0]:
        raise NavInputError("the iteration ran to a pole: check the DR and the sights",
                            field="sights", example="a DR within some 100 nmi of the fix")
    r = res.residuals_nmi[0]
    vf = float(res.variance_factor[0]) if n > 2 else None
    scale = float(res.sigma_scale[0])
    source = "a posteriori" if scale > 1.0 else "a priori"
    converged, iterations = bool(res.converged[0]), int(res.iterations[0])
    if n >= MIN_SIGHTS_FOR_CHECK:
        norm_res = tuple(None if u else float(t)
                         for t, u in zip(res.normalised_residuals[0], res.unchecked[0]))
    else:
        norm_res = (None,) * n
    flags = tuple(res.flags[0].tolist())
    uncheckable = tuple(np.flatnonzero(res.unchecked[0]).tolist())
    cut = float(res.cut_angle_deg[0])
    kind = ("running fix" if np.any(moving & (np.abs(dt_h) * 60.0 > RUNNING_FIX_MIN))
            else "fix")
    warnings = _warnings(sights, n, ho, r, norm_res, flags, uncheckable, cut, vf, scale,
                         converged, iterations, tol_nmi)
    run_h = float(np.max(np.abs(dt_h[moving]))) if moving.any() else 0.0
    if run_h > LONG_RUN_H:
        warnings.append(f"running fix over {run_h:.0f} h: sights were advanced that long along "
                        "the DR, whose unknown current and leeway are errors the ellipse cannot "
                        "show")
    ellipse = ErrorEllipse(semi_major_nmi=float(res.semi_major_nmi[0]),
                           semi_minor_nmi=float(res.semi_minor_nmi[0]),
                           orientation_deg=float(res.orientation_deg[0]),
                           confidence=float(confidence))
    return Fix(utc=fix_utc, lat_deg=float(res.lat_deg[0]), lon_deg=float(res.lon_deg[0]),
               kind=kind, n_sights=n, iterations=iterations, converged=converged,
               ellipse=ellipse, sigma_used_arcmin=tuple((sigma * scale).tolist()),
               sigma_source=source, variance_factor=vf, residuals_nmi=tuple(r.tolist()),
               normalised_residuals=norm_res, flags=flags, zn_deg=tuple(res.zn_deg[0].tolist()),
               labels=_labels(sights), cut_angle_deg=cut,
               azimuth_spread_deg=float(res.azimuth_spread_deg[0]), warnings=tuple(warnings))


def _warnings(sights, n, ho, r, norm_res, flags, uncheckable, cut, vf, scale, converged,
              iterations, tol_nmi):
    out = []
    if not converged:
        out.append(f"the iteration did not converge to {tol_nmi:g} nmi in {iterations} steps: "
                   "the fix is doubtful; start from a better DR")
    if n == 2:
        out.append("only two LOPs: there is no check on a bad sight")
        if cut < WEAK_CUT_DEG:
            out.append(f"angle of cut {cut:.0f}° is below {WEAK_CUT_DEG:.0f}°: the fix is weak "
                       "along the lines")
    elif cut < WEAK_CUT_DEG:
        out.append(f"azimuths spread too little: the widest angle of cut between any two LOPs "
                   f"is {cut:.0f}°")
    for i in np.flatnonzero((ho < LOW_ALT_DEG) | (ho > HIGH_ALT_DEG)):
        s = sights[i]
        if s.ho_deg < LOW_ALT_DEG:
            out.append(f"{s.name}: Ho {format_dm(s.ho_deg)} is below {LOW_ALT_DEG:.0f}°: "
                       "refraction is uncertain")
        elif s.ho_deg > HIGH_ALT_DEG:
            out.append(f"{s.name}: Ho {format_dm(s.ho_deg)} is above {HIGH_ALT_DEG:.0f}°: "
                       "treated as a circle of equal altitude; such a sight is hard to take")
    for i in np.flatnonzero(flags):
        out.append(f"{sights[i].name}: residual {r[i]:+.1f} nmi is far larger than the rest "
                   f"allow (normalised {norm_res[i]:+.1f}); a doubtful sight")
    for i in uncheckable:
        out.append(f"{sights[i].name}: no other sight checks it (it alone sets one direction)")
    if n == 3 and vf is not None and vf > BAD_SIGHT_THRESHOLD:
        out.append("the three LOPs disagree more than σ allows (a large cocked hat); one sight "
                   "may be bad, but three lines cannot tell which")
    if scale > 1.5:
        out.append(f"the sights scatter {scale:.1f} times more than their stated σ: the ellipse "
                   "uses the a-posteriori σ")
    return out
