"""The interactive shell of nav: one passage log, one command registry, one prompt session.

- :mod:`nav.shell.registry` lists every command (syntax, help, its parser and its handler); help,
  completion and dispatch all read it.
- :mod:`nav.shell.words` and :mod:`nav.shell.times` split a line into words and times, and
  :mod:`nav.shell.parse` turns it into a request, all through the field parsers of
  :mod:`nav.fields`, :mod:`nav.angles` and :mod:`nav.timekeeping` (the ones the batch commands
  use); the validator runs the same parse on Enter.
- :mod:`nav.shell.state` holds the open log and the passage rebuilt from it, and dispatches a
  line; :mod:`nav.shell.handlers` and :mod:`nav.shell.records` carry out requests: they append to
  the log (confirming only after the append returned, fsynced) and print the results.
- :mod:`nav.shell.suggest` says what may come next on a line; :mod:`nav.shell.complete` wraps it
  (and the validators) for prompt_toolkit; :mod:`nav.shell.app` opens the log, prints the caution
  banner and runs the prompt session, or reads commands line by line when standard input is not
  a terminal.

Only :mod:`nav.shell.app` (inside the interactive path) and :mod:`nav.shell.complete` import
prompt_toolkit; matplotlib is imported by the ``plot`` command alone.
"""


def run_shell(*args, **kwargs) -> int:
    """Open the shell (see :func:`nav.shell.app.run_shell`)."""
    from .app import run_shell as _run

    return _run(*args, **kwargs)
