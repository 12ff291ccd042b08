"""Change in mix: do the shares of the categories differ between baseline and after?

The counts per category of the two periods form a 2 × k table. Pearson's chi-square test of
homogeneity (Pearson 1900; Agresti, *Categorical Data Analysis*, §3.2, from memory):

    E_ij = (row total_i · column total_j) / N,   X² = Σ (O_ij − E_ij)² / E_ij,
    df = k − 1, p = P(χ²_df ≥ X²).

No continuity correction at any k, 2 × 2 included: uncorrected, the 2 × 2 statistic is the
square of the pooled two-proportion z statistic of the before-and-after comparison, so the two
agree. (``scipy.stats.chi2_contingency`` corrects 2 × 2 tables by default; the tests compare
with ``correction=False``.)

The chi-square distribution is an approximation that wants large enough expected counts. The
rule applied (Cochran 1954, *Biometrics* 10:417–451, common practice, from memory): every
expected count at least 1 and at most 20% of them below 5. Where the table fails it, the
categories with the smallest total counts are merged into one group, smallest first, until the
table meets it (the categories merged are reported). Where merging leaves two categories and
the 2 × 2 table still fails the rule, Fisher's exact test (two-sided, ``scipy.stats.fisher_exact``:
the probability of the tables with the observed margins no more likely than the observed one)
is used instead.

Categories with no count in either period carry no information and are left out (a note says
so). scipy is imported on first use.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ._lazy import lazy
from .results import StatsError
from .results_studies import MixChange

_st = lazy("scipy.stats")

MIN_EXPECTED = 1.0  # Cochran's rule (common practice, from memory)
SMALL_EXPECTED = 5.0
MAX_SHARE_SMALL = 0.2
MERGED_NAME = "other (merged)"
PEARSON = "Pearson's chi-square test of homogeneity"
FISHER = "Fisher's exact test"


def expected_counts(table: np.ndarray) -> np.ndarray:
    """Expected counts under equal shares: row total × column total / grand total.

    >>> expected_counts(np.array([[10, 30], [20, 40]])).tolist()
    [[12.0, 28.0], [18.0, 42.0]]
    """
    t = np.asarray(table, dtype=float)
    return np.outer(t.sum(axis=1), t.sum(axis=0)) / t.sum()


def expected_rule_met(expected: np.ndarray) -> bool:
    """Cochran's rule: every expected count ≥ 1 and at most 20% of them below 5.

    >>> expected_rule_met(np.array([[12.0, 28.0], [18.0, 42.0]]))
    True
    >>> expected_rule_met(np.array([[0.9, 28.0], [18.0, 42.0]]))
    False
    """
    e = np.asarray(expected, dtype=float)
    if (e < MIN_EXPECTED).any():
        return False
    return float((e < SMALL_EXPECTED).sum()) <= MAX_SHARE_SMALL * e.size


def _counts(name: str, values: Sequence[float], k: int) -> np.ndarray:
    a = np.asarray(values, dtype=float)
    if a.ndim != 1 or len(a) != k:
        raise StatsError(
            f"a change in mix needs one {name} count per category ({k}), "
            f"got {len(a) if a.ndim == 1 else a.shape}"
        )
    if not np.isfinite(a).all() or (a < 0).any() or (a != np.round(a)).any():
        raise StatsError(f"the {name} counts must be whole numbers, zero or more")
    return a.astype(np.int64)


def mix_change(
    categories: Sequence[str],
    baseline: Sequence[float],
    after: Sequence[float],
) -> MixChange:
    """Test whether the shares of the categories changed between baseline and after.

    ``baseline`` and ``after`` are the counts per category, in the order of ``categories``.
    Source: Pearson's chi-square test of homogeneity, Cochran's expected-count rule, Fisher's
    exact test (see the module's text).

    >>> r = mix_change(["scratch", "dent", "stain"], [40, 30, 30], [20, 50, 30])
    >>> r.test, r.df, round(r.statistic, 3), f"{r.p_value:.4f}"
    ("Pearson's chi-square test of homogeneity", 2, 11.667, '0.0029')
    >>> r = mix_change(["a", "b", "c", "d"], [50, 40, 3, 2], [30, 60, 2, 3])
    >>> r.merged, r.categories
    (('c', 'd'), ('a', 'b', 'other (merged)'))
    """
    # One function on purpose: the chi-square test, Cochran's rule on the expected counts,
    # the merging of small categories and the exact test that replaces it are one decision,
    # taken in the order the module's text gives; each step reads the table the one before made.
    names = tuple(str(c) for c in categories)
    if len(set(names)) != len(names):
        raise StatsError("a change in mix needs each category once")
    b = _counts("baseline", baseline, len(names))
    a = _counts("after", after, len(names))
    for period, c in (("baseline", b), ("after", a)):
        if c.sum() == 0:
            raise StatsError(f"a change in mix needs counts in the {period} period, got none")
    notes: list[str] = []
    empty = [n for n, x, y in zip(names, b, a, strict=True) if x + y == 0]
    if empty:
        notes.append("Left out, with no count in either period: " + ", ".join(empty) + ".")
    kept = [i for i in range(len(names)) if b[i] + a[i] > 0]
    if len(kept) < 2:
        raise StatsError(
            f"a change in mix needs at least two categories with counts, got {len(kept)}"
        )

    # smallest totals first (ties by name) are the candidates for merging
    order = sorted(kept, key=lambda i: (int(b[i] + a[i]), names[i]))
    merged: list[int] = []

    def table() -> tuple[list[str], np.ndarray]:
        singles = [i for i in kept if i not in merged]
        labels = [names[i] for i in singles]
        cols = [[b[i], a[i]] for i in singles]
        if merged:
            labels.append(MERGED_NAME)
            cols.append([sum(int(b[i]) for i in merged), sum(int(a[i]) for i in merged)])
        return labels, np.array(cols, dtype=np.int64).T

    labels, t = table()
    while not expected_rule_met(expected_counts(t)) and t.shape[1] > 2:
        take = [i for i in order if i not in merged][: 1 if merged else 2]
        merged.extend(take)
        labels, t = table()
    e = expected_counts(t)
    rule_met = expected_rule_met(e)
    if merged:
        notes.append(
            "Merged into one group so that the expected counts meet the rule (smallest "
            "first): " + ", ".join(names[i] for i in merged) + "."
        )
    if rule_met:
        statistic = float(((t - e) ** 2 / e).sum())
        df = t.shape[1] - 1
        p_value = float(_st.chi2.sf(statistic, df))
        test, odds = PEARSON, None
    else:
        res = _st.fisher_exact(t, alternative="two-sided")
        statistic, df, test = None, None, FISHER
        p_value = float(res.pvalue)
        odds = float(res.statistic)
        notes.append(
            "The expected counts are too small for the chi-square approximation even with two "
            "categories, so Fisher's exact test is used."
        )
    totals = t.sum(axis=1).astype(float)
    return MixChange(
        categories=tuple(labels),
        baseline=tuple(int(x) for x in t[0]),
        after=tuple(int(x) for x in t[1]),
        baseline_share=tuple(float(x) for x in t[0] / totals[0]),
        after_share=tuple(float(x) for x in t[1] / totals[1]),
        expected_baseline=tuple(float(x) for x in e[0]),
        expected_after=tuple(float(x) for x in e[1]),
        test=test,
        statistic=statistic,
        df=df,
        p_value=p_value,
        odds_ratio=odds,
        merged=tuple(names[i] for i in merged),
        merged_name=MERGED_NAME if merged else None,
        expected_rule_met=rule_met,
        notes=tuple(notes),
    )
