"""prompt_toolkit pieces of the shell: the completer and the validators (from the registry).

The completer asks :func:`nav.shell.suggest.suggest`; the line validator runs the command's
parser on Enter (the same parse the run does), so an invalid line shows its error and is not run.
"""

from __future__ import annotations

from prompt_toolkit.completion import Completer, Completion
from prompt_toolkit.validation import ValidationError, Validator

from ..errors import NavInputError
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


class LineValidator(Validator):
    """Refuses (on Enter) a line whose command parser refuses it, showing why."""

    def __init__(self, state_ref):
        self._state = state_ref

    def validate(self, document) -> None:
        st = self._state()
        if st is None:
            return
        msg = st.check(document.text)
        if msg:
            st.last_error = msg
            raise ValidationError(cursor_position=len(document.text), message=msg)


class FieldValidator(Validator):
    """One answer of a guided entry, checked by its field parser (empty: the default)."""

    def __init__(self, check, has_default: bool):
        self.check, self.has_default = check, has_default

    def validate(self, document) -> None:
        text = document.text
        if not text.strip():
            if self.has_default:
                return
            raise ValidationError(cursor_position=0, message="a value is needed (Ctrl-C gives up)")
        if self.check is None:
            return
        try:
            self.check(text)
        except NavInputError as err:
            raise ValidationError(cursor_position=len(text), message=str(err)) from None
