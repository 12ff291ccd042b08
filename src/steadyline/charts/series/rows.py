"""The drawn points of a series chart as the rows of its datasets.

Data layout (kept small: a page embeds only what is drawn). One row per plotted position in
``points``: "x", the main chart's value "v", line piece "g" and key "k" into ``point_info``; a
control chart adds key "i" into ``limit_info`` (the limits at the point, as text); a chart with a
dispersion companion adds "v2", "g2", "k2", "i2" to the same rows, so that positions are written
once. ``point_info`` holds the distinct (period, used for limits, signals) combinations that the
tooltips show; the marker is computed in the view from them.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import NamedTuple

import numpy as np

from ...memo import by_identity
from ..base.events import event_rows
from ..base.numbers import disp_list
from ..base.periods import band_rows
from ..base.types import SeriesContext
from ..base.xaxis import XAxis, x_axis
from .coded import _Coded
from .marks import _MARK_CODES, _MARK_TEXTS

# Datasets built at display precision already (values from disp_list, integer or text x).
_EXACT = ("points",)


def _exact(ctx: SeriesContext, datasets: dict) -> tuple[str, ...]:
    """Datasets already at display precision. On a time axis every dataset of a series chart
    is (values from disp/disp_list, positions as text); on a point-number axis the limit
    lines' and labels' positions are plain floats and are rounded with the rest."""
    return tuple(datasets) if ctx.x_is_time else _EXACT


# The period bands and event rules of a series, the same on its run chart and both control
# charts (the rows are not changed once made).
_bands = by_identity(4)(band_rows)
_events = by_identity(4)(event_rows)


@by_identity(4)
def _shown(values) -> list:
    """:func:`disp_list` of a chart's values (both pages draw the same arrays)."""
    return disp_list(values)


def _x_format(ctx: SeriesContext) -> str:
    """The tooltip's date format: as precise as the positions are."""
    xs = [s.strip() for s in ctx.x]
    if all(len(s) == 10 for s in xs):
        return "%Y-%m-%d"
    xa = x_axis(ctx)
    if xa.has_seconds():
        return "%Y-%m-%d %H:%M:%S"
    return "%Y-%m-%d %H:%M"


class _Keys:
    """Distinct tooltip texts of the points, each written once and keyed 0, 1, ... in order of
    first use: ``point_info`` rows (period, used for limits, signals) under "k" and
    ``limit_info`` rows (the limits at the point) under "i"."""

    def __init__(self, staged: bool = False) -> None:
        self.points: dict[tuple, int] = {}
        self.limits: dict[str, int] = {}
        self.staged = staged  # every row says its mark and whether it is in an own signal

    def key(
        self,
        stage: str,
        fitted: bool | None,
        signals: str,
        mark: str = "",
        own: bool = False,
        aside: bool = False,
    ) -> int:
        t = (stage, fitted, signals, mark, own, aside)
        k = self.points.get(t)
        if k is None:
            k = self.points[t] = len(self.points)
        return k

    def info(self, text: str) -> int:
        i = self.limits.get(text)
        if i is None:
            i = self.limits[text] = len(self.limits)
        return i

    def point_rows(self) -> list[dict]:
        out = []
        for (stage, fitted, signals, mark, own, aside), k in self.points.items():
            row: dict = {"k": k, "stage": stage}
            if fitted is not None:
                row["fitted"] = "yes" if fitted else "no"
            if signals:
                row["signals"] = signals
            if self.staged:
                row["mark"] = mark
                row["own"] = own
            if aside:  # only on a chart with points set aside: others stay as they were
                row["aside"] = True
            out.append(row)
        return out

    def limit_rows(self) -> list[dict]:
        return [{"i": i, "info": text} for text, i in self.limits.items()]


class _Series(NamedTuple):
    """One plotted series, column by column: per drawn point (in index order) its position,
    value, line piece, point key and limits key (``lim`` is None when the chart has none)."""

    idx: list[int]
    v: list
    g: list
    k: list
    lim: list[int] | None


@by_identity(4)
def _stage_codes(stage: tuple[str, ...]) -> tuple[tuple[str, ...], np.ndarray]:
    """The distinct period names of a series in order of first appearance, and a code per point."""
    names = tuple(dict.fromkeys(stage))
    code = {s: c for c, s in enumerate(names)}
    return names, np.fromiter(map(code.__getitem__, stage), dtype=np.int64, count=len(stage))


def _first_use(codes: np.ndarray) -> list[tuple[int, int]]:
    """(first position, code) of each distinct code, in order of first position."""
    if not len(codes):
        return []
    distinct, first = np.unique(codes, return_index=True)
    return sorted(zip(first.tolist(), distinct.tolist(), strict=True))


def _series_rows(
    ctx: SeriesContext,
    values: Sequence | np.ndarray,
    marked: _Coded,
    keys: _Keys,
    offset: int = 0,
    info: _Coded | None = None,
    fitted: Sequence[bool] | np.ndarray | None = None,
    marks: np.ndarray | None = None,
    aside: np.ndarray | None = None,
) -> _Series:
    """The drawn points of a series (finite values), with line pieces that break at segment
    changes and at missing values, and their keys into ``keys``. Keys are numbered in order of
    first use, point by point; the Python work is done per distinct (period, used for limits,
    signal text, mark) combination and per distinct limits text, not per point.

    marks: the staged chart's code per point of the series (``_mark_codes``), else None."""
    arr = np.asarray(values, dtype=float).ravel()
    vals = _shown(values) if isinstance(values, np.ndarray) else disp_list(arr)
    kp = np.flatnonzero(np.isfinite(arr))  # the points drawn, in order
    if not len(kp):
        return _Series([], [], [], [], None if info is None else [])
    if len(kp) < len(vals):
        vals = [vals[k] for k in kp.tolist()]
    ip = kp + offset
    seg = np.asarray(ctx.segment, dtype=np.int64)[ip]
    # a new piece where the segment changes or a missing value comes between
    new = (seg[1:] != seg[:-1]) | (kp[1:] != kp[:-1] + 1)
    groups = np.concatenate([[0], np.cumsum(new)]).tolist()
    idx = ip.tolist()

    # point keys: (period, used for limits, signals), coded per point as one number
    names, stage_code = _stage_codes(ctx.stage)
    fit = None if fitted is None else np.asarray(fitted, dtype=bool)[kp]
    text_code, texts = marked
    width = len(texts) + 1
    code = (stage_code[ip] * 3 + (2 if fit is None else fit.astype(np.int64))) * width
    code += text_code[ip]
    code *= _MARK_CODES
    if marks is not None:
        code += np.asarray(marks, dtype=np.int64)[kp]
    code *= 2
    if aside is not None:
        code += np.asarray(aside, dtype=np.int64)[kp]
    distinct, first, point_key = np.unique(code, return_index=True, return_inverse=True)
    key_of = _point_keys(distinct, first, names, texts, keys)
    point_key = key_of[point_key.ravel()]

    lim = None
    if info is not None:
        code = info.codes[kp]
        key_of_code = np.zeros(len(info.texts), dtype=np.int64)
        for _, c in _first_use(code):
            key_of_code[c] = keys.info(info.texts[c])
        lim = key_of_code[code].tolist()
    return _Series(idx, vals, groups, point_key.tolist(), lim)


def _point_keys(
    distinct: np.ndarray, first: np.ndarray, names: tuple[str, ...], texts: list[str], keys: _Keys
) -> np.ndarray:
    """The key in ``keys`` of each distinct point code (see :func:`_series_rows`), taken in
    order of first use: the code is read back into (period, used for limits, signal text,
    mark, set aside)."""
    width = len(texts) + 1
    key_of = np.zeros(len(distinct), dtype=np.int64)
    for j in np.argsort(first, kind="stable").tolist():  # in order of first use
        rest, put = divmod(int(distinct[j]), 2)
        rest, m = divmod(rest, _MARK_CODES)
        pair, t = divmod(rest, width)
        s, f = divmod(pair, 3)
        change, own = divmod(m, 2)
        key_of[j] = keys.key(
            names[s],
            None if f == 2 else bool(f),
            texts[t - 1] if t else "",
            _MARK_TEXTS[change],
            bool(own),
            bool(put),
        )
    return key_of


def _point_rows(xa: XAxis, ctx: SeriesContext, main: _Series, second: _Series | None = None):
    """Merge the main and the companion series into one row per position."""
    at = xa.pos
    labels = None if xa.is_time else ctx.x
    if labels is None and (not second or second.idx == main.idx):
        # the common shapes, one dict display per row: a time axis, the companion (if any) at
        # the same positions
        xs = at if len(main.idx) == len(at) else [at[i] for i in main.idx]
        v, g, k, lim = main.v, main.g, main.k, main.lim
        if not second:
            if lim is not None:
                return [
                    {"x": a, "v": b, "g": c, "k": d, "i": e}
                    for a, b, c, d, e in zip(xs, v, g, k, lim, strict=True)
                ]
            return [
                {"x": a, "v": b, "g": c, "k": d} for a, b, c, d in zip(xs, v, g, k, strict=True)
            ]
        if lim is not None and second.lim is not None:
            return [
                {"x": a, "v": b, "g": c, "k": d, "i": e, "v2": b2, "g2": c2, "k2": d2, "i2": e2}
                for a, b, c, d, e, b2, c2, d2, e2 in zip(
                    xs, v, g, k, lim, second.v, second.g, second.k, second.lim, strict=True
                )
            ]
    rows: list[dict] = []
    add = rows.append
    series = [main] if not second else [main, second]
    where = [dict(zip(s.idx, range(len(s.idx)), strict=True)) for s in series]
    positions = main.idx if not second else sorted(set(main.idx) | set(second.idx))
    for i in positions:
        row: dict = {"x": at[i]}
        if labels is not None:
            row["label"] = labels[i]
        for s, w, suf in zip(series, where, ("", "2"), strict=False):
            j = w.get(i)
            if j is not None:
                row["v" + suf], row["g" + suf], row["k" + suf] = s.v[j], s.g[j], s.k[j]
                if s.lim is not None:
                    row["i" + suf] = s.lim[j]
        add(row)
    return rows


@by_identity(4)
def _x_values(ctx: SeriesContext, xa: XAxis) -> dict:
    if ctx.x_is_time:
        return {"x_when": f"utcFormat(datum.x, '{_x_format(ctx)}')"}
    return xa.axis_values()
