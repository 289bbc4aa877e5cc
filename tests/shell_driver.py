"""Shared by the shell tests: a ShellState on a new log writing to a buffer, driven line by line
(as the shell's line mode reads piped input)."""

from io import StringIO

from nav.logbook import new_log


def open_state(path, vessel: str, title: str, clock):
    """A ShellState on a new log at `path`, its output in ``st.buf``. Close ``st.log`` after."""
    from nav.shell.state import ShellState

    log = new_log(path, vessel, title)
    buf = StringIO()
    st = ShellState(log, out=buf, err=buf, clock=clock)
    st.buf = buf
    return st, log


def run_lines(st, *lines: str) -> str:
    """Dispatch `lines` (each must leave the shell running) and return what they printed."""
    start = st.buf.tell()
    for line in lines:
        assert st.dispatch(line) is True
    return st.buf.getvalue()[start:]
