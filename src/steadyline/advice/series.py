"""What the run and control charts show, in sentences: the signals with their dates, the after
period on its own limits, and the evidence of a change on the control chart by period.

Pure functions: results in, findings out.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..stats.evidence import BETTER, NOT_JUDGED, WORSE, PointEvidence, change_counts
from ..stats.results import ControlChart, RunChartAnalysis, Signal
from .sentences import (
    CHANGE_MARKERS,
    CHANGE_WORDS,
    CLEAR_MARKER,
    OWN_SIGNAL_WORDS,
    SIGNAL_MARKER,
    Finding,
    first_point,
    group_sentence,
    grouped_signals,
)

__all__ = ["change_findings", "control_findings", "own_limit_findings", "run_findings"]


def control_findings(
    chart: ControlChart,
    signals: Sequence[Signal],
    x: Sequence[str],
    rules_label: str,
    stage_names: Sequence[str] | None = None,
) -> list[Finding]:
    if not signals:
        return [
            Finding(
                "clear",
                CLEAR_MARKER,
                f"No point signals by the {rules_label}: the chart shows only routine "
                "variation against these limits.",
            )
        ]
    out = []
    groups = grouped_signals(signals, stage_names)
    periods = sorted({k[0] for k in groups if k[0] and k[0] != "Baseline"})
    for ph in periods:
        in_period = [s for k, v in groups.items() if k[0] == ph for s in v]
        n = len(in_period)
        out.append(
            Finding(
                "signal",
                SIGNAL_MARKER,
                f"{ph}: {n} signal{'s' if n != 1 else ''} against limits computed "
                "from the baseline, so these points no longer behave like the "
                "baseline process; check whether the change is the intended one.",
                first_point(in_period),
            )
        )
    multi = len({k[0] for k in groups}) > 1
    for (period, _c, _r, _d), group in groups.items():
        out.append(
            Finding(
                "signal",
                SIGNAL_MARKER,
                group_sentence(group, x, period=period if multi else ""),
                first_point(group),
                names_points=True,
            )
        )
    return out


def own_limit_findings(signals: Sequence[Signal], x: Sequence[str]) -> list[Finding]:
    """The after period judged on its own centre line and limits: is the new process stable?"""
    if not signals:
        return [
            Finding(
                "clear",
                CLEAR_MARKER,
                "On its own limits the after period shows no signal: the new process is "
                "stable so far.",
            )
        ]
    n = len(signals)
    out = [
        Finding(
            "signal",
            SIGNAL_MARKER,
            f"On its own limits the after period shows {n} signal{'s' if n != 1 else ''} "
            f"(marked “{OWN_SIGNAL_WORDS}”): the new process is not yet stable; look "
            "into these points before reading its capability.",
            first_point(signals),
        )
    ]
    out += [
        Finding(
            "signal",
            SIGNAL_MARKER,
            "After, on its own limits: " + group_sentence(g, x),
            first_point(g),
            names_points=True,
        )
        for g in grouped_signals(signals, None).values()
    ]
    return out


def _take_part(k: int, m: int, what: str) -> str:
    return f"{k} of {m} {what}{'s' if m != 1 else ''} {'takes' if k == 1 else 'take'} part"


_CHANGE_ENDS = {
    BETTER: "on the better side (marked “{w}”): evidence of a change for the better.",
    WORSE: "on the worse side (marked “{w}”): evidence of a change for the worse.",
    NOT_JUDGED: "with no side to judge a direction by (marked “{w}”): evidence of a change, "
    "its direction not judged.",
}
_SPREAD_ENDS = {
    BETTER: "below them, less variation (marked “{w}”): evidence of a change for the better.",
    WORSE: "above them, more variation (marked “{w}”): evidence of a change for the worse.",
    NOT_JUDGED: "with no side to judge a direction by (marked “{w}”).",
}


def change_findings(
    evidence: tuple[PointEvidence, PointEvidence | None],
    chart: ControlChart,
    signals: Sequence[Signal],
) -> list[Finding]:
    """What the control chart by period marks as evidence of a change: the after period's points
    in signals against the baseline's limits carried forward, by direction, in the words and
    glyphs of the chart's legend; then the baseline's own signals, drawn with the diamond."""
    ev_main, ev_sec = evidence
    stage = np.asarray(chart.stage, dtype=int)
    out = _after_change(ev_main, chart)
    out += _outside_change(ev_main, stage)
    if ev_sec is not None and chart.secondary is not None:
        out += _spread_change(ev_sec, chart)
    out += _baseline_signals(chart, signals, stage)
    return out


def _after_change(ev_main: PointEvidence, chart: ControlChart) -> list[Finding]:
    """The after points in signals against the baseline's limits, by direction (or that none
    is)."""
    out = []
    c = change_counts(ev_main, chart.stage, chart.values)
    k = sum(c[d] for d in CHANGE_WORDS)
    if c["points"] and not k:
        out.append(
            Finding(
                "clear",
                CLEAR_MARKER,
                f"None of the {c['points']} after points takes part in a signal "
                "against the baseline's limits: no evidence yet that the process "
                "has changed.",
            )
        )
    for d, end in _CHANGE_ENDS.items():
        if c[d]:
            out.append(
                Finding(
                    f"change-{d.replace(' ', '-')}",
                    CHANGE_MARKERS[d],
                    _take_part(c[d], c["points"], "after point")
                    + " in signals against the baseline's limits "
                    + end.format(w=CHANGE_WORDS[d]),
                )
            )
    return out


def _outside_change(ev_main: PointEvidence, stage: np.ndarray) -> list[Finding]:
    """The points outside both periods that take part in such signals, marked by the
    direction most of them show."""
    outside = ev_main.change[(ev_main.change != "") & (stage != 1)]
    if not len(outside):
        return []
    n = len(outside)
    most = max(CHANGE_WORDS, key=lambda d: int((outside == d).sum()))
    return [
        Finding(
            f"change-{most.replace(' ', '-')}",
            CHANGE_MARKERS[most],
            f"{n} point{'s' if n != 1 else ''} outside both the baseline and the "
            f"after period also take{'s' if n == 1 else ''} part in signals "
            "against the baseline's limits, marked the same way.",
        )
    ]


def _spread_change(ev_sec: PointEvidence, chart: ControlChart) -> list[Finding]:
    """The dispersion chart's after points in signals against the baseline's limits."""
    sec = chart.secondary
    if sec is None:
        return []
    skip = len(chart.values) - len(sec.values)
    c2 = change_counts(
        ev_sec,
        sec.stage if len(sec.stage) == len(sec.values) else chart.stage[skip:],
        sec.values,
    )
    return [
        Finding(
            f"change-{d.replace(' ', '-')}",
            CHANGE_MARKERS[d],
            "On the dispersion chart, "
            + _take_part(c2[d], c2["points"], "after point")
            + " in signals against the baseline's limits "
            + end.format(w=CHANGE_WORDS[d]),
        )
        for d, end in _SPREAD_ENDS.items()
        if c2[d]
    ]


def _baseline_signals(
    chart: ControlChart, signals: Sequence[Signal], stage: np.ndarray
) -> list[Finding]:
    """That the baseline shows signals on its own limits (the project page names them)."""
    offset = len(chart.values) - len(chart.secondary.values) if chart.secondary else 0
    base = [
        s
        for s in signals
        if s.indices and stage[s.indices[0] + (offset if s.chart == "secondary" else 0)] == 0
    ]
    if not base:
        return []
    n = len(base)
    return [
        Finding(
            "signal",
            SIGNAL_MARKER,
            f"The baseline shows {n} signal{'s' if n != 1 else ''} on its own "
            f"limits (marked “{OWN_SIGNAL_WORDS}”); the project page names "
            "them.",
            first_point(base),
        )
    ]


def run_findings(run: RunChartAnalysis, x: Sequence[str], rules_label: str) -> list[Finding]:
    out = [
        Finding(
            "signal",
            SIGNAL_MARKER,
            group_sentence(g, x, line="median"),
            first_point(g),
            names_points=True,
        )
        for g in grouped_signals(run.signals, None).values()
    ]
    if not out:
        out.append(Finding("clear", CLEAR_MARKER, f"No non-random pattern by the {rules_label}."))
    return out
