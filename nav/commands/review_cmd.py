"""`nav review LOG`: read a passage log for review, damaged or not, without writing to it.

The log is loaded leniently (:func:`nav.logbook.load_log` with ``strict=False``): every good line
is listed with its line number, and every problem with its line and field: a line that is not
an entry, an entry whose check does not follow the line before it (edited, deleted, moved), a
value as typed that does not give the number stored beside it, a torn last line or a cut-off
import. The file is opened read-only, never locked, never repaired: a torn tail is only set
aside when the log is next opened for writing (``nav shell --log``, ``nav import``).

Exit status: 0 when the log has no problem that stops it being opened for writing, 1 when it
has (the problems are listed), 2 when the file is not a passage log at all.
"""

from __future__ import annotations

import json
import sys

from .. import CAUTION

EXIT_DAMAGED = 1


def register(sub) -> None:
    r = sub.add_parser(
        "review", help="read a passage log, damaged or not, without writing to it",
        description="Read a passage log for review: every entry with its line number, then "
                    "every problem found (a changed, deleted or moved line, a value as typed "
                    "that does not give the number stored beside it, a torn last line, a "
                    "cut-off import). Nothing is written, locked or repaired. Exit status 0: "
                    "no problem; 1: problems found; 2: not a passage log.")
    r.add_argument("log", metavar="LOG", help="the passage log (.jsonl)")
    r.add_argument("--problems", action="store_true",
                   help="list only the problems, not the entries")
    r.add_argument("--json", action="store_true",
                   help='print {"log": ..., "entries": [...], "problems": [...]}')
    r.set_defaults(func=run_review)


def _utc(text: str) -> str:
    return text.replace("T", " ").rstrip("Z")


def summary(e) -> str:
    """One line for an entry of any kind, in navigator notation (numbers as stored)."""
    from ..angles import format_lat, format_lon

    d = e.data
    k = e.kind
    if k == "passage":
        return f"'{d['title']}', vessel {d['vessel']}, format version {d['format_version']}"
    if k == "sight":
        return f"{d['body']} Hs {d['hs']} at {_utc(d['utc'])} UTC"
    if k == "dr":
        bits = [f"at {_utc(d['utc'])} UTC"]
        if "lat_deg" in d:
            bits.append(f"{format_lat(d['lat_deg'])} {format_lon(d['lon_deg'])}")
        if "course_deg" in d:
            bits.append(f"course {d['course_deg']:05.1f}°")
        if "speed_kn" in d:
            bits.append(f"speed {d['speed_kn']:g} kn")
        return "DR " + ", ".join(bits)
    if k == "fix":
        return (f"{d['fix_kind'].replace('_', ' ')} {format_lat(d['lat_deg'])} "
                f"{format_lon(d['lon_deg'])} at {_utc(d['utc'])} UTC from "
                + " ".join(d["sight_ids"]))
    if k == "note":
        return "note: " + d["text"][:70].replace("\n", " ")
    if k in ("strike", "correct"):
        return f"{k}s {d['target']}: {d['reason'][:60]}"
    if k == "repair":
        return f"{d['torn_bytes']} bytes set aside in {d['side_file']}"
    if k in ("setting", "compass_check"):
        from ..shell.entries import summary as shell_summary   # the shell's words for them

        try:
            text = shell_summary(e)
            return text if len(text) <= 80 else text[:77].rsplit(", ", 1)[0] + ", ..."
        except (KeyError, TypeError, ValueError):
            pass                                # a damaged entry: its fields as stored
    fields = [f"{n} {v}" for n, v in d.items() if n not in ("id", "kind", "logged_utc")]
    return ", ".join(fields)[:80]


def run_review(args) -> int:
    from ..logbook import load_log

    log = load_log(args.log, strict=False)       # reads only; raises if not a passage log
    struck = {e["target"]: e.id for e in log.entries if e.kind == "strike"}
    corrected: dict[str, str] = {}
    for e in log.entries:
        if e.kind == "correct":
            corrected[e["target"]] = e.id
    errors = log.errors
    if args.json:
        doc = {"log": str(args.log), "format_version": log.version, "read_only": True,
               "entries": [] if args.problems else [
                   {"line": e.line, **e.to_dict(), **({"batch": e.batch} if e.batch else {}),
                    "struck_by": struck.get(e.id), "corrected_by": corrected.get(e.id)}
                   for e in log.entries],
               "problems": [{"line": p.line, "field": p.field, "message": p.message,
                             "severity": p.severity} for p in log.problems],
               "caution": CAUTION}
        json.dump(doc, sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        return EXIT_DAMAGED if errors else 0
    h = log.header
    print(f"{args.log}: read only, nothing is written")
    print(f"passage '{h['title']}', vessel {h['vessel']}; format version {log.version}; "
          f"{len(log.entries)} entries")
    if not args.problems:
        print(f"  {'line':>5}  {'id':<6} {'kind':<8} {'logged UTC':<19}  entry")
        for e in log.entries:
            marks = ([f"struck by {struck[e.id]}"] if e.id in struck else []) + \
                ([f"corrected by {corrected[e.id]}"] if e.id in corrected else []) + \
                ([f"first of an import of {e.batch}"] if e.batch else [])
            print(f"  {e.line:>5}  {e.id:<6} {e.kind:<8} {_utc(e.logged_utc):<19}  "
                  f"{summary(e)}" + (f"  [{'; '.join(marks)}]" if marks else ""))
    if log.problems:
        print("problems:")
        for p in log.problems:
            print(f"  {p.severity}: {p}")
    warnings = sum(p.severity == "warning" for p in log.problems)
    print(f"{len(errors)} error(s), {warnings} warning(s): " + (
        "the log cannot be opened for writing until it is mended; nothing was changed"
        if errors else "the log can be opened for writing" + (
            " (a torn tail is set aside then)" if log.torn_tail else "")))
    print(CAUTION)
    return EXIT_DAMAGED if errors else 0
