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

from .angles import parse_altitude, parse_height_m, parse_lat, parse_lon, parse_number
from .errors import NavInputError
from .timekeeping import parse_utc, to_datetime64

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


def _index_error(text: str, field: str = "index_error") -> float:
    return parse_number(text, field, min_value=-30.0, max_value=30.0,
                        example="-1.5 (arcmin, + when the sextant reads high)")


def _temperature(text: str, field: str = "temperature_c") -> float:
    return parse_number(text, field, min_value=-60.0, max_value=60.0, example="10")


def _pressure(text: str, field: str = "pressure_hpa") -> float:
    return parse_number(text, field, min_value=800.0, max_value=1100.0, example="1013")


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


def _fix_label(text: str, field: str = "fix") -> str:
    label = str(text).strip()
    if len(label) > 40:
        raise NavInputError("a fix label is at most 40 characters", field=field, example="noon")
    return label


def _sigma(text: str, field: str = "sigma_arcmin") -> float:
    return parse_number(text, field, min_value=0.05, max_value=30.0, example="1.0")


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
    FieldSpec("utc", parse_sight_utc, True, None, "2026-03-20T18:42:10Z", "time of the sight, ISO 8601 with zone"),
    FieldSpec("body", parse_body, True, None, "Sun", "body observed"),
    FieldSpec("limb", parse_limb, False, None, "lower", "lower, upper or center (Sun, Moon)"),
    FieldSpec("hs", parse_altitude, True, None, "34 12.3", "sextant altitude: 34.205, 34 12.3 or 34°12.3'"),
    FieldSpec("index_error", _index_error, False, 0.0, "-1.5", "index error, arcmin, + on the arc"),
    FieldSpec("eye_height_m", parse_height_m, False, 0.0, "2.5", "height of eye, metres (or 8 ft)"),
    FieldSpec("temperature_c", _temperature, False, 10.0, "10", "air temperature, °C"),
    FieldSpec("pressure_hpa", _pressure, False, 1010.0, "1013", "air pressure, hPa"),
    FieldSpec("horizon", parse_horizon, False, "sea", "sea", "sea, artificial or bubble"),
    FieldSpec("dr_lat", parse_lat, False, None, "41 12.5 N", "DR latitude"),
    FieldSpec("dr_lon", parse_lon, False, None, "032 07.1 W", "DR longitude"),
    FieldSpec("course_deg", _course, False, None, "245", "course made good, degrees true"),
    FieldSpec("speed_kn", _speed, False, None, "6.5", "speed, knots"),
    FieldSpec("sigma_arcmin", _sigma, False, 1.0, "1.0", "expected sight error (1σ), arcmin"),
    FieldSpec("note", lambda s, f="note": str(s)[:500], False, "", "hazy horizon", "free text"),
    FieldSpec("set_deg", _set, False, None, "210",
              "current's set, degrees true (toward), from this row on"),
    FieldSpec("drift_kn", _drift, False, None, "0.8", "current's drift, knots, from this row on"),
    FieldSpec("fix", _fix_label, False, "", "dawn", "label: rows with one label form one fix"),
)
SIGHT_FIELD_BY_NAME = {f.name: f for f in SIGHT_FIELDS}
