"""The fast writers give exactly the text of the plain, cell-by-cell ones (reference: json and
markupsafe from the standard stack, and our own one-cell functions)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from markupsafe import escape

from steadyline.site.serialise import dumps, plain
from steadyline.site.tables import _cell, _csv_cells, _csv_field, _html_cells, safe_cell

EDGES = [
    0.0,
    -0.0,
    1.0,
    -1.0,
    12.0,
    999999.5,
    1e15,
    -1e15,
    1e16,
    1e-320,
    3.5e300,
    0.1 + 0.2,
    2.5,
    -3.5,
    float("nan"),
    float("inf"),
    float("-inf"),
    None,
    7,
    -3,
]


def _values(seed: int, n: int = 400) -> list:
    rng = np.random.default_rng(seed)
    floats = rng.normal(0, 10, n) * 10.0 ** rng.integers(-8, 9, n)
    vals = [float(v) for v in floats] + EDGES
    vals += [float(round(v)) for v in floats[:50]]  # whole numbers written as floats
    rng.shuffle(vals)
    return vals


def test_csv_number_columns_match_the_cell_by_cell_writer():
    for seed in range(5):
        col = _values(seed)
        assert _csv_cells(col) == [_csv_field(safe_cell(v)) for v in col]
        # short columns are written cell by cell, long ones in bulk: the same text
        for size in (1, 5, 31, 32, 33, 120):
            assert _csv_cells(col[:size]) == [_csv_field(safe_cell(v)) for v in col[:size]]
            assert _html_cells(col[:size]) == [str(escape(_cell(v))) for v in col[:size]]


def test_csv_number_columns_match_repr_over_the_whole_float_range():
    # reference: Python's repr (shortest round-trip digits) through the one-cell writer
    rng = np.random.default_rng(11)
    for _ in range(50):
        col = (rng.normal(0, 10, 200) * 10.0 ** rng.integers(-30, 30, 200)).tolist()
        col += [1e-5, 1e-4, 0.0001234, 123456789012345.6, 9.999999999999999e15, 1e22, 5e-324]
        assert _csv_cells(col) == [_csv_field(safe_cell(v)) for v in col]


def test_csv_text_columns_match_the_cell_by_cell_writer():
    col = [
        "plain",
        "=1+1",
        "+SUM(A1)",
        "-3.5",
        "a,b",
        'say "hi"',
        "line\nbreak",
        "@cmd",
        None,
        "2026-01-05",
        "",
        "-",
        "\t=1",
    ]
    assert _csv_cells(col) == [_csv_field(safe_cell(v)) for v in col]
    # all-text columns take the bulk check: plain ones, and ones with a cell to quote or guard
    for col in (
        ["2026-01-05", "2026-01-06T10:00Z", "baseline"],
        ["a", "b,c"],
        ["a", "=x"],
        ["a", "-1"],
        ["a", 'q"'],
        ["a", "\rb"],
        [""],
        ["a", "\t=1"],
    ):
        assert _csv_cells(col) == [_csv_field(safe_cell(v)) for v in col]


def test_html_cells_match_autoescaped_cells():
    for seed in range(3):
        col = _values(seed)
        assert _html_cells(col) == [str(escape(_cell(v))) for v in col]
    text = ["<b>", "a & b", "'q'", '"dq"', "plain", "2026-01-05"]
    assert _html_cells(text) == [str(escape(_cell(v))) for v in text]


def test_dumps_matches_plain_json_for_long_float_lists():
    # reference: the standard library's json encoder on the plain() copy, value for value
    for seed in range(3):
        vals = [v for v in _values(seed) if v is None or isinstance(v, float)]
        doc = {
            "a": vals,
            "b": {"c": vals[:40], "d": ["x", 1, 2.5, "é\u2028<"]},
            "e": np.array(vals[:64]),
            "f": [True, False],
            "ü": 2**70,
        }
        reference = json.dumps(
            plain(doc), sort_keys=True, ensure_ascii=False, allow_nan=False, separators=(",", ":")
        )
        text = dumps(doc, indent=None)
        assert json.loads(text) == json.loads(reference)
        assert list(json.loads(text)) == sorted(json.loads(text))  # keys sorted
        assert dumps(doc, indent=None) == text  # deterministic
        back = json.loads(text)
        assert all(x is None or math.isfinite(x) for x in back["a"])


def test_awkward_text_check_matches_the_regular_expression():
    # the substring checks in loading.plain._awkward must agree with the full regular expression
    import random
    import re

    from steadyline.loading.plain import _awkward

    awkward = re.compile(r'"|\n[ \t\r]*\n|^[ \t\r]*\n|\r(?!\n)')  # the full expression

    rng = random.Random(5)
    alphabet = ["a", "1", ",", " ", "\t", "\r", "\n", '"', "\r\n", "\n\n", " \n", "\n \r\n"]
    cases = ["", "a,b\n1,2\n", "\na,b\n", " \na", "a\r\nb\r\n", "a\rb", "a\n \t\nb", "a\n\r\nb"]
    cases += ["".join(rng.choice(alphabet) for _ in range(rng.randint(0, 12))) for _ in range(5000)]
    for text in cases:
        assert _awkward(text) == (awkward.search(text) is not None), repr(text)


def test_plain_reader_strips_cells_like_the_careful_reader():
    # non-breaking and other Unicode spaces around a value are stripped on the fast path too
    from steadyline.loading.plain import _read_plain

    df = _read_plain("t,v\n2026-01-01,\u00a01.5\u2003\n2026-01-02,\x0b2\n", ",")
    assert df is not None
    assert df["v"].tolist() == ["1.5", "2"]


def test_display_rounding_in_bulk_matches_the_text_rounding():
    # reference: float(f"{x:.6g}") (Python's correctly rounded formatting), value by value,
    # over decimal data, 7-digit values ending in 5 (ties) and the whole exponent range
    from steadyline.charts.base.numbers import _round6, _round6_array

    rng = np.random.default_rng(21)
    arrays = [
        rng.normal(0, 1, 3000) * 10.0 ** rng.integers(-30, 30, 3000),
        np.round(rng.normal(20, 3, 3000), 4),
        (rng.integers(1, 10**7, 3000) + 0.5) / 10.0 ** rng.integers(0, 9, 3000),
        rng.integers(-(10**9), 10**9, 3000).astype(float),
        10.0 ** rng.integers(-20, 20, 3000) * (1 + rng.choice([-1e-16, 0, 5e-7], 3000)),
    ]
    for a in arrays:
        a[:6] = [0.0, -0.0, np.nan, np.inf, -np.inf, 1e300]
        got = _round6_array(a)
        want = [None if not math.isfinite(v) else _round6(float(v)) for v in a]
        assert got == want
        assert [type(g) for g in got] == [type(w) for w in want]


def test_vega_bundle_cache_gives_the_bundle_vl_convert_makes(tmp_path, monkeypatch):
    # reference: vl_convert.javascript_bundle() itself
    import vl_convert

    from steadyline.site import assets

    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    assets.vega_bundle.cache_clear()
    first = assets.vega_bundle()  # made and stored
    stored = list((tmp_path / "steadyline").iterdir())
    assert len(stored) == 1 and vl_convert.__version__ in stored[0].name
    assets.vega_bundle.cache_clear()
    assert assets.vega_bundle() == first == vl_convert.javascript_bundle()  # read back
    assets.vega_bundle.cache_clear()


def test_remembered_digests_are_reused_only_for_settled_unchanged_files(tmp_path):
    # reference: hashlib.sha256 of the file's bytes, computed directly
    import hashlib
    import os

    from steadyline.pipeline.inputs import DigestMemo, input_hash

    folder = tmp_path / "p"
    folder.mkdir()
    f = folder / "data.csv"
    f.write_bytes(b"date,value\n2026-01-01,1\n")
    memo_file = tmp_path / "memo.json"
    old = 1_700_000_000_000_000_000  # long before now: a settled file
    os.utime(f, ns=(old, old))
    first = DigestMemo(memo_file)
    assert first.digest(f) == hashlib.sha256(f.read_bytes()).digest()
    first.save()
    # same size, time and inode: the remembered digest is used (the file is not read: a
    # changed content under the old stamp proves it)
    f.write_bytes(b"date,value\n2026-01-01,2\n")
    os.utime(f, ns=(old, old))
    remembered = DigestMemo(memo_file).digest(f)
    assert remembered == bytes.fromhex(first.new[str(f)][4])
    assert remembered != hashlib.sha256(f.read_bytes()).digest()
    # a new modification time: read again
    os.utime(f, ns=(old + 1, old + 1))
    assert DigestMemo(memo_file).digest(f) == hashlib.sha256(f.read_bytes()).digest()
    # a file modified just now is never trusted from the memo, even with its stamp unchanged
    g = folder / "fresh.csv"
    g.write_bytes(b"a\n")
    m = DigestMemo(memo_file)
    m.digest(g)
    m.save()
    g.write_bytes(b"b\n")
    st = g.stat()
    os.utime(g, ns=(st.st_atime_ns, int(m.new[str(g)][1])))
    assert DigestMemo(memo_file).digest(g) == hashlib.sha256(b"b\n").digest()
    # a memo that cannot be read is ignored; the project hash is the same with or without it
    memo_file.write_text("{not json")
    assert input_hash(folder, "x", DigestMemo(memo_file)) == input_hash(folder, "x")


def test_results_rounded_in_one_pass_equal_array_by_array():
    # reference: plain() converting each array on its own (the one-by-one rounding)
    from steadyline.site.serialise import _batched

    rng = np.random.default_rng(4)
    doc = {
        "a": [np.array(_values(s, 50)[:40], dtype=float) for s in range(4)],
        "b": {
            "c": rng.normal(0, 1, 7),
            "d": [1.5, None, 2.25],
            "e": np.zeros(0),
            "f": np.array([[1.25, 2.5], [3.0, -0.0]]),
            "g": np.array([0.0, -0.0, 1e-320]),
        },
    }
    assert json.dumps(_batched(doc), allow_nan=False) == json.dumps(plain(doc), allow_nan=False)


def test_a_result_met_twice_in_a_document_is_written_twice_the_same():
    # reference: plain() converting each occurrence on its own
    from steadyline.site.serialise import _batched
    from steadyline.stats import individuals

    chart = individuals(np.array(_values(1, 60)[:50], dtype=float) % 7.0)
    doc = {"page": {"chart": chart}, "history": [{"chart": chart}, {"other": chart.secondary}]}
    assert json.dumps(_batched(doc), allow_nan=False) == json.dumps(plain(doc), allow_nan=False)


def test_rollup_by_sorted_runs_matches_pandas_groupby():
    # reference: pandas' groupby (sum, mean, count, size) on the same rows, and its date_range
    # for the missing days
    import pandas as pd

    from steadyline.loading.grouping import _rollup_sorted
    from steadyline.loading.periods import _segments_for_periods

    rng = np.random.default_rng(8)
    for _ in range(200):
        n = int(rng.integers(1, 400))
        t = pd.Series(
            np.sort(
                np.datetime64("2026-01-01T00:00")
                + rng.integers(0, 60 * 24 * 90, n).astype("timedelta64[m]")
            )
        )
        key = t.dt.normalize().to_numpy()
        frame = pd.DataFrame(
            {
                "t": t,
                "value": np.round(rng.normal(20, 5, n) * 10.0 ** int(rng.integers(-6, 9)), 4),
                "count": rng.integers(0, 9, n).astype(float),
                "size": rng.integers(9, 30, n).astype(float),
            }
        )
        g = frame.groupby(key, sort=True)
        for stat in ("mean", "sum", "count"):
            got = pd.DataFrame(_rollup_sorted(frame, key, stat, "continuous", False))
            want = g["value"].count() if stat == "count" else getattr(g["value"], stat)()
            assert list(got.columns) == ["period", "value", "n"]
            assert (got["period"].to_numpy() == want.index.to_numpy()).all()
            np.testing.assert_allclose(got["value"], want.to_numpy(), rtol=1e-12, atol=0)
            assert (got["n"].to_numpy() == g.size().to_numpy()).all()
        got = pd.DataFrame(_rollup_sorted(frame, key, "sum", "defectives", False))
        assert (got["count"].to_numpy() == g["count"].sum().to_numpy()).all()
        assert (got["size"].to_numpy() == g["size"].sum().to_numpy()).all()
        flags = frame.assign(value=(frame["value"] > 20).astype(float))
        got = pd.DataFrame(_rollup_sorted(flags, key, "proportion", "defectives", True))
        assert (got["count"].to_numpy() == flags.groupby(key)["value"].sum().to_numpy()).all()
        assert (got["size"].to_numpy() == flags.groupby(key)["value"].count().to_numpy()).all()
        periods = got["period"]
        full = pd.date_range(periods.iloc[0], periods.iloc[-1], freq="D")
        pos = full.get_indexer(pd.DatetimeIndex(periods))
        assert (
            _segments_for_periods(periods, "day") == np.cumsum(np.diff(pos, prepend=pos[0]) > 1)
        ).all()


def test_plain_decimal_columns_read_by_numpy_match_pandas_and_the_careful_parse():
    # reference: pandas.to_numeric and Python's float() through the one-cell parser _to_float
    from steadyline.loading.numbers import _plain_decimals, _to_float

    rng = np.random.default_rng(5)
    cells = []
    for _ in range(3000):
        digits = "".join(rng.choice(list("0123456789"), rng.integers(1, 19)))
        cut = int(rng.integers(0, len(digits) + 1))
        text = digits[:cut] + "." + digits[cut:] if rng.random() < 0.8 else digits
        if text == ".":
            text = "0"
        if rng.random() < 0.2:
            text += f"e{int(rng.integers(-30, 30))}"
        if rng.random() < 0.3:
            text = rng.choice(["-", "+"]) + text
        cells.append(text)
    arr = np.array(cells, dtype=object)
    got = _plain_decimals(arr)
    assert got is not None
    assert got.tolist() == [_to_float(c, ".") for c in cells]
    import pandas as pd

    # pandas agrees except on some cells with a leading "+", where its parse is one unit in
    # the last place off (seen with pandas 3); float() is correctly rounded
    unsigned = [not c.startswith("+") for c in cells]
    pandas_values = pd.to_numeric(pd.Series(cells)).to_numpy(dtype=float)
    assert np.array_equal(got[unsigned], pandas_values[unsigned])
    assert got.tolist() == [float(c) for c in cells]
    # anything else is left to the careful path
    for odd in (
        ["1", ""],
        ["1", "nan"],
        ["1", "inf"],
        ["1", "1,5"],
        ["1", "1_000"],
        ["1", "\u0661"],
        ["1", "e5"],
        ["1", "1e"],
        ["1", "+-1"],
        ["1", " 2"],
    ):
        assert _plain_decimals(np.array(odd, dtype=object)) is None, odd


def test_plain_iso_times_read_by_numpy_match_pandas():
    # reference: pandas.to_datetime(format="ISO8601"), the parse the other paths use
    import pandas as pd

    from steadyline.loading.times import _plain_iso

    rng = np.random.default_rng(9)
    base = np.datetime64("2019-01-01T00:00:00")
    stamps = base + rng.integers(0, 12 * 365 * 86400, 2000).astype("timedelta64[s]")
    text = np.datetime_as_string(stamps, unit="s").tolist()
    for cells in (
        [t[:10] for t in text],
        [t[:16] for t in text],
        text,
        [t[:10] + " " + t[11:16] for t in text],
        [t[:10] + " " + t[11:] for t in text],
    ):
        got = _plain_iso(np.array(cells, dtype=object))
        assert got is not None
        want = pd.to_datetime(pd.Series(cells), format="ISO8601").to_numpy()
        assert np.array_equal(got.astype("datetime64[ns]"), want), cells[:2]
    for odd in (
        ["2026-01-05", "2026-1-05"],
        ["2026-01-05", "2026-01-05T10:00"],
        ["2026-02-30"],
        ["2026-13-01"],
        ["2026-01-05T24:00"],
        ["2026-01-05T10:60"],
        ["2026-01-05T10:00Z"],
        ["2026-01-05T10:00+01:00"],
        ["2026-01-05T10:00:00.5"],
        ["2026/01/05"],
        ["2026-01-05x10:00"],
        ["05.01.2026"],
        ["\u0662026-01-05"],
        ["2026-01-05", ""],
        ["NaT"],
        ["today"],
    ):
        assert _plain_iso(np.array(odd, dtype=object)) is None, odd


def test_series_keys_and_signal_texts_in_bulk_match_a_point_by_point_loop():
    # reference: the signal texts gathered and the keys numbered point by point in order of
    # first use, as the chart's tooltips list them (a plain loop over the points)
    from steadyline.charts.base.types import SeriesContext
    from steadyline.charts.series.coded import _Coded, _signal_text
    from steadyline.charts.series.marks import _MARK_CODES, _MARK_TEXTS
    from steadyline.charts.series.rows import _Keys, _series_rows
    from steadyline.charts.series.tables import _signal_column
    from steadyline.stats.results import Signal

    rng = np.random.default_rng(3)
    for trial in range(20):
        n = int(rng.integers(1, 300))
        stage = tuple(rng.choice(["", "Baseline", "After"], n).tolist())
        segment = tuple(np.cumsum(rng.random(n) < 0.05).tolist())
        ctx = SeriesContext(
            x=tuple(str(i) for i in range(n)),
            x_is_time=False,
            stage=stage,
            segment=segment,
            unit="",
            metric_name="m",
        )
        offset = int(trial % 2) if n > 1 else 0
        m = n - offset
        values = rng.normal(size=m)
        values[rng.random(m) < 0.1] = np.nan
        fitted = rng.random(m) < 0.5 if trial % 3 else None
        texts = ["beyond the limits", "8 in a row on one side", "2 of 3 beyond 2 sigma"]
        signals = []
        for _ in range(int(rng.integers(0, 12))):
            start = int(rng.integers(-offset, n))
            idx = tuple(range(start, min(n + 2, start + int(rng.integers(1, 9)))))
            signals.append(
                Signal(
                    rule="r",
                    description=str(rng.choice(texts)),
                    indices=idx,
                    side=None,
                    chart="main",
                )
            )
        # the descriptions per point, signal by signal, as a plain loop lists them
        marked: dict[int, list[str]] = {}
        for sig in signals:
            for j in sig.indices:
                if 0 <= j + offset < n and sig.description not in marked.get(j + offset, []):
                    marked.setdefault(j + offset, []).append(sig.description)
        marks = _signal_text(signals, n, offset)
        assert [marks.texts[c - 1] if c else "" for c in marks.codes.tolist()] == [
            "; ".join(marked.get(i, [])) for i in range(n)
        ]
        # the table's column joins the main chart's texts and the companion's
        other = _signal_text(signals[::-1], n)
        other_marked: dict[int, list[str]] = {}
        for sig in signals[::-1]:
            for j in sig.indices:
                if 0 <= j < n and sig.description not in other_marked.get(j, []):
                    other_marked.setdefault(j, []).append(sig.description)
        assert _signal_column(n, marks, other) == [
            "; ".join(marked.get(i, []) + other_marked.get(i, [])) for i in range(n)
        ]
        info_codes = rng.integers(0, 4, m)
        info_texts = ["LCL 1, CL 2, UCL 3", "CL 2", "LCL 1, CL 2, UCL 3", ""]
        # the staged chart's mark codes (2 * change + own), or none
        mark_codes = rng.integers(0, _MARK_CODES, m) if rng.random() < 0.5 else None
        # the points set aside, or none
        aside = rng.random(m) < 0.2 if rng.random() < 0.5 else None
        keys = _Keys()
        got = _series_rows(
            ctx,
            values,
            marks,
            keys,
            offset=offset,
            info=_Coded(info_codes, info_texts),
            fitted=fitted,
            marks=mark_codes,
            aside=aside,
        )
        point_keys: dict = {}
        info_keys: dict = {}
        want_k, want_i, want_idx = [], [], []
        for k in range(m):
            if not np.isfinite(values[k]):
                continue
            i = k + offset
            mc = 0 if mark_codes is None else int(mark_codes[k])
            t = (
                stage[i],
                None if fitted is None else bool(fitted[k]),
                "; ".join(marked[i]) if i in marked else "",
                _MARK_TEXTS[mc // 2],
                bool(mc % 2),
                aside is not None and bool(aside[k]),
            )
            want_k.append(point_keys.setdefault(t, len(point_keys)))
            want_i.append(info_keys.setdefault(info_texts[info_codes[k]], len(info_keys)))
            want_idx.append(i)
        assert got.idx == want_idx
        assert got.k == want_k
        assert got.lim == want_i
        assert keys.points == point_keys and keys.limits == info_keys


def test_memo_by_identity_tells_equal_objects_apart_and_forgets_old_ones():
    from steadyline.memo import by_identity

    calls = []

    @by_identity(2)
    def total(values, scale):
        calls.append(1)
        return float(np.sum(values)) * scale

    a, b = np.ones(3), np.ones(3)  # equal, not the same object
    assert total(a, 2) == 6.0 and total(a, 2) == 6.0 and len(calls) == 1
    assert total(b, 2) == 6.0 and len(calls) == 2  # another object: computed again
    assert total(a, 3) == 9.0 and len(calls) == 3  # another scale
    total(a, 2)  # forgotten: only the last two are kept
    assert len(calls) == 4
    from steadyline.memo import forget

    forget()  # what the build does after each metric
    total(a, 2)
    assert len(calls) == 5


@pytest.mark.parametrize("split_max", [4_000_000, 0])  # split, and pandas' reader
def test_plain_reader_splitting_matches_pandas_reader(split_max, monkeypatch):
    # reference: pandas.read_csv (C engine, every cell as text), cells stripped as the careful
    # reader strips them
    import io

    import pandas as pd

    from steadyline.loading import plain
    from steadyline.loading.plain import _read_plain

    monkeypatch.setattr(plain, "_SPLIT_MAX_CHARS", split_max)

    texts = [
        ("t,v\n2026-01-01,1.5\n2026-01-02,2\n", ","),
        ("t,v\r\n2026-01-01,1.5\r\n2026-01-02,-2e3\r\n", ","),
        ("t,v\n2026-01-01,1.5\n2026-01-02,2", ","),
        ("t;v;w\n2026-01-01; 1,5 ;x\n2026-01-02;2;\u00e9t\u00e9\n", ";"),
        ("t\tv\n2026-01-01\t1.5\n2026-01-02\t\n", "\t"),
        ("t|v\n a |b\n", "|"),
        ("v\n1\n2\n3\n", ","),
        ("t,v\n2026-01-01,\u00a01.5\u2003\n2026-01-02,,\n", ","),  # last row too long
    ]
    for text, delim in texts:
        got = _read_plain(text, delim)
        header = [h.strip() for h in text.split("\n", 1)[0].rstrip("\r").split(delim)]
        if text.count("\n") and all(
            line.count(delim) == len(header) - 1 for line in text.rstrip("\n").split("\n")
        ):
            want = pd.read_csv(
                io.StringIO(text),
                sep=delim,
                dtype=str,
                keep_default_na=False,
                engine="c",
                header=0,
                names=header,
            )
            want = want.apply(lambda c: c.str.strip())
            want.index = np.arange(2, len(want) + 2)
            assert got is not None, text
            pd.testing.assert_frame_equal(got, want)
        else:
            assert got is None, text


def test_signal_texts_of_points_in_many_kinds_of_signal():
    # reference: the plain loop of the test above; twenty descriptions on the same points take
    # the table path (the sequence no longer fits one number)
    from steadyline.charts.series.coded import _signal_text
    from steadyline.stats.results import Signal

    signals = [
        Signal(
            rule="r",
            description=f"pattern {k}",
            indices=tuple(range(k % 3, 6)),
            side=None,
            chart="main",
        )
        for k in range(20)
    ]
    marks = _signal_text(signals, 8)
    want = [
        "; ".join(f"pattern {k}" for k in range(20) if k % 3 <= i) if i < 6 else ""
        for i in range(8)
    ]
    assert [marks.texts[c - 1] if c else "" for c in marks.codes.tolist()] == want


def test_plain_bytes_check_matches_the_text_check():
    # reference: loading.plain._awkward on the same text (itself held to the full expression above)
    import random

    from steadyline.columns import _plain_bytes
    from steadyline.loading.plain import _awkward

    rng = random.Random(8)
    alphabet = ["a", "1", ",", " ", "\t", "\r", "\n", '"', "\r\n", "\n\n", " \n", "\n \r\n"]
    cases = ["", "a,b\n1,2\n", "\na,b\n", " \na", "a\r\nb\r\n", "a\rb", "a\n \t\nb", "a\n\r\nb"]
    cases += ["".join(rng.choice(alphabet) for _ in range(rng.randint(0, 12))) for _ in range(5000)]
    for text in cases:
        assert _plain_bytes(text.encode()) == (not _awkward(text)), repr(text)


def _arrow_text(cells):
    import pyarrow as pa

    return pa.array(cells, type=pa.string())


def test_decimals_read_from_bytes_equal_python_float():
    # reference: Python's float() (correctly rounded), through loading.numbers._plain_decimals,
    # cell by cell: the bulk read gives the same float or declines (None), never another value
    from steadyline.columns import plain_decimals
    from steadyline.loading.numbers import _plain_decimals

    rng = np.random.default_rng(4)
    odd = [
        "+1.5",
        "-0",
        "+0.0",
        "1.",
        ".5",
        "5e-324",
        "2e-324",
        "1e308",
        "1e309",
        "-1e-400",
        "1e5",
        "1E+05",
        "0.1e-3",
        "e5",
        ".",
        "-",
        "+",
        "1e",
        "1e+",
        "1-2",
        "1.2.3",
        "..5",
        "--1",
        "+-1",
        "00012",
        "9007199254740993",
        "0.30000000000000004441",
        "1e0001",
        "123456789012345678901234567890",
        "",
        "1",
        "-.5e-2",
        "+.5E+2",
    ]
    for cell in odd:
        got = plain_decimals(_arrow_text([cell]))
        want = _plain_decimals(np.array([cell], dtype=object))
        if got is not None:
            assert want is not None and got.tobytes() == want.tobytes(), cell
    digits = rng.integers(0, 10**9, 20000).astype(str)
    cells = [
        f"{s}{d[:3]}.{d[3:]}e{e}"
        for s, d, e in zip(
            rng.choice(["", "-", "+"], 20000), digits, rng.integers(-330, 310, 20000), strict=True
        )
    ]
    cells += [
        repr(float(x)) for x in rng.normal(0, 1, 5000) * 10.0 ** rng.integers(-300, 300, 5000)
    ]
    for chunk in (cells[:100], cells[100:], cells):
        got = plain_decimals(_arrow_text(chunk))
        want = np.array([float(c) for c in chunk])
        assert got is not None
        assert got.tobytes() == want.tobytes()
    import pyarrow as pa

    blocks = pa.chunked_array([cells[:7], cells[7:50], cells[50:]])
    assert plain_decimals(blocks).tobytes() == np.array([float(c) for c in cells]).tobytes()
    assert plain_decimals(pa.chunked_array([["1"], ["x"]])) is None
    assert plain_decimals(_arrow_text(["1.5", " 2"])) is None  # a space: stripped elsewhere
    assert plain_decimals(_arrow_text(["1.5", "nan"])) is None
    assert plain_decimals(_arrow_text(["1.5", ""])) is None


def test_iso_times_read_from_bytes_equal_the_numpy_read():
    # reference: loading.times._plain_iso (numpy's reading of the same cells as text)
    from steadyline.columns import plain_iso
    from steadyline.loading.times import _ISO_DIGITS, _ISO_MARKS, _plain_iso

    columns = [
        ["2026-01-05", "2026-12-31"],
        ["2026-01-05T06:30", "2026-01-05 07:45"],
        ["2026-01-05T06:30:59"],
        ["2026-02-30"],
        ["2026-01-05", "2026-1-06"],
        ["2026-01-05", "2026-01-05T06:00"],
        ["2026/01/05"],
        ["2026-01-05T06:3x"],
        ["20260105"],
        ["2026-01-05 "],
        ["\u00e9026-01-05"],
        ["2026-01-05Z06:30"],
    ]
    for cells in columns:
        got = plain_iso(_arrow_text(cells), _ISO_DIGITS, _ISO_MARKS)
        want = _plain_iso(np.array(cells, dtype=object))
        if want is None:
            assert got is None, cells
        else:
            assert got is not None and (got == want).all() and got.dtype == want.dtype, cells
    import pyarrow as pa

    # a column pyarrow parsed in several blocks: one form for the whole column, as above
    two = pa.chunked_array([["2026-01-05"], ["2026-01-06", "2026-01-07"]])
    assert (
        plain_iso(two, _ISO_DIGITS, _ISO_MARKS)
        == _plain_iso(np.array(["2026-01-05", "2026-01-06", "2026-01-07"], dtype=object))
    ).all()
    mixed = pa.chunked_array([["2026-01-05"], ["2026-01-06T06:00"]])
    assert plain_iso(mixed, _ISO_DIGITS, _ISO_MARKS) is None
    assert _plain_iso(np.array(["2026-01-05", "2026-01-06T06:00"], dtype=object)) is None
    sliced = _arrow_text(["x", "2026-01-05", "2026-01-06", "y"]).slice(1, 2)
    assert (
        plain_iso(sliced, _ISO_DIGITS, _ISO_MARKS)
        == np.array(["2026-01-05", "2026-01-06"], dtype="datetime64[s]")
    ).all()


def test_needed_columns_reader_gives_the_plain_readers_cells():
    # reference: loading.plain._read_plain (itself held to pandas' reader above) on the same text
    import io

    from steadyline.columns import cells, read_needed
    from steadyline.loading.plain import _read_plain

    texts = [
        ("t,v\n2026-01-01,1.5\n2026-01-02,2\n", ","),
        ("t,v\r\n2026-01-01,1.5\r\n2026-01-02,-2e3\r\n", ","),
        ("t,v\n2026-01-01,1.5\n2026-01-02,2", ","),
        ("t;v;w\n2026-01-01; 1,5 ;x\n2026-01-02;2;\u00e9t\u00e9\n", ";"),
        ("t\tv\n2026-01-01\t1.5\n2026-01-02\t\n", "\t"),
        ("t|v\n a |b\n", "|"),
        ("v\n1\n2\n3\n", ","),
        ("t,v\n2026-01-01,\u00a01.5\u2003\n2026-01-02,,\n", ","),  # last row too long
        ("t,v\n2026-01-01,1\n2026-01-02\n", ","),  # last row too short
        ("t,v\n1,2\n\n3,4\n", ","),  # a blank line
        ('t,v\n1,"2"\n', ","),  # a quote mark
        ("t,t\n1,2\n", ","),  # a name twice
        ("t,v\n", ","),  # no rows
        (" t , v \n1,\x0b2\x1c\n", ","),
    ]
    for text, delim in texts:
        want = _read_plain(text, delim)
        got = read_needed(io.BytesIO(text.encode()), "utf-8", delim, ["t", "v", "w"])
        if want is None:
            assert got is None, text
            continue
        assert got is not None, text
        header, cols, n = got
        assert header == list(want.columns) and n == len(want), text
        for name, col in cols.items():
            assert cells(col.combine_chunks()).tolist() == want[name].tolist(), text
    bom = read_needed(io.BytesIO(b"\xef\xbb\xbft,v\n1,2\n"), "utf-8-sig", ",", ["v"])
    assert bom is not None and bom[0] == ["t", "v"] and list(bom[1]) == ["v"]
    latin = io.BytesIO("t,v\n1,\u00e9\n".encode("latin-1"))
    assert read_needed(latin, "iso8859-1", ",", ["v"]) is None
    assert read_needed(io.BytesIO(b"t,v\n1,2\n"), "iso8859-1", ",", ["v"]) is not None  # ASCII
    assert read_needed(io.BytesIO(b"t,v\n1,\xff\n"), "utf-8", ",", ["v"]) is None  # not UTF-8


@pytest.mark.parametrize("piece", [4 << 20, 1, 2, 5, 7])
def test_plain_file_check_in_pieces_matches_the_whole_text_check(piece, monkeypatch):
    # reference: loading.plain._awkward on the whole text: read in pieces of any size, the file is
    # plain exactly when the whole text is
    import io
    import random

    from steadyline import columns
    from steadyline.loading.plain import _awkward

    monkeypatch.setattr(columns, "_PIECE", piece)
    rng = random.Random(piece)
    alphabet = ["a", "1", ",", " ", "\t", "\r", "\n", '"', "\r\n", "\n\n", " \n", "\n \r\n"]
    for _ in range(1500):
        text = "".join(rng.choice(alphabet) for _ in range(rng.randint(0, 14)))
        got = columns._plain_file(io.BytesIO(text.encode()), "utf-8")
        assert got == (not _awkward(text)), repr(text)


@pytest.mark.parametrize("chunk", [1 << 20, 3])
def test_header_width_counts_the_fields_the_csv_reader_reads(chunk, monkeypatch):
    # reference: Python's csv module, the careful reader's own, on the first record
    import csv
    import io
    import random

    from steadyline import columns

    monkeypatch.setattr(columns, "_CHUNK", chunk)
    rng = random.Random(12)
    alphabet = ["a", "\u00e9", ",", ";", '"', '""', "\n", "\r\n", "\r", " "]
    texts = [
        "a,b,c\n1,2,3\n",
        '"a,b",c\n',
        '"a\nb",c,d\ne\n',
        "a,b",
        ",,,\n",
        "a\r\nb,c",
        "\u00e9,\u00e8;x\n",
    ]
    texts += ["".join(rng.choice(alphabet) for _ in range(rng.randint(1, 14))) for _ in range(3000)]
    for text in texts:
        try:
            first = next(csv.reader(io.StringIO(text, newline="")))
        except (csv.Error, StopIteration):
            continue  # not CSV at all: the careful reader reports it
        if not first:
            continue
        for codec in ("utf-8", "utf-16", "utf-32-be"):
            got = columns.header_width(io.BytesIO(text.encode(codec)), codec, ",")
            assert got == len(first), (text, codec)
