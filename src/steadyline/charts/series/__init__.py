"""Time-ordered displays: the run chart and control charts (with their dispersion companion).

The names code elsewhere imports from here; each lives in the module of its concern.
"""

from .control import control_chart
from .marks import (
    CHANGE_MARKS,
    MARK_ASIDE,
    MARK_CHANGE_BETTER,
    MARK_CHANGE_UNJUDGED,
    MARK_CHANGE_WORSE,
    MARK_ORDINARY,
    MARK_OWN_SIGNAL,
    MARK_SIGNAL,
)
from .run import run_chart
from .staged import staged_control_chart

__all__ = [
    "CHANGE_MARKS",
    "MARK_ASIDE",
    "MARK_CHANGE_BETTER",
    "MARK_CHANGE_UNJUDGED",
    "MARK_CHANGE_WORSE",
    "MARK_ORDINARY",
    "MARK_OWN_SIGNAL",
    "MARK_SIGNAL",
    "control_chart",
    "run_chart",
    "staged_control_chart",
]
