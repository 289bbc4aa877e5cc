"""Compass error and deviation from a body's true bearing: by azimuth, or by amplitude.

Conventions (stated in the README):

- Compass error is what turns a compass bearing into a true one: True = Compass + error, with an
  easterly error positive and a westerly one negative ("compass least, error east; compass best,
  error west": common practice). Error = variation + deviation, so deviation = error − variation
  (variation and deviation also E +).
- By azimuth: the body's true azimuth Zn at the instant, from the DR (geocentric, as the almanac).
- By amplitude: the body on the horizon, rising or setting; the true amplitude A is its bearing
  from east (rising) or west (setting), named N or S like its Dec: sin A = sin Dec / cos lat
  (the American Practical Navigator's amplitude formula). On the celestial horizon (the default)
  the centre's true altitude is 0: for the Sun that is when its lower limb stands about two thirds
  of a diameter above the visible horizon. With ``horizon="visible"`` the centre is on the visible
  horizon: its true altitude then is h = −(34′ refraction + dip) + HP, and the amplitude is
  corrected by the change of azimuth from 0 to h, named and shown ("visible-horizon correction").
  The exact azimuth at altitude h: cos Z = (sin Dec − sin lat sin h) / (cos lat cos h).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

import numpy as np

from .angles import acosd, asind, cosd, norm180, norm360, sind
from .errors import NavInputError

REFRACTION_HORIZON_ARCMIN = 34.0     # standard refraction at the horizon (common practice)
AMPLITUDE_MAX_ALT_DEG = 2.0          # an amplitude is taken with the body on the horizon:
                                     # farther than this from it (from the DR) it is refused
AZIMUTH_MIN_ALT_DEG = -1.0           # below this the body is out of sight: refused. Common
                                     # practice, no source: the Sun's upper limb dips under the
                                     # sea horizon near −0.8° − dip (refraction 34′ + SD 16′)
HIGH_LAT_WARN_DEG = 60.0             # common practice, no source: amplitudes grow unreliable
LARGE_ERROR_DEG = 10.0               # common practice, no source: a check this far out is suspect


@dataclass(frozen=True)
class CompassCheck:
    method: str                      # "azimuth" or "amplitude"
    body: str
    utc: datetime
    lat_deg: float
    lon_deg: float
    dec_deg: float
    lha_deg: float
    alt_deg: float                   # the body's true altitude at the instant (from the DR)
    zn_deg: float                    # true bearing used
    compass_bearing_deg: float
    compass_error_deg: float         # + E, − W
    variation_deg: float | None
    deviation_deg: float | None
    heading_deg: float | None        # the ship's head by this compass, for the deviation table
    amplitude_deg: float | None = None       # true amplitude, from E or W
    amplitude_name: str | None = None        # e.g. "E 23.4° N"
    rising: bool | None = None
    horizon: str | None = None               # "celestial" or "visible"
    horizon_alt_deg: float | None = None     # true altitude of the centre used
    visible_correction_deg: float | None = None
    warnings: tuple = ()


def amplitude_deg(lat_deg, dec_deg):
    """True amplitude on the celestial horizon, degrees from E/W toward the Dec's pole (signed
    like the Dec): sin A = sin Dec / cos lat. Vectorised. NavInputError where the body never
    reaches the horizon (circumpolar or never rising)."""
    lat, dec = np.asarray(lat_deg, dtype=float), np.asarray(dec_deg, dtype=float)
    ratio = sind(dec) / np.maximum(cosd(lat), 1e-15)
    if np.any(np.abs(ratio) > 1.0):
        raise NavInputError("at this latitude the body does not rise or set (circumpolar or "
                            "below the horizon all day): no amplitude", field="dr_lat",
                            example="use the azimuth method")
    a = asind(ratio)
    return a[()] if np.ndim(a) == 0 else a


def azimuth_at_altitude(lat_deg, dec_deg, alt_deg, rising):
    """Zn of a body of Dec at true altitude `alt_deg`, east of the meridian when `rising`.
    cos Z = (sin Dec − sin lat sin h) / (cos lat cos h), Z from the north; vectorised."""
    lat, dec, h = (np.asarray(x, dtype=float) for x in (lat_deg, dec_deg, alt_deg))
    c = (sind(dec) - sind(lat) * sind(h)) / (cosd(lat) * cosd(h))
    z = acosd(np.clip(c, -1.0, 1.0))
    zn = np.where(rising, z, 360.0 - z)
    zn = norm360(zn)
    return zn[()] if np.ndim(zn) == 0 else zn


def error_and_deviation(zn_deg: float, compass_deg: float, variation_deg: float | None):
    err = float(norm180(zn_deg - compass_deg))
    dev = None if variation_deg is None else float(norm180(err - variation_deg))
    return err, dev


def ew(x: float) -> str:
    """An error, variation or deviation in the trade's words: ``3.2° E``, ``1.5° W``."""
    return f"{abs(x):.1f}° {'E' if x > 0 else 'W' if x < 0 else ''}".rstrip()


def compass_check(body: str, utc: datetime, lat_deg: float, lon_deg: float,
                  compass_bearing_deg: float, *, variation_deg: float | None = None,
                  heading_deg: float | None = None, amplitude: bool = False,
                  horizon: str = "celestial", eye_height_m: float = 0.0) -> CompassCheck:
    """Compass error (and deviation) from one bearing of `body` at `utc` from the DR."""
    from .almanac import body_almanac, resolve_body
    from .corrections import dip_arcmin
    from .reduction import hc_zn

    name = resolve_body(body)
    a = body_almanac(name, utc)
    dec = float(a.dec_deg)
    lha = float(norm360(float(a.gha_deg) + lon_deg))
    alt, zn_now = (float(x) for x in hc_zn(lat_deg, dec, lha))
    notes = []
    extra = {}
    if not amplitude:
        zn = zn_now
        method = "azimuth"
        if alt < AZIMUTH_MIN_ALT_DEG:
            raise NavInputError(f"{name} is {-alt:.1f}° below the horizon at this time from the "
                                "DR: no bearing of it can be taken; check the body and the time",
                                field="time", example="a time when the body is in sight")
        if alt < 0:
            notes.append(f"{name} is below the horizon at this time from the DR "
                         f"({alt:.1f}°): check the body and the time")
        elif alt > 60.0:
            notes.append("a body high above the horizon is hard to bear accurately with a "
                         "compass (common practice): prefer one below about 30°")
    else:
        if horizon not in ("celestial", "visible"):
            raise NavInputError(f"'{horizon}' is not a horizon for an amplitude", field="horizon",
                                example="celestial (default) or visible")
        method = "amplitude"
        rising = lha > 180.0
        amp = float(amplitude_deg(lat_deg, dec))
        h = 0.0
        if horizon == "visible":
            hp = float(a.hp_arcmin) if a.hp_arcmin is not None else 0.0
            dip = float(dip_arcmin(eye_height_m)) if eye_height_m else 0.0
            h = (-(REFRACTION_HORIZON_ARCMIN + dip) + hp) / 60.0
        zn0 = float(azimuth_at_altitude(lat_deg, dec, 0.0, rising))
        zn = float(azimuth_at_altitude(lat_deg, dec, h, rising))
        side = "E" if rising else "W"
        extra = dict(amplitude_deg=abs(amp),
                     amplitude_name=f"{side} {abs(amp):.1f}° {'N' if dec >= 0 else 'S'}",
                     rising=rising, horizon=horizon, horizon_alt_deg=h,
                     visible_correction_deg=float(norm180(zn - zn0)) if horizon == "visible"
                     else None)
        if abs(alt - h) > AMPLITUDE_MAX_ALT_DEG:
            where = f"{alt:.1f}° above" if alt >= 0 else f"{-alt:.1f}° below"
            raise NavInputError(f"from the DR {name} stands {where} the horizon at this time; "
                                f"an amplitude needs it within {AMPLITUDE_MAX_ALT_DEG:.0f}° of "
                                "the horizon: check the time, or use the azimuth method",
                                field="time", example="the time the body rose or set")
        if abs(lat_deg) > HIGH_LAT_WARN_DEG:
            notes.append("in high latitudes the body crosses the horizon at a shallow angle and "
                         "the amplitude is sensitive to the altitude: prefer the azimuth method")
    err, dev = error_and_deviation(zn, compass_bearing_deg, variation_deg)
    if abs(err) > LARGE_ERROR_DEG:
        notes.append(f"a compass error of {ew(err)} is large: check the body, the time, the "
                     "bearing and the DR before using it")
    return CompassCheck(method=method, body=name, utc=utc, lat_deg=lat_deg, lon_deg=lon_deg,
                        dec_deg=dec, lha_deg=lha, alt_deg=alt, zn_deg=zn,
                        compass_bearing_deg=compass_bearing_deg, compass_error_deg=err,
                        variation_deg=variation_deg, deviation_deg=dev, heading_deg=heading_deg,
                        warnings=tuple(notes), **extra)


@dataclass(frozen=True)
class DeviationRow:
    heading_deg: float
    deviation_deg: float
    utc: datetime
    entry_id: str
    body: str
    method: str


def deviation_table(rows) -> list[tuple[int, list[DeviationRow]]]:
    """Deviation found on each compass heading over a passage, grouped by the heading rounded to
    the nearest 5° and sorted: [(heading_deg, [rows])]."""
    groups: dict[int, list] = {}
    for r in rows:
        key = int(5 * round(float(r.heading_deg) / 5.0)) % 360
        groups.setdefault(key, []).append(r)
    return sorted(groups.items())


def deviation_rows(entries) -> list[DeviationRow]:
    """Compass-check log entries (effective, not struck) -> the rows that have a deviation."""
    from .timekeeping import parse_utc

    out = []
    for e in entries:
        d = e.data
        if d.get("deviation_deg") is None or d.get("heading_deg") is None:
            continue
        out.append(DeviationRow(heading_deg=float(d["heading_deg"]),
                                deviation_deg=float(d["deviation_deg"]),
                                utc=parse_utc(d["utc"]), entry_id=e.id, body=d["body"],
                                method=d["method"]))
    return out
