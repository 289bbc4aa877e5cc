"""prompt_toolkit pieces of the shell: the completers (from the registry).

The completer asks :func:`nav.shell.suggest.suggest`. A line is checked on Enter by
:meth:`nav.shell.state.ShellState.check` (the command's own parser, the same parse the run does)
in :mod:`nav.shell.app`, which shows a refusal in full above the prompt.
"""

from __future__ import annotations

from prompt_toolkit.completion import Completer, Completion

from .suggest import _match, _values, bodies, suggest


class ShellCompleter(Completer):
    """Nested completion of a whole command line."""

    def __init__(self, state_ref):
        self._state = state_ref           # a callable returning the ShellState (or None)

    def get_completions(self, document, complete_event):
        st = self._state()
        if st is None:
            return
        text = document.text_before_cursor
        try:
            found = suggest(text, st)
        except Exception:  # noqa: BLE001 - completion must never break the prompt
            return
        for value, start, meta in found:
            yield Completion(value, start_position=start - len(text), display_meta=meta or None)


class FieldCompleter(Completer):
    """Completion of one answer of a guided entry (a body, a limb ...)."""

    def __init__(self, kind: str | None):
        self.kind = kind

    def get_completions(self, document, complete_event):
        text = document.text_before_cursor
        if self.kind == "body":
            found = _match(text, bodies(), 0)
        elif self.kind == "time":
            found = _match(text, [("zt ", "zone time on the watch")], 0)
        else:
            found = _values(self.kind or "", text, 0)
        for value, start, meta in found:
            yield Completion(value, start_position=start - len(text), display_meta=meta or None)
