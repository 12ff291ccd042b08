"""One metric's section of the project page and its results.json entry
(:func:`metric_section`): the facts above its cards (data, periods, direction, specification,
rules), its cards in the page's order (:mod:`steadyline.site.metric_cards`), its capability
block, and its entry (:mod:`steadyline.site.metric_entry`). The notebook shows the same.
"""

from __future__ import annotations

from pathlib import Path

from .. import advice
from ..analysis import MetricAnalysis
from ..charts import SeriesContext
from ..config import MetricSpec, ProjectSpec
from ..errors import Problem
from ..vocab import DataType, RunRules, SignalRules, period_value
from .capability_view import capability_view
from .cards import Displays
from .drawn import by_period_brief
from .figures_text import fmt
from .metric_cards import (
    aside_values_text,
    box_card,
    category_cards,
    histogram_card,
    series_cards,
)
from .metric_entry import add_result_figures, points_json, result_head
from .studies import business_fact, measured_line, plan_fact

BETTER_TEXT = {
    "lower": "lower values",
    "higher": "higher values",
    "target": "values close to the target",
}


def metric_section(
    a: MetricAnalysis,
    spec: ProjectSpec,
    files: dict[str, bytes],
    metric_problems: list[Problem],
    ctx: SeriesContext | None,
) -> tuple[dict, dict]:
    """The page section and the results.json entry of one metric; ``ctx`` is its series layout
    (None for categories)."""
    m = a.spec
    d = Displays(spec.slug, m.id, files)
    # one name per rule set, the vocabulary's, on every card, finding and chart of the page
    labels = (SignalRules(m.signal_rules).label, RunRules(m.run_rules).label)
    result = result_head(a)
    open_signals = baseline_signals = 0
    if a.effective_type != "categories":
        assert ctx is not None  # a time series has its layout
        result["points"] = points_json(a, ctx)
        open_signals, baseline_signals = series_cards(d, a, ctx, labels, result)
    if a.histogram is not None:
        histogram_card(d, a, result)
    if a.box is not None:
        box_card(d, a, result)
    if a.effective_type == "categories":
        category_cards(d, a, result)
    add_result_figures(a, result)
    warnings = [c for card in d.cards for c in card["cautions"]]
    warnings += [f"{disp}: {msg}" for disp, msg in a.failures]
    result["warnings"] = warnings
    result["failures"] = [{"display": disp, "message": msg} for disp, msg in a.failures]
    result["open_signals"] = open_signals
    section = section_facts(a, labels) | {
        "displays": d.cards,
        "capability": capability_block(a),
        "open_signals": open_signals,
        "baseline_signals": baseline_signals,
        "problems": [{"severity": "warning", "text": f"{disp}: {msg}"} for disp, msg in a.failures]
        + [{"severity": p.severity, "text": p.format()} for p in metric_problems],
    }
    return section, result


def section_facts(a: MetricAnalysis, labels: tuple[str, str]) -> dict:
    """The facts above a metric's cards: its data, periods, direction, specification, rules."""
    m = a.spec
    return {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "broken": False,
        "study": False,
        "gauge": None,  # the study that checks its measurements (set by the caller)
        "data_text": f"{DataType(m.type).label} from {Path(m.file_rel).name} "
        f"({a.rows_read} rows{_rollup_text(m)}"
        f"{by_period_brief(a)})",
        "choice": a.choice.reason if a.choice else "",
        "periods_text": periods_text(a),
        "better_text": BETTER_TEXT[m.better]
        + (f" (target {fmt(m.target, m.unit)})" if m.target is not None else ""),
        "spec_text": spec_text(m),
        "study_facts": [f for f in (business_fact(a), plan_fact(a)) if f is not None],
        "rules_text": (
            f"{labels[0]} on the control chart; {labels[1]} on the run chart"
            if a.effective_type != "categories"
            else "Pareto: the smallest set of categories reaching 80% set apart"
        ),
    }


def capability_block(a: MetricAnalysis) -> dict | None:
    """The capability block of the section (None without capability): its verdict, reasons
    and tiles, with what the baseline's values leave out and the expected yield."""
    c = a.capability
    if c is None:
        return None
    m = a.spec
    view = capability_view(c, m.unit)
    cap = {
        "trustworthy": c.trustworthy,
        "verdict": advice.capability_verdict(c),
        "reasons": list(c.reasons),
        "view": view,
    }
    if aside_values_text(a):
        view["basis"] = [*view["basis"], aside_values_text(a)]
    if a.business and a.business[0][1].kind == "measured":
        # the expected yield beside the expected share outside it is the complement of
        view["tiles"][-1]["lines"][-1:-1] = measured_line(a.business[0][1], m.sigma_level)
    return cap


def periods_text(a: MetricAnalysis) -> str:
    m = a.spec
    if m.baseline is None:
        return "no baseline period set: all data is treated as baseline"
    text = f"baseline {m.baseline.label()}"
    if m.after:
        text += f"; after {m.after.label()}"
    return text


def spec_text(m: MetricSpec) -> str:
    parts = []
    if m.spec_lower is not None:
        parts.append(f"lower {fmt(m.spec_lower, m.unit)}")
    if m.spec_upper is not None:
        parts.append(f"upper {fmt(m.spec_upper, m.unit)}")
    if m.target is not None:
        parts.append(f"target {fmt(m.target, m.unit)}")
    return ", ".join(parts)


def _rollup_text(m: MetricSpec) -> str:
    if m.rollup is None:
        return ""
    return f", rolled up into {period_value(m.rollup.period, m.rollup.statistic, plural=True)}"
