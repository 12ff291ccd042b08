"""A metric's entry in results.json, apart from what its cards add: what it is and how it was
read (:func:`result_head`), its points, and the figures of the studies beside its charts
(:func:`add_result_figures`: capability, business figures, after-sample plan, normality, the
points set aside, the comparison, the sustained shift). The keys are an interface (README,
results.json schema).
"""

from __future__ import annotations

import numpy as np

from .. import advice
from ..analysis import MetricAnalysis
from ..charts import SeriesContext
from .cards import signals_json
from .drawn import by_period_json
from .serialise import plain
from .studies import business_json, plan_json


def result_head(a: MetricAnalysis) -> dict:
    """What the metric is, its settings, and the period it was drawn by if the tool chose one."""
    m = a.spec
    return {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "type": m.type,
        "effective_type": a.effective_type,
        "better": m.better,
        "file": m.file_rel,
        "rows_read": a.rows_read,
        "spec_limits": {"lower": m.spec_lower, "upper": m.spec_upper, "target": m.target},
        "periods": {
            "baseline": m.baseline and [m.baseline.start, m.baseline.end],
            "after": m.after and [m.after.start, m.after.end],
        },
        "rules": {
            "signal_rules": m.signal_rules,
            "run_rules": m.run_rules,
            "limits": m.limits,
            "quartiles": m.quartiles,
            "bins": list(m.bins) if isinstance(m.bins, tuple) else m.bins,
        },
        "drawn_by_period": by_period_json(a),
    }


def points_json(a: MetricAnalysis, ctx: SeriesContext) -> dict:
    """A time series' points: label, time (the day, or the date and time, of each point), plotted
    value and kind of period (baseline, after ...) of each."""
    return {
        "label": list(a.x),
        "period": list(ctx.x),
        "value": a.point_values,
        "period_kind": list(a.stage_names),
    }


def add_result_figures(a: MetricAnalysis, result: dict) -> None:
    """The figures of the studies beside the charts, each under its key when it was made."""
    m = a.spec
    if a.capability is not None:
        result["capability"] = a.capability
    if a.business:
        result["business"] = business_json(a.business[0][1], m.sigma_level)
    if a.after_plan is not None:
        result["after_sample_plan"] = plan_json(a)
    if a.normality is not None:
        result["normality"] = a.normality
    if m.set_aside and a.effective_type != "categories":
        result["set_aside"] = set_aside_json(a)
    if a.comparison is not None:
        result["comparison"] = a.comparison
    if a.after_shift is not None:
        result["after_shift"] = plain(a.after_shift) | {
            "signals": signals_json(a.after_shift.signals, _after_labels(a))
        }


def set_aside_json(a: MetricAnalysis) -> dict:
    """results.json's account of the points set aside (README, results.json schema)."""
    base = a.in_baseline
    aside = a.aside if a.aside is not None else np.zeros(len(base), dtype=bool)
    k, n = int((aside & base).sum()), int(base.sum())
    return {
        "points": k,
        "baseline_points": n,
        "share": k / n if n else None,
        "values": a.values_aside,
        "labels": [x for x, s in zip(a.x, aside.tolist(), strict=True) if s],
        "entries": [
            {"dates": [e.start, e.end], "reason": e.reason, "points": c}
            for e, c in zip(a.spec.set_aside, a.aside_counts, strict=True)
        ],
        "caution": advice.aside_cautions(k, n)[0] if advice.aside_cautions(k, n) else None,
    }


def _after_labels(a: MetricAnalysis) -> tuple[str, ...]:
    return tuple(x for x, s in zip(a.x, a.in_after.tolist(), strict=True) if s)
