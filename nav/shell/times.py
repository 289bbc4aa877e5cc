"""TIME in shell lines, and how it becomes UTC (the shell shows how, every time).

  ``at 2026-06-14T20:55:00Z``   ISO 8601 with its zone (``Z`` or an offset such as ``-03:00``);
  ``at 20:55:00``               a UTC time of day, on the date of the latest entry with a time
                                (else today's UTC date) -- the shell says which date it used;
  ``zt [DATE] HH:MM[:SS]``      zone time read on the watch: ZT = watch − watch error (a fast
                                watch is subtracted), then UTC = ZT + ZD (the trade's rule), with
                                ZD and watch error from ``set zone`` and ``set watch``.

The parsing is :func:`nav.timekeeping.parse_utc` / :func:`nav.fields.parse_sight_utc` (a sight
must fall inside the ephemeris), :func:`nav.timekeeping.parse_naive_time` and
:func:`nav.timekeeping.zone_time_to_utc`: a time of day is completed with its date and handed to
them.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import date, datetime, timedelta
from typing import Mapping

from ..errors import NavInputError, OutOfRangeError
from ..fields import parse_sight_utc
from ..timekeeping import (format_date_hms, format_zone_description, parse_naive_time, parse_utc, round_to_second,
                           zone_time_to_utc)

_TIME_OF_DAY = re.compile(r"^(?P<h>\d{1,2}):(?P<m>\d{2})(?::(?P<s>\d{2}(?:\.\d+)?))?$")
TIME_EXAMPLE = "at 20:55:00, at 2026-06-14T20:55:00Z or zt 17:55:12"


# ---------------------------------------------------------------- time

@dataclass(frozen=True)
class TimeRead:
    """A time as the user gave it, as UTC, and a line that says how one became the other."""

    utc: datetime
    source: str                 # "utc", "watch" or "now"
    text: str
    explain: str
    zone_description_h: float | None = None
    watch_error_s: float | None = None
    watch_reading: datetime | None = None

    def entry_fields(self) -> dict:
        """The time fields of a sight entry (a watch time keeps its ZD and watch error)."""
        out = {"utc": self.utc, "time_source": "watch" if self.source == "watch" else "utc",
               "time_text": self.text, "zone_description": None, "zone_description_h": None,
               "watch_error": None, "watch_error_s": None}
        if self.source == "watch":
            out.update(zone_description=format_zone_description(self.zone_description_h),
                       zone_description_h=self.zone_description_h,
                       watch_error=watch_text(self.watch_error_s),
                       watch_error_s=self.watch_error_s)
        return out


def watch_text(seconds: float) -> str:
    """``12 s fast``, ``3 s slow`` or ``0`` (parse_watch_error reads it back)."""
    if not seconds:
        return "0"
    return f"{abs(seconds):g} s {'fast' if seconds > 0 else 'slow'}"


def zone_text(hours: float) -> str:
    """``+3 h``, ``-5:30 h``, ``0 (UTC)``: the one notation of :mod:`nav.timekeeping`."""
    return f"{format_zone_description(hours)} h" if hours else "0 (UTC)"


def _default_date(ctx, zone_h: float = 0.0, hms: str | None = None) -> tuple[date, str]:
    """The date for a time of day: the one that puts it nearest the latest entry with a time
    (so 00:03 typed after a sight at 23:58 falls on the next day), else today's (UTC, or the
    zone date for a zone time)."""
    ref, eid = ctx.reference()
    shift = timedelta(hours=zone_h)
    if ref is not None:
        local_ref = (ref - shift).replace(tzinfo=None)
        day = local_ref.date()
        if hms is not None:
            h, m, sec = (int(x) for x in hms.split(":"))
            if h < 24 and m < 60 and sec < 60:
                clock = timedelta(hours=h, minutes=m, seconds=sec)
                day = min((day + timedelta(days=k) for k in (-1, 0, 1)),
                          key=lambda d: abs(datetime.combine(d, datetime.min.time()) + clock - local_ref))
        return day, f"nearest the latest entry with a time, {eid}"
    word = "UTC" if not zone_h else "zone"
    return (ctx.now() - shift).date(), f"today's {word} date; no entry has a time yet"


def _time_of_day(m) -> str:
    return f"{int(m.group('h')):02d}:{m.group('m')}:{m.group('s') or '00'}"


def parse_at(text: str, ctx, fld: str = "at", *, sight: bool = False) -> TimeRead:
    """``at TIME``: ISO 8601 with its zone, or a UTC time of day on the default date."""
    check = parse_sight_utc if sight else parse_utc
    m = _TIME_OF_DAY.match(text.strip())
    if not m:
        try:
            t = check(text, fld)
        except OutOfRangeError:
            raise
        except NavInputError as err:
            if not err.reason.endswith("is not an ISO 8601 time"):
                raise
            # The shell takes a time of day too: the example says so.
            raise NavInputError(err.reason + ", nor a time of day", field=fld,
                                example="21:15:48 (UTC), or 2026-06-20T21:15:48Z") from None
        note = "" if text.strip().upper().endswith(("Z", "UTC")) else f" (given as {text})"
        return TimeRead(t, "utc", text, f"UTC {format_date_hms(t)}{note}")
    day, why = _default_date(ctx, hms=_time_of_day(m))
    try:
        t = check(f"{day:%Y-%m-%d}T{_time_of_day(m)}Z", fld)
    except OutOfRangeError:
        raise
    except NavInputError:
        raise NavInputError(f"'{text}' is not a real time of day", field=fld,
                            example="20:55:00") from None
    return TimeRead(t, "utc", text, f"UTC {format_date_hms(t)} (date {day:%Y-%m-%d}: {why})")


def parse_zt(text: str, ctx, fld: str = "zt", *, sight: bool = False) -> TimeRead:
    """``zt [DATE] HH:MM[:SS]``: a watch reading on zone time -> UTC (UTC = ZT + ZD)."""
    s = ctx.settings
    zd_h, fast_s = float(s.zone_description_h), float(s.watch_error_s)
    m = _TIME_OF_DAY.match(text.strip())
    why = ""
    if m:
        day, why = _default_date(ctx, zd_h, hms=_time_of_day(m))
        try:
            reading = parse_naive_time(f"{day:%Y-%m-%d} {_time_of_day(m)}", fld)
        except NavInputError:
            raise NavInputError(f"'{text}' is not a real time of day (whole seconds)", field=fld,
                                example="17:55:12") from None
        why = f" (date {day:%Y-%m-%d}: {why})"
    else:
        reading = parse_naive_time(text, fld)
    wt = zone_time_to_utc(reading, timedelta(hours=zd_h), timedelta(seconds=fast_s))
    rated = _rated_error(ctx, wt.utc)         # issue 10: the watch's rate, when one is logged
    if rated is not None:
        fast_s = round(rated[0], 2)
        wt = zone_time_to_utc(reading, timedelta(hours=zd_h), timedelta(seconds=fast_s))
    if sight:
        parse_sight_utc(wt.utc.strftime("%Y-%m-%dT%H:%M:%S.%fZ"), fld)  # inside the ephemeris
    watch = ("watch error none" if not fast_s else
             f"watch {abs(fast_s):g} s {'fast, subtracted' if fast_s > 0 else 'slow, added'}")
    if rated is not None:
        watch += f" ({rated[1]})"
    zt = round_to_second(wt.zone_time)
    explain = (f"watch {reading:%Y-%m-%d %H:%M:%S}{why}, {watch}: ZT {zt:%H:%M:%S}; "
               f"ZD {zone_text(zd_h)}, UTC = ZT + ZD = {format_date_hms(wt.utc)}")
    return TimeRead(wt.utc, "watch", f"{reading:%Y-%m-%d %H:%M:%S}", explain,
                    zone_description_h=zd_h, watch_error_s=fast_s, watch_reading=reading)


def _rated_error(ctx, utc_guess):
    try:
        from .checks_cmds import watch_error_now

        return watch_error_now(ctx, utc_guess)
    except AttributeError:          # a context without a passage (a check of the line only)
        return None


def parse_time_options(options: Mapping[str, str], ctx, *, sight: bool = False,
                       required: bool = False) -> TimeRead | None:
    if "at" in options and "zt" in options:
        raise NavInputError("give the time once: 'at' (UTC) or 'zt' (zone time), not both",
                            field="at", example=TIME_EXAMPLE)
    if "at" in options:
        return parse_at(options["at"], ctx, sight=sight)
    if "zt" in options:
        return parse_zt(options["zt"], ctx, sight=sight)
    if required:
        raise NavInputError("a sight needs its time", field="at", example=TIME_EXAMPLE)
    return None


def passage_time(ctx) -> TimeRead:
    """The time a question without a time is answered for (`where`, the toolbar): now while the
    log is live, else the time of its latest entry, saying which (see ShellState.passage_now)."""
    t, eid = ctx.passage_now()
    if eid is None:
        return TimeRead(t, "now", "now", f"UTC {format_date_hms(t)} (now: no time was given)")
    clock = ctx.now()
    days = (clock - t).total_seconds() / 86_400.0
    gap = (f"{abs(days):.1f} d" if abs(days) >= 2 else f"{abs(days) * 24:.1f} h") + \
        (" later" if days > 0 else " earlier")
    return TimeRead(t, "latest", "latest", (
        f"UTC {format_date_hms(t)} (the time of the latest entry, {eid}, not the clock: the "
        f"clock reads {format_date_hms(clock)} UTC, {gap}, so the passage is taken as entered "
        "after the fact)"))


def now_time(ctx) -> TimeRead:
    """Now, for an entry given without a time; in a log entered after the fact (its latest entry
    far from the clock) the explanation says so, as the entry may belong to the passage."""
    t = ctx.now()
    explain = f"UTC {format_date_hms(t)} (now: no time was given)"
    latest = getattr(ctx, "passage_now", None)
    if latest is not None:
        ref, eid = latest()
        if eid is not None:
            explain += (f"; caution: the latest entry, {eid}, is at {format_date_hms(ref)} UTC: "
                        "give at TIME if this belongs to the passage (strike it and enter it "
                        "again)")
    return TimeRead(t, "now", "now", explain)
