"""Sight reduction (Marcq St Hilaire): LHA, Hc, Zn and the intercept; the AP the tables' way.

The navigational triangle is solved as a vector: the body's unit vector in the observer's local
east/north/up frame is

    x = −cos Dec · sin LHA
    y =  cos lat · sin Dec − sin lat · cos Dec · cos LHA
    z =  sin lat · sin Dec + cos lat · cos Dec · cos LHA

and Hc = atan2(z, √(x² + y²)), Zn = atan2(x, y) mod 360°. This keeps full precision near the zenith
(where asin would lose it), at the poles and at LHA 0°/180°, with the exact degree trigonometry of
:mod:`nav.angles` (sin 180° = 0). The intercept is Ho − Hc in minutes of arc = nautical miles,
+ toward the body. Latitudes are geodetic: nav's geocentric GHA/Dec with the observer's geodetic
vertical, which is what Ho (from :mod:`nav.corrections`) refers to.

:func:`reduce_sights` runs the whole chain — almanac, corrections, reduction — for many sights in
one vectorised call: the per-instant quantities (Earth's state, precession-nutation, GAST) once for
every distinct instant, then one pass for all star sights and one per solar-system body, each at
its own sights' instants (:func:`nav.almanac.places_at`); warnings are built only for the sights
they concern; inputs of any length are worked in chunks (:func:`iter_reduce_sights` streams them).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .angles import atan2d, cosd, format_dm, norm180, norm360, sind
from .errors import NavInputError

HIGH_ALTITUDE_DEG = 85.0     # common practice, no source: above this the straight LOP misleads
LARGE_INTERCEPT_NMI = 30.0   # common practice, no source: a larger intercept is suspect


@dataclass(frozen=True)
class Reduction:
    """One or many reductions (scalars or arrays). ``lat_deg``/``lon_deg`` are the position
    reduced from (DR or AP); intercept + toward, in nautical miles (= arcminutes)."""

    gha_deg: np.ndarray | float
    dec_deg: np.ndarray | float
    lat_deg: np.ndarray | float
    lon_deg: np.ndarray | float
    lha_deg: np.ndarray | float
    hc_deg: np.ndarray | float
    zn_deg: np.ndarray | float
    ho_deg: np.ndarray | float
    intercept_nmi: np.ndarray | float

    @property
    def toward(self):
        """True where the intercept is toward the body (Ho ≥ Hc; a zero intercept plots at the AP)."""
        out = np.asarray(self.intercept_nmi) >= 0.0
        return bool(out) if out.ndim == 0 else out


def _out(x):
    x = np.asarray(x, dtype=float) + 0.0   # no signed zeros in results
    return x[()] if x.ndim == 0 else x


def _checked(values, field, lo, hi, example):
    v = np.asarray(values, dtype=float)
    bad = ~np.isfinite(v) | (v < lo) | (v > hi)
    if np.any(bad):
        i = int(np.flatnonzero(bad.ravel())[0])
        bad_value = float(v.ravel()[i])
        reason = (f"{bad_value:g}° is not between {lo:g}° and {hi:g}°" if math.isfinite(bad_value)
                  else f"{bad_value!r} is not a finite angle")
        raise NavInputError(reason, field=field,
                            row=None if v.ndim == 0 else i + 1, example=example)
    return v


def hc_zn(lat_deg, dec_deg, lha_deg):
    """Computed altitude Hc (degrees) and true azimuth Zn ([0, 360)) of a body. Vectorised.

    At the zenith (or at a pole, where every direction is south or north) Zn is whatever the
    limit along the meridian gives; a caller warns about such sights.
    """
    lat = _checked(lat_deg, "lat_deg", -90.0, 90.0, "41.2")
    dec = _checked(dec_deg, "dec_deg", -90.0, 90.0, "-16.7")
    lha = np.asarray(lha_deg, dtype=float)
    sl, cl = np.asarray(sind(lat)), np.asarray(cosd(lat))
    sd, cd = np.asarray(sind(dec)), np.asarray(cosd(dec))
    sh, ch = np.asarray(sind(lha)), np.asarray(cosd(lha))
    x = -cd * sh
    y = cl * sd - sl * cd * ch
    z = sl * sd + cl * cd * ch
    hc = atan2d(z, np.hypot(x, y))
    zn = norm360(atan2d(x, y))
    return _out(hc), _out(zn)


def reduce_at(ho_deg, gha_deg, dec_deg, lat_deg, lon_deg) -> Reduction:
    """Reduce from any position (lat north +, lon east +): LHA = GHA + lon, Hc, Zn, Ho − Hc."""
    ho = _checked(ho_deg, "ho", -90.0, 90.0, "34.2")
    lon = _checked(lon_deg, "lon_deg", -360.0, 360.0, "-32.1")
    gha = np.asarray(gha_deg, dtype=float)
    lha = norm360(gha + lon)
    hc, zn = hc_zn(lat_deg, dec_deg, lha)
    return Reduction(gha_deg=_out(gha), dec_deg=_out(dec_deg), lat_deg=_out(lat_deg),
                     lon_deg=_out(lon), lha_deg=_out(lha), hc_deg=hc, zn_deg=zn, ho_deg=_out(ho),
                     intercept_nmi=_out((ho - hc) * 60.0))


def _nearest_whole(x):
    """The nearest whole number; halves go up (so +0.5 and −0.5 both move toward +)."""
    return np.floor(np.asarray(x, dtype=float) + 0.5)


def assumed_position(dr_lat_deg, dr_lon_deg, gha_deg):
    """The AP that sight-reduction tables need: (ap_lat_deg, ap_lon_deg).

    Latitude: the whole degree nearest the DR. Longitude: the one nearest the DR that makes
    LHA = GHA + lon a whole degree (in west longitude its minutes are the GHA's, in east
    longitude 60′ minus them), in [−180, 180) — across the 180th meridian too. Both lie within
    0.5° of the DR.
    """
    lat = _checked(dr_lat_deg, "dr_lat", -90.0, 90.0, "41.2")
    lon = _checked(dr_lon_deg, "dr_lon", -360.0, 360.0, "-32.1")
    lha_dr = np.asarray(gha_deg, dtype=float) + lon
    ap_lat = _nearest_whole(lat)
    ap_lon = norm180(lon + (_nearest_whole(lha_dr) - lha_dr))
    return _out(ap_lat), _out(ap_lon)


def reduce_from_ap(ho_deg, gha_deg, dec_deg, dr_lat_deg, dr_lon_deg) -> Reduction:
    """Reduce from the tables' AP (see :func:`assumed_position`), as a student's work does.

    ``lha_deg`` and ``lat_deg`` of the result are whole degrees exactly (no rounding residue),
    so Hc and Zn are those of the tables' entry arguments.
    """
    ho = _checked(ho_deg, "ho", -90.0, 90.0, "34.2")
    gha = np.asarray(gha_deg, dtype=float)
    ap_lat, ap_lon = assumed_position(dr_lat_deg, dr_lon_deg, gha)
    lha = norm360(_nearest_whole(gha + np.asarray(dr_lon_deg, dtype=float)))
    hc, zn = hc_zn(ap_lat, dec_deg, lha)
    return Reduction(gha_deg=_out(gha), dec_deg=_out(dec_deg), lat_deg=ap_lat, lon_deg=ap_lon,
                     lha_deg=_out(lha), hc_deg=hc, zn_deg=zn, ho_deg=_out(ho),
                     intercept_nmi=_out((ho - hc) * 60.0))


def reduction_warnings(ho_deg, intercept_nmi) -> tuple[str, ...]:
    """Warnings about one reduced sight (weak geometry, a doubtful intercept)."""
    msgs = []
    if float(ho_deg) > HIGH_ALTITUDE_DEG:
        msgs.append(f"very high altitude: Ho {format_dm(float(ho_deg))} is above 85°, where a "
                    "straight LOP departs quickly from the circle of position and Zn is ill-defined")
    if abs(float(intercept_nmi)) > LARGE_INTERCEPT_NMI:
        msgs.append(f"intercept of {abs(float(intercept_nmi)):.1f} nmi is large: check the time, "
                    "the body, Hs and the DR; reduce again from a better position")
    return tuple(msgs)


# ---------------------------------------------------------------- the whole chain, many sights

@dataclass(frozen=True)
class SightReductions:
    """Sights reduced end to end, per sight (1-D arrays in the input order, or scalars).

    Names: ``body`` (canonical), ``kind`` (sun/moon/planet/star), ``utc`` (datetime64[us], UTC),
    ``limb`` (None for points), ``horizon``. The :class:`nav.corrections.AltitudeCorrection`
    fields with their meaning there (``sd_arcmin`` is the SD *as applied*, ±SD or 0). From the
    almanac: ``gha_deg``, ``dec_deg``, ``hp_arcmin`` (equatorial HP, NaN for stars),
    ``almanac_sd_arcmin`` (geocentric SD, NaN where the body has none). The
    :class:`Reduction` fields, where ``lat_deg``/``lon_deg`` are the position reduced from (the AP
    when ``from_ap``, else the DR); ``dr_lat_deg``/``dr_lon_deg`` are the DR given. ``warnings``:
    one tuple of messages per sight (a tuple of messages for a single sight).
    """

    body: object
    kind: object
    utc: object
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
    gha_deg: np.ndarray | float
    dec_deg: np.ndarray | float
    hp_arcmin: np.ndarray | float
    almanac_sd_arcmin: np.ndarray | float
    lat_deg: np.ndarray | float
    lon_deg: np.ndarray | float
    lha_deg: np.ndarray | float
    hc_deg: np.ndarray | float
    zn_deg: np.ndarray | float
    intercept_nmi: np.ndarray | float
    dr_lat_deg: np.ndarray | float
    dr_lon_deg: np.ndarray | float
    from_ap: bool
    warnings: tuple

    @property
    def toward(self):
        out = np.asarray(self.intercept_nmi) >= 0.0
        return bool(out) if out.ndim == 0 else out

    @property
    def reduction(self) -> Reduction:
        return Reduction(gha_deg=self.gha_deg, dec_deg=self.dec_deg, lat_deg=self.lat_deg,
                         lon_deg=self.lon_deg, lha_deg=self.lha_deg, hc_deg=self.hc_deg,
                         zn_deg=self.zn_deg, ho_deg=self.ho_deg, intercept_nmi=self.intercept_nmi)

    def __len__(self) -> int:
        if np.ndim(self.hs_deg) == 0:
            raise TypeError("a single sight has no length")
        return int(np.size(self.hs_deg))

    def sight(self, i: int) -> "SightReductions":
        """Sight `i` alone, with scalar fields (for printing one line per sight)."""
        if np.ndim(self.hs_deg) == 0:
            return self
        values = {}
        for name in self.__dataclass_fields__:
            v = getattr(self, name)
            values[name] = v if name == "from_ap" else v[i]
        return SightReductions(**values)


_NUMERIC_INPUTS = ("hs_deg", "index_error_arcmin", "eye_height_m", "temperature_c", "pressure_hpa",
                   "lat_deg", "lon_deg")


def _utc64(utc):
    from .timekeeping import ISO_EXAMPLE, to_datetime64

    if np.asarray(utc).dtype.kind in "US":
        raise NavInputError("utc must be datetime64 (UTC) or aware datetimes; parse text with "
                            "nav.timekeeping.parse_utc", field="utc", example=ISO_EXAMPLE)
    return to_datetime64(utc)


def _check_instants(t64: np.ndarray, scalar: bool) -> None:
    from .ephemeris import check_range
    from .timekeeping import ISO_EXAMPLE

    nat = np.isnat(t64)
    if np.any(nat):
        raise NavInputError("a sight has no time", field="utc", example=ISO_EXAMPLE,
                            row=None if scalar else int(np.flatnonzero(nat)[0]) + 1)
    try:
        check_range(t64)
    except NavInputError:
        for i in range(t64.size):
            try:
                check_range(t64[i:i + 1])
            except NavInputError as err:
                raise (err if scalar else err.at_row(i + 1)) from None
        raise


def _almanac_per_sight(names: np.ndarray, t64: np.ndarray):
    """GHA, Dec, HP, SD per sight.

    The per-instant quantities (Earth's state, nutation and precession, GAST) are computed once
    for every distinct instant of all the sights; then one pass serves all the star sights and
    one pass each solar-system body's sights, each at its own instant only.
    """
    from .almanac import Instants, places_at

    times, inv = np.unique(t64, return_inverse=True)
    return places_at(names, Instants(times), inv.ravel())


def _resolve_names(bodies: np.ndarray, scalar: bool):
    """Canonical names and kinds, one lookup per distinct spelling (errors name the first row)."""
    from .almanac import SOLAR_BODIES, resolve_body

    spellings = bodies.tolist()
    resolved: dict = {}
    for b in dict.fromkeys(spellings):
        try:
            resolved[b] = resolve_body(b)
        except NavInputError as err:
            raise (err if scalar else err.at_row(spellings.index(b) + 1)) from None
    kinds = {k: (SOLAR_BODIES[v][0] if v in SOLAR_BODIES else "star") for k, v in resolved.items()}
    names = np.empty(len(spellings), dtype=object)
    kind = np.empty(len(spellings), dtype=object)
    if len(resolved) == 1:
        (b, v), = resolved.items()
        names[:], kind[:] = v, kinds[b]
    else:
        names[:] = [resolved[b] for b in spellings]
        kind[:] = [kinds[b] for b in spellings]
    return names, kind


# Sights reduced per chunk: bounds the working memory (about 1 kB a sight) for any input size.
CHUNK_SIGHTS = 65_536
_CORRECTION_FIELDS = ("index_arcmin", "dip_arcmin", "ha_deg", "refraction_arcmin", "sd_arcmin",
                      "augmentation_arcmin", "parallax_arcmin", "ho_deg")


def _reduce_chunk(flat: dict, lo: int, hi: int, use_ap: bool, scalar: bool):
    """Reduce sights lo..hi-1 of the flattened inputs; errors name rows of the whole input."""
    from .corrections import correct_altitude

    part = {k: v[lo:hi] for k, v in flat.items()}
    n = hi - lo
    try:
        names, kinds = _resolve_names(part["bodies"], scalar)
    except NavInputError as err:
        if err.row is not None:
            err.row += lo
        raise
    gha, dec, hp, alm_sd = _almanac_per_sight(names, part["utc"])
    lat, lon = part["lat_deg"], part["lon_deg"]
    lha_dr = norm360(gha + lon)
    hc_dr, zn_dr = hc_zn(lat, dec, lha_dr)

    corr = {f: np.empty(n) for f in _CORRECTION_FIELDS}
    limbs, horizons = np.empty(n, dtype=object), np.empty(n, dtype=object)
    warnings: list = [()] * n
    for kind in dict.fromkeys(kinds.tolist()):
        idx = np.flatnonzero(kinds == kind)
        try:
            c = correct_altitude(
                part["hs_deg"][idx], body_kind=kind, limb=part["limb"][idx],
                index_error_arcmin=part["index_error_arcmin"][idx],
                eye_height_m=part["eye_height_m"][idx], horizon=part["horizon"][idx],
                temperature_c=part["temperature_c"][idx], pressure_hpa=part["pressure_hpa"][idx],
                hp_arcmin=None if kind == "star" else hp[idx],
                sd_arcmin=alm_sd[idx] if kind in ("sun", "moon") else None,
                lat_deg=lat[idx], zn_deg=zn_dr[idx])
        except NavInputError as err:
            if scalar:
                err.row = None
            elif err.row is not None:
                err.row = int(idx[err.row - 1]) + 1 + lo
            raise
        for f in _CORRECTION_FIELDS:
            corr[f][idx] = getattr(c, f)
        limbs[idx], horizons[idx] = c.limb, c.horizon
        for j in np.flatnonzero([bool(w) for w in c.warnings]):   # only the flagged sights
            warnings[idx[j]] = c.warnings[j]

    try:
        _checked(corr["ho_deg"], "ho", -90.0, 90.0, "34.2")
    except NavInputError as err:
        err.row += lo
        raise
    if use_ap:
        red = reduce_from_ap(corr["ho_deg"], gha, dec, lat, lon)
    else:   # from the DR: Hc and Zn are the ones computed above (reduce_at, without redoing them)
        red = Reduction(gha_deg=gha, dec_deg=dec, lat_deg=lat + 0.0, lon_deg=lon + 0.0,
                        lha_deg=lha_dr, hc_deg=hc_dr, zn_deg=zn_dr, ho_deg=corr["ho_deg"],
                        intercept_nmi=(corr["ho_deg"] - hc_dr) * 60.0 + 0.0)
    ho, x = corr["ho_deg"], np.asarray(red.intercept_nmi)
    for i in np.flatnonzero((ho > HIGH_ALTITUDE_DEG) | (np.abs(x) > LARGE_INTERCEPT_NMI)):
        warnings[i] = warnings[i] + reduction_warnings(ho[i], x[i])
    return dict(
        body=names, kind=kinds, limb=limbs, horizon=horizons, **corr, gha_deg=red.gha_deg,
        dec_deg=red.dec_deg, hp_arcmin=hp, almanac_sd_arcmin=alm_sd, lat_deg=red.lat_deg,
        lon_deg=red.lon_deg, lha_deg=red.lha_deg, hc_deg=red.hc_deg, zn_deg=red.zn_deg,
        intercept_nmi=red.intercept_nmi), warnings


def _prepare(bodies, utc, hs_deg, limb, index_error_arcmin, eye_height_m, horizon, temperature_c,
             pressure_hpa, lat_deg, lon_deg):
    """Inputs checked and flattened to 1-D arrays of one length: (flat, scalar, n)."""
    t64 = _utc64(utc)
    raw = {"bodies": np.asarray(bodies, dtype=object), "utc": t64,
           "limb": np.asarray(limb, dtype=object), "horizon": np.asarray(horizon, dtype=object)}
    num = dict(zip(_NUMERIC_INPUTS, (hs_deg, index_error_arcmin, eye_height_m, temperature_c,
                                     pressure_hpa, lat_deg, lon_deg)))
    num = {k: np.asarray(v, dtype=float) for k, v in num.items()}
    everything = list(raw.values()) + list(num.values())
    scalar = all(v.ndim == 0 for v in everything)
    shape = np.broadcast_shapes(*(v.shape for v in everything))
    if len(shape) > 1:
        raise ValueError("reduce_sights takes scalars or 1-D arrays of sights")
    n = int(np.prod(shape))
    flat = {k: np.broadcast_to(v, shape).reshape(n) for k, v in {**raw, **num}.items()}
    _check_instants(flat["utc"], scalar)
    pick = (lambda a: a[0]) if scalar else (lambda a: a)  # a single sight's errors name no row
    _checked(pick(flat["lat_deg"]), "dr_lat", -90.0, 90.0, "41.2")
    _checked(pick(flat["lon_deg"]), "dr_lon", -360.0, 360.0, "-32.1")
    return flat, scalar, n


def iter_reduce_sights(bodies, utc, hs_deg, *, chunk: int = CHUNK_SIGHTS, **kw):
    """:func:`reduce_sights` in chunks of `chunk` sights: yields (first index, SightReductions).

    For inputs too large to hold every result at once (a million sights and more): memory stays
    bounded by the chunk, whatever the input's length.
    """
    shape = np.broadcast_shapes(*(np.shape(v) for v in (bodies, utc, hs_deg, *kw.values())))
    n = int(np.prod(shape))
    for lo in range(0, n, chunk):
        hi = min(n, lo + chunk)
        pick = (lambda v: v[lo:hi] if np.ndim(v) else v)
        args = {k: pick(v) for k, v in kw.items()}
        try:
            yield lo, reduce_sights(pick(bodies), pick(utc), pick(hs_deg), **args)
        except NavInputError as err:
            if err.row is not None:
                err.row += lo
            raise


def reduce_sights(bodies, utc, hs_deg, *, limb=None, index_error_arcmin=0.0, eye_height_m=0.0,
                  horizon="sea", temperature_c=10.0, pressure_hpa=1010.0, lat_deg, lon_deg,
                  use_ap: bool = False) -> SightReductions:
    """Almanac -> Hs to Ho -> Hc, Zn, intercept for many sights in one vectorised call.

    `bodies`: names (any spelling nav accepts); `utc`: datetime64 (UTC) or aware datetimes;
    every other input a scalar or a 1-D array, all broadcast together. `lat_deg`/`lon_deg` are
    each sight's DR (also used for the Moon's parallax on the ellipsoid, with Zn from the DR).
    `limb` None means lower for the Sun and Moon. With `use_ap` each sight is reduced from the
    tables' AP (:func:`reduce_from_ap`), else from the DR.
    Errors name the field and the sight's 1-based position in the input (``row``).
    With all inputs scalar, every field of the result is a scalar. Large inputs are worked in
    chunks of :data:`CHUNK_SIGHTS` (see also :func:`iter_reduce_sights`).
    """
    flat, scalar, n = _prepare(bodies, utc, hs_deg, limb, index_error_arcmin, eye_height_m,
                               horizon, temperature_c, pressure_hpa, lat_deg, lon_deg)
    result: dict = {}
    warnings: list = []
    for lo in range(0, max(n, 1), CHUNK_SIGHTS):
        hi = min(n, lo + CHUNK_SIGHTS)
        part, w = _reduce_chunk(flat, lo, hi, use_ap, scalar)
        if not result:
            result = {k: np.empty(n, dtype=np.asarray(v).dtype) for k, v in part.items()}
        for k, v in part.items():
            result[k][lo:hi] = v
        warnings += w
    result.update(utc=flat["utc"], hs_deg=flat["hs_deg"] + 0.0,
                  dr_lat_deg=flat["lat_deg"] + 0.0, dr_lon_deg=flat["lon_deg"] + 0.0)
    if scalar:
        result = {k: v[0] for k, v in result.items()}
        return SightReductions(**result, from_ap=bool(use_ap), warnings=warnings[0])
    return SightReductions(**result, from_ap=bool(use_ap), warnings=tuple(warnings))


def reduce_sight(body, utc, hs_deg, *, limb=None, index_error_arcmin=0.0, eye_height_m=0.0,
                 horizon="sea", temperature_c=10.0, pressure_hpa=1010.0, lat_deg, lon_deg,
                 use_ap: bool = False) -> SightReductions:
    """One sight (scalars in, scalars out): a thin wrapper of :func:`reduce_sights`."""
    values = (body, utc, hs_deg, limb, index_error_arcmin, eye_height_m, horizon, temperature_c,
              pressure_hpa, lat_deg, lon_deg)
    if any(np.ndim(v) != 0 for v in values):
        raise ValueError("reduce_sight takes one sight (scalars); use reduce_sights for many")
    return reduce_sights(body, utc, hs_deg, limb=limb, index_error_arcmin=index_error_arcmin,
                         eye_height_m=eye_height_m, horizon=horizon, temperature_c=temperature_c,
                         pressure_hpa=pressure_hpa, lat_deg=lat_deg, lon_deg=lon_deg,
                         use_ap=use_ap)
