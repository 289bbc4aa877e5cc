"""Handlers of the record commands: log, show, strike, correct, plot, export, import, help, quit."""

from __future__ import annotations

import json
from pathlib import Path

from ..angles import format_lat, format_lon
from ..errors import NavInputError
from .handlers import (dr_summary, reduction_report, setting_summary, show_reduction,
                       sight_summary, time_explain, trial_reduce)
from .state import QUIT, iso_z

MAX_IMPORT_ERRORS_SHOWN = 30


# ---------------------------------------------------------------- log, show

def entry_summary(e) -> str:
    d = e.data
    if e.kind == "setting":
        return setting_summary(d)
    if e.kind == "dr":
        return dr_summary(d)
    if e.kind == "sight":
        return sight_summary(d)
    if e.kind == "fix":
        size = (f", ellipse {d['ellipse_semi_major_nmi']:.1f} × {d['ellipse_semi_minor_nmi']:.1f}"
                " nmi" if "ellipse_semi_major_nmi" in d else "")
        warn = f", {len(d.get('warnings', ()))} warning(s)" if d.get("warnings") else ""
        return (f"{d['fix_kind'].replace('_', ' ')} {format_lat(d['lat_deg'])} "
                f"{format_lon(d['lon_deg'])} from {' '.join(d['sight_ids'])}{size}{warn}")
    if e.kind == "note":
        text = " ".join(d["text"].split())
        return text if len(text) <= 60 else text[:57] + "..."
    if e.kind == "compass_check":
        from .sky_cmds import compass_summary

        return compass_summary(d)
    if e.kind == "strike":
        return f"strikes {d['target']}: {d['reason']}"
    if e.kind == "correct":
        return f"corrects {d['target']}: {d['reason']}"
    if e.kind == "repair":
        return f"torn line {d['torn_line']} set aside in {d['side_file']}"
    if e.kind == "current":
        return (f"current set {d['set_deg']:05.1f}\u00b0, drift {d['drift_kn']:g} kn from "
                f"{d['utc'][11:16]} ({d.get('source', 'entered')})")
    if e.kind == "watch_check":
        from .times import watch_text

        return f"watch {watch_text(d['watch_error_s'])} against the {d['reference']}"
    return ""


def _marks(st, e) -> str:
    if e.kind not in ("setting", "dr", "sight", "fix", "note", "compass_check"):
        return ""
    chain = st.log.history_of(e.id)[1:]
    marks = [f"corrected by {c.id}" for c in chain if c.kind == "correct"]
    marks += [f"STRUCK by {c.id}" for c in chain if c.kind == "strike"]
    return f"  [{'; '.join(marks)}]" if marks else ""


def _when(e) -> str:
    utc = e.get("utc")
    if utc:
        return f"{utc[:10]} {utc[11:19]}"
    return f"(logged {e.logged_utc[11:16]})"


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
        st.say(f"{raw.id}  {raw.kind:<8} {_when(cur):<20} {entry_summary(cur)}{_marks(st, raw)}")


def _value(v) -> str:
    if isinstance(v, tuple):
        return " ".join(map(str, v))
    return str(v)


def run_show(st, req) -> None:
    eid = req.args["id"]
    raw = st.raw(eid)
    if raw.kind in ("strike", "correct"):
        st.say(f"{eid}: {raw.kind} of {raw['target']}, logged {raw.logged_utc}: {raw['reason']}")
        eid, raw = raw["target"], st.raw(raw["target"])
    cur = st.lookup(eid)
    shown = cur or raw
    st.say(f"{eid}  {raw.kind}, logged {raw.logged_utc}" + ("" if cur or raw.kind in (
        "passage", "repair") else "  -- STRUCK"))
    for k, v in shown.data.items():
        if k not in ("id", "kind", "logged_utc"):
            st.say(f"  {k:<22}{_value(v)}")
    history = st.log.history_of(eid)[1:] if raw.kind not in ("passage",) else []
    if history:
        st.say("  history:")
        before = raw.data
        for h in history:
            if h.kind == "strike":
                st.say(f"    {h.id} {h.logged_utc}  struck: {h['reason']}")
                continue
            after = h["replacement"]
            changed = [f"{k} {_value(before.get(k, '(none)'))} -> {_value(after.get(k, '(none)'))}"
                       for k in sorted(set(before) | set(after))
                       if k not in ("id", "kind", "logged_utc") and before.get(k) != after.get(k)]
            st.say(f"    {h.id} {h.logged_utc}  corrected: {h['reason']}")
            st.say(*(f"      {c}" for c in changed))
            before = after
    if raw.kind == "sight" and cur is not None:
        st.say(f"  time: {time_explain(cur)}")
        show_reduction(st, cur)


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
    names = ", ".join(sorted({k for k in changes if k not in ("kind",)}))
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
    out = Path(path) if path else _next_to_log(st, "-passage.png")
    from .checks_cmds import ep_track

    ep = ep_track(st.passage, track)          # issue 10: the EP track beside the DR's
    plot_passage(track, fixes, title=f"{st.vessel}: {st.title}", path=out,
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
    for err in errors[:MAX_IMPORT_ERRORS_SHOWN]:
        st.say(f"  {path}: {err}")
    if len(errors) > MAX_IMPORT_ERRORS_SHOWN:
        st.say(f"  ... and {len(errors) - MAX_IMPORT_ERRORS_SHOWN} more")
    rows = sorted({e.row for e in errors if e.row is not None})
    raise NavInputError(f"{len(errors)} problem(s) in {path}" +
                        (f" (rows {', '.join(map(str, rows[:20]))})" if rows else "") +
                        "; nothing was imported", field="file", example="mend the rows, then import")


def run_import(st, req) -> None:
    from ..sightfile import read_sight_file
    from ..workflow import reduce_rows, refused_rows

    path = req.args["path"]
    sf = read_sight_file(path)
    if sf.errors:
        _refuse_file(st, path, list(sf.errors))
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
        except NavInputError as err:
            st.say(f"  {e.id}  {sight_summary(e.data)}  not reduced: {err.reason}")


# ---------------------------------------------------------------- help, quit

def run_help(st, req) -> None:
    from .registry import ALIASES, COMMANDS, COMMANDS_LIST, TOPICS

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
    st.say(f"{c.syntax}", f"  {c.summary}", *(f"  {d}" for d in c.details))
    if c.examples:
        st.say("  for example:", *(f"    {x}" for x in c.examples))


def run_quit(st, req):
    return QUIT


__all__ = ["run_log", "run_show", "run_strike", "run_correct", "run_plot", "run_export",
           "run_import", "run_help", "run_quit", "entry_summary", "reduction_report"]
