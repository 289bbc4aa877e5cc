"""Set and drift: the current in force, the estimated position (EP), the current a fix reveals.

Terms as the trade keeps them (common practice, no source):

- the DR is worked from the last fix (or a given position) by the course steered and the speed
  through the water alone;
- the EP is the DR with the current allowed for: the vessel moves by the vector sum of its own
  way and the current's set (the direction the water flows *toward*, degrees true) and drift
  (knots);
- after a fix, the current experienced since the previous fix is the displacement of the fix from
  the DR run since then, divided by the time between the two fixes: its direction is the set, its
  rate the drift.

Pure: no printing, no disk.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Sequence

from .errors import NavInputError
from .sailing import advance_position, rhumb_line

MIN_HOURS = 0.25        # below a quarter of an hour the displacement says little of a current


@dataclass(frozen=True)
class Current:
    set_deg: float
    drift_kn: float


@dataclass(frozen=True)
class SetDrift:
    """The current a fix reveals: set, drift, from the fix at ``since_utc`` to ``utc``."""

    set_deg: float
    drift_kn: float
    since_utc: datetime
    utc: datetime
    dist_nmi: float
    hours: float


def set_drift(fix_lat_deg: float, fix_lon_deg: float, dr_lat_deg: float, dr_lon_deg: float,
              since_utc: datetime, utc: datetime) -> SetDrift:
    """The set and drift that carried the vessel from its DR to the fix over the time since the
    previous fix (rhumb line from the DR to the fix, divided by the hours between)."""
    hours = (utc - since_utc).total_seconds() / 3600.0
    if hours < MIN_HOURS:
        raise NavInputError(f"only {hours * 60:.0f} min since the previous fix: too short to "
                            "measure a current", field="fix",
                            example="fixes some hours apart")
    course, dist = rhumb_line(dr_lat_deg, dr_lon_deg, fix_lat_deg, fix_lon_deg)
    return SetDrift(set_deg=float(course) % 360.0, drift_kn=float(dist) / hours,
                    since_utc=since_utc, utc=utc, dist_nmi=float(dist), hours=hours)


def ep_from_dr(dr_lat_deg: float, dr_lon_deg: float, currents: Sequence[tuple[datetime, Current]],
               start_utc: datetime, utc: datetime) -> tuple[float, float]:
    """The EP at `utc`: the DR (run since `start_utc`, the last fix or given position) moved by
    every current in force since then. `currents`: (from_utc, Current) in time order; a current
    holds until the next one; Current(0, 0) ends one."""
    lat, lon = float(dr_lat_deg), float(dr_lon_deg)
    for k, (t_from, cur) in enumerate(currents):
        t_to = currents[k + 1][0] if k + 1 < len(currents) else utc
        a, b = max(t_from, start_utc), min(t_to, utc)
        hours = (b - a).total_seconds() / 3600.0
        if hours > 0.0 and cur.drift_kn > 0.0:
            lat, lon = advance_position(lat, lon, cur.set_deg, cur.drift_kn, hours)
            lat, lon = float(lat), float(lon)
    return lat, lon


def row_currents(rows) -> list[Current | None]:
    """The current in force at each batch row: a row's ``set_deg``/``drift_kn`` cells hold from
    that row on, like course and speed. Both or neither must be given in a row."""
    from .fields import SIGHT_FIELD_BY_NAME

    out: list[Current | None] = []
    now: Current | None = None
    for r in rows:
        s_text, d_text = r.cells.get("set_deg"), r.cells.get("drift_kn")
        if (s_text is None) != (d_text is None):
            raise NavInputError("give set_deg and drift_kn together", field="set_deg",
                                example="set_deg 210, drift_kn 0.8").at_row(r.row)
        if s_text is not None:
            now = Current(SIGHT_FIELD_BY_NAME["set_deg"].parse(s_text, "set_deg"),
                          SIGHT_FIELD_BY_NAME["drift_kn"].parse(d_text, "drift_kn"))
            if now.drift_kn == 0.0:
                now = None
        out.append(now)
    return out
