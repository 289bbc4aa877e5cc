"""A reduction as text in the order it is worked on paper (a layout of nav's own), and the
triangle on its own. Renderers only: they take the dicts and results of the core and return lines.
"""

from __future__ import annotations

from ..timekeeping import round_to_second

from ..angles import format_dm, format_lat, format_lon
from .sheet import format_cell

LABEL = 10


def _a(v) -> str:
    return format_dm(v, deg_width=3, wrap360=True)


def _m(v) -> str:
    return "0.0′" if v is None or round(v, 1) == 0 else f"{v:+.1f}′".replace("-", "\u2212")


def _line(label: str, text: str) -> str:
    return f"  {label:<{LABEL}}{text}"


def worksheet_lines(fig: dict, *, title: str | None = None) -> list[str]:
    """The sheet `fig` (from :func:`nav.marking.reference.work_sheet`) in paper order."""
    kind = fig["_kind"]
    limb = f" {fig['limb']} limb" if fig.get("limb") else ""
    out = [title or f"Sight {fig['sight']}: {fig['body']}{limb}"]
    utc = round_to_second(fig["_utc"])   # the one rounding rule of a time shown
    if fig.get("watch_time") is not None:
        out.append(_line("time", f"watch {format_cell('watch_time', fig['watch_time'])}, "
                                 f"error {format_cell('watch_error', fig['watch_error'])} → "
                                 f"ZT {format_cell('zt', fig['zt'])} on "
                                 f"{fig['ship_date'].isoformat()}, ZD "
                                 f"{format_cell('zd', fig['zd'])} → UTC {utc:%H:%M:%S} on "
                                 f"{utc:%Y-%m-%d} (Greenwich date)"))
    else:
        out.append(_line("time", f"UTC {utc:%H:%M:%S} on {utc:%Y-%m-%d}"))
    mmss = f"{utc.minute:02d}m{utc.second:02d}s"
    if fig.get("gha_hour") is None:
        out.append(_line("GHA", f"{_a(fig['gha'])}" + (" (prescribed)" if fig.get("gha_incr")
                                                        is None else "")))
    elif kind == "star":
        out.append(_line("Aries", f"{utc:%H}h {_a(fig['gha_hour'])} + {mmss} "
                                  f"{_a(fig['gha_incr'])} = GHA Aries {_a(fig['gha_aries'])}"))
        out.append(_line("GHA", f"GHA Aries {_a(fig['gha_aries'])} + SHA {_a(fig['sha'])} = "
                                f"{_a(fig['gha'])}"))
    else:
        v = (f" + v {fig['v']:+.1f} → {_m(fig['v_corr'])}" if fig.get("v") is not None else "")
        out.append(_line("GHA", f"{utc:%H}h {_a(fig['gha_hour'])} + {mmss} "
                                f"{_a(fig['gha_incr'])}{v} = {_a(fig['gha'])}"))
    if fig.get("d") is not None:
        out.append(_line("Dec", f"{utc:%H}h {format_lat(fig['dec_hour'])}, d {fig['d']:+.1f} "
                                f"(+ when |Dec| grows) → {_m(fig['d_corr'])} = "
                                f"{format_lat(fig['dec'])}"))
    else:
        out.append(_line("Dec", format_lat(fig["dec"])))
    if fig.get("hp") is not None:
        out.append(_line("HP", f"{fig['hp']:.1f}′"))
    ap = fig["ap_lat"] == round(fig["ap_lat"])
    out.append(_line("AP" if ap else "DR",
                     f"{format_cell('ap_lat', fig['ap_lat'])}  {format_lon(fig['ap_lon'])}"
                     + (f"  (DR {format_lat(fig['dr_lat'])} {format_lon(fig['dr_lon'])})"
                        if ap else "")))
    out.append(_line("LHA", f"GHA {_a(fig['gha'])} {'+' if fig['ap_lon'] >= 0 else '−'} "
                            f"{'E' if fig['ap_lon'] >= 0 else 'W'} lon = {_a(fig['lha'])}"))
    out.append(_line("Hc, Z", f"Hc {format_dm(fig['hc'])}  Z {format_cell('z', fig['z'])}"))
    out.append(_line("Zn", f"{fig['_rule']} → Zn {format_cell('zn', fig['zn'])}°"))
    out.append(_line("altitude", f"Hs {format_dm(fig['hs'])}  index {_m(fig['index_corr'])} "
                                 f"({format_cell('ie', fig['ie'])})  dip {_m(fig['dip'])} "
                                 f"({fig['eye_height']}) → Ha {format_dm(fig['ha'])}"))
    parts = [f"refraction {_m(fig['refraction'])}"]
    if fig.get("sd") is not None:
        parts.append(f"SD {_m(fig['sd'])}" + (" with augmentation" if kind == "moon" else ""))
    if kind == "sun" and fig.get("parallax") is not None:
        parts.append(f"parallax {_m(fig['parallax'])}")
    out.append(_line("main", f"{_m(fig['main_corr'])} ({', '.join(parts)})"))
    if fig.get("add_corr") is not None:
        out.append(_line("HP part" if kind == "moon" else "additional",
                         f"{_m(fig['add_corr'])} (parallax in altitude)"))
    out.append(_line("Ho", format_dm(fig["ho"])))
    out.append(_line("intercept", f"Ho {format_dm(fig['ho'])} − Hc {format_dm(fig['hc'])} = "
                                  f"{fig['intercept']:.1f} nmi {fig['t_a']} "
                                  f"({'toward' if fig['t_a'] == 'T' else 'away from'} the body)"))
    return out


def row_worksheet_lines(row) -> list[str]:
    """A :class:`nav.sightfile.SightRow` worked the tables' way, in paper order (the shell's
    ``show`` of a sight and ``nav reduce --worksheet``)."""
    from .reference import work_sheet

    fig = work_sheet(row, method=row.method or "ap")
    return worksheet_lines(fig, title="  worked the tables' way, in paper order:")


def triangle_lines(tri) -> list[str]:
    """`nav triangle` on screen."""
    out = [f"Lat {format_lat(tri.lat_deg)}  Dec {format_lat(tri.dec_deg)}  LHA {_a(tri.lha_deg)}",
           _line("Hc", format_dm(tri.hc_deg)),
           _line("Z", f"{tri.z_text}  ({tri.pole} lat, LHA {'over' if tri.side == 'E' else 'under'}"
                      f" 180°: {tri.rule})"),
           _line("Zn", f"{tri.zn_deg:05.1f}°")]
    if tri.intercept_nmi is not None:
        out.append(_line("intercept", f"Ho {format_dm(tri.ho_deg)} − Hc {format_dm(tri.hc_deg)} = "
                                      f"{abs(tri.intercept_nmi):.1f} nmi {tri.toward}"))
    return out


def triangle_dict(tri) -> dict:
    d = {"lat_deg": tri.lat_deg, "dec_deg": tri.dec_deg, "lha_deg": tri.lha_deg,
         "hc_deg": round(tri.hc_deg, 7), "z_deg": round(tri.z_deg, 5), "z": tri.z_text,
         "zn_deg": round(tri.zn_deg, 5), "rule": tri.rule}
    if tri.intercept_nmi is not None:
        d.update(ho_deg=tri.ho_deg, intercept_nmi=round(tri.intercept_nmi, 3),
                 t_a=tri.toward)
    return d
