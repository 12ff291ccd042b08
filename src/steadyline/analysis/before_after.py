"""The comparisons of the after period with the baseline: the test of the change, the shift
against the baseline's median, Cpk before vs after, and the after sample the expected change
needs (with the power reached so far).

All of them read the baseline as its charts describe it, without the points set aside.
"""

from __future__ import annotations

import numpy as np

from ..loading import STAGE_AFTER, STAGE_BASELINE
from ..stats import runs
from ..stats.after_sample import after_sample_needed, power_reached
from ..stats.capability_change import capability_change
from ..stats.compare import compare
from ..vocab import period_value
from .attempt import attempt
from .results import MetricAnalysis

# The kind of data each test and plan takes, by the metric's effective data type.
TEST_KIND = {
    "continuous": "continuous",
    "subgroups": "continuous",
    "defectives": "defectives",
    "defects": "defects",
}


def compare_periods(
    res: MetricAnalysis, stage: np.ndarray, values: np.ndarray, base: np.ndarray
) -> None:
    """The before/after test and the after points' shift against the baseline's median; *base*
    marks the baseline's points without those set aside, *values* are the plotted points."""
    data, spec = res.data, res.data.spec
    if not (res.has_after and base.any()):
        return
    after = stage == STAGE_AFTER
    b_arr, a_arr, bs, as_ = _compared(res, values, base, after)
    res.comparison = attempt(
        res,
        "comparison",
        compare,
        b_arr,
        a_arr,
        TEST_KIND[data.kind],
        spec.better,
        baseline_sizes=bs,
        after_sizes=as_,
        target=spec.target,
        metric=_subject(spec.name, data.kind),
        unit=spec.unit,
    )
    if res.run is not None:
        res.after_shift = attempt(
            res, "comparison", runs.shift_against, values[after], res.run.median, spec.run_rules
        )


def _compared(
    res: MetricAnalysis, values: np.ndarray, base: np.ndarray, after: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, np.ndarray | None]:
    """What the test compares (baseline, after, and their sizes for counts), said in words in
    ``res.compared`` and ``res.counted``."""
    data, spec = res.data, res.data.spec
    pts = data.points
    if data.kind == "continuous" and spec.rollup is not None:
        # A rolled-up metric compares its period values, the points its charts judge: the
        # rows of one period share that period's conditions and are not independent, as
        # the t-test and the rank test assume (treating them as independent is
        # pseudoreplication, Hurlbert 1984, Ecological Monographs 54(2):187-211); and a
        # period's total or count is no statistic of its rows' own values.
        res.compared = period_value(spec.rollup.period, spec.rollup.statistic, plural=True)
        res.counted = res.compared
        return values[base], values[after], None, None
    if data.kind in ("continuous", "subgroups") and data.values is not None:
        vv, vs = data.values["value"].to_numpy(float), data.values["stage"].to_numpy(int)
        if "aside" in data.values:
            vs = np.where(data.values["aside"].to_numpy(bool), -1, vs)
        res.compared = res.counted = "individual values"
        return vv[vs == STAGE_BASELINE], vv[vs == STAGE_AFTER], None, None
    counts, sizes = pts["count"].to_numpy(float), pts["size"].to_numpy(float)
    # each period's totals: all its items checked, or all its area, pooled
    res.compared = (
        "items checked, pooled over each period"
        if data.kind == "defectives"
        else "defects over the area checked, pooled over each period"
    )
    res.counted = "periods"  # n of these tests counts the periods pooled
    return counts[base], counts[after], sizes[base], sizes[after]


def _subject(name: str, kind: str) -> str:
    """The metric's name as the subject of a sentence: 'the proportion of orders with …'."""
    lowered = name[:1].lower() + name[1:] if name[1:2].islower() else name
    return f"proportion of {lowered}" if kind == "defectives" else lowered


def capability_before_after(res: MetricAnalysis) -> None:
    """Cpk of the baseline against Cpk of the after period, when both periods have one."""
    if len(res.period_histograms) > 1:
        (_, _, cb), (_, _, ca) = res.period_histograms[0], res.period_histograms[-1]
        if cb is not None and ca is not None and cb.cpk is not None and ca.cpk is not None:
            res.capability_change = attempt(
                res, "capability before and after", capability_change, cb, ca
            )


def after_sample(res: MetricAnalysis) -> None:
    """How many after points the comparison's test needs to detect the expected change, at its
    5% level with 80% power, and the power the after period has reached so far.

    Sizes are what the test counts: values (the period values of a rolled-up metric), items
    checked (defectives) or the area of opportunity (defects; each point counts 1 without a
    ``size``); a point's size is the baseline's average per point."""
    data, spec = res.data, res.data.spec
    change = spec.expected_change
    if change is None or data.kind not in TEST_KIND:
        return
    stage = data.points["stage"].to_numpy(int)
    base, after = stage == STAGE_BASELINE, stage == STAGE_AFTER
    if not base.any():
        res.failures.append(("after sample", "no baseline period with data to plan from"))
        return
    kind = TEST_KIND[data.kind]
    level, n1, n2, sd = _plan_inputs(res, kind, base, after)
    per_point = n1 / int(base.sum())
    target = level + float(change)
    refused = _unreachable(kind, change, level, target)
    if refused:
        res.failures.append(("after sample", refused))
        return
    res.after_points = int(after.sum())
    res.after_plan = attempt(
        res,
        "after sample",
        after_sample_needed,
        kind,
        level,
        target,
        n1,
        size_per_point=per_point,
        sd=sd,
    )
    if res.after_plan is not None and n2 > 0:
        res.after_power = attempt(
            res, "after sample", power_reached, kind, level, target, n1, n2, sd=sd
        )


def _plan_inputs(
    res: MetricAnalysis, kind: str, base: np.ndarray, after: np.ndarray
) -> tuple[float, float, float, float | None]:
    """The baseline's level, the baseline's and after period's sizes, and (continuous data) the
    baseline's standard deviation."""
    data, spec = res.data, res.data.spec
    pts = data.points
    if kind == "continuous":
        if spec.rollup is None and data.values is not None:
            vv = data.values["value"].to_numpy(float)
            vs = data.values["stage"].to_numpy(int)
            b, a = vv[vs == STAGE_BASELINE], vv[vs == STAGE_AFTER]
        else:
            vals = pts["value"].to_numpy(float)
            b, a = vals[base], vals[after]
        b = b[np.isfinite(b)]
        a = a[np.isfinite(a)]
        level = float(np.mean(b)) if len(b) else float("nan")
        sd = float(np.std(b, ddof=1)) if len(b) > 1 else None
        return level, float(len(b)), len(a), sd
    counts, sizes = pts["count"].to_numpy(float), pts["size"].to_numpy(float)
    n1, n2 = float(sizes[base].sum()), float(sizes[after].sum())
    level = float(counts[base].sum()) / n1 if n1 > 0 else float("nan")
    return level, n1, n2, None


def _unreachable(kind: str, change: float, level: float, target: float) -> str:
    """Why no after sample is planned when the expected change leaves the possible range of a
    proportion or rate ("" when it does not)."""
    if not (kind == "defectives" and not 0 < target < 1 or kind == "defects" and not target > 0):
        return ""
    what = "proportion" if kind == "defectives" else "rate"
    show = (lambda v: f"{100 * v:.3g}%") if kind == "defectives" else (lambda v: f"{v:.4g}")
    bound = "between 0% and 100%" if kind == "defectives" else "above 0"
    return (
        f"expected_change ({change:g}) takes the baseline {what} "
        f"{show(level)} to {show(target)}, which is not {bound}; no after sample is "
        "planned"
    )
