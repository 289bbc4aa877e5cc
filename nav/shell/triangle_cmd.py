"""The shell's ``triangle lat L dec D lha H [ho HO]``: the navigational triangle alone.

Parsed with the shared parsers (angles.py) and rendered by :mod:`nav.marking.worksheet`, as
``nav triangle`` is; nothing is logged.
"""

from __future__ import annotations

from ..errors import NavInputError
from .parse import Request
from .words import split_words

WORDS = ("lat", "dec", "lha", "ho")
EXAMPLE = "triangle lat 26 S dec 12 03.4 S lha 315 ho 44 12.3"


def _named(text: str, field: str) -> float:
    from ..angles import parse_lat

    s = text.strip()
    if not (s[-1:].upper() in ("N", "S") or s[:1].upper() in ("N", "S") or s[:1] in "+-\u2212"):
        raise NavInputError(f"'{text}' has no name: add N or S", field=field, example=EXAMPLE)
    return parse_lat(s, field)


def parse_triangle(args, line, ctx) -> Request:
    from ..angles import parse_altitude, parse_angle

    pos, opts = split_words(line, args, WORDS, command="triangle")
    if pos:
        raise NavInputError(f"'{pos[0].text}' is not understood here", field="triangle",
                            example=EXAMPLE)
    missing = [w for w in ("lat", "dec", "lha") if w not in opts]
    if missing:
        raise NavInputError(f"give {', '.join(missing)}", field=missing[0], example=EXAMPLE)
    return Request("triangle", args={
        "lat": _named(opts["lat"], "lat"), "dec": _named(opts["dec"], "dec"),
        "lha": parse_angle(opts["lha"], "lha", min_deg=0.0, max_deg=360.0),
        "ho": parse_altitude(opts["ho"], "ho") if "ho" in opts else None})


def run_triangle(st, req) -> None:
    from ..marking.triangle import solve
    from ..marking.worksheet import triangle_lines

    a = req.args
    st.say(*triangle_lines(solve(a["lat"], a["dec"], a["lha"], a["ho"])))
