"""Draw sample plotting sheets and a passage plot from invented sights, to look at them.

    python tools/sample_plots.py /tmp/nav_plots          # PNG (100 dpi) and one PDF

Every scenario is invented (vessels, passages, sight errors): the sights are synthesised at a
chosen "true" position from nav.almanac's GHA and Dec (Ho = Hc there, plus a small invented
error), reduced from the tables' assumed positions near a DR that is some miles out, and solved
with nav.fix.solve_fix. Each sheet also marks that "true" position (the ``known`` argument), and
the passage plot an invented "true" track set by a current (``reference_track``). Nothing here
is an observation. Writes only into the folder given.
"""

from __future__ import annotations

import argparse
import sys
from datetime import datetime, timedelta, timezone
from pathlib import Path

from nav import almanac
from nav.export import ExportPoint
from nav.fix import Sight, lop_at, solve_fix
from nav.reduction import assumed_position, hc_zn
from nav.sailing import advance_position, dr_position

UTC = timezone.utc


def synth(truth, dr, fix_utc, plan, *, course_deg=None, speed_kn=0.0, from_dr=False):
    """Sights (Ho = Hc at the observer, + error) and their LOPs advanced to `fix_utc`.

    `plan`: (body, utc, error_arcmin). The vessel sails `course_deg`/`speed_kn` throughout, so
    the observer at a sight's time is `truth` retired along that course, and the DR likewise.
    """
    sights, lops = [], []
    for body, utc, err in plan:
        h = (utc - fix_utc).total_seconds() / 3600.0
        obs, drs = truth, dr
        if speed_kn:
            obs = advance_position(*truth, course_deg, speed_kn, h)
            drs = advance_position(*dr, course_deg, speed_kn, h)
        b = almanac.body_almanac(body, utc)
        hc, _ = hc_zn(float(obs[0]), float(b.dec_deg), float(b.gha_deg) + float(obs[1]))
        s = Sight(float(hc) + err / 60.0, float(b.gha_deg), float(b.dec_deg), utc, b.body,
                  course_deg=course_deg, speed_kn=speed_kn)
        sights.append(s)
        ap = (float(drs[0]), float(drs[1])) if from_dr else \
            tuple(float(v) for v in assumed_position(float(drs[0]), float(drs[1]), s.gha_deg))
        lops.append(lop_at(s, *ap, fix_utc=fix_utc))
    fix = solve_fix(sights, *dr, fix_utc)
    return fix, lops


def scenarios():
    t = datetime
    out = {}
    # Cutter "Marram Wren", dawn stars west of the islands, hove to.
    f = t(2026, 5, 14, 5, 40, tzinfo=UTC)
    out["two_star_fix"] = (synth((38.69, -27.83), (38.78, -27.62), f,
                                 [("Schedar", f, 0.4), ("Altair", f - timedelta(minutes=4), -0.3)]),
                           (38.78, -27.62), (38.69, -27.83), "Marram Wren: two-star fix at dawn")
    # Ketch "Halcyon Drift", Sun-run-Sun with a third Sun line at noon, 6.5 kn on 215°.
    f = t(2026, 6, 2, 13, 0, tzinfo=UTC)
    out["running_fix"] = (synth((44.21, -14.33), (44.30, -14.05), f,
                                [("Sun", t(2026, 6, 2, 9, 10, tzinfo=UTC), 0.5),
                                 ("Sun", t(2026, 6, 2, 11, 20, tzinfo=UTC), -0.4),
                                 ("Sun", f, 0.2)], course_deg=215.0, speed_kn=6.5),
                          (44.30, -14.05), (44.21, -14.33),
                          "Halcyon Drift: running fix, Sun-run-Sun")
    # Sloop "Petrel Nine", evening stars, one sight misread by 9′.
    f = t(2026, 9, 21, 19, 20, tzinfo=UTC)
    out["flagged_sight"] = (synth((47.52, -8.71), (47.45, -8.95), f,
                                  [("Polaris", f, 0.3), ("Alpheratz", f, -0.5),
                                   ("Enif", f, 9.0), ("Altair", f, 0.2), ("Arcturus", f, -0.6),
                                   ("Alkaid", f, 0.4)]),
                            (47.45, -8.95), (47.52, -8.71), "Petrel Nine: six stars, one doubtful")
    # Schooner "Tui Lantern", across the 180th meridian in the southern tropics.
    f = t(2026, 8, 9, 7, 15, tzinfo=UTC)
    out["dateline"] = (synth((-16.87, 179.93), (-16.76, -179.82), f,
                             [("Rasalhague", f, 0.4), ("Nunki", f, -0.2),
                              ("Rigil Kentaurus", f, 0.6), ("Spica", f, -0.5)]),
                       (-16.76, -179.82), (-16.87, 179.93), "Tui Lantern: star fix across 180°")
    # Yawl "Southern Kelp", Tasman Sea, three stars reduced from the DR itself.
    f = t(2026, 11, 3, 9, 50, tzinfo=UTC)
    out["south_from_dr"] = (synth((-38.42, 160.61), (-38.33, 160.47), f,
                                  [("Diphda", f, 0.3), ("Achernar", f, -0.4),
                                   ("Peacock", f, 0.5)], from_dr=True),
                            (-38.33, 160.47), (-38.42, 160.61),
                            "Southern Kelp: three stars from the DR")
    return out


def passage():
    """Ketch "Halcyon Drift" over a day and a half: a DR track with two course changes, and an
    invented "true" track: the DR set 160° by a 0.4 kn current the DR does not know."""
    start = datetime(2026, 6, 1, 18, 0, tzinfo=UTC)
    legs = [(230.0, 6.0, 9), (215.0, 6.5, 14), (250.0, 5.5, 12)]     # course, speed, hours
    pos, t = (45.10, -12.60), start
    track = [ExportPoint(t, *pos, "dr", "departure")]
    for course, speed, hours in legs:
        for _ in range(hours // 3):
            pos = tuple(float(v) for v in dr_position(*pos, course, speed, 3))
            t += timedelta(hours=3)
            track.append(ExportPoint(t, *pos, "dr", ""))
    fixes = []
    for i, (p, kind) in enumerate([(track[3], "fix"), (track[7], "running_fix"),
                                   (track[10], "fix")]):
        fixes.append(ExportPoint(p.utc + timedelta(minutes=10), p.lat_deg - 0.05 * (i + 1),
                                 p.lon_deg + 0.07 * i, kind, "", 2.0 + i, 0.8, 40.0 + 30 * i,
                                 ("only two LOPs: there is no check on a bad sight",)
                                 if i == 2 else ()))
    truth = [ExportPoint(p.utc, *(float(v) for v in dr_position(
        p.lat_deg, p.lon_deg, 160.0, 0.4, (p.utc - start).total_seconds() / 3600.0)), "other", "")
        for p in track]
    return track, fixes, truth


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("folder", type=Path, help="where the PNG/PDF files go (created if missing)")
    args = ap.parse_args(argv)
    from nav.plotting import plot_fix_sheet, plot_passage

    args.folder.mkdir(parents=True, exist_ok=True)
    written = []
    for name, ((fix, lops), dr, truth, title) in scenarios().items():
        p = args.folder / f"sheet_{name}.png"
        plot_fix_sheet(fix, lops, dr=(*dr, fix.utc), known=truth,
                       known_label="known position (invented)", title=title, path=p)
        written.append(p)
    fix, lops = synth((38.69, -27.83), (38.78, -27.62), datetime(2026, 5, 14, 5, 40, tzinfo=UTC),
                      [("Schedar", datetime(2026, 5, 14, 5, 40, tzinfo=UTC), 0.4),
                       ("Altair", datetime(2026, 5, 14, 5, 36, tzinfo=UTC), -0.3)])
    p = args.folder / "sheet_two_star_fix.pdf"
    plot_fix_sheet(fix, lops, dr=(38.78, -27.62), path=p)
    written.append(p)
    track, fixes, truth = passage()
    p = args.folder / "passage.png"
    plot_passage(track, fixes, reference_track=truth,
                 reference_label="true track (invented current)",
                 title="Halcyon Drift: Biscay to the west, June 2026", path=p)
    written.append(p)
    for p in written:
        print(p)
    return 0


if __name__ == "__main__":
    sys.exit(main())
