"""`nav almanac`: GHA, Dec, SHA, HP, SD and GHA Aries of any body, at an instant or as a table."""

from __future__ import annotations

import gc
import json
import sys

from .. import CAUTION
from ..errors import NavInputError

# numpy, the almanac and the renderers are imported inside the command, so that registering it
# (every `nav` start, `nav --version` included) imports neither numpy nor skyfield.

MAX_ROWS = 2_000_000
CHUNK_ROWS = 16_384         # rows computed and written at a time (bounded memory)
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

    from ..ut1_note import ut1_message_and_mask

    bodies = _expand_bodies(args.bodies)
    when, single = _instants(args)
    out = sys.stdout
    if single:
        from ..ephemeris import check_range

        al = _almanac()
        t64 = np.array([np.datetime64(when.replace(tzinfo=None), "us")])
        check_range(t64, "utc")
        results = al.almanac(bodies, t64)
        ut1 = ut1_message_and_mask(t64)[0]
        if args.json:
            _write_json(out, [(results, t64)], ut1)
        else:
            _write_single(out, results, t64[0], ut1)
        return 0
    chunks = table_chunks(bodies, *when)
    start, stop, step = when
    first = np.datetime64(start.replace(tzinfo=None), "us")
    last = first + (int((stop - start) / step)) * np.timedelta64(int(step.total_seconds() * 1e6), "us")
    ut1 = ut1_message_and_mask(np.array([first, last]))[0]
    if args.json:
        _write_json(out, chunks, ut1)
    else:
        _write_table(out, chunks, ut1)
    return 0


def table_chunks(bodies, start, stop, step, chunk_rows: int | None = None):
    """The table's rows as (results, t64) a chunk of instants at a time: a generator, so a table
    of any length is computed and written in memory bounded by the chunk (CHUNK_ROWS rows).

    The span is checked (row limit, ephemeris range) before the first chunk is yielded, so a
    refused table prints nothing.
    """
    import numpy as np

    from ..timekeeping import UTC, time_range

    if stop < start:
        time_range(start, stop, step, max_rows=MAX_ROWS)          # refuses: --from after --to
    n = int((stop - start) / step) + 1
    if n * len(bodies) > MAX_ROWS:
        raise NavInputError(
            f"that table would have {n * len(bodies):,} rows ({len(bodies)} bodies); the limit "
            f"is {MAX_ROWS:,}", field="step", example="a larger --step, a shorter span or fewer bodies")
    base = np.datetime64(start.astimezone(UTC).replace(tzinfo=None), "us")
    dt = np.timedelta64(int(step.total_seconds() * 1e6), "us")
    ends = np.array([base, base + (n - 1) * dt])
    from ..ephemeris import check_range

    check_range(ends, "from" if ends[0] < np.datetime64("1900-01-01") else "to")
    per = max(1, (chunk_rows or CHUNK_ROWS) // len(bodies))
    al = _almanac()

    def gen():
        for i in range(0, n, per):
            t64 = base + np.arange(i, min(i + per, n)) * dt
            yield al.almanac(bodies, t64), t64
            # The chunk's skyfield objects hold reference cycles: collect the youngest
            # generation (about 0.1 ms) so the peak stays flat rather than waiting for the
            # collector's thresholds.
            gc.collect(0)
    return gen()


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


def _write_json(out, chunks, ut1=None) -> None:
    """A JSON list written piecewise: one chunk of rows at a time, never the whole list. Rows
    past the IERS measured values carry the UT1 caution in ``warnings``."""
    from ..render import utc_strings
    from ..iers import beyond_measured

    out.write("[")
    first = True
    for results, t64 in chunks:
        parts = []
        mask = beyond_measured(t64) if ut1 else None
        for i, utc in enumerate(utc_strings(t64)):
            for rec in results:
                d = _row_dict(rec, i, utc)
                if ut1 and mask[i]:
                    d["warnings"] = [ut1]
                parts.append(("\n  " if first else ",\n  ") + json.dumps(d, ensure_ascii=False))
                first = False
        out.write("".join(parts))
    out.write("\n]\n")


def _write_single(out, results, t, ut1=None) -> None:
    from ..render import almanac_lines

    lines = almanac_lines(results, t)
    if ut1:
        lines[-1:-1] = [f"! {ut1}", ""]
    out.write("\n".join(lines) + "\n")


def _write_table(out, chunks, ut1=None) -> None:
    from ..angles import format_dm
    from ..render import ALMANAC_HEADER, ALMANAC_NOTE, almanac_cells, utc_strings

    out.write(f"{'UTC':<21}{'GHA Aries':<11}" + ALMANAC_HEADER.rstrip() + "\n")
    for results, t64 in chunks:
        lines = []
        for i, utc in enumerate(utc_strings(t64)):
            aries = format_dm(float(results[0].gha_aries_deg[i]), deg_width=3, wrap360=True)
            for rec in results:
                lines.append(f"{utc:<21}{aries:<11}" + almanac_cells(rec, i).rstrip() + "\n")
        out.write("".join(lines))
    if ut1:
        out.write(f"\n! {ut1}\n")
    out.write(f"\n{ALMANAC_NOTE} {CAUTION}\n")


