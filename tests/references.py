"""Independent references shared by the tests (written from published methods, or astropy).

- :func:`mercator_sailing`: the American Practical Navigator's Mercator sailing on the sphere where
  1′ = 1 nmi, written out here so that nav.sailing is checked against the textbook, not itself.
- :func:`star_skycoord`: a navigational star as an astropy SkyCoord; astropy (IAU SOFA/ERFA)
  propagates the catalogue row itself: Hipparcos position at its epoch, proper motion, parallax
  as distance, radial velocity 0 (the catalogue gives none).
"""

import math


def mercator_sailing(lat_deg, lon_deg, course_deg, dist_nmi):
    """American Practical Navigator, Mercator sailing on the sphere where 1′ = 1 nmi:
    l = D·cos C, DLo = (M2 − M1)·tan C, M = ln tan(45° + φ/2). (No course near 090°/270°.)"""
    c = math.radians(course_deg)
    lat2 = lat_deg + dist_nmi * math.cos(c) / 60.0

    def meridional(phi_deg):
        return math.log(math.tan(math.pi / 4 + math.radians(phi_deg) / 2))

    return lat2, lon_deg + math.degrees(math.tan(c) * (meridional(lat2) - meridional(lat_deg)))


def star_skycoord(s):
    """`s`: a :class:`nav.stars.StarRecord` -> astropy SkyCoord at the catalogue epoch."""
    import astropy.units as u
    from astropy.coordinates import Distance, SkyCoord
    from astropy.time import Time

    return SkyCoord(ra=s.ra_deg * u.deg, dec=s.dec_deg * u.deg,
                    pm_ra_cosdec=s.pm_ra_cosdec_mas_per_yr * u.mas / u.yr,
                    pm_dec=s.pm_dec_mas_per_yr * u.mas / u.yr,
                    distance=Distance(parallax=s.parallax_mas * u.mas),
                    radial_velocity=0 * u.km / u.s, frame="icrs",
                    obstime=Time(s.epoch_jyear, format="jyear", scale="tt"))
