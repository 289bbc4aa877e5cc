"""`nav export --csv` writes each sight's logged fix as the batch file's `fix` label, so that
`nav fix` on the export gives the log's fixes again (the demo passage log)."""

from __future__ import annotations

import math
from pathlib import Path

from nav.export import SIGHT_CSV_COLUMNS, export_sights, sights_to_csv
from nav.fixchain import chain_fixes
from nav.logbook import load_log
from nav.sightfile import parse_sight_csv
from nav.units import ARCMIN_DEG, NMI_PER_DEG

DEMO = Path(__file__).resolve().parent.parent / "sight_logs" / "demo-azores-madeira.jsonl"
# The fix is found by iteration from the DR, stopped when a step is under 0.01 nmi (nav's fix
# solver). The log reduced each fix from the passage's DR, the batch file from the DR restarted
# at the previous fix: two starts, so the two answers may differ by up to about that last step.
SAME_FIX_NMI = ARCMIN_DEG / 100.0 * NMI_PER_DEG          # 0.01 nmi


def _dist_nmi(lat1, lon1, lat2, lon2):
    # plane sailing, good to far better than 0.01 nmi over a few cables (common practice)
    dlat = (lat2 - lat1) * NMI_PER_DEG
    dep = (lon2 - lon1) * NMI_PER_DEG * math.cos(math.radians((lat1 + lat2) / 2))
    return math.hypot(dlat, dep)


def test_export_reproduces_the_logged_fixes():
    log = load_log(DEMO)
    out = export_sights(log)
    logged = {e.id: e for e in log.effective_entries("fix")}
    used = {sid for e in logged.values() for sid in e["sight_ids"]}
    for row, sight in zip(out.rows, sorted(
            (e for e in log.effective_entries("sight")), key=lambda e: e["utc"])):
        assert row["fix"] == next((f for f, e in logged.items() if sight.id in e["sight_ids"]),
                                  "")
    assert any(r["fix"] == "" for r in out.rows)     # the demo drops one star from a fix
    text = sights_to_csv(out.rows, SIGHT_CSV_COLUMNS)
    chain = chain_fixes(parse_sight_csv(text).rows)
    assert [c.label for c in chain] == sorted(logged, key=lambda k: logged[k]["utc"])
    for c in chain:
        e, f = logged[c.label], c.result.fix
        assert f.kind.replace(" ", "_") == e["fix_kind"]
        assert _dist_nmi(f.lat_deg, f.lon_deg, e["lat_deg"], e["lon_deg"]) <= SAME_FIX_NMI
    unused = [r for r in parse_sight_csv(text).rows if r.cells.get("fix", "") == ""]
    assert len(unused) == len([s for s in log.effective_entries("sight") if s.id not in used])
    assert any("in no fix" in n for c in chain for n in c.notes)


def test_blank_label_row_carries_the_dr_on_but_is_in_no_fix():
    # invented scenario: the ketch Tern Hollow, three stars at dusk, the middle one doubtful;
    # the second row turns the boat (course 090, 6 kn) and the third fix row must run on it
    head = "fix,utc,body,hs,dr_lat,dr_lon,course_deg,speed_kn"
    rows = ["a,2026-03-21T19:30:00Z,Dubhe,40,36,-15,0,0",
            "a,2026-03-21T19:32:00Z,Procyon,54,,,,",
            ",2026-03-21T19:34:00Z,Hamal,33,,,90,6",
            "b,2026-03-21T20:34:00Z,Dubhe,41,,,,",
            "b,2026-03-21T20:36:00Z,Procyon,50,,,,"]
    # the altitudes are made up, not consistent: keep the doubtful sights, test only the DR
    first, second = chain_fixes(parse_sight_csv("\n".join([head] + rows)).rows,
                                keep_doubtful=True)
    assert [r.row for r in first.rows] == [1, 2] and [r.row for r in second.rows] == [4, 5]
    assert any("row 3" in n and "in no fix" in n for n in second.notes)
    # one hour at 6 kn due east from the first fix (common practice: 6 nmi of departure)
    f = first.result.fix
    dep_nmi = (second.rows[0].dr_lon_deg - f.lon_deg) * NMI_PER_DEG * math.cos(
        math.radians(f.lat_deg))
    assert abs(dep_nmi - 6.0) < 0.1 and abs(second.rows[0].dr_lat_deg - f.lat_deg) < ARCMIN_DEG / 10
