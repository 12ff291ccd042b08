"""portfolio.toml -> PortfolioSettings: the portfolio-wide defaults, every key optional."""

from __future__ import annotations

from pathlib import Path

from .. import files
from ..errors import Problem
from .discovery import PORTFOLIO_FILE
from .keys import BIN_RULES, PORTFOLIO_KEYS, QUARTILE_METHODS, RUN_RULES, SIGMA_LEVELS, SIGNAL_RULES
from .model import PortfolioSettings
from .reading import Checker, Reader
from .toml_file import OUTSIDE_PORTFOLIO, outside, read_toml


def load_portfolio(root: Path) -> tuple[PortfolioSettings, list[Problem]]:
    path = root / PORTFOLIO_FILE
    if not files.exists(path):
        return PortfolioSettings(), []
    if not files.inside(path, root):
        return PortfolioSettings(), [
            Problem(
                PORTFOLIO_FILE,
                None,
                "",
                outside(
                    PORTFOLIO_FILE,
                    path,
                    "projects folder",
                    OUTSIDE_PORTFOLIO,
                    "copy the file in instead",
                ),
            )
        ]
    data, text, problems = read_toml(path, root)
    if data is None:
        return PortfolioSettings(), problems
    ck = Checker(path, root, text)
    ck.unknown_keys(data, PORTFOLIO_KEYS, "")
    r = Reader(ck, data, "")
    d = PortfolioSettings()
    mb = r.number("max_file_mb")
    if mb is not None and mb <= 0:
        ck.add(
            "max_file_mb",
            f"must be a positive number of megabytes, got {mb:g}; the default "
            f"{d.max_file_mb:g} is used",
            ck.loc.line_of("max_file_mb"),
        )
    settings = PortfolioSettings(
        title=r.text("title", default=d.title),
        signal_rules=r.choice("signal_rules", SIGNAL_RULES, d.signal_rules),
        run_rules=r.choice("run_rules", RUN_RULES, d.run_rules),
        quartiles=r.choice("quartiles", QUARTILE_METHODS, d.quartiles),
        bins=r.choice("bins", BIN_RULES, d.bins),
        max_file_mb=mb if mb and mb > 0 else d.max_file_mb,
        stale_after_days=r.integer("stale_after_days", minimum=1) or d.stale_after_days,
        sigma_level=r.choice("sigma_level", SIGMA_LEVELS, d.sigma_level),
        handover_pack=bool(r.boolean("handover_pack")),
    )
    return settings, ck.problems
