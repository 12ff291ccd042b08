"""The demo site's charts by period: marks, legend, sentences and results.json say the same thing,
and every period band is filled by its kind of period on every chart.

Read from the built demo (the chart specs under projects/*/data/*.vl.json, the history pages,
results.json); the expected marks are worked out here from results.json's signals on their own,
not from the code that draws them.
"""

from __future__ import annotations

import html
import json
import math
import re
from pathlib import Path

import pytest

from steadyline.charts import style
from steadyline.charts.series.marks import (
    CHANGE_MARKS,
    MARK_ASIDE,
    MARK_CHANGE_BETTER,
    MARK_CHANGE_UNJUDGED,
    MARK_CHANGE_WORSE,
    MARK_ORDINARY,
    MARK_OWN_SIGNAL,
)

HIGHER = {"above": True, "up": True, "below": False, "down": False}
DIRECTION_WORDS = {
    "better": "on the better side",
    "worse": "on the worse side",
    "not judged": "with no side to judge a direction by",
}


def _views(node):
    """Every unit view of a spec (through layer and vconcat)."""
    if isinstance(node, dict):
        if "mark" in node:
            yield node
        for key in ("layer", "vconcat", "hconcat"):
            for child in node.get(key, []):
                yield from _views(child)


def _staged(site: Path):
    """(slug, metric entry, history entry, spec, page text) of every control chart by period."""
    out = []
    for res in sorted(site.glob("projects/*/results.json")):
        r = json.loads(res.read_text())
        metrics = {m["id"]: m for m in r["metrics"]}
        for h in r["history"] or []:
            if "control_chart_by_period" not in h:
                continue
            spec = json.loads(
                (res.parent / "data" / f"history-{h['id']}-staged-control.vl.json").read_text()
            )
            page = (res.parent / "history.html").read_text()
            out.append((r["project"]["slug"], metrics[h["id"]], h, spec, page))
    return out


def _drawn(spec, suffix: str, positions: list[int]) -> dict[int, dict]:
    """Per point index of one chart: its mark and whether the diamond is drawn beneath, as the
    point layers compute them (lookup into point_info; marker = mark or 'point')."""
    d = spec["datasets"]
    info = {r["k"]: r for r in d["point_info"]}
    rows = [r for r in d["points"] if r.get(f"v{suffix}") is not None]
    assert len(rows) == len(positions)
    out = {}
    for i, r in zip(positions, rows, strict=True):
        k = info[r[f"k{suffix}"]]
        out[i] = {"marker": k["mark"] or MARK_ORDINARY, "own": k["own"]}
    return out


def _finite(values) -> list[int]:
    return [i for i, v in enumerate(values) if v is not None and math.isfinite(v)]


def _expected(chart, signals, after_signals, which: str, stage, better: str, target):
    """Per point of one chart: (change direction or None, diamond?) from results.json alone."""
    n = len(chart["values"])
    carried = [stage[i] != 0 and not chart["fitted"][i] for i in range(n)]
    sides: dict[int, set] = {}
    own = set()
    for s in signals:
        if s["chart"] != which:
            continue
        for i in s["indices"]:
            if carried[i]:
                sides.setdefault(i, set()).add(s["side"])
            else:
                own.add(i)
    for s in after_signals:
        if s["chart"] == which:
            own.update(s["indices"])
    out = {}
    for i in range(n):
        direction = None
        if i in sides:
            ups = {HIGHER[s] for s in sides[i] if s in HIGHER}
            direction = "not judged"
            if len(ups) == 1 and (which == "secondary" or better in ("lower", "higher")):
                up = ups.pop()
                lower_better = which == "secondary" or better == "lower"
                direction = "worse" if up == lower_better else "better"
            elif len(ups) == 1 and target is not None:
                # nearer the target than the centre line it is judged on
                v, c = chart["values"][i], chart["centre"][i]
                direction = "better" if abs(v - target) < abs(c - target) else "worse"
        out[i] = (direction, i in own)
    return out


@pytest.fixture(scope="module")
def staged(demo_site):
    found = _staged(demo_site)
    assert len(found) >= 8  # the demo's history pages have nine charts by period
    return found


def test_marks_agree_with_results_json(staged):
    after_marked = 0
    for slug, metric, h, spec, _page in staged:
        sc = h["control_chart_by_period"]
        stage = metric["points"]["period_kind"]
        stage_code = [{"Baseline": 0, "After": 1}.get(s, 2) for s in stage]
        recorded = {
            (g["chart"], i): g["direction"] for g in sc["change_evidence"] for i in g["indices"]
        }
        charts = [("main", "", sc["chart"], 0)]
        sec = sc["chart"].get("secondary")
        if sec:
            charts.append(("secondary", "2", sec, len(sc["chart"]["values"]) - len(sec["values"])))
        for which, suffix, chart, offset in charts:
            st = stage_code[offset:]
            expect = _expected(
                chart,
                sc["signals"],
                sc.get("after_signals", []),
                which,
                st,
                metric["better"],
                metric["spec_limits"]["target"],
            )
            drawn = _drawn(spec, suffix, [i + offset for i in _finite(chart["values"])])
            for i in _finite(chart["values"]):
                direction, own = expect[i]
                got = drawn[i + offset]
                where = (slug, metric["id"], which, i, stage[i + offset])
                # a change mark iff results.json has the point in a signal against the
                # baseline's limits, in the direction results.json records
                assert (recorded.get((which, i)) is not None) == (direction is not None), where
                if direction is not None:
                    assert recorded[(which, i)] == direction, where
                want = CHANGE_MARKS[recorded[(which, i)]] if direction else MARK_ORDINARY
                assert got["marker"] == want, where
                # the diamond iff the point is in a signal on its own period's limits: for an
                # after point, iff it is in after_signals
                assert got["own"] == own, where
                if st[i] == 1 and which == "main":
                    after_marked += bool(direction)
                    in_after = any(
                        i in s["indices"]
                        for s in sc.get("after_signals", [])
                        if s["chart"] == "main"
                    )
                    assert got["own"] == in_after, where
    assert after_marked > 100  # the demo's after periods moved: the test has marks to check


def _findings(page: str, metric_id: str) -> list[str]:
    start = page.index(f'id="history-{metric_id}-staged-control"')
    card = page[start : page.index("</figure>", start)]
    return [
        html.unescape(re.sub(r"<[^>]+>", "", li)).strip()
        for li in re.findall(
            r'<(?:li|p) class="(?:summary )?finding[^"]*">(.*?)</(?:li|p)>', card, re.S
        )
    ]


def _chart_label(page: str, metric_id: str) -> str:
    """The chart's description for readers who cannot see it (its aria-label)."""
    start = page.index(f'id="history-{metric_id}-staged-control"')
    card = page[start : page.index("</figure>", start)]
    return html.unescape(re.search(r'class="chart"[^>]* aria-label="([^"]*)"', card).group(1))


def test_sentences_and_legend_agree_with_results_json(staged):
    for slug, metric, h, spec, page in staged:
        sc = h["control_chart_by_period"]
        stage = metric["points"]["period_kind"]
        values = sc["chart"]["values"]
        after = [i for i in _finite(values) if stage[i] == "After"]
        found = _findings(page, metric["id"])
        text = "\n".join(found)
        counts = {d: 0 for d in DIRECTION_WORDS}
        for g in sc["change_evidence"]:
            if g["chart"] == "main":
                counts[g["direction"]] += sum(1 for i in g["indices"] if stage[i] == "After")
        where = (slug, metric["id"])
        for d, n in counts.items():
            words = f"against the baseline's limits {DIRECTION_WORDS[d]}"
            if n:
                verb = "takes" if n == 1 else "take"
                assert (
                    f"{n} of {len(after)} after points {verb} part in signals {words} "
                    f"(marked “{CHANGE_MARKS[d]}”)"
                ) in text, where
            else:
                assert words not in text, where
        if not any(counts.values()):
            assert f"None of the {len(after)} after points takes part" in text, where
        if sc["own_after_limits"]:
            n_own = len(sc["after_signals"])
            if n_own:
                assert f"On its own limits the after period shows {n_own} signal" in text, where
            else:
                assert "On its own limits the after period shows no signal" in text, where
        # the chart's description says the same counts; its subtitle names the periods and
        # limits only (the sentences say what they show, once)
        k = sum(counts.values())
        sub = " ".join(spec["title"]["subtitle"])
        assert "signal" not in sub, where
        if k:
            assert (
                f"against the baseline's limits {k} of {len(after)} after points"
                in _chart_label(page, metric["id"])
            ), where
        # the legend names every mark drawn (on either chart), and nothing else
        drawn = set()
        for p in spec["datasets"]["point_info"]:
            drawn.add(p["mark"] or MARK_ORDINARY)
            if p["own"]:
                drawn.add(MARK_OWN_SIGNAL)
            if p.get("aside"):  # a point set aside has a mark of its own
                drawn.add(MARK_ASIDE)
        point_views = [
            v
            for v in _views(spec)
            if v["mark"]["type"] == "point" and v.get("data", {}).get("name") == "points"
        ]
        assert point_views
        for v in point_views:
            domain = v["encoding"]["shape"]["scale"]["domain"]
            assert set(domain) == drawn | {MARK_ORDINARY}, where
            assert v["encoding"]["shape"]["legend"] is not None
            order = [
                MARK_ORDINARY,
                MARK_CHANGE_BETTER,
                MARK_CHANGE_WORSE,
                MARK_CHANGE_UNJUDGED,
                MARK_OWN_SIGNAL,
                MARK_ASIDE,
            ]
            assert domain == [m for m in order if m in domain]


def _expected_kinds(stages: list[str]) -> list[str]:
    """The kind of each contiguous period, worked out here: named periods by name, the others by
    whether a baseline or an after period came before them."""
    runs = [s for i, s in enumerate(stages) if i == 0 or stages[i - 1] != s]
    out, seen_base, seen_after = [], False, False
    for s in runs:
        if s == "Baseline":
            seen_base = True
            out.append("baseline")
        elif s == "After":
            seen_after = True
            out.append("after")
        else:
            out.append(
                "after the after period"
                if seen_after
                else "between periods"
                if seen_base
                else "before the baseline"
            )
    return out


def test_every_band_is_filled_by_its_kind_of_period_and_named_in_the_legend(demo_site):
    assert len(set(style.PERIOD_FILLS.values())) == len(style.PERIOD_FILLS)  # one per kind
    checked, kinds_seen = 0, set()
    for path in sorted(demo_site.glob("projects/*/data/*.vl.json")):
        spec = json.loads(path.read_text())
        bands = spec.get("datasets", {}).get("bands")
        rects = [
            v
            for v in _views(spec)
            if v.get("data", {}).get("name") == "bands" and v["mark"]["type"] == "rect"
        ]
        if bands is None:
            assert not rects, path
            continue
        assert rects, path
        r = json.loads((path.parent.parent / "results.json").read_text())
        metric_id = re.sub(r"^history-|-(run|control|staged-control)\.vl\.json$", "", path.name)
        (metric,) = [m for m in r["metrics"] if m["id"] == metric_id]
        assert [b["kind"] for b in bands] == _expected_kinds(metric["points"]["period_kind"]), path
        for rect in rects:
            enc = rect["encoding"]["fill"]
            assert enc["field"] == "kind"
            scale = dict(zip(enc["scale"]["domain"], enc["scale"]["range"], strict=True))
            for b in bands:
                assert scale[b["kind"]] == style.PERIOD_FILLS[b["kind"]], (path, b)
            # the legend names exactly the kinds drawn, in the order of the periods
            assert enc["legend"]["title"] == "period"
            assert enc["scale"]["domain"] == [
                k for k in style.PERIOD_KINDS if k in {b["kind"] for b in bands}
            ]
        kinds_seen.update(b["kind"] for b in bands)
        checked += 1
    assert checked >= 30
    # the demo has data before a baseline (paint-finish-defects' scanner), between the periods
    # and after: the fill follows the kind there too, not the band's place in the row
    assert {"before the baseline", "baseline", "between periods", "after"} <= kinds_seen


def test_a_metric_without_after_data_on_a_history_page(tmp_path):
    # one metric with an after period gives the project a history page; the other, without
    # one, still gets its chart by period there, with no change marks and no sentence on them
    from corpus.kit import DEFAULT_METRIC, VALUES, dates, good_csv, meta, raw, write

    from steadyline.pipeline.build import BuildOptions, build

    lower = [v - 12 for v in VALUES[16:]]
    changed = (
        "\n".join(
            ["date,value"]
            + [f"{d},{v}" for d, v in zip(dates(30), VALUES[:16] + lower, strict=True)]
        )
        + "\n"
    )
    toml = meta(
        metric={"baseline": raw("[2026-01-05, 2026-01-20]"), "after": raw("[2026-01-21]")},
        more_metrics=[dict(DEFAULT_METRIC, id="n", name="Other", file="other.csv")],
    )
    root = write(
        tmp_path / "projects",
        {"p/project.toml": toml, "p/data.csv": changed, "p/other.csv": good_csv()},
    )
    out = tmp_path / "site"
    report = build(BuildOptions(root, out, jobs=1))
    assert report.ok, [p.format() for p in report.problems]
    r = json.loads((out / "projects/p/results.json").read_text())
    hist = {h["id"]: h["control_chart_by_period"] for h in r["history"]}
    assert hist["n"]["change_evidence"] == []
    (group,) = hist["m"]["change_evidence"]
    assert group["direction"] == "better" and group["chart"] == "main"
    assert min(group["indices"]) >= 16  # after points only: the baseline ends on day 16
    found = _findings((out / "projects/p/history.html").read_text(), "n")
    assert not any("after point" in t for t in found)
