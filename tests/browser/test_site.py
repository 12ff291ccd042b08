"""The built demo site in a real browser (headless Debian Chromium, served from 127.0.0.1).

- every page (index, each project page, each before/after page) loads under its strict
  Content-Security-Policy, draws every chart (an svg or canvas in each `.chart`, marked
  data-render="done"), logs no console error, raises no page error, violates no CSP directive,
  gets no HTTP error and asks no host but the local server for anything;
- every local link and resource on every page resolves;
- the index's search box and phase / owner / tag filters show exactly the matching cards
  (judged from what each card displays) and clearing them shows every card again;
- each chart's "data (CSV)" download holds the rows of the chart's data table, and its
  "chart spec" download is the spec the page draws;
- full-page screenshots of the index, one project page and one before/after page are saved to
  test-artifacts/ for a human to look at.
"""

from __future__ import annotations

import csv
import io
import json
import re
import unicodedata
import urllib.error
import urllib.request
from dataclasses import dataclass, field
from decimal import Decimal
from pathlib import Path
from urllib.parse import urljoin, urlsplit

import pytest

pytestmark = pytest.mark.browser

PROJECTS = Path(__file__).resolve().parents[2] / "projects"

# Collected before any page script runs (init scripts are not subject to the page's CSP).
CSP_LISTENER = """
window.__cspViolations = [];
document.addEventListener('securitypolicyviolation', function (e) {
  window.__cspViolations.push(e.violatedDirective + ' blocked ' + (e.blockedURI || '(inline)') +
                              ' at ' + (e.sourceFile || '?') + ':' + e.lineNumber);
});
"""

# Waits for every chart; returns what each container ended up with.
CHART_STATE = """
async () => {
  const settled = await window.steadylineCharts;  // undefined on a page without charts
  const charts = Array.from(document.querySelectorAll('.chart')).map(function (c) {
    const drawn = c.querySelector('svg, canvas');
    const box = drawn ? drawn.getBoundingClientRect() : null;
    const err = c.querySelector('.render-error');
    return {
      id: c.id,
      render: c.getAttribute('data-render'),
      drawn: drawn ? drawn.tagName.toLowerCase() : null,
      width: box ? box.width : 0,
      right: box ? box.right + window.scrollX : 0,
      height: box ? box.height : 0,
      marks: drawn ? drawn.querySelectorAll('path, line, rect, circle, text').length : 0,
      error: err ? err.textContent : null,
    };
  });
  return {
    settled: settled ? settled.map(function (r) {
      return r.status === 'fulfilled' ? 'ok' : String(r.reason && r.reason.message || r.reason);
    }) : null,
    specs: document.querySelectorAll('script.chart-spec').length,
    charts: charts,
    csp: window.__cspViolations || ['(CSP listener missing)'],
    cspMeta: (document.querySelector('meta[http-equiv="Content-Security-Policy"]') || {}).content || null,
    scrollWidth: document.documentElement.scrollWidth,
    clientWidth: document.documentElement.clientWidth,
    wideCharts: charts.filter(function (c) {
      return c.right > document.documentElement.clientWidth + 0.5;
    }).map(function (c) { return c.id + ' (right edge at ' + Math.round(c.right) + ' px)'; }),
  };
}
"""


class PageWatch:
    """Records everything a page does wrong: console errors and warnings from Vega or the CSP,
    uncaught errors, failed or erroring requests, and requests to any other host."""

    def __init__(self, page, site_url: str):
        self.problems: list[str] = []
        self.origin = "{0.scheme}://{0.netloc}".format(urlsplit(site_url))
        page.on("console", self._console)
        page.on("pageerror", lambda exc: self.problems.append(f"page error: {exc}"))
        page.on("request", self._request)
        page.on(
            "requestfailed",
            lambda r: self.problems.append(f"request failed: {r.url} ({r.failure})"),
        )
        page.on("response", self._response)

    def _console(self, msg):
        text = msg.text
        if msg.type == "error":
            self.problems.append(f"console error: {text}")
        elif msg.type == "warning" and (
            text.startswith("WARN") or "Content Security Policy" in text or "Refused" in text
        ):  # Vega's logger prefixes its warnings with WARN (e.g. unknown field, empty data)
            self.problems.append(f"console warning: {text}")

    def _request(self, request):
        url = request.url
        scheme = urlsplit(url).scheme
        if scheme in ("data", "blob", "about"):
            return
        if not (url == self.origin or url.startswith(self.origin + "/")):
            self.problems.append(f"request to another host: {request.method} {url}")

    def _response(self, response):
        if response.status >= 400:
            self.problems.append(f"HTTP {response.status} for {response.url}")


def open_page(context, site_url: str, path: str):
    page = context.new_page()
    page.add_init_script(CSP_LISTENER)
    watch = PageWatch(page, site_url)
    response = page.goto(urljoin(site_url, path), wait_until="load")
    assert response is not None and response.ok, f"{path}: HTTP {response and response.status}"
    return page, watch


def site_pages(built_site: Path) -> list[str]:
    """Every page of the site: the index, then each project's page and before/after page."""
    pages = ["index.html"]
    for d in sorted((built_site / "projects").iterdir()):
        for name in ("index.html", "history.html"):
            if (d / name).is_file():
                pages.append(f"projects/{d.name}/{name}")
    return pages


def project_slugs() -> list[str]:
    return sorted(d.name for d in PROJECTS.iterdir() if (d / "project.toml").is_file())


def csp_directives(content: str) -> dict[str, list[str]]:
    out = {}
    for part in content.split(";"):
        words = part.split()
        if words:
            out[words[0].lower()] = words[1:]
    return out


def chart_problems(state: dict) -> list[str]:
    """What is wrong with a page's CSP and charts, from CHART_STATE's answer."""
    problems = [f"CSP violation: {v}" for v in state["csp"]]
    meta = state["cspMeta"]
    if not meta:
        problems.append("no Content-Security-Policy meta element")
    else:
        d = csp_directives(meta)
        script_src = d.get("script-src", d.get("default-src"))
        if script_src != ["'self'"]:
            problems.append(f"script-src is not exactly 'self': {script_src}")

    charts = state["charts"]
    if len(charts) != state["specs"]:
        problems.append(f"{len(charts)} chart containers but {state['specs']} chart specs")
    if charts:
        if state["settled"] is None:
            problems.append("window.steadylineCharts was never set although the page has charts")
        else:
            if len(state["settled"]) != len(charts):
                problems.append(f"{len(state['settled'])} embeds for {len(charts)} charts")
            problems += [f"an embed was rejected: {s}" for s in state["settled"] if s != "ok"]
    for c in charts:
        if c["render"] != "done":
            problems.append(f"#{c['id']}: data-render={c['render']!r} {c['error'] or ''}".rstrip())
        if not c["drawn"]:
            problems.append(f"#{c['id']}: no svg or canvas in the container")
        elif c["width"] < 50 or c["height"] < 50 or c["marks"] == 0:
            problems.append(
                f"#{c['id']}: drawn {c['drawn']} is empty or tiny "
                f"({c['width']:.0f}x{c['height']:.0f}, {c['marks']} marks)"
            )
    return problems


@dataclass
class Visit:
    state: dict | None = None  # CHART_STATE's answer
    figures: list[dict] = field(default_factory=list)  # FIGURE_STATE's answer
    problems: list[str] = field(default_factory=list)  # recorded by PageWatch, or the visit failed
    screenshot: Path | None = None


def screenshot_pages(built_site: Path) -> dict[str, str]:
    """The index, and the project page and before/after page of the project with most charts."""
    with_history = [p.split("/")[1] for p in site_pages(built_site) if p.endswith("/history.html")]
    slug = max(
        with_history,
        key=lambda s: (
            (built_site / "projects" / s / "index.html")
            .read_text(encoding="utf-8")
            .count('class="chart"'),
            s,
        ),
    )
    return {
        "index.html": "index.png",
        f"projects/{slug}/index.html": f"project-{slug}.png",
        f"projects/{slug}/history.html": f"history-{slug}.png",
    }


@pytest.fixture(scope="module")
def visits(browser_context, built_site, site_url, artifacts_dir) -> dict[str, Visit]:
    """Every page visited once: charts awaited, downloads fetched, chosen pages photographed."""
    shots = screenshot_pages(built_site)
    out = {}
    for path in site_pages(built_site):
        visit = out[path] = Visit()
        page = None
        try:
            page, watch = open_page(browser_context, site_url, path)
            visit.problems = watch.problems  # the list keeps filling while the page lives
            visit.state = page.evaluate(CHART_STATE)
            visit.figures = page.evaluate(FIGURE_STATE)
            if path in shots:
                target = artifacts_dir / shots[path]
                target.unlink(missing_ok=True)
                page.screenshot(path=str(target), full_page=True)
                visit.screenshot = target
        except Exception as exc:  # one broken page must not hide what the others show
            visit.problems.append(f"visit failed: {type(exc).__name__}: {exc}")
        finally:
            if page is not None:
                page.close()
    return out


# --------------------------------------------------------------------------------------------
# (a) every page loads, draws every chart, stays quiet and offline


def test_site_has_a_page_for_every_project(built_site):
    pages = site_pages(built_site)
    got = sorted(p.split("/")[1] for p in pages if p.endswith("/index.html"))
    assert got == project_slugs()
    assert any(p.endswith("/history.html") for p in pages), "no before/after page in the demo"


def test_every_page_draws_its_charts_cleanly(visits):
    problems = []
    for path, visit in visits.items():
        found = list(visit.problems)
        if visit.state is not None:
            found += chart_problems(visit.state)
        problems += [f"{path}: {p}" for p in found]
    n_charts = sum(len(v.state["charts"]) for v in visits.values() if v.state)
    assert n_charts > 0, "the demo site has no charts at all"
    assert not problems, "\n".join(problems)


def test_every_local_link_and_resource_resolves(built_site, site_url):
    """Every href/src on every page that points into the site answers 200."""
    broken = []
    checked: dict[str, int] = {}
    pattern = re.compile(r"""\b(?:href|src)\s*=\s*["']([^"']+)["']""")
    for path in site_pages(built_site):
        base = urljoin(site_url, path)
        html = (built_site / path).read_text(encoding="utf-8")
        for ref in set(pattern.findall(html)):
            url = urljoin(base, ref).split("#")[0]
            if not url.startswith(site_url):
                continue  # links to other sites and mailto: are not fetched by the page itself
            if url not in checked:
                try:
                    with urllib.request.urlopen(url, timeout=10) as r:
                        checked[url] = r.status
                except urllib.error.HTTPError as e:
                    checked[url] = e.code
            if checked[url] != 200:
                broken.append(f"{path}: {ref} -> HTTP {checked[url]}")
    assert checked, "no local links found at all"
    assert not broken, "broken local links:\n" + "\n".join(sorted(broken))


def test_no_page_scrolls_sideways(visits):
    """At a 1280 px wide window nothing, charts included, is wider than the page."""
    wide = []
    for path, visit in visits.items():
        st = visit.state
        if st is None:
            wide.append(f"{path}: not visited: {visit.problems}")
        elif st["scrollWidth"] > st["clientWidth"]:
            wide.append(
                f"{path}: {st['scrollWidth']} px wide in a {st['clientWidth']} px window; "
                f"charts past the edge: {', '.join(st['wideCharts']) or 'none'}"
            )
    assert not wide, "\n".join(wide)


PLOT_WIDTHS = """
async () => {
  await window.steadylineCharts;
  return {
    scrollWidth: document.documentElement.scrollWidth,
    clientWidth: document.documentElement.clientWidth,
    // the widest axis line of each chart: the width its x axis, and so its plot, was given
    plots: Array.from(document.querySelectorAll('.chart')).map(function (c) {
      const widths = Array.from(c.querySelectorAll('g.role-axis-domain')).map(function (g) {
        return g.getBBox().width;
      });
      return [c.id, widths.length ? Math.max.apply(null, widths) : 0];
    }),
  };
}
"""


def test_a_phone_sized_window_keeps_every_plot_readable(browser, site_url, built_site):
    """At 400 px wide the page does not scroll sideways and every chart keeps a plot of at
    least 100 px (a long title line used to squeeze it to a sliver)."""
    ctx = browser.new_context(base_url=site_url, viewport={"width": 400, "height": 800})
    ctx.set_default_timeout(30_000)
    problems = []
    try:
        # the index, the busiest project's page, and every before/after page (side by side
        # Pareto charts, staged control charts with labels on both sides)
        pages = dict.fromkeys(
            list(screenshot_pages(built_site))
            + [p for p in site_pages(built_site) if p.endswith("history.html")]
        )
        for path in pages:
            page, watch = open_page(ctx, site_url, path)
            try:
                st = page.evaluate(PLOT_WIDTHS)
            finally:
                page.close()
            if st["scrollWidth"] > st["clientWidth"]:
                problems.append(f"{path}: {st['scrollWidth']} px wide in {st['clientWidth']}")
            problems += [f"{path}: {cid} plot {w:.0f} px" for cid, w in st["plots"] if w < 100]
            problems += [f"{path}: {p}" for p in watch.problems]
    finally:
        ctx.close()
    assert not problems, "\n".join(problems)


AXIS_LABELS = """
async () => {
  await window.steadylineCharts;
  const chart = document.querySelector('.chart');  // the first chart: a time series
  return Array.from(chart.querySelectorAll('g.role-axis-label text')).map(t => t.textContent);
}
"""


def test_time_axes_read_the_same_in_every_time_zone(browser, site_url, built_site):
    """Day ticks name the month ("Mar 14", not "Sat 14") and come out the same wherever the
    reader is: the dates are UTC instants, labelled in UTC."""
    path = next(
        p for p in screenshot_pages(built_site) if p.endswith("/index.html") and p != "index.html"
    )
    seen = {}
    for tz in ("UTC", "America/Los_Angeles", "Asia/Tokyo"):
        ctx = browser.new_context(
            base_url=site_url, viewport={"width": 1280, "height": 900}, timezone_id=tz
        )
        try:
            page, watch = open_page(ctx, site_url, path)
            seen[tz] = page.evaluate(AXIS_LABELS)
            assert not watch.problems, watch.problems
        finally:
            ctx.close()
    assert seen["UTC"] and seen["UTC"] == seen["America/Los_Angeles"] == seen["Asia/Tokyo"]
    weekdays = ("Mon ", "Tue ", "Wed ", "Thu ", "Fri ", "Sat ", "Sun ")
    assert not any(label.startswith(weekdays) for label in seen["UTC"]), seen["UTC"]


def test_point_tooltips_give_the_date(browser_context, site_url, built_site):
    """Hovering a point shows its date as text (it read "NaN" once), its value and period."""
    path = next(
        p for p in screenshot_pages(built_site) if p.endswith("/index.html") and p != "index.html"
    )
    page, watch = open_page(browser_context, site_url, path)
    try:
        page.evaluate("async () => { await window.steadylineCharts; }")
        texts = []
        for chart in page.locator(".chart").all()[:2]:  # a run chart and a control chart
            chart.locator("g.mark-symbol path").nth(3).hover(force=True)
            page.wait_for_timeout(300)
            texts.append(
                page.evaluate(
                    "() => (document.querySelector('#vg-tooltip-element') || {}).innerText || ''"
                )
            )
    finally:
        page.close()
    assert len(texts) == 2
    for text in texts:
        assert "NaN" not in text and re.search(r"date\s+\d{4}-\d{2}-\d{2}", text), text
        assert "value" in text and "period" in text, text


# --------------------------------------------------------------------------------------------
# (b) the index filters

CARD_STATE = """
() => Array.from(document.querySelectorAll('#project-list li.card')).map(function (c) {
  const meta = c.querySelector('.meta');
  return {
    title: c.querySelector('h2').textContent.trim(),
    text: c.innerText,
    phase: (c.querySelector('.phase-badge') || {}).textContent || '',
    owner: meta ? meta.querySelector('.owner').textContent.trim() : '',
    tags: Array.from(c.querySelectorAll('.tag')).map(function (t) { return t.textContent.trim(); }),
    visible: c.getClientRects().length > 0,
    hidden: c.hidden,
  };
})
"""


def fold(s: str) -> str:
    return "".join(
        ch for ch in unicodedata.normalize("NFKD", s) if not unicodedata.combining(ch)
    ).lower()


def test_index_filters(browser_context, site_url):
    page, watch = open_page(browser_context, site_url, "index.html")
    try:
        cards = page.evaluate(CARD_STATE)
        n = len(cards)
        assert n == len(project_slugs())
        count = page.locator("#f-count")
        empty = page.locator("#f-empty")

        def shown() -> list[str]:
            state = page.evaluate(CARD_STATE)
            for c in state:  # a hidden attribute must really hide the card (CSS can defeat it)
                assert c["visible"] == (not c["hidden"]), (
                    f"card {c['title']!r}: hidden={c['hidden']} but visible={c['visible']}"
                )
            return sorted(c["title"] for c in state if c["visible"])

        def expect(titles, what):
            titles = sorted(titles)
            assert shown() == titles, what
            assert count.inner_text().strip() == f"{len(titles)} shown", what
            assert empty.is_visible() == (not titles), what

        every = [c["title"] for c in cards]
        expect(every, "initial state shows every project")

        # a word of one project's title that no other card shows anywhere
        words = {}
        for c in cards:
            for w in set(re.findall(r"[^\W\d_]{5,}", fold(c["text"]))):
                words.setdefault(w, []).append(c["title"])
        unique = sorted(
            w
            for c in cards
            for w in re.findall(r"[^\W\d_]{5,}", fold(c["title"]))
            if len(words[w]) == 1
        )
        assert unique, "no project title has a word of its own; pick demo data that does"
        word = unique[0]
        search = page.locator("#f-text")
        search.press_sequentially(word.upper(), delay=5)  # typed, and in capitals
        expect(words[word], f"search for {word.upper()!r}")

        search.fill("")
        expect(every, "clearing the search box")

        # accents do not matter: a folded, capitalised owner name finds that owner's projects
        accented = sorted({c["owner"] for c in cards if fold(c["owner"]) != c["owner"].lower()})
        if accented:
            owner = accented[0]
            search.fill(fold(owner).upper())
            expect(
                [c["title"] for c in cards if c["owner"] == owner], f"search for {fold(owner)!r}"
            )

        search.fill("zz-no-project-has-this")
        expect([], "a search that matches nothing")
        search.fill("")
        expect(every, "clearing the search box again")

        def check_select(selector, matches, label):
            options = [
                v
                for v in page.locator(f"{selector} option").evaluate_all(
                    "os => os.map(o => o.value)"
                )
                if v
            ]
            assert options, f"{label}: no options"
            narrowed = False
            for value in options:
                page.select_option(selector, value)
                want = [c["title"] for c in cards if matches(c, value)]
                expect(want, f"{label} = {value!r}")
                narrowed |= 0 < len(want) < n
            page.select_option(selector, "")
            expect(every, f"{label} back to any")
            assert narrowed, f"no {label} value narrows the list: the filter is untested"
            return options

        check_select("#f-phase", lambda c, v: c["phase"].strip().lower() == v, "phase")
        owners = check_select("#f-owner", lambda c, v: c["owner"] == v, "owner")
        assert sorted(owners) == sorted({c["owner"] for c in cards})
        tags = check_select("#f-tag", lambda c, v: v in c["tags"], "tag")
        assert sorted(tags) == sorted({t for c in cards for t in c["tags"]})

        # filters combine: a tag and a search word together, then everything cleared
        tag = max(tags, key=lambda t: sum(t in c["tags"] for c in cards))
        with_tag = [c for c in cards if tag in c["tags"]]
        first = fold(with_tag[0]["title"]).split()[0]
        page.select_option("#f-tag", tag)
        search.fill(first)
        expect(
            [c["title"] for c in with_tag if first in fold(c["text"])], f"tag {tag!r} and {first!r}"
        )
        page.select_option("#f-tag", "")
        search.fill("")
        expect(every, "all filters cleared")
        assert not watch.problems, "\n".join(watch.problems)
    finally:
        page.close()


# --------------------------------------------------------------------------------------------
# (c) downloads

FIGURE_STATE = """
async () => {
  const out = [];
  for (const fig of document.querySelectorAll('figure')) {
    const csvLink = Array.from(fig.querySelectorAll('a')).find(a => a.textContent.trim() === 'data (CSV)');
    if (!csvLink) continue;
    const specLink = Array.from(fig.querySelectorAll('a')).find(a => /\\.vl\\.json$/.test(a.getAttribute('href')));
    const table = fig.querySelector('details.datatable table');
    const specBlock = fig.querySelector('script.chart-spec');
    const csvResp = await fetch(csvLink.href);
    const specResp = specLink ? await fetch(specLink.href) : null;
    out.push({
      csvHref: csvLink.getAttribute('href'),
      csvStatus: csvResp.status,
      csvType: csvResp.headers.get('content-type'),
      csv: await csvResp.text(),
      specStatus: specResp ? specResp.status : null,
      spec: specResp ? await specResp.text() : null,
      pageSpec: specBlock ? specBlock.textContent : null,
      summary: table ? fig.querySelector('details.datatable summary').textContent : null,
      header: table ? Array.from(table.querySelectorAll('thead th')).map(th => th.textContent) : null,
      rows: table ? Array.from(table.querySelectorAll('tbody tr')).map(
        tr => Array.from(tr.querySelectorAll('td, th')).map(td => td.textContent)) : null,
    });
  }
  return out;
}
"""


def same_cell(downloaded: str, shown: str) -> bool:
    """The table shows numbers rounded to a few significant digits, the CSV carries them in full:
    the shown value must be the downloaded one rounded to the digits shown."""
    if downloaded == shown:
        return True
    try:
        value = float(downloaded)
        digits = len(Decimal(shown).normalize().as_tuple().digits)
        return float(f"{value:.{max(digits, 1)}g}") == float(shown)
    except (ValueError, ArithmeticError):
        return False


def parse_json(text: str):
    try:
        return json.loads(text)
    except ValueError as exc:
        return f"unreadable JSON: {exc}"


def test_chart_downloads_match_the_page(visits):
    """Fetched by the page itself (so under its CSP), for every chart of every page."""
    problems = []
    n_figures = 0
    for path, visit in visits.items():
        if visit.state is None:
            problems.append(f"{path}: not visited: {visit.problems}")
            continue
        figures = visit.figures
        n_charts = len(visit.state["charts"])
        if len(figures) != n_charts:
            problems.append(f"{path}: {n_charts} charts but {len(figures)} 'data (CSV)' links")
        for f in figures:
            n_figures += 1
            where = f"{path} {f['csvHref']}"
            if f["csvStatus"] != 200:
                problems.append(f"{where}: HTTP {f['csvStatus']}")
                continue
            if not (f["csvType"] or "").startswith("text/csv"):
                problems.append(f"{where}: served as {f['csvType']}")
            rows = list(csv.reader(io.StringIO(f["csv"])))
            if f["header"] is None:
                problems.append(f"{where}: no data table beside the chart")
                continue
            if not rows or rows[0] != f["header"]:
                problems.append(f"{where}: CSV header {rows[:1]} != table header {f['header']}")
                continue
            body = rows[1:]
            # "(N rows)", or for long tables "(N rows; K shown, all in the CSV)"
            summary = f["summary"] or ""
            total = re.search(r"\((\d+) rows?\b", summary)
            first = re.search(r"; (\d+) shown", summary)
            if not total or int(total.group(1)) != len(body):
                problems.append(f"{where}: table summary {summary!r} but {len(body)} CSV rows")
            n_shown = int(first.group(1)) if first else len(body)
            if first and not n_shown < len(body):
                problems.append(f"{where}: summary says only {n_shown} shown of {len(body)}")
            if len(f["rows"]) != n_shown:
                problems.append(
                    f"{where}: {len(f['rows'])} table rows, expected {n_shown} of {len(body)} CSV rows"
                )
            for i, (got, shown) in enumerate(zip(body, f["rows"], strict=False)):
                if len(got) != len(shown) or not all(map(same_cell, got, shown)):
                    problems.append(f"{where}: row {i + 1} differs: CSV {got} vs table {shown}")
                    break
            if f["specStatus"] != 200:
                problems.append(f"{where}: chart spec download HTTP {f['specStatus']}")
            elif f["pageSpec"] is None or parse_json(f["spec"]) != parse_json(f["pageSpec"]):
                problems.append(f"{where}: downloaded chart spec is not the spec the page draws")
    assert n_figures > 0
    assert not problems, "\n".join(problems)


# --------------------------------------------------------------------------------------------
# (d) screenshots for a human


def test_screenshots(visits, built_site, artifacts_dir):
    shots = screenshot_pages(built_site)
    for path, name in shots.items():
        target = visits[path].screenshot
        assert target == artifacts_dir / name, f"{path}: no screenshot ({visits[path].problems})"
        assert target.stat().st_size > 10_000, f"{target} looks empty"
