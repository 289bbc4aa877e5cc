"""nav.identify / `nav identify`, and the bright-star table it draws on.

References:
- astropy 5+/ERFA: the airless topocentric altitude and azimuth of a star (nav's Hipparcos row
  propagated by astropy, tests/references.py) or of a planet (astropy's built-in ephemeris). A
  sextant reading is made from it in this file: + Bennett's refraction (J. Navigation 35, 1982:
  R = cot(h + 7.31/(h + 4.4)) arcmin, from memory) + the dip 1.76′·√h(m) (the almanac's dip
  formula, from memory).
- PyEphem's star list (libastro): the proper names of the bright stars are checked against it.
- The observed point's Dec and SHA: nav's answer is checked against the star's own Dec and SHA
  of date (astropy, TETE frame) when the bearing is exact.
Scenarios (the cutter "Kittiwake" west of the Azores) are invented.
"""

import json
import subprocess
import sys
from datetime import datetime
from importlib import resources
from pathlib import Path

import numpy as np
import pytest

from nav.identify import identify
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG

REPO = Path(__file__).resolve().parent.parent
T = datetime(2026, 6, 21, 23, 30, tzinfo=UTC)
LAT, LON, EYE = 40.3, -34.6, 2.4


def _astropy(body, utc, lat=LAT, lon=LON):
    import astropy.units as u
    from astropy.coordinates import TETE, AltAz, EarthLocation, get_body
    from astropy.time import Time

    from nav.stars import bright_star_table, find_star
    from references import star_skycoord

    t = Time(utc.replace(tzinfo=None), scale="utc")
    loc = EarthLocation.from_geodetic(lon=lon * u.deg, lat=lat * u.deg, height=0 * u.m)
    if body in ("Jupiter", "Saturn", "Venus", "Mars"):
        c = get_body(body.lower(), t, loc)
    else:
        recs = {r.name: r for r in bright_star_table()}
        c = star_skycoord(recs[body] if body in recs else find_star(body))
        c = c.apply_space_motion(new_obstime=t)
    aa = c.transform_to(AltAz(obstime=t, location=loc, pressure=0 * u.hPa))
    tete = c.transform_to(TETE(obstime=t))
    return aa.alt.deg, aa.az.deg, tete.dec.deg, (360.0 - tete.ra.deg) % 360.0


def _hs(alt_deg, eye_m=EYE):
    """A sextant altitude for a true airless altitude (Bennett refraction + dip, IE 0)."""
    h = alt_deg
    for _ in range(5):                              # the apparent altitude ha: ha − R(ha) = h
        r = 1.0 / np.tan(np.radians(h + 7.31 / (h + 4.4))) * ARCMIN_DEG
        h = alt_deg + r
    return h + 1.76 * np.sqrt(eye_m) * ARCMIN_DEG


@pytest.mark.parametrize("body", ["Vega", "Merak", "Jupiter", "Alphecca"])
def test_the_body_observed_ranks_first(body):
    utc = T if body != "Jupiter" else datetime(2026, 6, 21, 21, 30, tzinfo=UTC)
    alt, az, dec, sha = _astropy(body, utc)
    assert alt > 10
    r = identify(utc, _hs(alt), az + 2.0, LAT, LON, eye_height_m=EYE)   # bearing 2° out
    assert r.candidates and r.candidates[0].body == body
    assert abs(r.candidates[0].altitude_diff_arcmin) < 1.0
    assert abs(r.candidates[0].azimuth_diff_deg - 2.0) < 0.05


def test_observed_point_dec_and_sha_against_astropy():
    alt, az, dec, sha = _astropy("Vega", T)
    r = identify(T, _hs(alt), az, LAT, LON, eye_height_m=EYE)
    assert abs(r.observed_dec_deg - dec) < 0.5 * ARCMIN_DEG
    assert abs((r.observed_sha_deg - sha + 180) % 360 - 180) < 1.0 * ARCMIN_DEG


def test_two_belt_stars_fit_about_equally():
    # Mintaka and Alnilam are 1.4° apart (common practice): a rough bearing cannot part them
    utc = datetime(2026, 1, 15, 22, 0, tzinfo=UTC)
    a1, z1, _, _ = _astropy("Mintaka", utc)
    a2, z2, _, _ = _astropy("Alnilam", utc)
    r = identify(utc, _hs((a1 + a2) / 2), (z1 + z2) / 2, LAT, LON, eye_height_m=EYE)
    assert r.tie
    assert {r.candidates[0].body, r.candidates[1].body} <= {"Mintaka", "Alnilam", "Alnitak"}


def test_nothing_fits_gives_dec_and_sha():
    r = identify(T, 30.0, 200.0, LAT, LON)
    assert not r.candidates and len(r.nearest) == 3
    assert -90 <= r.observed_dec_deg <= 90 and 0 <= r.observed_sha_deg < 360


def test_cli_identify_json_contract(capsys):
    from nav.cli import main

    alt, az, _, _ = _astropy("Vega", T)
    rc = main(["identify", "--utc", "2026-06-21T23:30:00Z", "--hs", f"{_hs(alt):.4f}",
               "--zn", f"{az:.1f}", "--dr-lat", "40.3", "--dr-lon", "-34.6", "--eye-height-m",
               "2.4", "--json"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert out["candidates"][0]["body"] == "Vega"
    assert {"body", "hc_deg", "zn_deg", "altitude_diff_arcmin", "azimuth_diff_deg"} <= set(
        out["candidates"][0])
    assert set(out["observed"]) == {"dec_deg", "sha_deg"}
    assert main(["identify", "--utc", "2026-06-21T23:30:00Z", "--hs", "30", "--zn", "400",
                 "--dr-lat", "40.3", "--dr-lon", "-34.6"]) == 2


def test_bright_star_table_rebuilds_and_names_match_ephem(tmp_path):
    import ephem
    import ephem.stars

    out = tmp_path / "bright.csv"
    subprocess.run([sys.executable, str(REPO / "tools" / "build_star_table.py"),
                    "--bright-output", str(out)], check=True, capture_output=True, timeout=120)
    bundled = resources.files("nav").joinpath("data", "bright_stars.csv").read_bytes()
    assert out.read_bytes() == bundled
    from nav.stars import bright_star_table, star_table

    bright = bright_star_table()
    assert not {r.hip for r in bright} & {r.hip for r in star_table()}
    assert all(r.hp_mag <= 3.5 for r in bright)
    names = {line.split(",", 1)[0] for line in ephem.stars.db.splitlines()}
    for r in bright:
        assert r.name in names or r.name.startswith(f"HIP {r.hip} (")
    assert len(bright) > 150           # about 200 stars between the 58 and Hp 3.5


def test_shell_identify(tmp_path):
    from shell_driver import open_state, run_lines

    st, log = open_state(tmp_path / "k.jsonl", "Kittiwake", "Westward",
                         lambda: datetime(2026, 6, 22, 0, 0, tzinfo=UTC))
    alt, az, _, _ = _astropy("Vega", T)
    try:
        out = run_lines(st, "set eye 2.4",
                        "dr 40 18.0 N 034 36.0 W at 2026-06-21T23:00:00Z",
                        f"identify {_hs(alt):.4f} {az + 3:.0f} at 2026-06-21T23:30:00Z",
                        "identify 51 at 23:30:00")
    finally:
        log.close()
    assert "Candidates, best fit first" in out and out.split("best fit first:")[1].split(
        "\n")[2].strip().startswith("Vega")
    assert "error: " in out and "bearing" in out
