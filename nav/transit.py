"""Meridian passage of any body for a vessel under way: when, how high, what to preset.

The upper transit is LHA = 0 at the longitude the vessel has at that instant (the DR carried
along her course and speed, :class:`nav.sky.Track`): a root of one function of time, found by
:func:`nav.sky.find_roots` over the zone date. On the meridian the altitude is
Hc = 90° − |lat − Dec| (geocentric, from the DR then) and the body bears S when the DR is north of
its Dec, N otherwise. The Hs to preset undoes the corrections in force
(:func:`nav.noonsight.hs_for_ho`; lower limb for the Sun and Moon).

The latitude rule, as the trade states it: the zenith distance z = 90° − Ho is named opposite to
the body's bearing; same names (z and Dec) add, contrary names subtract, the result named like the
larger. In signed arithmetic (north +): lat = Dec + z with the body bearing S, lat = Dec − z with
it bearing N (:func:`nav.meridian.latitude_by_meridian_altitude`).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime, timedelta

import numpy as np

from .angles import norm180, norm360
from .errors import NavInputError
from .timekeeping import from_datetime64


@dataclass(frozen=True)
class Transit:
    body: str
    kind: str
    utc: datetime | None            # None: no upper transit on the date
    zone_time: datetime | None
    zone_description: timedelta
    lat_deg: float | None
    lon_deg: float | None
    dec_deg: float | None
    hc_deg: float | None
    zn_deg: float | None
    bearing: str | None             # "S" or "N" on the meridian
    hs_preset_deg: float | None
    limb: str | None
    correction: object
    rule: str | None
    eye_height_m: float
    index_error_arcmin: float
    temperature_c: float
    pressure_hpa: float
    horizon: str
    warnings: tuple


def latitude_rule(bearing: str, dec_deg: float) -> str:
    """The meridian-altitude rule in words, for this bearing and Dec."""
    z_name = "N" if bearing == "S" else "S"
    dec_name = "S" if dec_deg < 0 else "N"
    how = ("same names: lat = z + Dec" if z_name == dec_name
           else "contrary names: lat = difference of z and Dec, named like the larger")
    return (f"z = 90° − Ho, named {z_name} (opposite to the bearing {bearing}); Dec {dec_name}; "
            f"{how} (signed, north +: lat = Dec {'+' if bearing == 'S' else '−'} z)")


def body_transit(body: str, day: date, track, zone_description: timedelta, *,
                 eye_height_m: float = 0.0, index_error_arcmin: float = 0.0,
                 temperature_c: float = 10.0, pressure_hpa: float = 1010.0,
                 horizon: str = "sea") -> Transit:
    """The upper transit of `body` on the zone date `day` at the vessel's position then."""
    from .almanac import almanac, body_kind, resolve_body
    from .noonsight import hs_for_ho
    from .reduction import hc_zn
    from .sky import find_roots, zone_day_window

    name = resolve_body(body)
    kind = body_kind(name)
    start, end = zone_day_window(day, zone_description)

    def func(t64):
        a = almanac([name], t64)[0]
        _, lon = track.at(t64)
        return {f"{name}_lha": np.asarray(norm180(np.asarray(a.gha_deg) + lon))}

    roots = find_roots(func, start, end)[f"{name}_lha"]
    inst = dict(eye_height_m=eye_height_m, index_error_arcmin=index_error_arcmin,
                temperature_c=temperature_c, pressure_hpa=pressure_hpa, horizon=horizon)
    if not roots:
        return Transit(body=name, kind=kind, utc=None, zone_time=None,
                       zone_description=zone_description, lat_deg=None, lon_deg=None,
                       dec_deg=None, hc_deg=None, zn_deg=None, bearing=None,
                       hs_preset_deg=None, limb=None, correction=None, rule=None,
                       warnings=(f"{name} does not cross the meridian on this zone date (the "
                                 "Moon transits some 50 min later each day)",), **inst)
    t64 = roots[0][0]
    utc = from_datetime64(t64)
    a = almanac([name], t64)[0]
    lat, lon = (float(x) for x in track.at(t64))
    dec = float(a.dec_deg)
    hc, zn = (float(x) for x in hc_zn(lat, dec, float(norm360(float(a.gha_deg) + lon))))
    bearing = "S" if lat >= dec else "N"
    notes = []
    if len(roots) > 1:
        notes.append(f"{name} transits twice on this zone date; the second at "
                     f"{from_datetime64(roots[1][0]):%H:%M} UTC")
    limb = "lower" if kind in ("sun", "moon") else None
    hs = corr = None
    if hc <= 0.0:
        notes.append(f"{name} is below the horizon on the meridian here: no meridian sight")
    else:
        try:
            hs, corr = hs_for_ho(hc, body_kind=kind, limb=limb, lat_deg=lat, zn_deg=zn,
                                 hp_arcmin=None if a.hp_arcmin is None else float(a.hp_arcmin),
                                 sd_arcmin=None if a.sd_arcmin is None else float(a.sd_arcmin),
                                 **inst)
            notes += list(corr.warnings)
        except NavInputError as err:
            notes.append(f"no Hs to preset: {err.reason}")
    if hc > 85.0:
        notes.append("the meridian altitude is above 85°: near the zenith the body swings "
                     "quickly in azimuth and its greatest altitude is hard to judge")
    return Transit(body=name, kind=kind, utc=utc,
                   zone_time=(utc - zone_description).replace(tzinfo=None),
                   zone_description=zone_description, lat_deg=lat, lon_deg=float(norm180(lon)),
                   dec_deg=dec, hc_deg=hc, zn_deg=zn, bearing=bearing, hs_preset_deg=hs,
                   limb=limb, correction=corr, rule=latitude_rule(bearing, dec),
                   warnings=tuple(notes), **inst)
