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
from datetime import datetime, timedelta, timezone

import numpy as np

from .errors import NavInputError

UTC = timezone.utc
ISO_EXAMPLE = "2026-03-20T18:42:10Z or 2026-03-20T15:42:10-03:00"

_ISO_RE = re.compile(
    r"^\s*(?P<date>\d{4}-\d{2}-\d{2})[T ](?P<h>\d{2}):(?P<m>\d{2})(?::(?P<s>\d{2}(?:\.\d+)?))?"
    r"\s*(?P<zone>Z|UTC|[+\-\u2212]\d{2}(?::?\d{2})?)?\s*$",
    re.I,
)


def parse_utc(text: str, field: str = "utc") -> datetime:
    """An ISO 8601 instant with ``Z`` or an offset; a time without a zone is refused."""
    s = str(text).strip()
    m = _ISO_RE.match(s)
    if not m:
        raise NavInputError(f"'{text}' is not an ISO 8601 time", field=field, example=ISO_EXAMPLE)
    if not m.group("zone"):
        raise NavInputError(f"'{text}' has no time zone; add Z for UTC or an offset such as -03:00",
                            field=field, example=ISO_EXAMPLE)
    try:
        date = datetime.strptime(m.group("date"), "%Y-%m-%d")
    except ValueError:
        raise NavInputError(f"'{text}' is not a real calendar date", field=field,
                            example=ISO_EXAMPLE) from None
    hour, minute = int(m.group("h")), int(m.group("m"))
    sec = float(m.group("s") or 0.0)
    if hour > 23 or minute > 59 or sec >= 60.0:
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
    micro = int(round((sec - whole) * 1e6))
    local = date.replace(hour=hour, minute=minute, second=whole) + timedelta(microseconds=micro)
    return (local - offset).replace(tzinfo=UTC)


def format_utc(t: datetime) -> str:
    """ISO 8601 in UTC to the second (rounded), with ``Z``: ``2026-03-20T18:42:10Z``."""
    t = t.astimezone(UTC) + timedelta(microseconds=500_000)
    return t.strftime("%Y-%m-%dT%H:%M:%SZ")


def format_hms(t: datetime) -> str:
    """Time of day for a human surface: ``18:42:10 UTC``."""
    t = t.astimezone(UTC) + timedelta(microseconds=500_000)
    return t.strftime("%H:%M:%S") + " UTC"


def format_hm(t: datetime) -> str:
    """Time of day to the minute (rounded), for labels: ``18:42``."""
    t = t.astimezone(UTC) + timedelta(seconds=30)
    return t.strftime("%H:%M")


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


def parse_zone_description(text: str, field: str = "zone") -> timedelta:
    """Zone description as the trade writes it (UTC = ZT + ZD): ``+3``, ``-5``, ``+5:30``, ``0``."""
    m = _ZD_RE.match(str(text))
    if not m:
        raise NavInputError(f"'{text}' is not a zone description", field=field,
                            example="+3 (west of Greenwich) or -2 (east)")
    hours, minutes = int(m.group("h")), int(m.group("m") or 0)
    if minutes > 59 or hours * 60 + minutes > 14 * 60:
        raise NavInputError(f"'{text}' is outside -14 to +14 hours", field=field, example="+3")
    zd = timedelta(hours=hours, minutes=minutes)
    return -zd if m.group("sign") in ("-", "\u2212") else zd


# No bare "s" for slow: "12s" would read as 12 seconds slow to one navigator and 12 seconds to another.
_WATCH_RE = re.compile(r"^\s*(?P<v>\d+(?:\.\d*)?)\s*s?\s*(?P<dir>fast|slow|f)\s*$", re.I)


def parse_watch_error(text: str, field: str = "watch_error") -> timedelta:
    """Watch error as a navigator states it: ``12 fast``, ``3.5s slow``, or signed seconds ``+12``.

    Returned as the amount the watch is *fast* (positive) — subtract it from a watch reading.
    """
    s = str(text).strip()
    m = _WATCH_RE.match(s)
    if m:
        seconds = float(m.group("v"))
        fast = m.group("dir").lower() in ("fast", "f")
        return timedelta(seconds=seconds if fast else -seconds)
    try:
        seconds = float(s.replace("\u2212", "-"))
        if not math.isfinite(seconds):
            raise ValueError(text)
        return timedelta(seconds=seconds)
    except (ValueError, OverflowError):
        raise NavInputError(f"'{text}' is not a watch error", field=field,
                            example="12 fast, 3.5 slow or +12 (seconds fast)") from None


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
    zt = watch_reading.replace(tzinfo=None) - watch_fast
    utc = (zt + zone_description).replace(tzinfo=UTC)
    return WatchTime(utc=utc, zone_time=zt, zone_description=zone_description,
                     watch_fast=watch_fast)


def parse_naive_time(text: str, field: str = "time") -> datetime:
    """A date and time with no zone (a watch reading): ``2026-03-20 15:42:10``."""
    s = str(text).strip()
    for fmt in ("%Y-%m-%dT%H:%M:%S", "%Y-%m-%d %H:%M:%S", "%Y-%m-%dT%H:%M", "%Y-%m-%d %H:%M"):
        try:
            return datetime.strptime(s, fmt)
        except ValueError:
            continue
    raise NavInputError(f"'{text}' is not a date and time", field=field,
                        example="2026-03-20 15:42:10")


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
