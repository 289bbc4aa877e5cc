"""Lines of position, the least-squares fix, the error ellipse, the running fix (nav/fix.py).

References:
- geographiclib (PyPI 2.x) ``Geodesic`` on the navigator's sphere (R = 10800/π nmi, f = 0): the
  zenith distance of a body is the arc from the observer to its geographical position (GP: lat =
  Dec, lon = −GHA) and Zn is the geodesic's initial azimuth. Every "true" Hc below comes from it.
- nav.almanac for GHA and Dec of real bodies (tested on its own against ERFA and others).
- Textbook Mercator sailing, written out again here (meridional parts 7915.7045′·log10 tan(45° +
  φ/2), from memory) to place the observer along the vessel's track for running fixes.
- The two-circle intersection of spherical geometry and the χ² law of a 2-D normal error
  (√χ²₂(0.95) = √5.991 = 2.4477, standard table): common practice, no source.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from nav import almanac
from nav.errors import NavInputError
from nav.reduction import hc_zn
from nav.fix import (LOP, Sight, azimuth_spread_deg, chi2_2d_scale, cut_angle_deg,
                     distance_to_lop, in_ellipse, lop_at, solve_fix, two_lop_intersection)
from nav.units import ARCMIN_DEG, ARCSEC_DEG, EARTH_RADIUS_NMI

ARCMIN = ARCMIN_DEG
ARCSEC = ARCSEC_DEG
NMI = 1.0                                   # distances are carried in nautical miles
SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)
UTC = timezone.utc

T0 = datetime(2026, 3, 20, 5, 30, tzinfo=UTC)     # morning twilight, North Atlantic
TRUTH = (35.2, -40.7)
STARS6 = ["Arcturus", "Vega", "Altair", "Deneb", "Spica", "Antares"]


def sep_nmi(lat1, lon1, lat2, lon2):
    return SPHERE.Inverse(float(lat1), float(lon1), float(lat2), float(lon2))["s12"]


def truehc_zn(lat, lon, gha, dec):
    inv = SPHERE.Inverse(float(lat), float(lon), float(dec), float(-gha))
    return 90.0 - inv["a12"], inv["azi1"] % 360.0


def sights_at(lat, lon, bodies, utc, *, offsets_arcmin=None, sigma=1.0, **motion):
    """Noise-free (or offset) sights of real bodies: Ho = Hc at the observer from geographiclib."""
    out = []
    for k, b in enumerate(almanac.almanac(bodies, utc)):
        hc, _ = truehc_zn(lat, lon, b.gha_deg, b.dec_deg)
        e = 0.0 if offsets_arcmin is None else offsets_arcmin[k]
        out.append(Sight(hc + e * ARCMIN, float(b.gha_deg), float(b.dec_deg), utc, b.body,
                         sigma_arcmin=sigma, **motion))
    return out


def gp_sight(lat, lon, zn_deg, ho_deg, utc=T0, **kw):
    """A sight of a body placed (by geographiclib) at azimuth Zn and altitude Ho from (lat, lon)."""
    d = SPHERE.Direct(lat, lon, zn_deg, (90.0 - ho_deg) * 60.0)
    return Sight(ho_deg, (-d["lon2"]) % 360.0, d["lat2"], utc, "star", **kw)


def textbook_mercator(lat, lon, course_deg, dist_nmi):
    """Mercator sailing as in the textbooks (own code): d_lat, then d_lon = DMP · tan C."""
    c = math.radians(course_deg)
    lat2 = lat + dist_nmi * math.cos(c) / 60.0
    if abs(math.cos(c)) < 1e-12:
        dlon = dist_nmi * math.sin(c) / (60.0 * math.cos(math.radians(lat)))
    else:
        mp = lambda p: 7915.7045 * math.log10(math.tan(math.radians(45.0 + p / 2.0)))  # noqa: E731
        dlon = (mp(lat2) - mp(lat)) * math.tan(c) / 60.0
    return lat2, (lon + dlon + 180.0) % 360.0 - 180.0


# ---------------------------------------------------------------- the triangle (nav.reduction.hc_zn, as the fix uses it)

def test_hc_zn_scalar_and_array_against_geographiclib():
    rng = np.random.default_rng(11)
    lat = rng.uniform(-80, 80, 300)
    dec = rng.uniform(-60, 60, 300)
    gha = rng.uniform(0, 360, 300)
    lon = rng.uniform(-180, 180, 300)
    hc, zn = hc_zn(lat, dec, gha + lon)
    assert hc.shape == (300,)
    for i in range(300):
        h_ref, z_ref = truehc_zn(lat[i], lon[i], gha[i], dec[i])
        assert abs(hc[i] - h_ref) < 1e-6 * ARCSEC
        if h_ref < 89.99:
            assert abs((zn[i] - z_ref + 180) % 360 - 180) < 1e-6 * ARCSEC
    h1, z1 = hc_zn(35.2, 12.0, 300.0)
    h_ref, z_ref = truehc_zn(35.2, 0.0, 300.0, 12.0)
    assert isinstance(h1, float) and abs(h1 - h_ref) < 1e-6 * ARCSEC
    assert abs(z1 - z_ref) < 1e-6 * ARCSEC


def test_hc_near_zenith_is_exact():
    # 0.1′ from the zenith the arcsine form loses digits; the atan2 form must not (geographiclib).
    lat, lon = 21.0, -40.0
    hc, _ = hc_zn(lat, lat + 0.1 * ARCMIN, 0.0)          # on the meridian: LHA = 0
    h_ref, _ = truehc_zn(lat, lon, -lon, lat + 0.1 * ARCMIN)
    assert abs(hc - h_ref) < 1e-6 * ARCSEC


# ---------------------------------------------------------------- one LOP

def test_lop_from_the_truth_passes_through_it():
    for s in sights_at(*TRUTH, ["Vega", "Spica"], T0):
        lop = lop_at(s, *TRUTH)
        assert abs(lop.intercept_nmi) < 1e-9 * NMI
        assert abs(distance_to_lop(lop, *TRUTH)) < 1e-9 * NMI


def test_lop_from_a_nearby_ap_passes_close_to_the_truth():
    # A straight LOP departs from the circle by about d²·cot(z)/(2R) at d nmi from its foot
    # (geometry of a small circle, common practice); from an AP ≤ 5 nmi away that is < 0.01 nmi.
    s = sights_at(*TRUTH, ["Vega"], T0)[0]
    lats = TRUTH[0] + np.array([0.05, -0.07, 0.02])
    lons = TRUTH[1] + np.array([0.04, 0.03, -0.08])
    for la, lo in zip(lats, lons):
        lop = lop_at(s, la, lo)
        d = distance_to_lop(lop, np.array([TRUTH[0]]), np.array([TRUTH[1]]))   # array form
        assert d.shape == (1,) and abs(d[0]) < 0.01 * NMI
    # The intercept equals the distance the AP lies off the circle (geographiclib): Ho - Hc.
    hc_ref, _ = truehc_zn(lats[0], lons[0], s.gha_deg, s.dec_deg)
    assert abs(lop_at(s, lats[0], lons[0]).intercept_nmi - (s.ho_deg - hc_ref) * 60) < 1e-6 * NMI


def test_advanced_lop_is_moved_by_the_run():
    t_sight = T0
    t_fix = T0 + timedelta(hours=2)
    obs = TRUTH
    truth_fix = textbook_mercator(*obs, 90.0, 12.0)              # 2 h at 6 kn due east
    s = sights_at(*obs, ["Vega"], t_sight, course_deg=90.0, speed_kn=6.0)[0]
    plain = lop_at(s, *obs)
    adv = lop_at(s, *obs, fix_utc=t_fix)
    assert adv.zn_deg == plain.zn_deg and adv.intercept_nmi == plain.intercept_nmi
    assert abs(adv.advanced_nmi - 12.0) < 1e-12 and adv.advanced_course_deg == 90.0
    assert sep_nmi(adv.ap_lat_deg, adv.ap_lon_deg, *truth_fix) < 1e-6 * NMI
    assert abs(distance_to_lop(adv, *truth_fix)) < 1e-6 * NMI
    back = lop_at(s, *obs, fix_utc=t_sight - timedelta(hours=1))     # retired
    assert abs(back.advanced_nmi - 6.0) < 1e-12 and back.advanced_course_deg == 270.0


# ---------------------------------------------------------------- two LOPs on the plotting sheet

def _lop(lat, lon, zn, a):
    return LOP(utc=T0, fix_utc=T0, body="star", label="", ap_lat_deg=lat, ap_lon_deg=lon,
               zn_deg=zn, intercept_nmi=a, hc_deg=0.0, ho_deg=0.0)


def test_two_lop_intersection_analytic_crossings():
    # Zn 000 and 090 from one AP: the crossing is a1 north and a2 east (plane geometry).
    lat, lon, cut = two_lop_intersection(_lop(40.0, -30.0, 0.0, 4.0), _lop(40.0, -30.0, 90.0, -3.0))
    assert abs(lat - (40.0 + 4.0 / 60)) < 1e-9 * ARCSEC
    assert abs(lon - (-30.0 - 3.0 / (60 * math.cos(math.radians(40.0))))) < 1e-9 * ARCSEC
    assert cut == 90.0
    # Zn 045 and 135, both intercepts a: the crossing lies a√2 due east (plane geometry).
    lat, lon, cut = two_lop_intersection(_lop(0.0, 0.0, 45.0, 5.0), _lop(0.0, 0.0, 135.0, 5.0))
    assert abs(lat) < 1e-9 * ARCSEC and abs(lon - 5.0 * math.sqrt(2) / 60) < 1e-9 * ARCSEC
    # Array form, and the cut angle folded into [0, 90].
    la = _lop(np.array([10.0, 10.0]), np.array([5.0, 5.0]), np.array([10.0, 0.0]), np.zeros(2))
    lb = _lop(np.array([10.0, 10.0]), np.array([5.0, 5.0]), np.array([200.0, 120.0]), np.zeros(2))
    lat, lon, cut = two_lop_intersection(la, lb)
    assert np.allclose(cut, [10.0, 60.0], atol=1e-9) and np.allclose(lat, 10.0, atol=1e-12)


def test_two_lop_intersection_near_truth_and_parallel_refused():
    s1, s2 = sights_at(*TRUTH, ["Vega", "Spica"], T0)
    ap = (TRUTH[0] + 0.03, TRUTH[1] - 0.04)
    lat, lon, cut = two_lop_intersection(lop_at(s1, *ap), lop_at(s2, *ap))
    assert sep_nmi(lat, lon, *TRUTH) < 0.01 * NMI and 0.0 <= cut <= 90.0
    with pytest.raises(NavInputError):
        two_lop_intersection(_lop(10, 5, 30.0, 1.0), _lop(10, 5, 210.0, 2.0))


def test_cut_angle_and_azimuth_spread():
    assert cut_angle_deg(350.0, 20.0) == pytest.approx(30.0, abs=1e-12)   # plane geometry
    assert np.allclose(cut_angle_deg(np.array([0.0, 90.0]), np.array([180.0, 135.0])),
                       [0.0, 45.0], atol=1e-9)
    assert azimuth_spread_deg([350.0, 10.0, 20.0]) == pytest.approx(30.0)
    assert azimuth_spread_deg([0.0, 120.0, 240.0]) == pytest.approx(240.0)


# ---------------------------------------------------------------- the least-squares fix

def test_fix_independent_of_the_dr():
    sights = sights_at(*TRUTH, STARS6[:4], T0)
    near = solve_fix(sights, TRUTH[0] + 1 / 60, TRUTH[1])                 # DR 1 nmi off
    far = solve_fix(sights, TRUTH[0] - 0.8, TRUTH[1] + 0.9)               # DR ~ 65 nmi off
    assert sep_nmi(TRUTH[0] - 0.8, TRUTH[1] + 0.9, *TRUTH) > 60 * NMI
    for f in (near, far):
        assert f.converged and f.kind == "fix" and f.n_sights == 4
        assert sep_nmi(f.lat_deg, f.lon_deg, *TRUTH) < 0.01 * NMI
        assert max(abs(r) for r in f.residuals_nmi) < 0.01 * NMI
        assert f.flags == (False,) * 4 and f.warnings == ()
    assert sep_nmi(near.lat_deg, near.lon_deg, far.lat_deg, far.lon_deg) < 0.01 * NMI
    assert far.iterations > near.iterations


def test_fix_across_the_date_line():
    truth = (-17.0, 179.98)
    sights = sights_at(*truth, ["Sun", "Moon", "Jupiter"], datetime(2026, 6, 21, 4, 0, tzinfo=UTC))
    assert all(s.ho_deg > 10 for s in sights)
    f = solve_fix(sights, -17.2, -179.7)                     # DR on the other side of 180°
    assert -180.0 <= f.lon_deg < 180.0
    assert sep_nmi(f.lat_deg, f.lon_deg, *truth) < 0.01 * NMI


def test_running_fix_one_body_sun_morning_to_noon():
    # Vessel on 250° at 7 kn; Sun sights at 09:00 and 13:00 UTC, fix at 13:00 (the later sight).
    t_fix = datetime(2026, 6, 21, 13, 0, tzinfo=UTC)
    truth = (38.0, -30.0)
    course, speed = 250.0, 7.0
    sights = []
    for hours_before in (4.0, 0.0):
        t = t_fix - timedelta(hours=hours_before)
        obs = textbook_mercator(*truth, course, -speed * hours_before)   # retired along the track
        sights += sights_at(*obs, ["Sun"], t, course_deg=course, speed_kn=speed)
    f = solve_fix(sights, truth[0] + 0.3, truth[1] - 0.4)
    assert f.kind == "running fix" and f.utc == t_fix
    assert sep_nmi(f.lat_deg, f.lon_deg, *truth) < 0.01 * NMI
    assert any("only two LOPs" in w for w in f.warnings)


def test_a_long_running_fix_says_the_ellipse_cannot_show_the_run():
    # Sun at 08:00 and 17:00 UTC (9 h of run) against Sun at 13:00 and 17:00 (4 h), west of
    # the Azores in June: only the long run is warned about (nav.fix.LONG_RUN_H, common practice, no source:
    # a Sun-run-Sun running fix spans about 3 to 4 h).
    truth = (38.0, -30.0)
    course, speed = 250.0, 7.0

    def run(hours):
        t_fix = datetime(2026, 6, 21, 17, 0, tzinfo=UTC)
        sights = []
        for hours_before, body in ((hours, "Sun"), (0.0, "Sun")):
            t = t_fix - timedelta(hours=hours_before)
            obs = textbook_mercator(*truth, course, -speed * hours_before)
            sights += sights_at(*obs, [body], t, course_deg=course, speed_kn=speed)
        return solve_fix(sights, truth[0] + 0.3, truth[1] - 0.4)

    assert not any("running fix over" in w for w in run(4.0).warnings)
    long_fix = run(9.0)
    assert long_fix.kind == "running fix"
    assert any(w.startswith("running fix over 9 h") and "ellipse cannot show" in w
               for w in long_fix.warnings)


def test_running_fix_mixed_bodies_with_current():
    # Each sight carries its own run to the fix time; a current sets 160° at 1.2 kn.
    t_fix = datetime(2026, 6, 21, 18, 0, tzinfo=UTC)
    truth = (-33.5, 17.2)
    course, speed, set_, drift = 300.0, 6.0, 160.0, 1.2
    vn = speed * math.cos(math.radians(course)) + drift * math.cos(math.radians(set_))
    ve = speed * math.sin(math.radians(course)) + drift * math.sin(math.radians(set_))
    cmg, smg = math.degrees(math.atan2(ve, vn)) % 360, math.hypot(vn, ve)   # vector sum
    plan = [("Sun", 12.0), ("Sun", 14.5), ("Moon", 15.0), ("Venus", 16.0),
            ("Rigil Kentaurus", 17.0), ("Antares", 17.25)]
    sights = []
    for body, hour in plan:
        t = datetime(2026, 6, 21, int(hour), int(round((hour % 1) * 60)), tzinfo=UTC)
        obs = textbook_mercator(*truth, cmg, -smg * (t_fix - t).total_seconds() / 3600)
        sights += sights_at(*obs, [body], t, course_deg=course, speed_kn=speed, set_deg=set_,
                            drift_kn=drift)
    assert all(s.ho_deg > 5 for s in sights)
    f = solve_fix(sights, truth[0] + 0.5, truth[1] + 0.5, fix_utc=t_fix)
    assert f.kind == "running fix" and f.converged
    assert sep_nmi(f.lat_deg, f.lon_deg, *truth) < 0.01 * NMI
    assert max(abs(r) for r in f.residuals_nmi) < 0.01 * NMI


def _circle_intersections(g1, z1, g2, z2):
    """Both crossings of two small circles (spherical geometry): centres g (lat, lon), radii z."""
    def unit(lat, lon):
        la, lo = math.radians(lat), math.radians(lon)
        return np.array([math.cos(la) * math.cos(lo), math.cos(la) * math.sin(lo), math.sin(la)])
    u1, u2 = unit(*g1), unit(*g2)
    c1, c2, gam = math.cos(math.radians(z1)), math.cos(math.radians(z2)), float(u1 @ u2)
    a = (c1 - c2 * gam) / (1 - gam ** 2)
    b = (c2 - c1 * gam) / (1 - gam ** 2)
    n = np.cross(u1, u2)
    t = math.sqrt((1 - (a * a + b * b + 2 * a * b * gam)) / (n @ n))
    out = []
    for sgn in (1, -1):
        x = a * u1 + b * u2 + sgn * t * n
        out.append((math.degrees(math.asin(x[2])), math.degrees(math.atan2(x[1], x[0]))))
    return out


def test_near_zenith_sights_meet_as_circles():
    # The Sun 12 min either side of noon at 21° N in June stands about 86–87° high: two small
    # circles. With Ho offsets of +0.7′ and −1.2′ the fix is their analytic crossing.
    truth = (21.0, -40.0)
    noon = almanac.meridian_passage("Sun", truth[1], datetime(2026, 6, 21, 14, 40, tzinfo=UTC))
    sights = []
    for dt_min, off in ((-12, 0.7), (12, -1.2)):
        sights += sights_at(*truth, ["Sun"], noon + timedelta(minutes=dt_min), offsets_arcmin=[off])
    assert all(s.ho_deg > 85.0 for s in sights)
    cross = _circle_intersections((sights[0].dec_deg, -sights[0].gha_deg), 90 - sights[0].ho_deg,
                                  (sights[1].dec_deg, -sights[1].gha_deg), 90 - sights[1].ho_deg)
    expected = min(cross, key=lambda p: sep_nmi(*p, *truth))
    for dr in ((truth[0] + 0.02, truth[1]), (truth[0] - 0.3, truth[1] + 0.4)):   # 1 and 30 nmi
        f = solve_fix(sights, *dr)
        assert f.converged and sep_nmi(f.lat_deg, f.lon_deg, *expected) < 0.01 * NMI
        assert any("above 80°" in w for w in f.warnings)
    # One straight-line step from the far DR is well off: iteration is what makes circles.
    one = solve_fix(sights, truth[0] - 0.3, truth[1] + 0.4, max_iter=1)
    assert not one.converged and sep_nmi(one.lat_deg, one.lon_deg, *expected) > 0.5 * NMI
    assert any("did not converge" in w for w in one.warnings)


# ---------------------------------------------------------------- the error ellipse

def test_chi2_scale():
    assert abs(chi2_2d_scale(0.95) - 2.4477) < 1e-4       # √5.991, standard χ² table
    assert abs(chi2_2d_scale(1 - math.exp(-0.5)) - 1.0) < 1e-12   # 1σ contour of a 2-D normal
    with pytest.raises(NavInputError):
        chi2_2d_scale(1.0)


def test_ellipse_of_two_lops_analytic():
    # Two LOPs with σ = 1′ and Zn = 090 ± 10°: the normal matrix is diag(2cos²10°, 2sin²10°)
    # (east, north), so the 95 % semi-axes are 2.4477/(√2 sin 10°) north-south and
    # 2.4477/(√2 cos 10°) east-west (2-D normal law; common practice, no source).
    lat, lon = 10.0, -20.0
    f = solve_fix([gp_sight(lat, lon, 80.0, 45.0), gp_sight(lat, lon, 100.0, 45.0)], lat, lon)
    k = 2.4477
    s10, c10 = math.sin(math.radians(10)), math.cos(math.radians(10))
    assert abs(f.ellipse.semi_major_nmi - k / (math.sqrt(2) * s10)) < 1e-3 * NMI
    assert abs(f.ellipse.semi_minor_nmi - k / (math.sqrt(2) * c10)) < 1e-3 * NMI
    assert min(f.ellipse.orientation_deg, 180 - f.ellipse.orientation_deg) < 0.01
    assert abs(f.cut_angle_deg - 20.0) < 1e-6
    assert any("angle of cut 20°" in w for w in f.warnings)
    assert f.sigma_source == "a priori" and f.variance_factor is None
    perp = solve_fix([gp_sight(lat, lon, 0.0, 45.0), gp_sight(lat, lon, 90.0, 45.0)], lat, lon)
    assert abs(perp.ellipse.semi_major_nmi - k) < 1e-3 and abs(perp.ellipse.semi_minor_nmi - k) < 1e-3
    assert in_ellipse(perp, lat + 2.4 / 60, lon) and not in_ellipse(perp, lat + 2.5 / 60, lon)
    inside = in_ellipse(perp, np.array([lat, lat + 3 / 60]), np.array([lon, lon]))
    assert inside.tolist() == [True, False]


def _coverage(bodies, sigmas, trials, seed):
    base = sights_at(*TRUTH, bodies, T0)
    rng = np.random.default_rng(seed)
    noise = rng.normal(0.0, 1.0, (trials, len(base))) * np.asarray(sigmas)
    hits = 0
    for k in range(trials):
        sights = [Sight(s.ho_deg + e * ARCMIN, s.gha_deg, s.dec_deg, s.utc, s.body,
                        sigma_arcmin=sg) for s, e, sg in zip(base, noise[k], sigmas)]
        f = solve_fix(sights, TRUTH[0] + 0.05, TRUTH[1] - 0.05, tol_nmi=0.01)
        hits += in_ellipse(f, *TRUTH)
    return hits / trials


@pytest.mark.parametrize("bodies, sigmas", [(["Vega", "Spica"], [1.0, 1.0]),
                                            (["Vega", "Spica", "Regulus"], [1.0, 1.0, 2.0])])
def test_ellipse_coverage_a_priori(bodies, sigmas):
    # With the a-priori σ right, the 95 % ellipse should cover the truth 95 % of the time.
    # 2000 trials: binomial σ = √(.95·.05/2000) = 0.0049; allow 4σ (common practice).
    cover = _coverage(bodies, sigmas, 2000, seed=95)
    assert abs(cover - 0.95) < 4 * 0.0049


def test_ellipse_coverage_with_a_posteriori_rule():
    # Six sights, s = max(1, ŝ). Linear theory: ŝ² ~ χ²₄/4 independent of the fix error, so the
    # expected coverage is E[1 − exp(−5.991·max(1, ŝ²)/2)] (2-D normal law), a little above 95 %.
    rng = np.random.default_rng(4)
    s2 = rng.chisquare(4, 400_000) / 4
    expected = float(np.mean(1 - np.exp(-chi2_2d_scale(0.95) ** 2 * np.maximum(1, s2) / 2)))
    cover = _coverage(STARS6, [1.0] * 6, 2000, seed=96)
    sd = math.sqrt(expected * (1 - expected) / 2000)
    assert expected > 0.95 and abs(cover - expected) < 4 * sd


# ---------------------------------------------------------------- bad sights and warnings

def test_bad_sight_among_five_good_is_flagged():
    rng = np.random.default_rng(2026)
    false_alarms = 0
    for trial in range(10):
        offsets = list(rng.normal(0.0, 1.0, 6))
        bad = trial % 6
        offsets[bad] += 8.0                                    # a misread of 8′
        f = solve_fix(sights_at(*TRUTH, STARS6, T0, offsets_arcmin=offsets), *TRUTH)
        assert f.flags[bad], f.normalised_residuals
        false_alarms += sum(f.flags) - 1
        assert any("doubtful sight" in w for w in f.warnings)
    # P(|N| > 3) = 0.27 % per good sight, 50 good sights: expect 0.13 false alarms.
    assert false_alarms <= 1


def test_no_flags_on_clean_four_and_none_with_three():
    rng = np.random.default_rng(5)
    f4 = solve_fix(sights_at(*TRUTH, STARS6[:4], T0, offsets_arcmin=rng.normal(0, 1, 4)), *TRUTH)
    assert f4.flags == (False,) * 4 and all(x is not None for x in f4.normalised_residuals)
    f3 = solve_fix(sights_at(*TRUTH, STARS6[:3], T0, offsets_arcmin=[0.0, 12.0, 0.0]), *TRUTH)
    assert f3.flags == (False,) * 3 and f3.normalised_residuals == (None,) * 3
    assert any("cocked hat" in w for w in f3.warnings)


def test_scatter_larger_than_sigma_uses_a_posteriori():
    rng = np.random.default_rng(8)
    sights = sights_at(*TRUTH, STARS6, T0, offsets_arcmin=rng.normal(0, 1.0, 6), sigma=0.2)
    f = solve_fix(sights, *TRUTH)
    assert f.sigma_source == "a posteriori" and f.variance_factor > 1.5
    assert abs(f.sigma_used_arcmin[0] - 0.2 * f.variance_factor) < 1e-12
    assert any("a-posteriori" in w for w in f.warnings)


def test_weak_geometry_and_altitude_warnings():
    lat, lon = 30.0, 150.0
    narrow = [gp_sight(lat, lon, z, 40.0) for z in (100.0, 110.0, 120.0)]
    f = solve_fix(narrow, lat, lon)
    assert any("spread too little" in w for w in f.warnings) and f.cut_angle_deg < 30.0
    low = solve_fix([gp_sight(lat, lon, 0.0, 5.0), gp_sight(lat, lon, 90.0, 40.0),
                     gp_sight(lat, lon, 200.0, 50.0)], lat + 0.1, lon)
    assert any("below 10°" in w for w in low.warnings)
    assert sep_nmi(low.lat_deg, low.lon_deg, lat, lon) < 0.01 * NMI


@pytest.mark.parametrize("kwargs, field", [
    (dict(utc=datetime(2026, 3, 20, 5, 30)), "utc"),
    (dict(speed_kn=5.0), "course_deg"),
    (dict(drift_kn=1.0), "set_deg"),
    (dict(ho_deg=95.0), "ho_deg"),
    (dict(sigma_arcmin=0.0), "sigma_arcmin"),
    (dict(dec_deg=float("nan")), "dec_deg"),
])
def test_sight_validation_names_the_field(kwargs, field):
    args = dict(ho_deg=40.0, gha_deg=10.0, dec_deg=20.0, utc=T0, body="Vega")
    args.update(kwargs)
    with pytest.raises(NavInputError) as err:
        Sight(**args)
    assert err.value.field == field


def test_solve_fix_refuses_bad_sets():
    s = gp_sight(10.0, 10.0, 45.0, 40.0)
    with pytest.raises(NavInputError) as err:
        solve_fix([s], 10.0, 10.0)
    assert err.value.field == "sights"
    with pytest.raises(NavInputError):
        solve_fix([s, s], 10.0, 10.0)                           # parallel LOPs
    with pytest.raises(NavInputError) as err:
        solve_fix([s, gp_sight(10.0, 10.0, 135.0, 40.0)], 95.0, 10.0)
    assert err.value.field == "dr_lat_deg"
