"""Category names are data, never code: in a real browser, every categorical chart draws every
bar, whatever the categories are called.

Two small projects are built, served on 127.0.0.1 and drawn in headless Debian Chromium:

- ``builtin-names``: categories named like the properties every JavaScript object inherits
  (``constructor``, ``__proto__``, ``toString`` ...; ECMA-262, "Properties of the Object
  Prototype Object", and its annex B for ``__proto__`` and ``__defineGetter__``), which a
  drawing library that keeps values as keys of a plain object would mistake for its own;
- ``many-categories``: one metric with 5,000 categories, drawn as its largest categories and
  one bar gathering all the others, whose number is stated;
- ``builtin-metric-names``: measured values in metrics named ``constructor`` (unit
  ``toString``) and ``__proto__``: every run chart, control chart, histogram and box plot is
  drawn, with those names in its titles.

On the project page (Pareto and column chart) and the before-and-after page (Pareto by period),
each chart must be drawn with no console error and no page error, and its bars must be the
expected ones: one per category, labelled with its name on the axis in the expected order, with
a height proportional to its count. The expected counts are tallied here from the rows written.

Skipped when Chromium or playwright is missing, except under CI (env CI set), where that fails.
"""

from __future__ import annotations

import sys
from collections import Counter
from datetime import date, timedelta
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from corpus.kit import meta, write  # noqa: E402

pytestmark = pytest.mark.browser

# Every own property of Object.prototype (ECMA-262 §20.1.3 and annex B.2.2), plus names a
# careless page script or expression could take for something else.
BUILTIN_NAMES = [
    "constructor",
    "__proto__",
    "toString",
    "hasOwnProperty",
    "valueOf",
    "isPrototypeOf",
    "propertyIsEnumerable",
    "toLocaleString",
    "__defineGetter__",
    "__defineSetter__",
    "__lookupGetter__",
    "__lookupSetter__",
    "prototype",
    "length",
    "datum",
    "then",
]
BASELINE = (date(2026, 1, 5), date(2026, 2, 27))
AFTER = (date(2026, 3, 2), date(2026, 4, 24))

MANY = 5000  # categories of the large metric
MANY_SHOWN = 24  # its largest categories drawn one by one; the others go into one bar


def _days(start: date, n: int) -> list[str]:
    return [(start + timedelta(days=i % 50)).isoformat() for i in range(n)]


def _builtin_rows() -> tuple[list[tuple[str, str]], Counter, Counter]:
    """Distinct counts per name in each period: the baseline largest first in list order, the
    after period in another order, so a chart that loses or swaps a bar is caught; two names
    occur only after the baseline."""
    base, after = Counter(), Counter()
    rows = []
    for i, name in enumerate(BUILTIN_NAMES):
        base[name] = 2 * len(BUILTIN_NAMES) - i  # 32, 31, ... 17
        after[name] = 3 + (i * 7) % len(BUILTIN_NAMES)  # a permutation of 3..18
    after.update({"toJSON": 2, "call": 19})
    for period, counts in ((BASELINE, base), (AFTER, after)):
        names = [n for n in counts for _ in range(counts[n])]
        rows += list(zip(_days(period[0], len(names)), names, strict=True))
    rows.sort()
    return rows, base, after


def _many_counts() -> Counter:
    """5,000 categories, one row each with its count: 10 large ones (the vital few), 20 middling,
    the rest of 1 to 3 each."""
    counts = Counter()
    for i in range(MANY):
        counts[f"cause {i:04d}"] = (
            9000 - 500 * i if i < 10 else 100 - 3 * i if i < 30 else 1 + i % 3
        )
    return counts


def _csv(rows) -> str:
    return "day,reason\n" + "".join(f"{d},{r}\n" for d, r in rows)


def _categories_meta(slug: str, comparison: str | None, **metric) -> str:
    return meta(
        {"title": slug},
        {
            "id": "reasons",
            "name": "Reasons",
            "file": "reasons.csv",
            "type": "categories",
            "time": "day",
            "value": None,
            "category": "reason",
            "unit": "cases",
        }
        | metric,
        comparison=comparison,
    )


# The metric's name and unit are inherited names too: the unit stands alone as the column
# chart's axis title.
BUILTIN_METRIC = {"name": "constructor", "unit": "toString"}


# Measured values whose metrics are named like inherited properties: the name alone is an axis
# title (no unit), and a unit is one line of the moving-range chart's wrapped axis title.
BUILTIN_SERIES_TOML = f"""title = "Built-in metric names"
owner = "O"
phase = "improve"
problem = "P"

[comparison]
baseline = [{BASELINE[0]}, {BASELINE[1]}]
after = [{AFTER[0]}, {AFTER[1]}]
""" + "".join(
    f"""
[[metric]]
id = "{mid}"
name = "{name}"
file = "values.csv"
type = "continuous"
time = "day"
value = "v"
unit = "{unit}"
better = "lower"
spec_upper = 14.0
"""
    for mid, name, unit in (("a", "constructor", "toString"), ("b", "__proto__", ""))
)


def _series_csv() -> str:
    """One value a day over the baseline and after periods, lower after (deterministic)."""
    n = (AFTER[1] - BASELINE[0]).days + 1
    days = [(BASELINE[0] + timedelta(days=i)).isoformat() for i in range(n)]
    return "day,v\n" + "".join(
        f"{d},{(10.0 if d <= BASELINE[1].isoformat() else 8.5) + ((7 * i) % 11) / 10:.1f}\n"
        for i, d in enumerate(days)
    )


def _ranked(counts: Counter) -> list[str]:
    """Largest first, ties by name (the Pareto's order)."""
    return sorted(counts, key=lambda c: (-counts[c], c))


@pytest.fixture(scope="module")
def category_site(tmp_path_factory, serve_folder):
    from steadyline.pipeline.build import BuildOptions, build

    root = tmp_path_factory.mktemp("categories")
    builtin_rows, base, after = _builtin_rows()
    many = _many_counts()
    many_csv = "day,reason,n\n" + "".join(
        f"{d},{r},{many[r]}\n" for d, r in zip(_days(BASELINE[0], MANY), many, strict=True)
    )
    periods = f"baseline = [{BASELINE[0]}, {BASELINE[1]}]\nafter = [{AFTER[0]}, {AFTER[1]}]"
    projects = write(
        root / "projects",
        {
            "builtin-names/project.toml": _categories_meta(
                "builtin-names", periods, **BUILTIN_METRIC
            ),
            "builtin-names/reasons.csv": _csv(builtin_rows),
            "many-categories/project.toml": _categories_meta("many-categories", None, count="n"),
            "many-categories/reasons.csv": many_csv,
            "builtin-metric-names/project.toml": BUILTIN_SERIES_TOML,
            "builtin-metric-names/values.csv": _series_csv(),
        },
    )
    report = build(BuildOptions(projects, root / "site", force=True, jobs=1))
    assert report.ok and sorted(report.built) == [
        "builtin-metric-names",
        "builtin-names",
        "many-categories",
    ], report
    yield (
        serve_folder(root / "site"),
        {"base": base, "after": after, "many": many, "site": root / "site"},
    )


# Every drawn bar (rect marks) with its datum, and the x-axis labels, panel by panel, read
# from each chart's Vega scenegraph once all charts are settled.
BARS = """
async () => {
  const settled = await window.steadylineCharts;
  const out = {errors: [], charts: {}};
  for (const s of settled || []) {
    if (s.status !== 'fulfilled') { out.errors.push(String(s.reason)); continue; }
    const view = s.value.view;
    const chart = {bars: [], labels: {}, lines: [], subtitle: ''};
    (function walk(mark, panel) {
      const m = /^concat_(\\d+)_/.exec(mark.name || '');
      if (m) { panel = +m[1]; }
      if (mark.marktype === 'rect' && mark.role === 'mark') {
        mark.items.forEach(function (it) {
          chart.bars.push({panel: panel, name: it.datum.category, count: it.datum.count,
                           x: it.x, height: it.height});
        });
      }
      if (mark.marktype === 'line' && mark.role === 'mark') {
        chart.lines.push(mark.items.map(function (it) { return it.datum.cumulative; }));
      }
      if (mark.role === 'title-subtitle') {
        mark.items.forEach(function (it) { chart.subtitle += [].concat(it.text).join(' ') + ' '; });
      }
      const scale = mark.group && mark.group.datum ? mark.group.datum.scale : '';
      if (mark.marktype === 'text' && mark.role === 'axis-label' && /(^|_)x$/.test(scale)) {
        const key = String(panel);
        chart.labels[key] = mark.items.slice().sort(function (a, b) { return a.x - b.x; })
          .map(function (it) { return it.text; });
      }
      mark.items.forEach(function (it) {
        (it.items || []).forEach(function (child) { walk(child, panel); });
      });
    })(view.scenegraph().root, 0);
    chart.shown = Array.from(view.container().querySelectorAll('.role-axis-label text'),
                             function (t) { return t.textContent; });
    out.charts[view.container().closest(".chart").id] = chart;
  }
  return out;
}
"""


def _draw(browser, url: str) -> dict:
    ctx = browser.new_context(viewport={"width": 1280, "height": 900})
    ctx.set_default_timeout(60_000)
    page = ctx.new_page()
    problems: list[str] = []
    page.on(
        "console",
        lambda m: (
            problems.append(f"console {m.type}: {m.text}")
            if m.type in ("error", "warning")
            else None
        ),
    )
    page.on("pageerror", lambda e: problems.append(f"page error: {e}"))
    try:
        page.goto(url, wait_until="load")
        drawn = page.evaluate(BARS)
        states = page.evaluate(
            "() => Array.from(document.querySelectorAll('.chart'), "
            "c => [c.id, c.getAttribute('data-render')])"
        )
    finally:
        ctx.close()
    assert problems == [], problems
    assert drawn["errors"] == [], drawn["errors"]
    assert all(state == "done" for _, state in states), states
    return drawn["charts"]


def _check_panel(chart: dict, panel: int, expected: list[tuple[str, float]], where: str):
    """The panel's bars are ``expected`` (name, count) in order, each labelled on the x axis
    with its name, each as high as its count on one common scale."""
    bars = sorted((b for b in chart["bars"] if b["panel"] == panel), key=lambda b: b["x"])
    assert [(b["name"], b["count"]) for b in bars] == expected, where
    assert chart["labels"].get(str(panel)) == [name for name, _ in expected], where
    per_unit = [b["height"] / b["count"] for b in bars if b["count"] > 0]
    assert per_unit and min(per_unit) > 0, where
    for b in bars:  # within half a pixel of the height its count calls for
        assert abs(b["height"] - b["count"] * per_unit[0]) < 0.5, (where, b)


def test_builtin_names_draw_like_any_other(browser, category_site):
    base_url, counts = category_site
    base, after = counts["base"], counts["after"]
    # the project page counts the baseline, like its other displays
    page = _draw(browser, base_url + "projects/builtin-names/index.html")
    _check_panel(page["chart-reasons-pareto"], 0, [(n, base[n]) for n in _ranked(base)], "Pareto")
    _check_panel(
        page["chart-reasons-column"],
        0,
        [(n, base[n]) for n in sorted(base, key=str.casefold)],
        "column chart",
    )

    # before and after: the baseline panel descending, the after panel in the baseline's
    # order, the names new after the baseline appended, largest first
    history = _draw(browser, base_url + "projects/builtin-names/history.html")
    chart = history["chart-history-reasons-period-pareto"]
    order = _ranked(base) + ["call", "toJSON"]
    _check_panel(chart, 0, [(n, base[n]) for n in order], "baseline panel")
    _check_panel(chart, 1, [(n, after[n]) for n in order], "after panel")
    assert [base[n] for n in order[:-2]] == sorted(base.values(), reverse=True)


TEXTS = """() => Array.from(document.querySelectorAll('.chart svg text'), t => {
  const lines = t.querySelectorAll('tspan');
  return lines.length ? Array.from(lines, l => l.textContent) : [t.textContent];
}).flat()"""


def test_metrics_named_like_builtins_draw_every_chart(browser, category_site):
    base_url, _ = category_site
    for name in ("index.html", "history.html"):
        ctx = browser.new_context(viewport={"width": 1280, "height": 900})
        ctx.set_default_timeout(60_000)
        errors: list[str] = []
        try:
            page = ctx.new_page()
            page.on("console", lambda m, e=errors: e.append(m.text) if m.type == "error" else None)
            page.on("pageerror", lambda x, e=errors: e.append(str(x)))
            page.goto(base_url + "projects/builtin-metric-names/" + name, wait_until="load")
            settled = page.evaluate(
                "async () => (await window.steadylineCharts).map(s => s.status)"
            )
            drawn = page.evaluate(
                "() => Array.from(document.querySelectorAll('.chart'), "
                "c => !!c.querySelector('svg text'))"
            )
            texts = page.evaluate(TEXTS)
        finally:
            ctx.close()
        # every chart drawn (two metrics: at least run, control, histogram, box plot each)
        assert errors == [], (name, errors)
        assert len(settled) >= 8 and set(settled) == {"fulfilled"}, (name, settled)
        assert all(drawn), (name, drawn)
        assert not any("[object Object]" in t for t in texts), name
        # the names and the unit are drawn as titles, as they are (the guard adds only a
        # zero-width space, which nothing shows)
        shown = {t.replace("\u200b", "") for t in texts}
        assert {"constructor (toString)", "__proto__", "toString"} <= shown, (name, shown)


def test_a_chart_vega_cannot_run_says_so_in_words(browser, category_site):
    """A chart whose dataflow Vega cannot build is drawn as nothing while vega-embed's promise
    resolves; the page must not pass that blank box off as a chart. The guarded names are
    unguarded here, in a copy of a page, to make such a chart."""
    base_url, counts = category_site
    folder = counts["site"] / "projects/builtin-metric-names"
    html = (folder / "index.html").read_text("utf-8")
    assert "\u200b" in html
    (folder / "unguarded.html").write_text(html.replace("\u200b", ""), "utf-8")
    ctx = browser.new_context(viewport={"width": 1280, "height": 900})
    ctx.set_default_timeout(60_000)
    try:
        page = ctx.new_page()
        page.goto(base_url + "projects/builtin-metric-names/unguarded.html", wait_until="load")
        settled = page.evaluate("async () => (await window.steadylineCharts).map(s => s.status)")
        states = page.evaluate(
            "() => Array.from(document.querySelectorAll('.chart'), "
            "c => [c.getAttribute('data-render'), c.textContent])"
        )
    finally:
        ctx.close()
    failed = [text for state, text in states if state == "error"]
    assert failed and settled.count("rejected") == len(failed), (settled, states)
    assert all(t.startswith("This chart could not be drawn: ") for t in failed), failed
    assert settled.count("fulfilled") >= 6  # the others are drawn as usual


def _vital_few(counts: Counter, threshold: float = 80.0) -> list[str]:
    """The smallest leading set, largest first, reaching the threshold share of the total."""
    total, running, out = sum(counts.values()), 0, []
    for name in _ranked(counts):
        running += counts[name]
        out.append(name)
        if 100 * running >= threshold * total:
            return out
    return out


def test_thousands_of_categories_draw_the_largest_and_one_bar_for_the_others(
    browser, category_site
):
    import json

    base_url, data = category_site
    many = data["many"]
    ranked = _ranked(many)
    gathered = MANY - MANY_SHOWN
    others = f"all {gathered:,} others"
    rest = sum(many[n] for n in ranked[MANY_SHOWN:])
    page = _draw(browser, base_url + "projects/many-categories/index.html")

    pareto = page["chart-reasons-pareto"]
    _check_panel(
        pareto, 0, [(n, many[n]) for n in ranked[:MANY_SHOWN]] + [(others, rest)], "Pareto"
    )
    assert pareto["lines"] and pareto["lines"][0][-1] == 100  # the line ends at 100%
    assert others in pareto["shown"]  # the last bar's label is drawn whole, not cut short
    vital = _vital_few(many)
    assert 1 < len(vital) < MANY_SHOWN  # all drawn one by one
    words = " ".join(pareto["subtitle"].split())
    assert f"{MANY} categories, total" in words and "the first 80% set apart" in words
    assert f"the last bar gathers the {gathered:,} categories after the first {MANY_SHOWN}" in words

    column = page["chart-reasons-column"]
    largest = sorted(ranked[:MANY_SHOWN], key=str.casefold)
    _check_panel(column, 0, [(n, many[n]) for n in largest] + [(others, rest)], "column chart")
    assert f"gathers the other {gathered:,}" in " ".join(column["subtitle"].split())

    results = json.loads((data["site"] / "projects/many-categories/results.json").read_text())
    (metric,) = results["metrics"]
    assert metric["pareto"]["gathered_categories"] == gathered
    assert metric["column_chart"]["gathered_categories"] == gathered
    # results.json lists the 200 largest categories and counts the rest (site.drawn); the
    # total and percentages are of every category
    listed = metric["pareto"]["categories"]
    from steadyline.site.drawn import CATEGORIES_LISTED

    assert len(listed) == CATEGORIES_LISTED
    assert [many[c] for c in listed] == [many[c] for c in ranked[:CATEGORIES_LISTED]]
    assert metric["pareto"]["categories_left_out"] == MANY - CATEGORIES_LISTED
    assert metric["pareto"]["vital_few"] == [v for v in vital if v in set(listed)]
    assert len(metric["pareto"]["vital_few"]) + metric["pareto"]["vital_few_left_out"] == len(vital)
