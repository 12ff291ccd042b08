"""The fast reader of the common CSV file once decoded: no quote marks, no blank lines, every
row complete. Then every record is one physical line, and splitting the text (or pandas' C
reader) gives the table the careful reader in :mod:`.reading` would give, in a fraction of the
time; anything else is left to the careful reader."""

from __future__ import annotations

import io
import re

import numpy as np
import pandas as pd

_BLANK_LINE = re.compile(r"\n[ \t\r]*\n|^[ \t\r]*\n")
# Whitespace str.strip() removes, besides the line ends the reader consumes.
_ASCII_SPACES = " \t\x0b\x0c\x1c\x1d\x1e\x1f"


def _awkward(text: str) -> bool:
    """Whether the text has quote marks, blank lines (empty or holding only spaces, tabs and
    carriage returns; the first line included) or lone carriage returns: what makes the plain
    reader unsafe. Checked with substring tests first, since a regular-expression scan of a
    large file is slow (tests/test_fast_paths.py holds it equal to the full expression)."""
    if '"' in text:
        return True
    if "\r" in text and text.count("\r") != text.count("\r\n"):
        return True
    if "\n\n" in text or "\n\r\n" in text or text.startswith(("\n", "\r\n")):
        return True
    if " " in text or "\t" in text or "\r" in text:
        return _BLANK_LINE.search(text) is not None
    return False


def _complete_rows(text: str, delim: str, width: int) -> bool:
    """Every line holds exactly width - 1 delimiters (the reader pads short rows silently)."""
    if len(delim) != 1 or ord(delim) > 127:
        return False
    b = np.frombuffer(text.encode("utf-8"), dtype=np.uint8)
    ends = np.flatnonzero(b == 10)
    if b.size and b[-1] != 10:
        ends = np.concatenate([ends, [b.size]])
    line_of = np.searchsorted(ends, np.flatnonzero(b == ord(delim)))
    per_line = np.bincount(line_of, minlength=ends.size)
    return per_line.size == ends.size and bool((per_line == width - 1).all())


_SPLIT_DELIMITERS = (",", ";", "|", "\t")
# Larger texts go through pandas' reader: splitting them whole holds more memory at once (about
# 40 MiB more at its peak for a file of 10^6 rows, measured by benchmarks/run.py).
_SPLIT_MAX_CHARS = 4_000_000


def _read_plain(text: str, delim: str) -> pd.DataFrame | None:
    """Fast path for the common file: no quote marks, no blank lines, every row complete.

    Then every record is one physical line and pandas' C reader gives the same table as the
    careful reader below, in a fraction of the time. Anything unusual returns None, and the
    careful reader takes over (and names the lines of any problem).
    """
    if _awkward(text):
        return None
    first = text.split("\n", 1)[0].rstrip("\r")
    header = [h.strip() for h in first.split(delim)]
    if "" in header or len(set(header)) != len(header):
        return None
    # every line complete (the same number of fields as the header): then no cell is missing
    if not _complete_rows(text, delim, len(header)):
        return None
    # cells are stripped, as the careful reader strips them, when there is anything to strip
    strip = not text.isascii() or any(c in text for c in _ASCII_SPACES)
    if delim not in _SPLIT_DELIMITERS or len(text) > _SPLIT_MAX_CHARS:
        try:
            df = pd.read_csv(
                io.StringIO(text),
                sep=delim,
                dtype=str,
                keep_default_na=False,
                engine="c",
                skip_blank_lines=False,
                header=0,
                names=header,
            )
        except (pd.errors.ParserError, ValueError):
            return None
        if len(df) == 0:
            return None
        if strip:
            for c in df.columns:
                df[c] = df[c].str.strip()
        df.index = np.arange(2, len(df) + 2)  # physical line numbers (header = line 1)
        return df
    # No quote marks and every line complete: the cells are the text split at line ends and
    # delimiters (quicker than pandas' reader, which gives the same table).
    body = (text.replace("\r\n", "\n") if "\r" in text else text).partition("\n")[2]
    if body.endswith("\n"):
        body = body[:-1]
    if not body:
        return None
    cells = body.replace("\n", delim).split(delim)
    if strip:
        cells = [c.strip() for c in cells]
    width = len(header)
    grid = np.array(cells, dtype=object).reshape(-1, width)
    return pd.DataFrame(
        {h: grid[:, j] for j, h in enumerate(header)}, index=np.arange(2, len(grid) + 2), dtype=str
    )
