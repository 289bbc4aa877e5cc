"""A student's plotted fix checked against the fix of their own lines and of the reference lines.

Each line is the student's own: from their AP, along their Zn, their intercept toward or away,
advanced (or retired) to the fix time by the exercise's course and speed, as on a plotting sheet.
The lines are crossed by least squares on the plane about the first AP (two lines: their
intersection). The fix is ``right`` within :data:`FIX_TOLERANCE_NMI` of both the fix of the
student's own lines and that of the reference lines, ``carried`` when it is right from their own
(mistaken) lines only, and ``wrong`` otherwise.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np

from ..angles import cosd, norm180, sind
from ..timekeeping import UTC
from .sheet import utc_of

FIX_TOLERANCE_NMI = 1.0


@dataclass(frozen=True)
class FixMark:
    fix: str
    sights: tuple[str, ...]
    lat_deg: float
    lon_deg: float
    own_lat_deg: float | None
    own_lon_deg: float | None
    off_own_nmi: float | None
    reference_lat_deg: float | None
    reference_lon_deg: float | None
    off_reference_nmi: float | None
    verdict: str                    # right | carried | wrong | unchecked
    note: str = ""


def _cross(lines, lat0, lon0):
    """Least-squares crossing of lines (lat, lon, zn, signed intercept, run east/north nmi)."""
    a, b = [], []
    for lat, lon, zn, icpt, run in lines:
        x = float(norm180(lon - lon0)) * 60.0 * cosd(lat0) + run[0]
        y = (lat - lat0) * 60.0 + run[1]
        n = np.array([float(sind(zn)), float(cosd(zn))])
        a.append(n)
        b.append(n @ np.array([x, y]) + icpt)
    sol, *_ = np.linalg.lstsq(np.array(a), np.array(b), rcond=None)
    return lat0 + sol[1] / 60.0, float(norm180(lon0 + sol[0] / (60.0 * cosd(lat0))))


def _distance_nmi(lat1, lon1, lat2, lon2) -> float:
    dx = float(norm180(lon2 - lon1)) * 60.0 * cosd(0.5 * (lat1 + lat2))
    return float(np.hypot(dx, (lat2 - lat1) * 60.0))


def _run(row, sight_utc: datetime, fix_utc: datetime):
    hours = (fix_utc - sight_utc).total_seconds() / 3600.0
    if not row.speed_kn or row.course_deg is None:
        return (0.0, 0.0)
    d = row.speed_kn * hours
    return (d * float(sind(row.course_deg)), d * float(cosd(row.course_deg)))


def _fix_utc(f: dict, rows) -> datetime:
    last = max(rows, key=lambda r: r.utc)
    if f.get("zt") is None or last.ship_date is None:
        return last.utc
    zt = datetime.combine(last.ship_date, datetime.min.time()) + f["zt"]
    utc = (zt + timedelta(hours=last.zone_h)).replace(tzinfo=UTC)
    while utc < last.utc - timedelta(hours=12):      # the fix is after its sights
        utc += timedelta(days=1)
    return utc


def _lines(sheets, rows, fix_utc, *, signed_key=None):
    out = []
    for s, r in zip(sheets, rows):
        need = ("ap_lat", "ap_lon", "zn", "intercept", "t_a")
        if any(s.get(k) is None for k in need):
            return None
        icpt = s[signed_key] if signed_key else (s["intercept"] if s["t_a"] == "T"
                                                  else -s["intercept"])
        t = s.get("_utc") or utc_of(s) or r.utc
        out.append((s["ap_lat"], s["ap_lon"], s["zn"], icpt, _run(r, t, fix_utc)))
    return out


def mark_fix(f: dict, sheets: dict, rows: dict, refs: dict) -> FixMark:
    """Mark one fix row `f` given the student's sheet rows, exercise rows and reference sheets,
    each by sight id."""
    ids = tuple(f.get("sights") or ())
    lat, lon = f["lat"], f["lon"]
    missing = [i for i in ids if i not in rows]
    if len(ids) < 2 or missing:
        note = (f"sight(s) {' '.join(missing)} not in the exercise" if missing
                else "a fix needs two or more sights")
        return FixMark(str(f.get("fix")), ids, lat, lon, None, None, None, None, None, None,
                       "unchecked", note)
    ex_rows = [rows[i] for i in ids]
    fix_utc = _fix_utc(f, ex_rows)
    ref_lines = _lines([refs[i] for i in ids], ex_rows, fix_utc, signed_key="_signed_intercept_nmi")
    rlat, rlon = _cross(ref_lines, ref_lines[0][0], ref_lines[0][1])
    off_ref = _distance_nmi(lat, lon, rlat, rlon)
    own_lines = _lines([sheets.get(i, {}) for i in ids], ex_rows, fix_utc)
    if own_lines is None:
        verdict = "right" if off_ref <= FIX_TOLERANCE_NMI else "wrong"
        return FixMark(str(f.get("fix")), ids, lat, lon, None, None, None, rlat, rlon, off_ref,
                       verdict, "the sheet lacks a figure of these lines; judged on the reference")
    olat, olon = _cross(own_lines, own_lines[0][0], own_lines[0][1])
    off_own = _distance_nmi(lat, lon, olat, olon)
    if off_own <= FIX_TOLERANCE_NMI:
        verdict = "right" if off_ref <= FIX_TOLERANCE_NMI else "carried"
    else:
        verdict = "wrong"
    return FixMark(str(f.get("fix")), ids, lat, lon, olat, olon, off_own, rlat, rlon, off_ref,
                   verdict)


def reference_fix(ids, rows: dict, refs: dict, fix_utc: datetime | None = None):
    """(lat, lon) of the reference lines of sights `ids`, at `fix_utc` (default: the last)."""
    ex_rows = [rows[i] for i in ids]
    t = fix_utc or max(r.utc for r in ex_rows)
    lines = _lines([refs[i] for i in ids], ex_rows, t, signed_key="_signed_intercept_nmi")
    return _cross(lines, lines[0][0], lines[0][1])
