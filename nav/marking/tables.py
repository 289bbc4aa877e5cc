"""The almanac and the altitude corrections worked the tables' way, computed from the ephemeris.

A printed almanac tabulates GHA and Dec at whole hours of UTC to 0.1′; the navigator adds the
increment for the minutes and seconds at a fixed rate, and a small v correction for the excess of
the body's hourly GHA change over that rate; Dec takes the d correction for the hourly change.
nav computes those tabulated figures from its own ephemeris (no printed table is copied):

- GHA and Dec at the whole hour, each rounded to 0.1′;
- the increment at the nominal rate — 15° per hour for the Sun and planets, the sidereal rate
  (360.98564736629° a day) for Aries, 14°19.0′ per hour for the Moon (common practice, no source)
  — rounded to 0.1′;
- v: the hourly GHA change minus the nominal rate (Moon and planets; the Sun's is left out, as
  the trade does), d: the hourly Dec change, + when |Dec| is increasing; v and d to 0.1′, and their
  corrections (v or d × the fraction of the hour) to 0.1′;
- for a star, GHA Aries by hour plus increment, and its SHA and Dec at the instant, to 0.1′;
- HP (Moon, planets) and SD (Sun, Moon) at the hour, to 0.1′.

The altitude corrections: index correction −IE; dip 1.76′·√h to 0.1′; refraction (standard
air), SD with its limb sign (the Moon's with augmentation) and parallax in altitude, grouped as
the trade groups them into a main correction:

| body   | main correction                | additional        |
|--------|--------------------------------|-------------------|
| Sun    | refraction + SD + parallax     | —                 |
| star   | refraction                     | —                 |
| planet | refraction                     | parallax (HP part)|
| Moon   | refraction + SD (augmented)    | parallax (HP part)|
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np

from ..angles import norm360

SIDEREAL_DEG_PER_DAY = 360.98564736629      # Earth's rotation on the equinox (IAU 1982 GMST rate)
INCREMENT_DEG_PER_H = {"sun": 15.0, "planet": 15.0, "star": SIDEREAL_DEG_PER_DAY / 24.0,
                       "moon": 14.0 + 19.0 / 60.0}


def tenth_arcmin(x_arcmin: float) -> float:
    """Rounded to 0.1′ as a table prints it (halves away from zero)."""
    return math.copysign(math.floor(abs(x_arcmin) * 10.0 + 0.5) / 10.0, x_arcmin) + 0.0


def tenth_deg(x_deg: float) -> float:
    """An angle in degrees rounded to 0.1′."""
    return tenth_arcmin(x_deg * 60.0) / 60.0


def _exact(body: str, t: datetime):
    from ..almanac import body_almanac

    return body_almanac(body, t)


@dataclass(frozen=True)
class TabulatedSight:
    """The almanac figures of one sight worked the tables' way (angles in degrees, v/d/HP/SD in
    arcminutes). For a star, ``gha_hour_deg`` and ``incr_deg`` are Aries'; ``v`` is None for the
    Sun and stars, ``d`` None for stars."""

    body: str
    kind: str
    utc: datetime
    hour_utc: datetime
    gha_hour_deg: float
    incr_deg: float
    v_arcmin: float | None
    v_corr_arcmin: float | None
    gha_aries_deg: float | None
    sha_deg: float | None
    gha_deg: float
    dec_hour_deg: float
    d_arcmin: float | None
    d_corr_arcmin: float | None
    dec_deg: float
    hp_arcmin: float | None
    sd_arcmin: float | None


def increment_deg(kind: str, seconds_into_hour: float) -> float:
    """The increment for the minutes and seconds past the hour, to 0.1′."""
    return tenth_deg(INCREMENT_DEG_PER_H[kind] * seconds_into_hour / 3600.0)


def tabulate(body: str, utc: datetime) -> TabulatedSight:
    """The tables' figures for `body` at `utc` (an aware datetime; whole seconds as on a sheet)."""
    from ..almanac import body_kind

    kind = body_kind(body)
    hour = utc.replace(minute=0, second=0, microsecond=0)
    seconds = (utc - hour).total_seconds()
    frac = seconds / 3600.0
    a0, a1 = _exact(body, hour), _exact(body, hour + timedelta(hours=1))
    incr = increment_deg(kind, seconds)
    if kind == "star":
        aries_hour = tenth_deg(float(a0.gha_aries_deg))
        gha_aries = norm360(aries_hour + incr)
        now = _exact(body, utc)
        sha, dec = tenth_deg(float(now.sha_deg)), tenth_deg(float(now.dec_deg))
        return TabulatedSight(body, kind, utc, hour, aries_hour, incr, None, None, float(gha_aries),
                              sha, float(norm360(gha_aries + sha)), dec, None, None, dec, None, None)
    gha_hour = tenth_deg(float(a0.gha_deg))
    v = v_corr = None
    gha = gha_hour + incr
    if kind != "sun":
        change_arcmin = float(norm360(float(a1.gha_deg) - float(a0.gha_deg))) * 60.0
        v = tenth_arcmin(change_arcmin - INCREMENT_DEG_PER_H[kind] * 60.0)
        v_corr = tenth_arcmin(v * frac)
        gha += v_corr / 60.0
    dec_hour = tenth_deg(float(a0.dec_deg))
    north_change = (float(a1.dec_deg) - float(a0.dec_deg)) * 60.0
    toward = 1.0 if (dec_hour > 0 or dec_hour == 0 and float(a1.dec_deg) >= 0) else -1.0
    d = tenth_arcmin(north_change * toward)
    d_corr = tenth_arcmin(d * frac)
    dec = dec_hour + toward * d_corr / 60.0
    hp = tenth_arcmin(float(a0.hp_arcmin)) if kind in ("moon", "planet") else None
    sd = tenth_arcmin(float(a0.sd_arcmin)) if kind in ("sun", "moon") else None
    return TabulatedSight(body, kind, utc, hour, gha_hour, incr, v, v_corr, None, None,
                          float(norm360(gha)), dec_hour, d, d_corr, dec, hp, sd)


# ---------------------------------------------------------------- altitude corrections

@dataclass(frozen=True)
class AltitudeWork:
    """Hs → Ho as the sheet writes it: corrections in arcminutes as applied (signed)."""

    index_corr_arcmin: float
    dip_arcmin: float
    ha_deg: float
    refraction_arcmin: float
    sd_arcmin: float | None
    parallax_arcmin: float | None
    main_corr_arcmin: float
    add_corr_arcmin: float | None
    ho_deg: float


def group_main(kind: str, refraction: float, sd: float | None, parallax: float | None):
    """(main correction, additional correction) in arcminutes, grouped by the module's table."""
    sd, parallax = sd or 0.0, parallax or 0.0
    if kind == "sun":
        return refraction + sd + parallax, None
    if kind == "star":
        return refraction, None
    if kind == "planet":
        return refraction, parallax
    return refraction + sd, parallax


def work_altitude(kind: str, hs_deg: float, *, index_error_arcmin: float, eye_height_m: float,
                  limb: str | None, hp_arcmin: float | None, sd_arcmin: float | None,
                  tables: bool = True, lat_deg: float | None = None,
                  zn_deg: float | None = None) -> AltitudeWork:
    """The altitude corrections of one sight; `tables` rounds each figure to 0.1′ as tables do
    (then Ha and Ho are sums of the rounded figures); else the exact chain of
    :func:`nav.corrections.correct_altitude` with the same grouping."""
    from ..corrections import correct_altitude

    c = correct_altitude(hs_deg, body_kind=kind, limb=limb, index_error_arcmin=index_error_arcmin,
                         eye_height_m=eye_height_m, hp_arcmin=hp_arcmin,
                         sd_arcmin=sd_arcmin if kind in ("sun", "moon") else None,
                         lat_deg=lat_deg, zn_deg=zn_deg)
    has_sd = kind in ("sun", "moon")
    has_px = kind in ("sun", "moon", "planet")
    sd = float(c.sd_arcmin) + float(c.augmentation_arcmin) if has_sd else None
    px = float(c.parallax_arcmin) if has_px else None
    if not tables:
        main, add = group_main(kind, float(c.refraction_arcmin), sd, px)
        return AltitudeWork(float(c.index_arcmin), float(c.dip_arcmin), float(c.ha_deg),
                            float(c.refraction_arcmin), sd, px, main, add, float(c.ho_deg))
    r = tenth_arcmin
    ic, dip = r(float(c.index_arcmin)), r(float(c.dip_arcmin))
    ha = hs_deg + (ic + dip) / 60.0
    refraction = r(float(c.refraction_arcmin))
    sd_t = r(sd) if sd is not None else None
    px_t = r(px) if px is not None else None
    main, add = group_main(kind, float(c.refraction_arcmin), sd, px)
    main, add = r(main), (r(add) if add is not None else None)
    ho = ha + (main + (add or 0.0)) / 60.0
    return AltitudeWork(ic, dip, ha, refraction, sd_t, px_t, main, add, ho)


def dip_for(eye_height_m: float) -> float:
    """Dip as applied (negative), to 0.1′ (:func:`nav.corrections.dip_arcmin`)."""
    from ..corrections import dip_arcmin

    return -tenth_arcmin(float(np.asarray(dip_arcmin(eye_height_m))))
