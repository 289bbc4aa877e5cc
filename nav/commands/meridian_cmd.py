"""`nav meridian BODY`: the upper transit of any body at the vessel's position then, with Hc
on the meridian, the Hs to preset and the latitude rule (`nav noon` stays the Sun's case).
The working is :mod:`nav.transit`."""

from __future__ import annotations

from . import vessel_args as va

MERIDIAN_DESCRIPTION = (
    "The upper meridian passage of a body (Sun, Moon, planet or navigational star) on the "
    "ship's date in zone time, at the position the vessel will have then (the DR given is hers "
    "at 12:00 zone time, carried along --course and --speed): UTC and zone time, Hc on the "
    "meridian, the Hs to preset (lower limb for the Sun and Moon; height of eye and index error "
    "given, 10 °C, 1010 hPa) and the rule that turns the meridian altitude into latitude.")


def register(sub) -> None:
    p = sub.add_parser("meridian", help="meridian passage of any body: time, Hc, Hs to preset",
                       description=MERIDIAN_DESCRIPTION)
    p.add_argument("body", metavar="BODY", help="Sun, Moon, Venus, Mars, Jupiter, Saturn or a "
                                                "navigational star")
    p.add_argument("--date", metavar="YYYY-MM-DD", help="the ship's date, zone time (required)")
    va.add_dr(p)
    va.add_zone(p)
    p.add_argument("--eye-height-m", metavar="H", default="0", help="height of eye (default 0)")
    p.add_argument("--index-error", metavar="X", default="0",
                   help="index error, arcmin, + on the arc (default 0)")
    va.add_json(p)
    p.set_defaults(func=run_meridian)


def run_meridian(args) -> int:
    from ..fields import parse_body
    from ..noonsight import parse_date
    from ..render_sky import transit_dict, transit_lines
    from ..sky import noon_track
    from ..transit import body_transit

    body = parse_body(args.body, "body")
    va.required(args, {"date": ("--date", "2026-06-21")})
    day = parse_date(args.date, "date")
    lat, lon = va.read_dr(args)
    course, speed = va.read_motion(args)
    eye, ie = va.read_eye_ie(args)
    track, zd = noon_track(day, lat, lon, course, speed, va.read_zone(args))
    t = body_transit(body, day, track, zd, eye_height_m=eye, index_error_arcmin=ie)
    return va.emit(args, lambda: transit_dict(t), lambda: transit_lines(t),
                   [t.utc, track.utc])
