"""The navigator's relations between hour angles, and the engine's edges.

Relations (the sign conventions the trade uses, e.g. the American Practical Navigator, chapter on
navigational astronomy; from memory): longitude east +, and
  LHA = GHA + lon          LST = GHA Aries + lon          LHA = LST - RA
  SHA = 360 deg - RA       GHA star = GHA Aries + SHA
all reduced to [0, 360). They hold for any body and longitude to 1e-9 deg (rounding only).
"""

from __future__ import annotations

from datetime import datetime, timedelta

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nav import almanac as al
from nav.angles import format_dm
from nav.ephemeris import FIRST_INSTANT, LAST_INSTANT, RANGE_TEXT
from nav.errors import OutOfRangeError
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG, ARCSEC_DEG

ROUNDING_DEG = 1e-9          # the task's bound for relations that are identities
ARCMIN = ARCMIN_DEG
BODIES = al.body_names()
SIDEREAL_RATE_DEG_PER_S = 360.985_647_366 / 86_400.0   # IAU 1982 GMST rate (from memory)
SOLAR_RATE_DEG_PER_S = 360.0 / 86_400.0                # 15 deg per hour of mean solar time

instants = st.datetimes(min_value=datetime(1900, 1, 1), max_value=datetime(2050, 12, 31, 23, 59, 59),
                        timezones=st.just(UTC))
longitudes = st.floats(min_value=-180.0, max_value=180.0, allow_nan=False)


def circ(a, b):
    """|a - b| on the circle, degrees."""
    return np.abs(np.remainder(np.asarray(a, float) - np.asarray(b, float) + 180.0, 360.0) - 180.0)


def in_range(x):
    x = np.asarray(x)
    return bool(np.all((x >= 0.0) & (x < 360.0)))


@settings(max_examples=40, deadline=None)
@given(body=st.sampled_from(BODIES), t=instants, lon=longitudes)
def test_hour_angle_relations(body, t, lon):
    a = al.body_almanac(body, t)
    lha = al.lha_deg(a.gha_deg, lon)
    lst = al.lst_deg(a.gha_aries_deg, lon)
    for value in (lha, lst, a.gha_deg, a.sha_deg, a.ra_deg, a.gha_aries_deg):
        assert in_range(value)
    # LHA = GHA + lon (east +), checked against the sum written out here.
    assert circ(lha, a.gha_deg + lon) <= ROUNDING_DEG
    # LST = GHA Aries + lon.
    assert circ(lst, a.gha_aries_deg + lon) <= ROUNDING_DEG
    # LHA = LST - RA: the engine's GHA must be GHA Aries - RA for every kind of body.
    assert circ(al.lha_from_lst(lst, a.ra_deg), lha) <= ROUNDING_DEG
    # SHA = 360 - RA.
    assert circ(al.sha_from_ra(a.ra_deg), 360.0 - a.ra_deg) <= ROUNDING_DEG
    assert circ(a.sha_deg, 360.0 - a.ra_deg) <= ROUNDING_DEG
    # GHA = GHA Aries + SHA (the trade uses it for stars; it is true of every body).
    assert circ(al.gha_from_sha(a.gha_aries_deg, a.sha_deg), a.gha_deg) <= ROUNDING_DEG


@settings(max_examples=15, deadline=None)
@given(t=instants, lon=st.lists(longitudes, min_size=3, max_size=3))
def test_relations_on_arrays(t, lon):
    t64 = np.datetime64(t.replace(tzinfo=None), "us") + np.arange(3) * np.timedelta64(3600, "s")
    a = al.body_almanac("Vega", t64)
    lon = np.array(lon)
    lha = al.lha_deg(a.gha_deg, lon)
    assert lha.shape == (3,) and in_range(lha)
    assert circ(lha, a.gha_deg + lon).max() <= ROUNDING_DEG
    assert circ(al.lha_from_lst(al.lst_deg(a.gha_aries_deg, lon), a.ra_deg), lha).max() <= ROUNDING_DEG


def test_lha_signs_worked_example():
    # Trade rule (common practice, no source): "longitude east, LHA greatest; longitude west,
    # LHA least". A body on the Greenwich meridian (GHA 0) seen from 30 deg W has LHA 330 deg,
    # from 30 deg E LHA 30 deg.
    assert al.lha_deg(0.0, -30.0) == pytest.approx(330.0, abs=ROUNDING_DEG)
    assert al.lha_deg(0.0, 30.0) == pytest.approx(30.0, abs=ROUNDING_DEG)
    # GHA 350, 20 deg E: LHA 10 (wraps through 360).
    assert al.lha_deg(350.0, 20.0) == pytest.approx(10.0, abs=ROUNDING_DEG)
    # SHA of a star at RA 6 h (90 deg) is 270 deg; at RA 0 it is 0, not 360.
    assert al.sha_from_ra(90.0) == pytest.approx(270.0, abs=ROUNDING_DEG)
    assert al.sha_from_ra(0.0) == 0.0


# ---------------------------------------------------------------- the 0/360 wrap

def _crossing_instants(body: str, t_guess: datetime) -> np.ndarray:
    """One-second instants, two minutes either side of the body's Greenwich transit (GHA 360 -> 0)."""
    t_cross = al.meridian_passage(body, 0.0, t_guess)
    base = np.datetime64(t_cross.replace(tzinfo=None), "s").astype("datetime64[us]")
    return base + np.arange(-120, 121) * np.timedelta64(1, "s")


# Hour-angle rates (common practice, no source): the Sun 15"/s of mean solar time (to 0.02"/s
# through the year, as the equation of time changes by < 30 s a day), a star 15.041"/s (the
# sidereal rate), the Moon about 14.5"/s (it transits some 50 min later each day, from memory).
@pytest.mark.parametrize("body, rate, tol", [
    ("Sun", SOLAR_RATE_DEG_PER_S, 0.02 * ARCSEC_DEG),
    ("Sirius", SIDEREAL_RATE_DEG_PER_S, 0.001 * ARCSEC_DEG),
    ("Moon", 14.5 * ARCSEC_DEG, 0.2 * ARCSEC_DEG),
])
def test_gha_wrap_is_continuous(body, rate, tol):
    t64 = _crossing_instants(body, datetime(2026, 3, 20, 12, tzinfo=UTC))
    gha = al.body_almanac(body, t64).gha_deg
    assert in_range(gha)
    raw_steps = np.diff(gha)
    # Exactly one wrap inside the four minutes (the transit is there by construction).
    assert np.count_nonzero(raw_steps < -180.0) == 1
    # Continuous mod 360: every one-second step is the same (to 0.001"/s) and is the body's rate.
    steps = np.remainder(raw_steps + 180.0, 360.0) - 180.0
    assert np.ptp(steps) <= 0.001 * ARCSEC_DEG
    assert np.abs(np.median(steps) - rate) <= tol


def test_gha_aries_wrap_is_continuous():
    t = datetime(2026, 9, 22, 12, tzinfo=UTC)
    g0 = float(al.gha_aries_deg(t))
    t_cross = t + timedelta(seconds=(360.0 - g0) / SIDEREAL_RATE_DEG_PER_S)
    base = np.datetime64(t_cross.replace(tzinfo=None), "s").astype("datetime64[us]")
    aries = al.gha_aries_deg(base + np.arange(-30, 31) * np.timedelta64(1, "s"))
    assert in_range(aries)
    steps = np.remainder(np.diff(aries) + 180.0, 360.0) - 180.0
    assert np.count_nonzero(np.diff(aries) < -180.0) == 1
    # GAST advances 15.041"/s (IAU 1982 rate); nutation changes it by < 1e-6 of that.
    assert np.all(np.abs(steps - SIDEREAL_RATE_DEG_PER_S) <= 0.001 * ARCSEC_DEG)


# ---------------------------------------------------------------- the first and last instants

def test_first_and_last_supported_instants_work():
    assert FIRST_INSTANT == datetime(1900, 1, 1, tzinfo=UTC)
    assert LAST_INSTANT == datetime(2050, 12, 31, 23, 59, 59, tzinfo=UTC)
    for t in (FIRST_INSTANT, LAST_INSTANT):
        for rec in al.almanac(BODIES, t):
            assert in_range(rec.gha_deg) and in_range(rec.sha_deg), rec.body
            assert -90.0 <= rec.dec_deg <= 90.0, rec.body
    both = np.array(["1900-01-01T00:00:00", "2050-12-31T23:59:59"], dtype="datetime64[us]")
    moon = al.body_almanac("Moon", both)
    assert moon.gha_deg.shape == (2,) and np.all(np.isfinite(moon.hp_arcmin))


@pytest.mark.parametrize("t", [
    FIRST_INSTANT - timedelta(seconds=1),
    LAST_INSTANT + timedelta(seconds=1),
])
def test_one_second_outside_is_refused_naming_the_range(t):
    with pytest.raises(OutOfRangeError) as info:
        al.almanac(["Sun"], t)
    assert RANGE_TEXT in str(info.value)
    assert "1900-01-01 to 2050-12-31" in RANGE_TEXT
    # An array with one instant outside is refused whole, not partly computed.
    arr = np.array([np.datetime64("2000-01-01T00:00:00", "us"), np.datetime64(t.replace(tzinfo=None), "us")])
    with pytest.raises(OutOfRangeError):
        al.almanac(["Sirius"], arr)
    with pytest.raises(OutOfRangeError):
        al.equation_of_time_min(t)


# ---------------------------------------------------------------- scalar and array agree

FIELDS = ("gha_deg", "dec_deg", "ra_deg", "sha_deg", "gha_aries_deg", "distance_km", "hp_arcmin",
          "sd_arcmin")
# Scalars and arrays go through numpy's einsum with different shapes, whose summation order can
# differ in the last bit (observed: 4e-15 deg in RA, nothing in GHA or Dec).
BITWISE_DEG = 1e-12


@pytest.mark.parametrize("t", [datetime(1900, 1, 1, tzinfo=UTC), datetime(1969, 7, 20, 20, 17, 40, tzinfo=UTC),
                               datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC), LAST_INSTANT])
def test_scalar_and_array_inputs_agree(t):
    scalar = al.almanac(BODIES, t)
    t64 = np.datetime64(t.replace(tzinfo=None), "us")
    other = t64 - np.timedelta64(1, "h") if t == LAST_INSTANT else t64 + np.timedelta64(1, "h")
    array = al.almanac(BODIES, np.array([t64, other, t64]))
    for s, a in zip(scalar, array):
        assert s.body == a.body and s.kind == a.kind
        for f in FIELDS:
            sv, av = getattr(s, f), getattr(a, f)
            if sv is None:
                assert av is None, (s.body, f)
                continue
            assert np.ndim(sv) == 0, (s.body, f)          # a scalar in, scalars out
            assert np.shape(av) == (3,), (s.body, f)
            assert np.abs(av[[0, 2]] - sv).max() <= BITWISE_DEG * max(1.0, abs(float(sv))), (s.body, f)
    eot_s = al.equation_of_time_min(t)
    eot_a = al.equation_of_time_min(np.array([t64, t64]))
    assert np.ndim(eot_s) == 0 and np.abs(eot_a - eot_s).max() <= BITWISE_DEG
    assert float(al.gha_aries_deg(t)) == pytest.approx(float(al.gha_aries_deg(np.array([t64]))[0]),
                                                       abs=BITWISE_DEG)


def test_duplicate_and_alias_names_return_the_same_body():
    t = datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)
    recs = al.almanac(["sun", "Sun", "SIRIUS", "Sirius"], t)
    assert [r.body for r in recs] == ["Sun", "Sun", "Sirius", "Sirius"]
    assert recs[0].gha_deg == recs[1].gha_deg and recs[2].dec_deg == recs[3].dec_deg


# ---------------------------------------------------------------- signed zero in the display

def test_signed_zero_shows_no_minus():
    # A value that is zero, or rounds to zero, is shown without a sign (common practice).
    assert format_dm(-0.0) == "0\u00b000.0\u2032"
    assert format_dm(-0.4 / 600.0) == "0\u00b000.0\u2032"     # -0.04', rounds to 0.0'
    assert format_dm(-0.0, deg_width=3) == "000\u00b000.0\u2032"
    # A GHA that is exactly zero after the wrap.
    assert format_dm(float(al.lha_deg(-360.0, 0.0)), deg_width=3) == "000\u00b000.0\u2032"
