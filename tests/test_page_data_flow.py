"""Data flow one way: the pages (steadyline.site) read the analysis' results, never the loader's
frame nor the chart specs they draw.

The words of a page are decided from results (MetricAnalysis and its statistics); a chart spec
is drawn from the same results and only carried to the page. The one check that read chart specs
for words, whether a bar chart's value axis starts at zero, holds by construction of the Pareto
and column charts: it is checked here, on charts of many shapes, instead of on every build.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

from steadyline.advice import bar_axis_cautions
from steadyline.charts import column_chart, pareto_chart
from steadyline.charts.categorical import MAX_BARS
from steadyline.stats.pareto import pareto

SITE = Path(__file__).resolve().parent.parent / "src" / "steadyline" / "site"


def _modules():
    return sorted(SITE.glob("*.py"))


@pytest.mark.parametrize("path", _modules(), ids=lambda p: p.name)
def test_site_imports_nothing_of_the_loader(path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            name = ("." * node.level) + (node.module or "")
            assert "loading" not in name.split("."), f"{path.name}:{node.lineno}: imports {name}"
        elif isinstance(node, ast.Import):
            for alias in node.names:
                assert "loading" not in alias.name.split("."), f"{path.name}:{node.lineno}"


@pytest.mark.parametrize("path", _modules(), ids=lambda p: p.name)
def test_site_never_reads_the_loaded_data(path):
    """No ``<analysis>.data``: what the pages need is offered by the analysis itself."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    reads = [n.lineno for n in ast.walk(tree) if isinstance(n, ast.Attribute) and n.attr == "data"]
    assert reads == [], f"{path.name}: reads .data at lines {reads}"


@pytest.mark.parametrize("path", _modules(), ids=lambda p: p.name)
def test_site_never_reads_a_chart_spec_for_words(path):
    """A chart's spec is written to the page and its download as it is: nothing in site/
    passes it to a sentence writer (advice) or looks inside it."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
            if isinstance(node.func.value, ast.Name) and node.func.value.id == "advice":
                for arg in node.args:
                    assert not (isinstance(arg, ast.Attribute) and arg.attr == "spec"), (
                        f"{path.name}:{node.lineno}: advice.{node.func.attr} reads a chart spec"
                    )


@pytest.mark.parametrize(
    "counts",
    [
        {"a": 1},
        {"a": 5, "b": 5},
        {"late": 40, "damaged": 12, "wrong item": 3, "missing": 1},
        {f"c{i:03d}": 1000 - i for i in range(MAX_BARS + 25)},  # gathered into "others"
        {"x": 1_000_000, "y": 999_999},  # large and close: a trimmed axis would flatter
    ],
)
def test_bar_axes_start_at_zero(counts):
    """Bar length encodes the count, so the Pareto and column charts fix their value axis at
    zero whatever the counts (what the build used to check on every chart's spec)."""
    p = pareto(list(counts), weights=[float(n) for n in counts.values()])
    assert bar_axis_cautions(pareto_chart(p, period="baseline").spec) == []
    names = sorted(counts)
    col = column_chart(names, [float(counts[n]) for n in names], period="baseline")
    assert bar_axis_cautions(col.spec) == []


def test_the_axis_check_itself_sees_a_trimmed_axis():
    """The checker above can fail: a bar chart whose value axis starts above zero is caught."""
    spec = {"mark": "bar", "encoding": {"y": {"scale": {"domain": [50, 100]}}}}
    assert bar_axis_cautions(spec)
    assert bar_axis_cautions(
        {"layer": [{"mark": {"type": "bar"}, "encoding": {"x": {"scale": {"zero": False}}}}]}
    )
