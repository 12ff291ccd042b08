"""The rows of a control chart's centre line and limits: "step-after" lines with one vertex
per change ("p", "x", "y"), their pieces named once in ``limit_parts``, and the labels at
their ends (the after period's own limits of a chart by period too).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ...stats.results import ControlChart
from ..base.numbers import disp, disp_list, fmt
from ..base.xaxis import XAxis

_LIMIT_KINDS = ("centre line", "UCL", "LCL")
_LIMIT_SHORT = {"centre line": "CL", "UCL": "UCL", "LCL": "LCL"}


class _Parts:
    """Pieces of the limit lines of one chart (main and companion), each named once in
    ``limit_parts``: kind, the name its tooltip shows, and for the staged chart set and look."""

    def __init__(self) -> None:
        self.rows: list[dict] = []

    def new(self, kind: str, name: str, set_name: str | None, look: str | None) -> int:
        p = len(self.rows)
        row = {"p": p, "kind": kind, "name": name}
        if set_name:
            row["set"] = set_name
            row["look"] = look
        self.rows.append(row)
        return p


class _Steps(NamedTuple):
    """The vertices of one limit line's "step-after" pieces (see :func:`_steps`)."""

    starts: np.ndarray  # the point where each piece starts
    cand: np.ndarray  # the points where the raw value changes (or a piece starts)
    shown: list  # the displayed value at each of those points
    pos: np.ndarray  # per vertex, its point (a piece's end vertex: one past its last point)
    piece: np.ndarray  # per vertex, the number of its piece
    which: np.ndarray  # per vertex, its displayed value's place in ``shown``


def _steps(raw: np.ndarray, fin: np.ndarray, car_change: np.ndarray) -> _Steps:
    """A piece runs while values are finite (and drawn) and the carried flag stays the same;
    within a piece a vertex goes where the displayed value changes, and one more at the
    piece's end. Displayed values are rounded only where the raw value changes: between
    such places the value, and so its rounding, stays the same."""
    first = np.ones(1, dtype=bool)
    start = fin & np.concatenate([first, ~fin[:-1]]) | fin & car_change
    end = fin & np.concatenate([~fin[1:] | start[1:], first])
    cand = np.flatnonzero(fin & (start | np.concatenate([first, raw[1:] != raw[:-1]])))
    shown = disp_list(raw[cand])
    shown_f = np.asarray(shown, dtype=float)
    keep = start[cand] | np.concatenate([first, shown_f[1:] != shown_f[:-1]])
    vertices = cand[keep]
    starts = np.flatnonzero(start)
    ends = np.flatnonzero(end)
    # the shown value at a piece's end: that of the last candidate at or before it
    end_shown = np.searchsorted(cand, ends, side="right") - 1
    # vertices, then each piece's end vertex after its own vertices
    at = np.concatenate([vertices * 2, ends * 2 + 1])
    order = np.argsort(at, kind="stable")
    pos = np.concatenate([vertices, ends + 1])[order]
    piece = np.concatenate(
        [np.searchsorted(starts, vertices, side="right") - 1, np.arange(len(ends))]
    )[order]
    which = np.concatenate([np.flatnonzero(keep), end_shown])[order]
    return _Steps(starts, cand, shown, pos, piece, which)


def _limit_rows(
    xa: XAxis,
    chart: ControlChart,
    offset: int,
    parts: _Parts,
    *,
    drawn=None,
    carried=None,
    set_name: str | None = None,
    label_prefix: str = "",
    solid: bool = False,
) -> tuple[list[dict], list[dict]]:
    """Step lines of CL/UCL/LCL as vertices of a "step-after" line, and the end labels.

    Each run of equal values is one horizontal step from the midpoint before its first point to
    the midpoint after its last; a piece ("p") holds consecutive runs, so the line steps up or
    down between them (stepped p/u limits, limits recomputed per period). One vertex per run
    start and one at the piece's end. A nan ends the piece and draws nothing until the next
    finite value.

    drawn:   per point whether the line is drawn there (default: everywhere).
    carried: per point whether the limits there are carried forward from the baseline (a new
             piece starts where this changes; carried pieces are dashed and named "baseline").
    set_name: when given ("baseline" / "after"), the parts carry "set" and "look" (staged chart).
    """
    rows: list[dict] = []
    labels: list[dict] = []
    arrays = {"centre line": chart.centre, "UCL": chart.upper, "LCL": chart.lower}
    m = len(chart.values)
    if m == 0:
        return rows, labels
    on = None if drawn is None else np.asarray(drawn, dtype=bool).ravel()
    car = np.zeros(m, dtype=bool) if carried is None else np.asarray(carried, dtype=bool).ravel()
    x_end = xa.at(m - 1 + offset)
    mids = xa.midpoints()
    last_mid = len(mids) - 1
    first = np.ones(1, dtype=bool)
    car_change = np.concatenate([first, car[1:] != car[:-1]])

    def name_at(kind: str, i: int) -> str:
        return ("baseline " if car[i] else label_prefix) + _LIMIT_SHORT[kind]

    for kind in _LIMIT_KINDS:
        raw = np.asarray(arrays[kind], dtype=float).ravel()
        fin = np.isfinite(raw)
        if on is not None:
            fin &= on
        if not fin.any():
            continue
        st = _steps(raw, fin, car_change)
        piece_ids = []
        for k in st.starts.tolist():
            look = "solid" if solid or (kind == "centre line" and not car[k]) else "dashed"
            piece_ids.append(parts.new(kind, name_at(kind, k), set_name, look))
        ids = np.asarray(piece_ids, dtype=np.int64)[st.piece]
        rows += [
            {"p": p, "x": mids[x], "y": st.shown[w]}
            for p, x, w in zip(
                ids.tolist(),
                np.clip(st.pos + offset, 0, last_mid).tolist(),
                st.which.tolist(),
                strict=True,
            )
        ]
        starts, cand, shown = st.starts, st.cand, st.shown
        i = int(np.flatnonzero(fin)[-1])
        y = shown[int(np.searchsorted(cand, i, side="right") - 1)]
        label = {"x": x_end, "y": y, "text": f"{name_at(kind, i)} {fmt(y)}", "kind": kind}
        if carried is not None:
            # where the last piece starts: in a narrow box a carried label sits there, at the
            # start of the after period, so as not to print over the after period's own labels
            # at the right end
            label["x0"] = xa.at(int(starts[starts <= i][-1]) + offset)
        labels.append(label)
    return rows, labels


def _own_rows(xa: XAxis, own: ControlChart, stage_arr, offset: int, parts: _Parts):
    """The after period's own limits (stage 1 only), solid, labelled right of the period's last
    point: in the margin beside the plot when the after period ends the chart, clear of the
    period's name, the events and the points at its start."""
    drawn = np.asarray(stage_arr, dtype=int) == 1
    rows, _ = _limit_rows(
        xa, own, offset, parts, drawn=drawn, set_name="after", label_prefix="after ", solid=True
    )
    labels = []
    last = int(np.flatnonzero(drawn)[-1]) if drawn.any() else None
    if last is not None:
        arrays = {"centre line": own.centre, "UCL": own.upper, "LCL": own.lower}
        for kind in _LIMIT_KINDS:
            y = disp(arrays[kind][last])
            if y is not None:
                labels.append(
                    {
                        "x": xa.at(last + offset),
                        "y": y,
                        "text": f"after {_LIMIT_SHORT[kind]} {fmt(y)}",
                        "kind": kind,
                    }
                )
    return rows, labels
