"""The baseline's studies as the pages and results.json give them, worked out again from the
demo's CSV files with general-purpose libraries:

- change in mix: ``scipy.stats.chi2_contingency`` (``correction=False``) and
  ``scipy.stats.fisher_exact``;
- capability before and after: Bissell's standard error (Bissell 1990, *Applied Statistics*
  39:331–340) with the normal tail of ``scipy.stats.norm``;
- business figures: ``scipy.stats.poisson`` (P(0) = exp(−DPU)), ``scipy.stats.norm`` (the
  normal-model yield; the sigma level Φ⁻¹, plus the trade's 1.5 shift: common practice);
- after-sample size and power: statsmodels' ``TTestIndPower`` and ``power_proportions_2indep``.
"""

from __future__ import annotations

import html
import json
import math
import re
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from corpus.kit import meta, write
from scipy import stats as st
from statsmodels.stats.power import TTestIndPower
from statsmodels.stats.proportion import power_proportions_2indep

from steadyline.pipeline.build import BuildOptions, build

DEMO = Path(__file__).resolve().parents[1] / "projects"


def _results(site: Path, slug: str) -> dict:
    return json.loads((site / "projects" / slug / "results.json").read_text("utf-8"))


def _metric(doc: dict, mid: str, where: str = "metrics") -> dict:
    return next(m for m in doc[where] if m["id"] == mid)


def _text(site: Path, slug: str, page: str, mid: str | None = None) -> str:
    """A page's text, or the text of one metric's section of it."""
    s = (site / "projects" / slug / page).read_text("utf-8")
    if mid is not None:
        s = s[s.index(f'id="metric-{mid}"') :]
        s = s[
            : s.index('<section class="metric"', 1)
            if '<section class="metric"' in s[1:]
            else len(s)
        ]
    s = re.sub(r"<script.*?</script>", " ", s, flags=re.S)
    return re.sub(r"\s+", " ", html.unescape(re.sub(r"<[^>]+>", " ", s)))


def _periods(slug: str, mid: str):
    m = tomllib.loads((DEMO / slug / "project.toml").read_text("utf-8"))
    comp = m["comparison"]
    metric = next(x for x in m["metric"] if x["id"] == mid)
    b = metric.get("baseline", comp["baseline"])
    a = metric.get("after", comp.get("after"))
    return metric, b, a


def _in(dates: pd.Series, period) -> pd.Series:
    d = pd.to_datetime(dates).dt.date
    ok = d >= period[0]
    if len(period) > 1:
        ok &= d <= period[1]
    return ok


# ----------------------------------------------------------------------------- change in mix


@pytest.mark.parametrize(
    "slug,mid,file,time,cat",
    [
        ("paint-finish-defects", "defect-types", "paint_defects.csv", "found", "defect_type"),
        ("customer-returns", "return-reasons", "returns.csv", "received", "reason"),
    ],
)
def test_change_in_mix_is_scipys_chi_square(demo_site, slug, mid, file, time, cat):
    _, b, a = _periods(slug, mid)
    rows = pd.read_csv(DEMO / slug / file)
    before = rows[_in(rows[time], b)][cat].value_counts()
    after = rows[_in(rows[time], a)][cat].value_counts()
    mix = _metric(_results(demo_site, slug), mid, "history")["mix_change"]
    assert mix["merged"] == [] and mix["expected_rule_met"]
    table = np.array(
        [
            [before.get(c, 0) for c in mix["categories"]],
            [after.get(c, 0) for c in mix["categories"]],
        ]
    )
    assert sorted(mix["categories"]) == sorted(set(before.index) | set(after.index))
    chi2, p, df, expected = st.chi2_contingency(table, correction=False)
    assert mix["test"] == "Pearson's chi-square test of homogeneity"
    assert mix["statistic"] == pytest.approx(chi2, rel=1e-9)
    assert mix["df"] == df
    assert mix["p_value"] == pytest.approx(p, rel=1e-6, abs=1e-300)
    assert mix["expected_baseline"] == pytest.approx(expected[0].tolist(), rel=1e-9)
    assert mix["shares_changed"] == (p < 0.05)
    text = _text(demo_site, slug, "history.html", mid)
    p_text = "p < 0.001" if p < 0.001 else f"p = {p:.3f}"
    assert (
        "The shares of the categories changed between the baseline and the after period "
        f"(Pearson's chi-square test of homogeneity, {p_text})."
    ) in text
    assert f"chi-square {chi2:.2f} on {df} degrees of freedom" in text
    assert (
        "met by every category as counted every expected count at least 1 and at most 20% "
        "of them below 5 (Cochran 1954, common practice)"
    ) in text


def _categories_site(tmp_path: Path, before: dict, after: dict) -> Path:
    rows = ["day,reason"]
    for day, counts in (("2026-01-10", before), ("2026-03-10", after)):
        for c, n in counts.items():
            rows += [f"{day},{c}"] * n
    projects = write(
        tmp_path / "projects",
        {
            "p/project.toml": meta(
                metric={"type": "categories", "value": None, "category": "reason", "time": "day"},
                comparison="baseline = [2026-01-01, 2026-01-31]\nafter = [2026-03-01, 2026-03-31]",
            ),
            "p/data.csv": "\n".join(rows) + "\n",
        },
    )
    report = build(BuildOptions(projects, tmp_path / "site", force=True, jobs=1))
    assert report.ok
    return tmp_path / "site"


def test_small_categories_are_merged_and_the_page_names_them(tmp_path):
    before = {"scratch": 40, "dent": 30, "stain": 4, "chip": 3}
    after = {"scratch": 20, "dent": 45, "stain": 3, "chip": 5}
    site = _categories_site(tmp_path, before, after)
    mix = _metric(_results(site, "p"), "m", "history")["mix_change"]
    assert set(mix["merged"]) == {"stain", "chip"}
    assert mix["categories"][-1] == "other (merged)"
    table = np.array([[40, 30, 7], [20, 45, 8]])
    order = [mix["categories"].index(c) for c in ("scratch", "dent", "other (merged)")]
    assert [mix["baseline"][i] for i in order] == table[0].tolist()
    chi2, p, _, _ = st.chi2_contingency(table, correction=False)
    assert mix["statistic"] == pytest.approx(chi2, rel=1e-9)
    assert mix["p_value"] == pytest.approx(p, rel=1e-9)
    text = _text(site, "p", "history.html")
    assert "Expected counts met after merging stain, chip into 'other (merged)'" in text
    assert "with no test of the change" not in text


def test_too_few_counts_for_chi_square_use_fishers_exact_test(tmp_path):
    site = _categories_site(tmp_path, {"a": 6, "b": 1}, {"a": 1, "b": 5})
    mix = _metric(_results(site, "p"), "m", "history")["mix_change"]
    table = np.array([[6, 1], [1, 5]])
    res = st.fisher_exact(table[:, [mix["categories"].index("a"), mix["categories"].index("b")]])
    assert mix["test"] == "Fisher's exact test" and mix["statistic"] is None
    assert mix["p_value"] == pytest.approx(res.pvalue, rel=1e-9)
    text = _text(site, "p", "history.html")
    assert (
        "not met even with the categories merged into two groups: Fisher's exact test is "
        "used instead" in text
    )
    assert f"(Fisher's exact test, p = {res.pvalue:.3f})" in text


# ----------------------------------------------------------------------------- capability


@pytest.mark.parametrize(
    "slug,mid",
    [
        ("spoke-tension", "tension"),
        ("hub-bearing-press-fit", "press-fit-force"),
        ("wheel-build-lead-time", "lead-time-order"),
    ],
)
def test_capability_change_is_bissells_z_test(demo_site, slug, mid):
    h = _metric(_results(demo_site, slug), mid, "history")
    cb, ca = h["capability"]["Baseline"], h["capability"]["After"]
    ch = h["capability_change"]

    def se(c):  # Bissell (1990)
        return math.sqrt(1 / (9 * c["n"]) + c["cpk"] ** 2 / (2 * (c["n"] - 1)))

    z = (ca["cpk"] - cb["cpk"]) / math.hypot(se(cb), se(ca))
    assert ch["z"] == pytest.approx(z, rel=1e-9)
    assert ch["p_value"] == pytest.approx(2 * st.norm.sf(abs(z)), rel=1e-6, abs=1e-300)
    overlap = cb["cpk_ci"][0] <= ca["cpk_ci"][1] and ca["cpk_ci"][0] <= cb["cpk_ci"][1]
    assert ch["intervals_overlap"] == overlap and ch["beyond_intervals"] == (not overlap)
    text = _text(demo_site, slug, "history.html", mid)
    i = text.index("Capability, before and after")
    block = text[i : text.index("Fit to the specification, baseline", i)]
    assert (
        f"Cpk rose from {cb['cpk']:.2f} to {ca['cpk']:.2f}" in block
        or f"Cpk fell from {cb['cpk']:.2f} to {ca['cpk']:.2f}" in block
    )
    assert ("do not overlap: the change is beyond them" in block) == (not overlap)
    ci = cb["cpk_ci"]
    assert f"{cb['cpk']:.2f} ({ci[0]:.2f} to {ci[1]:.2f})" in block
    # the indices are said once: the periods' blocks below keep no tiles of their own
    assert "Room between the mean and the nearer limit" not in text


# ----------------------------------------------------------------------------- business figures


def test_dpmo_and_poisson_yield_of_paint_defects(demo_site):
    slug, mid = "paint-finish-defects", "defects-per-frame"
    metric, b, a = _periods(slug, mid)
    # the workbook read by pandas (openpyxl, a test dependency): an outside reader of the file
    rows = pd.read_excel(
        DEMO / slug / "paint_batches.xlsx", sheet_name="Batches", engine="openpyxl"
    )
    doc = _results(demo_site, slug)
    m = metric["opportunities_per_unit"]
    for period, got in (
        (b, _metric(doc, mid)["business"]),
        (a, _metric(doc, mid, "history")["business"]["After"]),
    ):
        sel = rows[_in(rows["painted"], period)]
        d, u = sel["defects"].sum(), sel["frames_painted"].sum()
        assert got["dpu"] == pytest.approx(d / u, rel=1e-9)
        assert got["dpmo"] == pytest.approx(1e6 * d / (u * m), rel=1e-9)
        assert got["yield"] == pytest.approx(st.poisson.pmf(0, d / u), rel=1e-9)
        # sigma level of the opportunities with the trade's 1.5 shift (common practice)
        assert got["sigma_level"] == pytest.approx(st.norm.isf(d / (u * m)) + 1.5, rel=1e-9)
        assert got["sigma_basis"] == "opportunities" and got["shift_applied"]
    f = _metric(doc, mid)["business"]
    text = _text(demo_site, slug, "index.html")
    assert (
        f"{f['dpmo']:,.0f} defects per million opportunities (DPMO), at 24 opportunities per unit"
    ) in text
    assert (
        "with the trade's 1.5-sigma shift for long-run drift (a convention, not a law: "
        "common practice)"
    ) in text


def test_first_pass_yield_of_wheel_truing(demo_site):
    slug, mid = "wheel-truing-first-pass-yield", "retrue-rate"
    _, b, a = _periods(slug, mid)
    rows = pd.read_csv(DEMO / slug / "truing_weekly.csv")
    doc = _results(demo_site, slug)
    for period, got in (
        (b, _metric(doc, mid)["business"]),
        (a, _metric(doc, mid, "history")["business"]["After"]),
    ):
        sel = rows[_in(rows["week_start"], period)]
        p = sel["wheels_retrued"].sum() / sel["wheels_checked"].sum()
        assert got["first_pass_yield"] == pytest.approx(1 - p, rel=1e-9)
        assert got["ppm"] == pytest.approx(1e6 * p, rel=1e-9)
        assert got["sigma_level"] == pytest.approx(st.norm.isf(p) + 1.5, rel=1e-9)
    text = _text(demo_site, slug, "history.html")
    fb = _metric(doc, mid)["business"]
    fa = _metric(doc, mid, "history")["business"]["After"]
    assert (
        f"First-pass yield {100 * fb['first_pass_yield']:.2f}% {100 * fa['first_pass_yield']:.2f}%"
    ) in text


def test_expected_yield_of_measured_values_is_the_normal_models(demo_site):
    slug, mid = "spoke-tension", "tension"
    doc = _results(demo_site, slug)
    h = _metric(doc, mid, "history")
    for period in ("Baseline", "After"):
        c = h["capability"][period]
        outside = st.norm.cdf(c["lsl"], c["mean"], c["sigma_overall"]) + st.norm.sf(
            c["usl"], c["mean"], c["sigma_overall"]
        )
        assert h["business"][period]["yield"] == pytest.approx(1 - outside, rel=1e-9)
    base = h["business"]["Baseline"]
    assert _metric(doc, mid)["business"] == base
    text = _text(demo_site, slug, "index.html")
    assert (
        f"Expected yield, inside the specification: {100 * base['yield']:.2f}% (normal "
        "model, sigma of all values)."
    ) in text


def test_without_the_portfolio_key_no_sigma_level_is_given(tmp_path):
    rows = ["date,bad,checked"] + [
        f"2026-01-{d:02d},{k},200"
        for d, k in zip(
            range(1, 29),
            [5, 7, 4, 6, 8, 5, 3, 6, 7, 5, 4, 6, 5, 7, 2, 3, 1, 2, 3, 2, 1, 2, 3, 2, 1, 2, 3, 2],
            strict=True,
        )
    ]
    projects = write(
        tmp_path / "projects",
        {
            "p/project.toml": meta(
                metric={
                    "type": "defectives",
                    "value": None,
                    "count": "bad",
                    "size": "checked",
                    "unit": "parts",
                },
                comparison="baseline = [2026-01-01, 2026-01-14]\nafter = [2026-01-15]",
            ),
            "p/data.csv": "\n".join(rows) + "\n",
        },
    )
    assert build(BuildOptions(projects, tmp_path / "site", force=True, jobs=1)).ok
    doc = _results(tmp_path / "site", "p")
    f = _metric(doc, "m")["business"]
    assert "sigma_level" not in f and f["sigma_level_shown"] == "off"
    assert f["first_pass_yield"] == pytest.approx(1 - 78 / 2800, rel=1e-9)
    for page in ("index.html", "history.html"):
        text = _text(tmp_path / "site", "p", page)
        assert "sigma level" not in text.lower()
        assert "First-pass yield" in text


# ----------------------------------------------------------------------------- after sample


def test_after_sample_of_measured_values_is_statsmodels_t_test_power(demo_site):
    slug, mid = "frame-dropout-alignment", "dropout-offset"
    metric, b, _ = _periods(slug, mid)
    rows = pd.read_csv(
        DEMO / slug / "supplier_alignment_export.csv", sep=";", decimal=",", encoding="utf-8-sig"
    )
    x = rows[_in(rows["measured"], b)]["dropout_offset_mm"].to_numpy(float)
    plan = _metric(_results(demo_site, slug), mid)["after_sample_plan"]
    d = metric["expected_change"] / np.std(x, ddof=1)
    n1, n2 = len(x), plan["required_size"]

    def power(n):
        return TTestIndPower().power(effect_size=d, nobs1=n1, ratio=n / n1, alpha=0.05)

    assert power(n2) >= 0.8 > power(n2 - 1)
    assert plan["achieved_power"] == pytest.approx(power(n2), rel=1e-6)
    assert plan["points"] == n2 and plan["baseline_size"] == n1
    text = _text(demo_site, slug, "index.html")
    assert f"After sample needed {n2} values, to detect the expected −0.15 mm in the mean (" in text
    assert (
        f"two-sample t test, 5% level, 80% power (common practice), {n1} baseline values."
    ) in text


def test_after_sample_of_a_rolled_up_metric_counts_its_days(demo_site):
    slug, mid = "wheel-build-lead-time", "lead-time-daily"
    doc = _results(demo_site, slug)
    m = _metric(doc, mid)
    stage = np.array(m["points"]["period_kind"])
    v = np.array(m["points"]["value"], dtype=float)
    base, after = v[stage == "Baseline"], v[stage == "After"]
    plan = m["after_sample_plan"]
    d = -12.0 / np.std(base, ddof=1)

    def power(n):
        return TTestIndPower().power(
            effect_size=d, nobs1=len(base), ratio=n / len(base), alpha=0.05
        )

    assert power(plan["points"]) >= 0.8 > power(plan["points"] - 1)
    reached = _metric(doc, mid, "history")["after_sample_power"]
    assert reached["after_points"] == len(after)
    assert reached["power"] == pytest.approx(power(len(after)), rel=1e-6)
    text = _text(demo_site, slug, "history.html")
    assert f"After sample {len(after)} days; {plan['points']} needed power " in text


def test_after_sample_of_defectives_is_statsmodels_two_proportion_power(demo_site):
    slug, mid = "wheel-truing-first-pass-yield", "nipple-audit"
    metric, b, a = _periods(slug, mid)
    rows = pd.read_csv(DEMO / slug / "nipple_audit.csv")
    sb, sa = rows[_in(rows["audited"], b)], rows[_in(rows["audited"], a)]
    n1 = sb["nipples_checked"].sum()
    p1 = sb["cracked"].sum() / n1
    p2 = p1 + metric["expected_change"]
    doc = _results(demo_site, slug)
    plan = _metric(doc, mid)["after_sample_plan"]

    def power(n):
        return power_proportions_2indep(p2 - p1, p1, nobs1=n, ratio=n1 / n, alpha=0.05).power

    n2 = plan["required_size"]
    assert power(n2) >= 0.8 > power(n2 - 1)
    assert plan["points"] == math.ceil(n2 / (n1 / len(sb)))
    got = _metric(doc, mid, "history")["after_sample_power"]
    assert got["after_size"] == sa["nipples_checked"].sum()
    assert got["power"] == pytest.approx(power(got["after_size"]), rel=1e-6)
    assert got["reached"] == (got["power"] >= 0.8)
