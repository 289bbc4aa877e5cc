"""UT1 and leap seconds from the IERS files of astropy-iers-data, and what nav says about them.

References: astropy's own reader of the same IERS-A file (``astropy.utils.iers.IERS_A``, test extra,
no download), ERFA's Earth rotation angle (``erfa.era00``), IERS Bulletin C for TAI−UTC.
"""

import subprocess
import sys
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from nav.ephemeris import timescale, ut1_status
from nav.iers import GHA_ARCMIN_PER_UT1_S, beyond_measured, earth_orientation, tai_minus_utc_s
from nav.units import ARCMIN_DEG

MS = 1e-3  # seconds
UTC = timezone.utc


@pytest.fixture(scope="module")
def astropy_a():
    from astropy.utils import iers

    return iers.IERS_A.open(iers.IERS_A_FILE)


def _mjd_dt(mjd: float) -> datetime:
    return datetime(1858, 11, 17, tzinfo=UTC) + timedelta(days=float(mjd))  # MJD 0 (definition)


def test_time_scale_reproduces_the_iers_file_and_astropy(astropy_a):
    # nav's UT1-UTC at table days equals the file's Bulletin A value to 1 ms, and agrees with
    # astropy's own reading of the same finals2000A.all (astropy prefers the file's Bulletin B
    # column where it has one; A and B differ by up to 6 ms in 1974, 0.8 ms since 1990: observed).
    from astropy.time import Time

    eo = earth_orientation()
    rng = np.random.default_rng(7)
    idx = rng.choice(len(eo.utc_mjd) - 30, 200, replace=False)
    mjd = eo.utc_mjd[idx]
    t = timescale().utc(1858, 11, 17 + mjd)
    assert np.abs(np.asarray(t.dut1) - eo.dut1_s[idx]).max() < MS
    ref = astropy_a.ut1_utc(Time(mjd, format="mjd", scale="utc")).to_value("s")
    assert np.abs(np.asarray(t.dut1) - ref).max() < 10 * MS   # 10 ms of UT1 is 0.0025' of GHA


def test_leap_seconds_from_leap_second_dat():
    # TAI-UTC: 37 s since 2017-01-01, 36 s during 2016, 32 s in 1999-2005, 10 s in the first half
    # of 1972 (IERS Bulletin C; values from memory).
    ts = timescale()
    for (y, m, d, jd_utc), tai_minus_utc in (((2020, 1, 1, 2458849.5), 37.0),
                                             ((2016, 6, 1, 2457540.5), 36.0),
                                             ((2003, 1, 1, 2452640.5), 32.0)):
        assert abs((ts.utc(y, m, d).tai - jd_utc) * 86400.0 - tai_minus_utc) < MS
    assert tai_minus_utc_s(2441317.5 + 30) == 10.0       # 1972-01-31


def test_leap_seconds_agree_with_the_jumps_of_ut1():
    # Two IERS products, one fact: each leap second since 1973 is a +1 s jump of UT1-UTC in
    # finals2000A.all on the day TAI-UTC steps in Leap_Second.dat.
    eo = earth_orientation()
    jumps = eo.utc_mjd[1:][np.diff(eo.dut1_s) > 0.9]
    steps = eo.leap_dates_jd[np.isfinite(eo.leap_dates_jd)] - 2400000.5
    assert np.array_equal(jumps, steps[steps > eo.utc_mjd[0]])


def test_measured_and_predicted_ends_match_astropy(astropy_a):
    # The last day flagged I (IERS measured) and the last day with any UT1-UTC, as astropy reads
    # the same file; the stated prediction error is the file's e_UT1_UTC_A column.
    eo = earth_orientation()
    flags = np.asarray(astropy_a["UT1Flag_A"])
    mjd = np.asarray(astropy_a["MJD"].to_value("d") if hasattr(astropy_a["MJD"], "to_value")
                     else astropy_a["MJD"])
    assert eo.measured_until_mjd == mjd[flags == "I"].max()
    assert eo.predicted_until_mjd == mjd[flags == "P"].max()
    first_p = mjd[flags == "P"].min()
    err = np.asarray(astropy_a["e_UT1_UTC_A"].to_value("s"))[mjd == first_p + 100][0]
    status = ut1_status(_mjd_dt(first_p + 100.5))
    assert abs(status.ut1_error_s - err) < 1e-7
    assert abs(status.gha_error_arcmin - err * GHA_ARCMIN_PER_UT1_S) < 1e-9


def test_one_second_of_ut1_is_a_quarter_arcminute_of_gha():
    # ERFA's Earth rotation angle (IAU 2000) advances by GHA_ARCMIN_PER_UT1_S in one second of UT1.
    import erfa

    jd = 2461000.5
    d_rad = erfa.era00(jd, 0.25 + 1.0 / 86400.0) - erfa.era00(jd, 0.25)
    assert abs(np.degrees(d_rad) * 60.0 - GHA_ARCMIN_PER_UT1_S) < 1e-6 * ARCMIN_DEG * 60


def test_status_inside_the_measured_values_says_nothing():
    eo = earth_orientation()
    s = ut1_status(_mjd_dt(eo.measured_until_mjd - 400))
    assert s.message is None and s.ut1_error_s is None and s.gha_error_arcmin is None
    assert s.measured_until.isoformat() == _mjd_dt(eo.measured_until_mjd).date().isoformat()


def test_status_in_the_predictions_names_the_data_date_and_the_gha_error():
    eo = earth_orientation()
    when = _mjd_dt(eo.measured_until_mjd + 40.5)
    s = ut1_status(np.array([np.datetime64("2020-01-01T00:00"),
                             np.datetime64(when.replace(tzinfo=None), "us")]))
    assert s.utc == when                                  # the latest instant decides
    assert s.measured_until.isoformat() in s.message and "prediction" in s.message
    assert f"{s.gha_error_arcmin:.3f}′" in s.message
    assert s.message.startswith("UT1 caution")


def test_status_beyond_the_predictions_grows_and_warns_of_leap_seconds():
    eo = earth_orientation()
    near = ut1_status(_mjd_dt(eo.predicted_until_mjd + 30))
    far = ut1_status(datetime(2050, 12, 31, tzinfo=UTC))
    assert near.ut1_error_s > eo.prediction_error_s[-1]
    assert far.ut1_error_s > near.ut1_error_s
    assert "beyond the IERS predictions" in far.message and "leap second" in far.message
    assert "1 ms a day" in far.message                    # the assumed growth is stated


def test_status_before_the_daily_table():
    s = ut1_status(datetime(1950, 6, 1, tzinfo=UTC))
    assert "long-term" in s.message


def test_beyond_measured_mask():
    eo = earth_orientation()
    t = np.array([_mjd_dt(m).replace(tzinfo=None) for m in
                  (eo.measured_until_mjd - 1, eo.measured_until_mjd + 0.5,
                   eo.measured_until_mjd + 1.5)], dtype="datetime64[us]")
    assert beyond_measured(t).tolist() == [False, False, True]


def test_no_astropy_and_no_skyfield_api_at_run_time():
    # nav reads the IERS files itself: neither astropy nor skyfield.api (the downloader) is imported.
    code = ("import sys, nav.almanac as a, numpy as np;"
            "a.almanac(['Sun'], np.array(['2026-03-20T18:42'], dtype='datetime64[us]'));"
            "bad = [m for m in sys.modules if m == 'astropy' or m.startswith('astropy.')"
            " or m == 'skyfield.api' or m == 'skyfield.iokit'];"
            "print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert run.returncode == 0, run.stdout + run.stderr


# ---------------------------------------------------------------- the caution on every surface

EXAMPLES = __import__("pathlib").Path(__file__).resolve().parents[1] / "examples"


def _shifted(tmp_path, year_month_day: str):
    # The invented evening-stars example (cutter Sula Brae), moved to another date.
    text = (EXAMPLES / "evening-stars.csv").read_text().replace("2026-06-20", year_month_day)
    path = tmp_path / "sights.csv"
    path.write_text(text)
    return str(path)


def _run(capsys, argv):
    import json

    from nav.cli import main

    main(argv)
    out = capsys.readouterr().out
    return json.loads(out) if "--json" in argv else out


def test_cli_says_nothing_inside_the_measured_values(tmp_path, capsys):
    path = _shifted(tmp_path, "2026-06-20")
    assert "UT1 caution" not in _run(capsys, ["reduce", path])
    assert "UT1 caution" not in _run(capsys, ["fix", path])
    assert "UT1 caution" not in _run(capsys, ["almanac", "Sun", "--utc", "2026-06-20T12:00Z"])
    assert all("warnings" not in d for d in
               _run(capsys, ["almanac", "Sun", "--utc", "2026-06-20T12:00Z", "--json"]))


def test_cli_reduce_fix_almanac_carry_the_caution_beyond_the_data(tmp_path, capsys):
    path = _shifted(tmp_path, "2029-12-20")
    message = ut1_status(datetime(2029, 12, 20, 21, 21, 58, tzinfo=UTC)).message
    assert f"! {message}" in _run(capsys, ["reduce", path])
    # the example moved to 2029 no longer fits its DR (doubtful sights): computed when asked
    assert f"! {message}" in _run(capsys, ["fix", path, "--use-doubtful"])
    sights = _run(capsys, ["reduce", path, "--json"])
    assert all(any(w.startswith("UT1 caution") for w in s["warnings"]) for s in sights)
    doc = _run(capsys, ["fix", path, "--json", "--use-doubtful"])
    assert any(w.startswith("UT1 caution") for w in doc["fix"]["warnings"])
    text = _run(capsys, ["almanac", "Vega", "--utc", "2029-12-20T21:00Z"])
    assert "UT1 caution" in text and "beyond the IERS predictions" in text
    rows = _run(capsys, ["almanac", "Sun", "--from", "2026-06-20T00:00Z", "--to",
                         "2029-12-20T00:00Z", "--step", "1d", "--json"])
    flagged = [r["utc"][:10] for r in rows if "warnings" in r]
    assert flagged[-1] == "2029-12-20" and "2026-06-20" not in flagged
