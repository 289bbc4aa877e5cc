"""The passage log (nav/logbook.py): format, append-only writing, strikes and corrections,
schema errors with line numbers, torn tails, limits.

The format is our own, so most expectations are the format's own rules (common practice, no
source). Where an outside rule is relied on, it is named: JSON (RFC 8259, no NaN/Infinity
literals), UTF-8 (RFC 3629: bytes 0xC0, 0xC1 and 0xF5-0xFF never occur), JSON Lines (one value
per line, from memory of the jsonlines.org description). Vessels and passages are invented.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import stat
from datetime import datetime, timedelta, timezone

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from nav.errors import NavInputError
from nav.logbook import (FORMAT, MAX_LOG_BYTES, LogFormatError, LogWriteError, PassageLog,
                         load_log, new_log)

UTC = timezone.utc


def sight(**over) -> dict:
    """A valid sight entry (invented values)."""
    e = {"kind": "sight", "body": "Sun", "utc": "2026-03-20T18:42:10Z", "time_source": "watch",
         "time_text": "2026-03-20 15:42:22", "zone_description": "+3", "zone_description_h": 3,
         "watch_error": "12 fast", "watch_error_s": 12.0, "hs": "34 12.3", "hs_deg": 34.205,
         "limb": "lower", "eye_height": "2.5 m", "eye_height_m": 2.5}
    e.update(over)
    return {k: v for k, v in e.items() if v is not None}


def replacement(**over) -> dict:
    return {k: v for k, v in sight(**over).items() if k != "kind"}


def fields_of(entry) -> dict:
    return {k: v for k, v in entry.to_dict().items() if k not in ("id", "kind", "logged_utc")}


@pytest.fixture
def path(tmp_path):
    return tmp_path / "kittiwake-azores.jsonl"


@pytest.fixture
def log(path):
    with new_log(path, "Kittiwake (invented)", "Horta to Ponta Delgada (invented)") as lg:
        yield lg


def lines_of(path) -> list[dict]:
    return [json.loads(s) for s in path.read_text(encoding="utf-8").splitlines()]


def write_log(path, *objs, raw_tail: bytes = b"") -> bytes:
    """A log written by hand: a header, the given entries (dicts or raw bytes), then raw bytes."""
    header = {"id": "e0001", "kind": "passage", "logged_utc": "2026-03-20T08:00:00Z",
              "format": FORMAT, "format_version": 1, "passage_uid": "0123456789abcdef",
              "vessel": "Petrel (invented)", "title": "Test passage"}
    out = b""
    for o in (header, *objs):
        out += o if isinstance(o, bytes) else (json.dumps(o) + "\n").encode()
    out += raw_tail
    path.write_bytes(out)
    return out


def note(eid: str, text: str = "a note") -> dict:
    return {"id": eid, "kind": "note", "logged_utc": "2026-03-20T09:00:00Z", "text": text}


# ---------------------------------------------------------------- creating and appending

def test_new_log_writes_only_the_header(path, log):
    (header,) = lines_of(path)
    assert list(header)[:3] == ["id", "kind", "logged_utc"]      # fixed key order (our format)
    assert header["kind"] == "passage" and header["format"] == "nav-passage-log"
    assert header["format_version"] == 2 and header["id"] == "e0001"
    assert header["vessel"] == "Kittiwake (invented)"
    assert len(header["passage_uid"]) == 16
    assert path.read_bytes().endswith(b"\n") and path.read_bytes().count(b"\n") == 1
    assert datetime.fromisoformat(header["logged_utc"].replace("Z", "+00:00")).tzinfo
    assert log.header.data["title"] == "Horta to Ponta Delgada (invented)"


def test_new_log_never_overwrites(path, log):
    before = path.read_bytes()
    with pytest.raises(NavInputError) as err:
        new_log(path, "Other", "Other")
    assert err.value.field == "path" and "never overwritten" in str(err.value)
    assert path.read_bytes() == before
    other = path.with_name("notes.jsonl")
    other.write_text("someone's file\n")
    with pytest.raises(NavInputError):
        new_log(other, "Other", "Other")
    assert other.read_text() == "someone's file\n"


def test_new_log_checks_its_header_fields(tmp_path):
    with pytest.raises(NavInputError) as err:
        new_log(tmp_path / "x.jsonl", "", "A title")
    assert err.value.field == "vessel"
    assert not (tmp_path / "x.jsonl").exists()


def test_new_log_reports_a_file_system_error_in_one_line(tmp_path):
    (tmp_path / "plain-file").write_text("x")
    with pytest.raises(LogWriteError, match="could not be created"):
        new_log(tmp_path / "plain-file" / "p.jsonl", "Petrel (invented)", "t")


def test_append_writes_then_fsyncs_before_returning(path, log, monkeypatch):
    events = []
    real_write, real_fsync = os.write, os.fsync
    monkeypatch.setattr(os, "write", lambda fd, b: events.append(("write", fd)) or real_write(fd, b))
    monkeypatch.setattr(os, "fsync", lambda fd: events.append(("fsync", fd)) or real_fsync(fd))
    entry = log.append(sight())
    # one write of the whole line, then an fsync of the same file, both before append returned
    assert [e[0] for e in events] == ["write", "fsync"] and events[0][1] == events[1][1]
    assert lines_of(path)[-1]["id"] == entry.id
    assert path.read_bytes().endswith(b"\n")


def test_new_log_fsyncs_file_and_directory(tmp_path, monkeypatch):
    kinds = []
    real_fsync = os.fsync
    monkeypatch.setattr(os, "fsync", lambda fd: kinds.append(
        "dir" if stat.S_ISDIR(os.fstat(fd).st_mode) else "file") or real_fsync(fd))
    new_log(tmp_path / "p.jsonl", "Petrel (invented)", "t").close()
    assert kinds[:2] == ["file", "dir"]       # the header is durable, then its directory entry


def test_ids_are_unique_and_continue_after_reopening(path, log):
    ids = [log.append(sight(utc=f"2026-03-20T18:4{i}:10Z")).id for i in range(3)]
    assert ids == ["e0002", "e0003", "e0004"]
    log.close()
    with PassageLog.open(path) as again:
        assert again.next_id() == "e0005"
        assert again.append({"kind": "note", "text": "reopened"}).id == "e0005"
    all_ids = [o["id"] for o in lines_of(path)]
    assert all_ids == sorted(all_ids) and len(set(all_ids)) == len(all_ids)


def test_a_second_writer_is_refused(path, log):
    with pytest.raises(LogFormatError) as err:
        PassageLog.open(path)
    assert "another nav session" in str(err.value)
    log.close()
    PassageLog.open(path).close()            # free again once closed


def test_values_as_typed_are_kept_beside_parsed_values(path, log):
    e = log.append(sight())
    (back,) = load_log(path).effective_entries("sight")
    assert back.id == e.id and {"kind": "sight", **fields_of(back)} == sight()  # nothing lost
    assert back["hs"] == "34 12.3" and back["hs_deg"] == 34.205
    assert back["watch_error"] == "12 fast" and back["watch_error_s"] == 12.0


def test_datetimes_are_stored_as_iso_8601_utc(path, log):
    t = datetime(2026, 3, 20, 15, 42, 10, 500000, tzinfo=timezone(timedelta(hours=-3)))
    e = log.append(sight(utc=t))
    assert e["utc"] == "2026-03-20T18:42:10.5Z"           # -03:00 + 3 h = UTC (ISO 8601)
    with pytest.raises(NavInputError) as err:
        log.append(sight(utc=datetime(2026, 3, 20, 18, 42)))
    assert err.value.field == "utc"


BAD_ENTRIES = [
    (sight(hs_deg=None), "hs_deg", "is missing"),
    (sight(hs="34 12.3", hs_deg="34.205"), "hs_deg", "must be a number"),
    (sight(hs_deg=float("nan")), "hs_deg", "finite"),
    (sight(hs_deg=float("inf")), "hs_deg", "finite"),
    (sight(hs_deg=181.0), "hs_deg", "outside"),
    (sight(hs_deg=True), "hs_deg", "must be a number"),
    (sight(limb="middle"), "limb", "one of"),
    (sight(body=""), "body", "empty"),
    (sight(body="S" * 41), "body", "limit is 40"),
    (sight(note="ring the bell\x07"), "note", "U+0007"),
    (sight(note="abc\u202edcba"), "note", "U+202E"),
    (sight(hsdeg=34.2), "hsdeg", "not a field"),
    (sight(eye_height_m=None), "eye_height_m", "as typed"),
    (sight(zone_description=None, zone_description_h=None), "zone_description_h", "watch"),
    (sight(utc="2026-03-20 18:42:10"), "utc", "ISO 8601"),
    (sight(utc="2026-02-30T18:42:10Z"), "utc", "calendar"),
    (sight(dr_lat="41 12.5 N", dr_lat_deg=41.2083), "dr_lon_deg", "go together"),
    ({"kind": "waypoint", "text": "x"}, "kind", "unknown kind"),
    ({"text": "x"}, "kind", "is missing"),
    ({"kind": "note", "text": "x", "id": "e0099"}, "id", "assigned by the log"),
    ({"kind": "note", "text": "x" * 4001}, "text", "limit is 4000"),
    ({"kind": "setting", "note": "nothing set"}, None, "at least one value"),
    ({"kind": "dr", "utc": "2026-03-20T19:00:00Z"}, None, "needs a position"),
    ({"kind": "dr", "utc": "2026-03-20T19:00:00Z", "course": "095", "course_deg": 360.0},
     "course_deg", "exclusive"),
    ({"kind": "strike", "target": "e0042", "reason": "typo"}, "target", "not an earlier entry"),
    ({"kind": "strike", "target": "e0001", "reason": "typo"}, "target", "cannot be superseded"),
    ({"kind": "strike", "target": "e0002"}, "reason", "is missing"),
    ({"kind": "fix", "utc": "2026-03-20T19:00:00Z", "lat_deg": 38.5, "lon_deg": -28.6,
      "fix_kind": "fix", "sight_ids": []}, "sight_ids", "1 to"),
]


@pytest.mark.parametrize("entry, field, words", BAD_ENTRIES)
def test_bad_entries_are_refused_naming_the_field_and_nothing_is_written(path, log, entry, field,
                                                                         words):
    log.append(sight())                      # e0002, so that e0002 exists as a target
    before = path.read_bytes()
    with pytest.raises(NavInputError) as err:
        log.append(entry)
    assert err.value.field == field and words in str(err.value)
    assert path.read_bytes() == before


def test_values_that_cannot_be_stored_are_refused(path, log):
    with pytest.raises(NavInputError) as err:
        log.append(sight(note=object()))
    assert err.value.field == "note"


# ---------------------------------------------------------------- strikes and corrections

def test_strikes_and_corrections_give_the_effective_view_and_keep_history(path, log):
    a, b, c = (log.append(sight(body=name)) for name in ("Sun", "Venus", "Sirius"))
    s = log.strike(b.id, "took Jupiter for Venus")
    c1 = log.correct(c.id, "misread the drum", {"hs": "41 21.3", "hs_deg": 41.355})
    c2 = log.correct(c.id, "misread again", {"hs": "41 12.3", "hs_deg": 41.205, "note": "ok"})
    for view in (log, load_log(path)):                    # in memory and after reloading
        eff = view.effective_entries("sight")
        assert [e.id for e in eff] == [a.id, c.id]
        now = eff[1]
        assert now["hs_deg"] == 41.205 and now["note"] == "ok" and now.revised_by == c2.id
        assert now["body"] == "Sirius"                    # fields not changed are carried over
        assert [e.id for e in view.history_of(c.id)] == [c.id, c1.id, c2.id]
        assert [e.id for e in view.history_of(c1.id)] == [c.id, c1.id, c2.id]
        assert [e.id for e in view.history_of(b.id)] == [b.id, s.id]
        assert view.entry_by_id(b.id)["body"] == "Venus"  # the struck entry is still there
        assert view.effective_by_id(b.id) is None
        assert view.entry_by_id(c.id)["hs_deg"] == 34.205
    assert [o["kind"] for o in lines_of(path)] == ["passage"] + ["sight"] * 3 + [
        "strike", "correct", "correct"]                   # nothing rewritten, only appended


def test_correction_can_remove_a_field(path, log):
    e = log.append(sight(note="cloud"))
    log.correct(e.id, "note was for the next sight", {"note": None})
    assert "note" not in log.effective_by_id(e.id).data


def test_supersession_rules(path, log):
    e = log.append(sight())
    st_ = log.strike(e.id, "wrong body")
    with pytest.raises(NavInputError, match="already struck"):
        log.strike(e.id, "again")
    with pytest.raises(NavInputError, match="already struck"):
        log.append({"kind": "correct", "target": e.id, "reason": "x", "replacement": replacement()})
    with pytest.raises(NavInputError, match=f"name {e.id} instead"):
        log.strike(st_.id, "undo")
    with pytest.raises(NavInputError, match="not an entry that stands"):
        log.correct(e.id, "x", {"hs_deg": 1.0})
    f = log.append(sight())
    with pytest.raises(NavInputError) as err:
        log.append({"kind": "correct", "target": f.id, "reason": "x",
                    "replacement": replacement(hs_deg=200.0)})
    assert err.value.field == "replacement.hs_deg"
    g = log.append({"kind": "setting", "eye_height": "3 m", "eye_height_m": 3.0})
    with pytest.raises(NavInputError) as err:
        log.correct(g.id, "x", {"hs_deg": 30.0})
    assert err.value.field == "replacement.hs_deg" and "not a field of a setting" in str(err.value)


def test_fix_entries_name_sights_of_this_log(path, log):
    s1, s2 = log.append(sight()), log.append(sight(body="Venus"))
    d = log.append({"kind": "dr", "utc": "2026-03-20T19:00:00Z", "lat": "38 30.0 N",
                    "lat_deg": 38.5, "lon": "028 36.0 W", "lon_deg": -28.6})
    fix = {"kind": "fix", "utc": "2026-03-20T19:00:00Z", "lat_deg": 38.51, "lon_deg": -28.62,
           "fix_kind": "fix", "sight_ids": [s1.id, s2.id], "method": "least squares",
           "ellipse_semi_major_nmi": 1.2, "ellipse_semi_minor_nmi": 0.5,
           "ellipse_orientation_deg": 45.0, "ellipse_confidence": 0.95,
           "warnings": ["narrow angle of cut"]}
    e = log.append(fix)
    assert load_log(path).entry_by_id(e.id)["sight_ids"] == (s1.id, s2.id)
    for bad, field in (({"sight_ids": [s1.id, d.id]}, "sight_ids"),
                       ({"sight_ids": [s1.id, s1.id]}, "sight_ids"),
                       ({"ellipse_semi_minor_nmi": 2.0}, "ellipse_semi_minor_nmi"),
                       ({"ellipse_semi_major_nmi": None}, "ellipse_semi_major_nmi")):
        with pytest.raises(NavInputError) as err:
            log.append({**fix, **bad})
        assert err.value.field == field


# ---------------------------------------------------------------- batches

def test_append_many_checks_everything_before_writing(path, log):
    before = path.read_bytes()
    with pytest.raises(NavInputError) as err:
        log.append_many([sight(), sight(body="Venus"), sight(hs_deg=None)])
    assert "entry 3 of 3" in str(err.value) and err.value.field == "hs_deg"
    assert path.read_bytes() == before and log.next_id() == "e0002"


def test_append_many_is_one_write_and_one_fsync(path, log, monkeypatch):
    calls = []
    real_fsync = os.fsync
    monkeypatch.setattr(os, "fsync", lambda fd: calls.append(fd) or real_fsync(fd))
    batch = [sight(body=b) for b in ("Sun", "Venus", "Jupiter")]
    batch.append({"kind": "fix", "utc": "2026-03-20T19:00:00Z", "lat_deg": 38.5,
                  "lon_deg": -28.6, "fix_kind": "fix", "sight_ids": ["e0002", "e0003", "e0004"]})
    entries = log.append_many(batch)
    assert [e.id for e in entries] == ["e0002", "e0003", "e0004", "e0005"]
    assert entries[0].batch == 4 and entries[1].batch is None   # the first names the batch
    assert len(calls) == 1
    assert [o["id"] for o in lines_of(path)][1:] == ["e0002", "e0003", "e0004", "e0005"]


def test_size_limit_refuses_an_append_that_would_pass_it(tmp_path):
    p = tmp_path / "small.jsonl"
    with new_log(p, "Petrel (invented)", "t", max_bytes=1024) as lg:
        lg.append({"kind": "note", "text": "x" * 200})
        before = p.read_bytes()
        with pytest.raises(NavInputError, match="limit"):
            lg.append({"kind": "note", "text": "x" * 900})
        assert p.read_bytes() == before


def test_closed_or_changed_log_refuses_appends(path, log):
    with open(path, "ab") as f:                # something else appends behind nav's back
        f.write((json.dumps(note("e0002")) + "\n").encode())
    before = path.read_bytes()
    with pytest.raises(LogWriteError, match="changed by something else"):
        log.append(sight())
    assert path.read_bytes() == before
    log.close()
    with pytest.raises(LogWriteError, match="closed"):
        log.append(sight())


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(text=st.text(st.characters(blacklist_categories=("Cc", "Cs")), min_size=1, max_size=300)
       .filter(lambda s: s.strip() and not any(0x202a <= ord(c) <= 0x202e or
                                                0x2066 <= ord(c) <= 0x2069 for c in s)),
       hs_deg=st.floats(-1, 180), eye=st.floats(0, 100))
def test_round_trip_of_text_and_numbers(tmp_path_factory, text, hs_deg, eye):
    # Property (common practice, no source): what is appended loads back exactly; JSON keeps
    # floats exactly through repr (RFC 8259 numbers, Python's shortest round-trip repr).
    p = tmp_path_factory.mktemp("rt") / "rt.jsonl"
    with new_log(p, "Petrel (invented)", "round trip") as lg:
        # the typed text must read as the number beside it (17 decimals give the float back)
        e = lg.append(sight(note=text[:1000], hs=f"{hs_deg:.17f}", hs_deg=hs_deg,
                            eye_height=f"{eye:.17f}", eye_height_m=eye))
    back = load_log(p).entry_by_id(e.id)
    assert back.to_dict() == e.to_dict()
    assert back["note"] == text[:1000] and back["hs_deg"] == hs_deg and back["eye_height_m"] == eye


# ---------------------------------------------------------------- the log's clock and uid

T0 = datetime(2026, 3, 20, 8, 0, tzinfo=UTC)          # an invented passage's morning


class Steps:
    """A clock for these tests: T0, then one minute later at every call; counts its calls."""

    def __init__(self):
        self.calls = 0

    def __call__(self) -> datetime:
        self.calls += 1
        return T0 + timedelta(minutes=self.calls - 1)


def test_a_given_clock_stamps_every_logged_utc(path):
    # The format's rule (common practice, no source): logged_utc is when the entry was written,
    # so the clock is read once per entry, in file order, batches included.
    clock = Steps()
    with new_log(path, "Kittiwake (invented)", "clock test", clock=clock) as lg:
        s = lg.append(sight())
        batch = lg.append_many([sight(body="Venus"), {"kind": "note", "text": "in one batch"}])
        lg.strike(s.id, "wrong body")
        lg.correct(batch[0].id, "misread the drum", {"hs": "34 21.3", "hs_deg": 34.355})
    want = [f"2026-03-20T08:0{m}:00Z" for m in range(6)]
    assert [o["logged_utc"] for o in lines_of(path)] == want and clock.calls == 6
    assert [e.logged_utc for e in load_log(path).entries] == want
    with PassageLog.open(path, clock=lambda: T0 + timedelta(hours=1)) as lg:   # reopened
        assert lg.append({"kind": "note", "text": "later"}).logged_utc == "2026-03-20T09:00:00Z"


def test_a_clock_in_another_zone_is_written_in_utc_to_the_second(path):
    zone = timezone(timedelta(hours=-3))
    with new_log(path, "Kittiwake (invented)", "zone test",
                 clock=lambda: datetime(2026, 3, 20, 5, 0, 0, 600_000, tzinfo=zone)):
        pass
    # 05:00:00.6 at -03:00 is 08:00:00.6 UTC (ISO 8601 offsets); logged to the nearest second,
    # as nav.timekeeping.format_utc writes every logged_utc (common practice, no source)
    assert lines_of(path)[0]["logged_utc"] == "2026-03-20T08:00:01Z"


def test_the_repair_of_a_torn_tail_is_stamped_by_the_clock(path):
    write_log(path, GOOD, raw_tail=b'{"id": "e0003", "ki')
    with PassageLog.open(path, clock=lambda: T0 + timedelta(hours=2)) as lg:
        (repair,) = lg.effective_entries("repair")
        assert repair.logged_utc == "2026-03-20T10:00:00Z"
        assert lg.set_aside.name == path.name + ".torn-20260320T100000Z"   # the same instant


@pytest.mark.parametrize("value, words", [
    (datetime(2026, 3, 20, 8, 0), "without a time zone"),           # naive
    ("2026-03-20T08:00:00Z", "a str"),
    (1774000000.0, "a float"),
])
def test_a_clock_that_gives_no_aware_datetime_is_refused(tmp_path, value, words):
    p = tmp_path / "p.jsonl"
    with pytest.raises(NavInputError) as err:
        new_log(p, "Petrel (invented)", "t", clock=lambda: value)
    assert err.value.field == "clock" and words in str(err.value)
    assert "aware UTC datetime" in str(err.value) and "tzinfo=timezone.utc" in str(err.value)
    assert not p.exists()                                          # no header without a time


def test_a_naive_clock_refuses_the_append_and_writes_nothing(path, log):
    log.close()
    before = path.read_bytes()
    with PassageLog.open(path, clock=lambda: datetime(2026, 3, 20, 9, 0)) as lg:
        for attempt in (lambda: lg.append(sight()), lambda: lg.append_many([sight()] * 2)):
            with pytest.raises(NavInputError) as err:
                attempt()
            assert err.value.field == "clock" and "without a time zone" in str(err.value)
        assert lg.next_id() == "e0002"
    assert path.read_bytes() == before
    with pytest.raises(NavInputError, match="must be callable") as err:
        PassageLog.open(path, clock=T0)
    assert err.value.field == "clock"
    PassageLog.open(path).close()            # the refused open left no lock behind


def test_without_a_clock_the_wall_clock_is_used(path):
    before = datetime.now(UTC)
    with new_log(path, "Kittiwake (invented)", "wall clock") as lg:
        first = lg.append(sight())
    with PassageLog.open(path) as lg:        # the clock is not kept in the file
        second = lg.append(sight(body="Venus"))
    after = datetime.now(UTC)
    for stamp in (lines_of(path)[0]["logged_utc"], first.logged_utc, second.logged_utc):
        t = datetime.fromisoformat(stamp.replace("Z", "+00:00"))
        # to the nearest second (format_utc), so within half a second of the interval
        assert before - timedelta(seconds=0.5) <= t <= after + timedelta(seconds=0.5), stamp
    with new_log(path.with_name("fixed.jsonl"), "Kittiwake (invented)", "fixed", clock=Steps()):
        pass
    with PassageLog.open(path.with_name("fixed.jsonl")) as lg:
        t = datetime.fromisoformat(lg.append(sight()).logged_utc.replace("Z", "+00:00"))
        assert t >= before - timedelta(seconds=0.5)     # not the clock the log was made with


def test_a_given_passage_uid_is_kept_and_checked_like_the_header(tmp_path):
    with new_log(tmp_path / "a.jsonl", "Petrel (invented)", "t", passage_uid="0123456789abcdef",
                 software="nav test writer") as lg:
        assert lg.header["passage_uid"] == "0123456789abcdef"
        assert lg.header["software"] == "nav test writer"
    # the header schema: 16 lower-case hexadecimal digits (our format, common practice)
    for bad, words in (("0123456789ABCDEF", "lower-case"), ("0123456789abcde", "16"),
                       ("0123456789abcdeg", "hexadecimal"), ("0123456789abcdef0", "16"),
                       ("", "16"), (123, "must be text")):
        p = tmp_path / "b.jsonl"
        with pytest.raises(NavInputError) as err:
            new_log(p, "Petrel (invented)", "t", passage_uid=bad)
        assert err.value.field == "passage_uid" and words in str(err.value)
        assert "0123456789abcdef" in str(err.value)                    # an accepted example
        assert not p.exists()
    uids = []
    for name in ("c.jsonl", "d.jsonl"):      # the default: random, 64 bits, so never the same
        with new_log(tmp_path / name, "Petrel (invented)", "t") as lg:
            uids.append(lg.header["passage_uid"])
            assert lg.header["software"].startswith("nav ")
    assert all(re.fullmatch("[0-9a-f]{16}", u) for u in uids) and uids[0] != uids[1]


# ---------------------------------------------------------------- loading: errors with line numbers

GOOD = note("e0002")
BAD_LINES = [
    ({"id": "e0003", "kind": "waypoint", "logged_utc": "2026-03-20T09:00:00Z"}, "kind",
     "unknown kind"),
    ({"id": "e0003", "kind": "note", "logged_utc": "2026-03-20T09:00:00Z"}, "text", "is missing"),
    ({**note("e0003"), "text": 42}, "text", "must be text"),
    ({**note("e0003"), "utc": "yesterday"}, "utc", "ISO 8601"),
    (note("e0002"), "id", "duplicate id e0002"),
    (note("e0001x"), "id", "entry id"),
    ({"id": "e0003", "kind": "strike", "logged_utc": "2026-03-20T09:00:00Z",
      "target": "e0077", "reason": "typo"}, "target", "not an earlier entry"),
    ({"id": "e0003", "kind": "passage", "logged_utc": "2026-03-20T09:00:00Z",
      "format": FORMAT, "format_version": 1, "passage_uid": "0123456789abcdef", "vessel": "v",
      "title": "t"}, "kind", "second passage header"),
    (b'{"id": "e0003", "kind": "note", \n', None, "not valid JSON"),
    (b'{"id": "e0003", "kind": "note", "logged_utc": "2026-03-20T09:00:00Z", "text": "caf\xe9"}\n',
     None, "not UTF-8"),                                           # RFC 3629: a lone 0xE9
    (b'{"id": "e0003", "id": "e0004", "kind": "note"}\n', None, "appears twice"),
    (b'{"id": "e0003", "kind": "setting", "logged_utc": "2026-03-20T09:00:00Z", '
     b'"eye_height": "NaN", "eye_height_m": NaN}\n', None, "NaN"),  # RFC 8259: no NaN
    (b'["e0003", "note"]\n', None, "not a JSON object"),
    (b"\n", None, "empty line"),
    (b'{"id": "e0003", "kind": "note", "logged_utc": "2026-03-20T09:00:00Z", "text": "'
     + b"x" * 70000 + b'"}\n', None, "bytes long"),
]


@pytest.mark.parametrize("bad, field, words", BAD_LINES)
def test_a_bad_line_in_the_middle_is_an_error_with_its_line_number(path, bad, field, words):
    later = note("e0009", "after the bad line")
    data = write_log(path, GOOD, bad, later)
    with pytest.raises(LogFormatError) as err:            # strict (the default): refused
        load_log(path)
    assert err.value.line == 3 and err.value.field == field
    assert "line 3" in str(err.value) and words in str(err.value)
    lenient = load_log(path, strict=False)                # for review: good lines, and the problem
    assert [p.line for p in lenient.errors] == [3] and lenient.errors[0].field == field
    assert [e.id for e in lenient.entries] == ["e0001", "e0002", "e0009"]
    with pytest.raises(LogFormatError):                   # never opened for writing
        PassageLog.open(path)
    assert path.read_bytes() == data


def test_problems_are_counted_in_the_strict_message(path):
    write_log(path, GOOD, note("e0002"), {**note("e0005"), "text": ""})
    with pytest.raises(LogFormatError, match=r"line 3.*\(1 more problems\)"):
        load_log(path)


def test_ids_must_increase(path):
    write_log(path, note("e0005"), note("e0003"))
    with pytest.raises(LogFormatError, match="ids must increase") as err:
        load_log(path)
    assert err.value.line == 3


HEADER_CASES = [
    (b"", "empty"),
    (b'{"kind": "note"}\n', "not its header"),
    (b"id,body,utc,hs\n1,Sun,2026-03-20T18:42:10Z,34 12.3\n", "not valid JSON"),
    (b'{"id": "e0001", "kind": "passage", "logged_utc": "2026-03-20T08:00:00Z", '
     b'"format": "some-other-format", "format_version": 1}\n', "not its header"),
    (b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x00\x10", "not UTF-8"),
    ("Journal de bord, été 2026\n".encode("latin-1"), "not UTF-8"),   # RFC 3629
]


@pytest.mark.parametrize("data, words", HEADER_CASES)
def test_a_file_that_is_not_a_passage_log_is_refused(path, data, words):
    path.write_bytes(data)
    for strict in (True, False):                          # even the lenient reader refuses it
        with pytest.raises(LogFormatError) as err:
            load_log(path, strict=strict)
        assert err.value.line == 1 and words in str(err.value)


def test_format_version_is_checked(path):
    data = write_log(path)
    path.write_bytes(data.replace(b'"format_version": 1', b'"format_version": 3'))
    with pytest.raises(LogFormatError, match="newer nav") as err:
        load_log(path)
    assert err.value.field == "format_version"
    path.write_bytes(data.replace(b'"format_version": 1', b'"format_version": "1"'))
    with pytest.raises(LogFormatError, match="reads versions 1 and 2"):
        load_log(path)


def test_a_byte_order_mark_is_tolerated(path):
    path.write_bytes(b"\xef\xbb\xbf" + write_log(path, GOOD))
    assert [e.id for e in load_log(path).entries] == ["e0001", "e0002"]


def test_an_oversize_file_is_refused_unread(path):
    write_log(path, GOOD)
    os.truncate(path, MAX_LOG_BYTES + 1)                  # sparse: quick to make
    with pytest.raises(LogFormatError, match="50 MB limit"):
        load_log(path)
    with pytest.raises(LogFormatError, match="50 MB limit"):
        PassageLog.open(path)
    assert os.path.getsize(path) == MAX_LOG_BYTES + 1     # and left as it was


def test_missing_file(tmp_path):
    with pytest.raises(LogFormatError, match="no such passage log"):
        load_log(tmp_path / "nowhere.jsonl")


# ---------------------------------------------------------------- torn tails

def test_torn_tail_is_reported_then_set_aside_not_lost(path):
    torn = b'{"id": "e0004", "kind": "sight", "logged_utc": "2026-03-20T09:0'
    data = write_log(path, GOOD, note("e0003"), raw_tail=torn)
    loaded = load_log(path)                                # the reader changes nothing
    assert path.read_bytes() == data
    assert loaded.torn_tail.data == torn and loaded.torn_tail.line == 4
    assert [e.id for e in loaded.entries] == ["e0001", "e0002", "e0003"]
    assert [p.severity for p in loaded.problems if p.severity != "note"] == ["warning"]
    assert not loaded.errors
    with PassageLog.open(path) as lg:                      # the writer sets it aside
        side = lg.set_aside
        assert side.read_bytes() == torn
        assert side.name.startswith(path.name + ".torn-")
        repair = lg.effective_entries("repair")[0]
        assert repair.id == "e0005"                        # e0004 was seen in the torn bytes
        assert repair["side_file"] == side.name and repair["torn_bytes"] == len(torn)
        assert repair["torn_sha256"] == hashlib.sha256(torn).hexdigest()
        assert lg.append({"kind": "note", "text": "going on"}).id == "e0006"
    after = path.read_bytes()
    assert after.startswith(data[:-len(torn)]) and after.endswith(b"\n")
    assert [o["kind"] for o in lines_of(path)][-2:] == ["repair", "note"]


@pytest.mark.parametrize("tail", [
    b"\x00" * 37,                                           # blocks never written (power cut)
    b'{"id": "e0004", "kind": "note", "logged_utc": "2026-03-20T09:00:00Z", "te\x00\x00\n',
    (json.dumps(note("e0004")) + "   ").encode(),          # a whole object, but no newline
])
def test_other_torn_tails(path, tail):
    data = write_log(path, GOOD, raw_tail=tail)
    assert load_log(path).torn_tail.data == tail
    with PassageLog.open(path) as lg:
        assert lg.set_aside.read_bytes() == tail
    assert path.read_bytes().startswith(data[:-len(tail)])
    assert load_log(path).torn_tail is None


def test_nothing_is_truncated_when_the_side_file_cannot_be_written(path, monkeypatch):
    data = write_log(path, GOOD, raw_tail=b'{"id": "e0003"')

    def disk_full(*args):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("nav.logwriter._write_new_file", disk_full)
    with pytest.raises(LogWriteError, match="could not be set aside"):
        PassageLog.open(path)
    assert path.read_bytes() == data


def test_ids_in_side_files_are_not_reused(path):
    write_log(path, GOOD)
    # a crash after truncating but before the repair entry: only the side file remembers e0007
    path.with_name(path.name + ".torn-20260320T090000Z").write_bytes(b'{"id": "e0007", "ki')
    with PassageLog.open(path) as lg:
        assert lg.next_id() == "e0008"


def test_a_long_unterminated_tail_is_not_taken_for_a_torn_line(path):
    data = write_log(path, GOOD, raw_tail=b"x" * 70000)
    with pytest.raises(LogFormatError, match="not a line nav wrote"):
        PassageLog.open(path)
    assert path.read_bytes() == data


def test_a_bad_middle_line_is_not_mistaken_for_a_torn_tail(path):
    write_log(path, b'{"id": "e0002", "ki\n', note("e0003"), raw_tail=b'{"id": "e0004"')
    with pytest.raises(LogFormatError) as err:
        load_log(path)
    assert err.value.line == 2
