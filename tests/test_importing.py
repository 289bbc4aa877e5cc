"""Batch rows -> passage-log entries (nav/importing.py), shared by `nav import` and the shell."""

import json
import subprocess
import sys
from pathlib import Path

from nav.importing import blank_cell_notes, entries_from_rows
from nav.passage import Settings
from nav.sightfile import parse_sight_csv

ROOT = Path(__file__).resolve().parents[1]
CSV = (ROOT / "examples" / "evening-stars.csv").read_text(encoding="utf-8")


def _entries(path: Path) -> list[dict]:
    out = []
    for line in path.read_text(encoding="utf-8").splitlines()[1:]:
        e = json.loads(line)
        if e["kind"] in ("dr", "sight"):
            for k in ("id", "logged_utc", "check"):   # the check covers logged_utc too
                e.pop(k)
            out.append(e)
    return out


def test_typed_cells_are_kept_as_typed_and_blanks_left_to_the_settings():
    # The log's policy (nav/importing.py): values as typed beside the parsed ones; an empty cell
    # is not filled with the batch default. Source of the expected text: the example file itself.
    rows = parse_sight_csv("utc,body,hs,dr_lat,dr_lon,course_deg,speed_kn\n"
                           "2026-06-14T20:55:00Z,Vega,22 45.1,38 31.0 N,028 05.0 W,095,5.5\n").rows
    dr, sight = entries_from_rows(rows, "x.csv")
    assert dr["lat"] == "38 31.0 N" and dr["course"] == "095" and dr["speed"] == "5.5"
    assert sight["hs"] == "22 45.1" and "eye_height" not in sight and "index_error" not in sight
    notes = blank_cell_notes(rows, Settings(eye_height_m=2.4))
    assert len(notes) == 1 and "eye_height_m" in notes[0] and "2.4" in notes[0]
    assert blank_cell_notes(rows, Settings()) == []


def test_cli_and_shell_import_write_the_same_entries(tmp_path):
    src = tmp_path / "sights.csv"
    src.write_text(CSV, encoding="utf-8")
    cli_log, shell_log = tmp_path / "cli.jsonl", tmp_path / "shell.jsonl"
    run = [sys.executable, "-m", "nav"]
    subprocess.run(run + ["import", str(src), "--log", str(cli_log), "--new", "--vessel", "V",
                          "--title", "T"], check=True, capture_output=True, cwd=tmp_path)
    subprocess.run(run + ["shell", "--log", str(shell_log), "--vessel", "V"],
                   input=f"import {src}\nquit\n", text=True, check=True, capture_output=True,
                   cwd=tmp_path, env={"XDG_DATA_HOME": str(tmp_path / "data"),
                                      "PATH": "/usr/bin:/bin"})
    a, b = _entries(cli_log), _entries(shell_log)
    assert a and a == b
