"""`nav sky`: twilight, sunrise and sunset, moonrise and moonset and the meridian passages of the
Sun and Moon on a date, for a vessel under way. The working is :mod:`nav.sky`."""

from __future__ import annotations

from . import vessel_args as va

SKY_DESCRIPTION = (
    "Twilight (civil and nautical), sunrise and sunset, moonrise and moonset, and the meridian "
    "passages of the Sun and Moon on the ship's date in zone time, in UTC and zone time, with "
    "the bearing at rise and set and the Moon's phase. The DR given is the vessel's position at "
    "12:00 zone time; each event is worked at the position she will have then, along the DR. "
    "An event that does not happen on the date is named, never invented.")


def register(sub) -> None:
    p = sub.add_parser("sky", help="twilight, rise and set, meridian passages for a moving vessel",
                       description=SKY_DESCRIPTION)
    p.add_argument("--date", metavar="YYYY-MM-DD", help="the ship's date, zone time (required)")
    va.add_dr(p)
    va.add_zone(p)
    p.add_argument("--eye-height-m", metavar="H", default="0",
                   help="height of eye: rise and set on the visible horizon, dip added "
                        "(default 0: the sea-level horizon)")
    va.add_json(p)
    p.set_defaults(func=run_sky)


def run_sky(args) -> int:
    from ..angles import parse_height_m
    from ..noonsight import parse_date
    from ..render_sky import sky_dict, sky_lines
    from ..sky import noon_track, sky_day

    va.required(args, {"date": ("--date", "2026-06-21")})
    day = parse_date(args.date, "date")
    lat, lon = va.read_dr(args)
    course, speed = va.read_motion(args)
    zd = va.read_zone(args)
    eye = parse_height_m(args.eye_height_m, "eye_height_m")
    track, _ = noon_track(day, lat, lon, course, speed, zd)
    s = sky_day(day, track, zone_description=zd, eye_height_m=eye)
    return va.emit(args, lambda: sky_dict(s), lambda: sky_lines(s),
                   [[e.utc for e in s.events], s.moon.utc, track.utc])
