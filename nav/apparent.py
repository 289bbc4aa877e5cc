"""Apparent geocentric places for many (body, instant) pairs: the arithmetic behind the almanac.

Everything here works on plain numpy arrays with the instants on the last axis, so that the
almanac (k bodies × n instants) and the reduction (one body and one instant per sight) share it:

- Solar-system bodies: barycentric positions straight from the DE421 segments (jplephem, position
  only), light-time by :data:`LIGHT_TIME_ITERATIONS` fixed-point step from the geometric
  distance: the light-time left over is under lt·v/c (0.5 s for Jupiter, 0.02 s for Mars at
  opposition), which moves a planet under 7 km, 0.002″ as seen from the Earth — measured against
  ERFA: every body within 0.00004′ of astropy, as with full iteration. Then the same light
  deflection by the Sun (IAU SOFA eraLd) and relativistic annual aberration (eraAb) as the stars.
  Deflection by Jupiter and Saturn (under 0.02″ even at their limbs) is left out.
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
LIGHT_TIME_ITERATIONS = 1

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
    b = barycentric_au(kernel, target, whole, fraction)
    for _ in range(LIGHT_TIME_ITERATIONS):
        d = b - e_pos
        light_time_d = np.sqrt(_dot(d, d)) / C_AU_PER_DAY
        b = barycentric_au(kernel, target, whole, fraction - light_time_d)
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
