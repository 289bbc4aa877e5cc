"""A class file from strangers: `nav mark` answers every sheet or refuses it with one line.

Generated sheets (hypothesis): the answer key of an invented exercise with cells blanked,
swapped between columns, or replaced by text a hurried student might write. Every run must exit
0 (marked) or 2 (refused, naming the row and field); never a traceback (common practice: a file
from someone else is data only).
"""

from __future__ import annotations

import csv
import io

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from nav.cli import main
from nav.marking.exercise import ExerciseSpec, exercise_csv, key_sheets, make_exercise
from nav.marking.sheet import SHEET_COLUMNS, sheets_csv
from nav.sightfile import parse_sight_csv

WORDS = ["", "12", "-3.1", "+2.4", "34 12.3", "200 00.0", "20 30.1 N", "151 26.1 W", "S 134.7 E",
         "T", "A", "2.4 off", "10 ft", "17 s slow", "+10", "2026-03-20", "07:41:05", "99 99",
         "abc", "N 190 E", "360 00.0", "0", "−1.5", "=1+1", "25:00:00", "1e3"]


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    d = tmp_path_factory.mktemp("fuzz")
    ex = make_exercise(ExerciseSpec(seed=7, kind="moon"))
    (d / "exercise.csv").write_text(exercise_csv(ex))
    rows = parse_sight_csv(exercise_csv(ex)).rows
    tables, _ = key_sheets(rows)
    key = list(csv.DictReader(io.StringIO(sheets_csv(tables))))
    return d, key


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(edits=st.lists(st.tuples(st.integers(0, 1), st.sampled_from(SHEET_COLUMNS[3:]),
                                st.sampled_from(WORDS)), max_size=6))
def test_mark_never_tracebacks(files, edits, capsys):
    d, key = files
    rows = [dict(r) for r in key]
    for i, col, word in edits:
        rows[i][col] = word
    out = io.StringIO()
    w = csv.DictWriter(out, fieldnames=SHEET_COLUMNS, lineterminator="\n")
    w.writeheader()
    for r in rows:
        r["student"] = "Rua"
        w.writerow(r)
    path = d / "sheet.csv"
    path.write_text(out.getvalue())
    code = main(["mark", str(d / "exercise.csv"), str(path), "--json"])
    err = capsys.readouterr().err
    assert code in (0, 2)
    if code == 2:
        assert "field '" in err and len(err.strip().splitlines()) == 1


def test_a_wrong_zone_time_with_utc_blank_is_marked(files, capsys):
    d, key = files
    rows = [dict(r) for r in key]
    rows[0].update(zt="07:41:05", utc_date="", utc_time="")     # regression: crashed on naming
    out = io.StringIO()
    w = csv.DictWriter(out, fieldnames=SHEET_COLUMNS, lineterminator="\n")
    w.writeheader()
    w.writerows({**r, "student": "Rua"} for r in rows)
    (d / "zt.csv").write_text(out.getvalue())
    assert main(["mark", str(d / "exercise.csv"), str(d / "zt.csv")]) == 0
    assert "first wrong: utc" in capsys.readouterr().out
