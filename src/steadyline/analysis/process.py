"""One process metric's data -> every statistic its displays need (``analyse``), and the
charts of its points in time: the run chart, the control chart with its signals, and the after
period's own limits.

This is the seam between loading (pandas frames) and the pure statistics (arrays in, results
out). It decides which displays fit the metric's data type and hands the rest to the modules
beside it: categories, the individual values' displays, the comparisons before/after and the
business figures. A failing display becomes a sentence (``attempt``), not a failed metric.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import cast

import numpy as np

from ..loading import STAGE_AFTER, STAGE_BASELINE, STAGE_NAMES, STAGE_OTHER, MetricData
from ..stats import control, rules, runs
from ..stats.choice import choose_chart
from ..stats.evidence import point_evidence
from ..stats.results import ChartChoice, ControlChart, Signal, StatsError
from ..vocab import PeriodKind
from .attempt import attempt
from .before_after import after_sample, capability_before_after, compare_periods
from .business import business_figures
from .categories import analyse_categories
from .results import AFTER_OWN_LIMITS_MIN, MetricAnalysis
from .values import value_displays


def analyse(data: MetricData) -> MetricAnalysis:
    """Every statistic that fits the metric's data. The order matters: capability is judged
    on the control chart's signals, the business figures come from the periods' capability."""
    res = MetricAnalysis(data)
    if data.kind == "categories":
        analyse_categories(res)
        return res
    pts = data.points
    stage = pts["stage"].to_numpy(int)
    # labels are text already; read through numpy (iterating a pandas string column value by
    # value costs more than the rest of this function's bookkeeping)
    res.x = tuple(map(str, pts["label"].to_numpy(dtype=object).tolist()))
    res.stage_names = period_names(stage)
    values = pts["value"].to_numpy(float)
    base = stage == STAGE_BASELINE
    _set_aside(res)
    kept = base if res.aside is None else base & ~res.aside  # the baseline without them
    _run_chart(res, values, kept)
    _control_chart(res, stage)
    value_displays(res)
    # Before / after: the baseline without the points set aside, as its charts describe it.
    compare_periods(res, stage, values, kept)
    business_figures(res)
    capability_before_after(res)
    after_sample(res)
    return res


def _set_aside(res: MetricAnalysis) -> None:
    """Which points are set aside (``set_aside`` in project.toml), and how many each entry
    covers."""
    pts, spec = res.data.points, res.data.spec
    if "aside" in pts:
        res.aside = pts["aside"].to_numpy(bool)
        days = pts["period"].to_numpy().astype("datetime64[D]")
        res.aside_counts = tuple(
            int(((days >= np.datetime64(e.start, "D")) & (days <= np.datetime64(e.end, "D"))).sum())
            for e in spec.set_aside
        )


def _run_chart(res: MetricAnalysis, values: np.ndarray, kept: np.ndarray) -> None:
    """The run chart: the median of the baseline is the centre line carried over later points;
    the points set aside are left out of it, as they are of the control limits."""
    base_vals = values[kept] if kept.any() else values
    res.run = attempt(
        res,
        "run chart",
        runs.analyse_runs,
        values,
        res.data.spec.run_rules,
        median=float(np.median(base_vals)) if len(base_vals) else None,
        set_aside=res.aside,
    )


def _control_chart(res: MetricAnalysis, stage: np.ndarray) -> None:
    """The control chart that fits the data, its signals, the after period's own limits (with
    enough after points) and the evidence of change per point."""
    data, spec = res.data, res.data.spec
    res.choice = attempt(res, "control chart", _choose, data)
    if res.choice is None:
        return
    res.control = attempt(res, "control chart", _control, res.choice.kind, data, stage, spec.limits)
    if res.control is None:
        return
    res.signals = tuple(rules.detect_signals(res.control, spec.signal_rules))
    if res.has_after and int((stage == STAGE_AFTER).sum()) >= AFTER_OWN_LIMITS_MIN:
        res.after_limits = attempt(
            res, "history", _control, res.choice.kind, data, stage, "per-period"
        )
        if res.after_limits is not None:
            res.after_signals = (
                attempt(res, "history", _after_signals, res.after_limits, spec.signal_rules) or ()
            )
    # also without after data: the history page shows every metric of its project
    res.evidence = point_evidence(
        res.control, res.signals, res.after_signals, spec.better, spec.target
    )


def period_names(stage: np.ndarray) -> tuple[str, ...]:
    """Each point's period by its kind of period (``vocab.PeriodKind``), capitalised as the
    charts' bands name it: a point in neither period is "Before the baseline" before the first
    baseline point, "After the after period" past an after point, else "Between periods"."""
    names = list(map(STAGE_NAMES.__getitem__, stage.tolist()))
    other = stage == STAGE_OTHER
    if other.any():
        base = np.flatnonzero(stage == STAGE_BASELINE)
        after = np.flatnonzero(stage == STAGE_AFTER)
        first_base = int(base[0]) if len(base) else len(stage)
        first_after = int(after[0]) if len(after) else len(stage)
        for i in np.flatnonzero(other).tolist():
            kind = (
                PeriodKind.BEFORE
                if i < first_base and i < first_after
                else PeriodKind.LATER
                if i > first_after
                else PeriodKind.BETWEEN
            )
            names[i] = kind.label[:1].upper() + kind.label[1:]
    return tuple(names)


def _control(kind: str, data: MetricData, stage: np.ndarray, limits: str) -> ControlChart:
    """The control chart of *kind* on the metric's points, with *limits* from the baseline or
    per period."""
    pts = data.points
    # points set aside are left out of every fit (the revised trial limits of phase I)
    aside = pts["aside"].to_numpy(bool) if "aside" in pts else None
    # a rolled-up series starts a new segment after missing periods: a moving range never
    # spans that gap (the line breaks there and the limits do not use that range either)
    segment = pts["segment"].to_numpy(np.int64) if "segment" in pts else None
    if kind == "xmr":
        return control.individuals(
            pts["value"].to_numpy(float),
            stage=stage,
            limits=limits,
            segment=segment,
            set_aside=aside,
        )
    if kind in ("xbar-r", "xbar-s"):
        if data.subgroups is None:  # the chart is chosen for subgrouped data only
            raise StatsError(f"the {kind} chart needs the values of each subgroup")
        # control takes the loader's float arrays as they are (its fast path), though its
        # annotation names only sequences of numbers
        groups = cast("Sequence[Sequence[float]]", data.subgroups)
        xbar = control.xbar_r if kind == "xbar-r" else control.xbar_s
        return xbar(groups, stage=stage, limits=limits, set_aside=aside)
    counts = pts["count"].to_numpy(float)
    sizes = pts["size"].to_numpy(float)
    if kind in ("laney-p", "laney-u"):
        laney = control.laney_p if kind == "laney-p" else control.laney_u
        return laney(counts, sizes, stage=stage, limits=limits, segment=segment, set_aside=aside)
    fns = {"p": control.p_chart, "u": control.u_chart}
    if kind in fns:
        return fns[kind](counts, sizes, stage=stage, limits=limits, set_aside=aside)
    if kind == "np":
        return control.np_chart(counts, sizes, stage=stage, limits=limits, set_aside=aside)
    if kind == "c":
        return control.c_chart(counts, stage=stage, limits=limits, set_aside=aside)
    raise StatsError(f"unknown chart {kind!r}")


def _choose(data: MetricData) -> ChartChoice:
    """The chart that fits the data, or the one the metric names (``chart``), with the reason."""
    spec = data.spec
    override = None if spec.chart == "auto" else spec.chart
    pts = data.points
    if data.kind == "continuous":
        return choose_chart("continuous", override=override)
    if data.kind == "subgroups":
        sizes = [len(g) for g in data.subgroups or []]
        return choose_chart("continuous", subgroup_sizes=sizes, override=override)
    # the overdispersion check is made on the points the limits are fitted to, as the chart's
    # own sigma_z is: the baseline, without the points set aside, no moving range across a gap
    return choose_chart(
        data.kind,
        sizes=pts["size"].to_numpy(float),
        counts=pts["count"].to_numpy(float),
        override=override,
        stage=pts["stage"].to_numpy(int),
        segment=pts["segment"].to_numpy(np.int64) if "segment" in pts else None,
        set_aside=pts["aside"].to_numpy(bool) if "aside" in pts else None,
    )


def _after_signals(chart: ControlChart, rule_set: str) -> tuple[Signal, ...]:
    """Signals of the after period's points against the after period's own limits."""
    return tuple(rules.detect_signals(chart, rule_set, only_stage=STAGE_AFTER))
