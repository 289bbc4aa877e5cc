"""The shell's `sky` and `meridian` (nav/shell/sky_cmds.py), driven line by line on an invented
passage: the cutter "Kittiwake" (invented) west of the Azores, 21 June 2026.

References: astropy 5+/ERFA (airless topocentric AltAz, pressure 0) at the position reached by
Mercator sailing written out in tests/references.py (American Practical Navigator), not
nav.sailing. The shell prints times to the minute: a printed sunrise is checked by the Sun's
altitude astropy gives at that minute, within the Sun's change of altitude in 1.5 min.
"""

import re
from datetime import datetime

import numpy as np

from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG
from references import mercator_sailing
from shell_driver import open_state, run_lines

DIP_ARCMIN_PER_SQRT_M = 1.76      # the almanac's dip formula, dip = 1.76′·√h(m) (from memory)
START = datetime(2026, 6, 21, 8, 0, tzinfo=UTC)
SETUP = ("set eye 2.4 ie +1.2 zone +2",
         "dr 41 12.0 N 032 06.0 W course 245 speed 6.5 at 2026-06-21T08:00:00Z")


def clock():
    return datetime(2026, 6, 21, 15, 0, tzinfo=UTC)


def _sun_alt(utc, lat, lon):
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, get_sun
    from astropy.time import Time

    t = Time(utc.replace(tzinfo=None), scale="utc")
    loc = EarthLocation.from_geodetic(lon=lon * u.deg, lat=lat * u.deg, height=0 * u.m)
    return float(get_sun(t).transform_to(AltAz(obstime=t, location=loc,
                                                pressure=0 * u.hPa)).alt.deg)


def test_sky_from_the_log(tmp_path):
    st, log = open_state(tmp_path / "k.jsonl", "Kittiwake", "Westward", clock)
    try:
        run_lines(st, *SETUP)
        out = run_lines(st, "sky")
    finally:
        log.close()
    assert "zone +2 (given)" in out and "CAUTION" in out
    m = re.search(r"sunrise\s+(\d\d):(\d\d)\s+(\d\d):(\d\d)", out)
    assert m, out
    utc = datetime(2026, 6, 21, int(m.group(3)), int(m.group(4)), tzinfo=UTC)
    assert int(m.group(3)) - int(m.group(1)) == 2               # UTC = ZT + 2
    hours = (utc - START).total_seconds() / 3600.0
    lat, lon = mercator_sailing(41.2, -32.1, 245.0, 6.5 * hours)
    alt = _sun_alt(utc, lat, lon)
    dip = DIP_ARCMIN_PER_SQRT_M * np.sqrt(2.4) * ARCMIN_DEG     # eye 2.4 m from the settings
    rate = 15.0 * np.cos(np.radians(lat)) * 0.75 / 60.0         # deg/min, generous near rising
    assert abs(alt - (-50 * ARCMIN_DEG - dip)) < 1.5 * rate
    assert "moonset: the Moon's rise or set falls" in out       # as `nav sky` (test_sky.py)


def test_meridian_from_the_log_and_refusals(tmp_path):
    st, log = open_state(tmp_path / "k.jsonl", "Kittiwake", "Westward", clock)
    try:
        run_lines(st, *SETUP)
        out = run_lines(st, "meridian Rigil Kentaurus", "meridian jupiter 2026-06-21")
        bad = run_lines(st, "meridian Vegaa", "meridian", "meridian Sun 2026-13-01")
    finally:
        log.close()
    assert "Rigil Kentaurus is below the horizon on the meridian" in out
    assert "Hs to preset" in out.split("Jupiter")[1] and "IE +1.2′" in out
    assert bad.count("error:") == 3 and "did you mean Vega" in bad
