"""Handlers of the noon commands: noon, latitude, longitude.

- ``noon [DATE]``: local apparent noon of the ship's date from the passage's DR and legs
  (:func:`nav.noonsight.noon_from_passage`), with the zone time, the watch reading to
  expect, Hc on the meridian and the Hs to preset with the settings in force.
- ``latitude ID [log]``: the latitude of one logged sight, worked: by meridian altitude within
  1° of LHA of upper or lower transit, or from Polaris at any LHA (else refused, pointing to
  ``fix``). ``log`` notes the result (a note, not a fix: the DR is not moved).
- ``longitude TIME [log]``: longitude from the observed instant of the Sun's meridian passage.

Each computes first, shows the working and, only with ``log``, appends a note (confirmed after
the append returned).
"""

from __future__ import annotations

import textwrap

from .. import CAUTION
from ..angles import format_lat, format_lon
from ..errors import NavInputError
from .common import ut1_lines
from ..timekeeping import format_date_hms


def _caution(st, *instants) -> None:
    """The UT1 caution for these instants (none while UT1 is measured), then nav's caution."""
    st.say(*ut1_lines(st, *instants), *textwrap.wrap(CAUTION, 78))


def run_noon(st, req) -> None:
    from ..noonsight import noon_from_passage
    from ..render import noon_lines

    day = req.args["date"]
    pred = noon_from_passage(st.passage, day)
    st.say(f"date: {day:%Y-%m-%d} ({req.args['why']})", *noon_lines(pred))
    _caution(st, pred.noon.utc)


def _log_note(st, text: str, utc) -> None:
    e = st.append({"kind": "note", "text": text, "utc": utc})
    st.say(f"logged {e.id}: note \"{text}\"",
           "  (a note only: a single line of position does not move the DR; cross it with "
           "another in a fix)")


def run_latitude(st, req) -> None:
    from ..noonsight import meridian_latitude
    from ..passage import passage_for_sight
    from ..render import meridian_latitude_lines, sight_title
    from ..workflow import reduce_rows

    e = st.lookup(req.args["id"])
    passage = st.passage
    if any(e.id in f["sight_ids"] for f in passage.fix_entries):
        passage = passage_for_sight(st.log, e.id)     # never from a fix the sight went into
    try:
        row = passage.sight_row(e)
    except NavInputError as err:
        raise NavInputError(f"{e.id} has no DR at its time ({err.reason})", field="dr",
                            example="dr LAT LON at TIME before the sight") from None
    red = reduce_rows([row]).sight(0)
    work = meridian_latitude(red, fix_hint=f"fix {e.id} ID ..., with sights of other bodies")
    basis = "DR given with the sight" if row.dr_given else passage.where(row.utc).describe()
    title = sight_title(red).replace("Sight:", f"Sight {e.id}:", 1)
    lines = meridian_latitude_lines(work, title=title, eye_height_m=row.eye_height_m,
                                    index_error_arcmin=row.index_error_arcmin,
                                    temperature_c=row.temperature_c,
                                    pressure_hpa=row.pressure_hpa)
    st.say(lines[0], lines[1], f"  DR basis     {basis}", *lines[2:])
    if req.args["log"]:
        what = "Polaris" if work.method == "Polaris" else f"{work.body}, {work.method}"
        _log_note(st, f"latitude {format_lat(work.lat_deg)} from {e.id} ({what}) at "
                      f"{format_date_hms(work.utc)} UTC: a line of position, not a fix",
                  work.utc)
    _caution(st, work.utc)


def run_longitude(st, req) -> None:
    from ..noonsight import timed_noon_longitude
    from ..render import noon_longitude_lines

    t = req.time
    try:
        where = st.passage.where(t.utc)
    except NavInputError:
        where = None                       # no DR then: the working needs none
    work = timed_noon_longitude(t.utc, where=where)
    st.say(*noon_longitude_lines(work, t.explain))
    if req.args["log"]:
        _log_note(st, f"longitude {format_lon(work.lon_deg)} from the Sun's meridian passage "
                      f"timed at {format_date_hms(t.utc)} UTC: a line of position, not a fix",
                  t.utc)
    _caution(st, work.utc)
