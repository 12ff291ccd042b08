"""The light part of the site layer: what a build needs before it knows whether any project
must be rebuilt (hashing inputs, the index's page context). Importing it pulls in none of the
statistics stack, so that a rebuild with nothing to do starts and ends quickly.
"""

from __future__ import annotations

import hashlib
import json
import os
import subprocess
import time
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


def input_hash(folder: Path, extra: str, known: DigestMemo | None = None) -> str:
    """A content hash of every file of the project folder plus *extra* (tool, templates).

    Hidden files and the temporary, backup and lock files editors leave beside the real ones
    are not inputs. *known* remembers file digests between builds (see :class:`DigestMemo`)."""
    h = hashlib.sha256(extra.encode())
    for p in sorted(folder.rglob("*")):
        if p.is_file() and not is_ignored(p.name):
            h.update(p.relative_to(folder).as_posix().encode())
            h.update(known.digest(p) if known is not None else _file_digest(p))
    return h.hexdigest()


def _file_digest(path: Path) -> bytes:
    with open(path, "rb") as fh:
        return hashlib.file_digest(fh, "sha256").digest()


class DigestMemo:
    """File digests remembered between builds, so that an unchanged file is not read again.

    A digest is reused only when the file's size, modification time and inode are those
    recorded, and the file was already more than two seconds old when it was recorded (any
    later write then gives it a newer modification time, even on file systems whose clock
    ticks coarsely). The memo lives in the user's cache folder, one file per projects folder,
    never in the site: the site stays the same whatever the cache holds. A memo that cannot be
    read or written is simply not used.
    """

    SETTLED_NS = 2_000_000_000

    def __init__(self, path: Path | None):
        self.path = path
        self.old: dict = {}
        self.new: dict = {}
        if path is not None:
            try:
                data = json.loads(path.read_text(encoding="utf-8"))
                if isinstance(data, dict) and data.get("version") == 1:
                    self.old = data.get("files", {})
            except (OSError, ValueError):
                pass

    def digest(self, path: Path) -> bytes:
        key = os.fspath(path)
        try:
            st = path.stat()
        except OSError:
            return _file_digest(path)  # raises the same error a read would
        stamp = [st.st_size, st.st_mtime_ns, st.st_ino]
        rec = self.old.get(key)
        now = time.time_ns()
        if (isinstance(rec, list) and len(rec) == 5 and rec[:3] == stamp
                and rec[3] - stamp[1] > self.SETTLED_NS):
            self.new[key] = rec
            return bytes.fromhex(rec[4])
        digest = _file_digest(path)
        self.new[key] = [*stamp, now, digest.hex()]
        return digest

    def save(self) -> None:
        if self.path is None or self.new == self.old:
            return
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            tmp = self.path.with_name(f".{self.path.name}.{os.getpid()}.tmp")
            tmp.write_text(json.dumps({"version": 1, "files": self.new}), encoding="utf-8")
            os.replace(tmp, self.path)
        except OSError:
            pass


def digest_memo_for(projects_dir: Path) -> DigestMemo:
    """The digest memo of a projects folder, in the user's cache folder."""
    name = hashlib.sha256(os.fspath(projects_dir.resolve()).encode()).hexdigest()[:20]
    return DigestMemo(cache_dir() / f"input-digests-{name}.json")


def cache_dir() -> Path:
    """steadyline's folder in the user's cache ($XDG_CACHE_HOME, else ~/.cache)."""
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "steadyline"


def git_dates(folder: Path) -> dict[Path, str]:
    """The last commit date of every committed, unmodified file under *folder* (resolved path
    -> ISO date), from git; empty when git or a repository is not there."""
    try:
        top = subprocess.run(["git", "rev-parse", "--show-toplevel"], cwd=folder,
                             capture_output=True, text=True, timeout=10)
        if top.returncode != 0:
            return {}
        log = subprocess.run(["git", "log", "--format=>%cI", "--name-only", "--", "."],
                             cwd=folder, capture_output=True, text=True, timeout=30)
        status = subprocess.run(["git", "status", "--porcelain", "--", "."], cwd=folder,
                                capture_output=True, text=True, timeout=10)
    except (OSError, subprocess.TimeoutExpired):
        return {}
    gitroot = Path(top.stdout.strip())
    dirty = {(gitroot / line[3:].strip()).resolve()
             for line in status.stdout.splitlines() if len(line) > 3}
    dates: dict[Path, str] = {}
    current = None
    for line in log.stdout.splitlines():
        if line.startswith(">"):
            current = line[1:]
        elif line.strip() and current:
            p = (gitroot / line.strip()).resolve()
            dates.setdefault(p, current)
    return {p: d for p, d in dates.items() if p not in dirty}
