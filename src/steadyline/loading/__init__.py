"""Data files (CSV, workbook, Parquet) or DataFrames -> typed, checked series ready for the
statistics. This face only hands on the names used outside the package; each module's
docstring says what it holds."""

from .cells import _text
from .data import ByPeriod, MetricData, StudyData
from .encoding import _BOMS, _wide_guess
from .metric import load_frame, load_metric
from .numbers import _numbers
from .periods import period_start
from .problems import _Rows
from .reading import _read_table
from .stages import STAGE_AFTER, STAGE_BASELINE, STAGE_NAMES, STAGE_OTHER
from .studies import load_study, load_study_frame
from .times import _times

__all__ = [
    "STAGE_AFTER",
    "STAGE_BASELINE",
    "STAGE_NAMES",
    "STAGE_OTHER",
    "ByPeriod",
    "MetricData",
    "StudyData",
    "_BOMS",
    "_Rows",
    "_numbers",
    "_read_table",
    "_text",
    "_times",
    "_wide_guess",
    "load_frame",
    "load_metric",
    "load_study",
    "load_study_frame",
    "period_start",
]
