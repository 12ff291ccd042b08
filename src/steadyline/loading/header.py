"""The columns a metric's keys name, and the check that the file's header holds each one, with
a guess at a misspelt name or at a delimiter other than the one declared."""

from __future__ import annotations

import difflib

from .. import formats
from ..config import MetricSpec
from .problems import _Rows


def _columns_of(spec: MetricSpec) -> dict[str, str | None]:
    """The metric's keys that name a column, and the column each names (or None)."""
    return {
        "time": spec.time,
        "value": spec.value,
        "subgroup": spec.subgroup,
        "count": spec.count,
        "size": spec.size,
        "category": spec.category,
    }


def _require_column(
    cols: list[str], key: str, col: str | None, spec: MetricSpec, out: _Rows
) -> bool:
    if col is None:
        return True
    if col in cols:
        return True
    guess = difflib.get_close_matches(col, cols, n=1, cutoff=0.6)
    if guess:
        hint = f"; did you mean '{guess[0]}'?"
    elif (
        len(cols) == 1
        and any(c in cols[0] for c in ";,\t|")
        and formats.data_format(spec.file_rel) == formats.CSV
    ):
        sep = next(c for c in ";\t|," if c in cols[0])
        hint = (
            f"; the header was read as one column {cols[0]!r}: the file seems separated by "
            f"{sep!r}; set [metric.csv] delimiter = {sep!r}"
        )
    else:
        hint = f"; the file has columns: {', '.join(cols)}"
    out.add(
        out.header_line, f"column '{col}'", f"not found (metric {spec.id!r}, key '{key}'){hint}"
    )
    return False
