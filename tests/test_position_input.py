"""Issue 7 item 1: positions typed without their hemisphere, or with latitude and longitude swapped.

Rule of the trade (common practice, no source): a position in degrees and minutes is written with
its hemisphere letter (``35 10.1 N  021 33.9 W``); north and east are + in signed decimal degrees.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nav.angles import format_lat, format_lon, parse_lat, parse_lon
from nav.errors import NavInputError
from nav.units import ARCMIN_DEG

FLOAT_NOISE = 1e-12


@pytest.mark.parametrize("parser, text, field", [
    (parse_lat, "35 10.1", "dr_lat"), (parse_lat, "35°10.1′", "dr_lat"),
    (parse_lat, "-35 10.1", "dr_lat"), (parse_lon, "021 33.9", "dr_lon"),
    (parse_lon, "21°33.9'", "dr_lon"),
])
def test_degrees_and_minutes_without_a_letter_are_refused(parser, text, field):
    with pytest.raises(NavInputError) as info:
        parser(text, field)
    err = info.value
    assert err.field == field and "without" in err.reason
    # both accepted forms are shown: with the letter, and signed decimal degrees
    assert ("N (or S)" in err.example or "E (or W)" in err.example)
    assert "signed decimal degrees" in err.example


def test_the_refusal_shows_the_value_in_both_forms():
    with pytest.raises(NavInputError) as info:
        parse_lat("35 10.1", "dr_lat")
    # 35°10.1′ = 35 + 10.1/60 = 35.1683° (arithmetic)
    assert "35 10.1 N" in info.value.example and "35.1683" in info.value.example


@pytest.mark.parametrize("parser, text", [(parse_lat, "021 33.9 W"), (parse_lat, "W 21 33.9"),
                                          (parse_lon, "35 10 N"), (parse_lon, "35 10.1 S"),
                                          (parse_lat, "121.5")])
def test_swapped_latitude_and_longitude_are_named(parser, text):
    with pytest.raises(NavInputError) as info:
        parser(text, "dr")
    assert "swapped" in str(info.value)


@pytest.mark.parametrize("parser, text, expected", [
    (parse_lat, "35.168", 35.168), (parse_lat, "-35.168", -35.168), (parse_lon, "-21.565", -21.565),
    (parse_lat, "35", 35.0),
    # 0° and 180° have no side: a letter is not needed (common practice, no source)
    (parse_lat, "0 00", 0.0), (parse_lon, "180 00", 180.0), (parse_lon, "000 00.0", 0.0),
])
def test_signed_decimal_degrees_stay_accepted(parser, text, expected):
    assert parser(text, "dr") == pytest.approx(expected, abs=FLOAT_NOISE)


@given(st.integers(-90 * 600, 90 * 600))
@settings(max_examples=200, deadline=None)
def test_latitude_round_trips_in_both_accepted_forms(tenths):
    lat = tenths * ARCMIN_DEG / 10.0
    assert parse_lat(format_lat(lat)) == pytest.approx(lat, abs=FLOAT_NOISE)
    assert parse_lat(f"{lat:.9f}") == pytest.approx(lat, abs=1e-9)
    # written without its letter, degrees and minutes are refused unless on the equator
    bare = format_lat(lat)[:-2]
    if tenths:
        with pytest.raises(NavInputError):
            parse_lat(bare)


@given(st.integers(-180 * 600, 180 * 600))
@settings(max_examples=200, deadline=None)
def test_longitude_round_trips_and_refuses_the_swap(tenths):
    lon = tenths * ARCMIN_DEG / 10.0
    assert parse_lon(format_lon(lon)) == pytest.approx(lon, abs=FLOAT_NOISE)
    with pytest.raises(NavInputError) as info:
        parse_lat(format_lon(lon))           # a longitude typed into the latitude field
    assert "swapped" in str(info.value)
