"""`nav noon` and `nav latitude`: the noon sight and Polaris from the command line.

The working lives in :mod:`nav.noonsight` (shared with the shell); this module parses the
options, calls it and prints through :mod:`nav.render`.
"""

from __future__ import annotations

from datetime import datetime, time, timedelta

from ..noonsight import DATE_EXAMPLE, MERIDIAN_LIMIT_DEG, meridian_latitude, parse_date, predict_noon

NOON_DESCRIPTION = (
    "Predict local apparent noon (the Sun's upper meridian passage) on a date, for a vessel "
    "whose DR at 12:00 local mean time of that date (12:00 UTC − longitude/15°) is --dr-lat "
    "--dr-lon, sailing --course at --speed: UTC and zone time, the DR at noon, the Sun's GHA "
    "and Dec, the equation of time, Hc on the meridian and the Hs to preset for the lower limb "
    "(10 °C, 1010 hPa, sea horizon).")
LATITUDE_DESCRIPTION = (
    "Latitude from one sight: by meridian altitude for a body within "
    f"{MERIDIAN_LIMIT_DEG:g}° of LHA of its upper or lower transit at the DR, or from Polaris at "
    "any LHA. The DR latitude decides the name rule (the body bears south when the DR is north "
    "of its Dec) and the corrections' parallax; its longitude gives the LHA. A single latitude "
    "is a line of position, not a fix.")


def register(sub) -> None:
    n = sub.add_parser("noon", help="predict local apparent noon: UTC, zone time, Hc, Hs to "
                                    "preset", description=NOON_DESCRIPTION)
    n.add_argument("--date", metavar="YYYY-MM-DD", help="the local date (required)")
    n.add_argument("--dr-lat", metavar="LAT", help="DR latitude at 12:00 LMT: 41 12.5 N or "
                                                   "41.2083 (required)")
    n.add_argument("--dr-lon", metavar="LON", help="DR longitude at 12:00 LMT: 032 07.1 W or "
                                                   "-32.118 (required)")
    n.add_argument("--course", metavar="C", help="course, degrees true (with --speed)")
    n.add_argument("--speed", metavar="S", help="speed, knots (with --course)")
    n.add_argument("--zone", metavar="ZD", help="zone description, UTC = ZT + ZD: +3 for 45° W")
    n.add_argument("--eye-height-m", metavar="H", default="0", help="height of eye (default 0)")
    n.add_argument("--index-error", metavar="X", default="0",
                   help="index error, arcmin, + on the arc (default 0)")
    n.add_argument("--json", action="store_true", help="print one JSON object")
    n.set_defaults(func=run_noon)

    a = sub.add_parser("latitude", help="latitude from a meridian sight or from Polaris",
                       description=LATITUDE_DESCRIPTION)
    a.add_argument("--body", help="body observed (required)")
    a.add_argument("--utc", metavar="T", help="time of the sight, ISO 8601 (required)")
    a.add_argument("--hs", metavar="HS", help="sextant altitude: 52 08.4 or 52.14 (required)")
    a.add_argument("--limb", metavar="L", help="lower (default for Sun and Moon), upper, center")
    a.add_argument("--index-error", metavar="X", default="0",
                   help="index error, arcmin, + on the arc (default 0)")
    a.add_argument("--eye-height-m", metavar="H", default="0", help="height of eye (default 0)")
    a.add_argument("--dr-lat", metavar="LAT", help="DR latitude (required)")
    a.add_argument("--dr-lon", metavar="LON", help="DR longitude (required)")
    a.add_argument("--json", action="store_true", help="print one JSON object")
    a.set_defaults(func=run_latitude)


def run_noon(args) -> int:
    from ..meridian import local_apparent_noon
    from ..render import noon_dict, noon_lines
    from ..timekeeping import UTC
    from . import vessel_args as va

    va.required(args, {"date": ("--date", DATE_EXAMPLE), "dr_lat": ("--dr-lat", "'41 12.5 N'"),
                       "dr_lon": ("--dr-lon", "'032 07.1 W'")})
    day = parse_date(args.date, "date")
    lat, lon = va.read_dr(args)
    course, speed = va.read_motion(args)
    zd = va.read_zone(args)
    eye, ie = va.read_eye_ie(args)
    dr_utc = datetime.combine(day, time(12), tzinfo=UTC) - timedelta(hours=lon / 15.0)
    moving = course is not None and speed > 0
    noon = local_apparent_noon(dr_utc, lat, lon, course if moving else 0.0,
                               speed if moving else 0.0, zd)
    pred = predict_noon(noon, day=day, dr_utc=dr_utc, dr_lat_deg=lat, dr_lon_deg=lon,
                        course_deg=course, speed_kn=speed,
                        basis=f"DR given for 12:00 LMT ({dr_utc:%Y-%m-%d %H:%M:%S} UTC)",
                        eye_height_m=eye, index_error_arcmin=ie)
    return va.emit(args, lambda: noon_dict(pred), lambda: noon_lines(pred), [noon.utc])


def run_latitude(args) -> int:
    from ..fields import check_limb, parse_body, parse_limb, parse_sight_utc
    from ..reduction import reduce_sight
    from ..render import meridian_latitude_dict, meridian_latitude_lines
    from . import vessel_args as va

    va.required(args, {"body": ("--body", "Sun"), "utc": ("--utc", "2026-06-21T13:41:36Z"),
                       "hs": ("--hs", "'75 45.3'"), "dr_lat": ("--dr-lat", "'37 20.3 N'"),
                       "dr_lon": ("--dr-lon", "'025 05.0 W'")})
    body = parse_body(args.body, "body")
    utc = parse_sight_utc(args.utc, "utc")
    hs = va.spec("hs")(args.hs, "hs")
    limb = check_limb(body, parse_limb(args.limb, "limb") if args.limb is not None else None)
    eye, ie = va.read_eye_ie(args)
    lat, lon = va.read_dr(args)
    red = reduce_sight(body, utc, hs, limb=limb, index_error_arcmin=ie, eye_height_m=eye,
                       lat_deg=lat, lon_deg=lon)
    work = meridian_latitude(red, fix_hint="nav fix SIGHTS.csv, with other sights", field="utc")
    return va.emit(args, lambda: meridian_latitude_dict(work),
                   lambda: meridian_latitude_lines(work, eye_height_m=eye, index_error_arcmin=ie,
                                                   temperature_c=10.0, pressure_hpa=1010.0),
                   [utc])
