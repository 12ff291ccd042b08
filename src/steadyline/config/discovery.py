"""The projects folder: the metadata files' names, its project folders and its strays.

No TOML is read here: the build lists the projects (and warns of strays) before it reads any.
"""

from __future__ import annotations

from pathlib import Path

from .. import files
from ..errors import Problem, rel

PROJECT_FILE = "project.toml"
PORTFOLIO_FILE = "portfolio.toml"
NOTES_DEFAULT = "notes.md"


def discover(root: Path) -> list[Path]:
    """Project folders under the portfolio root: every sub-folder that is not hidden.

    A folder without project.toml is still listed so that the user is told about it, and so is
    a link to a folder outside the projects folder (it is refused when loaded). A folder named
    portfolio.toml is not a project: it is reported as a broken portfolio.toml.
    """
    if not root.is_dir():
        return []
    return sorted(
        p
        for p in root.iterdir()
        if p.is_dir() and p.name != PORTFOLIO_FILE and not p.name.startswith((".", "_"))
    )


def stray_entries(root: Path) -> list[Problem]:
    """Warnings for what lies directly in the projects folder, is neither a folder nor
    portfolio.toml, and cannot be read (a named pipe, socket or device, a dangling link or a
    loop of links, an unreadable file): no project uses it, so it costs none. Reads nothing,
    and opens nothing but regular files (to learn whether they can be read)."""
    if not root.is_dir():
        return []
    problems = []
    for p in sorted(root.iterdir()):
        if p.name.startswith((".", "_")) or p.name == PORTFOLIO_FILE or files.is_ignored(p.name):
            continue
        if p.is_dir() or not files.inside(p, root):
            continue
        why = files.readable_fault(p)
        if why is not None:
            problems.append(
                Problem(
                    rel(p, root),
                    None,
                    "",
                    f"{why}; no project uses it, so it is left alone",
                    "warning",
                )
            )
    return problems
