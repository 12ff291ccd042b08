"""The folders a build keeps beside the output: its staging folder and the retired previous
site, each named after the process that made it (its id and start time, from
``/proc/<pid>/stat``), so that one is removed only when that process is gone (or its id now
belongs to another process), never while its maker may still be writing or reading it.
A retired site is deleted in the background; what a killed build leaves goes at the next.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import threading
import time
from pathlib import Path


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
