"""Altitude corrections: sextant altitude Hs -> observed altitude Ho, every step on its own.

Every step is returned in minutes of arc, *signed as applied*, so that

    Ha = Hs + (index + dip)/60            sea horizon (bubble: dip = 0)
    Ha = (Hs + index/60) / 2              artificial horizon (the reading is twice the altitude)
    Ho = Ha + (refraction + sd + augmentation + parallax)/60

hold exactly (to rounding) for the fields of :class:`AltitudeCorrection`.

1. Index correction = −IE; IE is + when the sextant reads high ("on the arc").
2. Dip of the sea horizon = 1.76′·√h, h the height of eye in metres: the formula behind the
   almanac's dip table (the American Practical Navigator writes 0.97′·√h in feet, the same to
   0.2 %). Applied as −dip. An artificial horizon halves the altitude after the index correction
   and has no dip; a bubble horizon has neither.
   The result is Ha, the apparent altitude of the point observed (a limb, or a star).
3. Refraction, from Ha, by Bennett's formula (G. G. Bennett, J. Navigation 35, 1982; stated
   accuracy 0.07′ from 0° to 90°):  R = cot(Ha + 7.31/(Ha + 4.4)) arcmin, Ha in degrees, scaled by
   (P/1010 hPa)·(283/(273 + T °C)). The bare formula gives −0.0014′ at 90°; the constant
   −cot(90° + 7.31/94.4) = +0.0014′ (50 times below the formula's accuracy) is added so that the
   refraction at the zenith is exactly 0. Applied as −R. Below 5° apparent altitude a warning
   says refraction is uncertain; below −1° the sight is refused.
4. Semi-diameter (Sun and Moon): +SD for the lower limb, −SD for the upper, 0 for the centre.
   ``sd_arcmin`` carries the *geocentric* SD (the almanac's); planets and stars are points and
   take none, whatever limb is named.
5. Augmentation, reported on its own (not folded into ``sd_arcmin``), with the sign of the SD:
   the observer is nearer the body than the Earth's centre is, so the body looks larger. We use the
   exact form, sin SD_topo = sin SD · r/d (r the geocentric, d the topocentric distance of the
   body's centre), not the first-order SD·(1 + sin HP·sin Ha). Up to +0.3′ for the Moon overhead.
6. Parallax in altitude: a rigorous topocentric computation, not HP·cos(Ha).
   The body's centre, at topocentric (airless) altitude h and azimuth A, lies at distance d from
   the observer; the observer is at the vector R from the Earth's centre. The body's geocentric
   vector is d·u(h, A) + R, and Ho is its altitude above the observer's horizon plane (the plane
   normal to the geodetic vertical) — exactly the quantity that Hc = f(lat, Dec, LHA) computes
   from geocentric GHA and Dec. The body's geocentric distance is r = a / sin HP, with a the
   Earth's equatorial radius and HP the *equatorial* horizontal parallax that nav.almanac gives.
   - With ``lat_deg`` and ``zn_deg`` the observer stands on the WGS 84 ellipsoid. This carries
     what the trade calls the Moon's "OB" (oblateness) correction in full: the smaller geocentric
     radius ρ ≈ 1 − f·sin²φ, and the tilt of the vertical from the geocentric direction,
     v ≈ 11.6′·sin 2φ, which adds about HP·v·sin h·cos A. To first order
     p ≈ HP·ρ·(cos v·cos h + sin v·sin h·cos A); for the Moon the figure is worth up to 0.2′.
   - Without them the observer is on a sphere of radius a: p = asin(sin HP · cos h), the
     textbook HP·cos(Ha) made exact, with the Moon up to 0.2′ off (a warning says so).
   Applied for the Sun (HP defaults to the mean solar parallax 8.794″ if none is given), the Moon,
   and any planet whose HP is given (Venus up to 0.5′; Jupiter and Saturn under 0.03′). Stars:
   none. Diurnal aberration (≤ 0.005′) and the height of eye in the parallax (≤ 10⁻⁴′) are left out.

Inputs broadcast with numpy: every numeric field of the result is a scalar for scalar inputs and an
array for array inputs. ``limb`` and ``horizon`` may be arrays of words; ``body_kind`` is one word
per call (the batch reducer groups sights by body). ``warnings`` is a tuple of messages for a scalar
sight, and for arrays a tuple holding one tuple of messages per element (in C order), so that a
caller can print each sight's own warnings beside it. A bad value raises
:class:`nav.errors.NavInputError` naming the field; for arrays ``row`` is the element's 1-based
position in the (flattened, broadcast) input.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .almanac import EARTH_EQUATORIAL_RADIUS_KM, MOON_RADIUS_KM
from .angles import asind, atan2d, cosd, format_dm, sind
from .errors import NavInputError
from .fields import parse_horizon, parse_limb, weather_warnings

# ---------------------------------------------------------------- constants (named, with sources)

DIP_ARCMIN_PER_SQRT_M = 1.76      # dip = 1.76′·√h(m): the almanac's dip formula (APN: 0.97′·√h(ft))
BENNETT_A = 7.31                  # Bennett (1982): R = cot(h + 7.31/(h + 4.4)), arcmin
BENNETT_B = 4.4
STANDARD_TEMPERATURE_C = 10.0     # the conditions Bennett's mean refraction refers to
STANDARD_PRESSURE_HPA = 1010.0
LOW_ALTITUDE_DEG = 5.0            # below this apparent altitude refraction is uncertain (warn)
LOWEST_ALTITUDE_DEG = -1.0        # below this apparent altitude a sight is refused
LARGE_INDEX_ERROR_ARCMIN = 10.0   # common practice, no source: a sextant this far out is suspect
WGS84_FLATTENING = 1.0 / 298.257_223_563   # WGS 84
_E2 = WGS84_FLATTENING * (2.0 - WGS84_FLATTENING)
SUN_MEAN_HP_ARCMIN = 8.794_148 / 60.0      # solar parallax 8.794148″ (IAU 1976 constants, from memory)
MOON_TO_EARTH_RADIUS = MOON_RADIUS_KM / EARTH_EQUATORIAL_RADIUS_KM  # SD from HP when none given

BODY_KINDS = ("sun", "moon", "planet", "star")
_SD_SIGN = {"lower": 1.0, "upper": -1.0, "center": 0.0}


def _cot_deg(x_deg):
    return np.asarray(cosd(x_deg)) / np.asarray(sind(x_deg))


_BENNETT_AT_ZENITH = float(_cot_deg(90.0 + BENNETT_A / (90.0 + BENNETT_B)))  # −0.00135′


@dataclass(frozen=True)
class AltitudeCorrection:
    """Hs -> Ho, step by step. Corrections in arcminutes, signed as applied; altitudes in degrees.

    ``sd_arcmin`` is the geocentric semi-diameter as applied (±SD or 0), ``augmentation_arcmin``
    the Moon's (and Sun's, 0.0003′) augmentation as applied, ``parallax_arcmin`` the parallax in
    altitude (+). ``limb`` is ``lower``/``upper``/``center`` for the Sun and Moon and None for
    bodies seen as points. ``warnings``: see the module docstring.
    """

    body_kind: str
    limb: object
    horizon: object
    hs_deg: np.ndarray | float
    index_arcmin: np.ndarray | float
    dip_arcmin: np.ndarray | float
    ha_deg: np.ndarray | float
    refraction_arcmin: np.ndarray | float
    sd_arcmin: np.ndarray | float
    augmentation_arcmin: np.ndarray | float
    parallax_arcmin: np.ndarray | float
    ho_deg: np.ndarray | float
    warnings: tuple

    @property
    def total_arcmin(self):
        """Ho − Hs in arcminutes (for an artificial horizon this includes the halving)."""
        return (np.asarray(self.ho_deg) - np.asarray(self.hs_deg)) * 60.0


# ---------------------------------------------------------------- helpers

def _out(x):
    x = np.asarray(x, dtype=float) + 0.0  # + 0.0 turns a signed zero (−0.0) into 0.0
    return x[()] if x.ndim == 0 else x


def _refuse_where(bad, message, field, example, scalar):
    """Raise NavInputError for the first element where `bad`; message(i) gives the reason."""
    bad = np.asarray(bad)
    if np.any(bad):
        i = int(np.flatnonzero(bad.ravel())[0])
        raise NavInputError(message(i), field=field, row=None if scalar else i + 1, example=example)


def _finite(values, field, example, scalar):
    v = np.asarray(values, dtype=float)
    _refuse_where(~np.isfinite(v), lambda i: f"{float(v.ravel()[i])!r} is not a finite number",
                  field, example, scalar)
    return v


def _words(values, parse, field, shape, default=None):
    """Parse an array (or one) of words with the project's one parser, broadcast to `shape`."""
    arr = np.broadcast_to(np.asarray(values, dtype=object), shape)
    flat = arr.ravel()
    out = np.empty(flat.shape, dtype=object)
    cache: dict = {}
    for i, w in enumerate(flat):
        if w is None:
            out[i] = default
            continue
        if w not in cache:
            try:
                cache[w] = parse(w, field)
            except NavInputError as err:
                if shape != ():
                    err.at_row(i + 1)
                raise
        out[i] = cache[w]
    return out.reshape(shape)


# ---------------------------------------------------------------- the single steps

def dip_arcmin(eye_height_m):
    """Dip of the sea horizon in arcminutes (positive; applied as −dip): 1.76′·√h, h in metres.

    The formula behind the almanac's dip table, which includes terrestrial refraction; the
    American Practical Navigator gives the same as 0.97′·√h with h in feet.
    """
    scalar = np.ndim(eye_height_m) == 0
    h = _finite(eye_height_m, "eye_height_m", "2.5 (metres)", scalar)
    _refuse_where(h < 0.0, lambda i: f"height of eye {h.ravel()[i]:g} m is below the sea",
                  "eye_height_m", "2.5 (metres)", scalar)
    return _out(DIP_ARCMIN_PER_SQRT_M * np.sqrt(h))


def refraction_arcmin(ha_deg, temperature_c=STANDARD_TEMPERATURE_C,
                      pressure_hpa=STANDARD_PRESSURE_HPA, *, field: str = "ha"):
    """Refraction in arcminutes (positive; applied as −R) at apparent altitude `ha_deg`.

    Bennett's formula R = cot(Ha + 7.31/(Ha + 4.4)) (J. Navigation 35, 1982; 0.07′ from 0° to 90°)
    at 10 °C and 1010 hPa, plus 0.0014′ so that R(90°) = 0 exactly, scaled by
    (P/1010)·(283/(273 + T)). Refuses Ha below −1° or above 90° (NavInputError on `field`).
    """
    scalar = all(np.ndim(v) == 0 for v in (ha_deg, temperature_c, pressure_hpa))
    ha = _finite(ha_deg, field, "34.2 (degrees)", scalar)
    t = _finite(temperature_c, "temperature_c", "10 (°C)", scalar)
    p = _finite(pressure_hpa, "pressure_hpa", "1013 (hPa)", scalar)
    ha, t, p = np.broadcast_arrays(ha, t, p)
    _refuse_where(ha < LOWEST_ALTITUDE_DEG,
                  lambda i: f"apparent altitude {format_dm(ha.ravel()[i])} is below −1°: "
                            "refraction there is unknown, the sight cannot be used",
                  field, "a sight at least 5° above the horizon", scalar)
    _refuse_where(ha > 90.0, lambda i: f"apparent altitude {format_dm(ha.ravel()[i])} is above 90°",
                  field, "34.2 (degrees)", scalar)
    _refuse_where(t <= -273.15, lambda i: f"{t.ravel()[i]:g} °C is below absolute zero",
                  "temperature_c", "10 (°C)", scalar)
    _refuse_where(p < 0.0, lambda i: f"pressure {p.ravel()[i]:g} hPa is negative",
                  "pressure_hpa", "1013 (hPa)", scalar)
    r_std = _cot_deg(ha + BENNETT_A / (ha + BENNETT_B)) - _BENNETT_AT_ZENITH
    scale = (p / STANDARD_PRESSURE_HPA) * ((273.0 + STANDARD_TEMPERATURE_C) / (273.0 + t))
    return _out(r_std * scale)


def _observer_enu(lat_deg, shape):
    """The observer's geocentric vector in its local (north, up) axes, in equatorial radii.

    On the WGS 84 ellipsoid at geodetic latitude φ: north = −e²·sinφ·cosφ/w, up = w,
    w = √(1 − e² sin²φ) (east is 0). Without a latitude: the sphere of radius a, (0, 1).
    """
    if lat_deg is None:
        return np.zeros(shape), np.ones(shape)
    s, c = np.asarray(sind(lat_deg)), np.asarray(cosd(lat_deg))
    w = np.sqrt(1.0 - _E2 * s * s)
    return np.broadcast_to(-_E2 * s * c / w, shape), np.broadcast_to(w, shape)


def _geometry(h_deg, zn_deg, hp_arcmin, north, up):
    """Topocentric distance d and geocentric altitude of a body at topocentric altitude h.

    Distances in equatorial radii; r = 1/sin HP. Returns (d, r, geocentric altitude in degrees).
    """
    r = 1.0 / np.asarray(sind(np.asarray(hp_arcmin) / 60.0))
    ch, sh = np.asarray(cosd(h_deg)), np.asarray(sind(h_deg))
    te, tn = ch * np.asarray(sind(zn_deg)), ch * np.asarray(cosd(zn_deg))
    t_r = tn * north + sh * up
    d = -t_r + np.sqrt(t_r * t_r - (north * north + up * up) + r * r)
    ge, gn, gu = d * te, d * tn + north, d * sh + up
    return d, r, atan2d(gu, np.hypot(ge, gn))


def _check_figure_args(lat_deg, zn_deg, scalar):
    if (lat_deg is None) != (zn_deg is None):
        raise NavInputError("give both lat_deg and zn_deg (for the Earth's figure), or neither",
                            field="lat_deg" if lat_deg is None else "zn_deg",
                            example="lat_deg=41.2, zn_deg=135")
    if lat_deg is None:
        return None, None
    lat = _finite(lat_deg, "lat_deg", "41.2", scalar)
    _refuse_where(np.abs(lat) > 90.0, lambda i: f"latitude {lat.ravel()[i]:g}° is beyond a pole",
                  "lat_deg", "41.2", scalar)
    return lat, _finite(zn_deg, "zn_deg", "135", scalar)


def parallax_in_altitude_arcmin(h_topo_deg, hp_arcmin, *, lat_deg=None, zn_deg=None):
    """Parallax in altitude (arcmin, +): geocentric minus topocentric altitude of a body's centre.

    `h_topo_deg` is the topocentric airless altitude of the centre (Ha − R ± SD), `hp_arcmin` the
    equatorial horizontal parallax. With `lat_deg` (geodetic) and `zn_deg` (the body's azimuth)
    the observer stands on the WGS 84 ellipsoid (the Moon's oblateness term included); without
    them, on a sphere of the equatorial radius: asin(sin HP · cos h). See the module docstring.
    """
    scalar = all(np.ndim(v) == 0 for v in (h_topo_deg, hp_arcmin, lat_deg, zn_deg))
    h = _finite(h_topo_deg, "h_topo_deg", "34.2", scalar)
    hp = _finite(hp_arcmin, "hp_arcmin", "54.3 (arcmin)", scalar)
    lat, zn = _check_figure_args(lat_deg, zn_deg, scalar)
    shape = np.broadcast_shapes(h.shape, hp.shape, *(() if lat is None else (lat.shape, zn.shape)))
    north, up = _observer_enu(lat, shape)
    _refuse_where(hp < 0, lambda i: f"HP {hp.ravel()[i]:g}′ is negative", "hp_arcmin",
                  "54.3 (arcmin)", scalar)
    _, _, h_geo = _geometry(h, 0.0 if zn is None else zn, np.where(hp > 0, hp, 1e-9), north, up)
    return _out(np.where(hp > 0, (h_geo - h) * 60.0, 0.0))


def topocentric_sd_arcmin(sd_arcmin, h_topo_deg, hp_arcmin, *, lat_deg=None, zn_deg=None):
    """The semi-diameter seen by the observer (arcmin): sin SD_topo = sin SD · r/d, exactly.

    `sd_arcmin` is the geocentric SD, `h_topo_deg` the topocentric airless altitude of the centre.
    SD_topo − SD is the augmentation; to first order SD·sin HP·sin h.
    """
    scalar = all(np.ndim(v) == 0 for v in (sd_arcmin, h_topo_deg, hp_arcmin, lat_deg, zn_deg))
    sd = _finite(sd_arcmin, "sd_arcmin", "16.1 (arcmin)", scalar)
    h = _finite(h_topo_deg, "h_topo_deg", "34.2", scalar)
    hp = _finite(hp_arcmin, "hp_arcmin", "54.3 (arcmin)", scalar)
    lat, zn = _check_figure_args(lat_deg, zn_deg, scalar)
    shape = np.broadcast_shapes(sd.shape, h.shape, hp.shape,
                                *(() if lat is None else (lat.shape, zn.shape)))
    _refuse_where(hp < 0, lambda i: f"HP {hp.ravel()[i]:g}′ is negative", "hp_arcmin",
                  "54.3 (arcmin)", scalar)
    north, up = _observer_enu(lat, shape)
    d, r, _ = _geometry(h, 0.0 if zn is None else zn, np.where(hp > 0, hp, 1e-9), north, up)
    return _out(asind(np.asarray(sind(sd / 60.0)) * r / d) * 60.0)


# ---------------------------------------------------------------- the whole correction

def correct_altitude(hs_deg, *, body_kind, limb="lower", index_error_arcmin=0.0, eye_height_m=0.0,
                     horizon="sea", temperature_c=STANDARD_TEMPERATURE_C,
                     pressure_hpa=STANDARD_PRESSURE_HPA, hp_arcmin=None, sd_arcmin=None,
                     lat_deg=None, zn_deg=None) -> AltitudeCorrection:
    """Hs -> Ho with every step on its own (see the module docstring for the methods).

    body_kind: ``sun``, ``moon``, ``planet`` or ``star`` (one per call). limb: ``lower``, ``upper``
    or ``center`` (or None: lower for the Sun and Moon), word or array of words, ignored for planets
    and stars. horizon: ``sea``, ``artificial`` or ``bubble``, word or array. hp_arcmin: equatorial
    HP (needed for the Moon; the Sun's defaults to 8.794″; a planet's is used when given).
    sd_arcmin: geocentric SD (needed for a Sun limb; the Moon's follows from HP if not given).
    lat_deg, zn_deg: the observer's geodetic latitude and the body's azimuth (the DR's are good
    enough), for the parallax on the Earth's ellipsoid; give both or neither.
    """
    kind = str(body_kind).strip().lower()
    if kind not in BODY_KINDS:
        raise NavInputError(f"'{body_kind}' is not a kind of body", field="body_kind",
                            example="sun, moon, planet or star")
    numeric = (hs_deg, index_error_arcmin, eye_height_m, temperature_c, pressure_hpa, hp_arcmin,
               sd_arcmin, lat_deg, zn_deg)
    scalar = all(np.ndim(v) == 0 for v in numeric + (limb, horizon))
    hs = _finite(hs_deg, "hs", "34 12.3", scalar)
    ie = _finite(index_error_arcmin, "index_error_arcmin", "-1.5 (arcmin, + on the arc)", scalar)
    eye = _finite(eye_height_m, "eye_height_m", "2.5 (metres)", scalar)
    t = _finite(temperature_c, "temperature_c", "10 (°C)", scalar)
    p = _finite(pressure_hpa, "pressure_hpa", "1013 (hPa)", scalar)
    lat, zn = _check_figure_args(lat_deg, zn_deg, scalar)
    shapes = [np.shape(v) for v in (hs, ie, eye, t, p, limb, horizon)]
    shapes += [np.shape(v) for v in (hp_arcmin, sd_arcmin, lat, zn) if v is not None]
    shape = np.broadcast_shapes(*shapes)
    hs, ie, eye, t, p = (np.broadcast_to(v, shape) for v in (hs, ie, eye, t, p))
    hor = _words(horizon, parse_horizon, "horizon", shape, default="sea")
    has_limb = kind in ("sun", "moon")
    limbs = _words(limb, parse_limb, "limb", shape, default="lower")
    sign = np.vectorize(_SD_SIGN.get, otypes=[float])(limbs) if has_limb else np.zeros(shape)
    if not has_limb:
        limbs = np.full(shape, None, dtype=object)

    # HP and SD: what each kind needs
    if kind == "moon" and hp_arcmin is None:
        raise NavInputError("the Moon needs its horizontal parallax", field="hp_arcmin",
                            example="hp_arcmin=57.3 (from the almanac)")
    if kind == "star" or hp_arcmin is None and kind == "planet":
        hp = np.zeros(shape)
    elif hp_arcmin is None:  # the Sun
        hp = np.full(shape, SUN_MEAN_HP_ARCMIN)
    else:
        hp = np.broadcast_to(_finite(hp_arcmin, "hp_arcmin", "57.3 (arcmin)", scalar), shape)
        _refuse_where((hp < 0) | (hp > 70.0), lambda i: f"HP {hp.ravel()[i]:g}′ is impossible",
                      "hp_arcmin", "57.3 (arcmin)", scalar)
    if not has_limb:
        sd = np.zeros(shape)
    elif sd_arcmin is None:
        if kind == "moon":
            sd = asind(MOON_TO_EARTH_RADIUS * np.asarray(sind(hp / 60.0))) * 60.0
        elif np.any(sign != 0):
            raise NavInputError("a limb of the Sun needs its semi-diameter", field="sd_arcmin",
                                example="sd_arcmin=16.1 (from the almanac)")
        else:
            sd = np.zeros(shape)
    else:
        sd = np.broadcast_to(_finite(sd_arcmin, "sd_arcmin", "16.1 (arcmin)", scalar), shape)
        _refuse_where((sd < 0) | (sd > 20.0), lambda i: f"SD {sd.ravel()[i]:g}′ is impossible",
                      "sd_arcmin", "16.1 (arcmin)", scalar)

    # the reading: above 90° only an artificial horizon's double altitude (checked before halving)
    art = hor == "artificial"
    _refuse_where(~art & (hs > 90.0) | art & (hs > 180.0),
                  lambda i: f"Hs {hs.ravel()[i]:g}° is above "
                            f"{180 if art.ravel()[i] else 90}°" + ("" if art.ravel()[i] else
                            ": only an artificial-horizon reading (the double altitude) can be"),
                  "hs", "34 12.3, or 112 24.6 with an artificial horizon", scalar)
    # 1-2: index, horizon -> Ha
    index = -ie
    sea = hor == "sea"
    h1 = hs + index / 60.0
    h1 = np.where(hor == "artificial", h1 / 2.0, h1)
    dip = np.where(sea, -np.asarray(dip_arcmin(np.where(sea, eye, 0.0))), 0.0)
    ha = h1 + dip / 60.0
    # 3: refraction (refuses Ha < −1°, naming the sextant altitude)
    refraction = -np.asarray(refraction_arcmin(ha, t, p, field="hs")) * np.ones(shape)
    h_limb = ha + refraction / 60.0
    # 4-6: SD, augmentation, parallax on the chosen figure of the Earth
    north, up = _observer_enu(lat, shape)
    az = np.zeros(shape) if zn is None else np.broadcast_to(zn, shape)
    with_parallax = hp > 0
    hp_safe = np.where(with_parallax, hp, 1e-9)  # avoids 1/0; its results are masked out
    sd_topo = sd
    for _ in range(3):  # SD_topo depends on h through d only weakly: converges ~1e-4 per pass
        h_c = h_limb + sign * sd_topo / 60.0
        d, r, _ = _geometry(h_c, az, hp_safe, north, up)
        sd_topo = np.where(with_parallax, asind(np.asarray(sind(sd / 60.0)) * r / d) * 60.0, sd)
    h_c = h_limb + sign * sd_topo / 60.0
    _, _, h_geo = _geometry(h_c, az, hp_safe, north, up)
    parallax = np.where(with_parallax, (h_geo - h_c) * 60.0, 0.0)
    ho = h_c + parallax / 60.0

    warnings = _warnings(kind, shape, ha, ie, eye, sea, hp_arcmin, lat, t, p)
    return AltitudeCorrection(
        body_kind=kind, limb=limbs[()] if scalar else limbs, horizon=hor[()] if scalar else hor,
        hs_deg=_out(hs), index_arcmin=_out(index), dip_arcmin=_out(dip), ha_deg=_out(ha),
        refraction_arcmin=_out(refraction), sd_arcmin=_out(sign * sd),
        augmentation_arcmin=_out(sign * (sd_topo - sd)), parallax_arcmin=_out(parallax),
        ho_deg=_out(ho), warnings=warnings[0] if scalar else tuple(warnings))


def _warnings(kind, shape, ha, ie, eye, sea, hp_arcmin, lat, t, p) -> list[tuple[str, ...]]:
    """One tuple of messages per element (C order)."""
    n = int(np.prod(shape))
    ha, ie, eye, sea, t, p = (np.broadcast_to(v, shape).ravel() for v in (ha, ie, eye, sea, t, p))
    out: list[tuple[str, ...]] = []
    for i in range(n):
        msgs = []
        if ha[i] < LOW_ALTITUDE_DEG:
            msgs.append(f"low altitude: Ha {format_dm(ha[i])} is below 5°, where refraction is "
                        "uncertain (more so in unusual weather); weigh this sight lightly")
        if abs(ie[i]) > LARGE_INDEX_ERROR_ARCMIN:
            msgs.append(f"index error {ie[i]:+.1f}′ is unusually large: check that it is in "
                        "minutes of arc, and adjust the sextant")
        if sea[i] and eye[i] == 0.0:
            msgs.append("height of eye is 0 m, so no dip was applied: give the height of eye "
                        "for a sea-horizon sight")
        if kind == "planet" and hp_arcmin is None:
            msgs.append("no HP given for the planet: parallax not applied (up to 0.5′ for Venus)")
        msgs.extend(weather_warnings(float(t[i]), float(p[i])))
        if kind == "moon" and lat is None:
            msgs.append("Moon's parallax computed for a spherical Earth (no latitude given): "
                        "up to 0.2′ off")
        out.append(tuple(msgs))
    return out
