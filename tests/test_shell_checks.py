"""The shell's side of issue 10: the run check after a sight, `average`, the averaged sight in a
fix (asked first), `current` with the EP beside the DR, set and drift after a fix, `watch` and
its rate applied to sights timed on the watch. Sights from the independent truth of
tests/sight_truth.py (astropy/ERFA altitudes, Bennett's refraction, Mercator sailing).
Invented scenarios: the yawl Greylag at dusk; the ketch Sanderling overnight.
"""

from __future__ import annotations

from datetime import datetime, timezone
from io import StringIO

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from nav.logbook import load_log, new_log
from nav.units import ARCMIN_DEG, NMI_M
from shell_driver import run_lines
from sight_truth import hs_from_true, iso, track, true_alt_az

LAT, LON = 36.0, -15.0
T0 = np.datetime64("2026-03-21T19:30:00", "us")


def _state(tmp_path, answers=(), clock=datetime(2026, 3, 22, 6, 0, tzinfo=timezone.utc)):
    from nav.shell.state import ShellState

    log = new_log(tmp_path / "p.jsonl", "Greylag", "test")
    buf = StringIO()
    queue = list(answers)

    def ask(label, default, check, kind):
        buf.write(f"[asked] {label}\n")
        text = queue.pop(0) if queue else (default or "")
        if check:
            check(text)
        return text

    st = ShellState(log, out=buf, err=buf, clock=lambda: clock, ask=ask)
    st.buf = buf
    return st, log


def _sight(star, minutes, lat=LAT, lon=LON, plus_arcmin=0.0):
    t = T0 + np.timedelta64(int(minutes * 60), "s")
    hs = hs_from_true(true_alt_az(star, np.array([t]), [lat], [lon])[0])[0] + plus_arcmin * ARCMIN_DEG
    return f"sight {star} {hs:.6f} at {iso(t)[:-5]}Z"


def _miss_nmi(lat, lon):
    # geographiclib (WGS 84): the distance from the true position
    return Geodesic.WGS84.Inverse(LAT, LON, lat, lon)["s12"] / NMI_M


def test_run_checked_averaged_and_used_in_a_fix(tmp_path):
    # Greylag hove to at 36°N 15°W: four Dubhe shots a minute apart, the third 3′ high, then
    # Procyon and Hamal (Zn about 036°, 147°, 276°: astropy).
    st, log = _state(tmp_path, answers=["yes"])
    out = run_lines(st, "dr 36 05.0 N 015 06.0 W at 2026-03-21T19:00:00Z",
                    _sight("Dubhe", 0), _sight("Dubhe", 1), _sight("Dubhe", 2, plus_arcmin=3.0),
                    _sight("Dubhe", 3))
    assert "3.0\u2032 high" in out and "average e0003 e0004 e0005 e0006" in out
    out = run_lines(st, "average")
    assert "logged e0007: averaged sight" in out and "e0003 e0004 e0006" in out
    entry = load_log(tmp_path / "p.jsonl").effective_by_id("e0007")
    assert entry["source"] == "average of e0003 e0004 e0006; run e0003 e0004 e0005 e0006"
    out = run_lines(st, _sight("Procyon", 5), _sight("Hamal", 6), "fix")
    assert "[asked] use the averaged sight e0007 in place of e0003 e0004 e0005 e0006" in out
    fix = [e for e in load_log(tmp_path / "p.jsonl").effective_entries() if e.kind == "fix"][-1]
    assert list(fix["sight_ids"]) == ["e0007", "e0008", "e0009"]
    assert _miss_nmi(fix["lat_deg"], fix["lon_deg"]) < 0.2
    log.close()


def test_current_where_ep_and_set_drift_after_a_fix(tmp_path):
    # Sanderling: 090° at 6 kn; the current sets 180° at 1 kn (the truth, Mercator sailing); a
    # dusk fix, then a dawn fix; the DR runs from the dusk fix.
    import math
    ve, vn = 6.0, -1.0
    cmg, smg = math.degrees(math.atan2(ve, vn)) % 360, math.hypot(ve, vn)

    def at(star, minutes):
        la, lo = track(LAT, LON, cmg, smg, [minutes / 60.0])
        return _sight(star, minutes, la[0], lo[0])

    st, log = _state(tmp_path)
    out = run_lines(st, "dr 36 00.0 N 015 00.0 W course 090 speed 6 at 2026-03-21T19:30:00Z",
                    at("Dubhe", 0), at("Procyon", 1), at("Hamal", 2), "fix",
                    at("Alioth", 247), at("Denebola", 248), at("Procyon", 249), at("Capella", 250),
                    "fix")
    assert "current      set 180" in out and "`current apply`" in out
    fixes = [e for e in load_log(tmp_path / "p.jsonl").effective_entries() if e.kind == "fix"]
    assert "set_drift" not in fixes[0].data
    sd = fixes[1]["set_drift"]                   # the log carries it, as the batch JSON does
    assert sd["set_deg"] == pytest.approx(180.0, abs=1.0) and sd["since_utc"] == fixes[0]["utc"]
    out = run_lines(st, "current apply", "current")
    assert "logged e0012: current set 18" in out
    assert "EP " in out and "DR " in out
    cur = load_log(tmp_path / "p.jsonl").effective_by_id("e0012")
    assert cur["set_deg"] == pytest.approx(180.0, abs=1.0)        # the planted current
    assert cur["drift_kn"] == pytest.approx(1.0, abs=0.03)
    out = run_lines(st, "where at 2026-03-22T01:40:00Z")
    assert "EP " in out                     # 1 h after the fix: EP 1 nmi south of the DR
    log.close()


def test_entered_current_gives_the_ep(tmp_path):
    st, log = _state(tmp_path)
    out = run_lines(st, "dr 36 00.0 N 015 00.0 W course 090 speed 6 at 2026-03-21T18:00:00Z",
                    "current 180 1 at 2026-03-21T18:00:00Z", "where at 2026-03-21T22:00:00Z")
    # 4 h at 1 kn toward 180°: the EP is 4.0′ of latitude south of the DR (worked by hand)
    assert "position     36\u00b000.0\u2032 N  014\u00b030.3\u2032 W" in out
    assert "EP           35\u00b056.0\u2032 N  014\u00b030.3\u2032 W" in out
    log.close()


def test_watch_rate_applied_to_a_watch_time(tmp_path):
    # Comparisons worked by hand: zone +1, the watch 4 s fast on 10 June 12:00 UTC and 5 s fast
    # on 11 June: +1 s/day; a sight at watch 21:00:00 on 12 June (UTC 22:00 less ~6.4 s).
    st, log = _state(tmp_path, clock=datetime(2026, 6, 12, 23, tzinfo=timezone.utc))
    out = run_lines(st, "set zone +1", "dr 36 00.0 N 015 00.0 W at 2026-06-10T00:00:00Z",
                    "watch 11:00:04 at 2026-06-10T12:00:00Z by signal",
                    "watch 11:00:05 at 2026-06-11T12:00:00Z by gps", "watch",
                    "sight Vega 40 00.0 zt 2026-06-12 21:00:00")
    assert "rate +1.00 s/day" in out
    sight = [e for e in load_log(tmp_path / "p.jsonl").effective_entries() if e.kind == "sight"][-1]
    # error at 2026-06-12 21:59:54 UTC: 5 + 1 × (1 d 9 h 59 m 54 s) = 6.42 s fast
    assert sight["watch_error_s"] == pytest.approx(6.42, abs=0.01)
    assert sight["utc"].startswith("2026-06-12T21:59:53.5")       # 22:00:00 − 6.42 s
    assert "rate +1.00 s/day \u00d7" in out.split("sight Vega")[-1]    # the shell says so
    log.close()


def test_new_kinds_show_in_the_log_listing(tmp_path):
    st, log = _state(tmp_path)
    out = run_lines(st, "current 210 0.8 at 2026-03-21T18:00:00Z",
                    "watch 12:00:03 at 2026-03-21T12:00:00Z", "log")
    assert "current set 210.0\u00b0, drift 0.8 kn" in out and "watch 3 s fast" in out
    log.close()


def test_shell_fix_bias(tmp_path):
    # three stars ~120° apart, every Hs 2′ high (planted): the shell's `fix bias` gives it back
    st, log = _state(tmp_path)
    out = run_lines(st, "dr 36 05.0 N 015 06.0 W at 2026-03-21T19:00:00Z",
                    _sight("Dubhe", 0, plus_arcmin=2.0), _sight("Procyon", 1, plus_arcmin=2.0),
                    _sight("Hamal", 2, plus_arcmin=2.0), "fix bias")
    assert "shared error +2.0\u2032" in out and "usual causes: index error" in out
    fix = [e for e in load_log(tmp_path / "p.jsonl").effective_entries() if e.kind == "fix"][-1]
    assert _miss_nmi(fix["lat_deg"], fix["lon_deg"]) < 0.1
    log.close()


def test_import_keeps_the_current_and_the_fix_label(tmp_path):
    csv = tmp_path / "night.csv"
    csv.write_text("fix,utc,body,hs,dr_lat,dr_lon,course_deg,speed_kn,set_deg,drift_kn\n"
                   "dusk,2026-03-21T19:30:00Z,Dubhe,40 40.0,36 00.0 N,015 00.0 W,090,6,180,1.0\n"
                   "dusk,2026-03-21T19:31:00Z,Procyon,54 50.0,,,,,,\n")
    st, log = _state(tmp_path)
    run_lines(st, f"import {csv}")
    entries = load_log(tmp_path / "p.jsonl").effective_entries()
    cur = [e for e in entries if e.kind == "current"]
    assert len(cur) == 1 and cur[0]["set_deg"] == 180.0 and cur[0]["drift_kn"] == 1.0
    assert all("fix 'dusk'" in e["note"] for e in entries if e.kind == "sight")
    log.close()
