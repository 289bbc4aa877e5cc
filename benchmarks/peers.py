"""The sights the benchmarks reduce, and the peers a capable user would pick instead of nav.

Each peer does the same job, Hs to intercept, in its best form:
- ``skyfield_reduce``: skyfield vectorised over a ``Time`` array per body (stars through
  ``Star`` objects, one per star), with the IAU 2000B nutation set on each ``Time`` as nav does;
  GHA/Dec -> Hc, Zn in numpy; Hs -> Ho in numpy.
- ``astropy_reduce``: astropy ``AltAz`` vectorised over every sight of a body (DE421 for the
  solar system), which gives the topocentric altitude (parallax included); Hs -> Ho in numpy.
- ``ephem_reduce``: an ephem (libastro) loop, one ``compute`` per sight, corrections in ``math``.

The corrections the peers apply are the usual short forms (dip 1.76′·√h, Bennett's refraction,
SD, HP·cos Ha): a capable user's, not nav's step-by-step chain. The benchmarks print how far
each peer's intercepts lie from nav's, so a fast wrong answer shows.
"""

from __future__ import annotations

import math

import numpy as np

SEED = 1852


def make_sights(n: int, seed: int = SEED, days: float = 4 * 365.25) -> dict:
    """n plausible sights (Sun 30 %, Moon 10 %, planets 20 %, stars 40 %) over `days` from
    2024-01-01: each observer stands where the body is 10°-80° high (not timed)."""
    from nav.almanac import PLANETS, almanac, body_names

    rng = np.random.default_rng(seed)
    stars = [b for b in body_names() if b not in ("Sun", "Moon", *PLANETS)]
    kind = rng.choice(4, size=n, p=[0.3, 0.1, 0.2, 0.4])
    bodies = np.where(kind == 0, "Sun", np.where(kind == 1, "Moon", np.where(
        kind == 2, rng.choice(PLANETS, n), rng.choice(stars, n)))).astype(object)
    start = np.datetime64("2024-01-01T00:00:00", "us")
    t64 = start + rng.integers(0, int(days * 86400e6), n).astype("timedelta64[us]")
    gha, dec = np.empty(n), np.empty(n)
    for b in dict.fromkeys(bodies.tolist()):
        idx = np.flatnonzero(bodies == b)
        rec = almanac([b], t64[idx])[0]
        gha[idx], dec[idx] = rec.gha_deg, rec.dec_deg
    h = rng.uniform(10.0, 80.0, n)
    bearing = np.radians(rng.uniform(0.0, 360.0, n))
    zd, lat_gp, lon_gp = np.radians(90.0 - h), np.radians(dec), -gha
    lat = np.arcsin(np.sin(lat_gp) * np.cos(zd) + np.cos(lat_gp) * np.sin(zd) * np.cos(bearing))
    lon = lon_gp + np.degrees(np.arctan2(np.sin(bearing) * np.sin(zd) * np.cos(lat_gp),
                                         np.cos(zd) - np.sin(lat_gp) * np.sin(lat)))
    lat, lon = np.degrees(lat), (lon + 180.0) % 360.0 - 180.0
    eye = rng.uniform(1.0, 15.0, n)
    ie = rng.uniform(-3.0, 3.0, n)
    disc = np.isin(bodies, ["Sun", "Moon"])
    limb = np.where(disc, rng.choice(np.array(["lower", "upper"], dtype=object), n), None)
    refr = 1.0 / np.tan(np.radians(h + 7.31 / (h + 4.4))) / 60.0
    sd = np.where(disc, 16.0 / 60.0, 0.0) * np.where(limb == "lower", 1.0, -1.0)
    moon_par = np.where(bodies == "Moon", 57.0 / 60.0 * np.cos(np.radians(h)), 0.0)
    hs = h + refr + 1.76 * np.sqrt(eye) / 60.0 + ie / 60.0 - sd - moon_par
    return dict(bodies=bodies, utc=t64, hs_deg=hs, limb=limb, index_error_arcmin=ie,
                eye_height_m=eye, temperature_c=rng.choice([-5.0, 10.0, 25.0], n),
                pressure_hpa=rng.choice([990.0, 1010.0, 1030.0], n), lat_deg=lat, lon_deg=lon)


def take(s: dict, n: int) -> dict:
    return {k: v[:n] for k, v in s.items()}


def nav_reduce(s: dict):
    from nav.reduction import reduce_sights

    return reduce_sights(s["bodies"], s["utc"], s["hs_deg"], limb=s["limb"],
                         index_error_arcmin=s["index_error_arcmin"],
                         eye_height_m=s["eye_height_m"], temperature_c=s["temperature_c"],
                         pressure_hpa=s["pressure_hpa"], lat_deg=s["lat_deg"],
                         lon_deg=s["lon_deg"]).intercept_nmi


# ---------------------------------------------------------------- the short-form corrections

def _apparent_altitude(s, idx):
    ha = s["hs_deg"][idx] - s["index_error_arcmin"][idx] / 60.0 - 1.76 * np.sqrt(s["eye_height_m"][idx]) / 60.0
    refr = 1.0 / np.tan(np.radians(ha + 7.31 / (ha + 4.4))) / 60.0          # Bennett (1982)
    refr *= (s["pressure_hpa"][idx] / 1010.0) * (283.0 / (273.0 + s["temperature_c"][idx]))
    return ha - refr


def _sd_sign(s, idx):
    limb = s["limb"][idx]
    return np.where(limb == "lower", 1.0, np.where(limb == "upper", -1.0, 0.0))


def _hc_zn(lat, dec, lha):
    lat, dec, lha = np.radians(lat), np.radians(dec), np.radians(lha)
    x = -np.cos(dec) * np.sin(lha)
    y = np.cos(lat) * np.sin(dec) - np.sin(lat) * np.cos(dec) * np.cos(lha)
    z = np.sin(lat) * np.sin(dec) + np.cos(lat) * np.cos(dec) * np.cos(lha)
    return np.degrees(np.arctan2(z, np.hypot(x, y))), np.degrees(np.arctan2(x, y)) % 360.0


# ---------------------------------------------------------------- skyfield, vectorised, 2000B

def skyfield_reduce(s: dict):
    from skyfield.nutationlib import iau2000b_radians
    from skyfield.starlib import Star

    from nav.ephemeris import ephemeris, timescale
    from nav.stars import star_table

    eph, ts = ephemeris(), timescale()
    earth = eph["earth"]
    targets = {"Sun": "sun", "Moon": "moon", "Venus": "venus", "Mars": "mars",
               "Jupiter": "jupiter barycenter", "Saturn": "saturn barycenter"}
    rows = {r.name: r for r in star_table()}
    epoch = ts.tt_jd(2_448_349.0625)                 # J1991.25, the catalogue epoch
    out = np.empty(len(s["hs_deg"]))
    for b in dict.fromkeys(s["bodies"].tolist()):
        idx = np.flatnonzero(s["bodies"] == b)
        days, us = np.divmod(s["utc"][idx].astype("datetime64[us]").astype(np.int64), 86_400_000_000)
        t = ts.utc(1970, 1, 1 + days, 0, 0, us / 1e6)
        t._nutation_angles_radians = iau2000b_radians(t)
        if b in targets:
            target = eph[targets[b]]
        else:
            r = rows[b]
            target = Star(ra_hours=r.ra_deg / 15.0, dec_degrees=r.dec_deg,
                          ra_mas_per_year=r.pm_ra_cosdec_mas_per_yr,
                          dec_mas_per_year=r.pm_dec_mas_per_yr, parallax_mas=r.parallax_mas,
                          epoch=epoch)
        astrometric = earth.at(t).observe(target)
        ra, dec, dist = astrometric.apparent().radec(epoch="date")
        gha = (t.gast - ra.hours) * 15.0
        hc, _ = _hc_zn(s["lat_deg"][idx], dec.degrees, gha + s["lon_deg"][idx])
        h = _apparent_altitude(s, idx)
        if b in ("Sun", "Moon"):
            radius_km = 696_000.0 if b == "Sun" else 1737.4
            h = h + _sd_sign(s, idx) * np.degrees(np.arcsin(radius_km / dist.km))
        if b in targets:
            h = h + np.degrees(np.arcsin(6378.137 / dist.km)) * np.cos(np.radians(h))
        out[idx] = (h - hc) * 60.0
    return out


# ---------------------------------------------------------------- astropy AltAz, vectorised

def astropy_reduce(s: dict):
    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord, get_body, solar_system_ephemeris
    from astropy.time import Time

    from nav.ephemeris import _de421_path
    from nav.stars import star_table

    rows = {r.name: r for r in star_table()}
    out = np.empty(len(s["hs_deg"]))
    with solar_system_ephemeris.set(_de421_path()):
        for b in dict.fromkeys(s["bodies"].tolist()):
            idx = np.flatnonzero(s["bodies"] == b)
            t = Time(s["utc"][idx], scale="utc")
            loc = EarthLocation.from_geodetic(s["lon_deg"][idx] * u.deg, s["lat_deg"][idx] * u.deg,
                                              0.0 * u.m)
            frame = AltAz(obstime=t, location=loc)
            if b in ("Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn"):
                c = get_body(b.lower(), t, location=loc)
            else:
                r = rows[b]
                c = SkyCoord(ra=r.ra_deg * u.deg, dec=r.dec_deg * u.deg,
                             distance=(1000.0 / r.parallax_mas) * u.pc, frame="icrs")
            hc = c.transform_to(frame).alt.deg          # topocentric: parallax included
            h = _apparent_altitude(s, idx)
            if b in ("Sun", "Moon"):
                radius_km = 696_000.0 if b == "Sun" else 1737.4
                h = h + _sd_sign(s, idx) * np.degrees(np.arcsin(radius_km / c.distance.to_value(u.km)))
            out[idx] = (h - hc) * 60.0
    return out


# ---------------------------------------------------------------- ephem, one sight at a time

EPHEM_EPOCH_JD = 2_415_020.0   # ephem's dates count days from 1899-12-31 12:00 (Dublin JD)


def ephem_reduce(s: dict):
    import ephem

    from nav.stars import star_table

    bodies = {"Sun": ephem.Sun(), "Moon": ephem.Moon(), "Venus": ephem.Venus(),
              "Mars": ephem.Mars(), "Jupiter": ephem.Jupiter(), "Saturn": ephem.Saturn()}
    for r in star_table():
        star = ephem.FixedBody()
        star._ra, star._dec = math.radians(r.ra_deg), math.radians(r.dec_deg)
        star._epoch = ephem.J2000
        star._pmra, star._pmdec = r.pm_ra_cosdec_mas_per_yr, r.pm_dec_mas_per_yr
        bodies[r.name] = star
    obs = ephem.Observer()
    obs.pressure, obs.elevation = 0.0, 0.0
    dates = s["utc"].astype(np.int64) / 86400e6 + 2_440_587.5 - EPHEM_EPOCH_JD
    lat, lon = np.radians(s["lat_deg"]).tolist(), np.radians(s["lon_deg"]).tolist()
    hs, ie, eye = s["hs_deg"].tolist(), s["index_error_arcmin"].tolist(), s["eye_height_m"].tolist()
    temp, pres = s["temperature_c"].tolist(), s["pressure_hpa"].tolist()
    names, limbs = s["bodies"].tolist(), s["limb"].tolist()
    out = []
    for i, d in enumerate(dates.tolist()):
        obs.date, obs.lat, obs.lon = d, lat[i], lon[i]
        body = bodies[names[i]]
        body.compute(obs)
        ha = hs[i] - ie[i] / 60.0 - 1.76 * math.sqrt(eye[i]) / 60.0
        refr = (1.0 / math.tan(math.radians(ha + 7.31 / (ha + 4.4))) / 60.0
                * (pres[i] / 1010.0) * (283.0 / (273.0 + temp[i])))
        h = ha - refr
        if limbs[i] == "lower":
            h += math.degrees(float(body.radius))
        elif limbs[i] == "upper":
            h -= math.degrees(float(body.radius))
        out.append((h - math.degrees(float(body.alt))) * 60.0)
    return np.array(out)


PEERS = {"skyfield vectorised (2000B)": skyfield_reduce,
         "astropy AltAz vectorised": astropy_reduce,
         "ephem per-sight loop": ephem_reduce}
