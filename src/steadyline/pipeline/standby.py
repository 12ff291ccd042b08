"""The standby staging folder of a watch session: the next rebuild's staging folder, the
published site linked into it while the session waits for a save, so that the rebuild after
the save does not spend most of a second linking files."""

from __future__ import annotations

import shutil
import threading
from dataclasses import dataclass
from pathlib import Path

from .manifest import _read_manifest
from .publish import link_tree
from .side_folders import staging_dir


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
