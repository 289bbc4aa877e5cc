"""The file rules (issue 7, item 7; nav/files.py), at every edge that reads or writes a file.

- Only regular files are written: a device, a FIFO or a folder at the name is refused in one
  line and left as it is (``nav export LOG --gpx /dev/null`` must not replace the device).
- A FIFO given as input is refused at once, never read (a FIFO with no writer would block a
  plain ``open`` for ever; each test here runs under an alarm so a regression fails, not hangs).
- Empty or over-long names and dangling symbolic links get a clear line.
- One overwrite rule for the CLI (``--replace``) and the shell (the word ``replace``).
- A failed write, a full disk included (ENOSPC simulated), leaves no temporary file and any
  old file as it was.

File-system facts relied on (POSIX, from memory of the Linux man pages open(2), mkfifo(3),
rename(2)): opening a FIFO for reading blocks until a writer opens it unless O_NONBLOCK is
given; rename() over a device node replaces the node. Vessels and data are invented.
"""

from __future__ import annotations

import errno
import os
import signal
import stat
from pathlib import Path

import pytest

from nav import files
from nav.cli import main
from nav.errors import NavInputError

ROOT = Path(__file__).resolve().parents[1]
DEMO_LOG = ROOT / "sight_logs" / "demo-azores-madeira.jsonl"
EVENING = ROOT / "examples" / "evening-stars.csv"


@pytest.fixture(autouse=True)
def alarm():
    """A FIFO that is read by mistake blocks; the alarm turns that into a failure."""
    def ring(*_):
        raise TimeoutError("blocked: a FIFO was opened for reading")
    old = signal.signal(signal.SIGALRM, ring)
    signal.alarm(20)
    yield
    signal.alarm(0)
    signal.signal(signal.SIGALRM, old)


@pytest.fixture
def fifo(tmp_path):
    p = tmp_path / "pipe.csv"
    os.mkfifo(p)
    return p


def one_line(err: str) -> str:
    assert err.count("\n") == 1 and "Traceback" not in err, err
    return err


# ---------------------------------------------------------------- outputs

def test_export_to_dev_null_leaves_the_device(capsys):
    before = os.stat("/dev/null")
    assert stat.S_ISCHR(before.st_mode)
    assert main(["export", str(DEMO_LOG), "--gpx", "/dev/null"]) == 2
    err = one_line(capsys.readouterr().err)
    assert "/dev/null is a device" in err and "only regular files" in err
    after = os.stat("/dev/null")
    assert stat.S_ISCHR(after.st_mode) and after.st_ino == before.st_ino
    assert main(["export", str(DEMO_LOG), "--gpx", "/dev/null", "--replace"]) == 2
    assert stat.S_ISCHR(os.stat("/dev/null").st_mode)


def test_export_refuses_a_fifo_and_a_folder(tmp_path, fifo, capsys):
    for target, words in ((fifo, "named pipe (FIFO)"), (tmp_path, "is a folder")):
        assert main(["export", str(DEMO_LOG), "--geojson", str(target), "--replace"]) == 2
        assert words in one_line(capsys.readouterr().err)
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pipe.csv"]   # no temporary left


def test_export_refuses_an_existing_file_unless_asked_to_replace(tmp_path, capsys):
    out = tmp_path / "track.gpx"
    out.write_text("an older export\n")
    assert main(["export", str(DEMO_LOG), "--gpx", str(out)]) == 2
    assert "already exists; add --replace to replace it" in one_line(capsys.readouterr().err)
    assert out.read_text() == "an older export\n"
    assert main(["export", str(DEMO_LOG), "--gpx", str(out), "--replace"]) == 0
    assert out.read_text().startswith("<?xml")
    assert main(["export", str(DEMO_LOG), "--csv", str(DEMO_LOG), "--replace"]) == 2
    assert "passage log itself" in capsys.readouterr().err


@pytest.mark.parametrize("name, words", [
    ("", "no file name"), ("x" * 300 + ".gpx", "the limit is 255"),
    ("a/" * 2100 + "b.gpx", "the limit is 4,096"),
])
def test_empty_and_over_long_names(name, words, capsys):
    assert main(["export", str(DEMO_LOG), "--gpx", name]) == 2       # as an output
    assert words in one_line(capsys.readouterr().err)
    assert main(["reduce", name]) == 2                                # and as an input
    assert words in one_line(capsys.readouterr().err)


def test_dangling_symlinks_in_and_out(tmp_path, capsys):
    link = tmp_path / "gone.gpx"
    link.symlink_to(tmp_path / "nowhere" / "x.gpx")
    assert main(["export", str(DEMO_LOG), "--gpx", str(link)]) == 2
    assert "symbolic link to" in one_line(capsys.readouterr().err)
    assert main(["reduce", str(link)]) == 2
    assert "symbolic link to" in capsys.readouterr().err


def test_a_full_disk_leaves_no_temporary_and_the_old_file(tmp_path, monkeypatch):
    target = tmp_path / "sights.csv"
    target.write_text("the old export\n")

    def full(fd, data):
        os.write(fd, data[:10])
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(files, "write_fully", full)
    with pytest.raises(NavInputError, match="No space left on device") as err:
        files.write_output(target, "new text " * 100, replace=True)
    assert "nothing was written" in str(err.value)
    assert target.read_text() == "the old export\n"
    assert [p.name for p in tmp_path.iterdir()] == ["sights.csv"]
    with pytest.raises(NavInputError, match="No space"):       # a new file: none is left
        files.write_output(tmp_path / "new.gpx", b"<gpx/>")
    assert [p.name for p in tmp_path.iterdir()] == ["sights.csv"]


def test_a_plot_that_fails_to_save_leaves_no_temporary(tmp_path):
    def savefig(f):
        f.write(b"\x89PNG partial")
        raise OSError(errno.ENOSPC, "No space left on device")

    with pytest.raises(NavInputError, match="No space"):
        files.write_output(tmp_path / "sheet.png", savefig)
    assert list(tmp_path.iterdir()) == []


def test_fix_plot_follows_the_overwrite_rule(tmp_path, capsys):
    sheet = tmp_path / "sheet.png"
    sheet.write_bytes(b"older")
    assert main(["fix", str(EVENING), "--plot", str(sheet)]) == 2
    assert "add --replace" in capsys.readouterr().err and sheet.read_bytes() == b"older"
    assert main(["fix", str(EVENING), "--plot", str(sheet), "--replace"]) == 0
    assert sheet.read_bytes().startswith(b"\x89PNG")
    fifo = tmp_path / "sheet2.png"
    os.mkfifo(fifo)
    assert main(["fix", str(EVENING), "--plot", str(fifo), "--replace"]) == 2
    assert "named pipe (FIFO)" in capsys.readouterr().err and stat.S_ISFIFO(os.stat(fifo).st_mode)


def test_the_demo_refuses_to_overwrite_its_pictures_without_replace(tmp_path, capsys):
    from nav.commands.passage_cmd import replay_demo

    (tmp_path / "passage.png").write_bytes(b"keep")
    said = []
    with pytest.raises(NavInputError, match="add --replace"):
        replay_demo(tmp_path, say=said.append)
    assert said == [] and (tmp_path / "passage.png").read_bytes() == b"keep"   # before any work
    assert main(["demo", "--out", str(tmp_path)]) == 2
    assert "earlier run (passage.png)" in one_line(capsys.readouterr().err)


# ---------------------------------------------------------------- inputs

@pytest.mark.parametrize("argv", [
    ["reduce", "{fifo}"], ["fix", "{fifo}"], ["import", "{fifo}", "--log", "{log}"],
    ["export", "{fifo}", "--gpx", "-"], ["review", "{fifo}"],
])
def test_a_fifo_as_input_is_refused_at_once(argv, fifo, tmp_path, capsys):
    log = tmp_path / "p.jsonl"
    args = [a.format(fifo=fifo, log=log) for a in argv]
    assert main(args) == 2
    err = one_line(capsys.readouterr().err)
    assert "named pipe (FIFO)" in err and "only regular files" in err


def test_a_fifo_as_the_log_of_an_import_is_refused(fifo, capsys):
    assert main(["import", str(EVENING), "--log", str(fifo)]) == 2
    assert "named pipe (FIFO)" in one_line(capsys.readouterr().err)


def test_the_shell_refuses_a_fifo_and_shares_the_overwrite_rule(tmp_path, fifo):
    from datetime import datetime, timezone

    from shell_driver import open_state, run_lines

    st, log = open_state(tmp_path / "shell.jsonl", "Kestrel Dawn (invented)", "files",
                         lambda: datetime(2026, 6, 20, 23, 0, tzinfo=timezone.utc))
    try:
        out = run_lines(st, f"import {fifo}")
        assert "named pipe (FIFO)" in out and len(st.log.entries) == 1
        run_lines(st, f"import {EVENING}")
        target = tmp_path / "out.gpx"
        target.write_text("older\n")
        out = run_lines(st, f"export gpx {target}")
        assert "add the word replace at the end" in out and target.read_text() == "older\n"
        out = run_lines(st, f"export gpx {target} replace")
        assert "exported" in out and target.read_text().startswith("<?xml")
        sheet = tmp_path / "p.png"
        sheet.write_bytes(b"older")
        out = run_lines(st, f"plot passage {sheet}")
        assert "add the word replace" in out and sheet.read_bytes() == b"older"
        out = run_lines(st, f"plot passage {sheet} replace")
        assert sheet.read_bytes().startswith(b"\x89PNG")
    finally:
        log.close()
