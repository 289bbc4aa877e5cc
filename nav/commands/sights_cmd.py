"""`nav reduce FILE.csv` and `nav fix FILE.csv`: the batch contract scripts rely on."""

from __future__ import annotations

import json
import sys

from .. import CAUTION
from ..errors import NavInputError, printable

# nav.sightfile (numpy, through the shared parsers) is imported inside the commands, so that
# registering them imports nothing heavy (tests/test_offline.py checks it).

SKIP_HELP = "compute from the valid rows and list the bad ones (default: refuse a partly bad file)"


def register(sub) -> None:
    p = sub.add_parser("reduce", help="reduce every sight of a CSV file, step by step",
                       description="Reduce each sight of a batch CSV file: Hs, every correction, "
                                   "Ho, GHA, Dec, LHA, Hc, Zn and the intercept.")
    p.add_argument("file", metavar="SIGHTS.csv")
    p.add_argument("--json", action="store_true", help="print a JSON list, one object per sight")
    p.add_argument("--ap", action="store_true",
                   help="reduce from the assumed position that sight-reduction tables use "
                        "(whole-degree latitude and LHA), to check table work")
    p.add_argument("--worksheet", action="store_true",
                   help="print each reduction in the order it is worked on paper, the tables' "
                        "way (time, GHA hour plus increment, v and d, AP, Z and its rule, the "
                        "main correction, Hc and the intercept)")
    p.add_argument("--skip-bad-rows", action="store_true", help=SKIP_HELP)
    p.set_defaults(func=run_reduce)

    f = sub.add_parser("fix", help="fix or running fix from the sights of a CSV file",
                       description="Cross the lines of position of a batch CSV file into a fix "
                                   "(least squares, iterated) at the time of the last sight, "
                                   "earlier sights advanced by the DR run, with its error ellipse.")
    f.add_argument("file", metavar="SIGHTS.csv")
    f.add_argument("--json", action="store_true", help='print {"fix": {...}, "sights": [...]}')
    f.add_argument("--confidence", type=float, default=0.95,
                   help="probability the error ellipse is meant to cover (default 0.95)")
    f.add_argument("--plot", metavar="FILE.png|FILE.pdf", help="also draw the plotting sheet")
    f.add_argument("--replace", action="store_true",
                   help="let --plot replace an existing file (without it, an existing file is "
                        "refused)")
    f.add_argument("--skip-bad-rows", action="store_true", help=SKIP_HELP)
    f.add_argument("--bias", action="store_true",
                   help="also estimate one altitude error shared by all sights (index error, "
                        "height of eye, abnormal dip or refraction); needs bodies all round")
    f.add_argument("--average-runs", action="store_true",
                   help="replace each run of 3+ sights of one body within 15 min by its averaged "
                        "sight (a flagged shot left out), as `nav series` shows")
    f.add_argument("--use-doubtful", action="store_true",
                   help="also use sights that their DR cannot explain (left out by default; "
                        "each is named with the reason and any slip that explains it)")
    f.set_defaults(func=run_fix)


class _Reported(NavInputError):
    """Errors already printed one per line; the CLI adds a summary line."""


def _where(errors) -> str:
    """``line(s) 3, 5`` of the errors (rows where a line is not known)."""
    lines = sorted({e.line if e.line is not None else e.row for e in errors
                    if e.line is not None or e.row is not None})
    return f"line(s) {', '.join(map(str, lines))}"


def _load(args):
    from ..sightfile import read_sight_file, summarise_errors

    sf = read_sight_file(args.file, skip_bad_rows=args.skip_bad_rows)
    for line in summarise_errors(sf.errors):
        print(f"nav {args.command}: {printable(args.file)}: {line}", file=sys.stderr)
    if sf.errors and not args.skip_bad_rows:
        raise _Reported(f"{len(sf.errors)} problem(s) in {args.file}; nothing was computed "
                        "(mend them, or use --skip-bad-rows)", field="file")
    if sf.errors:
        print(f"nav {args.command}: skipped {_where(sf.errors)}", file=sys.stderr)
    for warning in sf.warnings:
        print(f"nav {args.command}: {printable(args.file)}: warning: {warning}", file=sys.stderr)
    if not sf.rows:
        raise NavInputError("no valid sight left", field="file", example="utc,body,hs,dr_lat,dr_lon")
    return sf.rows


def _reduce(args, rows, use_ap=False):
    """Reduce the rows; a sight the chain refuses is reported (all of them) like a bad cell."""
    from ..sightfile import summarise_errors
    from ..workflow import reduce_rows, refused_rows

    try:
        return rows, reduce_rows(rows, use_ap=use_ap)
    except NavInputError:
        errors = refused_rows(rows, use_ap=use_ap)
        if not errors:
            raise
    for line in summarise_errors(errors):
        print(f"nav {args.command}: {printable(args.file)}: {line}", file=sys.stderr)
    if not args.skip_bad_rows:
        raise _Reported(f"{len(errors)} problem(s) in {args.file}; nothing was computed "
                        "(mend them, or use --skip-bad-rows)", field="file")
    bad = {err.row for err in errors}
    print(f"nav {args.command}: skipped {_where(errors)}", file=sys.stderr)
    rows = tuple(r for r in rows if r.row not in bad)
    if not rows:
        raise NavInputError("no valid sight left", field="file", example="utc,body,hs,dr_lat,dr_lon")
    return rows, reduce_rows(rows, use_ap=use_ap)


def _setting_notes(row) -> dict:
    return {"eye_height_m": row.eye_height_m, "index_error_arcmin": row.index_error_arcmin,
            "temperature_c": row.temperature_c, "pressure_hpa": row.pressure_hpa}


def run_reduce(args) -> int:
    from .vessel_args import close_text
    from ..plausibility import doubtful_sights
    from ..render import reduction_dict, reduction_lines, sight_title
    if getattr(args, "worksheet", False) and args.json:
        raise NavInputError("--worksheet is text for reading; use --json alone for data",
                            field="worksheet", example="nav reduce --worksheet sights.csv")
    rows, red = _reduce(args, _load(args), use_ap=args.ap)
    from ..ut1_note import ut1_message_and_mask

    ut1, ut1_mask = ut1_message_and_mask(red.utc)
    if getattr(args, "worksheet", False):
        from ..marking.reference import work_sheet
        from ..marking.worksheet import worksheet_lines

        for i, row in enumerate(rows):
            for line in worksheet_lines(work_sheet(row, method=row.method or "ap")):
                print(line)
            for w in red.sight(i).warnings:
                print(f"  warning: {w}")
            print()
        return close_text([ut1] if ut1 else [])
    doubts = {d.index: d for d in doubtful_sights(rows, red if not args.ap else
                                                   _reduce(args, rows)[1])}
    if args.json:
        out = []
        for i, row in enumerate(rows):
            d = reduction_dict(red.sight(i), row=row.row)
            d["line"] = row.line
            d.update(dr_lat_deg=round(row.dr_lat_deg, 7), dr_lon_deg=round(row.dr_lon_deg, 7),
                     dr_given=row.dr_given)
            if ut1 and ut1_mask[i]:
                d["warnings"].append(ut1)
            d["doubtful"] = doubts[i].as_dict() if i in doubts else None
            out.append(d)
        json.dump(out, sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        # The list is the contract; the DR positions in it still carry the caution, on stderr.
        print(CAUTION, file=sys.stderr)
        return 0
    for i, row in enumerate(rows):
        s = red.sight(i)
        print(sight_title(s, i + 1, row.row, line=row.line))
        for line in reduction_lines(s, **_setting_notes(row)):
            print(line)
        if i in doubts:
            print(f"  !! DOUBTFUL (left out of a fix unless asked): {doubts[i].text()}")
        print()
    return close_text([ut1] if ut1 else [])


def run_fix(args) -> int:
    from ..fixchain import chain_fixes
    from ..plausibility import DoubtfulSightsError

    if not (0.0 < args.confidence < 1.0):
        raise NavInputError("--confidence must be between 0 and 1", field="confidence",
                            example="0.95")
    from ..fix import MAX_FIX_SIGHTS

    rows = _load(args)
    if len(rows) > MAX_FIX_SIGHTS:
        raise NavInputError(f"{len(rows):,} sights: one fix takes at most {MAX_FIX_SIGHTS:,} "
                            "(memory grows with the sights)", field="file",
                            example="split the file, one fix for each watch or day")
    rows, red = _reduce(args, rows)
    if len(rows) < 2:
        raise NavInputError("a fix needs at least two sights", field="file",
                            example="two or more rows of sights")
    runs = ()
    if getattr(args, "average_runs", False):
        from ..series import check_runs, rows_with_runs_averaged

        runs = check_runs(rows, red)
        rows, red = rows_with_runs_averaged(rows, runs), None
    try:
        chain = chain_fixes(rows, confidence=args.confidence, reductions=red,
                            keep_doubtful=args.use_doubtful)
    except DoubtfulSightsError as err:
        for note in err.notes:
            print(f"nav fix: {printable(args.file)}: {note}", file=sys.stderr)
        raise _Reported(err.reason + "; --use-doubtful computes the fix with them",
                        field=err.field) from None
    if runs and not args.json:
        for r in runs:
            line = [s.line if s.line is not None else s.row for s in r.shots]
            left = [n for n, s in zip(line, r.shots) if s.flagged]
            print(f"run of {len(r.shots)} sights of {r.body} (lines {line[0]}\u2013"
                  f"{line[-1]}) replaced by its averaged sight"
                  + (f"; left out line(s) {', '.join(map(str, left))}" if left else ""))
        print()
    shown = [_one_fix(args, c, len(chain)) for c in chain]
    if args.json:
        doc = dict(shown[-1])
        if len(chain) > 1:
            doc["fixes"] = [d["fix"] for d in shown]
            doc["sights"] = [s for d in shown for s in d["sights"]]
        if runs:
            from ..render_checks import series_dict

            doc["runs"] = [series_dict(r) for r in runs]
        doc["caution"] = CAUTION
        json.dump(doc, sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        return 0
    print(CAUTION)
    return 0


def _one_fix(args, c, n_fixes: int) -> dict:
    """Plot, print or build the JSON of one fix of the file (`c`: a ChainFix)."""
    from ..render import fix_dict, fix_lines, reduction_dict
    from ..render_checks import chain_keys, chain_lines

    result = c.result
    fix, lops, bias = result.fix, result.lops, None
    from ..ut1_note import ut1_message_and_mask

    ut1, ut1_mask = ut1_message_and_mask(result.reductions.utc)
    title = f"{fix.kind.capitalize()} from {args.file}" + (f" ({c.label})" if c.label else "")
    if getattr(args, "bias", False):
        from .fix_extras import with_bias

        fix, lops, title, bias = with_bias(result, args.confidence, title)
    plot = args.plot
    if plot and n_fixes > 1:
        stem, dot, ext = plot.rpartition(".")
        plot = f"{stem}-{c.label}.{ext}" if dot else f"{plot}-{c.label}"
    if plot:
        from ..plotting import plot_fix_sheet

        plot_fix_sheet(fix, lops, dr=(result.dr_lat_deg, result.dr_lon_deg), title=title,
                       path=plot, replace=args.replace,
                       **({"known": c.ep, "known_label": "EP (DR + current)"} if c.ep else {}))
    if args.json:
        sights = []
        doubts = {d.index: d for d in result.doubts}
        for i, row in enumerate(result.rows):
            d = reduction_dict(result.reductions.sight(i), row=row.row)
            d["line"] = row.line
            d["residual_nmi"] = round(fix.residuals_nmi[i], 4)
            d["flagged"] = bool(fix.flags[i])
            d["advanced_nmi"] = round(result.lops[i].advanced_nmi, 4)
            k = result.used[i]
            d["doubtful"] = doubts[k].as_dict() if k in doubts else None
            if ut1 and ut1_mask[i]:
                d["warnings"].append(ut1)
            if c.label:
                d["fix"] = c.label
            sights.append(d)
        left_out = []
        for k in sorted(set(doubts) - set(result.used)):
            row = c.rows[k]
            left_out.append({"row": row.row, "line": row.line, "body": row.body,
                             "utc": f"{row.utc:%Y-%m-%dT%H:%M:%S}Z", **doubts[k].as_dict()})
        fd = {**fix_dict(fix, dr_lat_deg=result.dr_lat_deg, dr_lon_deg=result.dr_lon_deg),
              "left_out": left_out}
        fd.update(chain_keys(c))
        if ut1:
            fd["warnings"] = list(fd.get("warnings", [])) + [ut1]
        if bias is not None:
            from .fix_extras import bias_keys

            fd.update(bias_keys(bias))
        return {"fix": fd, "sights": sights}
    if c.label:
        print(f"[{c.label}]")
    for line in fix_lines(fix, dr_lat_deg=result.dr_lat_deg, dr_lon_deg=result.dr_lon_deg):
        print(line)
    if ut1:
        print(f"  ! {ut1}")
    for line in chain_lines(c):
        print(line)
    if bias is not None:
        from ..render_checks import bias_lines

        for line in bias_lines(bias):
            print(line)
    if plot:
        print(f"  plotting sheet written to {plot}")
    print()
    return {}
