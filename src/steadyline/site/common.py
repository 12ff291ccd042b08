"""The light part of the site layer: a project's outcome, the pages' common context and the
cache folder. Importing it pulls in none of the statistics stack, so that a rebuild with nothing
to do starts and ends quickly.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

from .. import __version__
from ..config import PHASES, PortfolioSettings
from ..errors import Problem

# a project's phase as the index and its pages name it
PHASE_LABEL = {p: p.capitalize() for p in PHASES}

CSP = (
    "default-src 'none'; script-src 'self'; style-src 'self' 'unsafe-inline'; "
    "img-src 'self' data: blob:; connect-src 'self'; font-src 'self'; "
    "base-uri 'none'; form-action 'none'; object-src 'none'"
)


@dataclass
class ProjectOutcome:
    slug: str
    ok: bool
    files: dict[str, bytes] = field(default_factory=dict)
    entry: dict = field(default_factory=dict)
    problems: list[Problem] = field(default_factory=list)  # errors and warnings, for the terminal
    names: list[str] = field(default_factory=list)  # set by the build once files are written
    written: list[str] = field(default_factory=list)  # their paths in the staging folder


def page_context(root: str, settings: PortfolioSettings, live: str | None) -> dict:
    return {
        "root": root,
        "portfolio_title": settings.title,
        "version": __version__,
        "csp": CSP,
        "live": live,
    }


def cache_dir() -> Path:
    """steadyline's folder in the user's cache ($XDG_CACHE_HOME, else ~/.cache)."""
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "steadyline"
