"""One cell of a workbook or Parquet file -> the text a CSV export would hold: a number as
Python writes it (a whole number without ".0", so that a category or subgroup stored as a
number reads as it is shown), a date or date-time in ISO 8601 (or in the metric's
``date_format``, when it gives one), a boolean as 1 or 0, an empty cell blank; a whole column
in bulk when it holds one kind of value."""

from __future__ import annotations

import datetime as dt
from collections import Counter
from decimal import Decimal
from typing import Literal

import numpy as np


def cell_text(v, date_format: str | None = None) -> str:
    """One cell of a workbook or Parquet file as a CSV file would hold it."""
    if v is None or type(v).__name__ in ("NaTType", "NAType"):  # pandas' missing values
        return ""
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, bool | np.bool_):
        return "1" if v else "0"
    if isinstance(v, float | np.floating):
        v = float(v)
        if v != v:
            return ""
        # A whole number is written without ".0" (as a spreadsheet shows it); beyond 2**53 a
        # float no longer holds every whole number, and repr keeps its exact value.
        return str(int(v)) if v.is_integer() and abs(v) < 2**53 else repr(v)
    if isinstance(v, int | np.integer):
        return str(int(v))
    if isinstance(v, Decimal):
        return str(v)
    if isinstance(v, dt.datetime | dt.date):  # pandas' Timestamp too
        if date_format:
            return v.strftime(date_format)
        return v.isoformat()
    return str(v).strip()


def column_text(column: list, date_format: str | None = None) -> list[str]:
    """:func:`cell_text` of every cell of a column, in bulk when the column holds one kind of
    value (the common case: a sheet's column of numbers or of dates; a 100,000-row column took
    a third of a second cell by cell)."""
    kinds = set(map(type, column))
    if kinds == {str}:
        return list(map(str.strip, column))
    if kinds == {float}:
        texts = np.array(list(map(repr, column)), dtype=object)
        a = np.array(column, dtype=float)
        whole = (a == np.floor(a)) & (np.abs(a) < 2**53)
        if whole.any():
            texts[whole] = a[whole].astype(np.int64).astype(str).astype(object)
        return texts.tolist()
    if not date_format and kinds and kinds <= {dt.datetime, dt.date}:
        # Naive dates and date-times (a workbook's date-time at midnight comes as a date),
        # written by numpy in one pass: ISO 8601 to the second, or to the microsecond when any
        # has a fraction of a second. A date at midnight reads the same as the date alone.
        if not any(getattr(v, "tzinfo", None) is not None for v in column):
            a = np.array(column, dtype="datetime64[us]")
            unit: Literal["s", "us"] = "s" if (a == a.astype("datetime64[s]")).all() else "us"
            return np.datetime_as_string(a, unit=unit).astype(object).tolist()
        return [v.isoformat() for v in column]
    return [cell_text(v, date_format) for v in column]


def _is_number(v) -> bool:
    return isinstance(v, int | float | np.integer | np.floating) and not isinstance(v, bool)


def _short(e: Exception) -> str:
    text = " ".join(str(e).split())
    return text[:120] + "…" if len(text) > 120 else text or type(e).__name__


def repeated_names(header: list[str]) -> str | None:
    """The fault of a header that names a column more than once (whatever the file's kind:
    CSV, workbook or Parquet), in words; None when every name is its own."""
    dup = sorted(name for name, k in Counter(header).items() if k > 1)
    if not dup:
        return None
    return (
        f"the column name(s) {', '.join(repr(d) for d in dup)} "
        "appear more than once; give each column its own name"
    )
