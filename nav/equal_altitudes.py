"""Longitude by equal altitudes of the Sun, before and after noon.

The Sun stands at the same altitude (the same sextant reading) at t1 in the forenoon and t2 in
the afternoon. Were the Sun's Dec fixed and the vessel still, the transit would fall midway, at
T = (t1 + t2)/2, and the longitude would be −GHA of the Sun then. Two corrections move it:

- the change of Dec between the sights (the Sun climbs or sinks in Dec some 0.4′ an hour near the
  equinoxes), which makes the afternoon altitude differ at the same hour angle;
- the vessel's run between the sights (her change of latitude changes the altitude; her change of
  longitude changes the hour angle).

Here both are taken exactly: the longitude at the first sight is the root of
Hc(t1, lat1, lon1) = Hc(t2, lat2, lon2), where (lat2, lon2) is (lat1, lon1) carried along her
course and speed to t2 (rhumb line), and Hc is the Sun's geocentric altitude from the almanac.
The working is also shown the trade's way: the longitude from the middle time alone, then the
correction for the change of Dec (the vessel held still), then the correction for the run, each
in seconds of time and minutes of arc. The latitude is the DR's: the result moves with it by
``lon_per_lat_arcmin`` (′ of longitude per 1′ of latitude), shown with it.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np

from .angles import norm180, norm360
from .errors import NavInputError

MIN_INTERVAL_H = 1.0       # common practice, no source: sights too near noon give a weak cut
MAX_INTERVAL_H = 10.0
TOLERANCE_DEG = 1e-9
POLAR_LIMIT_DEG = 85.0     # common practice, no source


@dataclass(frozen=True)
class EqualAltitudes:
    t1: datetime
    t2: datetime
    middle: datetime
    lat_deg: float                 # DR latitude at t1
    lon_first_deg: float           # the longitude found at t1
    lon_second_deg: float          # ... and carried to t2
    lon_noon_deg: float            # ... and at the middle time
    lon_middle_only_deg: float     # −GHA Sun at the middle time (no corrections)
    dec_correction_arcmin: float   # what the change of Dec moves the longitude at noon
    run_correction_arcmin: float   # what the run moves it
    dec_change_arcmin: float       # Dec(t2) − Dec(t1)
    alt_deg: float                 # the Sun's altitude at the sights, from the result
    lon_per_lat_arcmin: float      # change of the longitude for 1′ more latitude
    course_deg: float | None
    speed_kn: float
    warnings: tuple = ()


def _solve(t1, t2, lat1, lon_guess, course, speed):
    from .almanac import almanac
    from .reduction import hc_zn
    from .sailing import advance_position

    t64 = np.array([np.datetime64(t.replace(tzinfo=None), "us") for t in (t1, t2)])
    sun = almanac(["Sun"], t64)[0]
    gha, dec = np.asarray(sun.gha_deg), np.asarray(sun.dec_deg)
    hours = (t2 - t1).total_seconds() / 3600.0

    def diff(lon1):
        if speed > 0:
            lat2, lon2 = advance_position(lat1, lon1, course, speed, hours)
        else:
            lat2, lon2 = lat1, lon1
        h1 = float(hc_zn(lat1, dec[0], norm360(gha[0] + lon1))[0])
        h2 = float(hc_zn(float(lat2), dec[1], norm360(gha[1] + float(lon2)))[0])
        return h1 - h2

    lon = lon_guess
    for _ in range(40):
        f = diff(lon)
        step = 1e-4
        slope = (diff(lon + step) - f) / step
        if slope == 0:
            break
        new = lon - f / slope
        if abs(new - lon) < TOLERANCE_DEG:
            lon = new
            break
        lon = new
    return float(norm180(lon)), dec


def equal_altitudes(t1: datetime, t2: datetime, lat_deg: float, lon_deg: float, *,
                    course_deg: float | None = None, speed_kn: float = 0.0) -> EqualAltitudes:
    """Longitude from two equal altitudes of the Sun at `t1` (forenoon) and `t2` (afternoon);
    (lat_deg, lon_deg) is the DR at t1 (the longitude only as a first guess)."""
    from .almanac import almanac
    from .reduction import hc_zn
    from .sailing import advance_position

    if t2 <= t1:
        raise NavInputError("the second sight must come after the first", field="second",
                            example="--first 2026-06-21T11:20:00Z --second "
                                    "2026-06-21T17:00:00Z")
    hours = (t2 - t1).total_seconds() / 3600.0
    if hours > MAX_INTERVAL_H:
        raise NavInputError(f"{hours:.1f} h between the sights: they belong to one noon, "
                            f"at most {MAX_INTERVAL_H:g} h apart", field="second",
                            example="sights 2 to 6 hours apart")
    if abs(lat_deg) > POLAR_LIMIT_DEG:
        raise NavInputError(f"within {90 - POLAR_LIMIT_DEG:g}° of a pole the Sun's altitude "
                            "hardly changes through the day: no longitude by equal altitudes",
                            field="dr_lat", example="a latitude below 85°")
    moving = course_deg is not None and speed_kn > 0
    course, speed = (course_deg, speed_kn) if moving else (0.0, 0.0)
    middle = t1 + (t2 - t1) / 2
    half_h = hours / 2.0
    lon1, dec = _solve(t1, t2, lat_deg, lon_deg, course, speed)
    still, _ = _solve(t1, t2, lat_deg, lon_deg, 0.0, 0.0)
    sun_mid = almanac(["Sun"], middle)[0]
    lon_mid_only = float(norm180(-float(sun_mid.gha_deg)))
    if moving:
        lat_mid, lon_noon = (float(x) for x in advance_position(lat_deg, lon1, course, speed,
                                                                 half_h))
        lat2, lon2 = (float(x) for x in advance_position(lat_deg, lon1, course, speed, hours))
    else:
        lat_mid, lon_noon, lat2, lon2 = lat_deg, lon1, lat_deg, lon1
    lon_noon = float(norm180(lon_noon))
    dec_corr = float(norm180(still - lon_mid_only)) * 60.0
    run_corr = float(norm180(lon_noon - still)) * 60.0
    shifted, _ = _solve(t1, t2, lat_deg + 1.0 / 60.0, lon1, course, speed)
    per_lat = float(norm180(shifted - lon1)) * 60.0
    sun1 = almanac(["Sun"], t1)[0]
    alt = float(hc_zn(lat_deg, float(sun1.dec_deg), norm360(float(sun1.gha_deg) + lon1))[0])
    notes = []
    if hours < MIN_INTERVAL_H:
        notes.append(f"the sights are only {hours * 60:.0f} min apart: the altitude changes "
                     "slowly near noon, and a small error in timing the equal altitude moves "
                     "the longitude a lot")
    if abs(per_lat) > 2.0:
        notes.append(f"the longitude moves {abs(per_lat):.1f}′ for each 1′ of error in the "
                     "DR latitude: cross it with a latitude (the noon sight) before trusting it")
    if alt < 10.0:
        notes.append("the Sun was low at the sights: refraction is uncertain")
    return EqualAltitudes(
        t1=t1, t2=t2, middle=middle, lat_deg=lat_deg, lon_first_deg=lon1,
        lon_second_deg=float(norm180(lon2)), lon_noon_deg=lon_noon,
        lon_middle_only_deg=lon_mid_only, dec_correction_arcmin=dec_corr,
        run_correction_arcmin=run_corr, dec_change_arcmin=float(dec[1] - dec[0]) * 60.0,
        alt_deg=alt, lon_per_lat_arcmin=per_lat, course_deg=course_deg if moving else None,
        speed_kn=speed_kn if moving else 0.0, warnings=tuple(notes))
