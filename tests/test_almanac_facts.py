"""Facts of the trade that the almanac engine must reproduce.

Each value is marked with where it comes from: "common practice, no source" (what every navigator
is taught), "from memory of published tables" (almanac figures remembered, not copied), or a
reference library (ERFA) where one gives the exact figure.
"""

from __future__ import annotations

from datetime import datetime, timedelta

import erfa
import numpy as np
import pytest

from nav import almanac as al
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG, SECONDS_PER_DAY

ARCMIN = ARCMIN_DEG
SECOND = 1.0                     # seconds
MINUTE_S = 60.0
EOT_LAST_DIGIT_MIN = 0.1         # minutes of time: the last digit of the published figures
ARCMIN_UNIT = 1.0                # sd_arcmin and hp_arcmin are already in minutes of arc
FLOAT_NOISE_MIN = 1e-9           # minutes of time: float rounding only
SIDEREAL_RATE_DEG_PER_S = 360.985_647_366 / SECONDS_PER_DAY   # IAU 1982 GMST rate (from memory)
SOLAR_RATE_DEG_PER_S = 360.0 / SECONDS_PER_DAY

# The mean sidereal day: 23 h 56 min 4.0905 s of mean solar time (common practice; the 4.0905 s
# from memory of the IAU 1982 GMST expression, 86 400 s / 1.002 737 909 35).
MEAN_SIDEREAL_DAY_S = 23 * 3600 + 56 * 60 + 4.0905
UNIX_EPOCH_JD = 2_440_587.5          # 1970-01-01T00:00 as a Julian date
TT_MINUS_UTC_2025_S = 32.184 + 37.0  # TT - TAI + the 37 leap seconds since 2017 (IERS Bulletin C)


def _hourly(year: int) -> np.ndarray:
    start = np.datetime64(f"{year}-01-01T00:00:00", "us")
    stop = np.datetime64(f"{year + 1}-01-01T00:00:00", "us")
    return np.arange(start, stop, np.timedelta64(1, "h"))


@pytest.fixture(scope="module")
def year_2025():
    t = _hourly(2025)
    return t, al.equation_of_time_min(t), al.body_almanac("Sun", t)


# ---------------------------------------------------------------- sidereal time

def test_mean_sidereal_day_from_the_rate_of_gha_aries():
    # Over one year GHA Aries turns 367 times less a little; nutation changes GAST by < 0.4 s a
    # year and UT1 - UTC drifted by < 0.1 s in 2024, so the mean day comes out to a few ms.
    t = np.array(["2024-01-01T00:00:00", "2025-01-01T00:00:00"], dtype="datetime64[us]")
    aries = al.gha_aries_deg(t)
    days = 366
    turns = round(days * SECONDS_PER_DAY / MEAN_SIDEREAL_DAY_S - (aries[1] - aries[0]) / 360.0)
    total_deg = 360.0 * turns + (aries[1] - aries[0])
    measured_s = days * SECONDS_PER_DAY * 360.0 / total_deg
    # 23 h 56 min 4.09 s (common practice, no source), to the 0.005 s of its last digit.
    assert measured_s == pytest.approx(MEAN_SIDEREAL_DAY_S, abs=0.005 * SECOND)


def test_successive_transits_of_a_star():
    first = al.meridian_passage("Sirius", 0.0, datetime(2025, 1, 10, 23, tzinfo=UTC))
    second = al.meridian_passage("Sirius", 0.0, first + timedelta(hours=23, minutes=56))
    interval_s = (second - first).total_seconds()
    # One sidereal day between transits of a star (common practice, no source); the star's own
    # apparent motion (aberration, nutation) changes it by a few ms. meridian_passage solves to
    # 0.05 s.
    assert interval_s == pytest.approx(MEAN_SIDEREAL_DAY_S, abs=0.1 * SECOND)
    # "A star transits about 3 min 56 s earlier each day" (common practice, no source).
    earlier_s = SECONDS_PER_DAY - interval_s
    assert earlier_s == pytest.approx(3 * MINUTE_S + 56, abs=1.0 * SECOND)
    # And the transit really is a transit: LHA 0 at Greenwich, to 0.05 s of sidereal motion.
    lha = float(al.body_almanac("Sirius", second).gha_deg)
    assert min(lha, 360.0 - lha) <= 0.05 * SIDEREAL_RATE_DEG_PER_S


# ---------------------------------------------------------------- the equation of time

def test_equation_of_time_crosses_zero_four_times(year_2025):
    t, eot, _ = year_2025
    crossings = t[1:][np.diff(np.sign(eot)) != 0]
    days = [int((c - np.datetime64("2025-01-01T00:00:00", "us")) / np.timedelta64(1, "D")) + 1
            for c in crossings]
    assert len(crossings) == 4
    # About 15 April, 13 June, 1 September and 25 December (from memory of published tables),
    # each to within 3 days. Day of year 2025: 105, 164, 244, 359.
    for day, expected in zip(days, (105, 164, 244, 359)):
        assert abs(day - expected) <= 3, (day, expected)


def test_equation_of_time_extremes(year_2025):
    t, eot, _ = year_2025
    # About +16.4 min in early November and -14.2 min in mid-February (from memory of published
    # tables; positive = apparent Sun ahead of the mean Sun, i.e. sundial fast).
    i_max, i_min = int(np.argmax(eot)), int(np.argmin(eot))
    assert eot[i_max] == pytest.approx(16.4, abs=EOT_LAST_DIGIT_MIN)
    assert eot[i_min] == pytest.approx(-14.2, abs=EOT_LAST_DIGIT_MIN)
    day_max = t[i_max].astype("datetime64[D]")
    day_min = t[i_min].astype("datetime64[D]")
    assert np.datetime64("2025-10-30") <= day_max <= np.datetime64("2025-11-07")
    assert np.datetime64("2025-02-07") <= day_min <= np.datetime64("2025-02-16")


def test_equation_of_time_scalar_and_array():
    t = datetime(2025, 11, 3, 12, tzinfo=UTC)
    one = al.equation_of_time_min(t)
    many = al.equation_of_time_min(np.array([np.datetime64("2025-11-03T12:00:00", "us")] * 2))
    assert np.ndim(one) == 0 and many.shape == (2,)
    assert np.abs(many - one).max() <= FLOAT_NOISE_MIN


@pytest.mark.parametrize("date", [datetime(2025, 2, 11, tzinfo=UTC), datetime(2025, 4, 15, tzinfo=UTC),
                                  datetime(2025, 7, 26, tzinfo=UTC), datetime(2025, 11, 3, tzinfo=UTC)])
def test_sun_meridian_passage_at_greenwich_is_noon_less_eot(date):
    noon = date.replace(hour=12)
    transit = al.meridian_passage("Sun", 0.0, noon)
    eot_min = float(al.equation_of_time_min(transit))
    # Mer. pass. of the Sun at Greenwich = 12:00 - EoT (common practice, no source). The relation
    # is exact in UT1; nav works in UTC, which keeps within 0.9 s of UT1 (ITU-R TF.460, from
    # memory), and the transit is solved to 0.05 s.
    expected = noon - timedelta(minutes=eot_min)
    assert abs((transit - expected).total_seconds()) <= 0.9 * SECOND + 0.05 * SECOND
    # At transit the Sun's GHA is 0 (LHA 0 at longitude 0).
    gha = float(al.body_almanac("Sun", transit).gha_deg)
    assert min(gha, 360.0 - gha) <= 0.05 * SOLAR_RATE_DEG_PER_S


def test_meridian_passage_west_longitude_is_later():
    # At 60 deg W the Sun transits 4 h later than at Greenwich, less the few seconds the equation
    # of time changes in 4 h (common practice, no source: 4 min of time per degree of longitude).
    g = al.meridian_passage("Sun", 0.0, datetime(2025, 6, 1, 12, tzinfo=UTC))
    w = al.meridian_passage("Sun", -60.0, datetime(2025, 6, 1, 16, tzinfo=UTC))
    assert abs((w - g).total_seconds() - 4 * 3600.0) <= 10 * SECOND


# ---------------------------------------------------------------- the solstice

def test_sun_declination_at_june_solstice_is_the_obliquity(year_2025):
    t, _, sun = year_2025
    june = (t >= np.datetime64("2025-06-15")) & (t < np.datetime64("2025-06-28"))
    i = int(np.argmax(np.where(june, sun.dec_deg, -90.0)))
    dec_max = sun.dec_deg[i]
    # About 23 deg 26' (from memory of published tables), to 1'.
    assert dec_max == pytest.approx(23.0 + 26.0 * ARCMIN, abs=1.0 * ARCMIN)
    # Exactly: the true obliquity of date, ERFA obl06 (IAU 2006) + nut06a (IAU 2000A) at the
    # solstice; the Sun's ecliptic latitude (< 1.2") and hourly sampling (< 0.01") make the rest.
    jd_tt = (UNIX_EPOCH_JD + t[i].astype("datetime64[s]").astype(np.int64) / SECONDS_PER_DAY
             + TT_MINUS_UTC_2025_S / SECONDS_PER_DAY)
    eps = np.degrees(erfa.obl06(jd_tt, 0.0) + erfa.nut06a(jd_tt, 0.0)[1])
    assert dec_max == pytest.approx(eps, abs=0.03 * ARCMIN)
    # The solstice falls on 21 June in 2025 (from memory of published tables).
    assert t[i].astype("datetime64[D]") == np.datetime64("2025-06-21")


# ---------------------------------------------------------------- HP and SD in the almanac's range

def test_semi_diameters_and_parallax_in_their_yearly_range(year_2025):
    _, _, sun = year_2025
    # Sun's SD from about 15.7' (early July) to 16.3' (early January) (from memory of published
    # tables); its HP about 0.15' (8.8").
    assert sun.sd_arcmin.min() == pytest.approx(15.75, abs=0.05 * ARCMIN_UNIT)
    assert sun.sd_arcmin.max() == pytest.approx(16.27, abs=0.05 * ARCMIN_UNIT)
    assert sun.hp_arcmin.max() == pytest.approx(0.15, abs=0.01 * ARCMIN_UNIT)
    moon = al.body_almanac("Moon", _hourly(2025)[::6])
    # Moon's HP between about 54' and 61.5', SD between about 14.7' and 16.8' (from memory of
    # published tables).
    assert 53.5 <= moon.hp_arcmin.min() <= 54.5 and 61.0 <= moon.hp_arcmin.max() <= 61.6
    assert 14.6 <= moon.sd_arcmin.min() <= 14.9 and 16.6 <= moon.sd_arcmin.max() <= 16.8
