"""Metadata messages name the right line and key, also inside [[metric]] and its sub-tables."""

from __future__ import annotations

import pytest
from corpus.kit import good_csv, write

from steadyline.config.portfolio import load_portfolio
from steadyline.config.project import load_project
from steadyline.errors import ProjectError

TOML = """title = "T"
owner = "O"
phase = "measure"
problem = "P"

[comparison]
baseline = [2026-01-01, 2026-12-31]

[[metric]]
id = "a"
name = "A"
file = "data.csv"
type = "continuous"
time = "date"
value = "value"
better = "lower"

[[metric]]
id = "b"
name = "B"
file = "data.csv"
type = "continuous"
time = "date"
value = "value"
better = "lower"
valeu = 3
[metric.rollup]
period = "dya"
statistic = "mean"
[metric.csv]
delimter = ";"
"""


def _problems(tmp_path, text, files=None):
    root = write(
        tmp_path / "projects", {"p/project.toml": text, "p/data.csv": good_csv(), **(files or {})}
    )
    with pytest.raises(ProjectError) as e:
        load_project(root / "p", root)
    return {p.where: p for p in e.value.problems}


def test_lines_inside_the_second_metric_and_its_sub_tables(tmp_path):
    probs = _problems(tmp_path, TOML)
    assert probs["metric[2].valeu"].line == 26
    assert "did you mean 'value'" in probs["metric[2].valeu"].message
    assert probs["metric[2].rollup.period"].line == 28
    assert "did you mean 'day'" in probs["metric[2].rollup.period"].message
    assert probs["metric[2].csv.delimter"].line == 31
    assert "did you mean 'delimiter'" in probs["metric[2].csv.delimter"].message
    assert all(p.path == "p/project.toml" for p in probs.values())
    assert set(probs) == {"metric[2].valeu", "metric[2].rollup.period", "metric[2].csv.delimter"}


def test_a_valid_file_loads(tmp_path):
    text = (
        TOML.replace("valeu = 3\n", "").replace('"dya"', '"day"').replace("delimter", "delimiter")
    )
    text = text.replace('delimiter = ";"', 'delimiter = ","')
    root = write(tmp_path / "projects", {"p/project.toml": text, "p/data.csv": good_csv()})
    spec, warnings = load_project(root / "p", root)
    assert [m.id for m in spec.metrics] == ["a", "b"] and warnings == []
    assert spec.metrics[1].rollup.period == "day"


@pytest.mark.parametrize("code", ["per-period", "per-phase"])
def test_limits_per_period_and_its_older_name(tmp_path, code):
    """``per-phase`` was the code before "phase" was kept for the project's stage in the cycle:
    a file that still says it is read as ``per-period``, with one warning naming key and line."""
    text = (
        TOML.replace("valeu = 3\n", f'limits = "{code}"\n')
        .replace('"dya"', '"day"')
        .replace('delimter = ";"', 'delimiter = ","')
    )
    root = write(tmp_path / "projects", {"p/project.toml": text, "p/data.csv": good_csv()})
    spec, warnings = load_project(root / "p", root)
    assert spec.metrics[1].limits == "per-period"
    if code == "per-period":
        assert warnings == []
    else:
        (w,) = warnings
        assert (w.where, w.line, w.severity) == ("metric[2].limits", 26, "warning")
        assert "'per-phase' is the older name of 'per-period'" in w.message


@pytest.mark.parametrize(
    "text, where, line, words",
    [
        ("max_file_mb = -1\n", "max_file_mb", 1, "must be a positive number"),
        ("max_file_mb = 0\n", "max_file_mb", 1, "must be a positive number"),
        ('title = "x"\nbins = "fdd"\n', "bins", 2, "did you mean 'fd'"),
        ('quartiles = "tukey"\n', "quartiles", 1, "did you mean 'tukey-hinges'"),
        ('max_file_mb = "big"\n', "max_file_mb", 1, "expected a number"),
    ],
)
def test_portfolio_settings_problems(tmp_path, text, where, line, words):
    root = write(tmp_path / "projects", {"portfolio.toml": text})
    settings, problems = load_portfolio(root)
    (p,) = problems
    assert (p.path, p.where, p.line) == ("portfolio.toml", where, line)
    assert words in p.message
    assert settings.max_file_mb == 200.0


def test_portfolio_settings_apply(tmp_path):
    root = write(tmp_path / "projects", {"portfolio.toml": 'max_file_mb = 0.5\nbins = "scott"\n'})
    settings, problems = load_portfolio(root)
    assert problems == [] and settings.max_file_mb == 0.5 and settings.bins == "scott"
