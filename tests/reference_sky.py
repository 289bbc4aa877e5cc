"""Shared by the tests: a navigational star as an astropy SkyCoord (the independent reference).

astropy (IAU SOFA/ERFA) propagates the catalogue row itself: Hipparcos position at its epoch,
proper motion, parallax as distance, radial velocity 0 (the catalogue gives none).
"""

import astropy.units as u
from astropy.coordinates import Distance, SkyCoord
from astropy.time import Time


def star_skycoord(s) -> SkyCoord:
    """`s`: a :class:`nav.stars.StarRecord`."""
    return SkyCoord(ra=s.ra_deg * u.deg, dec=s.dec_deg * u.deg,
                    pm_ra_cosdec=s.pm_ra_cosdec_mas_per_yr * u.mas / u.yr,
                    pm_dec=s.pm_dec_mas_per_yr * u.mas / u.yr,
                    distance=Distance(parallax=s.parallax_mas * u.mas),
                    radial_velocity=0 * u.km / u.s, frame="icrs",
                    obstime=Time(s.epoch_jyear, format="jyear", scale="tt"))
