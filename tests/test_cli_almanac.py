"""`nav almanac`: output in navigator notation, the JSON contract, and one-line errors.

The CLI adds no astronomy of its own: every number it prints must be the engine's (checked here
by formatting the engine's result with nav.angles), and the engine is checked against astropy/ERFA,
ephem and astronomy-engine in test_almanac_reference.py. One figure is checked here against ephem
as well, so that a CLI wired to the wrong instant or body cannot pass.
"""

from __future__ import annotations

import json
import math
import os
import re
import subprocess
import sys
from datetime import datetime
from pathlib import Path

import ephem
import numpy as np
import pytest

from nav import CAUTION
from nav import almanac as al
from nav.angles import format_dm, format_lat, parse_angle, parse_lat
from nav.cli import main
from nav.timekeeping import UTC
from nav.units import ARCMIN_DEG

ARCMIN = ARCMIN_DEG
REPO = Path(__file__).resolve().parent.parent
UTC_TEXT = "2026-03-20T18:42:10Z"
T = datetime(2026, 3, 20, 18, 42, 10, tzinfo=UTC)
JSON_ROUNDING_DEG = 5e-8          # the CLI rounds degrees to 7 decimals
JSON_ROUNDING_ARCMIN = 5e-5       # and HP, SD in minutes of arc to 4
DISPLAY_HALF_STEP = 0.05 * ARCMIN
EPHEM_TOLERANCE = 0.2 * ARCMIN    # as in test_almanac_reference.py (ephem against nav: <= 0.05')

CONTRACT_ALWAYS = {"body", "utc", "gha_deg", "dec_deg", "gha_aries_deg"}


def run_cli(capsys, *argv):
    code = main(["almanac", *argv])
    out, err = capsys.readouterr()
    return code, out, err


def run_process(*argv, env=None):
    return subprocess.run([sys.executable, "-m", "nav", "almanac", *argv], capture_output=True,
                          text=True, cwd=REPO.parent, env=env, timeout=60)


# ---------------------------------------------------------------- one instant, human output

def test_single_instant_in_navigator_notation(capsys):
    code, out, err = run_cli(capsys, "Sun", "Moon", "Venus", "Sirius", "--utc", UTC_TEXT)
    assert code == 0 and err == ""
    lines = out.splitlines()
    recs = al.almanac(["Sun", "Moon", "Venus", "Sirius"], T)
    aries = format_dm(float(recs[0].gha_aries_deg), deg_width=3)
    assert lines[0].startswith("Almanac for 2026-03-20 18:42:10 UTC")
    assert f"GHA Aries {aries}" in lines[0]
    for rec in recs:
        row = next(line for line in lines if line.startswith(rec.body + " "))
        # GHA as ddd°mm.m′ and Dec as dd°mm.m′ N/S, from the engine's values.
        assert format_dm(float(rec.gha_deg), deg_width=3) in row
        assert format_lat(float(rec.dec_deg)) in row
        if rec.kind == "star":
            assert format_dm(float(rec.sha_deg), deg_width=3) in row
        assert re.search(r"\d{3}\u00b0\d{2}\.\d\u2032", row)
        assert re.search(r"\d{2}\u00b0\d{2}\.\d\u2032 [NS]", row)
    assert CAUTION in out
    assert "true equator and equinox of date" in out


def test_printed_gha_aries_and_sun_against_ephem(capsys):
    _, out, _ = run_cli(capsys, "Sun", "--utc", UTC_TEXT)
    m = re.search(r"GHA Aries (\d{3}\u00b0\d{2}\.\d\u2032)", out)
    printed_aries = parse_angle(m.group(1))
    row = next(line for line in out.splitlines() if line.startswith("Sun "))
    cells = re.findall(r"\d+\u00b0\d{2}\.\d\u2032(?: [NS])?", row)
    printed_gha, printed_dec = parse_angle(cells[0]), parse_lat(cells[1])
    # ephem (libastro), apparent geocentric of date; ephem's date is UT (here UTC; |UT1-UTC| of
    # 0.09 s moves GHA 0.02', inside the tolerance).
    obs = ephem.Observer()
    obs.lon, obs.lat, obs.elevation, obs.pressure = "0", "0", 0.0, 0.0
    obs.date = ephem.Date("2026/3/20 18:42:10")
    sun = ephem.Sun()
    sun.compute(obs.date)
    gast = math.degrees(float(obs.sidereal_time()))
    gha_ref = (gast - math.degrees(float(sun.g_ra))) % 360.0
    tol = EPHEM_TOLERANCE + DISPLAY_HALF_STEP
    assert abs((printed_aries - gast + 180.0) % 360.0 - 180.0) <= tol
    assert abs((printed_gha - gha_ref + 180.0) % 360.0 - 180.0) <= tol
    assert abs(printed_dec - math.degrees(float(sun.g_dec))) <= tol


def test_groups_expand(capsys):
    for group, count in (("planets", 4), ("stars", 58), ("all", 64)):
        code, out, _ = run_cli(capsys, group, "--utc", UTC_TEXT, "--json")
        assert code == 0
        rows = json.loads(out)
        assert len(rows) == count and len({r["body"] for r in rows}) == count


# ---------------------------------------------------------------- a table

def test_table_from_to_step(capsys):
    code, out, err = run_cli(capsys, "Sun", "Vega", "--from", "2026-03-20T00:00Z",
                             "--to", "2026-03-20T03:00Z", "--step", "1h")
    assert code == 0 and err == ""
    rows = [line for line in out.splitlines() if re.match(r"\d{4}-\d{2}-\d{2}T", line)]
    assert len(rows) == 4 * 2
    assert [r[:20] for r in rows[::2]] == [f"2026-03-20T0{h}:00:00Z" for h in range(4)]
    t64 = np.array([f"2026-03-20T0{h}:00:00" for h in range(4)], dtype="datetime64[us]")
    sun = al.body_almanac("Sun", t64)
    for i, row in enumerate(rows[::2]):
        assert format_dm(float(sun.gha_deg[i]), deg_width=3) in row
        assert format_dm(float(sun.gha_aries_deg[i]), deg_width=3) in row
    assert CAUTION in out


def test_table_with_offset_times_is_in_utc(capsys):
    _, out, _ = run_cli(capsys, "Sun", "--from", "2026-03-19T21:00-03:00", "--to", "2026-03-19T22:00-03:00",
                        "--json")
    assert [r["utc"] for r in json.loads(out)] == ["2026-03-20T00:00:00Z", "2026-03-20T01:00:00Z"]


# ---------------------------------------------------------------- the JSON contract

def test_json_keys_follow_the_contract(capsys):
    code, out, err = run_cli(capsys, "Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn", "Sirius",
                             "Polaris", "--utc", UTC_TEXT, "--json")
    assert code == 0 and err == ""
    rows = {r["body"]: r for r in json.loads(out)}
    for name, row in rows.items():
        keys = set(row)
        assert CONTRACT_ALWAYS <= keys, name
        is_star = name in ("Sirius", "Polaris")
        assert ("sha_deg" in keys) == is_star, name          # SHA: stars only
        assert ("hp_arcmin" in keys) == (not is_star), name  # HP: Sun, Moon, planets
        assert ("sd_arcmin" in keys) == (name in ("Sun", "Moon")), name
        assert row["utc"] == UTC_TEXT
        for k, v in row.items():
            if k.endswith(("_deg", "_arcmin")):
                assert isinstance(v, float) and math.isfinite(v), (name, k)
        assert 0.0 <= row["gha_deg"] < 360.0 and -90.0 <= row["dec_deg"] <= 90.0
    # The numbers are the engine's, in decimal degrees.
    for rec in al.almanac(list(rows), T):
        row = rows[rec.body]
        assert abs(row["gha_deg"] - float(rec.gha_deg)) <= JSON_ROUNDING_DEG
        assert abs(row["dec_deg"] - float(rec.dec_deg)) <= JSON_ROUNDING_DEG
        assert abs(row["gha_aries_deg"] - float(rec.gha_aries_deg)) <= JSON_ROUNDING_DEG
        if rec.kind == "star":
            assert abs(row["sha_deg"] - float(rec.sha_deg)) <= JSON_ROUNDING_DEG
        if rec.hp_arcmin is not None:
            assert abs(row["hp_arcmin"] - float(rec.hp_arcmin)) <= JSON_ROUNDING_ARCMIN
        if rec.sd_arcmin is not None:
            assert abs(row["sd_arcmin"] - float(rec.sd_arcmin)) <= JSON_ROUNDING_ARCMIN


def test_json_table_has_one_object_per_body_and_instant(capsys):
    _, out, _ = run_cli(capsys, "Sun", "Moon", "--from", "2026-03-20T00:00Z", "--to", "2026-03-20T00:30Z",
                        "--step", "10min", "--json")
    rows = json.loads(out)
    assert len(rows) == 4 * 2
    assert [r["utc"][11:16] for r in rows[::2]] == ["00:00", "00:10", "00:20", "00:30"]


# ---------------------------------------------------------------- bad input: one line, exit 2

BAD_INPUT = {
    "unknown body": (["Siriuss", "--utc", UTC_TEXT], "did you mean Sirius"),
    "malformed time": (["Sun", "--utc", "yesterday noon"], "ISO 8601"),
    "impossible date": (["Sun", "--utc", "2026-02-30T12:00Z"], "calendar date"),
    "impossible time": (["Sun", "--utc", "2026-03-20T25:00Z"], "time of day"),
    "no zone": (["Sun", "--utc", "2026-03-20T18:42:10"], "zone"),
    "outside the ephemeris": (["Sun", "--utc", "2051-01-01T00:00Z"], "1900-01-01 to 2050-12-31"),
    "before the ephemeris": (["Sun", "--utc", "1899-12-31T23:59:59Z"], "1900-01-01 to 2050-12-31"),
    "from after to": (["Sun", "--from", "2026-03-21T00:00Z", "--to", "2026-03-20T00:00Z"], "after"),
    "over the row limit": (["all", "--from", "1900-01-01T00:00Z", "--to", "2050-12-31T00:00Z",
                            "--step", "1d"], "limit"),
    "zero step": (["Sun", "--from", "2026-03-20T00:00Z", "--to", "2026-03-20T01:00Z",
                   "--step", "0.0000001s"], "longer than zero"),
    "absurd step": (["Sun", "--from", "2026-03-20T00:00Z", "--to", "2026-03-20T01:00Z",
                     "--step", "9999999999d"], "too long"),
    "utc and a table": (["Sun", "--utc", UTC_TEXT, "--from", UTC_TEXT], "not both"),
    "no instant": (["Sun"], "--utc"),
}


@pytest.mark.parametrize("case", list(BAD_INPUT))
def test_bad_input_is_one_line_and_exit_2(capsys, case):
    argv, needle = BAD_INPUT[case]
    code, out, err = run_cli(capsys, *argv)
    assert code == 2, case
    assert out == "", case
    lines = err.strip().splitlines()
    assert len(lines) == 1, (case, err)
    assert lines[0].startswith("nav almanac: ") and needle in lines[0], (case, err)
    assert "Traceback" not in err and "for example" in lines[0]


def test_bad_input_as_a_process_has_no_traceback():
    for case in ("unknown body", "over the row limit", "zero step"):
        proc = run_process(*BAD_INPUT[case][0])
        assert proc.returncode == 2, (case, proc.stderr)
        assert proc.stdout == "" and "Traceback" not in proc.stderr
        assert len(proc.stderr.strip().splitlines()) == 1, proc.stderr


# ---------------------------------------------------------------- start-up stays light

def test_almanac_does_not_import_matplotlib_or_prompt_toolkit():
    code = (
        "import sys\n"
        "from nav.cli import main\n"
        f"rc = main(['almanac', 'Sun', 'Sirius', '--utc', '{UTC_TEXT}'])\n"
        "heavy = sorted(m for m in sys.modules if m.split('.')[0] in ('matplotlib', 'prompt_toolkit'))\n"
        "print('HEAVY', heavy, rc)\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=REPO.parent, timeout=60)
    assert proc.returncode == 0, proc.stderr
    assert "HEAVY [] 0" in proc.stdout


def test_python_m_nav_almanac_runs_from_any_directory(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "nav", "almanac", "Sun", "--utc", UTC_TEXT, "--json"],
                          capture_output=True, text=True, cwd=tmp_path, timeout=60,
                          env={**os.environ, "PYTHONWARNINGS": "error"})
    assert proc.returncode == 0 and proc.stderr == ""
    assert json.loads(proc.stdout)[0]["body"] == "Sun"
