"""Seeded exercises: the sights a class is given, the answer key, the truth, planted mistakes.

:func:`make_exercise` draws (from its seed alone, so the same seed gives the same exercise) a true
track — a start position and time, the vessel's course and speed and a current the students do
not know — and the sights of the chosen kind, taken from that track:

- ``sun-run``: a morning and an afternoon Sun some hours apart, for a running fix;
- ``stars``: three or four stars in evening twilight (the Sun 3° to 9° below the horizon);
- ``moon``: the Moon and the Sun in daylight, the Moon's lit limb observed;
- ``noon``: the Sun at local apparent noon;
- ``mixed``: twilight stars with a planet or the Moon when one is up.

Realism (issue 8): altitudes 15° to 70°, azimuths spread, no dark-limb Moon, and intercepts from
the AP of at least 0.5 nmi so T/A means something. Each Hs is the true altitude at the true
position run back through nav's exact corrections (index error, dip for the height of eye,
refraction, SD, parallax) plus a Gaussian sight error of σ, to 0.1′. The DR is the true start
position off by a few miles, carried by course and speed only (the current is unknown to it).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone

import numpy as np

from ..angles import norm180
from ..errors import NavInputError
from ..timekeeping import format_watch_error

KINDS = ("sun-run", "stars", "moon", "noon", "mixed")
MIN_ALT_DEG, MAX_ALT_DEG = 15.0, 70.0
TWILIGHT_SUN_ALT_DEG = (-9.0, -3.0)
MIN_INTERCEPT_NMI = 0.5
EXERCISE_COLUMNS = ("sight", "date", "watch_time", "watch_error", "zone", "body", "limb", "hs",
                    "index_error", "eye_height", "dr_lat", "dr_lon", "course_deg", "speed_kn",
                    "method")
TRUTH_COLUMNS = ("sight", "utc", "body", "lat_deg", "lon_deg", "ho_true_deg", "set_deg", "drift_kn")


@dataclass(frozen=True)
class ExerciseSpec:
    """What the instructor asks for (None: drawn from the seed)."""

    seed: int
    kind: str = "sun-run"
    lat_deg: float | None = None
    lon_deg: float | None = None
    start_utc: datetime | None = None
    sigma_arcmin: float = 0.5
    index_error_arcmin: float = 2.4
    eye_height_ft: float = 10.0
    zone_h: float | None = None
    watch_error_s: float = 17.0
    course_deg: float | None = None
    speed_kn: float | None = None
    set_deg: float | None = None
    drift_kn: float | None = None


@dataclass(frozen=True)
class Exercise:
    spec: ExerciseSpec
    rows: tuple[dict, ...]       # the exercise CSV, cells as text (EXERCISE_COLUMNS)
    truth: tuple[dict, ...]      # TRUTH_COLUMNS
    fix_truth: dict              # the true position at the last sight


def _alt_az(body: str, t: datetime, lat: float, lon: float) -> tuple[float, float]:
    from ..almanac import body_almanac
    from ..reduction import hc_zn

    a = body_almanac(body, t)
    hc, zn = hc_zn(lat, float(a.dec_deg), float(a.gha_deg) + lon)
    return float(hc), float(zn)


def _track(spec, rng):
    lat = spec.lat_deg if spec.lat_deg is not None else float(rng.uniform(-45.0, 45.0))
    lon = spec.lon_deg if spec.lon_deg is not None else float(rng.uniform(-180.0, 180.0))
    course = spec.course_deg if spec.course_deg is not None else float(rng.integers(0, 72) * 5)
    speed = spec.speed_kn if spec.speed_kn is not None else float(rng.integers(10, 16) / 2)
    set_deg = spec.set_deg if spec.set_deg is not None else float(rng.integers(0, 36) * 10)
    drift = spec.drift_kn if spec.drift_kn is not None else float(rng.integers(2, 9) / 10)
    return lat, lon, course, speed, set_deg, drift


def _position(track, t0, t):
    from ..sailing import advance_position

    lat, lon, course, speed, set_deg, drift = track
    h = (t - t0).total_seconds() / 3600.0
    la, lo = advance_position(lat, lon, course, speed, h, set_deg=set_deg, drift_kn=drift)
    return float(la), float(lo)


def _scan(t_from, hours, step_min):
    n = int(hours * 60 / step_min)
    return [t_from + timedelta(minutes=step_min * i) for i in range(n)]


def _day_start(spec, rng, lon):
    if spec.start_utc is not None:
        return spec.start_utc.astimezone(timezone.utc)
    day = datetime(2026, 1, 1, tzinfo=timezone.utc) + timedelta(days=int(rng.integers(0, 365)))
    return day - timedelta(hours=lon / 15.0)       # about local midnight


def _bright_limb(t, lat, lon) -> str | None:
    """The Moon's lit limb that a sextant can bring down (lower/upper), or None when side-lit."""
    from ..almanac import body_almanac
    from ..reduction import hc_zn

    def enu(body):
        a = body_almanac(body, t)
        h, z = hc_zn(lat, float(a.dec_deg), float(a.gha_deg) + lon)
        h, z = math.radians(float(h)), math.radians(float(z))
        return np.array([math.cos(h) * math.sin(z), math.cos(h) * math.cos(z), math.sin(h)])

    m, s = enu("Moon"), enu("Sun")
    to_sun = s - m * (s @ m)
    up = np.array([0.0, 0.0, 1.0]) - m * m[2]
    if np.linalg.norm(to_sun) < 1e-6 or np.linalg.norm(up) < 1e-6:
        return None
    c = float(to_sun @ up / np.linalg.norm(to_sun) / np.linalg.norm(up))
    if abs(c) < 0.5:
        return None
    return "upper" if c > 0 else "lower"


def _pick_times(spec, track, rng) -> tuple[datetime, list[tuple[str, datetime, str | None]]]:
    """(t0, [(body, utc, limb)]) for the kind, from the seeded day."""
    from ..almanac import meridian_passage
    from ..stars import star_names

    lat, lon = track[0], track[1]
    start = _day_start(spec, rng, lon)
    ok = lambda h: MIN_ALT_DEG <= h <= MAX_ALT_DEG  # noqa: E731
    if spec.kind in ("sun-run", "noon"):
        noon = meridian_passage("Sun", lon, start + timedelta(hours=12))
        h_noon, _ = _alt_az("Sun", noon, lat, lon)
        if spec.kind == "noon":
            if not ok(h_noon):
                raise NavInputError(f"the Sun's noon altitude there is {h_noon:.0f}°, outside "
                                    "15°–70°", field="lat", example="a latitude nearer the pole")
            return noon, [("Sun", noon.replace(microsecond=0), "lower")]
        morning = [t for t in _scan(noon - timedelta(hours=6), 5, 10)
                   if ok(_alt_az("Sun", t, lat, lon)[0])]
        if not morning:
            raise NavInputError("the Sun does not stand 15°–70° that morning", field="lat",
                                example="another latitude or date")
        t1 = morning[int(rng.integers(0, max(1, len(morning) // 2)))]
        t2 = noon + (noon - t1) + timedelta(minutes=int(rng.integers(-20, 20)))
        return t1, [("Sun", t1, "lower"), ("Sun", t2, "lower")]
    if spec.kind == "moon":
        for day in range(30):
            for t in _scan(start + timedelta(days=day, hours=6), 12, 20):
                hm, zm = _alt_az("Moon", t, lat, lon)
                hs, zs = _alt_az("Sun", t, lat, lon)
                cut = abs(float(norm180(zm - zs)))
                limb = _bright_limb(t, lat, lon) if ok(hm) and ok(hs) and 40 <= cut <= 140 else None
                if limb:
                    return t, [("Sun", t, "lower"), ("Moon", t + timedelta(minutes=6), limb)]
        raise NavInputError("no daylight Moon 15°–70° with a lit lower or upper limb in 30 days",
                            field="date", example="another date")
    # twilight: stars (and for mixed, a planet or the Moon)
    dusk = None
    for t in _scan(start + timedelta(hours=12), 12, 4):
        h, _ = _alt_az("Sun", t, lat, lon)
        if -6.5 <= h <= -5.5 and _alt_az("Sun", t + timedelta(minutes=4), lat, lon)[0] < h:
            dusk = t
            break
    if dusk is None:
        raise NavInputError("no evening twilight that day (polar day or night)", field="lat",
                            example="a lower latitude")
    names = list(star_names())
    if spec.kind == "mixed":
        names = ["Venus", "Mars", "Jupiter", "Saturn", "Moon"] + names
    cands = []
    for name in names:
        h, z = _alt_az(name, dusk, lat, lon)
        if ok(h):
            cands.append((name, z))
    chosen: list[tuple[str, float]] = []
    if spec.kind == "mixed":
        others = [c for c in cands if c[0] in ("Venus", "Mars", "Jupiter", "Saturn", "Moon")]
        if others:
            chosen.append(others[int(rng.integers(0, len(others)))])
    order = [cands[i] for i in rng.permutation(len(cands))]
    while len(chosen) < 4 and order:
        best = max(order, key=lambda c: min([abs(float(norm180(c[1] - z))) for _, z in chosen] or [360]))
        order.remove(best)
        if best[0] != "Moon" and all(best[0] != c[0] for c in chosen):
            chosen.append(best)
    if len(chosen) < 3:
        raise NavInputError("fewer than three bodies at 15°–70° in twilight there", field="lat",
                            example="another position or date")
    sights = []
    for i, (name, _) in enumerate(chosen):
        t = dusk + timedelta(minutes=3 * i, seconds=int(rng.integers(0, 50)))
        limb = _bright_limb(t, lat, lon) if name == "Moon" else None
        if name == "Moon" and limb is None:
            continue
        sights.append((name, t, limb))
    return dusk, sights


def _invert_hs(body, kind, ho_target, t, lat, zn, spec) -> float:
    """The sextant altitude that nav's exact corrections turn into `ho_target`."""
    from ..almanac import body_almanac
    from ..corrections import correct_altitude

    a = body_almanac(body, t)
    hp = float(a.hp_arcmin) if kind in ("moon", "planet", "sun") else None
    sd = float(a.sd_arcmin) if kind in ("sun", "moon") else None
    hs = ho_target
    for _ in range(6):
        c = correct_altitude(hs, body_kind=kind, limb=spec[0], index_error_arcmin=spec[1],
                             eye_height_m=spec[2], hp_arcmin=hp, sd_arcmin=sd,
                             lat_deg=lat, zn_deg=zn)
        hs += ho_target - float(c.ho_deg)
    return hs


def make_exercise(spec: ExerciseSpec) -> Exercise:
    """An exercise drawn from `spec` (deterministic for its seed)."""
    from ..almanac import body_kind
    from ..angles import format_lat, format_lon
    from ..sailing import advance_position
    from ..units import NMI_PER_DEG

    if spec.kind not in KINDS:
        raise NavInputError(f"'{spec.kind}' is not a kind of exercise", field="kind",
                            example=", ".join(KINDS))
    rng = np.random.default_rng(spec.seed)
    track = _track(spec, rng)
    _, sights = _pick_times(spec, track, rng)
    sights = [(b, t.replace(microsecond=0), limb) for b, t, limb in sights]
    t0 = sights[0][1]
    zone = spec.zone_h if spec.zone_h is not None else float(round(-track[1] / 15.0))
    eye_m = spec.eye_height_ft * 0.3048                    # the international foot
    off_nmi, off_dir = float(rng.uniform(3.0, 8.0)), float(rng.uniform(0.0, 360.0))
    dr0 = (track[0] + off_nmi * math.cos(math.radians(off_dir)) / NMI_PER_DEG,
           track[1] + off_nmi * math.sin(math.radians(off_dir)) / NMI_PER_DEG
           / math.cos(math.radians(track[0])))
    rows, truth = [], []
    for i, (body, t, limb) in enumerate(sights, 1):
        kind = body_kind(body)
        for _ in range(20):
            t = t.replace(microsecond=0)
            lat, lon = _position(track, t0, t)
            hc, zn = _alt_az(body, t, lat, lon)
            ho = hc + float(rng.normal(0.0, spec.sigma_arcmin)) / 60.0
            hs = round(_invert_hs(body, kind, ho, t, lat, zn,
                                  (limb, spec.index_error_arcmin, eye_m)) * 600.0) / 600.0
            h = (t - t0).total_seconds() / 3600.0
            dlat, dlon = (float(v) for v in advance_position(dr0[0], dr0[1], track[2], track[3], h))
            if _intercept_ok(body, t, hs, limb, spec, eye_m, dlat, dlon, kind):
                break
            t += timedelta(seconds=41)
        zt = t - timedelta(hours=zone)
        watch = zt + timedelta(seconds=spec.watch_error_s)
        rows.append({
            "sight": str(i), "date": zt.date().isoformat(), "watch_time": watch.strftime("%H:%M:%S"),
            "watch_error": format_watch_error(spec.watch_error_s), "zone": f"{zone:+g}",
            "body": body, "limb": limb or "", "hs": _dm(hs),
            "index_error": f"{abs(spec.index_error_arcmin):.1f} "
                           f"{'on' if spec.index_error_arcmin > 0 else 'off'}",
            "eye_height": f"{spec.eye_height_ft:g} ft",
            "dr_lat": format_lat(dlat).replace("°", " ").replace("′", ""),
            "dr_lon": format_lon(dlon).replace("°", " ").replace("′", ""),
            "course_deg": f"{track[2]:g}", "speed_kn": f"{track[3]:g}", "method": "ap"})
        truth.append({"sight": str(i), "utc": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "body": body,
                      "lat_deg": round(lat, 6), "lon_deg": round(lon, 6),
                      "ho_true_deg": round(hc, 6), "set_deg": track[4], "drift_kn": track[5]})
    last = truth[-1]
    return Exercise(spec, tuple(rows), tuple(truth),
                    {"utc": last["utc"], "lat_deg": last["lat_deg"], "lon_deg": last["lon_deg"]})


def _dm(deg: float) -> str:
    from ..angles import format_dm

    return format_dm(deg).replace("°", " ").replace("′", "")


def _intercept_ok(body, t, hs, limb, spec, eye_m, dlat, dlon, kind) -> bool:
    from ..reduction import reduce_sight

    r = reduce_sight(body, t, hs, limb=limb, index_error_arcmin=spec.index_error_arcmin,
                     eye_height_m=eye_m, lat_deg=dlat, lon_deg=dlon, use_ap=True)
    return abs(float(r.intercept_nmi)) >= MIN_INTERCEPT_NMI


def _csv_text(columns, rows) -> str:
    import csv
    import io

    out = io.StringIO()
    w = csv.DictWriter(out, fieldnames=columns, lineterminator="\n")
    w.writeheader()
    w.writerows(rows)
    return out.getvalue()


def exercise_csv(ex: Exercise) -> str:
    return _csv_text(EXERCISE_COLUMNS, ex.rows)


def truth_csv(ex: Exercise) -> str:
    return _csv_text(TRUTH_COLUMNS, ex.truth)


def _plantable(code: str, key: dict) -> bool:
    """Whether the slip `code` shows in this sight beyond the tolerances (key: its tables' sheet)."""
    kind = key["_kind"]
    return {
        "sha_subtracted": kind == "star",
        "sd_limb": bool(key.get("sd")),
        "d_sign": abs(key.get("d_corr") or 0.0) >= 0.3,
        "date_wrong": key.get("ship_date") is not None and key["utc_date"] != key["ship_date"],
        "dec_name": abs(key["dec"]) * 60.0 > 0.5,
        "ie_sign": bool(key.get("ie")),
        "watch_error_sign": bool(key.get("watch_error")),
        "zone_not_applied": bool(key.get("zd")),
        "dip_feet_as_metres": "ft" in str(key.get("eye_height", "")),
    }.get(code, True)


def planted_sheets(rows, codes, *, exercise_name: str = "") -> list[dict]:
    """One sheet per code: every sight worked the tables' way, the code planted in the first sight
    where it shows (a star for ``sha_subtracted``, the Sun or Moon for ``sd_limb``, a sight whose
    d correction is 0.3′ or more for ``d_sign``, one past Greenwich midnight for ``date_wrong``)."""
    from .reference import work_sheet

    out = []
    for code in codes:
        keys = [work_sheet(r) for r in rows]
        target = next((r for r, k in zip(rows, keys) if _plantable(code, k)), None)
        if target is None:
            raise NavInputError(f"no sight of this exercise shows the slip '{code}'",
                                field="mistakes", example="sha_subtracted needs a star sight")
        for r, k in zip(rows, keys):
            fig = work_sheet(r, slips={code}) if r is target else dict(k)
            fig.update(student=f"planted {code}", exercise=exercise_name)
            out.append(fig)
    return out


def plantable_codes(rows) -> list[str]:
    """The slip codes that some sight of the exercise shows."""
    from .reference import SLIPS, work_sheet

    keys = [work_sheet(r) for r in rows]
    return [c for c in SLIPS if any(_plantable(c, k) for k in keys)]


def key_sheets(rows, *, exercise_name: str = "") -> tuple[list[dict], list[dict]]:
    """The answer key: every sight worked the tables' way, and exactly."""
    from .reference import work_sheet

    tables = [work_sheet(r) | {"student": "key (tables)", "exercise": exercise_name} for r in rows]
    exact = [work_sheet(r, tables=False) | {"student": "key (exact)", "exercise": exercise_name}
             for r in rows]
    return tables, exact

