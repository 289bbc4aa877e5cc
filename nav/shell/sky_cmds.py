"""Shell commands around the sights: sky, meridian (and their parsers), from the passage log.

- ``sky [DATE] [eye]``: twilight, rise and set, meridian passages of the Sun and Moon on the
  ship's date, along the DR and legs of the log (:func:`nav.sky.sky_day`, :class:`LoggedTrack`).
- ``meridian BODY [DATE]``: the upper transit of any body, Hc, Hs to preset with the settings in
  force, the latitude rule (:func:`nav.transit.body_transit`).

The zone is the one set (`set zone`), else the DR longitude's; the date defaults as `noon`'s.
"""

from __future__ import annotations

import textwrap
from datetime import datetime, time, timedelta, timezone

from .. import CAUTION
from ..errors import NavInputError
from .common import ut1_lines
from .parse import Request, parse_noon


def _caution(st, *instants) -> None:
    """The UT1 caution for these instants (none while UT1 is measured), then nav's caution."""
    st.say(*ut1_lines(st, *instants), *textwrap.wrap(CAUTION, 78))


def _zone_set(st) -> bool:
    return any("zone_description_h" in e.data for e in st.log.effective_entries("setting"))


def day_and_track(st, day):
    """The zone and the logged track of the ship's date `day` (DR at 12:00 zone time)."""
    from ..sky import LoggedTrack, zone_for_longitude
    from ..timekeeping import UTC

    zd = timedelta(hours=float(st.settings.zone_description_h)) if _zone_set(st) else None
    guess = zd if zd is not None else timedelta(0)
    midday = datetime.combine(day, time(12), tzinfo=UTC) + guess
    track = LoggedTrack(st.passage, midday)
    if zd is None:
        zd = zone_for_longitude(track.lon_deg)
        track = LoggedTrack(st.passage, datetime.combine(day, time(12), tzinfo=UTC) + zd)
    return zd, track


def parse_sky(args, line, ctx) -> Request:
    """``sky [DATE]``."""
    req = parse_noon(args, line, ctx)
    return Request("sky", args=dict(req.args))


def parse_meridian(args, line, ctx) -> Request:
    """``meridian BODY [DATE]`` (a body of two words, such as Rigil Kentaurus, is read whole)."""
    from ..fields import parse_body

    example = "meridian Jupiter, or meridian Vega 2026-06-21"
    if not args:
        raise NavInputError("name a body", field="body", example=example)
    words = [a.text for a in args]
    rest = args
    body = None
    for n in range(min(3, len(words)), 0, -1):
        try:
            body = parse_body(" ".join(words[:n]), "body")
        except NavInputError:
            continue
        rest = args[n:]
        break
    if body is None:
        parse_body(words[0], "body")                # raises, with its suggestions
    req = parse_noon(rest, line, ctx)
    return Request("meridian", args={**req.args, "body": body})


def run_sky(st, req) -> None:
    from ..render_sky import sky_lines
    from ..sky import sky_day

    day = req.args["date"]
    zd, track = day_and_track(st, day)
    settings = st.settings
    eye = settings.eye_height_m if settings.horizon == "sea" else 0.0
    s = sky_day(day, track, zone_description=zd, eye_height_m=eye)
    lines = sky_lines(s)
    lines[1:2] = [f"  DR at 12:00 ZT from the log: {track.basis};",
                  "  carried along the legs logged, each event at the DR then"]
    if not _zone_set(st):
        lines[0] = lines[0].replace("(from the DR longitude)", "(from the DR longitude; "
                                    "`set zone` to give one)")
    st.say(f"date: {day:%Y-%m-%d} ({req.args['why']})", *lines)
    _caution(st, [e.utc for e in s.events], s.moon.utc)


def run_meridian(st, req) -> None:
    from ..render_sky import transit_lines
    from ..transit import body_transit

    day = req.args["date"]
    zd, track = day_and_track(st, day)
    s = st.settings
    t = body_transit(req.args["body"], day, track, zd, eye_height_m=s.eye_height_m,
                     index_error_arcmin=s.index_error_arcmin, temperature_c=s.temperature_c,
                     pressure_hpa=s.pressure_hpa, horizon=s.horizon)
    st.say(f"date: {day:%Y-%m-%d} ({req.args['why']}); DR from the log along the legs",
           *transit_lines(t))
    _caution(st, t.utc, datetime.combine(day, time(12), tzinfo=timezone.utc))


# ---------------------------------------------------------------- compass

COMPASS_WORDS = ("heading", "var", "at", "zt", "note")
COMPASS_FLAGS = ("amplitude", "visible")
COMPASS_EXAMPLE = "compass Sun 055 heading 245 var 9 W amplitude at 06:31:10"


def _compass_words(args, line):
    """Positional tokens, {word: text} and the flags of a compass line."""
    pos, opts, flags, current, values = [], {}, set(), None, []

    def close():
        if current is not None:
            if not values:
                raise NavInputError(f"'{current}' needs a value", field=current,
                                    example=COMPASS_EXAMPLE)
            opts[current] = " ".join(t.text for t in values)

    for tok in args:
        key = tok.text.lower()
        if key in COMPASS_WORDS or key in COMPASS_FLAGS:
            close()
            current, values = None, []
            if key in opts or key in flags:
                raise NavInputError(f"'{key}' is given twice", field=key, example=COMPASS_EXAMPLE)
            if key in COMPASS_FLAGS:
                flags.add(key)
            elif key == "note":
                opts["note"] = line[tok.end:].strip()
                if not opts["note"]:
                    raise NavInputError("'note' needs its text", field="note",
                                        example="note by hand-bearing compass")
                return pos, opts, flags
            else:
                current = key
        elif current is None:
            if opts or flags:
                raise NavInputError(f"'{tok.text}' is not understood here", field="compass",
                                    example=COMPASS_EXAMPLE)
            pos.append(tok)
        else:
            values.append(tok)
    close()
    return pos, opts, flags


def parse_compass(args, line, ctx) -> Request:
    """``compass BODY BEARING heading H [var V] [amplitude [visible]] (at T | zt T) [note T]``."""
    from ..angles import parse_bearing, parse_east_west
    from ..fields import parse_body
    from .times import parse_time_options

    pos, opts, flags = _compass_words(args, line)
    if len(pos) < 2:
        raise NavInputError("give the body and its compass bearing", field="compass",
                            example=COMPASS_EXAMPLE)
    body = parse_body(" ".join(t.text for t in pos[:-1]), "body")
    bearing = parse_bearing(pos[-1].text, "bearing")
    if "heading" not in opts:
        raise NavInputError("a compass check needs the ship's head by the same compass",
                            field="heading", example=COMPASS_EXAMPLE)
    heading = parse_bearing(opts["heading"], "heading")
    var = parse_east_west(opts["var"], "var") if "var" in opts else None
    if "visible" in flags and "amplitude" not in flags:
        raise NavInputError("'visible' is for an amplitude", field="visible",
                            example="... amplitude visible at 06:31:10")
    t = parse_time_options(opts, ctx, sight=True, required=True)
    return Request("compass", time=t, args={
        "body": body, "bearing": bearing, "heading": heading, "variation": var,
        "amplitude": "amplitude" in flags,
        "horizon": "visible" if "visible" in flags else "celestial", "note": opts.get("note")})


def compass_summary(d) -> str:
    from ..compass import ew

    dev = f", deviation {ew(d['deviation_deg'])}" if d.get("deviation_deg") is not None else ""
    return (f"{d['body']} by {d['method']}: compass {d['compass_bearing_deg']:05.1f}°, Zn "
            f"{d['zn_deg']:05.1f}°, error {ew(d['compass_error_deg'])}{dev}, heading "
            f"{d['heading_deg']:03.0f}°")


def run_compass(st, req) -> None:
    from ..compass import compass_check
    from ..render_sky import compass_lines

    a, t = req.args, req.time
    w = st.passage.where(t.utc)
    s = st.settings
    c = compass_check(a["body"], t.utc, w.lat_deg, w.lon_deg, a["bearing"],
                      variation_deg=a["variation"], heading_deg=a["heading"],
                      amplitude=a["amplitude"], horizon=a["horizon"],
                      eye_height_m=s.eye_height_m)
    entry = {"kind": "compass_check", "utc": t.utc, "time_text": t.text, "body": c.body,
             "method": c.method, "compass_bearing_deg": c.compass_bearing_deg,
             "heading_deg": a["heading"], "zn_deg": round(c.zn_deg, 6) % 360.0,
             "compass_error_deg": round(c.compass_error_deg, 6),
             "lat_deg": round(c.lat_deg, 8), "lon_deg": round(c.lon_deg, 8)}
    if c.method == "amplitude":
        entry["horizon"] = c.horizon
    if c.variation_deg is not None:
        entry["variation_deg"] = c.variation_deg
        entry["deviation_deg"] = round(c.deviation_deg, 6)
    if a["note"]:
        entry["note"] = a["note"]
    e = st.append(entry)
    st.say(f"logged {e.id}: compass check, {t.explain}", f"  DR basis     {w.describe()}",
           *compass_lines(c))
    _caution(st, c.utc)


def parse_deviations(args, line, ctx) -> Request:
    if args:
        raise NavInputError(f"'{args[0].text}' is not understood here", field="deviations",
                            example="deviations")
    return Request("deviations")


def run_deviations(st, req) -> None:
    from ..compass import deviation_rows, deviation_table
    from ..render_sky import deviation_lines

    table = deviation_table(deviation_rows(st.log.effective_entries("compass_check")))
    st.say(*deviation_lines(table))


# ---------------------------------------------------------------- identify

IDENTIFY_EXAMPLE = "identify 51 00.0 076 at 23:30:00"


def parse_identify(args, line, ctx) -> Request:
    """``identify HS ZN (at TIME | zt TIME)``: the last positional word is the bearing."""
    from ..angles import parse_bearing
    from ..fields import SIGHT_FIELD_BY_NAME
    from .times import parse_time_options
    from .words import split_words

    pos, opts = split_words(line, args, ("at", "zt"), command="identify")
    if len(pos) < 2:
        raise NavInputError("give the sextant altitude and the true bearing", field="identify",
                            example=IDENTIFY_EXAMPLE)
    hs = SIGHT_FIELD_BY_NAME["hs"].parse(" ".join(t.text for t in pos[:-1]), "hs")
    zn = parse_bearing(pos[-1].text, "zn")
    t = parse_time_options(opts, ctx, sight=True, required=True)
    return Request("identify", time=t, args={"hs": hs, "zn": zn})


def run_identify(st, req) -> None:
    from ..identify import identify
    from ..render_sky import identify_lines

    t = req.time
    w = st.passage.where(t.utc)
    s = st.settings
    r = identify(t.utc, req.args["hs"], req.args["zn"], w.lat_deg, w.lon_deg,
                 index_error_arcmin=s.index_error_arcmin,
                 eye_height_m=s.eye_height_m if s.horizon == "sea" else 0.0,
                 temperature_c=s.temperature_c, pressure_hpa=s.pressure_hpa)
    st.say(f"time: {t.explain}", f"DR basis: {w.describe()}", *identify_lines(r))
    _caution(st, r.utc)


# ---------------------------------------------------------------- plan

PLAN_EXAMPLE = "plan evening, plan morning 2026-06-22 count 6"


def parse_plan(args, line, ctx) -> Request:
    """``plan morning|evening [DATE] [count N]``."""
    from ..angles import parse_number

    words = [a.text.lower() for a in args]
    if not words or words[0] not in ("morning", "evening"):
        raise NavInputError("say which twilight: morning or evening", field="twilight",
                            example=PLAN_EXAMPLE)
    count = 5
    rest = list(args[1:])
    if len(rest) >= 2 and rest[-2].text.lower() == "count":
        n = parse_number(rest[-1].text, "count", min_value=3, max_value=7, example="5")
        if n != int(n):
            raise NavInputError(f"'{rest[-1].text}' is not a whole number", field="count",
                                example="count 5")
        count, rest = int(n), rest[:-2]
    req = parse_noon(rest, line, ctx)
    return Request("plan", args={**req.args, "twilight": words[0], "count": count})


def run_plan(st, req) -> None:
    from ..planning import plan, twilight_instant
    from ..render_sky import plan_lines

    day = req.args["date"]
    zd, track = day_and_track(st, day)
    s = st.settings
    utc = twilight_instant(day, track, zd, req.args["twilight"])
    eye = s.eye_height_m if s.horizon == "sea" else 0.0
    p = plan(utc, track, count=req.args["count"], eye_height_m=eye,
             index_error_arcmin=s.index_error_arcmin, zone_description=zd,
             how=f"{req.args['twilight']} twilight: the Sun's centre at −6° true (civil)")
    st.say(f"date: {day:%Y-%m-%d} ({req.args['why']}); DR from the log along the legs",
           *plan_lines(p))
    _caution(st, p.utc)


# ---------------------------------------------------------------- equal altitudes

EQUAL_EXAMPLE = "equal-altitudes 11:00:00 17:20:00, or ... log"


def parse_equal(args, line, ctx) -> Request:
    """``equal-altitudes TIME1 TIME2 [log]`` (each TIME as `at` reads it: UTC)."""
    from .times import parse_at

    log = bool(args) and args[-1].text.lower() == "log"
    if log:
        args = args[:-1]
    if len(args) != 2:
        raise NavInputError("give the two times, forenoon then afternoon", field="at",
                            example=EQUAL_EXAMPLE)
    t1 = parse_at(args[0].text, ctx, "first", sight=True)
    t2 = parse_at(args[1].text, ctx, "second", sight=True)
    return Request("equal-altitudes", time=t1, args={"t2": t2, "log": log})


def run_equal(st, req) -> None:
    from ..angles import format_lon
    from ..equal_altitudes import equal_altitudes
    from ..render_sky import equal_altitudes_lines

    t1, t2 = req.time, req.args["t2"]
    w = st.passage.where(t1.utc)
    leg = st.passage.leg_at(t1.utc)
    moving = leg is not None and leg.course_deg is not None and leg.speed_kn > 0
    r = equal_altitudes(t1.utc, t2.utc, w.lat_deg, w.lon_deg,
                        course_deg=leg.course_deg if moving else None,
                        speed_kn=leg.speed_kn if moving else 0.0)
    st.say(f"first: {t1.explain}", f"second: {t2.explain}", f"DR basis: {w.describe()}",
           *equal_altitudes_lines(r))
    if req.args["log"]:
        text = (f"longitude {format_lon(r.lon_noon_deg)} at {r.middle:%Y-%m-%d %H:%M:%S} UTC "
                "by equal altitudes of the Sun: a line of position, not a fix")
        e = st.append({"kind": "note", "text": text, "utc": r.middle})
        st.say(f"logged {e.id}: note \"{text}\"")
    _caution(st, t1.utc, t2.utc)
