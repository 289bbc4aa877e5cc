"""The interactive shell of nav: one passage log, one command registry, one prompt session.

- :mod:`nav.shell.registry` lists every command (syntax, help, its parser and its handler); help,
  completion and dispatch all read it.
- :mod:`nav.shell.words` and :mod:`nav.shell.times` split a line into words and times, and
  :mod:`nav.shell.parse` turns it into a request, all through the field parsers of
  :mod:`nav.fields`, :mod:`nav.angles` and :mod:`nav.timekeeping` (the ones the batch commands
  use); the validator runs the same parse on Enter.
- :mod:`nav.shell.dispatch` (beside the registry) finds, checks and runs a line's command;
  :mod:`nav.shell.state` holds the open log, the passage rebuilt from it and the command table
  (``st.commands``); :mod:`nav.shell.handlers` and :mod:`nav.shell.records` carry out requests:
  they append to the log (confirming only after the append returned, fsynced) and print the
  results, with entries in navigator notation from :mod:`nav.shell.entries`. No handler imports
  the registry or the state back; what they share is in :mod:`nav.shell.common`.
- :mod:`nav.shell.suggest` says what may come next on a line; :mod:`nav.shell.complete` wraps it
  for prompt_toolkit; :mod:`nav.shell.app` opens the log, prints the caution banner and runs the
  prompt session (a refused line: its error in full above the prompt, the line kept to mend), or
  reads commands line by line when standard input is not a terminal.

Only :mod:`nav.shell.app` (inside the interactive path) and :mod:`nav.shell.complete` import
prompt_toolkit; matplotlib is imported by the ``plot`` command alone.
"""


def run_shell(*args, **kwargs) -> int:
    """Open the shell (see :func:`nav.shell.app.run_shell`)."""
    from .app import run_shell as _run

    return _run(*args, **kwargs)
