"""The fields of a sight and of the vessel's state: one parser each, shared by CLI, CSV and shell.

Angles, positions, heights and times have their parsers in :mod:`nav.angles` and
:mod:`nav.timekeeping`; this module adds the few sight fields that are words (body, limb,
horizon) and a table that names every field with its parser, its default and an example — the
shell's validator, its completer and the CSV reader all read that table.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Callable

from .angles import parse_altitude, parse_angle, parse_height_m, parse_lat, parse_lon, parse_number
from .errors import NavInputError
from .timekeeping import (parse_clock_time, parse_ship_date, parse_utc, parse_watch_error,
                          parse_zone_description, to_datetime64)

LIMBS = ("lower", "upper", "center")
_LIMB_WORDS = {"lower": "lower", "low": "lower", "ll": "lower", "l": "lower",
               "upper": "upper", "up": "upper", "ul": "upper", "u": "upper",
               "center": "center", "centre": "center", "c": "center"}
HORIZONS = ("sea", "artificial", "bubble")
_HORIZON_WORDS = {"sea": "sea", "natural": "sea", "artificial": "artificial", "mercury": "artificial",
                  "bubble": "bubble", "none": "bubble", "no": "bubble"}


def parse_body(text: str, field: str = "body") -> str:
    """A body's canonical name (Sun, Moon, Venus, Mars, Jupiter, Saturn or a navigational star)."""
    from .almanac import resolve_body

    if not str(text).strip():
        raise NavInputError("a body is required", field=field, example="Sun, Moon, Vega")
    return resolve_body(text, field)


def parse_limb(text: str, field: str = "limb") -> str:
    """``lower``/``upper``/``center`` (also ``LL``, ``UL``, ``centre``)."""
    key = str(text).strip().lower()
    if key not in _LIMB_WORDS:
        raise NavInputError(f"'{text}' is not a limb", field=field, example="lower, upper or center")
    return _LIMB_WORDS[key]


def parse_horizon(text: str, field: str = "horizon") -> str:
    """``sea`` (dip applies), ``artificial`` (altitude halved, no dip) or ``bubble`` (no dip)."""
    key = str(text).strip().lower()
    if key not in _HORIZON_WORDS:
        raise NavInputError(f"'{text}' is not a horizon", field=field,
                            example="sea, artificial or bubble")
    return _HORIZON_WORDS[key]


def default_limb(body: str) -> str | None:
    """Lower limb for the Sun and Moon; bodies seen as points have none."""
    return "lower" if body in ("Sun", "Moon") else None


def check_limb(body: str, limb: str | None, field: str = "limb") -> str | None:
    """The limb to use for `body`: the default where none is given; a star or planet takes none."""
    if limb is None:
        return default_limb(body)
    if body not in ("Sun", "Moon") and limb != "center":
        raise NavInputError(f"{body} is observed as a point and has no {limb} limb", field=field,
                            example="leave limb empty, or center")
    return limb if body in ("Sun", "Moon") else None


def parse_sight_utc(text: str, field: str = "utc") -> datetime:
    """The instant of a sight: ISO 8601 (:func:`nav.timekeeping.parse_utc`) inside the ephemeris."""
    from .ephemeris import check_range

    t = parse_utc(text, field)
    check_range(to_datetime64(t), field)
    return t


def parse_hs(text: str, field: str = "hs") -> float:
    """A sextant reading, −1° to 180°: above 90° only an artificial horizon's double altitude,
    which :func:`check_hs_horizon` holds to once the horizon is known (range checks after halving).
    """
    return parse_altitude(text, field, max_deg=180.0)


def check_hs_horizon(hs_deg: float, horizon: str, field: str = "hs") -> None:
    """Refuse a reading above 90° unless it is from an artificial horizon (halved to ≤ 90°)."""
    if horizon != "artificial" and hs_deg > 90.0:
        raise NavInputError(f"Hs {hs_deg:g}° is above 90°: only an artificial-horizon reading "
                            "(twice the altitude, halved by nav) goes above 90°; give the "
                            "horizon as artificial, or mend Hs", field=field,
                            example="34 12.3, or 112 24.6 with horizon artificial")


_IE_EXAMPLE = "2.4 off, 2.4 on or -2.4 (arcmin, + when the sextant reads high)"


def parse_index_error(text: str, field: str = "index_error") -> float:
    """Index error in arcminutes, + on the arc (the sextant reads high).

    Signed (``-2.4``) or in the trade's words: ``2.4 off`` (off the arc, reads low: −2.4′, so the
    correction is +2.4′) and ``2.4 on`` (+2.4′, correction −2.4′).
    """
    s = str(text).strip().lower()
    for word, sign in (("off", -1.0), ("on", 1.0)):
        if s.endswith(word):
            number = s[: -len(word)].strip()
            if number.startswith(("+", "-", "\u2212")):
                raise NavInputError(f"'{text}': give 'on' or 'off' or a sign, not both",
                                    field=field, example=_IE_EXAMPLE)
            return sign * parse_number(number, field, min_value=0.0, max_value=30.0,
                                       example=_IE_EXAMPLE)
    return parse_number(s, field, min_value=-30.0, max_value=30.0,
                        example=_IE_EXAMPLE)


_index_error = parse_index_error


def _watch_error_s(text: str, field: str = "watch_error") -> float:
    return parse_watch_error(text, field).total_seconds()


def _zone_h(text: str, field: str = "zone") -> float:
    return parse_zone_description(text, field).total_seconds() / 3600.0


def parse_method(text: str, field: str = "method") -> str:
    """How a sight is reduced: ``ap`` (tables: whole-degree a-Lat, LHA whole) or ``dr``."""
    key = str(text).strip().lower()
    if key not in ("ap", "dr"):
        raise NavInputError(f"'{text}' is not a method", field=field, example="ap or dr")
    return key


def _gha(text: str, field: str = "gha") -> float:
    value = parse_angle(text, field, min_deg=0.0, max_deg=360.0)
    return 0.0 if value == 360.0 else value


def _dec(text: str, field: str = "dec") -> float:
    return parse_lat(text, field)


def _sight_id(text: str, field: str = "sight") -> str:
    s = str(text).strip()
    if len(s) > 20:
        raise NavInputError(f"'{s[:24]}…' is longer than 20 characters", field=field, example="3")
    return s


# Air temperature and pressure. The bounds are physical for a sight at sea (from memory: the
# lowest sea-level pressure measured is about 870 hPa, in a typhoon's eye, the highest about
# 1084 hPa; 800 hPa is the air some 2000 m up; the lowest air temperature measured anywhere is
# about −89 °C, on a high ice plateau, the highest about +57 °C): a value outside them is a slip
# (°F for °C, inHg or mmHg for hPa) and is refused. The passage log holds the same bounds.
# Inside them, a value outside the usual range at sea (common practice, no source) is reduced
# with a warning, since the refraction correction follows it.
TEMPERATURE_BOUNDS_C = (-80.0, 60.0)
TEMPERATURE_USUAL_C = (-30.0, 45.0)
PRESSURE_BOUNDS_HPA = (800.0, 1100.0)
PRESSURE_USUAL_HPA = (940.0, 1060.0)


def _temperature(text: str, field: str = "temperature_c") -> float:
    return parse_number(text, field, min_value=TEMPERATURE_BOUNDS_C[0],
                        max_value=TEMPERATURE_BOUNDS_C[1], example="10 (°C; 50 °F is 10 °C)")


def _pressure(text: str, field: str = "pressure_hpa") -> float:
    return parse_number(text, field, min_value=PRESSURE_BOUNDS_HPA[0],
                        max_value=PRESSURE_BOUNDS_HPA[1],
                        example="1013 (hPa = mbar; 29.92 inHg and 760 mmHg are 1013 hPa)")


def weather_warnings(temperature_c: float, pressure_hpa: float) -> tuple[str, ...]:
    """Warnings for an air temperature or pressure outside the usual range at sea."""
    out = []
    lo, hi = TEMPERATURE_USUAL_C
    if not lo <= temperature_c <= hi:
        out.append(f"air temperature {temperature_c:g} °C is extreme (usual at sea {lo:g} to "
                   f"{hi:g} °C): check that it is in °C; refraction depends on it")
    lo, hi = PRESSURE_USUAL_HPA
    if not lo <= pressure_hpa <= hi:
        out.append(f"air pressure {pressure_hpa:g} hPa is extreme (usual at sea level {lo:g} to "
                   f"{hi:g} hPa): check that it is in hPa (760 mmHg is 1013 hPa); refraction "
                   "depends on it")
    return tuple(out)


def _course(text: str, field: str = "course_deg") -> float:
    value = parse_number(text, field, min_value=0.0, max_value=360.0, example="245")
    return 0.0 if value == 360.0 else value


def _speed(text: str, field: str = "speed_kn") -> float:
    return parse_number(text, field, min_value=0.0, max_value=60.0, example="6.5")


def _set(text: str, field: str = "set_deg") -> float:
    value = parse_number(text, field, min_value=0.0, max_value=360.0,
                         example="210 (true, the direction the current flows toward)")
    return 0.0 if value == 360.0 else value


def _drift(text: str, field: str = "drift_kn") -> float:
    return parse_number(text, field, min_value=0.0, max_value=10.0, example="0.8")


def _watch_rate(text: str, field: str = "watch_rate_s_per_day") -> float:
    return parse_number(text, field, min_value=-60.0, max_value=60.0,
                        example="+0.5 (seconds a day, + when the watch gains)")


def _watch_error_date(text: str, field: str = "watch_error_date"):
    from .timekeeping import parse_date_or_utc

    return parse_date_or_utc(text, field)


def _fix_label(text: str, field: str = "fix") -> str:
    label = str(text).strip()
    if len(label) > 40:
        raise NavInputError("a fix label is at most 40 characters", field=field, example="noon")
    return label


def _sigma(text: str, field: str = "sigma_arcmin") -> float:
    return parse_number(text, field, min_value=0.05, max_value=30.0, example="1.0")


MAX_NOTE_CHARS = 1000          # what a passage log keeps in a note (nav.logschema)


def parse_note(text: str, field: str = "note") -> str:
    """A free-text note, kept whole; one over :data:`MAX_NOTE_CHARS` characters is refused (never
    cut short silently)."""
    text = str(text)
    if len(text) > MAX_NOTE_CHARS:
        raise NavInputError(f"a note of {len(text):,} characters is over the limit of "
                            f"{MAX_NOTE_CHARS:,}", field=field, example="a shorter note")
    return text


@dataclass(frozen=True)
class FieldSpec:
    """One input field: its name (CSV column, shell option), parser, default, example and help."""

    name: str
    parse: Callable[[str, str], object]
    required: bool
    default: object
    example: str
    help: str


SIGHT_FIELDS: tuple[FieldSpec, ...] = (
    FieldSpec("sight", _sight_id, False, "", "3", "the sight's id on a worked sheet"),
    FieldSpec("utc", parse_sight_utc, False, None, "2026-03-20T18:42:10Z",
              "time of the sight, ISO 8601 with zone (or date, watch_time, watch_error, zone)"),
    FieldSpec("date", parse_ship_date, False, None, "2026-03-20", "ship's (zone) date of the sight"),
    FieldSpec("watch_time", parse_clock_time, False, None, "15:42:10", "the watch's reading"),
    FieldSpec("watch_error", _watch_error_s, False, None, "17 s slow", "watch error: 1 min 5 s fast"),
    FieldSpec("zone", _zone_h, False, None, "+10", "zone description ZD: UTC = ZT + ZD"),
    FieldSpec("watch_rate_s_per_day", _watch_rate, False, None, "+0.5",
              "the watch's daily rate, s/day, + when it gains (with watch_error_date)"),
    FieldSpec("watch_error_date", _watch_error_date, False, None, "2026-06-01",
              "when watch_error was measured: ISO date (00:00 UTC) or instant"),
    FieldSpec("body", parse_body, True, None, "Sun", "body observed"),
    FieldSpec("limb", parse_limb, False, None, "lower", "lower, upper or center (Sun, Moon)"),
    FieldSpec("hs", parse_hs, True, None, "34 12.3", "sextant altitude: 34.205, 34 12.3 or 34°12.3' "
              "(an artificial horizon's double altitude up to 180°)"),
    FieldSpec("index_error", parse_index_error, False, 0.0, "2.4 off",
              "index error, arcmin: 2.4 off, 2.4 on, or signed (+ on the arc)"),
    FieldSpec("eye_height_m", parse_height_m, False, 0.0, "2.5", "height of eye, metres (or 8 ft)"),
    FieldSpec("temperature_c", _temperature, False, 10.0, "10", "air temperature, °C"),
    FieldSpec("pressure_hpa", _pressure, False, 1010.0, "1013", "air pressure, hPa"),
    FieldSpec("horizon", parse_horizon, False, "sea", "sea", "sea, artificial or bubble"),
    FieldSpec("dr_lat", parse_lat, False, None, "41 12.5 N", "DR latitude"),
    FieldSpec("dr_lon", parse_lon, False, None, "032 07.1 W", "DR longitude"),
    FieldSpec("course_deg", _course, False, None, "245", "course made good, degrees true"),
    FieldSpec("speed_kn", _speed, False, None, "6.5", "speed, knots"),
    FieldSpec("sigma_arcmin", _sigma, False, 1.0, "1.0", "expected sight error (1σ), arcmin"),
    FieldSpec("method", parse_method, False, None, "ap", "ap (tables' AP) or dr"),
    FieldSpec("gha", _gha, False, None, "283 07.9", "GHA prescribed by an exercise (replaces nav's)"),
    FieldSpec("dec", _dec, False, None, "12 03.4 S", "Dec prescribed by an exercise (replaces nav's)"),
    FieldSpec("note", parse_note, False, "", "hazy horizon", f"free text, up to {MAX_NOTE_CHARS} characters"),
    FieldSpec("set_deg", _set, False, None, "210",
              "current's set, degrees true (toward), from this row on"),
    FieldSpec("drift_kn", _drift, False, None, "0.8", "current's drift, knots, from this row on"),
    FieldSpec("fix", _fix_label, False, "", "dawn", "label: rows with one label form one fix"),
)
SIGHT_FIELD_BY_NAME = {f.name: f for f in SIGHT_FIELDS}
WATCH_TIME_FIELDS = ("date", "watch_time", "watch_error", "zone")
"""The four columns that stand for ``utc`` in a row: UTC = (watch − fast error) + ZD."""
