"""The Pareto charts of a metric's periods side by side, the categories in one common order."""

from __future__ import annotations

from collections.abc import Sequence

from ...stats.results import Pareto
from .. import style
from ..base.numbers import fmt, num, plural
from ..base.templates import cached_template, finish_template, make_spec
from ..base.types import ChartSpec
from .categories import IN_FIRST, MAX_BARS, VITAL_LABEL, gathered
from .pareto import _domain_total, _drawn, _pareto_rows, _pareto_view


def _period_template(k: int) -> dict:
    panels = []
    for j in range(k):
        panel = _pareto_view(prefix=f"p{j}_", panel_title=True)
        panel.update(width={"step": style.PANEL_STEP}, height=style.HEIGHT_DISTRIBUTION)
        panels.append(panel)
    chart = {
        "hconcat": panels,
        "spacing": 24,
        "resolve": {"scale": {"fill": "shared", "opacity": "shared"}},
    }
    return finish_template(chart, "pareto-by-period")


def common_order(paretos: Sequence[tuple[str, Pareto]]) -> list[str]:
    """The first period's order, then categories new in later periods by their later totals
    (descending, ties by name); a category named "other" stays last."""
    first = [str(c) for c in paretos[0][1].categories]
    seen = set(first)
    later: dict[str, float] = {}
    for _, p in paretos[1:]:
        for c, v in zip(p.categories, p.counts, strict=True):
            c = str(c)
            if c not in seen:
                later[c] = later.get(c, 0.0) + (num(v) or 0.0)
    extra = sorted(later, key=lambda c: (-later[c], c))
    order = first + extra
    others = [c for c in order if c.strip().lower() == "other"]
    return [c for c in order if c.strip().lower() != "other"] + others


def period_pareto_chart(paretos: Sequence[tuple[str, Pareto]]) -> ChartSpec:
    """One Pareto panel per period, side by side, every panel in the same category order (the
    first period's), so that a category can be followed across periods. Each panel's cumulative
    line follows that common order; each marks its own period's vital few."""
    if not paretos:
        raise ValueError("a period Pareto chart needs at least one period")
    k = len(paretos)
    tpl = cached_template(("pareto-by-period", k), lambda: _period_template(k))
    order = common_order(paretos)
    values: dict = {}
    datasets: dict = {}
    table: list[dict] = []
    parts = []
    for j, (period, p) in enumerate(paretos):
        counts = dict(zip((str(c) for c in p.categories), p.counts, strict=True))
        total = float(p.total)
        rows = _pareto_rows(order, [counts.get(c, 0.0) for c in order], total, set(p.vital_few))
        datasets[f"p{j}_bars"], n_gathered = _drawn(rows, total)
        datasets[f"p{j}_threshold"] = [
            {"cumulative": float(p.threshold), "text": f"{fmt(p.threshold)}%"}
        ]
        values[f"p{j}_total"] = _domain_total(total)
        values[f"p{j}_panel_title"] = f"{period} (total {fmt(total, 4)})"
        for r in rows:
            table.append(
                {
                    "period": period,
                    "category": r["category"],
                    "count": r["count"],
                    "percent": r["percent"],
                    "cumulative percent": r["cumulative"],
                    IN_FIRST: "yes" if r["group"] == VITAL_LABEL else "no",
                }
            )
        top = order[max(range(len(order)), key=lambda i: rows[i]["count"])] if order else ""
        parts.append(f"{period}: total {fmt(total, 4)}, largest {top}")
    sub = [
        f"categories in the order of {paretos[0][0]}; each panel's right axis puts 100% at its own total",
    ]
    n_gathered = gathered(len(order))
    if n_gathered:
        sub.append(
            f"the last bar of each panel gathers the {n_gathered:,} categories after the first "
            f"{MAX_BARS - 1} of that order"
        )
    spec = make_spec(tpl, values, datasets, "Pareto charts by period", sub)
    summary = (
        f"Pareto charts of {plural(k, 'period')} in one category order \u2014 "
        + "; ".join(parts)
        + "."
    )
    return ChartSpec(
        spec=spec,
        table=table,
        columns=("period", "category", "count", "percent", "cumulative percent", IN_FIRST),
        summary=summary,
    )
