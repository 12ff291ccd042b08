"""What the index says of a project: its entry (:func:`index_entry`) with the headline metric's
sentence and sparkline, the facts its status is judged from (:func:`headline_facts`, see
:mod:`steadyline.status`), its figures for the index's CSV download (:func:`headline_figures`),
and how fresh its data are (:func:`data_to`).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..analysis import AFTER_OWN_LIMITS_MIN, MetricAnalysis
from ..config import ProjectSpec
from ..errors import Problem
from ..stats.compare import format_p_value
from ..status import HeadlineFacts
from ..vocab import percentage_points
from .common import PHASE_LABEL
from .figures_text import fmt, pct
from .index import csv_text
from .notices import NotBuilt
from .serialise import rounded_number
from .tables import safe_cell


def data_to(analyses: list[MetricAnalysis]) -> str:
    """How fresh a project's data are: the last period of any of its metrics (a date), or ""."""
    ends = [p.max() for a in analyses if (p := a.point_periods) is not None and len(p)]
    return str(np.datetime_as_string(max(ends), unit="D")) if ends else ""


def index_entry(
    spec: ProjectSpec,
    analyses: list[MetricAnalysis],
    sections: list[dict],
    page_warnings: list[Problem],
    has_history: bool,
    fresh: str = "",
) -> dict:
    """The project's card on the index. *analyses*: the metrics built; a headline metric not
    among them (its data have errors) is named on the card as not built. *page_warnings*: the
    metadata's input notes, listed at the top of the project page."""
    headline = headline_card(spec, analyses, sections)
    signals = sum(s["open_signals"] for s in sections)
    baseline_signals = sum(s["baseline_signals"] for s in sections)
    # what the project page shows as cautions: each card's marked cautions (△; the method
    # notes under "How it is made" are no cautions), the warnings under each metric's name and
    # the metadata's input notes
    warnings = sum(len(c["cautions_shown"]) for s in sections for c in s["displays"])
    warnings += sum(p["severity"] == "warning" for s in sections for p in s.get("problems", ()))
    warnings += sum(p.severity == "warning" for p in page_warnings)
    text = " ".join(
        [
            spec.title,
            spec.owner,
            spec.phase,
            spec.problem,
            *spec.tags,
            *(a.spec.name for a in analyses),
        ]
    )
    return {
        "slug": spec.slug,
        "title": spec.title,
        "owner": spec.owner,
        "phase": spec.phase,
        "phase_label": PHASE_LABEL[spec.phase],
        "tags": list(spec.tags),
        "href": f"projects/{spec.slug}/index.html",
        "history_href": f"projects/{spec.slug}/history.html",
        "has_history": has_history,
        "headline": headline,
        "signals": signals,
        "baseline_signals": baseline_signals,
        "warnings": warnings,
        "search_text": text,
        "broken": False,
        "problem_count": 0,
        "data_to": fresh,
        "metrics": len(analyses),
        "own_limits": any(a.after_limits is not None for a in analyses),
        "after_signals": sum(len(a.after_signals) for a in analyses),
    }


def headline_card(
    spec: ProjectSpec, analyses: list[MetricAnalysis], sections: list[dict]
) -> dict[str, str]:
    """The headline metric on the project's card: its name, its one sentence and sparkline,
    or, when its data have errors, how many problems keep it from being built."""
    head = next((a for a in analyses if a.spec.id == spec.headline.id), None)
    if head is None:
        n = next(s["problem_count"] for s in sections if s["id"] == spec.headline.id)
        headline = {
            "name": spec.headline.name,
            "spark": "",
            "spark_split": "",
            "text": f"Not built: {n} problem{'' if n == 1 else 's'} in its data.",
        }
    else:
        headline = {
            "name": head.spec.name,
            "text": headline_text(head),
            "spark": "",
            "spark_split": "",
        }
        if head.effective_type != "categories":
            headline["spark"], headline["spark_split"] = sparkline(head)
    return headline


def headline_facts(a: MetricAnalysis | NotBuilt) -> HeadlineFacts:
    """What the project's status is judged from (see steadyline.status)."""
    if isinstance(a, NotBuilt):
        return HeadlineFacts(
            metric_id=a.spec.id,
            metric_name=a.spec.name,
            has_after=False,
            built=False,
            problem_count=a.errors,
        )
    c = a.comparison
    facts: dict[str, Any] = {  # HeadlineFacts' fields, those that apply
        "metric_id": a.spec.id,
        "metric_name": a.spec.name,
        "has_after": a.has_after,
        "categories": a.effective_type == "categories",
        "control": a.control is not None,
        "own_limits_min": AFTER_OWN_LIMITS_MIN,
    }
    if c is not None:
        facts |= {
            "compared": True,
            "improved": c.improved,
            "p_value": c.p_value,
            "p_text": format_p_value(c.p_value),
            "change": c.change,
            "percent_change": c.percent_change,
        }
    else:
        facts["failure"] = "; ".join(
            dict.fromkeys(msg for disp, msg in a.failures if disp == "comparison")
        )
    if a.effective_type != "categories":
        facts |= {
            "after_points": int(a.in_after.sum()),
            "own_limits": a.after_limits is not None,
            "after_signals": len(a.after_signals),
        }
    return HeadlineFacts(**facts)


def headline_figures(a: MetricAnalysis | NotBuilt) -> dict[str, str]:
    """The headline metric's figures as CSV cells (for the index's download): the measure
    compared, its baseline and after values, the change. Without an after period, the
    baseline's figure the card shows. Numbers rounded as in results.json. A metric not built
    has its name and unit only."""

    def num(v) -> str:
        return "" if v is None else safe_cell(rounded_number(float(v)))

    out = {
        "metric": csv_text(a.spec.name),
        "unit": csv_text(a.spec.unit),
        "measure": "",
        "baseline": "",
        "after": "",
        "change": "",
        "percent_change": "",
    }
    if isinstance(a, NotBuilt):
        return out
    c = a.comparison
    if c is not None:
        out |= {
            "measure": c.measure,
            "baseline": num(c.baseline),
            "after": num(c.after),
            "change": num(c.change),
            "percent_change": num(c.percent_change),
        }
    elif a.run is not None and a.effective_type != "categories":
        if a.effective_type in ("defectives", "defects"):
            out |= {
                "measure": "proportion" if a.effective_type == "defectives" else "rate",
                "baseline": num(a.baseline_rate),
            }
        else:
            out |= {"measure": "median", "baseline": num(a.run.median)}
    return out


def headline_text(a: MetricAnalysis) -> str:
    c = a.comparison
    unit = a.spec.unit
    if c is not None:
        if c.measure in ("proportion",):
            b, f = pct(c.baseline), pct(c.after)
        else:
            b, f = fmt(c.baseline, unit, 3), fmt(c.after, unit, 3)
        change = "no change"
        if c.measure == "proportion" and c.change:
            # a change of a proportion in percentage points, never a percentage of it
            change = (
                f"{'down' if c.change < 0 else 'up'} {percentage_points(abs(c.change)).lstrip('+')}"
            )
        elif c.percent_change is not None and c.percent_change != 0:
            change = f"{'down' if c.change < 0 else 'up'} {abs(c.percent_change):.0f}%"
        verdict = {True: "better", False: "worse", None: "direction not judged"}[c.improved]
        sig = (
            ""
            if c.p_value is None
            else ("; unlikely to be chance" if c.p_value < 0.05 else "; could be chance")
        )
        # a rolled-up metric's test compares its period values: the card says so
        of = f" of the {a.compared}" if a.spec.rollup is not None and a.compared else ""
        return f"{c.measure.capitalize()}{of} {b} → {f}: {change}, {verdict}{sig}."
    if a.pareto is not None:
        return (
            f"{a.category_scope.capitalize()}: {len(a.pareto.vital_few)} of "
            f"{len(a.pareto.categories)} categories make up "
            f"{a.pareto.threshold:.0f}% of {a.pareto.total:g}."
        )
    if a.run is not None:
        if a.effective_type == "defectives":
            return f"Baseline proportion {pct(a.baseline_rate)}; no after period yet."
        if a.effective_type == "defects":
            return f"Baseline rate {fmt(a.baseline_rate, unit, 3)}; no after period yet."
        return f"Baseline median {fmt(a.run.median, unit, 3)}; no after period yet."
    return "No summary available."


def sparkline(a: MetricAnalysis) -> tuple[str, str]:
    v = a.point_values
    ok = np.isfinite(v)
    if ok.sum() < 2:
        return "", ""
    lo, hi = float(np.nanmin(v)), float(np.nanmax(v))
    span = hi - lo or 1.0
    n = len(v)
    xs = np.linspace(1, 119, n)
    ys = 30 - (v - lo) / span * 28
    pts = " ".join(f"{x:.1f},{y:.1f}" for x, y, k in zip(xs, ys, ok, strict=True) if k)
    split = ""
    if a.in_after.any():
        split = f"{xs[int(np.argmax(a.in_after))]:.1f}"
    return pts, split
