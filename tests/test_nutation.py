"""Nutation on a grid and the equation of the equinoxes, against the full series and ERFA.

References: skyfield's IAU 2000B series itself (``iau2000b_radians``, what the grid stands in
for) and ERFA ``eect00`` (IERS Conventions 2003 complementary terms, via pyerfa, test extra).
"""

import numpy as np
import skyfield.nutationlib as nutationlib

from nav.ephemeris import timescale
from nav.nutation import GRID_STEP_DAYS, eqeq_complementary_radians, gast_hours, nutation_radians
from nav.units import ARCSEC_DEG

ARCSEC_RAD = np.radians(ARCSEC_DEG)
MICROARCSEC_RAD = 1e-6 * ARCSEC_RAD


def _times(span_days: float, n: int, seed: int):
    rng = np.random.default_rng(seed)
    return timescale().tt_jd(np.sort(2_460_000.5 + rng.uniform(0.0, span_days, n)))


def test_grid_nutation_agrees_with_the_series():
    # Four years of instants, dense enough that the grid is used: within 1e-4" (2e-6') of
    # IAU 2000B evaluated at every instant. Observed max 4e-5".
    t = _times(4 * 365.25, 20_000, seed=11)
    assert 2 * (4 * 365.25 / GRID_STEP_DAYS) < 20_000      # the grid path is the one tested
    dpsi, deps = nutation_radians(t)
    ref_psi, ref_eps = nutationlib.iau2000b_radians(t)
    assert np.abs(dpsi - ref_psi).max() < 1e-4 * ARCSEC_RAD
    assert np.abs(deps - ref_eps).max() < 1e-4 * ARCSEC_RAD


def test_few_instants_use_the_series_itself():
    for t in (_times(3000.0, 50, seed=12), timescale().tt_jd(2_461_000.25)):
        dpsi, deps = nutation_radians(t)
        ref_psi, ref_eps = nutationlib.iau2000b_radians(t)
        assert np.all(dpsi == ref_psi) and np.all(deps == ref_eps)


def test_complementary_terms_against_erfa():
    # ERFA eect00: the full complementary terms; nav keeps the two leading ones. Observed max
    # 33 micro-arcseconds over 1900-2050.
    import erfa

    tt = np.linspace(2_415_020.5, 2_470_172.5, 3000)
    assert np.abs(eqeq_complementary_radians(tt) - erfa.eect00(tt, 0.0)).max() < 40 * MICROARCSEC_RAD
    scalar = eqeq_complementary_radians(2_451_545.0)
    assert np.ndim(scalar) == 0 and abs(scalar - erfa.eect00(2_451_545.0, 0.0)) < 40 * MICROARCSEC_RAD


def test_gast_against_erfa_with_the_same_nutation():
    # ERFA gst06 (IAU 2006/2000A sidereal time from a given nutation-precession matrix) with
    # skyfield's own matrix for the same instants: nav's GAST agrees to 1e-4" (the complementary
    # terms left out and the GMST expression). Observed max under 4e-5".
    import erfa

    t = _times(20 * 365.25, 200, seed=13)
    t._nutation_angles_radians = nutationlib.iau2000b_radians(t)
    ours_rad = gast_hours(t) / 24.0 * 2 * np.pi
    ref = erfa.gst06(t.whole, t.ut1_fraction, t.whole, t.tt_fraction, np.moveaxis(t.M, -1, 0))
    diff = np.remainder(ours_rad - ref + np.pi, 2 * np.pi) - np.pi
    assert np.abs(diff).max() < 1e-4 * ARCSEC_RAD
