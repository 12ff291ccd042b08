"""What a build knows of its inputs before it decides whether any project must be rebuilt: a
content hash of each project folder (with file digests remembered between builds) and the last
commit dates of the files. Importing it pulls in none of the statistics stack, so that a
rebuild with nothing to do starts and ends quickly.
"""

from __future__ import annotations

import hashlib
import json
import os
import subprocess
import time
from pathlib import Path

from ..files import Unreadable, fault, inside, is_ignored, open_regular
from ..site.common import cache_dir


def input_hash(
    folder: Path, extra: str, known: DigestMemo | None = None, root: Path | None = None
) -> str:
    """A content hash of every file of the project folder plus *extra* (tool, templates).

    Hidden files and the temporary, backup and lock files editors leave beside the real ones
    are not inputs. *known* remembers file digests between builds (see :class:`DigestMemo`).

    Only regular files inside *root* (the projects folder; links resolved) are read. Anything
    else (a named pipe, socket or device, a dangling link or a loop of links, a file that
    cannot be read, a link to outside *root*) is never opened: it counts by what it is, in
    words, so that the hash still changes when it is mended, and no such file can stop the
    build (the project that uses one is told so when it is loaded)."""
    h = hashlib.sha256(extra.encode())
    if root is not None and not inside(folder, root):
        h.update(b"\0outside: " + os.fsencode(os.path.realpath(folder)))
        return h.hexdigest()
    for p in sorted(folder.rglob("*")):
        if is_ignored(p.name):
            continue
        try:
            why = fault(p)
        except FileNotFoundError:  # gone since it was listed
            continue
        except OSError as e:
            why = f"cannot read the file: {e.strerror}"
        if why == "a folder, not a file":
            continue
        name = p.relative_to(folder).as_posix().encode()
        if why is None and root is not None and not inside(p, root):
            why = f"a link to {os.readlink(p)!r}, outside the projects folder"
        if why is None:
            try:
                digest = known.digest(p) if known is not None else _file_digest(p)
            except Unreadable as e:
                why = str(e)
            else:
                h.update(name)
                h.update(digest)
                continue
        h.update(name)
        h.update(b"\0not read: " + why.encode())
    return h.hexdigest()


def _file_digest(path: Path) -> bytes:
    """sha256 of a regular file; Unreadable when it is anything else or cannot be read."""
    with open_regular(path) as fh:
        try:
            return hashlib.file_digest(fh, "sha256").digest()
        except OSError as e:
            raise Unreadable(f"cannot read the file: {e.strerror}") from None


class DigestMemo:
    """File digests remembered between builds, so that an unchanged file is not read again.

    A digest is reused only when the file's size, modification time and inode are those
    recorded (and its mode and owner, which decide whether it can be read at all), and the
    file was already more than two seconds old when it was recorded (any later write then gives
    it a newer modification time, even on file systems whose clock ticks coarsely). The memo lives in the user's cache folder, one file per projects folder,
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
        # who may read it: a file made unreadable since is read again (and found unreadable)
        access = [st.st_mode, st.st_uid, st.st_gid]
        rec = self.old.get(key)
        now = time.time_ns()
        if (
            isinstance(rec, list)
            and len(rec) == 8
            and rec[:3] == stamp
            and rec[5:] == access
            and rec[3] - stamp[1] > self.SETTLED_NS
        ):
            self.new[key] = rec
            return bytes.fromhex(rec[4])
        digest = _file_digest(path)
        self.new[key] = [*stamp, now, digest.hex(), *access]
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


def git_dates(folder: Path) -> dict[Path, str]:
    """The last commit date of every committed, unmodified file under *folder* (resolved path
    -> ISO date), from git; empty when git or a repository is not there."""
    try:
        top = subprocess.run(
            ["git", "rev-parse", "--show-toplevel"],
            cwd=folder,
            capture_output=True,
            text=True,
            timeout=10,
        )
        if top.returncode != 0:
            return {}
        log = subprocess.run(
            ["git", "log", "--format=>%cI", "--name-only", "--", "."],
            cwd=folder,
            capture_output=True,
            text=True,
            timeout=30,
        )
        status = subprocess.run(
            ["git", "status", "--porcelain", "--", "."],
            cwd=folder,
            capture_output=True,
            text=True,
            timeout=10,
        )
    except (OSError, subprocess.TimeoutExpired):
        return {}
    gitroot = Path(top.stdout.strip())
    dirty = {
        (gitroot / line[3:].strip()).resolve()
        for line in status.stdout.splitlines()
        if len(line) > 3
    }
    dates: dict[Path, str] = {}
    current = None
    for line in log.stdout.splitlines():
        if line.startswith(">"):
            current = line[1:]
        elif line.strip() and current:
            p = (gitroot / line.strip()).resolve()
            dates.setdefault(p, current)
    return {p: d for p, d in dates.items() if p not in dirty}
