"""The UT1 caution on every surface that shows an almanac value, a reduction or a fix (issue 7
item 13): the shell (sight, show, fix, almanac, noon, sky, plan, identify, equal-altitudes) and
the CLI (noon, latitude, sky, meridian, plan, identify, compass, equal-altitudes, series).

Reference for where the caution begins: astropy's own reader of the same IERS-A file
(``astropy.utils.iers.IERS_A``, test extra, no download): the last day flagged I (measured) and
the last day flagged P (predicted). An instant half a year before the last measured day says
nothing; an instant two months past the last prediction says it is beyond the predictions and
names the measured end's date, once per command however many rows it shows.

Scenario (invented): the ketch "Marram Light" hove to at 30° N 40° W, sights of three stars.
"""

from __future__ import annotations

import json
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from shell_driver import open_state, run_lines

UTC = timezone.utc
CAUTION_HEAD = "UT1 caution"


@pytest.fixture(scope="module")
def ends():
    """(last measured day, last predicted day) as astropy reads finals2000A.all."""
    from astropy.utils import iers

    a = iers.IERS_A.open(iers.IERS_A_FILE)
    flags = np.asarray(a["UT1Flag_A"])
    mjd = np.asarray(a["MJD"].to_value("d") if hasattr(a["MJD"], "to_value") else a["MJD"])
    day = lambda m: (datetime(1858, 11, 17, tzinfo=UTC) + timedelta(days=float(m)))  # MJD 0
    return day(mjd[flags == "I"].max()), day(mjd[flags == "P"].max())


@pytest.fixture(scope="module")
def times(ends):
    measured, predicted = ends
    inside = (measured - timedelta(days=180)).replace(hour=21)
    beyond = (predicted + timedelta(days=60)).replace(hour=21)
    return {"inside": inside, "beyond": beyond}


def _iso(t: datetime) -> str:
    return t.strftime("%Y-%m-%dT%H:%M:%SZ")


def _check_beyond(text: str, ends) -> None:
    measured, predicted = ends
    assert "beyond the IERS predictions" in text
    assert f"after {predicted:%Y-%m-%d}" in text and f"measured to {measured:%Y-%m-%d}" in text
    assert "GHA may be off by" in text


def _shell(tmp_path, t0: datetime) -> str:
    st, log = open_state(str(tmp_path / "log.jsonl"), "Marram Light", "UT1 check",
                         lambda: t0 + timedelta(hours=2))
    try:
        out = run_lines(
            st, "set eye 2.5 ie 0 zone +3",
            f"dr 30 00.0 N 040 00.0 W at {_iso(t0.replace(hour=0))}",
            f"sight Vega 45 00.0 at {_iso(t0)}",
            f"sight Arcturus 40 00.0 at {_iso(t0 + timedelta(minutes=3))}",
            f"sight Altair 35 00.0 at {_iso(t0 + timedelta(minutes=6))}")
        sight_ids = [e.id for e in log.effective_entries("sight")]
        parts = {"sight": out}
        parts["show"] = run_lines(st, f"show {sight_ids[0]}")
        parts["fix"] = run_lines(st, f"fix {' '.join(sight_ids)} use-doubtful")
        parts["almanac"] = run_lines(st, f"almanac Sun at {_iso(t0)}")
        day = (t0 - timedelta(hours=3)).date().isoformat()
        parts["noon"] = run_lines(st, f"noon {day}")
        parts["sky"] = run_lines(st, f"sky {day}")
        parts["plan"] = run_lines(st, f"plan evening {day}")
        parts["identify"] = run_lines(st, f"identify 45 00.0 060 at {_iso(t0)}")
        return parts
    finally:
        log.close()


def test_shell_says_nothing_while_ut1_is_measured(tmp_path, times):
    parts = _shell(tmp_path, times["inside"])
    for name, text in parts.items():
        assert "error:" not in text and CAUTION_HEAD not in text, name


def test_shell_carries_the_caution_beyond_the_predictions(tmp_path, times, ends):
    parts = _shell(tmp_path, times["beyond"])
    for name, text in parts.items():
        assert "error:" not in text and CAUTION_HEAD in text, name
        _check_beyond(" ".join(text.split()), ends)
    assert parts["sight"].count(CAUTION_HEAD) == 3          # one per sight shown, as logged
    assert parts["sky"].count(CAUTION_HEAD) == 1            # once, not per event
    assert parts["fix"].count(CAUTION_HEAD) == 1


def _cli(capsys, argv):
    from nav.cli import main

    assert main(argv) in (0, None)
    out = capsys.readouterr().out
    return json.loads(out) if "--json" in argv else out


def _cli_runs(t: datetime):
    day = (t - timedelta(hours=3)).date().isoformat()
    dr = ["--dr-lat", "30 00.0 N", "--dr-lon", "040 00.0 W"]
    return {
        "noon": ["noon", "--date", day, *dr],
        "sky": ["sky", "--date", day, *dr],
        "meridian": ["meridian", "Vega", "--date", day, *dr],
        "plan": ["plan", "--utc", _iso(t), *dr],
        "identify": ["identify", "--utc", _iso(t), "--hs", "45 00.0", "--zn", "060", *dr],
        # Polaris: always up at 30° N (a body below the horizon is refused by compass)
        "compass": ["compass", "--body", "Polaris", "--utc", _iso(t), "--bearing", "001", *dr],
        "latitude": ["latitude", "--body", "Polaris", "--utc", _iso(t), "--hs", "30 30.0", *dr],
        "equal": ["equal-altitudes", "--first", _iso(t.replace(hour=12)),
                  "--second", _iso(t.replace(hour=18)), *dr],
    }


def test_cli_says_nothing_while_ut1_is_measured(capsys, times):
    for name, argv in _cli_runs(times["inside"]).items():
        assert CAUTION_HEAD not in _cli(capsys, argv), name
        doc = _cli(capsys, argv + ["--json"])
        assert not any(str(w).startswith(CAUTION_HEAD) for w in doc.get("warnings", [])), name


def test_cli_carries_the_caution_beyond_the_predictions(capsys, times, ends):
    for name, argv in _cli_runs(times["beyond"]).items():
        text = _cli(capsys, argv)
        assert text.count(f"! {CAUTION_HEAD}") == 1, name
        _check_beyond(text, ends)
        doc = _cli(capsys, argv + ["--json"])
        ut1 = [w for w in doc["warnings"] if str(w).startswith(CAUTION_HEAD)]
        assert len(ut1) == 1, name
        _check_beyond(ut1[0], ends)


def test_cli_series_carries_the_caution_once(tmp_path, capsys, times, ends):
    # the invented dusk-run example (a run of Dubhe) moved to each date
    from pathlib import Path

    text = (Path(__file__).resolve().parents[1] / "examples" / "dusk-run.csv").read_text()
    for when, expected in (("inside", 0), ("beyond", 1)):
        path = tmp_path / f"{when}.csv"
        path.write_text(text.replace("2026-03-21", times[when].date().isoformat()))
        out = _cli(capsys, ["series", str(path)])
        assert "averaged sight" in out and out.count(f"! {CAUTION_HEAD}") == expected
        doc = _cli(capsys, ["series", str(path), "--json"])
        assert doc["runs"] and len(doc.get("warnings", [])) == expected
        if expected:
            _check_beyond(out, ends)
            _check_beyond(doc["warnings"][0], ends)
