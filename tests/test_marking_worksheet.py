"""The reduction in paper order: `nav reduce --worksheet` and the shell's `show` of a sight.

The order of the working is the trade's (common practice, no source): the time, GHA of the hour
plus the increment (and v), Dec with d, the AP and LHA, Hc and Z with the rule for Zn, the
altitude corrections and the main correction, Ho, and the intercept with T or A. The figures
themselves are checked against astropy and geographiclib in test_marking_reference.py; here the
arithmetic shown on each line must add up.
"""

from __future__ import annotations

import re
from datetime import datetime, timezone

from nav.angles import parse_angle
from nav.cli import main
from shell_driver import open_state, run_lines

ORDER = ("time", "GHA", "Dec", "AP", "LHA", "Hc, Z", "Zn", "altitude", "main", "Ho", "intercept")
CSV = ("sight,date,watch_time,watch_error,zone,body,limb,hs,index_error,eye_height,dr_lat,dr_lon\n"
       "1,2026-03-20,07:42:10,1 min 5 s fast,+10,Sun,lower,34 12.3,2.4 off,10 ft,20 30 S,151 26 W\n"
       "2,2026-03-20,07:50:00,1 min 5 s fast,+10,Moon,lower,30 00.0,2.4 off,10 ft,20 30 S,151 26 W\n")


def _angle(text):
    return parse_angle(text.replace("°", " ").replace("′", ""), "x", min_deg=0, max_deg=360)


def test_worksheet_is_in_paper_order_and_adds_up(tmp_path, capsys):
    path = tmp_path / "sun.csv"
    path.write_text(CSV)
    assert main(["reduce", "--worksheet", str(path)]) == 0
    out = capsys.readouterr().out
    sight1 = out.split("Sight 2")[0]
    labels = [line[2:12].strip() for line in sight1.splitlines()[1:] if line.startswith("  ")]
    assert [lab for lab in labels if lab in ORDER] == list(ORDER)
    # watch 07:42:10, 1 min 5 s fast -> ZT 07:41:05; ZD +10 -> 17:41:05 UTC (UTC = ZT + ZD)
    assert "ZT 07:41:05" in sight1 and "UTC 17:41:05 on 2026-03-20" in sight1
    m = re.search(r"GHA\s+17h (\S+) \+ 41m05s (\S+) = (\S+)", sight1)
    hour, incr, gha = (_angle(g) for g in m.groups())
    assert abs(hour + incr - gha) < 1e-9
    assert abs(incr - 15.0 * (41 * 60 + 5) / 3600) <= 0.05 / 60     # 15° an hour, to 0.1′
    assert "2.4 off" in sight1 and "index +2.4′" in sight1
    moon = out.split("Sight 2")[1]
    assert "HP part" in moon and " + v " in moon and "with augmentation" in moon
    assert "CAUTION" in out


def test_shell_show_of_a_sight_includes_the_paper_order(tmp_path):
    clock = lambda: datetime(2026, 6, 14, 23, 30, tzinfo=timezone.utc)  # noqa: E731
    st, log = open_state(tmp_path / "skua.jsonl", "Skua (invented)", "Worksheet test", clock)
    try:
        run_lines(st, "set eye 3 ie 1.2",
                  "dr 41 30.0 N 032 03.0 W course 245 speed 6.5 at 2026-06-14T20:00:00Z",
                  "sight Sun 52 08.4 at 21:00:00")
        out = run_lines(st, "show e0004")
        assert "worked the tables' way, in paper order" in out
        assert re.search(r"GHA\s+21h .* \+ 00m00s", out)
        assert "intercept" in out.split("paper order")[1]
    finally:
        log.close()


def test_shell_triangle_against_geographiclib(tmp_path):
    from geographiclib.geodesic import Geodesic

    clock = lambda: datetime(2026, 6, 14, 23, 30, tzinfo=timezone.utc)  # noqa: E731
    st, log = open_state(tmp_path / "skua.jsonl", "Skua (invented)", "Triangle test", clock)
    try:
        out = run_lines(st, "triangle lat 26 S dec 12 03.4 S lha 315 ho 44 12.3")
        # geographiclib on a sphere: Hc = 90° − the arc from the AP to the GP (Karney 2013)
        inv = Geodesic(1.0, 0.0).Inverse(-26.0, 0.0, -(12 + 3.4 / 60), -315.0)
        hc = 90.0 - inv["a12"]
        assert f"{int(hc)}°{(hc - int(hc)) * 60:04.1f}′" in out
        assert f"Zn        {inv['azi1'] % 360:05.1f}°" in out and " nmi A" in out
        out = run_lines(st, "triangle lat 26 dec 12 S lha 315")
        assert "error" in out and "lat" in out and len(log.entries) == 1    # nothing logged
    finally:
        log.close()
