"""Noon sight, latitude by meridian altitude, longitude by the time of noon, Polaris.

References:
- astronomy-engine (PyPI 2.1): ``SearchHourAngle(Body.Sun, observer, 0, t)`` for the instant of
  the Sun's meridian passage at a fixed place. It treats UTC as UT1 (|UT1 − UTC| < 0.9 s by the
  definition of UTC), so transit instants are compared to 1 s (= 0.25′ of longitude).
- geographiclib (PyPI 2.x) ``Geodesic`` on the sphere R = 10800/π nmi, f = 0: the altitude of a
  body at a place is 90° − the arc from the place to its geographical position (lat = Dec,
  lon = −GHA), computed with no use of nav's formulas.
- The meridian-altitude rule and the Polaris series lat = Ho − p cos LHA + ½ p² sin² LHA tan Ho
  (p = polar distance, radians): textbook navigation, from memory (the series is the expansion of
  the altitude formula in p that printed Polaris corrections are built on).
"""

from __future__ import annotations

import math
from datetime import datetime, time, timedelta, timezone

import astronomy
import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from nav import almanac
from nav.errors import NavInputError
from nav.meridian import (latitude_by_meridian_altitude, local_apparent_noon,
                          longitude_by_equation_of_time, longitude_from_meridian_passage,
                          polaris_latitude)
from nav.units import ARCMIN_DEG, ARCSEC_DEG, EARTH_RADIUS_NMI

ARCMIN = ARCMIN_DEG
ARCSEC = ARCSEC_DEG
SECOND = timedelta(seconds=1)
SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)
UTC = timezone.utc


def ae_transit(lat, lon, start: datetime) -> datetime:
    """astronomy-engine: the first upper meridian passage of the Sun after `start` at (lat, lon)."""
    t = astronomy.Time.Make(start.year, start.month, start.day, start.hour, start.minute,
                            start.second)
    ev = astronomy.SearchHourAngle(astronomy.Body.Sun, astronomy.Observer(lat, lon, 0.0), 0.0, t)
    return ev.time.Utc().replace(tzinfo=UTC)


def true_alt(lat, lon, body, t):
    b = almanac.body_almanac(body, t)
    return 90.0 - SPHERE.Inverse(lat, lon, float(b.dec_deg), float(-b.gha_deg))["a12"]


# ---------------------------------------------------------------- local apparent noon

@pytest.mark.parametrize("lat, lon, dr_utc", [
    (45.0, -30.0, datetime(2026, 6, 21, 8, 0, tzinfo=UTC)),
    (-33.9, 18.4, datetime(2026, 11, 3, 6, 0, tzinfo=UTC)),
    (10.0, 179.9, datetime(2026, 2, 11, 0, 0, tzinfo=UTC)),
    (60.0, -150.0, datetime(2026, 9, 1, 18, 0, tzinfo=UTC)),
])
def test_noon_of_a_stationary_vessel_against_astronomy_engine(lat, lon, dr_utc):
    noon = local_apparent_noon(dr_utc, lat, lon, 0.0, 0.0)
    ref = ae_transit(lat, lon, noon.utc - timedelta(hours=6))
    assert abs(noon.utc - ref) < SECOND
    assert noon.lon_deg == lon and noon.lat_deg == lat
    assert abs(noon.utc - (dr_utc + timedelta(hours=6))) < timedelta(hours=18)   # same local day


def test_noon_of_a_vessel_running_west():
    # 270° at 12 kn from 45° N 30° W at 08:00 UTC: parallel sailing (textbook) gives her longitude
    # at noon; astronomy-engine's transit at that longitude must be the noon found.
    dr_utc = datetime(2026, 6, 21, 8, 0, tzinfo=UTC)
    zd = timedelta(hours=2)
    noon = local_apparent_noon(dr_utc, 45.0, -30.0, 270.0, 12.0, zd)
    hours = (noon.utc - dr_utc).total_seconds() / 3600
    expected_lon = -30.0 - 12.0 * hours / (60.0 * math.cos(math.radians(45.0)))
    assert abs(noon.lon_deg - expected_lon) < 1e-9 * ARCSEC
    assert abs(noon.utc - ae_transit(45.0, noon.lon_deg, noon.utc - timedelta(hours=6))) < SECOND
    stationary = local_apparent_noon(dr_utc, 45.0, -30.0, 0.0, 0.0)
    # Sailing west she meets the Sun later: about 4 min of time per degree of longitude made.
    lag_s = (noon.utc - stationary.utc).total_seconds()
    assert abs(lag_s - (-30.0 - noon.lon_deg) * 240.0) < 5.0
    assert noon.zone_time == (noon.utc - zd).replace(tzinfo=None)       # UTC = ZT + ZD
    assert noon.bearing == "S" and noon.iterations <= 4
    # Predicted meridian altitude 90° − |lat − Dec| against astronomy-engine's (topocentric,
    # airless) altitude; the Sun's parallax is below 0.15′.
    ae = astronomy.SearchHourAngle(astronomy.Body.Sun, astronomy.Observer(45.0, noon.lon_deg, 0),
                                   0.0, astronomy.Time.Make(2026, 6, 21, 12, 0, 0))
    assert abs(noon.predicted_alt_deg - ae.hor.altitude) < 0.5 * ARCMIN


def test_noon_of_a_vessel_running_east_with_current():
    dr_utc = datetime(2026, 3, 10, 20, 0, tzinfo=UTC)                  # evening before, east long.
    noon = local_apparent_noon(dr_utc, -20.0, 120.0, 100.0, 15.0, set_deg=45.0, drift_kn=2.0)
    assert abs(noon.utc - ae_transit(noon.lat_deg, noon.lon_deg, noon.utc - timedelta(hours=6))) \
        < SECOND
    assert noon.lon_deg > 120.0 and noon.zone_time is None


def test_noon_input_errors():
    with pytest.raises(NavInputError) as err:
        local_apparent_noon(datetime(2026, 6, 21, 8, 0), 45.0, -30.0, 0.0, 0.0)
    assert err.value.field == "date_utc"
    with pytest.raises(NavInputError) as err:
        local_apparent_noon(datetime(2026, 6, 21, 8, tzinfo=UTC), 45.0, -30.0, 0.0, 0.0, 2)
    assert err.value.field == "zone_description"


# ---------------------------------------------------------------- latitude by meridian altitude

@pytest.mark.parametrize("ho, dec, bearing, lat", [
    (65.0, 20.0, "S", 45.0),      # same names, body south of a northern observer
    (35.0, -15.0, "S", 40.0),     # contrary names: lat 40 N, Dec 15 S
    (80.0, 20.0, "N", 10.0),      # observer between the equator and the Dec (same names)
    (67.0, -10.0, "N", -33.0),    # southern observer, body north of her
    (65.0, 20.0, "N", -5.0),      # contrary names, observer just south of the equator
    (90.0, 12.0, "S", 12.0),      # body in the zenith
])
def test_meridian_rule_cases(ho, dec, bearing, lat):
    # The textbook rule, from memory: z = 90° − Ho named opposite to the bearing; same names add,
    # contrary names subtract (values worked by hand from 90° − |lat − Dec| = Ho).
    assert abs(latitude_by_meridian_altitude(ho, dec, body_bearing=bearing) - lat) < 1e-9 * ARCSEC
    # Bearing left to the DR (within 2° of the truth) gives the same.
    assert abs(latitude_by_meridian_altitude(ho, dec, dr_lat_deg=lat + 1.5) - lat) < 1e-9 * ARCSEC


@pytest.mark.parametrize("ho, dec, lat", [(45.0, 75.0, 60.0), (30.0, -70.0, -50.0),
                                          (5.0, 89.0, 6.0)])
def test_lower_transit_below_the_pole(ho, dec, lat):
    # Below the pole: lat = Ho + p with the name of the Dec (textbook, from memory);
    # lat 60 N, Dec 75 N: Ho = 60 − 15 = 45.
    assert abs(latitude_by_meridian_altitude(ho, dec, lower_transit=True) - lat) < 1e-9 * ARCSEC
    good = "N" if dec > 0 else "S"
    assert abs(latitude_by_meridian_altitude(ho, dec, body_bearing=good, lower_transit=True)
               - lat) < 1e-9 * ARCSEC
    with pytest.raises(NavInputError) as err:
        latitude_by_meridian_altitude(ho, dec, body_bearing="S" if dec > 0 else "N",
                                      lower_transit=True)
    assert err.value.field == "body_bearing"


def test_meridian_rule_array():
    ho = np.array([65.0, 35.0, 80.0, 45.0])
    dec = np.array([20.0, -15.0, 20.0, 75.0])
    bearing = np.array(["S", "s", "N", "N"])
    lower = np.array([False, False, False, True])
    lat = latitude_by_meridian_altitude(ho, dec, body_bearing=bearing, lower_transit=lower)
    assert np.allclose(lat, [45.0, 40.0, 10.0, 60.0], atol=1e-9 * ARCSEC)   # cases above
    lat_dr = latitude_by_meridian_altitude(ho[:3], dec[:3], dr_lat_deg=np.array([44.0, 41.0, 9.0]))
    assert np.allclose(lat_dr, [45.0, 40.0, 10.0], atol=1e-9 * ARCSEC)


@settings(max_examples=200, deadline=None)
@given(lat=st.floats(-80, 80), dec=st.floats(-30, 30))
def test_meridian_rule_inverts_the_meridian_altitude(lat, dec):
    # Property: Ho = 90° − |lat − Dec| on the meridian (geometry); the rule gives lat back.
    ho = 90.0 - abs(lat - dec)
    assume(ho >= 0.0)                 # the body must be above the horizon
    bearing = "S" if lat >= dec else "N"
    assert abs(latitude_by_meridian_altitude(ho, dec, body_bearing=bearing) - lat) < 1e-9


def test_meridian_rule_errors():
    with pytest.raises(NavInputError) as err:
        latitude_by_meridian_altitude(50.0, 10.0)
    assert err.value.field == "body_bearing"
    with pytest.raises(NavInputError) as err:
        latitude_by_meridian_altitude(10.0, 85.0, body_bearing="S")   # 85 + 80 is no latitude
    assert err.value.field == "body_bearing"
    with pytest.raises(NavInputError) as err:
        latitude_by_meridian_altitude(10.0, 5.0, body_bearing="E")
    assert err.value.field == "body_bearing"
    with pytest.raises(NavInputError) as err:
        latitude_by_meridian_altitude(95.0, 5.0, body_bearing="S")
    assert err.value.field == "ho_deg"


def test_noon_sight_end_to_end():
    # The Sun's altitude at the predicted noon (geographiclib) reduces to the vessel's latitude.
    dr_utc = datetime(2026, 11, 3, 6, 0, tzinfo=UTC)
    noon = local_apparent_noon(dr_utc, -33.9, 18.4, 225.0, 8.0)
    ho = true_alt(noon.lat_deg, noon.lon_deg, "Sun", noon.utc)
    lat = latitude_by_meridian_altitude(ho, noon.sun_dec_deg, dr_lat_deg=noon.lat_deg + 0.2)
    assert abs(lat - noon.lat_deg) < 0.01 * ARCMIN
    assert abs(longitude_from_meridian_passage(noon.utc) - noon.lon_deg) < 0.01 * ARCMIN


# ---------------------------------------------------------------- longitude by the time of noon

@pytest.mark.parametrize("lon", [-179.95, -64.3, 0.0, 18.4, 179.95])
def test_longitude_from_timed_noon_against_astronomy_engine(lon):
    t = ae_transit(25.0, lon, datetime(2026, 8, 15, 0, 0, tzinfo=UTC) - timedelta(hours=lon / 15))
    got = longitude_from_meridian_passage(t)
    # 1 s of time = 0.25′ of longitude (the astronomy-engine UT1 ≈ UTC bound above).
    assert abs((got - lon + 180) % 360 - 180) < 0.25 * ARCMIN


def test_longitude_from_noon_array_and_time_of_day():
    lons = np.array([-120.0, -5.0, 60.0])
    ts = [ae_transit(0.0, lo, datetime(2026, 4, 1, 0, 0, tzinfo=UTC) - timedelta(hours=lo / 15))
          for lo in lons]
    t64 = np.array([np.datetime64(t.replace(tzinfo=None), "us") for t in ts])
    got = longitude_from_meridian_passage(t64)
    assert got.shape == (3,) and np.all(np.abs(got - lons) < 0.25 * ARCMIN)
    one = longitude_from_meridian_passage(ts[1].timetz(), date=ts[1].date())
    assert abs(one - lons[1]) < 0.25 * ARCMIN
    with pytest.raises(NavInputError) as err:
        longitude_from_meridian_passage(time(12, 0))
    assert err.value.field == "date"


def test_equation_of_time_working_matches_gha_working():
    t = datetime(2026, 11, 3, 11, 0, 0, tzinfo=UTC)
    work = longitude_by_equation_of_time(t)
    # The two workings are the same relation, EoT = GHA − (15°·UT1 − 180°) (nav.almanac's
    # definition), so they agree to rounding.
    assert abs(work.lon_deg - longitude_from_meridian_passage(t)) < 1e-6 * ARCSEC
    # Early November the Sun is some 16 min fast and crosses Greenwich about 11:44 (from memory).
    assert abs(work.equation_of_time_min - 16.4) < 0.5
    assert abs(work.greenwich_lan_ut1_h - (11 + 44 / 60)) < 1 / 60
    arr = longitude_by_equation_of_time(np.array([np.datetime64("2026-02-11T14:00"),
                                                  np.datetime64("2026-11-03T11:00")]))
    assert arr.equation_of_time_min.shape == (2,)
    assert abs(arr.equation_of_time_min[0] + 14.2) < 0.5      # mid-February about −14 min (memory)


# ---------------------------------------------------------------- Polaris

def test_polaris_latitude_scalar_against_the_truth():
    t = datetime(2026, 1, 15, 4, 20, tzinfo=UTC)
    for lat in (0.5, 18.0, 41.3, 63.0):
        ho = true_alt(lat, -45.0, "Polaris", t)             # geographiclib
        assert abs(polaris_latitude(ho, t, -45.0) - lat) < 1e-4 * ARCSEC


def _polaris_day():
    t64 = np.datetime64("2026-07-04T00:00", "us") + np.arange(24) * np.timedelta64(3600, "s")
    pol = almanac.body_almanac("Polaris", t64)
    return t64, pol


def test_polaris_latitude_array_and_the_classic_approximations():
    t64, pol = _polaris_day()
    lon = 12.5
    worst_first, worst_second = 0.0, 0.0
    for lat in (10.0, 35.0, 55.0):
        ho = np.array([90.0 - SPHERE.Inverse(lat, lon, float(d), float(-g))["a12"]
                       for g, d in zip(pol.gha_deg, pol.dec_deg)])        # geographiclib truth
        got = polaris_latitude(ho, t64, lon)
        assert got.shape == (24,) and np.all(np.abs(got - lat) < 1e-4 * ARCSEC)
        p = np.radians(90.0 - pol.dec_deg)
        lha = np.radians(pol.gha_deg + lon)
        first = ho - np.degrees(p * np.cos(lha))
        second = first + np.degrees(0.5 * p ** 2 * np.sin(lha) ** 2 * np.tan(np.radians(ho)))
        # First-order error is the second-order term, ½ p² sin² LHA tan Ho (series, from memory),
        # plus third-order terms of order p³ tan² Ho, below 0.02′ here.
        bound = np.degrees(0.5 * p ** 2 * np.sin(lha) ** 2 * np.tan(np.radians(ho))) + 0.02 * ARCMIN
        assert np.all(np.abs(got - first) <= bound)
        assert np.all(np.abs(got - second) < 0.02 * ARCMIN)
        worst_first = max(worst_first, float(np.max(np.abs(got - first))))
        worst_second = max(worst_second, float(np.max(np.abs(got - second))))
    # The first-order rule is off by a few tenths of a minute at 55° N: worth doing exactly.
    assert 0.1 * ARCMIN < worst_first < 0.5 * ARCMIN


def test_polaris_errors():
    t = datetime(2026, 1, 15, 4, 20, tzinfo=UTC)
    with pytest.raises(NavInputError) as err:
        polaris_latitude(91.0, t, 0.0)
    assert err.value.field == "ho_deg"
    with pytest.raises(NavInputError) as err:
        polaris_latitude(40.0, datetime(2026, 1, 15, 4, 20), 0.0)
    assert err.value.field == "utc"
