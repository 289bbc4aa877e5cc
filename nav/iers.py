"""Earth orientation: UT1−UTC and leap seconds from the IERS files of ``astropy-iers-data``.

- ``finals2000A.all`` (IERS Rapid Service / Prediction Centre, Bulletin A): daily UT1−UTC since
  1973-01-02, measured (flag ``I``) up to a few weeks before the package's release, then about a
  year of predictions (flag ``P``) with their stated error (columns 69–78 of the file).
- ``Leap_Second.dat`` (IERS Bulletin C): TAI−UTC since 1972, and the date the file expires (the
  last date up to which no unannounced leap second can occur).

Both ship in the registry package ``astropy-iers-data`` (pure data, released about weekly, so
``pip install -U astropy-iers-data`` refreshes them); they are located through
``importlib.resources`` and read, never written, never downloaded. astropy itself is not imported.
Parsing uses skyfield's own readers (:func:`skyfield.data.iers.parse_x_y_dut1_from_finals_all`,
:func:`skyfield.io_timescale.parse_leap_seconds`); only the flag and error columns, which skyfield
does not read, are taken from the file's fixed columns here. The files are parsed once, on the
first use of a time scale (not at import).

:func:`ut1_status` says how well UT1 is known at an instant: measured, predicted (with the IERS
stated error), or extrapolated beyond the predictions (with an assumed growth of the error, see
:data:`UT1_ERROR_GROWTH_S_PER_DAY`). One second of UT1 error is 0.2507′ of GHA.
"""

from __future__ import annotations

import functools
import io
from dataclasses import dataclass
from datetime import date, datetime, timedelta

import numpy as np

FINALS_FILE = "finals2000A.all"
LEAP_SECOND_FILE = "Leap_Second.dat"
MJD_EPOCH = date(1858, 11, 17)     # MJD 0 (definition of the Modified Julian Date)
# Earth's rotation against the equinox, 360.985 647 366° a day (IAU 1982): degrees of GHA per
# second of UT1, in arcminutes: 0.2507′.
GHA_ARCMIN_PER_UT1_S = 360.985_647_366 * 60.0 / 86_400.0
# Beyond the last prediction the UT1 error is assumed to grow from the error the file states for
# its last prediction by 1 ms a day: an unpredicted excess length of day of 1 ms, the size of the
# decade fluctuations of the length of day (from memory; deliberately on the cautious side, since
# long-range UT1 extrapolations have missed by seconds over decades).
UT1_ERROR_GROWTH_S_PER_DAY = 1e-3
_FLAG_COL, _ERR_COLS = 57, slice(68, 78)     # 0-based: column 58 and columns 69-78 of the file


@dataclass(frozen=True)
class EarthOrientation:
    """The parsed IERS data: daily UT1−UTC, the leap-second table, and where each ends."""

    utc_mjd: np.ndarray
    dut1_s: np.ndarray
    leap_dates_jd: np.ndarray      # skyfield's layout (with its -inf/+inf sentinels)
    leap_offsets_s: np.ndarray
    measured_until_mjd: float      # last day with a measured (flag I) UT1−UTC
    predicted_until_mjd: float     # last day with any UT1−UTC (the last prediction)
    prediction_error_s: np.ndarray  # the error the file states for each predicted day
    leap_seconds_until: date       # Leap_Second.dat's expiry date
    version: str                   # astropy-iers-data's version


@dataclass(frozen=True)
class UT1Status:
    """How well UT1 is known at `utc` (the latest instant asked about).

    ``ut1_error_s`` and ``gha_error_arcmin`` are None where UT1 is measured; ``message`` is None
    when nothing needs saying, else one line for every surface that shows an almanac value.
    """

    utc: datetime | None
    measured_until: date
    predicted_until: date
    leap_seconds_until: date
    data_version: str
    ut1_error_s: float | None
    gha_error_arcmin: float | None
    message: str | None


def _data_file(name: str):
    from importlib.resources import files

    return files("astropy_iers_data").joinpath("data", name)


_LINE_BYTES = 188      # finals2000A.all: 187 fixed columns and a newline
_KEEP_COLUMNS = 79     # through UT1-UTC and its error (skyfield's reader needs the first 68)


def _leading_columns(raw: bytes) -> bytes:
    """The file cut to its first columns, line by line (the reader then scans 40 % of the
    text); the file itself if its lines are not all of the fixed length."""
    if len(raw) % _LINE_BYTES:
        return raw
    lines = np.frombuffer(raw, dtype=np.uint8).reshape(-1, _LINE_BYTES)
    if not np.all(lines[:, -1] == ord("\n")):
        return raw
    return np.concatenate([lines[:, :_KEEP_COLUMNS], lines[:, -1:]], axis=1).tobytes()


def _has_measured(text: bytes) -> bool:
    return any(line[_FLAG_COL:_FLAG_COL + 1] == b"I" for line in text.splitlines())


def _mjd_date(mjd: float) -> date:
    return MJD_EPOCH + timedelta(days=int(mjd))


@functools.lru_cache(maxsize=None)
def earth_orientation() -> EarthOrientation:
    """Parse the two IERS files once (about 0.05 s)."""
    import astropy_iers_data
    from skyfield.data.iers import parse_x_y_dut1_from_finals_all
    from skyfield.io_timescale import parse_leap_seconds

    raw = _data_file(FINALS_FILE).read_bytes()
    finals = parse_x_y_dut1_from_finals_all(io.BytesIO(_leading_columns(raw)))
    mjd, dut1 = np.asarray(finals["utc_mjd"]), np.asarray(finals["dut1"])
    measured = mjd[0] - 1.0
    errors = []
    # The flags and errors of the predictions, read backwards from the file's end (about a year
    # of predictions: a tail of 1000 lines holds them, else the whole file is read).
    tail = raw[-1000 * 190:]
    lines = tail.splitlines() if tail.count(b"\n") and _has_measured(tail) else raw.splitlines()
    for line in reversed(lines):
        flag = line[_FLAG_COL:_FLAG_COL + 1]
        if flag == b"P":
            errors.append(float(line[_ERR_COLS]))
        elif flag == b"I":
            measured = float(line[7:15])
            break
    with _data_file(LEAP_SECOND_FILE).open("rb") as fh:
        expires, (leap_dates, leap_offsets) = parse_leap_seconds(fh)
    # skyfield adds a 30-day grace period to the expiry date; nav states the file's own date.
    expires = expires - timedelta(days=30)
    return EarthOrientation(
        utc_mjd=mjd, dut1_s=dut1, leap_dates_jd=leap_dates, leap_offsets_s=leap_offsets,
        measured_until_mjd=measured, predicted_until_mjd=float(mjd[-1]),
        prediction_error_s=np.array(errors[::-1]), leap_seconds_until=expires,
        version=getattr(astropy_iers_data, "__version__", "unknown"))


def tai_minus_utc_s(utc_jd, eo: EarthOrientation | None = None) -> np.ndarray:
    """TAI−UTC (seconds) at UTC Julian dates, from Leap_Second.dat."""
    eo = eo or earth_orientation()
    i = np.searchsorted(eo.leap_dates_jd, np.asarray(utc_jd, dtype=float), "right")
    return eo.leap_offsets_s[i]


def timescale_arrays(eo: EarthOrientation | None = None):
    """(daily TT, daily ΔT) for skyfield's ``Timescale``, with TT−UTC from the leap-second file."""
    eo = eo or earth_orientation()
    tt_minus_utc = tai_minus_utc_s(eo.utc_mjd + 2_400_000.5, eo) + 32.184  # TT = TAI + 32.184 s
    daily_tt = eo.utc_mjd + 2_400_000.5 + tt_minus_utc / 86_400.0
    daily_delta_t = (tt_minus_utc - eo.dut1_s).round(7)
    return daily_tt, daily_delta_t


def _utc_mjd(t64: np.ndarray) -> np.ndarray:
    days = (t64.astype("datetime64[us]").astype(np.int64) / 86_400e6)
    return days + 40_587.0           # 1970-01-01 is MJD 40587


def beyond_measured(t64) -> np.ndarray:
    """True for instants (datetime64, UTC) where UT1 is not an IERS measured value."""
    eo = earth_orientation()
    mjd = _utc_mjd(np.asarray(t64))
    return (mjd >= eo.measured_until_mjd + 1.0) | (mjd < eo.utc_mjd[0])


def _error_s(eo: EarthOrientation, mjd: float) -> float:
    """UT1 error at `mjd` past the measured values: the file's stated error for a predicted day,
    beyond the predictions the last stated error grown by :data:`UT1_ERROR_GROWTH_S_PER_DAY`."""
    d = int(np.floor(mjd - eo.measured_until_mjd))          # 1 on the first predicted day
    stated = eo.prediction_error_s
    if 1 <= d <= stated.size:
        return float(stated[d - 1])
    return float(stated[-1]) + UT1_ERROR_GROWTH_S_PER_DAY * (d - stated.size)


def _fmt_arcmin(x: float) -> str:
    return "less than 0.001′" if x < 0.001 else "as much as " + (f"{x:.3f}′" if x < 1.0 else f"{x:.1f}′")


def _fmt_s(x: float) -> str:
    return f"{x * 1e3:.2f} ms" if x < 0.001 else f"{x:.3f} s"


def ut1_status(utc) -> UT1Status:
    """How well UT1 (hence every GHA) is known at `utc`: one instant or the latest of many.

    `utc`: an aware datetime, a ``datetime64`` (UTC) or an array of them.
    """
    from .timekeeping import from_datetime64, to_datetime64

    eo = earth_orientation()
    t64 = np.asarray(to_datetime64(utc))
    base = dict(measured_until=_mjd_date(eo.measured_until_mjd),
                predicted_until=_mjd_date(eo.predicted_until_mjd),
                leap_seconds_until=eo.leap_seconds_until, data_version=eo.version)
    if t64.size == 0:
        return UT1Status(utc=None, ut1_error_s=None, gha_error_arcmin=None, message=None, **base)
    latest = t64.max()
    earliest = t64.min()
    mjd = float(_utc_mjd(latest))
    when = from_datetime64(latest)
    data = f"astropy-iers-data {eo.version}"
    parts = []
    error_s = None
    if mjd >= eo.measured_until_mjd + 1.0:
        if mjd < eo.predicted_until_mjd + 1.0:
            error_s = _error_s(eo, mjd)
            parts.append(
                f"UT1 caution: instants after {base['measured_until']} (the last IERS measured "
                f"value in {data}) use the IERS Bulletin A prediction of UT1−UTC; to "
                f"{when:%Y-%m-%d} it is uncertain by up to {_fmt_s(error_s)}, so GHA may be off by "
                f"{_fmt_arcmin(error_s * GHA_ARCMIN_PER_UT1_S)}")
        else:
            error_s = _error_s(eo, mjd)
            parts.append(
                f"UT1 caution: instants after {base['predicted_until']} are beyond the IERS "
                f"predictions in {data} (measured to {base['measured_until']}); UT1 is "
                f"extrapolated, and to {when:%Y-%m-%d} GHA may be off by "
                f"{_fmt_arcmin(error_s * GHA_ARCMIN_PER_UT1_S)} ({_fmt_s(error_s)} of UT1: the "
                f"last prediction's stated error, grown by an assumed "
                f"{UT1_ERROR_GROWTH_S_PER_DAY * 1e3:g} ms a day)")
        if when.date() > eo.leap_seconds_until:
            parts.append(f"a leap second announced after {eo.leap_seconds_until} (the end of "
                         f"Leap_Second.dat) would be missing: 1 s of UTC is "
                         f"{GHA_ARCMIN_PER_UT1_S:.2f}′ of GHA")
        parts.append("pip install -U astropy-iers-data brings newer IERS data")
    if float(_utc_mjd(earliest)) < eo.utc_mjd[0]:
        parts.append(f"UT1 before {_mjd_date(eo.utc_mjd[0])} comes from skyfield's long-term ΔT "
                     "model, not IERS daily values")
    gha = None if error_s is None else error_s * GHA_ARCMIN_PER_UT1_S
    return UT1Status(utc=when, ut1_error_s=error_s, gha_error_arcmin=gha,
                     message="; ".join(parts) + "." if parts else None, **base)
