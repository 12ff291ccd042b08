"""Hand-built statistics results for the chart tests (the chart package only reads them)."""

from __future__ import annotations

import numpy as np

from steadyline.charts import SeriesContext
from steadyline.stats import appraiser_ranges, gauge_study
from steadyline.stats.results import (
    BoxSummary,
    ControlChart,
    Histogram,
    Pareto,
    RunChartAnalysis,
    Signal,
)

N = 30


def weekly_dates(n: int) -> tuple[str, ...]:
    days = np.datetime64("2026-01-05") + 7 * np.arange(n)
    return tuple(str(d) for d in days)


def make_ctx(n: int = N, *, time: bool = True, events=(("2026-03-30", "new intake form"),)):
    stage = tuple("Baseline" if i < 20 else "After" for i in range(n))
    segment = tuple(0 if i < 12 else 1 for i in range(n))
    x = weekly_dates(n) if time else tuple(f"Lot {i + 1}" for i in range(n))
    return SeriesContext(
        x=x,
        x_is_time=time,
        stage=stage,
        segment=segment,
        unit="hours",
        metric_name="Lead time",
        events=events if time else (),
    )


def make_values(n: int = N) -> np.ndarray:
    rng = np.random.default_rng(7)
    v = rng.normal(30.0, 4.0, n)
    if n > 25:
        v[5] = np.nan  # a missing week
        v[25] = 52.0
    return v


def make_individuals(n: int = N, *, secondary: bool = True) -> ControlChart:
    v = make_values(n)
    centre = np.full(n, 30.0)
    upper = np.full(n, 44.4)
    lower = np.full(n, 15.6)
    lower[20:] = np.nan  # no LCL after the change: nothing may be drawn there
    fitted = np.arange(n) < 20
    sec = None
    if secondary:
        mr = np.abs(np.diff(v))
        sec = ControlChart(
            kind="moving-range",
            label="Moving range (mR)",
            values=mr,
            centre=np.full(n - 1, 5.4),
            lower=np.zeros(n - 1),
            upper=np.full(n - 1, 17.6),
            sigma=np.full(n - 1, np.nan),
            process_sigma=None,
            sigma_method="",
            fitted=fitted[1:],
            stage=np.zeros(n - 1, dtype=int),
        )
    return ControlChart(
        kind="individuals",
        label="Individuals (X)",
        values=v,
        centre=centre,
        lower=lower,
        upper=upper,
        sigma=np.full(n, 4.8),
        process_sigma=4.8,
        sigma_method="average moving range / d2(2)",
        fitted=fitted,
        stage=(np.arange(n) >= 20).astype(int),
        secondary=sec,
    )


def make_individuals_per_period(n: int = N) -> ControlChart:
    """The same values with limits of their own for the after period (points 20 on)."""
    base = make_individuals(n)
    after = np.arange(n) >= 20
    centre = np.where(after, 31.0, 30.0)
    upper = np.where(after, 41.0, 44.4)
    lower = np.where(after, 21.0, 15.6)
    sec = base.secondary
    sec_after = after[1:]
    own_sec = ControlChart(
        kind=sec.kind,
        label=sec.label,
        values=sec.values,
        centre=np.where(sec_after, 3.8, 5.4),
        lower=np.zeros(n - 1),
        upper=np.where(sec_after, 12.3, 17.6),
        sigma=sec.sigma,
        process_sigma=None,
        sigma_method="",
        fitted=np.ones(n - 1, dtype=bool),
        stage=sec_after.astype(int),
    )
    return ControlChart(
        kind=base.kind,
        label=base.label,
        values=base.values,
        centre=centre,
        lower=lower,
        upper=upper,
        sigma=base.sigma,
        process_sigma=base.process_sigma,
        sigma_method=base.sigma_method,
        fitted=np.ones(n, dtype=bool),
        stage=after.astype(int),
        secondary=own_sec,
    )


def make_p_chart(n: int = N) -> ControlChart:
    sizes = np.array([50 + 10 * (i % 4) for i in range(n)], dtype=float)
    pbar = 0.12
    sd = np.sqrt(pbar * (1 - pbar) / sizes)
    rng = np.random.default_rng(3)
    p = rng.binomial(sizes.astype(int), pbar) / sizes
    return ControlChart(
        kind="p",
        label="Proportion (p)",
        values=p,
        centre=np.full(n, pbar),
        lower=np.maximum(pbar - 3 * sd, 0.0),
        upper=pbar + 3 * sd,
        sigma=sd,
        process_sigma=None,
        sigma_method="binomial, per subgroup size",
        fitted=np.ones(n, dtype=bool),
        stage=np.zeros(n, dtype=int),
        sizes=sizes,
    )


MAIN_SIGNALS = (
    Signal("beyond-limits", "beyond the 3σ limits", (25,), "above"),
    Signal("long-run-one-side", "8 in a row on one side of the centre line", tuple(range(8, 16))),
    Signal(
        "beyond-limits", "beyond the upper limit of the moving range", (24,), "above", "secondary"
    ),
)


def make_run_analysis(n: int = N) -> RunChartAnalysis:
    return RunChartAnalysis(
        rule_set="anhoj",
        median=31.24,
        n=n,
        n_useful=n - 1,
        longest_run=9,
        longest_run_limit=8,
        crossings=8,
        crossings_limit=10,
        runs=9,
        runs_limits=None,
        signals=(
            Signal("long-run", "a run of 9 on one side of the median", tuple(range(20, 29))),
            Signal("few-crossings", "fewer crossings of the median than expected", tuple(range(n))),
        ),
    )


def make_histogram() -> Histogram:
    return Histogram(
        rule="fd",
        rule_label="Freedman–Diaconis",
        edges=(10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0),
        counts=(2, 8, 15, 12, 5, 1),
        bin_width=5.0,
        n=43,
        mean=23.5,
        std=6.2,
        below_range=1,
    )


LABEL7 = "Hyndman & Fan type 7 (linear interpolation)"


def make_boxes() -> list[tuple[str, BoxSummary]]:
    b1 = BoxSummary(
        method="linear",
        method_label=LABEL7,
        n=40,
        mean=25.0,
        q1=17.0,
        median=22.0,
        q3=27.0,
        iqr=10.0,
        lower_fence=2.0,
        upper_fence=42.0,
        whisker_low=9.0,
        whisker_high=41.0,
        outlier_indices=(3, 7, 9),
        outlier_values=(1.0, 44.0, 60.0),
        far_out_indices=(9,),
        minimum=1.0,
        maximum=60.0,
    )
    b2 = BoxSummary(
        method="linear",
        method_label=LABEL7,
        n=30,
        mean=20.0,
        q1=15.0,
        median=19.0,
        q3=22.0,
        iqr=7.0,
        lower_fence=4.5,
        upper_fence=32.5,
        whisker_low=10.0,
        whisker_high=30.0,
        outlier_indices=(),
        outlier_values=(),
        far_out_indices=(),
        minimum=10.0,
        maximum=30.0,
    )
    return [("Baseline", b1), ("After", b2)]


def make_pareto() -> Pareto:
    return Pareto(
        categories=("Missing part", "Wrong label", "Damaged", "Late", "other"),
        counts=(50.0, 30.0, 10.0, 6.0, 4.0),
        percent=(50.0, 30.0, 10.0, 6.0, 4.0),
        cumulative_percent=(50.0, 80.0, 90.0, 96.0, 100.0),
        total=100.0,
        vital_few=("Missing part", "Wrong label"),
    )


def make_pareto_after() -> Pareto:
    return Pareto(
        categories=("Wrong label", "Missing part", "Scratched", "Damaged"),
        counts=(20.0, 10.0, 8.0, 2.0),
        percent=(50.0, 25.0, 20.0, 5.0),
        cumulative_percent=(50.0, 75.0, 95.0, 100.0),
        total=40.0,
        vital_few=("Wrong label", "Missing part", "Scratched"),
    )


# ------------------------------------------------------------------------------------------------
# Walking a Vega-Lite spec
# ------------------------------------------------------------------------------------------------

_CHANNEL_SKIP = {"tooltip"}


def _field_defs(encoding: dict):
    for channel, d in encoding.items():
        defs = d if isinstance(d, list) else [d]
        for fd in defs:
            if not isinstance(fd, dict):
                continue
            if "field" in fd:
                yield channel, fd["field"]
            cond = fd.get("condition")
            for c in cond if isinstance(cond, list) else [cond]:
                if isinstance(c, dict) and "field" in c:
                    yield channel, c["field"]


def unit_views(spec: dict, data_name: str | None = None):
    """Every unit view (one with a mark) with the name of the dataset it draws from."""
    if isinstance(spec.get("data"), dict) and "name" in spec["data"]:
        data_name = spec["data"]["name"]
    if "mark" in spec:
        yield spec, data_name
    for key in ("layer", "vconcat", "hconcat", "concat"):
        for sub in spec.get(key, []):
            yield from unit_views(sub, data_name)


_OPTIONAL_LOOKUP_FIELDS = {"signals"}


def _kept(row: dict, transforms: list) -> bool:
    """Whether a row passes the view's validity filters ({"filter": {"field", "valid": true}})."""
    for t in transforms:
        f = t.get("filter")
        if isinstance(f, dict) and f.get("valid") is True and row.get(f["field"]) is None:
            return False
    return True


def missing_fields(spec: dict) -> list[str]:
    """Fields used by an encoding but absent from a row of its dataset, and datasets used but
    not given (vl-convert only warns about both and draws an empty chart). Rows dropped by a
    validity filter are skipped; fields from a lookup must be in every row of the looked-up
    dataset, and its key in every row of both."""
    problems = []
    datasets = spec.get("datasets", {})
    for view, name in unit_views(spec):
        if name is None:
            problems.append(f"a {view['mark']} view has no data")
            continue
        if name not in datasets:
            problems.append(f"dataset {name!r} is used but not given")
            continue
        transforms = view.get("transform", [])
        rows = [r for r in datasets[name] if _kept(r, transforms)]
        computed = {t["as"] for t in transforms if "as" in t}
        for t in transforms:
            if "lookup" not in t:
                continue
            src = t["from"]["data"]["name"]
            if src not in datasets:
                problems.append(f"lookup dataset {src!r} is used but not given")
                continue
            for r in rows:
                if t["lookup"] not in r:
                    problems.append(f"{name}: row without lookup key {t['lookup']!r}")
                    break
            keys = {r.get(t["from"]["key"]) for r in datasets[src]}
            if not {r[t["lookup"]] for r in rows if t["lookup"] in r} <= keys:
                problems.append(f"{name}: lookup key {t['lookup']!r} not found in {src!r}")
            for f in t["from"]["fields"]:
                # may be left out of single rows; only "signals" may be absent from all of them
                # (a chart without signals: the views read a missing one as none)
                if (
                    f not in _OPTIONAL_LOOKUP_FIELDS
                    and datasets[src]
                    and all(f not in r for r in datasets[src])
                ):
                    problems.append(f"{src}: no row has the looked-up field {f!r}")
                computed.add(f)
        for channel, field in _field_defs(view.get("encoding", {})):
            if field in computed:
                continue
            for row in rows:
                if field not in row:
                    problems.append(f"{name}: row without field {field!r} ({channel})")
                    break
    return problems


def resolved_points(spec: dict, suffix: str = "", prefix: str = "") -> list[dict]:
    """The points of a series chart as its point view sees them (after its validity filter,
    lookup and calculations), with readable names: label, value, line, stage, info, fitted,
    marker, signals, and on the staged chart own (the diamond beneath). Mirrors the
    transforms written by charts.series."""
    from steadyline.charts.series.marks import MARK_ORDINARY, MARK_SIGNAL

    d = spec["datasets"]
    info = {r["k"]: r for r in d[f"{prefix}point_info"]}
    limits = {r["i"]: r["info"] for r in d.get("limit_info", [])}
    out = []
    for r in d[f"{prefix}points"]:
        v = r.get(f"v{suffix}")
        if v is None:
            continue
        k = info[r[f"k{suffix}"]]
        sig = k.get("signals")
        row = {
            "x": r["x"],
            "label": r.get("label", r["x"]),
            "value": v,
            "line": r[f"g{suffix}"],
            "stage": k["stage"],
            "marker": MARK_SIGNAL if sig else MARK_ORDINARY,
            "signals": sig or "",
        }
        if "mark" in k:  # the staged chart: the mark by evidence, the diamond beneath by "own"
            row["marker"] = k["mark"] or MARK_ORDINARY
            row["own"] = k["own"]
        if "fitted" in k:
            row["fitted"] = k["fitted"]
        if f"i{suffix}" in r:
            row["info"] = limits[r[f"i{suffix}"]]
        out.append(row)
    return out


def limit_pieces(spec: dict, kind: str, name: str = "limits") -> list[list[tuple]]:
    """A limit's step line as drawn: per piece the path [(x, y), ...] of its "step-after"
    vertices, vertical steps included (each vertex holds its y until the next one's x)."""
    d = spec["datasets"]
    parts = {r["p"]: r for r in d["limit_parts"]}
    by_part: dict = {}
    for r in d[name]:
        if parts[r["p"]]["kind"] == kind:
            by_part.setdefault(r["p"], []).append((r["x"], r["y"]))
    out = []
    for verts in by_part.values():
        path = [verts[0]]
        for (_, y0), (x1, y1) in zip(verts, verts[1:], strict=False):
            for pt in ((x1, y0), (x1, y1)):
                if pt != path[-1]:
                    path.append(pt)
        out.append(path)
    return out


def datasets_without_rows(spec: dict) -> set[str]:
    return {k for k, v in spec.get("datasets", {}).items() if not v}


def walk_values(node):
    """Every scalar in a JSON-like tree."""
    if isinstance(node, dict):
        for v in node.values():
            yield from walk_values(v)
    elif isinstance(node, list | tuple):
        for v in node:
            yield from walk_values(v)
    else:
        yield node


def all_chart_specs():
    """One spec of every display and variant, for the compile / render / JSON checks."""
    from steadyline import charts

    ctx = make_ctx()
    ctx_labels = make_ctx(time=False)
    out = [
        ("run-chart time", charts.run_chart(ctx, make_values(), make_run_analysis())),
        ("run-chart labels", charts.run_chart(ctx_labels, make_values(), make_run_analysis())),
        ("control-chart X-mR", charts.control_chart(ctx, make_individuals(), MAIN_SIGNALS)),
        (
            "control-chart labels",
            charts.control_chart(ctx_labels, make_individuals(), MAIN_SIGNALS),
        ),
        ("control-chart p", charts.control_chart(ctx, make_p_chart(), ())),
        (
            "histogram curve",
            charts.histogram_chart(
                make_histogram(), unit="hours", lsl=12, usl=38, target=24, normal_curve=True
            ),
        ),
        ("histogram plain", charts.histogram_chart(make_histogram(), unit="hours")),
        ("box-plot", charts.box_chart(make_boxes(), unit="hours")),
        ("column-chart", charts.column_chart(["Mon", "Tue", "Wed"], [5, 0, 12], unit="orders")),
        ("pareto", charts.pareto_chart(make_pareto())),
        (
            "staged-control-chart own",
            charts.staged_control_chart(
                ctx, make_individuals(), make_individuals_per_period(), MAIN_SIGNALS
            ),
        ),
        (
            "staged-control-chart carried",
            charts.staged_control_chart(ctx, make_individuals(), None, MAIN_SIGNALS),
        ),
        (
            "staged-control-chart labels",
            charts.staged_control_chart(
                ctx_labels, make_individuals(), make_individuals_per_period(), MAIN_SIGNALS
            ),
        ),
        (
            "pareto-by-period",
            charts.period_pareto_chart(
                [("Baseline", make_pareto()), ("After", make_pareto_after())]
            ),
        ),
    ]
    values, parts, appraisers = make_study_rows()
    study = gauge_study(values, parts, appraisers, lsl=110, usl=130)
    out += [
        ("study-components tolerance", charts.components_chart(study, values_text="a study")),
        (
            "study-components no tolerance",
            charts.components_chart(gauge_study(values, parts, appraisers)),
        ),
        (
            "study-ranges",
            charts.ranges_chart(
                appraiser_ranges(values, parts, appraisers),
                trials=3,
                unit="kgf",
                measure="Spoke tension",
            ),
        ),
        (
            "study-measurements",
            charts.measurements_chart(
                values, parts, appraisers, unit="kgf", measure="Spoke tension"
            ),
        ),
    ]
    return out


def make_study_rows():
    """A crossed study of 10 parts × 3 appraisers × 3 trials (seeded), one reading far off so
    that a range stands above its limit; an appraiser named like an inherited property, which
    the charts must show as a name (see charts.categorical)."""
    rng = np.random.default_rng(11)
    part = rng.normal(0, 2, 10)
    names = ["Ana", "constructor", "__proto__"]
    values, parts, appraisers = [], [], []
    for k in range(3):
        for j, who in enumerate(names):
            for i in range(10):
                values.append(
                    120
                    + part[i]
                    + 0.3 * j
                    + rng.normal(0, 0.4)
                    + (3 if (i, j, k) == (5, 0, 1) else 0)
                )
                parts.append(f"W{i + 1}")
                appraisers.append(who)
    return values, parts, appraisers


def run_fresh(code: str, **env_extra: str) -> str:
    """Run *code* in a fresh Python process (with src/ and this folder importable, the
    folder passed as sys.argv[1]); returns what it printed."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    here = Path(__file__).resolve().parent
    env = dict(os.environ, **env_extra)
    env["PYTHONPATH"] = str(here.parents[1] / "src") + os.pathsep + env.get("PYTHONPATH", "")
    return subprocess.run(
        [sys.executable, "-c", code, str(here)],
        env=env,
        capture_output=True,
        text=True,
        timeout=120,
        check=True,
    ).stdout
