"""nav.equal_altitudes / `nav equal-altitudes` / the shell's `equal-altitudes`.

References:
- astropy 5+/ERFA: two instants at which the Sun's airless topocentric altitude is the same, at
  the positions of a vessel sailing a Mercator rhumb line (tests/references.py, the American
  Practical Navigator's Mercator sailing), found by bisection in this file. nav must recover the
  longitude she had at the first sight.
- The equation of equal altitudes (from memory): the change of Dec Δd between the sights moves
  the longitude by (Δd/2)·(tan φ / sin t − tan δ / tan t), t the half interval in arc.
Scenarios (the schooner "Sanderling", invented) are invented.
"""

import json
import math
from datetime import datetime, timedelta

import numpy as np
import pytest

from nav.equal_altitudes import equal_altitudes
from nav.errors import NavInputError
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG
from references import mercator_sailing


def _sun_alt(t, lat, lon):
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, get_body
    from astropy.time import Time

    tt = Time(t.replace(tzinfo=None), scale="utc")
    loc = EarthLocation.from_geodetic(lon=lon * u.deg, lat=lat * u.deg, height=0 * u.m)
    return float(get_body("sun", tt, loc).transform_to(
        AltAz(obstime=tt, location=loc, pressure=0 * u.hPa)).alt.deg)


def _afternoon_instant(t1, lat1, lon1, course, speed, guess):
    """astropy: the instant after noon at which the Sun is as high as at t1, for the vessel."""
    def pos(t):
        return mercator_sailing(lat1, lon1, course, speed * (t - t1).total_seconds() / 3600.0)

    target = _sun_alt(t1, lat1, lon1)
    lo, hi = guess - timedelta(minutes=20), guess + timedelta(minutes=20)
    g_lo = _sun_alt(lo, *pos(lo)) - target
    for _ in range(22):
        mid = lo + (hi - lo) / 2
        g = _sun_alt(mid, *pos(mid)) - target
        if np.sign(g) == np.sign(g_lo):
            lo, g_lo = mid, g
        else:
            hi = mid
    return lo + (hi - lo) / 2


@pytest.mark.parametrize("day,lat,lon,course,speed", [
    (datetime(2026, 3, 20, 12, 0, tzinfo=UTC), 20.0, -35.0, 250.0, 7.0),   # Dec changing fast
    (datetime(2026, 6, 21, 12, 0, tzinfo=UTC), -30.0, -45.0, 45.0, 12.0),
    (datetime(2026, 9, 23, 12, 0, tzinfo=UTC), 45.0, 150.0, 0.0, 0.0),
])
def test_recovers_the_longitude_against_astropy(day, lat, lon, course, speed):
    # the forenoon sight about 3 h before local noon (12:00 UTC − lon/15 h)
    t1 = day - timedelta(hours=lon / 15.0 + 3.0)
    guess = t1 + timedelta(hours=6)
    t2 = _afternoon_instant(t1, lat, lon, course, speed, guess)
    r = equal_altitudes(t1, t2, lat, lon + 0.7, course_deg=course if speed else None,
                        speed_kn=speed)       # a DR longitude 42′ out: only a first guess
    assert abs(r.lon_first_deg - lon) < 0.2 * ARCMIN_DEG


def test_dec_correction_matches_the_equation_of_equal_altitudes():
    t1 = datetime(2026, 3, 20, 11, 0, tzinfo=UTC)
    t2 = datetime(2026, 3, 20, 17, 20, tzinfo=UTC)
    r = equal_altitudes(t1, t2, 20.0, -35.0)
    half_t = (t2 - t1).total_seconds() / 3600.0 / 2 * 15.0          # degrees of hour angle
    dec = 0.0                                                       # equinox: Dec about 0
    expected = (r.dec_change_arcmin / 2) * (math.tan(math.radians(20.0)) / math.sin(
        math.radians(half_t)) - math.tan(math.radians(dec)) / math.tan(math.radians(half_t)))
    assert abs(abs(r.dec_correction_arcmin) - abs(expected)) < 0.1
    assert r.run_correction_arcmin == 0.0


def test_refusals():
    t1 = datetime(2026, 3, 20, 11, 0, tzinfo=UTC)
    for later in (-1, 13):                  # the field is named as the user's option, --second
        with pytest.raises(NavInputError) as e:
            equal_altitudes(t1, t1 + timedelta(hours=later), 20.0, -35.0)
        assert e.value.field == "second"
    with pytest.raises(NavInputError) as e:
        equal_altitudes(t1, t1 + timedelta(hours=4), 89.5, -35.0)
    assert e.value.field == "dr_lat"


def test_cli_and_shell(tmp_path, capsys):
    from nav.cli import main
    from shell_driver import open_state, run_lines

    assert main(["equal-altitudes", "--first", "2026-03-20T11:00:00Z", "--second",
                 "2026-03-20T17:20:00Z", "--dr-lat", "20 N", "--dr-lon", "35 W", "--course",
                 "250", "--speed", "7", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert {"lon_deg", "dec_correction_arcmin", "run_correction_arcmin"} <= set(out)
    st, log = open_state(tmp_path / "s.jsonl", "Sanderling", "Trades",
                         lambda: datetime(2026, 3, 20, 18, 0, tzinfo=UTC))
    try:
        text = run_lines(st, "dr 20 00.0 N 035 00.0 W course 250 speed 7 at "
                             "2026-03-20T10:00:00Z",
                         "equal-altitudes 11:00:00 17:20:00 log", "equal-altitudes 11:00:00")
    finally:
        log.close()
    assert "correction for the change of Dec" in text and "logged e0003: note" in text
    assert "error:" in text
