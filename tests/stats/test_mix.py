"""Change in mix (docs/methods.md §13).

References: ``scipy.stats.chi2_contingency`` (correction=False) for the chi-square test,
``scipy.stats.fisher_exact`` for 2 × 2 tables too small for it, statsmodels'
``proportions_ztest`` for the 2 × 2 identity X² = z²; Cochran's expected-count rule (common
practice, from memory) checked by its definition.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats as st

from steadyline.stats import StatsError, mix_change
from steadyline.stats.mix import expected_rule_met


def test_against_scipy_chi2_contingency():
    rng = np.random.default_rng(11)
    for _ in range(20):
        k = int(rng.integers(3, 8))
        b = rng.integers(10, 200, k)
        a = rng.integers(10, 200, k)
        r = mix_change([f"c{i}" for i in range(k)], b, a)
        assert not r.merged
        chi2, p, dof, expected = st.chi2_contingency(np.array([b, a]), correction=False)
        assert r.statistic == pytest.approx(chi2, rel=1e-12)
        assert r.p_value == pytest.approx(p, rel=1e-10)
        assert r.df == dof
        assert r.expected_baseline == pytest.approx(expected[0])
        assert r.expected_after == pytest.approx(expected[1])


def test_two_by_two_is_the_square_of_the_pooled_z():
    # uncorrected 2 × 2 chi-square = z² of the pooled two-proportion z-test
    from statsmodels.stats.proportion import proportions_ztest

    r = mix_change(["good", "defective"], [460, 40], [485, 15])
    z, p = proportions_ztest([40, 15], [500, 500])
    assert r.test == "Pearson's chi-square test of homogeneity"
    assert r.statistic == pytest.approx(z**2, rel=1e-10)
    assert r.p_value == pytest.approx(p, rel=1e-8)
    chi2, p2, _, _ = st.chi2_contingency(np.array([[460, 40], [485, 15]]), correction=False)
    assert r.statistic == pytest.approx(chi2) and r.p_value == pytest.approx(p2)


def test_small_categories_are_merged_smallest_first():
    cats = ["a", "b", "c", "d"]
    r = mix_change(cats, [50, 40, 3, 2], [30, 60, 2, 3])
    assert r.merged == ("c", "d")  # equal totals: by name
    assert r.categories == ("a", "b", "other (merged)")
    assert r.baseline == (50, 40, 5) and r.after == (30, 60, 5)
    assert r.expected_rule_met
    # the unmerged table fails the rule (expected 2.5 in four of eight cells, 50% > 20%)
    e = st.contingency.expected_freq(np.array([[50, 40, 3, 2], [30, 60, 2, 3]]))
    assert not expected_rule_met(e)
    chi2, p, dof, _ = st.chi2_contingency(np.array([[50, 40, 5], [30, 60, 5]]), correction=False)
    assert (r.statistic, r.p_value, r.df) == (pytest.approx(chi2), pytest.approx(p), dof)
    assert any("c, d" in n for n in r.notes)


def test_fisher_when_two_by_two_remains_too_small():
    r = mix_change(["a", "b", "c"], [3, 1, 0], [0, 2, 4])
    assert r.test == "Fisher's exact test" and not r.expected_rule_met
    assert r.merged == ("a", "b")
    table = np.array([[0, 4], [4, 2]])
    res = st.fisher_exact(table)
    assert r.p_value == pytest.approx(res.pvalue, rel=1e-12)
    assert r.statistic is None and r.df is None


def test_small_two_by_two_goes_to_fisher_without_merging():
    r = mix_change(["pass", "fail"], [18, 2], [20, 0])
    assert r.test == "Fisher's exact test" and r.merged == ()
    assert r.p_value == pytest.approx(st.fisher_exact([[18, 2], [20, 0]]).pvalue)


def test_expected_rule_by_definition():
    # 10 cells, 2 below 5 (20%) passes; 3 below 5 fails; any below 1 fails
    e = np.full((2, 5), 10.0)
    e[0, :2] = 4.0
    assert expected_rule_met(e)
    e[0, 2] = 4.0
    assert not expected_rule_met(e)
    e = np.full((2, 5), 10.0)
    e[1, 4] = 0.99
    assert not expected_rule_met(e)


def test_empty_categories_left_out():
    r = mix_change(["a", "b", "none"], [30, 40, 0], [45, 20, 0])
    assert r.categories == ("a", "b")
    assert any("none" in n for n in r.notes)


@pytest.mark.parametrize(
    ("args", "message"),
    [
        ((["a", "b"], [1, 2], [1]), "one after count per category"),
        ((["a", "b"], [1, -2], [1, 1]), "whole numbers"),
        ((["a", "b"], [1.5, 2], [1, 1]), "whole numbers"),
        ((["a", "b"], [0, 0], [1, 1]), "counts in the baseline period"),
        ((["a", "b"], [5, 0], [3, 0]), "at least two categories"),
        ((["a", "a"], [5, 1], [3, 2]), "each category once"),
    ],
)
def test_refusals(args, message):
    with pytest.raises(StatsError, match=message):
        mix_change(*args)
