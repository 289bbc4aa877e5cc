"""The noon sight and Polaris: latitude by meridian altitude, longitude by the time of noon.

- :func:`local_apparent_noon` predicts the UTC (and zone time) of the Sun's meridian passage for
  a vessel under way: the longitude changes while she sails, so the transit is solved again at the
  longitude she will have reached, until the time no longer changes.
- :func:`latitude_by_meridian_altitude` is the meridian-altitude rule in signed arithmetic (north
  +): for an upper transit the zenith distance z = 90° − Ho is named opposite to the body's
  bearing, and lat = Dec + z with the body bearing south, lat = Dec − z with it bearing north.
  This one line covers the trade's cases: same names (add), contrary names (subtract), and the
  observer between the equator and the body's declination (take the difference, named like the
  Dec). Below the pole (lower transit, a circumpolar body): lat = Ho + p, with p = 90° − |Dec|
  the polar distance, named like the Dec.
- :func:`longitude_from_meridian_passage` turns the timed moment of the Sun's meridian passage
  into longitude (lon = −GHA of the Sun at that moment), and
  :func:`longitude_by_equation_of_time` shows the same as the navigator's working with the
  equation of time.
- :func:`polaris_latitude` solves the altitude formula exactly for latitude from Polaris' own
  almanac position (no correction tables).

All angles in degrees; latitude north +, longitude east +.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date as date_cls
from datetime import datetime, time, timedelta

import numpy as np

from .angles import asind, atan2d, cosd, norm180, sind
from .errors import NavInputError
from .sailing import advance_position
from .timekeeping import UTC, to_datetime64

NOON_TOLERANCE_S = 0.5      # the noon prediction is iterated until it moves less than this
NOON_MAX_ITER = 10


def _scalar(x):
    x = np.asarray(x)
    return x[()] if x.ndim == 0 else x


def _aware(t, field):
    if not isinstance(t, datetime) or t.tzinfo is None:
        raise NavInputError("needs an aware datetime (UTC)", field=field,
                            example="2026-06-21T08:00:00Z")
    return t.astimezone(UTC)


# ---------------------------------------------------------------- local apparent noon

@dataclass(frozen=True)
class Noon:
    """The Sun's (upper) meridian passage for a vessel under way.

    ``lat_deg``/``lon_deg``: the DR at noon; ``zone_time`` (naive) = UTC − ZD when a zone
    description was given; ``predicted_alt_deg`` and ``bearing`` ("S"/"N"): the Sun's meridian
    altitude and bearing expected from that DR (90° − |lat − Dec|).
    """

    utc: datetime
    zone_time: datetime | None
    zone_description: timedelta | None
    lat_deg: float
    lon_deg: float
    sun_dec_deg: float
    predicted_alt_deg: float
    bearing: str
    equation_of_time_min: float
    iterations: int


def local_apparent_noon(date_utc: datetime, dr_lat: float, dr_lon: float, course_deg: float,
                        speed_kn: float, zone_description: timedelta | None = None, *,
                        set_deg: float | None = None, drift_kn: float = 0.0) -> Noon:
    """UTC (and zone time) of local apparent noon for a vessel sailing from a DR.

    `date_utc` is the aware instant of the DR (dr_lat, dr_lon), e.g. the morning DR; the noon
    found is the Sun's meridian passage nearest to 12:00 local mean time of the local day that
    holds that instant. The vessel is carried along the rhumb line of her course and speed (and
    current) from the DR. Each step solves the transit at the longitude reached at the previous
    estimate (:func:`nav.almanac.meridian_passage`), a contraction by the ratio of her rate of
    change of longitude to the Sun's 15°/h, so two or three steps reach 0.5 s.
    """
    from . import almanac

    t0 = _aware(date_utc, "date_utc")
    if zone_description is not None and not isinstance(zone_description, timedelta):
        raise NavInputError("the zone description must be a timedelta (nav.timekeeping parses "
                            "'+3')", field="zone_description", example="+3")
    if course_deg is None:
        raise NavInputError("a course is needed (0 with speed 0 for a vessel hove to)",
                            field="course_deg", example="225")
    lat_here, lon_here = advance_position(dr_lat, dr_lon, course_deg, speed_kn, 0.0,
                                          set_deg=set_deg, drift_kn=drift_kn)   # validates
    lmt = t0 + timedelta(hours=float(lon_here) / 15.0)
    guess = (lmt.replace(hour=12, minute=0, second=0, microsecond=0)
             - timedelta(hours=float(lon_here) / 15.0))
    t = guess
    iterations = 0
    for iterations in range(1, NOON_MAX_ITER + 1):
        h = (t - t0).total_seconds() / 3600.0
        _, lon_t = advance_position(dr_lat, dr_lon, course_deg, speed_kn, h, set_deg=set_deg,
                                    drift_kn=drift_kn)
        t_new = almanac.meridian_passage("Sun", float(lon_t), t)
        moved = abs((t_new - t).total_seconds())
        t = t_new
        if moved < NOON_TOLERANCE_S:
            break
    h = (t - t0).total_seconds() / 3600.0
    lat, lon = advance_position(dr_lat, dr_lon, course_deg, speed_kn, h, set_deg=set_deg,
                                drift_kn=drift_kn)
    sun = almanac.body_almanac("Sun", t)
    dec = float(sun.dec_deg)
    lat = float(lat)
    alt = 90.0 - abs(lat - dec)
    zt = None if zone_description is None else (t - zone_description).replace(tzinfo=None)
    return Noon(utc=t, zone_time=zt, zone_description=zone_description, lat_deg=lat,
                lon_deg=float(lon), sun_dec_deg=dec, predicted_alt_deg=alt,
                bearing="S" if lat >= dec else "N",
                equation_of_time_min=float(almanac.equation_of_time_min(t)),
                iterations=iterations)


# ---------------------------------------------------------------- latitude by meridian altitude

def _bearing_array(body_bearing, shape):
    b = np.broadcast_to(np.asarray(body_bearing, dtype=object), shape)
    up = np.vectorize(lambda x: str(x).strip().upper(), otypes=[object])(b) if b.size else b
    if not np.all(np.isin(up, ["S", "N"])):
        raise NavInputError(f"'{body_bearing}' is not a bearing on the meridian",
                            field="body_bearing", example="S or N")
    return up == "S"


def latitude_by_meridian_altitude(ho_deg, dec_deg, *, body_bearing=None, lower_transit=False,
                                  dr_lat_deg=None):
    """Latitude from a body's altitude on the meridian (vectorised).

    Upper transit: lat = Dec + (90° − Ho) with the body bearing S, Dec − (90° − Ho) bearing N.
    Lower transit (below the pole): lat = ±(Ho + 90° − |Dec|), the sign of the Dec; the body then
    bears toward the elevated pole, of the Dec's name, and a stated bearing must agree.

    When `body_bearing` is None it is decided from the DR: the body bears south when the DR
    latitude is north of (or equal to) the Dec, north otherwise — which is the same as taking,
    of the two latitudes Dec ± z, the one nearer the DR. Without a bearing or a DR, or when the
    result is not a latitude, NavInputError names the field.
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    if not (np.all(np.isfinite(ho)) and np.all((ho >= 0.0) & (ho <= 90.0))):
        raise NavInputError("Ho on the meridian must be between 0° and 90°", field="ho_deg",
                            example="52.408")
    if not (np.all(np.isfinite(dec)) and np.all(np.abs(dec) <= 90.0)):
        raise NavInputError("Dec must be between 90° S and 90° N", field="dec_deg",
                            example="-12.4 (south -)")
    lower = np.asarray(lower_transit, dtype=bool)
    shape = np.broadcast_shapes(ho.shape, dec.shape, lower.shape)
    lower = np.broadcast_to(lower, shape)
    if np.any(lower & (dec == 0.0)):
        raise NavInputError("a body on the equator has no lower transit above the horizon",
                            field="lower_transit", example="False")
    if body_bearing is not None:
        bears_s = _bearing_array(body_bearing, shape)
        if np.any(lower & (bears_s != (dec < 0.0))):
            raise NavInputError("below the pole a body bears toward the pole of its Dec's name",
                                field="body_bearing", example="N for a northern star")
    elif dr_lat_deg is not None:
        dr = np.asarray(dr_lat_deg, dtype=float)
        if not (np.all(np.isfinite(dr)) and np.all(np.abs(dr) <= 90.0)):
            raise NavInputError("not a latitude", field="dr_lat_deg", example="41.2")
        bears_s = np.broadcast_to(dr >= dec, shape)
    elif np.all(lower):
        bears_s = np.broadcast_to(dec < 0.0, shape)        # not used: lower transit only
    else:
        raise NavInputError("give the body's bearing on the meridian, or a DR latitude to "
                            "decide it", field="body_bearing", example="S or N")
    z = 90.0 - ho
    upper_lat = np.where(bears_s, dec + z, dec - z)
    polar = 90.0 - np.abs(dec)
    lower_lat = np.sign(dec) * (ho + polar)
    lat = np.where(lower, lower_lat, upper_lat)
    if np.any(np.abs(lat) > 90.0 + 1e-9):
        raise NavInputError("this Ho, Dec and bearing give no latitude: check the bearing and "
                            "the name of the Dec", field="body_bearing", example="S or N")
    return _scalar(np.clip(lat, -90.0, 90.0))


# ---------------------------------------------------------------- longitude by the time of noon

def _instants(observed_utc, date):
    if isinstance(observed_utc, time):
        if date is None or not isinstance(date, date_cls):
            raise NavInputError("a time of day needs its date", field="date",
                                example="2026-06-21")
        tz = observed_utc.tzinfo or UTC
        observed_utc = datetime.combine(date, observed_utc.replace(tzinfo=None), tzinfo=tz)
    if isinstance(observed_utc, datetime):
        _aware(observed_utc, "observed_utc")
        return observed_utc
    return to_datetime64(observed_utc)


def longitude_from_meridian_passage(observed_utc, date=None):
    """Longitude (east +) from the UTC of the Sun's observed meridian passage: lon = −GHA.

    `observed_utc` is an aware datetime (or an array of ``datetime64`` UTC), or a
    ``datetime.time`` in UTC with its `date`. At the transit the Sun's LHA is 0, so
    lon = −GHA Sun reduced to [−180, 180). The same as the equation-of-time working
    (:func:`longitude_by_equation_of_time`). The timing is the weak point: the Sun's altitude is
    nearly flat at noon, and an error of 1 min of time in the instant is 15′ of longitude.
    """
    from . import almanac

    t = _instants(observed_utc, date)
    gha = almanac.body_almanac("Sun", t).gha_deg
    return _scalar(norm180(-np.asarray(gha)))


@dataclass(frozen=True)
class NoonLongitude:
    """Longitude by the time of noon, the navigator's way.

    ``greenwich_lan_ut1_h``: the hour (UT1 = mean time at Greenwich) of the apparent Sun's
    Greenwich transit, 12 h − EoT; ``observed_ut1_h``: the observed instant in UT1 hours;
    lon = 15°/h × (Greenwich LAN − observed), east +. EoT is apparent minus mean time (+ when
    the Sun is early, as in November).
    """

    equation_of_time_min: float
    greenwich_lan_ut1_h: float
    observed_ut1_h: float
    lon_deg: float


def longitude_by_equation_of_time(observed_utc, date=None) -> NoonLongitude:
    """The equation-of-time form of :func:`longitude_from_meridian_passage` (the working shown beside it)."""
    from . import almanac

    t = _instants(observed_utc, date)
    inst = almanac.Instants(t)
    eot = np.asarray(almanac.equation_of_time_min(inst))
    observed_h = np.asarray(inst.ut1_day_fraction) * 24.0
    greenwich_h = 12.0 - eot / 60.0
    lon = norm180(15.0 * (greenwich_h - observed_h))
    return NoonLongitude(equation_of_time_min=_scalar(eot), greenwich_lan_ut1_h=_scalar(greenwich_h),
                         observed_ut1_h=_scalar(observed_h), lon_deg=_scalar(lon))


# ---------------------------------------------------------------- Polaris

def polaris_latitude(ho_deg, utc, lon_deg):
    """Latitude from an altitude of Polaris, solved exactly from its almanac GHA and Dec.

    sin Ho = sin φ sin d + cos φ cos d cos LHA is A sin φ + B cos φ = C with A = sin d,
    B = cos d cos LHA, C = sin Ho; so φ = asin(C/R) − α, R = √(A² + B²), α = atan2(B, A). The other
    root, 180° − asin(C/R) − α, lies beyond the pole for any altitude Polaris can have. Vectorised:
    `ho_deg` and `lon_deg` broadcast against the instants (time on the last axis).
    """
    from . import almanac

    ho = np.asarray(ho_deg, dtype=float)
    lon = np.asarray(lon_deg, dtype=float)
    if not (np.all(np.isfinite(ho)) and np.all((ho >= -1.0) & (ho <= 90.0))):
        raise NavInputError("Ho of Polaris must be between 0° and 90°", field="ho_deg",
                            example="38.412")
    if not (np.all(np.isfinite(lon)) and np.all(np.abs(lon) <= 360.0)):
        raise NavInputError("not a longitude", field="lon_deg", example="-32.118 (east +)")
    t = utc if not isinstance(utc, datetime) else _aware(utc, "utc")
    pol = almanac.body_almanac("Polaris", t)
    lha = np.asarray(pol.gha_deg) + lon
    dec = np.asarray(pol.dec_deg)
    a = sind(dec)
    b = cosd(dec) * cosd(lha)
    r = np.hypot(a, b)
    ratio = sind(ho) / r
    if np.any(ratio > 1.0 + 1e-12):
        raise NavInputError("no latitude has Polaris this high at this time", field="ho_deg",
                            example="38.412")
    lat = asind(ratio) - atan2d(b, a)
    return _scalar(lat)
