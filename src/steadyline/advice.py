"""Plain-language reading of the statistics: which points signal, and the rules of thumb.

Pure functions: results in, sentences out. The thresholds below are rules of thumb of the trade;
where no published source fixes the number it is marked "common practice", where it was
recalled from a textbook it is marked "from memory".
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .stats.evidence import BETTER, NOT_JUDGED, WORSE, PointEvidence, change_counts
from .stats.results import Capability, ControlChart, Pareto, RunChartAnalysis, Signal

# Rules of thumb ---------------------------------------------------------------------------------
# A run chart wants 24 or more points for a baseline (common practice; no single source fixes it).
RUN_CHART_MIN_POINTS = 24
# A histogram wants 30 or more values, better 50-100 (common practice; Montgomery and the quality
# handbooks give similar guidance, from memory).
HISTOGRAM_MIN_POINTS = 30
# A column chart reads well with at most 7 categories; collapse the rest (common practice).
COLUMN_MAX_CATEGORIES = 7
# Trial control limits want 20 to 25 subgroups or points (Montgomery, ch. 6, from memory).
CONTROL_MIN_FIT_POINTS = 20
# A box plot of fewer than 5 values says little beyond the values themselves (common practice).
BOX_MIN_POINTS = 5
# More than this share of the baseline's points set aside: a caution (common practice; with a
# quarter removed the remaining points may no longer describe the process the limits are for).
ASIDE_SHARE_MAX = 0.25
# A sentence names the first few dates of a signal and counts the rest: the card's data table
# names them all.
MAX_DATES_LISTED = 3


@dataclass(frozen=True)
class Finding:
    """One sentence under a chart. kind: "signal" (with a marker shape), "change-…" or "clear".
    ``at`` is the index of the first point the sentence concerns (None when none): the card
    orders its sentences by it. ``names_points`` marks a sentence that lists the points of a
    signal: a card short of room leaves those to its data table (whose "signals" column names
    every point) and keeps the sentences that count or sum up."""

    kind: str
    marker: str
    text: str
    at: int | None = None
    names_points: bool = False


SIGNAL_MARKER = "◆"  # the same diamond the charts use for signal points
CLEAR_MARKER = "●"
# The control chart by phase marks evidence of a change in shapes of their own (charts.series:
# a square for better, a cross for worse, a triangle where no direction is judged) and names
# them in its legend with these words; the sentences under it use the same glyphs and words.
CHANGE_MARKERS = {BETTER: "■", WORSE: "✚", NOT_JUDGED: "▲"}
CHANGE_WORDS = {
    BETTER: "baseline limits: change, better",
    WORSE: "baseline limits: change, worse",
    NOT_JUDGED: "baseline limits: change, direction not judged",
}
OWN_SIGNAL_WORDS = "signal on its own period's limits"


def list_dates(labels: Sequence[str]) -> str:
    labels = list(dict.fromkeys(labels))
    if len(labels) <= MAX_DATES_LISTED:
        if len(labels) == 1:
            return labels[0]
        return ", ".join(labels[:-1]) + " and " + labels[-1]
    return ", ".join(labels[:MAX_DATES_LISTED]) + f" and {len(labels) - MAX_DATES_LISTED} more"


# Run-chart rules that judge the series as a whole (how often it crosses its median, how many
# runs it makes): their points are every point of the series, so none is named.
_WHOLE_SERIES = frozenset({"too-few-crossings", "too-few-runs", "too-many-runs"})


def group_sentence(
    group: Sequence[Signal],
    x: Sequence[str],
    what: str = "point",
    phase: str = "",
    line: str = "centre line",
) -> str:
    """One sentence for every occurrence of one rule (on one chart, in one phase); ``line`` is
    what the chart's sides are of (the centre line, or a run chart's median)."""
    sig = group[0]
    points = sorted({i for s in group for i in s.indices})
    dates = list_dates([x[i] for i in points])
    sides = {s.side for s in group if s.side}
    side = ""
    if len(sides) == 1:
        one = sides.pop()
        named = {"above": "above the", "below": "below the", "up": "rising", "down": "falling"}
        if named.get(one, one) not in sig.description:  # else the rule's words name the side
            side = {
                "above": f" (above the {line})",
                "below": f" (below the {line})",
                "up": " (rising)",
                "down": " (falling)",
            }.get(one, "")
    chart = "" if sig.chart == "main" else " on the dispersion chart"
    times = "" if len(group) == 1 else f"{len(group)} times, "
    plural = what if len(points) == 1 else what + "s"
    lead = f"{phase}: " if phase else ""
    if sig.rule in _WHOLE_SERIES or len(points) >= len(x):
        return f"{lead}{sig.description}{side}{chart}."  # the whole series': no list of points
    return f"{lead}{sig.description}{side}{chart}: {times}{len(points)} {plural}, {dates}."


def _first(signals: Sequence[Signal]) -> int | None:
    """The first point any of the signals covers."""
    return min((min(s.indices) for s in signals if len(s.indices)), default=None)


def _grouped(signals: Sequence[Signal], stage_names: Sequence[str] | None):
    groups: dict[tuple, list[Signal]] = {}
    for s in signals:
        phase = stage_names[s.indices[0]] if stage_names and s.indices else ""
        groups.setdefault((phase, s.chart, s.rule, s.description), []).append(s)
    return groups


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
    groups = _grouped(signals, stage_names)
    phases = sorted({k[0] for k in groups if k[0] and k[0] != "Baseline"})
    for ph in phases:
        in_phase = [s for k, v in groups.items() if k[0] == ph for s in v]
        n = len(in_phase)
        out.append(
            Finding(
                "signal",
                SIGNAL_MARKER,
                f"{ph}: {n} signal{'s' if n != 1 else ''} against limits computed "
                "from the baseline, so these points no longer behave like the "
                "baseline process; check whether the change is the intended one.",
                _first(in_phase),
            )
        )
    multi = len({k[0] for k in groups}) > 1
    for (phase, _c, _r, _d), group in groups.items():
        out.append(
            Finding(
                "signal",
                SIGNAL_MARKER,
                group_sentence(group, x, phase=phase if multi else ""),
                _first(group),
                names_points=True,
            )
        )
    return out


def own_limit_findings(signals: Sequence[Signal], x: Sequence[str]) -> list[Finding]:
    """The after phase judged on its own centre line and limits: is the new process stable?"""
    if not signals:
        return [
            Finding(
                "clear",
                CLEAR_MARKER,
                "On its own limits the after phase shows no signal: the new process is "
                "stable so far.",
            )
        ]
    n = len(signals)
    out = [
        Finding(
            "signal",
            SIGNAL_MARKER,
            f"On its own limits the after phase shows {n} signal{'s' if n != 1 else ''} "
            f"(marked “{OWN_SIGNAL_WORDS}”): the new process is not yet stable; look "
            "into these points before reading its capability.",
            _first(signals),
        )
    ]
    out += [
        Finding(
            "signal",
            SIGNAL_MARKER,
            "After, on its own limits: " + group_sentence(g, x),
            _first(g),
            names_points=True,
        )
        for g in _grouped(signals, None).values()
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
    """What the control chart by phase marks as evidence of a change: the after phase's points
    in signals against the baseline's limits carried forward, by direction, in the words and
    glyphs of the chart's legend; then the baseline's own signals, drawn with the diamond."""
    ev_main, ev_sec = evidence
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
    stage = np.asarray(chart.stage, dtype=int)
    outside = ev_main.change[(ev_main.change != "") & (stage != 1)]
    if len(outside):
        n = len(outside)
        most = max(CHANGE_WORDS, key=lambda d: int((outside == d).sum()))
        out.append(
            Finding(
                f"change-{most.replace(' ', '-')}",
                CHANGE_MARKERS[most],
                f"{n} point{'s' if n != 1 else ''} outside both the baseline and the "
                f"after period also take{'s' if n == 1 else ''} part in signals "
                "against the baseline's limits, marked the same way.",
            )
        )
    if ev_sec is not None and chart.secondary is not None:
        sec = chart.secondary
        skip = len(chart.values) - len(sec.values)
        c2 = change_counts(
            ev_sec,
            sec.stage if len(sec.stage) == len(sec.values) else chart.stage[skip:],
            sec.values,
        )
        for d, end in _SPREAD_ENDS.items():
            if c2[d]:
                out.append(
                    Finding(
                        f"change-{d.replace(' ', '-')}",
                        CHANGE_MARKERS[d],
                        "On the dispersion chart, "
                        + _take_part(c2[d], c2["points"], "after point")
                        + " in signals against the baseline's limits "
                        + end.format(w=CHANGE_WORDS[d]),
                    )
                )
    offset = len(chart.values) - len(chart.secondary.values) if chart.secondary else 0
    base = [
        s
        for s in signals
        if s.indices and stage[s.indices[0] + (offset if s.chart == "secondary" else 0)] == 0
    ]
    if base:
        n = len(base)
        out.append(
            Finding(
                "signal",
                SIGNAL_MARKER,
                f"The baseline shows {n} signal{'s' if n != 1 else ''} on its own "
                f"limits (marked “{OWN_SIGNAL_WORDS}”); the project page names "
                "them.",
                _first(base),
            )
        )
    return out


def run_findings(run: RunChartAnalysis, x: Sequence[str], rules_label: str) -> list[Finding]:
    out = [
        Finding(
            "signal",
            SIGNAL_MARKER,
            group_sentence(g, x, line="median"),
            _first(g),
            names_points=True,
        )
        for g in _grouped(run.signals, None).values()
    ]
    if not out:
        out.append(Finding("clear", CLEAR_MARKER, f"No non-random pattern by the {rules_label}."))
    return out


def run_cautions(run: RunChartAnalysis) -> list[str]:
    # The rule set in use is stated in the card's method line; the rest of the notes are cautions.
    out = [n for n in run.notes if not n.startswith("Rules used:")]
    if run.n < RUN_CHART_MIN_POINTS:
        out.append(
            f"Only {run.n} points: a run chart wants {RUN_CHART_MIN_POINTS} or more before "
            "its rules are read with confidence (common practice)."
        )
    return out


def control_cautions(chart: ControlChart) -> list[str]:
    out = list(chart.notes)
    fitted = int(chart.fitted.sum())
    if fitted < CONTROL_MIN_FIT_POINTS:
        out.append(
            f"The limits rest on {fitted} points; with fewer than "
            f"{CONTROL_MIN_FIT_POINTS} treat them as trial limits and recompute as data "
            "comes in."
        )
    if chart.secondary is not None:
        out.extend(n for n in chart.secondary.notes if n not in out)
    return out


def aside_cautions(aside: int, baseline: int) -> list[str]:
    """A caution when a large share of the baseline's points is set aside: the limits then
    describe only what is left, and what is left may no longer be the process."""
    if baseline and aside / baseline > ASIDE_SHARE_MAX:
        return [
            f"{aside} of the baseline's {baseline} points are set aside, more than "
            f"{ASIDE_SHARE_MAX:.0%} (common practice): the limits describe only the rest. "
            "Check that each removed cause explains its points, or collect a fresh "
            "baseline."
        ]
    return []


def histogram_cautions(n: int) -> list[str]:
    if n < HISTOGRAM_MIN_POINTS:
        return [
            f"Only {n} values: a histogram wants {HISTOGRAM_MIN_POINTS} or more before its "
            "shape means much (common practice)."
        ]
    return []


def box_cautions(n: int) -> list[str]:
    if n < BOX_MIN_POINTS:
        return [
            f"Only {n} values: with fewer than {BOX_MIN_POINTS} the box adds little to the "
            "values themselves (common practice)."
        ]
    return []


def column_cautions(n_categories: int) -> list[str]:
    if n_categories > COLUMN_MAX_CATEGORIES:
        return [
            f"{n_categories} categories: more than {COLUMN_MAX_CATEGORIES} bars are hard to "
            "compare; consider merging the small ones (common practice)."
        ]
    return []


def bar_axis_cautions(spec: dict) -> list[str]:
    """Warn when a bar chart's numeric axis does not start at zero (bar length encodes value)."""
    bad = []

    def walk(node):
        if isinstance(node, dict):
            mark = node.get("mark")
            mtype = mark.get("type") if isinstance(mark, dict) else mark
            if mtype == "bar":
                for ch in ("x", "y"):
                    enc = node.get("encoding", {}).get(ch, {})
                    scale = enc.get("scale", {}) if isinstance(enc, dict) else {}
                    dom = scale.get("domain") if isinstance(scale, dict) else None
                    if (
                        isinstance(dom, list)
                        and dom
                        and isinstance(dom[0], int | float)
                        and dom[0] > 0
                    ) or scale.get("zero") is False:
                        bad.append(ch)
            for v in node.values():
                walk(v)
        elif isinstance(node, list):
            for v in node:
                walk(v)

    walk(spec)
    if bad:
        return [
            "The numeric axis of the bars does not start at zero, so bar lengths exaggerate "
            "differences (Few, Show Me the Numbers, from memory)."
        ]
    return []


# A finding or subtitle names at most this many of the vital few, then says how many more: a
# list of hundreds of names is read by no one (common practice).
NAMED_VITAL = 10


def vital_names(vital: Sequence[str]) -> str:
    """The vital few by name: all of them, or the first NAMED_VITAL and how many more."""
    names = [str(v) for v in vital]
    if len(names) <= NAMED_VITAL:
        return ", ".join(names)
    return ", ".join(names[:NAMED_VITAL]) + f" and {len(names) - NAMED_VITAL:,} more"


def pareto_findings(p: Pareto) -> list[Finding]:
    k, n = len(p.vital_few), len(p.categories)
    share = p.cumulative_percent[k - 1] if k else 0.0
    text = (
        f"{k:,} of {n:,} categories ({vital_names(p.vital_few)}) make up {share:.0f}% of the "
        f"total of {p.total:g}."
    )
    return [
        Finding(
            "signal" if k and k <= n / 2 else "clear",
            SIGNAL_MARKER if k <= n / 2 else CLEAR_MARKER,
            text,
        )
    ]


def pareto_cautions(p: Pareto) -> list[str]:
    k, n = len(p.vital_few), len(p.categories)
    if n >= 3 and k > n / 2:
        return [
            "No clear vital few: it takes more than half of the categories to reach "
            f"{p.threshold:.0f}% (the 80/20 split is a heuristic, not a law; common "
            "practice)."
        ]
    return []


def capability_verdict(c: Capability) -> str:
    if c.trustworthy:
        return (
            "The indices can be read: the process is stable on its chart and its values are "
            "consistent with a normal distribution."
        )
    return "Do not rely on these indices yet."


# Measurement system studies --------------------------------------------------------------------
# The published acceptance guide for the measurement system's share (AIAG, *Measurement Systems
# Analysis*, 4th ed.; from memory), in the words the pages use: under 10% acceptable, 10% to
# 30% may be acceptable depending on the use, over 30% not acceptable; and at least 5 distinct
# categories. The bands themselves live in stats.gauge (ADEQUATE_BELOW, INADEQUATE_ABOVE).
GAUGE_WORDS = {
    "adequate": "acceptable",
    "depends on use": "may be acceptable, depending on its use",
    "inadequate": "not acceptable",
}
GAUGE_MARKS = {
    "adequate": ("clear", CLEAR_MARKER),
    "depends on use": ("gauge-depends", "◐"),
    "inadequate": ("gauge-inadequate", "✕"),
}
GAUGE_GUIDE = (
    "the acceptance guide of AIAG's Measurement Systems Analysis, 4th ed.: under 10% "
    "acceptable, 10% to 30% may be acceptable depending on the use, over 30% not "
    "acceptable, and at least 5 distinct categories"
)
GAUGE_DECISION = (
    "Whether to accept this measurement system is decided by your organisation's "
    "own procedures; the guide's bands support that decision, they do not make it."
)
_GAUGE_ORDER = ("adequate", "depends on use", "inadequate")


def gauge_verdict(study) -> str:
    """The study's verdict code: the worse of the bands of its share of the study variation
    and, when both specification limits are given, of the tolerance (a gauge that judges
    parts against the limits must be fine enough for both)."""
    codes = [study.verdict] + ([study.tolerance_verdict] if study.tolerance_verdict else [])
    return max(codes, key=_GAUGE_ORDER.index)


def gauge_shares_text(study) -> str:
    """'28.3% of the study variation, 16.3% of the tolerance'."""
    ms = study.component("measurement system")
    text = f"{ms.study_percent:.1f}% of the study variation"
    if ms.tolerance_percent is not None:
        text += f", {ms.tolerance_percent:.1f}% of the tolerance"
    return text


def gauge_findings(study, unit: str = "") -> list[Finding]:
    """The components card's sentences: the verdict by the guide first, then the distinct
    categories, then which part of the measurement variation is the larger."""
    code = gauge_verdict(study)
    kind, marker = GAUGE_MARKS[code]
    ms = study.component("measurement system")
    out = [
        Finding(
            kind,
            marker,
            f"The measurement system takes {gauge_shares_text(study)}: "
            f"{GAUGE_WORDS[code]} by the guide (under 10% acceptable, 10% to 30% "
            "depending on the use, over 30% not).",
        )
    ]
    ndc = study.distinct_categories
    enough = ndc >= 5
    out.append(
        Finding(
            "clear" if enough else "gauge-depends",
            CLEAR_MARKER if enough else "◐",
            f"It tells the parts apart in {ndc} distinct "
            f"categor{'y' if ndc == 1 else 'ies'}"
            + (
                "; the guide asks for at least 5."
                if not enough
                else " (the guide asks for at least 5)."
            ),
        )
    )
    rep, rpd = study.component("repeatability"), study.component("reproducibility")
    if ms.variance > 0:
        larger, smaller = (rep, rpd) if rep.variance >= rpd.variance else (rpd, rep)
        what = {
            "repeatability": "repeatability (one appraiser measuring the same part again)",
            "reproducibility": "reproducibility (between appraisers)",
        }
        out.append(
            Finding(
                "clear",
                CLEAR_MARKER,
                f"Most of the measurement variation is {what[larger.source]}: "
                f"{larger.study_percent:.1f}% of the study variation, against "
                f"{smaller.study_percent:.1f}% for {smaller.source}.",
            )
        )
    return out


def appraiser_range_findings(ranges, unit: str = "") -> list[Finding]:
    """A sentence per appraiser with a range above its upper limit, naming the parts; or one
    sentence that none is."""
    out = []
    for r in ranges:
        if not r.beyond:
            continue
        parts = [r.parts[i] for i in r.beyond]
        shown = ", ".join(
            f"{p} ({_num(r.ranges[i], unit)})" for p, i in zip(parts, r.beyond, strict=True)
        )
        out.append(
            Finding(
                "signal",
                SIGNAL_MARKER,
                f"{r.appraiser}: the range of {'part' if len(parts) == 1 else 'parts'}"
                f" {shown} is above the upper limit {_num(r.upper, unit)}: these "
                "trials disagree more than the appraiser's others (a slip in reading "
                "or recording, or a part hard to measure); check before relying on "
                "the study.",
                at=r.beyond[0],
                names_points=True,
            )
        )
    if not out:
        out.append(
            Finding(
                "clear",
                CLEAR_MARKER,
                "No range is above its appraiser's upper "
                "limit: each appraiser's trials agree with each other consistently.",
            )
        )
    return out


def appraiser_findings(study, means: dict[str, float], unit: str = "") -> list[Finding]:
    """Whether the appraisers' means differ, by the ANOVA's F test of the model used (the
    reduced one when the interaction was pooled), and whether they rank the parts alike."""
    from .stats.compare import format_p_value

    table = study.reduced_anova if study.interaction_pooled else study.anova
    row = next(r for r in table if r.source == "appraiser")
    listed = ", ".join(f"{name} {_num(v, unit)}" for name, v in means.items())
    p = format_p_value(row.p_value)
    if row.p_value is not None and row.p_value < 0.05:
        out = [
            Finding(
                "gauge-depends",
                "◐",
                f"The appraisers' means differ ({listed}; F test, "
                f"{p}): they read the same parts differently, the reproducibility of the "
                "components chart.",
            )
        ]
    else:
        out = [
            Finding(
                "clear",
                CLEAR_MARKER,
                f"The appraisers' means are close ({listed}; F "
                f"test, {p}): no clear difference between appraisers.",
            )
        ]
    if not study.interaction_pooled:
        out.append(
            Finding(
                "gauge-depends",
                "◐",
                "The appraisers do not rank the parts alike "
                f"(part × appraiser interaction, "
                f"{format_p_value(study.interaction_p_value)}): their lines cross on "
                "the chart.",
            )
        )
    return out


def _num(v: float, unit: str) -> str:
    """Four significant figures, trailing zeros kept (120.0, 0.9100), whole numbers whole."""
    if v == 0 or not np.isfinite(v):
        text = f"{v:g}"
    else:
        decimals = max(0, 3 - int(np.floor(np.log10(abs(v)))))
        text = f"{v:.{decimals}f}"
    return f"{text} {unit}".strip()
