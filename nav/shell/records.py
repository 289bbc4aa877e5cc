"""Handlers of the record commands: log, show, strike, correct, plot, export, import, help, quit."""

from __future__ import annotations

import json
from pathlib import Path

from ..errors import NavInputError
from ..timekeeping import format_date_hms, format_hm, parse_utc
from .entries import changed_labels, changes, field_lines, sight_summary, stale_note, summary
from .handlers import reduction_report, say_doubt, show_reduction, time_explain, trial_reduce
from .common import QUIT, iso_z

MAX_IMPORT_ERRORS_SHOWN = 30


# ---------------------------------------------------------------- log, show

KIND_WORD = {"passage": "passage log", "setting": "setting", "dr": "DR", "sight": "sight",
             "fix": "fix", "note": "note", "strike": "strike", "correct": "correction",
             "repair": "repair", "compass_check": "compass check"}


def entry_summary(e) -> str:
    return summary(e)


def _marks(st, e) -> str:
    if e.kind not in ("setting", "dr", "sight", "fix", "note", "compass_check"):
        return ""
    chain = st.log.history_of(e.id)[1:]
    marks = [f"corrected by {c.id}" for c in chain if c.kind == "correct"]
    marks += [f"STRUCK by {c.id}" for c in chain if c.kind == "strike"]
    if e.kind == "fix" and st.lookup(e.id) is not None:
        stale = stale_note(st, e)
        if stale:
            marks.append(f"! {stale}")
    return f"  [{'; '.join(marks)}]" if marks else ""


def _when(e) -> str:
    utc = e.get("utc")
    if utc:
        return format_date_hms(parse_utc(utc))
    return f"(logged {format_hm(parse_utc(e.logged_utc))})"


def run_log(st, req) -> None:
    entries = st.log.entries[1:]
    n = req.args["count"]
    shown = entries if n is None else entries[-n:]
    if not shown:
        st.say(f"the log {st.log.path.name} holds no entries yet")
        return
    if len(shown) < len(entries):
        st.say(f"(the latest {len(shown)} of {len(entries)} entries; `log all` lists them all)")
    for raw in shown:
        cur = st.lookup(raw.id) or raw
        kind = raw.kind.split("_")[0]           # compass_check: compass
        st.say(f"{raw.id}  {kind:<8} {_when(cur):<20} {entry_summary(cur)}{_marks(st, raw)}")


def _logged(e) -> str:
    return f"{format_date_hms(parse_utc(e.logged_utc))} UTC"


def run_show(st, req) -> None:
    eid = req.args["id"]
    raw = st.raw(eid)
    if raw.kind in ("strike", "correct"):
        st.say(f"{eid}: {KIND_WORD[raw.kind]} of {raw['target']}, logged {_logged(raw)}: "
               f"{raw['reason']}")
        eid, raw = raw["target"], st.raw(raw["target"])
    cur = st.lookup(eid)
    shown = cur or raw
    kind = KIND_WORD.get(raw.kind, raw.kind)
    if raw.kind == "fix":
        kind = shown["fix_kind"].replace("_", " ")
    st.say(f"{eid}  {kind}, logged {_logged(raw)}" + ("" if cur or raw.kind in (
        "passage", "repair") else "  -- STRUCK"))
    st.say(*field_lines({k: v for k, v in shown.data.items()
                         if not (raw.kind == "fix" and k == "fix_kind")}))
    history = st.log.history_of(eid)[1:] if raw.kind not in ("passage",) else []
    if history:
        st.say("  history:")
        before = raw.data
        for h in history:
            if h.kind == "strike":
                st.say(f"    {h.id} {_logged(h)}  struck: {h['reason']}")
                continue
            after = h["replacement"]
            st.say(f"    {h.id} {_logged(h)}  corrected: {h['reason']}")
            st.say(*(f"      {c}" for c in changes(before, after)))
            before = after
    if raw.kind == "fix" and cur is not None:
        stale = stale_note(st, cur)
        if stale:
            st.say(*st.wrap(f"  caution: this fix {stale}; strike it and run fix again to use "
                            "the sights as they now stand", "    "))
        from ..timekeeping import parse_utc
        from .common import ut1_lines

        st.say(*ut1_lines(st, [parse_utc(x["utc"]) for x in map(st.lookup, cur["sight_ids"])
                               if x is not None], parse_utc(cur["utc"])))
    if raw.kind == "sight" and cur is not None:
        st.say(f"  time: {time_explain(cur)}")
        show_reduction(st, cur)
        _show_worksheet(st, cur)


def _show_worksheet(st, e) -> None:
    """The sight in paper order (:func:`nav.marking.worksheet.row_worksheet_lines`)."""
    from ..marking.worksheet import row_worksheet_lines

    try:
        st.say(*row_worksheet_lines(st.passage.reduction_view(e).sight_row(e)))
    except NavInputError:
        pass                  # not reduced yet: show_reduction has said why


# ---------------------------------------------------------------- strike, correct

def _fixes_using(st, sid: str) -> list[str]:
    return [f.id for f in st.passage.fix_entries if sid in f["sight_ids"]]


def run_strike(st, req) -> None:
    eid = req.args["id"]
    used = _fixes_using(st, eid) if st.raw(eid).kind == "sight" else []
    e = st.log.strike(eid, req.args["reason"])
    st.changed()
    st.say(f"logged {e.id}: {eid} struck ({req.args['reason']}); it stays in the log, marked, "
           "and no longer counts")
    if used:
        st.say(f"  caution: fix {' '.join(used)} used {eid}; that fix stands until you strike it "
               "(then run fix again)")


def run_correct(st, req) -> None:
    eid, kind, changes = req.args["id"], req.args["kind"], req.args["changes"]
    cur = st.lookup(eid)
    merged = {**{k: v for k, v in cur.to_dict().items() if k not in ("id", "logged_utc")},
              **changes}
    if kind == "sight":
        merged["utc"] = merged["utc"] if isinstance(merged["utc"], str) else iso_z(merged["utc"])
        trial_reduce(st, merged)
    used = _fixes_using(st, eid) if kind == "sight" else []
    e = st.log.correct(eid, req.args["reason"], changes)
    st.changed()
    names = changed_labels(k for k in changes if k != "kind")
    st.say(f"logged {e.id}: correction of {eid} ({names}): {req.args['reason']}")
    if req.time is not None:
        st.say(f"  time: {req.time.explain}")
    if kind == "sight":
        show_reduction(st, st.lookup(eid))
    if used:
        st.say(f"  caution: fix {' '.join(used)} used {eid} as it was; strike that fix and run "
               "fix again to use the correction")


# ---------------------------------------------------------------- plot, export

def _next_to_log(st, suffix: str) -> Path:
    p = st.log.path
    return p.with_name(p.name[:-len(p.suffix)] + suffix if p.suffix else p.name + suffix)


def _export_point_kind(basis: str) -> str:
    return basis.replace(" ", "_")


def run_plot(st, req) -> None:
    from ..export import ExportPoint, points_from_log
    from ..passage import passage_before
    from ..sailing import rhumb_line

    what, fid, path = req.args["what"], req.args["id"], req.args["path"]
    if what is None:
        what = "fix" if st.passage.fix_entries else "passage"
    if what == "fix":
        if fid is None:
            if not st.passage.fix_entries:
                raise NavInputError("there is no fix yet: run fix first, or plot passage",
                                    field="plot", example="fix, then plot")
            fid = st.passage.fix_entries[-1].id
        fx = st.lookup(fid)
        if fx is None:
            raise NavInputError(f"{fid} is struck", field="id", example="plot fix e0009")
        try:
            before = passage_before(st.passage, fid)
            result, _ = before.fix_from(list(fx["sight_ids"]))
        except NavInputError as err:
            raise NavInputError(f"fix {fid} cannot be drawn again: {err.reason}", field="id",
                                example=f"strike {fid} REASON, then fix") from None
        out = Path(path) if path else _next_to_log(st, f"-{fid}.png")
        from ..plotting import plot_fix_sheet

        kind = result.fix.kind
        try:
            ep = before.ep(result.fix.utc)        # issue 10: the EP beside the DR
        except NavInputError:
            ep = None
        plot_fix_sheet(result.fix, result.lops, dr=(result.dr_lat_deg, result.dr_lon_deg),
                       title=f"{st.vessel}: {kind} {result.fix.utc:%Y-%m-%d %H:%M} UTC ({fid})",
                       path=out, replace=req.args.get("replace", False),
                       replace_hint=SHELL_REPLACE_HINT,
                       **({"known": ep, "known_label": "EP (DR + current)"} if ep else {}))
        _, moved = rhumb_line(fx["lat_deg"], fx["lon_deg"], result.fix.lat_deg,
                              result.fix.lon_deg)
        if float(moved) > 0.05:
            st.say(f"  note: drawn from the sights as they now stand, {float(moved):.1f} nmi "
                   f"from the fix logged as {fid}")
        st.say(f"plotting sheet of {fid} written to {out}")
        return
    from ..plotting import plot_passage

    track = [ExportPoint(t, lat, lon, _export_point_kind(b), "")
             for t, lat, lon, b in st.passage.track_points()]
    fixes, _ = points_from_log(st.log)
    if not track and not fixes:
        raise NavInputError("nothing to plot yet: the log holds no DR position and no fix; "
                            "enter a DR, or take sights and run fix", field="plot",
                            example="dr 41 12.5 N 032 07.1 W course 245 speed 6.5 at 18:00")
    out = Path(path) if path else _next_to_log(st, "-passage.png")
    from .checks_cmds import ep_track

    ep = ep_track(st.passage, track)          # issue 10: the EP track beside the DR's
    resets = [ExportPoint(t, lat, lon, "dr", "") for t, lat, lon in st.passage.dr_resets()]
    plot_passage(track, fixes, resets=resets, title=f"{st.vessel}: {st.title}", path=out,
                 replace=req.args.get("replace", False), replace_hint=SHELL_REPLACE_HINT,
                 **({"reference_track": ep, "reference_label": "EP track (DR + current)"}
                    if ep else {}))
    st.say(f"passage plot written to {out}" + (", with the EP track" if ep else ""))


SHELL_REPLACE_HINT = "the word replace at the end"


def _write_new(st, path: Path, text: str, replace: bool) -> None:
    """The file rules of nav.files, shared with the CLI (its --replace is our word replace)."""
    from ..files import write_output

    write_output(path, text, replace=replace, field="file",
                 example=f"export ... {path.stem}-2{path.suffix}",
                 replace_hint=SHELL_REPLACE_HINT, protect=[st.log.path])


def run_export(st, req) -> None:
    from .. import export as ex

    fmt = req.args["format"]
    path = Path(req.args["path"]) if req.args["path"] else _next_to_log(st, "." + fmt)
    fixes, track = ex.points_from_log(st.log)
    if fmt == "gpx":
        text = ex.fixes_to_gpx(fixes, track, name=st.title, created_utc=st.now())
        what = f"{len(fixes)} fix(es) and {len(track)} track point(s)"
    elif fmt == "geojson":
        text = json.dumps(ex.fixes_to_geojson(fixes, track, name=st.title), indent=1,
                          ensure_ascii=False) + "\n"
        what = f"{len(fixes)} fix(es) and {len(track)} track point(s)"
    else:
        rows = ex.sight_rows(st.log)
        text = ex.sights_to_csv(rows, ex.SIGHT_CSV_COLUMNS)
        what = f"{len(rows)} sight(s)"
    _write_new(st, path, text, req.args.get("replace", False))
    st.say(f"exported {what} as {fmt.upper() if fmt != 'geojson' else 'GeoJSON'} to {path}")


# ---------------------------------------------------------------- import

def _refuse_file(st, path: str, errors) -> None:
    from ..sightfile import summarise_errors

    said = summarise_errors(errors)
    for line in said[:MAX_IMPORT_ERRORS_SHOWN]:
        st.say(f"  {path}: {line}")
    if len(said) > MAX_IMPORT_ERRORS_SHOWN:
        st.say(f"  ... and {len(said) - MAX_IMPORT_ERRORS_SHOWN} more")
    lines = sorted({e.line if e.line is not None else e.row for e in errors
                    if e.line is not None or e.row is not None})
    raise NavInputError(f"{len(errors)} problem(s) in {path}" +
                        (f" (lines {', '.join(map(str, lines[:20]))})" if lines else "") +
                        "; nothing was imported", field="file", example="mend the rows, then import")


def run_import(st, req) -> None:
    from ..sightfile import read_sight_file
    from ..workflow import reduce_rows, refused_rows

    path = req.args["path"]
    sf = read_sight_file(path)
    if sf.errors:
        _refuse_file(st, path, list(sf.errors))
    for warning in sf.warnings:
        st.say(f"  warning: {warning}")
    rows = list(sf.rows)
    try:
        reduce_rows(rows)
    except NavInputError:
        errors = refused_rows(rows)
        if errors:
            _refuse_file(st, path, errors)
        raise
    from ..importing import blank_cell_notes, entries_from_rows

    for note in blank_cell_notes(rows, st.passage.settings):
        st.say(f"  note: {note}")
    added = st.append_many(entries_from_rows(rows, Path(path).name))
    sights = [e for e in added if e.kind == "sight"]
    st.say(f"imported {len(sights)} sight(s) and {len(added) - len(sights)} DR entr"
           f"{'y' if len(added) - len(sights) == 1 else 'ies'} from {path} "
           f"({added[0].id} to {added[-1].id})")
    for e in sights:
        try:
            red = reduce_rows([st.passage.sight_row(e)]).sight(0)
            st.say(f"  {e.id}  {sight_summary(e.data)}  intercept {float(red.intercept_nmi):+.1f}"
                   f" nmi, Zn {float(red.zn_deg):05.1f}°" + ("  !" if red.warnings else ""))
            say_doubt(st, e)
        except NavInputError as err:
            st.say(f"  {e.id}  {sight_summary(e.data)}  not reduced: {err.reason}")


# ---------------------------------------------------------------- help, quit

def run_help(st, req) -> None:
    table = st.commands
    ALIASES, COMMANDS, COMMANDS_LIST, TOPICS = (table.aliases, table.by_name, table.list,
                                                table.topics)
    topic = req.args["topic"]
    if topic is None:
        width = max(len(c.name) for c in COMMANDS_LIST)
        st.say("Commands (help COMMAND for one in full; help time, help position):")
        st.say(*(f"  {c.name:<{width}}  {c.summary}" for c in COMMANDS_LIST))
        return
    key = ALIASES.get(topic, topic)
    if key in TOPICS:
        st.say(*TOPICS[key])
        return
    if key not in COMMANDS:
        raise NavInputError(f"no help on '{topic}'", field="topic",
                            example="help sight, help time")
    c = COMMANDS[key]
    st.say(*st.wrap(c.syntax), *(x for d in (c.summary, *c.details)
                                 for x in st.wrap(f"  {d}", "    ")))
    if c.examples:
        st.say("  for example:", *(f"    {x}" for x in c.examples))


def run_quit(st, req):
    return QUIT


__all__ = ["run_log", "run_show", "run_strike", "run_correct", "run_plot", "run_export",
           "run_import", "run_help", "run_quit", "entry_summary", "reduction_report"]
