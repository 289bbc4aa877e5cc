"""The passage rebuilt from its log (nav/passage.py), and the commands nav export and nav import.

Sources, named once here and beside the checks:
- Mercator sailing on the navigator's sphere (1′ of arc = 1 nmi): d_lat = d·cos C and
  d_lon = Δψ·tan C with ψ = ln tan(45° + φ/2), or d_lon = departure·sec φ on an east-west course;
  inversely C = atan2(d_lon, Δψ) — the American Practical Navigator's "Mercator sailing", from
  memory. Written out below (:func:`mercator`, :func:`mercator_inverse`), not taken from nav.
- Distances between two points: geographiclib's geodesic on a sphere of 3437.75 nmi.
- A running fix advances the earlier LOP by the vessel's run (course and distance sailed) between
  the sights; a fix or a DR reset in between does not move it (the American Practical Navigator,
  "running fix", from memory; common practice).
- Settings: a value holds from the entry that sets it until another changes it; a sight's own
  value overrides it (our log format's rule, common practice, no source).
- A sight computed at a known position reduces to a zero intercept there, so a fix from exact
  sights is that position (the project guide's property; common practice).
- GPX 1.1 (topografix.com/GPX/1/1 schema), RFC 7946 GeoJSON ([lon, lat]), spreadsheet formula
  injection (OWASP "CSV Injection"): as in tests/test_export.py, from memory.
Vessels, passages and sights are invented.
"""

from __future__ import annotations

import csv
import io
import json
import math
import xml.etree.ElementTree as ET
from datetime import datetime, timedelta, timezone

import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from nav import almanac
from nav.cli import main
from nav.corrections import correct_altitude
from nav.errors import NavInputError
from nav.export import SIGHT_CSV_COLUMNS
from nav.logbook import Entry, load_log, new_log
from nav.passage import Passage, passage_before
from nav.reduction import hc_zn
from nav.sightfile import read_sight_file
from nav.units import EARTH_RADIUS_NMI

UTC = timezone.utc
NMI = 1.0
SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)
T0 = datetime(2026, 7, 2, 6, 0, tzinfo=UTC)
POS_TOL_NMI = 1e-6 * NMI            # two exact spherical computations, float rounding only
GPX = "{http://www.topografix.com/GPX/1/1}"


def sep_nmi(lat1, lon1, lat2, lon2) -> float:
    return SPHERE.Inverse(lat1, lon1, lat2, lon2)["s12"]


def mercator(lat, lon, course, dist):
    """Mercator sailing (APN), written out: the point `dist` nmi along rhumb line `course`."""
    c = math.radians(course)
    dlat = dist * math.cos(c) / 60.0
    lat2 = lat + dlat
    if abs(dlat) < 1e-12:
        dlon = dist * math.sin(c) / (60.0 * math.cos(math.radians(lat)))
    else:
        psi = lambda p: math.log(math.tan(math.pi / 4 + math.radians(p) / 2))  # noqa: E731
        dlon = math.degrees((psi(lat2) - psi(lat)) * math.tan(c))
    return lat2, (lon + dlon + 180.0) % 360.0 - 180.0


def mercator_inverse(lat1, lon1, lat2, lon2):
    """(course, dist) of the rhumb line (APN): C = atan2(Δλ, Δψ), dist = Δφ·sec C."""
    psi = lambda p: math.log(math.tan(math.pi / 4 + math.radians(p) / 2))  # noqa: E731
    dlon = math.radians((lon2 - lon1 + 180.0) % 360.0 - 180.0)
    dpsi = psi(lat2) - psi(lat1)
    c = math.atan2(dlon, dpsi)
    dphi = math.radians(lat2 - lat1)
    dist = (abs(dphi / math.cos(c)) if abs(math.cos(c)) > 1e-9
            else abs(dlon) * math.cos(math.radians(lat1))) * EARTH_RADIUS_NMI
    return math.degrees(c) % 360.0, dist


# ---------------------------------------------------------------- logs for the tests

def dr(t, lat=None, lon=None, course=None, speed=None, basis=None) -> dict:
    e: dict = {"kind": "dr", "utc": t}
    if lat is not None:
        e.update(lat=f"{lat}", lat_deg=lat, lon=f"{lon}", lon_deg=lon)
    if course is not None:
        e.update(course=f"{course}", course_deg=course)
    if speed is not None:
        e.update(speed=f"{speed}", speed_kn=speed)
    if basis:
        e["position_basis"] = basis
    return e


def sight(t, body="Sun", hs_deg=34.205, **over) -> dict:
    e = {"kind": "sight", "body": body, "utc": t, "time_source": "utc", "hs": f"{hs_deg}",
         "hs_deg": hs_deg}
    if body in ("Sun", "Moon"):
        e["limb"] = "lower"
    e.update(over)
    return e


def setting(**values) -> dict:
    out = {"kind": "setting"}
    for name, v in values.items():
        raw = {"eye_height_m": "eye_height", "index_error_arcmin": "index_error",
               "temperature_c": "temperature", "pressure_hpa": "pressure"}[name]
        out[raw], out[name] = f"{v}", v
    return out


def fix_entry(t, lat, lon, ids, kind="fix") -> dict:
    return {"kind": "fix", "utc": t, "lat_deg": lat, "lon_deg": lon, "fix_kind": kind,
            "sight_ids": ids}


@pytest.fixture
def make_log(tmp_path):
    made = []

    def make(*entries, name="tern-lantern.jsonl"):
        path = tmp_path / name
        with new_log(path, "Tern Lantern (invented)", "Test passage (invented)") as lg:
            added = lg.append_many(entries) if entries else []
        made.append(path)
        return path, [e.id for e in added]
    return make


class MemoryLog:
    """Entries held in memory (for property tests: no disk)."""

    def __init__(self, entries):
        self.header = Entry("e0001", "passage", "2026-07-02T05:00:00Z", 1, {"kind": "passage"})
        self._entries = []
        for i, e in enumerate(entries, 2):
            data = {k: (f"{v:%Y-%m-%dT%H:%M:%S.%f}Z" if isinstance(v, datetime) else v)
                    for k, v in e.items()}
            self._entries.append(Entry(f"e{i:04d}", e["kind"], "2026-07-02T05:00:00Z", i, data))

    def effective_entries(self, kind=None):
        return [e for e in self._entries if kind is None or e.kind == kind]


# ---------------------------------------------------------------- the DR along the legs

def test_dr_along_legs_matches_mercator_sailing(make_log):
    path, _ = make_log(dr(T0, 41.2, -32.1, 245.0, 6.5),
                       dr(T0 + timedelta(hours=3), course=200.0),           # course only
                       dr(T0 + timedelta(hours=5), speed=7.2),              # speed only
                       dr(T0 + timedelta(hours=6, minutes=30), course=90.0, speed=5.0))
    p = Passage(load_log(path))
    t = T0 + timedelta(hours=9)
    # Mercator sailing (APN), leg by leg: 3 h at 245°/6.5, 2 h at 200°/6.5, 1.5 h at 200°/7.2,
    # 2.5 h at 090°/5.0
    lat, lon = 41.2, -32.1
    for course, speed, hours in ((245.0, 6.5, 3.0), (200.0, 6.5, 2.0), (200.0, 7.2, 1.5),
                                 (90.0, 5.0, 2.5)):
        lat, lon = mercator(lat, lon, course, speed * hours)
    w = p.where(t)
    assert sep_nmi(w.lat_deg, w.lon_deg, lat, lon) < POS_TOL_NMI        # Mercator sailing
    assert (w.course_deg, w.speed_kn) == (90.0, 5.0)                    # the leg in force
    leg = p.leg_at(T0 + timedelta(hours=5, minutes=10))
    assert (leg.course_deg, leg.speed_kn) == (200.0, 7.2)               # course carried over


@settings(max_examples=40, deadline=None)
@given(st.floats(-60, 60), st.floats(-179.9, 179.9), st.floats(0, 359.9), st.floats(0.5, 12),
       st.floats(0, 359.9), st.floats(0.5, 12), st.floats(0.1, 10), st.floats(0.1, 10))
def test_dr_property_two_legs(lat, lon, c1, s1, c2, s2, h1, h2):
    t1 = T0 + timedelta(hours=h1)
    p = Passage(MemoryLog([dr(T0, lat, lon, c1, s1), dr(t1, course=c2, speed=s2)]))
    w = p.where(t1 + timedelta(hours=h2))
    lat_e, lon_e = mercator(*mercator(lat, lon, c1, s1 * h1), c2, s2 * h2)  # Mercator sailing
    assert sep_nmi(w.lat_deg, w.lon_deg, lat_e, lon_e) < 1e-5 * NMI


# ---------------------------------------------------------------- where: bases and age

def test_where_bases_and_age(make_log):
    t_fix = T0 + timedelta(hours=4)
    path, ids = make_log(dr(T0, 38.5, -28.6, 120.0, 6.0, basis="visual"),
                         sight(t_fix - timedelta(hours=3)), sight(t_fix),
                         fix_entry(t_fix, 38.3, -28.2, ["e0003", "e0004"], "running_fix"))
    p = Passage(load_log(path))
    w = p.where(T0 + timedelta(hours=1, minutes=30))
    assert w.basis == "visual" and w.age == timedelta(hours=1, minutes=30)   # our format's rule
    assert w.describe().startswith("DR 1.5 h from the VISUAL position entered at 2026-07-02 06:00")
    at = p.where(t_fix)
    assert (at.basis, at.age, at.lat_deg, at.lon_deg) == ("running fix", timedelta(0), 38.3, -28.2)
    assert at.describe() == "running fix at 2026-07-02 10:00 UTC"
    later = p.where(t_fix + timedelta(hours=2))
    lat_e, lon_e = mercator(38.3, -28.2, 120.0, 12.0)                   # Mercator sailing
    assert later.basis == "running fix" and later.age == timedelta(hours=2)
    assert sep_nmi(later.lat_deg, later.lon_deg, lat_e, lon_e) < POS_TOL_NMI
    with pytest.raises(NavInputError) as err:                           # nothing known before
        p.where(T0 - timedelta(seconds=1))
    assert err.value.field == "dr"


# ---------------------------------------------------------------- the run ignores a fix's reset

def test_run_follows_the_legs_not_the_fix(make_log):
    t1, t2, t3 = (T0 + timedelta(hours=h) for h in (2, 3, 5))
    path, ids = make_log(dr(T0, 30.0, -40.0, 90.0, 6.0), sight(t1), sight(t2),
                         dr(t2, course=180.0, speed=4.0), sight(t3),
                         fix_entry(t2 + timedelta(hours=1), 30.3, -39.6, ["e0003", "e0004"]))
    p = Passage(load_log(path))
    lat, lon = 30.0, -40.0                       # a start position of the run (any: no anchor)
    course, speed = p.run(t1, t3, lat, lon)
    # Mercator sailing: 1 h at 090°/6 kn, then 2 h at 180°/4 kn; made good over 3 h
    end = mercator(*mercator(lat, lon, 90.0, 6.0), 180.0, 8.0)
    c_e, d_e = mercator_inverse(lat, lon, *end)
    assert abs(course - c_e) < 1e-6 and abs(speed - d_e / 3.0) < 1e-6 * NMI   # APN, running fix
    assert p.run(t1, t1, lat, lon) == (None, 0.0)
    # the DR after the fix starts from the fix; the run from t1 does not see the fix's jump
    w = p.where(t3)
    assert sep_nmi(w.lat_deg, w.lon_deg, *mercator(30.3, -39.6, 180.0, 4.0)) < POS_TOL_NMI


def test_running_fix_from_exact_sights_is_the_truth(make_log):
    """Sun-run-Sun on two legs, Sun sights made at the true track (no current: the DR legs are
    the truth); the running fix lands on the true position at the second sight."""
    start, t1, t_turn, t2 = (T0 + timedelta(hours=h) for h in (0, 3.5, 5.0, 7.0))
    true_start = (36.4, -22.9)
    legs = [(125.0, 6.5, t_turn), (150.0, 6.0, t2)]

    def true_at(t):
        lat, lon, now = *true_start, start
        for course, speed, end in legs:
            span = (min(t, end) - now).total_seconds() / 3600.0
            if span > 0:
                lat, lon = mercator(lat, lon, course, speed * span)
                now = min(t, end)
        return lat, lon

    def exact_hs(t):
        lat, lon = true_at(t)
        rec = almanac.body_almanac("Sun", t)
        hc, zn = hc_zn(lat, float(rec.dec_deg), float(rec.gha_deg) + lon)
        hs = float(hc)
        for _ in range(30):       # Hs such that nav's corrections give Ho = Hc (the inverse)
            hs += float(hc) - float(correct_altitude(
                hs, body_kind="sun", limb="lower", eye_height_m=2.0,
                hp_arcmin=float(rec.hp_arcmin), sd_arcmin=float(rec.sd_arcmin),
                lat_deg=lat, zn_deg=float(zn)).ho_deg)
        return hs

    dr_start = (36.5, -23.05)                   # the crew's DR start: some 8 nmi out
    path, ids = make_log(setting(eye_height_m=2.0), dr(start, *dr_start, 125.0, 6.5),
                         sight(t1, hs_deg=exact_hs(t1)), dr(t_turn, course=150.0, speed=6.0),
                         sight(t2, hs_deg=exact_hs(t2)))
    result, _ = Passage(load_log(path)).fix_from([ids[2], ids[4]])
    assert result.fix.kind == "running fix"
    # a fix from exact sights is the true position (common practice); 0.01 nmi: the solver's tol
    assert sep_nmi(result.fix.lat_deg, result.fix.lon_deg, *true_at(t2)) < 0.01 * NMI
    # the earlier LOP moved by the run along the legs from its DR: 1.5 h at 6.5 kn + 2 h at
    # 6 kn, made good
    dr_t1 = mercator(*dr_start, 125.0, 6.5 * 3.5)
    end = mercator(*mercator(*dr_t1, 125.0, 6.5 * 1.5), 150.0, 12.0)
    _, run = mercator_inverse(*dr_t1, *end)
    assert abs(result.lops[0].advanced_nmi - run) < 1e-6 * NMI       # APN, running fix


# ---------------------------------------------------------------- settings in force per sight

def test_settings_in_force_per_sight(make_log, tmp_path):
    t = [T0 + timedelta(minutes=10 * k) for k in range(4)]
    path, ids = make_log(dr(t[0], 40.0, -30.0),
                         setting(eye_height_m=2.0, index_error_arcmin=1.0),
                         sight(t[1]),
                         setting(eye_height_m=3.1, temperature_c=24.0),
                         sight(t[2], index_error="-0.5", index_error_arcmin=-0.5),
                         sight(t[3], body="Vega", hs_deg=40.0))
    p = Passage(load_log(path))
    rows = {e.id: r for e, r in p.sights()}
    a, b, c = rows[ids[2]], rows[ids[4]], rows[ids[5]]
    assert (a.eye_height_m, a.index_error_arcmin, a.temperature_c) == (2.0, 1.0, 10.0)
    assert (b.eye_height_m, b.index_error_arcmin, b.temperature_c) == (3.1, -0.5, 24.0)
    assert (c.eye_height_m, c.index_error_arcmin, c.limb) == (3.1, 1.0, None)   # own IE: B only
    assert (a.pressure_hpa, a.horizon) == (1010.0, "sea")          # defaults (nav.passage doc)
    assert p.settings.eye_height_m == 3.1
    # a corrected setting changes the sights after it (the effective view), not those before
    with new_log(tmp_path / "c.jsonl", "Tern Lantern (invented)", "c") as lg:
        lg.append_many([dr(t[0], 40.0, -30.0), sight(t[0]), setting(eye_height_m=2.0),
                        sight(t[1])])
        lg.correct("e0004", "eye height misread", {"eye_height": "2.6", "eye_height_m": 2.6})
    rows = [r for _, r in Passage(load_log(tmp_path / "c.jsonl")).sights()]
    assert [r.eye_height_m for r in rows] == [0.0, 2.6]


# ---------------------------------------------------------------- struck and corrected sights

def test_struck_and_corrected_sights(tmp_path):
    t1, t2, t3 = (T0 + timedelta(minutes=m) for m in (0, 4, 8))
    path = tmp_path / "s.jsonl"
    with new_log(path, "Tern Lantern (invented)", "s") as lg:
        lg.append_many([dr(t1, 35.0, -20.0, 110.0, 6.0), sight(t1, "Vega", 40.1),
                        sight(t2, "Altair", 50.2), sight(t3, "Saturn", 30.3)])
        lg.strike("e0004", "wrong star")
        lg.correct("e0005", "Hs misread", {"hs": "31 18.0", "hs_deg": 31.3})
    p = Passage(load_log(path))
    assert [e.id for e, _ in p.sights()] == ["e0003", "e0005"]        # struck one gone
    row = dict((e.id, r) for e, r in p.sights())["e0005"]
    assert (row.hs_deg, row.hs_text) == (31.3, "31 18.0")             # the correction stands
    with pytest.raises(NavInputError) as err:
        p.fix_from(["e0003", "e0004"])
    assert err.value.field == "sights" and "e0004" in str(err.value)
    with pytest.raises(NavInputError):
        p.fix_from(["e0003"])                                         # one sight is no fix


def test_passage_before_knows_only_earlier_entries(tmp_path):
    t1, t2 = T0, T0 + timedelta(minutes=5)
    path = tmp_path / "pb.jsonl"
    with new_log(path, "Tern Lantern (invented)", "pb") as lg:
        lg.append_many([dr(t1, 35.0, -20.0, 110.0, 6.0), sight(t1, "Vega", 40.1),
                        sight(t2, "Altair", 50.2)])
        lg.append(fix_entry(t2, 35.05, -19.9, ["e0003", "e0004"]))
        lg.append(dr(t2 + timedelta(minutes=1), course=130.0))
    p = Passage(load_log(path))
    before = passage_before(p, "e0005")
    assert p.where(t2).basis == "fix" and before.where(t2).basis == "dr"
    assert before.legs[-1].course_deg == 110.0 and p.legs[-1].course_deg == 130.0
    with pytest.raises(NavInputError):
        passage_before(p, "e0099")


# ---------------------------------------------------------------- nav export

@pytest.fixture
def small_log(tmp_path):
    """A log with a DR, three sights (one note a would-be formula) and a stored fix."""
    path = tmp_path / "export-me.jsonl"
    t = [T0 + timedelta(minutes=m) for m in (0, 3, 6)]
    with new_log(path, "Tern Lantern (invented)", "Export test (invented)") as lg:
        lg.append_many([dr(t[0], 35.0, -20.0, 110.0, 6.0, basis="gps"),
                        sight(t[0], "Vega", 40.1, note="=HYPERLINK(\"x\")"),
                        sight(t[1], "Altair", 50.2), sight(t[2], "Saturn", 30.3)])
        lg.append(fix_entry(t[2], 35.02, -19.97, ["e0003", "e0004", "e0005"]))
    return path


def test_export_gpx_geojson_csv(small_log, tmp_path, capsys):
    gpx, geo, csv_path = (tmp_path / n for n in ("p.gpx", "p.geojson", "p.csv"))
    assert main(["export", str(small_log), "--gpx", str(gpx)]) == 0
    assert main(["export", str(small_log), "--geojson", str(geo)]) == 0
    assert main(["export", str(small_log), "--csv", str(csv_path)]) == 0
    root = ET.parse(gpx).getroot()
    assert root.tag == f"{GPX}gpx" and root.get("version") == "1.1"       # GPX 1.1 schema
    (wpt,) = root.findall(f"{GPX}wpt")
    assert (float(wpt.get("lat")), float(wpt.get("lon"))) == (35.02, -19.97)
    pts = root.findall(f"{GPX}trk/{GPX}trkseg/{GPX}trkpt")
    track = Passage(load_log(small_log)).track_points()
    assert len(pts) == len(track) >= 2
    doc = json.loads(geo.read_text(encoding="utf-8"))
    points = [f for f in doc["features"] if f["geometry"]["type"] == "Point"]
    assert [f["geometry"]["coordinates"] for f in points] == [[-19.97, 35.02]]   # RFC 7946
    assert "caution" in doc
    rows = list(csv.reader(io.StringIO(csv_path.read_text(encoding="utf-8"))))
    assert tuple(rows[0]) == SIGHT_CSV_COLUMNS and len(rows) == 4
    note = rows[1][SIGHT_CSV_COLUMNS.index("note")]
    assert note.startswith("'=")                                     # OWASP CSV injection
    out = capsys.readouterr().out
    assert "1 fix(es)" in out and "3 sight(s)" in out


@pytest.mark.parametrize("args, field", [
    (["--gpx", "{tmp}/nowhere/p.gpx"], "file"),          # a folder that does not exist
    (["--gpx", "{log}"], "file"),                        # the log itself
    (["--geojson", "{tmp}"], "file"),                    # a folder
])
def test_export_bad_targets(small_log, tmp_path, capsys, args, field):
    before = small_log.read_bytes()
    args = [a.format(tmp=tmp_path, log=small_log) for a in args]
    assert main(["export", str(small_log), *args]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and f"field '{field}'" in err[0] and "Traceback" not in err[0]
    assert small_log.read_bytes() == before


def test_export_bad_logs(tmp_path, capsys, small_log):
    assert main(["export", str(tmp_path / "none.jsonl"), "--gpx", str(tmp_path / "a.gpx")]) == 2
    assert "no such passage log" in capsys.readouterr().err
    damaged = tmp_path / "damaged.jsonl"
    lines = small_log.read_bytes().splitlines(keepends=True)
    damaged.write_bytes(b"".join(lines[:2] + [b"{not json\n"] + lines[2:]))
    assert main(["export", str(damaged), "--csv", str(tmp_path / "a.csv")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "line 3" in err[0]
    assert not (tmp_path / "a.csv").exists()
    with pytest.raises(SystemExit) as exit_:                       # no format chosen: usage
        main(["export", str(small_log)])
    assert exit_.value.code == 2


# ---------------------------------------------------------------- nav import

BATCH = """utc,body,limb,hs,index_error,eye_height_m,temperature_c,pressure_hpa,horizon,dr_lat,dr_lon,course_deg,speed_kn,sigma_arcmin,note
2026-07-02T06:10:00Z,Sun,LL,24 31.2,-1.5,2.5,18,1021,,37 10.5 N,024 51.0 W,118,6.2,0.8,invented row
2026-07-02T07:40:00Z,sun,UL,38 02.4,-1.5,2.5,18,1021,,,,,,,
2026-07-02T09:05:00Z,Sun,,49 40.0,-1.5,8 ft,,,sea,,,135,,,course change
2026-07-02T10:30:12Z,Moon,lower,41 12.7,-1.5,2.5,18,1021,,37 00.0 N,024 20.0 W,,5.5,,a new DR
"""


def write(path, text):
    path.write_text(text, encoding="utf-8")
    return path


def test_import_round_trips_into_a_passage(tmp_path, capsys):
    src = write(tmp_path / "batch.csv", BATCH)
    log = tmp_path / "imported.jsonl"
    assert main(["import", str(src), "--log", str(log), "--new", "--vessel",
                 "Tern Lantern (invented)", "--title", "Import test (invented)"]) == 0
    assert "logged 4 sight(s) and 3 DR entries" in capsys.readouterr().out
    loaded = load_log(log)
    got = [r for _, r in Passage(loaded).sights()]
    want = read_sight_file(str(src)).rows
    assert len(got) == len(want) == 4
    for g, w in zip(got, want):                     # same sights, same DRs (the batch contract)
        for name in ("utc", "body", "hs_deg", "hs_text", "limb", "index_error_arcmin",
                     "eye_height_m", "temperature_c", "pressure_hpa", "horizon", "sigma_arcmin",
                     "note", "course_deg", "speed_kn"):
            assert getattr(g, name) == getattr(w, name), (w.row, name)
        assert sep_nmi(g.dr_lat_deg, g.dr_lon_deg, w.dr_lat_deg, w.dr_lon_deg) < POS_TOL_NMI
    sights = loaded.effective_entries("sight")
    drs = loaded.effective_entries("dr")
    assert all(e["time_source"] == "utc" for e in sights)
    assert [e["hs"] for e in sights] == ["24 31.2", "38 02.4", "49 40.0", "41 12.7"]   # as typed
    assert sights[2]["eye_height"] == "8 ft" and "temperature" not in sights[2].data
    assert [(e.get("lat"), e.get("course"), e.get("speed")) for e in drs] == [
        ("37 10.5 N", "118", "6.2"), (None, "135", None), ("37 00.0 N", None, "5.5")]


def test_import_appends_and_names_settings_in_force(tmp_path, capsys, make_log):
    path, _ = make_log(setting(eye_height_m=3.0))
    src = write(tmp_path / "b.csv", "utc,body,hs,dr_lat,dr_lon\n"
                                    "2026-07-02T21:00:00Z,Vega,32 15.9,35 09.7 N,021 35.0 W\n"
                                    "2026-07-02T21:04:00Z,Spica,43 26.2,,\n")
    assert main(["import", str(src), "--log", str(path)]) == 0
    cap = capsys.readouterr()
    assert "2 sight(s) with no eye_height_m take the log's setting in force, 3.0" in cap.err
    rows = [r for _, r in Passage(load_log(path)).sights()]
    assert [r.eye_height_m for r in rows] == [3.0, 3.0]          # our format's rule: settings hold


BAD_BATCH = """utc,body,hs,dr_lat,dr_lon
2026-07-02T21:00:00Z,Vega,32 15.9,35 09.7 N,021 35.0 W
2026-07-02T21:03:00Z,Vgea,91 00,,
2026-07-02T25:03:00Z,Spica,43 26.2,,
"""


def test_import_refuses_a_partly_bad_file(tmp_path, capsys, make_log):
    path, _ = make_log()
    before = path.read_bytes()
    src = write(tmp_path / "bad.csv", BAD_BATCH)
    assert main(["import", str(src), "--log", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 4 and "Traceback" not in "".join(err)        # one line per problem + total
    assert "line 3, field 'body'" in err[0] and "line 3, field 'hs'" in err[1]
    assert "line 4, field 'utc'" in err[2] and "3 problem(s)" in err[3]
    assert path.read_bytes() == before                              # nothing logged
    new = tmp_path / "never.jsonl"
    assert main(["import", str(src), "--log", str(new), "--new", "--vessel", "V",
                 "--title", "T"]) == 2
    assert not new.exists()
    capsys.readouterr()
    # a sight the corrections refuse (apparent altitude below -1°) is named by its row
    low = write(tmp_path / "low.csv", "utc,body,hs,eye_height_m,dr_lat,dr_lon\n"
                                      "2026-07-02T21:00:00Z,Vega,32 15.9,2,35 N,021 W\n"
                                      "2026-07-02T21:03:00Z,Spica,-1 00,4,,\n")
    assert main(["import", str(low), "--log", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and "line 3" in err[0] and "1 problem(s)" in err[1]
    assert path.read_bytes() == before


@pytest.mark.parametrize("extra, message", [
    (["--new"], "needs --vessel and --title"),
    (["--vessel", "V"], "add --new"),
    (["--new", "--vessel", "V", "--title", "T"], "already exists"),
])
def test_import_option_mistakes(tmp_path, capsys, make_log, extra, message):
    path, _ = make_log()
    before = path.read_bytes()
    src = write(tmp_path / "ok.csv", "utc,body,hs,dr_lat,dr_lon\n"
                                     "2026-07-02T21:00:00Z,Vega,32 15.9,35 N,021 W\n")
    assert main(["import", str(src), "--log", str(path), *extra]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and message in err[0]
    assert path.read_bytes() == before


def test_import_into_a_missing_log(tmp_path, capsys):
    src = write(tmp_path / "ok.csv", "utc,body,hs,dr_lat,dr_lon\n"
                                     "2026-07-02T21:00:00Z,Vega,32 15.9,35 N,021 W\n")
    assert main(["import", str(src), "--log", str(tmp_path / "none.jsonl")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "no such passage log" in err[0]
    assert not (tmp_path / "none.jsonl").exists()
