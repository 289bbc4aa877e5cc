"""The bundled UT1-UTC table (nav/data/ut1_utc.csv) against its source, IERS Bulletin A."""

import importlib.util
from pathlib import Path

import numpy as np

from nav.ephemeris import timescale, ut1_table

ROOT = Path(__file__).resolve().parents[1]
MS = 1e-3  # seconds


def _builder():
    spec = importlib.util.spec_from_file_location("build_ut1_table", ROOT / "tools" / "build_ut1_table.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_table_rebuilds_byte_for_byte(tmp_path):
    # The table is the IERS finals2000A.all file shipped by astropy-iers-data (test extra),
    # reduced to two columns by tools/build_ut1_table.py.
    out = _builder().build(tmp_path / "ut1_utc.csv")
    assert out.read_bytes() == (ROOT / "nav" / "data" / "ut1_utc.csv").read_bytes()


def test_time_scale_reproduces_the_table_and_astropy():
    # nav's UT1 at table days equals the table's UT1-UTC (IERS Bulletin A) to 1 ms, and agrees
    # with astropy's own reading of the same IERS-A file (astropy.utils.iers.IERS_Auto is not
    # used: the bundled IERS_A file, no download).
    from astropy.time import Time
    from astropy.utils import iers

    mjd, dut1, source = ut1_table()
    assert "finals2000A.all" in source
    rng = np.random.default_rng(7)
    idx = rng.choice(len(mjd) - 30, 200, replace=False)   # astropy stops short of the last days
    ts = timescale()
    t = ts.utc(1858, 11, 17 + mjd[idx])          # MJD 0 = 1858-11-17 (definition of MJD)
    assert np.abs(np.asarray(t.dut1) - dut1[idx]).max() < MS
    table = iers.IERS_A.open(iers.IERS_A_FILE)
    ref = table.ut1_utc(Time(mjd[idx], format="mjd", scale="utc")).to_value("s")
    # astropy prefers the file's final Bulletin B column where it has one; A and B differ by up to
    # 6 ms in 1974 and 0.8 ms since 1990 (observed). 10 ms of UT1 is 0.0025' of GHA.
    assert np.abs(np.asarray(t.dut1) - ref).max() < 10 * MS


def test_leap_seconds_follow_from_the_table():
    # TAI-UTC: 37 s since 2017-01-01, 36 s during 2016, 32 s in 1999-2005 (IERS Bulletin C; values
    # from memory). The table holds no leap seconds; they follow from its one-second jumps.
    ts = timescale()
    for (y, m, d, jd_utc), tai_minus_utc_s in (((2020, 1, 1, 2458849.5), 37.0),
                                               ((2016, 6, 1, 2457540.5), 36.0),
                                               ((2003, 1, 1, 2452640.5), 32.0)):
        t = ts.utc(y, m, d)
        assert abs((t.tai - jd_utc) * 86400.0 - tai_minus_utc_s) < MS
