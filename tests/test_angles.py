"""nav.angles: degree trigonometry, normalisation, navigator notation and its parsers.

Notation (common practice, no source): degrees and decimal minutes to 0.1', latitude with N/S,
longitude with E/W and three-digit degrees; north and east are +.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nav.angles import (MINUS, acosd, asind, atan2d, cosd, format_arcmin, format_dm, format_lat,
                        format_lon, norm180, norm360, parse_altitude, parse_angle, parse_height_m,
                        parse_lat, parse_lon, parse_number, sind, tand)
from nav.errors import NavInputError
from nav.units import ARCMIN_DEG

ARCMIN = ARCMIN_DEG
DEG, MIN = "\u00b0", "\u2032"
FEET_M = 0.3048               # the international foot (1959), metres
FLOAT_NOISE = 1e-12           # degrees (or metres): rounding of a float64 sum, nothing more
TRIG_NOISE = 1e-15            # one ulp or so of a sine or cosine
# The display rounds to 0.1', so a round trip is good to half of that (plus float noise).
DISPLAY_HALF_STEP = 0.05 * ARCMIN + FLOAT_NOISE


# ---------------------------------------------------------------- trigonometry in degrees

def test_exact_values_at_multiples_of_90():
    # sin 180 = 0 exactly, cos 90 = 0 exactly (common practice, no source: the guide's rule).
    assert sind(180.0) == 0.0 and sind(-180.0) == 0.0 and sind(360.0) == 0.0
    assert sind(90.0) == 1.0 and sind(-90.0) == -1.0 and sind(450.0) == 1.0
    assert cosd(90.0) == 0.0 and cosd(270.0) == 0.0 and cosd(180.0) == -1.0
    assert sind(30.0) == pytest.approx(0.5, abs=TRIG_NOISE)


def test_trig_scalar_and_array():
    x = np.array([0.0, 30.0, 90.0, 180.0, 270.0, -45.0])
    assert np.allclose(sind(x), np.sin(np.radians(x)), atol=TRIG_NOISE)
    assert np.allclose(cosd(x), np.cos(np.radians(x)), atol=TRIG_NOISE)
    assert np.ndim(sind(30.0)) == 0 and np.ndim(cosd(30.0)) == 0
    assert tand(45.0) == pytest.approx(1.0, abs=TRIG_NOISE)
    # Arcsine and arccosine clip the rounding overshoot instead of returning NaN.
    assert asind(1.0 + 1e-15) == 90.0 and acosd(-1.0 - 1e-15) == 180.0
    assert atan2d(1.0, -1.0) == pytest.approx(135.0, abs=FLOAT_NOISE)


@given(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False))
@settings(max_examples=200)
def test_norm360_and_norm180_ranges(x):
    a = norm360(x)
    assert 0.0 <= a < 360.0
    b = norm180(x)
    assert -180.0 <= b < 180.0
    assert math.isclose(math.remainder(a - x, 360.0), 0.0, abs_tol=1e6 * FLOAT_NOISE)  # |x| up to 1e6 deg


def test_norm360_never_returns_360():
    # A tiny negative angle would round to 360.0 in float: it becomes 0.
    assert norm360(-1e-300) == 0.0
    assert norm360(-1e-14) < 360.0
    assert norm360(720.0) == 0.0
    out = norm360(np.array([-1e-300, 359.5, 360.0, -0.5]))
    assert np.all(out < 360.0) and out.shape == (4,)


# ---------------------------------------------------------------- formatting

def test_format_examples():
    # Navigator notation (common practice, no source).
    assert format_dm(283.0 + 7.9 * ARCMIN, deg_width=3) == f"283{DEG}07.9{MIN}"
    assert format_lat(41.0 + 12.4 * ARCMIN) == f"41{DEG}12.4{MIN} N"
    assert format_lat(-(41.0 + 12.4 * ARCMIN)) == f"41{DEG}12.4{MIN} S"
    assert format_lon(-(32.0 + 7.1 * ARCMIN)) == f"032{DEG}07.1{MIN} W"
    assert format_lon(151.0 + 12.0 * ARCMIN) == f"151{DEG}12.0{MIN} E"
    assert format_dm(-3.2 * ARCMIN) == f"{MINUS}0{DEG}03.2{MIN}"
    assert format_arcmin(-3.24) == f"{MINUS}3.2{MIN}" and format_arcmin(14.8) == f"+14.8{MIN}"


def test_minutes_carry_to_the_next_degree():
    # 12 deg 59.96' shows as 13 deg 00.0', never as 12 deg 60.0'.
    assert format_dm(12.0 + 59.96 * ARCMIN) == f"13{DEG}00.0{MIN}"
    assert format_lat(-(12.0 + 59.97 * ARCMIN)) == f"13{DEG}00.0{MIN} S"


def test_signed_zero_and_values_that_round_to_zero():
    # No minus sign and no southern / western zero (common practice, no source).
    assert format_dm(-0.0) == f"0{DEG}00.0{MIN}"
    assert format_dm(-0.01 * ARCMIN) == f"0{DEG}00.0{MIN}"
    assert format_lat(-0.0) == f"00{DEG}00.0{MIN} N"
    assert format_lat(-0.01 * ARCMIN) == f"00{DEG}00.0{MIN} N"
    assert format_lon(-0.0) == f"000{DEG}00.0{MIN} E"
    assert format_arcmin(-0.04) == f"+0.0{MIN}"
    assert format_dm(-0.0, signed=True) == f"+0{DEG}00.0{MIN}"


def test_format_lon_wraps_beyond_180():
    assert format_lon(190.0) == f"170{DEG}00.0{MIN} W"
    assert format_lon(-180.0) == f"180{DEG}00.0{MIN} W"


# ---------------------------------------------------------------- round trips (hypothesis)

@given(st.floats(min_value=0.0, max_value=359.999, allow_nan=False))
@settings(max_examples=300)
def test_format_dm_parse_angle_round_trip(x):
    assert abs(parse_angle(format_dm(x, deg_width=3)) - x) <= DISPLAY_HALF_STEP


@given(st.floats(min_value=-359.999, max_value=359.999, allow_nan=False))
@settings(max_examples=200)
def test_signed_format_dm_round_trip(x):
    back = parse_angle(format_dm(x), min_deg=-360.0, max_deg=360.0)
    assert abs(back - x) <= DISPLAY_HALF_STEP


@given(st.floats(min_value=-90.0, max_value=90.0, allow_nan=False), st.integers(0, 3))
@settings(max_examples=300)
def test_format_lat_parse_lat_round_trip(x, decimals):
    half_step = 0.5 * 10.0 ** -decimals * ARCMIN + FLOAT_NOISE
    assert abs(parse_lat(format_lat(x, decimals)) - x) <= half_step


@given(st.floats(min_value=-180.0, max_value=180.0, allow_nan=False))
@settings(max_examples=300)
def test_format_lon_parse_lon_round_trip(x):
    back = parse_lon(format_lon(x))
    # 180 E and 180 W are one meridian.
    assert min(abs(back - x), 360.0 - abs(back - x)) <= DISPLAY_HALF_STEP


# ---------------------------------------------------------------- parsing: accepted spellings

@pytest.mark.parametrize("text, expected", [
    ("34.205", 34.205),
    ("34 12.3", 34.0 + 12.3 * ARCMIN),
    ("34\u00b012.3'", 34.0 + 12.3 * ARCMIN),
    ("34\u00b012.3\u2032", 34.0 + 12.3 * ARCMIN),
    ("34d12.3m", 34.0 + 12.3 * ARCMIN),
    ("34:12.3", 34.0 + 12.3 * ARCMIN),
    ("  283 07.9  ", 283.0 + 7.9 * ARCMIN),
    ("0", 0.0),
    ("360", 360.0),
])
def test_parse_angle_accepts(text, expected):
    assert parse_angle(text) == pytest.approx(expected, abs=FLOAT_NOISE)


@pytest.mark.parametrize("text", ["34 60", "34 60.0", "34 75.2", "12 99"])
def test_minutes_of_60_or_more_are_refused(text):
    # Minutes run 0 to 59.9... (common practice, no source).
    with pytest.raises(NavInputError) as info:
        parse_angle(text, field="hs")
    assert info.value.field == "hs" and "60" in str(info.value)
    assert info.value.example


@pytest.mark.parametrize("text", ["", "abc", "34.5 12", "12 3 4", "1e3", "nan", "34..2", "--3", "361", "-1"])
def test_parse_angle_refuses(text):
    with pytest.raises(NavInputError) as info:
        parse_angle(text, field="gha")
    assert info.value.field == "gha"


def test_parse_altitude_range():
    assert parse_altitude("34 12.3") == pytest.approx(34.205, abs=FLOAT_NOISE)
    with pytest.raises(NavInputError):
        parse_altitude("91")


# ---------------------------------------------------------------- hemispheres

@pytest.mark.parametrize("text, expected", [
    ("41 12.5 N", 41.0 + 12.5 * ARCMIN),
    ("41 12.5 S", -(41.0 + 12.5 * ARCMIN)),
    ("41\u00b012.5\u2032S", -(41.0 + 12.5 * ARCMIN)),
    ("S 41 12.5", -(41.0 + 12.5 * ARCMIN)),
    ("41 12.5 s", -(41.0 + 12.5 * ARCMIN)),
    ("-41.2083", -41.2083),
    ("41.2083", 41.2083),
    ("90 N", 90.0),
])
def test_parse_lat(text, expected):
    assert parse_lat(text) == pytest.approx(expected, abs=FLOAT_NOISE)


@pytest.mark.parametrize("text, expected", [
    ("032 07.1 W", -(32.0 + 7.1 * ARCMIN)),
    ("32\u00b007.1\u2032E", 32.0 + 7.1 * ARCMIN),
    ("-32.118", -32.118),
    ("180 W", -180.0),
    ("W 5 30", -5.5),
])
def test_parse_lon(text, expected):
    assert parse_lon(text) == pytest.approx(expected, abs=FLOAT_NOISE)


@pytest.mark.parametrize("parser, text", [
    (parse_lat, "41 12.5 E"),      # a longitude's hemisphere on a latitude
    (parse_lon, "032 07.1 N"),
    (parse_lat, "-41 12.5 S"),     # sign and hemisphere together
    (parse_lat, "N 41 12.5 S"),    # hemisphere twice
    (parse_lat, "91 N"),
    (parse_lat, "90 00.1 S"),
    (parse_lon, "180 00.1 E"),
    (parse_lon, "181"),
    (parse_lat, "N"),
    (parse_lat, ""),
    (parse_lat, "41 60 N"),
])
def test_hemisphere_rules(parser, text):
    with pytest.raises(NavInputError) as info:
        parser(text, field="dr")
    assert info.value.field == "dr" and info.value.example


# ---------------------------------------------------------------- heights and numbers

@pytest.mark.parametrize("text, expected_m", [
    ("2.5", 2.5), ("2.5 m", 2.5), ("2.5m", 2.5), ("3 metres", 3.0),
    ("8 ft", 8 * FEET_M), ("8ft", 8 * FEET_M), ("8 feet", 8 * FEET_M), ("8'", 8 * FEET_M),
    ("0", 0.0),
])
def test_heights_in_metres_and_feet(text, expected_m):
    # 1 ft = 0.3048 m exactly (international yard and pound agreement, 1959).
    assert parse_height_m(text) == pytest.approx(expected_m, abs=FLOAT_NOISE)


@pytest.mark.parametrize("text", ["-2", "2,5", "tall", "101", "400 ft", "2.5 km", ""])
def test_heights_refused(text):
    with pytest.raises(NavInputError) as info:
        parse_height_m(text)
    assert info.value.field == "eye_height_m"


def test_parse_number():
    assert parse_number("\u22121.5", "ie_arcmin") == -1.5
    with pytest.raises(NavInputError):
        parse_number("inf", "ie_arcmin")
    with pytest.raises(NavInputError):
        parse_number("5", "ie_arcmin", max_value=3.0)
    with pytest.raises(NavInputError) as info:
        parse_number("x", "speed_kn")
    assert info.value.field == "speed_kn"


def test_hour_angles_never_show_360():
    # GHA, SHA and LHA live in [0, 360) (convention of the trade, common practice, no source):
    # 359°59.97′ rounds to the next whole degree, which is 000°00.0′, not 360°00.0′.
    from nav.angles import format_dm

    assert format_dm(359.9995, deg_width=3, wrap360=True) == "000\u00b000.0\u2032"
    assert format_dm(359.9995, deg_width=3) == "360\u00b000.0\u2032"
    assert format_dm(359.99, deg_width=3, wrap360=True) == "359\u00b059.4\u2032"


def test_whole_minute_notation():
    # Graticule labels in whole minutes: two-digit minutes (navigator notation, common practice).
    from nav.angles import format_lat, format_lon

    assert format_lat(38.0, 0) == "38\u00b000\u2032 N"
    assert format_lon(-32.5, 0) == "032\u00b030\u2032 W"
    assert format_lat(-12.9999, 0) == "13\u00b000\u2032 S"


def test_a_bearing_reads_as_degrees_0_to_360_and_its_error_shows_a_bearing():
    # A compass bearing, heading or Zn is 000 to 360 degrees, 360 being north (common practice,
    # no source); the example in the error is a bearing, not a sextant altitude.
    from nav.angles import parse_bearing

    assert parse_bearing("058") == 58.0
    assert parse_bearing("360") == 0.0
    assert parse_bearing("245 30") == 245.5
    with pytest.raises(NavInputError) as e:
        parse_bearing("400", "bearing")
    assert e.value.field == "bearing" and "058" in e.value.example
