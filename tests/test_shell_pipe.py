"""The shell with standard input not a terminal: `python -m nav shell` reading commands line by
line from a pipe (a subprocess), as a script or a test would drive it.

The sights are those of tests/test_shell.py (synthesised there from an invented truth with
astropy AltAz, Bennett's refraction and the almanac's dip formula; see its docstring).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from datetime import datetime, timezone

from nav.logbook import load_log, new_log
from test_shell import DR_LINE, NMI, PLAN, distance_nmi, story_lines, truth_at

UTC = timezone.utc


def nav_shell(tmp_path, lines, *args, cwd=None):
    env = {**os.environ, "XDG_DATA_HOME": str(tmp_path / "xdg"), "PYTHONIOENCODING": "utf-8"}
    return subprocess.run([sys.executable, "-m", "nav", *args], input="".join(
        line + "\n" for line in lines), capture_output=True, text=True, encoding="utf-8",
        cwd=cwd or tmp_path, env=env, timeout=120)


def test_line_mode_story_and_reopen(tmp_path):
    log = tmp_path / "kestrel.jsonl"
    run = nav_shell(tmp_path, story_lines() + ["quit"], "shell", "--log", str(log))
    assert run.returncode == 0, run.stderr
    assert run.stderr == ""
    out = run.stdout
    assert out.startswith("nav ") and "CAUTION: nav is a cross-check" in out
    assert out.count("  intercept ") == 3 and "Fix at 2026-06-14 23:01:00 UTC from 3 sights" in out
    (fix,) = load_log(log).effective_entries("fix")
    assert distance_nmi(fix["lat_deg"], fix["lon_deg"], *truth_at(PLAN[-1][1])) < 0.3 * NMI
    assert (tmp_path / "kestrel-e0008.png").read_bytes()[:4] == b"\x89PNG"   # PNG signature
    assert not (tmp_path / "xdg").exists()      # line mode keeps no command history

    again = nav_shell(tmp_path, ["where at 23:01:00", "help", "help sight", "log 3"],
                      "shell", "--log", str(log))
    assert again.returncode == 0, again.stderr
    out = again.stdout
    assert "3 sights, 1 DR entry, 1 fix, 2 settings" in out
    assert "basis        fix at 2026-06-14 23:01 UTC (anchor e0008)" in out
    assert "Commands (help COMMAND" in out and "sight BODY HS [limb L] (at TIME | zt TIME)" in out
    assert "(the latest 3 of 7 entries; `log all` lists them all)" in out


def test_no_log_creates_a_dated_log_in_sight_logs(tmp_path):
    before = datetime.now(UTC).date()
    first = nav_shell(tmp_path, ["note first run", "quit"])          # `nav` alone: the shell
    second = nav_shell(tmp_path, ["note second run"], "shell")       # ends at end of input
    after = datetime.now(UTC).date()
    assert first.returncode == 0 and second.returncode == 0, first.stderr + second.stderr
    days = {before, after}
    made = sorted(p.name for p in (tmp_path / "sight_logs").iterdir())
    day = next(d for d in days if f"passage-{d:%Y-%m-%d}.jsonl" in made)
    assert made == [f"passage-{day:%Y-%m-%d}-2.jsonl", f"passage-{day:%Y-%m-%d}.jsonl"]
    path = tmp_path / "sight_logs" / f"passage-{day:%Y-%m-%d}.jsonl"
    assert f"new passage log: {path.relative_to(tmp_path)}" in first.stdout or \
        f"new passage log: {path}" in first.stdout
    (note,) = load_log(path).effective_entries("note")
    assert note["text"] == "first run"


def test_torn_tail_is_reported_and_set_aside(tmp_path):
    path = tmp_path / "torn.jsonl"
    with new_log(path, "Kittiwake (invented)", "torn test") as log:
        log.append({"kind": "note", "text": "before the power cut"})
    with open(path, "ab") as f:
        f.write(b'{"id": "e0003", "kind": "note", "logged_utc": "2026-06-14T2')   # no newline
    run = nav_shell(tmp_path, ["log"], "shell", "--log", str(path))
    assert run.returncode == 0, run.stderr
    assert "caution: line 3: torn last line" in run.stdout and "set aside in" in run.stdout
    side = [p for p in tmp_path.iterdir() if ".torn-" in p.name]
    assert len(side) == 1 and side[0].read_bytes().startswith(b'{"id": "e0003"')
    assert "repair" in run.stdout                          # the repair entry is in the log


def test_refused_lines_exit_2_without_traceback(tmp_path):
    lines = ["sight", "Vegaa", "sight Vega 34 12.3", "dr 41 N", "frobnicate", "show e9999",
             "correct e0002 -- ", "plot fix", "export kml x.kml", "import nothere.csv",
             "\x00\x1b[A", "where at 99:99", "set eye -2", "note ok"]
    run = nav_shell(tmp_path, lines, "shell", "--log", str(tmp_path / "g.jsonl"))
    assert run.returncode == 2
    assert "Traceback" not in run.stdout + run.stderr
    errors = [line for line in run.stderr.splitlines() if line.startswith("error: ")]
    # every line but the note is refused ("sight" and its answer "Vegaa" are one guided entry)
    assert len(errors) == len(lines) - 2
    assert all("field '" in e for e in errors)             # each names its field
    assert "12 line(s) refused" in run.stderr
    assert "\x1b" not in run.stderr and "\x00" not in run.stderr   # typed control characters
    assert "a latitude but no longitude" in run.stderr
    assert [e.kind for e in load_log(tmp_path / "g.jsonl").entries] == ["passage", "note"]


def test_guided_sight_in_line_mode(tmp_path):
    log = tmp_path / "guided.jsonl"
    run = nav_shell(tmp_path, ["set eye 2.5 ie 1.2", DR_LINE, "sight", "Vega", "22:55:00",
                               "41 25.1", "", "3.0", "", "quit"], "shell", "--log", str(log))
    assert run.returncode == 0, run.stderr
    assert "as one line: sight Vega 41 25.1 at 22:55:00 eye 3.0" in run.stdout
    (s,) = load_log(log).effective_entries("sight")
    assert s["eye_height_m"] == 3.0 and "index_error_arcmin" not in s.data


def test_line_mode_imports_neither_prompt_toolkit_nor_matplotlib(tmp_path):
    code = (
        "import io, sys\n"
        "from nav.shell.app import run_shell\n"
        f"rc = run_shell({str(tmp_path / 'lite.jsonl')!r}, stdin=io.StringIO("
        f"{(DR_LINE + chr(10) + 'where at 21:00' + chr(10))!r}), stdout=io.StringIO(), "
        "interactive=False)\n"
        "print(rc, 'prompt_toolkit' in sys.modules, 'matplotlib' in sys.modules)\n")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=60, cwd=tmp_path)
    assert run.stdout.split() == ["0", "False", "False"], run.stderr


def test_export_from_line_mode_is_valid_geojson(tmp_path):
    log = tmp_path / "exp.jsonl"
    run = nav_shell(tmp_path, story_lines()[:-1] + ["export geojson", "export csv",
                                                    "export geojson"], "shell", "--log", str(log))
    assert run.returncode == 2                                   # the second geojson is refused
    assert "already exists" in run.stderr
    doc = json.loads((tmp_path / "exp.geojson").read_text(encoding="utf-8"))
    assert doc["type"] == "FeatureCollection" and "never replaces" in doc["caution"]
    (point,) = [f for f in doc["features"] if f["geometry"]["type"] == "Point"]
    lon, lat = point["geometry"]["coordinates"]                  # RFC 7946: [lon, lat]
    assert distance_nmi(lat, lon, *truth_at(PLAN[-1][1])) < 0.3 * NMI
    assert (tmp_path / "exp.csv").read_text(encoding="utf-8").count("\n") == 4
