"""Shell lines -> requests: one parser per command, reading the words through the field
parsers (:mod:`nav.shell.words`, :mod:`nav.shell.times`); no second parser of any field here.

Parsing is pure: it reads the shell's state through a small context (the settings in force, the
latest entry with a time, the entries by id, the clock) and never writes the log. The validator
runs it on Enter; the handlers run it again and carry out the request.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from datetime import timedelta

from ..errors import NavInputError
from ..fields import check_hs_horizon, check_limb, parse_body, parse_sight_utc
from .times import (TimeRead, now_time, parse_at, parse_time_options, parse_zt,
                    passage_time)
from .words import (CORRECTABLE, DR_WORDS, EXPORT_FORMATS, NUMERIC_START, OPTIONS,
                    PLOT_EXTENSIONS, SETTING_WORDS, SIGHT_WORDS, Token, option_fields,
                    body_fields, hs_fields, position_fields, split_words)

ID_RE = re.compile(r"^e\d{4,9}$")


# ---------------------------------------------------------------- requests

@dataclass(frozen=True)
class Request:
    """What a line asks for: the command, the entry it would log (if any), its time, the rest."""

    command: str
    entry: dict | None = None
    time: TimeRead | None = None
    args: dict = field(default_factory=dict)


def _no_more(tokens: list[Token], command: str, example: str) -> None:
    if tokens:
        raise NavInputError(f"'{tokens[0].text}' is not understood here", field=command,
                            example=example)


def _entry_id(text: str, ctx, fld: str = "id", kinds=None) -> str:
    eid = text.strip().lower()
    if not ID_RE.match(eid):
        raise NavInputError(f"'{text}' is not an entry id", field=fld, example="e0004")
    e = ctx.raw(eid)
    if e is None:
        raise NavInputError(f"there is no entry {eid} in this log", field=fld,
                            example="an id that `log` lists")
    if kinds and e.kind not in kinds:
        raise NavInputError(f"{eid} is a {e.kind} entry, not a {' or '.join(kinds)}", field=fld,
                            example="an id that `log` lists")
    return eid


def parse_set(args, line, ctx) -> Request:
    pos, opts = split_words(line, args, SETTING_WORDS, command="set")
    if pos:
        import difflib

        near = difflib.get_close_matches(pos[0].text.lower(), SETTING_WORDS, n=1)
        hint = f"; did you mean {near[0]}?" if near else ""
        raise NavInputError(f"'{pos[0].text}' is not a setting{hint}", field="set",
                            example="settings: " + ", ".join(SETTING_WORDS))
    if not opts:
        return Request("set", args={"show": True})
    return Request("set", entry={"kind": "setting", **option_fields(opts)})


def _dr_entry(opts, ctx, base: dict) -> tuple[dict, TimeRead]:
    t = parse_time_options(opts, ctx) or now_time(ctx)
    entry = {"kind": "dr", "utc": t.utc, "time_text": t.text, **base, **option_fields(opts)}
    return entry, t


def parse_dr(args, line, ctx) -> Request:
    pos, opts = split_words(line, args, DR_WORDS, command="dr")
    if not pos:
        raise NavInputError("a DR needs its position", field="position",
                            example="dr 41 12.5 N 032 07.1 W course 245 speed 6.5 at 18:00")
    entry, t = _dr_entry(opts, ctx, position_fields(" ".join(p.text for p in pos), "position"))
    return Request("dr", entry=entry, time=t)


def parse_course(args, line, ctx, *, command: str = "course") -> Request:
    other = "speed" if command == "course" else "course"
    words = (other, "at", "zt", "note")
    pos, opts = split_words(line, args, words, command=command)
    example = f"{command} {OPTIONS[command].example} {other} {OPTIONS[other].example} at 21:00"
    if len(pos) != 1:
        raise NavInputError(f"give one {command}" if not pos else
                            f"'{pos[1].text}' is not understood here", field=command,
                            example=example)
    entry, t = _dr_entry(opts, ctx, OPTIONS[command].parse(pos[0].text, command))
    if "course_deg" not in entry and ctx.course_at(t.utc) is None and entry.get("speed_kn"):
        raise NavInputError("a speed needs a course (none is in force at that time)",
                            field="course", example=f"speed {entry['speed']} course 245")
    return Request("dr", entry=entry, time=t)


def parse_speed(args, line, ctx) -> Request:
    return parse_course(args, line, ctx, command="speed")


def sight_fields(pos: list[Token], fld_body: str = "body") -> dict:
    """Body (its words) and Hs (the numbers after it) of a one-line sight."""
    words = [p.text for p in pos]
    k = next((i for i, w in enumerate(words) if w.startswith(NUMERIC_START)), len(words))
    if k == 0:
        raise NavInputError("a sight starts with its body", field=fld_body,
                            example="sight Vega 34 12.3 at 20:55:00")
    out = body_fields(" ".join(words[:k]), fld_body)
    hs_words = words[k:]
    if not hs_words:
        raise NavInputError("a sight needs its sextant altitude (Hs)", field="hs",
                            example=f"sight {out['body']} 34 12.3 at 20:55:00")
    stray = next((w for w in hs_words if w[:1].isalpha()), None)
    if stray:
        raise NavInputError(f"'{stray}' is not an option of sight", field="hs",
                            example="options: " + ", ".join(SIGHT_WORDS))
    out.update(hs_fields(" ".join(hs_words), "hs"))
    return out


def parse_sight(args, line, ctx) -> Request:
    if not args:
        return Request("sight", args={"guided": True})
    pos, opts = split_words(line, args, SIGHT_WORDS, command="sight")
    entry = {"kind": "sight", **sight_fields(pos)}
    extra = option_fields(opts)
    entry["limb"] = check_limb(entry["body"], extra.pop("limb", None))
    entry.update(extra)
    check_hs_horizon(entry["hs_deg"], entry.get("horizon") or ctx.settings.horizon)
    t = parse_time_options(opts, ctx, sight=True, required=True)
    entry.update(t.entry_fields())
    entry["source"] = "shell"
    return Request("sight", entry=entry, time=t)


USE_DOUBTFUL = "use-doubtful"


def parse_fix(args, line, ctx) -> Request:
    keep = [a for a in args if a.text.lower() == USE_DOUBTFUL and not a.quoted]
    bias = [a for a in args if a.text.lower() == "bias" and not a.quoted]   # issue 10
    args = [a for a in args if a not in keep and a not in bias]
    if args and args[0].text.lower() == "from" and not args[0].quoted:
        rest = " ".join(w for w in line[args[0].end:].split() if w.lower() not in (USE_DOUBTFUL, "bias"))
        if not rest:
            raise NavInputError("give the time of the first sight to take", field="from",
                                example="fix from 08:30, or fix from zt 06:30")
        words = rest.split(None, 1)
        start = (parse_zt(words[1], ctx, "from") if words[0].lower() == "zt" and len(words) == 2
                 else parse_at(rest, ctx, "from"))
        return Request("fix", args={"ids": [], "from": start, "keep_doubtful": bool(keep),
                                          "bias": bool(bias)})
    ids = [_entry_id(a.text, ctx, "sights", kinds=("sight",)) for a in args]
    twice = sorted({i for i in ids if ids.count(i) > 1})
    if twice:
        raise NavInputError(f"{' and '.join(twice)} {'is' if len(twice) == 1 else 'are'} named "
                            "twice; one observation counts once in a fix", field="sights",
                            example="fix e0004 e0005")
    for sid in ids:
        if ctx.lookup(sid) is None:
            raise NavInputError(f"{sid} is struck; it cannot go into a fix", field="sights",
                                example="the ids of sights that stand")
    return Request("fix", args={"ids": ids, "keep_doubtful": bool(keep), "bias": bool(bias)})


def parse_where(args, line, ctx) -> Request:
    pos, opts = split_words(line, args, ("at", "zt"), command="where")
    _no_more(pos, "where", "where at 21:30:00")
    return Request("where", time=parse_time_options(opts, ctx) or passage_time(ctx))


def parse_almanac(args, line, ctx) -> Request:
    pos, opts = split_words(line, args, ("at", "zt"), command="almanac")
    if not pos:
        raise NavInputError("name a body", field="body", example="almanac Sun at 12:00:00")
    body = parse_body(" ".join(p.text for p in pos), "body")
    t = parse_time_options(opts, ctx, sight=True)
    if t is None:
        t = now_time(ctx)
        parse_sight_utc(t.utc.strftime("%Y-%m-%dT%H:%M:%SZ"), "at")
    return Request("almanac", time=t, args={"body": body})


def parse_log(args, line, ctx) -> Request:
    if not args:
        return Request("log", args={"count": 20})
    if len(args) > 1:
        _no_more(args[1:], "log", "log 20, or log all")
    word = args[0].text.lower()
    if word == "all":
        return Request("log", args={"count": None})
    if not word.isdigit() or int(word) < 1:
        raise NavInputError(f"'{args[0].text}' is not a number of entries", field="count",
                            example="log 20, or log all")
    return Request("log", args={"count": int(word)})


def parse_show(args, line, ctx) -> Request:
    if len(args) != 1:
        raise NavInputError("name one entry", field="id", example="show e0004")
    return Request("show", args={"id": _entry_id(args[0].text, ctx)})


def parse_strike(args, line, ctx) -> Request:
    if not args:
        raise NavInputError("name the entry to strike", field="id",
                            example="strike e0005 misread the micrometer drum")
    eid = _entry_id(args[0].text, ctx)
    target = ctx.raw(eid)
    from ..logbook import SUPERSEDABLE

    if target.kind not in SUPERSEDABLE:
        raise NavInputError(f"{eid} is a {target.kind} entry, which cannot be struck", field="id",
                            example="the id of a setting, dr, sight, fix, note or compass check")
    if ctx.lookup(eid) is None:
        raise NavInputError(f"{eid} is already struck", field="id", example="show " + eid)
    reason = line[args[0].end:].strip()
    if not reason:
        raise NavInputError("a strike needs its reason", field="reason",
                            example=f"strike {eid} misread the micrometer drum")
    return Request("strike", args={"id": eid, "reason": reason})


def parse_correct(args, line, ctx) -> Request:
    example = "correct e0005 hs 34 21.3 -- misread the drum"
    if not args:
        raise NavInputError("name the entry to correct", field="id", example=example)
    eid = _entry_id(args[0].text, ctx)
    cur = ctx.lookup(eid)
    if cur is None:
        raise NavInputError(f"{eid} is struck, or a kind of entry that cannot be corrected",
                            field="id", example="show " + eid)
    if cur.kind not in CORRECTABLE:
        raise NavInputError(f"{eid} is a {cur.kind} entry; a fix is not corrected but struck "
                            "and computed again", field="id", example=f"strike {eid} REASON")
    cut = next((i for i, t in enumerate(args) if t.text == "--" and not t.quoted), None)
    if cut is None or not line[args[cut].end:].strip():
        raise NavInputError("end the changes with -- and the reason", field="reason",
                            example=example)
    reason = line[args[cut].end:].strip()
    words = CORRECTABLE[cur.kind]
    head = line[:args[cut].start]
    pos, opts = split_words(head, args[1:cut], words, command="correct")
    if pos or not opts:
        raise NavInputError(f"'{pos[0].text}' is not a field of a {cur.kind} entry" if pos else
                            "name a field and its new value", field="field",
                            example=f"fields of a {cur.kind}: " + ", ".join(words))
    changes = option_fields(opts)
    if cur.kind == "sight" and ("hs_deg" in changes or "horizon" in changes):
        check_hs_horizon(changes.get("hs_deg", cur["hs_deg"]),
                         changes.get("horizon") or cur.get("horizon") or ctx.settings.horizon)
    t = parse_time_options(opts, ctx, sight=cur.kind == "sight")
    if t is not None:
        changes.update(t.entry_fields() if cur.kind == "sight" else
                       {"utc": t.utc, "time_text": t.text})
    if cur.kind == "sight" and ("limb" in changes or "body" in changes):
        body = changes.get("body", cur["body"])
        limb = changes.get("limb", cur.get("limb"))
        if "limb" not in changes and body not in ("Sun", "Moon"):
            limb = None
        changes["limb"] = check_limb(body, limb)   # None removes it: a point has no limb
    return Request("correct", time=t, args={"id": eid, "kind": cur.kind, "changes": changes,
                                            "reason": reason})


def parse_note(args, line, ctx) -> Request:
    if not args:
        raise NavInputError("a note needs its text", field="text", example="note reefed at dusk")
    t = now_time(ctx)
    return Request("note", entry={"kind": "note", "text": line[args[0].start:].strip(),
                                  "utc": t.utc}, time=t)


def _file_word(tok: Token, extensions, fld: str, example: str) -> str:
    name = tok.text
    if not name.lower().endswith(extensions):
        raise NavInputError(f"'{name}' must end in " + " or ".join(extensions), field=fld,
                            example=example)
    return name


REPLACE_WORD = "replace"        # the shell's word for the CLI's --replace (see nav.files)


def _replace_word(args: list[Token]) -> tuple[list[Token], bool]:
    """A last word `replace` (not quoted) asks to replace an existing file."""
    if args and not args[-1].quoted and args[-1].text.lower() == REPLACE_WORD:
        return list(args[:-1]), True
    return list(args), False


def parse_plot(args, line, ctx) -> Request:
    example = "plot fix e0009 sheet.png, plot passage, or plot"
    args, replace = _replace_word(args)
    words = [a.text.lower() for a in args]
    what, fix_id, path, rest = None, None, None, list(args)
    if words[:1] == ["passage"]:
        what, rest = "passage", rest[1:]
    elif words[:1] == ["fix"]:
        what, rest = "fix", rest[1:]
        if rest and ID_RE.match(rest[0].text.lower()):
            fix_id, rest = _entry_id(rest[0].text, ctx, "id", kinds=("fix",)), rest[1:]
    if rest:
        path = _file_word(rest[0], PLOT_EXTENSIONS, "file", example)
        _no_more(rest[1:], "plot", example)
    return Request("plot", args={"what": what, "id": fix_id, "path": path, "replace": replace})


def parse_export(args, line, ctx) -> Request:
    example = "export gpx passage.gpx"
    args, replace = _replace_word(args)
    if not args or args[0].text.lower() not in EXPORT_FORMATS:
        raise NavInputError("name the format: " + ", ".join(EXPORT_FORMATS), field="format",
                            example=example)
    fmt = args[0].text.lower()
    path = None
    if len(args) > 1:
        path = _file_word(args[1], ("." + fmt, ".json") if fmt == "geojson" else ("." + fmt,),
                          "file", f"export {fmt} passage.{fmt}")
        _no_more(args[2:], "export", example)
    return Request("export", args={"format": fmt, "path": path, "replace": replace})


def parse_import(args, line, ctx) -> Request:
    if len(args) != 1:
        raise NavInputError("name one CSV file" if not args else
                            "one file at a time (put a name with spaces in double quotes)",
                            field="file", example='import sights.csv or import "deck log.csv"')
    return Request("import", args={"path": _file_word(args[0], (".csv",), "file",
                                                      "import sights.csv")})


def _trailing_log(args: list[Token]) -> tuple[list[Token], bool]:
    """A last word ``log`` (not quoted): log the result as a note."""
    if args and not args[-1].quoted and args[-1].text.lower() == "log":
        return args[:-1], True
    return args, False


def parse_noon(args, line, ctx) -> Request:
    """``noon [DATE]``: the ship's date (zone date); default that of the latest entry with a
    time, else today's."""
    from ..noonsight import parse_date

    _no_more(args[1:], "noon", "noon 2026-06-21")
    if args:
        return Request("noon", args={"date": parse_date(args[0].text, "date"), "why": "given"})
    zd_h = float(ctx.settings.zone_description_h)
    word = "zone" if zd_h else "UTC"
    ref, eid = ctx.reference()
    if ref is not None:
        day, why = (ref - timedelta(hours=zd_h)).date(), \
            f"the {word} date of the latest entry with a time, {eid}"
    else:
        day, why = (ctx.now() - timedelta(hours=zd_h)).date(), \
            f"today's {word} date; no entry has a time yet"
    return Request("noon", args={"date": parse_date(f"{day:%Y-%m-%d}", "date"), "why": why})


def parse_latitude(args, line, ctx) -> Request:
    args, log = _trailing_log(args)
    if len(args) != 1:
        raise NavInputError("name one sight" if not args else
                            f"'{args[1].text}' is not understood here (only log may follow)",
                            field="id", example="latitude e0005, or latitude e0005 log")
    sid = _entry_id(args[0].text, ctx, "id", kinds=("sight",))
    if ctx.lookup(sid) is None:
        raise NavInputError(f"{sid} is struck", field="id", example="a sight that `log` lists")
    return Request("latitude", args={"id": sid, "log": log})


def parse_longitude(args, line, ctx) -> Request:
    example = "longitude at 13:41:36, longitude zt 11:41:48, or longitude 13:41:36 log"
    args, log = _trailing_log(args)
    pos, opts = split_words(line, args, ("at", "zt"), command="longitude")
    if opts:
        _no_more(pos, "longitude", example)
        t = parse_time_options(opts, ctx, sight=True)
    elif len(pos) == 1:
        t = parse_at(pos[0].text, ctx, sight=True)
    else:
        raise NavInputError("give the time of the Sun's meridian passage once" if pos else
                            "give the time of the Sun's meridian passage", field="at",
                            example=example)
    return Request("longitude", time=t, args={"log": log})


def parse_name(what: str):
    """``vessel NAME`` / ``title TEXT``: the rest of the line as typed (alone: show it)."""
    def parse(args, line, ctx) -> Request:
        if not args:
            return Request(what, args={"what": what})
        text = line[args[0].start:].strip()
        if args[0].quoted and len(args) == 1:
            text = args[0].text.strip()
        limit = 120 if what == "vessel" else 200
        if not text or len(text) > limit:
            raise NavInputError(f"give the {what}" if not text else
                                f"the {what} is {len(text)} characters long; the limit is {limit}",
                                field=what, example=f"{what} Kestrel Dawn")
        return Request(what, entry={"kind": "setting", what: text}, args={"what": what})
    return parse


def parse_plain(name: str, example: str):
    def parse(args, line, ctx) -> Request:
        _no_more(args, name, example)
        return Request(name)
    return parse
