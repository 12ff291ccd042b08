"""The light part of the site layer: what a build needs before it knows whether any project
must be rebuilt (hashing inputs, the index's page context). Importing it pulls in none of the
statistics stack, so that a rebuild with nothing to do starts and ends quickly.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field
from pathlib import Path

from .. import __version__
from ..config import PortfolioSettings
from ..errors import Problem

CSP = ("default-src 'none'; script-src 'self'; style-src 'self' 'unsafe-inline'; "
       "img-src 'self' data: blob:; connect-src 'self'; font-src 'self'; "
       "base-uri 'none'; form-action 'none'; object-src 'none'")

# Endings of the files editors and office suites write beside the real one while saving.
_TEMP_SUFFIXES = (".swp", ".swo", ".swx", ".swpx", ".tmp", ".part", ".crdownload")
def is_ignored(name: str) -> bool:
    """True for a file name no rebuild should follow: hidden, swap, backup, lock or temp files.

    Covers ``.#x`` (Emacs lock), ``#x#`` (Emacs auto-save), ``x~`` (backups), ``.x.swp``
    (Vim swap), ``4913`` (Vim's write test), ``.~lock.x#`` and ``~$x`` (office locks),
    ``x.tmp`` / ``x.part``.
    """
    if not name:
        return True
    return (name.startswith((".", "~"))
            or name.endswith("~")
            or (name.startswith("#") and name.endswith("#"))
            or name.lower().endswith(_TEMP_SUFFIXES)
            or name == "4913")


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
    return {"root": root, "portfolio_title": settings.title, "version": __version__,
            "csp": CSP, "live": live}


def input_hash(folder: Path, extra: str) -> str:
    """A content hash of every file of the project folder plus *extra* (tool, templates).

    Hidden files and the temporary, backup and lock files editors leave beside the real ones
    are not inputs."""
    h = hashlib.sha256(extra.encode())
    for p in sorted(folder.rglob("*")):
        if p.is_file() and not is_ignored(p.name):
            h.update(p.relative_to(folder).as_posix().encode())
            with open(p, "rb") as fh:
                h.update(hashlib.file_digest(fh, "sha256").digest())
    return h.hexdigest()


