"""`nav identify`: which body an observed altitude and rough true bearing fit.
The working is :mod:`nav.identify`."""

from __future__ import annotations

from . import vessel_args as va

IDENTIFY_DESCRIPTION = (
    "Which body was it? From the sextant altitude, a rough true bearing (a hand-bearing "
    "compass, corrected: good to a few degrees), the time and the DR: the 58 navigational stars, "
    "the planets, the Moon and the other stars to magnitude 3.5 ranked by how well their Hc and "
    "Zn fit. When none fits, the Dec and SHA of the point observed.")


def register(sub) -> None:
    p = sub.add_parser("identify", help="which star (or planet) was that: ranked candidates",
                       description=IDENTIFY_DESCRIPTION)
    p.add_argument("--utc", metavar="T", help="time of the sight, ISO 8601 (required)")
    p.add_argument("--hs", metavar="HS", help="sextant altitude: 52 08.4 or 52.14 (required)")
    p.add_argument("--zn", metavar="ZN", help="true bearing of the body, degrees (required)")
    va.add_dr(p, moving=False, when="at the time")
    p.add_argument("--index-error", metavar="X", default="0",
                   help="index error, arcmin, + on the arc (default 0)")
    p.add_argument("--eye-height-m", metavar="H", default="0", help="height of eye (default 0)")
    va.add_json(p)
    p.set_defaults(func=run_identify)


def run_identify(args) -> int:
    from ..angles import parse_bearing
    from ..fields import parse_sight_utc
    from ..identify import identify
    from ..render_sky import identify_dict, identify_lines

    va.required(args, {"utc": ("--utc", "2026-06-21T23:30:00Z"), "hs": ("--hs", "'52 18.0'"),
                       "zn": ("--zn", "076")})
    utc = parse_sight_utc(args.utc, "utc")
    hs = va.spec("hs")(args.hs, "hs")
    zn = parse_bearing(args.zn, "zn")
    lat, lon = va.read_dr(args)
    eye, ie = va.read_eye_ie(args)
    r = identify(utc, hs, zn, lat, lon, index_error_arcmin=ie, eye_height_m=eye)
    return va.emit(args, lambda: identify_dict(r), lambda: identify_lines(r), [r.utc])
