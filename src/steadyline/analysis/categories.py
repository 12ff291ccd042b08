"""A categories metric's displays: the Pareto and column chart of the baseline, and for the
history page each period's Pareto in one order and the change in mix between them.

Categories have no points in time to chart; they take none of the process metrics' run,
control or distribution displays.
"""

from __future__ import annotations

import numpy as np

from ..loading import STAGE_AFTER, STAGE_BASELINE, STAGE_NAMES
from ..stats.mix import mix_change
from ..stats.pareto import pareto, pareto_in_order
from ..stats.results import Pareto
from .attempt import attempt
from .results import MetricAnalysis


def analyse_categories(res: MetricAnalysis) -> None:
    """The Pareto and column chart of the baseline (of all data, said so, when the metric has no
    baseline period or none of its rows fall in it), like every other display of the project
    page; and for the history page the baseline's Pareto beside the after period's, the after
    period's bars in the baseline's order, categories new after the baseline appended."""
    data = res.data
    pts = data.points
    cats = pts["category"].astype(str).to_numpy()
    weights = pts["weight"].to_numpy(float)
    stage = pts["stage"].to_numpy(int)
    base = stage == STAGE_BASELINE
    if data.spec.baseline is not None and "period" in pts and base.any():
        res.category_scope = "baseline"
    else:
        res.category_scope = "all data"
        base = np.ones(len(cats), dtype=bool)
    res.category_rows = int(base.sum())
    res.pareto = attempt(res, "Pareto chart", pareto, cats[base], weights[base])
    if res.pareto is None:
        return
    # The column chart keeps the categories in their own (alphabetical) order, so that it
    # reads differently from the Pareto; counts come from the same tally.
    tally = dict(zip(res.pareto.categories, res.pareto.counts, strict=True))
    names = tuple(sorted(tally, key=str.casefold))
    res.column = (names, tuple(float(tally[n]) for n in names))
    after = stage == STAGE_AFTER
    if res.category_scope == "baseline" and after.any():
        order = after_order(res.pareto, pareto(cats[after], weights[after]))
        p = attempt(res, "history", pareto_in_order, cats[after], weights[after], order)
        if p is not None:
            res.period_paretos = [
                (STAGE_NAMES[STAGE_BASELINE], res.pareto),
                (STAGE_NAMES[STAGE_AFTER], p),
            ]
            # the counts of every category in both periods, in the after period's bar order
            b_tally = dict(zip(res.pareto.categories, res.pareto.counts, strict=True))
            a_tally = dict(zip(p.categories, p.counts, strict=True))
            res.mix = attempt(
                res,
                "change in mix",
                mix_change,
                order,
                [b_tally.get(c, 0.0) for c in order],
                [a_tally.get(c, 0.0) for c in order],
            )


def after_order(baseline: Pareto, after: Pareto) -> list[str]:
    """The after period's bar order: the baseline's (descending there), then the categories
    new in the after period, descending there (ties by name, as its own Pareto orders them);
    a category named "other" (any case) stays last, as the Pareto by period draws it."""
    seen = set(baseline.categories)
    order = list(baseline.categories) + [c for c in after.categories if c not in seen]
    last = [c for c in order if c.strip().lower() == "other"]
    return [c for c in order if c not in last] + last
