"""One vocabulary: each closed set of codes defined once in each half of the tool, and held equal.

The light half (the metadata's validation, the index, the pages' words) takes its sets from
:mod:`steadyline.vocab`; the statistics, which import nothing else of ours, take theirs from
:mod:`steadyline.stats.codes`. These tests hold the two equal member for member, hold every other
table that lists a set's codes (the statistics' own tables, the pages' words, the README's
lists) to them, and check that the demo's results.json uses no code outside them.
"""

from __future__ import annotations

import ast
import importlib
import json
import re
from pathlib import Path

import pytest

from steadyline import vocab
from steadyline.charts import style
from steadyline.config import keys
from steadyline.config.model import PortfolioSettings
from steadyline.site import project as project_page
from steadyline.site import studies as studies_page
from steadyline.stats import codes

# by their full names: the package hands on functions named like some of its modules (compare)
choice, compare, control, distribution, rules, runs = (
    importlib.import_module(f"steadyline.stats.{name}")
    for name in ("choice", "compare", "control", "distribution", "rules", "runs")
)

ROOT = Path(__file__).resolve().parent.parent
README = (ROOT / "README.md").read_text(encoding="utf-8")

# the sets the statistics take as arguments: defined in stats.codes, handed on by vocab
SHARED = [
    codes.DataType,
    codes.ChartKind,
    codes.SignalRules,
    codes.RunRules,
    codes.LimitMode,
    codes.Better,
]


@pytest.mark.parametrize("stats_set", SHARED, ids=lambda e: e.__name__)
def test_the_pages_and_the_statistics_share_one_definition_of_each_set(stats_set):
    assert getattr(vocab, stats_set.__name__) is stats_set
    # and no module of ours defines a class of that name again
    again = [
        path.relative_to(ROOT)
        for path in (ROOT / "src/steadyline").rglob("*.py")
        if re.search(rf"^class {stats_set.__name__}\b", path.read_text(encoding="utf-8"), re.M)
    ]
    assert again == [Path("src/steadyline/stats/codes.py")]


def test_the_statistics_tables_list_the_codes_of_their_sets():
    assert choice.DATA_TYPES == compare.DATA_TYPES == codes.CHARTED_TYPES
    assert set(codes.CHARTED_TYPES) < set(codes.DataType)
    assert choice.CHART_KINDS == vocab.ChartKind.codes()[1:]  # all but "auto"
    assert set(choice.CHART_NAMES) == set(choice.CHART_KINDS)
    assert compare.BETTER == vocab.Better.codes()
    assert runs.RULE_SETS == vocab.RunRules.codes()
    assert tuple(runs.RULE_SET_LABELS) == vocab.RunRules.codes()
    # the rules also hold "limits-only", for a chart judged by its limits alone: no choice
    # of project.toml
    assert tuple(rules.RULE_SETS)[:2] == vocab.SignalRules.codes()
    assert set(rules.RULE_SETS) - set(vocab.SignalRules) == {"limits-only"}
    assert rules.DEFAULT_RULE_SET == PortfolioSettings().signal_rules
    assert control.LIMIT_MODES == vocab.LimitMode.codes()
    assert tuple(distribution.QUARTILE_METHODS) == keys.QUARTILE_METHODS
    # the statistics name numpy's other rules too; project.toml offers these three
    assert tuple(distribution.HISTOGRAM_RULES)[:3] == keys.BIN_RULES


def test_the_statistics_codes_import_nothing_of_ours():
    tree = ast.parse((ROOT / "src/steadyline/stats/codes.py").read_text(encoding="utf-8"))
    imported = {
        n.module if isinstance(n, ast.ImportFrom) else a.name
        for n in ast.walk(tree)
        if isinstance(n, ast.Import | ast.ImportFrom)
        for a in n.names
    }
    assert imported == {"__future__", "enum"}


def test_the_validator_takes_its_sets_from_the_vocabulary():
    assert keys.PHASES == vocab.Phase.codes()
    assert keys.DATA_TYPES == vocab.DataType.codes()
    assert keys.BETTER == vocab.Better.codes()
    assert keys.CHARTS == vocab.ChartKind.codes()
    assert keys.SIGNAL_RULES == vocab.SignalRules.codes()
    assert keys.RUN_RULES == vocab.RunRules.codes()
    assert keys.LIMIT_MODES == vocab.LimitMode.codes()
    assert keys.PERIODS == vocab.RollupPeriod.codes()
    assert keys.STATISTICS == vocab.RollupStatistic.codes()
    # and the key table the validator names keys against and the editors' schemas are made of
    choices = {(t, k.name): k.choices for t, ks in keys.KEYS.items() for k in ks if k.choices}
    assert choices[("project", "phase")] == keys.PHASES
    assert choices[("metric", "type")] == keys.DATA_TYPES
    assert choices[("metric", "better")] == keys.BETTER
    assert choices[("metric", "chart")] == keys.CHARTS
    assert choices[("metric", "limits")] == keys.LIMIT_MODES
    assert choices[("metric", "signal_rules")] == choices[("portfolio", "signal_rules")]
    assert choices[("metric", "run_rules")] == choices[("portfolio", "run_rules")]
    assert choices[("metric.rollup", "period")] == keys.PERIODS
    assert choices[("metric.rollup", "statistic")] == keys.STATISTICS
    assert tuple(k.name for k in keys.KEYS["phase_dates"]) == keys.PHASES


def test_the_pages_name_the_phases_periods_and_sigma_levels_of_the_vocabulary():
    assert style.PERIOD_KINDS == vocab.PeriodKind.codes()
    assert project_page.PHASE_LABEL == {p.value: p.label for p in vocab.Phase}
    assert set(studies_page.SIGMA_WORDS) == set(keys.SIGMA_LEVELS) - {"off"}


def _example(name: str) -> str:
    marker = {"project": "`project.toml`, with every key:", "portfolio": "`portfolio.toml` ("}
    return README.split(marker[name], 1)[1].split("```toml", 1)[1].split("```", 1)[0]


def _listed(name: str, key: str) -> list[str]:
    """The codes a README example's comment lists for *key*: `a | b | c` in the project's,
    `"a", "b" or "c"` and `or "b"` (after the default written as the value) in the
    portfolio's."""
    m = re.search(rf'^{re.escape(key)} = ("[^"]*")?[^#\n]*# ([^\n]+)', _example(name), re.M)
    assert m, key
    comment = m.group(2).removeprefix("required (not for a measurement study): ")
    comment = comment.removeprefix("required: ")
    if "|" in comment:
        words = [re.split(r"[\s:(]", w.strip())[0] for w in comment.split("|")]
        return [w for w in words if not w.startswith("[")]  # bins: [explicit, bin, edges]
    found = re.findall(r'"([^"]+)"', comment.split(":")[0].split("(default")[0])
    written = (m.group(1) or "").strip('"')
    return found if written in found else [written, *found]


@pytest.mark.parametrize(
    ("name", "key", "want"),
    [
        ("project", "phase", vocab.Phase.codes()),
        ("project", "better", vocab.Better.codes()),
        ("project", "limits", vocab.LimitMode.codes()),
        ("project", "bins", keys.BIN_RULES),
        ("portfolio", "signal_rules", vocab.SignalRules.codes()),
        ("portfolio", "run_rules", vocab.RunRules.codes()),
        ("portfolio", "bins", keys.BIN_RULES),
        ("portfolio", "sigma_level", keys.SIGMA_LEVELS),
    ],
)
def test_readme_lists_the_codes_of_each_set(name, key, want):
    assert _listed(name, key) == list(want)


def test_readme_names_the_phases_as_the_pages_do():
    rows = re.findall(r"^\| phase \| `([^`]+)` \| ([^|]+) \|$", README, re.M)
    assert rows == [(p.value, p.label) for p in vocab.Phase]


def test_results_json_uses_only_the_codes_of_the_vocabulary(demo_site):
    seen = 0
    for path in sorted((demo_site / "projects").glob("*/results.json")):
        data = json.loads(path.read_text(encoding="utf-8"))
        assert data["project"]["phase"] in vocab.Phase.codes()
        for m in data["metrics"]:
            seen += 1
            assert m["type"] in vocab.DataType.codes(), path
            if "better" in m and m["type"] != vocab.DataType.STUDY:
                assert m["better"] in vocab.Better.codes(), path
            r = m.get("rules") or {}
            checks = {
                "signal_rules": vocab.SignalRules.codes(),
                "run_rules": vocab.RunRules.codes(),
                "limits": vocab.LimitMode.codes(),
                "quartiles": keys.QUARTILE_METHODS,
            }
            for key, allowed in checks.items():
                if key in r:
                    assert r[key] in allowed, (path, key)
            if isinstance(r.get("bins"), str):
                assert r["bins"] in keys.BIN_RULES, path
            chosen = ((m.get("control_chart") or {}).get("choice") or {}).get("kind")
            if chosen is not None:
                assert chosen in vocab.ChartKind.codes(), path
            for part in ("run_chart", "after_shift"):
                if (m.get(part) or {}).get("rule_set") is not None:
                    assert m[part]["rule_set"] in vocab.RunRules.codes(), path
    assert seen


# "phase" names the project's stage in its improvement cycle and nothing else; the places a
# page may say it: the index's count and filter ("By phase: …", "Phase"), the table head, and a
# phase named with its stage ("still in the measure phase", from a project's notes).
_PHASE_ALLOWED = re.compile(
    r"By phase:|\|\s*Phase\s*\||(define|measure|analyze|improve|control)\W*\|?\s*phases?\b", re.I
)


def _page_words(html: str) -> str:
    """A page's text as a reader or a screen reader meets it: no styles, no class names or
    links; tags become "|" so that a word in a cell of its own stands alone; the chart specs'
    titles and descriptions, and every aria-label, stay."""
    html = re.sub(r"<style.*?</style>", "", html, flags=re.S)
    html = re.sub(r'\s(class|id|data-[a-z-]+|for|href|src|name|value)="[^"]*"', "", html)
    return re.sub(r"<[^>]+>", "|", html)


def test_no_page_of_the_demo_says_phase_for_a_period(demo_site):
    seen = 0
    for path in sorted(demo_site.rglob("*.html")):
        text = _page_words(path.read_text(encoding="utf-8"))
        for m in re.finditer(r"\bphases?\b", text, re.I):
            seen += 1
            context = text[max(0, m.start() - 30) : m.end() + 30]
            assert _PHASE_ALLOWED.search(context), (path.name, context)
        assert not re.search(r"\bstages?\b", re.sub(r'"stage"', "", text), re.I), path
    assert seen >= 3  # the index's count, filter and table head at least


def test_results_json_says_phase_only_of_the_project(demo_site):
    def walk(node, where):
        if isinstance(node, dict):
            for key, value in node.items():
                assert "phase" not in key or where == "project", (where, key)
                # a chart's stage[] and its extras per stage (process_sigma_stage_1 ...) are
                # the fit index its README entry explains; no other key says "stage"
                assert "stage" not in key or re.fullmatch(r"stage|\w+_stage_\d", key), key
                walk(value, where or key)
        elif isinstance(node, list):
            for item in node:
                walk(item, where)
        elif isinstance(node, str) and where != "project":
            assert not re.search(r"\bphases?\b", node, re.I), (where, node)

    by_period = 0
    for path in sorted((demo_site / "projects").glob("*/results.json")):
        data = json.loads(path.read_text(encoding="utf-8"))
        assert data["schema"] == "steadyline-results/3"
        walk(data, "")
        by_period += sum(bool(h.get("control_chart_by_period")) for h in data["history"] or ())
        for m in data["metrics"]:
            if m.get("points"):
                assert len(m["points"]["period_kind"]) == len(m["points"]["value"]), path
    assert by_period >= 5  # the demo's metrics with after data
