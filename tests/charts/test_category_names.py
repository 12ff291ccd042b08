"""Category names are data, never code, and a chart of many categories gathers the small ones.

The browser test (tests/browser/test_categories.py) draws such charts in Chromium; these check
the specs themselves, compiled to Vega by vl-convert, quickly.
"""

from __future__ import annotations

import numpy as np
import pytest
import vl_convert as vlc

from steadyline.charts import column_chart, pareto_chart, period_pareto_chart
from steadyline.charts.categorical.categories import MAX_BARS, gathered, others_label
from steadyline.stats import pareto
from steadyline.stats.pareto import pareto_in_order

# Own properties of Object.prototype (ECMA-262 §20.1.3, annex B.2.2 for the __ ones)
BUILTIN = [
    "constructor",
    "__proto__",
    "toString",
    "hasOwnProperty",
    "valueOf",
    "isPrototypeOf",
    "propertyIsEnumerable",
    "toLocaleString",
    "__defineGetter__",
]
ODD = ["it's", 'say "hi"', "back\\slash", "a ' + alert(1) + '", "datum.count"]


def _entries(counts: dict[str, int]) -> list[str]:
    return [name for name, n in counts.items() for _ in range(n)]


def _code_strings(vega: dict) -> list[str]:
    """Every string of a compiled Vega spec that Vega evaluates or looks up (expressions,
    signals, field names, sort and domain settings): all but the datasets' values and the
    plain texts of titles."""
    out: list[str] = []

    def walk(node, data=False):
        if isinstance(node, dict):
            for k, v in node.items():
                walk(
                    v,
                    data
                    or k == "values"
                    or (k in ("text", "subtitle") and not isinstance(v, dict)),
                )
        elif isinstance(node, list):
            for v in node:
                walk(v, data)
        elif isinstance(node, str) and not data:
            out.append(node)

    walk(vega)
    return out


def _charts_of(names: list[str]):
    counts = {n: len(names) - i for i, n in enumerate(names)}
    p = pareto(_entries(counts))
    base = pareto_in_order(_entries(counts), None, p.categories)
    after = pareto_in_order(_entries({n: 1 + i for i, n in enumerate(names)}), None, p.categories)
    return {
        "pareto": pareto_chart(p),
        "column": column_chart(sorted(counts), [counts[n] for n in sorted(counts)]),
        "periods": period_pareto_chart([("Baseline", base), ("After", after)]),
    }


@pytest.mark.parametrize("names", [BUILTIN, ODD], ids=["builtin", "odd"])
def test_no_category_name_reaches_vega_code(names):
    for kind, cs in _charts_of(names).items():
        vega = vlc.vegalite_to_vega(cs.spec)
        code = _code_strings(vega)
        for name in names:
            hits = [s for s in code if name in s]
            assert hits == [], (kind, name, hits[:2])
        # the names are still there, as data
        bars = [r for k, rows in cs.spec["datasets"].items() if k.endswith("bars") for r in rows]
        assert {r["category"] for r in bars} == set(names), kind


def test_bar_keys_sort_as_the_bars_stand():
    names = [f"c{i}" for i in range(12)]
    cs = column_chart(names, list(range(12)))
    keys = [r["key"] for r in cs.spec["datasets"]["bars"]]
    assert sorted(keys) == keys and len(set(keys)) == 12
    assert keys[0] == "01 c0" and keys[-1] == "12 c11"


def _many(n: int) -> dict[str, int]:
    # distinct sizes so the order is known: cause 000 the largest
    return {f"cause {i:03d}": 3 * n - 2 * i for i in range(n)}


def test_at_most_max_bars_are_drawn_one_by_one():
    counts = _many(MAX_BARS)
    p = pareto(_entries(counts))
    assert gathered(MAX_BARS) == 0
    assert len(pareto_chart(p).spec["datasets"]["bars"]) == MAX_BARS
    col = column_chart(list(counts), list(counts.values()))
    assert len(col.spec["datasets"]["bars"]) == MAX_BARS


def test_pareto_of_many_categories_gathers_the_smallest_into_one_bar():
    n = 40
    counts = _many(n)
    total = sum(counts.values())
    p = pareto(_entries(counts))
    cs = pareto_chart(p)
    bars = cs.spec["datasets"]["bars"]
    k = gathered(n)
    assert k == n - (MAX_BARS - 1) == 16
    assert len(bars) == MAX_BARS
    assert [b["category"] for b in bars[:-1]] == list(p.categories[: MAX_BARS - 1])
    last = bars[-1]
    rest = sum(p.counts[MAX_BARS - 1 :])
    assert last["category"] == others_label(k) == "all 16 others"
    assert last["count"] == rest
    assert last["cumulative"] == 100  # the line still ends at 100%
    assert last["percent"] == pytest.approx(100 * rest / total, rel=1e-5)
    # reference: numpy.cumsum over the bars as drawn
    np.testing.assert_allclose(
        [b["cumulative"] for b in bars],
        100 * np.cumsum([b["count"] for b in bars]) / total,
        rtol=1e-5,
    )
    # the vital few and the table are the full data's
    assert len(cs.table) == n
    sub = " ".join(cs.spec["title"]["subtitle"])
    assert f"{n} categories, total" in sub and "the first 80% set apart" in sub
    assert f"the last bar gathers the {k} categories after the first {MAX_BARS - 1}" in sub
    assert f"{rest:.0f} in all" in sub


def test_pareto_says_when_the_vital_few_are_in_the_last_bar():
    counts = {f"cause {i:03d}": 100 for i in range(60)}  # flat: 48 make up 80%
    p = pareto(_entries(counts))
    assert len(p.vital_few) == 48
    cs = pareto_chart(p)
    sub = " ".join(cs.spec["title"]["subtitle"])
    assert f"{48 - (MAX_BARS - 1)} of the first 80% are among them" in sub


def test_column_chart_of_many_categories_draws_the_largest_in_order():
    n = 30
    counts = _many(n)
    names = sorted(counts, reverse=True)  # the order given: the smallest first
    cs = column_chart(names, [counts[c] for c in names], unit="cases")
    bars = cs.spec["datasets"]["bars"]
    largest = {f"cause {i:03d}" for i in range(MAX_BARS - 1)}
    assert [b["category"] for b in bars[:-1]] == [c for c in names if c in largest]
    assert bars[-1]["category"] == others_label(n - MAX_BARS + 1)
    assert bars[-1]["count"] == sum(v for c, v in counts.items() if c not in largest)
    assert len(cs.table) == n


def test_period_paretos_of_many_categories_gather_after_the_common_order():
    n = 30
    counts = _many(n)
    p = pareto(_entries(counts))
    later = {c: 1 + i % 4 for i, c in enumerate(counts)}
    after = pareto_in_order(_entries(later), None, p.categories)
    cs = period_pareto_chart([("Baseline", p), ("After", after)])
    d = cs.spec["datasets"]
    kept = list(p.categories[: MAX_BARS - 1])
    for name, q in (("p0_bars", p), ("p1_bars", after)):
        assert [b["category"] for b in d[name][:-1]] == kept
        assert d[name][-1]["category"] == others_label(n - MAX_BARS + 1)
        assert d[name][-1]["count"] == sum(q.counts[MAX_BARS - 1 :])
        assert d[name][-1]["cumulative"] == pytest.approx(100)
    assert len(cs.table) == 2 * n


def test_a_unit_named_like_an_inherited_property_is_not_a_bare_constant():
    # Vega's runtime refuses a chart whose axis title is exactly "toString" (the browser test
    # draws one); the title keeps its letters and gains a zero-width space, which shows nothing
    cs = column_chart(["a", "b"], [3, 1], unit="toString")
    bar = next(v for v in cs.spec["layer"] if v["mark"]["type"] == "bar")
    title = bar["encoding"]["y"]["axis"]["title"]
    assert title != "toString" and title.rstrip("\u200b") == "toString"
    assert [t["title"] for t in bar["encoding"]["tooltip"]] == ["category", "count"]
    assert cs.columns == ("category", "toString")  # the table keeps the unit as it is
    ordinary = column_chart(["a"], [3], unit="returns")
    assert ordinary.spec["layer"][0]["encoding"]["y"]["axis"]["title"] == "returns"


def test_a_unit_called_category_keeps_both_table_columns():
    cs = column_chart(["a", "b"], [3, 1], unit="category")
    assert cs.columns == ("category", "count")
    assert list(cs.table) == [{"category": "a", "count": 3.0}, {"category": "b", "count": 1.0}]
