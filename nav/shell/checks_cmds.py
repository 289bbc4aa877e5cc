"""Shell commands for the sights themselves, the current and the watch (issue 10).

- ``current SET DRIFT [at TIME] [note TEXT]``: a current in force from a time on, like a course
  change (``current 0 0`` ends it); ``current apply``: the set and drift the latest fix revealed,
  from that fix on; ``current`` alone: what is in force and the EP beside the DR.
- ``average [ID ...]``: log the averaged sight of a run (default: the latest run) as a new sight
  entry naming its sources; nothing is rewritten.
- ``watch READING at REFERENCE [by signal|gps|reference]``: log a comparison of the watch with a
  reference time; ``watch`` alone: the comparisons, the error and the daily rate.

And the hooks the navigation handlers call: the run check after a sight, the set and drift after
a fix, the EP beside the DR in ``where``, the averaged sight offered in place of its run in a fix.
Each handler computes first, appends to the log, then confirms.
"""

from __future__ import annotations

from datetime import datetime, timedelta

from ..errors import NavInputError
from ..logbook import Entry
from .parse import Request
from .times import now_time, parse_time_options
from .words import split_words

AVERAGE_TAG = "average of "
RUN_TAG = "; run "
REFERENCES = {"signal": "time signal", "gps": "gps", "reference": "reference"}


# ---------------------------------------------------------------- current

def parse_current(args, line, ctx) -> Request:
    pos, opts = split_words(line, args, ("at", "zt", "note"), command="current")
    words = [p.text for p in pos]
    if not words:
        return Request("current", args={"show": True})
    if words == ["apply"]:
        return Request("current", args={"apply": True})
    if len(words) != 2:
        raise NavInputError("give the set (degrees true, toward) and the drift (knots)",
                            field="current", example="current 210 0.8 at 18:00")
    from ..fields import SIGHT_FIELD_BY_NAME

    set_deg = SIGHT_FIELD_BY_NAME["set_deg"].parse(words[0], "set")
    drift = SIGHT_FIELD_BY_NAME["drift_kn"].parse(words[1], "drift")
    t = parse_time_options(opts, ctx) or now_time(ctx)
    entry = {"kind": "current", "utc": t.utc, "time_text": t.text, "set": words[0],
             "set_deg": float(set_deg), "drift": words[1], "drift_kn": float(drift),
             "source": "entered"}
    if opts.get("note"):
        entry["note"] = opts["note"]
    return Request("current", entry=entry, time=t)


def _dr_ep_lines(st, utc) -> list[str]:
    from ..render_checks import dr_ep_text

    w = st.passage.where(utc)
    ep = st.passage.ep(utc)
    return [f"  {dr_ep_text((w.lat_deg, w.lon_deg), ep)}" + ("" if ep else "  (no current in force)")]


def set_drift_since_last_fix(passage, fix):
    """The set and drift a new fix reveals: its displacement from the DR run since the previous
    fix (None when the DR at its time does not run from a fix, or too little time passed)."""
    from ..current import set_drift

    try:
        w = passage.where(fix.utc)
    except NavInputError:
        return None
    if w.anchor.basis not in ("fix", "running fix") or w.anchor.utc >= fix.utc:
        return None
    try:
        return set_drift(fix.lat_deg, fix.lon_deg, w.lat_deg, w.lon_deg, w.anchor.utc, fix.utc)
    except NavInputError:
        return None


def latest_set_drift(passage):
    """(set_drift dict, fix entry) of the latest fix, or None when it carries none."""
    fixes = sorted(passage.fix_entries, key=lambda e: e["utc"])
    if not fixes or "set_drift" not in fixes[-1].data:
        return None
    return fixes[-1]["set_drift"], fixes[-1]


def run_current(st, req) -> None:
    from ..timekeeping import parse_utc

    if req.args.get("show"):
        cur = st.passage.currents()
        if not cur:
            st.say("no current entered; `current SET DRIFT at TIME` enters one")
        else:
            t, c = cur[-1]
            st.say(f"current in force from {t:%Y-%m-%d %H:%M} UTC: set {c.set_deg:05.1f}\u00b0, "
                   f"drift {c.drift_kn:g} kn")
        try:
            st.say(*_dr_ep_lines(st, st.now()))
        except NavInputError as err:
            st.say(f"  position: {err.reason}")
        return
    if req.args.get("apply"):
        found = latest_set_drift(st.passage)
        if found is None:
            raise NavInputError("the latest fix measured no set and drift (it needs a fix "
                                "before it, and the DR run from that fix)", field="current",
                                example="current 210 0.8 at 18:00")
        sd, fix_e = found
        entry = {"kind": "current", "utc": fix_e["utc"], "time_text": "from the fix",
                 "set": f"{sd['set_deg']:.1f}", "set_deg": round(sd["set_deg"], 1) % 360.0,
                 "drift": f"{sd['drift_kn']:.2f}", "drift_kn": round(sd["drift_kn"], 2),
                 "source": f"measured: fix {fix_e.id} against the DR since {sd['since_utc']}"}
        e = st.append(entry)
        st.say(f"logged {e.id}: current set {entry['set_deg']:05.1f}\u00b0, drift "
               f"{entry['drift_kn']:g} kn, from {parse_utc(fix_e['utc']):%H:%M} UTC on")
        return
    e = st.append(req.entry)
    ended = req.entry["drift_kn"] == 0
    st.say(f"logged {e.id}: " + ("no current from " if ended else
                                 f"current set {req.entry['set_deg']:05.1f}\u00b0, drift "
                                 f"{req.entry['drift_kn']:g} kn from ") + req.time.explain)
    st.say("  the EP is the DR with this current allowed for from then on (`where`, `current`)")


def entry_text(kind: str, d) -> str:
    """One line for the log listing: a current or a watch comparison."""
    from .times import watch_text

    if kind == "current":
        return (f"current set {d['set_deg']:05.1f}\u00b0, drift {d['drift_kn']:g} kn from "
                f"{d['utc'][11:16]} ({d.get('source', 'entered')})")
    return f"watch {watch_text(d['watch_error_s'])} against the {d['reference']}"


# ---------------------------------------------------------------- hooks

def where_lines(st, utc) -> list[str]:
    """The EP beside the DR for `where` (nothing when no current is in force)."""
    from ..angles import format_lat, format_lon

    try:
        ep = st.passage.ep(utc)
    except NavInputError:
        return []
    if ep is None:
        return []
    return [f"  EP           {format_lat(ep[0])}  {format_lon(ep[1])}  (DR + the current in force)"]


def ep_track(passage, track) -> list:
    """The EP track over the span of the DR track: hourly, at every track point and at every
    change of current (empty when no current is ever in force)."""
    from ..export import ExportPoint

    if not track or not passage.currents():
        return []
    t0, t1 = track[0].utc, track[-1].utc
    times = {p.utc for p in track} | {t for t, _ in passage.currents() if t0 <= t <= t1}
    t = t0
    while t < t1:
        times.add(t)
        t += timedelta(hours=1)
    out, any_ep = [], False
    for t in sorted(times):
        try:
            w = passage.where(t)
            ep = passage.ep(t)
        except NavInputError:
            continue
        any_ep = any_ep or ep is not None
        lat, lon = ep if ep is not None else (w.lat_deg, w.lon_deg)
        out.append(ExportPoint(t, lat, lon, "dr", "EP"))
    return out if any_ep else []


def after_fix(st, sd) -> None:
    """Show the set and drift since the previous fix and offer to apply it."""
    from ..render_checks import set_drift_text

    if sd is None:
        return
    st.say(f"  current      {set_drift_text(sd)}",
           "  to allow for it from this fix on: `current apply` (logged)")


def fix_ids_with_averages(st, ids: list[str]) -> list[str]:
    """Offer each logged averaged sight in place of its sources (the shell asks first)."""
    chosen = list(ids)
    for e in st.passage.sight_entries:
        src = e.get("source", "") or ""
        if e.id not in chosen or not src.startswith(AVERAGE_TAG):
            continue
        used, _, run = src[len(AVERAGE_TAG):].partition(RUN_TAG)
        sources = (run or used).split()            # the whole run, the shots left out too
        overlap = [s for s in sources if s in chosen]
        if not overlap:
            continue
        answer = st.ask(f"use the averaged sight {e.id} in place of {' '.join(overlap)}? "
                        "(yes/no)", "yes", _yes_no, None)
        if _yes_no(answer):
            chosen = [s for s in chosen if s not in overlap]
            st.say(f"  {e.id} replaces {' '.join(overlap)} in this fix")
        else:
            chosen = [s for s in chosen if s != e.id]
            st.say(f"  {e.id} left out; {' '.join(overlap)} kept")
    return chosen


def _yes_no(text: str) -> bool:
    t = text.strip().lower()
    if t in ("y", "yes"):
        return True
    if t in ("n", "no"):
        return False
    raise NavInputError(f"'{text}' is not yes or no", field="answer", example="yes")


def _runs(st):
    """The runs among the logged sights: (runs, entries in row order)."""
    from ..series import check_runs

    pairs = [(e, r) for e, r in st.passage.sights()
             if not (e.get("source", "") or "").startswith(AVERAGE_TAG)]
    rows = [r for _, r in pairs]
    if len(rows) < 3:
        return (), []
    from dataclasses import replace

    numbered = [replace(r, row=i) for i, r in enumerate(rows)]
    return check_runs(numbered), [e for e, _ in pairs]


def after_sight(st, entry: Entry) -> None:
    """Check the run the new sight belongs to, when it makes one."""
    from ..render_checks import series_lines

    try:
        runs, entries = _runs(st)
    except NavInputError:
        return
    for run in runs:
        ids = [entries[i].id for i in run.indices]
        if entry.id not in ids:
            continue
        lines = series_lines(run, {i: entries[i].id for i in run.indices})
        st.say(*lines, f"  to log the averaged sight for fixes: `average {' '.join(ids)}`")


def parse_average(args, line, ctx) -> Request:
    return Request("average", args={"ids": [a.text for a in args]})


def run_average(st, req) -> None:
    from .entries import sight_summary

    runs, entries = _runs(st)
    ids = req.args["ids"]
    pick = None
    for run in runs:
        run_ids = [entries[i].id for i in run.indices]
        if not ids or set(ids) == set(run_ids):
            pick = (run, run_ids)
    if pick is None:
        raise NavInputError("no run of three or more sights of one body within 15 min with "
                            "these ids" if ids else "no run of sights to average",
                            field="average", example="average e0004 e0005 e0006")
    run, run_ids = pick
    used = [entries[i].id for i, s in zip(run.indices, run.shots) if not s.flagged]
    first = entries[run.indices[0]]
    row = run.averaged_row
    entry = {"kind": "sight", "body": first["body"], "utc": row.utc, "time_source": "utc",
             "time_text": "averaged", "hs": row.hs_text, "hs_deg": row.hs_deg,
             "source": AVERAGE_TAG + " ".join(used) + RUN_TAG + " ".join(run_ids),
             "note": f"averaged sight of the run {' '.join(run_ids)}"
                     + (f"; left out {' '.join(set(run_ids) - set(used))}"
                        if len(used) < len(run_ids) else "")}
    for k in ("limb", "index_error", "index_error_arcmin", "eye_height", "eye_height_m",
              "temperature", "temperature_c", "pressure", "pressure_hpa", "horizon",
              "sigma_arcmin"):
        if k in first.data:
            entry[k] = first[k]
    e = st.append(entry)
    st.say(f"logged {e.id}: averaged sight of {sight_summary(e.data)} from {' '.join(used)}",
           "  a fix from these sights asks before it uses it in place of the run")


# ---------------------------------------------------------------- watch

def parse_watch(args, line, ctx) -> Request:
    pos, opts = split_words(line, args, ("at", "by", "note"), command="watch")
    if not pos and not opts:
        return Request("watch", args={"show": True})
    if len(pos) != 1 or "at" not in opts:
        raise NavInputError("give the watch's reading and the reference time it was taken at",
                            field="watch", example="watch 12:00:04 at 12:00:00 by signal")
    ref = parse_time_options({"at": opts["at"]}, ctx)
    by = REFERENCES.get((opts.get("by") or "signal").strip().lower())
    if by is None:
        raise NavInputError(f"'{opts['by']}' is not a reference", field="by",
                            example="signal, gps or reference")
    from ..timekeeping import parse_naive_time

    zd_h = float(ctx.settings.zone_description_h)
    zt_ref = ref.utc.replace(tzinfo=None) - timedelta(hours=zd_h)
    reading = parse_naive_time(f"{zt_ref:%Y-%m-%d} {pos[0].text}", "watch")
    err_s = (reading - zt_ref).total_seconds()
    err_s -= round(err_s / 86400.0) * 86400.0          # the reading nearest the reference
    from ..watch import MAX_ERROR_S

    if abs(err_s) > MAX_ERROR_S:
        raise NavInputError(f"the watch differs from the reference by {err_s:+.0f} s: is the "
                            "zone set right (`set zone`)?", field="watch",
                            example="watch 12:00:04 at 12:00:00 by signal")
    entry = {"kind": "watch_check", "utc": ref.utc, "watch_reading": pos[0].text,
             "watch_error_s": round(err_s, 3), "reference": by}
    if opts.get("note"):
        entry["note"] = opts["note"]
    return Request("watch", entry=entry, time=ref)


def passage_watch_rate(passage):
    """The watch's error and rate from the logged comparisons (None with fewer than two or
    when they span too little time)."""
    from ..timekeeping import parse_utc
    from ..watch import Comparison, watch_rate

    cs = [Comparison(parse_utc(e["utc"]), e["watch_error_s"], e["reference"])
          for e in getattr(passage, "watch_checks", [])]
    if len(cs) < 2:
        return None
    try:
        return watch_rate(cs)
    except NavInputError:
        return None


def run_watch(st, req) -> None:
    from .times import watch_text

    if not req.args.get("show"):
        e = st.append(req.entry)
        st.say(f"logged {e.id}: watch {watch_text(req.entry['watch_error_s'])} against the "
               f"{req.entry['reference']} at {req.time.explain}")
    checks = st.passage.watch_checks
    if req.args.get("show"):
        if not checks:
            st.say("no watch comparison logged; `watch 12:00:04 at 12:00:00 by signal` logs one")
            return
        for c in checks:
            st.say(f"  {c['utc'][:19].replace('T', ' ')} UTC  {watch_text(c['watch_error_s'])}"
                   f"  ({c['reference']})")
    rate = passage_watch_rate(st.passage)
    if rate is None:
        if len(checks) >= 2:
            st.say("  no rate yet: the comparisons must span 12 h or more")
        elif checks:
            st.say("  one comparison: a rate needs two or more, a day or so apart")
        return
    sig = (f" \u00b1 {rate.rate_sigma_s_per_day:.2f}" if rate.rate_sigma_s_per_day is not None
           else "")
    days = (st.now() - rate.epoch).total_seconds() / 86400.0
    st.say(f"  rate {rate.rate_s_per_day:+.2f}{sig} s/day "
           f"({'gaining' if rate.rate_s_per_day > 0 else 'losing'}) from {rate.n_comparisons} "
           f"comparisons; error now {watch_text(round(rate.error_at(st.now()), 1))}"
           f" ({days:.1f} d since the last comparison)",
           *(["  ! more than a week since the last comparison: compare the watch again"]
             if days > 7 else []),
           "  sights timed `zt ...` take error + rate \u00d7 days since the last comparison",
           *[f"  ! {w}" for w in rate.warnings])


def watch_error_now(ctx, utc_guess: datetime):
    """(error_s, explanation) from the logged rate, or None when there is no rate."""
    rate = passage_watch_rate(getattr(ctx, "passage", None))
    if rate is None:
        return None
    e = rate.error_at(utc_guess)
    days = (utc_guess - rate.epoch).total_seconds() / 86400.0
    return e, (f"error {rate.error_s:+.1f} s at the last comparison, rate "
               f"{rate.rate_s_per_day:+.2f} s/day \u00d7 {days:.2f} d")
