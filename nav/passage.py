"""A passage rebuilt from its log: settings, the DR track, sights, fixes, and where we are.

The log (:mod:`nav.logbook`) stores what was entered; this module reads its *effective* entries
(strikes and corrections applied) and rebuilds, without touching the disk:

- the settings in force (each ``setting`` entry changes the values it names, in log order);
- the track: *anchors* where the position is known — a ``dr`` entry with a position, or a stored
  ``fix`` — and *legs* of course and speed (a ``dr`` entry with a course or a speed changes them
  from its time on). The DR at any instant is the latest anchor at or before it, sailed along the
  legs since (rhumb line);
- the sights, each as a :class:`nav.sightfile.SightRow` with its DR at the sight's time (its own
  DR where one was entered), its instrument values from the sight entry or the settings in force;
- the vessel's run between two instants, integrated along the legs only: a fix resets the
  position of the DR but is not part of the run, so a morning sight advanced to noon moves by
  what the vessel sailed, not by the correction a fix made in between.
"""

from __future__ import annotations

import bisect
from dataclasses import dataclass
from datetime import datetime, timedelta
from typing import Sequence

from .errors import NavInputError
from .sailing import dr_position, rhumb_line
from .sightfile import SightRow
from .timekeeping import UTC, format_date_hm, format_date_hms, parse_utc

DEFAULTS = {"eye_height_m": 0.0, "index_error_arcmin": 0.0, "watch_error_s": 0.0,
            "zone_description_h": 0.0, "temperature_c": 10.0, "pressure_hpa": 1010.0,
            "horizon": "sea"}


@dataclass(frozen=True)
class Settings:
    eye_height_m: float = 0.0
    index_error_arcmin: float = 0.0
    watch_error_s: float = 0.0          # fast +
    zone_description_h: float = 0.0     # UTC = ZT + ZD
    temperature_c: float = 10.0
    pressure_hpa: float = 1010.0
    horizon: str = "sea"


@dataclass(frozen=True)
class Anchor:
    """A known position of the track: a DR position entered, or a fix stored."""

    utc: datetime
    lat_deg: float
    lon_deg: float
    basis: str              # "dr", "ep", "gps", "visual", "other", "fix", "running fix"
    entry_id: str


@dataclass(frozen=True)
class Leg:
    """Course and speed in force from `utc` on."""

    utc: datetime
    course_deg: float | None
    speed_kn: float
    entry_id: str


@dataclass(frozen=True)
class Whereabouts:
    """Where the vessel is at `utc`, and on what basis."""

    utc: datetime
    lat_deg: float
    lon_deg: float
    basis: str                  # the anchor's basis
    anchor: Anchor
    course_deg: float | None
    speed_kn: float

    @property
    def age(self) -> timedelta:
        return self.utc - self.anchor.utc

    def describe(self) -> str:
        hours = self.age.total_seconds() / 3600.0
        if self.basis in ("fix", "running fix"):
            what = f"{self.basis} at {format_date_hm(self.anchor.utc)} UTC"
        else:
            what = f"{self.basis.upper()} position entered at {format_date_hm(self.anchor.utc)} UTC"
        if hours < 1 / 60:
            return what
        return f"DR {hours:.1f} h from the {what}"


def _utc(entry, field="utc") -> datetime:
    return parse_utc(entry[field], field)


class Passage:
    """The effective content of a loaded passage log (any :class:`nav.logbook.LoadedLog`)."""

    def __init__(self, log):
        self.log = log
        self.header = log.header
        entries = log.effective_entries()
        self.settings = self._settings(entries)
        self.anchors: list[Anchor] = []
        self.legs: list[Leg] = []
        self.fix_entries = [e for e in entries if e.kind == "fix"]
        self.sight_entries = [e for e in entries if e.kind == "sight"]
        self.note_entries = [e for e in entries if e.kind == "note"]
        self.current_entries = sorted((e for e in entries if e.kind == "current"),
                                      key=lambda e: _utc(e))
        self.watch_checks = [e for e in entries if e.kind == "watch_check"]
        self._settings_before: dict[str, Settings] = {}
        running = dict(DEFAULTS)
        changes: list[tuple] = []      # (utc, course or None, speed or None, id) of dr entries
        for e in entries:
            if e.kind == "setting":
                running.update({k: e[k] for k in DEFAULTS if k in e.data})
            elif e.kind == "sight":
                self._settings_before[e.id] = Settings(**running)
            elif e.kind == "dr":
                t = _utc(e)
                if "lat_deg" in e.data:
                    self.anchors.append(Anchor(t, e["lat_deg"], e["lon_deg"],
                                               e.get("position_basis", "dr"), e.id))
                if "course_deg" in e.data or "speed_kn" in e.data:
                    changes.append((t, e.get("course_deg"), e.get("speed_kn"), e.id))
            elif e.kind == "fix":
                self.anchors.append(Anchor(_utc(e), e["lat_deg"], e["lon_deg"],
                                           e["fix_kind"].replace("_", " "), e.id))
        self.anchors.sort(key=lambda a: a.utc)
        self._anchor_times = [a.utc for a in self.anchors]
        # A change that gives only a course keeps the speed in force then, and the other way round.
        course, speed = None, 0.0
        for t, c, v, eid in sorted(changes, key=lambda x: x[0]):
            course = c if c is not None else course
            speed = float(v) if v is not None else speed
            self.legs.append(Leg(t, course, speed, eid))
        self._leg_times = [leg.utc for leg in self.legs]

    @staticmethod
    def _settings(entries) -> Settings:
        values = dict(DEFAULTS)
        for e in entries:
            if e.kind == "setting":
                values.update({k: e[k] for k in DEFAULTS if k in e.data})
        return Settings(**values)

    # ------------------------------------------------------------ the track

    def leg_at(self, utc: datetime) -> Leg | None:
        i = bisect.bisect_right(self._leg_times, utc) - 1
        return self.legs[i] if i >= 0 else None

    def _sail(self, lat: float, lon: float, t_from: datetime, t_to: datetime) -> tuple[float, float]:
        """Sail from (lat, lon) at t_from to t_to (t_to ≥ t_from) along the legs in force."""
        cuts = [t_from] + [leg.utc for leg in self.legs if t_from < leg.utc < t_to] + [t_to]
        for start, end in zip(cuts, cuts[1:]):
            leg = self.leg_at(start)
            if leg and leg.course_deg is not None and leg.speed_kn > 0 and end > start:
                hours = (end - start).total_seconds() / 3600.0
                lat, lon = (float(x) for x in dr_position(lat, lon, leg.course_deg, leg.speed_kn,
                                                         hours))
        return lat, lon

    def where(self, utc: datetime) -> Whereabouts:
        """The DR at `utc` from the latest anchor at or before it."""
        i = bisect.bisect_right(self._anchor_times, utc) - 1
        if i < 0:
            raise NavInputError(
                f"no position is known at or before {format_date_hms(utc)} UTC: enter a DR first",
                field="dr", example="dr 41 12.5 N 032 07.1 W course 245 speed 6.5")
        a = self.anchors[i]
        lat, lon = self._sail(a.lat_deg, a.lon_deg, a.utc, utc)
        leg = self.leg_at(utc)
        return Whereabouts(utc, lat, lon, a.basis, a,
                           leg.course_deg if leg else None, leg.speed_kn if leg else 0.0)

    def currents(self):
        """(from_utc, Current) in time order: the currents entered or applied (issue 10)."""
        from .current import Current

        return [(_utc(e), Current(e["set_deg"], e["drift_kn"])) for e in self.current_entries]

    def currents_in_force(self, t_from: datetime, t_to: datetime):
        """The currents that act between two instants: the one in force at `t_from` and those
        that begin before `t_to` (an empty list when none has any drift)."""
        cur = self.currents()
        before = [c for c in cur if c[0] <= t_from]
        out = ([before[-1]] if before else []) + [c for c in cur if t_from < c[0] < t_to]
        return out if any(c.drift_kn > 0 for _, c in out) else []

    def ep(self, utc: datetime) -> tuple[float, float] | None:
        """The EP at `utc`: the DR with every current in force since its anchor allowed for;
        None when no current is in force since then."""
        from .current import ep_from_dr

        w = self.where(utc)
        in_force = self.currents_in_force(w.anchor.utc, utc)
        if not in_force:
            return None
        return ep_from_dr(w.lat_deg, w.lon_deg, in_force, w.anchor.utc, utc)

    def run_ep(self, t_from: datetime, t_to: datetime, lat: float, lon: float):
        """As :meth:`run`, along the EP track: the legs sailed and the currents in force."""
        from .current import ep_from_dr

        if t_to == t_from:
            return None, 0.0
        a, b = (t_from, t_to) if t_to > t_from else (t_to, t_from)
        lat2, lon2 = self._sail(lat, lon, a, b)
        lat2, lon2 = ep_from_dr(lat2, lon2, self.currents_in_force(a, b), a, b)
        course, dist = rhumb_line(lat, lon, lat2, lon2)
        if float(dist) < 1e-9:
            return None, 0.0
        return float(course), float(dist) / ((b - a).total_seconds() / 3600.0)

    def run(self, t_from: datetime, t_to: datetime, lat: float, lon: float) -> tuple[float | None, float]:
        """Course and speed made good from t_from to t_to along the legs (no anchor resets)."""
        if t_to == t_from:
            return None, 0.0
        a, b = (t_from, t_to) if t_to > t_from else (t_to, t_from)
        lat2, lon2 = self._sail(lat, lon, a, b)
        course, dist = rhumb_line(lat, lon, lat2, lon2)
        hours = (b - a).total_seconds() / 3600.0
        if float(dist) < 1e-9:
            return None, 0.0
        return float(course), float(dist) / hours

    # ------------------------------------------------------------ sights

    def sight_row(self, entry, number: int | None = None) -> SightRow:
        """A sight entry as a SightRow, with its DR at the sight's time."""
        s = self._settings_before.get(entry.id, self.settings)
        t = _utc(entry)
        if "dr_lat_deg" in entry.data:
            lat, lon, given, age_h = entry["dr_lat_deg"], entry["dr_lon_deg"], True, 0.0
        else:
            w = self.where(t)
            lat, lon, given = w.lat_deg, w.lon_deg, False
            age_h = w.age.total_seconds() / 3600.0
        leg = self.leg_at(t)

        def pick(name, default):
            return entry[name] if name in entry.data else default

        return SightRow(
            row=number if number is not None else entry.line, utc=t, body=entry["body"],
            hs_deg=entry["hs_deg"], hs_text=entry["hs"], limb=entry.get("limb"),
            index_error_arcmin=pick("index_error_arcmin", s.index_error_arcmin),
            eye_height_m=pick("eye_height_m", s.eye_height_m),
            temperature_c=pick("temperature_c", s.temperature_c),
            pressure_hpa=pick("pressure_hpa", s.pressure_hpa),
            horizon=pick("horizon", s.horizon), dr_lat_deg=lat, dr_lon_deg=lon, dr_given=given,
            course_deg=leg.course_deg if leg else None, speed_kn=leg.speed_kn if leg else None,
            sigma_arcmin=pick("sigma_arcmin", 1.0), note=entry.get("note", ""), dr_age_h=age_h)

    def reduction_view(self, sight_entry) -> "Passage":
        """The passage a logged sight is reduced from: the one without the fixes it went into
        (a sight is reduced from the DR at its time, never from its own fix)."""
        users = frozenset(f.id for f in self.fix_entries if sight_entry.id in f["sight_ids"])
        if not users:
            return self
        views = self.__dict__.setdefault("_views", {})
        if users not in views:
            views[users] = passage_for_sight(self.log, sight_entry.id)
        return views[users]

    def sights(self) -> list[tuple[object, SightRow]]:
        """Every effective sight, in time order, with its row."""
        out = [(e, self.sight_row(e)) for e in self.sight_entries]
        return sorted(out, key=lambda pair: pair[1].utc)

    def sights_since_last_fix(self) -> list[tuple[object, SightRow]]:
        used = {sid for e in self.fix_entries for sid in e["sight_ids"]}
        return [(e, r) for e, r in self.sights() if e.id not in used]

    def fix_from(self, sight_ids: Sequence[str], *, confidence: float = 0.95,
                 keep_doubtful: bool = False):
        """Fix or running fix from the named sights (advanced along the legs to the last one);
        the entries returned are those of the sights used (a doubtful one is left out unless
        `keep_doubtful`: :mod:`nav.plausibility`)."""
        from .workflow import fix_from_rows

        chosen = []
        by_id = {e.id: (e, r) for e, r in self.sights()}
        for sid in sight_ids:
            if sid not in by_id:
                raise NavInputError(f"no sight {sid} in this passage (struck, or not a sight)",
                                    field="sights", example="e0004 e0005 e0007")
            chosen.append(by_id[sid])
        if len(chosen) < 2:
            raise NavInputError("a fix needs two or more sights", field="sights",
                                example="e0004 e0005")
        chosen.sort(key=lambda pair: pair[1].utc)
        rows = [r for _, r in chosen]
        last = rows[-1]
        along_ep = bool(self.currents_in_force(rows[0].utc, last.utc))
        run = self.run_ep if along_ep else self.run      # issue 10: along the EP track
        runs = [run(r.utc, last.utc, r.dr_lat_deg, r.dr_lon_deg) for r in rows]
        result = fix_from_rows(rows, confidence=confidence, runs=runs,
                               keep_doubtful=keep_doubtful, names=[e.id for e, _ in chosen])
        return result, [chosen[i][0] for i in result.used]

    # ------------------------------------------------------------ for plots and export

    def track_points(self, step: timedelta = timedelta(hours=1)):
        """The DR track as time-ordered (utc, lat, lon, basis) points: every anchor, plus the DR
        each `step` between anchors and at every change of leg."""
        if not self.anchors:
            return []
        times = set(self._anchor_times) | {leg.utc for leg in self.legs}
        t0 = self.anchors[0].utc
        last = max([self.anchors[-1].utc] + [e_utc for e_utc in
                                              (_utc(e) for e in self.sight_entries)])
        t = t0
        while t < last:
            times.add(t)
            t += step
        times.add(last)
        out = []
        for t in sorted(x for x in times if x >= t0):
            w = self.where(t)
            out.append((t, w.lat_deg, w.lon_deg, w.basis if w.age == timedelta(0) else "dr"))
        return out


    def dr_resets(self):
        """Where each anchor after the first reset the DR: (utc, lat, lon) of the DR carried to
        the anchor's time from the anchor before it, along the legs. The plot draws the step
        from there to the anchor as a jump, not as track sailed."""
        out = []
        for prev, a in zip(self.anchors, self.anchors[1:]):
            lat, lon = self._sail(prev.lat_deg, prev.lon_deg, prev.utc, a.utc)
            out.append((a.utc, lat, lon))
        return out


def now_utc() -> datetime:
    return datetime.now(UTC).replace(microsecond=0)


# ---------------------------------------------------------------- the passage as it stood

class _EntriesView:
    """Some of the effective entries of a log (a strike or correction logged later is applied),
    for a Passage rebuilt from them."""

    def __init__(self, log, keep):
        self.header = log.header
        self._entries = [e for e in log.effective_entries() if keep(e)]

    def effective_entries(self, kind: str | None = None):
        return [e for e in self._entries if kind is None or e.kind == kind]


def passage_before(passage: Passage, entry_id: str) -> Passage:
    """The passage as it stood just before `entry_id` was logged: its DR knows only the anchors,
    legs and settings logged earlier. Replaying a stored fix with it reproduces the fix as it was
    computed (the fix's own anchor is not yet there to reset the DR of its sights)."""
    if passage.log.entry_by_id(entry_id) is None:
        raise NavInputError(f"no entry {entry_id} in this log", field="id", example="e0012")
    limit = int(entry_id[1:])
    return Passage(_EntriesView(passage.log, lambda e: int(e.id[1:]) < limit))


def passage_for_sight(log, sight_id: str) -> Passage:
    """The passage without the fixes that used `sight_id`: a sight is reduced from the DR at its
    time, never from a fix it went into."""
    def keep(e):
        return not (e.kind == "fix" and sight_id in e["sight_ids"])

    return Passage(_EntriesView(log, keep))
