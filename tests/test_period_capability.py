"""Capability of the after period is trusted only when the period is stable on its own limits."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from steadyline.analysis.process import analyse
from steadyline.config import PortfolioSettings, load_project
from steadyline.loading import STAGE_AFTER, load_metric
from steadyline.stats import detect_signals

TOML = """title = "Period capability"
owner = "Test"
phase = "control"
problem = "A test project."

[comparison]
baseline = [2026-01-01, 2026-02-09]
after = [2026-03-01]

[[metric]]
id = "m"
name = "Width"
file = "m.csv"
type = "continuous"
time = "t"
value = "v"
unit = "mm"
better = "target"
target = 10.0
spec_lower = 4.0
spec_upper = 16.0
"""


def _analyse(tmp_path: Path, after: np.ndarray):
    rng = np.random.default_rng(5)
    base = rng.normal(10, 1, 40)
    days = np.arange(np.datetime64("2026-01-01"), np.datetime64("2026-02-10"))
    later = np.arange(np.datetime64("2026-03-01"), np.datetime64("2026-03-01") + len(after))
    rows = [f"{d},{v:.4f}" for d, v in zip([*days, *later], [*base, *after], strict=True)]
    folder = tmp_path / "p"
    folder.mkdir()
    (folder / "project.toml").write_text(TOML)
    (folder / "m.csv").write_text("t,v\n" + "\n".join(rows) + "\n")
    spec, _ = load_project(folder, tmp_path, PortfolioSettings())
    return analyse(load_metric(spec.metrics[0]))


def _after_capability(a):
    (cap,) = [c for name, _h, c in a.period_histograms if name == "After"]
    return cap


def test_a_steady_after_period_earns_trusted_indices(tmp_path):
    after = np.random.default_rng(9).normal(10, 0.5, 40)
    a = _analyse(tmp_path, after)
    # reference: the signal rules on the after period's own limits find nothing
    assert detect_signals(a.after_limits, "western-electric", STAGE_AFTER) == ()
    cap = _after_capability(a)
    assert cap.trustworthy, cap.reasons


def test_an_after_period_with_a_signal_on_its_own_limits_is_not_trusted(tmp_path):
    after = np.random.default_rng(9).normal(10, 0.5, 40)
    after[20] = 14.0  # far beyond the after period's own 3-sigma limits
    a = _analyse(tmp_path, after)
    cap = _after_capability(a)
    assert not cap.trustworthy
    assert any("against the period's own control limits" in r for r in cap.reasons)
    # the analysis keeps those signals for the page: the planted point is among them
    assert any(40 + 20 in s.indices for s in a.after_signals)


@pytest.mark.parametrize("n", [8])
def test_an_after_period_too_short_for_its_own_limits_is_not_judged(tmp_path, n):
    a = _analyse(tmp_path, np.random.default_rng(9).normal(10, 0.5, n))
    cap = _after_capability(a)
    assert a.after_limits is None and not cap.trustworthy
    assert any("too few points for limits of its own" in r for r in cap.reasons)
