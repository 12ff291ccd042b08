"""Shewhart control charts as pure functions: arrays in, :class:`ControlChart` out.

One module per chart family (individuals, subgroups, rates, counts) on the machinery they share
(fitting, neighbours); fitting's docstring states the common arguments, the sources and the
handling of degenerate data.

>>> chart = individuals([10.0, 12.0, 11.0, 13.0])
>>> float(chart.centre[0]), round(float(chart.upper[0]), 3)
(11.5, 15.931)
"""

from .counts import c_chart, np_chart
from .fitting import LIMIT_MODES
from .individuals import individuals
from .kinds import CHART_FUNCTIONS
from .rates import laney_p, laney_u, p_chart, u_chart
from .subgroups import RANGE_MAX_SUBGROUP, xbar_r, xbar_s

__all__ = [
    "CHART_FUNCTIONS",
    "LIMIT_MODES",
    "RANGE_MAX_SUBGROUP",
    "c_chart",
    "individuals",
    "laney_p",
    "laney_u",
    "np_chart",
    "p_chart",
    "u_chart",
    "xbar_r",
    "xbar_s",
]
