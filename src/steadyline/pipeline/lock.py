"""One build at a time per output: a build holds an OS file lock (``flock``) on ``.<out>.lock``
beside the output from before it reads the published manifest (it reuses published files by
hard-linking them) until after the swap. Two builds that both staged and swapped without it
could each delete the other's staging folder, or link files from a site that the other was
retiring. The kernel drops the lock when its holder ends, however it ends, so a killed build
never leaves the output locked. The lock file names its holder, so that a second build can say
whom it waits for, and refuse at once when a watch session holds it.
"""

from __future__ import annotations

import os
import sys
import time
from pathlib import Path

if sys.platform == "win32":  # no flock: builds are not locked against each other
    fcntl = None
else:
    import fcntl

from ..errors import BuildError
from .side_folders import alive, process_start

LOCK_POLL_S = 0.1


def lock_path(out: Path) -> Path:
    """The lock file of *out*: beside it, never inside the published site (which the swap
    replaces), and never deleted (a waiting build holds it open; a new file under the same
    name would be a second, unrelated lock)."""
    return out.parent / f".{out.name}.lock"


def _say(line: str) -> None:
    print(line, file=sys.stderr, flush=True)


class OutputLock:
    """The lock on one output folder, held from :func:`lock_output` until :meth:`release` (or
    until the process ends, however it ends). The lock file holds one line naming the holder,
    ``<pid> <start> <kind>``, so that a second build can say whom it waits for; it is
    emptied again on release."""

    def __init__(self, out: Path, fd: int, kind: str):
        self.out = out
        self.kind = kind
        self._fd: int | None = fd

    def covers(self, out: Path) -> bool:
        return self._fd is not None and lock_path(out) == lock_path(self.out)

    def release(self) -> None:
        if self._fd is None:
            return
        fd, self._fd = self._fd, None
        try:
            os.ftruncate(fd, 0)  # before unlocking: the next holder writes its own line
        except OSError:
            pass
        os.close(fd)  # drops the lock

    def __enter__(self) -> OutputLock:
        return self

    def __exit__(self, *exc) -> None:
        self.release()


def _holder(path: Path) -> tuple[int, str] | None:
    """(pid, kind) of the process named in the lock file when that process still runs."""
    try:
        with open(path, "rb") as fh:
            pid, start, kind = fh.read(200).decode("ascii").split()
        pid_n = int(pid)
        start_n = None if start == "-" else int(start)
    except (OSError, ValueError, UnicodeDecodeError):
        return None  # empty (just taken, not yet written) or being written
    return (pid_n, kind) if alive(pid_n, start_n) else None


def lock_output(out: Path, kind: str, say=_say) -> OutputLock:
    """Take the lock on *out* for a build (*kind* "build") or a watch session ("watch").

    Held by a build: print one line naming it and wait until it ends. Held by a watch session:
    raise BuildError at once, since the watch rebuilds the output until it is stopped and
    waiting would mean waiting for a person. Where the system has no ``flock`` nothing is
    locked.
    """
    path = lock_path(out)
    path.parent.mkdir(parents=True, exist_ok=True)
    while True:
        fd = os.open(path, os.O_RDWR | os.O_CREAT | getattr(os, "O_CLOEXEC", 0), 0o644)
        try:
            _wait_for_lock(fd, out, path, say)
            try:
                same = os.path.samestat(os.fstat(fd), os.stat(path))
            except FileNotFoundError:
                same = False
            if not same:  # the file was deleted or replaced while we waited: lock the new one
                os.close(fd)
                continue
            pid = os.getpid()
            start = process_start(pid)
            os.ftruncate(fd, 0)
            os.lseek(fd, 0, os.SEEK_SET)
            os.write(fd, f"{pid} {'-' if start is None else start} {kind}\n".encode())
            return OutputLock(out, fd, kind)
        except BaseException:
            try:
                os.close(fd)
            except OSError:
                pass
            raise


def _wait_for_lock(fd: int, out: Path, path: Path, say) -> None:
    if fcntl is None:
        return
    told: int | None = None
    unknown_since = time.monotonic()
    while True:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            return
        except BlockingIOError:
            pass
        holder = _holder(path)
        if holder is not None and holder[1] == "watch":
            raise BuildError(
                f"{out}: process {holder[0]} is watching this output (steadyline "
                "watch) and rebuilds it on every change; stop it first, or build "
                "into another --out"
            )
        if holder is not None and holder[0] != told:
            say(f"steadyline: waiting for the build of {out} by process {holder[0]} to finish")
            told = holder[0]
        elif holder is None and told is None and time.monotonic() - unknown_since > 2.0:
            # a holder that does not say who it is (in another process namespace, say)
            say(f"steadyline: waiting for another build of {out} to finish")
            told = -1
        time.sleep(LOCK_POLL_S)
