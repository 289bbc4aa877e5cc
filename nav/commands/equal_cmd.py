"""`nav equal-altitudes`: longitude from equal altitudes of the Sun before and after noon,
corrected for the change of Dec and the vessel's run. The working is :mod:`nav.equal_altitudes`."""

from __future__ import annotations

from . import vessel_args as va

DESCRIPTION = (
    "Longitude from the times at which the Sun stood at the same altitude (the same sextant "
    "reading) before and after noon: the middle time, corrected for the change of the Sun's Dec "
    "between the sights and for the vessel's run (--course and --speed). The DR given is hers at "
    "the first sight; its latitude is used, its longitude only as a first guess.")


def register(sub) -> None:
    p = sub.add_parser("equal-altitudes", help="longitude by equal altitudes of the Sun",
                       description=DESCRIPTION)
    p.add_argument("--first", metavar="T", help="UTC of the forenoon sight, ISO 8601 (required)")
    p.add_argument("--second", metavar="T", help="UTC of the afternoon sight at the same "
                                                 "altitude (required)")
    va.add_dr(p, when="at the first sight")
    va.add_json(p)
    p.set_defaults(func=run_equal)


def run_equal(args) -> int:
    from ..equal_altitudes import equal_altitudes
    from ..fields import parse_sight_utc
    from ..render_sky import equal_altitudes_dict, equal_altitudes_lines

    va.required(args, {"first": ("--first", "2026-03-20T11:00:00Z"),
                       "second": ("--second", "2026-03-20T17:20:00Z")})
    t1, t2 = parse_sight_utc(args.first, "first"), parse_sight_utc(args.second, "second")
    lat, lon = va.read_dr(args)
    course, speed = va.read_motion(args)
    r = equal_altitudes(t1, t2, lat, lon, course_deg=course, speed_kn=speed)
    return va.emit(args, lambda: equal_altitudes_dict(r), lambda: equal_altitudes_lines(r),
                   [t1, t2])
