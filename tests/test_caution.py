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
