"""Which function draws each chart kind: the one table from the kind a chart choice names
(:func:`steadyline.stats.choice.choose_chart`) to the chart function."""

from __future__ import annotations

from collections.abc import Callable

from ..results import ControlChart
from .counts import c_chart, np_chart
from .individuals import individuals
from .rates import laney_p, laney_u, p_chart, u_chart
from .subgroups import xbar_r, xbar_s

CHART_FUNCTIONS: dict[str, Callable[..., ControlChart]] = {
    "xmr": individuals,
    "xbar-r": xbar_r,
    "xbar-s": xbar_s,
    "p": p_chart,
    "np": np_chart,
    "c": c_chart,
    "u": u_chart,
    "laney-p": laney_p,
    "laney-u": laney_u,
}
"""Chart kind (as returned by :func:`steadyline.stats.choice.choose_chart`) -> function."""
