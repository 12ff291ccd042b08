"""The hand-over pack (projects/<slug>/handover.html): one file per project that runs nothing,
loads nothing, and says what the project and history pages say, every chart drawn inline."""

from __future__ import annotations

import html
import json
import os
import re
import subprocess
import sys
from html.parser import HTMLParser
from pathlib import Path

import pytest

from steadyline.site.pack import PACK_CSP, PACK_FILE, chart_svg

REPO = Path(__file__).resolve().parents[1]


class _Texts(HTMLParser):
    """Texts of the page's elements that the pack must repeat, by kind, and the page's parts
    that must not be in a pack (scripts, links to files, external references)."""

    WANTED = {"h1": "title", "h4": "card", "th": "cell", "td": "cell", "dd": "fact"}
    WANTED_CLASSES = {
        "summary": "summary",
        "finding": "finding",
        "problem": "problem",
        "owner": "owner",
        "verdict": "verdict",
        "fit-lead": "fit",
        "empty": "note",
        "method": "method",
    }

    def __init__(self):
        super().__init__()
        self.stack: list[tuple[str, str | None]] = []
        self.texts: dict[str, list[str]] = {}
        self.charts = 0
        self.svgs = 0
        self.tags: list[tuple[str, dict]] = []
        self.skip = 0  # inside a data table (the pack does not repeat data tables)
        self.details: list[bool] = []  # the open <details>: whether each is a data table

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        classes = set((a.get("class") or "").split())
        if tag == "details":  # a data table (the pack does not repeat it) is skipped
            self.skip += "datatable" in classes
            self.details.append("datatable" in classes)
        if tag == "div" and "chart" in classes:
            self.charts += 1
        if tag == "svg":
            self.svgs += 1
        kind = self.WANTED.get(tag)
        for c in classes:
            kind = self.WANTED_CLASSES.get(c, kind)
        if (
            tag in ("li",)
            and "finding" not in classes
            and self.stack
            and self.stack[-1][1] == "caution-list"
        ):
            kind = "caution"
        if tag == "ul" and (self._in_cautions() or "cautions" in classes):
            kind = "caution-list"
        self.stack.append((tag, kind, [], "cautions" in classes))

    def _in_cautions(self):
        return any(s[3] for s in self.stack)

    def handle_endtag(self, tag):
        if tag == "details":
            self.skip -= self.details.pop()
        while self.stack:
            t, kind, parts, _ = self.stack.pop()
            if kind and kind != "caution-list" and not self.skip:
                text = " ".join("".join(parts).split())
                if text:
                    self.texts.setdefault(kind, []).append(text)
            if self.stack:
                self.stack[-1][2].extend(parts)
            if t == tag:
                break

    def handle_data(self, data):
        if self.stack:
            self.stack[-1][2].append(data)


def _parse(path: Path) -> _Texts:
    p = _Texts()
    p.feed(path.read_text(encoding="utf-8"))
    p.close()
    return p


def _plain(text: str) -> str:
    """A text as compared here: tags out, entities read, without white space (a page and the
    pack may break lines and nest elements differently)."""
    return "".join(html.unescape(re.sub(r"<[^>]+>", "", text)).split())


@pytest.fixture(scope="module")
def projects(demo_site) -> list[Path]:
    return sorted(p for p in (demo_site / "projects").iterdir() if p.is_dir())


def test_every_demo_project_has_its_pack_linked_from_its_page(projects):
    assert len(projects) == 9
    for p in projects:
        assert (p / PACK_FILE).is_file(), p.name
        page = (p / "index.html").read_text(encoding="utf-8")
        assert f'href="{PACK_FILE}"' in page, p.name


def test_without_the_portfolio_key_no_pack_is_drawn_or_linked(tmp_path):
    """The pack is asked for (handover_pack in portfolio.toml): a portfolio without the key
    gets no pack and no link to one, and its pages are the same otherwise."""
    import shutil

    from steadyline.pipeline.build import BuildOptions, build

    root = tmp_path / "projects"
    shutil.copytree(REPO / "projects" / "order-picking-errors", root / "order-picking-errors")
    report = build(BuildOptions(root, tmp_path / "site", force=True, jobs=1))
    assert report.ok
    folder = tmp_path / "site" / "projects" / "order-picking-errors"
    assert (folder / "index.html").is_file() and not (folder / PACK_FILE).exists()
    assert PACK_FILE not in (folder / "index.html").read_text(encoding="utf-8")
    (root / "portfolio.toml").write_text("handover_pack = true\n", encoding="utf-8")
    assert build(BuildOptions(root, tmp_path / "site", jobs=1)).ok
    assert (folder / PACK_FILE).is_file()
    assert f'href="{PACK_FILE}"' in (folder / "index.html").read_text(encoding="utf-8")


def test_the_pack_runs_nothing_and_loads_nothing(projects):
    for p in projects:
        text = (p / PACK_FILE).read_text(encoding="utf-8")
        low = text.lower()
        assert "<script" not in low, p.name
        assert "<link" not in low and "@import" not in low, p.name
        assert "<iframe" not in low and "<object" not in low and "<embed" not in low, p.name
        # no attribute that loads or links anything outside the file (namespaces are names,
        # not requests: xmlns="http://www.w3.org/2000/svg" is allowed)
        refs = re.findall(
            r'\b(?:src|href|xlink:href|action|poster|srcset)\s*=\s*"([^"]*)"', text, re.I
        )
        assert all(r.startswith("#") for r in refs), (
            p.name,
            [r for r in refs if not r.startswith("#")][:5],
        )
        assert not re.search(r"\bon[a-z]+\s*=", re.sub(r"<svg.*?</svg>", "", text, flags=re.S)), (
            p.name
        )
        # CSS: url() only to a definition inside the file
        urls = re.findall(r"url\(\s*['\"]?([^'\")]*)", text, re.I)
        assert all(u.startswith("#") for u in urls), (p.name, urls[:5])
        assert low.count("<style") == 1, p.name
        csp = re.search(r'http-equiv="Content-Security-Policy" content="([^"]*)"', text)
        assert csp and html.unescape(csp.group(1)) == PACK_CSP, p.name
        assert "default-src 'none'" in PACK_CSP and "script-src" not in PACK_CSP
        # fonts from the system only: no font file is named anywhere
        assert "@font-face" not in low, p.name


def test_every_chart_of_the_pages_is_drawn_inline_with_unique_ids(projects):
    for p in projects:
        pack = _parse(p / PACK_FILE)
        pages = [_parse(p / "index.html")]
        if (p / "history.html").exists():
            pages.append(_parse(p / "history.html"))
        charts = sum(pg.charts for pg in pages)
        assert charts > 0, p.name
        assert pack.svgs == charts == pack.charts, (p.name, pack.svgs, charts)
        text = (p / PACK_FILE).read_text(encoding="utf-8")
        ids = re.findall(r'\bid="([^"]+)"', text)
        assert len(ids) == len(set(ids)), p.name


def test_the_pack_says_what_the_pages_say(projects):
    """Every card title, summary, finding, caution, method, capability figure, comparison cell,
    fact and verdict of the project and history pages is in the pack, word for word."""
    for p in projects:
        pack = _plain((p / PACK_FILE).read_text(encoding="utf-8"))
        results = json.loads((p / "results.json").read_text(encoding="utf-8"))
        proj = results["project"]
        for key in ("title", "owner", "problem"):
            assert _plain(proj[key]) in pack, (p.name, key)
        assert _plain(f"Now in: {proj['phase'].capitalize()}") in pack, p.name
        checked = 0
        for page in ("index.html", "history.html"):
            if not (p / page).exists():
                continue
            parsed = _parse(p / page)
            for kind, texts in parsed.texts.items():
                for t in texts:
                    if kind == "title" and page == "history.html":
                        continue  # the pack's heading of that part is "Before and after"
                    if kind == "cell" and t in ("File", "Last changed", "Source of date"):
                        continue
                    assert _plain(t) in pack, (p.name, page, kind, t)
                    checked += 1
        assert checked > 20, p.name
        notes = (p / "index.html").read_text(encoding="utf-8")
        m = re.search(r'<div class="notes-body">(.*?)</div></section>', notes, re.S)
        if m:
            assert _plain(m.group(1)) in pack, p.name


def test_the_finding_and_caution_kinds_are_checked(projects):
    """The comparison above covers findings, cautions and capability figures (a test that
    found none of them would prove nothing)."""
    kinds: set[str] = set()
    for p in projects:
        for page in ("index.html", "history.html"):
            if (p / page).exists():
                kinds |= set(_parse(p / page).texts)
    assert {"card", "summary", "finding", "caution", "fit", "verdict", "cell"} <= kinds, kinds


def test_chart_svg_makes_ids_unique_and_drops_the_declaration(monkeypatch):
    class Fake:
        @staticmethod
        def vegalite_to_svg(spec, allowed_base_urls):
            assert allowed_base_urls == []
            return (
                '<?xml version="1.0"?><svg><defs><clipPath id="clip1"/><clipPath id="clip12"/>'
                '</defs><g clip-path="url(#clip1)"/><use href="#clip12"/></svg>'
            )

    monkeypatch.setattr("steadyline.site.pack._converter", lambda: Fake)
    svg = chart_svg({}, "chart-a")
    assert svg == (
        '<svg><defs><clipPath id="chart-a-clip1"/><clipPath id="chart-a-clip12"/>'
        '</defs><g clip-path="url(#chart-a-clip1)"/><use href="#chart-a-clip12"/>'
        "</svg>"
    )


@pytest.mark.slow
def test_the_drawing_does_not_depend_on_the_machines_time_zone(demo_site):
    """vl-convert draws times in its runtime's zone: the pack starts it under UTC, so a build
    on a machine in Tokyo or New York writes the same bytes. The process keeps its own zone."""
    spec = next((demo_site / "projects").glob("*/data/*-run.vl.json"))
    code = (
        "import json,sys,time;from steadyline.site.pack import chart_svg;"
        "s=chart_svg(json.load(open(sys.argv[1])),'c');"
        "print(time.strftime('%z',time.localtime(0)));print(len(s));"
        "import hashlib;print(hashlib.sha256(s.encode()).hexdigest())"
    )
    out = {}
    for tz in ("UTC", "Asia/Tokyo", "America/New_York"):
        env = os.environ | {"TZ": tz, "PYTHONPATH": str(REPO / "src")}
        r = subprocess.run(
            [sys.executable, "-c", code, str(spec)],
            env=env,
            capture_output=True,
            text=True,
            check=True,
        )
        out[tz] = r.stdout.split()
    assert out["Asia/Tokyo"][0] == "+0900"  # the process's own zone is put back
    assert out["UTC"][1:] == out["Asia/Tokyo"][1:] == out["America/New_York"][1:]
