"""The rules of thumb under each chart: cautions when the data are too few for a display to be
read with confidence, or a chart could mislead, and whether capability indices can be read.

The thresholds are rules of the trade; where no published source fixes the number it is marked
"common practice", where it was recalled from a textbook it is marked "from memory".
"""

from __future__ import annotations

from ..stats.results import Capability, ControlChart, RunChartAnalysis

__all__ = [
    "ASIDE_SHARE_MAX",
    "BOX_MIN_POINTS",
    "COLUMN_MAX_CATEGORIES",
    "CONTROL_MIN_FIT_POINTS",
    "HISTOGRAM_MIN_POINTS",
    "RUN_CHART_MIN_POINTS",
    "aside_cautions",
    "bar_axis_cautions",
    "box_cautions",
    "capability_verdict",
    "column_cautions",
    "control_cautions",
    "histogram_cautions",
    "run_cautions",
]

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


def capability_verdict(c: Capability) -> str:
    if c.trustworthy:
        return (
            "The indices can be read: the process is stable on its chart and its values are "
            "consistent with a normal distribution."
        )
    return "Do not rely on these indices yet."
