"""The sky sketch of `nav plan`: the candidates on a plan of the sky (matplotlib, imported here
only). North up, east to the right as on a compass rose; the zenith in the middle, the horizon
the rim; radius = 90° − altitude. The band of altitudes in use is shaded, the suggested set is
ringed and named in bold, the Moon drawn as a disc."""

from __future__ import annotations

import textwrap

import numpy as np

INK = "#1d2b3a"
BAND = "#e3efe6"
RING = "#d9822b"
PAPER = "#fbfaf6"


def sketch_figure(p):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from . import CAUTION
    from .angles import format_lat, format_lon

    fig = plt.figure(figsize=(7.5, 8.4), facecolor=PAPER)
    ax = fig.add_axes([0.07, 0.14, 0.86, 0.76])
    ax.set_aspect("equal")
    ax.axis("off")
    t = np.linspace(0, 2 * np.pi, 361)
    r_lo, r_hi = 90.0 - p.min_alt_deg, 90.0 - p.max_alt_deg
    ax.fill(np.concatenate([r_lo * np.sin(t), r_hi * np.sin(t[::-1])]),
            np.concatenate([r_lo * np.cos(t), r_hi * np.cos(t[::-1])]), color=BAND, zorder=0)
    for alt in (0, 15, 30, 45, 60, 75):
        r = 90 - alt
        ax.plot(r * np.sin(t), r * np.cos(t), color=INK, lw=1.4 if alt == 0 else 0.5,
                ls="-" if alt == 0 else (0, (2, 3)), alpha=0.9 if alt == 0 else 0.5)
        if alt:
            ax.text(-0.8, r + 0.8, f"{alt}°", fontsize=7, color=INK, alpha=0.6, ha="right")
    for z in range(0, 360, 30):
        s, c = np.sin(np.radians(z)), np.cos(np.radians(z))
        ax.plot([0, 90 * s], [0, 90 * c], color=INK, lw=0.4, alpha=0.25)
        label = {0: "N", 90: "E", 180: "S", 270: "W"}.get(z, f"{z:03d}°")
        ax.text(97 * s, 97 * c, label, ha="center", va="center", color=INK,
                fontsize=11 if z % 90 == 0 else 8, fontweight="bold" if z % 90 == 0 else None)
    for b in p.bodies:
        r = 90.0 - b.hc_deg
        x, y = r * np.sin(np.radians(b.zn_deg)), r * np.cos(np.radians(b.zn_deg))
        chosen = b.body in p.selection
        if b.kind == "moon":
            ax.scatter([x], [y], s=260, color="#c9c9c9", edgecolor=INK, zorder=3)
        elif b.kind == "planet":
            ax.scatter([x], [y], s=70, marker="D", color="#7a4fa0", zorder=3)
        else:
            size = 12 + 30 * max(0.0, 2.8 - (b.magnitude if b.magnitude is not None else 2.8))
            ax.scatter([x], [y], s=size, color=INK, zorder=3)
        if chosen:
            ax.scatter([x], [y], s=420, facecolor="none", edgecolor=RING, lw=2.2, zorder=4)
        flag = " (near Moon)" if b.near_moon else (" (limb?)" if b.wrong_limb else "")
        ax.annotate(b.body + flag, (x, y), xytext=(7, 5), textcoords="offset points",
                    fontsize=9 if chosen else 7, color=INK,
                    fontweight="bold" if chosen else None, zorder=5)
    ax.set_xlim(-104, 104)
    ax.set_ylim(-104, 104)
    utc = p.utc.strftime("%Y-%m-%d %H:%M UTC")
    fig.text(0.5, 0.955, f"Sky at {utc} from {format_lat(p.lat_deg)} {format_lon(p.lon_deg)}",
             ha="center", fontsize=12, color=INK, fontweight="bold")
    fig.text(0.5, 0.925, f"{p.how}; shaded: Hc {p.min_alt_deg:g}°–{p.max_alt_deg:g}°; "
                         f"ringed: suggested set (spread {p.azimuth_spread_deg:.0f}°, widest gap "
                         f"{p.widest_gap_deg:.0f}°)", ha="center", fontsize=8, color=INK)
    fig.text(0.5, 0.035, "\n".join(textwrap.wrap(CAUTION, 110)), ha="center", fontsize=7,
             color=INK, alpha=0.8)
    fig.text(0.5, 0.095, "plan view: north up, east right (as a compass rose); zenith at the "
                         "centre, horizon at the rim", ha="center", fontsize=7, color=INK)
    return fig


def save_sketch(p, path: str) -> None:
    from .errors import NavInputError

    if not str(path).lower().endswith((".png", ".pdf")):
        raise NavInputError(f"'{path}' is not a .png or .pdf file", field="sketch",
                            example="--sketch evening-sky.png")
    import matplotlib.pyplot as plt

    fig = sketch_figure(p)
    try:
        fig.savefig(path, dpi=130, facecolor=fig.get_facecolor())
    finally:
        plt.close(fig)
