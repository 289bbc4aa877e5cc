"""Dead reckoning: rhumb-line (Mercator) sailing, mid-latitude sailing, set and drift.

The Earth is the navigator's sphere on which one minute of great-circle arc is one nautical mile
(radius :data:`nav.units.EARTH_RADIUS_NMI`). A course steered at constant true heading is a rhumb
line (loxodrome). On it

    d_lat = dist · cos C                       (minutes of latitude = nmi)
    d_lon = DMP · tan C                        (Mercator sailing)

where DMP is the difference of meridional parts, M(φ) = ln tan(45° + φ/2) in radians of the
sphere (7915.7045′ · log10 tan(45° + φ/2), the textbook form). An east-west course (cos C = 0)
makes both d_lat and DMP zero; the same formula is then the parallel sailing d_lon = dep · sec φ.
We never divide DMP by d_lat: the ratio DMP/d_lat is evaluated in the closed form

    ΔΨ = asinh( 2 cos φm sin(Δφ/2) / (cos φ1 cos φ2) ),   φm = (φ1 + φ2)/2

(the difference of two asinh(tan φ) as one asinh), which is exact and well conditioned for every
course, including due east or west, so no branch is needed. Longitudes are returned in
[−180°, 180°): a run across the 180th meridian comes out on the other side. A rhumb line cannot
cross a pole; a run that would reach one is refused.

Current: ``set_deg`` is the direction toward which the current flows, ``drift_kn`` its rate. The
vessel's velocity through the water and the current's velocity add as vectors (north and east
components in knots); with both constant the track is again a rhumb line, the course and speed made
good (CMG, SMG), so the result is exact on the sphere, not an approximation.

All functions are pure and vectorised: scalars or numpy arrays that broadcast together.
"""

from __future__ import annotations

from datetime import datetime

import numpy as np

from .angles import atan2d, cosd, norm180, norm360, sind
from .errors import NavInputError
from .units import EARTH_RADIUS_NMI, NMI_PER_DEG

POLE_MARGIN_DEG = 1e-9  # a DR this close to a pole has no longitude to speak of


def _scalar(x):
    x = np.asarray(x, dtype=float)
    return x[()] if x.ndim == 0 else x


def _finite(name: str, value, example: str) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise NavInputError(f"'{value}' is not a number", field=name, example=example) from None
    if not np.all(np.isfinite(arr)):
        raise NavInputError("must be a finite number", field=name, example=example)
    return arr


def _check_lat(name: str, value) -> np.ndarray:
    arr = _finite(name, value, "41.2083 (north +)")
    if np.any(np.abs(arr) > 90.0):
        raise NavInputError("latitude must be within 90° S to 90° N", field=name,
                            example="41.2083 (north +)")
    return arr


def _check_non_negative(name: str, value, example: str) -> np.ndarray:
    arr = _finite(name, value, example)
    if np.any(arr < 0.0):
        raise NavInputError("must not be negative", field=name, example=example)
    return arr


def _dpsi_over_dphi(phi1_rad, phi2_rad):
    """(ψ2 − ψ1)/(φ2 − φ1) for ψ = asinh(tan φ), stable as φ2 → φ1 (then sec φ)."""
    dphi = phi2_rad - phi1_rad
    c1, c2 = np.cos(phi1_rad), np.cos(phi2_rad)
    cm = np.cos(0.5 * (phi1_rad + phi2_rad))
    half_sinc = np.sinc(0.5 * dphi / np.pi)          # sin(Δφ/2)/(Δφ/2)
    z = 2.0 * cm * np.sin(0.5 * dphi) / (c1 * c2)    # sinh(Δψ)
    with np.errstate(invalid="ignore", divide="ignore"):
        asinh_ratio = np.where(z == 0.0, 1.0, np.arcsinh(z) / np.where(z == 0.0, 1.0, z))
    return asinh_ratio * cm * half_sinc / (c1 * c2)


def meridional_parts_arcmin(lat_deg):
    """Meridional parts on the sphere, in minutes of arc: 3437.747′ · ln tan(45° + φ/2)."""
    lat = _check_lat("lat_deg", lat_deg)
    return _scalar(EARTH_RADIUS_NMI * np.arcsinh(np.tan(np.radians(lat))))


def course_speed_made_good(course_deg, speed_kn, set_deg=None, drift_kn=0.0):
    """(CMG, SMG): the vessel's course/speed through the water plus the current, as vectors.

    CMG is in [0, 360); with no way made good (SMG = 0) it is the course steered.
    """
    course = _finite("course_deg", course_deg, "045 (true)")
    speed = _check_non_negative("speed_kn", speed_kn, "6.5")
    drift = _check_non_negative("drift_kn", drift_kn, "0.8")
    if set_deg is None:
        if np.any(drift > 0.0):
            raise NavInputError("a drift needs a set (the direction the current flows toward)",
                                field="set_deg", example="set_deg=210, drift_kn=0.8")
        set_ = np.zeros_like(course)
    else:
        set_ = _finite("set_deg", set_deg, "210 (true, toward)")
    vn = speed * cosd(course) + drift * cosd(set_)
    ve = speed * sind(course) + drift * sind(set_)
    smg = np.hypot(vn, ve)
    cmg = np.where(smg > 0.0, norm360(atan2d(ve, vn)), norm360(course))
    return _scalar(norm360(cmg)), _scalar(smg)


def _rhumb_direct(lat_deg, lon_deg, course_deg, dist_nmi):
    """Move along a rhumb line; dist may be negative (backwards along the same line)."""
    phi1 = np.radians(lat_deg)
    ang = dist_nmi / EARTH_RADIUS_NMI                # radians of arc travelled
    dphi = ang * cosd(course_deg)
    lat2 = np.asarray(lat_deg, dtype=float) + np.degrees(dphi)   # exact for an east-west run
    phi2 = np.radians(lat2)
    if np.any(np.abs(lat2) > 90.0 - POLE_MARGIN_DEG):
        raise NavInputError("this run would reach or cross a pole, which a rhumb line cannot do",
                            field="dist_nmi", example="a shorter run, or a course away from the pole")
    q = _dpsi_over_dphi(phi1, phi2)
    dlon = np.degrees(ang * sind(course_deg) * q)
    return lat2, _wrap_lon(np.asarray(lon_deg, dtype=float) + dlon)


def _wrap_lon(lon):
    """Longitude in [−180, 180), leaving a value already inside untouched (no rounding)."""
    return np.where((lon >= -180.0) & (lon < 180.0), lon, norm180(lon))


def rhumb_direct(lat_deg, lon_deg, course_deg, dist_nmi):
    """The position reached by sailing `dist_nmi` on rhumb-line `course_deg` (Mercator sailing).

    A negative distance goes backwards along the same rhumb line. Returns (lat_deg, lon_deg),
    longitude in [−180, 180).
    """
    lat = _check_lat("lat_deg", lat_deg)
    lon = _finite("lon_deg", lon_deg, "-32.118 (east +)")
    course = _finite("course_deg", course_deg, "045 (true)")
    dist = _finite("dist_nmi", dist_nmi, "42.5")
    lat2, lon2 = _rhumb_direct(lat, lon, course, dist)
    return _scalar(lat2), _scalar(lon2)


def rhumb_line(lat1_deg, lon1_deg, lat2_deg, lon2_deg):
    """(course_deg, dist_nmi) of the rhumb line from point 1 to point 2 (the shorter way in lon).

    Course in [0, 360); for coincident points the course is 0 and the distance 0. Between the two
    ways round, the one with |Δlon| ≤ 180° is taken (at exactly 180° the eastward one).
    """
    lat1 = _check_lat("lat1_deg", lat1_deg)
    lat2 = _check_lat("lat2_deg", lat2_deg)
    lon1 = _finite("lon1_deg", lon1_deg, "-32.118 (east +)")
    lon2 = _finite("lon2_deg", lon2_deg, "-32.118 (east +)")
    if np.any(np.abs(lat1) >= 90.0) or np.any(np.abs(lat2) >= 90.0):
        raise NavInputError("a rhumb line has no course to or from a pole", field="lat_deg",
                            example="89.5")
    phi1, phi2 = np.radians(lat1), np.radians(lat2)
    dphi = phi2 - phi1
    dlon_deg = norm180(lon2 - lon1)
    dlon_deg = np.where(dlon_deg == -180.0, 180.0, dlon_deg)
    dlon = np.radians(dlon_deg)
    q = _dpsi_over_dphi(phi1, phi2)                  # ΔΨ/Δφ > 0
    east = dlon / q                                  # departure, radians of arc
    course = norm360(atan2d(east, dphi))
    dist = np.hypot(dphi, east) * EARTH_RADIUS_NMI
    return _scalar(course), _scalar(dist)


def mid_latitude_sailing(lat_deg, lon_deg, course_deg, dist_nmi):
    """The mid-latitude approximation for short runs: d_lat = d cos C, d_lon = dep / cos(mid lat).

    Agrees with Mercator sailing to a fraction of a cable for runs of a day or two away from high
    latitudes (the tests measure it); prefer :func:`rhumb_direct`.
    """
    lat = _check_lat("lat_deg", lat_deg)
    lon = _finite("lon_deg", lon_deg, "-32.118 (east +)")
    course = _finite("course_deg", course_deg, "045 (true)")
    dist = _finite("dist_nmi", dist_nmi, "42.5")
    dlat = dist * cosd(course) / NMI_PER_DEG
    lat2 = lat + dlat
    if np.any(np.abs(lat2) >= 90.0):
        raise NavInputError("this run would reach a pole", field="dist_nmi", example="42.5")
    dep = dist * sind(course)
    dlon = dep / (NMI_PER_DEG * cosd(lat + 0.5 * dlat))
    return _scalar(lat2), _scalar(_wrap_lon(lon + dlon))


def advance_position(lat_deg, lon_deg, course_deg, speed_kn, hours, *, set_deg=None,
                     drift_kn=0.0):
    """Move a point by course and speed (and current) for `hours`; negative hours retire it.

    The track is the rhumb line of the course and speed made good; retiring by −h runs back along
    the same rhumb line, so advancing and retiring are exact inverses. Returns (lat_deg, lon_deg).
    """
    lat = _check_lat("lat_deg", lat_deg)
    lon = _finite("lon_deg", lon_deg, "-32.118 (east +)")
    h = _finite("hours", hours, "2.5")
    cmg, smg = course_speed_made_good(course_deg, speed_kn, set_deg, drift_kn)
    lat2, lon2 = _rhumb_direct(lat, lon, np.asarray(cmg), np.asarray(smg) * h)
    return _scalar(lat2), _scalar(lon2)


def dr_position(lat_deg, lon_deg, course_deg, speed_kn, hours, *, set_deg=None, drift_kn=0.0):
    """Dead-reckoning position after `hours` (≥ 0) at `course_deg`/`speed_kn` from a known point.

    With ``set_deg``/``drift_kn`` the current is added (strictly that makes it an estimated
    position, EP). Returns (lat_deg, lon_deg), longitude in [−180, 180).
    """
    h = _finite("hours", hours, "2.5")
    if np.any(h < 0.0):
        raise NavInputError("a DR runs forward in time; use advance_position to retire",
                            field="hours", example="2.5")
    return advance_position(lat_deg, lon_deg, course_deg, speed_kn, h, set_deg=set_deg,
                            drift_kn=drift_kn)


def hours_between(t_from: datetime, t_to: datetime) -> float:
    """Signed hours from `t_from` to `t_to` (both aware datetimes)."""
    if t_from.tzinfo is None or t_to.tzinfo is None:
        raise NavInputError("an instant without a time zone", field="utc",
                            example="2026-03-20T18:42:10Z")
    return (t_to - t_from).total_seconds() / 3600.0
