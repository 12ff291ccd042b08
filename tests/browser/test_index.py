"""The index in a real browser: filter by status, the four sort orders, the table view, the CSV
link, and printing the index on one A4 page. Orders and matches are worked out here from what
each card displays, not from the attributes the page script sorts by."""

from __future__ import annotations

import re
from urllib.parse import urljoin

import pytest

from steadyline.status import Status

pytestmark = pytest.mark.browser

STATE = """
() => ({
  cards: Array.from(document.querySelectorAll('#project-list li.card')).map(function (c) {
    const meta = c.querySelector('.meta');
    const when = c.querySelector('.data-to');
    return {
      slug: c.dataset.slug,
      title: c.querySelector('h2').textContent.trim(),
      status: c.querySelector('.status').textContent.trim(),
      owner: meta ? meta.querySelector('.owner').textContent.trim() : '',
      dataTo: when ? when.textContent.replace('data to', '').trim() : '',
      visible: c.getClientRects().length > 0,
    };
  }),
  rows: Array.from(document.querySelectorAll('#project-rows tr')).map(function (r) {
    return {slug: r.dataset.slug, visible: r.getClientRects().length > 0, hidden: r.hidden,
            title: r.querySelector('th').textContent.trim(),
            status: r.querySelector('.status').textContent.trim()};
  }),
  listShown: document.getElementById('project-list').getClientRects().length > 0,
  tableShown: document.getElementById('project-table').getClientRects().length > 0,
  count: document.getElementById('f-count').textContent.trim(),
})
"""

LABEL_RANK = {s.label: s.rank for s in Status}


def status_rank(shown: str) -> int:
    return LABEL_RANK[shown.lower()]


@pytest.fixture()
def index(browser_context, site_url):
    from test_site import PageWatch  # a module of this folder (pytest puts it on the path)

    page = browser_context.new_page()
    watch = PageWatch(page, site_url)
    page.goto(urljoin(site_url, "index.html"), wait_until="load")
    yield page
    page.close()
    assert not watch.problems, "\n".join(watch.problems)


def test_the_status_filter_shows_exactly_the_projects_with_that_status(index):
    every = index.evaluate(STATE)["cards"]
    values = [
        v for v in index.locator("#f-status option").evaluate_all("os => os.map(o => o.value)") if v
    ]
    assert sorted(values, key=lambda v: Status(v).rank) == values  # in the page's order
    assert {Status(v).label for v in values} == {c["status"].lower() for c in every}
    for value in values:
        index.select_option("#f-status", value)
        state = index.evaluate(STATE)
        want = sorted(c["slug"] for c in every if c["status"].lower() == Status(value).label)
        assert sorted(c["slug"] for c in state["cards"] if c["visible"]) == want, value
        assert state["count"] == f"{len(want)} shown"
        # the table follows the cards, row for row
        assert {r["slug"]: not r["hidden"] for r in state["rows"]} == {
            c["slug"]: c["visible"] for c in state["cards"]
        }
    index.select_option("#f-status", "")
    assert all(c["visible"] for c in index.evaluate(STATE)["cards"])
    # a status and a search word combine
    stale = [c for c in every if c["status"].lower() == "data stale"]
    assert stale, "the demo has no stale project at the tests' build date"
    word = stale[0]["title"].split()[0]
    index.fill("#f-text", word)
    index.select_option("#f-status", str(Status.STALE))
    shown = [c["slug"] for c in index.evaluate(STATE)["cards"] if c["visible"]]
    assert shown == [c["slug"] for c in stale if word.lower() in c["title"].lower()]


def test_the_sort_orders(index):
    state = index.evaluate(STATE)
    cards = state["cards"]

    def title(c):
        return (c["title"].casefold(), c["slug"])

    expected = {
        "status": sorted(cards, key=lambda c: (status_rank(c["status"]), *title(c))),
        "data": sorted(cards, key=lambda c: (c["dataTo"], *title(c))),
        "owner": sorted(cards, key=lambda c: (c["owner"].casefold(), *title(c))),
        "title": sorted(cards, key=title),
    }
    # the page comes sorted by status, needing attention first, also without its script
    assert [c["slug"] for c in cards] == [c["slug"] for c in expected["status"]]
    options = index.locator("#f-sort option").evaluate_all("os => os.map(o => o.value)")
    assert options == ["status", "data", "owner", "title"]
    for key in ["title", "owner", "data", "status"]:
        index.select_option("#f-sort", key)
        got = index.evaluate(STATE)
        want = [c["slug"] for c in expected[key]]
        assert [c["slug"] for c in got["cards"]] == want, key
        assert [r["slug"] for r in got["rows"]] == want, key
        if key == "data":
            dates = [c["dataTo"] for c in got["cards"]]
            assert dates == sorted(dates) and dates[0] < dates[-1]


def test_the_table_view_shows_every_project_compactly(index):
    state = index.evaluate(STATE)
    assert state["listShown"] and not state["tableShown"]
    index.check("#f-view-table")
    state = index.evaluate(STATE)
    assert not state["listShown"] and state["tableShown"]
    assert [(r["title"], r["status"]) for r in state["rows"]] == [
        (c["title"], c["status"]) for c in state["cards"]
    ]
    assert all(r["visible"] for r in state["rows"])
    table_height = index.locator("#project-table").bounding_box()["height"]
    index.check("#f-view-cards")
    state = index.evaluate(STATE)
    assert state["listShown"] and not state["tableShown"]
    cards_height = index.locator("#project-list").bounding_box()["height"]
    assert table_height < cards_height  # compact: shorter than the cards, even three abreast


def test_the_csv_link_downloads_the_headline_figures(index):
    with index.expect_download() as info:
        index.click("a[href='headline-figures.csv']")
    path = info.value.path()
    text = open(path, encoding="utf-8").read()
    assert text.startswith("project,title,owner,phase,headline_metric,")
    assert len(text.strip().splitlines()) == 1 + len(index.evaluate(STATE)["cards"])


def pdf_pages(pdf: bytes) -> int:
    """Pages of a PDF Chromium printed: its page objects, checked against the page tree."""
    pages = len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", pdf))
    counts = [
        int(n)
        for n in re.findall(rb"/Type\s*/Pages\b[^>]*?/Count\s+(\d+)", pdf)
        + re.findall(rb"/Count\s+(\d+)[^>]*?/Type\s*/Pages\b", pdf)
    ]
    assert counts and max(counts) == pages, (pages, counts)
    return pages


def test_the_index_prints_on_one_a4_page(browser, site_url, built_site):
    page = browser.new_page()
    try:
        page.goto(urljoin(site_url, "index.html"), wait_until="load")
        assert pdf_pages(page.pdf(format="A4")) == 1
        # in the table view too, and the counting itself tells pages apart: a project page
        # is several pages long
        page.check("#f-view-table")
        assert pdf_pages(page.pdf(format="A4")) == 1
        page.goto(urljoin(site_url, "projects/wheel-build-lead-time/index.html"), wait_until="load")
        page.evaluate("async () => { await window.steadylineCharts; }")
        assert pdf_pages(page.pdf(format="A4")) > 1
    finally:
        page.close()


def test_index_screenshots_at_phone_width(browser, site_url, artifacts_dir):
    """For a human to read: the index's cards and table view on a phone (the desktop index is
    test_site's screenshot). Neither scrolls sideways."""
    ctx = browser.new_context(viewport={"width": 390, "height": 844})
    page = ctx.new_page()
    try:
        page.goto(urljoin(site_url, "index.html"), wait_until="load")
        for view in ("cards", "table"):
            page.check(f"#f-view-{view}")
            width = page.evaluate("document.documentElement.scrollWidth")
            assert width <= 390, f"{view}: the page is {width} px wide"
            page.screenshot(path=str(artifacts_dir / f"index-phone-{view}.png"), full_page=True)
    finally:
        ctx.close()
