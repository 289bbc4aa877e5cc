"""`nav noon` and `nav latitude` (nav/commands/noon_cmd.py), and the working in nav/noonsight.py they share with the
shell: the noon prediction, the Hs to preset, latitude by meridian altitude and by Polaris,
longitude by the time of noon.

References (independent of nav's chain):
- astronomy-engine (PyPI 2.1): ``SearchHourAngle(Body.Sun, observer, 0, t)`` for the instant of
  the Sun's meridian passage at a fixed place, and ``HourAngle(Body.Sun, t, observer)`` for the
  Sun's hour angle at the moving vessel's longitude at the instant nav predicts. It treats UTC as
  UT1 (|UT1 − UTC| < 0.9 s by the definition of UTC), and the JSON gives the instant to the
  second (±0.5 s): so instants are compared to 2 s (0.5′ of longitude).
- astropy (ERFA inside, DE421 for the Sun, nav's Hipparcos rows propagated by astropy for the
  stars; see tests/reference_sky.py): the airless topocentric altitude at a known position on
  WGS 84, pressure 0. A sextant reading is made from it by undoing, in code of this file,
  Bennett's refraction (J. Navigation 35, 1982, with the zenith constant nav.corrections states;
  inverted by bisection), the dip 1.76′·√h(m) of the almanac's explanation pages and the index
  error (+ on the arc reads high). For a star (no parallax) the meridian altitude above the
  horizon normal to the geodetic vertical is 90° − |φ − δ| exactly, φ geodetic.
- The vessel's track: Mercator sailing written out here (American Practical Navigator,
  "Mercator sailing"), not nav.sailing.
- The meridian rule's cases and their names: textbook navigation, from memory.
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
import warnings
from datetime import date, datetime, timedelta
from pathlib import Path

import astronomy
import numpy as np
import pytest

from nav import CAUTION
from nav.cli import main
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG as ARCMIN
from references import star_skycoord
from references import mercator_sailing

SECOND = timedelta(seconds=1)
INSTANT_TOL = 2 * SECOND                 # see the module docstring
JSON_DEG = 5e-8                          # the JSON rounds degrees to 7 decimals
REPO = Path(__file__).resolve().parent.parent
SUN_RADIUS_KM = 696_000.0                # the solar radius behind the almanac's SD 15.99′ at 1 AU
EYE_M, IE_ARCMIN = 2.4, 1.2


# ---------------------------------------------------------------- the independent truth

def ae_time(t: datetime):
    t = t.astimezone(UTC)
    return astronomy.Time.Make(t.year, t.month, t.day, t.hour, t.minute,
                               t.second + t.microsecond / 1e6)


def ae_transit(lat, lon, start: datetime) -> datetime:
    """astronomy-engine: the Sun's first upper meridian passage after `start` at (lat, lon)."""
    ev = astronomy.SearchHourAngle(astronomy.Body.Sun, astronomy.Observer(lat, lon, 0.0), 0.0,
                                   ae_time(start))
    return ev.time.Utc().replace(tzinfo=UTC)


def ae_sun_hour_angle_s(lat, lon, t: datetime) -> float:
    """The Sun's hour angle at (lat, lon) at `t`, in seconds of time, in [−12 h, 12 h)."""
    ha_h = astronomy.HourAngle(astronomy.Body.Sun, ae_time(t), astronomy.Observer(lat, lon, 0.0))
    return ((ha_h + 12.0) % 24.0 - 12.0) * 3600.0




def _de421_path() -> str:
    import skyfield_data

    return os.path.join(os.path.dirname(skyfield_data.__file__), "data", "de421.bsp")


def airless_alt(body: str, when: datetime, lat_deg, lon_deg):
    """astropy: the airless topocentric altitude (deg) of a star, or of the Sun's lower limb
    (its centre less the topocentric SD asin(R/d)). Arrays of instants and places broadcast."""
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, get_body, solar_system_ephemeris
    from astropy.time import Time

    from nav.stars import find_star

    when = [when] if isinstance(when, datetime) else list(when)
    t = Time([w.astimezone(UTC).replace(tzinfo=None) for w in when], scale="utc")
    loc = EarthLocation.from_geodetic(lon=np.asarray(lon_deg) * u.deg,
                                      lat=np.asarray(lat_deg) * u.deg, height=0 * u.m)
    frame = AltAz(obstime=t, location=loc, pressure=0 * u.hPa)
    with warnings.catch_warnings():
        warnings.simplefilter("error")   # no degraded-accuracy fallback may pass unnoticed
        if body == "Sun":
            with solar_system_ephemeris.set(_de421_path()):
                aa = get_body("sun", t, location=loc).transform_to(frame)
            alt = aa.alt.deg - np.degrees(np.arcsin(SUN_RADIUS_KM / aa.distance.km))
        else:
            star = star_skycoord(find_star(body))
            alt = star.apply_space_motion(new_obstime=t).transform_to(frame).alt.deg
    alt = np.asarray(alt, dtype=float)
    return float(alt[0]) if alt.size == 1 else alt


def bennett_arcmin(ha_deg):
    """Bennett (1982) at 10 °C and 1010 hPa, with the zenith constant (R(90°) = 0)."""
    zenith = -1.0 / math.tan(math.radians(90.0 + 7.31 / 94.4))
    return 1.0 / math.tan(math.radians(ha_deg + 7.31 / (ha_deg + 4.4))) + zenith


def hs_from_airless(h_deg, eye_m=EYE_M, ie_arcmin=IE_ARCMIN):
    """The sextant reading of a point at airless altitude h: + refraction (Ha − R(Ha) = h, by
    bisection), + dip, + index error (on the arc reads high)."""
    lo, hi = h_deg, h_deg + 1.0
    for _ in range(60):
        mid = (lo + hi) / 2
        lo, hi = (lo, mid) if mid - bennett_arcmin(mid) * ARCMIN > h_deg else (mid, hi)
    return (lo + hi) / 2 + 1.76 * math.sqrt(eye_m) * ARCMIN + ie_arcmin * ARCMIN


def run_cli(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def cli_json(capsys, *argv) -> dict:
    code, out, err = run_cli(capsys, *argv, "--json")
    assert code == 0, err
    return json.loads(out)


def z_time(text: str) -> datetime:
    return datetime.strptime(text, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=UTC)


# ---------------------------------------------------------------- nav noon

@pytest.mark.parametrize("day, lat, lon", [
    ("2026-06-21", 37.3, -25.1),      # Azores, midsummer
    ("2026-11-03", -33.9, 18.4),      # south of the Cape, the Sun some 16 min fast
    ("2026-02-11", 10.0, 179.9),      # just west of the 180th meridian, EoT about −14 min
    ("2026-09-01", 60.0, -150.0),
])
def test_noon_at_a_fixed_longitude_against_astronomy_engine(capsys, day, lat, lon):
    d = cli_json(capsys, "noon", "--date", day, "--dr-lat", str(lat), "--dr-lon", str(lon))
    # The DR is at 12:00 local mean time of the date: 12:00 UTC − lon/15° (the --help says so).
    lmt_noon = datetime.fromisoformat(day).replace(hour=12, tzinfo=UTC) - timedelta(hours=lon / 15)
    assert abs(z_time(d["dr_utc"]) - lmt_noon) <= SECOND / 2
    ref = ae_transit(lat, lon, lmt_noon - timedelta(hours=6))      # that local day's transit
    assert abs(z_time(d["utc"]) - ref) < INSTANT_TOL
    assert d["lat_deg"] == pytest.approx(lat, abs=JSON_DEG)        # hove to: she stays there
    assert d["caution"] == CAUTION
    for key in ("sun_gha_deg", "sun_dec_deg", "hc_deg", "hs_preset_deg", "equation_of_time_min",
                "eye_height_m", "index_error_arcmin", "zone_description_h"):
        assert key in d                                           # units in the keys


@pytest.mark.parametrize("course, speed", [(250.0, 12.0), (60.0, 20.0), (170.0, 8.0)])
def test_noon_of_a_moving_vessel_has_the_sun_on_her_meridian(capsys, course, speed):
    day, lat0, lon0 = "2026-06-21", 45.0, -30.0
    d = cli_json(capsys, "noon", "--date", day, "--dr-lat", str(lat0), "--dr-lon", str(lon0),
                 "--course", str(course), "--speed", str(speed), "--zone", "+2")
    t = z_time(d["utc"])
    hours = (t - z_time(d["dr_utc"])).total_seconds() / 3600.0
    lat, lon = mercator_sailing(lat0, lon0, course, speed * hours)   # her own track
    assert d["lon_deg"] == pytest.approx(lon, abs=0.5 * ARCMIN)      # 0.5 s of her run, rounded
    # The truth at noon: the Sun's hour angle at her longitude is 0 (astronomy-engine).
    assert abs(ae_sun_hour_angle_s(lat, lon, t)) < INSTANT_TOL.total_seconds()
    # Zone time: UTC = ZT + ZD (the trade's rule; ZD +2 here).
    assert d["zone_time"] == f"{t - timedelta(hours=2):%Y-%m-%dT%H:%M:%S}"
    # And the meridian altitude: astronomy-engine's airless topocentric altitude of the centre
    # differs from the geocentric Hc by the Sun's parallax (below 0.15′).
    hor = astronomy.Horizon(ae_time(t), astronomy.Observer(lat, lon, 0.0),
                            *_ae_ra_dec(lat, lon, t), astronomy.Refraction.Airless)
    assert abs(d["hc_deg"] - hor.altitude) < 0.2 * ARCMIN


def _ae_ra_dec(lat, lon, t):
    eq = astronomy.Equator(astronomy.Body.Sun, ae_time(t), astronomy.Observer(lat, lon, 0.0),
                           True, True)
    return eq.ra, eq.dec


def test_the_preset_hs_corrects_back_to_hc(capsys):
    """The Hs to preset, run through nav.corrections with the same instrument values, the
    almanac's SD and HP, gives Hc back; and undone in this file's own code (Bennett, dip, IE,
    SD, parallax HP·cos h) it gives Hc within the methods' differences."""
    from nav.corrections import correct_altitude

    d = cli_json(capsys, "noon", "--date", "2026-06-21", "--dr-lat", "37 20 N", "--dr-lon",
                 "025 05 W", "--course", "124", "--speed", "6.5", "--eye-height-m", "2.4",
                 "--index-error", "+1.2")
    c = correct_altitude(d["hs_preset_deg"], body_kind="sun", limb="lower",
                         index_error_arcmin=1.2, eye_height_m=2.4, hp_arcmin=d["sun_hp_arcmin"],
                         sd_arcmin=d["sun_sd_arcmin"], lat_deg=d["lat_deg"], zn_deg=d["zn_deg"])
    assert abs(float(c.ho_deg) - d["hc_deg"]) < 1e-4 * ARCMIN    # JSON: 1e-7°, SD to 1e-4′
    ha = d["hs_preset_deg"] - 1.2 * ARCMIN - 1.76 * math.sqrt(2.4) * ARCMIN
    own = (ha - bennett_arcmin(ha) * ARCMIN + d["sun_sd_arcmin"] * ARCMIN
           + d["sun_hp_arcmin"] * math.cos(math.radians(ha)) * ARCMIN)
    assert abs(own - d["hc_deg"]) < 0.02 * ARCMIN       # SD rounded to 1e-4′ in the JSON


@pytest.mark.parametrize("horizon", ["sea", "bubble", "artificial"])
@pytest.mark.parametrize("ho", [3.0, 25.0, 62.5, 88.0])
def test_hs_for_ho_inverts_the_corrections(ho, horizon):
    """Exact round trip through nav.corrections (the iteration stops at 1e-10′)."""
    from nav.noonsight import hs_for_ho
    from nav.corrections import correct_altitude

    kw = dict(body_kind="sun", limb="lower", index_error_arcmin=-2.1, eye_height_m=3.0,
              horizon=horizon, temperature_c=25.0, pressure_hpa=1020.0, hp_arcmin=0.147,
              sd_arcmin=16.2, lat_deg=-20.0, zn_deg=0.0)
    hs, c = hs_for_ho(ho, **kw)
    assert abs(float(correct_altitude(hs, **kw).ho_deg) - ho) < 1e-9 * ARCMIN
    assert float(c.hs_deg) == hs
    if horizon == "artificial":                         # the reading is twice the altitude
        assert hs == pytest.approx(2 * ho, abs=1.0)


def test_noon_text_output_and_help(capsys):
    code, out, err = run_cli(capsys, "noon", "--date", "2026-06-21", "--dr-lat", "37 20 N",
                             "--dr-lon", "025 05 W", "--zone", "+2")
    assert code == 0 and err == ""
    for label in ("UTC", "zone time", "DR at noon", "GHA Sun", "Dec Sun", "EoT", "Hc",
                  "Hs to preset", "corrections"):
        assert f"\n  {label} " in out, label
    assert out.rstrip().endswith(CAUTION)
    with pytest.raises(SystemExit):
        main(["noon", "--help"])
    helptext = " ".join(capsys.readouterr().out.split())
    assert "12:00 local mean time" in helptext


def test_noon_below_the_horizon_gives_no_preset(capsys):
    # 80° S at midsummer in the north: the Sun (Dec 23.4° N) stays 33° below the horizon at noon
    # (90° − |lat − Dec|, the meridian altitude; textbook).
    d = cli_json(capsys, "noon", "--date", "2026-06-21", "--dr-lat", "-80", "--dr-lon", "0")
    assert d["hs_preset_deg"] is None and d["hc_deg"] < 0
    assert any("below the horizon" in w for w in d["warnings"])


# ---------------------------------------------------------------- nav latitude: meridian sights

def meridian_case(body, lat, *, lower=False, t=datetime(2026, 6, 20, 3, 0, tzinfo=UTC)):
    """Place the observer on the body's meridian at `t` (LHA 0, or 180 below the pole, from
    nav.almanac's GHA, tested against astropy to 0.00003′) and return (lon, Hs)."""
    from nav import almanac

    gha = float(almanac.body_almanac(body, t).gha_deg)
    lon = ((180.0 if lower else 0.0) - gha + 180.0) % 360.0 - 180.0
    return lon, hs_from_airless(airless_alt(body, t, lat, lon))


# Textbook cases (from memory), each as (body, its Dec near, latitude, what the rule says).
MERIDIAN_CASES = [
    ("Arcturus", 45.0, False, "S", True),       # Dec 19° N: same names, body to the south
    ("Antares", 40.0, False, "S", False),       # Dec 26° S, observer north: contrary names
    ("Vega", 10.0, False, "N", False),          # Dec 39° N: observer between equator and Dec
    ("Altair", -33.0, False, "N", False),       # Dec 9° N, observer south: contrary names
    ("Rigil Kentaurus", -10.0, False, "S", False),  # Dec 61° S: between the equator and the Dec
    ("Antares", -50.0, False, "N", True),       # Dec 26° S, observer farther south: same names
    ("Kochab", 60.0, True, "N", None),          # Dec 74° N below the pole (lower transit)
    ("Rigil Kentaurus", -50.0, True, "S", None),  # Dec 61° S below the south pole
]


@pytest.mark.parametrize("body, lat, lower, bearing, same", MERIDIAN_CASES)
def test_meridian_latitude_gives_the_truth_in_every_case(capsys, body, lat, lower, bearing, same):
    lon, hs = meridian_case(body, lat, lower=lower)
    # The DR 12′ off in latitude and 20′ in longitude (so the LHA is 0.33° from the meridian).
    d = cli_json(capsys, "latitude", "--body", body, "--utc", "2026-06-20T03:00:00Z",
                 "--hs", f"{hs:.10f}", "--eye-height-m", str(EYE_M), "--index-error",
                 str(IE_ARCMIN), "--dr-lat", str(lat + 0.2), "--dr-lon", str(lon + 1 / 3))
    assert abs(d["lat_deg"] - lat) < 0.1 * ARCMIN                   # the truth (astropy)
    assert d["method"] == ("lower transit" if lower else "upper transit")
    assert d["bearing"] == bearing and d["same_name"] is same
    assert d["off_meridian_deg"] == pytest.approx(1 / 3, abs=0.01)
    assert d["sight"]["ho_deg"] == pytest.approx(d["ho_deg"], abs=JSON_DEG)
    assert d["caution"] == CAUTION


def test_meridian_latitude_worked_steps_in_text(capsys):
    lon, hs = meridian_case("Antares", 40.0)
    code, out, err = run_cli(capsys, "latitude", "--body", "Antares", "--utc",
                             "2026-06-20T03:00:00Z", "--hs", f"{hs:.10f}", "--eye-height-m",
                             str(EYE_M), "--index-error", str(IE_ARCMIN), "--dr-lat", "40 10 N",
                             "--dr-lon", str(lon))
    assert code == 0 and err == ""
    for label in ("Hs", "dip", "refraction", "Ho", "LHA", "ex-meridian", "bearing",
                  "zenith dist.", "Dec", "rule", "latitude", "DR lat"):
        assert f"\n  {label} " in out, label
    # Antares 26° S, observer 40° N: z = 90° − Ho named N (opposite to the bearing S); contrary
    # names, z (66°) greater than Dec: lat = z − Dec, named N (the rule, from memory).
    assert "contrary names" in out and "lat = z − Dec, named N" in out
    assert "40°00.0′ N" in out and "not a fix" in out


def test_far_from_the_meridian_is_refused(capsys):
    lon, hs = meridian_case("Vega", 45.0)
    code, out, err = run_cli(capsys, "latitude", "--body", "Vega", "--utc",
                             "2026-06-20T03:40:00Z", "--hs", f"{hs:.6f}", "--dr-lat", "45 N",
                             "--dr-lon", str(lon))      # 40 min later: LHA about 10°
    assert code == 2 and out == ""
    (line,) = err.splitlines()
    assert "field 'utc'" in line and "from its upper transit" in line and "nav fix" in line


def test_polaris_at_random_lha_gives_the_truth(capsys):
    """Polaris at 16 instants of 2026 (numpy PCG64, fixed seed), at random latitudes and
    longitudes, so at LHAs all round the pole: the latitude is the truth's (astropy)."""
    from nav import almanac
    from nav.noonsight import meridian_latitude
    from nav.reduction import reduce_sight

    rng = np.random.default_rng(20260620)
    n = 16
    t0 = datetime(2026, 1, 1, tzinfo=UTC)
    when = [t0 + timedelta(seconds=float(s)) for s in rng.uniform(0, 364 * 86400, n)]
    lats, lons = rng.uniform(2.0, 65.0, n), rng.uniform(-180.0, 180.0, n)
    alts = airless_alt("Polaris", when, lats, lons)
    lhas = []
    for t, lat, lon, alt in zip(when, lats, lons, alts):
        red = reduce_sight("Polaris", t, hs_from_airless(float(alt)), index_error_arcmin=IE_ARCMIN,
                           eye_height_m=EYE_M, lat_deg=lat + 0.3, lon_deg=lon)
        work = meridian_latitude(red)
        assert work.method == "Polaris"
        assert abs(work.lat_deg - lat) < 0.1 * ARCMIN, (t, lat, lon)
        lhas.append(float(almanac.lha_deg(almanac.body_almanac("Polaris", t).gha_deg, lon)))
    assert np.ptp(lhas) > 270.0                 # the LHAs do go round (precondition)
    # Once through the CLI, with the almanac values shown.
    t, lat, lon = when[0], float(lats[0]), float(lons[0])
    d = cli_json(capsys, "latitude", "--body", "polaris", "--utc", f"{t:%Y-%m-%dT%H:%M:%S.%fZ}",
                 "--hs", f"{hs_from_airless(float(alts[0])):.10f}", "--eye-height-m", str(EYE_M),
                 "--index-error", str(IE_ARCMIN), "--dr-lat", str(lat - 0.4), "--dr-lon",
                 str(lon))
    assert abs(d["lat_deg"] - lat) < 0.1 * ARCMIN and d["method"] == "Polaris"
    assert d["polar_distance_deg"] == pytest.approx(90.0 - d["dec_deg"], abs=2 * JSON_DEG)
    # GHA = GHA Aries + SHA (the almanac's relation)
    gap = (d["gha_aries_deg"] + d["sha_deg"] - d["gha_deg"] + 180.0) % 360.0 - 180.0
    assert abs(gap) < 3 * JSON_DEG


# ---------------------------------------------------------------- longitude by the time of noon

@pytest.mark.parametrize("lon", [-179.95, -64.3, 0.0, 18.4, 179.95])
def test_longitude_from_the_time_of_transit(lon):
    from nav.noonsight import timed_noon_longitude

    t = ae_transit(25.0, lon, datetime(2026, 8, 15, tzinfo=UTC) - timedelta(hours=lon / 15))
    work = timed_noon_longitude(t)
    # 1 s of time = 0.25′ of longitude (astronomy-engine's UT1 ≈ UTC, above)
    assert abs((work.lon_deg - lon + 180.0) % 360.0 - 180.0) < 0.25 * ARCMIN
    assert abs((float(work.working.lon_deg) - work.lon_deg + 180) % 360 - 180) < 1e-6 * ARCMIN


def test_how_long_the_sun_hangs_at_noon():
    """hang_minutes against a brute-force solve of the altitude formula (spherical trigonometry,
    sin h = sin φ sin δ + cos φ cos δ cos t; textbook) for a 0.1′ drop from the meridian."""
    from nav.noonsight import hang_minutes

    for lat, dec in ((37.3, 23.4), (-33.9, -15.0), (50.0, -20.0), (10.0, 8.0)):
        h0 = 90.0 - abs(lat - dec)
        lo, hi = 0.0, 10.0                                  # hour angle, degrees
        for _ in range(80):
            mid = (lo + hi) / 2
            h = math.degrees(math.asin(math.sin(math.radians(lat)) * math.sin(math.radians(dec))
                                       + math.cos(math.radians(lat)) * math.cos(math.radians(dec))
                                       * math.cos(math.radians(mid))))
            lo, hi = (mid, hi) if h0 - h < 0.1 * ARCMIN else (lo, mid)
        assert hang_minutes(lat, dec) == pytest.approx(lo * 4.0, rel=0.02)  # the expansion


# ---------------------------------------------------------------- bad input

@pytest.mark.parametrize("argv, field", [
    (["noon", "--dr-lat", "45", "--dr-lon", "-30"], "date"),
    (["noon", "--date", "2026-02-30", "--dr-lat", "45", "--dr-lon", "-30"], "date"),
    (["noon", "--date", "21/06/2026", "--dr-lat", "45", "--dr-lon", "-30"], "date"),
    (["noon", "--date", "2151-06-21", "--dr-lat", "45", "--dr-lon", "-30"], "date"),
    (["noon", "--date", "2026-06-21", "--dr-lat", "95 N", "--dr-lon", "-30"], "dr_lat"),
    (["noon", "--date", "2026-06-21", "--dr-lat", "45"], "dr_lon"),
    (["noon", "--date", "2026-06-21", "--dr-lat", "45", "--dr-lon", "-30", "--speed", "6"],
     "course"),
    (["noon", "--date", "2026-06-21", "--dr-lat", "45", "--dr-lon", "-30", "--course", "400",
      "--speed", "6"], "course"),
    (["noon", "--date", "2026-06-21", "--dr-lat", "45", "--dr-lon", "-30", "--zone", "+15"],
     "zone"),
    (["noon", "--date", "2026-06-21", "--dr-lat", "45", "--dr-lon", "-30", "--eye-height-m",
      "tall"], "eye_height_m"),
    (["latitude", "--body", "Vegaa", "--utc", "2026-06-20T03:00:00Z", "--hs", "60",
      "--dr-lat", "45", "--dr-lon", "-30"], "body"),
    (["latitude", "--body", "Vega", "--utc", "2026-06-20T03:00:00", "--hs", "60",
      "--dr-lat", "45", "--dr-lon", "-30"], "utc"),
    (["latitude", "--body", "Vega", "--utc", "2026-06-20T03:00:00Z", "--hs", "95",
      "--dr-lat", "45", "--dr-lon", "-30"], "hs"),
    (["latitude", "--body", "Vega", "--utc", "2026-06-20T03:00:00Z", "--hs", "60",
      "--limb", "upper", "--dr-lat", "45", "--dr-lon", "-30"], "limb"),
    (["latitude", "--body", "Vega", "--utc", "2026-06-20T03:00:00Z", "--hs", "60",
      "--dr-lat", "45"], "dr_lon"),
    (["latitude", "--body", "Vega", "--utc", "2026-06-20T03:00:00Z", "--hs", "60",
      "--index-error", "ten", "--dr-lat", "45", "--dr-lon", "-30"], "index_error"),
])
def test_bad_input_is_one_line_and_exit_2(capsys, argv, field):
    code, out, err = run_cli(capsys, *argv)
    assert code == 2 and out == ""
    (line,) = err.splitlines()
    assert line.startswith(f"nav {argv[0]}: ") and f"field '{field}'" in line, line
    assert "for example" in line and "Traceback" not in err


def test_date_parser():
    from nav.noonsight import parse_date
    from nav.errors import NavInputError

    assert parse_date(" 2026-06-21 ") == date(2026, 6, 21)
    for bad in ("2026-6-21", "2026-06-21 12:00", "", "2026-00-10"):
        with pytest.raises(NavInputError) as err:
            parse_date(bad)
        assert err.value.field == "date"


def test_nav_noon_as_a_subprocess():
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    proc = subprocess.run([sys.executable, "-m", "nav", "noon", "--date", "2026-06-21",
                           "--dr-lat", "37 20 N", "--dr-lon", "025 05 W", "--json"],
                          capture_output=True, text=True, cwd=REPO.parent, env=env, timeout=60)
    assert proc.returncode == 0, proc.stderr
    d = json.loads(proc.stdout)
    ref = ae_transit(37 + 1 / 3, -(25 + 1 / 12), datetime(2026, 6, 21, 2, 0, tzinfo=UTC))
    assert abs(z_time(d["utc"]) - ref) < INSTANT_TOL
    bad = subprocess.run([sys.executable, "-m", "nav", "noon", "--date", "tomorrow", "--dr-lat",
                          "37", "--dr-lon", "-25"], capture_output=True, text=True,
                         cwd=REPO.parent, env=env, timeout=60)
    assert bad.returncode == 2 and bad.stdout == "" and len(bad.stderr.splitlines()) == 1
