"""Plots: a plotting sheet for one fix, and a passage plot (matplotlib, imported lazily).

matplotlib is imported inside the functions that draw, never at module level. Figures are
``matplotlib.figure.Figure`` objects on the Agg canvas; pyplot's global state is never touched.
The sheet's geometry (true local scale, longitudes unwrapped round its centre), the graticule,
label placement and the side panel are in :mod:`nav.plot_layout`. Every figure carries
:data:`nav.CAUTION`; warnings go in a box.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta
from pathlib import Path
from typing import TYPE_CHECKING, Sequence

import numpy as np

from . import CAUTION
from .angles import cosd, format_lat, format_lon, norm180, sind
from .errors import NavInputError
from .export import ExportPoint, as_point
from .fix import LOP, Fix
from .plot_layout import (DPI, DR_C, ELLIPSE_FILL, FIX_C, GREY, JUMP_STYLE, KEY, KNOWN_EDGE,
                          KNOWN_FILL, LINE_COLOURS, REF_STYLE, SUMMARY_TEXT, TRACK_C, WARN, WARNINGS_TEXT,
                          Sheet, clip_line, fit_limits, lat_tick_label, new_chart, side_panel)
from .sailing import rhumb_line
from .timekeeping import UTC, format_hm, round_to_second
from .units import NMI_PER_DEG

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

SAVE_FORMATS = ("png", "pdf")
# Text drawn without FreeType's hinting: the glyphs keep their outline shapes (antialiased, as
# before) and render some 40 % faster; at 100 dpi the difference is hard to see.
TEXT_RC = {"text.hinting": "no_hinting"}
PNG_COMPRESS_LEVEL = 1          # zlib level 1 on RGB: some 2× faster to write than level 6 on RGBA
_MONTHS = "Jan Feb Mar Apr May Jun Jul Aug Sep Oct Nov Dec".split()


# ---------------------------------------------------------------- notation, files

def when(t: datetime, style: str = "time") -> str:
    """UTC to the nearest minute: ``time`` 05:28, ``day`` 20 Mar 05:28, ``date`` 20 Mar 2026."""
    if style == "time":
        return format_hm(t)
    m = round_to_second(t.astimezone(UTC)) + timedelta(seconds=30)   # the rounded minute's day
    day = f"{m.day:02d} {_MONTHS[m.month - 1]}"
    return {"day": f"{day} {format_hm(t)}", "date": f"{day} {m.year}"}[style]


def _intercept_text(p_nmi: float) -> str:
    v = round(float(p_nmi), 1)
    return f"{abs(v):.1f} {'T' if v >= 0 else 'A'}"


def _check_path(path, replace: bool = False, replace_hint: str | None = None):
    """(Path, format, replace, hint) for `path`, or None; only .png and .pdf are accepted, and
    the file rules of :mod:`nav.files` are checked before anything is drawn."""
    from .files import REPLACE_OPTION, check_output

    if path is None:
        return None
    p = Path(path)
    if p.suffix.lower().lstrip(".") not in SAVE_FORMATS:
        raise NavInputError(f"'{p.name}': a plot is saved as PNG or PDF, chosen by the extension",
                            field="plot", example="sheet.png or sheet.pdf")
    hint = replace_hint or REPLACE_OPTION
    check_output(p, replace=replace, field="plot", example="sheet.png", replace_hint=hint)
    return p, p.suffix.lower().lstrip("."), replace, hint


def _save(fig, saved, title: str) -> None:
    """Written by the rules of nav.files: a temporary file, then the name; never a device."""
    from .files import write_output

    if saved is not None:
        (p, ext, replace, hint), key = saved, ("Description" if saved[1] == "png" else "Subject")
        meta = {"Title": title, key: CAUTION}
        write_output(p, (lambda f: _write_png(fig, f, meta)) if ext == "png" else
                     (lambda f: fig.savefig(f, format=ext, dpi=DPI, metadata=meta)),
                     replace=replace, field="plot", example="sheet.png", replace_hint=hint)


def _write_png(fig, path, metadata: dict) -> None:
    """Draw on the figure's own canvas (whose renderer measured the labels, so their text
    layout is not worked out again, as savefig's fresh renderer would) and write the pixels as
    RGB with a fast zlib level: the same picture as savefig's at the figure's dpi."""
    from PIL import Image, PngImagePlugin

    fig.canvas.draw()
    info = PngImagePlugin.PngInfo()
    for k, v in metadata.items():
        info.add_text(k, v)
    img = Image.frombuffer("RGBA", fig.canvas.get_width_height(), fig.canvas.buffer_rgba(),
                           "raw", "RGBA", 0, 1).convert("RGB")      # opaque: alpha adds nothing
    img.save(path, format="png", pnginfo=info, compress_level=PNG_COMPRESS_LEVEL, dpi=(DPI, DPI))


def _text_rc(draw):
    """Run a plot function with :data:`TEXT_RC` in force (not left set afterwards)."""
    import functools

    @functools.wraps(draw)
    def wrapper(*args, **kwargs):
        from matplotlib import rc_context

        with rc_context(TEXT_RC):
            return draw(*args, **kwargs)
    return wrapper


def _fix_marker(ax, placer, x, y, colour=FIX_C, running=False, size=11):
    ax.plot([x], [y], "^" if running else "o", ms=size, mfc="none", mec=colour, mew=1.8,
            zorder=9)
    ax.plot([x], [y], ".", ms=4, color=colour, zorder=9)
    placer.block_point((x, y), 0.8 * size)


def _known_marker(ax, placer, x, y, keep_off_px=50.0):
    """A known (true) position: a star, drawn over the fix's ring so that both stay readable.
    No label may cover it, and labels rather keep `keep_off_px` away, so none reads as its."""
    ax.plot([x], [y], "*", ms=12, mfc=KNOWN_FILL, mec=KNOWN_EDGE, mew=0.9, zorder=10,
            gid="known")
    placer.block_point((x, y), 8)
    px, py = ax.transData.transform((x, y))
    t = np.linspace(0.0, 2.0 * np.pi, 49)
    ring = ax.transData.inverted().transform(np.column_stack([px + keep_off_px * np.cos(t),
                                                              py + keep_off_px * np.sin(t)]))
    placer.line(ring[:, 0], ring[:, 1])


def _away_from(ax, candidates, xy, within_px=150.0, cone_deg=35.0):
    """The label candidates round a point that do not head for `xy` (a mark within
    `within_px`), so that neither the label nor its leader reads as that mark's."""
    if xy is None:
        return candidates
    (px, py), (qx, qy) = ax.transData.transform([candidates[0][0], xy])
    if math.hypot(qx - px, qy - py) > within_px:
        return candidates
    towards = math.atan2(qy - py, qx - px)
    kept = [(c, d) for c, d in candidates
            if abs(math.remainder(math.atan2(d[1], d[0]) - towards, 2 * math.pi))
            > math.radians(cone_deg)]
    return kept or candidates


# ---------------------------------------------------------------- the plotting sheet

def _as_position(p, fix: Fix, name: str, kind: str, what: str) -> ExportPoint | None:
    """`p` as an ExportPoint: an ExportPoint or dict of its fields, (lat_deg, lon_deg) at the
    fix time, or (lat_deg, lon_deg, utc); None stays None."""
    if isinstance(p, (tuple, list)):
        if len(p) not in (2, 3):
            raise NavInputError(f"the {what} is (lat_deg, lon_deg) or (lat_deg, lon_deg, utc)",
                                field=name, example="(41.2, -32.1, fix.utc)")
        p = {"lat_deg": p[0], "lon_deg": p[1], "utc": (*p, fix.utc)[2], "kind": kind}
    return None if p is None else as_point(p, name)


def _as_dr(dr, fix: Fix) -> ExportPoint | None:
    return _as_position(dr, fix, "dr", "dr", "DR")


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
        a, b = clip_line((px, py), (dx, dy), xlim, ylim) or (0.5, 0.5)
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


@_text_rc
def plot_fix_sheet(fix: Fix, lops: Sequence[LOP], *, dr=None, known=None,
                   known_label: str = KEY["known"]["label"], title: str = "",
                   path=None, replace: bool = False, replace_hint: str | None = None,
                   figure=None) -> "Figure":
    """A plotting sheet for one fix: DR, APs, azimuths, intercepts, LOPs, the fix, its ellipse.

    `lops` as :func:`nav.fix.lop_at` gives them (advanced ones carry ``advanced_nmi``); a LOP
    whose sight the fix flagged is drawn in the warning colour. `dr`: an
    :class:`nav.export.ExportPoint` (or a dict of its fields), ``(lat_deg, lon_deg)`` (at the
    fix time) or ``(lat_deg, lon_deg, utc)``. `known`: a position known independently of the
    sights (a true position, in the same forms as `dr`), drawn as a star, named `known_label` in
    the key, with the fix's distance from it in the summary. With `path` the figure is also
    saved, PNG or PDF by the extension, by the rules of :mod:`nav.files` (an existing file only
    with `replace`; `replace_hint` names how the user asks for it). `figure`: a figure that an earlier plot returned, to be cleared and
    drawn on again (faster for many sheets; the earlier plot is gone). Returns the Figure.
    """
    if not isinstance(fix, Fix):
        raise NavInputError("fix must be the result of nav.fix.solve_fix", field="fix")
    lops = list(lops)
    if not lops or not all(isinstance(lp, LOP) for lp in lops):
        raise NavInputError("lops must be one or more LOPs (nav.fix.lop_at)", field="lops",
                            example="[lop_at(s, ap_lat, ap_lon, fix.utc) for s in sights]")
    saved, drp, flags = (_check_path(path, replace, replace_hint), _as_dr(dr, fix),
                         _lop_flags(fix, lops))
    kp = _as_position(known, fix, "known", "other", "known position")
    colours = [WARN if bad else LINE_COLOURS[i % len(LINE_COLOURS)] for i, bad in enumerate(flags)]
    e = fix.ellipse
    axes = (e.semi_major_nmi, e.semi_minor_nmi, e.orientation_deg)

    # The latitude extent does not depend on the longitude scale: fix the mid latitude first.
    pts = [(fix.lat_deg, fix.lon_deg)] + [(lp.ap_lat_deg, lp.ap_lon_deg) for lp in lops] + \
        [(p.lat_deg, p.lon_deg) for p in (drp, kp) if p is not None]
    lats = [p[0] for p in pts] + list(Sheet(0.0, 1.0).ellipse(0.0, fix.lat_deg, *axes)[1]) + \
        [lp.ap_lat_deg + lp.intercept_nmi * float(cosd(lp.zn_deg)) / NMI_PER_DEG for lp in lops]
    mid_lat = 0.5 * (min(lats) + max(lats))
    sheet = Sheet(float(fix.lon_deg), float(cosd(mid_lat)))
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
    xlim, ylim = fit_limits(sheet, xs, ys, min_half_nmi=3.0, margin=0.22)

    kind = fix.kind[:1].upper() + fix.kind[1:]
    title = title or f"{kind} {when(fix.utc, 'date')} {when(fix.utc)} UTC: plotting sheet"
    fig, ax, placer = new_chart(sheet, xlim, ylim, title,
                             f"True local scale: 1′ of latitude = 1 nmi; longitude scaled by cos "
                             f"{lat_tick_label(mid_lat)} (mid latitude of the sheet). Times UTC.",
                             figure)
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
    if kp is not None:
        _known_marker(ax, placer, sheet.x(kp.lon_deg), kp.lat_deg)
    star = None if kp is None else (sheet.x(kp.lon_deg), kp.lat_deg)
    placer.place(f"{kind} {when(fix.utc)}\n{format_lat(fix.lat_deg)}  {format_lon(fix.lon_deg)}",
                 _away_from(ax, placer.around((fx, fy)), star), gaps=(8.0, 20.0, 36.0, 60.0, 90.0),
                 leader_from=20.0, fontsize=9, weight="bold", gid="fix_label")
    if drp is not None:
        placer.place(f"DR {when(drp.utc)}", placer.around((sheet.x(drp.lon_deg), drp.lat_deg)),
                     gaps=(3.0, 12.0, 26.0), color=DR_C, gid="dr_label")
    _label_lops(placer, sheet, lops, geo, lines, flags, colours, xlim, ylim)

    conf = f"{e.confidence * 100:.0f} %"
    keys = (["dr"] if drp else []) + ["ap", "az", "int", "lop"] + \
        (["adv"] if any(lp.advanced_nmi > 0 for lp in lops) else []) + \
        (["bad"] if any(flags) else []) + ["fix"] + (["known"] if kp else []) + ["ellipse"]
    summary = [f"{kind} {when(fix.utc)} UTC {when(fix.utc, 'date')}",
               f"{format_lat(fix.lat_deg)}   {format_lon(fix.lon_deg)}",
               f"{conf} ellipse {e.semi_major_nmi:.1f} × {e.semi_minor_nmi:.1f} nmi,",
               f"  major axis {e.orientation_deg:03.0f}° T",
               f"{fix.n_sights} sights; widest angle of cut {fix.cut_angle_deg:.0f}°"]
    if kp is not None:
        brg, dist = (float(v) for v in rhumb_line(kp.lat_deg, kp.lon_deg, fix.lat_deg,
                                                  fix.lon_deg))
        summary += [f"{known_label}:", f"  {format_lat(kp.lat_deg)}   {format_lon(kp.lon_deg)}",
                    f"  the {fix.kind} lies {dist:.2f} nmi"
                    + (f" {brg:03.0f}° T" if dist >= 0.005 else "") + " from it"]
    summary += ["",
               " # body            UTC    Zn     int.   adv."]
    for i, (lp, bad) in enumerate(zip(lops, flags), 1):
        adv = f"{lp.advanced_nmi:5.1f}" if lp.advanced_nmi > 0 else "    –"
        summary.append(f"{i:2d} {lp.body[:15]:<15} {when(lp.utc)}  {lp.zn_deg:03.0f}° "
                       f"{_intercept_text(lp.intercept_nmi):>7} {adv}{' !' if bad else ''}")
    summary += ["! flagged: see the warnings"] if any(flags) else []
    warned = [f"• {m}" for m in fix.warnings]
    blocks = [(summary, SUMMARY_TEXT)] + \
        ([(["Warnings"] + warned, WARNINGS_TEXT)] if warned else [])
    side_panel(fig, placer.renderer, keys, blocks,
                {"adv": f"LOP advanced to {when(fix.utc)} (AP's run dotted)", "fix": kind,
                 "ellipse": f"{conf} error ellipse", "known": known_label})
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


def passage_distance_nmi(track, resets=()) -> float:
    """Distance run along the points in time order: the sum of their rhumb-line legs (nmi),
    the DR legs only: where `resets` (points: the DR carried to an anchor's time) shows a fix
    reset the DR, the leg ends at that DR, and the jump to the fix is not counted."""
    return float(sum(_legs_nmi(seg) for seg in _sailed(sorted(track, key=lambda p: p.utc),
                                                      resets)[0]))


def _legs_nmi(pts) -> float:
    if len(pts) < 2:
        return 0.0
    lat, lon = np.array([p.lat_deg for p in pts]), np.array([p.lon_deg for p in pts])
    return float(np.sum(rhumb_line(lat[:-1], lon[:-1], lat[1:], lon[1:])[1]))


def _sailed(track, resets):
    """(segments of sailed track, jumps): the track cut at each point that `resets` names (same
    time), each cut segment ending at the carried DR; a jump is (carried DR, the new anchor)."""
    at = {r.utc: r for r in resets}
    segs, jumps, cur = [], [], []
    for p in track:
        r = at.get(p.utc)
        if r is not None and cur and (r.lat_deg, r.lon_deg) != (p.lat_deg, p.lon_deg):
            cur.append(r)
            segs.append(cur)
            jumps.append((r, p))
            cur = []
        cur.append(p)
    if cur:
        segs.append(cur)
    return segs, jumps


FIX_MARKER_PT = 10            # the fix markers of the passage plot (points)


def _unwrapped(points, start_x: float) -> list[float]:
    """Sheet x of time-ordered points, unwrapped leg by leg from `start_x` (across 180° too)."""
    xs = [start_x] if points else []
    for a, b in zip(points, points[1:]):
        xs.append(xs[-1] + float(norm180(b.lon_deg - a.lon_deg)))
    return xs


@_text_rc
def plot_passage(track, fixes, *, resets=(), reference_track=None,
                 reference_label: str = KEY["ref"]["label"], title: str = "",
                 path=None, replace: bool = False, replace_hint: str | None = None,
                 figure=None) -> "Figure":
    """The DR track (points joined in time order), the fixes and running fixes, the distance run.

    `track`: :class:`nav.export.ExportPoint` (or dicts of its fields); `fixes`: ExportPoints or
    :class:`nav.fix.Fix` results. `resets`: points (same form) of the DR carried to the time of
    a fix that reset it (:meth:`nav.passage.Passage.dr_resets`): the track is sailed up to
    there, and the step to the fix is drawn dashed, a jump, not counted in the distance run. `reference_track`: points of another track to compare with
    (a track known independently, e.g. a true one), in the same form as `track`, drawn as a thin
    dash-dotted line named `reference_label` in the key. A fix's error ellipse is drawn only
    where it shows beyond the fix's marker at the plot's scale (then the key names it); else the
    summary says that the ellipses are too small to show. With `path` the figure is also saved,
    PNG or PDF by the extension, by the rules of :mod:`nav.files` (as for plot_fix_sheet);
    `figure` as for :func:`plot_fix_sheet`. Returns the Figure.
    """
    track = sorted((as_point(p, f"track[{i}]") for i, p in enumerate(track or ())),
                   key=lambda p: p.utc)
    fixes = sorted((_as_fix_point(f, i) for i, f in enumerate(fixes or ())), key=lambda p: p.utc)
    ref = sorted((as_point(p, f"reference_track[{i}]")
                  for i, p in enumerate(reference_track or ())), key=lambda p: p.utc)
    if not track and not fixes:
        raise NavInputError("nothing to plot: no track points and no fixes", field="track",
                            example="ExportPoint(utc, lat_deg, lon_deg, 'dr', '')")
    saved, every = _check_path(path, replace, replace_hint), track + fixes

    def outlines(sheet, xs):
        return [sheet.ellipse(x, p.lat_deg, p.ellipse_semi_major_nmi, p.ellipse_semi_minor_nmi,
                              p.ellipse_orientation_deg or 0.0)
                if p.ellipse_semi_major_nmi is not None else None for p, x in zip(fixes, xs)]

    ys = [p.lat_deg for p in every + ref] + \
        [v for o in outlines(Sheet(0.0, 1.0), [0.0] * len(fixes)) if o is not None
         for v in o[1]]                                                    # lat: scale-free
    mid_lat = 0.5 * (min(ys) + max(ys))
    tx = _unwrapped(track, every[0].lon_deg)
    sheet = Sheet(float(np.mean(tx)) if track else every[0].lon_deg, float(cosd(mid_lat)))
    fxs = [sheet.x(p.lon_deg) for p in fixes]
    rx = _unwrapped(ref, sheet.x(ref[0].lon_deg)) if ref else []
    ells = outlines(sheet, fxs)
    xs = tx + fxs + rx + [v for o in ells if o is not None for v in o[0]]
    resets = sorted((as_point(p, f"resets[{i}]") for i, p in enumerate(resets or ())),
                    key=lambda p: p.utc)
    segs, jumps = _sailed(track, resets)
    run_nmi = float(sum(_legs_nmi(seg) for seg in segs))
    x_of = dict(zip((id(p) for p in track), tx))
    seg_xy = []
    for seg in segs:
        xs_ = [x_of[id(seg[0])]]
        for a, b in zip(seg, seg[1:]):
            xs_.append(x_of.get(id(b), xs_[-1] + float(norm180(b.lon_deg - a.lon_deg))))
        seg_xy.append((xs_, [p.lat_deg for p in seg]))
    jump_xy = [((sx[-1], x_of[id(b)]), (a.lat_deg, b.lat_deg))
               for (a, b), (sx, _) in zip(jumps, seg_xy)]
    xs += [jx[0] for jx, _ in jump_xy]
    ys += [jy[0] for _, jy in jump_xy]
    xlim, ylim = fit_limits(sheet, xs, ys, min_half_nmi=2.0, margin=0.12)
    t0, t1 = min(p.utc for p in every), max(p.utc for p in every)

    title = title or "Passage plot"
    fig, ax, placer = new_chart(sheet, xlim, ylim, title,
                             f"{when(t0, 'day')} to {when(t1, 'day')} UTC. True local scale at "
                             f"{lat_tick_label(mid_lat)}; distance run {run_nmi:.1f} nmi.",
                             figure)
    from matplotlib.patches import Polygon

    if ref:
        ry = [p.lat_deg for p in ref]
        ax.plot(rx, ry, zorder=6, gid="reference_track", **REF_STYLE)   # over the DR track
        placer.line(rx, ry)
    if track:
        ty = [p.lat_deg for p in track]
        for sx, sy in seg_xy:
            ax.plot(sx, sy, "-", color=TRACK_C, lw=1.6, zorder=4, gid="track")
            placer.line(sx, sy)
        for jx, jy in jump_xy:
            ax.plot(jx, jy, zorder=4, gid="track_jump", **JUMP_STYLE)
        ax.plot(tx, ty, "o", ms=3.5, color=TRACK_C, zorder=5)
        for x, y in zip(tx, ty):
            placer.block_point((x, y), 3)
    # An ellipse is drawn where it reaches 2 px beyond the ring of the fix's marker; smaller
    # ones would hide under the marker (a 2-nmi ellipse is below a pixel on an ocean passage).
    px_per_nmi = float(np.diff(ax.transData.transform([(xlim[0], ylim[0]),
                                                       (xlim[0], ylim[0] + 1.0 / NMI_PER_DEG)]),
                               axis=0)[0, 1])
    ring_px = 0.5 * FIX_MARKER_PT * DPI / 72.0 + 2.0
    shown = [o is not None and p.ellipse_semi_major_nmi * px_per_nmi >= ring_px
             for p, o in zip(fixes, ells)]
    for p, x, o, show in zip(fixes, fxs, ells, shown):
        if show:
            ax.add_patch(Polygon(np.column_stack(o), closed=True, fc=ELLIPSE_FILL, ec=WARN,
                                 lw=0.8, alpha=0.4, zorder=5, gid="ellipse"))
            placer.line(*o)
        _fix_marker(ax, placer, x, p.lat_deg, WARN if p.warnings else FIX_C,
                    p.kind == "running_fix", size=FIX_MARKER_PT)
    for p, x in zip(fixes, fxs):
        placer.place(when(p.utc, "day") + (" !" if p.warnings else ""),
                     placer.around((x, p.lat_deg)), gaps=(5.0, 16.0, 30.0), leader_from=16.0,
                     color=WARN if p.warnings else FIX_C, gid="fix_label")
    for word, p, x in ([("start", track[0], tx[0])] if track else []) + \
            ([("end", track[-1], tx[-1])] if len(track) > 1 else []):
        placer.place(f"{word} {when(p.utc, 'day')}", placer.around((x, p.lat_deg)),
                     gaps=(4.0, 14.0, 28.0), color=TRACK_C, gid="track_label")

    n_run = sum(p.kind == "running_fix" for p in fixes)
    keys = (["track"] if track else []) + (["jump"] if jumps else []) + \
        (["ref"] if ref else []) + \
        (["fix"] if len(fixes) > n_run else []) + (["rfix"] if n_run else []) + \
        (["warned"] if any(p.warnings for p in fixes) else []) + (["ellipse"] if any(shown) else [])
    summary = [f"Distance run {run_nmi:.1f} nmi", "  (sum of the rhumb-line legs of the DR"
               + (";" if jumps else ")"),
               *(["   a fix's reset of the DR, dashed, not counted)"] if jumps else []),
               f"From {when(t0, 'day')} to {when(t1, 'day')} UTC",
               f"Track points {len(track)}, fixes {len(fixes) - n_run}, running fixes {n_run}"]
    hidden = [p.ellipse_semi_major_nmi for p, o, show in zip(fixes, ells, shown)
              if o is not None and not show]
    if hidden:
        summary += ["", f"Error ellipses hidden by the fix markers at this scale are not "
                        f"drawn ({len(hidden)} of {len(hidden) + sum(shown)}; largest semi-major "
                        f"axis {max(hidden):.1f} nmi): see each fix's plotting sheet"]
    if fixes:
        summary += ["", "Fixes (UTC; RF running fix):"] + [
            f"{when(p.utc, 'day')} {'RF' if p.kind == 'running_fix' else 'F '} "
            f"{format_lat(p.lat_deg)} {format_lon(p.lon_deg)}" for p in fixes]
    warned = [f"• {when(p.utc, 'day')}: {m}" for p in fixes for m in p.warnings]
    blocks = [(summary, SUMMARY_TEXT)] + \
        ([(["Warnings"] + warned, WARNINGS_TEXT)] if warned else [])
    side_panel(fig, placer.renderer, keys, blocks, {"ref": reference_label})
    _save(fig, saved, title)
    return fig
