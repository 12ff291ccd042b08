"""Numbers read from text cells: plain decimals in bulk (from pyarrow's buffers or by numpy),
and every other cell one by one, with decimal commas, thousands marks and the words a
spreadsheet writes for a missing value; each cell that is no number, blank, infinite, not
whole or negative where a count is asked for is named with its line."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .. import columns
from ..config import MetricSpec
from .cells import _text
from .problems import _Rows

MAX_MAGNITUDE = 1e100
_NUMBER_RE = re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$")
_INFINITY_RE = re.compile(r"^[+-]?inf(?:inity)?$", re.IGNORECASE)
_THOUSANDS_RE = re.compile(r"^[+-]?\d{1,3}(?:\.\d{3})+(?:,\d*)?$")
_MISSING_WORDS = {"nan", "na", "n/a", "#n/a", "null", "none", "-", "--", "?", "missing"}


def _to_float(cell: str, decimal: str) -> float | None:
    """A cell as a float (inf allowed, reported by the caller), or None when it is no number."""
    if decimal == ",":
        if _THOUSANDS_RE.match(cell):
            cell = cell.replace(".", "")
        elif "." in cell:
            return None
        cell = cell.replace(",", ".")
    if _NUMBER_RE.match(cell):
        return float(cell)
    if _INFINITY_RE.match(cell):
        return float(cell)
    return None


def _why_not_number(cell: str, what: str, decimal: str) -> str:
    text = f"{cell!r} is not {what}"
    if cell.lower() in _MISSING_WORDS:
        return text + "; leave the cell blank for a missing value"
    if decimal == "." and re.match(r"^[+-]?\d*,\d+$", cell):
        return text + '; for decimal commas set [metric.csv] decimal = "," and delimiter = ";"'
    if decimal == "," and "." in cell:
        return text + '; the metric declares decimal commas (decimal = ","): write 1,5 not 1.5'
    return text


_DECIMAL_TEXT = re.compile(r"[0-9.eE+-]*")


def _plain_decimals(cells: np.ndarray) -> np.ndarray | None:
    """float() of every cell when the column's text holds only digits, points, signs and
    exponent letters and every cell is a number (what _NUMBER_RE accepts), else None. Python's
    float() is correctly rounded (pandas' parse can be one unit in the last place off on a cell
    with a leading "+"); numpy calls it in one loop."""
    if cells.dtype != object or not _DECIMAL_TEXT.fullmatch("".join(cells.tolist())):
        return None
    try:
        return cells.astype(float)
    except (ValueError, TypeError):  # a blank cell, or a stray sign or letter
        return None


def _numbers(
    df: pd.DataFrame,
    col: str,
    spec: MetricSpec,
    out: _Rows,
    *,
    integer=False,
    minimum: float | None = None,
    what="a number",
) -> pd.Series:
    """The column's cells as floats (NaN where a cell is blank or refused), each problem added
    to *out* with its lines: no number, infinite or too large, blank (a warning), not whole
    where *integer*, below *minimum*."""
    s = df[col]
    dec = spec.csv.decimal
    quick = None
    if dec == ".":
        quick, s = _quick_numbers(s)
        if _all_fine(quick, integer, minimum):
            return pd.Series(quick, index=df.index)
    s = _text(s)
    blank = (s == "").to_numpy()
    num = _careful_numbers(s, quick, blank, col, what, dec, out)
    # Beyond 1e100 no measurement is meant, and squares of such values overflow the statistics.
    nonfinite = np.abs(num.to_numpy()) > MAX_MAGNITUDE
    out.rows(
        list(df.index[nonfinite]),
        f"column '{col}'",
        "the value is infinite or too large "
        f"(over {MAX_MAGNITUDE:g}); write a finite number or leave the cell blank",
    )
    num = num.where(~nonfinite)
    out.rows(
        list(df.index[blank]),
        f"column '{col}'",
        "blank cell; the row is left out",
        severity="warning",
    )
    if integer:
        frac = num.notna() & (num != np.floor(num))
        out.rows(
            list(df.index[frac]),
            f"column '{col}'",
            f"expected a whole number, got {s[frac].iloc[0]!r}" if frac.any() else "",
        )
    if minimum is not None:
        low = num.notna() & (num < minimum)
        out.rows(
            list(df.index[low]),
            f"column '{col}'",
            f"{num[low].iloc[0]:g} is below {minimum:g}; counts cannot be negative"
            if low.any()
            else "",
        )
    return num


def _quick_numbers(s: pd.Series) -> tuple[np.ndarray, pd.Series]:
    """(a column with decimal points parsed at once: from its bytes, by float() through numpy,
    or by pandas' parse, NaN where a cell is no plain number, to be read one by one; the
    column as stripped cells)."""
    quick = None
    if columns.is_arrow(s):
        quick = columns.plain_decimals(columns.arrow_of(s))  # read from its bytes
    s = _text(s)  # stripped cells
    if quick is None:
        quick = _plain_decimals(s.to_numpy())
    if quick is None:
        quick = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
        # pandas' parse can be one unit in the last place off on a cell with a leading
        # "+" (seen with pandas 3): such cells are read one by one below, by float()
        quick = np.where(s.str.startswith("+").to_numpy(dtype=bool), np.nan, quick)
    return quick, s


def _all_fine(quick: np.ndarray, integer: bool, minimum: float | None) -> bool:
    """The common column: every cell a plain finite number within the checks of _numbers.
    Then there is nothing to report and the quick parse is the answer."""
    return bool(
        np.isfinite(quick).all()
        and not (np.abs(quick) > MAX_MAGNITUDE).any()
        and (not integer or (quick == np.floor(quick)).all())
        and (minimum is None or (quick >= minimum).all())
    )


def _careful_numbers(
    s: pd.Series,
    quick: np.ndarray | None,
    blank: np.ndarray,
    col: str,
    what: str,
    dec: str,
    out: _Rows,
) -> pd.Series:
    """The stripped cells as floats: the quick parse where it gave a finite number, each other
    cell read by _to_float (once per distinct cell); the cells that are no number named."""
    num = pd.Series(np.nan, index=s.index, dtype=float)
    careful = ~blank
    if quick is not None:
        # pandas' parse stands for the plain numbers; only what it could not parse, or parsed
        # as nan or infinity (words like "NaN" and "inf"), is looked at cell by cell below.
        ok = ~blank & np.isfinite(quick)
        num[ok] = quick[ok]
        careful = ~blank & ~ok
    bad_mask = np.zeros(len(s), dtype=bool)
    if careful.any():
        cells = s[careful]
        table = {u: _to_float(u, dec) for u in pd.unique(cells)}
        vals = np.array([np.nan if table[c] is None else table[c] for c in cells], dtype=float)
        num[careful] = vals
        bad_mask[careful] = np.array([table[c] is None for c in cells], dtype=bool)
    out.rows(
        list(s.index[bad_mask]),
        f"column '{col}'",
        _why_not_number(s[bad_mask].iloc[0], what, dec) if bad_mask.any() else "",
    )
    return num
