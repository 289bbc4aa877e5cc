"""A sheet worked from an exercise sight: the tables' way or exactly, with slips planted on demand.

:func:`work_sheet` fills every figure of the sheet contract (:mod:`.sheet`) in the order a
student works it, each step from the figures before it. With ``slips`` it plants the named
mistakes, and every later figure is worked honestly from the mistaken one — which is what a
student's sheet with that slip looks like, and what ``nav mark`` must diagnose.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta

from ..angles import norm180, norm360
from ..errors import NavInputError
from ..timekeeping import UTC
from .sheet import split_utc
from .tables import tabulate, tenth_arcmin, tenth_deg, work_altitude
from .triangle import solve, zn_from_z

SLIPS = {
    "ie_sign": "index correction applied with the wrong sign",
    "dip_feet_as_metres": "dip worked for a height in feet taken as metres",
    "lha_east_west": "longitude applied to GHA with the wrong sign",
    "dec_name": "declination given the wrong name, N for S",
    "zone_not_applied": "zone time used as UTC (the zone description not applied)",
    "sha_subtracted": "SHA subtracted from GHA Aries instead of added",
    "intercept_toward_away": "toward and away reversed",
    "zn_rule": "Z turned into Zn by the wrong hemisphere's or quadrant's rule",
    "sd_limb": "semi-diameter applied with the wrong sign for the limb",
    "watch_error_sign": "watch error applied the wrong way (fast added, or slow subtracted)",
    "wrong_hour": "GHA taken for the wrong hour of UTC",
    "d_sign": "d correction applied with the wrong sign",
    "date_wrong": "the Greenwich date not carried over midnight",
}
"""Codes of the slips nav plants and names, with the sentence that names each."""


def eye_text(row) -> str:
    """The height of eye as the exercise typed it (``10 ft``), else metres."""
    return row.cells.get("eye_height_m") or f"{row.eye_height_m:g} m"


def _feet_number(row) -> float:
    text = eye_text(row).lower()
    if "ft" not in text and "feet" not in text:
        raise NavInputError("the slip dip_feet_as_metres needs a height of eye given in feet",
                            field="mistakes", example="an exercise with eye_height 10 ft")
    return float(text.replace("feet", "").replace("ft", "").strip())


def _time_block(row, slips) -> tuple[dict, datetime]:
    fig: dict = {}
    if row.ship_date is None:
        utc = row.utc
    else:
        err = timedelta(seconds=-row.watch_error_s if "watch_error_sign" in slips
                        else row.watch_error_s)
        zt = datetime.combine(row.ship_date, datetime.min.time()) + row.watch_time - err
        zd = timedelta(hours=row.zone_h)
        utc_naive = zt if "zone_not_applied" in slips else zt + zd
        if "date_wrong" in slips and utc_naive.date() != zt.date():
            utc_naive -= (utc_naive.date() - zt.date())
        utc = utc_naive.replace(tzinfo=UTC)
        fig.update(ship_date=row.ship_date, watch_time=row.watch_time,
                   watch_error=row.watch_error_s, zd=row.zone_h,
                   zt=zt - datetime.combine(zt.date(), datetime.min.time()))
    fig["utc_date"], fig["utc_time"] = split_utc(utc)
    return fig, utc


def _almanac(row, utc, tables, slips) -> dict:
    from ..almanac import body_almanac, body_kind

    kind = body_kind(row.body)
    fig: dict = {}
    if tables:
        t = tabulate(row.body, utc)
        hour = t.gha_hour_deg
        if "wrong_hour" in slips:
            hour = tabulate(row.body, t.hour_utc + timedelta(hours=1)).gha_hour_deg
        fig.update(gha_hour=hour, gha_incr=t.incr_deg, v=t.v_arcmin, v_corr=t.v_corr_arcmin,
                   dec_hour=t.dec_hour_deg, d=t.d_arcmin, d_corr=t.d_corr_arcmin, hp=t.hp_arcmin)
        if kind == "star":
            fig["gha_aries"] = float(norm360(hour + t.incr_deg))
            fig["sha"] = t.sha_deg
        else:
            fig["gha"] = float(norm360(hour + t.incr_deg + (t.v_corr_arcmin or 0.0) / 60.0))
        dec, sd = t.dec_deg, t.sd_arcmin
        if t.d_corr_arcmin is not None and "d_sign" in slips:
            toward = 1.0 if t.dec_hour_deg >= 0 else -1.0
            dec = t.dec_hour_deg - toward * t.d_corr_arcmin / 60.0
    else:
        a = body_almanac(row.body, utc)
        fig["hp"] = float(a.hp_arcmin) if kind in ("moon", "planet") else None
        if kind == "star":
            fig.update(gha_aries=float(a.gha_aries_deg), sha=float(a.sha_deg))
        else:
            fig["gha"] = float(a.gha_deg)
        dec, sd = float(a.dec_deg), (float(a.sd_arcmin) if kind in ("sun", "moon") else None)
    if kind == "star":
        sign = -1.0 if "sha_subtracted" in slips else 1.0
        fig["gha"] = float(norm360(fig["gha_aries"] + sign * fig["sha"]))
    if row.gha_override_deg is not None:
        fig = {k: None for k in fig} | {"gha": row.gha_override_deg}
    if row.dec_override_deg is not None:
        dec = row.dec_override_deg
        for k in ("dec_hour", "d", "d_corr"):
            fig[k] = None
    if "dec_name" in slips:
        dec = -dec
        if fig.get("dec_hour") is not None:
            fig["dec_hour"] = -fig["dec_hour"]
    fig["dec"] = dec
    fig["_kind"], fig["_sd"] = kind, sd
    return fig


def _position(row, gha, method, slips) -> dict:
    lat, lon = row.dr_lat_deg, row.dr_lon_deg
    if method == "dr":
        ap_lat, ap_lon = lat, lon
        lha = gha - lon if "lha_east_west" in slips else gha + lon
    else:
        ap_lat = float(math.floor(lat + 0.5))      # as nav.reduction.assumed_position
        if "lha_east_west" in slips:
            x = gha - lon
            ap_lon = float(norm180(lon + (x - math.floor(x + 0.5))))
            lha = gha - ap_lon
        else:
            x = gha + lon
            ap_lon = float(norm180(lon + (math.floor(x + 0.5) - x)))
            lha = gha + ap_lon
    return {"dr_lat": lat, "dr_lon": lon, "ap_lat": ap_lat, "ap_lon": ap_lon,
            "lha": float(norm360(round(lha * 600.0) / 600.0 if method != "dr" else lha))}


def work_sheet(row, *, tables: bool = True, slips=frozenset(), method: str | None = None) -> dict:
    """Every figure of the sheet for one exercise sight (a :class:`nav.sightfile.SightRow`).

    `tables` works the tables' way (0.1′ figures, hour plus increment, v and d), else exactly.
    `slips`: codes of :data:`SLIPS` to plant. `method`: ``ap`` or ``dr`` (default: the row's,
    else ``ap``). Returns figure → value as :mod:`.sheet` describes, plus ``_kind`` (body kind),
    ``_utc`` and ``_signed_intercept_nmi``.
    """
    unknown = set(slips) - set(SLIPS)
    if unknown:
        raise NavInputError(f"unknown slip code '{sorted(unknown)[0]}'", field="mistakes",
                            example=",".join(list(SLIPS)[:3]))
    method = method or row.method or "ap"
    fig: dict = {"sight": row.sight_id, "body": row.body, "limb": row.limb}
    block, utc = _time_block(row, slips)
    fig.update(block)
    fig.update(_almanac(row, utc, tables, slips))
    kind, sd_alm = fig.pop("_kind"), fig.pop("_sd")
    fig.update(_position(row, fig["gha"], method, slips))
    # altitude: the slips change what the student feeds the corrections
    ie = row.index_error_arcmin
    eye = _feet_number(row) if "dip_feet_as_metres" in slips else row.eye_height_m
    limb = row.limb
    if "sd_limb" in slips and limb in ("lower", "upper"):
        limb = "upper" if limb == "lower" else "lower"
    w = work_altitude(kind, row.hs_deg, index_error_arcmin=-ie if "ie_sign" in slips else ie,
                      eye_height_m=eye, limb=limb, hp_arcmin=fig.get("hp"),
                      sd_arcmin=sd_alm, tables=tables)
    fig.update(hs=row.hs_deg, ie=ie, eye_height=eye_text(row), index_corr=w.index_corr_arcmin,
               dip=w.dip_arcmin, ha=w.ha_deg, refraction=w.refraction_arcmin, sd=w.sd_arcmin,
               parallax=w.parallax_arcmin, main_corr=w.main_corr_arcmin, add_corr=w.add_corr_arcmin,
               ho=w.ho_deg)
    tri = solve(fig["ap_lat"], fig["dec"], fig["lha"], w.ho_deg)
    hc, z = (tenth_deg(tri.hc_deg), round(tri.z_deg, 1)) if tables else (tri.hc_deg, tri.z_deg)
    pole, side = tri.pole, tri.side
    zn = zn_from_z(pole, z, side)
    if "zn_rule" in slips:
        zn = zn_from_z("S" if pole == "N" else "N", z, side)
    signed = (w.ho_deg - hc) * 60.0
    if tables:
        signed = tenth_arcmin(signed)
    t_a = "T" if signed >= 0 else "A"
    if "intercept_toward_away" in slips:
        t_a = "A" if t_a == "T" else "T"
    fig.update(hc=hc, z=(pole, z, side), zn=zn, intercept=abs(signed), t_a=t_a)
    fig["_kind"], fig["_utc"], fig["_signed_intercept_nmi"] = kind, utc, signed
    fig["_rule"] = f"{pole} lat, LHA {'over' if side == 'E' else 'under'} 180°: " + tri.rule
    return fig
