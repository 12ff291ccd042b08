"""Fuzzing: generated CSV text, metadata and arrays never raise anything but our own errors.

Every outcome of the loader is a MetricData or a ProjectError; of the statistics a result or a
StatsError; of the analysis (which turns StatsError into sentences) a result. Any other
exception is a bug. Example counts stay modest so that the suite stays fast.
"""

from __future__ import annotations

import datetime as dt
import json
import tempfile
from pathlib import Path

import numpy as np
import pytest
from corpus.kit import PAYLOADS, meta
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from steadyline import stats
from steadyline.analysis.process import analyse
from steadyline.config import PortfolioSettings, load_portfolio, load_project
from steadyline.errors import Problem, ProjectError
from steadyline.loading.metric import load_metric
from steadyline.stats.results import StatsError

FAST = settings(
    max_examples=80,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)

# ------------------------------------------------------------------------------ CSV cells

dates_iso = st.dates(dt.date(2025, 1, 1), dt.date(2027, 12, 31)).map(dt.date.isoformat)
datetimes_iso = st.datetimes(dt.datetime(2025, 1, 1), dt.datetime(2027, 12, 31)).map(
    lambda d: d.isoformat(timespec="minutes")
)
offsets = st.sampled_from(["Z", "+01:00", "-05:00", "+0530", ""])
odd_dates = st.sampled_from(
    [
        "2026-02-30",
        "31/12/2026",
        "9999-12-31",
        "0001-01-01",
        "44927",
        "2026-13-01",
        "2026-01-01T25:00",
        "1e9",
        "NaT",
        "today",
        "2026",
        "2026-W05",
        "2026-01-01 10:00:00.123456789+14:00",
    ]
)
numbers = st.floats(allow_nan=True, allow_infinity=True).map(repr)
ints = st.integers(-(10**20), 10**20).map(str)
odd_numbers = st.sampled_from(
    [
        "",
        " ",
        "NaN",
        "inf",
        "-inf",
        "1,5",
        "1.234,5",
        "1e999",
        "-0",
        "+3",
        ".5",
        "5.",
        "0x10",
        "1_000",
        "١٢",
        "½",
        "--1",
        "1e",
        "e5",
    ]
)
junk = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=12)
cells = st.one_of(
    dates_iso,
    st.tuples(datetimes_iso, offsets).map("".join),
    odd_dates,
    numbers,
    ints,
    odd_numbers,
    junk,
    st.sampled_from(PAYLOADS),
)


def _quote(cell: str, sep: str) -> str:
    if any(c in cell for c in (sep, '"', "\n", "\r")):
        return '"' + cell.replace('"', '""') + '"'
    return cell


@st.composite
def csv_text(draw, header: list[str], sep: str = ","):
    n = draw(st.integers(0, 25))
    rows = []
    for _ in range(n):
        width = draw(st.sampled_from([len(header)] * 8 + [len(header) - 1, len(header) + 1]))
        row = [draw(cells) for _ in range(max(width, 0))]
        if draw(st.booleans()):
            rows.append(sep.join(_quote(c, sep) for c in row))
        else:  # written carelessly: unquoted, may break the row
            rows.append(sep.join(row))
    head = sep.join(header) if draw(st.integers(0, 9)) else draw(junk)
    text = "\n".join([head] + rows) + draw(st.sampled_from(["", "\n", "\r\n"]))
    return text


def _encode(text: str, how: str) -> bytes:
    if how == "bom":
        return b"\xef\xbb\xbf" + text.encode("utf-8", "surrogatepass")
    if how == "latin-1":
        return text.encode("latin-1", "replace")
    return text.encode("utf-8", "surrogatepass")


METRICS = {
    "continuous": ({}, ["date", "value"]),
    "rollup": ({"__rollup": {"period": "week", "statistic": "median"}}, ["date", "value"]),
    "subgroups": ({"type": "subgroups", "subgroup": "batch"}, ["date", "batch", "value"]),
    "subgroup-size": ({"type": "subgroups", "subgroup_size": 3}, ["date", "value"]),
    "defectives": (
        {"type": "defectives", "value": None, "count": "bad", "size": "n"},
        ["date", "bad", "n"],
    ),
    "flags": (
        {
            "type": "defectives",
            "value": "ok",
            "__rollup": {"period": "month", "statistic": "proportion"},
        },
        ["date", "ok"],
    ),
    "defects": (
        {"type": "defects", "value": None, "count": "bad", "size": "n"},
        ["date", "bad", "n"],
    ),
    "categories": (
        {"type": "categories", "time": None, "value": None, "category": "reason", "count": "n"},
        ["reason", "n"],
    ),
}


def _load_and_analyse(
    kind: str, raw: bytes, csv_opts: dict, max_mb: float = 200.0, raise_errors: bool = False
):
    metric, _ = METRICS[kind]
    metric = dict(metric)
    rollup = metric.pop("__rollup", None)
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "p").mkdir()
        (root / "p" / "project.toml").write_text(
            meta(metric=metric, rollup=rollup, csv=csv_opts or None), encoding="utf-8"
        )
        (root / "p" / "data.csv").write_bytes(raw)
        settings_ = PortfolioSettings(max_file_mb=max_mb)
        spec, _ = load_project(root / "p", root, settings_)
        try:
            data = load_metric(spec.metrics[0], settings_)
        except ProjectError as e:
            if raise_errors:
                raise
            assert e.problems and all(isinstance(p, Problem) for p in e.problems)
            assert any(p.severity == "error" for p in e.problems)
            for p in e.problems:
                assert p.format().startswith("p/data.csv")
            return None
        result = analyse(data)  # StatsError becomes a sentence inside; nothing else may escape
        for _display, sentence in result.failures:
            assert isinstance(sentence, str) and sentence
        return result


@FAST
@given(
    data=st.data(),
    kind=st.sampled_from(sorted(METRICS)),
    enc=st.sampled_from(["utf-8", "bom", "latin-1"]),
)
def test_loader_and_analysis_on_generated_csv(data, kind, enc):
    _, header = METRICS[kind]
    text = data.draw(csv_text(header))
    opts = {"encoding": "latin-1"} if enc == "latin-1" and data.draw(st.booleans()) else {}
    _load_and_analyse(kind, _encode(text, enc), opts)


@FAST
@given(data=st.data(), kind=st.sampled_from(["continuous", "defectives", "categories"]))
def test_loader_with_semicolons_and_decimal_commas(data, kind):
    _, header = METRICS[kind]
    text = data.draw(csv_text(header, sep=";"))
    tz = data.draw(st.sampled_from([None, "Europe/Berlin", "UTC", "America/New_York"]))
    fmt = data.draw(st.sampled_from([None, "%d.%m.%Y", "%Y-%m-%dT%H:%M%z", "%H"]))
    opts = (
        {"delimiter": ";", "decimal": ","}
        | ({"timezone": tz} if tz else {})
        | ({"date_format": fmt} if fmt else {})
    )
    _load_and_analyse(kind, text.encode("utf-8", "surrogatepass"), opts)


@settings(max_examples=60, deadline=None)
@given(raw=st.binary(max_size=400), kind=st.sampled_from(["continuous", "categories"]))
def test_loader_on_arbitrary_bytes(raw, kind):
    _load_and_analyse(kind, raw, {})


@settings(max_examples=30, deadline=None)
@given(values=st.lists(st.floats(-1e6, 1e6), min_size=1, max_size=40))
def test_valid_numbers_always_load(values):
    text = "date,value\n" + "".join(
        f"2026-01-{i % 28 + 1:02d}T{i // 28:02d}:00,{v!r}\n" for i, v in enumerate(values)
    )
    result = _load_and_analyse("continuous", text.encode(), {})
    assert result is not None
    np.testing.assert_array_equal(
        np.sort(result.data.points["value"].to_numpy()), np.sort(np.array(values))
    )


# ------------------------------------------------------------------------------ metadata

toml_scalars = st.one_of(
    st.text(max_size=10),
    st.integers(-5, 10**6),
    st.floats(allow_nan=False),
    st.booleans(),
    st.dates(dt.date(1, 1, 1), dt.date(9999, 12, 31)),
)
KEYS = [
    "title",
    "owner",
    "phase",
    "problem",
    "tags",
    "notes",
    "safety_related",
    "id",
    "name",
    "file",
    "type",
    "time",
    "value",
    "subgroup",
    "subgroup_size",
    "count",
    "size",
    "category",
    "better",
    "spec_lower",
    "spec_upper",
    "target",
    "headline",
    "chart",
    "limits",
    "bins",
    "baseline",
    "after",
    "quartiles",
    "signal_rules",
    "run_rules",
    "delimiter",
    "decimal",
    "encoding",
    "timezone",
    "date_format",
    "period",
    "statistic",
    "ownr",
    "valeu",
]
GOOD = {
    "phase": ["define", "improve", "contol"],
    "type": ["continuous", "defects", "subgroups", "categories", "continous"],
    "better": ["lower", "target"],
    "file": ["data.csv", "../x.csv", "/etc/passwd", ""],
    "chart": ["auto", "laney-p", "xbar-r", "pp"],
}


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, dt.date):
        return v.isoformat()
    if isinstance(v, float):
        return repr(v) if np.isfinite(v) else ("inf" if v > 0 else "-inf")
    if isinstance(v, int):
        return str(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    return json.dumps(v)


@st.composite
def tables(draw):
    def value(key):
        if key in GOOD and draw(st.booleans()):
            return draw(st.sampled_from(GOOD[key]))
        return draw(st.one_of(toml_scalars, st.lists(toml_scalars, max_size=3)))

    top = {k: value(k) for k in draw(st.lists(st.sampled_from(KEYS), max_size=8, unique=True))}
    metrics = [
        {k: value(k) for k in draw(st.lists(st.sampled_from(KEYS), max_size=14, unique=True))}
        for _ in range(draw(st.integers(0, 3)))
    ]
    subs = draw(
        st.lists(
            st.sampled_from(["rollup", "csv", "phase_dates", "comparison"]), max_size=2, unique=True
        )
    )
    return (
        top,
        metrics,
        subs,
        {k: value(k) for k in draw(st.lists(st.sampled_from(KEYS), max_size=3, unique=True))},
    )


def _render(top, metrics, subs, sub) -> str:
    lines = [f"{k} = {_toml_value(v)}" for k, v in top.items()]
    for name in subs:
        if name in ("phase_dates", "comparison"):
            lines += [f"[{name}]"] + [f"{k} = {_toml_value(v)}" for k, v in sub.items()]
    for m in metrics:
        lines += ["[[metric]]"] + [f"{k} = {_toml_value(v)}" for k, v in m.items()]
        for name in subs:
            if name in ("rollup", "csv"):
                lines += [f"[metric.{name}]"] + [f"{k} = {_toml_value(v)}" for k, v in sub.items()]
    return "\n".join(lines) + "\n"


@settings(max_examples=150, deadline=None)
@given(t=tables(), as_portfolio=st.booleans())
def test_generated_metadata(t, as_portfolio):
    text = _render(*t)
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "p").mkdir()
        (root / "p" / "data.csv").write_text("date,value\n2026-01-05,1\n2026-01-06,2\n")
        if as_portfolio:
            (root / "portfolio.toml").write_text(text, encoding="utf-8")
            settings_, problems = load_portfolio(root)
            assert isinstance(settings_, PortfolioSettings)
            assert settings_.max_file_mb > 0
            assert all(isinstance(p, Problem) for p in problems)
            return
        (root / "p" / "project.toml").write_text(text, encoding="utf-8")
        try:
            spec, warnings = load_project(root / "p", root)
        except ProjectError as e:
            assert e.problems
            for p in e.problems:
                assert p.format().startswith("p/project.toml"), p.format()
            return
        assert spec.metrics and spec.title
        for m in spec.metrics:
            assert m.file.resolve().is_relative_to((root / "p").resolve())


@settings(max_examples=80, deadline=None)
@given(text=st.text(max_size=300))
def test_arbitrary_text_as_metadata(text):
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "p").mkdir()
        (root / "p" / "project.toml").write_text(text, encoding="utf-8", errors="surrogatepass")
        try:
            load_project(root / "p", root)
        except ProjectError as e:
            assert e.problems


# ------------------------------------------------------------------------------ statistics

# Magnitudes up to 1e12 (any real measurement); the overflow beyond is pinned in its own test.
arrays = st.lists(
    st.one_of(
        st.floats(-1e12, 1e12),
        st.sampled_from([np.nan, np.inf, -np.inf]),
        st.floats(-1e3, 1e3),
        st.just(0.0),
        st.just(5.0),
    ),
    min_size=0,
    max_size=30,
)


def _ours(fn, *args, **kwargs):
    try:
        return fn(*args, **kwargs)
    except StatsError as e:
        assert str(e)
        return None


@settings(max_examples=120, deadline=None)
@given(
    values=arrays,
    rules=st.sampled_from(["western-electric", "nelson"]),
    runs=st.sampled_from(["anhoj", "perla"]),
    limits=st.sampled_from(["baseline", "per-period"]),
    split=st.integers(0, 30),
)
def test_continuous_statistics(values, rules, runs, limits, split):
    stage = np.array([0 if i < split else 1 for i in range(len(values))], dtype=int)
    chart = _ours(stats.individuals, values, stage=stage, limits=limits)
    if chart is not None:
        _ours(stats.detect_signals, chart, rules)
    _ours(stats.analyse_runs, values, runs)
    _ours(stats.box_summary, values)
    _ours(stats.histogram, values, "fd")
    _ours(stats.anderson_darling, values)
    _ours(stats.capability, values, sigma_within=1.0, lsl=-1.0, usl=1.0)
    _ours(stats.compare, values[:split], values[split:], "continuous", better="lower")
    groups = [values[i : i + 3] for i in range(0, len(values), 3)]
    for fn in (stats.xbar_r, stats.xbar_s):
        c = _ours(fn, groups)
        if c is not None:
            _ours(stats.detect_signals, c, rules)


sizes_ = st.one_of(
    st.integers(-1, 60), st.floats(-1e9, 1e9), st.sampled_from([np.nan, np.inf, 0.0, 0.5])
)


@settings(max_examples=120, deadline=None)
@given(
    pairs=st.lists(
        st.tuples(
            st.one_of(st.integers(-2, 60), st.floats(-1e9, 1e9), st.sampled_from([np.nan, np.inf])),
            sizes_,
        ),
        max_size=30,
    )
)
def test_attribute_statistics(pairs):
    counts = [c for c, _ in pairs]
    sizes = [n for _, n in pairs]
    for fn in (stats.p_chart, stats.np_chart, stats.u_chart, stats.laney_p, stats.laney_u):
        c = _ours(fn, counts, sizes)
        if c is not None:
            _ours(stats.detect_signals, c, "nelson")
    _ours(stats.c_chart, counts)
    _ours(stats.choose_chart, "defectives", sizes=sizes, counts=counts)
    half = len(pairs) // 2
    _ours(
        stats.compare,
        counts[:half],
        counts[half:],
        "defectives",
        better="lower",
        baseline_sizes=sizes[:half],
        after_sizes=sizes[half:],
    )


@settings(max_examples=80, deadline=None)
@given(
    cats=st.lists(st.one_of(st.text(max_size=6), st.sampled_from(PAYLOADS)), max_size=30),
    weights=st.lists(st.floats(allow_nan=True, allow_infinity=True), max_size=30),
)
def test_pareto_statistics(cats, weights):
    _ours(stats.pareto, cats)
    _ours(stats.pareto, cats, weights[: len(cats)])


def test_capability_with_huge_values_raises_only_our_error():
    _ours(stats.capability, [0.0, 8.044684757965558e154], sigma_within=1.0, lsl=-1.0, usl=1.0)


def test_compare_with_huge_sizes_raises_only_our_error():
    _ours(
        stats.compare,
        [0.0],
        [0.0, 1.0],
        "defectives",
        better="lower",
        baseline_sizes=[1.1247284486357993e161],
        after_sizes=[3.5991310356345567e162, 1.0],
    )


def test_loader_refuses_absurd_magnitudes():
    text = "date,value\n2026-01-05,1\n2026-01-06,8e154\n2026-01-07,-1e101\n2026-01-08,1e100\n"
    with pytest.raises(ProjectError) as e:
        _load_and_analyse("continuous", text.encode(), {}, raise_errors=True)
    (p,) = e.value.problems
    assert p.line == 3 and "too large (over 1e+100)" in p.message and "lines 3, 4" in p.message
