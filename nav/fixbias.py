"""A fix that also finds one altitude error shared by all its sights (a "bias").

The model. Every sight's observed altitude is taken to carry the same unknown error b (arcmin,
+ when the observed altitudes read high): a wrong index error, a wrong height of eye, abnormal dip
or refraction move every line of position the same distance toward or away from its body. The
unknowns are the fix F (east, north) and b; the residual of sight i is

    e_i = Ho_i − Hc_i(observer_i(F)) − b          (arcmin = nmi)

with the observer at the sight's instant being F retired along the run (course and speed made
good, as in :mod:`nav.fix`). The weighted least squares over (east, north, b) is solved by
Gauss–Newton from the ordinary fix, with Hc computed exactly at each iterate; the partials of Hc
with respect to F are taken by central differences, so the model is the same circles of equal
altitude as the ordinary fix.

Why it needs surrounding azimuths. A shift of every line by b toward its body moves the ordinary
fix, when all bodies bear within one half of the horizon, in a way a shift of F mimics: b and F
cannot be told apart. With bodies all round (three stars about 120° apart) the shift of all lines
shrinks or grows the cocked hat instead, and the point equidistant from the lines (the centre of
the cocked hat, where the bisectors meet) is the fix, the common distance the bias; least squares
generalises this to any number of sights. nav refuses when the azimuths leave a gap of 180° or
more (all on one side), and when the bias's σ exceeds ``MAX_BIAS_SIGMA_ARCMIN``.

The σ. C = s²·(JᵀWJ)⁻¹ with s chosen as in :mod:`nav.fix`: the a-priori σ alone with up to four
sights (one degree of freedom or none), with five or more max(1, ŝ), ŝ² = Σ w e² / (n − 3).
The ellipse is drawn from the position block of C: it is the marginal confidence region, wider
than the ordinary fix's because one more unknown is estimated. The bias is called significant
when |b| > ``SIGNIFICANT_SIGMAS`` σ_b, and then the usual causes are named.

Pure: no printing, no disk.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from datetime import datetime

import numpy as np

from .angles import atan2d, cosd
from .errors import NavInputError
from .fix import (BAD_SIGHT_THRESHOLD, ErrorEllipse, Fix, LOP, azimuth_spread_deg,
                  chi2_2d_scale, solve_fix)
from .reduction import hc_zn
from .sailing import advance_position, course_speed_made_good
from .timekeeping import UTC
from .units import NMI_PER_DEG

MIN_SIGHTS = 3
MAX_BIAS_SIGMA_ARCMIN = 1.5      # a bias known worse than this means nothing useful
SIGNIFICANT_SIGMAS = 2.0         # |b| beyond 2σ: about 5 % false alarms with σ right
MIN_SIGHTS_A_POSTERIORI = 5      # two degrees of freedom before the scatter is trusted
_STEP_NMI = 0.05                 # central-difference step for the partials of Hc
USUAL_CAUSES = ("index error (read it again, on and off the arc)",
                "height of eye (the value set, and the sea state)",
                "abnormal dip or refraction (a cold sea, warm air, a hazy or raised horizon)")


@dataclass(frozen=True)
class BiasFix:
    """The fix with a shared altitude error. ``fix`` is an ordinary :class:`nav.fix.Fix` holding
    the position, the marginal ellipse, the residuals after the bias, flags and warnings, so that
    it renders and plots like any fix."""

    fix: Fix
    bias_arcmin: float
    bias_sigma_arcmin: float
    sigma_north_nmi: float
    sigma_east_nmi: float
    significant: bool
    causes: tuple[str, ...]


def _observers(lat, lon, runs):
    cmg, smg, dt_h = runs
    plat, plon = advance_position(np.full_like(dt_h, lat), np.full_like(dt_h, lon), cmg, smg, dt_h)
    return np.asarray(plat, float), np.asarray(plon, float)


def _hc_arcmin(lat, lon, runs, gha, dec):
    plat, plon = _observers(lat, lon, runs)
    hc, zn = hc_zn(plat, dec, gha + plon)
    return np.asarray(hc, float) * 60.0, np.asarray(zn, float)


def _move(lat, lon, east_nmi, north_nmi):
    new_lat = lat + north_nmi / NMI_PER_DEG
    new_lon = lon + east_nmi / (NMI_PER_DEG * cosd(0.5 * (lat + new_lat)))
    return float(new_lat), float(np.remainder(new_lon + 180.0, 360.0) - 180.0)


def _jacobian(lat, lon, runs, gha, dec):
    hc, zn = _hc_arcmin(lat, lon, runs, gha, dec)
    cols = []
    for de, dn in ((_STEP_NMI, 0.0), (0.0, _STEP_NMI)):
        hp, _ = _hc_arcmin(*_move(lat, lon, de, dn), runs, gha, dec)
        hm, _ = _hc_arcmin(*_move(lat, lon, -de, -dn), runs, gha, dec)
        cols.append((hp - hm) / (2.0 * _STEP_NMI))
    return hc, zn, np.column_stack(cols + [np.ones_like(hc)])


def _refuse(reason: str):
    raise NavInputError(f"no fix with a shared altitude error: {reason}", field="bias",
                        example="three or more bodies spread round the horizon, e.g. stars "
                                "about 120\u00b0 apart")


def solve_fix_bias(sights, dr_lat_deg: float, dr_lon_deg: float, fix_utc: datetime | None = None,
                   *, confidence: float = 0.95, max_iter: int = 30,
                   tol_nmi: float = 0.005) -> BiasFix:
    """Position and one shared altitude error from three or more sights (see the module doc).

    Raises NavInputError, with the reason, when the geometry cannot separate the bias.
    """
    sights = list(sights)
    if len(sights) < MIN_SIGHTS:
        _refuse(f"it needs at least {MIN_SIGHTS} sights ({len(sights)} given)")
    base = solve_fix(sights, dr_lat_deg, dr_lon_deg, fix_utc, confidence=confidence)
    spread = azimuth_spread_deg(base.zn_deg)
    if spread <= 180.0:
        _refuse(f"the azimuths lie all on one side (within {spread:.0f}\u00b0 of the horizon): "
                "a shared error cannot be told from a shift of the position")
    fix_utc = (fix_utc or max(s.utc for s in sights)).astimezone(UTC)
    n = len(sights)
    cmg, smg = np.empty(n), np.empty(n)
    for i, s in enumerate(sights):
        cmg[i], smg[i] = course_speed_made_good(s.course_deg or 0.0, s.speed_kn, s.set_deg,
                                                s.drift_kn)
    dt_h = np.array([(s.utc - fix_utc).total_seconds() / 3600.0 for s in sights])
    runs = (cmg, smg, dt_h)
    ho = np.array([s.ho_deg for s in sights]) * 60.0
    gha = np.array([s.gha_deg for s in sights])
    dec = np.array([s.dec_deg for s in sights])
    w = 1.0 / np.array([s.sigma_arcmin for s in sights]) ** 2

    lat, lon, b = base.lat_deg, base.lon_deg, 0.0
    converged, it = False, 0
    for it in range(1, max_iter + 1):
        hc, _, jac = _jacobian(lat, lon, runs, gha, dec)
        e = ho - hc - b
        normal = jac.T @ (jac * w[:, None])
        step = np.linalg.lstsq(normal, jac.T @ (w * e), rcond=None)[0]
        lat, lon = _move(lat, lon, step[0], step[1])
        b += float(step[2])
        if math.hypot(step[0], step[1]) < tol_nmi and abs(step[2]) < tol_nmi:
            converged = True
            break
    hc, zn, jac = _jacobian(lat, lon, runs, gha, dec)
    e = ho - hc - b
    normal = jac.T @ (jac * w[:, None])
    if np.linalg.cond(normal) > 1e10:
        _refuse("the lines cannot separate a shared error from the position")
    cov = np.linalg.inv(normal)
    dof = n - 3
    vf = float(math.sqrt(np.sum(w * e * e) / dof)) if dof > 0 else None
    scale, source = 1.0, "a priori"
    if n >= MIN_SIGHTS_A_POSTERIORI and vf is not None and vf > 1.0:
        scale, source = vf, "a posteriori"
    cov = cov * scale ** 2
    bias_sigma = float(math.sqrt(cov[2, 2]))
    if bias_sigma > MAX_BIAS_SIGMA_ARCMIN:
        _refuse(f"the shared error would be known only to \u00b1{bias_sigma:.1f}\u2032 (1\u03c3), "
                f"more than {MAX_BIAS_SIGMA_ARCMIN:g}\u2032: too weak to mean anything")
    lev = w * np.einsum("ij,jk,ik->i", jac, cov / scale ** 2, jac)
    norm_res, flags = _checks(e, w, lev, scale, dof)
    significant = abs(b) > SIGNIFICANT_SIGMAS * bias_sigma
    warnings = [f"shared altitude error {round(b, 1) + 0.0:+.1f}\u2032 \u00b1 {bias_sigma:.1f}\u2032 (1\u03c3): "
                "every line was shifted by it; the ellipse allows for the extra unknown"]
    if significant:
        warnings.append("the shared error is significant (beyond "
                        f"{SIGNIFICANT_SIGMAS:g}\u03c3); look for its cause: index error, height "
                        "of eye, abnormal dip or refraction")
    if not converged:
        warnings.append(f"the iteration did not converge in {it} steps: the fix is doubtful")
    for i, f in enumerate(flags):
        if f:
            warnings.append(f"{sights[i].name}: residual {e[i]:+.1f} nmi is far larger than the "
                            f"rest allow (normalised {norm_res[i]:+.1f}); a doubtful sight")
    warnings += [w_ for w_ in base.warnings          # the ordinary fix's own verdicts on scatter
                 if not any(k in w_ for k in ("residual", "converge", "cocked hat", "scatter"))]
    fix = replace(base, lat_deg=lat, lon_deg=lon, iterations=it, converged=converged,
                  ellipse=_ellipse(cov[:2, :2], confidence), sigma_source=source,
                  variance_factor=vf, residuals_nmi=tuple(float(x) for x in e),
                  normalised_residuals=norm_res, flags=flags,
                  zn_deg=tuple(float(z) for z in zn), warnings=tuple(warnings))
    return BiasFix(fix=fix, bias_arcmin=float(b), bias_sigma_arcmin=bias_sigma,
                   sigma_north_nmi=float(math.sqrt(cov[1, 1])),
                   sigma_east_nmi=float(math.sqrt(cov[0, 0])), significant=bool(significant),
                   causes=USUAL_CAUSES if significant else ())


def _checks(e, w, lev, scale, dof):
    """Normalised residuals and flags (with two or more degrees of freedom only)."""
    n = e.size
    if dof < 2:
        return tuple(None for _ in range(n)), tuple(False for _ in range(n))
    red = np.clip(1.0 - lev, 1e-9, None)
    t = e * np.sqrt(w) / (scale * np.sqrt(red))
    return (tuple(float(x) for x in t),
            tuple(bool(abs(x) > BAD_SIGHT_THRESHOLD and r > 1e-3) for x, r in zip(t, red)))


def _ellipse(cov2, confidence) -> ErrorEllipse:
    vals, vecs = np.linalg.eigh(cov2)
    k = chi2_2d_scale(confidence)
    major = vecs[:, 1]
    orient = float(np.remainder(atan2d(major[0], major[1]), 180.0))
    return ErrorEllipse(semi_major_nmi=float(k * math.sqrt(max(vals[1], 0.0))),
                        semi_minor_nmi=float(k * math.sqrt(max(vals[0], 0.0))),
                        orientation_deg=0.0 if orient >= 180.0 else orient,
                        confidence=float(confidence))


def shifted_lops(lops, bias_arcmin: float) -> tuple[LOP, ...]:
    """The LOPs with the shared error taken out: each moved b nmi away from its body."""
    return tuple(replace(lp, intercept_nmi=lp.intercept_nmi - bias_arcmin) for lp in lops)

