"""The fast writers give exactly the text of the plain, cell-by-cell ones (reference: json and
markupsafe from the standard stack, and our own one-cell functions)."""

from __future__ import annotations

import json
import math

import numpy as np
from markupsafe import escape

from steadyline.site.cards import _cell, _csv_cells, _csv_field, _html_cells, safe_cell
from steadyline.site.serialise import dumps, plain

EDGES = [0.0, -0.0, 1.0, -1.0, 12.0, 999999.5, 1e15, -1e15, 1e16, 1e-320, 3.5e300,
         0.1 + 0.2, 2.5, -3.5, float("nan"), float("inf"), float("-inf"), None, 7, -3]


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


def test_csv_text_columns_match_the_cell_by_cell_writer():
    col = ["plain", "=1+1", "+SUM(A1)", "-3.5", "a,b", 'say "hi"', "line\nbreak", "@cmd", None,
           "2026-01-05", "", "-", "\t=1"]
    assert _csv_cells(col) == [_csv_field(safe_cell(v)) for v in col]


def test_html_cells_match_autoescaped_cells():
    for seed in range(3):
        col = _values(seed)
        assert _html_cells(col) == [str(escape(_cell(v))) for v in col]
    text = ["<b>", "a & b", "'q'", '"dq"', "plain", "2026-01-05"]
    assert _html_cells(text) == [str(escape(_cell(v))) for v in text]


def test_dumps_matches_plain_json_for_long_float_lists():
    for seed in range(3):
        vals = [v for v in _values(seed) if v is None or isinstance(v, float)]
        doc = {"a": vals, "b": {"c": vals[:40], "d": ["x", 1, 2.5]}, "e": np.array(vals[:64])}
        reference = json.dumps(plain(doc), sort_keys=True, ensure_ascii=False, allow_nan=False,
                               separators=(",", ":"))
        assert dumps(doc, indent=None) == reference
        back = json.loads(dumps(doc, indent=None))
        assert all(x is None or math.isfinite(x) for x in back["a"])
