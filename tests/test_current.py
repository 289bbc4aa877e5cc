"""Set and drift and the EP (nav.current, nav.fixchain, `nav fix` on a file of several fixes):
star sights made from an independent truth (tests/sight_truth.py: astropy/ERFA altitudes,
Bennett's refraction; the track by the textbook's Mercator sailing) along a track with a known
current. An invented night passage: the ketch Sanderling, 090° at 6 kn through a current setting
180° at 1.0 kn.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from nav.cli import main
from nav.current import set_drift
from nav.errors import NavInputError
from nav.fixchain import chain_fixes, split_fixes
from nav.sightfile import parse_sight_csv
from nav.units import NMI_M
from sight_truth import hs_from_true, iso, track, true_alt_az

START = (36.0, -15.0)
T_START = np.datetime64("2026-03-21T19:30:00", "us")
COURSE, SPEED = 90.0, 6.0
SET, DRIFT = 180.0, 1.0
# The ground track: the vector sum of the way through the water and the current (common practice)
VE, VN = SPEED * math.sin(math.radians(COURSE)) + DRIFT * math.sin(math.radians(SET)), \
    SPEED * math.cos(math.radians(COURSE)) + DRIFT * math.cos(math.radians(SET))
CMG, SMG = math.degrees(math.atan2(VE, VN)) % 360.0, math.hypot(VE, VN)
DUSK = (("Dubhe", 0), ("Procyon", 1), ("Hamal", 2))                      # minutes after 19:30
NIGHT = (("Alioth", 247), ("Denebola", 248), ("Procyon", 249), ("Capella", 250))
HEADER = "fix,utc,body,hs,dr_lat,dr_lon,course_deg,speed_kn,set_deg,drift_kn"


def _true_at(minutes):
    return track(*START, CMG, SMG, np.asarray(minutes, float) / 60.0)


def _lines(label, shots, first_cells="", current=False):
    out = []
    for k, (star, m) in enumerate(shots):
        t = T_START + np.timedelta64(int(m * 60), "s")
        lat, lon = _true_at([m])
        hs = hs_from_true(true_alt_az(star, np.array([t]), lat, lon)[0])[0]
        head = first_cells if k == 0 else ",,,"
        cur = f"{SET},{DRIFT}" if current and k == 0 else ","
        out.append(f"{label},{iso(t)},{star},{hs:.7f},{head},{cur}")
    return out


def _file(current=False):
    lines = _lines("dusk", DUSK, f"{START[0]},{START[1]},{COURSE},{SPEED}", current)
    lines += _lines("night", NIGHT, ",,,")
    return "\n".join([HEADER] + lines) + "\n"


def _miss_nmi(lat, lon, minutes):
    tl, to = _true_at([minutes])
    return Geodesic.WGS84.Inverse(float(tl[0]), float(to[0]), lat, lon)["s12"] / NMI_M


def test_known_current_comes_back_as_set_and_drift():
    # The DR from the dusk fix runs 090° 6 kn; the fix falls where the current carried the vessel.
    dusk, night = chain_fixes(parse_sight_csv(_file()).rows)
    assert dusk.set_drift is None
    sd = night.set_drift
    print(f"\ncurrent: planted 180° 1.0 kn, recovered {sd.set_deg:.1f}° {sd.drift_kn:.3f} kn")
    assert sd.set_deg == pytest.approx(SET, abs=1.0)
    assert sd.drift_kn == pytest.approx(DRIFT, abs=0.03)
    assert sd.since_utc == dusk.result.fix.utc
    # the dusk fix is on the truth; the night fix too (noise-free sights)
    assert _miss_nmi(dusk.result.fix.lat_deg, dusk.result.fix.lon_deg, 2) < 0.1
    assert _miss_nmi(night.result.fix.lat_deg, night.result.fix.lon_deg, 250) < 0.2


def test_ep_with_the_current_given_lands_on_the_fix():
    dusk, night = chain_fixes(parse_sight_csv(_file(current=True)).rows)
    assert night.ep is not None
    # EP = DR + current: with the true current given, the EP is where the truth is
    assert _miss_nmi(*night.ep, 250) < 0.2
    dr_miss = _miss_nmi(night.result.dr_lat_deg, night.result.dr_lon_deg, 250)
    assert dr_miss == pytest.approx(DRIFT * (250 - 2) / 60.0, rel=0.05)   # 1 kn for 4.1 h
    # the set and drift is still measured from the DR (the definition)
    assert night.set_drift.set_deg == pytest.approx(SET, abs=1.0)


def test_running_fix_advanced_along_the_ep_track():
    # One running fix over 40 minutes through the current: lines advanced along the EP track land
    # on the truth; along the DR track they miss by about the current's run (common practice).
    shots = (("Alioth", 210), ("Denebola", 225), ("Procyon", 240), ("Capella", 250))
    head = "fix,utc,body,hs,dr_lat,dr_lon,course_deg,speed_kn,set_deg,drift_kn"
    lat0, lon0 = _true_at([210])

    def run(current):
        lines = []
        for k, (star, m) in enumerate(shots):
            t = T_START + np.timedelta64(int(m * 60), "s")
            lat, lon = _true_at([m])
            hs = hs_from_true(true_alt_az(star, np.array([t]), lat, lon)[0])[0]
            first = f"{lat0[0]:.7f},{lon0[0]:.7f},{COURSE},{SPEED}," + (
                f"{SET},{DRIFT}" if current else ",") if k == 0 else ",,,,,"
            lines.append(f",{iso(t)},{star},{hs:.7f},{first}")
        (c,) = chain_fixes(parse_sight_csv("\n".join([head] + lines)).rows)
        return c

    with_current, without = run(True), run(False)
    assert with_current.along_ep and any("EP track" in n for n in with_current.notes)
    assert _miss_nmi(with_current.result.fix.lat_deg, with_current.result.fix.lon_deg, 250) < 0.1
    assert _miss_nmi(without.result.fix.lat_deg, without.result.fix.lon_deg, 250) > 0.2


def test_set_drift_worked_example():
    # Worked by hand: DR 36°N 15°W, fix 4 nmi due south after 4 h -> set 180°, drift 1.0 kn
    from datetime import datetime, timezone
    t0 = datetime(2026, 3, 21, 20, tzinfo=timezone.utc)
    t1 = datetime(2026, 3, 22, 0, tzinfo=timezone.utc)
    sd = set_drift(36.0 - 4 / 60.0, -15.0, 36.0, -15.0, t0, t1)
    assert sd.set_deg == pytest.approx(180.0, abs=1e-6) and sd.drift_kn == pytest.approx(1.0)
    with pytest.raises(NavInputError, match="too short"):
        set_drift(36.0, -15.0, 36.0, -15.0, t0, t0)


def test_fix_labels_must_keep_together():
    text = "\n".join(["fix,utc,body,hs,dr_lat,dr_lon",
                      "a,2026-03-21T19:30:00Z,Dubhe,40,36,-15",
                      "b,2026-03-21T19:32:00Z,Procyon,54,,",
                      "a,2026-03-21T19:34:00Z,Hamal,33,,"])
    with pytest.raises(NavInputError, match="resume"):
        split_fixes(parse_sight_csv(text).rows)


def test_cli_json_several_fixes(tmp_path, capsys):
    path = tmp_path / "sanderling.csv"
    path.write_text(_file())
    assert main(["fix", str(path), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert len(doc["fixes"]) == 2
    assert doc["fix"] == doc["fixes"][-1]
    assert "set_drift" not in doc["fixes"][0]
    sd = doc["fixes"][1]["set_drift"]
    assert set(sd) == {"set_deg", "drift_kn", "since_utc"}
    assert sd["set_deg"] == pytest.approx(SET, abs=1.0) and sd["drift_kn"] == pytest.approx(DRIFT, abs=0.03)
    assert main(["fix", str(path)]) == 0
    text = capsys.readouterr().out
    assert "[night]" in text and "set 180" in text


def test_example_file_gives_the_planted_current(capsys):
    # examples/overnight-two-fixes.csv was written from the same truth (astropy altitudes on the
    # track 090° 6 kn through 180° 1.0 kn), Hs rounded to 0.1′ as read off a sextant.
    from pathlib import Path

    path = Path(__file__).resolve().parent.parent / "examples" / "overnight-two-fixes.csv"
    assert main(["fix", str(path), "--json"]) == 0
    sd = json.loads(capsys.readouterr().out)["fix"]["set_drift"]
    assert sd["set_deg"] == pytest.approx(SET, abs=3.0)
    assert sd["drift_kn"] == pytest.approx(DRIFT, abs=0.05)
    assert sd["since_utc"] == "2026-03-21T19:32:00Z"


def test_cli_sheets_one_per_fix_with_the_ep(tmp_path, capsys):
    path = tmp_path / "sanderling.csv"
    path.write_text(_file(current=True))
    png = tmp_path / "sheet.png"
    assert main(["fix", str(path), "--plot", str(png)]) == 0
    out = capsys.readouterr().out
    assert (tmp_path / "sheet-dusk.png").stat().st_size > 10_000
    assert (tmp_path / "sheet-night.png").stat().st_size > 10_000
    assert "EP " in out and "DR " in out            # side by side at the fix time
