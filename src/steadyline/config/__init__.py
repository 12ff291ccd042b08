"""Metadata files -> frozen project models: the names the rest of the tool imports, handed on
from the modules that hold them (see each module's docstring)."""

from .discovery import PORTFOLIO_FILE, PROJECT_FILE, discover, stray_entries
from .keys import DATA_TYPES, KEYS, PHASES, SLUG_RE, STUDY, Key
from .metric import metric_from_dict
from .model import CsvOptions, Event, MetricSpec, Period, PortfolioSettings, ProjectSpec
from .portfolio import load_portfolio
from .project import load_project, read_heading
from .shape import period_clash, rollup_statistics

__all__ = [
    "DATA_TYPES",
    "KEYS",
    "PHASES",
    "PORTFOLIO_FILE",
    "PROJECT_FILE",
    "SLUG_RE",
    "STUDY",
    "CsvOptions",
    "Event",
    "Key",
    "MetricSpec",
    "Period",
    "PortfolioSettings",
    "ProjectSpec",
    "discover",
    "load_portfolio",
    "load_project",
    "metric_from_dict",
    "period_clash",
    "read_heading",
    "rollup_statistics",
    "stray_entries",
]
