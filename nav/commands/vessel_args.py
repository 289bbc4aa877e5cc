"""The options every "around the sights" command shares: the DR, course and speed, the zone.

One reader for them (through the shared field parsers), used by ``nav sky``, ``nav meridian``,
``nav plan``, ``nav identify``, ``nav compass`` and ``nav equal-altitudes``.
"""

from __future__ import annotations

import json
import sys

from .. import CAUTION
from ..errors import NavInputError


def add_dr(p, *, moving: bool = True, when: str = "at 12:00 zone time of the date") -> None:
    p.add_argument("--dr-lat", metavar="LAT", help=f"DR latitude {when}: 41 12.5 N or 41.2083 "
                                                   "(required)")
    p.add_argument("--dr-lon", metavar="LON", help=f"DR longitude {when}: 032 07.1 W or -32.118 "
                                                   "(required)")
    if moving:
        p.add_argument("--course", metavar="C", help="course, degrees true (with --speed)")
        p.add_argument("--speed", metavar="S", help="speed, knots (with --course)")


def add_zone(p) -> None:
    p.add_argument("--zone", metavar="ZD", help="zone description, UTC = ZT + ZD: +3 for 45° W "
                                                "(default: the DR longitude's zone)")


def add_json(p) -> None:
    p.add_argument("--json", action="store_true", help="print one JSON object")


def required(args, names: dict) -> None:
    for attr, (flag, example) in names.items():
        if getattr(args, attr, None) in (None, ""):
            raise NavInputError(f"{flag} is required", field=flag.lstrip("-").replace("-", "_"),
                                example=f"{flag} {example}")


def spec(name: str):
    from ..fields import SIGHT_FIELD_BY_NAME

    return SIGHT_FIELD_BY_NAME[name].parse


def read_dr(args) -> tuple[float, float]:
    from ..angles import parse_lat, parse_lon

    required(args, {"dr_lat": ("--dr-lat", "'41 12.5 N'"), "dr_lon": ("--dr-lon", "'032 07.1 W'")})
    return parse_lat(args.dr_lat, "dr_lat"), parse_lon(args.dr_lon, "dr_lon")


def read_motion(args) -> tuple[float | None, float]:
    """(course or None, speed): both or neither."""
    if (args.course is None) != (args.speed is None):
        raise NavInputError("give --course and --speed together (or neither: hove to)",
                            field="course" if args.course is None else "speed",
                            example="--course 245 --speed 6.5")
    course = spec("course_deg")(args.course, "course") if args.course is not None else None
    speed = spec("speed_kn")(args.speed, "speed") if args.speed is not None else 0.0
    return course, speed


def read_zone(args):
    from ..timekeeping import parse_zone_description

    return parse_zone_description(args.zone, "zone") if args.zone is not None else None


def read_eye_ie(args) -> tuple[float, float]:
    from ..angles import parse_height_m

    return (parse_height_m(args.eye_height_m, "eye_height_m"),
            spec("index_error")(args.index_error, "index_error"))


def emit(args, as_dict, as_lines, instants=()) -> int:
    """Print one JSON object (with the caution) or the lines and the caution; with the UT1
    caution of `instants` (:mod:`nav.ut1_note`) in ``warnings`` or as a ``!`` line."""
    from ..ut1_note import ut1_cautions

    ut1 = ut1_cautions(*instants)
    if args.json:
        d = as_dict()
        if ut1:
            d["warnings"] = list(d.get("warnings") or []) + ut1
        json.dump({**d, "caution": CAUTION}, sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        return 0
    print("\n".join(as_lines()))
    print()
    return close_text(ut1)


def close_text(ut1_lines) -> int:
    """End a text report: each UT1 caution line, then nav's caution; exit status 0."""
    for m in ut1_lines:
        print(f"! {m}")
        print()
    print(CAUTION)
    return 0
