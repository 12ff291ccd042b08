"""The plan stage: hash each project's inputs (files, tool version, templates, settings) and
decide which projects must be rebuilt. A project whose hash matches the published site's
manifest, and whose published files are all there, is reused as it is."""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from ..config import PortfolioSettings
from .inputs import digest_memo_for, input_hash
from .manifest import _settings_key
from .options import BuildOptions
from .standby import _Ready


@dataclass
class Plan:
    hashes: dict[str, str]  # slug -> input hash, for every project of this build
    todo: list[Path]  # the project folders to build
    reuse: list[Path]  # the project folders whose published files are reused
    ready: _Ready | None  # the watch session's standby folder, when it prepared one


def make_plan(
    opts: BuildOptions, settings: PortfolioSettings, folders: list[Path], old: dict
) -> Plan:
    """Which of *folders* to build and which to reuse; *old*: the published manifest's
    projects ({} when every project is to be built)."""
    hashes = _hash_inputs(opts, settings, folders, old)
    ready = None
    if opts.standby is not None:
        if opts.force:
            opts.standby.discard()
        else:
            ready = opts.standby.take()
    todo: list[Path] = []
    reuse: list[Path] = []
    for f in folders:
        prev = old.get(f.name)
        fresh = (
            prev is not None
            and prev["hash"] == hashes[f.name]
            and (opts.only is None or f.name not in opts.only)
            and (
                ready.linked.get(f.name) == prev["files"]
                if ready is not None
                else _all_files(opts.out / "projects" / f.name, prev["files"])
            )
        )
        (reuse if fresh else todo).append(f)
    return Plan(hashes, todo, reuse, ready)


def _hash_inputs(
    opts: BuildOptions, settings: PortfolioSettings, folders: list[Path], old: dict
) -> dict[str, str]:
    """Every project's input hash. In a watch session's rebuild (``trust_unnamed``) the
    projects not named in ``only`` keep the hash the manifest has for them."""
    root = opts.projects_dir
    key = _settings_key(settings, opts.live)
    memo = digest_memo_for(root)  # unchanged files are not read again
    trusted = set(old) - opts.only if opts.trust_unnamed and opts.only is not None else set()
    hashes = {
        f.name: old[f.name]["hash"] if f.name in trusted else input_hash(f, key, memo, root)
        for f in folders
    }
    memo.save()
    return hashes


def _all_files(folder: Path, names: list[str]) -> bool:
    base = os.fspath(folder)
    return all(os.path.isfile(os.path.join(base, n)) for n in names)
