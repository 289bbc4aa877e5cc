"""Handlers of the navigation commands: set, dr/course/speed, sight, fix, where, almanac, note.

A handler gets the shell state and a parsed request; it computes first (so a sight the chain
refuses is never logged), appends to the log, and only then confirms and shows the results.
"""

from __future__ import annotations

import textwrap
from types import MappingProxyType

from .. import CAUTION
from ..angles import format_arcmin, format_dm, format_lat, format_lon, norm180
from ..errors import NavInputError
from ..logbook import Entry
from ..timekeeping import parse_utc
from .times import parse_at, parse_zt, watch_text, zone_text
from .words import OPTIONS
from .state import Cancelled, iso_z

LIMB_SHORT = {"lower": "lower limb", "upper": "upper limb", "center": "centre"}
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


_SETTING_WORDS = (  # field -> how the summary shows it
    ("eye_height_m", lambda v: f"eye {v:.2f} m"),
    ("index_error_arcmin", lambda v: f"IE {format_arcmin(v)}"),
    ("watch_error_s", lambda v: f"watch {watch_text(v)}"),
    ("zone_description_h", lambda v: f"zone {zone_text(v)}"),
    ("temperature_c", lambda v: f"temp {v:g} °C"),
    ("pressure_hpa", lambda v: f"pressure {v:g} hPa"),
    ("horizon", lambda v: f"horizon {v}"),
)


def setting_summary(data) -> str:
    return ", ".join(show(data[name]) for name, show in _SETTING_WORDS if name in data)


def run_set(st, req) -> None:
    if req.args.get("show"):
        st.say(f"Settings in force ({st.title}):", *setting_lines(st.settings))
        where_now(st)
        return
    e = st.append(req.entry)
    st.say(f"logged {e.id}: setting {setting_summary(e.data)}")


# ---------------------------------------------------------------- dr, course, speed

def dr_summary(data) -> str:
    bits = []
    if "lat_deg" in data:
        bits.append(f"{format_lat(data['lat_deg'])} {format_lon(data['lon_deg'])}"
                    + (f" ({data['position_basis'].upper()})" if data.get("position_basis",
                                                                          "dr") != "dr" else ""))
    if "course_deg" in data:
        bits.append(f"course {data['course_deg']:05.1f}°")
    if "speed_kn" in data:
        bits.append(f"speed {data['speed_kn']:g} kn")
    return ", ".join(bits)


def run_dr(st, req) -> None:
    e = st.append(req.entry)
    what = "DR" if "lat_deg" in e.data else "course/speed"
    st.say(f"logged {e.id}: {what} {dr_summary(e.data)}", f"  time: {req.time.explain}")
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
        return f"UTC {t:%Y-%m-%d %H:%M:%S}" + (f" (typed {e['time_text']})"
                                                 if e.get("time_text") else "")
    fast = e["watch_error_s"]
    watch = ("watch error none" if not fast else
             f"watch {abs(fast):g} s {'fast, subtracted' if fast > 0 else 'slow, added'}")
    return (f"watch {e.get('time_text', '?')}, {watch}; ZD {zone_text(e['zone_description_h'])}, "
            f"UTC = ZT + ZD = {t:%Y-%m-%d %H:%M:%S}")


def sight_summary(data) -> str:
    limb = f" {LIMB_SHORT[data['limb']]}" if data.get("limb") else ""
    return f"{data['body']}{limb} Hs {format_dm(data['hs_deg'])} at {data['utc'][11:19]} UTC"


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
    return lines


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
    from .checks_cmds import after_sight

    after_sight(st, e)          # issue 10: the run this sight completes, checked


def _answer_time(st, text: str):
    words = text.strip().split(None, 1)
    if words and words[0].lower() in ("zt", "at") and len(words) == 2:
        return (parse_zt if words[0].lower() == "zt" else parse_at)(words[1], st, sight=True)
    return parse_at(text, st, sight=True)


def guided_sight(st) -> None:
    """`sight` alone: one field at a time, defaults from the state; then the one-line form."""
    from ..fields import check_limb, parse_body, parse_limb

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
    hs = st.ask("Hs (34 12.3, 34°12.3′ or 34.205)", None,
                lambda t: OPTIONS["hs"].parse(t, "hs"), None)
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
    from .registry import parse_line

    parsed = parse_line(line, st)
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


def run_fix(st, req) -> None:
    from ..render import fix_lines

    ids = req.args["ids"]
    if not ids:
        ids = [e.id for e, _ in st.passage.sights_since_last_fix()]
        if len(ids) < 2:
            raise NavInputError(f"{len(ids) or 'no'} sight{'s' if len(ids) != 1 else ''} since "
                                "the last fix; a fix needs two or more (or name them)",
                                field="sights", example="fix e0004 e0005 e0007")
        st.say(f"from the sights not used by a fix yet: {' '.join(ids)}")
    from .checks_cmds import after_fix, fix_ids_with_averages

    ids = fix_ids_with_averages(st, ids)   # issue 10: an averaged sight, only when agreed
    result, entries = st.passage.fix_from(ids)
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
    st.say(*lines)
    first = min(parse_utc(x["utc"]) for x in entries)
    if fix.kind == "running fix" and st.passage.currents_in_force(first, fix.utc):
        st.say("  the earlier lines were advanced along the EP track (the current in force)")
    after_fix(st, sd)
    st.say(f"logged {e.id}: {fix.kind} from {' '.join(x.id for x in entries)}",
           *textwrap.wrap(CAUTION, 78))


# ---------------------------------------------------------------- where, almanac, note

def where_now(st, t=None) -> None:
    t = t or parse_at(st.now().strftime("%Y-%m-%dT%H:%M:%SZ"), st)
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


def run_where(st, req) -> None:
    w = carried(st.passage, req.time.utc)
    hours = w.age.total_seconds() / 3600.0
    st.say(f"Where at {req.time.explain}:",
           f"  position     {format_lat(w.lat_deg)}  {format_lon(w.lon_deg)}",
           f"  basis        {w.describe()}" + (f" (anchor {w.anchor.entry_id})"))
    from .checks_cmds import where_lines

    st.say(*where_lines(st, req.time.utc))
    if w.course_deg is not None and w.speed_kn:
        st.say(f"  course       {w.course_deg:05.1f}°, speed {w.speed_kn:g} kn")
    if hours > 12:
        st.say(f"  caution: the position rests on a DR of {hours:.0f} h; take sights")


def run_almanac(st, req) -> None:
    import numpy as np

    from .. import almanac as al
    from ..render import almanac_lines
    from ..timekeeping import to_datetime64

    t64 = np.array([to_datetime64(req.time.utc)])
    lines = almanac_lines(al.almanac([req.args["body"]], t64), t64[0])
    st.say(f"time: {req.time.explain}", *lines)


def run_note(st, req) -> None:
    e = st.append(req.entry)
    st.say(f"logged {e.id}: note, {req.time.explain}")
