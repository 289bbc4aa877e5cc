"""The invented demo passage (tools/make_demo_passage.py) and `nav demo`.

Sources, named once here and beside the checks:
- The demo is invented data (vessel, crew, passage, sight errors); its truth files are the
  generator's own record of what it put in. What the tests hold it to:
  - each logged sight, reduced by nav at the true position, gives an intercept equal to the error
    the generator put in (random + blunder + the 0.1′ rounding of the reading) to 0.01′: a sight
    computed at a known position reduces to that error there (the project guide's property);
  - the true track is rhumb-line legs of the steered course and speed plus the current, added as
    velocity vectors (the American Practical Navigator, "current sailing", from memory), checked
    with Mercator sailing written out here;
  - a fix from good sights of σ 0.5′ lies within FIX_BOUND_NMI = 1.5 nmi (3σ in miles, a stated
    bound, common practice, no source) of the truth; a running fix within that plus the drift
    of the unknown current over its run (drift kn × hours: the current the DR cannot see);
  - the random errors' sample standard deviation lies within the 99.9 % interval of a σ = 0.5′
    sample of that size (chi-square, from memory of its tables: 0.6–1.45 σ for some 30 values).
- The exported sights, reduced again by `nav reduce`, are checked against what nav computed
  from the log itself: each stored fix replayed from the passage as it stood (the demo's own
  replay, nav.passage.passage_before), so a value left out of the file or rounded away shows.
- GPX 1.1 (topografix.com/GPX/1/1 schema) and RFC 7946 GeoJSON, from memory.
- PNG files begin with the 8-byte signature 89 50 4E 47 0D 0A 1A 0A (PNG specification).
"""

from __future__ import annotations

import csv
import importlib.util
import json
import math
import os
import re
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from nav import CAUTION
from nav.cli import main
from nav.commands.passage_cmd import demo_paths, read_truth, replay_demo, true_position
from nav.logbook import load_log
from nav.passage import Passage, passage_before
from nav.sailing import rhumb_line
from nav.sightfile import read_sight_file, with_dr
from nav.timekeeping import parse_utc
from nav.export import COORD_DECIMALS
from nav.units import ARCSEC_DEG, EARTH_RADIUS_NMI
from nav.workflow import fix_from_rows, reduce_rows

REPO = Path(__file__).resolve().parent.parent
NMI = 1.0
ARCSEC = ARCSEC_DEG
COORD_ROUND_DEG = 0.5 * 10.0 ** -COORD_DECIMALS + 1e-6 * ARCSEC   # points keep 6 decimals
FIX_BOUND_NMI = 1.5 * NMI
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
GPX = "{http://www.topografix.com/GPX/1/1}"
NAME = "demo-azores-madeira"


def load_generator():
    spec = importlib.util.spec_from_file_location("make_demo_passage",
                                                  REPO / "tools" / "make_demo_passage.py")
    mod = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = mod            # its dataclasses look their module up by name
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def demo():
    log_path, truth_path, sights_path = (REPO / "sight_logs" / f"{NAME}{s}" for s in
                                         (".jsonl", ".truth.csv", ".sights-truth.csv"))
    log = load_log(log_path)
    with open(sights_path, encoding="utf-8", newline="") as f:
        sights = {r["id"]: r for r in csv.DictReader(f)}
    with open(truth_path, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    return log, Passage(log), sights, rows, read_truth(truth_path)


@pytest.fixture(scope="module")
def replayed(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    lines: list[str] = []
    fixes = replay_demo(out, say=lines.append)
    return out, fixes, "\n".join(lines)


def max_drift_kn(rows) -> float:
    return max(float(r["drift_kn"]) for r in rows)


# ---------------------------------------------------------------- the generator

def test_committed_files_equal_a_fresh_run():
    """Byte for byte: the demo log, its truth files (both copies) and the two examples. The
    generator writes the log through nav.logbook on the scenario's clock, so this also holds the
    logbook's output to the committed bytes."""
    files = load_generator().build()
    assert set(files) == {f"{d}/{NAME}{s}" for d in ("sight_logs", "nav/data/demo")
                          for s in (".jsonl", ".truth.csv", ".sights-truth.csv")} | {
        "examples/evening-stars.csv", "examples/morning-noon-sun.csv"}
    for rel, blob in files.items():
        assert (REPO / rel).read_bytes() == blob, rel


def test_packaged_copy_is_found():
    paths = demo_paths()
    assert [p.name for p in paths] == [f"{NAME}.jsonl", f"{NAME}.truth.csv",
                                       f"{NAME}.sights-truth.csv"]
    for p in paths:
        assert p.read_bytes() == (REPO / "sight_logs" / p.name).read_bytes()


def test_sights_reduce_at_the_truth_to_the_error_put_in(demo):
    log, passage, truth, _, _ = demo
    pairs = passage.sights()
    assert len(pairs) == len(truth) >= 30
    rows = [with_dr(r, float(truth[e.id]["true_lat_deg"]), float(truth[e.id]["true_lon_deg"]))
            for e, r in pairs]
    red = reduce_rows(rows)
    for i, (e, _) in enumerate(pairs):
        t = truth[e.id]
        assert e["hs"] == t["hs"] and e["utc"] == t["utc"]          # the reading as logged
        put_in = (float(t["noise_arcmin"]) + float(t["blunder_arcmin"])
                  + float(t["reading_rounding_arcmin"]))
        # the guide's property: at the truth the intercept is the error put in (1′ = 1 nmi)
        assert abs(float(red.intercept_nmi[i]) - put_in) < 0.01, (e.id, e["body"])
        assert abs(float(t["reading_rounding_arcmin"])) <= 0.05 + 1e-9   # read to 0.1′
        assert float(t["hc_deg"]) == pytest.approx(float(red.hc_deg[i]), abs=1e-6)
        assert 15.0 <= float(t["hc_deg"]) <= 80.0                   # well placed bodies
    blunders = [t for t in truth.values() if float(t["blunder_arcmin"]) != 0.0]
    assert [float(t["blunder_arcmin"]) for t in blunders] == [6.0]  # the one bad sight
    noise = [float(t["noise_arcmin"]) for t in truth.values()]
    sd = math.sqrt(sum(x * x for x in noise) / len(noise))
    assert 0.6 * 0.5 < sd < 1.45 * 0.5                              # chi-square, 99.9 %


def test_demo_log_holds_what_the_brief_asks_for(demo):
    log, passage, truth, _, _ = demo
    kinds = [e.kind for e in log.entries]
    assert {"setting", "dr", "sight", "fix", "note", "strike", "correct"} <= set(kinds)
    assert "invented" in log.header["title"].lower() and "invented" in log.header["vessel"]
    bodies = {e["body"] for e in passage.sight_entries}
    assert {"Sun", "Moon", "Venus"} <= bodies and len(bodies) >= 10
    fixes = [e for e in log.entries if e.kind == "fix"]
    assert {f["fix_kind"] for f in fixes} == {"fix", "running_fix"}
    legs = {(leg.course_deg, leg.speed_kn) for leg in passage.legs}
    assert len(legs) >= 4                                           # course and speed changes
    zds = {e["zone_description_h"] for e in log.entries if e.kind == "setting"
           and "zone_description_h" in e.data}
    assert zds == {2.0, 1.0}                                        # clocks changed on passage


def test_true_track_is_rhumb_legs_plus_the_current(demo):
    """Each row-to-row leg is the rhumb line of the steered course/speed plus the current."""
    _, _, _, rows, _ = demo
    psi = lambda p: math.log(math.tan(math.pi / 4 + math.radians(p) / 2))  # noqa: E731
    for a, b in zip(rows, rows[1:]):
        hours = (parse_utc(b["utc"]) - parse_utc(a["utc"])).total_seconds() / 3600.0
        c, v = math.radians(float(a["course_deg"])), float(a["speed_kn"])
        s, d = math.radians(float(a["set_deg"])), float(a["drift_kn"])
        vn, ve = v * math.cos(c) + d * math.cos(s), v * math.sin(c) + d * math.sin(s)  # vectors
        lat1, lat2 = float(a["lat_deg"]), float(b["lat_deg"])
        dlat_nmi = (lat2 - lat1) * 60.0
        dlon = math.radians(float(b["lon_deg"]) - float(a["lon_deg"]))
        assert abs(dlat_nmi - vn * hours) < 1e-4 * NMI               # Mercator sailing: d_lat
        if abs(vn) > 1e-9 and abs(lat2 - lat1) > 1e-9:
            dep_rate = dlon / (psi(lat2) - psi(lat1))                # tan C made good
            assert abs(dep_rate - ve / vn) < 1e-4
        else:
            east_nmi = dlon * math.cos(math.radians(lat1)) * EARTH_RADIUS_NMI
            assert abs(east_nmi - ve * hours) < 1e-4 * NMI


# ---------------------------------------------------------------- nav demo

def test_replay_checks_every_fix_against_the_truth(replayed, demo):
    out, fixes, text = replayed
    log, passage, truth, rows, _ = demo
    stored = [e for e in log.entries if e.kind == "fix"]
    assert [d.entry_id for d in fixes] == [e.id for e in stored]
    drift = max_drift_kn(rows)
    for d in fixes:
        assert d.logged_diff_nmi < 0.01 * NMI          # recomputed = logged (the solver's tol)
        if d.struck:
            continue
        bound = FIX_BOUND_NMI + drift * d.run_hours     # a running fix also carries the current
        assert d.error_nmi < bound, (d.entry_id, d.error_nmi, bound)
        assert d.dr_error_nmi > d.error_nmi             # the fix corrected the DR
    struck = [d for d in fixes if d.struck]
    assert len(struck) == 1
    bad = [sid for sid, t in truth.items() if float(t["blunder_arcmin"])]
    assert list(struck[0].flagged) == bad               # the residual check caught the blunder
    assert all(not d.flagged for d in fixes if not d.struck)
    # printed: the caution first, each fix with its error against the known track
    lines = text.splitlines()
    assert lines[0] == CAUTION
    errors = re.findall(r"fix error\s+(\d+\.\d+) nmi", text)
    assert [float(x) for x in errors] == pytest.approx([d.error_nmi for d in fixes], abs=0.005)
    assert text.count("Running fix at ") + text.count("\nFix at ") == len(fixes)
    assert f"({bad[0]}) flagged" in text and "+6.0′ blunder" in text
    for d in fixes:
        assert d.sheet.read_bytes()[:8] == PNG_SIGNATURE
    assert (out / "passage.png").read_bytes()[:8] == PNG_SIGNATURE


def test_the_examples_come_from_the_demo(demo):
    """The fix that `nav fix` makes of each example lands near the demo's truth at its time."""
    _, _, _, truth_rows, track = demo
    for name in ("evening-stars.csv", "morning-noon-sun.csv"):
        rows = read_sight_file(str(REPO / "examples" / name)).rows
        result = fix_from_rows(rows)
        lat, lon = true_position(track, result.fix.utc)
        hours = (rows[-1].utc - rows[0].utc).total_seconds() / 3600.0
        bound = FIX_BOUND_NMI + max_drift_kn(truth_rows) * hours
        assert float(rhumb_line(lat, lon, result.fix.lat_deg, result.fix.lon_deg)[1]) < bound


def test_nav_demo_in_process(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "out")]) == 0
    text = capsys.readouterr().out
    assert text.startswith(CAUTION) and text.rstrip().endswith(CAUTION)
    pngs = sorted((tmp_path / "out").glob("*.png"))
    assert len(pngs) == text.count("plotting sheet ") + 1          # + the passage plot
    assert "Replayed in" in text


def test_nav_demo_as_a_subprocess_default_folder(tmp_path):
    """As the README runs it: `nav demo` from a folder, writing demo_output/ there."""
    env = dict(os.environ, PYTHONPATH=str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.run([sys.executable, "-m", "nav", "demo"], cwd=tmp_path, env=env,
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.startswith(CAUTION) and "Traceback" not in proc.stderr
    pngs = list((tmp_path / "demo_output").glob("fix-*.png"))
    assert len(pngs) == proc.stdout.count("plotting sheet ") >= 8
    assert (tmp_path / "demo_output" / "passage.png").is_file()


def test_nav_demo_bad_folder(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("not a folder")
    assert main(["demo", "--out", str(blocker / "sub")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "field 'out'" in err[0]


# ---------------------------------------------------------------- exports of the demo

def test_export_of_the_demo_holds_every_fix(tmp_path, demo):
    log, passage, *_ = demo
    src = REPO / "sight_logs" / f"{NAME}.jsonl"
    gpx, geo = tmp_path / "demo.gpx", tmp_path / "demo.geojson"
    assert main(["export", str(src), "--gpx", str(gpx)]) == 0
    assert main(["export", str(src), "--geojson", str(geo)]) == 0
    fixes = log.effective_entries("fix")                     # the struck fix is not exported
    wpts = ET.parse(gpx).getroot().findall(f"{GPX}wpt")      # GPX 1.1: a waypoint per fix
    assert len(wpts) == len(fixes) >= 8
    for w, f in zip(wpts, fixes):
        assert float(w.get("lat")) == pytest.approx(f["lat_deg"], abs=1e-6)
        assert float(w.get("lon")) == pytest.approx(f["lon_deg"], abs=1e-6)
        assert w.find(f"{GPX}time").text == f["utc"]
    doc = json.loads(geo.read_text(encoding="utf-8"))
    points = [ft for ft in doc["features"] if ft["geometry"]["type"] == "Point"]
    assert [p["geometry"]["coordinates"] for p in points] == [               # RFC 7946 order
        [pytest.approx(f["lon_deg"], abs=1e-6), pytest.approx(f["lat_deg"], abs=1e-6)]
        for f in fixes]
    (line,) = [ft for ft in doc["features"] if ft["geometry"]["type"] == "LineString"]
    assert len(line["geometry"]["coordinates"]) == len(passage.track_points())


# ---------------------------------------------------------------- the demo's plots show the truth

def test_demo_plots_show_the_known_truth(tmp_path, monkeypatch, demo):
    import nav.plotting as plotting

    _, _, _, rows, track = demo
    drawn = []
    for name in ("plot_fix_sheet", "plot_passage"):
        real = getattr(plotting, name)

        def spy(*a, _real=real, _name=name, **k):
            fig = _real(*a, **k)
            # the demo draws every plot on one figure: read what this one shows now
            stars = [s.get_ydata()[0] for s in fig.findobj() if s.get_gid() == "known"]
            key = [t.get_text() for t in fig.legends[0].get_texts()]
            summary = " ".join(t.get_text() for t in fig.texts if t.get_gid() == "summary")
            drawn.append((_name, a, k, (stars, key, summary)))
            return fig
        monkeypatch.setattr(plotting, name, spy)
    replay_demo(tmp_path, say=lambda *_: None)
    sheets = [d for d in drawn if d[0] == "plot_fix_sheet"]
    (_, (pts, fixes), passage_kw, (_, texts, summary)), = [d for d in drawn
                                                           if d[0] == "plot_passage"]
    assert len(sheets) >= 8
    for _, (fix, _lops), kw, (stars, key, _) in sheets:
        lat, lon = true_position(track, fix.utc)       # the truth file, read independently
        assert kw["known"][:2] == (lat, lon)
        star, = stars
        assert star == pytest.approx(lat, abs=1e-6 * ARCSEC)
        assert "known position (demo)" in key
    ref = passage_kw["reference_track"]
    assert [(p.utc, p.lat_deg) for p in ref] == [(parse_utc(r["utc"]), float(r["lat_deg"]))
                                                 for r in rows]
    assert all(abs(p.lon_deg - float(r["lon_deg"])) <= COORD_ROUND_DEG for p, r in zip(ref, rows))
    assert "known track (demo)" in texts and "DR track" in texts
    # the demo's ellipses (a few nmi) hide under the markers of a 500-nmi plot: not in the key
    assert not any("ellipse" in t for t in texts)
    assert "not drawn" in summary


# ---------------------------------------------------------------- the demo's sights exported

@pytest.fixture(scope="module")
def exported(tmp_path_factory):
    out = tmp_path_factory.mktemp("export")
    src = REPO / "sight_logs" / f"{NAME}.jsonl"
    batch, table = out / "sights.csv", out / "reductions.csv"
    assert main(["export", str(src), "--csv", str(batch)]) == 0
    assert main(["export", str(src), "--reductions", str(table)]) == 0
    return batch, table


def replayed_intercepts(log, passage) -> dict:
    """Per sight id, the intercepts nav computed for it from the log: every stored fix replayed
    from the passage as it stood before it was logged (as nav demo and the shell's plot do)."""
    out: dict = {}
    for f in log.effective_entries("fix"):
        result, used = passage_before(passage, f.id).fix_from(list(f["sight_ids"]))
        for i, e in enumerate(used):
            out.setdefault(e.id, []).append(float(result.reductions.intercept_nmi[i]))
    return out


def test_demo_sights_exported_reduce_to_the_logs_intercepts(exported, demo, capsys):
    log, passage, *_ = demo
    batch, table = exported
    capsys.readouterr()
    assert main(["reduce", str(batch), "--json"]) == 0
    reduced = json.loads(capsys.readouterr().out)
    assert len(reduced) == len(passage.sight_entries)
    by_time = {(r["utc"], r["body"]): r for r in reduced}
    with open(table, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    assert [r["id"] for r in rows] == [e.id for e, _ in passage.sights()]
    from_log = replayed_intercepts(log, passage)
    for r in rows:
        got = by_time[(r["utc"], r["body"])]["intercept_nmi"]
        assert abs(got - float(r["intercept_nmi"])) < 0.01 * NMI           # file = table
        for want in from_log.get(r["id"], []):                             # file = the log's
            assert abs(got - want) < 0.01 * NMI, r["id"]
    assert len(from_log) >= 0.8 * len(rows)          # nearly every sight went into a fix
    # a sight in no stored fix: the log's reduction from the DR of the passage at its time
    unused = [(e, row) for e, row in passage.sights() if e.id not in from_log]
    assert unused
    want = reduce_rows([row for _, row in unused])
    for i, (e, _) in enumerate(unused):
        got = by_time[(e["utc"], e["body"])]["intercept_nmi"]
        assert abs(got - float(want.intercept_nmi[i])) < 0.01 * NMI, e.id


def test_demo_fixes_again_from_the_exported_rows(exported, demo, tmp_path, capsys):
    """`nav fix` on the exported rows of each stored fix (not running fixes: the batch contract
    runs a sight on by the DR difference, the log by its legs) gives the fix logged."""
    log, passage, *_ = demo
    batch, _ = exported
    with open(batch, encoding="utf-8", newline="") as f:
        header, *cells = list(csv.reader(f))
    key = {(c[header.index("utc")], c[header.index("body")]): c for c in cells}
    checked = 0
    for f in log.effective_entries("fix"):
        if f["fix_kind"] != "fix":
            continue
        ids = set(f["sight_ids"])
        sub = tmp_path / f"{f.id}.csv"
        with open(sub, "w", encoding="utf-8", newline="") as out:
            w = csv.writer(out)
            w.writerow(header)
            w.writerows(key[(e["utc"], e["body"])] for e, _ in passage.sights() if e.id in ids)
        capsys.readouterr()
        assert main(["fix", str(sub), "--json"]) == 0
        fix = json.loads(capsys.readouterr().out)["fix"]
        moved = float(rhumb_line(f["lat_deg"], f["lon_deg"], fix["lat_deg"], fix["lon_deg"])[1])
        assert moved < 0.01 * NMI, f.id                  # the solver's tolerance, as above
        checked += 1
    assert checked >= 5
