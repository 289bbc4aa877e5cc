"""One observation counts once (issue 7, item 3): a sight identical in body, UTC and Hs to one
that stands in the log is refused, by the log itself, so the shell's ``sight``, its ``import`` and
``nav import`` all refuse it, and the message names the entry it repeats.

The rule is the trade's (common practice, no source): a fix that counts one sight twice weighs
that line of position double and draws an ellipse smaller than the sights allow. Vessels,
passages and sights are invented; the Hs values need no reduction here (the log does none).
"""

from __future__ import annotations

from datetime import datetime, timezone
from pathlib import Path

import pytest

from nav.cli import main
from nav.logbook import DuplicateSightError, PassageLog, load_log, new_log

from shell_driver import open_state, run_lines

ROOT = Path(__file__).resolve().parents[1]
EVENING = ROOT / "examples" / "evening-stars.csv"     # the demo's invented evening stars


def sight(**over) -> dict:
    e = {"kind": "sight", "body": "Vega", "utc": "2026-06-20T21:26:15Z", "time_source": "utc",
         "hs": "33 19.7", "hs_deg": 33 + 19.7 / 60}
    e.update(over)
    return e


@pytest.fixture
def log(tmp_path):
    with new_log(tmp_path / "fulmar.jsonl", "Fulmar (invented)", "Duplicate test") as lg:
        yield lg


def test_the_same_sight_twice_is_refused_naming_the_first(log):
    first = log.append(sight())
    before = log.path.read_bytes()
    with pytest.raises(DuplicateSightError) as err:
        log.append(sight())
    assert first.id in str(err.value) and "already logged" in str(err.value)
    assert err.value.duplicates == [("entry 1", first.id)]
    assert log.path.read_bytes() == before


@pytest.mark.parametrize("same", [
    {"utc": "2026-06-20T21:26:15.0Z"},          # the same instant, written otherwise
    {"hs": "33.32833333333333"},                 # the same Hs, typed as decimal degrees
    {"note": "typed again"},                     # other fields do not make it another sight
])
def test_same_body_instant_and_hs_is_the_same_sight(log, same):
    log.append(sight())
    with pytest.raises(DuplicateSightError):
        log.append(sight(**same))


@pytest.mark.parametrize("other", [
    {"utc": "2026-06-20T21:26:16Z"}, {"hs": "33 19.8", "hs_deg": 33 + 19.8 / 60},
    {"body": "Deneb"},
])
def test_another_instant_hs_or_body_is_another_sight(log, other):
    log.append(sight())
    log.append(sight(**other))
    assert len(load_log(log.path).effective_entries("sight")) == 2


def test_a_struck_sight_may_be_logged_again_but_a_correction_may_not_copy_one(log):
    first = log.append(sight())
    log.strike(first.id, "logged against the wrong passage")
    again = log.append(sight())                  # the struck one no longer stands
    other = log.append(sight(body="Deneb"))
    with pytest.raises(DuplicateSightError, match=f"the correction of {other.id} would make it "
                                                  f"the same sight .* as {again.id}"):
        log.correct(other.id, "wrong star", {"body": "Vega"})


def test_a_batch_is_refused_whole_and_every_repeat_is_named(log):
    a = log.append(sight())
    b = log.append(sight(body="Deneb"))
    before = log.path.read_bytes()
    with pytest.raises(DuplicateSightError) as err:
        log.append_many([sight(body="Altair"), sight(source="deck.csv row 2"),
                         sight(body="Deneb", source="deck.csv row 3"),
                         sight(body="Altair", source="deck.csv row 4")])
    msg = str(err.value)
    assert f"deck.csv row 2 repeats {a.id}" in msg and f"deck.csv row 3 repeats {b.id}" in msg
    assert "deck.csv row 4 repeats e0004" in msg        # Altair, the batch's own first entry
    assert "nothing was logged" in msg and log.path.read_bytes() == before


def test_nav_import_twice_refuses_the_second_and_names_the_rows(tmp_path, capsys):
    log = tmp_path / "sula.jsonl"
    assert main(["import", str(EVENING), "--log", str(log), "--new", "--vessel", "Sula Brae",
                 "--title", "Evening"]) == 0
    before = log.read_bytes()
    capsys.readouterr()
    assert main(["import", str(EVENING), "--log", str(log)]) == 2
    err = capsys.readouterr().err
    assert "already logged" in err and "evening-stars.csv line 2 repeats e0003" in err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert log.read_bytes() == before


def test_the_shell_refuses_a_repeated_sight_and_a_repeated_import(tmp_path):
    st, log = open_state(tmp_path / "shell.jsonl", "Kestrel Dawn (invented)", "dupes",
                         lambda: datetime(2026, 6, 20, 23, 0, tzinfo=timezone.utc))
    try:
        out = run_lines(st, "sight Vega 33 19.7 at 2026-06-20T21:26:15Z")
        assert "e0002" in out
        n = len(st.log.entries)
        out = run_lines(st, "sight Vega 33 19.7 at 2026-06-20T21:26:15Z")
        assert "already logged as e0002" in out and len(st.log.entries) == n
        out = run_lines(st, f"import {EVENING}")
        assert "imported" in out
        n = len(st.log.entries)
        out = run_lines(st, f"import {EVENING}")
        assert "already logged" in out and "line 2 repeats" in out and len(st.log.entries) == n
    finally:
        log.close()
    assert len(load_log(tmp_path / "shell.jsonl").entries) == n     # strict reload: all well
    PassageLog.open(tmp_path / "shell.jsonl").close()
