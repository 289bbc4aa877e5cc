"""nav.planning / `nav plan`: twilight time, candidates, presets, flags, the suggested set.

References:
- astropy 5+/ERFA: the Sun's airless topocentric altitude at the twilight instant nav gives (at
  the vessel's position then), the altitude and azimuth of candidates, the angular separation of
  a body from the Moon.
- The lit limb of the Moon faces the Sun (common practice, no source): constructed cases.
- Spread and widest gap recomputed here from the chosen azimuths (definition in nav.planning).
Scenarios (the ketch "Merganser", invented) are invented.
"""

import json
from datetime import date, datetime

import numpy as np
import pytest

from nav.planning import _moon_lit_limb, plan, select_set, spread_and_gap, twilight_instant
from nav.sky import Track, noon_track
from nav.timekeeping import UTC, to_datetime64
from nav.units import ARCMIN_DEG

DAY = date(2026, 6, 21)


def _altaz(body, utc, lat, lon):
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, get_body
    from astropy.time import Time

    from nav.stars import find_star
    from references import star_skycoord

    t = Time(np.atleast_1d(to_datetime64(utc)), scale="utc")
    loc = EarthLocation.from_geodetic(lon=lon * u.deg, lat=lat * u.deg, height=0 * u.m)
    if body in ("sun", "moon", "venus", "jupiter"):
        c = get_body(body, t, loc)
    else:
        c = star_skycoord(find_star(body)).apply_space_motion(new_obstime=t)
    return c, c.transform_to(AltAz(obstime=t, location=loc, pressure=0 * u.hPa))


@pytest.mark.parametrize("when,dep", [("evening", 6.0), ("morning", 6.0), ("morning", 9.0)])
def test_twilight_instant_against_astropy(when, dep):
    track, zd = noon_track(DAY, 41.2, -32.1, 245.0, 6.5, None)
    t = twilight_instant(DAY, track, zd, when, dep)
    lat, lon = (float(x) for x in track.at(to_datetime64(t)))
    alts = []
    for dt in (-60, 0, 60):
        from datetime import timedelta
        _, aa = _altaz("sun", t + timedelta(seconds=dt), lat, lon)
        alts.append(float(aa.alt.deg[0]))
    rate = (alts[2] - alts[0]) / 120.0
    assert abs((alts[1] + dep) / rate) < 60.0         # issue 9: within 1 min for the Sun
    assert (rate > 0) == (when == "morning")


def test_candidates_against_astropy_and_the_set():
    track, zd = noon_track(DAY, 41.2, -32.1, 245.0, 6.5, None)
    t = twilight_instant(DAY, track, zd, "evening")
    p = plan(t, track, count=5, eye_height_m=2.4, index_error_arcmin=1.2)
    assert abs(p.sun_alt_deg + 6.0) < 0.01
    by = {b.body: b for b in p.bodies}
    for name, key in (("Vega", "Vega"), ("Arcturus", "Arcturus"), ("Venus", "venus")):
        _, aa = _altaz(key, t, p.lat_deg, p.lon_deg)
        assert abs(by[name].hc_deg - float(aa.alt.deg[0])) < 0.3 * ARCMIN_DEG
        assert abs(by[name].zn_deg - float(aa.az.deg[0])) < 0.3 * ARCMIN_DEG * 10
    assert all(15.0 <= b.hc_deg <= 70.0 for b in p.bodies)
    assert len(p.selection) == 5 and set(p.selection) <= set(by)
    zs = sorted(by[n].zn_deg for n in p.selection)
    gaps = [(zs[(i + 1) % 5] - zs[i]) % 360 for i in range(5)]
    assert p.widest_gap_deg == pytest.approx(max(gaps)) and \
        p.azimuth_spread_deg == pytest.approx(360 - max(gaps))
    assert "Venus" in p.selection                         # the brightest body is the seed
    a, b = p.window
    assert a < t < b                                      # civil twilight inside −3°..−9°


def test_near_moon_flag_against_astropy():
    t = datetime(2026, 7, 16, 22, 0, tzinfo=UTC)          # found by a scan; checked here
    p = plan(t, Track(t, 30.0, -40.0))
    moon, _ = _altaz("moon", t, 30.0, -40.0)
    for b in p.bodies:
        if b.kind == "star":
            star, _ = _altaz(b.body, t, 30.0, -40.0)
            sep = float(moon.separation(star).deg[0])
            if abs(sep - 15.0) > 0.5:
                assert b.near_moon == (sep < 15.0), (b.body, sep)
    assert any(b.near_moon for b in p.bodies)
    assert not set(p.selection) & {b.body for b in p.bodies if b.near_moon}


def test_lit_limb_faces_the_sun():
    # common practice: the bright limb faces the Sun
    assert _moon_lit_limb(30.0, 180.0, -10.0, 180.0)[0] == "lower"   # Sun straight below
    assert _moon_lit_limb(20.0, 100.0, 60.0, 100.0)[0] == "upper"    # Sun straight above
    assert _moon_lit_limb(0.0, 180.0, 0.0, 270.0)[0] == "side"       # both on the horizon


def test_spread_and_selection_helpers():
    assert spread_and_gap([0, 90, 180, 270]) == (270.0, 90.0)
    assert spread_and_gap([350, 10]) == (20.0, 340.0)
    assert select_set((), 5) == []


def test_cli_plan_json_contract_and_sketch(tmp_path, capsys):
    from nav.cli import main

    png = tmp_path / "sky.png"
    rc = main(["plan", "--twilight", "evening", "--date", "2026-06-21", "--dr-lat", "41 12 N",
               "--dr-lon", "032 06 W", "--course", "245", "--speed", "6.5", "--count", "4",
               "--sketch", str(png), "--json"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert {"utc", "sun_alt_deg", "bodies", "selection", "azimuth_spread_deg"} <= set(out)
    assert set(out["bodies"][0]) >= {"body", "hc_deg", "zn_deg", "magnitude", "hs_preset_deg"}
    assert len(out["selection"]) == 4
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert main(["plan", "--twilight", "evening", "--date", "2026-06-21", "--dr-lat", "78 N",
                 "--dr-lon", "15 E"]) == 2                 # polar day: no twilight
    assert "does not reach" in capsys.readouterr().err
    assert main(["plan", "--utc", "2026-06-21T22:00:00Z", "--dr-lat", "41 N", "--dr-lon",
                 "32 W", "--count", "9"]) == 2


def test_shell_plan_from_the_log(tmp_path):
    from shell_driver import open_state, run_lines

    st, log = open_state(tmp_path / "m.jsonl", "Merganser", "Westward",
                         lambda: datetime(2026, 6, 21, 15, 0, tzinfo=UTC))
    try:
        out = run_lines(st, "set eye 2.4 ie +1.2 zone +2",
                        "dr 41 12.0 N 032 06.0 W course 245 speed 6.5 at 2026-06-21T14:00:00Z",
                        "plan evening count 4", "plan dusk", "plan morning count 9")
    finally:
        log.close()
    assert "Suggested set (*)" in out and out.count("\n  * ") == 4
    assert out.count("error:") == 2 and "morning or evening" in out
