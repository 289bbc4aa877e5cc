"""`nav plan`: which bodies to shoot at twilight (or at any UTC), with presets and a
well-spread suggested set; optionally a sky sketch. The working is :mod:`nav.planning`."""

from __future__ import annotations

from . import vessel_args as va

PLAN_DESCRIPTION = (
    "The bodies (58 stars, planets, Moon) between 15° and 70° at twilight or at a given UTC, "
    "with Hc, Zn, magnitude, the Hs to preset, flags for a body near the Moon and for a Moon "
    "whose lower limb is not the bright one, and a suggested set chosen for azimuth spread "
    "first and brightness second. With --twilight the time is when the Sun's centre reaches "
    "−6° (civil twilight; --depression for another), worked along the DR given for 12:00 zone "
    "time; with --utc the DR is for that instant.")


def register(sub) -> None:
    p = sub.add_parser("plan", help="which bodies to shoot at twilight: presets and a set",
                       description=PLAN_DESCRIPTION)
    p.add_argument("--twilight", metavar="WHEN", help="morning or evening (with --date)")
    p.add_argument("--date", metavar="YYYY-MM-DD", help="the ship's date, zone time")
    p.add_argument("--utc", metavar="T", help="or: the instant, ISO 8601")
    va.add_dr(p, when="at 12:00 zone time (with --twilight) or at --utc")
    va.add_zone(p)
    p.add_argument("--depression", metavar="DEG", default="6",
                   help="the Sun's depression for --twilight, degrees (default 6)")
    p.add_argument("--count", metavar="N", default="5", help="bodies in the set, 3–7 (default 5)")
    p.add_argument("--min-alt", metavar="DEG", default="15", help="lowest Hc (default 15)")
    p.add_argument("--max-alt", metavar="DEG", default="70", help="highest Hc (default 70)")
    p.add_argument("--eye-height-m", metavar="H", default="0", help="height of eye (default 0)")
    p.add_argument("--index-error", metavar="X", default="0",
                   help="index error, arcmin, + on the arc (default 0)")
    p.add_argument("--sketch", metavar="FILE", help="draw the sky: FILE.png or FILE.pdf")
    va.add_json(p)
    p.set_defaults(func=run_plan)


def run_plan(args) -> int:
    from datetime import timedelta

    from ..angles import parse_number
    from ..errors import NavInputError
    from ..fields import parse_sight_utc
    from ..noonsight import parse_date
    from ..planning import plan, twilight_instant
    from ..render_sky import plan_dict, plan_lines
    from ..sky import Track, noon_track, zone_for_longitude

    lat, lon = va.read_dr(args)
    course, speed = va.read_motion(args)
    zd = va.read_zone(args)
    count_f = parse_number(args.count, "count", min_value=3, max_value=7, example="5")
    if count_f != int(count_f):
        raise NavInputError(f"'{args.count}' is not a whole number of bodies", field="count",
                            example="5")
    count = int(count_f)
    dep = parse_number(args.depression, "depression", min_value=0, max_value=18)
    lo = parse_number(args.min_alt, "min_alt", min_value=0, max_value=90)
    hi = parse_number(args.max_alt, "max_alt", min_value=0, max_value=90)
    eye, ie = va.read_eye_ie(args)
    if (args.twilight is None) == (args.utc is None):
        raise NavInputError("give --twilight (with --date) or --utc", field="twilight",
                            example="--twilight evening --date 2026-06-21")
    if args.twilight is not None:
        va.required(args, {"date": ("--date", "2026-06-21")})
        day = parse_date(args.date, "date")
        when = str(args.twilight).strip().lower()
        track, zd = noon_track(day, lat, lon, course, speed, zd)
        utc = twilight_instant(day, track, zd, when, dep)
        how = (f"{when} twilight: the Sun's centre at −{dep:g}° true"
               + (" (civil twilight)" if dep == 6 else ""))
    else:
        utc = parse_sight_utc(args.utc, "utc")
        track = Track(utc, lat, lon, course or 0.0, speed if course is not None else 0.0)
        zd = zd if zd is not None else zone_for_longitude(lon)
        how = "at the time given"
    p = plan(utc, track, count=count, min_alt_deg=lo, max_alt_deg=hi, eye_height_m=eye,
             index_error_arcmin=ie, zone_description=zd, how=how)
    if args.sketch:
        from ..plan_plot import save_sketch

        save_sketch(p, args.sketch)
    code = va.emit(args, lambda: plan_dict(p), lambda: plan_lines(p), [p.utc])
    if args.sketch and not args.json:
        print(f"sky sketch: {args.sketch}")
    return code
