"""Nutation and sidereal time for many instants, with only the work their accuracy needs.

- Nutation is IAU 2000B (skyfield's ``iau2000b_radians``, looked up by name at each call so that a
  test can swap the model). For many instants it is evaluated on a grid of
  :data:`GRID_STEP_DAYS` in TT and interpolated by four-point (cubic) Lagrange interpolation: the
  error of that is about 0.023·h⁴·f⁗, and the series' largest fourth derivative (the 13.66-day
  term, 0.23″, and the 9.13- and 5.6-day terms) is near 0.01″/day⁴, so about 1.5e-5″ at
  h = 0.5 day — measured under 1e-4″ (2e-6′) in ``tests/test_nutation.py`` against the series
  itself. With few instants, or instants spread over more grid points than there are instants,
  the series is evaluated directly.
- GAST = GMST (skyfield's IAU 2006 expression on the Earth rotation angle) + the equation of the
  equinoxes: Δψ·cos ε_A plus the two leading complementary terms (2640.96 µas·sin Ω and
  63.52 µas·sin 2Ω, IERS Conventions 2010 Table 5.2e); the terms left out sum to under 40 µas
  (7e-7′). The test checks them against ERFA's ``eect00``.
"""

from __future__ import annotations

import numpy as np

GRID_STEP_DAYS = 0.5
ASEC_TO_RAD = np.pi / (180.0 * 3600.0)
J2000_TT_JD = 2_451_545.0


def _series(time):
    import skyfield.nutationlib as nutationlib   # attribute lookup at call time (see above)

    return nutationlib.iau2000b_radians(time)


def nutation_radians(time):
    """(Δψ, Δε) in radians at a skyfield ``Time`` (scalar or array), IAU 2000B."""
    tt = np.asarray(time.tt, dtype=float)
    if tt.ndim == 0 or tt.size < 64:
        return _series(time)
    lo, hi = float(tt.min()), float(tt.max())
    n_grid = int(np.ceil((hi - lo) / GRID_STEP_DAYS)) + 4
    if 2 * n_grid >= tt.size:
        return _series(time)
    t0 = lo - GRID_STEP_DAYS                      # one grid point before the first instant
    grid = time.ts.tt_jd(t0 + GRID_STEP_DAYS * np.arange(n_grid))
    dpsi, deps = _series(grid)
    x = (tt - t0) / GRID_STEP_DAYS
    k = np.clip(np.floor(x).astype(int), 1, n_grid - 3)
    u = x - k
    # four-point Lagrange weights for the grid points k-1, k, k+1, k+2
    w = ((-u * (u - 1.0) * (u - 2.0) / 6.0), ((u + 1.0) * (u - 1.0) * (u - 2.0) / 2.0),
         (-(u + 1.0) * u * (u - 2.0) / 2.0), ((u + 1.0) * u * (u - 1.0) / 6.0))

    def interp(v):
        return w[0] * v[k - 1] + w[1] * v[k] + w[2] * v[k + 1] + w[3] * v[k + 2]

    return interp(dpsi), interp(deps)


def eqeq_complementary_radians(tt_jd):
    """The leading complementary terms of the equation of the equinoxes, radians."""
    t = (np.asarray(tt_jd, dtype=float) - J2000_TT_JD) / 36525.0
    # Mean longitude of the Moon's ascending node, Ω (IERS Conventions 2003, eq. 5.43).
    om = np.radians(np.remainder((450_160.398036 - 6_962_890.5431 * t) / 3600.0, 360.0))
    return (2640.96e-6 * np.sin(om) + 63.52e-6 * np.sin(2.0 * om)) * ASEC_TO_RAD


def gast_hours(time):
    """Greenwich apparent sidereal time in hours, [0, 24), from the nutation set on `time`."""
    from skyfield.earthlib import sidereal_time

    dpsi, _ = time._nutation_angles_radians
    eqeq = dpsi * np.cos(time._mean_obliquity_radians) + eqeq_complementary_radians(time.tt)
    return np.remainder(sidereal_time(time) + eqeq / (2.0 * np.pi) * 24.0, 24.0)
