"""A card's data table as cells: the CSV download (every row, each cell safe to open in a
spreadsheet: no formula) and the rows the page shows as HTML. Numbers are written in bulk where
a column allows it (the fast paths), and one by one where it does not, with the same text.
"""

from __future__ import annotations

import functools
import math
import operator
import re
from collections.abc import Sequence
from itertools import repeat

import numpy as np
import orjson
from markupsafe import Markup, escape

from ..charts import ChartSpec
from ..charts.base import ColumnTable
from ..memo import by_identity
from .figures_text import fmt

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def _number_cell(f: float) -> str:
    if f != f or f in (math.inf, -math.inf):
        return ""
    return str(int(f)) if f.is_integer() and abs(f) < 1e15 else repr(f)


def safe_cell(v) -> str:
    """A CSV cell that a spreadsheet will not run as a formula; numbers stay unchanged."""
    t = type(v)
    if t is float:  # the common case first: chart tables are mostly numbers
        return _number_cell(v)
    if v is None:
        return ""
    if t is bool or isinstance(v, np.bool_):
        return "true" if v else "false"
    if isinstance(v, int | float | np.integer | np.floating):
        return _number_cell(float(v))
    s = str(v)
    if s.startswith(_FORMULA_START):
        try:
            float(s)
            return s  # a plain signed number
        except ValueError:
            return "'" + s
    return s


_NEEDS_QUOTES = re.compile(r'[",\n\r]')


def _csv_field(text: str) -> str:
    return '"' + text.replace('"', '""') + '"' if _NEEDS_QUOTES.search(text) else text


_NUMBER_TYPES = frozenset((float, type(None)))
# Shorter number columns are written cell by cell: numpy's cost per call outweighs the work.
_BULK_MIN = 32


def _number_column(values: list) -> bool:
    """Whether a column holds only floats and Nones, and at least one float."""
    types = set(map(type, values))
    return float in types and types <= _NUMBER_TYPES


def _csv_numbers(values: list) -> list[str]:
    """:func:`_csv_cells` for a column of floats and Nones, the texts made in bulk: repr, with
    the whole numbers, missing and infinite values put right one by one. A column that repeats
    a few values (centre line, limits) has each distinct value converted once (0.0 and -0.0,
    merged by the set, are both written "0")."""
    distinct = set(values)
    if len(distinct) * 4 <= len(values):
        cell = dict(zip(distinct, _csv_cells(list(distinct)), strict=True))
        return list(map(cell.__getitem__, values))
    arr = np.array(values, dtype=float)  # None -> nan
    # orjson writes the same shortest digits as repr, in C; it places the decimal point or
    # writes the exponent differently where repr writes an exponent (below 1e-4 and from 1e16
    # on), so those cells, and any with an exponent, are put right with repr below.
    text = orjson.dumps(values).decode("ascii")
    out = text[1:-1].split(",")
    finite = np.isfinite(arr)
    mag = np.abs(np.where(finite, arr, 1.0))
    odd = set(np.flatnonzero(finite & (mag != 0) & ((mag < 1e-4) | (mag >= 1e16))).tolist())
    if "e" in text:  # rare outside the ranges above; looked for cell by cell only then
        odd.update(i for i, t in enumerate(out) if "e" in t)
    for i in odd:
        if values[i] is not None:
            out[i] = repr(values[i])
    for i in np.flatnonzero(~finite).tolist():
        out[i] = ""
    whole = finite & (np.floor(arr) == arr) & (np.abs(arr) < 1e15)
    for i in np.flatnonzero(whole).tolist():
        out[i] = str(int(values[i]))
    return out


def _csv_cells(values: list) -> list[str]:
    """One column of a CSV table: ``_csv_field(safe_cell(v))`` for each value, with the float
    case (most cells) written out inline: the same text, without two calls per cell."""
    if len(values) >= _BULK_MIN and _number_column(values):
        return _csv_numbers(values)
    if _plain_text_column(values):
        return values
    if type(values) is list and set(map(type, values)) == _STR_ONLY:
        # text cells (signals, labels), mostly repeated: each distinct text made safe once
        text = {v: _csv_field(safe_cell(v)) for v in set(values)}
        return list(map(text.__getitem__, values))
    out: list[str] = []
    add = out.append
    memo: dict[str, str] = {}
    for v in values:
        if type(v) is float:
            if v != v or v in _INFINITIES:
                add("")
            elif v.is_integer() and -1e15 < v < 1e15:
                add(str(int(v)))
            else:
                add(repr(v))
        elif type(v) is str:  # dates, periods, "yes"/"no", signals: mostly repeated
            t = memo.get(v)
            if t is None:
                t = memo[v] = _csv_field(safe_cell(v))
            add(t)
        else:
            add(_csv_field(safe_cell(v)))
    return out


_INFINITIES = (math.inf, -math.inf)
_STARTS_FORMULA = operator.methodcaller("startswith", _FORMULA_START)


def _plain_text_column(values) -> bool:
    """Whether every cell is text that goes into the CSV as it is (dates, period names): no
    formula start, nothing to quote. Checked in bulk instead of cell by cell; a tuple (the
    dates of a series, shared by its charts' tables) is checked once."""
    if type(values) is tuple:
        return _plain_text_tuple(values)
    return _plain_text_check(values)


@functools.lru_cache(maxsize=32)
def _plain_text_tuple(values: tuple) -> bool:
    return _plain_text_check(values)


def _plain_text_check(values) -> bool:
    if not values or set(map(type, values)) != {str}:
        return False
    joined = "\x00".join(values)
    return not _NEEDS_QUOTES.search(joined) and not any(map(_STARTS_FORMULA, values))


@by_identity(16)
def _csv_column(values: list) -> list[str]:
    """:func:`_csv_cells` of a table's column; a column shared by two tables is made once."""
    return _csv_cells(values)


@by_identity(16)
def _html_column(values: list, n: int) -> list[str]:
    """:func:`_html_cells` of a table's first ``n`` cells, made once for a shared column."""
    return _html_cells(values[:n])


def table_csv(chart: ChartSpec) -> bytes:
    """The chart's table as CSV (RFC 4180 quoting): numbers as they are, text cells made safe
    for spreadsheets."""
    cols = list(chart.columns)
    table = chart.table
    if isinstance(table, ColumnTable) and table.columns == tuple(cols):
        columns = [_csv_column(table.cols[c]) for c in cols]
    else:
        columns = [_csv_cells(list(map(dict.get, table, repeat(c)))) for c in cols]
    lines = [",".join(_csv_field(safe_cell(c)) for c in cols)]
    lines += map(",".join, zip(*columns, strict=True)) if cols else [""] * len(table)
    return ("\n".join(lines) + "\n").encode("utf-8")


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float | np.floating):
        return fmt(float(v), digits=6)
    return str(v)


def _html_numbers(values: list) -> list[str]:
    """:func:`_html_cells` for a column of floats and Nones: ``fmt(v, digits=6)`` made in bulk
    where it is plain ``.6g`` (no exponent: 0.001 <= |v| < 999999, or 0), one by one elsewhere."""
    arr = np.array(values, dtype=float)  # None -> nan
    out = list(map(format, arr.tolist(), repeat(".6g")))
    a = np.abs(arr)
    with np.errstate(invalid="ignore"):
        odd = ~np.isfinite(arr) | ((a < 1e-3) & (a != 0)) | (a >= 999999)
    for i in np.flatnonzero(odd).tolist():
        v = values[i]
        out[i] = "" if v is None else fmt(v, digits=6)
    return out


def _html_cells(values: list) -> list[str]:
    """One column of the page's data table as escaped cell texts (what autoescaped
    ``{{ _cell(v) }}`` writes); numbers, formatted by :func:`fmt`, need no escaping."""
    if len(values) >= _BULK_MIN and _number_column(values):
        return _html_numbers(values)
    if set(map(type, values)) == _STR_ONLY:  # dates, labels, periods, signals
        if _HTML_SPECIAL.search("".join(values)) is None:
            return values  # nothing to escape
        return [str(escape(v)) for v in values]
    out: list[str] = []
    add = out.append
    for v in values:
        if type(v) is float:
            add(fmt(v, digits=6))
        elif v is None:
            add("")
        else:
            add(escape(_cell(v)))
    return out


_STR_ONLY = frozenset((str,))
# the characters markupsafe.escape replaces
_HTML_SPECIAL = re.compile("[&<>\"']")


def table_body(table: Sequence[dict], columns, limit: int) -> Markup:
    """The rows of a data table as HTML, ``<tr><td>..</td></tr>`` per row, the first ``limit``
    rows only."""
    if isinstance(table, ColumnTable) and table.columns == tuple(columns):
        n = min(limit, len(table))
        cells = [_html_column(table.cols[c], n) for c in columns]
        shown = n
    else:
        rows = table[:limit]
        cells = [_html_cells([row.get(c) for row in rows]) for c in columns]
        shown = len(rows)
    if not cells:
        return Markup("<tr></tr>" * shown)
    return Markup(
        "".join(["<tr><td>" + "</td><td>".join(r) + "</td></tr>" for r in zip(*cells, strict=True)])
    )
