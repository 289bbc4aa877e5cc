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
one vectorised call, grouping the sights by body so that :func:`nav.almanac.almanac` runs once per
body (bodies observed at the same instants share one :class:`nav.almanac.Instants` and one call).
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


def _almanac_per_sight(names: np.ndarray, t64: np.ndarray, share: bool | None):
    """GHA, Dec, HP, SD per sight, one almanac call per body (or per set of bodies sharing instants).

    With `share` (chosen automatically when few distinct instants serve many bodies) one
    :class:`Instants` holds every distinct instant and one call computes every body at all of
    them; otherwise each body gets its own instants, and bodies whose instants coincide share.
    """
    from .almanac import Instants, almanac

    n = names.size
    gha, dec = np.empty(n), np.empty(n)
    hp, sd = np.full(n, np.nan), np.full(n, np.nan)
    bodies = list(dict.fromkeys(names.tolist()))
    all_times, all_inv = np.unique(t64, return_inverse=True)
    if share is None:
        share = len(bodies) * all_times.size <= 2 * n
    groups: dict[bytes, tuple[np.ndarray, list]] = {}
    for b in bodies:
        idx = np.flatnonzero(names == b)
        if share:
            times, inv = all_times, all_inv[idx]
        else:
            times, inv = np.unique(t64[idx], return_inverse=True)
        groups.setdefault(times.tobytes(), (times, []))[1].append((b, idx, inv.ravel()))
    for times, members in groups.values():
        instants = Instants(times)
        for (b, idx, inv), rec in zip(members, almanac([m[0] for m in members], instants)):
            gha[idx] = np.asarray(rec.gha_deg)[inv]
            dec[idx] = np.asarray(rec.dec_deg)[inv]
            if rec.hp_arcmin is not None:
                hp[idx] = np.asarray(rec.hp_arcmin)[inv]
            if rec.sd_arcmin is not None:
                sd[idx] = np.asarray(rec.sd_arcmin)[inv]
    return gha, dec, hp, sd


def reduce_sights(bodies, utc, hs_deg, *, limb=None, index_error_arcmin=0.0, eye_height_m=0.0,
                  horizon="sea", temperature_c=10.0, pressure_hpa=1010.0, lat_deg, lon_deg,
                  use_ap: bool = False, share_instants: bool | None = None) -> SightReductions:
    """Almanac -> Hs to Ho -> Hc, Zn, intercept for many sights in one vectorised call.

    `bodies`: names (any spelling nav accepts); `utc`: datetime64 (UTC) or aware datetimes;
    every other input a scalar or a 1-D array, all broadcast together. `lat_deg`/`lon_deg` are
    each sight's DR (also used for the Moon's parallax on the ellipsoid, with Zn from the DR).
    `limb` None means lower for the Sun and Moon. With `use_ap` each sight is reduced from the
    tables' AP (:func:`reduce_from_ap`), else from the DR. `share_instants` forces (True) or
    forbids (False) one shared set of instants for all bodies (default: chosen by size).
    Errors name the field and the sight's 1-based position in the input (``row``).
    With all inputs scalar, every field of the result is a scalar.
    """
    from .almanac import SOLAR_BODIES, resolve_body
    from .corrections import correct_altitude

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
    t64 = flat["utc"]
    _check_instants(t64, scalar)
    pick = (lambda a: a[0]) if scalar else (lambda a: a)  # a single sight's errors name no row
    lat = _checked(pick(flat["lat_deg"]), "dr_lat", -90.0, 90.0, "41.2")
    lon = _checked(pick(flat["lon_deg"]), "dr_lon", -360.0, 360.0, "-32.1")

    names = np.empty(n, dtype=object)
    resolved: dict = {}
    for i, b in enumerate(flat["bodies"]):
        if b not in resolved:
            try:
                resolved[b] = resolve_body(b)
            except NavInputError as err:
                raise (err if scalar else err.at_row(i + 1)) from None
        names[i] = resolved[b]
    kinds = np.array([SOLAR_BODIES[m][0] if m in SOLAR_BODIES else "star" for m in names],
                     dtype=object)
    gha, dec, hp, alm_sd = _almanac_per_sight(names, t64, share_instants)
    lat, lon = np.broadcast_to(lat, (n,)), np.broadcast_to(lon, (n,))
    _, zn_dr = hc_zn(lat, dec, norm360(gha + lon))

    fields = ("index_arcmin", "dip_arcmin", "ha_deg", "refraction_arcmin", "sd_arcmin",
              "augmentation_arcmin", "parallax_arcmin", "ho_deg")
    corr = {f: np.empty(n) for f in fields}
    limbs, horizons = np.empty(n, dtype=object), np.empty(n, dtype=object)
    corr_warnings: list = [()] * n
    for kind in dict.fromkeys(kinds.tolist()):
        idx = np.flatnonzero(kinds == kind)
        try:
            c = correct_altitude(
                flat["hs_deg"][idx], body_kind=kind, limb=flat["limb"][idx],
                index_error_arcmin=flat["index_error_arcmin"][idx],
                eye_height_m=flat["eye_height_m"][idx], horizon=flat["horizon"][idx],
                temperature_c=flat["temperature_c"][idx], pressure_hpa=flat["pressure_hpa"][idx],
                hp_arcmin=None if kind == "star" else hp[idx],
                sd_arcmin=alm_sd[idx] if kind in ("sun", "moon") else None,
                lat_deg=lat[idx], zn_deg=zn_dr[idx])
        except NavInputError as err:
            if scalar:
                err.row = None
            elif err.row is not None:
                err.row = int(idx[err.row - 1]) + 1
            raise
        for f in fields:
            corr[f][idx] = getattr(c, f)
        limbs[idx], horizons[idx] = c.limb, c.horizon
        for j, i in enumerate(idx):
            corr_warnings[i] = c.warnings[j]

    red = (reduce_from_ap if use_ap else reduce_at)(corr["ho_deg"], gha, dec, lat, lon)
    warnings = tuple(w + reduction_warnings(ho, x)
                     for w, ho, x in zip(corr_warnings, corr["ho_deg"], red.intercept_nmi))
    result = dict(
        body=names, kind=kinds, utc=t64, limb=limbs, horizon=horizons, hs_deg=flat["hs_deg"] + 0.0,
        **corr, gha_deg=red.gha_deg, dec_deg=red.dec_deg, hp_arcmin=hp, almanac_sd_arcmin=alm_sd,
        lat_deg=red.lat_deg, lon_deg=red.lon_deg, lha_deg=red.lha_deg, hc_deg=red.hc_deg,
        zn_deg=red.zn_deg, intercept_nmi=red.intercept_nmi, dr_lat_deg=lat + 0.0,
        dr_lon_deg=lon + 0.0)
    result = {k: np.asarray(v) for k, v in result.items()}
    if scalar:
        result = {k: v[0] for k, v in result.items()}
        return SightReductions(**result, from_ap=bool(use_ap), warnings=warnings[0])
    return SightReductions(**result, from_ap=bool(use_ap), warnings=warnings)


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
