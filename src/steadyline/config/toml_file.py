"""Opening a metadata file: where it may lie, whether it can be read, its TOML.

Every path a metadata file names is held inside its folder here (links resolved), and a file
that cannot be read is said so in words; nothing but a regular file is ever opened.
"""

from __future__ import annotations

import os
import re
import tomllib
from pathlib import Path

from .. import files
from ..errors import Problem, rel


def read_toml(path: Path, root: Path | None) -> tuple[dict | None, str, list[Problem]]:
    """The file's TOML, its text and its problem (unreadable, not UTF-8, TOML syntax with its
    line): the data None when there is one."""
    shown = rel(path, root)
    try:
        raw = files.read_bytes(path)  # never opens anything but a regular file
    except files.Unreadable as e:
        return None, "", [Problem(shown, None, "", str(e))]
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        bad_line = raw[: e.start].count(b"\n") + 1
        return (
            None,
            "",
            [Problem(shown, bad_line, "", "the file is not UTF-8 text; save it as UTF-8")],
        )
    try:
        return tomllib.loads(text), text, []
    except tomllib.TOMLDecodeError as e:
        msg = str(e)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", msg)
        col = f" column {m.group(2)}" if m else ""
        return (
            None,
            text,
            [
                Problem(
                    shown,
                    line,
                    "",
                    f"TOML syntax error at{col}: {msg}; see the project format in the README",
                )
            ],
        )


OUTSIDE_PORTFOLIO = "nothing outside the projects folder is read"
OUTSIDE_PROJECT = "a project reads only files inside its own folder"


def outside(name: str, path: Path, where: str, rule: str, advice: str) -> str:
    """The message for *path*, a link whose real path lies outside *where*."""
    target = os.readlink(path) if os.path.islink(path) else os.path.realpath(path)
    return f"{name} is a link to {target!r}, outside the {where}; {rule}: {advice}"


def fault(path: Path) -> str | None:
    """What keeps *path* from being read as a file ("this is a named pipe (FIFO), not a
    regular file", "cannot read the file: Permission denied"), None when it can be read, ""
    when nothing is there. Opens nothing but a regular file, and reads nothing."""
    if not files.exists(path):
        return ""
    return files.readable_fault(path)


def sentence(subject: str, why: str) -> str:
    """A fault of :func:`fault` said of *subject*: "the notes file 'n.md' is a socket, not a
    regular file", "cannot read the notes file 'n.md': Permission denied"."""
    if why.startswith("this is "):
        return f"{subject} is {why.removeprefix('this is ')}"
    return why.replace("the file", subject, 1)


def file_fault(path: Path, named: str) -> str | None:
    """What keeps *path* (named *named* in project.toml) from being a data file, in words;
    None for a regular file. Opens nothing: whether it can be read is found when it is read,
    and said of the file itself."""
    try:
        why = files.fault(path)
    except FileNotFoundError:
        return f"the file {named!r} does not exist"
    except OSError as e:
        return f"cannot look at {named!r}: {e.strerror}"
    return None if why is None else f"{named!r} is {why}"
