"""`nav series FILE.csv`: check every run of shots of one body in a batch file."""

from __future__ import annotations

import json
import sys

from .. import CAUTION


def register(sub) -> None:
    p = sub.add_parser("series", help="check runs of sights of one body for a bad shot",
                       description="Find every run of three or more sights of one body within a "
                                   "few minutes, compare each shot with the altitude change the "
                                   "ephemeris predicts at the DR, flag a shot that departs from "
                                   "the run, and give the run's averaged sight.")
    p.add_argument("file", metavar="SIGHTS.csv")
    p.add_argument("--json", action="store_true", help='print {"runs": [...]}')
    p.add_argument("--window", type=float, default=None, metavar="MIN",
                   help="longest run, first to last shot, in minutes (default 15)")
    p.add_argument("--skip-bad-rows", action="store_true",
                   help="compute from the valid rows and list the bad ones")
    p.set_defaults(func=run_series)


def run_series(args) -> int:
    from ..errors import NavInputError
    from ..render_checks import series_dict, series_lines
    from ..series import WINDOW_MIN, check_runs
    from .sights_cmd import _load, _reduce

    window = WINDOW_MIN if args.window is None else args.window
    if not (0.5 <= window <= 120.0):
        raise NavInputError("--window must be between 0.5 and 120 minutes", field="window",
                            example="15")
    rows, red = _reduce(args, _load(args))
    runs = check_runs(rows, red, window_min=window)
    from ..ut1_note import ut1_cautions

    ut1 = ut1_cautions(red.utc)
    if args.json:
        d = {"runs": [series_dict(r) for r in runs], "window_min": window}
        if ut1:
            d["warnings"] = ut1
        json.dump({**d, "caution": CAUTION}, sys.stdout, indent=1, ensure_ascii=False)
        sys.stdout.write("\n")
        return 0
    if not runs:
        print(f"no run of three or more sights of one body within {window:g} min in {args.file}")
    for run in runs:
        for line in series_lines(run):
            print(line)
        print()
    from .vessel_args import close_text

    return close_text(ut1)
