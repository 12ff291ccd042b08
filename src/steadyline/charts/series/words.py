"""The sentences and titles of a series chart: the period the limits come from, the signals
found, the change marks of a chart by period, the y-axis title and the chart's name.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ...stats.evidence import PointEvidence, change_counts
from ...stats.results import ControlChart, Signal
from ...vocab import chart_name, control_chart_kind, is_proportion_unit, items_of, proportion_unit
from ..base.numbers import plural, titled
from ..base.periods import stage_runs
from ..base.types import SeriesContext
from .marks import _CHANGES


def _when(x: str) -> str:
    """A point's time as a reader writes it: '2026-02-02 14:53' for '2026-02-02T14:53:00'."""
    day, sep, clock = x.partition("T")
    if not sep:
        return x
    return f"{day} {clock[:5] if clock.endswith(':00') and len(clock) == 8 else clock}"


def _fitted_sentence(
    ctx: SeriesContext, fitted: np.ndarray, aside: np.ndarray | None = None
) -> str:
    """The period(s) the limits come from; with ``aside``, the points set aside are counted
    in the period they lie in ("(50 points, 3 set aside)"): that period is named whole."""
    if aside is not None:
        fitted = np.asarray(fitted, dtype=bool) | aside
    mask = [bool(b) for b in np.asarray(fitted, dtype=bool)]
    n = len(mask)

    def but(a: int, b: int) -> str:
        k = 0 if aside is None else int(np.count_nonzero(aside[a : b + 1]))
        return f", {_aside_words(k)}" if k else ""

    if n and all(mask):
        span = f"{_when(ctx.x[0])} to {_when(ctx.x[-1])}"
        return f"limits from all {n} points ({span}{but(0, n - 1)})"
    if not any(mask):
        return "limits given in advance, not computed from these points"
    parts = []
    for a, b, on in stage_runs(mask):
        if not on:
            continue
        name = ctx.stage[a]
        span = f"{_when(ctx.x[a])} to {_when(ctx.x[b])}" if b > a else _when(ctx.x[a])
        count = plural(b - a + 1, "point") + but(a, b)
        parts.append(f"{name}, {span} ({count})" if name else f"{span} ({count})")
    return "limits from " + "; ".join(parts)


def _aside_words(k: int) -> str:
    """The subtitle's words for the points set aside: '3 set aside'."""
    return f"{k} set aside"


def _signals_sentence(signals: Sequence[Signal], max_kinds: int | None = None) -> str:
    """'3 signals: beyond the limits (2); 8 in a row ...', listing at most ``max_kinds`` kinds."""
    if not signals:
        return "no signals"
    counts: dict[str, int] = {}
    for s in signals:
        counts[s.description] = counts.get(s.description, 0) + 1
    parts = [f"{d} ({c})" if c > 1 else d for d, c in counts.items()]
    if max_kinds is not None and len(parts) > max_kinds:
        rest = len(parts) - max_kinds
        parts = parts[:max_kinds] + [f"and {plural(rest, 'more kind')} (see the data table)"]
    return f"{plural(len(signals), 'signal')}: " + "; ".join(parts)


def _kind_name(chart: ControlChart) -> str:
    """'Xbar-R chart', 'Laney p′ chart': the vocabulary's name of the chart's kind."""
    sec = chart.secondary.kind if chart.secondary is not None else None
    try:
        return control_chart_kind(chart.kind, sec).label
    except ValueError:  # a kind the vocabulary does not hold: the chart's own label
        return chart_name(chart.label)


def _measure_title(ctx: SeriesContext, kind: str) -> str:
    """A series chart's y-axis title: the measure its points are, with their unit (never the
    chart's name). A p chart plots the proportion of the items checked (``ctx.unit`` says so),
    an np chart the number of them, an X-bar chart the subgroup means."""
    if kind == "xbar":
        return titled(f"{ctx.metric_name}, subgroup mean", ctx.unit)
    if kind == "np":
        return titled(ctx.metric_name, items_of(ctx.unit))
    if kind in ("p", "laney-p") or is_proportion_unit(ctx.unit):
        # the metric's name names the items already ("Frames with weld porosity"): the axis
        # says "proportion" (never a count's unit on a share); sentences say "7% of frames"
        return titled(ctx.metric_name, proportion_unit(""))
    return titled(ctx.metric_name, ctx.unit)


def _change_sentence(evidence: PointEvidence, chart: ControlChart) -> str:
    """The subtitle's account of the change marks: 'against the baseline's limits 12 of 14
    after points signal a change: 12 better'."""
    c = change_counts(evidence, chart.stage, chart.values)
    k = sum(c[d] for d in _CHANGES)
    if not c["points"]:
        return "no after points"
    if not k:
        return f"against the baseline's limits no after point signals a change (of {c['points']})"
    parts = [f"{c[d]} {d}" for d in _CHANGES if c[d]]
    return (
        f"against the baseline's limits {k} of {plural(c['points'], 'after point')} "
        f"signal a change: " + ", ".join(parts)
    )


def _own_signals_sentence(signals, own_signals, evidence) -> str:
    """The subtitle's account of the diamonds: signals judged on their own period's limits."""
    ev_main, ev_sec = evidence
    own_judged = []
    for s in signals:
        ev = ev_sec if s.chart == "secondary" else ev_main
        if ev is not None and s.indices and not ev.carried[s.indices[0]]:
            own_judged.append(s)
    own_judged += list(own_signals)
    return "on their own period's limits " + _signals_sentence(own_judged, max_kinds=2)


def _last_limits(labels: list[dict]) -> str:
    """The limits at the last point, from the lines' end labels: 'LCL 1, CL 2, UCL 3'."""
    last = {lab["kind"]: lab["text"] for lab in labels}
    return ", ".join(last[k] for k in ("LCL", "centre line", "UCL") if k in last)
