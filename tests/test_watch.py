"""The watch's error and rate (nav.watch). Expected values worked by hand from a watch of known
error and rate (arithmetic shown beside each check); the rule error + rate × elapsed days is the
trade's (common practice, no source)."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from nav.errors import NavInputError
from nav.watch import comparison, error_with_rate, utc_from_watch, watch_rate

UTC = timezone.utc
D0 = datetime(2026, 6, 1, tzinfo=UTC)
SECOND = 1.0


def _cmp(day, error_s, source="time signal"):
    ref = D0 + timedelta(days=day)
    return comparison(ref + timedelta(seconds=error_s), ref, source)


def test_rate_from_comparisons_worked_by_hand():
    # a watch 4.0 s fast on 1 June, gaining 0.5 s a day: 4.0, 5.0, 6.5 s on 1, 3, 6 June
    r = watch_rate([_cmp(0, 4.0), _cmp(2, 5.0), _cmp(5, 6.5)])
    assert r.rate_s_per_day == pytest.approx(0.5, abs=1e-9)
    # on 10 June 12:00: 4.0 + 0.5 × 9.5 = 8.75 s fast
    assert r.error_at(D0 + timedelta(days=9.5)) == pytest.approx(8.75, abs=1e-9)
    assert r.warnings == ()
    assert r.rate_sigma_s_per_day == pytest.approx(0.0, abs=1e-9)


def test_least_squares_with_scatter():
    # comparisons read to the nearest second: rate by least squares, the slope of
    # (0, 4), (1, 4), (2, 5), (3, 6): x̄ = 1.5, ȳ = 4.75, Σ(x−x̄)(y−ȳ) = 3.5, Σ(x−x̄)² = 5 → 0.7
    r = watch_rate([_cmp(0, 4), _cmp(1, 4), _cmp(2, 5), _cmp(3, 6)])
    assert r.rate_s_per_day == pytest.approx(0.7, abs=1e-9)
    assert r.error_at(D0) == pytest.approx(4.75 - 0.7 * 1.5, abs=1e-9)    # intercept ȳ − b·x̄


def test_sudden_rate_change_warns():
    # +0.5 s/day, then 4 s in 2 days (+2.0 s/day): a change of 1.5 s/day
    r = watch_rate([_cmp(0, 4.0), _cmp(2, 5.0), _cmp(4, 9.0)])
    assert len(r.warnings) == 1 and "doubtful" in r.warnings[0]


def test_batch_rule_and_utc_from_watch():
    # watch_error 4 s fast measured 1 June 00:00, rate +0.5 s/day: on 11 June 00:00 the error is
    # 4 + 0.5 × 10 = 9 s, so a reading of 12:00:09 is 12:00:00 UTC
    assert error_with_rate(4.0, 0.5, D0, D0 + timedelta(days=10)) == pytest.approx(9.0)
    reading = datetime(2026, 6, 11, 0, 0, 9, tzinfo=UTC)
    utc, applied = utc_from_watch(reading, 4.0, 0.5, D0)
    assert abs((utc - datetime(2026, 6, 11, tzinfo=UTC)).total_seconds()) < 1e-3 * SECOND
    assert applied == pytest.approx(9.0, abs=1e-3)


def test_refusals():
    with pytest.raises(NavInputError, match="two or more"):
        watch_rate([_cmp(0, 4.0)])
    with pytest.raises(NavInputError, match="span only"):
        watch_rate([_cmp(0, 4.0), _cmp(0.1, 4.1)])
    with pytest.raises(NavInputError, match="more than an hour"):
        _cmp(0, 4000.0)


def test_array_of_instants_matches_scalar():
    r = watch_rate([_cmp(0, 4.0), _cmp(2, 5.0)])
    days = np.arange(0, 10, 0.5)
    got = [r.error_at(D0 + timedelta(days=float(d))) for d in days]
    assert np.allclose(got, 4.0 + 0.5 * days, atol=1e-9)      # 4 s + 0.5 s/day, by hand


def test_watch_error_date_parser():
    # ISO 8601: a calendar date alone is read as 00:00 UTC (the batch contract of issue 10)
    from nav.timekeeping import parse_date_or_utc

    assert parse_date_or_utc("2026-06-01") == D0
    assert parse_date_or_utc("2026-06-01T03:00:00+03:00") == D0
    with pytest.raises(NavInputError, match="not a real date"):
        parse_date_or_utc("2026-02-30")
    with pytest.raises(NavInputError):
        parse_date_or_utc("June 1st")


BATCH_HEAD = ("date,watch_time,watch_error,zone,body,hs,dr_lat,dr_lon,"
              "watch_rate_s_per_day,watch_error_date\n")


def test_batch_columns_apply_the_rate():
    # Worked by hand: watch 21:00:00 on zone +1 (UTC 22:00:00 less the error); the error, 4 s fast
    # at 2026-06-01 00:00 UTC, gains 1.0 s a day: 10.917 d later it is 14.917 s, so
    # UTC = 21:59:45.083
    from nav.sightfile import parse_sight_csv

    sf = parse_sight_csv(BATCH_HEAD + "2026-06-11,21:00:00,4 fast,+1,Vega,40 00.0,36 N,15 W,"
                         "+1.0,2026-06-01\n")
    (row,) = sf.rows
    expected = datetime(2026, 6, 11, 21, 59, 45, 83000, tzinfo=UTC)
    assert abs((row.utc - expected).total_seconds()) < 0.01 * SECOND
    assert row.watch_error_s == pytest.approx(14.917, abs=0.001)


def test_batch_rate_needs_its_date_and_a_watch_time():
    from nav.sightfile import parse_sight_csv

    sf = parse_sight_csv(BATCH_HEAD + "2026-06-11,21:00:00,4 fast,+1,Vega,40 00.0,36 N,15 W,+1.0,\n")
    assert sf.errors and sf.errors[0].field == "watch_error_date"
    sf = parse_sight_csv("utc,body,hs,dr_lat,dr_lon,watch_rate_s_per_day,watch_error_date\n"
                         "2026-06-11T22:00:00Z,Vega,40 00.0,36 N,15 W,+1.0,2026-06-01\n")
    assert sf.errors and "read on the watch" in str(sf.errors[0])
