"""`nav demo`, `nav export` and `nav import`: the passage log from the command line.

- ``nav demo [--out DIR]`` replays the invented demo passage shipped in ``nav/data/demo/`` (made
  by ``tools/make_demo_passage.py``): every stored fix is computed again from its sights, compared
  with the known true track, drawn on a plotting sheet; then the passage plot.
- ``nav export LOG --gpx FILE | --geojson FILE | --csv FILE | --reductions FILE``: fixes and the
  DR track as GPX 1.1 or GeoJSON; the sights as a batch CSV file (the columns ``nav reduce`` and
  ``nav fix`` read, with the settings and DR each reduction used filled in), or as a CSV table
  of their reductions (Ho, GHA, Dec, LHA, Hc, Zn, intercept). Cells that could start a
  spreadsheet formula are neutralised (see :mod:`nav.export`).
- ``nav import SIGHTS.csv --log LOG [--new --vessel NAME --title TITLE]``: the sights of a batch
  file (the contract of ``nav reduce`` and ``nav fix``) appended to a passage log in one batch.

Files follow :mod:`nav.files`: only regular files are read or written (a FIFO, a device or a
folder is refused at once), and an existing output file (an export, the demo's pictures) is
replaced only with ``--replace``. ``nav import`` refuses a sight that is already logged (the log
checks it) and says, on opening, when an earlier import was cut off and set aside.

Bad input is reported one problem per line on stderr, exit code 2, and nothing is written.
"""

from __future__ import annotations

import bisect
import csv
import json
import os
import sys
import time
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from .. import CAUTION
from ..errors import NavInputError, printable

DEMO_NAME = "demo-azores-madeira"
DEMO_OUT = "demo_output"
DEMO_WORKERS = 2                          # processes drawing the demo's plots
KNOWN_LABEL = "known position (demo)"     # the demo's truth, as its plots name it
TRACK_LABEL = "known track (demo)"


def register(sub) -> None:
    d = sub.add_parser(
        "demo", help="replay the invented demo passage: fixes checked against the known track",
        description="Replay the bundled demo passage (an invented cutter from the Azores to "
                    "Madeira): each fix and running fix is computed again from its sights, "
                    "compared with the known true track, and drawn on a plotting sheet; the "
                    "passage plot follows. The sights are invented, not observations.")
    d.add_argument("--out", metavar="DIR", default=DEMO_OUT,
                   help=f"folder for the PNG files (default: {DEMO_OUT}/ in the current folder)")
    d.add_argument("--replace", action="store_true",
                   help="replace the PNG files of an earlier run (without it, existing files "
                        "are refused)")
    d.set_defaults(func=run_demo)

    e = sub.add_parser(
        "export", help="fixes and track as GPX or GeoJSON, sights as CSV",
        description="Export a passage log: its fixes and DR track as GPX 1.1 or GeoJSON; its "
                    "sights as a batch CSV file that nav reduce, nav fix and nav import read "
                    "back (each sight with the index error, height of eye, weather, horizon and "
                    "DR its reduction used), or as a CSV table of their reductions. Decimal "
                    "degrees; cells that could start a spreadsheet formula are made text. "
                    "FILE '-' writes to standard output. Only regular files are written; an "
                    "existing file only with --replace.")
    e.add_argument("log", metavar="LOG", help="the passage log (.jsonl)")
    e.add_argument("--replace", action="store_true",
                   help="replace FILE if it exists (without it, an existing file is refused)")
    fmt = e.add_mutually_exclusive_group(required=True)
    fmt.add_argument("--gpx", metavar="FILE", help="fixes as waypoints, the DR track as a track")
    fmt.add_argument("--geojson", metavar="FILE", help="fixes as Points, the DR track as a line")
    fmt.add_argument("--csv", metavar="FILE",
                     help="the sights as a batch file (the columns of nav reduce and nav fix)")
    fmt.add_argument("--reductions", metavar="FILE",
                     help="the sights with their reductions: Ho, GHA, Dec, LHA, Hc, Zn, "
                          "intercept (an output table, not a batch file)")
    e.set_defaults(func=run_export)

    i = sub.add_parser(
        "import", help="append the sights of a batch CSV file to a passage log",
        description="Append the sights of a batch CSV file (the columns of nav reduce and "
                    "nav fix) to a passage log in one batch: a row's DR, course or speed becomes "
                    "a dr entry, each sight a sight entry timed in UTC, every value kept as "
                    "typed. An empty instrument cell (index error, height of eye, temperature, "
                    "pressure, horizon) takes the log's setting in force. A file with any bad "
                    "cell is refused whole.")
    i.add_argument("file", metavar="SIGHTS.csv")
    i.add_argument("--log", required=True, metavar="LOG", help="the passage log to append to")
    i.add_argument("--new", action="store_true", help="create the log (it must not exist)")
    i.add_argument("--vessel", metavar="NAME", help="vessel of a new log (with --new)")
    i.add_argument("--title", metavar="TITLE", help="title of a new log (with --new)")
    i.set_defaults(func=run_import)


class _Reported(NavInputError):
    """Problems already printed one per line; the CLI adds this summary line."""


# ---------------------------------------------------------------- the demo's data

def demo_paths() -> tuple[Path, Path, Path]:
    """(log, true track, sights' truth) of the demo: the copy inside the package, or, in a
    source checkout, the one in sight_logs/."""
    from importlib import resources

    names = (f"{DEMO_NAME}.jsonl", f"{DEMO_NAME}.truth.csv", f"{DEMO_NAME}.sights-truth.csv")
    places = []
    packaged = resources.files("nav").joinpath("data", "demo")
    if isinstance(packaged, Path):
        places.append(packaged)
    places.append(Path(__file__).resolve().parents[2] / "sight_logs")
    for folder in places:
        paths = tuple(folder / n for n in names)
        if all(p.is_file() for p in paths):
            return paths
    raise NavInputError("the demo passage is not installed (nav/data/demo/ is missing); "
                        "reinstall nav", field="demo", example="pip install .")


@dataclass(frozen=True)
class TruePoint:
    utc: datetime
    lat_deg: float
    lon_deg: float


def read_truth(path: Path) -> list[TruePoint]:
    """The demo's true track: rhumb-line legs between consecutive rows (time order)."""
    from ..timekeeping import parse_utc

    with open(path, encoding="utf-8", newline="") as f:
        rows = [TruePoint(parse_utc(r["utc"]), float(r["lat_deg"]), float(r["lon_deg"]))
                for r in csv.DictReader(f)]
    return sorted(rows, key=lambda p: p.utc)


def true_position(track: list[TruePoint], t: datetime) -> tuple[float, float]:
    """Where the vessel truly was at `t`: on the rhumb line between the rows either side (the
    generator writes a row at every change of leg or current, so this is exact)."""
    from ..sailing import rhumb_direct, rhumb_line

    times = [p.utc for p in track]
    i = bisect.bisect_right(times, t) - 1
    if i < 0 or t > times[-1]:
        raise NavInputError(f"{t:%Y-%m-%d %H:%M} UTC is outside the demo's true track",
                            field="utc")
    a = track[i]
    if a.utc == t or i + 1 == len(track):
        return a.lat_deg, a.lon_deg
    b = track[i + 1]
    course, dist = rhumb_line(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg)
    frac = (t - a.utc).total_seconds() / (b.utc - a.utc).total_seconds()
    lat, lon = rhumb_direct(a.lat_deg, a.lon_deg, float(course), float(dist) * frac)
    return float(lat), float(lon)


def read_sights_truth(path: Path) -> dict[str, dict]:
    with open(path, encoding="utf-8", newline="") as f:
        return {r["id"]: r for r in csv.DictReader(f)}


# ---------------------------------------------------------------- nav demo

@dataclass(frozen=True)
class DemoFix:
    """One replayed fix, as the demo prints it (the tests read these too)."""

    entry_id: str
    kind: str
    utc: datetime
    n_sights: int
    error_nmi: float
    error_bearing_deg: float
    inside_ellipse: bool
    dr_error_nmi: float
    logged_diff_nmi: float
    run_hours: float
    flagged: tuple
    struck: bool
    sheet: Path


def replay_demo(out_dir: Path, say=print, replace: bool = False,
                workers: int = 1) -> list[DemoFix]:
    """Replay the demo into `out_dir` (created), printing as it goes; returns the fixes.
    Its pictures follow the file rules of nav.files: an existing one only with `replace`.

    The plots are drawn on one figure, or with `workers` > 1 in that many worker processes
    while the fixes are computed (:class:`nav.commands.sheet_pool.SheetPool`)."""
    from ..angles import format_lat, format_lon
    from ..export import ExportPoint
    from ..fix import in_ellipse
    from ..logbook import load_log
    from ..passage import Passage, passage_before
    from ..render import fix_lines
    from ..sailing import rhumb_line
    from ..timekeeping import format_hm

    log_path, truth_path, sights_path = demo_paths()
    try:
        out_dir.mkdir(parents=True, exist_ok=True)
    except OSError as err:
        raise NavInputError(f"cannot create {out_dir} ({err.strerror})", field="out",
                            example="--out demo_output") from None
    earlier = sorted(p.name for p in [*out_dir.glob("fix-*.png"), out_dir / "passage.png"]
                     if os.path.lexists(p))
    if earlier and not replace:        # refused before any work (the rule of nav.files)
        raise NavInputError(f"{out_dir} already holds the pictures of an earlier run "
                            f"({', '.join(earlier[:3])}{' ...' if len(earlier) > 3 else ''}); "
                            "add --replace to replace them", field="out",
                            example="nav demo --replace, or nav demo --out another_folder")
    log = load_log(log_path)
    passage = Passage(log)
    track = read_truth(truth_path)
    sight_truth = read_sights_truth(sights_path)
    vessel, title = log.header["vessel"], log.header["title"]
    short = vessel.split(" (")[0]
    # every fix the log holds, struck ones too (the demo shows the one its blunder spoiled)
    fixes = [log.effective_by_id(e.id) or e for e in log.entries if e.kind == "fix"]
    struck = {e["target"]: e for e in log.entries if e.kind == "strike"}
    start = passage.anchors[0]

    say(CAUTION)
    say("")
    say(title)
    say(f"  vessel     {vessel}")
    say(f"  departure  {format_lat(start.lat_deg)}  {format_lon(start.lon_deg)}  "
        f"{start.utc:%Y-%m-%d %H:%M} UTC ({start.basis})")
    say(f"  log        {len(passage.sight_entries)} sights, {len(fixes)} fixes and running fixes "
        f"({len(struck)} struck), {log_path.name}")
    say("  The sights were made up from a known true track, with random errors (σ 0.5′), one "
        "deliberate blunder, and a current the crew did not know; so every fix below can be "
        "checked against where the vessel really was.")
    from .sheet_pool import SheetPool

    pool = SheetPool(workers)
    try:
        out: list[DemoFix] = []
        replayed = []
        for k, e in enumerate(fixes, 1):
            before = passage_before(passage, e.id)
            result, used = before.fix_from(list(e["sight_ids"]))
            f = result.fix
            dr = before.where(f.utc)
            t_lat, t_lon = true_position(track, f.utc)
            bearing, err = (float(x) for x in rhumb_line(t_lat, t_lon, f.lat_deg, f.lon_deg))
            dr_err = float(rhumb_line(t_lat, t_lon, dr.lat_deg, dr.lon_deg)[1])
            logged = float(rhumb_line(e["lat_deg"], e["lon_deg"], f.lat_deg, f.lon_deg)[1])
            inside = bool(in_ellipse(f, t_lat, t_lon))
            run_h = (f.utc - min(s.utc for s in result.sights)).total_seconds() / 3600.0
            say("")
            say(f"[{k}/{len(fixes)}] {e.id}: {e.get('note', f.kind)}")
            for line in fix_lines(f, dr_lat_deg=dr.lat_deg, dr_lon_deg=dr.lon_deg):
                say(line)
            say(f"  logged as    {e.id} ({e['fix_kind'].replace('_', ' ')}); computed again now, "
                f"{logged:.2f} nmi from the logged position")
            say(f"  known        {format_lat(t_lat)}  {format_lon(t_lon)}  (the demo's true track)")
            say(f"  fix error    {err:.2f} nmi, the fix lies {bearing:05.1f}° from the known "
                f"position; {'inside' if inside else 'OUTSIDE'} the "
                f"{f.ellipse.confidence * 100:g}% ellipse")
            say(f"  DR error     {dr_err:.2f} nmi (the DR knows nothing of the current)")
            flagged = []
            for i, bad in enumerate(f.flags):
                if not bad:
                    continue
                entry = used[i]
                st = sight_truth.get(entry.id, {})
                blunder = float(st.get("blunder_arcmin") or 0.0)
                flagged.append(entry.id)
                what = (f"the demo put a {blunder:+.1f}′ blunder into this sight on purpose"
                        if blunder else "this sight carries only its random error")
                say(f"  residual check: {f.labels[i]} ({entry.id}) flagged, normalised residual "
                    f"{f.normalised_residuals[i]:+.1f}: {what}")
            if e.id in struck:
                say(f"  struck       by {struck[e.id].id}: {struck[e.id]['reason']}")
            if not flagged and run_h * 60.0 > 30.0:
                say(f"  running fix: the earlier sight was advanced {run_h:.1f} h along the DR "
                    "legs; the unknown current over that run is an error the ellipse cannot show")
            sheet = out_dir / f"fix-{k:02d}-{f.utc:%m%d}-{format_hm(f.utc).replace(':', '')}.png"
            pool.draw(
                "plot_fix_sheet", f, result.lops, dr=(dr.lat_deg, dr.lon_deg, f.utc),
                known=(t_lat, t_lon, f.utc), known_label=KNOWN_LABEL, path=sheet,
                title=f"{short} (invented demo): {f.kind} {f.utc:%d %b %Y} {format_hm(f.utc)} UTC "
                      f"({e.id}" + (", struck)" if e.id in struck else ")"), replace=replace)
            say(f"  plotting sheet {sheet}")
            out.append(DemoFix(e.id, f.kind, f.utc, f.n_sights, err, bearing, inside, dr_err, logged,
                               run_h, tuple(flagged), e.id in struck, sheet))
            if e.id not in struck:
                replayed.append(f)

        pts = [ExportPoint(t, lat, lon, basis.replace(" ", "_"), "")
               for t, lat, lon, basis in passage.track_points()]
        plot_path = out_dir / "passage.png"
        truth = [ExportPoint(p.utc, p.lat_deg, p.lon_deg, "other", "") for p in track]
        resets = [ExportPoint(t, lat, lon, "dr", "") for t, lat, lon in passage.dr_resets()]
        pool.draw("plot_passage", pts, replayed, resets=resets, reference_track=truth, reference_label=TRACK_LABEL,
                  title=f"{short} (invented demo): Azores to Madeira, DR track, fixes and the "
                        "known track", path=plot_path, replace=replace)
        pool.close()
    finally:
        pool.abandon()
    say("")
    say("Fixes against the known track")
    say(f"  {'#':>2}  {'UTC':<16} {'kind':<12} {'sights':>6}  {'error':>9}  {'95% ellipse':<11}"
        f"  {'DR error':>8}")
    for k, d in enumerate(out, 1):
        say(f"  {k:>2}  {d.utc:%m-%d %H:%M:%S}   {d.kind:<12} {d.n_sights:>6}  "
            f"{d.error_nmi:5.2f} nmi  {'inside' if d.inside_ellipse else 'OUTSIDE':<11}  "
            f"{d.dr_error_nmi:4.1f} nmi" + ("  flagged a sight" if d.flagged else "")
            + (", struck" if d.struck else ""))
    say(f"  passage plot   {plot_path}")
    return out


def run_demo(args) -> int:
    t0 = time.perf_counter()
    replay_demo(Path(args.out), replace=args.replace,
                workers=min(DEMO_WORKERS, os.cpu_count() or 1))
    print(f"\nReplayed in {time.perf_counter() - t0:.1f} s.")
    print(CAUTION)
    return 0


# ---------------------------------------------------------------- nav export

def _write_text(target: str, text: str, log_path: Path, replace: bool) -> str:
    """Write `text` to `target` ('-' is standard output) by the rules of nav.files."""
    from ..files import write_output

    if target == "-":
        sys.stdout.write(text)
        sys.stdout.flush()
        return "standard output"
    write_output(target, text, replace=replace, field="file", example="passage.gpx",
                 protect=[log_path])
    return target


def run_export(args) -> int:
    from .. import export as ex
    from ..logbook import load_log
    from ..passage import Passage

    target = args.gpx or args.geojson or args.csv or args.reductions
    if target != "-":                  # refused before any work: a device, a FIFO, a folder ...
        from ..files import check_output

        check_output(target, replace=args.replace, example="passage.gpx", protect=[args.log])
    log = load_log(args.log)
    name = log.header["title"]
    sights = args.csv or args.reductions
    if sights:
        out = ex.export_sights(log)
        for note in out.notes:
            print(f"nav export: note: {note}", file=sys.stderr)
        if args.csv:
            text = ex.sights_to_csv(out.rows, ex.SIGHT_CSV_COLUMNS)
            what = f"{len(out.rows)} sight(s) as a batch CSV file"
        else:
            text = ex.sights_to_csv(out.reductions, ex.REDUCTION_CSV_COLUMNS)
            what = f"{len(out.reductions)} sight(s) with their reductions as CSV"
        target = sights
    else:
        fixes, _ = ex.points_from_log(log)
        track = [ex.ExportPoint(t, lat, lon, basis.replace(" ", "_"), "")
                 for t, lat, lon, basis in Passage(log).track_points()]
        if args.gpx:
            text, target, fmt = ex.fixes_to_gpx(fixes, track, name=name), args.gpx, "GPX 1.1"
        else:
            text = json.dumps(ex.fixes_to_geojson(fixes, track, name=name), indent=1,
                              ensure_ascii=False) + "\n"
            target, fmt = args.geojson, "GeoJSON"
        what = f"{len(fixes)} fix(es) and a DR track of {len(track)} point(s) as {fmt}"
    where = _write_text(target, text, Path(args.log), args.replace)
    print(f"nav export: wrote {what} to {where}", file=sys.stderr if target == "-" else sys.stdout)
    if target != "-":                  # every export holds positions (the CSV files: the DRs)
        print(CAUTION)
    return 0


# ---------------------------------------------------------------- nav import

def _refuse(args, errors) -> None:
    from ..sightfile import summarise_errors

    for line in summarise_errors(errors):
        print(f"nav import: {printable(args.file)}: {line}", file=sys.stderr)
    lines = sorted({e.line if e.line is not None else e.row for e in errors
                    if e.line is not None or e.row is not None})
    raise _Reported(f"{len(errors)} problem(s) in {args.file}"
                    + (f" (line{'s' if len(lines) > 1 else ''} {', '.join(map(str, lines[:20]))})"
                       if lines else "") + "; nothing was logged", field="file",
                    example="mend the file, then import again")


def run_import(args) -> int:
    from ..logbook import PassageLog, new_log
    from ..sightfile import read_sight_file
    from ..importing import entries_from_rows
    from ..workflow import reduce_rows, refused_rows

    if args.new and not (args.vessel and args.title):
        raise NavInputError("a new log needs --vessel and --title", field="new",
                            example='--new --vessel "Kittiwake" --title "Azores to Madeira"')
    if not args.new and (args.vessel or args.title):
        raise NavInputError("--vessel and --title name a new log: add --new, or leave them out "
                            "to append to an existing log", field="new",
                            example='--new --vessel "Kittiwake" --title "Azores to Madeira"')
    if args.new and Path(args.log).exists():
        raise NavInputError(f"{args.log} already exists; a passage log is never overwritten "
                            "(leave out --new to append to it)", field="log",
                            example=f"--log {args.log}")
    sf = read_sight_file(args.file)
    if sf.errors:
        _refuse(args, list(sf.errors))
    for warning in sf.warnings:
        print(f"nav import: {printable(args.file)}: warning: {warning}", file=sys.stderr)
    rows = list(sf.rows)
    try:
        red = reduce_rows(rows)
    except NavInputError:
        errors = refused_rows(rows)
        if not errors:
            raise
        _refuse(args, errors)
    from ..plausibility import doubtful_sights

    doubts = doubtful_sights(rows, red)   # logged as typed, but said (nav fix leaves them out)
    entries = entries_from_rows(rows, Path(args.file).name)
    log = new_log(args.log, args.vessel, args.title) if args.new else PassageLog.open(args.log)
    for p in log.problems:             # a torn line or a cut-off import set aside on opening
        if p.severity == "warning":
            print(f"nav import: caution: {args.log}: {p}", file=sys.stderr)
    for d in doubts:
        r = rows[d.index]
        print(f"nav import: {printable(args.file)}: warning: line {r.line}, {r.body}: doubtful, "
              f"left out of fixes unless asked: {d.text()}", file=sys.stderr)
    try:
        _append(args, log, rows, entries)
    except BaseException:
        log.close()
        if args.new:        # nothing but the header we wrote a moment ago
            Path(args.log).unlink()
        raise
    log.close()
    return 0


def _append(args, log, rows, entries) -> None:
    from ..importing import blank_cell_notes
    from ..passage import Passage

    if not args.new:   # an empty instrument cell takes the log's setting, not nav fix's default
        for note in blank_cell_notes(rows, Passage(log).settings):
            print(f"nav import: note: {note}", file=sys.stderr)
    added = log.append_many(entries)
    sights = sum(e.kind == "sight" for e in added)
    drs = len(added) - sights
    print(f"nav import: logged {sights} sight(s) and {drs} DR entr{'y' if drs == 1 else 'ies'} "
          f"from {args.file} to {args.log} ({added[0].id} to {added[-1].id})")
