"""Issue 7 items 3 (batch part), 4, 8, 9 and 12: the input traps of the CSV files, the times and
zones, the horizons, the weather and the messages, in the batch commands, the CLI options and the
shell alike.
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nav.cli import main
from nav.errors import NavInputError, OutOfRangeError, printable
from nav.fields import MAX_NOTE_CHARS, parse_sight_utc, weather_warnings
from nav.sightfile import parse_sight_csv, summarise_errors
from nav.timekeeping import (FRACTIONAL_ZD_MIN, format_zone_description, parse_utc,
                             parse_zone_description)

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
STARS = (EXAMPLES / "evening-stars.csv").read_text(encoding="utf-8")
HEAD = "utc,body,hs,dr_lat,dr_lon,note\n"
ROW = "2026-06-20T21:09:57Z,Vega,32 12.4,35 10.1 N,021 33.9 W,{note}\n"


def _run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


# ---------------------------------------------------------------- item 12: messages

@pytest.mark.parametrize("raw", ["\x1b[31m", "\r", "\n", "\x00", "\x7f", "\x9b", "\u202e"])
def test_no_message_echoes_a_control_character(raw):
    err = NavInputError(f"'a{raw}b' is not an angle", field=f"h{raw}s", example=f"x{raw}")
    text = str(err)
    assert raw not in text and "a" in text and "b" in text
    assert printable("ok \u00b0\u2032") == "ok \u00b0\u2032"          # notation stays as it is


def test_the_cli_and_the_shell_never_print_a_raw_escape(tmp_path, capsys):
    code, out, err = _run(capsys, "almanac", "Sun", "--utc", "2026-06-20T12:00:00\x1b[2JZ")
    assert code == 2 and "\x1b" not in err and "\\x1b" in err
    from tests.shell_driver import open_state, run_lines

    clock = lambda: datetime(2026, 6, 20, 22, 0, tzinfo=timezone.utc)  # noqa: E731
    st_, log = open_state(tmp_path / "p.jsonl", "Sula Brae", "Horta to Porto Santo", clock)
    try:
        out = run_lines(st_, "set eye 2\x1b]0;owned\x07", "dr 35 10.1\rN 021 33.9 W")
        assert "\x1b" not in out and "\x07" not in out and "\r" not in out
    finally:
        log.close()


# ---------------------------------------------------------------- item 8: CSV files

def test_an_unterminated_quote_is_refused_at_its_line(tmp_path, capsys):
    text = HEAD + ROW.format(note='"hazy') + ROW.format(note="x").replace("21:09", "21:10")
    path = tmp_path / "q.csv"
    path.write_text(text, encoding="utf-8")
    for command in ("reduce", "fix", "import"):
        argv = [command, str(path)] + (["--log", str(tmp_path / "l.jsonl"), "--new", "--vessel",
                                        "Sula Brae", "--title", "t"] if command == "import" else [])
        code, out, err = _run(capsys, *argv)
        assert code == 2 and "line 2" in err and "never closed" in err, (command, err)
    assert not (tmp_path / "l.jsonl").exists()


def test_cr_only_line_ends_are_read_as_an_editor_shows_them():
    sf = parse_sight_csv(STARS.replace("\n", "\r"))
    assert [r.line for r in sf.rows] == [2, 3, 4, 5, 6]
    assert parse_sight_csv(STARS.replace("\n", "\r\n")).rows == sf.rows


@pytest.mark.parametrize("bad", ["\x1b", "\x07", "\x0b", "\x7f", "\u202e"])
def test_control_characters_are_refused_with_their_line(bad):
    lines = STARS.splitlines(True)
    lines[3] = lines[3].replace("Spica", f"Spi{bad}ca")
    with pytest.raises(NavInputError) as info:
        parse_sight_csv("".join(lines))
    assert "line 4" in str(info.value) and bad not in str(info.value)


def test_a_nul_byte_names_its_line(tmp_path, capsys):
    path = tmp_path / "nul.csv"
    path.write_bytes(STARS.encode() .replace(b"Spica", b"Sp\x00ica"))
    code, _, err = _run(capsys, "reduce", str(path))
    assert code == 2 and "line 4" in err and "NUL" in err


def test_rows_are_named_by_the_line_an_editor_shows_multi_line_cells_counted(capsys, tmp_path):
    text = (HEAD + ROW.format(note='"first line\nsecond line"')
            + "2026-06-20T21:12:56Z,Antares,91 00,,,\n")
    path = tmp_path / "m.csv"
    path.write_text(text, encoding="utf-8")
    code, _, err = _run(capsys, "reduce", str(path))
    # header line 1, the first row on lines 2-3, the second on line 4 (as an editor shows it)
    assert code == 2 and "line 4, field 'hs'" in err
    sf = parse_sight_csv(text.replace("91 00", "16 49.5"))
    assert [r.line for r in sf.rows] == [2, 4]
    assert sf.rows[0].note == "first line\nsecond line"                  # kept whole


def test_a_repeated_message_is_said_once_with_its_lines(tmp_path, capsys):
    rows = [f"2026-06-20T21:{10 + i:02d}:00Z,Sunn,30,35 10.1 N,021 33.9 W,\n" for i in range(4)]
    path = tmp_path / "r.csv"
    path.write_text(HEAD + "".join(rows), encoding="utf-8")
    code, _, err = _run(capsys, "fix", str(path))
    assert code == 2 and err.count("unknown body 'Sunn'") == 1
    assert "lines 2, 3, 4, 5: field 'body'" in err and "4 problem(s)" in err
    errs = [NavInputError("same", field="hs", line=n) for n in (7, 9)]
    assert summarise_errors(errs) == ["lines 7, 9: field 'hs': same"]


def test_a_note_is_kept_whole_or_refused_over_the_limit():
    note = "n" * MAX_NOTE_CHARS
    (row,) = parse_sight_csv(HEAD + ROW.format(note=note)).rows
    assert row.note == note
    sf = parse_sight_csv(HEAD + ROW.format(note=note + "n"))
    assert not sf.rows and "over the limit" in str(sf.errors[0]) and "line 2" in str(sf.errors[0])


def test_duplicate_rows_are_warned_about(tmp_path, capsys):
    lines = STARS.splitlines(True)
    dup = lines[3].split(",")[:4] + [""] * 6
    text = "".join(lines[:4]) + ",".join(dup) + "\n" + "".join(lines[4:])
    sf = parse_sight_csv(text)
    (w,) = sf.warnings
    assert "lines 4, 5" in w and "Spica" in w and "count 2 times" in w
    path = tmp_path / "d.csv"
    path.write_text(text, encoding="utf-8")
    for argv in (["fix", str(path)], ["reduce", str(path)]):
        code, _, err = _run(capsys, *argv)
        assert code == 0 and "same sight" in err, argv
    # a passage log takes one observation once: import refuses the repeat (issue 7 item 3)
    code, _, err = _run(capsys, "import", str(path), "--log", str(tmp_path / "l.jsonl"), "--new",
                        "--vessel", "Sula Brae", "--title", "t")
    assert code == 2 and "same sight" in err and "line 5 repeats" in err


@pytest.mark.parametrize("mangle", [
    lambda t: t.replace("\n", "\r"),
    lambda t: t.replace("021 33.9 W", "021 33.9", 1),
    lambda t: t.replace("32 12.4", "112 24.8", 1),
    lambda t: t.replace("Vega", "Vega\x1b", 1),
    lambda t: t + '2026-06-20T21:30:00Z,Vega,30,,,"open\n',
    lambda t: t.replace("invented", "x" * 2000, 1),
])
def test_import_accepts_what_reduce_and_fix_accept_and_refuses_the_rest(tmp_path, capsys, mangle):
    path = tmp_path / "s.csv"
    path.write_text(mangle(STARS), encoding="utf-8")
    codes = []
    for argv in (["reduce", str(path)], ["fix", str(path)],
                 ["import", str(path), "--log", str(tmp_path / "l.jsonl"), "--new", "--vessel",
                  "Sula Brae", "--title", "t"]):
        codes.append(_run(capsys, *argv)[0])
    assert len(set(codes)) == 1, codes


# ---------------------------------------------------------------- item 4: artificial horizon

def test_an_artificial_horizon_reading_above_90_is_halved_then_checked(tmp_path, capsys):
    # Artificial horizon: the reading is twice the altitude (common practice, no source).
    text = ("utc,body,hs,horizon,dr_lat,dr_lon\n"
            "2026-06-20T13:31:32Z,Sun,155 07.2,artificial,35 50.0 N,023 10.0 W\n")
    path = tmp_path / "a.csv"
    path.write_text(text, encoding="utf-8")
    code, out, err = _run(capsys, "reduce", str(path), "--json")
    assert code == 0, err
    import json

    (d,) = json.loads(out)
    assert d["hs_deg"] == pytest.approx(155 + 7.2 / 60, abs=1e-9)
    assert d["ha_deg"] == pytest.approx((155 + 7.2 / 60) / 2, abs=1 / 60)   # halved, no dip
    path.write_text(text.replace("artificial", "sea"), encoding="utf-8")
    code, _, err = _run(capsys, "reduce", str(path))
    assert code == 2 and "above 90°" in err and "artificial" in err
    path.write_text(text.replace("155 07.2", "180 00.1"), encoding="utf-8")
    code, _, err = _run(capsys, "reduce", str(path))
    assert code == 2 and "outside" in err


def test_the_shell_takes_the_double_altitude_with_an_artificial_horizon(tmp_path):
    from tests.shell_driver import open_state, run_lines

    clock = lambda: datetime(2026, 6, 20, 14, 0, tzinfo=timezone.utc)  # noqa: E731
    st_, log = open_state(tmp_path / "p.jsonl", "Sula Brae", "Horta to Porto Santo", clock)
    try:
        out = run_lines(st_, "dr 35 50.0 N 023 10.0 W at 2026-06-20T13:00:00Z",
                        "sight Sun 155 07.2 at 13:31:32")
        assert "error" in out and "above 90°" in out
        out = run_lines(st_, "sight Sun 155 07.2 at 13:31:32 horizon artificial")
        assert "logged" in out and "altitude halved" in out
    finally:
        log.close()


# ---------------------------------------------------------------- item 9: times and settings

@given(year=st.sampled_from([1, 2, 999, 1066, 1898, 2052, 5000, 9998, 9999]),
       offset=st.sampled_from(["Z", "+14:00", "-14:00", "+05:30", "-0001", "+00:00"]),
       digits=st.integers(0, 30))
@settings(max_examples=150, deadline=None)
def test_any_year_outside_the_range_gets_the_range_error(year, offset, digits):
    frac = ("." + "9" * digits) if digits else ""
    for when in ("01-01T00:00:00", "12-31T23:59:59"):
        text = f"{year:04d}-{when}{frac}{offset}"
        with pytest.raises(OutOfRangeError) as info:
            parse_sight_utc(text)
        assert "supported range" in str(info.value)


@pytest.mark.parametrize("text", ["0000-01-01T00:00:00Z", "10000-01-01T00:00:00Z",
                                  "0001-01-01T00:00:00+01:00", "9999-12-31T23:59:59.9999999Z",
                                  "9999-12-31T23:00:00-12:00"])
def test_years_no_calendar_holds_get_the_range_error_not_a_traceback(text, capsys, tmp_path):
    with pytest.raises(OutOfRangeError):
        parse_utc(text)
    code, _, err = _run(capsys, "almanac", "Sun", "--utc", text)
    assert code == 2 and "supported range" in err and "Traceback" not in err
    path = tmp_path / "y.csv"
    path.write_text(HEAD + ROW.format(note="").replace("2026-06-20T21:09:57Z", text),
                    encoding="utf-8")
    code, _, err = _run(capsys, "reduce", str(path))
    assert code == 2 and "supported range" in err


def test_the_shell_gives_the_range_error_for_a_watch_time_past_year_9999(tmp_path):
    from tests.shell_driver import open_state, run_lines

    clock = lambda: datetime(2026, 6, 20, 14, 0, tzinfo=timezone.utc)  # noqa: E731
    st_, log = open_state(tmp_path / "p.jsonl", "Sula Brae", "t", clock)
    try:
        out = run_lines(st_, "set zone +12", "sight Sun 40 zt 9999-12-31 23:00:00",
                        "sight Sun 40 at 0001-01-01T00:00:00+01:00")
        assert out.count("supported range") == 2 and "Traceback" not in out
    finally:
        log.close()


def test_the_fractional_seconds_of_any_length_are_read_exactly():
    # 59.99999999999999999 s is below 60 s: it rounds to the microsecond, not to a refusal
    t = parse_utc("2026-03-20T18:42:59.99999999999999999Z")
    assert t == datetime(2026, 3, 20, 18, 43, 0, tzinfo=timezone.utc)


_ZONES = [h * 60 for h in range(-12, 13)] + sorted(FRACTIONAL_ZD_MIN)


@given(st.sampled_from(_ZONES))
def test_every_zone_description_round_trips_in_one_notation(minutes):
    text = format_zone_description(timedelta(minutes=minutes))
    assert parse_zone_description(text) == timedelta(minutes=minutes)


def test_the_zones_off_the_hour_are_those_in_use():
    # From memory (the UTC offsets kept on land): India +5:30 is ZD -5:30, Nepal +5:45 is
    # ZD -5:45, Newfoundland -3:30 is ZD +3:30, the Marquesas -9:30 is ZD +9:30.
    for text, minutes in (("-5:30", -330), ("-5:45", -345), ("+3:30", 210), ("+9:30", 570)):
        assert parse_zone_description(text) == timedelta(minutes=minutes)
    for text in ("+5:15", "+1:30", "-12:45", "+12:30"):
        with pytest.raises(NavInputError):
            parse_zone_description(text)


@pytest.mark.parametrize("text, zd", [("+03:00", "-3"), ("-05:30", "+5:30"), ("UTC+3", "-3"),
                                      ("+0300", "-3"), ("GMT-5", "+5"), ("+10:00", "-10")])
def test_an_iso_offset_is_refused_with_the_sign_rule_spelt_out(text, zd, capsys):
    with pytest.raises(NavInputError) as info:
        parse_zone_description(text)
    msg = str(info.value)
    assert "ISO 8601 offset" in msg and "UTC = ZT + ZD" in msg and f"ZD {zd}" in msg
    code, _, err = _run(capsys, "noon", "--date", "2026-06-20", "--dr-lat", "35 10 N",
                        "--dr-lon", "021 34 W", f"--zone={text}")
    assert code == 2 and "UTC = ZT + ZD" in err


def test_temperature_and_pressure_have_bounds_and_extremes_warn(tmp_path, capsys):
    assert weather_warnings(10.0, 1013.0) == ()
    assert len(weather_warnings(-40.0, 1013.0)) == 1 and len(weather_warnings(10.0, 900.0)) == 1
    head = "utc,body,hs,eye_height_m,temperature_c,pressure_hpa,dr_lat,dr_lon\n"
    row = "2026-06-20T21:09:57Z,Vega,32 12.4,2.4,{t},{p},35 10.1 N,021 33.9 W\n"
    path = tmp_path / "w.csv"
    for t, p, refused in (("75", "1013", True), ("10", "29.92", True), ("10", "760", True),
                          ("-40", "1013", False), ("10", "900", False)):
        path.write_text(head + row.format(t=t, p=p), encoding="utf-8")
        code, out, err = _run(capsys, "reduce", str(path))
        if refused:       # 75 °F, 29.92 inHg, 760 mmHg: a unit slip, outside the bounds
            assert code == 2 and "outside" in err, (t, p, err)
        else:
            assert code == 0 and "extreme" in out, (t, p, out)


def test_the_shell_warns_of_extreme_weather_and_refuses_a_unit_slip(tmp_path):
    from tests.shell_driver import open_state, run_lines

    clock = lambda: datetime(2026, 6, 20, 14, 0, tzinfo=timezone.utc)  # noqa: E731
    st_, log = open_state(tmp_path / "p.jsonl", "Sula Brae", "t", clock)
    try:
        out = run_lines(st_, "set pressure 29.92", "set temp 75", "set pressure 905")
        assert out.count("error") == 2 and "inHg" in out and "extreme" in out
    finally:
        log.close()


_NOTE_TEXT = st.text(alphabet=st.sampled_from(list("ab ,\"'\n\r;°′é✓")), max_size=40)


@given(st.lists(_NOTE_TEXT, min_size=1, max_size=4), st.sampled_from(["\n", "\r\n", "\r"]))
@settings(max_examples=60, deadline=None)
def test_notes_round_trip_through_a_csv_writer_with_editor_line_numbers(notes, ending):
    # A file written by Python's csv module (the reference writer) reads back with every note
    # whole, and each row named by the line an editor shows it on (line ends of any kind).
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator=ending, quoting=csv.QUOTE_ALL)
    w.writerow(["utc", "body", "hs", "dr_lat", "dr_lon", "note"])
    for i, note in enumerate(notes):
        w.writerow([f"2026-06-20T21:{10 + i:02d}:00Z", "Vega", "32 12.4", "35 10.1 N",
                    "021 33.9 W", note])
    text = buf.getvalue()
    sf = parse_sight_csv(text)
    # an editor counts CR LF, CR and LF each as one line end
    norm = text.replace("\r\n", "\n").replace("\r", "\n")
    expected, line = [], 2
    for note in notes:
        expected.append(line)
        line += note.replace("\r\n", "\n").replace("\r", "\n").count("\n") + 1
    assert [r.line for r in sf.rows] == expected
    # kept whole: only the blanks around a cell are trimmed, as for every cell
    assert [r.note for r in sf.rows] == [n.replace("\r\n", "\n").replace("\r", "\n").strip()
                                         for n in notes]
    assert norm.count("\n") == line - 1
