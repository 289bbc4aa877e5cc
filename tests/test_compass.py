"""nav.compass, `nav compass`, `nav deviations` and the shell's compass check.

References:
- The amplitude formula sin A = sin Dec · sec lat and the azimuth formula are the American
  Practical Navigator's (Bowditch, Pub. No. 9, chapter on azimuths and amplitudes). Its worked
  amplitude example (lat 51°24.6′ N, Dec 19°40.4′ N, the Sun setting on the celestial horizon)
  is quoted here FROM MEMORY, figures and all, so it is checked only through the formula: A =
  W 32.7° N (to the 0.1° of the handbook's table).
- astropy 5+/ERFA: the Sun's and a star's airless topocentric azimuth (pressure 0) at the
  instant; the instant the Sun's centre is on the celestial horizon (airless altitude 0) or on
  the visible horizon (airless altitude −(34′ + dip) + the Sun's parallax 0.15′), found by
  bisection on astropy's altitude in this file.
- Error and deviation arithmetic (True = Compass + error, error = variation + deviation, E +):
  common practice, no source.
Scenarios (the cutter "Kittiwake" west of the Azores) are invented.
"""

import json
from datetime import datetime, timedelta

import numpy as np
import pytest

from nav.compass import amplitude_deg, compass_check, error_and_deviation
from nav.errors import NavInputError
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG

AZ_TOL_DEG = 0.05          # a compass is read to 0.5°; the almanac is good to 0.1′
DIP_ARCMIN_PER_SQRT_M = 1.76   # the almanac's dip formula (from memory)
SUN_PARALLAX_ARCMIN = 0.15     # 8.8″ (common practice)


def _astropy_altaz(body, utc, lat, lon):
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord, get_body
    from astropy.time import Time

    t = Time([x.replace(tzinfo=None) for x in np.atleast_1d(utc)], scale="utc")
    loc = EarthLocation.from_geodetic(lon=lon * u.deg, lat=lat * u.deg, height=0 * u.m)
    if body == "Sun":
        c = get_body("sun", t, loc)
    else:
        from nav.stars import find_star
        from references import star_skycoord
        c = star_skycoord(find_star(body)).apply_space_motion(new_obstime=t)
    aa = c.transform_to(AltAz(obstime=t, location=loc, pressure=0 * u.hPa))
    return aa.alt.deg, aa.az.deg


def _astropy_instant_at_alt(target_deg, t_lo, t_hi, lat, lon):
    """Bisection on astropy's airless altitude of the Sun between two instants."""
    g_lo = _astropy_altaz("Sun", [t_lo], lat, lon)[0][0] - target_deg
    for _ in range(16):
        mid = t_lo + (t_hi - t_lo) / 2
        g = _astropy_altaz("Sun", [mid], lat, lon)[0][0] - target_deg
        if np.sign(g) == np.sign(g_lo):
            t_lo, g_lo = mid, g
        else:
            t_hi = mid
    return t_lo + (t_hi - t_lo) / 2


def test_amplitude_formula_handbook_example():
    # Bowditch's amplitude example (from memory): lat 51°24.6′ N, Dec N 19°40.4′ -> W 32.7° N
    a = amplitude_deg(51 + 24.6 / 60, 19 + 40.4 / 60)
    assert abs(a - 32.7) < 0.05
    # scalar and array; the sign follows the Dec's name
    arr = amplitude_deg(np.array([0.0, 40.0]), np.array([-23.44, 10.0]))
    assert arr.shape == (2,) and arr[0] == pytest.approx(-23.44, abs=1e-9)   # on the equator A = Dec


def test_error_and_deviation_arithmetic():
    # common practice: Zn 231°, compass 228° -> error 3° E; variation 5° W -> deviation 8° E
    err, dev = error_and_deviation(231.0, 228.0, -5.0)
    assert err == pytest.approx(3.0) and dev == pytest.approx(8.0)
    err, dev = error_and_deviation(2.0, 358.0, None)         # across north
    assert err == pytest.approx(4.0) and dev is None


@pytest.mark.parametrize("body,utc,lat,lon", [
    ("Sun", datetime(2026, 6, 21, 13, 0, tzinfo=UTC), 41.2, -32.1),
    ("Sun", datetime(2026, 12, 5, 2, 10, tzinfo=UTC), -33.9, 151.3),
    ("Vega", datetime(2026, 6, 21, 23, 30, tzinfo=UTC), 40.3, -34.6),
    ("Achernar", datetime(2026, 9, 1, 3, 0, tzinfo=UTC), -20.0, 57.5),
])
def test_azimuth_method_against_astropy(body, utc, lat, lon):
    _, az = _astropy_altaz(body, [utc], lat, lon)
    c = compass_check(body, utc, lat, lon, 100.0, variation_deg=-9.0)
    assert abs((c.zn_deg - az[0] + 180) % 360 - 180) < AZ_TOL_DEG
    assert c.compass_error_deg == pytest.approx(((az[0] - 100.0 + 180) % 360) - 180,
                                                abs=AZ_TOL_DEG)
    assert c.deviation_deg == pytest.approx(c.compass_error_deg + 9.0)


@pytest.mark.parametrize("horizon,eye", [("celestial", 0.0), ("visible", 3.0)])
def test_amplitude_against_astropy(horizon, eye):
    lat, lon = 41.5, -31.1
    target = 0.0
    if horizon == "visible":
        target = (-(34.0 + DIP_ARCMIN_PER_SQRT_M * np.sqrt(eye)) + SUN_PARALLAX_ARCMIN) * ARCMIN_DEG
    t = _astropy_instant_at_alt(target, datetime(2026, 6, 21, 6, 0, tzinfo=UTC),
                                datetime(2026, 6, 21, 7, 0, tzinfo=UTC), lat, lon)
    _, az = _astropy_altaz("Sun", [t], lat, lon)
    c = compass_check("Sun", t, lat, lon, 55.0, amplitude=True, horizon=horizon, eye_height_m=eye)
    assert c.rising and c.amplitude_name.startswith("E ") and c.amplitude_name.endswith("N")
    assert abs(c.zn_deg - az[0]) < AZ_TOL_DEG
    if horizon == "visible":
        assert c.visible_correction_deg < 0          # rising N of E: the bearing moves north
    assert not c.warnings


def test_amplitude_refused_when_the_body_does_not_set():
    with pytest.raises(NavInputError) as e:
        compass_check("Sun", datetime(2026, 6, 21, 12, tzinfo=UTC), 78.0, 15.0, 180.0,
                      amplitude=True)
    assert e.value.field == "dr_lat"


def test_amplitude_refused_when_the_body_is_high():
    # 14:00 UTC at 41°12' N 032°06' W in June: the Sun near its meridian passage, some 70° up
    # (common practice, no source): far from the horizon, no amplitude
    with pytest.raises(NavInputError) as e:
        compass_check("Sun", datetime(2026, 6, 21, 14, tzinfo=UTC), 41.2, -32.1, 180.0,
                      amplitude=True)
    assert "above the horizon" in e.value.reason and "within 2°" in e.value.reason


def test_amplitude_refused_for_a_body_under_the_horizon():
    # Sunset at 41°12' N 032°06' W on 2026-06-21 is about 21:48 UTC (nav sky, checked against
    # astropy in test_sky); at 23:30 UTC the Sun is well below the horizon (its centre near
    # -14°, common practice: an hour and a half after sunset in summer mid-latitudes): refused,
    # and the line says "below", never a negative height
    with pytest.raises(NavInputError) as e:
        compass_check("Sun", datetime(2026, 6, 21, 23, 30, tzinfo=UTC), 41.2, -32.1, 300.0,
                      amplitude=True)
    reason = e.value.reason
    assert "below the horizon" in reason and "-" not in reason.split("below")[0]


def test_azimuth_refused_for_a_body_under_the_horizon():
    # the same Sun, 1 h 40 min after sunset (common practice, no source: some 14° down)
    with pytest.raises(NavInputError) as e:
        compass_check("Sun", datetime(2026, 6, 21, 23, 30, tzinfo=UTC), 41.2, -32.1, 300.0)
    assert "below the horizon" in e.value.reason


def test_amplitude_accepted_at_sunset():
    # about 21:48 UTC (see above) the Sun is on the horizon (its centre some 0.8° to 1.5°
    # under the celestial horizon at sunset, common practice): an amplitude, no refusal
    c = compass_check("Sun", datetime(2026, 6, 21, 21, 48, tzinfo=UTC), 41.2, -32.1, 300.0,
                      amplitude=True)
    assert c.method == "amplitude" and -2.0 < c.alt_deg < 0.0


def test_cli_compass_json_contract(capsys):
    from nav.cli import main

    rc = main(["compass", "--body", "Sun", "--utc", "2026-06-21T06:31:10Z", "--dr-lat",
               "41 30 N", "--dr-lon", "031 06 W", "--bearing", "055", "--variation", "9 W",
               "--amplitude", "--json"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert out["method"] == "amplitude"
    assert {"zn_deg", "compass_error_deg", "deviation_deg"} <= set(out)
    assert out["deviation_deg"] == pytest.approx(out["compass_error_deg"] + 9.0, abs=1e-3)
    rc = main(["compass", "--body", "Sun", "--utc", "2026-06-21T13:00:00Z", "--dr-lat",
               "41 N", "--dr-lon", "032 W", "--bearing", "150", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert out["method"] == "azimuth" and "deviation_deg" not in out
    assert main(["compass", "--body", "Sun", "--utc", "2026-06-21T13:00:00Z", "--dr-lat",
                 "41 N", "--dr-lon", "032 W", "--bearing", "150", "--variation", "9 N"]) == 2
    assert "variation" in capsys.readouterr().err


def test_shell_compass_check_is_logged_and_listed(tmp_path, capsys):
    from shell_driver import open_state, run_lines

    from nav.cli import main

    def clock():
        return datetime(2026, 6, 22, 0, 0, tzinfo=UTC)

    path = tmp_path / "k.jsonl"
    st, log = open_state(path, "Kittiwake", "Westward", clock)
    try:
        out = run_lines(st, "dr 41 12.0 N 032 06.0 W course 245 speed 6.5 at 2026-06-21T04:00:00Z",
                        "compass Sun 055 heading 245 var 9 W amplitude at 2026-06-21T06:31:10Z",
                        "compass Vega 080 heading 246 var 9 W at 2026-06-21T23:30:00Z",
                        "compass Sun 150 heading 090 var 9 W at 2026-06-21T13:00:00Z",
                        "compass Sun 150 var 9 W at 2026-06-21T13:00:00Z",
                        "deviations")
    finally:
        log.close()
    assert out.count(": compass check,") == 3 and "needs the ship's head" in out
    assert "245°" in out.split("Deviation found")[1] and "090°" in out.split("Deviation found")[1]
    assert main(["deviations", "--log", str(path), "--json"]) == 0
    table = json.loads(capsys.readouterr().out)["headings"]
    assert [h["heading_deg"] for h in table] == [90, 245]
    assert len(table[1]["checks"]) == 2
