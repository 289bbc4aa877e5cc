"""Several fixes in one batch file, the DR restarted at each, the current each one reveals.

The rows of a batch file that share a ``fix`` label form one fix, in file order; without the
column the whole file is one fix. The DR restarts at each fix, as the trade does: the rows of the
next fix take their DR from the previous fix, run on by the course and speed in force (a DR typed
in such a row is set aside, and a note says so). Where a current is in force (``set_deg``,
``drift_kn`` from a row on), each row also has an EP, the DR with the current allowed for, and
the earlier sights of a running fix are advanced along the EP track (the result says so).

After each fix but the first, the set and drift experienced since the previous fix is the
displacement of the fix from the DR run since then (:func:`nav.current.set_drift`).

Pure: no printing, no disk.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Sequence

from .current import Current, SetDrift, row_currents, set_drift
from .errors import NavInputError
from .sailing import advance_position
from .sightfile import SightRow
from .workflow import FixResult, fix_from_rows, reduce_rows, run_between


@dataclass(frozen=True)
class ChainFix:
    label: str
    result: FixResult
    ep: tuple[float, float] | None          # EP at the fix time (None: no current in force)
    set_drift: SetDrift | None              # since the previous fix (None for the first)
    along_ep: bool                          # earlier lines advanced along the EP track
    notes: tuple[str, ...]
    rows: tuple[SightRow, ...] = ()         # the fix's rows, DRs as resolved (all, used or not)


def split_fixes(rows: Sequence[SightRow]) -> list[tuple[str, tuple[SightRow, ...]]]:
    """(label, rows) per fix, in file order. In a file that labels its fixes, a row with a
    blank label is in no fix (see :func:`unlabelled_rows`); raises on a label that comes back
    after another fix began."""
    labels = [r.cells.get("fix", "") for r in rows]
    if not any(labels):
        return [("", tuple(rows))]
    groups: list[tuple[str, list[SightRow]]] = []
    for r, lab in zip(rows, labels):
        if not lab:
            continue
        if groups and groups[-1][0] == lab:
            groups[-1][1].append(r)
        elif any(g[0] == lab for g in groups):
            raise NavInputError(f"rows of fix '{lab}' resume after another fix began",
                                field="fix", example="keep the rows of one fix together")\
                .at_row(r.row)
        else:
            groups.append((lab, [r]))
    return [(lab, tuple(g)) for lab, g in groups]


def unlabelled_rows(rows: Sequence[SightRow]) -> list[SightRow]:
    """The rows in no fix: a blank ``fix`` label in a file that labels its fixes. They are
    reduced (``nav reduce``) and their course, speed and current carry the DR on, but no fix
    uses their lines."""
    labels = [r.cells.get("fix", "") for r in rows]
    if not any(labels):
        return []
    return [r for r, lab in zip(rows, labels) if not lab]


def _advance(lat, lon, course, speed, hours, cur: Current | None):
    if hours <= 0.0:
        return lat, lon
    set_deg, drift = (cur.set_deg, cur.drift_kn) if cur else (None, 0.0)
    if not speed and not drift:
        return lat, lon
    la, lo = advance_position(lat, lon, course or 0.0, speed or 0.0, hours, set_deg=set_deg,
                              drift_kn=drift)
    return float(la), float(lo)


def _chain(rows, currents, start, notes):
    """Rows with DRs run from `start` (lat, lon, utc, course, speed, current) or, without a start,
    from their own given DRs; and each row's EP."""
    out, eps, set_aside = [], [], []
    p = ep = None
    t = course = speed = cur = None
    if start is not None:
        lat, lon, t, course, speed, cur = start
        p = ep = (lat, lon)
    for r, c in zip(rows, currents):
        if start is None and r.dr_given:
            p = ep = (r.dr_lat_deg, r.dr_lon_deg)
        elif p is None:
            p = ep = (r.dr_lat_deg, r.dr_lon_deg)
        else:
            hours = (r.utc - t).total_seconds() / 3600.0
            p = _advance(*p, course, speed, hours, None)
            ep = _advance(*ep, course, speed, hours, cur)
            if r.dr_given and start is not None:
                set_aside.append(r.row)
        extra = {}
        if start is not None:           # the DR's age counts from the fix it restarted at
            extra["dr_age_h"] = (r.utc - start[2]).total_seconds() / 3600.0
        out.append(replace(r, dr_lat_deg=p[0], dr_lon_deg=p[1],
                           dr_given=r.dr_given and not start, **extra))
        eps.append(ep)
        t, course, speed, cur = r.utc, r.course_deg, r.speed_kn, c
    if set_aside:
        notes.append("row" + ("s " if len(set_aside) > 1 else " ")
                     + ", ".join(map(str, set_aside)) + ": the DR typed there is set aside; "
                     "the DR restarts at the previous fix")
    return out, eps, (t, course, speed, cur)


def chain_fixes(rows: Sequence[SightRow], *, confidence: float = 0.95,
                reductions=None, keep_doubtful: bool = False) -> list[ChainFix]:
    """Every fix of a batch file, in order (see the module docstring). `reductions`: the rows
    already reduced from their own DRs, used when the file is one fix (nothing restarted)."""
    rows = tuple(rows)
    currents = row_currents(rows)
    by_row = {id(r): c for r, c in zip(rows, currents)}
    out: list[ChainFix] = []
    start = None
    position = {id(r): k for k, r in enumerate(rows)}
    loose = {id(r) for r in unlabelled_rows(rows)}
    done = 0                    # rows before this index are already in the DR chain
    for label, group in split_fixes(rows):
        if len(group) < 2:
            raise NavInputError(f"fix '{label}' has only one sight; a fix needs two or more",
                                field="fix", example="two or more rows per label")\
                .at_row(group[0].row)
        notes: list[str] = []
        # the DR runs through every row up to the fix's last, those in no fix included (their
        # course, speed and current carry it on), but the fix takes only its own rows
        span = rows[done:position[id(group[-1])] + 1]
        done += len(span)
        skipped = [r for r in span if id(r) in loose]
        if skipped:
            notes.append("row" + ("s " if len(skipped) > 1 else " ")
                         + ", ".join(str(r.row) for r in skipped)
                         + ": blank fix label, in no fix (reduced, their lines not used)")
        cur_all = [by_row[id(r)] for r in span]
        res_all, eps_all, state = _chain(span, cur_all, start, notes)
        keep = [k for k, r in enumerate(span) if id(r) not in loose]
        resolved, eps = [res_all[k] for k in keep], [eps_all[k] for k in keep]
        cur = [cur_all[k] for k in keep]
        any_current = any(c is not None for c in cur) or (start is not None and start[5])
        runs = None
        if any_current:
            last = replace(resolved[-1], dr_lat_deg=eps[-1][0], dr_lon_deg=eps[-1][1])
            runs = [run_between(replace(r, dr_lat_deg=e[0], dr_lon_deg=e[1]), last)
                    for r, e in zip(resolved, eps)]
        red = reductions if (reductions is not None and start is None
                             and len(group) == len(rows)) else reduce_rows(resolved)
        result = fix_from_rows(resolved, confidence=confidence, reductions=red, runs=runs,
                               keep_doubtful=keep_doubtful)
        along = bool(any_current and result.fix.kind == "running fix")
        if along:
            notes.append("the earlier lines were advanced along the EP track (the current in "
                         "force allowed for)")
        sd = None
        if out:
            prev = out[-1].result.fix
            sd = set_drift(result.fix.lat_deg, result.fix.lon_deg, result.dr_lat_deg,
                           result.dr_lon_deg, prev.utc, result.fix.utc)
        out.append(ChainFix(label=label, result=result,
                            ep=eps[-1] if any_current else None, set_drift=sd, along_ep=along,
                            notes=tuple(notes), rows=tuple(resolved)))
        _, course, speed, cur_now = state
        f = result.fix
        # the next fix's DR starts here, at the fix, with the course, speed and current in force
        start = (f.lat_deg, f.lon_deg, f.utc, course, speed, cur_now)
    tail = [r for r in rows[done:] if id(r) in loose]
    if tail and out:
        last = out[-1]
        out[-1] = replace(last, notes=last.notes + (
            "row" + ("s " if len(tail) > 1 else " ") + ", ".join(str(r.row) for r in tail)
            + ": blank fix label after the last fix, in no fix (reduced, their lines not used)",))
    return out
