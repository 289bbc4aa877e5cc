"""The interactive shell (nav/shell/): a real prompt_toolkit session driven through pipe input
with a dummy output (no terminal), and the shell's state driven line by line.

The sights of the user story are synthesised from an invented truth (ketch "Kestrel Dawn",
Azores to Biscay, invented), independently of nav's chain:
- the airless topocentric altitude of each star from astropy's AltAz (ERFA inside: WGS 84
  observer, IAU 2006/2000A precession-nutation, aberration, light deflection), pressure = 0; the
  star's catalogue place comes from nav's own Hipparcos table (tested in tests/test_stars.py);
- then the corrections undone in the order a sextant reading suffers them: refraction by
  Bennett's formula (J. Navigation 35, 1982, with the zenith constant nav.corrections states),
  inverted by bisection here; dip 1.76′·√h (h in metres, the almanac's dip formula); index error
  added (+ on the arc reads high). Hs is then rounded to 0.1′, as a deck log has it;
- the vessel's true track is a rhumb line on the navigator's sphere (1′ = 1 nmi), sailed by
  Mercator sailing (American Practical Navigator, "Mercator sailing") in code of its own here.
Distances between the fix and the truth are measured on WGS 84 with geographiclib.
"""

from __future__ import annotations

import functools
import os
import math
import re
import warnings
from datetime import datetime, timedelta, timezone
from io import StringIO
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as hst

from nav.logbook import load_log
from nav.units import ARCMIN_DEG, NMI_M
from references import star_skycoord
from shell_driver import open_state, run_lines

UTC = timezone.utc
ARCMIN = ARCMIN_DEG
NMI = 1.0                                  # the unit of *_nmi values
SEC = timedelta(seconds=1)

# ---------------------------------------------------------------- the scenario (invented)
T0 = datetime(2026, 6, 14, 20, 0, tzinfo=UTC)
TRUTH_T0 = (41.40, -32.20)                 # where the ketch really is at T0
COURSE_DEG, SPEED_KN = 245.0, 6.5
EYE_M, IE_ARCMIN = 2.5, 1.2
DR_LINE = "dr 41 30.0 N 032 03.0 W course 245 speed 6.5 at 2026-06-14T20:00:00Z"  # ~8 nmi out
PLAN = (("Vega", datetime(2026, 6, 14, 22, 55, tzinfo=UTC)),
        ("Arcturus", datetime(2026, 6, 14, 22, 58, tzinfo=UTC)),
        ("Regulus", datetime(2026, 6, 14, 23, 1, tzinfo=UTC)))
CLOCK_NOW = datetime(2026, 6, 14, 23, 30, tzinfo=UTC)
R_NMI = 180.0 * 60.0 / math.pi             # the sphere on which 1′ of great circle is 1 nmi


def clock():
    return CLOCK_NOW


def mercator_sail(lat_deg, lon_deg, course_deg, dist_nmi):
    """Rhumb line on the sphere (Mercator sailing): Δφ = d cos C, Δλ = d sin C / q, q = Δφ/Δψ."""
    phi1 = math.radians(lat_deg)
    dphi = dist_nmi * math.cos(math.radians(course_deg)) / R_NMI
    phi2 = phi1 + dphi
    dpsi = math.log(math.tan(math.pi / 4 + phi2 / 2) / math.tan(math.pi / 4 + phi1 / 2))
    q = dphi / dpsi if abs(dpsi) > 1e-12 else math.cos(phi1)
    return math.degrees(phi2), lon_deg + math.degrees(dist_nmi * math.sin(
        math.radians(course_deg)) / R_NMI / q)


def truth_at(t: datetime):
    return mercator_sail(*TRUTH_T0, COURSE_DEG, SPEED_KN * (t - T0).total_seconds() / 3600.0)


def bennett_arcmin(ha_deg):
    """Bennett (1982) at 10 °C and 1010 hPa, with the zenith constant (R(90°) = 0)."""
    zenith = -1.0 / math.tan(math.radians(90.0 + 7.31 / 94.4))
    return 1.0 / math.tan(math.radians(ha_deg + 7.31 / (ha_deg + 4.4))) + zenith


def apparent_from_true(h_deg):
    lo, hi = h_deg, h_deg + 1.0
    for _ in range(60):
        mid = (lo + hi) / 2
        lo, hi = (lo, mid) if mid - bennett_arcmin(mid) * ARCMIN > h_deg else (mid, hi)
    return (lo + hi) / 2


def hs_text(hs_deg: float) -> str:
    tenths = round(hs_deg * 600)
    return f"{tenths // 600} {tenths % 600 / 10:04.1f}"


@functools.lru_cache(maxsize=None)
def synthetic_hs() -> dict:
    """Body -> (Hs as a deck log writes it, airless altitude): astropy AltAz at the truth."""
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation
    from astropy.time import Time

    from nav.stars import find_star

    out = {}
    with warnings.catch_warnings():
        warnings.simplefilter("error")      # no degraded-accuracy fallback may pass unnoticed
        for body, t in PLAN:
            lat, lon = truth_at(t)
            s = find_star(body)
            star = star_skycoord(s)
            tt = Time(t.replace(tzinfo=None), scale="utc")
            frame = AltAz(obstime=tt, location=EarthLocation.from_geodetic(
                lon * u.deg, lat * u.deg, 0 * u.m), pressure=0 * u.hPa)
            h = float(star.apply_space_motion(new_obstime=tt).transform_to(frame).alt.deg)
            hs = apparent_from_true(h) + 1.76 * math.sqrt(EYE_M) * ARCMIN + IE_ARCMIN * ARCMIN
            out[body] = (hs_text(hs), h)
    return out


def distance_nmi(lat1, lon1, lat2, lon2) -> float:
    from geographiclib.geodesic import Geodesic

    return Geodesic.WGS84.Inverse(lat1, lon1, lat2, lon2)["s12"] / NMI_M


def story_lines() -> list[str]:
    """The deck log of the story, as the navigator types it (three sights, one on the watch)."""
    hs = synthetic_hs()
    return ["set eye 2.5 ie 1.2", DR_LINE,
            f"sight Vega {hs['Vega'][0]} at 22:55:00",
            f"sight Arcturus {hs['Arcturus'][0]} at 2026-06-14T22:58:00Z",
            "set zone +2 watch 12 fast",
            # watch 21:01:12, 12 s fast -> ZT 21:01:00; ZD +2 -> UTC 23:01:00 (UTC = ZT + ZD)
            f"sight Regulus {hs['Regulus'][0]} zt 21:01:12",
            "fix", "plot"]


# ---------------------------------------------------------------- driving the shell

def pipe_session(keys, log_path, *, history=None, output=None, **kw) -> tuple[int, str]:
    """Run the shell in a real PromptSession reading `keys` from a pipe; (status, printed text).

    `keys` is a string, or a list of strings and :class:`Shows` marks, sent in order from a
    second thread: before the keys after a mark, the sender waits until the session's line holds
    the mark's text (a completion finished, say), however slow the machine. Keys sent before the
    session reads them are kept by prompt_toolkit for the next prompt (its type-ahead), so no
    pause is needed otherwise. The pipe is closed after the keys, so the session always ends
    (end of input = Ctrl-D)."""
    import threading
    import time

    from prompt_toolkit.application import create_app_session
    from prompt_toolkit.input import create_pipe_input
    from prompt_toolkit.output import DummyOutput

    from nav.shell.app import run_shell

    chunks = [keys] if isinstance(keys, str) else list(keys)
    buf = StringIO()
    missed: list[str] = []                 # what the sender waited for in vain, or its error
    with create_pipe_input() as inp:
        def send(app_session):
            try:
                for chunk in chunks:
                    if isinstance(chunk, Shows):
                        deadline = time.monotonic() + WAIT_S
                        while not chunk.seen_in(app_session.app):
                            if time.monotonic() > deadline:
                                missed.append(f"the line never showed {chunk!r}")
                                return
                            time.sleep(0.01)
                        continue
                    inp.send_text(chunk)
            except OSError as e:           # the session ended before its keys were sent
                missed.append(f"keys not sent: {e}")
            finally:
                inp.close()

        with create_app_session(input=inp, output=output or DummyOutput()) as app_session:
            sender = threading.Thread(target=send, args=(app_session,), daemon=True)
            sender.start()
            status = run_shell(log_path, stdout=buf, stderr=buf, interactive=True,
                               history_file=history, clock=clock, refresh_interval=None, **kw)
        sender.join(timeout=WAIT_S)
    # A mark the session never reached fails here, by name, instead of the keys after it
    # going down anyway and the test failing (or passing) on a line typed too early.
    assert not sender.is_alive() and not missed, missed or "the key sender did not finish"
    return status, buf.getvalue()


class Shows:
    """A mark in the keys of :func:`pipe_session`: wait until the line being edited is `text`
    (and, with `menu`, its completions are ready, so that a Tab picks from them)."""

    def __init__(self, text: str, menu: bool = False):
        self.text, self.menu = text, menu

    def __repr__(self) -> str:
        return f"Shows({self.text!r}, menu={self.menu})"

    def seen_in(self, app) -> bool:
        """Whether the running prompt (not one ended, nor none between two) shows the mark."""
        if app is None or not app.is_running or app.is_done:
            return False
        buffer = app.current_buffer
        state = buffer.complete_state
        return buffer.text == self.text and (not self.menu or bool(state and state.completions))


WAIT_S = 30.0          # a bound on a wait, never reached on a working session


def enter(*lines: str) -> str:
    return "".join(line + "\r" for line in lines)


@pytest.fixture
def log_path(tmp_path):
    return tmp_path / "logs" / "kestrel-dawn.jsonl"


@pytest.fixture
def history(tmp_path):
    return tmp_path / "data" / "nav" / "history"


@pytest.fixture
def state(tmp_path):
    """A shell state on a new log, writing to a buffer (line by line, as the line mode does)."""
    st, log = open_state(tmp_path / "state.jsonl", "Kestrel Dawn (invented)", "state test", clock)
    yield st
    log.close()


# ---------------------------------------------------------------- the user story

def test_user_story_from_deck_log_to_fix_and_back(log_path, history, tmp_path):
    truth = truth_at(PLAN[-1][1])
    for body, _ in PLAN:  # the synthetic sights are usable ones (precondition of the scenario)
        assert 15.0 < synthetic_hs()[body][1] < 75.0
    status, out = pipe_session(enter(*story_lines(), "quit"), log_path, history=history)
    assert status == 0
    from nav import CAUTION, __version__

    assert " ".join(out.split()).startswith(f"nav {__version__}: sight-reduction shell {CAUTION}")
    assert out.index("CAUTION") < out.index("new passage log")       # the banner first
    # every sight shown at once as worked steps, from the DR at its time
    for eid, body in (("e0004", "Vega"), ("e0005", "Arcturus"), ("e0007", "Regulus")):
        assert re.search(rf"Sight {eid}: {body}, 2026-06-14 2\d:\d\d:00 UTC", out)
    for step in ("Hs", "dip", "refraction", "Ho", "GHA", "LHA", "Hc", "Zn", "intercept"):
        assert len(re.findall(rf"^  {step} +\S", out, re.M)) == 3, step
    assert out.count("DR basis     DR ") == 3
    # the watch time: 21:01:12 − 12 s fast = ZT 21:01:00; UTC = ZT + ZD(+2) = 23:01:00
    assert "ZT 21:01:00" in out and "UTC = ZT + ZD = 2026-06-14 23:01:00" in out

    log = load_log(log_path)
    (fix,) = log.effective_entries("fix")
    assert fix["sight_ids"] == ("e0004", "e0005", "e0007")
    assert parse_z(fix["utc"]) == PLAN[-1][1]
    # The truth is reached to the resolution of Hs (0.1′) and the sphere: 0.3 nmi.
    assert distance_nmi(fix["lat_deg"], fix["lon_deg"], *truth) < 0.3 * NMI
    assert "ellipse_semi_major_nmi" in fix.data and fix["ellipse_confidence"] == 0.95
    png = log_path.with_name("kestrel-dawn-e0008.png")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"              # PNG signature (RFC 2083)
    assert f"written to {png}" in out
    assert out.index("logged e0008") > out.index("Fix at 2026-06-14 23:01:00")

    # Reopen the same log: everything as left, and `where` answers from the fix.
    status, out2 = pipe_session(enter("set", "where at 23:01:00", "where at 23:31:00", "log all",
                                      "quit"), log_path, history=history)
    assert status == 0
    assert "3 sights, 1 DR entry, 1 fix, 2 settings" in out2
    assert "height of eye  2.50 m" in out2 and "index error    +1.2′" in out2
    assert "watch error    12 s fast" in out2 and "zone           +2 h" in out2
    assert "basis        fix at 2026-06-14 23:01 UTC (anchor e0008)" in out2
    # half an hour later: DR from the fix, 0.5 h at 6.5 kn on 245°
    assert "basis        DR 0.5 h from the fix at 2026-06-14 23:01 UTC" in out2
    for eid in ("e0002", "e0003", "e0004", "e0005", "e0006", "e0007", "e0008"):
        assert f"\n{eid}  " in out2


def parse_z(text: str) -> datetime:
    return datetime.strptime(text, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=UTC)


def test_reduction_shown_matches_the_truth(state):
    """Each sight's Ho, reduced by the shell, is the airless altitude at the truth (to the 0.1′
    rounding of Hs and Bennett's 0.07′), whatever the DR."""
    from nav.shell.handlers import reduction_report

    out = run_lines(state, *story_lines()[:6])
    assert out.count("logged e") == 6
    for eid, (body, _) in zip(("e0004", "e0005", "e0007"), PLAN):
        e = state.lookup(eid)
        from nav.workflow import reduce_rows

        red = reduce_rows([state.passage.sight_row(e)]).sight(0)
        assert abs(float(red.ho_deg) - synthetic_hs()[body][1]) < 0.15 * ARCMIN
        assert reduction_report(state, e)[0].startswith(f"Sight {eid}: {body}")


# ---------------------------------------------------------------- completion

def completions(st, text: str) -> list[str]:
    from prompt_toolkit.document import Document

    from nav.shell.complete import ShellCompleter

    return [c.text for c in ShellCompleter(lambda: st).get_completions(Document(text), None)]


def test_completion_of_commands_bodies_and_options(state):
    from nav.almanac import body_names

    assert completions(state, "si") == ["sight"]
    assert set(completions(state, "")) >= {"set", "dr", "sight", "fix", "where", "help", "quit"}
    assert sorted(completions(state, "sight ")) == sorted(body_names())   # all 64 bodies
    assert len(body_names()) == 64          # Sun, Moon, 4 planets, 58 stars (the trade's list)
    assert completions(state, "sight ve") == ["Venus", "Vega"]           # case-insensitive
    assert completions(state, "sight rigil k") == ["Rigil Kentaurus"]    # names of two words
    assert completions(state, "almanac SIR") == ["Sirius"]
    assert completions(state, "sight Sun 34 12.3 limb ") == ["lower", "upper", "center"]
    assert "limb" in completions(state, "sight Sun 34 12.3 ")
    assert set(completions(state, "set ")) == {"eye", "ie", "watch", "zone", "temp", "pressure",
                                                "horizon"}
    assert completions(state, "set horizon ") == ["sea", "artificial", "bubble"]
    assert completions(state, "set eye 2.5 h") == ["horizon"]
    assert completions(state, "set watch 12 ") == ["fast", "slow"]
    assert completions(state, "export ") == ["gpx", "geojson", "csv"]
    assert completions(state, "help ti") == ["title", "time"]


def test_completion_of_entry_ids_and_fields(state):
    run_lines(state, DR_LINE, "sight Sun 52 08.4 at 15:00:00", "note swell from the west")
    assert completions(state, "show ") == ["e0004", "e0003", "e0002"]   # newest first
    assert completions(state, "fix ") == ["e0003"]                      # sights only
    assert completions(state, "correct e0003 ")[:3] == ["body", "hs", "limb"]
    assert "--" in completions(state, "correct e0003 hs 52 09.0 ")
    assert completions(state, "correct e0002 ") == ["position", "course", "speed", "at", "zt",
                                                    "basis", "note", "--"]
    assert completions(state, "correct e0003 body VE") == ["Venus", "Vega"]


def test_tab_completes_in_the_session(log_path, history):
    keys = ["sight Veg", Shows("sight Veg", menu=True), "\t", Shows("sight Vega"),
            " 34 12.3 at 2026-06-14T22:55:00Z\r" + enter(DR_LINE, "quit")]
    status, out = pipe_session(keys, log_path, history=history)
    assert status == 0
    (sight,) = load_log(log_path).effective_entries("sight")
    assert sight["body"] == "Vega"


# ---------------------------------------------------------------- validation and errors

def test_invalid_line_shows_its_error_and_logs_nothing(log_path, history):
    """A refused line: its error in full above the prompt, the line kept to be mended (Enter
    then runs the mended line), Ctrl-C clears it (the next command is not appended to it).

    Deterministic: every key goes down the pipe at once, before the session has drawn anything
    (as under load); prompt_toolkit keeps the keys an ended prompt did not read for the next one
    (its type-ahead), and the error is printed by the shell, not drawn by a toolbar."""
    keys = ("sight Vega 95 at 2026-06-14T22:55:00Z\r"        # refused: Hs above 90°
            + "\x08" * len("95 at 2026-06-14T22:55:00Z")     # mend the kept line ...
            + "34 12.3 at 2026-06-14T22:55:00Z\r"            # ... and run it
            + "set eye 2.5 horizon sky\r"                    # refused
            + "\x03" + "note one\r" + "quit\r")              # Ctrl-C clears it
    status, out = pipe_session(keys, log_path, history=history)
    assert status == 0
    flat = " ".join(out.split())
    assert "error: field 'hs': Hs 95° is above 90°" in flat  # nav.fields.check_hs_horizon's message
    assert "error: field 'horizon': 'sky' is not a horizon" in flat     # parse_horizon's message
    assert flat.count("the line is kept at the prompt to be mended; Ctrl-C clears it") == 2
    log = load_log(log_path)
    assert [e.kind for e in log.entries] == ["passage", "sight", "note"]
    assert log.entries[1]["hs"] == "34 12.3"                            # the mended line ran
    assert log.entries[2]["text"] == "one"                              # not appended to 'set'
    assert not log.effective_entries("setting")
    saved = [x for x in history.read_text(encoding="utf-8").splitlines() if x.startswith("+")]
    assert saved == ["+sight Vega 34 12.3 at 2026-06-14T22:55:00Z", "+note one", "+quit"]


def test_error_is_wrapped_to_the_terminal_width(state):
    """Interactive errors are wrapped to the terminal width, never cut; line mode keeps one line."""
    long_reason = "x" * 30 + " " + " ".join(["word"] * 60)
    state._width = lambda: 60
    state.error(long_reason, kept=True)
    lines = state.buf.getvalue().splitlines()
    assert len(lines) > 3 and all(len(line) <= 59 for line in lines)
    assert " ".join(" ".join(lines).split()).startswith("error: " + long_reason)
    assert " ".join(" ".join(lines).split()).endswith("to be mended; Ctrl-C clears it")
    state._width = None
    start = state.buf.tell()
    state.error(long_reason)
    assert state.buf.getvalue()[start:] == f"error: {long_reason}\n"


def test_check_runs_the_command_parser(state):
    """What Enter checks: the command's own parser (the run parses the same), logging nothing."""
    for bad, field in (("sight Vega 34 12.3", "at"), ("sight Vegaa 34 at 12:00", "body"),
                       ("dr 91 00 N 032 00 W", "lat"), ("set watch 12 early", "watch"),
                       ("set zone +15", "zone"), ("course 400", "course"),
                       ("sight Vega 34 12.3 limb lower at 12:00", "limb"),
                       ("strike e0099 why", "id"), ("frobnicate", "command")):
        assert f"field '{field}'" in (state.check(bad) or ""), bad
    assert state.check("sight Vega 34 12.3 at 2026-06-14T22:55:00Z") is None   # a good line
    assert [e.kind for e in state.log.entries] == ["passage"]               # checking logs nothing


def test_guided_answer_refused_is_shown_and_kept(log_path, history):
    keys = (enter(DR_LINE, "sight", "vega", "22:55:00", "95") + "\x08\x08" + "41 25.1\r"
            + enter("", "", "", "quit"))
    status, out = pipe_session(keys, log_path, history=history)
    assert status == 0
    assert "error: field 'hs': Hs 95° is above 90°" in " ".join(out.split())  # check_hs_horizon
    assert "the answer is kept to be mended; Ctrl-C gives up the whole entry" in out
    (s,) = load_log(log_path).effective_entries("sight")
    assert s["hs"] == "41 25.1"


def test_errors_are_one_line_and_the_shell_goes_on(state, monkeypatch):
    out = run_lines(state, "sight Vega 34 12.3", "dr 41 N", "where")
    errors = [line for line in out.splitlines() if line.startswith("error:")]
    assert len(errors) == 3 and all("for example" in e for e in errors)
    assert state.refused == 3

    import nav.shell.handlers as h

    def broken(st, req):
        raise ZeroDivisionError("something deep")

    monkeypatch.setattr(h, "run_note", broken)
    import nav.shell.registry as reg

    monkeypatch.setitem(reg.COMMANDS, "note", reg.COMMANDS["note"].__class__(
        **{**reg.COMMANDS["note"].__dict__, "run": broken}))
    out = run_lines(state, "note hello", "help")
    assert "error: internal error in 'note': nothing more was logged" in out
    assert "Traceback" not in out and "something deep" not in out
    assert "ZeroDivisionError" not in out                       # no internal names for the user
    assert "Commands (help COMMAND" in out                                  # it went on


# names of the code: log fields with their unit suffix, exception classes, dict and object reprs
INTERNAL = re.compile(r"\b[a-z]+_(deg|nmi|arcmin|kn|hpa|utc|kind|ids|s|m|h|c)\b|[a-z]Error\b"
                      r"|\{'|\w+\(\w+, |\bNone\b")
GARBAGE_WORDS = ("sight", "set", "dr", "fix", "where", "correct", "strike", "show", "plot",
                 "export", "import", "log", "note", "almanac", "course", "speed", "help",
                 "at", "zt", "limb", "eye", "ie", "--", "e0002", "e9", "Sun", "Vega", "34",
                 "12.3", "-5", "N", "W", "fast", "\"", "°", "′", "nan", "1e309", "25:99",
                 "2026-13-40T00:00Z", "x.csv", "y.png", "\x1b[A", "\u202e", "\t", "")


@settings(max_examples=int(os.environ.get("NAV_SHELL_FUZZ_EXAMPLES", 40)), deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(hst.lists(hst.one_of(hst.sampled_from(GARBAGE_WORDS), hst.text(max_size=12)),
                 min_size=1, max_size=8))
def test_garbage_never_ends_the_shell_with_a_traceback(state, words):
    line = " ".join(words)
    from nav.shell.words import tokenize

    start = state.buf.tell()
    if not state.dispatch(line):                       # only quit (or exit) ends the shell
        assert tokenize(line)[0].text.lower() in ("quit", "exit")
    text = state.buf.getvalue()[start:]
    assert "Traceback" not in text and "internal error" not in text
    said = text
    from nav.errors import printable

    for typed in sorted(set(line.split()) | set(words), key=len, reverse=True):
        if typed.strip():                               # what echoes the input, as typed or
            said = said.replace(printable(typed), "").replace(typed, "")   # made printable
    assert not INTERNAL.search(said), text             # no names of the code reach the user
    load_log(state.log.path)                           # the log still reads strictly


# ---------------------------------------------------------------- strike, correct, fix

def _three_sights(st):
    hs = synthetic_hs()
    return run_lines(st, "set eye 2.5 ie 1.2", DR_LINE,
                     f"sight Vega {hs['Vega'][0]} at 22:55:00",
                     f"sight Arcturus {hs['Arcturus'][0]} at 22:58:00",
                     f"sight Regulus {hs['Regulus'][0]} at 23:01:00")


def test_struck_sight_is_left_out_of_fix(state):
    _three_sights(state)                                     # e0004, e0005, e0006
    out = run_lines(state, "strike e0005 doubtful horizon under a squall", "fix")
    assert "e0005 struck" in out
    (fix,) = state.log.effective_entries("fix")
    assert fix["sight_ids"] == ("e0004", "e0006")
    assert ("took e0004 e0006: the sights not used by a fix within 60 min before the latest of "
            "them, e0006 at 23:01:00 UTC") in out
    out = run_lines(state, "fix e0004 e0005")
    assert "error: field 'sights': e0005 is struck" in out
    assert len(state.log.effective_entries("fix")) == 1
    out = run_lines(state, "log")
    assert re.search(r"e0005  sight .*\[STRUCK by e0007\]", out)


def test_strike_warns_about_a_fix_that_used_the_sight(state):
    _three_sights(state)
    run_lines(state, "fix")
    out = run_lines(state, "strike e0004 wrong star")
    assert "caution: fix e0007 used e0004" in out


def test_correction_is_reparsed_and_logged_as_such(state):
    run_lines(state, DR_LINE, "sight Sun 52 08.4 limb upper at 21:00:00")   # e0003
    out = run_lines(state, "correct e0003 hs 52 18.4 -- misread the drum")
    assert "logged e0004: correction of e0003" in out and "Sight e0003: Sun upper limb" in out
    cur = state.lookup("e0003")
    assert cur["hs"] == "52 18.4" and cur["hs_deg"] == pytest.approx(52 + 18.4 / 60, abs=1e-12)
    assert cur.revised_by == "e0004"
    # the same parsers refuse the same values; nothing is logged
    out = run_lines(state, "correct e0003 hs 95 -- typo", "correct e0003 limb middle -- x",
                    "correct e0003 hs 52 -- ", "correct e0002 hs 52 -- wrong kind")
    assert [line.split(": ")[1][:13] for line in out.splitlines() if line.startswith("error")] \
        == ["field 'hs'", "field 'limb'", "field 'reason", "field 'field'"]
    assert len(state.log.entries) == 4
    # a new body that is a point loses its limb; the time re-parsed as a watch time
    run_lines(state, "set zone +1 watch 3 slow",
              "correct e0003 body Vega hs 40 00.0 zt 20:30:00 -- wrong body")
    cur = state.lookup("e0003")
    assert cur["body"] == "Vega" and "limb" not in cur.data
    # watch 20:30:00, 3 s slow (added) -> ZT 20:30:03; UTC = ZT + ZD(+1) = 21:30:03
    assert cur["utc"] == "2026-06-14T21:30:03Z" and cur["time_source"] == "watch"
    out = run_lines(state, "show e0003")
    assert "history:" in out and "corrected: misread the drum" in out
    # the history in navigator notation, with the values as typed (no field names of the log)
    assert "Hs: 52°08.4′ (typed 52 08.4) -> 52°18.4′ (typed 52 18.4)" in out
    assert "limb: upper limb -> (none)" in out and "body: Sun -> Vega" in out
    assert "_deg" not in out and "hs_deg" not in out


def test_dr_correction_moves_the_track(state):
    run_lines(state, DR_LINE)
    run_lines(state, "correct e0002 position 41 20.0 N 032 10.0 W -- plotted wrong")
    w = state.passage.where(T0)
    assert (w.lat_deg, w.lon_deg) == pytest.approx((41 + 20 / 60, -(32 + 10 / 60)), abs=1e-12)


# ---------------------------------------------------------------- time

def test_zone_time_with_watch_error_gives_utc(state):
    """The trade's rule (American Practical Navigator, from memory): UTC = ZT + ZD, ZD + in west
    longitude; a watch that is fast reads ahead, so its error is subtracted."""
    run_lines(state, DR_LINE, "set zone +3 watch 12 fast")
    out = run_lines(state, "sight Vega 34 12.3 zt 2026-06-14 19:55:12")
    e = state.lookup("e0004")
    assert e["utc"] == "2026-06-14T22:55:00Z"                 # 19:55:12 − 12 s + 3 h
    assert e["time_source"] == "watch" and e["zone_description_h"] == 3.0
    assert e["watch_error_s"] == 12.0 and e["time_text"] == "2026-06-14 19:55:12"
    assert "watch 12 s fast, subtracted: ZT 19:55:00; ZD +3 h, UTC = ZT + ZD = " in out
    run_lines(state, "set zone -5 watch 4 slow")              # east of Greenwich, watch behind
    run_lines(state, "sight Vega 34 12.3 zt 2026-06-15 03:55:56")
    assert state.lookup("e0006")["utc"] == "2026-06-14T22:56:00Z"   # 03:55:56 + 4 s − 5 h


def test_time_of_day_takes_the_date_of_the_latest_entry(state):
    out = run_lines(state, "note before any time")            # a note is for now (the clock)
    assert "now: no time was given" in out
    out = run_lines(state, DR_LINE, "sight Vega 34 12.3 at 22:55")
    assert "UTC 2026-06-14 22:55:00 (date 2026-06-14: nearest the latest entry with a time, e0003)" \
        in out
    # Across midnight a time of day belongs to the date nearest the latest entry (a watch kept
    # through the night; common practice, no source): 00:03 after 23:58 is the next day.
    run_lines(state, "sight Vega 34 12.3 at 23:58")
    out = run_lines(state, "sight Vega 34 12.3 at 00:03")
    assert "UTC 2026-06-15 00:03:00 (date 2026-06-15" in out
    out = run_lines(state, "sight Vega 34 12.3 at 25:00")
    assert "error: field 'at': '25:00' is not a real time of day" in out
    out = run_lines(state, "sight Vega 34 12.3 at 2150-01-01T00:00:00Z")
    assert "error: field 'at'" in out and "outside the supported range" in out


def test_sight_before_any_dr_is_logged_and_waits(state):
    out = run_lines(state, "sight Vega 34 12.3 at 2026-06-14T22:55:00Z")
    assert "logged e0002" in out and "not reduced yet: no position is known" in out
    out = run_lines(state, DR_LINE, "show e0002")
    assert "Sight e0002: Vega" in out and "  intercept " in out


# ---------------------------------------------------------------- Ctrl-C, Ctrl-D, guided entry

def test_ctrl_c_cancels_a_line_and_ctrl_d_leaves(log_path, history):
    status, out = pipe_session("set eye 2.5\x03" + "note one\r" + "\x04" + "note two\r",
                               log_path, history=history)
    assert status == 0
    notes = load_log(log_path).effective_entries("note")
    assert [n["text"] for n in notes] == ["one"]                    # Ctrl-D left before 'two'
    assert not load_log(log_path).effective_entries("setting")      # Ctrl-C cancelled the line
    assert out.rstrip().endswith(f"log closed: {log_path}")


def test_guided_sight_with_defaults(log_path, history):
    keys = enter("set eye 2.5 ie 1.2", DR_LINE, "sight", "vega", "22:55:00", "41 25.1", "", "",
                 "", "quit")
    status, out = pipe_session(keys, log_path, history=history)
    assert status == 0
    assert "as one line: sight Vega 41 25.1 at 22:55:00" in out
    (s,) = load_log(log_path).effective_entries("sight")
    assert s["body"] == "Vega" and s["hs"] == "41 25.1" and "index_error_arcmin" not in s.data
    assert "Sight e0004: Vega" in out
    saved = history.read_text(encoding="utf-8")
    assert "+sight\n" in saved and "41 25.1" not in saved           # answers are not history


def test_guided_sight_ctrl_c_logs_nothing(log_path, history):
    keys = enter(DR_LINE, "sight", "Sun") + "\x03" + enter("quit")
    status, out = pipe_session(keys, log_path, history=history)
    assert "sight cancelled; nothing was logged" in out
    assert not load_log(log_path).effective_entries("sight")


# ---------------------------------------------------------------- history, toolbar, files

def test_history_goes_to_the_data_directory(tmp_path, monkeypatch, log_path):
    from nav.shell.app import history_path

    data, work = tmp_path / "xdg", tmp_path / "work"
    work.mkdir()
    monkeypatch.chdir(work)
    monkeypatch.setenv("XDG_DATA_HOME", str(data))
    assert history_path() == data / "nav" / "history"
    status, _ = pipe_session(enter("note a line to remember", "quit"), log_path)
    assert status == 0
    assert "+note a line to remember" in (data / "nav" / "history").read_text(encoding="utf-8")
    assert list(work.iterdir()) == []                                 # nothing in the cwd
    home = Path.home()
    assert history_path({"XDG_DATA_HOME": "relative/dir"}) == home / ".local/share/nav/history"
    assert history_path({}) == home / ".local" / "share" / "nav" / "history"


def test_toolbar_shows_passage_time_position_and_instrument(state):
    from nav.shell.state import status_line

    assert "no DR yet" in status_line(state)
    _three_sights(state)
    run_lines(state, "fix")
    line = status_line(state)
    assert line.startswith("state test  |  UTC 23:30:00  |  DR ")
    assert "(0.5 h from the fix)" in line and "eye 2.5 m  IE +1.2′" in line


def test_import_of_a_batch_file(state, tmp_path):
    good = tmp_path / "deck.csv"
    hs = synthetic_hs()
    good.write_text("utc,body,hs,index_error,eye_height_m,dr_lat,dr_lon,course_deg,speed_kn\n"
                    f"2026-06-14T22:55:00Z,Vega,{hs['Vega'][0]},1.2,2.5,41 21.9 N,032 25.9 W,"
                    "245,6.5\n"
                    f"2026-06-14T22:58:00Z,Arcturus,{hs['Arcturus'][0]},1.2,2.5,,,,\n",
                    encoding="utf-8")
    out = run_lines(state, f"import {good}")
    assert "imported 2 sight(s) and 1 DR entry" in out
    kinds = [e.kind for e in state.log.entries]
    assert kinds == ["passage", "dr", "sight", "sight"]
    dr = state.log.entries[1]
    assert dr["course_deg"] == 245.0 and dr["speed_kn"] == 6.5
    bad = tmp_path / "bad.csv"
    bad.write_text("utc,body,hs,dr_lat,dr_lon\n2026-06-14T22:55:00Z,Vega,34 12,41 N,32 W\n"
                   "2026-06-14T22:58:00Z,Nosuchstar,34,,\n2026-06-14T23:00:00Z,Deneb,95,,\n",
                   encoding="utf-8")
    out = run_lines(state, f"import {bad}")
    assert "line 3, field 'body'" in out and "line 4, field 'hs'" in out
    assert "error: field 'file': 2 problem(s)" in out and "(lines 3, 4)" in out
    assert len(state.log.entries) == 4                                # nothing appended


def test_export_writes_files_and_never_overwrites(state, tmp_path):
    _three_sights(state)
    run_lines(state, "fix")
    gpx, gj, csv = tmp_path / "a.gpx", tmp_path / "a.geojson", tmp_path / "a.csv"
    out = run_lines(state, f"export gpx {gpx}", f"export geojson {gj}", f"export csv {csv}")
    assert gpx.read_text().startswith('<?xml version="1.0" encoding="UTF-8"?>')
    assert '"type": "FeatureCollection"' in gj.read_text()
    from nav.export import SIGHT_CSV_COLUMNS
    assert csv.read_text().splitlines()[0] == ",".join(SIGHT_CSV_COLUMNS)  # the batch contract
    assert len(csv.read_text().splitlines()) == 4                     # header + three sights
    before = gpx.read_text()
    out = run_lines(state, f"export gpx {gpx}")
    assert "already exists" in out and gpx.read_text() == before


@pytest.mark.parametrize("typed", ["41 12.5 N 032 07.1 W", "41°12.5′N 32°07.1′W",
                                   "N41 12.5 W032 07.1", "41 12.5 N, 032 07.1 W",
                                   "41.208333333333336 -32.118333333333336"])
def test_dr_positions_in_every_accepted_form(state, typed):
    run_lines(state, f"dr {typed} at 2026-06-14T20:00:00Z")
    (dr,) = state.log.effective_entries("dr")
    # 41°12.5′ N = 41 + 12.5/60 degrees north (+), 32°07.1′ W = −(32 + 7.1/60) (common practice)
    assert dr["lat_deg"] == pytest.approx(41 + 12.5 / 60, abs=1e-9 * ARCMIN)
    assert dr["lon_deg"] == pytest.approx(-(32 + 7.1 / 60), abs=1e-9 * ARCMIN)


@pytest.mark.parametrize("typed, why", [("N41 12.5", "hemisphere of both"),
                                        ("41 12.5 N", "no longitude"),
                                        ("41 12.5 32", "not a latitude and a longitude"),
                                        ("41 12.5 N 200 00 W", "outside 180° W to 180° E"),
                                        # issue 7 item 1: degrees and minutes need their letter
                                        ("41 12.5 -32 07.1", "without N or S"),
                                        ("41 12.5, 032 07.1", "without N or S"),
                                        ("41 12.5 N, 032 07.1", "without E or W"),
                                        ("032 07.1 W 41 12.5 N", "longitude first"),
                                        ("032 07.1 W, 41 12.5 N", "swapped")])
def test_dr_positions_refused(state, typed, why):
    out = run_lines(state, f"dr {typed} at 2026-06-14T20:00:00Z")
    assert out.startswith("error: ") and why in out
    assert not state.log.effective_entries("dr")


def test_a_sight_the_corrections_refuse_is_not_logged(state):
    run_lines(state, "set eye 2.5", DR_LINE)
    # Hs −1° with 2.8′ of dip: Ha below −1°, where refraction is unknown (nav.corrections)
    out = run_lines(state, "sight Vega -1 at 22:55:00")
    assert "error: " in out and "below −1°" in out
    assert not state.log.effective_entries("sight")


def test_show_and_correct_a_setting(state):
    run_lines(state, "set eye 2.5 ie 1.2")
    out = run_lines(state, "correct e0002 ie -0.4 -- read the index again")
    assert "logged e0003: correction of e0002" in out
    assert state.settings.index_error_arcmin == -0.4 and state.settings.eye_height_m == 2.5
    out = run_lines(state, "show e0001", "show e0003", "log")
    assert "e0001  passage log" in out and "vessel         Kestrel Dawn (invented)" in out
    assert "e0003: correction of e0002" in out and "index error: +1.2′ -> −0.4′" in out
    assert "_arcmin" not in out
    assert "e0002  setting  (logged" in out and "[corrected by e0003]" in out


def test_without_a_log_the_session_asks_for_a_passage(tmp_path, history):
    status, out = pipe_session(enter("Biscay crossing", "Kestrel Dawn", "note one", "quit"),
                               None, history=history, cwd=tmp_path)
    assert status == 0
    made = tmp_path / "sight_logs" / "biscay-crossing.jsonl"
    assert f"new passage log: {made}" in out
    header = load_log(made).header
    assert header["title"] == "Biscay crossing" and header["vessel"] == "Kestrel Dawn"
    status, out = pipe_session(enter("1", "log", "quit"), None, history=history, cwd=tmp_path)
    assert "  1. biscay-crossing.jsonl" in out and f"passage log: {made}" in out
    assert re.search(r"e0002  note +2026-06-14 23:30:00  one", out)   # the clock of the test
    assert "+note one" in history.read_text(encoding="utf-8")   # the answers are not history
    assert "Biscay crossing" not in history.read_text(encoding="utf-8")


def test_help_is_wrapped_to_the_terminal_not_cut_mid_word(state):
    # In a terminal of 80 columns every help line fits, and no word is split (the terminal
    # would otherwise cut "each" into "ea" / "ch"): a property of the screen, no source needed.
    state._width = lambda: 80
    out = run_lines(state, "help fix")
    lines = [x for x in out.splitlines() if x]
    assert lines and all(len(x) < 80 for x in lines)
    words = " ".join(x.strip() for x in lines).split()
    assert "each" in words


def test_a_time_that_is_neither_iso_nor_a_time_of_day_shows_both_forms(state):
    # The shell's `at` takes an ISO 8601 instant or a UTC time of day (README, TIME): a bad one
    # is refused with an example of each, not of ISO 8601 alone.
    out = run_lines(state, "sight Vega 34 12.3 at 32 12.4")
    (err,) = [x for x in out.splitlines() if x.startswith("error:")]
    assert "field 'at'" in err and "21:15:48" in err and "2026-06-20T21:15:48Z" in err
