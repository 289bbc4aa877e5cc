"""Mark one student's sight: every figure checked twice, the three chains, the slip named.

Each figure is checked against the reference (the tables' way or the exact way, whichever is
nearer) within :data:`TOLERANCE_ARCMIN`, and against the value recomputed from the student's own
earlier figures (method credit). It is then ``right``, ``carried`` (wrong only because an earlier
figure was), ``wrong`` or ``blank``. Figures group into steps, and steps into three chains; the
first wrong step of each chain is reported, and every wrong step gets the slip that explains it
(:data:`nav.marking.reference.SLIPS`), ``arithmetic`` where the figure does not follow from the
student's own figures, or ``unexplained``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import timedelta

from ..angles import cosd, norm180, norm360, sind
from .reference import SLIPS, work_sheet
from .sheet import utc_of
from .tables import dip_for, group_main, tabulate, tenth_arcmin, work_altitude
from .triangle import solve, zn_from_z

CHAINS = {
    "almanac": ("utc", "gha", "sha", "dec", "ap_lon", "lha"),
    "altitude": ("index_corr", "dip", "ha", "sd", "main_corr", "ho"),
    "reduction": ("hc", "z", "zn", "intercept", "t_a"),
}
STEP_FIGURES = {
    "utc": ("zt", "utc_date", "utc_time"),
    "gha": ("gha_hour", "gha_incr", "v", "v_corr", "gha_aries", "gha"),
    "sha": ("sha",),
    "dec": ("dec_hour", "d", "d_corr", "dec"),
    "ap_lon": ("ap_lat", "ap_lon"),
    "lha": ("lha",),
    "index_corr": ("index_corr",), "dip": ("dip",), "ha": ("ha",), "sd": ("sd",),
    "main_corr": ("refraction", "parallax", "main_corr", "add_corr"), "ho": ("ho",),
    "hc": ("hc",), "z": ("z",), "zn": ("zn",), "intercept": ("intercept",), "t_a": ("t_a",),
}
EXTRA = {"arithmetic": "a figure that does not follow from the student's own figures above it "
                       "(an addition, subtraction or look-up slip)",
         "unexplained": "nav cannot name this slip: look at the figure"}

# Tolerances against the reference, in arcminutes (times in seconds, Z/Zn in degrees, the
# intercept in nmi): a correct sheet worked by tables always meets them (README, "Tolerances").
TOLERANCE_ARCMIN = {
    "gha_hour": 0.1, "gha_incr": 0.1, "v": 0.1, "v_corr": 0.1, "gha_aries": 0.2, "sha": 0.2,
    "gha": 0.2, "dec_hour": 0.1, "d": 0.1, "d_corr": 0.1, "dec": 0.2, "hp": 0.1,
    "ap_lon": 0.2, "lha": 0.2, "index_corr": 0.0, "dip": 0.1, "ha": 0.2, "refraction": 0.1,
    "sd": 0.1, "parallax": 0.1, "main_corr": 0.2, "add_corr": 0.1, "ho": 0.2, "hc": 0.2,
}
MOON_TOLERANCE_ARCMIN = {"gha": 0.3, "dec": 0.3, "main_corr": 0.3, "ho": 0.3, "sd": 0.2,
                         "parallax": 0.3, "add_corr": 0.3, "hp": 0.1}
TIME_TOLERANCE_S = 1.0
ZN_TOLERANCE_DEG = 0.5
INTERCEPT_OWN_NMI = 0.1
INTERCEPT_REFERENCE_NMI = 0.4
T_A_JUDGED_ABOVE_NMI = 0.2
OWN_SUM_ARCMIN = 0.1        # a sum of the student's own figures: one rounding of 0.1′
EPS = 1e-6                  # float noise of the cell arithmetic, far below 0.01′
ANGLES = ("gha_hour", "gha_incr", "gha_aries", "sha", "gha", "ap_lon", "lha")


@dataclass(frozen=True)
class Figure:
    name: str
    step: str
    status: str                   # right | wrong | carried | blank
    value: object = None
    expected: object = None
    difference: float | None = None   # student − reference, in the figure's unit


@dataclass(frozen=True)
class Slip:
    code: str
    chain: str
    step: str
    sentence: str


@dataclass(frozen=True)
class SightMark:
    sight: str
    body: str
    figures: tuple[Figure, ...]
    first_wrong: dict
    slips: tuple[Slip, ...]
    lop_effect_nmi: float | None
    reference: dict = field(repr=False, default_factory=dict)

    @property
    def mistakes(self) -> list[str]:
        return list(dict.fromkeys(s.code for s in self.slips))


def _tol(name: str, kind: str) -> float:
    if kind == "moon" and name in MOON_TOLERANCE_ARCMIN:
        return MOON_TOLERANCE_ARCMIN[name]
    return TOLERANCE_ARCMIN.get(name, 0.0)


def _diff(name: str, a, b) -> float | None:
    """a − b in the figure's unit (arcmin, seconds, degrees or nmi), angles across 0/360."""
    if a is None or b is None:
        return None
    if name in ("utc_time", "zt"):
        return (a - b).total_seconds() if name == "zt" else a - b
    if name == "utc_date":
        return float((a - b).days)
    if name == "z":
        return (a[1] - b[1]) if (a[0], a[2]) == (b[0], b[2]) else 999.0
    if name == "zn":
        return float(norm180(a - b))
    if name in ("intercept",):
        return a - b
    if name == "t_a":
        return 0.0 if a == b else 1.0
    if name in ANGLES or name in ("dec", "dec_hour", "ap_lat", "hs", "ha", "ho", "hc"):
        return float(norm180(a - b)) * 60.0 if name in ANGLES else (a - b) * 60.0
    return a - b


def _close(name: str, a, b, tol: float) -> bool:
    d = _diff(name, a, b)
    return d is not None and abs(d) <= tol + EPS


def _utc_seconds(fig) -> float | None:
    t = utc_of(fig)
    return None if t is None else t.timestamp()


def _own(name: str, s: dict, ref: dict, row, kind: str):
    """The figure recomputed from the student's own earlier figures (None where it cannot be)."""
    g = s.get
    utc = utc_of(s) or ref["_utc"]
    try:
        if name == "zt" and g("watch_time") is not None and g("watch_error") is not None:
            return timedelta(seconds=(g("watch_time").total_seconds() - g("watch_error")) % 86400)
        if name in ("utc_time", "utc_date"):
            return None
        tab = tabulate(row.body, utc) if name in ("gha_hour", "gha_incr", "v", "dec_hour", "d",
                                                   "hp", "sha") else None
        frac = (utc.minute * 60 + utc.second) / 3600.0
        if name in ("gha_hour", "gha_incr", "v", "dec_hour", "d", "hp"):
            return {"gha_hour": tab.gha_hour_deg, "gha_incr": tab.incr_deg, "v": tab.v_arcmin,
                    "dec_hour": tab.dec_hour_deg, "d": tab.d_arcmin, "hp": tab.hp_arcmin}[name]
        if name == "sha":
            return tab.sha_deg
        if name == "v_corr" and g("v") is not None:
            return tenth_arcmin(g("v") * frac)
        if name == "d_corr" and g("d") is not None:
            return tenth_arcmin(g("d") * frac)
        if name == "gha_aries" and g("gha_hour") is not None and g("gha_incr") is not None:
            return float(norm360(g("gha_hour") + g("gha_incr")))
        if name == "gha":
            if kind == "star" and g("gha_aries") is not None and g("sha") is not None:
                return float(norm360(g("gha_aries") + g("sha")))
            if kind != "star" and g("gha_hour") is not None and g("gha_incr") is not None:
                return float(norm360(g("gha_hour") + g("gha_incr") + (g("v_corr") or 0.0) / 60.0))
        if name == "dec" and g("dec_hour") is not None and g("d_corr") is not None:
            toward = 1.0 if g("dec_hour") >= 0 else -1.0
            return g("dec_hour") + toward * g("d_corr") / 60.0
        if name == "ap_lon" and g("gha") is not None and g("ap_lon") is not None:
            x = g("gha") + row.dr_lon_deg
            return float(norm180(row.dr_lon_deg + (round(x) - x)))
        if name == "lha" and g("gha") is not None and g("ap_lon") is not None:
            return float(norm360(g("gha") + g("ap_lon")))
        if name == "index_corr" and g("ie") is not None:
            return -g("ie")
        if name == "dip" and g("eye_height") is not None:
            return dip_for(g("eye_height"))
        if name == "ha" and None not in (g("hs"), g("index_corr"), g("dip")):
            return g("hs") + (g("index_corr") + g("dip")) / 60.0
        if name == "main_corr" and g("refraction") is not None:
            return group_main(kind, g("refraction"), g("sd"), g("parallax"))[0]
        if name == "refraction" and g("ha") is not None:
            w = work_altitude(kind, g("ha"), index_error_arcmin=0.0, eye_height_m=0.0,
                              limb=row.limb, hp_arcmin=ref.get("hp"), sd_arcmin=None
                              if kind not in ("sun", "moon") else abs(ref.get("sd") or 0.0))
            return w.refraction_arcmin
        if name == "add_corr" and kind in ("moon", "planet") and g("parallax") is not None:
            return g("parallax")
        if name == "ho" and g("ha") is not None and g("main_corr") is not None:
            return g("ha") + (g("main_corr") + (g("add_corr") or 0.0)) / 60.0
        if name in ("hc", "z") and None not in (g("ap_lat"), g("dec"), g("lha")):
            tri = solve(g("ap_lat"), g("dec"), g("lha"))
            return tri.hc_deg if name == "hc" else (tri.pole, tri.z_deg, tri.side)
        if name == "zn" and g("z") is not None:
            return zn_from_z(*g("z"))
        if name == "intercept" and g("ho") is not None and g("hc") is not None:
            return abs(g("ho") - g("hc")) * 60.0
        if name == "t_a" and g("ho") is not None and g("hc") is not None:
            return "T" if g("ho") >= g("hc") else "A"
    except (ValueError, ArithmeticError):
        return None
    return None


def _own_tol(name: str, kind: str) -> float:
    if name in ("gha", "gha_aries", "dec", "ha", "ho", "lha"):
        return OWN_SUM_ARCMIN
    if name == "intercept":
        return INTERCEPT_OWN_NMI
    if name in ("zt",):
        return TIME_TOLERANCE_S
    if name in ("z", "zn"):
        return ZN_TOLERANCE_DEG
    return _tol(name, kind)


def _ref_tol(name: str, kind: str) -> float:
    if name in ("utc_time", "zt"):
        return TIME_TOLERANCE_S
    if name in ("z", "zn"):
        return ZN_TOLERANCE_DEG
    if name == "intercept":
        return INTERCEPT_REFERENCE_NMI
    return _tol(name, kind)


def _utc_status(s: dict, ref: dict) -> tuple[str, object]:
    mine = _utc_seconds(s)
    if mine is None:
        return "blank", None
    diff = mine - ref["_utc"].timestamp()
    if abs(diff) <= TIME_TOLERANCE_S:
        return "right", diff
    if s.get("zt") is not None and s.get("zd") is not None and s.get("ship_date") is not None:
        own = (s["ship_date"].toordinal() * 86400 + s["zt"].total_seconds() + s["zd"] * 3600
               - 719163 * 86400)
        if abs(own - mine) <= TIME_TOLERANCE_S:
            return "carried", diff
    return "wrong", diff


def _figure(name: str, step: str, s: dict, ref: dict, exact: dict, row, kind: str) -> Figure | None:
    mine, expected = s.get(name), ref.get(name)
    if expected is None and exact.get(name) is None:
        return None                      # not a figure of this sight (v of the Sun, SHA of the Moon)
    if name == "utc_time":
        status, diff = _utc_status(s, ref)
        return Figure(name, step, status, utc_of(s), ref["_utc"], diff)
    if name == "utc_date":
        return None                      # judged with utc_time as one instant
    if mine is None:
        return Figure(name, step, "blank", None, expected)
    if name == "ap_lat" and float(expected) == round(expected):     # the tables' whole degree
        ok = float(mine) == round(mine) and abs(mine - row.dr_lat_deg) <= 0.5 + EPS
        return Figure(name, step, "right" if ok else "wrong", mine, expected,
                      _diff(name, mine, expected))
    if name == "t_a" and ref["intercept"] <= T_A_JUDGED_ABOVE_NMI:
        return Figure(name, step, "right", mine, expected, 0.0)
    tol = _ref_tol(name, kind)
    if _close(name, mine, expected, tol) or _close(name, mine, exact.get(name), tol):
        return Figure(name, step, "right", mine, expected, _diff(name, mine, expected))
    own = _own(name, s, ref, row, kind)
    if name == "t_a" and (s.get("intercept") or 0.0) <= T_A_JUDGED_ABOVE_NMI:
        own = mine
    if own is not None and _close(name, mine, own, _own_tol(name, kind)):
        return Figure(name, step, "carried", mine, expected, _diff(name, mine, expected))
    return Figure(name, step, "wrong", mine, expected, _diff(name, mine, expected))


def _signature(step: str, s: dict, ref: dict, row, kind: str) -> str:
    """The slip code whose signature the wrong step shows."""
    g = s.get
    if step == "utc" and _utc_seconds(s) is not None:
        mine = _utc_seconds(s)
        t = ref["_utc"].timestamp()
        if row.zone_h is not None and abs(mine - (t - row.zone_h * 3600)) <= TIME_TOLERANCE_S:
            return "zone_not_applied"
        if row.watch_error_s and abs(mine - (t + 2 * row.watch_error_s)) <= TIME_TOLERANCE_S:
            return "watch_error_sign"
        if abs(abs(mine - t) - 86400) <= TIME_TOLERANCE_S:
            return "date_wrong"
    if step == "gha" and g("gha_hour") is not None:
        hour = (utc_of(s) or ref["_utc"]).replace(minute=0, second=0, microsecond=0)
        for k in (-1, 1):
            other = tabulate(row.body, hour + timedelta(hours=k)).gha_hour_deg
            if _close("gha_hour", g("gha_hour"), other, 0.1):
                return "wrong_hour"
    if step == "sha" and None not in (g("gha"), g("gha_aries"), g("sha")):
        if _close("gha", g("gha"), float(norm360(g("gha_aries") - g("sha"))), 0.2):
            return "sha_subtracted"
    if step == "dec" and g("dec") is not None:
        if abs(ref["dec"]) * 60 > 0.3 and _close("dec", -g("dec"), ref["dec"], _tol("dec", kind)):
            return "dec_name"
        if ref.get("d_corr") and None not in (g("dec_hour"), g("d_corr")):
            toward = 1.0 if g("dec_hour") >= 0 else -1.0
            backwards = g("dec_hour") - toward * abs(ref["d_corr"]) * (1 if ref["d_corr"] > 0 else -1) / 60
            if _close("dec", g("dec"), backwards, 0.1) or _close("d_corr", -g("d_corr"), ref["d_corr"], 0.1):
                return "d_sign"
    if step in ("ap_lon", "lha") and None not in (g("gha"), g("ap_lon")):
        x = g("gha") - g("ap_lon")
        if g("lha") is not None and _close("lha", g("lha"), float(norm360(x)), 0.2):
            return "lha_east_west"
    if step == "index_corr" and g("index_corr") is not None and row.index_error_arcmin:
        if abs(g("index_corr") - row.index_error_arcmin) <= EPS:
            return "ie_sign"
    if step == "dip" and g("dip") is not None:
        text = str(ref.get("eye_height") or "").lower()
        if "ft" in text or "feet" in text:
            number = float(text.replace("feet", "").replace("ft", "").strip())
            if abs(g("dip") - dip_for(number)) <= 0.1 + EPS:
                return "dip_feet_as_metres"
    if step in ("sd", "main_corr") and ref.get("sd"):
        if step == "sd" and g("sd") is not None and abs(g("sd") + ref["sd"]) <= _tol("sd", kind) + EPS:
            return "sd_limb"
        if step == "main_corr" and g("main_corr") is not None and kind in ("sun", "moon"):
            if abs(g("main_corr") - (ref["main_corr"] - 2 * ref["sd"])) <= 0.3 + EPS:
                return "sd_limb"
    if step == "zn" and None not in (g("z"), g("zn")):
        pole, z, side = g("z")
        for p2, s2 in (("N", "E"), ("N", "W"), ("S", "E"), ("S", "W")):
            if (p2, s2) != (pole, side) and _close("zn", g("zn"), zn_from_z(p2, z, s2),
                                                   ZN_TOLERANCE_DEG):
                return "zn_rule"
    if step == "t_a" and g("t_a") is not None and g("t_a") != ref["t_a"]:
        own = _own("t_a", s, ref, row, kind)
        if own is None or own != g("t_a"):
            return "intercept_toward_away"
    return "unexplained"


def _lop_point(lat, lon, zn, intercept_signed, lat0, lon0):
    """The intercept point of an LOP on the plane about (lat0, lon0), in nmi east and north."""
    x = float(norm180(lon - lon0)) * 60.0 * cosd(lat0) + intercept_signed * sind(zn)
    y = (lat - lat0) * 60.0 + intercept_signed * cosd(zn)
    return float(x), float(y)


def lop_effect_nmi(s: dict, ref: dict) -> float | None:
    """How far the student's LOP lies from the reference's, along the reference Zn (+ toward)."""
    need = ("ap_lat", "ap_lon", "zn", "intercept", "t_a")
    if any(s.get(k) is None for k in need):
        return None
    lat0, lon0 = ref["ap_lat"], ref["ap_lon"]
    sign = 1.0 if s["t_a"] == "T" else -1.0
    xs, ys = _lop_point(s["ap_lat"], s["ap_lon"], s["zn"], sign * s["intercept"], lat0, lon0)
    xr, yr = _lop_point(lat0, lon0, ref["zn"], ref["_signed_intercept_nmi"], lat0, lon0)
    return float((xs - xr) * sind(ref["zn"]) + (ys - yr) * cosd(ref["zn"]))


def figure_order(kind: str) -> list[tuple[str, str]]:
    """(figure, step) in the order a sheet is worked; a star's GHA belongs to the SHA step."""
    out = []
    for steps in CHAINS.values():
        for step in steps:
            for name in STEP_FIGURES[step]:
                if name == "gha" and kind == "star":
                    continue
                out.append((name, step))
                if name == "sha" and kind == "star":
                    out.append(("gha", "sha"))
    return out


SUMS = ("zt", "gha_aries", "gha", "dec", "v_corr", "d_corr", "lha", "ha", "main_corr", "ho",
        "intercept", "index_corr")
EXTRA["table_reading"] = ("a figure misread from the tables or worked by the wrong formula "
                          "(the student's own time and figures give another value)")


def mark_sight(s: dict, row) -> SightMark:
    """Mark one student's figures `s` (a parsed sheet row) for the exercise sight `row`."""
    ref = work_sheet(row, tables=True)
    exact = work_sheet(row, tables=False)
    kind = ref["_kind"]
    figures = [f for f in (_figure(n, st, s, ref, exact, row, kind) for n, st in figure_order(kind))
               if f is not None]
    first: dict = {}
    slips: list[Slip] = []
    for chain, steps in CHAINS.items():
        first[chain] = None
        for step in steps:
            wrong = [f for f in figures if f.step == step and f.status == "wrong"]
            if not wrong:
                continue
            code = _signature(step, s, ref, row, kind)
            if code == "unexplained" and _own(wrong[0].name, s, ref, row, kind) is not None:
                code = "arithmetic" if wrong[0].name in SUMS else "table_reading"
            first[chain] = first[chain] or step
            if slips and (slips[-1].chain, slips[-1].code) == (chain, code):
                continue                 # one slip seen in two steps (a-Lon and LHA) is one slip
            slips.append(Slip(code, chain, step, SLIPS.get(code) or EXTRA[code]))
    return SightMark(str(s.get("sight") or row.sight_id), row.body, tuple(figures), first,
                     tuple(slips), lop_effect_nmi(s, ref), ref)
