"""Exports (nav/export.py): GPX 1.1, GeoJSON, CSV.

Sources (all from memory, named here once):
- GPX 1.1 schema, http://www.topografix.com/GPX/1/1/gpx.xsd: namespace; gpxType is the sequence
  metadata?, wpt*, rte*, trk*, extensions?; version="1.1" and creator are required attributes;
  wptType children in the order ele, time, magvar, geoidheight, name, cmt, desc, src, link*, sym,
  type, fix, sat, hdop, vdop, pdop, ageofdgpsdata, dgpsid, extensions; trkType: name, cmt, desc,
  src, link*, number, type, extensions, trkseg*; latitudeType -90..90 inclusive, longitudeType
  -180 inclusive to 180 exclusive; times are xsd:dateTime.
- RFC 7946 (GeoJSON): positions are [longitude, latitude] (§3.1.1); a line crossing the
  antimeridian should be cut in two (§3.1.9); foreign members are allowed (§6.1).
- RFC 4180 (CSV): a header line, CRLF line ends, fields with commas/quotes/line breaks quoted.
- Spreadsheet formula injection: cells starting with = + - @ tab or CR are run as formulas by
  common spreadsheets; a leading single quote makes them text (OWASP "CSV Injection" page).
- Settings in a passage log: a value holds from the entry that sets it until another changes
  it; a sight's own value overrides it (our log format's rule, common practice, no source).
- Sight reduction (Marcq St Hilaire): LHA = GHA + longitude (east +), Hc = 90° − the arc from
  the DR to the body's geographical position (lat = Dec, lon = −GHA), Zn = the initial azimuth
  of that arc, intercept = Ho − Hc in minutes = nmi; the arc and azimuth from geographiclib on
  the navigator's sphere (R = 10800/π nmi).
Positions are invented.
"""

from __future__ import annotations

import csv
import io
import json
import re
import xml.etree.ElementTree as ET
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nav import CAUTION
from nav.errors import NavInputError
from geographiclib.geodesic import Geodesic

from nav.angles import parse_altitude
from nav.export import (REDUCED, REDUCTION_CSV_COLUMNS, SIGHT_CSV_COLUMNS, ExportPoint,
                        export_sights, fixes_to_geojson, fixes_to_gpx, neutralise_cell,
                        points_from_log, reduction_rows, sight_rows, sights_to_csv)
from nav.fields import SIGHT_FIELDS
from nav.logbook import load_log, new_log
from nav.passage import Passage
from nav.sightfile import parse_sight_csv
from nav.units import ARCMIN_DEG, ARCSEC_DEG, EARTH_RADIUS_NMI
from nav.workflow import reduce_rows

NS = "{http://www.topografix.com/GPX/1/1}"
T0 = datetime(2026, 3, 20, 18, 42, 10, tzinfo=timezone.utc)
# 6 decimals of a degree are written: the rounding is at most 0.5e-6° = 0.0018″.
COORD_TOL_DEG = 0.002 * ARCSEC_DEG
WPT_ORDER = ["ele", "time", "magvar", "geoidheight", "name", "cmt", "desc", "src", "link", "sym",
             "type", "fix", "sat", "hdop", "vdop", "pdop", "ageofdgpsdata", "dgpsid", "extensions"]
TRK_ORDER = ["name", "cmt", "desc", "src", "link", "number", "type", "extensions", "trkseg"]
META_ORDER = ["name", "desc", "author", "copyright", "link", "time", "keywords", "bounds",
              "extensions"]
GPX_ORDER = ["metadata", "wpt", "rte", "trk", "extensions"]
XSD_DATETIME = re.compile(r"^-?\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})?$")


def fixes():
    return [ExportPoint(T0, 38.5312, -28.6254, "fix", "e0012",
                        ellipse_semi_major_nmi=1.4, ellipse_semi_minor_nmi=0.6,
                        ellipse_orientation_deg=47.0, warnings=("narrow angle of cut",)),
            {"utc": "2026-03-21T11:05:00Z", "lat_deg": -12.25, "lon_deg": 179.9999996,
             "kind": "running_fix", "label": "e0020"}]


def track():
    return [ExportPoint(T0 + timedelta(hours=h), 38.5 - h / 10, -28.6 + h / 10, "dr", f"d{h}")
            for h in (3, 0, 1, 2)]


def local(el) -> str:
    assert el.tag.startswith(NS), el.tag             # every element in the GPX 1.1 namespace
    return el.tag[len(NS):]


def assert_in_schema_order(children, order):
    names = [local(c) for c in children]
    ranks = [order.index(n) for n in names]           # ValueError: an element the type lacks
    assert ranks == sorted(ranks), names


def check_gpx_structure(text: str) -> ET.Element:
    root = ET.fromstring(text)
    assert root.tag == NS + "gpx" and root.get("version") == "1.1" and root.get("creator")
    assert_in_schema_order(root, GPX_ORDER)
    assert [local(c) for c in root].count("metadata") <= 1
    for meta in root.findall(NS + "metadata"):
        assert_in_schema_order(meta, META_ORDER)
    for pt in root.iter():
        if local(pt) in ("wpt", "trkpt", "rtept"):
            assert_in_schema_order(pt, WPT_ORDER)
            lat, lon = float(pt.get("lat")), float(pt.get("lon"))
            assert -90.0 <= lat <= 90.0 and -180.0 <= lon < 180.0
        if local(pt) == "time":
            assert XSD_DATETIME.match(pt.text), pt.text
    for trk in root.findall(NS + "trk"):
        assert_in_schema_order(trk, TRK_ORDER)
        for seg in trk.findall(NS + "trkseg"):
            assert {local(c) for c in seg} <= {"trkpt", "extensions"}
    return root


# ---------------------------------------------------------------- GPX

def test_gpx_is_structurally_valid_gpx_1_1():
    text = fixes_to_gpx(fixes(), track(), name="Kittiwake, Azores (invented)", created_utc=T0)
    assert text.startswith('<?xml version="1.0" encoding="UTF-8"?>')
    root = check_gpx_structure(text)
    assert [local(c) for c in root] == ["metadata", "wpt", "wpt", "trk"]
    assert root.find(f"{NS}metadata/{NS}desc").text == CAUTION
    assert root.find(f"{NS}metadata/{NS}time").text == "2026-03-20T18:42:10Z"


def test_gpx_waypoints_carry_time_kind_and_round_trip_the_position():
    root = ET.fromstring(fixes_to_gpx(fixes(), name="t"))
    w1, w2 = root.findall(NS + "wpt")
    assert w1.find(NS + "time").text == "2026-03-20T18:42:10Z"
    assert w1.find(NS + "name").text == "Fix 2026-03-20 18:42:10 UTC"
    assert w1.find(NS + "type").text == "Fix" and w2.find(NS + "type").text == "Running fix"
    assert abs(float(w1.get("lat")) - 38.5312) <= COORD_TOL_DEG
    assert abs(float(w1.get("lon")) - -28.6254) <= COORD_TOL_DEG
    # 179.9999996° E rounds to 180.000000, which GPX writes as -180 (longitudeType < 180)
    assert float(w2.get("lon")) == -180.0
    desc = w1.find(NS + "desc").text
    assert "38°31.9′ N 028°37.5′ W" in desc and "1.4 × 0.6 nmi" in desc  # navigator notation
    assert w1.find(NS + "cmt").text == "narrow angle of cut"


def test_gpx_track_is_in_time_order_with_times():
    root = ET.fromstring(fixes_to_gpx([], track(), name="t"))
    pts = root.findall(f"{NS}trk/{NS}trkseg/{NS}trkpt")
    times = [p.find(NS + "time").text for p in pts]
    assert times == sorted(times) and len(times) == 4
    assert [float(p.get("lat")) for p in pts] == pytest.approx([38.5, 38.4, 38.3, 38.2],
                                                               abs=COORD_TOL_DEG)


def test_gpx_escapes_text():
    nasty = 'Fix <b>&amp; "quoted" \'single\' ]]> \x01bell'
    text = fixes_to_gpx([ExportPoint(T0, 1.0, 2.0, "fix", nasty)], name="A & B <test>")
    root = check_gpx_structure(text)                  # it parses: the text was escaped
    assert root.find(f"{NS}metadata/{NS}name").text == "A & B <test>"
    desc = root.find(f"{NS}wpt/{NS}desc").text
    assert desc.startswith('Fix <b>&amp; "quoted" \'single\' ]]> \ufffdbell')  # XML 1.0: no \x01


@pytest.mark.parametrize("bad, field", [
    ({"lat_deg": 90.5}, "fixes[0].lat_deg"), ({"lon_deg": -180.01}, "fixes[0].lon_deg"),
    ({"lat_deg": float("nan")}, "fixes[0].lat_deg"), ({"utc": datetime(2026, 3, 20)}, "fixes[0].utc"),
    ({"kind": "waypoint"}, "fixes[0].kind"), ({"colour": "red"}, "fixes[0]"),
])
def test_bad_points_are_refused_naming_the_field(bad, field):
    p = {"utc": T0, "lat_deg": 10.0, "lon_deg": 20.0, "kind": "fix", **bad}
    for export in (lambda: fixes_to_gpx([p], name="t"), lambda: fixes_to_geojson([p], name="t")):
        with pytest.raises(NavInputError) as err:
            export()
        assert err.value.field == field


# ---------------------------------------------------------------- GeoJSON

def test_geojson_points_are_lon_lat_with_properties():
    doc = fixes_to_geojson(fixes(), track(), name="Kittiwake (invented)")
    json.dumps(doc, allow_nan=False)                  # plain JSON, no NaN
    assert doc["type"] == "FeatureCollection" and doc["caution"] == CAUTION
    f1, f2, line = doc["features"]
    lon, lat = f1["geometry"]["coordinates"]          # RFC 7946 §3.1.1: [lon, lat]
    assert abs(lon - -28.6254) <= COORD_TOL_DEG and abs(lat - 38.5312) <= COORD_TOL_DEG
    assert f1["properties"] == {"utc": "2026-03-20T18:42:10Z", "kind": "fix", "label": "e0012",
                                "ellipse_semi_major_nmi": 1.4, "ellipse_semi_minor_nmi": 0.6,
                                "ellipse_orientation_deg": 47.0,
                                "warnings": ["narrow angle of cut"]}
    assert f2["properties"]["kind"] == "running_fix" and "ellipse_semi_major_nmi" not in \
        f2["properties"]
    assert line["geometry"]["type"] == "LineString"
    assert line["properties"]["point_utc"] == sorted(line["properties"]["point_utc"])
    for feature in doc["features"]:
        g = feature["geometry"]
        coords = [g["coordinates"]] if g["type"] == "Point" else g["coordinates"]
        for lon, lat in coords:
            assert -180.0 <= lon <= 180.0 and -90.0 <= lat <= 90.0


def test_geojson_track_is_cut_at_the_antimeridian():
    pts = [ExportPoint(T0, -17.0, 178.0, "dr"), ExportPoint(T0 + timedelta(hours=1), -17.4, -178.0,
                                                              "dr")]
    (line,) = fixes_to_geojson([], pts, name="t")["features"]
    assert line["geometry"]["type"] == "MultiLineString"   # RFC 7946 §3.1.9
    a, b = line["geometry"]["coordinates"]
    assert a[0] == [178.0, -17.0] and a[-1][0] == 180.0
    assert b[0][0] == -180.0 and b[-1] == [-178.0, -17.4]
    # the crossing is half way in longitude, so half way in latitude (linear interpolation)
    assert a[-1][1] == b[0][1] == pytest.approx(-17.2, abs=COORD_TOL_DEG)
    westward = fixes_to_geojson([], pts[::-1][:1] + [ExportPoint(T0 + timedelta(hours=2), -17.0,
                                                                   178.0, "dr")], name="t")
    a, b = westward["features"][0]["geometry"]["coordinates"]
    assert a[-1][0] == -180.0 and b[0][0] == 180.0


def test_geojson_single_track_point_is_kept_as_a_point():
    (f,) = fixes_to_geojson([], track()[:1], name="t")["features"]
    assert f["geometry"] == {"type": "Point", "coordinates": [-28.3, 38.2]}


@settings(max_examples=60, deadline=None)
@given(lat=st.floats(-90, 90), lon=st.floats(-180, 180))
def test_round_trip_of_positions(lat, lon):
    # Property: what is exported reads back within the 6-decimal rounding (GPX and GeoJSON).
    p = ExportPoint(T0, lat, lon, "fix", "p")
    doc = json.loads(json.dumps(fixes_to_geojson([p], name="t")))
    glon, glat = doc["features"][0]["geometry"]["coordinates"]
    wpt = ET.fromstring(fixes_to_gpx([p], name="t")).find(NS + "wpt")
    for got_lat, got_lon in ((glat, glon), (float(wpt.get("lat")), float(wpt.get("lon")))):
        assert abs(got_lat - lat) <= COORD_TOL_DEG
        d_lon = abs(got_lon - lon) % 360.0            # 180° E and 180° W are one meridian
        assert min(d_lon, 360.0 - d_lon) <= COORD_TOL_DEG
        assert -180.0 <= got_lon < 180.0


# ---------------------------------------------------------------- CSV

@pytest.mark.parametrize("cell", ["=1+1", "=HYPERLINK(\"x\")", "+1+1", "-1+1", "@SUM(A1)",
                                  "\t=1", "\r=1", "-", "+", "-inf", "--5", "\uff1d1+1", "-1,5"])
def test_formula_cells_are_neutralised(cell):
    assert neutralise_cell(cell) == "'" + cell


@pytest.mark.parametrize("cell", ["-12.5", "+3", "-0", "12", "1e-05", "-2.5E3", ".5", "-.5",
                                  "Sun", "34 12.3", "", "a=b", "'quoted", " =1"])
def test_plain_numbers_and_text_are_left_alone(cell):
    assert neutralise_cell(cell) == cell


def test_sights_csv_has_a_header_and_neutralised_cells():
    rows = [{"id": "e0002", "body": "Sun", "hs": "34 12.3", "hs_deg": 34.205, "note": "=cmd|' /C calc'!A0"},
            {"id": "e0003", "body": "Venus", "hs": "-0 03.1", "hs_deg": -0.051666666666666666,
             "note": 'say "hi", then\nnext line', "utc": T0}]
    text = sights_to_csv(rows, ["id", "body", "utc", "hs", "hs_deg", "note"])
    assert text.endswith("\r\n") and text.split("\r\n")[0] == "id,body,utc,hs,hs_deg,note"
    back = list(csv.reader(io.StringIO(text, newline="")))
    assert back[1] == ["e0002", "Sun", "", "34 12.3", "34.205", "'=cmd|' /C calc'!A0"]
    assert back[2] == ["e0003", "Venus", "2026-03-20T18:42:10Z", "'-0 03.1", "-0.051666666666666666",
                       'say "hi", then\nnext line']
    assert float(back[2][4]) == rows[1]["hs_deg"]     # repr of a float round-trips exactly


def test_csv_refuses_values_it_cannot_write():
    with pytest.raises(NavInputError) as err:
        sights_to_csv([{"hs_deg": 1.0}, {"hs_deg": float("nan")}], ["hs_deg"])
    assert err.value.field == "hs_deg" and err.value.row == 2


@settings(max_examples=200, deadline=None)
@given(st.lists(st.text(max_size=20), min_size=1, max_size=5))
def test_csv_round_trip_never_yields_a_formula(cells):
    # Property: read back, a cell is the original, or the original behind one quote; no cell
    # read back starts a formula unless it is a plain number.
    columns = [f"c{i}" for i in range(len(cells))]
    text = sights_to_csv([dict(zip(columns, cells))], columns)
    back = list(csv.reader(io.StringIO(text, newline="")))[1]
    for got, orig in zip(back, cells):
        assert got in (orig, "'" + orig)
        if got.startswith(("=", "+", "-", "@", "\t", "\r")):
            assert re.fullmatch(r"[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?", got)


# ---------------------------------------------------------------- from a passage log

def test_points_and_rows_from_a_passage_log(tmp_path):
    path = tmp_path / "kittiwake.jsonl"
    with new_log(path, "Kittiwake (invented)", "Export test") as lg:
        s1 = lg.append({"kind": "sight", "body": "Sun", "utc": "2026-03-20T12:00:00Z",
                        "time_source": "utc", "hs": "=1+1 (typed)", "hs_deg": 51.2})
        s2 = lg.append({"kind": "sight", "body": "Sun", "utc": "2026-03-20T15:00:00Z",
                        "time_source": "utc", "hs": "40 10.0", "hs_deg": 40.1667})
        lg.correct(s2.id, "misread", {"hs": "40 01.0", "hs_deg": 40.0167})
        lg.append({"kind": "dr", "utc": "2026-03-20T12:00:00Z", "lat": "38 30 N", "lat_deg": 38.5,
                   "lon": "28 36 W", "lon_deg": -28.6, "course_deg": 95.0, "speed_kn": 6.0})
        lg.append({"kind": "dr", "utc": "2026-03-20T13:00:00Z", "course_deg": 100.0})
        gone = lg.append({"kind": "dr", "utc": "2026-03-20T14:00:00Z", "lat": "38 29 N",
                          "lat_deg": 38.4833, "lon": "28 29 W", "lon_deg": -28.4833})
        lg.strike(gone.id, "plotted the wrong time")
        lg.append({"kind": "fix", "utc": "2026-03-20T15:00:00Z", "lat_deg": 38.45,
                   "lon_deg": -28.2, "fix_kind": "running_fix", "sight_ids": [s1.id, s2.id],
                   "ellipse_semi_major_nmi": 2.0, "ellipse_semi_minor_nmi": 0.8,
                   "ellipse_orientation_deg": 10.0})
    log = load_log(path)
    fx, trk = points_from_log(log)
    assert [(p.kind, p.lat_deg, p.ellipse_semi_major_nmi) for p in fx] == [("running_fix", 38.45, 2.0)]
    assert [(p.kind, p.utc.hour) for p in trk] == [("dr", 12), ("running_fix", 15)]  # struck DR out
    check_gpx_structure(fixes_to_gpx(fx, trk, name="Kittiwake"))
    text = sights_to_csv(sight_rows(log), SIGHT_CSV_COLUMNS)
    back = list(csv.DictReader(io.StringIO(text, newline="")))
    # the batch file carries the Hs the reduction used: a typed Hs that is no altitude, or that
    # reads as another value than the one logged (40 01.0 is 40.01667°, 0.1″ off), goes out as
    # the logged decimal degrees
    assert [r["hs"] for r in back] == ["51.2", "40.0167"]
    assert len(parse_sight_csv(text).rows) == 2                      # nav reduce reads it
    table = list(csv.DictReader(io.StringIO(
        sights_to_csv(reduction_rows(log), REDUCTION_CSV_COLUMNS), newline="")))
    assert [r["hs"] for r in table] == ["'=1+1 (typed)", "40 01.0"]  # as typed, made text
    assert [r["revised_by"] for r in table] == ["", "e0004"]
    assert [r["id"] for r in table] == [s1.id, s2.id]


# ---------------------------------------------------------------- the sights of a log

NMI = 1.0
SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)
T1 = datetime(2026, 7, 14, 6, 0, tzinfo=timezone.utc)


def iso(t: datetime) -> str:
    return t.strftime("%Y-%m-%dT%H:%M:%SZ")


@pytest.fixture(scope="module")
def settings_log(tmp_path_factory):
    """Invented: ketch Kittiwake off Portugal; settings changed mid-passage, one sight with its
    own index error, one with a typed Hs that starts with a minus sign."""
    path = tmp_path_factory.mktemp("exp") / "kittiwake-settings.jsonl"
    h = timedelta(hours=1)
    with new_log(path, "Kittiwake (invented)", "Settings export test (invented)") as lg:
        lg.append_many([
            {"kind": "setting", "index_error": "+1.5", "index_error_arcmin": 1.5,
             "eye_height": "3.2", "eye_height_m": 3.2, "temperature": "24",
             "temperature_c": 24.0, "pressure": "1018", "pressure_hpa": 1018.0},
            {"kind": "dr", "utc": iso(T1), "lat": "38 41.0 N", "lat_deg": 38 + 41 / 60,
             "lon": "011 02.0 W", "lon_deg": -(11 + 2 / 60), "course": "215", "course_deg": 215.0,
             "speed": "6.2", "speed_kn": 6.2},
            {"kind": "sight", "body": "Sun", "utc": iso(T1 + 3 * h), "time_source": "utc",
             "hs": "52 14.6", "hs_deg": 52 + 14.6 / 60, "limb": "lower"},
            {"kind": "setting", "eye_height": "2.0", "eye_height_m": 2.0, "horizon": "sea"},
            {"kind": "sight", "body": "Sun", "utc": iso(T1 + 6 * h), "time_source": "utc",
             "hs": "62 40.3", "hs_deg": 62 + 40.3 / 60, "limb": "upper",
             "index_error": "-0.5", "index_error_arcmin": -0.5},
            {"kind": "sight", "body": "Moon", "utc": iso(T1 + 6 * h + timedelta(minutes=4)),
             "time_source": "utc", "hs": "-0 20.0", "hs_deg": -20.0 / 60, "limb": "lower",
             "note": "-test: a low Moon, typed with a minus"}])
    return load_log(path)


def test_batch_file_carries_the_values_each_reduction_used(settings_log):
    log = settings_log
    text = sights_to_csv(sight_rows(log), SIGHT_CSV_COLUMNS)
    header, *cells = list(csv.reader(io.StringIO(text, newline="")))
    assert tuple(header) == tuple(f.name for f in SIGHT_FIELDS)     # the batch contract
    for row in cells:                     # none of the values the reduction used is left out
        for name in ("limb", "index_error", "eye_height_m", "temperature_c", "pressure_hpa",
                     "horizon", "dr_lat", "dr_lon"):
            assert row[header.index(name)] != "", name
    back = parse_sight_csv(text)
    assert not back.errors and len(back.rows) == 3
    # the settings in force (our log format's rule): as set, changed, and overridden
    assert [r.index_error_arcmin for r in back.rows] == [1.5, -0.5, 1.5]
    assert [r.eye_height_m for r in back.rows] == [3.2, 2.0, 2.0]
    assert [(r.temperature_c, r.pressure_hpa, r.horizon) for r in back.rows] == \
        [(24.0, 1018.0, "sea")] * 3
    assert [r.limb for r in back.rows] == ["lower", "upper", "lower"]
    # the DR of the passage at each sight's time, to the last bit
    passage = Passage(log)
    used = [r for _, r in passage.sights()]
    for got, want in zip(back.rows, used):
        assert (got.dr_lat_deg, got.dr_lon_deg, got.utc) == (want.dr_lat_deg, want.dr_lon_deg,
                                                             want.utc)
        assert got.hs_deg == pytest.approx(want.hs_deg, abs=1e-9 * ARCSEC_DEG)
    assert back.rows[2].hs_text == "\u22120 20.0"                     # minus sign, not a quote
    assert parse_altitude(back.rows[2].hs_text) == -20.0 / 60
    assert back.rows[2].note == "'-test: a low Moon, typed with a minus"   # a note keeps it
    # and so nav reduce on the file gives the intercepts nav gives from the log
    a, b = reduce_rows(back.rows), reduce_rows(used)
    assert np.all(np.abs(a.intercept_nmi - b.intercept_nmi) < 0.01 * NMI)


def test_reductions_table_holds_the_reduced_values(settings_log):
    out = export_sights(settings_log)
    assert out.notes == ()
    text = sights_to_csv(out.reductions, REDUCTION_CSV_COLUMNS)
    table = list(csv.DictReader(io.StringIO(text, newline="")))
    assert all(c.endswith(("_deg", "_nmi")) for c in REDUCED)        # units in the names
    assert [r["hs"] for r in table] == ["52 14.6", "62 40.3", "'-0 20.0"]   # typed, made text
    assert [r["index_error_arcmin"] for r in table] == ["1.5", "-0.5", "1.5"]
    for r in table:
        lat, lon = float(r["dr_lat_deg"]), float(r["dr_lon_deg"])
        gha, dec = float(r["gha_deg"]), float(r["dec_deg"])
        lha = (gha + lon) % 360.0                                      # LHA = GHA + lon (E +)
        d = (float(r["lha_deg"]) - lha + 180.0) % 360.0 - 180.0
        assert abs(d) < 0.001 * ARCSEC_DEG
        g = SPHERE.Inverse(lat, lon, dec, -gha)                        # geographiclib
        assert abs(float(r["hc_deg"]) - (90.0 - g["a12"])) < 0.001 * ARCSEC_DEG
        dz = (float(r["zn_deg"]) - g["azi1"] % 360.0 + 180.0) % 360.0 - 180.0
        assert abs(dz) < 0.001 * ARCSEC_DEG
        intercept = (float(r["ho_deg"]) - float(r["hc_deg"])) / ARCMIN_DEG    # 1′ = 1 nmi
        assert abs(float(r["intercept_nmi"]) - intercept) < 1e-4 * NMI
        assert r["dr_basis"].startswith("DR ") and r["id"].startswith("e")
    assert "altitude" in table[2]["warnings"].lower()                # the low Moon is warned


def test_a_sight_without_a_dr_is_exported_blank_and_said(tmp_path):
    path = tmp_path / "no-dr.jsonl"
    with new_log(path, "Kittiwake (invented)", "No DR (invented)") as lg:
        s = lg.append({"kind": "sight", "body": "Vega", "utc": iso(T1), "time_source": "utc",
                       "hs": "33 19.7", "hs_deg": 33 + 19.7 / 60})
    out = export_sights(load_log(path))
    assert len(out.notes) == 1 and s.id in out.notes[0] and "DR" in out.notes[0]
    assert "dr_lat" not in out.rows[0] and "ho_deg" not in out.reductions[0]
    back = parse_sight_csv(sights_to_csv(out.rows, SIGHT_CSV_COLUMNS))
    assert [e.field for e in back.errors] == ["dr_lat"]               # refused, not guessed
