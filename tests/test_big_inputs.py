"""Big inputs in bounded memory: `nav almanac` tables stream their rows, `nav fix` grows linearly
with its sights and refuses more than its stated limit in one line.

Memory is measured with tracemalloc (Python's own allocation tracer) as a ratio between a small
and a ten times larger run of the same command, never as a time. Output goes to a sink that only
counts, so the captured text does not count as the command's memory.

References: the almanac's values are tested elsewhere against ERFA (tests/test_almanac_*.py);
here a table written in chunks is compared with the same instants computed in one call. The
sights of the `nav fix` runs are placed with the spherical triangle written out below (the cosine
formula for the altitude, common practice, no source), with GHA and Dec from nav.almanac.
"""

from __future__ import annotations

import json
import sys
import tracemalloc
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from nav import almanac
from nav.cli import main
from nav.commands import almanac_cmd

UTC = timezone.utc


class Sink:
    """A stdout that keeps only a count of what is written (and, on request, the text)."""

    def __init__(self, keep=False):
        self.chars, self.keep, self.parts = 0, keep, []

    def write(self, s):
        self.chars += len(s)
        if self.keep:
            self.parts.append(s)
        return len(s)

    def flush(self):
        pass


def _peak(monkeypatch, argv, keep=False):
    sink = Sink(keep)
    monkeypatch.setattr(sys, "stdout", sink)
    main(list(argv))                                     # warm: imports and data load once
    sink.parts.clear()
    tracemalloc.start()
    code = main(list(argv))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    monkeypatch.undo()
    assert code == 0
    return peak, sink


def _table(minutes, *extra):
    start = datetime(2026, 7, 1, tzinfo=UTC)
    stop = start + timedelta(minutes=minutes - 1)
    return ["almanac", "Sun", "--from", f"{start:%Y-%m-%dT%H:%MZ}", "--to",
            f"{stop:%Y-%m-%dT%H:%MZ}", "--step", "1min", *extra]


def test_table_chunks_yield_before_the_whole_table_is_computed(monkeypatch):
    calls = []
    real = almanac.almanac

    def counting(bodies, t64):
        calls.append(len(t64))
        return real(bodies, t64)

    monkeypatch.setattr(almanac, "almanac", counting)
    start = datetime(2026, 7, 1, tzinfo=UTC)
    gen = almanac_cmd.table_chunks(["Sun", "Vega"], start, start + timedelta(days=1),
                                   timedelta(minutes=1), chunk_rows=200)
    assert calls == []                                   # nothing computed before it is asked
    results, t64 = next(gen)
    assert calls == [100] and len(t64) == 100            # 200 rows: 100 instants × 2 bodies
    rest = list(gen)
    assert sum(calls) == 1441 and len(calls) == 15
    # the chunked table holds the same values as one call over every instant
    every = np.concatenate([t64] + [t for _, t in rest])
    whole = real(["Sun", "Vega"], every)
    gha = np.concatenate([results[1].gha_deg] + [r[1].gha_deg for r, _ in rest])
    assert np.array_equal(gha, whole[1].gha_deg)


@pytest.mark.parametrize("fmt", [[], ["--json"]])
def test_almanac_table_memory_does_not_grow_with_its_rows(monkeypatch, fmt):
    monkeypatch.setattr(almanac_cmd, "CHUNK_ROWS", 150)
    small, s_sink = _peak(monkeypatch, _table(600, *fmt), keep=True)
    monkeypatch.setattr(almanac_cmd, "CHUNK_ROWS", 150)
    large, l_sink = _peak(monkeypatch, _table(6_000, *fmt))
    assert l_sink.chars > 9 * s_sink.chars / 2           # ten times the rows were written ...
    assert large < 2 * small                             # ... in about the same memory
    text = "".join(s_sink.parts)
    if fmt:
        rows = json.loads(text)                          # the piecewise list is one JSON list
        assert len(rows) == 600 and rows[-1]["utc"] == "2026-07-01T09:59:00Z"
    else:
        assert text.count("\n2026-07-01T") == 600


def _sight_file(path, n):
    """n star sights from 38°31′ N 027°10′ W, 2 s apart (Hs = the airless Hc + 3′, eye 0 m)."""
    lat, lon = 38.5 + 1 / 60, -27 - 10 / 60
    names = np.array(almanac.body_names()[6:])
    rng = np.random.default_rng(n)
    t64 = np.datetime64("2026-09-14T20:00:00", "us") + np.arange(6 * n) * np.timedelta64(2, "s")
    body = rng.choice(names, 6 * n)
    hs = np.full(6 * n, np.nan)
    for b in set(body):
        i = np.flatnonzero(body == b)
        r = almanac.body_almanac(b, t64[i])
        la, d, lha = np.radians(lat), np.radians(r.dec_deg), np.radians(r.gha_deg + lon)
        hs[i] = np.degrees(np.arcsin(np.sin(la) * np.sin(d) + np.cos(la) * np.cos(d) * np.cos(lha)))
    keep = np.flatnonzero((hs > 20) & (hs < 70))[:n]
    assert keep.size == n
    with open(path, "w", encoding="utf-8") as f:
        f.write("utc,body,hs,index_error,eye_height_m,dr_lat,dr_lon\n")
        for i in keep:
            f.write(f"{str(t64[i])[:19]}Z,{body[i]},{hs[i] + 0.05:.4f},0,0,38 35.0 N,027 05.0 W\n")
    return str(path)


def test_nav_fix_memory_grows_linearly_with_the_sights(tmp_path, monkeypatch):
    small, _ = _peak(monkeypatch, ["fix", _sight_file(tmp_path / "s.csv", 200), "--json"])
    large, _ = _peak(monkeypatch, ["fix", _sight_file(tmp_path / "l.csv", 2000), "--json"])
    assert large < 20 * small                            # ten times the sights; n × n: 100 times


def test_nav_fix_refuses_more_sights_than_its_limit_in_one_line(tmp_path, capsys, monkeypatch):
    import nav.fix

    monkeypatch.setattr(nav.fix, "MAX_FIX_SIGHTS", 3)
    code = main(["fix", _sight_file(tmp_path / "four.csv", 4)])
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and "4 sights" in err and "at most 3" in err
    assert "Traceback" not in err
