"""`steadyline watch`: build, serve the site on 127.0.0.1 and rebuild on every change.

The pure parts (which changed paths matter, to which projects; the debouncer that turns a
burst of events into one batch; the lines a rebuild prints) live in
:mod:`steadyline.watch_batches`, tested without threads or timers, and are handed on from here.
This module wires them to a watchdog observer, the build and a small standard-library HTTP
server. The pages of a watched site poll live-state.json and reload when their project's stamp
changes.

A save must reach the page quickly, so the session keeps what a rebuild needs ready:
- the statistics stack (pandas, numpy, the chart and page templates, compiled) is loaded once,
  at the start, by building the smallest project in memory (:func:`warm_up`); the first build
  may run in worker processes, which would leave this process cold for the first save;
- only the projects the watcher saw change are hashed again (``trust_unnamed``); the first
  build of the session hashes them all;
- the next rebuild's staging folder is prepared while the session waits
  (``pipeline.build.Standby``: the published files hard-linked, as a rebuild would link them), so
  that a rebuild writes only its project, the index and the manifest before the swap.
The site is the one a `build` makes, byte for byte (the live pages apart, which poll).

A watch session holds the output's lock (``pipeline.publish.lock_output``) from its first build
until it stops, not just while each rebuild runs: it republishes the output whenever a file
changes, so a `build` or a second `watch` of the same output would only have its site replaced
by the next save. They refuse at once with a line naming the watching process. A watch started
while a `build` of the output runs waits for that build to finish.
"""

from __future__ import annotations

import functools
import os
import signal
import sys
import threading
import time
import traceback
from collections.abc import Callable
from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path
from types import FrameType
from typing import TYPE_CHECKING, Any, NoReturn

from .errors import BuildError, SteadylineError
from .site.common import CSP
from .watch_batches import (
    CAP_S,
    QUIET_S,
    Debouncer,
    changed_slugs,
    known_slugs,
    problem_lines,
    rebuild_line,
    relevant,
)

if TYPE_CHECKING:  # watchdog is imported only when a session starts
    from watchdog.observers.api import BaseObserver

# Event kinds that say nothing about content: reading a file (the build does it!) or touching it.
_IGNORED_EVENT_TYPES = frozenset({"opened", "closed_no_write", "attrib"})


# --------------------------------------------------------------------------------------------
# the server


class _Handler(SimpleHTTPRequestHandler):
    """Serves the output folder; quiet, never cached (a page must see the rebuilt files).

    Every response carries the site's Content-Security-Policy as a header too (the pages also
    carry it in a meta tag, which a browser honours only for HTML and only from where the tag
    stands), and ``nosniff``, so that a data file is never run as a script or styled as a page
    whatever its content."""

    def end_headers(self) -> None:
        self.send_header("Cache-Control", "no-store")
        self.send_header("Content-Security-Policy", CSP)
        self.send_header("X-Content-Type-Options", "nosniff")
        super().end_headers()

    def log_message(self, format, *args) -> None:  # noqa: A002 - the base class's name
        pass


# The preview server is for the person at this machine: it listens on the loopback address only,
# never on a network interface (the intranet server publishes the built folder, not this).
HOST = "127.0.0.1"


def make_server(out: Path, port: int) -> ThreadingHTTPServer:
    """An HTTP server for *out* on 127.0.0.1 only. The folder is given as a path string, so each
    request resolves it afresh and sees the site swapped in by the latest build."""
    host = HOST
    handler = functools.partial(_Handler, directory=os.path.abspath(out))
    try:
        server = ThreadingHTTPServer((host, port), handler)
    except OSError as e:
        raise BuildError(
            f"cannot serve on {host}:{port}: {e.strerror or e} "
            "(choose another --port, or --no-serve)"
        ) from e
    server.daemon_threads = True
    return server


# --------------------------------------------------------------------------------------------
# the loop


def _say(line: str) -> None:
    print(line, file=sys.stderr, flush=True)


class _Stop(BaseException):
    """Raised by our signal handlers in the main thread; a BaseException, like
    KeyboardInterrupt, so that no `except Exception` on the way swallows it."""


# What signal.signal returns and takes: a handler function, or SIG_DFL / SIG_IGN, or None
# for a handler not installed from Python.
_SignalHandler = Callable[[int, FrameType | None], Any] | int | signal.Handlers | None


def _raise_stop(signum: int, frame: FrameType | None) -> NoReturn:
    raise _Stop(signum)


def watch(
    projects_dir: Path,
    out: Path,
    port: int = 8000,
    serve: bool = True,
    jobs: int | None = None,
    debug: bool = False,
    quiet: bool = False,
) -> int:
    """Build once, then (optionally) serve *out* on 127.0.0.1:*port* and rebuild on changes
    until Ctrl-C / SIGINT / SIGTERM. Returns 0 after a clean stop.

    Errors in the projects never stop the loop: a broken project is published as a page listing
    its problems, and the same problems are printed here; the next good save recovers.
    """

    from .pipeline.build import BuildOptions, Standby, build
    from .pipeline.output_rule import check_output, named_faults
    from .pipeline.publish import lock_output

    root = Path(os.path.abspath(projects_dir))
    out = Path(os.path.abspath(out))
    if not root.is_dir():
        raise BuildError(f"{projects_dir}: the projects folder does not exist")
    with named_faults(out):  # refused before serving or building (each build checks again)
        check_output(out, root)

    lock = lock_output(out, "watch")  # refuses at once when another session watches *out*
    try:
        server = make_server(out, port) if serve else None  # fail fast when the port is taken
    except BaseException:
        lock.release()
        raise
    # Longer than most functions: the session's resources (lock, server, observer, standby,
    # signal handlers) are opened in this one function so that its `finally` releases each.
    observer = None
    standby = None
    server_thread = None
    old_handlers: dict[signal.Signals, _SignalHandler] = {}
    try:
        if threading.current_thread() is threading.main_thread():
            # Installed explicitly: a process started in the background may inherit SIGINT
            # ignored, and SIGTERM would otherwise end us without stopping anything.
            for sig in (signal.SIGINT, signal.SIGTERM):
                old_handlers[sig] = signal.signal(sig, _raise_stop)

        # Watch, from before the first build: a rebuild hashes only the projects whose
        # files the watcher saw change, so a change made during the first build must be seen.
        cond = threading.Condition()
        debouncer = Debouncer(QUIET_S, CAP_S)
        observer = _observe(root, cond, debouncer)

        _first_build(root, out, jobs, debug, quiet, build, BuildOptions, lock)
        warm_up(root)
        standby = Standby(out)
        standby.prepare()
        server_thread = _serve(server, projects_dir, quiet)

        while True:
            batch = _next_batch(cond, debouncer)
            _rebuild(batch, root, out, jobs, debug, quiet, build, BuildOptions, lock, standby)
    except (KeyboardInterrupt, _Stop):
        if not quiet:
            _say("steadyline: stopped")
        return 0
    finally:
        if observer is not None:
            observer.stop()
        if server is not None:
            if server_thread is not None:
                server.shutdown()
            server.server_close()
        if observer is not None:
            observer.join(timeout=5)
        if standby is not None:
            standby.discard()
        for signum, handler in old_handlers.items():
            signal.signal(signum, handler)
        lock.release()


def _first_build(
    root: Path,
    out: Path,
    jobs: int | None,
    debug: bool,
    quiet: bool,
    build,
    options_type,
    lock,
) -> None:
    """The session's first build (every project hashed), its problems and a summary line."""
    t0 = time.perf_counter()
    report = build(options_type(root, out, jobs=jobs, live=True, debug=debug, lock=lock))
    for line in problem_lines(report.problems):
        _say(line)
    if not quiet:
        _say(
            f"steadyline: {len(report.built)} built, {len(report.reused)} unchanged, "
            f"{len(report.broken)} with errors in {time.perf_counter() - t0:.2f} s; "
            f"site at {out}"
        )


def _observe(root: Path, cond: threading.Condition, debouncer: Debouncer) -> BaseObserver:
    """A started watchdog observer of *root* that adds the relevant paths of each event to
    *debouncer* and wakes the loop waiting on *cond*."""
    from watchdog.events import FileSystemEvent, FileSystemEventHandler
    from watchdog.observers import Observer

    class Handler(FileSystemEventHandler):
        def on_any_event(self, event: FileSystemEvent) -> None:
            if event.event_type in _IGNORED_EVENT_TYPES:
                return
            if event.is_directory and event.event_type == "modified":
                return  # a folder's listing changed: its files' own events say what
            paths = [os.fsdecode(p) for p in (event.src_path, getattr(event, "dest_path", "")) if p]
            paths = [p for p in paths if relevant(p, root)]
            if paths:
                with cond:
                    debouncer.add(paths, time.monotonic())
                    cond.notify()

    observer = Observer()
    observer.schedule(Handler(), str(root), recursive=True)
    observer.start()
    return observer


def _serve(
    server: ThreadingHTTPServer | None, projects_dir: Path, quiet: bool
) -> threading.Thread | None:
    """Start serving in a thread of its own (when serving), and say where."""
    if server is None:
        if not quiet:
            _say(f"watching {projects_dir} (Ctrl-C to stop)")
        return None
    server_thread = threading.Thread(
        target=server.serve_forever, name="steadyline-serve", daemon=True
    )
    server_thread.start()
    _say(f"serving http://{HOST}:{server.server_port}/ - watching {projects_dir} (Ctrl-C to stop)")
    return server_thread


def _next_batch(cond: threading.Condition, debouncer: Debouncer) -> set:
    """Wait for the next batch of changes to be due, and take it."""
    with cond:
        while True:
            now = time.monotonic()
            batch = debouncer.take(now)
            if batch is not None:
                return batch
            wait = debouncer.due_in(now)
            cond.wait(1.0 if wait is None else min(wait, 1.0))


def warm_up(root: Path) -> None:
    """Load the statistics stack and fill its caches in this process, once, by building the
    smallest project (by the size of its files) in memory and throwing the result away:
    imports, compiled page templates, chart templates and the garbage collector's settings are
    then ready for the first save. Nothing is written. Any failure only leaves it cold."""
    try:
        from .config import discover, load_portfolio
        from .pipeline.build import _tune_gc
        from .pipeline.project import build_project

        def size(folder: Path) -> int:
            return sum(p.stat().st_size for p in folder.glob("*") if p.is_file())

        folders = [f for f in discover(root) if (f / "project.toml").is_file()]
        _tune_gc()
        if folders:
            settings, _ = load_portfolio(root)
            build_project(min(folders, key=size), root, settings, live="live-state.json")
    except Exception:  # noqa: BLE001 - a cold start is slower, never wrong
        pass


def _rebuild(
    batch: set,
    root: Path,
    out: Path,
    jobs,
    debug: bool,
    quiet: bool,
    build,
    BuildOptions,
    lock,
    standby=None,
) -> None:
    slugs = changed_slugs(batch, root)
    if slugs is not None:
        slugs = known_slugs(slugs, root, out)
        if not slugs:
            return
    t0 = time.perf_counter()
    try:
        # A change to portfolio.toml rebuilds everything (force); otherwise the changed projects
        # are named, and any other project whose inputs changed is still caught by its hash.
        opts = BuildOptions(
            root,
            out,
            force=slugs is None,
            jobs=jobs,
            live=True,
            debug=debug,
            only=slugs,
            lock=lock,
            trust_unnamed=True,
            standby=standby,
        )
        report = build(opts)
    except SteadylineError as e:
        _say(f"steadyline: {e}")
        return
    except Exception as e:  # keep watching: the next save may fix it
        if debug:
            traceback.print_exc()
        _say(
            f"steadyline: internal error: {type(e).__name__}: {e}"
            + ("" if debug else " (run with --debug for the traceback)")
        )
        return
    finally:
        if standby is not None:
            standby.prepare()  # for the next save, while waiting for it (no-op if kept)
    seconds = time.perf_counter() - t0
    rebuilt = set(report.built) | (set(report.broken) - set(report.reused))
    for line in problem_lines(report.problems, None if slugs is None else rebuilt):
        _say(line)
    if not quiet or report.broken:
        _say(rebuild_line(report, slugs, seconds))


__all__ = [
    "CAP_S",
    "QUIET_S",
    "Debouncer",
    "changed_slugs",
    "known_slugs",
    "make_server",
    "problem_lines",
    "rebuild_line",
    "relevant",
    "watch",
]
