"""A project's Markdown notes -> sanitised HTML.

Python-Markdown passes raw HTML, `javascript:` links and `on…=` attributes straight through, so
its output goes through nh3 (a maintained allowlist sanitiser): only the tags and attributes
below survive, and links keep only the http(s) and mailto schemes or relative addresses.
"""

from __future__ import annotations

import re
from pathlib import Path

import markdown
import nh3

from .. import files

ALLOWED_TAGS = {
    "a",
    "abbr",
    "b",
    "blockquote",
    "br",
    "code",
    "dd",
    "del",
    "dl",
    "dt",
    "em",
    "h1",
    "h2",
    "h3",
    "h4",
    "h5",
    "h6",
    "hr",
    "i",
    "li",
    "ol",
    "p",
    "pre",
    "strong",
    "sub",
    "sup",
    "table",
    "tbody",
    "td",
    "tfoot",
    "th",
    "thead",
    "tr",
    "ul",
}
ALLOWED_ATTRIBUTES = {
    "a": {"href", "title"},
    "abbr": {"title"},
    "td": {"align"},
    "th": {"align", "scope"},
}
URL_SCHEMES = {"http", "https", "mailto"}


# Relative links that lead to something the site publishes: its pages, results and downloads,
# and other projects' pages. A relative link to anything else (the project's raw CSV files, which
# the site does not publish) keeps its text and loses its address, so readers meet no dead link.
_PUBLISHED = re.compile(
    r"^(?:\.\./[a-z0-9][a-z0-9-]*/)?(?:index\.html|history\.html|"
    r"results\.json|data/[^/]+\.(?:csv|vl\.json))?(?:#[^\s]*)?$"
)


def _keep_link(tag: str, attr: str, value: str) -> str | None:
    if tag == "a" and attr == "href":
        v = value.strip()
        if v.startswith(("http://", "https://", "mailto:", "#")):
            return value
        return value if v and _PUBLISHED.match(v) else None
    return value


def sanitise(html: str) -> str:
    return nh3.clean(
        html,
        tags=ALLOWED_TAGS,
        attributes=ALLOWED_ATTRIBUTES,
        url_schemes=URL_SCHEMES,
        link_rel="noopener noreferrer",
        strip_comments=True,
        attribute_filter=_keep_link,
    )


# The notes sit under the page's own "Project notes" heading (h2): their headings move down two
# levels, so that a note's "# Title" does not read as a second page title.
HEADING_SHIFT = 2
_HEADING = re.compile(r"<(/?)h([1-6])\b")


def _shift_headings(html: str) -> str:
    return _HEADING.sub(lambda m: f"<{m[1]}h{min(6, int(m[2]) + HEADING_SHIFT)}", html)


def render_markdown(text: str) -> str:
    html = markdown.markdown(
        text, extensions=["tables", "fenced_code", "sane_lists"], output_format="html"
    )
    return _shift_headings(sanitise(html))


def render_notes(path: Path) -> str:
    # only a regular file is opened (the project's load has checked it can be read)
    text = files.read_bytes(path).decode("utf-8-sig", errors="replace")
    return render_markdown(text.replace("\r\n", "\n").replace("\r", "\n"))  # as text mode reads
