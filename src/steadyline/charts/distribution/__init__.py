"""Shape of the data: histogram (pre-binned) and box plots drawn from five-number summaries.

The names code elsewhere imports from here; each lives in the module of its concern.
"""

from .box import MAX_OUTLIERS_EACH_SIDE, box_chart
from .histogram import histogram_chart

__all__ = ["MAX_OUTLIERS_EACH_SIDE", "box_chart", "histogram_chart"]
