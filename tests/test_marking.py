"""`nav mark` on exercises made by `nav exercise`: planted slips, honest sheets, two slips, a class.

The exercises are invented (seeded) scenarios of the invented training ketch *Skua*; the planted
sheets are worked by nav with one slip each, every later figure carried honestly from it. What a
slip is, and which step of which chain it first spoils, is the trade's own account of the working
(common practice, no source): an index correction of the wrong sign spoils the index correction;
zone time taken for UTC spoils the time; a Z turned into Zn by the wrong rule spoils Zn; and so on.
"""

from __future__ import annotations

import csv
import io
import json

import pytest

from nav.cli import main
from nav.marking.classwork import mark_class
from nav.marking.diagnose import mark_sight
from nav.marking.exercise import (ExerciseSpec, exercise_csv, key_sheets, make_exercise,
                                  plantable_codes, planted_sheets)
from nav.marking.reference import SLIPS, work_sheet
from nav.marking.sheet import parse_sheets, sheets_csv
from nav.sightfile import parse_sight_csv

# Where each slip first shows: (chain, step) — the trade's order of working (common practice).
FIRST_SHOWS = {
    "ie_sign": ("altitude", "index_corr"),
    "dip_feet_as_metres": ("altitude", "dip"),
    "lha_east_west": ("almanac", "ap_lon"),
    "dec_name": ("almanac", "dec"),
    "zone_not_applied": ("almanac", "utc"),
    "sha_subtracted": ("almanac", "sha"),
    "intercept_toward_away": ("reduction", "t_a"),
    "zn_rule": ("reduction", "zn"),
    "sd_limb": ("altitude", "sd"),
    "watch_error_sign": ("almanac", "utc"),
    "wrong_hour": ("almanac", "gha"),
    "d_sign": ("almanac", "dec"),
    "date_wrong": ("almanac", "utc"),
}
EXERCISES = {"stars": ExerciseSpec(seed=3, kind="stars"), "moon": ExerciseSpec(seed=7, kind="moon"),
             "sun-run": ExerciseSpec(seed=7, kind="sun-run")}


def _rows(spec):
    sf = parse_sight_csv(exercise_csv(make_exercise(spec)))
    assert not sf.errors
    return sf.rows


@pytest.fixture(scope="module")
def exercises():
    return {name: _rows(spec) for name, spec in EXERCISES.items()}


def _through_csv(figs):
    """Sheets go through the CSV contract, as a class's file would."""
    return parse_sheets(sheets_csv(figs))


def test_the_exercises_plant_every_slip_code(exercises):
    codes = set()
    for rows in exercises.values():
        codes |= set(plantable_codes(rows))
    assert codes == set(SLIPS) == set(FIRST_SHOWS)


@pytest.mark.parametrize("name", list(EXERCISES))
def test_every_planted_slip_is_the_first_wrong_step_of_its_chain(exercises, name):
    rows = exercises[name]
    codes = plantable_codes(rows)
    sheets = _through_csv(planted_sheets(rows, codes, exercise_name=name))
    cm = mark_class(rows, sheets)
    by_student = {st.student: st for st in cm.students}
    for code in codes:
        st = by_student[f"planted {code}"]
        assert st.verdict == "mistaken", code
        wrong = [m for m in st.sights if any(m.first_wrong.values())]
        assert len(wrong) == 1, (code, [m.first_wrong for m in st.sights])
        m = wrong[0]
        chain, step = FIRST_SHOWS[code]
        assert m.first_wrong[chain] == step, (code, m.first_wrong)
        assert [s.code for s in m.slips if s.chain == chain][0] == code, (code, m.slips)
        # charged once: the other chains hold no wrong step of their own
        assert all(v is None for c, v in m.first_wrong.items() if c != chain), (code, m.first_wrong)
        assert m.lop_effect_nmi is not None
        assert cm.slips[code]["students"] == [f"planted {code}"]


def test_a_correct_sheet_with_honest_table_rounding_is_all_right(exercises):
    for name, rows in exercises.items():
        tables, exact = key_sheets(rows, exercise_name=name)
        # the exact key written to 0.1′ per figure: sums of rounded figures differ from rounded
        # sums by a tenth here and there, as an honest sheet worked from another printing would
        cm = mark_class(rows, _through_csv(tables + exact))
        for st in cm.students:
            assert st.verdict == "correct", (name, st.student, [
                (m.sight, f.name, f.difference) for m in st.sights for f in m.figures
                if f.status == "wrong"])
            assert not any(m.slips for m in st.sights)
        assert "key (tables)" in cm.fully_right


def _nudged(fig: dict, **deltas_arcmin) -> dict:
    out = dict(fig)
    for k, d in deltas_arcmin.items():
        out[k] = out[k] + d / 60.0 if k in ("ha", "ho", "hc") else out[k] + d
    return out


def test_rounding_a_tenth_the_other_way_is_not_a_mistake(exercises):
    rows = exercises["sun-run"]
    fig = work_sheet(rows[0]) | {"student": "Ilse"}
    # dip and main correction each a tenth off (a different table's rounding), carried into Ha/Ho
    honest = _nudged(fig, dip=-0.1, ha=-0.1, main_corr=+0.1, ho=0.0)
    m = mark_sight(_through_csv([honest])[0], rows[0])
    assert not m.slips and all(f.status == "right" for f in m.figures)


def test_two_independent_slips_are_both_named(exercises):
    rows = exercises["moon"]
    fig = work_sheet(rows[0], slips={"ie_sign", "zn_rule"}) | {"student": "Tamsin"}
    m = mark_sight(_through_csv([fig])[0], rows[0])
    assert m.first_wrong == {"almanac": None, "altitude": "index_corr", "reduction": "zn"}
    assert m.mistakes == ["ie_sign", "zn_rule"]
    status = {f.name: f.status for f in m.figures}
    assert status["ho"] == "carried" and status["intercept"] == "carried"   # method credit


def test_the_same_offset_on_every_sight_points_at_ie_or_dip(exercises):
    rows = exercises["stars"]
    figs = [work_sheet(r, slips={"dip_feet_as_metres"}) | {"student": "Oskar"} for r in rows]
    cm = mark_class(rows, _through_csv(figs))
    notes = cm.students[0].notes
    assert any("index error or the dip" in n for n in notes), notes


def test_an_arithmetic_slip_is_named_and_blank_steps_are_blank(exercises):
    rows = exercises["sun-run"]
    fig = work_sheet(rows[0]) | {"student": "Pieter"}
    fig["ha"] += 1.0 / 60.0           # Hs + IC + dip added wrong by 1′, then carried
    fig["ho"] += 1.0 / 60.0
    fig["intercept"] = None
    fig["t_a"] = None
    m = mark_sight(_through_csv([fig])[0], rows[0])
    assert m.first_wrong["altitude"] == "ha" and m.mistakes == ["arithmetic"]
    status = {f.name: f.status for f in m.figures}
    assert status["ho"] == "carried" and status["intercept"] == "blank"


def _write(path, text):
    path.write_text(text, encoding="utf-8")
    return str(path)


def test_nav_exercise_and_nav_mark_end_to_end(tmp_path, capsys):
    out = tmp_path / "ex"
    assert main(["exercise", "--seed", "7", "--kind", "moon", "--mistakes", "ie_sign,sd_limb",
                 "--out", str(out)]) == 0
    capsys.readouterr()
    for name in ("exercise.csv", "key_tables.csv", "key_exact.csv", "truth.csv", "planted.csv"):
        assert (out / name).stat().st_size > 0
    planted = (out / "planted.csv").read_text()
    key = (out / "key_tables.csv").read_text()
    sheets = _write(tmp_path / "class.csv", key + "".join(planted.splitlines(True)[1:]))
    # the students' fixes: the key plots the reference fix of its own lines; one student is 5′ off
    from nav.marking.fixes import reference_fix
    rows = parse_sight_csv((out / "exercise.csv").read_text()).rows
    refs = {r.sight_id: work_sheet(r) for r in rows}
    lat, lon = reference_fix([r.sight_id for r in rows], {r.sight_id: r for r in rows}, refs)
    fixes = _write(tmp_path / "fixes.csv", "student,exercise,fix,zt,sights,lat,lon,note\n"
                   f"key (tables),moon-7,A,,1 2,{lat:.5f},{lon:.5f},\n"
                   f"planted sd_limb,moon-7,A,,1 2,{lat + 5 / 60:.5f},{lon:.5f},\n")
    marked = tmp_path / "marked"
    code = main(["mark", str(out / "exercise.csv"), sheets, "--fixes", fixes, "--json",
                 "--out", str(marked)])
    doc = json.loads(capsys.readouterr().out)
    assert code == 0
    students = {s["student"]: s for s in doc["students"]}
    assert set(students) == {"key (tables)", "planted ie_sign", "planted sd_limb"}
    key_doc = students["key (tables)"]
    assert key_doc["verdict"] == "correct" and key_doc["fixes"][0]["verdict"] == "right"
    assert students["planted sd_limb"]["fixes"][0]["verdict"] == "wrong"
    ie = students["planted ie_sign"]
    assert ie["verdict"] == "mistaken"
    s0 = next(s for s in ie["sights"] if s["mistakes"])
    assert set(s0) >= {"sight", "first_wrong", "mistakes", "steps"}
    assert s0["first_wrong"] == {"almanac": None, "altitude": "index_corr", "reduction": None}
    assert {"figure", "status", "value", "expected"} <= set(s0["steps"][0])
    assert set(doc["class"]) >= {"slips", "share_correct", "fully_right", "unexplained"}
    assert doc["class"]["fully_right"] == ["key (tables)"]
    assert sorted(doc["class"]["slips"]) == ["ie_sign", "sd_limb"]
    pdfs = sorted(p.name for p in marked.glob("*.pdf"))
    assert len(pdfs) == 3 and all((marked / p).read_bytes()[:5] == b"%PDF-" for p in pdfs)
    summary = list(csv.DictReader(io.StringIO((marked / "class_summary.csv").read_text())))
    assert {r["item"] for r in summary if r["section"] == "slip"} == {"ie_sign", "sd_limb"}
    # text on screen names the slip in a sentence, with the caution
    assert main(["mark", str(out / "exercise.csv"), sheets]) == 0
    text = capsys.readouterr().out
    assert "index correction applied with the wrong sign" in text and "CAUTION" in text


def test_a_bad_sheet_is_refused_with_its_row_and_field(tmp_path, capsys):
    out = tmp_path / "ex"
    assert main(["exercise", "--seed", "7", "--kind", "noon", "--out", str(out)]) == 0
    capsys.readouterr()
    bad = _write(tmp_path / "bad.csv", "student,sight,hc\nAna,1,34 71.0\n")
    assert main(["mark", str(out / "exercise.csv"), bad]) == 2
    err = capsys.readouterr().err
    assert "row 1" in err and "field 'hc'" in err and "Traceback" not in err
    unknown = _write(tmp_path / "unknown.csv", "student,sight,hcc\nAna,1,34 01.0\n")
    assert main(["mark", str(out / "exercise.csv"), unknown]) == 2
    assert "hcc" in capsys.readouterr().err


def test_a_sheet_worked_from_the_dr_is_marked_against_the_dr(exercises):
    rows = exercises["sun-run"]
    fig = work_sheet(rows[0], method="dr") | {"student": "Mei"}
    # method dr: a-Lat and a-Lon are the DR's own (common practice, no source)
    from dataclasses import replace
    row = replace(rows[0], method="dr")
    m = mark_sight(_through_csv([fig])[0], row)
    assert not m.slips, [(f.name, f.status, f.difference) for f in m.figures if f.status != "right"]
