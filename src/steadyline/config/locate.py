"""The line of a key in TOML text, for messages: tomllib gives no positions.

Kept apart from the reading of values: it works on the text alone, and every message of the
validator (``file:line: key: message``) takes its line from here.
"""

from __future__ import annotations

import re


class Locator:
    """Finds the line of a key in TOML text, for messages (tomllib gives no positions).

    A key is looked for only inside its own table: a ``[table]`` or the index-th
    ``[[table]]`` up to the next header that is not one of its sub-tables (``[table.sub]``), a
    sub-table up to the next header. A table written inline (``table = {...}``) or with dotted
    keys (``table.key = ...``, ``sub.key = ...``) is found on that line.
    """

    _HEADER = re.compile(r"^\s*\[")

    def __init__(self, text: str):
        self.lines = text.splitlines()

    def _table_start(self, table: str | None, index: int | None) -> int | None:
        """The header's index (0-based), or None when the file has no such header."""
        if table is None:
            return None
        pattern = re.compile(
            r"^\s*\[\[\s*" + re.escape(table) + r"\s*\]\]"
            if index is not None
            else r"^\s*\[\s*" + re.escape(table) + r"\s*\]"
        )
        seen = -1
        for i, line in enumerate(self.lines):
            if pattern.match(line):
                seen += 1
                if index is None or seen == index:
                    return i
        return None

    def _end(self, start: int, inner: str | None) -> int:
        """Where the table whose header is at *start* ends: the next header, not counting the
        sub-tables ``[inner.…]`` when *inner* is given."""
        own = re.compile(r"^\s*\[\[?\s*" + re.escape(inner) + r"\.") if inner else None
        for i in range(start + 1, len(self.lines)):
            line = self.lines[i]
            if self._HEADER.match(line) and not (own and own.match(line)):
                return i
        return len(self.lines)

    def _find(self, key: str, lo: int, hi: int, dotted: str | None = None) -> int | None:
        """The first line in [lo, hi) that sets *key* (or, with *dotted*, ``dotted.key``)."""
        name = r"\"?" + re.escape(key) + r"\"?"
        if dotted is not None:
            name = r"\"?" + re.escape(dotted) + r"\"?\s*\.\s*" + name
        kp = re.compile(r"^\s*" + name + r"\s*=")
        for i in range(lo, hi):
            if self._HEADER.match(self.lines[i]):
                continue
            if kp.match(self.lines[i]):
                return i
        return None

    def entry_line(
        self, key: str | None, table: str, index: int, sub: str, entry: int
    ) -> int | None:
        """The line of *key* in the entry-th table of the list *sub* of the index-th
        ``[[table]]``: written ``[[table.sub]]`` (the entry's header, or its key beneath it) or
        inline (``sub = [{...}, ...]``: the line where the entry's brace opens, else the line
        of ``sub``)."""
        start = self._table_start(table, index)
        if start is None:
            return self.line_of(sub, table, index)
        own = re.compile(r"^\s*\[\[?\s*" + re.escape(table) + r"\.")
        end = next(
            (
                i
                for i in range(start + 1, len(self.lines))
                if self._HEADER.match(self.lines[i]) and not own.match(self.lines[i])
            ),
            len(self.lines),
        )
        pat = re.compile(r"^\s*\[\[\s*" + re.escape(f"{table}.{sub}") + r"\s*\]\]")
        heads = [i for i in range(start + 1, end) if pat.match(self.lines[i])]
        if entry < len(heads):
            h = heads[entry]
            found = None if key is None else self._find(key, h + 1, self._end(h, None))
            return (found if found is not None else h) + 1
        at = self._find(sub, start + 1, self._end(start, None))
        if at is None:
            return start + 1
        braces = [i for i in range(at, end) if "{" in self.lines[i]]
        return (braces[entry] if entry < len(braces) else at) + 1

    def header_line(self, table: str) -> int | None:
        """The line of a plain ``[table]`` header, or None when there is none."""
        i = self._table_start(table, None)
        return None if i is None else i + 1

    def line_of(
        self,
        key: str | None,
        table: str | None = None,
        index: int | None = None,
        sub: str | None = None,
    ) -> int | None:
        top_end = self._end(-1, None)  # top-level keys stand before the first header
        if table is None:
            found = None if key is None else self._find(key, 0, top_end)
            return None if found is None else found + 1
        start = self._table_start(table, index)
        if start is None:  # inline or dotted at the top level: the line that names the table
            found = None if key is None else self._find(key, 0, top_end, dotted=table)
            if found is None:
                found = self._find(table, 0, top_end)
            if found is None:
                found = next(
                    (
                        i
                        for i in range(top_end)
                        if re.match(r"^\s*" + re.escape(table) + r"\s*\.", self.lines[i])
                    ),
                    None,
                )
            return None if found is None else found + 1
        lo, hi = start, self._end(start, table)
        if sub is not None:
            pat = re.compile(r"^\s*\[\s*" + re.escape(f"{table}.{sub}") + r"\s*\]")
            sub_start = next((i for i in range(lo + 1, hi) if pat.match(self.lines[i])), None)
            if sub_start is None:  # inline (sub = {...}) or dotted (sub.key = ...)
                own_end = self._end(start, None)
                found = None if key is None else self._find(key, lo, own_end, dotted=sub)
                if found is None:
                    found = self._find(sub, lo, own_end)
                return (found if found is not None else start) + 1
            lo, hi = sub_start, self._end(sub_start, None)
        if key is None:
            return lo + 1
        found = self._find(key, lo, hi if sub is not None else self._end(lo, None))
        return (found if found is not None else lo) + 1


# ----------------------------------------------------------------------------- validation
