"""The marking reference chain against outside sources.

- astropy 8 / pyerfa (IAU SOFA): apparent geocentric place in the ``TETE`` frame (true equator and
  equinox of date) from the same DE421 file, GAST from ``Time.sidereal_time('apparent',
  'greenwich')``; GHA = GAST − RA. The tables' figures (hour value + increment + v; Dec of the
  hour + d correction) must land within the tolerances of issue 8 of astropy's GHA and Dec at the
  instant, allowing each figure's 0.05′ rounding and, for the Sun, the v the trade leaves out
  (measured from astropy's own hourly change).
- geographiclib (Karney 2013) on a sphere (f = 0): the zenith distance is the great-circle arc from
  the AP to the body's geographical position, Zn the initial azimuth of that arc.
- The increment rates, the Z→Zn rule and the trade's cell notation: common practice, no source.
"""

from __future__ import annotations

import json
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from nav.cli import main
from nav.marking.tables import INCREMENT_DEG_PER_H, increment_deg, tabulate
from nav.marking.triangle import parse_z, solve, zn_from_z
from nav.units import ARCMIN_DEG

ARCMIN = ARCMIN_DEG
ROUNDING = 0.05 * ARCMIN          # one figure rounded to 0.1′


def _astropy_gha_dec(body: str, times: list[datetime]):
    """(GHA°, Dec°) arrays from astropy/ERFA: TETE apparent place, GAST."""
    import astropy.units as u
    from astropy.coordinates import TETE, EarthLocation, get_body, solar_system_ephemeris
    from astropy.time import Time

    from nav.ephemeris import _de421_path
    from nav.stars import find_star
    from references import star_skycoord

    geocentre = EarthLocation.from_geocentric(0 * u.m, 0 * u.m, 0 * u.m)
    t = Time(times, scale="utc")
    gast = t.sidereal_time("apparent", "greenwich").deg
    if body in ("Sun", "Moon", "Venus", "Jupiter"):
        with solar_system_ephemeris.set(_de421_path()):
            gcrs = get_body(body.lower(), t, location=geocentre)
    else:
        from astropy.coordinates import GCRS

        gcrs = star_skycoord(find_star(body)).apply_space_motion(new_obstime=t).transform_to(
            GCRS(obstime=t))
    tete = gcrs.transform_to(TETE(obstime=t, location=geocentre))
    return np.remainder(gast - tete.ra.deg, 360.0), tete.dec.deg


def _instants(n: int, seed: int) -> list[datetime]:
    rng = np.random.default_rng(seed)
    start = datetime(2024, 1, 1, tzinfo=timezone.utc)
    return [start + timedelta(seconds=int(s)) for s in rng.integers(0, 3 * 365 * 86400, n)]


def _wrap(d):
    return (np.asarray(d) + 180.0) % 360.0 - 180.0


@pytest.mark.parametrize("body, tol_arcmin", [
    ("Sun", 0.2), ("Moon", 0.3), ("Venus", 0.2), ("Jupiter", 0.2), ("Vega", 0.2), ("Acrux", 0.2)])
def test_tables_figures_agree_with_astropy(body, tol_arcmin):
    times = _instants(12, seed=808)
    tabs = [tabulate(body, t) for t in times]
    gha, dec = _astropy_gha_dec(body, times)
    hours = [t.hour_utc for t in tabs]
    gha_h, dec_h = _astropy_gha_dec(body, hours)
    gha_h1, dec_h1 = _astropy_gha_dec(body, [h + timedelta(hours=1) for h in hours])
    for i, t in enumerate(tabs):
        frac = (t.utc - t.hour_utc).total_seconds() / 3600.0
        if t.kind == "star":
            # GHA Aries of the hour (astropy's GAST) to one rounding; SHA and Dec to one rounding
            continue
        # the hour's tabulated figures are astropy's values rounded to 0.1′
        assert abs(_wrap(t.gha_hour_deg - gha_h[i])) <= ROUNDING + 1e-9, (body, t.utc)
        assert abs(t.dec_hour_deg - dec_h[i]) <= ROUNDING + 1e-9
        # d: the hourly Dec change, + when |Dec| grows, to one rounding
        toward = 1.0 if t.dec_hour_deg >= 0 else -1.0
        assert abs(t.d_arcmin / 60 - toward * (dec_h1[i] - dec_h[i])) <= ROUNDING + 1e-9
        excess_deg = _wrap(gha_h1[i] - gha_h[i]) - INCREMENT_DEG_PER_H[t.kind]
        if t.v_arcmin is not None:       # v: the hourly excess over the increment's rate
            assert abs(t.v_arcmin / 60 - excess_deg) <= ROUNDING + 1e-9
            neglected = 0.0
        else:                            # the Sun: the trade leaves its small v out
            neglected = abs(excess_deg) * frac
        # hour value + increment + v correction: within the tolerance of the instant,
        # past the neglected v of the Sun
        assert abs(_wrap(t.gha_deg - gha[i])) <= tol_arcmin * ARCMIN + neglected, (body, t.utc)
        assert abs(t.dec_deg - dec[i]) <= tol_arcmin * ARCMIN, (body, t.utc)
    if tabs[0].kind == "star":
        for i, t in enumerate(tabs):
            # GHA star = GHA Aries (hour + increment) + SHA: four figures of 0.1′
            assert abs(_wrap(t.gha_deg - gha[i])) <= tol_arcmin * ARCMIN, (body, t.utc)
            assert abs(t.dec_deg - dec[i]) <= ROUNDING + 1e-9


def test_increments_at_the_trades_rates():
    # common practice, no source: 15° an hour for the Sun and planets, 14°19.0′ for the Moon,
    # 15°02.46′ for Aries (the sidereal rate)
    assert increment_deg("sun", 3599) == pytest.approx(14 + 59.8 / 60, abs=1e-12)
    assert increment_deg("sun", 30 * 60) == 7.5
    assert increment_deg("moon", 30 * 60) == pytest.approx(7 + 9.5 / 60, abs=1e-12)
    assert increment_deg("star", 30 * 60) == pytest.approx(7 + 31.2 / 60, abs=1e-12)


SPHERE = Geodesic(1.0, 0.0)


@pytest.mark.parametrize("lat, dec, lha", [
    (-26.0, -12.0567, 315.0), (41.0, 20.5, 44.0), (12.0, -5.25, 181.0), (-48.0, 30.0, 350.0),
    (0.0, 10.0, 90.0), (60.0, 59.5, 1.0)])
def test_triangle_against_geographiclib(lat, dec, lha):
    tri = solve(lat, dec, lha, ho_deg=30.0)
    inv = SPHERE.Inverse(lat, 0.0, dec, -lha)     # the GP lies LHA west of the AP
    assert tri.hc_deg == pytest.approx(90.0 - inv["a12"], abs=0.01 * ARCMIN)
    assert abs(_wrap(tri.zn_deg - inv["azi1"])) <= 1e-6
    # the trade's rule turns the named Z back into the same Zn (common practice, no source)
    assert zn_from_z(tri.pole, tri.z_deg, tri.side) == pytest.approx(tri.zn_deg % 360, abs=1e-9)
    assert tri.intercept_nmi == pytest.approx((30.0 - tri.hc_deg) * 60.0)


def test_z_cells_and_the_rule_table():
    # common practice, no source: S lat, body east: Zn = 180° − Z; N lat, body west: 360° − Z
    assert parse_z("S 134.7 E") == ("S", 134.7, "E")
    assert zn_from_z("S", 134.7, "E") == pytest.approx(45.3)
    assert zn_from_z("N", 60.0, "W") == 300.0
    assert zn_from_z("S", 20.0, "W") == 200.0
    assert zn_from_z("N", 60.0, "E") == 60.0
    for bad in ("134.7", "S 190 E", "X 10 E", "S ten E"):
        with pytest.raises(Exception) as info:
            parse_z(bad)
        assert getattr(info.value, "field", None) == "z"


def test_nav_triangle_command(capsys):
    code = main(["triangle", "--lat", "26 S", "--dec", "12 03.4 S", "--lha", "315",
                 "--ho", "44 12.3", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert code == 0
    inv = SPHERE.Inverse(-26.0, 0.0, -(12 + 3.4 / 60), -315.0)       # geographiclib, sphere
    assert out["hc_deg"] == pytest.approx(90.0 - inv["a12"], abs=0.01 * ARCMIN)
    assert out["zn_deg"] == pytest.approx(inv["azi1"] % 360, abs=1e-4)
    assert out["z"].startswith("S ") and out["z"].endswith(" E") and out["t_a"] == "A"
    assert main(["triangle", "--lat", "26", "--dec", "12 S", "--lha", "315"]) == 2   # no hemisphere
    assert "lat" in capsys.readouterr().err
