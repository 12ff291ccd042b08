"""Writing the site: staged in a temporary folder beside the output, swapped in at the end.

A build never writes into the published folder. It fills ``.<out>.staging-<pid>-<start>`` and
then exchanges it with ``<out>`` in one atomic step (Linux ``renameat2(RENAME_EXCHANGE)``), so a
crash, Ctrl-C or kill at any moment leaves the previously published site exactly as it was,
and a reader never sees a mix of old and new pages. Where the exchange is not available the
fallback is two renames, with the old site kept aside until the new one is in place.

One build at a time per output: a build holds an OS file lock (``flock``) on ``.<out>.lock``
beside the output from before it reads the published manifest (it reuses published files by
hard-linking them) until after the swap. Two builds that both staged and swapped without it
could each delete the other's staging folder, or link files from a site that the other was
retiring. The kernel drops the lock when its holder ends, however it ends, so a killed build
never leaves the output locked.

Staging and retired folders carry the process id and start time of the build that made them
(``/proc/<pid>/stat``): one is removed only when that process is gone (or its id now belongs
to another process), never while its maker may still be writing or reading it.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import errno
import os
import shutil
import subprocess
import sys
import threading
import time
from pathlib import Path

try:
    import fcntl
except ImportError:  # not a POSIX system: builds are not locked against each other
    fcntl = None  # type: ignore[assignment]

from ..errors import BuildError

_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def _libc_function(name: str, argtypes: list):
    """A function of the C library with its argument types, or None where it has none."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
        fn = getattr(libc, name)
    except (OSError, AttributeError):
        return None
    fn.argtypes = argtypes
    fn.restype = ctypes.c_int
    return fn


_EXCHANGE = _libc_function(
    "renameat2", [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
)
_SYNCFS = _libc_function("syncfs", [ctypes.c_int])
# Up to this many new files are flushed one by one; more, by one syncfs.
FSYNC_EACH_MAX = 400


def syncfs(folder: Path) -> bool:
    """Flush every written file of the file system holding *folder* in one call (Linux
    ``syncfs``): far quicker than one ``fsync`` per file for thousands of files. False when
    the system cannot do it."""
    if _SYNCFS is None:
        return False
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return False
    try:
        return _SYNCFS(fd) == 0
    finally:
        os.close(fd)


def exchange(a: Path, b: Path) -> bool:
    """Atomically swap two existing paths. False when the system cannot do it."""
    if _EXCHANGE is None:
        return False
    rc = _EXCHANGE(_AT_FDCWD, os.fsencode(str(a)), _AT_FDCWD, os.fsencode(str(b)), _RENAME_EXCHANGE)
    if rc == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP if hasattr(errno, "ENOTSUP") else 95):
        return False
    raise OSError(err, os.strerror(err), str(a))


# --------------------------------------------------------------------------------------------
# who made a folder, and whether it is still there


def _proc_stat(pid: int) -> tuple[str, int] | None:
    """(state, start time in clock ticks after boot) of process *pid* from /proc; None when
    there is no such process."""
    try:
        with open(f"/proc/{pid}/stat", "rb") as fh:
            data = fh.read()
    except OSError:
        return None
    # the command name (field 2) is in parentheses and may hold anything, spaces included
    fields = data[data.rindex(b")") + 2 :].split()
    try:
        return fields[0].decode(), int(fields[19])  # fields 3 and 22 of proc(5)
    except (IndexError, ValueError):
        return None


_HAS_PROC = os.path.isdir("/proc/self")


def process_start(pid: int) -> int | None:
    """When process *pid* started (clock ticks after boot), None where /proc cannot say. With
    the id it names one process for good: an id is reused only by a process started later."""
    if not _HAS_PROC:
        return None
    stat = _proc_stat(pid)
    return None if stat is None else stat[1]


def alive(pid: int, start: int | None) -> bool:
    """Whether process *pid*, started at *start* (None: any start), still runs. A zombie (ended,
    not yet reaped by its parent) does not count."""
    if pid <= 0:
        return False
    if _HAS_PROC:
        stat = _proc_stat(pid)
        if stat is None or stat[0] in ("Z", "X", "x"):
            return False
        return start is None or stat[1] == start
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True  # somebody else's process
    return True


def _maker_tag() -> str:
    """``<pid>-<start>`` of this process, or ``<pid>`` where the start time is unknown."""
    pid = os.getpid()
    start = process_start(pid)
    return str(pid) if start is None else f"{pid}-{start}"


def _maker(name: str, prefix: str, extra: int) -> tuple[int, int | None] | None:
    """(pid, start) from a staging (*extra* 0) or retired (*extra* 1: a time follows) folder's
    name; None when the name is none of ours."""
    parts = name[len(prefix) :].split("-")
    if not all(p.isdigit() for p in parts):
        return None
    if len(parts) == 1 + extra:  # no start time: made where /proc is missing, or before
        return int(parts[0]), None
    if len(parts) == 2 + extra:
        return int(parts[0]), int(parts[1])
    return None


def staging_dir(out: Path) -> Path:
    return out.parent / f".{out.name}.staging-{_maker_tag()}"


def clean_stale(out: Path) -> None:
    """Remove the staging and retired folders of *out* whose maker is gone: builds that were
    killed, or whose background delete was cut short (retired ones are deleted in the
    background, see :func:`discard`). A folder whose maker still runs is left alone: a build
    in another process (one without the lock, or across a container boundary) may still be
    writing it, and this process's own retired folders are being deleted already. This
    process's own staging folder is a leftover: the caller holds the output's lock, so no
    other build of this process writes it."""
    me = (os.getpid(), process_start(os.getpid()))
    prefix = f".{out.name}.staging-"
    for p in out.parent.glob(f"{prefix}*"):
        maker = _maker(p.name, prefix, 0)
        if maker is not None and (maker == me or not alive(*maker)):
            shutil.rmtree(p, ignore_errors=True)
    prefix = f".{out.name}.retired-"
    for p in out.parent.glob(f"{prefix}*"):
        maker = _maker(p.name, prefix, 1)
        if maker is not None and not alive(*maker):
            discard(p)


def discard(folder: Path) -> None:
    """Delete a folder nobody reads any more (a previous version of the site) without waiting:
    unlinking thousands of files takes a noticeable part of a second, and the new site is
    already published. A detached ``rm -rf`` does it where there is one, else a thread. What
    is left if that is cut short carries a ``.retired-`` name and goes at the next build."""
    rm = shutil.which("rm") if os.name == "posix" else None
    if rm is not None:
        try:
            subprocess.Popen(
                [rm, "-rf", "--", os.fspath(folder)],
                stdin=subprocess.DEVNULL,
                stdout=subprocess.DEVNULL,
                stderr=subprocess.DEVNULL,
                start_new_session=True,
                close_fds=True,
            )
            return
        except OSError:
            pass
    threading.Thread(
        target=shutil.rmtree, args=(folder,), kwargs={"ignore_errors": True}, daemon=True
    ).start()


def _retired_name(out: Path) -> Path:
    return out.parent / f".{out.name}.retired-{_maker_tag()}-{time.monotonic_ns()}"


def publish(staged: Path, out: Path, written: list[str] | None = None) -> None:
    """Make *staged* the published site at *out*, atomically.

    The staging folder's contents are flushed to disk first, so that the swap never publishes
    empty files after a power cut: file by file when few were written (``syncfs`` would also
    wait for every other program's pending writes), else by one ``syncfs`` where the system
    has it.
    *written* lists the files written anew into the staging folder: only those need flushing
    (the rest are hard links to published files); None flushes everything.
    """
    if written is not None and len(written) <= FSYNC_EACH_MAX:
        _fsync_files(written)  # a few files: flush just those, whatever else is pending
    elif syncfs(staged):
        pass
    elif written is None:
        _fsync_tree(staged)
    else:
        _fsync_files(written)
    if not out.exists():
        os.rename(staged, out)
        return
    if exchange(staged, out):
        retired = _retired_name(out)
        os.rename(staged, retired)  # now holds the previous site
        discard(retired)
        return
    retired = _retired_name(out)
    os.rename(out, retired)
    try:
        os.rename(staged, out)
    except BaseException:
        os.rename(retired, out)  # the published site goes back: a retired one would be deleted
        raise
    discard(retired)


def _fsync_files(paths: list[str]) -> None:
    for path in paths:
        try:
            fd = os.open(path, os.O_RDONLY)
        except OSError:
            continue
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _fsync_tree(root: Path) -> None:
    """Flush file contents before the swap, so the swap never publishes empty files."""
    paths = []
    for dirpath, _dirs, files in os.walk(root):
        for f in files:
            path = os.path.join(dirpath, f)
            try:
                if os.stat(path).st_nlink > 1:
                    continue  # a hard link to a published file: already on disk
            except OSError:
                continue
            paths.append(path)
    _fsync_files(paths)


def _make_parent(path: str, made: set[str]) -> None:
    """Create the folder of *path* unless this call's loop already made it (*made*)."""
    parent = os.path.dirname(path)
    if parent not in made:
        os.makedirs(parent, exist_ok=True)
        made.add(parent)


def write_files(root: Path, files: dict[str, bytes]) -> list[str]:
    """Write every file under *root*; returns the paths written."""
    written = []
    made: set[str] = set()
    base = os.fspath(root)
    for name, data in sorted(files.items()):
        path = os.path.join(base, name)
        _make_parent(path, made)
        try:
            with open(path, "wb") as fh:
                fh.write(data)
        except OSError as e:
            if e.filename is None:  # a failed write names no file: the message must
                e.filename = path
            raise
        written.append(path)
    return written


def link_tree(src: Path, dst: Path, names: list[str]) -> None:
    """Reuse unchanged published files in the staging folder (hard links when possible)."""
    s, d = os.fspath(src), os.fspath(dst)
    made: set[str] = set()
    for name in names:
        target = os.path.join(d, name)
        _make_parent(target, made)
        try:
            os.link(os.path.join(s, name), target)
        except OSError:
            shutil.copy2(os.path.join(s, name), target)


# --------------------------------------------------------------------------------------------
# one build at a time per output

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
