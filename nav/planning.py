"""Which bodies to shoot at twilight: candidates, presets, a well-spread set.

- The time: with a twilight, the instant the Sun's centre reaches −:data:`DEFAULT_DEPRESSION_DEG`
  (−6°, civil twilight: the horizon still sharp, the brighter stars out), or another depression,
  morning or evening of the ship's date, at the vessel's position then (:func:`nav.sky.find_roots`
  along the DR). Or any UTC.
- How long the horizon and the stars are both usable: while the Sun's centre is between
  :data:`STARS_OUT_DEG` (−3°: the first-magnitude stars show) and :data:`HORIZON_GONE_DEG`
  (−9°: the horizon fades): common practice, no source; the window is stated with its limits.
- The candidates: the 58 stars, the planets and the Moon between :data:`MIN_ALT_DEG` and
  :data:`MAX_ALT_DEG` (adjustable), with Hc and Zn at the DR, the magnitude and the Hs to preset
  (height of eye and IE in force). Flags: a body within :data:`NEAR_MOON_DEG` of a Moon above
  the horizon (glare; common practice, no source), and the Moon when its lower limb is not the
  bright one (its lit limb faces the Sun; the preset then is for the upper limb, or there is no
  clear limb when the lit side is within :data:`SIDE_LIMB_DEG` of horizontal).
- The suggested set: N bodies (3 to 7), chosen for azimuth spread first and brightness second:
  start from the brightest unflagged body; then, again and again, take the bodies whose azimuth
  is within :data:`SPREAD_SLACK_DEG` of the middle of the widest gap left, and of them the
  brightest. The spread is 360° − the widest gap left between neighbouring azimuths.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime, timedelta

import numpy as np

from .angles import acosd, atan2d, cosd, norm180, norm360, sind
from .errors import NavInputError
from .timekeeping import from_datetime64, to_datetime64

DEFAULT_DEPRESSION_DEG = 6.0
STARS_OUT_DEG = -3.0
HORIZON_GONE_DEG = -9.0
MIN_ALT_DEG = 15.0
MAX_ALT_DEG = 70.0
NEAR_MOON_DEG = 15.0
SIDE_LIMB_DEG = 20.0
SPREAD_SLACK_DEG = 25.0
DEFAULT_COUNT = 5
MOON_MAGNITUDE = -10.0   # a half Moon, roughly (common practice, no source): ranks first


@dataclass(frozen=True)
class PlanBody:
    body: str
    kind: str
    hc_deg: float
    zn_deg: float
    magnitude: float | None
    hs_preset_deg: float | None
    limb: str | None
    near_moon: bool
    wrong_limb: bool
    note: str = ""


@dataclass(frozen=True)
class Plan:
    utc: datetime
    zone_description: timedelta | None
    how: str                       # what the time is
    lat_deg: float
    lon_deg: float
    sun_alt_deg: float
    bodies: tuple                  # PlanBody, by Zn
    selection: tuple               # names
    azimuth_spread_deg: float
    widest_gap_deg: float
    window: tuple | None           # (start utc, end utc) while horizon and stars both usable
    min_alt_deg: float
    max_alt_deg: float
    eye_height_m: float
    index_error_arcmin: float
    warnings: tuple = ()


def twilight_instant(day: date, track, zone_description: timedelta, twilight: str,
                     depression_deg: float = DEFAULT_DEPRESSION_DEG) -> datetime:
    """UTC when the Sun's centre reaches −depression (true altitude), morning or evening of the
    zone date, at the vessel's position then."""
    from .sky import altitude_functions, find_roots, zone_day_window

    if twilight not in ("morning", "evening"):
        raise NavInputError(f"'{twilight}' is not a twilight", field="twilight",
                            example="morning or evening")
    start, end = zone_day_window(day, zone_description)

    def func(t64):
        f = altitude_functions(t64, track)
        return {"dep": f["sun_6"] - CIVIL_OFFSET + depression_deg}

    roots = find_roots(func, start, end)["dep"]
    want = [t for t, rising in roots if rising == (twilight == "morning")]
    if not want:
        from .ephemeris import FIRST_INSTANT, LAST_INSTANT

        why = ("part of this date lies outside the supported range, not searched"
               if start < FIRST_INSTANT or end > LAST_INSTANT else "polar day or night")
        raise NavInputError(f"the Sun's centre does not reach −{depression_deg:g}° in the "
                            f"{twilight} of this date here ({why})",
                            field="twilight", example="another date, or --utc")
    return from_datetime64(want[0])


CIVIL_OFFSET = 6.0   # altitude_functions' "sun_6" is h + 6°


def usable_window(utc: datetime, track, rising: bool | None) -> tuple | None:
    """The interval around `utc` while the Sun's centre is between −3° and −9°."""
    from .sky import altitude_functions, find_roots

    start, end = utc - timedelta(hours=4), utc + timedelta(hours=4)

    def func(t64):
        f = altitude_functions(t64, track)
        h = f["sun_6"] - CIVIL_OFFSET
        return {"out": h - STARS_OUT_DEG, "gone": h - HORIZON_GONE_DEG}

    roots = find_roots(func, start, end)
    ends = sorted([from_datetime64(t) for t, _ in roots["out"]] +
                  [from_datetime64(t) for t, _ in roots["gone"]])
    before = [t for t in ends if t <= utc]
    after = [t for t in ends if t > utc]
    if not before or not after:
        return None
    return before[-1], after[0]


def _sep(h1, z1, h2, z2):
    return acosd(np.clip(sind(h1) * sind(h2) + cosd(h1) * cosd(h2) * cosd(z1 - z2), -1, 1))


def _moon_lit_limb(moon_h, moon_z, sun_h, sun_z) -> tuple[str, float]:
    """Which limb of the Moon is lit: the direction toward the Sun on the sky from the Moon,
    as an angle from straight down (0°: lower limb lit, 180°: upper)."""
    # bearing on the celestial sphere (alt-az frame) from the Moon to the Sun, from "up"
    y = cosd(sun_h) * sind(sun_z - moon_z)
    x = cosd(moon_h) * sind(sun_h) - sind(moon_h) * cosd(sun_h) * cosd(sun_z - moon_z)
    from_up = abs(float(norm180(atan2d(y, x))))
    from_down = 180.0 - from_up
    if from_down < 90.0 - SIDE_LIMB_DEG:
        return "lower", from_down
    if from_down > 90.0 + SIDE_LIMB_DEG:
        return "upper", from_down
    return "side", from_down


def select_set(bodies, count: int) -> list[str]:
    """Azimuth spread first, brightness second (see the module docstring)."""
    pool = [b for b in bodies if not b.near_moon and not (b.kind == "moon" and b.wrong_limb)]
    if len(pool) < count:
        pool = list(bodies)

    def mag(b):
        return 99.0 if b.magnitude is None else b.magnitude

    if not pool:
        return []
    chosen = [min(pool, key=mag)]
    while len(chosen) < min(count, len(pool)):
        zs = sorted(b.zn_deg for b in chosen)
        gaps = [((zs[(i + 1) % len(zs)] - zs[i]) % 360.0 or 360.0, zs[i]) for i in range(len(zs))]
        gap, start = max(gaps)
        middle = (start + gap / 2.0) % 360.0
        rest = [b for b in pool if b not in chosen]
        near = [b for b in rest if abs(float(norm180(b.zn_deg - middle))) <= SPREAD_SLACK_DEG]
        if near:
            pick = min(near, key=mag)
        else:
            pick = min(rest, key=lambda b: abs(float(norm180(b.zn_deg - middle))))
        chosen.append(pick)
    return [b.body for b in chosen]


def spread_and_gap(zns) -> tuple[float, float]:
    zs = sorted(float(z) % 360.0 for z in zns)
    if len(zs) < 2:
        return 0.0, 360.0
    gaps = [(zs[(i + 1) % len(zs)] - zs[i]) % 360.0 for i in range(len(zs))]
    widest = max(gaps)
    return 360.0 - widest, widest


def plan(utc: datetime, track, *, count: int = DEFAULT_COUNT, min_alt_deg: float = MIN_ALT_DEG,
         max_alt_deg: float = MAX_ALT_DEG, eye_height_m: float = 0.0,
         index_error_arcmin: float = 0.0, zone_description: timedelta | None = None,
         how: str = "", twilight: str | None = None) -> Plan:
    """The candidates and the suggested set at `utc` from the vessel's position then."""
    from .almanac import PLANETS, almanac
    from .noonsight import hs_for_ho
    from .reduction import hc_zn
    from .stars import star_names

    if not 3 <= count <= 7:
        raise NavInputError(f"{count} bodies: choose 3 to 7", field="count", example="5")
    if not 0.0 <= min_alt_deg < max_alt_deg <= 90.0:
        raise NavInputError("the altitude band must run from low to high within 0–90°",
                            field="min_alt", example="--min-alt 15 --max-alt 70")
    lat, lon = (float(x) for x in track.at(to_datetime64(utc)))
    names = ["Sun", "Moon"] + list(PLANETS) + star_names()
    alm = almanac(names, utc)
    gha = np.array([float(a.gha_deg) for a in alm])
    dec = np.array([float(a.dec_deg) for a in alm])
    hc, zn = (np.asarray(x) for x in hc_zn(lat, dec, norm360(gha + lon)))
    sun_h, sun_z, moon_h, moon_z = hc[0], zn[0], hc[1], zn[1]
    moon_up = moon_h > 0.0
    limb_word, _ = _moon_lit_limb(moon_h, moon_z, sun_h, sun_z)
    out = []
    inst = dict(index_error_arcmin=index_error_arcmin, eye_height_m=eye_height_m,
                temperature_c=10.0, pressure_hpa=1010.0, horizon="sea")
    for i, a in enumerate(alm[1:], start=1):
        if not (min_alt_deg <= hc[i] <= max_alt_deg):
            continue
        near = bool(moon_up and a.kind != "moon" and _sep(hc[i], zn[i], moon_h, moon_z)
                    < NEAR_MOON_DEG)
        limb, wrong, note = None, False, ""
        if a.kind == "moon":
            limb = "upper" if limb_word == "upper" else "lower"
            wrong = limb_word != "lower"
            note = ("bright limb upper: preset for it" if limb_word == "upper" else
                    "no clear bright limb (lit to one side)" if limb_word == "side" else "")
        kind = a.kind if a.kind != "star" else "star"
        try:
            hs, _ = hs_for_ho(float(hc[i]), body_kind=a.kind, limb=limb, lat_deg=lat,
                              zn_deg=float(zn[i]),
                              hp_arcmin=None if a.hp_arcmin is None else float(a.hp_arcmin),
                              sd_arcmin=None if a.sd_arcmin is None else float(a.sd_arcmin),
                              **inst)
        except NavInputError:
            hs = None
        mag = (MOON_MAGNITUDE if a.kind == "moon" else
               None if a.magnitude is None else float(a.magnitude))
        out.append(PlanBody(body=a.body, kind=kind, hc_deg=float(hc[i]), zn_deg=float(zn[i]),
                            magnitude=mag, hs_preset_deg=hs, limb=limb, near_moon=near,
                            wrong_limb=wrong, note=note))
    out.sort(key=lambda b: b.zn_deg)
    picked = set(select_set(out, count))
    selection = [b.body for b in out if b.body in picked]          # in order of Zn
    chosen = [b for b in out if b.body in selection]
    spread, gap = spread_and_gap([b.zn_deg for b in chosen])
    notes = []
    if len(selection) < count:
        notes.append(f"only {len(selection)} bodies stand between {min_alt_deg:g}° and "
                     f"{max_alt_deg:g}°")
    if gap > 180.0 and len(selection) >= 2:
        notes.append(f"the chosen bodies leave a gap of {gap:.0f}° in azimuth: the fix will be "
                     "weak across it")
    if sun_h > -1.0:
        notes.append("the Sun is not yet below the horizon: stars will not show")
    elif sun_h < -12.0:
        notes.append("the Sun is more than 12° below the horizon: the horizon is hard to see")
    window = usable_window(utc, track, None)
    return Plan(utc=utc, zone_description=zone_description, how=how, lat_deg=lat,
                lon_deg=float(norm180(lon)), sun_alt_deg=float(sun_h), bodies=tuple(out),
                selection=tuple(selection), azimuth_spread_deg=spread, widest_gap_deg=gap,
                window=window, min_alt_deg=min_alt_deg, max_alt_deg=max_alt_deg,
                eye_height_m=eye_height_m, index_error_arcmin=index_error_arcmin,
                warnings=tuple(notes))
