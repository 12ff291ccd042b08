"""What may be the output folder, and what is said when the machine will not let us write it.

A build replaces the output folder as a whole (the staging folder is swapped in and the old
folder deleted), so the output must be something that is ours to replace: absent, an empty
folder, or a site steadyline published itself. A published site is recognised by its manifest,
``.steadyline-manifest.json``: every build that writes puts one in, and sites published by
earlier versions already carry it, so they are recognised too. Everything else is refused
before anything is written: a file, a folder of other files, the projects folder or a folder
inside or around it, the working directory, the home folder, a file-system root or mount
point, or a folder around any of them.

Faults of the machine (disk full, read-only file system, permission denied, a mount point
that cannot be swapped) become one line naming the path and the cause instead of an internal
error; the build removes its staging folder as it does for any failure, so the published site
is left as it was.
"""

from __future__ import annotations

import errno
import os
import stat
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

import orjson

from ..errors import BuildError, _visible

MARKER = ".steadyline-manifest.json"
# A manifest larger than this is not read to decide whether the folder is a site: the manifest
# of a portfolio of thousands of projects is a few megabytes.
_MARKER_MAX_BYTES = 256 * 1024 * 1024

_ADVICE = "choose an absent or empty folder, or a site steadyline published"


def _refuse(out: Path, why: str, advice: str = _ADVICE) -> BuildError:
    # a path may hold characters that would move or retitle the terminal: shown as escapes
    return BuildError(_visible(f"{out}: refused as output: {why}; {advice}"))


def _inside(path: str, folder: str) -> bool:
    """Whether *path* lies strictly inside *folder* (both resolved, absolute)."""
    return Path(folder) in Path(path).parents


def is_site(folder: str | os.PathLike) -> bool:
    """Whether *folder* holds a site steadyline published: its manifest is a regular file
    holding a JSON object with the tool's version and the projects published (the two keys
    every version has written)."""
    path = os.path.join(folder, MARKER)
    try:
        st = os.lstat(path)
        if not stat.S_ISREG(st.st_mode) or st.st_size > _MARKER_MAX_BYTES:
            return False
        with open(path, "rb") as fh:
            data = orjson.loads(fh.read())
    except (OSError, orjson.JSONDecodeError):
        return False
    return (
        isinstance(data, dict)
        and isinstance(data.get("version"), str)
        and isinstance(data.get("projects"), dict)
    )


def _home() -> str | None:
    home = os.path.expanduser("~")
    return os.path.realpath(home) if os.path.isabs(home) else None


def check_output(out: Path, projects: Path) -> Path:
    """The folder to publish into for ``--out`` *out*, or a :class:`BuildError` saying in one
    line why *out* is refused. Reads only; writes nothing.

    A symbolic link is followed: the site goes where it points (the swap would otherwise
    replace the link itself and leave the site it points to stale), and the rule applies to
    the folder it points to. The path returned is *out* itself unless *out* is a link.
    """
    if os.path.islink(out) and not os.path.exists(out):
        raise _refuse(
            out,
            f"it is a symbolic link to nothing ({os.readlink(out)})",
            "remove the link or point it at a folder",
        )
    real = os.path.realpath(out)
    if real == os.path.dirname(real):
        raise _refuse(out, "it is a file-system root", "choose a folder inside it")
    if os.path.ismount(real):
        raise _refuse(
            out,
            "it is a mount point (the root of a file system), which cannot be "
            "swapped for a new site",
            "choose a folder inside it",
        )
    places = [(os.path.realpath(projects), "the projects folder")]
    try:
        places.append((os.path.realpath(os.getcwd()), "the working directory"))
    except OSError:  # the working directory was deleted: nothing there to protect
        pass
    home = _home()
    if home is not None:
        places.append((home, "the home folder"))
    for place, name in places:
        if real == place:
            raise _refuse(out, f"it is {name}")
    if _inside(real, places[0][0]):
        raise _refuse(out, "it is inside the projects folder", "choose a folder outside it")
    for place, name in places:
        if _inside(place, real):
            raise _refuse(out, f"it contains {name}")
    if os.path.lexists(real):
        if not os.path.isdir(real):
            raise _refuse(out, "it is a file, not a folder")
        if os.listdir(real) and not is_site(real):
            raise _refuse(
                out, f"it is a folder of other files (no steadyline site marker {MARKER})"
            )
    return Path(real) if os.path.islink(out) else out


# errno -> (the cause in words, what to do)
_FAULTS = {
    errno.ENOSPC: ("disk full", "free some space and build again"),
    errno.EDQUOT: ("disk quota exceeded", "free some space or raise the quota and build again"),
    errno.EROFS: ("read-only file system", "choose an output on a writable disk"),
    errno.EACCES: (
        "permission denied",
        "the output and the folder holding it must be writable by you",
    ),
    errno.EPERM: (
        "permission denied",
        "the output and the folder holding it must be writable by you",
    ),
    errno.EXDEV: (
        "output on another file system than the folder holding it",
        "choose a folder inside that file system",
    ),
    errno.EBUSY: ("output busy or a mount point", "choose a folder inside the mount point"),
    errno.EIO: (
        "input/output error (a failing disk or network share)",
        "check the disk and build again",
    ),
}


def fault_line(e: OSError, out: Path) -> str | None:
    """One line for a fault of the machine met while building into *out*: the output, the
    cause, the path where it happened, what to do; None for any other error."""
    known = _FAULTS.get(e.errno) if e.errno is not None else None
    if known is None:
        return None
    cause, advice = known
    at = ""
    if e.filename is not None and os.fsdecode(e.filename) != os.fspath(out):
        at = f" at {os.fsdecode(e.filename)}"
    return _visible(f"{out}: not published: {cause}{at}; {advice}; the output was left as it was")


@contextmanager
def named_faults(out: Path) -> Iterator[None]:
    """Turn a fault of the machine (see :data:`_FAULTS`) into a :class:`BuildError` with
    :func:`fault_line`; other errors pass unchanged."""
    try:
        yield
    except OSError as e:
        line = fault_line(e, out)
        if line is None:
            raise
        raise BuildError(line) from e


__all__ = ["MARKER", "check_output", "fault_line", "is_site", "named_faults"]
