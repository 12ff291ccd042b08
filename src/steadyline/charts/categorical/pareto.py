"""The Pareto chart: categories by size with the cumulative share, the first 80% told apart
from the rest.
"""

from __future__ import annotations

from collections.abc import Sequence

from ...advice import vital_names
from ...stats.results import Pareto
from .. import style, vl
from ..base.numbers import fmt, num, plural
from ..base.templates import cached_template, finish_template, make_spec, slot
from ..base.types import ChartSpec
from .categories import (
    _GROUPS,
    IN_FIRST,
    MAX_BARS,
    REST_LABEL,
    VITAL_LABEL,
    _category_x,
    bar_keys,
    gathered,
    others_label,
)


def _pareto_view(prefix: str = "", panel_title: bool = False) -> dict:
    """Bars on the left axis [0, total] and the cumulative percentage on the right axis [0, 100]:
    with both domains fixed, 100 % sits exactly at the total."""
    left = vl.layer(*_count_layers(prefix))
    right = vl.layer(*_cumulative_layers(prefix))
    view = vl.layer(left, right, resolve={"scale": {"y": "independent"}})
    if panel_title:
        view["title"] = slot(f"{prefix}panel_title")
    return view


def _y_count(prefix: str) -> dict:
    return vl.field(
        "count:Q",
        scale={"domain": [0, slot(f"{prefix}total")], "nice": False, "zero": True},
        axis={"title": "count", "orient": "left"},
    )


def _y_pct() -> dict:
    return vl.field(
        "cumulative:Q",
        scale={"domain": [0, 100], "nice": False, "zero": True},
        axis={
            "title": "cumulative %",
            "orient": "right",
            "values": [0, 20, 40, 60, 80, 100],
            "labelExpr": "datum.value + '%'",
            "grid": False,
        },
    )


def _thr_y() -> dict:
    return vl.field("cumulative:Q", scale={"domain": [0, 100], "nice": False, "zero": True})


def _bar_tip() -> list[dict]:
    return [
        vl.tip("category:N", "category"),
        vl.tip("count:Q", "count", ",.4~g"),
        vl.tip("percent:Q", "percent", ".1f"),
        vl.tip("cumulative:Q", "cumulative percent", ".1f"),
        vl.tip("group:N", "group"),
    ]


def _count_layers(prefix: str) -> tuple[dict, dict]:
    """The bars on the count axis, the first 80% told from the rest, with their counts."""
    bars_data = f"{prefix}bars"
    bars = vl.view(
        bars_data,
        vl.mark("bar", stroke=style.INK, strokeWidth=0.6),
        {
            "x": _category_x(),
            "y": _y_count(prefix),
            "fill": vl.field(
                "group:O",
                sort=list(_GROUPS),
                scale={"domain": list(_GROUPS), "range": [style.VITAL, style.REMAINING]},
                legend={"title": None},
            ),
            "opacity": vl.field(
                "group:O",
                sort=list(_GROUPS),
                scale={"domain": list(_GROUPS), "range": [1.0, 0.6]},
                legend={"title": None},
            ),
            "tooltip": _bar_tip(),
        },
    )
    bar_text = vl.view(
        bars_data,
        vl.mark("text", baseline="bottom", dy=-2, fontSize=10),
        {"x": _category_x(), "y": _y_count(prefix), "text": vl.field("text:N")},
    )
    return bars, bar_text


def _cumulative_layers(prefix: str) -> tuple[dict, dict, dict, dict]:
    """The cumulative percentage as a line with points, and the 80% threshold with its text."""
    bars_data = f"{prefix}bars"
    line = vl.view(
        bars_data,
        vl.mark("line", color=style.CURVE, strokeWidth=2),
        {"x": _category_x(), "y": _y_pct()},
    )
    pts = vl.view(
        bars_data,
        vl.mark("point", color=style.CURVE, filled=True, size=36, opacity=1),
        {"x": _category_x(), "y": _y_pct(), "tooltip": _bar_tip()},
    )
    thr = vl.view(
        f"{prefix}threshold",
        vl.mark("rule", color=style.INK, strokeDash=list(style.DASH_REFERENCE), strokeWidth=1),
        {"y": _thr_y(), "tooltip": [vl.tip("text:N", "reference")]},
    )
    thr_text = vl.view(
        f"{prefix}threshold",
        vl.mark("text", align="left", baseline="bottom", dy=-2, dx=2),
        {"x": {"value": 0}, "y": _thr_y(), "text": vl.field("text:N")},
    )
    return line, pts, thr, thr_text


def _pareto_template() -> dict:
    chart = _pareto_view()
    chart.update(width="container", height=style.HEIGHT_DISTRIBUTION)
    return finish_template(chart, "pareto")


def _pareto_rows(
    categories: Sequence[str], counts: Sequence[float], total: float, vital: set[str]
) -> list[dict]:
    rows = []
    cum = 0.0
    for c, v in zip(categories, counts, strict=True):
        f = num(v) or 0.0
        cum += f
        rows.append(
            {
                "category": c,
                "count": f,
                "percent": num(100.0 * f / total) if total > 0 else None,
                "cumulative": num(100.0 * cum / total) if total > 0 else None,
                "group": VITAL_LABEL if c in vital else REST_LABEL,
                "text": fmt(f, 4),
            }
        )
    return rows


def _domain_total(total: float) -> float:
    t = num(total)
    return t if t is not None and t > 0 else 1.0


def _drawn(rows: list[dict], total: float) -> tuple[list[dict], int]:
    """The bars drawn from a Pareto's rows (every category, in order), each with its key: of
    more than MAX_BARS rows, the first MAX_BARS - 1 and one bar gathering the others, whose
    cumulative percentage is the last row's (100% of the total); and how many it gathers."""
    n = gathered(len(rows))
    if n:
        rest = rows[MAX_BARS - 1 :]
        count = sum(r["count"] or 0.0 for r in rest)
        tail = {
            "category": others_label(n),
            "count": count,
            "percent": num(count / total * 100.0) if total > 0 else None,
            "cumulative": rest[-1]["cumulative"],
            # a bar shows the vital-few fill only when everything in it is of the vital few
            "group": VITAL_LABEL if all(r["group"] == VITAL_LABEL for r in rest) else REST_LABEL,
            "text": fmt(count, 4),
        }
        rows = rows[: MAX_BARS - 1] + [tail]
    keys = bar_keys([r["category"] for r in rows])
    return [{"key": k, **r} for k, r in zip(keys, rows, strict=True)], n


def _gathered_line(rows: list[dict], n: int, total: float, vital: set[str]) -> str:
    """The subtitle line saying what the last bar gathers (rows: every category, in order)."""
    rest = rows[MAX_BARS - 1 :]
    count = sum(r["count"] or 0.0 for r in rest)
    share = f" ({fmt(count / total * 100.0)}% of the total)" if total > 0 else ""
    line = (
        f"the last bar gathers the {n:,} categories after the first {MAX_BARS - 1}: "
        f"{fmt(count, 4)} in all{share}"
    )
    in_rest = sum(1 for r in rest if r["category"] in vital)
    if in_rest:
        line += f"; {in_rest:,} of the first 80% are among them"
    return line


def pareto_chart(p: Pareto, period: str = "") -> ChartSpec:
    """Bars in descending order, the cumulative percentage against a right axis whose 100 %
    sits at the total, the vital few set apart by fill, opacity and legend, an 80 % rule. Of
    more than MAX_BARS categories, the largest are drawn one by one and one last bar gathers
    the others; the vital few, the line's 100% and the table count every category.
    ``period``: what the counts cover, the subtitle's first line (see :func:`column_chart`)."""
    if len(p.categories) != len(p.counts):
        raise ValueError(f"{len(p.categories)} categories but {len(p.counts)} counts")
    tpl = cached_template(("pareto",), _pareto_template)
    cats = [str(c) for c in p.categories]
    total = float(p.total)
    vital = set(p.vital_few)
    rows = []
    for k, c in enumerate(cats):
        rows.append(
            {
                "category": c,
                "count": num(p.counts[k]),
                "percent": num(p.percent[k]),
                "cumulative": num(p.cumulative_percent[k]),
                "group": VITAL_LABEL if c in vital else REST_LABEL,
                "text": fmt(p.counts[k], 4),
            }
        )
    bars, n_gathered = _drawn(rows, total)
    thr = [{"cumulative": float(p.threshold), "text": f"{fmt(p.threshold)}%"}]
    named = f" ({vital_names(p.vital_few)})" if p.vital_few else ""
    # what is drawn, not what it means: the card's sentences say which categories stand out
    sub = [period] if period else []
    sub += [
        f"{plural(len(cats), 'category', 'categories')}, total {fmt(total, 4)}; right axis: "
        f"cumulative percentage, 100% at the total; the first {fmt(p.threshold)}% set apart",
    ]
    if n_gathered:
        sub.append(_gathered_line(rows, n_gathered, total, vital))
    spec = make_spec(
        tpl,
        {"total": _domain_total(total)},
        {"bars": bars, "threshold": thr},
        "Pareto chart",
        sub,
    )
    table = [
        {
            "category": r["category"],
            "count": r["count"],
            "percent": r["percent"],
            "cumulative percent": r["cumulative"],
            IN_FIRST: "yes" if r["group"] == VITAL_LABEL else "no",
        }
        for r in rows
    ]
    summary = (
        f"Pareto chart{f' ({period})' if period else ''} of {fmt(total, 4)} across "
        f"{plural(len(cats), 'category', 'categories')}: "
        f"{len(p.vital_few)} make up the first {fmt(p.threshold)}%"
        + named
        + (f"; the {n_gathered:,} smallest are drawn as one bar" if n_gathered else "")
        + "."
    )
    return ChartSpec(
        spec=spec,
        table=table,
        columns=("category", "count", "percent", "cumulative percent", IN_FIRST),
        summary=summary,
    )
