"""Series with more points than a chart shows legibly are drawn by period, and no file of the
site grows with the rows.

The checks of the statistics work the periods out again with pandas' own grouping (an outside
implementation) and the chart figures with numpy from the formulas of Montgomery,
*Introduction to Statistical Quality Control* (Xbar-S with unequal subgroups: pooled s-bar,
limits with A3(n_i); p chart: p-bar = sum d / sum n, limits p-bar +- 3 sqrt(p-bar (1 - p-bar) /
n_i); u chart the same with u-bar / n_i).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import vl_convert as vlc
from markupsafe import escape

from steadyline.analysis.process import analyse
from steadyline.config import load_portfolio, load_project
from steadyline.loading.drawing import DRAWN_POINTS_MAX, choose_period
from steadyline.loading.metric import load_metric
from steadyline.pipeline.project import build_project
from steadyline.site.project import RESULTS_SCHEMA
from steadyline.stats.constants import c4

START = np.datetime64("2026-01-05T06:00")
MINUTES = 330 * 24 * 60  # rows spread over 330 days


def _times(rng, n: int, minutes: int = MINUTES) -> pd.Series:
    mins = np.sort(rng.integers(0, minutes, n))
    return pd.Series(pd.to_datetime(START + mins.astype("timedelta64[m]")))


def write_project(
    root: Path,
    name: str,
    n: int,
    kind: str = "continuous",
    *,
    seed: int = 3,
    extra: str = "",
    minutes: int = MINUTES,
) -> Path:
    """One project of one metric of *n* raw rows (invented data), without a roll-up."""
    rng = np.random.default_rng(seed)
    folder = root / name
    folder.mkdir(parents=True)
    t = _times(rng, n, minutes)
    stamps = t.dt.strftime("%Y-%m-%dT%H:%M")
    after = (t >= pd.Timestamp("2026-06-01")).to_numpy()
    if kind in ("continuous", "subgroups"):
        df = pd.DataFrame({"t": stamps, "v": np.round(20 - 0.8 * after + rng.standard_t(4, n), 3)})
        keys = 'value = "v"\nspec_upper = 26.0\nunit = "h"'
        if kind == "subgroups":
            keys += "\nsubgroup_size = 5"
    elif kind == "defectives":
        size = rng.integers(20, 60, n)
        df = pd.DataFrame(
            {"t": stamps, "d": rng.binomial(size, np.where(after, 0.03, 0.06)), "n": size}
        )
        keys = 'count = "d"\nsize = "n"\nunit = "frames"'
    else:  # defects, one row per unit inspected
        df = pd.DataFrame({"t": stamps, "c": rng.poisson(np.where(after, 1.5, 2.0))})
        keys = 'count = "c"\nunit = "defects"'
    df.to_csv(folder / "m.csv", index=False, lineterminator="\n")
    (folder / "project.toml").write_text(
        f'''title = "Rows {n}"
owner = "Someone"
phase = "measure"
problem = "Many rows."

[comparison]
baseline = [2026-01-05, 2026-04-30]
after = [2026-06-01]

[[metric]]
id = "m"
name = "Metric"
file = "m.csv"
type = "{kind}"
time = "t"
better = "lower"
{keys}
{extra}
''',
        "utf-8",
    )
    return folder


def build(folder: Path) -> dict[str, bytes]:
    root = folder.parent
    settings, _ = load_portfolio(root)
    out = build_project(folder, root, settings)
    assert out.ok, [p.format() for p in out.problems]
    return out.files


def loaded(folder: Path):
    settings, _ = load_portfolio(folder.parent)
    spec, _ = load_project(folder, folder.parent, settings)
    return load_metric(spec.metrics[0], settings)


def weight(files: dict[str, bytes]) -> dict[str, int]:
    """Bytes per kind of file: the page, the history page, results.json, specs, CSVs."""
    w = {
        "page": len(files["index.html"]),
        "history": len(files.get("history.html", b"")),
        "results": len(files["results.json"]),
        "specs": 0,
        "csv": 0,
    }
    for name, data in files.items():
        if name.endswith(".vl.json"):
            w["specs"] += len(data)
        elif name.endswith(".csv"):
            w["csv"] += len(data)
    return w


# ---------------------------------------------------------------------------- the period


def test_choose_period_is_the_finest_that_fits():
    days = pd.Series(pd.date_range("2020-01-01", periods=DRAWN_POINTS_MAX, freq="D"))
    assert choose_period(days)[0] == "day"
    more = pd.Series(pd.date_range("2020-01-01", periods=DRAWN_POINTS_MAX + 1, freq="D"))
    per, key, count = choose_period(more)
    assert (per, count) == ("week", 58)  # 2020-01-01 is a Wednesday: 401 days touch 58 weeks
    assert (key[:3] == np.datetime64("2019-12-30")).all()  # ISO weeks start on Monday
    centuries = pd.Series(pd.date_range("1800-01-01", "2200-12-31", freq="7D"))
    per, _, count = choose_period(centuries)
    assert (per, count) == ("year", 401)  # even by year too many: the coarsest is used


def test_continuous_is_drawn_as_one_subgroup_per_period(tmp_path):
    folder = write_project(tmp_path, "c", 5000)
    data = loaded(folder)
    b = data.by_period
    assert b is not None and (b.period, b.how, b.points) == ("day", "subgroups", 5000)
    # the same grouping by pandas (an outside implementation)
    raw = pd.read_csv(folder / "m.csv", parse_dates=["t"])
    groups = raw.groupby(raw["t"].dt.normalize())["v"]
    assert b.periods == groups.ngroups == len(data.points) <= DRAWN_POINTS_MAX
    assert data.kind == "subgroups"
    assert [len(g) for g in data.subgroups] == groups.size().tolist()
    np.testing.assert_allclose(data.points["value"], groups.mean().to_numpy(), rtol=1e-12)
    assert len(data.values) == 5000  # histogram, box plot, capability: every value

    a = analyse(data)
    assert a.choice.kind == "xbar-s"  # unequal sizes: limits step with the size
    base = data.points["stage"].to_numpy() == 0
    sizes = groups.size().to_numpy()[base]
    sds = groups.std(ddof=1).to_numpy()[base]
    means = groups.mean().to_numpy()[base]
    # Montgomery (variable n): grand mean weighted by n, s-bar pooled, limits A3(n_i) s-bar
    xbarbar = (sizes * means).sum() / sizes.sum()
    sbar = math.sqrt(((sizes - 1) * sds**2).sum() / (sizes - 1).sum())
    a3 = np.array([3 / (c4(int(k)) * math.sqrt(k)) for k in sizes])
    np.testing.assert_allclose(a.control.centre[base], xbarbar, rtol=1e-9)
    np.testing.assert_allclose(a.control.upper[base], xbarbar + a3 * sbar, rtol=1e-9)
    np.testing.assert_allclose(a.control.lower[base], xbarbar - a3 * sbar, rtol=1e-9)


def test_too_many_subgroups_are_pooled_by_period(tmp_path):
    folder = write_project(tmp_path, "g", 2500, "subgroups")  # 500 subgroups of 5
    data = loaded(folder)
    b = data.by_period
    assert (b.period, b.how, b.points) == ("day", "subgroups", 500)
    assert "the subgroups of a period pooled" in b.reason
    raw = pd.read_csv(folder / "m.csv", parse_dates=["t"])
    groups = raw.groupby(raw["t"].dt.normalize())["v"]
    assert [len(g) for g in data.subgroups] == groups.size().tolist()
    np.testing.assert_allclose(data.points["value"], groups.mean().to_numpy(), rtol=1e-12)
    assert analyse(data).choice.kind == "xbar-s"


def test_defectives_are_drawn_by_each_periods_totals(tmp_path):
    folder = write_project(tmp_path, "d", 3000, "defectives")
    data = loaded(folder)
    assert (data.by_period.period, data.by_period.how) == ("day", "totals")
    raw = pd.read_csv(folder / "m.csv", parse_dates=["t"])
    g = raw.groupby(raw["t"].dt.normalize())
    np.testing.assert_array_equal(data.points["count"], g["d"].sum().to_numpy())
    np.testing.assert_array_equal(data.points["size"], g["n"].sum().to_numpy())
    a = analyse(data)
    assert a.choice.kind == "p"
    base = data.points["stage"].to_numpy() == 0
    d, n = g["d"].sum().to_numpy()[base], g["n"].sum().to_numpy()[base]
    pbar = d.sum() / n.sum()
    np.testing.assert_allclose(a.control.centre[base], pbar, rtol=1e-12)
    np.testing.assert_allclose(
        a.control.upper[base], pbar + 3 * np.sqrt(pbar * (1 - pbar) / n), rtol=1e-9
    )


def test_defects_without_an_area_are_drawn_per_row_inspected(tmp_path):
    folder = write_project(tmp_path, "u", 3000, "defects")
    data = loaded(folder)
    assert (data.by_period.period, data.by_period.how) == ("day", "totals")
    assert "defects per row" in data.by_period.reason
    raw = pd.read_csv(folder / "m.csv", parse_dates=["t"])
    g = raw.groupby(raw["t"].dt.normalize())["c"]
    np.testing.assert_array_equal(data.points["count"], g.sum().to_numpy())
    np.testing.assert_array_equal(data.points["size"], g.size().to_numpy())
    a = analyse(data)
    assert a.choice.kind == "u"  # rows per day vary: a u chart, not a c chart
    base = data.points["stage"].to_numpy() == 0
    c, n = g.sum().to_numpy()[base], g.size().to_numpy()[base]
    ubar = c.sum() / n.sum()
    np.testing.assert_allclose(a.control.upper[base], ubar + 3 * np.sqrt(ubar / n), rtol=1e-9)


def test_an_xmr_chart_asked_for_is_drawn_on_period_means(tmp_path):
    folder = write_project(tmp_path, "x", 2000, extra='chart = "xmr"')
    data = loaded(folder)
    assert (data.kind, data.by_period.how) == ("continuous", "mean")
    raw = pd.read_csv(folder / "m.csv", parse_dates=["t"])
    np.testing.assert_allclose(
        data.points["value"], raw.groupby(raw["t"].dt.normalize())["v"].mean(), rtol=1e-12
    )
    assert analyse(data).choice.kind == "xmr"


def test_the_users_own_rollup_wins(tmp_path):
    # 700 days of data rolled up by day by the user: 700 points, drawn as asked
    folder = write_project(
        tmp_path,
        "r",
        3000,
        minutes=700 * 24 * 60,
        extra='[metric.rollup]\nperiod = "day"\nstatistic = "median"',
    )
    data = loaded(folder)
    assert data.by_period is None and len(data.points) > DRAWN_POINTS_MAX
    doc = json.loads(build(folder)["results.json"])
    assert doc["metrics"][0]["drawn_by_period"] is None


def test_few_points_are_drawn_one_by_one(tmp_path):
    folder = write_project(tmp_path, "s", DRAWN_POINTS_MAX)
    data = loaded(folder)
    assert data.by_period is None and len(data.points) == DRAWN_POINTS_MAX


# ---------------------------------------------------------------------------- the weight


@pytest.mark.slow
def test_200000_rows_without_rollup_state_their_periods_and_stay_light(tmp_path):
    small = build(write_project(tmp_path, "small", 1000))
    big = build(write_project(tmp_path, "big", 200_000))
    doc = json.loads(big["results.json"])
    assert doc["schema"] == RESULTS_SCHEMA == "steadyline-results/3"
    drawn = doc["metrics"][0]["drawn_by_period"]
    assert drawn["period"] == "day" and drawn["points"] == 200_000
    assert drawn["periods"] == len(doc["metrics"][0]["points"]["value"]) <= DRAWN_POINTS_MAX
    page, said = big["index.html"].decode(), str(escape(drawn["reason"]))
    assert page.count(said) == 2  # said on the cards of the run and control charts
    assert said in big["history.html"].decode()
    assert "drawn by day" in page  # and where the page says what the data are
    box = doc["metrics"][0]["box_plot"]
    assert len(box["outlier_values"]) == 200 and box["outliers_left_out"] > 0
    ws, wb = weight(small), weight(big)
    for key in ws:
        assert wb[key] <= 3 * ws[key], (key, wb[key], ws[key])
    # the charts drawn by period compile and draw (vl-convert raises on a broken spec)
    vlc.vegalite_to_scenegraph(json.loads(big["data/m-control.vl.json"]))
    for name in ("data/m-run.vl.json", "data/history-m-staged-control.vl.json"):
        vlc.vegalite_to_vega(json.loads(big[name]))


@pytest.mark.parametrize("kind", ["continuous", "defectives", "defects"])
def test_weight_at_100000_rows_is_near_that_at_1000(tmp_path, kind):
    small = weight(build(write_project(tmp_path, "small", 1000, kind)))
    big = weight(build(write_project(tmp_path, "big", 100_000, kind)))
    ratios = {k: big[k] / small[k] for k in small if small[k]}
    # the same number of points (one a day); what grows is the digits of each figure (a day
    # of 3 rows gives 2.5, one of 300 gives 2.0481927710843375) and the histogram's bins
    assert max(ratios.values()) <= 3.0, ratios


def test_box_plot_outliers_are_capped_at_the_most_extreme(tmp_path):
    folder = write_project(tmp_path, "o", 20_000)
    doc = json.loads(build(folder)["results.json"])
    box = doc["metrics"][0]["box_plot"]
    raw = pd.read_csv(folder / "m.csv", parse_dates=["t"])
    base = raw.loc[raw["t"] < "2026-05-01", "v"].to_numpy()
    # Tukey fences from numpy's quartiles (type 7, numpy's default)
    q1, q3 = np.percentile(base, [25, 75])
    out = np.sort(base[(base < q1 - 1.5 * (q3 - q1)) | (base > q3 + 1.5 * (q3 - q1))])
    assert len(out) > 200
    assert box["outliers_left_out"] == len(out) - 200
    np.testing.assert_allclose(
        sorted(box["outlier_values"]), np.concatenate([out[:100], out[-100:]]), rtol=1e-9
    )
    far = (base < q1 - 3 * (q3 - q1)) | (base > q3 + 3 * (q3 - q1))
    assert len(box["far_out_indices"]) + box["far_out_left_out"] == int(far.sum())


def test_free_text_categories_are_capped_in_results(tmp_path):
    folder = tmp_path / "cats"
    folder.mkdir()
    rng = np.random.default_rng(5)
    n = 6000
    t = _times(rng, n).dt.strftime("%Y-%m-%dT%H:%M")
    reasons = [f"reason {k}" for k in rng.zipf(1.3, n)]  # a long tail of distinct texts
    pd.DataFrame({"t": t, "c": reasons}).to_csv(folder / "m.csv", index=False)
    (folder / "project.toml").write_text(
        """title = "Reasons"
owner = "Someone"
phase = "measure"
problem = "Many reasons."

[comparison]
baseline = [2026-01-05, 2026-04-30]
after = [2026-06-01]

[[metric]]
id = "m"
name = "Reasons"
file = "m.csv"
type = "categories"
time = "t"
category = "c"
better = "lower"
""",
        "utf-8",
    )
    doc = json.loads(build(folder)["results.json"])
    # the project page's Pareto counts the baseline's rows (scope "baseline"): pandas' own
    # count of those rows is the outside tally
    when = pd.to_datetime(pd.Series(t))
    base = pd.Series(reasons)[(when >= "2026-01-05") & (when < "2026-05-01")]
    tally = base.value_counts()
    assert len(tally) > 400
    p = doc["metrics"][0]["pareto"]
    assert p["scope"] == "baseline"
    assert len(p["categories"]) == len(p["counts"]) == len(p["cumulative_percent"]) == 200
    assert p["categories_left_out"] == len(tally) - 200
    assert p["total"] == len(base) and sum(p["counts"]) + p["count_left_out"] == len(base)
    assert p["counts"][:5] == tally.iloc[:5].tolist()
    col = doc["metrics"][0]["column_chart"]
    assert col["categories"] == sorted(p["categories"], key=str.casefold)
    assert (col["categories_left_out"], col["count_left_out"]) == (
        p["categories_left_out"],
        p["count_left_out"],
    )
    for period in doc["history"][0]["paretos"].values():
        assert len(period["categories"]) <= 200
        assert sum(period["counts"]) + period["count_left_out"] == period["total"]
