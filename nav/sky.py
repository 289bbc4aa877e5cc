"""The sky around the sights: twilight, rise and set, meridian passage, for a vessel under way.

Definitions (stated in the README as well):

- Sunrise and sunset: the Sun's upper limb on the horizon with the standard refraction of 34′ and
  a semi-diameter of 16′, i.e. the Sun's centre at a true (airless, geocentric) altitude of −50′.
  With a height of eye the horizon is the visible one: the dip is added (centre at −50′ − dip).
- Civil and nautical twilight: the Sun's centre at −6° and −12° of true altitude, with no dip and
  no refraction.
- Moonrise and moonset: the Moon's upper limb on the horizon: its topocentric centre at −34′ − SD,
  i.e. a geocentric altitude of HP·cos h − 34′ − SD (the parallax in altitude on the sphere, with the
  day's HP and SD), and the dip when a height of eye is given.
- Meridian passage: the upper transit, LHA = 0 at the vessel's longitude then.

A moving vessel: :class:`Track` carries the DR along the rhumb line of her course and speed from the
position given (by ``nav sky``, the DR at 12:00 zone time of the date). Every event is the root of
a function of time alone — the body's altitude (or hour angle) at the position the vessel has at
that instant — so the search is iterated along the DR by construction, not solved at the noon DR.

The search: the zone day is sampled every :data:`SAMPLE_MIN` minutes for every function at once
(one almanac call), sign changes bracket the events, and regula falsi (Illinois) refines all
brackets together to :data:`TOLERANCE_S`. An event that does not happen on the date is not
invented: it is left out and named in ``absent`` with the reason.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime, time, timedelta

import numpy as np

from .angles import cosd, norm180, norm360
from .errors import NavInputError
from .timekeeping import UTC, from_datetime64, to_datetime64

SAMPLE_MIN = 10.0             # the grid on which sign changes are looked for
TOLERANCE_S = 1.0             # refinement stops when the bracket is this narrow
MAX_REFINE = 30
REFRACTION_HORIZON_ARCMIN = 34.0   # the standard refraction at the horizon (common practice)
SUN_SD_STANDARD_ARCMIN = 16.0      # the standard semi-diameter of rise and set (common practice)
SUNRISE_ALT_DEG = -(REFRACTION_HORIZON_ARCMIN + SUN_SD_STANDARD_ARCMIN) / 60.0   # −50′
CIVIL_ALT_DEG = -6.0
NAUTICAL_ALT_DEG = -12.0

EVENT_CODES = ("nautical_twilight_begins", "civil_twilight_begins", "sunrise",
               "sun_meridian_passage", "sunset", "civil_twilight_ends",
               "nautical_twilight_ends", "moonrise", "moon_meridian_passage", "moonset")
EVENT_WORDS = {
    "nautical_twilight_begins": "nautical twilight begins",
    "civil_twilight_begins": "civil twilight begins",
    "sunrise": "sunrise",
    "sun_meridian_passage": "Sun's meridian passage",
    "sunset": "sunset",
    "civil_twilight_ends": "civil twilight ends",
    "nautical_twilight_ends": "nautical twilight ends",
    "moonrise": "moonrise",
    "moon_meridian_passage": "Moon's meridian passage",
    "moonset": "moonset",
}


# ---------------------------------------------------------------- the vessel's track

@dataclass(frozen=True)
class Track:
    """A DR carried along the rhumb line: (lat, lon) at `utc`, course and speed (0: hove to)."""

    utc: datetime
    lat_deg: float
    lon_deg: float
    course_deg: float = 0.0
    speed_kn: float = 0.0

    def at(self, t64) -> tuple[np.ndarray, np.ndarray]:
        from .sailing import advance_position

        t64 = np.asarray(t64, dtype="datetime64[us]")
        hours = (t64 - to_datetime64(self.utc)).astype(np.int64) / 3.6e9
        if self.speed_kn <= 0.0:
            return (np.full(np.shape(hours), float(self.lat_deg)),
                    np.full(np.shape(hours), float(self.lon_deg)))
        lat, lon = advance_position(self.lat_deg, self.lon_deg, self.course_deg, self.speed_kn,
                                    hours)
        return (np.broadcast_to(np.asarray(lat, dtype=float), np.shape(hours)),
                np.broadcast_to(np.asarray(lon, dtype=float), np.shape(hours)))


class LoggedTrack:
    """The DR of a passage log along its legs (:class:`nav.passage.Passage`), as a Track.

    ``utc``/``lat_deg``/``lon_deg``/``course_deg``/``speed_kn`` describe it at `ref_utc`; before
    the first position logged the DR is retired from it along the first leg."""

    def __init__(self, passage, ref_utc: datetime):
        self.passage = passage
        w = self._where(ref_utc)
        self.utc, self.lat_deg, self.lon_deg = ref_utc, float(w[0]), float(w[1])
        leg = passage.leg_at(ref_utc)
        moving = leg is not None and leg.course_deg is not None and leg.speed_kn > 0
        self.course_deg = leg.course_deg if moving else 0.0
        self.speed_kn = leg.speed_kn if moving else 0.0
        self.basis = passage.where(ref_utc).describe() if passage.anchors and \
            ref_utc >= passage.anchors[0].utc else "retired from the first position logged"

    def _where(self, utc: datetime):
        from .sailing import advance_position

        p = self.passage
        if not p.anchors:
            p.where(utc)                       # raises: enter a DR first
        first = p.anchors[0]
        if utc >= first.utc:
            w = p.where(utc)
            return w.lat_deg, w.lon_deg
        leg = p.leg_at(first.utc)
        if leg is None or leg.course_deg is None or not leg.speed_kn:
            return first.lat_deg, first.lon_deg
        hours = (utc - first.utc).total_seconds() / 3600.0
        return advance_position(first.lat_deg, first.lon_deg, leg.course_deg, leg.speed_kn,
                                hours)

    def at(self, t64) -> tuple[np.ndarray, np.ndarray]:
        t64 = np.asarray(t64, dtype="datetime64[us]")
        flat = t64.reshape(-1)
        pts = [self._where(from_datetime64(t)) for t in flat]
        lat = np.array([float(a) for a, _ in pts]).reshape(t64.shape)
        lon = np.array([float(b) for _, b in pts]).reshape(t64.shape)
        return lat, lon


def zone_for_longitude(lon_deg: float) -> timedelta:
    """The zone description of a longitude (the trade's 15° zones, west +): ZD = round(−lon/15)."""
    return timedelta(hours=int(np.floor(-float(lon_deg) / 15.0 + 0.5)))


def zone_day_window(day: date, zone_description: timedelta) -> tuple[datetime, datetime]:
    """UTC of 00:00 and 24:00 zone time of `day` (UTC = ZT + ZD)."""
    start = datetime.combine(day, time(0), tzinfo=UTC) + zone_description
    return start, start + timedelta(days=1)


# ---------------------------------------------------------------- the functions of time

def _sun_moon(t64, track):
    from .almanac import almanac

    sun, moon = almanac(["Sun", "Moon"], t64)
    lat, lon = track.at(t64)
    return sun, moon, lat, lon


def altitude_functions(t64, track, dip_deg: float = 0.0) -> dict[str, np.ndarray]:
    """Every function whose root is an event, at instants `t64` (shape (n,)), in degrees.

    ``sun_50``/``sun_6``/``sun_12``: Sun's centre altitude above −50′ − dip, −6°, −12°;
    ``moon``: the Moon's upper limb above the (visible) horizon, with 34′ of refraction;
    ``sun_lha``/``moon_lha``: LHA reduced to [−180°, 180°) (0 at the upper transit)."""
    from .reduction import hc_zn

    sun, moon, lat, lon = _sun_moon(t64, track)
    sun_lha = norm360(np.asarray(sun.gha_deg) + lon)
    moon_lha = norm360(np.asarray(moon.gha_deg) + lon)
    sun_h, _ = hc_zn(lat, sun.dec_deg, sun_lha)
    moon_h, _ = hc_zn(lat, moon.dec_deg, moon_lha)
    sun_h, moon_h = np.asarray(sun_h), np.asarray(moon_h)
    hp = np.asarray(moon.hp_arcmin) / 60.0
    sd = np.asarray(moon.sd_arcmin) / 60.0
    moon_limb = moon_h - hp * cosd(moon_h) + sd + REFRACTION_HORIZON_ARCMIN / 60.0 + dip_deg
    return {
        "sun_50": sun_h - SUNRISE_ALT_DEG + dip_deg,
        "sun_6": sun_h - CIVIL_ALT_DEG,
        "sun_12": sun_h - NAUTICAL_ALT_DEG,
        "moon": moon_limb,
        "sun_lha": np.asarray(norm180(sun_lha)),
        "moon_lha": np.asarray(norm180(moon_lha)),
    }


# (function, rising or transit code, setting code)
_ROOTS = (("sun_12", "nautical_twilight_begins", "nautical_twilight_ends"),
          ("sun_6", "civil_twilight_begins", "civil_twilight_ends"),
          ("sun_50", "sunrise", "sunset"),
          ("moon", "moonrise", "moonset"),
          ("sun_lha", "sun_meridian_passage", None),
          ("moon_lha", "moon_meridian_passage", None))


def find_roots(func, t_start: datetime, t_end: datetime, *, sample_min: float = SAMPLE_MIN,
               keys=None):
    """Roots of ``func(t64) -> {key: values}`` in [t_start, t_end): {key: [(utc64, rising)]}.

    Hour-angle keys (ending in ``_lha``) count only their upward zero crossing and ignore the
    jump at ±180°. All brackets are refined together: each step is one call of `func`."""
    from .ephemeris import FIRST_INSTANT, LAST_INSTANT

    # The ends of the supported range (a zone date of 1 January 1900 starts on 31 December 1899
    # west of Greenwich): the search stops there and an event beyond it is not found.
    t_start, t_end = max(t_start, FIRST_INSTANT), min(t_end, LAST_INSTANT)
    n = int(np.ceil((t_end - t_start).total_seconds() / 60.0 / sample_min)) + 1
    grid = (to_datetime64(t_start - timedelta(minutes=sample_min))
            + (np.arange(n + 2) * sample_min * 60e6).astype("timedelta64[us]"))
    grid = np.clip(grid, to_datetime64(FIRST_INSTANT), to_datetime64(LAST_INSTANT))
    values = func(grid)
    keys = list(values) if keys is None else list(keys)
    brackets = []                       # (key, t_a, t_b, g_a, g_b)
    for key in keys:
        g = np.asarray(values[key], dtype=float)
        change = np.nonzero(np.sign(g[:-1]) != np.sign(g[1:]))[0]
        for i in change:
            if key.endswith("_lha") and not (g[i] < 0.0 <= g[i + 1] and g[i + 1] - g[i] < 90.0):
                continue
            brackets.append((key, grid[i], grid[i + 1], g[i], g[i + 1]))
    found: dict[str, list] = {k: [] for k in keys}
    if not brackets:
        return found
    key_of = [b[0] for b in brackets]
    ta = np.array([b[1] for b in brackets], dtype="datetime64[us]")
    tb = np.array([b[2] for b in brackets], dtype="datetime64[us]")
    ga = np.array([b[3] for b in brackets], dtype=float)
    gb = np.array([b[4] for b in brackets], dtype=float)
    rising = gb > ga
    side = np.zeros(len(brackets), dtype=int)
    for _ in range(MAX_REFINE):
        span_us = (tb - ta).astype(np.int64)
        if np.all(span_us <= TOLERANCE_S * 1e6):
            break
        frac = np.clip(ga / (ga - gb), 0.02, 0.98)
        tm = ta + (span_us * frac).astype("timedelta64[us]")
        vals = func(tm)
        gm = np.array([vals[k][j] for j, k in enumerate(key_of)], dtype=float)
        left = np.sign(gm) == np.sign(ga)
        # Illinois: halve the value kept twice on the same side, so the bracket keeps shrinking.
        gb = np.where(left & (side == 1), gb / 2.0, gb)
        ga = np.where(~left & (side == -1), ga / 2.0, ga)
        ta, ga = np.where(left, tm, ta), np.where(left, gm, ga)
        tb, gb = np.where(left, tb, tm), np.where(left, gb, gm)
        side = np.where(left, 1, -1)
    root = ta + ((tb - ta).astype(np.int64) // 2).astype("timedelta64[us]")
    lo, hi = to_datetime64(t_start), to_datetime64(t_end)
    for j, key in enumerate(key_of):
        if lo <= root[j] < hi:
            found[key].append((root[j], bool(rising[j])))
    return found


# ---------------------------------------------------------------- the day's events

@dataclass(frozen=True)
class SkyEvent:
    event: str
    utc: datetime
    zone_time: datetime           # naive, UTC − ZD
    lat_deg: float
    lon_deg: float
    zn_deg: float                 # true bearing then (180 or 0 at a meridian passage)


@dataclass(frozen=True)
class MoonPhase:
    phase: str                    # new, waxing crescent, first quarter, ... (see moon_phase)
    illuminated_fraction: float
    phase_angle_deg: float
    waxing: bool
    utc: datetime


@dataclass(frozen=True)
class SkyDay:
    day: date
    zone_description: timedelta
    zone_source: str              # "given" or "from the DR longitude"
    track: Track
    eye_height_m: float
    dip_arcmin: float
    events: tuple
    absent: tuple                 # codes
    absent_reasons: dict          # code -> why
    moon: MoonPhase
    warnings: tuple = ()


def moon_phase(utc: datetime) -> MoonPhase:
    """The Moon's illuminated fraction k = (1 + cos i)/2 from the phase angle i (the angle at the
    Moon between the Sun and the Earth, from the geocentric vectors); waxing while the Moon's RA
    runs ahead of the Sun's by less than 180°. Named: new (k < 0.03), full (k > 0.97), first or
    last quarter (|k − ½| < 0.07), else waxing/waning crescent or gibbous."""
    from .almanac import almanac

    sun, moon = almanac(["Sun", "Moon"], utc)

    def vec(a):
        ra, dec, d = float(a.ra_deg), float(a.dec_deg), float(a.distance_km)
        return d * np.array([cosd(dec) * cosd(ra), cosd(dec) * float(np.sin(np.radians(ra))),
                             float(np.sin(np.radians(dec)))])

    s, m = vec(sun), vec(moon)
    to_sun, to_earth = s - m, -m
    cos_i = float(np.dot(to_sun, to_earth) / np.linalg.norm(to_sun) / np.linalg.norm(to_earth))
    i = float(np.degrees(np.arccos(np.clip(cos_i, -1.0, 1.0))))
    k = (1.0 + cos_i) / 2.0
    waxing = float(norm360(float(moon.ra_deg) - float(sun.ra_deg))) < 180.0
    if k < 0.03:
        name = "new"
    elif k > 0.97:
        name = "full"
    elif abs(k - 0.5) < 0.07:
        name = "first quarter" if waxing else "last quarter"
    else:
        name = ("waxing " if waxing else "waning ") + ("crescent" if k < 0.5 else "gibbous")
    return MoonPhase(phase=name, illuminated_fraction=k, phase_angle_deg=i, waxing=waxing,
                     utc=utc)


def _reason(code: str, g: np.ndarray) -> str:
    above = bool(np.all(g > 0))
    below = bool(np.all(g < 0))
    what = {"sun_12": "the Sun's centre stays {} −12°", "sun_6": "the Sun's centre stays {} −6°",
            "sun_50": "the Sun's upper limb stays {} the horizon all day",
            "moon": "the Moon stays {} the horizon all day"}
    if code in ("sun_lha", "moon_lha"):
        return ("the Moon does not cross the meridian on this date (it transits about 50 min "
                "later each day)" if code == "moon_lha" else "no transit on this date")
    if above or below:
        return what[code].format("above" if above else "below")
    if code == "moon":
        return "the Moon's rise or set falls on the next or the previous date"
    return "this crossing falls outside the date"


def sky_day(day: date, track: Track, *, zone_description: timedelta | None = None,
            eye_height_m: float = 0.0) -> SkyDay:
    """Twilight, rise, set and meridian passages of the Sun and Moon on the zone date `day`."""
    from .corrections import dip_arcmin
    from .reduction import hc_zn

    source = "given"
    if zone_description is None:
        zone_description = zone_for_longitude(track.lon_deg)
        source = "from the DR longitude"
    dip = float(dip_arcmin(eye_height_m)) if eye_height_m else 0.0
    start, end = zone_day_window(day, zone_description)

    def func(t64):
        return altitude_functions(t64, track, dip / 60.0)

    roots = find_roots(func, start, end)
    events = []
    for key, up_code, down_code in _ROOTS:
        for t64, rising in roots[key]:
            code = up_code if (rising or down_code is None) else down_code
            events.append((code, t64))
    # bearing and position at each event, in one call
    absent_reasons = {}
    if events:
        t_all = np.array([t for _, t in events], dtype="datetime64[us]")
        from .almanac import almanac

        sun, moon = almanac(["Sun", "Moon"], t_all)
        lat, lon = track.at(t_all)
        is_moon = np.array([c.startswith("moon") for c, _ in events])
        dec = np.where(is_moon, moon.dec_deg, sun.dec_deg)
        gha = np.where(is_moon, moon.gha_deg, sun.gha_deg)
        _, zn = hc_zn(lat, dec, norm360(gha + lon))
        zn = np.atleast_1d(zn)
    out = []
    for j, (code, t64) in enumerate(events):
        utc = from_datetime64(t64)
        out.append(SkyEvent(event=code, utc=utc,
                            zone_time=(utc - zone_description).replace(tzinfo=None),
                            lat_deg=float(lat[j]), lon_deg=float(norm180(lon[j])),
                            zn_deg=float(zn[j])))
    out.sort(key=lambda e: (e.utc, EVENT_CODES.index(e.event)))
    present = {e.event for e in out}
    absent = tuple(c for c in EVENT_CODES if c not in present)
    if absent:
        from .ephemeris import FIRST_INSTANT, LAST_INSTANT

        grid = (to_datetime64(start)
                + (np.arange(0, 24 * 60 + 1, SAMPLE_MIN) * 60e6).astype("timedelta64[us]"))
        grid = np.clip(grid, to_datetime64(FIRST_INSTANT), to_datetime64(LAST_INSTANT))
        g = func(grid)
        for key, up_code, down_code in _ROOTS:
            for code in (up_code, down_code):
                if code in absent:
                    absent_reasons[code] = _reason(key, np.asarray(g[key]))
    midday = start + timedelta(hours=12)
    warnings = []
    from .ephemeris import FIRST_INSTANT, LAST_INSTANT, RANGE_TEXT

    if start < FIRST_INSTANT or end > LAST_INSTANT:
        warnings.append(f"part of this zone date lies outside the supported range {RANGE_TEXT}: "
                        "events there are not searched")
        absent_reasons = {c: r + " (or in the part of the date outside the supported range, "
                          "not searched)" for c, r in absent_reasons.items()}
    if abs(track.lat_deg) > 60.0:
        warnings.append("in high latitudes the Sun and Moon cross the horizon at a shallow "
                        "angle: a small error in the DR or the refraction moves these times "
                        "by many minutes")
    return SkyDay(day=day, zone_description=zone_description, zone_source=source, track=track,
                  eye_height_m=eye_height_m, dip_arcmin=dip, events=tuple(out), absent=absent,
                  absent_reasons=absent_reasons, moon=moon_phase(midday),
                  warnings=tuple(warnings))


def noon_track(day: date, lat_deg: float, lon_deg: float, course_deg: float | None,
               speed_kn: float, zone_description: timedelta | None) -> tuple[Track, timedelta]:
    """The Track of a DR given at 12:00 zone time of `day` (zone: given, else the DR
    longitude's), and the zone used."""
    zd = zone_for_longitude(lon_deg) if zone_description is None else zone_description
    if course_deg is None and speed_kn:
        raise NavInputError("a speed needs its course", field="course", example="--course 245")
    utc = datetime.combine(day, time(12), tzinfo=UTC) + zd
    return Track(utc=utc, lat_deg=lat_deg, lon_deg=lon_deg, course_deg=course_deg or 0.0,
                 speed_kn=speed_kn if course_deg is not None else 0.0), zd
