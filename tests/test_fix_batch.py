"""Many independent fixes at once (nav.fix.solve_fixes, nav/fixsolve.py), and one fix of many
sights in memory linear in their number.

References:
- geographiclib (PyPI 2.x) ``Geodesic`` on the navigator's sphere (R = 10800/π nmi, f = 0): a
  body at altitude Ho and azimuth Zn from an observer has its geographical position (lat = Dec,
  lon = −GHA) at the arc (90° − Ho) along the geodesic of initial azimuth Zn. Every noise-free
  sight below is built that way, so the true position is known independently of nav.
- The angle of cut of two lines with azimuths Z1, Z2 is arcsin |sin(Z1 − Z2)| (plane geometry,
  common practice, no source); the widest cut of a set is the largest over all pairs, written
  out here pair by pair.
- solve_fix (tests/test_fix.py checks it against geographiclib and a Monte Carlo of the
  ellipse's coverage): solve_fixes must give the same fixes, ellipses and flags.
"""

from __future__ import annotations

import tracemalloc
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from nav.errors import NavInputError
from nav.fix import MAX_FIX_SIGHTS, Sight, solve_fix, solve_fixes
from nav.fixsolve import PARALLEL, widest_cut_deg
from nav.units import ARCMIN_DEG, EARTH_RADIUS_NMI, NMI_PER_DEG

SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)
NMI = 1.0                                   # distances are carried in nautical miles
T0 = datetime(2026, 9, 14, 18, 5, tzinfo=timezone.utc)   # evening twilight, invented passage


def sep_nmi(lat1, lon1, lat2, lon2):
    return SPHERE.Inverse(float(lat1), float(lon1), float(lat2), float(lon2))["s12"]


def sights_from(lat, lon, zn_deg, ho_deg):
    """(gha, dec) of bodies placed by geographiclib at (Zn, Ho) from the observer."""
    gha, dec = [], []
    for z, h in zip(zn_deg, ho_deg):
        d = SPHERE.Direct(float(lat), float(lon), float(z), (90.0 - float(h)) * NMI_PER_DEG)
        gha.append((-d["lon2"]) % 360.0)
        dec.append(d["lat2"])
    return gha, dec


def batch(n_fix, k, seed, noise_arcmin=0.0):
    rng = np.random.default_rng(seed)
    lat = rng.uniform(-65, 65, n_fix)
    lon = rng.uniform(-180, 180, n_fix)
    ho = rng.uniform(15, 75, (n_fix, k))
    # azimuths spread round the horizon (each sight within ±40° of its share of the circle)
    zn = (np.arange(k) * 360.0 / k + rng.uniform(-40, 40, (n_fix, k)) + rng.uniform(0, 360, (n_fix, 1))) % 360
    gha, dec = np.empty((n_fix, k)), np.empty((n_fix, k))
    for i in range(n_fix):
        gha[i], dec[i] = sights_from(lat[i], lon[i], zn[i], ho[i])
    ho = ho + rng.normal(0.0, 1.0, ho.shape) * noise_arcmin * ARCMIN_DEG
    dr_lat = lat + rng.uniform(-0.4, 0.4, n_fix)            # DR up to some 25 nmi off
    dr_lon = lon + rng.uniform(-0.4, 0.4, n_fix)
    return ho, gha, dec, dr_lat, dr_lon, lat, lon


@pytest.mark.parametrize("k", [2, 3, 5])
def test_noise_free_sights_reduce_to_the_true_positions(k):
    ho, gha, dec, dr_lat, dr_lon, lat, lon = batch(40, k, seed=k)
    f = solve_fixes(ho, gha, dec, dr_lat, dr_lon)
    assert f.lat_deg.shape == (40,) and f.converged.all()
    for i in range(40):
        assert sep_nmi(f.lat_deg[i], f.lon_deg[i], lat[i], lon[i]) < 0.01 * NMI
    assert np.all(np.abs(f.residuals_nmi) < 0.01 * NMI)
    assert np.all(f.semi_major_nmi >= f.semi_minor_nmi) and np.all(f.semi_minor_nmi > 0)
    assert np.all((f.orientation_deg >= 0) & (f.orientation_deg < 180))


@pytest.mark.parametrize("k", [2, 3, 4, 6])
def test_solve_fixes_equals_solve_fix(k):
    ho, gha, dec, dr_lat, dr_lon, _, _ = batch(25, k, seed=100 + k, noise_arcmin=1.0)
    ho[3, 0] += 8.0 * ARCMIN_DEG                            # one misread of 8′
    sigma = np.where(np.arange(k) % 2, 1.0, 0.7) * np.ones((25, 1))
    f = solve_fixes(ho, gha, dec, dr_lat, dr_lon, sigma)
    for i in range(25):
        one = solve_fix([Sight(float(ho[i, j]), float(gha[i, j]), float(dec[i, j]), T0, "star",
                               sigma_arcmin=float(sigma[i, j])) for j in range(k)],
                        float(dr_lat[i]), float(dr_lon[i]))
        assert sep_nmi(f.lat_deg[i], f.lon_deg[i], one.lat_deg, one.lon_deg) < 1e-9 * NMI
        e = one.ellipse
        assert f.semi_major_nmi[i] == pytest.approx(e.semi_major_nmi, rel=1e-9)
        assert f.semi_minor_nmi[i] == pytest.approx(e.semi_minor_nmi, rel=1e-9)
        d = abs(f.orientation_deg[i] - e.orientation_deg)
        assert min(d, 180.0 - d) < 1e-6
        assert bool(f.converged[i]) == one.converged and f.iterations[i] == one.iterations
        assert tuple(f.flags[i]) == one.flags
        assert f.cut_angle_deg[i] == pytest.approx(one.cut_angle_deg, abs=1e-9)
        assert f.azimuth_spread_deg[i] == pytest.approx(one.azimuth_spread_deg, abs=1e-9)
        for t, u in zip(f.normalised_residuals[i], one.normalised_residuals):
            assert (u is None and np.isnan(t)) or t == pytest.approx(u, abs=1e-9)
    if k >= 4:
        assert f.flags[3, 0] and f.n_flagged[3] >= 1


def test_one_fix_as_a_vector_and_a_parallel_fix_in_a_batch():
    ho, gha, dec, dr_lat, dr_lon, lat, lon = batch(3, 3, seed=7)
    one = solve_fixes(ho[0], gha[0], dec[0], dr_lat[:1], dr_lon[:1])        # (k,) and (1,)
    assert one.lat_deg.shape == (1,)
    assert sep_nmi(one.lat_deg[0], one.lon_deg[0], lat[0], lon[0]) < 0.01 * NMI
    # Fix 2: the same sight three times: three parallel lines, no fix (common practice).
    gha[1], dec[1], ho[1] = gha[1, 0], dec[1, 0], ho[1, 0]
    f = solve_fixes(ho, gha, dec, dr_lat, dr_lon)
    assert f.failure[1] == PARALLEL and np.isnan(f.lat_deg[1]) and not f.converged[1]
    for i in (0, 2):
        assert sep_nmi(f.lat_deg[i], f.lon_deg[i], lat[i], lon[i]) < 0.01 * NMI


def test_solve_fixes_refuses_bad_input_naming_field_and_fix():
    ho, gha, dec, dr_lat, dr_lon, _, _ = batch(4, 3, seed=9)
    with pytest.raises(NavInputError) as err:
        solve_fixes(ho[:, :1], gha[:, :1], dec[:, :1], dr_lat, dr_lon)
    assert err.value.field == "ho_deg"
    bad = ho.copy()
    bad[2, 1] = 95.0
    with pytest.raises(NavInputError) as err:
        solve_fixes(bad, gha, dec, dr_lat, dr_lon)
    assert err.value.field == "ho_deg" and err.value.row == 3
    with pytest.raises(NavInputError) as err:
        solve_fixes(ho, gha, dec, dr_lat[:3], dr_lon)
    assert err.value.field == "dr_lat_deg"
    with pytest.raises(NavInputError) as err:
        solve_fixes(ho, gha, dec, dr_lat, dr_lon, sigma_arcmin=0.0)
    assert err.value.field == "sigma_arcmin"


def test_widest_cut_against_every_pair():
    rng = np.random.default_rng(3)
    for k in (2, 3, 7, 40):
        zn = rng.uniform(0, 360, (30, k))
        zn[0] = 123.0                                       # all on one bearing: cut 0
        pair = np.degrees(np.arcsin(np.abs(np.sin(np.radians(zn[:, :, None] - zn[:, None, :])))))
        assert np.allclose(widest_cut_deg(zn), pair.max(axis=(1, 2)), atol=1e-9)
    assert widest_cut_deg(np.array([350.0, 20.0])) == pytest.approx(30.0, abs=1e-9)


def _peak_bytes(n):
    rng = np.random.default_rng(n)
    ho = rng.uniform(20, 70, n)
    zn = rng.uniform(0, 360, n)
    lat, lon = 41.0, -29.5
    # the bodies' GP from the spherical triangle (own code; the memory is what is tested here)
    d, p1, a = np.radians(90 - ho), np.radians(lat), np.radians(zn)
    p2 = np.arcsin(np.sin(p1) * np.cos(d) + np.cos(p1) * np.sin(d) * np.cos(a))
    dl = np.arctan2(np.sin(a) * np.sin(d) * np.cos(p1), np.cos(d) - np.sin(p1) * np.sin(p2))
    sights = [Sight(float(h), float((-(lon + np.degrees(x))) % 360), float(np.degrees(y)),
                    T0 - timedelta(seconds=i), "star")
              for i, (h, x, y) in enumerate(zip(ho, dl, p2))]
    tracemalloc.start()
    fix = solve_fix(sights, lat + 0.1, lon)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert sep_nmi(fix.lat_deg, fix.lon_deg, lat, lon) < 0.01 * NMI
    return peak


def test_one_fix_memory_grows_linearly_with_the_sights():
    # Ten times the sights: linear memory grows about 10×, an n × n table 100×.
    small, large = _peak_bytes(500), _peak_bytes(5000)
    assert large / small < 20
    assert MAX_FIX_SIGHTS == 200_000


def test_lops_at_gives_the_lops_of_lop_at():
    from nav.fix import lop_at, lops_at
    ho, gha, dec, dr_lat, dr_lon, _, _ = batch(1, 4, seed=21)
    sights = [Sight(float(ho[0, j]), float(gha[0, j]), float(dec[0, j]), T0 - timedelta(hours=j),
                    "star", course_deg=200.0 + 10 * j, speed_kn=float(j), set_deg=90.0,
                    drift_kn=0.5 * (j % 2)) for j in range(4)]
    lats, lons = dr_lat[0] + np.arange(4) * 0.1, np.full(4, dr_lon[0])
    many = lops_at(sights, lats, lons, T0)
    for s, la, lo, lp in zip(sights, lats, lons, many):
        one = lop_at(s, float(la), float(lo), T0)
        for name in ("ap_lat_deg", "ap_lon_deg", "zn_deg", "intercept_nmi", "advanced_nmi",
                     "advanced_course_deg"):
            assert getattr(lp, name) == pytest.approx(getattr(one, name), abs=1e-9), name
        assert lp.label == one.label and lp.fix_utc == one.fix_utc
