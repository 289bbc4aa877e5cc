"""Shell commands around the sights: sky, meridian (and their parsers), from the passage log.

- ``sky [DATE] [eye]``: twilight, rise and set, meridian passages of the Sun and Moon on the
  ship's date, along the DR and legs of the log (:func:`nav.sky.sky_day`, :class:`LoggedTrack`).
- ``meridian BODY [DATE]``: the upper transit of any body, Hc, Hs to preset with the settings in
  force, the latitude rule (:func:`nav.transit.body_transit`).

The zone is the one set (`set zone`), else the DR longitude's; the date defaults as `noon`'s.
"""

from __future__ import annotations

import textwrap
from datetime import datetime, time, timedelta

from .. import CAUTION
from ..errors import NavInputError
from .parse import Request, parse_noon


def _caution(st) -> None:
    st.say(*textwrap.wrap(CAUTION, 78))


def _zone_set(st) -> bool:
    return any("zone_description_h" in e.data for e in st.log.effective_entries("setting"))


def day_and_track(st, day):
    """The zone and the logged track of the ship's date `day` (DR at 12:00 zone time)."""
    from ..sky import LoggedTrack, zone_for_longitude
    from ..timekeeping import UTC

    zd = timedelta(hours=float(st.settings.zone_description_h)) if _zone_set(st) else None
    guess = zd if zd is not None else timedelta(0)
    midday = datetime.combine(day, time(12), tzinfo=UTC) + guess
    track = LoggedTrack(st.passage, midday)
    if zd is None:
        zd = zone_for_longitude(track.lon_deg)
        track = LoggedTrack(st.passage, datetime.combine(day, time(12), tzinfo=UTC) + zd)
    return zd, track


def parse_sky(args, line, ctx) -> Request:
    """``sky [DATE]``."""
    req = parse_noon(args, line, ctx)
    return Request("sky", args=dict(req.args))


def parse_meridian(args, line, ctx) -> Request:
    """``meridian BODY [DATE]`` (a body of two words, such as Rigil Kentaurus, is read whole)."""
    from ..fields import parse_body

    example = "meridian Jupiter, or meridian Vega 2026-06-21"
    if not args:
        raise NavInputError("name a body", field="body", example=example)
    words = [a.text for a in args]
    rest = args
    body = None
    for n in range(min(3, len(words)), 0, -1):
        try:
            body = parse_body(" ".join(words[:n]), "body")
        except NavInputError:
            continue
        rest = args[n:]
        break
    if body is None:
        parse_body(words[0], "body")                # raises, with its suggestions
    req = parse_noon(rest, line, ctx)
    return Request("meridian", args={**req.args, "body": body})


def run_sky(st, req) -> None:
    from ..render_sky import sky_lines
    from ..sky import sky_day

    day = req.args["date"]
    zd, track = day_and_track(st, day)
    settings = st.settings
    eye = settings.eye_height_m if settings.horizon == "sea" else 0.0
    s = sky_day(day, track, zone_description=zd, eye_height_m=eye)
    lines = sky_lines(s)
    lines[1:2] = [f"  DR at 12:00 ZT from the log: {track.basis};",
                  "  carried along the legs logged, each event at the DR then"]
    if not _zone_set(st):
        lines[0] = lines[0].replace("(from the DR longitude)", "(from the DR longitude; "
                                    "`set zone` to give one)")
    st.say(f"date: {day:%Y-%m-%d} ({req.args['why']})", *lines)
    _caution(st)


def run_meridian(st, req) -> None:
    from ..render_sky import transit_lines
    from ..transit import body_transit

    day = req.args["date"]
    zd, track = day_and_track(st, day)
    s = st.settings
    t = body_transit(req.args["body"], day, track, zd, eye_height_m=s.eye_height_m,
                     index_error_arcmin=s.index_error_arcmin, temperature_c=s.temperature_c,
                     pressure_hpa=s.pressure_hpa, horizon=s.horizon)
    st.say(f"date: {day:%Y-%m-%d} ({req.args['why']}); DR from the log along the legs",
           *transit_lines(t))
    _caution(st)
