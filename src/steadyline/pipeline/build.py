"""The build as named stages.

1. settings  - read portfolio.toml (defaults when absent);
2. discover  - list project folders;
3. plan      - hash each project's inputs (files, tool version, templates, settings) and decide
               which projects must be rebuilt: a project whose hash matches the published site's
               manifest is reused as it is;
4. compute   - build the changed projects (a process pool when there are several); each worker
               writes its project's files into a staging folder beside the output, never into
               the published site, so a failure here leaves the published site untouched;
5. index     - render the index from every project's entry (always, since it lists them all);
6. stage     - write the index and assets, and hard-link reused projects into the staging folder;
7. publish   - flush the staging folder to disk and swap it in atomically.

This module runs the stages in order under the output's lock; each stage lives in a module of
its own (plan, compute, index_stage, stage, publish; the worker processes in pool, shards in
shards, the manifest in manifest), and the names other code imports from here are handed on.

Writing only into the staging folder is what keeps a half-written site from ever being
published. When nothing changed at all, nothing is written (a site kept in a repository does
not churn). The whole build runs under the output's lock (see ``lock.lock_output``): a
second build of the same output waits, so that no build reads the manifest or links files of a
site that another is about to replace, nor deletes another's staging folder.

An interrupted or terminated build stops its workers (see ``pool``) and removes its staging
folder before it ends.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import threading
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor
from dataclasses import replace
from pathlib import Path

from ..config import PortfolioSettings, discover, load_portfolio, stray_entries
from ..errors import BuildError, Problem
from ..site.common import ProjectOutcome
from ..site.serialise import dumps_bytes
from .check import check
from .compute import compute_stage
from .index_stage import index_page, live_stamps
from .lock import lock_output
from .manifest import LIVE_STATE, MANIFEST, _read_manifest, manifest_record
from .options import BuildOptions, BuildReport
from .output_rule import check_output, named_faults
from .plan import make_plan
from .pool import BUILD_POOL_MIN, _early_pool, _jobs, _stop_pool, _tune_gc
from .publish import publish
from .shards import portfolio_digest, shard_of, shard_record
from .side_folders import clean_stale
from .stage import _Assets, open_staging, stage_files, unchanged
from .standby import Standby


class _Terminated(BaseException):
    """SIGTERM during a build: unwinds it like Ctrl-C (staging folder removed, workers ended,
    lock released), after which the process ends by the signal as it would have."""


def build(opts: BuildOptions, progress_cb: Callable[[str], object] | None = None) -> BuildReport:
    """Build the site into ``opts.out``. The output is first checked against the output rule
    (``output_rule.check_output``: absent, empty, or a site of ours) before anything is
    written; a fault of the machine while building (disk full, read-only, permission denied)
    becomes one line naming the path and the cause, the published site left as it was."""
    if not opts.projects_dir.is_dir():
        raise BuildError(f"{opts.projects_dir}: the projects folder does not exist")
    with named_faults(opts.out):
        out = check_output(opts.out, opts.projects_dir)
        return _build(replace(opts, out=out), progress_cb)


def _build(opts: BuildOptions, progress_cb: Callable[[str], object] | None = None) -> BuildReport:
    root = opts.projects_dir
    out = opts.out
    if opts.lock is not None and not opts.lock.covers(out):
        raise ValueError(f"{out}: the lock given is not this output's")

    previous = None
    if (
        threading.current_thread() is threading.main_thread()
        and signal.getsignal(signal.SIGTERM) == signal.SIG_DFL
    ):
        # Nobody handles SIGTERM (a watch session does): unwind the build on it.
        def _terminate(signum, frame):
            raise _Terminated(signum)

        previous = signal.signal(signal.SIGTERM, _terminate)
    try:
        lock = opts.lock or lock_output(out, "build")
        try:
            return _build_locked(opts, root, out, progress_cb)
        finally:
            if opts.lock is None:
                lock.release()
    except _Terminated:
        signal.signal(signal.SIGTERM, signal.SIG_DFL)
        previous = None
        os.kill(os.getpid(), signal.SIGTERM)
        raise SystemExit(128 + signal.SIGTERM) from None  # if the signal is blocked
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)


def _build_locked(
    opts: BuildOptions, root: Path, out: Path, progress_cb: Callable[[str], object] | None
) -> BuildReport:
    report = BuildReport()
    # Folders of builds that were killed. Under the lock, so that no other build of this
    # output is starting or publishing meanwhile.
    if opts.standby is None:
        # (A watch session's rebuilds skip it: its first build did it, and since then it
        # has held the lock; its own standby folder carries its staging folder's name.)
        clean_stale(out)

    # 1-2. settings and discovery
    settings, portfolio_problems = load_portfolio(root)
    report.problems.extend(portfolio_problems)
    report.problems.extend(stray_entries(root))
    folders = discover(root)
    shard = None
    if opts.shard is not None:
        shard = shard_record(settings, opts.shard, [f.name for f in folders])
        folders = [f for f in folders if shard_of(f.name, opts.shard[1]) == opts.shard[0]]

    # 3. plan
    manifest = {} if opts.force else _read_manifest(out)
    old = manifest.get("projects", {})
    # Every project will be built (nothing published, or --force) and there are enough for a
    # pool: its workers start now and load while the inputs are hashed.
    early_jobs = _jobs(opts.jobs, len(folders), BUILD_POOL_MIN)
    pool = _early_pool(early_jobs) if not old and early_jobs > 1 and len(folders) > 2 else None
    try:
        done = _build_planned(
            opts, report, settings, portfolio_problems, folders, manifest, pool, progress_cb, shard
        )
    except BaseException:
        if pool is not None:
            _stop_pool(pool, abort=True)
        raise
    if pool is not None:
        _stop_pool(pool, abort=False)
    return done


def _build_planned(
    opts: BuildOptions,
    report: BuildReport,
    settings: PortfolioSettings,
    portfolio_problems: list[Problem],
    folders: list[Path],
    manifest: dict,
    pool: ProcessPoolExecutor | None,
    progress_cb: Callable[[str], object] | None,
    shard: dict | None = None,
) -> BuildReport:
    """Stages 3 to 7 for *folders*; *manifest*: the published site's ({} with --force). On any
    failure or interruption the staging folder goes, the published site left as it was."""
    out = opts.out
    old = manifest.get("projects", {})
    plan = make_plan(opts, settings, folders, old)  # 3. plan
    staging = open_staging(out, manifest, plan)
    try:
        assets = _Assets(staging.reuse_assets or not plan.todo)  # made while the workers run
        # 4. compute, into the staging folder
        outcomes = compute_stage(opts, settings, plan.todo, staging.folder, pool, progress_cb)
        if any(p.severity == "error" for p in portfolio_problems):
            # A broken portfolio.toml: its defaults are used and every project says so.
            for o in outcomes:
                o.problems = portfolio_problems + o.problems
        entries, files_of = _gather(report, outcomes, plan.reuse, old)

        # 5. index and manifest
        index_out = index_page(list(entries.values()), settings, opts.live)
        problems_of = {o.slug: [p.as_dict() for p in o.problems] for o in outcomes}
        record = manifest_record(
            staging.akey, plan.hashes, entries, files_of, problems_of, old, shard
        )
        site_files = {**index_out, MANIFEST: dumps_bytes(record)}
        report.stamps = live_stamps(plan.hashes, list(entries), index_out["index.html"])
        if not outcomes and unchanged(out, site_files):
            if plan.ready is not None and opts.standby is not None:
                opts.standby.keep(plan.ready)  # still a copy of the published site
            return report

        # 6. stage
        stamps = (json.dumps(report.stamps, sort_keys=True) + "\n").encode()
        reused = [(f.name, files_of[f.name]) for f in plan.reuse]
        written = stage_files(
            out, staging, plan, outcomes, assets, site_files, stamps if opts.live else None, reused
        )
        # 7. publish
        publish(staging.folder, out, written)
    except BaseException:
        shutil.rmtree(staging.folder, ignore_errors=True)
        raise
    report.written = True
    return report


def _gather(
    report: BuildReport, outcomes: list[ProjectOutcome], reuse: list[Path], old: dict
) -> tuple[dict[str, dict], dict[str, list[str]]]:
    """Every project's index entry and files, built now or reused; the report told which were
    built, reused and broken, and their problems (a reused one's from the old manifest)."""
    entries: dict[str, dict] = {}
    files_of: dict[str, list[str]] = {}
    for o in outcomes:
        entries[o.slug] = o.entry
        files_of[o.slug] = o.names
        report.problems.extend(o.problems)
        (report.built if o.ok else report.broken).append(o.slug)
    for f in reuse:
        prev = old[f.name]
        entries[f.name] = prev["entry"]
        files_of[f.name] = prev["files"]
        report.reused.append(f.name)
        if prev["entry"].get("broken") or prev["entry"].get("metrics_not_built"):
            report.broken.append(f.name)
            report.problems.extend(Problem(**p) for p in prev.get("problems", []))
    return entries, files_of


# Handed on: the names other modules, the tests and the benchmarks import from here.
__all__ = [
    "BUILD_POOL_MIN",
    "LIVE_STATE",
    "MANIFEST",
    "BuildOptions",
    "BuildReport",
    "Standby",
    "_read_manifest",
    "_tune_gc",
    "build",
    "check",
    "portfolio_digest",
    "shard_of",
    "shard_record",
]
