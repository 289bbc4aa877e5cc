"""The rules for user files, in one place: what nav reads, what it writes, and how.

Every edge that reads or writes a user's file goes through here: the batch sight files of
``nav reduce`` / ``nav fix`` / ``nav import`` and the shell's ``import``, the passage log, the
exports of ``nav export`` and the shell's ``export``, plotting sheets (``--plot``, the shell's
``plot``) and the demo's pictures.

- **Names.** An empty name, a name with a NUL, a path component over :data:`MAX_NAME_BYTES` or
  a path over :data:`MAX_PATH_BYTES` (UTF-8 bytes) is refused in one line. A symbolic link whose
  target does not exist is named as such.
- **Reading.** Only regular files are read. A named pipe (FIFO), a device, a socket or a folder
  is refused at once: the file is opened without blocking (``O_NONBLOCK``) and checked with
  ``fstat`` before a byte is read, so a FIFO never makes nav wait.
- **Writing.** Only regular files are written. An existing device, FIFO, socket or folder at the
  name is refused and left as it is (nav never renames over it). An existing regular file is
  refused unless the caller asks to replace it (``--replace`` on the command line, the word
  ``replace`` in the shell): one overwrite rule for every edge. The data go to a temporary file
  beside the target, are fsynced, and then take the name: linked (never overwriting) for a new
  file, renamed over it when replacing. A failed write (a full disk included) removes the
  temporary file and leaves any old file untouched.

This module touches the disk by design; the core never imports it.
"""

from __future__ import annotations

import errno
import os
import secrets
import stat
from pathlib import Path
from typing import BinaryIO, Callable, Iterable, Union

from .errors import NavInputError

MAX_NAME_BYTES = 255          # one path component (the common file-system limit)
MAX_PATH_BYTES = 4096         # a whole path (Linux PATH_MAX)
REPLACE_OPTION = "--replace"  # the CLI's word for "replace an existing file"
Content = Union[bytes, str, Callable[[BinaryIO], None]]


def _kind(mode: int) -> str | None:
    """What a non-regular file is, in words; None for a regular file."""
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def check_name(path, field: str = "file", example: str = "passage.gpx") -> Path:
    """The path as a Path, or a clear refusal of an empty, NUL-holding or over-long name."""
    text = os.fspath(path) if isinstance(path, os.PathLike) else path
    if not isinstance(text, str) or not text.strip():
        raise NavInputError("no file name was given", field=field, example=example)
    if "\x00" in text:
        raise NavInputError("the file name holds a NUL character", field=field, example=example)
    raw = os.fsencode(text)
    if len(raw) > MAX_PATH_BYTES:
        raise NavInputError(f"the path is {len(raw):,} bytes long; the limit is "
                            f"{MAX_PATH_BYTES:,}", field=field, example=example)
    for part in Path(text).parts:
        if len(os.fsencode(part)) > MAX_NAME_BYTES:
            raise NavInputError(f"a name in the path is {len(os.fsencode(part)):,} bytes long "
                                f"('{part[:24]}...'); the limit is {MAX_NAME_BYTES}",
                                field=field, example=example)
    return Path(text)


def _dangling(path: Path) -> str | None:
    """The target of a symbolic link that points nowhere, else None."""
    try:
        if path.is_symlink() and not path.exists():
            return os.readlink(path)
    except OSError:
        return None
    return None


def _refuse_missing(path: Path, field: str, example: str) -> None:
    target = _dangling(path)
    if target is not None:
        raise NavInputError(f"cannot read {path}: it is a symbolic link to {target}, which does "
                            "not exist", field=field, example=example)
    raise NavInputError(f"cannot read {path}: no such file", field=field, example=example)


def open_input(path, field: str = "file", example: str = "sights.csv") -> int:
    """A read-only descriptor of a regular file (the caller closes it); anything else is
    refused at once, without blocking on a FIFO."""
    p = check_name(path, field, example)
    try:
        fd = os.open(p, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0))
    except FileNotFoundError:
        _refuse_missing(p, field, example)
    except OSError as err:
        if err.errno == errno.ENXIO:           # a socket, or a FIFO that nothing writes to
            raise NavInputError(f"cannot read {p}: it is not a regular file (nav reads only "
                                "regular files)", field=field, example=example) from None
        raise NavInputError(f"cannot read {p}: {err.strerror}", field=field,
                            example=example) from None
    try:
        what = _kind(os.fstat(fd).st_mode)
        if what:
            raise NavInputError(f"cannot read {p}: it is {what}, not a regular file (nav reads "
                                "only regular files)", field=field, example=example)
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
    except BaseException:
        os.close(fd)
        raise
    return fd


def check_input(path, field: str = "file", example: str = "sights.csv") -> Path:
    """Refuse at once what :func:`open_input` refuses; for readers that open the file themselves."""
    os.close(open_input(path, field, example))
    return Path(path)


def read_input(path, max_bytes: int, field: str = "file", example: str = "sights.csv") -> bytes:
    """Up to ``max_bytes + 1`` bytes of a regular file (the caller judges the size)."""
    fd = open_input(path, field, example)
    try:
        with os.fdopen(fd, "rb", closefd=False) as f:
            return f.read(max_bytes + 1)
    except OSError as err:
        raise NavInputError(f"cannot read {path}: {err.strerror}", field=field,
                            example=example) from None
    finally:
        os.close(fd)


# ---------------------------------------------------------------- writing

def write_fully(fd: int, data: bytes) -> None:
    """One os.write (more only if the kernel writes short)."""
    view = memoryview(data)
    while view:
        view = view[os.write(fd, view):]


def fsync_dir(directory: Path) -> None:
    try:
        dfd = os.open(directory, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
    except OSError:  # pragma: no cover - a platform that cannot open a directory (Windows)
        return
    try:
        os.fsync(dfd)
    except OSError as err:  # pragma: no cover - a file system that cannot sync a directory
        if err.errno not in (errno.EINVAL, errno.ENOTSUP):
            raise
    finally:
        os.close(dfd)


def _temp_beside(target: Path) -> tuple[Path, int]:
    tmp = target.with_name(f".{target.name[:200]}.{secrets.token_hex(4)}.tmp")
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_CLOEXEC", 0), 0o666)
    return tmp, fd


def _fill(fd: int, content: Content) -> None:
    if callable(content):
        with os.fdopen(os.dup(fd), "wb") as f:
            content(f)
            f.flush()
    else:
        write_fully(fd, content.encode("utf-8") if isinstance(content, str) else content)
    os.fsync(fd)


def write_new_file(candidates: Iterable[Path], data: bytes) -> Path:
    """Write data under the first free name of ``candidates``, complete or not at all: a
    temporary file is written and fsynced, hard-linked under the name (a link never replaces a
    file), removed, and the directory fsynced. OSError is the caller's to report."""
    candidates = list(candidates)
    tmp, fd = _temp_beside(candidates[0])
    try:
        try:
            _fill(fd, data)
        finally:
            os.close(fd)
        for target in candidates:
            try:
                os.link(tmp, target)
                break
            except FileExistsError:
                continue
        else:
            raise FileExistsError(errno.EEXIST, "every name is taken", str(candidates[-1]))
    finally:
        os.unlink(tmp)
    fsync_dir(tmp.parent)
    return target


def check_output(path, *, replace: bool = False, field: str = "file",
                 example: str = "passage.gpx", replace_hint: str = REPLACE_OPTION,
                 protect: Iterable = ()) -> Path:
    """The path to write, after the rules (see the module doc); nothing is written yet.

    ``protect``: files that must never be written over (the passage log an export reads).
    A symbolic link to a regular file is followed (its target is the file written)."""
    p = check_name(path, field, example)
    if p.is_symlink():
        if _dangling(p) is not None:
            raise NavInputError(f"{p} is a symbolic link to {os.readlink(p)}, which does not "
                                "exist; give a file name", field=field, example=example)
        p = Path(os.path.realpath(p))
    try:
        st = os.stat(p)
    except FileNotFoundError:
        if not p.parent.is_dir():
            raise NavInputError(f"the folder {p.parent} does not exist", field=field,
                                example=example) from None
        return p
    except OSError as err:
        raise NavInputError(f"{p} cannot be checked ({err.strerror})", field=field,
                            example=example) from None
    what = _kind(st.st_mode)
    if what:
        raise NavInputError(f"{path} is {what}; nav writes only regular files and left it as "
                            "it is", field=field, example=example)
    for other in protect:
        try:
            if os.path.samefile(p, other):
                raise NavInputError(f"{path} is the passage log itself; choose another file",
                                    field=field, example=example)
        except OSError:
            continue
    if not replace:
        raise NavInputError(f"{path} already exists; add {replace_hint} to replace it",
                            field=field, example=example)
    return p


def write_output(path, content: Content, *, replace: bool = False, field: str = "file",
                 example: str = "passage.gpx", replace_hint: str = REPLACE_OPTION,
                 protect: Iterable = ()) -> Path:
    """Write a user's output file by the rules of the module doc; returns the path written.

    ``content``: bytes, text (UTF-8), or a function that writes to a binary file object (a
    matplotlib figure's ``savefig``). Every failure is one NavInputError; the temporary file is
    removed and an existing file is left as it was."""
    p = check_output(path, replace=replace, field=field, example=example,
                     replace_hint=replace_hint, protect=protect)
    tmp = None
    try:
        tmp, fd = _temp_beside(p)
        try:
            _fill(fd, content)
        finally:
            os.close(fd)
        if replace:
            what = _kind(os.lstat(p).st_mode) if os.path.lexists(p) else None
            if what:               # became something else while we wrote: leave it be
                raise NavInputError(f"{path} is {what}; nav writes only regular files and "
                                    "left it as it is", field=field, example=example)
            os.replace(tmp, p)
            tmp = None
        else:
            os.link(tmp, p)
        fsync_dir(p.parent)
    except FileExistsError:
        raise NavInputError(f"{path} already exists; add {replace_hint} to replace it",
                            field=field, example=example) from None
    except OSError as err:
        raise NavInputError(f"cannot write {path} ({err.strerror or err}); nothing was written",
                            field=field, example="a file in a folder you can write to") from None
    finally:
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass
    return p
