"""Hostile content: payloads in metadata, notes, CSV categories and cells never become markup.

The portfolio of tests/corpus/kit.py puts script, event-handler and javascript: payloads into
every free-text field. The built pages are parsed with html.parser and must hold no script
element except the site's own <script src=".../assets/..."> and the application/json chart
specs, no on* attribute, no javascript: address; the JSON blocks must read back to the original
strings; CSV downloads neutralise formula cells and keep numbers as they are.
"""

from __future__ import annotations

import csv
import io
import json
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest
from corpus.kit import FORMULAS, HOSTILE_NOTES, PAYLOADS, hostile_portfolio, write

from steadyline.cli import main
from steadyline.loading.cells import clean_label
from steadyline.site.notes import render_markdown
from steadyline.site.tables import safe_cell

URL_ATTRS = {
    "href",
    "src",
    "action",
    "formaction",
    "xlink:href",
    "data",
    "poster",
    "background",
    "srcdoc",
    "content",
}


class Page(HTMLParser):
    """Every start tag with its attributes, and the text of every script element."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.scripts: list[tuple[dict, str]] = []
        self._in_script: dict | None = None
        self._buf: list[str] = []

    def handle_starttag(self, tag, attrs):
        a = {k: (v or "") for k, v in attrs}
        self.tags.append((tag, a))
        if tag == "script":
            self._in_script, self._buf = a, []

    def handle_startendtag(self, tag, attrs):
        self.handle_starttag(tag, attrs)
        if tag == "script":
            self.handle_endtag("script")

    def handle_data(self, data):
        if self._in_script is not None:
            self._buf.append(data)

    def handle_endtag(self, tag):
        if tag == "script" and self._in_script is not None:
            self.scripts.append((self._in_script, "".join(self._buf)))
            self._in_script = None


def _parse(text: str) -> Page:
    p = Page()
    p.feed(text)
    p.close()
    return p


def _is_javascript_url(v: str) -> bool:
    cleaned = re.sub(r"[\x00-\x20]", "", v).lower()
    return cleaned.startswith(("javascript:", "vbscript:", "data:text/html"))


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    root = tmp_path_factory.mktemp("hostile")
    projects = write(root / "projects", hostile_portfolio())
    code = main(["build", str(projects), "--out", str(root / "site"), "--jobs", "1", "--quiet"])
    assert code == 1  # the two broken projects
    return root / "site"


def _pages(site: Path) -> list[Path]:
    pages = sorted(site.rglob("*.html"))
    assert len(pages) >= 4  # index, evil (+ history when any), broken, broken2
    return pages


def test_evil_project_was_built(site):
    assert (site / "projects" / "evil" / "results.json").is_file()
    assert (site / "projects" / "broken" / "index.html").is_file()


def test_no_script_but_the_sites_own(site):
    for page in _pages(site):
        doc = _parse(page.read_text(encoding="utf-8"))
        for attrs, body in doc.scripts:
            if "src" in attrs:
                assert re.fullmatch(r"(\.\./\.\./)?assets/[\w.-]+\.js", attrs["src"]), (page, attrs)
                assert body.strip() == "", page
            else:
                assert attrs.get("type") == "application/json", (page, attrs, body[:200])


def test_no_event_handler_or_javascript_address(site):
    for page in _pages(site):
        doc = _parse(page.read_text(encoding="utf-8"))
        for tag, attrs in doc.tags:
            assert tag not in ("iframe", "object", "embed", "base", "math", "frame"), (page, tag)
            for k, v in attrs.items():
                assert not k.startswith("on"), (page, tag, k, v)
                if k in URL_ATTRS or k == "style":
                    assert not _is_javascript_url(v) and "javascript:" not in v.lower(), (
                        page,
                        tag,
                        k,
                        v,
                    )


def test_payloads_appear_only_as_text(site):
    """The raw payload never appears unescaped in a page (it may as text, escaped)."""
    for page in _pages(site):
        text = page.read_text(encoding="utf-8")
        for marker in (
            "<script>window",
            "<img src=x",
            "<svg onload",
            "<iframe",
            "</script><script>",
            'onerror="window',
            "<svg xmlns",
        ):
            assert marker not in text, (page, marker)
    evil = _parse((site / "projects" / "evil" / "index.html").read_text(encoding="utf-8"))
    # the title is shown, as text
    assert ("h1", {}) in [(t, {}) for t, _ in evil.tags]
    page_text = (site / "projects" / "evil" / "index.html").read_text(encoding="utf-8")
    assert "&lt;script&gt;window.__pwned=1;alert(1)&lt;/script&gt;" in page_text


def _json_blocks(page: Path) -> list:
    doc = _parse(page.read_text(encoding="utf-8"))
    return [
        json.loads(body) for attrs, body in doc.scripts if attrs.get("type") == "application/json"
    ]


def _strings(obj) -> set[str]:
    out: set[str] = set()
    if isinstance(obj, str):
        out.add(obj)
    elif isinstance(obj, dict):
        for k, v in obj.items():
            out.add(k)
            out |= _strings(v)
    elif isinstance(obj, list):
        for v in obj:
            out |= _strings(v)
    return out


def test_json_spec_blocks_read_back_to_the_original_strings(site):
    page = site / "projects" / "evil" / "index.html"
    blocks = _json_blocks(page)
    assert blocks, "no chart spec blocks"
    found = set().union(*(_strings(b) for b in blocks))
    text = "\n".join(found)
    # category names (Pareto and column charts) survive exactly, the script-closing one too
    # (line separators inside a name become a space: clean_label)
    for s in PAYLOADS + FORMULAS:
        assert clean_label(s) in found, s
    # event labels reach the time-based charts
    assert PAYLOADS[0] in text and PAYLOADS[3] in text
    # and no block text carries a raw '<' that could end the script element
    raw = page.read_text(encoding="utf-8")
    for body in re.findall(r'<script type="application/json"[^>]*>(.*?)</script>', raw, re.S):
        assert "<" not in body and ">" not in body and "\u2028" not in body


def test_results_json_keeps_the_original_strings(site):
    doc = json.loads((site / "projects" / "evil" / "results.json").read_text(encoding="utf-8"))
    assert doc["project"]["title"] == PAYLOADS[0]
    assert doc["project"]["owner"] == PAYLOADS[1]
    assert [e["label"] for e in doc["project"]["events"]] == PAYLOADS[:4]
    reasons = next(m for m in doc["metrics"] if m["id"] == "reasons")
    assert set(reasons["pareto"]["categories"]) == {clean_label(s) for s in PAYLOADS + FORMULAS}


def test_index_lists_titles_as_text(site):
    text = (site / "index.html").read_text(encoding="utf-8")
    assert PAYLOADS[0] not in text
    assert "&lt;script&gt;window.__pwned=1" in text


def test_error_pages_escape_the_problem_messages(site):
    text = (site / "projects" / "broken2" / "index.html").read_text(encoding="utf-8")
    assert "is not a number" in text
    assert "<script>window" not in text and "&lt;script&gt;window.__pwned=1" in text


def test_notes_are_sanitised(site):
    text = (site / "projects" / "evil" / "index.html").read_text(encoding="utf-8")
    notes = text[text.index('class="notes-body"') :]
    notes = notes[: notes.index("</section>")]
    doc = _parse(notes)
    tags = {t for t, _ in doc.tags}
    assert not tags & {
        "script",
        "svg",
        "iframe",
        "img",
        "style",
        "form",
        "object",
        "embed",
        "math",
        "button",
        "details",
    }
    hrefs = [a.get("href", "") for t, a in doc.tags if t == "a"]
    assert "https://example.invalid/page" in hrefs
    assert all(not _is_javascript_url(h) for h in hrefs)
    assert "window.__pwned" not in re.sub(r"&lt;.*?&gt;", "", notes) or "&lt;" in notes


def test_render_markdown_strips_every_vector():
    html = render_markdown(HOSTILE_NOTES)
    doc = _parse(html)
    for tag, attrs in doc.tags:
        assert tag in {"h3", "p", "a", "em", "strong", "code", "pre", "ul", "ol", "li"}, tag
        assert not any(k.startswith("on") or k == "style" for k in attrs), (tag, attrs)
        assert not _is_javascript_url(attrs.get("href", ""))


# ------------------------------------------------------------------------------ CSV downloads


def _downloads(site: Path) -> list[Path]:
    files = sorted((site / "projects" / "evil" / "data").glob("*.csv"))
    assert files
    return files


def test_note_headings_sit_below_the_pages_own():
    html = render_markdown("# Title\n\n## Part\n\n###### Small\n\n<h1 title='x'>raw</h1>")
    assert "<h1" not in html and "<h2" not in html
    assert "<h3>Title</h3>" in html and "<h4>Part</h4>" in html and "<h6>Small</h6>" in html
    assert ">raw</h3>" in html  # raw HTML headings too


def test_csv_downloads_neutralise_formula_cells(site):
    for f in _downloads(site):
        for row in csv.reader(io.StringIO(f.read_text(encoding="utf-8"))):
            for cell in row:
                if cell[:1] in ("=", "+", "-", "@", "\t", "\r"):
                    float(cell)  # only a plain signed number may start so


def test_csv_downloads_keep_the_category_text_and_the_numbers(site):
    cells = set()
    for f in _downloads(site):
        for row in csv.reader(io.StringIO(f.read_text(encoding="utf-8"))):
            cells.update(row)
    for formula in FORMULAS:
        assert "'" + formula in cells, formula
    assert "-3.5" in cells and "-1.25" in cells  # negative numbers stay numbers
    assert PAYLOADS[0] in cells  # plain text stays as it was (a CSV is not a page)


@pytest.mark.parametrize(
    "value, expected",
    [
        (-3.5, "-3.5"),
        (2, "2"),
        (0.1, "0.1"),
        ("-3.5", "-3.5"),
        ("+4", "+4"),
        ("-1e-3", "-1e-3"),
        ("=1+1", "'=1+1"),
        ("+SUM(1)", "'+SUM(1)"),
        ("-2+3", "'-2+3"),
        ("@cmd", "'@cmd"),
        ("\t=1", "'\t=1"),
        ("\r=1", "'\r=1"),
        ("plain", "plain"),
        (float("nan"), ""),
        (None, ""),
    ],
)
def test_safe_cell(value, expected):
    assert safe_cell(value) == expected


def test_terminal_control_characters_are_escaped_in_messages(tmp_path, capsys):
    """A file's text quoted in a message cannot clear, retitle or reorder the terminal."""
    from corpus.kit import meta, portfolio

    root = write(
        tmp_path / "projects",
        portfolio(
            toml=meta(metric={"value": "v\u202eeulav"}),
            data="date,\x1b]0;owned\x07x\x1b[2J\n2026-01-05,\u202e1\n",
        ),
    )
    assert main(["check", str(root)]) == 1
    out = capsys.readouterr().out
    assert out.strip()
    assert not re.search(r"[\x00-\x08\x0b-\x1f\x7f\u202a-\u202e\u2066-\u2069]", out), repr(out)
    assert "\\x1b" in out and "\\u202e" in out


def test_clean_label():
    assert clean_label("  a\u2028b\u2029\tc\r\nd\x00e\x85f ") == "a b c d e f"
    assert clean_label("</script>") == "</script>"
