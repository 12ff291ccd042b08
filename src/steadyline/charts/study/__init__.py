"""A measurement system study's displays: the components of variation, each appraiser's range
chart, and the measurements by part and by appraiser.

The names code elsewhere imports from here; each lives in the module of its concern.
"""

from .components import components_chart
from .measurements import measurements_chart
from .ranges import ranges_chart

__all__ = ["components_chart", "measurements_chart", "ranges_chart"]
