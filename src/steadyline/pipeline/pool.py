"""The worker processes of a build or a check: how many, how they start (spawned, the
garbage collector settled, tied to the life of the build that started them), how tasks are
handed out in order, and how a pool stops, at once when the build failed or was interrupted.

Worker processes die with the build that started them, even when it is killed outright
(``PR_SET_PDEATHSIG`` on Linux, a watching thread elsewhere); an interrupted or terminated
build stops its workers before it ends.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import gc
import os
import signal
import sys
import threading
import time
from collections.abc import Callable, Iterator
from concurrent.futures import ProcessPoolExecutor
from multiprocessing import get_context
from typing import Any

BUILD_POOL_MIN = 12
_GC_TUNED = False


def _jobs(asked: int | None, tasks: int, pool_min: int) -> int:
    """Worker processes for *tasks* projects: as many as asked; by default one per core, but
    none below *pool_min* projects (starting a worker costs about as much as building a
    handful of projects, or checking a few dozen)."""
    return asked or ((os.cpu_count() or 1) if tasks >= pool_min else 1)


def _tune_gc() -> None:
    """Once per process, before the first project: move what is loaded so far out of the
    cyclic garbage collector's sight and let it run less often. A project allocates hundreds
    of thousands of small, acyclic objects (chart rows, table cells), and with the default
    threshold the collector would walk the whole heap again and again; this saves about a
    tenth of a project's time. Memory is still freed as usual by reference counting."""
    global _GC_TUNED
    if _GC_TUNED:
        return
    _GC_TUNED = True
    gc.collect()
    gc.freeze()
    gc.set_threshold(50_000, 20, 100)


_PR_SET_PDEATHSIG = 1  # <linux/prctl.h>


def _prctl() -> Any:
    """The C library's ``prctl`` with its argument types (Linux), or None."""
    if not sys.platform.startswith("linux"):
        return None
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
        prctl = libc.prctl
    except (OSError, AttributeError):
        return None
    prctl.argtypes = [ctypes.c_int, ctypes.c_ulong, ctypes.c_ulong, ctypes.c_ulong, ctypes.c_ulong]
    prctl.restype = ctypes.c_int
    return prctl


def _die_with_parent(parent: int) -> None:
    """Make this worker end when *parent*, the build, ends, however it ends (kill -9 too): a
    worker left behind would finish its project for a site nobody publishes and then wait for
    tasks for ever. Linux: the kernel sends SIGKILL when the parent dies
    (``prctl(PR_SET_PDEATHSIG)``); elsewhere a thread looks every half second."""
    prctl = _prctl()
    if prctl is None or prctl(_PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0) != 0:

        def orphaned() -> None:
            while os.getppid() == parent:
                time.sleep(0.5)
            os._exit(1)

        threading.Thread(target=orphaned, name="steadyline-orphan", daemon=True).start()
    # The parent may have died before the line above: this process then belongs to another
    # parent already, and no signal will come.
    if os.getppid() != parent:
        os._exit(1)


def _worker_start(parent: int, then: Callable[[], None] | None) -> None:
    """Every pool worker's initializer. Ctrl-C in a terminal reaches the whole process group:
    the workers leave it to the build, which stops them (no traceback from each worker)."""
    _die_with_parent(parent)
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if then is not None:
        then()


def _new_pool(jobs: int, initializer: Callable[[], None] | None = None) -> ProcessPoolExecutor:
    # spawn, not fork: a worker forked after the parent has used vl_convert hangs.
    # The workers are started by the thread that submits the first tasks; Linux ties their
    # lives to that thread, which waits for the pool to stop before it returns.
    return ProcessPoolExecutor(
        max_workers=jobs,
        mp_context=get_context("spawn"),
        initializer=_worker_start,
        initargs=(os.getpid(), initializer),
    )


def _stop_pool(pool: ProcessPoolExecutor, abort: bool) -> None:
    """Shut *pool* down. *abort* (the build failed, was interrupted or terminated): end the
    workers now instead of waiting for the projects they are building."""
    if abort:
        for proc in list((getattr(pool, "_processes", None) or {}).values()):
            try:
                proc.terminate()
            except (OSError, ValueError):
                pass  # already gone
    pool.shutdown(wait=True, cancel_futures=True)


def _in_order(
    fn: Callable[[Any], Any], tasks: list, jobs: int, pool: ProcessPoolExecutor | None = None
) -> Iterator[Any]:
    """fn(task) for every task, results in task order: in *pool* when given, else in this
    process for one job or a couple of tasks, else in a pool of *jobs* worker processes, one
    task at a time (small tasks leave no worker idle at the end while another finishes a
    batch)."""
    if pool is not None:
        try:
            yield from pool.map(fn, tasks, chunksize=1)
        except BaseException:
            # end the workers before the caller removes the staging folder they write into
            # (stopping the pool again afterwards does nothing)
            _stop_pool(pool, abort=True)
            raise
        return
    if jobs <= 1 or len(tasks) <= 2:
        yield from map(fn, tasks)
        return
    new = _new_pool(jobs)
    try:
        yield from new.map(fn, tasks, chunksize=1)
    except BaseException:
        _stop_pool(new, abort=True)
        raise
    _stop_pool(new, abort=False)


def _worker_ready() -> None:
    """A build worker's start: load the statistics stack and settle the garbage collector
    before the first project arrives."""
    from . import project  # noqa: F401

    _tune_gc()


def _noop() -> None:
    return None


def _early_pool(jobs: int) -> ProcessPoolExecutor:
    """A pool whose workers start loading while this process is still hashing the inputs:
    used when every project is known to need building (no published site, or --force)."""
    pool = _new_pool(jobs, _worker_ready)
    for _ in range(jobs):  # a worker process starts for each task that finds none idle
        pool.submit(_noop)
    return pool
