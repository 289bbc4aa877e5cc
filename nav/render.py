"""Results -> text (navigator notation) and -> JSON-ready dicts. Shared by the CLI and the shell.

Nothing here computes navigation: it formats what the core returned.
"""

from __future__ import annotations

import math

import numpy as np

from . import CAUTION
from .angles import format_arcmin, format_dm, format_lat, format_lon
from .timekeeping import from_datetime64

LIMB_WORD = {"lower": "lower limb", "upper": "upper limb", "center": "centre"}


def _f(x) -> float:
    return float(np.asarray(x))


def intercept_text(intercept_nmi: float) -> str:
    x = _f(intercept_nmi)
    return f"{abs(x):.1f} nmi {'toward' if x >= 0 else 'away'} ({abs(x):.1f} {'T' if x >= 0 else 'A'})"


def sight_title(s, number: int | None = None, row: int | None = None) -> str:
    """``Sight 3 (row 3): Sun lower limb, 2026-03-20 10:42:10 UTC``."""
    t = from_datetime64(s.utc) if isinstance(s.utc, np.datetime64) else s.utc
    limb = f" {LIMB_WORD[s.limb]}" if s.limb else ""
    head = f"Sight {number}" if number is not None else "Sight"
    if row is not None and row != number:
        head += f" (row {row})"
    return f"{head}: {s.body}{limb}, {t:%Y-%m-%d %H:%M:%S} UTC"


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
    d = {"row": row, "body": s.body, "utc": f"{t:%Y-%m-%dT%H:%M:%S}Z", "limb": s.limb,
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
    out = [f"{kind} at {fix.utc:%Y-%m-%d %H:%M:%S} UTC from {fix.n_sights} sights",
           f"  position     {format_lat(fix.lat_deg)}  {format_lon(fix.lon_deg)}",
           f"  ellipse      {e.confidence * 100:g}%: {e.semi_major_nmi:.1f} \u00d7 {e.semi_minor_nmi:.1f} nmi"
           f" (semi-axes), major axis {e.orientation_deg:05.1f}\u00b0/{(e.orientation_deg + 180) % 360:05.1f}\u00b0"
           f", \u03c3 {fix.sigma_source}"]
    if dr_lat_deg is not None:
        course, dist = rhumb_line(dr_lat_deg, dr_lon_deg, fix.lat_deg, fix.lon_deg)
        out.append(f"  from DR      {float(dist):.1f} nmi {float(course):05.1f}\u00b0 "
                   f"(DR {format_lat(dr_lat_deg)}  {format_lon(dr_lon_deg)})")
    cut_name = "angle of cut" if fix.n_sights == 2 else "widest cut"
    out.append(f"  geometry     {cut_name} {fix.cut_angle_deg:.0f}\u00b0, azimuth spread "
               f"{fix.azimuth_spread_deg:.0f}\u00b0, {fix.iterations} iterations"
               + ("" if fix.converged else " (NOT converged)"))
    out.append("  residuals    (Ho \u2212 Hc at the fix, nmi)")
    for i, label in enumerate(fix.labels):
        flag = "  << inconsistent with the others" if fix.flags[i] else ""
        out.append(f"    {label:<24}{fix.residuals_nmi[i]:+6.2f}  Zn {fix.zn_deg[i]:05.1f}\u00b0{flag}")
    out += [f"  ! {w}" for w in fix.warnings]
    return out


def fix_dict(fix, *, dr_lat_deg=None, dr_lon_deg=None) -> dict:
    e = fix.ellipse
    return {
        "utc": f"{fix.utc:%Y-%m-%dT%H:%M:%S}Z", "lat_deg": round(fix.lat_deg, 7),
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
