"""Reading a data file for ``steadyline start``: the reading options a CSV file seems to need,
what each column holds, by the build's own reader and parsers, and how its rows group (runs of
subgroups, rows per period).

The guesses rest on these profiles alone; reading them as a build does means that what start
calls a number or a date is what the build will read as one.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..config import CsvOptions, MetricSpec

# Subgroups: at least this many groups of 2 to 25 rows each, every group in one run of rows
# (20 to 25 subgroups are the usual minimum for trial limits: Montgomery, Introduction to
# Statistical Quality Control, §6.2; the size range is common practice).
_MIN_SUBGROUPS, _MAX_SUBGROUP = 20, 25
# A 0/1 column is rolled up into the shortest period whose median number of rows is at least
# this many (common practice: a p chart wants subgroups large enough for defectives to show).
MIN_ROWS_PER_PERIOD = 50


@dataclass
class Column:
    """What one column of the file holds, as the build would read it."""

    name: str
    kind: str  # "time", "number", "text"
    sorted: bool = False  # times: in ascending order down the file
    integer: bool = False
    nonnegative: bool = False
    flags: bool = False  # only 0 and 1
    distinct: int = 0
    unique: bool = False
    values: np.ndarray | None = None  # numbers (blanks left out), or times as datetime64
    cells: np.ndarray | None = None  # the cells as read, one per row


def reading_spec(path: Path, shown: str, csv: CsvOptions) -> MetricSpec:
    """A metric of the file, for the reader's functions (which read a metric's file)."""
    return MetricSpec(
        id="start",
        name="start",
        file=path,
        file_rel=shown,
        type="continuous",
        better="lower",
        csv=csv,
    )


def sniff(raw: bytes) -> tuple[CsvOptions, list[str]]:
    """The reading options the file seems to need, with a reason for each that is not the
    default: the encoding (a byte-order mark decides by itself when reading), the delimiter
    and the decimal mark."""
    from ..loading import _BOMS, _wide_guess

    why = []
    encoding = "utf-8"
    head = raw[:65536]
    bom = next((codec for mark, codec in _BOMS if raw.startswith(mark)), None)
    if bom is not None:
        reading = bom  # a byte-order mark decides when the file is read; nothing to declare
    elif b"\x00" in head and (guess := _wide_guess(raw)):
        encoding = reading = guess
        why.append(f"encoding: the file holds NUL bytes as {guess.upper()} text does")
    else:
        try:
            raw.decode("utf-8")
        except UnicodeDecodeError:
            encoding = "latin-1"
            why.append(
                "encoding: the file is not UTF-8 text; latin-1 is what older exports commonly use"
            )
        reading = encoding
    text = head.decode(reading, errors="replace").lstrip("\ufeff")
    lines = [ln for ln in text.splitlines() if ln.strip()][:20]
    if len(lines) > 1 and len(head) == 65536:
        lines = lines[:-1]  # the last line may be cut
    delimiter, best = ",", 0
    for d in (",", ";", "\t", "|"):
        counts = {ln.count(d) for ln in lines}
        if lines and len(counts) == 1 and (n := counts.pop()) > best:
            delimiter, best = d, n
    if delimiter != ",":
        why.append(f"delimiter: every line has the same number of {delimiter!r}")
    decimal = "."
    if delimiter != ",":
        cells = [c.strip().strip('"') for ln in lines[1:] for c in ln.split(delimiter)]
        if any(re.fullmatch(r"[+-]?\d+,\d+", c) for c in cells) and not any(
            re.fullmatch(r"[+-]?\d+\.\d+", c) for c in cells
        ):
            decimal = ","
            why.append("decimal: numbers are written with a decimal comma (0,5)")
    return CsvOptions(delimiter=delimiter, decimal=decimal, encoding=encoding), why


def profile(df: pd.DataFrame, spec: MetricSpec) -> list[Column]:
    """What each column holds, by the build's own number and date parsing: a column is a
    number column when every non-blank cell reads as a number, a time column when every
    non-blank cell reads as a date or date-time (and it is no number column)."""
    from ..loading import _numbers, _Rows, _times

    cols = []
    for name in df.columns:
        cells = df[name].to_numpy(dtype=object)
        filled = cells[cells != ""]
        if filled.size == 0:
            continue
        out = _Rows(spec)
        nums = _numbers(df, name, spec, out)
        if not out.failed:
            v = nums.to_numpy(dtype=float)
            v = v[~np.isnan(v)]
            whole = bool((v == np.floor(v)).all())
            uniq = np.unique(v)
            cols.append(
                Column(
                    name,
                    "number",
                    integer=whole,
                    nonnegative=bool((v >= 0).all()),
                    flags=whole and set(uniq.tolist()) <= {0.0, 1.0} and uniq.size == 2,
                    distinct=uniq.size,
                    unique=uniq.size == v.size,
                    values=v,
                    cells=cells,
                )
            )
            continue
        out = _Rows(spec)
        t = _times(df, name, spec, out)
        if not out.failed and t.notna().any():
            tv = t.dropna().to_numpy()
            cols.append(
                Column(
                    name,
                    "time",
                    sorted=bool((np.diff(tv) >= np.timedelta64(0)).all()),
                    values=tv,
                    cells=cells,
                )
            )
            continue
        distinct = len(pd.unique(filled))
        cols.append(
            Column(name, "text", distinct=distinct, unique=distinct == filled.size, cells=cells)
        )
    return cols


# ----------------------------------------------------------------------------- how the rows group


def _runs(cells: np.ndarray) -> np.ndarray | None:
    """The lengths of the runs of equal cells down the file, when every value has one run only
    (each group in one block of rows); None otherwise."""
    if cells.size == 0:
        return None
    change = np.flatnonzero(cells[1:] != cells[:-1]) + 1
    starts = np.concatenate([[0], change])
    if len(pd.unique(cells[starts])) != starts.size:
        return None
    return np.diff(np.concatenate([starts, [cells.size]]))


def subgroup_column(cols: list[Column], value: str) -> tuple[Column, int, float] | None:
    """The column naming subgroups: the one with the most groups of 2 to 25 rows, each in one
    block of rows, at least 20 of them."""
    best = None
    for c in cols:
        if c.name == value or c.kind == "time":
            continue
        if c.cells is None:
            continue
        runs = _runs(c.cells)
        if runs is None or runs.size < _MIN_SUBGROUPS:
            continue
        med = float(np.median(runs))
        if 2 <= med <= _MAX_SUBGROUP and (best is None or runs.size > best[1]):
            best = (c, int(runs.size), med)
    return best


def rollup_period(t: np.ndarray) -> tuple[str, float]:
    """The shortest period whose median number of rows is at least MIN_ROWS_PER_PERIOD (else a
    quarter), and that median."""
    from ..loading import period_start

    s = pd.Series(t)
    for period in ("day", "week", "month", "quarter"):
        counts = period_start(s, period).value_counts()
        med = float(counts.median())
        if med >= MIN_ROWS_PER_PERIOD:
            return period, med
    return "quarter", med
