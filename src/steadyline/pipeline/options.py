"""What a build is asked to do (:class:`BuildOptions`) and what it did (:class:`BuildReport`):
the two records every stage of the build, the merge, the watch session and the command line
share, apart from the stages themselves so that each can name them without importing the
others."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import Problem

if TYPE_CHECKING:
    from .lock import OutputLock
    from .standby import Standby


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
    # Build only shard I of N (1-based), (I, N): see ``shards.shard_of``; None: every project.
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
