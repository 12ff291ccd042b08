"""`steadyline watch`: build, serve the site on 127.0.0.1 and rebuild on every change.

The moving parts are kept apart so that the logic can be tested without threads or timers:

- :func:`is_ignored` says whether a changed path is an editor's swap, backup or lock file (or
  hidden), which never starts a rebuild;
- :class:`Debouncer` gathers a burst of file events into one batch: the batch is due once no
  event came for a quiet period, or once the first event of the burst is older than a cap (so a
  stream of events that never pauses still rebuilds now and then);
- :func:`changed_slugs` maps the changed paths of a batch to the projects they belong to (the
  first path component under the portfolio folder); a change to portfolio.toml means "every
  project";
- :func:`watch` wires them to a watchdog observer, the build and a small standard-library HTTP
  server.

One editor save gives several raw events within a few milliseconds (an atomic save shows only
as a move onto the file); a quiet period of 0.1 s with a 3 s cap turns each burst into one
rebuild (a burst cut in two would cost a second rebuild, never a wrong page: each build reads
the files as they are). The pages of a watched site poll live-state.json and reload when their
project's stamp changes.

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
from collections.abc import Iterable
from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path

from .errors import BuildError, Problem, SteadylineError
from .files import is_ignored
from .site.common import CSP

QUIET_S = 0.1
CAP_S = 3.0
PORTFOLIO_FILE = "portfolio.toml"

# Event kinds that say nothing about content: reading a file (the build does it!) or touching it.
_IGNORED_EVENT_TYPES = frozenset({"opened", "closed_no_write", "attrib"})


# --------------------------------------------------------------------------------------------
# pure parts


def _parts_under(path: str | os.PathLike, root: str | os.PathLike) -> tuple[str, ...] | None:
    """The components of *path* below *root*, or None when it is not inside it."""
    rel = os.path.relpath(os.path.abspath(path), os.path.abspath(root))
    if rel == os.curdir:
        return ()
    if rel == os.pardir or rel.startswith(os.pardir + os.sep) or os.path.isabs(rel):
        return None
    return tuple(Path(rel).parts)


def relevant(path: str | os.PathLike, root: str | os.PathLike) -> bool:
    """Whether a change at *path* can matter to the site built from portfolio folder *root*.

    Inside a project folder: any file that is not hidden or temporary (a project's inputs are all
    its files). At the top: portfolio.toml only. Folders whose name starts with "." or "_" are
    not projects (see ``config.discover``) and are ignored like hidden files.
    """
    parts = _parts_under(path, root)
    if not parts:
        return False
    if any(is_ignored(p) for p in parts) or parts[0].startswith("_"):
        return False
    return True


def changed_slugs(paths: Iterable[str | os.PathLike], root: str | os.PathLike) -> set[str] | None:
    """The project slugs touched by *paths*; None when every project must be rebuilt.

    The slug is the first path component under *root*. A change to ``portfolio.toml`` (the
    settings every project is built with) returns None. Paths that are outside *root*, hidden
    or temporary are left out, so the result may be empty (nothing to rebuild). A top-level
    name is returned as it is: it may be a project folder that was created, renamed or deleted,
    or a loose file no project reads; the caller tells them apart against the file system
    (see :func:`known_slugs`).
    """
    slugs: set[str] = set()
    for path in paths:
        if not relevant(path, root):
            continue
        parts = _parts_under(path, root)
        assert parts  # relevant() checked it
        if parts == (PORTFOLIO_FILE,):
            return None
        slugs.add(parts[0])
    return slugs


def known_slugs(slugs: set[str], root: Path, out: Path) -> set[str]:
    """The *slugs* that are project folders now, or were published before (deleted ones)."""
    return {s for s in slugs if (root / s).is_dir() or (out / "projects" / s).is_dir()}


class Debouncer:
    """Gathers events into batches: a batch is due after *quiet* seconds without an event, or
    *cap* seconds after its first event, whichever comes first.

    Pure: the caller passes the time (``time.monotonic()`` in use, plain numbers in tests).
    """

    def __init__(self, quiet: float = QUIET_S, cap: float = CAP_S):
        if quiet < 0 or cap < quiet:
            raise ValueError("need 0 <= quiet <= cap")
        self.quiet = quiet
        self.cap = cap
        self._items: set = set()
        self._first: float | None = None
        self._last: float | None = None

    @property
    def pending(self) -> bool:
        return self._first is not None

    def add(self, items: Iterable, now: float) -> None:
        """Record the items of one event at time *now* (an empty event is no event)."""
        items = set(items)
        if not items:
            return
        self._items |= items
        if self._first is None:
            self._first = now
        self._last = now

    def due_in(self, now: float) -> float | None:
        """Seconds until the pending batch is due (0 when due now); None when nothing waits."""
        if self._first is None or self._last is None:
            return None
        deadline = min(self._last + self.quiet, self._first + self.cap)
        return max(0.0, deadline - now)

    def take(self, now: float) -> set | None:
        """The batch when it is due (and start a new one), else None."""
        wait = self.due_in(now)
        if wait is None or wait > 0:
            return None
        items, self._items = self._items, set()
        self._first = self._last = None
        return items


def problem_lines(problems: Iterable[Problem], slugs: set[str] | None = None) -> list[str]:
    """``path:line: message`` lines, sorted and without repeats; only those of *slugs* when
    given (a problem's path starts with its project's folder name)."""
    seen: set[str] = set()
    lines = []
    for p in sorted(problems, key=lambda p: (p.path, p.line or 0, p.where, p.message)):
        if slugs is not None and p.path.split("/", 1)[0] not in slugs:
            continue
        line = p.format()
        if line not in seen:
            seen.add(line)
            lines.append(line)
    return lines


def rebuild_line(report, slugs: set[str] | None, seconds: float) -> str:
    """One line that sums up a rebuild, e.g. "rebuilt spoke-tension in 0.42 s".

    *slugs* are the projects asked for (None: all); one asked for that the build neither built
    nor reused is no longer there (its folder was deleted or renamed).
    """
    rebuilt = sorted(set(report.built) | (set(report.broken) - set(report.reused)))
    gone = sorted(set(slugs or ()) - set(rebuilt) - set(report.reused))
    broken = sorted(set(report.broken) & set(rebuilt))
    took = f"in {seconds:.2f} s"
    if not rebuilt and not gone:
        return f"no change ({took})"
    parts = []
    if rebuilt:
        parts.append(f"rebuilt {', '.join(rebuilt)} {took}")
    if gone:
        parts.append(f"removed {', '.join(gone)}" + ("" if rebuilt else f" {took}"))
    line = "; ".join(parts)
    if broken:
        n = sum(p.severity == "error" for p in report.problems if p.path.split("/", 1)[0] in broken)
        line += (
            f" - {', '.join(broken)}: {n} error{'s' if n != 1 else ''}, shown on "
            f"{'its page' if len(broken) == 1 else 'their pages'}"
        )
    return line


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
    from watchdog.events import FileSystemEventHandler
    from watchdog.observers import Observer

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
    observer = None
    standby = None
    server_thread = None
    old_handlers: dict[int, object] = {}

    def _raise_stop(signum, frame):
        raise _Stop(signum)

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

        class Handler(FileSystemEventHandler):
            def on_any_event(self, event) -> None:
                if event.event_type in _IGNORED_EVENT_TYPES:
                    return
                if event.is_directory and event.event_type == "modified":
                    return  # a folder's listing changed: its files' own events say what
                paths = [
                    os.fsdecode(p) for p in (event.src_path, getattr(event, "dest_path", "")) if p
                ]
                paths = [p for p in paths if relevant(p, root)]
                if paths:
                    with cond:
                        debouncer.add(paths, time.monotonic())
                        cond.notify()

        observer = Observer()
        observer.schedule(Handler(), str(root), recursive=True)
        observer.start()

        # First build.
        t0 = time.perf_counter()
        report = build(BuildOptions(root, out, jobs=jobs, live=True, debug=debug, lock=lock))
        for line in problem_lines(report.problems):
            _say(line)
        if not quiet:
            _say(
                f"steadyline: {len(report.built)} built, {len(report.reused)} unchanged, "
                f"{len(report.broken)} with errors in {time.perf_counter() - t0:.2f} s; "
                f"site at {out}"
            )
        warm_up(root)
        standby = Standby(out)
        standby.prepare()

        if server is not None:
            server_thread = threading.Thread(
                target=server.serve_forever, name="steadyline-serve", daemon=True
            )
            server_thread.start()
            host, real_port = server.server_address[:2]
            _say(f"serving http://{host}:{real_port}/ - watching {projects_dir} (Ctrl-C to stop)")
        elif not quiet:
            _say(f"watching {projects_dir} (Ctrl-C to stop)")

        while True:
            with cond:
                while True:
                    now = time.monotonic()
                    batch = debouncer.take(now)
                    if batch is not None:
                        break
                    wait = debouncer.due_in(now)
                    cond.wait(1.0 if wait is None else min(wait, 1.0))
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
        for sig, h in old_handlers.items():
            signal.signal(sig, h)
        lock.release()


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
    "is_ignored",
    "known_slugs",
    "make_server",
    "problem_lines",
    "rebuild_line",
    "relevant",
    "watch",
]
