"""The one registry of shell commands, as data: help, completion and dispatch all read it.

Each :class:`Command` names its syntax, a summary, its parser (:mod:`nav.shell.parse`), its
handler (:mod:`nav.shell.handlers`, :mod:`nav.shell.records` ...), its option words and what its
first words are (for completion), with examples that the tests run. To add a command, add a row
to COMMANDS_LIST. Dispatch lives beside it (:mod:`nav.shell.dispatch`); no handler imports this
module: a handler that needs the table reads ``st.commands``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from ..errors import NavInputError
from . import checks_cmds, handlers, meridian_cmds, records, sky_cmds, triangle_cmd
from .parse import (Request, parse_almanac, parse_correct, parse_course, parse_dr, parse_export,
                    parse_fix, parse_import, parse_latitude, parse_log, parse_longitude,
                    parse_name, parse_noon, parse_note, parse_plain, parse_plot, parse_set,
                    parse_show, parse_sight, parse_speed, parse_strike, parse_where)
from .common import LIVE_HOURS
from .dispatch import CommandTable
from .words import CORRECTABLE, DR_WORDS, SETTING_WORDS, SIGHT_WORDS


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
    Command("fix", "fix [SIGHT-ID ... | from TIME] [use-doubtful] [bias]",
            "fix or running fix: the latest group of sights, the sights named, or those from a "
            "time on",
            parse_fix, handlers.run_fix, (), "sight",
            (f"fix alone: the sights not used by a fix yet within "
             f"{handlers.FIX_WINDOW.seconds // 60} min before the latest of "
             "them (the shell says which it took and which it left out)",
             "fix from TIME: the sights not used by a fix yet from TIME on (a running fix over "
             "a longer run); or name the sights, each once",
             "earlier sights are advanced along the DR track to the time of the last one",
             "the fix is logged with its sights, error ellipse and warnings",
             "a sight its DR cannot explain (50 nmi + 2 kn for each hour since the DR was set) "
             "is left out and named with the likely slip; use-doubtful keeps it in"),
            ("fix", "fix e0004 e0005 e0007", "fix from 08:30", "fix e0004 e0005 use-doubtful",
              "fix bias")),
    Command("where", f"where [{TIME}]", "where the vessel is, and on what basis",
            parse_where, handlers.run_where, ("at", "zt"), None,
            (f"without a time: now, while the latest entry is at most {LIVE_HOURS} h old; else "
             "(a passage "
             "entered after the fact) the time of the latest entry, and the shell says which",
             "a position that rests on a fix whose sights were since corrected or struck is "
             "marked, with how far the fix moves computed again"),
            ("where", "where at 23:30")),
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
            ("latitude e0005", "latitude e0007 log")),
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
    Command("triangle", "triangle lat L dec D lha H [ho HO]",
            "Hc, Z, Zn (and with Ho the intercept) from Lat, Dec and LHA; nothing is logged",
            triangle_cmd.parse_triangle, triangle_cmd.run_triangle, triangle_cmd.WORDS, None,
            ("for table work and exam problems that give their own almanac values",),
            ("triangle lat 26 S dec 12 03.4 S lha 315 ho 44 12.3",)),
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
    Command("vessel", "vessel [NAME]", "set the vessel's name (logged); `vessel` alone shows it",
            parse_name("vessel"), handlers.run_name, (), "text",
            ("the name as typed, to the end of the line (up to 120 characters); the log's "
             "header keeps the name it was opened with",), ("vessel Kestrel Dawn",)),
    Command("title", "title [TEXT]", "set the passage's title (logged); `title` alone shows it",
            parse_name("title"), handlers.run_name, (), "text",
            ("the title as typed, to the end of the line (up to 200 characters)",),
            ("title Azores to Biscay, June",)),
    Command("plot", "plot [fix [ID] | passage] [FILE.png | FILE.pdf] [replace]",
            "draw a fix's plotting sheet (default: the latest fix) or the passage",
            parse_plot, records.run_plot, (), "plot",
            ("without a file the plot goes next to the log, as <log>-<fix id>.png or "
             "<log>-passage.png; an existing file is refused unless the last word is replace",),
            ("plot", "plot fix e0008 sheet.pdf", "plot passage sheet.png replace")),
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
TOPICS = {
    "time": (
        "TIME, wherever a command takes one:",
        "  at 2026-06-14T20:55:00Z    ISO 8601 with its zone (Z, or an offset such as -03:00)",
        "  at 20:55:00                UTC time of day, on the date that puts it nearest the "
        "latest",
        "                             entry with a time (00:03 typed after 23:58 is the next "
        "day),",
        "                             else today's UTC date (the shell says which it used)",
        "  zt [DATE] HH:MM[:SS]       zone time read on the watch (a bare time: the zone date "
        "nearest",
        "                             the latest entry, as for at), with the zone and watch error",
        "                             set by `set zone` and `set watch`:",
        "                             ZT = watch − watch error (a fast watch is subtracted),",
        "                             UTC = ZT + ZD (ZD + in west longitude: ZD +3 for 45° W)",
        "                             ZD from -12 to +12, written +3, -10 or -5:30; an ISO offset",
        "                             such as +03:00 has the opposite sign and is refused",
        "Entries other than sights are for now (UTC) when no time is given; a sight needs its time.",
        "`where` without a time answers for now, or for the latest entry when the log is more "
        f"than {LIVE_HOURS} h behind the clock (a passage entered after the fact).",
    ),
    "position": (
        "Positions (LAT LON): latitude first, then longitude, each with its hemisphere:",
        "  41 12.5 N 032 07.1 W    41°12.5′N 32°07.1′W    N41 12.5 W032 07.1",
        "  or signed decimal degrees (north +, east +): 41.2083 -32.118",
        "  a comma may separate them: 41 12.5 N, 032 07.1 W",
        "Degrees and minutes without N/S or E/W are refused (a lost W is thousands of miles);",
        "a longitude first, or a W in the latitude, is named as a swap.",
    ),
}


TABLE = CommandTable(COMMANDS_LIST, TOPICS)      # dispatch (nav.shell.dispatch) reads it
COMMANDS, ALIASES = TABLE.by_name, TABLE.aliases
find_command, parse_line = TABLE.find, TABLE.parse_line
