"""nav.timekeeping: ISO 8601 instants, durations, zone description and watch error.

Trade rules cited (the American Practical Navigator, chapter on time; from memory):
- Zone description: UTC = ZT + ZD; zones west of Greenwich carry a + ZD (45 deg W keeps ZD +3).
  ISO 8601 writes the same zone the other way round (local = UTC + offset: -03:00).
- Watch error: a watch that is fast reads ahead of the true time, so the error is subtracted
  (true = watch reading - fast error); a slow error is added.
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nav.errors import NavInputError
from nav.timekeeping import (UTC, format_hms, format_utc, from_datetime64, parse_duration,
                             parse_naive_time, parse_utc, parse_watch_error, parse_zone_description,
                             time_range, to_datetime64, zone_time_to_utc)

SECOND = timedelta(seconds=1)
HOUR = timedelta(hours=1)


# ---------------------------------------------------------------- ISO 8601

@pytest.mark.parametrize("text, expected", [
    ("2026-03-20T18:42:10Z", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-20T18:42:10z", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-20 18:42:10Z", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-20T18:42Z", datetime(2026, 3, 20, 18, 42, tzinfo=UTC)),
    ("2026-03-20T18:42:10.25Z", datetime(2026, 3, 20, 18, 42, 10, 250_000, tzinfo=UTC)),
    ("2026-03-20T18:42:10 UTC", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    # ISO 8601 offsets: local = UTC + offset (ISO 8601-1:2019, from memory).
    ("2026-03-20T15:42:10-03:00", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-20T15:42:10\u221203:00", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-21T00:12:10+05:30", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-21T00:12:10+0530", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-03-20T20:42:10+02", datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)),
    ("2026-01-01T01:00:00+14:00", datetime(2025, 12, 31, 11, 0, tzinfo=UTC)),
])
def test_parse_utc_accepts(text, expected):
    got = parse_utc(text)
    assert got == expected and got.tzinfo == UTC


def test_time_without_zone_is_refused_and_says_why():
    with pytest.raises(NavInputError) as info:
        parse_utc("2026-03-20T18:42:10", field="utc")
    assert info.value.field == "utc"
    assert "zone" in str(info.value) and "Z" in str(info.value)
    assert info.value.example


@pytest.mark.parametrize("text", [
    "2026-02-30T12:00:00Z",   # no 30 February
    "2025-02-29T12:00:00Z",   # 2025 is not a leap year
    "2026-13-01T12:00:00Z",
    "2026-03-20T24:00:00Z",
    "2026-03-20T18:60:00Z",
    "2026-03-20T18:42:60Z",
    "2026-03-20T18:42:10+15:00",
    "2026-03-20T18:42:10+03:75",
])
def test_impossible_instants_are_refused(text):
    with pytest.raises(NavInputError) as info:
        parse_utc(text, field="from")
    assert info.value.field == "from"


@pytest.mark.parametrize("text", ["yesterday", "", "2026-03-20", "20/03/2026 18:42Z", "2026-3-20T18:42Z",
                                  "18:42:10Z"])
def test_malformed_instants_are_refused(text):
    with pytest.raises(NavInputError) as info:
        parse_utc(text)
    assert "ISO 8601" in str(info.value) or "zone" in str(info.value)


def test_leap_year_day_is_accepted():
    assert parse_utc("2024-02-29T12:00Z") == datetime(2024, 2, 29, 12, tzinfo=UTC)


@given(st.datetimes(min_value=datetime(1900, 1, 1), max_value=datetime(2050, 12, 31),
                    timezones=st.just(UTC)),
       st.integers(min_value=-12 * 60, max_value=14 * 60))
@settings(max_examples=200)
def test_iso_round_trip_with_any_offset(t, offset_min):
    t = t.replace(microsecond=0)
    zone = timezone(timedelta(minutes=offset_min))
    text = t.astimezone(zone).isoformat()          # e.g. 2026-03-20T15:42:10-03:00
    assert parse_utc(text) == t
    assert parse_utc(format_utc(t)) == t


def test_format_utc_and_hms_round_to_the_second():
    t = datetime(2026, 3, 20, 18, 42, 10, 600_000, tzinfo=UTC)
    assert format_utc(t) == "2026-03-20T18:42:11Z"
    assert format_hms(t) == "18:42:11 UTC"
    assert format_hms(datetime(2026, 3, 20, 18, 42, 10, 499_999, tzinfo=UTC)) == "18:42:10 UTC"


def test_datetime64_conversions():
    t = datetime(2026, 3, 20, 15, 42, 10, tzinfo=timezone(timedelta(hours=-3)))
    t64 = to_datetime64(t)
    assert t64 == np.datetime64("2026-03-20T18:42:10", "us")
    assert from_datetime64(t64) == t
    arr = to_datetime64([t, t + HOUR])
    assert arr.dtype == np.dtype("datetime64[us]") and arr.shape == (2,)
    with pytest.raises(NavInputError):
        to_datetime64(datetime(2026, 3, 20, 18, 42, 10))     # naive: no zone


# ---------------------------------------------------------------- durations and ranges

@pytest.mark.parametrize("text, seconds", [("30s", 30), ("10min", 600), ("10m", 600), ("1h", 3600),
                                           ("1d", 86400), ("2 days", 172800), ("15", 900), ("0.5h", 1800)])
def test_parse_duration(text, seconds):
    assert parse_duration(text) == timedelta(seconds=seconds)


@pytest.mark.parametrize("text", ["0", "0s", "-1h", "1 week", "h", "", "0.0000001s",
                                  "99999999999999999999d", "9999999999d"])
def test_bad_durations_are_refused(text):
    # Zero, a step below the microsecond nav keeps (it would be zero), and steps beyond what a
    # date can hold are input errors, never a ZeroDivisionError or OverflowError.
    with pytest.raises(NavInputError) as info:
        parse_duration(text, field="step")
    assert info.value.field == "step"


def test_time_range_inclusive_and_limited():
    start = datetime(2026, 3, 20, tzinfo=UTC)
    t = time_range(start, start + 3 * HOUR, HOUR, max_rows=10)
    assert t.shape == (4,) and t[-1] == np.datetime64("2026-03-20T03:00:00", "us")
    with pytest.raises(NavInputError) as info:
        time_range(start + HOUR, start, HOUR, max_rows=10)
    assert "after" in str(info.value)
    with pytest.raises(NavInputError) as info:
        time_range(start, start + 100 * HOUR, HOUR, max_rows=10)
    assert "limit" in str(info.value)


# ---------------------------------------------------------------- zone description

@pytest.mark.parametrize("text, hours", [("+3", 3), ("3", 3), ("-5", -5), ("\u22125", -5), ("0", 0),
                                         ("-5:30", -5.5), ("-12", -12), ("+12", 12), ("+3:00", 3)])
def test_parse_zone_description(text, hours):
    assert parse_zone_description(text) == timedelta(hours=hours)


@pytest.mark.parametrize("text", ["+15", "+14:30", "-14:01", "+3:75", "three", "", "+3h", "-14",
                                  "+14", "+13", "-12:45"])
def test_zone_description_outside_12_hours_is_refused(text):
    # Issue 7 item 9: nav takes zone descriptions from -12 to +12 (common practice, no source).
    with pytest.raises(NavInputError) as info:
        parse_zone_description(text)
    assert info.value.field == "zone"


def test_utc_is_zone_time_plus_zone_description():
    # A vessel at 45 deg W keeps ZD +3 (15 deg per hour, west +): ZT 15:42:10 is 18:42:10 UTC.
    zd = parse_zone_description("+3")
    w = zone_time_to_utc(datetime(2026, 3, 20, 15, 42, 10), zd)
    assert w.utc == datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)
    # East of Greenwich, ZD -10 (150 deg E): ZT 04:42:10 on the 21st is 18:42:10 UTC on the 20th.
    w = zone_time_to_utc(datetime(2026, 3, 21, 4, 42, 10), parse_zone_description("-10"))
    assert w.utc == datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)
    # The ISO 8601 offset of the same zone has the opposite sign (ZD +3 is -03:00).
    assert parse_utc("2026-03-20T15:42:10-03:00") == zone_time_to_utc(
        datetime(2026, 3, 20, 15, 42, 10), timedelta(hours=3)).utc


# ---------------------------------------------------------------- watch error

@pytest.mark.parametrize("text, fast_s", [
    ("12 fast", 12.0), ("12fast", 12.0), ("12 f", 12.0), ("12s fast", 12.0), ("3.5s slow", -3.5),
    ("3.5 slow", -3.5), ("3.5 SLOW", -3.5), ("+12", 12.0), ("12", 12.0), ("-3", -3.0),
    ("\u22123", -3.0), ("0", 0.0),
    # minutes and seconds as the trade says them (common practice, no source)
    ("17 s slow", -17.0), ("1 min 5 s fast", 65.0), ("1m 5s fast", 65.0), ("2 min slow", -120.0),
    ("1 min 5.5 s slow", -65.5), ("1min5s fast", 65.0),
])
def test_parse_watch_error(text, fast_s):
    assert parse_watch_error(text) == timedelta(seconds=fast_s)


@pytest.mark.parametrize("text", [
    "12s",         # 12 seconds, or 12 slow? nav must not guess the sign of a watch error
    "12 s",
    "fast",
    "inf", "-inf", "nan",
    "12 sec",
    "",
    "1 min 65 s fast",   # 65 seconds after a minute: a slip, not a reading
    "1 min",             # no direction
    "min fast",
])
def test_ambiguous_or_bad_watch_errors_are_refused(text):
    with pytest.raises(NavInputError) as info:
        parse_watch_error(text)
    assert info.value.field == "watch_error" and info.value.example


def test_watch_error_words_read_back():
    from nav.timekeeping import format_watch_error

    for seconds in (65.0, -17.0, 0.0, -120.0, 12.5):
        assert parse_watch_error(format_watch_error(seconds)) == timedelta(seconds=seconds)


def test_fast_watch_is_subtracted_slow_added():
    # Watch 12 s fast reads 15:42:22 when the zone time is 15:42:10 (trade rule above).
    w = zone_time_to_utc(datetime(2026, 3, 20, 15, 42, 22), parse_zone_description("+3"),
                         parse_watch_error("12 fast"))
    assert w.utc == datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)
    assert w.zone_time == datetime(2026, 3, 20, 15, 42, 10)
    assert w.watch_fast == 12 * SECOND and w.zone_description == 3 * HOUR
    # Watch 8 s slow reads 15:42:02 for the same instant.
    w = zone_time_to_utc(datetime(2026, 3, 20, 15, 42, 2), timedelta(hours=3), parse_watch_error("8 slow"))
    assert w.utc == datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)


def test_parse_naive_time():
    assert parse_naive_time("2026-03-20 15:42:10") == datetime(2026, 3, 20, 15, 42, 10)
    assert parse_naive_time("2026-03-20T15:42") == datetime(2026, 3, 20, 15, 42)
    with pytest.raises(NavInputError):
        parse_naive_time("2026-02-30 15:42:10")
