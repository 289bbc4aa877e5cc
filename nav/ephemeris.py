"""The one place that loads data: the DE421 ephemeris and the time scale, offline, once.

- DE421 (JPL, Folkner et al. 2008) is the file that the ``skyfield-data`` package ships. We open it
  by path; we do not call ``skyfield_data.get_skyfield_data_path()``, because that also checks the
  expiry date of an Earth-orientation file (``finals2000A.all``) that nav never reads, and would warn
  a user about data we do not use.
- UT1−UTC comes from ``nav/data/ut1_utc.csv``: the IERS Bulletin A table (measured values and
  about a year of predictions), rebuilt by ``tools/build_ut1_table.py`` from the registry package
  ``astropy-iers-data`` — newer than the table frozen inside skyfield. Leap seconds follow from its
  jumps; outside the table skyfield's long-term ΔT model applies. No download, ever.
- Supported instants: 1900-01-01T00:00Z to 2050-12-31T23:59:59Z, inside DE421's coverage
  (1899-07-29 to 2053-10-09), so that light-time iterations never fall off the file's ends.
"""

from __future__ import annotations

import atexit
import functools
import os
from datetime import datetime

import numpy as np

from .errors import OutOfRangeError
from .timekeeping import RANGE_TEXT, UTC, to_datetime64

FIRST_INSTANT = datetime(1900, 1, 1, tzinfo=UTC)
LAST_INSTANT = datetime(2050, 12, 31, 23, 59, 59, tzinfo=UTC)
EPHEMERIS_NAME = "DE421"

_FIRST64 = np.datetime64("1900-01-01T00:00:00", "us")
_LAST64 = np.datetime64("2050-12-31T23:59:59", "us")
_US_PER_DAY = 86_400_000_000


def _de421_path() -> str:
    import skyfield_data  # the data package; importing it does not check anything

    path = os.path.join(os.path.dirname(skyfield_data.__file__), "data", "de421.bsp")
    if not os.path.exists(path):  # pragma: no cover - a broken install
        raise FileNotFoundError(f"DE421 not found at {path}: reinstall the skyfield-data package")
    return path


UT1_TABLE = "ut1_utc.csv"


def ut1_table() -> tuple[np.ndarray, np.ndarray, str]:
    """(UTC MJD, UT1−UTC seconds, source line) from the bundled IERS table."""
    from importlib.resources import files

    text = files("nav.data").joinpath(UT1_TABLE).read_text(encoding="ascii")
    source = text.split("\n", 1)[0].lstrip("# ")
    table = np.loadtxt(text.splitlines(), delimiter=",", comments="#", skiprows=3)
    return table[:, 0], table[:, 1], source


@functools.lru_cache(maxsize=None)
def timescale():
    """skyfield time scale on the bundled IERS UT1−UTC table, loaded once."""
    from skyfield.data.iers import build_timescale_arrays
    from skyfield.timelib import Timescale

    mjd, dut1, _ = ut1_table()
    daily_tt, daily_delta_t, leap_dates, leap_offsets = build_timescale_arrays(mjd, dut1)
    return Timescale((daily_tt, daily_delta_t), leap_dates, leap_offsets)


@functools.lru_cache(maxsize=None)
def ephemeris():
    """The DE421 kernel from skyfield-data, loaded once (memory-mapped by jplephem)."""
    from skyfield.api import load_file

    kernel = load_file(_de421_path())
    atexit.register(kernel.close)  # else `python -W error` reports the open file at exit
    return kernel


def check_range(t64: np.ndarray, field: str = "utc") -> None:
    """Refuse instants outside the supported range, naming it."""
    t64 = np.asarray(t64)
    if t64.size == 0:
        return
    lo, hi = t64.min(), t64.max()
    if lo < _FIRST64 or hi > _LAST64:
        bad = lo if lo < _FIRST64 else hi
        raise OutOfRangeError(
            f"{np.datetime_as_string(bad, unit='s')}Z is outside the supported range {RANGE_TEXT}",
            field=field, example="2026-03-20T18:42:10Z")


def skyfield_time(t, field: str = "utc"):
    """Aware datetime, ``datetime64`` (UTC) or arrays of them -> skyfield ``Time`` (same shape)."""
    t64 = to_datetime64(t)
    check_range(t64, field)
    us = t64.astype("datetime64[us]").astype(np.int64)
    days, rem_us = np.divmod(us, _US_PER_DAY)
    seconds = rem_us / 1e6
    ts = timescale()
    if np.ndim(us) == 0:
        return ts.utc(1970, 1, 1 + int(days), 0, 0, float(seconds))
    return ts.utc(1970, 1, 1 + days, 0, 0, seconds)
