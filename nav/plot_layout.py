"""Layout of nav's plots: sheet geometry, graticule and scale bar, label placement, side panel.

Used by :mod:`nav.plotting`; matplotlib is imported inside the functions that draw, never at
module level.

The sheet is equirectangular at true local scale: x is longitude, y latitude (degrees), and the
axes aspect is 1/cos φm (φm the sheet's mid latitude), so that one minute of latitude (a nautical
mile) and cos φm minutes of longitude are the same length on paper, as on a plotting sheet; a mile
is 1/60° of latitude and 1/(60 cos φm)° of longitude. Longitudes are unwrapped round the sheet's
centre, so a sheet across the 180th meridian is continuous.

Labels are placed greedily, one at a time: of a label's candidate places, the first whose box
(measured by the renderer) overlaps no label or marker placed before it, stays inside the axes
and covers no drawn line is taken; failing that, the one doing least harm (text on text costs far
more than text on a line).
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from . import CAUTION
from .angles import cosd, format_lat, format_lon, norm180, sind
from .units import NMI_PER_DEG

FIG_SIZE_IN = (11.69, 8.27)            # A4 landscape
DPI = 100
AXES_IN = (0.95, 1.10, 6.70, 6.45)     # chart: left, bottom, width, height (inches)
PANEL_IN = (8.05, 11.50, 7.55, 0.80)   # side panel: left, right, top, bottom (inches)
SCALE_BAR_NMI = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000)
GRID_STEPS_ARCMIN = (1, 2, 5, 10, 15, 20, 30, 60, 120, 180, 300, 600, 900, 1200, 1800)
LABEL_PT = 8.5
# Line colours after Okabe & Ito and Tol (colour-blind safe); vermilion is kept for warnings.
LINE_COLOURS = ("#0072B2", "#009E73", "#CC79A7", "#56B4E9", "#117733", "#999933", "#332288",
                "#882255", "#44AA99", "#7F7F7F")
WARN, FIX_C, DR_C, TRACK_C, GREY = "#D55E00", "#000000", "#5A3E2B", "#0072B2", "#333333"
ELLIPSE_FILL = "#f2c0a5"
# A known position: a yellow star edged in near-black (no other mark is a star, none is yellow);
# a reference track: a thin dash-dotted purple line (Tol's purple), unlike the solid DR track.
KNOWN_FILL, KNOWN_EDGE, REF_C = "#F0E442", "#1A1A1A", "#AA3377"
REF_STYLE = dict(color=REF_C, lw=1.2, ls=(0, (7, 2, 1.5, 2)))
JUMP_STYLE = dict(color=TRACK_C, lw=1.0, ls=(0, (3, 2.5)))     # the DR's reset at a fix
LABEL_BOX = dict(boxstyle="square,pad=0.15", fc="white", ec="none", alpha=0.85)
SUMMARY_TEXT = dict(fontsize=8.5, family="DejaVu Sans Mono", gid="summary",
                    bbox=dict(boxstyle="round,pad=0.4", fc="#f4f6f8", ec="#8a99a6", lw=0.8))
WARNINGS_TEXT = dict(fontsize=8.5, color="#5c1600", gid="warnings",
                     bbox=dict(boxstyle="round,pad=0.4", fc="#fff3e6", ec=WARN, lw=1.0))


def _mark(marker, colour, label, **kw):
    return {"marker": marker, "ls": "none", "ms": 10, "mfc": "none", "mec": colour, "mew": 1.8,
            "label": label, **kw}


KEY = {   # legend entries: styles of the proxy artists
    "dr": _mark("s", DR_C, "DR", ms=7, mfc="white"),
    "ap": _mark("o", GREY, "AP (assumed position)", ms=5, mfc="white", mew=1.3),
    "az": dict(color=GREY, lw=0.8, ls=(0, (4, 3)), label="azimuth Zn from the AP"),
    "int": dict(color=GREY, lw=2.0, label="intercept (T toward, A away)"),
    "lop": dict(color=GREY, lw=1.6, label="LOP"),
    "adv": dict(color=GREY, lw=1.6, ls=(0, (7, 3)), label="LOP advanced (AP's run dotted)"),
    "bad": dict(color=WARN, lw=2.2, label="LOP of a flagged sight"),
    "fix": _mark("o", FIX_C, "fix"), "rfix": _mark("^", FIX_C, "running fix"),
    "warned": _mark("o", WARN, "with warnings (!)"),
    "track": dict(color=TRACK_C, lw=1.6, marker="o", ms=3.5, label="DR track"),
    "ellipse": dict(patch=True, fc=ELLIPSE_FILL, ec=WARN, alpha=0.6, label="error ellipse"),
    "known": _mark("*", KNOWN_EDGE, "known position", ms=13, mfc=KNOWN_FILL, mew=0.9),
    "ref": dict(REF_STYLE, label="reference track"),
    "jump": dict(JUMP_STYLE, label="DR reset at a fix (not sailed)"),
}


# ---------------------------------------------------------------- graticule and scale bar

def lat_tick_label(lat_deg: float) -> str:
    """Whole-minute latitude for the graticule: ``41°10′ N``."""
    return format_lat(lat_deg, decimals=0)


def lon_tick_label(x_deg: float) -> str:
    """Whole-minute longitude for the graticule: ``032°05′ W``; at the 180th ``180°00′``."""
    lon = float(norm180(x_deg))
    text = format_lon(lon, decimals=0)
    return text.removesuffix(" W") if round(lon * 60.0) == -10800 else text    # 180°00′: no side


def nice_scale_nmi(span_nmi: float) -> float:
    """A round scale-bar length (1, 2, 5, 10, 20, 50 ... nmi), at most about a fifth of the span."""
    fits = [n for n in SCALE_BAR_NMI if n <= 0.22 * span_nmi]
    return float(fits[-1] if fits else SCALE_BAR_NMI[0])


def grid_step_arcmin(range_deg: float, max_lines: int) -> int:
    """The smallest whole-minute interval that puts at most `max_lines` lines in `range_deg`."""
    return next((s for s in GRID_STEPS_ARCMIN if range_deg * 60.0 / s <= max_lines),
                GRID_STEPS_ARCMIN[-1])


def _ticks(lo: float, hi: float, step_arcmin: int) -> np.ndarray:
    k0 = math.ceil(lo * 60.0 / step_arcmin - 1e-9)
    k1 = math.floor(hi * 60.0 / step_arcmin + 1e-9)
    return np.arange(k0, k1 + 1) * step_arcmin / 60.0


# ---------------------------------------------------------------- the sheet's geometry

@dataclass(frozen=True)
class Sheet:
    """Equirectangular sheet: x = longitude unwrapped round lon0, y = latitude (degrees)."""

    lon0: float
    coslat: float

    def x(self, lon_deg) -> float:
        return float(self.lon0 + norm180(float(lon_deg) - self.lon0))

    def move(self, x, y, east_nmi, north_nmi):
        return (x + np.asarray(east_nmi) / (NMI_PER_DEG * self.coslat),
                y + np.asarray(north_nmi) / NMI_PER_DEG)

    def east_nmi(self, dx_deg: float) -> float:
        return dx_deg * NMI_PER_DEG * self.coslat

    def ellipse(self, x, y, a_nmi, b_nmi, orient_deg, n=121):
        """Outline of an ellipse (semi-axes in nmi, major axis on true bearing `orient_deg`)."""
        t = np.linspace(0.0, 2.0 * np.pi, n)
        ue, un = float(sind(orient_deg)), float(cosd(orient_deg))
        return self.move(x, y, a_nmi * np.cos(t) * ue + b_nmi * np.sin(t) * un,
                         a_nmi * np.cos(t) * un - b_nmi * np.sin(t) * ue)


def fit_limits(sheet: Sheet, xs, ys, min_half_nmi: float, margin: float):
    """Limits holding every point with a margin, at the chart box's aspect: (xlim, ylim).

    Both ranges grow symmetrically about their centres, so the mid latitude stays that of `ys`.
    """
    cx, cy = 0.5 * (min(xs) + max(xs)), 0.5 * (min(ys) + max(ys))
    half_e = max(sheet.east_nmi(0.5 * (max(xs) - min(xs))) * (1 + margin), min_half_nmi)
    half_n = max(0.5 * (max(ys) - min(ys)) * NMI_PER_DEG * (1 + margin), min_half_nmi)
    nmi_per_in = max(half_e / AXES_IN[2], half_n / AXES_IN[3])
    dx = nmi_per_in * AXES_IN[2] / (NMI_PER_DEG * sheet.coslat)
    dy = nmi_per_in * AXES_IN[3] / NMI_PER_DEG
    return (cx - dx, cx + dx), (cy - dy, cy + dy)


def clip_line(p, d, xlim, ylim):
    """Parameters (t0, t1) where p + t·d lies inside the rectangle (Liang-Barsky), or None."""
    t0, t1 = -math.inf, math.inf
    for pi, di, lo, hi in ((p[0], d[0], *xlim), (p[1], d[1], *ylim)):
        if abs(di) < 1e-15:
            if not lo <= pi <= hi:
                return None
            continue
        a, b = (lo - pi) / di, (hi - pi) / di
        t0, t1 = max(t0, min(a, b)), min(t1, max(a, b))
    return (t0, t1) if t0 < t1 else None


# ---------------------------------------------------------------- figure, labels, side panel

def new_figure():
    """An empty A4 figure on its own Agg canvas."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=FIG_SIZE_IN, dpi=DPI)
    FigureCanvasAgg(fig)
    return fig


def new_chart(sheet: Sheet, xlim, ylim, title: str, subtitle: str, figure=None):
    """Figure and axes (limits, aspect, graticule), titles, caution footer and scale bar.

    With `figure` (one that an earlier chart was drawn on) its layout is kept: the axes, their
    graticule settings and the caution footer stay, the earlier sheet's lines, labels, key and
    panel go; the canvas and renderer stay too, so text measured for one sheet is not measured
    again for the next. Returns (fig, ax, placer), the scale bar already blocked for labels.
    """
    layout = getattr(figure, "_nav_layout", None)
    if layout is not None:
        fig = figure
        ax, head, sub, caution = layout
        for artist in [*ax.lines, *ax.patches, *ax.texts, *ax.collections, *ax.images,
                       *fig.legends, *(t for t in fig.texts if t not in (head, sub, caution))]:
            artist.remove()
        ax.set_prop_cycle(None)
        head.set_text(title)
        sub.set_text(subtitle)
    else:
        fig = new_figure() if figure is None else figure
        fig.clear()
        w, h = FIG_SIZE_IN
        ax = fig.add_axes((AXES_IN[0] / w, AXES_IN[1] / h, AXES_IN[2] / w, AXES_IN[3] / h))
        ax.tick_params(labelsize=9, length=3)
        ax.grid(True, color="#b8c4cc", lw=0.6)
        ax.set_axisbelow(True)
        head = fig.text(AXES_IN[0] / w, 7.98 / h, title, fontsize=13, weight="bold",
                        va="bottom")
        sub = fig.text(AXES_IN[0] / w, 7.72 / h, subtitle, fontsize=9, va="bottom", color=GREY)
        caution = fig.text(0.5, 0.12 / h, "\n".join(textwrap.wrap(CAUTION, 150)), ha="center",
                           va="bottom", fontsize=9, color="#7a1d00", gid="caution",
                           bbox=dict(boxstyle="round,pad=0.4", fc="#fff7f2", ec=WARN, lw=0.8))
        fig._nav_layout = (ax, head, sub, caution)
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    ax.set_aspect(1.0 / sheet.coslat, adjustable="box", anchor="C")
    ax.apply_aspect()
    xt = _ticks(*xlim, grid_step_arcmin(xlim[1] - xlim[0], int(AXES_IN[2] / 1.15)))
    yt = _ticks(*ylim, grid_step_arcmin(ylim[1] - ylim[0], int(AXES_IN[3] / 0.85)))
    ax.set_xticks(xt, [lon_tick_label(v) for v in xt])
    ax.set_yticks(yt, [lat_tick_label(v) for v in yt])
    length = nice_scale_nmi(sheet.east_nmi(xlim[1] - xlim[0]))      # along a parallel
    x0, y0 = xlim[0] + 0.04 * (xlim[1] - xlim[0]), ylim[0] + 0.035 * (ylim[1] - ylim[0])
    x1 = float(sheet.move(x0, y0, length, 0.0)[0])
    bar, = ax.plot([x0, x1], [y0, y0], color="black", lw=3, solid_capstyle="butt", marker="|",
                   ms=9, mew=1.5, gid="scale_bar", zorder=6)
    label = ax.annotate(f"{length:g} nmi", xy=(0.5 * (x0 + x1), y0), xytext=(0, 6),
                        textcoords="offset points", ha="center", va="bottom", fontsize=9,
                        bbox=LABEL_BOX, gid="scale_bar_label", zorder=6)
    placer = Placer(fig, ax)
    for artist in (bar, label):
        bb = artist.get_window_extent(placer.renderer)
        placer.taken.append((bb.x0, bb.y0, bb.x1, bb.y1))
    return fig, ax, placer


class Placer:
    """Greedy label placement on measured boxes (display pixels)."""

    PAD = 2.5            # px round each text box
    LINE_COST = 40.0     # per line sample (one each 3 px) under a box; text on text: 1e4 per px²

    def __init__(self, fig, ax):
        self.fig, self.ax = fig, ax
        self.renderer = fig.canvas.get_renderer()
        self.area = ax.get_window_extent(self.renderer)
        self.taken: list[tuple[float, float, float, float]] = []
        self.line_pts = np.empty((0, 2))

    def block_point(self, xy, r_px):
        px, py = self.ax.transData.transform(xy)
        self.taken.append((px - r_px, py - r_px, px + r_px, py + r_px))

    def line(self, xs, ys):
        """A drawn line (data coordinates) that labels should rather not cover."""
        pts = self.ax.transData.transform(np.column_stack([xs, ys]))
        a_ = self.area
        for a, b in zip(pts[:-1], pts[1:]):
            seg = clip_line(a, b - a, (a_.x0, a_.x1), (a_.y0, a_.y1))
            if seg is not None and min(seg[1], 1.0) > max(seg[0], 0.0):
                t0, t1 = max(seg[0], 0.0), min(seg[1], 1.0)
                t = np.linspace(t0, t1, max(int(math.hypot(*(b - a)) * (t1 - t0) / 3.0), 1) + 1)
                self.line_pts = np.vstack([self.line_pts, a + t[:, None] * (b - a)])

    def direction(self, xy, dxy):
        """Unit vector on screen of the data direction `dxy` at `xy`."""
        v = self.ax.transData.transform((xy[0] + dxy[0], xy[1] + dxy[1])) - \
            self.ax.transData.transform(xy)
        n = math.hypot(*v)
        return (v[0] / n, v[1] / n) if n > 0 else (1.0, 0.0)

    def cost(self, box):
        x0, y0, x1, y1 = box
        a = self.area
        inside = max(0.0, min(x1, a.x1 - 1) - max(x0, a.x0 + 1)) * \
            max(0.0, min(y1, a.y1 - 1) - max(y0, a.y0 + 1))
        hard = (x1 - x0) * (y1 - y0) - inside
        for t0, u0, t1, u1 in self.taken:
            hard += max(0.0, min(x1, t1) - max(x0, t0)) * max(0.0, min(y1, u1) - max(y0, u0))
        p = self.line_pts
        soft = np.count_nonzero((p[:, 0] > x0) & (p[:, 0] < x1) & (p[:, 1] > y0) & (p[:, 1] < y1))
        return 1e4 * hard + self.LINE_COST * soft

    @staticmethod
    def around(xy):
        """Candidates round a point: E, NE, N, SE, W, NW, S, SW (corner-to-point diagonals)."""
        return [(xy, d) for d in ((1, 0), (1, 1), (0, 1), (1, -1), (-1, 0), (-1, 1), (0, -1),
                                  (-1, -1))]

    def place(self, text, candidates, *, gaps=(4.0,), leader_from=None, **kw):
        """Put `text` at the best candidate (anchor xy in data, direction on screen), trying all
        at each gap (px) in turn until one is free. Directions of -1/0/1 put the box's side or
        corner next to the anchor; a unit vector puts the box beyond the line through the anchor
        square to it. A label placed `leader_from` px or more off gets a thin leader line."""
        kw = {"fontsize": LABEL_PT, "bbox": LABEL_BOX, "zorder": 7, **kw}
        ann = self.ax.annotate(text, xy=candidates[0][0], xytext=(0, 0), ha="center",
                               va="center", textcoords="offset points", annotation_clip=False,
                               **kw)
        bb = ann.get_window_extent(self.renderer)
        w, h = bb.width + 2 * self.PAD, bb.height + 2 * self.PAD
        best = None
        for gap in gaps:
            for xy, (ux, uy) in candidates:
                px, py = self.ax.transData.transform(xy)
                if ux in (-1, 0, 1) and uy in (-1, 0, 1):
                    ox, oy = ux * (w / 2 + gap * 0.75 ** abs(uy)), uy * (h / 2 + gap)
                else:
                    d = 0.5 * (abs(ux) * w + abs(uy) * h) + gap
                    ox, oy = ux * d, uy * d
                box = (px + ox - w / 2, py + oy - h / 2, px + ox + w / 2, py + oy + h / 2)
                c = self.cost(box)
                if best is None or c < best[0]:
                    best = (c, xy, ox, oy, box, gap)
            if best[0] == 0.0:
                break
        _, xy, ox, oy, box, gap = best
        ann.xy = xy
        ann.set_position((ox * 72.0 / self.fig.dpi, oy * 72.0 / self.fig.dpi))
        if leader_from is not None and gap >= leader_from:      # from the anchor to the box
            px, py = self.ax.transData.transform(xy)
            edge = (min(max(px, box[0]), box[2]), min(max(py, box[1]), box[3]))
            (x0, y0), (x1, y1) = self.ax.transData.inverted().transform([(px, py), edge])
            self.ax.plot([x0, x1], [y0, y1], color=kw.get("color", "black"), lw=0.7, zorder=6,
                         gid="leader")
        self.taken.append(box)
        return ann


def side_panel(fig, renderer, keys: Sequence[str], blocks, labels=None):
    """The key (the `KEY` entries named in `keys`) and text blocks ((lines, properties)) down
    the side panel, each wrapped to the panel's width; a block that would run past the panel's
    foot loses its last lines, and says so."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    handles = []
    for k in keys:
        s = dict(KEY[k], label=(labels or {}).get(k, KEY[k]["label"]))
        handles.append(Patch(**{a: v for a, v in s.items() if a != "patch"}) if s.get("patch")
                       else Line2D([], [], **s))
    fw, fh = FIG_SIZE_IN[0] * DPI, FIG_SIZE_IN[1] * DPI
    left, right, top, bottom = (v * DPI for v in PANEL_IN)
    leg = fig.legend(handles=handles, loc="upper left", bbox_to_anchor=(left / fw, top / fh),
                     fontsize=8.5, title="Key", title_fontsize=9, frameon=True,
                     borderaxespad=0.0, alignment="left", handlelength=2.6)
    y = leg.get_window_extent(renderer).y0 - 18
    for lines, kw in blocks:
        width = max(len(s) for s in lines) + 1
        for _ in range(6):                                  # wrap until it fits the width
            out = [w for s in lines for w in textwrap.wrap(s, width, subsequent_indent="  ")
                   or [""]]
            t = fig.text((left + 5) / fw, y / fh, "\n".join(out), va="top", ha="left", **kw)
            bb = t.get_window_extent(renderer)
            if bb.x1 + 6 <= right or width < 20:
                break
            t.remove()
            width = int(width * (right - 11 - left) / bb.width) - 1
        while bb.y0 - 6 < bottom and len(out) > 3:
            out = out[:-2] + ["  … (shortened to fit the sheet)"]
            t.set_text("\n".join(out))
            bb = t.get_window_extent(renderer)
        y = bb.y0 - 16
    return leg
