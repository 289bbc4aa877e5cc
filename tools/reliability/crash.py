"""Crash run: SIGKILL the real shell while it logs, and `nav import` while it imports.

    python tools/reliability/crash.py [--shell-kills N] [--import-kills M] [--seed S] [--json]

Shell: each round starts ``python -m nav shell --log LOG`` as a user would, with its standard
input a pipe fed a script of settings, DR entries, sights and notes; reads what it prints; and
kills it (SIGKILL) at a random moment. An entry counts as confirmed once the shell printed
``logged eNNNN`` for it (the shell prints that only after the entry was flushed and fsynced).
After each kill the log must load, every confirmed entry must be in it with the values typed,
and the next round opens the same log again (setting any torn tail aside).

Imports: each round writes a batch file of sights at times no earlier round used, starts
``python -m nav import FILE --log LOG``, and kills it at a random moment. Afterwards the log must
hold either all of the batch's sights or none (all of them when the import had exited 0 first).

Counted: kills, confirmed entries, entries lost, partial imports, logs left unusable (a log that
no longer loads), and rounds where the process failed on its own. Invented vessel and data.
"""

from __future__ import annotations

import argparse
import json
import os
import random
import re
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
VESSEL = "Fulmar (invented)"
STARS = ("Vega", "Arcturus", "Antares", "Spica", "Altair", "Deneb", "Alioth", "Kochab")
LOGGED = re.compile(r"logged (e\d+)")


def _env(tmp: Path) -> dict:
    env = dict(os.environ)
    env.update(XDG_DATA_HOME=str(tmp / "xdg"), MPLBACKEND="Agg",
               PYTHONPATH=str(ROOT) + os.pathsep + env.get("PYTHONPATH", ""))
    return env


def shell_script(round_no: int, n: int = 40) -> tuple[list[str], dict[int, dict]]:
    """Lines for one round, and for each line number that logs a sight or note its expected
    values. Every sight is unique in time and Hs (rounds never repeat one)."""
    lines = ["set eye 2.4 ie +1.2",
             f"dr 35 10.1 N 021 33.9 W course 124 speed 6.5 at 2026-06-20T20:{round_no % 60:02d}:00Z"]
    expect: dict[int, dict] = {}
    for i in range(n):
        if i % 4 == 3:
            text = f"crash round {round_no} note {i}"
            lines.append(f"note {text}")
            expect[len(lines) - 1] = {"kind": "note", "text": text}
        else:
            sec = (round_no * 97 + i * 7) % 3600
            utc = f"2026-06-20T21:{sec // 60:02d}:{sec % 60:02d}Z"
            body = STARS[(round_no + i) % len(STARS)]
            hs = f"{20 + i % 40} {(round_no * 13 + i) % 600 / 10:04.1f}"
            lines.append(f"sight {body} {hs} at {utc}")
            expect[len(lines) - 1] = {"kind": "sight", "body": body, "hs": hs, "utc": utc}
    lines.append("quit")
    return lines, expect


def _reader(stream, sink: list[str]) -> None:
    for raw in iter(stream.readline, b""):
        sink.append(raw.decode("utf-8", "replace"))


def shell_round(log: Path, round_no: int, rng: random.Random, env: dict) -> dict:
    lines, expect = shell_script(round_no)
    proc = subprocess.Popen([sys.executable, "-m", "nav", "shell", "--log", str(log)],
                            stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, env=env)
    out: list[str] = []
    t = threading.Thread(target=_reader, args=(proc.stdout, out), daemon=True)
    t.start()
    try:
        proc.stdin.write(("\n".join(lines) + "\n").encode())
        proc.stdin.flush()
    except BrokenPipeError:
        pass
    deadline = time.monotonic() + 30
    while not any("passage log" in s or "new passage log" in s for s in out):
        if proc.poll() is not None or time.monotonic() > deadline:
            break
        time.sleep(0.005)
    time.sleep(rng.uniform(0.0, 0.6))
    proc.kill()
    proc.wait()
    t.join(5)
    err = proc.stderr.read().decode("utf-8", "replace")
    # Which typed line did each "logged" answer? The shell answers lines in order, each line
    # that logs says "logged eNNNN" once; lines 0 and 1 (set, dr) log one entry each.
    confirmed = [m.group(1) for s in out for m in [LOGGED.search(s)] if m]
    return {"confirmed": confirmed, "expect": expect, "stderr": err, "out": out}


def check_shell_log(log: Path, confirmed: set[str], typed: set[tuple]) -> tuple[int, bool]:
    """(confirmed entries missing or not as typed, log usable)."""
    from nav.logbook import load_log

    try:
        loaded = load_log(log)
    except Exception:  # noqa: BLE001 - an unusable log is what we count
        return len(confirmed), False
    by_id = {e.id: e.to_dict() for e in loaded.entries}
    lost = 0
    for eid in confirmed:
        got = by_id.get(eid)
        if got is None:
            lost += 1
        elif got["kind"] == "sight" and ("sight", got.get("body"), got.get("hs")) not in typed:
            lost += 1
        elif got["kind"] == "note" and not any(t[0] == "note" and t[1] in str(got.get("text"))
                                               for t in typed):
            lost += 1
    return lost, True


def run_shell_kills(tmp: Path, kills: int, rng: random.Random, env: dict) -> dict:
    from nav.logbook import new_log

    log = tmp / "fulmar-crash.jsonl"
    new_log(log, VESSEL, "Crash run").close()
    confirmed: set[str] = set()
    typed: set[tuple] = set()
    failures = unusable = 0
    for r in range(kills):
        res = shell_round(log, r, rng, env)
        if "Traceback" in res["stderr"] or any("Traceback" in s for s in res["out"]):
            failures += 1
        confirmed |= set(res["confirmed"])
        for e in res["expect"].values():
            typed.add(("sight", e["body"], e["hs"]) if e["kind"] == "sight" else ("note", e["text"]))
        lost, usable = check_shell_log(log, confirmed, typed)
        unusable += not usable
    lost, usable = check_shell_log(log, confirmed, typed)
    return {"kills": kills, "confirmed_entries": len(confirmed), "entries_lost": lost,
            "logs_unusable": unusable + (not usable), "process_failures": failures}


def batch_csv(round_no: int, n: int = 20) -> tuple[str, set[str]]:
    rows = ["utc,body,hs,index_error,eye_height_m,dr_lat,dr_lon,course_deg,speed_kn"]
    times = set()
    for i in range(n):
        day = 1 + round_no % 28
        sec = (round_no * 131 + i * 11) % 86400
        utc = f"2026-07-{day:02d}T{sec // 3600:02d}:{sec // 60 % 60:02d}:{sec % 60:02d}Z"
        times.add(utc)
        dr = ",35 10.1 N,021 33.9 W,124,6.5" if i == 0 else ",,,,"
        rows.append(f"{utc},{STARS[i % len(STARS)]},{20 + i} {round_no % 60:02d}.{i % 10},+1.2,2.4{dr}")
    return "\n".join(rows) + "\n", times


def run_import_kills(tmp: Path, kills: int, rng: random.Random, env: dict) -> dict:
    from nav.logbook import load_log, new_log

    log = tmp / "fulmar-imports.jsonl"
    new_log(log, VESSEL, "Import crash run").close()
    partial = unusable = completed = none_kept = all_kept = failures = 0
    for r in range(kills):
        text, times = batch_csv(r)
        src = tmp / f"batch-{r}.csv"
        src.write_text(text, encoding="utf-8")
        proc = subprocess.Popen([sys.executable, "-m", "nav", "import", str(src), "--log", str(log)],
                                stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
        time.sleep(rng.uniform(0.2, 2.5))
        proc.kill()
        proc.wait()
        status = proc.returncode
        err = proc.stderr.read().decode("utf-8", "replace")
        if "Traceback" in err:
            failures += 1
        try:
            loaded = load_log(log)
        except Exception:  # noqa: BLE001
            unusable += 1
            continue
        got = sum(1 for e in loaded.entries
                  if e.kind == "sight" and str(e.to_dict().get("utc")) in times)
        if status == 0:
            completed += 1
        if got == len(times):
            all_kept += 1
        elif got == 0 and status != 0:
            none_kept += 1
        else:
            partial += 1
        try:                                   # the next open sets any unfinished batch aside
            from nav.logbook import PassageLog
            PassageLog.open(log).close()
        except Exception:  # noqa: BLE001
            unusable += 1
    return {"kills": kills, "imports_completed_before_kill": completed, "all_kept": all_kept,
            "none_kept": none_kept, "partial_imports": partial, "logs_unusable": unusable,
            "process_failures": failures}


def run(shell_kills: int, import_kills: int, seed: int) -> dict:
    rng = random.Random(seed)
    started = time.monotonic()
    with tempfile.TemporaryDirectory(prefix="nav-crash-") as tmpdir:
        tmp = Path(tmpdir)
        env = _env(tmp)
        shell = run_shell_kills(tmp, shell_kills, rng, env) if shell_kills else {}
        imports = run_import_kills(tmp, import_kills, rng, env) if import_kills else {}
    return {"seed": seed, "shell": shell, "imports": imports,
            "seconds": round(time.monotonic() - started, 1)}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--shell-kills", type=int, default=1000)
    ap.add_argument("--import-kills", type=int, default=100)
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument("--json", action="store_true")
    args = ap.parse_args(argv)
    figures = run(args.shell_kills, args.import_kills, args.seed)
    print(json.dumps(figures, indent=2))
    bad = (figures["shell"].get("entries_lost", 0) + figures["shell"].get("logs_unusable", 0)
           + figures["imports"].get("partial_imports", 0) + figures["imports"].get("logs_unusable", 0))
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
