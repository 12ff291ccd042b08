"""A project's Markdown notes -> sanitised HTML.

Python-Markdown passes raw HTML, `javascript:` links and `on…=` attributes straight through, so
its output goes through nh3 (a maintained allowlist sanitiser): only the tags and attributes
below survive, and links keep only the http(s) and mailto schemes or relative addresses.
"""

from __future__ import annotations

from pathlib import Path

import markdown
import nh3

ALLOWED_TAGS = {
    "a", "abbr", "b", "blockquote", "br", "code", "dd", "del", "dl", "dt", "em", "h1", "h2",
    "h3", "h4", "h5", "h6", "hr", "i", "li", "ol", "p", "pre", "strong", "sub", "sup", "table",
    "tbody", "td", "tfoot", "th", "thead", "tr", "ul",
}
ALLOWED_ATTRIBUTES = {
    "a": {"href", "title"},
    "abbr": {"title"},
    "td": {"align"},
    "th": {"align", "scope"},
}
URL_SCHEMES = {"http", "https", "mailto"}


def sanitise(html: str) -> str:
    return nh3.clean(html, tags=ALLOWED_TAGS, attributes=ALLOWED_ATTRIBUTES,
                     url_schemes=URL_SCHEMES, link_rel="noopener noreferrer",
                     strip_comments=True)


def render_markdown(text: str) -> str:
    html = markdown.markdown(text, extensions=["tables", "fenced_code", "sane_lists"],
                             output_format="html")
    return sanitise(html)


def render_notes(path: Path) -> str:
    with open(path, encoding="utf-8-sig", errors="replace") as fh:
        return render_markdown(fh.read())
