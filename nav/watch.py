"""The watch's error and daily rate, from comparisons with a reference time.

A comparison is the watch's reading against a reference instant (a time signal, GPS, a
reference clock): the error is the watch reading minus the reference, in seconds, + when the
watch is fast (as :func:`nav.timekeeping.parse_watch_error` has it). A watch's error drifts at a
nearly steady daily rate (+ when it gains); the trade keeps the error and rate in a book and
applies error + rate × elapsed days to every time the watch gave (common practice, no source).

From two or more comparisons the rate is fitted by least squares (error = e₀ + rate·days) and
the error at any instant follows. A rate that changes suddenly between successive comparisons
(by more than ``RATE_JUMP_S_PER_DAY``) is warned of: the watch was knocked, its battery is
failing, or a comparison was misread; until the cause is known the rate is doubtful.

Pure: no printing, no disk.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta
from typing import Sequence

import numpy as np

from .errors import NavInputError
from .units import SECONDS_PER_DAY

RATE_JUMP_S_PER_DAY = 1.0   # a good quartz watch keeps its rate within a fraction of this
                            # (common practice, no source)
MIN_SPAN_DAYS = 0.5         # comparisons closer than this give no rate worth applying
MAX_ERROR_S = 3600.0


@dataclass(frozen=True)
class Comparison:
    """The watch read ``watch_reading`` at the reference instant ``reference_utc``."""

    reference_utc: datetime
    error_s: float              # watch − reference, + fast
    source: str = "reference"   # "time signal", "GPS", "reference clock" ...


@dataclass(frozen=True)
class WatchRate:
    """error(t) = error_s + rate_s_per_day × (t − epoch) in days."""

    error_s: float
    rate_s_per_day: float
    epoch: datetime
    n_comparisons: int
    rate_sigma_s_per_day: float | None
    residuals_s: tuple[float, ...]
    warnings: tuple[str, ...]

    def error_at(self, utc: datetime) -> float:
        return self.error_s + self.rate_s_per_day * (utc - self.epoch).total_seconds() / SECONDS_PER_DAY


def comparison(watch_reading: datetime, reference_utc: datetime, source: str = "reference"):
    """A comparison from the watch's reading (aware, on UTC) and the reference instant."""
    for name, t in (("watch", watch_reading), ("reference", reference_utc)):
        if not isinstance(t, datetime) or t.tzinfo is None:
            raise NavInputError("a comparison needs aware UTC instants", field=name,
                                example="2026-06-14T12:00:03Z")
    err = (watch_reading - reference_utc).total_seconds()
    if abs(err) > MAX_ERROR_S:
        raise NavInputError(f"the watch differs from the reference by {err:+.0f} s: more than "
                            "an hour; is the zone or the date right?", field="watch",
                            example="watch 12:00:03 against the signal at 12:00:00")
    return Comparison(reference_utc=reference_utc, error_s=err, source=source)


def watch_rate(comparisons: Sequence[Comparison]) -> WatchRate:
    """Error and daily rate by least squares from two or more comparisons (see module doc)."""
    cs = sorted(comparisons, key=lambda c: c.reference_utc)
    if len(cs) < 2:
        raise NavInputError(f"a rate needs two or more comparisons ({len(cs)} logged)",
                            field="watch", example="compare the watch with a time signal daily")
    epoch = cs[-1].reference_utc
    days = np.array([(c.reference_utc - epoch).total_seconds() / SECONDS_PER_DAY for c in cs])
    err = np.array([c.error_s for c in cs])
    span = float(days.max() - days.min())
    if span < MIN_SPAN_DAYS:
        raise NavInputError(f"the comparisons span only {span * 24:.1f} h; a rate needs "
                            f"{MIN_SPAN_DAYS * 24:.0f} h or more", field="watch",
                            example="comparisons a day or more apart")
    a = np.column_stack([np.ones_like(days), days])
    coef, *_ = np.linalg.lstsq(a, err, rcond=None)
    res = err - a @ coef
    sigma = None
    if len(cs) > 2:
        s2 = float(res @ res) / (len(cs) - 2)
        sigma = math.sqrt(s2 * float(np.linalg.inv(a.T @ a)[1, 1]))
    warnings = []
    rates = np.diff(err) / np.diff(days)
    gaps = np.diff(days)
    for k in range(1, rates.size):
        if gaps[k] > 0 and gaps[k - 1] > 0 and abs(rates[k] - rates[k - 1]) > RATE_JUMP_S_PER_DAY:
            warnings.append(f"the rate changed from {rates[k - 1]:+.1f} to {rates[k]:+.1f} s/day "
                            f"between the comparisons of {cs[k].reference_utc:%Y-%m-%d %H:%M} "
                            "and the next: a knock, a failing battery or a misread comparison; "
                            "the rate is doubtful")
    return WatchRate(error_s=float(coef[0]), rate_s_per_day=float(coef[1]), epoch=epoch,
                     n_comparisons=len(cs), rate_sigma_s_per_day=sigma,
                     residuals_s=tuple(float(r) for r in res), warnings=tuple(warnings))


def error_with_rate(error_s: float, rate_s_per_day: float, error_epoch: datetime,
                    utc: datetime) -> float:
    """The batch file's rule: watch_error + rate × (sight − watch_error_date) in days."""
    return error_s + rate_s_per_day * (utc - error_epoch).total_seconds() / SECONDS_PER_DAY


def utc_from_watch(watch_utc_reading: datetime, error_s: float, rate_s_per_day: float,
                   error_epoch: datetime) -> tuple[datetime, float]:
    """(UTC, error applied) for a reading already on UTC (zone applied) with error and rate.

    The error is taken at the reading itself (the rate is seconds a day: the difference from
    taking it at the true instant is below a microsecond)."""
    e = error_with_rate(error_s, rate_s_per_day, error_epoch, watch_utc_reading)
    return watch_utc_reading - timedelta(seconds=e), e
