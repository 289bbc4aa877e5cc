"""Is a sight, or a fix, what its DR allows? And if not, which ordinary slip explains it?

A navigator steers by the fix, so a sight that cannot be right must not pull it quietly. This
module is the one place that judges it, for the batch commands and the shell alike; it computes
nothing new about the sky (it calls the reduction chain) and never prints.

The rule: how far the truth may be from a DR
--------------------------------------------
    allowed_nmi = DR_BASE_NMI + DR_DRIFT_KN × age_h

``age_h`` is the time since the DR was last set from a position: a DR typed in a batch row, a
``dr`` entry with a position or a fix in a passage log; it is carried on by course and speed
since. ``DR_BASE_NMI`` = 50 nmi covers the error a DR already carries when it is typed (its own
age is unknown to nav: a day at an unknown 2 kn is 48 nmi) together with the sight's other
errors; ``DR_DRIFT_KN`` = 2 kn is a generous figure for the current and leeway that a DR leaves
out (open-ocean currents run at 0.5 to 2 kn, the strongest boundary currents faster: common
practice, no source). Both are deliberately wide: the rule is for slips (a hemisphere, a zone, a
date, a body), which put a position hundreds or thousands of miles off, not for a careful
navigator's ordinary error.

- A sight whose intercept is beyond ``allowed_nmi`` is *doubtful*: probably wrong. It is said
  why (the body below the horizon at the DR, or the intercept too long) and left out of fixes
  unless the user asks to keep it. Where a slip explains it, the slip is named: zone time typed
  as UTC (ZD from the DR's longitude, with the Hc it would have), the time 12 hours out (AM for
  PM), the date a day out, the DR's
  latitude or longitude in the wrong hemisphere, or another body that fits.
- A fix farther from its DR than ``allowed_nmi`` gets a warning naming the distance.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import timedelta
from typing import Sequence

import numpy as np

from .angles import format_dm, format_lat, format_lon
from .errors import NavInputError

DR_BASE_NMI = 50.0
DR_DRIFT_KN = 2.0
MAX_BODIES_NAMED = 3
MAX_SEARCHED = 20                    # doubtful sights whose slips are searched (each ~70 reductions)
FAR_FROM_DR = "FAR FROM DR"          # the head of the fix's warning (the renderers find it by it)
SUN_TWILIGHT_LIMIT_DEG = -6.0     # civil twilight's end; above it (Sun below the horizon) only
                                 # the brightest stars show, with the Sun up none (common
                                 # practice, no source; nav's demo dusk stars begin at -5.4°)
RULE_TEXT = (f"{DR_BASE_NMI:g} nmi + {DR_DRIFT_KN:g} kn \u00d7 the hours since the DR was set "
             "from a position")


def allowed_nmi(dr_age_h: float) -> float:
    """How far the truth may lie from a DR of this age (hours), by the module's rule."""
    return DR_BASE_NMI + DR_DRIFT_KN * max(0.0, float(dr_age_h))


def _allowed_text(dr_age_h: float) -> str:
    return f"the {allowed_nmi(dr_age_h):.0f} nmi its DR ({max(0.0, dr_age_h):.1f} h old) allows"


@dataclass(frozen=True)
class Doubt:
    """Why one sight is probably wrong, and the slips that would explain it."""

    index: int                   # the sight's place in the rows given
    reason: str
    slips: tuple[str, ...]
    searched: bool = True        # False: too many doubtful sights to search them all

    def text(self) -> str:
        out = self.reason
        if self.slips:
            out += "; it fits if " + "; or if ".join(self.slips)
        elif not self.searched:
            out += f" (slips searched for the first {MAX_SEARCHED} doubtful sights only)"
        else:
            out += "; no single slip (zone time as UTC, 12 hours out, a day out, a hemisphere, " \
                   "another body) " \
                   "explains it: check Hs, the time and the DR"
        return out


    def as_dict(self) -> dict:
        return {"reason": self.reason, "slips": list(self.slips)}


class DoubtfulSightsError(NavInputError):
    """Too few sights left once the doubtful ones are left out; `notes` says why, one a sight."""

    def __init__(self, message: str, notes, **kw):
        super().__init__(message, **kw)
        self.notes = tuple(notes)


def zone_description_of(lon_deg: float) -> int:
    """The nautical ZD of a longitude: whole hours, west +, 15° a zone (UTC = ZT + ZD)."""
    return int(np.clip(np.round(-float(lon_deg) / 15.0), -12, 12))


def _reduce_each(rows) -> list[tuple[float, float] | None]:
    """(intercept_nmi, hc_deg) of each row, None where the chain refuses the variant."""
    from .workflow import reduce_rows

    if not rows:
        return []
    try:
        red = reduce_rows(rows)
        return list(zip(np.atleast_1d(red.intercept_nmi).tolist(),
                        np.atleast_1d(red.hc_deg).tolist()))
    except NavInputError:
        out = []
        for r in rows:
            try:
                red = reduce_rows([r])
                out.append((float(np.atleast_1d(red.intercept_nmi)[0]),
                            float(np.atleast_1d(red.hc_deg)[0])))
            except NavInputError:
                out.append(None)
        return out


def _variants(row) -> list[tuple[str, object]]:
    """(what the slip was, the row as it would be without it)."""
    from .almanac import body_names

    out: list[tuple[str, object]] = []
    zd = zone_description_of(row.dr_lon_deg)
    if zd:
        utc = row.utc + timedelta(hours=zd)
        out.append((f"the time was zone time typed as UTC: with ZD {zd:+d} (from the DR "
                    f"longitude, UTC = ZT + ZD) the sight's UTC is {utc:%Y-%m-%d %H:%M:%S}",
                    replace(row, utc=utc)))
    for hours in (-12, 12):             # the 12-hour slip: a morning time taken for evening
        utc = row.utc + timedelta(hours=hours)
        out.append((f"the time is 12 hours out (AM/PM): at {utc:%Y-%m-%d %H:%M:%S} UTC",
                    replace(row, utc=utc)))
    for days in (-1, 1):
        utc = row.utc + timedelta(days=days)
        out.append((f"the date is a day {'early' if days > 0 else 'late'}: at "
                    f"{utc:%Y-%m-%d %H:%M:%S} UTC", replace(row, utc=utc)))
    if row.dr_lat_deg:
        out.append((f"the DR latitude is in the wrong hemisphere: "
                    f"{format_lat(-row.dr_lat_deg)}", replace(row, dr_lat_deg=-row.dr_lat_deg)))
    if row.dr_lon_deg and abs(row.dr_lon_deg) != 180.0:
        out.append((f"the DR longitude is in the wrong hemisphere: "
                    f"{format_lon(-row.dr_lon_deg)}", replace(row, dr_lon_deg=-row.dr_lon_deg)))
    if row.body not in ("Sun", "Moon"):    # one point of light taken for another
        for name in body_names():
            if name not in (row.body, "Sun", "Moon"):
                out.append((f"the body was {name}", replace(row, body=name, limb=None)))
    return out


def _slips(row, allowed: float) -> tuple[str, ...]:
    variants = _variants(row)
    named, bodies = [], []
    for (what, _), got in zip(variants, _reduce_each([v for _, v in variants])):
        if got is None or abs(got[0]) > allowed:
            continue
        text = f"{what} (Hc {format_dm(got[1])}, intercept {abs(got[0]):.1f} nmi)"
        (bodies if what.startswith("the body was") else named).append((abs(got[0]), text))
    bodies.sort()
    best = min((x for x, _ in named), default=allowed)     # another body only if it fits better
    return tuple(t for _, t in named) + tuple(t for x, t in bodies[:MAX_BODIES_NAMED] if x < best)


def _daylight(row) -> str:
    """For a star: the Sun's altitude at the DR when it was above the twilight limit, else ''."""
    from .almanac import body_almanac, body_kind
    from .reduction import hc_zn

    try:
        if body_kind(row.body) != "star":
            return ""
        sun = body_almanac("Sun", row.utc)
        alt = float(np.atleast_1d(hc_zn(row.dr_lat_deg, float(sun.dec_deg),
                                        float(sun.gha_deg) + row.dr_lon_deg)[0])[0])
    except NavInputError:
        return ""
    if alt <= SUN_TWILIGHT_LIMIT_DEG:
        return ""
    if alt < 0.0:
        return (f"; the Sun was {format_dm(-alt)} below the horizon at the DR then, in civil "
                "twilight (above " + f"{SUN_TWILIGHT_LIMIT_DEG:.0f}°".replace("-", "\u2212")
                + "): only the brightest stars show yet")
    return (f"; the Sun was up, {format_dm(alt)} above the horizon at the DR then: a star is not "
            "shot in daylight (planets and the Moon can be)")


def doubtful_sights(rows: Sequence, reductions) -> tuple[Doubt, ...]:
    """The sights of `rows` (SightRows with their `dr_age_h`) that their DR cannot explain, each
    with its reason and the slips that would explain it. `reductions`: the rows reduced."""
    hc = np.atleast_1d(reductions.hc_deg)
    x = np.atleast_1d(reductions.intercept_nmi)
    ages = np.array([row.dr_age_h for row in rows], dtype=float)
    out = []
    for i in np.flatnonzero(np.abs(x) > DR_BASE_NMI + DR_DRIFT_KN * np.maximum(ages, 0.0)):
        i = int(i)
        row = rows[i]
        allowed = allowed_nmi(row.dr_age_h)
        if hc[i] < 0:
            reason = (f"{row.body} was {format_dm(-float(hc[i]))} below the horizon at the DR at "
                      f"{row.utc:%H:%M:%S} UTC (Hc {format_dm(float(hc[i]))}), yet Hs is "
                      f"{format_dm(row.hs_deg)}")
        else:
            reason = (f"intercept {abs(float(x[i])):.1f} nmi, more than "
                      f"{_allowed_text(row.dr_age_h)}")
        reason += _daylight(row)
        if len(out) < MAX_SEARCHED:
            out.append(Doubt(i, reason, _slips(row, allowed)))
        else:
            out.append(Doubt(i, reason, (), searched=False))
    return tuple(out)


def far_from_dr(dist_nmi: float, dr_age_h: float, what: str = "fix") -> str | None:
    """The warning for a fix `dist_nmi` from a DR `dr_age_h` old, or None within the rule."""
    if dist_nmi <= allowed_nmi(dr_age_h):
        return None
    return (f"{FAR_FROM_DR}: the {what} is {dist_nmi:.1f} nmi from its DR, more than "
            f"{_allowed_text(dr_age_h)}. Check the DR's N/S and E/W, the times (UTC, date) and "
            "the bodies before using it")
