"""Pareto analysis. There is no published worked example; the checks are counting identities
recomputed here with collections.Counter / numpy (general reference libraries)."""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest

from steadyline.stats.pareto import pareto, pareto_in_order
from steadyline.stats.results import StatsError

DATA = list("aaabbbccdeeeeeffg")  # e 5, a 3, b 3, c 2, f 2, d 1, g 1 (own numbers)


def test_counts_descending_ties_by_name():
    p = pareto(DATA)
    # reference: collections.Counter
    c = Counter(DATA)
    assert p.categories == ("e", "a", "b", "c", "f", "d", "g")
    assert p.counts == tuple(float(c[k]) for k in p.categories)
    assert p.total == 17.0


def test_percent_and_cumulative():
    p = pareto(DATA)
    # reference: numpy.cumsum
    expected = np.cumsum(p.counts) / 17 * 100
    assert p.cumulative_percent == pytest.approx(tuple(expected))
    assert p.cumulative_percent[-1] == 100.0
    assert sum(p.percent) == pytest.approx(100.0)


def test_percent_of_whole_counts_rounded_once():
    # reference: fractions.Fraction, the exact share rounded to the nearest float
    from fractions import Fraction

    p = pareto(["a"] * 253 + ["b"] * 275)
    assert p.percent == tuple(float(Fraction(100 * k, 528)) for k in (275, 253))


def test_percent_of_totals_near_the_float_limit():
    # 100 x 8e307 overflows; the shares are still exactly half (exact arithmetic)
    p = pareto(["a", "b"], weights=[8e307, 8e307])
    assert p.percent == (50.0, 50.0)
    assert p.cumulative_percent == (50.0, 100.0)
    assert p.vital_few == ("a", "b")


def test_vital_few_smallest_leading_set_reaching_threshold():
    p = pareto(DATA)
    # e a b c = 13/17 = 76.5%, + f = 15/17 = 88.2% -> five categories reach 80%
    assert p.vital_few == ("e", "a", "b", "c", "f")
    exactly = pareto(["x"] * 8 + ["y"] + ["z"])  # x alone is exactly 80%
    assert exactly.vital_few == ("x",)
    assert pareto(DATA, threshold=50).vital_few == ("e", "a", "b")  # 11/17 = 64.7%


def test_weights():
    p = pareto(["late", "wrong", "late", "lost"], weights=[10, 50, 15, 5])
    assert p.categories == ("wrong", "late", "lost")
    assert p.counts == (50.0, 25.0, 5.0)
    assert p.vital_few == ("wrong", "late")


def test_collapse_into_other_kept_last():
    p = pareto(DATA, max_bars=4)
    assert p.categories == ("e", "a", "b", "Other")
    assert p.counts == (5.0, 3.0, 3.0, 6.0)
    assert p.cumulative_percent[-1] == 100.0
    # vital few is defined on the full ranking, before collapsing
    assert p.vital_few == ("e", "a", "b", "c", "f")


def test_existing_other_category_stays_last():
    p = pareto(["Other"] * 10 + ["a"] * 3 + ["b"] * 2)
    assert p.categories == ("a", "b", "Other")
    assert "Other" not in p.vital_few
    assert p.vital_few == ("a", "b")  # catch-all is large: all named categories listed
    q = pareto(["Other"] * 2 + DATA, max_bars=3)
    assert q.categories == ("e", "a", "Other")
    assert q.counts == (5.0, 3.0, 11.0)


def test_in_order_for_later_period():
    base = pareto(DATA, max_bars=4)
    after = pareto_in_order(list("aabccg") + ["new"], None, base.categories)
    assert after.categories == base.categories
    # c, g and the unseen category go into Other
    assert after.counts == (0.0, 2.0, 1.0, 4.0)
    assert after.cumulative_percent[-1] == 100.0
    assert after.vital_few == ("a", "b")  # 2 + 1 of 7 = 42.9% -> then all named listed
    zero = pareto_in_order([], [], base.categories)
    assert zero.total == 0 and zero.percent == (0.0,) * 4 and zero.vital_few == ()


def test_in_order_rejects_unknown_without_other():
    with pytest.raises(StatsError):
        pareto_in_order(["a", "z"], None, ["a", "b"])


def test_errors():
    with pytest.raises(StatsError):
        pareto([])
    with pytest.raises(StatsError):
        pareto(["a", "b"], weights=[1, -1])
    with pytest.raises(StatsError):
        pareto(["a", "b"], weights=[1])
    with pytest.raises(StatsError):
        pareto(["a"], threshold=0)
