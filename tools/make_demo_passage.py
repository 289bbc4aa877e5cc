"""Generate the invented demo passage, reproducibly, from a known true track.

    python tools/make_demo_passage.py            # (re)write the files listed below
    python tools/make_demo_passage.py --check    # exit 1 if a file differs from a fresh run

The scenario is invented: the 12 m cutter *Sula Brae* and her crew do not exist, and neither does
the passage; the places are real (Ponta Delgada in the Azores, Madeira's west end). Nothing here
is an observation. How the files are made:

- The **true track** is a chain of rhumb-line legs: the course and speed the crew steer (their DR
  legs) plus an ocean current the crew do not know (:data:`CURRENTS`), sailed with
  :func:`nav.sailing.advance_position`. Their DR therefore drifts off the truth, and each fix
  pulls it back.
- Every **sight** is made at the true position: Hc and Zn from nav.almanac's GHA/Dec
  (:func:`nav.reduction.hc_zn`), the intended Ho = Hc + a random error (σ = :data:`SIGMA_ARCMIN`,
  numpy's PCG64 with a fixed seed; one sight gets a +6′ blunder as well), and Hs found by
  iterating :func:`nav.corrections.correct_altitude` until correct_altitude(Hs) = that Ho to
  1e-10′. The navigator reads the sextant to 0.1′, so the logged Hs is that Hs rounded to 0.1′;
  the rounding is recorded beside the random error in the sights' truth file.
- Twilight sights are timed by the Sun's altitude at the true position (nautical twilight), and
  their bodies chosen with nav.almanac: bright stars and planets between 15° and 70°, picked
  one by one to spread their azimuths. Noon is the Sun's meridian passage predicted from the DR
  (:func:`nav.meridian.local_apparent_noon`).
- **Fixes and running fixes** are computed by nav itself (:meth:`nav.passage.Passage.fix_from`
  on the log written so far) and logged as ``fix`` entries; the crew then steer for the next
  waypoint from the fix.
- Entries are written by the logbook itself (:func:`nav.logbook.new_log`, then its append,
  strike and correct), so they are checked and spelt as every log is; the log is read back with
  :func:`nav.logbook.load_log` (strict) before each fix. The log's clock is the scenario's
  (:class:`ScenarioClock`: each entry's ``logged_utc`` follows the scenario's times) and the
  ``passage_uid`` is derived from the scenario's name, so a rerun reproduces every byte.

Writes (paths relative to the repository): ``sight_logs/demo-azores-madeira.jsonl`` (the log),
``.truth.csv`` (the true track), ``.sights-truth.csv`` (each sight's true position, Hc and the
errors put in), the same three under ``nav/data/demo/`` (the copy ``nav demo`` ships with), and
``examples/evening-stars.csv`` and ``examples/morning-noon-sun.csv`` (batch files cut from it).
"""

from __future__ import annotations

import argparse
import csv
import hashlib
import io
import sys
import tempfile
from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]
if str(REPO) not in sys.path:  # run from a checkout without installing
    sys.path.insert(0, str(REPO))

from nav import __version__, almanac  # noqa: E402
from nav.angles import parse_altitude, parse_lat, parse_lon  # noqa: E402
from nav.corrections import correct_altitude  # noqa: E402
from nav.fields import SIGHT_FIELD_BY_NAME, parse_height_m  # noqa: E402
from nav.logbook import load_log, new_log  # noqa: E402
from nav.meridian import local_apparent_noon  # noqa: E402
from nav.passage import Passage  # noqa: E402
from nav.reduction import hc_zn  # noqa: E402
from nav.sailing import advance_position, rhumb_line  # noqa: E402
from nav.timekeeping import (format_hm, format_utc, parse_naive_time,  # noqa: E402
                             parse_watch_error, parse_zone_description, zone_time_to_utc)

UTC = timezone.utc

# ---------------------------------------------------------------- the scenario (invented)

NAME = "azores-madeira"
VESSEL = "Sula Brae (12 m cutter, invented)"
TITLE = ("Invented demo passage: the cutter Sula Brae from Ponta Delgada (Azores) to Madeira, "
         "19-22 June 2026")
CREW = ("Crew (invented): Marta Quental, skipper; Tomas Ward, navigator; Lena Okafor and "
        "Joao Brum, watch leaders. This passage, vessel and crew are made up for nav's demo: "
        "the sights were computed from a known true track with invented errors.")
SEED = 20260619
SIGMA_ARCMIN = 0.5              # the random error of a good yacht sight (invented, typical)
BLUNDER_ARCMIN = 6.0            # one sight read 6' high (a misread minute, invented)
DEPART_UTC = datetime(2026, 6, 19, 8, 0, tzinfo=UTC)
DEPART = ("37 43.0 N", "025 38.0 W")      # outside Ponta Delgada's breakwater
WAYPOINT = (32.0 + 48.0 / 60.0, -(17.0 + 22.0 / 60.0))   # some 5 nmi west of Madeira's west end
# The current the crew do not know: (from UTC, set toward deg, drift kn).
CURRENTS = ((DEPART_UTC, 140.0, 0.5),
            (datetime(2026, 6, 20, 6, 0, tzinfo=UTC), 160.0, 0.7),
            (datetime(2026, 6, 21, 6, 0, tzinfo=UTC), 190.0, 0.6),
            (datetime(2026, 6, 22, 0, 0, tzinfo=UTC), 200.0, 0.4))
STAR_MAG_LIMIT = 2.1            # bright enough to find in twilight
ALT_RANGE_DEG = (15.0, 70.0)    # low refraction doubt, not too high to swing the sextant
MIN_AZ_GAP_DEG = 20.0

LOG_FILE = f"demo-{NAME}.jsonl"
TRUTH_FILE = f"demo-{NAME}.truth.csv"
SIGHTS_TRUTH_FILE = f"demo-{NAME}.sights-truth.csv"
DEMO_FILES = (LOG_FILE, TRUTH_FILE, SIGHTS_TRUTH_FILE)
OUTPUT_DIRS = ("sight_logs", "nav/data/demo")
EXAMPLE_COLUMNS = ("utc", "body", "hs", "index_error", "eye_height_m", "dr_lat", "dr_lon",
                   "course_deg", "speed_kn", "note")


def _parse(name: str, text: str) -> float:
    return float(SIGHT_FIELD_BY_NAME[name].parse(text, name))


def _lat_text(lat: float) -> str:
    tenths = round(abs(lat) * 600.0)
    return f"{tenths // 600:02d} {(tenths % 600) / 10:04.1f} {'N' if lat >= 0 else 'S'}"


def _lon_text(lon: float) -> str:
    tenths = round(abs(lon) * 600.0)
    return f"{tenths // 600:03d} {(tenths % 600) / 10:04.1f} {'E' if lon >= 0 else 'W'}"


def _hs_text(hs_deg: float) -> str:
    tenths = round(hs_deg * 600.0)
    return f"{tenths // 600} {(tenths % 600) / 10:04.1f}"


def _second(t: datetime) -> datetime:
    return (t + timedelta(microseconds=500_000)).replace(microsecond=0)


# ---------------------------------------------------------------- the true track

class Truth:
    """The vessel's true position: the crew's legs plus the unknown current, rhumb line by leg."""

    def __init__(self, t0: datetime, lat: float, lon: float):
        self.t, self.lat, self.lon = t0, lat, lon
        self.course, self.speed = 0.0, 0.0
        self.rows: list[dict] = []
        self._row("departure")

    @staticmethod
    def current(t: datetime) -> tuple[float, float]:
        return next((s, d) for start, s, d in reversed(CURRENTS) if start <= t)

    def _row(self, event: str) -> None:
        set_, drift = self.current(self.t)
        row = {"utc": self.t, "lat_deg": self.lat, "lon_deg": self.lon,
               "course_deg": self.course, "speed_kn": self.speed, "set_deg": set_,
               "drift_kn": drift, "event": event}
        if self.rows and self.rows[-1]["utc"] == self.t:
            old = self.rows[-1]["event"]
            row["event"] = "; ".join(x for x in (old, event) if x)
            self.rows[-1] = row
        else:
            self.rows.append(row)

    def _cuts(self, t_to: datetime) -> list[datetime]:
        hour = self.t.replace(minute=0, second=0, microsecond=0) + timedelta(hours=1)
        cuts = {start for start, _, _ in CURRENTS if self.t < start < t_to}
        while hour < t_to:
            cuts.add(hour)
            hour += timedelta(hours=1)
        return sorted(cuts) + [t_to]

    def position_at(self, t: datetime) -> tuple[float, float]:
        """Where she will be at `t` on the legs in force (nothing recorded)."""
        lat, lon, now = self.lat, self.lon, self.t
        for cut in self._cuts(t):
            lat, lon = self._sail(lat, lon, now, cut)
            now = cut
        return lat, lon

    def _sail(self, lat, lon, t_from, t_to):
        set_, drift = self.current(t_from)
        hours = (t_to - t_from).total_seconds() / 3600.0
        lat2, lon2 = advance_position(lat, lon, self.course, self.speed, hours, set_deg=set_,
                                      drift_kn=drift)
        return float(lat2), float(lon2)

    def advance(self, t: datetime, event: str = "") -> None:
        if t < self.t:
            raise ValueError(f"the scenario runs backwards at {t}")
        for cut in self._cuts(t):
            if cut > self.t:
                self.lat, self.lon = self._sail(self.lat, self.lon, self.t, cut)
                self.t = cut
                if cut < t:
                    self._row("")
        self._row(event)

    def steer(self, t: datetime, course: float, speed: float) -> None:
        self.advance(t)
        self.course, self.speed = course, speed
        self._row(f"course {course:g} speed {speed:g} (steered)")


# ---------------------------------------------------------------- the log, on the scenario's clock

@dataclass
class Settings:
    eye: str = "2.4"
    ie: str = "+1.2"
    temperature: str = "19"
    pressure: str = "1021"
    zd: str = "+2"
    watch: str = "6 fast"

    def values(self) -> dict:
        return {"eye_height_m": parse_height_m(self.eye, "eye_height"),
                "index_error_arcmin": _parse("index_error", self.ie),
                "temperature_c": _parse("temperature_c", self.temperature),
                "pressure_hpa": _parse("pressure_hpa", self.pressure)}

    @property
    def zd_delta(self) -> timedelta:
        return parse_zone_description(self.zd, "zone_description")

    @property
    def watch_fast(self) -> timedelta:
        return parse_watch_error(self.watch, "watch_error")


class ScenarioClock:
    """The log's clock: the scenario's time of the entry being written, to the second; it never
    runs back (an entry is logged no earlier than the one before it)."""

    def __init__(self, t0: datetime):
        self.now = _second(t0)

    def at(self, t: datetime) -> None:
        self.now = max(self.now, _second(t))

    def __call__(self) -> datetime:
        return self.now


class DemoLog:
    """The log being written, through nav.logbook, on the scenario's clock."""

    def __init__(self, tmp: Path):
        self.path = tmp / LOG_FILE
        self.clock = ScenarioClock(DEPART_UTC - timedelta(hours=1))
        uid = hashlib.sha256(f"nav demo {NAME}".encode()).hexdigest()[:16]
        self.log = new_log(self.path, VESSEL, TITLE, clock=self.clock, passage_uid=uid,
                           software=f"nav {__version__} (tools/make_demo_passage.py)")

    def add(self, entry: dict, logged: datetime) -> str:
        self.clock.at(logged)
        return self.log.append(entry).id

    def strike(self, target: str, reason: str, logged: datetime) -> str:
        self.clock.at(logged)
        return self.log.strike(target, reason).id

    def correct(self, target: str, reason: str, changes: dict, logged: datetime) -> str:
        self.clock.at(logged)
        return self.log.correct(target, reason, changes).id

    def entry(self, eid: str):
        return self.log.entry_by_id(eid)

    def close(self) -> None:
        self.log.close()

    def data(self) -> bytes:
        return self.path.read_bytes()

    def loaded(self):
        """The log so far, read back from the file strictly by the logbook."""
        return load_log(self.path)

    def passage(self) -> Passage:
        return Passage(self.loaded())


# ---------------------------------------------------------------- the voyage

@dataclass
class Voyage:
    log: DemoLog
    truth: Truth
    rng: np.random.Generator
    settings: Settings = field(default_factory=Settings)
    sight_truth: list = field(default_factory=list)
    course: float = 0.0
    speed: float = 0.0

    # -- entries
    def note(self, t: datetime, text: str) -> str:
        return self.log.add({"kind": "note", "utc": t, "text": text}, t + timedelta(minutes=1))

    def setting(self, t: datetime, note: str, **changes) -> str:
        names = {"eye": ("eye_height", "eye_height_m"), "ie": ("index_error", "index_error_arcmin"),
                 "temperature": ("temperature", "temperature_c"),
                 "pressure": ("pressure", "pressure_hpa"),
                 "zd": ("zone_description", "zone_description_h"),
                 "watch": ("watch_error", "watch_error_s")}
        entry: dict = {"kind": "setting"}
        for key, text in changes.items():
            setattr(self.settings, key, text)
            raw, parsed = names[key]
            entry[raw] = text
            entry[parsed] = {"zd": lambda: self.settings.zd_delta.total_seconds() / 3600.0,
                             "watch": lambda: self.settings.watch_fast.total_seconds()}.get(
                key, lambda: self.settings.values()[parsed])()
        if "eye" in changes:
            entry["horizon"] = "sea"
        entry["note"] = note
        return self.log.add(entry, t)

    def steer(self, t: datetime, course: float, speed: float, note: str, position=None,
              basis: str = "dr") -> str:
        """A dr entry: the crew's new course and speed (and a position, when they know one)."""
        self.truth.steer(t, course, speed)
        self.course, self.speed = course, speed
        entry: dict = {"kind": "dr", "utc": t}
        if position is not None:
            lat_t, lon_t = position
            entry.update(lat=lat_t, lat_deg=parse_lat(lat_t, "lat"), lon=lon_t,
                         lon_deg=parse_lon(lon_t, "lon"))
        ctext, stext = f"{course:03.0f}", f"{speed:.1f}"
        entry.update(course=ctext, course_deg=_parse("course_deg", ctext), speed=stext,
                     speed_kn=_parse("speed_kn", stext))
        if position is not None:
            entry["position_basis"] = basis
        entry["note"] = note
        return self.log.add(entry, t + timedelta(seconds=40))

    def course_for_waypoint(self, lat: float, lon: float) -> float:
        c, _ = rhumb_line(lat, lon, *WAYPOINT)
        return float(round(float(c)) % 360)

    # -- sights
    def sight(self, body: str, t: datetime, *, blunder: float = 0.0, note: str = "",
              typo: bool = False) -> str:
        """A sight of `body` at `t` (UTC, whole second), made from the truth. With `typo` the
        Hs is logged as the navigator first typed it, two digits of the minutes swapped (or,
        where that is no reading, 10′ too many); :meth:`correct_hs` then corrects it."""
        t = _second(t)
        self.truth.advance(t, f"sight {body}")
        lat, lon = self.truth.lat, self.truth.lon
        rec = almanac.body_almanac(body, t)
        kind = almanac.body_kind(body)
        gha, dec = float(rec.gha_deg), float(rec.dec_deg)
        hc, zn = (float(x) for x in hc_zn(lat, dec, gha + lon))
        noise = float(self.rng.normal(0.0, SIGMA_ARCMIN))
        target = hc + (noise + blunder) / 60.0
        limb = "lower" if kind in ("sun", "moon") else None
        s = self.settings.values()

        def ho(hs: float) -> float:
            return float(correct_altitude(
                hs, body_kind=kind, limb=limb, index_error_arcmin=s["index_error_arcmin"],
                eye_height_m=s["eye_height_m"], horizon="sea", temperature_c=s["temperature_c"],
                pressure_hpa=s["pressure_hpa"],
                hp_arcmin=None if kind == "star" else float(rec.hp_arcmin),
                sd_arcmin=float(rec.sd_arcmin) if kind in ("sun", "moon") else None,
                lat_deg=lat, zn_deg=zn).ho_deg)

        hs = target
        for _ in range(30):
            step = target - ho(hs)
            hs += step
            if abs(step) < 1e-10 / 60.0:
                break
        else:  # pragma: no cover - the corrections are a contraction; this never happens
            raise RuntimeError(f"Hs of {body} at {t} did not converge")
        hs_text = _hs_text(hs)
        hs_deg = parse_altitude(hs_text, "hs")
        typed = hs_text
        if typo:
            deg, mins = hs_text.split()
            swapped = f"{mins[1]}{mins[0]}{mins[2:]}"
            typed = (f"{deg} {swapped}" if mins[0] != mins[1] and float(swapped) < 60.0
                     else _hs_text(hs_deg + 10.0 / 60.0))
        zt = (t - self.settings.zd_delta).replace(tzinfo=None)
        reading = zt + self.settings.watch_fast
        time_text = f"{reading:%Y-%m-%d %H:%M:%S}"
        back = zone_time_to_utc(parse_naive_time(time_text), self.settings.zd_delta,
                                self.settings.watch_fast).utc
        assert back == t, (back, t)
        entry = {"kind": "sight", "body": rec.body, "utc": t, "time_source": "watch",
                 "time_text": time_text, "zone_description": self.settings.zd,
                 "zone_description_h": self.settings.zd_delta.total_seconds() / 3600.0,
                 "watch_error": self.settings.watch,
                 "watch_error_s": self.settings.watch_fast.total_seconds(),
                 "hs": typed, "hs_deg": parse_altitude(typed, "hs"),
                 "limb": limb, "note": note or None}
        eid = self.log.add(entry, t + timedelta(seconds=50))
        self.sight_truth.append({
            "id": eid, "body": rec.body, "utc": t, "limb": limb or "", "true_lat_deg": lat,
            "true_lon_deg": lon, "gha_deg": gha, "dec_deg": dec, "hc_deg": hc, "zn_deg": zn,
            "noise_arcmin": noise, "blunder_arcmin": blunder,
            "reading_rounding_arcmin": (hs_deg - hs) * 60.0,
            "error_arcmin": (ho(hs_deg) - hc) * 60.0, "hs_exact_deg": hs, "hs": hs_text})
        return eid

    def correct_hs(self, eid: str, t: datetime) -> str:
        """The navigator corrects a sight typed wrongly: the Hs the sextant read."""
        typed = self.log.entry(eid)["hs"]
        right = next(r["hs"] for r in self.sight_truth if r["id"] == eid)
        reason = (f"Hs typed as {typed}; the sextant read {right} (the intercept of "
                  f"{abs(parse_altitude(typed, 'hs') - parse_altitude(right, 'hs')) * 60:.0f} "
                  "nmi gave it away)")
        return self.log.correct(eid, reason, {"hs": right, "hs_deg": parse_altitude(right, "hs")},
                                t)

    # -- fixes
    def fix(self, ids: list[str], note: str, *, steer_after: bool = True,
            speed: float | None = None) -> tuple[str, object]:
        result, _ = self.log.passage().fix_from(ids)
        f = result.fix
        e = f.ellipse
        entry = {"kind": "fix", "utc": f.utc, "lat_deg": round(f.lat_deg, 7),
                 "lon_deg": round(f.lon_deg, 7), "fix_kind": f.kind.replace(" ", "_"),
                 "sight_ids": list(ids),
                 "method": "least squares, iterated (nav.fix.solve_fix); earlier sights "
                           "advanced along the logged DR legs",
                 "ellipse_semi_major_nmi": round(e.semi_major_nmi, 4),
                 "ellipse_semi_minor_nmi": round(e.semi_minor_nmi, 4),
                 "ellipse_orientation_deg": round(e.orientation_deg, 2) % 180.0,
                 "ellipse_confidence": e.confidence, "warnings": list(f.warnings), "note": note}
        eid = self.log.add(entry, f.utc + timedelta(minutes=4))
        if steer_after:
            t = _second(f.utc + timedelta(minutes=9))
            course = self.course_for_waypoint(f.lat_deg, f.lon_deg)
            self.steer(t, course, speed if speed is not None else self.speed,
                       f"from the {f.kind} of {format_hm(f.utc)} UTC: course for the waypoint "
                       "off Madeira's west end")
        return eid, f

    # -- timing
    def sun_alt(self, t: datetime) -> float:
        lat, lon = self.truth.position_at(t)
        rec = almanac.body_almanac("Sun", t)
        return float(hc_zn(lat, float(rec.dec_deg), float(rec.gha_deg) + lon)[0])

    def when_sun_at(self, alt_deg: float, lo: datetime, hi: datetime) -> datetime:
        """The instant in [lo, hi] when the Sun's true altitude passes alt_deg (bisection)."""
        f_lo = self.sun_alt(lo) - alt_deg
        for _ in range(40):
            mid = lo + (hi - lo) / 2
            f_mid = self.sun_alt(mid) - alt_deg
            if (f_mid > 0) == (f_lo > 0):
                lo, f_lo = mid, f_mid
            else:
                hi = mid
        return _second(lo)

    def choose_bodies(self, t: datetime, n: int) -> list[tuple[str, float]]:
        """n bright bodies between 15° and 70°, spread in azimuth: (name, Zn), eastern first."""
        lat, lon = self.truth.position_at(t)
        names = [b for b in almanac.body_names() if b not in ("Sun", "Moon")]
        cands = []
        for rec in almanac.almanac(names, t):
            mag = float(rec.magnitude) if rec.magnitude is not None else 9.0
            hc, zn = (float(x) for x in hc_zn(lat, float(rec.dec_deg), float(rec.gha_deg) + lon))
            if ALT_RANGE_DEG[0] <= hc <= ALT_RANGE_DEG[1] and mag <= STAR_MAG_LIMIT:
                cands.append((rec.kind != "planet", mag, rec.body, zn))
        cands.sort()
        chosen = [cands[0]]
        while len(chosen) < n:
            def gap(c):
                return min(abs((c[3] - x[3] + 180.0) % 360.0 - 180.0) for x in chosen)
            rest = [c for c in cands if c not in chosen and gap(c) >= MIN_AZ_GAP_DEG]
            if not rest:
                break
            chosen.append(max(rest, key=lambda c: (round(gap(c) / 10.0), -c[1])))
        return sorted(((c[2], c[3]) for c in chosen), key=lambda b: abs(b[1] - 90.0))

    def twilight(self, day: datetime, evening: bool, n: int, *, blunder_on: int | None = None):
        """Star and planet sights in nautical twilight: `n` bodies, some 3 minutes apart."""
        if evening:
            start = self.when_sun_at(-5.0, day.replace(hour=19), day.replace(hour=23))
        else:
            end = self.when_sun_at(-5.5, day.replace(hour=4), day.replace(hour=8))
            start = end - timedelta(minutes=3 * n)
        bodies = self.choose_bodies(start + timedelta(minutes=1.5 * n), n)
        ids, t = [], start
        for i, (body, _) in enumerate(bodies):
            t = t + timedelta(minutes=2, seconds=int(self.rng.integers(20, 70)))
            ids.append(self.sight(body, t, blunder=BLUNDER_ARCMIN if i == blunder_on else 0.0))
        return ids, [b for b, _ in bodies]

    def predicted_noon(self, t_dr: datetime):
        w = self.log.passage().where(t_dr)
        return local_apparent_noon(t_dr, w.lat_deg, w.lon_deg, self.course, self.speed,
                                   self.settings.zd_delta)


# ---------------------------------------------------------------- the passage, day by day

def sail(tmp: Path) -> Voyage:
    lat0, lon0 = parse_lat(DEPART[0], "lat"), parse_lon(DEPART[1], "lon")
    v = Voyage(DemoLog(tmp), Truth(DEPART_UTC, lat0, lon0),
               np.random.default_rng(SEED))
    day = [datetime(2026, 6, d, tzinfo=UTC) for d in (19, 20, 21, 22)]
    t0 = DEPART_UTC - timedelta(minutes=30)
    v.note(t0, CREW)
    v.setting(t0 + timedelta(minutes=2), "before departure: height of eye in the cockpit, "
              "index error on the arc, ship's clocks on ZD +2, deck watch checked against the "
              "radio time signal", eye="2.4", ie="+1.2", temperature="19", pressure="1021",
              zd="+2", watch="6 fast")
    course0 = v.course_for_waypoint(lat0, lon0)
    v.steer(DEPART_UTC, course0, 6.0, "departure: breakwater head abeam 0.5 nmi to port; "
            "course for the waypoint off Madeira's west end", position=DEPART, basis="visual")

    # 19 June: Sun-run-Sun to noon; evening stars with one bad sight
    noon = v.predicted_noon(day[0].replace(hour=10))
    am = v.sight("Sun", noon.utc - timedelta(hours=3, minutes=17), note="morning Sun")
    nn = v.sight("Sun", noon.utc, note=f"noon: meridian passage predicted for "
                 f"{noon.utc:%H:%M:%S} UTC from the DR (ZT {noon.zone_time:%H:%M:%S})")
    v.fix([am, nn], "Sun-run-Sun: the morning Sun advanced to noon along the DR legs")
    ids, _ = v.twilight(day[0], evening=True, n=6, blunder_on=2)
    bad = ids[2]
    flagged, f = v.fix(ids, "evening stars and Venus: six lines", steer_after=False)
    bad_body = v.log.entry(bad)["body"]
    v.log.strike(flagged, f"the {bad_body} line does not fit the other {len(ids) - 1} (flagged by "
                 "the residual check): probably a misread minute; fixed again without it",
                 f.utc + timedelta(minutes=7))
    v.fix([i for i in ids if i != bad], f"evening stars without {bad_body}")
    v.steer(day[1].replace(hour=2, minute=10), (v.course + 10) % 360, 6.2,
            "wind backed to north-north-east in a squall: bore away 10 degrees")

    # 20 June: morning stars, Sun-run-Sun, Sun and Moon, evening stars, clocks to ZD +1
    ids, _ = v.twilight(day[1], evening=False, n=5)
    v.fix(ids, "morning stars and planets", speed=6.5)
    noon = v.predicted_noon(day[1].replace(hour=9))
    am = v.sight("Sun", noon.utc - timedelta(hours=3, minutes=8), note="morning Sun")
    nn = v.sight("Sun", noon.utc, note=f"noon: meridian passage predicted for "
                 f"{noon.utc:%H:%M:%S} UTC from the DR (ZT {noon.zone_time:%H:%M:%S})")
    v.fix([am, nn], "Sun-run-Sun to noon")
    t_moon = day[1].replace(hour=17, minute=52, second=10)
    sun_pm = v.sight("Sun", t_moon, note="afternoon Sun, with the Moon")
    moon = v.sight("Moon", t_moon + timedelta(minutes=3, seconds=25),
                   note="the waxing Moon, a little over a day before first quarter")
    v.fix([sun_pm, moon], "Sun and Moon, some four minutes apart")
    ids, _ = v.twilight(day[1], evening=True, n=5)
    v.fix(ids, "evening stars and Venus")
    v.setting(day[1].replace(hour=23), "ship's clocks advanced one hour: ZD +1 east of "
              "022 30 W", zd="+1")

    # 21 June: morning stars; watch checked; a sight typed wrongly and corrected; Sun-run-Sun
    ids, _ = v.twilight(day[2], evening=False, n=4)
    v.fix(ids, "morning stars and planets", speed=5.6)
    v.setting(day[2].replace(hour=8, minute=5), "deck watch compared with the radio time "
              "signal: now 7 s fast; warmer, glass falling slowly", watch="7 fast",
              temperature="22", pressure="1017")
    noon = v.predicted_noon(day[2].replace(hour=9))
    am_t = noon.utc - timedelta(hours=3, minutes=12)
    am = v.sight("Sun", am_t, note="morning Sun", typo=True)
    v.correct_hs(am, am_t + timedelta(minutes=4))
    nn = v.sight("Sun", noon.utc, note=f"noon: meridian passage predicted for "
                 f"{noon.utc:%H:%M:%S} UTC from the DR (ZT {noon.zone_time:%H:%M:%S})")
    v.fix([am, nn], "Sun-run-Sun to noon")

    # 22 June: morning stars, then landfall
    ids, _ = v.twilight(day[3], evening=False, n=5)
    v.fix(ids, "morning stars and planets: the last fix before landfall")
    start = v.truth.t.replace(minute=0, second=0) + timedelta(hours=1)
    t_land = min((start + timedelta(minutes=10 * k) for k in range(72)),     # closest approach
                 key=lambda t: float(rhumb_line(*v.truth.position_at(t), *WAYPOINT)[1]))
    lat, lon = v.truth.position_at(t_land)
    v.steer(t_land, 110.0, 5.5, "landfall: position from bearings of Madeira's west-end "
            "headland and a peak inland (visual); course along the south coast for Funchal",
            position=(_lat_text(lat), _lon_text(lon)), basis="visual")
    v.truth.advance(t_land + timedelta(minutes=20), "end of the demo's true track")
    v.note(t_land + timedelta(minutes=20), "Madeira's west end abeam to port. End of the "
           "ocean passage: coastal pilotage from here, by the chart and the eye.")
    return v


# ---------------------------------------------------------------- files

def _csv(rows: list[dict], columns: list[str], formats: dict) -> bytes:
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(columns)
    for r in rows:
        w.writerow([formats.get(c, str)(r[c]) for c in columns])
    return out.getvalue().encode("utf-8")


def _f(n):
    return lambda x: f"{x:.{n}f}"


def truth_csv(v: Voyage) -> bytes:
    return _csv(v.truth.rows, ["utc", "lat_deg", "lon_deg", "course_deg", "speed_kn", "set_deg",
                               "drift_kn", "event"],
                {"utc": format_utc, "lat_deg": _f(7), "lon_deg": _f(7), "course_deg": _f(1),
                 "speed_kn": _f(2), "set_deg": _f(1), "drift_kn": _f(2)})


def sights_truth_csv(v: Voyage) -> bytes:
    cols = ["id", "body", "utc", "limb", "true_lat_deg", "true_lon_deg", "gha_deg", "dec_deg",
            "hc_deg", "zn_deg", "noise_arcmin", "blunder_arcmin", "reading_rounding_arcmin",
            "error_arcmin", "hs_exact_deg", "hs"]
    fmt = {"utc": format_utc, "true_lat_deg": _f(7), "true_lon_deg": _f(7), "gha_deg": _f(7),
           "dec_deg": _f(7), "hc_deg": _f(7), "zn_deg": _f(3), "noise_arcmin": _f(4),
           "blunder_arcmin": _f(1), "reading_rounding_arcmin": _f(4), "error_arcmin": _f(4),
           "hs_exact_deg": _f(7)}
    return _csv(v.sight_truth, cols, fmt)


def example_csv(passage: Passage, ids: list[str], note: str) -> bytes:
    """A batch sight file (the columns of `nav fix`) cut from the demo's sights: the first row
    carries the DR, the course and speed in force; later rows inherit them."""
    rows = []
    by_id = {e.id: r for e, r in passage.sights()}
    entries = {e.id: e for e in passage.sight_entries}
    for k, sid in enumerate(ids):
        e, r = entries[sid], by_id[sid]
        row = {c: "" for c in EXAMPLE_COLUMNS}
        row.update(utc=e["utc"], body=e["body"], hs=e["hs"],
                   index_error=f"{r.index_error_arcmin:+.1f}", eye_height_m=f"{r.eye_height_m:g}")
        leg = passage.leg_at(r.utc)
        prev = passage.leg_at(by_id[ids[k - 1]].utc) if k else None
        if k == 0:
            row.update(dr_lat=_lat_text(r.dr_lat_deg), dr_lon=_lon_text(r.dr_lon_deg),
                       note=note)
        if k == 0 or leg is not prev:
            row.update(course_deg=f"{leg.course_deg:03.0f}", speed_kn=f"{leg.speed_kn:.1f}")
        rows.append(row)
    return _csv(rows, list(EXAMPLE_COLUMNS), {})


def build() -> dict[str, bytes]:
    """Every generated file: {path relative to the repository: bytes}."""
    with tempfile.TemporaryDirectory(prefix="nav-demo-") as tmp:
        v = sail(Path(tmp))
        v.log.close()
        log, log_bytes = v.log.loaded(), v.log.data()
        passage = Passage(log)
    data = {LOG_FILE: log_bytes, TRUTH_FILE: truth_csv(v), SIGHTS_TRUTH_FILE: sights_truth_csv(v)}
    out = {f"{d}/{name}": blob for d in OUTPUT_DIRS for name, blob in data.items()}
    fixes = [e for e in log.effective_entries("fix")]
    evening = next(f for f in fixes if f["utc"].startswith("2026-06-20T2"))
    rf = next(f for f in fixes if f["utc"].startswith("2026-06-20T1")
              and f["fix_kind"] == "running_fix")
    out["examples/evening-stars.csv"] = example_csv(
        passage, list(evening["sight_ids"]),
        "invented example from nav's demo passage (cutter Sula Brae): evening stars, 20 June 2026")
    out["examples/morning-noon-sun.csv"] = example_csv(
        passage, list(rf["sight_ids"]),
        "invented example from nav's demo passage (cutter Sula Brae): morning Sun and noon Sun, "
        "a running fix")
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true",
                    help="compare with the files on disk; exit 1 if any differs")
    ap.add_argument("--root", type=Path, default=REPO, help="the repository (default: this one)")
    args = ap.parse_args(argv)
    files = build()
    differ = []
    for rel, blob in files.items():
        path = args.root / rel
        if args.check:
            if not path.is_file() or path.read_bytes() != blob:
                differ.append(rel)
            continue
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(blob)
        print(f"wrote {rel} ({len(blob):,} bytes)")
    if args.check:
        for rel in differ:
            print(f"differs from a fresh run: {rel}", file=sys.stderr)
        return 1 if differ else 0
    return 0


if __name__ == "__main__":
    sys.exit(main())
