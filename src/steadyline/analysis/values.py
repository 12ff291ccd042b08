"""The displays of a metric's individual values: the baseline's histogram, box plot, normality
and capability, and for the history page each period's, drawn on one set of bins.

Continuous and subgrouped data only. A rolled-up metric's charts judge period values, but these
displays describe the single items, which the specification limits apply to.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..loading import STAGE_AFTER, STAGE_BASELINE, STAGE_NAMES
from ..stats import distribution
from ..stats.capability import capability as capability_of
from ..stats.results import BoxSummary, Capability, Histogram, NormalityTest
from .attempt import attempt
from .notes import values_note
from .results import AFTER_OWN_LIMITS_MIN, MetricAnalysis


def value_displays(res: MetricAnalysis) -> None:
    """The baseline's box plot, histogram, normality and capability, then each period's; the
    charts' signals (``res.signals``, ``res.after_signals``) must be known already, since
    capability is judged only on a stable process."""
    data, spec = res.data, res.data.spec
    if data.values is None or not len(data.values):
        return
    vals = data.values["value"].to_numpy(float)
    vstage = data.values["stage"].to_numpy(int)
    if "aside" in data.values:
        # the baseline describes the process without the removed cause: the values of the
        # points set aside are left out of its histogram, box plot and capability
        vaside = data.values["aside"].to_numpy(bool)
        res.values_aside = int((vaside & (vstage == STAGE_BASELINE)).sum())
        vstage = np.where(vaside, -1, vstage)
    vbase = vals[vstage == STAGE_BASELINE] if (vstage == STAGE_BASELINE).any() else vals
    res.box = attempt(res, "box plot", distribution.box_summary, vbase, spec.quartiles)
    res.histogram = attempt(res, "histogram", distribution.histogram, vbase, spec.bins)
    if len(vbase) >= distribution.AD_MIN_POINTS:
        res.normality = attempt(res, "capability", distribution.anderson_darling, vbase)
    if spec.spec_lower is not None or spec.spec_upper is not None:
        res.capability = _capability(res, vbase, STAGE_BASELINE, res.normality)
    _period_displays(res, vals, vstage)


def _period_displays(res: MetricAnalysis, vals: np.ndarray, vstage: np.ndarray) -> None:
    """Each period's box plot, histogram and capability, for the history page."""
    spec = res.data.spec
    # One set of bins for every period: the baseline's, extended on the same grid to cover
    # the after values (given edges stay as given: the user chose their range).
    given = isinstance(spec.bins, tuple)
    grid = res.histogram.edges if res.histogram is not None else None
    if grid is not None and not given:
        grid = distribution.extend_edges(grid, vals[vstage == STAGE_AFTER])
    for st in (STAGE_BASELINE, STAGE_AFTER):
        sel = vals[vstage == st]
        if len(sel) == 0:
            continue
        name = STAGE_NAMES[st]
        b: BoxSummary | None
        if st == STAGE_BASELINE and res.box is not None:
            b = res.box  # the same baseline values as the box plot above
        else:
            b = attempt(res, "history", distribution.box_summary, sel, spec.quartiles)
        if b is not None:
            res.period_boxes.append((name, b))
        h = _period_histogram(res, sel, st, grid, given)
        if spec.spec_lower is None and spec.spec_upper is None:
            c = None
        elif st == STAGE_BASELINE:
            c = res.capability  # the same values as the baseline's own capability above
        else:
            c = _capability(res, sel, st)
        if h is not None:
            res.period_histograms.append((name, h, c))


def _period_histogram(
    res: MetricAnalysis,
    sel: np.ndarray,
    stage: int,
    grid: tuple[float, ...] | None,
    given: bool,
) -> Histogram | None:
    """One period's histogram on the common *grid* (the baseline's bins, extended), its rule
    named as the baseline's."""
    base = res.histogram  # not None whenever grid is not None
    if stage == STAGE_BASELINE and base is not None and grid is not None and grid == base.edges:
        return base  # the baseline's own bins serve every period
    h = attempt(
        res,
        "history",
        distribution.histogram,
        sel,
        grid if grid is not None else res.data.spec.bins,
    )
    if h is None or grid is None or given or base is None:
        return h
    return replace(
        h,
        rule=base.rule,
        rule_label=(
            f"{base.rule_label}, the baseline's bins"
            + ("" if grid == base.edges else ", extended on the same grid")
        ),
    )


def _sigma_within(res: MetricAnalysis, stage: int) -> float | None:
    """Within-subgroup sigma of the individual values, from the chart fitted on that stage."""
    chart = res.control if stage == STAGE_BASELINE else res.after_limits
    if chart is None or chart.process_sigma is None:
        return None
    if res.data.spec.rollup is not None:
        return None  # sigma of rolled-up means is not the sigma of single values
    if stage == STAGE_BASELINE:
        return chart.process_sigma
    # the per-period chart fitted each stage on its own points and keeps each stage's sigma
    sigma = chart.extras.get(f"process_sigma_stage_{stage}")
    return None if sigma is None else float(sigma)


def _capability(
    res: MetricAnalysis, vals: np.ndarray, stage: int, normality: NormalityTest | None = None
) -> Capability | None:
    """Capability of *vals*; *normality*, when given, is the Anderson–Darling result already
    computed for these same values."""
    spec = res.data.spec
    stable, reason = _stability(res, stage)
    no_sigma = None
    if res.data.spec.rollup is not None:
        no_sigma = (
            f"{values_note(res.data.spec, len(vals))} The control chart judges the "
            "period values, so the within-subgroup sigma of single values is not "
            "known; only Pp and Ppk (overall sigma) are given."
        )
    if normality is None and len(vals) >= distribution.AD_MIN_POINTS:
        normality = attempt(res, "capability", distribution.anderson_darling, vals)
    return attempt(
        res,
        "capability",
        capability_of,
        vals,
        _sigma_within(res, stage),
        lsl=spec.spec_lower,
        usl=spec.spec_upper,
        target=spec.target,
        stable=stable,
        normality=normality,
        unstable_reason=reason,
        no_sigma_reason=no_sigma,
    )


def _stability(res: MetricAnalysis, stage: int) -> tuple[bool, str | None]:
    """Whether the control chart shows the period stable, and if not, why: the baseline on its
    own limits, a later period on the limits of its own points (stable when there is no chart)."""
    chart = res.control
    if chart is not None and stage == STAGE_BASELINE:
        here = (np.asarray(chart.stage) == stage).tolist()  # per point: in this period
        own = [s for s in res.signals if any(map(here.__getitem__, s.indices))]
        if own:
            return False, (
                f"{len(own)} signal{'' if len(own) == 1 else 's'} on the control chart "
                "in this period"
            )
    elif chart is not None:
        # a later period is judged on its own limits (those of the baseline would flag the
        # very change the project made)
        if res.after_limits is None:
            return False, (
                f"the period has too few points for limits of its own "
                f"({AFTER_OWN_LIMITS_MIN} are needed), so its stability is not yet judged"
            )
        if res.after_signals:
            n = len(res.after_signals)
            return False, (
                f"{n} signal{'' if n == 1 else 's'} against the period's own control limits"
            )
    return True, None
