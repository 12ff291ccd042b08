"""The hand-over pack: one self-contained HTML file per project, to print, mail or archive.

The pack says what the project and history pages say, from the very same page sections (the
card titles, summaries, findings, cautions, capability blocks and comparison tables that
``site.project`` and ``site.history`` made for the pages), with every chart drawn at build
time as an inline SVG by vl-convert from the chart spec the pages download. It carries no
script, loads nothing (its styles sit in one ``<style>`` element, fonts come from the system)
and forbids any request by its own Content-Security-Policy, so it reads the same anywhere,
years later, with no network and no site beside it.

vl-convert draws times in the time zone its JavaScript runtime started in; the runtime is
started here under UTC (once per process), so that a pack's bytes never depend on the machine's
time zone.
"""

from __future__ import annotations

import functools
import os
import re
import time

import orjson
from markupsafe import Markup

from ..config import ProjectSpec
from .history import timeline
from .templates import render, templates_dir

PACK_FILE = "handover.html"

# Nothing may be fetched or run: styles inline only, images only as data (none are used).
PACK_CSP = (
    "default-src 'none'; style-src 'unsafe-inline'; img-src data:; "
    "base-uri 'none'; form-action 'none'; object-src 'none'"
)


@functools.lru_cache(maxsize=1)
def _converter():
    """vl_convert, its JavaScript runtime started under UTC (the zone it then keeps for every
    drawing in this process); the process's own zone is put back afterwards."""
    import vl_convert

    before = os.environ.get("TZ")
    os.environ["TZ"] = "UTC"
    time.tzset()
    try:
        vl_convert.vegalite_to_svg({"mark": "point"}, allowed_base_urls=[])
    finally:
        if before is None:
            del os.environ["TZ"]
        else:
            os.environ["TZ"] = before
        time.tzset()
    return vl_convert


_ID = re.compile(r'\bid="([^"]+)"')
_TEXT = re.compile(r">([^<]+)<")
_XML_DECL = re.compile(r"^\s*<\?xml[^>]*\?>\s*")


# The plot's width in a drawing: the pages' charts take the width of their box ("container"),
# which a drawing has none of. About A4 portrait's text width (180 mm) at 96 px to the inch,
# less the axes and the labels right of the plot; a wider drawing shrinks to the paper whole.
DRAWN_WIDTH = 540
TEXT_ROOM = 80


def fixed_width(spec, width: int = DRAWN_WIDTH):
    """A copy of the spec whose views that take their box's width have *width* instead (data
    are shared with the spec, not copied: they are never changed)."""
    if isinstance(spec, dict):
        return {
            k: (
                width
                if k == "width" and v == "container"
                else v
                if k in ("data", "datasets")
                else fixed_width(v, width)
            )
            for k, v in spec.items()
        }
    if isinstance(spec, list):
        return [fixed_width(v, width) for v in spec]
    return spec


def chart_svg(spec: dict, prefix: str) -> str:
    """The chart drawn as SVG markup to place inline, at a fixed width (:func:`fixed_width`):
    no XML declaration, and every id the drawing defines (clip paths, gradients) made unique
    to this chart by *prefix*, so that several drawings on one page never point at each
    other's definitions."""
    drawn = fixed_width(spec)
    # Room on the right: texts are placed by vl-convert's measure of its own fonts, and a
    # browser's font for the same family may run wider, past the drawing's edge.
    pad = drawn.get("padding", drawn.get("config", {}).get("padding", 5))
    pad = (
        dict(pad)
        if isinstance(pad, dict)
        else dict.fromkeys(("left", "top", "bottom", "right"), pad)
    )
    drawn["padding"] = pad | {"right": pad.get("right", 0) + TEXT_ROOM}
    svg = _converter().vegalite_to_svg(drawn, allowed_base_urls=[])
    svg = _XML_DECL.sub("", svg)
    # inline in HTML an svg element needs no namespace declarations
    svg = svg.replace(' xmlns="http://www.w3.org/2000/svg"', "", 1).replace(
        ' xmlns:xlink="http://www.w3.org/1999/xlink"', "", 1
    )
    # quote marks in texts (category names, titles) escaped too, as the pages escape them
    svg = _TEXT.sub(
        lambda m: ">" + m.group(1).replace('"', "&quot;").replace("'", "&#39;") + "<", svg
    )
    ids = set(_ID.findall(svg))
    for name in sorted(ids, key=len, reverse=True):
        new = f"{prefix}-{name}"
        svg = (
            svg.replace(f'id="{name}"', f'id="{new}"')
            .replace(f"url(#{name})", f"url(#{new})")
            .replace(f'href="#{name}"', f'href="#{new}"')
        )
    return svg


def _drawn(cards: list[dict], files: dict[str, bytes]) -> list[dict]:
    """The page's cards with their charts drawn: each card's chart spec is the one the page
    offers for download (``files[card["spec_href"]]``), so the pack draws what the page draws."""
    out = []
    for card in cards:
        spec = orjson.loads(files[card["spec_href"]])
        out.append(card | {"svg": Markup(chart_svg(spec, card["chart_id"]))})
    return out


@functools.lru_cache(maxsize=1)
def _styles() -> Markup:
    """The site's stylesheets, inlined: the screen sheet, and the print sheet for print."""
    assets = templates_dir() / "assets"
    screen = (assets / "steadyline.css").read_text(encoding="utf-8")
    printed = (assets / "print.css").read_text(encoding="utf-8")
    # A stylesheet cannot end the style element unless it holds "</": none of ours does.
    text = f"{screen}\n@media print {{\n{printed}\n}}\n"
    if "</" in text:
        raise ValueError("a stylesheet holds '</', which would end the pack's style element")
    return Markup(text)


def pack_html(
    spec: ProjectSpec,
    project_ctx: dict,
    sections: list[dict],
    history_sections: list[dict],
    files: dict[str, bytes],
    notes_html: str,
    provenance: list[dict],
    warnings: list[dict],
    ctx: dict,
) -> bytes:
    """The hand-over pack of a built project, from the sections its pages were rendered from
    (*history_sections* empty when it has no history page) and the files made so far."""
    history = {s["id"]: s for s in history_sections}
    metrics = []
    for s in sections:
        m = dict(s)
        if not s["broken"]:
            m["displays"] = _drawn(s["displays"], files)
            h = history.get(s["id"])
            if h is not None:
                h = h | {"displays": _drawn(h["displays"], files)}
            m["history"] = h
        metrics.append(m)
    html = render(
        "pack.html",
        project=project_ctx,
        metrics=metrics,
        notes_html=notes_html,
        provenance=provenance,
        warnings=warnings,
        timeline=timeline(spec) if history_sections else [],
        styles=_styles(),
        pack_csp=PACK_CSP,
        version=ctx["version"],
        portfolio_title=ctx["portfolio_title"],
    )
    return html.encode("utf-8")
