"""Each chart's findings are said once, most important first, a handful at most.

Built from the demo portfolio: on every display card of every project and before/after page,
each finding sentence appears once (the lead sentence under the title, then the list), the
chart's subtitle names no signal, the sentences are ordered (signals of instability first, by
the date of the first point they name; then evidence of a change; then the all-clear), at most
``FINDINGS_SHOWN`` of them are shown and the rest are counted with a link to the card's data
table. A project page states its problem and notes before its first chart.
"""

from __future__ import annotations

import html
import json
import re

import pytest

from steadyline.site.cards import FINDINGS_SHOWN

FIGURE = re.compile(r'<figure class="display" id="([^"]+)".*?</figure>', re.S)
FINDING = re.compile(
    r'<(?:p|li) class="(?:summary )?finding finding-([a-z-]+)">(.*?)</(?:p|li)>', re.S
)
ISO_DATE = re.compile(r"\b\d{4}-\d{2}-\d{2}\b")
KIND_RANK = {"signal": 0, "clear": 2}


def _text(fragment: str) -> str:
    fragment = re.sub(r"<script.*?</script>", " ", fragment, flags=re.S)
    return " ".join(html.unescape(re.sub(r"<[^>]+>", " ", fragment)).split())


def _pages(site):
    for d in sorted((site / "projects").iterdir()):
        for name in ("index.html", "history.html"):
            if (d / name).is_file():
                yield d, name, (d / name).read_text(encoding="utf-8")


def _cards(page: str):
    for m in FIGURE.finditer(page):
        card = m.group(0)
        found = [
            (kind, _text(body).lstrip("◆●■✚▲ ").strip()) for kind, body in FINDING.findall(card)
        ]
        yield m.group(1), card, found


def _signal_descriptions(results: dict) -> set[str]:
    out = set()

    def walk(node):
        if isinstance(node, dict):
            if "rule" in node and "description" in node and "indices" in node:
                out.add(node["description"])
            for v in node.values():
                walk(v)
        elif isinstance(node, list):
            for v in node:
                walk(v)

    walk(results)
    return out


@pytest.fixture(scope="module")
def cards(demo_site):
    out = []
    for d, name, page in _pages(demo_site):
        results = json.loads((d / "results.json").read_text(encoding="utf-8"))
        for anchor, card, found in _cards(page):
            out.append((f"{d.name}/{name}#{anchor}", card, found, _signal_descriptions(results)))
    assert out
    return out


def test_each_finding_is_said_once_on_its_card(cards):
    said = 0
    for where, card, found, descriptions in cards:
        text = _text(card)
        for _kind, sentence in found:
            assert text.count(sentence) == 1, (where, sentence)
            said += 1
        # outside its finding sentences the card names no signal: not in the chart's subtitle,
        # not in a summary line of its own
        rest = _text(FINDING.sub(" ", card))
        spec = json.loads(
            html.unescape(
                re.search(r'<script type="application/json"[^>]*>(.*?)</script>', card, re.S).group(
                    1
                )
            )
        )
        subtitle = (
            " ".join(spec.get("title", {}).get("subtitle", []))
            if isinstance(spec.get("title"), dict)
            else ""
        )
        for desc in descriptions:
            assert desc not in subtitle, (where, desc)
            if found:
                table = rest.find("Numbers and downloads")
                assert table > 0, where
                assert desc not in rest[:table], (where, desc)
    assert said > 20  # the demo has findings to check


def test_findings_are_ordered_instability_first_by_date(cards):
    dated = 0
    for where, _card, found, _d in cards:
        ranks = [KIND_RANK.get(kind, 1) for kind, _s in found]
        assert ranks == sorted(ranks), (where, found)
        dates = [
            ISO_DATE.search(s).group(0)
            for kind, s in found
            if kind == "signal" and ISO_DATE.search(s)
        ]
        assert dates == sorted(dates), (where, dates)
        dated += len(dates) > 1
    assert dated >= 3  # several cards list more than one dated signal


def test_a_handful_of_findings_and_the_rest_counted(cards):
    more = 0
    for where, card, found, _d in cards:
        assert len(found) <= FINDINGS_SHOWN, (where, len(found))
        m = re.search(r'… and (\d+) more in the <a href="#([^"]+)">data table</a>', card)
        if m:
            more += 1
            assert len(found) == FINDINGS_SHOWN and int(m.group(1)) > 0, where
            assert f'<details class="datatable" id="{m.group(2)}">' in card, where
    assert more >= 1  # the demo has a chart with more findings than shown


def test_problem_and_notes_come_before_the_first_chart(demo_site):
    with_notes = 0
    for _d, name, page in _pages(demo_site):
        if name != "index.html" or 'class="display"' not in page:
            continue
        first_chart = page.index('class="display"')
        assert page.index('class="problem"') < first_chart
        if 'class="notes"' in page:
            with_notes += 1
            assert page.index('class="notes"') < first_chart
    assert with_notes >= 1


def test_short_of_room_the_sentences_naming_points_go_to_the_table():
    from steadyline.advice.sentences import Finding
    from steadyline.site.cards import order_findings, shown_findings

    change = Finding("change-better", "■", "12 of 14 after points take part …")
    late = Finding("signal", "◆", "a point outside the limits: 1 point, 2026-05-01.", 5, True)
    early = Finding("signal", "◆", "8 in a row: 8 points, 2026-01-02 …", 2, True)
    count = Finding("signal", "◆", "After: 3 signals against the baseline's limits …", 3)
    clear = Finding("clear", "●", "No signal on its own limits.")
    given = [change, late, early, count, clear]
    # instability by date (the count of a period at its first signal), then change, then clear
    assert order_findings(given) == [early, count, late, change, clear]
    assert shown_findings(given, 5) == ([early, count, late, change, clear], 0)
    assert shown_findings(given, 4) == ([early, count, change, clear], 1)
    assert shown_findings(given, 3) == ([count, change, clear], 2)
    # more sums than room: the first sums, in order
    assert shown_findings(given, 2) == ([count, change], 3)
