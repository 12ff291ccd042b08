"""A DataFrame handed to the notebook -> the table of text cells a file becomes (numbers as
Python writes them, times in ISO 8601, missing values blank), rows numbered as the lines of a
CSV file with a header, so that the same checks and messages apply to it."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

from ..config import MetricSpec
from .problems import _Rows


def _frame_table(spec: MetricSpec, frame: pd.DataFrame) -> tuple[pd.DataFrame, _Rows]:
    """A DataFrame's cells as the text table a file becomes, with the collector of its
    problems; raises ProjectError when the frame cannot be read at all."""
    out = _Rows(spec)
    df = _frame_cells(frame, out)
    if df is None:
        out.raise_if_failed()
    assert df is not None
    return df, out


def _cell_text(v) -> str:
    """One cell of a DataFrame as a CSV file would hold it."""
    if v is None or v is pd.NaT or v is pd.NA:
        return ""
    if isinstance(v, bool | np.bool_):
        return "1" if v else "0"
    if isinstance(v, float | np.floating):
        return "" if v != v else repr(float(v))
    if isinstance(v, int | np.integer):
        return str(int(v))
    if isinstance(v, dt.datetime | dt.date):  # pandas' Timestamp too
        return v.isoformat()
    if isinstance(v, np.datetime64):
        return "" if np.isnat(v) else str(v)
    return str(v).strip()


def _frame_cells(frame: pd.DataFrame, out: _Rows) -> pd.DataFrame | None:
    """A DataFrame as the table of text cells :func:`_read_table` makes of a file."""
    if not isinstance(frame, pd.DataFrame):
        out.add(None, "", f"expected a pandas DataFrame, got {type(frame).__name__}")
        return None
    header = [str(c).strip() for c in frame.columns]
    dup = sorted({h for h in header if header.count(h) > 1})
    if dup:
        out.add(
            1,
            "header",
            f"the column name(s) {', '.join(repr(d) for d in dup)} "
            "appear more than once; give each column its own name",
        )
        return None
    if len(frame) == 0:
        out.add(None, "", "the DataFrame has no rows")
        return None
    cells = {h: [_cell_text(v) for v in frame.iloc[:, i].tolist()] for i, h in enumerate(header)}
    df = pd.DataFrame(cells, columns=header, dtype=str)
    df.index = np.arange(2, len(frame) + 2)  # as the lines of a CSV file with a header
    return df
