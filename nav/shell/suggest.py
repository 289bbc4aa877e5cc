"""What may come next on a shell line, from the command registry (no prompt_toolkit here).

:func:`suggest` returns ``(text, start, meta)`` triples: ``text`` replaces the line from index
``start`` up to the cursor. Commands, body names (case-insensitive prefix, names of several words
too), limbs, horizons, setting names and their options, entry ids, export formats and file names
all come from the registry, :mod:`nav.shell.parse` and :mod:`nav.almanac`.
"""

from __future__ import annotations

import functools
import os

from ..errors import NavInputError
from ..fields import HORIZONS, LIMBS
from .entries import summary
from .words import (CORRECTABLE, EXPORT_FORMATS, NUMERIC_START, OPTIONS, POSITION_BASES,
                    REST_WORDS, Token, tokenize)

MAX_FILES = 60


@functools.lru_cache(maxsize=None)
def bodies() -> tuple[tuple[str, str], ...]:
    from ..almanac import SOLAR_BODIES, body_names

    return tuple((n, SOLAR_BODIES[n][0] if n in SOLAR_BODIES else "star") for n in body_names())


def _tokens(text: str) -> list[Token]:
    try:
        return tokenize(text)
    except NavInputError:  # an open double quote: the rest is one word
        i = text.rfind('"')
        return tokenize(text[:i]) + [Token(text[i + 1:], i, len(text), True)]


def _match(prefix: str, names, start: int, meta: str | None = None):
    p = prefix.lower()
    out = []
    for item in names:
        name, m = item if isinstance(item, tuple) else (item, meta or "")
        if name.lower().startswith(p):
            out.append((name, start, m))
    return out


def _files(prefix: str, start: int, extensions: tuple[str, ...]):
    folder, base = os.path.split(prefix)
    try:
        names = sorted(os.listdir(os.path.expanduser(folder) or "."))
    except OSError:
        return []
    out = []
    for n in names:
        if not n.lower().startswith(base.lower()) or n.startswith(".") and not base.startswith("."):
            continue
        full = os.path.join(folder, n)
        if os.path.isdir(os.path.expanduser(full)):
            out.append((full + os.sep, start, "folder"))
        elif n.lower().endswith(extensions):
            out.append((full, start, "file"))
        if len(out) >= MAX_FILES:
            break
    return out


def _entries(st, kinds=None, standing=True):
    out = []
    for e in st.log.entries[1:]:
        if kinds and e.kind not in kinds:
            continue
        cur = st.lookup(e.id)
        if standing and cur is None:
            continue
        out.append((e.id, f"{e.kind}: {summary(cur or e)}"[:60]))
    return out[::-1]


def _values(kind: str, prefix: str, start: int):
    if kind == "limb":
        return _match(prefix, LIMBS, start, "limb")
    if kind == "horizon":
        return _match(prefix, HORIZONS, start, "horizon")
    if kind == "basis":
        return _match(prefix, POSITION_BASES, start, "basis of the position")
    if kind == "body":
        return _match(prefix, bodies(), start)
    return []


def _words(words, used, prefix: str, start: int):
    return _match(prefix, [(w, OPTIONS[w].help) for w in words if w not in used], start)


def suggest(text: str, st) -> list[tuple[str, int, str]]:
    """Completions for the line `text` (the text before the cursor)."""
    from .registry import ALIASES, COMMANDS_LIST, TOPICS, find_command

    toks = _tokens(text)
    if not text or text[-1].isspace() or (toks and toks[-1].quoted and text.endswith('"')):
        cur, start, done = "", len(text), toks
    else:
        last = toks[-1]
        cur, start, done = last.text, last.start + (1 if last.quoted else 0), toks[:-1]
    if not done:
        names = [(c.name, c.summary) for c in COMMANDS_LIST] + [(a, f"= {n}") for a, n in
                                                                 ALIASES.items()]
        return _match(cur, names, start)
    try:
        cmd = find_command(done[0].text)
    except NavInputError:
        return []
    args = done[1:]
    words = cmd.words
    lowered = [a.text.lower() for a in args]

    if cmd.name == "correct":
        if not args:
            return _match(cur, _entries(st, tuple(CORRECTABLE)), start)
        target = st.lookup(lowered[0])
        if target is None or target.kind not in CORRECTABLE or "--" in lowered:
            return []
        words = CORRECTABLE[target.kind]
        lowered = lowered[1:]
        if not lowered or lowered[-1] not in words:
            return _words(words, lowered, cur, start) + _match(cur, [("--", "then the reason")],
                                                              start)
    if words and lowered and lowered[-1] in words:          # the value of an option word
        if lowered[-1] in REST_WORDS:
            return []
        return _values(OPTIONS[lowered[-1]].kind, cur, start)
    if cmd.name == "set" and len(lowered) >= 2 and lowered[-2] == "watch":
        return _match(cur, ["fast", "slow"], start, "watch error")
    if any(w in REST_WORDS for w in lowered):
        return []
    used = [w for w in lowered if w in words]

    first = cmd.first
    if first == "body" and not used and not any(a.text.startswith(NUMERIC_START) for a in args):
        from_ = args[0].start if args else start
        found = _match(text[from_:], bodies(), from_)
        if found or not args:
            return found
    if first == "entry" and not args:
        kinds = None if cmd.name == "show" else ("setting", "dr", "sight", "fix", "note")
        return _match(cur, _entries(st, kinds, standing=cmd.name != "show"), start)
    if first == "sight" and cmd.name == "latitude":
        if not args:
            return _match(cur, _entries(st, ("sight",)), start)
        return _match(cur, [("log", "note the latitude in the log")], start) \
            if len(args) == 1 else []
    if first == "sight":
        return [c for c in _match(cur, _entries(st, ("sight",)), start) if c[0] not in lowered]
    if first == "command" and not args:
        return _match(cur, [(c.name, c.summary) for c in COMMANDS_LIST] +
                      [(t, "topic") for t in TOPICS], start)
    if first == "count" and not args:
        return _match(cur, [("all", "every entry")], start)
    if first == "format":
        if not args:
            return _match(cur, [(f, "export format") for f in EXPORT_FORMATS], start)
        if len(args) == 1 and lowered[0] in EXPORT_FORMATS:
            ext = (".json", ".geojson") if lowered[0] == "geojson" else ("." + lowered[0],)
            return _files(cur, start, ext)
        return []
    if first == "csv":
        return _files(cur, start, (".csv",)) if not args else []
    if first == "plot":
        if not args:
            return _match(cur, [("fix", "plotting sheet of a fix"), ("passage", "passage plot")],
                          start) + _files(cur, start, (".png", ".pdf"))
        if lowered == ["fix"]:
            return _match(cur, _entries(st, ("fix",)), start) + _files(cur, start,
                                                                      (".png", ".pdf"))
        if len(lowered) <= 2 and lowered[0] in ("fix", "passage"):
            return _files(cur, start, (".png", ".pdf"))
        return []
    if first in ("position", "number") and not args:
        return []
    if words and (args or first is None):
        return _words(words, used, cur, start)
    return []
