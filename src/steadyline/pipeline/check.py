"""`check`: every project validated (metadata, data, statistics) as a build would, in worker
processes when there are many, with nothing drawn or written."""

from __future__ import annotations

from pathlib import Path

from ..config import discover, load_portfolio, stray_entries
from ..errors import BuildError, Problem
from .pool import _in_order, _jobs, _tune_gc

CHECK_POOL_MIN = 24


def _check_worker(args) -> list[Problem]:
    from .project import check_project

    _tune_gc()
    folder, root, settings, debug = args
    return check_project(folder, root, settings, debug=debug)


def check(projects_dir: Path, jobs: int | None = None, debug: bool = False) -> list[Problem]:
    """Validate every project (metadata, data, statistics) without drawing or writing
    anything: the problems a build would report, in the same order."""
    if not projects_dir.is_dir():
        raise BuildError(f"{projects_dir}: the projects folder does not exist")
    settings, problems = load_portfolio(projects_dir)
    problems = list(problems) + stray_entries(projects_dir)
    tasks = [(f, projects_dir, settings, debug) for f in discover(projects_dir)]
    for found in _in_order(_check_worker, tasks, _jobs(jobs, len(tasks), CHECK_POOL_MIN)):
        problems.extend(found)
    return problems
