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

Writing only into the staging folder is what keeps a half-written site from ever being
published. When nothing changed at all, nothing is written (a site kept in a repository does
not churn). The whole build runs under the output's lock (see ``publish.lock_output``): a
second build of the same output waits, so that no build reads the manifest or links files of a
site that another is about to replace, nor deletes another's staging folder.

Worker processes die with the build that started them, even when it is killed outright
(``PR_SET_PDEATHSIG`` on Linux, a watching thread elsewhere); an interrupted or terminated
build stops its workers before it ends.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import gc
import hashlib
import json
import os
import shutil
import signal
import sys
import threading
import time
from concurrent.futures import ProcessPoolExecutor, ThreadPoolExecutor
from dataclasses import asdict, dataclass, field, replace
from multiprocessing import get_context
from pathlib import Path

from .. import __version__
from ..config import PortfolioSettings, discover, load_portfolio, stray_entries
from ..errors import BuildError, Problem
from ..site.assets import asset_files, assets_key
from ..site.common import ProjectOutcome
from ..site.index import index_files
from ..site.serialise import dumps_bytes
from ..site.templates import templates_fingerprint
from ..status import build_date
from .inputs import digest_memo_for, git_dates, input_hash
from .output_rule import MARKER, check_output, named_faults
from .publish import (
    OutputLock,
    clean_stale,
    link_tree,
    lock_output,
    publish,
    staging_dir,
    syncfs,
    write_files,
)

MANIFEST = MARKER  # the manifest is also the mark of a site steadyline published
LIVE_STATE = "live-state.json"


@dataclass
class BuildOptions:
    projects_dir: Path
    out: Path
    force: bool = False
    jobs: int | None = None
    live: bool = False  # pages poll live-state.json and reload (watch mode)
    progress: bool = False
    debug: bool = False
    only: set[str] | None = None  # watch mode: rebuild only these slugs (others reused)
    # The output's lock when the caller holds it already (a watch session holds it from start
    # to stop); None: the build takes it, waiting for another build of the same output.
    lock: OutputLock | None = None
    # Build only shard I of N (1-based), (I, N): see ``shard_of``; None: every project.
    shard: tuple[int, int] | None = None
    # Watch mode: projects not named in *only* are taken to be unchanged since the last build
    # (the watcher saw no event in their folders) and are not hashed again.
    trust_unnamed: bool = False
    # Watch mode: a staging folder prepared while the watch waited (see ``Standby``).
    standby: Standby | None = None


@dataclass
class BuildReport:
    built: list[str] = field(default_factory=list)
    reused: list[str] = field(default_factory=list)
    broken: list[str] = field(default_factory=list)
    problems: list[Problem] = field(default_factory=list)
    written: bool = False
    stamps: dict[str, str] = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        """No project broken and no other error (a broken portfolio.toml, whose defaults were
        used instead)."""
        return not self.broken and not any(p.severity == "error" for p in self.problems)


def _settings_key(settings: PortfolioSettings, live: bool) -> str:
    return json.dumps([__version__, templates_fingerprint(), repr(settings), live])


def shard_of(slug: str, count: int) -> int:
    """The shard (1 to *count*) that builds project *slug*: by a hash of its folder's name, so
    that a project stays in its shard when others are added or removed (each shard's
    published site, kept between runs, then reuses what did not change), and no shard needs
    the list of the others to know its own. Shards are even in size on average, not exactly."""
    digest = hashlib.sha256(os.fsencode(slug)).digest()
    return int.from_bytes(digest[:8], "big") % count + 1


def portfolio_digest(slugs: list[str]) -> str:
    """A hash of the sorted project slugs of a portfolio: shards of one portfolio agree on it."""
    h = hashlib.sha256()
    for slug in sorted(slugs):
        h.update(os.fsencode(slug) + b"\0")
    return h.hexdigest()


def shard_record(settings: PortfolioSettings, shard: tuple[int, int], slugs: list[str]) -> dict:
    """What a shard's manifest says about it, for the merge (``site.merge``) to check the
    shards against each other and render the index: which shard of how many, the whole
    portfolio it is a part of, and the settings and templates it was built with."""
    index, count = shard
    return {
        "index": index,
        "count": count,
        "portfolio": portfolio_digest(slugs),
        "projects_total": len(slugs),
        "settings": asdict(settings),
        "key": hashlib.sha256(_settings_key(settings, False).encode()).hexdigest(),
    }


def _read_manifest(out: Path) -> dict:
    try:
        data = json.loads((out / MANIFEST).read_text(encoding="utf-8"))
        return data if data.get("version") == __version__ else {}
    except (OSError, ValueError):
        return {}


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


def _die_with_parent(parent: int) -> None:
    """Make this worker end when *parent*, the build, ends, however it ends (kill -9 too): a
    worker left behind would finish its project for a site nobody publishes and then wait for
    tasks for ever. Linux: the kernel sends SIGKILL when the parent dies
    (``prctl(PR_SET_PDEATHSIG)``); elsewhere a thread looks every half second."""
    prctl = None
    if sys.platform.startswith("linux"):
        try:
            libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
            prctl = libc.prctl
            prctl.argtypes = [
                ctypes.c_int,
                ctypes.c_ulong,
                ctypes.c_ulong,
                ctypes.c_ulong,
                ctypes.c_ulong,
            ]
            prctl.restype = ctypes.c_int
        except (OSError, AttributeError):
            prctl = None
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


def _worker_start(parent: int, then) -> None:
    """Every pool worker's initializer. Ctrl-C in a terminal reaches the whole process group:
    the workers leave it to the build, which stops them (no traceback from each worker)."""
    _die_with_parent(parent)
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if then is not None:
        then()


def _new_pool(jobs: int, initializer=None) -> ProcessPoolExecutor:
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


def _in_order(fn, tasks: list, jobs: int, pool: ProcessPoolExecutor | None = None):
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


def compute(
    tasks: list[tuple], jobs: int, progress, pool: ProcessPoolExecutor | None = None
) -> list[ProjectOutcome]:
    results = []
    for r in _in_order(_worker, tasks, jobs, pool):  # outcomes are small: workers write files
        results.append(r)
        progress(r.slug)
    return results


def index_page(entries: list[dict], settings: PortfolioSettings, live: bool) -> dict[str, bytes]:
    """The index stage's files: index.html and the CSV of every project's headline figures
    (site.index). Staleness is judged against the build date (SOURCE_DATE_EPOCH when set)."""
    try:
        today = build_date()
    except ValueError as e:
        raise BuildError(str(e)) from None
    return index_files(entries, settings, f"{LIVE_STATE} __index__" if live else None, today)


class _Terminated(BaseException):
    """SIGTERM during a build: unwinds it like Ctrl-C (staging folder removed, workers ended,
    lock released), after which the process ends by the signal as it would have."""


def build(opts: BuildOptions, progress_cb=None) -> BuildReport:
    """Build the site into ``opts.out``. The output is first checked against the output rule
    (``output_rule.check_output``: absent, empty, or a site of ours) before anything is
    written; a fault of the machine while building (disk full, read-only, permission denied)
    becomes one line naming the path and the cause, the published site left as it was."""
    if not opts.projects_dir.is_dir():
        raise BuildError(f"{opts.projects_dir}: the projects folder does not exist")
    with named_faults(opts.out):
        out = check_output(opts.out, opts.projects_dir)
        return _build(replace(opts, out=out), progress_cb)


def _build(opts: BuildOptions, progress_cb=None) -> BuildReport:
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


def _build_locked(opts: BuildOptions, root: Path, out: Path, progress_cb) -> BuildReport:
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
            opts,
            root,
            out,
            report,
            settings,
            portfolio_problems,
            folders,
            manifest,
            old,
            pool,
            progress_cb,
            shard,
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
    root: Path,
    out: Path,
    report: BuildReport,
    settings: PortfolioSettings,
    portfolio_problems: list[Problem],
    folders: list[Path],
    manifest: dict,
    old: dict,
    pool: ProcessPoolExecutor | None,
    progress_cb,
    shard: dict | None = None,
) -> BuildReport:
    key = _settings_key(settings, opts.live)
    memo = digest_memo_for(root)  # unchanged files are not read again
    trusted = old if opts.trust_unnamed and opts.only is not None else {}
    hashes = {
        f.name: (
            trusted[f.name]["hash"]
            if f.name in trusted and f.name not in opts.only
            else input_hash(f, key, memo, root)
        )
        for f in folders
    }
    memo.save()
    ready = None
    if opts.standby is not None:
        ready = opts.standby.take() if not opts.force else opts.standby.discard()
    todo, reuse = [], []
    for f in folders:
        prev = old.get(f.name)
        fresh = (
            prev is not None
            and prev["hash"] == hashes[f.name]
            and (opts.only is None or f.name not in opts.only)
            and (
                ready.linked.get(f.name) == prev["files"]
                if ready is not None
                else _all_files(out / "projects" / f.name, prev["files"])
            )
        )
        (reuse if fresh else todo).append(f)

    # 4. compute, into the staging folder (in the early pool when there is one: then every
    # project is to be built, with as many workers as it has)
    jobs = _jobs(opts.jobs, len(todo), BUILD_POOL_MIN)
    live = LIVE_STATE if opts.live else None
    progress = progress_cb or (lambda slug: None)
    akey = assets_key()
    old_assets = out / "assets"
    reuse_assets = manifest.get("assets") == akey and old_assets.is_dir()
    if ready is not None:
        # The standby folder holds links to the published files: what is not reused goes,
        # before anything is written there (writing through a link would change the
        # published file).
        staged = ready.folder
        keep = {f.name for f in reuse}
        for slug in ready.linked:
            if slug not in keep:
                shutil.rmtree(staged / "projects" / slug)
        reuse_assets = reuse_assets and ready.assets
        if not reuse_assets:
            shutil.rmtree(staged / "assets", ignore_errors=True)
    else:
        staged = staging_dir(out)
        if todo:
            staged.mkdir(parents=True)
    try:
        assets = _Assets(reuse_assets or not todo)  # the Vega bundle, made while workers run
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
            outcomes = compute(tasks, jobs, progress, pool)
        if any(p.severity == "error" for p in portfolio_problems):
            # A broken portfolio.toml: its defaults are used and every project says so.
            for o in outcomes:
                o.problems = portfolio_problems + o.problems

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

        # 5. index and manifest
        index_out = index_page(list(entries.values()), settings, opts.live)
        index = index_out["index.html"]
        problems_of = {o.slug: [p.as_dict() for p in o.problems] for o in outcomes}
        new_manifest = {
            "version": __version__,
            "assets": akey,
            "projects": {
                slug: {
                    "hash": hashes[slug],
                    "files": files_of[slug],
                    "entry": entries[slug],
                    "problems": problems_of.get(slug, old.get(slug, {}).get("problems", [])),
                }
                for slug in sorted(entries)
            },
        }
        if shard is not None:
            new_manifest["shard"] = shard
        manifest_bytes = dumps_bytes(new_manifest)
        report.stamps = {slug: hashes[slug][:16] for slug in entries}
        report.stamps["__index__"] = hashlib.sha256(index).hexdigest()[:16]

        unchanged = (
            not outcomes
            and out.is_dir()
            and all(_same(out / name, data) for name, data in index_out.items())
            and _same(out / MANIFEST, manifest_bytes)
        )
        if unchanged:
            if ready is not None:
                opts.standby.keep(ready)  # still a copy of the published site
            return report

        # 6. stage
        if not todo and ready is None:
            staged.mkdir(parents=True)
        written: list[str] = [w for o in outcomes for w in o.written]
        if reuse_assets and ready is not None:
            pass  # linked into the standby folder already
        elif reuse_assets:
            # Same assets as published: reuse them instead of rebuilding the Vega bundle.
            names = [
                p.relative_to(old_assets).as_posix()
                for p in sorted(old_assets.rglob("*"))
                if p.is_file()
            ]
            link_tree(old_assets, staged / "assets", names)
        else:
            written += write_files(staged, {f"assets/{n}": b for n, b in assets.files().items()})
        written += write_files(staged, {**index_out, MANIFEST: manifest_bytes})
        if opts.live:
            written += write_files(
                staged, {LIVE_STATE: (json.dumps(report.stamps, sort_keys=True) + "\n").encode()}
            )
        if ready is None:
            _link_reused(out, staged, [(f.name, files_of[f.name]) for f in reuse])
        # 7. publish
        publish(staged, out, written)
    except BaseException:
        shutil.rmtree(staged, ignore_errors=True)
        raise
    report.written = True
    return report


@dataclass
class _Ready:
    folder: Path
    linked: dict[str, list[str]]  # slug -> the files linked, as the manifest lists them
    assets: bool  # the published assets are linked too


class Standby:
    """The next rebuild's staging folder, prepared while a watch session waits for a save: the
    published site's project files and assets hard-linked into the staging folder, as the
    stage step of a build would link them. Linking thousands of files takes most of a second,
    which a rebuild after a save then does not spend: it removes from the folder the projects
    it rebuilds (their links, never the published files), writes them, the index and the
    manifest, and swaps the folder in as usual. Only the holder of the output's lock may use
    one (nothing else publishes meanwhile, so the links stay those of the published site); the
    folder carries the watch's staging folder's name, so that it is cleaned as one if the
    session is killed."""

    def __init__(self, out: Path):
        self.out = out
        self._thread: threading.Thread | None = None
        self._ready: _Ready | None = None

    def prepare(self) -> None:
        """Start linking the published site into the standby folder, in a thread; nothing to
        do while one is being made or is ready (a build that published nothing kept it)."""
        if self._thread is not None or self._ready is not None:
            return
        self._thread = threading.Thread(target=self._make, name="steadyline-standby", daemon=True)
        self._thread.start()

    def _make(self) -> None:
        folder = staging_dir(self.out)
        try:
            shutil.rmtree(folder, ignore_errors=True)
            manifest = _read_manifest(self.out)
            folder.mkdir(parents=True)
            linked: dict[str, list[str]] = {}
            for slug, item in sorted(manifest.get("projects", {}).items()):
                files = item["files"]
                link_tree(self.out / "projects" / slug, folder / "projects" / slug, files)
                linked[slug] = files
            assets = self.out / "assets"
            has_assets = assets.is_dir()
            if has_assets:
                link_tree(
                    assets,
                    folder / "assets",
                    [
                        p.relative_to(assets).as_posix()
                        for p in sorted(assets.rglob("*"))
                        if p.is_file()
                    ],
                )
            self._ready = _Ready(folder, linked, has_assets)
        except Exception:  # a file gone, a full disk: the rebuild stages as a build does
            shutil.rmtree(folder, ignore_errors=True)
            self._ready = None

    def take(self) -> _Ready | None:
        """The prepared folder (waiting for it to be ready), handed over to one build."""
        if self._thread is not None:
            self._thread.join()
            self._thread = None
        ready, self._ready = self._ready, None
        return ready

    def keep(self, ready: _Ready) -> None:
        """Give back a folder a build did not use (nothing to publish)."""
        self._ready = ready

    def discard(self) -> None:
        ready = self.take()
        if ready is not None:
            shutil.rmtree(ready.folder, ignore_errors=True)
        return None


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
            self._thread = threading.Thread(target=self._run, name="steadyline-flush", daemon=True)
            self._thread.start()
        return self

    def _run(self) -> None:
        while not self._stop.wait(FLUSH_EVERY_S):
            if not syncfs(self._folder):
                return

    def __exit__(self, *exc) -> None:
        self._stop.set()
        if self._thread is not None:
            self._thread.join()


def _link_reused(out: Path, staged: Path, projects: list[tuple[str, list[str]]]) -> None:
    """Hard-link the unchanged projects' files into the staging folder; a few threads at a
    time, since each link is a system call that waits on the file system, not on Python."""

    def one(item: tuple[str, list[str]]) -> None:
        name, files = item
        link_tree(out / "projects" / name, staged / "projects" / name, files)

    if len(projects) < 16:
        for item in projects:
            one(item)
        return
    with ThreadPoolExecutor(max_workers=4) as pool:
        list(pool.map(one, projects))  # list(): re-raises the first error


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


class _Assets:
    """The asset files, made in a thread started now: building the Vega bundle takes about a
    second, which overlaps with the workers instead of following them."""

    def __init__(self, skip: bool):
        self._files: dict[str, bytes] | None = None
        self._error: BaseException | None = None
        self._thread = None if skip else threading.Thread(target=self._make, daemon=True)
        if self._thread is not None:
            self._thread.start()

    def _make(self) -> None:
        try:
            self._files = asset_files()
        except BaseException as e:  # re-raised in the main thread by files()
            self._error = e

    def files(self) -> dict[str, bytes]:
        if self._thread is not None:
            self._thread.join()
            self._thread = None
        if self._error is not None:
            raise self._error
        if self._files is None:
            self._files = asset_files()
        return self._files


def _all_files(folder: Path, names: list[str]) -> bool:
    base = os.fspath(folder)
    return all(os.path.isfile(os.path.join(base, n)) for n in names)


def _same(path: Path, data: bytes) -> bool:
    try:
        return path.read_bytes() == data
    except OSError:
        return False


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


__all__ = ["BuildOptions", "BuildReport", "Standby", "build", "check"]
