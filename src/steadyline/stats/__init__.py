"""Pure statistics for improvement work: arrays in, frozen results out.

Usable from a notebook without the site::

    >>> from steadyline import stats
    >>> chart = stats.individuals([10.0, 12.0, 11.0, 13.0])
    >>> round(float(chart.upper[0]), 3)
    15.931

Nothing in this package reads files, draws charts or logs; it imports no other part of
steadyline. Every function raises :class:`StatsError` with a message that states the
requirement when its input cannot give a result.
"""

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
