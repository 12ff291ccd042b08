"""The column chart: counts by category, in the data's order or by size."""

from __future__ import annotations

from collections.abc import Sequence

from .. import style, vl
from ..base.numbers import fmt, num, plural, with_unit
from ..base.templates import cached_template, finish_template, make_spec, slot
from ..base.types import ChartSpec
from .categories import MAX_BARS, _category_x, bar_keys, gathered, others_label


def _column_template() -> dict:
    def y() -> dict:
        return vl.field(
            "count:Q", scale={"zero": True, "domainMin": 0}, axis={"title": slot("y_title")}
        )

    bars = vl.view(
        "bars",
        vl.mark("bar", color=style.DATA),
        {
            "x": _category_x(),
            "y": y(),
            "tooltip": [
                vl.tip("category:N", "category"),
                # a fixed title: Vega-Lite makes the tooltip an object keyed by the titles,
                # and a unit such as "constructor" would be a key every object inherits
                vl.tip("count:Q", "count", ",.4~g"),
            ],
        },
    )
    labels = vl.view(
        "bars",
        vl.mark("text", baseline="bottom", dy=-3),
        {"x": _category_x(), "y": y(), "text": vl.field("text:N")},
    )
    chart = vl.layer(bars, labels, width="container", height=style.HEIGHT_DISTRIBUTION)
    return finish_template(chart, "column-chart")


def column_chart(
    categories: Sequence[str], counts: Sequence[float], *, unit: str = "count", period: str = ""
) -> ChartSpec:
    """Bars in the order given, the value axis starting at zero. Of more than MAX_BARS
    categories, the largest MAX_BARS - 1 are drawn in the order given and one last bar gathers
    the others; the table keeps every category. ``period``: what the counts cover (e.g.
    "baseline 2026-01-05 to 2026-03-27, 412 values"), the subtitle's first line."""
    cats = [str(c) for c in categories]
    vals = [num(c) for c in counts]
    if len(cats) != len(vals):
        raise ValueError(f"{len(cats)} categories but {len(vals)} counts")
    if len(set(cats)) != len(cats):
        raise ValueError("column chart categories must be distinct")
    tpl = cached_template(("column-chart",), _column_template)
    n_gathered = gathered(len(cats))
    sub = [period] if period else []
    shown, shown_vals = cats, vals
    if n_gathered:
        largest = sorted(range(len(cats)), key=lambda i: (-(vals[i] or 0.0), cats[i]))
        keep = sorted(largest[: MAX_BARS - 1])
        rest = sum(vals[i] or 0.0 for i in largest[MAX_BARS - 1 :])
        shown = [cats[i] for i in keep] + [others_label(n_gathered)]
        shown_vals = [vals[i] for i in keep] + [rest]
        sub.append(
            f"the {MAX_BARS - 1} largest of {len(cats):,} categories, and one last bar that "
            f"gathers the other {n_gathered:,} ({with_unit(fmt(rest, 4), unit)} in all)"
        )
    rows = [
        {"key": k, "category": c, "count": v, "text": fmt(v, 4) if v is not None else ""}
        for k, c, v in zip(bar_keys(shown), shown, shown_vals, strict=True)
    ]
    spec = make_spec(
        tpl,
        {"y_title": unit or "count"},
        {"bars": rows},
        "Counts by category",
        sub,
    )
    value_col = unit if unit and unit != "category" else "count"  # never two "category"
    table = [{"category": c, value_col: v} for c, v in zip(cats, vals, strict=True)]
    total = sum(v for v in vals if v is not None)
    summary = (
        f"Column chart{f' ({period})' if period else ''} of "
        f"{plural(len(cats), 'category', 'categories')}, total {with_unit(fmt(total, 4), unit)}"
    )
    present = [(i, v) for i, v in enumerate(vals) if v is not None]
    if present:
        k = max(present, key=lambda iv: iv[1])[0]  # the first of equal largest
        summary += f"; largest {cats[k]} ({fmt(vals[k], 4)})"
    if n_gathered:
        summary += f"; the {n_gathered:,} smallest are drawn as one bar"
    return ChartSpec(spec=spec, table=table, columns=("category", value_col), summary=summary + ".")
