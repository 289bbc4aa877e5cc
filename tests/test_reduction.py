"""Sight reduction (nav/reduction.py): Hc, Zn, intercept, the tables' AP, the batch reducer.

Independent reference: geographiclib (PyPI) on a sphere. Hc = 90° − the great-circle distance from
the observer to the body's geographic position (lat = Dec, lon = −GHA east +), Zn = the initial
azimuth toward it — the navigational triangle solved by a geodesic library instead of our vector
formula.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from nav.errors import NavInputError
from nav.reduction import (Reduction, SightReductions, assumed_position, hc_zn, reduce_at,
                           reduce_from_ap, reduce_sight, reduce_sights)
from nav.units import ARCMIN_DEG as ARCMIN
from nav.units import ARCSEC_DEG as ARCSEC
from nav.units import EARTH_RADIUS_NMI, NMI_M

NMI = 1.0                                   # the unit of *_nmi values (1′ of great circle)
SPHERE = Geodesic(EARTH_RADIUS_NMI * NMI_M, 0.0)   # the navigator's sphere: 1′ = 1 nmi


def _geodesic_hc_zn(lat, dec, lha):
    """Hc and Zn from geographiclib: observer at (lat, 0), GP at (Dec, −LHA)."""
    hc, zn = [], []
    for la, de, lh in zip(np.ravel(lat), np.ravel(dec), np.ravel(lha)):
        g = SPHERE.Inverse(float(la), 0.0, float(de), float(-lh))
        hc.append(90.0 - g["a12"])
        zn.append(g["azi1"] % 360.0)
    return np.array(hc), np.array(zn)


def _zn_gap_deg(a, b):
    return np.abs((np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0)


# ---------------------------------------------------------------- hc_zn against geographiclib

def _cases():
    rng = np.random.default_rng(7)
    n = 300
    lat = np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    dec = rng.uniform(-30, 30, n)
    lha = rng.uniform(0, 360, n)
    # near the poles
    pole_lat = np.concatenate([90 - rng.uniform(1e-6, 0.1, 20), -90 + rng.uniform(1e-6, 0.1, 20)])
    pole = (pole_lat, rng.uniform(-60, 60, 40), rng.uniform(0, 360, 40))
    # near the zenith: GP within a few metres to a few miles of the observer
    zen_lat = rng.uniform(-60, 60, 30)
    off = 10 ** rng.uniform(-5, -1.5, 30)
    zen = (zen_lat, zen_lat + off * rng.choice([-1, 1], 30), off * rng.uniform(-1, 1, 30) % 360)
    lat = np.concatenate([lat, pole[0], zen[0]])
    dec = np.concatenate([dec, pole[1], zen[1]])
    lha = np.concatenate([lha, pole[2], zen[2]])
    return lat, dec, lha


def test_hc_zn_array_against_geographiclib():
    lat, dec, lha = _cases()
    hc, zn = hc_zn(lat, dec, lha)
    ref_hc, ref_zn = _geodesic_hc_zn(lat, dec, lha)
    # geographiclib: Hc = 90° − great-circle distance, to roundoff
    np.testing.assert_allclose(hc, ref_hc, rtol=0, atol=1e-4 * ARCSEC)
    # Zn as a position on the sphere: the azimuth error times the body's zenith distance
    gap_on_sphere = _zn_gap_deg(zn, ref_zn) * np.sin(np.radians(90.0 - ref_hc))
    assert np.all(gap_on_sphere <= 1e-4 * ARCSEC)
    assert np.all((zn >= 0.0) & (zn < 360.0))


def test_hc_zn_scalar_against_geographiclib():
    hc, zn = hc_zn(41.2, -16.7, 30.0)
    assert isinstance(hc, float) and isinstance(zn, float)
    ref_hc, ref_zn = _geodesic_hc_zn([41.2], [-16.7], [30.0])
    assert abs(hc - ref_hc[0]) <= 1e-4 * ARCSEC and _zn_gap_deg(zn, ref_zn[0]) <= 1e-4 * ARCSEC


def test_meridian_and_pole_edges_exact():
    # On the meridian (LHA 0) Hc = 90° − |lat − Dec| and the body bears due S or N; at LHA 180°
    # (lower transit) Hc = |lat + Dec| − 90° — the meridian altitude rules (common practice).
    hc, zn = hc_zn(np.array([50.0, 10.0, -30.0]), np.array([20.0, 40.0, -30.0]), 0.0)
    np.testing.assert_allclose(hc, [60.0, 60.0, 90.0], rtol=0, atol=1e-12)
    assert list(zn[:2]) == [180.0, 0.0]
    hc, zn = hc_zn(70.0, 60.0, 180.0)
    assert abs(hc - 40.0) <= 1e-12 and zn == 0.0
    # at a pole the altitude of a body equals its declination (common practice)
    hc, _ = hc_zn(np.array([90.0, -90.0]), np.array([23.4, 23.4]), np.array([17.0, 290.0]))
    np.testing.assert_allclose(hc, [23.4, -23.4], rtol=0, atol=1e-12)
    # equator, body on the equator, 6 h west of the meridian: on the horizon due west
    hc, zn = hc_zn(0.0, 0.0, 90.0)
    assert hc == 0.0 and zn == 270.0


def test_no_signed_zero_and_no_360():
    _, zn = hc_zn(np.array([10.0, 10.0, 0.0]), np.array([40.0, 40.0, 30.0]),
                  np.array([0.0, 360.0, -0.0]))
    assert list(zn) == [0.0, 0.0, 0.0] and not np.any(np.signbit(zn))


# ---------------------------------------------------------------- reduce_at and intercepts

def test_reduce_at_scalar_sign_convention():
    hc, _ = hc_zn(41.0, -16.7, 30.0)
    r = reduce_at(hc + 2.5 * ARCMIN, 283.0, -16.7, 41.0, 107.0)   # LHA = 283 + 107 − 360 = 30
    assert isinstance(r, Reduction) and isinstance(r.intercept_nmi, float)
    assert abs(r.lha_deg - 30.0) <= 1e-9
    # Ho > Hc: the observer is nearer the GP than the AP: intercept toward (Marcq St Hilaire)
    assert abs(r.intercept_nmi - 2.5 * NMI) <= 1e-9 * NMI and r.toward is True


def test_reduce_at_array_east_west_wrap():
    gha = np.array([350.0, 10.0, 180.0])
    lon = np.array([20.0, -20.0, 179.5])
    r = reduce_at(np.array([20.0, 30.0, 40.0]), gha, 10.0, 30.0, lon)
    np.testing.assert_allclose(r.lha_deg, [10.0, 350.0, 359.5], rtol=0, atol=1e-12)  # LHA=GHA+λE
    assert r.toward.shape == (3,)


@settings(max_examples=150, deadline=None)
@given(lat=st.floats(-89.9, 89.9), lon=st.floats(-180, 180), gha=st.floats(0, 359.999),
       dec=st.floats(-89, 89))
def test_sight_at_its_position_has_zero_intercept(lat, lon, gha, dec):
    # Ho taken from geographiclib at the observer (not from our formula) reduces to zero there
    g = SPHERE.Inverse(lat, lon, dec, -gha)
    ho = 90.0 - g["a12"]
    r = reduce_at(ho, gha, dec, lat, lon)
    assert abs(r.intercept_nmi) <= 1e-6 * NMI


@settings(max_examples=100, deadline=None)
@given(lat=st.floats(-70, 70), lon=st.floats(-180, 180), gha=st.floats(0, 359.999),
       dec=st.floats(-60, 60))
def test_moving_toward_the_body_shortens_the_intercept(lat, lon, gha, dec):
    hc, zn = hc_zn(lat, dec, (gha + lon) % 360.0)
    assume(2.0 < hc < 85.0)
    # step 1 nmi along Zn on the navigator's sphere (geographiclib Direct): Hc rises by 1′
    g = SPHERE.Direct(lat, lon, zn, 1.0 * NMI_M)
    r = reduce_at(hc, gha, dec, g["lat2"], g["lon2"])
    assert abs(r.intercept_nmi + 1.0 * NMI) <= 0.001 * NMI


# ---------------------------------------------------------------- the tables' AP

def test_assumed_position_worked_examples():
    # The AP rule of the sight-reduction tables (American Practical Navigator): whole-degree
    # latitude nearest the DR; longitude nearest the DR giving a whole LHA — in west longitude
    # its minutes equal the GHA's, in east longitude 60′ minus them.
    m = ARCMIN
    dr_lat = np.array([41 + 12.4 * m, -33 - 40 * m, 10.2, 5.0, 60.0])
    dr_lon = np.array([-(32 + 7.1 * m), 20 + 50 * m, 179 + 50 * m, -(179 + 50 * m), 179 + 50 * m])
    gha = np.array([283 + 7.9 * m, 100 + 20 * m, 100 + 30 * m, 100 + 40 * m, 100 + 50 * m])
    ap_lat, ap_lon = assumed_position(dr_lat, dr_lon, gha)
    np.testing.assert_array_equal(ap_lat, [41.0, -34.0, 10.0, 5.0, 60.0])
    want_lon = [-(32 + 7.9 * m),        # W: minutes = GHA's 07.9′
                20 + 40 * m,            # E: 60′ − 20′
                179 + 30 * m,           # E: 60′ − 30′
                -(179 + 40 * m),        # W: GHA's 40′
                -(179 + 50 * m)]        # from 179°50′ E across the 180th meridian: 179°50′ W
    np.testing.assert_allclose(ap_lon, want_lon, rtol=0, atol=1e-9 * ARCSEC)


def test_assumed_position_scalar():
    ap_lat, ap_lon = assumed_position(41.49, -32.0, 283.3)
    assert isinstance(ap_lat, float) and ap_lat == 41.0
    assert abs(ap_lon - (-32.3)) <= 1e-9 * ARCSEC           # LHA 251°: 251 − 283.3 = −32.3


@settings(max_examples=200, deadline=None)
@given(lat=st.floats(-89.4, 89.4), lon=st.floats(-180, 180), gha=st.floats(0, 359.999))
def test_assumed_position_rule(lat, lon, gha):
    ap_lat, ap_lon = assumed_position(lat, lon, gha)
    assert ap_lat == math.floor(ap_lat) and abs(ap_lat - lat) <= 0.5
    lha = (gha + ap_lon) % 360.0
    assert min(abs(lha - round(lha)), 360 - lha) <= 1e-9
    assert abs((ap_lon - lon + 180) % 360 - 180) <= 0.5 + 1e-12
    assert -180.0 <= ap_lon < 180.0


def test_reduce_from_ap_whole_degrees_exact():
    gha = np.array([283 + 7.9 * ARCMIN, 12.345, 359.9])
    dr_lat, dr_lon = np.array([41.2, -10.7, 0.4]), np.array([-32.1, 150.2, 0.3])
    r = reduce_from_ap(30.0, gha, 15.0, dr_lat, dr_lon)
    assert np.all(r.lha_deg == np.floor(r.lha_deg)) and np.all(r.lat_deg == np.floor(r.lat_deg))
    np.testing.assert_array_equal(r.lha_deg, [251.0, 163.0, 0.0])
    # the same AP through the general reduction gives the same Hc, Zn, intercept
    g = reduce_at(30.0, gha, 15.0, r.lat_deg, r.lon_deg)
    np.testing.assert_allclose(g.hc_deg, r.hc_deg, rtol=0, atol=1e-9 * ARCSEC)
    np.testing.assert_allclose(g.intercept_nmi, r.intercept_nmi, rtol=0, atol=1e-9 * NMI)
    one = reduce_from_ap(30.0, 283 + 7.9 * ARCMIN, 15.0, 41.2, -32.1)
    assert one.lha_deg == 251.0 and one.lat_deg == 41.0


def test_bad_geometry_input_names_field():
    with pytest.raises(NavInputError) as err:
        hc_zn(np.array([10.0, 95.0]), 0.0, 0.0)
    assert err.value.field == "lat_deg" and err.value.row == 2
    with pytest.raises(NavInputError) as err:
        reduce_at(float("nan"), 0.0, 0.0, 0.0, 0.0)
    assert err.value.field == "ho"


# ---------------------------------------------------------------- the batch reducer

T0 = np.datetime64("2024-03-20T18:00:00", "us")
BODIES = ["Sirius", "Moon", "Venus", "Sun", "Vega", "Moon", "Jupiter", "Sirius"]


def _batch(**kw):
    n = len(BODIES)
    t = T0 + np.arange(n) * np.timedelta64(7, "m")
    args = dict(limb=None, index_error_arcmin=np.linspace(-1, 1, n), eye_height_m=2.5,
                lat_deg=np.linspace(-40, 50, n), lon_deg=np.linspace(-170, 175, n))
    args.update(kw)
    return reduce_sights(BODIES, t, np.linspace(20, 60, n), **args), t


def test_reduce_sights_matches_the_steps_one_by_one():
    from nav.almanac import almanac
    from nav.corrections import correct_altitude

    res, t = _batch()
    assert isinstance(res, SightReductions) and len(res) == len(BODIES)
    assert list(res.body) == BODIES and res.utc.dtype == np.dtype("datetime64[us]")
    for i in range(len(BODIES)):
        rec = almanac([BODIES[i]], t[i:i + 1])[0]
        gha, dec = float(rec.gha_deg[0]), float(rec.dec_deg[0])
        _, zn_dr = hc_zn(res.dr_lat_deg[i], dec, (gha + res.dr_lon_deg[i]) % 360)
        kind = res.kind[i]
        c = correct_altitude(
            res.hs_deg[i], body_kind=kind, limb=None, index_error_arcmin=np.linspace(-1, 1, 8)[i],
            eye_height_m=2.5, hp_arcmin=None if kind == "star" else float(rec.hp_arcmin[0]),
            sd_arcmin=float(rec.sd_arcmin[0]) if kind in ("sun", "moon") else None,
            lat_deg=res.dr_lat_deg[i], zn_deg=zn_dr)
        r = reduce_at(c.ho_deg, gha, dec, res.dr_lat_deg[i], res.dr_lon_deg[i])
        # the batch is exactly the composition of its steps, sight by sight, in input order
        assert abs(res.gha_deg[i] - gha) <= 1e-9 * ARCSEC and abs(res.dec_deg[i] - dec) <= 1e-9 * ARCSEC
        assert abs(res.ho_deg[i] - c.ho_deg) <= 1e-9 * ARCSEC
        assert abs(res.intercept_nmi[i] - r.intercept_nmi) <= 1e-7 * NMI
        assert abs(res.zn_deg[i] - r.zn_deg) <= 1e-9 * ARCSEC
    assert np.isnan(res.hp_arcmin[0]) and np.isnan(res.almanac_sd_arcmin[2])   # star; planet


def test_reduce_sights_instant_sharing_gives_the_same_numbers():
    # One call shares the per-instant quantities among all bodies; each body reduced in a call
    # of its own computes them again. Sharing must change nothing.
    shared, t = _batch()
    n = len(BODIES)
    args = dict(index_error_arcmin=np.linspace(-1, 1, n), lat_deg=np.linspace(-40, 50, n),
                lon_deg=np.linspace(-170, 175, n), hs_deg=np.linspace(20, 60, n))
    names = np.array(BODIES, dtype=object)
    for body in dict.fromkeys(BODIES):
        idx = np.flatnonzero(names == body)
        grouped = reduce_sights(names[idx], t[idx], args["hs_deg"][idx], limb=None,
                                index_error_arcmin=args["index_error_arcmin"][idx],
                                eye_height_m=2.5, lat_deg=args["lat_deg"][idx],
                                lon_deg=args["lon_deg"][idx])
        for name in ("gha_deg", "dec_deg", "ho_deg", "hc_deg", "zn_deg"):
            np.testing.assert_allclose(getattr(shared, name)[idx], getattr(grouped, name),
                                       rtol=0, atol=1e-9 * ARCSEC)


def test_reduce_sights_order_is_kept_when_shuffled():
    res, t = _batch()
    perm = np.random.default_rng(3).permutation(len(BODIES))
    again = reduce_sights(np.array(BODIES, dtype=object)[perm], t[perm],
                          np.linspace(20, 60, len(BODIES))[perm],
                          index_error_arcmin=np.linspace(-1, 1, len(BODIES))[perm], eye_height_m=2.5,
                          lat_deg=np.linspace(-40, 50, len(BODIES))[perm],
                          lon_deg=np.linspace(-170, 175, len(BODIES))[perm])
    np.testing.assert_allclose(again.intercept_nmi, res.intercept_nmi[perm], rtol=0, atol=1e-9 * NMI)


def test_reduce_sight_scalar_equals_batch_element_and_takes_datetimes():
    res, t = _batch()
    i = 1
    when = datetime(2024, 3, 20, 18, 7, tzinfo=timezone.utc)
    one = reduce_sight("moon", when, res.hs_deg[i], index_error_arcmin=np.linspace(-1, 1, 8)[i],
                       eye_height_m=2.5, lat_deg=res.dr_lat_deg[i], lon_deg=res.dr_lon_deg[i])
    assert one.body == "Moon" and isinstance(one.intercept_nmi, float)
    assert isinstance(one.warnings, tuple) and isinstance(one.toward, bool)
    assert one.utc == t[i]
    assert abs(one.intercept_nmi - res.intercept_nmi[i]) <= 1e-9 * NMI
    assert res.sight(i).intercept_nmi == res.intercept_nmi[i]
    # a list of aware datetimes works like datetime64
    whens = [when + timedelta(minutes=7 * k) for k in range(-1, 2)]
    via_dt = reduce_sights(BODIES[:3], whens, res.hs_deg[:3], eye_height_m=2.5,
                           index_error_arcmin=np.linspace(-1, 1, 8)[:3],
                           lat_deg=res.dr_lat_deg[:3], lon_deg=res.dr_lon_deg[:3])
    np.testing.assert_allclose(via_dt.intercept_nmi, res.intercept_nmi[:3], rtol=0, atol=1e-9 * NMI)


def test_reduce_sights_from_ap():
    res, _ = _batch(use_ap=True)
    assert res.from_ap and np.all(res.lha_deg == np.floor(res.lha_deg))
    assert np.all(res.lat_deg == np.round(res.lat_deg))
    assert np.all(np.abs(res.lat_deg - res.dr_lat_deg) <= 0.5)


def test_reduce_sights_warnings_belong_to_their_sight():
    t = T0 + np.arange(3) * np.timedelta64(1, "m")
    res = reduce_sights(["Sirius", "Sirius", "Sirius"], t, [30.0, 3.0, 30.0], eye_height_m=2.0,
                        lat_deg=10.0, lon_deg=0.0)
    assert len(res.warnings) == 3
    assert any("refraction" in w for w in res.warnings[1])
    assert not any("refraction" in w for w in res.warnings[0] + res.warnings[2])
    # the DR is far from any position where Sirius stands at 30° or 3°: big intercepts flagged
    big = np.abs(res.intercept_nmi) > 30
    assert all(any("intercept" in w for w in ws) == b for ws, b in zip(res.warnings, big))


def test_reduce_sights_errors_name_field_and_row():
    t = T0 + np.arange(3) * np.timedelta64(1, "m")
    with pytest.raises(NavInputError) as err:
        reduce_sights(["Sun", "Sirius", "Betelgeuze Prime"], t, 30.0, lat_deg=0, lon_deg=0)
    assert err.value.field == "body" and err.value.row == 3
    with pytest.raises(NavInputError) as err:   # row 3 is the 2nd star: the group index maps back
        reduce_sights(["Sirius", "Sun", "Vega"], t, [30.0, 30.0, -5.0], lat_deg=0, lon_deg=0)
    assert err.value.field == "hs" and err.value.row == 3
    late = t.copy()
    late[1] = np.datetime64("2077-01-01T00:00", "us")
    with pytest.raises(NavInputError) as err:
        reduce_sights("Sun", late, 30.0, lat_deg=0, lon_deg=0)
    assert err.value.field == "utc" and err.value.row == 2
    with pytest.raises(NavInputError) as err:
        reduce_sights("Sun", [datetime(2024, 3, 20, 12)], 30.0, lat_deg=0, lon_deg=0)
    assert err.value.field == "utc"
    with pytest.raises(NavInputError) as err:
        reduce_sight("Sun", datetime(2024, 3, 20, 12, tzinfo=timezone.utc), 30.0, lat_deg=91.0,
                     lon_deg=0.0)
    assert err.value.field == "dr_lat" and err.value.row is None
