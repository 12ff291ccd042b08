"""Merging the sites of a portfolio built in shards into one site.

A portfolio is a set of independent projects: `build --shard I/N` builds the projects of shard
I of N (``shards.shard_of``) into a site of their own, whose manifest records the shard
(``shards.shard_record``). :func:`merge` checks that the shards belong together (one version of
steadyline, one set of settings and templates, one portfolio, each shard once and none
missing), then stages one site: every shard's project folders linked in as they are, the
index and the assets rendered once from the manifests, and the manifest of the whole. It is
published like a build (output rule, the output's lock, staging folder, atomic swap), and
is byte-identical to a `build` of the whole portfolio on one machine: a project's files
depend on that project alone, and the index on the entries the manifests carry.

Only manifests and the files they list are read; the projects folder is not needed.
"""

from __future__ import annotations

import hashlib
import os
import shutil
from dataclasses import dataclass
from pathlib import Path

import orjson

from .. import __version__
from ..config import PortfolioSettings
from ..errors import BuildError, Problem
from ..site.assets import asset_files, assets_key
from ..site.serialise import dumps_bytes
from .index_stage import index_page
from .lock import lock_output
from .manifest import MANIFEST, _settings_key
from .options import BuildReport
from .output_rule import check_output, is_site, named_faults
from .publish import link_tree, publish, write_files
from .shards import portfolio_digest
from .side_folders import clean_stale, staging_dir


@dataclass
class Shard:
    folder: Path
    manifest: dict

    @property
    def record(self) -> dict:
        return self.manifest["shard"]

    @property
    def name(self) -> str:
        return f"{self.record['index']}/{self.record['count']}"


def _read_shard(folder: Path) -> Shard:
    if not folder.is_dir():
        raise BuildError(f"{folder}: no such folder")
    if not is_site(folder):
        raise BuildError(f"{folder}: not a site steadyline published (no {MANIFEST})")
    try:
        manifest = orjson.loads((folder / MANIFEST).read_bytes())
    except (OSError, orjson.JSONDecodeError) as e:
        raise BuildError(f"{folder}/{MANIFEST}: cannot be read: {e}") from None
    record = manifest.get("shard")
    if isinstance(record, dict) and not (
        all(isinstance(record.get(k), int) for k in ("index", "count", "projects_total"))
        and isinstance(record.get("settings"), dict)
        and isinstance(manifest.get("projects"), dict)
    ):
        raise BuildError(f"{folder}/{MANIFEST}: the shard record is damaged; build the shard again")
    if not isinstance(record, dict):
        raise BuildError(
            f"{folder}: not a shard (its manifest has no shard record); build it "
            "with `steadyline build --shard I/N`"
        )
    version = manifest.get("version")
    if version != __version__:
        raise BuildError(
            f"{folder}: shard built by steadyline {version}, this is "
            f"{__version__}; build every shard and merge with one version"
        )
    return Shard(folder, manifest)


def _settings_of(shard: Shard) -> PortfolioSettings:
    try:
        return PortfolioSettings(**shard.record["settings"])
    except TypeError as e:
        raise BuildError(f"{shard.folder}: the shard's settings cannot be read: {e}") from None


def check_shards(folders: list[Path]) -> tuple[list[Shard], PortfolioSettings]:
    """The shards in order, and the settings they were built with; a BuildError in one line
    when they do not make one portfolio: a folder that is no shard, shards built by another
    version or with other settings or templates, of other portfolios, a shard given twice
    (or two builds of the same shard) or one missing."""
    if not folders:
        raise BuildError("merge: no shard folders given")
    shards = [_read_shard(f) for f in folders]
    settings = _built_alike(shards)
    _every_shard_once(shards)
    _every_project_once(shards)
    return sorted(shards, key=_index), settings


def _built_alike(shards: list[Shard]) -> PortfolioSettings:
    """The settings the shards were built with, when every shard was built by this
    installation's templates, with the same settings, count of shards and portfolio."""
    first = shards[0]
    settings = _settings_of(first)
    ours = _settings_key(settings, False)
    if first.record.get("key") != hashlib.sha256(ours.encode()).hexdigest():
        raise BuildError(
            f"{first.folder}: shard built with other templates than this "
            "installation's; build every shard and merge with one installation"
        )
    for s in shards[1:]:
        for what, field in (
            ("another number of shards", "count"),
            ("other settings", "settings"),
            ("other settings or templates", "key"),
            ("another portfolio (another set of projects)", "portfolio"),
        ):
            if s.record.get(field) != first.record.get(field):
                raise BuildError(
                    f"{s.folder}: shard {s.name} was built with {what} "
                    f"than {first.folder} (shard {first.name}); build every shard "
                    "from the same portfolio and settings"
                )
    return settings


def _every_shard_once(shards: list[Shard]) -> None:
    """Each shard of the count given once: none twice (or built twice), none missing."""
    count = shards[0].record["count"]
    seen: dict[int, Shard] = {}
    for s in shards:
        i = s.record["index"]
        if i in seen:
            raise BuildError(
                f"{s.folder}: overlapping shards: {seen[i].folder} is shard {s.name} too"
            )
        seen[i] = s
    missing = [i for i in range(1, count + 1) if i not in seen]
    if missing:
        raise BuildError(
            f"merge: missing shard{'s' if len(missing) > 1 else ''} "
            f"{', '.join(f'{i}/{count}' for i in missing)} (given: "
            f"{', '.join(s.name for s in sorted(shards, key=_index))})"
        )


def _every_project_once(shards: list[Shard]) -> None:
    """Each project of the portfolio in one shard: none in two, none lacking."""
    first = shards[0]
    owner: dict[str, Shard] = {}
    for s in shards:
        for slug in s.manifest.get("projects", {}):
            if slug in owner:
                raise BuildError(
                    f"{s.folder}: overlapping shards: project {slug} is in {owner[slug].folder} too"
                )
            owner[slug] = s
    if (
        len(owner) != first.record["projects_total"]
        or portfolio_digest(list(owner)) != first.record["portfolio"]
    ):
        raise BuildError(
            f"merge: the shards hold {len(owner)} projects, the portfolio "
            f"{first.record['projects_total']}; a shard is incomplete (built "
            "from another checkout?)"
        )


def _index(s: Shard) -> int:
    return s.record["index"]


def merge(folders: list[Path], out: Path) -> BuildReport:
    """Merge the shard sites in *folders* into one site at *out*, published as a build
    publishes (see the module's docstring)."""
    shards, settings = check_shards(folders)
    with named_faults(out):
        for s in shards:  # the output is never one of the shards, inside one or around one
            real, shard = os.path.realpath(out), os.path.realpath(s.folder)
            if (
                real == shard
                or Path(shard) in Path(real).parents
                or Path(real) in Path(shard).parents
            ):
                raise BuildError(
                    f"{out}: refused as output: it is, is inside or contains the "
                    f"shard {s.folder}; choose another folder"
                )
        out = check_output(out, shards[0].folder)
        lock = lock_output(out, "build")
        try:
            clean_stale(out)
            return _merge_locked(shards, settings, out)
        finally:
            lock.release()


def _merge_locked(shards: list[Shard], settings: PortfolioSettings, out: Path) -> BuildReport:
    report = BuildReport()
    projects: dict[str, dict] = {}
    source: dict[str, Path] = {}
    for s in shards:
        for slug, item in s.manifest["projects"].items():
            folder = s.folder / "projects" / slug
            for name in item["files"]:
                if not os.path.isfile(folder / name):
                    raise BuildError(
                        f"{s.folder}: shard {s.name} is incomplete: "
                        f"projects/{slug}/{name} is missing"
                    )
            projects[slug] = item
            source[slug] = folder
    for slug in sorted(projects):
        item = projects[slug]
        problems = [Problem(**p) for p in item.get("problems", [])]
        report.problems.extend(problems)
        if item["entry"].get("broken") or item["entry"].get("metrics_not_built"):
            report.broken.append(slug)
        else:
            report.built.append(slug)

    index_out = index_page([projects[slug]["entry"] for slug in sorted(projects)], settings, False)
    manifest = {
        "version": __version__,
        "assets": assets_key(),
        "projects": {slug: projects[slug] for slug in sorted(projects)},
    }
    staged = staging_dir(out)
    staged.mkdir(parents=True)
    try:
        written = write_files(staged, {f"assets/{n}": b for n, b in asset_files().items()})
        written += write_files(staged, {**index_out, MANIFEST: dumps_bytes(manifest)})
        for slug in sorted(projects):
            link_tree(source[slug], staged / "projects" / slug, projects[slug]["files"])
        publish(staged, out, None)
    except BaseException:
        shutil.rmtree(staged, ignore_errors=True)
        raise
    report.written = True
    return report


__all__ = ["check_shards", "merge"]
