"""Typed reading of a metadata table's values, every wrong value one problem.

:class:`Checker` collects the problems of one file; :class:`Reader` hands out a table's values
by kind (text, choice, number, date, period ...), recording a problem and returning a default
when a value is wrong, so that validation goes on and reports every problem of a file at once.
"""

from __future__ import annotations

import datetime as dt
import difflib
from pathlib import Path
from typing import Any

from ..errors import Problem, rel
from .locate import Locator
from .model import Period


class Checker:
    """Collects problems for one metadata file."""

    def __init__(self, path: Path, root: Path | None, text: str):
        self.path = path
        self.shown = rel(path, root)
        self.loc = Locator(text)
        self.problems: list[Problem] = []

    def add(self, where: str, message: str, line: int | None = None, severity: str = "error"):
        self.problems.append(Problem(self.shown, line, where, message, severity))

    def unknown_keys(
        self, data: dict, allowed: tuple[str, ...], prefix: str, table=None, index=None, sub=None
    ):
        for key in data:
            if key not in allowed:
                guess = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
                hint = (
                    f"; did you mean '{guess[0]}'?"
                    if guess
                    else f"; allowed keys are: {', '.join(allowed)}"
                )
                self.add(
                    f"{prefix}{key}", f"unknown key{hint}", self.loc.line_of(key, table, index, sub)
                )


def is_text_encoding(name: str) -> bool:
    """Whether Python decodes bytes to text under this name. Codecs from bytes to bytes
    (base64, zlib) or text to text (rot13) are known to Python but are no text encoding:
    decoding a file with them fails, so they are refused here with the unknown names."""
    try:
        b"    ".decode(name)  # not empty: Python returns "" for empty bytes before any check
    except LookupError:
        return False
    except (UnicodeError, ValueError):
        return True  # a text encoding these four bytes are no valid text of (UTF-32)
    return True


def type_name(v: Any) -> str:
    return {
        str: "text",
        int: "integer",
        float: "number",
        bool: "true/false",
        list: "list",
        dict: "table",
        dt.date: "date",
        dt.datetime: "date-time",
    }.get(type(v), type(v).__name__)


def as_date(v: Any) -> dt.date | None:
    if isinstance(v, dt.datetime):
        return v.date()
    if isinstance(v, dt.date):
        return v
    if isinstance(v, str):
        try:
            return dt.date.fromisoformat(v.strip())
        except ValueError:
            return None
    return None


class Reader:
    """Typed accessors that record a problem and return a default on a wrong value."""

    def __init__(self, ck: Checker, data: dict, prefix: str, table=None, index=None, sub=None):
        self.ck, self.data, self.prefix = ck, data, prefix
        self.table, self.index, self.sub = table, index, sub

    def _line(self, key):
        return self.ck.loc.line_of(key, self.table, self.index, self.sub)

    def _bad(self, key, expected, got):
        self.ck.add(
            f"{self.prefix}{key}",
            f"expected {expected}, got {type_name(got)} {got!r}",
            self._line(key),
        )

    def missing(self, key, what):
        self.ck.add(
            f"{self.prefix}{key}",
            f"required key is missing: {what}",
            self.ck.loc.line_of(None, self.table, self.index, self.sub),
        )

    def text(self, key, required=False, default=None, what="text"):
        if key not in self.data:
            if required:
                self.missing(key, what)
            return default
        v = self.data[key]
        if not isinstance(v, str) or (required and not v.strip()):
            self._bad(key, "non-empty text" if required else "text", v)
            return default
        return v.strip()

    def choice(self, key, options, default=None, required=False):
        if key not in self.data:
            if required:
                self.missing(key, "one of " + ", ".join(options))
            return default
        v = self.data[key]
        if not isinstance(v, str) or v not in options:
            guess = difflib.get_close_matches(str(v), options, n=1, cutoff=0.5)
            hint = f"; did you mean '{guess[0]}'?" if guess else ""
            self.ck.add(
                f"{self.prefix}{key}",
                f"expected one of {', '.join(options)}, got {v!r}{hint}",
                self._line(key),
            )
            return default
        return v

    def number(self, key):
        if key not in self.data:
            return None
        v = self.data[key]
        if isinstance(v, bool) or not isinstance(v, int | float):
            self._bad(key, "a number", v)
            return None
        if v != v or v in (float("inf"), float("-inf")):
            self._bad(key, "a finite number", v)
            return None
        return float(v)

    def integer(self, key, minimum=None):
        if key not in self.data:
            return None
        v = self.data[key]
        if isinstance(v, bool) or not isinstance(v, int):
            self._bad(key, "a whole number", v)
            return None
        if minimum is not None and v < minimum:
            self.ck.add(
                f"{self.prefix}{key}", f"must be at least {minimum}, got {v}", self._line(key)
            )
            return None
        return v

    def boolean(self, key, default=False):
        if key not in self.data:
            return default
        v = self.data[key]
        if not isinstance(v, bool):
            self._bad(key, "true or false", v)
            return default
        return v

    def date(self, key, v=None):
        v = self.data.get(key) if v is None else v
        d = as_date(v)
        if d is None:
            self._bad(key, "a date like 2026-03-31", v)
        return d

    def period(self, key):
        if key not in self.data:
            return None
        v = self.data[key]
        if not isinstance(v, list) or not 1 <= len(v) <= 2:
            self._bad(key, "a list [start] or [start, end] of dates", v)
            return None
        dates = [as_date(x) for x in v]
        if any(d is None for d in dates):
            self._bad(key, "a list [start] or [start, end] of dates like 2026-03-31", v)
            return None
        if len(dates) == 2 and dates[1] < dates[0]:
            self.ck.add(
                f"{self.prefix}{key}",
                f"the end {dates[1]} is before the start {dates[0]}; write [start, end]",
                self._line(key),
            )
            return None
        return Period(dates[0], dates[1] if len(dates) == 2 else None)

    def table_(self, key):
        if key not in self.data:
            return None
        v = self.data[key]
        if not isinstance(v, dict):
            self._bad(key, "a table", v)
            return None
        return v
