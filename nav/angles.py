"""Angles: exact degree trigonometry, normalisation, and navigator notation.

Every parser here is the one parser for its kind of input: the CLI, the CSV reader and the shell's
validator all call these. Parsers raise :class:`nav.errors.NavInputError` naming the field and
giving an accepted example; they never guess.

Notation (see DEVELOPERS.md, "Conventions"):
  angle      ``283°07.9′``           (degrees and decimal minutes)
  latitude   ``41°12.4′ N``          (north +)
  longitude  ``032°07.1′ W``         (east +)
"""

from __future__ import annotations

import math
import re

import numpy as np

from .errors import NavInputError

ARCMIN = 1.0 / 60.0
DEG = "\u00b0"
MIN = "\u2032"
MINUS = "\u2212"
FEET_TO_M = 0.3048


# ---------------------------------------------------------------- trigonometry in degrees

def _reduce(x_deg):
    """Reduce to [-180, 180] so that multiples of 90° convert to radians exactly where possible."""
    return np.remainder(np.asarray(x_deg, dtype=float) + 180.0, 360.0) - 180.0


def sind(x_deg):
    """Sine of an angle in degrees; exact 0 at multiples of 180°, exact ±1 at odd multiples of 90°."""
    r = _reduce(x_deg)
    out = np.sin(np.radians(r))
    out = np.where(np.abs(r) == 180.0, 0.0, out)
    out = np.where(r == 90.0, 1.0, np.where(r == -90.0, -1.0, out))
    return out[()] if np.ndim(out) == 0 else out


def cosd(x_deg):
    """Cosine of an angle in degrees; exact 0 at odd multiples of 90°."""
    r = _reduce(x_deg)
    out = np.cos(np.radians(r))
    out = np.where(np.abs(r) == 90.0, 0.0, out)
    out = np.where(np.abs(r) == 180.0, -1.0, out)
    return out[()] if np.ndim(out) == 0 else out


def tand(x_deg):
    return np.asarray(sind(x_deg)) / np.asarray(cosd(x_deg))


def asind(x):
    """Arcsine in degrees, with the argument clipped to [-1, 1] (rounding can overshoot)."""
    return np.degrees(np.arcsin(np.clip(x, -1.0, 1.0)))


def acosd(x):
    return np.degrees(np.arccos(np.clip(x, -1.0, 1.0)))


def atan2d(y, x):
    return np.degrees(np.arctan2(y, x))


def norm360(x_deg):
    """Angle in [0, 360). A value that would round to 360 becomes 0."""
    r = np.remainder(np.asarray(x_deg, dtype=float), 360.0)
    r = np.where(r >= 360.0, 0.0, r)
    return r[()] if np.ndim(r) == 0 else r


def norm180(x_deg):
    """Angle in [-180, 180)."""
    r = np.remainder(np.asarray(x_deg, dtype=float) + 180.0, 360.0) - 180.0
    return r[()] if np.ndim(r) == 0 else r


# ---------------------------------------------------------------- formatting

def _split_dm(value_deg: float, decimals: int) -> tuple[int, float]:
    """Whole degrees and minutes of |value|, carrying 59.96′ over to the next degree."""
    total_min = round(abs(float(value_deg)) * 60.0, decimals)
    deg = int(total_min // 60)
    minutes = round(total_min - 60 * deg, decimals)
    if minutes >= 60.0:
        deg, minutes = deg + 1, 0.0
    return deg, minutes


def _min_width(decimals: int) -> int:
    """Width of the minutes field: ``07.9`` (4) with one decimal, ``07`` (2) with none."""
    return 3 + decimals if decimals else 2


def format_dm(value_deg: float, *, decimals: int = 1, deg_width: int = 0, signed: bool = False,
              wrap360: bool = False) -> str:
    """``283°07.9′``; negative values get a minus sign (``−0°03.2′``).

    With `wrap360` (GHA, SHA, LHA: angles in [0, 360)) a value that rounds up to 360° shows as
    ``000°00.0′``, never ``360°00.0′``.
    """
    deg, minutes = _split_dm(value_deg, decimals)
    if wrap360 and deg >= 360:
        deg -= 360
    neg = float(value_deg) < 0 and (deg or minutes)
    sign = MINUS if neg else ("+" if signed else "")
    return f"{sign}{deg:0{deg_width}d}{DEG}{minutes:0{_min_width(decimals)}.{decimals}f}{MIN}"


def format_lat(lat_deg: float, decimals: int = 1) -> str:
    deg, minutes = _split_dm(lat_deg, decimals)
    hemi = "S" if float(lat_deg) < 0 and (deg or minutes) else "N"
    return f"{deg:02d}{DEG}{minutes:0{_min_width(decimals)}.{decimals}f}{MIN} {hemi}"


def format_lon(lon_deg: float, decimals: int = 1) -> str:
    lon = float(norm180(lon_deg)) if abs(float(lon_deg)) > 180 else float(lon_deg)
    deg, minutes = _split_dm(lon, decimals)
    hemi = "W" if lon < 0 and (deg or minutes) else "E"
    return f"{deg:03d}{DEG}{minutes:0{_min_width(decimals)}.{decimals}f}{MIN} {hemi}"


def format_arcmin(value_arcmin: float, decimals: int = 1) -> str:
    """A small signed correction in minutes of arc: ``−3.2′``, ``+14.8′``."""
    v = round(float(value_arcmin), decimals)
    sign = MINUS if v < 0 else "+"
    return f"{sign}{abs(v):.{decimals}f}{MIN}"


# ---------------------------------------------------------------- parsing

_NUM = r"\d+(?:\.\d*)?|\.\d+"
_DM_RE = re.compile(
    rf"^\s*(?P<sign>[+\-\u2212])?\s*(?P<deg>{_NUM})\s*(?:[°d:\s-]\s*(?P<min>{_NUM})\s*['′m]?)?\s*[°]?\s*$"
)
_HEMI_RE = re.compile(r"^\s*(?P<h1>[NSEWnsew])?\s*(?P<body>[^NSEWnsew]*?)\s*(?P<h2>[NSEWnsew])?\s*$")


def _parse_dm_parts(text: str, field: str, example: str) -> tuple[float, bool]:
    """(degrees, whether minutes were given) of ``34.205``, ``34 12.3`` or ``34°12.3′``."""
    if not isinstance(text, str):
        text = str(text)
    s = text.strip().replace("\u2019", "'").replace("\u00ba", "\u00b0")
    m = _DM_RE.match(s)
    if not s or not m:
        raise NavInputError(f"'{text}' is not an angle", field=field, example=example)
    deg = float(m.group("deg"))
    minutes = m.group("min")
    if minutes is not None:
        if "." in m.group("deg"):
            raise NavInputError(f"'{text}': degrees with a decimal point cannot take minutes too",
                                field=field, example=example)
        mval = float(minutes)
        if mval >= 60.0:
            raise NavInputError(f"'{text}': minutes must be below 60", field=field, example=example)
        deg += mval / 60.0
    if m.group("sign") in ("-", MINUS):
        deg = -deg
    if not math.isfinite(deg):
        raise NavInputError(f"'{text}' is not a finite angle", field=field, example=example)
    return deg, minutes is not None


def _parse_dm(text: str, field: str, example: str) -> float:
    """Decimal degrees (``34.205``) or degrees and decimal minutes (``34 12.3``, ``34°12.3′``)."""
    return _parse_dm_parts(text, field, example)[0]


def parse_angle(text: str, field: str = "angle", *, min_deg: float = 0.0, max_deg: float = 360.0,
                example: str = "34.205, 34 12.3 or 34°12.3'") -> float:
    """An angle in degrees, checked against [min_deg, max_deg]."""
    deg = _parse_dm(text, field, example)
    if not (min_deg <= deg <= max_deg):
        raise NavInputError(f"'{text}' is outside {min_deg:g}° to {max_deg:g}°", field=field,
                            example=example)
    return deg


def parse_bearing(text: str, field: str = "bearing") -> float:
    """A bearing, heading or Zn: degrees 0 to 360, returned in [0, 360)."""
    return float(norm360(parse_angle(text, field, min_deg=0.0, max_deg=360.0,
                                     example="058, 058.5 or 245")))


def parse_altitude(text: str, field: str = "hs", *, max_deg: float = 90.0) -> float:
    """A sextant altitude, −1° to 90° (a back sight is refused here). An artificial horizon's
    reading is the double altitude: its parser (:mod:`nav.fields`) passes ``max_deg=180``."""
    return parse_angle(text, field, min_deg=-1.0, max_deg=max_deg,
                       example="34.205, 34 12.3 or 34°12.3'")


def _both_forms(value_deg: float, pos: str, neg: str) -> str:
    """The two accepted spellings of a position value, e.g. ``35 10.1 N or 35.1683``."""
    width = 2 if pos == "N" else 3
    deg, minutes = _split_dm(value_deg, 1)
    dec = abs(value_deg)
    return (f"{deg:0{width}d} {minutes:04.1f} {pos} (or {neg}), or signed decimal degrees "
            f"{dec:.4f} ({MINUS}{dec:.4f} for {neg})")


def _parse_signed_hemi(text: str, field: str, pos: str, neg: str, limit: float, example: str,
                       kind: str | None = None) -> float:
    """A latitude or longitude (or, with `kind`, another value named E/W). Rules (one place for
    the CLI, the CSV files and the shell):

    - degrees and minutes must carry their hemisphere letter (``35 10.1 N``): without it a slip
      of a W or S turns into a position thousands of miles away, so it is refused (0° and 180°,
      which have no side, excepted);
    - signed decimal degrees (``35.1683``, ``-21.565``) are taken as north/east +;
    - a letter of the other axis (W in a latitude, N in a longitude), or a latitude beyond 90°,
      is refused with a message that says the latitude and longitude look swapped.
    """
    if not isinstance(text, str):
        text = str(text)
    s = text.strip()
    position = kind is None
    kind, other = kind or field_kind(pos), field_kind("E" if pos == "N" else "N")
    m = _HEMI_RE.match(s)
    if not s or not m:
        letters = [c for c in s.upper() if c in "NSEW"]
        swapped = position and letters and all(c not in (pos, neg) for c in letters)
        raise NavInputError(
            f"'{text}' names a {other} ({letters[0]}) in the {kind} field: are the latitude and "
            "longitude swapped?" if swapped else f"'{text}' is not a {kind}",
            field=field, example=example)
    h1, body, h2 = m.group("h1"), m.group("body"), m.group("h2")
    if h1 and h2:
        raise NavInputError(f"'{text}' names the hemisphere twice", field=field, example=example)
    hemi = (h1 or h2 or "").upper()
    if hemi and hemi not in (pos, neg):
        raise NavInputError(f"'{text}' names a {other} ({hemi}) in the {kind} field: are the "
                            f"latitude and longitude swapped? A {kind} takes {pos} or {neg}"
                            if position else f"'{text}': a {kind} takes {pos} or {neg}",
                            field=field, example=example)
    value, has_minutes = _parse_dm_parts(body, field, example)
    if hemi:
        if value < 0:
            raise NavInputError(f"'{text}': give either a sign or {pos}/{neg}, not both", field=field,
                                example=example)
        if hemi == neg:
            value = -value
    elif has_minutes and abs(value) not in (0.0, 180.0):   # the equator, 0° and 180° have no side
        raise NavInputError(f"'{text}' is in degrees and minutes without {pos} or {neg}: say which "
                            f"{'hemisphere' if position else 'side'}", field=field,
                            example=_both_forms(value, pos, neg) if position else example)
    if not (-limit <= value <= limit):
        hint = (": is this a longitude (latitude and longitude swapped?)"
                if position and pos == "N" and abs(value) <= 180.0 else "")
        raise NavInputError(f"'{text}' is outside {limit:g}° {neg} to {limit:g}° {pos}{hint}",
                            field=field, example=example)
    return value


def field_kind(pos: str) -> str:
    return "latitude" if pos == "N" else "longitude"


def parse_lat(text: str, field: str = "lat") -> float:
    """Latitude in signed degrees (north +) from ``41 12.5 N``, ``41°12.5′S``, ``-41.2083``."""
    return _parse_signed_hemi(text, field, "N", "S", 90.0, "41 12.5 N or signed decimal -41.2083")


def parse_lon(text: str, field: str = "lon") -> float:
    """Longitude in signed degrees (east +) from ``032 07.1 W``, ``32°07.1′E``, ``-32.118``."""
    return _parse_signed_hemi(text, field, "E", "W", 180.0, "032 07.1 W or signed decimal -32.118")


def parse_east_west(text: str, field: str = "variation") -> float:
    """A variation, deviation or compass error in signed degrees (east +): ``9 W``, ``3.5E``,
    ``2°30′ W``, ``-9``; at most 180°."""
    return _parse_signed_hemi(text, field, "E", "W", 180.0, "9 W, 3.5 E or -9 (east +)",
                              kind="value east or west")


_HEIGHT_RE = re.compile(rf"^\s*(?P<v>{_NUM})\s*(?P<u>m|metres?|meters?|ft|feet|foot|')?\s*$", re.I)


def parse_height_m(text: str, field: str = "eye_height_m", *, max_m: float = 100.0) -> float:
    """Height of eye in metres; ``2.5``, ``2.5 m``, ``8 ft`` (feet converted)."""
    s = str(text)
    m = _HEIGHT_RE.match(s)
    if not m:
        raise NavInputError(f"'{text}' is not a height", field=field, example="2.5, 2.5 m or 8 ft")
    value = float(m.group("v"))
    unit = (m.group("u") or "m").lower()
    if unit in ("ft", "feet", "foot", "'"):
        value *= FEET_TO_M
    if value > max_m:
        raise NavInputError(f"'{text}' is above {max_m:g} m: not a height of eye", field=field,
                            example="2.5, 2.5 m or 8 ft")
    return value


def parse_number(text: str, field: str, *, min_value: float | None = None,
                 max_value: float | None = None, example: str = "1.5") -> float:
    """A plain decimal number with optional bounds (index error, speed, temperature ...)."""
    s = str(text).strip().replace(MINUS, "-")
    try:
        value = float(s)
    except ValueError:
        raise NavInputError(f"'{text}' is not a number", field=field, example=example) from None
    if not math.isfinite(value):
        raise NavInputError(f"'{text}' is not a finite number", field=field, example=example)
    if min_value is not None and value < min_value or max_value is not None and value > max_value:
        lo = "-inf" if min_value is None else f"{min_value:g}"
        hi = "inf" if max_value is None else f"{max_value:g}"
        raise NavInputError(f"'{text}' is outside {lo} to {hi}", field=field, example=example)
    return value
