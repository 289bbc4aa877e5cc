"""What was that star? Candidates for an observed altitude and a rough true bearing.

The candidates are the 58 navigational stars, the four planets, the Moon and the other stars of
Hp <= 3.5 of the same Hipparcos build (``nav/data/bright_stars.csv``). For each, Hc and Zn at the
DR are compared with the observation: Ho (Hs corrected for index error, dip and refraction, and
for the Moon its lower limb, parallax and SD) and the bearing.

The fit: d = √((ΔH / σH)² + (ΔZ / σZ)²), with σH = :data:`ALT_SIGMA_DEG` (the DR's error is in
the altitude: 30 nmi is 0.5°) and σZ = :data:`AZ_SIGMA_DEG` (a hand-bearing compass, corrected, is
good to a few degrees). A candidate fits when d <= :data:`FIT_LIMIT`; two fit about equally when
their d differ by less than :data:`TIE_MARGIN`. When none fits, the observed point's Dec and SHA
are given, from Ho and Zn at the DR (the trade's way to look an unknown star up):
sin Dec = sin lat sin Ho + cos lat cos Ho cos Zn; LHA from the same triangle; GHA = LHA − lon;
SHA = GHA − GHA Aries.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

import numpy as np

from .angles import asind, atan2d, cosd, norm180, norm360, sind

ALT_SIGMA_DEG = 1.0
AZ_SIGMA_DEG = 3.0
FIT_LIMIT = 2.5
TIE_MARGIN = 0.5
MAX_LISTED = 5


@dataclass(frozen=True)
class Candidate:
    body: str
    kind: str                 # star, bright star, planet, moon
    hc_deg: float
    zn_deg: float
    ho_deg: float
    magnitude: float | None
    altitude_diff_arcmin: float   # Ho − Hc
    azimuth_diff_deg: float       # observed Zn − Zn
    distance: float               # the fit d (smaller is better)


@dataclass(frozen=True)
class Identification:
    utc: datetime
    hs_deg: float
    zn_observed_deg: float
    lat_deg: float
    lon_deg: float
    ho_star_deg: float
    candidates: tuple             # fitting ones, best first (at most MAX_LISTED)
    nearest: tuple                # when none fits: the nearest few anyway
    tie: bool
    observed_dec_deg: float
    observed_sha_deg: float
    warnings: tuple = ()


def observed_point(lat_deg, lon_deg, ho_deg, zn_deg, gha_aries_deg):
    """Dec and SHA of the point at altitude Ho and azimuth Zn from (lat, lon). Vectorised."""
    dec = asind(sind(lat_deg) * sind(ho_deg) + cosd(lat_deg) * cosd(ho_deg) * cosd(zn_deg))
    # hour angle: west of the meridian positive (t = LHA when in [0, 180))
    y = -sind(zn_deg) * cosd(ho_deg)
    x = cosd(lat_deg) * sind(ho_deg) - sind(lat_deg) * cosd(ho_deg) * cosd(zn_deg)
    lha = norm360(atan2d(y, x))
    gha = norm360(lha - lon_deg)
    return dec, norm360(gha - gha_aries_deg)


def identify(utc: datetime, hs_deg: float, zn_deg: float, lat_deg: float, lon_deg: float, *,
             index_error_arcmin: float = 0.0, eye_height_m: float = 0.0,
             temperature_c: float = 10.0, pressure_hpa: float = 1010.0) -> Identification:
    from .almanac import PLANETS, Instants, almanac, catalogue_places
    from .corrections import correct_altitude
    from .reduction import hc_zn
    from .stars import bright_star_table, star_names, star_table

    inst = Instants(utc)
    common = dict(index_error_arcmin=index_error_arcmin, eye_height_m=eye_height_m,
                  temperature_c=temperature_c, pressure_hpa=pressure_hpa)
    ho_star = float(correct_altitude(hs_deg, body_kind="star", **common).ho_deg)
    rows = []                                        # (name, kind, gha, dec, ho, mag)
    for a in almanac(star_names() + list(PLANETS) + ["Moon"], inst):
        if a.kind == "moon":
            ho = float(correct_altitude(hs_deg, body_kind="moon", limb="lower",
                                        hp_arcmin=float(a.hp_arcmin),
                                        sd_arcmin=float(a.sd_arcmin), **common).ho_deg)
            mag = -12.7                 # the full Moon (common practice); shown only
        elif a.kind == "planet":
            ho = float(correct_altitude(hs_deg, body_kind="planet", hp_arcmin=float(a.hp_arcmin),
                                        **common).ho_deg)
            mag = None if a.magnitude is None else float(a.magnitude)
        else:
            ho, mag = ho_star, float(a.magnitude)
        rows.append((a.body, a.kind, float(a.gha_deg), float(a.dec_deg), ho, mag))
    bright = bright_star_table()
    gha_b, dec_b, _ = catalogue_places(bright, inst)
    for rec, g, d in zip(bright, np.atleast_1d(gha_b), np.atleast_1d(dec_b)):
        rows.append((rec.name, "bright star", float(g), float(d), ho_star, float(rec.hp_mag)))
    gha = np.array([r[2] for r in rows])
    dec = np.array([r[3] for r in rows])
    ho = np.array([r[4] for r in rows])
    hc, zn = hc_zn(lat_deg, dec, norm360(gha + lon_deg))
    d_alt = ho - np.asarray(hc)
    d_az = np.asarray(norm180(zn_deg - np.asarray(zn)))
    dist = np.hypot(d_alt / ALT_SIGMA_DEG, d_az / AZ_SIGMA_DEG)
    order = np.argsort(dist, kind="stable")

    def cand(i):
        name, kind, _, _, ho_i, mag = rows[i]
        return Candidate(body=name, kind=kind, hc_deg=float(hc[i]), zn_deg=float(zn[i]),
                         ho_deg=float(ho_i), magnitude=mag,
                         altitude_diff_arcmin=float(d_alt[i]) * 60.0,
                         azimuth_diff_deg=float(d_az[i]), distance=float(dist[i]))

    fits = [cand(i) for i in order if dist[i] <= FIT_LIMIT][:MAX_LISTED]
    nearest = () if fits else tuple(cand(i) for i in order[:3])
    tie = len(fits) >= 2 and fits[1].distance - fits[0].distance < TIE_MARGIN
    o_dec, o_sha = observed_point(lat_deg, lon_deg, ho_star, zn_deg, float(inst.gha_aries_deg))
    notes = []
    if ho_star < 10.0:
        notes.append("a low altitude: refraction is uncertain and the horizon may be hazy; "
                     "the fit is looser than it looks")
    return Identification(utc=utc, hs_deg=hs_deg, zn_observed_deg=zn_deg, lat_deg=lat_deg,
                          lon_deg=lon_deg, ho_star_deg=ho_star, candidates=tuple(fits),
                          nearest=nearest, tie=tie, observed_dec_deg=float(o_dec),
                          observed_sha_deg=float(o_sha), warnings=tuple(notes))
