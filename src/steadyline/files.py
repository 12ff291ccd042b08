"""Reading input files without being stopped, fooled or led outside by one of them.

The projects folder is a shared repository: anything can turn up in it. Every input file is
looked at with ``stat`` before it is opened, and only a regular file is ever opened: opening a
named pipe blocks until someone writes to it (for ever, in a build), and opening a device can
act on the device. What cannot be read is described in words (:func:`fault`), so that it becomes
one problem of the project that uses it, or a warning when no project does, and never stops the
rest of the portfolio. Whether a path lies inside a folder is decided on real paths, links
resolved (:func:`inside`), so that a link cannot lead a build to read from outside the projects
folder.
"""

from __future__ import annotations

import errno
import os
import stat
from pathlib import Path

# Endings of the files editors and office suites write beside the real one while saving.
_TEMP_SUFFIXES = (".swp", ".swo", ".swx", ".swpx", ".tmp", ".part", ".crdownload")


def is_ignored(name: str) -> bool:
    """True for a file name no rebuild should follow: hidden, swap, backup, lock or temp files.

    Covers ``.#x`` (Emacs lock), ``#x#`` (Emacs auto-save), ``x~`` (backups), ``.x.swp``
    (Vim swap), ``4913`` (Vim's write test), ``.~lock.x#`` and ``~$x`` (office locks),
    ``x.tmp`` / ``x.part``.
    """
    if not name:
        return True
    return (
        name.startswith((".", "~"))
        or name.endswith("~")
        or (name.startswith("#") and name.endswith("#"))
        or name.lower().endswith(_TEMP_SUFFIXES)
        or name == "4913"
    )


class Unreadable(Exception):
    """An input file that cannot be read; the message says why, in words."""


def inside(path: Path, folder: Path) -> bool:
    """True when *path*, every link on the way resolved, lies inside *folder* (also resolved).

    ``os.path.realpath`` is used rather than ``Path.resolve``: it leaves a loop of links as it
    is instead of raising, so a loop inside the folder is judged inside (and then reported as
    a loop by :func:`fault`)."""
    real = os.path.realpath(path)
    base = os.path.realpath(folder)
    return real == base or real.startswith(base.rstrip(os.sep) + os.sep)


def _kind(mode: int) -> str | None:
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a folder, not a file"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO), not a regular file"
    if stat.S_ISSOCK(mode):
        return "a socket, not a regular file"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device, not a regular file"
    return "not a regular file"


def fault(path: Path) -> str | None:
    """What *path* is when it cannot serve as an input file, in words ("a named pipe (FIFO),
    not a regular file", "a link to 'x.csv', which does not exist"); None for a regular file
    (links followed). Raises FileNotFoundError when nothing at all is there, and the OSError
    of ``stat`` when it cannot be looked at (a folder on the way that may not be searched).
    Opens nothing."""
    try:
        st = os.stat(path)
    except OSError as e:
        if e.errno == errno.ELOOP:
            return "a link that leads back to itself (a loop of links)"
        if e.errno in (errno.ENOENT, errno.ENOTDIR):
            if os.path.islink(path):
                return f"a link to {os.readlink(path)!r}, which does not exist"
            raise FileNotFoundError(e.errno, e.strerror, os.fspath(path)) from None
        raise
    return _kind(st.st_mode)


def exists(path: Path) -> bool:
    """True when anything is at *path*, a dangling link included."""
    return os.path.lexists(path)


def open_regular(path: Path):
    """*path* opened read-only as a binary file, when it is a regular file; Unreadable
    otherwise. Checked before opening (nothing else is ever opened) and again on the open file
    (in case it was replaced in between; the open cannot block, being non-blocking)."""
    try:
        why = fault(path)
        if why is not None:
            raise Unreadable(f"this is {why}")
        fd = os.open(path, os.O_RDONLY | os.O_NONBLOCK | os.O_NOCTTY | os.O_CLOEXEC)
    except FileNotFoundError:
        raise Unreadable("the file does not exist") from None
    except OSError as e:
        raise Unreadable(f"cannot read the file: {e.strerror}") from None
    try:
        why = _kind(os.fstat(fd).st_mode)
        if why is not None:
            raise Unreadable(f"this is {why}")
        os.set_blocking(fd, True)
        return os.fdopen(fd, "rb")
    except BaseException:
        os.close(fd)
        raise


def read_bytes(path: Path) -> bytes:
    """The bytes of a regular input file (see :func:`open_regular`); Unreadable with the reason
    in words when it cannot be read."""
    with open_regular(path) as fh:
        try:
            return fh.read()
        except OSError as e:
            raise Unreadable(f"cannot read the file: {e.strerror}") from None


def readable_fault(path: Path) -> str | None:
    """Why *path* cannot be read, in words ("this is a named pipe (FIFO), not a regular file",
    "cannot read the file: Permission denied"), or None when it is a regular file that can be
    opened for reading. Reads nothing; opens nothing but a regular file."""
    try:
        with open_regular(path):
            return None
    except Unreadable as e:
        return str(e)


def strays(folder: Path, used: set[str], within: Path) -> list[tuple[Path, str]]:
    """Everything under *folder* that is neither a folder nor a readable regular file, and is
    not in *used* (normalised paths): (path, why in words). Ignored names (hidden files and
    folders, editors' temporary files) are skipped and linked folders are not followed, as in
    the input hash; an entry whose real path lies outside *within* is not looked at."""
    found: list[tuple[Path, str]] = []

    def unlisted(e: OSError) -> None:
        p = Path(e.filename) if e.filename else folder
        if p != folder and os.path.normpath(p) not in used:
            found.append((p, f"cannot read the folder: {e.strerror}"))

    for top, dirs, names in os.walk(folder, onerror=unlisted):
        dirs[:] = sorted(d for d in dirs if not is_ignored(d))
        for name in sorted(names):
            p = Path(top) / name
            if is_ignored(name) or os.path.normpath(p) in used or not inside(p, within):
                continue
            why = readable_fault(p)
            if why is not None:
                found.append((p, why))
    return sorted(found)


__all__ = [
    "Unreadable",
    "exists",
    "fault",
    "inside",
    "is_ignored",
    "open_regular",
    "read_bytes",
    "readable_fault",
    "strays",
]
