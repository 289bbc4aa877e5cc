"""Plots: a plotting sheet for one fix, and a passage plot (matplotlib, imported lazily).

matplotlib is imported inside the functions that draw, never at module level. Figures are
``matplotlib.figure.Figure`` objects on the Agg canvas; pyplot's global state is never touched.

The sheet is equirectangular at true local scale: x is longitude, y latitude (degrees), and the
axes aspect is 1/cos φm (φm the sheet's mid latitude), so that one minute of latitude (a nautical
mile) and cos φm minutes of longitude are the same length on paper, as on a plotting sheet; a mile
is 1/60° of latitude and 1/(60 cos φm)° of longitude. Longitudes are unwrapped round the sheet's
centre, so a sheet across the 180th meridian is continuous.

Labels are placed greedily, one at a time: of a label's candidate places, the first whose box
(measured by the renderer) overlaps no label or marker placed before it, stays inside the axes
and covers no drawn line is taken; failing that, the one doing least harm (text on text costs far
more than text on a line). Every figure carries :data:`nav.CAUTION`; warnings go in a box.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass
from datetime import datetime, timedelta
from pathlib import Path
from typing import TYPE_CHECKING, Sequence

import numpy as np

from . import CAUTION
from .angles import cosd, format_dm, format_lat, format_lon, norm180, sind
from .errors import NavInputError
from .export import ExportPoint, as_point
from .fix import LOP, Fix
from .sailing import rhumb_line
from .timekeeping import UTC
from .units import NMI_PER_DEG

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

FIG_SIZE_IN = (11.69, 8.27)            # A4 landscape
DPI = 100
AXES_IN = (0.95, 1.10, 6.70, 6.45)     # chart: left, bottom, width, height (inches)
PANEL_IN = (8.05, 11.50, 7.55, 0.80)   # side panel: left, right, top, bottom (inches)
SCALE_BAR_NMI = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000)
GRID_STEPS_ARCMIN = (1, 2, 5, 10, 15, 20, 30, 60, 120, 180, 300, 600, 900, 1200, 1800)
LABEL_PT = 8.5
SAVE_FORMATS = ("png", "pdf")
# Line colours after Okabe & Ito and Tol (colour-blind safe); vermilion is kept for warnings.
LINE_COLOURS = ("#0072B2", "#009E73", "#CC79A7", "#56B4E9", "#000000", "#999933", "#332288",
                "#882255", "#44AA99", "#7F7F7F")
WARN, FIX_C, DR_C, TRACK_C, GREY = "#D55E00", "#000000", "#5A3E2B", "#0072B2", "#333333"
ELLIPSE_FILL = "#f2c0a5"
_MONTHS = "Jan Feb Mar Apr May Jun Jul Aug Sep Oct Nov Dec".split()
_LABEL_BOX = dict(boxstyle="square,pad=0.15", fc="white", ec="none", alpha=0.85)
_MONO = dict(fontsize=8.5, family="DejaVu Sans Mono", gid="summary",
             bbox=dict(boxstyle="round,pad=0.4", fc="#f4f6f8", ec="#8a99a6", lw=0.8))
_WARN_TEXT = dict(fontsize=8.5, color="#5c1600", gid="warnings",
                  bbox=dict(boxstyle="round,pad=0.4", fc="#fff3e6", ec=WARN, lw=1.0))


def _mark(marker, colour, label, **kw):
    return {"marker": marker, "ls": "none", "ms": 10, "mfc": "none", "mec": colour, "mew": 1.8,
            "label": label, **kw}


_KEY = {   # legend entries: styles of the proxy artists
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
}


# ---------------------------------------------------------------- notation, scale, grid, files

def when(t: datetime, style: str = "time") -> str:
    """UTC to the nearest minute: ``time`` 05:28, ``day`` 20 Mar 05:28, ``date`` 20 Mar 2026."""
    m = t.astimezone(UTC) + timedelta(seconds=30)
    mon = _MONTHS[m.month - 1]
    return {"time": f"{m:%H:%M}", "day": f"{m.day:02d} {mon} {m:%H:%M}",
            "date": f"{m.day:02d} {mon} {m.year}"}[style]


def lat_tick_label(lat_deg: float) -> str:
    """Whole-minute latitude for the graticule: ``41°10′ N``."""
    hemi = "S" if round(lat_deg * 60.0) < 0 else "N"
    return f"{format_dm(abs(lat_deg), decimals=0, deg_width=2)} {hemi}"


def lon_tick_label(x_deg: float) -> str:
    """Whole-minute longitude for the graticule: ``032°05′ W``; the 180th meridian ``180°00′``."""
    lon = float(norm180(x_deg))
    arcmin = round(lon * 60.0)
    hemi = "" if arcmin == -10800 else " E" if arcmin >= 0 else " W"
    return format_dm(abs(lon), decimals=0, deg_width=3) + hemi


def _intercept_text(p_nmi: float) -> str:
    v = round(float(p_nmi), 1)
    return f"{abs(v):.1f} {'T' if v >= 0 else 'A'}"


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


def _check_path(path):
    """(Path, format) for `path`, or None; only .png and .pdf are accepted."""
    if path is None:
        return None
    p = Path(path)
    if p.suffix.lower().lstrip(".") not in SAVE_FORMATS:
        raise NavInputError(f"'{p.name}': a plot is saved as PNG or PDF, chosen by the extension",
                            field="path", example="sheet.png or sheet.pdf")
    return p, p.suffix.lower().lstrip(".")


def _save(fig, saved, title: str) -> None:
    if saved is not None:
        (p, ext), key = saved, ("Description" if saved[1] == "png" else "Subject")
        try:
            fig.savefig(p, format=ext, dpi=DPI, metadata={"Title": title, key: CAUTION})
        except OSError as exc:
            raise NavInputError(f"cannot write '{p}': {exc.strerror or exc}", field="path",
                                example="a file in an existing, writable folder") from None


# ---------------------------------------------------------------- the sheet's geometry

@dataclass(frozen=True)
class _Sheet:
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


def _fit_limits(sheet: _Sheet, xs, ys, min_half_nmi: float, margin: float):
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


def _clip_line(p, d, xlim, ylim):
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

def _chart(sheet: _Sheet, xlim, ylim, title: str, subtitle: str):
    """Figure and axes (limits, aspect, graticule), titles, caution footer and scale bar.

    Returns (fig, ax, placer), the scale bar already blocked for labels.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=FIG_SIZE_IN, dpi=DPI)
    FigureCanvasAgg(fig)
    w, h = FIG_SIZE_IN
    ax = fig.add_axes((AXES_IN[0] / w, AXES_IN[1] / h, AXES_IN[2] / w, AXES_IN[3] / h))
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    ax.set_aspect(1.0 / sheet.coslat, adjustable="box", anchor="C")
    ax.apply_aspect()
    xt = _ticks(*xlim, grid_step_arcmin(xlim[1] - xlim[0], int(AXES_IN[2] / 1.15)))
    yt = _ticks(*ylim, grid_step_arcmin(ylim[1] - ylim[0], int(AXES_IN[3] / 0.85)))
    ax.set_xticks(xt, [lon_tick_label(v) for v in xt])
    ax.set_yticks(yt, [lat_tick_label(v) for v in yt])
    ax.tick_params(labelsize=9, length=3)
    ax.grid(True, color="#b8c4cc", lw=0.6)
    ax.set_axisbelow(True)
    fig.text(AXES_IN[0] / w, 7.98 / h, title, fontsize=13, weight="bold", va="bottom")
    fig.text(AXES_IN[0] / w, 7.72 / h, subtitle, fontsize=9, va="bottom", color=GREY)
    fig.text(0.5, 0.12 / h, "\n".join(textwrap.wrap(CAUTION, 150)), ha="center", va="bottom",
             fontsize=9, color="#7a1d00", gid="caution",
             bbox=dict(boxstyle="round,pad=0.4", fc="#fff7f2", ec=WARN, lw=0.8))
    length = nice_scale_nmi(sheet.east_nmi(xlim[1] - xlim[0]))      # along a parallel
    x0, y0 = xlim[0] + 0.04 * (xlim[1] - xlim[0]), ylim[0] + 0.035 * (ylim[1] - ylim[0])
    x1 = float(sheet.move(x0, y0, length, 0.0)[0])
    bar, = ax.plot([x0, x1], [y0, y0], color="black", lw=3, solid_capstyle="butt", marker="|",
                   ms=9, mew=1.5, gid="scale_bar", zorder=6)
    label = ax.annotate(f"{length:g} nmi", xy=(0.5 * (x0 + x1), y0), xytext=(0, 6),
                        textcoords="offset points", ha="center", va="bottom", fontsize=9,
                        bbox=_LABEL_BOX, gid="scale_bar_label", zorder=6)
    placer = _Placer(fig, ax)
    for artist in (bar, label):
        bb = artist.get_window_extent(placer.renderer)
        placer.taken.append((bb.x0, bb.y0, bb.x1, bb.y1))
    return fig, ax, placer


def _fix_marker(ax, placer, x, y, colour=FIX_C, running=False, size=11):
    ax.plot([x], [y], "^" if running else "o", ms=size, mfc="none", mec=colour, mew=1.8,
            zorder=9)
    ax.plot([x], [y], ".", ms=4, color=colour, zorder=9)
    placer.block_point((x, y), 0.8 * size)


class _Placer:
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
            seg = _clip_line(a, b - a, (a_.x0, a_.x1), (a_.y0, a_.y1))
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
        kw = {"fontsize": LABEL_PT, "bbox": _LABEL_BOX, "zorder": 7, **kw}
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


def _side_panel(fig, renderer, keys: Sequence[str], blocks, labels=None):
    """The key (the `_KEY` entries named in `keys`) and text blocks ((lines, properties)) down
    the side panel, each wrapped to the panel's width; a block that would run past the panel's
    foot loses its last lines, and says so."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    handles = []
    for k in keys:
        s = dict(_KEY[k], label=(labels or {}).get(k, _KEY[k]["label"]))
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


# ---------------------------------------------------------------- the plotting sheet

def _as_dr(dr, fix: Fix) -> ExportPoint | None:
    if isinstance(dr, (tuple, list)):
        if len(dr) not in (2, 3):
            raise NavInputError("the DR is (lat_deg, lon_deg) or (lat_deg, lon_deg, utc)",
                                field="dr", example="(41.2, -32.1, fix.utc)")
        dr = {"lat_deg": dr[0], "lon_deg": dr[1], "utc": (*dr, fix.utc)[2], "kind": "dr"}
    return None if dr is None else as_point(dr, "dr")


def _lop_flags(fix: Fix, lops: Sequence[LOP]) -> list[bool]:
    """Whether each LOP's sight was flagged: matched on the sight's label, else by order."""
    free = list(range(len(fix.labels)))
    out = []
    for i, lop in enumerate(lops):
        j = next((k for k in free if fix.labels[k] == lop.label),
                 i if len(lops) == len(fix.labels) and i in free else None)
        out.append(j is not None and bool(fix.flags[j]))
        free = [k for k in free if k != j]
    return out


def _lop_label(i: int, lop: LOP, flagged: bool) -> str:
    extra = ([f"adv. {lop.advanced_nmi:.1f} nmi"] if lop.advanced_nmi > 0.0 else []) + \
        (["flagged"] if flagged else [])
    return f"{i} {lop.body} {when(lop.utc)}" + ("\n" + ", ".join(extra) if extra else "")


def _draw_lops(ax, placer, sheet, lops, geo, flags, colours, diag):
    """Azimuth, intercept, LOP (across the sheet), AP and the AP's run for each line.

    Returns per LOP (x, y, dx, dy): the drawn line from (x, y) to (x + dx, y + dy)."""
    from matplotlib.patches import FancyArrowPatch

    lines = []
    for i, (lp, (ax_, ay_, ue, un, ex, ey), bad, col) in enumerate(zip(lops, geo, flags,
                                                                         colours), 1):
        az = max(abs(lp.intercept_nmi) + 0.12 * diag, 0.25 * diag)     # azimuth line toward Zn
        zx, zy = (float(v) for v in sheet.move(ax_, ay_, az * ue, az * un))
        ax.add_patch(FancyArrowPatch((ax_, ay_), (zx, zy), arrowstyle="-|>", mutation_scale=10,
                                     lw=0.8, ls=(0, (4, 3)), color=col, alpha=0.8, zorder=3,
                                     gid=f"azimuth_{i}"))
        ax.plot([ax_, ex], [ay_, ey], color=col, lw=2.0, solid_capstyle="butt", zorder=4,
                gid=f"intercept_{i}")
        dx, dy = (float(v) for v in sheet.move(0.0, 0.0, un * diag * 1.5, -ue * diag * 1.5))
        ax.plot([ex - dx, ex + dx], [ey - dy, ey + dy], color=col, lw=2.2 if bad else 1.6,
                ls=(0, (7, 3)) if lp.advanced_nmi > 0.0 else "-", zorder=5, gid=f"lop_{i}")
        placer.line([ax_, zx], [ay_, zy])
        placer.line([ex - dx, ex + dx], [ey - dy, ey + dy])
        lines.append((ex - dx, ey - dy, 2 * dx, 2 * dy))
        if lp.advanced_nmi > 0.0 and lp.origin_lat_deg is not None:     # the AP's run
            ax.add_patch(FancyArrowPatch((sheet.x(lp.origin_lon_deg), lp.origin_lat_deg),
                                         (ax_, ay_), arrowstyle="->", mutation_scale=9, lw=0.8,
                                         ls=":", color=col, zorder=3, gid=f"run_{i}"))
        ax.plot([ax_], [ay_], "o", ms=5, mfc="white", mec=col, mew=1.3, zorder=8)
        placer.block_point((ax_, ay_), 5)
    return lines


def _label_lops(placer, sheet, lops, geo, lines, flags, colours, xlim, ylim):
    """LOP labels near the ends of the lines in view, AP labels, intercept labels."""
    for i, ((px, py, dx, dy), lp, bad, col) in enumerate(zip(lines, lops, flags, colours), 1):
        a, b = _clip_line((px, py), (dx, dy), xlim, ylim) or (0.5, 0.5)
        cands = []
        for f in (0.05, 0.13, 0.22, 0.32, 0.42):
            for t in (a + f * (b - a), b - f * (b - a)):
                xy = (px + t * dx, py + t * dy)
                ux, uy = placer.direction(xy, (dx, dy))
                cands += [(xy, (-uy, ux)), (xy, (uy, -ux))]
        placer.place(_lop_label(i, lp, bad), cands, gaps=(3.0, 8.0), color=col,
                     weight="bold" if bad else "normal", gid=f"lop_label_{i}")
    groups: dict = {}                         # APs that coincide (to 0.05 nmi) share a label
    for i, (ax_, ay_, *_) in enumerate(geo, 1):
        key = (round(sheet.east_nmi(ax_ - sheet.lon0) * 20), round(ay_ * 1200))
        groups.setdefault(key, [ax_, ay_, []])[2].append(i)
    for ax_, ay_, idx in groups.values():
        placer.place("AP" + ",".join(map(str, idx)), placer.around((ax_, ay_)),
                     gaps=(3.0, 12.0, 26.0), gid="ap_label",
                     color=GREY if len(idx) > 1 else colours[idx[0] - 1])
    for i, (lp, (ax_, ay_, ue, un, ex, ey), col) in enumerate(zip(lops, geo, colours), 1):
        mid = (0.5 * (ax_ + ex), 0.5 * (ay_ + ey))
        ux, uy = placer.direction(mid, sheet.move(0.0, 0.0, ue, un))
        placer.place(_intercept_text(lp.intercept_nmi),
                     [(mid, (-uy, ux)), (mid, (uy, -ux))] + placer.around(mid),
                     gaps=(3.0, 10.0, 20.0), color=col, fontsize=8, gid=f"intercept_label_{i}")


def plot_fix_sheet(fix: Fix, lops: Sequence[LOP], *, dr=None, title: str = "",
                   path=None) -> "Figure":
    """A plotting sheet for one fix: DR, APs, azimuths, intercepts, LOPs, the fix, its ellipse.

    `lops` as :func:`nav.fix.lop_at` gives them (advanced ones carry ``advanced_nmi``); a LOP
    whose sight the fix flagged is drawn in the warning colour. `dr`: an
    :class:`nav.export.ExportPoint` (or a dict of its fields), ``(lat_deg, lon_deg)`` (at the
    fix time) or ``(lat_deg, lon_deg, utc)``. With `path` the figure is also saved, PNG or PDF by
    the extension. Returns the Figure.
    """
    if not isinstance(fix, Fix):
        raise NavInputError("fix must be the result of nav.fix.solve_fix", field="fix")
    lops = list(lops)
    if not lops or not all(isinstance(lp, LOP) for lp in lops):
        raise NavInputError("lops must be one or more LOPs (nav.fix.lop_at)", field="lops",
                            example="[lop_at(s, ap_lat, ap_lon, fix.utc) for s in sights]")
    saved, drp, flags = _check_path(path), _as_dr(dr, fix), _lop_flags(fix, lops)
    colours = [WARN if bad else LINE_COLOURS[i % len(LINE_COLOURS)] for i, bad in enumerate(flags)]
    e = fix.ellipse
    axes = (e.semi_major_nmi, e.semi_minor_nmi, e.orientation_deg)

    # The latitude extent does not depend on the longitude scale: fix the mid latitude first.
    pts = [(fix.lat_deg, fix.lon_deg)] + [(lp.ap_lat_deg, lp.ap_lon_deg) for lp in lops] + \
        ([(drp.lat_deg, drp.lon_deg)] if drp else [])
    lats = [p[0] for p in pts] + list(_Sheet(0.0, 1.0).ellipse(0.0, fix.lat_deg, *axes)[1]) + \
        [lp.ap_lat_deg + lp.intercept_nmi * float(cosd(lp.zn_deg)) / NMI_PER_DEG for lp in lops]
    mid_lat = 0.5 * (min(lats) + max(lats))
    sheet = _Sheet(float(fix.lon_deg), float(cosd(mid_lat)))
    fx, fy = sheet.x(fix.lon_deg), fix.lat_deg
    ell_x, ell_y = sheet.ellipse(fx, fy, *axes)
    xs, ys = [sheet.x(lon) for _, lon in pts] + list(ell_x), [p[0] for p in pts] + list(ell_y)
    geo = []                                  # per LOP: AP x, y, Zn unit (e, n), intercept end
    for lp in lops:
        ax_, ue, un = sheet.x(lp.ap_lon_deg), float(sind(lp.zn_deg)), float(cosd(lp.zn_deg))
        ex, ey = (float(v) for v in sheet.move(ax_, lp.ap_lat_deg, lp.intercept_nmi * ue,
                                               lp.intercept_nmi * un))
        geo.append((ax_, lp.ap_lat_deg, ue, un, ex, ey))
        xs, ys = xs + [ex], ys + [ey]
    xlim, ylim = _fit_limits(sheet, xs, ys, min_half_nmi=3.0, margin=0.22)

    kind = fix.kind[:1].upper() + fix.kind[1:]
    title = title or f"{kind} {when(fix.utc, 'date')} {when(fix.utc)} UTC: plotting sheet"
    fig, ax, placer = _chart(sheet, xlim, ylim, title,
                             f"True local scale: 1′ of latitude = 1 nmi; longitude scaled by cos "
                             f"{lat_tick_label(mid_lat)} (mid latitude of the sheet). Times UTC.")
    diag = math.hypot(sheet.east_nmi(xlim[1] - xlim[0]), (ylim[1] - ylim[0]) * 60.0)
    lines = _draw_lops(ax, placer, sheet, lops, geo, flags, colours, diag)
    from matplotlib.patches import Polygon

    ell = ax.add_patch(Polygon(np.column_stack([ell_x, ell_y]), closed=True, fc=ELLIPSE_FILL,
                               ec=WARN, lw=1.0, alpha=0.45, zorder=6, gid="ellipse"))
    placer.line(ell_x, ell_y)
    bb = ell.get_window_extent(placer.renderer)
    if bb.width * bb.height < 0.04 * placer.area.width * placer.area.height:
        placer.taken.append((bb.x0, bb.y0, bb.x1, bb.y1))
    _fix_marker(ax, placer, fx, fy)
    if drp is not None:
        drx = sheet.x(drp.lon_deg)
        ax.plot([drx], [drp.lat_deg], "s", ms=8, mfc="white", mec=DR_C, mew=1.6, zorder=8)
        ax.plot([drx], [drp.lat_deg], ".", ms=3, color=DR_C, zorder=8)
        placer.block_point((drx, drp.lat_deg), 7)
    placer.place(f"{kind} {when(fix.utc)}\n{format_lat(fix.lat_deg)}  {format_lon(fix.lon_deg)}",
                 placer.around((fx, fy)), gaps=(8.0, 20.0, 36.0, 60.0, 90.0), leader_from=20.0,
                 fontsize=9, weight="bold", gid="fix_label")
    if drp is not None:
        placer.place(f"DR {when(drp.utc)}", placer.around((sheet.x(drp.lon_deg), drp.lat_deg)),
                     gaps=(3.0, 12.0, 26.0), color=DR_C, gid="dr_label")
    _label_lops(placer, sheet, lops, geo, lines, flags, colours, xlim, ylim)

    conf = f"{e.confidence * 100:.0f} %"
    keys = (["dr"] if drp else []) + ["ap", "az", "int", "lop"] + \
        (["adv"] if any(lp.advanced_nmi > 0 for lp in lops) else []) + \
        (["bad"] if any(flags) else []) + ["fix", "ellipse"]
    summary = [f"{kind} {when(fix.utc)} UTC {when(fix.utc, 'date')}",
               f"{format_lat(fix.lat_deg)}   {format_lon(fix.lon_deg)}",
               f"{conf} ellipse {e.semi_major_nmi:.1f} × {e.semi_minor_nmi:.1f} nmi,",
               f"  major axis {e.orientation_deg:03.0f}° T",
               f"{fix.n_sights} sights; widest angle of cut {fix.cut_angle_deg:.0f}°", "",
               " # body            UTC    Zn     int.   adv."]
    for i, (lp, bad) in enumerate(zip(lops, flags), 1):
        adv = f"{lp.advanced_nmi:5.1f}" if lp.advanced_nmi > 0 else "    –"
        summary.append(f"{i:2d} {lp.body[:15]:<15} {when(lp.utc)}  {lp.zn_deg:03.0f}° "
                       f"{_intercept_text(lp.intercept_nmi):>7} {adv}{' !' if bad else ''}")
    summary += ["! flagged: see the warnings"] if any(flags) else []
    blocks = [(summary, _MONO)] + ([(["Warnings"] + [f"• {m}" for m in fix.warnings],
                                     _WARN_TEXT)] if fix.warnings else [])
    _side_panel(fig, placer.renderer, keys, blocks,
                {"adv": f"LOP advanced to {when(fix.utc)} (AP's run dotted)", "fix": kind,
                 "ellipse": f"{conf} error ellipse"})
    _save(fig, saved, title)
    return fig


# ---------------------------------------------------------------- the passage plot

def _as_fix_point(f, i: int) -> ExportPoint:
    if isinstance(f, Fix):
        e = f.ellipse
        return ExportPoint(f.utc, f.lat_deg, float(norm180(f.lon_deg)),
                           "running_fix" if f.kind == "running fix" else "fix", "",
                           e.semi_major_nmi, e.semi_minor_nmi, e.orientation_deg, f.warnings)
    return as_point(f, f"fixes[{i}]")


def passage_distance_nmi(track) -> float:
    """Distance run along the points in time order: the sum of their rhumb-line legs (nmi)."""
    pts = sorted(track, key=lambda p: p.utc)
    if len(pts) < 2:
        return 0.0
    lat, lon = np.array([p.lat_deg for p in pts]), np.array([p.lon_deg for p in pts])
    return float(np.sum(rhumb_line(lat[:-1], lon[:-1], lat[1:], lon[1:])[1]))


def plot_passage(track, fixes, *, title: str = "", path=None) -> "Figure":
    """The DR track (points joined in time order), the fixes and running fixes, the distance run.

    `track`: :class:`nav.export.ExportPoint` (or dicts of its fields); `fixes`: ExportPoints or
    :class:`nav.fix.Fix` results. With `path` the figure is also saved, PNG or PDF by the
    extension. Returns the Figure.
    """
    track = sorted((as_point(p, f"track[{i}]") for i, p in enumerate(track or ())),
                   key=lambda p: p.utc)
    fixes = sorted((_as_fix_point(f, i) for i, f in enumerate(fixes or ())), key=lambda p: p.utc)
    if not track and not fixes:
        raise NavInputError("nothing to plot: no track points and no fixes", field="track",
                            example="ExportPoint(utc, lat_deg, lon_deg, 'dr', '')")
    saved, every = _check_path(path), track + fixes

    def outlines(sheet, xs):
        return [sheet.ellipse(x, p.lat_deg, p.ellipse_semi_major_nmi, p.ellipse_semi_minor_nmi,
                              p.ellipse_orientation_deg or 0.0)
                if p.ellipse_semi_major_nmi is not None else None for p, x in zip(fixes, xs)]

    ys = [p.lat_deg for p in every] + [v for o in outlines(_Sheet(0.0, 1.0), [0.0] * len(fixes))
                                       if o is not None for v in o[1]]     # lat: scale-free
    mid_lat = 0.5 * (min(ys) + max(ys))
    tx = [every[0].lon_deg]
    for a, b in zip(track, track[1:]):                  # unwrapped leg by leg (across 180° too)
        tx.append(tx[-1] + float(norm180(b.lon_deg - a.lon_deg)))
    tx = tx[:len(track)]
    sheet = _Sheet(float(np.mean(tx)) if track else every[0].lon_deg, float(cosd(mid_lat)))
    fxs = [sheet.x(p.lon_deg) for p in fixes]
    ells = outlines(sheet, fxs)
    xs = tx + fxs + [v for o in ells if o is not None for v in o[0]]
    xlim, ylim = _fit_limits(sheet, xs, ys, min_half_nmi=2.0, margin=0.12)
    run_nmi = passage_distance_nmi(track)
    t0, t1 = min(p.utc for p in every), max(p.utc for p in every)

    title = title or "Passage plot"
    fig, ax, placer = _chart(sheet, xlim, ylim, title,
                             f"{when(t0, 'day')} to {when(t1, 'day')} UTC. True local scale at "
                             f"{lat_tick_label(mid_lat)}; distance run {run_nmi:.1f} nmi.")
    from matplotlib.patches import Polygon

    if track:
        ty = [p.lat_deg for p in track]
        ax.plot(tx, ty, "-", color=TRACK_C, lw=1.6, zorder=4, gid="track")
        ax.plot(tx, ty, "o", ms=3.5, color=TRACK_C, zorder=5)
        placer.line(tx, ty)
        for x, y in zip(tx, ty):
            placer.block_point((x, y), 3)
    for p, x, o in zip(fixes, fxs, ells):
        if o is not None:
            ax.add_patch(Polygon(np.column_stack(o), closed=True, fc=ELLIPSE_FILL, ec=WARN,
                                 lw=0.8, alpha=0.4, zorder=5))
        _fix_marker(ax, placer, x, p.lat_deg, WARN if p.warnings else FIX_C,
                    p.kind == "running_fix", size=10)
    for p, x in zip(fixes, fxs):
        placer.place(when(p.utc, "day") + (" !" if p.warnings else ""),
                     placer.around((x, p.lat_deg)), gaps=(5.0, 16.0, 30.0), leader_from=16.0,
                     color=WARN if p.warnings else FIX_C, gid="fix_label")
    for word, p, x in ([("start", track[0], tx[0])] if track else []) + \
            ([("end", track[-1], tx[-1])] if len(track) > 1 else []):
        placer.place(f"{word} {when(p.utc, 'day')}", placer.around((x, p.lat_deg)),
                     gaps=(4.0, 14.0, 28.0), color=TRACK_C, gid="track_label")

    n_run = sum(p.kind == "running_fix" for p in fixes)
    keys = (["track"] if track else []) + (["fix"] if len(fixes) > n_run else []) + \
        (["rfix"] if n_run else []) + (["warned"] if any(p.warnings for p in fixes) else []) + \
        (["ellipse"] if any(o is not None for o in ells) else [])
    summary = [f"Distance run {run_nmi:.1f} nmi", "  (sum of the rhumb-line legs of the track)",
               f"From {when(t0, 'day')} to {when(t1, 'day')} UTC",
               f"Track points {len(track)}, fixes {len(fixes) - n_run}, running fixes {n_run}"]
    if fixes:
        summary += ["", "Fixes (UTC; RF running fix):"] + [
            f"{when(p.utc, 'day')} {'RF' if p.kind == 'running_fix' else 'F '} "
            f"{format_lat(p.lat_deg)} {format_lon(p.lon_deg)}" for p in fixes]
    warned = [f"• {when(p.utc, 'day')}: {m}" for p in fixes for m in p.warnings]
    blocks = [(summary, _MONO)] + ([(["Warnings"] + warned, _WARN_TEXT)] if warned else [])
    _side_panel(fig, placer.renderer, keys, blocks)
    _save(fig, saved, title)
    return fig
