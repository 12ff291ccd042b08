"""Box plots drawn from five-number summaries, with the mean and the outlying values (at most
MAX_OUTLIERS_EACH_SIDE drawn on each side; the table counts them all).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ...stats.results import BoxSummary
from .. import style, vl
from ..base.numbers import fmt, num, titled, with_unit
from ..base.templates import cached_template, finish_template, list_slot, make_spec, slot
from ..base.types import ChartSpec

# At most this many distinct outlying values are drawn on each side of a box (the most extreme);
# the table still counts them all.
MAX_OUTLIERS_EACH_SIDE = 100
_MARK_KINDS = ["mean", "outlier (beyond 1.5 \u00d7 IQR)", "far out (beyond 3 \u00d7 IQR)"]


def _x() -> dict:
    return vl.field("group:N", sort=list_slot("order"), axis={"title": None, "labelAngle": 0})


def _y(name: str) -> dict:
    return vl.field(f"{name}:Q", axis={"title": slot("y_title")}, scale={"zero": False})


def _tip() -> list[dict]:
    return [
        vl.tip("group:N", "group"),
        vl.tip("n:Q", "n"),
        vl.tip("whisker_high:Q", "upper whisker", ",.4~g"),
        vl.tip("q3:Q", "Q3", ",.4~g"),
        vl.tip("median:Q", "median", ",.4~g"),
        vl.tip("q1:Q", "Q1", ",.4~g"),
        vl.tip("whisker_low:Q", "lower whisker", ",.4~g"),
        vl.tip("mean:Q", "mean", ",.4~g"),
    ]


def _by_kind(values: list) -> dict:
    return vl.field(
        "kind:N",
        scale={"domain": list(_MARK_KINDS), "range": values},
        legend={"title": None},
    )


def _marks_layer() -> dict:
    """The means and the outlying values, shaped by kind (one legend)."""
    return vl.view(
        "marks",
        vl.mark("point", opacity=1, size=50),
        {
            "x": _x(),
            "y": _y("value"),
            "shape": _by_kind([style.SHAPE_MEAN, style.SHAPE_OUTLIER, style.SHAPE_FAR_OUT]),
            "stroke": _by_kind([style.INK, style.DATA, style.SIGNAL]),
            "fill": _by_kind([style.INK, style.WHITE, style.SIGNAL]),
            "tooltip": [
                vl.tip("group:N", "group"),
                vl.tip("kind:N", "what"),
                vl.tip("value:Q", "value", ",.4~g"),
            ],
        },
    )


def _box_template() -> dict:
    whisker = vl.view(
        "boxes",
        vl.mark("rule", color=style.INK, strokeWidth=1.2),
        {"x": _x(), "y": _y("whisker_low"), "y2": {"field": "whisker_high"}, "tooltip": _tip()},
    )
    cap_lo = vl.view(
        "boxes",
        vl.mark("tick", color=style.INK, size=18, thickness=1.2),
        {"x": _x(), "y": _y("whisker_low")},
    )
    cap_hi = vl.view(
        "boxes",
        vl.mark("tick", color=style.INK, size=18, thickness=1.2),
        {"x": _x(), "y": _y("whisker_high")},
    )
    box = vl.view(
        "boxes",
        vl.mark("bar", size=40, color=style.BOX_FILL, stroke=style.INK, strokeWidth=1),
        {"x": _x(), "y": _y("q1"), "y2": {"field": "q3"}, "tooltip": _tip()},
    )
    median = vl.view(
        "boxes",
        vl.mark("tick", color=style.INK, size=40, thickness=2.5),
        {"x": _x(), "y": _y("median"), "tooltip": _tip()},
    )

    marks = _marks_layer()
    chart = vl.layer(
        whisker,
        cap_lo,
        cap_hi,
        box,
        median,
        marks,
        width="container",
        height=style.HEIGHT_DISTRIBUTION,
    )
    return finish_template(chart, "box-plot")


def box_chart(
    groups: Sequence[tuple[str, BoxSummary]], *, unit: str, measure: str = "", note: str = ""
) -> ChartSpec:
    """One box per group on one scale, drawn from the summaries alone (no raw data). The value
    axis is titled with ``measure`` and the unit; ``note``, when given, heads the subtitle."""
    if not groups:
        raise ValueError("a box plot needs at least one group")
    names = [str(g) for g, _ in groups]
    if len(set(names)) != len(names):
        raise ValueError(f"box plot group names must be distinct, got {names}")
    tpl = cached_template(("box-plot",), _box_template)
    boxes: list[dict] = []
    marks: list[dict] = []
    table: list[dict[str, Any]] = []
    hidden = 0
    for name, b in groups:
        boxes.append(_box_row(name, b))
        hidden += _mark_rows(name, b, marks)
        table.append(_table_row(name, b))
    methods = sorted({b.method_label for _, b in groups})
    sub = [
        *([note] if note else []),
        "quartiles: " + "; ".join(methods) + "; whiskers to 1.5 \u00d7 IQR, points beyond "
        "drawn one by one",
    ]
    if hidden:
        sub.append(
            f"{hidden} outlying values nearer the fences are not drawn (the most "
            f"extreme {MAX_OUTLIERS_EACH_SIDE} on each side are)"
        )
    spec = make_spec(
        tpl,
        {"order": names, "y_title": titled(measure, unit) or "value"},
        {"boxes": boxes, "marks": marks},
        "Box plot" if len(groups) == 1 else f"Box plots of {len(groups)} groups",
        sub,
    )
    columns = tuple(table[0].keys())
    parts = [
        f"{r['group']}: median {with_unit(fmt(r['median']), unit)}, "
        f"IQR {fmt(r['Q1'])} to {fmt(r['Q3'])}"
        + (
            f", {r['outliers'] + r['far out']} beyond the fences"
            if r["outliers"] + r["far out"]
            else ""
        )
        for r in table
    ]
    summary = "Box plot \u2014 " + "; ".join(parts) + "."
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


def _box_row(name: str, b: BoxSummary) -> dict:
    return {
        "group": name,
        "n": b.n,
        "q1": num(b.q1),
        "median": num(b.median),
        "q3": num(b.q3),
        "whisker_low": num(b.whisker_low),
        "whisker_high": num(b.whisker_high),
        "mean": num(b.mean),
    }


def _mark_rows(name: str, b: BoxSummary, marks: list[dict]) -> int:
    """Adds the group's mean and outlying values to ``marks``; returns how many outlying
    values were left undrawn."""
    if num(b.mean) is not None:
        marks.append({"group": name, "kind": _MARK_KINDS[0], "value": num(b.mean)})
    far = set(int(i) for i in b.far_out_indices)
    pairs = sorted(
        (num(v), int(idx) in far)
        for idx, v in zip(b.outlier_indices, b.outlier_values, strict=True)
        if num(v) is not None
    )
    pairs = list(dict.fromkeys(pairs))  # a value drawn twice is one mark
    hidden = 0
    if len(pairs) > 2 * MAX_OUTLIERS_EACH_SIDE:
        # Keep the page's weight flat in the number of rows: draw the most extreme
        # outlying values on each side and say how many were left out.
        hidden = len(pairs) - 2 * MAX_OUTLIERS_EACH_SIDE
        pairs = pairs[:MAX_OUTLIERS_EACH_SIDE] + pairs[-MAX_OUTLIERS_EACH_SIDE:]
    for v, is_far in pairs:
        marks.append({"group": name, "kind": _MARK_KINDS[2 if is_far else 1], "value": v})
    return hidden


def _table_row(name: str, b: BoxSummary) -> dict[str, Any]:
    far = set(int(i) for i in b.far_out_indices)
    n_far = sum(int(i) in far for i in b.outlier_indices)
    return {
        "group": name,
        "n": b.n,
        "mean": num(b.mean),
        "minimum": num(b.minimum),
        "lower whisker": num(b.whisker_low),
        "Q1": num(b.q1),
        "median": num(b.median),
        "Q3": num(b.q3),
        "upper whisker": num(b.whisker_high),
        "maximum": num(b.maximum),
        "IQR": num(b.iqr),
        "outliers": len(b.outlier_values) - n_far,
        "far out": n_far,
        "quartile method": b.method_label,
    }
