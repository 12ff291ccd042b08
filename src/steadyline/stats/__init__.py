"""Pure statistics for improvement work: arrays in, frozen results out.

Usable from a notebook without the site::

    >>> from steadyline import stats
    >>> chart = stats.individuals([10.0, 12.0, 11.0, 13.0])
    >>> round(float(chart.upper[0]), 3)
    15.931

Nothing in this package reads files, draws charts or logs; it imports no other part of
steadyline. Every function raises :class:`StatsError` with a message that states the
requirement when its input cannot give a result.

The names below are loaded on first use (PEP 562): importing the light module :mod:`.codes`
(the closed sets of codes, which the pages' vocabulary and the metadata's validation take from
it) loads no statistics and no numpy. Four functions share their module's name (capability,
capability_change, compare, pareto): the package's attribute is the function, as the imports
used to make it, and stays so when another module imports that submodule.
"""

from __future__ import annotations

import importlib
import sys
from types import ModuleType
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from .after_sample import after_sample_needed, power_reached
    from .business import (
        defect_figures,
        defective_figures,
        measured_figures,
        sigma_level,
    )
    from .capability import bissell_interval, capability
    from .capability_change import capability_change
    from .choice import choose_chart
    from .compare import compare, format_p_value
    from .constants import c4, d2, d3, factor_table, factors
    from .control.counts import c_chart, np_chart
    from .control.individuals import individuals
    from .control.rates import laney_p, laney_u, p_chart, u_chart
    from .control.subgroups import xbar_r, xbar_s
    from .distribution import (
        QUARTILE_METHODS,
        anderson_darling,
        box_summary,
        histogram,
        normal_curve,
    )
    from .gauge import appraiser_ranges, gauge_study
    from .mix import mix_change
    from .pareto import pareto, pareto_in_order
    from .results import (
        BoxSummary,
        Capability,
        ChartChoice,
        Comparison,
        ControlChart,
        Histogram,
        NormalityTest,
        Pareto,
        RunChartAnalysis,
        Signal,
        StatsError,
    )
    from .results_studies import (
        AfterSamplePlan,
        AnovaRow,
        AppraiserRanges,
        BusinessFigures,
        CapabilityChange,
        GaugeStudy,
        MixChange,
        PowerReached,
        VarianceComponent,
    )
    from .rules import detect_signals
    from .run_limits import anhoj_limits, perla_runs_limits
    from .runs import analyse_runs, shift_against

# each public name and the module it lives in
_HOME = {
    "after_sample_needed": "after_sample",
    "power_reached": "after_sample",
    "defect_figures": "business",
    "defective_figures": "business",
    "measured_figures": "business",
    "sigma_level": "business",
    "bissell_interval": "capability",
    "capability": "capability",
    "capability_change": "capability_change",
    "choose_chart": "choice",
    "compare": "compare",
    "format_p_value": "compare",
    "c4": "constants",
    "d2": "constants",
    "d3": "constants",
    "factor_table": "constants",
    "factors": "constants",
    "c_chart": "control.counts",
    "np_chart": "control.counts",
    "individuals": "control.individuals",
    "laney_p": "control.rates",
    "laney_u": "control.rates",
    "p_chart": "control.rates",
    "u_chart": "control.rates",
    "xbar_r": "control.subgroups",
    "xbar_s": "control.subgroups",
    "QUARTILE_METHODS": "distribution",
    "anderson_darling": "distribution",
    "box_summary": "distribution",
    "histogram": "distribution",
    "normal_curve": "distribution",
    "appraiser_ranges": "gauge",
    "gauge_study": "gauge",
    "mix_change": "mix",
    "pareto": "pareto",
    "pareto_in_order": "pareto",
    "BoxSummary": "results",
    "Capability": "results",
    "ChartChoice": "results",
    "Comparison": "results",
    "ControlChart": "results",
    "Histogram": "results",
    "NormalityTest": "results",
    "Pareto": "results",
    "RunChartAnalysis": "results",
    "Signal": "results",
    "StatsError": "results",
    "AfterSamplePlan": "results_studies",
    "AnovaRow": "results_studies",
    "AppraiserRanges": "results_studies",
    "BusinessFigures": "results_studies",
    "CapabilityChange": "results_studies",
    "GaugeStudy": "results_studies",
    "MixChange": "results_studies",
    "PowerReached": "results_studies",
    "VarianceComponent": "results_studies",
    "detect_signals": "rules",
    "anhoj_limits": "run_limits",
    "perla_runs_limits": "run_limits",
    "analyse_runs": "runs",
    "shift_against": "runs",
}
# the names of functions that are also the names of their modules
_SHADOWED = frozenset(name for name, home in _HOME.items() if name == home)


def __getattr__(name: str) -> Any:
    home = _HOME.get(name)
    if home is None:
        # a submodule (``from steadyline.stats import runs``) is found by the import system
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{home}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_HOME))


class _Package(ModuleType):
    """This package's module object: a submodule named like a function does not replace the
    function as the package's attribute when the import system loads it."""

    def __setattr__(self, name: str, value: Any) -> None:
        if name in _SHADOWED and isinstance(value, ModuleType):
            return
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package

__all__ = [
    "AfterSamplePlan",
    "AnovaRow",
    "AppraiserRanges",
    "BusinessFigures",
    "CapabilityChange",
    "GaugeStudy",
    "MixChange",
    "PowerReached",
    "VarianceComponent",
    "after_sample_needed",
    "power_reached",
    "BoxSummary",
    "Capability",
    "ChartChoice",
    "Comparison",
    "ControlChart",
    "Histogram",
    "NormalityTest",
    "Pareto",
    "QUARTILE_METHODS",
    "RunChartAnalysis",
    "Signal",
    "StatsError",
    "analyse_runs",
    "anderson_darling",
    "anhoj_limits",
    "bissell_interval",
    "box_summary",
    "c4",
    "c_chart",
    "capability",
    "capability_change",
    "choose_chart",
    "compare",
    "d2",
    "d3",
    "defect_figures",
    "defective_figures",
    "detect_signals",
    "appraiser_ranges",
    "factor_table",
    "factors",
    "format_p_value",
    "gauge_study",
    "histogram",
    "individuals",
    "laney_p",
    "laney_u",
    "measured_figures",
    "mix_change",
    "normal_curve",
    "np_chart",
    "p_chart",
    "pareto",
    "pareto_in_order",
    "perla_runs_limits",
    "shift_against",
    "sigma_level",
    "u_chart",
    "xbar_r",
    "xbar_s",
]
