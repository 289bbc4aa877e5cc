"""Handlers of the navigation commands: set, dr/course/speed, sight, fix, where, almanac, note.

A handler gets the shell state and a parsed request; it computes first (so a sight the chain
refuses is never logged), appends to the log, and only then confirms and shows the results.
"""

from __future__ import annotations

import textwrap
from datetime import timedelta
from types import MappingProxyType

from .. import CAUTION
from ..angles import format_arcmin, format_lat, format_lon, norm180
from ..errors import NavInputError
from ..logbook import Entry
from ..timekeeping import format_date_hms, format_hms, parse_utc
from .times import parse_at, parse_zt, passage_time, watch_text, zone_text
from .entries import dr_summary, setting_summary, sight_summary
from .words import OPTIONS
from .common import Cancelled, iso_z, ut1_lines

MAX_WARNING = 200


# ---------------------------------------------------------------- set

def setting_lines(s) -> list[str]:
    from ..corrections import dip_arcmin

    dip = float(dip_arcmin(s.eye_height_m))
    ie = s.index_error_arcmin
    side = "on the arc" if ie > 0 else "off the arc" if ie < 0 else "none"
    return [
        f"  height of eye  {s.eye_height_m:.2f} m" + (f"  (dip {format_arcmin(-dip)})"
                                                    if s.horizon == "sea" else ""),
        f"  index error    {format_arcmin(ie)}  ({side}; correction {format_arcmin(-ie)})",
        f"  watch error    {watch_text(s.watch_error_s)}" +
        ("  (a fast watch is subtracted)" if s.watch_error_s else ""),
        f"  zone           {zone_text(s.zone_description_h)}  (UTC = ZT + ZD)",
        f"  temperature    {s.temperature_c:g} °C",
        f"  pressure       {s.pressure_hpa:g} hPa",
        f"  horizon        {s.horizon}",
    ]


def run_set(st, req) -> None:
    if req.args.get("show"):
        st.say(f"Settings in force ({st.title}):", *setting_lines(st.settings))
        where_now(st)
        return
    e = st.append(req.entry)
    st.say(f"logged {e.id}: setting {setting_summary(e.data)}")
    if "temperature_c" in e.data or "pressure_hpa" in e.data:
        from ..fields import weather_warnings

        s = st.settings
        st.say(*(f"  ! {w}" for w in weather_warnings(s.temperature_c, s.pressure_hpa)))


# ---------------------------------------------------------------- dr, course, speed

def fixes_across(st, t) -> list[str]:
    """The fixes whose sights were run (advanced) across `t`: the first sight before `t`, the
    fix after it. A change of course or speed dated `t` comes after they were worked."""
    out = []
    for f in st.passage.fix_entries:
        times = [parse_utc(x["utc"]) for x in map(st.lookup, f["sight_ids"]) if x is not None]
        if times and min(times) < t < parse_utc(f["utc"]):
            out.append(f.id)
    return out


def run_dr(st, req) -> None:
    e = st.append(req.entry)
    what = "DR" if "lat_deg" in e.data else "course/speed"
    st.say(f"logged {e.id}: {what} {dr_summary(e.data)}", f"  time: {req.time.explain}")
    if "course_deg" in e.data or "speed_kn" in e.data:
        run = fixes_across(st, req.time.utc)
        if run:
            st.say(*st.wrap(f"  caution: {' '.join(run)} {'was' if len(run) == 1 else 'were'} "
                            "run on other legs: their sights were advanced across this time with "
                            "the course and speed logged before; strike and run fix again to "
                            "use this change", "    "))
    leg = st.passage.leg_at(req.time.utc)
    if "lat_deg" in e.data and (leg is None or leg.course_deg is None or not leg.speed_kn):
        st.say("  no course and speed in force: the DR stays here until you give them "
               "(course C speed S)")


# ---------------------------------------------------------------- sight

def _probe(data: dict, **extra) -> Entry:
    """An entry not yet logged, for a trial reduction."""
    d = {k: v for k, v in {**data, **extra}.items() if v is not None}
    d["utc"] = iso_z(d["utc"]) if not isinstance(d["utc"], str) else d["utc"]
    return Entry("e0000", "sight", "", 0, MappingProxyType(d))


def trial_reduce(st, data: dict) -> str | None:
    """Reduce a sight before it is logged; NavInputError if the chain refuses it. Returns None,
    or why it cannot be reduced yet (no DR at its time: Hs -> Ho is then checked at a stand-in
    DR, so that a sight the corrections refuse is still refused)."""
    from ..workflow import reduce_rows

    try:
        row = st.passage.sight_row(_probe(data))
        why = None
    except NavInputError as err:
        row = st.passage.sight_row(_probe(data, dr_lat="0", dr_lat_deg=0.0, dr_lon="0",
                                          dr_lon_deg=0.0))
        why = err.reason
    reduce_rows([row])
    return why


def time_explain(e) -> str:
    """How a logged sight's UTC came from what was typed."""
    t = parse_utc(e["utc"])
    if e.get("time_source") != "watch":
        return f"UTC {format_date_hms(t)}" + (f" (typed {e['time_text']})"
                                                 if e.get("time_text") else "")
    fast = e["watch_error_s"]
    watch = ("watch error none" if not fast else
             f"watch {abs(fast):g} s {'fast, subtracted' if fast > 0 else 'slow, added'}")
    return (f"watch {e.get('time_text', '?')}, {watch}; ZD {zone_text(e['zone_description_h'])}, "
            f"UTC = ZT + ZD = {format_date_hms(t)}")


def reduction_report(st, e) -> list[str]:
    """A logged sight's worked reduction from the DR at its time, with its warnings."""
    from ..render import reduction_lines, sight_title
    from ..workflow import reduce_rows

    passage = st.passage.reduction_view(e)
    row = passage.sight_row(e)
    red = reduce_rows([row]).sight(0)
    if row.dr_given:
        basis = "DR given with the sight"
    else:
        basis = passage.where(row.utc).describe()
    head = sight_title(red).replace("Sight:", f"Sight {e.id}:", 1)
    lines = [head, f"  DR basis     {basis}"]
    lines += reduction_lines(red, eye_height_m=row.eye_height_m,
                             index_error_arcmin=row.index_error_arcmin,
                             temperature_c=row.temperature_c, pressure_hpa=row.pressure_hpa)
    return lines + ut1_lines(st, row.utc)


def show_reduction(st, e) -> None:
    try:
        st.say(*reduction_report(st, e))
    except NavInputError as err:
        st.say(f"  not reduced yet: {err.reason}", f"  enter a DR (dr LAT LON at TIME), then "
               f"`show {e.id}`")


def run_sight(st, req) -> None:
    if req.args.get("guided"):
        return guided_sight(st)
    why = trial_reduce(st, req.entry)
    e = st.append(req.entry)
    st.say(f"logged {e.id}: sight of {sight_summary(e.data)}", f"  time: {req.time.explain}")
    if why:
        st.say(f"  not reduced yet: {why}", f"  enter a DR (dr LAT LON at TIME), then "
               f"`show {e.id}`")
        return
    show_reduction(st, e)
    say_doubt(st, e)
    from .checks_cmds import after_sight

    after_sight(st, e)          # issue 10: the run this sight completes, checked


def say_doubt(st, e) -> None:
    """Say why a logged sight is probably wrong, if its DR cannot explain it (nav.plausibility)."""
    from ..plausibility import doubtful_sights
    from ..workflow import reduce_rows

    try:
        row = st.passage.reduction_view(e).sight_row(e)
        doubts = doubtful_sights([row], reduce_rows([row]))
    except NavInputError:
        return
    for d in doubts:
        st.say(*textwrap.wrap(f"!! doubtful, left out of fixes unless asked (fix ... use-doubtful):"
                              f" {d.text()}", 96, initial_indent="  ", subsequent_indent="     "))


def _answer_time(st, text: str):
    words = text.strip().split(None, 1)
    if words and words[0].lower() in ("zt", "at") and len(words) == 2:
        return (parse_zt if words[0].lower() == "zt" else parse_at)(words[1], st, sight=True)
    return parse_at(text, st, sight=True)


def guided_sight(st) -> None:
    """`sight` alone: one field at a time, defaults from the state; then the one-line form."""
    from ..fields import check_hs_horizon, check_limb, parse_body, parse_limb

    s = st.settings
    st.say("New sight (Enter takes the value in brackets; Ctrl-C gives up):")
    body = parse_body(st.ask("body", None, lambda t: parse_body(t, "body"), "body"))
    parts = ["sight", body]
    limb = None
    if body in ("Sun", "Moon"):
        limb = parse_limb(st.ask("limb", "lower", lambda t: parse_limb(t, "limb"), "limb"))
    check_limb(body, limb)
    when = st.ask("time (UTC HH:MM:SS, ISO 8601, or zt HH:MM:SS on the watch)", None,
                  lambda t: _answer_time(st, t), "time")
    words = when.strip().split(None, 1)
    when_words = when.strip() if words[0].lower() in ("zt", "at") else f"at {when.strip()}"
    def _hs(text):
        check_hs_horizon(OPTIONS["hs"].parse(text, "hs")["hs_deg"], s.horizon)

    hs = st.ask("Hs (34 12.3, 34°12.3′ or 34.205)", None, _hs, None)
    parts.append(hs.strip())
    if limb and limb != "lower":
        parts += ["limb", limb]
    parts.append(when_words)
    ie = st.ask("index error, arcmin, + on the arc", f"{s.index_error_arcmin:+g}",
                lambda t: OPTIONS["ie"].parse(t, "ie"), None)
    if OPTIONS["ie"].parse(ie, "ie")["index_error_arcmin"] != s.index_error_arcmin:
        parts += ["ie", ie.strip()]
    eye = st.ask("height of eye, m (or ft)", f"{s.eye_height_m:g}",
                 lambda t: OPTIONS["eye"].parse(t, "eye"), None)
    if OPTIONS["eye"].parse(eye, "eye")["eye_height_m"] != s.eye_height_m:
        parts += ["eye", eye.strip()]
    note = st.ask("note", "", None, "text").strip()
    if note:
        parts += ["note", note]
    line = " ".join(parts)
    st.say(f"as one line: {line}")
    parsed = st.commands.parse_line(line, st)
    if parsed is None or parsed[1].args.get("guided"):
        raise Cancelled()
    run_sight(st, parsed[1])


# ---------------------------------------------------------------- fix

def fix_entry(fix, sight_ids) -> dict:
    import math

    e = fix.ellipse
    entry = {"kind": "fix", "utc": fix.utc, "lat_deg": float(fix.lat_deg),
             "lon_deg": float(norm180(fix.lon_deg)),
             "fix_kind": "running_fix" if fix.kind == "running fix" else "fix",
             "sight_ids": list(sight_ids),
             "method": "least squares on the lines of position (Marcq St Hilaire), iterated",
             "warnings": [w[:MAX_WARNING] for w in fix.warnings]}
    if all(math.isfinite(v) for v in (e.semi_major_nmi, e.semi_minor_nmi, e.orientation_deg)):
        entry.update(ellipse_semi_major_nmi=float(e.semi_major_nmi),
                     ellipse_semi_minor_nmi=float(min(e.semi_minor_nmi, e.semi_major_nmi)),
                     ellipse_orientation_deg=float(e.orientation_deg % 180.0),
                     ellipse_confidence=float(e.confidence))
    return entry


FIX_WINDOW = timedelta(minutes=60)   # `fix` alone: the sights this long before the latest unused


def _default_sights(st, start) -> list[str]:
    """`fix` alone: the sights not used by a fix yet within FIX_WINDOW before the latest of them;
    `fix from TIME`: those from TIME on. Says which it took, and which it left out."""
    unused = st.passage.sights_since_last_fix()
    example = "fix e0004 e0005 e0007, or fix from 08:30"
    if not unused:
        raise NavInputError("no sight stands that a fix has not used yet; a fix needs two or "
                            "more (or name them)", field="sights", example=example)
    last_e, last_r = unused[-1]
    if start is None:
        cut = last_r.utc - FIX_WINDOW
        rule = (f"the sights not used by a fix within {FIX_WINDOW.seconds // 60} min before the "
                f"latest of them, {last_e.id} at {format_hms(last_r.utc)}")
    else:
        cut = start.utc
        rule = f"the sights not used by a fix from {start.explain} on"
    took = [e.id for e, r in unused if r.utc >= cut]
    left = [e.id for e, r in unused if r.utc < cut]
    if len(took) < 2:
        raise NavInputError(f"{len(took) or 'no'} sight{'s' if len(took) != 1 else ''} "
                            f"({' '.join(took) or 'none'}) among {rule}; a fix needs two or more: "
                            "name them, or give a start time for a running fix", field="sights",
                            example=example)
    st.say(*st.wrap(f"took {' '.join(took)}: {rule}"))
    if left:
        st.say(*st.wrap(f"  left out, earlier: {' '.join(left)} (for a running fix with them, "
                        "name the sights or give a start time: fix from TIME)", "    "))
    return took


def run_fix(st, req) -> None:
    from ..render import fix_lines

    ids = req.args["ids"] or _default_sights(st, req.args.get("from"))
    from ..plausibility import DoubtfulSightsError
    from .checks_cmds import after_fix, fix_ids_with_averages

    ids = fix_ids_with_averages(st, ids)   # issue 10: an averaged sight, only when agreed
    try:
        result, entries = st.passage.fix_from(ids,
                                              keep_doubtful=req.args.get("keep_doubtful", False))
    except DoubtfulSightsError as err:
        st.say(*(f"  {note}" for note in err.notes))
        raise NavInputError(err.reason + "; `fix ... use-doubtful` computes it with them",
                            field=err.field, example="fix e0004 e0005 use-doubtful") from None
    fix = result.fix
    bias_lines = []
    if req.args.get("bias"):                    # issue 10: with one shared altitude error
        from ..commands.fix_extras import with_bias
        from ..render_checks import bias_lines as _bias_lines

        fix, _, _, bf = with_bias(result, 0.95, "")
        bias_lines = _bias_lines(bf)
    lines = fix_lines(fix, dr_lat_deg=result.dr_lat_deg, dr_lon_deg=result.dr_lon_deg) + bias_lines
    from .checks_cmds import set_drift_since_last_fix

    entry = fix_entry(fix, [x.id for x in entries])
    sd = set_drift_since_last_fix(st.passage, fix)     # issue 10: the current since the last fix
    if sd is not None:
        entry["set_drift"] = {"set_deg": round(sd.set_deg, 2) % 360.0,
                              "drift_kn": round(sd.drift_kn, 3), "since_utc": sd.since_utc}
    e = st.append(entry)
    st.say(*lines, *ut1_lines(st, [parse_utc(x["utc"]) for x in entries], fix.utc))
    first = min(parse_utc(x["utc"]) for x in entries)
    if fix.kind == "running fix" and st.passage.currents_in_force(first, fix.utc):
        st.say("  the earlier lines were advanced along the EP track (the current in force)")
    after_fix(st, sd)
    st.say(f"logged {e.id}: {fix.kind} from {' '.join(x.id for x in entries)}",
           *textwrap.wrap(CAUTION, 78))


# ---------------------------------------------------------------- where, almanac, note

def where_now(st, t=None) -> None:
    t = t or passage_time(st)
    try:
        w = carried(st.passage, t.utc)
    except NavInputError as err:
        st.say(f"  position: {err.reason}")
        return
    st.say(f"  position     {format_lat(w.lat_deg)}  {format_lon(w.lon_deg)}  at {t.explain}",
           f"  basis        {w.describe()}")
    if w.course_deg is not None and w.speed_kn:
        st.say(f"  course       {w.course_deg:05.1f}°, speed {w.speed_kn:g} kn")


def carried(passage, t):
    """passage.where(t), with a DR that cannot be carried so far said as such."""
    try:
        return passage.where(t)
    except NavInputError as err:
        if err.field == "dr":
            raise
        raise NavInputError(f"the DR cannot be carried to {t:%Y-%m-%d %H:%M} UTC: {err.reason}",
                            field="at", example="where at a time nearer the last position, or "
                            "enter a new DR") from None


def stale_anchor(st, w) -> list[str]:
    """A caution when the position rests on a fix whose sights were since corrected or struck."""
    from .entries import stale_note

    if w.basis not in ("fix", "running fix"):
        return []
    fix = st.lookup(w.anchor.entry_id)
    note = stale_note(st, fix) if fix is not None else None
    return [f"  caution: the {w.basis} {fix.id} {note}; strike it and run fix again"] if note \
        else []


def run_where(st, req) -> None:
    w = carried(st.passage, req.time.utc)
    hours = w.age.total_seconds() / 3600.0
    st.say(*st.wrap(f"Where at {req.time.explain}:"),
           f"  position     {format_lat(w.lat_deg)}  {format_lon(w.lon_deg)}",
           f"  basis        {w.describe()}" + (f" (anchor {w.anchor.entry_id})"),
           *(x for line in stale_anchor(st, w) for x in st.wrap(line, "    ")))
    from .checks_cmds import where_lines

    st.say(*where_lines(st, req.time.utc))
    if w.course_deg is not None and w.speed_kn:
        st.say(f"  course       {w.course_deg:05.1f}°, speed {w.speed_kn:g} kn")
    if hours > 12:
        st.say(f"  caution: the position rests on a DR of {hours:.0f} h; take sights")
    st.say(*textwrap.wrap(CAUTION, 78))


def run_almanac(st, req) -> None:
    import numpy as np

    from .. import almanac as al
    from ..render import almanac_lines
    from ..timekeeping import to_datetime64

    t64 = np.array([to_datetime64(req.time.utc)])
    lines = almanac_lines(al.almanac([req.args["body"]], t64), t64[0])
    st.say(f"time: {req.time.explain}", *lines, *ut1_lines(st, req.time.utc))


def run_name(st, req) -> None:
    """`vessel NAME` / `title TEXT`: logged as a setting; alone, shows the one in force."""
    what, label = req.args["what"], {"vessel": "vessel", "title": "passage title"}[req.args["what"]]
    if req.entry is None:
        st.say(f"{label}: {getattr(st, what)}")
        return
    e = st.append(req.entry)
    st.say(f"logged {e.id}: setting {label} {e[what]}")


def run_note(st, req) -> None:
    e = st.append(req.entry)
    st.say(f"logged {e.id}: note, {req.time.explain}")
