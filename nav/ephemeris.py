"""The one place that loads data: the DE421 ephemeris and the time scale, offline, once.

- DE421 (JPL, Folkner et al. 2008) is the file that the ``skyfield-data`` package ships. We open it
  by path; we do not call ``skyfield_data.get_skyfield_data_path()``, because that also checks the
  expiry date of an Earth-orientation file (``finals2000A.all``) that nav never reads, and would warn
  a user about data we do not use.
- UT1−UTC and leap seconds come from the IERS files that the registry package
  ``astropy-iers-data`` ships (``finals2000A.all``, ``Leap_Second.dat``), read at run time by
  :mod:`nav.iers` — newer than the table frozen inside skyfield, refreshed by
  ``pip install -U astropy-iers-data``. Outside the table skyfield's long-term ΔT model applies,
  and :func:`ut1_status` says so. No download, ever.
- Only the skyfield modules used are imported (never ``skyfield.api``, which pulls in the
  downloader), and only on first use: importing this module imports numpy and nothing else.
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


def ut1_status(utc):
    """How well UT1 is known at `utc` (the latest of many): see :func:`nav.iers.ut1_status`."""
    from .iers import ut1_status as status

    return status(utc)


@functools.lru_cache(maxsize=None)
def timescale():
    """skyfield time scale on the IERS data of astropy-iers-data, built once."""
    from skyfield.timelib import Timescale

    from .iers import earth_orientation, timescale_arrays

    eo = earth_orientation()
    return Timescale(timescale_arrays(eo), eo.leap_dates_jd, eo.leap_offsets_s)


@functools.lru_cache(maxsize=None)
def ephemeris():
    """The DE421 kernel from skyfield-data, loaded once (memory-mapped by jplephem)."""
    from skyfield.jpllib import SpiceKernel

    kernel = SpiceKernel(_de421_path())
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
