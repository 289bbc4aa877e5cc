"""nav's caution (issue 7 item 14): nav is a working tool for use at sea.

The wording required is the project's safety rule (GUIDE §5, the helper brief): nav is a
cross-check that backs up, and never replaces, approved navigation practice, charts and
instruments, and the skipper stays responsible. No surface, doc or test describes nav as an aid
for learning (the pattern AID below). These are rules of the project, not values of the trade.
"""

from __future__ import annotations

import re
from pathlib import Path

from nav import CAUTION

ROOT = Path(__file__).resolve().parent.parent
REQUIRED = ("cross-check", "backs up, and never replaces, approved navigation practice, charts "
            "and instruments", "skipper stays responsible")
AID = re.compile(r"(teaching|study|learning|training)[ -]aid", re.I)


def _flat(text: str) -> str:
    return " ".join(text.replace(">", " ").replace("*", " ").split())


def test_caution_says_what_nav_is_and_who_is_responsible():
    for phrase in REQUIRED:
        assert phrase in CAUTION, phrase
    assert not AID.search(CAUTION)


def test_every_surface_carries_the_caution():
    from nav.cli import build_parser
    from nav.shell.app import banner_lines

    assert CAUTION in " ".join(banner_lines())
    description = _flat(build_parser().description)
    readme = (ROOT / "README.md").read_text(encoding="utf-8").split("\n\n")
    first = _flat(next(p for p in readme[1:] if not p.startswith("#")))   # after the title
    logs = _flat((ROOT / "sight_logs" / "README.md").read_text(encoding="utf-8"))
    for text in (description, first, logs):
        for phrase in REQUIRED:
            assert phrase in text, (phrase, text[:80])


def test_nav_is_never_called_a_study_aid():
    """Every text file of the project (code, docs, tests, tools, logs' README)."""
    found = []
    for path in ROOT.rglob("*"):
        rel = path.relative_to(ROOT)
        if (not path.is_file() or rel.parts[0] in (".git", ".venv", "build", "dist")
                or "egg-info" in rel.parts[0] or "__pycache__" in rel.parts
                or path.suffix not in (".py", ".md", ".txt", ".toml", ".cfg", ".csv", "")):
            continue
        text = path.read_text(encoding="utf-8", errors="replace")
        found += [f"{rel}:{text[:m.start()].count(chr(10)) + 1}" for m in AID.finditer(text)]
    assert found == []


def test_the_shell_where_carries_the_caution(tmp_path):
    """`where` shows a position, so it shows the caution (project safety rule, not the trade)."""
    from shell_driver import open_state, run_lines

    from datetime import datetime, timezone

    def clock():
        return datetime(2026, 6, 21, 14, tzinfo=timezone.utc)

    state, log = open_state(tmp_path / "p.jsonl", "Tern (invented)", "caution test", clock)
    try:
        out = run_lines(state, "dr 41 12 N 032 06 W course 245 speed 6.5 at "
                        "2026-06-21T12:00:00Z", "where at 2026-06-21T13:00:00Z")
    finally:
        log.close()
    after = " ".join(out.split("where at", 1)[-1].split())
    assert "position" in after
    for phrase in REQUIRED:
        assert phrase in after, phrase


def test_reduce_json_keeps_its_list_and_gives_the_caution_on_stderr(capsys):
    """The JSON of `nav reduce` is a list (README contract) holding DR positions: the caution
    goes to stderr (project safety rule)."""
    import json

    from nav.cli import main

    assert main(["reduce", str(ROOT / "examples" / "evening-stars.csv"), "--json"]) == 0
    out, err = capsys.readouterr()
    assert isinstance(json.loads(out), list)
    assert CAUTION in err
