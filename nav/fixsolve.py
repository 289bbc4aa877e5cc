"""The least-squares solver behind every fix, batched over many independent fixes.

:func:`solve_fixes` takes F fixes of k sights each as arrays of shape (F, k) and solves them all
at once: the same model, ellipse and bad-sight flags as :func:`nav.fix.solve_fix` (whose module
docstring states them), which is itself the case F = 1 of the same core. The work is linear in
the number of sights: no array of n × n is ever built; the widest angle of cut comes from the
sorted azimuths, each fix's 2 × 2 normal equations are solved in closed form.

Static fixes (all sights taken from one position, the vessel not moving between them) use the
direct form of the triangle: the observer is the candidate fix itself, and the partials of the
altitude are sin Zn and cos Zn. A running fix (a sight moved by the vessel's run) reduces each
sight from the candidate moved back along the rhumb line of its run, as `solve_fix` describes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .angles import cosd, sind
from .errors import NavInputError
from .sailing import _rhumb_direct
from .units import NMI_PER_DEG

DEFAULT_SIGMA_ARCMIN = 1.0      # a yacht sextant sight, common practice, no source
WEAK_CUT_DEG = 30.0             # angle of cut below which a fix is weak (common practice)
LOW_ALT_DEG = 10.0              # refraction uncertain below this (common practice, no source)
HIGH_ALT_DEG = 80.0             # near-zenith sights: circles, not straight lines (common practice)
BAD_SIGHT_THRESHOLD = 3.0       # normalised residual beyond which a sight is flagged
MIN_SIGHTS_FOR_CHECK = 4
MAX_STEP_NMI = 600.0            # one Gauss-Newton step is limited to 10 degrees of arc
POLE_LAT_DEG = 89.99            # an iterate this near a pole is refused
_DLAT = 1e-6                    # degrees: the difference step for the run's d_lon/d_lat
OK, PARALLEL, POLE = 0, 1, 2    # how a fix ended (`Fixes.failure`)


def chi2_2d_scale(confidence: float) -> float:
    """√χ²₂(p) = √(−2 ln(1 − p)): 2.4477 for p = 0.95, 1.0 for p = 0.3935."""
    if not (0.0 < confidence < 1.0):
        raise NavInputError("confidence must be between 0 and 1", field="confidence",
                            example="0.95")
    return math.sqrt(-2.0 * math.log1p(-confidence))


def cut_angle_deg(zn_a_deg, zn_b_deg):
    """Angle of cut of two LOPs with these azimuths, in [0, 90]. Vectorised."""
    out = np.degrees(np.arcsin(np.clip(np.abs(sind(np.asarray(zn_a_deg) - zn_b_deg)), 0, 1)))
    return out[()] if np.ndim(out) == 0 else out


def widest_cut_deg(zn_deg):
    """The widest angle of cut between any two LOPs of each row of `zn_deg` (..., k), k ≥ 2.

    For each line the best partner is the one whose direction (Zn modulo 180°) lies nearest to
    its own plus 90°: one sort and one search per row, O(k log k), never the k × k table.
    """
    zn = np.asarray(zn_deg, float)
    shape = zn.shape[:-1]
    zn = zn.reshape(-1, zn.shape[-1])
    rows, k = zn.shape
    u = np.remainder(zn, 180.0)
    order = np.argsort(u, axis=1)
    s = np.take_along_axis(u, order, axis=1)
    # Each row's sorted directions with the wrap on both sides, rows kept apart by 1000°.
    ext = np.concatenate([s[:, -1:] - 180.0, s, s[:, :1] + 180.0], axis=1)
    ext_pos = np.concatenate([[k - 1], np.arange(k), [0]])          # ext column -> sorted col
    off = 1000.0 * np.arange(rows)[:, None]
    flat = (ext + off).ravel()
    target = np.remainder(u + 90.0, 180.0) + off
    j = np.searchsorted(flat, target.ravel()).reshape(rows, k) - (k + 2) * np.arange(rows)[:, None]
    best = np.zeros((rows, k))
    for cand in (np.clip(j - 1, 0, k + 1), np.clip(j, 0, k + 1)):
        partner = np.take_along_axis(zn, np.take_along_axis(order, ext_pos[cand], axis=1), axis=1)
        best = np.maximum(best, cut_angle_deg(zn, partner))
    return best.max(axis=1).reshape(shape)


def azimuth_spread_rows(zn_deg):
    """The smallest arc of the horizon holding every azimuth of each row (..., k)."""
    z = np.sort(np.remainder(np.asarray(zn_deg, float), 360.0), axis=-1)
    if z.shape[-1] < 2:
        return np.zeros(z.shape[:-1])
    gaps = np.diff(np.concatenate([z, z[..., :1] + 360.0], axis=-1), axis=-1)
    return 360.0 - gaps.max(axis=-1)


@dataclass(frozen=True)
class Fixes:
    """The result of :func:`solve_fixes`: arrays over the F fixes (and (F, k) over the sights).

    A fix that has none (all its lines parallel, or an iteration run to a pole) has NaN for its
    position and ellipse, ``converged`` False and ``failure`` PARALLEL (1) or POLE (2).
    ``normalised_residuals`` is NaN where it is not computed (fewer than 4 sights, or a sight that
    no other checks: ``unchecked``); ``variance_factor`` is NaN with 2 sights.
    """

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    semi_major_nmi: np.ndarray
    semi_minor_nmi: np.ndarray
    orientation_deg: np.ndarray
    converged: np.ndarray
    iterations: np.ndarray
    failure: np.ndarray
    confidence: float
    variance_factor: np.ndarray
    sigma_scale: np.ndarray
    cut_angle_deg: np.ndarray
    azimuth_spread_deg: np.ndarray
    weak_cut: np.ndarray
    residuals_nmi: np.ndarray
    zn_deg: np.ndarray
    normalised_residuals: np.ndarray
    flags: np.ndarray
    unchecked: np.ndarray
    n_flagged: np.ndarray


# ---------------------------------------------------------------- the model

def _static_model(lat, lon, ho, gha, sd, cd, want_zn=False):
    """Residuals (nmi) and partials (east, north) at F for sights taken at F (no run)."""
    la = np.radians(lat)[:, None]
    sl, cl = np.sin(la), np.cos(la)
    lha = np.radians(gha + lon[:, None])
    ch = np.cos(lha)
    x = -cd * np.sin(lha)
    y = cl * sd - sl * cd * ch
    h = np.hypot(x, y)
    r = (ho - np.degrees(np.arctan2(sl * sd + cl * cd * ch, h))) * 60.0
    if h.all():
        ae, an = x / h, y / h
    else:                                           # at the zenith: Zn 000, as atan2(0, 0) gives
        safe = np.where(h > 0.0, h, 1.0)
        ae, an = np.where(h > 0.0, x / safe, 0.0), np.where(h > 0.0, y / safe, 1.0)
    zn = np.remainder(np.degrees(np.arctan2(x, y)), 360.0) if want_zn else None
    return r, ae, an, zn


def _moving_model(lat, lon, ho, gha, dec, cmg, run, want_zn=False):
    """As above, each sight reduced from F moved back along its run (running fixes)."""
    f_lat = np.broadcast_to(lat[:, None], ho.shape)
    f_lon = np.broadcast_to(lon[:, None], ho.shape)
    plat, plon = _rhumb_direct(f_lat, f_lon, cmg, run)
    sl, cl = sind(plat), cosd(plat)
    sd, cd = sind(dec), cosd(dec)
    lha = gha + plon
    sh, ch = sind(lha), cosd(lha)
    x = -cd * sh
    y = cl * sd - sl * cd * ch
    h = np.hypot(x, y)
    r = (ho - np.degrees(np.arctan2(sl * sd + cl * cd * ch, h))) * 60.0
    zn = np.remainder(np.degrees(np.arctan2(x, y)), 360.0)
    zn = np.where(zn >= 360.0, 0.0, zn)
    # How a step of F moves the observer: east by the same d_lon (so by cos φP/cos φF in miles),
    # and for a north step also a little east, as the run's d_lon depends on the latitudes.
    _, plon_n = _rhumb_direct(f_lat + _DLAT, f_lon, cmg, run)
    dlon_dlat = (np.remainder(plon_n - plon + 180.0, 360.0) - 180.0) / _DLAT
    s_zn, c_zn = sind(zn), cosd(zn)
    ae = s_zn * cl / cosd(lat)[:, None]
    an = c_zn + s_zn * cl * dlon_dlat
    return r, ae, an, (zn if want_zn else None)


def _normal(w, ae, an, r=None):
    see = np.einsum("ij,ij,ij->i", w, ae, ae)
    sen = np.einsum("ij,ij,ij->i", w, ae, an)
    snn = np.einsum("ij,ij,ij->i", w, an, an)
    if r is None:
        return see, sen, snn
    wr = w * r
    return see, sen, snn, np.einsum("ij,ij->i", wr, ae), np.einsum("ij,ij->i", wr, an)


# ---------------------------------------------------------------- the core

def solve_batch(ho, gha, dec, lat0, lon0, w, motion=None, *, confidence=0.95, max_iter=20,
                tol_nmi=0.01) -> Fixes:
    """Gauss–Newton for every fix at once, then ellipse, residual check and cut per fix.

    All arrays validated by the caller: ho/gha/dec/w (F, k), lat0/lon0 (F,); `motion` None or
    (cmg_deg, run_nmi), both (F, k), run signed (sight minus fix time).
    """
    nfix, k = ho.shape
    lat = np.array(lat0, float)
    lon = np.array(lon0, float)
    if motion is None:
        sd, cd = np.sin(np.radians(dec)), np.cos(np.radians(dec))

        def model(idx, la, lo, want_zn=False):
            if idx is None:
                return _static_model(la, lo, ho, gha, sd, cd, want_zn)
            return _static_model(la, lo, ho[idx], gha[idx], sd[idx], cd[idx], want_zn)
    else:
        cmg, run = motion

        def model(idx, la, lo, want_zn=False):
            if idx is None:
                return _moving_model(la, lo, ho, gha, dec, cmg, run, want_zn)
            return _moving_model(la, lo, ho[idx], gha[idx], dec[idx], cmg[idx], run[idx],
                                 want_zn)

    converged = np.zeros(nfix, bool)
    failure = np.zeros(nfix, np.int8)
    iterations = np.zeros(nfix, np.int64)
    active = np.arange(nfix)
    for it in range(1, int(max_iter) + 1):
        if active.size == 0:
            break
        every = active.size == nfix
        idx = None if every else active
        la, lo = (lat, lon) if every else (lat[active], lon[active])
        ww = w if every else w[active]
        r, ae, an, _ = model(idx, la, lo)
        see, sen, snn, be, bn = _normal(ww, ae, an, r)
        det = see * snn - sen * sen
        trace = see + snn
        parallel = np.abs(det) < 1e-12 * np.maximum(1.0, trace * trace)
        with np.errstate(divide="ignore", invalid="ignore"):
            step_e = (snn * be - sen * bn) / det
            step_n = (see * bn - sen * be) / det
        length = np.hypot(step_e, step_n)
        big = length > MAX_STEP_NMI
        if big.any():
            f = np.where(big, MAX_STEP_NMI / np.where(big, length, 1.0), 1.0)
            step_e, step_n = step_e * f, step_n * f
        new_lat = la + step_n / NMI_PER_DEG
        pole = ~parallel & (np.abs(new_lat) >= POLE_LAT_DEG)
        mid = np.radians(0.5 * (la + new_lat))
        new_lon = np.remainder(lo + step_e / (NMI_PER_DEG * np.cos(mid)) + 180.0, 360.0) - 180.0
        iterations[active] = it
        ok = ~(parallel | pole)
        lat[active] = np.where(ok, new_lat, la)
        lon[active] = np.where(ok, new_lon, lo)
        failure[active] = np.where(parallel, PARALLEL, np.where(pole, POLE, OK))
        done = ok & (length < tol_nmi)
        converged[active] = done
        active = active[ok & ~done]
    return _finish(ho, lat, lon, w, model, converged, iterations, failure, confidence)


def _finish(ho, lat, lon, w, model, converged, iterations, failure, confidence) -> Fixes:
    nfix, n = ho.shape
    r, ae, an, zn = model(None, lat, lon, want_zn=True)
    see, sen, snn = _normal(w, ae, an)
    det = see * snn - sen * sen
    with np.errstate(divide="ignore", invalid="ignore"):
        c_ee, c_en, c_nn = snn / det, -sen / det, see / det        # (east, north) nmi², a priori
    wrr = w * r * r
    total = wrr.sum(axis=1)
    if n > 2:
        vf = np.sqrt(total / (n - 2))
        scale = np.where(vf > 1.0, vf, 1.0) if n >= MIN_SIGHTS_FOR_CHECK else np.ones(nfix)
    else:
        vf, scale = np.full(nfix, np.nan), np.ones(nfix)
    # Ellipse: eigenvalues of the 2 × 2 covariance in closed form; the major axis' bearing.
    s2 = scale * scale
    a, b, c = c_ee * s2, c_en * s2, c_nn * s2
    m, d = 0.5 * (a + c), np.hypot(0.5 * (a - c), b)
    kk = chi2_2d_scale(confidence)
    major = kk * np.sqrt(np.maximum(m + d, 0.0))
    minor = kk * np.sqrt(np.maximum(m - d, 0.0))
    # major axis (east, north) ∝ (λ1 − c, b) or (b, λ1 − a), whichever is the better conditioned
    l1 = m + d
    use_c = np.abs(l1 - c) >= np.abs(l1 - a)
    ve = np.where(use_c, l1 - c, b)
    vn = np.where(use_c, b, l1 - a)
    orient = np.remainder(np.degrees(np.arctan2(ve, vn)), 180.0)
    orient = np.where((orient >= 180.0) | (d == 0.0), 0.0, orient)

    norm_res = np.full((nfix, n), np.nan)
    flags = np.zeros((nfix, n), bool)
    unchecked = np.zeros((nfix, n), bool)
    if n >= MIN_SIGHTS_FOR_CHECK:
        lev = w * (ae * ae * c_ee[:, None] + 2.0 * ae * an * c_en[:, None]
                   + an * an * c_nn[:, None])                       # leverages h_ii
        red = 1.0 - lev                                             # redundancy numbers
        unchecked = red < 1e-3
        safe = np.where(unchecked, 1.0, red)
        s2_other = np.maximum(total[:, None] - wrr / safe, 0.0) / (n - 3)
        sc = np.maximum(1.0, np.sqrt(s2_other))
        t = r * np.sqrt(w) / (sc * np.sqrt(safe))
        norm_res = np.where(unchecked, np.nan, t)
        flags = ~unchecked & (np.abs(t) > BAD_SIGHT_THRESHOLD)
    cut = widest_cut_deg(zn)
    failed = failure != OK
    nan = np.where(failed, np.nan, 1.0)
    return Fixes(lat_deg=lat * nan, lon_deg=lon * nan, semi_major_nmi=major * nan,
                 semi_minor_nmi=minor * nan, orientation_deg=orient * nan,
                 converged=converged & ~failed, iterations=iterations, failure=failure,
                 confidence=float(confidence), variance_factor=vf, sigma_scale=scale,
                 cut_angle_deg=cut, azimuth_spread_deg=azimuth_spread_rows(zn),
                 weak_cut=cut < WEAK_CUT_DEG, residuals_nmi=r, zn_deg=zn,
                 normalised_residuals=norm_res, flags=flags, unchecked=unchecked,
                 n_flagged=flags.sum(axis=1))


# ---------------------------------------------------------------- the public batch

def _array(name, value, example, shape=None, lo=None, hi=None):
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise NavInputError(f"'{name}' must be numbers", field=name, example=example) from None
    if shape is not None:
        try:
            arr = np.broadcast_to(arr, shape)
        except ValueError:
            raise NavInputError(f"shape {np.shape(value)} does not fit {shape}", field=name,
                                example=example) from None
    bad = ~np.isfinite(arr)
    if lo is not None:
        bad |= (arr < lo) | (arr > hi)
    if bad.any():
        where = np.argwhere(bad)[0]
        row = int(where[0]) + 1 if where.size else None
        err = NavInputError(f"a value is not finite or outside [{lo}, {hi}]" if lo is not None
                            else "a value is not finite", field=name, example=example)
        raise err.at_row(row) if row is not None else err
    return arr


def solve_fixes(ho_deg, gha_deg, dec_deg, dr_lat_deg, dr_lon_deg, sigma_arcmin=DEFAULT_SIGMA_ARCMIN,
                *, confidence: float = 0.95, max_iter: int = 20, tol_nmi: float = 0.01) -> Fixes:
    """F independent static fixes of k sights each, solved together.

    `ho_deg`, `gha_deg`, `dec_deg`: arrays (F, k) (a single fix may be given as (k,)); the DR
    (F,) starts each iteration; `sigma_arcmin` a scalar or (F, k). The same model, ellipse (its
    confidence `confidence`) and bad-sight flags as :func:`nav.fix.solve_fix` for sights taken
    at the fix time. A fix whose lines are all parallel, or whose iteration runs to a pole, gets
    NaN and its ``failure`` code rather than stopping the batch. An error names the field and,
    as its row, the fix (1-based).
    """
    ho = np.asarray(ho_deg, dtype=float) if not isinstance(ho_deg, np.ndarray) else ho_deg
    if ho.ndim == 1:
        ho = ho[None, :]
        gha_deg, dec_deg = np.atleast_2d(gha_deg), np.atleast_2d(dec_deg)
        if np.ndim(sigma_arcmin) == 1:
            sigma_arcmin = np.atleast_2d(sigma_arcmin)
    if ho.ndim != 2 or ho.shape[1] < 2:
        raise NavInputError(f"ho_deg must be (fixes, sights) with two or more sights a fix; "
                            f"shape {ho.shape} given", field="ho_deg",
                            example="ho_deg of shape (10000, 3)")
    shape = ho.shape
    ho = _array("ho_deg", ho, "34.205", shape, -5.0, 90.0)
    gha = _array("gha_deg", gha_deg, "283.13", shape)
    dec = _array("dec_deg", dec_deg, "-12.4", shape, -90.0, 90.0)
    sigma = _array("sigma_arcmin", sigma_arcmin, "1.0", shape)
    if np.any(sigma <= 0.0):
        raise NavInputError("σ must be positive", field="sigma_arcmin", example="1.0")
    lat0 = _array("dr_lat_deg", dr_lat_deg, "41.2083 (north +)", shape[:1], -90.0, 90.0)
    lon0 = _array("dr_lon_deg", dr_lon_deg, "-32.118 (east +)", shape[:1], -360.0, 360.0)
    chi2_2d_scale(confidence)
    if int(max_iter) < 1:
        raise NavInputError("max_iter must be at least 1", field="max_iter", example="20")
    if not (tol_nmi > 0.0):
        raise NavInputError("tol_nmi must be positive", field="tol_nmi", example="0.01")
    return solve_batch(ho, gha, dec, lat0, lon0, 1.0 / (sigma * sigma), confidence=confidence,
                       max_iter=max_iter, tol_nmi=tol_nmi)
