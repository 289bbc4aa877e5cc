"""Plotting sheets and passage plots (nav/plotting.py, its layout in nav/plot_layout.py).

References:
- geographiclib (PyPI 2.x) ``Geodesic`` on the navigator's sphere (R = 10800/π nmi, f = 0): the
  zenith distance of a body is the arc from the observer to its geographical position (GP: lat =
  Dec, lon = −GHA). Every sight is synthesised with it (Ho = 90° − that arc at a known position,
  GHA and Dec from nav.almanac), and the intercept expected from an AP is the difference of the
  two zenith distances (Marcq St Hilaire: intercept = Ho − Hc = ZDc − ZDo, toward when +).
- A plotting sheet's longitude scale: one minute of longitude is cos φ nautical miles, so the
  axes aspect (latitude units per longitude unit on paper) is 1/cos φm: common practice, no source.
- Distance run = speed × time on each leg of a dead-reckoning track: common practice, no source.
- PNG and PDF signatures: the PNG specification (ISO/IEC 15948, 8 bytes 89 50 4E 47 0D 0A 1A 0A)
  and the PDF specification (ISO 32000, a file begins "%PDF-"), both from memory.
- The distance and bearing of a fix from a known position: geographiclib's geodesic on the
  navigator's sphere (over a few miles a rhumb line and the geodesic differ by far less than the
  0.01 nmi and 1° the sheet prints).
- An error ellipse is drawn on the passage plot only where it reaches 2 px beyond the ring of
  its fix's marker: our own rule for a legible plot (common practice, no source).
- A current adds its set and drift to the DR as a velocity vector (the American Practical
  Navigator, "current sailing", from memory): the invented reference tracks below.
"""

from __future__ import annotations

import math
import subprocess
import sys
from datetime import datetime, timedelta, timezone
from pathlib import Path

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from nav import CAUTION, almanac
from nav.angles import parse_lat, parse_lon
from nav.errors import NavInputError
from nav.export import COORD_DECIMALS, ExportPoint
from nav.fix import Sight, lop_at, solve_fix
from nav.reduction import assumed_position
from nav.sailing import advance_position, dr_position
from nav.units import ARCMIN_DEG, ARCSEC_DEG, EARTH_RADIUS_NMI

ARCMIN = ARCMIN_DEG
ARCSEC = ARCSEC_DEG
EXACT = 1e-6 * ARCSEC                          # what float rounding leaves of an angle
REL = 1e-12                                    # relative float rounding of a ratio
NMI = 1.0                                      # distances are carried in nautical miles
SPHERE = Geodesic(EARTH_RADIUS_NMI, 0.0)
UTC = timezone.utc
REPO = Path(__file__).resolve().parents[1]
T = datetime


def zd_deg(lat, lon, gha, dec):
    """Zenith distance of a body from (lat, lon): the arc to its GP (geographiclib)."""
    return SPHERE.Inverse(float(lat), float(lon), float(dec), float(-gha))["a12"]


def build(truth, dr, fix_utc, plan, *, course_deg=None, speed_kn=0.0, from_dr=False):
    """Sights synthesised at `truth` (retired along the course for earlier sights), their LOPs
    from the tables' APs near the DR (or from the DR), advanced to `fix_utc`, and the fix."""
    sights, lops, expected = [], [], []
    for body, utc, err_arcmin in plan:
        h = (utc - fix_utc).total_seconds() / 3600.0
        obs, drs = truth, dr
        if speed_kn:
            obs = advance_position(*truth, course_deg, speed_kn, h)
            drs = advance_position(*dr, course_deg, speed_kn, h)
        b = almanac.body_almanac(body, utc)
        ho = 90.0 - zd_deg(*obs, b.gha_deg, b.dec_deg) + err_arcmin * ARCMIN
        s = Sight(ho, float(b.gha_deg), float(b.dec_deg), utc, b.body, course_deg=course_deg,
                  speed_kn=speed_kn)
        ap = (float(drs[0]), float(drs[1])) if from_dr else \
            tuple(float(v) for v in assumed_position(float(drs[0]), float(drs[1]), s.gha_deg))
        sights.append(s)
        lops.append(lop_at(s, *ap, fix_utc=fix_utc))
        # Marcq St Hilaire from the AP the sight was reduced from (geographiclib)
        expected.append((zd_deg(*ap, s.gha_deg, s.dec_deg) - (90.0 - ho)) * 60.0)
    return dict(fix=solve_fix(sights, *dr, fix_utc), lops=lops, truth=truth, dr=dr,
                expected_intercepts=expected, speed_kn=speed_kn, errors=[p[2] for p in plan])


def cases():
    f1 = T(2026, 5, 14, 5, 40, tzinfo=UTC)
    f2 = T(2026, 6, 2, 13, 0, tzinfo=UTC)
    f3 = T(2026, 9, 21, 19, 20, tzinfo=UTC)
    f4 = T(2026, 8, 9, 7, 15, tzinfo=UTC)
    f5 = T(2026, 11, 3, 9, 50, tzinfo=UTC)
    return {
        "two LOPs": build((38.69, -27.83), (38.78, -27.62), f1,
                          [("Schedar", f1, 0.0), ("Altair", f1 - timedelta(minutes=4), 0.0)]),
        "three LOPs, two advanced": build(
            (44.21, -14.33), (44.30, -14.05), f2,
            [("Sun", T(2026, 6, 2, 9, 10, tzinfo=UTC), 0.0),
             ("Sun", T(2026, 6, 2, 11, 20, tzinfo=UTC), 0.0), ("Sun", f2, 0.0)],
            course_deg=215.0, speed_kn=6.5),
        "a flagged sight": build((47.52, -8.71), (47.45, -8.95), f3,
                                 [("Polaris", f3, 0.3), ("Alpheratz", f3, -0.5), ("Enif", f3, 9.0),
                                  ("Altair", f3, 0.2), ("Arcturus", f3, -0.6),
                                  ("Alkaid", f3, 0.4)]),
        "across 180°": build((-16.87, 179.93), (-16.76, -179.82), f4,
                             [("Rasalhague", f4, 0.0), ("Nunki", f4, 0.0),
                              ("Rigil Kentaurus", f4, 0.0), ("Spica", f4, 0.0)]),
        "southern, from the DR": build((-38.42, 160.61), (-38.33, 160.47), f5,
                                       [("Diphda", f5, 0.0), ("Achernar", f5, 0.0),
                                        ("Peacock", f5, 0.0)], from_dr=True),
    }


@pytest.fixture(scope="module")
def sheets():
    from nav.plotting import plot_fix_sheet

    out = {}
    for name, c in cases().items():
        fig = plot_fix_sheet(c["fix"], c["lops"], dr=(*c["dr"], c["fix"].utc), title=name)
        fig.canvas.draw()
        out[name] = (c, fig)
    return out


def passage_track(start_lat, start_lon, start, legs):
    """DR points every 3 h along legs (course, speed, hours), by nav.sailing.dr_position."""
    pos, t = (start_lat, start_lon), start
    track = [ExportPoint(t, *pos, "dr", "")]
    for course, speed, hours in legs:
        for _ in range(hours // 3):
            pos = tuple(float(v) for v in dr_position(*pos, course, speed, 3))
            t += timedelta(hours=3)
            track.append(ExportPoint(t, *pos, "dr", ""))
    return track


@pytest.fixture(scope="module")
def passages():
    from nav.plotting import plot_passage

    out = {}
    legs = [(230.0, 6.0, 9), (215.0, 6.5, 12), (250.0, 5.5, 12)]
    track = passage_track(45.1, -12.6, T(2026, 6, 1, 18, 0, tzinfo=UTC), legs)
    fixes = [ExportPoint(track[3].utc + timedelta(minutes=10), track[3].lat_deg - 0.05,
                         track[3].lon_deg, "fix", "", 2.0, 0.8, 40.0),
             ExportPoint(track[7].utc, track[7].lat_deg - 0.1, track[7].lon_deg + 0.07,
                         "running_fix", "", warnings=("only two LOPs: no check",))]
    out["Biscay"] = (legs, track, fixes, plot_passage(track, fixes, title="Biscay"))
    legs = [(95.0, 7.0, 12), (80.0, 7.0, 9)]
    track = passage_track(-17.2, 179.2, T(2026, 8, 8, 0, 0, tzinfo=UTC), legs)
    c = cases()["across 180°"]["fix"]
    out["across 180°"] = (legs, track, [c], plot_passage(track, [c], title="Fiji"))
    for *_, fig in out.values():
        fig.canvas.draw()
    return out


def all_texts(fig):
    """Every visible, non-empty text the figure shows: titles, footer, panel, labels, ticks, key."""
    texts = list(fig.texts)
    for ax in fig.axes:
        texts += list(ax.texts) + list(ax.get_xticklabels()) + list(ax.get_yticklabels())
    for leg in fig.legends:
        texts += list(leg.get_texts()) + [leg.get_title()]
    return [t for t in texts if t.get_visible() and t.get_text().strip()]


def by_gid(fig, gid):
    return [a for a in fig.findobj() if a.get_gid() == gid]


# ---------------------------------------------------------------- start-up stays light

@pytest.mark.parametrize("plot_module", ["nav.plot_layout", "nav.plotting"])
def test_core_and_plotting_imports_do_not_import_matplotlib(plot_module):
    # each plotting module on its own, in a fresh interpreter (nav.plotting imports the layout)
    code = ("import sys\nimport nav.fix, nav.almanac, nav.reduction\n"
            "core = sorted(m for m in sys.modules if m.split('.')[0] == 'matplotlib')\n"
            f"import {plot_module}\n"
            "lazy = sorted(m for m in sys.modules if m.split('.')[0] == 'matplotlib')\n"
            "print('MPL', core, lazy)\n")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=REPO.parent, timeout=60)
    assert proc.returncode == 0, proc.stderr
    assert "MPL [] []" in proc.stdout


# ---------------------------------------------------------------- notation

@settings(max_examples=300, deadline=None)
@given(st.integers(-90 * 60, 90 * 60), st.integers(-180 * 60, 180 * 60 - 1),
       st.integers(-3, 3))
def test_graticule_labels_round_trip_through_the_parsers(lat_arcmin, lon_arcmin, turns):
    # format ↔ parse round trip (navigator notation, common practice): whole minutes, any turn
    from nav.plot_layout import lat_tick_label, lon_tick_label

    lat_text = lat_tick_label(lat_arcmin * ARCMIN)
    assert abs(parse_lat(lat_text) - lat_arcmin * ARCMIN) < EXACT
    assert lat_text.endswith(" S" if lat_arcmin < 0 else " N")
    lon_text = lon_tick_label(lon_arcmin * ARCMIN + 360.0 * turns)
    d = (parse_lon(lon_text) - lon_arcmin * ARCMIN + 180.0) % 360.0 - 180.0
    assert abs(d) < EXACT, lon_text
    assert lon_text.count("′") == 1 and "." not in lon_text


@settings(max_examples=200, deadline=None)
@given(st.floats(1.0, 5000.0))
def test_scale_bar_length_is_a_round_number_within_the_sheet(span_nmi):
    from nav.plot_layout import nice_scale_nmi

    n = nice_scale_nmi(span_nmi)
    assert n in (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000)          # round numbers (brief)
    assert n <= max(1.0, 0.25 * span_nmi)                           # a fraction of the sheet


def test_times_are_rounded_to_the_minute():
    # HH:MM to the nearest minute of the second a screen shows (one rule, issue 7 item 11: half
    # up, common practice, no source): 29.4 s is shown 29 s and goes down; 29.5 s is shown 30 s
    # and goes up, with the date
    from nav.plotting import when

    t = T(2026, 12, 31, 23, 59, 29, 400000, tzinfo=UTC)
    assert when(t) == "23:59" and when(t, "day") == "31 Dec 23:59"
    t = T(2026, 12, 31, 23, 59, 29, 500000, tzinfo=UTC)
    assert when(t) == "00:00" and when(t, "date") == "01 Jan 2027"
    zoned = T(2026, 6, 2, 9, 10, tzinfo=timezone(timedelta(hours=-3)))
    assert when(zoned) == "12:10"                                   # shown in UTC


# ---------------------------------------------------------------- the sheets

def test_the_cases_are_what_they_claim(sheets):
    c = sheets["three LOPs, two advanced"][0]
    assert c["fix"].kind == "running fix"
    assert [lp.advanced_nmi > 0 for lp in c["lops"]] == [True, True, False]
    c = sheets["a flagged sight"][0]
    assert c["fix"].flags[2] and sum(c["fix"].flags) == 1          # Enif, the 9′ blunder
    lons = [lp.ap_lon_deg for lp in sheets["across 180°"][0]["lops"]]
    assert min(lons) < -179.0 and max(lons) > 179.0                 # APs on both sides of 180°
    assert sheets["southern, from the DR"][0]["fix"].lat_deg < 0


@pytest.mark.parametrize("name", list(cases()))
def test_sheet_shows_every_lop_with_body_time_and_intercept(sheets, name):
    c, fig = sheets[name]
    for i, (lp, flagged) in enumerate(zip(c["lops"], c["fix"].flags), 1):
        line, = by_gid(fig, f"lop_{i}")
        label, = by_gid(fig, f"lop_label_{i}")
        hhmm = (lp.utc + timedelta(seconds=30)).strftime("%H:%M")
        assert label.get_text().startswith(f"{i} {lp.body} {hhmm}")
        assert ("flagged" in label.get_text()) == flagged
        assert (line.get_color().lower() == "#d55e00") == flagged         # the warning colour
        assert (line.get_linestyle() != "-") == (lp.advanced_nmi > 0)
        if lp.advanced_nmi > 0:                     # distance = speed × time (common practice)
            run = c["speed_kn"] * (lp.fix_utc - lp.utc).total_seconds() / 3600.0
            assert f"adv. {run:.1f} nmi" in label.get_text()
        # intercept, toward/away, from geographiclib's zenith distances (Marcq St Hilaire)
        text, = [t.get_text() for t in by_gid(fig, f"intercept_label_{i}")]
        value, side = text.split()
        expect = c["expected_intercepts"][i - 1]
        assert abs(float(value) - abs(expect)) <= 0.05 * NMI + 1e-6 * NMI
        assert side == ("T" if expect > 0 else "A") or abs(expect) < 0.05 * NMI


@pytest.mark.parametrize("name", ["two LOPs", "three LOPs, two advanced", "across 180°",
                                  "southern, from the DR"])
def test_fix_label_reads_back_as_the_true_position(sheets, name):
    # noise-free sights: the fix is the position they were synthesised at (geographiclib)
    c, fig = sheets[name]
    label, = by_gid(fig, "fix_label")
    head, pos = label.get_text().split("\n")
    assert head.startswith("Running fix" if c["fix"].kind == "running fix" else "Fix")
    lat_text, lon_text = pos.split("  ")
    dlon = (parse_lon(lon_text) - c["truth"][1] + 180.0) % 360.0 - 180.0
    assert abs(parse_lat(lat_text) - c["truth"][0]) <= 0.06 * ARCMIN      # 0.05′ rounding
    assert abs(dlon) <= 0.06 * ARCMIN / math.cos(math.radians(c["truth"][0]))
    dr, = by_gid(fig, "dr_label")
    assert dr.get_text() == "DR " + (c["fix"].utc + timedelta(seconds=30)).strftime("%H:%M")


@pytest.mark.parametrize("name", list(cases()))
def test_sheet_aspect_is_the_local_longitude_scale(sheets, name):
    # 1′ of longitude is cos φm nmi: aspect 1/cos φm (plotting-sheet scale, common practice)
    _, fig = sheets[name]
    ax = fig.axes[0]
    mid = 0.5 * sum(ax.get_ylim())
    assert ax.get_aspect() == pytest.approx(1.0 / math.cos(math.radians(mid)), rel=REL)
    c = sheets[name][0]
    x0, x1 = ax.get_xlim()
    for lat, lon in [c["truth"], c["dr"]] + [(lp.ap_lat_deg, lp.ap_lon_deg) for lp in c["lops"]]:
        x = x0 + (lon - x0) % 360.0                     # every point on the sheet, unwrapped
        assert x0 < x < x1 and ax.get_ylim()[0] < lat < ax.get_ylim()[1]
    assert x1 - x0 < 300 * ARCMIN                       # across 180° the sheet stays local


def check_graticule(fig):
    ax = fig.axes[0]
    xt, yt = ax.get_xticks(), ax.get_yticks()
    assert len(xt) >= 2 and len(yt) >= 2
    for v, t in zip(yt, ax.get_yticklabels()):
        assert abs(parse_lat(t.get_text()) - v) < EXACT, t.get_text()
        assert abs(v - round(v * 60.0) * ARCMIN) < EXACT              # whole minutes
    for v, t in zip(xt, ax.get_xticklabels()):
        d = (parse_lon(t.get_text()) - v + 180.0) % 360.0 - 180.0
        assert abs(d) < EXACT, t.get_text()
        assert abs(v - round(v * 60.0) * ARCMIN) < EXACT
    for ticks in (xt, yt):                                           # even intervals
        steps = np.diff(ticks)
        assert np.all(np.abs(steps - steps[0]) < EXACT)


def check_scale_bar(fig):
    ax = fig.axes[0]
    bar, = by_gid(fig, "scale_bar")
    label, = by_gid(fig, "scale_bar_label")
    value, unit = label.get_text().split()
    assert unit == "nmi" and float(value) in (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000)
    xs, ys = bar.get_xdata(), bar.get_ydata()
    assert ys[0] == ys[1]
    mid = 0.5 * sum(ax.get_ylim())      # sheet scale: 1′ of longitude = cos φm nmi
    length_nmi = (xs[1] - xs[0]) * 60.0 * math.cos(math.radians(mid))
    assert length_nmi == pytest.approx(float(value) * NMI, rel=REL)


def check_texts(fig):
    texts = all_texts(fig)
    joined = " ".join(" ".join(t.get_text().split()) for t in texts)
    assert CAUTION in joined
    r = fig.canvas.get_renderer()
    boxes = [(t.get_text(), t.get_window_extent(r)) for t in texts]
    fw, fh = fig.bbox.width, fig.bbox.height
    for text, b in boxes:                                        # nothing cut off
        assert b.x0 >= 0 and b.y0 >= 0 and b.x1 <= fw and b.y1 <= fh, text
    for i, (ta, a) in enumerate(boxes):                          # no two labels overlap
        for tb, b in boxes[i + 1:]:
            w = min(a.x1, b.x1) - max(a.x0, b.x0)
            h = min(a.y1, b.y1) - max(a.y0, b.y0)
            assert w <= 0 or h <= 0, (ta, tb)


@pytest.mark.parametrize("name", list(cases()))
def test_sheet_graticule_scale_bar_caution_and_no_overlaps(sheets, name):
    _, fig = sheets[name]
    check_graticule(fig)
    check_scale_bar(fig)
    check_texts(fig)


def test_sheet_hemispheres_in_the_graticule(sheets):
    ax = sheets["southern, from the DR"][1].axes[0]
    assert all(t.get_text().endswith(" S") for t in ax.get_yticklabels())
    assert all(t.get_text().endswith(" E") for t in ax.get_xticklabels())
    labels = [t.get_text() for t in sheets["across 180°"][1].axes[0].get_xticklabels()]
    assert any(s.endswith(" E") for s in labels) and any(s.endswith(" W") for s in labels)


def test_warnings_are_shown_in_a_box(sheets):
    for c, fig in sheets.values():
        shown = " ".join(" ".join(t.get_text().split()) for t in by_gid(fig, "warnings"))
        for w in c["fix"].warnings:
            assert " ".join(w.split()) in shown
    assert any(c["fix"].warnings for c, _ in sheets.values())


# ---------------------------------------------------------------- files

@pytest.mark.parametrize("ext, signature", [(".png", b"\x89PNG\r\n\x1a\n"), (".pdf", b"%PDF-"),
                                            (".PNG", b"\x89PNG\r\n\x1a\n")])
def test_sheet_and_passage_are_written_by_extension(tmp_path, ext, signature):
    from nav.plotting import plot_fix_sheet, plot_passage

    c = cases()["two LOPs"]
    p = tmp_path / f"sheet{ext}"
    plot_fix_sheet(c["fix"], c["lops"], path=p)
    q = tmp_path / f"passage{ext}"
    plot_passage([ExportPoint(c["fix"].utc - timedelta(hours=2), *c["dr"], "dr", "")],
                 [c["fix"]], path=str(q))
    for f in (p, q):
        data = f.read_bytes()
        assert len(data) > 1000 and data.startswith(signature)


@pytest.mark.parametrize("name", ["sheet.jpg", "sheet", "sheet.png.txt"])
def test_other_extensions_are_refused_naming_the_plot(tmp_path, name):
    from nav.plotting import plot_fix_sheet, plot_passage

    c = cases()["two LOPs"]
    with pytest.raises(NavInputError) as exc:
        plot_fix_sheet(c["fix"], c["lops"], path=tmp_path / name)
    assert exc.value.field == "plot"
    with pytest.raises(NavInputError) as exc:
        plot_passage([], [c["fix"]], path=tmp_path / name)
    assert exc.value.field == "plot"
    assert list(tmp_path.iterdir()) == []


def test_bad_inputs_name_their_field(tmp_path):
    from nav.plotting import plot_fix_sheet, plot_passage

    c = cases()["two LOPs"]
    for kwargs, field in [(dict(fix="41N", lops=c["lops"]), "fix"),
                          (dict(fix=c["fix"], lops=[]), "lops"),
                          (dict(fix=c["fix"], lops=c["lops"], dr=(95.0, 0.0)), "dr.lat_deg"),
                          (dict(fix=c["fix"], lops=c["lops"],
                                path=tmp_path / "missing" / "s.png"), "plot")]:
        with pytest.raises(NavInputError) as exc:
            plot_fix_sheet(**kwargs)
        assert exc.value.field == field
    with pytest.raises(NavInputError) as exc:
        plot_passage([], [])
    assert exc.value.field == "track"


# ---------------------------------------------------------------- the passage plot

@pytest.mark.parametrize("name", ["Biscay", "across 180°"])
def test_passage_distance_markers_labels_and_layout(passages, name):
    legs, track, fixes, fig = passages[name]
    run = sum(speed * hours for _, speed, hours in legs)       # speed × time (common practice)
    summary = " ".join(t.get_text() for t in by_gid(fig, "summary"))
    shown = float(summary.split("Distance run ")[1].split(" nmi")[0])
    assert abs(shown - run) <= 0.05 * NMI + 1e-6 * NMI
    line, = by_gid(fig, "track")
    xs = np.asarray(line.get_xdata())
    assert len(xs) == len(track)
    east = np.diff(xs)
    assert np.all(np.abs(east) < 60 * ARCMIN)       # 3-h legs: continuous, across 180° too
    labels = sorted(t.get_text() for t in by_gid(fig, "fix_label"))
    expect = sorted((f.utc + timedelta(seconds=30)).strftime("%d %b %H:%M")
                    + (" !" if f.warnings else "") for f in fixes)
    assert labels == expect
    check_graticule(fig)
    check_scale_bar(fig)
    check_texts(fig)
    ax = fig.axes[0]
    mid = 0.5 * sum(ax.get_ylim())
    assert ax.get_aspect() == pytest.approx(1.0 / math.cos(math.radians(mid)), rel=REL)


def test_passage_markers_differ_for_fix_and_running_fix(passages):
    *_, fig = passages["Biscay"]
    key = {t.get_text(): h for t, h in zip(fig.legends[0].get_texts(),
                                          fig.legends[0].legend_handles)}
    assert key["fix"].get_marker() != key["running fix"].get_marker()
    assert "DR track" in key


# ---------------------------------------------------------------- what is known: a true position

def marker_px(fig, line):
    """Display position of a one-point marker line."""
    return fig.axes[0].transData.transform((line.get_xdata()[0], line.get_ydata()[0]))


def key_handles(fig):
    return {t.get_text(): h for t, h in zip(fig.legends[0].get_texts(),
                                            fig.legends[0].legend_handles)}


@pytest.fixture(scope="module")
def known_sheets():
    from nav.plotting import plot_fix_sheet

    out = {}
    for name, c in cases().items():
        fig = plot_fix_sheet(c["fix"], c["lops"], dr=(*c["dr"], c["fix"].utc), known=c["truth"],
                             title=name)
        fig.canvas.draw()
        out[name] = (c, c["truth"], fig)
    c = cases()["a flagged sight"]           # a known position 9′ north of the truth, 6′ west
    far = ExportPoint(c["fix"].utc, c["truth"][0] + 9 * ARCMIN, c["truth"][1] - 6 * ARCMIN,
                      "gps", "")
    fig = plot_fix_sheet(c["fix"], c["lops"], dr=c["dr"], known=far,
                         known_label="position by GPS (invented)", title="far")
    fig.canvas.draw()
    out["far"] = (c, (far.lat_deg, far.lon_deg), fig)
    return out


@pytest.mark.parametrize("name", list(cases()) + ["far"])
def test_sheet_marks_the_known_position_apart_from_everything_else(known_sheets, name):
    c, (lat, lon), fig = known_sheets[name]
    ax = fig.axes[0]
    star, = by_gid(fig, "known")
    assert star.get_marker() == "*"
    x, y = star.get_xdata()[0], star.get_ydata()[0]
    assert y == pytest.approx(lat, abs=EXACT)
    assert (x - lon + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=EXACT)   # unwrapped
    assert ax.get_xlim()[0] < x < ax.get_xlim()[1] and ax.get_ylim()[0] < y < ax.get_ylim()[1]
    label = "position by GPS (invented)" if name == "far" else "known position"
    key = key_handles(fig)
    assert key[label].get_marker() == "*"
    others = [key[k] for k in ("DR", "AP (assumed position)",
                               "Running fix" if c["fix"].kind == "running fix" else "Fix")]
    for h in others:                                # no other mark of the sheet looks like it
        assert h.get_marker() != "*"
        assert h.get_markerfacecolor() != key[label].get_markerfacecolor()
    check_texts(fig)                                # labels still never overlap
    px, py = marker_px(fig, star)
    r = fig.canvas.get_renderer()
    for t in all_texts(fig):                        # and none covers the star
        b = t.get_window_extent(r)
        assert not (b.x0 - 6 < px < b.x1 + 6 and b.y0 - 6 < py < b.y1 + 6), t.get_text()
    for leader in by_gid(fig, "leader"):     # nor does a label's leader cross it, unless the
        a, b = ax.transData.transform(np.column_stack([leader.get_xdata(), leader.get_ydata()]))
        if np.hypot(*((px, py) - a)) < 12.0:     # star sits on the mark the leader starts at
            continue
        t = np.clip(np.dot((px, py) - a, b - a) / max(np.dot(b - a, b - a), 1e-12), 0.0, 1.0)
        assert np.hypot(*((px, py) - (a + t * (b - a)))) > 6.0


@pytest.mark.parametrize("name", list(cases()) + ["far"])
def test_sheet_summary_gives_the_fix_against_the_known_position(known_sheets, name):
    c, (lat, lon), fig = known_sheets[name]
    f = c["fix"]
    text = " ".join(t.get_text() for t in by_gid(fig, "summary"))
    lines = text.split("\n")
    head = next(i for i, s in enumerate(lines) if s.endswith(":") and "position" in s)
    lat_text, lon_text = lines[head + 1].split("   ")
    assert abs(parse_lat(lat_text.strip()) - lat) <= 0.051 * ARCMIN           # 0.1′ printed
    dlon = (parse_lon(lon_text.strip()) - lon + 180.0) % 360.0 - 180.0
    assert abs(dlon) <= 0.051 * ARCMIN
    g = SPHERE.Inverse(lat, lon, f.lat_deg, f.lon_deg)            # geographiclib, from memory
    assert lines[head + 2].strip().startswith(f"the {f.kind} lies ")
    words = lines[head + 2].split()
    dist = float(words[words.index("nmi") - 1])
    assert abs(dist - g["s12"]) <= 0.005 * NMI + 1e-4 * NMI                   # 2 decimals
    if g["s12"] > 0.05 * NMI:
        brg = float(words[words.index("nmi") + 1].rstrip("°"))
        assert abs((brg - g["azi1"] % 360.0 + 180.0) % 360.0 - 180.0) <= 1.0  # whole degrees
    if name in ("two LOPs", "across 180°"):          # noise-free sights: the fix is the truth
        assert dist == 0.0


def test_fix_label_keeps_off_the_direction_of_a_known_position_nearby():
    # the fix label and its leader must not head for the star, or they read as its label
    from nav.plot_layout import Placer, Sheet, new_chart
    from nav.plotting import _away_from

    sheet = Sheet(-8.7, math.cos(math.radians(47.5)))
    fig, ax, _ = new_chart(sheet, (-8.8, -8.6), (47.45, 47.55), "t", "s")
    fix = (-8.7, 47.5)
    cands = Placer.around(fix)
    px, py = ax.transData.transform(fix)

    def mark(dist_px, bearing_deg):          # a point at a screen angle (0 = east, 90 = north)
        a = math.radians(bearing_deg)
        return tuple(ax.transData.inverted().transform((px + dist_px * math.cos(a),
                                                        py + dist_px * math.sin(a))))
    kept = _away_from(ax, cands, mark(20.0, 135.0))              # north-west, close
    assert [d for _, d in kept] == [d for _, d in cands if d != (-1, 1)]
    kept = _away_from(ax, cands, mark(20.0, 22.5))               # between east and north-east
    assert {d for _, d in kept} == {d for _, d in cands} - {(1, 0), (1, 1)}
    assert _away_from(ax, cands, mark(400.0, 135.0)) == cands    # far off: no matter
    assert _away_from(ax, cands, None) == cands


def test_known_position_bad_inputs_name_their_field():
    from nav.plotting import plot_fix_sheet

    c = cases()["two LOPs"]
    for known, field in [((95.0, 0.0), "known.lat_deg"), ((1.0, 2.0, c["fix"].utc, 4), "known"),
                         ({"lat_deg": 1.0, "lon_deg": 2.0, "utc": c["fix"].utc, "colour": "red"},
                          "known")]:
        with pytest.raises(NavInputError) as exc:
            plot_fix_sheet(c["fix"], c["lops"], known=known)
        assert exc.value.field == field


def test_plotting_holds_no_demo_wording():
    # generic code: what a caller's data is called comes from the caller (the brief)
    for name in ("plotting.py", "plot_layout.py"):
        assert "demo" not in (REPO / "nav" / name).read_text(encoding="utf-8").lower()


# ---------------------------------------------------------------- a reference track

def set_by_current(track, set_deg, drift_kn):
    """Each DR point moved by the current since the first (set and drift, invented)."""
    t0 = track[0].utc
    return [ExportPoint(p.utc, *(float(v) for v in dr_position(
        p.lat_deg, p.lon_deg, set_deg, drift_kn, (p.utc - t0).total_seconds() / 3600.0)),
        "other", "") for p in track]


@pytest.fixture(scope="module")
def referenced(passages):
    from nav.plotting import plot_passage

    out = {}
    for name, (legs, track, fixes, _) in passages.items():
        ref = set_by_current(track, 160.0, 0.6)
        fig = plot_passage(track, fixes, reference_track=ref,
                           reference_label="true track (invented)", title=name)
        fig.canvas.draw()
        out[name] = (track, ref, fig)
    return out


@pytest.mark.parametrize("name", ["Biscay", "across 180°"])
def test_passage_draws_the_reference_track_in_its_own_style(referenced, name):
    track, ref, fig = referenced[name]
    ax = fig.axes[0]
    line, = by_gid(fig, "reference_track")
    dr_line, = by_gid(fig, "track")
    xs, ys = np.asarray(line.get_xdata()), np.asarray(line.get_ydata())
    assert len(xs) == len(ref)
    assert np.allclose(ys, [p.lat_deg for p in ref], atol=EXACT, rtol=0.0)
    d = (xs - np.array([p.lon_deg for p in ref]) + 180.0) % 360.0 - 180.0
    assert np.all(np.abs(d) <= 0.5 * 10.0 ** -COORD_DECIMALS + EXACT)   # points keep 6 decimals
    assert np.all(np.abs(np.diff(xs)) < 60 * ARCMIN)       # continuous, across 180° too
    lo, hi = ax.get_xlim()
    assert lo < xs.min() and xs.max() < hi
    assert ax.get_ylim()[0] < ys.min() and ys.max() < ax.get_ylim()[1]
    assert line.get_linestyle() != "-" and line.get_marker() in ("None", "", None)
    assert line.get_linewidth() < dr_line.get_linewidth()
    assert line.get_color() != dr_line.get_color()
    key = key_handles(fig)
    assert key["true track (invented)"].get_linestyle() == line.get_linestyle()
    assert "DR track" in key
    check_texts(fig)


# ---------------------------------------------------------------- ellipses at passage scale

def ring_px(fig):
    """Radius (px) of the passage plot's fix markers: the open circles and triangles."""
    sizes = {ln.get_markersize() for ln in fig.axes[0].get_lines()
             if ln.get_marker() in ("o", "^") and ln.get_markerfacecolor() == "none"}
    assert len(sizes) == 1
    return 0.5 * sizes.pop() * fig.dpi / 72.0


def px_per_nmi(fig):
    ax = fig.axes[0]
    y0 = ax.get_ylim()[0]
    a, b = ax.transData.transform([(ax.get_xlim()[0], y0), (ax.get_xlim()[0], y0 + ARCMIN)])
    return b[1] - a[1]                                 # 1′ of latitude = 1 nmi


def test_passage_leaves_out_ellipses_hidden_under_their_markers(passages):
    legs, track, fixes, fig = passages["Biscay"]
    a_nmi = fixes[0].ellipse_semi_major_nmi
    assert a_nmi * px_per_nmi(fig) < ring_px(fig) + 2.0          # under the marker's ring
    assert by_gid(fig, "ellipse") == []
    assert not any("ellipse" in t for t in key_handles(fig))
    summary = " ".join(" ".join(t.get_text().split()) for t in by_gid(fig, "summary"))
    assert f"not drawn (1 of 1; largest semi-major axis {a_nmi:.1f} nmi)" in summary


def test_passage_draws_an_ellipse_that_shows_and_names_it_in_the_key():
    from nav.plotting import plot_passage

    start = T(2026, 6, 3, 6, 0, tzinfo=UTC)          # a short run: 6 nmi in 2 h (invented)
    track = passage_track(44.0, -9.0, start, [(90.0, 3.0, 6)])
    fix = ExportPoint(track[1].utc, track[1].lat_deg - 0.01, track[1].lon_deg, "fix", "",
                      2.0, 0.8, 40.0)
    fig = plot_passage(track, [fix])
    fig.canvas.draw()
    patch, = by_gid(fig, "ellipse")
    assert 2.0 * px_per_nmi(fig) >= ring_px(fig) + 2.0
    ax = fig.axes[0]
    centre = ax.transData.transform((fix.lon_deg, fix.lat_deg))
    outline = ax.transData.transform(patch.get_xy())
    assert np.max(np.hypot(*(outline - centre).T)) > ring_px(fig) + 2.0   # it shows
    assert "error ellipse" in key_handles(fig)
    summary = " ".join(t.get_text() for t in by_gid(fig, "summary"))
    assert "not drawn" not in summary
    check_texts(fig)


def test_passage_distance_counts_the_dr_legs_not_a_fix_reset():
    # Invented scenario: the sloop Grey Petrel leaves 36°00′ N 015°00′ W at 00:00 UTC steering
    # 000° at 6 kn; at 02:00 a fix puts her at 36°12′ N 015°05′ W, 5′ of longitude west of her DR
    # (36°12′ N 015°00′ W). Sailed: two hours at 6 kn, 12 nmi due north (common practice: 1′
    # of latitude is 1 nmi along a meridian). The 4 nmi step from the DR to the fix is a reset
    # of the DR, not distance run, and is drawn dashed.
    from nav.plotting import passage_distance_nmi, plot_passage

    t0 = T(2026, 5, 3, 0, 0, tzinfo=UTC)
    track = [ExportPoint(t0, 36.0, -15.0, "dr", ""),
             ExportPoint(t0 + timedelta(hours=1), 36.1, -15.0, "dr", ""),
             ExportPoint(t0 + timedelta(hours=2), 36.2, -15.0 - 5 * ARCMIN, "fix", "")]
    resets = [ExportPoint(t0 + timedelta(hours=2), 36.2, -15.0, "dr", "")]
    tol_nmi = 0.01 * NMI              # rhumb lines on the sphere vs the meridian: far closer
    assert abs(passage_distance_nmi(track, resets) - 12.0) < tol_nmi
    # without the reset the last leg runs straight to the fix: 6 nmi + about 7.2 nmi
    assert passage_distance_nmi(track) > 12.0 + 1.0
    fig = plot_passage(track, [], resets=resets, title="Grey Petrel")
    jumps = by_gid(fig, "track_jump")
    assert len(jumps) == 1
    (x0, x1), (y0, y1) = jumps[0].get_xdata(), jumps[0].get_ydata()
    coord = 10.0 ** -COORD_DECIMALS              # points are kept to 6 decimals (nav.export)
    assert abs(y0 - 36.2) < coord and abs(y1 - 36.2) < coord
    assert abs((x0 - x1) - 5 * ARCMIN) < coord
    assert jumps[0].get_linestyle() == "--"                  # dashed, unlike the sailed track
    sailed = by_gid(fig, "track")
    assert all(abs(max(s.get_xdata()) - min(s.get_xdata())) < EXACT for s in sailed)
    import matplotlib.pyplot as plt

    plt.close(fig)
