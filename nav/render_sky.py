"""Renderers for the commands around the sights: sky (rise, set, twilight), meridian passage.

Text in navigator notation (times to the minute for events, positions in degrees and minutes,
bearings in whole degrees true) and JSON-ready dicts with the issue's keys. No maths here.
"""

from __future__ import annotations

import textwrap
from datetime import timedelta

from .angles import format_dm, format_lat, format_lon
from .timekeeping import format_utc

MINUS = "\u2212"


def zone_text(zd: timedelta) -> str:
    """A zone description, the trade's way: ``+2``, ``−10``, ``0``, ``+5:30``."""
    s = int(round(zd.total_seconds() / 60.0))
    sign = "+" if s > 0 else (MINUS if s < 0 else "")
    h, m = divmod(abs(s), 60)
    return f"{sign}{h}" + (f":{m:02d}" if m else "")


def zone_json(zd: timedelta) -> str:
    return zone_text(zd).replace(MINUS, "-")


def _minute(t) -> str:
    return (t + timedelta(seconds=30)).strftime("%H:%M")


def _iso_naive(t) -> str:
    return (t + timedelta(microseconds=500_000)).strftime("%Y-%m-%dT%H:%M:%S")


def _utc_cell(e) -> str:
    """The event's UTC to the minute, with its date (``00:53 (21 Jun)``) when that is not the
    zone time's date."""
    u, z = e.utc + timedelta(seconds=30), e.zone_time + timedelta(seconds=30)
    return f"{u:%H:%M}" + (f" ({u.day} {u:%b})" if u.date() != z.date() else "")


def motion_text(track) -> str:
    if track.speed_kn > 0:
        return f"{track.course_deg:05.1f}° at {track.speed_kn:g} kn"
    return "hove to (no course and speed)"


def sky_lines(s) -> list[str]:
    """A :class:`nav.sky.SkyDay` in navigator notation."""
    from .sky import EVENT_WORDS

    tr = s.track
    out = [f"Sky on {s.day:%Y-%m-%d}, zone {zone_text(s.zone_description)} ({s.zone_source})",
           f"  DR at 12:00 ZT {format_lat(tr.lat_deg)} {format_lon(tr.lon_deg)}, "
           f"{motion_text(tr)}; each event at the DR then",
           "",
           ""]
    cells = [_utc_cell(e) for e in s.events]
    wide = max((len(c) for c in cells), default=0) + 2
    wide = max(wide, 7)
    out[-1] = f"  {'event':<26}{'ZT':<7}{'UTC':<{wide}}{'DR then':<25}Zn"
    for e, cell in zip(s.events, cells):
        zn = f"{e.zn_deg:03.0f}°"
        if "meridian" in e.event:
            zn += " (S)" if abs(e.zn_deg - 180.0) < 90.0 else " (N)"
        out.append(f"  {EVENT_WORDS[e.event]:<26}{_minute(e.zone_time):<7}{cell:<{wide}}"
                   f"{format_lat(e.lat_deg) + ' ' + format_lon(e.lon_deg):<25}{zn}")
    if any("(" in c for c in cells):
        out.append("  (a UTC date in brackets: that event's UTC falls on another date than its "
                   "zone time)")
    if s.absent:
        out.append("")
        out.append("  Not on this date:")
        for code in s.absent:
            out.append(f"    {EVENT_WORDS[code]}: {s.absent_reasons.get(code, '')}")
    m = s.moon
    out += ["", f"  Moon: {m.phase}, {m.illuminated_fraction * 100:.0f}% of the disc lit "
                f"(at 12:00 ZT)"]
    horizon = ("the sea-level horizon" if not s.eye_height_m else
               f"the visible horizon (eye {s.eye_height_m:g} m, dip {s.dip_arcmin:.1f}′ added)")
    text = ("Definitions: sunrise and sunset, the Sun's upper limb on " + horizon + ": its "
            "centre at −50′ true (34′ refraction + 16′ SD); civil and nautical twilight, the "
            "Sun's centre at −6° and −12° true (no dip, no refraction); moonrise and moonset, "
            "the Moon's upper limb with its HP and 34′ refraction; meridian passage, the upper "
            "transit.")
    out += [""] + ["  " + x for x in textwrap.wrap(text, 88)]
    for w in s.warnings:
        out.append(f"  Warning: {w}")
    return out


def sky_dict(s) -> dict:
    return {
        "date": f"{s.day:%Y-%m-%d}",
        "zone": zone_json(s.zone_description),
        "zone_source": s.zone_source,
        "events": [{"event": e.event, "utc": format_utc(e.utc),
                    "zone_time": _iso_naive(e.zone_time), "lat_deg": round(e.lat_deg, 6),
                    "lon_deg": round(e.lon_deg, 6), "zn_deg": round(e.zn_deg, 2)}
                   for e in s.events],
        "absent": list(s.absent),
        "absent_reasons": dict(s.absent_reasons),
        "moon": {"phase": s.moon.phase,
                 "illuminated_fraction": round(s.moon.illuminated_fraction, 4)},
        "eye_height_m": s.eye_height_m,
        "dip_arcmin": round(s.dip_arcmin, 2),
        "warnings": list(s.warnings),
    }




def _r(x, k=6):
    return None if x is None else round(float(x), k)


def instrument_text(x) -> str:
    where = f"eye {x.eye_height_m:g} m" if x.horizon == "sea" else f"{x.horizon} horizon"
    return (f"{where}, IE {x.index_error_arcmin:+.1f}′, {x.temperature_c:g} °C, "
            f"{x.pressure_hpa:g} hPa").replace("-", MINUS)


def transit_lines(t) -> list[str]:
    """A :class:`nav.transit.Transit` in navigator notation."""
    out = [f"Meridian passage of {t.body} (upper transit), zone {zone_text(t.zone_description)}"]
    if t.utc is None:
        return out + [f"  ! {w}" for w in t.warnings]
    zt = t.zone_time + timedelta(microseconds=500_000)
    utc = t.utc + timedelta(microseconds=500_000)
    out += [f"  UTC          {utc:%H:%M:%S}  ({utc:%Y-%m-%d})",
            f"  zone time    {zt:%H:%M:%S}  ({zt:%Y-%m-%d}, UTC = ZT + ZD)",
            f"  DR then      {format_lat(t.lat_deg)} {format_lon(t.lon_deg)}",
            f"  Dec          {format_lat(t.dec_deg)}",
            f"  Hc           {format_dm(t.hc_deg)}  on the meridian, bearing {t.bearing} "
            f"(Zn {t.zn_deg:03.0f}°)"]
    if t.hs_preset_deg is not None:
        limb = f"{t.limb} limb, " if t.limb else ""
        out.append(f"  Hs to preset {format_dm(t.hs_preset_deg)}  ({limb}{instrument_text(t)})")
    rule = textwrap.wrap(t.rule, 74)
    out += [f"  latitude     {rule[0]}"] + [f"               {x}" for x in rule[1:]]
    out += [f"  ! {w}" for w in t.warnings]
    return out


def transit_dict(t) -> dict:
    return {
        "body": t.body,
        "utc": None if t.utc is None else format_utc(t.utc),
        "zone_time": None if t.zone_time is None else _iso_naive(t.zone_time),
        "zone": zone_json(t.zone_description),
        "hc_deg": _r(t.hc_deg), "hs_preset_deg": _r(t.hs_preset_deg),
        "lat_deg": _r(t.lat_deg), "lon_deg": _r(t.lon_deg), "dec_deg": _r(t.dec_deg),
        "zn_deg": _r(t.zn_deg, 4), "bearing": t.bearing, "limb": t.limb,
        "latitude_rule": t.rule, "eye_height_m": t.eye_height_m,
        "index_error_arcmin": t.index_error_arcmin, "warnings": list(t.warnings),
    }


# ---------------------------------------------------------------- compass

def compass_lines(c) -> list[str]:
    """A :class:`nav.compass.CompassCheck` in the trade's words."""
    from .compass import ew

    head = ("by azimuth" if c.method == "azimuth" else
            f"by amplitude ({'rising' if c.rising else 'setting'}, {c.horizon} horizon)")
    utc = c.utc + timedelta(microseconds=500_000)
    out = [f"Compass check {head}: {c.body} at {utc:%Y-%m-%d %H:%M:%S} UTC",
           f"  DR           {format_lat(c.lat_deg)} {format_lon(c.lon_deg)}",
           f"  Dec          {format_lat(c.dec_deg)}   LHA {format_dm(c.lha_deg, deg_width=3)}"]
    if c.method == "amplitude":
        out.append(f"  amplitude    {c.amplitude_name}  (sin A = sin Dec / cos lat, centre on the "
                   "celestial horizon)")
        if c.horizon == "visible":
            corr = f"{c.visible_correction_deg:+.1f}".replace("-", MINUS)
            alt = f"{c.horizon_alt_deg * 60:+.0f}".replace("-", MINUS)
            out.append(f"  visible-horizon correction {corr}°  (centre on the visible horizon: "
                       f"true altitude {alt}′)")
    out.append(f"  true bearing Zn {c.zn_deg:05.1f}°")
    out.append(f"  compass      {c.compass_bearing_deg:05.1f}°")
    out.append(f"  error        {ew(c.compass_error_deg)}  (true = compass + error, E +)")
    if c.variation_deg is not None:
        out.append(f"  variation    {ew(c.variation_deg)}")
        out.append(f"  deviation    {ew(c.deviation_deg)}  (error − variation)"
                   + (f" on compass heading {c.heading_deg:03.0f}°" if c.heading_deg is not None
                      else ""))
    out += [f"  ! {w}" for w in c.warnings]
    return out


def compass_dict(c) -> dict:
    d = {"method": c.method, "body": c.body, "utc": format_utc(c.utc),
         "zn_deg": round(c.zn_deg, 3), "compass_bearing_deg": c.compass_bearing_deg,
         "compass_error_deg": round(c.compass_error_deg, 3),
         "lat_deg": _r(c.lat_deg), "lon_deg": _r(c.lon_deg), "dec_deg": _r(c.dec_deg),
         "alt_deg": _r(c.alt_deg, 3), "warnings": list(c.warnings)}
    if c.variation_deg is not None:
        d["variation_deg"] = c.variation_deg
        d["deviation_deg"] = round(c.deviation_deg, 3)
    if c.heading_deg is not None:
        d["heading_deg"] = c.heading_deg
    if c.method == "amplitude":
        d.update({"amplitude_deg": round(c.amplitude_deg, 3), "amplitude": c.amplitude_name,
                  "rising": c.rising, "horizon": c.horizon,
                  "visible_correction_deg": _r(c.visible_correction_deg, 3)})
    return d


def deviation_lines(table) -> list[str]:
    """[(heading, [DeviationRow])] -> the deviation found on each compass heading."""
    from .compass import ew

    if not table:
        return ["No compass checks with a deviation in this log (a check needs the variation)."]
    out = ["Deviation found on each compass heading (nearest 5°)",
           f"  {'heading':<9}{'deviation':<11}{'checks':<8}from"]
    for heading, rows in table:
        mean = sum(r.deviation_deg for r in rows) / len(rows)
        spread = max(r.deviation_deg for r in rows) - min(r.deviation_deg for r in rows)
        ids = ", ".join(f"{r.entry_id} ({r.body}, {r.method}, {r.utc:%m-%d %H:%M})"
                        for r in rows)
        note = f"  spread {spread:.1f}°" if len(rows) > 1 else ""
        out.append(f"  {heading:03d}°     {ew(mean):<11}{len(rows):<8}{ids}{note}")
    return out


def deviation_dict(table) -> dict:
    return {"headings": [
        {"heading_deg": h, "deviation_deg": round(sum(r.deviation_deg for r in rows) / len(rows), 3),
         "checks": [{"id": r.entry_id, "utc": format_utc(r.utc), "body": r.body,
                     "method": r.method, "heading_deg": r.heading_deg,
                     "deviation_deg": round(r.deviation_deg, 3)} for r in rows]}
        for h, rows in table]}


# ---------------------------------------------------------------- identify

def _cand_row(c) -> str:
    mag = "" if c.magnitude is None else f"{c.magnitude:+.1f}".replace("-", MINUS)
    d_alt = f"{c.altitude_diff_arcmin:+.0f}′".replace("-", MINUS)
    d_az = f"{c.azimuth_diff_deg:+.1f}°".replace("-", MINUS)
    return (f"  {c.body:<22}{format_dm(c.hc_deg):>11}  {c.zn_deg:05.1f}°  {d_alt:>6}  "
            f"{d_az:>7}  {mag:>5}  {c.kind}")


def identify_lines(r) -> list[str]:
    utc = r.utc + timedelta(microseconds=500_000)
    out = [f"Which body: Hs {format_dm(r.hs_deg)} bearing {r.zn_observed_deg:05.1f}° true at "
           f"{utc:%Y-%m-%d %H:%M:%S} UTC",
           f"  from the DR {format_lat(r.lat_deg)} {format_lon(r.lon_deg)}; Ho as a star "
           f"{format_dm(r.ho_star_deg)}", ""]
    head = f"  {'body':<22}{'Hc':>11}  {'Zn':<6}  {'Ho−Hc':>6}  {'ΔZn':>7}  {'mag':>5}"
    if r.candidates:
        out += ["  Candidates, best fit first:", head] + [_cand_row(c) for c in r.candidates]
        if r.tie:
            out.append(f"  ! {r.candidates[0].body} and {r.candidates[1].body} fit about "
                       "equally: take another bearing, or a second star, to tell them apart")
    else:
        out += ["  No body fits this altitude and bearing (within about 2.5° of altitude or 7° "
                "of bearing). The nearest:", head] + [_cand_row(c) for c in r.nearest]
    out += ["", f"  The point observed: Dec {format_lat(r.observed_dec_deg)}, SHA "
                f"{format_dm(r.observed_sha_deg, deg_width=3)} (from Ho and the bearing at the "
                "DR)"]
    out += [f"  ! {w}" for w in r.warnings]
    return out


def identify_dict(r) -> dict:
    def c(x):
        return {"body": x.body, "kind": x.kind, "hc_deg": _r(x.hc_deg), "zn_deg": _r(x.zn_deg, 4),
                "altitude_diff_arcmin": _r(x.altitude_diff_arcmin, 2),
                "azimuth_diff_deg": _r(x.azimuth_diff_deg, 3), "magnitude": _r(x.magnitude, 2),
                "fit": _r(x.distance, 3)}

    return {"utc": format_utc(r.utc), "candidates": [c(x) for x in r.candidates],
            "fits": bool(r.candidates), "tie": r.tie, "nearest": [c(x) for x in r.nearest],
            "observed": {"dec_deg": _r(r.observed_dec_deg), "sha_deg": _r(r.observed_sha_deg)},
            "ho_star_deg": _r(r.ho_star_deg), "warnings": list(r.warnings)}


# ---------------------------------------------------------------- plan

def plan_lines(p) -> list[str]:
    utc = p.utc + timedelta(microseconds=500_000)
    zt = "" if p.zone_description is None else \
        f", ZT {utc - p.zone_description:%H:%M:%S} (zone {zone_text(p.zone_description)})"
    sun = f"{p.sun_alt_deg:+.1f}".replace("-", MINUS)
    out = [f"Bodies to shoot at {utc:%Y-%m-%d %H:%M:%S} UTC{zt}",
           f"  {p.how}" if p.how else "",
           f"  DR then {format_lat(p.lat_deg)} {format_lon(p.lon_deg)}; Sun's centre {sun}°"]
    out = [x for x in out if x]
    if p.window is not None:
        a, b = p.window
        mins = (b - a).total_seconds() / 60.0
        out.append(f"  Horizon and stars both usable {a + timedelta(seconds=30):%H:%M}–"
                   f"{b + timedelta(seconds=30):%H:%M} UTC, about {mins:.0f} min (Sun's "
                   "centre between −3° and −9°)")
    out += ["", f"  Candidates between {p.min_alt_deg:g}° and {p.max_alt_deg:g}° (Hs to preset: "
                f"eye {p.eye_height_m:g} m, IE {p.index_error_arcmin:+.1f}′)".replace("-", MINUS),
            f"    {'body':<16}{'Hc':>9}  {'Zn':<6}  {'mag':>5}  {'Hs preset':>10}  flags"]
    for b in p.bodies:
        mark = "*" if b.body in p.selection else " "
        mag = "" if b.magnitude is None else f"{b.magnitude:+.1f}".replace("-", MINUS)
        hs = "" if b.hs_preset_deg is None else format_dm(b.hs_preset_deg)
        flags = []
        if b.near_moon:
            flags.append("near the Moon")
        if b.kind == "moon":
            flags.append(b.note or f"{b.limb} limb")
        out.append(f"  {mark} {b.body:<16}{format_dm(b.hc_deg):>9}  {b.zn_deg:05.1f}°  {mag:>5}"
                   f"  {hs:>10}  {'; '.join(flags)}".rstrip())
    out += ["", f"  Suggested set (*): {', '.join(p.selection) or 'none'}",
            f"  Azimuth spread {p.azimuth_spread_deg:.0f}°, widest gap {p.widest_gap_deg:.0f}° "
            "(chosen for spread first, brightness second)"]
    out += [f"  ! {w}" for w in p.warnings]
    return out


def plan_dict(p) -> dict:
    return {
        "utc": format_utc(p.utc), "how": p.how, "sun_alt_deg": _r(p.sun_alt_deg, 3),
        "lat_deg": _r(p.lat_deg), "lon_deg": _r(p.lon_deg),
        "bodies": [{"body": b.body, "hc_deg": _r(b.hc_deg), "zn_deg": _r(b.zn_deg, 4),
                    "magnitude": _r(b.magnitude, 2), "hs_preset_deg": _r(b.hs_preset_deg),
                    "limb": b.limb, "near_moon": b.near_moon, "wrong_limb": b.wrong_limb}
                   for b in p.bodies],
        "selection": list(p.selection), "azimuth_spread_deg": _r(p.azimuth_spread_deg, 2),
        "widest_gap_deg": _r(p.widest_gap_deg, 2),
        "usable_window": None if p.window is None else
        {"start_utc": format_utc(p.window[0]), "end_utc": format_utc(p.window[1]),
         "minutes": round((p.window[1] - p.window[0]).total_seconds() / 60.0, 1)},
        "warnings": list(p.warnings),
    }


# ---------------------------------------------------------------- equal altitudes

def _arcmin_and_time(x_arcmin: float) -> str:
    s = f"{x_arcmin:+.1f}′ ({abs(x_arcmin) * 4.0:.0f} s of time)"   # 1′ of arc = 4 s of time
    return s.replace("-", MINUS)


def equal_altitudes_lines(r) -> list[str]:
    def hms(t):
        return f"{t + timedelta(microseconds=500_000):%H:%M:%S}"

    run = ("vessel still" if r.course_deg is None else
           f"{r.course_deg:05.1f}° at {r.speed_kn:g} kn between the sights")
    out = [f"Longitude by equal altitudes of the Sun on {r.t1:%Y-%m-%d}",
           f"  forenoon sight  {hms(r.t1)} UTC   afternoon sight {hms(r.t2)} UTC",
           f"  middle time     {hms(r.middle)} UTC   ({run})",
           f"  DR latitude     {format_lat(r.lat_deg)}; the Sun at about {format_dm(r.alt_deg)}",
           f"  from the middle time alone     {format_lon(r.lon_middle_only_deg)}",
           f"  correction for the change of Dec {_arcmin_and_time(r.dec_correction_arcmin)}"
           f"  (Dec changed {r.dec_change_arcmin:+.1f}′)".replace("-", MINUS),
           f"  correction for the run         {_arcmin_and_time(r.run_correction_arcmin)}",
           f"  longitude at the middle time   {format_lon(r.lon_noon_deg)}",
           f"  longitude at the first sight   {format_lon(r.lon_first_deg)};  at the second "
           f"{format_lon(r.lon_second_deg)}",
           f"  1′ more latitude (north) moves the longitude {r.lon_per_lat_arcmin:+.2f}′ "
           "(east +)".replace("-", MINUS),
           "  A line of position (a longitude), not a fix."]
    out += [f"  ! {w}" for w in r.warnings]
    return out


def equal_altitudes_dict(r) -> dict:
    return {"first_utc": format_utc(r.t1), "second_utc": format_utc(r.t2),
            "middle_utc": format_utc(r.middle), "lat_deg": _r(r.lat_deg),
            "lon_deg": _r(r.lon_noon_deg), "lon_first_deg": _r(r.lon_first_deg),
            "lon_second_deg": _r(r.lon_second_deg),
            "lon_middle_only_deg": _r(r.lon_middle_only_deg),
            "dec_correction_arcmin": _r(r.dec_correction_arcmin, 3),
            "run_correction_arcmin": _r(r.run_correction_arcmin, 3),
            "dec_change_arcmin": _r(r.dec_change_arcmin, 3),
            "lon_per_lat_arcmin": _r(r.lon_per_lat_arcmin, 4),
            "course_deg": r.course_deg, "speed_kn": r.speed_kn, "warnings": list(r.warnings)}
