"""The errors steadyline reports to its users.

Every problem with a user's input becomes a :class:`Problem`: one line naming the file, the
line / row / column / key where known, what is wrong and what to do. Problems are collected, not
raised one at a time, so a user sees every problem of a project in one run. A
:class:`ProjectError` carries the problems that stopped a project from building; the command line
is the one place that turns them into exit codes.
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from pathlib import Path

# Characters that could move the cursor, clear or retitle a terminal, or reorder the text of a
# line (bidirectional controls) when a message quotes a user's file: shown as escapes instead.
_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f\u2028\u2029\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def _visible(text: str) -> str:
    return _CONTROL.sub(
        lambda m: (
            f"\\x{ord(m.group()):02x}" if ord(m.group()) < 256 else f"\\u{ord(m.group()):04x}"
        ),
        text,
    )


@dataclass(frozen=True, order=True)
class Problem:
    """One problem found in the input.

    path:     the file (relative to the portfolio root when possible, for stable messages).
    line:     1-based line number in that file where known (CSV rows: the physical line; a
              workbook's or Parquet file's rows: the row number, see *sheet* and *rows*).
    where:    the key, column or row in words: "metric[2].spec_upper", "column 'value'".
    message:  what is wrong and what to do.
    severity: "error" stops the project building; "warning" is shown and the build goes on.
    sheet:    the workbook's sheet the problem is in (shown as ``data.xlsx:sheet 'Audit' row
              12:``), or None for a file that has no sheets.
    rows:     *line* counts rows, not lines of text (a Parquet file: ``data.parquet:row 12:``).
    """

    path: str
    line: int | None
    where: str
    message: str
    severity: str = "error"
    sheet: str | None = None
    rows: bool = False

    def format(self) -> str:
        if self.sheet is not None:
            loc = f"{self.path}:sheet {self.sheet!r}"
            if self.line is not None:
                loc += f" row {self.line}"
        elif self.rows and self.line is not None:
            loc = f"{self.path}:row {self.line}"
        else:
            loc = self.path if self.line is None else f"{self.path}:{self.line}"
        where = f" {self.where}:" if self.where else ""
        tag = "" if self.severity == "error" else f" {self.severity}:"
        return _visible(f"{loc}:{tag}{where} {self.message}")

    def as_dict(self) -> dict:
        """The fields as a manifest keeps them (``Problem(**d)`` gives the problem back); the
        workbook's and Parquet file's fields only when set, so that a CSV file's problems are
        kept as they always were."""
        d = dict(self.__dict__)
        if d["sheet"] is None:
            del d["sheet"]
        if not d["rows"]:
            del d["rows"]
        return d

    def __str__(self) -> str:  # pragma: no cover - convenience
        return self.format()


class SteadylineError(Exception):
    """Base of our own errors."""


class ProjectError(SteadylineError):
    """A project cannot be built; carries every problem found."""

    def __init__(self, problems: list[Problem]):
        self.problems = sorted(problems, key=_problem_key)
        super().__init__("\n".join(p.format() for p in self.problems))


class BuildError(SteadylineError):
    """The build as a whole failed (e.g. the output folder cannot be written)."""


def _problem_key(p: Problem):
    return (p.path, p.line or 0, p.where, p.message)


def rel(path: Path, root: Path | None) -> str:
    """A path as shown in messages: relative to *root* when inside it, with forward slashes.

    The path as named is tried first (a link is shown where it lies, not where it leads: a
    message about a link to outside, or a loop of links, names the link), then with links
    resolved (a resolved path under a linked projects folder)."""
    if root is None:
        return path.as_posix()
    shown = os.path.relpath(os.path.abspath(path), os.path.abspath(root))
    if shown != ".." and not shown.startswith(".." + os.sep):
        return Path(shown).as_posix()
    try:
        return path.resolve().relative_to(root.resolve()).as_posix()
    except (ValueError, OSError, RuntimeError):
        return path.as_posix()
