"""The batch sight file (nav.sightfile): every cell read, validated and each sight's DR resolved.

What the expected values rest on:
- the batch contract (README, "Batch sight files"; the issue that defined `nav reduce`/`nav fix`):
  column names, defaults, Hs in decimal degrees or degrees and decimal minutes, positions signed or
  in navigator notation, the DR carried forward by course and speed, bad cells reported by row and
  column with an example, nothing kept from a partly valid file unless bad rows are skipped;
- the notation itself: d°m.m′ = d + m/60 degrees, S and W negative (common practice, no source);
- the international foot, 0.3048 m exactly (international yard and pound agreement, 1959);
- Mercator sailing on the navigator's sphere (American Practical Navigator, "Mercator sailing":
  l = D·cos C, DLo = DMP·tan C), written out here on its own, and nav.sailing.dr_position, which
  tests/test_sailing.py checks against geographiclib;
- the ephemeris range nav supports, 1900-01-01 to 2050-12-31 UTC, inside DE421's coverage
  (1899-07-29 to 2053-10-09: Folkner et al. 2008, JPL IPN Progress Report 42-178).
"""

from __future__ import annotations

import csv
import io
from datetime import datetime, timedelta

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from nav.almanac import body_names
from nav.errors import NavInputError
from nav.sailing import dr_position
from nav.sightfile import parse_sight_csv, read_sight_file
from nav.timekeeping import UTC
from nav.units import ARCSEC_DEG as ARCSEC
from references import mercator_sailing

FOOT_M = 0.3048                       # international foot (1959), exact
EXACT = 1e-9 * ARCSEC                 # values written with 9 or more decimals parse back to this
DR_AGREEMENT = 1e-7 * ARCSEC          # two evaluations of the same rhumb-line formula


def csv_text(header, rows) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
    return buf.getvalue()


def errors_by_place(sf):
    return {(e.row, e.field) for e in sf.errors}


# ---------------------------------------------------------------- one cell, the accepted forms

def test_hs_in_every_accepted_notation_reads_the_same():
    text = csv_text(["utc", "body", "hs", "dr_lat", "dr_lon"], [
        ["2026-03-20T10:00:00Z", "Sun", "34.205", "41 12.5 N", "032 07.1 W"],
        ["2026-03-20T10:01:00Z", "Sun", "34 12.3", "", ""],
        ["2026-03-20T10:02:00Z", "Sun", "34°12.3'", "", ""],
        ["2026-03-20T10:03:00Z", "Sun", "34°12.3′", "", ""],
    ])
    rows = parse_sight_csv(text).rows
    # 34°12.3′ = 34 + 12.3/60 = 34.205° (the notation's definition; the contract's own example)
    for r in rows:
        assert abs(r.hs_deg - 34.205) <= EXACT
    assert [r.hs_text for r in rows] == ["34.205", "34 12.3", "34°12.3'", "34°12.3′"]
    # 41°12.5′ N = 41.208333°, 032°07.1′ W = −32.118333° (N +, E +: the project's sign convention)
    assert abs(rows[0].dr_lat_deg - (41 + 12.5 / 60)) <= EXACT
    assert abs(rows[0].dr_lon_deg + (32 + 7.1 / 60)) <= EXACT


def test_defaults_of_the_contract():
    text = csv_text(["UTC", "Body", "HS", "Dr_Lat", "DR_LON"], [   # names are case-insensitive
        ["2026-03-20T10:00:00Z", "sun", "34.2", "41.2", "-32.1"],
        ["2026-03-20T10:05:00Z", "MOON", "20.1", "", ""],
        ["2026-03-20T10:06:00Z", "vega", "30.0", "", ""],
    ])
    sun, moon, vega = parse_sight_csv(text).rows
    # contract: limb defaults to lower for the Sun and the Moon; stars and planets have none
    assert (sun.limb, moon.limb, vega.limb) == ("lower", "lower", None)
    assert (sun.body, moon.body, vega.body) == ("Sun", "Moon", "Vega")
    # contract: index error 0 and height of eye 0 by default
    assert sun.index_error_arcmin == 0.0 and sun.eye_height_m == 0.0
    # no course/speed: the DR stays where it was (a vessel hove to; contract)
    assert (moon.dr_lat_deg, moon.dr_lon_deg, moon.dr_given) == (41.2, -32.1, False)
    assert sun.dr_given


def test_course_of_360_is_north_and_eye_height_in_feet():
    text = csv_text(["utc", "body", "hs", "dr_lat", "dr_lon", "course_deg", "speed_kn",
                     "eye_height_m"],
                    [["2026-03-20T10:00:00Z", "Sun", "34.2", "41.2", "-32.1", "360", "6", "10 ft"]])
    (row,) = parse_sight_csv(text).rows
    assert row.course_deg == 0.0                         # 360° true is 000° (common practice)
    assert row.eye_height_m == 10 * FOOT_M               # international foot


def test_utf8_with_a_byte_order_mark_is_text(tmp_path):
    path = tmp_path / "bom.csv"
    path.write_bytes("\ufeffutc,body,hs,dr_lat,dr_lon\n2026-03-20T10:00:00Z,Sun,34.2,41.2,-32.1\n"
                     .encode("utf-8"))
    (row,) = read_sight_file(str(path)).rows
    assert row.body == "Sun"     # a spreadsheet's BOM must not turn 'utc' into an unknown column


# ---------------------------------------------------------------- the DR carried forward

def test_dr_carried_by_course_and_speed_matches_dr_position_and_mercator_sailing():
    t0 = datetime(2026, 6, 14, 8, 0, tzinfo=UTC)
    minutes = [0, 37, 95, 180, 241, 300]
    cells = [
        # (dr_lat, dr_lon, course, speed): the course/speed of a row hold from that row onward
        ("38 31.0 N", "028 05.0 W", "215", "6.5"),
        ("", "", "", ""),
        ("", "", "160", "4.2"),          # new course and speed from this sight on
        ("", "", "", ""),
        ("38 00.0 N", "028 30.0 W", "", ""),   # a new DR resets the track; course 160 still holds
        ("", "", "", ""),
    ]
    text = csv_text(["utc", "body", "hs", "dr_lat", "dr_lon", "course_deg", "speed_kn"],
                    [[f"{t0 + timedelta(minutes=m):%Y-%m-%dT%H:%M:%SZ}", "Sun", "40.0", *c]
                     for m, c in zip(minutes, cells)])
    rows = parse_sight_csv(text).rows
    assert [r.dr_given for r in rows] == [True, False, False, False, True, False]

    lat, lon = 38 + 31.0 / 60, -(28 + 5.0 / 60)
    course, speed = 215.0, 6.5
    expected = [(lat, lon)]
    for i in range(1, len(rows)):
        hours = (minutes[i] - minutes[i - 1]) / 60.0
        if cells[i][0]:
            lat, lon = 38.0, -28.5
        else:
            lat, lon = (float(x) for x in dr_position(lat, lon, course, speed, hours))
        expected.append((lat, lon))
        if cells[i][2]:
            course, speed = float(cells[i][2]), float(cells[i][3])
    for row, (lat, lon) in zip(rows, expected):
        assert abs(row.dr_lat_deg - lat) <= DR_AGREEMENT
        assert abs(row.dr_lon_deg - lon) <= DR_AGREEMENT

    # And the same run by the textbook formula written out above (independent of nav.sailing):
    # row 2 is 37 min at 6.5 kn on 215°, from row 1's DR.
    lat2, lon2 = mercator_sailing(38 + 31.0 / 60, -(28 + 5.0 / 60), 215.0, 6.5 * 37 / 60)
    assert abs(rows[1].dr_lat_deg - lat2) <= 1e-6 * ARCSEC
    assert abs(rows[1].dr_lon_deg - lon2) <= 1e-6 * ARCSEC
    # row 4: 85 min at 4.2 kn on 160° from row 3's DR
    lat4, lon4 = mercator_sailing(rows[2].dr_lat_deg, rows[2].dr_lon_deg, 160.0, 4.2 * 85 / 60)
    assert abs(rows[3].dr_lat_deg - lat4) <= 1e-6 * ARCSEC
    assert abs(rows[3].dr_lon_deg - lon4) <= 1e-6 * ARCSEC


# ---------------------------------------------------------------- bad cells: all of them

def test_every_bad_cell_is_reported_with_row_and_column():
    text = csv_text(["utc", "body", "hs", "dr_lat", "dr_lon", "index_error"], [
        ["2026-03-20T10:00:00Z", "Sun", "34.2", "41.2", "-32.1", "0"],
        ["2026-02-30T10:01:00Z", "Sunn", "91 12.3", "", "", "0"],       # three bad cells
        ["2026-03-20T10:02:00Z", "Sun", "34 61.0", "41 60.0 N", "-32.1", "abc"],  # three more
        ["2060-03-20T10:03:00Z", "Sun", "34.0", "", "", "0"],           # outside the ephemeris
    ])
    sf = parse_sight_csv(text)
    assert sf.rows == ()                       # contract: nothing from a partly valid file
    assert errors_by_place(sf) == {(2, "utc"), (2, "body"), (2, "hs"), (3, "hs"), (3, "dr_lat"),
                                   (3, "index_error"), (4, "utc")}
    assert sf.skipped_rows == (2, 3, 4)
    for e in sf.errors:
        assert e.example, e                    # every message shows an accepted value
    body = next(e for e in sf.errors if e.field == "body")
    assert "Sun" in body.suggestions           # 'Sunn' is one letter from 'Sun'


@pytest.mark.parametrize("utc, ok", [
    ("1900-01-01T00:00:00Z", True), ("1899-12-31T23:59:59Z", False),   # nav's first instant
    ("2050-12-31T23:59:59Z", True), ("2051-01-01T00:00:00Z", False),   # and its last
    ("2050-12-31T20:00:00-04:00", False),                              # 2051-01-01T00:00Z
])
def test_ephemeris_range_is_checked_when_the_file_is_read(utc, ok):
    text = csv_text(["utc", "body", "hs", "dr_lat", "dr_lon"], [[utc, "Sun", "30", "0", "0"]])
    sf = parse_sight_csv(text)
    if ok:
        assert len(sf.rows) == 1 and not sf.errors
    else:
        assert sf.rows == () and errors_by_place(sf) == {(1, "utc")}
        assert "1900-01-01 to 2050-12-31" in str(sf.errors[0])


def test_skip_bad_rows_keeps_the_good_and_names_the_bad():
    text = csv_text(["utc", "body", "hs", "dr_lat", "dr_lon", "course_deg", "speed_kn"], [
        ["2026-03-20T10:00:00Z", "Sun", "34.2", "41.2", "-32.1", "090", "6"],
        ["2026-03-20T10:30:00Z", "Sun", "95", "", "", "", ""],
        ["2026-03-20T11:00:00Z", "Sun", "36.0", "", "", "", ""],
    ])
    sf = parse_sight_csv(text, skip_bad_rows=True)
    assert [r.row for r in sf.rows] == [1, 3]
    assert sf.skipped_rows == (2,) and errors_by_place(sf) == {(2, "hs")}
    # row 3's DR is row 1's carried 1 h at 6 kn on 090° (the skipped row changes nothing)
    lat, lon = dr_position(41.2, -32.1, 90.0, 6.0, 1.0)
    assert abs(sf.rows[1].dr_lat_deg - lat) <= DR_AGREEMENT
    assert abs(sf.rows[1].dr_lon_deg - lon) <= DR_AGREEMENT


@pytest.mark.parametrize("rows, place", [
    # rows out of time order: the later row is the one named
    ([["2026-03-20T10:00:00Z", "Sun", "34.2", "41.2", "-32.1", "", ""],
      ["2026-03-20T09:59:59Z", "Sun", "34.0", "", "", "", ""]], (2, "utc")),
    # the first row must have a DR (contract)
    ([["2026-03-20T10:00:00Z", "Sun", "34.2", "", "", "", ""]], (1, "dr_lat")),
    # half a DR
    ([["2026-03-20T10:00:00Z", "Sun", "34.2", "41.2", "", "", ""]], (1, "dr_lat")),
    # a speed with no course anywhere: the DR could not be carried, so it is refused, not ignored
    ([["2026-03-20T10:00:00Z", "Sun", "34.2", "41.2", "-32.1", "", "6"],
      ["2026-03-20T11:00:00Z", "Sun", "36.0", "", "", "", ""]], (1, "course_deg")),
    # a star has no upper limb
    ([["2026-03-20T10:00:00Z", "Vega", "34.2", "41.2", "-32.1", "", ""]], None),
    # the DR run would cross the pole
    ([["2026-03-20T10:00:00Z", "Sun", "34.2", "89.9", "0", "000", "20"],
      ["2026-03-21T10:00:00Z", "Sun", "30.0", "", "", "", ""]], (2, "dr_lat")),
])
def test_row_level_problems(rows, place):
    header = ["utc", "body", "hs", "dr_lat", "dr_lon", "course_deg", "speed_kn"]
    if place is None:   # the star case: add a limb column
        header.append("limb")
        rows = [r + ["upper"] for r in rows]
        place = (1, "limb")
    sf = parse_sight_csv(csv_text(header, rows))
    assert sf.rows == ()
    assert place in errors_by_place(sf)


def test_a_row_with_too_few_cells():
    sf = parse_sight_csv("utc,body,hs,dr_lat,dr_lon\n2026-03-20T10:00:00Z,Sun,34.2\n")
    assert errors_by_place(sf) == {(1, "row")}


@pytest.mark.parametrize("text, needle", [
    ("", "empty"),
    ("utc,body,hs,dr_lat,dr_lon\n", "no sights"),
    ("utc,body,dr_lat,dr_lon\n2026-03-20T10:00:00Z,Sun,41.2,-32.1\n", "hs"),
    ("utc,body,hs,dr_lat,dr_lon,speeed\n", "speed_kn"),           # a suggestion for the typo
    ("utc,body,hs,hs\n", "twice"),
    ("utc,body,hs,dr_lat\n", "dr_lon"),
])
def test_header_and_file_level_problems_raise_one_clear_error(text, needle):
    with pytest.raises(NavInputError) as info:
        parse_sight_csv(text)
    assert needle in str(info.value)
    assert info.value.example


@pytest.mark.parametrize("data, needle", [
    (b"\x7fELF\x02\x01\x01\x00\x00\x00\x00", "not a text file"),
    ("utc,body,hs\n2026-03-20T10:00:00Z,Sün,3\n".encode("latin-1"), "not UTF-8"),
    ("utc,body,hs\n".encode("utf-16"), "UTF-16"),
])
def test_files_that_are_not_utf8_text(tmp_path, data, needle):
    path = tmp_path / "sights.csv"
    path.write_bytes(data)
    with pytest.raises(NavInputError) as info:
        read_sight_file(str(path))
    assert needle in str(info.value) and info.value.field == "file"


# ---------------------------------------------------------------- property: write, read back

_SOLAR = ("Sun", "Moon")


@st.composite
def sight_file(draw):
    """A CSV of random valid sights (header order and case random) and the values it holds."""
    n = draw(st.integers(1, 5))
    start = draw(st.datetimes(datetime(1900, 1, 2), datetime(2050, 12, 1)))
    steps = draw(st.lists(st.integers(0, 86_400 * 3), min_size=n, max_size=n))
    micro = draw(st.booleans())
    names = body_names()
    rows, expected = [], []
    t = start.replace(tzinfo=UTC)
    if not micro:
        t = t.replace(microsecond=0)
    for k in range(n):
        t = t + timedelta(seconds=steps[k])
        offset_q = draw(st.integers(-14 * 4, 14 * 4))             # quarter hours
        off = timedelta(minutes=15 * offset_q)
        local = t + off
        sign = "-" if offset_q < 0 else "+"
        oh, om = divmod(abs(offset_q) * 15, 60)
        zone = "Z" if offset_q == 0 and draw(st.booleans()) else f"{sign}{oh:02d}:{om:02d}"
        utc_text = local.strftime("%Y-%m-%dT%H:%M:%S" + (".%f" if micro else "")) + zone

        body = draw(st.sampled_from(names))
        body_text = draw(st.sampled_from([body, body.upper(), body.lower()]))
        if body in _SOLAR:
            limb_text = draw(st.sampled_from(["", "lower", "upper", "center", "LL", "UL"]))
            limb = {"": "lower", "LL": "lower", "UL": "upper"}.get(limb_text, limb_text)
        else:
            limb_text, limb = draw(st.sampled_from(["", "center"])), None

        # Hs: micro-arcminutes, written in one of the three accepted forms
        hs_umin = draw(st.integers(0, 90 * 60 * 10**6))
        d, um = divmod(hs_umin, 60 * 10**6)
        form = draw(st.sampled_from(["decimal", "dm", "symbols"]))
        if form == "decimal":
            hs_text = f"{hs_umin / 60e6:.10f}"
            hs = float(hs_text)
        else:
            m_text = f"{um / 1e6:.6f}"
            hs_text = f"{d} {m_text}" if form == "dm" else f"{d}°{m_text}'"
            hs = d + float(m_text) / 60.0                         # d°m′ = d + m/60

        lat_umin = draw(st.integers(-90 * 60 * 10**6, 90 * 60 * 10**6))
        lon_umin = draw(st.integers(-180 * 60 * 10**6, 180 * 60 * 10**6))
        if draw(st.booleans()):
            lat_text, lat = f"{lat_umin / 60e6:.10f}", float(f"{lat_umin / 60e6:.10f}")
            lon_text, lon = f"{lon_umin / 60e6:.10f}", float(f"{lon_umin / 60e6:.10f}")
        else:
            def navigator(umin, pos, neg, width):
                dd, mm = divmod(abs(umin), 60 * 10**6)
                text = f"{dd:0{width}d} {mm / 1e6:.6f} {neg if umin < 0 else pos}"
                value = (dd + float(f"{mm / 1e6:.6f}") / 60.0) * (-1 if umin < 0 else 1)
                return text, value
            lat_text, lat = navigator(lat_umin, "N", "S", 2)
            lon_text, lon = navigator(lon_umin, "E", "W", 3)

        ie = draw(st.integers(-30_000, 30_000)) / 1000.0
        feet = draw(st.booleans())
        eye_text = (f"{draw(st.integers(0, 3000)) / 10:.1f} ft" if feet
                    else f"{draw(st.integers(0, 10_000)) / 100:.2f}")
        eye = float(eye_text.split()[0]) * (FOOT_M if feet else 1.0)
        temp = draw(st.integers(-600, 600)) / 10.0
        pres = draw(st.integers(8000, 11000)) / 10.0
        course = draw(st.integers(0, 3599)) / 10.0
        speed = draw(st.integers(0, 600)) / 10.0
        rows.append({"utc": utc_text, "body": body_text, "limb": limb_text, "hs": hs_text,
                     "index_error": f"{ie:g}", "eye_height_m": eye_text,
                     "temperature_c": f"{temp:g}", "pressure_hpa": f"{pres:g}",
                     "dr_lat": lat_text, "dr_lon": lon_text, "course_deg": f"{course:g}",
                     "speed_kn": f"{speed:g}"})
        expected.append(dict(utc=t, body=body, limb=limb, hs_deg=hs, index_error_arcmin=ie,
                             eye_height_m=eye, temperature_c=temp, pressure_hpa=pres,
                             dr_lat_deg=lat, dr_lon_deg=lon, course_deg=course, speed_kn=speed))
    columns = draw(st.permutations(list(rows[0])))
    header = [draw(st.sampled_from([c, c.upper(), c.title()])) for c in columns]
    text = csv_text(header, [[r[c] for c in columns] for r in rows])
    return text, expected


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(sight_file())
def test_a_written_file_reads_back_to_the_same_values(case):
    text, expected = case
    sf = parse_sight_csv(text)
    assert not sf.errors and len(sf.rows) == len(expected)
    for row, want in zip(sf.rows, expected):
        assert row.utc == want["utc"]              # the offset undone exactly (ISO 8601)
        assert row.body == want["body"] and row.limb == want["limb"]
        assert row.dr_given
        for key in ("hs_deg", "dr_lat_deg", "dr_lon_deg"):
            assert abs(getattr(row, key) - want[key]) <= EXACT, key
        for key in ("index_error_arcmin", "eye_height_m", "temperature_c", "pressure_hpa",
                    "course_deg", "speed_kn"):   # plain decimals (feet × 0.3048): read exactly
            assert getattr(row, key) == want[key], key


# ---------------------------------------------------------------- exercise columns (issue 8 §1)

EXERCISE_HEADER = ["sight", "date", "watch_time", "watch_error", "zone", "body", "hs",
                   "index_error", "dr_lat", "dr_lon", "method", "gha", "dec"]


def test_watch_time_columns_give_utc_by_the_trades_rule():
    # UTC = ZT + ZD and ZT = watch - fast error (common practice, no source): watch 07:42:10,
    # 1 min 5 s fast -> ZT 07:41:05; ZD +10 -> 17:41:05 UTC the same day.
    sf = parse_sight_csv(csv_text(EXERCISE_HEADER, [
        ["A", "2026-03-20", "07:42:10", "1 min 5 s fast", "+10", "Sun", "34 12.3", "2.4 off",
         "20 30 S", "151 26 W", "ap", "", ""],
        ["B", "2026-03-20", "23:50:00", "17 s slow", "+10", "Sun", "44 12.3", "2.4 on",
         "20 30 S", "151 26 W", "dr", "", ""]]))
    assert not sf.errors
    a, b = sf.rows
    assert a.utc == datetime(2026, 3, 20, 17, 41, 5, tzinfo=UTC)
    assert b.utc == datetime(2026, 3, 21, 9, 50, 17, tzinfo=UTC)   # the Greenwich date moves on
    assert (a.sight_id, a.watch_error_s, a.zone_h, a.method) == ("A", 65.0, 10.0, "ap")
    # "2.4 off" reads low: IE -2.4' (correction +2.4'); "on" the arc reads high (trade's words)
    assert (a.index_error_arcmin, b.index_error_arcmin) == (-2.4, 2.4)
    assert b.method == "dr" and a.gha_override_deg is None


@pytest.mark.parametrize("cells, field", [
    (["1", "2026-03-20", "07:42:10", "", "+10"], "watch_error"),        # part of the watch time
    (["1", "2026-03-20", "07:42:10", "12 s", "+10"], "watch_error"),    # no direction
    (["1", "2026-03-20", "25:42:10", "0", "+10"], "watch_time"),
    (["1", "2026-03-32", "07:42:10", "0", "+10"], "date"),
    (["1", "2026-03-20", "07:42:10", "0", "+15"], "zone"),
])
def test_bad_watch_time_cells_name_their_column(cells, field):
    sf = parse_sight_csv(csv_text(EXERCISE_HEADER, [
        cells + ["Sun", "34 12.3", "0", "20 30 S", "151 26 W", "ap", "", ""]]))
    assert [e.field for e in sf.errors] == [field] and sf.errors[0].row == 1


def test_utc_and_watch_time_in_one_row_is_refused():
    header = ["utc"] + EXERCISE_HEADER
    sf = parse_sight_csv(csv_text(header, [
        ["2026-03-20T17:41:05Z", "1", "2026-03-20", "07:42:10", "0", "+10", "Sun", "34 12.3", "0",
         "20 30 S", "151 26 W", "ap", "", ""]]))
    assert [e.field for e in sf.errors] == ["utc"]


def test_prescribed_gha_dec_replace_the_ephemeris_and_say_so():
    from nav.reduction import hc_zn
    from nav.workflow import PRESCRIBED_NOTE, reduce_rows

    sf = parse_sight_csv(csv_text(EXERCISE_HEADER, [
        ["1", "2026-03-20", "07:42:10", "0", "+10", "Sun", "34 12.3", "0", "20 30 S",
         "151 26 W", "dr", "100 00.0", "0 10.0 N"]]))
    red = reduce_rows(sf.rows)
    assert red.gha_deg[0] == 100.0 and red.dec_deg[0] == 10.0 / 60.0
    assert PRESCRIBED_NOTE in red.warnings[0]
    hc, _ = hc_zn(-20.5, 10.0 / 60.0, 100.0 - (151 + 26 / 60))   # LHA = GHA + lon (east +)
    assert red.hc_deg[0] == hc
