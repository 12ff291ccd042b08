"""A metric's data -> every statistic its displays need: the face of the analysis package.

results.py holds the result types; process.py analyses a process metric (with categories.py,
values.py, before_after.py and business.py); study.py a measurement study; notes.py says what a
rolled-up metric's points and values are.
"""

from .notes import points_note, values_brief, values_note
from .process import analyse, period_names
from .results import AFTER_OWN_LIMITS_MIN, MetricAnalysis, StudyAnalysis
from .study import analyse_study

__all__ = [
    "AFTER_OWN_LIMITS_MIN",
    "MetricAnalysis",
    "StudyAnalysis",
    "analyse",
    "analyse_study",
    "period_names",
    "points_note",
    "values_brief",
    "values_note",
]
