"""The shared machinery of the chart builders; code outside the charts imports these names
from here, each defined in the module of its concern."""

from .numbers import fmt, plural
from .types import ChartSpec, ColumnTable, SeriesContext

__all__ = ["ChartSpec", "ColumnTable", "SeriesContext", "fmt", "plural"]
