"""The hand-over pack in Chromium: opened, it asks for nothing but itself and runs nothing;
printed to A4 portrait, every drawn character and line lies on the page, and every chart's
title is in the PDF's text."""

from __future__ import annotations

import io
import json
import re
import unicodedata

import pytest

pytestmark = pytest.mark.browser

# One with a capability block and a history (control chart by period, histograms by period),
# one of categories (Pareto charts).
PACKS = ["spoke-tension", "customer-returns"]


def _chart_titles(spec: dict) -> list[str]:
    """The chart's own title lines (text drawn at the top of the chart)."""
    t = spec.get("title")
    if isinstance(t, dict):
        t = t.get("text")
    if isinstance(t, str):
        return [t]
    return [x for x in t or [] if isinstance(x, str)]


@pytest.mark.parametrize("slug", PACKS)
def test_pack_asks_for_nothing_and_prints_on_a4(browser, site_url, built_site, slug, artifacts_dir):
    from pdfminer.high_level import extract_pages
    from pdfminer.layout import LTChar, LTContainer, LTCurve, LTImage

    url = f"{site_url}projects/{slug}/handover.html"
    ctx = browser.new_context(java_script_enabled=True)
    page = ctx.new_page()
    requests, errors = [], []
    page.on("request", lambda r: requests.append(r.url))
    page.on("console", lambda m: errors.append(m.text) if m.type in ("error", "warning") else None)
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(url, wait_until="load")
    assert requests == [url], requests
    assert errors == []
    assert page.evaluate("document.scripts.length") == 0
    svgs = page.evaluate("document.querySelectorAll('.pack-chart > svg').length")
    assert svgs >= 3
    pdf = page.pdf(format="A4")
    ctx.close()
    (artifacts_dir / f"pack-{slug}.pdf").write_bytes(pdf)

    a4 = (595.28, 841.89)  # points (210 x 297 mm)
    text_parts: list[str] = []
    pages = 0
    outside = []

    def walk(obj, box):
        if isinstance(obj, LTChar | LTCurve | LTImage):
            x0, y0, x1, y1 = obj.bbox
            tol = 0.5
            if x0 < box[0] - tol or y0 < box[1] - tol or x1 > box[2] + tol or y1 > box[3] + tol:
                outside.append(
                    (pages, type(obj).__name__, obj.bbox, getattr(obj, "get_text", lambda: "")())
                )
        if isinstance(obj, LTChar):
            text_parts.append(obj.get_text())
        if isinstance(obj, LTContainer):
            for child in obj:
                walk(child, box)

    for p in extract_pages(io.BytesIO(pdf)):
        pages += 1
        assert abs(p.width - a4[0]) < 1 and abs(p.height - a4[1]) < 1, (p.width, p.height)
        walk(p, p.bbox)
    assert pages >= 2
    assert outside == [], outside[:10]
    # NFKC: the PDF writes ligatures ("ﬁ") where the title has two letters
    text = re.sub(r"\s+", "", unicodedata.normalize("NFKC", "".join(text_parts)))
    titles = []
    for f in sorted((built_site / "projects" / slug / "data").glob("*.vl.json")):
        titles += _chart_titles(json.loads(f.read_text(encoding="utf-8")))
    assert len(titles) >= 3
    for t in titles:
        assert re.sub(r"\s+", "", unicodedata.normalize("NFKC", t)) in text, t
