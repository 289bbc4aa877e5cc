"""A log that shows tampering and damage (issue 7, item 6) and imports that are all or nothing
(item 5, the cases built by hand; tests/test_import_crash.py kills real writers).

- Every line carries a check: a hash chain (SHA-256, FIPS 180-4, truncated to 128 bits), each
  line's over the line before's check and its own canonical content. An edited, deleted,
  moved or inserted line is found on load and named by its line number.
- A value as typed is read again on load and must give the number stored beside it.
- ``nav review`` reads a damaged log without writing to it.
- A log file replaced under a running writer (renamed over) is caught before the next append;
  nothing goes into the detached file.
- Format version 1 logs (no checks) still load and can be appended to.

The chain's rule is our format's (common practice for append-only logs, no source); SHA-256 is
computed here with hashlib, independently of nav's own helper. Vessels and sights are invented.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
from pathlib import Path

import pytest

from nav.cli import main
from nav.errors import NavInputError
from nav.logbook import LogFormatError, LogWriteError, PassageLog, load_log, new_log

V1_DEMO = Path(__file__).resolve().parent / "data" / "v1-demo-passage.jsonl"


def sight(minute: int, hs: str = "33 19.7", hs_deg: float = 33 + 19.7 / 60, **over) -> dict:
    return {"kind": "sight", "body": "Vega", "utc": f"2026-06-20T21:{minute:02d}:15Z",
            "time_source": "utc", "hs": hs, "hs_deg": hs_deg, **over}


@pytest.fixture
def path(tmp_path):
    p = tmp_path / "gannet.jsonl"
    with new_log(p, "Gannet (invented)", "Integrity test") as lg:
        for m in range(5):
            lg.append(sight(m, hs=f"33 {10 + m}.0", hs_deg=33 + (10 + m) / 60))
        lg.append({"kind": "note", "text": "five stars, one after another"})
    return p


def lines(p: Path) -> list[bytes]:
    return p.read_bytes().split(b"\n")[:-1]


def write(p: Path, ls: list[bytes]) -> None:
    p.write_bytes(b"".join(x + b"\n" for x in ls))


def problems(p: Path) -> list[tuple[int, str, str]]:
    return [(q.line, q.field, q.severity) for q in load_log(p, strict=False).problems]


def test_every_line_carries_a_check_that_chains_to_the_line_before(path):
    # Recomputed with hashlib from the format's rule (nav/logschema.py module doc).
    previous = ""
    for raw in lines(path):
        o = json.loads(raw)
        canonical = json.dumps({k: v for k, v in o.items() if k != "check"}, sort_keys=True,
                               ensure_ascii=False, separators=(",", ":")).encode()
        want = hashlib.sha256(previous.encode() + b"\n" + canonical).hexdigest()[:32]
        assert o["check"] == want and list(o)[-1] == "check"
        previous = want
    assert problems(path) == []


def test_one_changed_digit_is_found_with_its_line(path):
    ls = lines(path)
    ls[3] = ls[3].replace(b'"hs_deg": 33.2', b'"hs_deg": 33.3')     # line 4, e0004
    write(path, ls)
    with pytest.raises(LogFormatError) as err:
        load_log(path)
    assert err.value.line == 4 and "not opened" in str(err.value)
    found = problems(path)
    assert (4, "check", "error") in found and (4, "hs_deg", "error") in found
    assert all(line == 4 for line, _, _ in found)          # the lines after still chain


def test_a_deleted_line_is_found_at_the_line_that_follows_it(path):
    ls = lines(path)
    del ls[2]                                              # e0003 goes
    write(path, ls)
    found = load_log(path, strict=False).problems
    assert [(q.line, q.field) for q in found] == [(3, "check")]
    assert "e0002 to e0004" in found[0].message


def test_moved_lines_are_found(path):
    ls = lines(path)
    ls[2], ls[3] = ls[3], ls[2]
    write(path, ls)
    assert {line for line, _, sev in problems(path) if sev == "error"} >= {3}
    with pytest.raises(LogFormatError):
        PassageLog.open(path)


def test_an_edit_that_recomputes_the_chain_is_still_caught_by_the_typed_value(path):
    # A careful editor who changes hs_deg and recomputes every check still leaves hs, as typed.
    ls = [json.loads(x) for x in lines(path)]
    ls[3]["hs_deg"] = 33.5
    previous = ""
    for o in ls:
        o.pop("check")
        c = json.dumps(o, sort_keys=True, ensure_ascii=False, separators=(",", ":")).encode()
        o["check"] = previous = hashlib.sha256(previous.encode() + b"\n" + c).hexdigest()[:32]
    write(path, [json.dumps(o, ensure_ascii=False).encode() for o in ls])
    assert problems(path) == [(4, "hs_deg", "error")]


def test_a_line_cut_short_is_a_torn_tail(path):
    data = path.read_bytes()
    path.write_bytes(data[:-25])
    log = load_log(path)
    assert log.torn_tail is not None and log.torn_tail.line == 7


def test_review_reads_a_damaged_log_without_writing(path, capsys):
    ls = lines(path)
    ls[4] = ls[4].replace(b"Vega", b"Deneb")
    write(path, ls)
    before, mtime = path.read_bytes(), os.stat(path).st_mtime_ns
    assert main(["review", str(path)]) == 1
    out = capsys.readouterr().out
    assert "line 5, field 'check'" in out and "read only" in out
    assert "Deneb" in out                          # the damaged log is still shown, line by line
    assert main(["review", str(path), "--json", "--problems"]) == 1
    doc = json.loads(capsys.readouterr().out)
    assert doc["problems"][0]["line"] == 5 and doc["entries"] == []
    assert path.read_bytes() == before and os.stat(path).st_mtime_ns == mtime
    with pytest.raises(LogFormatError):          # and it cannot be written to
        PassageLog.open(path)


def test_review_of_a_good_log_and_of_no_log(path, tmp_path, capsys):
    assert main(["review", str(path)]) == 0
    assert "0 error(s)" in capsys.readouterr().out
    other = tmp_path / "notes.txt"
    other.write_text("hello\n")
    assert main(["review", str(other)]) == 2
    assert "not a nav passage log" in capsys.readouterr().err


def test_a_log_renamed_over_is_caught_before_the_next_append(path):
    log = PassageLog.open(path)
    try:
        log.append({"kind": "note", "text": "before the editor saved"})
        detached = path.with_name("detached.jsonl")
        os.link(path, detached)                      # keep a name for the open file's inode
        held = detached.read_bytes()
        copy = path.with_name("edited.jsonl")
        shutil.copyfile(path, copy)
        os.replace(copy, path)                       # what an editor or a sync tool does
        with pytest.raises(LogWriteError, match="replaced"):
            log.append({"kind": "note", "text": "after"})
        assert detached.read_bytes() == held         # nothing went into the detached file
        with pytest.raises(LogWriteError, match="reopen"):
            log.append({"kind": "note", "text": "again"})
    finally:
        log.close()
    with PassageLog.open(path) as again:             # the new file is the log now
        again.append({"kind": "note", "text": "after reopening"})


def test_a_removed_log_is_caught_too(path):
    with PassageLog.open(path) as log:
        os.unlink(path)
        with pytest.raises(LogWriteError, match="removed or renamed"):
            log.append({"kind": "note", "text": "into the void"})


def test_the_shell_refuses_to_write_into_a_replaced_log(path):
    from io import StringIO

    from nav.shell.state import ShellState

    log = PassageLog.open(path)
    buf = StringIO()
    st = ShellState(log, out=buf, err=buf)
    try:
        copy = path.with_name("synced.jsonl")
        shutil.copyfile(path, copy)
        os.replace(copy, path)
        before = path.read_bytes()
        st.dispatch("note the log was synced behind our back")
        assert "replaced" in buf.getvalue()
        assert path.read_bytes() == before
    finally:
        log.close()


# ---------------------------------------------------------------- format version 1

def test_a_version_1_log_loads_as_it_is_with_a_note(tmp_path):
    log = load_log(V1_DEMO)
    assert log.version == 1 and len(log.entries) == 63 and not log.errors
    (note,) = log.problems
    assert note.severity == "note" and "version 1" in note.message


def test_a_version_1_log_takes_checked_entries_that_cover_what_came_before(tmp_path):
    p = tmp_path / "v1.jsonl"
    shutil.copyfile(V1_DEMO, p)
    with PassageLog.open(p) as lg:
        e = lg.append({"kind": "note", "text": "appended by a newer nav"})
    assert json.loads(lines(p)[-1])["check"] == e.check
    assert not load_log(p).errors
    ls = lines(p)
    ls[10] = ls[10].replace(b'"kind": "sight"', b'"kind": "sight" ', 1)   # no change of content
    write(p, ls)
    assert not load_log(p).errors                 # the check covers content, not spacing
    ls[10] = ls[10].replace(b'"Sun"', b'"Moon"', 1) if b'"Sun"' in ls[10] else \
        ls[10].replace(b'"body": "', b'"body": "X', 1)
    write(p, ls)
    bad = load_log(p, strict=False).errors        # an old line edited after the chain began
    assert [q.line for q in bad] == [64]


# ---------------------------------------------------------------- imports: all or nothing

def test_an_import_cut_off_at_a_line_boundary_counts_for_nothing(path, capsys):
    with PassageLog.open(path) as lg:
        added = lg.append_many([sight(m, hs=f"40 {m:02d}.0", hs_deg=40 + m / 60,
                                      source=f"deck.csv row {m - 9}") for m in range(10, 14)])
    assert added[0].batch == 4 and all(e.batch is None for e in added[1:])
    whole = path.read_bytes()
    ls = lines(path)
    write(path, ls[:-2])                           # a crash after two of the four lines
    cut = path.read_bytes()
    log = load_log(path)                           # strict: a cut-off import is no error
    assert [e.id for e in log.entries][-1] == "e0007"
    (warn,) = [q for q in log.problems if q.severity == "warning"]
    assert warn.line == 8 and "cut off after 2 of them" in warn.message
    assert "none of them counts" in warn.message
    assert log.torn_tail.data == cut[len(b"".join(x + b"\n" for x in ls[:7])):]
    with PassageLog.open(path) as lg:
        assert lg.set_aside.read_bytes() == log.torn_tail.data
        repair = lg.effective_entries("repair")[-1]
        assert "cut off after 2" in repair["note"]
        assert repair.id == "e0010"                # ids seen in the cut tail are not reused
    assert whole.startswith(path.read_bytes()[:len(cut) - len(log.torn_tail.data)])
    assert len(load_log(path).effective_entries("sight")) == 5


def test_nav_import_reports_a_cut_off_import_on_the_next_open(path, tmp_path, capsys):
    with PassageLog.open(path) as lg:
        lg.append_many([sight(m, hs=f"41 {m:02d}.0", hs_deg=41 + m / 60) for m in range(20, 23)])
    write(path, lines(path)[:-1])
    deck = tmp_path / "deck.csv"
    deck.write_text("utc,body,hs,dr_lat,dr_lon\n"
                    "2026-06-20T22:40:00Z,Deneb,50 10.0,35 10.1 N,021 33.9 W\n", encoding="utf-8")
    assert main(["import", str(deck), "--log", str(path)]) == 0
    err = capsys.readouterr().err
    assert "caution" in err and "cut off after 2 of them" in err


def test_typed_values_are_checked_when_written_too(tmp_path):
    with new_log(tmp_path / "t.jsonl", "Tern (invented)", "typed") as lg:
        with pytest.raises(NavInputError, match="'33 19.7' as typed reads 33.32833333"):
            lg.append(sight(1, hs_deg=33.5))
        # an artificial horizon's reading (the double altitude) may be stored as read or halved
        lg.append(sight(2, hs="101 20.0", hs_deg=(101 + 20 / 60) / 2, horizon="artificial"))
        lg.append(sight(3, hs="101 20.0", hs_deg=101 + 20 / 60, horizon="artificial"))
    assert problems(tmp_path / "t.jsonl") == []


def test_typed_text_that_no_longer_reads_is_a_note_not_an_error(path):
    ls = [json.loads(x) for x in lines(path)]
    ls[1]["hs"] = "thirty-three"                  # e.g. a notation an older nav accepted
    previous = ""
    for o in ls:
        o.pop("check")
        c = json.dumps(o, sort_keys=True, ensure_ascii=False, separators=(",", ":")).encode()
        o["check"] = previous = hashlib.sha256(previous.encode() + b"\n" + c).hexdigest()[:32]
    write(path, [json.dumps(o, ensure_ascii=False).encode() for o in ls])
    assert problems(path) == [(2, "hs", "note")]
    PassageLog.open(path).close()                 # a note stops nothing


def test_review_shows_a_setting_in_navigator_words_not_stored_key_names(capsys):
    # The demo log's first setting: eye 2.4 m, IE +1.2' on the arc, watch 6 s fast, ZD +2
    # (sight_logs/demo-azores-madeira.jsonl, invented). Stored key names are the file's, not
    # the reader's: they must not reach the screen (project rule).
    demo = Path(__file__).resolve().parent.parent / "sight_logs" / "demo-azores-madeira.jsonl"
    assert main(["review", str(demo)]) == 0
    line = next(x for x in capsys.readouterr().out.splitlines() if " e0003 " in x)
    assert "eye 2.40 m" in line and "IE +1.2′" in line and "watch 6 s fast" in line
    assert "_arcmin" not in line and "eye_height_m" not in line
