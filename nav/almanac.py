"""The almanac engine: GHA, Dec, SHA, HP, SD, GHA Aries, equation of time, meridian passage.

All positions are geocentric apparent, referred to the true equator and equinox of date:
light-time, gravitational deflection by the Sun, annual aberration, then frame bias, precession
(IAU 2006) and nutation (IAU 2000B) — the matrix skyfield calls ``t.M``. GHA Aries is Greenwich
apparent sidereal time (GAST) in degrees, with the equation of the equinoxes from the same nutation.

Every function is vectorised over instants: pass one aware ``datetime`` for scalars, or an array of
``datetime64`` (UTC) for arrays, and shared quantities (Earth's state, the precession-nutation
matrix, GAST) are computed once per instant for all bodies.

Nutation model. IAU 2000B differs from the full IAU 2000A by about 1 mas (0.000 017′) in longitude
over 1995–2050 — nearly 10⁴ times below the 0.1′ a sextant can resolve — and is several times faster.
``tests/test_almanac_models.py`` measures that difference on every call path.

Stars are computed here, not through skyfield's ``Star`` one at a time: the whole catalogue is
propagated in one array (space motion and parallax, Sun deflection and aberration by the IAU SOFA
formulation of eraLdsun/eraAb), so a year of hourly positions for every star is one numpy pass.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np

from .angles import asind, norm180, norm360
from .errors import UnknownBodyError

# ---------------------------------------------------------------- constants (named, with sources)

AU_KM = 149_597_870.700            # IAU 2012 Resolution B2
C_AU_PER_DAY = 173.144_632_674_240  # c = 299 792.458 km/s (SI), in AU/day
EARTH_EQUATORIAL_RADIUS_KM = 6378.137  # WGS 84 / IERS
SUN_RADIUS_KM = 696_000.0          # the solar radius behind the almanac's SD 15.99′ at 1 AU
MOON_RADIUS_KM = 1737.4            # IAU mean radius of the Moon
SUN_SCHWARZSCHILD_AU = 1.974_125_743_36e-8  # 2GM/c² of the Sun in AU (IAU SOFA, SRS)
HIPPARCOS_EPOCH_TT_JD = 2_448_349.0625  # J1991.25 (ESA 1997, Hipparcos catalogue epoch)
DAYS_PER_JULIAN_YEAR = 365.25
MAS_TO_RAD = np.pi / (180 * 3600 * 1000)

SOLAR_BODIES = {  # name -> (kind, DE421 target)
    "Sun": ("sun", "sun"),
    "Moon": ("moon", "moon"),
    "Venus": ("planet", "venus"),
    "Mars": ("planet", "mars"),
    "Jupiter": ("planet", "jupiter barycenter"),
    "Saturn": ("planet", "saturn barycenter"),
}
PLANETS = ("Venus", "Mars", "Jupiter", "Saturn")


@dataclass(frozen=True)
class BodyAlmanac:
    """One body at one instant (scalars) or over instants (arrays on the last axis).

    Angles in degrees; GHA, SHA, RA and GHA Aries in [0, 360), Dec in [−90, 90].
    ``sha_deg`` is 360° − RA of date for any body (the trade uses it for stars); ``hp_arcmin`` is the
    equatorial horizontal parallax (None for stars), ``sd_arcmin`` the geocentric semi-diameter
    (Sun and Moon only), ``magnitude`` the visual magnitude where known (stars: Hipparcos Hp).
    """

    body: str
    kind: str
    gha_deg: np.ndarray | float
    dec_deg: np.ndarray | float
    ra_deg: np.ndarray | float
    sha_deg: np.ndarray | float
    gha_aries_deg: np.ndarray | float
    distance_km: np.ndarray | float | None
    hp_arcmin: np.ndarray | float | None
    sd_arcmin: np.ndarray | float | None
    magnitude: np.ndarray | float | None


# ---------------------------------------------------------------- names

def _stars():
    from . import stars

    return stars


def body_names() -> list[str]:
    """Canonical names of every body nav knows: Sun, Moon, four planets, the navigational stars."""
    return list(SOLAR_BODIES) + _stars().star_names()


@functools.lru_cache(maxsize=None)
def _solar_lookup() -> dict[str, str]:
    return {k.lower(): k for k in SOLAR_BODIES}


def resolve_body(name: str, field: str = "body") -> str:
    """The canonical name of a body (case-insensitive; stars accept their usual spellings)."""
    key = str(name).strip().lower()
    if key in _solar_lookup():
        return _solar_lookup()[key]
    try:
        return _stars().find_star(name).name
    except UnknownBodyError as err:
        import difflib

        pool = body_names()
        near = difflib.get_close_matches(str(name).strip().title(), pool, n=3, cutoff=0.6)
        suggestions = near or list(err.suggestions)
        hint = f"; did you mean {', '.join(suggestions)}?" if suggestions else ""
        raise UnknownBodyError(f"unknown body '{name}'{hint}", suggestions=suggestions,
                               field=field) from None


def body_kind(name: str) -> str:
    canonical = resolve_body(name)
    return SOLAR_BODIES[canonical][0] if canonical in SOLAR_BODIES else "star"


# ---------------------------------------------------------------- shared per-instant quantities

class Instants:
    """Instants with their shared quantities computed once: Earth's state, ``M``, GAST.

    Build it from an aware ``datetime``, an array of ``datetime64`` (UTC), or a skyfield ``Time``.
    """

    def __init__(self, t, field: str = "utc"):
        from skyfield.nutationlib import iau2000b_radians

        from .ephemeris import ephemeris, skyfield_time

        self.time = t if hasattr(t, "tt") and hasattr(t, "ts") else skyfield_time(t, field)
        # Deliberate: IAU 2000B for nutation (see module docstring and tests).
        self.time._nutation_angles_radians = iau2000b_radians(self.time)
        self.eph = ephemeris()
        self.scalar = self.time.shape == ()

    @functools.cached_property
    def earth(self):
        return self.eph["earth"].at(self.time)

    @functools.cached_property
    def sun_bcrs_au(self):
        return self.eph["sun"].at(self.time).xyz.au

    @functools.cached_property
    def gha_aries_deg(self):
        return norm360(np.asarray(self.time.gast) * 15.0)

    @functools.cached_property
    def npb(self):
        """Rotation from ICRS (GCRS) to the true equator and equinox of date, shape (3, 3[, n])."""
        return self.time.M

    @functools.cached_property
    def ut1_day_fraction(self):
        return np.remainder(np.asarray(self.time.ut1) + 0.5, 1.0)


def _ra_dec_of_date(instants: Instants, xyz_icrs: np.ndarray):
    """Rotate ICRS vectors (3, ..., n) to the true equator of date; RA, Dec in degrees."""
    m = instants.npb
    if instants.scalar:
        v = np.einsum("ij,j...->i...", m, xyz_icrs)
    else:
        v = np.einsum("ijn,j...n->i...n", m, xyz_icrs)
    x, y, z = v
    ra = norm360(np.degrees(np.arctan2(y, x)))
    dec = np.degrees(np.arctan2(z, np.hypot(x, y)))
    return ra, dec


def _solar_body(instants: Instants, name: str) -> BodyAlmanac:
    kind, target = SOLAR_BODIES[name]
    astrometric = instants.earth.observe(instants.eph[target])
    apparent = astrometric.apparent()
    ra, dec = _ra_dec_of_date(instants, apparent.xyz.au)
    dist_km = np.asarray(astrometric.distance().km)
    hp = asind(EARTH_EQUATORIAL_RADIUS_KM / dist_km) * 60.0
    sd = None
    if name == "Sun":
        sd = asind(SUN_RADIUS_KM / dist_km) * 60.0
    elif name == "Moon":
        sd = asind(MOON_RADIUS_KM / dist_km) * 60.0
    mag = None
    if kind == "planet":
        from skyfield.magnitudelib import planetary_magnitude

        mag = np.asarray(planetary_magnitude(astrometric))
        mag = mag[()] if mag.ndim == 0 else mag
    gha_aries = instants.gha_aries_deg
    return BodyAlmanac(
        body=name, kind=kind, gha_deg=norm360(gha_aries - ra), dec_deg=dec, ra_deg=ra,
        sha_deg=norm360(360.0 - ra), gha_aries_deg=gha_aries, distance_km=dist_km[()] if dist_km.ndim == 0 else dist_km,
        hp_arcmin=hp, sd_arcmin=sd, magnitude=mag)


def _vectors_of(recs):
    """Catalogue positions (AU) and space velocities (AU/day) of star records, shape (3, N)."""
    ra = np.radians([r.ra_deg for r in recs])
    dec = np.radians([r.dec_deg for r in recs])
    plx_mas = np.array([r.parallax_mas for r in recs])
    pm_ra = np.array([r.pm_ra_cosdec_mas_per_yr for r in recs]) * MAS_TO_RAD / DAYS_PER_JULIAN_YEAR
    pm_dec = np.array([r.pm_dec_mas_per_yr for r in recs]) * MAS_TO_RAD / DAYS_PER_JULIAN_YEAR
    dist_au = 1.0 / np.maximum(plx_mas * MAS_TO_RAD, 1e-12)
    cr, sr, cd, sd = np.cos(ra), np.sin(ra), np.cos(dec), np.sin(dec)
    u = np.array([cd * cr, cd * sr, sd])
    e_ra = np.array([-sr, cr, np.zeros_like(cr)])
    e_dec = np.array([-sd * cr, -sd * sr, cd])
    return u * dist_au, (e_ra * pm_ra + e_dec * pm_dec) * dist_au


@functools.lru_cache(maxsize=None)
def _star_vectors():
    """Catalogue positions (AU) and space velocities (AU/day) of every star, shape (3, N)."""
    recs = _stars().star_table()
    pos, vel = _vectors_of(recs)
    index = {r.name: i for i, r in enumerate(recs)}
    return pos, vel, index, np.array([r.hp_mag for r in recs])


def _star_directions(instants: Instants, idx: np.ndarray, vectors=None) -> np.ndarray:
    """Apparent geocentric unit vectors (ICRS axes) of the stars `idx`, shape (3, k[, n]);
    `vectors`: (pos, vel) of other records than the navigational stars'."""
    pos, vel = _star_vectors()[:2] if vectors is None else vectors
    pos, vel = pos[:, idx], vel[:, idx]
    t_tdb = np.asarray(instants.time.tdb)
    e_pos = instants.earth.xyz.au                   # (3[, n])
    e_vel = instants.earth.velocity.au_per_d        # (3[, n])
    s_pos = instants.sun_bcrs_au
    dt = t_tdb - HIPPARCOS_EPOCH_TT_JD
    if instants.scalar:
        star = pos + vel * dt                       # (3, k)
        e_pos_b, e_vel_b, s_pos_b = e_pos[:, None], e_vel[:, None], s_pos[:, None]
    else:
        star = pos[:, :, None] + vel[:, :, None] * dt[None, None, :]  # (3, k, n)
        e_pos_b, e_vel_b, s_pos_b = e_pos[:, None, :], e_vel[:, None, :], s_pos[:, None, :]
    p = star - e_pos_b
    p = p / np.sqrt(np.sum(p * p, axis=0))
    # Light deflection by the Sun (IAU SOFA eraLdsun -> eraLd with q = p for a distant source).
    e = e_pos_b - s_pos_b
    em = np.sqrt(np.sum(e * e, axis=0))
    e = e / em
    dlim = 1e-6 / np.maximum(em * em, 1.0)
    qpe = p + e
    qdqpe = np.sum(p * qpe, axis=0)
    w = SUN_SCHWARZSCHILD_AU / em / np.maximum(qdqpe, dlim)
    eq = np.cross(e, p, axis=0)
    peq = np.cross(p, eq, axis=0)
    p = p + w * peq
    # Annual aberration, relativistic (IAU SOFA eraAb).
    v = e_vel_b / C_AU_PER_DAY
    v = np.broadcast_to(v, p.shape)
    bm1 = np.sqrt(1.0 - np.sum(v * v, axis=0))
    pdv = np.sum(p * v, axis=0)
    w1 = 1.0 + pdv / (1.0 + bm1)
    w2 = SUN_SCHWARZSCHILD_AU / em
    p = p * bm1 + w1 * v + w2 * (v - pdv * p)
    return p / np.sqrt(np.sum(p * p, axis=0))


def _stars_almanac(instants: Instants, names: list[str]) -> list[BodyAlmanac]:
    _, _, index, mags = _star_vectors()
    idx = np.array([index[n] for n in names])
    ra, dec = _ra_dec_of_date(instants, _star_directions(instants, idx))
    gha_aries = instants.gha_aries_deg
    out = []
    for k, name in enumerate(names):
        ra_k, dec_k = ra[k], dec[k]
        out.append(BodyAlmanac(
            body=name, kind="star", gha_deg=norm360(gha_aries - ra_k), dec_deg=dec_k[()] if np.ndim(dec_k) == 0 else dec_k,
            ra_deg=ra_k, sha_deg=norm360(360.0 - ra_k), gha_aries_deg=gha_aries, distance_km=None,
            hp_arcmin=None, sd_arcmin=None, magnitude=float(mags[index[name]])))
    return out


def catalogue_places(records, t):
    """Apparent GHA, Dec and SHA (degrees, arrays over `records`) of any star records (e.g. the
    bright stars of :func:`nav.stars.bright_star_table`) at one instant, as for the 58."""
    instants = t if isinstance(t, Instants) else Instants(t)
    vectors = _vectors_of(records)
    ra, dec = _ra_dec_of_date(instants, _star_directions(instants, np.arange(len(records)),
                                                         vectors))
    return norm360(instants.gha_aries_deg - ra), dec, norm360(360.0 - ra)


def almanac(bodies, t, field: str = "utc") -> list[BodyAlmanac]:
    """Positions of `bodies` (names, any spelling) at `t`, in the order given.

    `t` is an aware datetime, an array of ``datetime64`` (UTC), a skyfield ``Time`` or an
    :class:`Instants`. Raises :class:`UnknownBodyError` or :class:`OutOfRangeError`.
    """
    if isinstance(bodies, str):
        bodies = [bodies]
    names = [resolve_body(b) for b in bodies]
    instants = t if isinstance(t, Instants) else Instants(t, field)
    results: dict[str, BodyAlmanac] = {}
    star_names = [n for n in dict.fromkeys(names) if n not in SOLAR_BODIES]
    if star_names:
        for rec in _stars_almanac(instants, star_names):
            results[rec.body] = rec
    for n in dict.fromkeys(names):
        if n in SOLAR_BODIES:
            results[n] = _solar_body(instants, n)
    return [results[n] for n in names]


def body_almanac(body: str, t) -> BodyAlmanac:
    return almanac([body], t)[0]


def gha_aries_deg(t):
    """GHA Aries = Greenwich apparent sidereal time in degrees, [0, 360)."""
    return (t if isinstance(t, Instants) else Instants(t)).gha_aries_deg


# ---------------------------------------------------------------- the relations navigators use

def lha_deg(gha_deg, lon_deg):
    """LHA = GHA + longitude (east +), in [0, 360)."""
    return norm360(np.asarray(gha_deg) + np.asarray(lon_deg))


def lst_deg(gha_aries_deg, lon_deg):
    """Local sidereal time in degrees: LST = GHA Aries + longitude (east +)."""
    return norm360(np.asarray(gha_aries_deg) + np.asarray(lon_deg))


def lha_from_lst(lst_deg_, ra_deg):
    """LHA = LST − RA."""
    return norm360(np.asarray(lst_deg_) - np.asarray(ra_deg))


def sha_from_ra(ra_deg):
    """SHA = 360° − RA."""
    return norm360(360.0 - np.asarray(ra_deg))


def gha_from_sha(gha_aries_deg, sha_deg):
    """GHA star = GHA Aries + SHA."""
    return norm360(np.asarray(gha_aries_deg) + np.asarray(sha_deg))


# ---------------------------------------------------------------- time of the Sun and transits

def equation_of_time_min(t):
    """Equation of time, apparent minus mean solar time, in minutes of time.

    Mean solar time at Greenwich is UT1; the apparent Sun's hour angle is its GHA. So
    EoT = GHA Sun − (15°·UT1 hours − 180°), reduced to ±180°, at 4 min of time per degree.
    Positive when the apparent Sun is ahead of the mean Sun (early November, about +16 min).
    """
    instants = t if isinstance(t, Instants) else Instants(t)
    sun = _solar_body(instants, "Sun")
    gha_mean_sun = instants.ut1_day_fraction * 360.0 - 180.0
    return norm180(sun.gha_deg - gha_mean_sun) * 4.0


SIDEREAL_RATE_DEG_PER_DAY = 360.985_647_366  # Earth's rotation against the equinox (IAU 1982)


def meridian_passage(body: str, lon_deg: float, near: datetime, *, tolerance_s: float = 0.05) -> datetime:
    """UTC of the body's upper meridian transit at `lon_deg` (east +) nearest to `near`.

    Solves LHA = 0 by Newton's method with the body's measured hour-angle rate (the Moon's is
    some 12° a day slower than the Sun's), to `tolerance_s` seconds.
    """
    from .timekeeping import UTC

    name = resolve_body(body)
    t = near.astimezone(UTC)
    probe = timedelta(minutes=10)
    for _ in range(12):
        a = almanac([name], np.array([np.datetime64(t.replace(tzinfo=None), "us"),
                                      np.datetime64((t + probe).replace(tzinfo=None), "us")]))[0]
        h0 = float(norm180(a.gha_deg[0] + lon_deg))
        rate = float(norm180(a.gha_deg[1] - a.gha_deg[0])) / probe.total_seconds()  # deg/s
        step_s = -h0 / rate
        t = t + timedelta(seconds=step_s)
        if abs(step_s) < tolerance_s:
            break
    return t
