"""Results -> text (navigator notation) and -> JSON-ready dicts. Shared by the CLI and the shell.

Nothing here computes navigation: it formats what the core returned.
"""

from __future__ import annotations

import math

import numpy as np

from . import CAUTION
from .angles import format_arcmin, format_dm, format_lat, format_lon
from .plausibility import FAR_FROM_DR
from .timekeeping import format_date_hms, format_utc, from_datetime64, round_to_second

LIMB_WORD = {"lower": "lower limb", "upper": "upper limb", "center": "centre"}


def _f(x) -> float:
    return float(np.asarray(x))


def intercept_text(intercept_nmi: float) -> str:
    x = _f(intercept_nmi)
    return f"{abs(x):.1f} nmi {'toward' if x >= 0 else 'away'} ({abs(x):.1f} {'T' if x >= 0 else 'A'})"


def sight_title(s, number: int | None = None, row: int | None = None, *,
                line: int | None = None) -> str:
    """``Sight 3 (line 4): Sun lower limb, 2026-03-20 10:42:10 UTC`` (a file's line, or a row)."""
    t = from_datetime64(s.utc) if isinstance(s.utc, np.datetime64) else s.utc
    limb = f" {LIMB_WORD[s.limb]}" if s.limb else ""
    head = f"Sight {number}" if number is not None else "Sight"
    if line is not None:
        head += f" (line {line})"
    elif row is not None and row != number:
        head += f" (row {row})"
    return f"{head}: {s.body}{limb}, {format_date_hms(t)} UTC"


def reduction_lines(s, *, eye_height_m=None, index_error_arcmin=None, temperature_c=None,
                    pressure_hpa=None) -> list[str]:
    """Every step of one reduced sight (a scalar :class:`nav.reduction.SightReductions`)."""
    rows: list[tuple[str, str, str]] = []
    rows.append(("Hs", format_dm(_f(s.hs_deg)), ""))
    ie = f"IE {format_arcmin(index_error_arcmin)}" if index_error_arcmin is not None else ""
    rows.append(("index corr.", format_arcmin(_f(s.index_arcmin)), ie))
    if s.horizon == "sea":
        rows.append(("dip", format_arcmin(_f(s.dip_arcmin)),
                     f"eye {eye_height_m:.1f} m" if eye_height_m is not None else ""))
    else:
        rows.append(("dip", "none", f"{s.horizon} horizon" +
                     (", altitude halved" if s.horizon == "artificial" else "")))
    rows.append(("Ha", format_dm(_f(s.ha_deg)), "apparent altitude"))
    wx = (f"{temperature_c:g} °C, {pressure_hpa:g} hPa"
          if temperature_c is not None and pressure_hpa is not None else "")
    rows.append(("refraction", format_arcmin(_f(s.refraction_arcmin)), f"Bennett, {wx}".rstrip(", ")))
    if s.kind in ("sun", "moon"):
        rows.append(("SD", format_arcmin(_f(s.sd_arcmin)), LIMB_WORD.get(s.limb, "")))
        if abs(_f(s.augmentation_arcmin)) >= 0.005:
            rows.append(("augmentation", format_arcmin(_f(s.augmentation_arcmin)), ""))
    if s.kind != "star":
        hp = _f(s.hp_arcmin)
        rows.append(("parallax", format_arcmin(_f(s.parallax_arcmin)),
                     f"HP {hp:.1f}\u2032" if math.isfinite(hp) else ""))
    rows.append(("Ho", format_dm(_f(s.ho_deg)), "observed altitude"))
    rows.append(("GHA", format_dm(_f(s.gha_deg), deg_width=3, wrap360=True), ""))
    rows.append(("Dec", format_lat(_f(s.dec_deg)), ""))
    where = "AP" if s.from_ap else "DR"
    rows.append((where, f"{format_lat(_f(s.lat_deg))}  {format_lon(_f(s.lon_deg))}", ""))
    rows.append(("LHA", format_dm(_f(s.lha_deg), deg_width=3, wrap360=True), f"GHA + lon ({where})"))
    rows.append(("Hc", format_dm(_f(s.hc_deg)), "computed altitude"))
    rows.append(("Zn", f"{_f(s.zn_deg):05.1f}\u00b0", "true azimuth"))
    rows.append(("intercept", intercept_text(s.intercept_nmi), "Ho \u2212 Hc"))
    width = max(26, max(len(v) for _, v, _ in rows) + 2)
    out = [f"  {k:<13}{v:<{width}}{note}".rstrip() for k, v, note in rows]
    out += [f"  ! {w}" for w in s.warnings]
    return out


def reduction_dict(s, row: int | None = None) -> dict:
    """One reduced sight for JSON (decimal degrees, unit suffixes)."""
    t = from_datetime64(s.utc) if isinstance(s.utc, np.datetime64) else s.utc
    d = {"row": row, "body": s.body, "utc": format_utc(t), "limb": s.limb,
         "horizon": s.horizon}
    for k in ("hs_deg", "index_arcmin", "dip_arcmin", "ha_deg", "refraction_arcmin", "sd_arcmin",
              "augmentation_arcmin", "parallax_arcmin", "ho_deg", "gha_deg", "dec_deg", "hp_arcmin",
              "lat_deg", "lon_deg", "lha_deg", "hc_deg", "zn_deg", "intercept_nmi"):
        v = _f(getattr(s, k))
        d[k] = round(v, 7) if math.isfinite(v) else None
    d["from_ap"] = bool(s.from_ap)
    d["toward"] = bool(_f(s.intercept_nmi) >= 0)
    d["warnings"] = list(s.warnings)
    if row is None:
        d.pop("row")
    return d


def fix_lines(fix, *, dr_lat_deg=None, dr_lon_deg=None) -> list[str]:
    """The fix in navigator notation, with its ellipse, residuals and warnings."""
    from .sailing import rhumb_line

    e = fix.ellipse
    kind = "Running fix" if fix.kind == "running fix" else "Fix"
    far: list[str] = []
    out = [f"{kind} at {format_date_hms(fix.utc)} UTC from {fix.n_sights} sights",
           f"  position     {format_lat(fix.lat_deg)}  {format_lon(fix.lon_deg)}",
           f"  ellipse      {e.confidence * 100:g}%: {e.semi_major_nmi:.1f} \u00d7 {e.semi_minor_nmi:.1f} nmi"
           f" (semi-axes), major axis {e.orientation_deg:05.1f}\u00b0/{(e.orientation_deg + 180) % 360:05.1f}\u00b0"
           f", \u03c3 {fix.sigma_source}"]
    if dr_lat_deg is not None:
        course, dist = rhumb_line(dr_lat_deg, dr_lon_deg, fix.lat_deg, fix.lon_deg)
        # Under 0.05 nmi the bearing is noise and would be printed as if it meant something.
        toward = f" {float(course):05.1f}\u00b0" if float(dist) >= 0.05 else ""
        out.append(f"  from DR      {float(dist):.1f} nmi{toward} "
                   f"(DR {format_lat(dr_lat_deg)}  {format_lon(dr_lon_deg)})")
        far = [w for w in fix.warnings if w.startswith(FAR_FROM_DR)]
        out += [f"  !! {w}" for w in far]      # prominent: right under the position
    cut_name = "angle of cut" if fix.n_sights == 2 else "widest cut"
    out.append(f"  geometry     {cut_name} {fix.cut_angle_deg:.0f}\u00b0, azimuth spread "
               f"{fix.azimuth_spread_deg:.0f}\u00b0, {fix.iterations} iterations"
               + ("" if fix.converged else " (NOT converged)"))
    out.append("  residuals    (Ho \u2212 Hc at the fix, nmi)")
    for i, label in enumerate(fix.labels):
        flag = "  << inconsistent with the others" if fix.flags[i] else ""
        out.append(f"    {label:<24}{fix.residuals_nmi[i]:+6.2f}  Zn {fix.zn_deg[i]:05.1f}\u00b0{flag}")
    out += [f"  ! {w}" for w in fix.warnings if w not in far]
    return out


def fix_dict(fix, *, dr_lat_deg=None, dr_lon_deg=None) -> dict:
    e = fix.ellipse
    return {
        "utc": format_utc(fix.utc), "lat_deg": round(fix.lat_deg, 7),
        "lon_deg": round(fix.lon_deg, 7), "kind": fix.kind,
        "ellipse": {"semi_major_nmi": round(e.semi_major_nmi, 4),
                    "semi_minor_nmi": round(e.semi_minor_nmi, 4),
                    "orientation_deg": round(e.orientation_deg, 2), "confidence": e.confidence},
        "n_sights": fix.n_sights, "iterations": fix.iterations, "converged": fix.converged,
        "sigma_source": fix.sigma_source,
        "cut_angle_deg": round(fix.cut_angle_deg, 2),
        "azimuth_spread_deg": round(fix.azimuth_spread_deg, 2),
        "dr_lat_deg": None if dr_lat_deg is None else round(dr_lat_deg, 7),
        "dr_lon_deg": None if dr_lon_deg is None else round(dr_lon_deg, 7),
        "warnings": list(fix.warnings),
    }


def _fmt_hp(rec, i):
    return f"{float(rec.hp_arcmin[i]):5.1f}\u2032" if rec.hp_arcmin is not None else "      "


def _fmt_sd(rec, i):
    return f"{float(rec.sd_arcmin[i]):5.1f}\u2032" if rec.sd_arcmin is not None else "      "


def _fmt_mag(rec, i):
    if rec.magnitude is None:
        return ""
    mag = rec.magnitude if np.ndim(rec.magnitude) == 0 else rec.magnitude[i]
    return f"{float(mag):+5.1f}" if np.isfinite(mag) else ""


def almanac_cells(rec, i: int) -> str:
    """One body's row of the almanac table at instant index `i`."""
    sha = format_dm(float(rec.sha_deg[i]), deg_width=3, wrap360=True) if rec.kind == "star" else " " * 9
    return (f"{rec.body:<16}{format_dm(float(rec.gha_deg[i]), deg_width=3, wrap360=True)}  "
            f"{format_lat(float(rec.dec_deg[i])):>11}  {sha}  {_fmt_hp(rec, i)}  {_fmt_sd(rec, i)}  "
            f"{_fmt_mag(rec, i)}")


ALMANAC_HEADER = f"{'body':<16}{'GHA':<9}  {'Dec':>11}  {'SHA':<9}  {'HP':>6}  {'SD':>6}  mag"


ALMANAC_NOTE = "Apparent geocentric, true equator and equinox of date (DE421)."


def utc_strings(t64: np.ndarray) -> list[str]:
    """``datetime64`` (UTC) -> ISO 8601 to the second (rounded), with ``Z``."""
    rounded = (t64 + np.timedelta64(500_000, "us")).astype("datetime64[s]")
    return [s + "Z" for s in np.datetime_as_string(rounded, unit="s")]


def almanac_lines(results, t) -> list[str]:
    """The almanac of `results` (nav.almanac.almanac over one instant `t`, a datetime64)."""
    utc = utc_strings(np.array([t]))[0]
    aries = format_dm(float(results[0].gha_aries_deg[0]), deg_width=3, wrap360=True)
    out = [f"Almanac for {utc[:10]} {utc[11:19]} UTC    GHA Aries {aries}", "",
           ALMANAC_HEADER.rstrip()]
    out += [almanac_cells(rec, 0).rstrip() for rec in results]
    out += ["", f"{ALMANAC_NOTE} {CAUTION}"]
    return out


def caution_line() -> str:
    return CAUTION


# ---------------------------------------------------------------- noon, meridian latitude, Polaris

MINUS = "\u2212"


def _second(t):
    """An instant (aware or naive) rounded to the whole second, for HH:MM:SS (the one rule)."""
    return round_to_second(t)


def _clock(hours: float) -> str:
    """Hours of the day (any real) -> ``HH:MM:SS`` (rounded, modulo 24 h)."""
    s = int(round(float(hours) * 3600.0)) % 86_400
    return f"{s // 3600:02d}:{s % 3600 // 60:02d}:{s % 60:02d}"


def _span(hours: float) -> str:
    s = int(round(abs(float(hours)) * 3600.0))
    return f"{s // 3600} h {s % 3600 // 60:02d} min {s % 60:02d} s"


def eot_text(eot_min: float) -> str:
    """The equation of time (apparent − mean), ``−1.4 min`` or ``+16.4 min``."""
    v = round(float(eot_min), 1)
    return f"{MINUS if v < 0 else '+'}{abs(v):.1f} min"


def _rows(rows) -> list[str]:
    width = max(26, max(len(v) for _, v, _ in rows) + 2)
    return [f"  {k:<13}{v:<{width}}{note}".rstrip() for k, v, note in rows]


def _instrument_text(eye_height_m, index_error_arcmin, temperature_c, pressure_hpa, horizon):
    where = f"eye {eye_height_m:.1f} m" if horizon == "sea" else f"{horizon} horizon"
    return (f"{where}, IE {format_arcmin(index_error_arcmin)}, {temperature_c:g} \u00b0C, "
            f"{pressure_hpa:g} hPa")


def _watch_text(seconds: float) -> str:
    if not seconds:
        return "error none"
    return f"{abs(seconds):g} s {'fast' if seconds > 0 else 'slow'}"


def noon_lines(p) -> list[str]:
    """A :class:`nav.noonsight.NoonPrediction` in navigator notation."""
    n = p.noon
    utc = _second(n.utc)
    rows = [("UTC", f"{utc:%H:%M:%S}", f"{utc:%Y-%m-%d}")]
    if n.zone_time is not None:
        zt = _second(n.zone_time)
        from .timekeeping import format_zone_description

        rows.append(("zone time", f"{zt:%H:%M:%S}",
                     f"ZD {format_zone_description(n.zone_description)} h, UTC = ZT + ZD "
                     f"({zt:%Y-%m-%d})"))
    if p.watch_reading is not None:
        rows.append(("watch", f"{_second(p.watch_reading):%H:%M:%S}",
                     f"the watch reading to expect (watch {_watch_text(p.watch_error_s)})"))
    rows.append(("DR at noon", f"{format_lat(n.lat_deg)}  {format_lon(n.lon_deg)}", p.basis))
    if p.course_deg is not None and p.speed_kn:
        rows.append(("course", f"{p.course_deg:05.1f}\u00b0, {p.speed_kn:g} kn", ""))
    rows.append(("GHA Sun", format_dm(p.sun_gha_deg, deg_width=3, wrap360=True),
                 f"LHA {format_dm(p.lha_deg, deg_width=3, wrap360=True)} at the DR longitude"))
    rows.append(("Dec Sun", format_lat(p.sun_dec_deg), f"SD {p.sun_sd_arcmin:.1f}\u2032"))
    lan_lmt = _clock(12.0 - n.equation_of_time_min / 60.0)
    rows.append(("EoT", eot_text(n.equation_of_time_min),
                 f"apparent \u2212 mean time: noon at {lan_lmt} local mean time"))
    rows.append(("Hc", format_dm(p.hc_deg), f"on the meridian at the DR, the Sun bearing "
                                            f"{n.bearing} (Zn {p.zn_deg:05.1f}\u00b0)"))
    if p.hs_preset_deg is not None:
        c = p.correction
        rows.append(("Hs to preset", format_dm(p.hs_preset_deg),
                     "lower limb, " + _instrument_text(p.eye_height_m, p.index_error_arcmin,
                                                       p.temperature_c, p.pressure_hpa, p.horizon)))
        steps = [("index", c.index_arcmin), ("dip", c.dip_arcmin),
                 ("refraction", c.refraction_arcmin), ("SD", c.sd_arcmin),
                 ("parallax", c.parallax_arcmin)]
        if p.horizon == "artificial":
            steps.insert(1, ("halved", 0.0))
        rows.append(("corrections", format_arcmin(float(c.total_arcmin)),
                     "Hc \u2212 Hs: " + ", ".join(f"{k} {format_arcmin(float(v))}" if k != "halved"
                                              else "altitude halved" for k, v in steps)))
    out = [f"Local apparent noon on {p.day:%Y-%m-%d}: the Sun on the meridian of the DR"]
    out += _rows(rows)
    out += [f"  ! {w}" for w in p.warnings]
    return out


def _r360(x, k=7):
    """An angle in [0, 360) rounded for JSON (359.99999999 is 0.0, never 360.0)."""
    return round(float(x), k) % 360.0


def noon_dict(p) -> dict:
    """The noon prediction for JSON (decimal degrees, unit suffixes)."""
    n = p.noon

    def r(x, k=7):
        return None if x is None else round(float(x), k)

    zd = n.zone_description
    return {
        "date": f"{p.day:%Y-%m-%d}", "utc": f"{_second(n.utc):%Y-%m-%dT%H:%M:%S}Z",
        "zone_time": None if n.zone_time is None else f"{_second(n.zone_time):%Y-%m-%dT%H:%M:%S}",
        "zone_description_h": None if zd is None else zd.total_seconds() / 3600.0,
        "watch_reading": (None if p.watch_reading is None
                          else f"{_second(p.watch_reading):%Y-%m-%dT%H:%M:%S}"),
        "watch_error_s": p.watch_error_s,
        "lat_deg": r(n.lat_deg), "lon_deg": r(n.lon_deg),
        "dr_utc": f"{_second(p.dr_utc):%Y-%m-%dT%H:%M:%S}Z", "dr_lat_deg": r(p.dr_lat_deg),
        "dr_lon_deg": r(p.dr_lon_deg), "course_deg": r(p.course_deg), "speed_kn": r(p.speed_kn),
        "sun_gha_deg": _r360(p.sun_gha_deg), "sun_dec_deg": r(p.sun_dec_deg),
        "sun_sd_arcmin": r(p.sun_sd_arcmin, 4), "sun_hp_arcmin": r(p.sun_hp_arcmin, 4),
        "lha_deg": _r360(p.lha_deg), "hc_deg": r(p.hc_deg), "zn_deg": _r360(p.zn_deg, 4),
        "bearing": n.bearing, "hs_preset_deg": r(p.hs_preset_deg), "limb": p.limb,
        "eye_height_m": p.eye_height_m, "index_error_arcmin": p.index_error_arcmin,
        "temperature_c": p.temperature_c, "pressure_hpa": p.pressure_hpa, "horizon": p.horizon,
        "equation_of_time_min": r(n.equation_of_time_min, 4), "iterations": n.iterations,
        "warnings": list(p.warnings),
    }


def correction_rows(s, **notes) -> tuple[list[tuple[str, str, str]], list[str]]:
    """The Hs -> Ho steps of a reduced sight, as (label, value, note) rows (the head of
    :func:`reduction_lines`, so both say the same), and the corrections' warnings."""
    import re

    from .reduction import reduction_warnings

    rows = []
    for line in reduction_lines(s, **notes):
        m = re.match(r"^  (.{13})(\S.*?)(?:\s{2,}(\S.*))?$", line)
        rows.append((m.group(1).strip(), m.group(2), m.group(3) or ""))
        if rows[-1][0] == "Ho":
            break
    reducing = set(reduction_warnings(s.ho_deg, s.intercept_nmi))   # about Hc and the intercept
    return rows, [w for w in s.warnings if w not in reducing]


_METHOD_HEAD = {"upper transit": "Latitude by meridian altitude (upper transit)",
                "lower transit": "Latitude by meridian altitude below the pole (lower transit)",
                "Polaris": "Latitude by Polaris"}


def _rule(w) -> tuple[str, str]:
    """The meridian rule applied: (which case, the formula with its name)."""
    z, dec = w.zenith_distance_deg, abs(w.dec_deg)
    names = f"z {w.zenith_name}, Dec {w.dec_name}: "
    if z == 0.0:
        return "zenith", "the body in the zenith: lat = Dec"
    if w.same_name:
        return "same names", names + f"lat = z + Dec, named {w.dec_name}"
    if z >= dec:
        return "contrary names", names + f"lat = z \u2212 Dec, named {w.zenith_name}"
    return "contrary names", names + f"lat = Dec \u2212 z, named {w.dec_name}"


def meridian_latitude_lines(w, *, title: str | None = None, **notes) -> list[str]:
    """A :class:`nav.noonsight.MeridianLatitude` as worked steps. `notes`: the
    instrument values for the correction lines (as :func:`reduction_lines`)."""
    head = title or sight_title(w.sight)
    out = [f"{_METHOD_HEAD[w.method]}", head]
    rows, sight_warnings = correction_rows(w.sight, **notes)
    lha = format_dm(w.lha_deg, deg_width=3, wrap360=True)
    gha = format_dm(w.gha_deg, deg_width=3, wrap360=True)
    if w.method == "Polaris":
        rows += [("GHA Aries", format_dm(w.gha_aries_deg, deg_width=3, wrap360=True), ""),
                 ("SHA", format_dm(w.sha_deg, deg_width=3, wrap360=True), "of Polaris"),
                 ("GHA", gha, "GHA Aries + SHA"),
                 ("LHA", lha, f"GHA + DR lon ({format_lon(w.dr_lon_deg)})"),
                 ("Dec", format_lat(w.dec_deg),
                  f"polar distance p {format_dm(w.polar_distance_deg)}"),
                 ("latitude", format_lat(w.lat_deg), "solved exactly from sin Ho = sin lat sin Dec "
                                                     "+ cos lat cos Dec cos LHA"),
                 ("lat \u2212 Ho", format_dm(w.lat_deg - w.ho_deg, signed=True),
                  "(about \u2212p cos LHA: what printed Polaris corrections give)"),
                 ("DR lon", f"{w.lat_per_30arcmin_lon_arcmin:.1f}\u2032 per 30\u2032",
                  "the latitude's change for a DR longitude 30\u2032 different")]
    else:
        transit = w.method.split()[0]
        rows += [("LHA", lha, f"GHA {gha} + DR lon ({format_lon(w.dr_lon_deg)}): "
                              f"{w.off_meridian_deg:.2f}\u00b0 from {transit} transit "
                              f"(limit {w.limit_deg:g}\u00b0)"),
                 ("ex-meridian", format_arcmin(-w.ex_meridian_arcmin),
                  "altitude at this LHA minus on the meridian, at the DR")]
        if w.method == "upper transit":
            side = "north" if w.bearing == "S" else "south"
            rows += [("bearing", w.bearing, f"on the meridian: the DR latitude is {side} of the "
                                           "Dec" + (" (or on it)" if w.bearing == "S" else "")),
                     ("zenith dist.", f"{format_dm(w.zenith_distance_deg)} {w.zenith_name}",
                      "z = 90\u00b0 \u2212 Ho, named opposite to the bearing"),
                     ("Dec", format_lat(w.dec_deg), ""),
                     ("rule", *_rule(w))]
        else:
            rows += [("bearing", w.bearing, "below the pole: toward the elevated pole"),
                     ("Dec", format_lat(w.dec_deg), ""),
                     ("polar dist.", format_dm(w.polar_distance_deg), "p = 90\u00b0 \u2212 Dec"),
                     ("rule", "below the pole", "lat = Ho + p, named like the Dec "
                                                    f"({'S' if w.dec_deg < 0 else 'N'})")]
        rows.append(("latitude", format_lat(w.lat_deg), ""))
    diff = (w.dr_lat_deg - w.lat_deg) * 60.0
    side = "north" if diff >= 0 else "south"
    rows.append(("DR lat", format_lat(w.dr_lat_deg),
                 f"{abs(diff):.1f}\u2032 {side} of the latitude found"))
    out += _rows(rows)
    out += [f"  ! {x}" for x in (*sight_warnings, *w.warnings)]
    out.append("  A single latitude is a line of position (a parallel), not a fix.")
    return out


def meridian_latitude_dict(w) -> dict:
    def r(x, k=7):
        return None if x is None else round(float(x), k)

    return {
        "method": w.method, "body": w.body, "utc": format_utc(w.utc),
        "lat_deg": r(w.lat_deg), "ho_deg": r(w.ho_deg), "gha_deg": _r360(w.gha_deg),
        "dec_deg": r(w.dec_deg), "lha_deg": _r360(w.lha_deg), "dr_lat_deg": r(w.dr_lat_deg),
        "dr_lon_deg": r(w.dr_lon_deg), "bearing": w.bearing,
        "zenith_distance_deg": r(w.zenith_distance_deg), "zenith_name": w.zenith_name,
        "dec_name": w.dec_name, "same_name": w.same_name,
        "off_meridian_deg": r(w.off_meridian_deg), "ex_meridian_arcmin": r(w.ex_meridian_arcmin, 4),
        "meridian_limit_deg": w.limit_deg, "polar_distance_deg": r(w.polar_distance_deg),
        "gha_aries_deg": None if w.gha_aries_deg is None else _r360(w.gha_aries_deg),
        "sha_deg": None if w.sha_deg is None else _r360(w.sha_deg),
        "lat_per_30arcmin_lon_arcmin": r(w.lat_per_30arcmin_lon_arcmin, 4),
        "warnings": list(w.warnings), "sight": reduction_dict(w.sight),
    }


def noon_longitude_lines(w, when: str) -> list[str]:
    """A :class:`nav.noonsight.TimedNoonLongitude` as worked steps; `when` says how the
    time was read."""
    wk = w.working
    late_h = ((float(wk.observed_ut1_h) - float(wk.greenwich_lan_ut1_h) + 12.0) % 24.0) - 12.0
    rows = [("GHA Sun", format_dm(w.sun_gha_deg, deg_width=3, wrap360=True),
             "at that instant; on the meridian LHA = GHA + lon = 0"),
            ("longitude", format_lon(w.lon_deg), "lon = \u2212GHA (east +)"),
            ("EoT", eot_text(wk.equation_of_time_min), "apparent \u2212 mean time"),
            ("Greenwich", f"{_clock(wk.greenwich_lan_ut1_h)} UT1",
             "the Sun on the Greenwich meridian: 12:00 \u2212 EoT"),
            ("observed", f"{_clock(wk.observed_ut1_h)} UT1",
             "the transit seen aboard (UT1 \u2212 UTC is under 0.9 s)"),
            ("difference", _span(late_h),
             f"{'later' if late_h >= 0 else 'earlier'} than at Greenwich, 15\u00b0 an hour: "
             f"{format_lon(float(wk.lon_deg))}")]
    if w.dr_lon_deg is not None:
        from .angles import norm180

        d = float(norm180(w.lon_deg - w.dr_lon_deg)) * 60.0
        side = "east" if d >= 0 else "west"
        rows.append(("DR lon", format_lon(w.dr_lon_deg),
                     f"the longitude found is {abs(d):.1f}\u2032 {side} of it ({w.basis})"))
    out = [f"Longitude by the time of noon: the Sun on the meridian at {when}"] + _rows(rows)
    hang = ("" if w.hang_min is None else
            f" At the DR the Sun stays within 0.1\u2032 of its meridian altitude for "
            f"\u00b1{w.hang_min:.1f} min, that is \u00b1{w.hang_min * 15.0:.0f}\u2032 of "
            "longitude.")
    import textwrap

    caution = ("caution: the Sun hangs near the meridian: its altitude hardly changes in the "
               "minutes about noon, so the instant of the greatest altitude is poorly observed, "
               "and each minute of time misjudged is 15\u2032 of longitude." + hang +
               " Better: time equal altitudes before and after noon and take the mean instant, "
               "or cross a morning sight run up to noon with the noon latitude (fix).")
    out += textwrap.wrap(caution, 96, initial_indent="  ! ", subsequent_indent="    ")
    return out
