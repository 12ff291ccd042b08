"""The pure parts of `steadyline watch`: which changed paths matter and to which projects, the
debouncer that gathers a burst of file events into one batch, and the lines a rebuild prints.

Kept apart from the session (``steadyline.watch``: threads, timers, the server and the build) so
that this logic is tested with plain values and no waiting: the debouncer is given the time.
One editor save gives several raw events within a few milliseconds (an atomic save shows only
as a move onto the file); a quiet period of 0.1 s with a 3 s cap turns each burst into one
rebuild (a burst cut in two would cost a second rebuild, never a wrong page: each build reads
the files as they are).
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from pathlib import Path

from .errors import Problem
from .files import is_ignored

QUIET_S = 0.1
CAP_S = 3.0
PORTFOLIO_FILE = "portfolio.toml"


def _parts_under(path: str | os.PathLike, root: str | os.PathLike) -> tuple[str, ...] | None:
    """The components of *path* below *root*, or None when it is not inside it."""
    rel = os.path.relpath(os.path.abspath(path), os.path.abspath(root))
    if rel == os.curdir:
        return ()
    if rel == os.pardir or rel.startswith(os.pardir + os.sep) or os.path.isabs(rel):
        return None
    return tuple(Path(rel).parts)


def relevant(path: str | os.PathLike, root: str | os.PathLike) -> bool:
    """Whether a change at *path* can matter to the site built from portfolio folder *root*.

    Inside a project folder: any file that is not hidden or temporary (a project's inputs are all
    its files). At the top: portfolio.toml only. Folders whose name starts with "." or "_" are
    not projects (see ``config.discover``) and are ignored like hidden files.
    """
    parts = _parts_under(path, root)
    if not parts:
        return False
    if any(is_ignored(p) for p in parts) or parts[0].startswith("_"):
        return False
    return True


def changed_slugs(paths: Iterable[str | os.PathLike], root: str | os.PathLike) -> set[str] | None:
    """The project slugs touched by *paths*; None when every project must be rebuilt.

    The slug is the first path component under *root*. A change to ``portfolio.toml`` (the
    settings every project is built with) returns None. Paths that are outside *root*, hidden
    or temporary are left out, so the result may be empty (nothing to rebuild). A top-level
    name is returned as it is: it may be a project folder that was created, renamed or deleted,
    or a loose file no project reads; the caller tells them apart against the file system
    (see :func:`known_slugs`).
    """
    slugs: set[str] = set()
    for path in paths:
        if not relevant(path, root):
            continue
        parts = _parts_under(path, root)
        assert parts  # relevant() checked it
        if parts == (PORTFOLIO_FILE,):
            return None
        slugs.add(parts[0])
    return slugs


def known_slugs(slugs: set[str], root: Path, out: Path) -> set[str]:
    """The *slugs* that are project folders now, or were published before (deleted ones)."""
    return {s for s in slugs if (root / s).is_dir() or (out / "projects" / s).is_dir()}


class Debouncer:
    """Gathers events into batches: a batch is due after *quiet* seconds without an event, or
    *cap* seconds after its first event, whichever comes first.

    Pure: the caller passes the time (``time.monotonic()`` in use, plain numbers in tests).
    """

    def __init__(self, quiet: float = QUIET_S, cap: float = CAP_S):
        if quiet < 0 or cap < quiet:
            raise ValueError("need 0 <= quiet <= cap")
        self.quiet = quiet
        self.cap = cap
        self._items: set = set()
        self._first: float | None = None
        self._last: float | None = None

    @property
    def pending(self) -> bool:
        return self._first is not None

    def add(self, items: Iterable, now: float) -> None:
        """Record the items of one event at time *now* (an empty event is no event)."""
        items = set(items)
        if not items:
            return
        self._items |= items
        if self._first is None:
            self._first = now
        self._last = now

    def due_in(self, now: float) -> float | None:
        """Seconds until the pending batch is due (0 when due now); None when nothing waits."""
        if self._first is None or self._last is None:
            return None
        deadline = min(self._last + self.quiet, self._first + self.cap)
        return max(0.0, deadline - now)

    def take(self, now: float) -> set | None:
        """The batch when it is due (and start a new one), else None."""
        wait = self.due_in(now)
        if wait is None or wait > 0:
            return None
        items, self._items = self._items, set()
        self._first = self._last = None
        return items


def problem_lines(problems: Iterable[Problem], slugs: set[str] | None = None) -> list[str]:
    """``path:line: message`` lines, sorted and without repeats; only those of *slugs* when
    given (a problem's path starts with its project's folder name)."""
    seen: set[str] = set()
    lines = []
    for p in sorted(problems, key=lambda p: (p.path, p.line or 0, p.where, p.message)):
        if slugs is not None and p.path.split("/", 1)[0] not in slugs:
            continue
        line = p.format()
        if line not in seen:
            seen.add(line)
            lines.append(line)
    return lines


def rebuild_line(report, slugs: set[str] | None, seconds: float) -> str:
    """One line that sums up a rebuild, e.g. "rebuilt spoke-tension in 0.42 s".

    *slugs* are the projects asked for (None: all); one asked for that the build neither built
    nor reused is no longer there (its folder was deleted or renamed).
    """
    rebuilt = sorted(set(report.built) | (set(report.broken) - set(report.reused)))
    gone = sorted(set(slugs or ()) - set(rebuilt) - set(report.reused))
    broken = sorted(set(report.broken) & set(rebuilt))
    took = f"in {seconds:.2f} s"
    if not rebuilt and not gone:
        return f"no change ({took})"
    parts = []
    if rebuilt:
        parts.append(f"rebuilt {', '.join(rebuilt)} {took}")
    if gone:
        parts.append(f"removed {', '.join(gone)}" + ("" if rebuilt else f" {took}"))
    line = "; ".join(parts)
    if broken:
        n = sum(p.severity == "error" for p in report.problems if p.path.split("/", 1)[0] in broken)
        line += (
            f" - {', '.join(broken)}: {n} error{'s' if n != 1 else ''}, shown on "
            f"{'its page' if len(broken) == 1 else 'their pages'}"
        )
    return line
