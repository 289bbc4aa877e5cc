"""Dead reckoning and rhumb-line sailing (nav/sailing.py).

References:
- Direct numerical quadrature of the loxodrome's differential equations on the sphere,
  dφ/ds = cos C / R, dλ/ds = sin C / (R cos φ) (the definition of a rhumb line), written here
  independently of nav.sailing (composite Simpson rule).
- geographiclib (PyPI 2.x) ``Geodesic`` on the sphere R = 10800/π nmi (f = 0), where 1′ = 1 nmi:
  meridians and the equator are both geodesics and rhumb lines, and elsewhere a rhumb line is never
  shorter than the geodesic. (The Python geographiclib ships no ``Rhumb`` class; the quadrature
  above stands in for it.)
- The textbook formulas of Mercator and parallel sailing, from memory: meridional parts on the
  sphere M = 7915.7045′ · log10 tan(45° + φ/2); parallel sailing d_lon = dep · sec φ.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from nav.errors import NavInputError
from nav.sailing import (advance_position, course_speed_made_good, dr_position, hours_between,
                         meridional_parts_arcmin, mid_latitude_sailing, rhumb_direct, rhumb_line)
from nav.units import ARCMIN_DEG, ARCSEC_DEG, EARTH_RADIUS_NMI

ARCMIN = ARCMIN_DEG
ARCSEC = ARCSEC_DEG
NMI = 1.0                      # distances are carried in nautical miles
CABLE = 0.1 * NMI
SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)   # the navigator's sphere, lengths in nmi


def _loxodrome_quadrature(lat_deg, lon_deg, course_deg, dist_nmi, steps=2000):
    """Independent reference: integrate dλ/ds = sin C/(R cos φ(s)) with φ(s) linear in s."""
    c = math.radians(course_deg)
    phi1 = math.radians(lat_deg)
    s = np.linspace(0.0, dist_nmi / EARTH_RADIUS_NMI, 2 * steps + 1)
    phi = phi1 + s * math.cos(c)
    f = math.sin(c) / np.cos(phi)
    h = s[1] - s[0]
    integral = h / 3.0 * (f[0] + f[-1] + 4.0 * f[1:-1:2].sum() + 2.0 * f[2:-1:2].sum())
    lat2 = math.degrees(phi[-1])
    lon2 = (lon_deg + math.degrees(integral) + 180.0) % 360.0 - 180.0
    return lat2, lon2


def _sep_nmi(lat1, lon1, lat2, lon2):
    return SPHERE.Inverse(float(lat1), float(lon1), float(lat2), float(lon2))["s12"]


# ---------------------------------------------------------------- against the quadrature

def test_rhumb_direct_matches_quadrature_array():
    rng = np.random.default_rng(20260320)
    n = 60
    lat = rng.uniform(-70, 70, n)
    lon = rng.uniform(-180, 180, n)
    course = rng.uniform(0, 360, n)
    dist = rng.uniform(1, 900, n)
    lat2, lon2 = rhumb_direct(lat, lon, course, dist)            # one vectorised call
    assert lat2.shape == (n,)
    for i in range(n):
        rlat, rlon = _loxodrome_quadrature(lat[i], lon[i], course[i], dist[i])
        # Simpson with 4000 panels is good to far below 1e-6 nmi here (common practice, no source).
        assert _sep_nmi(lat2[i], lon2[i], rlat, rlon) < 1e-6 * NMI


def test_dr_position_scalar_matches_quadrature():
    lat2, lon2 = dr_position(47.3, -8.1, 236.0, 7.5, 9.0)        # quadrature reference
    rlat, rlon = _loxodrome_quadrature(47.3, -8.1, 236.0, 67.5)
    assert isinstance(lat2, float) or np.ndim(lat2) == 0
    assert _sep_nmi(lat2, lon2, rlat, rlon) < 1e-6 * NMI


@pytest.mark.parametrize("course", [89.9999, 90.0, 270.0, 90.0001])
def test_east_west_courses_are_stable(course):
    # Near and exactly east-west the Mercator formula has 0/0 form; the quadrature is regular.
    lat2, lon2 = rhumb_direct(52.0, 3.0, course, 400.0)
    rlat, rlon = _loxodrome_quadrature(52.0, 3.0, course, 400.0)
    assert _sep_nmi(lat2, lon2, rlat, rlon) < 1e-6 * NMI


# ---------------------------------------------------------------- textbook values (from memory)

def test_mercator_sailing_textbook_meridional_parts():
    # From the equator on 045° until 45° N: d_lon = M(45°) = 7915.7045′·log10 tan 67.5° (textbook
    # spherical meridional parts, from memory), about 3029.9′ = 50°29.9′.
    dist = 45 * 60 * math.sqrt(2.0)
    lat2, lon2 = rhumb_direct(0.0, 0.0, 45.0, dist)
    expected_dlon_arcmin = 7915.7045 * math.log10(math.tan(math.radians(67.5)))
    assert abs(lat2 - 45.0) < 1e-9 * ARCMIN
    # 7915.7045 is 3437.747·ln 10 rounded to 8 figures: agreement to 1e-4′ is all it can give.
    assert abs(lon2 - expected_dlon_arcmin * ARCMIN) < 1e-4 * ARCMIN
    assert abs(expected_dlon_arcmin * ARCMIN - (50.0 + 29.9 * ARCMIN)) < 0.1 * ARCMIN  # memory
    assert abs(meridional_parts_arcmin(45.0) - expected_dlon_arcmin) * ARCMIN < 1e-4 * ARCMIN


def test_meridional_parts_array():
    lat = np.array([-60.0, 0.0, 30.0, 60.0])
    expected = 7915.7045 * np.log10(np.tan(np.radians(45.0 + lat / 2.0)))   # textbook, from memory
    assert np.all(np.abs(meridional_parts_arcmin(lat) - expected) * ARCMIN < 1e-4 * ARCMIN)


def test_parallel_sailing_at_sixty_degrees():
    # Parallel sailing (textbook): 60 nmi of departure due east at 60° N is 2° of longitude.
    lat2, lon2 = dr_position(60.0, 10.0, 90.0, 6.0, 10.0)
    assert lat2 == 60.0
    assert abs(lon2 - 12.0) < 1e-9 * ARCSEC


def test_meridian_and_equator_agree_with_the_geodesic():
    # Along a meridian and along the equator a rhumb line is a great circle (geographiclib).
    for lat, lon, course, dist in ((-20.0, 40.0, 0.0, 1500.0), (35.0, -70.0, 180.0, 800.0),
                                   (0.0, 170.0, 90.0, 1200.0), (0.0, -10.0, 270.0, 300.0)):
        line = SPHERE.Direct(lat, lon, course, dist)
        lat2, lon2 = rhumb_direct(lat, lon, course, dist)
        assert _sep_nmi(lat2, lon2, line["lat2"], line["lon2"]) < 1e-6 * NMI


def test_rhumb_line_never_shorter_than_great_circle():
    rng = np.random.default_rng(7)
    lat1, lat2 = rng.uniform(-60, 60, (2, 40))
    lon1, lon2 = rng.uniform(-180, 180, (2, 40))
    _, dist = rhumb_line(lat1, lon1, lat2, lon2)
    for i in range(40):
        gc = _sep_nmi(lat1[i], lon1[i], lat2[i], lon2[i])     # geographiclib geodesic
        assert dist[i] >= gc - 1e-6 * NMI


# ---------------------------------------------------------------- the 180th meridian, the poles

def test_crossing_the_date_line_both_ways():
    # 60 nmi due east at 10° N from 179.5° E: d_lon = 1°/cos 10° (parallel sailing, textbook).
    dlon = 1.0 / math.cos(math.radians(10.0))
    _, lon_e = dr_position(10.0, 179.5, 90.0, 12.0, 5.0)
    assert abs(lon_e - (179.5 + dlon - 360.0)) < 1e-9 * ARCSEC
    _, lon_w = dr_position(10.0, -179.5, 270.0, 12.0, 5.0)
    assert abs(lon_w - (-179.5 - dlon + 360.0)) < 1e-9 * ARCSEC
    course, dist = rhumb_line(10.0, 179.5, 10.0, -179.5)   # the short way, eastward
    assert abs(course - 90.0) < 1e-9 and abs(dist - 60.0 * math.cos(math.radians(10.0))) < 1e-9


def test_run_over_the_pole_is_refused():
    with pytest.raises(NavInputError) as err:
        dr_position(89.0, 0.0, 0.0, 10.0, 10.0)         # 100 nmi north of 89° N
    assert err.value.field == "dist_nmi"


def test_rhumb_line_from_a_pole_is_refused():
    with pytest.raises(NavInputError):
        rhumb_line(90.0, 0.0, 10.0, 0.0)


# ---------------------------------------------------------------- inverse problem and round trips

def test_rhumb_line_scalar_and_array_invert_direct():
    course, dist = rhumb_line(49.5, -5.0, 38.7, -28.6)
    lat2, lon2 = rhumb_direct(49.5, -5.0, course, dist)
    assert abs(lat2 - 38.7) < 1e-9 * ARCSEC and abs(lon2 + 28.6) < 1e-9 * ARCSEC
    lat1 = np.array([10.0, -33.0, 60.0])
    lon1 = np.array([170.0, 18.0, -20.0])
    lat2a = np.array([12.0, -34.0, 60.0])
    lon2a = np.array([-175.0, 151.0, 10.0])
    c, d = rhumb_line(lat1, lon1, lat2a, lon2a)
    la, lo = rhumb_direct(lat1, lon1, c, d)
    assert np.all(np.abs(la - lat2a) < 1e-9 * ARCSEC)
    assert np.all(np.abs(np.remainder(lo - lon2a + 180, 360) - 180) < 1e-9 * ARCSEC)
    assert abs(c[2] - 90.0) < 1e-12                      # due east along 60° N
    assert abs(d[2] - 30 * 60 * 0.5) < 1e-9              # departure = d_lon cos lat (textbook)


@settings(max_examples=150, deadline=None)
@given(lat=st.floats(-75, 75), lon=st.floats(-180, 180), course=st.floats(0, 360),
       speed=st.floats(0.1, 25), hours=st.floats(0.01, 30))
def test_advance_then_retire_returns(lat, lon, course, speed, hours):
    # Property (common practice, no source): retiring by the same run undoes advancing.
    try:
        la, lo = advance_position(lat, lon, course, speed, hours)
    except NavInputError:          # a run past a pole: refused, nothing to invert
        return
    lb, lb_lon = advance_position(la, lo, course, speed, -hours)
    assert _sep_nmi(lb, lb_lon, lat, lon) < 1e-7 * NMI
    c, d = rhumb_line(lat, lon, la, lo)
    if d > 1e-6:
        # The inverse finds the same course and distance unless the run went more than halfway
        # round in longitude (then the shorter way is the other one).
        if abs(speed * hours * math.sin(math.radians(course))
               / (60 * math.cos(math.radians(max(abs(lat), abs(la)))))) < 179.0:
            assert abs(d - speed * hours) < 1e-6 * NMI


def test_advance_position_array_retires():
    # Retiring 3 h at 8 kn on 045° is the rhumb line of 225° for 24 nmi (quadrature reference).
    hours = np.array([-3.0, 0.0, 3.0])
    lat2, lon2 = advance_position(np.full(3, -12.0), np.full(3, 100.0), 45.0, 8.0, hours)
    rlat, rlon = _loxodrome_quadrature(-12.0, 100.0, 225.0, 24.0)
    assert _sep_nmi(lat2[0], lon2[0], rlat, rlon) < 1e-6 * NMI
    assert lat2[1] == -12.0 and lon2[1] == 100.0
    rlat, rlon = _loxodrome_quadrature(-12.0, 100.0, 45.0, 24.0)
    assert _sep_nmi(lat2[2], lon2[2], rlat, rlon) < 1e-6 * NMI


# ---------------------------------------------------------------- current (set and drift)

def test_course_speed_made_good_vector_sum():
    # 090° at 6 kn with a current setting 000° at 6 kn makes good 045° at 6√2 kn (vector sum).
    cmg, smg = course_speed_made_good(90.0, 6.0, 0.0, 6.0)
    assert abs(cmg - 45.0) < 1e-12 and abs(smg - 6.0 * math.sqrt(2)) < 1e-12
    cmg, smg = course_speed_made_good(np.array([0.0, 180.0]), np.array([5.0, 5.0]),
                                      np.array([180.0, 90.0]), np.array([5.0, 5.0]))
    assert smg[0] < 1e-12 and abs(cmg[1] - 135.0) < 1e-12


def test_drift_only_and_dr_with_current():
    # Hove to in a 2 kn current setting 180° for 3 h: 6 nmi due south (first principles).
    lat2, lon2 = dr_position(40.0, -20.0, 0.0, 0.0, 3.0, set_deg=180.0, drift_kn=2.0)
    assert abs(lat2 - (40.0 - 0.1)) < 1e-9 * ARCSEC and lon2 == -20.0
    # With way on, the EP is the quadrature of the rhumb line of CMG/SMG.
    lat = np.array([20.0, -45.0])
    lat2, lon2 = dr_position(lat, 150.0, 300.0, 6.0, 4.0, set_deg=45.0, drift_kn=1.5)
    cmg, smg = course_speed_made_good(300.0, 6.0, 45.0, 1.5)
    for i in range(2):
        rlat, rlon = _loxodrome_quadrature(lat[i], 150.0, cmg, smg * 4.0)
        assert _sep_nmi(lat2[i], lon2[i], rlat, rlon) < 1e-6 * NMI


# ---------------------------------------------------------------- mid-latitude sailing

def test_mid_latitude_sailing_close_to_mercator_for_short_runs():
    # Textbook (from memory): mid-latitude sailing is adequate for a day's run in moderate
    # latitudes. Measured here: under a cable for 250 nmi below 50°.
    rng = np.random.default_rng(3)
    lat = rng.uniform(-50, 50, 200)
    course = rng.uniform(0, 360, 200)
    ml_lat, ml_lon = mid_latitude_sailing(lat, 0.0, course, 250.0)
    mc_lat, mc_lon = rhumb_direct(lat, 0.0, course, 250.0)
    worst = max(_sep_nmi(ml_lat[i], ml_lon[i], mc_lat[i], mc_lon[i]) for i in range(200))
    assert worst < CABLE
    s_lat, s_lon = mid_latitude_sailing(30.0, 0.0, 90.0, 60.0)   # scalar: pure parallel sailing
    assert s_lat == 30.0 and abs(s_lon - 1.0 / math.cos(math.radians(30.0))) < 1e-12


# ---------------------------------------------------------------- input errors

@pytest.mark.parametrize("kwargs, field", [
    (dict(lat_deg=95.0), "lat_deg"),
    (dict(speed_kn=-1.0), "speed_kn"),
    (dict(hours=-1.0), "hours"),
    (dict(drift_kn=1.0), "set_deg"),
    (dict(course_deg=float("nan")), "course_deg"),
    (dict(lon_deg="x"), "lon_deg"),
])
def test_dr_position_names_the_bad_field(kwargs, field):
    args = dict(lat_deg=40.0, lon_deg=-20.0, course_deg=90.0, speed_kn=6.0, hours=2.0)
    args.update(kwargs)
    drift = args.pop("drift_kn", 0.0)
    with pytest.raises(NavInputError) as err:
        dr_position(**args, drift_kn=drift)
    assert err.value.field == field


def test_hours_between():
    from datetime import datetime, timezone

    a = datetime(2026, 3, 20, 8, 0, tzinfo=timezone.utc)
    b = datetime(2026, 3, 20, 11, 30, tzinfo=timezone.utc)
    assert hours_between(a, b) == 3.5 and hours_between(b, a) == -3.5
    with pytest.raises(NavInputError):
        hours_between(a.replace(tzinfo=None), b)
