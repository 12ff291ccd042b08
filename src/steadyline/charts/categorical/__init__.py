"""Counts by category: column chart, Pareto chart, and Pareto charts by period.

The names code elsewhere imports from here; each lives in the module of its concern.
"""

from .by_period import common_order, period_pareto_chart
from .categories import MAX_BARS, gathered
from .column import column_chart
from .pareto import pareto_chart

__all__ = [
    "MAX_BARS",
    "column_chart",
    "common_order",
    "gathered",
    "pareto_chart",
    "period_pareto_chart",
]
