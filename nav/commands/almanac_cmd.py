"""`nav almanac`: GHA, Dec, SHA, HP, SD and GHA Aries of any body, at an instant or as a table."""

from __future__ import annotations

import json
import sys

from .. import CAUTION
from ..errors import NavInputError

# numpy, the almanac and the renderers are imported inside the command, so that registering it
# (every `nav` start, `nav --version` included) imports neither numpy nor skyfield.

MAX_ROWS = 2_000_000
GROUPS = {
    "all": lambda: _almanac().body_names(),
    "stars": lambda: _almanac().body_names()[6:],
    "planets": lambda: list(_almanac().PLANETS),
}


def _almanac():
    from .. import almanac

    return almanac


def register(sub) -> None:
    p = sub.add_parser(
        "almanac", help="GHA, Dec, SHA, HP, SD of bodies at an instant or over a span",
        description="Almanac data for bodies (names, or the groups all, stars, planets), at one "
                    "instant (--utc) or as a table (--from/--to/--step). Times are ISO 8601 with "
                    "Z or an offset.")
    p.add_argument("bodies", nargs="+", metavar="BODY")
    p.add_argument("--utc", help="one instant, e.g. 2026-03-20T18:42:10Z or "
                                 "2026-03-20T15:42:10-03:00")
    p.add_argument("--from", dest="start", help="first instant of a table")
    p.add_argument("--to", dest="stop", help="last instant of a table (inclusive)")
    p.add_argument("--step", default="1h", help="table step: 30s, 10min, 1h, 1d (default 1h)")
    p.add_argument("--json", action="store_true", help="print a JSON list, one object per body and instant")
    p.set_defaults(func=run)


def _instants(args):
    from ..timekeeping import parse_duration, parse_utc

    if args.utc and (args.start or args.stop):
        raise NavInputError("give either --utc or --from/--to, not both", field="utc",
                            example="--utc 2026-03-20T18:42:10Z")
    if args.utc:
        return parse_utc(args.utc, "utc"), True
    if not (args.start and args.stop):
        raise NavInputError("give --utc, or both --from and --to", field="utc",
                            example="--utc 2026-03-20T18:42:10Z")
    start, stop = parse_utc(args.start, "from"), parse_utc(args.stop, "to")
    step = parse_duration(args.step, "step")
    return (start, stop, step), False


def _expand_bodies(names: list[str]) -> list[str]:
    al = _almanac()
    out: list[str] = []
    for n in names:
        group = GROUPS.get(n.strip().lower())
        out.extend(group() if group else [al.resolve_body(n)])
    return list(dict.fromkeys(out))


def run(args) -> int:
    import numpy as np

    from ..timekeeping import time_range

    bodies = _expand_bodies(args.bodies)
    when, single = _instants(args)
    if single:
        t64 = np.array([np.datetime64(when.replace(tzinfo=None), "us")])
    else:
        start, stop, step = when
        if stop >= start:
            n_rows = (int((stop - start) / step) + 1) * len(bodies)
            if n_rows > MAX_ROWS:
                raise NavInputError(
                    f"that table would have {n_rows:,} rows ({len(bodies)} bodies); the limit is "
                    f"{MAX_ROWS:,}", field="step", example="a larger --step, a shorter span or fewer bodies")
        t64 = time_range(start, stop, step, max_rows=MAX_ROWS)
    al = _almanac()
    from ..ephemeris import check_range

    check_range(t64, "utc" if single else ("from" if t64[0] < np.datetime64("1900-01-01") else "to"))
    results = al.almanac(bodies, t64)
    ut1 = _ut1_caution(t64)
    out = sys.stdout
    if args.json:
        _write_json(out, results, t64, ut1)
    elif single:
        _write_single(out, results, t64[0], ut1)
    else:
        _write_table(out, results, t64, ut1)
    return 0


def _ut1_caution(t64):
    """(message, mask of the instants it concerns), or (None, None) where UT1 is measured."""
    from ..ephemeris import ut1_status
    from ..iers import beyond_measured

    message = ut1_status(t64).message
    return (message, beyond_measured(t64)) if message else (None, None)


def _row_dict(rec, i: int, utc: str) -> dict:
    import numpy as np

    d = {"body": rec.body, "utc": utc, "gha_deg": round(float(rec.gha_deg[i]), 7),
         "dec_deg": round(float(rec.dec_deg[i]), 7)}
    if rec.kind == "star":
        d["sha_deg"] = round(float(rec.sha_deg[i]), 7)
    d["gha_aries_deg"] = round(float(rec.gha_aries_deg[i]), 7)
    d["ra_deg"] = round(float(rec.ra_deg[i]), 7)
    if rec.hp_arcmin is not None:
        d["hp_arcmin"] = round(float(rec.hp_arcmin[i]), 4)
    if rec.sd_arcmin is not None:
        d["sd_arcmin"] = round(float(rec.sd_arcmin[i]), 4)
    if rec.magnitude is not None:
        mag = rec.magnitude if np.ndim(rec.magnitude) == 0 else rec.magnitude[i]
        if np.isfinite(mag):
            d["magnitude"] = round(float(mag), 2)
    return d


def _write_json(out, results, t64, ut1) -> None:
    from ..render import utc_strings

    utcs = utc_strings(t64)
    message, mask = ut1
    out.write("[")
    first = True
    for i, utc in enumerate(utcs):
        for rec in results:
            d = _row_dict(rec, i, utc)
            if message and (mask is None or mask[i]):
                d["warnings"] = [message]
            out.write(("\n  " if first else ",\n  ") + json.dumps(d, ensure_ascii=False))
            first = False
    out.write("\n]\n")


def _write_single(out, results, t, ut1) -> None:
    from ..render import almanac_lines

    lines = almanac_lines(results, t)
    if ut1[0]:
        lines[-1:-1] = [f"! {ut1[0]}", ""]
    out.write("\n".join(lines) + "\n")


def _write_table(out, results, t64, ut1) -> None:
    from ..angles import format_dm
    from ..render import ALMANAC_HEADER, ALMANAC_NOTE, almanac_cells, utc_strings

    utcs = utc_strings(t64)
    out.write(f"{'UTC':<21}{'GHA Aries':<11}" + ALMANAC_HEADER.rstrip() + "\n")
    for i, utc in enumerate(utcs):
        aries = format_dm(float(results[0].gha_aries_deg[i]), deg_width=3, wrap360=True)
        for rec in results:
            out.write(f"{utc:<21}{aries:<11}" + almanac_cells(rec, i).rstrip() + "\n")
    if ut1[0]:
        out.write(f"\n! {ut1[0]}\n")
    out.write(f"\n{ALMANAC_NOTE} {CAUTION}\n")


