"""The index answers the sponsor's question: each demo card's status is its results.json's
(or "data stale" on the build date), results.json's status agrees with its own figures, the
CSV download carries every project's headline figures, and the staleness setting and the build
date behave as documented."""

from __future__ import annotations

import csv
import datetime as dt
import html
import io
import json
import os
import re
import shutil
from pathlib import Path

import pytest

from steadyline.errors import BuildError
from steadyline.pipeline.build import BuildOptions, build
from steadyline.status import STALE_AFTER_DAYS, Status

DEMO = Path(__file__).resolve().parent.parent / "projects"
# the build date conftest.py sets for every build of the tests
DEMO_BUILD_DATE = dt.datetime.fromtimestamp(int(os.environ["SOURCE_DATE_EPOCH"]), dt.UTC).date()

CARD = re.compile(
    r'<li class="card[^"]*" data-slug="([^"]+)" data-status="([^"]+)" '
    r'data-result-status="([^"]+)"(.*?)</li>',
    re.S,
)


def cards(index: str) -> dict[str, dict]:
    out = {}
    for slug, shown, result, body in CARD.findall(index):
        label = re.search(
            r'<span class="status status-[a-z-]+"><span class="status-mark" '
            r'aria-hidden="true"></span>([^<]+)</span>',
            body,
        )
        out[slug] = {
            "status": shown,
            "result": result,
            "label": html.unescape(label[1]),
            "body": body,
        }
    return out


def results(site: Path) -> dict[str, dict]:
    return {
        p.parent.name: json.loads(p.read_text("utf-8"))
        for p in sorted((site / "projects").glob("*/results.json"))
    }


def stale(data_to: str, days: int = STALE_AFTER_DAYS) -> bool:
    today = DEMO_BUILD_DATE
    return (today - dt.date.fromisoformat(data_to)).days > days


def test_every_demo_card_shows_its_results_status(demo_site: Path):
    index = (demo_site / "index.html").read_text("utf-8")
    shown = cards(index)
    docs = results(demo_site)
    assert sorted(shown) == sorted(docs) and len(docs) == 9
    for slug, doc in docs.items():
        card, status = shown[slug], doc["status"]
        assert card["result"] == status["code"], slug
        assert status["label"] == Status(status["code"]).label
        assert status["metric"] == next(
            m["id"] for m in doc["metrics"] if m["id"] == status["metric"]
        )
        if stale(doc["project"]["data_to"]):
            assert card["status"] == "data-stale", slug
            assert f"up to then: {status['label']}" in html.unescape(card["body"]), slug
        else:
            assert card["status"] == status["code"], slug
        assert card["label"].lower() == Status(card["status"]).label, slug
    # the demo shows the statuses a portfolio mostly has
    assert {c["status"] for c in shown.values()} >= {
        "gain-holds",
        "gain-not-yet-stable",
        "baseline-only",
        "data-stale",
    }


def test_results_status_agrees_with_its_own_figures(demo_site: Path):
    """The rules of steadyline.status, applied again to results.json's figures (the
    comparison, and the staged control chart's own after limits and their signals)."""
    for slug, doc in results(demo_site).items():
        status = doc["status"]["code"]
        metric = doc["status"]["metric"]
        m = next(x for x in doc["metrics"] if x["id"] == metric)
        hist = next((h for h in doc["history"] or [] if h["id"] == metric), None)
        c = m.get("comparison")
        if "After" not in m["points"]["period_kind"]:  # the demo's headline metrics are time-based
            assert status == "baseline-only" and c is None, slug
            continue
        assert c is not None, slug
        if c["p_value"] >= 0.05:
            assert status == "no-clear-change", slug
        elif not c["improved"]:
            assert status == "worse", slug
        else:
            staged = hist["control_chart_by_period"]
            holds = staged["own_after_limits"] and not staged["after_signals"]
            assert status == ("gain-holds" if holds else "gain-not-yet-stable"), slug


def test_the_index_offers_every_projects_headline_figures_as_csv(demo_site: Path):
    index = (demo_site / "index.html").read_text("utf-8")
    assert '<a href="headline-figures.csv" download>' in index
    rows = list(
        csv.DictReader(io.StringIO((demo_site / "headline-figures.csv").read_text("utf-8")))
    )
    shown = cards(index)
    docs = results(demo_site)
    assert [r["project"] for r in rows] == [
        s for s, _ in sorted(shown.items(), key=lambda kv: index.index(f'data-slug="{kv[0]}"'))
    ]
    for r in rows:
        doc = docs[r["project"]]
        m = next(x for x in doc["metrics"] if x["id"] == doc["status"]["metric"])
        assert r["headline_metric"] == m["name"] and r["unit"] == m["unit"]
        assert r["status"] == Status(shown[r["project"]]["status"]).label
        assert r["data_to"] == doc["project"]["data_to"]
        c = m.get("comparison")
        if c is not None:
            for key in ("baseline", "after", "change", "percent_change"):
                assert float(r[key]) == c[key], (r["project"], key)  # as results.json rounds
            assert r["measure"] == c["measure"]
        else:
            assert r["after"] == r["change"] == "" and r["baseline"] != ""
        if r["status"] != "data stale":
            assert r["reason"] == doc["status"]["reason"]


def _small(tmp_path: Path, extra: str = "") -> Path:
    projects = tmp_path / "projects"
    projects.mkdir()
    (projects / "portfolio.toml").write_text(
        (DEMO / "portfolio.toml").read_text("utf-8") + extra, "utf-8"
    )
    for slug in ("frame-weld-porosity", "order-picking-errors"):
        shutil.copytree(DEMO / slug, projects / slug)
    return projects


def test_the_staleness_setting_changes_the_index_and_rebuilds_no_project(tmp_path: Path):
    projects = _small(tmp_path)
    out = tmp_path / "site"
    first = build(BuildOptions(projects, out, jobs=1))
    assert (
        cards((out / "index.html").read_text("utf-8"))["frame-weld-porosity"]["status"]
        == "data-stale"
    )  # data to 2026-04-27
    toml = projects / "portfolio.toml"
    toml.write_text(toml.read_text("utf-8") + "stale_after_days = 400\n", "utf-8")
    second = build(BuildOptions(projects, out, jobs=1))
    assert first.built and second.built == [] and sorted(second.reused) == sorted(first.built)
    index = (out / "index.html").read_text("utf-8")
    assert cards(index)["frame-weld-porosity"]["status"] == "baseline-only"
    assert "data are stale after 400 days without data" in index


def test_a_bad_staleness_setting_is_named_and_the_default_used(tmp_path: Path):
    projects = _small(tmp_path, "stale_after_days = 0\n")
    report = build(BuildOptions(projects, tmp_path / "site", jobs=1))
    lines = [p.format() for p in report.problems]
    assert any(
        re.match(r"portfolio\.toml:\d+: stale_after_days: must be at least 1, got 0", x)
        for x in lines
    ), lines
    index = (tmp_path / "site" / "index.html").read_text("utf-8")
    assert f"data are stale after {STALE_AFTER_DAYS} days" in index


def test_the_build_date_comes_from_source_date_epoch(tmp_path: Path, monkeypatch):
    projects = _small(tmp_path)
    out = tmp_path / "site"
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1778025600")  # 2026-05-06: not yet stale
    build(BuildOptions(projects, out, jobs=1))
    index = (out / "index.html").read_text("utf-8")
    assert "as of this build on 2026-05-06" in index
    assert cards(index)["frame-weld-porosity"]["status"] == "baseline-only"
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "next tuesday")
    before = (out / "index.html").read_bytes()
    with pytest.raises(BuildError, match="SOURCE_DATE_EPOCH: expected a whole number"):
        build(BuildOptions(projects, out, jobs=1))
    assert (out / "index.html").read_bytes() == before  # the published site is untouched


# ------------------------------------------------------------------ statuses of built projects


def _project(
    tmp_path: Path, base: list[float], after: list[float], name: str, better: str = "lower"
) -> dict:
    """results.json of a one-metric project: the *base* values as its baseline, then *after*."""
    from steadyline.config import PortfolioSettings
    from steadyline.pipeline.project import build_project

    values = base + after
    d0 = dt.date(2026, 1, 5)
    rows = ["date,value"] + [f"{d0 + dt.timedelta(days=i)},{v}" for i, v in enumerate(values)]
    folder = tmp_path / name
    folder.mkdir()
    (folder / "data.csv").write_text("\n".join(rows) + "\n", "utf-8")
    end = d0 + dt.timedelta(days=len(base) - 1)
    start = end + dt.timedelta(days=1)
    (folder / "project.toml").write_text(
        'title = "T"\nowner = "O"\nphase = "improve"\nproblem = "P"\n\n[comparison]\n'
        f"baseline = [{d0}, {end}]\nafter = [{start}]\n\n[[metric]]\n"
        f'id = "m"\nname = "Metric"\nfile = "data.csv"\ntype = "continuous"\n'
        f'time = "date"\nvalue = "value"\nbetter = "{better}"\n',
        "utf-8",
    )
    outcome = build_project(folder, tmp_path, PortfolioSettings())
    assert outcome.ok, [p.format() for p in outcome.problems]
    doc = json.loads(outcome.files["results.json"])
    assert outcome.entry["status"]["code"] == doc["status"]["code"]  # the card's, unjudged
    return doc


def test_built_projects_get_each_status_from_their_results(tmp_path: Path):
    import numpy as np

    # seed 4: thirty values with no signal on their own limits
    base = [round(v, 3) for v in np.random.default_rng(4).normal(10.0, 1.0, 30)]
    shifted = [round(v - 3.0, 3) for v in base]  # the same pattern, 3 lower: as stable
    cases = {
        "gain-holds": dict(after=shifted),
        "worse": dict(after=[round(v + 3.0, 3) for v in base]),
        "no-clear-change": dict(after=list(reversed(base))),  # the same values: p = 1
        "gain-not-yet-stable": dict(after=shifted[:8]),  # too few for limits of its own
        "not-judged": dict(after=shifted, better="target"),  # and no target set
        "baseline-only": dict(after=[]),
    }
    for i, (want, kw) in enumerate(cases.items()):
        doc = _project(tmp_path, base, name=f"p{i}", **kw)
        assert doc["status"]["code"] == want, (want, doc["status"])
        assert doc["status"]["metric"] == "m"
        if want == "gain-holds":
            staged = doc["history"][0]["control_chart_by_period"]
            assert staged["own_after_limits"] and staged["after_signals"] == []
        if want == "gain-not-yet-stable":
            assert "the after period has 8 points; 12 are needed" in doc["status"]["reason"]


def test_a_later_build_date_rewrites_only_the_index_and_its_csv(tmp_path: Path, monkeypatch):
    import hashlib

    def hashes(root: Path) -> dict[str, str]:
        return {
            p.relative_to(root).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(root.rglob("*"))
            if p.is_file()
        }

    projects = _small(tmp_path)
    out = tmp_path / "site"
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1778025600")  # 2026-05-06
    build(BuildOptions(projects, out, jobs=1))
    before = hashes(out)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1795392000")  # 2026-11-23
    report = build(BuildOptions(projects, out, jobs=1))
    assert report.built == [] and report.written
    after = hashes(out)
    assert {k for k in after if before.get(k) != after[k]} == {"index.html", "headline-figures.csv"}
