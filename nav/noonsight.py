"""The noon sight and Polaris as a navigator works them: the working behind `nav noon`,
`nav latitude` and the shell's `noon`, `latitude` and `longitude`.

Nothing here prints; it calls the core and returns frozen dataclasses that :mod:`nav.render`
turns into text or JSON:

- :func:`predict_noon` completes a :class:`nav.meridian.Noon` with the Sun's GHA and Dec, Hc on
  the meridian at the DR and the Hs to preset on the sextant: the corrections of
  :func:`nav.corrections.correct_altitude` undone by iteration (Hs ← Hs + (Hc − Ho(Hs))).
- :func:`noon_from_passage` finds the noon of a passage's date from its DR track and legs: the
  transit is solved from the DR at the instant found, with the leg in force there, until the
  instant no longer moves (a change of course before noon is followed).
- :func:`meridian_latitude` turns a reduced sight into a latitude: Polaris at any LHA, any other
  body within :data:`MERIDIAN_LIMIT_DEG` of LHA of its upper or lower transit.
- :func:`timed_noon_longitude` is longitude from the observed instant of the Sun's transit.

Meridian limit: 1° of LHA (4 min of time for the Sun). Within it the body's altitude differs
from its meridian altitude by ½·t²·cos φ·cos δ / cos H (the second-order term of the altitude
formula in the hour angle t, from memory), 0.5′·cos φ cos δ / cos H at t = 1°: under 1′ for
meridian altitudes up to about 60° in middle latitudes, and shown with every latitude. A sight
taken at the greatest altitude is on the meridian whatever the DR says, and the LHA computed from a
DR 60′ out in longitude, or from a time 4 min out, is still within the limit. Beyond it, the
altitude is an ordinary line of position: it belongs in a fix.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta

from .errors import NavInputError, OutOfRangeError

MERIDIAN_LIMIT_DEG = 1.0            # see the module docstring
EX_MERIDIAN_WARN_ARCMIN = 0.5       # common practice, no source: a latitude this far off is shown
FAR_FROM_DR_ARCMIN = 30.0           # common practice, no source (as nav.reduction's 30 nmi)
PRESET_TOLERANCE_DEG = 1e-10 / 60.0
PRESET_MAX_ITER = 30
PASSAGE_NOON_MAX_ITER = 8
OLD_DR_H = 12.0                     # as the shell's `where`: a DR older than this is cautioned
DATE_EXAMPLE = "2026-06-21"
_DATE_RE = re.compile(r"^\s*\d{4}-\d{2}-\d{2}\s*$")


def parse_date(text: str, field: str = "date") -> date:
    """A calendar date, ISO 8601 ``YYYY-MM-DD`` (read by :func:`nav.timekeeping.parse_naive_time`),
    inside the supported range of the ephemeris."""
    from .ephemeris import check_range
    from .timekeeping import UTC, parse_naive_time, to_datetime64

    if not _DATE_RE.match(str(text)):
        raise NavInputError(f"'{text}' is not a date (YYYY-MM-DD)", field=field,
                            example=DATE_EXAMPLE)
    try:
        day = parse_naive_time(f"{str(text).strip()} 12:00:00", field).date()
    except OutOfRangeError:
        raise
    except NavInputError:
        raise NavInputError(f"'{text}' is not a real calendar date", field=field,
                            example=DATE_EXAMPLE) from None
    check_range(to_datetime64(datetime.combine(day, time(12), tzinfo=UTC)), field)
    return day


# ---------------------------------------------------------------- Hs to preset

def hs_for_ho(ho_deg: float, *, body_kind: str, limb, index_error_arcmin: float,
              eye_height_m: float, horizon: str, temperature_c: float, pressure_hpa: float,
              hp_arcmin, sd_arcmin, lat_deg: float, zn_deg: float):
    """The sextant altitude whose corrections give `ho_deg`: (hs_deg, its AltitudeCorrection).

    Fixed-point iteration on :func:`nav.corrections.correct_altitude` (the corrections change
    slowly with the altitude, so each step gains some three digits), to 1e-10′."""
    from .corrections import correct_altitude

    gain = 0.5 if horizon == "artificial" else 1.0

    def corrected(hs):
        return correct_altitude(hs, body_kind=body_kind, limb=limb,
                                index_error_arcmin=index_error_arcmin, eye_height_m=eye_height_m,
                                horizon=horizon, temperature_c=temperature_c,
                                pressure_hpa=pressure_hpa, hp_arcmin=hp_arcmin,
                                sd_arcmin=sd_arcmin, lat_deg=lat_deg, zn_deg=zn_deg)

    hs = ho_deg / gain
    for _ in range(PRESET_MAX_ITER):
        step = (ho_deg - float(corrected(hs).ho_deg)) / gain
        hs += step
        if abs(step) < PRESET_TOLERANCE_DEG:
            return hs, corrected(hs)
    raise NavInputError("the corrections could not be undone for this altitude", field="hc",
                        example="a body at least 5° above the horizon")


# ---------------------------------------------------------------- noon

@dataclass(frozen=True)
class NoonPrediction:
    """Local apparent noon with what the navigator sets up for it.

    ``noon``: :class:`nav.meridian.Noon` (UTC, zone time, the DR at noon, EoT); ``hc_deg`` and
    ``zn_deg``: the Sun's centre on the meridian from that DR (geocentric, as the almanac's);
    ``hs_preset_deg``: the lower limb's sextant reading that corrects to Hc with the instrument
    values here (None when the Sun stays below the horizon); ``watch_reading``: ZT + the watch's
    fast error (None without a watch error or a zone). ``dr_*``: the DR the working started from.
    """

    day: date
    noon: object
    sun_gha_deg: float
    sun_dec_deg: float
    sun_sd_arcmin: float
    sun_hp_arcmin: float
    lha_deg: float
    hc_deg: float
    zn_deg: float
    hs_preset_deg: float | None
    correction: object
    limb: str
    eye_height_m: float
    index_error_arcmin: float
    temperature_c: float
    pressure_hpa: float
    horizon: str
    watch_error_s: float | None
    watch_reading: datetime | None
    dr_utc: datetime
    dr_lat_deg: float
    dr_lon_deg: float
    course_deg: float | None
    speed_kn: float
    basis: str
    warnings: tuple


def predict_noon(noon, *, day: date, dr_utc: datetime, dr_lat_deg: float, dr_lon_deg: float,
                 course_deg: float | None, speed_kn: float, basis: str,
                 eye_height_m: float = 0.0, index_error_arcmin: float = 0.0,
                 temperature_c: float = 10.0, pressure_hpa: float = 1010.0,
                 horizon: str = "sea", watch_error_s: float | None = None,
                 warnings=()) -> NoonPrediction:
    """Complete `noon` (from :func:`nav.meridian.local_apparent_noon`) for the navigator."""
    from .almanac import body_almanac
    from .angles import format_dm, norm360
    from .reduction import HIGH_ALTITUDE_DEG, hc_zn

    sun = body_almanac("Sun", noon.utc)
    gha, dec = float(sun.gha_deg), float(sun.dec_deg)
    lha = float(norm360(gha + noon.lon_deg))
    hc, zn = (float(x) for x in hc_zn(noon.lat_deg, dec, lha))
    notes = list(warnings)
    hs = corr = None
    if hc <= 0.0:
        notes.append(f"the Sun stays below the horizon at noon here (Hc {format_dm(hc)}): no "
                     "noon sight")
    else:
        try:
            hs, corr = hs_for_ho(hc, body_kind="sun", limb="lower",
                                 index_error_arcmin=index_error_arcmin, eye_height_m=eye_height_m,
                                 horizon=horizon, temperature_c=temperature_c,
                                 pressure_hpa=pressure_hpa, hp_arcmin=float(sun.hp_arcmin),
                                 sd_arcmin=float(sun.sd_arcmin), lat_deg=noon.lat_deg, zn_deg=zn)
            notes += list(corr.warnings)
        except NavInputError as err:
            notes.append(f"no Hs to preset: {err.reason}")
    if hc > HIGH_ALTITUDE_DEG:
        notes.append(f"meridian altitude {format_dm(hc)} is above 85°: near the zenith the Sun "
                     "swings quickly in azimuth and its greatest altitude is hard to judge; "
                     "cross sights before and after noon instead")
    watch = None
    if watch_error_s is not None and noon.zone_time is not None:
        watch = noon.zone_time + timedelta(seconds=watch_error_s)
    return NoonPrediction(
        day=day, noon=noon, sun_gha_deg=gha, sun_dec_deg=dec, sun_sd_arcmin=float(sun.sd_arcmin),
        sun_hp_arcmin=float(sun.hp_arcmin), lha_deg=lha, hc_deg=hc, zn_deg=zn,
        hs_preset_deg=hs, correction=corr, limb="lower", eye_height_m=eye_height_m,
        index_error_arcmin=index_error_arcmin, temperature_c=temperature_c,
        pressure_hpa=pressure_hpa, horizon=horizon, watch_error_s=watch_error_s,
        watch_reading=watch, dr_utc=dr_utc, dr_lat_deg=dr_lat_deg, dr_lon_deg=dr_lon_deg,
        course_deg=course_deg, speed_kn=speed_kn, basis=basis, warnings=tuple(notes))


def noon_from_passage(passage, day: date) -> NoonPrediction:
    """Local apparent noon of `day` (the ship's date) for a passage under way.

    The first estimate is 12:00 local mean time at the DR longitude (found at 12:00 zone time);
    then, from the DR at the latest estimate and the leg in force there, the transit is solved by
    :func:`nav.meridian.local_apparent_noon`, until the estimate moves less than its tolerance.
    At the end the Sun's LHA at the DR longitude of that instant is 0, whatever the legs did
    between the last position logged and noon. The settings in force give the zone, the watch
    error and the instrument values."""
    from .meridian import NOON_TOLERANCE_S, local_apparent_noon
    from .timekeeping import UTC

    s = passage.settings
    zd = timedelta(hours=s.zone_description_h)
    midday = datetime.combine(day, time(12), tzinfo=UTC)
    try:
        lon = passage.where(midday + zd).lon_deg
    except NavInputError:
        if not passage.anchors:
            raise
        lon = passage.anchors[0].lon_deg          # only a first guess of the time
    t = midday - timedelta(hours=lon / 15.0)
    for _ in range(PASSAGE_NOON_MAX_ITER):
        w = passage.where(t)
        leg = passage.leg_at(t)
        moving = leg is not None and leg.course_deg is not None and leg.speed_kn > 0
        course, speed = (leg.course_deg, leg.speed_kn) if moving else (0.0, 0.0)
        noon = local_apparent_noon(t, w.lat_deg, w.lon_deg, course, speed, zd)
        moved = abs((noon.utc - t).total_seconds())
        t = noon.utc
        if moved < NOON_TOLERANCE_S:
            break
    warnings = []
    age_h = w.age.total_seconds() / 3600.0
    if age_h > OLD_DR_H:
        warnings.append(f"the noon rests on a DR of {age_h:.0f} h; take sights")
    if not moving:
        warnings.append("no course and speed in force: the DR is held where it was logged")
    return predict_noon(noon, day=day, dr_utc=w.utc, dr_lat_deg=w.lat_deg, dr_lon_deg=w.lon_deg,
                        course_deg=course if moving else None, speed_kn=speed,
                        basis=w.describe(), eye_height_m=s.eye_height_m,
                        index_error_arcmin=s.index_error_arcmin, temperature_c=s.temperature_c,
                        pressure_hpa=s.pressure_hpa, horizon=s.horizon,
                        watch_error_s=s.watch_error_s, warnings=warnings)


# ---------------------------------------------------------------- latitude from one sight

@dataclass(frozen=True)
class MeridianLatitude:
    """The latitude one sight gives, with the working.

    ``method``: ``upper transit``, ``lower transit`` or ``Polaris``. Meridian rule: ``bearing``
    (S/N) of the body, ``zenith_distance_deg`` named ``zenith_name`` (opposite to the bearing),
    ``dec_name``, ``same_name``; ``off_meridian_deg`` the LHA at the DR from the transit used and
    ``ex_meridian_arcmin`` what the body's altitude at the DR differs there from its meridian
    altitude (+ lower than on the meridian). Lower transit and Polaris: ``polar_distance_deg``.
    Polaris: ``gha_aries_deg``, ``sha_deg`` and ``lat_per_30arcmin_lon_arcmin``, the change of the
    latitude for a DR longitude 30′ different. ``sight`` is the reduced sight (Hs -> Ho).
    """

    method: str
    sight: object
    body: str
    utc: datetime
    ho_deg: float
    gha_deg: float
    dec_deg: float
    lha_deg: float
    dr_lat_deg: float
    dr_lon_deg: float
    lat_deg: float
    bearing: str
    zenith_distance_deg: float | None = None
    zenith_name: str | None = None
    dec_name: str | None = None
    same_name: bool | None = None
    off_meridian_deg: float | None = None
    ex_meridian_arcmin: float | None = None
    limit_deg: float = MERIDIAN_LIMIT_DEG
    polar_distance_deg: float | None = None
    gha_aries_deg: float | None = None
    sha_deg: float | None = None
    lat_per_30arcmin_lon_arcmin: float | None = None
    warnings: tuple = ()


def _name(x: float) -> str:
    return "S" if x < 0 else "N"


def meridian_latitude(red, *, fix_hint: str = "fix ID ID ...",
                      field: str = "id") -> MeridianLatitude:
    """The latitude of one reduced sight (a scalar :class:`nav.reduction.SightReductions`,
    reduced from its DR): Polaris at any LHA, any other body within
    :data:`MERIDIAN_LIMIT_DEG` of its upper or lower transit (else NavInputError on `field`,
    with `fix_hint` as the example)."""
    from .angles import format_dm, norm180
    from .meridian import latitude_by_meridian_altitude
    from .reduction import HIGH_ALTITUDE_DEG, hc_zn
    from .timekeeping import from_datetime64

    utc = from_datetime64(red.utc) if not isinstance(red.utc, datetime) else red.utc
    body, ho = str(red.body), float(red.ho_deg)
    gha, dec, lha = float(red.gha_deg), float(red.dec_deg), float(red.lha_deg)
    dr_lat, dr_lon = float(red.dr_lat_deg), float(red.dr_lon_deg)
    base = dict(sight=red, body=body, utc=utc, ho_deg=ho, gha_deg=gha, dec_deg=dec, lha_deg=lha,
                dr_lat_deg=dr_lat, dr_lon_deg=dr_lon)
    if body == "Polaris":
        return _polaris(base, red)
    off_upper = abs(float(norm180(lha)))
    off_lower = abs(float(norm180(lha - 180.0)))
    if min(off_upper, off_lower) > MERIDIAN_LIMIT_DEG:
        near = "upper" if off_upper <= off_lower else "lower"
        raise NavInputError(
            f"{body} was {min(off_upper, off_lower):.1f}° of LHA from its {near} transit at the DR "
            f"(LHA {format_dm(lha, deg_width=3, wrap360=True)}): the meridian rule holds within "
            f"{MERIDIAN_LIMIT_DEG:g}° of LHA (4 min of time for the Sun), and beyond it the "
            "altitude is a line of position for a fix with other sights (if this was the "
            "greatest altitude, the DR longitude or the time is out by as much)",
            field=field, example=fix_hint)
    lower = off_lower < off_upper
    warnings = []
    if lower:
        bearing = _name(dec)                    # toward the elevated pole, of the Dec's name
        lat = float(latitude_by_meridian_altitude(ho, dec, body_bearing=bearing,
                                                  lower_transit=True))
        extra = dict(polar_distance_deg=90.0 - abs(dec), off_meridian_deg=off_lower)
        on_meridian = 180.0
    else:
        bearing = "S" if dr_lat >= dec else "N"  # as nav.meridian decides it from the DR
        lat = float(latitude_by_meridian_altitude(ho, dec, body_bearing=bearing))
        z = 90.0 - ho
        z_name = "N" if bearing == "S" else "S"
        extra = dict(zenith_distance_deg=z, zenith_name=z_name, dec_name=_name(dec),
                     same_name=z_name == _name(dec), off_meridian_deg=off_upper)
        on_meridian = 0.0
    ex = (float(hc_zn(dr_lat, dec, on_meridian)[0]) - float(hc_zn(dr_lat, dec, lha)[0])) * 60.0
    if abs(ex) > EX_MERIDIAN_WARN_ARCMIN:
        warnings.append(f"at this LHA the body stands {abs(ex):.1f}′ "
                        f"{'below' if ex > 0 else 'above'} its meridian altitude at the DR: if "
                        "the sight was timed right, the latitude is off by about that much")
    if ho > HIGH_ALTITUDE_DEG:
        warnings.append(f"Ho {format_dm(ho)} is above 85°: near the zenith the body swings "
                        "quickly in azimuth and its greatest altitude is hard to judge; check "
                        f"that it bore {bearing} (decided from the DR)")
    warnings += _far_from_dr(lat, dr_lat)
    return MeridianLatitude(method="lower transit" if lower else "upper transit", lat_deg=lat,
                            bearing=bearing, ex_meridian_arcmin=ex, warnings=tuple(warnings),
                            **base, **extra)


def _far_from_dr(lat: float, dr_lat: float) -> list[str]:
    diff = abs(lat - dr_lat) * 60.0
    if diff > FAR_FROM_DR_ARCMIN:
        return [f"the latitude is {diff:.0f}′ from the DR's: check the body, the time and Hs"]
    return []


def _polaris(base: dict, red) -> MeridianLatitude:
    from .almanac import body_almanac
    from .meridian import polaris_latitude

    utc, ho, dr_lon = base["utc"], base["ho_deg"], base["dr_lon_deg"]
    pol = body_almanac("Polaris", utc)
    lat = float(polaris_latitude(ho, utc, dr_lon))
    moved = abs(float(polaris_latitude(ho, utc, dr_lon + 0.5)) - lat) * 60.0
    warnings = _far_from_dr(lat, base["dr_lat_deg"])
    if base["dr_lat_deg"] < -1.0:
        warnings.append("Polaris is below the horizon south of the equator: check the body")
    return MeridianLatitude(method="Polaris", lat_deg=lat, bearing="N",
                            polar_distance_deg=90.0 - float(pol.dec_deg),
                            gha_aries_deg=float(pol.gha_aries_deg), sha_deg=float(pol.sha_deg),
                            lat_per_30arcmin_lon_arcmin=moved, warnings=tuple(warnings), **base)


# ---------------------------------------------------------------- longitude by the time of noon

@dataclass(frozen=True)
class TimedNoonLongitude:
    """Longitude from the observed instant of the Sun's meridian passage.

    ``lon_deg`` = −GHA of the Sun then; ``working`` is :class:`nav.meridian.NoonLongitude` (the
    equation-of-time form of the same). With a DR: ``dr_*`` and ``hang_min``, the minutes either
    side of noon during which the Sun stays within 0.1′ of its meridian altitude there."""

    utc: datetime
    sun_gha_deg: float
    sun_dec_deg: float
    lon_deg: float
    working: object
    dr_lat_deg: float | None
    dr_lon_deg: float | None
    basis: str | None
    hang_min: float | None


SEXTANT_RESOLUTION_ARCMIN = 0.1     # the reading of a micrometer sextant (common practice)


def hang_minutes(lat_deg: float, dec_deg: float) -> float:
    """Minutes of time either side of the transit in which the Sun's altitude stays within 0.1′ of
    its meridian altitude: Δh = ½·t²·cos φ·cos δ / cos H (textbook expansion of the altitude
    formula, from memory), solved for t."""
    import math

    from .angles import cosd

    h = 90.0 - abs(lat_deg - dec_deg)
    k = float(cosd(lat_deg)) * float(cosd(dec_deg))
    if k <= 0.0:
        return float("inf")
    t_rad = math.sqrt(2.0 * math.radians(SEXTANT_RESOLUTION_ARCMIN / 60.0)
                      * float(cosd(h)) / k)
    return math.degrees(t_rad) * 4.0        # 4 min of time per degree of hour angle


def timed_noon_longitude(utc: datetime, *, where=None) -> TimedNoonLongitude:
    """Longitude from the UTC of the Sun's transit (`where`: the DR then, or None)."""
    from .almanac import body_almanac
    from .meridian import longitude_by_equation_of_time, longitude_from_meridian_passage

    sun = body_almanac("Sun", utc)
    lon = float(longitude_from_meridian_passage(utc))
    work = longitude_by_equation_of_time(utc)
    dec = float(sun.dec_deg)
    return TimedNoonLongitude(
        utc=utc, sun_gha_deg=float(sun.gha_deg), sun_dec_deg=dec, lon_deg=lon, working=work,
        dr_lat_deg=None if where is None else where.lat_deg,
        dr_lon_deg=None if where is None else where.lon_deg,
        basis=None if where is None else where.describe(),
        hang_min=None if where is None else hang_minutes(where.lat_deg, dec))


# ---------------------------------------------------------------- the CLI
