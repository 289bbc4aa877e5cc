"""Time: UTC instants, zone time and watch error, and the one parser for each.

Conventions:
- Instants inside nav are timezone-aware ``datetime`` in UTC (scalars) or numpy ``datetime64[us]``
  arrays read as UTC; the almanac turns them into skyfield ``Time`` through :mod:`nav.ephemeris`.
- Zone description (ZD) follows the trade's rule: UTC = zone time + ZD, so a vessel in west
  longitude keeps a positive ZD (ZD +3 for 45° W). A zone of ``+03:00`` in ISO 8601 is the
  opposite sign (local = UTC + 3 h): both spellings are accepted and named for what they are.
- Watch error: a watch that is *fast* reads ahead of the true time, so the error is subtracted.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from datetime import date, datetime, timedelta, timezone
from decimal import Decimal

import numpy as np

from .errors import NavInputError, OutOfRangeError

UTC = timezone.utc
ISO_EXAMPLE = "2026-03-20T18:42:10Z or 2026-03-20T15:42:10-03:00"
RANGE_TEXT = "1900-01-01 to 2050-12-31 (UTC)"   # the ephemeris' supported range (nav.ephemeris)

_ISO_RE = re.compile(
    r"^\s*(?P<date>(?P<year>\d{4,})-\d{2}-\d{2})[T ](?P<h>\d{2}):(?P<m>\d{2})"
    r"(?::(?P<s>\d{2}(?:\.\d+)?))?"
    r"\s*(?P<zone>Z|UTC|[+\-\u2212]\d{2}(?::?\d{2})?)?\s*$",
    re.I,
)


def out_of_range(text: str, field: str) -> OutOfRangeError:
    """The range error for a time whose year no calendar arithmetic here can hold (0000, 9999
    with an offset, 10000 ...): the same words as :func:`nav.ephemeris.check_range`."""
    return OutOfRangeError(f"'{text}' is outside the supported range {RANGE_TEXT}", field=field,
                           example="2026-03-20T18:42:10Z")


def _check_year(year_text: str, text: str, field: str) -> None:
    if not 1 <= int(year_text) <= 9999:
        raise out_of_range(text, field)


def parse_utc(text: str, field: str = "utc") -> datetime:
    """An ISO 8601 instant with ``Z`` or an offset; a time without a zone is refused."""
    s = str(text).strip()
    m = _ISO_RE.match(s)
    if not m:
        raise NavInputError(f"'{text}' is not an ISO 8601 time", field=field, example=ISO_EXAMPLE)
    if not m.group("zone"):
        raise NavInputError(f"'{text}' has no time zone; add Z for UTC or an offset such as -03:00",
                            field=field, example=ISO_EXAMPLE)
    _check_year(m.group("year"), s, field)
    try:
        date = datetime.strptime(m.group("date"), "%Y-%m-%d")
    except ValueError:
        raise NavInputError(f"'{text}' is not a real calendar date", field=field,
                            example=ISO_EXAMPLE) from None
    hour, minute = int(m.group("h")), int(m.group("m"))
    sec = Decimal(m.group("s") or 0)      # exact: 59.99999999999 stays below 60
    if hour > 23 or minute > 59 or sec >= 60:
        raise NavInputError(f"'{text}' is not a real time of day", field=field, example=ISO_EXAMPLE)
    zone = m.group("zone").upper().replace("\u2212", "-")
    if zone in ("Z", "UTC"):
        offset = timedelta(0)
    else:
        digits = zone[1:].replace(":", "")
        oh, om = int(digits[:2]), int(digits[2:] or 0)
        if oh > 14 or om > 59:
            raise NavInputError(f"'{text}' has an impossible UTC offset", field=field,
                                example=ISO_EXAMPLE)
        offset = timedelta(hours=oh, minutes=om) * (-1 if zone[0] == "-" else 1)
    whole = int(sec)
    micro = int(((sec - whole) * 1_000_000).to_integral_value())
    try:
        local = date.replace(hour=hour, minute=minute, second=whole) + timedelta(microseconds=micro)
        return (local - offset).replace(tzinfo=UTC)
    except OverflowError:                # 0001-01-01T00:00+01:00, 9999-12-31T23:59:59.9999999Z
        raise out_of_range(s, field) from None


def round_to_second(t: datetime) -> datetime:
    """The one rounding rule of a time shown anywhere (screens, files, sheets): to the nearest
    whole second, half a second up (common practice, no source); the time keeps its zone. A
    label to the minute rounds this second again, half a minute up, so a sheet never disagrees
    with the seconds a screen shows for the same sight."""
    return (t + timedelta(microseconds=500_000)).replace(microsecond=0)


def _utc_second(t: datetime) -> datetime:
    return round_to_second(t.astimezone(UTC) if t.tzinfo is not None else t)


def format_utc(t: datetime) -> str:
    """ISO 8601 in UTC to the second (rounded), with ``Z``: ``2026-03-20T18:42:10Z``."""
    return _utc_second(t).strftime("%Y-%m-%dT%H:%M:%SZ")


def format_date_hms(t: datetime) -> str:
    """Date and time of day for a human surface (rounded): ``2026-03-20 18:42:10``."""
    return _utc_second(t).strftime("%Y-%m-%d %H:%M:%S")


def format_hms(t: datetime) -> str:
    """Time of day for a human surface: ``18:42:10 UTC``."""
    t = _utc_second(t)
    return f"{t.hour:02d}:{t.minute:02d}:{t.second:02d} UTC"


def format_hm(t: datetime) -> str:
    """Time of day to the minute (rounded from the second shown), for labels: ``18:42``."""
    return (_utc_second(t) + timedelta(seconds=30)).strftime("%H:%M")


def format_date_hm(t: datetime) -> str:
    """Date and time to the minute (rounded from the second shown): ``2026-03-20 18:42``."""
    return (_utc_second(t) + timedelta(seconds=30)).strftime("%Y-%m-%d %H:%M")


_DURATION_RE = re.compile(r"^\s*(?P<v>\d+(?:\.\d*)?)\s*(?P<u>s|sec|m|min|h|hr|d|day|days)?\s*$", re.I)
_UNIT_S = {"s": 1, "sec": 1, "m": 60, "min": 60, "h": 3600, "hr": 3600, "d": 86400, "day": 86400,
           "days": 86400}


def parse_duration(text: str, field: str = "step") -> timedelta:
    """A positive duration: ``30s``, ``10min``, ``1h``, ``1d`` (a bare number is minutes)."""
    m = _DURATION_RE.match(str(text))
    if not m:
        raise NavInputError(f"'{text}' is not a duration", field=field, example="30s, 10min, 1h, 1d")
    seconds = float(m.group("v")) * _UNIT_S[(m.group("u") or "min").lower()]
    try:
        step = timedelta(seconds=seconds)
    except OverflowError:
        raise NavInputError(f"'{text}' is too long", field=field, example="1h") from None
    if step <= timedelta(0):  # zero, or below the microsecond that nav keeps
        raise NavInputError(f"'{text}' must be longer than zero", field=field, example="1h")
    return step


_ZD_RE = re.compile(r"^\s*(?P<sign>[+\-\u2212])?\s*(?P<h>\d{1,2})(?::(?P<m>\d{2}))?\s*$")
_ISO_LOOK = re.compile(r"^\s*(?:UTC|GMT|Z)?\s*(?P<sign>[+\-\u2212])\s*(?P<h>\d{1,2})(?::?(?P<m>\d{2}))?\s*$",
                       re.I)
ZD_EXAMPLE = "+3 (west of Greenwich), -2 (east) or -5:30"
# Zone descriptions off the whole hour that are kept somewhere today (from the UTC offsets in
# civil use, from memory: Newfoundland −3:30 and −2:30 in summer, Marquesas −9:30, Iran +3:30,
# Afghanistan +4:30, India and Sri Lanka +5:30, Nepal +5:45, Myanmar and Cocos +6:30, Eucla +8:45,
# central Australia +9:30 and +10:30 in summer). ZD is the offset's negative: UTC = ZT + ZD.
FRACTIONAL_ZD_MIN = frozenset({+210, +150, +570, -210, -270, -330, -345, -390, -525, -570, -630})
MAX_ZD_H = 12


def format_zone_description(zd: timedelta | float) -> str:
    """The one notation of a zone description: ``+3``, ``-2``, ``0``, ``-5:30`` (ASCII signs, so
    that :func:`parse_zone_description` reads it back)."""
    minutes = round((zd.total_seconds() if isinstance(zd, timedelta) else float(zd) * 3600.0) / 60)
    if minutes == 0:
        return "0"
    sign = "+" if minutes > 0 else "-"
    h, m = divmod(abs(minutes), 60)
    return f"{sign}{h}" + (f":{m:02d}" if m else "")


def _iso_note(text: str, sign: str, h: int, m: int) -> str:
    """What an ISO-looking offset would be as a zone description (the opposite sign)."""
    iso = timedelta(hours=h, minutes=m) * (-1 if sign in ("-", "\u2212") else 1)
    return (f"'{text}' looks like an ISO 8601 offset, whose sign is the opposite of the trade's "
            f"zone description (UTC = ZT + ZD): as an offset it is ZD "
            f"{format_zone_description(-iso)}; as a zone description, type "
            f"{format_zone_description(iso)} (no leading zero, no :00)")


def parse_zone_description(text: str, field: str = "zone") -> timedelta:
    """Zone description as the trade writes it (UTC = ZT + ZD): ``+3``, ``-5``, ``0``, ``-5:30``.

    Whole hours from −12 to +12, and the half and three-quarter hours kept today
    (:data:`FRACTIONAL_ZD_MIN`). Something shaped like an ISO 8601 offset (``+03:00``,
    ``-0530``, ``UTC+3``) is refused with the trade's sign rule spelt out, since the two
    notations have opposite signs and a silent guess would put every time out by twice the zone.
    """
    s = str(text).strip()
    m = _ZD_RE.match(s)
    iso = _ISO_LOOK.match(s)
    two_digit = iso is not None and len(iso.group("h")) == 2
    if iso and (not m or s[:1].isalpha() or two_digit and iso.group("h").startswith("0")
                or two_digit and iso.group("m") == "00"):
        raise NavInputError(_iso_note(s, iso.group("sign"), int(iso.group("h")),
                                      int(iso.group("m") or 0)), field=field, example=ZD_EXAMPLE)
    if not m:
        hint = ""
        try:
            hours = float(s.replace("\u2212", "-"))
            if math.isfinite(hours) and abs(hours) <= 24:
                hint = f": write {format_zone_description(hours)}"
        except ValueError:
            pass
        raise NavInputError(f"'{text}' is not a zone description{hint}", field=field,
                            example=ZD_EXAMPLE)
    hours, minutes = int(m.group("h")), int(m.group("m") or 0)
    sign = -1 if m.group("sign") in ("-", "\u2212") else 1
    total = sign * (hours * 60 + minutes)
    if minutes > 59 or abs(total) > MAX_ZD_H * 60:
        raise NavInputError(f"'{text}' is outside -12 to +12 hours", field=field, example=ZD_EXAMPLE)
    if minutes and total not in FRACTIONAL_ZD_MIN:
        kept = ", ".join(format_zone_description(x / 60) for x in sorted(FRACTIONAL_ZD_MIN))
        note = ""
        if -total in FRACTIONAL_ZD_MIN:
            note = (f"; if it is an ISO 8601 offset (local = UTC + offset), the ZD is "
                    f"{format_zone_description(-total / 60)}, since UTC = ZT + ZD")
        raise NavInputError(f"'{text}' is not a zone kept anywhere: off the whole hour, the zones "
                            f"in use are {kept}{note}", field=field, example=ZD_EXAMPLE)
    return timedelta(minutes=total)


# No bare "s" for slow: "12s" would read as 12 seconds slow to one navigator and 12 seconds to another.
# Minutes and seconds as the trade says them: "17 s slow", "1 min 5 s fast", "1m 5s fast", "12 fast".
_WATCH_RE = re.compile(
    r"^\s*(?:(?P<min>\d+)\s*(?:min|mins|m)(?![a-z])\s*)?(?:(?P<v>\d+(?:\.\d*)?)\s*(?:sec|s)?\s*)?"
    r"(?P<dir>fast|slow|f)\s*$", re.I)
WATCH_ERROR_EXAMPLE = "17 s slow, 1 min 5 s fast, 12 fast or +12 (seconds fast)"


def parse_watch_error(text: str, field: str = "watch_error") -> timedelta:
    """Watch error as a navigator states it: ``12 fast``, ``17 s slow``, ``1 min 5 s fast``, or
    signed seconds ``+12`` (+ fast).

    Returned as the amount the watch is *fast* (positive) — subtract it from a watch reading.
    """
    s = str(text).strip()
    m = _WATCH_RE.match(s)
    if m and (m.group("min") or m.group("v")):
        seconds = float(m.group("v") or 0.0) + 60.0 * int(m.group("min") or 0)
        if m.group("min") and float(m.group("v") or 0.0) >= 60.0:
            raise NavInputError(f"'{text}' has 60 or more seconds after its minutes", field=field,
                                example=WATCH_ERROR_EXAMPLE)
        fast = m.group("dir").lower() in ("fast", "f")
        return timedelta(seconds=seconds if fast else -seconds)
    try:
        seconds = float(s.replace("\u2212", "-"))
        if not math.isfinite(seconds):
            raise ValueError(text)
        return timedelta(seconds=seconds)
    except (ValueError, OverflowError):
        raise NavInputError(f"'{text}' is not a watch error", field=field,
                            example=WATCH_ERROR_EXAMPLE) from None


def format_watch_error(fast_s: float) -> str:
    """The trade's words for a watch error in seconds (+ fast): ``1 min 5 s fast``, ``17 s slow``."""
    word = "fast" if fast_s >= 0 else "slow"
    total = abs(fast_s)
    minutes, seconds = divmod(total, 60.0)
    sec = f"{seconds:.0f} s" if seconds == round(seconds) else f"{seconds:.1f} s"
    return (f"{int(minutes)} min {sec} {word}" if minutes else f"{sec} {word}")


@dataclass(frozen=True)
class WatchTime:
    """A time as read on deck, with how it became UTC (shown to the user)."""

    utc: datetime
    zone_time: datetime | None
    zone_description: timedelta | None
    watch_fast: timedelta


def zone_time_to_utc(watch_reading: datetime, zone_description: timedelta,
                     watch_fast: timedelta = timedelta(0)) -> WatchTime:
    """UTC from a naive watch reading kept on zone time: UTC = (watch − fast error) + ZD."""
    try:
        zt = watch_reading.replace(tzinfo=None) - watch_fast
        utc = (zt + zone_description).replace(tzinfo=UTC)
    except OverflowError:
        raise out_of_range(f"{watch_reading:%Y-%m-%d %H:%M:%S}", "zt") from None
    return WatchTime(utc=utc, zone_time=zt, zone_description=zone_description,
                     watch_fast=watch_fast)


def parse_naive_time(text: str, field: str = "time") -> datetime:
    """A date and time with no zone (a watch reading): ``2026-03-20 15:42:10``."""
    s = str(text).strip()
    year = re.match(r"^(\d{4,})-\d{2}-\d{2}[T ]", s)
    if year:
        _check_year(year.group(1), s, field)
    for fmt in ("%Y-%m-%dT%H:%M:%S", "%Y-%m-%d %H:%M:%S", "%Y-%m-%dT%H:%M", "%Y-%m-%d %H:%M"):
        try:
            return datetime.strptime(s, fmt)
        except ValueError:
            continue
    raise NavInputError(f"'{text}' is not a date and time", field=field,
                        example="2026-03-20 15:42:10")


_DATE_RE = re.compile(r"^\s*(\d{4})-(\d{2})-(\d{2})\s*$")
_CLOCK_RE = re.compile(r"^\s*(\d{1,2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?\s*$")


def parse_ship_date(text: str, field: str = "date") -> date:
    """A calendar date as the ship keeps it (zone date): ``2026-03-20``."""
    m = _DATE_RE.match(str(text))
    try:
        if not m:
            raise ValueError(text)
        return date(int(m.group(1)), int(m.group(2)), int(m.group(3)))
    except ValueError:
        raise NavInputError(f"'{text}' is not a date", field=field, example="2026-03-20") from None


def parse_clock_time(text: str, field: str = "watch_time") -> timedelta:
    """A time of day as read on a watch, ``HH:MM:SS`` (or ``HH:MM``), as time since midnight."""
    m = _CLOCK_RE.match(str(text))
    if not m:
        raise NavInputError(f"'{text}' is not a time of day", field=field, example="15:42:10")
    h, mi, sec = int(m.group(1)), int(m.group(2)), float(m.group(3) or 0.0)
    if h > 23 or mi > 59 or sec >= 60.0:
        raise NavInputError(f"'{text}' is not a real time of day", field=field, example="15:42:10")
    return timedelta(hours=h, minutes=mi, seconds=sec)


def time_range(start: datetime, stop: datetime, step: timedelta, *, max_rows: int) -> np.ndarray:
    """Instants from start to stop inclusive as ``datetime64[us]`` (UTC), refusing huge tables."""
    if stop < start:
        raise NavInputError("--from is after --to", field="from",
                            example="--from 2026-03-20T00:00Z --to 2026-03-21T00:00Z")
    n = int((stop - start) / step) + 1
    if n > max_rows:
        raise NavInputError(f"that table would have {n:,} rows; the limit is {max_rows:,}",
                            field="step", example="a larger --step or a shorter span")
    base = np.datetime64(start.astimezone(UTC).replace(tzinfo=None), "us")
    return base + np.arange(n) * np.timedelta64(int(step.total_seconds() * 1e6), "us")


def to_datetime64(t) -> np.ndarray:
    """Aware datetime(s) or datetime64 -> ``datetime64[us]`` read as UTC."""
    if isinstance(t, datetime):
        if t.tzinfo is None:
            raise NavInputError("an instant without a time zone", field="utc", example=ISO_EXAMPLE)
        return np.datetime64(t.astimezone(UTC).replace(tzinfo=None), "us")
    arr = np.asarray(t)
    if arr.dtype.kind == "M":
        return arr.astype("datetime64[us]")
    return np.array([to_datetime64(x) for x in arr.ravel()]).reshape(arr.shape)


def from_datetime64(t64) -> datetime:
    """One ``datetime64`` (UTC) -> aware datetime."""
    us = np.datetime64(t64, "us").astype(np.int64)
    return datetime(1970, 1, 1, tzinfo=UTC) + timedelta(microseconds=int(us))


_ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def parse_date_or_utc(text: str, field: str = "watch_error_date") -> datetime:
    """An ISO date (taken as 00:00 UTC that day) or an ISO 8601 instant with its zone: when a
    watch error was measured (issue 10's ``watch_error_date``)."""
    s = str(text).strip()
    if _ISO_DATE.match(s):
        try:
            return datetime.strptime(s, "%Y-%m-%d").replace(tzinfo=UTC)
        except ValueError:
            raise NavInputError(f"'{text}' is not a real date", field=field,
                                example="2026-06-01 or 2026-06-01T12:00:00Z") from None
    return parse_utc(s, field)
