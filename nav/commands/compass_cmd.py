"""`nav compass` (compass error and deviation by azimuth or amplitude) and `nav deviations`
(the deviation found on each heading over a passage log). The working is :mod:`nav.compass`."""

from __future__ import annotations

from . import vessel_args as va

COMPASS_DESCRIPTION = (
    "Compass error from one compass bearing of a body: by azimuth (its true Zn at the instant "
    "from the DR) or, with --amplitude, by its true amplitude as it rises or sets "
    "(sin A = sin Dec / cos lat). The amplitude is for the centre on the celestial horizon (the "
    "Sun's lower limb about two thirds of a diameter above the visible horizon); --horizon "
    "visible takes the centre on the visible horizon and applies the correction for it. "
    "True = compass + error, easterly error +. With --variation, the deviation = error − "
    "variation.")


def register(sub) -> None:
    p = sub.add_parser("compass", help="compass error and deviation by azimuth or amplitude",
                       description=COMPASS_DESCRIPTION)
    p.add_argument("--body", help="body observed (required)")
    p.add_argument("--utc", metavar="T", help="time of the bearing, ISO 8601 (required)")
    va.add_dr(p, moving=False, when="at the time")
    p.add_argument("--bearing", metavar="C", help="compass bearing of the body, degrees "
                                                  "(required)")
    p.add_argument("--variation", metavar="V", help="variation: 9 W, 3.5 E or -9 (east +)")
    p.add_argument("--heading", metavar="H", help="ship's head by the same compass, degrees")
    p.add_argument("--amplitude", action="store_true", help="the body rising or setting: by "
                                                            "amplitude")
    p.add_argument("--horizon", metavar="KIND", default="celestial",
                   help="celestial (default) or visible: where the body's centre was")
    p.add_argument("--eye-height-m", metavar="H", default="0",
                   help="height of eye, for the visible horizon's dip (default 0)")
    va.add_json(p)
    p.set_defaults(func=run_compass)

    d = sub.add_parser("deviations", help="deviation found on each heading over a passage log",
                       description="The deviation found by the compass checks of a passage "
                                   "log, on each compass heading (nearest 5°).")
    d.add_argument("--log", metavar="FILE", help="the passage log (required)")
    va.add_json(d)
    d.set_defaults(func=run_deviations)


def read_bearing(text: str, field: str) -> float:
    from ..angles import parse_bearing

    return parse_bearing(text, field)


def run_compass(args) -> int:
    from ..angles import parse_east_west, parse_height_m
    from ..compass import compass_check
    from ..fields import parse_body, parse_sight_utc
    from ..render_sky import compass_dict, compass_lines
    from ..errors import NavInputError

    va.required(args, {"body": ("--body", "Sun"), "utc": ("--utc", "2026-06-21T06:31:00Z"),
                       "bearing": ("--bearing", "058")})
    body = parse_body(args.body, "body")
    utc = parse_sight_utc(args.utc, "utc")
    lat, lon = va.read_dr(args)
    bearing = read_bearing(args.bearing, "bearing")
    var = parse_east_west(args.variation, "variation") if args.variation is not None else None
    heading = read_bearing(args.heading, "heading") if args.heading is not None else None
    horizon = str(args.horizon).strip().lower()
    if horizon not in ("celestial", "visible"):
        raise NavInputError(f"'{args.horizon}' is not a horizon here", field="horizon",
                            example="--horizon visible")
    if horizon == "visible" and not args.amplitude:
        raise NavInputError("--horizon is for an amplitude", field="horizon",
                            example="--amplitude --horizon visible")
    eye = parse_height_m(args.eye_height_m, "eye_height_m")
    c = compass_check(body, utc, lat, lon, bearing, variation_deg=var, heading_deg=heading,
                      amplitude=args.amplitude, horizon=horizon, eye_height_m=eye)
    return va.emit(args, lambda: compass_dict(c), lambda: compass_lines(c), [c.utc])


def run_deviations(args) -> int:
    from ..compass import deviation_rows, deviation_table
    from ..logbook import load_log
    from ..render_sky import deviation_dict, deviation_lines

    va.required(args, {"log": ("--log", "sight_logs/passage.jsonl")})
    log = load_log(args.log)
    table = deviation_table(deviation_rows(log.effective_entries("compass_check")))
    return va.emit(args, lambda: deviation_dict(table), lambda: deviation_lines(table))
