"""A measurement system study in sentences: the verdict by the published acceptance guide, the
distinct categories, the larger part of the measurement variation, the appraisers' ranges and
means.

The guide's bands support the organisation's decision; the sentences say so and never make it.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..stats.results_studies import AppraiserRanges, GaugeStudy
from .sentences import CLEAR_MARKER, SIGNAL_MARKER, Finding

__all__ = [
    "GAUGE_DECISION",
    "GAUGE_GUIDE",
    "GAUGE_MARKS",
    "GAUGE_WORDS",
    "appraiser_findings",
    "appraiser_range_findings",
    "gauge_findings",
    "gauge_shares_text",
    "gauge_verdict",
]

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


def gauge_verdict(study: GaugeStudy) -> str:
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


def gauge_findings(study: GaugeStudy, unit: str = "") -> list[Finding]:
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


def appraiser_range_findings(ranges: Sequence[AppraiserRanges], unit: str = "") -> list[Finding]:
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


def appraiser_findings(study: GaugeStudy, means: dict[str, float], unit: str = "") -> list[Finding]:
    """Whether the appraisers' means differ, by the ANOVA's F test of the model used (the
    reduced one when the interaction was pooled), and whether they rank the parts alike."""
    from ..stats.compare import format_p_value

    # the reduced table exists exactly when the interaction was pooled
    reduced = study.reduced_anova if study.interaction_pooled else None
    table = reduced if reduced is not None else study.anova
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
