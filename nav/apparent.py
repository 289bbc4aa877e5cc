"""Apparent geocentric places for many (body, instant) pairs: the arithmetic behind the almanac.

Everything here works on plain numpy arrays with the instants on the last axis, so that the
almanac (k bodies × n instants) and the reduction (one body and one instant per sight) share it:

- Solar-system bodies: barycentric position and velocity straight from the DE421 segments
  (jplephem), evaluated once at the instant itself; the light-time is found by
  :data:`LIGHT_TIME_ITERATIONS` fixed-point steps on the body's path taken as straight over the
  light-time (b(t − τ) ≈ b(t) − v·τ). The curvature left out is ½·a·τ²: under 2 km for Mars,
  under 1 km for Jupiter and Saturn, a few metres for Venus and centimetres for the Moon — at
  most 0.003″ as seen from the Earth. Measured against ERFA: every body within 0.0001′ of astropy.
  Then the same light deflection by the Sun (IAU SOFA eraLd) and relativistic annual aberration
  (eraAb) as the stars.
- Stars: space motion and parallax from the catalogue epoch, Sun deflection and aberration as
  SOFA's eraLdsun and eraAb.

``tests/test_almanac_reference.py`` checks the results against ERFA with astropy on the same DE421
file (bound 0.01′; observed near 0.0002′).
"""

from __future__ import annotations

import numpy as np

from .angles import norm360

AU_KM = 149_597_870.700            # IAU 2012 Resolution B2
C_AU_PER_DAY = 173.144_632_674_240  # c = 299 792.458 km/s (SI), in AU/day
SUN_SCHWARZSCHILD_AU = 1.974_125_743_36e-8  # 2GM/c² of the Sun in AU (IAU SOFA, SRS)
LIGHT_TIME_ITERATIONS = 2

# DE421 segments (center, target) whose sum is each body's barycentric position.
SEGMENT_CHAINS = {
    "sun": ((0, 10),),
    "moon": ((0, 3), (3, 301)),
    "venus": ((0, 2), (2, 299)),
    "mars": ((0, 4), (4, 499)),
    "jupiter barycenter": ((0, 5),),
    "saturn barycenter": ((0, 6),),
    "earth": ((0, 3), (3, 399)),
}


def barycentric_au(kernel, target: str, whole, fraction) -> np.ndarray:
    """Barycentric ICRS position (AU), shape (3, n), of `target` at TDB = whole + fraction (JD)."""
    pos = 0.0
    for pair in SEGMENT_CHAINS[target]:
        pos = pos + kernel.spk.pairs[pair].compute(whole, fraction)
    return pos / AU_KM


def barycentric_state_au(kernel, target: str, whole, fraction):
    """Barycentric position (AU) and velocity (AU/day), each (3, n)."""
    pos, vel = 0.0, 0.0
    for pair in SEGMENT_CHAINS[target]:
        p, v = kernel.spk.pairs[pair].compute_and_differentiate(whole, fraction)
        pos, vel = pos + p, vel + v
    return pos / AU_KM, vel / AU_KM


# Grid steps (days) for many instants: cubic interpolation error ≈ 0.023·h⁴·|x⁗|. The Earth's
# monthly wobble about the Earth-Moon barycentre (4670 km, 27.3 d) gives |x⁗| ≈ 13 km/day⁴,
# so about 0.1 m at h = 1/8 day (its yearly path adds less); the Sun's barycentric path (about
# 0.01 AU over 12 years) about a millimetre at h = 1/2 day. tests/test_apparent.py measures both.
GRID_STEP_DAYS = {"earth": 0.125, "sun": 0.5}


def _cubic_weights(x):
    """Four-point Lagrange weights for points k−1..k+2 at u = x − k (k = floor(x))."""
    k = np.floor(x).astype(int)
    u = x - k
    return k, ((-u * (u - 1.0) * (u - 2.0) / 6.0), ((u + 1.0) * (u - 1.0) * (u - 2.0) / 2.0),
               (-(u + 1.0) * u * (u - 2.0) / 2.0), ((u + 1.0) * u * (u - 1.0) / 6.0))


def dense_state_au(kernel, target: str, whole, fraction, velocity: bool = True):
    """As :func:`barycentric_state_au` (or :func:`barycentric_au` without `velocity`), for many
    instants: on a grid of GRID_STEP_DAYS[target] and interpolated, when the grid is smaller
    than half the number of instants; else evaluated at every instant."""
    whole, fraction = np.asarray(whole, dtype=float), np.asarray(fraction, dtype=float)
    step = GRID_STEP_DAYS.get(target)
    if step is not None and whole.size >= 64:
        w0 = float(whole.min())
        t = (whole - w0) + fraction
        lo, hi = float(t.min()), float(t.max())
        n_grid = int(np.ceil((hi - lo) / step)) + 4
        if 2 * n_grid < t.size:
            t0 = lo - step
            grid = t0 + step * np.arange(n_grid)
            k, w = _cubic_weights((t - t0) / step)
            k = np.clip(k, 1, n_grid - 3)

            def interp(v):
                return w[0] * v[:, k - 1] + w[1] * v[:, k] + w[2] * v[:, k + 1] + w[3] * v[:, k + 2]

            if velocity:
                p, v = barycentric_state_au(kernel, target, w0, grid)
                return interp(p), interp(v)
            return interp(barycentric_au(kernel, target, w0, grid))
    if velocity:
        return barycentric_state_au(kernel, target, whole, fraction)
    return barycentric_au(kernel, target, whole, fraction)


def _dot(a, b):
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def _cross(a, b):
    return np.array([a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2],
                     a[0] * b[1] - a[1] * b[0]])


def _unit(v):
    return v / np.sqrt(_dot(v, v))


def deflect_and_aberrate(p, q, e_pos, e_vel, s_pos, deflect: bool = True) -> np.ndarray:
    """Apparent direction (unit vectors, ICRS axes) from the astrometric direction `p`.

    `q`: direction from the Sun to the body (= `p` for a star); `e_pos`, `e_vel`: Earth's
    barycentric position (AU) and velocity (AU/day); `s_pos`: the Sun's barycentric position.
    All shapes (3, ...) broadcast together. Light deflection by the Sun as IAU SOFA eraLd
    (eraLdsun for a star), then relativistic annual aberration as eraAb.
    """
    e = e_pos - s_pos
    em = np.sqrt(_dot(e, e))
    if deflect:
        e = e / em
        dlim = 1e-6 / np.maximum(em * em, 1.0)
        qdqpe = _dot(q, q + e)
        w = SUN_SCHWARZSCHILD_AU / em / np.maximum(qdqpe, dlim)
        p = p + w * _cross(p, _cross(e, q))
    v = e_vel / C_AU_PER_DAY
    bm1 = np.sqrt(1.0 - _dot(v, v))
    pdv = _dot(p, v)
    w1 = 1.0 + pdv / (1.0 + bm1)
    w2 = SUN_SCHWARZSCHILD_AU / em
    return _unit(p * bm1 + w1 * v + w2 * (v - pdv * p))


def solar_apparent(kernel, target: str, whole, fraction, e_pos, e_vel, s_pos):
    """(apparent unit vector (3, n), astrometric distance in AU (n,)) of a solar-system body.

    `whole`, `fraction`: TDB of each instant (JD in two parts); Earth and Sun as in
    :func:`deflect_and_aberrate`, one column per instant.
    """
    b, v = barycentric_state_au(kernel, target, whole, fraction)
    light_time_d = 0.0
    for _ in range(LIGHT_TIME_ITERATIONS):
        d = b - v * light_time_d - e_pos
        light_time_d = np.sqrt(_dot(d, d)) / C_AU_PER_DAY
    b = b - v * light_time_d
    d = b - e_pos
    dist = np.sqrt(_dot(d, d))
    p = d / dist
    is_sun = target == "sun"
    # q: from the Sun to the body (the Sun moves under 100 km during any planet's light-time).
    q = p if is_sun else _unit(b - s_pos)
    return deflect_and_aberrate(p, q, e_pos, e_vel, s_pos, deflect=not is_sun), dist


def star_apparent(pos_au, vel_au_per_d, dt_days, e_pos, e_vel, s_pos) -> np.ndarray:
    """Apparent unit vectors of catalogue stars: position `pos_au` + `vel_au_per_d` · `dt_days`
    (days since the catalogue epoch) seen from the Earth; shapes broadcast, (3, ...)."""
    p = _unit(pos_au + vel_au_per_d * dt_days - e_pos)
    return deflect_and_aberrate(p, p, e_pos, e_vel, s_pos)


def ra_dec_of_date(npb, xyz):
    """Rotate ICRS vectors (3, n) by matrices (3, 3, n) (one per column); RA, Dec in degrees."""
    x = npb[0, 0] * xyz[0] + npb[0, 1] * xyz[1] + npb[0, 2] * xyz[2]
    y = npb[1, 0] * xyz[0] + npb[1, 1] * xyz[1] + npb[1, 2] * xyz[2]
    z = npb[2, 0] * xyz[0] + npb[2, 1] * xyz[1] + npb[2, 2] * xyz[2]
    ra = norm360(np.degrees(np.arctan2(y, x)))
    dec = np.degrees(np.arctan2(z, np.hypot(x, y)))
    return ra, dec
