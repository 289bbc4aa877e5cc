"""`nav mark`, `nav exercise` and `nav triangle`: the instructor's batch commands."""

from __future__ import annotations

import json
import os
import sys

from .. import CAUTION
from ..errors import NavInputError


def register(sub) -> None:
    m = sub.add_parser("mark", help="mark students' worked sight reductions against an exercise",
                       description="Mark every figure of the students' worked sheets (one row "
                                   "per student per sight) against the exercise: the first wrong "
                                   "step of each chain, the slip named, its effect on the LOP, "
                                   "the fixes, and a class summary.")
    m.add_argument("exercise", metavar="EXERCISE.csv")
    m.add_argument("sheets", metavar="SHEETS.csv")
    m.add_argument("--fixes", metavar="FIXES.csv", help="the students' plotted fixes")
    m.add_argument("--json", action="store_true", help="print the marks as JSON")
    m.add_argument("--out", metavar="DIR",
                   help="also write a marked sheet per student (PDF) and class_summary.csv")
    m.set_defaults(func=run_mark)

    e = sub.add_parser("exercise", help="make a seeded exercise with its answer key and truth",
                       description="Draw an exercise from a seed: the sights (the batch sight CSV "
                                   "with watch times), the answer key worked by tables and "
                                   "exactly, the true track, and planted-mistake sheets.")
    e.add_argument("--seed", type=int, required=True)
    e.add_argument("--kind", default="sun-run", help="sun-run, stars, moon, noon or mixed")
    e.add_argument("--lat", help="true start latitude (default: drawn from the seed)")
    e.add_argument("--lon", help="true start longitude (default: drawn from the seed)")
    e.add_argument("--start", metavar="UTC", help="day to start from, ISO 8601 (default: drawn)")
    e.add_argument("--sigma", type=float, default=0.5, help="σ of the sight errors, arcmin")
    e.add_argument("--ie", default="2.4 on", help="index error: 2.4 on, 1.5 off or signed arcmin")
    e.add_argument("--eye-ft", type=float, default=10.0, help="height of eye in feet")
    e.add_argument("--zone", help="zone description, e.g. +10 (default: from the longitude)")
    e.add_argument("--watch-error", default="17 s slow", help="e.g. 17 s slow, 1 min 5 s fast")
    e.add_argument("--course", type=float, help="course, degrees true (default: drawn)")
    e.add_argument("--speed", type=float, help="speed, knots (default: drawn)")
    e.add_argument("--set", dest="set_deg", type=float, help="current's set (unknown to students)")
    e.add_argument("--drift", type=float, help="current's drift, knots")
    e.add_argument("--mistakes", metavar="CODE,...",
                   help="planted-mistake sheets, one per code ('all': every code that shows)")
    e.add_argument("--name", help="the exercise's name on the sheets (default: kind and seed)")
    e.add_argument("--out", metavar="DIR", required=True)
    e.set_defaults(func=run_exercise)

    t = sub.add_parser("triangle", help="Hc, Z, Zn (and the intercept) from Lat, Dec and LHA",
                       description="Solve the navigational triangle for exam problems and table "
                                   "work that give their own almanac values.")
    t.add_argument("--lat", required=True, help="latitude, e.g. 26 S or 41 12.4 N")
    t.add_argument("--dec", required=True, help="declination, e.g. 12 03.4 S")
    t.add_argument("--lha", required=True, help="LHA, e.g. 315 or 44 17.1")
    t.add_argument("--ho", help="observed altitude Ho, for the intercept")
    t.add_argument("--json", action="store_true")
    t.set_defaults(func=run_triangle)


def _exercise_rows(path):
    from ..sightfile import read_sight_file

    sf = read_sight_file(path)
    for err in sf.errors:
        print(f"nav: {path}: {err}", file=sys.stderr)
    if sf.errors:
        raise NavInputError(f"{len(sf.errors)} problem(s) in {path}", field="file",
                            example="an exercise written by nav exercise")
    ids = [r.sight_id for r in sf.rows]
    if len(set(ids)) != len(ids):
        raise NavInputError("two sights share an id", field="sight", example="1, 2, 3")
    return sf.rows


def _write(path: str, text: str) -> None:
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)


def run_mark(args) -> int:
    from ..marking.classwork import mark_class
    from ..marking.report import class_lines, marks_dict, student_lines, summary_rows
    from ..marking.sheet import parse_fixes, parse_sheets, read_text

    rows = _exercise_rows(args.exercise)
    sheets = parse_sheets(read_text(args.sheets))
    fixes = parse_fixes(read_text(args.fixes)) if args.fixes else []
    cm = mark_class(rows, sheets, fixes)
    if args.out:
        from ..export import sights_to_csv
        from ..marking.pdf import marked_sheet_pdf
        from ..marking.report import SUMMARY_COLUMNS

        os.makedirs(args.out, exist_ok=True)
        for st in cm.students:
            safe = "".join(c if c.isalnum() or c in "-_" else "_" for c in st.student)
            marked_sheet_pdf(st, os.path.join(args.out, f"marked_{safe}.pdf"),
                             exercise=os.path.basename(args.exercise))
        _write(os.path.join(args.out, "class_summary.csv"),
               sights_to_csv(summary_rows(cm), SUMMARY_COLUMNS))
    from ..ut1_note import ut1_cautions

    ut1 = ut1_cautions([r.utc for r in rows])      # the reference reductions' instants
    if args.json:
        d = marks_dict(cm)
        if ut1 and "warnings" not in d:
            d["warnings"] = ut1
        json.dump(d, sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        return 0
    for st in cm.students:
        for line in student_lines(st):
            print(line)
        print()
    for line in class_lines(cm):
        print(line)
    if args.out:
        print(f"  marked sheets and class_summary.csv written to {args.out}")
    print()
    from .vessel_args import close_text

    return close_text(ut1)


def run_exercise(args) -> int:
    from ..angles import parse_lat, parse_lon
    from ..fields import parse_index_error
    from ..marking.exercise import (ExerciseSpec, exercise_csv, key_sheets, make_exercise,
                                    plantable_codes, planted_sheets, truth_csv)
    from ..marking.reference import SLIPS
    from ..marking.sheet import sheets_csv
    from ..sightfile import parse_sight_csv
    from ..timekeeping import parse_utc, parse_watch_error, parse_zone_description

    spec = ExerciseSpec(
        seed=args.seed, kind=args.kind,
        lat_deg=parse_lat(args.lat, "lat") if args.lat else None,
        lon_deg=parse_lon(args.lon, "lon") if args.lon else None,
        start_utc=parse_utc(args.start, "start") if args.start else None,
        sigma_arcmin=args.sigma, index_error_arcmin=parse_index_error(args.ie, "ie"),
        eye_height_ft=args.eye_ft,
        zone_h=(parse_zone_description(args.zone).total_seconds() / 3600.0) if args.zone else None,
        watch_error_s=parse_watch_error(args.watch_error).total_seconds(),
        course_deg=args.course, speed_kn=args.speed, set_deg=args.set_deg, drift_kn=args.drift)
    ex = make_exercise(spec)
    name = args.name or f"{args.kind}-{args.seed}"
    text = exercise_csv(ex)
    rows = parse_sight_csv(text).rows
    codes: list[str] = []
    if args.mistakes:
        codes = (plantable_codes(rows) if args.mistakes.strip() == "all"
                 else [c.strip() for c in args.mistakes.split(",") if c.strip()])
        unknown = [c for c in codes if c not in SLIPS]
        if unknown:
            raise NavInputError(f"unknown slip code '{unknown[0]}'", field="mistakes",
                                example=",".join(SLIPS))
    planted = planted_sheets(rows, codes, exercise_name=name) if codes else []
    os.makedirs(args.out, exist_ok=True)
    tables, exact = key_sheets(rows, exercise_name=name)
    files = {"exercise.csv": text, "key_tables.csv": sheets_csv(tables),
             "key_exact.csv": sheets_csv(exact), "truth.csv": truth_csv(ex)}
    if planted:
        files["planted.csv"] = sheets_csv(planted)
    files["key_fixes.csv"] = _key_fixes(rows, name)
    for fname, body in files.items():
        _write(os.path.join(args.out, fname), body)
    print(f"exercise {name}: {len(rows)} sight(s) "
          f"({', '.join(r.body for r in rows)}); files in {args.out}:")
    for fname in files:
        print(f"  {fname}")
    if codes:
        print(f"  planted: {', '.join(codes)}")
    print()
    from ..ut1_note import ut1_text

    for line in ut1_text([r.utc for r in rows]):     # the answer key's instants
        print(line)
        print()
    print(CAUTION)
    return 0


def _key_fixes(rows, name: str) -> str:
    """The key's fix (or running fix) from its own lines at the last sight, in the fixes contract."""
    from ..marking.fixes import reference_fix
    from ..marking.reference import work_sheet
    from ..marking.sheet import FIX_COLUMNS, format_cell

    ids = [r.sight_id for r in rows]
    line = ""
    if len(ids) >= 2:
        lat, lon = reference_fix(ids, {r.sight_id: r for r in rows},
                                 {r.sight_id: work_sheet(r) for r in rows})
        line = ",".join(["key (tables)", name, "1", "", " ".join(ids),
                         format_cell("lat", lat), format_cell("lon", lon),
                         "at the last sight's time"]) + "\n"
    return ",".join(FIX_COLUMNS) + "\n" + line


def _named(text: str, field: str) -> float:
    """Latitude or Dec with its name (N/S) or a sign: a bare number is a likely slip."""
    from ..angles import parse_lat

    s = str(text).strip()
    if not (s[-1:].upper() in ("N", "S") or s[:1].upper() in ("N", "S") or s[:1] in "+-\u2212"):
        raise NavInputError(f"'{text}' has no name: add N or S", field=field,
                            example="26 S or 41 12.4 N")
    return parse_lat(s, field)


def run_triangle(args) -> int:
    from ..angles import parse_altitude, parse_angle
    from ..marking.worksheet import triangle_dict, triangle_lines
    from ..marking.triangle import solve

    lat = _named(args.lat, "lat")
    dec = _named(args.dec, "dec")
    lha = parse_angle(args.lha, "lha", min_deg=0.0, max_deg=360.0)
    ho = parse_altitude(args.ho, "ho") if args.ho else None
    tri = solve(lat, dec, lha, ho)
    if args.json:
        json.dump(triangle_dict(tri), sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        return 0
    for line in triangle_lines(tri):
        print(line)
    return 0
