"""What a rolled-up metric's points and values are, in a sentence: said beside its charts.

The run and control charts of a rolled-up metric judge period values, while its histogram, box
plot and capability describe the individual values; the pages and the capability's own reason
say so in these same words.
"""

from __future__ import annotations

from ..config import MetricSpec
from ..vocab import period_value


def points_note(spec: MetricSpec) -> str:
    """What one point of a rolled-up metric's run and control charts is, in a sentence ("" for
    a metric that is not rolled up): those charts judge the period values."""
    r = spec.rollup
    if r is None:
        return ""
    one = period_value(r.period, r.statistic)
    if spec.type == "defectives" or r.statistic == "proportion":
        what = f"the defective items over the items checked that {r.period}"
    elif spec.type == "defects":
        what = (
            f"the defects per unit of area that {r.period}"
            if r.statistic == "mean"
            else f"the defects counted that {r.period}"
        )
    else:
        what = (
            f"the number of rows with a value that {r.period}"
            if r.statistic == "count"
            else f"the {r.statistic} of that {r.period}'s values"
        )
    return f"Each point is a {one}: {what}, not a single value."


def values_note(spec: MetricSpec, n: int) -> str:
    """What a rolled-up metric's histogram, box plot and capability describe ("" for a metric
    that is not rolled up): the individual values, since the specification limits apply to
    single items and a period's mean varies less than they do."""
    r = spec.rollup
    if r is None:
        return ""
    return (
        f"Drawn from the {n} individual values before the roll-up, not from the "
        f"{period_value(r.period, r.statistic, plural=True)}: the spread of single items, "
        "which the specification limits apply to."
    )


def values_brief(spec: MetricSpec, n: int) -> str:
    """:func:`values_note` in a few words, for a chart's subtitle (the card's method line says
    why): "The 412 individual values, not the daily means." ("" when not rolled up)."""
    r = spec.rollup
    if r is None:
        return ""
    return f"The {n} individual values, not the {period_value(r.period, r.statistic, plural=True)}."
