"""Sights made from an independent truth, for the series, bias, current and watch tests.

- Altitudes and azimuths: astropy's AltAz (IAU SOFA/ERFA inside) with pressure 0, i.e. the airless
  topocentric altitude, for the Sun (centre, from DE421 through astropy) and for navigational stars
  (nav's Hipparcos row propagated by astropy: tests/references.star_skycoord).
- The sextant reading: the airless altitude plus Bennett's refraction (J. Navigation 35, 1982,
  with the zenith constant that nav.corrections states), inverted by bisection here; eye height 0
  (no dip), index error 0, bubble-free sea horizon. The vessel's track: the American Practical
  Navigator's Mercator sailing (tests/references.mercator_sailing).

Nothing here calls nav's almanac, corrections or reduction.
"""

from __future__ import annotations

import math
import os
import warnings

import numpy as np

from references import mercator_sailing, star_skycoord


def _de421_path() -> str:
    import skyfield_data

    return os.path.join(os.path.dirname(skyfield_data.__file__), "data", "de421.bsp")


def bennett_arcmin(ha_deg):
    """Bennett (1982), R = cot(h + 7.31/(h + 4.4)) arcmin, less its value at the zenith (nav's
    stated zenith constant), at 10 °C and 1010 hPa."""
    zenith = -1.0 / math.tan(math.radians(90.0 + 7.31 / 94.4))
    return 1.0 / np.tan(np.radians(ha_deg + 7.31 / (ha_deg + 4.4))) + zenith


def hs_from_true(h_deg):
    """Ha with Ha − R(Ha) = h, by bisection (R falls with Ha): the sextant reading with no dip."""
    h_deg = np.asarray(h_deg, float)
    lo, hi = h_deg.copy(), h_deg + 1.0
    for _ in range(60):
        mid = (lo + hi) / 2
        above = mid - bennett_arcmin(mid) / 60.0 > h_deg
        lo, hi = np.where(above, lo, mid), np.where(above, mid, hi)
    return (lo + hi) / 2


def true_alt_az(body: str, t64, lat_deg, lon_deg):
    """Airless topocentric (alt_deg, az_deg) arrays of `body` at instants/positions (arrays)."""
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, get_body, solar_system_ephemeris
    from astropy.time import Time

    from nav.stars import find_star

    t = Time(np.asarray(t64, dtype="datetime64[us]"), scale="utc")
    loc = EarthLocation.from_geodetic(lon=np.asarray(lon_deg) * u.deg,
                                      lat=np.asarray(lat_deg) * u.deg, height=0 * u.m)
    frame = AltAz(obstime=t, location=loc, pressure=0 * u.hPa)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if body in ("Sun", "Moon"):
            with solar_system_ephemeris.set(_de421_path()):
                aa = get_body(body.lower(), t, location=loc).transform_to(frame)
        else:
            aa = star_skycoord(find_star(body)).apply_space_motion(new_obstime=t).transform_to(frame)
    return np.atleast_1d(aa.alt.deg), np.atleast_1d(aa.az.deg)


def track(lat_deg, lon_deg, course_deg, speed_kn, hours):
    """Positions after `hours` (array) on a rhumb line (Mercator sailing, the textbook's way)."""
    pts = [mercator_sailing(lat_deg, lon_deg, course_deg, speed_kn * h) for h in np.atleast_1d(hours)]
    return np.array([p[0] for p in pts]), np.array([p[1] for p in pts])


def iso(t64) -> str:
    return str(np.datetime64(t64, "ms")) + "Z"


def write_csv(path, header, rows) -> str:
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(",".join(header) + "\n")
        for r in rows:
            fh.write(",".join(str(c) for c in r) + "\n")
    return str(path)
