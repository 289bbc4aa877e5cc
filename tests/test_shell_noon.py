"""The shell's noon commands (nav/shell/meridian_cmds.py): `noon`, `latitude`, `longitude`,
driven line by line (as tests/test_shell.py drives the shell) on an invented passage: the sloop
"Tern Reach" (invented) south-east of the Azores, 21 June 2026.

References (independent of nav's chain):
- astronomy-engine (PyPI 2.1): ``HourAngle(Body.Sun, t, observer)``, the Sun's hour angle at the
  vessel's longitude at the noon the shell predicts (0 at the transit), and
  ``SearchHourAngle`` for the Sun's transit at a fixed place. It treats UTC as UT1
  (|UT1 − UTC| < 0.9 s) and the shell prints whole seconds: instants are compared to 2 s.
- astropy (ERFA inside; DE421 for the Sun, nav's Hipparcos row of Polaris propagated by
  astropy, tests/reference_sky.py): the airless topocentric altitude at the vessel's position on
  WGS 84, pressure 0; a sextant reading is made from it by undoing, in code of this file,
  Bennett's refraction (J. Navigation 35, 1982, with the zenith constant nav.corrections states),
  the dip 1.76′·√h(m) (the almanac's dip formula) and the index error (+ on the arc reads high).
- The vessel's track: Mercator sailing written out here (American Practical Navigator), leg by
  leg, not nav.sailing. The shell prints to 0.1′, so printed angles are compared to the
  method's bound plus 0.05′.
"""

from __future__ import annotations

import math
import os
import re
import warnings
from datetime import datetime, timedelta
from io import StringIO

import astronomy
import numpy as np
import pytest

from nav.angles import parse_altitude, parse_lat, parse_lon
from nav.logbook import load_log
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG as ARCMIN
from references import star_skycoord
from references import mercator_sailing
from shell_driver import open_state, run_lines

PRINTED = 0.05 * ARCMIN                     # the shell prints angles to 0.1′
INSTANT_TOL_S = 2.0                         # see the module docstring
SUN_RADIUS_KM = 696_000.0                   # the radius behind the almanac's SD 15.99′ at 1 AU
CLOCK_NOW = datetime(2026, 6, 21, 15, 0, tzinfo=UTC)

# ---------------------------------------------------------------- the scenario (invented)
EYE_M, IE_ARCMIN, ZD_H, WATCH_FAST_S = 2.4, 1.2, 2.0, 6.0
START = (datetime(2026, 6, 21, 8, 0, tzinfo=UTC), 37 + 43 / 60, -(25 + 38 / 60))
LEGS = ((datetime(2026, 6, 21, 8, 0, tzinfo=UTC), 124.0, 6.5),
        (datetime(2026, 6, 21, 11, 0, tzinfo=UTC), 150.0, 7.0))
SETUP = ("set eye 2.4 ie +1.2 zone +2 watch 6 fast",                           # e0002
         "dr 37 43.0 N 025 38.0 W course 124 speed 6.5 at 2026-06-21T08:00:00Z",  # e0003
         "course 150 speed 7 at 2026-06-21T11:00:00Z")                           # e0004


def clock():
    return CLOCK_NOW




def track(t: datetime, start=START, legs=LEGS) -> tuple[float, float]:
    """Where the sloop is at `t` (after START): her legs sailed one after the other."""
    _, lat, lon = start
    now = start[0]
    for i, (_, course, speed) in enumerate(legs):
        end = legs[i + 1][0] if i + 1 < len(legs) else t
        end = min(end, t)
        if end > now:
            hours = (end - now).total_seconds() / 3600
            lat, lon = mercator_sailing(lat, lon, course, speed * hours)
            now = end
    return lat, lon


def ae_time(t: datetime):
    t = t.astimezone(UTC)
    return astronomy.Time.Make(t.year, t.month, t.day, t.hour, t.minute,
                               t.second + t.microsecond / 1e6)


def _de421_path() -> str:
    import skyfield_data

    return os.path.join(os.path.dirname(skyfield_data.__file__), "data", "de421.bsp")


def airless_alt(body: str, when: datetime, lat: float, lon: float) -> float:
    """astropy: airless topocentric altitude of a star, or of the Sun's lower limb."""
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, get_body, solar_system_ephemeris
    from astropy.time import Time

    from nav.stars import find_star

    t = Time(when.astimezone(UTC).replace(tzinfo=None), scale="utc")
    loc = EarthLocation.from_geodetic(lon=lon * u.deg, lat=lat * u.deg, height=0 * u.m)
    frame = AltAz(obstime=t, location=loc, pressure=0 * u.hPa)
    with warnings.catch_warnings():
        warnings.simplefilter("error")   # no degraded-accuracy fallback may pass unnoticed
        if body == "Sun":
            with solar_system_ephemeris.set(_de421_path()):
                aa = get_body("sun", t, location=loc).transform_to(frame)
            return float(aa.alt.deg) - math.degrees(math.asin(SUN_RADIUS_KM / aa.distance.km))
        star = star_skycoord(find_star(body))
        return float(star.apply_space_motion(new_obstime=t).transform_to(frame).alt.deg)


def hs_from_airless(h_deg: float) -> float:
    """+ refraction (Bennett, inverted by bisection), + dip, + index error."""
    def bennett(ha):
        zenith = -1.0 / math.tan(math.radians(90.0 + 7.31 / 94.4))
        return 1.0 / math.tan(math.radians(ha + 7.31 / (ha + 4.4))) + zenith

    lo, hi = h_deg, h_deg + 1.0
    for _ in range(60):
        mid = (lo + hi) / 2
        lo, hi = (lo, mid) if mid - bennett(mid) * ARCMIN > h_deg else (mid, hi)
    return (lo + hi) / 2 + 1.76 * math.sqrt(EYE_M) * ARCMIN + IE_ARCMIN * ARCMIN


# ---------------------------------------------------------------- driving the shell

@pytest.fixture
def state(tmp_path):
    """A shell state on a new log, writing to a buffer (line by line, as the line mode does)."""
    st, log = open_state(tmp_path / "tern-reach.jsonl", "Tern Reach (invented)", "noon test", clock)
    yield st
    log.close()


def row(out: str, label: str) -> str:
    """The value column of a printed row `  label   value   note`."""
    m = re.search(rf"^  {re.escape(label)} +(\S.*?)(?:  +\S.*)?$", out, re.M)
    assert m, f"no row {label!r} in\n{out}"
    return m.group(1)


def printed_position(out: str, label: str) -> tuple[float, float]:
    m = re.search(rf"^  {re.escape(label)} +(\d+°\d\d\.\d′ [NS])  (\d+°\d\d\.\d′ [EW])", out,
                  re.M)
    assert m, f"no position {label!r} in\n{out}"
    return parse_lat(m.group(1)), parse_lon(m.group(2))


def noon_utc(out: str) -> datetime:
    m = re.search(r"^  UTC +(\d\d:\d\d:\d\d) +(\d{4}-\d\d-\d\d)$", out, re.M)
    return datetime.fromisoformat(f"{m.group(2)}T{m.group(1)}").replace(tzinfo=UTC)


# ---------------------------------------------------------------- noon

def test_noon_of_the_sloop_under_way(state):
    out = run_lines(state, *SETUP, "noon")
    assert "error" not in out
    assert "date: 2026-06-21 (the zone date of the latest entry with a time, e0004)" in out
    t = noon_utc(out)
    lat, lon = track(t)
    # The truth at noon: the Sun's hour angle at her longitude is 0 (astronomy-engine), after
    # the change of course at 11:00 that the prediction had to follow.
    ha_s = astronomy.HourAngle(astronomy.Body.Sun, ae_time(t), astronomy.Observer(lat, lon, 0))
    assert abs(((ha_s + 12) % 24 - 12) * 3600) < INSTANT_TOL_S
    dr = printed_position(out, "DR at noon")
    assert abs(dr[0] - lat) < 0.01 * ARCMIN + PRINTED and abs(dr[1] - lon) < 0.01 * ARCMIN + PRINTED
    # UTC = ZT + ZD; a watch 6 s fast reads ahead of ZT (the trade's rules).
    zt = t - timedelta(hours=ZD_H)
    assert row(out, "zone time") == f"{zt:%H:%M:%S}"
    assert row(out, "watch") == f"{zt + timedelta(seconds=WATCH_FAST_S):%H:%M:%S}"
    assert "the watch reading to expect (watch 6 s fast)" in out
    assert "course       150.0°, 7 kn" in out
    # Hs to preset, back through nav.corrections with the settings in force, is Hc.
    from nav.noonsight import noon_from_passage
    from nav.corrections import correct_altitude

    p = noon_from_passage(state.passage, t.date())
    c = correct_altitude(p.hs_preset_deg, body_kind="sun", limb="lower",
                         index_error_arcmin=IE_ARCMIN, eye_height_m=EYE_M,
                         hp_arcmin=p.sun_hp_arcmin, sd_arcmin=p.sun_sd_arcmin,
                         lat_deg=p.noon.lat_deg, zn_deg=p.zn_deg)
    assert abs(float(c.ho_deg) - p.hc_deg) < 1e-8 * ARCMIN
    assert abs(parse_altitude(row(out, "Hs to preset")) - p.hs_preset_deg) <= PRINTED
    assert abs(parse_altitude(row(out, "Hc")) - p.hc_deg) <= PRINTED
    assert "CAUTION" in out


def test_noon_follows_a_change_of_leg_between_noon_and_its_first_estimate(state):
    """In November the Sun crosses some 16 min before 12:00 local mean time (EoT +16 min, from
    memory): a change of course and speed 8 min before 12:00 LMT lies between the first estimate
    and the transit, so the leg in force at the first estimate is the wrong one to sail back
    along; the prediction must solve again from the leg in force at the transit."""
    start = (datetime(2026, 11, 3, 8, 0, tzinfo=UTC), 37.0, -25.0)
    legs = ((start[0], 80.0, 6.0), (datetime(2026, 11, 3, 13, 29, tzinfo=UTC), 260.0, 25.0))
    out = run_lines(state, "dr 37 00.0 N 025 00.0 W course 080 speed 6 at 2026-11-03T08:00:00Z",
                    "course 260 speed 25 at 2026-11-03T13:29:00Z", "noon")
    t = noon_utc(out)
    assert t < legs[1][0] < t + timedelta(minutes=16)             # the case this test is about
    lat, lon = track(t, start, legs)
    ha_h = astronomy.HourAngle(astronomy.Body.Sun, ae_time(t), astronomy.Observer(lat, lon, 0))
    assert abs(((ha_h + 12) % 24 - 12) * 3600) < INSTANT_TOL_S
    assert "course       080.0°, 6 kn" in out


def test_noon_date_defaults_and_given(state):
    # The latest entry with a time is at 01:00 UTC on the 21st; with ZD +3 that is 22:00 on the
    # 20th, the ship's date (UTC = ZT + ZD).
    out = run_lines(state, "set zone +3", "dr 37 43.0 N 025 38.0 W at 2026-06-20T09:00:00Z",
                    "note hove to for the night", "dr 37 40.0 N 025 30.0 W at 2026-06-21T01:00:00Z",
                    "noon")
    assert "date: 2026-06-20 (the zone date of the latest entry with a time, e0005)" in out
    assert "Local apparent noon on 2026-06-20" in out
    assert "no course and speed in force: the DR is held" in out
    out = run_lines(state, "noon 2026-06-21")
    assert "date: 2026-06-21 (given)" in out and "Local apparent noon on 2026-06-21" in out
    assert len(state.log.entries) == 5                          # noon logs nothing


# ---------------------------------------------------------------- latitude

def test_noon_sight_gives_her_latitude_and_a_note(state):
    out = run_lines(state, *SETUP, "noon")
    t = noon_utc(out)
    lat, lon = track(t)
    hs = hs_from_airless(airless_alt("Sun", t, lat, lon))
    out = run_lines(state, f"sight Sun {hs:.8f} at {t:%Y-%m-%dT%H:%M:%SZ}", "latitude e0005")
    assert "Latitude by meridian altitude (upper transit)" in out
    assert abs(parse_lat(row(out, "latitude")) - lat) < 0.1 * ARCMIN + PRINTED
    # the worked steps: Ho, z named, Dec named, same names (Sun 23° N, she at 37° N, bearing S)
    assert row(out, "bearing") == "S" and row(out, "zenith dist.").endswith(" N")
    assert row(out, "rule") == "same names" and "lat = z + Dec, named N" in out
    assert "Sight e0005: Sun lower limb" in out and "DR basis     DR " in out
    before = state.passage.where(t)
    n = len(state.log.entries)
    out = run_lines(state, "latitude e0005 log")
    assert len(state.log.entries) == n + 1
    note = state.log.entries[-1]
    assert note.kind == "note" and note["text"].startswith("latitude 37°")
    assert "line of position, not a fix" in note["text"]
    assert note["utc"].startswith(f"{t:%Y-%m-%dT%H:%M:%S}")
    assert not state.log.effective_entries("fix")
    after = state.passage.where(t)                              # the DR is not moved
    assert (after.lat_deg, after.lon_deg) == (before.lat_deg, before.lon_deg)
    load_log(state.log.path)                                    # the log reads strictly


def test_a_sight_far_from_the_meridian_is_refused(state):
    run_lines(state, *SETUP)
    t = datetime(2026, 6, 21, 10, 0, tzinfo=UTC)                # the morning Sun, LHA about 300°
    hs = hs_from_airless(airless_alt("Sun", t, *track(t)))
    run_lines(state, f"sight Sun {hs:.6f} at 10:00:00")           # e0005
    n = len(state.log.entries)
    out = run_lines(state, "latitude e0005", "latitude e0005 log")
    errors = [line for line in out.splitlines() if line.startswith("error:")]
    assert len(errors) == 2 and all("field 'id'" in e for e in errors)
    assert "from its upper transit" in errors[0] and "within 1° of LHA" in errors[0]
    assert "fix e0005" in errors[0]
    assert len(state.log.entries) == n                          # nothing logged


def test_polaris_in_the_evening(state):
    run_lines(state, *SETUP)
    t = datetime(2026, 6, 21, 22, 10, tzinfo=UTC)
    lat, lon = track(t)
    hs = hs_from_airless(airless_alt("Polaris", t, lat, lon))
    out = run_lines(state, f"sight Polaris {hs:.8f} at 22:10:00", "latitude e0005")
    assert "Latitude by Polaris" in out
    assert abs(parse_lat(row(out, "latitude")) - lat) < 0.1 * ARCMIN + PRINTED
    for label in ("GHA Aries", "SHA", "GHA", "LHA", "Dec", "lat − Ho", "DR lon"):
        assert f"\n  {label} " in out, label
    assert "polar distance p 0°3" in out                        # Polaris about 0°38′ from the pole


# ---------------------------------------------------------------- longitude

@pytest.mark.parametrize("lon", [-25.5, 140.25])
def test_longitude_from_the_timed_transit(state, lon):
    ev = astronomy.SearchHourAngle(astronomy.Body.Sun, astronomy.Observer(37.0, lon, 0), 0.0,
                                   ae_time(datetime(2026, 6, 21, tzinfo=UTC)
                                           - timedelta(hours=lon / 15)))
    t = ev.time.Utc().replace(tzinfo=UTC)
    out = run_lines(state, f"longitude at {t:%Y-%m-%dT%H:%M:%S.%f}Z")
    assert "error" not in out
    # 1 s of time = 0.25′ of longitude (astronomy-engine's UT1 ≈ UTC)
    assert abs(parse_lon(row(out, "longitude")) - lon) < 0.25 * ARCMIN + PRINTED
    assert "each minute of time misjudged is 15′ of longitude" in " ".join(out.split())
    for label in ("GHA Sun", "EoT", "Greenwich", "observed", "difference"):
        assert f"\n  {label} " in out, label


def test_longitude_on_the_watch_with_a_note(state):
    run_lines(state, *SETUP)
    # watch 11:42:15, 6 s fast -> ZT 11:42:09; UTC = ZT + ZD(+2) = 13:42:09
    out = run_lines(state, "longitude zt 11:42:15 log")
    assert "UTC = ZT + ZD = 2026-06-21 13:42:09" in out
    assert "At the DR the Sun stays within 0.1′ of its meridian altitude for ±" in \
        " ".join(out.split())
    note = state.log.entries[-1]
    assert note.kind == "note" and note["text"].startswith("longitude 0")
    assert note["utc"].startswith("2026-06-21T13:42:09")


# ---------------------------------------------------------------- bad lines, help, completion

@pytest.mark.parametrize("line, field", [
    ("noon 2026-13-01", "date"), ("noon 21/06/2026", "date"), ("noon 2026-06-21 now", "noon"),
    ("latitude", "id"), ("latitude e0099", "id"), ("latitude e0002", "id"),
    ("latitude e0005 twice", "id"), ("longitude", "at"), ("longitude at 25:00", "at"),
    ("longitude 13:00 14:00", "at"), ("longitude at 2150-06-21T12:00:00Z", "at"),
])
def test_bad_lines_are_refused_and_log_nothing(state, line, field):
    run_lines(state, *SETUP, "sight Sun 40 00.0 at 10:00:00")     # e0005
    n = len(state.log.entries)
    out = run_lines(state, line)
    (err,) = [x for x in out.splitlines() if x.startswith("error:")]
    assert f"field '{field}'" in err and "for example" in err, err
    assert len(state.log.entries) == n


def test_noon_and_latitude_need_a_dr(state):
    out = run_lines(state, "noon 2026-06-21", "sight Vega 40 at 2026-06-21T22:00:00Z",
                    "latitude e0002", "strike e0002 wrong star", "latitude e0002")
    errors = [x for x in out.splitlines() if x.startswith("error:")]
    assert "field 'dr': no position is known" in errors[0]
    assert "field 'dr': e0002 has no DR at its time" in errors[1]
    assert "field 'id': e0002 is struck" in errors[2]


def test_help_and_completion(state):
    from prompt_toolkit.document import Document

    from nav.shell.complete import ShellCompleter

    def completions(text):
        return [c.text for c in ShellCompleter(lambda: state).get_completions(Document(text),
                                                                              None)]

    run_lines(state, *SETUP, "sight Sun 40 00.0 at 10:00:00")     # e0005
    out = run_lines(state, "help", "help latitude", "help noon", "help longitude")
    assert re.search(r"^  noon +predict local apparent noon", out, re.M)
    assert "within 1° of LHA (4 min of time for the Sun)" in out
    assert "1 min of time is 15′ of longitude" in out
    assert completions("lat") == ["latitude"] and completions("lon") == ["longitude"]
    assert completions("latitude ") == ["e0005"]
    assert completions("latitude e0005 ") == ["log"]
    assert completions("longitude ") == ["at", "zt"]


def test_line_mode_of_the_shell_app(tmp_path):
    """The same commands through nav.shell.app's line mode (standard input not a terminal)."""
    from nav.shell.app import run_shell

    out = StringIO()
    lines = "\n".join((*SETUP, "noon", "longitude at 13:42:00", "quit")) + "\n"
    status = run_shell(tmp_path / "t.jsonl", stdin=StringIO(lines), stdout=out, stderr=out,
                       interactive=False, clock=clock)
    text = out.getvalue()
    assert status == 0, text
    assert "Local apparent noon on 2026-06-21" in text and "Longitude by the time of noon" in text
    assert np.isfinite(parse_lon(row(text, "longitude")))
