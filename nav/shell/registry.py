"""The one registry of shell commands: help, completion and dispatch all read it.

Each :class:`Command` names its syntax, a summary, its parser (:mod:`nav.shell.parse`), its
handler (:mod:`nav.shell.handlers` or :mod:`nav.shell.records`), its option words and what its
first words are (for completion), with examples that the tests run.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import Callable

from ..errors import NavInputError
from . import checks_cmds, handlers, meridian_cmds, records, sky_cmds
from .parse import (Request, parse_almanac, parse_correct, parse_course, parse_dr, parse_export,
                    parse_fix, parse_import, parse_latitude, parse_log, parse_longitude,
                    parse_noon, parse_note, parse_plain, parse_plot, parse_set, parse_show,
                    parse_sight, parse_speed, parse_strike, parse_where)
from .words import CORRECTABLE, DR_WORDS, SETTING_WORDS, SIGHT_WORDS, tokenize


@dataclass(frozen=True)
class Command:
    name: str
    syntax: str
    summary: str
    parse: Callable
    run: Callable
    words: tuple[str, ...] = ()        # option words, each followed by a value
    first: str | None = None           # completion kind of the positional words
    details: tuple[str, ...] = ()
    examples: tuple[str, ...] = ()
    aliases: tuple[str, ...] = ()


TIME = "at TIME | zt TIME"
COMMANDS_LIST = (
    Command("set", "set [eye H] [ie X] [watch W] [zone ZD] [temp T] [pressure P] [horizon KIND]",
            "set the vessel's state (several at once); `set` alone shows it",
            parse_set, handlers.run_set, SETTING_WORDS, None,
            ("eye: height of eye, metres or feet (2.5, 2.5 m, 8 ft)",
             "ie: index error in arcmin, + when the sextant reads high (on the arc): its "
             "correction is then negative",
             "watch: watch error, '12 fast' or '3 slow' (a fast watch is subtracted)",
             "zone: zone description, the trade's rule UTC = ZT + ZD (west longitude +)",
             "temp (°C) and pressure (hPa): for refraction; horizon: sea, artificial or bubble",
             "each `set` line is one setting entry in the log"),
            ("set eye 2.5 ie 1.2", "set watch 12 fast zone +3", "set horizon sea temp 15")),
    Command("dr", f"dr LAT LON [course C] [speed S] [{TIME}] [basis B] [note TEXT]",
            "enter a DR position (and the course and speed from then on)",
            parse_dr, handlers.run_dr, DR_WORDS, "position",
            ("LAT LON: 41 12.5 N 032 07.1 W, 41°12.5′N 32°07.1′W, or 41.2083 -32.118",
             "without a time the DR is for now (UTC), and the shell says so",
             "basis: dr (default), ep, gps, visual or other"),
            ("dr 41 12.5 N 032 07.1 W course 245 speed 6.5 at 18:00",)),
    Command("course", f"course C [speed S] [{TIME}] [note TEXT]",
            "change course (and speed) from a time on", parse_course, handlers.run_dr,
            ("speed", "at", "zt", "note"), "number", (), ("course 260 speed 7 at 21:30",)),
    Command("speed", f"speed S [course C] [{TIME}] [note TEXT]",
            "change speed (and course) from a time on", parse_speed, handlers.run_dr,
            ("course", "at", "zt", "note"), "number", (), ("speed 5.5 at 22:00",)),
    Command("sight", f"sight BODY HS [limb L] ({TIME}) [ie X] [eye H] [temp T] [pressure P] "
                     "[horizon KIND] [sigma S] [note TEXT]",
            "log a sight and show its reduction; `sight` alone asks field by field",
            parse_sight, handlers.run_sight, SIGHT_WORDS, "body",
            ("HS: 34 12.3, 34°12.3′ or 34.205; limb: lower (default for Sun and Moon), upper, "
             "center",
             "a sight needs its time (see `help time`); ie, eye ... override the settings for "
             "this sight only",
             "the reduction is worked from the DR at the sight's time"),
            ("sight Vega 34 12.3 at 22:55:00", "sight Sun 52 08.4 limb upper zt 11:42:05",
             "sight Rigil Kentaurus 18 44.0 at 2026-06-14T22:58:30Z note low, hazy")),
    Command("fix", "fix [SIGHT-ID ...] [bias]",
            "fix or running fix from sights (default: those not used by a fix yet)",
            parse_fix, handlers.run_fix, (), "sight",
            ("earlier sights are advanced along the DR track to the time of the last one",
             "the fix is logged with its sights, error ellipse and warnings",
             "bias: also estimate one altitude error shared by all the sights (index error, "
             "height of eye, abnormal dip or refraction); needs bodies all round the horizon",
             "after a fix, the set and drift since the previous fix is shown"),
            ("fix", "fix e0004 e0005 e0007", "fix bias")),
    Command("where", f"where [{TIME}]", "where the vessel is, and on what basis",
            parse_where, handlers.run_where, ("at", "zt"), None, (), ("where", "where at 23:30")),
    Command("noon", "noon [DATE]",
            "predict local apparent noon from the DR: UTC, zone time, watch, Hc, Hs to preset",
            parse_noon, meridian_cmds.run_noon, (), None,
            ("DATE: the ship's date, 2026-06-21 (default: the zone date of the latest entry "
             "with a time, else today's)",
             "the Sun's meridian passage is solved at the DR longitude the vessel will have "
             "reached, along the legs in force",
             "the watch reading to expect: ZT + the watch error of `set watch` (a fast watch "
             "reads ahead)",
             "Hs to preset: the lower limb's reading that corrects to Hc with the height of "
             "eye, index error, temperature and pressure in force"),
            ("noon", "noon 2026-06-21")),
    Command("latitude", "latitude ID [log]",
            "latitude from a meridian sight or Polaris, worked; `log` notes it",
            parse_latitude, meridian_cmds.run_latitude, (), "sight",
            ("a meridian sight: any body within 1° of LHA (4 min of time for the Sun) of its "
             "upper or lower transit at the DR; farther off, use the sight in a fix",
             "Polaris: at any LHA, solved exactly from its GHA and Dec at the DR longitude",
             "log: append the latitude as a note (a line of position, not a fix; the DR is "
             "not moved)"),
            ("latitude e0005", "latitude e0009 log")),
    Command("longitude", f"longitude ({TIME}) [log]",
            "longitude from the timed instant of the Sun's meridian passage",
            parse_longitude, meridian_cmds.run_longitude, ("at", "zt"), None,
            ("TIME: the instant of the Sun's greatest altitude (a bare time is UTC, as `at`)",
             "lon = −GHA of the Sun then; the working with the equation of time is shown too",
             "the timing is the weak point: 1 min of time is 15′ of longitude",
             "log: append the longitude as a note (a line of position, not a fix)"),
            ("longitude at 13:41:36", "longitude zt 11:41:48 log")),
    Command("current", f"current [SET DRIFT [{TIME}] [note TEXT] | apply]",
            "a current from a time on (EP = DR + current); `current` alone shows DR and EP",
            checks_cmds.parse_current, checks_cmds.run_current, ("at", "zt", "note"), None,
            ("SET: degrees true, the direction the water flows toward; DRIFT: knots",
             "in force from its time on, like a course change; `current 0 0` ends it",
             "apply: the set and drift between the last two fixes, from the latest fix on",
             "running fixes then advance the earlier lines along the EP track, and say so"),
            ("current 210 0.8 at 18:00", "current apply", "current")),
    Command("average", "average [SIGHT-ID ...]",
            "log the averaged sight of a run (3+ shots of one body in 15 min)",
            checks_cmds.parse_average, checks_cmds.run_average, (), "sight",
            ("each shot is compared with the altitude change predicted at the DR; a shot "
             "departing from the rest is flagged and left out of the average",
             "the averaged sight is a new entry naming its sources; nothing is rewritten",
             "a fix from the run's sights asks before it uses the average in their place"),
            ("average", "average e0004 e0005 e0006")),
    Command("watch", "watch [READING at TIME [by signal|gps|reference] [note TEXT]]",
            "log a comparison of the watch with a reference; `watch` alone: error and rate",
            checks_cmds.parse_watch, checks_cmds.run_watch, ("at", "by", "note"), None,
            ("READING: the watch's face (zone time, as `zt` reads it) at the reference instant",
             "the daily rate is fitted by least squares from two or more comparisons; sights "
             "timed `zt ...` then take error + rate × days, and say so",
             "a rate that changes suddenly between comparisons is warned of"),
            ("watch 12:00:04 at 12:00:00 by signal", "watch")),
    Command("sky", "sky [DATE]",
            "twilight, sunrise and sunset, moonrise and moonset, meridian passages, along the DR",
            sky_cmds.parse_sky, sky_cmds.run_sky, (), None,
            ("DATE: the ship's date in zone time (default as for noon)",
             "each event is worked at the DR the vessel will have then, along the legs logged",
             "zone: the one set with `set zone`, else the DR longitude's",
             "sunrise/sunset: upper limb on the sea horizon (centre −50′ true); twilight: "
             "centre at −6° (civil) and −12° (nautical)"),
            ("sky", "sky 2026-06-21")),
    Command("meridian", "meridian BODY [DATE]",
            "meridian passage of any body along the DR: time, Hc, Hs to preset, latitude rule",
            sky_cmds.parse_meridian, sky_cmds.run_meridian, (), "body",
            ("the upper transit at the DR the vessel will have then, along the legs logged",
             "Hs to preset: with the height of eye, index error, temperature and pressure in "
             "force (lower limb for the Sun and Moon)"),
            ("meridian Jupiter", "meridian Vega 2026-06-21")),
    Command("compass", f"compass BODY BEARING heading H [var V] [amplitude [visible]] "
                       f"({TIME}) [note TEXT]",
            "log a compass check: compass error (and deviation) by azimuth or amplitude",
            sky_cmds.parse_compass, sky_cmds.run_compass, sky_cmds.COMPASS_WORDS, "body",
            ("BEARING: the body's bearing by the compass; heading: the ship's head by the same "
             "compass (for the deviation table)",
             "by azimuth: the body's true Zn at the time from the DR; amplitude: the body "
             "rising or setting, sin A = sin Dec / cos lat, centre on the celestial horizon; "
             "visible: centre on the visible horizon, corrected",
             "error: true = compass + error, E +; var: variation (9 W, 3.5 E): deviation = "
             "error − variation",
             "`deviations` lists the deviation found on each heading"),
            ("compass Sun 055 heading 245 var 9 W amplitude at 06:31:10",
             "compass Vega 080 heading 250 at 23:30:00")),
    Command("deviations", "deviations", "the deviation found on each compass heading so far",
            sky_cmds.parse_deviations, sky_cmds.run_deviations, (), None, (), ("deviations",)),
    Command("identify", f"identify HS ZN ({TIME})",
            "which body was it: candidates ranked by the fit of Hc and Zn at the DR",
            sky_cmds.parse_identify, sky_cmds.run_identify, ("at", "zt"), None,
            ("HS: the sextant altitude; ZN: the true bearing (a hand-bearing compass, "
             "corrected: a few degrees are enough)",
             "candidates: the 58 stars, the planets, the Moon and the other stars to "
             "magnitude 3.5; with height of eye and IE in force",
             "when none fits: the Dec and SHA of the point observed"),
            ("identify 51 00.0 076 at 23:30:00",)),
    Command("plan", "plan morning|evening [DATE] [count N]",
            "which bodies to shoot at twilight: Hc, Zn, magnitude, Hs to preset, a spread set",
            sky_cmds.parse_plan, sky_cmds.run_plan, (), None,
            ("the time: the Sun's centre at −6° (civil twilight), along the DR and legs logged",
             "candidates: the 58 stars, planets and Moon between 15° and 70°; flags for a "
             "body near the Moon and a Moon without a bright lower limb",
             "the set (count 3–7, default 5): azimuth spread first, brightness second"),
            ("plan evening", "plan morning 2026-06-22 count 6")),
    Command("equal-altitudes", "equal-altitudes TIME1 TIME2 [log]",
            "longitude by equal altitudes of the Sun before and after noon (beside longitude)",
            sky_cmds.parse_equal, sky_cmds.run_equal, (), None,
            ("TIME1, TIME2: the UTC of the forenoon and afternoon sights at the same sextant "
             "altitude (a bare time is UTC, as `at`)",
             "corrected for the change of the Sun's Dec and for the run along the leg in force",
             "log: append the longitude as a note (a line of position, not a fix)"),
            ("equal-altitudes 11:00:00 17:20:00", "equal-altitudes 11:00:00 17:20:00 log")),
    Command("almanac", f"almanac BODY [{TIME}]", "GHA, Dec, SHA, HP and SD of a body (default now)",
            parse_almanac, handlers.run_almanac, ("at", "zt"), "body", (),
            ("almanac Sun at 12:00:00",)),
    Command("log", "log [N | all]", "list the latest N entries (default 20), or all",
            parse_log, records.run_log, (), "count", (), ("log", "log all")),
    Command("show", "show ID", "one entry in full (a sight with its reduction, its history)",
            parse_show, records.run_show, (), "entry", (), ("show e0004",)),
    Command("strike", "strike ID REASON", "strike an entry out (it stays in the log, marked)",
            parse_strike, records.run_strike, (), "entry", (),
            ("strike e0005 misread the drum",)),
    Command("correct", "correct ID FIELD VALUE [FIELD VALUE ...] -- REASON",
            "correct fields of a sight, DR, setting or note (re-parsed, logged as a correction)",
            parse_correct, records.run_correct, (), "entry",
            tuple(f"fields of a {k}: {', '.join(v)}" for k, v in CORRECTABLE.items()),
            ("correct e0005 hs 34 21.3 -- misread the drum",
             "correct e0003 position 41 14.0 N 032 05.0 W -- plotted wrong")),
    Command("note", "note TEXT", "log a note (time: now)", parse_note, handlers.run_note,
            (), "text", (), ("note reefed at dusk",)),
    Command("plot", "plot [fix [ID] | passage] [FILE.png | FILE.pdf] [replace]",
            "draw a fix's plotting sheet (default: the latest fix) or the passage",
            parse_plot, records.run_plot, (), "plot",
            ("without a file the plot goes next to the log, as <log>-<fix id>.png or "
             "<log>-passage.png; an existing file is refused unless the last word is replace",),
            ("plot", "plot fix e0009 sheet.pdf", "plot passage sheet.png replace")),
    Command("export", "export gpx|geojson|csv [FILE] [replace]",
            "export fixes and track (GPX, GeoJSON) or the sights (CSV)",
            parse_export, records.run_export, (), "format",
            ("without a file the export goes next to the log; an existing file is refused "
             "unless the last word is replace",),
            ("export gpx", "export csv sights-out.csv", "export gpx passage.gpx replace")),
    Command("import", "import FILE.csv",
            "append the sights and DRs of a batch CSV file (the file of nav reduce / nav fix)",
            parse_import, records.run_import, (), "csv",
            ("the whole file is checked first; a file with any bad row is refused, naming the "
             "rows",), ("import deck-log.csv",)),
    Command("help", "help [COMMAND | time | position]", "this list, or one command in full",
            lambda a, line, ctx: Request("help", args={"topic": a[0].text.lower() if a else None}),
            records.run_help, (), "command", (), ("help", "help sight")),
    Command("quit", "quit", "leave the shell (also: exit, Ctrl-D)",
            parse_plain("quit", "quit"), records.run_quit, (), None, (), ("quit",), ("exit",)),
)
COMMANDS = {c.name: c for c in COMMANDS_LIST}
ALIASES = {a: c.name for c in COMMANDS_LIST for a in c.aliases}

TOPICS = {
    "time": (
        "TIME, wherever a command takes one:",
        "  at 2026-06-14T20:55:00Z    ISO 8601 with its zone (Z, or an offset such as -03:00)",
        "  at 20:55:00                UTC time of day: the date is that of the latest entry with "
        "a time,",
        "                             else today's UTC date (the shell says which it used)",
        "  zt [DATE] HH:MM[:SS]       zone time read on the watch, with the zone and watch error",
        "                             set by `set zone` and `set watch`:",
        "                             ZT = watch − watch error (a fast watch is subtracted),",
        "                             UTC = ZT + ZD (ZD + in west longitude: ZD +3 for 45° W)",
        "Entries other than sights are for now (UTC) when no time is given; a sight needs its time.",
    ),
    "position": (
        "Positions (LAT LON): latitude first, then longitude, each with its hemisphere:",
        "  41 12.5 N 032 07.1 W    41°12.5′N 32°07.1′W    N41 12.5 W032 07.1",
        "  or signed decimal degrees (north +, east +): 41.2083 -32.118",
        "  a comma may separate them: 41 12.5 N, 032 07.1 W",
    ),
}


def find_command(word: str) -> Command:
    key = word.lower()
    key = ALIASES.get(key, key)
    if key in COMMANDS:
        return COMMANDS[key]
    names = list(COMMANDS) + list(ALIASES)
    near = difflib.get_close_matches(key, names, n=2, cutoff=0.6)
    hint = f"; did you mean {' or '.join(near)}?" if near else "; type help for the list"
    raise NavInputError(f"unknown command '{word[:40]}'{hint}", field="command",
                        example="sight, fix, where, help")


def parse_line(line: str, ctx) -> tuple[Command, Request] | None:
    """A typed line -> its command and the request it makes (None for a blank line).

    Raises NavInputError (field, example) for a line that is not valid."""
    tokens = tokenize(line)
    if not tokens:
        return None
    cmd = find_command(tokens[0].text)
    return cmd, cmd.parse(tokens[1:], line, ctx)
