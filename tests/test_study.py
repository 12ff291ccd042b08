"""A measurement study as a metric: its figures in results.json and on the pages, checked
against statsmodels' two-way ANOVA on the same data (the demo's tension-meter study), against
Montgomery's worked example (Introduction to SQC, §8.7, data and printed results from memory,
as in tests/stats/test_gauge.py) and against the R chart's D4 factor of the printed tables
(Montgomery, Appendix VI: D4 = 3.267 for subgroups of 2, 2.574 for 3); and the property that a
study without an appraiser effect shows a reproducibility near zero.
"""

from __future__ import annotations

import csv
import json
import math
import re
import tomllib
from html import unescape
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from corpus.kit import good_csv, meta, write
from stats.test_gauge import long_form, montgomery_cube

from steadyline.cli import main
from steadyline.notebook import analyse_frame

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "projects" / "spoke-tension"
STUDY_ID = "tension-meter"


def _demo_results(site: Path) -> dict:
    return json.loads((site / "projects" / "spoke-tension" / "results.json").read_text())


def _entry(doc: dict, mid: str) -> dict:
    return next(m for m in doc["metrics"] if m["id"] == mid)


def _demo_frame() -> pd.DataFrame:
    with (DEMO / "tension_meter_study.csv").open(encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    return pd.DataFrame(
        {
            "y": [float(r["reading_kgf"]) for r in rows],
            "part": [r["spoke"] for r in rows],
            "appr": [r["builder"] for r in rows],
        }
    )


def _statsmodels(df: pd.DataFrame):
    smf = pytest.importorskip("statsmodels.formula.api")
    from statsmodels.stats.anova import anova_lm

    full = anova_lm(smf.ols("y ~ C(part) * C(appr)", df).fit(), typ=2)
    additive = anova_lm(smf.ols("y ~ C(part) + C(appr)", df).fit(), typ=2)
    return full, additive


def test_demo_study_figures_equal_statsmodels(demo_site):
    study = _entry(_demo_results(demo_site), STUDY_ID)["study"]
    df = _demo_frame()
    full, additive = _statsmodels(df)
    names = {
        "part": "C(part)",
        "appraiser": "C(appr)",
        "part × appraiser": "C(part):C(appr)",
        "repeatability": "Residual",
    }
    rows = {r["source"]: r for r in study["anova"]}
    for source, sm in names.items():
        assert rows[source]["df"] == full.loc[sm, "df"]
        assert rows[source]["sum_of_squares"] == pytest.approx(full.loc[sm, "sum_sq"], rel=1e-8)
    # the interaction is tested against repeatability: statsmodels' F and p of that line
    assert study["interaction_p_value"] == pytest.approx(
        full.loc["C(part):C(appr)", "PR(>F)"], rel=1e-6
    )
    assert study["interaction_pooled"] == (full.loc["C(part):C(appr)", "PR(>F)"] > 0.25)
    assert study["interaction_pooled"]  # the demo is made without an interaction
    reduced = {r["source"]: r for r in study["reduced_anova"]}
    for source in ("part", "appraiser"):
        sm = names[source]
        assert reduced[source]["f"] == pytest.approx(additive.loc[sm, "F"], rel=1e-8)
        assert reduced[source]["p_value"] == pytest.approx(additive.loc[sm, "PR(>F)"], rel=1e-6)
    # variance components from statsmodels' additive table, by the expected mean squares:
    # the additive model's residual mean square is the pooled repeatability
    p, o, r = 10, 3, 3
    ms = additive["sum_sq"] / additive["df"]
    v_rep = ms["Residual"]
    v_o = max(0.0, (ms["C(appr)"] - v_rep) / (p * r))
    v_p = max(0.0, (ms["C(part)"] - v_rep) / (o * r))
    total = v_rep + v_o + v_p
    comp = {c["source"]: c for c in study["components"]}
    assert comp["repeatability"]["variance"] == pytest.approx(v_rep, rel=1e-8)
    assert comp["reproducibility"]["variance"] == pytest.approx(v_o, rel=1e-6, abs=1e-12)
    assert comp["part-to-part"]["variance"] == pytest.approx(v_p, rel=1e-8)
    ms_sd = math.sqrt(v_rep + v_o)
    assert comp["measurement system"]["study_percent"] == pytest.approx(
        100 * ms_sd / math.sqrt(total), rel=1e-6
    )
    assert comp["measurement system"]["tolerance_percent"] == pytest.approx(
        100 * 6 * ms_sd / (130 - 110), rel=1e-6
    )
    assert study["distinct_categories"] == math.floor(1.41 * math.sqrt(v_p) / ms_sd)


def test_demo_verdict_follows_the_guide_and_is_shown_where_the_metric_is(demo_site):
    doc = _demo_results(demo_site)
    entry = _entry(doc, STUDY_ID)
    comp = {c["source"]: c for c in entry["study"]["components"]}
    shares = [
        comp["measurement system"]["study_percent"],
        comp["measurement system"]["tolerance_percent"],
    ]

    def band(x):  # AIAG MSA 4th ed. (from memory): under 10, 10 to 30, over 30
        return "adequate" if x < 10 else "depends on use" if x <= 30 else "inadequate"

    order = ["adequate", "depends on use", "inadequate"]
    expected = max((band(x) for x in shares), key=order.index)
    assert entry["verdict"]["code"] == expected == "depends on use"
    assert entry["verdict"]["words"] == "may be acceptable, depending on its use"
    assert entry["qualifies"] == ["tension"]
    named = _entry(doc, "tension")["measurement_study"]
    assert named["id"] == STUDY_ID and named["verdict"] == expected
    assert named["study_percent"] == comp["measurement system"]["study_percent"]
    assert named["distinct_categories"] == entry["study"]["distinct_categories"]
    # the study is no process: the status judges the process metric, no history entry
    assert doc["status"]["metric"] == "tension"
    assert STUDY_ID not in {h["id"] for h in doc["history"]}
    html = (demo_site / "projects" / "spoke-tension" / "index.html").read_text()
    text = unescape(re.sub(r"<[^>]+>", "", html))
    assert (
        "Measurements checked byTension-meter study: may be acceptable, depending on its "
        "use by the guide (" in text
    )
    assert f"{shares[0]:.1f}% of the study variation, {shares[1]:.1f}% of the tolerance" in text
    assert "decided by your organisation's own procedures" in text  # the usual caution
    pack = re.sub(
        r"<[^>]+>", "", (demo_site / "projects" / "spoke-tension" / "handover.html").read_text()
    )
    assert "Measurements checked byTension-meter study: may be acceptable" in pack


def test_demo_study_in_a_notebook_equals_the_build(demo_site):
    meta_ = tomllib.loads((DEMO / "project.toml").read_text(encoding="utf-8"))
    keys = next(m for m in meta_["metric"] if m["id"] == STUDY_ID)
    frame = pd.read_csv(DEMO / keys["file"])
    r = analyse_frame(frame, keys)
    built = _entry(_demo_results(demo_site), STUDY_ID)
    # the frame alone knows no metric that names the study
    assert {k: v for k, v in r.results.items() if k not in ("file", "qualifies")} == {
        k: v for k, v in built.items() if k not in ("file", "qualifies")
    }
    data = demo_site / "projects" / "spoke-tension" / "data"
    assert set(r.charts) == {"components", "ranges", "measurements"}
    for key, chart in r.charts.items():
        assert chart.spec == json.loads((data / f"{STUDY_ID}-{key}.vl.json").read_text())


def _study_project(root: Path, cube: np.ndarray, *, limits=(5.0, 60.0)) -> None:
    values, parts, appraisers = long_form(cube)
    text = "part,who,reading\n" + "".join(
        f"{p},{a},{v:g}\n" for v, p, a in zip(values, parts, appraisers, strict=True)
    )
    study = {
        "id": "gauge",
        "name": "Gauge study",
        "file": "study.csv",
        "type": "measurement-study",
        "part": "part",
        "appraiser": "who",
        "value": "reading",
        "spec_lower": limits[0],
        "spec_upper": limits[1],
    }
    write(
        root,
        {
            "p/project.toml": meta(metric={"measurement_study": "gauge"}, more_metrics=[study]),
            "p/data.csv": good_csv(),
            "p/study.csv": text,
        },
    )


def test_montgomery_worked_example_through_a_build(tmp_path, capsys):
    root, out = tmp_path / "projects", tmp_path / "site"
    cube = montgomery_cube()
    _study_project(root, cube)
    assert main(["build", "--quiet", str(root), "--out", str(out)]) == 0
    doc = json.loads((out / "projects" / "p" / "results.json").read_text())
    entry = _entry(doc, "gauge")
    s = entry["study"]
    # Montgomery §8.7 (from memory): SS 1185.425, 2.617, 27.05, 59.5; pooled; σ²_repeat 0.88,
    # σ²_operator 0.0108, σ²_part 10.25; P/T ≈ 10% for USL 60, LSL 5; ndc 4 (computed)
    assert [r["sum_of_squares"] for r in s["anova"]] == pytest.approx(
        [1185.425, 2.6167, 27.05, 59.5], abs=5e-4
    )
    assert s["interaction_pooled"]
    comp = {c["source"]: c for c in s["components"]}
    assert comp["repeatability"]["variance"] == pytest.approx(0.88, abs=0.005)
    assert comp["appraiser"]["variance"] == pytest.approx(0.0108, abs=5e-4)
    assert comp["part-to-part"]["variance"] == pytest.approx(10.25, abs=0.005)
    assert comp["measurement system"]["tolerance_percent"] == pytest.approx(10.3, abs=0.1)
    assert s["distinct_categories"] == 4
    assert entry["verdict"]["code"] == "depends on use"  # 28.3% and 10.3%: both in 10-30%
    assert entry["verdict"]["distinct_categories_enough"] is False
    # each appraiser's range chart: ranges of 2 trials, centre R̄, limit D4·R̄ with the
    # printed D4 = 3.267 for subgroups of 2 (Montgomery, Appendix VI)
    for j, rng in enumerate(entry["appraiser_ranges"]):
        ranges = np.abs(cube[:, j, 0] - cube[:, j, 1])
        assert rng["ranges"] == pytest.approx(ranges.tolist())
        assert rng["centre"] == pytest.approx(ranges.mean())
        assert rng["upper"] == pytest.approx(3.267 * ranges.mean(), rel=2e-4)
        assert rng["lower"] == 0
        assert rng["beyond"] == [i for i, x in enumerate(ranges) if x > rng["upper"]]
    html = unescape(re.sub(r"<[^>]+>", "", (out / "projects" / "p" / "index.html").read_text()))
    assert (
        "It tells the parts apart in 4 distinct categories; the guide asks for at least 5." in html
    )


def _simulated(seed: int, appraiser_sd: float) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    parts, apprs, trials = 10, 3, 3
    y = (
        50
        + rng.normal(0, 2.0, (parts, 1, 1))
        + rng.normal(0, appraiser_sd, (1, apprs, 1))
        + rng.normal(0, 0.5, (parts, apprs, trials))
    )
    rows = [(f"P{i}", f"A{j}", float(y[i, j, k])) for i, j, k in np.ndindex(*y.shape)]
    return pd.DataFrame(rows, columns=["part", "who", "reading"])


KEYS = {
    "id": "g",
    "name": "G",
    "type": "measurement-study",
    "part": "part",
    "appraiser": "who",
    "value": "reading",
}


def _reproducibility(df: pd.DataFrame) -> tuple[float, float]:
    comp = {c["source"]: c for c in analyse_frame(df, KEYS).results["study"]["components"]}
    return comp["reproducibility"]["variance"], comp["repeatability"]["variance"]


@pytest.mark.parametrize("seed", range(12))
def test_no_appraiser_effect_gives_reproducibility_near_zero(seed):
    # Property: with no appraiser effect the appraiser mean square estimates repeatability, so
    # σ²_appraiser = (MS_O − MS_pooled)/(p r) stays within a few hundredths of repeatability
    # (F(2, 87) would have to pass 7, p ≈ 0.0015, for the ratio to reach 0.2)
    repro, repeat = _reproducibility(_simulated(seed, 0.0))
    assert repro <= 0.2 * repeat


def test_a_large_appraiser_effect_gives_a_large_reproducibility():
    shares = [_reproducibility(_simulated(seed, 2.0)) for seed in range(5)]
    assert all(repro > repeat for repro, repeat in shares)
