"""The Earth's and the Sun's barycentric state on a grid, against skyfield's own evaluation of
DE421 at every instant (skyfield ``VectorSum.at``, the reference library for the file)."""

import numpy as np

from nav.apparent import AU_KM, dense_state_au
from nav.ephemeris import ephemeris, timescale

M_PER_AU = AU_KM * 1000.0


def _instants(n: int, days: float, seed: int):
    rng = np.random.default_rng(seed)
    return timescale().tdb_jd(np.sort(2_460_310.5 + rng.uniform(0.0, days, n)))


def test_earth_and_sun_on_a_grid_agree_with_skyfield():
    # Four years, dense enough that the grid is used; Earth within 1 m and 1 mm/s (observed
    # 0.2 m), the Sun within 1 cm. A metre at the Moon's distance is 0.0005".
    t = _instants(40_000, 4 * 365.25, seed=5)
    kernel = ephemeris()
    pos, vel = dense_state_au(kernel, "earth", t.whole, t.tdb_fraction)
    ref = kernel["earth"].at(t)
    assert np.abs(pos - ref.position.au).max() * M_PER_AU < 1.0
    assert np.abs(vel - ref.velocity.au_per_d).max() * M_PER_AU / 86400.0 < 1e-3
    sun = dense_state_au(kernel, "sun", t.whole, t.tdb_fraction, velocity=False)
    assert np.abs(sun - kernel["sun"].at(t).position.au).max() * M_PER_AU < 0.01


def test_few_instants_are_evaluated_directly():
    t = _instants(30, 4 * 365.25, seed=6)
    kernel = ephemeris()
    pos, _ = dense_state_au(kernel, "earth", t.whole, t.tdb_fraction)
    # the same file and formula at every instant: equal to float rounding (under a millimetre)
    assert np.abs(pos - kernel["earth"].at(t).position.au).max() * M_PER_AU < 1e-3
