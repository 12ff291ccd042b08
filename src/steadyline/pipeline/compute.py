"""The compute stage: the projects to rebuild, each built by a worker (in this process or a
pool) that writes its files into the staging folder beside the output, never into the
published site, so that a failure here leaves the published site untouched. For a large
build the portfolio's last commit dates are looked up once for all projects, and what the
workers write is flushed to disk while they work."""

from __future__ import annotations

import threading
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

from ..config import PortfolioSettings
from ..site.common import ProjectOutcome
from .inputs import git_dates
from .manifest import LIVE_STATE
from .options import BuildOptions
from .pool import BUILD_POOL_MIN, _in_order, _jobs, _tune_gc
from .publish import syncfs, write_files


def _worker(args) -> ProjectOutcome:
    """Build one project and write its files under *target* (in the staging folder). The
    outcome returned carries the names of the files written, not their bytes, so that the
    pool does not send every page back through a pipe."""
    from .project import build_project  # the statistics stack: loaded only when needed

    _tune_gc()
    folder, root, settings, live, debug, target, dates = args
    outcome = build_project(folder, root, settings, live=live, debug=debug, dates=dates)
    outcome.written = write_files(target, outcome.files)
    outcome.names = sorted(outcome.files)
    outcome.files = {}
    return outcome


def compute(
    tasks: list[tuple],
    jobs: int,
    progress: Callable[[str], object],
    pool: ProcessPoolExecutor | None = None,
) -> list[ProjectOutcome]:
    results = []
    for r in _in_order(_worker, tasks, jobs, pool):  # outcomes are small: workers write files
        results.append(r)
        progress(r.slug)
    return results


def compute_stage(
    opts: BuildOptions,
    settings: PortfolioSettings,
    todo: list[Path],
    staged: Path,
    pool: ProcessPoolExecutor | None,
    progress_cb: Callable[[str], object] | None,
) -> list[ProjectOutcome]:
    """Build the projects *todo* into *staged* (in the early *pool* when there is one: then
    every project is to be built, with as many workers as it has)."""
    root = opts.projects_dir
    jobs = _jobs(opts.jobs, len(todo), BUILD_POOL_MIN)
    live = LIVE_STATE if opts.live else None
    progress = progress_cb or (lambda slug: None)
    dates = _portfolio_git_dates(root, todo)
    tasks = [
        (
            f,
            root,
            settings,
            live,
            opts.debug,
            staged / "projects" / f.name,
            dates.get(f.name) if dates is not None else None,
        )
        for f in todo
    ]
    with _Flusher(staged if len(todo) >= FLUSH_WHILE_BUILDING_MIN else None):
        return compute(tasks, jobs, progress, pool)


def _portfolio_git_dates(root: Path, todo: list[Path]) -> dict[str, dict] | None:
    """The last commit dates of every project's files, by project, from one look at git for
    the whole portfolio (three git commands per project would cost more than building a
    small project); None for a few projects, which then look for themselves."""
    if len(todo) < BUILD_POOL_MIN:
        return None
    by_project: dict[str, dict] = {f.name: {} for f in todo}
    base = root.resolve()
    for path, date in git_dates(root).items():
        try:
            slug = path.relative_to(base).parts[0]
        except (ValueError, IndexError):
            continue
        if slug in by_project:
            by_project[slug][path] = date
    return by_project


# From this many projects on, what the workers write is flushed to disk while they work, every
# this many seconds.
FLUSH_WHILE_BUILDING_MIN = 12
FLUSH_EVERY_S = 1.0


class _Flusher:
    """While the workers write a large build into the staging folder, flush its file system to
    disk every second (``syncfs``), so that the flush before the swap finds little left to do:
    the disk writes overlap the computing instead of following it. Does nothing for a small
    build (``folder`` None), or where the system has no ``syncfs``. A flush changes nothing of
    what is written, only when it reaches the disk."""

    def __init__(self, folder: Path | None):
        self._folder = folder
        self._stop = threading.Event()
        self._thread: threading.Thread | None = None

    def __enter__(self) -> _Flusher:
        if self._folder is not None:
            folder = self._folder
            self._thread = threading.Thread(
                target=self._run, args=(folder,), name="steadyline-flush", daemon=True
            )
            self._thread.start()
        return self

    def _run(self, folder: Path) -> None:
        while not self._stop.wait(FLUSH_EVERY_S):
            if not syncfs(folder):
                return

    def __exit__(self, *exc) -> None:
        self._stop.set()
        if self._thread is not None:
            self._thread.join()
