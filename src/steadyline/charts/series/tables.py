"""The data table of a control chart (plain or by period), column by column: the cells the
CSV download and the page's table are made from.
"""

from __future__ import annotations

import numpy as np

from ...memo import by_identity
from ...stats.results import ControlChart
from ..base.numbers import num_list
from ..base.types import ColumnTable
from .coded import _Coded, _pairs
from .shape import _secondary_stage

_SECONDARY_SHORT = {"moving-range": "mR", "range": "R", "stdev": "S"}


_NO_YES = np.array(["no", "yes"], dtype=object)

# The project page's control chart and the history page's staged one have most table columns in
# common: they are made once (the same list objects), so the CSV and HTML cells made from them
# are too (site.cards).


@by_identity(16)
def _signal_column(n: int, main: _Coded, second: _Coded | None = None) -> list[str]:
    """The table's "signals" cell per point: the texts of the points in signals of the main
    chart, then of the companion, joined."""
    other = second if second is not None else _Coded(np.zeros(n, dtype=np.int64), [])
    code, pairs = _pairs(main.codes, other.codes, len(other.texts) + 1)
    texts = ["; ".join([m.texts[c - 1] for m, c in ((main, a), (other, b)) if c]) for a, b in pairs]
    return np.array(texts, dtype=object)[code].tolist()


@by_identity(16)
def _table_numbers(values, pad: int = 0) -> list[float | None]:
    """:func:`num_list` of a chart's array, after ``pad`` empty cells."""
    if not pad:
        return num_list(values)
    empty: list[float | None] = [None] * pad
    return empty + num_list(values)


@by_identity(4)
def _yes_no(fitted) -> list[str]:
    return _NO_YES[np.asarray(fitted, dtype=bool).astype(np.intp)].tolist()


def _control_table(
    ctx,
    chart,
    offset,
    marked,
    sec_marked,
    own: ControlChart | None = None,
    marks: list[str] | None = None,
):
    n = len(ctx.x)
    sec = chart.secondary
    x_col = "date" if ctx.x_is_time else "point"
    has_stage = any(ctx.stage)
    abbr = _SECONDARY_SHORT.get(sec.kind, sec.label) if sec is not None else ""
    columns: list[str] = [x_col]
    if has_stage:
        columns.append("period")
    if chart.sizes is not None:
        columns.append("subgroup size")
    columns += ["value", "centre line", "LCL", "UCL", "used for limits"]
    cols: dict[str, list] = {}
    if chart.sizes is not None:
        cols["subgroup size"] = _table_numbers(chart.sizes)
    cols["value"] = _table_numbers(chart.values)
    cols["centre line"] = _table_numbers(chart.centre)
    cols["LCL"] = _table_numbers(chart.lower)
    cols["UCL"] = _table_numbers(chart.upper)
    if own is not None:
        after = np.asarray(own.stage, dtype=int) == 1
        for name, arr in (("centre line", own.centre), ("LCL", own.lower), ("UCL", own.upper)):
            cols[f"after {name}"] = num_list(np.where(after, arr, np.nan))
            columns.append(f"after {name}")
    columns.append("signals")
    if sec is not None:
        pad = [None] * offset
        columns += [abbr, f"{abbr} centre line", f"{abbr} LCL", f"{abbr} UCL"]
        cols[abbr] = _table_numbers(sec.values, offset)
        cols[f"{abbr} centre line"] = _table_numbers(sec.centre, offset)
        cols[f"{abbr} LCL"] = _table_numbers(sec.lower, offset)
        cols[f"{abbr} UCL"] = _table_numbers(sec.upper, offset)
        own_sec = own.secondary if own is not None else None
        if own is not None and own_sec is not None and len(own_sec.values) == len(sec.values):
            after = _secondary_stage(own, offset) == 1
            for name, arr in (
                ("centre line", own_sec.centre),
                ("LCL", own_sec.lower),
                ("UCL", own_sec.upper),
            ):
                cols[f"after {abbr} {name}"] = pad + num_list(np.where(after, arr, np.nan))
                columns.append(f"after {abbr} {name}")
    cols[x_col] = ctx.x
    if has_stage:
        cols["period"] = ctx.stage
    cols["used for limits"] = _yes_no(chart.fitted)
    cols["signals"] = _signal_column(n, marked, sec_marked)
    if marks is not None:
        columns.insert(columns.index("signals") + 1, "mark")
        cols["mark"] = marks
    return ColumnTable(columns, cols), tuple(columns)
