"""The stage step: the staging folder beside the output (new, or a watch session's standby
folder with what is rebuilt taken out of it), the assets (the published ones linked when
unchanged, else the Vega bundle made in a thread while the workers run), the index, manifest
and live state written, and the reused projects hard-linked in. Writing only into the
staging folder is what keeps a half-written site from ever being published."""

from __future__ import annotations

import shutil
import threading
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

from ..site.assets import asset_files, assets_key
from ..site.common import ProjectOutcome
from .manifest import LIVE_STATE
from .plan import Plan
from .publish import link_tree, write_files
from .side_folders import staging_dir


@dataclass
class Staging:
    folder: Path  # the staging folder
    akey: str  # the key of the assets this build publishes
    reuse_assets: bool  # the published assets are the same: linked, not made again


def open_staging(out: Path, manifest: dict, plan: Plan) -> Staging:
    """The staging folder for *plan*: the standby folder when there is one (the projects to
    rebuild and changed assets removed from it first: writing through a link would change
    the published file), else a new folder, made now when there are projects to build."""
    akey = assets_key()
    reuse_assets = manifest.get("assets") == akey and (out / "assets").is_dir()
    ready = plan.ready
    if ready is not None:
        staged = ready.folder
        keep = {f.name for f in plan.reuse}
        for slug in ready.linked:
            if slug not in keep:
                shutil.rmtree(staged / "projects" / slug)
        reuse_assets = reuse_assets and ready.assets
        if not reuse_assets:
            shutil.rmtree(staged / "assets", ignore_errors=True)
    else:
        staged = staging_dir(out)
        if plan.todo:
            staged.mkdir(parents=True)
    return Staging(staged, akey, reuse_assets)


def stage_files(
    out: Path,
    staging: Staging,
    plan: Plan,
    outcomes: list[ProjectOutcome],
    assets: _Assets,
    site_files: dict[str, bytes],
    live_state: bytes | None,
    reused: list[tuple[str, list[str]]],
) -> list[str]:
    """Complete the staging folder around the projects the workers wrote: assets, the index
    and manifest (*site_files*), the live state in watch mode, and the *reused* projects'
    files ((slug, files) pairs) linked from the published site. Returns every file written
    anew, which is what the publish step flushes."""
    staged = staging.folder
    if not plan.todo and plan.ready is None:
        staged.mkdir(parents=True)
    written: list[str] = [w for o in outcomes for w in o.written]
    old_assets = out / "assets"
    if staging.reuse_assets and plan.ready is not None:
        pass  # linked into the standby folder already
    elif staging.reuse_assets:
        # Same assets as published: reuse them instead of rebuilding the Vega bundle.
        names = [
            p.relative_to(old_assets).as_posix()
            for p in sorted(old_assets.rglob("*"))
            if p.is_file()
        ]
        link_tree(old_assets, staged / "assets", names)
    else:
        written += write_files(staged, {f"assets/{n}": b for n, b in assets.files().items()})
    written += write_files(staged, site_files)
    if live_state is not None:
        written += write_files(staged, {LIVE_STATE: live_state})
    if plan.ready is None:
        _link_reused(out, staged, reused)
    return written


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


def unchanged(out: Path, site_files: dict[str, bytes]) -> bool:
    """Whether the published site already holds exactly these files (then nothing is written:
    a site kept in a repository does not churn)."""
    return out.is_dir() and all(_same(out / name, data) for name, data in site_files.items())


def _same(path: Path, data: bytes) -> bool:
    try:
        return path.read_bytes() == data
    except OSError:
        return False
