"""Per-point texts held as codes into their distinct texts (signals a point takes part in,
the limits at a point): worked out with numpy for all points at once, each distinct text
written once, so that a long series costs per distinct text and not per point.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from typing import NamedTuple

import numpy as np

from ...memo import by_identity
from ...stats.results import ControlChart, Signal
from ..base.numbers import fmt


class _Coded(NamedTuple):
    """A text per point, held as a code per point into a list of texts. Limit texts: every
    point has one, code c is ``texts[c]``. Signal texts: code 0 is a point in no signal, code
    c is ``texts[c - 1]``."""

    codes: np.ndarray
    texts: list[str]


@by_identity(4)
def _marked_pair(signals: Sequence[Signal], n: int, offset: int, has_sec: bool) -> tuple:
    """Signal texts per point of the main and the companion chart (the project page's and the
    history page's control charts of a metric mark the same signals)."""
    main_signals = [s for s in signals if s.chart != "secondary"]
    sec_signals = [s for s in signals if s.chart == "secondary"]
    return (
        _signal_text(main_signals, n),
        _signal_text(sec_signals, n, offset) if has_sec else _signal_text((), n),
    )


def _signal_text(signals: Sequence[Signal], n: int, offset: int = 0) -> _Coded:
    """Per point, the descriptions of the signals it takes part in, joined by "; " in the
    order of the first signal naming each; as a code per point (0: in no signal) into the
    distinct texts (code c is ``texts[c - 1]``). Worked out for all points at once: a
    description per (point, signal) pair, the first of each (point, description) kept, and
    the distinct sequences of descriptions found as the distinct rows of a table."""
    codes = np.zeros(n, dtype=np.int64)
    lengths = [len(s.indices) for s in signals]
    if not sum(lengths):
        return _Coded(codes, [])
    names: dict[str, int] = {}
    desc = np.array([names.setdefault(s.description, len(names)) for s in signals])
    pos = (
        np.fromiter(
            itertools.chain.from_iterable(s.indices for s in signals),
            dtype=np.int64,
            count=sum(lengths),
        )
        + offset
    )
    order = np.repeat(np.arange(len(signals)), lengths)
    inside = (pos >= 0) & (pos < n)
    pos, order = pos[inside], order[inside]
    if not pos.size:
        return _Coded(codes, [])
    by_point = np.argsort(pos * len(signals) + order, kind="stable")  # by point, then signal
    pos, d = pos[by_point], desc[order[by_point]]
    # the first pair of each (point, description): the earliest signal naming it there
    _, first = np.unique(pos * len(names) + d, return_index=True)
    first.sort()
    pos, d = pos[first], d[first]
    starts = np.flatnonzero(np.concatenate([[True], pos[1:] != pos[:-1]]))
    rank = np.arange(pos.size) - np.repeat(starts, np.diff(np.append(starts, pos.size)))
    # a point's descriptions in order, as one number: digit k (base: descriptions + 1) is
    # the k-th description's code + 1
    base = len(names) + 1
    if base ** (int(rank.max()) + 1) < 2**62:
        seq = np.add.reduceat((d + 1) * base**rank, starts)
        distinct, which = np.unique(seq, return_inverse=True)
        rows = []
        for number in distinct.tolist():
            row = []
            while number:
                number, digit = divmod(number, base)
                row.append(digit - 1)
            rows.append(row)
    else:  # more distinct descriptions than one number holds: the rows of a table
        table = np.full((starts.size, int(rank.max()) + 1), -1, dtype=np.int64)
        table[np.repeat(np.arange(starts.size), np.diff(np.append(starts, pos.size))), rank] = d
        distinct, which = np.unique(table, axis=0, return_inverse=True)
        rows = [[c for c in row if c >= 0] for row in distinct.tolist()]
    listed = list(names)
    texts = ["; ".join(listed[c] for c in row) for row in rows]
    codes[pos[starts]] = which.ravel() + 1
    return _Coded(codes, texts)


def _pairs(a: np.ndarray, b: np.ndarray, b_size: int) -> tuple[np.ndarray, list[tuple]]:
    """Per point a code for its pair of codes (a, b), where every b is below ``b_size``, and
    the distinct pairs in code order: so that texts made from two coded texts are made once per
    distinct pair, not once per point."""
    distinct, where = np.unique(a * b_size + b, return_inverse=True)
    return where.ravel().astype(np.int64), [divmod(j, b_size) for j in distinct.tolist()]


def _join_info(info: _Coded, own: _Coded, after: np.ndarray) -> _Coded:
    """The limits text per point, with the after period's own limits added where ``after``:
    "LCL 1, CL 2, UCL 3; after: LCL ..."."""
    code, pairs = _pairs(info.codes, np.where(after, own.codes + 1, 0), len(own.texts) + 1)
    return _Coded(
        code,
        [
            f"{info.texts[a]}; after: {own.texts[b - 1]}"
            if b and own.texts[b - 1]
            else info.texts[a]
            for a, b in pairs
        ],
    )


def _staged_text(marked: _Coded, carried: np.ndarray, own: _Coded) -> _Coded:
    """The staged chart's signal texts per point: the signals against the baseline's limits
    (named so where the point's limits are carried forward) and those on the after period's own
    limits."""
    a = marked.codes * 2 + np.asarray(carried, dtype=np.int64)
    code, pairs = _pairs(a, own.codes, len(own.texts) + 1)
    texts = []
    for ac, b in pairs:
        m, car = divmod(ac, 2)
        parts = []
        if m:
            parts.append(("against the baseline's limits: " if car else "") + marked.texts[m - 1])
        if b:
            parts.append("on its own limits: " + own.texts[b - 1])
        texts.append("; ".join(parts))
    if texts and texts[0] == "":  # code 0 is "in no signal"
        return _Coded(code, texts[1:])
    return _Coded(code + 1, texts)


@by_identity(4)
def _limits_info(chart: ControlChart) -> _Coded:
    """Per point, the limits there as text ("LCL 1.2, CL 3.4, UCL 5.6"), each distinct
    combination written once."""
    cols = [np.asarray(a, dtype=float).ravel() for a in (chart.lower, chart.centre, chart.upper)]
    if len(cols[0]) == 0:
        return _Coded(np.zeros(0, dtype=np.int64), [])
    grid = np.column_stack([np.where(np.isfinite(c), c, np.inf) for c in cols])  # inf: none
    # limits mostly hold steady over runs of points: a text per run (one per distinct
    # combination), repeated over the run
    starts = np.flatnonzero(np.concatenate([[True], (grid[1:] != grid[:-1]).any(axis=1)]))
    memo: dict[tuple, int] = {}
    texts: list[str] = []
    run_codes = []
    for key in map(tuple, grid[starts].tolist()):
        code = memo.get(key)
        if code is None:
            lo, c, hi = key
            parts = []
            if lo != math.inf:
                parts.append(f"LCL {fmt(lo)}")
            if c != math.inf:
                parts.append(f"CL {fmt(c)}")
            if hi != math.inf:
                parts.append(f"UCL {fmt(hi)}")
            code = memo[key] = len(texts)
            texts.append(", ".join(parts))
        run_codes.append(code)
    lengths = np.diff(np.concatenate([starts, [len(grid)]]))
    return _Coded(np.repeat(np.asarray(run_codes, dtype=np.int64), lengths), texts)
