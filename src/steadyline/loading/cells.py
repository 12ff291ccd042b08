"""Cells as the checks read them: a column as stripped text (made from pyarrow's text only
where a column is not read in bulk), and a category or subgroup name as it is shown."""

from __future__ import annotations

import re

import pandas as pd

from .. import columns


def _text(s: pd.Series) -> pd.Series:
    """A column as stripped text cells: as it is, or made so from pyarrow's text (only a
    column that is not read in bulk from its bytes ever becomes Python strings)."""
    if not columns.is_arrow(s):
        return s  # cells come stripped from _read_table
    return pd.Series(columns.cells(columns.arrow_of(s)), index=s.index, dtype=str)


# Line and paragraph separators, tabs and other control characters in a label become one space:
# a category name is one line of text, and Vega's expression parser refuses a raw U+2028 in
# the explicit sort orders Vega-Lite compiles category names into.
_LABEL_SPACE = re.compile(r"[\s\x00-\x1f\x7f-\x9f\u2028\u2029]+")


def clean_label(text: str) -> str:
    """A category or subgroup name as shown: control characters and runs of space -> one space."""
    return _LABEL_SPACE.sub(" ", text).strip()
