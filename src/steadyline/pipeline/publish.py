"""Writing the site: staged in a temporary folder beside the output, swapped in at the end.

A build never writes into the published folder. It fills ``.<out>.staging-<pid>-<start>`` and
then exchanges it with ``<out>`` in one atomic step (Linux ``renameat2(RENAME_EXCHANGE)``), so a
crash, Ctrl-C or kill at any moment leaves the previously published site exactly as it was,
and a reader never sees a mix of old and new pages. Where the exchange is not available the
fallback is two renames, with the old site kept aside until the new one is in place. What is
written is flushed to disk before the swap.

The output's lock (one build at a time) is in ``lock``; the staging and retired folders'
names and their cleaning in ``side_folders``. Both are handed on from here.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import errno
import os
import shutil
from pathlib import Path

from .lock import OutputLock, lock_output, lock_path
from .side_folders import _retired_name, alive, clean_stale, discard, process_start, staging_dir

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


# Handed on: the names other modules and the tests import from here.
__all__ = [
    "OutputLock",
    "alive",
    "clean_stale",
    "discard",
    "exchange",
    "link_tree",
    "lock_output",
    "lock_path",
    "process_start",
    "publish",
    "staging_dir",
    "syncfs",
    "write_files",
]
