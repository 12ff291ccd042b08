"""Chart specs: statistics results in, Vega-Lite specs out (no files, no HTML).

Each builder returns a :class:`ChartSpec` whose ``spec`` carries
``usermeta.steadyline.display`` naming the display: "run-chart", "control-chart",
"histogram", "box-plot", "column-chart", "pareto", "pareto-by-period",
"staged-control-chart", "study-components", "study-ranges", "study-measurements".
"""

from .base.templates import clear_template_cache
from .base.types import ChartSpec, SeriesContext
from .categorical.by_period import period_pareto_chart
from .categorical.column import column_chart
from .categorical.pareto import pareto_chart
from .distribution.box import box_chart
from .distribution.histogram import histogram_chart
from .series.control import control_chart
from .series.run import run_chart
from .series.staged import staged_control_chart
from .study.components import components_chart
from .study.measurements import measurements_chart
from .study.ranges import ranges_chart

__all__ = [
    "ChartSpec",
    "SeriesContext",
    "box_chart",
    "clear_template_cache",
    "column_chart",
    "components_chart",
    "control_chart",
    "histogram_chart",
    "measurements_chart",
    "pareto_chart",
    "ranges_chart",
    "period_pareto_chart",
    "run_chart",
    "staged_control_chart",
]
